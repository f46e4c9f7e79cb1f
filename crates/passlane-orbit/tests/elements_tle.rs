//! Element-set readers, TLE: good and bad input.
//!
//! Test data is invented, in the style of the demo fleet (catalog numbers
//! 9xxxx, invented names). Sources of the format facts: TLE column layout and
//! checksum rule: common practice; OMM keywords: CCSDS 502.0.

#![allow(clippy::unwrap_used)]

mod element_records;

use passlane_orbit::elements::{LoadOptions, LoadReport, Severity, load, load_records};

use element_records::*;

const STRICT: LoadOptions = LoadOptions { lenient: false };
const LENIENT: LoadOptions = LoadOptions { lenient: true };

// Three invented records (the first three of the demo fleet).

/// One expected diagnostic: severity, line, text the field contains, text the message contains.
type Expect = (Severity, usize, &'static str, &'static str);

fn check(name: &str, r: &LoadReport, expected: &[Expect], loaded: &[u32]) {
    assert_eq!(
        r.diagnostics.len(),
        expected.len(),
        "{name}: diagnostics {:#?}",
        r.diagnostics
    );
    for (d, (sev, line, field, msg)) in r.diagnostics.iter().zip(expected) {
        assert_eq!(d.severity, *sev, "{name}: {d}");
        assert_eq!(d.line, *line, "{name}: {d}");
        assert!(d.field.contains(field), "{name}: field of {d}");
        assert!(d.message.contains(msg), "{name}: message of {d}");
        assert_eq!(d.file, "case.tle", "{name}");
    }
    assert_eq!(catalogs(r), loaded, "{name}: loaded records");
}

