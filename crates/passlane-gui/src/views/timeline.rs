//! Contact timeline: one row per station, each pass a bar coloured by
//! spacecraft. Hovering a bar describes the pass, clicking selects it (and
//! moves the time cursor to it), right-clicking offers "keep this contact" /
//! "never use this contact" for the plan; clicking or dragging elsewhere
//! moves the shared time cursor. Pinned passes are outlined solid, excluded
//! ones dashed.

use eframe::egui::{self, Align2, FontId, Pos2, Rect, Sense, Stroke, StrokeKind, vec2};
use passlane_orbit::UtcTime;

use crate::palette;
use crate::state::{AppState, PinKind, hm_label, time_label};

/// Visible span of the timeline.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Zoom {
    Window,
    Hours(f64),
}

pub struct TimelineView {
    zoom: Zoom,
    selection_event: bool,
    /// The pass whose context menu is open.
    context_pass: Option<usize>,
    /// Where each drawn pass's bar was on the last frame (pass index, rect).
    bars: Vec<(usize, Rect)>,
}

impl Default for TimelineView {
    fn default() -> Self {
        TimelineView {
            zoom: Zoom::Hours(24.0),
            selection_event: false,
            context_pass: None,
            bars: Vec::new(),
        }
    }
}

/// The pin menu of one pass: keep, never use, or clear.
pub fn pin_menu(ui: &mut egui::Ui, state: &mut AppState, pass: usize, antenna: Option<String>) {
    let Some(p) = state.passes.passes.get(pass).cloned() else {
        return;
    };
    let label = format!("{} over {} at {}", p.satellite, p.station, hm_label(p.aos));
    contact_pin_menu(
        ui,
        state,
        p.catalog_number,
        p.station_index,
        antenna,
        p.aos,
        &label,
    );
}

/// The pin menu of one contact (a pass, or a contact of the plan on one antenna).
pub fn contact_pin_menu(
    ui: &mut egui::Ui,
    state: &mut AppState,
    catalog_number: u32,
    station_index: usize,
    antenna: Option<String>,
    aos: UtcTime,
    label: &str,
) {
    let current = state
        .pin_of(catalog_number, station_index, antenna.as_deref(), aos)
        .map(|(k, _)| k);
    ui.label(label);
    if current != Some(PinKind::Keep) && ui.button("Keep this contact").clicked() {
        state.set_pin(
            catalog_number,
            station_index,
            antenna.clone(),
            aos,
            Some(PinKind::Keep),
        );
        ui.close();
    }
    if current != Some(PinKind::Never) && ui.button("Never use this contact").clicked() {
        state.set_pin(
            catalog_number,
            station_index,
            antenna.clone(),
            aos,
            Some(PinKind::Never),
        );
        ui.close();
    }
    if current.is_some() && ui.button("Remove the pin or exclusion").clicked() {
        state.set_pin(catalog_number, station_index, antenna, aos, None);
        ui.close();
    }
}

/// Outlines a bar: solid for a kept (pinned) contact, dashed for an excluded one.
pub fn pin_outline(painter: &egui::Painter, r: Rect, kind: PinKind) {
    let stroke = Stroke::new(2.0, palette::CURSOR);
    match kind {
        PinKind::Keep => {
            painter.rect_stroke(r.expand(2.0), 2.0, stroke, StrokeKind::Outside);
        }
        PinKind::Never => {
            let r = r.expand(2.0);
            let pts = [
                r.left_top(),
                r.right_top(),
                r.right_bottom(),
                r.left_bottom(),
                r.left_top(),
            ];
            painter.extend(egui::Shape::dashed_line(&pts, stroke, 3.0, 3.0));
        }
    }
}

const ROW_H: f32 = 22.0;
const LABEL_W: f32 = 130.0;

impl TimelineView {
    /// Where pass `index`'s bar was drawn on the last frame (tests click it).
    pub fn bar_rect(&self, index: usize) -> Option<Rect> {
        self.bars.iter().find(|(i, _)| *i == index).map(|(_, r)| *r)
    }

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
        ui.horizontal_wrapped(|ui| {
            ui.strong("Contact timeline");
            ui.label("span:");
            ui.selectable_value(&mut self.zoom, Zoom::Hours(6.0), "6 h");
            ui.selectable_value(&mut self.zoom, Zoom::Hours(24.0), "1 day");
            ui.selectable_value(&mut self.zoom, Zoom::Window, "Whole window");
            ui.separator();
            let n = state.passes.passes.len();
            ui.label(format!("{n} passes"));
            if let Some(why) = &state.passes_blocked {
                ui.colored_label(palette::VERMILLION, "passes not updated")
                    .on_hover_text(format!("The scenario has a problem: {why}"));
            }
            crate::views::fleet::stale_warning(ui, state);
            if let Some(i) = state.selected_pass {
                ui.menu_button("Selected contact…", |ui| pin_menu(ui, state, i, None))
                    .response
                    .on_hover_text("Keep or never use the selected pass in the plan");
            }
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
            // Legend: spacecraft colours (and the marker that follows a colour past the twelfth).
            for (i, set) in state.doc.fleet.iter().enumerate() {
                palette::legend_swatch(ui, i);
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
        self.bars.clear();
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
            if let Some((kind, _)) = state.pin_of(p.catalog_number, p.station_index, None, p.aos) {
                pin_outline(&painter, r, kind);
            }
            if state.selected_pass == Some(i) {
                painter.rect_stroke(
                    r.expand(4.0),
                    3.0,
                    Stroke::new(1.5, palette::YELLOW),
                    StrokeKind::Outside,
                );
            }
            self.bars.push((i, r));
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
            let pin = match state.pin_of(p.catalog_number, p.station_index, None, p.aos) {
                Some((PinKind::Keep, _)) => "\nkept for the plan (pinned)",
                Some((PinKind::Never, _)) => "\nnever used by the plan (excluded)",
                None => "\nright-click: keep or never use this contact",
            };
            let text = format!(
                "{} over {}\nAOS {}  az {:.0}°\nmax elevation {:.1}° at {}\nLOS {}  az {:.0}°\n{:.1} min, {}{pin}",
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
        if response.secondary_clicked() {
            self.context_pass = hovered;
        }
        if self.context_pass.is_some() {
            response.context_menu(|ui| {
                if let Some(i) = self.context_pass {
                    pin_menu(ui, state, i, None);
                }
            });
        }
        if response.clicked() {
            match hovered {
                Some(i) => {
                    state.select_pass(i);
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
