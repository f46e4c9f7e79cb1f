//! The XML form of the CDM (CCSDS 508.0-B-1 §4 with Technical Corrigendum 2;
//! NDM/XML schema `ndmxml-2.0.0-cdm-1.0.xsd`, unqualified flavour):
//!
//! ```text
//! <cdm xmlns:xsi=... xsi:noNamespaceSchemaLocation=... id="CCSDS_CDM_VERS" version="1.0">
//!   <header> COMMENT* CREATION_DATE ORIGINATOR MESSAGE_FOR? MESSAGE_ID </header>
//!   <body>
//!     <relativeMetadataData> COMMENT* TCA MISS_DISTANCE RELATIVE_SPEED?
//!       <relativeStateVector>? (the six RELATIVE_* keywords) START_SCREEN_PERIOD? ... </relativeMetadataData>
//!     <segment> (twice: OBJECT1, OBJECT2)
//!       <metadata> COMMENT* OBJECT ... INTRACK_THRUST </metadata>
//!       <data> COMMENT* <odParameters>? <additionalParameters>? <stateVector> <covarianceMatrix> </data>
//!     </segment>
//!   </body>
//! </cdm>
//! ```
//!
//! Keyword elements carry the KVN keyword as their tag and the unit in a
//! `units` attribute (4.3.10). The reader flattens the structure back into
//! the KVN sections and validates them with the same code as the KVN reader,
//! so both forms accept and refuse the same content. Element names are
//! compared by local name, so the namespace-qualified form (Cor. 2) reads too.

use std::io::Write;

use super::keywords::{Kind, OBJECT_BLOCKS};
use super::kvn_write::SectionOut;
use super::read::{Ctx, RawKv, RawMessage, RawSection, Section, excerpt, table_of};
use super::{Cdm, CdmError};

/// Schema location written on the root element (508.0-B-1 4.3.3.4, Cor. 2).
pub const CDM_SCHEMA_LOCATION: &str =
    "https://sanaregistry.org/r/ndmxml_unqualified/ndmxml-2.0.0-master-2.0.xsd";

const RELATIVE_STATE_KEYS: [&str; 6] = [
    "RELATIVE_POSITION_R",
    "RELATIVE_POSITION_T",
    "RELATIVE_POSITION_N",
    "RELATIVE_VELOCITY_R",
    "RELATIVE_VELOCITY_T",
    "RELATIVE_VELOCITY_N",
];

/// Text with `&`, `<`, `>` and quotes escaped for XML content or attributes.
pub fn xml_escape(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&apos;"),
            // XML 1.0 allows no NUL or other C0 control even escaped (§2.2);
            // a line break in a name means nothing either: blanks.
            c if c.is_control() => out.push(' '),
            c => out.push(c),
        }
    }
    out
}

fn element(w: &mut dyn Write, indent: usize, e: &super::kvn_write::Entry) -> std::io::Result<()> {
    let pad = " ".repeat(indent);
    match &e.unit {
        Some(u) => writeln!(
            w,
            "{pad}<{k} units=\"{}\">{}</{k}>",
            xml_escape(u),
            xml_escape(&e.value),
            k = e.key
        ),
        None => writeln!(w, "{pad}<{k}>{}</{k}>", xml_escape(&e.value), k = e.key),
    }
}

fn comments(w: &mut dyn Write, indent: usize, c: &[String]) -> std::io::Result<()> {
    let pad = " ".repeat(indent);
    for line in c {
        writeln!(w, "{pad}<COMMENT>{}</COMMENT>", xml_escape(line))?;
    }
    Ok(())
}

