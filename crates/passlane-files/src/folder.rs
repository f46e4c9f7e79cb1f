//! A folder of hand-off files, written the same way by the command line
//! (`passlane plan --out DIR`) and the desktop app (Plan → Export).
//!
//! The caller gives the files as relative paths and contents (the planner
//! builds them); every file goes through [`crate::write_atomic_with`], and
//! sub-folders are created as needed. A relative path may not leave the
//! folder (no `..`, no absolute path).

use std::path::{Component, Path, PathBuf};

/// What an export wrote.
#[derive(Debug, Clone, PartialEq)]
pub struct FolderSummary {
    pub dir: PathBuf,
    /// Files written.
    pub files: usize,
}

/// Checks that `relative` stays inside the folder and turns it into a path.
fn inside(dir: &Path, relative: &str) -> Result<PathBuf, String> {
    let rel = Path::new(relative);
    let ok = !relative.is_empty() && rel.components().all(|c| matches!(c, Component::Normal(_)));
    if !ok {
        return Err(format!(
            "refusing to write {relative:?}: a hand-off file must stay inside {}",
            dir.display()
        ));
    }
    Ok(dir.join(rel))
}

/// Writes `files` (relative path, contents) into `dir`, created if needed.
pub fn write_folder<'a>(
    dir: &Path,
    files: impl IntoIterator<Item = (&'a str, &'a [u8])>,
) -> Result<FolderSummary, String> {
    std::fs::create_dir_all(dir).map_err(|e| format!("cannot create {}: {e}", dir.display()))?;
    let mut written = 0;
    for (relative, contents) in files {
        let path = inside(dir, relative)?;
        if let Some(parent) = path.parent() {
            std::fs::create_dir_all(parent)
                .map_err(|e| format!("cannot create {}: {e}", parent.display()))?;
        }
        // Temporaries of an earlier, interrupted run would otherwise pile up.
        crate::remove_stale_temporaries(&path);
        crate::write_atomic(&path, contents)
            .map_err(|e| format!("cannot write {}: {e}", path.display()))?;
        written += 1;
    }
    Ok(FolderSummary {
        dir: dir.to_path_buf(),
        files: written,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn writes_sub_folders_and_refuses_paths_that_leave_the_folder() {
        let dir = std::env::temp_dir().join(format!("passlane-folder-test-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&dir);
        let s = write_folder(&dir, [("a.txt", &b"1"[..]), ("sub/b.txt", &b"2"[..])]).unwrap();
        assert_eq!(s.files, 2);
        assert_eq!(std::fs::read(dir.join("sub/b.txt")).unwrap(), b"2");
        for bad in ["../x", "/etc/x", "", "sub/../../x"] {
            assert!(write_folder(&dir, [(bad, &b"!"[..])]).is_err(), "{bad}");
        }
        std::fs::remove_dir_all(&dir).unwrap();
    }
}
