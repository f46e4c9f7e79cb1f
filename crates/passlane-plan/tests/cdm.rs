//! CDM reading, writing and re-assessment against hand-built fixtures.

// Tests report failures by panicking.
#![allow(clippy::panic)]

use passlane_plan::cdm::{Cdm, CdmError};
use passlane_plan::pc::{Encounter2d, pc_foster};

const GOOD: &str = include_str!("fixtures/cdm/ormivel_vs_debris_99871.kvn");
const GOOD_NAME: &str = "ormivel_vs_debris_99871.kvn";

fn parse_ok(text: &str) -> Cdm {
    match Cdm::parse(text, GOOD_NAME) {
        Ok(c) => c,
        Err(e) => panic!("{e}"),
    }
}

fn parse_err(text: &str, name: &str) -> CdmError {
    match Cdm::parse(text, name) {
        Ok(_) => panic!("{name}: parsed, expected an error"),
        Err(e) => e,
    }
}

fn rel_err(got: f64, want: f64) -> f64 {
    ((got - want) / want).abs()
}

#[test]
fn reads_the_hand_built_message() {
    let c = parse_ok(GOOD);
    assert_eq!(c.header.originator, "KESTREL RIDGE SPACE LAB");
    assert_eq!(c.object1.object_name, "KRSL-1 ORMIVEL");
    assert_eq!(c.object2.object_designator, "99871");
    assert_eq!(c.relative.miss_distance_m, 1000.0);
    assert_eq!(c.object2.state.position_km, [7001.0, 0.0, 0.0]);
    assert_eq!(c.object1.covariance_rtn[0], 4.5e6);
    assert_eq!(c.relative.tca.to_iso_ms(), "2026-12-01T12:00:00.000Z");
    assert_eq!(c.header.comments.len(), 2);
}

#[test]
fn tolerates_crlf_and_surrounding_whitespace() {
    let crlf: String = GOOD.lines().map(|l| format!("  {l}\t\r\n")).collect();
    assert_eq!(parse_ok(&crlf), parse_ok(GOOD));
}

#[test]
fn geometry_of_the_hand_built_encounter_gives_back_the_2d_case() {
    // The fixture is built so that object 1 moves +y at 7.5 km/s and object 2,
    // 1 km radially above it, moves +z at 7.5 km/s: Δv = (0, −7.5, 7.5) km/s,
    // ŷ = (0, −1, 1)/√2, ẑ = (0, −1, −1)/√2, x̂ = +x (radial). Both RTN
    // covariances are diagonal; along x̂ they add to 4.5e6 + 4.5e6 = (3000 m)²,
    // along ẑ to ½(0.5e6 + 0.3e6 + 0.9e6 + 0.3e6) = (1000 m)². So the
    // encounter plane holds miss (1000, 0) m with sigmas (3000, 1000) m: the
    // published case (0, 1000, 1000, 3000, R = 10) with the axes swapped, whose
    // Pc is 1.577e-5 (Chan 2008; Serra et al. 2016, JGCD 39(5)).
    let c = parse_ok(GOOD);
    let a = match c.recompute(10.0) {
        Ok(a) => a,
        Err(e) => panic!("{e}"),
    };
    assert!(
        (a.miss_x_m - 1000.0).abs() < 1e-6 && a.miss_y_m.abs() < 1e-6,
        "{a:?}"
    );
    assert!((a.sigma_x_m - 3000.0).abs() < 1e-6, "{a:?}");
    assert!((a.sigma_y_m - 1000.0).abs() < 1e-6, "{a:?}");
    assert!(rel_err(a.pc, 1.577e-5) < 1e-3, "pc {}", a.pc);
    assert!(
        rel_err(a.pc_alfano, 1.577e-5) < 1e-3,
        "pc_alfano {}",
        a.pc_alfano
    );
    // Chan's series is an approximation (see tests/pc.rs for the bound).
    assert!(rel_err(a.pc_chan, a.pc) < 2e-2);
    assert!(a.pc_max >= a.pc);
    // RIC miss and speed follow from the construction above.
    assert!((a.radial_m - 1000.0).abs() < 1e-9);
    assert!(a.in_track_m.abs() < 1e-9 && a.cross_track_m.abs() < 1e-9);
    assert!((a.relative_speed_m_s - 7500.0 * 2f64.sqrt()).abs() < 1e-6);
    assert!((a.miss_distance_m - 1000.0).abs() < 1e-9);
    assert!((a.approach_angle_deg - 90.0).abs() < 1e-9);
    assert_eq!(a.covariance_source, "CDM");
    // The same Pc from the 2-D entry point, as a cross-check of the plumbing.
    let Ok(e) = Encounter2d::new(0.0, 1000.0, 1000.0, 3000.0, 10.0) else {
        panic!("valid")
    };
    assert!(rel_err(a.pc, pc_foster(&e)) < 1e-9);
}

