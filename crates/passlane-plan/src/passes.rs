//! Contact windows: every interval in which a satellite is above a station's
//! horizon, with the figures an operator plans a contact with.
//!
//! How the finder spends its SGP4 calls (the expensive part):
//! 1. Each satellite is propagated once, and its samples serve every station.
//! 2. While the satellite is far outside every station's visibility cone (the
//!    Earth central angle λ between station and satellite exceeds the cone's
//!    half-angle λmax for the orbit's highest radius and the station's lowest
//!    horizon), it jumps ahead by (λ − λmax) divided by an upper bound on how
//!    fast λ can shrink; it cannot miss a pass because λ cannot reach λmax sooner.
//! 3. Near a station it samples at a step chosen from the orbit (about 60 s in
//!    LEO), and in between it interpolates the Earth-fixed state with a cubic
//!    Hermite polynomial through position and velocity (sub-metre in LEO).
//! 4. Every local maximum of the horizon clearance among the samples is refined
//!    by a golden-section search, so a grazing pass shorter than a step is found;
//!    every sign change is refined to 0.1 ms by Brent's method.
//!
//! What it does not do: refraction (none unless the user raises the mask),
//! light-time (negligible in LEO), or antenna scheduling (see the planner).

use std::sync::atomic::{AtomicBool, Ordering};

use passlane_orbit::constants::{EARTH_RADIUS_WGS72_KM, MU_WGS72_KM3_S2, SPEED_OF_LIGHT_KM_S};
use passlane_orbit::frames::{Vec3, dot, norm, sub};
use passlane_orbit::{
    EarthFixed, EarthOrientation, ElementSet, Illumination, LookAngles, PropagationError,
    Propagator, Site, TemeToEarthFixed, UtcTime, shadow_state, sun_position_teme_km,
};
use rayon::prelude::*;
use serde::Serialize;

use crate::station::{LinkDirection, Station};

/// Settings of one pass search.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PassOptions {
    pub start: UtcTime,
    pub end: UtcTime,
    pub earth_orientation: EarthOrientation,
    /// When set, replaces every station's minimum elevation (the mask still applies).
    pub min_elevation_deg: Option<f64>,
}

impl PassOptions {
    pub fn new(start: UtcTime, end: UtcTime) -> Self {
        PassOptions {
            start,
            end,
            earth_orientation: EarthOrientation::default(),
            min_elevation_deg: None,
        }
    }
}

/// North- or southbound at maximum elevation.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum PassDirection {
    /// Moving north (the ascending half of the orbit).
    Ascending,
    /// Moving south.
    Descending,
}

/// The Sun's height at the station, in the usual bands (common practice:
/// civil, nautical and astronomical twilight end at −6°, −12°, −18°).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum SkyAtStation {
    Daylight,
    CivilTwilight,
    NauticalTwilight,
    AstronomicalTwilight,
    Night,
}

impl SkyAtStation {
    pub fn from_sun_elevation_deg(el: f64) -> Self {
        if el > -0.833 {
            SkyAtStation::Daylight
        } else if el > -6.0 {
            SkyAtStation::CivilTwilight
        } else if el > -12.0 {
            SkyAtStation::NauticalTwilight
        } else if el > -18.0 {
            SkyAtStation::AstronomicalTwilight
        } else {
            SkyAtStation::Night
        }
    }

    pub fn label(self) -> &'static str {
        match self {
            SkyAtStation::Daylight => "day",
            SkyAtStation::CivilTwilight => "civil",
            SkyAtStation::NauticalTwilight => "nautical",
            SkyAtStation::AstronomicalTwilight => "astro",
            SkyAtStation::Night => "night",
        }
    }
}

/// Doppler figures of one channel over one pass.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ChannelDoppler {
    pub channel: String,
    pub direction: LinkDirection,
    pub frequency_hz: f64,
    /// Shift −f·ṙ/c seen on the link at AOS, Hz (positive while approaching).
    pub aos_shift_hz: f64,
    pub los_shift_hz: f64,
    /// Largest |d(shift)/dt| over the pass, Hz/s (at closest approach).
    pub max_rate_hz_s: f64,
}

/// A stretch of one illumination state within a pass.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct IlluminationSpan {
    pub state: Illumination,
    pub start: UtcTime,
    pub end: UtcTime,
}

/// The mount cannot follow part of the pass.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct MountWarning {
    /// Which axis: "azimuth" or "elevation".
    pub axis: String,
    pub start: UtcTime,
    pub end: UtcTime,
    pub required_rate_deg_s: f64,
    pub limit_deg_s: f64,
    /// required − limit, deg/s.
    pub excess_deg_s: f64,
}

/// One contact window of one satellite over one station.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Pass {
    pub satellite: String,
    pub catalog_number: u32,
    pub station: String,
    pub aos: UtcTime,
    pub max_elevation_time: UtcTime,
    pub los: UtcTime,
    pub max_elevation_deg: f64,
    pub aos_azimuth_deg: f64,
    pub max_elevation_azimuth_deg: f64,
    pub los_azimuth_deg: f64,
    pub duration_s: f64,
    /// The pass was already in progress at the window start (AOS is the start).
    pub aos_clipped: bool,
    /// The pass was still in progress at the window end (LOS is the end).
    pub los_clipped: bool,
    pub min_range_km: f64,
    pub direction: PassDirection,
    pub sun_elevation_deg: f64,
    pub sky: SkyAtStation,
    pub doppler: Vec<ChannelDoppler>,
    pub illumination: Vec<IlluminationSpan>,
    pub mount_warnings: Vec<MountWarning>,
}

