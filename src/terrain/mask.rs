//! Keep-out areas: GeoJSON polygons read from text, and their rasterisation onto a grid.
//!
//! # Rasterisation rule
//! A cell is inside when its centre (as [`GeoRef::cell_centre`] gives it) is inside the
//! polygon: even-odd over the exterior ring and its holes, and the union over the parts
//! of a multipolygon (overlapping parts do not cancel). A centre exactly on the boundary
//! is inside when the polygon's interior lies to its east (on a horizontal stretch of
//! boundary: to its north), and outside otherwise. So of two polygons that share an edge,
//! each centre on it belongs to exactly one, and a partition of the ground into polygons
//! covers every cell once. A polygon thinner than a cell can miss every centre and mark
//! nothing: buffer narrow keep-out strips by half a cell before use.
//!
//! # Method
//! Scanline fill: for each polygon, every non-horizontal edge is visited once and drops
//! its crossing x into the rows whose centre line y it spans, by the half-open rule
//! min(y0, y1) ≤ y < max(y0, y1) (this counts a vertex on a row once and a horizontal
//! edge never); each row's crossings are sorted and the cells whose centre x lies in
//! [x_2k, x_2k+1) are set (Foley, van Dam, Feiner and Hughes, *Computer Graphics:
//! Principles and Practice*, 2nd ed., 1990, section 3.6, "Filling polygons"). Cost
//! O(E + C log C + F) for E edges, C crossings and F filled cells; no cell is tested
//! against the polygon.
//!
//! # GeoJSON keep-out text
//! [`parse_keep_out`] reads a GeoJSON text (RFC 7946): a Polygon, a MultiPolygon, a
//! Feature holding one, a FeatureCollection of such Features, or a GeometryCollection of
//! them (nested collections too). Any other geometry (Point, LineString, ...) and a
//! Feature without geometry are refused, naming the feature's index and the type. Rings
//! need at least four positions, the last equal to the first (RFC 7946, 3.1.6); winding
//! order is not checked (the even-odd rule does not need it). A third coordinate
//! (altitude) is ignored.
//!
//! Coordinates, exactly:
//! - [`KeepOutCoords::GridCrs`] (default): the positions are map coordinates in the DEM's
//!   own CRS (x = easting or longitude, y = northing or latitude), used as they are. This
//!   is what GIS users write for project-local files, although RFC 7946 names WGS 84.
//! - [`KeepOutCoords::Wgs84LonLat`]: the positions are RFC 7946 WGS 84 longitude and
//!   latitude in degrees, projected into the DEM's CRS. Supported for geographic DEMs
//!   (used as they are; no datum shift is applied, so a DEM on another geographic datum
//!   is off by that datum's offset from WGS 84) and for WGS 84 / UTM DEMs (EPSG
//!   32601–32660 north, 32701–32760 south; by [`super::utm`]). Edges are straight lines
//!   in longitude/latitude (RFC 7946, 3.1.1), so each edge is split into pieces of at
//!   most [`DENSIFY_STEP_DEG`] before projecting. Any other CRS, including projected
//!   DEMs without an EPSG code, is refused with an error that says how to proceed.
//!
//! # Units
//! Map coordinates in the grid's CRS unit; GeoJSON degrees in WGS 84 mode.

use std::ops::Range;

use geo::{Coord, LineString, MultiPolygon, Polygon};
use geojson::{GeoJson, Geometry, GeometryValue, Position};

use crate::terrain::raster::{Crs, CrsKind, GeoRef, Grid};
use crate::terrain::utm::{self, UtmError, UtmZone};
use crate::units::deg_to_rad;

/// Largest longitude or latitude step of a projected edge piece, degrees. 0.01° is about
/// 1.1 km; the sagitta of such a piece against the true image of a lon/lat straight
/// line is then centimetres even at 80° of latitude (it grows with the square of the
/// piece length), well below any DEM cell.
pub const DENSIFY_STEP_DEG: f64 = 0.01;

/// Marks the cells of a grid like `like` whose centre is inside `shapes` (see the
/// module doc for the rule).
pub fn rasterise<T: Copy>(like: &Grid<T>, shapes: &MultiPolygon<f64>) -> Grid<bool> {
    let mut mask = Grid::filled_like(like, false);
    for polygon in &shapes.0 {
        fill_polygon(&mut mask, polygon);
    }
    mask
}

