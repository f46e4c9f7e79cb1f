//! The network plan: which antenna takes which contact, how much of each
//! spacecraft's demand that meets, and which contacts lost out to which (and
//! why), with an export of the hand-off files.
//!
//! The plan comes from the planner's [`plan_network`], the function
//! `passlane plan --scenario` calls (pass search with the scenario's window
//! and Earth orientation, then the plan), on a worker thread. The export
//! writes the same files as `passlane plan --out DIR` (the planner's
//! [`hand_off_files`] through the crash-safe folder writer), also on a
//! worker thread.

use std::path::{Path, PathBuf};
use std::sync::mpsc::{Receiver, channel};

use eframe::egui::{self, Align2, FontId, Pos2, Rect, Sense, Stroke, vec2};
use passlane_orbit::{ElementSet, UtcTime};

use passlane_plan::Scenario;
use passlane_plan::export::{HandOffContext, hand_off_files};
use passlane_plan::schedule::{Method, Plan, plan_network};

use crate::jobs::{Job, JobProgress, Poll, progress_ui};
use crate::palette;
use crate::state::{AppState, PinKind, hm_label, time_label};
use crate::views::timeline::contact_pin_menu;

/// Sampling step of the exported pointing tables, s (the command line's default).
pub const POINTING_STEP_S: f64 = 1.0;

/// Shown beside the export: pointing and Doppler files invite transmitting.
pub const TRANSMIT_CAUTION: &str = "Pointing and Doppler tables are for tracking. Transmitting needs a licence \
for the station and frequency and follows local rules.";

/// What an export wrote: the folder, the file count and what was left out.
#[derive(Debug, Clone, PartialEq)]
pub struct ExportSummary {
    pub dir: PathBuf,
    pub files: usize,
    pub warnings: Vec<String>,
    /// Files of an earlier export that this one replaced (same names).
    pub replaced: Vec<String>,
    /// Files of an earlier export that this plan does not have: the folder
    /// is replaced as a whole, so they are gone.
    pub removed: Vec<String>,
}

/// Writes the plan's hand-off files into `dir`, exactly as
/// `passlane plan --out DIR` does (the same planner and writer functions).
pub fn export_plan(
    dir: &Path,
    plan: &Plan,
    fleet: &[ElementSet],
    scenario: &Scenario,
    created: UtcTime,
) -> Result<ExportSummary, String> {
    let hand_off = hand_off_files(
        plan,
        &HandOffContext {
            fleet,
            stations: &scenario.stations,
            earth_orientation: scenario.earth_orientation,
            calendar_name: scenario.calendar_name(),
            originator: scenario.originator(),
            created,
            pointing_step_s: POINTING_STEP_S,
            oem_format: passlane_orbit::ephemeris::OemFormat::Kvn,
            oem_frame: passlane_plan::export::OemFrame::Eme2000,
        },
    )
    .map_err(|e| format!("pointing tables: {e}"))?;
    let written = passlane_files::folder::write_folder(
        dir,
        hand_off
            .files
            .iter()
            .map(|f| (f.relative_path.as_str(), f.contents.as_slice())),
        &passlane_plan::export::is_hand_off_path,
    )?;
    Ok(ExportSummary {
        dir: written.dir,
        files: written.files,
        warnings: hand_off.warnings,
        replaced: written.replaced,
        removed: written.removed,
    })
}

/// The plan view's state: the last plan, the running jobs and the export folder.
#[derive(Default)]
pub struct PlanView {
    plan: Option<Result<Plan, String>>,
    planned_revision: Option<u64>,
    job: Option<Job<Result<Plan, String>>>,
    export_job: Option<Job<Result<ExportSummary, String>>>,
    export_dir: String,
    folder_dialog: Option<Receiver<Option<PathBuf>>>,
    export_status: String,
    /// Kept contacts as drawn on the last frame: (index into the plan's contacts, bar).
    bars: Vec<(usize, Rect)>,
    context_contact: Option<usize>,
}

impl PlanView {
    /// The last finished plan (tests compare it with the library chain).
    pub fn plan(&self) -> Option<&Result<Plan, String>> {
        self.plan.as_ref()
    }

