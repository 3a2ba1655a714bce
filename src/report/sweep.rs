//! sweep.csv: one row per case, and the joining of shards' rows into the whole sweep's.
//!
//! # Columns
//! `case` (index in the full grid, from 0), one column per varied key (headed by the
//! key, the value as given), then `feasible` (`true`/`false`), `seasons_feasible`,
//! `seasons`, `min_soc` (fraction, 6 decimals), `hours_below_reserve` (h, 3 decimals,
//! the worst season's), `margin` (fraction, 6 decimals, the smallest), `binding_season`,
//! `binding_time` (UTC, RFC 3339: the binding season's lowest state of charge) and
//! `binding_reason`. Empty cells: no value (a case that could not be set up). Text cells
//! with a comma, a quote or a line break are quoted (RFC 4180). Rows are in case order.
//!
//! Shards: the rows of shard runs, joined by case index, give the whole sweep's file
//! byte for byte ([`merge`]).

use crate::report::heatmap::{Cell, Heatmap};
use crate::report::plot::{Band, LineChart, Series, Side, XKind, YAxis};
use crate::study::sweep::Case;

/// The columns after the keys.
pub const OUTCOME_COLUMNS: &str = "feasible,seasons_feasible,seasons,min_soc,hours_below_reserve,margin,binding_season,binding_time,binding_reason";

fn quote(s: &str) -> String {
    if s.contains([',', '"', '\n', '\r']) {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_string()
    }
}

fn num(v: f64, decimals: usize) -> String {
    if v.is_finite() {
        format!("{v:.decimals$}")
    } else {
        String::new()
    }
}

/// The header line (no line break).
pub fn header(keys: &[&str]) -> String {
    let mut h = String::from("case");
    for k in keys {
        h.push(',');
        h.push_str(&quote(k));
    }
    h.push(',');
    h.push_str(OUTCOME_COLUMNS);
    h
}

/// One case's line (no line break).
pub fn row(c: &Case) -> String {
    let o = &c.outcome;
    let mut r = c.index.to_string();
    for v in &c.values {
        r.push(',');
        r.push_str(&quote(&v.text()));
    }
    let cells = [
        o.feasible.to_string(),
        o.seasons_feasible.to_string(),
        o.seasons.to_string(),
        num(o.min_soc, 6),
        num(o.hours_below_reserve, 3),
        num(o.margin, 6),
        quote(&o.binding_season),
        o.binding_time.clone(),
        quote(&o.binding_reason),
    ];
    for c in cells {
        r.push(',');
        r.push_str(&c);
    }
    r
}

/// The whole file for `cases` (in the order given).
pub fn sweep_csv(keys: &[&str], cases: &[Case]) -> String {
    let mut out = header(keys);
    out.push('\n');
    for c in cases {
        out.push_str(&row(c));
        out.push('\n');
    }
    out
}

/// Splits one CSV line into fields (RFC 4180 quotes).
pub fn split_line(line: &str) -> Vec<String> {
    let mut out = vec![String::new()];
    let mut quoted = false;
    let mut chars = line.chars().peekable();
    while let Some(ch) = chars.next() {
        let cur = out.last_mut().expect("one field at least");
        match (ch, quoted) {
            ('"', true) if chars.peek() == Some(&'"') => {
                chars.next();
                cur.push('"');
            }
            ('"', true) => quoted = false,
            ('"', false) if cur.is_empty() => quoted = true,
            (',', false) => out.push(String::new()),
            (c, _) => cur.push(c),
        }
    }
    out
}

