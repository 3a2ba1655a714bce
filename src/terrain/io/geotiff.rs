//! GeoTIFF reading (through the `tiff` crate) and writing (a small baseline writer).
//!
//! Follows the OGC GeoTIFF Standard 1.1 (OGC 19-008r4, 2019): the georeference comes from
//! ModelPixelScaleTag (33550) + ModelTiepointTag (33922), or ModelTransformationTag
//! (34264); the CRS from the GeoKeyDirectoryTag (34735) with GeoDoubleParamsTag (34736)
//! and GeoAsciiParamsTag (34737); the no-data value from GDAL's GDAL_NODATA tag (42113),
//! an ASCII number (it may be "nan"). PixelIsPoint rasters (GTRasterTypeGeoKey = 2) are
//! shifted by half a cell so that the origin is always a cell corner, as GDAL does.
//!
//! Read: one band of Float32, Float64, Int16, UInt16, Int32 (and 8-bit / UInt32),
//! strips or tiles, uncompressed, LZW or Deflate, with or without a predictor.
//! South-up grids (positive row step) are flipped to north-up on reading.
//! Refused with a clear error: several bands, complex or 64-bit integer samples,
//! rotated grids, rasters without georeference, JPEG or ZSTD compression.
//!
//! Write: little-endian classic TIFF, Float32, one or more bands interleaved per pixel
//! (PlanarConfiguration 1), uncompressed strips, the source's GeoKeys kept verbatim,
//! NaN written as the no-data value -9999 with GDAL_NODATA set.

use std::io::{BufReader, Read, Seek, Write};
use std::path::Path;

use tiff::decoder::{ifd::Value, Decoder, DecodingResult, Limits};
use tiff::tags::{SampleFormat, Tag};
use tiff::ColorType;

use crate::terrain::error::TerrainError;
use crate::terrain::raster::{Crs, CrsKind, Dem, GeoKeys, GeoRef, Grid, LinearUnit};

const FORMAT: &str = "GeoTIFF";

/// The no-data value written into derived maps.
pub const WRITE_NODATA: f32 = -9999.0;

/// Reads a single-band GeoTIFF into an elevation grid (NaN = no-data).
pub fn read(path: &Path, max_cells: u64) -> Result<Dem, TerrainError> {
    let file = std::fs::File::open(path).map_err(|source| TerrainError::Io {
        path: path.to_path_buf(),
        action: "reading",
        source,
    })?;
    read_from(BufReader::new(file), path, max_cells)
}

/// Reads from any seekable stream; `path` only names the source in errors.
pub fn read_from<R: Read + Seek>(
    mut r: R,
    path: &Path,
    max_cells: u64,
) -> Result<Dem, TerrainError> {
    let file_len = stream_len(&mut r, path)?;
    let bad = |e: tiff::TiffError| {
        let detail = match &e {
            // A seek past what the platform can address (EINVAL) is an offset beyond the
            // end of the file too.
            tiff::TiffError::IoError(io)
                if matches!(
                    io.kind(),
                    std::io::ErrorKind::UnexpectedEof | std::io::ErrorKind::InvalidInput
                ) =>
            {
                "the file ends before the data its header declares (truncated or damaged)"
                    .to_string()
            }
            tiff::TiffError::FormatError(tiff::TiffFormatError::InconsistentSizesEncountered) => {
                "the header's sizes disagree with each other (image size, samples per pixel, \
                 strip or tile counts)"
                    .to_string()
            }
            other => other.to_string(),
        };
        // A well-formed file in an encoding the reader lacks needs re-encoding, not a
        // new copy.
        let fix = if matches!(e, tiff::TiffError::UnsupportedError(_)) {
            "re-encode it as an uncompressed, LZW or Deflate GeoTIFF of one band (for \
             example `gdal_translate -co COMPRESS=DEFLATE IN.tif OUT.tif`)"
        } else {
            "check that the file is complete and is a TIFF (gdalinfo shows it)"
        };
        TerrainError::malformed(path, FORMAT, detail, fix)
    };
    let mut limits = Limits::default();
    limits.decoding_buffer_size =
        usize::try_from(max_cells.saturating_mul(8)).unwrap_or(usize::MAX);
    limits.intermediate_buffer_size = limits.decoding_buffer_size;
    let mut dec = Decoder::new(r).map_err(bad)?.with_limits(limits);
    let (w, h) = dec.dimensions().map_err(bad)?;
    let cells = w as u64 * h as u64;
    if w == 0 || h == 0 {
        return Err(TerrainError::malformed(
            path,
            FORMAT,
            format!("the header declares {w} x {h} cells"),
            "the raster must have at least one row and one column",
        ));
    }
    if cells > max_cells {
        return Err(TerrainError::TooLarge {
            path: path.to_path_buf(),
            width: w as u64,
            height: h as u64,
            limit: max_cells,
        });
    }
    let bits = check_sample_type(&mut dec, path)?;
    check_chunks(
        &mut dec,
        path,
        cells.saturating_mul(u64::from(bits) / 8),
        file_len,
    )?;
    let (georef, south_up) = read_georef(&mut dec, path, h)?;
    let data = dec.read_image().map_err(bad)?;
    let mut values = to_f32(data, georef.nodata, path)?;
    if values.len() != cells as usize {
        return Err(TerrainError::malformed(
            path,
            FORMAT,
            format!("decoded {} values for {w} x {h} cells", values.len()),
            "the file is damaged; re-export it",
        ));
    }
    if south_up {
        flip_rows(&mut values, w as usize);
    }
    Ok(Grid::from_vec(w as usize, h as usize, values, georef))
}

