//! Orbit summary from mean elements: Kepler's third law, vis-viva, energy.
//!
//! The semi-major axis comes from the mean motion alone (a = (μ/n²)^⅓ with the
//! WGS-72 μ that SGP4 uses); perigee and apogee altitudes are measured from the
//! WGS-72 equatorial radius. These are the usual "mean" figures an operator
//! quotes, not osculating values. The mean motion of an element set is the
//! Kozai form; SGP4 converts it to Brouwer's mean motion internally, so its own
//! semi-major axis differs from this one by up to a few km in LEO (a J2
//! effect of order J2·(R/a)²·a). [`SEMI_MAJOR_AXIS_NOTE`] says so where the
//! figure is shown.

use crate::constants::{EARTH_RADIUS_WGS72_KM, MU_WGS72_KM3_S2};

/// How the semi-major axis (and perigee/apogee altitudes from it) is made,
/// for outputs that show it.
pub const SEMI_MAJOR_AXIS_NOTE: &str = "Semi-major axis, perigee and apogee from the element set's \
(Kozai) mean motion by Kepler's third law; SGP4's internal (Brouwer) value differs by up to a few km.";
use crate::elements::ElementSet;
use crate::time::UtcTime;
use std::f64::consts::TAU;

/// Derived orbit figures for one element set.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct OrbitSummary {
    pub semi_major_axis_km: f64,
    pub period_min: f64,
    pub perigee_altitude_km: f64,
    pub apogee_altitude_km: f64,
    /// Specific orbital energy −μ/(2a), km²/s².
    pub specific_energy_km2_s2: f64,
    /// Vis-viva speed at perigee, km/s.
    pub perigee_speed_km_s: f64,
    /// Vis-viva speed at apogee, km/s.
    pub apogee_speed_km_s: f64,
    /// Escape speed √(2μ/r) at the perigee radius, km/s.
    pub escape_speed_at_perigee_km_s: f64,
}

/// Semi-major axis from mean motion by Kepler's third law, km.
pub fn semi_major_axis_km(mean_motion_rev_day: f64, mu_km3_s2: f64) -> f64 {
    let n_rad_s = mean_motion_rev_day * TAU / 86_400.0;
    (mu_km3_s2 / (n_rad_s * n_rad_s)).cbrt()
}

/// Vis-viva: speed at radius `r_km` on an orbit of semi-major axis `a_km`.
pub fn vis_viva_speed_km_s(r_km: f64, a_km: f64, mu_km3_s2: f64) -> f64 {
    (mu_km3_s2 * (2.0 / r_km - 1.0 / a_km)).max(0.0).sqrt()
}

impl OrbitSummary {
    pub fn of(set: &ElementSet) -> Self {
        let mu = MU_WGS72_KM3_S2;
        let a = semi_major_axis_km(set.mean_motion_rev_day, mu);
        let e = set.eccentricity;
        let rp = a * (1.0 - e);
        let ra = a * (1.0 + e);
        OrbitSummary {
            semi_major_axis_km: a,
            period_min: 1440.0 / set.mean_motion_rev_day,
            perigee_altitude_km: rp - EARTH_RADIUS_WGS72_KM,
            apogee_altitude_km: ra - EARTH_RADIUS_WGS72_KM,
            specific_energy_km2_s2: -mu / (2.0 * a),
            perigee_speed_km_s: vis_viva_speed_km_s(rp, a, mu),
            apogee_speed_km_s: vis_viva_speed_km_s(ra, a, mu),
            escape_speed_at_perigee_km_s: (2.0 * mu / rp).sqrt(),
        }
    }
}

/// Age of an element set at `at`, days (negative when `at` is before the epoch).
pub fn element_age_days(set: &ElementSet, at: UtcTime) -> f64 {
    at.s_since(set.epoch) / 86_400.0
}

/// Element sets whose epoch is more than this many days from the window are
/// flagged. Common practice: SGP4 element sets degrade by about 1–3 km a day
/// in LEO, so three days away the along-track error is already several km
/// (seconds on a contact's AOS, a whole screening volume on a miss distance).
pub const STALE_AFTER_DAYS: f64 = 3.0;

/// Beyond this many days from the window the command line refuses to compute
/// unless told to (`--allow-stale`). The value is this project's choice, not
/// a standard: at 1–3 km a day (common practice, above) a 30-day-old set is
/// tens of km off and the error grows faster than linearly with drag, past any
/// screening volume and any contact timing an operator could act on.
pub const REFUSE_AFTER_DAYS: f64 = 30.0;

/// Days from an epoch to the nearest instant of the window `[start, end]`
/// (0 when the epoch is inside it).
pub fn days_outside_window(epoch: UtcTime, start: UtcTime, end: UtcTime) -> f64 {
    if epoch < start {
        start.s_since(epoch) / 86_400.0
    } else if epoch > end {
        epoch.s_since(end) / 86_400.0
    } else {
        0.0
    }
}

/// How far a fleet entry's element set is from the window, days; `None` when
/// no instant of the window rests on the element set (an operator ephemeris
/// covers the whole window, so its epoch does not matter).
pub fn window_element_age_days(set: &ElementSet, start: UtcTime, end: UtcTime) -> Option<f64> {
    if let Some(src) = &set.ephemeris {
        let spans = src.ephemeris.spans();
        if spans.iter().any(|s| s.start <= start && end <= s.stop) {
            return None;
        }
    }
    Some(days_outside_window(set.epoch, start, end))
}

/// Age of the element set behind a result that rests on `set` over
/// `[start, end]`, taken at `at` (signed, days, as [`element_age_days`]);
/// `None` when an operator ephemeris covers the whole span, so no element set
/// is involved.
pub fn result_element_age_days(
    set: &ElementSet,
    start: UtcTime,
    end: UtcTime,
    at: UtcTime,
) -> Option<f64> {
    window_element_age_days(set, start, end).map(|_| element_age_days(set, at))
}

/// The entries of `sets` whose element set is more than [`STALE_AFTER_DAYS`]
/// from the window, with their distance in days, the farthest first.
pub fn stale_sets(sets: &[ElementSet], start: UtcTime, end: UtcTime) -> Vec<(&ElementSet, f64)> {
    let mut v: Vec<(&ElementSet, f64)> = sets
        .iter()
        .filter_map(|s| window_element_age_days(s, start, end).map(|d| (s, d)))
        .filter(|(_, d)| *d > STALE_AFTER_DAYS)
        .collect();
    v.sort_by(|a, b| b.1.total_cmp(&a.1));
    v
}

#[cfg(test)]
mod age_tests {
    use super::*;

    #[test]
    fn distance_to_the_window_is_zero_inside_and_counts_from_the_nearest_end() {
        let start = UtcTime::parse_iso("2026-12-01T00:00:00Z").unwrap();
        let end = UtcTime::parse_iso("2026-12-08T00:00:00Z").unwrap();
        let inside = UtcTime::parse_iso("2026-12-03T00:00:00Z").unwrap();
        let before = UtcTime::parse_iso("2026-11-21T00:00:00Z").unwrap();
        let after = UtcTime::parse_iso("2026-12-10T12:00:00Z").unwrap();
        assert_eq!(days_outside_window(inside, start, end), 0.0);
        assert!((days_outside_window(before, start, end) - 10.0).abs() < 1e-9);
        assert!((days_outside_window(after, start, end) - 2.5).abs() < 1e-9);
    }
}
