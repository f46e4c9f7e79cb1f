//! Close approaches: a sortable event table and, for the selected event, the
//! range over time and the encounter-plane picture (miss vector, combined
//! covariance ellipses, hard-body circle to scale).
//!
//! The screening and the probabilities come from the planner's
//! [`screen_and_assess`], the function `passlane screen --scenario FILE`
//! calls (fleet against the catalog, plus the fleet's own pairs; the
//! scenario's assumed covariance and summed hard-body radii), so the window
//! and the command line give the same events and the same Pc. It runs on a
//! worker thread.
//!
//! Element sets carry no covariance, so the Pc column uses the covariance the
//! scenario *assumes* (its label says which); "Pc max" is the largest
//! probability over the covariance's size and does not depend on that
//! assumption's scale.

use eframe::egui::{self, Align2, FontId, Pos2, Sense, Shape, Stroke, vec2};
use egui_plot::{Line, Plot, PlotPoints};
use passlane_orbit::frames::{norm, sub};
use passlane_orbit::{Propagator, UtcTime};
use passlane_plan::conjunction::{AssumedCovariance, EventRisk};
use passlane_plan::job::{ScreeningJob, ScreeningOutcome, screen_and_assess};
use passlane_plan::screen::{CloseApproach, ScreeningVolume};

use crate::jobs::{Job, Poll, progress_ui};
use crate::palette;
use crate::state::{AppState, time_label};

/// One close-approach row as the table shows it.
#[derive(Debug, Clone, PartialEq)]
pub struct ApproachRow {
    /// Index into the outcome's events.
    pub event: usize,
    pub primary: String,
    pub secondary: String,
    pub tca: UtcTime,
    pub miss_km: f64,
    /// Radial, in-track, cross-track components of the miss, km.
    pub ric_km: [f64; 3],
    pub relative_speed_km_s: f64,
    /// Pc with the assumed covariance.
    pub pc: Option<f64>,
    /// Largest Pc over the covariance's size.
    pub pc_max: Option<f64>,
    /// Where the covariance came from, or why there is no Pc.
    pub covariance_source: String,
}

/// The encounter plane of one event in the combined covariance's principal
/// axes, in metres: the miss vector, the two 1-sigma lengths along the axes and
/// the combined hard-body radius.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct EncounterPicture {
    pub miss_m: [f64; 2],
    pub sigma_m: [f64; 2],
    pub hard_body_radius_m: f64,
}

