//! Plot axes that stay readable at every zoom: ticks on 1-2-5 steps chosen
//! from the plot's size so that every axis shows several labelled ticks
//! (egui_plot's default steps are powers of ten, which left a Doppler axis
//! of ±50 kHz with the single label "0"), axis labels with units, and a
//! record of the numbers drawn so that tests can read them.

use std::cell::{Cell, RefCell};
use std::ops::RangeInclusive;
use std::rc::Rc;

use eframe::egui;
use egui_plot::{AxisHints, GridInput, GridMark, Plot};

/// Smallest gap between two labelled ticks, points: y labels are one text
/// line high, x labels a few characters wide.
pub const Y_LABEL_GAP_PT: f32 = 20.0;
pub const X_LABEL_GAP_PT: f32 = 62.0;
/// egui_plot's grid spacing lower bound, points (what `base_step_size` is scaled by).
const GRID_MIN_PT: f32 = 8.0;

/// The smallest 1-2-5 × 10ⁿ step at least `min_step`.
pub fn nice_step(min_step: f64) -> f64 {
    if !(min_step.is_finite() && min_step > 0.0) {
        return 1.0;
    }
    let p = 10f64.powf(min_step.log10().floor());
    for m in [1.0, 2.0, 5.0, 10.0] {
        if m * p >= min_step * (1.0 - 1e-9) {
            return m * p;
        }
    }
    10.0 * p
}

/// Major marks every `major` and minor ones every fifth of it, inside `bounds`.
pub fn marks(bounds: (f64, f64), major: f64) -> Vec<GridMark> {
    let (lo, hi) = (bounds.0.min(bounds.1), bounds.0.max(bounds.1));
    let minor = major / 5.0;
    let mut out = Vec::new();
    if !(minor > 0.0 && (hi - lo) / minor <= 10_000.0) {
        return out;
    }
    let mut k = (lo / minor).ceil() as i64;
    loop {
        let v = k as f64 * minor;
        if v > hi {
            break;
        }
        let is_major = (v / major - (v / major).round()).abs() < 1e-6;
        out.push(GridMark {
            value: if v.abs() < minor * 1e-6 { 0.0 } else { v },
            step_size: if is_major { major } else { minor },
        });
        k += 1;
    }
    out
}

/// Decimals that show a step exactly (0 for 5, 1 for 0.5, 2 for 0.02...).
pub fn decimals_for(step: f64) -> usize {
    let mut d = 0;
    while d < 9 {
        let scaled = step * 10f64.powi(d as i32);
        if (scaled.round() - scaled).abs() <= 1e-6 * scaled.abs().max(1.0) {
            break;
        }
        d += 1;
    }
    d
}

/// One axis: the major step its spacer chose this frame and the numbers its
/// formatter drew (tests read them through the views).
#[derive(Clone, Default)]
pub struct AxisTicks {
    major: Rc<Cell<f64>>,
    log: Rc<RefCell<Vec<String>>>,
}

impl AxisTicks {
    /// The numbers drawn on the last frame.
    pub fn labels(&self) -> Vec<String> {
        self.log.borrow().clone()
    }

    /// A grid spacer whose major step leaves at least `gap_pt` points between labels.
    fn spacer(&self, gap_pt: f32) -> impl Fn(GridInput) -> Vec<GridMark> + use<> {
        let major = Rc::clone(&self.major);
        move |input: GridInput| {
            let value_per_pt = input.base_step_size / f64::from(GRID_MIN_PT);
            let step = nice_step(value_per_pt * f64::from(gap_pt));
            major.set(step);
            marks(input.bounds, step)
        }
    }

    /// Major marks get a number with the step's decimals, minor marks none.
    fn formatter(&self) -> impl Fn(GridMark, &RangeInclusive<f64>) -> String + use<> {
        let major = Rc::clone(&self.major);
        let log = Rc::clone(&self.log);
        move |mark: GridMark, _range: &RangeInclusive<f64>| {
            let m = major.get();
            if (mark.step_size - m).abs() > 1e-9 * m.abs() {
                return String::new();
            }
            let mut text = format!("{:.*}", decimals_for(m), mark.value);
            if text.starts_with('-') && text[1..].chars().all(|c| c == '0' || c == '.') {
                text.remove(0);
            }
            log.borrow_mut().push(text.clone());
            text
        }
    }
}

/// Axis label spacing for egui_plot: labels closer than about half the gap
/// are hidden, so minor marks (a fifth of it) get grid lines only.
fn label_spacing(gap_pt: f32) -> egui::Rangef {
    egui::Rangef::new(gap_pt * 0.5, gap_pt * 0.6)
}

/// A plot with readable axes: 1-2-5 ticks with numbers on both axes and the
/// axis labels (with units); the numbers drawn are kept in `x` and `y`.
pub fn readable<'a>(
    plot: Plot<'a>,
    x_label: &str,
    y_label: &str,
    x: &AxisTicks,
    y: &AxisTicks,
) -> Plot<'a> {
    // A new frame's numbers (egui_plot asks the spacer twice: grid and axis).
    x.log.borrow_mut().clear();
    y.log.borrow_mut().clear();
    plot.custom_x_axes(vec![
        AxisHints::new_x()
            .label(x_label.to_string())
            .formatter(x.formatter())
            .label_spacing(label_spacing(X_LABEL_GAP_PT)),
    ])
    .custom_y_axes(vec![
        AxisHints::new_y()
            .label(y_label.to_string())
            .formatter(y.formatter())
            .label_spacing(label_spacing(Y_LABEL_GAP_PT)),
    ])
    .x_grid_spacer(x.spacer(X_LABEL_GAP_PT))
    .y_grid_spacer(y.spacer(Y_LABEL_GAP_PT))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn steps_are_one_two_five() {
        assert_eq!(nice_step(0.9), 1.0);
        assert_eq!(nice_step(1.1), 2.0);
        assert_eq!(nice_step(3.0), 5.0);
        assert_eq!(nice_step(7.0), 10.0);
        assert!((nice_step(0.013) - 0.02).abs() < 1e-12);
        assert_eq!(decimals_for(0.5), 1);
        assert_eq!(decimals_for(20.0), 0);
        assert_eq!(decimals_for(0.02), 2);
    }

    #[test]
    fn an_s_band_doppler_axis_gets_several_labelled_ticks() {
        // ±50 kHz on a 110 pt tall plot (S-band LEO Doppler is about ±50 kHz).
        let value_per_pt = 100.0 / 110.0;
        let step = nice_step(value_per_pt * f64::from(Y_LABEL_GAP_PT));
        let majors: Vec<f64> = marks((-50.0, 50.0), step)
            .into_iter()
            .filter(|m| m.step_size == step)
            .map(|m| m.value)
            .collect();
        assert!(majors.len() >= 4, "{majors:?}");
    }
}
