//! World map (equirectangular): coastlines, ground tracks, sub-satellite
//! points, station visibility circles and the night side at the time cursor;
//! the selected pass and close approach are marked where they happen. Scroll
//! zooms about the pointer, dragging pans, a double-click resets; hovering a
//! spacecraft or a station tells its next contact; the legend hides and
//! shows spacecraft. Beside it, the pass list with each next contact.
//!
//! Tracks and circles are rebuilt only when their inputs change: tracks when
//! the document, the span or the cursor's two-minute bucket changes; circles
//! when the document or the altitude changes. Drawing only maps points to pixels.

use eframe::egui::{self, Color32, FontId, Mesh, Painter, Pos2, Rect, Sense, Shape, Stroke, vec2};
use passlane_orbit::{Illumination, Propagator, UtcTime};

use crate::coast;
use crate::geo::{self, LonLat};
use crate::palette;
use crate::state::{AppState, hm_label, time_label};
use crate::views::passlist::PassList;

/// Tracks are recomputed when the cursor enters a new bucket: at least this
/// long, and a quarter of the track span, so that playback at high speed
/// rebuilds them every few dozen frames instead of every few frames (each
/// rebuild propagates every track: the slow frames of the frame-time bench).
const TRACK_BUCKET_MIN_S: f64 = 120.0;
/// Draw tracks for at most this many spacecraft (the operator's fleet, not a catalog).
const MAX_TRACKS: usize = 500;

#[derive(Default)]
struct TrackCache {
    key: Option<(u64, u64, i64)>,
    /// Per spacecraft: strips of (lon, lat).
    tracks: Vec<Vec<Vec<LonLat>>>,
}

#[derive(Default)]
struct CircleCache {
    key: Option<(u64, u64)>,
    circles: Vec<Vec<Vec<LonLat>>>,
}

/// Which pass a cached track belongs to: (pass-search revision, pass index).
type PassKey = (Option<u64>, usize);

pub struct MapView {
    coastlines: Vec<coast::Polyline>,
    /// Ground-track span ahead of the cursor, minutes.
    pub track_span_min: f64,
    /// Altitude for the visibility circles, km.
    pub circle_altitude_km: f64,
    show_tracks: bool,
    show_circles: bool,
    show_night: bool,
    show_list: bool,
    tracks: TrackCache,
    circles: CircleCache,
    propagators: (Option<u64>, Vec<Option<Propagator>>),
    /// Map centre (lon, lat) and zoom (1: the whole world fits).
    center: LonLat,
    zoom: f64,
    /// The selected pass's ground track: (key, strips).
    pass_track: (Option<PassKey>, Vec<Vec<LonLat>>),
    list: PassList,
}

impl Default for MapView {
    fn default() -> Self {
        MapView {
            coastlines: coast::decode(coast::COASTLINES_BIN).unwrap_or_default(),
            track_span_min: 100.0,
            circle_altitude_km: 550.0,
            show_tracks: true,
            show_circles: true,
            show_night: true,
            show_list: true,
            tracks: TrackCache::default(),
            circles: CircleCache::default(),
            propagators: (None, Vec::new()),
            center: [0.0, 0.0],
            zoom: 1.0,
            pass_track: (None, Vec::new()),
            list: PassList::default(),
        }
    }
}

/// Labels already drawn this frame, so the next one can avoid them.
type Placed = std::cell::RefCell<Vec<Rect>>;