/// Joins shards' sweep.csv texts (`(name, text)`, any order) into the file of the whole
/// sweep of `total` cases: same header everywhere, every case exactly once.
pub fn merge(parts: &[(String, String)], total: usize) -> Result<String, String> {
    let Some((first_name, first)) = parts.first() else {
        return Err("no shard outputs given".into());
    };
    let head = first.lines().next().unwrap_or("").to_string();
    let mut rows: Vec<Option<(String, &str)>> = vec![None; total];
    for (name, text) in parts {
        let mut lines = text.lines();
        let h = lines.next().unwrap_or("");
        if h != head {
            return Err(format!(
                "{name}: its header differs from {first_name}'s: the shards are of different sweeps"
            ));
        }
        for (n, line) in lines.enumerate() {
            let idx = line
                .split(',')
                .next()
                .and_then(|s| s.parse::<usize>().ok())
                .ok_or_else(|| format!("{name}:{}: no case number", n + 2))?;
            if idx >= total {
                return Err(format!(
                    "{name}:{}: case {idx} is outside the sweep's {total} cases",
                    n + 2
                ));
            }
            if let Some((other, _)) = &rows[idx] {
                return Err(format!(
                    "case {idx} is in both {other} and {name}: the same shard was given twice?"
                ));
            }
            rows[idx] = Some((name.clone(), line));
        }
    }
    let missing: Vec<usize> = (0..total).filter(|&i| rows[i].is_none()).collect();
    if !missing.is_empty() {
        return Err(format!(
            "{} of {total} cases are missing (first: {}): a shard is missing or unfinished",
            missing.len(),
            missing[0]
        ));
    }
    let mut out = head;
    out.push('\n');
    for (_, line) in rows.into_iter().flatten() {
        out.push_str(line);
        out.push('\n');
    }
    Ok(out)
}

/// A parsed row: the key values as text, feasible, min SOC.
#[derive(Debug, Clone, PartialEq)]
pub struct Parsed {
    /// The keys.
    pub keys: Vec<String>,
    /// Per row: values, feasible, min SOC (NaN when empty).
    pub rows: Vec<(Vec<String>, bool, f64)>,
}

/// Reads a sweep.csv back (for plots of merged shards).
pub fn parse(text: &str) -> Result<Parsed, String> {
    let mut lines = text.lines();
    let head = split_line(lines.next().ok_or("empty file")?);
    let n_out = OUTCOME_COLUMNS.split(',').count();
    if head.len() < 1 + n_out || head[0] != "case" {
        return Err("not a sweep.csv header".into());
    }
    let nk = head.len() - 1 - n_out;
    let keys = head[1..1 + nk].to_vec();
    let mut rows = Vec::new();
    for (n, line) in lines.enumerate() {
        let f = split_line(line);
        if f.len() != head.len() {
            return Err(format!(
                "line {}: {} fields, the header has {}",
                n + 2,
                f.len(),
                head.len()
            ));
        }
        let feasible = f[1 + nk] == "true";
        let soc = f[1 + nk + 3].parse().unwrap_or(f64::NAN);
        rows.push((f[1..1 + nk].to_vec(), feasible, soc));
    }
    Ok(Parsed { keys, rows })
}

fn distinct(values: impl Iterator<Item = String>) -> Vec<String> {
    let mut out: Vec<String> = Vec::new();
    for v in values {
        if !out.contains(&v) {
            out.push(v);
        }
    }
    out
}

/// The heatmap over the first two keys; with more keys each cell is the worst case over
/// the others (lowest min SOC; feasible only if all are). None with fewer than two keys.
pub fn heatmap(p: &Parsed, title: &str) -> Option<Heatmap> {
    if p.keys.len() < 2 {
        return None;
    }
    let xs = distinct(p.rows.iter().map(|r| r.0[0].clone()));
    let ys = distinct(p.rows.iter().map(|r| r.0[1].clone()));
    let mut cells: Vec<Option<Cell>> = vec![None; xs.len() * ys.len()];
    for (vals, feasible, soc) in &p.rows {
        let col = xs.iter().position(|x| *x == vals[0])?;
        let row = ys.iter().position(|y| *y == vals[1])?;
        let slot = &mut cells[row * xs.len() + col];
        *slot = Some(match slot {
            None => Cell {
                col,
                row,
                min_soc: *soc,
                feasible: *feasible,
            },
            Some(c) => Cell {
                col,
                row,
                min_soc: if soc.is_nan() || c.min_soc.is_nan() {
                    f64::NAN
                } else {
                    c.min_soc.min(*soc)
                },
                feasible: c.feasible && *feasible,
            },
        });
    }
    let more = if p.keys.len() > 2 {
        " (worst case over the other keys)"
    } else {
        ""
    };
    Some(Heatmap {
        title: format!("{title}: lowest state of charge and feasibility{more}"),
        x_label: p.keys[0].clone(),
        y_label: p.keys[1].clone(),
        x_ticks: xs,
        y_ticks: ys,
        cells: cells.into_iter().flatten().collect(),
        size_px: (1100, 800),
    })
}

