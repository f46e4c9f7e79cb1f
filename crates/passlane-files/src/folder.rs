//! A folder of hand-off files, written the same way by the command line
//! (`passlane plan --out DIR`) and the desktop app (Plan → Export), as one
//! unit.
//!
//! The caller gives the files as relative paths and contents (the planner
//! builds them) and says which paths a hand-off of its kind can hold (so an
//! earlier set is recognised). The contract:
//!
//! 1. **Every name is checked before the first write**: relative, inside the
//!    folder (no `..`, no absolute path), each component at most
//!    [`MAX_NAME_BYTES`](crate::MAX_NAME_BYTES), no two paths the same when
//!    case is ignored (a case-insensitive file system would merge them), no
//!    file where another needs a folder.
//! 2. **A symbolic link is never written through**: the folder itself, or
//!    anything inside an earlier set, being a link is an error that says so.
//!    Nothing is written outside the named folder except its two hidden
//!    siblings below.
//! 3. **The folder is replaced as a whole**: the new set is built in a fresh
//!    sibling `.<name>.passlane-tmp-<pid>-<n>`, synced, then swapped in (the
//!    earlier folder is renamed to `.<name>.passlane-old-<pid>-<n>` and
//!    removed once the new one is in place). Afterwards the folder holds
//!    exactly the new set; a failure before the swap (a full disk, a write
//!    error) leaves the earlier set untouched.
//! 4. **An earlier folder is replaced only if it is a hand-off**: every
//!    entry in it is a path the caller recognises, or it is empty; anything
//!    else (a user's own file) is refused by name, never deleted.
//! 5. **One writer at a time**: a lock on the sibling `.<name>.passlane-lock`
//!    (an OS file lock, released when the process ends however it ends); a
//!    second writer fails at once, saying so.
//! 6. **Only dead processes' leftovers are cleaned**: sibling temporaries
//!    carry their owner's process id and are removed only when that process
//!    is gone ([`crate::temporary_is_stale`]). A swap cut off between its two
//!    renames left the earlier set in its `.passlane-old-` sibling: it is put
//!    back before anything else.

use std::collections::{BTreeSet, HashMap};
use std::fs;
use std::io::{self, Write};
use std::path::{Component, Path, PathBuf};

use crate::{MAX_NAME_BYTES, TEMP_MARKER, temporary_is_stale, temporary_stem};

/// Marker of a swapped-out earlier set (`.<name>.passlane-old-<pid>-<n>`).
pub const OLD_MARKER: &str = ".passlane-old-";

/// Longest relative path of one hand-off file, bytes.
pub const MAX_RELATIVE_PATH_BYTES: usize = 1024;

/// What an export wrote.
#[derive(Debug, Clone, PartialEq)]
pub struct FolderSummary {
    pub dir: PathBuf,
    /// Files written: the folder holds exactly these.
    pub files: usize,
    /// Files of the earlier set with a name of the new set (replaced).
    pub replaced: Vec<String>,
    /// Files of the earlier set that the new set does not have (removed).
    pub removed: Vec<String>,
}

/// Checks every relative path before anything is written (rule 1).
pub fn check_names<'a>(dir: &Path, paths: impl IntoIterator<Item = &'a str>) -> Result<(), String> {
    let mut seen: HashMap<String, &str> = HashMap::new();
    let mut files = BTreeSet::new();
    let mut folders = BTreeSet::new();
    for relative in paths {
        let rel = Path::new(relative);
        let ok = !relative.is_empty()
            && !relative.contains('\\')
            && rel.components().all(|c| matches!(c, Component::Normal(_)));
        if !ok {
            return Err(format!(
                "refusing to write {relative:?}: a hand-off file must stay inside {}",
                dir.display()
            ));
        }
        if relative.len() > MAX_RELATIVE_PATH_BYTES {
            return Err(format!(
                "refusing to write {}...: a path of {} bytes inside {} (at most {MAX_RELATIVE_PATH_BYTES})",
                excerpt(relative),
                relative.len(),
                dir.display()
            ));
        }
        let parts: Vec<&str> = relative.split('/').collect();
        for part in &parts {
            if part.len() > MAX_NAME_BYTES {
                return Err(format!(
                    "refusing to write {}...: a name of {} bytes (a file system takes at most {MAX_NAME_BYTES})",
                    excerpt(part),
                    part.len()
                ));
            }
            if part.contains(TEMP_MARKER) || part.contains(OLD_MARKER) || part.contains('\0') {
                return Err(format!(
                    "refusing to write {relative:?}: the name is reserved or holds a NUL"
                ));
            }
        }
        let folded = relative.to_lowercase();
        if let Some(first) = seen.insert(folded, relative) {
            return Err(format!(
                "refusing to write {relative:?} and {first:?} into {}: the two names are the same when case is ignored",
                dir.display()
            ));
        }
        for k in 1..parts.len() {
            folders.insert(parts[..k].join("/").to_lowercase());
        }
        files.insert(relative.to_lowercase());
    }
    if let Some(clash) = files.intersection(&folders).next() {
        return Err(format!(
            "refusing to write {clash:?} into {}: it is both a file and a folder of the hand-off",
            dir.display()
        ));
    }
    Ok(())
}

