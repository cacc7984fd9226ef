//! The needs of a stage as text (one line a need, then the problems), as a Markdown review
//! report (every working line and source), and as the binding JSON of issue 3:
//! `{"stage", "needs": [{"id","role","value","unit","bound","working","source"}],
//! "problems": [{"severity","need","message"}]}`. Worst-case needs (issue 10) also carry
//! `"corner": {"supply": "min", "temperature": "max", ...}` and `"nominal"` (the nominal value,
//! SI, or null); nominal needs carry neither, so their JSON is unchanged.
//!
//! Pure functions returning strings or JSON values; printing is the caller's business. Text from
//! the stage file (the title, part numbers in messages) is cleaned of terminal control
//! characters first.

use super::{Bound, Corner, Need, Needs};
use crate::text::clean;
use serde_json::{Map, Value, json};

/// Width of the id column in text output: the longest binding id
/// (`sensor.fixed_resistor_exact`, 27 characters) plus a space.
const ID_WIDTH: usize = 28;

/// The needs as text: a title line, one line a need (id, bound, engineering value, the short
/// formula), then the problems, one a line.
#[must_use]
pub fn to_text(needs: &Needs) -> String {
    let worst = needs.is_worst_case();
    let mut out = format!(
        "needs of {}{}\n",
        clean(&needs.stage),
        if worst {
            " (worst case: each need at its worst corner)"
        } else {
            ""
        }
    );
    for need in &needs.needs {
        let relation = match need.value {
            Some(_) => need.bound.symbol(),
            None => " ",
        };
        let mut line = format!(
            "  {:<ID_WIDTH$} {:<2} {:>12}   {}",
            need.id,
            relation,
            need.shown(),
            need.formula
        );
        if let Some(corner) = &need.corner {
            line.push_str(&format!(
                "   [corner: {corner}; nominal {}]",
                need.nominal_shown()
            ));
        }
        out.push_str(line.trim_end());
        out.push('\n');
    }
    if needs.problems.is_empty() {
        out.push_str("no problems\n");
    } else {
        out.push_str("problems:\n");
        for p in &needs.problems {
            let about = p.need.map_or_else(String::new, |id| format!("{id}: "));
            out.push_str(&format!(
                "  {:<7} {about}{}\n",
                p.severity.name(),
                clean(&p.message)
            ));
        }
    }
    out
}

/// Markdown-escapes text from outside (the title, messages): control characters made visible,
/// and the characters that would start markup escaped.
fn md(text: &str) -> String {
    let cleaned = clean(text);
    let mut out = String::with_capacity(cleaned.len());
    for c in cleaned.chars() {
        if matches!(c, '\\' | '`' | '*' | '<' | '>' | '|' | '[' | ']' | '#') {
            out.push('\\');
        }
        out.push(c);
    }
    out
}

/// The relation shown in the Markdown report.
fn md_relation(bound: Bound) -> &'static str {
    match bound {
        Bound::Min => "≥",
        Bound::Max => "≤",
        Bound::Value => "=",
    }
}

/// The needs as a Markdown review report: problems first (a reviewer reads those before the
/// figures), then every need by role with its formula, every working line and its source.
#[must_use]
pub fn to_markdown(needs: &Needs) -> String {
    let mut out = format!("# Needs: {}\n\n", md(&needs.stage));
    out.push_str(
        "Computed by loadfit from the stage file. Each figure shows its working and the source \
         of its rule; \"min\" is a rating a part must at least have, \"max\" one it must not \
         exceed, \"=\" a computed figure.\n\n",
    );
    out.push_str("## Problems\n\n");
    if needs.problems.is_empty() {
        out.push_str("None.\n\n");
    } else {
        for p in &needs.problems {
            let about = p.need.map_or_else(String::new, |id| format!(" (`{id}`)"));
            out.push_str(&format!(
                "- **{}**{about}: {}\n",
                p.severity.name(),
                md(&p.message)
            ));
        }
        out.push('\n');
    }
    if needs.is_worst_case() {
        out.push_str(&corner_table(needs));
    }
    for role in needs.roles() {
        out.push_str(&format!("## {role}\n\n"));
        for need in needs.for_role(role) {
            let relation = if need.value.is_some() {
                md_relation(need.bound)
            } else {
                ""
            };
            out.push_str(&format!(
                "### `{}` {relation} {}\n\n",
                need.id,
                md(&need.shown())
            ));
            if !need.formula.is_empty() {
                out.push_str(&format!("Formula: {}\n\n", md(&need.formula)));
            }
            for line in &need.working {
                out.push_str(&format!("- {}\n", md(line)));
            }
            if !need.working.is_empty() {
                out.push('\n');
            }
            if !need.source.is_empty() {
                out.push_str(&format!("Source: {}\n\n", md(&need.source)));
            }
        }
    }
    out
}

