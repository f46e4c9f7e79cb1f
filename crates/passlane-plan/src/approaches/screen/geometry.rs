//! Final evaluation of a close approach with direct SGP4 states: TCA refinement
//! (Newton on Δr·Δv), RIC components, approach angle, and the times the pair
//! enters and leaves the screening volume.

use passlane_orbit::constants::MU_WGS72_KM3_S2;
use passlane_orbit::frames::{Vec3, dot, norm, sub};
use passlane_orbit::{PropagationError, Propagator, StateTeme, UtcTime};

use super::{CloseApproach, ScreeningVolume};
use crate::encounter::{self, RelativeGeometry, StateKm};
use crate::numeric::bisect_boundary;

/// RIC components of `r2 − r1` in the frame of object 1, with the other
/// relative quantities (CCSDS convention: object 1 is the reference). The
/// arithmetic is [`crate::encounter::relative_geometry`]'s, shared with the
/// CDM and probability code.
pub fn relative_geometry(s1: &StateTeme, s2: &StateTeme) -> RelativeGeometry {
    let k = |s: &StateTeme| StateKm {
        position_km: s.position_km,
        velocity_km_s: s.velocity_km_s,
    };
    match encounter::relative_geometry(&k(s1), &k(s2)) {
        Ok(g) => g,
        // r × v = 0 (a radial trajectory) has no RIC frame: keep the distance
        // and speed, and say the components are unknown.
        Err(_) => RelativeGeometry {
            miss_distance_km: norm(&sub(&s2.position_km, &s1.position_km)),
            radial_km: f64::NAN,
            in_track_km: f64::NAN,
            cross_track_km: f64::NAN,
            relative_velocity_rtn_km_s: [f64::NAN; 3],
            relative_speed_km_s: norm(&sub(&s2.velocity_km_s, &s1.velocity_km_s)),
            approach_angle_deg: f64::NAN,
        },
    }
}

/// Components of `d` along the R, I, C axes of the orbit (r, v).
pub fn ric_components(r: &Vec3, v: &Vec3, d: &Vec3) -> [f64; 3] {
    let s = StateKm {
        position_km: *r,
        velocity_km_s: *v,
    };
    match encounter::rtn_basis(&s) {
        Some(m) => encounter::mat_vec(&m, d),
        None => [f64::NAN; 3],
    }
}

/// Two-body acceleration, km/s²: enough for the Newton derivative of Δr·Δv
/// (the J2 and drag parts change the derivative by ~0.1 %, not the root).
fn gravity(r: &Vec3) -> Vec3 {
    let rn = norm(r);
    let k = -MU_WGS72_KM3_S2 / (rn * rn * rn);
    [r[0] * k, r[1] * k, r[2] * k]
}

/// Newton iteration on f(t) = Δr·Δv with direct SGP4 states, from `guess`.
/// Returns the TCA and both states there, or `None` when the iteration finds a
/// maximum, leaves `[lo, hi]`, or propagation fails. Stops when the step is
/// below 10 µs, far inside the promised 1 ms.
pub(crate) fn refine_tca(
    p1: &Propagator,
    p2: &Propagator,
    guess: UtcTime,
    lo: UtcTime,
    hi: UtcTime,
) -> Result<Option<(UtcTime, StateTeme, StateTeme)>, PropagationError> {
    let mut t = guess;
    for _ in 0..30 {
        let s1 = p1.state_at(t)?;
        let s2 = p2.state_at(t)?;
        let dr = sub(&s2.position_km, &s1.position_km);
        let dv = sub(&s2.velocity_km_s, &s1.velocity_km_s);
        let da = sub(&gravity(&s2.position_km), &gravity(&s1.position_km));
        let f = dot(&dr, &dv);
        let fp = dot(&dv, &dv) + dot(&dr, &da);
        if fp.is_nan() || fp <= 0.0 {
            // Concave here: a distance maximum, or a pair at rest relative to each other.
            return Ok(None);
        }
        let mut dt = -f / fp;
        // A step larger than a few minutes means the guess was not near a minimum
        // the interpolant saw; damp it so the iteration stays on the same approach.
        dt = dt.clamp(-300.0, 300.0);
        t = t.add_s(dt);
        if t < lo.add_s(-600.0) || t > hi.add_s(600.0) {
            return Ok(None);
        }
        if dt.abs() < 1e-5 {
            let s1 = p1.state_at(t)?;
            let s2 = p2.state_at(t)?;
            return Ok(Some((t, s1, s2)));
        }
    }
    Ok(None)
}

