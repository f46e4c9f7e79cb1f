//! Sky view of the selected pass: a polar azimuth/elevation plot with the
//! station's horizon mask and the track (sunlit and eclipsed parts drawn
//! differently, with time labels), and beside it elevation, range and Doppler
//! against time. The series come from the library's pointing table, the same
//! rows the command line exports, and are rebuilt only when the selection changes.

use eframe::egui::{self, Align2, Color32, FontId, Pos2, Sense, Shape, Stroke, vec2};
use egui_plot::{Legend, Line, Plot, PlotPoints, VLine};
use passlane_orbit::{Illumination, UtcTime};
use passlane_plan::pointing::PointingRow;
use passlane_plan::{Pass, Station, pointing_table};

use crate::palette;
use crate::state::{AppState, hm_label, time_label};

/// Pointing rows at this step are plenty for drawing and cheap to compute.
const STEP_S: f64 = 5.0;

#[derive(Default)]
pub struct SkyView {
    key: Option<(Option<u64>, usize)>,
    rows: Vec<PointingRow>,
    error: Option<String>,
    filter: String,
}

fn illumination_at(pass: &Pass, t: UtcTime) -> Illumination {
    pass.illumination
        .iter()
        .find(|s| s.start <= t && t <= s.end)
        .map(|s| s.state)
        .unwrap_or(Illumination::Sunlit)
}

impl SkyView {
    fn prepare(&mut self, state: &AppState) {
        let Some(i) = state.selected_pass else {
            self.key = None;
            self.rows.clear();
            return;
        };
        let key = (state.passes_revision, i);
        if self.key == Some(key) {
            return;
        }
        self.key = Some(key);
        self.rows.clear();
        self.error = None;
        let Some(pass) = state.passes.passes.get(i) else {
            return;
        };
        let set = state
            .doc
            .fleet
            .iter()
            .find(|s| s.catalog_number == pass.catalog_number);
        let station = state.doc.scenario.stations.get(pass.station_index);
        if let (Some(set), Some(station)) = (set, station) {
            match pointing_table(
                set,
                station,
                pass,
                STEP_S,
                &state.doc.scenario.earth_orientation,
            ) {
                Ok(rows) => self.rows = rows,
                Err(e) => self.error = Some(e.to_string()),
            }
        }
    }

    pub fn ui(&mut self, ui: &mut egui::Ui, state: &mut AppState) {
        self.prepare(state);
        egui::Panel::left("sky-pass-list")
            .resizable(true)
            .default_size(270.0)
            .show(ui, |ui| {
                self.pass_list(ui, state);
            });
        let Some(pass) = state.selected().cloned() else {
            ui.label("Select a pass in the list or on the contact timeline.");
            return;
        };
        let Some(station) = state.doc.scenario.stations.get(pass.station_index).cloned() else {
            return;
        };
        ui.horizontal_wrapped(|ui| {
            ui.heading(format!("{} over {}", pass.satellite, pass.station));
            ui.label(format!(
                "AOS {} · max {:.1}° at {} · LOS {} · {:.1} min · {} · sky {}",
                time_label(pass.aos),
                pass.max_elevation_deg,
                hm_label(pass.max_elevation_time),
                hm_label(pass.los),
                pass.duration_s / 60.0,
                if pass.direction == passlane_plan::passes::PassDirection::Ascending {
                    "northbound"
                } else {
                    "southbound"
                },
                pass.sky.label()
            ));
        });
        for w in &pass.mount_warnings {
            ui.colored_label(
                palette::VERMILLION,
                format!(
                    "Mount limit: {} rate {:.2}°/s needed, limit {:.2}°/s ({}–{})",
                    w.axis,
                    w.required_rate_deg_s,
                    w.limit_deg_s,
                    hm_label(w.start),
                    hm_label(w.end)
                ),
            );
        }
        if let Some(e) = &self.error {
            ui.colored_label(palette::VERMILLION, e);
        }
        ui.columns(2, |cols| {
            self.polar(&mut cols[0], &station, &pass, state.cursor);
            self.series(&mut cols[1], &station, &pass, state.cursor);
        });
    }

