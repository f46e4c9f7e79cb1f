//! Propagation: SGP4 on the `sgp4` crate, or the operator's ephemeris.
//!
//! A [`Propagator`] is built from a fleet entry ([`ElementSet`]); when the
//! entry carries an ephemeris ([`ElementSet::ephemeris`]) the propagator
//! interpolates it (see [`crate::ephemeris`]) and, outside its usable spans,
//! falls back to SGP4 on the element set the entry replaced, if any, or
//! returns [`PropagationError::OutsideEphemeris`]. `state_at` and the
//! [`Cursor`] behave the same for both sources, so the planners do not know
//! which one they evaluate.
//!
//! Default model: WGS-72 constants with the AFSPC epoch and sidereal-time
//! conventions (the crate's compatibility-mode constants) and the corrected
//! Lyddane branch: the combination that reproduces the published verification
//! vectors (Vallado et al. 2006), and the constants the element producers use. No type of the `sgp4` crate leaves this module.
//!
//! The crate has no decay check: this module flags a state whose altitude is
//! below the Earth's surface (or a user-set altitude) as [`PropagationError::Decayed`].
//! Errors are values, per satellite and time; nothing here panics.

use std::sync::Arc;

use rayon::prelude::*;

use crate::constants::{EARTH_RADIUS_WGS72_KM, WGS84_A_KM, WGS84_F};
use crate::elements::ElementSet;
use crate::ephemeris::EphemerisSource;
use crate::time::UtcTime;

/// Gravity model and conventions for SGP4.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum GravityModel {
    /// WGS-72 constants with the AFSPC epoch and sidereal-time expressions and
    /// the corrected Lyddane branch for low-inclination deep-space orbits. Measured
    /// here: this combination reproduces every published vector of Vallado et al.
    /// (2006) to 0.2 mm (the test `sgp4_verification`), so it is the default.
    #[default]
    Wgs72,
    /// As [`GravityModel::Wgs72`] but with the historical AFSPC Lyddane branch
    /// too (differs by ~1 km on the published case 23599).
    Wgs72Afspc,
    /// WGS-84 constants (differs from the producers' model by tens of metres to km).
    Wgs84,
}

/// A state in the TEME frame of date (km, km/s).
#[derive(Debug, Clone, Copy, PartialEq, Default, serde::Serialize)]
pub struct StateTeme {
    pub time: UtcTime,
    pub position_km: [f64; 3],
    pub velocity_km_s: [f64; 3],
}

/// Why a state could not be had.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum PropagationError {
    /// The elements cannot start SGP4 (e.g. the orbit dips inside the Earth at epoch).
    BadElements { catalog_number: u32 },
    /// SGP4 diverged at this time (eccentricity or semi-latus rectum out of range).
    Diverged { catalog_number: u32, time: UtcTime },
    /// The state lies below the decay altitude: the satellite has re-entered.
    Decayed {
        catalog_number: u32,
        time: UtcTime,
        altitude_km: f64,
    },
    /// The time lies outside every usable span of the spacecraft's
    /// ephemeris, and there is no element set to fall back to: no
    /// extrapolation.
    OutsideEphemeris { catalog_number: u32, time: UtcTime },
}

impl std::fmt::Display for PropagationError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            PropagationError::BadElements { catalog_number } => write!(
                f,
                "catalog {catalog_number}: the elements cannot start SGP4 (orbit inside the Earth or out of the model's range)"
            ),
            PropagationError::Diverged {
                catalog_number,
                time,
            } => write!(
                f,
                "catalog {catalog_number}: SGP4 diverged at {time} (the elements are too old or the orbit has decayed)"
            ),
            PropagationError::Decayed {
                catalog_number,
                time,
                altitude_km,
            } => write!(
                f,
                "catalog {catalog_number}: decayed by {time} (altitude {altitude_km:.1} km)"
            ),
            PropagationError::OutsideEphemeris {
                catalog_number,
                time,
            } => write!(
                f,
                "catalog {catalog_number}: {time} is outside every usable span of its ephemeris, and it has no element set to fall back to (no extrapolation)"
            ),
        }
    }
}