#[test]
fn assessment_serialises_with_the_command_field_names() {
    let c = parse_ok(GOOD);
    let Ok(a) = c.recompute(10.0) else {
        panic!("assessment")
    };
    let json = match serde_json::to_value(&a) {
        Ok(j) => j,
        Err(e) => panic!("{e}"),
    };
    for key in [
        "tca",
        "miss_distance_m",
        "relative_speed_m_s",
        "pc",
        "pc_alfano",
        "pc_chan",
        "pc_max",
        "radial_m",
        "in_track_m",
        "cross_track_m",
        "covariance_source",
    ] {
        assert!(json.get(key).is_some(), "missing {key}");
    }
}

fn kvn(c: &Cdm) -> String {
    let mut out = Vec::new();
    if let Err(e) = c.write_kvn(&mut out) {
        panic!("{e}");
    }
    String::from_utf8_lossy(&out).into_owned()
}

/// Every number of the message (keywords with a unit, and the probability),
/// in the order written, from its KVN text.
fn numbers(text: &str) -> Vec<(String, f64)> {
    text.lines()
        .filter(|l| l.contains('[') || l.starts_with("COLLISION_PROBABILITY "))
        .filter_map(|l| l.split_once('='))
        .filter_map(|(k, v)| {
            let v = v.split('[').next().unwrap_or("").trim();
            v.parse::<f64>().ok().map(|x| (k.trim().to_string(), x))
        })
        .collect()
}

#[test]
fn write_then_parse_gives_the_same_message() {
    // CCSDS 508.0-B-1 6.3.2.2-6.3.2.3 allow at most 16 significant digits,
    // so a number with 17 (RELATIVE_SPEED of the fixture) comes back rounded
    // to 16: within 5e-16 relative; everything else is equal, and writing
    // the message read back gives the same text again.
    let c = parse_ok(GOOD);
    let text = kvn(&c);
    let back = parse_ok(&text);
    assert_eq!(kvn(&back), text);
    assert_eq!(back.header, c.header);
    assert_eq!(back.object1.covariance_rtn, c.object1.covariance_rtn);
    assert_eq!(back.object2.state, c.object2.state);
    let speed = c.relative.relative_speed_m_s.unwrap_or(f64::NAN);
    let speed_back = back.relative.relative_speed_m_s.unwrap_or(f64::NAN);
    assert!(
        rel_err(speed_back, speed) <= 5e-16,
        "{speed_back} vs {speed}"
    );
    let mut c16 = c.clone();
    c16.relative.relative_speed_m_s = back.relative.relative_speed_m_s;
    assert_eq!(back, c16);
}