/// Reverses the row order of a row-major buffer.
fn flip_rows(values: &mut [f32], width: usize) {
    let rows = values.len() / width.max(1);
    for r in 0..rows / 2 {
        let (top, bottom) = values.split_at_mut((rows - 1 - r) * width);
        top[r * width..(r + 1) * width].swap_with_slice(&mut bottom[..width]);
    }
}

/// The stream's length in bytes; the stream is left at its start.
fn stream_len<R: Seek>(r: &mut R, path: &Path) -> Result<u64, TerrainError> {
    let io = |source| TerrainError::Io {
        path: path.to_path_buf(),
        action: "reading",
        source,
    };
    let len = r.seek(std::io::SeekFrom::End(0)).map_err(io)?;
    r.seek(std::io::SeekFrom::Start(0)).map_err(io)?;
    Ok(len)
}

/// Largest ratio of decoded to stored bytes believed for compressed chunks, with margin:
/// Deflate cannot exceed about 1032:1 (zlib's technical notes; from memory), and a 12-bit
/// LZW code stands for at most 4096 bytes (from memory).
const MAX_EXPANSION: u64 = 4096;

/// Before the decoder allocates the whole image: every strip or tile must lie inside the
/// file, and the stored bytes must be able to hold the declared image (all of it when
/// uncompressed, at most [`MAX_EXPANSION`] times when compressed). A tiny file that
/// declares a large image is refused here instead of after a large allocation. Files
/// with empty chunks (GDAL's sparse files) skip the size test.
fn check_chunks<R: Read + Seek>(
    dec: &mut Decoder<R>,
    path: &Path,
    image_bytes: u64,
    file_len: u64,
) -> Result<(), TerrainError> {
    let mut vec_of = |tag| {
        dec.find_tag_unsigned_vec::<u64>(tag)
            .ok()
            .flatten()
            .unwrap_or_default()
    };
    let (mut offsets, mut counts) = (vec_of(Tag::StripOffsets), vec_of(Tag::StripByteCounts));
    if offsets.is_empty() {
        offsets = vec_of(Tag::TileOffsets);
        counts = vec_of(Tag::TileByteCounts);
    }
    let compression = vec_of(Tag::Compression).first().copied().unwrap_or(1);
    let truncated = |detail: String| {
        TerrainError::malformed(
            path,
            FORMAT,
            detail,
            "check that the file is complete (was the download or copy cut short?)",
        )
    };
    if let Some((i, (o, c))) = offsets
        .iter()
        .zip(&counts)
        .enumerate()
        .find(|(_, (&o, &c))| o.saturating_add(c) > file_len)
    {
        return Err(truncated(format!(
            "the file ends before the data its header declares: data block {} of {} ({c} \
             bytes at offset {o}) lies past the end of the {file_len}-byte file",
            i + 1,
            offsets.len()
        )));
    }
    if counts.is_empty() || counts.contains(&0) {
        return Ok(());
    }
    let stored: u64 = counts.iter().fold(0u64, |a, &c| a.saturating_add(c));
    let ratio = if compression == 1 { 1 } else { MAX_EXPANSION };
    if stored.saturating_mul(ratio) < image_bytes {
        let how = if compression == 1 {
            "uncompressed".to_string()
        } else {
            format!("even at {ratio}:1 compression")
        };
        return Err(truncated(format!(
            "the data blocks are too small for the image the header declares: \
             {image_bytes} bytes of pixels, {stored} bytes stored ({how})"
        )));
    }
    Ok(())
}

