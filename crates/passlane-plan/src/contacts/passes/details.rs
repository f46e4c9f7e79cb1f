//! The figures of one pass, once its AOS and LOS are known: culmination,
//! closest range, direction, the Sun at the station, Doppler per channel,
//! sunlight spans and mount-rate warnings.

use passlane_orbit::constants::SPEED_OF_LIGHT_KM_S;
use passlane_orbit::frames::{dot, norm, sub};
use passlane_orbit::{
    EarthFixed, EarthOrientation, ElementSet, Illumination, LookAngles, Propagator,
    TemeToEarthFixed, UtcTime, shadow_margins, sun_position_teme_km,
};

use super::track::{PreparedStation, Track};
use super::{
    ChannelDoppler, IlluminationSpan, MountWarning, Pass, PassDirection, PassOptions, SkyAtStation,
};
use super::{Edge, direct_state};
use crate::numeric::{brent_extremum, brent_root, golden_extremum, newton_polish};
use crate::station::LinkDirection;

/// How far (s) the closest approach may lie from the culmination's two
/// direct states for those to give the closest range too. On the benchmark
/// week three quarters of passes come closest within 1 s of their
/// culmination (850 of 1,308 within 0.5 s, 993 within 1 s, 1,040 within
/// 2 s: the rest are low passes and the eccentric orbit's, tens of seconds
/// apart); the parabola through them is then within 0.5 mm of direct
/// SGP4's minimum (2 mm at 2 s; `passes_sampling.rs` holds it to 1 cm).
const SHARE_S: f64 = 1.0;

