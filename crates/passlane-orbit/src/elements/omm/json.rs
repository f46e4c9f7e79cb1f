//! OMM in the common JSON rendering: an array of flat objects whose keys are
//! the CCSDS 502.0 keywords (or one such object). Numbers may be JSON numbers
//! or strings.
//!
//! `serde_json::Value` carries no positions, so the reader first scans the text
//! itself (iteratively, tracking strings and escapes) to find where each array
//! element and each key starts; that gives line numbers, and it lets every
//! element be parsed on its own, so one broken element (bad syntax, a number
//! that overflows, nesting beyond serde_json's limit of 128) costs only that
//! record.

use std::collections::HashMap;

use serde_json::Value;

use super::super::{LoadReport, Severity};
use super::{KEYWORDS, Record, diag, line_at, note_if_empty, utf8};

/// One top-level value found by the scanner.
struct Scanned {
    /// Byte offset just past the value.
    end: usize,
    /// Byte ranges of the keys of the outermost object (quotes included).
    keys: Vec<(usize, usize)>,
}

fn skip_ws(b: &[u8], mut i: usize) -> usize {
    while i < b.len() && b[i].is_ascii_whitespace() {
        i += 1;
    }
    i
}

/// End (just past the closing quote) of the string starting at `start`.
fn string_end(b: &[u8], start: usize) -> Result<usize, (usize, String)> {
    let mut j = start + 1;
    while j < b.len() {
        match b[j] {
            b'\\' => j += 2,
            b'"' => return Ok(j + 1),
            _ => j += 1,
        }
    }
    Err((start, "unterminated string".to_string()))
}

/// Finds the extent of the JSON value at `start` without recursion.
fn scan_value(b: &[u8], start: usize) -> Result<Scanned, (usize, String)> {
    let mut keys = Vec::new();
    match b.get(start) {
        Some(b'"') => {
            return Ok(Scanned {
                end: string_end(b, start)?,
                keys,
            });
        }
        Some(b'{') | Some(b'[') => {}
        _ => {
            let mut i = start;
            while i < b.len() && !matches!(b[i], b',' | b']' | b'}') && !b[i].is_ascii_whitespace()
            {
                i += 1;
            }
            return Ok(Scanned { end: i, keys });
        }
    }
    let mut stack: Vec<u8> = Vec::new();
    let mut last_string: Option<(usize, usize)> = None;
    let mut i = start;
    while i < b.len() {
        let c = b[i];
        match c {
            b'"' => {
                let end = string_end(b, i)?;
                last_string = (stack.len() == 1 && stack[0] == b'{').then_some((i, end));
                i = end;
                continue;
            }
            b':' if stack.len() == 1 => {
                if let Some(k) = last_string.take() {
                    keys.push(k);
                }
            }
            b'{' | b'[' => stack.push(c),
            b'}' | b']' => {
                let open = if c == b'}' { b'{' } else { b'[' };
                if stack.pop() != Some(open) {
                    return Err((i, format!("unexpected {:?}", char::from(c))));
                }
                if stack.is_empty() {
                    return Ok(Scanned { end: i + 1, keys });
                }
            }
            _ => {}
        }
        if !c.is_ascii_whitespace() && c != b'"' {
            last_string = None;
        }
        i += 1;
    }
    Err((
        start,
        "the file ends inside this value (truncated?)".to_string(),
    ))
}

