//! Hostile input to the element loader: each case must end in diagnostics,
//! never a panic, a hang or memory out of proportion to the input.
//!
//! The giant-file case (50 MB) lives in `huge_input.rs`, a test binary of its
//! own, so that its peak-memory figure is not mixed with these tests'.

#![allow(clippy::unwrap_used, clippy::panic)]

use passlane_orbit::elements::{LoadOptions, LoadReport, load};

const STRICT: LoadOptions = LoadOptions { lenient: false };
const LENIENT: LoadOptions = LoadOptions { lenient: true };

const ORMIVEL: [&str; 3] = [
    "KRSL-1 ORMIVEL",
    "1 90001U 26901A   26335.21354167  .00000876  00000-0  21000-3 0  9993",
    "2 90001  97.4021  45.1200 0010170  88.1000 272.0000 15.20279803 12341",
];

fn ormivel() -> String {
    ORMIVEL.join("\n") + "\n"
}

/// Loads in both modes and insists on at least one error diagnostic with a
/// message, and on nothing loaded.
fn rejected(name: &str, bytes: &[u8]) -> LoadReport {
    for options in [STRICT, LENIENT] {
        let r = load(bytes, "hostile", options);
        assert!(r.sets.is_empty(), "{name}: loaded {:?}", r.sets);
        assert!(r.errors().count() >= 1, "{name}: no error");
        assert!(r.errors().all(|d| !d.message.is_empty()), "{name}");
    }
    load(bytes, "hostile", STRICT)
}

#[test]
fn a_ten_megabyte_line_without_newline() {
    for first in [b'A', b'1', b'2', b'<', b'[', b'{'] {
        let mut bytes = vec![first];
        bytes.resize(10 * 1024 * 1024, b'7');
        let r = rejected("10 MB line", &bytes);
        // Messages quote an excerpt, never the whole line.
        assert!(
            r.diagnostics.iter().all(|d| d.message.len() < 1000),
            "{:?}",
            r.diagnostics
        );
    }
    // With CCSDS_OMM_VERS somewhere inside, the KVN reader gets it.
    let mut bytes = b"X".repeat(5 * 1024 * 1024);
    bytes.extend_from_slice(b"CCSDS_OMM_VERS");
    bytes.extend(b"Y".repeat(5 * 1024 * 1024));
    let r = rejected("10 MB KVN line", &bytes);
    assert!(
        r.diagnostics.iter().all(|d| d.message.len() < 1000),
        "{:?}",
        r.diagnostics
    );
}

#[test]
fn a_ten_megabyte_line_between_good_records() {
    let mut text = ormivel().into_bytes();
    text.extend(b"x".repeat(10 * 1024 * 1024));
    text.push(b'\n');
    text.extend_from_slice(ormivel().as_bytes());
    let r = load(&text, "mixed", STRICT);
    assert_eq!(
        r.sets.len(),
        1,
        "the good record survives: {:?}",
        r.diagnostics
    );
    assert_eq!(r.errors().count(), 1, "{:?}", r.diagnostics);
    assert_eq!(r.errors().next().unwrap().line, 4);
}

#[test]
fn nul_bytes_and_invalid_utf8() {
    rejected("NULs", &vec![0u8; 1024 * 1024]);
    rejected("NUL lines", &b"\0\0\0\n".repeat(10_000));
    rejected(
        "invalid UTF-8",
        &[0xff, 0xfe, 0xfd, b'\n', 0xc3, 0x28, b'\n'].repeat(1000),
    );
    for prefix in [&b"<"[..], b"[", b"{", b"CCSDS_OMM_VERS = 2.0\n"] {
        let mut bytes = prefix.to_vec();
        bytes.extend_from_slice(&[0xff, 0x00, 0xc3, 0x28]);
        rejected("invalid UTF-8 in OMM", &bytes);
    }
    // A TLE with a NUL inside a field is rejected, the next record loads.
    let mut bad = ormivel().into_bytes();
    bad[40] = 0;
    bad.extend_from_slice(ormivel().replace("KRSL-1", "KRSL-1B").as_bytes());
    let r = load(&bad, "nul", STRICT);
    assert!(r.errors().count() >= 1);
}

