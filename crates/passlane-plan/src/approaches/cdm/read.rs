//! From keyword/value pairs sorted into the message's four sections (header,
//! relative metadata, OBJECT1, OBJECT2) to a validated [`Cdm`], the same for
//! the KVN and the XML form: order, units, numbers, times, enumerated values
//! and mandatory keywords, each error with its line and keyword.

use passlane_orbit::UtcTime;

use super::keywords::{
    COVARIANCE_KEYS, ENUMERATED, HEADER_KEYS, Kind, OBJECT_KEYS, OPTIONAL_COVARIANCE_ROWS,
    RELATIVE_KEYS, Spec, Unit, spec,
};
use super::{Cdm, CdmError, CdmHeader, CdmObject, CdmRelative, KvnField};
use crate::encounter::{Mat3, StateKm};

#[derive(Debug, Clone)]
pub(super) struct RawKv {
    pub(super) key: String,
    /// The value text; a unit, when the message gives one, is kept apart.
    pub(super) value: String,
    pub(super) unit: Option<String>,
    pub(super) line: usize,
}

#[derive(Default, Debug)]
pub(super) struct RawSection {
    pub(super) comments: Vec<String>,
    pub(super) items: Vec<RawKv>,
    pub(super) first_line: usize,
}

#[derive(Clone, Copy, PartialEq, PartialOrd, Debug)]
pub(super) enum Section {
    Header,
    Relative,
    Object1,
    Object2,
}

impl Section {
    pub(super) fn table(self) -> &'static [Spec] {
        match self {
            Section::Header => HEADER_KEYS,
            Section::Relative => RELATIVE_KEYS,
            Section::Object1 | Section::Object2 => OBJECT_KEYS,
        }
    }

    /// The table of CCSDS 508.0-B-1 that fixes this section's keywords.
    fn table_name(self) -> &'static str {
        match self {
            Section::Header => "Table 3-1",
            Section::Relative => "Table 3-2",
            Section::Object1 | Section::Object2 => "Tables 3-3 and 3-4",
        }
    }
}

/// The section whose table holds `key` (objects: [`Section::Object1`]).
pub(super) fn table_of(key: &str) -> Option<(Section, Spec)> {
    for sec in [Section::Header, Section::Relative, Section::Object1] {
        if let Some(s) = sec.table().iter().find(|s| s.key == key) {
            return Some((sec, *s));
        }
    }
    None
}

/// At most `MAX` characters of `text` for an error message, so that a
/// hostile line (megabytes without `=`, a giant value) is quoted, not copied.
/// Control characters and terminal escapes are shown as `?` (the message
/// goes to a terminal).
pub(super) fn excerpt(text: &str) -> String {
    const MAX: usize = 60;
    let cut = match text.char_indices().nth(MAX) {
        None => text,
        Some((cut, _)) => &text[..cut],
    };
    let mut s = passlane_orbit::text::clean(cut, false).into_owned();
    if cut.len() < text.len() {
        s.push('…');
    }
    s
}

pub(super) struct Ctx<'a> {
    pub(super) file: &'a str,
}

impl Ctx<'_> {
    pub(super) fn err(&self, line: usize, keyword: &str, reason: impl Into<String>) -> CdmError {
        CdmError {
            file: self.file.to_string(),
            line,
            keyword: excerpt(keyword),
            reason: reason.into(),
        }
    }

    /// Checks the unit of a value against the standard's.
    fn check_unit(&self, kv: &RawKv, spec: &Spec) -> Result<(), CdmError> {
        match (spec.unit, &kv.unit) {
            (Unit::None, Some(u)) => Err(self.err(
                kv.line,
                &kv.key,
                format!(
                    "unit [{}] given, but the standard gives this keyword no unit",
                    excerpt(u)
                ),
            )),
            (Unit::Exact(want), Some(u)) if u != want => Err(self.err(
                kv.line,
                &kv.key,
                format!("unit [{}] where CCSDS 508.0-B-1 has [{want}]", excerpt(u)),
            )),
            _ => Ok(()),
        }
    }
}

/// Compares a text value with an enumerated one as 508.0-B-1 reads text:
/// case aside, `_` as a blank, runs of blanks as one (6.3.2.5).
fn normalise_text(v: &str) -> String {
    v.replace('_', " ")
        .split_whitespace()
        .collect::<Vec<_>>()
        .join(" ")
        .to_ascii_uppercase()
}