#[test]
fn written_numbers_keep_sixteen_significant_digits() {
    let mut c = parse_ok(GOOD);
    c.object1.state.position_km = [6_778.137_123_456_789, -1.0e-9, 1234.5e5];
    c.object1.covariance_rtn[21 - 1] = 3.3e-17;
    c.relative.collision_probability = Some(3.219e-27);
    let text = kvn(&c);
    for (key, _) in numbers(&text) {
        let line = text
            .lines()
            .find(|l| l.split('=').next().map(str::trim) == Some(key.as_str()))
            .unwrap_or_default();
        let value = line
            .split('=')
            .nth(1)
            .unwrap_or("")
            .split('[')
            .next()
            .unwrap_or("")
            .trim();
        let mantissa = value.split(['E', 'e']).next().unwrap_or("");
        let digits = mantissa.chars().filter(char::is_ascii_digit).count();
        // 6.3.2.2 (fixed point: at most 16 digits, one each side of the
        // point at least) and 6.3.2.3(b) (mantissa: at most 16 digits, the
        // point in the second place).
        assert!(digits <= 16, "{line}");
        assert!(mantissa.contains('.'), "{line}");
        if value.contains('E') {
            assert_eq!(
                mantissa.trim_start_matches('-').find('.'),
                Some(1),
                "{line}"
            );
        }
    }
    let back = parse_ok(&text);
    for (got, want) in back
        .object1
        .state
        .position_km
        .iter()
        .zip(c.object1.state.position_km)
    {
        assert!(rel_err(*got, want) <= 5e-16, "{got} vs {want}");
    }
    assert_eq!(back.object1.covariance_rtn[20], 3.3e-17);
    assert_eq!(back.relative.collision_probability, Some(3.219e-27));
}

#[test]
fn mandatory_keywords_are_written_in_the_standards_order() {
    // Mandatory keywords of CCSDS 508.0-B-1 in order: header (Table 3-1),
    // relative metadata (Table 3-2), then for each object metadata (Table 3-3)
    // and data (Table 3-4: state vector, then the 21-term RTN covariance).
    // Mandatory status from Annex A (ICS) of the standard.
    let object: Vec<&str> = vec![
        "OBJECT",
        "OBJECT_DESIGNATOR",
        "CATALOG_NAME",
        "OBJECT_NAME",
        "INTERNATIONAL_DESIGNATOR",
        "EPHEMERIS_NAME",
        "COVARIANCE_METHOD",
        "MANEUVERABLE",
        "REF_FRAME",
        "X",
        "Y",
        "Z",
        "X_DOT",
        "Y_DOT",
        "Z_DOT",
        "CR_R",
        "CT_R",
        "CT_T",
        "CN_R",
        "CN_T",
        "CN_N",
        "CRDOT_R",
        "CRDOT_T",
        "CRDOT_N",
        "CRDOT_RDOT",
        "CTDOT_R",
        "CTDOT_T",
        "CTDOT_N",
        "CTDOT_RDOT",
        "CTDOT_TDOT",
        "CNDOT_R",
        "CNDOT_T",
        "CNDOT_N",
        "CNDOT_RDOT",
        "CNDOT_TDOT",
        "CNDOT_NDOT",
    ];
    let mut want = vec![
        "CCSDS_CDM_VERS",
        "CREATION_DATE",
        "ORIGINATOR",
        "MESSAGE_ID",
        "TCA",
        "MISS_DISTANCE",
    ];
    want.extend(object.iter().copied());
    want.extend(object.iter().copied());
    assert_eq!(passlane_plan::cdm::mandatory_keywords(), want);

    let c = parse_ok(GOOD);
    let mut out = Vec::new();
    if let Err(e) = c.write_kvn(&mut out) {
        panic!("{e}");
    }
    let text = String::from_utf8_lossy(&out);
    let written: Vec<&str> = text
        .lines()
        .filter_map(|l| l.split_once('=').map(|(k, _)| k.trim()))
        .filter(|k| want.contains(k))
        .collect();
    assert_eq!(written, want);
    // Units as the standard shows them.
    assert!(
        text.contains("MISS_DISTANCE                = 1000.0 [m]"),
        "{text}"
    );
    assert!(text.contains("[km/s]") && text.contains("[m**2/s**2]"));
}