fn excerpt(s: &str) -> String {
    s.chars().take(40).collect()
}

/// The default file writer: a new file (never an existing one, never through
/// a link), its contents, synced.
pub fn write_new_file(path: &Path, bytes: &[u8]) -> io::Result<()> {
    let mut f = fs::OpenOptions::new()
        .write(true)
        .create_new(true)
        .open(path)?;
    f.write_all(bytes)?;
    f.sync_all()
}

/// Writes `files` (relative path, contents) as the whole content of `dir`
/// (see the module docs); `recognised(path)` says whether a path found in
/// an existing folder belongs to a hand-off (`"sub/"` for a sub-folder).
pub fn write_folder<'a>(
    dir: &Path,
    files: impl IntoIterator<Item = (&'a str, &'a [u8])>,
    recognised: &dyn Fn(&str) -> bool,
) -> Result<FolderSummary, String> {
    write_folder_with(dir, files, recognised, &mut write_new_file)
}

/// [`write_folder`] with the file writer given (tests inject failures).
pub fn write_folder_with<'a>(
    dir: &Path,
    files: impl IntoIterator<Item = (&'a str, &'a [u8])>,
    recognised: &dyn Fn(&str) -> bool,
    write_file: &mut dyn FnMut(&Path, &[u8]) -> io::Result<()>,
) -> Result<FolderSummary, String> {
    let files: Vec<(&str, &[u8])> = files.into_iter().collect();
    check_names(dir, files.iter().map(|f| f.0))?;
    let shown = dir.display();
    let name = dir
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .ok_or_else(|| format!("{shown}: give the hand-off folder by name"))?;
    let parent = match dir.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    fs::create_dir_all(&parent).map_err(|e| format!("cannot create {}: {e}", parent.display()))?;
    let stem = temporary_stem(&name);
    let lock = take_lock(&parent.join(format!(".{stem}.passlane-lock")), dir)?;
    let result = (|| {
        restore_interrupted_swap(dir, &parent, &stem)?;
        let before = existing_set(dir, recognised)?;
        remove_stale_siblings(&parent, &stem);
        let tmp = parent.join(sibling_name(&stem, TEMP_MARKER));
        fs::create_dir(&tmp).map_err(|e| format!("cannot create {}: {e}", tmp.display()))?;
        if let Err(e) = build(&tmp, dir, &files, write_file) {
            let _ = fs::remove_dir_all(&tmp);
            return Err(format!("{e}; {shown} is unchanged"));
        }
        swap_in(&tmp, dir, &parent, &stem, before.is_some())?;
        let new: BTreeSet<&str> = files.iter().map(|f| f.0).collect();
        let before = before.unwrap_or_default();
        Ok(FolderSummary {
            dir: dir.to_path_buf(),
            files: files.len(),
            replaced: before
                .iter()
                .filter(|f| new.contains(f.as_str()))
                .cloned()
                .collect(),
            removed: before
                .into_iter()
                .filter(|f| !new.contains(f.as_str()))
                .collect(),
        })
    })();
    release_lock(lock);
    result
}

/// `.<stem><marker><pid>-<n>`, unique in this process.
fn sibling_name(stem: &str, marker: &str) -> String {
    static COUNTER: std::sync::atomic::AtomicU64 = std::sync::atomic::AtomicU64::new(0);
    let n = COUNTER.fetch_add(1, std::sync::atomic::Ordering::Relaxed);
    format!(".{stem}{marker}{}-{n}", std::process::id())
}

struct Lock {
    file: fs::File,
    path: PathBuf,
}