/// A satellite that could not be searched to the end.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SatelliteFailure {
    pub satellite: String,
    pub catalog_number: u32,
    pub message: String,
}

/// Everything a pass search found.
#[derive(Debug, Clone, Default, Serialize)]
pub struct PassReport {
    /// Sorted by AOS, then station, then satellite.
    pub passes: Vec<Pass>,
    pub failures: Vec<SatelliteFailure>,
    /// Set when the search was cancelled: the report holds what was done.
    pub cancelled: bool,
}

/// Progress reporting and cancellation for long searches.
pub trait Progress: Sync {
    /// Called with the fraction done (0–1).
    fn report(&self, _fraction: f64) {}
    fn cancelled(&self) -> bool {
        false
    }
}

/// No progress reporting, never cancelled.
pub struct Silent;
impl Progress for Silent {}

/// A cancel flag usable from another thread.
impl Progress for AtomicBool {
    fn cancelled(&self) -> bool {
        self.load(Ordering::Relaxed)
    }
}

/// Finds every pass of every satellite over every station in the window.
pub fn find_passes(
    sets: &[ElementSet],
    stations: &[Station],
    options: &PassOptions,
    progress: &dyn Progress,
) -> PassReport {
    let prepared: Vec<PreparedStation> = stations
        .iter()
        .map(|s| PreparedStation::new(s, options.min_elevation_deg))
        .collect();
    let done = std::sync::atomic::AtomicUsize::new(0);
    let total = sets.len().max(1);
    let one = |set: &ElementSet| {
        if progress.cancelled() {
            return (Vec::new(), None);
        }
        let out = passes_of_satellite(set, &prepared, options);
        let n = done.fetch_add(1, Ordering::Relaxed) + 1;
        progress.report(n as f64 / total as f64);
        out
    };
    // A handful of satellites finish in milliseconds: starting worker threads
    // (which spin while they wait) would cost more CPU than it saves.
    let results: Vec<(Vec<Pass>, Option<SatelliteFailure>)> = if sets.len() < 12 {
        sets.iter().map(one).collect()
    } else {
        sets.par_iter().map(one).collect()
    };
    let mut report = PassReport {
        cancelled: progress.cancelled(),
        ..PassReport::default()
    };
    for (passes, failure) in results {
        report.passes.extend(passes);
        report.failures.extend(failure);
    }
    report.passes.sort_by(|a, b| {
        a.aos
            .s_since_j2000()
            .total_cmp(&b.aos.s_since_j2000())
            .then_with(|| a.station.cmp(&b.station))
            .then_with(|| a.catalog_number.cmp(&b.catalog_number))
    });
    report
}

/// A station with what the finder needs precomputed.
struct PreparedStation {
    station: Station,
    site: Site,
    /// Unit vector of the site's geocentric position.
    up_geocentric: Vec3,
    site_radius_km: f64,
    lowest_horizon_deg: f64,
    has_mask: bool,
    sin_min_elevation: f64,
}

impl PreparedStation {
    fn new(station: &Station, min_elevation_override: Option<f64>) -> Self {
        let mut station = station.clone();
        if let Some(m) = min_elevation_override {
            station.min_elevation_deg = m;
        }
        station.normalise();
        let site = station.site();
        let r = norm(&site.position_km);
        PreparedStation {
            up_geocentric: [
                site.position_km[0] / r,
                site.position_km[1] / r,
                site.position_km[2] / r,
            ],
            site_radius_km: r,
            lowest_horizon_deg: station.lowest_horizon_deg(),
            has_mask: !station.horizon_mask.is_empty(),
            sin_min_elevation: station.min_elevation_deg.to_radians().sin(),
            site,
            station,
        }
    }

    /// Half-angle of the visibility cone (Earth central angle) for a satellite at
    /// radius `r_km`, with the lowest horizon, padded by 0.5° for the difference
    /// between geodetic and geocentric verticals.
    fn cone_half_angle_rad(&self, r_km: f64) -> f64 {
        let e = self.lowest_horizon_deg.to_radians();
        let x = (self.site_radius_km / r_km * e.cos()).clamp(-1.0, 1.0);
        x.acos() - e + 0.5_f64.to_radians()
    }

    /// Signed clearance above the horizon, as sin(el) − sin(horizon(az)): the
    /// same sign and the same roots as el − horizon, cheaper without a mask.
    fn clearance(&self, r_ecef: &Vec3) -> f64 {
        let d = sub(r_ecef, &self.site.position_km);
        let [e, n, u] = self.site.to_enu(&d);
        let sin_el = u / norm(&d);
        if !self.has_mask {
            return sin_el - self.sin_min_elevation;
        }
        let az = e.atan2(n).to_degrees().rem_euclid(360.0);
        sin_el - self.station.horizon_deg(az).to_radians().sin()
    }

    /// Cosine of the Earth central angle between the station and a position.
    fn cos_central_angle(&self, r_ecef: &Vec3) -> f64 {
        (dot(&self.up_geocentric, r_ecef) / norm(r_ecef)).clamp(-1.0, 1.0)
    }
}

/// Earth-fixed samples of one satellite with Hermite interpolation between them.
struct Track {
    times_s: Vec<f64>,
    states: Vec<EarthFixed>,
    t0: UtcTime,
}