#[test]
fn deeply_nested_json() {
    for depth in [200, 100_000] {
        let mut bytes = "[".repeat(depth).into_bytes();
        bytes.extend("]".repeat(depth).bytes());
        rejected("nested arrays", &bytes);
        let mut bytes = b"[".to_vec();
        bytes.extend("{\"a\":".repeat(depth).bytes());
        bytes.extend("}".repeat(depth).bytes());
        bytes.push(b']');
        rejected("nested objects", &bytes);
        // Unbalanced: the file ends inside the nesting.
        rejected("unbalanced", "[".repeat(depth).as_bytes());
    }
}

#[test]
fn deeply_nested_xml() {
    for depth in [200, 100_000] {
        let mut text = "<a>".repeat(depth);
        text.push_str(&"</a>".repeat(depth));
        rejected("nested XML", text.as_bytes());
    }
}

/// OMM fields holding numbers, with ORMIVEL's values.
const NUMERIC: [(&str, &str); 13] = [
    ("MEAN_MOTION", "15.20279803"),
    ("ECCENTRICITY", "0.0010170"),
    ("INCLINATION", "97.4021"),
    ("RA_OF_ASC_NODE", "45.1200"),
    ("ARG_OF_PERICENTER", "88.1000"),
    ("MEAN_ANOMALY", "272.0000"),
    ("EPHEMERIS_TYPE", "0"),
    ("NORAD_CAT_ID", "90001"),
    ("ELEMENT_SET_NO", "999"),
    ("REV_AT_EPOCH", "1234"),
    ("BSTAR", "0.00021"),
    ("MEAN_MOTION_DOT", "0.00000876"),
    ("MEAN_MOTION_DDOT", "0"),
];

const TEXT: [(&str, &str); 7] = [
    ("OBJECT_NAME", "KRSL-1 ORMIVEL"),
    ("OBJECT_ID", "2026-901A"),
    ("CENTER_NAME", "EARTH"),
    ("REF_FRAME", "TEME"),
    ("TIME_SYSTEM", "UTC"),
    ("MEAN_ELEMENT_THEORY", "SGP4"),
    ("EPOCH", "2026-12-01T05:07:30.000288"),
];

fn pairs_with(key: &str, value: &str) -> Vec<(&'static str, String)> {
    TEXT.iter()
        .chain(NUMERIC.iter())
        .chain([("CLASSIFICATION_TYPE", "U")].iter())
        .map(|(k, v)| {
            (
                *k,
                if *k == key {
                    value.to_string()
                } else {
                    v.to_string()
                },
            )
        })
        .collect()
}

fn kvn(pairs: &[(&str, String)]) -> String {
    let mut s = String::from(
        "CCSDS_OMM_VERS = 2.0\nCREATION_DATE = 2026-12-01T00:00:00\nORIGINATOR = TEST\n",
    );
    for (k, v) in pairs {
        s.push_str(&format!("{k} = {v}\n"));
    }
    s
}

fn xml(pairs: &[(&str, String)]) -> String {
    let body: String = pairs
        .iter()
        .map(|(k, v)| format!("<{k}>{v}</{k}>\n"))
        .collect();
    // The reader looks elements up by name; the grouping elements of the
    // standard are kept so the document has its usual shape.
    format!(
        "<?xml version=\"1.0\"?>\n<ndm><omm id=\"CCSDS_OMM_VERS\" version=\"2.0\">\n<header/>\n<body><segment>\n<metadata/>\n<data>\n{body}</data>\n</segment></body></omm></ndm>\n"
    )
}