#[test]
fn bad_tle_records_are_reported_and_their_neighbours_still_load() {
    use Severity::{Error, Warning};
    let w = brevandt();
    let bad_checksum = vec![w[0].clone(), format!("{}4", &w[1][..68]), w[2].clone()];
    // Inclination moved one column to the right: the blank column 17 is taken.
    let shifted = vec![
        w[0].clone(),
        w[1].clone(),
        "2 90002   97.4033 45.3100 0010171  91.4000 250.0000 15.20611168 12333".to_string(),
    ];
    let non_numeric = vec![w[0].clone(), w[1].clone(), edit(&w[2], 9, " 97.4O33")];
    let no_line2 = vec![w[0].clone(), w[1].clone()];
    let cut_line2 = vec![w[0].clone(), w[1].clone(), w[2][..40].to_string()];
    let junk = vec![
        String::from_utf8_lossy(&[0x00, 0x01, 0x02, b'x']).into_owned(),
        "\u{7f}\u{7f}garbage\u{1}".to_string(),
    ];
    let negative_n = vec![w[0].clone(), w[1].clone(), edit(&w[2], 53, "-5.20611168")];
    let catalog_mismatch = vec![w[0].clone(), w[1].clone(), edit(&w[2], 3, "90009")];
    let orphan_line2 = vec![w[2].clone()];
    let bad_epoch_day = vec![
        w[0].clone(),
        edit(&w[1], 19, "26400.22100000"),
        w[2].clone(),
    ];
    let extra_columns = vec![w[0].clone(), format!("{}   extra", w[1]), w[2].clone()];

    type Case = (
        &'static str,
        Vec<String>,
        LoadOptions,
        Vec<Expect>,
        Vec<u32>,
    );
    let cases: Vec<Case> = vec![
        (
            "good",
            brevandt(),
            STRICT,
            vec![],
            vec![90001, 90002, 90003],
        ),
        (
            "checksum wrong, strict",
            bad_checksum.clone(),
            STRICT,
            vec![(
                Error,
                5,
                "column 69 (checksum)",
                "checksum is 4 but columns 1-68 sum to 3",
            )],
            vec![90001, 90003],
        ),
        (
            "checksum wrong, lenient",
            bad_checksum,
            LENIENT,
            vec![(
                Warning,
                5,
                "column 69 (checksum)",
                "accepted (lenient mode)",
            )],
            vec![90001, 90002, 90003],
        ),
        (
            "shifted columns",
            shifted,
            STRICT,
            vec![(Error, 6, "column 17", "look shifted")],
            vec![90001, 90003],
        ),
        (
            "non-numeric field",
            non_numeric,
            STRICT,
            vec![(
                Error,
                6,
                "columns 9-16 (inclination)",
                "not a decimal number",
            )],
            vec![90001, 90003],
        ),
        (
            "missing second line",
            no_line2,
            STRICT,
            vec![(Error, 5, "column 1", "not followed by its line 2")],
            vec![90001, 90003],
        ),
        (
            "truncated line 2",
            cut_line2,
            STRICT,
            vec![(
                Error,
                6,
                "columns 41-69",
                "columns 41-69 (argument of perigee, mean anomaly, mean motion, revolution number, checksum) are missing",
            )],
            vec![90001, 90003],
        ),
        (
            "binary junk",
            junk,
            STRICT,
            vec![(Error, 4, "", "and 1 more lines like it, through line 5")],
            vec![90001, 90003],
        ),
        (
            "negative mean motion",
            negative_n,
            STRICT,
            vec![(Error, 6, "columns 53-63 (mean motion)", "must be positive")],
            vec![90001, 90003],
        ),
        (
            "catalog numbers differ",
            catalog_mismatch,
            STRICT,
            vec![(
                Error,
                6,
                "columns 3-7 (catalog number)",
                "line 2 has catalog number 90009 but line 1 (line 5) has 90002",
            )],
            vec![90001, 90003],
        ),
        (
            "line 2 alone",
            orphan_line2,
            STRICT,
            vec![(Error, 4, "column 1", "line 2 without a line 1")],
            vec![90001, 90003],
        ),
        (
            "day 400",
            bad_epoch_day,
            STRICT,
            vec![(
                Error,
                5,
                "columns 19-32 (epoch)",
                "day 400 does not exist in 2026",
            )],
            vec![90001, 90003],
        ),
        (
            "extra columns, strict",
            extra_columns.clone(),
            STRICT,
            vec![(Error, 5, "columns 70-77", "lenient mode ignores")],
            vec![90001, 90003],
        ),
        (
            "extra columns, lenient",
            extra_columns,
            LENIENT,
            vec![],
            vec![90001, 90002, 90003],
        ),
        (
            // Same catalog number as ORMIVEL with a newer epoch: the newer one
            // (line 4) is kept, the older (line 1) dropped with a warning.
            "duplicate catalog number",
            vec![
                "KRSL-1 ORMIVEL (NEWER)".to_string(),
                edit(ORMIVEL[1], 19, "26336.21354167"),
                ORMIVEL[2].to_string(),
            ],
            STRICT,
            vec![(
                Warning,
                1,
                "catalog number",
                "duplicate catalog number 90001",
            )],
            vec![90001, 90003],
        ),
    ];
    for (name, middle, options, expected, loaded) in cases {
        let r = load(&around(&middle), "case.tle", options);
        check(name, &r, &expected, &loaded);
    }
}

#[test]
fn duplicate_keeps_the_newest_epoch() {
    let newer = vec![
        "KRSL-1 ORMIVEL (NEWER)".to_string(),
        edit(ORMIVEL[1], 19, "26336.21354167"),
        ORMIVEL[2].to_string(),
    ];
    let r = load(&around(&newer), "case.tle", STRICT);
    assert_eq!(r.sets[0].name, "KRSL-1 ORMIVEL (NEWER)");
    assert_eq!(r.sets[0].source.line, 4);
    // Without de-duplication both stay.
    let r = load_records(&around(&newer), "case.tle", STRICT);
    assert_eq!(catalogs(&r), vec![90001, 90001, 90003]);
}

