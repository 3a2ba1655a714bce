//! Any text given to the mission-file checker: a mission or a list of problems, each
//! placed inside the text, never a panic.
#![no_main]

use std::path::Path;

use libfuzzer_sys::fuzz_target;
use sunward::mission::check;

fuzz_target!(|data: &[u8]| {
    let Ok(text) = std::str::from_utf8(data) else {
        return;
    };
    // Every input file "exists", so the resolver goes as far as it can.
    let exists = |_: &Path| true;
    let lines = text.lines().count() + 1;
    if let Err(problems) = check(text, Path::new("/missions"), &exists) {
        assert!(!problems.is_empty(), "refused without a problem");
        for p in &problems {
            if let Some(at) = p.at {
                assert!(
                    at.line >= 1 && at.line <= lines,
                    "{p} placed beyond the text"
                );
            }
            assert!(!p.render("fuzz.toml").is_empty());
        }
    }
});
