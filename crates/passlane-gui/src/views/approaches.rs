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
//! assumption's scale. Selecting an event moves the time cursor to its TCA
//! and marks it on the map; from it, the avoidance what-if ([`super::avoid`]).

use eframe::egui;
use egui_plot::{Arrows, Line, Plot, PlotPoints, Points, Polygon, Text};
use passlane_orbit::frames::{norm, sub};
use passlane_orbit::{Propagator, UtcTime};
use passlane_plan::conjunction::{AssumedCovariance, EventRisk};
use passlane_plan::job::{ScreeningJob, ScreeningOutcome, screen_and_assess};
use passlane_plan::screen::{CloseApproach, ScreeningVolume};

use crate::axes::{self, AxisTicks};
use crate::jobs::{Job, Poll, progress_ui};
use crate::palette;
use crate::state::{AppState, time_label};
use crate::views::avoid::{AvoidInputs, AvoidPanel};
use crate::views::cdm_trend::CdmTrendView;
use crate::widgets;
use passlane_orbit::STALE_AFTER_DAYS;

/// What "Pc max" is, where it is shown.
pub const PC_MAX_EXPLAINED: &str = "Pc max: the largest collision probability over every size of the covariance (its shape kept). Element sets carry no covariance, so the Pc beside it rests on an assumed one; Pc max does not depend on that assumption's size, which makes it the honest upper figure here.";

