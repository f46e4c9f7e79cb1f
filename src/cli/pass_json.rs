//! `passes --format json`, written field by field: the same bytes as
//! [`common::write_json`] of the pass list (a test holds them equal, on the
//! demo week and on passes with every unusual value), at under half its
//! cost. Through serde, every key went through JSON string escaping and
//! every time through a serialiser of its own: a sixth of a week's whole
//! `passes` command (callgrind, 12 satellites × 3 stations). Keys and the
//! words of enums are literals here; a name goes through serde_json's
//! escaping wherever it holds a character JSON escapes; numbers go through
//! serde_json's own formatter, so everything prints exactly as before.
//!
//! [`common::write_json`]: super::common::write_json

use std::io::Write;

use anyhow::Result;
use passlane_orbit::UtcTime;
use passlane_plan::passes::{Pass, PassDirection, SkyAtStation};
use serde_json::ser::{CompactFormatter, Formatter};

/// How much is gathered before it is handed to `out`.
const CHUNK_BYTES: usize = 1 << 16;

/// Writes `passes` as a JSON array, one pass a line.
pub fn write_passes(out: &mut dyn Write, passes: &[Pass]) -> Result<()> {
    let mut b: Vec<u8> = Vec::with_capacity(2 * CHUNK_BYTES);
    b.push(b'[');
    for (i, p) in passes.iter().enumerate() {
        if i > 0 {
            b.push(b',');
        }
        b.push(b'\n');
        pass(&mut b, p)?;
        if b.len() >= CHUNK_BYTES {
            out.write_all(&b)?;
            b.clear();
        }
    }
    b.extend_from_slice(b"\n]\n");
    out.write_all(&b)?;
    out.flush()?;
    Ok(())
}

fn pass(b: &mut Vec<u8>, p: &Pass) -> Result<()> {
    text(b, b"{\"satellite\":", &p.satellite)?;
    b.extend_from_slice(b",\"catalog_number\":");
    CompactFormatter.write_u32(b, p.catalog_number)?;
    text(b, b",\"station\":", &p.station)?;
    at(b, b",\"aos\":", p.aos);
    at(b, b",\"max_elevation_time\":", p.max_elevation_time);
    at(b, b",\"los\":", p.los);
    num(b, b",\"max_elevation_deg\":", p.max_elevation_deg)?;
    num(b, b",\"aos_azimuth_deg\":", p.aos_azimuth_deg)?;
    num(
        b,
        b",\"max_elevation_azimuth_deg\":",
        p.max_elevation_azimuth_deg,
    )?;
    num(b, b",\"los_azimuth_deg\":", p.los_azimuth_deg)?;
    num(b, b",\"duration_s\":", p.duration_s)?;
    b.extend_from_slice(b",\"aos_clipped\":");
    CompactFormatter.write_bool(b, p.aos_clipped)?;
    b.extend_from_slice(b",\"los_clipped\":");
    CompactFormatter.write_bool(b, p.los_clipped)?;
    num(b, b",\"min_range_km\":", p.min_range_km)?;
    b.extend_from_slice(match p.direction {
        PassDirection::Ascending => b",\"direction\":\"ascending\"",
        PassDirection::Descending => b",\"direction\":\"descending\"",
    });
    num(b, b",\"sun_elevation_deg\":", p.sun_elevation_deg)?;
    b.extend_from_slice(match p.sky {
        SkyAtStation::Daylight => b",\"sky\":\"daylight\"",
        SkyAtStation::CivilTwilight => b",\"sky\":\"civil_twilight\"",
        SkyAtStation::NauticalTwilight => b",\"sky\":\"nautical_twilight\"",
        SkyAtStation::AstronomicalTwilight => b",\"sky\":\"astronomical_twilight\"",
        SkyAtStation::Night => b",\"sky\":\"night\"",
    });
    list(b, b",\"doppler\":[", &p.doppler, |b, d| {
        text(b, b"{\"channel\":", &d.channel)?;
        b.extend_from_slice(b",\"direction\":");
        value(b, &d.direction)?;
        num(b, b",\"frequency_hz\":", d.frequency_hz)?;
        num(b, b",\"aos_shift_hz\":", d.aos_shift_hz)?;
        num(b, b",\"los_shift_hz\":", d.los_shift_hz)?;
        num(b, b",\"max_rate_hz_s\":", d.max_rate_hz_s)
    })?;
    list(b, b",\"illumination\":[", &p.illumination, |b, s| {
        b.extend_from_slice(b"{\"state\":\"");
        b.extend_from_slice(s.state.label().as_bytes());
        b.push(b'"');
        at(b, b",\"start\":", s.start);
        at(b, b",\"end\":", s.end);
        Ok(())
    })?;
    list(b, b",\"mount_warnings\":[", &p.mount_warnings, |b, w| {
        text(b, b"{\"axis\":", &w.axis)?;
        at(b, b",\"start\":", w.start);
        at(b, b",\"end\":", w.end);
        num(b, b",\"required_rate_deg_s\":", w.required_rate_deg_s)?;
        num(b, b",\"limit_deg_s\":", w.limit_deg_s)?;
        num(b, b",\"excess_deg_s\":", w.excess_deg_s)
    })?;
    b.extend_from_slice(b",\"element_age_days\":");
    match p.element_age_days {
        Some(days) => number(b, days)?,
        None => b.extend_from_slice(b"null"),
    }
    b.push(b'}');
    Ok(())
}

