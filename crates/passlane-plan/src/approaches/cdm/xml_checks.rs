//! The well-formedness checks of XML 1.0 that the CDM's stream reader adds
//! to quick-xml's own (a tree reader made them all): characters XML allows
//! nowhere, the declaration's form, attributes and namespace prefixes.

use quick_xml::events::BytesStart;
use quick_xml::name::ResolveResult;

use super::read::excerpt;

/// The first character that XML 1.0 allows nowhere in a document (§2.2),
/// with its byte offset.
pub(super) fn first_forbidden_char(text: &str) -> Option<(usize, char)> {
    text.char_indices().find(|&(_, c)| {
        matches!(c, '\u{0}'..='\u{8}' | '\u{b}' | '\u{c}' | '\u{e}'..='\u{1f}' | '\u{fffe}' | '\u{ffff}')
    })
}

/// Whether `decl` (`<?xml ...?>`) is an XML declaration as XML 1.0 §2.8
/// writes it: `version`, then optionally `encoding` and `standalone`, each
/// once, in that order, each after a blank.
pub(super) fn declaration_is_well_formed(decl: &str) -> bool {
    let Some(body) = decl
        .strip_prefix("<?xml")
        .and_then(|d| d.strip_suffix("?>"))
    else {
        return false;
    };
    let mut rest = body;
    let mut names = ["version", "encoding", "standalone"].iter();
    let mut first = true;
    loop {
        let trimmed = rest.trim_start_matches([' ', '\t', '\r', '\n']);
        if trimmed.is_empty() {
            return !first;
        }
        if trimmed.len() == rest.len() {
            return false;
        }
        let Some((name, after)) = trimmed.split_once('=') else {
            return false;
        };
        let name = name.trim_end_matches([' ', '\t', '\r', '\n']);
        if first && name != "version" || !names.any(|n| *n == name) {
            return false;
        }
        first = false;
        let after = after.trim_start_matches([' ', '\t', '\r', '\n']);
        let Some(quote) = after.chars().next().filter(|q| matches!(q, '"' | '\'')) else {
            return false;
        };
        // The values are not checked: the tree reader did not check them
        // either (a declaration of version 2.0 read).
        let Some((_value, tail)) = after[1..].split_once(quote) else {
            return false;
        };
        rest = tail;
    }
}

/// Why a start tag is not well-formed beyond what the reader checks: a
/// malformed or repeated attribute, or a namespace prefix never declared.
pub(super) fn ill_formed_names(
    reader: &quick_xml::NsReader<&[u8]>,
    e: &BytesStart<'_>,
) -> Option<String> {
    if let (ResolveResult::Unknown(prefix), _) = reader.resolver().resolve_element(e.name()) {
        return Some(format!(
            "not well-formed XML: the namespace prefix {:?} is not declared",
            excerpt(&prefix)
        ));
    }
    for a in e.attributes() {
        let a = match a {
            Ok(a) => a,
            Err(err) => return Some(format!("not well-formed XML: {err}")),
        };
        if let (ResolveResult::Unknown(prefix), _) = reader.resolver().resolve_attribute(a.key) {
            return Some(format!(
                "not well-formed XML: the namespace prefix {:?} is not declared",
                excerpt(&prefix)
            ));
        }
        if let Err(err) = a.normalized_value(quick_xml::XmlVersion::Implicit1_0) {
            return Some(format!("not well-formed XML: {err}"));
        }
    }
    None
}
