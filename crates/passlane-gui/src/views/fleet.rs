//! Fleet and stations: load element files (file dialog or typed path), see
//! what loaded and every diagnostic, read each spacecraft's orbit summary, and
//! edit the ground stations. Every edit marks the document changed, which
//! re-runs the pass search on a worker thread.

use std::path::PathBuf;

use eframe::egui;
use passlane_orbit::{OrbitSummary, Severity, element_age_days};
use passlane_plan::Station;
use passlane_plan::station::{Channel, LinkDirection, MaskPoint, MountLimits, unused_station_name};

use crate::palette;
use crate::state::{AppState, time_label};

#[derive(Default)]
pub struct FleetView {
    typed_path: String,
    load_as_catalog: bool,
    browse: Option<bool>,
    selected_station: usize,
}

impl FleetView {
    /// A pending "Browse…" click: Some(own_fleet).
    pub fn take_browse_request(&mut self) -> Option<bool> {
        self.browse.take()
    }

    pub fn ui(&mut self, ui: &mut egui::Ui, state: &mut AppState) {
        egui::Panel::right("station-editor")
            .resizable(true)
            .default_size(430.0)
            .show(ui, |ui| {
                egui::ScrollArea::vertical()
                    .id_salt("stations-scroll")
                    .show(ui, |ui| self.stations(ui, state));
            });
        egui::ScrollArea::vertical()
            .id_salt("fleet-scroll")
            .show(ui, |ui| {
                self.loader(ui, state);
                ui.separator();
                self.summaries(ui, state);
            });
    }

