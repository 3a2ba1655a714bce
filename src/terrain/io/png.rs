//! 16-bit (or 8-bit) greyscale PNG heightmaps, and greyscale PNG pictures.
//!
//! A PNG carries no georeference, so the caller gives the cell size and the vertical
//! mapping: elevation_m = z_offset_m + z_scale_m × raw sample value. The grid's upper-left
//! corner is placed at (0, 0) in a local metric CRS. An optional raw value marks no-data.

use std::io::{BufRead, BufReader, Seek, Write};
use std::path::Path;

use crate::terrain::error::TerrainError;
use crate::terrain::raster::{Dem, GeoRef, Grid};

const FORMAT: &str = "PNG heightmap";

/// How raw PNG samples become elevations.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PngScale {
    /// Cell size on the ground, metres (> 0).
    pub cell_m: f64,
    /// Metres per raw sample step.
    pub z_scale_m: f64,
    /// Elevation of raw value 0, metres.
    pub z_offset_m: f64,
    /// Raw sample value that marks no-data, if any.
    pub nodata_raw: Option<u16>,
}

/// Reads a greyscale PNG heightmap.
pub fn read(path: &Path, scale: &PngScale, max_cells: u64) -> Result<Dem, TerrainError> {
    check_scale(scale)?;
    let file = std::fs::File::open(path).map_err(|source| TerrainError::Io {
        path: path.to_path_buf(),
        action: "reading",
        source,
    })?;
    read_from(BufReader::new(file), path, scale, max_cells)
}

/// Reads a greyscale PNG heightmap from any buffered, seekable stream; `path` only names
/// the source in errors.
pub fn read_from<R: BufRead + Seek>(
    r: R,
    path: &Path,
    scale: &PngScale,
    max_cells: u64,
) -> Result<Dem, TerrainError> {
    check_scale(scale)?;
    let bad = |e: png::DecodingError| {
        TerrainError::malformed(
            path,
            FORMAT,
            decoding_detail(&e),
            "check that the file is a complete PNG",
        )
    };
    // The decoder's own ceiling (64 MiB by default) would refuse a legal 16-bit grid of
    // 6000 × 6000 cells with an opaque message; give it room for the cell limit instead.
    let bytes = usize::try_from(max_cells.saturating_mul(2))
        .unwrap_or(usize::MAX)
        .saturating_add(1 << 20)
        .max(64 << 20);
    let mut decoder = png::Decoder::new_with_limits(r, png::Limits { bytes });
    decoder.set_transformations(png::Transformations::IDENTITY);
    let mut reader = decoder.read_info().map_err(bad)?;
    let info = reader.info();
    let (w, h) = (info.width as u64, info.height as u64);
    if w * h > max_cells {
        return Err(TerrainError::TooLarge {
            path: path.to_path_buf(),
            width: w,
            height: h,
            limit: max_cells,
        });
    }
    let depth = match (info.color_type, info.bit_depth) {
        (png::ColorType::Grayscale, png::BitDepth::Sixteen) => 16,
        (png::ColorType::Grayscale, png::BitDepth::Eight) => 8,
        (ct, bd) => {
            return Err(TerrainError::unsupported(
                path,
                format!("PNG pixel type {ct:?} at {bd:?} bits: a heightmap is one grey channel"),
                "save the heightmap as 16-bit greyscale",
            ))
        }
    };
    let size = reader.output_buffer_size().ok_or_else(|| {
        TerrainError::malformed(path, FORMAT, "image too large for memory", "crop the image")
    })?;
    let mut buf = vec![0u8; size];
    reader.next_frame(&mut buf).map_err(bad)?;
    let raw: Vec<u16> = if depth == 16 {
        buf.chunks_exact(2)
            .map(|b| u16::from_be_bytes([b[0], b[1]]))
            .collect()
    } else {
        buf.iter().map(|&b| b as u16).collect()
    };
    let data = raw
        .iter()
        .take((w * h) as usize)
        .map(|&v| {
            if Some(v) == scale.nodata_raw {
                f32::NAN
            } else {
                (scale.z_offset_m + scale.z_scale_m * v as f64) as f32
            }
        })
        .collect();
    Ok(Grid::from_vec(
        w as usize,
        h as usize,
        data,
        GeoRef::local(scale.cell_m),
    ))
}

/// The decoder's complaint in words: its own text, without the debug dump of chunk
/// types it prints for a damaged chunk sequence.
fn decoding_detail(e: &png::DecodingError) -> String {
    let text = e.to_string();
    match e {
        png::DecodingError::LimitsExceeded => {
            "the decoded image would need more memory than the cell limit allows".into()
        }
        _ if text.contains("ChunkType {") => {
            "the chunk sequence is damaged (a chunk out of place, or a wrong chunk length)".into()
        }
        _ => text.trim_end_matches('.').to_string(),
    }
}

/// Refuses a cell size or vertical mapping that would make every elevation meaningless.
fn check_scale(scale: &PngScale) -> Result<(), TerrainError> {
    if !(scale.cell_m > 0.0 && scale.cell_m.is_finite()) {
        return Err(TerrainError::Parameter {
            name: "cell size (--cell-m)",
            value: scale.cell_m.to_string(),
            expected: "a positive number of metres",
        });
    }
    if !scale.z_scale_m.is_finite() || scale.z_scale_m == 0.0 || !scale.z_offset_m.is_finite() {
        return Err(TerrainError::Parameter {
            name: "vertical scale (--z-scale / --z-offset)",
            value: format!("{} / {}", scale.z_scale_m, scale.z_offset_m),
            expected: "a finite, non-zero scale and a finite offset, metres",
        });
    }
    Ok(())
}

/// Encodes row-major sample bytes of one colour type and depth as a PNG.
fn encode<W: Write>(
    out: W,
    width: usize,
    height: usize,
    color: png::ColorType,
    depth: png::BitDepth,
    bytes: &[u8],
) -> std::io::Result<()> {
    let mut enc = png::Encoder::new(out, width as u32, height as u32);
    enc.set_color(color);
    enc.set_depth(depth);
    let mut w = enc.write_header().map_err(std::io::Error::other)?;
    w.write_image_data(bytes).map_err(std::io::Error::other)?;
    w.finish().map_err(std::io::Error::other)
}

/// Encodes 8-bit greyscale pixels (row-major) as a PNG picture.
pub fn write_gray8<W: Write>(
    out: W,
    width: usize,
    height: usize,
    pixels: &[u8],
) -> std::io::Result<()> {
    encode(
        out,
        width,
        height,
        png::ColorType::Grayscale,
        png::BitDepth::Eight,
        pixels,
    )
}

/// Encodes 16-bit greyscale samples (row-major) as a PNG heightmap.
pub fn write_gray16<W: Write>(
    out: W,
    width: usize,
    height: usize,
    samples: &[u16],
) -> std::io::Result<()> {
    let bytes: Vec<u8> = samples.iter().flat_map(|v| v.to_be_bytes()).collect();
    encode(
        out,
        width,
        height,
        png::ColorType::Grayscale,
        png::BitDepth::Sixteen,
        &bytes,
    )
}

/// Encodes 8-bit RGB pixels (row-major, 3 bytes each) as a PNG picture.
pub fn write_rgb8<W: Write>(
    out: W,
    width: usize,
    height: usize,
    pixels: &[u8],
) -> std::io::Result<()> {
    encode(
        out,
        width,
        height,
        png::ColorType::Rgb,
        png::BitDepth::Eight,
        pixels,
    )
}
