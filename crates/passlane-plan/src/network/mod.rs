//! The network plan and what is handed on from it.
//!
//! - [`schedule`]: which antenna serves which spacecraft (antennas, demands,
//!   candidates, the solver, the report), and the one sequence the command
//!   line and the window both run (pass search, then the plan).
//! - [`export`]: the hand-off files (plan CSV/JSON, iCalendar, pointing
//!   tables, CCSDS OEM), each written to any `std::io::Write`, and the set of
//!   files of a hand-off folder as data for the file writer.

pub mod export;
pub mod schedule;
