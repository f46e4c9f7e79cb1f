//! The open scenario and what was loaded for it: the part of the app state
//! that is saved and that every view reads. Caches derived from it live in the
//! views and are rebuilt when [`Document::revision`] changes.
//!
//! Nothing is ever substituted: an element file that cannot be read stays in
//! the list with its error and the path that was tried, loads nothing, and can
//! be pointed at the right file ([`Document::relocate_file`]). Saving into
//! another folder keeps every element file reachable ([`paths`]).

pub mod messages;
pub mod paths;

use std::path::{Path, PathBuf};

use passlane_orbit::{Diagnostic, ElementSet, LoadOptions, Severity, UtcTime};
use passlane_plan::Scenario;
use passlane_plan::scenario::Window;

pub use paths::SaveMode;
use paths::{CopyFrom, Source};

/// The bundled demo scenario, used when no file is given and none is found on disk.
pub const DEMO_SCENARIO_JSON: &str = include_str!("../../../../scenarios/demo.json");
/// The demo fleet the demo scenario names.
pub const DEMO_FLEET_TLE: &str = include_str!("../../../../scenarios/demo-fleet.tle");
/// The catalog objects the demo scenario screens against.
pub const DEMO_DEBRIS_TLE: &str = include_str!("../../../../scenarios/demo-debris.tle");

/// The embedded copy of an element file the bundled demo names, if any.
fn embedded_demo_file(name: &str) -> Option<&'static str> {
    match name {
        "demo-fleet.tle" => Some(DEMO_FLEET_TLE),
        "demo-debris.tle" => Some(DEMO_DEBRIS_TLE),
        _ => None,
    }
}

/// Element files larger than this are refused rather than read into memory.
const MAX_ELEMENT_FILE_BYTES: u64 = 256 * 1024 * 1024;
const MAX_SCENARIO_BYTES: u64 = 16 * 1024 * 1024;

/// What one element file gave.
#[derive(Debug, Clone)]
pub struct LoadedFile {
    /// The file as named in the scenario or typed by the user.
    pub name: String,
    /// Whether it holds the operator's own spacecraft (else: catalog to screen against).
    pub own_fleet: bool,
    /// Where it was read from: the absolute path, or `None` for a copy built into the app.
    pub path: Option<PathBuf>,
    /// Why it could not be read (missing, unreadable, too large); it loaded nothing then.
    pub read_error: Option<String>,
    pub sets_loaded: usize,
    pub diagnostics: Vec<Diagnostic>,
    /// An operator ephemeris (CCSDS OEM) rather than an element file.
    pub is_ephemeris: bool,
    /// For an operator ephemeris: its usable spans and the gaps between
    /// them, in words.
    pub ephemeris_note: Option<String>,
}

/// The open scenario with its loaded element sets.
#[derive(Debug, Clone)]
pub struct Document {
    pub scenario: Scenario,
    /// Where it is saved; `None` for a new or bundled scenario.
    pub path: Option<PathBuf>,
    /// The folder relative element-file names resolve against (the scenario
    /// file's folder; also kept for the demo opened from disk, whose `path`
    /// is `None` so that it is never overwritten by a plain Save).
    pub base_dir: Option<PathBuf>,
    /// Read TLE lines leniently (extra columns, wrong checksums accepted with a warning).
    pub lenient: bool,
    /// Element files that are the app's built-in copies (the bundled demo).
    embedded: bool,
    /// Unsaved edits exist.
    pub dirty: bool,
    /// The operator's spacecraft.
    pub fleet: Vec<ElementSet>,
    /// Other objects, for screening.
    pub catalog: Vec<ElementSet>,
    pub files: Vec<LoadedFile>,
    /// Bumped on every change that invalidates derived results (passes, tracks).
    pub revision: u64,
    /// What the scenario reader warned about when the file was opened
    /// (unknown keys); shown once in the status line.
    pub open_warnings: Vec<String>,
}