/// Checks the pixel layout and sample format; returns the bits per sample.
fn check_sample_type<R: Read + Seek>(
    dec: &mut Decoder<R>,
    path: &Path,
) -> Result<u8, TerrainError> {
    let color = dec.colortype().map_err(|e| {
        TerrainError::unsupported(
            path,
            format!("pixel layout ({e})"),
            "convert to one band of Float32 with gdal_translate -b 1 -ot Float32",
        )
    })?;
    let bits = match color {
        ColorType::Gray(b) => b,
        other => {
            return Err(TerrainError::unsupported(
                path,
                format!("pixel layout {other:?}: an elevation raster has exactly one band"),
                "extract the elevation band with gdal_translate -b 1",
            ))
        }
    };
    let format = dec
        .find_tag_unsigned_vec::<u16>(Tag::SampleFormat)
        .ok()
        .flatten()
        .and_then(|v| v.first().copied())
        .unwrap_or(1);
    let ok = matches!(
        (format, bits),
        (1, 8) | (1, 16) | (1, 32) | (2, 8) | (2, 16) | (2, 32) | (3, 32) | (3, 64)
    );
    if !ok {
        let kind = match format {
            1 => "unsigned integer",
            2 => "signed integer",
            3 => "floating point",
            5 => "complex integer",
            6 => "complex floating point",
            _ => "undefined",
        };
        return Err(TerrainError::unsupported(
            path,
            format!("sample format: {bits}-bit {kind} (SampleFormat {format})"),
            "convert with gdal_translate -ot Float32; sunward reads Float32, Float64, Int16, \
             UInt16, Int32 (and 8-bit, UInt32)",
        ));
    }
    Ok(bits)
}

fn tag_f64s<R: Read + Seek>(dec: &mut Decoder<R>, tag: Tag) -> Option<Vec<f64>> {
    dec.find_tag(tag)
        .ok()
        .flatten()
        .and_then(|v| v.into_f64_vec().ok())
}

/// The georeference, and whether the file's rows run northward (they are then flipped so
/// that row 0 is the north edge, as everywhere inside sunward).
fn read_georef<R: Read + Seek>(
    dec: &mut Decoder<R>,
    path: &Path,
    height: u32,
) -> Result<(GeoRef, bool), TerrainError> {
    let scale = tag_f64s(dec, Tag::ModelPixelScaleTag);
    let tie = tag_f64s(dec, Tag::ModelTiepointTag);
    let transform = tag_f64s(dec, Tag::ModelTransformationTag);
    let keys = read_geokeys(dec);
    let nodata = match dec.find_tag(Tag::GdalNodata).ok().flatten() {
        Some(v) => Some(parse_nodata(v, path)?),
        None => None,
    };
    let (mut ox, mut oy, pw, ph) = match (transform, scale, tie) {
        (Some(t), _, _) if t.len() >= 16 => {
            if t[1].abs() > 1e-12 * t[0].abs() || t[4].abs() > 1e-12 * t[5].abs() {
                return Err(TerrainError::unsupported(
                    path,
                    "rotated or sheared grid (ModelTransformationTag has rotation terms)",
                    "resample to a north-up grid with gdalwarp",
                ));
            }
            (t[3], t[7], t[0], -t[5])
        }
        (_, Some(s), Some(t)) if s.len() >= 2 && t.len() >= 6 => {
            (t[3] - t[0] * s[0], t[4] + t[1] * s[1], s[0], s[1])
        }
        _ => {
            return Err(TerrainError::unsupported(
                path,
                "TIFF without georeference (no ModelPixelScale + ModelTiepoint or \
                 ModelTransformation tags)",
                "georeference it (gdal_edit.py -a_ullr ULX ULY LRX LRY -a_srs EPSG:CODE) or \
                 use a PNG heightmap with --cell-m",
            ))
        }
    };
    if !(pw.is_finite() && ph.is_finite() && pw > 0.0) || ph == 0.0 {
        return Err(TerrainError::malformed(
            path,
            FORMAT,
            format!("pixel size {pw} x {ph} map units"),
            "the pixel size must be finite and positive; fix the georeference tags",
        ));
    }
    let crs = crs_from_keys(keys);
    let south_up = ph < 0.0;
    let ph = ph.abs();
    if raster_type(&crs) == Some(2) {
        ox -= 0.5 * pw;
        oy += if south_up { -0.5 * ph } else { 0.5 * ph };
    }
    if south_up {
        // oy is the south edge of row 0; after flipping, row 0 is the north edge.
        oy += height as f64 * ph;
    }
    let georef = GeoRef {
        origin_x: ox,
        origin_y: oy,
        pixel_width: pw,
        pixel_height: ph,
        crs,
        nodata,
    };
    Ok((georef, south_up))
}

