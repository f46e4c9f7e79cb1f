//! Planning on top of `passlane-orbit`, grouped by the operator's three jobs:
//!
//! - [`contacts`]: contact windows — stations ([`station`]), the pass finder
//!   ([`passes`]) and pointing tables ([`pointing`]);
//! - [`approaches`]: close approaches — screening ([`screen`]), encounter
//!   geometry ([`encounter`]), collision probability ([`pc`]), conjunction
//!   messages ([`cdm`]) and the assessment of events ([`conjunction`]);
//! - [`network`]: the network contact plan ([`schedule`]) and its hand-off
//!   files ([`export`]).
//!
//! Shared by all three: the scenario file ([`scenario`]), progress and
//! cancellation of long work ([`progress`]), the root finders and
//! minimisers ([`numeric`]), and the limits of sampled tables ([`sampling`]).
//!
//! Architecture invariant: this crate has no GUI dependency, does no file I/O
//! and never prints: readers take text, writers take any `std::io::Write`,
//! long computations take a [`Progress`].

pub mod approaches;
pub mod contacts;
pub mod network;
pub mod numeric;
pub mod progress;
pub mod sampling;
pub mod scenario;
pub mod scenario_keys;

// Each job's modules, also reachable from the crate root.
pub use approaches::{avoid, cdm, conjunction, encounter, job, pc, screen};
pub use contacts::{passes, pointing, station};
pub use network::{export, schedule};

pub use passes::{Pass, PassOptions, PassReport, find_passes};
pub use pointing::pointing_table;
pub use progress::{Progress, Silent};
pub use scenario::Scenario;
pub use schedule::{Plan, PlanError, plan_network, plan_scenario};
pub use station::Station;
