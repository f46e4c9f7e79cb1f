//! `passlane passes` and `passlane track`: contact windows and pointing tables.

use std::io::Write;

use anyhow::{Result, bail};
use passlane_orbit::{EarthOrientation, Illumination, UtcTime};
use passlane_plan::export::csv_field;
use passlane_plan::passes::{Pass, PassOptions, find_passes};
use passlane_plan::sampling::TableError;
use passlane_plan::station::Station;
use passlane_plan::{Silent, pointing_table};

use super::args::{EarthOrientationArgs, PassesArgs, TrackArgs};
use super::common::{self, Format, Inputs, Sources};
use super::progress::Bar;

/// The scenario's Earth orientation, with `--ut1-utc-s` in its place if given.
fn earth_orientation(args: &EarthOrientationArgs, inputs: &Inputs) -> Result<EarthOrientation> {
    let mut eop = inputs
        .scenario
        .as_ref()
        .map(|(_, s)| s.earth_orientation)
        .unwrap_or_default();
    if let Some(v) = args.ut1_utc_s {
        if v.abs() > 1.0 {
            bail!("--ut1-utc-s {v}: UT1-UTC stays within ±0.9 s");
        }
        eop.ut1_utc_s = v;
    }
    Ok(eop)
}

/// `--min-elevation`, if given, within the range a horizon can sensibly have.
fn min_elevation(value: Option<f64>) -> Result<Option<f64>> {
    if let Some(m) = value
        && !(-5.0..90.0).contains(&m)
    {
        bail!("--min-elevation {m}: expected -5 to 90 degrees");
    }
    Ok(value)
}

pub fn run(args: &PassesArgs, out: &mut dyn Write) -> Result<()> {
    let sources = Sources::new(&args.fleet, Some(&args.window))
        .with_stations(&args.stations)
        .with_ut1_utc_s(args.earth_orientation.ut1_utc_s);
    let inputs = common::gather(&sources, true)?;
    let (start, end) = common::window(&inputs)?;
    let format = Format::from(args.format);
    let options = PassOptions {
        start,
        end,
        earth_orientation: earth_orientation(&args.earth_orientation, &inputs)?,
        min_elevation_deg: min_elevation(args.min_elevation)?,
    };
    let bar = Bar::new("contact windows", args.quiet.quiet);
    let report = find_passes(&inputs.sets, &inputs.stations, &options, &bar);
    bar.finish();
    for f in &report.failures {
        common::say(format!(
            "{} ({}): {}",
            f.satellite, f.catalog_number, f.message
        ));
    }
    match format {
        Format::Json => super::pass_json::write_passes(&mut *out, &report.passes)?,
        Format::Csv => write_csv(out, &report.passes)?,
        Format::Table => write_table(
            out,
            &report.passes,
            start,
            end,
            inputs.sets.len(),
            inputs.stations.len(),
        )?,
    }
    Ok(())
}

fn write_csv(out: &mut dyn Write, passes: &[Pass]) -> Result<()> {
    writeln!(
        out,
        "satellite,catalog_number,station,aos,max_elevation_time,los,max_elevation_deg,aos_azimuth_deg,los_azimuth_deg,duration_s,aos_clipped,los_clipped,min_range_km,direction,sun_elevation_deg"
    )?;
    for p in passes {
        writeln!(
            out,
            "{},{},{},{},{},{},{:.3},{:.3},{:.3},{:.3},{},{},{:.3},{:?},{:.2}",
            csv_field(&p.satellite),
            p.catalog_number,
            csv_field(&p.station),
            p.aos.to_iso_us(),
            p.max_elevation_time.to_iso_us(),
            p.los.to_iso_us(),
            p.max_elevation_deg,
            p.aos_azimuth_deg,
            p.los_azimuth_deg,
            p.duration_s,
            p.aos_clipped,
            p.los_clipped,
            p.min_range_km,
            p.direction,
            p.sun_elevation_deg
        )?;
    }
    Ok(())
}

fn mmss(s: f64) -> String {
    let s = s.max(0.0).round() as i64;
    format!("{}:{:02}", s / 60, s % 60)
}

