//! Any bytes given to the PNG heightmap reader: a grid or a clear error, never a panic.
#![no_main]

use std::io::Cursor;
use std::path::Path;

use libfuzzer_sys::fuzz_target;

#[path = "common.rs"]
mod common;
use sunward::terrain::io::{png, PngScale};

const MAX_CELLS: u64 = 1 << 20;

fuzz_target!(|data: &[u8]| {
    let scale = PngScale {
        cell_m: 2.0,
        z_scale_m: 0.1,
        z_offset_m: -100.0,
        nodata_raw: Some(0),
    };
    let read = png::read_from(Cursor::new(data), Path::new("fuzz.png"), &scale, MAX_CELLS);
    if let Ok(dem) = read {
        common::exercise(&dem, MAX_CELLS);
    }
});
