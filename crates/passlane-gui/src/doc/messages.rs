//! Conjunction data messages the operator received, read from disk for the
//! close-approach view's trend (the same reader as `passlane cdm`).

use std::path::{Path, PathBuf};

use passlane_plan::cdm::{Cdm, MAX_MESSAGE_BYTES};

/// Extensions taken when a folder is named: KVN and XML messages.
const MESSAGE_EXTENSIONS: [&str; 4] = ["cdm", "kvn", "xml", "txt"];

/// The files a typed path stands for: the file itself, or the messages
/// directly inside a folder (sorted by name).
pub fn message_files(path: &Path) -> Result<Vec<PathBuf>, String> {
    if !path.is_dir() {
        return Ok(vec![path.to_path_buf()]);
    }
    let entries = std::fs::read_dir(path).map_err(|e| format!("{}: {e}", path.display()))?;
    let mut files: Vec<PathBuf> = entries
        .filter_map(|e| e.ok().map(|e| e.path()))
        .filter(|p| {
            p.is_file()
                && p.extension()
                    .and_then(|x| x.to_str())
                    .is_some_and(|x| MESSAGE_EXTENSIONS.contains(&x.to_ascii_lowercase().as_str()))
        })
        .collect();
    files.sort();
    if files.is_empty() {
        return Err(format!(
            "{}: no message files (.cdm, .kvn, .xml, .txt) in this folder",
            path.display()
        ));
    }
    Ok(files)
}

/// Reads one message (KVN or XML); the error names the file, line, keyword
/// and reason as the reader gives them.
pub fn read_message(path: &Path) -> Result<(String, Cdm), String> {
    let file = path.display().to_string();
    let text = passlane_files::read_text_limited(path, MAX_MESSAGE_BYTES)
        .map_err(|e| format!("{file}: cannot read: {e}"))?;
    let cdm = Cdm::parse(&text, &file).map_err(|e| e.to_string())?;
    Ok((file, cdm))
}
