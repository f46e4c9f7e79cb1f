//! OMM in XML (CCSDS 502.0 XML schema): every `<omm>` element, standalone or
//! inside an `<ndm>` wrapper. Keywords are found wherever they are nested
//! (`<header>`, `<metadata>`, `<meanElements>`, `<tleParameters>`, ...), so
//! the reader does not depend on the exact schema version.

use super::super::{LoadReport, Severity};
use super::{KEYWORDS, Record, diag, line_at, note_if_empty, utf8};

pub(in crate::elements) fn load_xml(bytes: &[u8], file: &str, report: &mut LoadReport) {
    let (sets_before, diags_before) = (report.sets.len(), report.finding_count());
    let Some(text) = utf8(bytes, file, report) else {
        return;
    };
    let doc = match roxmltree::Document::parse(text) {
        Ok(doc) => doc,
        Err(e) => {
            let pos = e.pos();
            report.push(diag(
                file,
                Severity::Error,
                pos.row as usize,
                "",
                format!(
                    "not well-formed XML (column {}): {e}; nothing loaded from it",
                    pos.col
                ),
            ));
            return;
        }
    };
    // Lines are counted forwards from the last node asked about: nodes come
    // in document order, so the whole file is scanned once. (roxmltree's
    // `text_pos_at` counts from the start of the text on every call, which
    // made this reader quadratic: 2 MB took 11 s, 8 MB 158 s.)
    let bytes = text.as_bytes();
    let mut cursor = (0usize, 1usize);
    let mut line_of = |node: roxmltree::Node<'_, '_>| {
        let offset = node.range().start;
        let from = if offset >= cursor.0 { cursor } else { (0, 1) };
        let line = line_at(bytes, from, offset);
        cursor = (offset, line);
        line
    };
    let mut found = false;
    for omm in doc
        .descendants()
        .filter(|n| n.is_element() && n.tag_name().name().eq_ignore_ascii_case("omm"))
    {
        found = true;
        let mut rec = Record::new(file, line_of(omm));
        for node in omm.descendants().filter(|n| n.is_element()) {
            let name = node.tag_name().name();
            if !KEYWORDS.contains(&name) {
                continue;
            }
            if node.children().any(|c| c.is_element()) {
                rec.error(
                    line_of(node),
                    name,
                    format!("<{name}> holds elements, expected a value; record skipped"),
                );
                continue;
            }
            let value: String = node
                .children()
                .filter(|c| c.is_text())
                .filter_map(|c| c.text())
                .collect();
            rec.insert(name, value, line_of(node));
        }
        rec.finish(report);
    }
    if !found {
        report.push(diag(
            file,
            Severity::Error,
            line_of(doc.root_element()),
            "",
            format!(
                "no <omm> element in this XML (the root is <{}>)",
                doc.root_element().tag_name().name()
            ),
        ));
    }
    note_if_empty(report, file, sets_before, diags_before);
}