fn json(pairs: &[(&str, String)], bare: &str) -> String {
    let body: Vec<String> = pairs
        .iter()
        .map(|(k, v)| {
            if *k == bare {
                format!("\"{k}\": {v}")
            } else {
                format!("\"{k}\": \"{v}\"")
            }
        })
        .collect();
    format!("[{{{}}}]", body.join(",\n"))
}

#[test]
fn the_good_record_loads_in_every_rendering() {
    // Guards the test helpers: with no change, each rendering loads ORMIVEL.
    let pairs = pairs_with("", "");
    for (name, text) in [
        ("kvn", kvn(&pairs)),
        ("xml", xml(&pairs)),
        ("json", json(&pairs, "")),
    ] {
        let r = load(text.as_bytes(), name, STRICT);
        assert_eq!(r.sets.len(), 1, "{name}: {:?}", r.diagnostics);
    }
}

#[test]
fn overflowing_and_non_numbers_in_every_numeric_omm_field() {
    for (field, _) in NUMERIC {
        for value in [
            "1e309",
            "-1e309",
            "NaN",
            "nan",
            "inf",
            "-Infinity",
            "1e-400000",
            "99999999999999999999",
        ] {
            let pairs = pairs_with(field, value);
            for (format, text) in [
                ("kvn", kvn(&pairs)),
                ("xml", xml(&pairs)),
                ("json string", json(&pairs, "")),
                ("json bare", json(&pairs, field)),
            ] {
                let r = load(text.as_bytes(), format, STRICT);
                let case = format!("{format} {field} = {value}");
                // 1e-400000 underflows to 0, and 1e20 is finite: both may be
                // valid in a real field without a range (BSTAR, the mean
                // motion derivatives); the whole-number fields and everything
                // not finite must be refused.
                let whole = matches!(
                    field,
                    "EPHEMERIS_TYPE" | "NORAD_CAT_ID" | "ELEMENT_SET_NO" | "REV_AT_EPOCH"
                );
                if value == "1e-400000" || (value == "99999999999999999999" && !whole) {
                    continue;
                }
                assert!(r.sets.is_empty(), "{case}: loaded");
                assert!(r.errors().count() >= 1, "{case}: no error");
            }
        }
    }
}

#[test]
fn tle_fields_with_words_and_overflow() {
    // Column edits keep the line length; the checksum is then wrong too, so
    // lenient mode is used to reach the field parser.
    let cases = [
        (1, 21, "NaN.00000000"), // epoch
        (1, 34, "inf.0000"),     // mean motion dot, columns 34-43
        (2, 53, "NaN.0000000"),  // mean motion, columns 53-63
        (2, 9, "NaN.0000"),      // inclination
    ];
    for (which, col, text) in cases {
        let mut lines: Vec<String> = ORMIVEL.iter().map(|s| s.to_string()).collect();
        lines[which].replace_range(col - 1..col - 1 + text.len(), text);
        let bytes = (lines.join("\n") + "\n").into_bytes();
        rejected(&format!("line {which} col {col} {text}"), &bytes);
    }
}

// ---------------------------------------------------------------------------
// Operator ephemerides (CCSDS OEM)

const OEM: &str = "CCSDS_OEM_VERS = 3.0
CREATION_DATE = 2026-11-30T12:00:00
ORIGINATOR = EXAMPLE
META_START
OBJECT_NAME = X
OBJECT_ID = 2026-901A
CENTER_NAME = EARTH
REF_FRAME = TEME
TIME_SYSTEM = UTC
START_TIME = 2026-12-01T00:00:00
STOP_TIME = 2026-12-01T00:04:00
INTERPOLATION = LAGRANGE
INTERPOLATION_DEGREE = 1
META_STOP
2026-12-01T00:00:00 7000 0 0 0 7.5 0
2026-12-01T00:01:00 6996.8 449.9 0 -0.48 7.48 0
2026-12-01T00:02:00 6987.1 899.0 0 -0.96 7.43 0
2026-12-01T00:03:00 6971.0 1346.6 0 -1.44 7.36 0
2026-12-01T00:04:00 6948.5 1791.9 0 -1.92 7.27 0
";