#[allow(clippy::too_many_arguments)]
pub(super) fn describe_pass(
    set: &ElementSet,
    prop: &Propagator,
    st: &PreparedStation,
    track: &Track,
    options: &PassOptions,
    aos: Edge,
    los: Edge,
    aos_clipped: bool,
    los_clipped: bool,
) -> Pass {
    let (aos_s, los_s) = (aos.t_s, los.t_s);
    let t0 = options.start;
    let eop = options.earth_orientation;
    // The figures printed at an instant (AOS, maximum, LOS, Doppler) come
    // from direct SGP4 at that instant, as `track` computes them, not from
    // the interpolant the search ran on (metres off, a few Hz at S-band), so
    // they do not depend on where the samples fell or on the window's length.
    let look = |t_s: f64| {
        st.site
            .look(&direct_state(prop, options, t_s).unwrap_or_else(|| track.at(t_s)))
    };
    // Both extrema are only first guesses on the interpolant (then moved
    // onto direct SGP4 below), so 10 ms is enough: one Newton step from
    // there leaves microseconds, and the closest range's bracket is ±0.5 s.
    const GUESS_TOL_S: f64 = 1e-2;
    let (tmax_guess_s, _) = brent_extremum(
        |t| st.site.sin_elevation(&track.position_at(t)),
        aos_s,
        los_s,
        true,
        GUESS_TOL_S,
    );
    let (tmax_s, straddle) =
        polish_culmination(prop, st, track, options, tmax_guess_s, aos_s, los_s);
    let at_edge = |e: Edge| e.state.map_or_else(|| look(e.t_s), |s| st.site.look(&s));
    let at_aos = at_edge(aos);
    // The culmination lies between the two direct states its last Newton
    // step took (0.5 s apart): interpolated between them it is within
    // micrometres of direct SGP4 there, and saves an SGP4 call.
    let at_max = match &straddle {
        Some(p) if (p.lo_s..=p.hi_s).contains(&tmax_s) => st.site.look(&p.at(tmax_s)),
        _ => look(tmax_s),
    };
    let at_los = at_edge(los);
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
    // Range acceleration at closest approach gives the largest Doppler rate
    // (a difference of direct SGP4 range rates a second or less apart).
    // The same two looks give the closest range itself on direct SGP4
    // (`closest_on_parabola`), so the printed minimum does not depend on
    // where the samples fell (the interpolant's was up to 4 m off).
    // Most passes come closest within a second of their culmination: there
    // (the interpolated range rate changes sign within SHARE_S of it, so no
    // search for the minimum is needed) the culmination's two direct states
    // serve (two SGP4 calls fewer).
    let range_rate_at = |t_s: f64| {
        let s = track.at(t_s);
        let d = sub(&s.position_km, &st.site.position_km);
        dot(&d, &s.velocity_km_s) / norm(&d)
    };
    let shared = straddle
        .as_ref()
        .filter(|p| {
            let (lo, hi) = (p.mid_s() - SHARE_S, p.mid_s() + SHARE_S);
            lo >= aos_s && hi <= los_s && range_rate_at(lo) < 0.0 && range_rate_at(hi) > 0.0
        })
        .and_then(|p| {
            let (a, b) = (st.site.look(&p.lo), st.site.look(&p.hi));
            closest_on_parabola(&a, &b, p.lo_s, p.hi_s, SHARE_S)
        });
    let (range_accel, min_range_km, tmin_range_s) = if let Some(found) = shared {
        found
    } else {
        let (tmin_range_s, interpolated_min_range_km) = brent_extremum(
            |t| norm(&sub(&track.position_at(t), &st.site.position_km)),
            aos_s,
            los_s,
            false,
            GUESS_TOL_S,
        );
        let dt = 0.5;
        let lo = (tmin_range_s - dt).max(aos_s);
        let hi = (tmin_range_s + dt).min(los_s);
        if hi > lo {
            let (a, b) = (look(lo), look(hi));
            closest_on_parabola(&a, &b, lo, hi, 0.0).unwrap_or_else(|| {
                // The closest point is at an end of the bracket (a pass cut
                // by the window): the nearer end's direct range.
                let accel = (b.range_rate_km_s - a.range_rate_km_s) / (hi - lo);
                (accel, a.range_km.min(b.range_km), tmin_range_s)
            })
        } else {
            (0.0, interpolated_min_range_km, tmin_range_s)
        }
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
    let direct_position = |t_s: f64| direct_state(prop, options, t_s).map(|s| s.position_km);
    let illumination = illumination_spans(
        track,
        &direct_position,
        t0,
        aos_s,
        los_s,
        &eop,
        track.angle_rate_bound_rad_s,
    );
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
        station_index: st.index,
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
        element_age_days: passlane_orbit::result_element_age_days(
            set,
            t0.add_s(aos_s),
            t0.add_s(los_s),
            tmax,
        ),
    }
}

/// Range acceleration, closest range and its instant from direct looks at `lo_s` and
/// `hi_s`, a second or less apart: over that the range is a parabola (its
/// cubic term is below a millimetre). Its slope at the midpoint is the
/// difference quotient of the two direct ranges, its curvature r̈ that of
/// the two range rates; the vertex follows. The range rates enter only as
/// a difference: SGP4's velocity is not exactly the derivative of its
/// positions (by up to ~0.3 m/s on an eccentric orbit), which, taken at one
/// end, had put a flat minimum's range 20 cm off direct SGP4's. `None`
/// unless r̈ > 0 and the vertex lies within `reach_s` of [lo, hi].
fn closest_on_parabola(
    a: &LookAngles,
    b: &LookAngles,
    lo_s: f64,
    hi_s: f64,
    reach_s: f64,
) -> Option<(f64, f64, f64)> {
    let span = hi_s - lo_s;
    let accel = (b.range_rate_km_s - a.range_rate_km_s) / span;
    let slope = (b.range_km - a.range_km) / span;
    let vertex_s = 0.5 * (lo_s + hi_s) - slope / accel;
    (accel > 0.0 && (lo_s - reach_s..=hi_s + reach_s).contains(&vertex_s)).then(|| {
        let at_mid = 0.5 * (a.range_km + b.range_km) - accel * span * span / 8.0;
        (accel, at_mid - slope * slope / (2.0 * accel), vertex_s)
    })
}

