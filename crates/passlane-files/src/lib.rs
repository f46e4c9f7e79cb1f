//! File access shared by the command line and the desktop app.
//!
//! - [`write_atomic`]: every file Passlane writes goes to a temporary file in
//!   the same folder, is flushed and synced, then renamed over the target, so a
//!   crash or power loss leaves either the old file or the new one, never a mix.
//! - [`read_limited`]: reads a file with a size cap, so a wrong path to a huge
//!   file gives a clear error instead of exhausting memory.
//! - [`remove_stale_temporaries`]: clears temporaries left by an interrupted
//!   save; a temporary names its owner's process id and is removed only when
//!   that process is gone, never while another save is running.
//! - [`folder::write_folder`]: a folder of hand-off files (the network plan's),
//!   replaced as one unit.
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
    let tmp = dir.join(temporary_name(&name));
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

/// Reads a whole text file (UTF-8), refusing files larger than
/// `limit_bytes`; text that is not UTF-8 is an `InvalidData` error naming the
/// file and the byte where it stops being UTF-8.
pub fn read_text_limited(path: &Path, limit_bytes: u64) -> io::Result<String> {
    String::from_utf8(read_limited(path, limit_bytes)?).map_err(|e| {
        io::Error::new(
            io::ErrorKind::InvalidData,
            format!(
                "{}: not UTF-8 text (byte {})",
                path.display(),
                e.utf8_error().valid_up_to()
            ),
        )
    })
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

/// Longest file name component written, bytes (`NAME_MAX` of the common
/// Linux, macOS and Windows file systems).
pub const MAX_NAME_BYTES: usize = 255;

/// The part of a temporary's name that names its target: the target's name
/// itself when short, else its first 80 bytes and a 64-bit FNV-1a hash of the
/// whole name, so that `.<stem><marker><pid>-<n>` stays within
/// [`MAX_NAME_BYTES`] for any target name that fits.
pub fn temporary_stem(name: &str) -> String {
    if name.len() <= 100 {
        return name.to_string();
    }
    let mut cut = 80;
    while !name.is_char_boundary(cut) {
        cut -= 1;
    }
    format!("{}~{:016x}", &name[..cut], fnv1a_64(name.as_bytes()))
}

/// 64-bit FNV-1a: fixed constants, the same on every platform and build.
pub fn fnv1a_64(bytes: &[u8]) -> u64 {
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    for &b in bytes {
        h ^= u64::from(b);
        h = h.wrapping_mul(0x0000_0100_0000_01b3);
    }
    h
}

/// A fresh temporary name for `name` in its folder, owned by this process:
/// `.<stem>.passlane-tmp-<pid>-<n>`.
fn temporary_name(name: &str) -> String {
    static COUNTER: std::sync::atomic::AtomicU64 = std::sync::atomic::AtomicU64::new(0);
    let n = COUNTER.fetch_add(1, std::sync::atomic::Ordering::Relaxed);
    format!(
        ".{}{TEMP_MARKER}{}-{n}",
        temporary_stem(name),
        std::process::id()
    )
}

/// Whether the process `pid` is running: `Some` where the platform tells
/// (Linux: `/proc/<pid>`), `None` elsewhere (the standard library has no
/// portable way to ask; callers then treat the owner as alive).
pub fn process_alive(pid: u32) -> Option<bool> {
    if pid == std::process::id() {
        return Some(true);
    }
    if cfg!(target_os = "linux") {
        Some(Path::new("/proc").join(pid.to_string()).exists())
    } else {
        None
    }
}

/// The owner's process id in a temporary's name (`...-<pid>-<n>` after the
/// marker), when it has one.
pub fn temporary_owner(file_name: &str) -> Option<u32> {
    let rest = &file_name[file_name.rfind(TEMP_MARKER)? + TEMP_MARKER.len()..];
    rest.split('-').next()?.parse().ok()
}

/// Whether a temporary may be removed: its owner is known to be gone. A
/// temporary of a live process (another save running now), or of a process
/// whose state cannot be told, is left alone.
pub fn temporary_is_stale(file_name: &str) -> bool {
    match temporary_owner(file_name) {
        Some(pid) => pid != std::process::id() && process_alive(pid) == Some(false),
        // Not named by this version: no owner to ask, taken as stale.
        None => true,
    }
}

/// Removes temporaries that an interrupted save of `path` left in its folder
/// (never one whose owner is still running: see [`temporary_is_stale`]).
/// Returns how many were removed.
pub fn remove_stale_temporaries(path: &Path) -> usize {
    let dir = match path.parent() {
        Some(d) if !d.as_os_str().is_empty() => d.to_path_buf(),
        _ => PathBuf::from("."),
    };
    let Some(name) = path.file_name().map(|n| n.to_string_lossy().into_owned()) else {
        return 0;
    };
    let prefix = format!(".{}{TEMP_MARKER}", temporary_stem(&name));
    let Ok(entries) = fs::read_dir(&dir) else {
        return 0;
    };
    entries
        .flatten()
        .filter(|e| {
            let n = e.file_name().to_string_lossy().into_owned();
            n.starts_with(&prefix) && temporary_is_stale(&n)
        })
        .filter(|e| fs::remove_file(e.path()).is_ok())
        .count()
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
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
