//! Keys of a scenario file that the reader does not know.
//!
//! Serde ignores unknown keys, so a typo (`"lattitude_deg"`) would silently
//! leave a field at its default. This module walks the parsed JSON and names
//! every key the matching struct does not have, with the closest known key
//! as a suggestion. The known keys come from serde itself (the field list
//! each derived `Deserialize` passes to `deserialize_struct`), so they cannot
//! drift from the structs; only the map from a key to its nested struct is
//! written here, and a nested struct it does not list is simply not checked
//! (never a false warning).

use std::cell::Cell;

use passlane_orbit::EarthOrientation;
use serde::Deserialize;
use serde::de::{self, Deserializer, Visitor};
use serde_json::Value;

use crate::scenario::{
    ContactRef, EphemerisFile, SatelliteNeeds, Scenario, ScreeningDefaults, Window,
};
use crate::station::{Antenna, Channel, MaskPoint, MountLimits, Station};

/// One unknown key: where it is and what it might have meant.
#[derive(Debug, Clone, PartialEq)]
pub struct UnknownKey {
    /// JSON path, e.g. `stations[1].lattitude_deg`.
    pub path: String,
    /// The closest known key at that place, when one is close enough.
    pub suggestion: Option<&'static str>,
}

impl std::fmt::Display for UnknownKey {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "{}: unknown key, ignored", self.path)?;
        if let Some(s) = self.suggestion {
            write!(f, " (did you mean \"{s}\"?)")?;
        }
        Ok(())
    }
}

/// The structs a scenario nests, by the key that holds them.
#[derive(Clone, Copy)]
enum Kind {
    Scenario,
    Window,
    EarthOrientation,
    Station,
    MaskPoint,
    Mount,
    Channel,
    Antenna,
    Satellite,
    ContactRef,
    Screening,
    EphemerisFile,
}

impl Kind {
    fn fields(self) -> &'static [&'static str] {
        match self {
            Kind::Scenario => fields_of::<Scenario>(),
            Kind::Window => fields_of::<Window>(),
            Kind::EarthOrientation => fields_of::<EarthOrientation>(),
            Kind::Station => fields_of::<Station>(),
            Kind::MaskPoint => fields_of::<MaskPoint>(),
            Kind::Mount => fields_of::<MountLimits>(),
            Kind::Channel => fields_of::<Channel>(),
            Kind::Antenna => fields_of::<Antenna>(),
            Kind::Satellite => fields_of::<SatelliteNeeds>(),
            Kind::ContactRef => fields_of::<ContactRef>(),
            Kind::Screening => fields_of::<ScreeningDefaults>(),
            Kind::EphemerisFile => fields_of::<EphemerisFile>(),
        }
    }

    /// The struct held under `key` (directly or as array elements).
    fn child(self, key: &str) -> Option<Kind> {
        Some(match (self, key) {
            (Kind::Scenario, "window") => Kind::Window,
            (Kind::Scenario, "earth_orientation") => Kind::EarthOrientation,
            (Kind::Scenario, "stations") => Kind::Station,
            (Kind::Scenario, "satellites") => Kind::Satellite,
            (Kind::Scenario, "pins" | "exclusions") => Kind::ContactRef,
            (Kind::Scenario, "screening") => Kind::Screening,
            (Kind::Scenario, "ephemeris_files") => Kind::EphemerisFile,
            (Kind::Station, "horizon_mask") => Kind::MaskPoint,
            (Kind::Station, "mount") => Kind::Mount,
            (Kind::Station, "channels") => Kind::Channel,
            (Kind::Station, "antennas") => Kind::Antenna,
            _ => return None,
        })
    }
}

/// Every key of `value` (a whole scenario) that the reader ignores.
pub fn unknown_keys(value: &Value) -> Vec<UnknownKey> {
    let mut out = Vec::new();
    walk(value, Kind::Scenario, "", &mut out);
    out
}

fn walk(value: &Value, kind: Kind, path: &str, out: &mut Vec<UnknownKey>) {
    match value {
        Value::Object(map) => {
            let known = kind.fields();
            for (key, v) in map {
                // A key is text from the file: no control characters or
                // terminal escapes reach a message.
                let shown = passlane_orbit::text::clean(key, false);
                let here = if path.is_empty() {
                    shown.into_owned()
                } else {
                    format!("{path}.{shown}")
                };
                if known.contains(&key.as_str()) {
                    if let Some(child) = kind.child(key) {
                        walk(v, child, &here, out);
                    }
                } else {
                    out.push(UnknownKey {
                        path: here,
                        suggestion: closest(key, known),
                    });
                }
            }
        }
        Value::Array(items) => {
            for (i, v) in items.iter().enumerate() {
                walk(v, kind, &format!("{path}[{i}]"), out);
            }
        }
        _ => {}
    }
}