/// How a candidate approach was found, which decides how it is refined.
#[derive(Debug, Clone, Copy)]
pub(crate) enum Seed {
    /// Δr·Δv changes sign from − to + inside [lo, hi] (on the interpolant or on
    /// direct SGP4 samples); `guess` is the root found there.
    Minimum {
        guess: UtcTime,
        lo: UtcTime,
        hi: UtcTime,
    },
    /// The window's edge `at`, where the distance is still falling (the end)
    /// or already rising (the start): the minimum over the window is there.
    Edge { at: UtcTime },
    /// The pair stays within reach across [lo, hi]: every minimum inside is
    /// found from direct SGP4 samples (co-orbiting and slowly drifting pairs,
    /// whose interpolated Δr·Δv is too small to trust).
    Proximity { lo: UtcTime, hi: UtcTime },
}

/// Δr·Δv (km²/s), distance (km) and both states at `t`, direct from SGP4.
fn pair_state(
    p1: &Propagator,
    p2: &Propagator,
    t: UtcTime,
) -> Result<(f64, f64, StateTeme, StateTeme), PropagationError> {
    let s1 = p1.state_at(t)?;
    let s2 = p2.state_at(t)?;
    let dr = sub(&s2.position_km, &s1.position_km);
    let dv = sub(&s2.velocity_km_s, &s1.velocity_km_s);
    Ok((dot(&dr, &dv), norm(&dr), s1, s2))
}

/// The root of Δr·Δv in [lo, hi] with direct SGP4, when it changes sign
/// there from − to +, to 10 µs.
fn sgp4_bracket_root(
    p1: &Propagator,
    p2: &Propagator,
    lo: UtcTime,
    hi: UtcTime,
) -> Result<Option<UtcTime>, PropagationError> {
    let f = |t: f64| -> Result<f64, PropagationError> {
        Ok(pair_state(p1, p2, UtcTime::from_s_since_j2000(t))?.0)
    };
    let (x0, x1) = (lo.s_since_j2000(), hi.s_since_j2000());
    let (g0, g1) = (f(x0)?, f(x1)?);
    if !(g0 < 0.0 && g1 >= 0.0) {
        return Ok(None);
    }
    let err = std::cell::Cell::new(None);
    let root = crate::numeric::bracketed_root(
        |t| match f(t) {
            Ok(v) => Some(v),
            Err(e) => {
                err.set(Some(e));
                None
            }
        },
        x0,
        x1,
        g0,
        g1,
        1e-5,
    );
    if let Some(e) = err.take() {
        return Err(e);
    }
    Ok(root.map(UtcTime::from_s_since_j2000))
}

/// An event before the volume intervals of a pair are joined: whether its
/// walk ended while still inside the volume at a distance maximum (the
/// interval goes on into the pair's neighbouring encounter).
pub(crate) struct Built {
    pub event: CloseApproach,
    pub entry_open: bool,
    pub exit_open: bool,
}

