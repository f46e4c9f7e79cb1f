//! Element-set readers, CCSDS OMM (KVN, XML, JSON): good and bad input.
//!
//! Test data is invented, in the style of the demo fleet (catalog numbers
//! 9xxxx, invented names). Sources of the format facts: TLE column layout and
//! checksum rule: common practice; OMM keywords: CCSDS 502.0.

#![allow(clippy::unwrap_used)]

mod element_records;

use passlane_orbit::elements::{self, LoadOptions, Severity, load};

use element_records::*;

const STRICT: LoadOptions = LoadOptions { lenient: false };

/// A keyword to set (`Some`) or remove (`None`).
type Change = (&'static str, Option<&'static str>);

/// ORMIVEL as OMM keyword/value pairs (CCSDS 502.0 keywords).
fn ormivel_omm() -> Vec<(&'static str, &'static str)> {
    vec![
        ("OBJECT_NAME", "KRSL-1 ORMIVEL"),
        ("OBJECT_ID", "2026-901A"),
        ("CENTER_NAME", "EARTH"),
        ("REF_FRAME", "TEME"),
        ("TIME_SYSTEM", "UTC"),
        ("MEAN_ELEMENT_THEORY", "SGP4"),
        ("EPOCH", "2026-12-01T05:07:30.000288"),
        ("MEAN_MOTION", "15.20279803"),
        ("ECCENTRICITY", "0.0010170"),
        ("INCLINATION", "97.4021"),
        ("RA_OF_ASC_NODE", "45.1200"),
        ("ARG_OF_PERICENTER", "88.1000"),
        ("MEAN_ANOMALY", "272.0000"),
        ("EPHEMERIS_TYPE", "0"),
        ("CLASSIFICATION_TYPE", "U"),
        ("NORAD_CAT_ID", "90001"),
        ("ELEMENT_SET_NO", "999"),
        ("REV_AT_EPOCH", "1234"),
        ("BSTAR", "0.00021"),
        ("MEAN_MOTION_DOT", "0.00000876"),
        ("MEAN_MOTION_DDOT", "0"),
    ]
}

fn with(
    pairs: &[(&'static str, &'static str)],
    changes: &[(&'static str, Option<&'static str>)],
) -> Vec<(&'static str, &'static str)> {
    let mut out: Vec<_> = pairs.to_vec();
    for (k, v) in changes {
        match v {
            Some(v) => {
                if let Some(p) = out.iter_mut().find(|(key, _)| key == k) {
                    p.1 = v;
                } else {
                    out.push((k, v));
                }
            }
            None => out.retain(|(key, _)| key != k),
        }
    }
    out
}

fn kvn(pairs: &[(&str, &str)]) -> String {
    let mut s = String::from("CCSDS_OMM_VERS = 2.0\nCOMMENT invented test record\n");
    for (k, v) in pairs {
        let unit = match *k {
            "MEAN_MOTION" => " [rev/day]",
            "INCLINATION" | "RA_OF_ASC_NODE" => " [deg]",
            _ => "",
        };
        s.push_str(&format!("{k} = {v}{unit}\n"));
    }
    s
}

fn xml(pairs: &[(&str, &str)]) -> String {
    let get = |k: &str| pairs.iter().find(|(key, _)| *key == k).map(|(_, v)| *v);
    let el = |k: &str| get(k).map_or(String::new(), |v| format!("<{k}>{v}</{k}>"));
    let group = |keys: &[&str]| {
        keys.iter()
            .map(|k| el(k))
            .collect::<Vec<_>>()
            .join("\n        ")
    };
    format!(
        r#"<?xml version="1.0" encoding="UTF-8"?>
<ndm>
  <omm id="CCSDS_OMM_VERS" version="2.0">
    <header><CREATION_DATE>2026-12-01T00:00:00</CREATION_DATE><ORIGINATOR>TEST</ORIGINATOR></header>
    <body><segment>
      <metadata>
        {}
      </metadata>
      <data>
        <meanElements>
        {}
        </meanElements>
        <tleParameters>
        {}
        </tleParameters>
      </data>
    </segment></body>
  </omm>
</ndm>
"#,
        group(&[
            "OBJECT_NAME",
            "OBJECT_ID",
            "CENTER_NAME",
            "REF_FRAME",
            "TIME_SYSTEM",
            "MEAN_ELEMENT_THEORY"
        ]),
        group(&[
            "EPOCH",
            "MEAN_MOTION",
            "ECCENTRICITY",
            "INCLINATION",
            "RA_OF_ASC_NODE",
            "ARG_OF_PERICENTER",
            "MEAN_ANOMALY"
        ]),
        group(&[
            "EPHEMERIS_TYPE",
            "CLASSIFICATION_TYPE",
            "NORAD_CAT_ID",
            "ELEMENT_SET_NO",
            "REV_AT_EPOCH",
            "BSTAR",
            "MEAN_MOTION_DOT",
            "MEAN_MOTION_DDOT"
        ]),
    )
}

