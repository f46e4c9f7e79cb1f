//! The raw command line: what each command accepts, as clap structs. This
//! layer only checks the shape of the arguments (known options, values that
//! parse as numbers or ISO 8601 times, no stray positionals); what the values
//! mean together (a window whose end follows its start, positive steps and
//! thresholds, a station the scenario knows) is checked where each command
//! turns these into its settings, in its own module.
//!
//! Every option that takes a value also accepts a value starting with `-`
//! (`--ut1-utc-s -0.2`, `--min-elevation -2`), as the command line always did.

use std::path::PathBuf;

use clap::{Args, Parser, Subcommand, ValueEnum};
use passlane_orbit::UtcTime;

use super::common::Format;

const WINDOW_USAGE: &str = "\
passlane                       open the desktop window on the demo scenario
       passlane open FILE             open the desktop window on a scenario file
       passlane --scenario FILE       the same
       passlane [...] --frame-stats   log the window's frame times to standard error
       passlane COMMAND [OPTIONS]     command-line mode: one of the commands below";

const AFTER_HELP: &str = "\
Run `passlane COMMAND --help` for a command's options.
Times are ISO 8601 UTC, e.g. 2026-12-01T12:00:00Z.

Cautions: element-set screening is advisory; defer to official conjunction
messages and coordinate with the other operator. Transmitting needs a licence
and follows local rules.";

/// Under the help of the avoidance command.
const AVOID_CAUTION: &str = "\
Caution: results are advisory and come from published elements (or the CDM's
states). Coordinate any manoeuvre with the other operator and the responsible
screening service first; this tool plans, it does not command a spacecraft.";

/// Under the help of the commands that assess close approaches.
const CAUTION: &str = "\
Caution: screening on published mean elements is advisory. Defer to official
conjunction messages and coordinate with the other operator before acting.";

/// Passlane: plan contacts and check close approaches for a small-satellite fleet.
#[derive(Debug, Parser)]
#[command(
    name = "passlane",
    override_usage = WINDOW_USAGE,
    after_help = AFTER_HELP,
    // `passlane --scenario FILE` opens the window; `--scenario` of a command
    // goes after the command's name.
    args_conflicts_with_subcommands = true,
    // An option given twice keeps its last value, as the command line always did.
    args_override_self = true
)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Option<Command>,
    /// Open the window on this scenario file (JSON) [default: the demo scenario]
    #[arg(long, value_name = "FILE", allow_hyphen_values = true)]
    pub scenario: Option<PathBuf>,
    /// Log the window's frame times to standard error
    #[arg(long)]
    pub frame_stats: bool,
}

#[derive(Debug, Subcommand)]
pub enum Command {
    /// Open the desktop window on a scenario file
    Open(OpenArgs),
    /// What loaded from element files (TLE, OMM KVN/XML/JSON), with orbit figures
    Elements(ElementsArgs),
    /// States on a time grid (TEME, Earth-fixed or geodetic)
    Ephemeris(EphemerisArgs),
    /// Contact windows of each spacecraft over each station
    Passes(PassesArgs),
    /// Pointing table (az/el/range/Doppler) of one pass
    Track(TrackArgs),
    /// Close approaches in a fleet or against a catalog, with Pc
    #[command(after_help = CAUTION)]
    Screen(ScreenArgs),
    /// Re-assess a CCSDS conjunction data message
    #[command(after_help = CAUTION)]
    Cdm(CdmArgs),
    /// Network contact plan; calendar, pointing and OEM files
    Plan(PlanArgs),
    /// What a burn does to a close approach, and which burn, when, moves the spacecraft clear
    #[command(after_help = AVOID_CAUTION)]
    Avoid(AvoidArgs),
    /// Shell completion script on standard output
    #[command(
        after_help = "bash: passlane completions bash > ~/.local/share/bash-completion/completions/passlane\n\
zsh:  passlane completions zsh > \"${fpath[1]}/_passlane\"\n\
fish: passlane completions fish > ~/.config/fish/completions/passlane.fish"
    )]
    Completions(CompletionsArgs),
}

impl Command {
    /// The name the user typed, for error messages.
    pub fn name(&self) -> &'static str {
        match self {
            Command::Open(_) => "open",
            Command::Elements(_) => "elements",
            Command::Ephemeris(_) => "ephemeris",
            Command::Passes(_) => "passes",
            Command::Track(_) => "track",
            Command::Screen(_) => "screen",
            Command::Cdm(_) => "cdm",
            Command::Plan(_) => "plan",
            Command::Avoid(_) => "avoid",
            Command::Completions(_) => "completions",
        }
    }
}

