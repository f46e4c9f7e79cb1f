//! The first pass over an OEM: KVN lines or XML elements into one raw
//! structure (header keywords, segments with their metadata keywords, data
//! lines and covariance blocks, each with its line), checked and converted
//! afterwards by [`super::oem`].

use std::borrow::Cow;

use quick_xml::events::Event;

use super::oem::{COV_XML_KEYS, OemFormat};
use crate::elements::{Diagnostic, MAX_DIAGNOSTICS_KEPT, Severity, thousands};

#[derive(Debug, Clone)]
pub(super) struct Kv {
    pub(super) key: String,
    pub(super) value: String,
    pub(super) line: usize,
}

#[derive(Debug, Default)]
pub(super) struct RawCov {
    pub(super) line: usize,
    pub(super) epoch: Option<Kv>,
    pub(super) frame: Option<Kv>,
    pub(super) values: Vec<(usize, String)>,
}

#[derive(Debug, Default)]
pub(super) struct RawSegment<'t> {
    pub(super) line: usize,
    pub(super) meta: Vec<Kv>,
    /// Data lines: line number and the fields (epoch first) separated by
    /// blanks; a KVN line is borrowed from the text (memory follows the
    /// states, not a string per field).
    pub(super) data: Vec<(usize, Cow<'t, str>)>,
    pub(super) covs: Vec<RawCov>,
}

pub(super) struct RawOem<'t> {
    pub(super) format: OemFormat,
    pub(super) header: Vec<Kv>,
    pub(super) segments: Vec<RawSegment<'t>>,
}

/// Collects findings: the first [`MAX_DIAGNOSTICS_KEPT`] in full, the rest
/// counted (memory bounded by the good data, whatever the file holds).
pub(super) struct Sink<'a> {
    pub(super) file: &'a str,
    pub(super) diagnostics: Vec<Diagnostic>,
    pub(super) omitted_errors: usize,
    pub(super) omitted_warnings: usize,
}

impl<'a> Sink<'a> {
    pub(super) fn push(
        &mut self,
        severity: Severity,
        line: usize,
        field: &str,
        message: impl Into<String>,
    ) {
        if self.diagnostics.len() >= MAX_DIAGNOSTICS_KEPT {
            match severity {
                Severity::Error => self.omitted_errors += 1,
                Severity::Warning => self.omitted_warnings += 1,
            }
            return;
        }
        self.diagnostics.push(Diagnostic {
            severity,
            file: self.file.to_string(),
            line,
            field: excerpt(field),
            message: message.into(),
        });
    }

    pub(super) fn error(&mut self, line: usize, field: &str, message: impl Into<String>) {
        self.push(Severity::Error, line, field, message);
    }

    pub(super) fn new(file: &'a str) -> Self {
        Sink {
            file,
            diagnostics: Vec::new(),
            omitted_errors: 0,
            omitted_warnings: 0,
        }
    }

    pub(super) fn has_errors(&self) -> bool {
        self.omitted_errors > 0
            || self
                .diagnostics
                .iter()
                .any(|d| d.severity == Severity::Error)
    }

    /// The findings, with one closing line counting those not kept.
    pub(super) fn finish(mut self) -> Vec<Diagnostic> {
        let omitted = self.omitted_errors + self.omitted_warnings;
        if omitted > 0 {
            self.diagnostics.push(Diagnostic {
                severity: if self.omitted_errors > 0 {
                    Severity::Error
                } else {
                    Severity::Warning
                },
                file: self.file.to_string(),
                line: 0,
                field: String::new(),
                message: format!(
                    "… and {} more problem(s) not listed ({} error(s), {} warning(s))",
                    thousands(omitted),
                    thousands(self.omitted_errors),
                    thousands(self.omitted_warnings)
                ),
            });
        }
        self.diagnostics
    }
}

pub(super) fn excerpt(text: &str) -> String {
    const MAX: usize = 40;
    match text.char_indices().nth(MAX) {
        None => text.to_string(),
        Some((cut, _)) => format!("{}…", &text[..cut]),
    }
}

