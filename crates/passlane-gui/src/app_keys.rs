//! The window's keys (Space, arrows, Ctrl+S, Ctrl+O, Esc, F1) and the help
//! panel that lists them.

use eframe::egui;

use super::{DialogPurpose, PasslaneApp};

impl PasslaneApp {
    /// Space, arrows, Ctrl+S, Ctrl+O, Esc, F1 (not while a text field has the keyboard).
    pub(super) fn keyboard(&mut self, ui: &egui::Ui) {
        let typing = ui.ctx().egui_wants_keyboard_input();
        let (space, left, right, up, down, save, open, esc, f1, shift) = ui.input(|i| {
            let cmd = i.modifiers.command;
            (
                i.key_pressed(egui::Key::Space),
                i.key_pressed(egui::Key::ArrowLeft),
                i.key_pressed(egui::Key::ArrowRight),
                i.key_pressed(egui::Key::ArrowUp),
                i.key_pressed(egui::Key::ArrowDown),
                cmd && i.key_pressed(egui::Key::S),
                cmd && i.key_pressed(egui::Key::O),
                i.key_pressed(egui::Key::Escape),
                i.key_pressed(egui::Key::F1),
                i.modifiers.shift,
            )
        });
        if save {
            self.save();
        }
        if open {
            self.open_dialog(DialogPurpose::OpenScenario);
        }
        if f1 {
            self.help_open = !self.help_open;
        }
        if esc {
            self.help_open = false;
            self.pending = None;
        }
        if typing {
            return;
        }
        if space {
            self.playing = !self.playing;
        }
        let step_s = if shift { 600.0 } else { 60.0 };
        if left {
            self.state.cursor = self.state.cursor.add_s(-step_s);
        }
        if right {
            self.state.cursor = self.state.cursor.add_s(step_s);
        }
        // Up/down: to the previous or next pass start.
        if up || down {
            let c = self.state.cursor;
            let next = self
                .state
                .passes
                .passes
                .iter()
                .map(|p| p.aos)
                .filter(|t| {
                    if down {
                        *t > c.add_s(0.5)
                    } else {
                        *t < c.add_s(-0.5)
                    }
                })
                .reduce(|a, b| if down { a.min(b) } else { a.max(b) });
            if let Some(t) = next {
                self.state.cursor = t;
            }
        }
        self.state.clamp_cursor();
    }

    /// The keyboard help and what each view is for.
    pub(super) fn help_window(&mut self, ui: &egui::Ui) {
        if !self.help_open {
            return;
        }
        let mut open = true;
        egui::Window::new("Help")
            .open(&mut open)
            .collapsible(false)
            .default_width(420.0)
            .show(ui.ctx(), |ui| {
                ui.strong("Keys");
                egui::Grid::new("help-keys").num_columns(2).show(ui, |ui| {
                    for (k, what) in [
                        ("Space", "play or pause the time cursor"),
                        ("Left / Right", "move the cursor 1 min back / on (Shift: 10 min)"),
                        ("Up / Down", "cursor to the previous / next pass start"),
                        ("Ctrl+S", "save the scenario"),
                        ("Ctrl+O", "open a scenario"),
                        ("Esc", "close this help and dialogs"),
                        ("F1", "show or hide this help"),
                    ] {
                        ui.monospace(k);
                        ui.label(what);
                        ui.end_row();
                    }
                });
                ui.add_space(6.0);
                ui.strong("Mouse");
                ui.label("Map: scroll to zoom, drag to pan, double-click to reset; hover a spacecraft or station for its next contact; click a legend entry to hide or show a spacecraft.");
                ui.label("Contact timeline: click a pass to select it, right-click to keep or never use it in the plan; click or drag elsewhere to move the cursor.");
                ui.label("Plots: scroll to zoom, drag to pan, double-click to reset; hover for values.");
                ui.add_space(6.0);
                ui.strong("Cautions");
                crate::widgets::caution(ui, "Screening on published element sets is advisory: defer to official conjunction messages and coordinate any manoeuvre with the other operator and the screening service.");
                crate::widgets::caution(ui, "Transmitting needs a licence and follows local rules.");
            });
        if !open {
            self.help_open = false;
        }
    }
}
