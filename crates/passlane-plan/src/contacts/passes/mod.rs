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
//!    Where the orbit allows (LEO), it also uses two bounds from the orbit
//!    plane (`track::PlaneBounds`): a station far from the plane waits for
//!    the Earth to turn it closer, and a satellite that has just passed a
//!    station must go round its orbit before it can come back. On the
//!    12-satellite benchmark week this cut the samples far from stations by
//!    two thirds.
//! 3. Near a station it samples at a step chosen from the orbit (about 240 s
//!    in LEO), and in between it interpolates the Earth-fixed state with a
//!    quintic Hermite polynomial through position, velocity and the
//!    zonal-gravity acceleration (within ~1 m of SGP4 on near-circular LEO,
//!    ~30 m on an eccentric orbit). Every figure printed at an instant
//!    (AOS, LOS, culmination, closest range, sunlight edges, look angles,
//!    Doppler) is then moved onto direct SGP4, so none depends on where the
//!    samples fell (microseconds across window starts), and an extremum of
//!    the interpolant within its error of the horizon is decided on direct
//!    SGP4.
//! 4. Every local maximum of the horizon clearance among the samples is refined
//!    by a golden-section search, so a grazing pass shorter than a step is found;
//!    every sign change is refined to 0.1 ms by Brent's method on the
//!    interpolant, then moved onto direct SGP4 by Newton steps (to 1 µs), so
//!    AOS and LOS are SGP4's own horizon crossings wherever the samples fell.
//!
//! What it does not do: refraction (none unless the user raises the mask),
//! light-time (negligible in LEO), or antenna scheduling (see the planner).

mod details;
mod order;
mod track;

use std::sync::atomic::Ordering;

use passlane_orbit::frames::{Vec3, cross, unit};
use passlane_orbit::{
    EarthFixed, EarthOrientation, ElementSet, Illumination, PropagationError, Propagator,
    TemeToEarthFixed, UtcTime,
};
use rayon::prelude::*;
use serde::Serialize;

use crate::numeric::{brent_extremum, brent_root};
use crate::progress::Progress;
use crate::station::{LinkDirection, Station};

pub use details::{doppler_shift_hz, tuned_frequency_hz};

use details::describe_pass;
use passlane_orbit::interpolate::Sample5;
use track::{OrbitBounds, PlaneBounds, PreparedStation, Track};

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
    #[serde(serialize_with = "passlane_orbit::time::iso_us")]
    pub start: UtcTime,
    #[serde(serialize_with = "passlane_orbit::time::iso_us")]
    pub end: UtcTime,
}

/// The mount cannot follow part of the pass.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct MountWarning {
    /// Which axis: "azimuth" or "elevation".
    pub axis: String,
    #[serde(serialize_with = "passlane_orbit::time::iso_us")]
    pub start: UtcTime,
    #[serde(serialize_with = "passlane_orbit::time::iso_us")]
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
    /// The station's name (kept in the JSON for scripts).
    pub station: String,
    /// Index of the station in the list the search was given: the station's
    /// identity for everything downstream (names are unique in a validated
    /// list, but looking up by index cannot pick the wrong one).
    #[serde(skip)]
    pub station_index: usize,
    #[serde(serialize_with = "passlane_orbit::time::iso_us")]
    pub aos: UtcTime,
    #[serde(serialize_with = "passlane_orbit::time::iso_us")]
    pub max_elevation_time: UtcTime,
    #[serde(serialize_with = "passlane_orbit::time::iso_us")]
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
    /// Days from the element set's epoch to the culmination (negative:
    /// before the epoch); `None` when an operator ephemeris covers the pass.
    /// Common practice: SGP4 element sets degrade by about 1–3 km a day in
    /// LEO, so an old set moves AOS and LOS by seconds or more.
    pub element_age_days: Option<f64>,
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