#[test]
fn missing_mandatory_keyword_is_named_with_the_line_where_its_block_ends() {
    let text = include_str!("fixtures/cdm/bad_missing_miss_distance.kvn");
    let e = parse_err(text, "bad_missing_miss_distance.kvn");
    assert_eq!(e.keyword, "MISS_DISTANCE");
    assert_eq!(e.file, "bad_missing_miss_distance.kvn");
    // The relative block ends where `OBJECT = OBJECT1` begins (line 29 of the
    // fixture once MISS_DISTANCE is removed).
    assert_eq!(e.line, 29, "{e}");
    assert!(e.to_string().contains("mandatory"), "{e}");
}

#[test]
fn a_unit_other_than_the_standards_is_rejected() {
    let text = include_str!("fixtures/cdm/bad_miss_distance_in_km.kvn");
    let e = parse_err(text, "bad_miss_distance_in_km.kvn");
    assert_eq!((e.keyword.as_str(), e.line), ("MISS_DISTANCE", 10), "{e}");
    assert!(e.reason.contains("[km]") && e.reason.contains("[m]"), "{e}");
}

#[test]
fn a_unit_before_the_value_is_rejected() {
    let text = GOOD.replace(
        "MISS_DISTANCE                = 1000 [m]",
        "MISS_DISTANCE = [m] 1000",
    );
    let e = parse_err(&text, "unit_first.kvn");
    assert_eq!((e.keyword.as_str(), e.line), ("MISS_DISTANCE", 10), "{e}");
    assert!(e.reason.contains("before the value"), "{e}");
}

#[test]
fn a_value_that_is_not_a_number_is_rejected() {
    let text = GOOD.replacen(
        "X                            = 7000 [km]",
        "X = 7OOO [km]",
        1,
    );
    let e = parse_err(&text, "letter_o.kvn");
    assert_eq!((e.keyword.as_str(), e.line), ("X", 42), "{e}");
    assert!(e.reason.contains("not a number"), "{e}");
}

#[test]
fn a_covariance_that_is_not_positive_definite_names_the_object() {
    let text = include_str!("fixtures/cdm/bad_covariance_not_pd.kvn");
    let e = parse_err(text, "bad_covariance_not_pd.kvn");
    // CR_R = 4.5e6, CT_R = 3e6, CT_T = 9e5: the second pivot is
    // 9e5 − 3e6²/4.5e6 = −1.1e6 < 0, so CT_T (line 88) is named.
    assert_eq!((e.keyword.as_str(), e.line), ("CT_T", 88), "{e}");
    assert!(
        e.reason.contains("OBJECT2") && e.reason.contains("positive semi-definite"),
        "{e}"
    );
}

#[test]
fn unknown_and_misplaced_keywords_are_rejected() {
    let text = GOOD.replace("MESSAGE_ID ", "MESSAGE_IDENT ");
    let e = parse_err(&text, "typo.kvn");
    assert_eq!((e.keyword.as_str(), e.line), ("MESSAGE_IDENT", 7), "{e}");

    let text = format!("{GOOD}ORIGINATOR = LATE\n");
    let e = parse_err(&text, "late_header.kvn");
    assert_eq!(e.keyword, "ORIGINATOR");
}

