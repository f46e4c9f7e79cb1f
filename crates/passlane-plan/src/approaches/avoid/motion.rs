//! Where a spacecraft is, with or without a burn.
//!
//! The manoeuvred trajectory is the usual one (SGP4, or whatever [`Motion`]
//! gives) plus the *difference* between two numerical propagations from the
//! usual state at the burn time: one with the impulse added to the velocity,
//! one without. Both use the same force model and integrator settings, so
//! everything they share (the force model's own errors against SGP4, the
//! frame held fixed) cancels in the difference, and the usual trajectory
//! keeps SGP4's accuracy where the burn changes nothing. With a zero burn the
//! two propagations are the same computation and the difference is exactly
//! zero.

use passlane_orbit::frames::Vec3;
use passlane_orbit::numerical::{
    Cartesian, Drag, ForceModel, IntegrationError, NumericalTrajectory, Tolerance,
};
use passlane_orbit::{PropagationError, Propagator, StateTeme, UtcTime};

use crate::encounter::{StateKm, rtn_basis};

/// Anything that gives a TEME state at a time: SGP4, an ephemeris, a
/// manoeuvred trajectory.
pub trait Motion: Sync {
    fn state_at(&self, t: UtcTime) -> Result<StateTeme, MotionError>;
}

/// Why a state could not be had.
#[derive(Debug, Clone, PartialEq)]
pub enum MotionError {
    Propagation(PropagationError),
    Integration(IntegrationError),
    /// A time outside the span the trajectory was computed for.
    OutsideSpan {
        time: UtcTime,
    },
}

impl std::fmt::Display for MotionError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            MotionError::Propagation(e) => write!(f, "{e}"),
            MotionError::Integration(e) => write!(f, "{e}"),
            MotionError::OutsideSpan { time } => {
                write!(f, "{time} is outside the span the burn was propagated over")
            }
        }
    }
}

impl std::error::Error for MotionError {}

impl From<PropagationError> for MotionError {
    fn from(e: PropagationError) -> Self {
        MotionError::Propagation(e)
    }
}

impl From<IntegrationError> for MotionError {
    fn from(e: IntegrationError) -> Self {
        MotionError::Integration(e)
    }
}

impl Motion for Propagator {
    fn state_at(&self, t: UtcTime) -> Result<StateTeme, MotionError> {
        Ok(Propagator::state_at(self, t)?)
    }
}

/// An impulsive burn: when, and the velocity change in the spacecraft's
/// radial / in-track / cross-track frame at that moment, m/s.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct Burn {
    pub time: UtcTime,
    pub dv_ric_m_s: [f64; 3],
}

impl Burn {
    pub fn none(time: UtcTime) -> Self {
        Burn {
            time,
            dv_ric_m_s: [0.0; 3],
        }
    }
}

/// The usual trajectory plus the effect of one burn.
pub struct Manoeuvred<'a> {
    base: &'a dyn Motion,
    burn: Burn,
    with_burn: NumericalTrajectory,
    without_burn: NumericalTrajectory,
}

/// The velocity change of `burn` in the frame of the states (km/s), from its
/// RIC components in the frame of `state`.
pub fn dv_in_frame_km_s(state: &StateTeme, dv_ric_m_s: &[f64; 3]) -> Option<Vec3> {
    let m = rtn_basis(&StateKm {
        position_km: state.position_km,
        velocity_km_s: state.velocity_km_s,
    })?;
    // Rows of m are R, T (in-track), N (cross-track): dv = Mᵀ·dv_ric.
    Some(std::array::from_fn(|k| {
        (m[0][k] * dv_ric_m_s[0] + m[1][k] * dv_ric_m_s[1] + m[2][k] * dv_ric_m_s[2]) / 1000.0
    }))
}

impl<'a> Manoeuvred<'a> {
    /// Propagates the burn's effect from its time to `until` (after it).
    /// `drag` is the spacecraft's, e.g. from its element set's B*.
    pub fn new(
        base: &'a dyn Motion,
        burn: Burn,
        drag: Option<Drag>,
        until: UtcTime,
    ) -> Result<Self, MotionError> {
        Self::with_model(base, burn, ForceModel::zonal(drag), until)
    }

