//! Text from files made safe to show: control, C1, bidi-override and zero-width characters
//! from a library or stage can move the cursor, recolour or reorder a terminal, so they are
//! made visible as `<U+XXXX>` before they reach a screen or a report.

use std::borrow::Cow;

/// Whether a character must not reach a terminal as is.
#[must_use]
pub fn is_unsafe(c: char) -> bool {
    c.is_control()
        || matches!(c,
            '\u{200B}'..='\u{200F}' // zero-width space, joiners, LRM, RLM
            | '\u{202A}'..='\u{202E}' // bidi embeddings and overrides
            | '\u{2060}'..='\u{2064}' // word joiner, invisible operators
            | '\u{2066}'..='\u{2069}' // bidi isolates
            | '\u{FEFF}' // zero-width no-break space
            | '\u{061C}' // Arabic letter mark
        )
}

/// The text with every unsafe character shown as `<U+XXXX>`; borrowed when nothing changes.
#[must_use]
pub fn clean(text: &str) -> Cow<'_, str> {
    if !text.chars().any(is_unsafe) {
        return Cow::Borrowed(text);
    }
    let mut out = String::with_capacity(text.len() + 8);
    for c in text.chars() {
        if is_unsafe(c) {
            out.push_str(&format!("<U+{:04X}>", c as u32));
        } else {
            out.push(c);
        }
    }
    Cow::Owned(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn escapes_and_bidi_are_made_visible() {
        assert_eq!(clean("QX1"), "QX1");
        assert_eq!(clean("a\u{1b}[31mred"), "a<U+001B>[31mred");
        assert_eq!(
            clean("x\u{202E}y\u{200B}z\u{9b}"),
            "x<U+202E>y<U+200B>z<U+009B>"
        );
        assert_eq!(clean("line\nbreak\t"), "line<U+000A>break<U+0009>");
        assert_eq!(clean("µ Ω °C –"), "µ Ω °C –");
    }
}
