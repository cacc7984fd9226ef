//! A trace for tools (the binding JSON of `loadfit trace --format json`), for spreadsheets
//! (CSV: time, voltage, current) and for people (a few lines of text).
//!
//! The JSON keys `peak_voltage` (V), `clamp_energy` (J), `release_time`, `rise_time`,
//! `settle_time` (s; `null` where they do not apply) and `points` (`[[t, v, i], ...]` in time
//! order) are a binding contract (issue 9); the other keys are informative.

use super::{OUTPUT_POINTS, Trace, decimate};
use crate::text::clean;
use crate::units::{Dim, format_eng};
use serde_json::{Value, json};
use std::fmt::Write;

/// The trace as the binding JSON document, its points [`decimate`]d to at most `max_points`
/// (peaks kept).
#[must_use]
pub fn to_json(trace: &Trace, max_points: usize) -> Value {
    let points: Vec<Value> = decimate(&trace.points, max_points)
        .into_iter()
        .map(|p| json!([p[0], p[1], p[2]]))
        .collect();
    let load_voltage: Vec<Value> = decimate(&trace.load_voltage, max_points)
        .into_iter()
        .map(|p| json!([p[0], p[1]]))
        .collect();
    json!({
        "stage": clean(&trace.stage),
        "part": trace.part.as_deref().map(clean),
        "role": trace.role.map(|r| r.name()),
        "load": trace.load.name(),
        "supply": trace.supply,
        "peak_voltage": trace.peak_voltage,
        "peak_time": trace.peak_time,
        "clamp_energy": trace.clamp_energy,
        "switch_energy": trace.switch_energy,
        "release_time": trace.release_time,
        "release_current": trace.release_current,
        "on_current": trace.on_current,
        "rise_time": trace.rise_time,
        "settle_time": trace.settle_time,
        "switch_on": trace.switch_on,
        "switch_off": trace.switch_off,
        "rating": trace.rating.map(|r| json!({"name": r.name, "value": r.volts, "unit": "V"})),
        "model": trace.model.iter().map(|m| clean(m)).collect::<Vec<_>>(),
        "problems": trace.problems.iter().map(|p| json!({
            "severity": p.severity.name(),
            "need": p.need,
            "message": clean(&p.message),
        })).collect::<Vec<_>>(),
        "steps": trace.steps,
        "points": points,
        "load_voltage": load_voltage,
    })
}

/// [`to_json`] with [`OUTPUT_POINTS`], pretty-printed.
#[must_use]
pub fn to_json_string(trace: &Trace) -> String {
    // A `Value` built by `json!` always serialises (no non-string keys, no failing types).
    crate::text::to_json_pretty(&to_json(trace, OUTPUT_POINTS))
}

/// Every point as CSV, one row a solver point: `time_s,voltage_V,current_A`, and for an R-C
/// load a fourth column `load_voltage_V`. Numbers in exponent form with eight figures, which
/// every spreadsheet reads.
#[must_use]
pub fn to_csv(trace: &Trace) -> String {
    let rc = !trace.load_voltage.is_empty();
    let mut out = String::with_capacity(trace.points.len() * 48 + 64);
    out.push_str("time_s,voltage_V,current_A");
    if rc {
        out.push_str(",load_voltage_V");
    }
    out.push('\n');
    for (k, p) in trace.points.iter().enumerate() {
        // Writing to a String cannot fail.
        let _ = write!(out, "{:.7e},{:.7e},{:.7e}", p[0], p[1], p[2]);
        if rc {
            let _ = write!(
                out,
                ",{:.7e}",
                trace.load_voltage.get(k).map_or(f64::NAN, |q| q[1])
            );
        }
        out.push('\n');
    }
    out
}

/// The figures as text: one line each, then what was modelled and the problems.
#[must_use]
pub fn to_text(trace: &Trace) -> String {
    let mut out = format!("trace of {}", clean(&trace.stage));
    if let (Some(part), Some(role)) = (&trace.part, trace.role) {
        let _ = write!(out, " with {} as the {}", clean(part), role.name());
    }
    out.push('\n');
    let line = |out: &mut String, name: &str, value: Option<f64>, dim: Dim, extra: String| {
        let shown = value.map_or("—".to_string(), |v| format_eng(v, dim));
        let _ = writeln!(out, "  {name:<16} {shown:>10}{extra}");
    };
    line(
        &mut out,
        "on current",
        Some(trace.on_current),
        Dim::Amp,
        String::new(),
    );
    let peak_extra = match (trace.peak_time, trace.rating) {
        (Some(t), Some(r)) => format!(
            "   at {}; {} {}",
            format_eng(t, Dim::Second),
            r.name,
            format_eng(r.volts, Dim::Volt)
        ),
        (Some(t), None) => format!("   at {}", format_eng(t, Dim::Second)),
        _ => String::new(),
    };
    line(
        &mut out,
        "peak voltage",
        trace.peak_voltage,
        Dim::Volt,
        peak_extra,
    );
    if trace.load.is_coil() {
        line(
            &mut out,
            "clamp energy",
            trace.clamp_energy,
            Dim::Joule,
            String::new(),
        );
        line(
            &mut out,
            "switch energy",
            trace.switch_energy,
            Dim::Joule,
            String::new(),
        );
        let release_extra = trace.release_current.map_or(String::new(), |i| {
            format!("   to {}", format_eng(i, Dim::Amp))
        });
        line(
            &mut out,
            "release time",
            trace.release_time,
            Dim::Second,
            release_extra,
        );
    }
    if !trace.load_voltage.is_empty() {
        line(
            &mut out,
            "rise time",
            trace.rise_time,
            Dim::Second,
            "   10-90 % of the load voltage".to_string(),
        );
        line(
            &mut out,
            "settle time",
            trace.settle_time,
            Dim::Second,
            "   within 0.67 % (5 τ)".to_string(),
        );
    }
    let _ = writeln!(
        out,
        "  {} points ({} steps, {} retried)",
        trace.points.len(),
        trace.steps,
        trace.rejected
    );
    out.push_str("model:\n");
    for m in &trace.model {
        let _ = writeln!(out, "  {}", clean(m));
    }
    if trace.problems.is_empty() {
        out.push_str("no problems\n");
    } else {
        out.push_str("problems:\n");
        for p in &trace.problems {
            let _ = writeln!(out, "  {:<7} {}", p.severity.name(), clean(&p.message));
        }
    }
    out
}
