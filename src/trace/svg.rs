//! A trace drawn as an SVG document a person can paste into a review: the voltage across the
//! switch above, the load current below on the same time axis, each with a grid and labelled
//! ticks in engineering notation, the part's voltage rating as a dashed line, markers at the
//! peak and at the release (at the rise and settling of an R-C load), and below the plot what
//! was modelled and the problems found.
//!
//! Plain SVG 1.1 with no scripts, fonts by generic family, so it renders the same in a
//! browser, a document editor or a code-review page. Text from the stage and the library is
//! cleaned of control characters and XML-escaped.

use super::{Trace, decimate};
use crate::needs::Severity;
use crate::text::clean;
use crate::units::{Dim, format_eng};
use std::fmt::Write;

const WIDTH: f64 = 960.0;
const LEFT: f64 = 96.0;
const RIGHT: f64 = 36.0;
const TOP: f64 = 78.0;
const VOLT_HEIGHT: f64 = 250.0;
const GAP: f64 = 44.0;
const AMP_HEIGHT: f64 = 170.0;
/// Height of one line of the notes under the plot.
const NOTE_LINE: f64 = 15.0;
/// Characters in one line of the notes (11 px text is about 6 px a character).
const NOTE_CHARS: usize = 135;

const VOLT_COLOUR: &str = "#1f4e9c";
const AMP_COLOUR: &str = "#a34a00";
const LOAD_COLOUR: &str = "#2e7d32";
const RATING_COLOUR: &str = "#c62828";
const GRID_COLOUR: &str = "#dddddd";

/// Escapes text for XML character data and attribute values.
fn xml(text: &str) -> String {
    let cleaned = clean(text);
    let mut out = String::with_capacity(cleaned.len());
    for c in cleaned.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&apos;"),
            c => out.push(c),
        }
    }
    out
}

/// `text` cut into lines of at most `width` characters at spaces (a longer word stands alone);
/// lines after the first are indented.
fn wrap(text: &str, width: usize) -> Vec<String> {
    let mut lines = Vec::new();
    let mut line = String::new();
    for word in text.split_whitespace() {
        let used = line.chars().count();
        if used > 0 && used + 1 + word.chars().count() > width {
            lines.push(std::mem::take(&mut line));
            line.push_str("    ");
        }
        if !line.is_empty() && !line.ends_with("    ") {
            line.push(' ');
        }
        line.push_str(word);
    }
    if !line.trim().is_empty() {
        lines.push(line);
    }
    lines
}

/// A round step near `raw`: 1, 2 or 5 times a power of ten, at least `raw`.
fn nice_step(raw: f64) -> f64 {
    if !(raw.is_finite() && raw > 0.0) {
        return 1.0;
    }
    let power = 10f64.powf(raw.log10().floor());
    let m = raw / power;
    let nice = if m <= 1.0 {
        1.0
    } else if m <= 2.0 {
        2.0
    } else if m <= 5.0 {
        5.0
    } else {
        10.0
    };
    nice * power
}

/// An axis: its range and ticks, the ticks labelled with one SI prefix for the whole axis.
struct Axis {
    lo: f64,
    hi: f64,
    ticks: Vec<f64>,
    step: f64,
    exponent: i32,
}

impl Axis {
    /// An axis covering `lo..hi` with about `count` ticks, widened to whole steps.
    fn new(lo: f64, hi: f64, count: f64) -> Axis {
        let (lo, hi) = if hi > lo {
            (lo, hi)
        } else {
            (
                lo - 0.5 * lo.abs().max(1e-12),
                hi + 0.5 * hi.abs().max(1e-12),
            )
        };
        let step = nice_step((hi - lo) / count);
        let lo = (lo / step).floor() * step;
        let hi = (hi / step).ceil() * step;
        let n = ((hi - lo) / step).round() as i64;
        let ticks: Vec<f64> = (0..=n.clamp(0, 100))
            .map(|k| lo + k as f64 * step)
            .collect();
        let largest = ticks.iter().fold(0.0f64, |m, t| m.max(t.abs())).max(step);
        let exponent = ((largest.log10() / 3.0).floor() as i32 * 3).clamp(-15, 12);
        Axis {
            lo,
            hi,
            ticks,
            step,
            exponent,
        }
    }