/// What a save did, in words (shown to the user).
#[derive(Debug, Clone, Default, PartialEq)]
pub struct SaveReport {
    pub lines: Vec<String>,
}

impl Document {
    /// An empty scenario with a one-day window from the start of the current UTC day.
    pub fn new_empty() -> Self {
        let now = UtcTime::now();
        let day_start = UtcTime::from_s_since_j2000(
            ((now.s_since_j2000() + 43_200.0) / 86_400.0).floor() * 86_400.0 - 43_200.0,
        );
        let scenario = Scenario {
            name: "Untitled scenario".to_string(),
            window: Some(Window {
                start: day_start,
                end: day_start.add_s(86_400.0),
            }),
            ..Scenario::default()
        };
        Document {
            scenario,
            path: None,
            base_dir: None,
            lenient: false,
            embedded: false,
            dirty: false,
            fleet: Vec::new(),
            catalog: Vec::new(),
            files: Vec::new(),
            revision: 0,
            open_warnings: Vec::new(),
        }
    }

    /// The bundled demo, from the copies built into the app (works with no
    /// files on disk; saving it writes those copies beside the scenario).
    pub fn demo() -> Self {
        match Scenario::from_json(DEMO_SCENARIO_JSON, "demo.json") {
            Ok(scenario) => {
                let mut doc = Document {
                    scenario,
                    embedded: true,
                    ..Document::new_empty()
                };
                doc.reload_elements();
                doc
            }
            // The embedded demo is checked by the tests; an empty document is the safe fallback.
            Err(_) => Document::new_empty(),
        }
    }

    /// Reads a scenario file and the element files it names (relative to it).
    pub fn open(path: &Path) -> anyhow::Result<Self> {
        // A save interrupted by a crash or power loss may have left its
        // temporary beside the file; the file itself is intact (atomic rename).
        passlane_files::remove_stale_temporaries(path);
        // Refused, not repaired, when it is not UTF-8 (as on the command line).
        let text = passlane_files::read_text_limited(path, MAX_SCENARIO_BYTES)
            .map_err(|e| anyhow::anyhow!("cannot read scenario {}: {e}", path.display()))?;
        let (scenario, warnings) =
            Scenario::from_json_with_warnings(&text, &path.display().to_string())?;
        let mut doc = Document {
            scenario,
            open_warnings: warnings,
            path: Some(path.to_path_buf()),
            base_dir: path.parent().map(paths::absolute),
            ..Document::new_empty()
        };
        doc.reload_elements();
        Ok(doc)
    }

    /// Where a scenario entry's file is: on disk (relative names against
    /// [`Self::base_dir`]) or, for the bundled demo, the built-in copy.
    fn source_of(&self, name: &str) -> Source {
        if self.embedded
            && let Some(text) = embedded_demo_file(name)
        {
            return Source::Embedded(text);
        }
        let p = Path::new(name);
        let full = match &self.base_dir {
            Some(dir) if p.is_relative() => dir.join(p),
            _ => p.to_path_buf(),
        };
        Source::Disk(paths::absolute(&full))
    }

    /// Every file the scenario names (element files, catalog files and
    /// operator ephemerides), with whether it is the own fleet's.
    fn all_named_files(&self) -> Vec<(String, bool)> {
        let mut named = self.named_files();
        named.extend(
            self.scenario
                .ephemeris_files
                .iter()
                .map(|e| (e.file.clone(), true)),
        );
        named
    }

    /// Every element file the scenario names, own fleet first: (name, own_fleet).
    fn named_files(&self) -> Vec<(String, bool)> {
        self.scenario
            .element_files
            .iter()
            .map(|n| (n.clone(), true))
            .chain(
                self.scenario
                    .catalog_files
                    .iter()
                    .map(|n| (n.clone(), false)),
            )
            .collect()
    }

