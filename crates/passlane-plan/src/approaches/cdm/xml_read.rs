//! Reading the XML form of the CDM (layout in [`super::xml`]'s docs) as a
//! stream of tags (quick-xml): memory holds the message's keywords and
//! comments, never a tree of the document (a tree cost ~4× the text of a
//! message that is mostly comments). Lines are counted forwards as the
//! reader advances, so the time is linear. Only XML's five predefined
//! entities and character references are read: a DTD entity is never
//! expanded, so no entity can multiply the input.
//!
//! The reader flattens the structure into the KVN sections and validates
//! them with the same code as the KVN reader. Element names are compared by
//! local name, so the namespace-qualified form (508.0-B-1 Cor. 2) reads too.
//!
//! A tree reader checked the message in a fixed order: well-formedness,
//! the root, the order of `<cdm>`'s children, the header's keywords, the
//! order of `<body>`'s children, and so on down to each segment. A stream
//! meets the faults in document order instead, so each fault carries the
//! [`Step`] of that order that finds it, and of several faults the one
//! reported is the earliest step's, then the earliest in the document: a
//! message with several faults is refused with the same one as before.

use quick_xml::events::{BytesStart, Event};

use super::keywords::{Kind, OBJECT_BLOCKS};
use super::read::{Ctx, RawKv, RawMessage, Section, excerpt, table_of};
use super::xml::fits;
use super::xml_checks::{declaration_is_well_formed, first_forbidden_char, ill_formed_names};
use super::{Cdm, CdmError};

/// The checks in the order a message's faults are ranked (see the module
/// docs); a segment's checks come after every check of the body.
#[derive(Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Debug)]
enum Step {
    WellFormed,
    Root,
    RootChildren,
    NoHeader,
    NoBody,
    HeaderKeywords,
    BodyChildren,
    NoRelative,
    RelativeKeywords,
    SegmentCount,
    Segment(usize, SegmentStep),
}

#[derive(Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Debug)]
enum SegmentStep {
    Children,
    NoMetadata,
    MetadataKeywords,
    NoData,
    DataChildren,
    DataKeywords,
}

/// The deepest nesting read: a CDM nests six elements (`<cdm>`, `<body>`,
/// `<segment>`, `<data>`, a logical block, a keyword). A limit keeps the
/// stack of open elements (here and in the XML parser, which checks every
/// end tag against it) small whatever the text: 16 MB of `<a>` would open
/// five million.
const MAX_DEPTH: usize = 100;

const ROOT_CHILDREN: [&str; 2] = ["header", "body"];
const BODY_CHILDREN: [&str; 2] = ["relativeMetadataData", "segment"];
const SEGMENT_CHILDREN: [&str; 2] = ["metadata", "data"];
const DATA_CHILDREN: [&str; 5] = [
    "COMMENT",
    "odParameters",
    "additionalParameters",
    "stateVector",
    "covarianceMatrix",
];
const RELATIVE_GROUPS: [&str; 1] = ["relativeStateVector"];
const DATA_GROUPS: [&str; 4] = [
    OBJECT_BLOCKS[0].0,
    OBJECT_BLOCKS[1].0,
    OBJECT_BLOCKS[2].0,
    OBJECT_BLOCKS[3].0,
];

/// An element whose children must be some of `allowed`, in that order, each
/// once (`COMMENT` and `segment` may repeat).
struct Ordered {
    allowed: &'static [&'static str],
    /// How far into `allowed` the children have come.
    at: usize,
    step: Step,
}

impl Ordered {
    fn new(allowed: &'static [&'static str], step: Step) -> Self {
        Ordered {
            allowed,
            at: 0,
            step,
        }
    }

    /// Takes the child `name`; false if it is unexpected, repeated or
    /// misplaced.
    fn take(&mut self, name: &str) -> bool {
        let allowed = self.allowed;
        if self.at > 0 && allowed[self.at - 1] == name && matches!(name, "COMMENT" | "segment") {
            return true;
        }
        match allowed[self.at..].iter().position(|a| *a == name) {
            Some(k) => {
                self.at += k + 1;
                true
            }
            None => false,
        }
    }
}

/// An element whose children are keywords and comments of one section
/// (its `groups` are descended into, in place).
#[derive(Clone, Copy)]
struct Keywords {
    section: usize,
    kind: Section,
    groups: &'static [&'static str],
    step: Step,
}

