//! A fit rendered for people (text tables), for spreadsheets (CSV) and for tools (the binding
//! JSON of `loadfit fit --format json`).

use super::{Candidate, Check, CheckVerdict, Fit, RoleFit, Verdict};
use crate::export::csv_cell;
use crate::library::Library;
use crate::needs::Needs;
use crate::text::clean;
use crate::units::format_eng;
use serde_json::{Value, json};

/// A check in words: `vceo 40.0 V >= 16.5 V: pass (2.42×)`.
#[must_use]
pub fn check_line(check: &Check) -> String {
    let shown = |v: Option<f64>| {
        v.map_or("—".to_string(), |v| {
            if check.dim == crate::units::Dim::Number && v.fract() == 0.0 && v.abs() < 1e9 {
                format!("{v:.0}")
            } else {
                format_eng(v, check.dim)
            }
        })
    };
    let relation = match check.bound {
        crate::needs::Bound::Min => ">=",
        crate::needs::Bound::Max => "<=",
        crate::needs::Bound::Value => "≈",
    };
    let figures = if check.required.is_some() || check.rating.is_some() {
        format!(
            "{} {} {} {}: ",
            check.rating_name,
            shown(check.rating),
            relation,
            shown(check.required)
        )
    } else {
        format!("{}: ", check.rating_name)
    };
    let verdict = match (check.verdict, check.headroom, check.shortfall()) {
        (CheckVerdict::Short, _, Some(s)) if check.headroom.is_some() => {
            format!("short by {:.1} %", s * 100.0)
        }
        (CheckVerdict::Pass, Some(h), _) if h.is_finite() => format!("pass ({h:.2}×)"),
        (v, _, _) => v.name().to_string(),
    };
    let note = if check.note.is_empty() {
        String::new()
    } else {
        format!(" — {}", check.note)
    };
    format!(
        "{} {}  {figures}{verdict}{note}",
        check.verdict.glyph(),
        check.need
    )
}

/// The reason a candidate is where it is, in a few words: the failing or missing check, or the
/// limiting one for a fit.
#[must_use]
pub fn reason(candidate: &Candidate) -> String {
    match candidate.limiting() {
        None => String::new(),
        Some(check) => {
            let what = match (check.verdict, check.shortfall()) {
                (CheckVerdict::Short, Some(s)) if check.headroom.is_some() => {
                    format!("short {:.1} %", s * 100.0)
                }
                (CheckVerdict::Short, _) => "short".to_string(),
                (CheckVerdict::Unknown, _) => "unknown".to_string(),
                (CheckVerdict::Pass, _) => {
                    check.headroom.map_or(String::new(), |h| format!("{h:.2}×"))
                }
            };
            format!("{} {what}", check.need)
        }
    }
}

fn finite(v: Option<f64>) -> Value {
    match v {
        Some(v) if v.is_finite() => json!(v),
        _ => Value::Null,
    }
}

/// One check in the binding shape `{"need", "rating_name", "rating", "required", "unit",
/// "bound", "verdict", "headroom", "note"}`, shared by fit and swap so both read alike.
#[must_use]
pub fn check_json(check: &Check) -> Value {
    json!({
        "need": check.need,
        "rating_name": check.rating_name,
        "rating": finite(check.rating),
        "required": finite(check.required),
        "unit": check.dim.ascii(),
        "bound": check.bound.name(),
        "verdict": check.verdict.name(),
        "headroom": finite(check.headroom),
        "note": check.note,
    })
}

/// One candidate as JSON.
#[must_use]
pub fn candidate_json(library: &Library, candidate: &Candidate) -> Value {
    let part = &library.parts[candidate.part];
    json!({
        "part": part.number,
        "kind": part.kind.name(),
        "package": library.text(part.package),
        "pinout": library.text(part.pinout),
        "maker": library.text(part.maker),
        "price": finite(part.price.get()),
        "stock": part.stock,
        "status": part.status.name(),
        "verdict": candidate.verdict.name(),
        "rank": candidate.rank,
        "score": candidate.score,
        "headroom": finite(candidate.headroom),
        "reason": reason(candidate),
        "checks": candidate.checks.iter().map(check_json).collect::<Vec<_>>(),
        "source": {"file": library.file_name(part.source), "line": part.source.line},
    })
}

fn counts(role: &RoleFit) -> [usize; 4] {
    let mut counts = [0; 4];
    for c in &role.candidates {
        counts[c.verdict as usize] += 1;
    }
    counts
}

