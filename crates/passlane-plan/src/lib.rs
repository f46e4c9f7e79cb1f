//! Planning on top of `passlane-orbit`: contact windows ([`passes`]), station
//! definitions ([`station`]), close-approach screening, collision probability,
//! CDM reading and writing, network schedules and hand-off exports.
//!
//! Architecture invariant: this crate has no GUI dependency and does no file
//! I/O of its own: readers take text, writers take any `std::io::Write`.

pub mod passes;
pub mod scenario;
pub mod station;

pub use passes::{Pass, PassOptions, PassReport, Progress, Silent, find_passes, pointing_table};
pub use scenario::Scenario;
pub use station::Station;