#[derive(Debug, Args)]
pub struct OpenArgs {
    /// Scenario file (JSON)
    pub file: PathBuf,
    /// Log the window's frame times to standard error
    #[arg(long)]
    pub frame_stats: bool,
}

// ---------------------------------------------------------------------------
// Groups of options several commands share.

/// The fleet: element files and/or a scenario.
#[derive(Debug, Args)]
pub struct FleetArgs {
    /// Element file of the fleet (TLE, or OMM as KVN, XML or JSON); repeatable [default: the scenario's element_files]
    #[arg(
        long,
        value_name = "FILE",
        help_heading = "Inputs",
        allow_hyphen_values = true
    )]
    pub elements: Vec<PathBuf>,
    /// Operator ephemeris (CCSDS OEM, KVN or XML) that gives a spacecraft's motion: FILE, or CATALOG=FILE to say which catalog number it is; repeatable [default: the scenario's ephemeris_files]
    #[arg(
        long,
        value_name = "[CATALOG=]FILE",
        help_heading = "Inputs",
        allow_hyphen_values = true
    )]
    pub ephemeris: Vec<String>,
    /// Scenario file (JSON): fleet, stations, window and settings, each overridden by the options here [default: none]
    #[arg(
        long,
        value_name = "FILE",
        help_heading = "Inputs",
        allow_hyphen_values = true
    )]
    pub scenario: Option<PathBuf>,
    /// Load element records with a wrong checksum or extra columns, with a warning
    #[arg(long, help_heading = "Inputs")]
    pub lenient: bool,
}

#[derive(Debug, Args)]
pub struct StationArgs {
    /// Ground station NAME,LAT_DEG,LON_DEG,HEIGHT_M (degrees, metres), or a scenario station's name; repeatable [default: the scenario's stations]
    #[arg(
        long,
        value_name = "STATION",
        help_heading = "Inputs",
        allow_hyphen_values = true
    )]
    pub station: Vec<String>,
}

#[derive(Debug, Args)]
pub struct WindowArgs {
    /// Window start, ISO 8601 UTC [default: the scenario's window.start]
    #[arg(long, value_name = "ISO", value_parser = utc_time, help_heading = "Window", allow_hyphen_values = true)]
    pub start: Option<UtcTime>,
    /// Window end, ISO 8601 UTC, after the start [default: the scenario's window.end]
    #[arg(long, value_name = "ISO", value_parser = utc_time, help_heading = "Window", allow_hyphen_values = true)]
    pub end: Option<UtcTime>,
    /// Compute even with element sets more than 30 days from the window (refused otherwise: their results are confident and wrong)
    #[arg(long, help_heading = "Window")]
    pub allow_stale: bool,
}

#[derive(Debug, Args)]
pub struct EarthOrientationArgs {
    /// UT1-UTC in seconds, also used to read an Earth-fixed (ITRF) --ephemeris [default: the scenario's earth_orientation.ut1_utc_s, else 0]
    #[arg(long, value_name = "S", value_parser = finite_f64, help_heading = "Earth orientation", allow_hyphen_values = true)]
    pub ut1_utc_s: Option<f64>,
}

/// `--quiet` of the long commands.
#[derive(Debug, Args)]
pub struct QuietArgs {
    /// No progress bar on standard error (there is one only when standard error is a terminal)
    #[arg(long, help_heading = "Output")]
    pub quiet: bool,
}

// ---------------------------------------------------------------------------
// Output formats: each command lists only the ones it writes.

#[derive(Debug, Clone, Copy, ValueEnum)]
pub enum TableJson {
    Table,
    Json,
}

#[derive(Debug, Clone, Copy, ValueEnum)]
pub enum CsvJson {
    Csv,
    Json,
}

#[derive(Debug, Clone, Copy, ValueEnum)]
pub enum TableCsvJson {
    Table,
    Csv,
    Json,
}

impl From<TableJson> for Format {
    fn from(f: TableJson) -> Format {
        match f {
            TableJson::Table => Format::Table,
            TableJson::Json => Format::Json,
        }
    }
}

impl From<CsvJson> for Format {
    fn from(f: CsvJson) -> Format {
        match f {
            CsvJson::Csv => Format::Csv,
            CsvJson::Json => Format::Json,
        }
    }
}