#[test]
fn keyword_tables_are_the_standards() {
    // CCSDS 508.0-B-1 (June 2013, through Technical Corrigendum 2), keyword
    // order of Tables 3-1 (header, after CCSDS_CDM_VERS), 3-2 (relative
    // metadata/data), 3-3 (object metadata) and 3-4 (object data: OD
    // parameters, additional parameters, state vector, covariance rows 1-9);
    // M marks the keywords Annex A (ICS) lists as mandatory. The same order is
    // checked against the NDM/XML schema's sequence as ccsds-ndm 3.1.1
    // carries it, in tests/ccsds_reference.rs.
    const M: bool = true;
    const O: bool = false;
    let header = vec![
        ("CCSDS_CDM_VERS", M),
        ("CREATION_DATE", M),
        ("ORIGINATOR", M),
        ("MESSAGE_FOR", O),
        ("MESSAGE_ID", M),
    ];
    let relative = vec![
        ("TCA", M),
        ("MISS_DISTANCE", M),
        ("RELATIVE_SPEED", O),
        ("RELATIVE_POSITION_R", O),
        ("RELATIVE_POSITION_T", O),
        ("RELATIVE_POSITION_N", O),
        ("RELATIVE_VELOCITY_R", O),
        ("RELATIVE_VELOCITY_T", O),
        ("RELATIVE_VELOCITY_N", O),
        ("START_SCREEN_PERIOD", O),
        ("STOP_SCREEN_PERIOD", O),
        ("SCREEN_VOLUME_FRAME", O),
        ("SCREEN_VOLUME_SHAPE", O),
        ("SCREEN_VOLUME_X", O),
        ("SCREEN_VOLUME_Y", O),
        ("SCREEN_VOLUME_Z", O),
        ("SCREEN_ENTRY_TIME", O),
        ("SCREEN_EXIT_TIME", O),
        ("COLLISION_PROBABILITY", O),
        ("COLLISION_PROBABILITY_METHOD", O),
    ];
    let mut object: Vec<(&str, bool)> = vec![
        ("OBJECT", M),
        ("OBJECT_DESIGNATOR", M),
        ("CATALOG_NAME", M),
        ("OBJECT_NAME", M),
        ("INTERNATIONAL_DESIGNATOR", M),
        ("OBJECT_TYPE", O),
        ("OPERATOR_CONTACT_POSITION", O),
        ("OPERATOR_ORGANIZATION", O),
        ("OPERATOR_PHONE", O),
        ("OPERATOR_EMAIL", O),
        ("EPHEMERIS_NAME", M),
        ("COVARIANCE_METHOD", M),
        ("MANEUVERABLE", M),
        ("ORBIT_CENTER", O),
        ("REF_FRAME", M),
        ("GRAVITY_MODEL", O),
        ("ATMOSPHERIC_MODEL", O),
        ("N_BODY_PERTURBATIONS", O),
        ("SOLAR_RAD_PRESSURE", O),
        ("EARTH_TIDES", O),
        ("INTRACK_THRUST", O),
        ("TIME_LASTOB_START", O),
        ("TIME_LASTOB_END", O),
        ("RECOMMENDED_OD_SPAN", O),
        ("ACTUAL_OD_SPAN", O),
        ("OBS_AVAILABLE", O),
        ("OBS_USED", O),
        ("TRACKS_AVAILABLE", O),
        ("TRACKS_USED", O),
        ("RESIDUALS_ACCEPTED", O),
        ("WEIGHTED_RMS", O),
        ("AREA_PC", O),
        ("AREA_DRG", O),
        ("AREA_SRP", O),
        ("MASS", O),
        ("CD_AREA_OVER_MASS", O),
        ("CR_AREA_OVER_MASS", O),
        ("THRUST_ACCELERATION", O),
        ("SEDR", O),
        ("X", M),
        ("Y", M),
        ("Z", M),
        ("X_DOT", M),
        ("Y_DOT", M),
        ("Z_DOT", M),
    ];
    // The covariance, lower triangle row by row (5.2.7): rows 1-6 mandatory,
    // rows 7-9 (drag, SRP, thrust) optional.
    let rows = ["R", "T", "N", "RDOT", "TDOT", "NDOT", "DRG", "SRP", "THR"];
    for i in 0..9 {
        for j in 0..=i {
            let key: &'static str = Box::leak(format!("C{}_{}", rows[i], rows[j]).into_boxed_str());
            object.push((key, i < 6));
        }
    }
    let [h, r, o] = passlane_plan::cdm::keyword_tables();
    assert_eq!(h, header);
    assert_eq!(r, relative);
    assert_eq!(o, object);
}

