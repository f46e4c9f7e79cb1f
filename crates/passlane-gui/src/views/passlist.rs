//! The pass list: every pass of the window under a header per day, each
//! spacecraft's and each station's next contact from the time cursor at the
//! top, and a filter. Selecting a pass moves the time cursor to it.

use eframe::egui::{self, Ui};

use crate::palette;
use crate::state::{AppState, date_label, hm_label, time_label};

#[derive(Default)]
pub struct PassList {
    filter: String,
}

impl PassList {
    /// Draws the list; returns true when the user picked a pass.
    pub fn ui(&mut self, ui: &mut Ui, state: &mut AppState) -> bool {
        let mut picked = false;
        egui::ScrollArea::vertical()
            .id_salt("pass-list-scroll")
            .auto_shrink([false, false])
            .show(ui, |ui| {
                next_contacts(ui, state);
                ui.separator();
                ui.strong("Passes");
                let filter_label = ui.label("Filter");
                ui.add(
                    egui::TextEdit::singleline(&mut self.filter).hint_text("spacecraft or station"),
                )
                .labelled_by(filter_label.id);
                let needle = self.filter.to_lowercase();
                let mut day = String::new();
                let mut chosen = None;
                for (i, p) in state.passes.passes.iter().enumerate() {
                    if !needle.is_empty()
                        && !p.satellite.to_lowercase().contains(&needle)
                        && !p.station.to_lowercase().contains(&needle)
                    {
                        continue;
                    }
                    let d = date_label(p.aos);
                    if d != day {
                        ui.add_space(4.0);
                        ui.strong(format!("{d} (UTC)"));
                        day = d;
                    }
                    let text = format!(
                        "{} · {} · {} · {:.0}°",
                        hm_label(p.aos),
                        p.satellite,
                        p.station,
                        p.max_elevation_deg
                    );
                    let r = ui
                        .horizontal(|ui| {
                            palette::legend_swatch(ui, state.fleet_index(p.catalog_number));
                            ui.selectable_label(state.selected_pass == Some(i), text)
                        })
                        .inner
                        .on_hover_text(format!(
                            "AOS {}, LOS {}, {:.1} min",
                            time_label(p.aos),
                            time_label(p.los),
                            p.duration_s / 60.0
                        ));
                    if r.clicked() {
                        chosen = Some(i);
                    }
                }
                if let Some(i) = chosen {
                    state.select_pass(i);
                    picked = true;
                }
            });
        picked
    }
}

/// Next contact of each spacecraft and each station from the cursor.
fn next_contacts(ui: &mut Ui, state: &AppState) {
    ui.strong(format!("Next contact after {}", time_label(state.cursor)));
    egui::Grid::new("next-contacts")
        .num_columns(2)
        .show(ui, |ui| {
            for (i, set) in state.doc.fleet.iter().enumerate() {
                ui.horizontal(|ui| {
                    palette::legend_swatch(ui, i);
                    ui.label(&set.name);
                });
                let next = state.next_contact_of_spacecraft(set.catalog_number);
                ui.label(state.describe_next(&next, "over"));
                ui.end_row();
            }
            for (i, st) in state.doc.scenario.stations.iter().enumerate() {
                ui.label(format!("station {}", st.name));
                let next = state.next_contact_at_station(i);
                ui.label(state.describe_next(&next, "with"));
                ui.end_row();
            }
        });
}