    /// Re-reads every element file the scenario names. A file that cannot be
    /// read loads nothing and keeps its error, with the path that was tried.
    pub fn reload_elements(&mut self) {
        self.fleet.clear();
        self.catalog.clear();
        self.files.clear();
        for (name, own_fleet) in self.named_files() {
            match self.source_of(&name) {
                Source::Embedded(text) => {
                    self.add_element_bytes(text.as_bytes(), &name, None, own_fleet);
                }
                Source::Disk(path) => {
                    match passlane_files::read_limited(&path, MAX_ELEMENT_FILE_BYTES) {
                        Ok(bytes) => {
                            self.add_element_bytes(&bytes, &name, Some(path), own_fleet);
                        }
                        Err(e) => self.files.push(LoadedFile {
                            name: name.clone(),
                            own_fleet,
                            read_error: Some(format!("cannot read {}: {e}", path.display())),
                            path: Some(path),
                            sets_loaded: 0,
                            diagnostics: Vec::new(),
                            is_ephemeris: false,
                            ephemeris_note: None,
                        }),
                    }
                }
            }
        }
        // Operator ephemerides after the element sets: each takes over its
        // spacecraft (with the element set as the stated fallback).
        for e in self.scenario.ephemeris_files.clone() {
            let loaded = match self.source_of(&e.file) {
                Source::Embedded(text) => Ok((text.as_bytes().to_vec(), None)),
                Source::Disk(path) => passlane_files::read_limited(&path, MAX_ELEMENT_FILE_BYTES)
                    .map(|b| (b, Some(path.clone())))
                    .map_err(|err| (format!("cannot read {}: {err}", path.display()), path)),
            };
            match loaded {
                Ok((bytes, path)) => {
                    self.add_ephemeris_bytes(&bytes, &e.file, path, e.catalog_number);
                }
                Err((message, path)) => self.files.push(LoadedFile {
                    name: e.file.clone(),
                    own_fleet: true,
                    path: Some(path),
                    read_error: Some(message),
                    sets_loaded: 0,
                    diagnostics: Vec::new(),
                    is_ephemeris: true,
                    ephemeris_note: None,
                }),
            }
        }
        self.revision += 1;
    }

    /// Reads an operator ephemeris (CCSDS OEM, KVN or XML) and puts it into
    /// the fleet (replacing, with a stated fallback, the element set of the
    /// same spacecraft), recording what loaded and every diagnostic, as for
    /// element files. Returns whether it loaded.
    pub fn add_ephemeris_bytes(
        &mut self,
        bytes: &[u8],
        name: &str,
        path: Option<PathBuf>,
        catalog_number: Option<u32>,
    ) -> bool {
        use passlane_orbit::ephemeris::{EphemerisInput, attach_to_fleet, load_oem};
        let (eph, mut diagnostics) = load_oem(bytes, name, &self.scenario.earth_orientation);
        let mut note = None;
        let mut loaded = false;
        if let Some(ephemeris) = eph {
            let spans = ephemeris.spans();
            let mut words: Vec<String> = spans
                .iter()
                .map(|s| format!("{} to {}", s.start.to_iso_s(), s.stop.to_iso_s()))
                .collect();
            words.extend(
                spans
                    .windows(2)
                    .map(|w| format!("gap {} to {}", w[0].stop.to_iso_s(), w[1].start.to_iso_s())),
            );
            note = Some(format!("usable {}", words.join("; ")));
            let before = diagnostics.len();
            diagnostics.extend(attach_to_fleet(
                &mut self.fleet,
                vec![EphemerisInput {
                    ephemeris,
                    catalog_number,
                }],
            ));
            loaded = !diagnostics[before..]
                .iter()
                .any(|d| d.severity == Severity::Error);
        }
        self.files.push(LoadedFile {
            name: name.to_string(),
            own_fleet: true,
            path,
            read_error: None,
            sets_loaded: usize::from(loaded),
            diagnostics,
            is_ephemeris: true,
            ephemeris_note: note,
        });
        self.revision += 1;
        loaded
    }

