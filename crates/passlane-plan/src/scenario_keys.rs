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
//!
//! [`scan_keys`] does this on the text itself, as a stream: no tree of the
//! document is built (a generic JSON tree of a scenario of many small
//! stations took ~8× the text), only the unknown keys found are kept. It
//! names the same keys, in the same order, as [`unknown_keys`] on the tree.

use std::cell::Cell;

use passlane_orbit::EarthOrientation;
use serde::Deserialize;
use serde::de::{self, DeserializeSeed, Deserializer, MapAccess, SeqAccess, Visitor};
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

    /// The most entries the list under `key` may hold, where one is set
    /// (`scenario::MAX_ENTRIES`).
    fn cap(self, key: &str) -> Option<usize> {
        let parent = match self {
            Kind::Scenario => "scenario",
            Kind::Station => "station",
            _ => return None,
        };
        crate::scenario::max_entries(parent, key)
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

/// Why [`scan_keys`] refused a scenario's text.
#[derive(Debug)]
pub enum ScanError {
    /// Not JSON (the same error the tree reader gives).
    Json(serde_json::Error),
    /// A list holds more entries than a scenario may (`Kind::cap`): `path`
    /// (e.g. `stations`, `stations[3].antennas`), its cap, and where in the
    /// text the entry past the cap ends.
    TooMany {
        path: String,
        cap: usize,
        line: usize,
        column: usize,
    },
}

impl std::fmt::Display for ScanError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            ScanError::Json(e) => e.fmt(f),
            ScanError::TooMany {
                path,
                cap,
                line,
                column,
            } => write!(
                f,
                "{path}: more than {cap} entries at line {line} column {column}"
            ),
        }
    }
}

fn scan_error(e: serde_json::Error, over: &Cell<Option<(String, usize)>>) -> ScanError {
    match over.take() {
        Some((path, cap)) => ScanError::TooMany {
            path,
            cap,
            line: e.line(),
            column: e.column(),
        },
        None => ScanError::Json(e),
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

/// What [`scan_keys`] finds in a scenario's text.
#[derive(Debug, Clone, PartialEq)]
pub struct KeyScan {
    /// The top-level `format_version`, when it is a whole number ≥ 0 (the
    /// last one, if the key is repeated).
    pub format_version: Option<u64>,
    /// Every key the reader ignores, as [`unknown_keys`] names them.
    pub unknown: Vec<UnknownKey>,
}

/// Reads `text` (a whole scenario) as a stream of JSON tokens and returns
/// its format version and the keys the reader ignores, without building a
/// tree of the document. Fails where `serde_json::from_str::<Value>` would,
/// with the same error (the same parser reads every value).
pub fn scan_keys(text: &str) -> Result<KeyScan, ScanError> {
    let mut de = serde_json::Deserializer::from_str(text);
    let mut format_version = None;
    let over = Cell::new(None);
    let unknown = Node {
        kind: Some(Kind::Scenario),
        at: &Place::Root,
        format_version: Some(&mut format_version),
        cap: None,
        over: &over,
    }
    .deserialize(&mut de)
    .map_err(|e| scan_error(e, &over))?;
    de.end().map_err(ScanError::Json)?;
    Ok(KeyScan {
        format_version,
        unknown,
    })
}

/// Where a value is in the document: its path is written out only for an
/// unknown key, so a document of good keys costs no text per value.
enum Place<'a> {
    Root,
    Key(&'a Place<'a>, &'a str),
    Index(&'a Place<'a>, usize),
}

impl Place<'_> {
    /// The path as [`unknown_keys`] writes it (`stations[1].lattitude_deg`).
    fn path(&self) -> String {
        match self {
            Place::Root => String::new(),
            Place::Key(parent, key) => {
                let parent = parent.path();
                // A key is text from the file: no control characters or
                // terminal escapes reach a message.
                let shown = passlane_orbit::text::clean(key, false);
                if parent.is_empty() {
                    shown.into_owned()
                } else {
                    format!("{parent}.{shown}")
                }
            }
            Place::Index(parent, i) => format!("{}[{i}]", parent.path()),
        }
    }
}

/// A value whose keys are checked against the struct `kind` (objects, and
/// arrays of them at any depth, as [`walk`] does); `None`: a value whose
/// keys are not checked, read only to be skipped.
struct Node<'a> {
    kind: Option<Kind>,
    at: &'a Place<'a>,
    /// The top level only: where its `format_version` goes.
    format_version: Option<&'a mut Option<u64>>,
    /// For an array: the most entries it may hold (`Kind::cap`).
    cap: Option<usize>,
    /// Where a list over its cap is noted (its path and the cap) before the
    /// scan stops with an error.
    over: &'a Cell<Option<(String, usize)>>,
}