fn take_lock(path: &Path, dir: &Path) -> Result<Lock, String> {
    // The lock file is removed when released; a writer that opened it just
    // before must then find that the name now leads elsewhere and try again.
    for _ in 0..100 {
        let file = fs::OpenOptions::new()
            .read(true)
            .write(true)
            .create(true)
            .truncate(false)
            .open(path)
            .map_err(|e| format!("cannot take the lock {}: {e}", path.display()))?;
        match file.try_lock() {
            Ok(()) => {}
            Err(fs::TryLockError::WouldBlock) => {
                return Err(format!(
                    "another Passlane process is writing {} now (lock {}): try again when it has finished",
                    dir.display(),
                    path.display()
                ));
            }
            Err(fs::TryLockError::Error(e)) => {
                return Err(format!("cannot take the lock {}: {e}", path.display()));
            }
        }
        if same_file(&file, path) {
            return Ok(Lock {
                file,
                path: path.to_path_buf(),
            });
        }
    }
    Err(format!(
        "cannot take the lock {}: it keeps changing",
        path.display()
    ))
}

#[cfg(unix)]
fn same_file(file: &fs::File, path: &Path) -> bool {
    use std::os::unix::fs::MetadataExt;
    match (file.metadata(), fs::symlink_metadata(path)) {
        (Ok(a), Ok(b)) => a.dev() == b.dev() && a.ino() == b.ino(),
        _ => false,
    }
}

#[cfg(not(unix))]
fn same_file(_file: &fs::File, path: &Path) -> bool {
    path.is_file()
}

fn release_lock(lock: Lock) {
    // Removed while still held (unix), so no other writer can hold it then.
    if cfg!(unix) {
        let _ = fs::remove_file(&lock.path);
    }
    let _ = lock.file.unlock();
}

/// A swap cut off between its two renames left no folder and the earlier
/// set in a `.passlane-old-` sibling of a dead process: put it back.
fn restore_interrupted_swap(dir: &Path, parent: &Path, stem: &str) -> Result<(), String> {
    if fs::symlink_metadata(dir).is_ok() {
        return Ok(());
    }
    let prefix = format!(".{stem}{OLD_MARKER}");
    let Ok(entries) = fs::read_dir(parent) else {
        return Ok(());
    };
    for e in entries.flatten() {
        let n = e.file_name().to_string_lossy().into_owned();
        let owner = n
            .strip_prefix(&prefix)
            .and_then(|r| r.split('-').next())
            .and_then(|p| p.parse::<u32>().ok());
        if let Some(pid) = owner
            && pid != std::process::id()
            && crate::process_alive(pid) == Some(false)
        {
            return fs::rename(e.path(), dir).map_err(|err| {
                format!(
                    "{} is missing and its earlier set is in {}: cannot put it back: {err}",
                    dir.display(),
                    e.path().display()
                )
            });
        }
    }
    Ok(())
}

/// Removes sibling temporaries and swapped-out sets of dead processes.
fn remove_stale_siblings(parent: &Path, stem: &str) {
    let Ok(entries) = fs::read_dir(parent) else {
        return;
    };
    let tmp = format!(".{stem}{TEMP_MARKER}");
    let old = format!(".{stem}{OLD_MARKER}");
    for e in entries.flatten() {
        let n = e.file_name().to_string_lossy().into_owned();
        let owner = if let Some(r) = n.strip_prefix(&tmp) {
            r
        } else if let Some(r) = n.strip_prefix(&old) {
            r
        } else {
            continue;
        };
        let pid = owner.split('-').next().and_then(|p| p.parse::<u32>().ok());
        let stale = match pid {
            Some(pid) => pid != std::process::id() && crate::process_alive(pid) == Some(false),
            None => temporary_is_stale(&n),
        };
        if stale && e.file_type().map(|t| t.is_dir()).unwrap_or(false) {
            let _ = fs::remove_dir_all(e.path());
        }
    }
}