#[test]
fn oem_non_numbers_in_every_state_field_skip_that_line_only() {
    use passlane_orbit::ephemeris::load_oem;
    let eop = passlane_orbit::EarthOrientation::default();
    for bad in ["NaN", "inf", "-Infinity", "1e309", "-1e309", "x"] {
        for field in 1..7 {
            let text: String = OEM
                .lines()
                .enumerate()
                .map(|(i, l)| {
                    if i == 16 {
                        let mut f: Vec<&str> = l.split_whitespace().collect();
                        f[field] = bad;
                        f.join(" ")
                    } else {
                        l.to_string()
                    }
                })
                .collect::<Vec<_>>()
                .join("\n");
            let (eph, d) = load_oem(text.as_bytes(), "h.oem", &eop);
            let errors: Vec<_> = d
                .iter()
                .filter(|x| x.severity == passlane_orbit::Severity::Error)
                .collect();
            assert_eq!(errors.len(), 1, "{bad} in field {field}: {d:?}");
            assert_eq!(errors[0].line, 17);
            assert_eq!(eph.map(|e| e.segments[0].node_count()), Some(4));
        }
    }
}

#[test]
fn oem_giant_line_nul_bytes_and_deep_xml() {
    use passlane_orbit::ephemeris::load_oem;
    let eop = passlane_orbit::EarthOrientation::default();
    // A 10 MB line inside the data: that line is refused, quoted short.
    let giant = OEM.replace(
        "2026-12-01T00:02:00 6987.1 899.0 0 -0.96 7.43 0",
        &"9".repeat(10_000_000),
    );
    let (eph, d) = load_oem(giant.as_bytes(), "g.oem", &eop);
    assert!(eph.is_some());
    assert!(d.iter().all(|x| x.to_string().len() < 400), "{:?}", d.len());
    // NUL bytes and invalid UTF-8: one error, nothing loaded, no panic.
    let (eph, d) = load_oem(&[0u8; 1000], "nul.oem", &eop);
    assert!(eph.is_none() && !d.is_empty());
    let (eph, d) = load_oem(b"CCSDS_OEM_VERS = 3.0\n\xff\xfe", "utf.oem", &eop);
    assert!(eph.is_none() && d[0].message.contains("UTF-8"));
    // Deep nesting: a parse error, no stack overflow.
    let deep = format!("{}{}", "<a>".repeat(100_000), "</a>".repeat(100_000));
    let (eph, d) = load_oem(deep.as_bytes(), "deep.xml", &eop);
    assert!(eph.is_none() && !d.is_empty());
}

// ---------------------------------------------------------------------------
// Bounded diagnostics (issue 12, item 2): a file of junk keeps the first
// findings in full and counts the rest exactly, so memory follows the good
// records, not the junk.

#[test]
fn junk_tle_lines_keep_the_first_findings_and_count_the_rest() {
    use passlane_orbit::elements::MAX_DIAGNOSTICS_KEPT;
    // 500,000 pairs of a bare `1` and `2` line (2 MB): each pair is one
    // record with two findings (both lines too short).
    let pairs = 500_000;
    let mut bytes = "1\n2\n".repeat(pairs).into_bytes();
    bytes.extend_from_slice(ormivel().as_bytes());
    let r = load(&bytes, "junk.tle", STRICT);
    assert_eq!(r.sets.len(), 1, "the good record still loads");
    assert_eq!(r.diagnostics.len(), MAX_DIAGNOSTICS_KEPT);
    assert_eq!(r.error_count(), 2 * pairs, "every finding is counted");
    assert_eq!(r.omitted_errors, 2 * pairs - MAX_DIAGNOSTICS_KEPT);
    assert_eq!(r.rejected_records, pairs, "one rejected record per pair");
    let note = r.omitted_note().unwrap();
    assert!(note.contains("999,900 more"), "{note}");
}