pub(super) fn read_kvn<'t>(text: &'t str, sink: &mut Sink<'_>) -> Option<RawOem<'t>> {
    #[derive(PartialEq)]
    enum Mode {
        Header,
        Meta,
        Data,
        Cov,
    }
    let mut raw = RawOem {
        format: OemFormat::Kvn,
        header: Vec::new(),
        segments: Vec::new(),
    };
    let mut mode = Mode::Header;
    let mut first = true;
    for (i, line) in text.lines().enumerate() {
        let n = i + 1;
        let l = line.trim();
        if l.is_empty() {
            continue;
        }
        if first {
            first = false;
            if !l.starts_with("CCSDS_OEM_VERS") {
                sink.error(
                    n,
                    if l.starts_with("COMMENT") {
                        "COMMENT"
                    } else {
                        l.split('=').next().unwrap_or("").trim()
                    },
                    "the first non-blank line of an OEM must be `CCSDS_OEM_VERS = 3.0` (CCSDS 502.0-B-3 7.3.6); nothing loaded",
                );
                return None;
            }
        }
        if l == "COMMENT" || l.starts_with("COMMENT ") || l.starts_with("COMMENT\t") {
            continue;
        }
        match l {
            "META_START" => {
                raw.segments.push(RawSegment {
                    line: n,
                    ..Default::default()
                });
                mode = Mode::Meta;
                continue;
            }
            "META_STOP" if mode == Mode::Meta => {
                mode = Mode::Data;
                continue;
            }
            "COVARIANCE_START" if mode == Mode::Data => {
                mode = Mode::Cov;
                continue;
            }
            "COVARIANCE_STOP" if mode == Mode::Cov => {
                mode = Mode::Data;
                continue;
            }
            _ => {}
        }
        let kv = l.split_once('=').map(|(k, v)| Kv {
            key: k.trim().to_string(),
            value: v.trim().to_string(),
            line: n,
        });
        match (&mode, kv, raw.segments.last_mut()) {
            (Mode::Header, Some(kv), _) => raw.header.push(kv),
            (Mode::Meta, Some(kv), Some(seg)) => seg.meta.push(kv),
            (Mode::Data, None, Some(seg)) => seg.data.push((n, Cow::Borrowed(l))),
            (Mode::Cov, Some(kv), Some(seg)) if kv.key == "EPOCH" => seg.covs.push(RawCov {
                line: n,
                epoch: Some(kv),
                ..Default::default()
            }),
            (Mode::Cov, Some(kv), Some(seg)) if kv.key == "COV_REF_FRAME" => {
                match seg.covs.last_mut() {
                    Some(c) if c.frame.is_none() && c.values.is_empty() => c.frame = Some(kv),
                    _ => sink.error(
                        n,
                        "COV_REF_FRAME",
                        "expected after EPOCH, before the matrix rows (Table 5-4)",
                    ),
                }
            }
            (Mode::Cov, None, Some(seg)) => match seg.covs.last_mut() {
                Some(c) => c
                    .values
                    .extend(l.split_whitespace().map(|v| (n, v.to_string()))),
                None => sink.error(n, "EPOCH", "covariance rows before EPOCH (5.2.5.3)"),
            },
            (_, Some(kv), _) => sink.error(
                n,
                &kv.key,
                "not an OEM keyword at this place (CCSDS 502.0-B-3 Tables 5-2, 5-3, 5-4)",
            ),
            (_, None, _) => sink.error(
                n,
                "",
                format!("unexpected line {:?} outside a data block", excerpt(l)),
            ),
        }
    }
    if mode == Mode::Meta || mode == Mode::Cov {
        sink.error(
            text.lines().count(),
            if mode == Mode::Meta {
                "META_STOP"
            } else {
                "COVARIANCE_STOP"
            },
            "the message ends inside a block",
        );
    }
    Some(raw)
}

/// Where the XML reader is: the elements that matter, by their place.
#[derive(Clone, Copy, PartialEq)]
enum Place {
    Oem,
    Header,
    Body,
    Segment,
    Metadata,
    Data,
    State,
    Covariance,
    /// A keyword whose text is being read.
    Value,
    /// Inside an element reported or ignored: its content is skipped.
    Skipped,
}

/// What a value being read belongs to.
#[derive(Clone, Copy, PartialEq)]
enum ValueOf {
    Header,
    Metadata,
    State,
    CovarianceKey,
    CovarianceValue,
}

