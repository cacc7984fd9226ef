//! A swap rendered for people (text), for spreadsheets (CSV) and for tools (the binding JSON
//! of `loadfit swap --format json`).

use super::{Class, Substitute, Swap};
use crate::export::csv_cell;
use crate::fit::report::{check_json, check_line};
use crate::fit::{CheckVerdict, Role};
use crate::library::{Library, Part};
use crate::text::clean;
use serde_json::{Value, json};

fn finite(v: Option<f64>) -> Value {
    match v {
        Some(v) if v.is_finite() => json!(v),
        _ => Value::Null,
    }
}

fn original_json(library: &Library, part: &Part) -> Value {
    json!({
        "part": part.number,
        "kind": part.kind.name(),
        "package": library.text(part.package),
        "pinout": library.text(part.pinout),
        "maker": library.text(part.maker),
    })
}

/// One substitute as JSON: the binding keys `part`, `class`, `score`, `pin_changes`, `checks`
/// (fit's shape), `notes`, and what a reader needs beside them (kind, package, pinout, stock,
/// price, status).
#[must_use]
pub fn substitute_json(library: &Library, substitute: &Substitute) -> Value {
    let part = &library.parts[substitute.part];
    json!({
        "part": part.number,
        "class": substitute.class.name(),
        "score": finite(Some(substitute.score)),
        "pin_changes": substitute.pin_changes,
        "checks": substitute.checks.iter().map(check_json).collect::<Vec<_>>(),
        "notes": substitute.notes,
        "kind": part.kind.name(),
        "package": library.text(part.package),
        "pinout": library.text(part.pinout),
        "maker": library.text(part.maker),
        "price": finite(part.price.get()),
        "stock": part.stock,
        "status": part.status.name(),
    })
}

/// The binding JSON of `loadfit swap`: `{"original": {"part", "kind", "package", "pinout"},
/// "candidates": [{"part", "class", "score", "pin_changes", "checks", "notes"}]}`, with the
/// stage and role that were the bar (null without a stage) and the swap's own notes;
/// `limit` caps the candidates listed.
#[must_use]
pub fn to_json(library: &Library, swap: &Swap, limit: Option<usize>) -> Value {
    let original = &library.parts[swap.original];
    json!({
        "original": original_json(library, original),
        "stage": swap.stage,
        "role": swap.role.map(Role::name),
        "counts": {
            "drop-in": swap.count(Class::DropIn),
            "rework": swap.count(Class::Rework),
            "unsuitable": swap.count(Class::Unsuitable),
        },
        "candidates": swap
            .candidates
            .iter()
            .take(limit.unwrap_or(usize::MAX))
            .map(|c| substitute_json(library, c))
            .collect::<Vec<_>>(),
        "notes": swap.notes,
    })
}

fn pinout_shown(library: &Library, part: &Part) -> String {
    let text = library.text(part.pinout);
    if text.is_empty() {
        "—".to_string()
    } else {
        super::pins::dashed(text)
    }
}

/// A readable report: the original, then each class with its candidates, their pin changes,
/// notes and checks (every check of a usable candidate, the failing ones of the rest).
/// `picked` is what the user typed when it was not the exact part number.
#[must_use]
pub fn to_text(
    library: &Library,
    swap: &Swap,
    limit: Option<usize>,
    picked: Option<&str>,
) -> String {
    let original = &library.parts[swap.original];
    let mut out = format!(
        "original: {} {}  {}  pins {}  {}\n",
        clean(&original.number),
        original.kind,
        clean(library.text(original.package)),
        clean(&pinout_shown(library, original)),
        clean(library.text(original.maker)),
    );
    if let Some(text) = picked {
        out.push_str(&format!("  (picked for \"{}\")\n", clean(text)));
    }
    match (&swap.stage, swap.role) {
        (Some(stage), Some(role)) => out.push_str(&format!(
            "bar: the needs of stage \"{}\", role {}\n",
            clean(stage),
            role.name()
        )),
        _ => out.push_str("bar: the original's ratings\n"),
    }
    for note in &swap.notes {
        out.push_str(&format!("note: {}\n", clean(note)));
    }
    out.push_str(&format!(
        "{} candidates: {} drop-in, {} rework, {} unsuitable\n",
        swap.candidates.len(),
        swap.count(Class::DropIn),
        swap.count(Class::Rework),
        swap.count(Class::Unsuitable),
    ));
    let shown = limit.unwrap_or(usize::MAX).min(swap.candidates.len());
    let mut class = None;
    for c in swap.candidates.iter().take(shown) {
        if class != Some(c.class) {
            class = Some(c.class);
            out.push_str(&format!("\n{} {}\n", c.class.glyph(), c.class.name()));
        }
        let part = &library.parts[c.part];
        out.push_str(&format!(
            "  {:<16} {:<10} {:<9} {:<10} score {:.2}  stock {}  price {}{}\n",
            clean(&part.number),
            clean(library.text(part.package)),
            clean(&pinout_shown(library, part)),
            part.kind.name(),
            c.score,
            part.stock.map_or("—".to_string(), |s| s.to_string()),
            part.price
                .get()
                .map_or("—".to_string(), |p| format!("{p:.2}")),
            if part.status.name().is_empty() {
                String::new()
            } else {
                format!("  {}", part.status.name())
            },
        ));
        for change in &c.pin_changes {
            out.push_str(&format!("      pins: {}\n", clean(change)));
        }
        for note in &c.notes {
            out.push_str(&format!("      note: {}\n", clean(note)));
        }
        for check in c
            .checks
            .iter()
            .filter(|k| c.class != Class::Unsuitable || k.verdict != CheckVerdict::Pass)
        {
            out.push_str(&format!("      {}\n", clean(&check_line(check))));
        }
    }
    if shown < swap.candidates.len() {
        out.push_str(&format!(
            "\n… {} more (raise --limit)\n",
            swap.candidates.len() - shown
        ));
    }
    out
}

/// CSV, one row a candidate, with spreadsheet-unsafe cells neutralised.
#[must_use]
pub fn to_csv(library: &Library, swap: &Swap, limit: Option<usize>) -> String {
    let original = &library.parts[swap.original];
    let mut out = String::from(
        "original,class,part,kind,package,pinout,maker,score,pin_changes,failing,notes,price,stock,status\n",
    );
    for c in swap.candidates.iter().take(limit.unwrap_or(usize::MAX)) {
        let part = &library.parts[c.part];
        let failing: Vec<String> = c
            .failing()
            .map(|k| format!("{} {}", k.need, k.verdict.name()))
            .collect();
        let cells = [
            original.number.to_string(),
            c.class.name().to_string(),
            part.number.to_string(),
            part.kind.name().to_string(),
            library.text(part.package).to_string(),
            library.text(part.pinout).to_string(),
            library.text(part.maker).to_string(),
            format!("{:.3}", c.score),
            c.pin_changes.join("; "),
            failing.join("; "),
            c.notes.join("; "),
            part.price.get().map_or(String::new(), |p| p.to_string()),
            part.stock.map_or(String::new(), |s| s.to_string()),
            part.status.name().to_string(),
        ];
        let row: Vec<String> = cells.iter().map(|cell| csv_cell(cell)).collect();
        out.push_str(&row.join(","));
        out.push('\n');
    }
    out
}
