//! `sunward sweep`, `sunward merge` and `sunward size`: trade studies on a mission file.

use std::path::{Path, PathBuf};

use clap::{Args, ValueEnum};

use sunward::report::atomic::write_atomic;
use sunward::report::json::{cautions_for_sky, CAUTIONS};
use sunward::report::{heatmap, plot, sweep as csv};
use sunward::study::size::{size, SizeError, What};
use sunward::study::sweep::{shard_indices, Study};
use sunward::study::vary::{grid_len, Vary};
use sunward::Error;

use super::progress::Bar;
use super::run::{load_mission, weather_text};

#[derive(Debug, Args)]
pub struct SweepArgs {
    /// The mission file (TOML; `sunward check` validates it).
    mission: PathBuf,
    /// A key and its values, KEY=A:B:STEP (repeat; every combination is a case).
    #[arg(long, value_name = "KEY=A:B:STEP")]
    vary: Vec<String>,
    /// Battery capacities, Wh: the same as --vary battery.capacity_wh=A:B:STEP.
    #[arg(long, value_name = "A:B:STEP")]
    battery_wh: Option<String>,
    /// Duty of every payload load (every load not in policy.survival_loads): the same as
    /// --vary payload.duty=A:B:STEP.
    #[arg(long, value_name = "A:B:STEP")]
    duty: Option<String>,
    /// Season start dates, YYYY-MM-DD:YYYY-MM-DD:DAYS: the same as
    /// --vary seasons.start_date=A:B:STEP.
    #[arg(long, value_name = "A:B:DAYS")]
    dates: Option<String>,
    /// Run only the seasons whose name contains this text (repeat for several).
    #[arg(long, value_name = "NAME")]
    season: Vec<String>,
    /// Folder for sweep.csv, sweep.json and the plots (created if missing).
    #[arg(long, value_name = "DIR", default_value = "sunward-sweep")]
    out: PathBuf,
    /// Run only shard K of N (K from 1 to N): every N-th case from case K - 1.
    #[arg(long, value_name = "K/N")]
    shard: Option<String>,
    /// No progress display.
    #[arg(long, short = 'q')]
    quiet: bool,
}

#[derive(Debug, Args)]
pub struct MergeArgs {
    /// The output folders of the shards of one sweep.
    #[arg(required = true)]
    dirs: Vec<PathBuf>,
    /// Folder for the joined sweep.csv, sweep.json and plots.
    #[arg(long, value_name = "DIR", default_value = "sunward-sweep")]
    out: PathBuf,
}

#[derive(Debug, Clone, Copy, ValueEnum)]
enum SizeWhat {
    Battery,
    Panels,
}

#[derive(Debug, Args)]
pub struct SizeArgs {
    /// The mission file (TOML; `sunward check` validates it).
    mission: PathBuf,
    /// What to size: the battery capacity or the panel area.
    #[arg(long, value_enum, default_value = "battery")]
    what: SizeWhat,
    /// Relative tolerance of the bisection (0.01 = 1 %).
    #[arg(long, value_name = "FRACTION", default_value_t = 0.01)]
    tolerance: f64,
    /// Size for the seasons whose name contains this text only (repeat for several).
    #[arg(long, value_name = "NAME")]
    season: Vec<String>,
    /// Print the result as JSON.
    #[arg(long)]
    json: bool,
    /// No progress display.
    #[arg(long, short = 'q')]
    quiet: bool,
}

fn read_text(path: &Path) -> Result<String, Error> {
    std::fs::read_to_string(path).map_err(|source| Error::Input {
        path: path.to_path_buf(),
        source,
    })
}

fn is_file(p: &Path) -> bool {
    p.is_file()
}

/// How a study looks up the mission's input files.
static EXISTS: fn(&Path) -> bool = is_file;

/// The study of a mission file (its terrain, horizon map and weather file read once),
/// with the file's text.
fn open_study<'a>(
    mission: &Path,
    base: &'a Path,
    m: &sunward::mission::Mission,
    season: &[String],
    progress: &dyn sunward::progress::Progress,
) -> Result<(Study<'a>, String), Error> {
    let text = read_text(mission)?;
    let weather = weather_text(m)?;
    let study = Study::new(&text, base, &EXISTS, season, weather.as_deref(), progress)?;
    Ok((study, text))
}