/// Reads an XML OEM as a stream of tags (quick-xml): memory follows the
/// states, and lines are counted forwards as the reader advances, so the
/// time is linear in the file's size. Only XML's five predefined entities
/// and character references are read; a DTD entity is never expanded.
pub(super) fn read_xml<'t>(text: &'t str, sink: &mut Sink<'_>) -> Option<RawOem<'t>> {
    let mut lines = crate::xml::ForwardLines::new(text);
    let mut line_of = |offset: u64| lines.line_at(offset);
    let mut reader = quick_xml::Reader::from_str(text);
    let mut raw = RawOem {
        format: OemFormat::Xml,
        header: Vec::new(),
        segments: Vec::new(),
    };
    // The place of every open element (the stack of the document's path).
    let mut stack: Vec<Place> = Vec::new();
    // The value being read: its key, line, text and owner.
    let mut value: Option<(String, usize, String, ValueOf)> = None;
    let mut fields = String::new();
    let mut state_line = 0usize;
    loop {
        let at = reader.buffer_position();
        let event = match reader.read_event() {
            Ok(e) => e,
            Err(e) => {
                let line = line_of(reader.error_position());
                sink.error(
                    line,
                    "",
                    format!("not well-formed XML: {e}; nothing loaded"),
                );
                return None;
            }
        };
        match event {
            Event::Start(ref e) | Event::Empty(ref e) => {
                let empty = matches!(event, Event::Empty(_));
                let local = e.local_name();
                let name: &str = local.as_ref();
                let line = line_of(at);
                let parent = stack.last().copied();
                let place = match parent {
                    None => {
                        if name != "oem" {
                            sink.error(
                                line,
                                name,
                                "the root element of an XML OEM is <oem>; nothing loaded",
                            );
                            return None;
                        }
                        let version = e
                            .try_get_attribute("version")
                            .ok()
                            .flatten()
                            .and_then(|a| {
                                a.normalized_value(quick_xml::XmlVersion::Implicit1_0)
                                    .ok()
                                    .map(|v| v.into_owned())
                            })
                            .unwrap_or_default();
                        raw.header.push(Kv {
                            key: "CCSDS_OEM_VERS".to_string(),
                            value: version,
                            line,
                        });
                        Place::Oem
                    }
                    Some(Place::Oem) => match name {
                        "header" => Place::Header,
                        "body" => Place::Body,
                        _ => {
                            sink.error(line, name, "not an element of <oem>");
                            Place::Skipped
                        }
                    },
                    Some(Place::Header) | Some(Place::Metadata) if name == "COMMENT" => {
                        Place::Skipped
                    }
                    Some(p @ (Place::Header | Place::Metadata)) => {
                        let owner = if p == Place::Header {
                            ValueOf::Header
                        } else {
                            ValueOf::Metadata
                        };
                        value = Some((name.to_string(), line, String::new(), owner));
                        Place::Value
                    }
                    Some(Place::Body) => {
                        if name == "segment" {
                            raw.segments.push(RawSegment {
                                line,
                                ..Default::default()
                            });
                            Place::Segment
                        } else {
                            sink.error(line, name, "<body> holds <segment> elements only");
                            Place::Skipped
                        }
                    }
                    Some(Place::Segment) => match name {
                        "metadata" => Place::Metadata,
                        "data" => Place::Data,
                        _ => {
                            sink.error(line, name, "not an element of <segment>");
                            Place::Skipped
                        }
                    },
                    Some(Place::Data) => match name {
                        "COMMENT" => Place::Skipped,
                        "stateVector" => {
                            fields.clear();
                            state_line = line;
                            Place::State
                        }
                        "covarianceMatrix" => {
                            if let Some(seg) = raw.segments.last_mut() {
                                seg.covs.push(RawCov {
                                    line,
                                    ..Default::default()
                                });
                            }
                            Place::Covariance
                        }
                        _ => {
                            sink.error(line, name, "not an element of <data>");
                            Place::Skipped
                        }
                    },
                    Some(Place::State) => {
                        value = Some((name.to_string(), line, String::new(), ValueOf::State));
                        Place::Value
                    }
                    Some(Place::Covariance) => match name {
                        "COMMENT" => Place::Skipped,
                        "EPOCH" | "COV_REF_FRAME" => {
                            value = Some((
                                name.to_string(),
                                line,
                                String::new(),
                                ValueOf::CovarianceKey,
                            ));
                            Place::Value
                        }
                        _ if COV_XML_KEYS.contains(&name) => {
                            value = Some((
                                name.to_string(),
                                line,
                                String::new(),
                                ValueOf::CovarianceValue,
                            ));
                            Place::Value
                        }
                        _ => {
                            sink.error(
                                line,
                                name,
                                "not a covariance element (502.0-B-3 Table 5-4)",
                            );
                            Place::Skipped
                        }
                    },
                    // Elements inside a value or a skipped element: their
                    // text is not the value's (as a tree reader taking only
                    // the value's own text would have it).
                    Some(Place::Value) | Some(Place::Skipped) => Place::Skipped,
                };
                stack.push(place);
                if empty {
                    close(&mut stack, &mut value, &mut fields, state_line, &mut raw);
                }
            }
            Event::End(_) => close(&mut stack, &mut value, &mut fields, state_line, &mut raw),
            Event::Text(t) => {
                if stack.last() == Some(&Place::Value)
                    && let Some(v) = value.as_mut()
                {
                    v.2.push_str(&t.xml10_content());
                }
            }
            Event::CData(c) => {
                if stack.last() == Some(&Place::Value)
                    && let Some(v) = value.as_mut()
                {
                    v.2.push_str(&c.xml10_content());
                }
            }
            Event::GeneralRef(r) => {
                if stack.last() == Some(&Place::Value)
                    && let Some(v) = value.as_mut()
                {
                    match crate::xml::resolve_reference(&r) {
                        Some(s) => v.2.push_str(&s),
                        None => {
                            sink.error(
                                line_of(at),
                                &v.0,
                                format!(
                                    "the entity reference &{}; is not one of XML's predefined five; nothing loaded",
                                    excerpt(&r.xml10_content())
                                ),
                            );
                            return None;
                        }
                    }
                }
            }
            Event::Eof => break,
            _ => {}
        }
    }
    if stack.is_empty() && raw.header.is_empty() {
        sink.error(1, "", "no <oem> element in this XML; nothing loaded");
        return None;
    }
    if !stack.is_empty() {
        sink.error(
            line_of(text.len() as u64),
            "",
            "not well-formed XML: the file ends before its open elements are closed; nothing loaded",
        );
        return None;
    }
    Some(raw)
}

