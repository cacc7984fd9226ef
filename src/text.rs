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

/// As [`clean`], but line ends (`\n`) are kept: for text of several lines bound for a terminal.
#[must_use]
pub fn clean_lines(text: &str) -> Cow<'_, str> {
    if !text.chars().any(|c| c != '\n' && is_unsafe(c)) {
        return Cow::Borrowed(text);
    }
    let mut out = String::with_capacity(text.len() + 8);
    for line in text.split_inclusive('\n') {
        match line.strip_suffix('\n') {
            Some(body) => {
                out.push_str(&clean(body));
                out.push('\n');
            }
            None => out.push_str(&clean(line)),
        }
    }
    Cow::Owned(out)
}

/// JSON text as `serde_json` writes it, with every unsafe character written as a `\uXXXX`
/// escape. `serde_json` escapes C0 controls itself but passes DEL, C1 controls (ECMA-48: CSI is
/// U+009B) and the bidi and zero-width characters through raw; outside strings its output is
/// ASCII (a line end only between values), so only string contents change, and the document
/// parses back to the same value.
#[must_use]
pub fn json_safe(json: &str) -> Cow<'_, str> {
    if !json.chars().any(|c| c != '\n' && is_unsafe(c)) {
        return Cow::Borrowed(json);
    }
    let mut out = String::with_capacity(json.len() + 16);
    for c in json.chars() {
        if c != '\n' && is_unsafe(c) {
            // Every unsafe character is in the Basic Multilingual Plane: one escape each.
            out.push_str(&format!("\\u{:04x}", c as u32));
        } else {
            out.push(c);
        }
    }
    Cow::Owned(out)
}

/// `value` as indented JSON, safe for a terminal ([`json_safe`]).
#[must_use]
pub fn to_json_pretty(value: &serde_json::Value) -> String {
    // A `Value` (string keys, finite numbers) always serialises; the empty fallback is never
    // taken.
    let text = serde_json::to_string_pretty(value).unwrap_or_default();
    json_safe(&text).into_owned()
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

    #[test]
    fn line_ends_survive_clean_lines() {
        assert_eq!(clean_lines("a\nb\n"), "a\nb\n");
        assert_eq!(clean_lines("a\u{1b}[2J\nb\t"), "a<U+001B>[2J\nb<U+0009>");
    }

    /// Unicode bidi controls and ECMA-48 C1 controls, raw in `serde_json` output, come out as
    /// `\u` escapes, and the document reads back the same.
    #[test]
    fn json_escapes_what_serde_json_leaves_raw() {
        let value = serde_json::json!({"part": "QX\u{202e}1\u{9b}2J\u{7f}", "n": [1, 2]});
        let text = to_json_pretty(&value);
        assert!(text.is_ascii(), "{text}");
        assert!(text.contains("QX\\u202e1\\u009b2J\\u007f"), "{text}");
        let back: serde_json::Value = serde_json::from_str(&text).unwrap_or_default();
        assert_eq!(back, value);
    }
}