/// The worst-case section of the Markdown report: each need, its nominal and worst values, and
/// the corner the worst is taken at.
fn corner_table(needs: &Needs) -> String {
    let mut out = String::from(
        "## Worst case\n\nEvery need at the corner of supply, temperature and tolerance where it \
         is hardest to meet; the picked resistors are the nominal design's, taken at their \
         tolerance.\n\n| need | nominal | worst | corner |\n|---|---|---|---|\n",
    );
    for need in &needs.needs {
        let relation = if need.value.is_some() {
            md_relation(need.bound)
        } else {
            ""
        };
        let corner = need
            .corner
            .as_ref()
            .map_or_else(String::new, Corner::to_string);
        let worst = format!("{relation} {}", md(&need.shown()));
        out.push_str(&format!(
            "| `{}` | {} | {} | {} |\n",
            need.id,
            md(&need.nominal_shown()),
            worst.trim_start(),
            md(&corner)
        ));
    }
    out.push('\n');
    out
}

/// A need's `corner` as a JSON object, factor to extreme.
fn corner_json(corner: &Corner) -> Value {
    let mut map = Map::new();
    for (factor, extreme) in corner.entries() {
        map.insert(factor.name().to_string(), Value::from(extreme.name()));
    }
    Value::Object(map)
}

/// One need as JSON: the binding keys, and `corner` and `nominal` for a worst-case need.
fn need_json(n: &Need) -> Value {
    let mut doc = json!({
        "id": n.id,
        "role": n.role,
        "value": n.value.filter(|v| v.is_finite()),
        "unit": n.unit.ascii(),
        "bound": n.bound.name(),
        "working": n.working,
        "source": n.source,
    });
    if let (Some(corner), Value::Object(map)) = (&n.corner, &mut doc) {
        map.insert("corner".to_string(), corner_json(corner));
        map.insert(
            "nominal".to_string(),
            n.nominal.filter(|v| v.is_finite()).into(),
        );
    }
    doc
}

/// The needs as the binding JSON document. `value` is in SI base units, `null` where the need
/// is not bounded; `unit` is one of `V` `A` `ohm` `W` `F` `H` `s` `J` `lux` or `""`.
#[must_use]
pub fn to_json(needs: &Needs) -> Value {
    json!({
        "stage": clean(&needs.stage),
        "needs": needs.needs.iter().map(need_json).collect::<Vec<_>>(),
        "problems": needs.problems.iter().map(|p| json!({
            "severity": p.severity.name(),
            "need": p.need,
            "message": p.message,
        })).collect::<Vec<_>>(),
    })
}