/// The keywords of one section, looked up by name.
pub(super) struct Fields<'a> {
    pub(super) ctx: &'a Ctx<'a>,
    pub(super) section: &'a RawSection,
    pub(super) kind: Section,
    pub(super) end_line: usize,
    pub(super) what: &'static str,
}

impl Fields<'_> {
    pub(super) fn find(&self, key: &str) -> Option<&RawKv> {
        self.section.items.iter().find(|kv| kv.key == key)
    }

    fn spec(&self, key: &str) -> Spec {
        self.kind
            .table()
            .iter()
            .find(|s| s.key == key)
            .copied()
            .unwrap_or(spec("", Kind::Text, Unit::None, false))
    }

    fn missing(&self, key: &str) -> CdmError {
        self.ctx.err(
            self.end_line,
            key,
            format!("mandatory keyword missing from the {}", self.what),
        )
    }

    fn opt_text(&self, key: &str) -> Option<String> {
        self.find(key).map(|kv| kv.value.trim().to_string())
    }

    fn text(&self, key: &str) -> Result<String, CdmError> {
        let kv = self.find(key).ok_or_else(|| self.missing(key))?;
        let t = kv.value.trim();
        if t.is_empty() {
            return Err(self.ctx.err(kv.line, key, "empty value"));
        }
        Ok(t.to_string())
    }

    fn opt_num(&self, key: &str) -> Result<Option<f64>, CdmError> {
        let Some(kv) = self.find(key) else {
            return Ok(None);
        };
        let spec = self.spec(key);
        self.ctx.check_unit(kv, &spec)?;
        let text = kv.value.trim();
        let bad = |what: &str| {
            self.ctx.err(
                kv.line,
                key,
                format!("value {:?} is not {what}", excerpt(text)),
            )
        };
        if spec.kind == Kind::Integer {
            // 6.3.2.1: optional sign and digits, within a 32-bit signed range.
            return match text.parse::<i32>() {
                Ok(n) => Ok(Some(f64::from(n))),
                Err(_) => Err(bad("a whole number (CCSDS 508.0-B-1 6.3.2.1)")),
            };
        }
        match text.parse::<f64>() {
            Ok(x) if x.is_finite() => Ok(Some(x)),
            _ => Err(bad("a number")),
        }
    }

    fn num(&self, key: &str) -> Result<f64, CdmError> {
        self.opt_num(key)?.ok_or_else(|| self.missing(key))
    }

    fn opt_time(&self, key: &str) -> Result<Option<UtcTime>, CdmError> {
        let Some(kv) = self.find(key) else {
            return Ok(None);
        };
        UtcTime::parse_iso(kv.value.trim())
            .map(Some)
            .map_err(|e| self.ctx.err(kv.line, key, e.to_string()))
    }

    fn time(&self, key: &str) -> Result<UtcTime, CdmError> {
        self.opt_time(key)?.ok_or_else(|| self.missing(key))
    }

    /// Checks the order of the keywords (6.3.1.9: "fixed as shown in the
    /// tables"), units, numbers, times and enumerated values of every
    /// keyword, and that mandatory ones are present, so that errors come in
    /// line order and none is skipped.
    pub(super) fn check_all(&self) -> Result<(), CdmError> {
        let table = self.kind.table();
        let mut last: Option<(usize, &str)> = None;
        // Comments are written back into other messages: a line break in one
        // would forge a keyword line there.
        if let Some(c) = self
            .section
            .comments
            .iter()
            .find_map(|t| passlane_orbit::text::first_unsafe_char(t))
        {
            return Err(self.ctx.err(
                self.section.first_line,
                "COMMENT",
                format!(
                    "a comment of the {} holds {}: comments may not carry line breaks, NUL or terminal escapes",
                    self.what,
                    passlane_orbit::text::describe_char(c)
                ),
            ));
        }
        for kv in &self.section.items {
            let Some(pos) = table.iter().position(|s| s.key == kv.key) else {
                return Err(self.ctx.err(
                    kv.line,
                    &kv.key,
                    format!("not a keyword of the {}", self.what),
                ));
            };
            if let Some((p, prev)) = last
                && pos < p
            {
                return Err(self.ctx.err(
                    kv.line,
                    &kv.key,
                    format!(
                        "out of order: CCSDS 508.0-B-1 6.3.1.9 fixes the order of {}, where {} comes before {prev}",
                        self.kind.table_name(),
                        kv.key
                    ),
                ));
            }
            last = Some((pos, table[pos].key));
            let s = table[pos];
            match s.kind {
                Kind::Number | Kind::Integer => {
                    self.opt_num(&kv.key)?;
                }
                Kind::Time => {
                    self.opt_time(&kv.key)?;
                }
                Kind::Text => {
                    self.ctx.check_unit(kv, &s)?;
                    // Names and identifiers reach terminals and other files.
                    if let Some(c) = passlane_orbit::text::first_unsafe_char(&kv.value) {
                        return Err(self.ctx.err(
                            kv.line,
                            &kv.key,
                            format!(
                                "the value holds {}: text values may not carry line breaks, NUL or terminal escapes",
                                passlane_orbit::text::describe_char(c)
                            ),
                        ));
                    }
                    if let Some((_, allowed)) = ENUMERATED.iter().find(|(k, _)| *k == kv.key) {
                        let v = normalise_text(&kv.value);
                        if !allowed.contains(&v.as_str()) {
                            return Err(self.ctx.err(
                                kv.line,
                                &kv.key,
                                format!(
                                    "{:?} is not one of the standard's values ({})",
                                    excerpt(kv.value.trim()),
                                    allowed.join(", ")
                                ),
                            ));
                        }
                    }
                }
            }
        }
        for s in table.iter().filter(|s| s.mandatory) {
            if self.find(s.key).is_none() {
                return Err(self.missing(s.key));
            }
        }
        if self.kind >= Section::Object1 {
            self.check_optional_covariance_rows()?;
        }
        Ok(())
    }

    /// 5.2.8: a covariance row 7, 8 or 9 is complete or absent, and present
    /// only with every row before it.
    fn check_optional_covariance_rows(&self) -> Result<(), CdmError> {
        let mut previous_present = true;
        for (k, row) in OPTIONAL_COVARIANCE_ROWS.iter().enumerate() {
            let present: Vec<&str> = row
                .iter()
                .copied()
                .filter(|key| self.find(key).is_some())
                .collect();
            if present.is_empty() {
                previous_present = false;
                continue;
            }
            let first = self.find(present[0]).map(|kv| kv.line).unwrap_or(0);
            if let Some(missing) = row.iter().find(|key| self.find(key).is_none()) {
                return Err(self.ctx.err(
                    first,
                    missing,
                    format!(
                        "covariance row {} is incomplete: CCSDS 508.0-B-1 5.2.8 wants all of it or none",
                        k + 7
                    ),
                ));
            }
            if !previous_present {
                return Err(self.ctx.err(
                    first,
                    present[0],
                    format!(
                        "covariance row {} without row {} (CCSDS 508.0-B-1 5.2.8)",
                        k + 7,
                        k + 6
                    ),
                ));
            }
        }
        Ok(())
    }
}