pub(in crate::elements) fn load_json(bytes: &[u8], file: &str, report: &mut LoadReport) {
    let (sets_before, diags_before) = (report.sets.len(), report.finding_count());
    let Some(text) = utf8(bytes, file, report) else {
        return;
    };
    let b = text.as_bytes();
    let bom = if text.starts_with('\u{FEFF}') { 3 } else { 0 };
    let mut pos = skip_ws(b, bom);
    // A known (offset, line) pair, moved forward as the scan goes.
    let mut cursor = (0usize, 1usize);
    let mut line_of = |offset: usize| {
        let line = line_at(b, cursor, offset);
        if offset >= cursor.0 {
            cursor = (offset, line);
        }
        line
    };
    let error = |report: &mut LoadReport, line: usize, message: String| {
        report.push(diag(file, Severity::Error, line, "", message));
    };
    match b.get(pos) {
        Some(b'{') => match scan_value(b, pos) {
            Ok(sc) => {
                let line = line_of(pos);
                read_object(text, pos, line, &sc, file, report);
                pos = sc.end;
            }
            Err((at, msg)) => {
                let line = line_of(at);
                error(
                    report,
                    line,
                    format!("not valid JSON: {msg}; nothing loaded from it"),
                );
                return;
            }
        },
        Some(b'[') => {
            let open_line = line_of(pos);
            pos += 1;
            loop {
                pos = skip_ws(b, pos);
                match b.get(pos) {
                    None => {
                        error(
                            report,
                            open_line,
                            "the array opened here is not closed (truncated file?)".to_string(),
                        );
                        break;
                    }
                    Some(b']') => {
                        pos += 1;
                        break;
                    }
                    Some(_) => {}
                }
                let sc = match scan_value(b, pos) {
                    Ok(sc) => sc,
                    Err((at, msg)) => {
                        let line = line_of(at);
                        error(
                            report,
                            line,
                            format!("not valid JSON: {msg}; the rest of the file is skipped"),
                        );
                        return;
                    }
                };
                let line = line_of(pos);
                if b[pos] == b'{' {
                    read_object(text, pos, line, &sc, file, report);
                } else {
                    error(
                        report,
                        line,
                        "array element is not an object with OMM keywords; skipped".to_string(),
                    );
                }
                pos = skip_ws(b, sc.end);
                match b.get(pos) {
                    Some(b',') => pos += 1,
                    Some(b']') => {
                        pos += 1;
                        break;
                    }
                    other => {
                        let line = line_of(pos);
                        let found = other.map_or("the end of the file".to_string(), |c| {
                            format!("{:?}", char::from(*c))
                        });
                        error(
                            report,
                            line,
                            format!(
                                "expected ',' or ']' after an array element, found {found}; the rest of the file is skipped"
                            ),
                        );
                        return;
                    }
                }
            }
        }
        _ => {
            let line = line_of(pos);
            error(
                report,
                line,
                "expected a JSON array or object of OMM records".to_string(),
            );
            return;
        }
    }
    let rest = skip_ws(b, pos);
    if rest < b.len() {
        let line = line_of(rest);
        error(
            report,
            line,
            "unexpected text after the end of the JSON value; ignored".to_string(),
        );
    }
    note_if_empty(report, file, sets_before, diags_before);
}

/// Parses one object (byte range `start..sc.end`) as an OMM record.
fn read_object(
    text: &str,
    start: usize,
    line: usize,
    sc: &Scanned,
    file: &str,
    report: &mut LoadReport,
) {
    let b = text.as_bytes();
    let slice = &text[start..sc.end];
    // Key → line, from the scanner's key positions.
    let mut key_lines: HashMap<String, usize> = HashMap::new();
    let mut rec = Record::new(file, line);
    let mut cursor = (start, line);
    let mut key_offsets = Vec::with_capacity(sc.keys.len());
    for &(ks, ke) in &sc.keys {
        let l = line_at(b, cursor, ks);
        cursor = (ks, l);
        let Ok(key) = serde_json::from_str::<String>(&text[ks..ke]) else {
            continue;
        };
        key_offsets.push((ks, key.clone()));
        if key_lines.insert(key.clone(), l).is_some() && KEYWORDS.contains(&key.as_str()) {
            rec.error(
                l,
                &key,
                format!("{key} appears twice in this object; record skipped"),
            );
        }
    }
    match serde_json::from_str::<Value>(slice) {
        Err(e) => {
            let offset = start + offset_of(slice, e.line(), e.column());
            let err_line = line_at(b, (start, line), offset);
            let key = key_offsets
                .iter()
                .rev()
                .find(|(ks, _)| *ks <= offset)
                .map_or(String::new(), |(_, k)| k.clone());
            // serde_json's message ends with a position inside the object;
            // the diagnostic carries the file's line instead.
            let full = e.to_string();
            let reason = match full.find(" at line ") {
                Some(i) => &full[..i],
                None => full.as_str(),
            };
            let reason = if reason.contains("recursion limit") {
                "nested more than 128 levels deep"
            } else {
                reason
            };
            rec.error(
                err_line,
                &key,
                format!("not valid JSON: {reason}; record skipped"),
            );
            rec.abandon(report);
            return;
        }
        Ok(Value::Object(map)) => {
            for (key, value) in map {
                if !KEYWORDS.contains(&key.to_ascii_uppercase().as_str()) {
                    continue;
                }
                let l = key_lines.get(&key).copied().unwrap_or(line);
                match value {
                    Value::Null => {}
                    Value::String(s) => rec.insert(&key, s, l),
                    Value::Number(n) => rec.insert(&key, n.to_string(), l),
                    other => {
                        let kind = match other {
                            Value::Bool(_) => "a boolean",
                            Value::Array(_) => "an array",
                            _ => "an object",
                        };
                        rec.error(
                            l,
                            &key,
                            format!("expected a number or text, found {kind}; record skipped"),
                        );
                    }
                }
            }
        }
        Ok(_) => rec.error(line, "", "expected an object".to_string()),
    }
    rec.finish(report);
}

/// Byte offset in `s` of 1-based `line` and `column` (as serde_json reports them).
fn offset_of(s: &str, line: usize, column: usize) -> usize {
    let mut offset = 0;
    for (i, l) in s.split_inclusive('\n').enumerate() {
        if i + 1 == line {
            return (offset + column.saturating_sub(1)).min(s.len());
        }
        offset += l.len();
    }
    s.len()
}
