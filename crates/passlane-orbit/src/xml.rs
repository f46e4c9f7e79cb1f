//! What the streaming XML readers (OMM, OEM here; the CDM in the plan crate)
//! share: line numbers counted forwards as the reader advances, and the
//! entity references they accept.

use quick_xml::events::BytesRef;

/// Line numbers of byte offsets in a text, counted forwards from the last
/// offset asked about (offsets asked in increasing order cost one pass over
/// the text in all; an earlier offset counts again from the start).
pub struct ForwardLines<'t> {
    text: &'t [u8],
    /// (offset, line) last asked about.
    cursor: (usize, usize),
}

impl<'t> ForwardLines<'t> {
    pub fn new(text: &'t str) -> Self {
        ForwardLines {
            text: text.as_bytes(),
            cursor: (0, 1),
        }
    }

    /// The 1-based line holding byte `offset` (clamped to the text).
    pub fn line_at(&mut self, offset: u64) -> usize {
        let offset = usize::try_from(offset)
            .unwrap_or(usize::MAX)
            .min(self.text.len());
        let (from, line) = if offset >= self.cursor.0 {
            self.cursor
        } else {
            (0, 1)
        };
        let line = line
            + self.text[from..offset]
                .iter()
                .filter(|&&b| b == b'\n')
                .count();
        self.cursor = (offset, line);
        line
    }
}

/// A character reference (`&#48;`, `&#x30;`) or one of XML's five
/// predefined entities; `None` for anything else (a DTD entity is never
/// expanded, so no entity can multiply the input).
pub fn resolve_reference(r: &BytesRef<'_>) -> Option<String> {
    match r.resolve_char_ref() {
        Ok(Some(c)) => Some(c.to_string()),
        Ok(None) => {
            quick_xml::escape::resolve_predefined_entity(&r.xml10_content()).map(str::to_string)
        }
        Err(_) => None,
    }
}