impl<'a> Node<'a> {
    /// A value read only to be skipped (its keys are not checked).
    fn skip(at: &'a Place<'a>, over: &'a Cell<Option<(String, usize)>>) -> Self {
        Node {
            kind: None,
            at,
            format_version: None,
            cap: None,
            over,
        }
    }
}

impl<'de> DeserializeSeed<'de> for Node<'_> {
    type Value = Vec<UnknownKey>;

    fn deserialize<D: Deserializer<'de>>(self, d: D) -> Result<Self::Value, D::Error> {
        // `deserialize_any`, not `deserialize_ignored_any`, even for values
        // that are skipped: numbers are then parsed in full, and a document
        // is refused exactly where the tree reader refuses it.
        d.deserialize_any(self)
    }
}

/// A key as read: borrowed from the text unless it holds escapes.
enum KeyText<'de> {
    Borrowed(&'de str),
    Owned(String),
}

impl KeyText<'_> {
    fn as_str(&self) -> &str {
        match self {
            KeyText::Borrowed(s) => s,
            KeyText::Owned(s) => s,
        }
    }
}

impl<'de> Deserialize<'de> for KeyText<'de> {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct KeyVisitor;
        impl<'de> Visitor<'de> for KeyVisitor {
            type Value = KeyText<'de>;
            fn expecting(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
                f.write_str("a string key")
            }
            fn visit_borrowed_str<E: de::Error>(self, v: &'de str) -> Result<Self::Value, E> {
                Ok(KeyText::Borrowed(v))
            }
            fn visit_str<E: de::Error>(self, v: &str) -> Result<Self::Value, E> {
                Ok(KeyText::Owned(v.to_string()))
            }
        }
        d.deserialize_str(KeyVisitor)
    }
}

impl<'de> Visitor<'de> for Node<'_> {
    type Value = Vec<UnknownKey>;

    fn expecting(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str("any JSON value")
    }

    fn visit_map<A: MapAccess<'de>>(mut self, mut map: A) -> Result<Self::Value, A::Error> {
        // The unknown keys under each key of this object, for the keys that
        // have any: the tree reader's objects iterate in key order (a
        // `BTreeMap`), so these are sorted before they are handed up.
        let mut found: Vec<(String, Vec<UnknownKey>)> = Vec::new();
        while let Some(key) = map.next_key::<KeyText<'de>>()? {
            let key = key.as_str();
            let at = Place::Key(self.at, key);
            let Some(kind) = self.kind else {
                map.next_value_seed(Node::skip(&at, self.over))?;
                continue;
            };
            if let Some(version) = self.format_version.as_deref_mut()
                && key == "format_version"
            {
                *version = map.next_value_seed(WholeNumber)?;
                continue;
            }
            let here = if kind.fields().contains(&key) {
                map.next_value_seed(Node {
                    kind: kind.child(key),
                    at: &at,
                    format_version: None,
                    cap: kind.cap(key),
                    over: self.over,
                })?
            } else {
                map.next_value_seed(Node::skip(&at, self.over))?;
                vec![UnknownKey {
                    path: at.path(),
                    suggestion: closest(key, kind.fields()),
                }]
            };
            // A repeated key whose last value has no unknown key hides what
            // an earlier value had, as in the tree.
            if !here.is_empty() || found.iter().any(|(k, _)| k == key) {
                found.push((key.to_string(), here));
            }
        }
        // A stable sort: of a repeated key, whose last value the tree
        // keeps, the last stays last.
        found.sort_by(|a, b| a.0.cmp(&b.0));
        let mut out: Vec<UnknownKey> = Vec::new();
        let mut found = found.into_iter().peekable();
        while let Some((key, mut keys)) = found.next() {
            if found.peek().is_none_or(|(next, _)| *next != key) {
                out.append(&mut keys);
            }
        }
        Ok(out)
    }

    fn visit_seq<A: SeqAccess<'de>>(self, mut seq: A) -> Result<Self::Value, A::Error> {
        let mut out = Vec::new();
        let mut i = 0usize;
        loop {
            if let Some(cap) = self.cap
                && i == cap
                && seq.size_hint() != Some(0)
            {
                // One more entry than the cap is enough to refuse; the
                // rest of the text is not read.
                if seq
                    .next_element_seed(Node::skip(self.at, self.over))?
                    .is_some()
                {
                    self.over.set(Some((self.at.path(), cap)));
                    return Err(de::Error::custom("a list over its cap"));
                }
                break;
            }
            let at = Place::Index(self.at, i);
            let Some(mut keys) = seq.next_element_seed(Node {
                kind: self.kind,
                at: &at,
                format_version: None,
                cap: None,
                over: self.over,
            })?
            else {
                break;
            };
            out.append(&mut keys);
            i += 1;
        }
        Ok(out)
    }

    fn visit_bool<E: de::Error>(self, _: bool) -> Result<Self::Value, E> {
        Ok(Vec::new())
    }

    fn visit_i64<E: de::Error>(self, _: i64) -> Result<Self::Value, E> {
        Ok(Vec::new())
    }

    fn visit_u64<E: de::Error>(self, _: u64) -> Result<Self::Value, E> {
        Ok(Vec::new())
    }

    fn visit_f64<E: de::Error>(self, _: f64) -> Result<Self::Value, E> {
        Ok(Vec::new())
    }

    fn visit_str<E: de::Error>(self, _: &str) -> Result<Self::Value, E> {
        Ok(Vec::new())
    }

    fn visit_unit<E: de::Error>(self) -> Result<Self::Value, E> {
        Ok(Vec::new())
    }
}