/// [`to_json`] written out, indented.
#[must_use]
pub fn to_json_string(needs: &Needs) -> String {
    // A `Value` with string keys and finite numbers always serialises; the empty fallback is
    // never taken.
    let text = serde_json::to_string_pretty(&to_json(needs)).unwrap_or_default();
    // C1 controls and bidi characters from the stage title or a part number as `\u` escapes.
    crate::text::json_safe(&text).into_owned()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::needs::{Need, Problem, Severity, Unit, ids};

    fn sample() -> Needs {
        let mut voltage = Need::new(ids::SWITCH_VOLTAGE, Bound::Min, Unit::Volt, Some(17.375));
        voltage.formula = "off_peak / voltage_derating".into();
        voltage.working = vec!["off_peak / voltage_derating = 13.9 V / 0.800 = 17.4 V".into()];
        voltage.source = "common practice".into();
        let peak = Need::new(ids::SWITCH_OFF_PEAK, Bound::Value, Unit::Volt, None);
        let gain = Need::new(ids::SWITCH_GAIN, Bound::Min, Unit::None, Some(25.0));
        let r = Need::new(
            ids::SWITCH_BASE_RESISTOR,
            Bound::Value,
            Unit::Ohm,
            Some(820.0),
        );
        Needs {
            stage: "Door \u{1b}[31mstrike".into(),
            needs: vec![voltage, peak, gain, r],
            problems: vec![Problem {
                severity: Severity::Caution,
                need: None,
                message: "mains *here*".into(),
            }],
        }
    }

    #[test]
    fn text_has_one_line_a_need_then_the_problems() {
        let text = to_text(&sample());
        let lines: Vec<&str> = text.lines().collect();
        assert!(
            lines[0].contains("<U+001B>"),
            "control characters are made visible"
        );
        assert!(
            lines[1].contains("switch.voltage")
                && lines[1].contains(">=")
                && lines[1].contains("17.4 V")
        );
        assert!(lines[1].ends_with("off_peak / voltage_derating"));
        assert!(lines[2].contains("not bounded"));
        assert!(lines[4].contains("820 Ω"));
        assert_eq!(lines[5], "problems:");
        assert!(lines[6].starts_with("  caution"));
    }

    #[test]
    fn markdown_escapes_outside_text_and_keeps_every_working_line() {
        let md = to_markdown(&sample());
        assert!(
            md.starts_with("# Needs: Door \\<U+001B\\>\\[31mstrike"),
            "{md}"
        );
        assert!(md.contains("- **caution**: mains \\*here\\*"));
        assert!(md.contains("### `switch.voltage` ≥ 17.4 V"));
        assert!(md.contains("- off_peak / voltage_derating = 13.9 V / 0.800 = 17.4 V"));
        assert!(md.contains("Source: common practice"));
    }

    /// A worst-case need carries `corner` and `nominal` in JSON, a corner in the text line and
    /// a row in the Markdown corner table; a nominal need carries none of them (issue 10).
    #[test]
    fn worst_case_adds_the_corner_and_the_nominal() {
        use crate::needs::worst::{Extreme, Factor};
        let nominal = sample();
        let doc = to_json(&nominal);
        assert!(doc["needs"][0].get("corner").is_none());
        assert!(doc["needs"][0].get("nominal").is_none());
        assert!(!to_markdown(&nominal).contains("## Worst case"));
        let mut worst = sample();
        worst.needs[0].value = Some(19.0);
        worst.needs[0].nominal = Some(17.375);
        worst.needs[0].corner = Some(
            Corner::none()
                .with(Factor::Supply, Extreme::Max)
                .with(Factor::Temperature, Extreme::Min)
                .with(Factor::Resistor, Extreme::PlusTol),
        );
        for need in &mut worst.needs[1..] {
            need.corner = Some(Corner::none());
        }
        let doc = to_json(&worst);
        assert_eq!(
            doc["needs"][0]["corner"],
            json!({"supply": "max", "temperature": "min", "resistor": "+tol"})
        );
        assert_eq!(doc["needs"][0]["nominal"], json!(17.375));
        assert_eq!(doc["needs"][1]["corner"], json!({}));
        assert!(doc["needs"][1]["nominal"].is_null());
        let md = to_markdown(&worst);
        assert!(md.contains("## Worst case"), "{md}");
        assert!(
            md.contains(
                "| `switch.voltage` | 17.4 V | ≥ 19.0 V | supply max, temperature min, resistor +tol |"
            ),
            "{md}"
        );
        assert!(
            md.contains("| `switch.off_peak` | not bounded | not bounded | none |"),
            "{md}"
        );
        let text = to_text(&worst);
        assert!(
            text.starts_with("needs of")
                && text
                    .lines()
                    .next()
                    .is_some_and(|l| l.contains("worst case"))
        );
        assert!(
            text.contains("[corner: supply max, temperature min, resistor +tol; nominal 17.4 V]"),
            "{text}"
        );
    }

    /// The binding shape of issue 3 (also checked by ../shared/contracts/check.py).
    #[test]
    fn json_keeps_the_binding_keys_and_units() {
        let doc = to_json(&sample());
        assert!(doc["stage"].is_string());
        let needs = doc["needs"].as_array().map_or(0, Vec::len);
        assert_eq!(needs, 4);
        let first = &doc["needs"][0];
        for key in ["id", "role", "value", "unit", "bound", "working", "source"] {
            assert!(first.get(key).is_some(), "{key}");
        }
        assert_eq!(first["role"], "switch");
        assert_eq!(first["unit"], "V");
        assert_eq!(first["bound"], "min");
        assert!(doc["needs"][1]["value"].is_null());
        assert_eq!(doc["needs"][2]["unit"], "");
        assert_eq!(doc["needs"][3]["unit"], "ohm");
        assert_eq!(doc["problems"][0]["severity"], "caution");
        assert!(doc["problems"][0]["need"].is_null());
        let text = to_json_string(&sample());
        let back: Value = serde_json::from_str(&text).unwrap_or(Value::Null);
        assert_eq!(back, doc);
    }
}