fn parse_nodata(v: Value, path: &Path) -> Result<f64, TerrainError> {
    let not_text = || {
        TerrainError::malformed(
            path,
            FORMAT,
            "the GDAL_NODATA tag (42113) is not text",
            "set a numeric no-data value with gdal_edit.py -a_nodata VALUE",
        )
    };
    let text = match v {
        Value::Ascii(s) => s,
        _ => return Err(not_text()),
    };
    let t = text.trim_matches(|c: char| c.is_whitespace() || c == '\0');
    let parsed = match t.to_ascii_lowercase().as_str() {
        "nan" | "-nan" | "+nan" => Ok(f64::NAN),
        s => s.parse::<f64>(),
    };
    parsed.map_err(|_| {
        TerrainError::malformed(
            path,
            FORMAT,
            format!("GDAL_NODATA tag holds {t:?}, not a number"),
            "set a numeric no-data value with gdal_edit.py -a_nodata VALUE",
        )
    })
}

fn read_geokeys<R: Read + Seek>(dec: &mut Decoder<R>) -> Option<GeoKeys> {
    let directory = dec
        .find_tag_unsigned_vec::<u16>(Tag::GeoKeyDirectoryTag)
        .ok()
        .flatten()?;
    let doubles = tag_f64s(dec, Tag::Unknown(34736)).unwrap_or_default();
    let ascii = match dec.find_tag(Tag::Unknown(34737)).ok().flatten() {
        Some(Value::Ascii(s)) => s,
        _ => String::new(),
    };
    Some(GeoKeys {
        directory,
        doubles,
        ascii,
    })
}

/// A GeoKey's value: an inline short, a double, or an ASCII string.
#[derive(Debug, Clone, PartialEq)]
pub enum KeyValue {
    /// Stored in the directory itself.
    Short(u16),
    /// From GeoDoubleParams.
    Double(f64),
    /// From GeoAsciiParams, without the terminating '|'.
    Ascii(String),
}

/// Looks up one key in a GeoKey directory; None when absent or malformed.
pub fn geokey(keys: &GeoKeys, id: u16) -> Option<KeyValue> {
    let d = &keys.directory;
    let n = *d.get(3)? as usize;
    (0..n).find_map(|i| {
        let e = d.get(4 + 4 * i..8 + 4 * i)?;
        if e[0] != id {
            return None;
        }
        let (loc, count, off) = (e[1], e[2] as usize, e[3] as usize);
        match loc {
            0 => Some(KeyValue::Short(e[3])),
            34736 => keys.doubles.get(off).map(|&v| KeyValue::Double(v)),
            34737 => {
                let s = keys.ascii.get(off..off + count)?;
                Some(KeyValue::Ascii(s.trim_end_matches(['|', '\0']).to_string()))
            }
            _ => None,
        }
    })
}