#[test]
fn a_file_cut_inside_a_record_keeps_the_records_before_it() {
    let mut text = [
        ORMIVEL.join("\n"),
        LUNNOCK.join("\n"),
        BREVANDT[0].to_string(),
    ]
    .join("\n");
    text.push('\n');
    text.push_str(&BREVANDT[1][..30]);
    let r = load(text.as_bytes(), "case.tle", STRICT);
    assert_eq!(catalogs(&r), vec![90001, 90003]);
    assert_eq!(r.diagnostics.len(), 1, "{:#?}", r.diagnostics);
    let d = &r.diagnostics[0];
    assert_eq!((d.severity, d.line), (Severity::Error, 8));
    assert!(d.message.contains("the file ends here"), "{d}");

    // Cut right after a name line.
    let text = [ORMIVEL.join("\n"), BREVANDT[0].to_string()].join("\n");
    let r = load(text.as_bytes(), "case.tle", STRICT);
    assert_eq!(catalogs(&r), vec![90001]);
    assert_eq!(r.diagnostics[0].line, 4);
    assert!(
        r.diagnostics[0].message.contains("truncated"),
        "{}",
        r.diagnostics[0]
    );
}

#[test]
fn resynchronises_on_the_next_line_1_in_two_line_files() {
    // Two-line form: a line 1 without its line 2, then good records.
    let text = [ORMIVEL[1], ORMIVEL[2], BREVANDT[1], LUNNOCK[1], LUNNOCK[2]].join("\n");
    let r = load(text.as_bytes(), "two.tle", STRICT);
    assert_eq!(catalogs(&r), vec![90001, 90003]);
    assert_eq!(r.sets[0].name, "CATALOG 90001");
    assert_eq!(r.diagnostics.len(), 1);
    assert_eq!(r.diagnostics[0].line, 3);
}

#[test]
fn empty_and_blank_files() {
    for text in [&b""[..], b"\n\n  \r\n", b"# only a comment\n"] {
        let r = load(text, "empty.tle", STRICT);
        assert!(r.sets.is_empty());
        assert_eq!(r.errors().count(), 1, "{:?}", r.diagnostics);
    }
}

#[test]
fn three_line_form_with_zero_names_crlf_trailing_blanks_and_gaps() {
    let text = format!(
        "0 {}   \r\n{}  \r\n{}\t\r\n\r\n\r\n0 {}\r\n{}\r\n{}   ",
        ORMIVEL[0], ORMIVEL[1], ORMIVEL[2], BREVANDT[0], BREVANDT[1], BREVANDT[2]
    );
    let r = load(text.as_bytes(), "crlf.tle", STRICT);
    assert!(r.diagnostics.is_empty(), "{:#?}", r.diagnostics);
    assert_eq!(r.sets[0].name, "KRSL-1 ORMIVEL");
    assert_eq!(r.sets[1].name, "KRSL-2 BREVANDT");
    assert_eq!(r.sets[1].source.line, 6);
}

#[test]
fn reads_every_tle_field() {
    let r = load(ORMIVEL.join("\n").as_bytes(), "ormivel.tle", STRICT);
    assert!(r.diagnostics.is_empty(), "{:#?}", r.diagnostics);
    let s = &r.sets[0];
    assert_eq!(s.name, "KRSL-1 ORMIVEL");
    assert_eq!(s.catalog_number, 90001);
    assert_eq!(s.classification, 'U');
    assert_eq!(s.international_designator, "26901A");
    // 26335.21354167: day 335 of 2026 = 1 December; 0.21354167 d = 18450.000288 s.
    assert_eq!(s.epoch.to_iso_ms(), "2026-12-01T05:07:30.000Z");
    assert_eq!(s.mean_motion_dot_rev_day2, 0.00000876);
    assert_eq!(s.mean_motion_ddot_rev_day3, 0.0);
    assert_eq!(s.bstar_per_earth_radii, 0.21e-3);
    assert_eq!(s.ephemeris_type, 0);
    assert_eq!(s.element_set_number, 999);
    assert_eq!(s.inclination_deg, 97.4021);
    assert_eq!(s.raan_deg, 45.12);
    assert_eq!(s.eccentricity, 0.001017);
    assert_eq!(s.arg_perigee_deg, 88.1);
    assert_eq!(s.mean_anomaly_deg, 272.0);
    assert_eq!(s.mean_motion_rev_day, 15.20279803);
    assert_eq!(s.revolution_number, 1234);
    assert_eq!((s.source.file.as_str(), s.source.line), ("ormivel.tle", 1));
}