/// The top-level `format_version` as the tree reader's `Value::as_u64`
/// reads it: a whole number ≥ 0, else `None` (the value is skipped).
struct WholeNumber;

impl<'de> DeserializeSeed<'de> for WholeNumber {
    type Value = Option<u64>;

    fn deserialize<D: Deserializer<'de>>(self, d: D) -> Result<Self::Value, D::Error> {
        d.deserialize_any(self)
    }
}

impl<'de> Visitor<'de> for WholeNumber {
    type Value = Option<u64>;

    fn expecting(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str("any JSON value")
    }

    fn visit_u64<E: de::Error>(self, v: u64) -> Result<Self::Value, E> {
        Ok(Some(v))
    }

    fn visit_map<A: MapAccess<'de>>(self, map: A) -> Result<Self::Value, A::Error> {
        let (at, over) = (Place::Root, Cell::new(None));
        Node::skip(&at, &over).visit_map(map).map(|_| None)
    }

    fn visit_seq<A: SeqAccess<'de>>(self, seq: A) -> Result<Self::Value, A::Error> {
        let (at, over) = (Place::Root, Cell::new(None));
        Node::skip(&at, &over).visit_seq(seq).map(|_| None)
    }

    fn visit_bool<E: de::Error>(self, _: bool) -> Result<Self::Value, E> {
        Ok(None)
    }

    fn visit_i64<E: de::Error>(self, _: i64) -> Result<Self::Value, E> {
        Ok(None)
    }

    fn visit_f64<E: de::Error>(self, _: f64) -> Result<Self::Value, E> {
        Ok(None)
    }

    fn visit_str<E: de::Error>(self, _: &str) -> Result<Self::Value, E> {
        Ok(None)
    }

    fn visit_unit<E: de::Error>(self) -> Result<Self::Value, E> {
        Ok(None)
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
#[allow(clippy::unwrap_used, clippy::panic)]
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

    /// The streaming scan against the tree walk on one text: the same
    /// unknown keys in the same order, the same format version, the same
    /// error where the text is not JSON.
    fn same_as_the_tree(text: &str) {
        match (scan_keys(text), serde_json::from_str::<Value>(text)) {
            (Ok(scan), Ok(v)) => {
                assert_eq!(scan.unknown, unknown_keys(&v), "{text}");
                let version = v.get("format_version").and_then(Value::as_u64);
                assert_eq!(scan.format_version, version, "{text}");
            }
            (Err(a), Err(b)) => assert_eq!(a.to_string(), b.to_string(), "{text}"),
            (a, b) => panic!("{text}: the scan gives {a:?}, the tree {b:?}"),
        }
    }

    #[test]
    fn the_streaming_scan_names_what_the_tree_walk_names() {
        let deep = format!("{}1{}", "[".repeat(200), "]".repeat(200));
        for text in [
            r#"{"format_version":1,"elements_files":[],
                "stations":[{"name":"A","lattitude_deg":1,"latitude_deg":1,"longitude_deg":2,
                             "antennas":[{"name":"x","turnaround":5}]}],
                "screening":{"threshold_km":5,"colour":"red"}}"#,
            // Keys out of order, repeated (the tree keeps the last value),
            // with escapes, nested arrays of stations, a non-object root.
            r#"{"zz":1,"stations":[[{"nme":"a"}],{"name":"b","mount":{"max_az":1}}],"aa":{"b":[1,{"c":2}]},"zz":2,"format_version":3}"#,
            r#"{"format_version":1,"format_version":"2"}"#,
            // A repeated struct key: the unknown keys of its last value only
            // (found by the generated documents below).
            r#"{"pins":{"name":3.0,"turnaround":1.0},"pins":["liet"]}"#,
            r#"{"pins":["liet"],"pins":{"name":3.0,"turnaround":1.0}}"#,
            r#"{"format_version":-1,"x\u001b[31m":1,"a\"b":2,"\u00e9t\u00e9":3}"#,
            r#"{"format_version":1.0,"stations":{"nam":"an object where a list belongs"}}"#,
            r#"[{"format_version":1,"nope":2},{"stations":[{"lat":1}]}]"#,
            "7",
            "null",
            r#"{"format_version":18446744073709551615,"big":1e308,"small":-1e-320}"#,
            // Not JSON, in several ways: the same message, line and column.
            r#"{"format_version":1,"huge":1e400}"#,
            r#"{"format_version":1,}"#,
            r#"{"format_version":1} trailing"#,
            r#"{"a":"\ud800"}"#,
            r#"{"a":"\x"}"#,
            "{\"a\":\"line\nbreak\"}",
            "",
            "   ",
            &deep,
        ] {
            same_as_the_tree(text);
        }
        // Every cut of a document with unknown keys is refused alike.
        let doc = r#"{"format_version":1,"stations":[{"name":"A","lattitude_deg":1.5e3,"antennas":[{"name":"x","turnaround":5}]}],"colour":"red"}"#;
        for cut in 0..doc.len() {
            same_as_the_tree(&doc[..cut]);
        }
    }

    /// A JSON document as text, repeated keys allowed (a tree cannot hold
    /// them, so the generator writes text).
    #[derive(Debug, Clone)]
    enum Doc {
        Number(f64),
        Text(String),
        List(Vec<Doc>),
        Object(Vec<(String, Doc)>),
    }

    impl Doc {
        fn write(&self, out: &mut String) {
            match self {
                Doc::Number(x) => out.push_str(&format!("{x:?}")),
                Doc::Text(t) => out.push_str(&serde_json::to_string(t).unwrap()),
                Doc::List(items) => {
                    out.push('[');
                    for (i, d) in items.iter().enumerate() {
                        if i > 0 {
                            out.push(',');
                        }
                        d.write(out);
                    }
                    out.push(']');
                }
                Doc::Object(entries) => {
                    out.push('{');
                    for (i, (k, d)) in entries.iter().enumerate() {
                        if i > 0 {
                            out.push(',');
                        }
                        out.push_str(&serde_json::to_string(k).unwrap());
                        out.push(':');
                        d.write(out);
                    }
                    out.push('}');
                }
            }
        }
    }

    fn doc() -> impl proptest::strategy::Strategy<Value = Doc> {
        use proptest::prelude::*;
        // Known keys (some holding nested structs), typos, and odd text.
        let key = prop::sample::select(vec![
            "format_version",
            "name",
            "stations",
            "screening",
            "window",
            "satellites",
            "pins",
            "antennas",
            "channels",
            "mount",
            "horizon_mask",
            "latitude_deg",
            "longitude_deg",
            "threshold_km",
            "lattitude_deg",
            "colour",
            "stationz",
            "antenas",
            "turnaround",
            "x\u{1b}[1m",
            "é",
            "a\"b",
            "",
        ])
        .prop_map(str::to_string);
        let leaf = prop_oneof![
            (-1e6f64..1e6).prop_map(Doc::Number),
            (0u32..4).prop_map(|n| Doc::Number(f64::from(n))),
            "[a-z]{0,4}".prop_map(Doc::Text),
        ];
        leaf.prop_recursive(5, 60, 6, move |inner| {
            prop_oneof![
                prop::collection::vec(inner.clone(), 0..5).prop_map(Doc::List),
                prop::collection::vec((key.clone(), inner), 0..6).prop_map(Doc::Object),
            ]
        })
    }

    proptest::proptest! {
        #[test]
        fn the_streaming_scan_matches_the_tree_walk_on_any_document(d in doc()) {
            let mut text = String::new();
            d.write(&mut text);
            same_as_the_tree(&text);
        }
    }

    #[test]
    fn edit_distance_counts_edits() {
        assert_eq!(edit_distance("kitten", "sitting"), 3);
        assert_eq!(edit_distance("", "abc"), 3);
        assert_eq!(edit_distance("same", "same"), 0);
    }
}