fn short_key(keys: &GeoKeys, id: u16) -> Option<u16> {
    match geokey(keys, id)? {
        KeyValue::Short(v) => Some(v),
        _ => None,
    }
}

fn raster_type(crs: &Crs) -> Option<u16> {
    short_key(crs.geokeys.as_ref()?, 1025)
}

fn crs_from_keys(keys: Option<GeoKeys>) -> Crs {
    let Some(keys) = keys else {
        return Crs::local_metres();
    };
    let model = short_key(&keys, 1024);
    let (kind, code_key, cite_key) = match model {
        Some(2) => (CrsKind::Geographic, 2048, 2049),
        Some(1) => (CrsKind::Projected, 3072, 3073),
        _ => (CrsKind::Unknown, 3072, 1026),
    };
    let epsg = short_key(&keys, code_key)
        .filter(|&c| c > 0 && c < 32767)
        .map(u32::from);
    let unit = match short_key(&keys, 3076) {
        Some(9002) => LinearUnit::Other { metres: 0.3048 },
        Some(9003) => LinearUnit::Other {
            metres: 1200.0 / 3937.0,
        },
        _ => LinearUnit::Metre,
    };
    let name = [cite_key, 1026]
        .into_iter()
        .find_map(|k| match geokey(&keys, k) {
            Some(KeyValue::Ascii(s)) if !s.is_empty() => Some(s),
            _ => None,
        });
    Crs {
        epsg,
        kind,
        unit,
        name,
        geokeys: Some(keys),
    }
}

fn to_f32(
    data: DecodingResult,
    nodata: Option<f64>,
    path: &Path,
) -> Result<Vec<f32>, TerrainError> {
    let nd = nodata.unwrap_or(f64::NAN);
    let conv = |v: f64| -> f32 {
        if !v.is_finite() || v == nd {
            f32::NAN
        } else {
            v as f32
        }
    };
    Ok(match data {
        DecodingResult::F32(v) => v.into_iter().map(|x| conv(x as f64)).collect(),
        DecodingResult::F64(v) => v.into_iter().map(conv).collect(),
        DecodingResult::I16(v) => v.into_iter().map(|x| conv(x as f64)).collect(),
        DecodingResult::U16(v) => v.into_iter().map(|x| conv(x as f64)).collect(),
        DecodingResult::I32(v) => v.into_iter().map(|x| conv(x as f64)).collect(),
        DecodingResult::U32(v) => v.into_iter().map(|x| conv(x as f64)).collect(),
        DecodingResult::U8(v) => v.into_iter().map(|x| conv(x as f64)).collect(),
        DecodingResult::I8(v) => v.into_iter().map(|x| conv(x as f64)).collect(),
        _ => {
            return Err(TerrainError::unsupported(
                path,
                "sample type (16-bit float or 64-bit integer)",
                "convert with gdal_translate -ot Float32",
            ))
        }
    })
}

// ---------------------------------------------------------------------------------------
// Writer

/// One IFD entry: tag, field type, count and the value bytes.
struct Entry {
    tag: u16,
    kind: u16,
    count: u32,
    bytes: Vec<u8>,
}

fn shorts(tag: u16, v: &[u16]) -> Entry {
    Entry {
        tag,
        kind: 3,
        count: v.len() as u32,
        bytes: v.iter().flat_map(|x| x.to_le_bytes()).collect(),
    }
}

fn longs(tag: u16, v: &[u32]) -> Entry {
    Entry {
        tag,
        kind: 4,
        count: v.len() as u32,
        bytes: v.iter().flat_map(|x| x.to_le_bytes()).collect(),
    }
}

fn doubles(tag: u16, v: &[f64]) -> Entry {
    Entry {
        tag,
        kind: 12,
        count: v.len() as u32,
        bytes: v.iter().flat_map(|x| x.to_le_bytes()).collect(),
    }
}

fn ascii(tag: u16, s: &str) -> Entry {
    let mut bytes = s.as_bytes().to_vec();
    bytes.push(0);
    Entry {
        tag,
        kind: 2,
        count: bytes.len() as u32,
        bytes,
    }
}

