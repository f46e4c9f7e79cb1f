//! Scenario settings (name, operator, planning window, Earth orientation,
//! screening) and the plan's pins and exclusions, edited in the window with
//! the file loader's rules.

use eframe::egui::{Grid, Ui};
use passlane_plan::scenario::{ContactRef, Window};

use crate::palette;
use crate::state::{AppState, time_label};
use crate::widgets::{self, Edit};

#[derive(Default)]
pub struct SettingsEditor;

impl SettingsEditor {
    pub fn settings(&mut self, ui: &mut Ui, state: &mut AppState) {
        let mut edit = Edit::default();
        let sc = &mut state.doc.scenario;
        ui.heading("Scenario");
        Grid::new("scenario-names").num_columns(2).show(ui, |ui| {
            edit |= widgets::text(ui, "Scenario name", &mut sc.name, 320.0);
            ui.end_row();
            edit |= widgets::text(ui, "Operator", &mut sc.operator, 320.0);
            ui.end_row();
        });
        ui.add_space(6.0);
        ui.heading("Planning window (UTC)");
        let mut fixed = sc.window.is_some();
        if ui
            .checkbox(
                &mut fixed,
                "Fixed planning window (else one day from the earliest epoch)",
            )
            .changed()
        {
            sc.window = if fixed {
                let (start, end) = default_window(&state.doc.fleet);
                Some(Window { start, end })
            } else {
                None
            };
            edit.changed = true;
        }
        let sc = &mut state.doc.scenario;
        if let Some(w) = &mut sc.window {
            Grid::new("window-fields").num_columns(2).show(ui, |ui| {
                edit |= widgets::time(ui, "Window start", "wstart", &mut w.start, 220.0);
                ui.end_row();
                edit |= widgets::time(ui, "Window end", "wend", &mut w.end, 220.0);
                ui.end_row();
            });
            ui.label(format!(
                "{:.2} days; ISO 8601 with Z, e.g. 2026-12-01T00:00:00Z.",
                w.end.s_since(w.start) / 86_400.0
            ));
        }
        ui.add_space(6.0);
        ui.heading("Earth orientation");
        Grid::new("eop-fields").num_columns(2).show(ui, |ui| {
            let eo = &mut sc.earth_orientation;
            edit |= widgets::number(ui, "UT1 - UTC (s)", "ut1", &mut eo.ut1_utc_s, 90.0);
            ui.end_row();
            edit |= widgets::number(
                ui,
                "Polar motion x (arcsec)",
                "px",
                &mut eo.polar_x_arcsec,
                90.0,
            );
            ui.end_row();
            edit |= widgets::number(
                ui,
                "Polar motion y (arcsec)",
                "py",
                &mut eo.polar_y_arcsec,
                90.0,
            );
            ui.end_row();
        });
        ui.label("UT1 = UTC when 0; ignoring UT1 - UTC (below 0.9 s) moves a LEO ground point by up to about 400 m.");
        ui.add_space(6.0);
        ui.heading("Screening");
        Grid::new("screening-fields").num_columns(2).show(ui, |ui| {
            let s = &mut sc.screening;
            edit |= widgets::number(
                ui,
                "Screening sphere radius (km)",
                "thr",
                &mut s.threshold_km,
                90.0,
            );
            ui.end_row();
            edit |= widgets::number(
                ui,
                "Default hard-body radius per object (m)",
                "dhbr",
                &mut s.default_hard_body_radius_m,
                90.0,
            );
            ui.end_row();
            for (k, axis) in ["radial", "in-track", "cross-track"].iter().enumerate() {
                edit |= widgets::number(
                    ui,
                    &format!("Assumed 1-sigma at epoch, {axis} (m)"),
                    ("sig0", k),
                    &mut s.assumed_sigma_at_epoch_m[k],
                    90.0,
                );
                ui.end_row();
            }
            for (k, axis) in ["radial", "in-track", "cross-track"].iter().enumerate() {
                edit |= widgets::number(
                    ui,
                    &format!("Assumed 1-sigma growth, {axis} (m/day)"),
                    ("sigr", k),
                    &mut s.assumed_sigma_growth_m_per_day[k],
                    90.0,
                );
                ui.end_row();
            }
        });
        ui.label(
            "Element sets carry no covariance: Pc uses this assumed one, grown with element age. \
             The volume's shape (sphere, box, ellipsoid) is chosen in Close approaches for each run.",
        );
        if edit.changed {
            state.doc.touch();
        }
    }

    pub fn pins(&mut self, ui: &mut Ui, state: &mut AppState) {
        ui.heading("Pins and exclusions");
        ui.label(
            "Make them where you see the contact: right-click a pass on the contact timeline, or a \
             contact in the plan's antenna rows (or use the buttons on the selected pass). Pinned \
             contacts are outlined solid, excluded ones dashed.",
        );
        let mut edit = Edit::default();
        let fleet = state.doc.fleet.clone();
        let name_of = |n: u32| {
            fleet
                .iter()
                .find(|s| s.catalog_number == n)
                .map(|s| s.name.clone())
                .unwrap_or_else(|| n.to_string())
        };
        for (list_name, keep) in [("Keep (pins)", true), ("Never use (exclusions)", false)] {
            ui.add_space(4.0);
            ui.strong(list_name);
            let list = if keep {
                &mut state.doc.scenario.pins
            } else {
                &mut state.doc.scenario.exclusions
            };
            if list.is_empty() {
                ui.label("none");
            }
            let mut drop = None;
            for (i, r) in list.iter_mut().enumerate() {
                ui.horizontal_wrapped(|ui| {
                    ui.label(describe(r, &name_of(r.catalog_number)));
                    edit |= widgets::number(
                        ui,
                        &format!(
                            "{} {} tolerance (s)",
                            if keep { "pin" } else { "exclusion" },
                            i + 1
                        ),
                        (keep, i),
                        &mut r.tolerance_s,
                        50.0,
                    );
                    let what = if keep { "pin" } else { "exclusion" };
                    if ui
                        .small_button(format!("Remove {what} {}", i + 1))
                        .clicked()
                    {
                        drop = Some(i);
                    }
                });
            }
            if let Some(i) = drop {
                list.remove(i);
                edit.changed = true;
            }
        }
        if !state.doc.scenario.pins.is_empty() || !state.doc.scenario.exclusions.is_empty() {
            ui.colored_label(
                palette::YELLOW,
                "Make the plan again (Plan view) for pins and exclusions to take effect.",
            );
        }
        if edit.changed {
            state.doc.touch();
        }
    }
}

/// One line for a pin or exclusion.
pub fn describe(r: &ContactRef, spacecraft: &str) -> String {
    format!(
        "{spacecraft} over {}{} at AOS {}",
        r.station,
        r.antenna
            .as_ref()
            .map(|a| format!(" on {a}"))
            .unwrap_or_default(),
        time_label(r.aos)
    )
}

fn default_window(
    fleet: &[passlane_orbit::ElementSet],
) -> (passlane_orbit::UtcTime, passlane_orbit::UtcTime) {
    let start = fleet
        .iter()
        .map(|s| s.epoch)
        .reduce(passlane_orbit::UtcTime::min)
        .unwrap_or_else(passlane_orbit::UtcTime::now);
    (start, start.add_s(86_400.0))
}
