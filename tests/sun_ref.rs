//! Shared reader of the reference CSV files in tests/reference/sun/ (included by the sun
//! test files with `#[path]`; as its own test target it holds no tests).
#![allow(dead_code)]

use std::collections::HashMap;

/// One row of a reference CSV, by column name.
pub type Row = HashMap<String, String>;

/// Rows of tests/reference/sun/`name`.
pub fn rows(name: &str) -> Vec<Row> {
    let path = format!("{}/tests/reference/sun/{name}", env!("CARGO_MANIFEST_DIR"));
    let text = std::fs::read_to_string(&path).unwrap_or_else(|e| panic!("{path}: {e}"));
    let mut lines = text.lines();
    let header: Vec<String> = lines
        .next()
        .unwrap()
        .split(',')
        .map(str::to_owned)
        .collect();
    lines
        .filter(|l| !l.trim().is_empty())
        .map(|l| {
            header
                .iter()
                .cloned()
                .zip(l.split(',').map(str::to_owned))
                .collect()
        })
        .collect()
}

/// A numeric column ("nan" reads as NaN).
pub fn num(row: &Row, key: &str) -> f64 {
    row[key]
        .parse()
        .unwrap_or_else(|_| panic!("{key}: {:?}", row[key]))
}

/// Relative-or-absolute closeness: |a − b| ≤ abs + rel·|b|.
pub fn near(a: f64, b: f64, abs: f64, rel: f64) -> bool {
    (a - b).abs() <= abs + rel * b.abs()
}