#[test]
fn junk_omm_messages_keep_the_first_findings_and_count_the_rest() {
    use passlane_orbit::elements::MAX_DIAGNOSTICS_KEPT;
    let messages = 20_000;
    let good = kvn(&pairs_with("", ""));
    let junk = "CCSDS_OMM_VERS = 2.0\nOBJECT_NAME = X\n".repeat(messages);
    let r = load((junk + &good).as_bytes(), "junk.kvn", STRICT);
    assert_eq!(r.sets.len(), 1, "{:?}", &r.diagnostics[..3]);
    assert_eq!(r.diagnostics.len(), MAX_DIAGNOSTICS_KEPT);
    assert_eq!(r.rejected_records, messages);
    // Each empty message misses the same mandatory keywords.
    assert_eq!(r.error_count() % messages, 0);
    assert!(r.error_count() > messages);
}

#[test]
fn junk_oem_data_lines_keep_the_first_findings_and_count_the_rest() {
    use passlane_orbit::elements::MAX_DIAGNOSTICS_KEPT;
    use passlane_orbit::ephemeris::load_oem;
    let eop = passlane_orbit::EarthOrientation::default();
    let bad_lines = 50_000;
    let junk = "2026-12-01T00:02:30 x 0 0 0 0 0\n".repeat(bad_lines);
    let text = OEM.replace("2026-12-01T00:03:00", &format!("{junk}2026-12-01T00:03:00"));
    let (eph, d) = load_oem(text.as_bytes(), "junk.oem", &eop);
    assert_eq!(eph.map(|e| e.segments[0].node_count()), Some(5));
    assert_eq!(
        d.len(),
        MAX_DIAGNOSTICS_KEPT + 1,
        "kept + one closing count"
    );
    let last = d.last().unwrap();
    let expected = format!(
        "… and {} more",
        passlane_orbit::elements::thousands(bad_lines - MAX_DIAGNOSTICS_KEPT)
    );
    assert!(last.message.starts_with(&expected), "{last}");
}

// ---------------------------------------------------------------------------
// Years and leap seconds in every time (issue 12, items 4 and 15).

#[test]
fn times_outside_1957_to_2100_and_leap_seconds_are_refused_in_words() {
    use passlane_orbit::UtcTime;
    for (text, words) in [
        ("-2026-12-01T00:00:00Z", "year -2026 is outside 1957-2100"),
        ("1956-12-31T23:59:59Z", "year 1956"),
        ("2101-01-01T00:00:00Z", "year 2101"),
        ("12026-12-01T00:00:00Z", ""),
        ("2026-12-31T23:59:60Z", "leap second"),
        ("2026-12-31T23:59:60.500", "leap second"),
        ("2026-12-31 23:59:60", "leap second"),
    ] {
        let e = UtcTime::parse_iso(text).unwrap_err().to_string();
        assert!(e.contains(words), "{text}: {e}");
    }
    for ok in [
        "1957-10-04T19:28:34Z",
        "2100-12-31T23:59:59.999Z",
        "2026-335T12:00:00",
    ] {
        UtcTime::parse_iso(ok).unwrap();
    }
    // The same rule in a file: an OMM epoch before 1957 skips the record.
    let pairs = pairs_with("EPOCH", "1950-01-01T00:00:00");
    for (format, text) in [
        ("kvn", kvn(&pairs)),
        ("xml", xml(&pairs)),
        ("json", json(&pairs, "")),
    ] {
        let r = load(text.as_bytes(), format, STRICT);
        assert!(r.sets.is_empty(), "{format}");
        assert!(
            r.errors()
                .any(|d| d.field == "EPOCH" && d.message.contains("year 1950")),
            "{format}: {:?}",
            r.diagnostics
        );
    }
}

