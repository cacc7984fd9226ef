//! Writers for what leaves loadfit: the shortlist (CSV, Markdown review document, JSON), safe
//! for spreadsheets, written atomically and never over a library file.

use crate::fit::report::{check_line, reason};
use crate::fit::{Candidate, Fit, Role, Verdict};
use crate::library::Library;
use crate::needs::Needs;
use crate::stage::Stage;
use crate::text::clean;
use crate::units::format_eng;
use crate::write::{WriteError, write_atomic};
use serde_json::{Value, json};
use std::borrow::Cow;
use std::path::{Path, PathBuf};
use thiserror::Error;

/// A cell made safe for a terminal and a spreadsheet, and quoted for CSV. Control, C1, bidi and
/// zero-width characters are made visible first ([`clean`]: a CSV file is also read with `cat`);
/// then text beginning with `=` `+` `-` `@`, tab or carriage return, which a spreadsheet would
/// run as a formula, gets a leading `'` (OWASP guidance on CSV injection). Numbers stay numbers
/// (`-5` is left alone).
#[must_use]
pub fn csv_cell(text: &str) -> String {
    let cleaned = clean(text);
    let safe = neutralise(&cleaned);
    if safe.contains([',', '"', '\n', '\r']) {
        format!("\"{}\"", safe.replace('"', "\"\""))
    } else {
        safe.into_owned()
    }
}

/// The text with a leading `'` when a spreadsheet would read it as a formula. Only a plain
/// decimal number is spared (`-5`, `+1.5e3`); `-inf` or `-nan`, which Rust reads as numbers, are
/// formulas to a spreadsheet and are prefixed too.
#[must_use]
pub fn neutralise(text: &str) -> Cow<'_, str> {
    let risky = text.starts_with(['=', '+', '-', '@', '\t', '\r']);
    let trimmed = text.trim();
    let number = trimmed
        .bytes()
        .all(|b| b.is_ascii_digit() || matches!(b, b'.' | b'+' | b'-' | b'e' | b'E'))
        && trimmed.parse::<f64>().is_ok_and(f64::is_finite);
    if risky && !number {
        Cow::Owned(format!("'{text}"))
    } else {
        Cow::Borrowed(text)
    }
}

/// The parts kept per role: the first is the pick, the rest alternates.
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub struct Shortlist {
    /// Per role, indices into [`Library::parts`], pick first.
    pub roles: Vec<(Role, Vec<usize>)>,
}

impl Shortlist {
    /// The best fit of each role and up to `alternates` more fits.
    #[must_use]
    pub fn from_fit(fit: &Fit, alternates: usize) -> Shortlist {
        Shortlist {
            roles: fit
                .roles
                .iter()
                .map(|role| {
                    let picks = role
                        .candidates
                        .iter()
                        .filter(|c| c.verdict == Verdict::Fits)
                        .take(alternates + 1)
                        .map(|c| c.part)
                        .collect();
                    (role.role, picks)
                })
                .collect(),
        }
    }

    /// Adds the part to the role, or removes it if it is there. Returns whether it is now kept.
    pub fn toggle(&mut self, role: Role, part: usize) -> bool {
        let index = match self.roles.iter().position(|(r, _)| *r == role) {
            Some(i) => i,
            None => {
                self.roles.push((role, Vec::new()));
                self.roles.sort_by_key(|(r, _)| *r);
                self.roles.iter().position(|(r, _)| *r == role).unwrap_or(0)
            }
        };
        let parts = &mut self.roles[index].1;
        if let Some(at) = parts.iter().position(|&p| p == part) {
            parts.remove(at);
            false
        } else {
            parts.push(part);
            true
        }
    }

    /// Whether the part is kept for the role.
    #[must_use]
    pub fn contains(&self, role: Role, part: usize) -> bool {
        self.roles
            .iter()
            .any(|(r, parts)| *r == role && parts.contains(&part))
    }

    /// How many parts are kept in all.
    #[must_use]
    pub fn len(&self) -> usize {
        self.roles.iter().map(|(_, p)| p.len()).sum()
    }

