//! Passlane: contact windows, close approaches and hand-off files for
//! small-satellite operators. With a subcommand it runs in command-line mode
//! (for scripts and cron); without one it opens the desktop window.

mod cli;

use std::io::Write;
use std::path::PathBuf;
use std::process::ExitCode;

use clap::{CommandFactory, Parser};

use cli::args::{Cli, Command, Shell, WRITE_STRESS, WriteStressArgs};

fn main() -> ExitCode {
    if std::env::args_os()
        .nth(1)
        .is_some_and(|a| a == WRITE_STRESS)
    {
        return match WriteStressArgs::try_parse_from(std::env::args_os().skip(1)) {
            Ok(args) => run(WRITE_STRESS, |out| cli::write_stress::run(&args, out)),
            Err(e) => clap_outcome(&e),
        };
    }
    let cli = match Cli::try_parse() {
        Ok(cli) => cli,
        Err(e) => return clap_outcome(&e),
    };
    let command = match cli.command {
        None => return open_window(cli.scenario, cli.frame_stats),
        Some(Command::Open(open)) => return open_window(Some(open.file), open.frame_stats),
        Some(command) => command,
    };
    run(command.name(), |out| match &command {
        Command::Elements(args) => cli::elements_cmd::run(args, out),
        Command::Ephemeris(args) => cli::ephemeris_cmd::run(args, out),
        Command::Passes(args) => cli::passes_cmd::run(args, out),
        Command::Track(args) => cli::passes_cmd::run_track(args, out),
        Command::Screen(args) => cli::screen_cmd::run(args, out),
        Command::Cdm(args) => cli::cdm_cmd::run(args, out),
        Command::Plan(args) => cli::plan_cmd::run(args, out),
        Command::Avoid(args) => cli::avoid_cmd::run(args, out),
        Command::Completions(args) => completions(args.shell, out),
        // Handled above: the window writes nothing to standard output.
        Command::Open(_) => Ok(()),
    })
}

/// clap's own outcome: the help (on stdout, exit 0) or a usage error with a
/// hint (on stderr, exit 2). A reader that closed the pipe before the help
/// was printed is not worth a message.
fn clap_outcome(e: &clap::Error) -> ExitCode {
    let _ = e.print();
    ExitCode::from(u8::try_from(e.exit_code()).unwrap_or(2))
}

/// Runs one command with buffered standard output and reports how it ended.
fn run(name: &str, command: impl FnOnce(&mut dyn Write) -> anyhow::Result<()>) -> ExitCode {
    let stdout = std::io::stdout();
    let mut out = std::io::BufWriter::new(stdout.lock());
    let result = command(&mut out);
    let flushed = out.flush();
    match result.and(flushed.map_err(anyhow::Error::from)) {
        Ok(()) => ExitCode::SUCCESS,
        // A reader that stops early (`| head`) is not an error.
        Err(e) if is_broken_pipe(&e) => ExitCode::SUCCESS,
        // A runtime error (a file, a value that makes no sense): the message
        // alone; the usage is for usage errors, which clap reports.
        Err(e) => {
            eprintln!(
                "passlane {name}: error: {}",
                passlane_orbit::text::clean(&format!("{e:#}"), true)
            );
            ExitCode::FAILURE
        }
    }
}

/// Opens the desktop window; without a display, says so and points at the
/// command-line mode instead of failing somewhere inside the windowing stack.
fn open_window(scenario: Option<PathBuf>, frame_stats: bool) -> ExitCode {
    const NO_WINDOW: &str =
        "Run `passlane --help` for the command-line mode, which needs no display.";
    let options = passlane_gui::RunOptions {
        scenario,
        frame_stats,
    };
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

/// `passlane completions SHELL`: the completion script on standard output.
fn completions(shell: Shell, out: &mut dyn Write) -> anyhow::Result<()> {
    let shell = match shell {
        Shell::Bash => clap_complete::Shell::Bash,
        Shell::Zsh => clap_complete::Shell::Zsh,
        Shell::Fish => clap_complete::Shell::Fish,
    };
    // The generator panics when its writer fails; a buffer never does, and
    // the write below reports a closed pipe like every other command's.
    let mut script = Vec::new();
    clap_complete::generate(shell, &mut Cli::command(), "passlane", &mut script);
    out.write_all(&script)?;
    Ok(())
}

/// Whether the error is a write to a pipe whose reader has gone. serde_json
/// keeps the I/O error inside its own, and some writers wrap that again in an
/// `io::Error`, so each layer is looked at.
fn is_broken_pipe(e: &anyhow::Error) -> bool {
    fn json_broken(e: &serde_json::Error) -> bool {
        e.io_error_kind() == Some(std::io::ErrorKind::BrokenPipe)
    }
    e.chain().any(|c| {
        if let Some(io) = c.downcast_ref::<std::io::Error>() {
            io.kind() == std::io::ErrorKind::BrokenPipe
                || io
                    .get_ref()
                    .and_then(|inner| inner.downcast_ref::<serde_json::Error>())
                    .is_some_and(json_broken)
        } else {
            c.downcast_ref::<serde_json::Error>()
                .is_some_and(json_broken)
        }
    })
}