/// Draws `text` next to `p`, on a side that keeps it inside `rect` and off
/// the labels already placed (above-right, above-left, below-right,
/// below-left; the first free one, else the first that fits).
fn label_inside(
    painter: &Painter,
    rect: Rect,
    placed: &Placed,
    p: Pos2,
    text: &str,
    size: f32,
    colour: Color32,
) {
    let galley = painter.layout_no_wrap(text.to_string(), FontId::proportional(size), colour);
    let (w, h) = (galley.size().x, galley.size().y);
    let clamp = |pos: Pos2| {
        Pos2::new(
            pos.x.clamp(
                rect.left() + 2.0,
                (rect.right() - w - 2.0).max(rect.left() + 2.0),
            ),
            pos.y.clamp(
                rect.top() + 2.0,
                (rect.bottom() - h - 2.0).max(rect.top() + 2.0),
            ),
        )
    };
    let candidates = [
        Pos2::new(p.x + 8.0, p.y - 4.0 - h),
        Pos2::new(p.x - 8.0 - w, p.y - 4.0 - h),
        Pos2::new(p.x + 8.0, p.y + 4.0),
        Pos2::new(p.x - 8.0 - w, p.y + 4.0),
    ];
    let fits = |c: &Pos2| {
        rect.shrink(2.0)
            .contains_rect(Rect::from_min_size(*c, galley.size()))
    };
    let free = |c: &Pos2| {
        let r = Rect::from_min_size(*c, galley.size()).expand(1.0);
        !placed.borrow().iter().any(|q| q.intersects(r))
    };
    let pos = candidates
        .iter()
        .find(|c| fits(c) && free(c))
        .or_else(|| candidates.iter().find(|c| fits(c)))
        .copied()
        .map_or_else(|| clamp(candidates[0]), clamp);
    let r = Rect::from_min_size(pos, galley.size()).expand(1.0);
    placed.borrow_mut().push(r);
    painter.rect_filled(r, 2.0, Color32::from_black_alpha(140));
    painter.galley(pos, galley, colour);
}

impl MapView {
    /// Rebuilds whatever cache is out of date. Runs before drawing, never inside it.
    fn prepare(&mut self, state: &AppState) {
        let doc = &state.doc;
        let eop = doc.scenario.earth_orientation;
        let span_s = self.track_span_min * 60.0;
        let bucket_s = TRACK_BUCKET_MIN_S.max(span_s / 4.0);
        let bucket = (state.cursor.s_since_j2000() / bucket_s).floor() as i64;
        let key = (doc.revision, self.track_span_min.to_bits(), bucket);
        if self.tracks.key != Some(key) {
            // Start a little behind the cursor so the recent path stays visible.
            let start = UtcTime::from_s_since_j2000(bucket as f64 * bucket_s).add_s(-span_s * 0.15);
            self.tracks.tracks = doc
                .fleet
                .iter()
                .take(MAX_TRACKS)
                .map(|set| {
                    // Cover the whole bucket, so the span ahead of the cursor stays full.
                    geo::ground_track(set, start, span_s * 1.15 + bucket_s, 30.0, &eop)
                })
                .collect();
            self.tracks.key = Some(key);
        }
        let ckey = (doc.revision, self.circle_altitude_km.to_bits());
        if self.circles.key != Some(ckey) {
            self.circles.circles = doc
                .scenario
                .stations
                .iter()
                .map(|s| geo::visibility_circle(s, self.circle_altitude_km))
                .collect();
            self.circles.key = Some(ckey);
        }
        if self.propagators.0 != Some(doc.revision) {
            self.propagators = (
                Some(doc.revision),
                doc.fleet.iter().map(|s| Propagator::new(s).ok()).collect(),
            );
        }
        let pkey = state.selected_pass.map(|i| (state.passes_revision, i));
        if self.pass_track.0 != pkey {
            self.pass_track = (pkey, Vec::new());
            if let Some(p) = state.selected()
                && let Some(set) = doc
                    .fleet
                    .iter()
                    .find(|s| s.catalog_number == p.catalog_number)
            {
                self.pass_track.1 = geo::ground_track(set, p.aos, p.duration_s, 10.0, &eop);
            }
        }
    }

    /// Positions at the cursor (one SGP4 call per spacecraft).
    fn positions_now(&self, state: &AppState) -> Vec<Option<geo::Position>> {
        let eop = state.doc.scenario.earth_orientation;
        self.propagators
            .1
            .iter()
            .map(|p| {
                p.as_ref()
                    .and_then(|p| geo::position(p, state.cursor, &eop))
            })
            .collect()
    }