impl Cdm {
    /// Writes the message in the XML form of CCSDS 508.0-B-1 §4 (see the
    /// module docs). The six RELATIVE_* keywords form `<relativeStateVector>`,
    /// which the schema wants whole: written when all six are known.
    pub fn write_xml(&self, w: &mut dyn Write) -> std::io::Result<()> {
        let [header, relative, o1, o2] = self.sections_out();
        writeln!(w, "<?xml version=\"1.0\" encoding=\"UTF-8\"?>")?;
        writeln!(
            w,
            "<cdm xmlns:xsi=\"http://www.w3.org/2001/XMLSchema-instance\" xsi:noNamespaceSchemaLocation=\"{CDM_SCHEMA_LOCATION}\" id=\"CCSDS_CDM_VERS\" version=\"{}\">",
            xml_escape(&self.header.ccsds_cdm_vers)
        )?;
        writeln!(w, "  <header>")?;
        comments(w, 4, &header.comments)?;
        for e in header.entries.iter().filter(|e| e.key != "CCSDS_CDM_VERS") {
            element(w, 4, e)?;
        }
        writeln!(w, "  </header>")?;
        writeln!(w, "  <body>")?;
        writeln!(w, "    <relativeMetadataData>")?;
        comments(w, 6, &relative.comments)?;
        let whole_state = RELATIVE_STATE_KEYS
            .iter()
            .all(|k| relative.entries.iter().any(|e| e.key == *k));
        let mut state_written = false;
        for e in &relative.entries {
            if RELATIVE_STATE_KEYS.contains(&e.key) {
                if whole_state && !state_written {
                    writeln!(w, "      <relativeStateVector>")?;
                    for k in RELATIVE_STATE_KEYS {
                        if let Some(e) = relative.entries.iter().find(|e| e.key == k) {
                            element(w, 8, e)?;
                        }
                    }
                    writeln!(w, "      </relativeStateVector>")?;
                    state_written = true;
                }
                continue;
            }
            element(w, 6, e)?;
        }
        writeln!(w, "    </relativeMetadataData>")?;
        for o in [o1, o2] {
            write_segment(w, &o)?;
        }
        writeln!(w, "  </body>")?;
        writeln!(w, "</cdm>")?;
        Ok(())
    }
}

fn write_segment(w: &mut dyn Write, o: &SectionOut) -> std::io::Result<()> {
    writeln!(w, "    <segment>")?;
    writeln!(w, "      <metadata>")?;
    comments(w, 8, &o.comments)?;
    let first_data = OBJECT_BLOCKS[0].1;
    let data_start = super::keywords::OBJECT_KEYS
        .iter()
        .position(|s| s.key == first_data)
        .unwrap_or(0);
    let is_metadata = |key: &str| {
        super::keywords::OBJECT_KEYS
            .iter()
            .position(|s| s.key == key)
            .is_some_and(|p| p < data_start)
    };
    for e in o.entries.iter().filter(|e| is_metadata(e.key)) {
        element(w, 8, e)?;
    }
    writeln!(w, "      </metadata>")?;
    writeln!(w, "      <data>")?;
    for (tag, first, last) in OBJECT_BLOCKS {
        let range = block_range(first, last);
        let inside: Vec<_> = o
            .entries
            .iter()
            .filter(|e| position(e.key).is_some_and(|p| range.contains(&p)))
            .collect();
        if inside.is_empty() {
            continue;
        }
        writeln!(w, "        <{tag}>")?;
        for e in inside {
            element(w, 10, e)?;
        }
        writeln!(w, "        </{tag}>")?;
    }
    writeln!(w, "      </data>")?;
    writeln!(w, "    </segment>")?;
    Ok(())
}

/// Whether keyword `key` may stand directly inside `<parent>`: object
/// metadata in `<metadata>`, each data keyword in its logical block
/// (508.0-B-1 Table 4-1), none directly in `<data>`.
fn fits(parent: &str, key: &str) -> bool {
    let Some(p) = position(key) else {
        return true;
    };
    match parent {
        "metadata" => p < *block_range(OBJECT_BLOCKS[0].1, OBJECT_BLOCKS[0].2).start(),
        "data" => false,
        tag => OBJECT_BLOCKS
            .iter()
            .find(|b| b.0 == tag)
            .is_none_or(|b| block_range(b.1, b.2).contains(&p)),
    }
}

fn position(key: &str) -> Option<usize> {
    super::keywords::OBJECT_KEYS
        .iter()
        .position(|s| s.key == key)
}

fn block_range(first: &str, last: &str) -> std::ops::RangeInclusive<usize> {
    position(first).unwrap_or(0)..=position(last).unwrap_or(0)
}

// ---------------------------------------------------------------------------
// Reading
// ---------------------------------------------------------------------------

type Node<'a, 'i> = roxmltree::Node<'a, 'i>;