/// The binding JSON of `loadfit fit`: `{"stage", "roles": [{"role", "needs", "candidates"}],
/// "problems"}`; `limit` caps the candidates listed per role.
#[must_use]
pub fn to_json(needs: &Needs, library: &Library, fit: &Fit, limit: Option<usize>) -> Value {
    let roles: Vec<Value> = fit
        .roles
        .iter()
        .map(|role| {
            let [fits, near, unknown, short] = counts(role);
            json!({
                "role": role.role.name(),
                "needs": role.needs,
                "counts": {"fits": fits, "near": near, "unknown": unknown, "short": short},
                "candidates": role
                    .candidates
                    .iter()
                    .take(limit.unwrap_or(usize::MAX))
                    .map(|c| candidate_json(library, c))
                    .collect::<Vec<_>>(),
            })
        })
        .collect();
    json!({
        "stage": needs.stage,
        "roles": roles,
        "problems": problems_json(needs),
    })
}

/// The problems of the needs, in the binding shape `{"severity", "need", "message"}`.
#[must_use]
pub fn problems_json(needs: &Needs) -> Vec<Value> {
    needs
        .problems
        .iter()
        .map(|p| json!({"severity": p.severity.name(), "need": p.need, "message": p.message}))
        .collect()
}

/// A readable table per role, with the failing check of each non-fit named.
#[must_use]
pub fn to_text(needs: &Needs, library: &Library, fit: &Fit, limit: Option<usize>) -> String {
    let mut out = String::new();
    out.push_str(&format!("stage: {}\n", clean(&needs.stage)));
    for role in &fit.roles {
        let [fits, near, unknown, short] = counts(role);
        out.push_str(&format!(
            "\n{} — {} candidates: {fits} fit, {near} near, {unknown} unknown, {short} short\n",
            role.role.name(),
            role.candidates.len()
        ));
        for id in &role.needs {
            if let Some(need) = needs.get(id) {
                out.push_str(&format!(
                    "  need {} {} {}\n",
                    need.id,
                    need.bound.symbol(),
                    need.shown()
                ));
            }
        }
        out.push_str(&format!(
            "  {:>4}  {:<9} {:<16} {:<10} {:>8} {:>7} {:>7}  {}\n",
            "rank", "verdict", "part", "package", "headroom", "price", "stock", "reason"
        ));
        for c in role.candidates.iter().take(limit.unwrap_or(usize::MAX)) {
            let part = &library.parts[c.part];
            let verdict = format!("{} {}", c.verdict.glyph(), c.verdict.name());
            out.push_str(&format!(
                "  {:>4}  {:<9} {:<16} {:<10} {:>8} {:>7} {:>7}  {}\n",
                c.rank,
                verdict,
                clean(&part.number),
                clean(library.text(part.package)),
                c.headroom
                    .filter(|h| h.is_finite())
                    .map_or("—".to_string(), |h| format!("{h:.2}×")),
                part.price
                    .get()
                    .map_or("—".to_string(), |p| format!("{p:.2}")),
                part.stock.map_or("—".to_string(), |s| s.to_string()),
                clean(&reason(c)),
            ));
        }
        let shown = limit.unwrap_or(usize::MAX).min(role.candidates.len());
        if shown < role.candidates.len() {
            out.push_str(&format!(
                "  … {} more (raise --limit)\n",
                role.candidates.len() - shown
            ));
        }
    }
    if !needs.problems.is_empty() {
        out.push('\n');
        for p in &needs.problems {
            out.push_str(&format!("{}: {}\n", p.severity.name(), clean(&p.message)));
        }
    }
    out
}

/// CSV, one row a candidate, with spreadsheet-unsafe cells neutralised.
#[must_use]
pub fn to_csv(library: &Library, fit: &Fit, limit: Option<usize>) -> String {
    let mut out = String::from(
        "role,rank,part,kind,package,pinout,maker,verdict,score,headroom,price,stock,status,reason\n",
    );
    for role in &fit.roles {
        for c in role.candidates.iter().take(limit.unwrap_or(usize::MAX)) {
            let part = &library.parts[c.part];
            let cells = [
                role.role.name().to_string(),
                c.rank.to_string(),
                part.number.to_string(),
                part.kind.name().to_string(),
                library.text(part.package).to_string(),
                library.text(part.pinout).to_string(),
                library.text(part.maker).to_string(),
                c.verdict.name().to_string(),
                format!("{:.1}", c.score),
                c.headroom
                    .filter(|h| h.is_finite())
                    .map_or(String::new(), |h| format!("{h:.3}")),
                part.price.get().map_or(String::new(), |p| p.to_string()),
                part.stock.map_or(String::new(), |s| s.to_string()),
                part.status.name().to_string(),
                reason(c),
            ];
            let row: Vec<String> = cells.iter().map(|c| csv_cell(c)).collect();
            out.push_str(&row.join(","));
            out.push('\n');
        }
    }
    out
}

/// The verdict word with its glyph, for tables.
#[must_use]
pub fn verdict_label(verdict: Verdict) -> String {
    format!("{} {}", verdict.glyph(), verdict.name())
}
