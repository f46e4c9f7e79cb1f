//! The network editor ("Fleet and stations"): element files and their
//! diagnostics, the spacecraft (orbit summary, demands, priorities,
//! hard-body radii), the stations, the scenario's settings (window, Earth
//! orientation, screening), and the pins and exclusions of the plan.
//!
//! Every field is validated as it is typed with the file loader's rules and
//! wording ([`crate::doc::Document::checked_scenario`]); every edit marks the
//! document changed, which re-runs the pass search on a worker thread.

use std::path::PathBuf;

use eframe::egui::{self, CollapsingHeader, Grid, Ui};
use passlane_orbit::{
    OrbitSummary, REFUSE_AFTER_DAYS, STALE_AFTER_DAYS, Severity, UtcTime, element_age_days,
    window_element_age_days,
};
use passlane_plan::scenario::SatelliteNeeds;

use crate::palette;
use crate::state::{AppState, time_label};
use crate::views::settings::SettingsEditor;
use crate::views::stations::StationsEditor;
use crate::widgets::{self, Edit};

/// The part of the editor on show.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Section {
    #[default]
    Files,
    Spacecraft,
    Stations,
    Settings,
    Pins,
}

/// A request to the shell for a native file dialog.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum BrowseRequest {
    /// Add a file to the fleet (true) or the catalog (false).
    Add { own_fleet: bool },
    /// Point entry `index` of the loaded files at another file.
    Locate { index: usize },
}

#[derive(Default)]
pub struct FleetView {
    pub section: Section,
    typed_path: String,
    load_as_catalog: bool,
    browse: Option<BrowseRequest>,
    /// Typed replacement paths for missing files, by file index.
    locate_paths: Vec<String>,
    stations: StationsEditor,
    settings: SettingsEditor,
}

impl FleetView {
    /// A pending "Browse…" or "Locate…" click.
    pub fn take_browse_request(&mut self) -> Option<BrowseRequest> {
        self.browse.take()
    }

    pub fn ui(&mut self, ui: &mut Ui, state: &mut AppState) {
        ui.horizontal_wrapped(|ui| {
            for (s, label) in [
                (Section::Files, "Element files"),
                (Section::Spacecraft, "Spacecraft"),
                (Section::Stations, "Stations"),
                (Section::Settings, "Scenario settings"),
                (Section::Pins, "Pins and exclusions"),
            ] {
                ui.selectable_value(&mut self.section, s, label);
            }
        });
        if let Err(e) = state.doc.checked_scenario() {
            ui.colored_label(
                palette::VERMILLION,
                format!("The scenario has a problem: {e}. Passes, the plan and screening wait until it is fixed."),
            );
        }
        ui.separator();
        widgets::scroll(ui, "fleet-section-scroll", |ui| match self.section {
            Section::Files => self.files(ui, state),
            Section::Spacecraft => spacecraft(ui, state),
            Section::Stations => self.stations.ui(ui, state),
            Section::Settings => self.settings.settings(ui, state),
            Section::Pins => self.settings.pins(ui, state),
        });
    }

    fn files(&mut self, ui: &mut Ui, state: &mut AppState) {
        ui.heading("Element files");
        ui.horizontal_wrapped(|ui| {
            ui.checkbox(
                &mut self.load_as_catalog,
                "Load as catalog (objects to screen against)",
            );
            if ui.button("Browse…").clicked() {
                self.browse = Some(BrowseRequest::Add {
                    own_fleet: !self.load_as_catalog,
                });
            }
            let l = ui.label("or path:");
            ui.add(
                egui::TextEdit::singleline(&mut self.typed_path)
                    .hint_text("TLE, OMM or OEM file")
                    .desired_width(240.0),
            )
            .labelled_by(l.id);
            if ui.button("Load file").clicked() && !self.typed_path.trim().is_empty() {
                let path = PathBuf::from(self.typed_path.trim());
                if let Err(e) = state.doc.add_element_file(&path, !self.load_as_catalog) {
                    state.status = format!("{e:#}");
                }
            }
        });
        let mut lenient = state.doc.lenient;
        if ui
            .checkbox(
                &mut lenient,
                "Lenient mode: accept TLE lines with extra columns or a wrong checksum, with a warning",
            )
            .changed()
        {
            state.doc.set_lenient(lenient);
        }
        self.locate_paths
            .resize(state.doc.files.len(), String::new());
        let mut locate: Option<(usize, PathBuf)> = None;
        let mut remove = None;
        Grid::new("loaded-files")
            .striped(true)
            .num_columns(5)
            .show(ui, |ui| {
                for h in ["File", "Role", "Loaded", "Problems", ""] {
                    ui.strong(h);
                }
                ui.end_row();
                for (i, f) in state.doc.files.iter().enumerate() {
                    ui.label(&f.name).on_hover_text(
                        f.path
                            .as_ref()
                            .map(|p| p.display().to_string())
                            .unwrap_or_else(|| "built into the app (bundled demo)".into()),
                    );
                    ui.label(match (f.is_ephemeris, f.own_fleet) {
                        (true, _) => "ephemeris",
                        (false, true) => "fleet",
                        (false, false) => "catalog",
                    });
                    match &f.ephemeris_note {
                        Some(note) => ui.label(format!("{}, {note}", f.sets_loaded)),
                        None => ui.label(f.sets_loaded.to_string()),
                    };
                    if let Some(e) = &f.read_error {
                        ui.vertical(|ui| {
                            ui.colored_label(palette::VERMILLION, e);
                            ui.label("Nothing was loaded from it. Point to the file:");
                            ui.horizontal(|ui| {
                                if ui.button(format!("Locate {}…", f.name)).clicked() {
                                    self.browse = Some(BrowseRequest::Locate { index: i });
                                }
                                let l = ui.label("path");
                                ui.add(
                                    egui::TextEdit::singleline(&mut self.locate_paths[i])
                                        .desired_width(200.0),
                                )
                                .labelled_by(l.id);
                                if ui.button(format!("Use this file for {}", f.name)).clicked()
                                    && !self.locate_paths[i].trim().is_empty()
                                {
                                    locate = Some((i, PathBuf::from(self.locate_paths[i].trim())));
                                }
                            });
                        });
                    } else {
                        diagnostics_ui(ui, i, f);
                    }
                    if ui.small_button(format!("Remove {}", f.name)).clicked() {
                        remove = Some(i);
                    }
                    ui.end_row();
                }
            });
        if let Some((i, p)) = locate
            && let Err(e) = state.doc.relocate_file(i, &p)
        {
            state.status = format!("{e:#}");
        }
        if let Some(i) = remove {
            state.doc.remove_file(i);
        }
        ui.label(format!(
            "{} spacecraft in the fleet, {} catalog objects.",
            state.doc.fleet.len(),
            state.doc.catalog.len()
        ));
    }
}

