//! Rainflow counting against the PyPI package `rainflow` 3.2.0 (output shipped in
//! tests/reference/battery/rainflow_cases.csv, script make_rainflow.py) and against
//! the ASTM E1049-85 worked example; ageing bookkeeping.

use std::collections::BTreeMap;
use std::path::Path;

use sunward::battery::ageing::{estimate, rainflow, AgeingParams};

fn rows(name: &str) -> Vec<Vec<String>> {
    let path = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/reference/battery")
        .join(name);
    std::fs::read_to_string(path)
        .expect("reference file present")
        .lines()
        .filter(|l| !l.starts_with('#'))
        .skip(1)
        .map(|l| l.split(',').map(str::to_string).collect())
        .collect()
}

/// Cycles as sorted (range, mean, count) triples, rounded to 1e-9.
fn key(cycles: impl Iterator<Item = (f64, f64, f64)>) -> Vec<(i64, i64, i64)> {
    let r = |x: f64| (x * 1e9).round() as i64;
    let mut v: Vec<_> = cycles.map(|(a, b, c)| (r(a), r(b), r(c))).collect();
    v.sort();
    v
}

/// Every case: the same multiset of (range, mean, count) as rainflow.extract_cycles.
#[test]
fn rainflow_matches_the_reference_library() {
    let mut histories: BTreeMap<String, Vec<f64>> = BTreeMap::new();
    for r in rows("rainflow_histories.csv") {
        histories
            .entry(r[0].clone())
            .or_default()
            .push(r[2].parse().unwrap());
    }
    let mut want: BTreeMap<String, Vec<(f64, f64, f64)>> = BTreeMap::new();
    for r in rows("rainflow_cases.csv") {
        let n = |i: usize| r[i].parse::<f64>().unwrap();
        want.entry(r[0].clone())
            .or_default()
            .push((n(1), n(2), n(3)));
    }
    assert_eq!(histories.len(), 4);
    for (name, h) in &histories {
        let got = key(rainflow(h).iter().map(|c| (c.range, c.mean, c.count)));
        assert_eq!(got, key(want[name].iter().copied()), "case {name}");
    }
}

/// ASTM E1049-85, section 5.4.4, the rainflow example (history -2, 1, -3, 5, -1, 3,
/// -4, 4, -2; from memory, and the same as the library's output above): ranges 3 (0.5
/// cycle), 4 (1.5), 6 (0.5), 8 (1.0), 9 (0.5).
#[test]
fn rainflow_reproduces_the_astm_example() {
    let mut by_range: BTreeMap<i64, f64> = BTreeMap::new();
    for c in rainflow(&[-2.0, 1.0, -3.0, 5.0, -1.0, 3.0, -4.0, 4.0, -2.0]) {
        *by_range.entry(c.range as i64).or_default() += c.count;
    }
    let want: BTreeMap<i64, f64> = [(3, 0.5), (4, 1.5), (6, 0.5), (8, 1.0), (9, 0.5)].into();
    assert_eq!(by_range, want);
}

/// With k = 1 the damage of full-depth cycles is cycles / N_full, and EFC is the
/// discharged charge over capacity (definitions).
#[test]
fn damage_and_equivalent_cycles_follow_their_definitions() {
    let history: Vec<f64> = (0..21)
        .map(|i| if i % 2 == 0 { 1.0 } else { 0.0 })
        .collect();
    let e = estimate(&AgeingParams::default(), &history, 10.0 * 40.0, 40.0).unwrap();
    assert_eq!(e.equivalent_full_cycles, 10.0);
    assert_eq!(e.max_dod, 1.0);
    // 20 half-cycle-equivalents of depth 1: 10 cycles over 3000.
    let counted: f64 = e.cycles.iter().map(|c| c.count).sum();
    assert!((counted - 10.0).abs() < 1e-12);
    assert!((e.damage - 10.0 / 3000.0).abs() < 1e-12);
    let bad = AgeingParams {
        cycles_at_full_dod: 0.0,
        ..AgeingParams::default()
    };
    assert!(estimate(&bad, &history, 1.0, 1.0)
        .unwrap_err()
        .to_string()
        .contains("cycles_at_full_dod"));
}
