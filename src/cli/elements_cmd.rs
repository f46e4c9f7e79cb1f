//! `passlane elements FILE...`: what loaded, with orbit figures, and what did not.

use std::io::Write;
use std::path::PathBuf;

use anyhow::Result;
use passlane_orbit::{OrbitSummary, UtcTime, element_age_days};
use serde::Serialize;

use super::args::ElementsArgs;
use super::common::{self, Format};

#[derive(Serialize)]
struct Row<'a> {
    name: &'a str,
    catalog_number: u32,
    international_designator: &'a str,
    epoch: UtcTime,
    age_days: f64,
    period_min: f64,
    semi_major_axis_km: f64,
    perigee_altitude_km: f64,
    apogee_altitude_km: f64,
    inclination_deg: f64,
    eccentricity: f64,
    raan_deg: f64,
    arg_perigee_deg: f64,
    mean_anomaly_deg: f64,
    mean_motion_rev_day: f64,
    bstar_per_earth_radii: f64,
    specific_energy_km2_s2: f64,
    perigee_speed_km_s: f64,
    apogee_speed_km_s: f64,
    escape_speed_at_perigee_km_s: f64,
    source_file: &'a str,
    source_line: usize,
}

pub fn run(args: &ElementsArgs, out: &mut dyn Write) -> Result<()> {
    let format = Format::from(args.format);
    let at = args.at.unwrap_or_else(UtcTime::now);
    let paths: &[PathBuf] = &args.files;
    let report = common::load_elements(paths, args.lenient)?;
    if report.sets.is_empty() {
        // The diagnostics are on stderr already; a script must not read an
        // empty listing as success.
        anyhow::bail!("no element set loaded from {}", common::join_paths(paths));
    }
    let rows: Vec<Row> = report
        .sets
        .iter()
        .map(|s| {
            let o = OrbitSummary::of(s);
            Row {
                name: &s.name,
                catalog_number: s.catalog_number,
                international_designator: &s.international_designator,
                epoch: s.epoch,
                age_days: element_age_days(s, at),
                period_min: o.period_min,
                semi_major_axis_km: o.semi_major_axis_km,
                perigee_altitude_km: o.perigee_altitude_km,
                apogee_altitude_km: o.apogee_altitude_km,
                inclination_deg: s.inclination_deg,
                eccentricity: s.eccentricity,
                raan_deg: s.raan_deg,
                arg_perigee_deg: s.arg_perigee_deg,
                mean_anomaly_deg: s.mean_anomaly_deg,
                mean_motion_rev_day: s.mean_motion_rev_day,
                bstar_per_earth_radii: s.bstar_per_earth_radii,
                specific_energy_km2_s2: o.specific_energy_km2_s2,
                perigee_speed_km_s: o.perigee_speed_km_s,
                apogee_speed_km_s: o.apogee_speed_km_s,
                escape_speed_at_perigee_km_s: o.escape_speed_at_perigee_km_s,
                source_file: &s.source.file,
                source_line: s.source.line,
            }
        })
        .collect();
    match format {
        Format::Json => {
            common::write_json(&mut *out, &rows)?;
        }
        _ => {
            writeln!(
                out,
                "{:<24} {:>9}  {:<20} {:>8}  {:>8}  {:>17}  {:>7}  {:>9}",
                "name",
                "catalog",
                "epoch (UTC)",
                "age d",
                "period",
                "perigee x apogee",
                "incl",
                "ecc"
            )?;
            writeln!(
                out,
                "{:<24} {:>9}  {:<20} {:>8}  {:>8}  {:>17}  {:>7}  {:>9}",
                "", "", "", "", "min", "km", "deg", ""
            )?;
            for r in &rows {
                writeln!(
                    out,
                    "{} {:>9}  {:<20} {:>8.2}  {:>8.2}  {:>17}  {:>7.3}  {:>9.7}",
                    common::fit(r.name, 24),
                    r.catalog_number,
                    r.epoch.to_iso_s(),
                    r.age_days,
                    r.period_min,
                    format!("{:.0} x {:.0}", r.perigee_altitude_km, r.apogee_altitude_km),
                    r.inclination_deg,
                    r.eccentricity
                )?;
            }
            writeln!(
                out,
                "\n{} element set(s) loaded; {} record(s) rejected ({} error(s)), {} warning(s) (details on stderr). Ages at {}.",
                rows.len(),
                report.rejected_records,
                report.error_count(),
                report.warning_count(),
                at.to_iso_s()
            )?;
            writeln!(out, "{}", passlane_orbit::summary::SEMI_MAJOR_AXIS_NOTE)?;
        }
    }
    Ok(())
}
