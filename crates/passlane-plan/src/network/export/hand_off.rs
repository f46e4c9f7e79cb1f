//! The set of files a network plan hands on, as data: relative paths and
//! contents, ready for a file writer (the command line and the window both
//! give it to `passlane-files`, which writes the folder).
//!
//! Layout: `plan.csv`, `plan.json`, `plan.ics`, `pointing/*.csv` (one per
//! kept contact, direct SGP4 every `pointing_step_s`) and `oem/*.oem` or
//! `oem/*.xml` (CCSDS 502.0-B-3 OEM, KVN or XML, one per planned spacecraft). A contact or spacecraft whose table cannot be
//! computed (propagation failure) is left out with a warning rather than
//! failing the whole hand-off.
//!
//! The contents are built in memory: a week's plan for a few dozen
//! spacecraft is a few megabytes of pointing tables.

use std::io;

use passlane_orbit::{EarthOrientation, ElementSet, UtcTime};

use super::oem::{OemFrame, OemOptions, oem_extension};
use super::{oem_states, oem_step_s, pointing_file_name, write_icalendar, write_oem};
use super::{write_plan_csv, write_plan_json, write_pointing_csv};
use crate::pointing::pointing_table_between;
use crate::sampling::{MAX_SAMPLES, StepError, TableError, check_step, row_count};
use crate::schedule::Plan;
use crate::station::Station;
use passlane_orbit::ephemeris::OemFormat;

/// One file of a hand-off folder.
#[derive(Debug, Clone, PartialEq)]
pub struct HandOffFile {
    /// Path inside the folder, `/`-separated (e.g. `pointing/90001_....csv`).
    pub relative_path: String,
    pub contents: Vec<u8>,
}

/// Every file of a hand-off folder, and what was left out.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct HandOff {
    pub files: Vec<HandOffFile>,
    /// Contacts or spacecraft left out, each with the reason.
    pub warnings: Vec<String>,
}

/// What the hand-off needs besides the plan.
#[derive(Debug, Clone, Copy)]
pub struct HandOffContext<'a> {
    /// The element sets the plan was made from.
    pub fleet: &'a [ElementSet],
    /// The stations the plan was made on (contacts name them).
    pub stations: &'a [Station],
    pub earth_orientation: EarthOrientation,
    /// Calendar name (the scenario's name, or a default).
    pub calendar_name: &'a str,
    /// `ORIGINATOR` of the OEM files (the operator, or a default).
    pub originator: &'a str,
    /// Creation time written into the calendar and the OEM files.
    pub created: UtcTime,
    /// Sampling step of the pointing tables, s.
    pub pointing_step_s: f64,
    /// Form and frame of the OEM files.
    pub oem_format: OemFormat,
    pub oem_frame: OemFrame,
}

fn render(fill: impl FnOnce(&mut Vec<u8>) -> io::Result<()>) -> Vec<u8> {
    let mut out = Vec::new();
    // invariant: writing into a Vec<u8> cannot fail; the writers return
    // io::Result only because they accept any writer.
    let _ = fill(&mut out);
    out
}

/// Builds every file of the plan's hand-off folder. The pointing step is
/// checked first, and so is the number of pointing rows of all contacts
/// together (the files are built in memory): both against the limits of
/// [`crate::sampling`], before anything is computed.
pub fn hand_off_files(plan: &Plan, ctx: &HandOffContext<'_>) -> Result<HandOff, StepError> {
    check_step(ctx.pointing_step_s)?;
    let mut total_rows = 0.0;
    for c in &plan.contacts {
        total_rows += match row_count(c.los.s_since(c.aos), ctx.pointing_step_s) {
            Ok(n) => n as f64,
            Err(e) => return Err(e),
        };
    }
    if total_rows > MAX_SAMPLES as f64 {
        return Err(StepError::TooManySamples {
            rows: total_rows,
            step_s: ctx.pointing_step_s,
        });
    }
    let mut h = HandOff::default();
    let mut add = |path: String, contents: Vec<u8>| {
        h.files.push(HandOffFile {
            relative_path: path,
            contents,
        })
    };
    add("plan.csv".into(), render(|w| write_plan_csv(w, plan)));
    add("plan.json".into(), render(|w| write_plan_json(w, plan)));
    add(
        "plan.ics".into(),
        render(|w| write_icalendar(w, plan, ctx.created, ctx.calendar_name)),
    );
    let mut warnings = Vec::new();
    let mut files = Vec::new();
    for c in &plan.contacts {
        let (Some(set), Some(station)) = (
            ctx.fleet
                .iter()
                .find(|s| s.catalog_number == c.catalog_number),
            ctx.stations.get(c.station_index),
        ) else {
            continue;
        };
        match pointing_table_between(
            set,
            station,
            c.aos,
            c.los,
            ctx.pointing_step_s,
            &ctx.earth_orientation,
        ) {
            Ok(rows) => files.push((
                format!("pointing/{}", pointing_file_name(c)),
                render(|w| write_pointing_csv(w, station, &rows)),
            )),
            Err(TableError::Step(e)) => return Err(e),
            Err(TableError::Propagation(e)) => warnings.push(format!(
                "no pointing table for {} at {}: {e}",
                c.spacecraft, c.aos
            )),
        }
    }
    for d in &plan.demand {
        let Some(set) = ctx
            .fleet
            .iter()
            .find(|s| s.catalog_number == d.catalog_number)
        else {
            continue;
        };
        match oem_states(set, plan.start, plan.end, oem_step_s(set)) {
            Ok(states) => files.push((
                format!(
                    "oem/{}_{}.{}",
                    set.catalog_number,
                    super::oem::slug_name(&set.name),
                    oem_extension(ctx.oem_format)
                ),
                render(|w| {
                    write_oem(
                        w,
                        set,
                        &states,
                        &OemOptions {
                            created: ctx.created,
                            originator: ctx.originator,
                            message_id: String::new(),
                            frame: ctx.oem_frame,
                            format: ctx.oem_format,
                        },
                    )
                }),
            )),
            Err(TableError::Step(e)) => return Err(e),
            Err(TableError::Propagation(e)) => {
                warnings.push(format!("no OEM for {}: {e}", set.name))
            }
        }
    }
    for (p, c) in files {
        add(p, c);
    }
    h.warnings = warnings;
    Ok(h)
}
