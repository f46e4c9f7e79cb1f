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