impl From<TableCsvJson> for Format {
    fn from(f: TableCsvJson) -> Format {
        match f {
            TableCsvJson::Table => Format::Table,
            TableCsvJson::Csv => Format::Csv,
            TableCsvJson::Json => Format::Json,
        }
    }
}

// ---------------------------------------------------------------------------
// The commands.

#[derive(Debug, Args)]
pub struct ElementsArgs {
    /// Element files (TLE, or OMM as KVN, XML or JSON)
    #[arg(value_name = "FILE", required = true)]
    pub files: Vec<PathBuf>,
    /// Load element records with a wrong checksum or extra columns, with a warning
    #[arg(long, help_heading = "Inputs")]
    pub lenient: bool,
    /// Output format on standard output
    #[arg(long, value_enum, default_value_t = TableJson::Table, help_heading = "Output", allow_hyphen_values = true)]
    pub format: TableJson,
    /// Time at which the element sets' ages are given, ISO 8601 UTC [default: now]
    #[arg(long, value_name = "ISO", value_parser = utc_time, help_heading = "Output", allow_hyphen_values = true)]
    pub at: Option<UtcTime>,
}

// No doc comments on the values: clap would then lay the whole help out on
// two lines per option; the option's own line says what each value means.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum Frame {
    Teme,
    #[value(alias = "ecef", alias = "itrf")]
    EarthFixed,
    Geodetic,
}

#[derive(Debug, Args)]
pub struct EphemerisArgs {
    #[command(flatten)]
    pub fleet: FleetArgs,
    /// Only this spacecraft, by catalog number or name [default: every spacecraft]
    #[arg(
        long,
        value_name = "NAME_OR_NUMBER",
        help_heading = "Inputs",
        allow_hyphen_values = true
    )]
    pub satellite: Option<String>,
    #[command(flatten)]
    pub window: WindowArgs,
    /// Time between samples, seconds
    #[arg(long, value_name = "S", value_parser = finite_f64, default_value_t = 60.0, help_heading = "Window", allow_hyphen_values = true)]
    pub step_s: f64,
    /// Frame of the states: TEME (SGP4's) or Earth-fixed in km and km/s, or geodetic (WGS-84) latitude and longitude in degrees, altitude in km
    #[arg(long, value_enum, default_value_t = Frame::Teme, help_heading = "Output", allow_hyphen_values = true)]
    pub frame: Frame,
    /// Output format on standard output
    #[arg(long, value_enum, default_value_t = CsvJson::Csv, help_heading = "Output", allow_hyphen_values = true)]
    pub format: CsvJson,
    #[command(flatten)]
    pub earth_orientation: EarthOrientationArgs,
}

#[derive(Debug, Args)]
pub struct PassesArgs {
    #[command(flatten)]
    pub fleet: FleetArgs,
    #[command(flatten)]
    pub stations: StationArgs,
    #[command(flatten)]
    pub window: WindowArgs,
    /// Lowest elevation of a contact, degrees, -5 to 90 [default: each station's min_elevation_deg]
    #[arg(long, value_name = "DEG", value_parser = finite_f64, help_heading = "Contact", allow_hyphen_values = true)]
    pub min_elevation: Option<f64>,
    /// Output format on standard output
    #[arg(long, value_enum, default_value_t = TableCsvJson::Table, help_heading = "Output", allow_hyphen_values = true)]
    pub format: TableCsvJson,
    #[command(flatten)]
    pub quiet: QuietArgs,
    #[command(flatten)]
    pub earth_orientation: EarthOrientationArgs,
}

#[derive(Debug, Args)]
pub struct TrackArgs {
    #[command(flatten)]
    pub fleet: FleetArgs,
    #[command(flatten)]
    pub stations: StationArgs,
    /// The spacecraft, by catalog number or name (case-insensitive; a unique part of a name will do) [required]
    #[arg(
        long,
        value_name = "NAME_OR_NUMBER",
        help_heading = "Pass",
        allow_hyphen_values = true
    )]
    pub satellite: String,
    /// A time in the pass, or up to 30 minutes before its AOS, ISO 8601 UTC [required]
    #[arg(long, value_name = "ISO", value_parser = utc_time, help_heading = "Pass", allow_hyphen_values = true)]
    pub pass_start: UtcTime,
    /// Compute even with element sets more than 30 days from the pass (refused otherwise: their results are confident and wrong)
    #[arg(long, help_heading = "Pass")]
    pub allow_stale: bool,
    /// Lowest elevation of a contact, degrees, -5 to 90 [default: the station's min_elevation_deg]
    #[arg(long, value_name = "DEG", value_parser = finite_f64, help_heading = "Pass", allow_hyphen_values = true)]
    pub min_elevation: Option<f64>,
    /// Time between rows, seconds
    #[arg(long, value_name = "S", value_parser = finite_f64, default_value_t = 1.0, help_heading = "Output", allow_hyphen_values = true)]
    pub step_s: f64,
    /// Output format on standard output
    #[arg(long, value_enum, default_value_t = CsvJson::Csv, help_heading = "Output", allow_hyphen_values = true)]
    pub format: CsvJson,
    #[command(flatten)]
    pub earth_orientation: EarthOrientationArgs,
}

