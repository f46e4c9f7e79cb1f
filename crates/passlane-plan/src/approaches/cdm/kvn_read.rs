//! Reading a CDM in KVN: lines to keyword/value pairs, sections, typed
//! fields with located errors.

use passlane_orbit::UtcTime;

use super::keywords::{
    COVARIANCE_KEYS, HEADER_KEYS, Kind, OBJECT_KEYS, RELATIVE_KEYS, Spec, Unit, spec,
};
use super::{Cdm, CdmError, CdmHeader, CdmObject, CdmRelative, KvnField};
use crate::encounter::{Mat3, StateKm};

#[derive(Debug, Clone)]
pub(super) struct RawKv {
    pub(super) key: String,
    pub(super) value: String,
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

pub(super) fn table_of(key: &str) -> Option<(Section, Spec)> {
    for (sec, table) in [
        (Section::Header, HEADER_KEYS),
        (Section::Relative, RELATIVE_KEYS),
        (Section::Object1, OBJECT_KEYS),
    ] {
        if let Some(s) = table.iter().find(|s| s.key == key) {
            return Some((sec, *s));
        }
    }
    None
}

/// A value with its unit split off, after checking the unit's place and name.
pub(super) struct Value {
    pub(super) text: String,
    pub(super) unit: Option<String>,
}

pub(super) struct Ctx<'a> {
    pub(super) file: &'a str,
}

/// At most `MAX` characters of `text` for an error message, so that a
/// hostile line (megabytes without `=`, a giant value) is quoted, not copied.
pub(super) fn excerpt(text: &str) -> String {
    const MAX: usize = 60;
    match text.char_indices().nth(MAX) {
        None => text.to_string(),
        Some((cut, _)) => format!("{}…", &text[..cut]),
    }
}

impl Ctx<'_> {
    fn err(&self, line: usize, keyword: &str, reason: impl Into<String>) -> CdmError {
        CdmError {
            file: self.file.to_string(),
            line,
            keyword: excerpt(keyword),
            reason: reason.into(),
        }
    }

    fn split_value(&self, kv: &RawKv, spec: &Spec) -> Result<Value, CdmError> {
        let v = kv.value.trim();
        if spec.kind == Kind::Text {
            return Ok(Value {
                text: v.to_string(),
                unit: None,
            });
        }
        if v.starts_with('[') {
            return Err(self.err(
                kv.line,
                &kv.key,
                "unit bracket before the value (write `KEYWORD = value [unit]`)",
            ));
        }
        let (text, unit) = match v.find('[') {
            None => (v, None),
            Some(i) => {
                let rest = &v[i + 1..];
                let Some(j) = rest.find(']') else {
                    return Err(self.err(kv.line, &kv.key, "unit bracket not closed"));
                };
                if !rest[j + 1..].trim().is_empty() {
                    return Err(self.err(kv.line, &kv.key, "text after the unit bracket"));
                }
                (v[..i].trim(), Some(rest[..j].trim().to_string()))
            }
        };
        match (spec.unit, &unit) {
            (Unit::None, Some(u)) => {
                return Err(self.err(
                    kv.line,
                    &kv.key,
                    format!(
                        "unit [{}] given, but the standard gives this keyword no unit",
                        excerpt(u)
                    ),
                ));
            }
            (Unit::Exact(want), Some(u)) if u != want => {
                return Err(self.err(
                    kv.line,
                    &kv.key,
                    format!("unit [{}] where CCSDS 508.0-B-1 has [{want}]", excerpt(u)),
                ));
            }
            _ => {}
        }
        Ok(Value {
            text: text.to_string(),
            unit,
        })
    }
}

/// The keywords of one section, looked up by name.
pub(super) struct Fields<'a> {
    pub(super) ctx: &'a Ctx<'a>,
    pub(super) section: &'a RawSection,
    pub(super) end_line: usize,
    pub(super) table: &'static [Spec],
    pub(super) what: &'static str,
}