    /// Whether nothing is kept.
    #[must_use]
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }
}

/// The format of an export, from the file's extension.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Format {
    /// Comma-separated values.
    Csv,
    /// A Markdown review document.
    Markdown,
    /// JSON.
    Json,
}

/// Why an export was not written.
#[derive(Debug, Error)]
pub enum ExportError {
    /// The extension names no format.
    #[error("{0}: unknown format; name the file .csv, .md or .json")]
    UnknownFormat(PathBuf),
    /// The target is one of the library's files.
    #[error("{0}: is a library file; loadfit never writes over a library")]
    LibraryFile(PathBuf),
    /// The write failed.
    #[error(transparent)]
    Write(#[from] WriteError),
}

impl Format {
    /// The format named by a path's extension.
    ///
    /// # Errors
    /// [`ExportError::UnknownFormat`] for any other extension.
    pub fn from_path(path: &Path) -> Result<Format, ExportError> {
        match path
            .extension()
            .and_then(|e| e.to_str())
            .map(str::to_ascii_lowercase)
            .as_deref()
        {
            Some("csv") => Ok(Format::Csv),
            Some("md" | "markdown") => Ok(Format::Markdown),
            Some("json") => Ok(Format::Json),
            _ => Err(ExportError::UnknownFormat(path.to_path_buf())),
        }
    }
}

/// Everything an export reads.
pub struct Context<'a> {
    /// The stage.
    pub stage: &'a Stage,
    /// Its needs.
    pub needs: &'a Needs,
    /// The library.
    pub library: &'a Library,
    /// The evaluated fit (for each kept part's verdict and checks).
    pub fit: &'a Fit,
}

impl Context<'_> {
    /// The kept part's candidate with its checks (a large library's ranking keeps them only
    /// for its first places).
    fn candidate(&self, role: Role, part: usize) -> Option<Candidate> {
        let found = self
            .fit
            .role(role)?
            .candidates
            .iter()
            .find(|c| c.part == part)?;
        Some(crate::fit::with_checks(
            self.stage,
            self.needs,
            self.library,
            role,
            found,
        ))
    }
}

/// The need that limits a kept part, and its headroom.
fn limiting(candidate: Option<&Candidate>) -> (&'static str, Option<f64>) {
    match candidate.and_then(Candidate::limiting) {
        Some(check) => (check.need, check.headroom.filter(|h| h.is_finite())),
        None => ("", None),
    }
}

/// The shortlist as CSV: one row a kept part, then the stage's needs.
#[must_use]
pub fn to_csv(context: &Context<'_>, shortlist: &Shortlist) -> String {
    let mut out = String::from(
        "role,choice,part,kind,package,pinout,maker,price,stock,status,verdict,headroom,limiting_need\n",
    );
    for (role, parts) in &shortlist.roles {
        for (i, &index) in parts.iter().enumerate() {
            let Some(part) = context.library.parts.get(index) else {
                continue;
            };
            let candidate = context.candidate(*role, index);
            let (need, headroom) = limiting(candidate.as_ref());
            let cells = [
                role.name().to_string(),
                if i == 0 {
                    "pick".to_string()
                } else {
                    format!("alternate {i}")
                },
                part.number.to_string(),
                part.kind.name().to_string(),
                context.library.text(part.package).to_string(),
                context.library.text(part.pinout).to_string(),
                context.library.text(part.maker).to_string(),
                part.price.get().map_or(String::new(), |p| p.to_string()),
                part.stock.map_or(String::new(), |s| s.to_string()),
                part.status.name().to_string(),
                candidate.map_or(String::new(), |c| c.verdict.name().to_string()),
                headroom.map_or(String::new(), |h| format!("{h:.3}")),
                need.to_string(),
            ];
            let row: Vec<String> = cells.iter().map(|c| csv_cell(c)).collect();
            out.push_str(&row.join(","));
            out.push('\n');
        }
    }
    out.push_str("\nneed,bound,value,unit\n");
    for need in &context.needs.needs {
        let cells = [
            need.id.to_string(),
            need.bound.name().to_string(),
            need.value.map_or(String::new(), |v| format!("{v:e}")),
            need.unit.ascii().to_string(),
        ];
        let row: Vec<String> = cells.iter().map(|c| csv_cell(c)).collect();
        out.push_str(&row.join(","));
        out.push('\n');
    }
    out
}