/// FNV-1a, 64 bits (Fowler, Noll and Vo): a fingerprint of the mission text, so that
/// shards of different missions are not merged.
fn fingerprint(text: &str) -> String {
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    for b in text.bytes() {
        h ^= u64::from(b);
        h = h.wrapping_mul(0x0000_0100_0000_01b3);
    }
    format!("{h:016x}")
}

fn parse_shard(s: &str) -> Result<(usize, usize), Error> {
    let bad = || {
        Error::Usage(format!(
            "--shard {s}: expected K/N with 1 ≤ K ≤ N, e.g. 3/8. Fix: number the shards from 1"
        ))
    };
    let (k, n) = s.split_once('/').ok_or_else(bad)?;
    let (k, n): (usize, usize) = (
        k.trim().parse().map_err(|_| bad())?,
        n.trim().parse().map_err(|_| bad())?,
    );
    if k == 0 || k > n {
        return Err(bad());
    }
    Ok((k, n))
}

/// sweep.json: what the sweep was (the same for an unsharded run and merged shards).
#[allow(clippy::too_many_arguments)]
fn meta(
    site: &str,
    mission_name: &str,
    fp: &str,
    specs: &[String],
    seasons: &[String],
    total: usize,
    shard: Option<(usize, usize)>,
    rows: usize,
    feasible: usize,
    cautions: serde_json::Value,
) -> String {
    let doc = serde_json::json!({
        "schema_version": 1,
        "mission": mission_name,
        "site": site,
        "mission_fingerprint_fnv64": fp,
        "vary": specs,
        "season_filter": seasons,
        "total_cases": total,
        "shard": shard.map(|(k, n)| format!("{k}/{n}")),
        "cases_in_file": rows,
        "feasible_cases": feasible,
        "cautions": cautions,
    });
    serde_json::to_string_pretty(&doc).expect("plain data serialises") + "\n"
}

fn write(path: &Path, bytes: &[u8]) -> Result<(), Error> {
    write_atomic(path, |w| w.write_all(bytes))
}

/// The plot of a whole sweep: a heatmap over two or more keys, a line over one.
fn plots(out: &Path, csv_text: &str, title: &str) -> Result<Vec<String>, Error> {
    let parsed = csv::parse(csv_text).map_err(|e| Error::Usage(format!("sweep.csv: {e}")))?;
    let perr = |e: plot::PlotError| Error::Usage(format!("plot: {e}"));
    let mut names = Vec::new();
    if let Some(h) = csv::heatmap(&parsed, title) {
        write(
            &out.join("sweep-heatmap.png"),
            &heatmap::render_png(&h).map_err(perr)?,
        )?;
        write(
            &out.join("sweep-heatmap.svg"),
            heatmap::render_svg(&h).map_err(perr)?.as_bytes(),
        )?;
        names.push("sweep-heatmap.png/svg".to_string());
    } else if let Some(c) = csv::line(&parsed, title) {
        write(
            &out.join("sweep-line.png"),
            &plot::render_png(&c).map_err(perr)?,
        )?;
        write(
            &out.join("sweep-line.svg"),
            plot::render_svg(&c).map_err(perr)?.as_bytes(),
        )?;
        names.push("sweep-line.png/svg".to_string());
    }
    Ok(names)
}

pub fn run_sweep(a: SweepArgs) -> Result<(), Error> {
    let mission = a.mission.clone();
    sweep_inner(a).map_err(|e| e.in_mission(&mission))
}

