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
//!
//! [`is_hand_off_path`] tells the file writer which paths of an existing
//! folder belong to an earlier hand-off (it replaces such a folder as a
//! whole and refuses any other).

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

/// Makes the paths unique ignoring case (a case-insensitive file system
/// would merge `CS-A` and `cs-a`): names that two entries share, e.g. the
/// antennas "CS A" and "CS-A" (both `CS-A` in a file name), get `-` and a
/// short hash of what the file is for (the unshortened names) before the
/// extension; the same for every run, whatever else the plan holds.
fn unique_names(files: &mut [(String, String, Vec<u8>)]) {
    use std::collections::{HashMap, HashSet};
    let mut count: HashMap<String, usize> = HashMap::new();
    for (p, _, _) in files.iter() {
        *count.entry(p.to_lowercase()).or_default() += 1;
    }
    let mut taken: HashSet<String> = files
        .iter()
        .filter(|(p, _, _)| count[&p.to_lowercase()] == 1)
        .map(|(p, _, _)| p.to_lowercase())
        .collect();
    for (p, key, _) in files.iter_mut() {
        if count[&p.to_lowercase()] == 1 {
            continue;
        }
        let (stem, ext) = match p.rfind('.') {
            Some(i) => (p[..i].to_string(), p[i..].to_string()),
            None => (p.clone(), String::new()),
        };
        let mut candidate = format!("{stem}-{}{ext}", super::short_hash(key));
        let mut n = 2;
        while !taken.insert(candidate.to_lowercase()) {
            candidate = format!("{stem}-{}-{n}{ext}", super::short_hash(key));
            n += 1;
        }
        *p = candidate;
    }
}

/// Whether `relative` (`/`-separated; a folder ends in `/`) is a path a
/// hand-off folder holds: the layout above, leftovers of an interrupted
/// write, and the files some desktops drop into every folder they show
/// (`.DS_Store`, `Thumbs.db`, `desktop.ini`: common practice).
pub fn is_hand_off_path(relative: &str) -> bool {
    let name = relative.rsplit('/').next().unwrap_or(relative);
    if matches!(name, ".DS_Store" | "Thumbs.db" | "desktop.ini")
        || name.contains(passlane_temp_marker())
    {
        return true;
    }
    match relative.split_once('/') {
        None => matches!(relative, "plan.csv" | "plan.json" | "plan.ics"),
        Some(("pointing", "")) | Some(("oem", "")) => true,
        Some(("pointing", f)) => !f.contains('/') && f.ends_with(".csv"),
        Some(("oem", f)) => !f.contains('/') && (f.ends_with(".oem") || f.ends_with(".xml")),
        _ => false,
    }
}

/// The marker of the file writer's temporaries (`passlane-files`, which this
/// crate does not depend on: it does no I/O).
fn passlane_temp_marker() -> &'static str {
    ".passlane-tmp-"
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
                format!(
                    "{}|{}|{}|{}",
                    c.catalog_number,
                    c.station,
                    c.antenna,
                    c.aos.to_iso_us()
                ),
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
                format!("{}|{}", set.catalog_number, set.name),
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
    unique_names(&mut files);
    for (p, _, c) in files {
        add(p, c);
    }
    h.warnings = warnings;
    Ok(h)
}