/// The shortlist as JSON: `{"stage", "roles": [{"role", "parts": [...]}], "needs", "problems"}`.
#[must_use]
pub fn to_json(context: &Context<'_>, shortlist: &Shortlist) -> Value {
    let roles: Vec<Value> = shortlist
        .roles
        .iter()
        .map(|(role, parts)| {
            let parts: Vec<Value> = parts
                .iter()
                .filter_map(|&index| {
                    let part = context.library.parts.get(index)?;
                    let candidate = context.candidate(*role, index);
                    let (need, headroom) = limiting(candidate.as_ref());
                    Some(json!({
                        "part": part.number,
                        "kind": part.kind.name(),
                        "package": context.library.text(part.package),
                        "maker": context.library.text(part.maker),
                        "price": part.price.get(),
                        "stock": part.stock,
                        "status": part.status.name(),
                        "verdict": candidate.map(|c| c.verdict.name()),
                        "headroom": headroom,
                        "limiting_need": need,
                    }))
                })
                .collect();
            json!({"role": role.name(), "parts": parts})
        })
        .collect();
    json!({
        "stage": context.needs.stage,
        "roles": roles,
        "needs": context.needs.needs.iter().map(|n| json!({
            "id": n.id, "bound": n.bound.name(), "value": n.value, "unit": n.unit.ascii(),
        })).collect::<Vec<_>>(),
        "problems": crate::fit::report::problems_json(context.needs),
    })
}

/// Markdown-safe text: cleaned of control characters and with table pipes escaped.
fn md(text: &str) -> String {
    clean(text).replace('|', "\\|")
}

/// The shortlist as a review document: stage inputs, needs with working, picks, alternates,
/// problems and cautions.
#[must_use]
pub fn to_markdown(context: &Context<'_>, shortlist: &Shortlist) -> String {
    let stage = context.stage;
    let mut out = format!("# Shortlist: {}\n\n", md(&context.needs.stage));
    out.push_str("## Stage\n\n");
    for line in stage_lines(stage) {
        out.push_str(&format!("- {}\n", md(&line)));
    }
    let cautions: Vec<_> = context
        .needs
        .problems
        .iter()
        .filter(|p| p.severity == crate::needs::Severity::Caution)
        .collect();
    if !cautions.is_empty() {
        out.push_str("\n> **Caution.** ");
        for c in cautions {
            out.push_str(&md(&c.message));
            out.push(' ');
        }
        out.push('\n');
    }
    out.push_str("\n## Picks and alternates\n\n");
    for (role, parts) in &shortlist.roles {
        out.push_str(&format!("### {}\n\n", role.name()));
        if parts.is_empty() {
            out.push_str("No part kept for this role.\n\n");
            continue;
        }
        out.push_str("| choice | part | maker | package | price | stock | status | verdict | limiting |\n|---|---|---|---|---|---|---|---|---|\n");
        for (i, &index) in parts.iter().enumerate() {
            let Some(part) = context.library.parts.get(index) else {
                continue;
            };
            let candidate = context.candidate(*role, index);
            out.push_str(&format!(
                "| {} | {} | {} | {} | {} | {} | {} | {} | {} |\n",
                if i == 0 {
                    "pick".to_string()
                } else {
                    format!("alternate {i}")
                },
                md(&part.number),
                md(context.library.text(part.maker)),
                md(context.library.text(part.package)),
                part.price
                    .get()
                    .map_or("—".to_string(), |p| format!("{p:.2}")),
                part.stock.map_or("—".to_string(), |s| s.to_string()),
                part.status.name(),
                candidate.as_ref().map_or("—", |c| c.verdict.name()),
                md(&candidate.as_ref().map(reason).unwrap_or_default()),
            ));
        }
        out.push('\n');
        for &index in parts {
            let (Some(part), Some(candidate)) = (
                context.library.parts.get(index),
                context.candidate(*role, index),
            ) else {
                continue;
            };
            out.push_str(&format!("Checks of {}:\n\n", md(&part.number)));
            for check in &candidate.checks {
                out.push_str(&format!("- {}\n", md(&check_line(check))));
            }
            out.push('\n');
        }
    }
    out.push_str("## Needs\n\n");
    for need in &context.needs.needs {
        out.push_str(&format!(
            "- **{}** {} {}{}\n",
            need.id,
            need.bound.symbol(),
            need.shown(),
            if need.source.is_empty() {
                String::new()
            } else {
                format!(" — {}", md(&need.source))
            }
        ));
        for line in &need.working {
            out.push_str(&format!("  - {}\n", md(line)));
        }
    }
    if !context.needs.problems.is_empty() {
        out.push_str("\n## Problems\n\n");
        for p in &context.needs.problems {
            out.push_str(&format!("- {}: {}\n", p.severity.name(), md(&p.message)));
        }
    }
    out
}