    fn loader(&mut self, ui: &mut egui::Ui, state: &mut AppState) {
        ui.heading("Element files");
        ui.horizontal_wrapped(|ui| {
            ui.checkbox(
                &mut self.load_as_catalog,
                "Load as catalog (objects to screen against)",
            );
            if ui.button("Browse…").clicked() {
                self.browse = Some(!self.load_as_catalog);
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
        egui::Grid::new("loaded-files")
            .striped(true)
            .num_columns(4)
            .show(ui, |ui| {
                ui.strong("File");
                ui.strong("Role");
                ui.strong("Loaded");
                ui.strong("Problems");
                ui.end_row();
                for f in &state.doc.files {
                    ui.label(&f.name);
                    ui.label(match (&f.ephemeris_note, f.own_fleet) {
                        (Some(_), _) => "ephemeris",
                        (None, true) => "fleet",
                        (None, false) => "catalog",
                    });
                    match &f.ephemeris_note {
                        Some(note) => ui.label(format!("{}, {note}", f.sets_loaded)),
                        None => ui.label(f.sets_loaded.to_string()),
                    };
                    let errors = f
                        .diagnostics
                        .iter()
                        .filter(|d| d.severity == Severity::Error)
                        .count();
                    let warnings = f.diagnostics.len() - errors;
                    if f.diagnostics.is_empty() {
                        ui.label("none");
                    } else {
                        ui.collapsing(format!("{errors} errors, {warnings} warnings"), |ui| {
                            for d in f.diagnostics.iter().take(200) {
                                let colour = if d.severity == Severity::Error {
                                    palette::VERMILLION
                                } else {
                                    palette::YELLOW
                                };
                                ui.colored_label(colour, d.to_string());
                            }
                        });
                    }
                    ui.end_row();
                }
            });
        ui.label(format!(
            "{} spacecraft in the fleet, {} catalog objects.",
            state.doc.fleet.len(),
            state.doc.catalog.len()
        ));
    }

    fn summaries(&mut self, ui: &mut egui::Ui, state: &AppState) {
        ui.heading("Orbit summary");
        egui::Grid::new("orbit-summary")
            .striped(true)
            .num_columns(8)
            .show(ui, |ui| {
                for h in [
                    "Spacecraft",
                    "Catalog",
                    "Epoch",
                    "Age (d)",
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
                    ui.label(format!("{:.1}", element_age_days(set, state.cursor)));
                    ui.label(format!("{:.2}", s.period_min));
                    ui.label(format!("{:.0}", s.perigee_altitude_km));
                    ui.label(format!("{:.0}", s.apogee_altitude_km));
                    ui.label(format!("{:.2}", set.inclination_deg));
                    ui.end_row();
                }
            });
    }

    fn stations(&mut self, ui: &mut egui::Ui, state: &mut AppState) {
        ui.heading("Stations");
        let mut changed = false;
        ui.horizontal_wrapped(|ui| {
            for (i, s) in state.doc.scenario.stations.iter().enumerate() {
                ui.selectable_value(&mut self.selected_station, i, &s.name);
            }
            if ui.button("Add station").clicked() {
                // A name no station has yet: passes and plans identify
                // stations by index, but people read names.
                let name = unused_station_name(&state.doc.scenario.stations, "Station");
                state
                    .doc
                    .scenario
                    .stations
                    .push(Station::new(&name, 0.0, 0.0, 0.0));
                self.selected_station = state.doc.scenario.stations.len() - 1;
                changed = true;
            }
        });
        let count = state.doc.scenario.stations.len();
        if count == 0 {
            ui.label("No stations: add one to find passes.");
            return;
        }
        self.selected_station = self.selected_station.min(count - 1);
        let mut remove = false;
        if let Some(st) = state.doc.scenario.stations.get_mut(self.selected_station) {
            changed |= station_editor(ui, st, &mut remove);
        }
        if remove {
            state.doc.scenario.stations.remove(self.selected_station);
            self.selected_station = self.selected_station.saturating_sub(1);
            changed = true;
        }
        if changed {
            if let Some(st) = state.doc.scenario.stations.get_mut(self.selected_station) {
                st.normalise();
            }
            state.doc.touch();
        }
    }
}

/// The fields of one station; returns true when anything changed.
fn station_editor(ui: &mut egui::Ui, st: &mut Station, remove: &mut bool) -> bool {
    let mut changed = false;
    egui::Grid::new("station-fields")
        .num_columns(2)
        .show(ui, |ui| {
            let l = ui.label("Name");
            changed |= ui
                .text_edit_singleline(&mut st.name)
                .labelled_by(l.id)
                .changed();
            ui.end_row();
            let l = ui.label("Latitude (deg)");
            changed |= ui
                .add(
                    egui::DragValue::new(&mut st.latitude_deg)
                        .range(-90.0..=90.0)
                        .speed(0.01),
                )
                .labelled_by(l.id)
                .changed();
            ui.end_row();
            let l = ui.label("Longitude (deg)");
            changed |= ui
                .add(
                    egui::DragValue::new(&mut st.longitude_deg)
                        .range(-180.0..=180.0)
                        .speed(0.01),
                )
                .labelled_by(l.id)
                .changed();
            ui.end_row();
            let l = ui.label("Height (m)");
            changed |= ui
                .add(egui::DragValue::new(&mut st.height_m).range(-500.0..=9000.0))
                .labelled_by(l.id)
                .changed();
            ui.end_row();
            let l = ui.label("Minimum elevation (deg)");
            changed |= ui
                .add(
                    egui::DragValue::new(&mut st.min_elevation_deg)
                        .range(-5.0..=89.0)
                        .speed(0.1),
                )
                .labelled_by(l.id)
                .changed();
            ui.end_row();
        });
    ui.collapsing(
        format!("Horizon mask ({} points)", st.horizon_mask.len()),
        |ui| {
            let mut drop = None;
            for (i, p) in st.horizon_mask.iter_mut().enumerate() {
                ui.horizontal(|ui| {
                    let l = ui.label("az");
                    changed |= ui
                        .add(egui::DragValue::new(&mut p.azimuth_deg).range(0.0..=359.9))
                        .labelled_by(l.id)
                        .changed();
                    let l = ui.label("el");
                    changed |= ui
                        .add(
                            egui::DragValue::new(&mut p.elevation_deg)
                                .range(-5.0..=90.0)
                                .speed(0.1),
                        )
                        .labelled_by(l.id)
                        .changed();
                    if ui.small_button("Remove").clicked() {
                        drop = Some(i);
                    }
                });
            }
            if let Some(i) = drop {
                st.horizon_mask.remove(i);
                changed = true;
            }
            if ui.button("Add mask point").clicked() {
                st.horizon_mask.push(MaskPoint {
                    azimuth_deg: 0.0,
                    elevation_deg: st.min_elevation_deg,
                });
                changed = true;
            }
        },
    );
    ui.collapsing(format!("Channels ({})", st.channels.len()), |ui| {
        let mut drop = None;
        for (i, ch) in st.channels.iter_mut().enumerate() {
            ui.horizontal(|ui| {
                changed |= ui
                    .add(egui::TextEdit::singleline(&mut ch.name).desired_width(90.0))
                    .changed();
                let mut mhz = ch.frequency_hz / 1e6;
                if ui
                    .add(
                        egui::DragValue::new(&mut mhz)
                            .range(1.0..=100_000.0)
                            .suffix(" MHz")
                            .speed(0.01),
                    )
                    .changed()
                {
                    ch.frequency_hz = mhz * 1e6;
                    changed = true;
                }
                changed |= ui
                    .selectable_value(&mut ch.direction, LinkDirection::Downlink, "down")
                    .changed();
                changed |= ui
                    .selectable_value(&mut ch.direction, LinkDirection::Uplink, "up")
                    .changed();
                if ui.small_button("Remove").clicked() {
                    drop = Some(i);
                }
            });
        }
        if let Some(i) = drop {
            st.channels.remove(i);
            changed = true;
        }
        if ui.button("Add channel").clicked() {
            st.channels.push(Channel {
                name: "new".into(),
                direction: LinkDirection::Downlink,
                frequency_hz: 437e6,
            });
            changed = true;
        }
    });
    ui.collapsing("Mount limits", |ui| {
        let mut has = st.mount.is_some();
        if ui
            .checkbox(&mut has, "This mount has rate or elevation limits")
            .changed()
        {
            st.mount = has.then_some(MountLimits {
                min_elevation_deg: 0.0,
                max_elevation_deg: 90.0,
                max_azimuth_rate_deg_s: 5.0,
                max_elevation_rate_deg_s: 3.0,
            });
            changed = true;
        }
        if let Some(m) = &mut st.mount {
            egui::Grid::new("mount-fields")
                .num_columns(2)
                .show(ui, |ui| {
                    ui.label("Elevation range (deg)");
                    ui.horizontal(|ui| {
                        changed |= ui
                            .add(egui::DragValue::new(&mut m.min_elevation_deg).range(-5.0..=90.0))
                            .changed();
                        changed |= ui
                            .add(egui::DragValue::new(&mut m.max_elevation_deg).range(0.0..=180.0))
                            .changed();
                    });
                    ui.end_row();
                    let l = ui.label("Max azimuth rate (deg/s)");
                    changed |= ui
                        .add(
                            egui::DragValue::new(&mut m.max_azimuth_rate_deg_s)
                                .range(0.01..=90.0)
                                .speed(0.1),
                        )
                        .labelled_by(l.id)
                        .changed();
                    ui.end_row();
                    let l = ui.label("Max elevation rate (deg/s)");
                    changed |= ui
                        .add(
                            egui::DragValue::new(&mut m.max_elevation_rate_deg_s)
                                .range(0.01..=90.0)
                                .speed(0.1),
                        )
                        .labelled_by(l.id)
                        .changed();
                    ui.end_row();
                });
        }
    });
    if !st.antennas.is_empty() {
        ui.label(format!(
            "Antennas: {}",
            st.antennas
                .iter()
                .map(|a| a.name.as_str())
                .collect::<Vec<_>>()
                .join(", ")
        ));
    }
    if let Err(e) = st.validate() {
        ui.colored_label(palette::VERMILLION, e.to_string());
    }
    if ui.button("Remove this station").clicked() {
        *remove = true;
    }
    changed
}
