//! A plain progress line on standard error, redrawn in place on a terminal; silent when
//! standard error is not a terminal (logs and pipes stay clean).

use std::io::{IsTerminal, Write};
use std::sync::Mutex;
use std::time::Instant;

use sunward::progress::Progress;

struct State {
    label: String,
    total: u64,
    started: Instant,
}

/// Progress drawn on stderr.
pub struct Bar {
    tty: bool,
    state: Mutex<Option<State>>,
}

impl Bar {
    pub fn new() -> Bar {
        Bar {
            tty: std::io::stderr().is_terminal(),
            state: Mutex::new(None),
        }
    }
}

impl Progress for Bar {
    fn start(&self, label: &str, total: u64) {
        if !self.tty {
            return;
        }
        *self.state.lock().unwrap() = Some(State {
            label: label.to_string(),
            total,
            started: Instant::now(),
        });
    }

    fn update(&self, done: u64) {
        if !self.tty {
            return;
        }
        if let Some(s) = self.state.lock().unwrap().as_ref() {
            let secs = s.started.elapsed().as_secs_f64();
            let eta = if done > 0 {
                secs * (s.total.saturating_sub(done)) as f64 / done as f64
            } else {
                0.0
            };
            let pct = 100.0 * done as f64 / s.total.max(1) as f64;
            let mut err = std::io::stderr().lock();
            let _ = write!(
                err,
                "\r{}: {done}/{} ({pct:.0} %), {eta:.0} s left   ",
                s.label, s.total
            );
            let _ = err.flush();
        }
    }

    fn finish(&self) {
        if let Some(s) = self.state.lock().unwrap().take() {
            let secs = s.started.elapsed().as_secs_f64();
            eprintln!("\r{}: done in {secs:.1} s{}", s.label, " ".repeat(24));
        }
    }
}