impl EncounterPicture {
    pub fn of(risk: &EventRisk) -> Self {
        EncounterPicture {
            miss_m: [risk.miss_x_m, risk.miss_y_m],
            sigma_m: [risk.sigma_x_m, risk.sigma_y_m],
            hard_body_radius_m: risk.hard_body_radius_m,
        }
    }
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum SortKey {
    Tca,
    Miss,
    Pc,
}

pub struct ApproachesView {
    outcome: Option<ScreeningOutcome>,
    rows: Vec<ApproachRow>,
    /// Index into `rows`.
    selected: Option<usize>,
    sort: SortKey,
    descending: bool,
    job: Option<Job<ScreeningOutcome>>,
    /// Document revision the rows were screened for.
    screened_revision: Option<u64>,
    diagnostics: Vec<String>,
    /// Range over ±10 min around the selected event's TCA: (minutes from TCA, km).
    range_series: Vec<[f64; 2]>,
}

impl Default for ApproachesView {
    fn default() -> Self {
        ApproachesView {
            outcome: None,
            rows: Vec::new(),
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

fn row_of(index: usize, e: &CloseApproach, risk: &Result<EventRisk, String>) -> ApproachRow {
    let (pc, pc_max, covariance_source) = match risk {
        Ok(r) => (Some(r.pc), Some(r.pc_max), "assumed (scenario)".to_string()),
        Err(why) => (None, None, format!("no Pc: {why}")),
    };
    ApproachRow {
        event: index,
        primary: e.primary.clone(),
        secondary: e.secondary.clone(),
        tca: e.tca,
        miss_km: e.miss_distance_km,
        ric_km: [e.radial_km, e.in_track_km, e.cross_track_km],
        relative_speed_km_s: e.relative_speed_km_s,
        pc,
        pc_max,
        covariance_source,
    }
}

impl ApproachesView {
    /// The last finished screening (tests compare it with the library calls).
    pub fn outcome(&self) -> Option<&ScreeningOutcome> {
        self.outcome.as_ref()
    }

    /// Whether a screening is running.
    pub fn running(&self) -> bool {
        self.job.is_some()
    }

    pub fn ui(&mut self, ui: &mut egui::Ui, state: &mut AppState) {
        let before = self.selected;
        ui.colored_label(
            palette::YELLOW,
            "Element-set screening is advisory: defer to official conjunction messages and coordinate with the other operator.",
        );
        let screening = &state.doc.scenario.screening;
        ui.label(format!(
            "Screening {} spacecraft against {} catalog objects (and each other), sphere of {:.1} km. \
             Pc uses the covariance {}; hard-body radius per object from the scenario, else {:.1} m.",
            state.doc.fleet.len(),
            state.doc.catalog.len(),
            screening.threshold_km,
            AssumedCovariance::from_scenario(&state.doc.scenario).label(),
            screening.default_hard_body_radius_m,
        ));
        self.poll();
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
        ui.add_space(4.0);
        if !self.rows.is_empty() {
            egui::ScrollArea::vertical()
                .id_salt("approach-scroll")
                .max_height(ui.available_height() * 0.42)
                .show(ui, |ui| self.table(ui));
        }
        if self.selected != before {
            self.compute_range(state);
        }
        let Some(row) = self.selected.and_then(|i| self.rows.get(i)).cloned() else {
            if !self.rows.is_empty() {
                ui.label(
                    "Select an event (its TCA) for the range around TCA and the encounter plane.",
                );
            }
            return;
        };
        ui.separator();
        ui.strong(format!(
            "{} and {}: TCA {}, miss {:.3} km, relative speed {:.2} km/s",
            row.primary,
            row.secondary,
            time_label(row.tca),
            row.miss_km,
            row.relative_speed_km_s
        ));
        let risk = self
            .outcome
            .as_ref()
            .and_then(|o| o.risks.get(row.event))
            .cloned();
        let height = ui.available_height().max(160.0);
        ui.horizontal_top(|ui| {
            let plot_width = (ui.available_width() - height - 16.0).max(200.0);
            ui.vertical(|ui| {
                ui.set_width(plot_width);
                ui.label("Range (km) against minutes from TCA");
                let series = self.range_series.clone();
                Plot::new("approach-range")
                    .height(height - 24.0)
                    .width(plot_width)
                    .x_axis_label("minutes from TCA")
                    .y_axis_label("range (km)")
                    .show(ui, |p| {
                        p.line(
                            Line::new("range", PlotPoints::from(series)).color(palette::SKY_BLUE),
                        );
                    });
            });
            ui.vertical(|ui| match &risk {
                Some(Ok(r)) => {
                    ui.label(format!(
                        "Encounter plane: Pc {:.2e} (assumed covariance), Pc max {:.2e}",
                        r.pc, r.pc_max
                    ));
                    encounter_plane_ui(ui, &EncounterPicture::of(r), height - 24.0);
                }
                Some(Err(why)) => {
                    ui.label(format!("No encounter plane: {why}"));
                }
                None => {}
            });
        });
    }

    fn start(&mut self, state: &AppState, ctx: egui::Context) {
        let fleet = state.doc.fleet.clone();
        let catalog = state.doc.catalog.clone();
        let scenario = state.doc.scenario.clone();
        let (start, end) = state.doc.window();
        self.job = Some(Job::spawn(
            "Screening",
            state.doc.revision,
            Some(ctx),
            move |p| {
                screen_and_assess(
                    &ScreeningJob {
                        fleet: &fleet,
                        catalog: &catalog,
                        all_vs_all: false,
                        start,
                        end,
                        volume: ScreeningVolume::Sphere {
                            radius_km: scenario.screening.threshold_km,
                        },
                        scenario: &scenario,
                        hard_body_radius_override_m: None,
                    },
                    p,
                )
            },
        ));
    }

    fn poll(&mut self) {
        let Some(job) = &self.job else { return };
        match job.poll() {
            Poll::Running => {}
            Poll::Done(outcome) => {
                self.screened_revision = Some(job.revision);
                self.job = None;
                self.rows = outcome
                    .result
                    .events
                    .iter()
                    .zip(&outcome.risks)
                    .enumerate()
                    .map(|(i, (e, r))| row_of(i, e, r))
                    .collect();
                self.diagnostics = outcome
                    .result
                    .diagnostics
                    .iter()
                    .map(|d| format!("{}: {}", d.name, d.message))
                    .collect();
                if outcome.result.cancelled {
                    self.diagnostics.insert(
                        0,
                        format!(
                            "Cancelled: screened until {}",
                            time_label(outcome.result.screened_until)
                        ),
                    );
                }
                self.outcome = Some(outcome);
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
        let Some(e) = self
            .outcome
            .as_ref()
            .and_then(|o| o.result.events.get(row.event))
        else {
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
            SortKey::Tca => a.tca.s_since_j2000().total_cmp(&b.tca.s_since_j2000()),
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
        if ui
            .button(format!("{label}{arrow}"))
            .on_hover_text("Sort by this column")
            .clicked()
        {
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
        let label = self
            .outcome
            .as_ref()
            .map(|o| o.covariance.label())
            .unwrap_or_default();
        egui::Grid::new("approach-table")
            .striped(true)
            .num_columns(8)
            .show(ui, |ui| {
                self.header(ui, "TCA (UTC)", SortKey::Tca);
                ui.strong("Objects");
                self.header(ui, "Miss (km)", SortKey::Miss);
                ui.strong("R / I / C (km)");
                ui.strong("Rel. speed (km/s)");
                self.header(ui, "Pc (assumed cov.)", SortKey::Pc);
                ui.strong("Pc max");
                ui.strong("Covariance");
                ui.end_row();
                for (i, r) in self.rows.iter().enumerate() {
                    if ui
                        .selectable_label(self.selected == Some(i), time_label(r.tca))
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
                        r.pc.map(|p| format!("{p:.2e}"))
                            .unwrap_or_else(|| "-".into()),
                    );
                    ui.label(
                        r.pc_max
                            .map(|p| format!("{p:.2e}"))
                            .unwrap_or_else(|| "-".into()),
                    );
                    ui.label(&r.covariance_source).on_hover_text(&label);
                    ui.end_row();
                }
            });
    }
}

/// Draws the encounter plane to scale in the combined covariance's principal
/// axes: the 1-sigma and 3-sigma ellipses centred on the primary, the
/// secondary's miss point with the miss vector, and the hard-body circle
/// around the miss point. A hard-body circle too small to see at this scale
/// gets a ring so it can be found; the legend says so.
pub fn encounter_plane_ui(ui: &mut egui::Ui, pic: &EncounterPicture, size: f32) {
    let size = size.clamp(160.0, 420.0);
    let (rect, _) = ui.allocate_exact_size(vec2(size, size), Sense::hover());
    let painter = ui.painter_at(rect);
    painter.rect_filled(rect, 0.0, palette::SEA);
    let [sx, sy] = pic.sigma_m;
    let miss = pic.miss_m[0].hypot(pic.miss_m[1]);
    let extent_m = (miss + pic.hard_body_radius_m)
        .max(3.0 * sx.max(sy))
        .max(pic.hard_body_radius_m * 4.0)
        .max(1.0)
        * 1.1;
    let scale = (size / 2.0 - 8.0) / extent_m as f32;
    let c = rect.center();
    let at = |x: f64, y: f64| Pos2::new(c.x + x as f32 * scale, c.y - y as f32 * scale);
    // Axes through the origin.
    let axis = Stroke::new(1.0, palette::GRATICULE);
    painter.line_segment(
        [Pos2::new(rect.left(), c.y), Pos2::new(rect.right(), c.y)],
        axis,
    );
    painter.line_segment(
        [Pos2::new(c.x, rect.top()), Pos2::new(c.x, rect.bottom())],
        axis,
    );
    for (k, colour) in [(1.0, palette::ORANGE), (3.0, palette::SKY_BLUE)] {
        let pts: Vec<Pos2> = (0..=96)
            .map(|i| {
                let t = f64::from(i) * std::f64::consts::TAU / 96.0;
                at(k * sx * t.cos(), k * sy * t.sin())
            })
            .collect();
        painter.add(Shape::line(pts, Stroke::new(1.5, colour)));
    }
    let tip = at(pic.miss_m[0], pic.miss_m[1]);
    painter.arrow(c, tip - c, Stroke::new(1.5, palette::CURSOR));
    let hbr_px = pic.hard_body_radius_m as f32 * scale;
    painter.circle_filled(tip, hbr_px.max(1.0), palette::VERMILLION);
    if hbr_px < 3.0 {
        painter.circle_stroke(tip, 6.0, Stroke::new(1.0, palette::VERMILLION));
    }
    let text = ui.visuals().text_color();
    let small = FontId::proportional(11.0);
    painter.text(
        rect.left_top() + vec2(4.0, 4.0),
        Align2::LEFT_TOP,
        format!("edge: {:.0} m from the primary", extent_m),
        small.clone(),
        text,
    );
    let legend = [
        (
            palette::ORANGE,
            format!("1-sigma ellipse ({sx:.0} m x {sy:.0} m)"),
        ),
        (palette::SKY_BLUE, "3-sigma ellipse".to_string()),
        (palette::CURSOR, format!("miss vector ({miss:.0} m)")),
        (
            palette::VERMILLION,
            format!(
                "hard-body circle, {:.1} m, to scale{}",
                pic.hard_body_radius_m,
                if hbr_px < 3.0 { " (ringed)" } else { "" }
            ),
        ),
    ];
    for (i, (colour, label)) in legend.iter().enumerate() {
        let y = rect.bottom() - 8.0 - 14.0 * (legend.len() - 1 - i) as f32;
        painter.line_segment(
            [
                Pos2::new(rect.left() + 6.0, y),
                Pos2::new(rect.left() + 20.0, y),
            ],
            Stroke::new(2.0, *colour),
        );
        painter.text(
            Pos2::new(rect.left() + 24.0, y),
            Align2::LEFT_CENTER,
            label,
            small.clone(),
            text,
        );
    }
}
