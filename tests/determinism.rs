//! Determinism and atomic outputs, as a user sees them: the same inputs give
//! byte-identical outputs, and a run killed midway leaves the previous output in place.

use std::path::Path;
use std::process::Command as StdCommand;
use std::time::Duration;

use assert_cmd::cargo::CommandCargoExt;

fn files(dir: &Path) -> Vec<(String, Vec<u8>)> {
    let mut v: Vec<(String, Vec<u8>)> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.is_file())
        .map(|p| {
            (
                p.file_name().unwrap().to_string_lossy().into_owned(),
                std::fs::read(&p).unwrap(),
            )
        })
        .collect();
    v.sort();
    v
}

#[test]
fn demo_outputs_are_byte_identical_across_runs() {
    let a = tempfile::tempdir().unwrap();
    let b = tempfile::tempdir().unwrap();
    for d in [&a, &b] {
        let st = StdCommand::cargo_bin("sunward")
            .unwrap()
            .arg("demo")
            .arg("--out")
            .arg(d.path())
            .output()
            .unwrap();
        assert!(
            st.status.success(),
            "{}",
            String::from_utf8_lossy(&st.stderr)
        );
    }
    let (fa, fb) = (files(a.path()), files(b.path()));
    assert!(
        fa.len() >= 10,
        "{:?}",
        fa.iter().map(|f| &f.0).collect::<Vec<_>>()
    );
    for (x, y) in fa.iter().zip(&fb) {
        assert_eq!(x.0, y.0);
        assert!(x.1 == y.1, "{} differs between runs", x.0);
    }
}

/// A long run killed before it finishes must not touch the good file it would replace.
#[test]
fn a_killed_run_leaves_the_previous_output_in_place() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("terrain.tif");
    let ok = StdCommand::cargo_bin("sunward")
        .unwrap()
        .args(["terrain", "synth", "--size", "32", "-o"])
        .arg(&out)
        .output()
        .unwrap();
    assert!(ok.status.success());
    let good = std::fs::read(&out).unwrap();
    let mut child = StdCommand::cargo_bin("sunward")
        .unwrap()
        .args(["terrain", "synth", "--size", "8192", "-o"])
        .arg(&out)
        .stderr(std::process::Stdio::null())
        .spawn()
        .unwrap();
    std::thread::sleep(Duration::from_millis(400));
    let finished_early = child.try_wait().unwrap().is_some();
    child.kill().ok();
    child.wait().unwrap();
    assert!(
        !finished_early,
        "the long run finished before it could be killed; make it longer"
    );
    assert_eq!(
        std::fs::read(&out).unwrap(),
        good,
        "the killed run changed the previous output"
    );
}