impl Track {
    fn new(t0: UtcTime) -> Self {
        Track {
            times_s: Vec::new(),
            states: Vec::new(),
            t0,
        }
    }

    fn clear(&mut self) {
        self.times_s.clear();
        self.states.clear();
    }

    fn push(&mut self, t: UtcTime, s: EarthFixed) {
        self.times_s.push(t.s_since(self.t0));
        self.states.push(s);
    }

    fn time(&self, i: usize) -> f64 {
        self.times_s[i]
    }

    /// Interpolated Earth-fixed state at `t_s` (seconds since `t0`), clamped to the track.
    fn at(&self, t_s: f64) -> EarthFixed {
        let n = self.times_s.len();
        let i = match self.times_s.partition_point(|&x| x <= t_s) {
            0 => 0,
            k if k >= n => n.saturating_sub(2),
            k => k - 1,
        };
        let j = (i + 1).min(n - 1);
        if i == j {
            return self.states[i];
        }
        hermite(
            self.times_s[i],
            &self.states[i],
            self.times_s[j],
            &self.states[j],
            t_s,
        )
    }
}

/// Cubic Hermite interpolation of an Earth-fixed state between two samples.
fn hermite(t0: f64, s0: &EarthFixed, t1: f64, s1: &EarthFixed, t: f64) -> EarthFixed {
    let h = t1 - t0;
    let (position_km, velocity_km_s) = passlane_orbit::interpolate::hermite(
        &s0.position_km,
        &s0.velocity_km_s,
        &s1.position_km,
        &s1.velocity_km_s,
        h,
        (t - t0) / h,
    );
    EarthFixed {
        position_km,
        velocity_km_s,
    }
}

/// Orbit-derived search parameters.
struct OrbitBounds {
    /// Sampling step near stations, s.
    step_s: f64,
    /// Largest radius the satellite can reach, km (padded).
    max_radius_km: f64,
    /// Upper bound on the rate of change of the central angle to any station, rad/s.
    max_angle_rate_rad_s: f64,
}

impl OrbitBounds {
    fn of(set: &ElementSet, window_days: f64) -> Self {
        let n_rad_s = set.mean_motion_rev_day * std::f64::consts::TAU / 86_400.0;
        let a = (MU_WGS72_KM3_S2 / (n_rad_s * n_rad_s)).cbrt();
        let e = set.eccentricity;
        // SGP4's osculating radius wanders from the mean elements' perigee and
        // apogee by ~10 km in LEO (short-period J2 terms); pad by 30 km plus
        // 0.5 % of a. Drag lowers the orbit over the window: with the element
        // set's dn/dt, Δa/a = −⅔·Δn/n (Kepler's third law). Padding matters in
        // both directions: a higher apogee widens the visibility cone, a lower
        // perigee raises the angular-rate bound.
        let pad_km = 30.0 + 0.005 * a;
        // The window may start well after epoch: allow a month more of decay.
        let days = window_days.abs() + 30.0;
        let decay_km = a * (2.0 / 3.0) * (2.0 * set.mean_motion_dot_rev_day2.abs() * days)
            / set.mean_motion_rev_day;
        let rp = (a * (1.0 - e) - pad_km - decay_km).max(EARTH_RADIUS_WGS72_KM);
        let ra = a * (1.0 + e) + pad_km;
        let vp = (MU_WGS72_KM3_S2 * (2.0 / rp - 1.0 / a).max(0.0)).sqrt();
        // Sub-satellite point angular speed ≤ |v_earth_fixed| / r ≤ v/r + ω_E, and
        // v/r is largest at perigee (with the padded perigee radius above);
        // 5 % more for the rest of SGP4's wobble.
        let max_rate = (vp / rp + passlane_orbit::constants::EARTH_ROTATION_RAD_S) * 1.05;
        // Hermite error ≈ Δt⁴/384·ω⁴·r: 60 s at ω = 1.1e-3 rad/s is ~0.3 m; keep
        // the same ω·Δt product for faster or slower orbits.
        let omega_p = vp / rp;
        let step_s = (60.0 * 1.15e-3 / omega_p).clamp(10.0, 600.0);
        OrbitBounds {
            step_s,
            max_radius_km: ra,
            max_angle_rate_rad_s: max_rate,
        }
    }
}

