//! Terrain speed targets (issue 2), run by `cargo bench --bench terrain`:
//! - load a 4096 x 4096 Float32 GeoTIFF and compute slope: under 1.5 s together;
//! - horizon maps for 4096 x 4096 cells x 32 sectors: under 60 s.
//!
//! The grid is the seeded synthetic terrain written to target/ first (not timed).
//! Also reports the sweep's speed-up over the naive ray march on a smaller grid, after
//! checking the two agree. Set SUNWARD_BENCH_SIZE to change the grid size.

use std::path::PathBuf;
use std::time::Instant;

use sunward::progress::Silent;
use sunward::terrain::io::{geotiff, read_dem, ReadOptions};
use sunward::terrain::synth::{synthesize, SynthParams};
use sunward::terrain::{horizon, slope};

fn main() {
    let size: usize = std::env::var("SUNWARD_BENCH_SIZE")
        .ok()
        .and_then(|s| s.parse().ok())
        .unwrap_or(4096);
    let dir = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("target/bench-data");
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join(format!("synth{size}.tif"));
    if !path.exists() {
        let t = Instant::now();
        let dem = synthesize(&SynthParams {
            size,
            cell_m: 1.0,
            seed: 4,
            ..Default::default()
        })
        .unwrap();
        let mut f = std::io::BufWriter::new(std::fs::File::create(&path).unwrap());
        geotiff::write(&mut f, &dem.georef, size, size, &[dem.data()]).unwrap();
        eprintln!(
            "made {} in {:.1} s",
            path.display(),
            t.elapsed().as_secs_f64()
        );
    }
    println!("machine: {} threads (rayon)", rayon::current_num_threads());

    let mut best = f64::INFINITY;
    let mut dem = None;
    for _ in 0..3 {
        let t = Instant::now();
        let d = read_dem(&path, &ReadOptions::default()).unwrap();
        let s = slope::slope_map(&d);
        std::hint::black_box(&s);
        best = best.min(t.elapsed().as_secs_f64());
        dem = Some(d);
    }
    let dem = dem.unwrap();
    println!(
        "load + slope {size}x{size}: {best:.3} s (target 1.5 s): ratio target/measured {:.2}",
        1.5 / best
    );

    let t = Instant::now();
    let map = horizon::horizon_map(&dem, 32, &Silent).unwrap();
    let secs = t.elapsed().as_secs_f64();
    std::hint::black_box(&map);
    let ns = secs * 1e9 / (dem.len() as f64 * 32.0);
    println!(
        "horizon {size}x{size} x 32 sectors: {secs:.2} s (target 60 s), {ns:.1} ns per cell-sector"
    );
    drop(map);

    // Sweep vs naive march on a smaller grid (the naive method is O(cells x range)).
    let small = synthesize(&SynthParams {
        size: 512,
        cell_m: 1.0,
        seed: 4,
        ..Default::default()
    })
    .unwrap();
    let t = Instant::now();
    let fast = horizon::horizon_map(&small, 32, &Silent).unwrap();
    let t_fast = t.elapsed().as_secs_f64();
    let t = Instant::now();
    let slow = horizon::horizon_naive(&small, 32).unwrap();
    let t_slow = t.elapsed().as_secs_f64();
    let mean_diff: f64 = (0..32)
        .flat_map(|k| {
            fast.sector(k)
                .iter()
                .zip(slow.sector(k))
                .map(|(a, b)| (a - b).abs() as f64)
        })
        .sum::<f64>()
        / (32.0 * small.len() as f64);
    println!(
        "horizon 512x512 x 32: sweep {t_fast:.3} s, naive march {t_slow:.2} s: speed-up {:.0}x (mean difference {:.3} deg)",
        t_slow / t_fast,
        mean_diff.to_degrees()
    );
}
