//! Planning on top of `passlane-orbit`: contact windows ([`passes`]), station
//! definitions ([`station`]), the scenario file ([`scenario`]), close-approach
//! screening ([`screen`]), encounter geometry and collision probability
//! ([`encounter`], [`pc`]), CCSDS conjunction messages ([`cdm`]), the
//! network contact plan ([`schedule`]) and its hand-off files ([`export`]:
//! CSV, JSON, iCalendar, pointing tables, CCSDS OEM).
//!
//! Architecture invariant: this crate has no GUI dependency and does no file
//! I/O of its own: readers take text, writers take any `std::io::Write`.

pub mod passes;
pub mod scenario;
pub mod station;

// The network plan and the files handed on from it.
pub mod export;
pub mod schedule;

// Conjunction assessment: encounter geometry, collision probability, CDM files.
pub mod cdm;
pub mod conjunction;
pub mod encounter;
pub mod pc;
pub mod screen;

pub use passes::{Pass, PassOptions, PassReport, Progress, Silent, find_passes, pointing_table};
pub use scenario::Scenario;
pub use schedule::{Plan, PlanError, plan_scenario};
pub use station::Station;