/// `key` (with its punctuation), then a JSON array of `items`, each an
/// object `each` writes up to its closing brace.
fn list<T>(
    b: &mut Vec<u8>,
    key: &[u8],
    items: &[T],
    each: impl Fn(&mut Vec<u8>, &T) -> Result<()>,
) -> Result<()> {
    b.extend_from_slice(key);
    for (i, item) in items.iter().enumerate() {
        if i > 0 {
            b.push(b',');
        }
        each(b, item)?;
        b.push(b'}');
    }
    b.push(b']');
    Ok(())
}

fn text(b: &mut Vec<u8>, key: &[u8], value: &str) -> Result<()> {
    b.extend_from_slice(key);
    string(b, value)
}

fn num(b: &mut Vec<u8>, key: &[u8], x: f64) -> Result<()> {
    b.extend_from_slice(key);
    number(b, x)
}

fn at(b: &mut Vec<u8>, key: &[u8], t: UtcTime) {
    b.extend_from_slice(key);
    time(b, t);
}

/// Any value as serde_json writes it (link directions).
fn value(b: &mut Vec<u8>, v: &impl serde::Serialize) -> Result<()> {
    serde_json::to_writer(&mut *b, v)?;
    Ok(())
}

/// A name as serde_json writes it: as it is when nothing in it needs
/// escaping (serde_json escapes only `"`, `\` and control characters), else
/// through serde_json.
fn string(b: &mut Vec<u8>, text: &str) -> Result<()> {
    if text.bytes().all(|c| c >= 0x20 && c != b'"' && c != b'\\') {
        b.push(b'"');
        b.extend_from_slice(text.as_bytes());
        b.push(b'"');
        Ok(())
    } else {
        value(b, &text)
    }
}

/// A number as serde_json writes an `f64`: shortest round-trip digits, or
/// `null` where not finite.
fn number(b: &mut Vec<u8>, x: f64) -> Result<()> {
    if x.is_finite() {
        CompactFormatter.write_f64(b, x)?;
    } else {
        b.extend_from_slice(b"null");
    }
    Ok(())
}