struct XmlReader<'a, 'i> {
    ctx: &'a Ctx<'a>,
    doc: &'a roxmltree::Document<'i>,
    /// The last (byte offset, line) asked about: lines are counted forwards
    /// from it (nodes are mostly asked about in document order), so the
    /// reader stays linear. `Document::text_pos_at` counts from the start of
    /// the text on every call: 400,000 comments in a 10 MB message took
    /// four and a half minutes.
    cursor: std::cell::Cell<(usize, usize)>,
}

impl<'a, 'i> XmlReader<'a, 'i> {
    fn line(&self, n: Node<'_, '_>) -> usize {
        let text = self.doc.input_text().as_bytes();
        let offset = n.range().start.min(text.len());
        let (from, mut line) = match self.cursor.get() {
            (o, l) if o <= offset => (o, l),
            _ => (0, 1),
        };
        line += text[from..offset].iter().filter(|&&b| b == b'\n').count();
        self.cursor.set((offset, line));
        line
    }

    fn elements(n: Node<'a, 'i>) -> impl Iterator<Item = Node<'a, 'i>> {
        n.children().filter(|c| c.is_element())
    }

    fn text(n: Node<'_, '_>) -> String {
        n.children()
            .filter(|c| c.is_text())
            .filter_map(|c| c.text())
            .collect::<String>()
            .trim()
            .to_string()
    }

    /// Reads keyword elements (and COMMENTs) of `parent` into `sec`; elements
    /// named in `groups` are descended into, in place.
    fn read_keywords(
        &self,
        parent: Node<'a, 'i>,
        kind: Section,
        groups: &[&str],
        sec: &mut RawSection,
    ) -> Result<(), CdmError> {
        for n in Self::elements(parent) {
            let name = n.tag_name().name();
            let line = self.line(n);
            if name == "COMMENT" {
                sec.comments.push(Self::text(n));
                continue;
            }
            if groups.contains(&name) {
                self.read_keywords(n, kind, groups, sec)?;
                continue;
            }
            let home = table_of(name).map(|(s, spec)| {
                let s = if s == Section::Object1 { kind } else { s };
                (s, spec)
            });
            let parent_tag = parent.tag_name().name();
            let Some((_, spec)) = home.filter(|(s, _)| *s == kind && fits(parent_tag, name)) else {
                return Err(self.ctx.err(
                    line,
                    name,
                    format!(
                        "<{}> cannot hold <{}> (CCSDS 508.0-B-1 §4)",
                        excerpt(parent.tag_name().name()),
                        excerpt(name)
                    ),
                ));
            };
            if Self::elements(n).next().is_some() {
                return Err(self.ctx.err(
                    line,
                    name,
                    format!("<{name}> holds elements, expected a value"),
                ));
            }
            let unit = n.attribute("units").map(str::to_string);
            if spec.kind == Kind::Text && unit.is_some() {
                return Err(self
                    .ctx
                    .err(line, name, "a units attribute on a text keyword"));
            }
            if sec.items.is_empty() {
                sec.first_line = line;
            }
            if sec.items.iter().any(|kv| kv.key == name) {
                return Err(self
                    .ctx
                    .err(line, name, "keyword repeated in the same block"));
            }
            sec.items.push(RawKv {
                key: name.to_string(),
                value: Self::text(n),
                unit,
                line,
            });
        }
        Ok(())
    }

    fn child(&self, parent: Node<'a, 'i>, name: &str) -> Result<Node<'a, 'i>, CdmError> {
        Self::elements(parent)
            .find(|c| c.tag_name().name() == name)
            .ok_or_else(|| {
                self.ctx.err(
                    self.line(parent),
                    name,
                    format!(
                        "<{}> has no <{name}> (CCSDS 508.0-B-1 §4)",
                        parent.tag_name().name()
                    ),
                )
            })
    }

    /// Every child must be one of `allowed`, in that order, each once
    /// (`COMMENT` and `segment` may repeat).
    fn expect_children(&self, parent: Node<'a, 'i>, allowed: &[&str]) -> Result<(), CdmError> {
        let mut at = 0;
        for c in Self::elements(parent) {
            let name = c.tag_name().name();
            if at > 0 && allowed[at - 1] == name && matches!(name, "COMMENT" | "segment") {
                continue;
            }
            match allowed[at..].iter().position(|a| *a == name) {
                Some(k) => at += k + 1,
                None => {
                    return Err(self.ctx.err(
                        self.line(c),
                        name,
                        format!(
                            "<{}> holds {}, in this order: an unexpected, repeated or misplaced <{}>",
                            parent.tag_name().name(),
                            allowed.join(", "),
                            excerpt(name)
                        ),
                    ));
                }
            }
        }
        Ok(())
    }
}