#[test]
fn the_reader_enforces_the_standards_rules() {
    let bad = |text: String, name: &str| parse_err(&text, name);
    // 6.3.1.9: order fixed by the tables (Y before X in a state vector).
    let x = "X                            = 7000.0 [km]";
    let y = "Y                            = 0.0 [km]";
    let swapped = GOOD.replacen(
        &format!("{}\n{}\n", x.replace(".0", ""), y.replace(".0", "")),
        &format!("{}\n{}\n", y, x),
        1,
    );
    assert_ne!(swapped, GOOD);
    let e = bad(swapped, "order.kvn");
    assert_eq!(e.keyword, "X", "{e}");
    assert!(e.reason.contains("6.3.1.9"), "{e}");
    // Table 3-2: ELLIPSOID or BOX only.
    let e = bad(GOOD.replace("= ELLIPSOID", "= SPHERE"), "shape.kvn");
    assert_eq!(e.keyword, "SCREEN_VOLUME_SHAPE");
    // Table 3-3: both objects in one frame.
    let e = bad(GOOD.replacen("= EME2000", "= GCRF", 1), "frames.kvn");
    assert_eq!(e.keyword, "REF_FRAME");
    // 6.3.1.2: the version line first.
    let e = bad(format!("COMMENT before\n{GOOD}"), "first.kvn");
    assert_eq!((e.line, e.keyword.as_str()), (1, "COMMENT"));
    // Table 3-2: a probability is within 0..1.
    let e = bad(GOOD.replace("= 1.577E-05", "= 1.5"), "pc.kvn");
    assert_eq!(e.keyword, "COLLISION_PROBABILITY");
    // 5.2.8: a zero variance with a zero row is legal (the row is discounted).
    let zero = GOOD.replacen(
        "CR_R                         = 4.5E+06 [m**2]",
        "CR_R = 0.0 [m**2]",
        1,
    );
    assert_ne!(zero, GOOD);
    assert!(Cdm::parse(&zero, "zero.kvn").is_ok());
}

#[test]
fn a_byte_order_mark_is_accepted_in_both_forms() {
    // Some editors start a UTF-8 file with U+FEFF; it is not content.
    assert_eq!(parse_ok(&format!("\u{feff}{GOOD}")), parse_ok(GOOD));
    let mut bytes = Vec::new();
    parse_ok(GOOD).write_xml(&mut bytes).unwrap();
    let xml = String::from_utf8(bytes).unwrap();
    assert_eq!(parse_ok(&format!("\u{feff}{xml}")), parse_ok(&xml));
}

#[test]
fn a_reference_frame_outside_the_standards_list_is_rejected() {
    // CCSDS 508.0-B-1 Table 3-3: REF_FRAME is EME2000, GCRF or ITRF.
    let e = parse_err(&GOOD.replace("= EME2000", "= BOGUS"), "bogus.kvn");
    assert_eq!(e.keyword, "REF_FRAME", "{e}");
    assert!(e.line > 0, "{e}");
}

#[test]
fn an_xml_cdm_with_a_flood_of_comments_reads_in_linear_time() {
    // The tree reader counted every element's line from the start of the
    // text: 400,000 comments in a 10 MB message took four and a half
    // minutes. With 100,000 the lines are still exact.
    let mut bytes = Vec::new();
    parse_ok(GOOD).write_xml(&mut bytes).unwrap();
    let xml = String::from_utf8(bytes).unwrap();
    let at = xml.find("<header>").unwrap() + "<header>".len();
    let flood = format!(
        "{}\n{}{}",
        &xml[..at],
        "<COMMENT>padding</COMMENT>\n".repeat(100_000),
        &xml[at..]
    );
    let c = parse_ok(&flood);
    assert_eq!(c.relative.miss_distance_m, 1000.0);
    // A bad value after the flood is named on its own line.
    let bad = flood.replacen(
        "<MISS_DISTANCE units=\"m\">",
        "<MISS_DISTANCE units=\"km\">",
        1,
    );
    assert_ne!(bad, flood);
    let e = parse_err(&bad, "flood.xml");
    let want = bad[..bad.find("<MISS_DISTANCE").unwrap()]
        .matches('\n')
        .count()
        + 1;
    assert_eq!(e.line, want, "{e}");
}
