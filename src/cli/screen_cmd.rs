//! `passlane screen` and `passlane cdm`: close approaches and conjunction messages.

use std::collections::HashMap;
use std::io::Write;
use std::path::PathBuf;

use anyhow::{Context, Result, bail};
use passlane_orbit::{ElementSet, UtcTime};
use passlane_plan::conjunction::{CdmContext, event_to_cdm};
use passlane_plan::job::{EventRow, ScreeningJob, screen_and_assess};
use passlane_plan::screen::ScreeningVolume;

use super::args::{MessageFormat, ScreenArgs};
use super::common::{self, Format, Sources};
use super::progress::Bar;
use passlane_plan::export::csv_field;

const CAUTION: &str = "Caution: screening on published mean elements is advisory. Defer to official conjunction \
messages and coordinate with the other operator before acting.";

/// `--box-km` or `--ellipsoid-km`: three positive sizes in km.
fn three(value: Option<&str>, name: &str) -> Result<Option<[f64; 3]>> {
    let Some(v) = value else {
        return Ok(None);
    };
    let parts: Vec<f64> = v
        .split(',')
        .map(|p| p.trim().parse::<f64>())
        .collect::<std::result::Result<_, _>>()
        .map_err(|_| anyhow::anyhow!("--{name} {v:?}: expected three numbers R,I,C in km"))?;
    match parts.as_slice() {
        [r, i, c] if [r, i, c].iter().all(|x| x.is_finite() && **x > 0.0) => Ok(Some([*r, *i, *c])),
        _ => bail!("--{name} {v:?}: expected three positive numbers R,I,C in km"),
    }
}