/// Every event a seed leads to (none, one, or for a proximity seed several),
/// evaluated with direct SGP4 inside `window`.
pub(crate) fn evaluate_seed(
    o1: (&ObjectId, &Propagator),
    o2: (&ObjectId, &Propagator),
    volume: &ScreeningVolume,
    seed: Seed,
    window: (UtcTime, UtcTime),
) -> Result<Vec<Built>, PropagationError> {
    let (p1, p2) = (o1.1, o2.1);
    let inside_window = |t: UtcTime| t > window.0 && t < window.1;
    let mut tcas: Vec<(UtcTime, bool)> = Vec::new();
    match seed {
        Seed::Minimum { guess, lo, hi } => {
            let (lo, hi) = (lo.max(window.0), hi.min(window.1));
            let t = match sgp4_bracket_root(p1, p2, lo, hi)? {
                Some(t) => Some(t),
                // The interpolant's bracket does not hold for SGP4 (the root
                // sits just outside it): Newton from the interpolant's root.
                None => refine_tca(p1, p2, guess, lo, hi)?.map(|(t, _, _)| t),
            };
            if let Some(t) = t.filter(|&t| inside_window(t)) {
                tcas.push((t, false));
            }
        }
        Seed::Edge { at } => {
            let (f, _, _, _) = pair_state(p1, p2, at)?;
            let at_start = at <= window.0;
            if (at_start && f >= 0.0) || (!at_start && f <= 0.0) {
                tcas.push((at, true));
            }
        }
        Seed::Proximity { lo, hi } => {
            let (lo, hi) = (lo.max(window.0), hi.min(window.1));
            const N: usize = 8;
            let dt = hi.s_since(lo) / N as f64;
            let mut prev = (lo, pair_state(p1, p2, lo)?.0);
            for k in 1..=N {
                let t = lo.add_s(dt * k as f64);
                let f = pair_state(p1, p2, t)?.0;
                if prev.1 < 0.0
                    && f >= 0.0
                    && let Some(r) = sgp4_bracket_root(p1, p2, prev.0, t)?
                    && inside_window(r)
                {
                    tcas.push((r, false));
                }
                prev = (t, f);
            }
        }
    }
    let mut out = Vec::new();
    for (tca, clipped) in tcas {
        let (_, _, s1, s2) = pair_state(p1, p2, tca)?;
        if let Some(b) = build_event(o1, o2, volume, tca, s1, s2, window, clipped)? {
            out.push(b);
        }
    }
    Ok(out)
}

/// One sample of the relative motion during an encounter walk.
#[derive(Clone, Copy)]
struct WalkSample {
    t: UtcTime,
    measure: f64,
}

/// Normalised volume measure (≤ 1 inside), Δr·Δv and distance of the pair at `t`.
fn volume_sample(
    p1: &Propagator,
    p2: &Propagator,
    volume: &ScreeningVolume,
    t: UtcTime,
) -> Result<(f64, f64, f64), PropagationError> {
    let s1 = p1.state_at(t)?;
    let s2 = p2.state_at(t)?;
    let dr = sub(&s2.position_km, &s1.position_km);
    let dv = sub(&s2.velocity_km_s, &s1.velocity_km_s);
    let m = volume.measure(&ric_components(&s1.position_km, &s1.velocity_km_s, &dr));
    Ok((m, dot(&dr, &dv), norm(&dr)))
}

/// Walks from the TCA in `direction` (−1 back, +1 forward) in steps of
/// `step_s` while the pair is inside the volume's bounding sphere and the
/// distance keeps growing (a distance maximum ends this encounter), up to
/// `limit`. Returns the samples in walking order and whether the walk ended
/// at a distance maximum while still inside the volume.
#[allow(clippy::too_many_arguments)]
fn walk(
    p1: &Propagator,
    p2: &Propagator,
    volume: &ScreeningVolume,
    tca: UtcTime,
    step_s: f64,
    direction: f64,
    limit: UtcTime,
) -> Result<(Vec<WalkSample>, bool), PropagationError> {
    let bound_km = volume.bounding_radius_km();
    let mut samples = Vec::new();
    let mut t = tca;
    loop {
        let mut next = t.add_s(direction * step_s);
        let at_limit = if direction < 0.0 {
            next <= limit
        } else {
            next >= limit
        };
        if at_limit {
            next = limit;
        }
        if next == t {
            return Ok((samples, false));
        }
        let (m, f, dist) = volume_sample(p1, p2, volume, next)?;
        samples.push(WalkSample {
            t: next,
            measure: m,
        });
        if dist > bound_km {
            return Ok((samples, false));
        }
        // Walking forward the distance grows while f > 0; backward while f < 0.
        if f * direction < 0.0 {
            return Ok((samples, m <= 1.0));
        }
        if at_limit {
            return Ok((samples, false));
        }
        t = next;
    }
}

