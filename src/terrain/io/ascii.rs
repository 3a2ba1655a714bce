//! ESRI ASCII grid (.asc) reader.
//!
//! The format as documented by Esri ("ESRI ASCII raster format", ArcGIS help) and read by
//! GDAL's AAIGrid driver: a header of `ncols`, `nrows`, `xllcorner`|`xllcenter`,
//! `yllcorner`|`yllcenter`, `cellsize` (or GDAL's `dx` and `dy`) and an optional
//! `NODATA_value`, keys in any case, followed by `nrows` rows of `ncols` numbers from
//! north to south. A `.prj` file beside it (WKT) tells projected or geographic: a WKT that
//! starts with `GEOGCS`/`GEOGCRS` is geographic, anything else projected; the EPSG code is
//! the last `AUTHORITY["EPSG","…"]` (WKT 1) or `ID["EPSG",…]` (WKT 2) in the text, which
//! is the top-level one. Without a .prj the CRS is unknown and taken as metres.
//!
//! Values are stored as f32; a value that is not finite as f32 (nan, inf, or beyond
//! ±3.4e38, such as 1e39) is no-data, as in the GeoTIFF reader. The corner coordinates must
//! be finite.

use std::path::Path;

use crate::terrain::error::TerrainError;
use crate::terrain::raster::{Crs, CrsKind, Dem, GeoRef, Grid, LinearUnit};

const FORMAT: &str = "ESRI ASCII grid";

#[derive(Default)]
struct Header {
    ncols: Option<u64>,
    nrows: Option<u64>,
    x: Option<(f64, bool)>,
    y: Option<(f64, bool)>,
    dx: Option<f64>,
    dy: Option<f64>,
    nodata: Option<f64>,
}

/// Reads an ESRI ASCII grid, refusing more than `max_cells` cells before allocating.
pub fn read(path: &Path, max_cells: u64) -> Result<Dem, TerrainError> {
    let bytes = std::fs::read(path).map_err(|source| TerrainError::Io {
        path: path.to_path_buf(),
        action: "reading",
        source,
    })?;
    let text = String::from_utf8(bytes).map_err(|e| {
        TerrainError::malformed(
            path,
            FORMAT,
            format!(
                "byte {} is not text (the file is not ASCII or UTF-8)",
                e.utf8_error().valid_up_to() + 1
            ),
            "an ESRI ASCII grid is plain text; check that this is not a binary raster \
             with the wrong extension",
        )
    })?;
    let prj = std::fs::read_to_string(path.with_extension("prj")).ok();
    parse(&text, prj.as_deref(), path, max_cells)
}

fn bad(path: &Path, line: usize, detail: impl std::fmt::Display) -> TerrainError {
    TerrainError::malformed(
        path,
        FORMAT,
        format!("line {line}: {detail}"),
        "the header needs ncols, nrows, xllcorner (or xllcenter), yllcorner (or yllcenter), \
         cellsize and optionally NODATA_value, then nrows lines of ncols numbers",
    )
}