/// The known key nearest to `key` by edit distance, if it is near enough to
/// be a likely typo (at most a third of the key's length, at least 2 edits
/// allowed), or the known key that `key` contains or is contained in
/// (`latitude` for `latitude_deg`).
fn closest(key: &str, known: &[&'static str]) -> Option<&'static str> {
    let lower = key.to_ascii_lowercase();
    let best = known
        .iter()
        .map(|k| (edit_distance(&lower, k), *k))
        .min_by_key(|(d, _)| *d)?;
    let allowed = (key.chars().count() / 3).max(2);
    if best.0 <= allowed {
        return Some(best.1);
    }
    known
        .iter()
        .find(|k| lower.len() >= 4 && (k.starts_with(&lower) || lower.starts_with(**k)))
        .copied()
}

/// Levenshtein distance over characters.
fn edit_distance(a: &str, b: &str) -> usize {
    let b: Vec<char> = b.chars().collect();
    let mut prev: Vec<usize> = (0..=b.len()).collect();
    let mut cur = vec![0; b.len() + 1];
    for (i, ca) in a.chars().enumerate() {
        cur[0] = i + 1;
        for (j, cb) in b.iter().enumerate() {
            let substitute = prev[j] + usize::from(ca != *cb);
            cur[j + 1] = substitute.min(prev[j + 1] + 1).min(cur[j] + 1);
        }
        std::mem::swap(&mut prev, &mut cur);
    }
    prev[b.len()]
}

/// The field names a derived `Deserialize` struct declares (it hands them to
/// `deserialize_struct`; this deserializer records them and stops).
fn fields_of<T: for<'de> Deserialize<'de>>() -> &'static [&'static str] {
    let seen: Cell<&'static [&'static str]> = Cell::new(&[]);
    let _ = T::deserialize(FieldProbe(&seen));
    seen.get()
}

struct FieldProbe<'a>(&'a Cell<&'static [&'static str]>);

impl<'de> Deserializer<'de> for FieldProbe<'_> {
    type Error = de::value::Error;

    fn deserialize_any<V: Visitor<'de>>(self, _visitor: V) -> Result<V::Value, Self::Error> {
        Err(de::Error::custom("field probe"))
    }

    fn deserialize_struct<V: Visitor<'de>>(
        self,
        _name: &'static str,
        fields: &'static [&'static str],
        _visitor: V,
    ) -> Result<V::Value, Self::Error> {
        self.0.set(fields);
        Err(de::Error::custom("field probe"))
    }

    serde::forward_to_deserialize_any! {
        bool i8 i16 i32 i64 i128 u8 u16 u32 u64 u128 f32 f64 char str string
        bytes byte_buf option unit unit_struct newtype_struct seq tuple
        tuple_struct map enum identifier ignored_any
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn fields_come_from_serde() {
        assert!(Kind::Station.fields().contains(&"latitude_deg"));
        assert!(Kind::Scenario.fields().contains(&"element_files"));
        assert!(Kind::Mount.fields().contains(&"max_azimuth_rate_deg_s"));
    }

    #[test]
    fn typos_are_named_with_a_suggestion() {
        let v: Value = serde_json::from_str(
            r#"{"format_version":1,"elements_files":[],
                "stations":[{"name":"A","lattitude_deg":1,"latitude_deg":1,"longitude_deg":2,
                             "antennas":[{"name":"x","turnaround":5}]}],
                "screening":{"threshold_km":5,"colour":"red"}}"#,
        )
        .unwrap();
        let found: Vec<String> = unknown_keys(&v).iter().map(|k| k.to_string()).collect();
        assert_eq!(
            found,
            vec![
                "elements_files: unknown key, ignored (did you mean \"element_files\"?)",
                "screening.colour: unknown key, ignored",
                "stations[0].antennas[0].turnaround: unknown key, ignored (did you mean \"turnaround_s\"?)",
                "stations[0].lattitude_deg: unknown key, ignored (did you mean \"latitude_deg\"?)",
            ]
        );
    }

    #[test]
    fn a_key_with_a_terminal_escape_is_shown_cleaned() {
        let v: Value = serde_json::from_str("{\"format_version\":1,\"x\\u001b[31m\":1}").unwrap();
        let found: Vec<String> = unknown_keys(&v).iter().map(|k| k.to_string()).collect();
        assert_eq!(found, vec!["x?[31m: unknown key, ignored"]);
    }

    #[test]
    fn edit_distance_counts_edits() {
        assert_eq!(edit_distance("kitten", "sitting"), 3);
        assert_eq!(edit_distance("", "abc"), 3);
        assert_eq!(edit_distance("same", "same"), 0);
    }
}