    /// As [`Manoeuvred::new`] with another force model (e.g. two-body, to
    /// compare with a linear theory).
    pub fn with_model(
        base: &'a dyn Motion,
        burn: Burn,
        model: ForceModel,
        until: UtcTime,
    ) -> Result<Self, MotionError> {
        let s = base.state_at(burn.time)?;
        let dv = dv_in_frame_km_s(&s, &burn.dv_ric_m_s)
            .ok_or(MotionError::Integration(IntegrationError::BadInput))?;
        let start = Cartesian {
            position_km: s.position_km,
            velocity_km_s: s.velocity_km_s,
        };
        let kicked = Cartesian {
            position_km: s.position_km,
            velocity_km_s: std::array::from_fn(|k| s.velocity_km_s[k] + dv[k]),
        };
        let end = until.max(burn.time);
        let tol = Tolerance::default();
        let without_burn = NumericalTrajectory::propagate(model, burn.time, start, end, tol)?;
        let with_burn = NumericalTrajectory::propagate(model, burn.time, kicked, end, tol)?;
        Ok(Manoeuvred {
            base,
            burn,
            with_burn,
            without_burn,
        })
    }

    pub fn burn(&self) -> Burn {
        self.burn
    }

    /// Last time the effect was propagated to.
    pub fn until(&self) -> UtcTime {
        self.with_burn.span().1
    }

    /// The burn's effect at `t`: manoeuvred minus usual, (km, km/s).
    pub fn difference(&self, t: UtcTime) -> Result<(Vec3, Vec3), MotionError> {
        if t < self.burn.time {
            return Ok(([0.0; 3], [0.0; 3]));
        }
        let (Some(a), Some(b)) = (self.with_burn.state_at(t), self.without_burn.state_at(t)) else {
            return Err(MotionError::OutsideSpan { time: t });
        };
        Ok((
            std::array::from_fn(|k| a.position_km[k] - b.position_km[k]),
            std::array::from_fn(|k| a.velocity_km_s[k] - b.velocity_km_s[k]),
        ))
    }
}

impl Motion for Manoeuvred<'_> {
    fn state_at(&self, t: UtcTime) -> Result<StateTeme, MotionError> {
        let s = self.base.state_at(t)?;
        let (dr, dv) = self.difference(t)?;
        Ok(StateTeme {
            time: t,
            position_km: std::array::from_fn(|k| s.position_km[k] + dr[k]),
            velocity_km_s: std::array::from_fn(|k| s.velocity_km_s[k] + dv[k]),
        })
    }
}

/// A trajectory from one state, numerically propagated both ways (for the
/// objects of a CDM, which come as states at TCA without element sets).
pub struct FromState {
    trajectory: NumericalTrajectory,
    /// A second piece when the span reaches both sides of the state's time.
    other_side: Option<NumericalTrajectory>,
}

impl FromState {
    /// Covers `from..=to` around the state's own time.
    pub fn new(
        state: &StateTeme,
        drag: Option<Drag>,
        from: UtcTime,
        to: UtcTime,
    ) -> Result<Self, MotionError> {
        let model = ForceModel::zonal(drag);
        let c = Cartesian {
            position_km: state.position_km,
            velocity_km_s: state.velocity_km_s,
        };
        let tol = Tolerance::default();
        let forward =
            NumericalTrajectory::propagate(model, state.time, c, to.max(state.time), tol)?;
        let backward = if from < state.time {
            Some(NumericalTrajectory::propagate(
                model, state.time, c, from, tol,
            )?)
        } else {
            None
        };
        Ok(FromState {
            trajectory: forward,
            other_side: backward,
        })
    }
}

impl Motion for FromState {
    fn state_at(&self, t: UtcTime) -> Result<StateTeme, MotionError> {
        let c = self
            .trajectory
            .state_at(t)
            .or_else(|| self.other_side.as_ref().and_then(|b| b.state_at(t)))
            .ok_or(MotionError::OutsideSpan { time: t })?;
        Ok(StateTeme {
            time: t,
            position_km: c.position_km,
            velocity_km_s: c.velocity_km_s,
        })
    }
}