/// GeoKeys for a grid that did not come from a GeoTIFF, or the source's keys with the
/// raster type set to PixelIsArea (the origin is always a cell corner inside sunward).
fn keys_for(crs: &Crs) -> GeoKeys {
    if let Some(k) = &crs.geokeys {
        let mut k = k.clone();
        let n = k.directory.get(3).copied().unwrap_or(0) as usize;
        for i in 0..n {
            let at = 4 + 4 * i;
            if k.directory.get(at) == Some(&1025) && k.directory.get(at + 1) == Some(&0) {
                k.directory[at + 3] = 1;
            }
        }
        return k;
    }
    let mut entries: Vec<[u16; 4]> = Vec::new();
    match crs.kind {
        CrsKind::Geographic => {
            entries.push([1024, 0, 1, 2]);
            entries.push([1025, 0, 1, 1]);
            entries.push([2048, 0, 1, crs.epsg.map_or(32767, |c| c as u16)]);
        }
        _ => {
            entries.push([1024, 0, 1, 1]);
            entries.push([1025, 0, 1, 1]);
            entries.push([3072, 0, 1, crs.epsg.map_or(32767, |c| c as u16)]);
            if crs.epsg.is_none() {
                entries.push([3076, 0, 1, 9001]);
            }
        }
    }
    let mut directory = vec![1, 1, 0, entries.len() as u16];
    directory.extend(entries.into_iter().flatten());
    GeoKeys {
        directory,
        doubles: Vec::new(),
        ascii: String::new(),
    }
}