fn write_table(
    out: &mut dyn Write,
    passes: &[Pass],
    start: UtcTime,
    end: UtcTime,
    n_sats: usize,
    n_stations: usize,
) -> Result<()> {
    writeln!(
        out,
        "Contact windows {} to {} ({} spacecraft, {} station(s))\n",
        start.to_iso_s(),
        end.to_iso_s(),
        n_sats,
        n_stations
    )?;
    writeln!(
        out,
        "{:<16} {:<14} {:<20} {:<8} {:<8} {:>6} {:>6} {:>6} {:>6}  {:<4} {:<9} notes",
        "spacecraft",
        "station",
        "AOS (UTC)",
        "max at",
        "LOS",
        "dur",
        "max el",
        "AOS az",
        "LOS az",
        "dir",
        "sun"
    )?;
    let mut day = String::new();
    for p in passes {
        let aos = p.aos.to_iso_s();
        let this_day = aos[..10].to_string();
        if this_day != day {
            writeln!(out, "-- {this_day} --")?;
            day = this_day;
        }
        let mut notes = Vec::new();
        if p.aos_clipped {
            notes.push("in progress at start".to_string());
        }
        if p.los_clipped {
            notes.push("continues past end".to_string());
        }
        let eclipse: f64 = p
            .illumination
            .iter()
            .filter(|s| s.state != Illumination::Sunlit)
            .map(|s| s.end.s_since(s.start))
            .sum();
        if eclipse > 0.5 {
            notes.push(format!("eclipse {}", mmss(eclipse)));
        }
        for w in &p.mount_warnings {
            notes.push(format!(
                "{} rate {:.1}°/s > {:.1} ({}–{})",
                w.axis,
                w.required_rate_deg_s,
                w.limit_deg_s,
                &w.start.to_iso_s()[11..19],
                &w.end.to_iso_s()[11..19]
            ));
        }
        writeln!(
            out,
            "{} {} {:<20} {:<8} {:<8} {:>6} {:>6.1} {:>6.1} {:>6.1}  {:<4} {:<9} {}",
            common::fit(&p.satellite, 16),
            common::fit(&p.station, 14),
            aos,
            &p.max_elevation_time.to_iso_s()[11..19],
            &p.los.to_iso_s()[11..19],
            mmss(p.duration_s),
            p.max_elevation_deg,
            p.aos_azimuth_deg,
            p.los_azimuth_deg,
            match p.direction {
                passlane_plan::passes::PassDirection::Ascending => "N",
                passlane_plan::passes::PassDirection::Descending => "S",
            },
            p.sky.label(),
            notes.join("; ")
        )?;
    }
    writeln!(
        out,
        "\n{} pass(es). Times UTC; elevations above the station's horizon mask; dir N/S = north/southbound.",
        passes.len()
    )?;
    Ok(())
}

pub fn run_track(args: &TrackArgs, out: &mut dyn Write) -> Result<()> {
    let sources = Sources::new(&args.fleet, None)
        .with_stations(&args.stations)
        .with_ut1_utc_s(args.earth_orientation.ut1_utc_s);
    let inputs = common::gather(&sources, true)?;
    let sat = common::pick_satellite(&inputs.sets, &args.satellite)?;
    common::check_element_age(
        std::slice::from_ref(sat),
        args.pass_start,
        args.pass_start,
        args.allow_stale,
        "--pass-start",
    )?;
    let station: &Station = if inputs.stations.len() == 1 {
        &inputs.stations[0]
    } else {
        bail!(
            "give exactly one station (--station NAME,LAT,LON,HEIGHT or a scenario with one station); {} given",
            inputs.stations.len()
        );
    };
    let at = args.pass_start;
    let step_s = args.step_s;
    passlane_plan::sampling::check_step(step_s).map_err(|e| anyhow::anyhow!("--step-s: {e}"))?;
    let format = Format::from(args.format);
    let eop = earth_orientation(&args.earth_orientation, &inputs)?;
    // Search a window around the given time; the pass is the one containing it,
    // or else the first to start within 30 minutes after it.
    let options = PassOptions {
        start: at.add_s(-3.0 * 3600.0),
        end: at.add_s(6.0 * 3600.0),
        earth_orientation: eop,
        min_elevation_deg: min_elevation(args.min_elevation)?,
    };
    let report = find_passes(
        std::slice::from_ref(sat),
        std::slice::from_ref(station),
        &options,
        &Silent,
    );
    let pass = report
        .passes
        .iter()
        .find(|p| p.aos <= at.add_s(1e-3) && at <= p.los)
        .or_else(|| {
            report
                .passes
                .iter()
                .find(|p| p.aos >= at && p.aos.s_since(at) <= 1800.0)
        });
    let Some(pass) = pass else {
        bail!(
            "{} is not above {}'s horizon at {} and no pass starts within 30 minutes after it",
            sat.name,
            station.name,
            at
        );
    };
    let rows = pointing_table(sat, station, pass, step_s, &eop).map_err(|e| match e {
        TableError::Step(e) => anyhow::anyhow!("--step-s: {e}"),
        TableError::Propagation(e) => anyhow::anyhow!("{}: {e}", sat.name),
    })?;
    match format {
        Format::Json => {
            common::write_json(&mut *out, &rows)?;
        }
        _ => {
            write!(
                out,
                "time,azimuth_deg,elevation_deg,range_km,range_rate_km_s"
            )?;
            for c in &station.channels {
                write!(out, ",{}_hz", csv_field(&c.name.replace(' ', "_")))?;
            }
            writeln!(out)?;
            for r in &rows {
                write!(
                    out,
                    // Microsecond times and mm, 0.01 mm/s figures: a row
                    // re-evaluated at its printed time gives its printed values.
                    "{},{:.6},{:.6},{:.6},{:.8}",
                    r.time.to_iso_us(),
                    r.azimuth_deg,
                    r.elevation_deg,
                    r.range_km,
                    r.range_rate_km_s
                )?;
                for f in &r.frequencies_hz {
                    write!(out, ",{f:.2}")?;
                }
                writeln!(out)?;
            }
        }
    }
    Ok(())
}