    pub fn ui(&mut self, ui: &mut egui::Ui, state: &mut AppState) {
        if self.show_list {
            egui::Panel::left("map-pass-list")
                .resizable(true)
                .default_size(300.0)
                .show(ui, |ui| {
                    self.list.ui(ui, state);
                });
        }
        self.prepare(state);
        let now = self.positions_now(state);
        let eop = state.doc.scenario.earth_orientation;
        let sub_solar = geo::sub_solar_point(state.cursor, &eop);
        let night = if self.show_night {
            geo::night_bands(sub_solar, 4.0)
        } else {
            Vec::new()
        };

        ui.horizontal_wrapped(|ui| {
            ui.checkbox(&mut self.show_list, "Pass list");
            let l = ui.label("Track span (min)");
            ui.add(
                egui::DragValue::new(&mut self.track_span_min)
                    .range(10.0..=1440.0)
                    .speed(5.0),
            )
            .labelled_by(l.id);
            let l = ui.label("Circle altitude (km)");
            ui.add(
                egui::DragValue::new(&mut self.circle_altitude_km)
                    .range(150.0..=40_000.0)
                    .speed(10.0),
            )
            .labelled_by(l.id);
            ui.checkbox(&mut self.show_tracks, "Ground tracks");
            ui.checkbox(&mut self.show_circles, "Visibility circles");
            ui.checkbox(&mut self.show_night, "Night side");
            if ui.button("Reset map view").clicked() {
                self.center = [0.0, 0.0];
                self.zoom = 1.0;
            }
            ui.separator();
            ui.monospace(time_label(state.cursor));
        });
        // Legend first (one line, wrapped), so the map takes the rest of the space.
        self.legend(ui, state);

        let avail = ui.available_size().max(vec2(200.0, 120.0));
        let (rect, response) = ui.allocate_exact_size(avail, Sense::click_and_drag());
        // Zoom about the pointer, pan by dragging, reset on double-click.
        let fit = f64::from((rect.width() / 360.0).min(rect.height() / 180.0));
        if response.double_clicked() {
            self.center = [0.0, 0.0];
            self.zoom = 1.0;
        }
        if let Some(h) = response.hover_pos() {
            let scroll = ui.input(|i| i.smooth_scroll_delta.y);
            if scroll != 0.0 {
                let s = fit * self.zoom;
                let before = [
                    self.center[0] + f64::from(h.x - rect.center().x) / s,
                    self.center[1] - f64::from(h.y - rect.center().y) / s,
                ];
                self.zoom = (self.zoom * (f64::from(scroll) / 200.0).exp()).clamp(1.0, 40.0);
                let s = fit * self.zoom;
                self.center = [
                    before[0] - f64::from(h.x - rect.center().x) / s,
                    before[1] + f64::from(h.y - rect.center().y) / s,
                ];
            }
        }
        if response.dragged() {
            let d = response.drag_delta();
            let s = fit * self.zoom;
            self.center[0] -= f64::from(d.x) / s;
            self.center[1] += f64::from(d.y) / s;
        }
        // Keep some of the world in view.
        let s = fit * self.zoom;
        let half_w = f64::from(rect.width()) / 2.0 / s;
        let half_h = f64::from(rect.height()) / 2.0 / s;
        self.center[0] =
            self.center[0].clamp(-180.0 + half_w.min(180.0), 180.0 - half_w.min(180.0));
        self.center[1] = self.center[1].clamp(-90.0 + half_h.min(90.0), 90.0 - half_h.min(90.0));
        let (c_lon, c_lat) = (self.center[0], self.center[1]);
        let to_screen = |lon: f64, lat: f64| {
            Pos2::new(
                rect.center().x + ((lon - c_lon) * s) as f32,
                rect.center().y - ((lat - c_lat) * s) as f32,
            )
        };
        let painter = ui.painter_at(rect);
        let placed = Placed::default();
        painter.rect_filled(rect, 0.0, ui.visuals().extreme_bg_color);
        painter.rect_filled(
            Rect::from_two_pos(to_screen(-180.0, 90.0), to_screen(180.0, -90.0)),
            0.0,
            palette::SEA,
        );

        // Graticule every 30°.
        for k in -6..=6 {
            let lon = f64::from(k) * 30.0;
            painter.line_segment(
                [to_screen(lon, 90.0), to_screen(lon, -90.0)],
                Stroke::new(0.5, palette::GRATICULE),
            );
        }
        for k in -3..=3 {
            let lat = f64::from(k) * 30.0;
            painter.line_segment(
                [to_screen(-180.0, lat), to_screen(180.0, lat)],
                Stroke::new(0.5, palette::GRATICULE),
            );
        }

        // Night side: a strip mesh between the terminator and the dark pole.
        if night.len() > 1 {
            let mut mesh = Mesh::default();
            for (lon, lo, hi) in &night {
                mesh.colored_vertex(to_screen(*lon, *hi), palette::NIGHT);
                mesh.colored_vertex(to_screen(*lon, *lo), palette::NIGHT);
            }
            for i in 0..(night.len() as u32 - 1) {
                let a = 2 * i;
                mesh.add_triangle(a, a + 1, a + 2);
                mesh.add_triangle(a + 1, a + 3, a + 2);
            }
            painter.add(Shape::mesh(mesh));
        }

        let coast_stroke = Stroke::new(1.0, palette::COAST);
        for line in &self.coastlines {
            let pts: Vec<Pos2> = line
                .iter()
                .map(|p| to_screen(f64::from(p[0]), f64::from(p[1])))
                .collect();
            painter.add(Shape::line(pts, coast_stroke));
        }

        if self.show_circles {
            for strips in &self.circles.circles {
                for s in strips {
                    let pts: Vec<Pos2> = s.iter().map(|p| to_screen(p[0], p[1])).collect();
                    painter.add(Shape::dashed_line(
                        &pts,
                        Stroke::new(1.2, palette::STATION),
                        6.0,
                        4.0,
                    ));
                }
            }
        }
        let fleet_numbers: Vec<u32> = state.doc.fleet.iter().map(|s| s.catalog_number).collect();
        let shown = |i: usize| !state.hidden.contains(&fleet_numbers[i]);
        if self.show_tracks {
            for (i, strips) in self.tracks.tracks.iter().enumerate() {
                if !shown(i) {
                    continue;
                }
                let stroke = Stroke::new(1.4, palette::series(i).gamma_multiply(0.8));
                for s in strips {
                    let pts: Vec<Pos2> = s.iter().map(|p| to_screen(p[0], p[1])).collect();
                    if palette::dashed(i) {
                        painter.extend(Shape::dashed_line(&pts, stroke, 8.0, 4.0));
                    } else {
                        painter.add(Shape::line(pts, stroke));
                    }
                }
            }
        }
        // The selected pass: its ground track, thick, and a line to its station.
        if let Some(p) = state.selected() {
            for strip in &self.pass_track.1 {
                let pts: Vec<Pos2> = strip.iter().map(|q| to_screen(q[0], q[1])).collect();
                painter.add(Shape::line(pts, Stroke::new(4.0, palette::CURSOR)));
            }
            if let (Some(first), Some(st)) = (
                self.pass_track.1.first().and_then(|s| s.first()),
                state.doc.scenario.stations.get(p.station_index),
            ) {
                let a = to_screen(first[0], first[1]);
                label_inside(
                    &painter,
                    rect,
                    &placed,
                    a,
                    &format!(
                        "selected pass: {} over {} from {}",
                        p.satellite,
                        st.name,
                        hm_label(p.aos)
                    ),
                    12.0,
                    palette::CURSOR,
                );
            }
        }
        let text_colour = Color32::from_gray(235);
        let mut hover_text = None;
        let pointer = response.hover_pos();
        for (k, st) in state.doc.scenario.stations.iter().enumerate() {
            let p = to_screen(st.longitude_deg, st.latitude_deg);
            painter.rect_filled(
                Rect::from_center_size(p, vec2(7.0, 7.0)),
                0.0,
                palette::STATION,
            );
            label_inside(&painter, rect, &placed, p, &st.name, 12.0, text_colour);
            if pointer.is_some_and(|q| q.distance(p) < 9.0) {
                let next = state.next_contact_at_station(k);
                hover_text = Some(format!(
                    "station {}\n{:.2}°, {:.2}°, {:.0} m\nnext contact: {}",
                    st.name,
                    st.latitude_deg,
                    st.longitude_deg,
                    st.height_m,
                    state.describe_next(&next, "with")
                ));
            }
        }
        for (i, (pos, set)) in now.iter().zip(&state.doc.fleet).enumerate() {
            let Some(pos) = pos else { continue };
            if !shown(i) {
                continue;
            }
            let q = to_screen(pos.lon_lat[0], pos.lon_lat[1]);
            painter.add(palette::marker(q, 5.5, i, Stroke::new(1.5, Color32::BLACK)));
            label_inside(&painter, rect, &placed, q, &set.name, 11.0, text_colour);
            if pointer.is_some_and(|h| h.distance(q) < 9.0) {
                let next = state.next_contact_of_spacecraft(set.catalog_number);
                hover_text = Some(format!(
                    "{} ({})\naltitude {:.0} km, {}\n{:.2}°, {:.2}°\nnext contact: {}",
                    set.name,
                    set.catalog_number,
                    pos.height_km,
                    match pos.illumination {
                        Illumination::Sunlit => "sunlit",
                        Illumination::Penumbra => "in penumbra",
                        Illumination::Umbra => "in Earth's shadow",
                    },
                    pos.lon_lat[1],
                    pos.lon_lat[0],
                    state.describe_next(&next, "over")
                ));
            }
        }
        // The selected close approach: where the primary is at TCA.
        if let Some((primary, secondary, tca)) = state.focus_approach
            && let Some(k) = fleet_numbers.iter().position(|n| *n == primary)
            && let Some(Some(prop)) = self.propagators.1.get(k)
            && let Some(pos) = geo::position(prop, tca, &eop)
        {
            let q = to_screen(pos.lon_lat[0], pos.lon_lat[1]);
            painter.circle_stroke(q, 11.0, Stroke::new(2.5, palette::VERMILLION));
            painter.circle_stroke(q, 16.0, Stroke::new(1.0, palette::VERMILLION));
            let other = state
                .doc
                .catalog
                .iter()
                .chain(&state.doc.fleet)
                .find(|s| s.catalog_number == secondary)
                .map(|s| s.name.clone())
                .unwrap_or_else(|| secondary.to_string());
            label_inside(
                &painter,
                rect,
                &placed,
                q + vec2(0.0, 14.0),
                &format!("close approach with {other} at {} (TCA)", hm_label(tca)),
                12.0,
                palette::VERMILLION,
            );
        }
        // Sub-solar point: a ring, so it is not mistaken for a spacecraft.
        let sun = to_screen(sub_solar[0], sub_solar[1]);
        painter.circle_stroke(sun, 7.0, Stroke::new(2.0, palette::YELLOW));

        if let Some(h) = pointer {
            let text = hover_text.unwrap_or_else(|| {
                let lon = c_lon + f64::from(h.x - rect.center().x) / s;
                let lat = c_lat - f64::from(h.y - rect.center().y) / s;
                format!("{lat:.2}°, {lon:.2}°")
            });
            response.on_hover_text_at_pointer(text);
        }
    }

    /// Spacecraft entries that hide or show a spacecraft when clicked, then the keys.
    fn legend(&mut self, ui: &mut egui::Ui, state: &mut AppState) {
        ui.horizontal_wrapped(|ui| {
            for (i, set) in state.doc.fleet.iter().enumerate() {
                let hidden = state.hidden.contains(&set.catalog_number);
                palette::legend_swatch(ui, i);
                let r = ui
                    .selectable_label(!hidden, &set.name)
                    .on_hover_text(if hidden { "Hidden: click to show" } else { "Click to hide" });
                if r.clicked() {
                    if hidden {
                        state.hidden.retain(|n| *n != set.catalog_number);
                    } else {
                        state.hidden.push(set.catalog_number);
                    }
                }
            }
            ui.separator();
            ui.label("squares: stations; dashed: visibility at the circle altitude and mask; shaded: night");
            ui.colored_label(palette::YELLOW, "ring: sub-solar point");
        });
    }
}