    /// A tick's label: the mantissa at the axis's prefix, with the decimals its step needs.
    fn label(&self, value: f64, unit: &str) -> String {
        let scale = 10f64.powi(self.exponent);
        let m = value / scale;
        if m.abs() < 1e-9 * (self.step / scale) {
            return format!("0 {unit}");
        }
        let decimals = (-(self.step / scale).log10().floor()).clamp(0.0, 3.0) as usize;
        let prefix = match self.exponent {
            -15 => "f",
            -12 => "p",
            -9 => "n",
            -6 => "µ",
            -3 => "m",
            3 => "k",
            6 => "M",
            9 => "G",
            12 => "T",
            _ => "",
        };
        format!("{m:.decimals$} {prefix}{unit}")
    }

    /// Where `value` falls between `from` (at `lo`) and `to` (at `hi`).
    fn map(&self, value: f64, from: f64, to: f64) -> f64 {
        from + (value - self.lo) / (self.hi - self.lo) * (to - from)
    }
}

/// The trace as an SVG document.
#[must_use]
pub fn to_svg(trace: &Trace) -> String {
    let plot_w = WIDTH - LEFT - RIGHT;
    let volt_top = TOP;
    let volt_bottom = TOP + VOLT_HEIGHT;
    let amp_top = volt_bottom + GAP;
    let amp_bottom = amp_top + AMP_HEIGHT;
    let x0 = LEFT;
    let x1 = LEFT + plot_w;

    // About two points per horizontal pixel keep every spike visible.
    let samples = (2.0 * plot_w) as usize;
    let volts = decimate(&trace.voltage(), samples);
    let amps = decimate(&trace.current(), samples);
    let load_v = decimate(&trace.load_voltage, samples);

    let t_lo = trace.points.first().map_or(0.0, |p| p[0]);
    let t_hi = trace.points.last().map_or(1.0, |p| p[0]);
    let time = Axis::new(t_lo, t_hi, 8.0);

    let (mut v_lo, mut v_hi) = volts
        .iter()
        .chain(load_v.iter())
        .fold((0.0f64, 0.0f64), |(lo, hi), p| (lo.min(p[1]), hi.max(p[1])));
    // The rating is drawn inside the plot when it is near the waveform (within twice the
    // peak), so crossing it is visible; far above it would flatten the trace to a line.
    let rating_inside = trace
        .rating
        .is_some_and(|r| r.volts <= 2.0 * v_hi.max(1e-12));
    if let (true, Some(r)) = (rating_inside, trace.rating) {
        v_hi = v_hi.max(r.volts);
    }
    v_hi += 0.05 * (v_hi - v_lo);
    v_lo = v_lo.min(0.0);
    let volt = Axis::new(v_lo, v_hi, 6.0);
    let (i_lo, i_hi) = amps
        .iter()
        .fold((0.0f64, 0.0f64), |(lo, hi), p| (lo.min(p[1]), hi.max(p[1])));
    let amp = Axis::new(i_lo, i_hi + 0.05 * (i_hi - i_lo), 4.0);

    let notes: Vec<(String, &str)> = trace
        .problems
        .iter()
        .map(|p| {
            let colour = match p.severity {
                Severity::Error => RATING_COLOUR,
                _ => "#8a6d00",
            };
            (format!("{}: {}", p.severity.name(), p.message), colour)
        })
        .chain(trace.model.iter().map(|m| (m.clone(), "#555555")))
        .flat_map(|(text, colour)| {
            wrap(&text, NOTE_CHARS)
                .into_iter()
                .map(move |line| (line, colour))
        })
        .collect();
    let height = amp_bottom + 56.0 + NOTE_LINE * notes.len() as f64 + 10.0;

    let mut s = String::with_capacity(64 * 1024);
    // Writing to a String cannot fail: the results of write! below are ignored for that reason.
    let _ = writeln!(
        s,
        r#"<svg xmlns="http://www.w3.org/2000/svg" width="{WIDTH}" height="{height:.0}" viewBox="0 0 {WIDTH} {height:.0}" font-family="sans-serif" font-size="12">"#
    );
    let _ = writeln!(
        s,
        r#"<rect x="0" y="0" width="{WIDTH}" height="{height:.0}" fill="white"/>"#
    );

    // Title and the figures in one line.
    let subject = match (&trace.part, trace.role) {
        (Some(p), Some(r)) => format!("{} as the {}", p, r.name()),
        _ => "the stage's own assumptions".to_string(),
    };
    let _ = writeln!(
        s,
        r#"<text x="{LEFT}" y="26" font-size="16" font-weight="bold">loadfit trace: {}</text>"#,
        xml(&trace.stage)
    );
    let _ = writeln!(
        s,
        r##"<text x="{LEFT}" y="46" fill="#333333">{} · {}</text>"##,
        xml(&subject),
        xml(&figures(trace))
    );

    // Panels: frame, grid, ticks.
    for (top, bottom, axis, unit, title) in [
        (
            volt_top,
            volt_bottom,
            &volt,
            "V",
            "voltage across the switch",
        ),
        (amp_top, amp_bottom, &amp, "A", "load current"),
    ] {
        let _ = writeln!(
            s,
            r##"<rect x="{x0:.1}" y="{top:.1}" width="{plot_w:.1}" height="{:.1}" fill="none" stroke="#888888"/>"##,
            bottom - top
        );
        for &tick in &axis.ticks {
            let y = axis.map(tick, bottom, top);
            let _ = writeln!(
                s,
                r#"<line x1="{x0:.1}" y1="{y:.1}" x2="{x1:.1}" y2="{y:.1}" stroke="{GRID_COLOUR}"/>"#
            );
            let _ = writeln!(
                s,
                r#"<text x="{:.1}" y="{:.1}" text-anchor="end">{}</text>"#,
                x0 - 6.0,
                y + 4.0,
                xml(&axis.label(tick, unit))
            );
        }
        for &tick in &time.ticks {
            let x = time.map(tick, x0, x1);
            let _ = writeln!(
                s,
                r#"<line x1="{x:.1}" y1="{top:.1}" x2="{x:.1}" y2="{bottom:.1}" stroke="{GRID_COLOUR}"/>"#
            );
        }
        let mid = 0.5 * (top + bottom);
        let _ = writeln!(
            s,
            r#"<text x="18" y="{mid:.1}" text-anchor="middle" transform="rotate(-90 18 {mid:.1})">{title} ({unit})</text>"#
        );
    }
    for &tick in &time.ticks {
        let x = time.map(tick, x0, x1);
        let _ = writeln!(
            s,
            r#"<text x="{x:.1}" y="{:.1}" text-anchor="middle">{}</text>"#,
            amp_bottom + 16.0,
            xml(&time.label(tick, "s"))
        );
    }
    let _ = writeln!(
        s,
        r#"<text x="{:.1}" y="{:.1}" text-anchor="middle">time (s)</text>"#,
        0.5 * (x0 + x1),
        amp_bottom + 34.0
    );

    // Switching edges, as thin dotted lines through both panels.
    for (t, word) in [(trace.switch_on, "on"), (trace.switch_off, "off")] {
        if let Some(t) = t {
            let x = time.map(t, x0, x1);
            let _ = writeln!(
                s,
                r##"<line x1="{x:.1}" y1="{volt_top:.1}" x2="{x:.1}" y2="{amp_bottom:.1}" stroke="#777777" stroke-dasharray="2 3"/>"##
            );
            let _ = writeln!(
                s,
                r##"<text x="{x:.1}" y="{:.1}" text-anchor="middle" fill="#555555">switch {word}</text>"##,
                volt_top - 6.0
            );
        }
    }

    // The rating line.
    if let Some(r) = trace.rating {
        let label = format!("{} {}", r.name, format_eng(r.volts, Dim::Volt));
        if rating_inside {
            let y = volt.map(r.volts, volt_bottom, volt_top);
            let _ = writeln!(
                s,
                r#"<line x1="{x0:.1}" y1="{y:.1}" x2="{x1:.1}" y2="{y:.1}" stroke="{RATING_COLOUR}" stroke-width="1.5" stroke-dasharray="8 4"/>"#
            );
            let _ = writeln!(
                s,
                r#"<text x="{:.1}" y="{:.1}" text-anchor="end" fill="{RATING_COLOUR}">{} rating</text>"#,
                x1 - 4.0,
                y - 5.0,
                xml(&label)
            );
        } else {
            let _ = writeln!(
                s,
                r#"<text x="{:.1}" y="{:.1}" text-anchor="end" fill="{RATING_COLOUR}">{} rating: above the plot</text>"#,
                x1 - 4.0,
                volt_top - 6.0,
                xml(&label)
            );
        }
    }

    // The waveforms.
    polyline(
        &mut s,
        &volts,
        &time,
        &volt,
        (x0, x1),
        (volt_bottom, volt_top),
        VOLT_COLOUR,
        "",
    );
    if !load_v.is_empty() {
        polyline(
            &mut s,
            &load_v,
            &time,
            &volt,
            (x0, x1),
            (volt_bottom, volt_top),
            LOAD_COLOUR,
            r#" stroke-dasharray="6 3""#,
        );
        let _ = writeln!(
            s,
            r#"<text x="{:.1}" y="{:.1}" fill="{LOAD_COLOUR}">dashed: voltage across the capacitor (V)</text>"#,
            x0 + 8.0,
            volt_bottom - 8.0
        );
    }
    polyline(
        &mut s,
        &amps,
        &time,
        &amp,
        (x0, x1),
        (amp_bottom, amp_top),
        AMP_COLOUR,
        "",
    );

    // Markers: the peak of a coil's spike (another load's peak is just the supply), the
    // release, and an R-C load's 10 %, 90 % and settling points.
    if let (true, Some((t, v))) = (trace.load.is_coil(), trace.peak_marker()) {
        let (x, y) = (time.map(t, x0, x1), volt.map(v, volt_bottom, volt_top));
        marker(
            &mut s,
            x,
            y,
            VOLT_COLOUR,
            &format!("peak {}", format_eng(v, Dim::Volt)),
            x1,
        );
    }
    if let (Some((t, i)), Some(rel)) = (trace.release_marker(), trace.release_time) {
        let x = time.map(t, x0, x1);
        let _ = writeln!(
            s,
            r#"<line x1="{x:.1}" y1="{amp_top:.1}" x2="{x:.1}" y2="{amp_bottom:.1}" stroke="{AMP_COLOUR}" stroke-dasharray="4 3"/>"#
        );
        let y = amp.map(i, amp_bottom, amp_top);
        marker(
            &mut s,
            x,
            y,
            AMP_COLOUR,
            &format!(
                "release: {} after switch-off, at {}",
                format_eng(rel, Dim::Second),
                format_eng(i, Dim::Amp)
            ),
            x1,
        );
    }
    for (fraction, word) in [(0.1, "10 %"), (0.9, "90 %")] {
        let level = fraction * trace.supply;
        let crossing = trace
            .load_voltage
            .windows(2)
            .find(|w| w[0][1] < level && w[1][1] >= level)
            .map(|w| w[0][0] + (level - w[0][1]) * (w[1][0] - w[0][0]) / (w[1][1] - w[0][1]));
        if let Some(t) = crossing {
            let (x, y) = (time.map(t, x0, x1), volt.map(level, volt_bottom, volt_top));
            marker(&mut s, x, y, LOAD_COLOUR, word, x1);
        }
    }
    if let (Some(t_on), Some(settle)) = (trace.switch_on, trace.settle_time) {
        let t = t_on + settle;
        let v = trace.supply * (1.0 - (-5.0f64).exp());
        let (x, y) = (time.map(t, x0, x1), volt.map(v, volt_bottom, volt_top));
        let rise = trace.rise_time.map_or(String::new(), |r| {
            format!("rise 10-90 % {}, ", format_eng(r, Dim::Second))
        });
        marker(
            &mut s,
            x,
            y,
            LOAD_COLOUR,
            &format!(
                "{rise}settled {} after switch-on",
                format_eng(settle, Dim::Second)
            ),
            x1,
        );
    }

    // What was modelled, and the problems first.
    let mut y = amp_bottom + 60.0;
    for (line, colour) in &notes {
        let _ = writeln!(
            s,
            r#"<text x="{LEFT}" y="{y:.1}" font-size="11" fill="{colour}">{}</text>"#,
            xml(line)
        );
        y += NOTE_LINE;
    }
    s.push_str("</svg>\n");
    s
}

