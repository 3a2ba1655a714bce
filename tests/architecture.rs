//! The architecture as tests: the numeric core does no I/O, prints nothing, reads no
//! clock and never exits; the crate map in src/lib.rs names modules that exist.

use std::path::{Path, PathBuf};

/// Folders of the numeric core, with the sub-paths that are allowed to do I/O.
const CORE: &[&str] = &[
    "terrain",
    "plan",
    "vehicle",
    "sun",
    "battery",
    "mission",
    "study",
    "units.rs",
    "progress.rs",
];
const IO_ALLOWED: &[&str] = &["terrain/io", "mission/spec.rs"];
const FORBIDDEN: &[&str] = &[
    "std::fs",
    "File::",
    "println!",
    "eprintln!",
    "print!(",
    "process::exit",
    "Utc::now",
    "SystemTime::now",
    "Instant::now",
];

fn rust_files(dir: &Path, out: &mut Vec<PathBuf>) {
    if dir.is_file() {
        out.push(dir.to_path_buf());
        return;
    }
    let Ok(entries) = std::fs::read_dir(dir) else {
        return;
    };
    for e in entries.flatten() {
        let p = e.path();
        if p.is_dir() {
            rust_files(&p, out);
        } else if p.extension().is_some_and(|x| x == "rs") {
            out.push(p);
        }
    }
}

#[test]
fn numeric_core_does_no_io_and_reads_no_clock() {
    let src = Path::new(env!("CARGO_MANIFEST_DIR")).join("src");
    let mut files = Vec::new();
    for c in CORE {
        rust_files(&src.join(c), &mut files);
    }
    assert!(files.len() > 5, "core files not found");
    let mut bad = Vec::new();
    for f in files {
        let rel = f
            .strip_prefix(&src)
            .unwrap()
            .to_string_lossy()
            .replace('\\', "/");
        if IO_ALLOWED.iter().any(|a| rel.starts_with(a)) {
            continue;
        }
        let text = std::fs::read_to_string(&f).unwrap();
        // Unit tests may use files and printing; only the code before them counts.
        let code = text.split("#[cfg(test)]").next().unwrap_or("");
        for (i, line) in code.lines().enumerate() {
            let l = line.trim_start();
            if l.starts_with("//") {
                continue;
            }
            for pat in FORBIDDEN {
                if l.contains(pat) {
                    bad.push(format!("src/{rel}:{}: {pat}", i + 1));
                }
            }
        }
    }
    assert!(
        bad.is_empty(),
        "I/O, printing or clock in the numeric core:\n{}",
        bad.join("\n")
    );
}

#[test]
fn crate_map_names_existing_modules() {
    let src = Path::new(env!("CARGO_MANIFEST_DIR")).join("src");
    let lib = std::fs::read_to_string(src.join("lib.rs")).unwrap();
    let mut missing = Vec::new();
    let mut named = 0;
    for part in lib.split("[`").skip(1) {
        let Some(name) = part.split('`').next() else {
            continue;
        };
        if !name
            .chars()
            .all(|c| c.is_ascii_lowercase() || c == '_' || c == ':')
        {
            continue;
        }
        named += 1;
        let rel = name.replace("::", "/");
        if !src.join(format!("{rel}.rs")).exists() && !src.join(&rel).join("mod.rs").exists() {
            missing.push(name.to_string());
        }
    }
    assert!(named >= 8, "the crate map lists too few modules ({named})");
    assert!(
        missing.is_empty(),
        "src/lib.rs names modules that do not exist: {missing:?}"
    );
}
