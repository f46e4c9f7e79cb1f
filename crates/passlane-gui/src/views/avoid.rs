//! Avoidance what-if for a selected close approach: one burn's effect
//! (before and after: TCA, miss, RIC, relative speed, Pc, Pc max) and the
//! trade of burn time against in-track Δv as a heat map of Pc (log scale)
//! with the chosen burn marked.
//!
//! The figures come from the planner's `avoid::{burn_effect, trade}`, the
//! functions `passlane avoid` calls, with the same covariance (the
//! scenario's assumed one for element sets) and the combined hard-body
//! radius of the screening row. Both run on a worker thread; the trade runs
//! one burn time at a time, so it shows progress and can be cancelled.

use eframe::egui::{self, Align2, Color32, FontId, Pos2, Rect, Sense, Stroke, Ui, vec2};
use passlane_orbit::numerical::Drag;
use passlane_orbit::{ElementSet, OrbitSummary, Propagator, UtcTime};
use passlane_plan::Progress;
use passlane_plan::avoid::{
    Burn, BurnEffect, Conjunction, ConsequenceRequest, ContactShift, CovarianceModel,
    EncounterFigures, NewEvent, Trade, TradeRequest, burn_consequences, burn_effect, trade,
};
use passlane_plan::conjunction::AssumedCovariance;
use passlane_plan::screen::ScreeningVolume;

use crate::jobs::{Job, Poll, progress_ui};
use crate::palette;
use crate::state::time_label;
use crate::widgets;

/// Shown wherever a burn is planned.
pub const MANOEUVRE_CAUTION: &str = "Advisory only, from published element sets and an assumed covariance. \
Coordinate any manoeuvre with the other operator and the responsible screening service first; this tool \
plans, it does not command a spacecraft.";

/// What the panel works on: the two objects and the encounter.
#[derive(Clone)]
pub struct AvoidInputs {
    pub primary: ElementSet,
    pub secondary: ElementSet,
    pub tca: UtcTime,
    pub assumed: AssumedCovariance,
    pub hard_body_radius_m: f64,
    /// Everything else the primary may meet (catalog and the rest of the
    /// fleet), and the scenario (stations, screening settings), for the
    /// burn's consequences.
    pub others: Vec<ElementSet>,
    pub scenario: passlane_plan::Scenario,
}

type Answer<T> = Result<T, String>;

/// What else a burn changes: close approaches it creates or worsens over a
/// week, and the shifts of the next day's contact windows.
pub type Consequences = (Vec<NewEvent>, Vec<ContactShift>);

/// One burn's computation: its effect, then what else it changes (which can
/// fail on its own).
type EffectAndConsequences = (BurnEffect, Answer<Consequences>);

/// Days after the burn searched for new close approaches, and hours of
/// contact windows compared (the command line's defaults).
const HORIZON_DAYS: f64 = 7.0;
const CONTACT_HOURS: f64 = 24.0;

pub struct AvoidPanel {
    inputs: AvoidInputs,
    burn_time: UtcTime,
    dv_ric_m_s: [f64; 3],
    effect: Option<Answer<BurnEffect>>,
    consequences: Option<Answer<Consequences>>,
    trade: Option<Answer<Trade>>,
    effect_job: Option<Job<Answer<EffectAndConsequences>>>,
    trade_job: Option<Job<Answer<Trade>>>,
}