/// What an open element is.
enum Role {
    Root {
        children: Ordered,
        header: bool,
        body: bool,
    },
    Body {
        children: Ordered,
        relative: bool,
        segments: usize,
    },
    Segment {
        k: usize,
        children: Ordered,
        metadata: bool,
        data: bool,
    },
    /// `<data>`: ordered children that are also keyword groups.
    Data {
        children: Ordered,
        keywords: Keywords,
    },
    Keywords(Keywords),
    Keyword {
        name: String,
        unit: Option<String>,
        text: String,
        keywords: Keywords,
        /// It holds an element (already reported): no value.
        holds_elements: bool,
    },
    Comment {
        text: String,
        section: usize,
    },
    /// Reported, ignored, or inside either: only well-formedness counts.
    Skipped,
}

struct Open {
    role: Role,
    /// Local name.
    tag: String,
    line: usize,
}

/// The fault to report: the earliest step's, then the earliest met.
struct Faults<'c> {
    ctx: &'c Ctx<'c>,
    first: Option<(Step, CdmError)>,
}

impl Faults<'_> {
    fn add(&mut self, step: Step, line: usize, keyword: &str, reason: impl Into<String>) {
        if self.matters(step) {
            self.first = Some((step, self.ctx.err(line, keyword, reason)));
        }
    }

    /// Whether a fault of `step` could still be the one reported.
    fn matters(&self, step: Step) -> bool {
        self.first.as_ref().is_none_or(|(s, _)| step < *s)
    }

    fn misplaced(&mut self, step: Step, parent: &str, allowed: &[&str], name: &str, line: usize) {
        self.add(
            step,
            line,
            name,
            format!(
                "<{parent}> holds {}, in this order: an unexpected, repeated or misplaced <{}>",
                allowed.join(", "),
                excerpt(name)
            ),
        );
    }

    fn missing(&mut self, step: Step, parent: &Open, name: &str) {
        self.add(
            step,
            parent.line,
            name,
            format!("<{}> has no <{name}> (CCSDS 508.0-B-1 §4)", parent.tag),
        );
    }

    /// A child of an element of keywords: a comment, a group, or a keyword
    /// that must belong to the section and fit its parent (508.0-B-1 §4).
    fn keyword_start(
        &mut self,
        e: &BytesStart<'_>,
        keywords: Keywords,
        parent: &str,
        name: &str,
        line: usize,
    ) -> Role {
        if name == "COMMENT" {
            return Role::Comment {
                text: String::new(),
                section: keywords.section,
            };
        }
        if keywords.groups.contains(&name) {
            return Role::Keywords(keywords);
        }
        let home = table_of(name).map(|(s, spec)| {
            let s = if s == Section::Object1 {
                keywords.kind
            } else {
                s
            };
            (s, spec)
        });
        if home.is_none_or(|(s, _)| s != keywords.kind || !fits(parent, name)) {
            self.add(
                keywords.step,
                line,
                name,
                format!(
                    "<{}> cannot hold <{}> (CCSDS 508.0-B-1 §4)",
                    excerpt(parent),
                    excerpt(name)
                ),
            );
            return Role::Skipped;
        }
        Role::Keyword {
            name: name.to_string(),
            unit: attribute(e, "units"),
            text: String::new(),
            keywords,
            holds_elements: false,
        }
    }
}

struct Reader<'c> {
    faults: Faults<'c>,
    msg: RawMessage,
    stack: Vec<Open>,
    root_seen: bool,
}

