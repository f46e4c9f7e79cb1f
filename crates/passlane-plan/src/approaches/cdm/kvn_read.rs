//! Reading a CDM in KVN: lines to keyword/value pairs sorted into the
//! message's sections; [`super::read`] validates them.

use super::keywords::Kind;
use super::read::{Ctx, RawKv, RawMessage, Section, excerpt, table_of};
use super::{Cdm, CdmError};

impl Cdm {
    /// Reads a KVN CDM (CCSDS 508.0-B-1 §5-6). `file` is used only in error
    /// messages.
    pub fn parse_kvn(text: &str, file: &str) -> Result<Cdm, CdmError> {
        let ctx = Ctx { file };
        let mut msg = RawMessage {
            sections: Default::default(),
            last_line: 0,
        };
        let mut current = Section::Header;
        let mut pending_comments = Vec::new();
        let mut seen_version = false;
        for (i, raw) in text.lines().enumerate() {
            let line_no = i + 1;
            msg.last_line = line_no;
            let line = raw.trim();
            if line.is_empty() {
                continue;
            }
            let is_comment =
                line == "COMMENT" || line.starts_with("COMMENT ") || line.starts_with("COMMENT\t");
            if !seen_version {
                // 6.3.1.2: "The first header line must be the first non-blank
                // line in the file", and the first header line is the version.
                let key = line.split('=').next().unwrap_or("").trim();
                if is_comment || key != "CCSDS_CDM_VERS" {
                    return Err(ctx.err(
                        line_no,
                        if is_comment { "COMMENT" } else { key },
                        "the first non-blank line of a CDM must be `CCSDS_CDM_VERS = 1.0` (CCSDS 508.0-B-1 6.3.1.2)",
                    ));
                }
                seen_version = true;
            }
            if is_comment {
                // A comment belongs to the block of the keyword that follows it,
                // so one written just before `OBJECT = OBJECT1` goes with OBJECT1.
                pending_comments.push(line["COMMENT".len()..].trim().to_string());
                continue;
            }
            let Some((key, value)) = line.split_once('=') else {
                return Err(ctx.err(line_no, line, "expected `KEYWORD = value`"));
            };
            let key = key.trim().to_string();
            let Some((home, spec)) = table_of(&key) else {
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
            let (value, unit) = if spec.kind == Kind::Text {
                (value.trim().to_string(), None)
            } else {
                split_unit(&ctx, line_no, &key, value)?
            };
            let sec = &mut msg.sections[target as usize];
            sec.comments.append(&mut pending_comments);
            if sec.items.is_empty() {
                sec.first_line = line_no;
            }
            if sec.items.iter().any(|kv| kv.key == key) {
                return Err(ctx.err(line_no, &key, "keyword repeated in the same block"));
            }
            sec.items.push(RawKv {
                key,
                value,
                unit,
                line: line_no,
            });
        }
        if !seen_version {
            return Err(ctx.err(0, "CCSDS_CDM_VERS", "the text is empty: no CDM in it"));
        }
        msg.sections[current as usize]
            .comments
            .append(&mut pending_comments);
        msg.build(&ctx)
    }
}

/// Splits `value [unit]` (6.3.3: the unit in brackets after the value).
fn split_unit(
    ctx: &Ctx<'_>,
    line: usize,
    key: &str,
    value: &str,
) -> Result<(String, Option<String>), CdmError> {
    let v = value.trim();
    if v.starts_with('[') {
        return Err(ctx.err(
            line,
            key,
            "unit bracket before the value (write `KEYWORD = value [unit]`)",
        ));
    }
    match v.find('[') {
        None => Ok((v.to_string(), None)),
        Some(i) => {
            let rest = &v[i + 1..];
            let Some(j) = rest.find(']') else {
                return Err(ctx.err(line, key, "unit bracket not closed"));
            };
            if !rest[j + 1..].trim().is_empty() {
                return Err(ctx.err(
                    line,
                    key,
                    format!("text after the unit bracket: {:?}", excerpt(&rest[j + 1..])),
                ));
            }
            Ok((
                v[..i].trim().to_string(),
                Some(rest[..j].trim().to_string()),
            ))
        }
    }
}
