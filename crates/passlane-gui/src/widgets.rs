//! Small input widgets shared by the editors.
//!
//! [`number`] is a text field for a number with a unit: what the user types
//! stays as typed while the field has focus (it is parsed on every keystroke,
//! so the value and its validation follow as typed), and the field reports
//! when the edit is *committed* (focus left or Enter), which is when editors
//! that reorder rows (the horizon mask) may sort.

use eframe::egui::{self, Id, Response, TextEdit, Ui};

use crate::palette;

/// What a field's edit did this frame.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct Edit {
    /// The value changed.
    pub changed: bool,
    /// The user finished editing (focus left the field).
    pub committed: bool,
}

impl std::ops::BitOrAssign for Edit {
    fn bitor_assign(&mut self, rhs: Edit) {
        self.changed |= rhs.changed;
        self.committed |= rhs.committed;
    }
}

/// Shortest text that reads back as the same number.
pub fn number_text(v: f64) -> String {
    format!("{v}")
}

/// Parses a typed number: decimal or exponent form, finite.
pub fn parse_number(text: &str) -> Option<f64> {
    text.trim().parse::<f64>().ok().filter(|v| v.is_finite())
}

/// A number field with an accessible name (`label`, usually with the unit),
/// laid out as `label [value]` on one row. `id_salt` must be unique in the
/// editor (e.g. including the row index).
pub fn number(
    ui: &mut Ui,
    label: &str,
    id_salt: impl std::hash::Hash + std::fmt::Debug,
    value: &mut f64,
    width: f32,
) -> Edit {
    let l = ui.label(label);
    number_unlabelled(ui, l.id, label, id_salt, value, width)
}

/// A number field named by an existing label widget (`label_id`); `name` is
/// used in the parse error.
pub fn number_unlabelled(
    ui: &mut Ui,
    label_id: Id,
    name: &str,
    id_salt: impl std::hash::Hash + std::fmt::Debug,
    value: &mut f64,
    width: f32,
) -> Edit {
    let id = ui.make_persistent_id(("number", id_salt));
    let focused = ui.memory(|m| m.has_focus(id));
    let mut text = if focused {
        ui.data_mut(|d| d.get_temp::<String>(id))
            .unwrap_or_else(|| number_text(*value))
    } else {
        number_text(*value)
    };
    let r: Response = ui
        .add(TextEdit::singleline(&mut text).id(id).desired_width(width))
        .labelled_by(label_id);
    let mut edit = Edit::default();
    let parsed = parse_number(&text);
    if r.changed()
        && let Some(v) = parsed
        && v != *value
    {
        *value = v;
        edit.changed = true;
    }
    if r.has_focus() {
        ui.data_mut(|d| d.insert_temp(id, text.clone()));
        if parsed.is_none() {
            ui.colored_label(palette::VERMILLION, format!("{name}: not a number"));
        }
    }
    if r.lost_focus() {
        edit.committed = true;
        ui.data_mut(|d| d.remove::<String>(id));
    }
    edit
}

/// An optional number: a checkbox saying whether it is set, then the field.
pub fn optional_number(
    ui: &mut Ui,
    label: &str,
    id_salt: impl std::hash::Hash + std::fmt::Debug + Clone,
    value: &mut Option<f64>,
    default: f64,
    width: f32,
) -> Edit {
    let mut edit = Edit::default();
    let mut on = value.is_some();
    let cb = ui.checkbox(&mut on, label);
    if cb.changed() {
        *value = on.then_some(value.unwrap_or(default));
        edit.changed = true;
        edit.committed = true;
    }
    if let Some(v) = value {
        edit |= number_unlabelled(ui, cb.id, label, id_salt, v, width);
    }
    edit
}

/// A text field with an accessible name; returns (changed, committed).
pub fn text(ui: &mut Ui, label: &str, value: &mut String, width: f32) -> Edit {
    let l = ui.label(label);
    let r = ui
        .add(TextEdit::singleline(value).desired_width(width))
        .labelled_by(l.id);
    Edit {
        changed: r.changed(),
        committed: r.lost_focus(),
    }
}

/// A UTC time field in ISO 8601 form, parsed as typed; the value changes
/// only when the text is a valid time.
pub fn time(
    ui: &mut Ui,
    label: &str,
    id_salt: impl std::hash::Hash + std::fmt::Debug,
    value: &mut passlane_orbit::UtcTime,
    width: f32,
) -> Edit {
    let l = ui.label(label);
    let id = ui.make_persistent_id(("time", id_salt));
    let focused = ui.memory(|m| m.has_focus(id));
    let mut text = if focused {
        ui.data_mut(|d| d.get_temp::<String>(id))
            .unwrap_or_else(|| value.to_iso_s())
    } else {
        value.to_iso_s()
    };
    let r = ui
        .add(TextEdit::singleline(&mut text).id(id).desired_width(width))
        .labelled_by(l.id);
    let mut edit = Edit::default();
    let parsed = passlane_orbit::UtcTime::parse_iso(text.trim());
    if r.changed()
        && let Ok(t) = &parsed
        && *t != *value
    {
        *value = *t;
        edit.changed = true;
    }
    if r.has_focus() {
        ui.data_mut(|d| d.insert_temp(id, text.clone()));
        if let Err(e) = &parsed {
            ui.colored_label(palette::VERMILLION, format!("{label}: {e}"));
        }
    }
    if r.lost_focus() {
        edit.committed = true;
        ui.data_mut(|d| d.remove::<String>(id));
    }
    edit
}

/// A caution line: the same colour everywhere a user acts on advisory figures.
pub fn caution(ui: &mut Ui, text: &str) -> Response {
    ui.colored_label(palette::YELLOW, text)
}

/// A vertical scroll area over the whole of `add`, so that nothing is clipped
/// in a small window.
pub fn scroll<R>(ui: &mut Ui, id: &str, add: impl FnOnce(&mut Ui) -> R) -> R {
    egui::ScrollArea::vertical()
        .id_salt(id)
        .auto_shrink([false, false])
        .show(ui, add)
        .inner
}