/// A pretty JSON object, one key per line; numbers as JSON numbers unless
/// `strings` is set. `raw` values are written verbatim.
fn json_obj(pairs: &[(&str, &str)], strings: bool) -> String {
    let numeric = |k: &str| {
        !matches!(
            k,
            "OBJECT_NAME"
                | "OBJECT_ID"
                | "CENTER_NAME"
                | "REF_FRAME"
                | "TIME_SYSTEM"
                | "MEAN_ELEMENT_THEORY"
                | "EPOCH"
                | "CLASSIFICATION_TYPE"
        )
    };
    let body: Vec<String> = pairs
        .iter()
        .map(|(k, v)| {
            if v.starts_with('"') || (numeric(k) && !strings) {
                format!("    \"{k}\": {v}")
            } else {
                format!("    \"{k}\": \"{v}\"")
            }
        })
        .collect();
    format!("  {{\n{}\n  }}", body.join(",\n"))
}

fn json_array(objs: &[String]) -> String {
    format!("[\n{}\n]\n", objs.join(",\n"))
}

#[test]
fn the_same_satellite_in_every_format_gives_the_same_elements() {
    let tle = load(ORMIVEL.join("\n").as_bytes(), "x", STRICT);
    let p = ormivel_omm();
    let texts = [
        kvn(&p),
        xml(&p),
        json_array(&[json_obj(&p, false)]),
        json_array(&[json_obj(&p, true)]),
        json_obj(&p, false),
        json_obj(
            &with(&p, &[("EPOCH", Some("2026-12-01T05:07:30.000288Z"))]),
            false,
        ),
    ];
    for text in texts {
        let omm = load(text.as_bytes(), "x", STRICT);
        assert!(omm.diagnostics.is_empty(), "{text}\n{:#?}", omm.diagnostics);
        assert_eq!(omm.sets.len(), 1);
        let mut a = tle.sets[0].clone();
        let mut b = omm.sets[0].clone();
        a.source = Default::default();
        b.source = Default::default();
        assert_eq!(a, b, "{text}");
    }
}

#[test]
fn several_omms_in_one_kvn_file() {
    let p = ormivel_omm();
    let second = with(
        &p,
        &[
            ("NORAD_CAT_ID", Some("90002")),
            ("OBJECT_NAME", Some("KRSL-2 BREVANDT")),
        ],
    );
    let text = kvn(&p) + "\n" + &kvn(&second);
    let r = load(text.as_bytes(), "two.kvn", STRICT);
    assert!(r.diagnostics.is_empty(), "{:#?}", r.diagnostics);
    assert_eq!(catalogs(&r), vec![90001, 90002]);
    // Each message starts at its CCSDS_OMM_VERS line: 2 header lines + 21 keywords + 1 blank.
    assert_eq!(r.sets[1].source.line, 25);
}

