//! The application shell: top bar (scenario files, job progress), the central
//! tabbed views, and the bottom strip with the time cursor and the contact
//! timeline. It owns the pass-search job and hands finished results to
//! [`AppState`]; every view only reads state and its own caches while drawing.

use std::path::{Path, PathBuf};
use std::sync::mpsc::{Receiver, channel};
use std::time::{Duration, Instant};

use eframe::egui;
use passlane_plan::{PassReport, find_passes};

use crate::doc::{Document, SaveMode};
use crate::jobs::{Job, Poll, progress_ui};
use crate::state::{AppState, time_label};
use crate::views::fleet::BrowseRequest;
use crate::views::{
    approaches::ApproachesView, fleet::FleetView, map::MapView, plan::PlanView, sky::SkyView,
    timeline::TimelineView,
};

#[path = "app_keys.rs"]
mod keys;

/// The central view being shown.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Tab {
    Map,
    Sky,
    Approaches,
    Plan,
    Fleet,
}

/// Something that would drop unsaved edits, waiting for the user's answer.
#[derive(Debug, Clone, PartialEq)]
enum Pending {
    New,
    Open(PathBuf),
    Demo,
    Quit,
}

/// A native file dialog running on its own thread (the portal call blocks).
enum DialogPurpose {
    OpenScenario,
    SaveScenario,
    ElementFile(BrowseRequest),
}

/// Options fixed at start-up.
#[derive(Debug, Clone, Default)]
pub struct AppOptions {
    /// Where the recent-files list lives; `None` keeps it in memory only (tests).
    pub config_dir: Option<PathBuf>,
    /// Log frame times to standard error.
    pub frame_stats: bool,
    /// Start pass searches automatically when inputs change.
    pub auto_passes: bool,
}

/// The whole app.
pub struct PasslaneApp {
    pub state: AppState,
    pub tab: Tab,
    pub playing: bool,
    /// Simulated seconds per real second while playing.
    pub play_speed: f64,
    map: MapView,
    timeline: TimelineView,
    sky: SkyView,
    approaches: ApproachesView,
    plan: PlanView,
    fleet: FleetView,
    pass_job: Option<Job<PassReport>>,
    typed_path: String,
    recent: Vec<PathBuf>,
    pending: Option<Pending>,
    dialog: Option<(DialogPurpose, Receiver<Option<PathBuf>>)>,
    options: AppOptions,
    frame_times_ms: Vec<f32>,
    frame_stats_since: Instant,
    quit_confirmed: bool,
    /// A save into another folder, waiting for "rewrite paths" or "copy files".
    save_question: Option<PathBuf>,
    /// The keyboard help (F1) is open.
    pub help_open: bool,
}

impl PasslaneApp {
    pub fn new(doc: Document, options: AppOptions) -> Self {
        let recent = options
            .config_dir
            .as_deref()
            .map(load_recent)
            .unwrap_or_default();
        PasslaneApp {
            state: AppState::new(doc),
            tab: Tab::Map,
            playing: false,
            play_speed: 60.0,
            map: MapView::default(),
            timeline: TimelineView::default(),
            sky: SkyView::default(),
            approaches: ApproachesView::default(),
            plan: PlanView::default(),
            fleet: FleetView::default(),
            pass_job: None,
            typed_path: String::new(),
            recent,
            pending: None,
            dialog: None,
            options,
            frame_times_ms: Vec::new(),
            frame_stats_since: Instant::now(),
            quit_confirmed: false,
            save_question: None,
            help_open: false,
        }
    }

    /// Whether a pass search is running.
    pub fn passes_running(&self) -> bool {
        self.pass_job.is_some()
    }

    /// The close-approach view (tests read its finished screening).
    pub fn approaches(&self) -> &ApproachesView {
        &self.approaches
    }

    /// The plan view (tests read its plan and drive its export).
    pub fn plan_view(&mut self) -> &mut PlanView {
        &mut self.plan
    }

    /// The contact timeline (tests find where a pass's bar is).
    pub fn timeline(&self) -> &TimelineView {
        &self.timeline
    }

    /// The sky view (tests read its plot axes).
    pub fn sky(&self) -> &SkyView {
        &self.sky
    }

    /// The close-approach view, to drive (tests).
    pub fn approaches_mut(&mut self) -> &mut ApproachesView {
        &mut self.approaches
    }

    /// Whether the shown passes belong to the current document revision.
    pub fn passes_current(&self) -> bool {
        self.state.passes_revision == Some(self.state.doc.revision)
    }