fn diagnostics_ui(ui: &mut Ui, index: usize, f: &crate::doc::LoadedFile) {
    let errors = f
        .diagnostics
        .iter()
        .filter(|d| d.severity == Severity::Error)
        .count();
    let warnings = f.diagnostics.len() - errors;
    if f.diagnostics.is_empty() {
        ui.label("none");
        return;
    }
    // The id names the file's row: two files with the same counts must not share one.
    CollapsingHeader::new(format!("{errors} errors, {warnings} warnings"))
        .id_salt(("diagnostics", index))
        .show(ui, |ui| {
            for d in f.diagnostics.iter().take(200) {
                let colour = if d.severity == Severity::Error {
                    palette::VERMILLION
                } else {
                    palette::YELLOW
                };
                ui.colored_label(colour, d.to_string());
            }
            if f.diagnostics.len() > 200 {
                ui.label(format!("… and {} more", f.diagnostics.len() - 200));
            }
        });
}

/// The fleet's element sets whose epoch is more than [`STALE_AFTER_DAYS`]
/// from the window (an entry whose operator ephemeris covers the window does
/// not count): (name, days), the farthest first.
pub fn stale_sets(state: &AppState) -> Vec<(String, f64)> {
    let (start, end) = state.doc.window();
    passlane_orbit::stale_sets(&state.doc.fleet, start, end)
        .into_iter()
        .map(|(s, d)| (s.name.clone(), d))
        .collect()
}

/// A badge where passes or a plan rest on stale element sets; beyond
/// [`REFUSE_AFTER_DAYS`] (where the command line refuses without
/// `--allow-stale`) it says the results are not usable.
pub fn stale_warning(ui: &mut Ui, state: &AppState) {
    let stale = stale_sets(state);
    if stale.is_empty() {
        return;
    }
    let worst = stale.iter().map(|(_, d)| *d).fold(0.0, f64::max);
    let text = if worst > REFUSE_AFTER_DAYS {
        format!(
            "Stale elements: {} spacecraft have element sets up to {worst:.0} days from the window, \
             beyond {REFUSE_AFTER_DAYS:.0} days: their passes and close approaches are not usable.",
            stale.len()
        )
    } else {
        format!(
            "Stale elements: {} spacecraft have element sets up to {worst:.1} days from the window; their passes can be minutes off.",
            stale.len()
        )
    };
    ui.colored_label(palette::VERMILLION, text)
        .on_hover_text(format!(
            "{}\nCommon practice: element sets degrade by about 1-3 km a day in LEO. Load newer ones in Fleet and stations.",
            stale
                .iter()
                .map(|(n, d)| format!("{n}: {d:.1} days"))
                .collect::<Vec<_>>()
                .join("\n")
        ));
}

