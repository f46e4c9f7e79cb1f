//! OMM in XML (CCSDS 502.0 XML schema): every `<omm>` element, standalone or
//! inside an `<ndm>` wrapper. Keywords are found wherever they are nested
//! (`<header>`, `<metadata>`, `<meanElements>`, `<tleParameters>`, ...), so
//! the reader does not depend on the exact schema version.
//!
//! The text is read as a stream of tags (quick-xml), one `<omm>` at a time,
//! so memory holds only the record being read, whatever the file's size
//! (a tree of the whole document cost ~6× the good records). Lines are
//! counted forwards as the reader advances, so the time is linear. A
//! document that stops being well-formed keeps the records read before the
//! fault, and the error names its line. Entity references other than XML's
//! five predefined ones and character references are refused in the record
//! that uses them (no DTD entity is ever expanded).

use quick_xml::events::Event;

use super::super::{LoadReport, Severity};
use super::{KEYWORDS, Record, diag, note_if_empty, utf8};

/// The keyword element being read inside an `<omm>`.
struct OpenKeyword {
    name: String,
    line: usize,
    value: String,
    /// Element depth of the keyword's start tag.
    depth: usize,
    /// Something in it was refused (a nested element, an unknown entity):
    /// its value is not recorded; the error is already on the record.
    refused: bool,
}

/// The `<omm>` element being read.
struct OpenMessage<'f> {
    record: Record<'f>,
    depth: usize,
    keyword: Option<OpenKeyword>,
}

pub(in crate::elements) fn load_xml(bytes: &[u8], file: &str, report: &mut LoadReport) {
    let (sets_before, diags_before) = (report.sets.len(), report.finding_count());
    let Some(text) = utf8(bytes, file, report) else {
        return;
    };
    // Lines counted forwards as the reader advances: the file is scanned once.
    let mut lines = crate::xml::ForwardLines::new(text);
    let mut line_of = |offset: u64| lines.line_at(offset);
    let mut reader = quick_xml::Reader::from_str(text);
    let mut root: Option<String> = None;
    let mut found = false;
    let mut open: Option<OpenMessage<'_>> = None;
    let mut depth = 0usize;
    loop {
        let tag_start = reader.buffer_position();
        let event = match reader.read_event() {
            Ok(e) => e,
            Err(e) => {
                let line = line_of(reader.error_position());
                if let Some(m) = open.take() {
                    m.record.abandon(report);
                }
                report.push(diag(
                    file,
                    Severity::Error,
                    line,
                    "",
                    format!(
                        "not well-formed XML: {e}; reading stopped here (the records before it are kept)"
                    ),
                ));
                break;
            }
        };
        match event {
            Event::Start(ref e) | Event::Empty(ref e) => {
                let empty = matches!(event, Event::Empty(_));
                depth += 1;
                let name = e.local_name();
                let name: &str = name.as_ref();
                root.get_or_insert_with(|| name.to_string());
                match open.as_mut() {
                    None if name.eq_ignore_ascii_case("omm") => {
                        found = true;
                        open = Some(OpenMessage {
                            record: Record::new(file, line_of(tag_start)),
                            depth,
                            keyword: None,
                        });
                    }
                    None => {}
                    Some(m) => match m.keyword.as_mut() {
                        Some(k) if !k.refused => {
                            k.refused = true;
                            let message = format!(
                                "<{}> holds elements, expected a value; record skipped",
                                k.name
                            );
                            m.record.error(k.line, &k.name, message);
                        }
                        Some(_) => {}
                        None if KEYWORDS.contains(&name) => {
                            m.keyword = Some(OpenKeyword {
                                name: name.to_string(),
                                line: line_of(tag_start),
                                value: String::new(),
                                depth,
                                refused: false,
                            });
                        }
                        None => {}
                    },
                }
                if empty {
                    close_element(&mut open, depth, report);
                    depth -= 1;
                }
            }
            Event::End(_) => {
                close_element(&mut open, depth, report);
                depth = depth.saturating_sub(1);
            }
            Event::Text(t) => push_text(&mut open, depth, &t.xml10_content()),
            Event::CData(c) => push_text(&mut open, depth, &c.xml10_content()),
            Event::GeneralRef(r) => {
                let line = line_of(tag_start);
                if let Some(m) = open.as_mut()
                    && let Some(k) = m.keyword.as_mut()
                    && k.depth == depth
                {
                    match crate::xml::resolve_reference(&r) {
                        Some(s) => k.value.push_str(&s),
                        None => {
                            k.refused = true;
                            let message = format!(
                                "the entity reference &{}; is not one of XML's predefined five; record skipped",
                                crate::text::clean(&r.xml10_content(), false)
                            );
                            m.record.error(line, &k.name, message);
                        }
                    }
                }
            }
            Event::Eof => break,
            _ => {}
        }
    }
    if let Some(m) = open.take() {
        let line = m.record.line;
        m.record.abandon(report);
        report.push(diag(
            file,
            Severity::Error,
            line,
            "",
            "this <omm> is not closed before the end of the file; record skipped".to_string(),
        ));
    }
    if !found && report.finding_count() == diags_before {
        report.push(diag(
            file,
            Severity::Error,
            1,
            "",
            match &root {
                Some(r) => format!(
                    "no <omm> element in this XML (the root is <{}>)",
                    crate::text::clean(r, false)
                ),
                None => "no <omm> element in this XML".to_string(),
            },
        ));
    }
    note_if_empty(report, file, sets_before, diags_before);
}

/// Ends the element at `depth`: a keyword's value goes into its record, an
/// `<omm>` is validated into an element set or its diagnostics.
fn close_element(open: &mut Option<OpenMessage<'_>>, depth: usize, report: &mut LoadReport) {
    let Some(m) = open.as_mut() else {
        return;
    };
    if m.keyword.as_ref().is_some_and(|k| k.depth == depth) {
        if let Some(k) = m.keyword.take()
            && !k.refused
        {
            m.record.insert(&k.name, k.value, k.line);
        }
    } else if m.depth == depth
        && let Some(m) = open.take()
    {
        m.record.finish(report);
    }
}

/// Text directly inside the keyword being read (text elsewhere is layout).
fn push_text(open: &mut Option<OpenMessage<'_>>, depth: usize, text: &str) {
    if let Some(k) = open.as_mut().and_then(|m| m.keyword.as_mut())
        && k.depth == depth
        && !k.refused
    {
        k.value.push_str(text);
    }
}