// ---------------------------------------------------------------------------
// Control characters in names (issue 12, items 11 and 12): replaced at load,
// with a warning naming the line and keyword.

#[test]
fn control_characters_in_omm_and_oem_names_are_replaced_and_named() {
    for (format, text, value_line) in [
        (
            "kvn",
            kvn(&pairs_with(
                "OBJECT_NAME",
                "EVIL\u{1b}[2J\u{1b}]0;owned\u{7}",
            )),
            4,
        ),
        (
            "xml",
            xml(&pairs_with(
                "OBJECT_NAME",
                "EVIL&#10;COLLISION_PROBABILITY = 0&#155;",
            )),
            7,
        ),
        (
            "json",
            json(&pairs_with("OBJECT_NAME", "EVIL\\nX\\u0000\\u001b[31m"), ""),
            1,
        ),
    ] {
        let r = load(text.as_bytes(), format, STRICT);
        assert_eq!(r.sets.len(), 1, "{format}: {:?}", r.diagnostics);
        let name = &r.sets[0].name;
        assert!(name.starts_with("EVIL?"), "{format}: {name:?}");
        assert!(!name.chars().any(char::is_control), "{format}: {name:?}");
        let w = r
            .diagnostics
            .iter()
            .find(|d| d.field == "OBJECT_NAME")
            .unwrap_or_else(|| panic!("{format}: no warning {:?}", r.diagnostics));
        assert_eq!(w.severity, passlane_orbit::Severity::Warning);
        assert_eq!(w.line, value_line, "{format}: {w}");
        assert!(w.message.contains("U+"), "{w}");
    }
    use passlane_orbit::ephemeris::load_oem;
    let eop = passlane_orbit::EarthOrientation::default();
    let text = OEM.replace("OBJECT_NAME = X", "OBJECT_NAME = X\u{1b}[31mRED\u{0}");
    let (eph, d) = load_oem(text.as_bytes(), "names.oem", &eop);
    let eph = eph.unwrap();
    assert_eq!(eph.segments[0].object_name, "X?[31mRED?");
    assert!(
        d.iter()
            .any(|x| x.line == 5 && x.field == "OBJECT_NAME" && x.message.contains("U+001B")),
        "{d:?}"
    );
}

#[test]
fn a_perigee_below_the_surface_loads_with_a_warning() {
    // Mean motion 15.2 rev/day gives a ≈ 6,880 km (Kepler's third law); with
    // e = 0.2 the perigee radius is ≈ 5,500 km, inside the Earth.
    let pairs = pairs_with("ECCENTRICITY", "0.2");
    for (name, text) in [
        ("kvn", kvn(&pairs)),
        ("xml", xml(&pairs)),
        ("json", json(&pairs, "")),
    ] {
        let r = load(text.as_bytes(), name, STRICT);
        assert_eq!(r.sets.len(), 1, "{name}: {:?}", r.diagnostics);
        let w: Vec<_> = r
            .diagnostics
            .iter()
            .filter(|d| d.field == "perigee")
            .collect();
        assert_eq!(w.len(), 1, "{name}: {:?}", r.diagnostics);
        assert!(
            w[0].message.contains("below the Earth's surface"),
            "{}",
            w[0]
        );
        assert!(w[0].line > 0, "{}", w[0]);
    }
    // The unchanged record (perigee ≈ 500 km) gives no such warning.
    let r = load(ormivel().as_bytes(), "good.tle", STRICT);
    assert!(r.diagnostics.is_empty(), "{:?}", r.diagnostics);
}