fn passes_of_satellite(
    set: &ElementSet,
    stations: &[PreparedStation],
    options: &PassOptions,
) -> (Vec<Pass>, Option<SatelliteFailure>) {
    let failure = |e: PropagationError| SatelliteFailure {
        satellite: set.name.clone(),
        catalog_number: set.catalog_number,
        message: e.to_string(),
    };
    let prop = match Propagator::new(set) {
        Ok(p) => p,
        Err(e) => return (Vec::new(), Some(failure(e))),
    };
    let mut passes = Vec::new();
    if stations.is_empty() || options.end <= options.start {
        return (passes, None);
    }
    let bounds = OrbitBounds::of(set, options.end.s_since(options.start) / 86_400.0);
    let cones: Vec<f64> = stations
        .iter()
        .map(|s| s.cone_half_angle_rad(bounds.max_radius_km))
        .collect();
    // "Near" a station: inside its cone widened by one step of travel. Compared
    // as cosines so that the common case needs no acos.
    let near = bounds.max_angle_rate_rad_s * bounds.step_s;
    let cos_near: Vec<f64> = cones
        .iter()
        .map(|c| (c + near).min(std::f64::consts::PI).cos())
        .collect();
    let eop = options.earth_orientation;
    let mut cursor = prop.cursor();
    let mut track = Track::new(options.start);
    let total_s = options.end.s_since(options.start);
    let h = bounds.step_s;
    let mut t_s = 0.0_f64;
    let mut in_segment = false;
    let mut fail = None;
    loop {
        let t = options.start.add_s(t_s);
        let teme = match cursor.state_at(t) {
            Ok(s) => s,
            Err(e) => {
                fail = Some(failure(e));
                break;
            }
        };
        let ecef = TemeToEarthFixed::at(t, &eop).state(&teme.position_km, &teme.velocity_km_s);
        let cosines: Vec<f64> = stations
            .iter()
            .map(|s| s.cos_central_angle(&ecef.position_km))
            .collect();
        let far = cosines.iter().zip(&cos_near).all(|(c, cn)| c < cn);
        let at_end = t_s >= total_s;
        if far && !at_end {
            let margin = cosines
                .iter()
                .zip(&cones)
                .map(|(c, cone)| c.acos() - cone)
                .fold(f64::INFINITY, f64::min);
            if in_segment {
                track.push(t, ecef);
                scan_segment(set, stations, &track, &bounds, options, &mut passes);
                track.clear();
                in_segment = false;
            }
            // Cannot come within the cone sooner than margin / max rate.
            t_s = (t_s + (margin / bounds.max_angle_rate_rad_s).max(h)).min(total_s);
        } else {
            in_segment = true;
            track.push(t, ecef);
            if at_end {
                break;
            }
            t_s = (t_s + h).min(total_s);
        }
    }
    if in_segment && track.times_s.len() >= 2 {
        scan_segment(set, stations, &track, &bounds, options, &mut passes);
    }
    (passes, fail)
}

/// Finds the passes inside one stretch of dense samples, for every station.
fn scan_segment(
    set: &ElementSet,
    stations: &[PreparedStation],
    track: &Track,
    bounds: &OrbitBounds,
    options: &PassOptions,
    passes: &mut Vec<Pass>,
) {
    let n = track.times_s.len();
    if n < 2 {
        return;
    }
    let total_s = options.end.s_since(options.start);
    for st in stations {
        let cone = st.cone_half_angle_rad(bounds.max_radius_km);
        // Between two samples the central angle can shrink by at most
        // rate × step; a station every sample of which stays farther than that
        // outside its cone cannot see the satellite anywhere in the segment.
        let reach = bounds.max_angle_rate_rad_s * bounds.step_s;
        let cos_reach = (cone + reach).min(std::f64::consts::PI).cos();
        let reachable_at: Vec<bool> = track
            .states
            .iter()
            .map(|s| st.cos_central_angle(&s.position_km) >= cos_reach)
            .collect();
        if !reachable_at.iter().any(|&r| r) {
            continue;
        }
        let f: Vec<f64> = track
            .states
            .iter()
            .map(|s| st.clearance(&s.position_km))
            .collect();
        // Points where the clearance is known: samples plus refined extrema.
        let mut points: Vec<(f64, f64)> = (0..n).map(|i| (track.time(i), f[i])).collect();
        for i in 1..n - 1 {
            let is_max = f[i] >= f[i - 1] && f[i] >= f[i + 1];
            let is_min = f[i] <= f[i - 1] && f[i] <= f[i + 1];
            let reachable = reachable_at[i - 1] || reachable_at[i] || reachable_at[i + 1];
            if is_max && f[i] <= 0.0 && reachable {
                let (t, v) = golden_extremum(
                    |t| st.clearance(&track.at(t).position_km),
                    track.time(i - 1),
                    track.time(i + 1),
                    true,
                );
                if v > 0.0 {
                    points.push((t, v));
                }
            } else if is_min && f[i] >= 0.0 {
                let (t, v) = golden_extremum(
                    |t| st.clearance(&track.at(t).position_km),
                    track.time(i - 1),
                    track.time(i + 1),
                    false,
                );
                if v < 0.0 {
                    points.push((t, v));
                }
            }
        }
        points.sort_by(|a, b| a.0.total_cmp(&b.0));
        let clearance_at = |t: f64| st.clearance(&track.at(t).position_km);
        let mut open: Option<(f64, bool)> = if points[0].1 > 0.0 {
            // Above the horizon at the first sample: only possible at the window start.
            Some((points[0].0, points[0].0 <= 1e-9))
        } else {
            None
        };
        for w in points.windows(2) {
            let ((ta, fa), (tb, fb)) = (w[0], w[1]);
            if fa <= 0.0 && fb > 0.0 {
                let t = brent_root(clearance_at, ta, tb, fa, fb, 1e-4);
                open = Some((t, false));
            } else if fa > 0.0 && fb <= 0.0 {
                let t = brent_root(clearance_at, ta, tb, fa, fb, 1e-4);
                if let Some((aos, clipped)) = open.take() {
                    passes.push(describe_pass(
                        set, st, track, options, aos, t, clipped, false,
                    ));
                }
            }
        }
        if let Some((aos, clipped)) = open {
            let last = points[points.len() - 1].0;
            let los_clipped = last >= total_s - 1e-9;
            passes.push(describe_pass(
                set,
                st,
                track,
                options,
                aos,
                last,
                clipped,
                los_clipped,
            ));
        }
    }
}