pub fn run(args: &ScreenArgs, out: &mut dyn Write) -> Result<()> {
    let inputs = common::gather(&Sources::new(&args.fleet, Some(&args.window)), false)?;
    let (start, end) = common::window(&inputs)?;
    let format = Format::from(args.format);
    let scenario = inputs.scenario.as_ref().map(|(_, s)| s);
    let defaults = scenario.map(|s| s.screening.clone()).unwrap_or_default();
    let threshold_km = args.threshold_km.unwrap_or(defaults.threshold_km);
    if threshold_km <= 0.0 {
        bail!("--threshold-km must be positive");
    }
    if let Some(r) = args.hard_body_radius_m
        && r <= 0.0
    {
        bail!("--hard-body-radius-m must be positive");
    }
    let volume = match (
        three(args.box_km.as_deref(), "box-km")?,
        three(args.ellipsoid_km.as_deref(), "ellipsoid-km")?,
    ) {
        (Some(_), Some(_)) => bail!("give --box-km or --ellipsoid-km, not both"),
        (Some([r, i, c]), None) => ScreeningVolume::Box {
            radial_km: r,
            in_track_km: i,
            cross_track_km: c,
        },
        (None, Some([r, i, c])) => ScreeningVolume::Ellipsoid {
            radial_km: r,
            in_track_km: i,
            cross_track_km: c,
        },
        (None, None) => ScreeningVolume::Sphere {
            radius_km: threshold_km,
        },
    };
    let mut catalog_paths: Vec<PathBuf> = args.catalog.clone();
    if catalog_paths.is_empty()
        && !args.all_vs_all
        && let Some((p, s)) = &inputs.scenario
        && args.fleet.elements.is_empty()
    {
        catalog_paths = s
            .catalog_files
            .iter()
            .map(|f| common::resolve(p, f))
            .collect();
    }
    let catalog: Option<Vec<ElementSet>> = if catalog_paths.is_empty() {
        None
    } else {
        Some(common::load_fleet(&catalog_paths, args.fleet.lenient)?)
    };
    let catalog = catalog.unwrap_or_default();
    common::check_element_age(
        &catalog,
        start,
        end,
        args.window.allow_stale,
        "the window (catalog)",
    )?;
    let default_scenario = passlane_plan::Scenario::default();
    let assumptions = scenario.unwrap_or(&default_scenario);
    let bar = Bar::new("screening", args.quiet.quiet);
    let outcome = screen_and_assess(
        &ScreeningJob {
            fleet: &inputs.sets,
            catalog: &catalog,
            all_vs_all: args.all_vs_all,
            start,
            end,
            volume,
            scenario: assumptions,
            hard_body_radius_override_m: args.hard_body_radius_m,
        },
        &bar,
    );
    bar.finish();
    let result = &outcome.result;
    let risks = &outcome.risks;
    let covariance = outcome.covariance;
    for d in &result.diagnostics {
        common::say(format!("{} ({}): {}", d.name, d.catalog_number, d.message));
    }
    let label = covariance.label();
    let rows: Vec<EventRow> = result
        .events
        .iter()
        .zip(risks)
        .map(|(e, r)| EventRow::new(e, r))
        .collect();
    // The CDM files are written before the results are printed, but a
    // failure there (full disk, a folder that cannot be made) must not hide
    // the results: it is reported, and the command fails, after them.
    let cdm_outcome = args.cdm_dir.as_ref().map(|dir| -> Result<()> {
        std::fs::create_dir_all(dir).with_context(|| format!("cannot create {}", dir.display()))?;
        let now = UtcTime::now();
        let originator = args.originator.as_str();
        let by_number: HashMap<u32, &ElementSet> = inputs
            .sets
            .iter()
            .chain(&catalog)
            .map(|s| (s.catalog_number, s))
            .collect();
        // One file per event, named by the pair and the TCA to the second
        // (not by its place in this run's list), so screening again updates
        // the event's file in place (each written atomically); two events of
        // one pair in the same second get the TCA's milliseconds as well.
        let mut names = std::collections::HashSet::new();
        let mut written = 0usize;
        let mut failed: Vec<anyhow::Error> = Vec::new();
        for (e, r) in result.events.iter().zip(risks) {
            let (Some(p), Some(s)) = (
                by_number.get(&e.primary_catalog_number),
                by_number.get(&e.secondary_catalog_number),
            ) else {
                continue;
            };
            let stamp: String = e
                .tca
                .to_iso_s()
                .chars()
                .filter(|c| c.is_ascii_digit())
                .collect();
            let mut message_id = format!(
                "{}_{}_{}",
                e.primary_catalog_number, e.secondary_catalog_number, stamp
            );
            if !names.insert(message_id.clone()) {
                let ms: String = e
                    .tca
                    .to_iso_ms()
                    .chars()
                    .filter(|c| c.is_ascii_digit())
                    .collect();
                message_id = format!(
                    "{}_{}_{}",
                    e.primary_catalog_number, e.secondary_catalog_number, ms
                );
                names.insert(message_id.clone());
            }
            let cdm = match event_to_cdm(
                e,
                p,
                s,
                r.as_ref().ok(),
                &covariance,
                &CdmContext {
                    originator,
                    message_id: message_id.clone(),
                    creation_date: now,
                    screen_start: start,
                    screen_stop: end,
                    volume,
                    earth_orientation: scenario.map(|s| s.earth_orientation).unwrap_or_default(),
                },
            ) {
                Ok(c) => c,
                Err(err) => {
                    failed.push(anyhow::Error::from(err).context(format!("CDM {message_id}")));
                    continue;
                }
            };
            let xml = args.cdm_format == MessageFormat::Xml;
            let path = dir.join(format!("{message_id}.{}", if xml { "xml" } else { "cdm" }));
            // Temporaries from an interrupted earlier run would otherwise pile up.
            passlane_files::remove_stale_temporaries(&path);
            // One event's failure leaves the others' files to be written.
            match passlane_files::write_atomic_with(&path, |w| {
                let mut buf = Vec::new();
                if xml {
                    cdm.write_xml(&mut buf)?;
                } else {
                    cdm.write_kvn(&mut buf)?;
                }
                w.write_all(&buf)
            }) {
                Ok(()) => written += 1,
                Err(err) => failed.push(
                    anyhow::Error::from(err).context(format!("cannot write {}", path.display())),
                ),
            }
        }
        eprintln!("wrote {written} CDM file(s) to {}", dir.display());
        match failed.len() {
            0 => Ok(()),
            n => {
                let first = failed.swap_remove(0);
                Err(first.context(format!(
                    "{n} of {} CDM file(s) not written to {}",
                    n + written,
                    dir.display()
                )))
            }
        }
    });
    match format {
        Format::Json => {
            common::write_json(&mut *out, &rows)?;
        }
        Format::Csv => {
            writeln!(
                out,
                "primary,primary_catalog_number,secondary,secondary_catalog_number,tca,miss_distance_km,radial_km,in_track_km,cross_track_km,relative_speed_km_s,approach_angle_deg,volume_entry,volume_exit,pc,pc_max,clipped,tca_inside_volume,interval_minima,interval_min_miss_km"
            )?;
            for r in &rows {
                let e = r.event;
                writeln!(
                    out,
                    "{},{},{},{},{},{:.4},{:.4},{:.4},{:.4},{:.4},{:.2},{},{},{},{},{},{},{},{:.4}",
                    csv_field(&e.primary),
                    e.primary_catalog_number,
                    csv_field(&e.secondary),
                    e.secondary_catalog_number,
                    e.tca.to_iso_us(),
                    e.miss_distance_km,
                    e.radial_km,
                    e.in_track_km,
                    e.cross_track_km,
                    e.relative_speed_km_s,
                    e.approach_angle_deg,
                    e.volume_entry.to_iso_us(),
                    e.volume_exit.to_iso_us(),
                    r.pc.map(|p| format!("{p:.3e}")).unwrap_or_default(),
                    r.pc_max.map(|p| format!("{p:.3e}")).unwrap_or_default(),
                    e.clipped,
                    e.tca_inside_volume,
                    e.interval_minima,
                    e.interval_min_miss_km
                )?;
            }
        }
        Format::Table => {
            writeln!(
                out,
                "Close approaches {} to {}: {} primary object(s){}, volume {}\n",
                start.to_iso_s(),
                end.to_iso_s(),
                outcome.primaries,
                outcome
                    .secondaries
                    .map(|n| format!(" vs {n} catalog object(s)"))
                    .unwrap_or_default(),
                describe_volume(&volume)
            )?;
            writeln!(
                out,
                "{:<16} {:<16} {:<24} {:>9} {:>9} {:>9} {:>9} {:>8} {:>10} {:>10}",
                "primary",
                "secondary",
                "TCA (UTC)",
                "miss km",
                "R km",
                "I km",
                "C km",
                "v km/s",
                "Pc*",
                "Pc max"
            )?;
            for r in &rows {
                let e = r.event;
                // Marks: ">" the TCA is the window's edge (clipped), "~" the
                // trajectory enters the volume away from the TCA, "+" one of
                // several minima of a pair that stays inside the volume.
                let mark = if e.clipped {
                    ">"
                } else if !e.tca_inside_volume {
                    "~"
                } else if e.interval_minima > 1 {
                    "+"
                } else {
                    " "
                };
                writeln!(
                    out,
                    "{} {} {:<23}{mark} {:>9.3} {:>9.3} {:>9.3} {:>9.3} {:>8.3} {:>10} {:>10}",
                    common::fit(&e.primary, 16),
                    common::fit(&e.secondary, 16),
                    e.tca.to_iso_ms(),
                    e.miss_distance_km,
                    e.radial_km,
                    e.in_track_km,
                    e.cross_track_km,
                    e.relative_speed_km_s,
                    r.pc.map(|p| format!("{p:.2e}"))
                        .unwrap_or_else(|| "-".into()),
                    r.pc_max
                        .map(|p| format!("{p:.2e}"))
                        .unwrap_or_else(|| "-".into()),
                )?;
            }
            writeln!(
                out,
                "\n{} event(s). R/I/C: secondary relative to primary in the primary's radial/in-track/cross-track frame.",
                rows.len()
            )?;
            if rows.iter().any(|r| {
                r.event.clipped || !r.event.tca_inside_volume || r.event.interval_minima > 1
            }) {
                writeln!(
                    out,
                    "> TCA at the window's edge (distance still falling or already rising there); ~ the volume is entered away from the TCA; + one of several minima while the pair stays inside the volume (see volume_entry/volume_exit in --format json)."
                )?;
            }
            writeln!(
                out,
                "*Pc with {label}{}; combined hard-body radius per event (see --format json).",
                if risks.iter().flatten().any(|r| r.covariance_source != label) {
                    " (a spacecraft with its own ephemeris covariance uses that instead; see --format json)"
                } else {
                    ""
                }
            )?;
            writeln!(
                out,
                "Pc max: largest probability over the covariance's size, the honest figure for element sets."
            )?;
            writeln!(out, "{CAUTION}")?;
        }
    }
    out.flush()?;
    match cdm_outcome {
        Some(Err(e)) => Err(e.context("the results above are complete; the CDM files are not")),
        _ => Ok(()),
    }
}

fn describe_volume(v: &ScreeningVolume) -> String {
    match *v {
        ScreeningVolume::Sphere { radius_km } => format!("sphere {radius_km} km"),
        ScreeningVolume::Box {
            radial_km,
            in_track_km,
            cross_track_km,
        } => {
            format!("box ±{radial_km}/{in_track_km}/{cross_track_km} km (R/I/C)")
        }
        ScreeningVolume::Ellipsoid {
            radial_km,
            in_track_km,
            cross_track_km,
        } => {
            format!("ellipsoid {radial_km}/{in_track_km}/{cross_track_km} km (R/I/C)")
        }
    }
}
