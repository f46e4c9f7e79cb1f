//! File access shared by the command line and the desktop app.
//!
//! - [`write_atomic`]: every file Passlane writes goes to a temporary file in
//!   the same folder, is flushed and synced, then renamed over the target, so a
//!   crash or power loss leaves either the old file or the new one, never a mix.
//! - [`read_limited`]: reads a file with a size cap, so a wrong path to a huge
//!   file gives a clear error instead of exhausting memory.
//! - [`remove_stale_temporaries`]: clears temporaries left by an interrupted save.
//! - [`folder::write_folder`]: a folder of hand-off files (the network plan's).
//!
//! Architecture invariant: this crate does file I/O only. It depends on the
//! standard library alone: what goes into a file is decided by the planner
//! (`passlane-plan`), which never touches the file system.

pub mod folder;

use std::fs;
use std::io::{self, Read, Write};
use std::path::{Path, PathBuf};

/// Marker in the names of temporary files (`.<name>.passlane-tmp-<pid>-<n>`).
pub const TEMP_MARKER: &str = ".passlane-tmp-";

/// Largest input file read by default: 512 MiB.
pub const DEFAULT_READ_LIMIT_BYTES: u64 = 512 * 1024 * 1024;

/// Writes `bytes` to `path` atomically (temporary file in the same folder,
/// fsync, rename, fsync of the folder where the platform allows).
pub fn write_atomic(path: &Path, bytes: &[u8]) -> io::Result<()> {
    write_atomic_with(path, |w| w.write_all(bytes))
}

/// Like [`write_atomic`], with the content produced by a writer callback.
pub fn write_atomic_with(
    path: &Path,
    fill: impl FnOnce(&mut dyn Write) -> io::Result<()>,
) -> io::Result<()> {
    let dir = match path.parent() {
        Some(d) if !d.as_os_str().is_empty() => d.to_path_buf(),
        _ => PathBuf::from("."),
    };
    let name = path
        .file_name()
        .ok_or_else(|| io::Error::new(io::ErrorKind::InvalidInput, "the path has no file name"))?
        .to_string_lossy()
        .into_owned();
    static COUNTER: std::sync::atomic::AtomicU64 = std::sync::atomic::AtomicU64::new(0);
    let n = COUNTER.fetch_add(1, std::sync::atomic::Ordering::Relaxed);
    let tmp = dir.join(format!(".{name}{TEMP_MARKER}{}-{n}", std::process::id()));
    let result = (|| {
        let mut file = fs::OpenOptions::new()
            .write(true)
            .create_new(true)
            .open(&tmp)?;
        {
            let mut buf = io::BufWriter::new(&mut file);
            fill(&mut buf)?;
            buf.flush()?;
        }
        file.sync_all()?;
        drop(file);
        fs::rename(&tmp, path)?;
        // Make the rename itself durable.
        if let Ok(d) = fs::File::open(&dir) {
            let _ = d.sync_all();
        }
        Ok(())
    })();
    if result.is_err() {
        let _ = fs::remove_file(&tmp);
    }
    result
}

/// Reads a whole file, refusing files larger than `limit_bytes`.
pub fn read_limited(path: &Path, limit_bytes: u64) -> io::Result<Vec<u8>> {
    let file = fs::File::open(path)?;
    let len = file.metadata().map(|m| m.len()).unwrap_or(0);
    if len > limit_bytes {
        return Err(io::Error::new(
            io::ErrorKind::InvalidData,
            format!(
                "{} is {len} bytes, larger than the {limit_bytes}-byte limit",
                path.display()
            ),
        ));
    }
    let mut out = Vec::with_capacity(len as usize);
    file.take(limit_bytes + 1).read_to_end(&mut out)?;
    if out.len() as u64 > limit_bytes {
        return Err(io::Error::new(
            io::ErrorKind::InvalidData,
            format!(
                "{} grew past the {limit_bytes}-byte limit while reading",
                path.display()
            ),
        ));
    }
    Ok(out)
}

/// Removes temporaries that an interrupted save of `path` left in its folder.
/// Returns how many were removed.
pub fn remove_stale_temporaries(path: &Path) -> usize {
    let dir = match path.parent() {
        Some(d) if !d.as_os_str().is_empty() => d.to_path_buf(),
        _ => PathBuf::from("."),
    };
    let Some(name) = path.file_name().map(|n| n.to_string_lossy().into_owned()) else {
        return 0;
    };
    let prefix = format!(".{name}{TEMP_MARKER}");
    let Ok(entries) = fs::read_dir(&dir) else {
        return 0;
    };
    entries
        .flatten()
        .filter(|e| e.file_name().to_string_lossy().starts_with(&prefix))
        .filter(|e| fs::remove_file(e.path()).is_ok())
        .count()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn replaces_whole_file_and_leaves_no_temporary() {
        let dir = std::env::temp_dir().join(format!("passlane-files-test-{}", std::process::id()));
        fs::create_dir_all(&dir).unwrap();
        let p = dir.join("a.json");
        write_atomic(&p, b"first").unwrap();
        write_atomic(&p, b"second").unwrap();
        assert_eq!(fs::read(&p).unwrap(), b"second");
        let leftovers: Vec<_> = fs::read_dir(&dir)
            .unwrap()
            .flatten()
            .filter(|e| e.file_name().to_string_lossy().contains(TEMP_MARKER))
            .collect();
        assert!(leftovers.is_empty());
        // A failing writer leaves the old file untouched.
        let r = write_atomic_with(&p, |w| {
            w.write_all(b"partial")?;
            Err(io::Error::other("boom"))
        });
        assert!(r.is_err());
        assert_eq!(fs::read(&p).unwrap(), b"second");
        fs::remove_dir_all(&dir).unwrap();
    }
}
