//! The plan as CSV (one row per kept contact) and as JSON (the whole plan:
//! contacts, demand met per spacecraft, conflicts resolved, scores).

use std::io::{self, Write};

use super::csv_field;
use crate::schedule::Plan;

/// Header of [`write_plan_csv`]; channel names are joined with `;`.
pub const PLAN_CSV_HEADER: &str = "spacecraft,catalog_number,station,antenna,aos,los,duration_s,max_elevation_deg,channels,expected_volume_mb,pinned";

/// One line per kept contact, in AOS order; times ISO 8601 UTC with milliseconds.
pub fn write_plan_csv(w: &mut dyn Write, plan: &Plan) -> io::Result<()> {
    writeln!(w, "{PLAN_CSV_HEADER}")?;
    for c in &plan.contacts {
        writeln!(
            w,
            "{},{},{},{},{},{},{:.3},{:.3},{},{:.3},{}",
            csv_field(&c.spacecraft),
            c.catalog_number,
            csv_field(&c.station),
            csv_field(&c.antenna),
            c.aos.to_iso_us(),
            c.los.to_iso_us(),
            c.duration_s,
            c.max_elevation_deg,
            csv_field(&c.channels.join(";")),
            c.volume_mb,
            c.pinned
        )?;
    }
    Ok(())
}

/// The whole plan as pretty JSON, ending with a newline.
pub fn write_plan_json(w: &mut dyn Write, plan: &Plan) -> io::Result<()> {
    serde_json::to_writer_pretty(&mut *w, plan).map_err(io::Error::other)?;
    writeln!(w)
}