/// Ends the innermost open element: a finished value goes to its owner, a
/// finished state vector becomes one data line.
fn close(
    stack: &mut Vec<Place>,
    value: &mut Option<(String, usize, String, ValueOf)>,
    fields: &mut String,
    state_line: usize,
    raw: &mut RawOem<'_>,
) {
    let Some(place) = stack.pop() else {
        return;
    };
    match place {
        Place::Value => {
            let Some((key, line, text, owner)) = value.take() else {
                return;
            };
            let text = text.trim().to_string();
            let seg = raw.segments.last_mut();
            match owner {
                ValueOf::Header => raw.header.push(Kv {
                    key,
                    value: text,
                    line,
                }),
                ValueOf::Metadata => {
                    if let Some(seg) = seg {
                        seg.meta.push(Kv {
                            key,
                            value: text,
                            line,
                        });
                    }
                }
                ValueOf::State => {
                    if !fields.is_empty() {
                        fields.push(' ');
                    }
                    // An empty value still counts as a field (the checks
                    // then name it), so it is written as a lone marker.
                    fields.push_str(if text.is_empty() { "\u{2205}" } else { &text });
                }
                ValueOf::CovarianceKey => {
                    if let Some(c) = seg.and_then(|s| s.covs.last_mut()) {
                        let kv = Kv {
                            key: key.clone(),
                            value: text,
                            line,
                        };
                        if key == "EPOCH" {
                            c.epoch = Some(kv);
                        } else {
                            c.frame = Some(kv);
                        }
                    }
                }
                ValueOf::CovarianceValue => {
                    if let Some(c) = seg.and_then(|s| s.covs.last_mut()) {
                        c.values.push((line, text));
                    }
                }
            }
        }
        Place::State => {
            if let Some(seg) = raw.segments.last_mut() {
                seg.data
                    .push((state_line, Cow::Owned(std::mem::take(fields))));
            }
        }
        _ => {}
    }
}