#[test]
fn bad_omm_records_are_reported_and_their_neighbours_still_load() {
    use Severity::Error;
    let p = ormivel_omm();
    let a = with(&p, &[("NORAD_CAT_ID", Some("90001"))]);
    let c = with(
        &p,
        &[
            ("NORAD_CAT_ID", Some("90003")),
            ("OBJECT_NAME", Some("KRSL-3 LUNNOCK")),
        ],
    );
    let mid = |changes: &[(&'static str, Option<&'static str>)]| {
        with(
            &p,
            &[
                &[
                    ("NORAD_CAT_ID", Some("90002")),
                    ("OBJECT_NAME", Some("KRSL-2 BREVANDT")),
                ],
                changes,
            ]
            .concat(),
        )
    };
    // (name, changes to the middle record, keyword the error names, message text)
    let cases: Vec<(&str, Vec<Change>, &str, &str)> = vec![
        (
            "eccentricity 1",
            vec![("ECCENTRICITY", Some("1.0"))],
            "ECCENTRICITY",
            "outside [0, 1)",
        ),
        (
            "eccentricity 1.2",
            vec![("ECCENTRICITY", Some("1.2"))],
            "ECCENTRICITY",
            "outside [0, 1)",
        ),
        (
            "negative mean motion",
            vec![("MEAN_MOTION", Some("-15.2"))],
            "MEAN_MOTION",
            "must be positive",
        ),
        (
            "missing BSTAR",
            vec![("BSTAR", None)],
            "BSTAR",
            "mandatory keyword BSTAR is missing",
        ),
        (
            "missing EPOCH",
            vec![("EPOCH", None)],
            "EPOCH",
            "mandatory keyword EPOCH is missing",
        ),
        (
            "missing NORAD_CAT_ID",
            vec![("NORAD_CAT_ID", None)],
            "NORAD_CAT_ID",
            "missing",
        ),
        (
            "NaN",
            vec![("INCLINATION", Some("\"NaN\""))],
            "INCLINATION",
            "not a number",
        ),
        (
            "inf",
            vec![("MEAN_ANOMALY", Some("\"inf\""))],
            "MEAN_ANOMALY",
            "not a number",
        ),
        (
            "1e309 as text",
            vec![("RA_OF_ASC_NODE", Some("\"1e309\""))],
            "RA_OF_ASC_NODE",
            "out of the range",
        ),
        (
            "1e309 as a number",
            vec![("RA_OF_ASC_NODE", Some("1e309"))],
            "RA_OF_ASC_NODE",
            "out of range",
        ),
        (
            "bad epoch",
            vec![("EPOCH", Some("2026-13-45T99:00:00"))],
            "EPOCH",
            "ISO 8601",
        ),
        (
            "TAI epoch",
            vec![("TIME_SYSTEM", Some("TAI"))],
            "TIME_SYSTEM",
            "not supported",
        ),
    ];
    for (name, changes, key, msg) in cases {
        let b = mid(&changes);
        let text = json_array(&[
            json_obj(&a, false),
            json_obj(&b, false),
            json_obj(&c, false),
        ]);
        let r = load(text.as_bytes(), "case.json", STRICT);
        assert_eq!(
            catalogs(&r),
            vec![90001, 90003],
            "{name}: {:#?}",
            r.diagnostics
        );
        assert_eq!(r.diagnostics.len(), 1, "{name}: {:#?}", r.diagnostics);
        let d = &r.diagnostics[0];
        assert_eq!(d.severity, Error, "{name}");
        assert_eq!(d.field, key, "{name}: {d}");
        assert!(d.message.contains(msg), "{name}: {d}");
        // Line: the keyword's own line, or the object's first line when the
        // keyword is missing. Object 1 spans lines 2..=24 (21 keys + braces).
        let line_of = |needle: &str| {
            let start = text.match_indices(needle).nth(1).map(|(i, _)| i).unwrap();
            text[..start].matches('\n').count() + 1
        };
        let expected = if msg.contains("missing") {
            25
        } else {
            line_of(&format!("\"{key}\""))
        };
        assert_eq!(d.line, expected, "{name}: {d}");
        assert!(expected > 25 && expected < 48 || expected == 25);
    }
}

#[test]
fn missing_bstar_in_kvn_and_xml_names_bstar() {
    let p = ormivel_omm();
    let no_bstar = with(&p, &[("BSTAR", None), ("NORAD_CAT_ID", Some("90002"))]);
    let c = with(&p, &[("NORAD_CAT_ID", Some("90003"))]);
    let text = kvn(&p) + &kvn(&no_bstar) + &kvn(&c);
    let r = load(text.as_bytes(), "case.kvn", STRICT);
    assert_eq!(catalogs(&r), vec![90001, 90003]);
    assert_eq!(r.diagnostics.len(), 1);
    assert_eq!(
        (r.diagnostics[0].line, r.diagnostics[0].field.as_str()),
        (24, "BSTAR")
    );

    let r = load(xml(&no_bstar).as_bytes(), "case.xml", STRICT);
    assert!(r.sets.is_empty());
    assert_eq!(r.diagnostics[0].field, "BSTAR");
    assert_eq!(r.diagnostics[0].line, 3, "the <omm> element's line");
}