/// The screening volume's shape for a run.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum VolumeShape {
    Sphere,
    Box,
    Ellipsoid,
}

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
    shape: VolumeShape,
    /// Box half-sizes or ellipsoid semi-axes: radial, in-track, cross-track, km.
    volume_ric_km: [f64; 3],
    cursor_request: Option<UtcTime>,
    avoid: Option<AvoidPanel>,
    range_axes: (AxisTicks, AxisTicks),
    plane_axes: (AxisTicks, AxisTicks),
    /// The selection the range, cursor and map were last updated for.
    shown_selection: Option<usize>,
    /// Conjunction messages received, and their trend.
    pub messages: CdmTrendView,
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
            shape: VolumeShape::Sphere,
            volume_ric_km: [2.0, 25.0, 25.0],
            cursor_request: None,
            avoid: None,
            range_axes: Default::default(),
            plane_axes: Default::default(),
            shown_selection: None,
            messages: CdmTrendView::default(),
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

    /// A new TCA to move the time cursor to (once, after a selection).
    pub fn take_cursor_request(&mut self) -> Option<UtcTime> {
        self.cursor_request.take()
    }

    /// The avoidance panel of the selected event, when open (tests).
    pub fn avoid_panel(&self) -> Option<&AvoidPanel> {
        self.avoid.as_ref()
    }

    /// Selects row `i` (as a click on its TCA does).
    pub fn select(&mut self, i: usize) {
        self.selected = Some(i);
    }

    /// The tick labels of the encounter plane's axes on the last frame.
    pub fn plane_tick_labels(&self) -> (Vec<String>, Vec<String>) {
        (self.plane_axes.0.labels(), self.plane_axes.1.labels())
    }

    fn volume(&self, threshold_km: f64) -> ScreeningVolume {
        let [r, i, c] = self.volume_ric_km;
        match self.shape {
            VolumeShape::Sphere => ScreeningVolume::Sphere {
                radius_km: threshold_km,
            },
            VolumeShape::Box => ScreeningVolume::Box {
                radial_km: r,
                in_track_km: i,
                cross_track_km: c,
            },
            VolumeShape::Ellipsoid => ScreeningVolume::Ellipsoid {
                radial_km: r,
                in_track_km: i,
                cross_track_km: c,
            },
        }
    }

    pub fn ui(&mut self, ui: &mut egui::Ui, state: &mut AppState) {
        let avail_h = ui.available_height();
        egui::ScrollArea::vertical()
            .id_salt("approaches-scroll")
            .auto_shrink([false, false])
            .show(ui, |ui| {
                self.contents(ui, state, avail_h);
                ui.separator();
                let w = ui.available_width();
                self.messages.ui(ui, w);
            });
    }

    fn contents(&mut self, ui: &mut egui::Ui, state: &mut AppState, avail_h: f32) {
        widgets::caution(
            ui,
            "Element-set screening is advisory: defer to official conjunction messages and coordinate with the other operator.",
        );
        let screening = &state.doc.scenario.screening;
        ui.label(format!(
            "Screening {} spacecraft against {} catalog objects (and each other). \
             Pc uses the covariance {}; hard-body radius per object from the scenario, else {:.1} m.",
            state.doc.fleet.len(),
            state.doc.catalog.len(),
            AssumedCovariance::from_scenario(&state.doc.scenario).label(),
            screening.default_hard_body_radius_m,
        ));
        let threshold_km = screening.threshold_km;
        ui.horizontal_wrapped(|ui| {
            ui.label("Volume:");
            ui.selectable_value(
                &mut self.shape,
                VolumeShape::Sphere,
                format!("sphere of {threshold_km} km (scenario)"),
            );
            ui.selectable_value(&mut self.shape, VolumeShape::Box, "box");
            ui.selectable_value(&mut self.shape, VolumeShape::Ellipsoid, "ellipsoid");
            if self.shape != VolumeShape::Sphere {
                let what = if self.shape == VolumeShape::Box {
                    "half-size"
                } else {
                    "semi-axis"
                };
                for (k, axis) in ["radial", "in-track", "cross-track"].iter().enumerate() {
                    widgets::number(
                        ui,
                        &format!("{axis} {what} (km)"),
                        ("vol", k),
                        &mut self.volume_ric_km[k],
                        50.0,
                    );
                }
            }
        });
        self.poll();
        let checked = state.doc.checked_scenario();
        ui.horizontal_wrapped(|ui| {
            let running = self.job.is_some();
            let volume_ok = self.volume_ric_km.iter().all(|v| *v > 0.0);
            if ui
                .add_enabled(
                    !running && checked.is_ok() && volume_ok,
                    egui::Button::new("Run screening"),
                )
                .clicked()
            {
                self.start(state, ui.ctx().clone());
            }
            if let Some(job) = &self.job
                && progress_ui(ui, &job.label, &job.progress, job.started)
            {
                job.progress.cancel();
            }
            if let Err(e) = &checked {
                ui.colored_label(palette::VERMILLION, format!("Fix the scenario first: {e}"));
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
                "No close approaches inside the volume in this window."
            } else {
                "Not screened yet: press Run screening."
            });
        } else {
            stale_badge(ui, self.outcome.as_ref());
            ui.small(PC_MAX_EXPLAINED);
        }
        ui.add_space(4.0);
        if !self.rows.is_empty() {
            egui::ScrollArea::vertical()
                .id_salt("approach-scroll")
                .max_height((avail_h * 0.35).max(120.0))
                .show(ui, |ui| self.table(ui));
        }
        if self.selected != self.shown_selection {
            self.shown_selection = self.selected;
            self.compute_range(state);
            if let Some(r) = self.selected.and_then(|i| self.rows.get(i))
                && let Some(e) = self
                    .outcome
                    .as_ref()
                    .and_then(|o| o.result.events.get(r.event))
            {
                self.cursor_request = Some(r.tca);
                state.focus_approach =
                    Some((e.primary_catalog_number, e.secondary_catalog_number, r.tca));
            }
        }
        let Some(row) = self.selected.and_then(|i| self.rows.get(i)).cloned() else {
            if !self.rows.is_empty() {
                ui.label(
                    "Select an event (its TCA) for the range around TCA, the encounter plane and the avoidance what-if; the map marks where it happens.",
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
        let height = (avail_h * 0.55).clamp(220.0, 420.0);
        let range_series = self.range_series.clone();
        let wide = ui.available_width() >= 900.0;
        let draw_range = |ui: &mut egui::Ui, w: f32, axes: &(AxisTicks, AxisTicks)| {
            axes::readable(
                Plot::new("approach-range")
                    .height(height)
                    .width(w)
                    // The wheel scrolls the page, not the plot into negative ranges
                    // (zoom stays on Ctrl + wheel).
                    .allow_scroll(false),
                "minutes from TCA",
                "range (km)",
                &axes.0,
                &axes.1,
            )
            .label_formatter(|h| {
                let p = match h {
                    egui_plot::HoverPosition::NearDataPoint { position, .. } => *position,
                    egui_plot::HoverPosition::Elsewhere { position } => *position,
                };
                Some(format!("{:+.2} min from TCA\nrange {:.3} km", p.x, p.y))
            })
            .show(ui, |p| {
                p.line(
                    Line::new("range", PlotPoints::from(range_series.clone()))
                        .color(palette::SKY_BLUE),
                );
            });
        };
        if wide {
            ui.horizontal_top(|ui| {
                let w = (ui.available_width() - height - 40.0).max(260.0);
                ui.vertical(|ui| draw_range(ui, w, &self.range_axes));
                ui.vertical(|ui| self.plane(ui, &risk, height));
            });
        } else {
            draw_range(ui, ui.available_width(), &self.range_axes);
            self.plane(ui, &risk, height);
        }
        self.avoid_ui(ui, state, &row, &risk);
    }

    fn plane(&self, ui: &mut egui::Ui, risk: &Option<Result<EventRisk, String>>, size: f32) {
        match risk {
            Some(Ok(r)) => {
                ui.label(format!(
                    "Encounter plane: Pc {:.2e} (assumed covariance), Pc max {:.2e}",
                    r.pc, r.pc_max
                ))
                .on_hover_text(PC_MAX_EXPLAINED);
                encounter_plane_ui(ui, &EncounterPicture::of(r), size, &self.plane_axes);
            }
            Some(Err(why)) => {
                ui.label(format!("No encounter plane: {why}"));
            }
            None => {}
        }
    }

    fn avoid_ui(
        &mut self,
        ui: &mut egui::Ui,
        state: &AppState,
        row: &ApproachRow,
        risk: &Option<Result<EventRisk, String>>,
    ) {
        let Some(e) = self
            .outcome
            .as_ref()
            .and_then(|o| o.result.events.get(row.event))
        else {
            return;
        };
        let (p, s) = (e.primary_catalog_number, e.secondary_catalog_number);
        if self
            .avoid
            .as_ref()
            .is_some_and(|a| !a.is_for(p, s, row.tca))
        {
            self.avoid = None;
        }
        ui.add_space(6.0);
        if self.avoid.is_none() {
            let find = |n: u32| {
                state
                    .doc
                    .fleet
                    .iter()
                    .chain(&state.doc.catalog)
                    .find(|x| x.catalog_number == n)
                    .cloned()
            };
            let hbr = match risk {
                Some(Ok(r)) => Some(r.hard_body_radius_m),
                _ => None,
            };
            if let (Some(primary), Some(secondary), Some(hbr)) = (find(p), find(s), hbr) {
                if ui
                    .button("Avoidance what-if…")
                    .on_hover_text("What a burn of the primary does to this close approach")
                    .clicked()
                {
                    self.avoid = Some(AvoidPanel::new(AvoidInputs {
                        primary,
                        secondary,
                        tca: row.tca,
                        assumed: AssumedCovariance::from_scenario(&state.doc.scenario),
                        hard_body_radius_m: hbr,
                        others: state
                            .doc
                            .fleet
                            .iter()
                            .chain(&state.doc.catalog)
                            .filter(|x| x.catalog_number != p)
                            .cloned()
                            .collect(),
                        scenario: state.doc.scenario.clone(),
                    }));
                }
            } else {
                ui.label("No avoidance what-if for this event (no Pc, or an object is no longer loaded).");
            }
        }
        if let Some(panel) = &mut self.avoid {
            ui.separator();
            panel.ui(ui);
        }
    }

    fn start(&mut self, state: &AppState, ctx: egui::Context) {
        let fleet = state.doc.fleet.clone();
        let catalog = state.doc.catalog.clone();
        let Ok(scenario) = state.doc.checked_scenario() else {
            return;
        };
        let volume = self.volume(scenario.screening.threshold_km);
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
                        volume,
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

/// Element sets far from the TCA: a badge above the table.
fn stale_badge(ui: &mut egui::Ui, outcome: Option<&ScreeningOutcome>) {
    let Some(o) = outcome else { return };
    let oldest = o
        .risks
        .iter()
        .flatten()
        .map(|r| {
            r.primary_element_age_days
                .abs()
                .max(r.secondary_element_age_days.abs())
        })
        .fold(0.0, f64::max);
    if oldest > STALE_AFTER_DAYS {
        ui.colored_label(
            palette::VERMILLION,
            format!(
                "Stale elements: some events rest on element sets {oldest:.1} days from their TCA (common practice: \
                 element sets degrade by about 1-3 km a day in LEO). Get newer element sets before acting."
            ),
        );
    }
}

/// The encounter plane to scale in the combined covariance's principal axes
/// (metres): the 1-sigma and 3-sigma ellipses centred on the primary, the
/// secondary's miss point with the miss vector, and the hard-body circle
/// around it. A plot, so it zooms (scroll), pans (drag) and resets
/// (double-click), with labelled axes.
pub fn encounter_plane_ui(
    ui: &mut egui::Ui,
    pic: &EncounterPicture,
    size: f32,
    axes_ticks: &(AxisTicks, AxisTicks),
) {
    let [sx, sy] = pic.sigma_m;
    let miss = pic.miss_m[0].hypot(pic.miss_m[1]);
    let ellipse = |k: f64| -> PlotPoints {
        (0..=96)
            .map(|i| {
                let t = f64::from(i) * std::f64::consts::TAU / 96.0;
                [k * sx * t.cos(), k * sy * t.sin()]
            })
            .collect()
    };
    let hbr = pic.hard_body_radius_m;
    let circle: PlotPoints = (0..48)
        .map(|i| {
            let t = f64::from(i) * std::f64::consts::TAU / 48.0;
            [pic.miss_m[0] + hbr * t.cos(), pic.miss_m[1] + hbr * t.sin()]
        })
        .collect();
    let extent = (miss + hbr).max(3.0 * sx.max(sy)).max(hbr * 4.0).max(1.0) * 1.15;
    axes::readable(
        Plot::new("encounter-plane")
            .width(size)
            .height(size)
            .data_aspect(1.0)
            .include_x(-extent)
            .include_x(extent)
            .include_y(-extent)
            .include_y(extent),
        "x: combined covariance's major axis (m)",
        "y: minor axis (m)",
        &axes_ticks.0,
        &axes_ticks.1,
    )
    .label_formatter(|h| {
        let p = match h {
            egui_plot::HoverPosition::NearDataPoint { position, .. } => *position,
            egui_plot::HoverPosition::Elsewhere { position } => *position,
        };
        Some(format!(
            "x {:.0} m, y {:.0} m\n{:.0} m from the primary",
            p.x,
            p.y,
            p.x.hypot(p.y)
        ))
    })
    .show(ui, |p| {
        p.line(
            Line::new(
                format!("1-sigma ellipse ({sx:.0} m x {sy:.0} m)"),
                ellipse(1.0),
            )
            .color(palette::ORANGE),
        );
        p.line(Line::new("3-sigma ellipse", ellipse(3.0)).color(palette::SKY_BLUE));
        p.polygon(
            Polygon::new(format!("hard-body circle, {hbr:.1} m, to scale"), circle)
                .fill_color(palette::VERMILLION.gamma_multiply(0.6))
                .stroke(egui::Stroke::new(1.5, palette::VERMILLION)),
        );
        p.arrows(
            Arrows::new(
                format!("miss vector ({miss:.0} m)"),
                vec![[0.0, 0.0]],
                vec![pic.miss_m],
            )
            .color(palette::CURSOR),
        );
        p.points(
            Points::new("primary", vec![[0.0, 0.0]])
                .radius(3.0)
                .color(palette::CURSOR),
        );
        p.points(
            Points::new("secondary at TCA", vec![pic.miss_m])
                .radius(4.0)
                .shape(egui_plot::MarkerShape::Diamond)
                .color(palette::VERMILLION),
        );
        p.text(
            Text::new(
                "",
                egui_plot::PlotPoint::new(pic.miss_m[0] / 2.0, pic.miss_m[1] / 2.0),
                format!("miss {miss:.0} m"),
            )
            .color(palette::CURSOR)
            .anchor(egui::Align2::LEFT_BOTTOM),
        );
    });
}
