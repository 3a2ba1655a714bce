//! Sweep speed: a 1,000-case sweep of a 7-day mission (the Vardholm survey mission with
//! `policy.deadline_days = 7`, its four seasons, 40 battery capacities x 25 panel areas),
//! the route planned once, timed from the study's setup (terrain read, horizon map) to
//! the last row. Target: under 20 s on the 2-core reference machine.

use std::path::Path;
use std::time::Instant;

use sunward::study::sweep::Study;
use sunward::study::vary::{grid_len, Vary};

fn main() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let text = std::fs::read_to_string(root.join("missions/vardholm_survey.toml"))
        .unwrap()
        .replace("deadline_days = 6.0", "deadline_days = 7.0");
    assert!(
        text.contains("deadline_days = 7.0"),
        "the demo mission changed"
    );
    let base = root.join("missions");
    let exists = |p: &Path| p.is_file();
    let varies = [
        Vary::parse("battery.capacity_wh=600:8400:200").unwrap(),
        Vary::parse("panels.area_m2=0.4:2.8:0.1").unwrap(),
    ];
    let n = grid_len(&varies);
    assert_eq!(n, 1000);
    let t = Instant::now();
    let study = Study::new(&text, &base, &exists, &[], None, &sunward::progress::Silent).unwrap();
    let indices: Vec<usize> = (0..n).collect();
    let cases = study.run(&varies, &indices, &sunward::progress::Silent);
    let secs = t.elapsed().as_secs_f64();
    let feasible = cases.iter().filter(|c| c.outcome.feasible).count();
    let seasons: usize = cases.iter().map(|c| c.outcome.seasons).sum();
    println!(
        "sweep: {n} cases ({seasons} season runs of up to 7 days, {feasible} cases feasible) in \
         {secs:.2} s (target 20 s) on {} threads, {:.1} ms per season run",
        rayon::current_num_threads(),
        1e3 * secs / seasons as f64
    );
}
