//! The state every view shares: the document, the latest finished pass
//! search, the time cursor and the selections. Views keep their own derived
//! caches and compare [`crate::doc::Document::revision`] to know when to rebuild.

use passlane_orbit::UtcTime;
use passlane_plan::{Pass, PassOptions, PassReport};

use crate::doc::Document;

/// Shared application state (no drawing code, no caches).
pub struct AppState {
    pub doc: Document,
    /// Result of the last finished pass search and the revision it was made for.
    pub passes: PassReport,
    pub passes_revision: Option<u64>,
    /// The instant every view shows.
    pub cursor: UtcTime,
    /// Index into `passes.passes`.
    pub selected_pass: Option<usize>,
    /// A message for the status line (errors from file operations and the like).
    pub status: String,
}

impl AppState {
    pub fn new(doc: Document) -> Self {
        let (start, _) = doc.window();
        AppState {
            doc,
            passes: PassReport::default(),
            passes_revision: None,
            cursor: start,
            selected_pass: None,
            status: String::new(),
        }
    }

    /// The pass-search settings for the current document: the same settings the
    /// command line derives from a scenario (window and Earth orientation).
    pub fn pass_options(&self) -> PassOptions {
        let (start, end) = self.doc.window();
        PassOptions {
            earth_orientation: self.doc.scenario.earth_orientation,
            ..PassOptions::new(start, end)
        }
    }

    pub fn selected(&self) -> Option<&Pass> {
        self.selected_pass.and_then(|i| self.passes.passes.get(i))
    }

    /// Colour index of a spacecraft: its position in the fleet, so colours stay
    /// put when passes change.
    pub fn fleet_index(&self, catalog_number: u32) -> usize {
        self.doc
            .fleet
            .iter()
            .position(|s| s.catalog_number == catalog_number)
            .unwrap_or(0)
    }

    /// Clamps the cursor into the window (after the window or document changed).
    pub fn clamp_cursor(&mut self) {
        let (start, end) = self.doc.window();
        self.cursor = self.cursor.max(start).min(end);
    }

    /// Replaces the document (new/open) and clears everything derived from the old one.
    pub fn replace_document(&mut self, doc: Document) {
        let revision = doc.revision.max(self.doc.revision) + 1;
        *self = AppState::new(Document { revision, ..doc });
    }
}

/// Formats a time for labels: `2026-12-01 13:05:09Z`.
pub fn time_label(t: UtcTime) -> String {
    t.to_iso_s().replace('T', " ")
}

/// Hours and minutes of a time: `13:05`.
pub fn hm_label(t: UtcTime) -> String {
    let s = t.to_iso_s();
    s.get(11..16).unwrap_or("").to_string()
}
