//! The objects of one screening: propagators, padded radius shells and SGP4
//! sample steps; the perigee/apogee filter of fleet-vs-catalog runs; and the
//! per-chunk SGP4 samples of each object.

use passlane_orbit::constants::MU_WGS72_KM3_S2;
use passlane_orbit::summary::semi_major_axis_km;
use passlane_orbit::{Cursor, ElementSet, PropagationError, Propagator, UtcTime};

use super::geometry::ObjectId;
use super::hermite::{Sample, error_estimate_km};
use super::{MAX_SAMPLE_STEP_FACTOR, ObjectDiagnostic, ScreeningRequest, ScreeningSettings};

/// An object ready to screen.
pub(crate) struct Object {
    pub id: ObjectId,
    pub prop: Propagator,
    /// 0 = primary set, 1 = secondary set.
    pub group: u8,
    pub shell_min_km: f64,
    pub shell_max_km: f64,
    pub sample_step_s: f64,
    /// Position error allowance of this object's interpolant over a hash step, km.
    pub margin_km: f64,
}

/// Builds propagators, shells and sample steps; objects that cannot start SGP4
/// become diagnostics.
pub(crate) fn prepare_objects(
    request: &ScreeningRequest<'_>,
    diagnostics: &mut Vec<ObjectDiagnostic>,
) -> Vec<Object> {
    let settings = &request.settings;
    let groups = [Some(request.primaries), request.secondaries];
    let mut out = Vec::new();
    for (g, sets) in groups.iter().enumerate() {
        let Some(sets) = sets else { continue };
        for set in sets.iter() {
            let id = ObjectId {
                name: set.name.clone(),
                catalog_number: set.catalog_number,
            };
            let prop = match Propagator::new(set) {
                Ok(p) => p,
                Err(e) => {
                    diagnostics.push(ObjectDiagnostic {
                        name: id.name,
                        catalog_number: id.catalog_number,
                        time: None,
                        message: e.to_string(),
                    });
                    continue;
                }
            };
            let (shell_min_km, shell_max_km) =
                padded_shell_km(set, request.start, request.end, settings);
            let (sample_step_s, margin_km) = sample_step(set, settings);
            out.push(Object {
                id,
                prop,
                group: g as u8,
                shell_min_km,
                shell_max_km,
                sample_step_s,
                margin_km,
            });
        }
    }
    out
}

/// Perigee and apogee radii from the mean elements, padded (see the module docs).
pub(crate) fn padded_shell_km(
    set: &ElementSet,
    start: UtcTime,
    end: UtcTime,
    settings: &ScreeningSettings,
) -> (f64, f64) {
    let a = semi_major_axis_km(set.mean_motion_rev_day, MU_WGS72_KM3_S2);
    let e = set.eccentricity;
    // Mean-motion change over the window from the TLE's ṅ/2 term: Δn = 2·(ṅ/2)·Δt,
    // and Δa/a = −(2/3)·Δn/n; the larger distance from epoch is the worst case.
    let days = start
        .s_since(set.epoch)
        .abs()
        .max(end.s_since(set.epoch).abs())
        / 86_400.0;
    let dn = 2.0 * set.mean_motion_dot_rev_day2.abs() * days;
    let decay_km = 2.0 / 3.0 * a * dn / set.mean_motion_rev_day;
    let pad = settings.volume.bounding_radius_km() + settings.filter_margin_km + decay_km;
    (a * (1.0 - e) - pad, a * (1.0 + e) + pad)
}

/// The object's SGP4 sample step (a power-of-two multiple of the hash step,
/// at most 64 of them) and its position error allowance, km.
pub(super) fn sample_step(set: &ElementSet, settings: &ScreeningSettings) -> (f64, f64) {
    let a = semi_major_axis_km(set.mean_motion_rev_day, MU_WGS72_KM3_S2);
    let rp = a * (1.0 - set.eccentricity).max(0.0);
    let vp = (MU_WGS72_KM3_S2 * (2.0 / rp - 1.0 / a)).max(0.0).sqrt();
    // Fastest angular rate is at perigee; 1.5× on the rate (5× on the error)
    // covers eccentric orbits, where r⁗ exceeds ω⁴r near perigee.
    let rate = 1.5 * vp / rp;
    let h = settings.hash_step_s;
    let mut step = h;
    for k in 1..=MAX_SAMPLE_STEP_FACTOR.trailing_zeros() {
        let next = h * f64::from(1u32 << k);
        if error_estimate_km(next, rate, rp) > settings.interpolation_tolerance_km {
            break;
        }
        step = next;
    }
    let pos_err = error_estimate_km(step, rate, rp).max(1e-4);
    // The interpolant's velocity error is about 9·ε/step; over half a hash step
    // it adds that much again to the position the linear test extrapolates.
    let vel_err = 10.0 * pos_err / step;
    (step, pos_err + vel_err * h / 2.0)
}

/// Fleet-vs-catalog: keep catalog objects whose shell overlaps some fleet shell.
pub(super) fn drop_unreachable_secondaries(objects: &mut Vec<Object>) {
    let mut shells: Vec<(f64, f64)> = objects
        .iter()
        .filter(|o| o.group == 0)
        .map(|o| (o.shell_min_km, o.shell_max_km))
        .collect();
    shells.sort_by(|a, b| a.0.total_cmp(&b.0));
    // Prefix maximum of shell tops, so one binary search answers "does any
    // primary shell starting below my top reach up to my bottom?".
    let mut prefix_max = Vec::with_capacity(shells.len());
    let mut m = f64::NEG_INFINITY;
    for s in &shells {
        m = m.max(s.1);
        prefix_max.push(m);
    }
    objects.retain(|o| {
        if o.group == 0 {
            return true;
        }
        let n = shells.partition_point(|s| s.0 <= o.shell_max_km);
        n > 0 && prefix_max[n - 1] >= o.shell_min_km
    });
}

pub(crate) fn diagnostic(o: &Object, e: &PropagationError) -> ObjectDiagnostic {
    let time = e.time();
    ObjectDiagnostic {
        name: o.id.name.clone(),
        catalog_number: o.id.catalog_number,
        time,
        message: e.to_string(),
    }
}

/// One object's samples over the current chunk.
pub(super) struct ObjectCursor<'a> {
    pub(super) cursor: Cursor<'a>,
    pub(super) samples: Vec<Sample>,
    /// Samples before the first failure.
    pub(super) valid: usize,
    pub(super) failed: bool,
    pub(super) error: Option<PropagationError>,
}

impl<'a> ObjectCursor<'a> {
    pub(super) fn new(o: &'a Object) -> Self {
        ObjectCursor {
            cursor: o.prop.cursor(),
            samples: Vec::new(),
            valid: 0,
            failed: false,
            error: None,
        }
    }

    pub(super) fn fill(&mut self, o: &Object, chunk_start: UtcTime, chunk_end: UtcTime) {
        self.samples.clear();
        self.valid = 0;
        if self.failed {
            return;
        }
        let n = (chunk_end.s_since(chunk_start) / o.sample_step_s - 1e-9)
            .ceil()
            .max(1.0) as usize
            + 1;
        for m in 0..n {
            match self
                .cursor
                .state_at(chunk_start.add_s(m as f64 * o.sample_step_s))
            {
                Ok(s) => self.samples.push(Sample {
                    pos_km: s.position_km,
                    vel_km_s: s.velocity_km_s,
                }),
                Err(e) => {
                    self.failed = true;
                    self.error = Some(e);
                    break;
                }
            }
        }
        self.valid = self.samples.len();
    }
}
