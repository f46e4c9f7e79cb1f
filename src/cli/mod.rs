//! The command-line mode: one module per subcommand, each a thin shell over
//! the library calls the desktop app uses too.

pub mod args;
pub mod common;
pub mod elements_cmd;
pub mod ephemeris_cmd;
pub mod passes_cmd;
pub mod screen_cmd;
pub mod plan_cmd;
