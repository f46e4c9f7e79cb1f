//! Element sets in, SGP4 out, Earth geometry around it.
//!
//! The chain every plan rests on: [`elements::load`] reads TLE and CCSDS OMM
//! text into validated [`ElementSet`]s (with a [`Diagnostic`] for every bad
//! record); [`Propagator`] runs SGP4 (the `sgp4` crate, WGS-72 compatibility
//! mode by default) to TEME states; [`frames`] turns them Earth-fixed, geodetic
//! and into look angles from a [`Site`]; [`sun`] gives the Sun and the shadow
//! state; [`OrbitSummary`] gives Kepler/vis-viva figures.
//!
//! This crate does no file I/O and never prints: callers pass bytes in and get
//! values and diagnostics back. No type of the `sgp4` crate appears in its API.
//! Time is [`UtcTime`] throughout; units are in every name (`_km`, `_deg`, `_s`).

pub mod constants;
pub mod elements;
pub mod ephemeris;
pub mod frames;
pub mod inertial;
pub mod interpolate;
pub mod numerical;
pub mod propagate;
pub mod summary;
pub mod sun;
pub mod text;
pub mod time;
pub mod xml;

pub use elements::{Diagnostic, ElementSet, LoadOptions, LoadReport, Severity, SourceRef};
pub use frames::{EarthFixed, EarthOrientation, Geodetic, LookAngles, Site, TemeToEarthFixed};
pub use propagate::{
    Cursor, GravityModel, PropagationError, Propagator, StateTeme, TimeGrid, propagate_grid,
    propagate_grid_with,
};
pub use summary::{
    OrbitSummary, REFUSE_AFTER_DAYS, STALE_AFTER_DAYS, days_outside_window, element_age_days,
    result_element_age_days, stale_sets, window_element_age_days,
};
pub use sun::{Illumination, shadow, shadow_margins, shadow_state, sun_position_teme_km};
pub use time::UtcTime;