    /// Starts a pass search for the current document, cancelling any older one.
    pub fn start_pass_search(&mut self, ctx: Option<egui::Context>) {
        if let Some(old) = self.pass_job.take() {
            old.progress.cancel();
        }
        // The planners get the scenario checked with the file loader's rules
        // (and masks sorted); while it has a problem the old passes stay.
        let scenario = match self.state.doc.checked_scenario() {
            Ok(s) => s,
            Err(e) => {
                self.state.passes_blocked = Some(e);
                return;
            }
        };
        self.state.passes_blocked = None;
        let sets = self.state.doc.fleet.clone();
        let stations = scenario.stations;
        let options = self.state.pass_options();
        self.pass_job = Some(Job::spawn(
            "Finding passes",
            self.state.doc.revision,
            ctx,
            move |p| find_passes(&sets, &stations, &options, p),
        ));
    }

    /// Takes a finished job's result. Called once per frame before drawing.
    fn poll_jobs(&mut self) {
        let Some(job) = &self.pass_job else { return };
        match job.poll() {
            Poll::Running => {}
            Poll::Done(report) => {
                let revision = job.revision;
                self.pass_job = None;
                if report.cancelled {
                    self.state.status =
                        "Pass search cancelled: the timeline shows what was found.".into();
                }
                self.state.passes = report;
                self.state.passes_revision = Some(revision);
                self.state.selected_pass = None;
            }
            Poll::Lost => {
                self.pass_job = None;
                self.state.passes_revision = Some(self.state.doc.revision);
                self.state.status =
                    "The pass search stopped unexpectedly; edit or reload to retry.".into();
            }
        }
    }

    /// The whole UI, drawn into `ui` (the eframe shell and the tests both call this).
    pub fn ui(&mut self, ui: &mut egui::Ui) {
        let frame_start = Instant::now();
        self.poll_jobs();
        self.poll_dialog();
        let blocked_here =
            self.state.passes_blocked.is_some() && self.state.doc.checked_scenario().is_err();
        if self.options.auto_passes
            && !self.passes_current()
            && self.pass_job.is_none()
            && !blocked_here
        {
            self.start_pass_search(Some(ui.ctx().clone()));
        }
        self.keyboard(ui);
        self.advance_play(ui);
        self.handle_close_request(ui);

        egui::Panel::top("passlane-top").show(ui, |ui| self.top_bar(ui));
        egui::Panel::bottom("passlane-bottom")
            .resizable(true)
            .default_size(190.0)
            .show(ui, |ui| {
                self.cursor_bar(ui);
                ui.separator();
                self.timeline.ui(ui, &mut self.state);
            });
        egui::CentralPanel::default().show(ui, |ui| {
            ui.horizontal(|ui| {
                ui.selectable_value(&mut self.tab, Tab::Map, "Map");
                ui.selectable_value(&mut self.tab, Tab::Sky, "Sky view");
                ui.selectable_value(&mut self.tab, Tab::Approaches, "Close approaches");
                ui.selectable_value(&mut self.tab, Tab::Plan, "Plan");
                ui.selectable_value(&mut self.tab, Tab::Fleet, "Fleet and stations");
            });
            ui.separator();
            match self.tab {
                Tab::Map => self.map.ui(ui, &mut self.state),
                Tab::Sky => self.sky.ui(ui, &mut self.state),
                Tab::Approaches => self.approaches.ui(ui, &mut self.state),
                Tab::Plan => self.plan.ui(ui, &mut self.state),
                Tab::Fleet => self.fleet.ui(ui, &mut self.state),
            }
        });
        // Selecting a pass on the timeline opens its sky view.
        if self.timeline.take_selection_event() {
            self.tab = Tab::Sky;
        }
        if let Some(request) = self.fleet.take_browse_request() {
            self.open_dialog(DialogPurpose::ElementFile(request));
        }
        if let Some(tca) = self.approaches.take_cursor_request() {
            self.state.cursor = tca;
            self.state.clamp_cursor();
        }
        self.guard_modal(ui);
        self.save_question_modal(ui);
        self.help_window(ui);
        if self.pass_job.is_some() {
            ui.ctx().request_repaint_after(Duration::from_millis(100));
        }
        self.record_frame_time(frame_start);
    }

