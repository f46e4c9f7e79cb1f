//! Writing a CDM: the keywords of each section in the standard's order with
//! their values in the standard's number and time forms, then as KVN lines
//! (this module) or XML elements ([`super::xml`]).

use passlane_orbit::UtcTime;

use super::Cdm;
use super::keywords::{COVARIANCE_KEYS, HEADER_KEYS, OBJECT_KEYS, RELATIVE_KEYS, Spec, Unit};

/// A number in a form CCSDS 508.0-B-1 6.3.2.2-6.3.2.3 (and 502.0-B-3
/// 7.5.6-7.5.7) allow, with at most 16 significant digits: fixed point
/// (`123.456`, at most 16 digits in all, at least one on each side of the
/// point) in the everyday range, else floating point with the decimal point
/// in the mantissa's second place (`4.5E+06`, `2.0E-05`). The value is
/// rounded to 16 significant digits (relative change at most 5e-16), then
/// written with as few digits as give back that rounded value.
pub fn ccsds_number(v: f64) -> String {
    if v == 0.0 || !v.is_finite() {
        // Callers never pass a non-finite value (readers refuse them); 0.0
        // stands in rather than writing text no reader accepts.
        return "0.0".to_string();
    }
    let sci = format!("{:.15e}", v);
    let (mantissa, exp) = sci.split_once('e').unwrap_or((sci.as_str(), "0"));
    let exp: i32 = exp.parse().unwrap_or(0);
    let sign = if mantissa.starts_with('-') { "-" } else { "" };
    let all: String = mantissa.chars().filter(char::is_ascii_digit).collect();
    let digits = all.trim_end_matches('0');
    let digits = if digits.is_empty() { "0" } else { digits };
    let n = digits.len();
    if (-4..9).contains(&exp) {
        let (int_part, frac_part) = if exp >= 0 {
            let e = exp as usize;
            if n > e + 1 {
                (digits[..e + 1].to_string(), digits[e + 1..].to_string())
            } else {
                (
                    format!("{digits}{}", "0".repeat(e + 1 - n)),
                    "0".to_string(),
                )
            }
        } else {
            (
                "0".to_string(),
                format!("{}{digits}", "0".repeat((-exp - 1) as usize)),
            )
        };
        if int_part.len() + frac_part.len() <= 16 {
            return format!("{sign}{int_part}.{frac_part}");
        }
    }
    let frac = if n > 1 { &digits[1..] } else { "0" };
    format!(
        "{sign}{}.{frac}E{}{:02}",
        &digits[..1],
        if exp < 0 { '-' } else { '+' },
        exp.abs()
    )
}

/// A time in the form of 508.0-B-1 6.3.2.6, milliseconds, without the `Z`
/// ("should be omitted": every CDM time is UTC).
pub fn ccsds_time(t: UtcTime) -> String {
    t.to_iso_ms().trim_end_matches('Z').to_string()
}

/// One keyword as written: name, value text, unit.
pub(super) struct Entry {
    pub(super) key: &'static str,
    pub(super) value: String,
    pub(super) unit: Option<String>,
}

/// One section as written: its comments, then its keywords in order.
pub(super) struct SectionOut {
    pub(super) comments: Vec<String>,
    pub(super) entries: Vec<Entry>,
}

fn unit_of(table: &[Spec], key: &str) -> Option<String> {
    table
        .iter()
        .find(|s| s.key == key)
        .and_then(|s| match s.unit {
            Unit::Exact(u) => Some(u.to_string()),
            Unit::None => None,
        })
}

fn section(table: &'static [Spec], comments: &[String], values: Vec<Option<String>>) -> SectionOut {
    let entries = table
        .iter()
        .zip(values)
        .filter_map(|(s, v)| {
            v.map(|value| Entry {
                key: s.key,
                value,
                unit: unit_of(table, s.key),
            })
        })
        .collect();
    SectionOut {
        comments: comments.to_vec(),
        entries,
    }
}

