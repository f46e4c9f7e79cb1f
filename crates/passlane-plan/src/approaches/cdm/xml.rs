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
//! `units` attribute (4.3.10). This module writes the form; `xml_read.rs`
//! reads it, as a stream of tags, flattening the structure back into the
//! KVN sections, which it validates with the same code as the KVN reader,
//! so both forms accept and refuse the same content.

use std::io::Write;

use super::keywords::OBJECT_BLOCKS;
use super::kvn_write::SectionOut;
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
pub(super) fn fits(parent: &str, key: &str) -> bool {
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

impl Cdm {
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