    fn top_bar(&mut self, ui: &mut egui::Ui) {
        ui.horizontal_wrapped(|ui| {
            ui.strong("Passlane");
            ui.separator();
            if ui
                .button("New")
                .on_hover_text("Start an empty scenario")
                .clicked()
            {
                self.request(Pending::New);
            }
            if ui
                .button("Open…")
                .on_hover_text("Choose a scenario file (Ctrl+O)")
                .clicked()
            {
                self.open_dialog(DialogPurpose::OpenScenario);
            }
            if ui.button("Save").on_hover_text("Ctrl+S").clicked() {
                self.save();
            }
            if ui.button("Save as…").clicked() {
                self.open_dialog(DialogPurpose::SaveScenario);
            }
            ui.menu_button("Recent", |ui| {
                if ui.button("Bundled demo").clicked() {
                    self.request(Pending::Demo);
                    ui.close();
                }
                for p in self.recent.clone() {
                    if ui.button(p.display().to_string()).clicked() {
                        self.request(Pending::Open(p));
                        ui.close();
                    }
                }
            });
            ui.separator();
            let path_label = ui.label("Path:");
            ui.add(
                egui::TextEdit::singleline(&mut self.typed_path)
                    .hint_text("type a scenario path when no file dialog is available")
                    .desired_width(220.0),
            )
            .labelled_by(path_label.id);
            if ui.button("Open path").clicked() && !self.typed_path.trim().is_empty() {
                self.request(Pending::Open(PathBuf::from(self.typed_path.trim())));
            }
            if ui.button("Save to path").clicked() && !self.typed_path.trim().is_empty() {
                let p = PathBuf::from(self.typed_path.trim());
                self.save_to(&p);
            }
            if ui
                .button("Help")
                .on_hover_text("Keys and views (F1)")
                .clicked()
            {
                self.help_open = true;
            }
            ui.separator();
            ui.label(self.state.doc.title());
            if let Some(job) = &self.pass_job {
                ui.separator();
                if progress_ui(ui, &job.label, &job.progress, job.started) {
                    job.progress.cancel();
                }
            }
        });
        if !self.state.status.is_empty() {
            ui.horizontal_wrapped(|ui| {
                ui.colored_label(crate::palette::VERMILLION, &self.state.status);
                if ui.small_button("Dismiss").clicked() {
                    self.state.status.clear();
                }
            });
        }
        if !self.state.info.is_empty() {
            ui.horizontal_wrapped(|ui| {
                ui.label(&self.state.info);
                if ui.small_button("OK").clicked() {
                    self.state.info.clear();
                }
            });
        }
    }

    /// Time cursor: a slider over the window, play/pause and speed.
    fn cursor_bar(&mut self, ui: &mut egui::Ui) {
        let (start, end) = self.state.doc.window();
        let span_h = (end.s_since(start) / 3600.0).max(1e-3);
        ui.horizontal(|ui| {
            let play_label = if self.playing { "Pause" } else { "Play" };
            if ui.button(play_label).on_hover_text("Space").clicked() {
                self.playing = !self.playing;
            }
            let speed_label = ui.label("Speed");
            egui::ComboBox::from_id_salt("play-speed")
                .selected_text(format!("{}×", self.play_speed))
                .show_ui(ui, |ui| {
                    for s in [1.0, 10.0, 60.0, 300.0, 1800.0] {
                        ui.selectable_value(&mut self.play_speed, s, format!("{s}×"));
                    }
                })
                .response
                .labelled_by(speed_label.id);
            let mut hours = self.state.cursor.s_since(start) / 3600.0;
            let width = (ui.available_width() - 240.0).max(120.0);
            ui.spacing_mut().slider_width = width;
            let r = ui.add(
                egui::Slider::new(&mut hours, 0.0..=span_h)
                    .show_value(false)
                    .text("Time cursor"),
            );
            if r.changed() {
                self.state.cursor = start.add_s(hours * 3600.0);
            }
            ui.monospace(time_label(self.state.cursor));
        });
    }

    fn advance_play(&mut self, ui: &egui::Ui) {
        if !self.playing {
            return;
        }
        let dt_s = f64::from(ui.input(|i| i.stable_dt).min(0.1));
        let (_, end) = self.state.doc.window();
        self.state.cursor = self.state.cursor.add_s(dt_s * self.play_speed);
        if self.state.cursor >= end {
            self.state.cursor = end;
            self.playing = false;
        }
        ui.ctx().request_repaint();
    }

    fn request(&mut self, action: Pending) {
        if self.state.doc.dirty {
            self.pending = Some(action);
        } else {
            self.perform(action);
        }
    }

    fn perform(&mut self, action: Pending) {
        match action {
            Pending::New => self.replace(Document::new_empty()),
            Pending::Demo => self.replace(Document::demo()),
            Pending::Open(path) => match Document::open(&path) {
                Ok(doc) => {
                    self.remember(&path);
                    self.replace(doc);
                }
                Err(e) => self.state.status = format!("Could not open the scenario: {e:#}"),
            },
            Pending::Quit => self.quit_confirmed = true,
        }
    }