/// The stage's inputs in words, one line each, for the review document.
#[must_use]
pub fn stage_lines(stage: &Stage) -> Vec<String> {
    let v = |x: f64| format_eng(x, crate::units::Dim::Volt);
    let mut lines = vec![
        format!(
            "supply {} ± {:.1} % (so {} to {})",
            stage.supply.volts,
            stage.supply.tolerance * 100.0,
            v(stage.supply.min().value()),
            v(stage.supply.max().value())
        ),
        format!(
            "drive: {} at {}{}",
            stage.drive.source,
            stage.drive.high,
            stage
                .drive
                .max_current
                .map_or(String::new(), |i| format!(", at most {i}"))
        ),
    ];
    let load = &stage.load;
    let mut parts = vec![format!("load: {}", load.kind.name())];
    if let Some(r) = load.resistance {
        parts.push(format!("{r}"));
    }
    if let Some(l) = load.inductance {
        parts.push(format!("{l}"));
    }
    if let Some(c) = load.capacitance {
        parts.push(format!("{c}"));
    }
    if let (Some(vf), Some(i)) = (load.led_vf, load.led_current) {
        parts.push(format!("LED {vf} at {i}"));
    }
    if let Some(relay) = &load.relay {
        parts.push(format!("relay {relay}"));
    }
    lines.push(parts.join(", "));
    if let Some(c) = &stage.contacts {
        lines.push(format!(
            "contacts: {} {} {}, {} load, {} insulation, overvoltage category {}",
            c.volts,
            if c.ac { "ac" } else { "dc" },
            c.amps,
            c.kind.name(),
            c.insulation.name(),
            c.overvoltage_category
        ));
    }
    lines.push(format!(
        "switch: {}, forced beta {}; clamp: {}{}",
        stage.switch.kind.name(),
        stage.switch.forced_beta,
        stage.clamp.kind.name(),
        stage
            .clamp
            .zener_volts
            .map_or(String::new(), |z| format!(" with {z} zener"))
    ));
    if let Some(s) = &stage.sensor {
        lines.push(format!(
            "sensor: {}-activated at {}, threshold {}",
            s.activate.name(),
            s.on_lux,
            s.threshold
        ));
    }
    let r = &stage.rules;
    lines.push(format!(
        "rules: derating V {} I {} P {}, ambient {}, {}, quantity {}{}{}",
        r.voltage_derating,
        r.current_derating,
        r.power_derating,
        r.ambient,
        r.eseries.name(),
        r.quantity,
        if r.allow_obsolete {
            ", obsolete allowed"
        } else {
            ""
        },
        if r.require_rohs {
            ", RoHS required"
        } else {
            ""
        }
    ));
    lines
}