fn sweep_inner(mut a: SweepArgs) -> Result<(), Error> {
    let shorthands = [
        (a.battery_wh.take(), "battery.capacity_wh"),
        (a.duty.take(), sunward::study::vary::PAYLOAD_DUTY_KEY),
        (a.dates.take(), sunward::study::vary::START_DATE_KEY),
    ];
    for (range, key) in shorthands.into_iter().rev() {
        if let Some(r) = range {
            a.vary.insert(0, format!("{key}={r}"));
        }
    }
    if a.vary.is_empty() {
        return Err(Error::Usage(
            "nothing to vary. Fix: give --vary KEY=A:B:STEP (or --battery-wh, --duty, --dates)"
                .into(),
        ));
    }
    let varies: Vec<Vary> = a
        .vary
        .iter()
        .map(|s| Vary::parse(s).map_err(|e| Error::Usage(e.to_string())))
        .collect::<Result<_, _>>()?;
    for (i, v) in varies.iter().enumerate() {
        if varies[..i].iter().any(|w| w.key == v.key) {
            return Err(Error::Usage(format!(
                "--vary {}: the key is varied twice. Fix: give each key once",
                v.spec
            )));
        }
    }
    let total = grid_len(&varies);
    if total > 10_000_000 {
        return Err(Error::Usage(format!(
            "{total} cases: too many for one sweep. Fix: use coarser steps or fewer keys"
        )));
    }
    let shard = a.shard.as_deref().map(parse_shard).transpose()?;
    let m = load_mission(&a.mission)?;
    std::fs::create_dir_all(&a.out).map_err(|source| Error::Output {
        path: a.out.clone(),
        source,
    })?;
    super::check_output(&a.out.join("sweep.csv"), &[&a.mission])?;
    let base = a.mission.parent().unwrap_or(Path::new("")).to_path_buf();
    let silent = sunward::progress::Silent;
    let bar = Bar::new();
    let progress: &dyn sunward::progress::Progress = if a.quiet { &silent } else { &bar };
    let (study, text) = open_study(&a.mission, &base, &m, &a.season, progress)?;
    // Check each key's ends alone first, so a bad range fails before any case runs.
    for v in &varies {
        for end in [v.values[0], v.values[v.values.len() - 1]] {
            study
                .mission(std::slice::from_ref(v), &[end])
                .map_err(|e| Error::Usage(format!("--vary {}: {e}", v.spec)))?;
        }
    }
    let indices = match shard {
        Some((k, n)) => shard_indices(total, k, n),
        None => (0..total).collect(),
    };
    if !a.quiet {
        eprintln!(
            "{}: {} case(s){}",
            m.site.name,
            indices.len(),
            shard.map_or(String::new(), |(k, n)| format!(
                " (shard {k}/{n} of {total})"
            ))
        );
    }
    let cases = study.run(&varies, &indices, progress);
    let keys: Vec<&str> = varies.iter().map(|v| v.key.as_str()).collect();
    let csv_text = csv::sweep_csv(&keys, &cases);
    write(&a.out.join("sweep.csv"), csv_text.as_bytes())?;
    let feasible = cases.iter().filter(|c| c.outcome.feasible).count();
    let name = a
        .mission
        .file_name()
        .map_or(String::new(), |f| f.to_string_lossy().into_owned());
    let json = meta(
        &m.site.name,
        &name,
        &fingerprint(&text),
        &a.vary,
        &a.season,
        total,
        shard,
        cases.len(),
        feasible,
        serde_json::json!(cautions_for_sky(&m.weather.sky)),
    );
    write(&a.out.join("sweep.json"), json.as_bytes())?;
    let mut outputs = vec!["sweep.csv".to_string(), "sweep.json".to_string()];
    if shard.is_none() {
        outputs.extend(plots(&a.out, &csv_text, &m.site.name)?);
    }
    crate::say!(
        "{}: {feasible} of {} case(s) feasible in every season{}",
        m.site.name,
        cases.len(),
        shard.map_or(String::new(), |(k, n)| format!(
            " (shard {k}/{n}; join the shards with `sunward merge`)"
        ))
    );
    crate::say!("outputs in {}: {}", a.out.display(), outputs.join(", "));
    crate::say!("(a planning aid: confirm by field tests and keep margins; see README, Model limits and cautions)");
    Ok(())
}