    fn replace(&mut self, doc: Document) {
        if let Some(job) = self.pass_job.take() {
            job.progress.cancel();
        }
        self.state.replace_document(doc);
    }

    /// Opens a document directly (tests and the command line).
    pub fn open_document(&mut self, doc: Document) {
        self.replace(doc);
    }

    /// Save: to the scenario's own file, or ask where.
    fn save(&mut self) {
        match self.state.doc.path.clone() {
            Some(p) => self.save_to(&p),
            None => self.open_dialog(DialogPurpose::SaveScenario),
        }
    }

    /// Saves to `path`; when that moves the scenario away from the folder
    /// its element files are named against, asks first how to keep them.
    pub fn save_to(&mut self, path: &Path) {
        if self.state.doc.save_moves_files(path) {
            self.save_question = Some(path.to_path_buf());
        } else {
            self.save_with(path, SaveMode::KeepPaths);
        }
    }

    fn save_with(&mut self, path: &Path, mode: SaveMode) {
        match self.state.doc.save_as(path, mode) {
            Ok(report) => {
                self.remember(path);
                self.state.status.clear();
                self.state.info = report.lines.join("\n");
            }
            Err(e) => self.state.status = format!("{e:#}"),
        }
    }

    /// "Save into another folder": rewrite the element files' paths or copy them.
    fn save_question_modal(&mut self, ui: &egui::Ui) {
        let Some(path) = self.save_question.clone() else {
            return;
        };
        let mut answer = None;
        let names: Vec<String> = self
            .state
            .doc
            .scenario
            .element_files
            .iter()
            .chain(&self.state.doc.scenario.catalog_files)
            .cloned()
            .collect();
        egui::Modal::new(egui::Id::unique("save-elsewhere")).show(ui.ctx(), |ui| {
            ui.heading("Saving into another folder");
            ui.label(format!(
                "{} names its element files relative to its folder:",
                path.file_name().map(|f| f.to_string_lossy().into_owned()).unwrap_or_default()
            ));
            for n in names.iter().take(12) {
                ui.monospace(n);
            }
            ui.label("So that the saved scenario still finds them:");
            ui.horizontal_wrapped(|ui| {
                if ui
                    .button("Rewrite the paths")
                    .on_hover_text("Name the same files from the new folder (built-in demo files are written beside it)")
                    .clicked()
                {
                    answer = Some(SaveMode::RewritePaths);
                }
                if ui
                    .button("Copy the element files beside it")
                    .on_hover_text("Copy every element file into the new folder (never over a different file)")
                    .clicked()
                {
                    answer = Some(SaveMode::CopyBeside);
                }
                if ui.button("Cancel saving").clicked() {
                    self.save_question = None;
                }
            });
        });
        if ui.input(|i| i.key_pressed(egui::Key::Escape)) {
            self.save_question = None;
        }
        if let Some(mode) = answer {
            self.save_question = None;
            self.save_with(&path, mode);
        }
    }

    fn remember(&mut self, path: &Path) {
        let p = path.to_path_buf();
        self.recent.retain(|q| q != &p);
        self.recent.insert(0, p);
        self.recent.truncate(8);
        if let Some(dir) = &self.options.config_dir {
            save_recent(dir, &self.recent);
        }
    }

    fn open_dialog(&mut self, purpose: DialogPurpose) {
        if self.dialog.is_some() {
            return;
        }
        let (tx, rx) = channel();
        let saving = matches!(purpose, DialogPurpose::SaveScenario);
        let scenario = !matches!(purpose, DialogPurpose::ElementFile(_));
        let spawned = std::thread::Builder::new()
            .name("passlane file dialog".into())
            .spawn(move || {
                let dialog = if scenario {
                    rfd::FileDialog::new().add_filter("Passlane scenario", &["json"])
                } else {
                    rfd::FileDialog::new()
                        .add_filter("Element sets", &["tle", "txt", "json", "xml", "kvn", "omm"])
                };
                let picked = if saving {
                    dialog.save_file()
                } else {
                    dialog.pick_file()
                };
                let _ = tx.send(picked);
            });
        if spawned.is_ok() {
            self.dialog = Some((purpose, rx));
        } else {
            self.state.status = "No file dialog is available: type a path instead.".into();
        }
    }