fn spacecraft(ui: &mut Ui, state: &mut AppState) {
    ui.heading("Spacecraft");
    let (start, end) = state.doc.window();
    let now = UtcTime::now();
    ui.label(format!(
        "Element age is counted from now ({} UTC, the computer's clock) and from the window's start; \
         sets more than {STALE_AFTER_DAYS:.0} days from the window are flagged (common practice: \
         element sets degrade by about 1–3 km a day in LEO).",
        time_label(now)
    ));
    Grid::new("orbit-summary")
        .striped(true)
        .num_columns(9)
        .show(ui, |ui| {
            for h in [
                "Spacecraft",
                "Catalog",
                "Epoch (UTC)",
                "Age now (d)",
                "Age at window start (d)",
                "Period (min)",
                "Perigee (km)",
                "Apogee (km)",
                "Incl. (deg)",
            ] {
                ui.strong(h);
            }
            ui.end_row();
            for (i, set) in state.doc.fleet.iter().enumerate() {
                let s = OrbitSummary::of(set);
                ui.colored_label(palette::series(i), &set.name);
                ui.label(set.catalog_number.to_string());
                ui.label(time_label(set.epoch));
                ui.label(format!("{:.1}", element_age_days(set, now)));
                // As the badge counts it: an ephemeris covering the window
                // leaves no element set to age.
                let off = window_element_age_days(set, start, end).unwrap_or(0.0);
                let at_start = element_age_days(set, start);
                if off > STALE_AFTER_DAYS {
                    ui.colored_label(palette::VERMILLION, format!("{at_start:.1} (stale)"))
                        .on_hover_text(format!("The epoch is {off:.1} days from the window."));
                } else {
                    ui.label(format!("{at_start:.1}"))
                        .on_hover_text("Negative: the epoch is after the window's start (SGP4 runs backwards there).");
                }
                ui.label(format!("{:.2}", s.period_min));
                ui.label(format!("{:.0}", s.perigee_altitude_km));
                ui.label(format!("{:.0}", s.apogee_altitude_km));
                ui.label(format!("{:.2}", set.inclination_deg));
                ui.end_row();
            }
        });
    ui.small(passlane_orbit::summary::SEMI_MAJOR_AXIS_NOTE);
    ui.add_space(8.0);
    ui.heading("Demands, priorities and hard-body radii");
    ui.label("What each spacecraft needs from the network each day (the plan), and its size for collision probability.");
    let mut edit = Edit::default();
    let fleet: Vec<(u32, String)> = state
        .doc
        .fleet
        .iter()
        .map(|s| (s.catalog_number, s.name.clone()))
        .collect();
    for (i, (number, name)) in fleet.iter().enumerate() {
        let sats = &mut state.doc.scenario.satellites;
        let mut e = Edit::default();
        let existing = sats.iter().position(|n| n.catalog_number == *number);
        let k = match existing {
            Some(k) => k,
            None => {
                sats.push(SatelliteNeeds {
                    catalog_number: *number,
                    priority: 1.0,
                    min_contact_s: 0.0,
                    contacts_per_day: None,
                    downlink_mb_per_day: None,
                    allow_simultaneous: false,
                    hard_body_radius_m: None,
                });
                // Only an edit keeps it: see the clean-up below.
                sats.len() - 1
            }
        };
        let n = &mut sats[k];
        CollapsingHeader::new(format!("{name} ({number})"))
            .id_salt(("needs", *number))
            .default_open(i == 0)
            .show(ui, |ui| {
                Grid::new(("needs-grid", *number))
                    .num_columns(2)
                    .show(ui, |ui| {
                        e |= widgets::number(
                            ui,
                            &format!("{name} priority"),
                            (*number, "prio"),
                            &mut n.priority,
                            70.0,
                        );
                        ui.end_row();
                        e |= widgets::number(
                            ui,
                            &format!("{name} shortest useful contact (s)"),
                            (*number, "minc"),
                            &mut n.min_contact_s,
                            70.0,
                        );
                        ui.end_row();
                    });
                ui.horizontal_wrapped(|ui| {
                    e |= widgets::optional_number(
                        ui,
                        &format!("{name} contacts per day"),
                        (*number, "cpd"),
                        &mut n.contacts_per_day,
                        4.0,
                        60.0,
                    );
                });
                ui.horizontal_wrapped(|ui| {
                    e |= widgets::optional_number(
                        ui,
                        &format!("{name} downlink per day (MB)"),
                        (*number, "mbpd"),
                        &mut n.downlink_mb_per_day,
                        100.0,
                        70.0,
                    );
                });
                e.changed |= ui
                    .checkbox(
                        &mut n.allow_simultaneous,
                        format!("{name} may use two antennas at once"),
                    )
                    .changed();
                ui.horizontal_wrapped(|ui| {
                    e |= widgets::optional_number(
                        ui,
                        &format!("{name} hard-body radius (m)"),
                        (*number, "hbr"),
                        &mut n.hard_body_radius_m,
                        1.0,
                        60.0,
                    );
                });
            });
        // An entry added only to show its fields, and not edited, is not kept.
        if existing.is_none() && !e.changed {
            sats.remove(k);
        }
        edit |= e;
    }
    if fleet.is_empty() {
        ui.label("No spacecraft loaded: add an element file first.");
    }
    if edit.changed {
        state.doc.touch();
    }
}
