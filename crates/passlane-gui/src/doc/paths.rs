//! Where the scenario's element files are when the scenario moves: relative
//! names rewritten for a new folder, or the files copied beside it.
//!
//! A scenario names its element files relative to its own folder. Saving it
//! into another folder must keep every file reachable, so [`plan_save`]
//! decides, per file, what the new scenario will name and what has to be
//! written beside it; [`Document::save_as`](super::Document::save_as) carries
//! that out and reports it in words.

use std::path::{Component, Path, PathBuf};

/// What to do with element files named by relative path when the scenario
/// is saved into another folder.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SaveMode {
    /// Same folder (or nothing to move): names stay as they are.
    KeepPaths,
    /// Rewrite each relative name so that it reaches the same file from the
    /// new folder (files built into the app are written beside it).
    RewritePaths,
    /// Copy every element file beside the saved scenario and name the copies.
    CopyBeside,
}

/// An absolute form of `p` (from the current directory), with `.` and `..`
/// removed where the path allows it, so two spellings of one folder compare equal.
pub fn absolute(p: &Path) -> PathBuf {
    let abs = std::path::absolute(p).unwrap_or_else(|_| p.to_path_buf());
    if let Ok(c) = abs.canonicalize() {
        return c;
    }
    // A missing file: canonicalise its folder and keep the name.
    match (abs.parent(), abs.file_name()) {
        (Some(dir), Some(name)) => dir
            .canonicalize()
            .map(|d| d.join(name))
            .unwrap_or_else(|_| lexical(&abs)),
        _ => lexical(&abs),
    }
}

fn lexical(p: &Path) -> PathBuf {
    let mut out = PathBuf::new();
    for c in p.components() {
        match c {
            Component::CurDir => {}
            Component::ParentDir => {
                out.pop();
            }
            other => out.push(other.as_os_str()),
        }
    }
    out
}

/// The path of `target` relative to the folder `from` (both absolute), or
/// `None` when they share no root (another drive).
pub fn relative_to(target: &Path, from: &Path) -> Option<PathBuf> {
    let t: Vec<Component> = target.components().collect();
    let f: Vec<Component> = from.components().collect();
    if t.first() != f.first() {
        return None;
    }
    let common = t.iter().zip(&f).take_while(|(a, b)| a == b).count();
    let mut out = PathBuf::new();
    for _ in common..f.len() {
        out.push("..");
    }
    for c in &t[common..] {
        out.push(c.as_os_str());
    }
    Some(out)
}

/// A name as the scenario file should hold it: forward slashes, so that a
/// scenario written on one system reads on another.
pub fn scenario_name(p: &Path) -> String {
    let parts: Vec<String> = p
        .components()
        .map(|c| c.as_os_str().to_string_lossy().into_owned())
        .collect();
    if p.is_absolute() {
        p.display().to_string()
    } else {
        parts.join("/")
    }
}

