//! Pointing tables of kept contacts as CSV: time, azimuth, elevation, range,
//! range rate, and the Doppler-corrected frequency of each station channel.
//! The rows come from [`crate::passes::pointing_table_between`]; this module
//! only formats them and names the files.

use std::io::{self, Write};

use super::{csv_field, slug};
use crate::pointing::PointingRow;
use crate::schedule::PlannedContact;
use crate::station::Station;

/// Writes one pointing table.
pub fn write_pointing_csv(
    w: &mut dyn Write,
    station: &Station,
    rows: &[PointingRow],
) -> io::Result<()> {
    write!(w, "time,azimuth_deg,elevation_deg,range_km,range_rate_km_s")?;
    for c in &station.channels {
        write!(w, ",{}_hz", csv_field(&c.name.replace(' ', "_")))?;
    }
    writeln!(w)?;
    for r in rows {
        write!(
            w,
            // As `passlane track` prints them: a row re-evaluated at its
            // printed time gives its printed values.
            "{},{:.6},{:.6},{:.6},{:.8}",
            r.time.to_iso_us(),
            r.azimuth_deg,
            r.elevation_deg,
            r.range_km,
            r.range_rate_km_s
        )?;
        for f in &r.frequencies_hz {
            write!(w, ",{f:.2}")?;
        }
        writeln!(w)?;
    }
    Ok(())
}

/// A file name that identifies the contact:
/// `<catalog>_<station>_<antenna>_<AOS as YYYYMMDDTHHMMSSZ>.csv`.
pub fn pointing_file_name(c: &PlannedContact) -> String {
    let aos: String = c
        .aos
        .to_iso_s()
        .chars()
        .filter(|ch| *ch != '-' && *ch != ':')
        .collect();
    format!(
        "{}_{}_{}_{}.csv",
        c.catalog_number,
        slug(&c.station),
        slug(&c.antenna),
        aos
    )
}