/// The four sections of a message as read, and the last line of the text.
pub(super) struct RawMessage {
    pub(super) sections: [RawSection; 4],
    pub(super) last_line: usize,
}

impl RawMessage {
    /// Validates the sections and builds the message.
    pub(super) fn build(self, ctx: &Ctx<'_>) -> Result<Cdm, CdmError> {
        let sections = &self.sections;
        let last_line = self.last_line;
        // A block ends where the next non-empty one begins, or at the end of the text.
        let end_of = |idx: usize| -> usize {
            sections[idx + 1..]
                .iter()
                .find(|s| !s.items.is_empty())
                .map(|s| s.first_line)
                .unwrap_or(last_line)
        };
        let fields = |idx: usize, kind: Section, what: &'static str| Fields {
            ctx,
            section: &sections[idx],
            kind,
            end_line: end_of(idx),
            what,
        };

        let h = fields(0, Section::Header, "header");
        h.check_all()?;
        let version = h.text("CCSDS_CDM_VERS")?;
        if version != "1.0" {
            let line = h.find("CCSDS_CDM_VERS").map(|kv| kv.line).unwrap_or(0);
            return Err(ctx.err(
                line,
                "CCSDS_CDM_VERS",
                format!(
                    "version {:?}: this reader follows CCSDS 508.0-B-1, version 1.0",
                    excerpt(&version)
                ),
            ));
        }
        let header = CdmHeader {
            comments: Vec::new(),
            ccsds_cdm_vers: version,
            creation_date: h.time("CREATION_DATE")?,
            originator: h.text("ORIGINATOR")?,
            message_for: h.opt_text("MESSAGE_FOR"),
            message_id: h.text("MESSAGE_ID")?,
        };

