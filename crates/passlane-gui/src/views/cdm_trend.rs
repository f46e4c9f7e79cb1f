//! Conjunction messages received for an event and their trend: as the TCA
//! nears, an operator receives several CDMs for the same close approach and
//! watches whether the miss distance and Pc settle. Loaded messages are
//! grouped by event (the planner's [`trend_groups`], as `passlane cdm
//! FILE...`), shown one row per message, oldest first, and plotted: miss
//! distance and Pc against the message's creation time.
//!
//! Each message is re-assessed from its own states and covariances, with the
//! hard-body radius it records (else the default the row names). A message
//! that cannot be read is listed with its file, line, keyword and reason; the
//! others still load.

use std::path::PathBuf;
use std::sync::mpsc::{Receiver, channel};

use eframe::egui;
use egui_plot::{Line, Plot, PlotPoints, Points};
use passlane_plan::cdm::{Cdm, TrendGroup, trend_groups};

use crate::axes::{self, AxisTicks};
use crate::doc::messages::{message_files, read_message};
use crate::palette;
use crate::state::time_label;
use crate::widgets;

#[derive(Default)]
pub struct CdmTrendView {
    path_text: String,
    messages: Vec<(String, Cdm)>,
    errors: Vec<String>,
    groups: Vec<TrendGroup>,
    dialog: Option<Receiver<Option<Vec<PathBuf>>>>,
    /// Tick records of each group's two plots (miss, Pc).
    axes: Vec<[(AxisTicks, AxisTicks); 2]>,
}

impl CdmTrendView {
    /// The events of the loaded messages, each oldest first.
    pub fn groups(&self) -> &[TrendGroup] {
        &self.groups
    }

    /// Messages that could not be read: file, line, keyword and reason.
    pub fn errors(&self) -> &[String] {
        &self.errors
    }

    /// Adds messages from files or folders (a message already loaded from
    /// the same file is replaced), then regroups.
    pub fn load(&mut self, paths: &[PathBuf]) {
        for p in paths {
            let files = match message_files(p) {
                Ok(f) => f,
                Err(e) => {
                    self.errors.push(e);
                    continue;
                }
            };
            for f in files {
                match read_message(&f) {
                    Ok((name, cdm)) => {
                        self.messages.retain(|(n, _)| *n != name);
                        self.messages.push((name, cdm));
                    }
                    Err(e) => self.errors.push(e),
                }
            }
        }
        self.regroup();
    }

    pub fn clear(&mut self) {
        self.messages.clear();
        self.errors.clear();
        self.regroup();
    }

    fn regroup(&mut self) {
        self.groups = trend_groups(&self.messages, None);
        self.axes = self.groups.iter().map(|_| Default::default()).collect();
    }

    /// The numbers drawn on the x and y axes of a group's miss plot (tests).
    pub fn miss_tick_labels(&self, group: usize) -> Option<(Vec<String>, Vec<String>)> {
        self.axes
            .get(group)
            .map(|a| (a[0].0.labels(), a[0].1.labels()))
    }

    fn poll_dialog(&mut self) {
        let Some(rx) = &self.dialog else { return };
        match rx.try_recv() {
            Ok(Some(paths)) => {
                self.dialog = None;
                self.load(&paths);
            }
            Ok(None) | Err(std::sync::mpsc::TryRecvError::Disconnected) => self.dialog = None,
            Err(std::sync::mpsc::TryRecvError::Empty) => {}
        }
    }

    fn open_dialog(&mut self) {
        let (tx, rx) = channel();
        let spawned = std::thread::Builder::new()
            .name("passlane message dialog".into())
            .spawn(move || {
                let _ = tx.send(
                    rfd::FileDialog::new()
                        .set_title("Conjunction data messages (KVN or XML)")
                        .add_filter("CDM", &["cdm", "kvn", "xml", "txt"])
                        .pick_files(),
                );
            });
        match spawned {
            Ok(_) => self.dialog = Some(rx),
            Err(_) => self
                .errors
                .push("No file dialog is available: type the file or folder instead.".into()),
        }
    }