impl std::error::Error for PropagationError {}

impl PropagationError {
    pub fn catalog_number(&self) -> u32 {
        match *self {
            PropagationError::BadElements { catalog_number }
            | PropagationError::Diverged { catalog_number, .. }
            | PropagationError::Decayed { catalog_number, .. }
            | PropagationError::OutsideEphemeris { catalog_number, .. } => catalog_number,
        }
    }

    /// The time the error concerns, if it concerns one.
    pub fn time(&self) -> Option<UtcTime> {
        match *self {
            PropagationError::BadElements { .. } => None,
            PropagationError::Diverged { time, .. }
            | PropagationError::Decayed { time, .. }
            | PropagationError::OutsideEphemeris { time, .. } => Some(time),
        }
    }
}

/// SGP4 on one element set.
#[derive(Clone)]
struct Sgp4Model {
    constants: sgp4::Constants,
    epoch: UtcTime,
    afspc: bool,
}

impl Sgp4Model {
    fn new(set: &ElementSet, model: GravityModel) -> Result<Self, PropagationError> {
        let bad = PropagationError::BadElements {
            catalog_number: set.catalog_number,
        };
        let elements = to_sgp4_elements(set);
        let constants = match model {
            GravityModel::Wgs72 | GravityModel::Wgs72Afspc => {
                sgp4::Constants::from_elements_afspc_compatibility_mode(&elements)
            }
            GravityModel::Wgs84 => sgp4::Constants::from_elements(&elements),
        }
        .map_err(|_| bad)?;
        Ok(Sgp4Model {
            constants,
            epoch: set.epoch,
            afspc: model == GravityModel::Wgs72Afspc,
        })
    }
}

#[derive(Clone)]
enum Motion {
    Sgp4(Sgp4Model),
    Ephemeris {
        source: Arc<EphemerisSource>,
        fallback: Option<Sgp4Model>,
    },
}

impl Motion {
    fn sgp4(&self) -> Option<&Sgp4Model> {
        match self {
            Motion::Sgp4(m) => Some(m),
            Motion::Ephemeris { fallback, .. } => fallback.as_ref(),
        }
    }
}

/// A ready-to-use propagator for one fleet entry: SGP4 on its elements, or
/// its ephemeris (see the module docs).
#[derive(Clone)]
pub struct Propagator {
    motion: Motion,
    epoch: UtcTime,
    catalog_number: u32,
    decay_altitude_km: f64,
}

impl std::fmt::Debug for Propagator {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("Propagator")
            .field("catalog_number", &self.catalog_number)
            .field("epoch", &self.epoch)
            .field(
                "source",
                &match &self.motion {
                    Motion::Sgp4(_) => "SGP4".to_string(),
                    Motion::Ephemeris { source, .. } => source.ephemeris.describe(),
                },
            )
            .finish_non_exhaustive()
    }
}

impl Propagator {
    /// Propagator in the default model ([`GravityModel::Wgs72`]).
    pub fn new(set: &ElementSet) -> Result<Self, PropagationError> {
        Self::with_model(set, GravityModel::default())
    }

    pub fn with_model(set: &ElementSet, model: GravityModel) -> Result<Self, PropagationError> {
        let motion = match &set.ephemeris {
            None => Motion::Sgp4(Sgp4Model::new(set, model)?),
            Some(source) => Motion::Ephemeris {
                source: Arc::clone(source),
                // Elements that cannot start SGP4 leave the ephemeris alone,
                // without a fallback.
                fallback: source
                    .fallback
                    .as_ref()
                    .and_then(|f| Sgp4Model::new(f, model).ok()),
            },
        };
        Ok(Propagator {
            motion,
            epoch: set.epoch,
            catalog_number: set.catalog_number,
            decay_altitude_km: 0.0,
        })
    }

    /// Altitude (km above the WGS-84 ellipsoid) below which a state counts as decayed.
    /// Default 0: the Earth's surface.
    pub fn with_decay_altitude_km(mut self, altitude_km: f64) -> Self {
        self.decay_altitude_km = altitude_km;
        self
    }

    pub fn epoch(&self) -> UtcTime {
        self.epoch
    }

