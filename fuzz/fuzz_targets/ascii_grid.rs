//! Any text given to the ESRI ASCII grid parser, with and without a .prj beside it: a
//! grid or a clear error, never a panic.
#![no_main]

use std::path::Path;

use libfuzzer_sys::fuzz_target;

#[path = "common.rs"]
mod common;
use sunward::terrain::io::ascii;

const MAX_CELLS: u64 = 1 << 20;

fuzz_target!(|data: &[u8]| {
    // The reader takes text (the path API refuses a file that is not UTF-8); the first
    // line break splits off a .prj when the input holds a form feed.
    let Ok(text) = std::str::from_utf8(data) else {
        return;
    };
    let (grid, prj) = match text.split_once('\u{c}') {
        Some((prj, grid)) => (grid, Some(prj)),
        None => (text, None),
    };
    if let Ok(dem) = ascii::parse(grid, prj, Path::new("fuzz.asc"), MAX_CELLS) {
        common::exercise(&dem, MAX_CELLS);
    }
});