#[allow(clippy::too_many_arguments)]
fn describe_pass(
    set: &ElementSet,
    st: &PreparedStation,
    track: &Track,
    options: &PassOptions,
    aos_s: f64,
    los_s: f64,
    aos_clipped: bool,
    los_clipped: bool,
) -> Pass {
    let t0 = options.start;
    let look = |t_s: f64| st.site.look(&track.at(t_s));
    let (tmax_s, _) = golden_extremum(
        |t| st.site.sin_elevation(&track.at(t).position_km),
        aos_s,
        los_s,
        true,
    );
    let (tmin_range_s, min_range_km) = golden_extremum(
        |t| norm(&sub(&track.at(t).position_km, &st.site.position_km)),
        aos_s,
        los_s,
        false,
    );
    let at_aos = look(aos_s);
    let at_max = look(tmax_s);
    let at_los = look(los_s);
    // The Earth-fixed velocity's north component tells north- or southbound.
    let v_max = track.at(tmax_s);
    let northbound = {
        let r = &v_max.position_km;
        let v = &v_max.velocity_km_s;
        // d(latitude)/dt has the sign of v_z·ρ² − z·(r·v) (ρ = equatorial distance).
        let rho2 = r[0] * r[0] + r[1] * r[1];
        v[2] * rho2 - r[2] * (r[0] * v[0] + r[1] * v[1]) > 0.0
    };
    let tmax = t0.add_s(tmax_s);
    let eop = options.earth_orientation;
    let rot = TemeToEarthFixed::at(tmax, &eop);
    let sun_teme = sun_position_teme_km(tmax);
    let sun_ecef = rot.position(&sun_teme);
    let sun_el = st
        .site
        .look(&EarthFixed {
            position_km: sun_ecef,
            velocity_km_s: [0.0; 3],
        })
        .elevation_deg;
    // Range acceleration at closest approach gives the largest Doppler rate.
    let dt = 0.5;
    let rr = |t: f64| look(t).range_rate_km_s;
    let lo = (tmin_range_s - dt).max(aos_s);
    let hi = (tmin_range_s + dt).min(los_s);
    let range_accel = if hi > lo {
        (rr(hi) - rr(lo)) / (hi - lo)
    } else {
        0.0
    };
    let doppler = st
        .station
        .channels
        .iter()
        .map(|c| ChannelDoppler {
            channel: c.name.clone(),
            direction: c.direction,
            frequency_hz: c.frequency_hz,
            aos_shift_hz: doppler_shift_hz(c.frequency_hz, at_aos.range_rate_km_s),
            los_shift_hz: doppler_shift_hz(c.frequency_hz, at_los.range_rate_km_s),
            max_rate_hz_s: (c.frequency_hz * range_accel / SPEED_OF_LIGHT_KM_S).abs(),
        })
        .collect();
    let illumination = illumination_spans(track, t0, aos_s, los_s, &eop);
    let mount_warnings = match &st.station.mount {
        Some(m) => {
            // Azimuth and elevation rates from the Earth-fixed state, exactly
            // (d/dt of atan2(e, n) and asin(u/ρ)), in deg/s.
            let rates = |t_s: f64| -> (f64, f64) {
                let s = track.at(t_s);
                let d = sub(&s.position_km, &st.site.position_km);
                let [e, n, u] = st.site.to_enu(&d);
                let [de, dn, du] = st.site.to_enu(&s.velocity_km_s);
                let h2 = (e * e + n * n).max(1e-12);
                let r2 = h2 + u * u;
                let az_rate = (de * n - e * dn) / h2;
                let el_rate = (du * r2 - u * (e * de + n * dn + u * du)) / (r2 * h2.sqrt());
                (az_rate.abs().to_degrees(), el_rate.abs().to_degrees())
            };
            mount_warnings(&rates, aos_s, los_s, tmax_s, tmin_range_s, t0, m)
        }
        None => Vec::new(),
    };
    Pass {
        satellite: set.name.clone(),
        catalog_number: set.catalog_number,
        station: st.station.name.clone(),
        aos: t0.add_s(aos_s),
        max_elevation_time: tmax,
        los: t0.add_s(los_s),
        max_elevation_deg: at_max.elevation_deg,
        aos_azimuth_deg: at_aos.azimuth_deg,
        max_elevation_azimuth_deg: at_max.azimuth_deg,
        los_azimuth_deg: at_los.azimuth_deg,
        duration_s: los_s - aos_s,
        aos_clipped,
        los_clipped,
        min_range_km,
        direction: if northbound {
            PassDirection::Ascending
        } else {
            PassDirection::Descending
        },
        sun_elevation_deg: sun_el,
        sky: SkyAtStation::from_sun_elevation_deg(sun_el),
        doppler,
        illumination,
        mount_warnings,
    }
}

/// Doppler shift of a link at rest frequency `f_hz` for range-rate `rr`:
/// −f·ṙ/c (first order; the second-order term is below 1e-9·f in LEO).
pub fn doppler_shift_hz(f_hz: f64, range_rate_km_s: f64) -> f64 {
    -f_hz * range_rate_km_s / SPEED_OF_LIGHT_KM_S
}

/// Frequency the station should use on a channel: a receiver tunes to the
/// shifted downlink; a transmitter pre-compensates the uplink so that the
/// spacecraft hears the rest frequency.
pub fn tuned_frequency_hz(f_hz: f64, direction: LinkDirection, range_rate_km_s: f64) -> f64 {
    let shift = doppler_shift_hz(f_hz, range_rate_km_s);
    match direction {
        LinkDirection::Downlink => f_hz + shift,
        LinkDirection::Uplink => f_hz - shift,
    }
}