    pub fn catalog_number(&self) -> u32 {
        self.catalog_number
    }

    /// The ephemeris this propagator evaluates, if it is not plain SGP4.
    pub fn ephemeris(&self) -> Option<&EphemerisSource> {
        match &self.motion {
            Motion::Sgp4(_) => None,
            Motion::Ephemeris { source, .. } => Some(source),
        }
    }

    /// State at one time. For deep-space resonant orbits this re-integrates from
    /// epoch on every call; use a [`Cursor`] for ordered times.
    pub fn state_at(&self, time: UtcTime) -> Result<StateTeme, PropagationError> {
        let mut state = self.motion.sgp4().and_then(|m| m.constants.initial_state());
        self.step(time, state.as_mut())
    }

    /// State at minutes since epoch, as the verification vectors tabulate it.
    pub fn state_at_minutes(&self, minutes: f64) -> Result<StateTeme, PropagationError> {
        self.state_at(self.epoch.add_s(minutes * 60.0))
    }

    /// A state-carrying evaluator for times in (mostly) increasing order.
    pub fn cursor(&self) -> Cursor<'_> {
        Cursor {
            prop: self,
            resonance: self.motion.sgp4().and_then(|m| m.constants.initial_state()),
        }
    }

    fn step(
        &self,
        time: UtcTime,
        resonance: Option<&mut sgp4::ResonanceState>,
    ) -> Result<StateTeme, PropagationError> {
        let (position, velocity) = match &self.motion {
            Motion::Sgp4(m) => self.sgp4_state(m, time, resonance)?,
            Motion::Ephemeris { source, fallback } => match source.ephemeris.state_at(time) {
                Some(rv) => rv,
                None => match fallback {
                    Some(m) => self.sgp4_state(m, time, resonance)?,
                    None => {
                        return Err(PropagationError::OutsideEphemeris {
                            catalog_number: self.catalog_number,
                            time,
                        });
                    }
                },
            },
        };
        let altitude_km = approximate_altitude_km(&position);
        let r_km = (position[0].powi(2) + position[1].powi(2) + position[2].powi(2)).sqrt();
        // Two tests: the user's altitude (default the ellipsoid surface), and the
        // reference implementation's own decay test, radius below one Earth
        // radius (Vallado et al. 2006, error code 6).
        // NaN (a wild state) counts as decayed too.
        let below = altitude_km.is_nan()
            || altitude_km < self.decay_altitude_km
            || r_km.is_nan()
            || r_km < EARTH_RADIUS_WGS72_KM;
        if below {
            return Err(PropagationError::Decayed {
                catalog_number: self.catalog_number,
                time,
                altitude_km,
            });
        }
        Ok(StateTeme {
            time,
            position_km: position,
            velocity_km_s: velocity,
        })
    }
}

impl Propagator {
    fn sgp4_state(
        &self,
        model: &Sgp4Model,
        time: UtcTime,
        resonance: Option<&mut sgp4::ResonanceState>,
    ) -> Result<([f64; 3], [f64; 3]), PropagationError> {
        let minutes = time.s_since(model.epoch) / 60.0;
        let p = model
            .constants
            .propagate_from_state(sgp4::MinutesSinceEpoch(minutes), resonance, model.afspc)
            .map_err(|_| PropagationError::Diverged {
                catalog_number: self.catalog_number,
                time,
            })?;
        Ok((p.position, p.velocity))
    }
}

/// Evaluates one propagator at ordered times, carrying the deep-space resonance
/// integrator forward instead of restarting it from epoch each call. Out-of-order
/// times are allowed; they restart the integrator (correct, only slower).
pub struct Cursor<'a> {
    prop: &'a Propagator,
    resonance: Option<sgp4::ResonanceState>,
}

impl Cursor<'_> {
    pub fn state_at(&mut self, time: UtcTime) -> Result<StateTeme, PropagationError> {
        if let (Some(state), Some(model)) = (&self.resonance, self.prop.motion.sgp4()) {
            let t_min = time.s_since(model.epoch) / 60.0;
            let t_int = state.t();
            // The crate panics when asked to integrate backwards; restart instead.
            if (t_int != 0.0 && t_int.is_sign_positive() != t_min.is_sign_positive())
                || t_min.abs() < t_int.abs()
            {
                self.resonance = model.constants.initial_state();
            }
        }
        self.prop.step(time, self.resonance.as_mut())
    }
}

