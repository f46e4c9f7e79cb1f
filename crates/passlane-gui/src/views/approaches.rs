//! Close approaches: a sortable event table and, for the selected event, the
//! range over time and the encounter-plane picture (miss vector, combined
//! covariance ellipse, hard-body circle to scale).
//!
//! The screening and collision-probability modules are not in the library yet;
//! until they are, the table is empty and the view says so. The drawing of the
//! encounter plane works from plain numbers ([`EncounterPicture`]) so wiring the
//! library's results in is a matter of filling that struct.

use eframe::egui::{self, Align2, FontId, Pos2, Sense, Shape, Stroke, vec2};

use crate::palette;
use crate::state::AppState;

/// One close-approach row as the table shows it.
#[derive(Debug, Clone, PartialEq)]
pub struct ApproachRow {
    pub primary: String,
    pub secondary: String,
    pub tca_iso: String,
    pub miss_km: f64,
    /// Radial, in-track, cross-track components of the miss, km.
    pub ric_km: [f64; 3],
    pub relative_speed_km_s: f64,
    pub pc: Option<f64>,
    pub covariance_source: String,
}

/// The encounter plane of one event, in metres: miss vector, 2×2 combined
/// covariance (m²) and hard-body radius.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct EncounterPicture {
    pub miss_m: [f64; 2],
    pub covariance_m2: [[f64; 2]; 2],
    pub hard_body_radius_m: f64,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum SortKey {
    Tca,
    Miss,
    Pc,
}

pub struct ApproachesView {
    rows: Vec<ApproachRow>,
    selected: Option<usize>,
    sort: SortKey,
    descending: bool,
}

impl Default for ApproachesView {
    fn default() -> Self {
        ApproachesView { rows: Vec::new(), selected: None, sort: SortKey::Tca, descending: false }
    }
}

impl ApproachesView {
    pub fn ui(&mut self, ui: &mut egui::Ui, state: &mut AppState) {
        ui.colored_label(
            palette::YELLOW,
            "Element-set screening is advisory: defer to official conjunction messages and coordinate with the other operator.",
        );
        ui.label(format!(
            "Screening {} spacecraft against {} catalog objects, threshold {:.1} km.",
            state.doc.fleet.len(),
            state.doc.catalog.len(),
            state.doc.scenario.screening.threshold_km
        ));
        if self.rows.is_empty() {
            ui.add_space(8.0);
            ui.label("Screening is not available in this build yet: close approaches will be listed here once the screening module is part of the library.");
        }
        ui.add_space(6.0);
        self.table(ui);
        if let Some(row) = self.selected.and_then(|i| self.rows.get(i)).cloned() {
            ui.separator();
            ui.label(format!("{} and {} at {}", row.primary, row.secondary, row.tca_iso));
        }
    }

    fn sort_rows(&mut self) {
        let key = self.sort;
        self.rows.sort_by(|a, b| match key {
            SortKey::Tca => a.tca_iso.cmp(&b.tca_iso),
            SortKey::Miss => a.miss_km.total_cmp(&b.miss_km),
            SortKey::Pc => a.pc.unwrap_or(0.0).total_cmp(&b.pc.unwrap_or(0.0)),
        });
        if self.descending {
            self.rows.reverse();
        }
        self.selected = None;
    }

    fn header(&mut self, ui: &mut egui::Ui, label: &str, key: SortKey) {
        let arrow = if self.sort == key { if self.descending { " ▼" } else { " ▲" } } else { "" };
        if ui.button(format!("{label}{arrow}")).clicked() {
            if self.sort == key {
                self.descending = !self.descending;
            } else {
                self.sort = key;
                self.descending = key == SortKey::Pc;
            }
            self.sort_rows();
        }
    }

    fn table(&mut self, ui: &mut egui::Ui) {
        egui::Grid::new("approach-table").striped(true).num_columns(7).show(ui, |ui| {
            self.header(ui, "TCA (UTC)", SortKey::Tca);
            ui.strong("Objects");
            self.header(ui, "Miss (km)", SortKey::Miss);
            ui.strong("R / I / C (km)");
            ui.strong("Rel. speed (km/s)");
            self.header(ui, "Pc", SortKey::Pc);
            ui.strong("Covariance");
            ui.end_row();
            for (i, r) in self.rows.iter().enumerate() {
                if ui.selectable_label(self.selected == Some(i), &r.tca_iso).clicked() {
                    self.selected = Some(i);
                }
                ui.label(format!("{} / {}", r.primary, r.secondary));
                ui.label(format!("{:.3}", r.miss_km));
                ui.label(format!("{:.3} / {:.3} / {:.3}", r.ric_km[0], r.ric_km[1], r.ric_km[2]));
                ui.label(format!("{:.2}", r.relative_speed_km_s));
                ui.label(r.pc.map(|p| format!("{p:.1e}")).unwrap_or_else(|| "—".into()));
                ui.label(&r.covariance_source);
                ui.end_row();
            }
        });
    }
}

/// Draws the encounter plane to scale: the 1σ and 3σ ellipses of the combined
/// covariance centred on the miss point, the hard-body circle at the origin and
/// the miss vector. Returns nothing; the caller labels it.
pub fn encounter_plane_ui(ui: &mut egui::Ui, pic: &EncounterPicture) {
    let size = ui.available_width().min(360.0);
    let (rect, _) = ui.allocate_exact_size(vec2(size, size), Sense::hover());
    let painter = ui.painter_at(rect);
    painter.rect_filled(rect, 0.0, ui.visuals().extreme_bg_color);
    // Eigen-decomposition of the symmetric 2×2 covariance.
    let [[a, b], [_, d]] = pic.covariance_m2;
    let tr = a + d;
    let disc = (((a - d) / 2.0).powi(2) + b * b).sqrt();
    let l1 = (tr / 2.0 + disc).max(0.0);
    let l2 = (tr / 2.0 - disc).max(0.0);
    let angle = 0.5 * (2.0 * b).atan2(a - d);
    let extent_m = (pic.miss_m[0].hypot(pic.miss_m[1]) + 3.0 * l1.sqrt()).max(pic.hard_body_radius_m * 4.0).max(1.0);
    let scale = (size / 2.0 - 10.0) / extent_m as f32;
    let c = rect.center();
    let at = |x: f64, z: f64| Pos2::new(c.x + x as f32 * scale, c.y - z as f32 * scale);
    for (k, colour) in [(1.0, palette::ORANGE), (3.0, palette::SKY_BLUE)] {
        let pts: Vec<Pos2> = (0..=72)
            .map(|i| {
                let t = f64::from(i) * std::f64::consts::TAU / 72.0;
                let (u, v) = (k * l1.sqrt() * t.cos(), k * l2.sqrt() * t.sin());
                at(pic.miss_m[0] + u * angle.cos() - v * angle.sin(), pic.miss_m[1] + u * angle.sin() + v * angle.cos())
            })
            .collect();
        painter.add(Shape::line(pts, Stroke::new(1.5, colour)));
    }
    painter.circle_filled(c, (pic.hard_body_radius_m as f32 * scale).max(1.0), palette::VERMILLION);
    painter.arrow(c, at(pic.miss_m[0], pic.miss_m[1]) - c, Stroke::new(1.5, palette::CURSOR));
    painter.text(rect.left_top() + vec2(4.0, 4.0), Align2::LEFT_TOP, format!("scale: {extent_m:.0} m to the edge"), FontId::proportional(11.0), ui.visuals().text_color());
}
