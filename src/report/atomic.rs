//! The one way sunward writes an output file: into a temporary file in the same folder,
//! flushed and synced, then renamed over the target. A run that fails midway leaves the
//! previous file untouched (rename is atomic on POSIX file systems within one folder).
//! A command with a set of outputs (`run`, `demo`) stages the whole set first
//! ([`Staging`]) and moves it into place at the end, so that a failed or killed run
//! leaves the previous set whole rather than a mix of old and new files.

use std::fs::File;
use std::io::{BufWriter, Write};
use std::path::{Path, PathBuf};

use crate::error::Error;

fn temp_path(path: &Path) -> PathBuf {
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    path.with_file_name(format!(".{name}.sunward-{}.tmp", std::process::id()))
}

/// Creates `path` with the bytes `fill` produces, buffered, then flushed and synced.
fn write_synced(
    path: &Path,
    fill: impl FnOnce(&mut dyn Write) -> std::io::Result<()>,
) -> std::io::Result<()> {
    let file = File::create(path)?;
    let mut w = BufWriter::with_capacity(1 << 20, file);
    fill(&mut w)?;
    let file = w.into_inner().map_err(|e| e.into_error())?;
    file.sync_all()
}

/// Writes `path` atomically with the bytes `fill` produces.
pub fn write_atomic(
    path: &Path,
    fill: impl FnOnce(&mut dyn Write) -> std::io::Result<()>,
) -> Result<(), Error> {
    let tmp = temp_path(path);
    let fail = |source| Error::Output {
        path: path.to_path_buf(),
        source,
    };
    let result = write_synced(&tmp, fill).and_then(|()| std::fs::rename(&tmp, path));
    if result.is_err() {
        let _ = std::fs::remove_file(&tmp);
    }
    result.map_err(fail)
}

/// Checks, before long work starts, that `path` can be written: its folder exists and a
/// file can be created there.
pub fn check_writable(path: &Path) -> Result<(), Error> {
    let tmp = temp_path(path);
    File::create(&tmp)
        .and_then(|_| std::fs::remove_file(&tmp))
        .map_err(|source| Error::Output {
            path: path.to_path_buf(),
            source,
        })
}

/// The name of a run's staging folder inside the output folder starts with this.
pub const STAGING_PREFIX: &str = ".sunward-staging-";

/// One command's whole output set, staged before it replaces the previous one.
///
/// Every file is written, flushed and synced into a fresh folder inside the output
/// folder (`OUT/.sunward-staging-PID`). Only [`Staging::commit`] touches the output
/// folder's own files: one short burst of renames (the file named last, summary.json
/// for a run, moved after all the others), the removal of the previous set's files
/// that this set does not have, and the staging folder's removal. A failure, or a
/// `Staging` dropped without a commit, removes the staging folder and leaves the
/// previous outputs as they were; a killed process leaves only the hidden staging
/// folder, which the next command writing into the same folder removes.
#[derive(Debug)]
pub struct Staging {
    out: PathBuf,
    dir: PathBuf,
    names: Vec<String>,
}

impl Staging {
    /// A fresh staging folder inside `out` (which must exist).
    pub fn new(out: &Path) -> Result<Self, Error> {
        remove_abandoned(out);
        let dir = out.join(format!("{STAGING_PREFIX}{}", std::process::id()));
        let fail = |source| Error::Output {
            path: dir.clone(),
            source,
        };
        if dir.exists() {
            // Left by an earlier process that had this process's id.
            std::fs::remove_dir_all(&dir).map_err(fail)?;
        }
        std::fs::create_dir(&dir).map_err(fail)?;
        Ok(Staging {
            out: out.to_path_buf(),
            dir,
            names: Vec::new(),
        })
    }

    /// The output folder.
    pub fn out(&self) -> &Path {
        &self.out
    }