        let r = fields(1, Section::Relative, "relative metadata");
        r.check_all()?;
        let collision_probability = r.opt_num("COLLISION_PROBABILITY")?;
        if let Some(p) = collision_probability
            && !(0.0..=1.0).contains(&p)
        {
            let line = r.find("COLLISION_PROBABILITY").map(|kv| kv.line);
            return Err(ctx.err(
                line.unwrap_or(0),
                "COLLISION_PROBABILITY",
                format!("{p} is outside 0.0-1.0 (CCSDS 508.0-B-1 Table 3-2)"),
            ));
        }
        let relative = CdmRelative {
            comments: Vec::new(),
            tca: r.time("TCA")?,
            miss_distance_m: r.num("MISS_DISTANCE")?,
            relative_speed_m_s: r.opt_num("RELATIVE_SPEED")?,
            relative_position_rtn_m: [
                r.opt_num("RELATIVE_POSITION_R")?,
                r.opt_num("RELATIVE_POSITION_T")?,
                r.opt_num("RELATIVE_POSITION_N")?,
            ],
            relative_velocity_rtn_m_s: [
                r.opt_num("RELATIVE_VELOCITY_R")?,
                r.opt_num("RELATIVE_VELOCITY_T")?,
                r.opt_num("RELATIVE_VELOCITY_N")?,
            ],
            start_screen_period: r.opt_time("START_SCREEN_PERIOD")?,
            stop_screen_period: r.opt_time("STOP_SCREEN_PERIOD")?,
            screen_volume_frame: r.opt_text("SCREEN_VOLUME_FRAME"),
            screen_volume_shape: r.opt_text("SCREEN_VOLUME_SHAPE"),
            screen_volume_xyz_m: [
                r.opt_num("SCREEN_VOLUME_X")?,
                r.opt_num("SCREEN_VOLUME_Y")?,
                r.opt_num("SCREEN_VOLUME_Z")?,
            ],
            screen_entry_time: r.opt_time("SCREEN_ENTRY_TIME")?,
            screen_exit_time: r.opt_time("SCREEN_EXIT_TIME")?,
            collision_probability,
            collision_probability_method: r.opt_text("COLLISION_PROBABILITY_METHOD"),
        };

        let mut objects = Vec::with_capacity(2);
        for (idx, kind, name) in [
            (2usize, Section::Object1, "OBJECT1"),
            (3, Section::Object2, "OBJECT2"),
        ] {
            if sections[idx].items.is_empty() {
                return Err(ctx.err(
                    last_line,
                    "OBJECT",
                    format!("no `OBJECT = {name}` block in the message"),
                ));
            }
            let what = if idx == 2 {
                "OBJECT1 block"
            } else {
                "OBJECT2 block"
            };
            let f = fields(idx, kind, what);
            f.check_all()?;
            objects.push(read_object(ctx, &f, &sections[idx], name)?);
        }
        let [object1, object2]: [CdmObject; 2] = objects
            .try_into()
            .map_err(|_| ctx.err(last_line, "OBJECT", "expected two object blocks"))?;
        // Table 3-3: REF_FRAME "... must be the same for both Object1 and Object2".
        if normalise_text(&object1.ref_frame) != normalise_text(&object2.ref_frame) {
            let line = sections[3]
                .items
                .iter()
                .find(|kv| kv.key == "REF_FRAME")
                .map(|kv| kv.line)
                .unwrap_or(last_line);
            return Err(ctx.err(
                line,
                "REF_FRAME",
                format!(
                    "OBJECT2 is in {} but OBJECT1 in {}: CCSDS 508.0-B-1 Table 3-3 wants the same frame for both",
                    excerpt(&object2.ref_frame),
                    excerpt(&object1.ref_frame)
                ),
            ));
        }
        // The comments move out of the raw sections rather than being
        // copied: a message may be mostly comments (the standard bounds
        // neither their number nor their length), and a copy doubled its
        // memory.
        let [c0, c1, c2, c3] = self.sections.map(|s| s.comments);
        let mut cdm = Cdm {
            header,
            relative,
            object1,
            object2,
        };
        cdm.header.comments = c0;
        cdm.relative.comments = c1;
        cdm.object1.comments = c2;
        cdm.object2.comments = c3;
        Ok(cdm)
    }
}

/// Keywords of an object block with a typed field of [`CdmObject`].
const TYPED_OBJECT_KEYS: [&str; 15] = [
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
];