    /// Whether a plan or an export is being made.
    pub fn running(&self) -> bool {
        self.job.is_some() || self.export_job.is_some()
    }

    /// The export's last result, in words.
    pub fn export_status(&self) -> &str {
        &self.export_status
    }

    pub fn ui(&mut self, ui: &mut egui::Ui, state: &mut AppState) {
        egui::ScrollArea::vertical()
            .id_salt("plan-scroll")
            .auto_shrink([false, false])
            .show(ui, |ui| self.contents(ui, state));
    }

    fn contents(&mut self, ui: &mut egui::Ui, state: &mut AppState) {
        self.poll();
        ui.horizontal_wrapped(|ui| {
            if ui
                .add_enabled(self.job.is_none(), egui::Button::new("Make plan"))
                .clicked()
            {
                self.start(state, ui.ctx().clone());
            }
            if let Some(job) = &self.job
                && progress_ui(ui, &job.label, &job.progress, job.started)
            {
                job.progress.cancel();
            }
            if self.planned_revision.is_some() && self.planned_revision != Some(state.doc.revision)
            {
                ui.colored_label(
                    palette::YELLOW,
                    "Inputs changed since this plan: make it again.",
                );
            }
        });
        let plan = match &self.plan {
            None => {
                ui.label("No plan yet: press Make plan. The scenario's stations, antennas and demands decide it.");
                return;
            }
            Some(Err(e)) => {
                ui.colored_label(palette::VERMILLION, format!("No plan: {e}"));
                return;
            }
            Some(Ok(plan)) => plan.clone(),
        };
        ui.label(format!(
            "{} contacts kept from {} candidates ({}); {:.0}% of the priority-weighted demand met, at most {:.0}% possible on these windows.",
            plan.contacts.len(),
            plan.candidates,
            match plan.method {
                Method::Exact => "optimal, exhaustive search",
                Method::Heuristic => "greedy and local search",
            },
            100.0 * plan.demand_met_fraction(),
            100.0 * if plan.max_score > 0.0 { plan.upper_bound / plan.max_score } else { 1.0 },
        ));
        for w in plan.warnings.iter().take(8) {
            ui.colored_label(palette::YELLOW, w);
        }
        crate::views::fleet::stale_warning(ui, state);
        ui.add_space(4.0);
        self.antenna_timeline(ui, state, &plan);
        ui.add_space(6.0);
        let rest = ui.available_height();
        ui.horizontal_top(|ui| {
            let half = (ui.available_width() - 12.0) / 2.0;
            ui.vertical(|ui| {
                ui.set_width(half);
                ui.strong("Demand met per spacecraft");
                demand_table(ui, state, &plan);
                ui.add_space(8.0);
                self.export_ui(ui, state, &plan);
            });
            ui.separator();
            ui.vertical(|ui| {
                ui.set_width(half);
                ui.strong(format!("Conflicts resolved ({})", plan.conflicts.len()));
                ui.label("Who lost which window to whom, and why.");
                egui::ScrollArea::vertical().id_salt("plan-conflicts").max_height(rest.clamp(120.0, 360.0)).show(ui, |ui| {
                    if plan.conflicts.is_empty() {
                        ui.label("None: every candidate that met the minimum length was kept or not needed.");
                    }
                    for c in &plan.conflicts {
                        ui.label(c.describe());
                    }
                });
            });
        });
    }

    fn start(&mut self, state: &AppState, ctx: egui::Context) {
        let fleet = state.doc.fleet.clone();
        let scenario = match state.doc.checked_scenario() {
            Ok(s) => s,
            Err(e) => {
                self.plan = Some(Err(format!("the scenario has a problem: {e}")));
                return;
            }
        };
        let (start, end) = state.doc.window();
        self.job = Some(Job::spawn(
            "Planning",
            state.doc.revision,
            Some(ctx),
            move |p: &JobProgress| {
                plan_network(&scenario, &fleet, start, end, p).map_err(|e| e.to_string())
            },
        ));
    }