/// Sunlit/penumbra/umbra stretches over [aos, los], from the interpolated
/// track every 20 s with each transition bisected to 10 ms; the scan resumes
/// from each transition, so a penumbra shorter than the step is still found
/// on the way into or out of the umbra. (A brush with the penumbra that starts
/// and ends between two samples is not: the shadow's edge is ~10 s wide.) The Sun's
/// direction is fixed over a pass (it moves 0.007° per 10 minutes) but is
/// rotated into the Earth-fixed frame at each sample.
fn illumination_spans(
    track: &Track,
    t0: UtcTime,
    aos_s: f64,
    los_s: f64,
    eop: &EarthOrientation,
) -> Vec<IlluminationSpan> {
    let sun_teme = sun_position_teme_km(t0.add_s(0.5 * (aos_s + los_s)));
    // The Sun turns with the Earth-fixed frame by ~2.5° per 10 minutes; a
    // straight blend of its directions at AOS and LOS is within 0.02° of it
    // over a LEO pass (the shadow's edge is half a degree wide).
    let sun_a = TemeToEarthFixed::at(t0.add_s(aos_s), eop).position(&sun_teme);
    let sun_b = TemeToEarthFixed::at(t0.add_s(los_s), eop).position(&sun_teme);
    let span = (los_s - aos_s).max(1e-9);
    let state_at = |t_s: f64| -> Illumination {
        let u = ((t_s - aos_s) / span).clamp(0.0, 1.0);
        let sun = [
            sun_a[0] + u * (sun_b[0] - sun_a[0]),
            sun_a[1] + u * (sun_b[1] - sun_a[1]),
            sun_a[2] + u * (sun_b[2] - sun_a[2]),
        ];
        shadow_state(&track.at(t_s).position_km, &sun)
    };
    let mut spans = Vec::new();
    let mut current = state_at(aos_s);
    let mut span_start = aos_s;
    let step = 20.0;
    let mut prev_t = aos_s;
    loop {
        let t_s = (prev_t + step).min(los_s);
        let s = state_at(t_s);
        if s != current {
            let (mut lo, mut hi) = (prev_t, t_s);
            while hi - lo > 0.01 {
                let mid = 0.5 * (lo + hi);
                if state_at(mid) == current {
                    lo = mid;
                } else {
                    hi = mid;
                }
            }
            spans.push(IlluminationSpan {
                state: current,
                start: t0.add_s(span_start),
                end: t0.add_s(hi),
            });
            span_start = hi;
            current = state_at(hi);
            prev_t = hi;
            continue;
        }
        prev_t = t_s;
        if t_s >= los_s {
            break;
        }
    }
    spans.push(IlluminationSpan {
        state: current,
        start: t0.add_s(span_start),
        end: t0.add_s(los_s),
    });
    spans
}

/// Where the pass needs more azimuth or elevation rate than the mount has.
/// Rates are checked every 5 s and at culmination (where the azimuth rate
/// peaks); wherever a rate comes within half of its limit, that stretch is
/// re-checked every 0.5 s.
fn mount_warnings(
    rates: &dyn Fn(f64) -> (f64, f64),
    aos_s: f64,
    los_s: f64,
    tmax_s: f64,
    tmin_range_s: f64,
    t0: UtcTime,
    limits: &crate::station::MountLimits,
) -> Vec<MountWarning> {
    // The azimuth rate peaks at culmination and the elevation rate near
    // closest approach; a pass well inside both limits there needs no scan.
    let (az_peak, _) = rates(tmax_s);
    let (_, el_near) = rates(tmin_range_s);
    if az_peak < 0.5 * limits.max_azimuth_rate_deg_s
        && el_near < 0.5 * limits.max_elevation_rate_deg_s
    {
        return Vec::new();
    }
    let limit = [
        limits.max_azimuth_rate_deg_s,
        limits.max_elevation_rate_deg_s,
    ];
    // Coarse scan: which 5 s cells need a closer look?
    let mut coarse: Vec<f64> = Vec::new();
    let mut t = aos_s;
    while t < los_s {
        coarse.push(t);
        t += 5.0;
    }
    coarse.push(los_s);
    let mut hot = vec![false; coarse.len()];
    for (k, &tc) in coarse.iter().enumerate() {
        let (az, el) = rates(tc);
        if az > 0.5 * limit[0] || el > 0.5 * limit[1] {
            hot[k] = true;
        }
    }
    let (az, el) = rates(tmax_s);
    if az > 0.5 * limit[0] || el > 0.5 * limit[1] {
        let k = coarse.partition_point(|&c| c <= tmax_s).saturating_sub(1);
        hot[k] = true;
    }
    let mut out = Vec::new();
    for (axis_index, axis) in ["azimuth", "elevation"].into_iter().enumerate() {
        let mut open: Option<(f64, f64)> = None; // (start, peak)
        let close = |open: &mut Option<(f64, f64)>, end: f64, out: &mut Vec<MountWarning>| {
            if let Some((s, p)) = open.take() {
                out.push(MountWarning {
                    axis: axis.to_string(),
                    start: t0.add_s(s),
                    end: t0.add_s(end),
                    required_rate_deg_s: p,
                    limit_deg_s: limit[axis_index],
                    excess_deg_s: p - limit[axis_index],
                });
            }
        };
        for k in 0..coarse.len() {
            // A hot cell and its neighbours are scanned finely.
            let near_hot = hot[k] || (k > 0 && hot[k - 1]) || (k + 1 < hot.len() && hot[k + 1]);
            if !near_hot {
                close(&mut open, coarse[k], &mut out);
                continue;
            }
            let end = coarse.get(k + 1).copied().unwrap_or(los_s);
            let mut tf = coarse[k];
            while tf < end {
                let r = rates(tf);
                let rate = if axis_index == 0 { r.0 } else { r.1 };
                if rate > limit[axis_index] {
                    open = Some(match open {
                        None => (tf, rate),
                        Some((s0, p)) => (s0, p.max(rate)),
                    });
                } else {
                    close(&mut open, tf, &mut out);
                }
                tf += 0.5;
            }
        }
        close(&mut open, los_s, &mut out);
    }
    out
}