/// The files of the folder as it is (relative paths, sorted), `None` when it
/// does not exist; refuses a link, or an entry that is not a hand-off's.
fn existing_set(
    dir: &Path,
    recognised: &dyn Fn(&str) -> bool,
) -> Result<Option<Vec<String>>, String> {
    let meta = match fs::symlink_metadata(dir) {
        Ok(m) => m,
        Err(e) if e.kind() == io::ErrorKind::NotFound => return Ok(None),
        Err(e) => return Err(format!("cannot read {}: {e}", dir.display())),
    };
    if meta.file_type().is_symlink() {
        return Err(format!(
            "{} is a symbolic link: refusing to write through it (give the folder itself)",
            dir.display()
        ));
    }
    if !meta.is_dir() {
        return Err(format!("{} exists and is not a folder", dir.display()));
    }
    let mut out = Vec::new();
    let mut stack = vec![(dir.to_path_buf(), String::new())];
    while let Some((d, prefix)) = stack.pop() {
        let entries = fs::read_dir(&d).map_err(|e| format!("cannot read {}: {e}", d.display()))?;
        for e in entries {
            let e = e.map_err(|e| format!("cannot read {}: {e}", d.display()))?;
            let name = e.file_name().to_string_lossy().into_owned();
            let rel = if prefix.is_empty() {
                name
            } else {
                format!("{prefix}/{name}")
            };
            let t = e
                .file_type()
                .map_err(|err| format!("cannot read {}: {err}", e.path().display()))?;
            if t.is_symlink() {
                return Err(format!(
                    "{} is a symbolic link inside the hand-off folder: refusing to write through it or replace it (remove it first)",
                    e.path().display()
                ));
            }
            let (known, what) = if t.is_dir() {
                (recognised(&format!("{rel}/")), "folder")
            } else if t.is_file() {
                (recognised(&rel), "file")
            } else {
                (false, "special file")
            };
            if !known {
                return Err(format!(
                    "{} holds the {what} {rel:?}, which is not part of a hand-off: refusing to replace the folder (move it away or choose another folder)",
                    dir.display()
                ));
            }
            if t.is_dir() {
                stack.push((e.path(), rel));
            } else {
                out.push(rel);
            }
        }
    }
    out.sort();
    Ok(Some(out))
}

/// Writes every file into the fresh folder `tmp` and syncs its folders.
fn build(
    tmp: &Path,
    dir: &Path,
    files: &[(&str, &[u8])],
    write_file: &mut dyn FnMut(&Path, &[u8]) -> io::Result<()>,
) -> Result<(), String> {
    let mut folders = BTreeSet::new();
    folders.insert(tmp.to_path_buf());
    for (relative, contents) in files {
        let path = tmp.join(relative);
        if let Some(parent) = path.parent()
            && folders.insert(parent.to_path_buf())
        {
            fs::create_dir_all(parent)
                .map_err(|e| format!("cannot create {}: {e}", dir.join(relative).display()))?;
        }
        write_file(&path, contents)
            .map_err(|e| format!("cannot write {}: {e}", dir.join(relative).display()))?;
    }
    for f in folders.iter().rev() {
        sync_dir(f);
    }
    Ok(())
}

fn sync_dir(d: &Path) {
    if let Ok(f) = fs::File::open(d) {
        let _ = f.sync_all();
    }
}

/// Puts the built folder in place of `dir` (rule 3).
fn swap_in(tmp: &Path, dir: &Path, parent: &Path, stem: &str, exists: bool) -> Result<(), String> {
    if !exists {
        fs::rename(tmp, dir).map_err(|e| {
            let _ = fs::remove_dir_all(tmp);
            format!("cannot move the new set into {}: {e}", dir.display())
        })?;
        sync_dir(parent);
        return Ok(());
    }
    let old = parent.join(sibling_name(stem, OLD_MARKER));
    if let Err(e) = fs::rename(dir, &old) {
        let _ = fs::remove_dir_all(tmp);
        return Err(format!(
            "cannot set the earlier set of {} aside: {e}; it is unchanged",
            dir.display()
        ));
    }
    if let Err(e) = fs::rename(tmp, dir) {
        let back = fs::rename(&old, dir);
        let _ = fs::remove_dir_all(tmp);
        return Err(match back {
            Ok(()) => format!(
                "cannot move the new set into {}: {e}; the earlier set is kept",
                dir.display()
            ),
            Err(b) => format!(
                "cannot move the new set into {}: {e}; the earlier set is in {} ({b})",
                dir.display(),
                old.display()
            ),
        });
    }
    sync_dir(parent);
    let _ = fs::remove_dir_all(&old);
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_are_checked_before_anything_is_written() {
        let d = Path::new("out");
        assert!(check_names(d, ["a.txt", "sub/b.txt"]).is_ok());
        for bad in ["../x", "/etc/x", "", "sub/../../x", "a\\b"] {
            assert!(check_names(d, [bad]).is_err(), "{bad}");
        }
        assert!(check_names(d, ["p/CS-A.csv", "p/cs-a.csv"]).is_err());
        assert!(check_names(d, ["x", "x/y"]).is_err());
        let long = "n".repeat(256);
        assert!(check_names(d, [long.as_str()]).is_err());
        assert!(check_names(d, ["n".repeat(255).as_str()]).is_ok());
    }
}