    fn pass_list(&mut self, ui: &mut egui::Ui, state: &mut AppState) {
        ui.strong("Passes");
        let filter_label = ui.label("Filter");
        ui.add(egui::TextEdit::singleline(&mut self.filter).hint_text("spacecraft or station"))
            .labelled_by(filter_label.id);
        let needle = self.filter.to_lowercase();
        egui::ScrollArea::vertical()
            .auto_shrink([false, false])
            .show(ui, |ui| {
                for (i, p) in state.passes.passes.iter().enumerate() {
                    if !needle.is_empty()
                        && !p.satellite.to_lowercase().contains(&needle)
                        && !p.station.to_lowercase().contains(&needle)
                    {
                        continue;
                    }
                    let text = format!(
                        "{} · {} · {} · {:.0}°",
                        hm_label(p.aos),
                        p.satellite,
                        p.station,
                        p.max_elevation_deg
                    );
                    let r = ui
                        .selectable_label(state.selected_pass == Some(i), text)
                        .on_hover_text(format!("AOS {}", time_label(p.aos)));
                    if r.clicked() {
                        state.selected_pass = Some(i);
                    }
                }
            });
    }

    fn polar(&self, ui: &mut egui::Ui, station: &Station, pass: &Pass, cursor: UtcTime) {
        let size = ui
            .available_width()
            .min(ui.available_height() - 30.0)
            .clamp(160.0, 520.0);
        let (rect, _) = ui.allocate_exact_size(vec2(size, size), Sense::hover());
        let painter = ui.painter_at(rect);
        let c = rect.center();
        let radius = size / 2.0 - 18.0;
        let at = |az_deg: f64, el_deg: f64| {
            let r = radius * ((90.0 - el_deg.clamp(-5.0, 90.0)) / 90.0) as f32;
            let a = az_deg.to_radians() as f32;
            Pos2::new(c.x + r * a.sin(), c.y - r * a.cos())
        };
        let text = ui.visuals().text_color();
        painter.circle_filled(c, radius, ui.visuals().extreme_bg_color);
        // Horizon mask and minimum elevation: the blocked band, filled.
        let ring: Vec<(Pos2, Pos2)> = (0..=120)
            .map(|k| {
                let az = f64::from(k) * 3.0;
                (at(az, 0.0), at(az, station.horizon_deg(az).max(0.0)))
            })
            .collect();
        for w in ring.windows(2) {
            painter.add(Shape::convex_polygon(
                vec![w[0].0, w[1].0, w[1].1, w[0].1],
                palette::GRATICULE.gamma_multiply(1.6),
                Stroke::NONE,
            ));
        }
        for el in [0.0, 30.0, 60.0] {
            let r = radius * ((90.0 - el) / 90.0) as f32;
            painter.circle_stroke(c, r, Stroke::new(1.0, palette::COAST));
            painter.text(
                Pos2::new(c.x + 3.0, c.y - r + 2.0),
                Align2::LEFT_TOP,
                format!("{el:.0}°"),
                FontId::proportional(10.0),
                text,
            );
        }
        for (az, label) in [(0.0, "N"), (90.0, "E"), (180.0, "S"), (270.0, "W")] {
            painter.line_segment([c, at(az, 0.0)], Stroke::new(0.5, palette::COAST));
            let a = (az as f32).to_radians();
            let p = Pos2::new(
                c.x + (radius + 10.0) * a.sin(),
                c.y - (radius + 10.0) * a.cos(),
            );
            painter.text(
                p,
                Align2::CENTER_CENTER,
                label,
                FontId::proportional(13.0),
                text,
            );
        }
        // Track, one segment at a time so its colour follows the illumination.
        for w in self.rows.windows(2) {
            let lit = illumination_at(pass, w[0].time) == Illumination::Sunlit;
            let (colour, width) = if lit {
                (palette::ORANGE, 2.5)
            } else {
                (palette::BLUE, 2.5)
            };
            let a = at(w[0].azimuth_deg, w[0].elevation_deg);
            let b = at(w[1].azimuth_deg, w[1].elevation_deg);
            if lit {
                painter.line_segment([a, b], Stroke::new(width, colour));
            } else {
                painter.add(Shape::dashed_line(
                    &[a, b],
                    Stroke::new(width, colour),
                    4.0,
                    3.0,
                ));
            }
        }
        // Time labels every two minutes, plus AOS and LOS.
        let mut next_label = f64::NEG_INFINITY;
        for (k, r) in self.rows.iter().enumerate() {
            let dt = r.time.s_since(pass.aos);
            if dt >= next_label || k + 1 == self.rows.len() {
                let p = at(r.azimuth_deg, r.elevation_deg);
                painter.circle_filled(p, 2.5, text);
                painter.text(
                    p + vec2(5.0, 0.0),
                    Align2::LEFT_CENTER,
                    hm_label(r.time),
                    FontId::proportional(10.0),
                    text,
                );
                next_label = dt + 120.0;
            }
        }
        if let Some(r) = self.rows.iter().min_by(|a, b| {
            a.time
                .s_since(cursor)
                .abs()
                .total_cmp(&b.time.s_since(cursor).abs())
        }) && (pass.aos..=pass.los).contains(&cursor)
        {
            painter.circle(
                at(r.azimuth_deg, r.elevation_deg),
                6.0,
                palette::CURSOR,
                Stroke::new(1.5, Color32::BLACK),
            );
        }
        ui.horizontal_wrapped(|ui| {
            ui.colored_label(palette::ORANGE, "solid: sunlit");
            ui.colored_label(palette::BLUE, "dashed: in Earth shadow");
            ui.label("grey band: below mask / minimum elevation");
        });
    }