impl Reader<'_> {
    fn fault(&mut self, step: Step, line: usize, keyword: &str, reason: impl Into<String>) {
        self.faults.add(step, line, keyword, reason);
    }

    fn start(&mut self, e: &BytesStart<'_>, name: &str, line: usize) -> Role {
        let Some(parent) = self.stack.last_mut() else {
            return self.root(e, name, line);
        };
        let faults = &mut self.faults;
        let parent_tag = parent.tag.as_str();
        let parent_line = parent.line;
        match &mut parent.role {
            Role::Skipped | Role::Comment { .. } => Role::Skipped,
            Role::Keyword {
                name: key,
                keywords,
                holds_elements,
                ..
            } => {
                if !*holds_elements {
                    *holds_elements = true;
                    faults.add(
                        keywords.step,
                        parent_line,
                        key,
                        format!("<{key}> holds elements, expected a value"),
                    );
                }
                Role::Skipped
            }
            Role::Root {
                children,
                header,
                body,
            } => {
                if !children.take(name) {
                    let step = children.step;
                    faults.misplaced(step, parent_tag, ROOT_CHILDREN.as_slice(), name, line);
                    return Role::Skipped;
                }
                match name {
                    "header" => {
                        *header = true;
                        Role::Keywords(Keywords {
                            section: 0,
                            kind: Section::Header,
                            groups: &[],
                            step: Step::HeaderKeywords,
                        })
                    }
                    _ => {
                        *body = true;
                        Role::Body {
                            children: Ordered::new(&BODY_CHILDREN, Step::BodyChildren),
                            relative: false,
                            segments: 0,
                        }
                    }
                }
            }
            Role::Body {
                children,
                relative,
                segments,
            } => {
                if !children.take(name) {
                    let step = children.step;
                    faults.misplaced(step, parent_tag, BODY_CHILDREN.as_slice(), name, line);
                    return Role::Skipped;
                }
                if name == "relativeMetadataData" {
                    *relative = true;
                    return Role::Keywords(Keywords {
                        section: 1,
                        kind: Section::Relative,
                        groups: &RELATIVE_GROUPS,
                        step: Step::RelativeKeywords,
                    });
                }
                let k = *segments;
                *segments += 1;
                // A third segment is refused for its count, which outranks
                // anything inside it.
                if k >= 2 {
                    return Role::Skipped;
                }
                Role::Segment {
                    k,
                    children: Ordered::new(
                        &SEGMENT_CHILDREN,
                        Step::Segment(k, SegmentStep::Children),
                    ),
                    metadata: false,
                    data: false,
                }
            }
            Role::Segment {
                k,
                children,
                metadata,
                data,
            } => {
                let k = *k;
                if !children.take(name) {
                    let step = children.step;
                    faults.misplaced(step, parent_tag, SEGMENT_CHILDREN.as_slice(), name, line);
                    return Role::Skipped;
                }
                let kind = if k == 0 {
                    Section::Object1
                } else {
                    Section::Object2
                };
                if name == "metadata" {
                    *metadata = true;
                    return Role::Keywords(Keywords {
                        section: 2 + k,
                        kind,
                        groups: &[],
                        step: Step::Segment(k, SegmentStep::MetadataKeywords),
                    });
                }
                *data = true;
                Role::Data {
                    children: Ordered::new(
                        &DATA_CHILDREN,
                        Step::Segment(k, SegmentStep::DataChildren),
                    ),
                    keywords: Keywords {
                        section: 2 + k,
                        kind,
                        groups: &DATA_GROUPS,
                        step: Step::Segment(k, SegmentStep::DataKeywords),
                    },
                }
            }
            Role::Data { children, keywords } => {
                let keywords = *keywords;
                if !children.take(name) {
                    let step = children.step;
                    faults.misplaced(step, parent_tag, DATA_CHILDREN.as_slice(), name, line);
                }
                faults.keyword_start(e, keywords, parent_tag, name, line)
            }
            Role::Keywords(keywords) => {
                let keywords = *keywords;
                faults.keyword_start(e, keywords, parent_tag, name, line)
            }
        }
    }

    /// The root element: `<cdm id="CCSDS_CDM_VERS" version="1.0">`.
    fn root(&mut self, e: &BytesStart<'_>, name: &str, line: usize) -> Role {
        if self.root_seen {
            self.fault(
                Step::WellFormed,
                line,
                "XML",
                format!(
                    "not well-formed XML: a second root element <{}>",
                    excerpt(name)
                ),
            );
            return Role::Skipped;
        }
        self.root_seen = true;
        if name != "cdm" {
            self.fault(
                Step::Root,
                line,
                name,
                "the root element of an XML CDM is <cdm>",
            );
            return Role::Skipped;
        }
        if attribute(e, "id").as_deref() != Some("CCSDS_CDM_VERS") {
            self.fault(
                Step::Root,
                line,
                "CCSDS_CDM_VERS",
                "<cdm> needs the attribute id=\"CCSDS_CDM_VERS\" (CCSDS 508.0-B-1 4.3.3.7)",
            );
            return Role::Skipped;
        }
        let Some(version) = attribute(e, "version") else {
            self.fault(
                Step::Root,
                line,
                "CCSDS_CDM_VERS",
                "<cdm> needs the attribute version=\"1.0\" (CCSDS 508.0-B-1 4.3.3.9)",
            );
            return Role::Skipped;
        };
        let header = &mut self.msg.sections[0];
        header.first_line = line;
        header.items.push(RawKv {
            key: "CCSDS_CDM_VERS".to_string(),
            value: version,
            unit: None,
            line,
        });
        Role::Root {
            children: Ordered::new(&ROOT_CHILDREN, Step::RootChildren),
            header: false,
            body: false,
        }
    }

    /// Ends the innermost open element.
    fn end(&mut self) {
        let Some(open) = self.stack.pop() else {
            return;
        };
        match open.role {
            Role::Keyword {
                name,
                unit,
                text,
                keywords,
                holds_elements: false,
            } => {
                if !self.faults.matters(keywords.step) {
                    return;
                }
                let text_kind = table_of(&name).is_some_and(|(_, spec)| spec.kind == Kind::Text);
                if text_kind && unit.is_some() {
                    self.fault(
                        keywords.step,
                        open.line,
                        &name,
                        "a units attribute on a text keyword",
                    );
                    return;
                }
                let sec = &mut self.msg.sections[keywords.section];
                if sec.items.is_empty() {
                    sec.first_line = open.line;
                }
                if sec.items.iter().any(|kv| kv.key == name) {
                    self.fault(
                        keywords.step,
                        open.line,
                        &name,
                        "keyword repeated in the same block",
                    );
                    return;
                }
                sec.items.push(RawKv {
                    key: name,
                    value: text.trim().to_string(),
                    unit,
                    line: open.line,
                });
            }
            Role::Comment { text, section } => {
                self.msg.sections[section]
                    .comments
                    .push(text.trim().to_string());
            }
            Role::Root { header, body, .. } => {
                if !header {
                    self.faults.missing(Step::NoHeader, &open, "header");
                }
                if !body {
                    self.faults.missing(Step::NoBody, &open, "body");
                }
            }
            Role::Body {
                relative, segments, ..
            } => {
                if !relative {
                    self.faults
                        .missing(Step::NoRelative, &open, "relativeMetadataData");
                }
                if segments != 2 {
                    self.fault(
                        Step::SegmentCount,
                        open.line,
                        "segment",
                        format!(
                            "<body> holds {segments} <segment>; a CDM has exactly two (OBJECT1, OBJECT2)"
                        ),
                    );
                }
            }
            Role::Segment {
                k, metadata, data, ..
            } => {
                if !metadata {
                    self.faults.missing(
                        Step::Segment(k, SegmentStep::NoMetadata),
                        &open,
                        "metadata",
                    );
                }
                if !data {
                    self.faults
                        .missing(Step::Segment(k, SegmentStep::NoData), &open, "data");
                }
            }
            _ => {}
        }
    }

    /// Text inside the innermost open element: a keyword's value or a
    /// comment's (elsewhere it is layout).
    fn text(&mut self, line: usize, text: &str) {
        match self.stack.last_mut().map(|o| &mut o.role) {
            Some(Role::Keyword { text: t, .. } | Role::Comment { text: t, .. }) => t.push_str(text),
            Some(_) => {}
            None => {
                if !text.trim().is_empty() {
                    self.fault(
                        Step::WellFormed,
                        line,
                        "XML",
                        "not well-formed XML: text outside the root element",
                    );
                }
            }
        }
    }
}