/// The figures in one line for the subtitle.
fn figures(trace: &Trace) -> String {
    let mut parts = Vec::new();
    if let Some(v) = trace.peak_voltage {
        parts.push(format!("peak {}", format_eng(v, Dim::Volt)));
    }
    if let Some(t) = trace.release_time {
        parts.push(format!("release {}", format_eng(t, Dim::Second)));
    }
    if let Some(e) = trace.clamp_energy {
        parts.push(format!("clamp energy {}", format_eng(e, Dim::Joule)));
    }
    if let Some(t) = trace.rise_time {
        parts.push(format!("rise {}", format_eng(t, Dim::Second)));
    }
    if let Some(t) = trace.settle_time {
        parts.push(format!("settle {}", format_eng(t, Dim::Second)));
    }
    parts.push(format!(
        "supply {}, on {}",
        format_eng(trace.supply, Dim::Volt),
        format_eng(trace.on_current, Dim::Amp)
    ));
    parts.join(" · ")
}

#[allow(clippy::too_many_arguments)]
fn polyline(
    s: &mut String,
    points: &[[f64; 2]],
    time: &Axis,
    axis: &Axis,
    (x0, x1): (f64, f64),
    (bottom, top): (f64, f64),
    colour: &str,
    extra: &str,
) {
    s.push_str("<polyline fill=\"none\" stroke-width=\"1.5\" stroke-linejoin=\"round\" stroke=\"");
    s.push_str(colour);
    s.push('"');
    s.push_str(extra);
    s.push_str(" points=\"");
    for p in points {
        let _ = write!(
            s,
            "{:.1},{:.1} ",
            time.map(p[0], x0, x1),
            axis.map(p[1], bottom, top)
        );
    }
    s.push_str("\"/>\n");
}