impl Cdm {
    /// Reads an XML CDM (CCSDS 508.0-B-1 §4). `file` is used only in error
    /// messages.
    pub fn parse_xml(text: &str, file: &str) -> Result<Cdm, CdmError> {
        let ctx = Ctx { file };
        let doc = roxmltree::Document::parse(text).map_err(|e| {
            ctx.err(
                e.pos().row as usize,
                "XML",
                format!("not well-formed XML (column {}): {e}", e.pos().col),
            )
        })?;
        let r = XmlReader {
            ctx: &ctx,
            doc: &doc,
            cursor: std::cell::Cell::new((0, 1)),
        };
        let root = doc.root_element();
        let root_line = r.line(root);
        if root.tag_name().name() != "cdm" {
            return Err(ctx.err(
                root_line,
                root.tag_name().name(),
                "the root element of an XML CDM is <cdm>",
            ));
        }
        if root.attribute("id") != Some("CCSDS_CDM_VERS") {
            return Err(ctx.err(
                root_line,
                "CCSDS_CDM_VERS",
                "<cdm> needs the attribute id=\"CCSDS_CDM_VERS\" (CCSDS 508.0-B-1 4.3.3.7)",
            ));
        }
        let Some(version) = root.attribute("version") else {
            return Err(ctx.err(
                root_line,
                "CCSDS_CDM_VERS",
                "<cdm> needs the attribute version=\"1.0\" (CCSDS 508.0-B-1 4.3.3.9)",
            ));
        };
        let mut msg = RawMessage {
            sections: Default::default(),
            last_line: doc.text_pos_at(text.len()).row as usize,
        };
        r.expect_children(root, &["header", "body"])?;
        let header = r.child(root, "header")?;
        let body = r.child(root, "body")?;
        msg.sections[0].first_line = root_line;
        msg.sections[0].items.push(RawKv {
            key: "CCSDS_CDM_VERS".to_string(),
            value: version.to_string(),
            unit: None,
            line: root_line,
        });
        r.read_keywords(header, Section::Header, &[], &mut msg.sections[0])?;
        r.expect_children(body, &["relativeMetadataData", "segment"])?;
        let rel = r.child(body, "relativeMetadataData")?;
        r.read_keywords(
            rel,
            Section::Relative,
            &["relativeStateVector"],
            &mut msg.sections[1],
        )?;
        let segments: Vec<Node<'_, '_>> = XmlReader::elements(body)
            .filter(|n| n.tag_name().name() == "segment")
            .collect();
        if segments.len() != 2 {
            return Err(ctx.err(
                r.line(body),
                "segment",
                format!(
                    "<body> holds {} <segment>; a CDM has exactly two (OBJECT1, OBJECT2)",
                    segments.len()
                ),
            ));
        }
        let blocks: Vec<&str> = OBJECT_BLOCKS.iter().map(|b| b.0).collect();
        for (k, seg) in segments.into_iter().enumerate() {
            let kind = if k == 0 {
                Section::Object1
            } else {
                Section::Object2
            };
            r.expect_children(seg, &["metadata", "data"])?;
            let sec = &mut msg.sections[2 + k];
            r.read_keywords(r.child(seg, "metadata")?, kind, &[], sec)?;
            let data = r.child(seg, "data")?;
            r.expect_children(
                data,
                &[
                    "COMMENT",
                    "odParameters",
                    "additionalParameters",
                    "stateVector",
                    "covarianceMatrix",
                ],
            )?;
            r.read_keywords(data, kind, &blocks, sec)?;
        }
        msg.build(&ctx)
    }

    /// Reads a CDM in either form: XML when the text starts with `<`, else KVN.
    pub fn parse(text: &str, file: &str) -> Result<Cdm, CdmError> {
        // A UTF-8 byte-order mark (written by some editors) is not content.
        let text = text.strip_prefix('\u{feff}').unwrap_or(text);
        let start = text.trim_start_matches(['\u{feff}', ' ', '\t', '\r', '\n']);
        if start.starts_with('<') {
            Cdm::parse_xml(text, file)
        } else {
            Cdm::parse_kvn(text, file)
        }
    }
}