    fn poll_dialog(&mut self) {
        let Some((_, rx)) = &self.dialog else { return };
        let picked = match rx.try_recv() {
            Ok(p) => p,
            Err(std::sync::mpsc::TryRecvError::Empty) => return,
            Err(std::sync::mpsc::TryRecvError::Disconnected) => None,
        };
        let Some((purpose, _)) = self.dialog.take() else {
            return;
        };
        let Some(path) = picked else {
            self.state.status =
                "No file chosen (if no dialog appeared, type the path in the Path field).".into();
            return;
        };
        match purpose {
            DialogPurpose::OpenScenario => self.request(Pending::Open(path)),
            DialogPurpose::SaveScenario => self.save_to(&path),
            DialogPurpose::ElementFile(BrowseRequest::Add { own_fleet }) => {
                if let Err(e) = self.state.doc.add_element_file(&path, own_fleet) {
                    self.state.status = format!("{e:#}");
                }
            }
            DialogPurpose::ElementFile(BrowseRequest::Locate { index }) => {
                if let Err(e) = self.state.doc.relocate_file(index, &path) {
                    self.state.status = format!("{e:#}");
                }
            }
        }
    }

    fn handle_close_request(&mut self, ui: &egui::Ui) {
        let close = ui.input(|i| i.viewport().close_requested());
        if close && self.state.doc.dirty && !self.quit_confirmed {
            ui.ctx()
                .send_viewport_cmd(egui::ViewportCommand::CancelClose);
            self.pending = Some(Pending::Quit);
        }
    }

    /// The unsaved-changes question.
    fn guard_modal(&mut self, ui: &egui::Ui) {
        let Some(pending) = self.pending.clone() else {
            return;
        };
        let mut answer = None;
        egui::Modal::new(egui::Id::unique("unsaved-guard")).show(ui.ctx(), |ui| {
            ui.heading("Unsaved changes");
            ui.label("This scenario has changes that are not saved.");
            ui.horizontal(|ui| {
                if ui.button("Save first").clicked() {
                    answer = Some(0);
                }
                if ui.button("Discard changes").clicked() {
                    answer = Some(1);
                }
                if ui.button("Keep editing").clicked() {
                    answer = Some(2);
                }
            });
        });
        match answer {
            Some(0) => {
                self.pending = None;
                match self.state.doc.path.clone() {
                    Some(p) => {
                        self.save_to(&p);
                        if !self.state.doc.dirty {
                            self.finish_pending(ui, pending);
                        }
                    }
                    None => self.open_dialog(DialogPurpose::SaveScenario),
                }
            }
            Some(1) => {
                self.pending = None;
                self.state.doc.dirty = false;
                self.finish_pending(ui, pending);
            }
            Some(_) => self.pending = None,
            None => {}
        }
    }

    fn finish_pending(&mut self, ui: &egui::Ui, pending: Pending) {
        let quit = pending == Pending::Quit;
        self.perform(pending);
        if quit {
            ui.ctx().send_viewport_cmd(egui::ViewportCommand::Close);
        }
    }

    fn record_frame_time(&mut self, start: Instant) {
        if !self.options.frame_stats {
            return;
        }
        self.frame_times_ms
            .push(start.elapsed().as_secs_f32() * 1000.0);
        if self.frame_stats_since.elapsed() >= Duration::from_secs(2) {
            let n = self.frame_times_ms.len().max(1) as f32;
            let mean = self.frame_times_ms.iter().sum::<f32>() / n;
            let max = self.frame_times_ms.iter().copied().fold(0.0, f32::max);
            eprintln!(
                "frame-stats: {} frames, UI build mean {mean:.2} ms, max {max:.2} ms ({} spacecraft, {} catalog objects)",
                self.frame_times_ms.len(),
                self.state.doc.fleet.len(),
                self.state.doc.catalog.len()
            );
            self.frame_times_ms.clear();
            self.frame_stats_since = Instant::now();
        }
    }
}

impl eframe::App for PasslaneApp {
    fn ui(&mut self, ui: &mut egui::Ui, _frame: &mut eframe::Frame) {
        PasslaneApp::ui(self, ui);
    }
}

/// The recent-files list: a small JSON array of paths, written atomically.
fn recent_path(dir: &Path) -> PathBuf {
    dir.join("recent.json")
}

fn load_recent(dir: &Path) -> Vec<PathBuf> {
    passlane_files::read_limited(&recent_path(dir), 1024 * 1024)
        .ok()
        .and_then(|b| serde_json::from_slice::<Vec<PathBuf>>(&b).ok())
        .unwrap_or_default()
}

fn save_recent(dir: &Path, recent: &[PathBuf]) {
    // The list is a convenience: failing to store it must not disturb the user.
    if std::fs::create_dir_all(dir).is_ok()
        && let Ok(json) = serde_json::to_vec_pretty(recent)
    {
        let _ = passlane_files::write_atomic(&recent_path(dir), &json);
    }
}