/// Writes `bands` (each `width × height` row-major values, NaN = no-data) as a Float32
/// GeoTIFF with the georeference `georef`. Band k is sample k of each pixel.
pub fn write<W: Write + ?Sized>(
    out: &mut W,
    georef: &GeoRef,
    width: usize,
    height: usize,
    bands: &[&[f32]],
) -> std::io::Result<()> {
    let nb = bands.len();
    assert!(nb >= 1 && bands.iter().all(|b| b.len() == width * height));
    let row_bytes = width * nb * 4;
    let rows_per_strip = (65_536 / row_bytes.max(1)).clamp(1, height.max(1));
    let strips = height.div_ceil(rows_per_strip);
    let data_len = (row_bytes * height) as u64;
    if data_len > u32::MAX as u64 - 1_000_000 {
        return Err(std::io::Error::other(format!(
            "{width} x {height} x {nb} bands of Float32 exceed the 4 GiB classic TIFF limit"
        )));
    }
    let keys = keys_for(&georef.crs);
    let data_start = 8u32;
    let mut offsets = Vec::with_capacity(strips);
    let mut counts = Vec::with_capacity(strips);
    for s in 0..strips {
        let rows = rows_per_strip.min(height - s * rows_per_strip);
        offsets.push(data_start + (s * rows_per_strip * row_bytes) as u32);
        counts.push((rows * row_bytes) as u32);
    }
    let mut entries = vec![
        longs(256, &[width as u32]),
        longs(257, &[height as u32]),
        shorts(258, &vec![32; nb]),
        shorts(259, &[1]),
        shorts(262, &[1]),
        longs(273, &offsets),
        shorts(277, &[nb as u16]),
        longs(278, &[rows_per_strip as u32]),
        longs(279, &counts),
        shorts(284, &[1]),
    ];
    if nb > 1 {
        entries.push(shorts(338, &vec![0; nb - 1]));
    }
    entries.push(shorts(339, &vec![SampleFormat::IEEEFP.to_u16(); nb]));
    entries.push(doubles(
        33550,
        &[georef.pixel_width, georef.pixel_height, 0.0],
    ));
    entries.push(doubles(
        33922,
        &[0.0, 0.0, 0.0, georef.origin_x, georef.origin_y, 0.0],
    ));
    entries.push(shorts(34735, &keys.directory));
    if !keys.doubles.is_empty() {
        entries.push(doubles(34736, &keys.doubles));
    }
    if !keys.ascii.is_empty() {
        entries.push(ascii(34737, keys.ascii.trim_end_matches('\0')));
    }
    entries.push(ascii(42113, &format!("{WRITE_NODATA}")));
    entries.sort_by_key(|e| e.tag);

    let ifd_offset = data_start as u64 + data_len;
    let ifd_offset = ifd_offset + (ifd_offset & 1);
    let ifd_len = 2 + 12 * entries.len() as u64 + 4;
    let mut extra_at = ifd_offset + ifd_len;

    out.write_all(b"II")?;
    out.write_all(&42u16.to_le_bytes())?;
    out.write_all(&(ifd_offset as u32).to_le_bytes())?;
    let mut buf = Vec::with_capacity(row_bytes);
    for row in 0..height {
        buf.clear();
        for col in 0..width {
            for band in bands {
                let v = band[row * width + col];
                let v = if v.is_nan() { WRITE_NODATA } else { v };
                buf.extend_from_slice(&v.to_le_bytes());
            }
        }
        out.write_all(&buf)?;
    }
    if data_len & 1 == 1 {
        out.write_all(&[0])?;
    }
    out.write_all(&(entries.len() as u16).to_le_bytes())?;
    let mut extra = Vec::new();
    for e in &entries {
        out.write_all(&e.tag.to_le_bytes())?;
        out.write_all(&e.kind.to_le_bytes())?;
        out.write_all(&e.count.to_le_bytes())?;
        if e.bytes.len() <= 4 {
            let mut v = e.bytes.clone();
            v.resize(4, 0);
            out.write_all(&v)?;
        } else {
            out.write_all(&(extra_at as u32).to_le_bytes())?;
            extra.extend_from_slice(&e.bytes);
            if e.bytes.len() & 1 == 1 {
                extra.push(0);
            }
            extra_at += e.bytes.len() as u64 + (e.bytes.len() as u64 & 1);
        }
    }
    out.write_all(&0u32.to_le_bytes())?;
    out.write_all(&extra)?;
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::io::Cursor;

    fn sample_grid() -> Dem {
        let mut g = GeoRef::local(2.5);
        g.origin_x = 500_000.0;
        g.origin_y = 7_000_000.0;
        g.crs.epsg = Some(32633);
        g.crs.kind = CrsKind::Projected;
        let data = (0..12)
            .map(|i| if i == 5 { f32::NAN } else { i as f32 * 1.5 })
            .collect();
        Grid::from_vec(4, 3, data, g)
    }

    #[test]
    fn written_file_reads_back_with_values_and_georeference() {
        let grid = sample_grid();
        let mut bytes = Vec::new();
        write(&mut bytes, &grid.georef, 4, 3, &[grid.data()]).unwrap();
        let back = read_from(Cursor::new(bytes), Path::new("mem.tif"), 1000).unwrap();
        assert_eq!((back.width(), back.height()), (4, 3));
        assert_eq!(back.georef.origin_x, 500_000.0);
        assert_eq!(back.georef.origin_y, 7_000_000.0);
        assert_eq!(back.georef.pixel_width, 2.5);
        assert_eq!(back.georef.crs.epsg, Some(32633));
        assert_eq!(back.georef.crs.kind, CrsKind::Projected);
        assert_eq!(back.georef.nodata, Some(-9999.0));
        for (a, b) in grid.data().iter().zip(back.data()) {
            assert!(a == b || (a.is_nan() && b.is_nan()), "{a} vs {b}");
        }
    }

    #[test]
    fn limit_is_checked_before_decoding() {
        let grid = sample_grid();
        let mut bytes = Vec::new();
        write(&mut bytes, &grid.georef, 4, 3, &[grid.data()]).unwrap();
        let err = read_from(Cursor::new(bytes), Path::new("big.tif"), 11).unwrap_err();
        assert!(err.to_string().contains("= 12 cells"), "{err}");
        assert!(matches!(err, TerrainError::TooLarge { limit: 11, .. }));
    }

    #[test]
    fn geokey_lookup_reads_inline_and_ascii_values() {
        let keys = GeoKeys {
            directory: vec![1, 1, 0, 2, 1024, 0, 1, 1, 3073, 34737, 6, 0],
            doubles: vec![],
            ascii: "UTM 1|".to_string(),
        };
        assert_eq!(geokey(&keys, 1024), Some(KeyValue::Short(1)));
        assert_eq!(geokey(&keys, 3073), Some(KeyValue::Ascii("UTM 1".into())));
        assert_eq!(geokey(&keys, 2048), None);
    }
}