    /// Loads element sets from bytes into the fleet or the catalog, recording
    /// what loaded and every diagnostic.
    fn add_element_bytes(
        &mut self,
        bytes: &[u8],
        name: &str,
        path: Option<PathBuf>,
        own_fleet: bool,
    ) -> usize {
        let options = LoadOptions {
            lenient: self.lenient,
        };
        let mut report = passlane_orbit::elements::load(bytes, name, options);
        let n = report.sets.len();
        let target = if own_fleet {
            &mut self.fleet
        } else {
            &mut self.catalog
        };
        // A newer set for a catalog number already loaded replaces it (but
        // not a spacecraft that moves by its own ephemeris).
        for set in std::mem::take(&mut report.sets) {
            match target
                .iter_mut()
                .find(|s| s.catalog_number == set.catalog_number)
            {
                Some(old) if old.ephemeris.is_some() => {}
                Some(old) if old.epoch <= set.epoch => *old = set,
                Some(_) => {}
                None => target.push(set),
            }
        }
        self.files.push(LoadedFile {
            name: name.to_string(),
            own_fleet,
            path,
            read_error: None,
            sets_loaded: n,
            diagnostics: with_omitted_note(report, name),
            is_ephemeris: false,
            ephemeris_note: None,
        });
        self.revision += 1;
        n
    }

    /// The name a file chosen by the user gets in the scenario: relative to
    /// the scenario's folder when it is inside it or near it, else absolute.
    fn name_for(&self, path: &Path) -> String {
        let abs = paths::absolute(path);
        match &self.base_dir {
            Some(dir) => paths::relative_to(&abs, dir)
                .map(|r| paths::scenario_name(&r))
                .unwrap_or_else(|| abs.display().to_string()),
            None => abs.display().to_string(),
        }
    }

    /// Reads an element file chosen by the user and adds it to the scenario's
    /// list; an operator ephemeris (a CCSDS OEM, told by its content) goes
    /// into the fleet and the scenario's `ephemeris_files`.
    pub fn add_element_file(&mut self, path: &Path, own_fleet: bool) -> anyhow::Result<usize> {
        // Read first, so a wrong path changes nothing.
        let bytes = passlane_files::read_limited(path, MAX_ELEMENT_FILE_BYTES)
            .map_err(|e| anyhow::anyhow!("cannot read {}: {e}", path.display()))?;
        let name = self.name_for(path);
        if is_oem(&bytes) {
            if !self.scenario.ephemeris_files.iter().any(|e| e.file == name) {
                self.scenario
                    .ephemeris_files
                    .push(passlane_plan::scenario::EphemerisFile {
                        file: name.clone(),
                        catalog_number: None,
                    });
            }
            self.reload_elements();
            self.touch();
            return Ok(self
                .files
                .iter()
                .find(|f| f.name == name && f.is_ephemeris)
                .map_or(0, |f| f.sets_loaded));
        }
        let list = if own_fleet {
            &mut self.scenario.element_files
        } else {
            &mut self.scenario.catalog_files
        };
        if !list.contains(&name) {
            list.push(name.clone());
        }
        self.reload_elements();
        self.touch();
        Ok(self
            .files
            .iter()
            .find(|f| f.name == name)
            .map_or(0, |f| f.sets_loaded))
    }