/// Altitude above the WGS-84 ellipsoid from a geocentric position, accurate to
/// metres in LEO (good enough for a decay test; frame rotation does not matter).
fn approximate_altitude_km(position_km: &[f64; 3]) -> f64 {
    let [x, y, z] = *position_km;
    let r = (x * x + y * y + z * z).sqrt();
    if r == 0.0 || !r.is_finite() {
        return f64::NAN;
    }
    let sin2_lat = (z / r) * (z / r);
    // Ellipsoid radius at geocentric latitude, first order in the flattening.
    let surface_km = WGS84_A_KM * (1.0 - WGS84_F * sin2_lat);
    r - surface_km
}

fn to_sgp4_elements(set: &ElementSet) -> sgp4::Elements {
    sgp4::Elements {
        object_name: Some(set.name.clone()),
        international_designator: Some(set.international_designator.clone()),
        norad_id: u64::from(set.catalog_number),
        classification: match set.classification {
            'C' => sgp4::Classification::Classified,
            'S' => sgp4::Classification::Secret,
            _ => sgp4::Classification::Unclassified,
        },
        datetime: set.epoch.to_naive(),
        mean_motion_dot: set.mean_motion_dot_rev_day2,
        mean_motion_ddot: set.mean_motion_ddot_rev_day3,
        drag_term: set.bstar_per_earth_radii,
        element_set_number: u64::from(set.element_set_number),
        inclination: set.inclination_deg,
        right_ascension: set.raan_deg,
        eccentricity: set.eccentricity,
        argument_of_perigee: set.arg_perigee_deg,
        mean_anomaly: set.mean_anomaly_deg,
        mean_motion: set.mean_motion_rev_day,
        revolution_number: u64::from(set.revolution_number),
        ephemeris_type: set.ephemeris_type,
    }
}

/// A regular time grid: `count` samples from `start`, `step_s` apart.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TimeGrid {
    pub start: UtcTime,
    pub step_s: f64,
    pub count: usize,
}

impl TimeGrid {
    /// Grid covering `[start, end]` (the last sample is at or before `end`).
    pub fn covering(start: UtcTime, end: UtcTime, step_s: f64) -> Self {
        let span = end.s_since(start);
        let count = if step_s > 0.0 && span >= 0.0 {
            (span / step_s + 1e-9).floor() as usize + 1
        } else {
            0
        };
        TimeGrid {
            start,
            step_s,
            count,
        }
    }

    pub fn time(&self, i: usize) -> UtcTime {
        self.start.add_s(self.step_s * i as f64)
    }
}

/// One satellite's states on a grid: one entry per grid time.
pub type GridSamples = Vec<Result<StateTeme, PropagationError>>;

/// Propagates every satellite over the grid, in parallel across satellites,
/// handing each satellite's samples to `sink(index, samples)` as soon as they
/// are ready (so a caller can reduce them without holding the whole batch).
/// A failure at one time is recorded for that time and the rest go on.
pub fn propagate_grid_with<F>(props: &[Propagator], grid: TimeGrid, sink: F)
where
    F: Fn(usize, &[Result<StateTeme, PropagationError>]) + Sync,
{
    props.par_iter().enumerate().for_each_init(
        || Vec::with_capacity(grid.count),
        |buf, (i, prop)| {
            buf.clear();
            let mut cursor = prop.cursor();
            buf.extend((0..grid.count).map(|k| cursor.state_at(grid.time(k))));
            sink(i, buf);
        },
    );
}

/// Propagates every satellite over the grid and collects all samples.
pub fn propagate_grid(props: &[Propagator], grid: TimeGrid) -> Vec<GridSamples> {
    props
        .par_iter()
        .map(|prop| {
            let mut cursor = prop.cursor();
            (0..grid.count)
                .map(|k| cursor.state_at(grid.time(k)))
                .collect()
        })
        .collect()
}
