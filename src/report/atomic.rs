//! The one way sunward writes an output file: into a temporary file in the same folder,
//! flushed and synced, then renamed over the target. A run that fails midway leaves the
//! previous file untouched (rename is atomic on POSIX file systems within one folder).

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
    let result = (|| {
        let file = File::create(&tmp)?;
        let mut w = BufWriter::with_capacity(1 << 20, file);
        fill(&mut w)?;
        let file = w.into_inner().map_err(|e| e.into_error())?;
        file.sync_all()?;
        std::fs::rename(&tmp, path)
    })();
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
}