pub fn run_merge(a: MergeArgs) -> Result<(), Error> {
    let mut parts = Vec::new();
    let mut first: Option<(PathBuf, serde_json::Value)> = None;
    for d in &a.dirs {
        let jpath = d.join("sweep.json");
        let j: serde_json::Value = serde_json::from_str(&read_text(&jpath)?).map_err(|e| {
            Error::Usage(format!(
                "{}: not a sweep record: {e}. Fix: give the folders `sunward sweep --shard` wrote",
                jpath.display()
            ))
        })?;
        let same = [
            "mission_fingerprint_fnv64",
            "vary",
            "season_filter",
            "total_cases",
        ];
        if let Some((p, f)) = &first {
            if let Some(k) = same.iter().find(|k| f[**k] != j[**k]) {
                return Err(Error::Usage(format!(
                    "{} and {}: their `{k}` differs: they are shards of different sweeps. Fix: merge the shards of one sweep only",
                    p.display(),
                    jpath.display()
                )));
            }
        } else {
            first = Some((jpath.clone(), j.clone()));
        }
        let cpath = d.join("sweep.csv");
        parts.push((cpath.display().to_string(), read_text(&cpath)?));
    }
    let (_, j) = first.expect("clap requires one folder");
    let total = j["total_cases"].as_u64().unwrap_or(0) as usize;
    let merged = csv::merge(&parts, total)
        .map_err(|e| Error::Usage(format!("merge: {e}. Fix: give every shard's folder once")))?;
    std::fs::create_dir_all(&a.out).map_err(|source| Error::Output {
        path: a.out.clone(),
        source,
    })?;
    let inputs: Vec<PathBuf> = a.dirs.iter().map(|d| d.join("sweep.csv")).collect();
    let refs: Vec<&Path> = inputs.iter().map(PathBuf::as_path).collect();
    super::check_output(&a.out.join("sweep.csv"), &refs)?;
    let feasible = csv::parse(&merged)
        .map_err(|e| Error::Usage(format!("merge: {e}")))?
        .rows
        .iter()
        .filter(|r| r.1)
        .count();
    let strings = |v: &serde_json::Value| -> Vec<String> {
        v.as_array()
            .map(|a| {
                a.iter()
                    .filter_map(|x| x.as_str().map(String::from))
                    .collect()
            })
            .unwrap_or_default()
    };
    let json = meta(
        j["site"].as_str().unwrap_or(""),
        j["mission"].as_str().unwrap_or(""),
        j["mission_fingerprint_fnv64"].as_str().unwrap_or(""),
        &strings(&j["vary"]),
        &strings(&j["season_filter"]),
        total,
        None,
        total,
        feasible,
        // The shards' own cautions (they name the mission's sky).
        j.get("cautions")
            .cloned()
            .unwrap_or_else(|| serde_json::json!(CAUTIONS)),
    );
    write(&a.out.join("sweep.csv"), merged.as_bytes())?;
    write(&a.out.join("sweep.json"), json.as_bytes())?;
    let title = j["site"].as_str().unwrap_or("sweep").to_string();
    let mut outputs = vec!["sweep.csv".to_string(), "sweep.json".to_string()];
    outputs.extend(plots(&a.out, &merged, &title)?);
    crate::say!(
        "{} shard(s) joined: {feasible} of {total} case(s) feasible",
        a.dirs.len()
    );
    crate::say!("outputs in {}: {}", a.out.display(), outputs.join(", "));
    Ok(())
}

/// Four significant digits, for sizes found to a tolerance of about 1 %.
fn round_sig(v: f64) -> String {
    if v == 0.0 || !v.is_finite() {
        return format!("{v}");
    }
    let decimals = (3 - v.abs().log10().floor() as i32).max(0) as usize;
    format!("{v:.decimals$}")
}