/// Sets the cells of `mask` whose centre is inside `polygon` (others are left as they are).
pub fn fill_polygon(mask: &mut Grid<bool>, polygon: &Polygon<f64>) {
    let Some(rows) = row_span(&mask.georef, mask.height(), polygon) else {
        return;
    };
    let mut crossings: Vec<Vec<f64>> = vec![Vec::new(); rows.end - rows.start];
    let rings = std::iter::once(polygon.exterior()).chain(polygon.interiors());
    for ring in rings {
        for edge in ring.lines() {
            add_crossings(&mask.georef, &rows, edge.start, edge.end, &mut crossings);
        }
    }
    for (k, xs) in crossings.iter_mut().enumerate() {
        xs.sort_unstable_by(f64::total_cmp);
        for pair in xs.chunks_exact(2) {
            fill_span(mask, rows.start + k, pair[0], pair[1]);
        }
    }
}

/// Map y of the centre line of a row, computed as [`GeoRef::cell_centre`] does.
#[inline]
fn row_y(g: &GeoRef, row: usize) -> f64 {
    g.origin_y - (row as f64 + 0.5) * g.pixel_height
}

/// Map x of the centre of a column, computed as [`GeoRef::cell_centre`] does.
#[inline]
fn col_x(g: &GeoRef, col: usize) -> f64 {
    g.origin_x + (col as f64 + 0.5) * g.pixel_width
}

/// Rows within `limit` whose centre line can meet the y-range [lo, hi] (one row of
/// slack each side; the exact test is made per edge).
fn rows_between(g: &GeoRef, limit: &Range<usize>, lo: f64, hi: f64) -> Range<usize> {
    let first = ((g.origin_y - hi) / g.pixel_height - 0.5).floor() - 1.0;
    let last = ((g.origin_y - lo) / g.pixel_height - 0.5).ceil() + 1.0;
    let clamp = |v: f64| v.clamp(limit.start as f64, limit.end as f64) as usize;
    clamp(first)..clamp(last + 1.0)
}

fn row_span(g: &GeoRef, height: usize, polygon: &Polygon<f64>) -> Option<Range<usize>> {
    let (lo, hi) = polygon
        .exterior()
        .coords()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), c| {
            (lo.min(c.y), hi.max(c.y))
        });
    let rows = rows_between(g, &(0..height), lo, hi);
    (lo <= hi && !rows.is_empty()).then_some(rows)
}

fn add_crossings(
    g: &GeoRef,
    rows: &Range<usize>,
    a: Coord<f64>,
    b: Coord<f64>,
    crossings: &mut [Vec<f64>],
) {
    if a.y == b.y {
        return;
    }
    for row in rows_between(g, rows, a.y.min(b.y), a.y.max(b.y)) {
        let y = row_y(g, row);
        if (a.y <= y) != (b.y <= y) {
            let x = a.x + (y - a.y) * (b.x - a.x) / (b.y - a.y);
            crossings[row - rows.start].push(x);
        }
    }
}

/// Sets the cells of `row` whose centre x lies in [x0, x1).
fn fill_span(mask: &mut Grid<bool>, row: usize, x0: f64, x1: f64) {
    let g = &mask.georef;
    let width = mask.width();
    let first = first_col_at_or_after(g, width, x0);
    let end = first_col_at_or_after(g, width, x1);
    for col in first..end {
        mask.set(col, row, true);
    }
}

/// The first column whose centre x is ≥ x (width when none), exact for the centres as
/// computed by [`col_x`].
fn first_col_at_or_after(g: &GeoRef, width: usize, x: f64) -> usize {
    let guess = ((x - g.origin_x) / g.pixel_width - 0.5).ceil();
    let mut c = guess.clamp(0.0, width as f64) as usize;
    while c < width && col_x(g, c) < x {
        c += 1;
    }
    while c > 0 && col_x(g, c - 1) >= x {
        c -= 1;
    }
    c
}

/// Number of cells set in a mask.
pub fn count(mask: &Grid<bool>) -> usize {
    mask.data().iter().filter(|&&b| b).count()
}

// ------------------------------------------------------------------ GeoJSON keep-out text

/// What the coordinates of a keep-out GeoJSON text are (see the module doc).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum KeepOutCoords {
    /// Map coordinates in the DEM's own CRS, used as they are (default).
    #[default]
    GridCrs,
    /// RFC 7946 WGS 84 longitude/latitude in degrees, projected into the DEM's CRS.
    Wgs84LonLat,
}

