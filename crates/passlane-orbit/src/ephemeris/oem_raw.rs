//! The first pass over an OEM: KVN lines or XML elements into one raw
//! structure (header keywords, segments with their metadata keywords, data
//! lines and covariance blocks, each with its line), checked and converted
//! afterwards by [`super::oem`].

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
pub(super) struct RawSegment {
    pub(super) line: usize,
    pub(super) meta: Vec<Kv>,
    /// Data lines: line number and the fields (epoch first).
    pub(super) data: Vec<(usize, Vec<String>)>,
    pub(super) covs: Vec<RawCov>,
}

pub(super) struct RawOem {
    pub(super) format: OemFormat,
    pub(super) header: Vec<Kv>,
    pub(super) segments: Vec<RawSegment>,
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

pub(super) fn read_kvn(text: &str, sink: &mut Sink<'_>) -> Option<RawOem> {
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
            (Mode::Data, None, Some(seg)) => {
                seg.data
                    .push((n, l.split_whitespace().map(str::to_string).collect()));
            }
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

fn elements<'a, 'i>(n: roxmltree::Node<'a, 'i>) -> Vec<roxmltree::Node<'a, 'i>> {
    n.children().filter(|c| c.is_element()).collect()
}

pub(super) fn read_xml(text: &str, sink: &mut Sink<'_>) -> Option<RawOem> {
    let doc = match roxmltree::Document::parse(text) {
        Ok(d) => d,
        Err(e) => {
            sink.error(
                e.pos().row as usize,
                "",
                format!(
                    "not well-formed XML (column {}): {e}; nothing loaded",
                    e.pos().col
                ),
            );
            return None;
        }
    };
    let line = |n: roxmltree::Node<'_, '_>| doc.text_pos_at(n.range().start).row as usize;
    let text_of = |n: roxmltree::Node<'_, '_>| -> String {
        n.children()
            .filter(|c| c.is_text())
            .filter_map(|c| c.text())
            .collect::<String>()
            .trim()
            .to_string()
    };
    let kv = |n: roxmltree::Node<'_, '_>| Kv {
        key: n.tag_name().name().to_string(),
        value: text_of(n),
        line: line(n),
    };
    let root = doc.root_element();
    if root.tag_name().name() != "oem" {
        sink.error(
            line(root),
            root.tag_name().name(),
            "the root element of an XML OEM is <oem>; nothing loaded",
        );
        return None;
    }
    let mut raw = RawOem {
        format: OemFormat::Xml,
        header: vec![Kv {
            key: "CCSDS_OEM_VERS".to_string(),
            value: root.attribute("version").unwrap_or("").to_string(),
            line: line(root),
        }],
        segments: Vec::new(),
    };
    for part in elements(root) {
        match part.tag_name().name() {
            "header" => raw.header.extend(
                elements(part)
                    .into_iter()
                    .filter(|e| e.tag_name().name() != "COMMENT")
                    .map(kv),
            ),
            "body" => {
                for seg in elements(part) {
                    if seg.tag_name().name() != "segment" {
                        sink.error(
                            line(seg),
                            seg.tag_name().name(),
                            "<body> holds <segment> elements only",
                        );
                        continue;
                    }
                    let mut rs = RawSegment {
                        line: line(seg),
                        ..Default::default()
                    };
                    for block in elements(seg) {
                        match block.tag_name().name() {
                            "metadata" => rs.meta.extend(
                                elements(block)
                                    .into_iter()
                                    .filter(|e| e.tag_name().name() != "COMMENT")
                                    .map(kv),
                            ),
                            "data" => {
                                for item in elements(block) {
                                    match item.tag_name().name() {
                                        "COMMENT" => {}
                                        "stateVector" => {
                                            let fields =
                                                elements(item).into_iter().map(text_of).collect();
                                            rs.data.push((line(item), fields));
                                        }
                                        "covarianceMatrix" => {
                                            let mut c = RawCov {
                                                line: line(item),
                                                ..Default::default()
                                            };
                                            for e in elements(item) {
                                                match e.tag_name().name() {
                                                    "COMMENT" => {}
                                                    "EPOCH" => c.epoch = Some(kv(e)),
                                                    "COV_REF_FRAME" => c.frame = Some(kv(e)),
                                                    name if COV_XML_KEYS.contains(&name) => {
                                                        c.values.push((line(e), text_of(e)))
                                                    }
                                                    name => sink.error(line(e), name, "not a covariance element (502.0-B-3 Table 5-4)"),
                                                }
                                            }
                                            rs.covs.push(c);
                                        }
                                        name => {
                                            sink.error(line(item), name, "not an element of <data>")
                                        }
                                    }
                                }
                            }
                            name => sink.error(line(block), name, "not an element of <segment>"),
                        }
                    }
                    raw.segments.push(rs);
                }
            }
            name => sink.error(line(part), name, "not an element of <oem>"),
        }
    }
    Some(raw)
}