impl Cdm {
    /// The message's four sections as written, keywords in the order of
    /// Tables 3-1 to 3-4 of CCSDS 508.0-B-1.
    pub(super) fn sections_out(&self) -> [SectionOut; 4] {
        let h = &self.header;
        let n = |x: Option<f64>| x.map(ccsds_number);
        let t = |x: Option<UtcTime>| x.map(ccsds_time);
        let header = section(
            HEADER_KEYS,
            &h.comments,
            vec![
                Some(h.ccsds_cdm_vers.clone()),
                Some(ccsds_time(h.creation_date)),
                Some(h.originator.clone()),
                h.message_for.clone(),
                Some(h.message_id.clone()),
            ],
        );
        let r = &self.relative;
        let relative = section(
            RELATIVE_KEYS,
            &r.comments,
            vec![
                Some(ccsds_time(r.tca)),
                Some(ccsds_number(r.miss_distance_m)),
                n(r.relative_speed_m_s),
                n(r.relative_position_rtn_m[0]),
                n(r.relative_position_rtn_m[1]),
                n(r.relative_position_rtn_m[2]),
                n(r.relative_velocity_rtn_m_s[0]),
                n(r.relative_velocity_rtn_m_s[1]),
                n(r.relative_velocity_rtn_m_s[2]),
                t(r.start_screen_period),
                t(r.stop_screen_period),
                r.screen_volume_frame.clone(),
                r.screen_volume_shape.clone(),
                n(r.screen_volume_xyz_m[0]),
                n(r.screen_volume_xyz_m[1]),
                n(r.screen_volume_xyz_m[2]),
                t(r.screen_entry_time),
                t(r.screen_exit_time),
                n(r.collision_probability),
                r.collision_probability_method.clone(),
            ],
        );
        let object = |o: &super::CdmObject| -> SectionOut {
            let mut entries = Vec::new();
            for s in OBJECT_KEYS {
                let typed: Option<String> = match s.key {
                    "OBJECT" => Some(o.object.clone()),
                    "OBJECT_DESIGNATOR" => Some(o.object_designator.clone()),
                    "CATALOG_NAME" => Some(o.catalog_name.clone()),
                    "OBJECT_NAME" => Some(o.object_name.clone()),
                    "INTERNATIONAL_DESIGNATOR" => Some(o.international_designator.clone()),
                    "EPHEMERIS_NAME" => Some(o.ephemeris_name.clone()),
                    "COVARIANCE_METHOD" => Some(o.covariance_method.clone()),
                    "MANEUVERABLE" => Some(o.maneuverable.clone()),
                    "REF_FRAME" => Some(o.ref_frame.clone()),
                    "X" => Some(ccsds_number(o.state.position_km[0])),
                    "Y" => Some(ccsds_number(o.state.position_km[1])),
                    "Z" => Some(ccsds_number(o.state.position_km[2])),
                    "X_DOT" => Some(ccsds_number(o.state.velocity_km_s[0])),
                    "Y_DOT" => Some(ccsds_number(o.state.velocity_km_s[1])),
                    "Z_DOT" => Some(ccsds_number(o.state.velocity_km_s[2])),
                    key => COVARIANCE_KEYS
                        .iter()
                        .position(|c| *c == key)
                        .map(|i| ccsds_number(o.covariance_rtn[i])),
                };
                if let Some(value) = typed {
                    entries.push(Entry {
                        key: s.key,
                        value,
                        unit: unit_of(OBJECT_KEYS, s.key),
                    });
                } else if let Some(f) = o.other.iter().find(|f| f.keyword == s.key) {
                    // Numbers read from another message are written again in
                    // the standard's form; text as read.
                    let value = match (s.kind, f.value.trim().parse::<f64>()) {
                        (super::keywords::Kind::Number, Ok(x)) => ccsds_number(x),
                        _ => f.value.clone(),
                    };
                    entries.push(Entry {
                        key: s.key,
                        value,
                        unit: unit_of(OBJECT_KEYS, s.key),
                    });
                }
            }
            SectionOut {
                comments: o.comments.clone(),
                entries,
            }
        };
        [
            header,
            relative,
            object(&self.object1),
            object(&self.object2),
        ]
    }

    /// Writes the message as KVN: the version line first, header comments
    /// after it (508.0-B-1 6.3.1.2, Table 3-1), keywords in the standard's
    /// order, units in brackets exactly as Tables 3-2 and 3-4 show them,
    /// numbers with at most 16 significant digits, times without `Z`.
    pub fn write_kvn(&self, w: &mut impl std::io::Write) -> std::io::Result<()> {
        let sections = self.sections_out();
        for (i, sec) in sections.iter().enumerate() {
            let mut entries = sec.entries.iter();
            if i == 0 {
                // The version line, then the header's comments.
                if let Some(first) = entries.next() {
                    put(w, first)?;
                }
            }
            for c in &sec.comments {
                writeln!(w, "COMMENT {}", super::kvn_safe(c))?;
            }
            for e in entries {
                put(w, e)?;
            }
        }
        Ok(())
    }
}

fn put(w: &mut impl std::io::Write, e: &Entry) -> std::io::Result<()> {
    match &e.unit {
        Some(u) => writeln!(
            w,
            "{:<28} = {} [{}]",
            e.key,
            super::kvn_safe(&e.value),
            super::kvn_safe(u)
        ),
        None => writeln!(w, "{:<28} = {}", e.key, super::kvn_safe(&e.value)),
    }
}

#[cfg(test)]
mod tests {
    use super::ccsds_number;

    #[test]
    fn numbers_have_at_most_sixteen_digits_and_the_standards_forms() {
        for (v, want) in [
            (1000.0, "1000.0"),
            (0.0, "0.0"),
            (-7500.0, "-7500.0"),
            (4.5e6, "4500000.0"),
            (2e-5, "2.0E-05"),
            (1e10, "1.0E+10"),
            (1e16, "1.0E+16"),
            (0.000_123, "0.000123"),
            (46_769.953_735_016_985, "46769.95373501698"),
            (1_295.416_055_036_168_5, "1295.416055036168"),
            (3.219e-27, "3.219E-27"),
            (-1.0e-9, "-1.0E-09"),
            (0.1, "0.1"),
            (1.0 / 3.0, "3.333333333333333E-01"),
        ] {
            assert_eq!(ccsds_number(v), want, "{v}");
        }
    }
}