#[derive(Debug, Args)]
pub struct ScreenArgs {
    #[command(flatten)]
    pub fleet: FleetArgs,
    /// Element file of other objects to screen the fleet against; repeatable [default: the scenario's catalog_files, without --elements]
    #[arg(
        long,
        value_name = "FILE",
        help_heading = "Inputs",
        allow_hyphen_values = true
    )]
    pub catalog: Vec<PathBuf>,
    /// Screen every object (fleet and catalog) against every other
    #[arg(long, help_heading = "Inputs")]
    pub all_vs_all: bool,
    #[command(flatten)]
    pub window: WindowArgs,
    /// Radius of the screening sphere, km [default: the scenario's screening.threshold_km, else 5]
    #[arg(long, value_name = "KM", value_parser = finite_f64, help_heading = "Screening volume", allow_hyphen_values = true)]
    pub threshold_km: Option<f64>,
    /// A box instead: half-sizes radial, in-track, cross-track, km [default: the sphere]
    #[arg(
        long,
        value_name = "R,I,C",
        help_heading = "Screening volume",
        allow_hyphen_values = true
    )]
    pub box_km: Option<String>,
    /// An ellipsoid instead: semi-axes radial, in-track, cross-track, km [default: the sphere]
    #[arg(
        long,
        value_name = "R,I,C",
        help_heading = "Screening volume",
        allow_hyphen_values = true
    )]
    pub ellipsoid_km: Option<String>,
    /// Combined hard-body radius of every pair, metres [default: the sum of the two objects' radii in the scenario, else 5 m each]
    #[arg(long, value_name = "M", value_parser = finite_f64, help_heading = "Probability", allow_hyphen_values = true)]
    pub hard_body_radius_m: Option<f64>,
    /// Output format on standard output
    #[arg(long, value_enum, default_value_t = TableCsvJson::Table, help_heading = "Output", allow_hyphen_values = true)]
    pub format: TableCsvJson,
    /// Write one CCSDS CDM per event into this folder [default: write none]
    #[arg(
        long,
        value_name = "DIR",
        help_heading = "Output",
        allow_hyphen_values = true
    )]
    pub cdm_dir: Option<PathBuf>,
    /// Form of the CDMs written (CCSDS 508.0-B-1): KVN text or XML
    #[arg(long, value_enum, default_value_t = MessageFormat::Kvn, help_heading = "Output", allow_hyphen_values = true)]
    pub cdm_format: MessageFormat,
    /// ORIGINATOR of the CDMs written (uppercased; letters, digits, - and _)
    #[arg(
        long,
        value_name = "NAME",
        default_value = "PASSLANE",
        help_heading = "Output",
        allow_hyphen_values = true
    )]
    pub originator: String,
    #[command(flatten)]
    pub quiet: QuietArgs,
}

#[derive(Debug, Args)]
pub struct CdmArgs {
    /// CCSDS conjunction data messages (KVN or XML); several of one event show its trend
    #[arg(value_name = "FILE", required = true)]
    pub files: Vec<PathBuf>,
    /// Combined hard-body radius of the two objects, metres, overriding the message's [default: the radius this tool recorded in the message, else 10]
    #[arg(long, value_name = "M", value_parser = finite_f64, help_heading = "Probability", allow_hyphen_values = true)]
    pub hard_body_radius_m: Option<f64>,
    /// Output format on standard output
    #[arg(long, value_enum, default_value_t = TableJson::Table, help_heading = "Output", allow_hyphen_values = true)]
    pub format: TableJson,
}