/// Why a keep-out text could not be used.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum KeepOutError {
    /// Not GeoJSON.
    #[error(
        "the keep-out text is not valid GeoJSON: {detail}. Fix: check it with a GeoJSON validator"
    )]
    Json {
        /// The parser's message.
        detail: String,
    },
    /// A geometry that is not an area.
    #[error(
        "{place} is a {kind}: keep-out areas must be Polygon or MultiPolygon geometries (also \
         inside a Feature, FeatureCollection or GeometryCollection). Fix: remove it or \
         draw it as a polygon"
    )]
    NotAnArea {
        /// "feature 3", "feature 3, member 1 of its GeometryCollection", ...
        place: String,
        /// The GeoJSON type.
        kind: &'static str,
    },
    /// A Feature with a null geometry.
    #[error("{place} has no geometry. Fix: give it a Polygon or remove the feature")]
    NoGeometry {
        /// "feature 3" or "the Feature".
        place: String,
    },
    /// A ring that is too short, open or has a bad position.
    #[error("{place}, ring {ring}: {detail}. Fix: {fix}")]
    BadRing {
        /// Where.
        place: String,
        /// Ring index (0 = exterior, then the holes).
        ring: usize,
        /// What is wrong.
        detail: String,
        /// What to do.
        fix: &'static str,
    },
    /// WGS 84 coordinates were asked for but the DEM's CRS is not supported for that.
    #[error(
        "keep-out coordinates given as WGS 84 longitude/latitude, but the DEM's CRS is \
         {crs}; only geographic DEMs and WGS 84 / UTM DEMs (EPSG 32601-32660, 32701-32760) \
         can take them. Fix: write the keep-out coordinates in the DEM's own CRS and read \
         them without the WGS 84 option"
    )]
    Crs {
        /// The DEM's CRS label.
        crs: String,
    },
    /// A position could not be projected.
    #[error("{place}, ring {ring}: {source}")]
    Projection {
        /// Where.
        place: String,
        /// Ring index.
        ring: usize,
        /// The projection's error.
        source: UtmError,
    },
}

/// How positions become map coordinates.
#[derive(Debug, Clone, Copy)]
enum Projector {
    AsGiven,
    Geographic,
    Utm(UtmZone),
}

impl Projector {
    fn for_crs(coords: KeepOutCoords, crs: &Crs) -> Result<Projector, KeepOutError> {
        match coords {
            KeepOutCoords::GridCrs => Ok(Projector::AsGiven),
            KeepOutCoords::Wgs84LonLat => match (crs.kind, crs.epsg.and_then(UtmZone::from_epsg)) {
                (CrsKind::Geographic, _) => Ok(Projector::Geographic),
                (CrsKind::Projected, Some(zone)) => Ok(Projector::Utm(zone)),
                _ => Err(KeepOutError::Crs { crs: crs.label() }),
            },
        }
    }
}

/// Where a geometry sits in the text, for messages.
#[derive(Debug, Clone)]
struct Place(String);

impl Place {
    fn member(&self, k: usize) -> Place {
        Place(format!("{}, member {k} of its GeometryCollection", self.0))
    }
}

/// Parses keep-out polygons from GeoJSON text into map coordinates of a DEM whose CRS
/// is `crs` (see the module doc for the accepted types and the coordinate rule).
pub fn parse_keep_out(
    text: &str,
    coords: KeepOutCoords,
    crs: &Crs,
) -> Result<MultiPolygon<f64>, KeepOutError> {
    let projector = Projector::for_crs(coords, crs)?;
    let doc: GeoJson = text
        .parse()
        .map_err(|e: geojson::Error| KeepOutError::Json {
            detail: e.to_string(),
        })?;
    let mut out = Vec::new();
    match &doc {
        GeoJson::Geometry(g) => collect(
            g,
            &Place("the top-level geometry".into()),
            projector,
            &mut out,
        )?,
        GeoJson::Feature(f) => {
            collect_feature(f, Place("the Feature".into()), projector, &mut out)?
        }
        GeoJson::FeatureCollection(fc) => {
            for (k, f) in fc.features.iter().enumerate() {
                collect_feature(f, Place(format!("feature {k}")), projector, &mut out)?;
            }
        }
    }
    Ok(MultiPolygon(out))
}

fn collect_feature(
    f: &geojson::Feature,
    place: Place,
    projector: Projector,
    out: &mut Vec<Polygon<f64>>,
) -> Result<(), KeepOutError> {
    match &f.geometry {
        Some(g) => collect(g, &place, projector, out),
        None => Err(KeepOutError::NoGeometry { place: place.0 }),
    }
}