/// Fleets of at least this many satellites are searched on all cores;
/// smaller ones on the calling thread.
///
/// Measured (`cargo bench -p passlane-plan --bench passes`, first N of the
/// synthetic 1,000 × the 3 demo stations × 7 days, 2 cores, release, idle
/// machine; ms of CPU / wall per run, serial | on rayon's pool; two runs
/// after the quintic track and its 240 s step, the second shown, the first
/// within ±15 % of it):
///
/// | N | serial | pool |
/// | --- | --- | --- |
/// | 1 | 1.15 / 1.11 | 1.10 / 1.10 |
/// | 3 | 3.48 / 3.48 | 3.33 / 2.47 |
/// | 6 | 7.58 / 7.73 | 7.88 / 4.39 |
/// | 12 | 16.25 / 16.44 | 16.25 / 9.56 |
/// | 24 | 32.50 / 33.02 | 32.50 / 18.27 |
/// | 50 | 70.00 / 68.83 | 62.50 / 35.87 |
/// | 100 | 135.00 / 132.82 | 135.00 / 73.30 |
///
/// At every size the pool's CPU is within the run-to-run spread of the
/// serial CPU (CPU is read at a coarse clock; the whole `passes` command's
/// mean CPU over 60 runs, 12 satellites, was 0.5 ms lower to 1.3 ms higher
/// with two threads than with one in four trials, about the machine's
/// run-to-run noise), while from 3 satellites on the wall time falls by
/// 30–45 %.
/// Below 3 (about 1 ms of work each) a 2-way split cannot gain a
/// millisecond and the pool's start-up is a fixed cost, so those stay on
/// the calling thread; from 3 on the pool is used.
const PARALLEL_FROM_SATELLITES: usize = 3;

/// Finds every pass of every satellite over every station in the window.
pub fn find_passes(
    sets: &[ElementSet],
    stations: &[Station],
    options: &PassOptions,
    progress: &dyn Progress,
) -> PassReport {
    find_passes_on(
        sets,
        stations,
        options,
        progress,
        sets.len() >= PARALLEL_FROM_SATELLITES,
    )
}