    /// Stages the file `name` (a plain file name) with the bytes `fill` produces; a
    /// second write of the same name replaces the first.
    pub fn write(
        &mut self,
        name: &str,
        fill: impl FnOnce(&mut dyn Write) -> std::io::Result<()>,
    ) -> Result<(), Error> {
        let target = self.out.join(name);
        let plain = Path::new(name).file_name().is_some_and(|n| n == name);
        if !plain {
            return Err(Error::Output {
                path: target,
                source: std::io::Error::other("an output name must be a plain file name"),
            });
        }
        let staged = self.dir.join(name);
        write_synced(&staged, fill).map_err(|source| Error::Output {
            path: target,
            source,
        })?;
        if !self.names.iter().any(|n| n == name) {
            self.names.push(name.to_string());
        }
        Ok(())
    }

    /// The names staged so far, in the order first written.
    pub fn names(&self) -> &[String] {
        &self.names
    }

    /// Moves the staged files into the output folder: every file but `last` first, then
    /// the removal of the files in the output folder for which `is_own` holds and that
    /// this set does not have (the previous set's leftovers; never a file in `inputs`),
    /// then `last`. Refused, before anything is moved, when a staged file would replace
    /// one of `inputs` or a folder.
    pub fn commit(
        self,
        last: &str,
        is_own: impl Fn(&str) -> bool,
        inputs: &[&Path],
    ) -> Result<(), Error> {
        let canon = |p: &Path| std::fs::canonicalize(p).ok();
        let inputs: Vec<PathBuf> = inputs.iter().filter_map(|p| canon(p)).collect();
        let is_input = |p: &Path| canon(p).is_some_and(|c| inputs.contains(&c));
        for name in &self.names {
            let target = self.out.join(name);
            if is_input(&target) {
                return Err(Error::OutputIsInput { path: target });
            }
            if target.is_dir() {
                return Err(Error::Output {
                    path: target,
                    source: std::io::Error::other("a folder of that name is in the way"),
                });
            }
        }
        let move_in = |name: &str| {
            let target = self.out.join(name);
            std::fs::rename(self.dir.join(name), &target).map_err(|source| Error::Output {
                path: target,
                source,
            })
        };
        for name in self.names.iter().filter(|n| *n != last) {
            move_in(name)?;
        }
        let stale: Vec<PathBuf> = std::fs::read_dir(&self.out)
            .map_err(|source| Error::Output {
                path: self.out.clone(),
                source,
            })?
            .flatten()
            .filter(|e| e.file_type().is_ok_and(|t| t.is_file()))
            .filter_map(|e| e.file_name().to_str().map(str::to_string))
            .filter(|n| is_own(n) && !self.names.contains(n))
            .map(|n| self.out.join(n))
            .filter(|p| !is_input(p))
            .collect();
        for p in stale {
            std::fs::remove_file(&p).map_err(|source| Error::Output { path: p, source })?;
        }
        if self.names.iter().any(|n| n == last) {
            move_in(last)?;
        }
        // The renames reach the disk with the folder's entry.
        if let Ok(d) = File::open(&self.out) {
            let _ = d.sync_all();
        }
        Ok(())
    }
}

impl Drop for Staging {
    fn drop(&mut self) {
        let _ = std::fs::remove_dir_all(&self.dir);
    }
}