    fn poll(&mut self) {
        if let Some(job) = &self.job {
            match job.poll() {
                Poll::Running => {}
                Poll::Done(plan) => {
                    self.planned_revision = Some(job.revision);
                    self.plan = Some(plan);
                    self.job = None;
                }
                Poll::Lost => {
                    self.job = None;
                    self.plan = Some(Err("the planner stopped unexpectedly".into()));
                }
            }
        }
        if let Some(job) = &self.export_job {
            match job.poll() {
                Poll::Running => {}
                Poll::Done(Ok(summary)) => {
                    self.export_status = format!(
                        "Wrote {} files to {}.",
                        summary.files,
                        summary.dir.display()
                    );
                    if !summary.replaced.is_empty() {
                        self.export_status.push_str(&format!(
                            "\nReplaced {} files of an earlier export: {}.",
                            summary.replaced.len(),
                            short_list(&summary.replaced)
                        ));
                    }
                    if !summary.removed.is_empty() {
                        self.export_status.push_str(&format!(
                            "\nRemoved {} files of the earlier export that this plan does not have: {}.",
                            summary.removed.len(),
                            short_list(&summary.removed)
                        ));
                    }
                    for w in summary.warnings.iter().take(5) {
                        self.export_status.push_str(&format!("\n{w}"));
                    }
                    self.export_job = None;
                }
                Poll::Done(Err(e)) => {
                    self.export_status = format!("Export failed: {e}");
                    self.export_job = None;
                }
                Poll::Lost => {
                    self.export_status = "The export stopped unexpectedly.".into();
                    self.export_job = None;
                }
            }
        }
        if let Some(rx) = &self.folder_dialog {
            match rx.try_recv() {
                Ok(Some(dir)) => {
                    self.export_dir = dir.display().to_string();
                    self.folder_dialog = None;
                }
                Ok(None) | Err(std::sync::mpsc::TryRecvError::Disconnected) => {
                    self.export_status = "No folder chosen (if no dialog appeared, type the folder and press Export to folder).".into();
                    self.folder_dialog = None;
                }
                Err(std::sync::mpsc::TryRecvError::Empty) => {}
            }
        }
    }

    /// Where kept contact `index` was drawn on the last frame (tests right-click it).
    pub fn contact_rect(&self, index: usize) -> Option<Rect> {
        self.bars.iter().find(|(i, _)| *i == index).map(|(_, r)| *r)
    }

