//! World map (equirectangular): coastlines, ground tracks, sub-satellite
//! points, station visibility circles and the night side at the time cursor.
//!
//! Tracks and circles are rebuilt only when their inputs change: tracks when
//! the document, the span or the cursor's two-minute bucket changes; circles
//! when the document or the altitude changes. Drawing only maps points to pixels.

use eframe::egui::{self, Align2, Color32, FontId, Mesh, Pos2, Rect, Sense, Shape, Stroke, vec2};
use passlane_orbit::{Propagator, UtcTime};

use crate::coast;
use crate::geo::{self, LonLat};
use crate::palette;
use crate::state::{AppState, time_label};

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

pub struct MapView {
    coastlines: Vec<coast::Polyline>,
    /// Ground-track span ahead of the cursor, minutes.
    pub track_span_min: f64,
    /// Altitude for the visibility circles, km.
    pub circle_altitude_km: f64,
    show_tracks: bool,
    show_circles: bool,
    show_night: bool,
    tracks: TrackCache,
    circles: CircleCache,
    propagators: (Option<u64>, Vec<Option<Propagator>>),
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
            tracks: TrackCache::default(),
            circles: CircleCache::default(),
            propagators: (None, Vec::new()),
        }
    }
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
    }

    /// Sub-satellite points at the cursor (one SGP4 call per spacecraft).
    fn points_now(&self, state: &AppState) -> Vec<Option<LonLat>> {
        let eop = state.doc.scenario.earth_orientation;
        self.propagators
            .1
            .iter()
            .map(|p| {
                p.as_ref()
                    .and_then(|p| geo::sub_satellite_point(p, state.cursor, &eop))
            })
            .collect()
    }

    pub fn ui(&mut self, ui: &mut egui::Ui, state: &mut AppState) {
        self.prepare(state);
        let now = self.points_now(state);
        let sub_solar = geo::sub_solar_point(state.cursor, &state.doc.scenario.earth_orientation);
        let night = if self.show_night {
            geo::night_bands(sub_solar, 4.0)
        } else {
            Vec::new()
        };

        ui.horizontal_wrapped(|ui| {
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
            ui.separator();
            ui.monospace(time_label(state.cursor));
        });

        // Fit a 2:1 map into the space left, leaving a line for the legend.
        let avail = ui.available_size() - vec2(0.0, 24.0);
        let w = avail.x.min(avail.y * 2.0).max(200.0);
        let (rect, response) = ui.allocate_exact_size(vec2(w, w / 2.0), Sense::hover());
        let painter = ui.painter_at(rect);
        let to_screen = |lon: f64, lat: f64| {
            Pos2::new(
                rect.left() + ((lon + 180.0) / 360.0) as f32 * rect.width(),
                rect.top() + ((90.0 - lat) / 180.0) as f32 * rect.height(),
            )
        };
        painter.rect_filled(rect, 0.0, palette::SEA);

        // Graticule every 30°.
        for k in -5..=5 {
            let lon = f64::from(k) * 30.0;
            painter.line_segment(
                [to_screen(lon, 90.0), to_screen(lon, -90.0)],
                Stroke::new(0.5, palette::GRATICULE),
            );
        }
        for k in -2..=2 {
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
        if self.show_tracks {
            for (i, strips) in self.tracks.tracks.iter().enumerate() {
                let colour = palette::series(i).gamma_multiply(0.8);
                for s in strips {
                    let pts: Vec<Pos2> = s.iter().map(|p| to_screen(p[0], p[1])).collect();
                    painter.add(Shape::line(pts, Stroke::new(1.4, colour)));
                }
            }
        }
        let text_colour = Color32::from_gray(235);
        for st in &state.doc.scenario.stations {
            let p = to_screen(st.longitude_deg, st.latitude_deg);
            painter.rect_filled(
                Rect::from_center_size(p, vec2(7.0, 7.0)),
                0.0,
                palette::STATION,
            );
            painter.text(
                p + vec2(6.0, -6.0),
                Align2::LEFT_BOTTOM,
                &st.name,
                FontId::proportional(12.0),
                text_colour,
            );
        }
        for (i, (p, set)) in now.iter().zip(&state.doc.fleet).enumerate() {
            let Some(p) = p else { continue };
            let q = to_screen(p[0], p[1]);
            painter.circle(q, 5.5, palette::series(i), Stroke::new(1.5, Color32::BLACK));
            painter.text(
                q + vec2(7.0, 2.0),
                Align2::LEFT_TOP,
                &set.name,
                FontId::proportional(11.0),
                text_colour,
            );
        }
        // Sub-solar point: a ring, so it is not mistaken for a spacecraft.
        let sun = to_screen(sub_solar[0], sub_solar[1]);
        painter.circle_stroke(sun, 7.0, Stroke::new(2.0, palette::YELLOW));

        if let Some(h) = response.hover_pos() {
            let lon = f64::from((h.x - rect.left()) / rect.width()) * 360.0 - 180.0;
            let lat = 90.0 - f64::from((h.y - rect.top()) / rect.height()) * 180.0;
            response.on_hover_text_at_pointer(format!("{lat:.2}°, {lon:.2}°"));
        }

        // Legend.
        ui.horizontal_wrapped(|ui| {
            for (i, set) in state.doc.fleet.iter().enumerate().take(20) {
                let (r, _) = ui.allocate_exact_size(vec2(12.0, 12.0), Sense::hover());
                ui.painter()
                    .circle_filled(r.center(), 5.0, palette::series(i));
                ui.label(&set.name);
            }
            ui.separator();
            ui.label("squares: stations; dashed: visibility at the circle altitude and mask");
            ui.colored_label(palette::YELLOW, "ring: sub-solar point");
            ui.label("shaded: night");
        });
    }
}