fn read_object(
    ctx: &Ctx<'_>,
    f: &Fields<'_>,
    raw: &RawSection,
    expected: &str,
) -> Result<CdmObject, CdmError> {
    let object = normalise_text(&f.text("OBJECT")?);
    if object != expected {
        let line = f.find("OBJECT").map(|kv| kv.line).unwrap_or(0);
        return Err(ctx.err(
            line,
            "OBJECT",
            format!("expected {expected}, found {}", excerpt(&object)),
        ));
    }
    let mut covariance_rtn = [0.0; 21];
    for (c, key) in covariance_rtn.iter_mut().zip(COVARIANCE_KEYS) {
        *c = f.num(key)?;
    }
    let mut other = Vec::new();
    for kv in raw.items.iter().filter(|kv| {
        !TYPED_OBJECT_KEYS.contains(&kv.key.as_str()) && !COVARIANCE_KEYS.contains(&kv.key.as_str())
    }) {
        other.push(KvnField {
            keyword: kv.key.clone(),
            value: kv.value.trim().to_string(),
            unit: kv.unit.clone(),
        });
    }
    let obj = CdmObject {
        // Moved in by the caller once every check has run.
        comments: Vec::new(),
        object,
        object_designator: f.text("OBJECT_DESIGNATOR")?,
        catalog_name: f.text("CATALOG_NAME")?,
        object_name: f.text("OBJECT_NAME")?,
        international_designator: f.text("INTERNATIONAL_DESIGNATOR")?,
        ephemeris_name: f.text("EPHEMERIS_NAME")?,
        covariance_method: f.text("COVARIANCE_METHOD")?,
        maneuverable: f.text("MANEUVERABLE")?,
        ref_frame: f.text("REF_FRAME")?,
        state: StateKm {
            position_km: [f.num("X")?, f.num("Y")?, f.num("Z")?],
            velocity_km_s: [f.num("X_DOT")?, f.num("Y_DOT")?, f.num("Z_DOT")?],
        },
        covariance_rtn,
        other,
    };
    // A covariance must be positive semi-definite. A zero diagonal term is
    // legal (5.2.8: that row and column "should be discounted"), so the
    // factorisation skips zero rows; a negative pivot is an error.
    let p = obj.position_covariance_rtn_m2();
    for (i, key) in ["CR_R", "CT_T", "CN_N"].into_iter().enumerate() {
        if p[i][i] == 0.0 && (0..3).any(|j| p[i][j] != 0.0) {
            let line = f.find(key).map(|kv| kv.line).unwrap_or(f.end_line);
            return Err(ctx.err(
                line,
                key,
                format!(
                    "{expected}: the variance is zero but its row has non-zero covariances, which no covariance matrix can have"
                ),
            ));
        }
    }
    if let Err(pivot) = cholesky3_semidefinite(&p) {
        let key = ["CR_R", "CT_T", "CN_N"][pivot.index];
        let line = f.find(key).map(|kv| kv.line).unwrap_or(f.end_line);
        return Err(ctx.err(
            line,
            key,
            format!(
                "{expected} position covariance (CR_R … CN_N) is not positive semi-definite \
                 (Cholesky pivot {} is {:.6e} m²)",
                pivot.index + 1,
                pivot.value
            ),
        ));
    }
    Ok(obj)
}

pub(super) struct FailedPivot {
    pub(super) index: usize,
    pub(super) value: f64,
}

/// Cholesky factorisation of a symmetric 3×3 matrix, skipping rows whose
/// diagonal is zero (with zero off-diagonals, checked by the caller); fails
/// at the first pivot that is negative or not finite.
pub(super) fn cholesky3_semidefinite(a: &Mat3) -> Result<Mat3, FailedPivot> {
    let mut l = [[0.0; 3]; 3];
    for i in 0..3 {
        if a[i][i] == 0.0 {
            continue;
        }
        for j in 0..=i {
            if a[j][j] == 0.0 {
                continue;
            }
            let s: f64 = (0..j).map(|k| l[i][k] * l[j][k]).sum();
            if i == j {
                let d = a[i][i] - s;
                if !(d > 0.0 && d.is_finite()) {
                    return Err(FailedPivot { index: i, value: d });
                }
                l[i][i] = d.sqrt();
            } else {
                l[i][j] = (a[i][j] - s) / l[j][j];
            }
        }
    }
    Ok(l)
}
