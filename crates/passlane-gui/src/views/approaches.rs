//! Close approaches: a sortable event table and, for the selected event, the
//! range over time and the encounter-plane picture (miss vector, combined
//! covariance ellipse, hard-body circle to scale).
//!
//! Screening runs `passlane_plan::screen::screen_with_progress` on a worker
//! thread (fleet against the catalog, or the fleet against itself when no
//! catalog is loaded). With element sets only there is no covariance, so the
//! Pc column shows the maximum probability over an unknown isotropic
//! covariance (`pc_max_isotropic`), labelled as such. The encounter-plane
//! drawing works from plain numbers ([`EncounterPicture`]); it is shown once
//! events carry a covariance (CDM import is not wired yet).

use eframe::egui::{self, Align2, FontId, Pos2, Sense, Shape, Stroke, vec2};
use egui_plot::{Line, Plot, PlotPoints};
use passlane_orbit::Propagator;
use passlane_orbit::frames::{norm, sub};
use passlane_plan::screen::{
    CloseApproach, ScreeningRequest, ScreeningResult, ScreeningSettings, ScreeningVolume,
    screen_with_progress,
};

use crate::jobs::{Job, Poll, progress_ui};
use crate::palette;
use crate::state::{AppState, time_label};

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
    events: Vec<CloseApproach>,
    selected: Option<usize>,
    sort: SortKey,
    descending: bool,
    job: Option<Job<ScreeningResult>>,
    /// Document revision the rows were screened for.
    screened_revision: Option<u64>,
    diagnostics: Vec<String>,
    /// Range over ±10 min around the selected event's TCA: (minutes from TCA, km).
    range_series: Vec<[f64; 2]>,
}

impl Default for ApproachesView {
    fn default() -> Self {
        ApproachesView {
            rows: Vec::new(),
            events: Vec::new(),
            selected: None,
            sort: SortKey::Tca,
            descending: false,
            job: None,
            screened_revision: None,
            diagnostics: Vec::new(),
            range_series: Vec::new(),
        }
    }
}

/// The row for one event; the Pc is the worst case over covariance size.
fn row_of(e: &CloseApproach, hard_body_radius_m: f64) -> ApproachRow {
    let pc = passlane_plan::pc::pc_max_isotropic(e.miss_distance_km * 1000.0, hard_body_radius_m)
        .ok()
        .map(|p| p.pc_max);
    ApproachRow {
        primary: e.primary.clone(),
        secondary: e.secondary.clone(),
        tca_iso: e.tca.to_iso_ms(),
        miss_km: e.miss_distance_km,
        ric_km: [e.radial_km, e.in_track_km, e.cross_track_km],
        relative_speed_km_s: e.relative_speed_km_s,
        pc,
        covariance_source: "none: max over size".into(),
    }
}

impl ApproachesView {
    pub fn ui(&mut self, ui: &mut egui::Ui, state: &mut AppState) {
        let before = self.selected;
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
        self.poll(state);
        ui.horizontal(|ui| {
            let running = self.job.is_some();
            if ui
                .add_enabled(!running, egui::Button::new("Run screening"))
                .clicked()
            {
                self.start(state, ui.ctx().clone());
            }
            if let Some(job) = &self.job
                && progress_ui(ui, &job.label, &job.progress, job.started)
            {
                job.progress.cancel();
            }
            if self.screened_revision.is_some()
                && self.screened_revision != Some(state.doc.revision)
            {
                ui.colored_label(
                    palette::YELLOW,
                    "Inputs changed since this screening: run it again.",
                );
            }
        });
        for d in self.diagnostics.iter().take(20) {
            ui.colored_label(palette::VERMILLION, d);
        }
        if self.rows.is_empty() {
            ui.label(if self.screened_revision.is_some() {
                "No close approaches inside the threshold in this window."
            } else {
                "Not screened yet: press Run screening."
            });
        }
        ui.add_space(6.0);
        egui::ScrollArea::vertical()
            .id_salt("approach-scroll")
            .max_height(ui.available_height() * 0.5)
            .show(ui, |ui| {
                self.table(ui);
            });
        if self.selected != before {
            self.compute_range(state);
        }
        if let Some(row) = self.selected.and_then(|i| self.rows.get(i)).cloned() {
            ui.separator();
            ui.label(format!(
                "{} and {} at {}: miss {:.3} km, Pc shown is the maximum over an unknown covariance size (element sets carry no covariance).",
                row.primary, row.secondary, row.tca_iso, row.miss_km
            ));
            let series = self.range_series.clone();
            Plot::new("approach-range")
                .height(ui.available_height().max(120.0))
                .show(ui, |p| {
                    p.line(
                        Line::new("range (km) vs minutes from TCA", PlotPoints::from(series))
                            .color(palette::SKY_BLUE),
                    );
                });
        }
    }

    fn start(&mut self, state: &AppState, ctx: egui::Context) {
        let fleet = state.doc.fleet.clone();
        let catalog = state.doc.catalog.clone();
        let (start, end) = state.doc.window();
        let settings = ScreeningSettings {
            volume: ScreeningVolume::Sphere {
                radius_km: state.doc.scenario.screening.threshold_km,
            },
            ..ScreeningSettings::default()
        };
        self.job = Some(Job::spawn(
            "Screening",
            state.doc.revision,
            Some(ctx),
            move |p| {
                use passlane_plan::Progress;
                let request = ScreeningRequest {
                    primaries: &fleet,
                    secondaries: if catalog.is_empty() {
                        None
                    } else {
                        Some(&catalog)
                    },
                    start,
                    end,
                    settings,
                };
                screen_with_progress(&request, &|f| {
                    p.report(f);
                    !p.cancelled()
                })
            },
        ));
    }