/// Two direct SGP4 states, 0.5 s apart, around a culmination.
struct Straddle {
    lo_s: f64,
    lo: EarthFixed,
    hi_s: f64,
    hi: EarthFixed,
}

impl Straddle {
    fn mid_s(&self) -> f64 {
        0.5 * (self.lo_s + self.hi_s)
    }

    /// The state at `t_s` in [lo, hi], by cubic Hermite interpolation:
    /// over half a second its error is far below a micrometre (Δt⁴/384·ω⁴·r),
    /// and SGP4's velocity, not exactly the derivative of its positions,
    /// adds h/8 times the change of that mismatch over the half second.
    fn at(&self, t_s: f64) -> EarthFixed {
        let h = self.hi_s - self.lo_s;
        let (position_km, velocity_km_s) = passlane_orbit::interpolate::hermite(
            &self.lo.position_km,
            &self.lo.velocity_km_s,
            &self.hi.position_km,
            &self.hi.velocity_km_s,
            h,
            (t_s - self.lo_s) / h,
        );
        EarthFixed {
            position_km,
            velocity_km_s,
        }
    }
}

/// Moves the culmination found on the interpolated track onto direct SGP4
/// positions: Newton steps on d(sin el)/dt, taken as a central difference
/// of direct SGP4 positions ±0.25 s, with the curvature taken from the
/// interpolant. The central difference is f' + f'''·h²/6: the interpolant's
/// third derivative takes that term off (without it a near-zenith
/// culmination sat 0.5 ms from direct SGP4's maximum). On the interpolant
/// the flat top of a pass moved by up to 0.09 s with where the samples
/// fell; after this, by microseconds. SGP4's
/// own velocity is not used: it is not exactly the derivative of its
/// positions (0.3 m/s for an eccentric orbit), which moved flat tops by up
/// to 0.1 s from the maximum of the positions' elevation. A step that would
/// leave the pass or move more than a second (a maximum at a clipped end,
/// where the elevation is still rising or already falling) keeps the guess.
fn polish_culmination(
    prop: &Propagator,
    st: &PreparedStation,
    track: &Track,
    options: &PassOptions,
    guess_s: f64,
    aos_s: f64,
    los_s: f64,
) -> (f64, Option<Straddle>) {
    let interpolated = |t_s: f64| st.site.sin_elevation(&track.position_at(t_s));
    let sin_el = |s: &EarthFixed| st.site.sin_elevation(&s.position_km);
    let mut last = None;
    // One step from within 20 ms leaves microseconds (the curvature's error
    // is a small fraction of it); a second costs two more SGP4 calls.
    let t = newton_polish(guess_s, (aos_s, los_s), 1.0, 0.02, 2, |t| {
        let (h, k) = (0.25, 1.0);
        let f = [-2.0, -1.0, 0.0, 1.0, 2.0].map(|j| interpolated(t + j * k));
        let curvature = (f[3] - 2.0 * f[2] + f[1]) / (k * k);
        let third = (f[4] - 2.0 * f[3] + 2.0 * f[1] - f[0]) / (2.0 * k * k * k);
        let pair = Straddle {
            lo_s: t - h,
            lo: direct_state(prop, options, t - h)?,
            hi_s: t + h,
            hi: direct_state(prop, options, t + h)?,
        };
        let slope = (sin_el(&pair.hi) - sin_el(&pair.lo)) / (2.0 * h) - third * h * h / 6.0;
        last = Some(pair);
        (curvature < 0.0 && curvature.is_finite()).then(|| slope / curvature)
    });
    (t, last)
}