    /// Kept contacts as bars, one row per antenna, coloured by spacecraft;
    /// right-click one to keep it (pin) or never use it (exclusion).
    fn antenna_timeline(&mut self, ui: &mut egui::Ui, state: &mut AppState, plan: &Plan) {
        // Rows: (station index, station name, antenna name).
        let mut antennas: Vec<(usize, String, String)> = plan
            .contacts
            .iter()
            .map(|c| (c.station_index, c.station.clone(), c.antenna.clone()))
            .collect();
        for a in state
            .doc
            .scenario
            .stations
            .iter()
            .enumerate()
            .flat_map(|(i, s)| {
                s.antennas
                    .iter()
                    .map(move |a| (i, s.name.clone(), a.name.clone()))
            })
        {
            antennas.push(a);
        }
        // Alphabetical by station, then antenna.
        antennas.sort_by(|a, b| (&a.1, &a.2, a.0).cmp(&(&b.1, &b.2, b.0)));
        antennas.dedup();
        // Legend: colour and name of each spacecraft, so colour is never the only key.
        ui.horizontal_wrapped(|ui| {
            ui.strong("Kept contacts per antenna");
            for (i, set) in state.doc.fleet.iter().enumerate() {
                ui.colored_label(palette::series(i), &set.name);
            }
            ui.label(
                "| pinned contacts are outlined; right-click a contact to keep it or never use it",
            );
        });
        let row_h = 20.0;
        let label_w = 170.0;
        let height = 18.0 + row_h * antennas.len() as f32;
        let (rect, response) =
            ui.allocate_exact_size(vec2(ui.available_width(), height), Sense::click());
        let painter = ui.painter_at(rect);
        painter.rect_filled(rect, 0.0, ui.visuals().extreme_bg_color);
        let span_s = plan.end.s_since(plan.start).max(1.0);
        let bars = Rect::from_min_max(
            Pos2::new(rect.left() + label_w, rect.top() + 16.0),
            rect.right_bottom(),
        );
        let x_of =
            |t: UtcTime| bars.left() + (t.s_since(plan.start) / span_s) as f32 * bars.width();
        let text = ui.visuals().text_color();
        // Day ticks with their dates.
        let mut day = 0.0;
        while day <= span_s {
            let t = plan.start.add_s(day);
            let x = x_of(t);
            painter.line_segment(
                [Pos2::new(x, rect.top() + 14.0), Pos2::new(x, rect.bottom())],
                Stroke::new(1.0, palette::GRATICULE),
            );
            painter.text(
                Pos2::new(x + 2.0, rect.top() + 1.0),
                Align2::LEFT_TOP,
                &t.to_iso_s()[5..10],
                FontId::proportional(11.0),
                text,
            );
            day += 86_400.0;
        }
        let mut hovered = None;
        self.bars.clear();
        for (row, (station_index, station, antenna)) in antennas.iter().enumerate() {
            let y = bars.top() + row_h * row as f32;
            painter.text(
                Pos2::new(rect.left() + 4.0, y + row_h / 2.0),
                Align2::LEFT_CENTER,
                format!("{station} / {antenna}"),
                FontId::proportional(12.0),
                text,
            );
            for (ci, c) in plan
                .contacts
                .iter()
                .enumerate()
                .filter(|(_, c)| c.station_index == *station_index && &c.antenna == antenna)
            {
                let x0 = x_of(c.aos);
                let x1 = x_of(c.los).max(x0 + 2.0);
                let bar =
                    Rect::from_min_max(Pos2::new(x0, y + 3.0), Pos2::new(x1, y + row_h - 3.0));
                painter.rect_filled(
                    bar,
                    1.0,
                    palette::series(state.fleet_index(c.catalog_number)),
                );
                if c.pinned {
                    crate::views::timeline::pin_outline(&painter, bar, PinKind::Keep);
                }
                self.bars.push((ci, bar));
                if response.hovered()
                    && response
                        .hover_pos()
                        .is_some_and(|p| bar.expand(1.0).contains(p))
                {
                    hovered = Some((ci, c.clone()));
                }
            }
        }
        let cx = x_of(state.cursor);
        painter.line_segment(
            [Pos2::new(cx, bars.top()), Pos2::new(cx, bars.bottom())],
            Stroke::new(1.0, palette::CURSOR),
        );
        if response.secondary_clicked() {
            self.context_contact = hovered.as_ref().map(|(i, _)| *i);
        }
        if let Some(ci) = self.context_contact
            && let Some(c) = plan.contacts.get(ci)
        {
            let label = format!(
                "{} on {}/{} at {}",
                c.spacecraft,
                c.station,
                c.antenna,
                hm_label(c.aos)
            );
            response.context_menu(|ui| {
                contact_pin_menu(
                    ui,
                    state,
                    c.catalog_number,
                    c.station_index,
                    Some(c.antenna.clone()),
                    c.aos,
                    &label,
                );
            });
        }
        if let Some((_, c)) = hovered {
            response.on_hover_text(format!(
                "{} on {}/{}\nAOS {}  LOS {}  ({:.1} min, max elevation {:.0} deg)\n{:.0} MB{}",
                c.spacecraft,
                c.station,
                c.antenna,
                time_label(c.aos),
                hm_label(c.los),
                c.duration_s / 60.0,
                c.max_elevation_deg,
                c.volume_mb,
                if c.pinned { ", pinned" } else { "" }
            ));
        }
    }