/// A time as `passlane_orbit::time::iso_us` serialises it: its text has
/// nothing JSON escapes.
fn time(b: &mut Vec<u8>, t: UtcTime) {
    b.push(b'"');
    t.push_iso_us(b);
    b.push(b'"');
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;
    use passlane_orbit::{Illumination, LoadOptions, elements};
    use passlane_plan::Silent;
    use passlane_plan::passes::{
        ChannelDoppler, IlluminationSpan, MountWarning, PassOptions, find_passes,
    };
    use passlane_plan::scenario::Scenario;
    use passlane_plan::station::LinkDirection;

    fn via_serde(passes: &[Pass]) -> Vec<u8> {
        let mut out = Vec::new();
        super::super::common::write_json(&mut out, &passes).unwrap();
        out
    }

    fn by_hand(passes: &[Pass]) -> Vec<u8> {
        let mut out = Vec::new();
        write_passes(&mut out, passes).unwrap();
        out
    }

    /// The demo week: stations with channels (Doppler), a mask, mount
    /// limits (warnings), clipped passes at both window edges.
    #[test]
    fn the_demo_week_prints_as_serde_prints_it() {
        let repo = std::path::Path::new(env!("CARGO_MANIFEST_DIR"));
        let text = std::fs::read_to_string(repo.join("scenarios/demo.json")).unwrap();
        let scenario = Scenario::from_json(&text, "demo.json").unwrap();
        let bytes = std::fs::read(repo.join("scenarios/demo-fleet.tle")).unwrap();
        let sets = elements::load(&bytes, "demo-fleet.tle", LoadOptions::default()).sets;
        let options = PassOptions::new(
            UtcTime::parse_iso("2026-12-01T00:00:00Z").unwrap(),
            UtcTime::parse_iso("2026-12-08T00:00:00Z").unwrap(),
        );
        let passes = find_passes(&sets, &scenario.stations, &options, &Silent).passes;
        assert!(passes.iter().any(|p| !p.doppler.is_empty()));
        assert!(passes.iter().any(|p| !p.mount_warnings.is_empty()));
        assert!(passes.iter().any(|p| p.illumination.len() > 1));
        assert!(passes.len() > 600, "{}", passes.len());
        assert_eq!(
            String::from_utf8(by_hand(&passes)).unwrap(),
            String::from_utf8(via_serde(&passes)).unwrap()
        );
    }

    /// Names that need escaping, numbers that are not finite, an ephemeris
    /// pass (no element age), a far year, and the empty list.
    #[test]
    fn unusual_values_print_as_serde_prints_them() {
        let t = UtcTime::parse_iso("2026-12-01T00:00:00Z").unwrap();
        let pass = Pass {
            satellite: "QUOTE \"Q\" \\ back\tslash\u{1}é 🛰".to_string(),
            catalog_number: u32::MAX,
            station: "Ridge/\u{7f}\n".to_string(),
            station_index: 0,
            aos: t,
            max_elevation_time: t.add_s(123.456_789_4),
            los: UtcTime::parse_iso("12026-01-01T00:00:00Z").unwrap_or(t.add_s(1e12)),
            max_elevation_deg: f64::NAN,
            aos_azimuth_deg: f64::INFINITY,
            max_elevation_azimuth_deg: -0.0,
            los_azimuth_deg: 1e-300,
            duration_s: 1e21,
            aos_clipped: true,
            los_clipped: false,
            min_range_km: f64::MIN_POSITIVE,
            direction: PassDirection::Descending,
            sun_elevation_deg: -90.0,
            sky: SkyAtStation::AstronomicalTwilight,
            doppler: vec![
                ChannelDoppler {
                    channel: "S \"band\"".to_string(),
                    direction: LinkDirection::Uplink,
                    frequency_hz: 2.2e9,
                    aos_shift_hz: f64::NEG_INFINITY,
                    los_shift_hz: 0.1 + 0.2,
                    max_rate_hz_s: 5.0,
                },
                ChannelDoppler {
                    channel: String::new(),
                    direction: LinkDirection::Downlink,
                    frequency_hz: 4.35e8,
                    aos_shift_hz: -1.0,
                    los_shift_hz: 1.0,
                    max_rate_hz_s: 0.0,
                },
            ],
            illumination: vec![
                IlluminationSpan {
                    state: Illumination::Penumbra,
                    start: t,
                    end: t.add_s(f64::NAN),
                },
                IlluminationSpan {
                    state: Illumination::Umbra,
                    start: t.add_s(-1e11),
                    end: t,
                },
            ],
            mount_warnings: vec![MountWarning {
                axis: "azimuth".to_string(),
                start: t,
                end: t.add_s(0.000_000_4),
                required_rate_deg_s: 3.5,
                limit_deg_s: 3.0,
                excess_deg_s: 0.5,
            }],
            element_age_days: None,
        };
        let mut other = pass.clone();
        other.element_age_days = Some(-0.25);
        other.direction = PassDirection::Ascending;
        other.sky = SkyAtStation::Daylight;
        other.doppler.clear();
        other.mount_warnings.clear();
        other.illumination.clear();
        let mut every_word = Vec::new();
        for (k, sky) in [
            SkyAtStation::Daylight,
            SkyAtStation::CivilTwilight,
            SkyAtStation::NauticalTwilight,
            SkyAtStation::AstronomicalTwilight,
            SkyAtStation::Night,
        ]
        .into_iter()
        .enumerate()
        {
            let mut p = pass.clone();
            p.sky = sky;
            p.direction = [PassDirection::Ascending, PassDirection::Descending][k % 2];
            p.illumination[0].state = [
                Illumination::Sunlit,
                Illumination::Penumbra,
                Illumination::Umbra,
            ][k % 3];
            p.satellite = format!("plain name {k}");
            every_word.push(p);
        }
        for passes in [vec![], vec![pass.clone()], vec![pass, other], every_word] {
            assert_eq!(
                String::from_utf8(by_hand(&passes)).unwrap(),
                String::from_utf8(via_serde(&passes)).unwrap()
            );
        }
    }
}