#[test]
fn alpha5_catalog_numbers_load() {
    let l1 = edit(ORMIVEL[1], 3, "A0001");
    let l2 = edit(ORMIVEL[2], 3, "A0001");
    let r = load([l1, l2].join("\n").as_bytes(), "a5.tle", STRICT);
    assert!(r.diagnostics.is_empty(), "{:#?}", r.diagnostics);
    // Alpha-5 (common practice): A = 10, so A0001 = 100001.
    assert_eq!(r.sets[0].catalog_number, 100_001);
    assert_eq!(r.sets[0].name, "CATALOG 100001");
}

fn demo_fleet() -> Vec<u8> {
    std::fs::read(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/../../scenarios/demo-fleet.tle"
    ))
    .unwrap()
}

#[test]
fn the_demo_fleet_loads_cleanly() {
    let r = load(&demo_fleet(), "demo-fleet.tle", STRICT);
    assert!(r.diagnostics.is_empty(), "{:#?}", r.diagnostics);
    assert_eq!(catalogs(&r), vec![90001, 90002, 90003, 90004, 90005, 90006]);
    assert_eq!(r.sets[5].name, "KRSL-6 TASSOREL");
    assert_eq!(r.sets[5].eccentricity, 0.1322046);
}

#[test]
fn the_sgp4_verification_file_loads_in_lenient_mode() {
    // Published verification element sets (Vallado et al. 2006; see the
    // fixture's SOURCE.md): extra columns after 69, '#' comments, 33 cases
    // with catalog 20413 twice.
    let path = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/../../tests/fixtures/sgp4-verification/SGP4-VER.TLE"
    );
    let bytes = std::fs::read(path).unwrap();
    let r = load_records(&bytes, "SGP4-VER.TLE", LENIENT);
    assert_eq!(r.errors().count(), 0, "{:#?}", r.diagnostics);
    assert_eq!(r.sets.len(), 33);
    let r = load(&bytes, "SGP4-VER.TLE", LENIENT);
    assert_eq!(r.sets.len(), 32);
    assert_eq!(r.errors().count(), 0);
    // Strict mode refuses the extra columns.
    let r = load(&bytes, "SGP4-VER.TLE", STRICT);
    assert!(r.errors().count() > 0);
}

#[test]
fn a_giant_line_gives_one_error_fast() {
    let started = std::time::Instant::now();
    for first in [&b"x"[..], b"1 ", b"2 ", b"\xff"] {
        let mut big = first.to_vec();
        big.resize(10 * 1024 * 1024, b'7');
        let r = load(&big, "big.tle", STRICT);
        assert!(r.sets.is_empty());
        assert_eq!(r.diagnostics.len(), 1, "{:?}", r.diagnostics);
        assert!(r.diagnostics[0].message.len() < 400);
    }
    assert!(started.elapsed().as_secs_f64() < 10.0);
}

#[test]
fn random_bytes_never_panic() {
    // A simple deterministic generator; the point is coverage of odd bytes.
    let mut x: u64 = 0x9E37_79B9_7F4A_7C15;
    for len in [1usize, 2, 10, 69, 70, 140, 500, 4000] {
        for _ in 0..50 {
            let bytes: Vec<u8> = (0..len)
                .map(|_| {
                    x ^= x << 13;
                    x ^= x >> 7;
                    x ^= x << 17;
                    [
                        b'1', b'2', b' ', b'\n', b'0', b'9', b'-', b'.', b'{', b'<', b'"', 0xFF,
                    ][(x % 12) as usize]
                })
                .collect();
            let _ = load(&bytes, "random", LENIENT);
            let _ = load(&bytes, "random", STRICT);
        }
    }
}
