//! The XML CDM reader (a stream of tags) on its own: an XML message reads as
//! its KVN twin, and malformed, misordered or hostile messages are refused
//! with the line and the element at fault. (The reader is also checked
//! against the tree reader it replaced, in the crate's unit tests.)

#![allow(clippy::unwrap_used, clippy::expect_used, clippy::panic)]

use passlane_plan::cdm::{Cdm, CdmError};

const GOOD: &str = include_str!("fixtures/cdm/ormivel_vs_debris_99871.kvn");

fn xml_of(kvn: &str) -> String {
    let mut bytes = Vec::new();
    Cdm::parse(kvn, "twin.kvn")
        .unwrap()
        .write_xml(&mut bytes)
        .unwrap();
    String::from_utf8(bytes).unwrap()
}

fn refused(text: &str) -> CdmError {
    match Cdm::parse(text, "m.xml") {
        Ok(_) => panic!("read, expected an error:\n{text}"),
        Err(e) => e,
    }
}

/// The 1-based line of the first `needle` in `text`.
fn line_of(text: &str, needle: &str) -> usize {
    let at = text.find(needle).unwrap_or_else(|| panic!("{needle}"));
    text[..at].matches('\n').count() + 1
}

#[test]
fn an_xml_message_reads_as_its_kvn_twin() {
    let with_comments = GOOD
        .replacen("\nX ", "\nCOMMENT before the state\nX ", 1)
        .replacen(
            "\nCR_R ",
            "\nCOMMENT before the covariance, with <markup> & \"quotes\"\nCR_R ",
            1,
        );
    let no_optional = GOOD
        .lines()
        .filter(|l| !l.starts_with("MESSAGE_FOR") && !l.starts_with("RELATIVE_SPEED"))
        .collect::<Vec<_>>()
        .join("\n");
    assert_eq!(
        with_comments.matches("COMMENT").count(),
        GOOD.matches("COMMENT").count() + 2
    );
    for kvn in [GOOD.to_string(), with_comments, no_optional] {
        // The twins as the tool writes them (both round numbers alike).
        let message = Cdm::parse(&kvn, "twin.kvn").unwrap();
        let mut kvn = Vec::new();
        message.write_kvn(&mut kvn).unwrap();
        let from_kvn = Cdm::parse(&String::from_utf8(kvn).unwrap(), "twin.kvn").unwrap();
        let mut xml = Vec::new();
        message.write_xml(&mut xml).unwrap();
        let from_xml = Cdm::parse(&String::from_utf8(xml).unwrap(), "twin.xml").unwrap();
        assert_eq!(from_xml, from_kvn);
    }
    // Layout, CDATA, character references, XML comments and a namespace
    // prefix change nothing.
    let xml = xml_of(GOOD);
    let dressed = xml
        .replacen(
            "<ORIGINATOR>",
            "<ORIGINATOR>\n  <![CDATA[KESTREL]]> RIDGE&#32;",
            1,
        )
        .replacen(
            "KESTREL RIDGE SPACE LAB</ORIGINATOR>",
            "SPACE<!-- note --> LAB</ORIGINATOR>",
            1,
        )
        .replace("<header>", "<header>\r\n");
    assert_ne!(dressed, xml);
    let plain = Cdm::parse(&xml, "g.xml").unwrap();
    assert_eq!(Cdm::parse(&dressed, "d.xml").unwrap(), plain);
    let prefixed = xml
        .replace("</", "</n:")
        .replace('<', "<n:")
        .replace("<n:/", "</")
        .replace("<n:?xml", "<?xml")
        .replacen("<n:cdm ", "<n:cdm xmlns:n=\"urn:ccsds:schema:ndmxml\" ", 1);
    assert_eq!(Cdm::parse(&prefixed, "n.xml").unwrap(), plain);
}

