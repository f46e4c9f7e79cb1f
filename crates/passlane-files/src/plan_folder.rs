//! The network plan's hand-off folder, written the same way by the command
//! line (`passlane plan --out DIR`) and the desktop app (Plan → Export).
//!
//! Layout: `plan.csv`, `plan.json`, `plan.ics`, `pointing/*.csv` (one per kept
//! contact) and `oem/*.oem` (one per spacecraft). Every file goes through
//! [`crate::write_atomic_with`]; a contact or spacecraft whose table cannot be
//! made is skipped with a warning rather than failing the whole export.

use std::io::Write;
use std::path::{Path, PathBuf};

use passlane_orbit::{ElementSet, UtcTime};
use passlane_plan::Scenario;
use passlane_plan::export;
use passlane_plan::passes::pointing_table_between;
use passlane_plan::schedule::Plan;

/// What an export wrote.
#[derive(Debug, Clone, PartialEq)]
pub struct FolderSummary {
    pub dir: PathBuf,
    pub files: usize,
    /// Contacts or spacecraft skipped, each with the reason.
    pub warnings: Vec<String>,
}

fn write_file(
    path: &Path,
    fill: impl FnOnce(&mut dyn Write) -> std::io::Result<()>,
) -> Result<(), String> {
    // Temporaries of an earlier, interrupted run would otherwise pile up.
    crate::remove_stale_temporaries(path);
    crate::write_atomic_with(path, fill)
        .map_err(|e| format!("cannot write {}: {e}", path.display()))
}

fn create_dir(dir: &Path) -> Result<(), String> {
    std::fs::create_dir_all(dir).map_err(|e| format!("cannot create {}: {e}", dir.display()))
}

/// Writes the plan's hand-off files into `dir` (created if needed), with
/// pointing tables every `pointing_step_s` seconds.
pub fn write_plan_folder(
    dir: &Path,
    plan: &Plan,
    fleet: &[ElementSet],
    scenario: &Scenario,
    created: UtcTime,
    pointing_step_s: f64,
) -> Result<FolderSummary, String> {
    create_dir(dir)?;
    let mut warnings = Vec::new();
    write_file(&dir.join("plan.csv"), |w| export::write_plan_csv(w, plan))?;
    write_file(&dir.join("plan.json"), |w| export::write_plan_json(w, plan))?;
    let name = if scenario.name.is_empty() {
        "Passlane plan"
    } else {
        scenario.name.as_str()
    };
    write_file(&dir.join("plan.ics"), |w| {
        export::write_icalendar(w, plan, created, name)
    })?;
    let mut files = 3;
    let pointing_dir = dir.join("pointing");
    create_dir(&pointing_dir)?;
    for c in &plan.contacts {
        let (Some(set), Some(station)) = (
            fleet.iter().find(|s| s.catalog_number == c.catalog_number),
            scenario.stations.iter().find(|s| s.name == c.station),
        ) else {
            continue;
        };
        match pointing_table_between(
            set,
            station,
            c.aos,
            c.los,
            pointing_step_s,
            &scenario.earth_orientation,
        ) {
            Ok(rows) => {
                write_file(&pointing_dir.join(export::pointing_file_name(c)), |w| {
                    export::write_pointing_csv(w, station, &rows)
                })?;
                files += 1;
            }
            Err(e) => warnings.push(format!(
                "no pointing table for {} at {}: {e}",
                c.spacecraft, c.aos
            )),
        }
    }
    let oem_dir = dir.join("oem");
    create_dir(&oem_dir)?;
    let originator = if scenario.operator.is_empty() {
        "PASSLANE"
    } else {
        scenario.operator.as_str()
    };
    for d in &plan.demand {
        let Some(set) = fleet.iter().find(|s| s.catalog_number == d.catalog_number) else {
            continue;
        };
        match export::oem_states(set, plan.start, plan.end, export::oem_step_s(set)) {
            Ok(states) => {
                let file = oem_dir.join(format!(
                    "{}_{}.oem",
                    set.catalog_number,
                    export::oem::slug_name(&set.name)
                ));
                write_file(&file, |w| {
                    export::write_oem(w, set, &states, created, originator)
                })?;
                files += 1;
            }
            Err(e) => warnings.push(format!("no OEM for {}: {e}", set.name)),
        }
    }
    Ok(FolderSummary {
        dir: dir.to_path_buf(),
        files,
        warnings,
    })
}
