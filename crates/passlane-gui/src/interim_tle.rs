//! A stop-gap TLE reader used only while the library's element loader
//! (`passlane_orbit::elements::load`) is still a placeholder that returns
//! neither records nor diagnostics. It switches itself off: as soon as the
//! library reports anything for a file, its answer is used instead.
//!
//! It reads plain 2- and 3-line sets with fixed columns and no checks beyond
//! field parsing; anything it cannot read is skipped. Remove once the loader lands.

use passlane_orbit::{ElementSet, SourceRef, UtcTime};

/// Parses TLE text; records that do not parse are skipped.
pub fn parse(text: &str, file: &str) -> Vec<ElementSet> {
    let lines: Vec<&str> = text.lines().map(str::trim_end).collect();
    let mut out = Vec::new();
    let mut i = 0;
    while i + 1 < lines.len() {
        if lines[i].starts_with("1 ") && lines[i + 1].starts_with("2 ") {
            let name = if i > 0 && !lines[i - 1].starts_with("2 ") {
                lines[i - 1].trim_start_matches("0 ").trim().to_string()
            } else {
                String::new()
            };
            if let Some(set) = record(&name, lines[i], lines[i + 1], file, i) {
                out.push(set);
            }
            i += 2;
        } else {
            i += 1;
        }
    }
    out
}

fn field(line: &str, from_col: usize, to_col: usize) -> Option<&str> {
    line.get(from_col - 1..to_col.min(line.len())).map(str::trim)
}

fn num(line: &str, from_col: usize, to_col: usize) -> Option<f64> {
    field(line, from_col, to_col)?.parse().ok()
}

/// The "implied decimal point" form: `-12345-6` means −0.12345e−6.
fn implied(text: &str) -> Option<f64> {
    let t = text.trim();
    if t.is_empty() {
        return Some(0.0);
    }
    let (sign, body) = match t.as_bytes().first() {
        Some(b'-') => (-1.0, &t[1..]),
        Some(b'+') => (1.0, &t[1..]),
        _ => (1.0, t),
    };
    let split = body.rfind(['-', '+'])?;
    let mantissa: f64 = format!("0.{}", &body[..split]).parse().ok()?;
    let exponent: i32 = body[split..].parse().ok()?;
    Some(sign * mantissa * 10f64.powi(exponent))
}

fn record(name: &str, l1: &str, l2: &str, file: &str, index: usize) -> Option<ElementSet> {
    let catalog_number: u32 = field(l1, 3, 7)?.parse().ok()?;
    let yy: i32 = field(l1, 19, 20)?.parse().ok()?;
    let year = if yy < 57 { 2000 + yy } else { 1900 + yy };
    let epoch = UtcTime::from_year_and_day(year, num(l1, 21, 32)?)?;
    let line_no = if name.is_empty() { index + 1 } else { index };
    Some(ElementSet {
        name: if name.is_empty() { catalog_number.to_string() } else { name.to_string() },
        catalog_number,
        international_designator: field(l1, 10, 17)?.to_string(),
        classification: l1.chars().nth(7).unwrap_or('U'),
        epoch,
        mean_motion_dot_rev_day2: num(l1, 34, 43)?,
        mean_motion_ddot_rev_day3: implied(field(l1, 45, 52)?)?,
        bstar_per_earth_radii: implied(field(l1, 54, 61)?)?,
        ephemeris_type: 0,
        element_set_number: field(l1, 65, 68)?.parse().unwrap_or(0),
        inclination_deg: num(l2, 9, 16)?,
        raan_deg: num(l2, 18, 25)?,
        eccentricity: format!("0.{}", field(l2, 27, 33)?).parse().ok()?,
        arg_perigee_deg: num(l2, 35, 42)?,
        mean_anomaly_deg: num(l2, 44, 51)?,
        mean_motion_rev_day: num(l2, 53, 63)?,
        revolution_number: field(l2, 64, 68)?.parse().unwrap_or(0),
        source: SourceRef { file: file.to_string(), line: line_no },
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn reads_the_demo_fleet() {
        let sets = parse(crate::doc::DEMO_FLEET_TLE, "demo-fleet.tle");
        assert_eq!(sets.len(), 6);
        assert_eq!(sets[0].name, "KRSL-1 HERON");
        assert_eq!(sets[0].catalog_number, 90001);
        assert!((sets[0].bstar_per_earth_radii - 0.21e-3).abs() < 1e-12);
        assert!((sets[0].eccentricity - 0.001017).abs() < 1e-12);
    }
}