/// Writes the shortlist to `path` in the format its extension names, atomically, refusing to
/// write over any of `library_files`.
///
/// # Errors
/// [`ExportError`] for an unknown extension, a library file as target, an existing file when
/// `overwrite` is false, or a failed write.
pub fn write_shortlist(
    path: &Path,
    context: &Context<'_>,
    shortlist: &Shortlist,
    library_files: &[PathBuf],
    overwrite: bool,
) -> Result<(), ExportError> {
    let format = Format::from_path(path)?;
    if is_library_file(path, library_files) {
        return Err(ExportError::LibraryFile(path.to_path_buf()));
    }
    let text = match format {
        Format::Csv => to_csv(context, shortlist),
        Format::Markdown => to_markdown(context, shortlist),
        Format::Json => crate::text::to_json_pretty(&to_json(context, shortlist)) + "\n",
    };
    write_atomic(path, text.as_bytes(), overwrite)?;
    Ok(())
}

/// The files a list of library paths stands for: a folder protects every file in it.
#[must_use]
pub fn library_files(paths: &[PathBuf]) -> Vec<PathBuf> {
    let mut files = Vec::new();
    for path in paths {
        if path.is_dir() {
            if let Ok(entries) = std::fs::read_dir(path) {
                files.extend(entries.filter_map(Result::ok).map(|e| e.path()));
            }
        } else {
            files.push(path.clone());
        }
    }
    files
}

/// Whether `path` is (or, by its canonical path, resolves to) one of the library files.
#[must_use]
pub fn is_library_file(path: &Path, library_files: &[PathBuf]) -> bool {
    let target = std::fs::canonicalize(path).ok();
    library_files.iter().any(|file| {
        file == path || (target.is_some() && std::fs::canonicalize(file).ok() == target)
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// OWASP, CSV injection: cells starting with = + - @ tab or CR are prefixed; numbers stay.
    #[test]
    fn formulas_are_neutralised_numbers_are_not() {
        assert_eq!(csv_cell("=HYPERLINK(\"x\")"), "\"'=HYPERLINK(\"\"x\"\")\"");
        assert_eq!(csv_cell("+cmd"), "'+cmd");
        assert_eq!(csv_cell("@SUM(A1)"), "'@SUM(A1)");
        assert_eq!(neutralise("\tx"), "'\tx");
        assert_eq!(neutralise("\rx"), "'\rx");
        assert_eq!(csv_cell("-5"), "-5");
        assert_eq!(csv_cell("-1.5e3"), "-1.5e3");
        assert_eq!(csv_cell("-x"), "'-x");
        assert_eq!(csv_cell("-inf"), "'-inf");
        assert_eq!(csv_cell("+NaN"), "'+NaN");
        assert_eq!(csv_cell("plain"), "plain");
        assert_eq!(csv_cell("a,b"), "\"a,b\"");
    }

    /// ECMA-48 control sequences and Unicode bidi controls are made visible in CSV cells, so
    /// neither `cat` nor a spreadsheet acts on them; a tab or CR made visible no longer leads.
    #[test]
    fn control_characters_are_made_visible_in_cells() {
        assert_eq!(csv_cell("QX\u{1b}[2J1"), "QX<U+001B>[2J1");
        assert_eq!(csv_cell("\u{202e}QX1"), "<U+202E>QX1");
        assert_eq!(csv_cell("\tx"), "<U+0009>x");
        assert_eq!(csv_cell("=A1\u{9b}"), "'=A1<U+009B>");
    }

    #[test]
    fn formats_from_extensions() {
        assert_eq!(Format::from_path(Path::new("a.CSV")).unwrap(), Format::Csv);
        assert_eq!(
            Format::from_path(Path::new("a.md")).unwrap(),
            Format::Markdown
        );
        assert_eq!(
            Format::from_path(Path::new("a.json")).unwrap(),
            Format::Json
        );
        assert!(Format::from_path(Path::new("a.xlsx")).is_err());
    }

    #[test]
    fn toggle_adds_and_removes() {
        let mut list = Shortlist::default();
        assert!(list.toggle(Role::Clamp, 3));
        assert!(list.toggle(Role::Switch, 1));
        assert_eq!(list.roles[0].0, Role::Switch);
        assert!(list.contains(Role::Clamp, 3));
        assert!(!list.toggle(Role::Clamp, 3));
        assert_eq!(list.len(), 1);
    }
}