/// Where one element file named by the scenario comes from.
#[derive(Debug, Clone, PartialEq)]
pub enum Source {
    /// A file on disk (it may be missing), absolute.
    Disk(PathBuf),
    /// Built into the app (the bundled demo), with its contents.
    Embedded(&'static str),
}

/// What saving does for one element file.
#[derive(Debug, Clone, PartialEq)]
pub struct FileMove {
    /// The name in the scenario now.
    pub old_name: String,
    /// The name in the saved scenario.
    pub new_name: String,
    /// Contents to write beside the scenario as `new_name` (copies).
    pub write: Option<CopyFrom>,
    /// In words, for the report.
    pub note: String,
}

#[derive(Debug, Clone, PartialEq)]
pub enum CopyFrom {
    Disk(PathBuf),
    Embedded(&'static str),
}

/// Decides, for each (name, source), what the scenario saved in `new_dir`
/// (absolute) names and what must be copied there. `taken` holds file names
/// already used in `new_dir` by this save; a copy never overwrites a
/// different file already there (it gets a numbered name instead).
pub fn plan_save(files: &[(String, Source)], new_dir: &Path, mode: SaveMode) -> Vec<FileMove> {
    let mut taken: Vec<String> = Vec::new();
    let mut out = Vec::new();
    for (name, source) in files {
        let copy = |from: CopyFrom, taken: &mut Vec<String>, why: &str| {
            let base = match &from {
                CopyFrom::Disk(p) => p
                    .file_name()
                    .map(|n| n.to_string_lossy().into_owned())
                    .unwrap_or_else(|| "elements.tle".into()),
                CopyFrom::Embedded(_) => Path::new(name)
                    .file_name()
                    .map(|n| n.to_string_lossy().into_owned())
                    .unwrap_or_else(|| "elements.tle".into()),
            };
            let new_name = free_name(&base, new_dir, &from, taken);
            taken.push(new_name.clone());
            FileMove {
                old_name: name.clone(),
                note: format!("{name} copied beside the scenario as {new_name}{why}"),
                new_name,
                write: Some(from),
            }
        };
        let is_relative = Path::new(name).is_relative();
        let m = match (mode, source) {
            (_, Source::Embedded(text)) => copy(
                CopyFrom::Embedded(text),
                &mut taken,
                " (it was built into the app, not on disk)",
            ),
            (SaveMode::KeepPaths, _) => FileMove {
                old_name: name.clone(),
                new_name: name.clone(),
                write: None,
                note: String::new(),
            },
            (SaveMode::CopyBeside, Source::Disk(p)) if p.is_file() => {
                copy(CopyFrom::Disk(p.clone()), &mut taken, "")
            }
            (_, Source::Disk(_)) if !is_relative && mode == SaveMode::RewritePaths => FileMove {
                old_name: name.clone(),
                new_name: name.clone(),
                write: None,
                note: format!("{name} kept (an absolute path)"),
            },
            (_, Source::Disk(p)) => {
                let new_name = relative_to(p, new_dir)
                    .map(|r| scenario_name(&r))
                    .unwrap_or_else(|| p.display().to_string());
                let missing = if p.is_file() {
                    ""
                } else {
                    " (the file is missing there: point to it in Fleet and stations)"
                };
                FileMove {
                    old_name: name.clone(),
                    note: if new_name == *name {
                        format!("{name} unchanged{missing}")
                    } else {
                        format!("{name} now named {new_name}{missing}")
                    },
                    new_name,
                    write: None,
                }
            }
        };
        out.push(m);
    }
    out
}

/// `base` in `dir`, or `stem-2.ext`, `stem-3.ext`... when that name is taken
/// by this save or by a different file already there.
fn free_name(base: &str, dir: &Path, from: &CopyFrom, taken: &[String]) -> String {
    let (stem, ext) = match base.rsplit_once('.') {
        Some((s, e)) if !s.is_empty() => (s.to_string(), format!(".{e}")),
        _ => (base.to_string(), String::new()),
    };
    let same_content = |candidate: &Path| -> bool {
        let Ok(existing) = std::fs::read(candidate) else {
            return false;
        };
        match from {
            CopyFrom::Disk(p) => {
                absolute(p) == absolute(candidate) || std::fs::read(p).is_ok_and(|b| b == existing)
            }
            CopyFrom::Embedded(t) => t.as_bytes() == existing.as_slice(),
        }
    };
    for n in 1.. {
        let name = if n == 1 {
            base.to_string()
        } else {
            format!("{stem}-{n}{ext}")
        };
        let path = dir.join(&name);
        if taken.contains(&name) {
            continue;
        }
        if !path.exists() || same_content(&path) {
            return name;
        }
    }
    base.to_string()
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;

    #[test]
    fn relative_paths_walk_up_and_down() {
        let r = relative_to(Path::new("/a/b/c/f.tle"), Path::new("/a/x/y")).unwrap();
        assert_eq!(scenario_name(&r), "../../b/c/f.tle");
        let r = relative_to(Path::new("/a/f.tle"), Path::new("/a")).unwrap();
        assert_eq!(scenario_name(&r), "f.tle");
    }

    #[test]
    fn rewriting_keeps_every_file_reachable_and_says_so() {
        let files = vec![
            (
                "fleet.tle".to_string(),
                Source::Disk(PathBuf::from("/old/dir/fleet.tle")),
            ),
            (
                "/abs/cat.tle".to_string(),
                Source::Disk(PathBuf::from("/abs/cat.tle")),
            ),
            ("demo.tle".to_string(), Source::Embedded("x")),
        ];
        let m = plan_save(&files, Path::new("/new/place"), SaveMode::RewritePaths);
        assert_eq!(m[0].new_name, "../../old/dir/fleet.tle");
        assert!(m[0].note.contains("missing"), "{}", m[0].note);
        assert_eq!(m[1].new_name, "/abs/cat.tle");
        assert_eq!(m[2].new_name, "demo.tle");
        assert!(matches!(m[2].write, Some(CopyFrom::Embedded("x"))));
    }
}