#[test]
fn one_bad_omm_with_many_faults_is_one_rejected_record() {
    // Every numeric field unreadable: many findings, one record.
    let mut pairs = pairs_with("", "");
    for (k, v) in pairs.iter_mut() {
        if NUMERIC.iter().any(|(n, _)| n == k) {
            *v = "x".to_string();
        }
    }
    for (name, text) in [("kvn", kvn(&pairs)), ("xml", xml(&pairs))] {
        let bad_then_good = format!("{}\n{}", text, kvn(&pairs_with("", "")));
        let r = if name == "kvn" {
            load(bad_then_good.as_bytes(), name, STRICT)
        } else {
            load(text.as_bytes(), name, STRICT)
        };
        assert_eq!(r.rejected_records, 1, "{name}: {:?}", r.diagnostics);
        assert!(r.error_count() > 5, "{name}: {}", r.error_count());
    }
}

#[test]
fn xml_entities_are_never_expanded_and_a_break_keeps_the_records_before_it() {
    // A DTD entity (the basis of expansion attacks) is refused in the record
    // that uses it; the record after it still loads.
    let good = xml(&pairs_with("", ""));
    let body = |name: &str| {
        let start = good.find("<omm").unwrap();
        let end = good.find("</omm>").unwrap() + "</omm>".len();
        good[start..end].replace("KRSL-1 ORMIVEL", name)
    };
    let other = body("SECOND").replace(">90001<", ">90002<");
    let text = format!(
        "<?xml version=\"1.0\"?>\n<!DOCTYPE ndm [<!ENTITY big \"AAAAAAAAAA\">]>\n<ndm>\n{}\n{}\n</ndm>\n",
        body("&big;"),
        other
    );
    let r = load(text.as_bytes(), "entity.xml", STRICT);
    assert_eq!(r.sets.len(), 1, "{:?}", r.diagnostics);
    assert_eq!(r.sets[0].name, "SECOND");
    assert_eq!(r.rejected_records, 1);
    assert!(
        r.diagnostics.iter().any(|d| d.field == "OBJECT_NAME"
            && d.message.contains("&big;")
            // <omm> on line 4, then header, body, metadata, data lines.
            && d.line == 9),
        "{:?}",
        r.diagnostics
    );
    // The five predefined entities and character references are text.
    let r = load(body("A &amp; B &#x43;").as_bytes(), "refs.xml", STRICT);
    assert_eq!(r.sets.len(), 1, "{:?}", r.diagnostics);
    assert_eq!(r.sets[0].name, "A & B C");
    // A document cut inside its second message keeps the first, and names
    // where reading stopped.
    let cut = format!("<ndm>\n{}\n{}", body("FIRST"), &other[..other.len() / 2]);
    let r = load(cut.as_bytes(), "cut.xml", STRICT);
    assert_eq!(r.sets.len(), 1, "{:?}", r.diagnostics);
    assert_eq!(r.sets[0].name, "FIRST");
    assert!(r.error_count() >= 1, "{:?}", r.diagnostics);
    assert!(r.errors().all(|d| d.line > 1), "{:?}", r.diagnostics);
    // A namespace prefix on the tags does not hide the message.
    let prefixed = body("PREFIXED").replace("<", "<n:").replace("<n:/", "</n:");
    let r = load(
        format!("<n:ndm xmlns:n=\"urn:x\">{prefixed}</n:ndm>").as_bytes(),
        "ns.xml",
        STRICT,
    );
    assert_eq!(r.sets.len(), 1, "{:?}", r.diagnostics);
}