/// [`find_passes`] with the choice of threads made by the caller (for the
/// benchmark that measures where the choice should flip): `parallel` searches
/// the satellites on rayon's pool, otherwise on the calling thread. The
/// result is the same either way.
pub fn find_passes_on(
    sets: &[ElementSet],
    stations: &[Station],
    options: &PassOptions,
    progress: &dyn Progress,
    parallel: bool,
) -> PassReport {
    let prepared: Vec<PreparedStation> = stations
        .iter()
        .enumerate()
        .map(|(i, s)| PreparedStation::new(i, s, options.min_elevation_deg))
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
    let results: Vec<(Vec<Pass>, Option<SatelliteFailure>)> = if parallel {
        sets.par_iter().map(one).collect()
    } else {
        sets.iter().map(one).collect()
    };
    let mut report = PassReport {
        cancelled: progress.cancelled(),
        ..PassReport::default()
    };
    // One allocation of the exact size: growing it by doubling copied the
    // passes into fresh pages twice over, and a page first touched is a
    // page fault (kernel time) on top of the copy.
    report
        .passes
        .reserve_exact(results.iter().map(|(p, _)| p.len()).sum());
    for (passes, failure) in results {
        report.passes.extend(passes);
        report.failures.extend(failure);
    }
    order::sort_passes(&mut report.passes);
    report
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
    let cone_cosines: Vec<f64> = cones.iter().map(|c| c.cos()).collect();
    let rate = bounds.max_angle_rate_rad_s;
    // Cosine of each station's cone widened by what the central angle can
    // shrink in a step: a sample above it could be in the cone within a
    // step (its plain bound is under a step), one below it cannot be
    // before the next sample.
    let reach_cosines: Vec<f64> = cones
        .iter()
        .map(|c| {
            let reach = c + rate * bounds.step_s;
            if reach >= std::f64::consts::PI {
                f64::NEG_INFINITY
            } else {
                reach.cos()
            }
        })
        .collect();
    let plane_bounds = PlaneBounds::of(&bounds);
    let eop = options.earth_orientation;
    let mut cursor = prop.cursor();
    let mut track = Track::new(options.start, bounds.max_angle_rate_rad_s);
    let total_s = options.end.s_since(options.start);
    let h = bounds.step_s;
    let mut t_s = 0.0_f64;
    let mut in_segment = false;
    let mut fail = None;
    // Reused at every sample (an allocation per sample: ~1 % of a week's
    // search, callgrind).
    let mut cosines: Vec<f64> = Vec::with_capacity(stations.len());
    loop {
        let t = options.start.add_s(t_s);
        let teme = match cursor.state_at(t) {
            Ok(s) => s,
            Err(e) => {
                fail = Some(failure(e));
                break;
            }
        };
        let rot = TemeToEarthFixed::at(t, &eop);
        let ecef = rot.state(&teme.position_km, &teme.velocity_km_s);
        cosines.clear();
        cosines.extend(
            stations
                .iter()
                .map(|s| s.cos_central_angle(&ecef.position_km)),
        );
        // How long the satellite cannot enter any station's cone: for each
        // station the larger of the plain bound (central angle over its
        // fastest rate) and, where they hold, the orbit-plane bounds
        // (`PlaneBounds`). The plane bounds cost an atan2 per station; while
        // some station is near by both (during a pass) the others are not
        // asked.
        let mut normal: Option<Vec3> = None;
        let mut plane_skip = |k: usize| -> f64 {
            let Some(b) = &plane_bounds else { return 0.0 };
            let n = *normal.get_or_insert_with(|| {
                unit(&rot.position(&cross(&teme.position_km, &teme.velocity_km_s)))
            });
            b.skip_s(&stations[k].up_geocentric, &n, &ecef.position_km, cones[k])
        };
        // The plain bound; inside a cone it is zero (and no acos is needed).
        let plain = |k: usize| {
            if cosines[k] >= cone_cosines[k] {
                0.0
            } else {
                (cosines[k].acos() - cones[k]) / rate
            }
        };
        let mut skip = f64::INFINITY;
        for k in (0..stations.len()).filter(|&k| cosines[k] > reach_cosines[k]) {
            skip = skip.min(plain(k).max(plane_skip(k)));
            if skip < h {
                break;
            }
        }
        if skip >= h {
            for k in (0..stations.len()).filter(|&k| cosines[k] <= reach_cosines[k]) {
                // A station that cannot lower the minimum is not asked
                // further: first by a lower bound on its plain bound
                // (acos c ≥ √(2(1 − c)), as 2·sin(x/2) ≤ x), then by the
                // plain bound itself, before the plane bounds' atan2.
                let c = cosines[k];
                if ((2.0 * (1.0 - c)).max(0.0).sqrt() - cones[k]) / rate >= skip {
                    continue;
                }
                let p = plain(k);
                if p < skip {
                    skip = skip.min(p.max(plane_skip(k)));
                }
            }
        }
        let far = skip >= h;
        let at_end = t_s >= total_s;
        if far && !at_end {
            if in_segment {
                track.push(t, ecef, ecef.model_acceleration_km_s2());
                scan_segment(
                    set,
                    &prop,
                    stations,
                    &track,
                    &reach_cosines,
                    options,
                    &mut passes,
                );
                track.clear();
                in_segment = false;
            }
            // Cannot come within any station's cone sooner.
            t_s = (t_s + skip).min(total_s);
        } else {
            in_segment = true;
            track.push(t, ecef, ecef.model_acceleration_km_s2());
            if at_end {
                break;
            }
            t_s = (t_s + h).min(total_s);
        }
    }
    if in_segment && track.times_s.len() >= 2 {
        scan_segment(
            set,
            &prop,
            stations,
            &track,
            &reach_cosines,
            options,
            &mut passes,
        );
    }
    (passes, fail)
}