    fn poll(&mut self, state: &AppState) {
        let Some(job) = &self.job else { return };
        match job.poll() {
            Poll::Running => {}
            Poll::Done(result) => {
                self.screened_revision = Some(job.revision);
                self.job = None;
                let hbr = state.doc.scenario.screening.default_hard_body_radius_m;
                self.rows = result.events.iter().map(|e| row_of(e, hbr)).collect();
                self.events = result.events;
                self.diagnostics = result
                    .diagnostics
                    .iter()
                    .map(|d| format!("{}: {}", d.name, d.message))
                    .collect();
                if result.cancelled {
                    self.diagnostics.insert(
                        0,
                        format!(
                            "Cancelled: screened until {}",
                            time_label(result.screened_until)
                        ),
                    );
                }
                self.sort_rows();
            }
            Poll::Lost => {
                self.job = None;
                self.diagnostics = vec!["The screening stopped unexpectedly.".into()];
            }
        }
    }

    /// Range between the two objects around TCA, from direct SGP4 states.
    fn compute_range(&mut self, state: &AppState) {
        self.range_series.clear();
        let Some(row) = self.selected.and_then(|i| self.rows.get(i)) else {
            return;
        };
        let Some(e) = self.events.iter().find(|e| {
            e.tca.to_iso_ms() == row.tca_iso
                && e.primary == row.primary
                && e.secondary == row.secondary
        }) else {
            return;
        };
        let find = |n: u32| {
            state
                .doc
                .fleet
                .iter()
                .chain(&state.doc.catalog)
                .find(|s| s.catalog_number == n)
        };
        let (Some(a), Some(b)) = (
            find(e.primary_catalog_number),
            find(e.secondary_catalog_number),
        ) else {
            return;
        };
        let (Ok(pa), Ok(pb)) = (Propagator::new(a), Propagator::new(b)) else {
            return;
        };
        for k in -120..=120 {
            let t = e.tca.add_s(f64::from(k) * 5.0);
            if let (Ok(sa), Ok(sb)) = (pa.state_at(t), pb.state_at(t)) {
                self.range_series.push([
                    f64::from(k) * 5.0 / 60.0,
                    norm(&sub(&sa.position_km, &sb.position_km)),
                ]);
            }
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
        let arrow = if self.sort == key {
            if self.descending { " (desc)" } else { " (asc)" }
        } else {
            ""
        };
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
        egui::Grid::new("approach-table")
            .striped(true)
            .num_columns(7)
            .show(ui, |ui| {
                self.header(ui, "TCA (UTC)", SortKey::Tca);
                ui.strong("Objects");
                self.header(ui, "Miss (km)", SortKey::Miss);
                ui.strong("R / I / C (km)");
                ui.strong("Rel. speed (km/s)");
                self.header(ui, "Pc", SortKey::Pc);
                ui.strong("Covariance");
                ui.end_row();
                for (i, r) in self.rows.iter().enumerate() {
                    if ui
                        .selectable_label(
                            self.selected == Some(i),
                            time_label(
                                passlane_orbit::UtcTime::parse_iso(&r.tca_iso).unwrap_or_default(),
                            ),
                        )
                        .clicked()
                    {
                        self.selected = Some(i);
                    }
                    ui.label(format!("{} / {}", r.primary, r.secondary));
                    ui.label(format!("{:.3}", r.miss_km));
                    ui.label(format!(
                        "{:.3} / {:.3} / {:.3}",
                        r.ric_km[0], r.ric_km[1], r.ric_km[2]
                    ));
                    ui.label(format!("{:.2}", r.relative_speed_km_s));
                    ui.label(
                        r.pc.map(|p| format!("{p:.1e}"))
                            .unwrap_or_else(|| "—".into()),
                    );
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
    let extent_m = (pic.miss_m[0].hypot(pic.miss_m[1]) + 3.0 * l1.sqrt())
        .max(pic.hard_body_radius_m * 4.0)
        .max(1.0);
    let scale = (size / 2.0 - 10.0) / extent_m as f32;
    let c = rect.center();
    let at = |x: f64, z: f64| Pos2::new(c.x + x as f32 * scale, c.y - z as f32 * scale);
    for (k, colour) in [(1.0, palette::ORANGE), (3.0, palette::SKY_BLUE)] {
        let pts: Vec<Pos2> = (0..=72)
            .map(|i| {
                let t = f64::from(i) * std::f64::consts::TAU / 72.0;
                let (u, v) = (k * l1.sqrt() * t.cos(), k * l2.sqrt() * t.sin());
                at(
                    pic.miss_m[0] + u * angle.cos() - v * angle.sin(),
                    pic.miss_m[1] + u * angle.sin() + v * angle.cos(),
                )
            })
            .collect();
        painter.add(Shape::line(pts, Stroke::new(1.5, colour)));
    }
    painter.circle_filled(
        c,
        (pic.hard_body_radius_m as f32 * scale).max(1.0),
        palette::VERMILLION,
    );
    painter.arrow(
        c,
        at(pic.miss_m[0], pic.miss_m[1]) - c,
        Stroke::new(1.5, palette::CURSOR),
    );
    painter.text(
        rect.left_top() + vec2(4.0, 4.0),
        Align2::LEFT_TOP,
        format!("scale: {extent_m:.0} m to the edge"),
        FontId::proportional(11.0),
        ui.visuals().text_color(),
    );
}