fn collect(
    g: &Geometry,
    place: &Place,
    projector: Projector,
    out: &mut Vec<Polygon<f64>>,
) -> Result<(), KeepOutError> {
    match &g.value {
        GeometryValue::Polygon { coordinates } => {
            out.push(polygon(coordinates, place, projector)?);
        }
        GeometryValue::MultiPolygon { coordinates } => {
            for p in coordinates {
                out.push(polygon(p, place, projector)?);
            }
        }
        GeometryValue::GeometryCollection { geometries } => {
            for (k, member) in geometries.iter().enumerate() {
                collect(member, &place.member(k), projector, out)?;
            }
        }
        other => {
            return Err(KeepOutError::NotAnArea {
                place: place.0.clone(),
                kind: other.type_name(),
            })
        }
    }
    Ok(())
}

fn polygon(
    rings: &[Vec<Position>],
    place: &Place,
    projector: Projector,
) -> Result<Polygon<f64>, KeepOutError> {
    if rings.is_empty() {
        return Err(bad_ring(
            place,
            0,
            "the polygon has no rings".into(),
            RING_FIX,
        ));
    }
    let mut out = Vec::with_capacity(rings.len());
    for (k, ring) in rings.iter().enumerate() {
        let coords = ring_coords(ring, place, k)?;
        out.push(project_ring(&coords, place, k, projector)?);
    }
    let exterior = out.remove(0);
    Ok(Polygon::new(exterior, out))
}

const RING_FIX: &str = "give each ring at least four positions, the last repeating the first";

fn bad_ring(place: &Place, ring: usize, detail: String, fix: &'static str) -> KeepOutError {
    KeepOutError::BadRing {
        place: place.0.clone(),
        ring,
        detail,
        fix,
    }
}

/// Checks a ring (RFC 7946, 3.1.6) and returns its (x, y) pairs as written.
fn ring_coords(
    ring: &[Position],
    place: &Place,
    k: usize,
) -> Result<Vec<Coord<f64>>, KeepOutError> {
    if ring.len() < 4 {
        let detail = format!("{} positions, at least 4 needed", ring.len());
        return Err(bad_ring(place, k, detail, RING_FIX));
    }
    let mut coords = Vec::with_capacity(ring.len());
    for (i, p) in ring.iter().enumerate() {
        let v = p.as_slice();
        if v.len() < 2 || !v[0].is_finite() || !v[1].is_finite() {
            let detail = format!("position {i} is {v:?}, not two finite numbers");
            return Err(bad_ring(place, k, detail, "write each position as [x, y]"));
        }
        coords.push(Coord { x: v[0], y: v[1] });
    }
    if coords[0] != coords[coords.len() - 1] {
        let detail = format!(
            "the ring is not closed: it starts at [{}, {}] and ends at [{}, {}]",
            coords[0].x,
            coords[0].y,
            coords[coords.len() - 1].x,
            coords[coords.len() - 1].y
        );
        return Err(bad_ring(place, k, detail, RING_FIX));
    }
    Ok(coords)
}

fn project_ring(
    coords: &[Coord<f64>],
    place: &Place,
    ring: usize,
    projector: Projector,
) -> Result<LineString<f64>, KeepOutError> {
    let zone = match projector {
        Projector::AsGiven | Projector::Geographic => return Ok(LineString(coords.to_vec())),
        Projector::Utm(zone) => zone,
    };
    let project = |c: Coord<f64>| {
        utm::forward(zone, deg_to_rad(c.y), deg_to_rad(c.x))
            .map(|p| Coord {
                x: p.easting_m,
                y: p.northing_m,
            })
            .map_err(|source| KeepOutError::Projection {
                place: place.0.clone(),
                ring,
                source,
            })
    };
    let mut out = Vec::with_capacity(coords.len());
    for w in coords.windows(2) {
        for c in densify(w[0], w[1]) {
            out.push(project(c)?);
        }
    }
    out.push(project(coords[coords.len() - 1])?);
    Ok(LineString(out))
}

/// The start of an edge and the inner points splitting it into pieces of at most
/// [`DENSIFY_STEP_DEG`] (the end is left to the next edge).
fn densify(a: Coord<f64>, b: Coord<f64>) -> impl Iterator<Item = Coord<f64>> {
    let longest = (b.x - a.x).abs().max((b.y - a.y).abs());
    let pieces = (longest / DENSIFY_STEP_DEG).ceil().max(1.0) as usize;
    (0..pieces).map(move |k| {
        let t = k as f64 / pieces as f64;
        Coord {
            x: a.x + t * (b.x - a.x),
            y: a.y + t * (b.y - a.y),
        }
    })
}
