//! Contact timeline: one row per station, each pass a bar coloured by
//! spacecraft. Hovering a bar describes the pass, clicking selects it, and
//! clicking or dragging elsewhere moves the shared time cursor.

use eframe::egui::{self, Align2, FontId, Pos2, Rect, Sense, Stroke, StrokeKind, vec2};
use passlane_orbit::UtcTime;

use crate::palette;
use crate::state::{AppState, hm_label, time_label};

/// Visible span of the timeline.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Zoom {
    Window,
    Hours(f64),
}

pub struct TimelineView {
    zoom: Zoom,
    selection_event: bool,
}

impl Default for TimelineView {
    fn default() -> Self {
        TimelineView {
            zoom: Zoom::Hours(24.0),
            selection_event: false,
        }
    }
}

const ROW_H: f32 = 22.0;
const LABEL_W: f32 = 130.0;

impl TimelineView {
    /// True once after the user picked a pass on the timeline.
    pub fn take_selection_event(&mut self) -> bool {
        std::mem::take(&mut self.selection_event)
    }

    fn visible(&self, state: &AppState) -> (UtcTime, UtcTime) {
        let (start, end) = state.doc.window();
        match self.zoom {
            Zoom::Window => (start, end),
            Zoom::Hours(h) => {
                let span = (h * 3600.0).min(end.s_since(start));
                // Centre on the cursor, but keep inside the window.
                let mut a = state.cursor.add_s(-span / 2.0).max(start);
                if a.add_s(span) > end {
                    a = end.add_s(-span);
                }
                (a, a.add_s(span))
            }
        }
    }