    fn export_ui(&mut self, ui: &mut egui::Ui, state: &AppState, plan: &Plan) {
        ui.strong("Hand-off files");
        ui.label("plan.csv, plan.json, plan.ics, pointing/*.csv (azimuth, elevation, range, Doppler) and oem/*.oem");
        ui.colored_label(palette::YELLOW, TRANSMIT_CAUTION);
        ui.horizontal_wrapped(|ui| {
            let busy = self.export_job.is_some() || self.folder_dialog.is_some();
            if ui
                .add_enabled(!busy, egui::Button::new("Export…"))
                .on_hover_text("Choose a folder for the files")
                .clicked()
            {
                self.open_folder_dialog();
            }
            let l = ui.label("Folder:");
            ui.add(
                egui::TextEdit::singleline(&mut self.export_dir)
                    .hint_text("type a folder when no dialog is available")
                    .desired_width(240.0),
            )
            .labelled_by(l.id);
            if ui
                .add_enabled(
                    !busy && !self.export_dir.trim().is_empty(),
                    egui::Button::new("Export to folder"),
                )
                .clicked()
            {
                self.start_export(state, plan, ui.ctx().clone());
            }
        });
        if let Some(job) = &self.export_job {
            ui.label(format!("{}…", job.label));
        }
        if !self.export_status.is_empty() {
            ui.label(&self.export_status);
        }
    }

    fn open_folder_dialog(&mut self) {
        let (tx, rx) = channel();
        let spawned = std::thread::Builder::new()
            .name("passlane folder dialog".into())
            .spawn(move || {
                let _ = tx.send(
                    rfd::FileDialog::new()
                        .set_title("Folder for the plan's files")
                        .pick_folder(),
                );
            });
        match spawned {
            Ok(_) => self.folder_dialog = Some(rx),
            Err(_) => {
                self.export_status =
                    "No folder dialog is available: type the folder instead.".into()
            }
        }
    }

    /// Writes the files into the typed or chosen folder on a worker thread.
    pub fn start_export(&mut self, state: &AppState, plan: &Plan, ctx: egui::Context) {
        let dir = PathBuf::from(self.export_dir.trim());
        let plan = plan.clone();
        let fleet = state.doc.fleet.clone();
        let scenario = state.doc.scenario.clone();
        let created = UtcTime::now();
        self.export_status.clear();
        self.export_job = Some(Job::spawn(
            "Writing files",
            state.doc.revision,
            Some(ctx),
            move |_| export_plan(&dir, &plan, &fleet, &scenario, created),
        ));
    }

    /// Sets the export folder (tests, and the folder dialog's answer).
    pub fn set_export_dir(&mut self, dir: &Path) {
        self.export_dir = dir.display().to_string();
    }
}

/// Demand met per spacecraft: contacts and volume against what is wanted, and the share met.
fn demand_table(ui: &mut egui::Ui, state: &AppState, plan: &Plan) {
    egui::Grid::new("plan-demand")
        .striped(true)
        .num_columns(6)
        .show(ui, |ui| {
            for h in [
                "Spacecraft",
                "Priority",
                "Contacts",
                "Volume (MB)",
                "Met",
                "Short days",
            ] {
                ui.strong(h);
            }
            ui.end_row();
            for d in &plan.demand {
                ui.colored_label(
                    palette::series(state.fleet_index(d.catalog_number)),
                    &d.spacecraft,
                );
                ui.label(format!("{}", d.priority));
                ui.label(match d.contacts_wanted {
                    Some(w) => format!("{} of {w:.0}", d.contacts),
                    None => d.contacts.to_string(),
                });
                ui.label(match d.volume_wanted_mb {
                    Some(w) => format!("{:.0} of {w:.0}", d.volume_mb),
                    None => format!("{:.0}", d.volume_mb),
                });
                let pct = 100.0 * d.met_fraction;
                let colour = if pct >= 99.5 {
                    palette::BLUISH_GREEN
                } else if pct >= 75.0 {
                    palette::YELLOW
                } else {
                    palette::VERMILLION
                };
                ui.colored_label(colour, format!("{pct:.0}%"));
                ui.label(if d.unmet_days.is_empty() {
                    "none".to_string()
                } else {
                    d.unmet_days
                        .iter()
                        .map(|u| u.day_start.to_iso_s()[5..10].to_string())
                        .collect::<Vec<_>>()
                        .join(" ")
                });
                ui.end_row();
            }
        });
    ui.label(
        "Met: green all, yellow at least 75%, vermillion less (the figure is always written).",
    );
}

/// The first few names of a list, and how many more.
fn short_list(names: &[String]) -> String {
    let mut s = names.iter().take(4).cloned().collect::<Vec<_>>().join(", ");
    if names.len() > 4 {
        s.push_str(&format!(" and {} more", names.len() - 4));
    }
    s
}
