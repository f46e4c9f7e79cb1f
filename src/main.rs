//! Passlane: contact windows, close approaches and hand-off files for
//! small-satellite operators. With a subcommand it runs in command-line mode
//! (for scripts and cron); without one it opens the desktop window.

mod cli;

use std::io::Write;
use std::path::PathBuf;
use std::process::ExitCode;

const HELP: &str = "\
Passlane: plan contacts and check close approaches for a small-satellite fleet.

usage:
  passlane                       open the desktop window on the demo scenario
  passlane open FILE             open the desktop window on a scenario file
  passlane --scenario FILE       the same
  passlane [...] --frame-stats   log the window's frame times to standard error
  passlane elements FILE...      what loaded from element files (TLE, OMM KVN/XML/JSON)
  passlane ephemeris ...         states on a time grid (TEME, Earth-fixed or geodetic)
  passlane passes ...            contact windows of each spacecraft over each station
  passlane track ...             pointing table (az/el/range/Doppler) of one pass
  passlane screen ...            close approaches in a fleet or against a catalog, with Pc
  passlane cdm FILE              re-assess a CCSDS conjunction data message
  passlane plan ...              network contact plan; calendar, pointing and OEM files

Run `passlane COMMAND --help` for a command's options.
Times are ISO 8601 UTC, e.g. 2026-12-01T12:00:00Z.

Cautions: element-set screening is advisory; defer to official conjunction
messages and coordinate with the other operator. Transmitting needs a licence
and follows local rules.
";

fn main() -> ExitCode {
    let argv: Vec<String> = std::env::args().skip(1).collect();
    if let Some(window) = window_request(&argv) {
        return match window {
            Ok(options) => open_window(options),
            Err(message) => {
                eprintln!("passlane: {message}\n\n{HELP}");
                ExitCode::from(2)
            }
        };
    }
    let Some(command) = argv.first() else {
        println!("{HELP}");
        return ExitCode::SUCCESS;
    };
    let rest = &argv[1..];
    let stdout = std::io::stdout();
    let mut out = std::io::BufWriter::new(stdout.lock());
    let (usage, result) = match command.as_str() {
        "-h" | "--help" | "help" => {
            println!("{HELP}");
            return ExitCode::SUCCESS;
        }
        "elements" => (
            cli::elements_cmd::USAGE,
            run_or_help(
                rest,
                cli::elements_cmd::USAGE,
                &mut out,
                cli::elements_cmd::run,
            ),
        ),
        "ephemeris" => (
            cli::ephemeris_cmd::USAGE,
            run_or_help(
                rest,
                cli::ephemeris_cmd::USAGE,
                &mut out,
                cli::ephemeris_cmd::run,
            ),
        ),
        "passes" => (
            cli::passes_cmd::USAGE,
            run_or_help(rest, cli::passes_cmd::USAGE, &mut out, cli::passes_cmd::run),
        ),
        "track" => (
            cli::passes_cmd::TRACK_USAGE,
            run_or_help(
                rest,
                cli::passes_cmd::TRACK_USAGE,
                &mut out,
                cli::passes_cmd::run_track,
            ),
        ),
        "screen" => (
            cli::screen_cmd::USAGE,
            run_or_help(rest, cli::screen_cmd::USAGE, &mut out, cli::screen_cmd::run),
        ),
        "cdm" => (
            cli::screen_cmd::CDM_USAGE,
            run_or_help(
                rest,
                cli::screen_cmd::CDM_USAGE,
                &mut out,
                cli::screen_cmd::run_cdm,
            ),
        ),
        "plan" => (
            cli::plan_cmd::USAGE,
            run_or_help(rest, cli::plan_cmd::USAGE, &mut out, cli::plan_cmd::run),
        ),
        // Hidden: a test kills this process in the middle of saves (see
        // tests/hardening.rs); not a user command, so not in the help.
        "__write-stress" => (
            "passlane __write-stress PATH [BYTES [FIRST_ROUND]]",
            cli::write_stress::run(rest, &mut out),
        ),
        other => {
            eprintln!("passlane: unknown command {other:?}\n\n{HELP}");
            return ExitCode::from(2);
        }
    };
    let flushed = out.flush();
    match result.and(flushed.map_err(anyhow::Error::from)) {
        Ok(()) => ExitCode::SUCCESS,
        // A reader that stops early (`| head`) is not an error.
        Err(e) if is_broken_pipe(&e) => ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("passlane {command}: error: {e:#}");
            eprintln!("usage: {usage}");
            ExitCode::FAILURE
        }
    }
}

/// Whether the arguments ask for the window (no subcommand, `open FILE`,
/// `--scenario FILE`, `--frame-stats`), and with which options. `None` means
/// command-line mode.
fn window_request(argv: &[String]) -> Option<Result<passlane_gui::RunOptions, String>> {
    let mut rest = argv;
    let mut options = passlane_gui::RunOptions::default();
    if rest.first().map(String::as_str) == Some("open") {
        let Some(file) = rest.get(1) else {
            return Some(Err("open: give a scenario file".into()));
        };
        options.scenario = Some(PathBuf::from(file));
        rest = &rest[2..];
    } else if rest
        .first()
        .is_some_and(|a| !a.starts_with("--") || a == "--help")
    {
        // A subcommand (or help): command-line mode.
        return None;
    }
    let mut i = 0;
    while i < rest.len() {
        match rest[i].as_str() {
            "--frame-stats" => options.frame_stats = true,
            "--scenario" if options.scenario.is_none() => match rest.get(i + 1) {
                Some(file) => {
                    options.scenario = Some(PathBuf::from(file));
                    i += 1;
                }
                None => return Some(Err("--scenario: give a scenario file".into())),
            },
            other => return Some(Err(format!("unexpected argument {other:?} for the window"))),
        }
        i += 1;
    }
    Some(Ok(options))
}

/// Opens the desktop window; without a display, says so and points at the
/// command-line mode instead of failing somewhere inside the windowing stack.
fn open_window(options: passlane_gui::RunOptions) -> ExitCode {
    const NO_WINDOW: &str =
        "Run `passlane --help` for the command-line mode, which needs no display.";
    // The window is built for X11 only (see the GUI crate's manifest); without
    // a display server address there is nothing to connect to.
    if cfg!(all(unix, not(target_os = "macos")))
        && std::env::var_os("DISPLAY").is_none_or(|d| d.is_empty())
    {
        eprintln!(
            "passlane: cannot open the window: no display (DISPLAY is not set).\n{NO_WINDOW}"
        );
        return ExitCode::FAILURE;
    }
    match passlane_gui::run(options) {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("passlane: {e:#}\n{NO_WINDOW}");
            ExitCode::FAILURE
        }
    }
}

fn run_or_help(
    rest: &[String],
    usage: &str,
    out: &mut dyn Write,
    f: fn(&[String], &mut dyn Write) -> anyhow::Result<()>,
) -> anyhow::Result<()> {
    if rest.iter().any(|a| a == "--help" || a == "-h") {
        writeln!(out, "usage: {usage}")?;
        return Ok(());
    }
    f(rest, out)
}

fn is_broken_pipe(e: &anyhow::Error) -> bool {
    e.chain().any(|c| {
        c.downcast_ref::<std::io::Error>()
            .is_some_and(|io| io.kind() == std::io::ErrorKind::BrokenPipe)
    })
}
