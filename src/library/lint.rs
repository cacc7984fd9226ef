//! The lint report of a library: what loaded, what was rejected and what looks wrong, as text
//! for people and as the binding JSON other tools read.

use super::{Diagnostic, Library};
use crate::text::clean;
use serde_json::{Value, json};

/// The binding JSON of `loadfit lint`:
/// `{"files", "rows", "loaded", "rejected": [{"file","line","column","text","message"}],
/// "warnings": [...], "kinds": {"npn": N, ...}}`.
#[must_use]
pub fn to_json(library: &Library) -> Value {
    let diagnostics = |list: &[Diagnostic]| -> Vec<Value> {
        list.iter()
            .map(|d| {
                json!({
                    "file": library.files.get(d.file as usize).map_or("", |s| s.as_str()),
                    "line": d.line,
                    "column": d.column,
                    "text": d.text,
                    "message": d.message,
                })
            })
            .collect()
    };
    let kinds: serde_json::Map<String, Value> = library
        .kind_counts()
        .into_iter()
        .map(|(kind, n)| (kind.name().to_string(), json!(n)))
        .collect();
    json!({
        "files": library.files,
        "rows": library.rows,
        "loaded": library.parts.len(),
        "rejected": diagnostics(&library.rejected),
        "warnings": diagnostics(&library.warnings),
        "kinds": kinds,
    })
}

/// The one-line summary: files, rows, loaded, rejected, warnings and kinds.
#[must_use]
pub fn summary(library: &Library) -> String {
    let kinds: Vec<String> = library
        .kind_counts()
        .into_iter()
        .map(|(kind, n)| format!("{kind} {n}"))
        .collect();
    let files = if library.files.len() == 1 {
        clean(&library.files[0]).into_owned()
    } else {
        format!("{} files", library.files.len())
    };
    let plural = |n: usize, word: &str| format!("{n} {word}{}", if n == 1 { "" } else { "s" });
    format!(
        "{files}: {}, {} loaded, {} rejected, {} ({})",
        plural(library.rows, "row"),
        library.parts.len(),
        library.rows_rejected,
        plural(library.warnings.len(), "warning"),
        if kinds.is_empty() {
            "no parts".to_string()
        } else {
            kinds.join(", ")
        }
    )
}

/// One line a problem, `file:line: column: message`, rejections first, then warnings.
#[must_use]
pub fn problem_lines(library: &Library) -> Vec<String> {
    let line = |d: &Diagnostic, prefix: &str| {
        let file = library
            .files
            .get(d.file as usize)
            .map_or("", |s| s.as_str());
        let column = if d.column.is_empty() {
            String::new()
        } else {
            format!("{}: ", d.column)
        };
        clean(&format!("{file}:{}: {column}{prefix}{}", d.line, d.message)).into_owned()
    };
    let mut lines: Vec<String> = library.rejected.iter().map(|d| line(d, "")).collect();
    lines.extend(library.warnings.iter().map(|d| line(d, "warning: ")));
    let stored = library.rejected.len() + library.warnings.len();
    let seen: usize = library.diagnostic_counts.iter().map(|c| c[0] + c[1]).sum();
    if seen > stored {
        lines.push(format!(
            "… and {} more problems not listed (over {} per file)",
            seen - stored,
            super::limits::MAX_DIAGNOSTICS_PER_FILE
        ));
    }
    lines
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn text_lines_follow_the_issue_example() {
        let mut library = Library::new();
        library
            .add_bytes("parts.csv", b"part,kind,vceo\nQ1,npn,40\nQ2,npn,4O V\n")
            .unwrap();
        let lines = problem_lines(&library);
        assert_eq!(
            lines[0],
            "parts.csv:3: vceo: \"4O V\" is not a number (unknown unit or prefix \"O V\"; expected a voltage)"
        );
        assert_eq!(
            summary(&library),
            "parts.csv: 2 rows, 1 loaded, 1 rejected, 0 warnings (npn 1)"
        );
        let doc = to_json(&library);
        assert_eq!(doc["rows"], 2);
        assert_eq!(doc["loaded"], 1);
        assert_eq!(doc["rejected"][0]["line"], 3);
        assert_eq!(doc["rejected"][0]["column"], "vceo");
        assert_eq!(doc["kinds"]["npn"], 1);
    }
}