/// Doppler shift of a link at rest frequency `f_hz` seen by a receiver at
/// range rate ṙ: the received frequency is f·(1 − ṙ/c) (one-way, first order
/// in ṙ/c; the relativistic second-order term is below 1e-9·f in LEO), so the
/// shift is −f·ṙ/c.
pub fn doppler_shift_hz(f_hz: f64, range_rate_km_s: f64) -> f64 {
    -f_hz * range_rate_km_s / SPEED_OF_LIGHT_KM_S
}

/// Frequency the station should use on a channel: a receiver tunes to the
/// shifted downlink, f·(1 − ṙ/c); a transmitter pre-compensates the uplink
/// so that the spacecraft receives the rest frequency f exactly, sending
/// f / (1 − ṙ/c) (the first-order form f·(1 + ṙ/c) is 1 Hz off at S-band).
pub fn tuned_frequency_hz(f_hz: f64, direction: LinkDirection, range_rate_km_s: f64) -> f64 {
    let beta = range_rate_km_s / SPEED_OF_LIGHT_KM_S;
    match direction {
        LinkDirection::Downlink => f_hz * (1.0 - beta),
        LinkDirection::Uplink => f_hz / (1.0 - beta),
    }
}

/// Sunlit/penumbra/umbra stretches over [aos, los].
///
/// The state follows from two continuous margins (`shadow_margins`: inside
/// the penumbra, inside the umbra). Each is sampled on the interpolated track
/// every 60 s; between samples, every local extremum of a margin that does
/// not change sign at the samples is refined by Brent's minimiser, so a brush
/// with the penumbra that starts and ends between two samples (the shadow's
/// edge is only ~10 s wide) is still found; every sign change is then refined
/// by Brent's root finder to 1 ms on the interpolant, and then moved onto
/// direct SGP4 positions (`direct_position`, Earth-fixed) by Newton steps,
/// so that an edge crossed at a grazing angle does not move with where the
/// samples fell (by up to 0.75 s at a 120 s step without this). The Sun's
/// direction is fixed over a pass (it moves 0.007° per 10 minutes) but
/// turns with the Earth-fixed frame.
pub(super) fn illumination_spans(
    track: &Track,
    direct_position: &dyn Fn(f64) -> Option<[f64; 3]>,
    t0: UtcTime,
    aos_s: f64,
    los_s: f64,
    eop: &EarthOrientation,
    angle_rate_bound_rad_s: f64,
) -> Vec<IlluminationSpan> {
    let sun_teme = sun_position_teme_km(t0.add_s(0.5 * (aos_s + los_s)));
    // The Sun turns with the Earth-fixed frame by ~2.5° per 10 minutes; a
    // straight blend of its directions at AOS and LOS is within 0.02° of it
    // over a LEO pass (the shadow's edge is half a degree wide).
    let sun_a = TemeToEarthFixed::at(t0.add_s(aos_s), eop).position(&sun_teme);
    let sun_b = TemeToEarthFixed::at(t0.add_s(los_s), eop).position(&sun_teme);
    let span = (los_s - aos_s).max(1e-9);
    let margins_of = |t_s: f64, position_km: &[f64; 3]| -> (f64, f64) {
        let u = ((t_s - aos_s) / span).clamp(0.0, 1.0);
        let sun = [
            sun_a[0] + u * (sun_b[0] - sun_a[0]),
            sun_a[1] + u * (sun_b[1] - sun_a[1]),
            sun_a[2] + u * (sun_b[2] - sun_a[2]),
        ];
        shadow_margins(position_km, &sun)
    };
    let margins = |t_s: f64| margins_of(t_s, &track.position_at(t_s));
    let state_at = |t_s: f64| -> Illumination {
        let (p, u) = margins(t_s);
        if u >= 0.0 {
            Illumination::Umbra
        } else if p > 0.0 {
            Illumination::Penumbra
        } else {
            Illumination::Sunlit
        }
    };
    // Every instant where the penumbra margin or the umbra margin changes
    // sign. Both margins are sampled together every 60 s. Between samples a
    // margin (a cosine of the angle between the satellite's and the Sun's
    // directions, less a constant) cannot rise above its samples by more than
    // ½·f''·(step/2)² with |f''| ≤ 2ω², ω the satellite's angular rate about
    // the Earth's centre (plus the Earth's, as the Sun turns in this frame);
    // only extrema within that reach of zero are refined. ω is bounded by
    // the orbit's bound on the Earth-fixed angular rate (`OrbitBounds`),
    // which also holds between the samples, so the samples need positions
    // only.
    // 60 s rather than the 20 s of the first version: the bound below keeps
    // the refinement exact at any step (only more extrema fall within reach),
    // and the sampling was a third of a week's pass search (callgrind, 12
    // satellites × 3 stations × 7 days).
    const STEP_S: f64 = 60.0;
    let n = ((los_s - aos_s) / STEP_S).ceil().max(1.0) as usize;
    let samples: Vec<(f64, f64, f64)> = (0..=n)
        .map(|k| {
            let t = (aos_s + k as f64 * STEP_S).min(los_s);
            let (p, u) = margins_of(t, &track.position_at(t));
            (t, p, u)
        })
        .collect();
    let omega = 1.5 * (angle_rate_bound_rad_s + passlane_orbit::constants::EARTH_ROTATION_RAD_S);
    let reach = 0.5 * 2.0 * omega * omega * (0.5 * STEP_S).powi(2);
    let mut cuts: Vec<f64> = Vec::new();
    for which in 0..2 {
        let f = |t: f64| {
            let m = margins(t);
            if which == 0 { m.0 } else { m.1 }
        };
        let sampled: Vec<(f64, f64)> = samples
            .iter()
            .map(|&(t, p, u)| (t, if which == 0 { p } else { u }))
            .collect();
        let direct = |t: f64| {
            direct_position(t).map(|r| {
                let m = margins_of(t, &r);
                if which == 0 { m.0 } else { m.1 }
            })
        };
        cuts.extend(
            sign_changes(&f, &sampled, reach, 1e-3)
                .into_iter()
                .map(|t| polish_root(&f, &direct, t, aos_s, los_s)),
        );
    }
    cuts.sort_by(f64::total_cmp);
    cuts.dedup_by(|a, b| (*a - *b).abs() < 1e-6);
    let mut spans: Vec<IlluminationSpan> = Vec::new();
    let mut start = aos_s;
    for end in cuts.into_iter().chain(std::iter::once(los_s)) {
        if end <= start {
            continue;
        }
        let state = state_at(0.5 * (start + end));
        match spans.last_mut() {
            Some(last) if last.state == state => last.end = t0.add_s(end),
            _ => spans.push(IlluminationSpan {
                state,
                start: t0.add_s(start),
                end: t0.add_s(end),
            }),
        }
        start = end;
    }
    if spans.is_empty() {
        spans.push(IlluminationSpan {
            state: state_at(aos_s),
            start: t0.add_s(aos_s),
            end: t0.add_s(los_s),
        });
    }
    spans
}