    pub fn ui(&mut self, ui: &mut egui::Ui, width: f32) {
        self.poll_dialog();
        ui.strong("Conjunction messages received (CDM): trend per event");
        ui.label(
            "Load the messages received for an event (KVN or XML; a file or a folder of them). \
             Each is re-assessed from its own states and covariances; messages of the same pair \
             with TCAs within a few minutes form one event.",
        );
        ui.horizontal_wrapped(|ui| {
            let typed_edit =
                widgets::text(ui, "Message file or folder", &mut self.path_text, 320.0);
            let typed = !self.path_text.trim().is_empty();
            let enter = typed_edit.committed && ui.input(|i| i.key_pressed(egui::Key::Enter));
            if ui
                .add_enabled(typed, egui::Button::new("Load messages"))
                .clicked()
                || (typed && enter)
            {
                let p = PathBuf::from(self.path_text.trim());
                self.load(&[p]);
            }
            if ui
                .add_enabled(self.dialog.is_none(), egui::Button::new("Browse…"))
                .clicked()
            {
                self.open_dialog();
            }
            if (!self.messages.is_empty() || !self.errors.is_empty())
                && ui.button("Clear messages").clicked()
            {
                self.clear();
            }
        });
        for e in self.errors.iter().take(20) {
            ui.colored_label(palette::VERMILLION, e);
        }
        if self.errors.len() > 20 {
            ui.colored_label(
                palette::VERMILLION,
                format!("… and {} more messages refused", self.errors.len() - 20),
            );
        }
        if self.groups.is_empty() {
            if self.errors.is_empty() {
                ui.label("No messages loaded.");
            }
            return;
        }
        for (g, group) in self.groups.iter().enumerate() {
            ui.separator();
            ui.strong(format!(
                "{} vs {}: {} message(s), oldest first",
                group.object1,
                group.object2,
                group.rows.len()
            ));
            rows_table(ui, g, group);
            if let Some(axes) = self.axes.get(g) {
                trend_plots(ui, g, group, axes, width);
            }
        }
        ui.small(
            "R/T/N: object 2 relative to object 1 in object 1's radial/in-track/cross-track frame. \
             Pc: recomputed (2-D integral) from each message's covariances; CDM Pc: as the message states it.",
        );
    }
}

fn rows_table(ui: &mut egui::Ui, g: usize, group: &TrendGroup) {
    egui::Grid::new(("cdm-trend-rows", g))
        .striped(true)
        .num_columns(8)
        .show(ui, |ui| {
            for h in [
                "created (UTC)",
                "TCA (UTC)",
                "miss (m)",
                "R / T / N (m)",
                "Pc",
                "CDM Pc",
                "sigma R/T/N obj1 / obj2 (m)",
                "hard-body radius (m)",
            ] {
                ui.strong(h);
            }
            ui.end_row();
            for r in &group.rows {
                ui.label(time_label(r.creation_date))
                    .on_hover_text(format!("{} ({})", r.file, r.message_id));
                ui.label(time_label(r.tca));
                ui.label(format!("{:.1}", r.miss_distance_m));
                ui.label(format!(
                    "{:.1} / {:.1} / {:.1}",
                    r.radial_m, r.in_track_m, r.cross_track_m
                ));
                match (r.pc, &r.pc_note) {
                    (Some(p), _) => ui.label(format!("{p:.2e}")),
                    (None, Some(n)) => ui.label("-").on_hover_text(n.as_str()),
                    (None, None) => ui.label("-"),
                };
                ui.label(
                    r.cdm_collision_probability
                        .map(|p| format!("{p:.2e}"))
                        .unwrap_or_else(|| "-".into()),
                );
                let s = |v: &[f64; 3]| format!("{:.0}/{:.0}/{:.0}", v[0], v[1], v[2]);
                ui.label(format!(
                    "{} / {}",
                    s(&r.object1_sigma_rtn_m),
                    s(&r.object2_sigma_rtn_m)
                ));
                ui.label(format!("{:.1}", r.hard_body_radius_m))
                    .on_hover_text(r.hard_body_radius_source.as_str());
                ui.end_row();
            }
        });
}

