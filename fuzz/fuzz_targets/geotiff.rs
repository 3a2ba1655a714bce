//! Any bytes given to the GeoTIFF reader: a grid or a clear error, never a panic, and
//! never more memory than the cell limit allows.
#![no_main]

use std::io::Cursor;
use std::path::Path;

use libfuzzer_sys::fuzz_target;

#[path = "common.rs"]
mod common;
use sunward::terrain::io::geotiff;

/// A small cell limit, so that a header declaring a huge grid is refused from the header.
const MAX_CELLS: u64 = 1 << 20;

fuzz_target!(|data: &[u8]| {
    if let Ok(dem) = geotiff::read_from(Cursor::new(data), Path::new("fuzz.tif"), MAX_CELLS) {
        common::exercise(&dem, MAX_CELLS);
    }
});
