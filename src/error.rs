//! The top-level error: each stage's typed error, plus output failures.

use std::path::PathBuf;

use crate::plan::PlanError;
use crate::terrain::TerrainError;
use crate::vehicle::VehicleError;

/// Anything a sunward command can fail with.
#[derive(Debug, thiserror::Error)]
pub enum Error {
    /// Reading or analysing terrain.
    #[error(transparent)]
    Terrain(#[from] TerrainError),
    /// Planning a route.
    #[error(transparent)]
    Plan(#[from] PlanError),
    /// A rover description.
    #[error("{path}: {source}")]
    Rover {
        /// The rover file (or mission file).
        path: PathBuf,
        /// What is wrong in it.
        source: VehicleError,
    },
    /// A keep-out file.
    #[error("{path}: {source}")]
    KeepOut {
        /// The GeoJSON file.
        path: PathBuf,
        /// What is wrong in it.
        source: crate::terrain::mask::KeepOutError,
    },
    /// A job's arrays would exceed the memory budget.
    #[error(transparent)]
    Memory(#[from] crate::limits::OverBudget),
    /// Ordering unordered sites.
    #[error(transparent)]
    Sites(#[from] crate::plan::sites::SiteError),
    /// An input file could not be read.
    #[error("{path}: reading failed: {source}. Fix: {}", input_fix(.source))]
    Input {
        /// The file.
        path: PathBuf,
        /// The cause.
        source: std::io::Error,
    },
    /// Writing an output file.
    #[error("{path}: could not write the output: {source}. Fix: check that the folder exists and is writable")]
    Output {
        /// The output file.
        path: PathBuf,
        /// The cause.
        source: std::io::Error,
    },
    /// An output path would overwrite an input.
    #[error("{path}: refusing to overwrite an input file with an output. Fix: choose another output path")]
    OutputIsInput {
        /// The path.
        path: PathBuf,
    },
    /// A mission file with problems: each line is `FILE:LINE:COLUMN: key: problem. Fix: ...`.
    #[error("{file}: the mission file has {} problem(s):\n{}", .problems.len(), .problems.join("\n"))]
    Mission {
        /// The mission file.
        file: PathBuf,
        /// Every problem, rendered.
        problems: Vec<String>,
    },
    /// An input file's error, with the mission key that names the file and where.
    #[error("{source}\n  (the file given as {key} {})", at_text(.mission.as_deref(), .at))]
    Named {
        /// The input's own error (it names the file, the problem and the fix).
        source: Box<Error>,
        /// The mission key, e.g. `terrain.file`.
        key: &'static str,
        /// Where the key's value is written.
        at: Option<crate::vehicle::TextPos>,
        /// The mission file, when the caller knows it ([`Error::in_mission`]).
        mission: Option<PathBuf>,
    },
    /// A command-line value is out of range or inconsistent.
    #[error("{0}")]
    Usage(String),
}

impl Error {
    /// Process exit code: 2 for bad input or unusable outputs.
    pub fn exit_code(&self) -> i32 {
        2
    }

    /// The error with the mission file `path` named where it names a mission key
    /// ([`Error::Named`]); any other error unchanged.
    pub fn in_mission(mut self, path: &std::path::Path) -> Error {
        if let Error::Named { mission, .. } = &mut self {
            *mission = Some(path.to_path_buf());
        }
        self
    }
}

/// Where a mission key is written: "at FILE:LINE:COLUMN", or as much of it as is known.
fn at_text(mission: Option<&std::path::Path>, at: &Option<crate::vehicle::TextPos>) -> String {
    match (mission, at) {
        (Some(f), Some(p)) => format!("at {}:{}:{}", f.display(), p.line, p.column),
        (Some(f), None) => format!("in {}", f.display()),
        (None, Some(p)) => format!(
            "at line {}, column {} of the mission file",
            p.line, p.column
        ),
        (None, None) => "in the mission file".into(),
    }
}

/// The fix for an input that could not be read, by the cause.
fn input_fix(e: &std::io::Error) -> &'static str {
    match e.kind() {
        std::io::ErrorKind::InvalidData => {
            "save the file as UTF-8 text (a text editor's \"save with encoding\")"
        }
        std::io::ErrorKind::PermissionDenied => "make the file readable for this user",
        _ => "check the path",
    }
}