/// Finds the passes inside one stretch of dense samples, for every station.
fn scan_segment(
    set: &ElementSet,
    prop: &Propagator,
    stations: &[PreparedStation],
    track: &Track,
    reach_cosines: &[f64],
    options: &PassOptions,
    passes: &mut Vec<Pass>,
) {
    let n = track.times_s.len();
    if n < 2 {
        return;
    }
    let total_s = options.end.s_since(options.start);
    for (st, &cos_reach) in stations.iter().zip(reach_cosines) {
        // Between two samples the central angle can shrink by at most
        // rate × step; a station every sample of which stays farther than that
        // outside its cone cannot see the satellite anywhere in the segment.
        let reachable = |s: &Sample5| st.cos_central_angle(&s.position_km) >= cos_reach;
        // Most segments concern one station: the others are ruled out here
        // without building anything.
        if !track.states.iter().any(reachable) {
            continue;
        }
        let reachable_at: Vec<bool> = track.states.iter().map(reachable).collect();
        // Where the clearance is known: the samples, and for a station with
        // a mask the instants the azimuth crosses a corner of the horizon,
        // so that between two of these points the clearance is smooth and
        // a dip below the mask shows as a local minimum among them (without
        // the corners, a dip of a minute between two samples was missed and
        // two passes reported as one).
        let mut base: Vec<(f64, f64, bool)> = track
            .states
            .iter()
            .zip(&reachable_at)
            .enumerate()
            .map(|(i, (s, &r))| (track.time(i), st.clearance(&s.position_km), r))
            .collect();
        if st.has_mask {
            base.extend(corner_crossings(st, track, &reachable_at));
            base.sort_by(|a, b| a.0.total_cmp(&b.0));
        }
        let f = |i: usize| base[i].1;
        let mut points: Vec<(f64, f64)> = base.iter().map(|b| (b.0, b.1)).collect();
        // The first and last points count too, with their one neighbour: a
        // pass can rise and set between the first two samples of a window
        // or of a segment (three such passes at the start of the 1,000 ×
        // 10-station week were missed when only interior points counted).
        let n_points = base.len();
        for i in 0..n_points {
            let left = i.checked_sub(1).unwrap_or(i);
            let right = (i + 1).min(n_points - 1);
            if left == right {
                continue;
            }
            let is_max = f(i) >= f(left) && f(i) >= f(right);
            let is_min = f(i) <= f(left) && f(i) <= f(right);
            let reachable = base[left].2 || base[i].2 || base[right].2;
            if is_max && f(i) <= 0.0 && reachable {
                let (t, v) = brent_extremum(
                    |t| st.clearance(&track.position_at(t)),
                    base[left].0,
                    base[right].0,
                    true,
                    PEAK_TOL_S,
                );
                if v > 0.0 {
                    points.push((t, v));
                } else if v > -GRAZE
                    // The interpolant can be this far off: ask SGP4.
                    && let Some(d) = direct_clearance(prop, st, options, t).filter(|d| *d > 0.0)
                {
                    points.push((t, d));
                }
            } else if is_min && f(i) >= 0.0 {
                let (t, v) = brent_extremum(
                    |t| st.clearance(&track.position_at(t)),
                    base[left].0,
                    base[right].0,
                    false,
                    PEAK_TOL_S,
                );
                if v < 0.0 {
                    points.push((t, v));
                } else if v < GRAZE
                    && let Some(d) = direct_clearance(prop, st, options, t).filter(|d| *d <= 0.0)
                {
                    points.push((t, d));
                }
            }
        }
        points.sort_by(|a, b| a.0.total_cmp(&b.0));
        let clearance_at = |t: f64| st.clearance(&track.position_at(t));
        let crossing = |ta: f64, tb: f64, fa: f64, fb: f64| {
            let t = brent_root(clearance_at, ta, tb, fa, fb, 1e-4);
            polish_crossing(prop, st, options, t, ta, tb, &clearance_at)
        };
        let mut open: Option<(Edge, bool)> = if points[0].1 > 0.0 {
            // Above the horizon at the first sample: only possible at the window start.
            Some((Edge::at(points[0].0), points[0].0 <= 1e-9))
        } else {
            None
        };
        for w in points.windows(2) {
            let ((ta, fa), (tb, fb)) = (w[0], w[1]);
            if fa <= 0.0 && fb > 0.0 {
                let t = crossing(ta, tb, fa, fb);
                open = Some((t, false));
            } else if fa > 0.0 && fb <= 0.0 {
                let t = crossing(ta, tb, fa, fb);
                if let Some((aos, clipped)) = open.take() {
                    passes.push(describe_pass(
                        set, prop, st, track, options, aos, t, clipped, false,
                    ));
                }
            }
        }
        if let Some((aos, clipped)) = open {
            let last = points[points.len() - 1].0;
            let los_clipped = last >= total_s - 1e-9;
            passes.push(describe_pass(
                set,
                prop,
                st,
                track,
                options,
                aos,
                Edge::at(last),
                clipped,
                los_clipped,
            ));
        }
    }
}

