//! The state every view shares: the document, the latest finished pass
//! search, the time cursor and the selections. Views keep their own derived
//! caches and compare [`crate::doc::Document::revision`] to know when to rebuild.

use passlane_orbit::UtcTime;
use passlane_plan::scenario::ContactRef;
use passlane_plan::station::same_station_name;
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
    /// What the last file operation did, in words (not an error).
    pub info: String,
    /// Why the passes are not being updated (the scenario has a problem).
    pub passes_blocked: Option<String>,
    /// A close approach picked in its view, for the map: (primary, secondary, TCA).
    pub focus_approach: Option<(u32, u32, UtcTime)>,
    /// Spacecraft hidden on the map (catalog numbers), toggled from its legend.
    pub hidden: Vec<u32>,
}

/// Whether a contact is pinned (kept) or excluded (never used) by the scenario.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum PinKind {
    Keep,
    Never,
}

/// The next contact after an instant: (AOS, spacecraft or station name).
pub type NextContact = Option<(UtcTime, String)>;

impl AppState {
    pub fn new(doc: Document) -> Self {
        let (start, _) = doc.window();
        let status = match doc.open_warnings.as_slice() {
            [] => String::new(),
            [one] => format!("Warning: {one}"),
            [first, rest @ ..] => format!("Warning: {first} (and {} more)", rest.len()),
        };
        AppState {
            doc,
            passes: PassReport::default(),
            passes_revision: None,
            cursor: start,
            selected_pass: None,
            status,
            info: String::new(),
            passes_blocked: None,
            focus_approach: None,
            hidden: Vec::new(),
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

    /// Selects a pass and moves the time cursor to its highest point.
    pub fn select_pass(&mut self, index: usize) {
        if let Some(p) = self.passes.passes.get(index) {
            self.cursor = p.max_elevation_time;
            self.selected_pass = Some(index);
            self.clamp_cursor();
        }
    }

    /// The pin or exclusion matching a contact of `catalog_number` over
    /// `station_index` with the given AOS (and antenna, when the reference names one).
    pub fn pin_of(
        &self,
        catalog_number: u32,
        station_index: usize,
        antenna: Option<&str>,
        aos: UtcTime,
    ) -> Option<(PinKind, usize)> {
        let station = self.doc.scenario.stations.get(station_index)?;
        let matches = |r: &ContactRef| {
            r.catalog_number == catalog_number
                && same_station_name(&r.station, &station.name)
                && (r.aos.s_since(aos)).abs() <= r.tolerance_s
                && match (&r.antenna, antenna) {
                    (Some(a), Some(b)) => a == b,
                    _ => true,
                }
        };
        if let Some(i) = self.doc.scenario.pins.iter().position(matches) {
            return Some((PinKind::Keep, i));
        }
        self.doc
            .scenario
            .exclusions
            .iter()
            .position(matches)
            .map(|i| (PinKind::Never, i))
    }

    /// Pins or excludes a contact (replacing any earlier pin or exclusion of
    /// it), or clears it with `None`. The scenario then holds it, so it is
    /// saved, listed in Fleet and stations, and the plan follows it.
    pub fn set_pin(
        &mut self,
        catalog_number: u32,
        station_index: usize,
        antenna: Option<String>,
        aos: UtcTime,
        kind: Option<PinKind>,
    ) {
        while let Some((k, i)) = self.pin_of(catalog_number, station_index, antenna.as_deref(), aos)
        {
            match k {
                PinKind::Keep => self.doc.scenario.pins.remove(i),
                PinKind::Never => self.doc.scenario.exclusions.remove(i),
            };
        }
        let Some(station) = self.doc.scenario.stations.get(station_index) else {
            return;
        };
        if let Some(kind) = kind {
            let r = ContactRef {
                catalog_number,
                station: station.name.clone(),
                antenna,
                aos,
                tolerance_s: 120.0,
            };
            match kind {
                PinKind::Keep => self.doc.scenario.pins.push(r),
                PinKind::Never => self.doc.scenario.exclusions.push(r),
            }
        }
        self.doc.touch();
    }

    /// The first pass of a spacecraft whose LOS is after the cursor (one in
    /// progress counts): AOS and station.
    pub fn next_contact_of_spacecraft(&self, catalog_number: u32) -> NextContact {
        self.passes
            .passes
            .iter()
            .filter(|p| p.catalog_number == catalog_number && p.los >= self.cursor)
            .min_by(|a, b| a.aos.s_since_j2000().total_cmp(&b.aos.s_since_j2000()))
            .map(|p| (p.aos, p.station.clone()))
    }

    /// The first pass over a station whose LOS is after the cursor: AOS and spacecraft.
    pub fn next_contact_at_station(&self, station_index: usize) -> NextContact {
        self.passes
            .passes
            .iter()
            .filter(|p| p.station_index == station_index && p.los >= self.cursor)
            .min_by(|a, b| a.aos.s_since_j2000().total_cmp(&b.aos.s_since_j2000()))
            .map(|p| (p.aos, p.satellite.clone()))
    }

    /// "in 1 h 05 min (13:05, over X)" or "now (since 13:05, ...)" for a next contact.
    pub fn describe_next(&self, next: &NextContact, over: &str) -> String {
        match next {
            None => "none in the window".into(),
            Some((aos, who)) => {
                let dt = aos.s_since(self.cursor);
                if dt <= 0.0 {
                    format!("in contact now (since {}) {over} {who}", hm_label(*aos))
                } else {
                    format!(
                        "in {} ({}) {over} {who}",
                        duration_label(dt),
                        time_label(*aos)
                    )
                }
            }
        }
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
        let mut doc = doc;
        doc.revision = doc.revision.max(self.doc.revision) + 1;
        *self = AppState::new(doc);
    }
}

/// Formats a time for labels: `2026-12-01 13:05:09Z`.
pub fn time_label(t: UtcTime) -> String {
    t.to_iso_s().replace('T', " ")
}

/// A duration for labels: `42 s`, `7 min`, `1 h 05 min`, `2 d 03 h`.
pub fn duration_label(s: f64) -> String {
    let s = s.max(0.0);
    if s < 60.0 {
        format!("{s:.0} s")
    } else if s < 3600.0 {
        format!("{:.0} min", (s / 60.0).floor())
    } else if s < 86_400.0 {
        let m = (s / 60.0).floor() as u64;
        format!("{} h {:02} min", m / 60, m % 60)
    } else {
        let h = (s / 3600.0).floor() as u64;
        format!("{} d {:02} h", h / 24, h % 24)
    }
}

/// The date of a time: `2026-12-01`.
pub fn date_label(t: UtcTime) -> String {
    t.to_iso_s().get(0..10).unwrap_or("").to_string()
}

/// Hours and minutes of a time: `13:05`.
pub fn hm_label(t: UtcTime) -> String {
    let s = t.to_iso_s();
    s.get(11..16).unwrap_or("").to_string()
}
