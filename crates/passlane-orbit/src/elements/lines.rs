//! Line splitting shared by the text readers.
//!
//! Works on bytes, never on a decoded copy of the whole input: a file with one
//! enormous line or with invalid UTF-8 costs one pass and no allocation here.

/// Iterates over `(1-based line number, line)` with the line terminator
/// (`\n`, `\r\n`) removed. A UTF-8 byte order mark at the start is skipped.
pub(super) fn lines(bytes: &[u8]) -> impl Iterator<Item = (usize, &[u8])> {
    let bytes = bytes.strip_prefix(&[0xEF, 0xBB, 0xBF]).unwrap_or(bytes);
    let mut rest = Some(bytes);
    let mut number = 0usize;
    std::iter::from_fn(move || {
        let text = rest?;
        number += 1;
        let (line, next) = match text.iter().position(|&b| b == b'\n') {
            Some(i) => (&text[..i], Some(&text[i + 1..])),
            None => (text, None),
        };
        rest = match next {
            Some(n) if !n.is_empty() => Some(n),
            _ => None,
        };
        if line.is_empty() && next.is_none() && text.is_empty() {
            return None;
        }
        Some((number, line.strip_suffix(b"\r").unwrap_or(line)))
    })
}

/// `line` without trailing blanks, tabs and carriage returns.
pub(super) fn trim_end(line: &[u8]) -> &[u8] {
    let end = line
        .iter()
        .rposition(|b| !matches!(b, b' ' | b'\t' | b'\r'))
        .map_or(0, |i| i + 1);
    &line[..end]
}

/// A short, printable excerpt of a line for messages (never the whole of a
/// giant line).
pub(super) fn excerpt(line: &[u8]) -> String {
    const MAX: usize = 40;
    let cut = &line[..line.len().min(MAX)];
    let mut s: String = String::from_utf8_lossy(cut)
        .chars()
        .map(|c| if c.is_control() { '?' } else { c })
        .collect();
    if line.len() > MAX {
        s.push('…');
    }
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn splits_lf_crlf_and_a_last_line_without_newline() {
        let got: Vec<_> = lines(b"a\r\nb\n\nc").collect();
        assert_eq!(got, vec![(1, &b"a"[..]), (2, b"b"), (3, b""), (4, b"c")]);
        let got: Vec<_> = lines(b"a\n").collect();
        assert_eq!(got, vec![(1, &b"a"[..])]);
        assert_eq!(lines(b"").count(), 0);
    }
}