/// Builds the event of the distance minimum at `tca` (a local minimum, or
/// `clipped`: the window's edge), or `None` when the relative trajectory
/// never enters the volume during this encounter. The encounter is the part
/// of the relative trajectory around the TCA inside the volume's bounding
/// sphere up to the neighbouring distance maxima; it is walked with direct
/// SGP4 in steps of a fifth of the time to cross the volume's smallest
/// half-size at the TCA's relative speed (1 ms to 60 s), and the smallest
/// volume measure is refined by a minimisation around the lowest sample, so a
/// box corner crossed away from the distance minimum is found. Entry and exit
/// are the first and last crossings of the volume's boundary in the
/// encounter (to 1 ms), clamped to the window.
#[allow(clippy::too_many_arguments)]
pub(crate) fn build_event(
    o1: (&ObjectId, &Propagator),
    o2: (&ObjectId, &Propagator),
    volume: &ScreeningVolume,
    tca: UtcTime,
    s1: StateTeme,
    s2: StateTeme,
    window: (UtcTime, UtcTime),
    clipped: bool,
) -> Result<Option<Built>, PropagationError> {
    let (p1, p2) = (o1.1, o2.1);
    let g = relative_geometry(&s1, &s2);
    // A NaN distance (failed geometry) is no event either.
    if g.miss_distance_km.is_nan() || g.miss_distance_km > volume.bounding_radius_km() {
        return Ok(None);
    }
    let m_tca = volume.measure(&[g.radial_km, g.in_track_km, g.cross_track_km]);
    let step_s =
        (0.2 * volume.smallest_half_size_km() / g.relative_speed_km_s.max(1e-9)).clamp(1e-3, 60.0);
    let (back, entry_open) = walk(p1, p2, volume, tca, step_s, -1.0, window.0)?;
    let (fwd, exit_open) = walk(p1, p2, volume, tca, step_s, 1.0, window.1)?;
    // Every sample in time order.
    let mut samples: Vec<WalkSample> = back.into_iter().rev().collect();
    samples.push(WalkSample {
        t: tca,
        measure: m_tca,
    });
    samples.extend(fwd);
    let mut first_in = samples.iter().position(|s| s.measure <= 1.0);
    let mut graze: Option<UtcTime> = None;
    if first_in.is_none() {
        // No sample inside: the deepest point may lie between two samples.
        let (k, _) = samples
            .iter()
            .enumerate()
            .min_by(|a, b| a.1.measure.total_cmp(&b.1.measure))
            .unwrap_or((0, &samples[0]));
        let lo = samples[k.saturating_sub(1)].t.s_since_j2000();
        let hi = samples[(k + 1).min(samples.len() - 1)].t.s_since_j2000();
        let err = std::cell::Cell::new(None);
        let (t_min, m_min) = crate::numeric::golden_extremum(
            |t| match volume_sample(p1, p2, volume, UtcTime::from_s_since_j2000(t)) {
                Ok((m, _, _)) => m,
                Err(e) => {
                    err.set(Some(e));
                    f64::INFINITY
                }
            },
            lo,
            hi,
            false,
        );
        if let Some(e) = err.take() {
            return Err(e);
        }
        if m_min > 1.0 {
            return Ok(None);
        }
        graze = Some(UtcTime::from_s_since_j2000(t_min));
        first_in = Some(k);
    }
    let boundary = |inside: UtcTime, outside: UtcTime| -> Result<UtcTime, PropagationError> {
        let s = bisect_boundary(
            |t_s| {
                let t = UtcTime::from_s_since_j2000(t_s);
                Ok(volume_sample(p1, p2, volume, t)?.0 <= 1.0)
            },
            inside.s_since_j2000(),
            outside.s_since_j2000(),
            5e-4,
        )?;
        Ok(UtcTime::from_s_since_j2000(s))
    };
    let (entry, exit) = if let Some(t) = graze {
        // A graze between two samples: the boundary on either side of its deepest point.
        let k = first_in.unwrap_or(0);
        let before = samples[k.saturating_sub(1)].t;
        let after = samples[(k + 1).min(samples.len() - 1)].t;
        (boundary(t, before)?, boundary(t, after)?)
    } else {
        let first = first_in.unwrap_or(0);
        let last = samples
            .iter()
            .rposition(|s| s.measure <= 1.0)
            .unwrap_or(first);
        let entry = if first == 0 {
            samples[0].t
        } else {
            boundary(samples[first].t, samples[first - 1].t)?
        };
        let exit = if last + 1 == samples.len() {
            samples[last].t
        } else {
            boundary(samples[last].t, samples[last + 1].t)?
        };
        (entry, exit)
    };
    let (id1, id2) = (o1.0, o2.0);
    let event = CloseApproach {
        primary: id1.name.clone(),
        secondary: id2.name.clone(),
        primary_catalog_number: id1.catalog_number,
        secondary_catalog_number: id2.catalog_number,
        tca,
        miss_distance_km: g.miss_distance_km,
        radial_km: g.radial_km,
        in_track_km: g.in_track_km,
        cross_track_km: g.cross_track_km,
        relative_speed_km_s: g.relative_speed_km_s,
        approach_angle_deg: g.approach_angle_deg,
        volume_entry: entry,
        volume_exit: exit,
        primary_state: s1,
        secondary_state: s2,
        clipped,
        tca_inside_volume: m_tca <= 1.0,
        volume_entry_clipped: entry <= window.0,
        volume_exit_clipped: exit >= window.1,
        interval_minima: 1,
        interval_min_miss_km: g.miss_distance_km,
    };
    Ok(Some(Built {
        event,
        entry_open: entry_open && graze.is_none(),
        exit_open: exit_open && graze.is_none(),
    }))
}

