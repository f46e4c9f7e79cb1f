//! Brute-force reference screening: every pair, direct SGP4 states at a fine
//! fixed step (the last sample exactly at the window's end), every sign change
//! of Δr·Δv from − to + between two samples refined on direct SGP4 (a
//! bracketed root to 10 µs), and the window's ends taken as minima where the
//! distance is still falling (end) or already rising (start). Slow by design
//! (pairs × samples); tests and the benchmark compare the fast screening to it.
//!
//! It shares only the final evaluation with the fast path (the root on SGP4
//! inside a bracket, the encounter walk against the volume), so a candidate
//! the fast path loses shows up as a missing event.

use rayon::prelude::*;

use passlane_orbit::PropagationError;
use passlane_orbit::frames::{dot, norm, sub};

use super::geometry::{Built, Seed, evaluate_seed};
use super::{
    MAX_ACCELERATION_KM_S2, ScreeningRequest, ScreeningResult, diagnostic, finish_events, positive,
    prepare_objects,
};

/// Fine samples per chunk of time (bounds memory: objects × this × 48 bytes).
const CHUNK_SAMPLES: usize = 2048;

/// Screens every pair by sampling at `step_s` (e.g. 1 s or 10 s). No filters,
/// no hash, no interpolation.
pub fn screen_brute_force(request: &ScreeningRequest<'_>, step_s: f64) -> ScreeningResult {
    let mut result = ScreeningResult {
        screened_until: request.start,
        ..Default::default()
    };
    let span_s = request.end.s_since(request.start);
    if !positive(step_s) || !positive(span_s) || !request.settings.volume.is_valid() {
        return result;
    }
    let objects = prepare_objects(request, &mut result.diagnostics);
    result.stats.objects = objects.len();
    let cross = request.secondaries.is_some();
    let pairs_of = |i: usize| -> Vec<usize> {
        (0..objects.len())
            .filter(|&j| {
                let ok = if cross {
                    objects[i].group == 0 && objects[j].group == 1
                } else {
                    j > i
                };
                ok && objects[i].id.catalog_number != objects[j].id.catalog_number
            })
            .collect()
    };
    let partners: Vec<Vec<usize>> = (0..objects.len()).map(pairs_of).collect();
    let n_total = (span_s / step_s - 1e-9).ceil().max(1.0) as usize + 1;
    let sample_time = |k: usize| request.start.add_s(k as f64 * step_s).min(request.end);
    let d_km = request.settings.volume.bounding_radius_km();
    let mut failed: Vec<bool> = vec![false; objects.len()];
    let mut guesses: Vec<(usize, usize, Seed)> = Vec::new();
    let mut k0 = 0;
    while k0 + 1 < n_total {
        let k1 = (k0 + CHUNK_SAMPLES).min(n_total - 1);
        // Direct SGP4 states for samples k0..=k1 (one shared with the next chunk).
        let states: Vec<(Vec<[f64; 6]>, Option<PropagationError>)> = objects
            .par_iter()
            .zip(failed.par_iter())
            .map(|(o, &dead)| {
                let mut v = Vec::with_capacity(k1 - k0 + 1);
                if dead {
                    return (v, None);
                }
                let mut cursor = o.prop.cursor();
                for k in k0..=k1 {
                    match cursor.state_at(sample_time(k)) {
                        Ok(s) => {
                            let (p, q) = (s.position_km, s.velocity_km_s);
                            v.push([p[0], p[1], p[2], q[0], q[1], q[2]]);
                        }
                        Err(e) => return (v, Some(e)),
                    }
                }
                (v, None)
            })
            .collect();
        for (idx, (v, e)) in states.iter().enumerate() {
            result.stats.sgp4_samples += v.len() as u64;
            if let Some(e) = e {
                failed[idx] = true;
                result.diagnostics.push(diagnostic(&objects[idx], e));
            }
        }
        let last = k1 == n_total - 1;
        let found: Vec<(usize, usize, Seed)> = (0..objects.len())
            .into_par_iter()
            .flat_map_iter(|i| {
                let mut local = Vec::new();
                let a = &states[i].0;
                for &j in &partners[i] {
                    let b = &states[j].0;
                    let n = a.len().min(b.len());
                    let mut prev: Option<(f64, f64, f64)> = None;
                    for k in 0..n {
                        let dr = sub(&[b[k][0], b[k][1], b[k][2]], &[a[k][0], a[k][1], a[k][2]]);
                        let dv = sub(&[b[k][3], b[k][4], b[k][5]], &[a[k][3], a[k][4], a[k][5]]);
                        let f = dot(&dr, &dv);
                        let dist = norm(&dr);
                        let speed = norm(&dv);
                        if k0 == 0 && k == 0 && f > 0.0 && dist <= d_km {
                            local.push((i, j, Seed::Edge { at: request.start }));
                        }
                        if last && k + 1 == k1 - k0 + 1 && f < 0.0 && dist <= d_km {
                            local.push((i, j, Seed::Edge { at: request.end }));
                        }
                        if let Some((f0, dist0, speed0)) = prev {
                            // Over one step the distance falls by at most the
                            // largest relative speed times the step.
                            let reach = (speed0 + 2.0 * MAX_ACCELERATION_KM_S2 * step_s) * step_s;
                            if f0 < 0.0 && f >= 0.0 && dist0.min(dist) - reach <= d_km {
                                let (lo, hi) = (sample_time(k0 + k - 1), sample_time(k0 + k));
                                let frac = f0 / (f0 - f);
                                let guess = lo.add_s(frac * hi.s_since(lo));
                                local.push((i, j, Seed::Minimum { guess, lo, hi }));
                            }
                        }
                        prev = Some((f, dist, speed));
                    }
                }
                local
            })
            .collect();
        guesses.extend(found);
        k0 = k1;
    }
    result.screened_until = request.end;
    result.stats.refinements = guesses.len() as u64;
    let window = (request.start, request.end);
    let built: Vec<Vec<Built>> = guesses
        .par_iter()
        .map(|&(i, j, seed)| {
            let (o1, o2) = (&objects[i], &objects[j]);
            evaluate_seed(
                (&o1.id, &o1.prop),
                (&o2.id, &o2.prop),
                &request.settings.volume,
                seed,
                window,
            )
            .unwrap_or_default()
        })
        .collect();
    let events = finish_events(built.into_iter().flatten().collect());
    result.events = events;
    result
}
