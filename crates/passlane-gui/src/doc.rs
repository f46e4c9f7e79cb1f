//! The open scenario and what was loaded for it: the part of the app state
//! that is saved and that every view reads. Caches derived from it live in the
//! views and are rebuilt when [`Document::revision`] changes.

use std::path::{Path, PathBuf};

use passlane_orbit::{Diagnostic, ElementSet, LoadOptions, Severity, UtcTime};
use passlane_plan::Scenario;
use passlane_plan::scenario::Window;

/// The bundled demo scenario, used when no file is given and none is found on disk.
pub const DEMO_SCENARIO_JSON: &str = include_str!("../../../scenarios/demo.json");
/// The demo fleet the demo scenario names.
pub const DEMO_FLEET_TLE: &str = include_str!("../../../scenarios/demo-fleet.tle");
/// The catalog objects the demo scenario screens against.
pub const DEMO_DEBRIS_TLE: &str = include_str!("../../../scenarios/demo-debris.tle");

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
    pub sets_loaded: usize,
    pub diagnostics: Vec<Diagnostic>,
    /// For an operator ephemeris (OEM): its usable spans and the gaps
    /// between them, in words.
    pub ephemeris_note: Option<String>,
}

/// The open scenario with its loaded element sets.
#[derive(Debug, Clone)]
pub struct Document {
    pub scenario: Scenario,
    /// Where it is saved; `None` for a new or bundled scenario.
    pub path: Option<PathBuf>,
    /// Unsaved edits exist.
    pub dirty: bool,
    /// The operator's spacecraft.
    pub fleet: Vec<ElementSet>,
    /// Other objects, for screening.
    pub catalog: Vec<ElementSet>,
    pub files: Vec<LoadedFile>,
    /// Bumped on every change that invalidates derived results (passes, tracks).
    pub revision: u64,
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
            dirty: false,
            fleet: Vec::new(),
            catalog: Vec::new(),
            files: Vec::new(),
            revision: 0,
        }
    }

    /// The bundled demo, from the embedded copies (works with no files on disk).
    pub fn demo() -> Self {
        match Scenario::from_json(DEMO_SCENARIO_JSON, "demo.json") {
            Ok(scenario) => {
                let mut doc = Document {
                    scenario,
                    ..Document::new_empty()
                };
                doc.reload_elements(None);
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
        let bytes = passlane_files::read_limited(path, MAX_SCENARIO_BYTES)
            .map_err(|e| anyhow::anyhow!("{}: {e}", path.display()))?;
        let text = String::from_utf8_lossy(&bytes);
        let scenario = Scenario::from_json(&text, &path.display().to_string())?;
        let mut doc = Document {
            scenario,
            path: Some(path.to_path_buf()),
            ..Document::new_empty()
        };
        doc.reload_elements(path.parent());
        Ok(doc)
    }

    /// Writes the scenario atomically (a crash never leaves a half-written file).
    pub fn save_to(&mut self, path: &Path) -> anyhow::Result<()> {
        passlane_files::remove_stale_temporaries(path);
        passlane_files::write_atomic(path, self.scenario.to_json().as_bytes())
            .map_err(|e| anyhow::anyhow!("could not save {}: {e}", path.display()))?;
        self.path = Some(path.to_path_buf());
        self.dirty = false;
        Ok(())
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

    /// Re-reads every element file the scenario names.
    pub fn reload_elements(&mut self, base: Option<&Path>) {
        self.fleet.clear();
        self.catalog.clear();
        self.files.clear();
        let own = self.scenario.element_files.clone();
        let other = self.scenario.catalog_files.clone();
        for (name, own_fleet) in own
            .iter()
            .map(|n| (n, true))
            .chain(other.iter().map(|n| (n, false)))
        {
            let resolved = match base {
                Some(dir) if Path::new(name).is_relative() => dir.join(name),
                _ => PathBuf::from(name),
            };
            let bytes = match passlane_files::read_limited(&resolved, MAX_ELEMENT_FILE_BYTES) {
                Ok(b) => Some(b),
                // The bundled demo names its element files; use the embedded copies when they are not on disk.
                Err(_) if embedded_demo_file(name).is_some() => {
                    embedded_demo_file(name).map(|t| t.as_bytes().to_vec())
                }
                Err(e) => {
                    self.files.push(LoadedFile {
                        name: name.clone(),
                        own_fleet,
                        sets_loaded: 0,
                        diagnostics: vec![Diagnostic {
                            severity: Severity::Error,
                            file: name.clone(),
                            line: 0,
                            field: String::new(),
                            message: format!("could not read the file: {e}"),
                        }],
                        ephemeris_note: None,
                    });
                    None
                }
            };
            if let Some(bytes) = bytes {
                self.add_element_bytes(&bytes, name, own_fleet);
            }
        }
        let ephemerides = self.scenario.ephemeris_files.clone();
        for e in &ephemerides {
            let resolved = match base {
                Some(dir) if Path::new(&e.file).is_relative() => dir.join(&e.file),
                _ => PathBuf::from(&e.file),
            };
            match passlane_files::read_limited(&resolved, MAX_ELEMENT_FILE_BYTES) {
                Ok(bytes) => {
                    self.add_ephemeris_bytes(&bytes, &e.file, e.catalog_number);
                }
                Err(err) => self.files.push(LoadedFile {
                    name: e.file.clone(),
                    own_fleet: true,
                    sets_loaded: 0,
                    diagnostics: vec![Diagnostic {
                        severity: Severity::Error,
                        file: e.file.clone(),
                        line: 0,
                        field: String::new(),
                        message: format!("could not read the file: {err}"),
                    }],
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
                .map(|s| format!("{} to {}", time_words(s.start), time_words(s.stop)))
                .collect();
            let gaps: Vec<String> = spans
                .windows(2)
                .map(|w| {
                    format!(
                        "gap {} to {}",
                        time_words(w[0].stop),
                        time_words(w[1].start)
                    )
                })
                .collect();
            words.extend(gaps);
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
            sets_loaded: usize::from(loaded),
            diagnostics,
            ephemeris_note: note,
        });
        self.revision += 1;
        loaded
    }

    /// Loads element sets from bytes into the fleet or the catalog, recording
    /// what loaded and every diagnostic.
    pub fn add_element_bytes(&mut self, bytes: &[u8], name: &str, own_fleet: bool) -> usize {
        let report = passlane_orbit::elements::load(bytes, name, LoadOptions::default());
        let n = report.sets.len();
        let target = if own_fleet {
            &mut self.fleet
        } else {
            &mut self.catalog
        };
        // A newer set for a catalog number already loaded replaces it (but
        // not a spacecraft that moves by its own ephemeris).
        for set in report.sets {
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
            sets_loaded: n,
            diagnostics: report.diagnostics,
            ephemeris_note: None,
        });
        self.revision += 1;
        n
    }

    /// Reads an element file chosen by the user and adds it to the scenario's
    /// list; an operator ephemeris (a CCSDS OEM, told by its content) goes
    /// into the fleet and the scenario's `ephemeris_files`.
    pub fn add_element_file(&mut self, path: &Path, own_fleet: bool) -> anyhow::Result<usize> {
        let bytes = passlane_files::read_limited(path, MAX_ELEMENT_FILE_BYTES)
            .map_err(|e| anyhow::anyhow!("{}: {e}", path.display()))?;
        let name = path.display().to_string();
        if is_oem(&bytes) {
            let n = usize::from(self.add_ephemeris_bytes(&bytes, &name, None));
            if !self.scenario.ephemeris_files.iter().any(|e| e.file == name) {
                self.scenario
                    .ephemeris_files
                    .push(passlane_plan::scenario::EphemerisFile {
                        file: name,
                        catalog_number: None,
                    });
            }
            self.touch();
            return Ok(n);
        }
        let n = self.add_element_bytes(&bytes, &name, own_fleet);
        let list = if own_fleet {
            &mut self.scenario.element_files
        } else {
            &mut self.scenario.catalog_files
        };
        if !list.contains(&name) {
            list.push(name);
        }
        self.touch();
        Ok(n)
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

fn time_words(t: UtcTime) -> String {
    t.to_iso_s()
}

#[cfg(test)]
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
            doc.files.iter().all(|f| f.diagnostics.is_empty()),
            "{:?}",
            doc.files
        );
    }

    #[test]
    #[allow(clippy::panic)] // a test reports its failure by panicking
    fn an_operator_ephemeris_joins_the_fleet_with_its_diagnostics_and_spans() {
        let mut doc = Document::demo();
        let oem = include_str!("../../../tests/fixtures/oem-twin-teme.oem");
        assert!(is_oem(oem.as_bytes()));
        assert!(doc.add_ephemeris_bytes(oem.as_bytes(), "twin.oem", None));
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