/// Identity of one screened object, as the event reports it.
#[derive(Debug, Clone)]
pub(crate) struct ObjectId {
    pub name: String,
    pub catalog_number: u32,
}

/// Joins the volume intervals of a pair's consecutive encounters whose walks
/// met inside the volume (a pair that stays inside across a distance
/// maximum): every event of one interval gets its entry, exit, number of
/// minima and smallest miss. `built` must be sorted by pair, then TCA.
pub(crate) fn join_intervals(built: &mut [Built]) {
    let same_pair = |a: &CloseApproach, b: &CloseApproach| {
        a.primary_catalog_number == b.primary_catalog_number
            && a.secondary_catalog_number == b.secondary_catalog_number
    };
    let mut k = 0;
    while k < built.len() {
        let mut end = k + 1;
        while end < built.len()
            && built[end - 1].exit_open
            && built[end].entry_open
            && same_pair(&built[end - 1].event, &built[end].event)
        {
            end += 1;
        }
        let group = &mut built[k..end];
        let entry = group[0].event.volume_entry;
        let entry_clipped = group[0].event.volume_entry_clipped;
        let exit = group[group.len() - 1].event.volume_exit;
        let exit_clipped = group[group.len() - 1].event.volume_exit_clipped;
        let minima = group.iter().filter(|b| !b.event.clipped).count() as u32;
        let least = group
            .iter()
            .map(|b| b.event.miss_distance_km)
            .fold(f64::INFINITY, f64::min);
        for b in group.iter_mut() {
            let e = &mut b.event;
            e.volume_entry = entry;
            e.volume_exit = exit;
            e.volume_entry_clipped = entry_clipped;
            e.volume_exit_clipped = exit_clipped;
            e.interval_minima = minima;
            e.interval_min_miss_km = least;
        }
        k = end;
    }
}