/// Removes the staging folders that killed processes left in `out`: those whose process
/// no longer runs (known where /proc lists processes; elsewhere they are kept).
fn remove_abandoned(out: &Path) {
    if !Path::new("/proc/self").exists() {
        return;
    }
    let Ok(entries) = std::fs::read_dir(out) else {
        return;
    };
    let me = std::process::id().to_string();
    for e in entries.flatten() {
        let name = e.file_name();
        let Some(pid) = name.to_str().and_then(|n| n.strip_prefix(STAGING_PREFIX)) else {
            continue;
        };
        let is_pid = !pid.is_empty() && pid.bytes().all(|b| b.is_ascii_digit());
        if is_pid && pid != me && !Path::new("/proc").join(pid).exists() {
            let _ = std::fs::remove_dir_all(e.path());
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn failed_write_keeps_the_old_file() {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("out.txt");
        write_atomic(&p, |w| w.write_all(b"good")).unwrap();
        let r = write_atomic(&p, |w| {
            w.write_all(b"half")?;
            Err(std::io::Error::other("stopped"))
        });
        assert!(r.is_err());
        assert_eq!(std::fs::read(&p).unwrap(), b"good");
        assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 1);
    }

    fn read_all(dir: &Path) -> Vec<(String, Vec<u8>)> {
        let mut v: Vec<_> = std::fs::read_dir(dir)
            .unwrap()
            .flatten()
            .map(|e| {
                let p = e.path();
                let bytes = if p.is_file() {
                    std::fs::read(&p).unwrap()
                } else {
                    b"<dir>".to_vec()
                };
                (e.file_name().to_string_lossy().into_owned(), bytes)
            })
            .collect();
        v.sort();
        v
    }

    #[test]
    fn a_dropped_staging_leaves_the_folder_as_it_was() {
        let dir = tempfile::tempdir().unwrap();
        std::fs::write(dir.path().join("a.txt"), b"old a").unwrap();
        let before = read_all(dir.path());
        let mut s = Staging::new(dir.path()).unwrap();
        s.write("a.txt", |w| w.write_all(b"new a")).unwrap();
        s.write("b.txt", |w| w.write_all(b"new b")).unwrap();
        let r = s.write("c.txt", |_| Err(std::io::Error::other("stopped")));
        assert!(r.is_err());
        drop(s);
        assert_eq!(read_all(dir.path()), before);
    }

    #[test]
    fn a_commit_replaces_the_set_and_removes_only_own_leftovers() {
        let dir = tempfile::tempdir().unwrap();
        let d = dir.path();
        for (n, b) in [
            ("summary.json", "old"),
            ("old-own.txt", "old"),
            ("notes.txt", "mine"),
            ("input-own.txt", "input"),
        ] {
            std::fs::write(d.join(n), b).unwrap();
        }
        let mut s = Staging::new(d).unwrap();
        s.write("summary.json", |w| w.write_all(b"new")).unwrap();
        s.write("new-own.txt", |w| w.write_all(b"new")).unwrap();
        let input = d.join("input-own.txt");
        s.commit(
            "summary.json",
            |n| n.ends_with("-own.txt") || n == "summary.json",
            &[&input],
        )
        .unwrap();
        let names: Vec<String> = read_all(d).into_iter().map(|f| f.0).collect();
        assert_eq!(
            names,
            ["input-own.txt", "new-own.txt", "notes.txt", "summary.json"]
        );
        assert_eq!(std::fs::read(d.join("summary.json")).unwrap(), b"new");
    }

    #[test]
    fn a_commit_over_an_input_is_refused_before_anything_moves() {
        let dir = tempfile::tempdir().unwrap();
        let d = dir.path();
        std::fs::write(d.join("in.txt"), b"input").unwrap();
        std::fs::write(d.join("summary.json"), b"old").unwrap();
        let before = read_all(d);
        let mut s = Staging::new(d).unwrap();
        s.write("summary.json", |w| w.write_all(b"new")).unwrap();
        s.write("in.txt", |w| w.write_all(b"new")).unwrap();
        let input = d.join("in.txt");
        let r = s.commit("summary.json", |_| true, &[&input]);
        assert!(matches!(r, Err(Error::OutputIsInput { .. })));
        assert_eq!(read_all(d), before);
    }

    #[test]
    fn an_abandoned_staging_folder_is_removed() {
        let dir = tempfile::tempdir().unwrap();
        // No process has an id this large (Linux caps them at 2^22).
        let dead = dir.path().join(format!("{STAGING_PREFIX}4294967295"));
        std::fs::create_dir(&dead).unwrap();
        std::fs::write(dead.join("x"), b"half").unwrap();
        let s = Staging::new(dir.path()).unwrap();
        if Path::new("/proc/self").exists() {
            assert!(!dead.exists());
        }
        drop(s);
    }
}