/// An XML OEM of `n` states 10 s apart (circular orbit), the state at
/// `bad` (if any) with a non-number in X.
fn oem_xml(n: usize, bad: Option<usize>) -> String {
    let start = passlane_orbit::UtcTime::parse_iso("2026-12-01T00:00:00Z").unwrap();
    let iso = |t: passlane_orbit::UtcTime| t.to_iso_ms().trim_end_matches('Z').to_string();
    let mut s = format!(
        "<?xml version=\"1.0\"?>\n<oem id=\"CCSDS_OEM_VERS\" version=\"3.0\">\n<header><CREATION_DATE>2026-11-30T12:00:00</CREATION_DATE><ORIGINATOR>TEST</ORIGINATOR></header>\n<body><segment><metadata>\n<OBJECT_NAME>X</OBJECT_NAME>\n<OBJECT_ID>2026-901A</OBJECT_ID>\n<CENTER_NAME>EARTH</CENTER_NAME>\n<REF_FRAME>TEME</REF_FRAME>\n<TIME_SYSTEM>UTC</TIME_SYSTEM>\n<START_TIME>{}</START_TIME>\n<STOP_TIME>{}</STOP_TIME>\n<INTERPOLATION>LAGRANGE</INTERPOLATION>\n<INTERPOLATION_DEGREE>5</INTERPOLATION_DEGREE>\n</metadata><data>\n",
        iso(start),
        iso(start.add_s(10.0 * (n - 1) as f64))
    );
    let w = 7.546 / 7000.0;
    for i in 0..n {
        let t = 10.0 * i as f64;
        let (sn, c) = (w * t).sin_cos();
        let x = if Some(i) == bad {
            "x".to_string()
        } else {
            format!("{:.6}", 7000.0 * c)
        };
        s.push_str(&format!(
            "<stateVector><EPOCH>{}</EPOCH><X>{x}</X><Y>{:.6}</Y><Z>0</Z><X_DOT>{:.9}</X_DOT><Y_DOT>{:.9}</Y_DOT><Z_DOT>0</Z_DOT></stateVector>\n",
            iso(start.add_s(t)),
            7000.0 * sn,
            -7.546 * sn,
            7.546 * c
        ));
    }
    s.push_str("</data></segment></body></oem>\n");
    s
}

#[test]
fn a_large_xml_oem_reads_in_linear_time_with_lines_counted() {
    // 20,000 states (5 MB): the tree reader asked for the line of every
    // state from the start of the text (quadratic: a 50 MB file ran for
    // more than nine minutes). The bad state's line is still exact.
    use passlane_orbit::ephemeris::load_oem;
    let eop = passlane_orbit::EarthOrientation::default();
    let text = oem_xml(20_000, Some(15_000));
    let (eph, d) = load_oem(text.as_bytes(), "big.xml", &eop);
    let eph = eph.unwrap();
    assert_eq!(eph.segments[0].node_count(), 19_999);
    let errors: Vec<_> = d
        .iter()
        .filter(|x| x.message.contains("not a finite"))
        .collect();
    assert_eq!(errors.len(), 1, "{d:?}");
    // The first state is on line 15 (declaration, <oem>, header, body,
    // nine metadata lines, <data>).
    assert_eq!(errors[0].line, 15 + 15_000, "{}", errors[0]);
}

#[test]
fn an_xml_oem_never_expands_a_dtd_entity() {
    use passlane_orbit::ephemeris::load_oem;
    let eop = passlane_orbit::EarthOrientation::default();
    let text = oem_xml(10, None)
        .replacen(
            "<?xml version=\"1.0\"?>\n",
            "<?xml version=\"1.0\"?><!DOCTYPE oem [<!ENTITY e \"7000\">]>",
            1,
        )
        .replacen("<X>7000.000000</X>", "<X>&e;</X>", 1);
    assert!(text.contains("&e;"));
    let (eph, d) = load_oem(text.as_bytes(), "entity.xml", &eop);
    assert!(eph.is_none());
    assert!(d[0].message.contains("&e;"), "{d:?}");
    // The predefined entities and character references are text.
    let refs = oem_xml(10, None).replacen(
        "<OBJECT_NAME>X</OBJECT_NAME>",
        "<OBJECT_NAME>A&amp;B&#x43;</OBJECT_NAME>",
        1,
    );
    let (eph, d) = load_oem(refs.as_bytes(), "refs.xml", &eop);
    assert!(eph.is_some(), "{d:?}");
}