#[derive(Debug, Args)]
pub struct AvoidArgs {
    #[command(flatten)]
    pub fleet: FleetArgs,
    /// Element file of other objects (the secondary may be there); repeatable [default: the scenario's catalog_files]
    #[arg(
        long,
        value_name = "FILE",
        help_heading = "Inputs",
        allow_hyphen_values = true
    )]
    pub catalog: Vec<PathBuf>,
    /// A CCSDS CDM (KVN) in place of --primary/--secondary/--tca: states and covariances from the message
    #[arg(
        long,
        value_name = "FILE",
        help_heading = "Inputs",
        allow_hyphen_values = true
    )]
    pub cdm: Option<PathBuf>,
    /// Catalog number of the spacecraft that would burn
    #[arg(long, value_name = "CATNUM", help_heading = "Encounter")]
    pub primary: Option<u32>,
    /// Catalog number of the other object
    #[arg(long, value_name = "CATNUM", help_heading = "Encounter")]
    pub secondary: Option<u32>,
    /// Time of closest approach, ISO 8601 UTC (the nearest distance minimum to it is used)
    #[arg(long, value_name = "ISO", value_parser = utc_time, help_heading = "Encounter", allow_hyphen_values = true)]
    pub tca: Option<UtcTime>,
    /// Time of the burn, ISO 8601 UTC, before the TCA
    #[arg(long, value_name = "ISO", value_parser = utc_time, help_heading = "Burn", allow_hyphen_values = true)]
    pub burn_time: Option<UtcTime>,
    /// Compute even with element sets more than 30 days from the TCA (refused otherwise: their results are confident and wrong)
    #[arg(long, help_heading = "Encounter")]
    pub allow_stale: bool,
    /// Velocity change radial, in-track, cross-track in the primary's frame at the burn, m/s
    #[arg(
        long,
        value_name = "R,I,C",
        help_heading = "Burn",
        allow_hyphen_values = true
    )]
    pub dv_ric_m_s: Option<String>,
    /// Instead of one burn: the trade of burn time against in-track dv
    #[arg(long, help_heading = "Trade", conflicts_with_all = ["burn_time", "dv_ric_m_s"])]
    pub trade: bool,
    /// Burn times of the trade, in orbits before TCA, comma-separated [default: 0.5,1,1.5,2,2.5,3]
    #[arg(
        long,
        value_name = "LIST",
        help_heading = "Trade",
        allow_hyphen_values = true
    )]
    pub orbits_before: Option<String>,
    /// In-track dv values of the trade, m/s, comma-separated, signed [default: +-0.001 to +-1 in 1-2-5 steps]
    #[arg(
        long,
        value_name = "LIST",
        help_heading = "Trade",
        allow_hyphen_values = true
    )]
    pub dv_m_s: Option<String>,
    /// Pc the burn must bring the encounter below (common practice: 1e-4)
    #[arg(long, value_name = "P", value_parser = finite_f64, default_value_t = 1e-4, help_heading = "Trade", allow_hyphen_values = true)]
    pub target_pc: f64,
    /// Miss distance the burn must reach, km
    #[arg(long, value_name = "KM", value_parser = finite_f64, default_value_t = 1.0, help_heading = "Trade", allow_hyphen_values = true)]
    pub target_miss_km: f64,
    /// Combined hard-body radius, metres [default: the scenario's radii of the two objects, else 5 m each]
    #[arg(long, value_name = "M", value_parser = finite_f64, help_heading = "Probability", allow_hyphen_values = true)]
    pub hard_body_radius_m: Option<f64>,
    /// How far after the burn to look for close approaches it creates or worsens, days
    #[arg(long, value_name = "DAYS", value_parser = finite_f64, default_value_t = 7.0, help_heading = "Consequences", allow_hyphen_values = true)]
    pub horizon_days: f64,
    /// How far after the burn to compare contact windows, hours
    #[arg(long, value_name = "H", value_parser = finite_f64, default_value_t = 24.0, help_heading = "Consequences", allow_hyphen_values = true)]
    pub contact_hours: f64,
    /// Output format on standard output
    #[arg(long, value_enum, default_value_t = TableJson::Table, help_heading = "Output", allow_hyphen_values = true)]
    pub format: TableJson,
    #[command(flatten)]
    pub quiet: QuietArgs,
}