/// Parses the text of a grid; `prj` is the WKT of the .prj beside it, if any.
pub fn parse(
    text: &str,
    prj: Option<&str>,
    path: &Path,
    max_cells: u64,
) -> Result<Dem, TerrainError> {
    let mut h = Header::default();
    let mut lines = text.lines().enumerate().peekable();
    while let Some(&(i, line)) = lines.peek() {
        let mut parts = line.split_whitespace();
        let Some(key) = parts.next() else {
            lines.next();
            continue;
        };
        if key.parse::<f64>().is_ok() || key.starts_with('-') {
            break;
        }
        // The value is read by the arm of a known key, so that a file that is no grid at
        // all is told of its unknown key, not that its second word is not a number.
        let value = parts.next();
        let num = || -> Result<f64, TerrainError> {
            let v = value.ok_or_else(|| bad(path, i + 1, format!("{key:?} has no value")))?;
            v.parse::<f64>()
                .map_err(|_| bad(path, i + 1, format!("{key:?} = {v:?} is not a number")))
        };
        let value = value.unwrap_or_default();
        let count = |v: f64| -> Result<u64, TerrainError> {
            if v >= 1.0 && v.fract() == 0.0 && v < 1e12 {
                Ok(v as u64)
            } else {
                Err(bad(
                    path,
                    i + 1,
                    format!("{key} = {value} must be a whole number ≥ 1"),
                ))
            }
        };
        let coordinate = |v: f64| -> Result<f64, TerrainError> {
            if v.is_finite() {
                Ok(v)
            } else {
                Err(TerrainError::malformed(
                    path,
                    FORMAT,
                    format!(
                        "line {}: {key} = {value} is not a finite map coordinate",
                        i + 1
                    ),
                    "give the lower-left corner (or centre) in the grid's map units",
                ))
            }
        };
        match key.to_ascii_lowercase().as_str() {
            "ncols" => h.ncols = Some(count(num()?)?),
            "nrows" => h.nrows = Some(count(num()?)?),
            "xllcorner" => h.x = Some((coordinate(num()?)?, false)),
            "xllcenter" => h.x = Some((coordinate(num()?)?, true)),
            "yllcorner" => h.y = Some((coordinate(num()?)?, false)),
            "yllcenter" => h.y = Some((coordinate(num()?)?, true)),
            "cellsize" => {
                let n = num()?;
                (h.dx, h.dy) = (Some(n), Some(n));
            }
            "dx" => h.dx = Some(num()?),
            "dy" => h.dy = Some(num()?),
            "nodata_value" => h.nodata = Some(num()?),
            other => return Err(bad(path, i + 1, format!("unknown header key {other:?}"))),
        }
        lines.next();
    }
    let missing = |name: &str| bad(path, 1, format!("the header has no {name}"));
    let ncols = h.ncols.ok_or_else(|| missing("ncols"))?;
    let nrows = h.nrows.ok_or_else(|| missing("nrows"))?;
    let (x, x_centre) = h.x.ok_or_else(|| missing("xllcorner"))?;
    let (y, y_centre) = h.y.ok_or_else(|| missing("yllcorner"))?;
    let dx = h.dx.ok_or_else(|| missing("cellsize"))?;
    let dy = h.dy.ok_or_else(|| missing("cellsize (dy)"))?;
    if !(dx > 0.0 && dy > 0.0 && dx.is_finite() && dy.is_finite()) {
        return Err(bad(
            path,
            1,
            format!("cell size {dx} x {dy} must be positive"),
        ));
    }
    // In u128: two declared dimensions below 1e12 cannot overflow it (in u64, 2^32 x 2^32
    // wrapped to 0 cells and slipped past the limit).
    let wide_cells = u128::from(ncols) * u128::from(nrows);
    if wide_cells > u128::from(max_cells) {
        return Err(TerrainError::TooLarge {
            path: path.to_path_buf(),
            width: ncols,
            height: nrows,
            limit: max_cells,
        });
    }
    let cells = wide_cells as u64; // At most max_cells.
                                   // Every value takes at least two bytes of text ("1 "), so a short file that declares
                                   // many cells cannot make this reserve more than its own size.
    let mut data = Vec::with_capacity((cells as usize).min(text.len() / 2 + 1));
    let mut last_line = 1;
    for (i, line) in lines {
        last_line = i + 1;
        for tok in line.split_whitespace() {
            let v: f64 = tok
                .parse()
                .map_err(|_| bad(path, i + 1, format!("{tok:?} is not a number")))?;
            if data.len() as u64 == cells {
                return Err(bad(
                    path,
                    i + 1,
                    format!("more than ncols x nrows = {cells} values"),
                ));
            }
            // Finite as f32, not only as f64: 1e39 becomes inf in the grid's f32. A value
            // that is not finite as f32 is no-data, as in the GeoTIFF reader.
            let z = v as f32;
            let nodata = h.nodata.is_some_and(|nd| v == nd) || !z.is_finite();
            data.push(if nodata { f32::NAN } else { z });
        }
    }
    if (data.len() as u64) < cells {
        return Err(bad(
            path,
            last_line,
            format!(
                "found {} values, the header says ncols x nrows = {cells}",
                data.len()
            ),
        ));
    }
    let origin_x = if x_centre { x - 0.5 * dx } else { x };
    let lower = if y_centre { y - 0.5 * dy } else { y };
    let georef = GeoRef {
        origin_x,
        origin_y: lower + nrows as f64 * dy,
        pixel_width: dx,
        pixel_height: dy,
        crs: prj.map_or_else(Crs::local_metres, crs_from_wkt),
        nodata: h.nodata,
    };
    Ok(Grid::from_vec(ncols as usize, nrows as usize, data, georef))
}