#[test]
fn mean_motion_derivatives_default_to_zero() {
    let p = with(
        &ormivel_omm(),
        &[("MEAN_MOTION_DOT", None), ("MEAN_MOTION_DDOT", None)],
    );
    let r = load(kvn(&p).as_bytes(), "x.kvn", STRICT);
    assert!(r.diagnostics.is_empty(), "{:#?}", r.diagnostics);
    assert_eq!(r.sets[0].mean_motion_dot_rev_day2, 0.0);
}

#[test]
fn xml_errors_carry_the_line_of_the_element() {
    let p = with(&ormivel_omm(), &[("ECCENTRICITY", Some("1.5"))]);
    let text = xml(&p);
    let r = load(text.as_bytes(), "x.xml", STRICT);
    let d = &r.diagnostics[0];
    assert_eq!(d.field, "ECCENTRICITY");
    let expected = text[..text.find("<ECCENTRICITY>").unwrap()]
        .matches('\n')
        .count()
        + 1;
    assert_eq!(d.line, expected);
    // Not well-formed XML: one error with a position.
    let r = load(b"<ndm>\n<omm>\n</ndm>", "x.xml", STRICT);
    assert_eq!(r.diagnostics.len(), 1);
    assert_eq!(r.diagnostics[0].line, 3);
}

#[test]
fn json_with_numbers_as_strings_loads() {
    let p = ormivel_omm();
    let text = json_array(&[json_obj(&p, true)]);
    assert!(text.contains("\"MEAN_MOTION\": \"15.20279803\""));
    let r = load(text.as_bytes(), "s.json", STRICT);
    assert!(r.diagnostics.is_empty(), "{:#?}", r.diagnostics);
    assert_eq!(r.sets[0].mean_motion_rev_day, 15.20279803);
}

#[test]
fn deeply_nested_json_gives_a_clear_error() {
    let p = ormivel_omm();
    let deep = format!("{}{}", "[".repeat(100_000), "]".repeat(100_000));
    let bad = format!("  {{\"NORAD_CAT_ID\": 90002, \"BSTAR\": {deep}}}");
    let c = with(&p, &[("NORAD_CAT_ID", Some("90003"))]);
    let text = json_array(&[json_obj(&p, false), bad, json_obj(&c, false)]);
    let r = load(text.as_bytes(), "deep.json", STRICT);
    assert_eq!(catalogs(&r), vec![90001, 90003]);
    assert_eq!(r.diagnostics.len(), 1, "{:#?}", r.diagnostics);
    assert!(
        r.diagnostics[0]
            .message
            .contains("nested more than 128 levels")
    );
    assert_eq!(r.diagnostics[0].field, "BSTAR");
    assert_eq!(r.diagnostics[0].line, 25);
}

#[test]
fn broken_json_keeps_the_records_before_the_break() {
    let p = ormivel_omm();
    let text = format!("[\n{},\n  {{\"NORAD_CAT_ID\": 9000", json_obj(&p, false));
    let r = load(text.as_bytes(), "cut.json", STRICT);
    assert_eq!(catalogs(&r), vec![90001]);
    assert_eq!(r.errors().count(), 1, "{:#?}", r.diagnostics);
    assert_eq!(r.diagnostics[0].line, 25);
}

#[test]
fn deeply_nested_xml_does_not_crash() {
    let text = format!(
        "<ndm>{}{}</ndm>",
        "<a>".repeat(100_000),
        "</a>".repeat(100_000)
    );
    let r = load(text.as_bytes(), "deep.xml", STRICT);
    assert!(r.sets.is_empty());
    assert_eq!(r.errors().count(), 1);
}

#[test]
fn diagnostics_display_file_line_field_and_reason() {
    let w = brevandt();
    let r = load(
        &around(&[w[0].clone(), format!("{}4", &w[1][..68]), w[2].clone()]),
        "fleet.tle",
        STRICT,
    );
    assert_eq!(
        r.diagnostics[0].to_string(),
        "fleet.tle:5: error: column 69 (checksum): checksum is 4 but columns 1-68 sum to 3 (mod 10); record skipped (lenient mode accepts it with a warning)"
    );
    let _ = elements::load; // the module path is public too
}