    pub fn ui(&mut self, ui: &mut egui::Ui, state: &mut AppState) {
        ui.horizontal(|ui| {
            ui.strong("Contact timeline");
            ui.label("span:");
            ui.selectable_value(&mut self.zoom, Zoom::Hours(6.0), "6 h");
            ui.selectable_value(&mut self.zoom, Zoom::Hours(24.0), "1 day");
            ui.selectable_value(&mut self.zoom, Zoom::Window, "Whole window");
            ui.separator();
            let n = state.passes.passes.len();
            ui.label(format!("{n} passes"));
            if !state.passes.failures.is_empty() {
                ui.colored_label(
                    palette::VERMILLION,
                    format!(
                        "{} spacecraft failed to propagate",
                        state.passes.failures.len()
                    ),
                )
                .on_hover_text(
                    state
                        .passes
                        .failures
                        .iter()
                        .map(|f| format!("{}: {}", f.satellite, f.message))
                        .collect::<Vec<_>>()
                        .join("\n"),
                );
            }
            ui.separator();
            // Legend: spacecraft colours.
            for (i, set) in state.doc.fleet.iter().enumerate().take(12) {
                let (r, _) = ui.allocate_exact_size(vec2(10.0, 10.0), Sense::hover());
                ui.painter().rect_filled(r, 2.0, palette::series(i));
                ui.small(&set.name);
            }
        });

        let stations: Vec<String> = state
            .doc
            .scenario
            .stations
            .iter()
            .map(|s| s.name.clone())
            .collect();
        let rows = stations.len().max(1);
        let height = 18.0 + rows as f32 * ROW_H;
        let (rect, response) =
            ui.allocate_exact_size(vec2(ui.available_width(), height), Sense::click_and_drag());
        let painter = ui.painter_at(rect);
        painter.rect_filled(rect, 0.0, ui.visuals().extreme_bg_color);

        let (t0, t1) = self.visible(state);
        let span_s = t1.s_since(t0).max(1.0);
        let bars = Rect::from_min_max(
            Pos2::new(rect.left() + LABEL_W, rect.top() + 18.0),
            rect.max,
        );
        let x_of = |t: UtcTime| bars.left() + (t.s_since(t0) / span_s) as f32 * bars.width();
        let t_of = |x: f32| t0.add_s(f64::from((x - bars.left()) / bars.width().max(1.0)) * span_s);
        let text_color = ui.visuals().text_color();

        // Hour ticks: pick a step that leaves room for labels.
        let step_h = [1.0, 2.0, 3.0, 6.0, 12.0, 24.0]
            .into_iter()
            .find(|h| bars.width() / (span_s / 3600.0 / h) as f32 > 60.0)
            .unwrap_or(24.0);
        let first = (t0.s_since_j2000() / (step_h * 3600.0)).ceil() * step_h * 3600.0;
        let mut tick = UtcTime::from_s_since_j2000(first);
        while tick <= t1 {
            let x = x_of(tick);
            painter.line_segment(
                [Pos2::new(x, rect.top() + 14.0), Pos2::new(x, rect.bottom())],
                Stroke::new(1.0, palette::GRATICULE),
            );
            let label = if hm_label(tick) == "00:00" {
                tick.to_iso_s()[5..10].to_string()
            } else {
                hm_label(tick)
            };
            painter.text(
                Pos2::new(x, rect.top() + 1.0),
                Align2::CENTER_TOP,
                label,
                FontId::proportional(11.0),
                text_color,
            );
            tick = tick.add_s(step_h * 3600.0);
        }

        for (row, name) in stations.iter().enumerate() {
            let y = bars.top() + row as f32 * ROW_H;
            painter.text(
                Pos2::new(rect.left() + 6.0, y + ROW_H / 2.0),
                Align2::LEFT_CENTER,
                name,
                FontId::proportional(13.0),
                text_color,
            );
            painter.line_segment(
                [Pos2::new(rect.left(), y), Pos2::new(rect.right(), y)],
                Stroke::new(0.5, palette::GRATICULE),
            );
        }

        // Bars; remember which one is under the pointer.
        let pointer = response.hover_pos();
        let mut hovered: Option<usize> = None;
        for (i, p) in state.passes.passes.iter().enumerate() {
            if p.los < t0 || p.aos > t1 {
                continue;
            }
            // One row per station of the scenario, in its order: the pass
            // names its station by that index.
            let row = p.station_index;
            if row >= stations.len() {
                continue;
            }
            let y = bars.top() + row as f32 * ROW_H;
            let x0 = x_of(p.aos).max(bars.left());
            let x1 = x_of(p.los).min(bars.right()).max(x0 + 2.0);
            let r = Rect::from_min_max(Pos2::new(x0, y + 3.0), Pos2::new(x1, y + ROW_H - 3.0));
            let colour = palette::series(state.fleet_index(p.catalog_number));
            painter.rect_filled(r, 2.0, colour);
            if state.selected_pass == Some(i) {
                painter.rect_stroke(
                    r.expand(2.0),
                    3.0,
                    Stroke::new(2.0, palette::CURSOR),
                    StrokeKind::Outside,
                );
            }
            if pointer.is_some_and(|q| r.expand2(vec2(2.0, 0.0)).contains(q)) {
                hovered = Some(i);
            }
        }

        // Cursor line.
        if (t0..=t1).contains(&state.cursor) {
            let x = x_of(state.cursor);
            painter.line_segment(
                [Pos2::new(x, rect.top()), Pos2::new(x, rect.bottom())],
                Stroke::new(2.0, palette::CURSOR),
            );
        }

        if let Some(i) = hovered
            && let Some(p) = state.passes.passes.get(i)
        {
            let text = format!(
                "{} over {}\nAOS {}  az {:.0}°\nmax elevation {:.1}° at {}\nLOS {}  az {:.0}°\n{:.1} min, {}",
                p.satellite,
                p.station,
                time_label(p.aos),
                p.aos_azimuth_deg,
                p.max_elevation_deg,
                hm_label(p.max_elevation_time),
                time_label(p.los),
                p.los_azimuth_deg,
                p.duration_s / 60.0,
                p.sky.label(),
            );
            response.clone().on_hover_text_at_pointer(text);
        }
        if response.clicked() {
            match hovered {
                Some(i) => {
                    state.selected_pass = Some(i);
                    self.selection_event = true;
                }
                None => {
                    if let Some(q) = response.interact_pointer_pos() {
                        state.cursor = t_of(q.x);
                    }
                }
            }
        } else if response.dragged()
            && let Some(q) = response.interact_pointer_pos()
        {
            state.cursor = t_of(q.x);
        }
        state.clamp_cursor();
    }
}
