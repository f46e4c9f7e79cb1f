//! The figures of one pass, once its AOS and LOS are known: culmination,
//! closest range, direction, the Sun at the station, Doppler per channel,
//! sunlight spans and mount-rate warnings.

use passlane_orbit::constants::SPEED_OF_LIGHT_KM_S;
use passlane_orbit::frames::{norm, sub};
use passlane_orbit::{
    EarthFixed, EarthOrientation, ElementSet, Illumination, TemeToEarthFixed, UtcTime,
    shadow_state, sun_position_teme_km,
};

use super::track::{PreparedStation, Track};
use super::{
    ChannelDoppler, IlluminationSpan, MountWarning, Pass, PassDirection, PassOptions, SkyAtStation,
};
use crate::numeric::golden_extremum;
use crate::station::LinkDirection;

#[allow(clippy::too_many_arguments)]
pub(super) fn describe_pass(
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
