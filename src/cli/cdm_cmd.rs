//! `passlane cdm FILE...`: re-assess conjunction data messages (KVN or XML).
//! One message: its assessment, with the hard-body radius used and where it
//! came from. Several: one trend per event (same pair, TCA within a few
//! minutes), one row per message, oldest first.

use std::io::Write;

use anyhow::{Context, Result, bail};
use passlane_plan::cdm::{Cdm, MAX_MESSAGE_BYTES, trend_groups};

use super::args::CdmArgs;
use super::common::{self, Format};

const CAUTION: &str = "Caution: screening on published mean elements is advisory. Defer to official conjunction \
messages and coordinate with the other operator before acting.";

/// Reads every file; a message that cannot be read is reported on stderr
/// (`file:line: keyword: reason`) and the others still load.
fn read_all(args: &CdmArgs) -> Result<Vec<(String, Cdm)>> {
    let mut messages = Vec::new();
    let mut failed = 0;
    for path in &args.files {
        let file = path.display().to_string();
        let text = passlane_files::read_text_limited(path, MAX_MESSAGE_BYTES)
            .with_context(|| format!("cannot read {file}"));
        match text.and_then(|t| Ok(Cdm::parse(&t, &file)?)) {
            Ok(cdm) => messages.push((file, cdm)),
            Err(e) => {
                failed += 1;
                common::say(format!("error: {e:#}"));
            }
        }
    }
    if messages.is_empty() {
        bail!("no conjunction message could be read ({failed} file(s) refused, see above)");
    }
    Ok(messages)
}

pub fn run(args: &CdmArgs, out: &mut dyn Write) -> Result<()> {
    if args.hard_body_radius_m.is_some_and(|r| r <= 0.0) {
        bail!("--hard-body-radius-m must be positive");
    }
    let format = Format::from(args.format);
    let messages = read_all(args)?;
    if let [(file, cdm)] = messages.as_slice() {
        return single(file, cdm, args, format, out);
    }
    let groups = trend_groups(&messages, args.hard_body_radius_m);
    if format == Format::Json {
        common::write_json(&mut *out, &groups)?;
        return Ok(());
    }
    for g in &groups {
        writeln!(
            out,
            "{} vs {}: {} message(s), oldest first",
            g.object1,
            g.object2,
            g.rows.len()
        )?;
        writeln!(
            out,
            "{:<24} {:<24} {:>10} {:>9} {:>9} {:>9} {:>10} {:>10} {:>17} {:>17} {:>6}",
            "created (UTC)",
            "TCA (UTC)",
            "miss m",
            "R m",
            "T m",
            "N m",
            "Pc",
            "CDM Pc",
            "obj1 sigma R/T/N m",
            "obj2 sigma R/T/N m",
            "HBR m"
        )?;
        for r in &g.rows {
            let sig = |s: &[f64; 3]| format!("{:.0}/{:.0}/{:.0}", s[0], s[1], s[2]);
            writeln!(
                out,
                "{:<24} {:<24} {:>10.1} {:>9.1} {:>9.1} {:>9.1} {:>10} {:>10} {:>17} {:>17} {:>6.1}",
                r.creation_date.to_iso_ms(),
                r.tca.to_iso_ms(),
                r.miss_distance_m,
                r.radial_m,
                r.in_track_m,
                r.cross_track_m,
                r.pc.map(|p| format!("{p:.3e}"))
                    .unwrap_or_else(|| "-".into()),
                r.cdm_collision_probability
                    .map(|p| format!("{p:.3e}"))
                    .unwrap_or_else(|| "-".into()),
                sig(&r.object1_sigma_rtn_m),
                sig(&r.object2_sigma_rtn_m),
                r.hard_body_radius_m
            )?;
            if let Some(note) = &r.pc_note {
                writeln!(out, "    {}: no Pc: {note}", r.file)?;
            }
        }
        let sources: std::collections::BTreeSet<&str> = g
            .rows
            .iter()
            .map(|r| r.hard_body_radius_source.as_str())
            .collect();
        for s in sources {
            writeln!(out, "  hard-body radius: {s}")?;
        }
        writeln!(out)?;
    }
    writeln!(
        out,
        "R/T/N: object 2 relative to object 1 in object 1's radial/in-track/cross-track frame."
    )?;
    writeln!(out, "{CAUTION}")?;
    Ok(())
}

fn single(
    file: &str,
    cdm: &Cdm,
    args: &CdmArgs,
    format: Format,
    out: &mut dyn Write,
) -> Result<()> {
    let hbr = cdm.hard_body_radius(args.hard_body_radius_m);
    let a = cdm
        .recompute_with(&hbr)
        .map_err(|e| anyhow::anyhow!("{file}: {e}"))?;
    if format == Format::Json {
        common::write_json(&mut *out, &a)?;
        return Ok(());
    }
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
        "  encounter plane    miss ({:.1}, {:.1}) m, sigma ({:.1}, {:.1}) m",
        a.miss_x_m, a.miss_y_m, a.sigma_x_m, a.sigma_y_m
    )?;
    writeln!(
        out,
        "  hard-body radius   {} m, {}",
        passlane_plan::cdm::ccsds_number(a.hard_body_radius_m),
        a.hard_body_radius_source
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
    writeln!(
        out,
        "  covariance from the {} (OBJECT1 {}, OBJECT2 {}){}",
        a.covariance_source,
        a.covariance_methods[0],
        a.covariance_methods[1],
        a.covariance_note
            .as_ref()
            .map(|n| format!(": {n}"))
            .unwrap_or_default()
    )?;
    writeln!(out, "{CAUTION}")?;
    Ok(())
}
