//! `passlane plan`: the network contact plan of a scenario, with its hand-off
//! files written into a folder.

use std::io::Write;
use std::path::{Path, PathBuf};

use anyhow::{Result, bail};
use passlane_orbit::{ElementSet, UtcTime};
use passlane_plan::export::{self, HandOffContext, hand_off_files};
use passlane_plan::schedule::{Method, Plan, plan_network};

use super::args::{MessageFormat, OemFrameArg, PlanArgs};
use super::common::{self, Format, Sources};
use super::progress::Bar;

pub fn run(args: &PlanArgs, out: &mut dyn Write) -> Result<()> {
    let sources = Sources {
        scenario: Some(&args.scenario),
        elements: &args.elements,
        ephemerides: &args.ephemeris,
        stations: &[],
        start: args.window.start,
        end: args.window.end,
        lenient: args.lenient,
        allow_stale: args.window.allow_stale,
        ut1_utc_s: None,
    };
    let inputs = common::gather(&sources, true)?;
    let (start, end) = common::window(&inputs)?;
    let format = Format::from(args.format);
    let pointing_step_s = args.pointing_step_s;
    passlane_plan::sampling::check_step(pointing_step_s)
        .map_err(|e| anyhow::anyhow!("--pointing-step-s: {e}"))?;
    let Some((scenario_path, scenario)) = &inputs.scenario else {
        bail!("--scenario FILE is required");
    };
    let bar = Bar::new("plan", args.quiet.quiet);
    let plan = plan_network(scenario, &inputs.sets, start, end, &bar);
    bar.finish();
    let plan = plan.map_err(|e| anyhow::anyhow!("{}: {e}", scenario_path.display()))?;
    for w in &plan.warnings {
        common::say(format!("warning: {w}"));
    }
    let created = UtcTime::now();
    let written = match &args.out {
        Some(dir) => Some(write_outputs(
            dir,
            &plan,
            &inputs.sets,
            scenario,
            created,
            pointing_step_s,
            args,
        )?),
        None => None,
    };
    match format {
        Format::Json => {
            export::write_plan_json(out, &plan)?;
        }
        _ => write_summary(out, &plan, written.as_ref())?,
    }
    Ok(())
}

/// What went into the output folder.
struct Written {
    dir: PathBuf,
    files: usize,
    /// Files of an earlier hand-off in the folder: replaced, removed.
    replaced: usize,
    removed: usize,
}

fn write_outputs(
    dir: &Path,
    plan: &Plan,
    sets: &[ElementSet],
    scenario: &passlane_plan::Scenario,
    created: UtcTime,
    pointing_step_s: f64,
    args: &PlanArgs,
) -> Result<Written> {
    let hand_off = hand_off_files(
        plan,
        &HandOffContext {
            fleet: sets,
            stations: &scenario.stations,
            earth_orientation: scenario.earth_orientation,
            calendar_name: scenario.calendar_name(),
            originator: scenario.originator(),
            created,
            pointing_step_s,
            oem_format: match args.oem_format {
                MessageFormat::Kvn => passlane_orbit::ephemeris::OemFormat::Kvn,
                MessageFormat::Xml => passlane_orbit::ephemeris::OemFormat::Xml,
            },
            oem_frame: match args.oem_frame {
                OemFrameArg::Eme2000 => passlane_plan::export::OemFrame::Eme2000,
                OemFrameArg::Teme => passlane_plan::export::OemFrame::Teme,
            },
        },
    )
    .map_err(|e| anyhow::anyhow!("--pointing-step-s: {e}"))?;
    for w in &hand_off.warnings {
        common::say(format!("warning: {w}"));
    }
    let summary = passlane_files::folder::write_folder(
        dir,
        hand_off
            .files
            .iter()
            .map(|f| (f.relative_path.as_str(), f.contents.as_slice())),
        &export::is_hand_off_path,
    )
    .map_err(|e| anyhow::anyhow!(e))?;
    Ok(Written {
        dir: summary.dir,
        files: summary.files,
        replaced: summary.replaced.len(),
        removed: summary.removed.len(),
    })
}

fn pct(x: f64) -> String {
    format!("{:.0}%", 100.0 * x)
}

fn write_summary(out: &mut dyn Write, plan: &Plan, written: Option<&Written>) -> Result<()> {
    writeln!(
        out,
        "Network plan {} to {}: {} contact(s) kept from {} candidate(s); {}",
        plan.start.to_iso_s(),
        plan.end.to_iso_s(),
        plan.contacts.len(),
        plan.candidates,
        match plan.method {
            Method::Exact => "optimal (exhaustive search)",
            Method::Heuristic => "greedy + local search",
        }
    )?;
    writeln!(
        out,
        "Demand met: {} of the priority-weighted demand (no plan can exceed {} on these windows).\n",
        pct(plan.demand_met_fraction()),
        pct(if plan.max_score > 0.0 {
            plan.upper_bound / plan.max_score
        } else {
            1.0
        })
    )?;
    writeln!(
        out,
        "{:<16} {:>6} {:>4} {:>9} {:>12} {:>5}  short days",
        "spacecraft", "cat", "prio", "contacts", "volume MB", "met"
    )?;
    for d in &plan.demand {
        let contacts = match d.contacts_wanted {
            Some(w) => format!("{}/{:.0}", d.contacts, w),
            None => d.contacts.to_string(),
        };
        let volume = match d.volume_wanted_mb {
            Some(w) => format!("{:.0}/{:.0}", d.volume_mb, w),
            None => format!("{:.0}", d.volume_mb),
        };
        let short: Vec<String> = d
            .unmet_days
            .iter()
            .map(|u| u.day_start.to_iso_s()[5..10].to_string())
            .collect();
        writeln!(
            out,
            "{} {:>6} {:>4} {:>9} {:>12} {:>5}  {}",
            common::fit(&d.spacecraft, 16),
            d.catalog_number,
            d.priority,
            contacts,
            volume,
            pct(d.met_fraction),
            if short.is_empty() {
                "-".to_string()
            } else {
                short.join(" ")
            }
        )?;
    }
    writeln!(out, "\nConflicts resolved: {}", plan.conflicts.len())?;
    if plan.score + 1e-9 >= plan.upper_bound && plan.score + 1e-9 < plan.max_score {
        writeln!(
            out,
            "  (every shortfall above is for want of contact windows, not of antenna time)"
        )?;
    }
    const SHOWN: usize = 15;
    for c in plan.conflicts.iter().take(SHOWN) {
        writeln!(out, "  {}", c.describe())?;
    }
    if plan.conflicts.len() > SHOWN {
        writeln!(
            out,
            "  ... and {} more (all in plan.json)",
            plan.conflicts.len() - SHOWN
        )?;
    }
    match written {
        Some(w) => {
            writeln!(
                out,
                "\nWrote {} file(s) to {}: plan.csv, plan.json, plan.ics, pointing/*.csv, oem/*",
                w.files,
                w.dir.display()
            )?;
            if w.replaced + w.removed > 0 {
                writeln!(
                    out,
                    "The folder held an earlier hand-off: {} file(s) replaced, {} removed; it now holds this plan's files only.",
                    w.replaced, w.removed
                )?;
            }
        }
        None => writeln!(
            out,
            "\nNo files written (give --out DIR for the plan, calendar, pointing and OEM files)."
        )?,
    }
    Ok(())
}