/// The `size --json` object when no size passes: the keys of a found size, with `value`
/// null, the largest size tried as `failing_below` (it failed), and the message as `error`.
/// None for the errors that are bad input rather than a verdict.
fn no_size_json(
    e: &SizeError,
    what: What,
    cautions: [&'static str; 4],
) -> Option<serde_json::Value> {
    let (mission_value, failing_below, season, reason, simulations) = match e {
        SizeError::NoneUpTo {
            max,
            season,
            reason,
            mission_value,
            evaluations,
            ..
        } => (
            *mission_value,
            Some(*max),
            Some(season.as_str()),
            reason.as_str(),
            *evaluations,
        ),
        SizeError::Unplannable {
            reason,
            mission_value,
        } => (*mission_value, None, None, reason.as_str(), 0),
        SizeError::Case(_) | SizeError::Tolerance(_) => return None,
    };
    Some(serde_json::json!({
        "key": what.key(),
        "unit": what.unit(),
        "value": null,
        "mission_value": mission_value,
        "failing_below": failing_below,
        "tolerance": null,
        "binding_season": null,
        "binding_time": null,
        "min_soc": null,
        "margin": null,
        "failing_season": season,
        "failing_reason": reason,
        "simulations": simulations,
        "cautions": cautions,
        "error": e.to_string(),
    }))
}

pub fn run_size(a: SizeArgs) -> Result<(), Error> {
    let mission = a.mission.clone();
    size_inner(a).map_err(|e| e.in_mission(&mission))
}

fn size_inner(a: SizeArgs) -> Result<(), Error> {
    let m = load_mission(&a.mission)?;
    let base = a.mission.parent().unwrap_or(Path::new("")).to_path_buf();
    let silent = sunward::progress::Silent;
    let bar = Bar::new();
    let progress: &dyn sunward::progress::Progress = if a.quiet { &silent } else { &bar };
    let (study, _) = open_study(&a.mission, &base, &m, &a.season, progress)?;
    let what = match a.what {
        SizeWhat::Battery => What::Battery,
        SizeWhat::Panels => What::Panels,
    };
    let unit = what.unit();
    match size(&study, what, a.tolerance, progress) {
        Ok(s) => {
            if a.json {
                let doc = serde_json::json!({
                    "key": what.key(),
                    "unit": unit,
                    "value": s.value,
                    "mission_value": s.mission_value,
                    "failing_below": s.failing_below,
                    "tolerance": s.tolerance,
                    "binding_season": s.at_value.binding_season,
                    "binding_time": s.at_value.binding_time,
                    "min_soc": s.at_value.min_soc,
                    "margin": s.at_value.margin,
                    "failing_season": s.at_failing.as_ref().map(|o| o.binding_season.clone()),
                    "failing_reason": s.at_failing.as_ref().map(|o| o.binding_reason.clone()),
                    "simulations": s.evaluations,
                    "cautions": cautions_for_sky(&m.weather.sky),
                    "error": null,
                });
                crate::say!(
                    "{}",
                    serde_json::to_string_pretty(&doc).expect("plain data")
                );
                return Ok(());
            }
            crate::say!(
                "{}: smallest {} that passes every season: {} {unit} (the mission has {} {unit})",
                m.site.name,
                what.key(),
                round_sig(s.value),
                round_sig(s.mission_value)
            );
            match (&s.failing_below, &s.at_failing) {
                (Some(lo), Some(o)) => crate::say!(
                    "  {} {unit} fails ({:.2} % below): {}: {}",
                    round_sig(*lo),
                    100.0 * (1.0 - lo / s.value),
                    o.binding_season,
                    o.binding_reason
                ),
                _ => crate::say!("  (the smallest size searched passes: the size does not bind)"),
            }
            crate::say!(
                "  binding season: {}, lowest state of charge {:.1} % at {} (margin {:+.3}); {} simulations",
                s.at_value.binding_season,
                100.0 * s.at_value.min_soc,
                s.at_value.binding_time,
                s.at_value.margin,
                s.evaluations
            );
            crate::say!("(a planning aid: add your own margin and confirm by field tests; see README, Model limits and cautions)");
            Ok(())
        }
        Err(e) => {
            // No size passes (exit 1, a verdict) or the input is bad (exit 2).
            let Some(doc) = no_size_json(&e, what, cautions_for_sky(&m.weather.sky)) else {
                return Err(Error::Usage(e.to_string()));
            };
            if a.json {
                crate::say!(
                    "{}",
                    serde_json::to_string_pretty(&doc).expect("plain data")
                );
            } else {
                crate::say!("{}: {e}", m.site.name);
            }
            std::process::exit(1);
        }
    }
}