    /// Points the scenario's entry `index` (in [`Self::files`] order) at
    /// another file, e.g. when the named one is missing.
    pub fn relocate_file(&mut self, index: usize, path: &Path) -> anyhow::Result<()> {
        let Some(f) = self.files.get(index).cloned() else {
            anyhow::bail!("no element file {index}");
        };
        passlane_files::read_limited(path, MAX_ELEMENT_FILE_BYTES)
            .map_err(|e| anyhow::anyhow!("cannot read {}: {e}", path.display()))?;
        let name = self.name_for(path);
        if f.is_ephemeris {
            if let Some(e) = self
                .scenario
                .ephemeris_files
                .iter_mut()
                .find(|e| e.file == f.name)
            {
                e.file = name;
            }
            self.reload_elements();
            self.touch();
            return Ok(());
        }
        let list = if f.own_fleet {
            &mut self.scenario.element_files
        } else {
            &mut self.scenario.catalog_files
        };
        match list.iter_mut().find(|n| **n == f.name) {
            Some(n) => *n = name,
            None => list.push(name),
        }
        self.reload_elements();
        self.touch();
        Ok(())
    }

    /// Removes the scenario's entry `index` (in [`Self::files`] order).
    pub fn remove_file(&mut self, index: usize) {
        let Some(f) = self.files.get(index).cloned() else {
            return;
        };
        if f.is_ephemeris {
            self.scenario.ephemeris_files.retain(|e| e.file != f.name);
            self.reload_elements();
            self.touch();
            return;
        }
        let list = if f.own_fleet {
            &mut self.scenario.element_files
        } else {
            &mut self.scenario.catalog_files
        };
        list.retain(|n| *n != f.name);
        self.reload_elements();
        self.touch();
    }

    /// Whether saving to `path` moves the scenario away from the folder its
    /// element files are named against (so the user must choose between
    /// rewriting the names and copying the files).
    pub fn save_moves_files(&self, path: &Path) -> bool {
        let named = self.all_named_files();
        if named.is_empty() {
            return false;
        }
        let new_dir = path.parent().map(paths::absolute);
        let embedded = named
            .iter()
            .any(|(n, _)| matches!(self.source_of(n), Source::Embedded(_)));
        let relative = named.iter().any(|(n, _)| Path::new(n).is_relative());
        embedded || (relative && new_dir != self.base_dir)
    }

    /// Writes the scenario atomically to `path` (a crash never leaves a
    /// half-written file). Element files named relative to the old folder are
    /// handled as `mode` says; the report says what was done.
    pub fn save_as(&mut self, path: &Path, mode: SaveMode) -> anyhow::Result<SaveReport> {
        let new_dir = path
            .parent()
            .filter(|d| !d.as_os_str().is_empty())
            .map(paths::absolute)
            .unwrap_or_else(|| paths::absolute(Path::new(".")));
        let mode = if self.save_moves_files(path) {
            mode
        } else {
            SaveMode::KeepPaths
        };
        let named = self.all_named_files();
        let sources: Vec<(String, Source)> = named
            .iter()
            .map(|(n, _)| (n.clone(), self.source_of(n)))
            .collect();
        let moves = paths::plan_save(&sources, &new_dir, mode);
        let mut report = SaveReport::default();
        // Copies first: the scenario names them, so they must exist before it does.
        for m in &moves {
            let Some(from) = &m.write else { continue };
            let bytes = match from {
                CopyFrom::Embedded(t) => t.as_bytes().to_vec(),
                CopyFrom::Disk(p) => passlane_files::read_limited(p, MAX_ELEMENT_FILE_BYTES)
                    .map_err(|e| anyhow::anyhow!("cannot copy {}: {e}", p.display()))?,
            };
            let target = new_dir.join(&m.new_name);
            if std::fs::read(&target).is_ok_and(|b| b == bytes) {
                continue;
            }
            passlane_files::write_atomic(&target, &bytes)
                .map_err(|e| anyhow::anyhow!("cannot write {}: {e}", target.display()))?;
        }
        let mut scenario = self.scenario.clone();
        let rename = |list: &mut Vec<String>| {
            for n in list.iter_mut() {
                if let Some(m) = moves.iter().find(|m| m.old_name == *n) {
                    *n = m.new_name.clone();
                }
            }
        };
        rename(&mut scenario.element_files);
        rename(&mut scenario.catalog_files);
        for e in &mut scenario.ephemeris_files {
            if let Some(m) = moves.iter().find(|m| m.old_name == e.file) {
                e.file = m.new_name.clone();
            }
        }
        passlane_files::remove_stale_temporaries(path);
        passlane_files::write_atomic(path, scenario.to_json().as_bytes())
            .map_err(|e| anyhow::anyhow!("could not save {}: {e}", path.display()))?;
        report.lines.push(format!("Saved {}.", path.display()));
        report.lines.extend(
            moves
                .iter()
                .filter(|m| !m.note.is_empty())
                .map(|m| m.note.clone()),
        );
        let renamed = scenario.element_files != self.scenario.element_files
            || scenario.catalog_files != self.scenario.catalog_files
            || scenario.ephemeris_files != self.scenario.ephemeris_files;
        self.scenario = scenario;
        self.path = Some(path.to_path_buf());
        self.base_dir = Some(new_dir);
        self.embedded = false;
        self.dirty = false;
        if renamed {
            // Re-read under the new names, so what is shown is what the saved file gives.
            self.reload_elements();
        }
        Ok(report)
    }