#[derive(Debug, Args)]
pub struct PlanArgs {
    /// Scenario file (JSON) holding the network: stations, antennas, demands, pins and exclusions [required]
    #[arg(
        long,
        value_name = "FILE",
        help_heading = "Inputs",
        allow_hyphen_values = true
    )]
    pub scenario: PathBuf,
    /// Element file of the fleet (TLE, or OMM as KVN, XML or JSON); repeatable [default: the scenario's element_files]
    #[arg(
        long,
        value_name = "FILE",
        help_heading = "Inputs",
        allow_hyphen_values = true
    )]
    pub elements: Vec<PathBuf>,
    /// Operator ephemeris (CCSDS OEM, KVN or XML) that gives a spacecraft's motion: FILE, or CATALOG=FILE to say which catalog number it is; repeatable [default: the scenario's ephemeris_files]
    #[arg(
        long,
        value_name = "[CATALOG=]FILE",
        help_heading = "Inputs",
        allow_hyphen_values = true
    )]
    pub ephemeris: Vec<String>,
    /// Load element records with a wrong checksum or extra columns, with a warning
    #[arg(long, help_heading = "Inputs")]
    pub lenient: bool,
    #[command(flatten)]
    pub window: WindowArgs,
    /// Write plan.csv, plan.json, plan.ics, pointing/*.csv and oem/*.oem (or *.xml) into this folder [default: write no files]
    #[arg(
        long,
        value_name = "DIR",
        help_heading = "Output",
        allow_hyphen_values = true
    )]
    pub out: Option<PathBuf>,
    /// Output format on standard output
    #[arg(long, value_enum, default_value_t = TableJson::Table, help_heading = "Output", allow_hyphen_values = true)]
    pub format: TableJson,
    /// Time between rows of the pointing files, seconds
    #[arg(long, value_name = "S", value_parser = finite_f64, default_value_t = 1.0, help_heading = "Output", allow_hyphen_values = true)]
    pub pointing_step_s: f64,
    /// Form of the OEM files (CCSDS 502.0-B-3): KVN text or XML
    #[arg(long, value_enum, default_value_t = MessageFormat::Kvn, help_heading = "Output", allow_hyphen_values = true)]
    pub oem_format: MessageFormat,
    /// Frame of the OEM files: EME2000 (IAU 1976/1980 from SGP4's TEME) or TEME itself
    #[arg(long, value_enum, default_value_t = OemFrameArg::Eme2000, help_heading = "Output", allow_hyphen_values = true)]
    pub oem_frame: OemFrameArg,
    #[command(flatten)]
    pub quiet: QuietArgs,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum MessageFormat {
    Kvn,
    Xml,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum OemFrameArg {
    Eme2000,
    Teme,
}

#[derive(Debug, Clone, Copy, ValueEnum)]
pub enum Shell {
    Bash,
    Zsh,
    Fish,
}

#[derive(Debug, Args)]
pub struct CompletionsArgs {
    /// The shell to complete for
    #[arg(value_enum)]
    pub shell: Shell,
}

/// The hidden command's name: the crash-safety test kills this process in
/// the middle of saves (see tests/hardening.rs). Not a user command, so it is
/// parsed apart from [`Cli`]: neither the help, nor the completion scripts
/// (which list hidden commands too), nor the typo hints mention it.
pub const WRITE_STRESS: &str = "__write-stress";

/// `passlane __write-stress PATH [BYTES [FIRST_ROUND]]`: rewrites PATH
/// atomically until killed.
#[derive(Debug, Parser)]
#[command(name = "__write-stress", bin_name = "passlane __write-stress")]
pub struct WriteStressArgs {
    /// The file to rewrite
    pub path: PathBuf,
    /// Size of each version of the file, bytes
    #[arg(default_value_t = 1 << 20)]
    pub bytes: usize,
    /// Number of the first round (written into the file)
    #[arg(default_value_t = 0)]
    pub first_round: u64,
}

// ---------------------------------------------------------------------------
// Value parsers: the shape of one value, nothing more.

/// An ISO 8601 UTC time.
fn utc_time(text: &str) -> Result<UtcTime, String> {
    UtcTime::parse_iso(text).map_err(|e| e.to_string())
}

/// A finite number (surrounding blanks allowed).
fn finite_f64(text: &str) -> Result<f64, String> {
    match text.trim().parse::<f64>() {
        Ok(x) if x.is_finite() => Ok(x),
        _ => Err(format!("{text:?} is not a finite number")),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use clap::CommandFactory;

    #[test]
    fn the_command_line_definition_is_consistent() {
        // clap's own checks: no duplicate names, valid defaults, and so on.
        Cli::command().debug_assert();
        WriteStressArgs::command().debug_assert();
    }
}