/// Extremum of a unimodal function on [a, b] to about 1 ms, by Brent's
/// method (golden section with parabolic steps; Brent 1973, "Algorithms for
/// Minimization without Derivatives", ch. 5). Returns (argument, value); the
/// ends are considered too, as a clipped pass can peak on one.
pub(crate) fn golden_extremum(
    f: impl Fn(f64) -> f64,
    a: f64,
    b: f64,
    maximise: bool,
) -> (f64, f64) {
    let sign = if maximise { -1.0 } else { 1.0 };
    let g = |t: f64| sign * f(t);
    const CGOLD: f64 = 0.381_966_011_250_105_1;
    let tol = 5e-4;
    let (mut a, mut b) = (a.min(b), a.max(b));
    let (lo, hi) = (a, b);
    let mut x = a + CGOLD * (b - a);
    let (mut w, mut v) = (x, x);
    let mut fx = g(x);
    let (mut fw, mut fv) = (fx, fx);
    let mut d: f64 = 0.0;
    let mut e: f64 = 0.0;
    for _ in 0..100 {
        let xm = 0.5 * (a + b);
        let tol1 = tol + 1e-12 * x.abs();
        let tol2 = 2.0 * tol1;
        if (x - xm).abs() <= tol2 - 0.5 * (b - a) {
            break;
        }
        let mut golden = true;
        if e.abs() > tol1 {
            // Parabola through x, w, v.
            let r = (x - w) * (fx - fv);
            let mut q = (x - v) * (fx - fw);
            let mut p = (x - v) * q - (x - w) * r;
            q = 2.0 * (q - r);
            if q > 0.0 {
                p = -p;
            }
            q = q.abs();
            let e_old = e;
            if p.abs() < (0.5 * q * e_old).abs() && p > q * (a - x) && p < q * (b - x) {
                e = d;
                d = p / q;
                let u = x + d;
                if u - a < tol2 || b - u < tol2 {
                    d = if xm >= x { tol1 } else { -tol1 };
                }
                golden = false;
            }
        }
        if golden {
            e = if x >= xm { a - x } else { b - x };
            d = CGOLD * e;
        }
        let u = if d.abs() >= tol1 {
            x + d
        } else {
            x + tol1.copysign(d)
        };
        let fu = g(u);
        if fu <= fx {
            if u >= x {
                a = x;
            } else {
                b = x;
            }
            v = w;
            fv = fw;
            w = x;
            fw = fx;
            x = u;
            fx = fu;
        } else {
            if u < x {
                a = u;
            } else {
                b = u;
            }
            if fu <= fw || w == x {
                v = w;
                fv = fw;
                w = u;
                fw = fu;
            } else if fu <= fv || v == x || v == w {
                v = u;
                fv = fu;
            }
        }
    }
    let mut best = (x, fx);
    for t in [lo, hi] {
        let val = g(t);
        if val < best.1 {
            best = (t, val);
        }
    }
    (best.0, sign * best.1)
}

/// Brent's root finder on [a, b] with f(a)·f(b) ≤ 0, to `tol` in the argument.
pub(crate) fn brent_root(
    f: impl Fn(f64) -> f64,
    mut a: f64,
    mut b: f64,
    mut fa: f64,
    mut fb: f64,
    tol: f64,
) -> f64 {
    if fa == 0.0 {
        return a;
    }
    if fb == 0.0 {
        return b;
    }
    if fa.abs() < fb.abs() {
        std::mem::swap(&mut a, &mut b);
        std::mem::swap(&mut fa, &mut fb);
    }
    let mut c = a;
    let mut fc = fa;
    let mut mflag = true;
    let mut d = 0.0;
    for _ in 0..100 {
        if fb == 0.0 || (b - a).abs() < tol {
            return b;
        }
        let mut s = if fa != fc && fb != fc {
            a * fb * fc / ((fa - fb) * (fa - fc))
                + b * fa * fc / ((fb - fa) * (fb - fc))
                + c * fa * fb / ((fc - fa) * (fc - fb))
        } else {
            b - fb * (b - a) / (fb - fa)
        };
        let q = (3.0 * a + b) / 4.0;
        let between = if q < b {
            s > q && s < b
        } else {
            s > b && s < q
        };
        if !between
            || (mflag && (s - b).abs() >= (b - c).abs() / 2.0)
            || (!mflag && (s - b).abs() >= (c - d).abs() / 2.0)
            || (mflag && (b - c).abs() < tol)
            || (!mflag && (c - d).abs() < tol)
        {
            s = 0.5 * (a + b);
            mflag = true;
        } else {
            mflag = false;
        }
        let fs = f(s);
        d = c;
        c = b;
        fc = fb;
        if fa * fs < 0.0 {
            b = s;
            fb = fs;
        } else {
            a = s;
            fa = fs;
        }
        if fa.abs() < fb.abs() {
            std::mem::swap(&mut a, &mut b);
            std::mem::swap(&mut fa, &mut fb);
        }
    }
    b
}

