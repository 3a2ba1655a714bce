//! report.html in a real browser: Debian's Chromium renders it headless. The rendered
//! DOM (`--dump-dom`) holds the title and the verdict, every inline image decodes as a
//! PNG, and the screenshot is not blank. `.ci/run` installs Chromium and sets
//! SUNWARD_BROWSER_TEST=1, which turns a missing browser into a failure; elsewhere the
//! test says plainly that it did not run.

use std::path::{Path, PathBuf};
use std::process::Command as StdCommand;

use assert_cmd::cargo::CommandCargoExt;

fn browser() -> Option<PathBuf> {
    ["chromium", "chromium-browser"].iter().find_map(|b| {
        let ok = StdCommand::new(b)
            .arg("--version")
            .output()
            .is_ok_and(|o| o.status.success());
        ok.then(|| PathBuf::from(b))
    })
}

fn headless(browser: &Path, profile: &Path) -> StdCommand {
    let mut c = StdCommand::new(browser);
    c.args([
        "--headless",
        "--no-sandbox",
        "--disable-gpu",
        "--disable-quic",
        "--no-first-run",
        "--disable-background-networking",
        "--disable-component-update",
        "--disable-sync",
        "--window-size=1280,2000",
    ])
    .arg(format!("--user-data-dir={}", profile.display()));
    c
}

fn unbase64(s: &str) -> Vec<u8> {
    let val = |c: u8| match c {
        b'A'..=b'Z' => c - b'A',
        b'a'..=b'z' => c - b'a' + 26,
        b'0'..=b'9' => c - b'0' + 52,
        b'+' => 62,
        _ => 63,
    };
    let bytes: Vec<u8> = s.bytes().filter(|&c| c != b'=').collect();
    let mut out = Vec::new();
    for chunk in bytes.chunks(4) {
        let n = chunk
            .iter()
            .enumerate()
            .fold(0u32, |n, (i, &c)| n | (u32::from(val(c)) << (18 - 6 * i)));
        for i in 0..chunk.len().saturating_sub(1) {
            out.push((n >> (16 - 8 * i)) as u8);
        }
    }
    out
}

fn png_size(bytes: &[u8]) -> (u32, u32) {
    let r = png::Decoder::new(std::io::Cursor::new(bytes))
        .read_info()
        .expect("a PNG");
    (r.info().width, r.info().height)
}

#[test]
fn report_renders_in_chromium() {
    let required = std::env::var("SUNWARD_BROWSER_TEST").is_ok_and(|v| v == "1");
    let Some(chromium) = browser() else {
        assert!(
            !required,
            "SUNWARD_BROWSER_TEST=1 but Chromium is not installed"
        );
        eprintln!("NOT RUN: report_renders_in_chromium needs Debian's chromium (apt-get install chromium)");
        return;
    };
    let dir = tempfile::tempdir().unwrap();
    let mission = Path::new(env!("CARGO_MANIFEST_DIR")).join("missions/vardholm_survey.toml");
    let run = StdCommand::cargo_bin("sunward")
        .unwrap()
        .arg("run")
        .arg(&mission)
        .arg("--out")
        .arg(dir.path())
        .output()
        .unwrap();
    assert!(
        run.status.success(),
        "{}",
        String::from_utf8_lossy(&run.stderr)
    );
    let html = dir.path().join("report.html");
    let text = std::fs::read_to_string(&html).unwrap();
    let url = format!("file://{}", html.display());
    let profile = tempfile::tempdir().unwrap();
    let dom = headless(&chromium, profile.path())
        .arg("--dump-dom")
        .arg(&url)
        .output()
        .unwrap();
    let dom = String::from_utf8_lossy(&dom.stdout);
    assert!(
        dom.contains("sunward report: Vardholm plateau"),
        "title missing from the rendered DOM"
    );
    assert!(
        dom.contains("Infeasible: winter solstice."),
        "verdict missing from the rendered DOM"
    );
    let mut images = 0;
    for part in text.split("data:image/png;base64,").skip(1) {
        let b64 = part.split('"').next().unwrap();
        let (w, h) = png_size(&unbase64(b64));
        assert!(w > 100 && h > 100);
        images += 1;
    }
    assert_eq!(images, 6, "route map, four seasons and the comparison");
    let shot = dir.path().join("shot.png");
    let profile = tempfile::tempdir().unwrap();
    let st = headless(&chromium, profile.path())
        .arg(format!("--screenshot={}", shot.display()))
        .arg(&url)
        .output()
        .unwrap();
    assert!(st.status.success() && shot.is_file(), "no screenshot");
    let mut r = png::Decoder::new(std::io::BufReader::new(std::fs::File::open(&shot).unwrap()))
        .read_info()
        .unwrap();
    let mut buf = vec![0; r.output_buffer_size().unwrap()];
    r.next_frame(&mut buf).unwrap();
    let mean = buf.iter().map(|&b| b as f64).sum::<f64>() / buf.len() as f64;
    let var = buf.iter().map(|&b| (b as f64 - mean).powi(2)).sum::<f64>() / buf.len() as f64;
    assert!(var > 100.0, "the screenshot looks blank (variance {var})");
}