    /// Switches lenient TLE reading and reloads every file.
    pub fn set_lenient(&mut self, lenient: bool) {
        if self.lenient != lenient {
            self.lenient = lenient;
            self.reload_elements();
        }
    }

    /// The scenario window, or one day from the earliest epoch when it has none.
    pub fn window(&self) -> (UtcTime, UtcTime) {
        if let Some(w) = self.scenario.window {
            return (w.start, w.end);
        }
        let start = self
            .fleet
            .iter()
            .map(|s| s.epoch)
            .reduce(UtcTime::min)
            .unwrap_or_else(UtcTime::now);
        (start, start.add_s(86_400.0))
    }

    /// Marks an edit: unsaved, and derived results out of date.
    pub fn touch(&mut self) {
        self.dirty = true;
        self.revision += 1;
    }

    /// The scenario as the planners get it: masks sorted (the editor keeps
    /// rows where the user put them until an edit is committed) and checked
    /// with the file loader's rules. The error is the loader's wording:
    /// `field path: reason`.
    pub fn checked_scenario(&self) -> Result<Scenario, String> {
        let mut s = self.scenario.clone();
        for st in &mut s.stations {
            st.normalise();
        }
        s.validate()
            .map_err(|(field, why)| format!("{field}: {why}"))?;
        Ok(s)
    }

    /// Errors of element files that could not be read (missing, unreadable).
    pub fn unread_files(&self) -> impl Iterator<Item = &LoadedFile> {
        self.files.iter().filter(|f| f.read_error.is_some())
    }

    /// Errors and warnings in all loaded files.
    pub fn diagnostic_counts(&self) -> (usize, usize) {
        let errors = self
            .files
            .iter()
            .flat_map(|f| &f.diagnostics)
            .filter(|d| d.severity == Severity::Error)
            .count();
        let all: usize = self.files.iter().map(|f| f.diagnostics.len()).sum();
        (errors, all - errors)
    }

    /// A short title for the window bar.
    pub fn title(&self) -> String {
        let file = self
            .path
            .as_ref()
            .and_then(|p| p.file_name())
            .map(|f| f.to_string_lossy().into_owned())
            .unwrap_or_else(|| "(not saved)".to_string());
        format!(
            "{}{} — {}",
            if self.dirty { "* " } else { "" },
            self.scenario.name,
            file
        )
    }
}