    fn series(&self, ui: &mut egui::Ui, station: &Station, pass: &Pass, cursor: UtcTime) {
        let t0 = pass.aos;
        let minutes = |t: UtcTime| t.s_since(t0) / 60.0;
        // Three titles, the caution line and the spacing between them take about 120 px.
        let h = ((ui.available_height() - 120.0) / 3.0).max(90.0);
        let group = egui::Id::unique("sky-series-x");
        let cursor_min = minutes(cursor);
        // The cursor is marked only while it is inside the pass: a line far outside
        // would stretch the time axis and squeeze the pass into a corner.
        let cursor_in_pass = (pass.aos..=pass.los).contains(&cursor);
        let cursor_line = || VLine::new("cursor", cursor_min).color(palette::CURSOR);

        ui.label("Elevation (deg) vs minutes after AOS");
        Plot::new("sky-elevation")
            .height(h)
            // One y-axis width for all three keeps their time axes lined up.
            .y_axis_min_width(44.0)
            .link_axis(group, [true, false])
            .legend(Legend::default())
            .show(ui, |p| {
                let pts: PlotPoints = self
                    .rows
                    .iter()
                    .map(|r| [minutes(r.time), r.elevation_deg])
                    .collect();
                p.line(Line::new("elevation", pts).color(palette::ORANGE));
                let mask: PlotPoints = self
                    .rows
                    .iter()
                    .map(|r| [minutes(r.time), station.horizon_deg(r.azimuth_deg)])
                    .collect();
                p.line(Line::new("horizon at that azimuth", mask).color(palette::COAST));
                if cursor_in_pass {
                    p.vline(cursor_line());
                }
            });
        ui.label("Range (km)");
        Plot::new("sky-range")
            .height(h)
            // One y-axis width for all three keeps their time axes lined up.
            .y_axis_min_width(44.0)
            .link_axis(group, [true, false])
            .show(ui, |p| {
                let pts: PlotPoints = self
                    .rows
                    .iter()
                    .map(|r| [minutes(r.time), r.range_km])
                    .collect();
                p.line(Line::new("range", pts).color(palette::SKY_BLUE));
                if cursor_in_pass {
                    p.vline(cursor_line());
                }
            });
        ui.label("Doppler shift (kHz) per channel");
        Plot::new("sky-doppler")
            .height(h)
            // One y-axis width for all three keeps their time axes lined up.
            .y_axis_min_width(44.0)
            .link_axis(group, [true, false])
            .legend(Legend::default())
            .show(ui, |p| {
                for (k, ch) in station.channels.iter().enumerate() {
                    let pts: PlotPoints = self
                        .rows
                        .iter()
                        .filter_map(|r| {
                            r.frequencies_hz
                                .get(k)
                                .map(|f| [minutes(r.time), (f - ch.frequency_hz) / 1e3])
                        })
                        .collect();
                    p.line(Line::new(ch.name.clone(), pts).color(palette::series(k + 2)));
                }
                if cursor_in_pass {
                    p.vline(cursor_line());
                }
            });
        ui.colored_label(
            palette::YELLOW,
            "Transmitting needs a licence and follows local rules: check yours before using these frequencies.",
        );
    }
}