#[test]
fn misplaced_repeated_and_unknown_elements_are_named_on_their_line() {
    let xml = xml_of(GOOD);
    // A keyword in another section's element.
    let bad = xml.replacen("<TCA>", "<ORIGINATOR>X</ORIGINATOR>\n      <TCA>", 1);
    let e = refused(&bad);
    assert_eq!(
        (e.line, e.keyword.as_str()),
        (line_of(&bad, "<ORIGINATOR>X"), "ORIGINATOR")
    );
    assert!(
        e.reason
            .contains("<relativeMetadataData> cannot hold <ORIGINATOR>"),
        "{e}"
    );
    // Logical blocks out of the schema's order.
    let state = &xml[xml.find("        <stateVector>").unwrap()..];
    let state = &state[..state.find("</stateVector>\n").unwrap() + "</stateVector>\n".len()];
    let swapped = xml.replacen(state, "", 1);
    let at = swapped.find("        </covarianceMatrix>\n").unwrap()
        + "        </covarianceMatrix>\n".len();
    let swapped = format!("{}{state}{}", &swapped[..at], &swapped[at..]);
    let e = refused(&swapped);
    assert_eq!(e.keyword, "stateVector", "{e}");
    assert_eq!(e.line, line_of(&swapped, "<stateVector>"), "{e}");
    assert!(e.reason.contains("in this order"), "{e}");
    // A keyword given twice in one block.
    let bad = xml.replacen(
        "<Y units=\"km\">",
        "<X units=\"km\">1</X>\n          <Y units=\"km\">",
        1,
    );
    let e = refused(&bad);
    assert_eq!(
        (e.line, e.keyword.as_str()),
        (line_of(&bad, "<X units=\"km\">1<"), "X")
    );
    assert!(e.reason.contains("repeated"), "{e}");
    // An element no CDM has.
    let bad = xml.replacen("<body>", "<body>\n    <sidecar/>", 1);
    let e = refused(&bad);
    assert_eq!(
        (e.line, e.keyword.as_str()),
        (line_of(&bad, "<sidecar/>"), "sidecar")
    );
    // A third segment: the count, on <body>'s line.
    let seg = &xml[xml.find("    <segment>").unwrap()..];
    let seg = &seg[..seg.find("</segment>\n").unwrap() + "</segment>\n".len()];
    let bad = xml.replacen("  </body>", &format!("{seg}  </body>"), 1);
    let e = refused(&bad);
    assert_eq!(
        (e.line, e.keyword.as_str()),
        (line_of(&bad, "<body>"), "segment")
    );
    assert!(e.reason.contains("holds 3 <segment>"), "{e}");
    // A value holding an element, a unit on a text keyword.
    let bad = xml.replacen("<ORIGINATOR>", "<ORIGINATOR><b/>", 1);
    let e = refused(&bad);
    assert_eq!(
        (e.line, e.keyword.as_str()),
        (line_of(&bad, "<ORIGINATOR>"), "ORIGINATOR")
    );
    let bad = xml.replacen("<ORIGINATOR>", "<ORIGINATOR units=\"m\">", 1);
    let e = refused(&bad);
    assert!(
        e.reason.contains("units attribute on a text keyword"),
        "{e}"
    );
    // A value the KVN reader would refuse too, on the XML's line.
    let bad = xml.replacen(
        "<MISS_DISTANCE units=\"m\">1000",
        "<MISS_DISTANCE units=\"m\">far",
        1,
    );
    let e = refused(&bad);
    assert_eq!(
        (e.line, e.keyword.as_str()),
        (line_of(&bad, "<MISS_DISTANCE"), "MISS_DISTANCE")
    );
}

#[test]
fn hostile_xml_is_refused_before_it_costs_anything() {
    let xml = xml_of(GOOD);
    // No DTD, so no entity of one: the billion-laughs shape is refused at
    // its first line, whatever it would have expanded to.
    let laughs = xml.replacen(
        "<cdm ",
        "<!DOCTYPE cdm [<!ENTITY a \"aaaaaaaaaa\"><!ENTITY b \"&a;&a;&a;&a;&a;&a;&a;&a;&a;&a;\">]>\n<cdm ",
        1,
    );
    let e = refused(&laughs);
    assert_eq!((e.line, e.keyword.as_str()), (2, "XML"), "{e}");
    let used = xml.replacen("<MESSAGE_ID>", "<MESSAGE_ID>&b;", 1);
    let e = refused(&used);
    assert_eq!(e.line, line_of(&used, "&b;"), "{e}");
    assert!(e.reason.contains("&b;"), "{e}");
    // Unclosed, mismatched, a second root, text after the root, a NUL.
    for (bad, at) in [
        (xml.replacen("</cdm>", "", 1), None),
        (
            xml.replacen("</header>", "</heading>", 1),
            Some("</heading>"),
        ),
        (format!("{xml}<cdm/>"), None),
        (format!("{xml}trailing"), None),
        (
            xml.replacen("<MESSAGE_ID>", "<MESSAGE_ID>\u{0}", 1),
            Some("\u{0}"),
        ),
    ] {
        let e = refused(&bad);
        assert_eq!(e.keyword, "XML", "{e}");
        assert!(e.reason.starts_with("not well-formed XML"), "{e}");
        if let Some(needle) = at {
            assert_eq!(e.line, line_of(&bad, needle), "{e}");
        }
    }
}

#[test]
fn deep_nesting_is_refused_at_the_limit_without_a_stack_of_it() {
    // A tree reader descended into nested groups by recursion; the stream
    // reader keeps a stack of open elements, which a limit keeps small.
    let xml = xml_of(GOOD);
    for (open, close) in [
        ("<a>", "</a>"),
        ("<relativeStateVector>", "</relativeStateVector>"),
    ] {
        let deep = format!("{}{}", open.repeat(100_000), close.repeat(100_000));
        let bad = xml.replacen("<TCA>", &format!("{deep}\n      <TCA>"), 1);
        let e = refused(&bad);
        assert!(e.reason.contains("nested more than 100 deep"), "{e}");
        assert_eq!(e.line, line_of(&bad, open), "{e}");
    }
    // Within the limit, nothing changes: a nested comment still reads.
    let nested = xml.replacen(
        "<header>",
        &format!(
            "<header><COMMENT>{}x{}</COMMENT>",
            "<a>".repeat(50),
            "</a>".repeat(50)
        ),
        1,
    );
    let c = Cdm::parse(&nested, "n.xml").unwrap();
    assert_eq!(c.header.comments[0], "");
}
