//! Text from files that ends up in names, messages and other files.
//!
//! A name read from a file may hold characters that do harm where it is shown
//! or written again: a line break forges a line in a KVN message or a CSV
//! row, NUL truncates text in C readers, and an escape sequence (ESC, CSI)
//! re-programs the terminal it is printed on. Readers refuse or replace them
//! at load (with a finding that names the file, line and field), and the
//! shells clean every text from a file once more before printing it.

/// A character that may not appear in a name: Unicode control characters
/// (C0, DEL, C1: line breaks, NUL, ESC, CSI ...) and the bidirectional
/// formatting characters that can make text display in another order than it
/// reads (U+202A–U+202E, U+2066–U+2069).
pub fn is_unsafe_char(c: char) -> bool {
    c.is_control() || matches!(c, '\u{202A}'..='\u{202E}' | '\u{2066}'..='\u{2069}')
}

/// The first unsafe character of `text`, if any.
pub fn first_unsafe_char(text: &str) -> Option<char> {
    text.chars().find(|&c| is_unsafe_char(c))
}

/// `U+001B (escape)`-style name of an unsafe character, for messages.
pub fn describe_char(c: char) -> String {
    let what = match c {
        '\n' => "line feed",
        '\r' => "carriage return",
        '\t' => "tab",
        '\0' => "NUL",
        '\u{1b}' => "escape",
        '\u{7f}' => "delete",
        '\u{9b}' => "control sequence introducer",
        c if c.is_control() => "control character",
        _ => "bidirectional formatting character",
    };
    format!("U+{:04X} ({what})", c as u32)
}

/// `text` with every unsafe character replaced by `?`; the text itself when
/// it has none. Line breaks are kept only when `keep_newlines` is set (for a
/// multi-line message the program wrote itself).
pub fn clean(text: &str, keep_newlines: bool) -> std::borrow::Cow<'_, str> {
    let bad = |c: char| is_unsafe_char(c) && !(keep_newlines && c == '\n');
    if !text.chars().any(bad) {
        return std::borrow::Cow::Borrowed(text);
    }
    std::borrow::Cow::Owned(text.chars().map(|c| if bad(c) { '?' } else { c }).collect())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn cleans_controls_escapes_and_bidi_overrides() {
        assert_eq!(clean("ORMIVEL", false), "ORMIVEL");
        assert_eq!(clean("A\u{1b}[31mB\0C\nD", false), "A?[31mB?C?D");
        assert_eq!(clean("a\nb\u{9b}", true), "a\nb?");
        assert_eq!(clean("x\u{202E}y", false), "x?y");
        assert_eq!(describe_char('\u{1b}'), "U+001B (escape)");
        assert_eq!(first_unsafe_char("ok\tno"), Some('\t'));
    }
}
