//! Contact windows: when each spacecraft can talk to each ground station.
//!
//! - [`station`]: stations, horizon masks, mount limits, channels and
//!   antennas, validated once into a set with unique names.
//! - [`passes`]: the pass finder and the figures of each pass (AOS/LOS,
//!   maximum elevation, Doppler, sunlight, mount-rate warnings).
//! - [`pointing`]: pointing tables (azimuth, elevation, range, Doppler) from
//!   direct SGP4, and the part of a pass above an antenna's own limit.

pub mod passes;
pub mod pointing;
pub mod station;