/// How closely (s) a peak or dip between samples is located. Only its sign
/// matters here (the crossings on either side are found afterwards): 0.1 s
/// from a peak the clearance is below it by at most ½·|f''|·0.1², under
/// 2e-6 for any LEO pass (|f''| ≤ (v/ρ)² ≈ 3.5e-4 s⁻² at ρ = 400 km), far
/// inside `GRAZE`, within which direct SGP4 decides. (0.5 ms, the general
/// default, cost 1 % more of a 100-satellite, 10-station week.)
const PEAK_TOL_S: f64 = 0.1;

/// How far the interpolated clearance (a difference of sines) can be from
/// direct SGP4's: the interpolant is within ~1 m of SGP4 on near-circular
/// LEO, ~30 m on an eccentric LEO orbit (`track`'s tests) and up to ~110 m
/// on Molniya-like orbits of the SGP4 verification set (measured once), so
/// 1e-4 of clearance at a range of 300 km (no satellite is nearer a station
/// than its altitude) covers all but the last; ten times that covers them
/// three times over. (A few deep-space cases of the verification set, whose
/// SGP4 positions jump by kilometres within minutes, no interpolant
/// follows.) An extremum of the interpolant this close to the horizon is
/// decided on direct SGP4, so a grazing pass (or a dip below a mask) of a
/// second or two is neither lost nor invented by the interpolant.
const GRAZE: f64 = 1e-3;

/// Direct SGP4's Earth-fixed state at `t_s` (seconds since the window
/// start): what every printed instant of a pass is put on.
pub(super) fn direct_state(
    prop: &Propagator,
    options: &PassOptions,
    t_s: f64,
) -> Option<EarthFixed> {
    let time = options.start.add_s(t_s);
    let teme = prop.state_at(time).ok()?;
    Some(
        TemeToEarthFixed::at(time, &options.earth_orientation)
            .state(&teme.position_km, &teme.velocity_km_s),
    )
}

/// Clearance of direct SGP4's position at `t_s`.
fn direct_clearance(
    prop: &Propagator,
    st: &PreparedStation,
    options: &PassOptions,
    t_s: f64,
) -> Option<f64> {
    Some(st.clearance(&direct_state(prop, options, t_s)?.position_km))
}

/// The instants (with the clearance there) at which the satellite's azimuth
/// from a masked station crosses a corner of its horizon, between samples
/// where the satellite could be near the horizon (below the highest horizon
/// at either end; above it the mask cannot matter, and there the azimuth can
/// swing fast near the zenith). Each is found to 1 ms on the interpolant.
fn corner_crossings(
    st: &PreparedStation,
    track: &Track,
    reachable_at: &[bool],
) -> Vec<(f64, f64, bool)> {
    let wrap = |d: f64| (d + 180.0).rem_euclid(360.0) - 180.0;
    let sin_top = st.highest_horizon_deg.to_radians().sin();
    let az: Vec<f64> = track
        .states
        .iter()
        .map(|s| st.azimuth_deg(&s.position_km))
        .collect();
    let low: Vec<bool> = track
        .states
        .iter()
        .map(|s| st.site.sin_elevation(&s.position_km) <= sin_top)
        .collect();
    let mut out = Vec::new();
    for i in 0..track.times_s.len().saturating_sub(1) {
        if !(reachable_at[i] || reachable_at[i + 1]) || !(low[i] || low[i + 1]) {
            continue;
        }
        let (ta, tb) = (track.time(i), track.time(i + 1));
        for &corner in &st.corners_deg {
            let (da, db) = (wrap(az[i] - corner), wrap(az[i + 1] - corner));
            // A sign change through the corner itself, not through the
            // opposite azimuth (where the difference jumps by 360°).
            if (da < 0.0) == (db < 0.0) || (db - da).abs() >= 180.0 {
                continue;
            }
            let g = |t: f64| wrap(st.azimuth_deg(&track.position_at(t)) - corner);
            let t = brent_root(g, ta, tb, da, db, 1e-3);
            out.push((t, st.clearance(&track.position_at(t)), true));
        }
    }
    out
}

