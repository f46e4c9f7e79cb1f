//! Close approaches: which objects come dangerously close, and how likely a
//! collision is.
//!
//! - [`screen`]: screening a fleet against itself or a catalog over a window
//!   (filters, time-stepped spatial grid, TCA refined with direct SGP4).
//! - [`encounter`]: RTN frames, relative geometry (RIC), covariance rotation
//!   and the encounter plane.
//! - [`pc`]: collision probability (2-D integral, Alfano's 1-D integral,
//!   Chan's series) and the maximum probability over covariance size.
//! - [`cdm`]: CCSDS conjunction data messages, read and written.
//! - [`conjunction`]: the assessment of screening events with the operator's
//!   assumed covariance, and CDMs made from events.
//! - [`avoid`]: what a burn does to a close approach, and the trade of burn
//!   time against Δv.
//! - [`job`]: the one sequence the command line and the window both run
//!   (screen, add the fleet's own pairs, sort, assess).

pub mod avoid;
pub mod cdm;
pub mod conjunction;
pub mod encounter;
pub mod job;
pub mod pc;
pub mod screen;
