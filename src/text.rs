//! Text from a file shown on a terminal: control characters escaped, so a scheme name, an
//! unknown key or a file name cannot move the cursor, recolour or retitle the terminal.

use std::borrow::Cow;

/// True for characters a terminal acts on instead of showing: C0 and C1 controls (ESC, BEL,
/// CSI…), DEL, and the bidirectional-override and zero-width controls that reorder or hide text.
fn is_control(c: char) -> bool {
    c.is_control()
        || matches!(c, '\u{200B}'..='\u{200F}' | '\u{202A}'..='\u{202E}' | '\u{2066}'..='\u{2069}')
}

/// `s` with every control character written as a Rust-style escape (`\u{1b}`, `\n`, `\t`):
/// plain text is returned as it is.
pub fn escape_controls(s: &str) -> Cow<'_, str> {
    if !s.chars().any(is_control) {
        return Cow::Borrowed(s);
    }
    let mut out = String::with_capacity(s.len() + 8);
    for c in s.chars() {
        if is_control(c) {
            out.extend(c.escape_default());
        } else {
            out.push(c);
        }
    }
    Cow::Owned(out)
}

/// Like [`escape_controls`], but keeps line breaks (for multi-line messages).
pub fn escape_controls_keep_lines(s: &str) -> Cow<'_, str> {
    if !s.chars().any(|c| c != '\n' && is_control(c)) {
        return Cow::Borrowed(s);
    }
    Cow::Owned(
        s.split('\n')
            .map(|l| escape_controls(l).into_owned())
            .collect::<Vec<_>>()
            .join("\n"),
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn escapes_terminal_controls_and_leaves_text() {
        assert_eq!(
            escape_controls("Kessa Ridge – dépôt"),
            "Kessa Ridge – dépôt"
        );
        assert_eq!(escape_controls("a\u{1b}[31mb"), "a\\u{1b}[31mb");
        assert_eq!(escape_controls("a\u{7}b\u{9b}c"), "a\\u{7}b\\u{9b}c");
        assert_eq!(escape_controls("x\u{202e}y"), "x\\u{202e}y");
        assert_eq!(escape_controls("a\nb"), "a\\nb");
        assert_eq!(escape_controls_keep_lines("a\u{1b}\nb"), "a\\u{1b}\nb");
    }
}