/// Moves a horizon crossing found on the interpolated track onto direct SGP4:
/// Newton steps on the clearance of direct SGP4 positions, with the slope
/// taken from the interpolant. The interpolant can be metres off SGP4's own
/// positions (SGP4's velocity is not exactly the derivative of its position:
/// 0.3 m/s for an eccentric demo orbit), which on a grazing pass moves the
/// crossing by tens of milliseconds; after this step the crossing no longer
/// depends on where the samples fell (within 1 µs in time). Any failure
/// keeps the interpolated root.
fn polish_crossing(
    prop: &Propagator,
    st: &PreparedStation,
    options: &PassOptions,
    t0_s: f64,
    lo_s: f64,
    hi_s: f64,
    interpolated: &dyn Fn(f64) -> f64,
) -> Edge {
    let direct = |t_s: f64| direct_state(prop, options, t_s);
    let mut t = t0_s;
    for _ in 0..4 {
        let eps = 1e-3;
        let slope = (interpolated(t + eps) - interpolated(t - eps)) / (2.0 * eps);
        let Some(state) = direct(t) else {
            return Edge::at(t0_s);
        };
        if slope == 0.0 || !slope.is_finite() {
            return Edge::at(t0_s);
        }
        let step = st.clearance(&state.position_km) / slope;
        // Within 1 µs of the root: keep this point, whose direct state the
        // pass's AOS or LOS figures then use (one SGP4 call fewer).
        if step.abs() < 1e-6 {
            return Edge {
                t_s: t,
                state: Some(state),
            };
        }
        if !(lo_s..=hi_s).contains(&(t - step)) || (t - step - t0_s).abs() > 1.0 {
            return Edge::at(t0_s);
        }
        // A first step this short lands within 1 µs: no second call to
        // check it; the state is carried over the step.
        if t == t0_s && step.abs() < ONE_STEP_S {
            return Edge {
                t_s: t - step,
                state: Some(carried(&state, -step)),
            };
        }
        t -= step;
    }
    Edge::at(t)
}

/// The longest first Newton step of [`polish_crossing`] taken without a
/// second SGP4 call to check it, s. A Newton step is off by its slope's
/// relative error plus (f''/2f')·step²: the interpolant's slope was within
/// 2e-3 of direct SGP4's over the benchmark week (worst of 2,613 edges,
/// measured on the cubic track at 120 s; the quintic's is closer), which
/// leaves 2e-7 s, and the quadratic term is below 1e-9 s; so a step under
/// 1e-4 s lands within 1 µs, the tolerance of the full iteration. Checked
/// on the quintic track: after each of the 1,856 first steps under 0.1 ms
/// of that week, the second step the full iteration took was at most
/// 1.4e-7 s. 70 % of first steps are this short (median 46 µs; the
/// eccentric orbit's are longer), and those take one SGP4 call, not two.
const ONE_STEP_S: f64 = 1e-4;

/// `state` carried `dt_s` seconds on (|dt| ≤ 0.1 ms) by its Taylor series
/// with the model acceleration: off by (jerk)·dt³/6, far below a micrometre.
fn carried(state: &EarthFixed, dt_s: f64) -> EarthFixed {
    let a = state.model_acceleration_km_s2();
    let (r, v) = (&state.position_km, &state.velocity_km_s);
    EarthFixed {
        position_km: std::array::from_fn(|k| r[k] + v[k] * dt_s + 0.5 * a[k] * dt_s * dt_s),
        velocity_km_s: std::array::from_fn(|k| v[k] + a[k] * dt_s),
    }
}

/// A pass's AOS or LOS: the instant, s since the window start, and the
/// direct SGP4 Earth-fixed state there when the search already has it.
#[derive(Debug, Clone, Copy)]
pub(super) struct Edge {
    pub(super) t_s: f64,
    pub(super) state: Option<EarthFixed>,
}

impl Edge {
    fn at(t_s: f64) -> Self {
        Edge { t_s, state: None }
    }
}