/// A ringed dot with its label, the label placed left of the dot when it would run past the
/// right edge (bold 12 px text is about 7.5 px a character).
fn marker(s: &mut String, x: f64, y: f64, colour: &str, label: &str, right: f64) {
    let _ = writeln!(
        s,
        r#"<circle cx="{x:.1}" cy="{y:.1}" r="4.5" fill="white" stroke="{colour}" stroke-width="2"/>"#
    );
    let width = 7.5 * label.chars().count() as f64;
    let (tx, anchor) = if x + 8.0 + width > right {
        (x - 8.0, "end")
    } else {
        (x + 8.0, "start")
    };
    let _ = writeln!(
        s,
        r#"<text x="{tx:.1}" y="{:.1}" text-anchor="{anchor}" fill="{colour}" font-weight="bold">{}</text>"#,
        y - 8.0,
        xml(label)
    );
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn nice_steps_are_1_2_5() {
        assert_eq!(nice_step(0.7), 1.0);
        assert_eq!(nice_step(1.3), 2.0);
        assert_eq!(nice_step(3.0), 5.0);
        assert!((nice_step(7e-6) - 1e-5).abs() < 1e-18);
    }

    #[test]
    fn axis_labels_share_one_prefix() {
        let axis = Axis::new(0.0, 540e-6, 6.0);
        let labels: Vec<String> = axis.ticks.iter().map(|t| axis.label(*t, "s")).collect();
        assert_eq!(labels.first().map(String::as_str), Some("0 s"));
        assert!(labels.contains(&"100 µs".to_string()), "{labels:?}");
        assert!(axis.hi >= 540e-6);
    }

    #[test]
    fn notes_wrap_at_spaces() {
        let lines = wrap("aaa bbb ccc ddd", 8);
        assert_eq!(lines, ["aaa bbb", "    ccc", "    ddd"]);
        assert!(wrap("", 8).is_empty());
    }

    #[test]
    fn text_is_escaped() {
        assert_eq!(xml("a<b & \"c\""), "a&lt;b &amp; &quot;c&quot;");
    }
}