/// The value of the attribute `name` (no prefix), entities resolved.
fn attribute(e: &BytesStart<'_>, name: &str) -> Option<String> {
    e.attributes()
        .flatten()
        .find(|a| a.key.as_ref() == name)
        .and_then(|a| {
            a.normalized_value(quick_xml::XmlVersion::Implicit1_0)
                .ok()
                .map(|v| v.into_owned())
        })
}

impl Cdm {
    /// Reads an XML CDM (CCSDS 508.0-B-1 §4). `file` is used only in error
    /// messages.
    pub fn parse_xml(text: &str, file: &str) -> Result<Cdm, CdmError> {
        let ctx = Ctx { file };
        let mut lines = passlane_orbit::xml::ForwardLines::new(text);
        if let Some((at, c)) = first_forbidden_char(text) {
            return Err(ctx.err(
                lines.line_at(at as u64),
                "XML",
                format!(
                    "not well-formed XML: {} is not allowed in an XML document",
                    passlane_orbit::text::describe_char(c)
                ),
            ));
        }
        let mut r = Reader {
            faults: Faults {
                ctx: &ctx,
                first: None,
            },
            msg: RawMessage {
                sections: Default::default(),
                last_line: 1,
            },
            stack: Vec::new(),
            root_seen: false,
        };
        let mut reader = quick_xml::NsReader::from_str(text);
        loop {
            let at = reader.buffer_position();
            let event = match reader.read_event() {
                Ok(e) => e,
                Err(e) => {
                    let line = lines.line_at(reader.error_position());
                    r.fault(
                        Step::WellFormed,
                        line,
                        "XML",
                        format!("not well-formed XML: {e}"),
                    );
                    break;
                }
            };
            match event {
                Event::Start(ref e) | Event::Empty(ref e) => {
                    let line = lines.line_at(at);
                    if let Some(reason) = ill_formed_names(&reader, e) {
                        r.fault(Step::WellFormed, line, "XML", reason);
                        break;
                    }
                    let local = e.local_name();
                    let name: &str = local.as_ref();
                    if r.stack.len() >= MAX_DEPTH {
                        r.fault(
                            Step::WellFormed,
                            line,
                            name,
                            format!(
                                "elements nested more than {MAX_DEPTH} deep, where a CDM nests 6 (CCSDS 508.0-B-1 §4)"
                            ),
                        );
                        break;
                    }
                    let role = r.start(e, name, line);
                    r.stack.push(Open {
                        role,
                        tag: name.to_string(),
                        line,
                    });
                    if matches!(event, Event::Empty(_)) {
                        r.end();
                    }
                }
                Event::End(_) => r.end(),
                Event::Text(t) => r.text(lines.line_at(at), &t.xml10_content()),
                Event::CData(c) => r.text(lines.line_at(at), &c.xml10_content()),
                Event::GeneralRef(g) => {
                    let line = lines.line_at(at);
                    match passlane_orbit::xml::resolve_reference(&g) {
                        Some(s) => r.text(line, &s),
                        None => {
                            r.fault(
                                Step::WellFormed,
                                line,
                                "XML",
                                format!(
                                    "not well-formed XML: the entity reference &{}; is not one of XML's predefined five (no DTD entity is read)",
                                    excerpt(&g.xml10_content())
                                ),
                            );
                            break;
                        }
                    }
                }
                Event::Decl(_) => {
                    // XML 1.0 §2.8: the declaration comes first, and names
                    // its version.
                    let end = usize::try_from(reader.buffer_position()).unwrap_or(usize::MAX);
                    if at > 0 || !declaration_is_well_formed(text.get(..end).unwrap_or("")) {
                        let line = lines.line_at(at);
                        r.fault(
                            Step::WellFormed,
                            line,
                            "XML",
                            "not well-formed XML: an XML declaration that is not the first thing in the text, or not of the form <?xml version=... encoding=... standalone=...?>",
                        );
                        break;
                    }
                }
                Event::DocType(_) => {
                    r.fault(
                        Step::WellFormed,
                        lines.line_at(at),
                        "XML",
                        "not well-formed XML: a DTD (<!DOCTYPE ...>), which a CDM has no use for and this reader does not read",
                    );
                    break;
                }
                Event::Eof => break,
                _ => {}
            }
        }
        if !r.stack.is_empty() {
            r.fault(
                Step::WellFormed,
                lines.line_at(text.len() as u64),
                "XML",
                "not well-formed XML: the text ends before its open elements are closed",
            );
        }
        if !r.root_seen {
            r.fault(
                Step::WellFormed,
                1,
                "XML",
                "not well-formed XML: no root element",
            );
        }
        if let Some((_, e)) = r.faults.first {
            return Err(e);
        }
        r.msg.last_line = lines.line_at(text.len() as u64);
        r.msg.build(&ctx)
    }
}