/// Hours from the newest message's TCA to each message's creation (negative:
/// before TCA), the x of both plots.
fn hours_to_tca(group: &TrendGroup) -> Vec<f64> {
    let Some(tca) = group.rows.last().map(|r| r.tca) else {
        return Vec::new();
    };
    group
        .rows
        .iter()
        .map(|r| r.creation_date.s_since(tca) / 3600.0)
        .collect()
}

fn trend_plots(
    ui: &mut egui::Ui,
    g: usize,
    group: &TrendGroup,
    axes: &[(AxisTicks, AxisTicks); 2],
    width: f32,
) {
    let x = hours_to_tca(group);
    let miss: Vec<[f64; 2]> = x
        .iter()
        .zip(&group.rows)
        .map(|(h, r)| [*h, r.miss_distance_m])
        .collect();
    let pc: Vec<[f64; 2]> = x
        .iter()
        .zip(&group.rows)
        .filter_map(|(h, r)| r.pc.filter(|p| *p > 0.0).map(|p| [*h, p.log10()]))
        .collect();
    let w = ((width - 24.0) / 2.0).max(220.0);
    // Bounds that frame the values even when every message says the same.
    let miss_top = miss.iter().map(|p| p[1]).fold(0.0, f64::max) * 1.15 + 1.0;
    let (pc_lo, pc_hi) = pc
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), p| {
            (lo.min(p[1]), hi.max(p[1]))
        });
    let x_label = "message created, hours from TCA";
    ui.horizontal(|ui| {
        axes::readable(
            Plot::new(("cdm-trend-miss", g))
                .height(180.0)
                .width(w)
                .include_y(0.0)
                .include_y(miss_top)
                .allow_scroll(false),
            x_label,
            "miss distance (m)",
            &axes[0].0,
            &axes[0].1,
        )
        .label_formatter(|h| {
            let p = match h {
                egui_plot::HoverPosition::NearDataPoint { position, .. } => *position,
                egui_plot::HoverPosition::Elsewhere { position } => *position,
            };
            Some(format!("{:+.1} h from TCA\nmiss {:.1} m", p.x, p.y))
        })
        .show(ui, |plot| {
            plot.line(Line::new("miss", PlotPoints::from(miss.clone())).color(palette::BLUE));
            plot.points(
                Points::new("miss messages", PlotPoints::from(miss))
                    .radius(4.0)
                    .color(palette::BLUE),
            );
        });
        axes::readable(
            Plot::new(("cdm-trend-pc", g))
                .height(180.0)
                .width(w)
                .include_y(if pc_lo.is_finite() { pc_lo - 1.0 } else { -8.0 })
                .include_y(if pc_hi.is_finite() { pc_hi + 1.0 } else { 0.0 })
                .allow_scroll(false),
            x_label,
            "log10 Pc",
            &axes[1].0,
            &axes[1].1,
        )
        .label_formatter(|h| {
            let p = match h {
                egui_plot::HoverPosition::NearDataPoint { position, .. } => *position,
                egui_plot::HoverPosition::Elsewhere { position } => *position,
            };
            Some(format!(
                "{:+.1} h from TCA\nPc {:.2e}",
                p.x,
                10f64.powf(p.y)
            ))
        })
        .show(ui, |plot| {
            plot.line(Line::new("Pc", PlotPoints::from(pc.clone())).color(palette::VERMILLION));
            plot.points(
                Points::new("Pc messages", PlotPoints::from(pc))
                    .radius(4.0)
                    .color(palette::VERMILLION),
            );
        });
    });
}