/// The little sunward needs from a WKT string (see the module doc for the rules).
pub fn crs_from_wkt(wkt: &str) -> Crs {
    let t = wkt.trim_start();
    let upper = t.to_ascii_uppercase();
    let kind = if upper.starts_with("GEOGCS") || upper.starts_with("GEOGCRS") {
        CrsKind::Geographic
    } else {
        CrsKind::Projected
    };
    let epsg = last_epsg(&upper);
    let name = t
        .split_once('"')
        .and_then(|(_, rest)| rest.split_once('"'))
        .map(|(n, _)| n.to_string());
    let unit = if upper.contains("UNIT[\"FOOT\"") || upper.contains("UNIT[\"FOOT_US\"") {
        if upper.contains("FOOT_US") {
            LinearUnit::Other {
                metres: 1200.0 / 3937.0,
            }
        } else {
            LinearUnit::Other { metres: 0.3048 }
        }
    } else {
        LinearUnit::Metre
    };
    Crs {
        epsg,
        kind,
        unit,
        name,
        geokeys: None,
    }
}

fn last_epsg(upper: &str) -> Option<u32> {
    let pats = ["AUTHORITY[\"EPSG\",\"", "ID[\"EPSG\","];
    let (at, pat) = pats
        .iter()
        .filter_map(|p| upper.rfind(p).map(|i| (i, *p)))
        .max_by_key(|(i, _)| *i)?;
    let digits: String = upper[at + pat.len()..]
        .chars()
        .skip_while(|c| *c == '"' || *c == ' ')
        .take_while(|c| c.is_ascii_digit())
        .collect();
    digits.parse().ok()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn header_variants_and_nodata() {
        let text = "NCOLS 3\nnrows 2\nxllcenter 10\nyllcenter 20\ncellsize 2\nnodata_value -9999\n\
                    1 2 3\n4 -9999 6\n";
        let g = parse(text, None, Path::new("t.asc"), 100).unwrap();
        assert_eq!((g.width(), g.height()), (3, 2));
        assert_eq!(g.georef.origin_x, 9.0);
        assert_eq!(g.georef.origin_y, 23.0);
        assert!(g.get(1, 1).is_nan());
        assert_eq!(g.get(2, 0), 3.0);
    }

    #[test]
    fn too_few_values_names_the_count() {
        let text = "ncols 3\nnrows 2\nxllcorner 0\nyllcorner 0\ncellsize 1\n1 2 3\n4 5\n";
        let e = parse(text, None, Path::new("short.asc"), 100)
            .unwrap_err()
            .to_string();
        assert!(
            e.contains("short.asc") && e.contains("found 5 values"),
            "{e}"
        );
    }

    #[test]
    fn zero_and_absurd_dimensions_are_refused_before_allocating() {
        let zero = "ncols 0\nnrows 2\nxllcorner 0\nyllcorner 0\ncellsize 1\n";
        let e = parse(zero, None, Path::new("z.asc"), 100)
            .unwrap_err()
            .to_string();
        assert!(e.contains("ncols = 0 must be a whole number"), "{e}");
        let huge = "ncols 100000\nnrows 100000\nxllcorner 0\nyllcorner 0\ncellsize 1\n1\n";
        let e = parse(huge, None, Path::new("h.asc"), 1 << 28).unwrap_err();
        assert!(
            matches!(
                e,
                TerrainError::TooLarge {
                    width: 100_000,
                    height: 100_000,
                    ..
                }
            ),
            "{e}"
        );
    }

    #[test]
    fn wkt_kind_and_top_level_epsg() {
        let wkt = r#"PROJCS["WGS 84 / UTM zone 33N",GEOGCS["WGS 84",AUTHORITY["EPSG","4326"]],UNIT["metre",1],AUTHORITY["EPSG","32633"]]"#;
        let c = crs_from_wkt(wkt);
        assert_eq!((c.kind, c.epsg), (CrsKind::Projected, Some(32633)));
        let g = crs_from_wkt(r#"GEOGCS["WGS 84",AUTHORITY["EPSG","4326"]]"#);
        assert_eq!((g.kind, g.epsg), (CrsKind::Geographic, Some(4326)));
    }
}