impl Fields<'_> {
    fn find(&self, key: &str) -> Option<&RawKv> {
        self.section.items.iter().find(|kv| kv.key == key)
    }

    fn spec(&self, key: &str) -> Spec {
        self.table
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
        let v = self.ctx.split_value(kv, &self.spec(key))?;
        match v.text.parse::<f64>() {
            Ok(x) if x.is_finite() => Ok(Some(x)),
            _ => Err(self.ctx.err(
                kv.line,
                key,
                format!("value {:?} is not a number", excerpt(&v.text)),
            )),
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

    /// Checks units and numbers of every keyword, and that mandatory ones are
    /// present, so that errors come in line order and none is skipped.
    fn check_all(&self) -> Result<(), CdmError> {
        for kv in &self.section.items {
            let s = self.spec(&kv.key);
            match s.kind {
                Kind::Number => {
                    self.opt_num(&kv.key)?;
                }
                Kind::Time => {
                    self.opt_time(&kv.key)?;
                }
                Kind::Text => {}
            }
        }
        for s in self.table.iter().filter(|s| s.mandatory) {
            if self.find(s.key).is_none() {
                return Err(self.missing(s.key));
            }
        }
        Ok(())
    }
}

impl Cdm {
    /// Reads a KVN CDM. `file` is used only in error messages.
    pub fn parse(text: &str, file: &str) -> Result<Cdm, CdmError> {
        let ctx = Ctx { file };
        let mut sections: [RawSection; 4] = Default::default();
        let mut current = Section::Header;
        let mut last_line = 0;
        let mut pending_comments = Vec::new();
        for (i, raw) in text.lines().enumerate() {
            let line_no = i + 1;
            last_line = line_no;
            let line = raw.trim();
            if line.is_empty() {
                continue;
            }
            if line == "COMMENT" || line.starts_with("COMMENT ") || line.starts_with("COMMENT\t") {
                // A comment belongs to the block of the keyword that follows it,
                // so one written just before `OBJECT = OBJECT1` goes with OBJECT1.
                pending_comments.push(line["COMMENT".len()..].trim().to_string());
                continue;
            }
            let Some((key, value)) = line.split_once('=') else {
                return Err(ctx.err(line_no, line, "expected `KEYWORD = value`"));
            };
            let key = key.trim().to_string();
            let Some((home, _)) = table_of(&key) else {
                return Err(ctx.err(line_no, &key, "not a CCSDS 508.0-B-1 CDM keyword"));
            };
            let target = match home {
                Section::Header | Section::Relative => home,
                _ if key == "OBJECT" => match current {
                    Section::Header | Section::Relative => Section::Object1,
                    Section::Object1 => Section::Object2,
                    Section::Object2 => {
                        return Err(ctx.err(line_no, &key, "a CDM has only two objects"));
                    }
                },
                _ if current >= Section::Object1 => current,
                _ => {
                    return Err(ctx.err(
                        line_no,
                        &key,
                        "object keyword before `OBJECT = OBJECT1` opened an object block",
                    ));
                }
            };
            if target < current {
                return Err(ctx.err(
                    line_no,
                    &key,
                    format!("{home:?} keyword after the {current:?} section began"),
                ));
            }
            current = target;
            let sec = &mut sections[target as usize];
            sec.comments.append(&mut pending_comments);
            if sec.items.is_empty() {
                sec.first_line = line_no;
            }
            if sec.items.iter().any(|kv| kv.key == key) {
                return Err(ctx.err(line_no, &key, "keyword repeated in the same block"));
            }
            sec.items.push(RawKv {
                key,
                value: value.to_string(),
                line: line_no,
            });
        }
        sections[current as usize]
            .comments
            .append(&mut pending_comments);
        // A block ends where the next non-empty one begins, or at the end of the text.
        let end_of = |idx: usize| -> usize {
            sections[idx + 1..]
                .iter()
                .find(|s| !s.items.is_empty())
                .map(|s| s.first_line)
                .unwrap_or(last_line)
        };
        let fields = |idx: usize, table: &'static [Spec], what: &'static str| Fields {
            ctx: &ctx,
            section: &sections[idx],
            end_line: end_of(idx),
            table,
            what,
        };

        let h = fields(0, HEADER_KEYS, "header");
        h.check_all()?;
        let header = CdmHeader {
            comments: sections[0].comments.clone(),
            ccsds_cdm_vers: h.text("CCSDS_CDM_VERS")?,
            creation_date: h.time("CREATION_DATE")?,
            originator: h.text("ORIGINATOR")?,
            message_for: h.opt_text("MESSAGE_FOR"),
            message_id: h.text("MESSAGE_ID")?,
        };

        let r = fields(1, RELATIVE_KEYS, "relative metadata");
        r.check_all()?;
        let relative = CdmRelative {
            comments: sections[1].comments.clone(),
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
            collision_probability: r.opt_num("COLLISION_PROBABILITY")?,
            collision_probability_method: r.opt_text("COLLISION_PROBABILITY_METHOD"),
        };

        let mut objects = Vec::with_capacity(2);
        for (idx, name) in [(2usize, "OBJECT1"), (3, "OBJECT2")] {
            if sections[idx].items.is_empty() {
                return Err(ctx.err(
                    last_line,
                    "OBJECT",
                    format!("no `OBJECT = {name}` block in the message"),
                ));
            }
            let f = fields(
                idx,
                OBJECT_KEYS,
                if idx == 2 {
                    "OBJECT1 block"
                } else {
                    "OBJECT2 block"
                },
            );
            f.check_all()?;
            objects.push(read_object(&ctx, &f, &sections[idx], name)?);
        }
        let [object1, object2]: [CdmObject; 2] = objects
            .try_into()
            .map_err(|_| ctx.err(last_line, "OBJECT", "expected two object blocks"))?;
        Ok(Cdm {
            header,
            relative,
            object1,
            object2,
        })
    }
}

pub(super) fn read_object(
    ctx: &Ctx<'_>,
    f: &Fields<'_>,
    raw: &RawSection,
    expected: &str,
) -> Result<CdmObject, CdmError> {
    let object = f.text("OBJECT")?;
    if object != expected {
        let line = f.find("OBJECT").map(|kv| kv.line).unwrap_or(0);
        return Err(ctx.err(
            line,
            "OBJECT",
            format!("expected {expected}, found {object}"),
        ));
    }
    let mut covariance_rtn = [0.0; 21];
    for (c, key) in covariance_rtn.iter_mut().zip(COVARIANCE_KEYS) {
        *c = f.num(key)?;
    }
    // Keywords with a typed field: the metadata and state, then the covariance.
    let typed: Vec<&str> = [
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
    ]
    .into_iter()
    .chain(COVARIANCE_KEYS)
    .collect();
    let mut other = Vec::new();
    for kv in raw
        .items
        .iter()
        .filter(|kv| !typed.contains(&kv.key.as_str()))
    {
        let v = ctx.split_value(kv, &f.spec(&kv.key))?;
        other.push(KvnField {
            keyword: kv.key.clone(),
            value: v.text,
            unit: v.unit,
        });
    }
    let obj = CdmObject {
        comments: raw.comments.clone(),
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
    // The probability needs a positive-definite position covariance; a
    // Cholesky factorisation of the 3×3 block finds the first failing pivot.
    if let Err(pivot) = cholesky3(&obj.position_covariance_rtn_m2()) {
        let key = ["CR_R", "CT_T", "CN_N"][pivot.index];
        let line = f.find(key).map(|kv| kv.line).unwrap_or(f.end_line);
        return Err(ctx.err(
            line,
            key,
            format!(
                "{expected} position covariance (CR_R … CN_N) is not positive definite \
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

/// Cholesky factorisation of a symmetric 3×3 matrix; fails at the first
/// pivot that is not positive.
pub(super) fn cholesky3(a: &Mat3) -> Result<Mat3, FailedPivot> {
    let mut l = [[0.0; 3]; 3];
    for i in 0..3 {
        for j in 0..=i {
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

// ---------------------------------------------------------------------------
// Writing
// ---------------------------------------------------------------------------
