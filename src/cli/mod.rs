//! The command-line mode: `args` is the raw layer (clap structs: what each
//! command accepts); one module per command validates those into its settings
//! and calls the library, as the desktop app does.

pub mod args;
pub mod avoid_cmd;
pub mod cdm_cmd;
pub mod common;
pub mod elements_cmd;
pub mod ephemeris_cmd;
pub mod pass_json;
pub mod passes_cmd;
pub mod plan_cmd;
pub mod progress;
pub mod screen_cmd;
pub mod write_stress;
