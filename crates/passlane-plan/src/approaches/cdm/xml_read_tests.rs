//! Tests of the XML CDM reader (`xml_read.rs`, a stream of tags) against
//! the tree reader it replaced (roxmltree, a tree of the whole message),
//! kept here, for the tests only, as the reference: on every message, good
//! or bad, both give the same message or the same error.

use super::keywords::{Kind, OBJECT_BLOCKS};
use super::read::{Ctx, RawKv, RawMessage, RawSection, Section, excerpt, table_of};
use super::xml::fits;
use super::{Cdm, CdmError};

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

/// The tree reader, as it was: the reference the stream reader is tested against.
pub(super) fn parse_xml_tree(text: &str, file: &str) -> Result<Cdm, CdmError> {
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

#[cfg(test)]
#[allow(clippy::unwrap_used, clippy::panic)]
mod tests {
    use super::super::{Cdm, CdmError};
    use super::parse_xml_tree;

    const GOOD: &str = include_str!("../../../tests/fixtures/cdm/ormivel_vs_debris_99871.kvn");

    fn good_xml() -> String {
        let mut bytes = Vec::new();
        Cdm::parse_kvn(GOOD, "good.kvn")
            .unwrap()
            .write_xml(&mut bytes)
            .unwrap();
        String::from_utf8(bytes).unwrap()
    }

    /// The stream reader and the tree reader on one text: the same message,
    /// or the same error (file, line, keyword, reason); where the text is
    /// not well-formed, both say so (the parsers word it differently).
    fn agree(text: &str) -> Result<Cdm, CdmError> {
        let stream = Cdm::parse_xml(text, "m.xml");
        let tree = parse_xml_tree(text, "m.xml");
        match (&stream, &tree) {
            (Ok(a), Ok(b)) => assert_eq!(a, b, "{text}"),
            (Err(a), Err(b)) if b.reason.starts_with("not well-formed XML") => {
                assert_eq!(a.keyword, "XML", "{text}\n{a}\n{b}");
                assert!(
                    a.reason.starts_with("not well-formed XML"),
                    "{text}\n{a}\n{b}"
                );
            }
            (Err(a), Err(b)) => assert_eq!(a, b, "{text}"),
            _ => panic!(
                "{text}\nstream: {:?}\ntree: {:?}",
                stream.as_ref().err(),
                tree.as_ref().err()
            ),
        }
        stream
    }

    fn lines(text: &str) -> Vec<&str> {
        text.lines().collect()
    }

    #[test]
    fn every_line_removed_repeated_swapped_or_followed_by_a_stray_element() {
        let xml = good_xml();
        assert!(agree(&xml).is_ok());
        let l = lines(&xml);
        let mut refused = 0;
        for i in 0..l.len() {
            let mut variants = Vec::new();
            let mut v = l.clone();
            v.remove(i);
            variants.push(v.join("\n"));
            let mut v = l.clone();
            v.insert(i, l[i]);
            variants.push(v.join("\n"));
            if i + 1 < l.len() {
                let mut v = l.clone();
                v.swap(i, i + 1);
                variants.push(v.join("\n"));
            }
            for extra in [
                "<foo/>",
                "<COMMENT>note</COMMENT>",
                "<segment/>",
                "<X>1</X>",
            ] {
                let mut v = l.clone();
                v.insert(i + 1, extra);
                variants.push(v.join("\n"));
            }
            for t in variants {
                refused += usize::from(agree(&t).is_err());
            }
        }
        assert!(refused > l.len(), "{refused}");
    }

    #[test]
    fn every_keyword_with_a_wrong_unit_value_or_content() {
        let xml = good_xml();
        let l = lines(&xml);
        for i in 0..l.len() {
            let line = l[i].trim();
            let Some(close) = line.find('>') else {
                continue;
            };
            let Some(end) = line.rfind("</") else {
                continue;
            };
            if end <= close {
                continue;
            }
            let (tag, value) = (&line[..=close], &line[close + 1..end]);
            let name = tag[1..].split([' ', '>']).next().unwrap();
            let rest = &line[end..];
            let mut variants = vec![
                format!("<{name} units=\"km\">{value}{rest}"),
                format!("<{name}>{value}{rest}"),
                format!("{tag}abc{rest}"),
                format!("{tag}{rest}"),
                format!("{tag}<a/>{value}{rest}"),
                format!("{tag}<![CDATA[{value}]]>{rest}"),
                format!("{tag} &#32;{value}&#x20;{rest}"),
                format!("{tag}{value}&bogus;{rest}"),
                format!("{tag}{value}\u{1}{rest}"),
            ];
            if value.contains('.') {
                variants.push(format!("{tag}{}{rest}", value.replace('.', "&#46;")));
            }
            for v in variants {
                let mut m = l.clone();
                m[i] = &v;
                let _ = agree(&m.join("\n"));
            }
        }
    }

    #[test]
    fn of_two_faults_the_one_the_tree_reader_named_is_named() {
        // The stream meets faults in document order, the tree reader met
        // them in its order of checks: every pair of a removed line and a
        // swapped or stray one (sampled) must still name the same fault.
        let xml = good_xml();
        let l = lines(&xml);
        for i in (0..l.len()).step_by(2) {
            for j in (1..l.len() - 1).step_by(3) {
                let mut v = l.clone();
                v.swap(j, j + 1);
                v.insert(i, "<foo/>");
                let _ = agree(&v.join("\n"));
                let mut v = l.clone();
                v.remove(j);
                if i < v.len() {
                    v[i] = "<X>1</X>";
                }
                let _ = agree(&v.join("\n"));
            }
        }
    }

    #[test]
    fn comments_cdata_empty_elements_and_nesting() {
        let xml = good_xml();
        for (from, to) in [
            ("<header>", "<header><COMMENT/>"),
            ("<header>", "<header><COMMENT>a<x>b</x>c</COMMENT>"),
            (
                "<header>",
                "<header><COMMENT><![CDATA[<raw> & text]]></COMMENT>",
            ),
            ("<header>", "<header><COMMENT>a &amp; b &#x3C; c</COMMENT>"),
            ("<header>", "<header><!-- a note --><?pi data?>"),
            (
                "<MISS_DISTANCE units=\"m\">",
                "<MISS_DISTANCE units=\"m\">1<!-- c -->",
            ),
            ("<MISS_DISTANCE units=\"m\">", "<MISS_DISTANCE units='m' >"),
            (
                "<MISS_DISTANCE units=\"m\">",
                "<MISS_DISTANCE units=\"&#109;\">",
            ),
            (
                "<MISS_DISTANCE units=\"m\">",
                "<MISS_DISTANCE x:units=\"m\">",
            ),
            (
                "<relativeStateVector>",
                "<relativeStateVector><relativeStateVector>",
            ),
            (
                "<stateVector>",
                "<stateVector><COMMENT>in the block</COMMENT>",
            ),
            ("<header>", "<header>\r\n"),
            ("</header>", "</header >"),
            ("</header>", "</head>"),
            ("<body>", "<body/><body>"),
        ] {
            assert!(xml.contains(from), "{from}");
            let _ = agree(&xml.replacen(from, to, 1));
        }
    }

    #[test]
    fn a_dtd_and_entities_other_than_xmls_five_are_refused() {
        // No DTD is read, so none can declare an entity that multiplies
        // the text (the tree reader refused any DTD too).
        let xml = good_xml().replacen(
            "<cdm ",
            "<!DOCTYPE cdm [<!ENTITY who \"KESTREL RIDGE SPACE LAB\">]>\n<cdm ",
            1,
        );
        let e = agree(&xml).unwrap_err();
        assert_eq!((e.line, e.keyword.as_str()), (2, "XML"), "{e}");
        let with_entity = good_xml().replacen(">KESTREL RIDGE SPACE LAB<", ">&who;<", 1);
        let e = agree(&with_entity).unwrap_err();
        assert!(e.reason.contains("&who;"), "{e}");
        let line = 1 + with_entity[..with_entity.find("&who;").unwrap()]
            .matches('\n')
            .count();
        assert_eq!(e.line, line, "{e}");
    }

    #[test]
    fn the_root_its_attributes_and_namespaces() {
        let xml = good_xml();
        let cdm = agree(&xml).unwrap();
        for (from, to) in [
            ("id=\"CCSDS_CDM_VERS\"", ""),
            ("id=\"CCSDS_CDM_VERS\"", "id=\"OTHER\""),
            ("version=\"1.0\"", ""),
            ("version=\"1.0\"", "version=\"2.0\""),
            ("version=\"1.0\"", "version=\"1.0\" version=\"1.0\""),
            ("<cdm ", "<ndm "),
            ("</cdm>", "</cdm><cdm/>"),
            ("</cdm>", "</cdm>text"),
            ("</cdm>", ""),
            ("<header>", "<x:header>"),
            ("<?xml version=\"1.0\" encoding=\"UTF-8\"?>", ""),
            (
                "<?xml version=\"1.0\" encoding=\"UTF-8\"?>",
                "<?xml version=\"1.0\"?><!-- a note -->",
            ),
        ] {
            assert!(xml.contains(from), "{from}");
            let _ = agree(&xml.replacen(from, to, 1));
        }
        // The namespace-qualified form (Cor. 2) reads as the plain one.
        let mut q = xml.replace("</", "</ndm:").replace('<', "<ndm:");
        q = q
            .replace("<ndm:/", "</")
            .replace("<ndm:?xml", "<?xml")
            .replace(
                "<ndm:cdm ",
                "<ndm:cdm xmlns:ndm=\"urn:ccsds:schema:ndmxml\" ",
            );
        assert_eq!(agree(&q).unwrap(), cdm);
        // Every cut of the message is refused alike.
        for cut in (0..xml.len()).step_by(37) {
            if xml.is_char_boundary(cut) {
                let _ = agree(&xml[..cut]);
            }
        }
    }
}