/// One row of a pointing table.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PointingRow {
    pub time: UtcTime,
    pub azimuth_deg: f64,
    pub elevation_deg: f64,
    pub range_km: f64,
    pub range_rate_km_s: f64,
    /// Doppler-corrected frequency per channel, Hz, in the station's channel order.
    pub frequencies_hz: Vec<f64>,
}

/// The pointing table of one pass at `step_s`, from direct SGP4 states (not
/// the interpolant); the first row is at AOS and the last at LOS exactly.
pub fn pointing_table(
    set: &ElementSet,
    station: &Station,
    pass: &Pass,
    step_s: f64,
    eop: &EarthOrientation,
) -> Result<Vec<PointingRow>, PropagationError> {
    pointing_table_between(set, station, pass.aos, pass.los, step_s, eop)
}

/// The pointing table between two times (e.g. the usable part of a pass that
/// the network plan kept), first row at `start`, last at `end` exactly.
pub fn pointing_table_between(
    set: &ElementSet,
    station: &Station,
    start: UtcTime,
    end: UtcTime,
    step_s: f64,
    eop: &EarthOrientation,
) -> Result<Vec<PointingRow>, PropagationError> {
    let prop = Propagator::new(set)?;
    let site = station.site();
    let step_s = if step_s.is_finite() && step_s > 0.0 {
        step_s
    } else {
        1.0
    };
    let duration = end.s_since(start);
    let mut times: Vec<UtcTime> = Vec::new();
    let mut k = 0usize;
    loop {
        let dt = k as f64 * step_s;
        if dt >= duration - 1e-6 {
            break;
        }
        times.push(start.add_s(dt));
        k += 1;
    }
    times.push(end);
    let mut cursor = prop.cursor();
    times
        .into_iter()
        .map(|t| {
            let s = cursor.state_at(t)?;
            let ef = TemeToEarthFixed::at(t, eop).state(&s.position_km, &s.velocity_km_s);
            let l = site.look(&ef);
            Ok(PointingRow {
                time: t,
                azimuth_deg: l.azimuth_deg,
                elevation_deg: l.elevation_deg,
                range_km: l.range_km,
                range_rate_km_s: l.range_rate_km_s,
                frequencies_hz: station
                    .channels
                    .iter()
                    .map(|c| tuned_frequency_hz(c.frequency_hz, c.direction, l.range_rate_km_s))
                    .collect(),
            })
        })
        .collect()
}

/// Look angles of a satellite from a station at one time (direct SGP4).
pub fn look_at(
    prop: &Propagator,
    site: &Site,
    t: UtcTime,
    eop: &EarthOrientation,
) -> Result<LookAngles, PropagationError> {
    let s = prop.state_at(t)?;
    let ef = TemeToEarthFixed::at(t, eop).state(&s.position_km, &s.velocity_km_s);
    Ok(site.look(&ef))
}

/// The part of a pass during which the elevation is at least
/// `min_elevation_deg` (an antenna's own limit, above the station's horizon),
/// or `None` when the pass never gets that high.
///
/// A LEO pass rises to one maximum and sets again, so there is at most one
/// upward crossing between AOS and culmination and one downward crossing
/// after it; each is found by Brent's method on direct SGP4 look angles to
/// 10 ms, about a dozen propagations per crossing. The result is also clipped
/// to the pass, so a mask that cuts the pass keeps cutting it.
pub fn interval_above(
    prop: &Propagator,
    site: &Site,
    pass: &Pass,
    min_elevation_deg: f64,
    eop: &EarthOrientation,
) -> Result<Option<(UtcTime, UtcTime)>, PropagationError> {
    if pass.max_elevation_deg < min_elevation_deg {
        return Ok(None);
    }
    let t0 = pass.aos;
    let tmax_s = pass
        .max_elevation_time
        .s_since(t0)
        .clamp(0.0, pass.duration_s);
    let los_s = pass.los.s_since(t0);
    let margin = |t_s: f64| -> Result<f64, PropagationError> {
        Ok(look_at(prop, site, t0.add_s(t_s), eop)?.elevation_deg - min_elevation_deg)
    };
    let f_aos = margin(0.0)?;
    let f_max = margin(tmax_s)?;
    let f_los = margin(los_s)?;
    if f_max < 0.0 {
        // The interpolated maximum and direct SGP4 differ by far less than a
        // millidegree; a pass this close to the limit is not usable anyway.
        return Ok(None);
    }
    // A failure inside an interval whose ends propagated is not expected; it
    // reads as "below the limit" so the contact only gets shorter.
    let f = |t_s: f64| margin(t_s).unwrap_or(-90.0);
    let up_s = if f_aos >= 0.0 {
        0.0
    } else {
        brent_root(f, 0.0, tmax_s, f_aos, f_max, 0.01)
    };
    let down_s = if f_los >= 0.0 {
        los_s
    } else {
        brent_root(f, tmax_s, los_s, f_max, f_los, 0.01)
    };
    if down_s <= up_s {
        return Ok(None);
    }
    Ok(Some((t0.add_s(up_s), t0.add_s(down_s))))
}