/// Builds the conjunction from owned element sets and runs `work` on it.
fn with_conjunction<T>(
    inputs: &AvoidInputs,
    work: impl FnOnce(&Conjunction<'_>) -> Answer<T>,
) -> Answer<T> {
    let p = Propagator::new(&inputs.primary).map_err(|e| format!("primary: {e}"))?;
    let s = Propagator::new(&inputs.secondary).map_err(|e| format!("secondary: {e}"))?;
    let conj = Conjunction {
        primary: &p,
        secondary: &s,
        covariance: CovarianceModel::Assumed {
            assumed: inputs.assumed,
            primary: &inputs.primary,
            secondary: &inputs.secondary,
        },
        hard_body_radius_m: inputs.hard_body_radius_m,
        primary_drag: Drag::from_bstar(inputs.primary.bstar_per_earth_radii),
    };
    work(&conj)
}

/// The trade, one burn time at a time (progress and cancel between them).
pub fn trade_in_steps(
    inputs: &AvoidInputs,
    req: &TradeRequest,
    progress: &dyn Progress,
) -> Answer<Trade> {
    with_conjunction(inputs, |conj| {
        let mut all: Option<Trade> = None;
        let n = req.orbits_before.len().max(1);
        for (k, o) in req.orbits_before.iter().enumerate() {
            if progress.cancelled() {
                return Err(format!("cancelled after {k} of {n} burn times"));
            }
            let one = TradeRequest {
                orbits_before: vec![*o],
                ..req.clone()
            };
            let t = trade(conj, inputs.tca, &one).map_err(|e| e.to_string())?;
            match &mut all {
                None => all = Some(t),
                Some(a) => {
                    a.trade.extend(t.trade);
                    a.smallest.extend(t.smallest);
                }
            }
            progress.report((k + 1) as f64 / n as f64);
        }
        all.ok_or_else(|| "no burn times".to_string())
    })
}

impl AvoidPanel {
    pub fn new(inputs: AvoidInputs) -> Self {
        // A first guess: one orbit before TCA, 5 cm/s prograde.
        let period_s = OrbitSummary::of(&inputs.primary).period_min * 60.0;
        AvoidPanel {
            burn_time: inputs.tca.add_s(-period_s),
            inputs,
            dv_ric_m_s: [0.0, 0.05, 0.0],
            effect: None,
            consequences: None,
            trade: None,
            effect_job: None,
            trade_job: None,
        }
    }

    /// Which encounter this panel is for.
    pub fn is_for(&self, primary: u32, secondary: u32, tca: UtcTime) -> bool {
        self.inputs.primary.catalog_number == primary
            && self.inputs.secondary.catalog_number == secondary
            && (self.inputs.tca.s_since(tca)).abs() < 1e-3
    }

    /// Whether a computation is running.
    pub fn running(&self) -> bool {
        self.effect_job.is_some() || self.trade_job.is_some()
    }

    /// The last finished burn effect and trade (tests).
    pub fn effect(&self) -> Option<&Answer<BurnEffect>> {
        self.effect.as_ref()
    }
    pub fn trade(&self) -> Option<&Answer<Trade>> {
        self.trade.as_ref()
    }
    pub fn consequences(&self) -> Option<&Answer<Consequences>> {
        self.consequences.as_ref()
    }

    fn poll(&mut self) {
        if let Some(j) = &self.effect_job {
            match j.poll() {
                Poll::Running => {}
                Poll::Done(r) => {
                    match r {
                        Ok((e, c)) => {
                            self.effect = Some(Ok(e));
                            self.consequences = Some(c);
                        }
                        Err(e) => {
                            self.effect = Some(Err(e));
                            self.consequences = None;
                        }
                    }
                    self.effect_job = None;
                }
                Poll::Lost => {
                    self.effect = Some(Err("the computation stopped unexpectedly".into()));
                    self.effect_job = None;
                }
            }
        }
        if let Some(j) = &self.trade_job {
            match j.poll() {
                Poll::Running => {}
                Poll::Done(r) => {
                    self.trade = Some(r);
                    self.trade_job = None;
                }
                Poll::Lost => {
                    self.trade = Some(Err("the computation stopped unexpectedly".into()));
                    self.trade_job = None;
                }
            }
        }
    }

    pub fn ui(&mut self, ui: &mut Ui) {
        self.poll();
        ui.heading("Avoidance what-if");
        widgets::caution(ui, MANOEUVRE_CAUTION);
        ui.label(format!(
            "{} against {}, TCA {}. The burn's effect is a numerical propagation (J2–J4, drag from B*) added to the usual SGP4 trajectory; Pc with {}, combined hard-body radius {:.1} m.",
            self.inputs.primary.name,
            self.inputs.secondary.name,
            time_label(self.inputs.tca),
            self.inputs.assumed.label(),
            self.inputs.hard_body_radius_m
        ));
        let period_s = OrbitSummary::of(&self.inputs.primary).period_min * 60.0;
        egui::Grid::new("burn-inputs")
            .num_columns(2)
            .show(ui, |ui| {
                widgets::time(
                    ui,
                    "Burn time (UTC)",
                    "burn-time",
                    &mut self.burn_time,
                    220.0,
                );
                ui.end_row();
                for (k, axis) in ["radial", "in-track", "cross-track"].iter().enumerate() {
                    widgets::number(
                        ui,
                        &format!("Burn dv {axis} (m/s)"),
                        ("burn-dv", k),
                        &mut self.dv_ric_m_s[k],
                        80.0,
                    );
                    ui.end_row();
                }
            });
        ui.label(format!(
            "The burn is {:.2} orbits ({:.1} min) before TCA.",
            self.inputs.tca.s_since(self.burn_time) / period_s,
            self.inputs.tca.s_since(self.burn_time) / 60.0
        ));
        ui.horizontal_wrapped(|ui| {
            let busy = self.running();
            if ui
                .add_enabled(!busy, egui::Button::new("Compute this burn"))
                .clicked()
            {
                let inputs = self.inputs.clone();
                let burn = Burn {
                    time: self.burn_time,
                    dv_ric_m_s: self.dv_ric_m_s,
                };
                self.effect_job = Some(Job::spawn(
                    "Burn effect",
                    0,
                    Some(ui.ctx().clone()),
                    move |p| {
                        let effect = with_conjunction(&inputs, |c| {
                            burn_effect(c, inputs.tca, burn).map_err(|e| e.to_string())
                        })?;
                        let found = consequences_of(&inputs, burn, effect.before.tca, p);
                        Ok((effect, found))
                    },
                ));
            }
            if ui
                .add_enabled(!busy, egui::Button::new("Compute the trade"))
                .on_hover_text("Burn times 0.5 to 3 orbits before TCA × in-track dv from 1 mm/s to 1 m/s, both signs")
                .clicked()
            {
                let inputs = self.inputs.clone();
                self.trade_job = Some(Job::spawn(
                    "Trade",
                    0,
                    Some(ui.ctx().clone()),
                    move |p| trade_in_steps(&inputs, &TradeRequest::default(), p),
                ));
            }
            let mut cancel = false;
            for job in [
                self.effect_job
                    .as_ref()
                    .map(|j| (&j.label, &j.progress, j.started)),
                self.trade_job
                    .as_ref()
                    .map(|j| (&j.label, &j.progress, j.started)),
            ]
            .into_iter()
            .flatten()
            {
                if progress_ui(ui, job.0, job.1, job.2) {
                    job.1.cancel();
                    cancel = true;
                }
            }
            if cancel {
                // The worker stops at its next check (the trade between burn
                // times); its answer is not waited for.
                if self.effect_job.take().is_some() {
                    self.effect = Some(Err("Cancelled.".into()));
                }
                if self.trade_job.take().is_some() {
                    self.trade = Some(Err("Cancelled.".into()));
                }
            }
        });
        match &self.effect {
            Some(Ok(e)) => before_after(ui, e),
            Some(Err(e)) => {
                ui.colored_label(palette::VERMILLION, format!("No answer for this burn: {e}"));
            }
            None => {}
        }
        match &self.consequences {
            Some(Ok((events, shifts))) => consequences_ui(ui, events, shifts),
            Some(Err(e)) => {
                ui.colored_label(
                    palette::VERMILLION,
                    format!("New close approaches and contact shifts not found: {e}"),
                );
            }
            None => {}
        }
        match &self.trade {
            Some(Ok(t)) => {
                let chosen = (
                    self.inputs.tca.s_since(self.burn_time) / period_s,
                    self.dv_ric_m_s[1],
                );
                heat_map(ui, t, chosen);
            }
            Some(Err(e)) => {
                ui.colored_label(palette::VERMILLION, format!("No trade: {e}"));
            }
            None => {}
        }
    }
}

/// Screens the manoeuvred trajectory for a week and compares the next day's
/// contact windows (the planner's `avoid::consequences`, as `passlane avoid`).
fn consequences_of(
    inputs: &AvoidInputs,
    burn: Burn,
    tca: UtcTime,
    progress: &dyn Progress,
) -> Answer<Consequences> {
    let horizon = burn.time.add_s(HORIZON_DAYS * 86_400.0);
    burn_consequences(
        &ConsequenceRequest {
            primary: &inputs.primary,
            others: &inputs.others,
            scenario: &inputs.scenario,
            volume: ScreeningVolume::Sphere {
                radius_km: inputs.scenario.screening.threshold_km,
            },
            from: burn.time,
            to: horizon,
            avoided: Some((inputs.secondary.catalog_number, tca)),
            stations: &inputs.scenario.stations,
            contacts_until: burn.time.add_s(CONTACT_HOURS * 3_600.0),
        },
        burn,
        Drag::from_bstar(inputs.primary.bstar_per_earth_radii),
        progress,
    )
    .map_err(|e| e.to_string())
}

fn consequences_ui(ui: &mut Ui, events: &[NewEvent], shifts: &[ContactShift]) {
    ui.separator();
    ui.strong(format!(
        "Close approaches this burn creates or worsens in the {HORIZON_DAYS:.0} days after it"
    ));
    if events.is_empty() {
        ui.label("None found (screened against the catalog and the rest of the fleet).");
    }
    for x in events {
        let e = &x.event;
        ui.label(format!(
            "{}: {} / {} at {}, miss {:.3} km{}, Pc {}",
            x.change,
            e.primary,
            e.secondary,
            time_label(e.tca),
            e.miss_distance_km,
            x.before_miss_distance_km
                .map(|m| format!(" (was {m:.3} km)"))
                .unwrap_or_default(),
            pc_text(x.risk.as_ref().ok().map(|r| r.pc))
        ));
    }
    ui.strong(format!(
        "Contact windows in the {CONTACT_HOURS:.0} hours after the burn"
    ));
    egui::Grid::new("burn-contact-shifts")
        .striped(true)
        .num_columns(4)
        .show(ui, |ui| {
            for h in [
                "station",
                "AOS before",
                "AOS / LOS shift (s)",
                "max elevation (deg)",
            ] {
                ui.strong(h);
            }
            ui.end_row();
            for c in shifts {
                ui.label(&c.station);
                ui.label(
                    c.aos_before
                        .or(c.aos_after)
                        .map(time_label)
                        .unwrap_or_default(),
                );
                ui.label(match (c.aos_shift_s, c.los_shift_s, c.aos_before) {
                    (Some(a), Some(l), _) => format!("{a:+.1} / {l:+.1}"),
                    (_, _, Some(_)) => "gone".to_string(),
                    _ => "new".to_string(),
                });
                ui.label(
                    match (c.max_elevation_before_deg, c.max_elevation_after_deg) {
                        (Some(b), Some(a)) => format!("{b:.1} -> {a:.1}"),
                        (Some(b), None) => format!("{b:.1} -> -"),
                        (None, Some(a)) => format!("- -> {a:.1}"),
                        _ => String::new(),
                    },
                );
                ui.end_row();
            }
        });
}

fn pc_text(p: Option<f64>) -> String {
    p.map(|p| format!("{p:.2e}")).unwrap_or_else(|| "-".into())
}

fn before_after(ui: &mut Ui, e: &BurnEffect) {
    let row = |ui: &mut Ui, name: &str, f: &dyn Fn(&EncounterFigures) -> String| {
        ui.label(name);
        ui.label(f(&e.before));
        ui.label(f(&e.after));
        ui.end_row();
    };
    egui::Grid::new("burn-before-after")
        .striped(true)
        .num_columns(3)
        .show(ui, |ui| {
            ui.strong("");
            ui.strong("before the burn");
            ui.strong("after the burn");
            ui.end_row();
            row(ui, "TCA (UTC)", &|f| time_label(f.tca));
            row(ui, "miss distance (km)", &|f| {
                format!("{:.3}", f.miss_distance_km)
            });
            row(ui, "R / I / C (km)", &|f| {
                format!(
                    "{:.3} / {:.3} / {:.3}",
                    f.radial_km, f.in_track_km, f.cross_track_km
                )
            });
            row(ui, "relative speed (km/s)", &|f| {
                format!("{:.3}", f.relative_speed_km_s)
            });
            row(ui, "Pc (assumed covariance)", &|f| pc_text(f.pc));
            row(ui, "Pc max (over covariance size)", &|f| pc_text(f.pc_max));
        });
}

/// A colour for log10(Pc) from −12 (dark) to −2 (bright): a ramp of rising
/// lightness through blue, teal and yellow, readable without hue.
fn ramp(log_pc: f64) -> Color32 {
    const STOPS: [(f64, [u8; 3]); 4] = [
        (-12.0, [0x20, 0x1A, 0x50]),
        (-8.0, [0x1F, 0x6E, 0x8C]),
        (-5.0, [0x3E, 0xB0, 0x7A]),
        (-2.0, [0xF5, 0xE6, 0x4A]),
    ];
    let x = log_pc.clamp(-12.0, -2.0);
    for w in STOPS.windows(2) {
        let ((a, ca), (b, cb)) = (w[0], w[1]);
        if x <= b {
            let f = ((x - a) / (b - a)) as f32;
            let c = |i: usize| (f32::from(ca[i]) + f * (f32::from(cb[i]) - f32::from(ca[i]))) as u8;
            return Color32::from_rgb(c(0), c(1), c(2));
        }
    }
    Color32::from_rgb(0xF5, 0xE6, 0x4A)
}

/// Burn time (columns) × in-track Δv (rows) → Pc on a log colour scale; cells
/// meeting both targets carry a ring; the chosen burn is marked with a cross.
fn heat_map(ui: &mut Ui, t: &Trade, chosen: (f64, f64)) {
    let mut cols: Vec<f64> = t.trade.iter().map(|r| r.orbits_before).collect();
    cols.sort_by(f64::total_cmp);
    cols.dedup();
    let mut rows: Vec<f64> = t.trade.iter().map(|r| r.dv_in_track_m_s).collect();
    rows.sort_by(f64::total_cmp);
    rows.dedup();
    rows.reverse();
    if cols.is_empty() || rows.is_empty() {
        return;
    }
    ui.strong("Trade: Pc after an in-track burn (log scale)");
    let label_w = 70.0;
    let cell_w = ((ui.available_width() - label_w - 90.0) / cols.len() as f32).clamp(30.0, 90.0);
    let cell_h = 16.0;
    let size = vec2(
        label_w + cell_w * cols.len() as f32 + 90.0,
        cell_h * (rows.len() as f32 + 2.0),
    );
    let (rect, response) = ui.allocate_exact_size(size, Sense::hover());
    let painter = ui.painter_at(rect);
    let text = ui.visuals().text_color();
    let font = FontId::proportional(11.0);
    let cell = |ci: usize, ri: usize| {
        Rect::from_min_size(
            Pos2::new(
                rect.left() + label_w + ci as f32 * cell_w,
                rect.top() + ri as f32 * cell_h,
            ),
            vec2(cell_w - 1.0, cell_h - 1.0),
        )
    };
    let mut hovered = None;
    for r in &t.trade {
        let (Some(ci), Some(ri)) = (
            cols.iter().position(|c| *c == r.orbits_before),
            rows.iter().position(|d| *d == r.dv_in_track_m_s),
        ) else {
            continue;
        };
        let c = cell(ci, ri);
        let colour = match r.pc {
            Some(p) if p > 0.0 => ramp(p.log10()),
            Some(_) => ramp(-12.0),
            None => Color32::from_gray(60),
        };
        painter.rect_filled(c, 0.0, colour);
        let meets = r.miss_distance_km > t.target_miss_km && r.pc.is_some_and(|p| p < t.target_pc);
        if meets {
            painter.circle_stroke(c.center(), 4.0, Stroke::new(1.2, Color32::WHITE));
        }
        if response.hover_pos().is_some_and(|p| c.contains(p)) {
            hovered = Some(*r);
        }
    }
    for (ri, d) in rows.iter().enumerate() {
        painter.text(
            Pos2::new(rect.left() + label_w - 4.0, cell(0, ri).center().y),
            Align2::RIGHT_CENTER,
            format!("{d:+} m/s"),
            font.clone(),
            text,
        );
    }
    for (ci, o) in cols.iter().enumerate() {
        painter.text(
            Pos2::new(
                cell(ci, 0).center().x,
                rect.top() + cell_h * rows.len() as f32 + 2.0,
            ),
            Align2::CENTER_TOP,
            format!("{o}"),
            font.clone(),
            text,
        );
    }
    painter.text(
        Pos2::new(rect.left() + label_w, rect.bottom()),
        Align2::LEFT_BOTTOM,
        "orbits before TCA (columns); in-track dv (rows)",
        font.clone(),
        text,
    );
    // The chosen burn: between the nearest columns and rows, marked with a cross.
    let pos_of = |v: f64, axis: &[f64], at: &dyn Fn(usize) -> f32| -> Option<f32> {
        let k = axis
            .iter()
            .enumerate()
            .min_by(|a, b| (a.1 - v).abs().total_cmp(&(b.1 - v).abs()))?
            .0;
        Some(at(k))
    };
    if let (Some(x), Some(y)) = (
        pos_of(chosen.0, &cols, &|k| cell(k, 0).center().x),
        pos_of(chosen.1, &rows, &|k| cell(0, k).center().y),
    ) {
        let c = Pos2::new(x, y);
        for d in [vec2(6.0, 6.0), vec2(6.0, -6.0)] {
            painter.line_segment([c - d, c + d], Stroke::new(2.5, Color32::BLACK));
            painter.line_segment([c - d, c + d], Stroke::new(1.5, palette::VERMILLION));
        }
    }
    // Colour key.
    let key_x = rect.left() + label_w + cell_w * cols.len() as f32 + 14.0;
    for (k, e) in [-2.0, -4.0, -6.0, -8.0, -10.0, -12.0].iter().enumerate() {
        let y = rect.top() + k as f32 * cell_h * 1.4;
        painter.rect_filled(
            Rect::from_min_size(Pos2::new(key_x, y), vec2(12.0, 12.0)),
            0.0,
            ramp(*e),
        );
        painter.text(
            Pos2::new(key_x + 16.0, y + 6.0),
            Align2::LEFT_CENTER,
            format!("1e{e}"),
            font.clone(),
            text,
        );
    }
    if let Some(r) = hovered {
        response.on_hover_text(format!(
            "burn {} orbits before TCA ({}), in-track {:+} m/s\nmiss {:.3} km, Pc {}, Pc max {}",
            r.orbits_before,
            time_label(r.burn_time),
            r.dv_in_track_m_s,
            r.miss_distance_km,
            pc_text(r.pc),
            pc_text(r.pc_max)
        ));
    }
    ui.label(format!(
        "Ring: meets both targets (Pc below {:.0e} — a common operator threshold — and miss above {} km); cross: the burn above (nearest cell).",
        t.target_pc, t.target_miss_km
    ));
    egui::Grid::new("trade-smallest")
        .striped(true)
        .num_columns(4)
        .show(ui, |ui| {
            for h in [
                "orbits before TCA",
                "smallest in-track dv (m/s)",
                "miss (km)",
                "Pc",
            ] {
                ui.strong(h);
            }
            ui.end_row();
            for s in &t.smallest {
                ui.label(format!("{}", s.orbits_before));
                ui.label(
                    s.dv_in_track_m_s
                        .map(|d| format!("{d:+}"))
                        .unwrap_or_else(|| "none in the grid".into()),
                );
                ui.label(
                    s.miss_distance_km
                        .map(|m| format!("{m:.3}"))
                        .unwrap_or_else(|| "-".into()),
                );
                ui.label(pc_text(s.pc));
                ui.end_row();
            }
        });
}