/// Newton steps from `t0_s`, a root of `interpolated`, to a root of
/// `direct`, with the slope taken from `interpolated`. A step that leaves
/// [lo, hi] or strays more than 2 s, or a failed evaluation, keeps the
/// last good point. A step is off by its slope's relative error (the
/// interpolant's; up to ~1e-2 for these margins) plus a term in its
/// square, so the iteration stops once a step is under 0.1 ms, mostly
/// after one SGP4 call: the edges printed are then within 2 µs of the full
/// iteration's (measured on the benchmark week; 7 µs when it stopped at
/// 0.5 ms), far inside the millisecond asked of a pass's instants.
fn polish_root(
    interpolated: &dyn Fn(f64) -> f64,
    direct: &dyn Fn(f64) -> Option<f64>,
    t0_s: f64,
    lo_s: f64,
    hi_s: f64,
) -> f64 {
    newton_polish(t0_s, (lo_s, hi_s), 2.0, 1e-4, 4, |t| {
        let eps = 1e-2;
        let slope = (interpolated(t + eps) - interpolated(t - eps)) / (2.0 * eps);
        (slope != 0.0 && slope.is_finite()).then_some(direct(t)? / slope)
    })
}

/// Every sign change of `f` given its samples (time, value): each local
/// extremum of the samples that could cross zero between them (its value
/// within `reach` of zero) is refined by Brent's minimiser over its two
/// neighbouring intervals, so a brief excursion across zero between two
/// samples is caught; then each sign change is refined by Brent's root
/// finder to `tol_s`.
fn sign_changes(
    f: &dyn Fn(f64) -> f64,
    samples: &[(f64, f64)],
    reach: f64,
    tol_s: f64,
) -> Vec<f64> {
    let n = samples.len();
    let mut pts: Vec<(f64, f64)> = samples.to_vec();
    for i in 0..n {
        let (_, fm) = samples[i];
        let left = if i > 0 { Some(samples[i - 1].1) } else { None };
        let right = samples.get(i + 1).map(|x| x.1);
        let ge = |o: Option<f64>| o.is_none_or(|v| fm >= v);
        let le = |o: Option<f64>| o.is_none_or(|v| fm <= v);
        let is_max = ge(left) && ge(right) && fm <= 0.0 && fm > -reach;
        let is_min = le(left) && le(right) && fm > 0.0 && fm < reach;
        if !(is_max || is_min) {
            continue;
        }
        let lo = samples[i.saturating_sub(1)].0;
        let hi = samples[(i + 1).min(n - 1)].0;
        if hi <= lo {
            continue;
        }
        let (t, v) = golden_extremum(f, lo, hi, is_max);
        if (is_max && v > 0.0) || (is_min && v <= 0.0) {
            pts.push((t, v));
        }
    }
    pts.sort_by(|x, y| x.0.total_cmp(&y.0));
    pts.dedup_by(|x, y| x.0 == y.0);
    pts.windows(2)
        .filter(|w| (w[0].1 > 0.0) != (w[1].1 > 0.0))
        .map(|w| brent_root(f, w[0].0, w[1].0, w[0].1, w[1].1, tol_s))
        .collect()
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
        let rate_of = |t: f64| {
            let r = rates(t);
            if axis_index == 0 { r.0 } else { r.1 }
        };
        let close = |open: &mut Option<(f64, f64)>, end: f64, out: &mut Vec<MountWarning>| {
            if let Some((s, sampled)) = open.take() {
                // The peak between the 0.5 s samples, by Brent's maximiser
                // over the stretch: near zenith the azimuth rate's peak is a
                // fraction of a second wide and the samples miss most of it.
                let (_, refined) =
                    golden_extremum(rate_of, (s - 0.5).max(aos_s), (end + 0.5).min(los_s), true);
                let p = sampled.max(refined);
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
                let rate = rate_of(tf);
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

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;
    use passlane_orbit::frames::{cross, scale, unit};

    /// A designed case: a straight track behind the Earth that grazes the
    /// penumbra for 10 s, centred between two 60 s scan samples.
    #[test]
    fn a_ten_second_brush_with_the_penumbra_is_found() {
        let t0 = UtcTime::parse_iso("2026-12-01T00:00:00Z").unwrap();
        let eop = EarthOrientation::default();
        let (aos_s, los_s) = (0.0, 220.0);
        // The Sun as `illumination_spans` blends it along the pass (it turns
        // with the Earth-fixed frame by about a degree over these 220 s).
        let sun_teme = sun_position_teme_km(t0.add_s(0.5 * (aos_s + los_s)));
        let sa = TemeToEarthFixed::at(t0.add_s(aos_s), &eop).position(&sun_teme);
        let sb = TemeToEarthFixed::at(t0.add_s(los_s), &eop).position(&sun_teme);
        let sun_at = |t_s: f64| -> [f64; 3] {
            let u = ((t_s - aos_s) / (los_s - aos_s)).clamp(0.0, 1.0);
            std::array::from_fn(|k| sa[k] + u * (sb[k] - sa[k]))
        };
        let s_hat = unit(&sun_at(90.0));
        let p_hat = unit(&cross(&s_hat, &[0.0, 0.0, 1.0]));
        let q_hat = cross(&s_hat, &p_hat);
        let v = 7.5;
        // The track: 1,500 km behind the Earth, `rho` off the shadow axis,
        // crossing it at `tm`.
        let at = |rho: f64, tm: f64, t_s: f64| -> [f64; 3] {
            std::array::from_fn(|k| {
                -1_500.0 * s_hat[k] + rho * p_hat[k] + v * (t_s - tm) * q_hat[k]
            })
        };
        let margin =
            |rho: f64, tm: f64, t_s: f64| shadow_margins(&at(rho, tm, t_s), &sun_at(t_s)).0;
        let bisect = |f: &dyn Fn(f64) -> bool, mut lo: f64, mut hi: f64| {
            // f(lo) holds, f(hi) does not.
            for _ in 0..100 {
                let mid = 0.5 * (lo + hi);
                if f(mid) {
                    lo = mid;
                } else {
                    hi = mid;
                }
            }
            0.5 * (lo + hi)
        };
        // For a track, where its margin peaks and where it enters and leaves.
        let brush = |rho: f64, tm: f64| -> (f64, f64, f64) {
            let (peak, _) = golden_extremum(|t| margin(rho, tm, t), tm - 60.0, tm + 60.0, true);
            let t_in = bisect(&|t| margin(rho, tm, t) > 0.0, peak, peak - 60.0);
            let t_out = bisect(&|t| margin(rho, tm, t) > 0.0, peak, peak + 60.0);
            (peak, t_in, t_out)
        };
        let design = |tm: f64| -> f64 {
            bisect(
                &|rho| {
                    let (p, a, b) = brush(rho, tm);
                    margin(rho, tm, p) > 0.0 && b - a > 10.0
                },
                5_000.0,
                8_000.0,
            )
        };
        // Place the peak at 90 s, midway between the samples at 60 and 120 s.
        let mut tm = 90.0;
        let mut rho = design(tm);
        for _ in 0..3 {
            let (peak, _, _) = brush(rho, tm);
            tm += 90.0 - peak;
            rho = design(tm);
        }
        let (peak, t_in, t_out) = brush(rho, tm);
        assert!((peak - 90.0).abs() < 0.5 && (t_out - t_in - 10.0).abs() < 1e-3);
        assert!(margin(rho, tm, 60.0) < 0.0 && margin(rho, tm, 120.0) < 0.0);
        // |v|/|r| ≤ v/rho on this track (|r| ≥ rho): its angular-rate bound.
        let mut track = Track::new(t0, v / rho);
        let mut t = aos_s;
        while t <= los_s + 1e-9 {
            track.push(
                t0.add_s(t),
                EarthFixed {
                    position_km: at(rho, tm, t),
                    velocity_km_s: scale(&q_hat, v),
                },
                [0.0; 3],
            );
            t += 1.0;
        }
        let exact = |t: f64| Some(at(rho, tm, t));
        let spans = illumination_spans(&track, &exact, t0, aos_s, los_s, &eop, v / rho);
        let pen: Vec<_> = spans
            .iter()
            .filter(|s| s.state == Illumination::Penumbra)
            .collect();
        assert_eq!(pen.len(), 1, "{spans:?}");
        // The designed 10 s, entry and exit to the scan root finder's
        // millisecond (the straight track is interpolated exactly).
        assert!((pen[0].start.s_since(t0) - t_in).abs() < 2e-3, "{spans:?}");
        assert!((pen[0].end.s_since(t0) - t_out).abs() < 2e-3, "{spans:?}");
    }
}