/// For a one-key sweep: min SOC against the key's value, infeasible values shaded; dates
/// on a time axis. None unless one key.
pub fn line(p: &Parsed, title: &str) -> Option<LineChart> {
    if p.keys.len() != 1 {
        return None;
    }
    // Dates go on a time axis (seconds since 1970 at midnight UTC of the date).
    let dates = p
        .rows
        .first()
        .is_some_and(|r| chrono::NaiveDate::parse_from_str(&r.0[0], "%Y-%m-%d").is_ok());
    let epoch = chrono::NaiveDate::from_ymd_opt(1970, 1, 1).expect("valid");
    let x = |s: &str| {
        s.parse::<f64>().ok().or_else(|| {
            chrono::NaiveDate::parse_from_str(s, "%Y-%m-%d")
                .ok()
                .map(|d| 86_400.0 * (d - epoch).num_days() as f64)
        })
    };
    let pts: Vec<(f64, f64, bool)> = p
        .rows
        .iter()
        .filter_map(|r| Some((x(&r.0[0])?, 100.0 * r.2, r.1)))
        .collect();
    if pts.is_empty() {
        return None;
    }
    let half = pts
        .windows(2)
        .map(|w| (w[1].0 - w[0].0).abs() / 2.0)
        .fold(f64::INFINITY, f64::min);
    let half = if half.is_finite() { half } else { 0.5 };
    let bands = pts
        .iter()
        .filter(|p| !p.2)
        .map(|p| Band {
            x_range: (p.0 - half, p.0 + half),
            label: Some("infeasible".into()),
        })
        .collect();
    Some(LineChart {
        title: format!("{title}: lowest state of charge"),
        x_label: if dates {
            format!("{} (month-day)", p.keys[0])
        } else {
            p.keys[0].clone()
        },
        x_kind: if dates {
            XKind::Time { utc_offset_s: 0 }
        } else {
            XKind::Numeric
        },
        y_left: YAxis {
            label: "min SOC (%)".into(),
            range: Some((0.0, 100.0)),
        },
        y_right: None,
        series: vec![Series {
            name: "min SOC".into(),
            points: pts.iter().map(|p| (p.0, p.1)).collect(),
            side: Side::Left,
            color: None,
        }],
        bands,
        size_px: (1100, 700),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn quoted_fields_split_back() {
        let f = split_line("3,\"a, b\",\"say \"\"hi\"\"\",,x");
        assert_eq!(f, ["3", "a, b", "say \"hi\"", "", "x"]);
        assert_eq!(quote("a,b"), "\"a,b\"");
        assert_eq!(quote("plain"), "plain");
    }

    #[test]
    fn merge_checks_headers_duplicates_and_gaps() {
        let h = "case,x,feasible";
        let a = (String::from("a"), format!("{h}\n0,1,true\n2,3,false\n"));
        let b = (String::from("b"), format!("{h}\n1,2,true\n"));
        let m = merge(&[b.clone(), a.clone()], 3).unwrap();
        assert_eq!(m, format!("{h}\n0,1,true\n1,2,true\n2,3,false\n"));
        assert!(merge(std::slice::from_ref(&a), 3)
            .unwrap_err()
            .contains("missing"));
        assert!(merge(&[a.clone(), a.clone(), b.clone()], 3)
            .unwrap_err()
            .contains("in both"));
        let c = (String::from("c"), "case,y,feasible\n1,2,true\n".to_string());
        assert!(merge(&[a, c], 3).unwrap_err().contains("header"));
    }
}