/// Whether bytes hold a CCSDS OEM (KVN version line, or an `<oem` root).
fn is_oem(bytes: &[u8]) -> bool {
    let head = String::from_utf8_lossy(&bytes[..bytes.len().min(4096)]);
    let t = head.trim_start_matches('\u{feff}').trim_start();
    t.starts_with("CCSDS_OEM_VERS") || (t.starts_with('<') && t.contains("<oem"))
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;

    #[test]
    fn embedded_demo_loads_with_its_fleet() {
        let doc = Document::demo();
        assert_eq!(doc.scenario.stations.len(), 3);
        assert_eq!(doc.fleet.len(), 6);
        // The debris catalog is bundled too, so the demo has something to screen against.
        assert_eq!(doc.catalog.len(), 2);
        assert!(
            doc.files
                .iter()
                .all(|f| f.diagnostics.is_empty() && f.read_error.is_none()),
            "{:?}",
            doc.files
        );
    }

    #[test]
    fn a_missing_element_file_loads_nothing_and_names_its_path() {
        let dir = std::env::temp_dir().join(format!("passlane-doc-missing-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&dir);
        std::fs::create_dir_all(&dir).unwrap();
        // The demo's own file name: it must not be replaced by the built-in copy.
        let mut s = Scenario::from_json(DEMO_SCENARIO_JSON, "demo.json").unwrap();
        s.element_files = vec!["demo-fleet.tle".into()];
        s.catalog_files.clear();
        let path = dir.join("s.json");
        std::fs::write(&path, s.to_json()).unwrap();
        let doc = Document::open(&path).unwrap();
        assert!(doc.fleet.is_empty());
        let err = doc.files[0].read_error.clone().unwrap();
        assert!(
            err.contains(&dir.join("demo-fleet.tle").display().to_string()),
            "{err}"
        );
        std::fs::remove_dir_all(&dir).unwrap();
    }

    #[test]
    #[allow(clippy::panic)] // a test reports its failure by panicking
    fn an_operator_ephemeris_joins_the_fleet_with_its_diagnostics_and_spans() {
        let mut doc = Document::demo();
        let oem = include_str!("../../../../tests/fixtures/oem-twin-teme.oem");
        assert!(is_oem(oem.as_bytes()));
        assert!(doc.add_ephemeris_bytes(oem.as_bytes(), "twin.oem", None, None));
        // Found by its OBJECT_ID; the element set of 90001 stays as the fallback.
        let set = doc.fleet.iter().find(|s| s.catalog_number == 90001);
        assert!(set.is_some_and(|s| s.ephemeris.is_some()));
        assert_eq!(doc.fleet.len(), 6);
        let f = doc.files.last().map(|f| {
            (
                f.sets_loaded,
                f.diagnostics.clone(),
                f.ephemeris_note.clone(),
            )
        });
        let Some((1, diags, Some(note))) = f else {
            panic!("{:?}", doc.files.last())
        };
        assert!(
            note.starts_with("usable 2026-12-01T00:00:00Z to 2026-12-01T12:00:00Z"),
            "{note}"
        );
        assert_eq!(diags.len(), 1);
        assert!(
            diags[0].to_string().starts_with("twin.oem:"),
            "{}",
            diags[0]
        );
        assert!(diags[0].message.contains("falls back"));
        // A bad one is reported like a bad element file, and nothing changes.
        assert!(!doc.add_ephemeris_bytes(
            b"CCSDS_OEM_VERS = 3.0\nORIGINATOR = X\n",
            "bad.oem",
            None,
            None
        ));
        let bad = doc
            .files
            .last()
            .map(|f| f.diagnostics[0].to_string())
            .unwrap_or_default();
        assert!(bad.starts_with("bad.oem:0: error: CREATION_DATE"), "{bad}");
    }
}

/// The findings the loader kept, plus one closing line counting those it only
/// counted (a file of junk keeps its first findings in full).
fn with_omitted_note(report: passlane_orbit::LoadReport, file: &str) -> Vec<Diagnostic> {
    let note = report.omitted_note();
    let severity = if report.omitted_errors > 0 {
        Severity::Error
    } else {
        Severity::Warning
    };
    let mut diagnostics = report.diagnostics;
    if let Some(message) = note {
        diagnostics.push(Diagnostic {
            severity,
            file: file.to_string(),
            line: 0,
            field: String::new(),
            message,
        });
    }
    diagnostics
}
