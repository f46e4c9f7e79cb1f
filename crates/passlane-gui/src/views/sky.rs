//! Sky view of the selected pass: a polar azimuth/elevation plot with the
//! station's horizon mask and the track (sunlit and eclipsed parts drawn
//! differently, with time labels), and beside it elevation, range and Doppler
//! against time. The series come from the library's pointing table, the same
//! rows the command line exports, and are rebuilt only when the selection changes.

use eframe::egui::{self, Align2, Color32, FontId, Pos2, Sense, Shape, Stroke, vec2};
use egui_plot::{Legend, Line, Plot, PlotPoints, VLine};

use crate::axes::{self, AxisTicks};
use crate::views::passlist::PassList;
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
    list: PassList,
    /// Axes of the elevation, range and Doppler plots: (time, value).
    ticks: [(AxisTicks, AxisTicks); 3],
}

/// Which plot of the sky view.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SkyPlot {
    Elevation = 0,
    Range = 1,
    Doppler = 2,
}

fn illumination_at(pass: &Pass, t: UtcTime) -> Illumination {
    pass.illumination
        .iter()
        .find(|s| s.start <= t && t <= s.end)
        .map(|s| s.state)
        .unwrap_or(Illumination::Sunlit)
}

impl SkyView {
    /// The tick labels a plot drew on the last frame: (time axis, value axis).
    pub fn tick_labels(&self, plot: SkyPlot) -> (Vec<String>, Vec<String>) {
        let (x, y) = &self.ticks[plot as usize];
        (x.labels(), y.labels())
    }

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
                self.list.ui(ui, state);
            });
        let Some(pass) = state.selected().cloned() else {
            ui.label("Select a pass in the list or on the contact timeline.");
            return;
        };
        let Some(station) = state.doc.scenario.stations.get(pass.station_index).cloned() else {
            return;
        };
        let avail_h = ui.available_height();
        egui::ScrollArea::vertical()
            .id_salt("sky-scroll")
            .auto_shrink([false, false])
            .show(ui, |ui| self.pass_ui(ui, state, &pass, &station, avail_h));
    }

    fn pass_ui(
        &mut self,
        ui: &mut egui::Ui,
        state: &mut AppState,
        pass: &Pass,
        station: &Station,
        avail_h: f32,
    ) {
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
        if let Some(i) = state.selected_pass {
            ui.horizontal_wrapped(|ui| {
                ui.menu_button("Keep or never use this contact…", |ui| {
                    crate::views::timeline::pin_menu(ui, state, i, None)
                });
                if ui
                    .button("Cursor to AOS")
                    .on_hover_text("Move the time cursor to the start of this pass")
                    .clicked()
                {
                    state.cursor = pass.aos;
                }
                if ui.button("Cursor to maximum").clicked() {
                    state.cursor = pass.max_elevation_time;
                }
            });
        }
        if let Some(e) = &self.error {
            ui.colored_label(palette::VERMILLION, e);
        }
        let h = avail_h.max(420.0);
        let cursor = state.cursor;
        if ui.available_width() >= 760.0 {
            ui.columns(2, |cols| {
                self.polar(&mut cols[0], station, pass, cursor, h);
                self.series(&mut cols[1], station, pass, cursor, h);
            });
        } else {
            // Narrow window: one above the other, scrolled.
            self.polar(ui, station, pass, cursor, h);
            self.series(ui, station, pass, cursor, h);
        }
    }

    fn polar(&self, ui: &mut egui::Ui, station: &Station, pass: &Pass, cursor: UtcTime, h: f32) {
        let size = ui.available_width().min(h - 90.0).clamp(160.0, 520.0);
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
        // Track in runs of one illumination: sunlit solid, shadowed dashed
        // (a run is dashed as a whole, so the dashes show on short steps too).
        let mut k = 0;
        while k + 1 < self.rows.len() {
            let lit = illumination_at(pass, self.rows[k].time) == Illumination::Sunlit;
            let mut run = vec![at(self.rows[k].azimuth_deg, self.rows[k].elevation_deg)];
            let mut j = k + 1;
            while j < self.rows.len() {
                run.push(at(self.rows[j].azimuth_deg, self.rows[j].elevation_deg));
                if (illumination_at(pass, self.rows[j].time) == Illumination::Sunlit) != lit {
                    break;
                }
                j += 1;
            }
            if lit {
                painter.add(Shape::line(run, Stroke::new(2.5, palette::ORANGE)));
            } else {
                painter.extend(Shape::dashed_line(
                    &run,
                    Stroke::new(2.5, palette::SKY_BLUE),
                    7.0,
                    5.0,
                ));
            }
            k = j.min(self.rows.len() - 1).max(k + 1);
        }
        // Time labels at AOS, LOS and every two minutes between, each kept
        // only where it does not crowd one already placed (AOS and LOS first).
        let mut candidates: Vec<usize> = Vec::new();
        if !self.rows.is_empty() {
            candidates.push(0);
            candidates.push(self.rows.len() - 1);
            let mut next_label = 120.0;
            for (k, r) in self.rows.iter().enumerate() {
                if r.time.s_since(pass.aos) >= next_label {
                    candidates.push(k);
                    next_label += 120.0;
                }
            }
        }
        let mut placed: Vec<Pos2> = Vec::new();
        for k in candidates {
            let r = &self.rows[k];
            let p = at(r.azimuth_deg, r.elevation_deg);
            if placed.iter().any(|q| q.distance(p) < 34.0) {
                continue;
            }
            placed.push(p);
            painter.circle_filled(p, 2.5, text);
            painter.text(
                p + vec2(5.0, 0.0),
                Align2::LEFT_CENTER,
                hm_label(r.time),
                FontId::proportional(11.0),
                text,
            );
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
            ui.colored_label(palette::SKY_BLUE, "dashed: in Earth shadow");
            ui.label("grey band: below mask / minimum elevation; rings at 0°, 30°, 60° elevation");
        });
    }

    fn series(&self, ui: &mut egui::Ui, station: &Station, pass: &Pass, cursor: UtcTime, h: f32) {
        let t0 = pass.aos;
        let minutes = |t: UtcTime| t.s_since(t0) / 60.0;
        // Three plots with their axis labels, and the caution line.
        let plot_h = ((h - 90.0) / 3.0).max(120.0);
        let group = egui::Id::unique("sky-series-x");
        let cursor_min = minutes(cursor);
        // The cursor is marked only while it is inside the pass: a line far outside
        // would stretch the time axis and squeeze the pass into a corner.
        let cursor_in_pass = (pass.aos..=pass.los).contains(&cursor);
        let cursor_line = || VLine::new("cursor", cursor_min).color(palette::CURSOR);
        let x_label = format!("minutes after AOS ({} UTC)", hm_label(t0));
        // Hover: the time (UTC and after AOS) and the value with its unit.
        let hover = |unit: &'static str| {
            move |h: &egui_plot::HoverPosition<'_>| {
                let (name, p) = match h {
                    egui_plot::HoverPosition::NearDataPoint {
                        plot_name,
                        position,
                        ..
                    } => (*plot_name, *position),
                    egui_plot::HoverPosition::Elsewhere { position } => ("", *position),
                };
                let t = t0.add_s(p.x * 60.0);
                let who = if name.is_empty() {
                    String::new()
                } else {
                    format!("{name}: ")
                };
                Some(format!(
                    "{} UTC ({:.2} min after AOS)\n{who}{:.3} {unit}",
                    t.to_iso_ms().get(11..23).unwrap_or(""),
                    p.x,
                    p.y
                ))
            }
        };
        let plot = |id: &str, k: usize, y_label: &str| {
            axes::readable(
                Plot::new(id.to_string())
                    .height(plot_h)
                    // One y-axis width for all three keeps their time axes lined up.
                    .y_axis_min_width(52.0)
                    .link_axis(group, [true, false])
                    .link_cursor(group, [true, false]),
                &x_label,
                y_label,
                &self.ticks[k].0,
                &self.ticks[k].1,
            )
        };
        plot("sky-elevation", 0, "elevation (deg)")
            .legend(Legend::default())
            .label_formatter(hover("deg"))
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
        plot("sky-range", 1, "range (km)")
            .label_formatter(hover("km"))
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
        plot("sky-doppler", 2, "Doppler shift (kHz)")
            .legend(Legend::default())
            .label_formatter(hover("kHz"))
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
                    let colour = [
                        palette::YELLOW,
                        palette::REDDISH_PURPLE,
                        palette::BLUISH_GREEN,
                        palette::SKY_BLUE,
                    ][k % 4];
                    p.line(
                        Line::new(
                            format!("{} ({})", ch.name, direction_label(ch.direction)),
                            pts,
                        )
                        .color(colour),
                    );
                }
                if cursor_in_pass {
                    p.vline(cursor_line());
                }
            });
        if station.channels.is_empty() {
            ui.label("No channels at this station: add one in Fleet and stations for Doppler.");
        }
        crate::widgets::caution(
            ui,
            "Transmitting needs a licence and follows local rules: check yours before using these frequencies.",
        );
    }
}

fn direction_label(d: passlane_plan::station::LinkDirection) -> &'static str {
    match d {
        passlane_plan::station::LinkDirection::Downlink => "downlink: receiver tunes",
        passlane_plan::station::LinkDirection::Uplink => "uplink: transmitter pre-compensates",
    }
}
