//! `passlane screen` and `passlane cdm`: close approaches and conjunction messages.

use std::collections::HashMap;
use std::io::Write;
use std::path::PathBuf;

use anyhow::{Context, Result, bail};
use passlane_orbit::{ElementSet, UtcTime};
use passlane_plan::cdm::Cdm;
use passlane_plan::conjunction::{CdmContext, event_to_cdm};
use passlane_plan::job::{ScreeningJob, screen_and_assess};
use passlane_plan::screen::{CloseApproach, ScreeningVolume};
use serde::Serialize;

use super::args::{CdmArgs, ScreenArgs};
use super::common::{self, Format, Sources};
use super::progress::Bar;
use passlane_plan::export::csv_field;

const CAUTION: &str = "Caution: screening on published mean elements is advisory. Defer to official conjunction \
messages and coordinate with the other operator before acting.";

/// One event as printed: the screening figures plus the probability.
#[derive(Serialize)]
struct Row<'a> {
    #[serde(flatten)]
    event: &'a CloseApproach,
    #[serde(skip_serializing_if = "Option::is_none")]
    pc: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pc_alfano: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pc_chan: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pc_max: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    covariance_source: Option<&'a str>,
    #[serde(skip_serializing_if = "Option::is_none")]
    hard_body_radius_m: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    risk_note: Option<String>,
}

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
        eprintln!("{} ({}): {}", d.name, d.catalog_number, d.message);
    }
    let label = covariance.label();
    let rows: Vec<Row> = result
        .events
        .iter()
        .zip(risks)
        .map(|(e, r)| match r {
            Ok(r) => Row {
                event: e,
                pc: Some(r.pc),
                pc_alfano: Some(r.pc_alfano),
                pc_chan: Some(r.pc_chan),
                pc_max: Some(r.pc_max),
                covariance_source: Some(label.as_str()),
                hard_body_radius_m: Some(r.hard_body_radius_m),
                risk_note: None,
            },
            Err(msg) => Row {
                event: e,
                pc: None,
                pc_alfano: None,
                pc_chan: None,
                pc_max: None,
                covariance_source: None,
                hard_body_radius_m: None,
                risk_note: Some(msg.clone()),
            },
        })
        .collect();
    if let Some(dir) = &args.cdm_dir {
        std::fs::create_dir_all(dir).with_context(|| format!("cannot create {}", dir.display()))?;
        let now = UtcTime::now();
        let originator = args.originator.as_str();
        let by_number: HashMap<u32, &ElementSet> = inputs
            .sets
            .iter()
            .chain(&catalog)
            .map(|s| (s.catalog_number, s))
            .collect();
        for (k, (e, r)) in result.events.iter().zip(risks).enumerate() {
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
            let message_id = format!(
                "{}_{}_{}_{}",
                e.primary_catalog_number,
                e.secondary_catalog_number,
                stamp,
                k + 1
            );
            let cdm = event_to_cdm(
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
            )?;
            let path = dir.join(format!("{message_id}.cdm"));
            // Temporaries from an interrupted earlier run would otherwise pile up.
            passlane_files::remove_stale_temporaries(&path);
            passlane_files::write_atomic_with(&path, |w| {
                let mut buf = Vec::new();
                cdm.write_kvn(&mut buf)?;
                w.write_all(&buf)
            })
            .with_context(|| format!("cannot write {}", path.display()))?;
        }
        eprintln!(
            "wrote {} CDM file(s) to {}",
            result.events.len(),
            dir.display()
        );
    }
    match format {
        Format::Json => {
            serde_json::to_writer_pretty(&mut *out, &rows)?;
            writeln!(out)?;
        }
        Format::Csv => {
            writeln!(
                out,
                "primary,primary_catalog_number,secondary,secondary_catalog_number,tca,miss_distance_km,radial_km,in_track_km,cross_track_km,relative_speed_km_s,approach_angle_deg,volume_entry,volume_exit,pc,pc_max"
            )?;
            for r in &rows {
                let e = r.event;
                writeln!(
                    out,
                    "{},{},{},{},{},{:.4},{:.4},{:.4},{:.4},{:.4},{:.2},{},{},{},{}",
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
                    r.pc_max.map(|p| format!("{p:.3e}")).unwrap_or_default()
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
                writeln!(
                    out,
                    "{} {} {:<24} {:>9.3} {:>9.3} {:>9.3} {:>9.3} {:>8.3} {:>10} {:>10}",
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
            writeln!(
                out,
                "*Pc with {label}; combined hard-body radius per event (see --format json)."
            )?;
            writeln!(
                out,
                "Pc max: largest probability over the covariance's size, the honest figure for element sets."
            )?;
            writeln!(out, "{CAUTION}")?;
        }
    }
    Ok(())
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

pub fn run_cdm(args: &CdmArgs, out: &mut dyn Write) -> Result<()> {
    let file = &args.file.display().to_string();
    let format = Format::from(args.format);
    let bytes = passlane_files::read_limited(&args.file, 16 * 1024 * 1024)
        .with_context(|| format!("cannot read {file}"))?;
    let text = String::from_utf8(bytes).map_err(|e| {
        anyhow::anyhow!(
            "{file}: not UTF-8 text (byte {})",
            e.utf8_error().valid_up_to()
        )
    })?;
    let cdm = Cdm::parse(&text, file)?;
    let hbr = args.hard_body_radius_m;
    if hbr <= 0.0 {
        bail!("--hard-body-radius-m must be positive");
    }
    let a = cdm
        .recompute(hbr)
        .map_err(|e| anyhow::anyhow!("{file}: {e}"))?;
    match format {
        Format::Json => {
            serde_json::to_writer_pretty(&mut *out, &a)?;
            writeln!(out)?;
        }
        _ => {
            writeln!(
                out,
                "CDM {} from {} ({})",
                cdm.header.message_id, cdm.header.originator, cdm.header.creation_date
            )?;
            writeln!(
                out,
                "  object 1: {} ({})",
                cdm.object1.object_name, cdm.object1.object_designator
            )?;
            writeln!(
                out,
                "  object 2: {} ({})",
                cdm.object2.object_name, cdm.object2.object_designator
            )?;
            writeln!(out, "  TCA                {}", a.tca)?;
            writeln!(
                out,
                "  miss distance      {:.1} m (CDM says {:.1} m)",
                a.miss_distance_m, a.cdm_miss_distance_m
            )?;
            writeln!(
                out,
                "  R / T / N          {:.1} / {:.1} / {:.1} m",
                a.radial_m, a.in_track_m, a.cross_track_m
            )?;
            writeln!(
                out,
                "  relative speed     {:.1} m/s, approach angle {:.1}°",
                a.relative_speed_m_s, a.approach_angle_deg
            )?;
            writeln!(
                out,
                "  encounter plane    miss ({:.1}, {:.1}) m, sigma ({:.1}, {:.1}) m, hard-body radius {:.1} m",
                a.miss_x_m, a.miss_y_m, a.sigma_x_m, a.sigma_y_m, a.hard_body_radius_m
            )?;
            writeln!(out, "  Pc (2-D integral)  {:.4e}", a.pc)?;
            writeln!(out, "  Pc (Alfano 1-D)    {:.4e}", a.pc_alfano)?;
            writeln!(out, "  Pc (Chan series)   {:.4e}", a.pc_chan)?;
            writeln!(
                out,
                "  Pc max             {:.4e} (over covariance size)",
                a.pc_max
            )?;
            if let Some(p) = a.cdm_collision_probability {
                writeln!(out, "  CDM's own Pc       {p:.4e}")?;
            }
            writeln!(out, "  covariance from the {}", a.covariance_source)?;
            writeln!(out, "{CAUTION}")?;
        }
    }
    Ok(())
}
