//! The trace against closed forms of circuit theory (REFERENCES.md), and the solver's
//! stability on the stiffest case the issue names. Parts are invented.

use super::junction::{self, Junction};
use super::*;
use crate::needs;
use crate::stage::{Clamp, ClampType, Load, SwitchType};
use crate::units::{Amps, Henries, Ohms, Volts};

/// Invented parts, one of each kind a trace uses.
const PARTS: &str = "\
part,kind,vceo,vce_sat,vds,rds_on,vf,vf_at_if,if_avg,vz,coil_r,coil_l,must_release_v,r_10lux
TQN-40,npn,40 V,0.3 V,,,,,,,,,,
TQN-NR,npn,,0.25 V,,,,,,,,,,
TQM-60,nmos,,,60 V,0.5 ohm,,,,,,,,
TQM-20,nmos,,,20 V,0.1 ohm,,,,,,,,
TQD-1A,diode,,,,,1.1 V,1 A,1 A,,,,,
TQZ-33,zener,,,,,,,,33 V,,,,
TQK-12,relay,,,,,,,,,400 ohm,200 mH,1.2 V,
TQP-20,photocell,,,,,,,,,,,,20k
";

fn parts() -> Library {
    let mut library = Library::new();
    library
        .add_bytes("trace-test.csv", PARTS.as_bytes())
        .unwrap_or_else(|e| panic!("{e}"));
    assert!(library.rejected.is_empty(), "{:?}", library.rejected);
    library
}

fn part<'a>(library: &'a Library, number: &str) -> &'a Part {
    library
        .find(number)
        .unwrap_or_else(|| panic!("{number} is in PARTS"))
}

/// REFERENCES.md's simulated stage: 10 V, coil 550 Ω + 100 mH, NPN switch.
fn coil_stage(kind: ClampType, zener: Option<f64>) -> Stage {
    let mut load = Load::of(LoadType::Inductive);
    load.resistance = Some(Ohms(550.0));
    load.inductance = Some(Henries(0.1));
    let mut stage = Stage::new(Volts(10.0), load);
    stage.switch.kind = SwitchType::Npn;
    stage.clamp = Clamp {
        kind,
        zener_volts: zener.map(Volts),
    };
    stage
}

fn trace_of(stage: &Stage, library: &Library, part: Option<&Part>, options: &Options) -> Trace {
    let needs = needs::compute(stage, Some(library));
    simulate_with(stage, &needs, library, part, options).unwrap_or_else(|e| panic!("{e}"))
}

/// Linear interpolation of column `k` of the points at `t`.
fn at(points: &[[f64; 3]], t: f64, k: usize) -> f64 {
    let i = points.partition_point(|p| p[0] < t);
    if i == 0 {
        return points[0][k];
    }
    let Some(b) = points.get(i) else {
        return f64::NAN;
    };
    let a = points[i - 1];
    a[k] + (b[k] - a[k]) * (t - a[0]) / (b[0] - a[0])
}

/// REFERENCES.md, RC step (circuit theory): v/V∞ at 1..5 τ = 0.6321, 0.8647, 0.9502,
/// 0.9817, 0.9933; the 10-90 % rise is τ ln 9 = 2.1972 τ; 5 τ settles to 99.33 %.
/// Tolerance 5e-4 on the fractions: the table has four figures (±5e-5), the solver's relative
/// tolerance is 1e-4 a step and the ideal switch's 1 mΩ lengthens τ by 1e-6.
#[test]
fn rc_step_against_the_exponential() {
    let mut load = Load::of(LoadType::Capacitive);
    load.resistance = Some(Ohms(1e3));
    load.capacitance = Some(Farads(100e-9));
    let mut stage = Stage::new(Volts(10.0), load);
    stage.switch.kind = SwitchType::Nmos;
    let library = Library::new();
    let trace = trace_of(&stage, &library, None, &Options::default());
    let tau = 1e3 * 100e-9;
    let t_on = trace.switch_on.unwrap_or(f64::NAN);
    let fractions = [0.6321, 0.8647, 0.9502, 0.9817, 0.9933];
    let load_v: Vec<[f64; 3]> = trace
        .load_voltage
        .iter()
        .map(|p| [p[0], p[1], 0.0])
        .collect();
    for (n, want) in fractions.iter().enumerate() {
        let t = t_on + (n + 1) as f64 * tau;
        let got = at(&load_v, t, 1) / 10.0;
        assert!((got - want).abs() < 5e-4, "{} τ: {got} vs {want}", n + 1);
    }
    let rise = trace.rise_time.unwrap_or(f64::NAN);
    assert!(
        (rise / (tau * 9f64.ln()) - 1.0).abs() < 1e-3,
        "rise {rise} vs τ ln 9"
    );
    let settle = trace.settle_time.unwrap_or(f64::NAN);
    assert!((settle / (5.0 * tau) - 1.0).abs() < 1e-3, "settle {settle}");
    // The charging current starts at Vs / R (Ohm's law).
    assert!((trace.on_current - 10.0 / 1e3).abs() / 1e-2 < 1e-3);
    assert!(trace.release_time.is_none() && trace.clamp_energy.is_none());
}

/// REFERENCES.md, inductive load (circuit theory): through a clamp of constant voltage Vc the
/// coil current is i(t) = -Vc/R + (I0 + Vc/R) e^(-t/τ) and reaches zero at
/// t0 = τ ln(1 + I0 R / Vc). The clamp here is a junction 1 mV per e-fold, so its voltage
/// stays within 10 mV of 5 V from 18 mA down to 1 µA; tolerance 0.3 % of I0 on the current
/// and 0.5 % on t0 (the stray capacitance's 55 ns charge at switch-off is in both).
#[test]
fn clamped_coil_against_the_decay_relation() {
    let stage = coil_stage(ClampType::Diode, None);
    let library = Library::new();
    let needs = needs::compute(&stage, Some(&library));
    let mut built = build(&stage, &needs, &library, None, None, DEFAULT_STRAY.0)
        .unwrap_or_else(|e| panic!("{e}"));
    let vc = 5.0;
    built.circuit.clamp = Some(Junction {
        is: 1e-3,
        nvt: 1e-3,
        offset: vc - 1e-3 * (18e-3f64 / 1e-3).ln(),
    });
    let trace = run(&built, &Options::default()).unwrap_or_else(|e| panic!("{e}"));
    let (r, tau) = (550.0, 0.1 / 550.0);
    let i0 = trace.on_current;
    let t_off = trace.switch_off.unwrap_or(f64::NAN);
    let t0 = tau * (1.0 + i0 * r / vc).ln();
    for k in 1..20 {
        let t = t0 * k as f64 / 20.0;
        let expected = -vc / r + (i0 + vc / r) * (-t / tau).exp();
        let got = at(&trace.points, t_off + t, 2);
        assert!(
            (got - expected).abs() < 3e-3 * i0,
            "{t}: {got} vs {expected}"
        );
    }
    let zero = trace
        .points
        .iter()
        .find(|p| p[0] > t_off && p[2] <= 1e-6 * i0)
        .map_or(f64::NAN, |p| p[0] - t_off);
    assert!((zero / t0 - 1.0).abs() < 5e-3, "to zero {zero} vs {t0}");
    // The release (10 % of I0) by the same relation.
    let release = tau * ((i0 + vc / r) / (0.1 * i0 + vc / r)).ln();
    let got = trace.release_time.unwrap_or(f64::NAN);
    assert!((got / release - 1.0).abs() < 3e-3, "{got} vs {release}");
}

/// Energy balance (circuit theory): what the coil holds, ½ L I0², goes into the clamp and the
/// coil's own resistance (and a little into the stray capacitance, ½ C ΔV²). Tolerance 0.5 %:
/// the trapezoid rule over the solver's points, and the diode's leakage.
#[test]
fn clamped_coil_energy_balance() {
    let stage = coil_stage(ClampType::Diode, None);
    let library = Library::new();
    let trace = trace_of(&stage, &library, None, &Options::default());
    let t_off = trace.switch_off.unwrap_or(f64::NAN);
    let after: Vec<&[f64; 3]> = trace.points.iter().filter(|p| p[0] >= t_off).collect();
    let resistive: f64 = after
        .windows(2)
        .map(|w| 0.5 * (w[0][2].powi(2) + w[1][2].powi(2)) * 550.0 * (w[1][0] - w[0][0]))
        .sum();
    let stored = 0.5 * 0.1 * trace.on_current.powi(2);
    let clamp = trace.clamp_energy.unwrap_or(f64::NAN);
    let (v0, v1) = (after[0][1], after[after.len() - 1][1]);
    let capacitor = 0.5 * DEFAULT_STRAY.0 * (v1 * v1 - v0 * v0);
    let balance = (clamp + resistive + capacitor) / stored;
    assert!((balance - 1.0).abs() < 5e-3, "balance {balance}");
    // A plain diode takes a small share: its VF against the coil's I R.
    assert!(clamp > 0.02 * stored && clamp < 0.2 * stored, "{clamp}");
}

/// REFERENCES.md's diode-plus-zener stage, closed form: peak Vs + VZ + VF and the time to zero
/// τ ln(1 + I0 R / Vc) with Vc the clamp's voltage read off the trace (peak - Vs). Tolerance
/// 2 %: the relation holds Vc constant, while the junctions' drop falls by about 0.2 V (0.8 %)
/// as the current decays.
#[test]
fn zener_clamp_against_the_relation() {
    let stage = coil_stage(ClampType::Zener, Some(24.0));
    let library = Library::new();
    let trace = trace_of(&stage, &library, None, &Options::default());
    let peak = trace.peak_voltage.unwrap_or(f64::NAN);
    // VF of the default diode at ~18 mA is 0.78 V, the zener 75 mV above VZ at 18 mA.
    assert!((peak - 34.85).abs() < 0.05, "peak {peak}");
    let vc = peak - 10.0;
    let i0 = trace.on_current;
    let t0 = 0.1 / 550.0 * (1.0 + i0 * 550.0 / vc).ln();
    let t_off = trace.switch_off.unwrap_or(f64::NAN);
    let zero = trace
        .points
        .iter()
        .find(|p| p[0] > t_off && p[2] <= 1e-3 * i0)
        .map_or(f64::NAN, |p| p[0] - t_off);
    assert!((zero / t0 - 1.0).abs() < 0.02, "to zero {zero} vs {t0}");
}

/// Solver stability (issue 9): no clamp, 1 pF stray, a 1 H coil, and a switch rated 40 V.
/// The coil drives the switch into breakdown; the trace must finish in a bounded number of
/// steps with the peak at the breakdown: 40 V plus Vt ln(I0 / 1 mA) = 75 mV for the
/// breakdown model (1 mA at the rating, e-fold per Vt).
#[test]
fn unclamped_one_henry_one_picofarad_breaks_down_in_bounded_steps() {
    let mut stage = coil_stage(ClampType::None, None);
    stage.load.inductance = Some(Henries(1.0));
    let library = parts();
    let options = Options {
        stray: Farads(1e-12),
        ..Options::default()
    };
    let switch = part(&library, "TQN-40");
    let trace = trace_of(&stage, &library, Some(switch), &options);
    let peak = trace.peak_voltage.unwrap_or(f64::NAN);
    let i0 = trace.on_current;
    let expected = 40.0 + junction::VT * (i0 / 1e-3).ln();
    assert!((peak - expected).abs() < 0.02, "peak {peak} vs {expected}");
    assert!(
        trace.steps + trace.rejected < 20_000,
        "{} steps, {} rejected",
        trace.steps,
        trace.rejected
    );
    assert!(trace.release_time.is_some());
    // Circuit theory: in breakdown the switch holds Vb against the coil and the supply, so it
    // takes Vb ∫ i dt = Vb (τ I0 - (Vb - Vs) t0 / R) (needs::inductive::decay_charge) — more
    // than the ½ L I0² the coil held, as the supply keeps driving the current meanwhile.
    // Tolerance 1 %: Vb moves by tens of millivolts with the current, and the ring after it.
    let charge =
        needs::inductive::decay_charge(Henries(1.0), Ohms(550.0), Amps(i0), Volts(peak - 10.0));
    let expected = peak * charge;
    let e = trace.clamp_energy.unwrap_or(f64::NAN);
    assert!((e / expected - 1.0).abs() < 0.01, "{e} vs {expected}");
    assert!(e > 0.5 * i0 * i0);
    assert_eq!(trace.clamp_energy, trace.switch_energy);
    assert!(trace.has_errors(), "{:?}", trace.problems);
}

/// With no part there is no breakdown: the ring against the stray capacitance. Circuit theory:
/// the LC resonance takes ½ L I0² into ½ C V², Vs + I0 √(L/C); with 1 H and 1 pF the coil's
/// 550 Ω barely damps it (Q ≈ 1800, 0.05 % lost by the first peak): tolerance 0.5 %.
#[test]
fn unclamped_ring_without_a_part_is_bounded_and_reported() {
    let mut stage = coil_stage(ClampType::None, None);
    stage.load.inductance = Some(Henries(1.0));
    let library = Library::new();
    let options = Options {
        stray: Farads(1e-12),
        ..Options::default()
    };
    let trace = trace_of(&stage, &library, None, &options);
    let i0 = trace.on_current;
    let expected = 10.0 + i0 * (1.0f64 / 1e-12).sqrt();
    let peak = trace.peak_voltage.unwrap_or(f64::NAN);
    assert!((peak / expected - 1.0).abs() < 5e-3, "{peak} vs {expected}");
    assert!(trace.steps + trace.rejected < 20_000, "{}", trace.steps);
    assert!(trace.clamp_energy.is_none());
    assert!(
        trace
            .problems
            .iter()
            .any(|p| p.severity == Severity::Error && p.message.contains("rings up to")),
        "{:?}",
        trace.problems
    );
}

/// A switch part's VCE(sat) sets the on-state: IL = (Vs - VCE(sat)) / R (Ohm's law).
#[test]
fn switch_part_sets_the_on_state_and_the_rating_line() {
    let stage = coil_stage(ClampType::Diode, None);
    let library = parts();
    let trace = trace_of(
        &stage,
        &library,
        Some(part(&library, "TQN-40")),
        &Options::default(),
    );
    assert!((trace.on_current - (10.0 - 0.3) / 550.0).abs() < 1e-9);
    assert_eq!(
        trace.rating,
        Some(RatingLine {
            name: "VCEO",
            volts: 40.0
        })
    );
    assert_eq!(trace.role, Some(Role::Switch));
    assert!(!trace.has_errors(), "{:?}", trace.problems);
    // A part without its voltage rating is traced, with a warning.
    let bare = trace_of(
        &stage,
        &library,
        Some(part(&library, "TQN-NR")),
        &Options::default(),
    );
    assert!(bare.rating.is_none());
    assert!(bare.problems.iter().any(|p| p.message.contains("vceo")));
}

/// A zener clamp above the switch's rating: the switch breaks down first, at its VDS.
#[test]
fn zener_above_the_rating_breaks_the_switch_down() {
    let mut stage = coil_stage(ClampType::Zener, Some(24.0));
    stage.switch.kind = SwitchType::Nmos;
    let library = parts();
    let trace = trace_of(
        &stage,
        &library,
        Some(part(&library, "TQM-20")),
        &Options::default(),
    );
    let peak = trace.peak_voltage.unwrap_or(f64::NAN);
    assert!(peak > 20.0 && peak < 20.2, "{peak}");
    assert!(trace.switch_energy.unwrap_or(0.0) > 1e-6);
    assert!(
        trace
            .problems
            .iter()
            .any(|p| p.severity == Severity::Error && p.message.contains("breaks down"))
    );
    // A 60 V part stands it.
    let fine = trace_of(
        &stage,
        &library,
        Some(part(&library, "TQM-60")),
        &Options::default(),
    );
    assert!((fine.peak_voltage.unwrap_or(0.0) - 34.85).abs() < 0.1);
    assert!(!fine.has_errors(), "{:?}", fine.problems);
}

/// A clamp part's VF at IF is what the fitted Shockley diode gives (N 1.8): the peak above the
/// supply equals VF at IF when the coil carries IF, and is below it at the smaller current
/// of the reference coil, by N Vt ln(IF / I0).
#[test]
fn clamp_part_vf_sets_the_diode() {
    let stage = coil_stage(ClampType::Diode, None);
    let library = parts();
    let trace = trace_of(
        &stage,
        &library,
        Some(part(&library, "TQD-1A")),
        &Options::default(),
    );
    let i0 = trace.on_current;
    let expected = 10.0 + 1.1 - CLAMP_N * junction::VT * (1.0 / i0).ln();
    let peak = trace.peak_voltage.unwrap_or(f64::NAN);
    assert!((peak - expected).abs() < 0.01, "{peak} vs {expected}");
    assert_eq!(trace.role, Some(Role::Clamp));
}

/// A relay candidate: its own coil, and its must-release voltage / R as the release current.
#[test]
fn relay_part_sets_the_coil_and_the_release_current() {
    let mut load = Load::of(LoadType::Relay);
    load.resistance = None;
    let mut stage = Stage::new(Volts(12.0), load);
    stage.switch.kind = SwitchType::Npn;
    let library = parts();
    let trace = trace_of(
        &stage,
        &library,
        Some(part(&library, "TQK-12")),
        &Options::default(),
    );
    assert!((trace.release_current.unwrap_or(0.0) - 1.2 / 400.0).abs() < 1e-12);
    assert!((trace.on_current - 11.8 / 400.0).abs() < 1e-9);
    // Relation with the traced clamp voltage: the release happens before the current is zero.
    let release = trace.release_time.unwrap_or(f64::NAN);
    let tau = 0.2 / 400.0;
    assert!(release > 0.0 && release < 3.0 * tau, "{release}");
}

#[test]
fn parts_that_fill_no_role_are_refused() {
    let stage = coil_stage(ClampType::None, None);
    let library = parts();
    let needs = needs::compute(&stage, Some(&library));
    for number in ["TQD-1A", "TQZ-33", "TQK-12", "TQM-60"] {
        let result = simulate(&stage, &needs, &library, Some(part(&library, number)));
        assert!(
            matches!(result, Err(TraceError::Part { .. })),
            "{number}: {result:?}"
        );
    }
    let mut sensing = stage.clone();
    sensing.drive.source = crate::stage::DriveSource::Photocell;
    let result = simulate(&sensing, &needs, &library, Some(part(&library, "TQP-20")));
    assert!(matches!(result, Err(TraceError::Part { .. })), "{result:?}");
}

#[test]
fn a_coil_without_inductance_cannot_be_traced() {
    let mut stage = coil_stage(ClampType::Diode, None);
    stage.load.inductance = None;
    let library = Library::new();
    let needs = needs::compute(&stage, None);
    let result = simulate(&stage, &needs, &library, None);
    assert!(matches!(result, Err(TraceError::Missing(m)) if m.contains("inductance")));
    let bad = Options {
        stray: Farads(0.0),
        ..Options::default()
    };
    let stage = coil_stage(ClampType::Diode, None);
    let result = simulate_with(&stage, &needs, &library, None, &bad);
    assert!(matches!(result, Err(TraceError::Options(_))));
}

#[test]
fn points_are_in_time_order_and_finite() {
    let library = Library::new();
    for clamp in [ClampType::Diode, ClampType::Zener, ClampType::None] {
        let stage = coil_stage(clamp, Some(24.0));
        let trace = trace_of(&stage, &library, None, &Options::default());
        assert!(trace.points.windows(2).all(|w| w[0][0] < w[1][0]));
        assert!(trace.points.iter().flatten().all(|x| x.is_finite()));
    }
}

#[test]
fn decimate_keeps_the_extremes_in_order() {
    // A slow sine with one narrow spike in each channel.
    let points: Vec<[f64; 3]> = (0..100_000)
        .map(|k| {
            let t = k as f64 * 1e-6;
            let spike_v = if k == 31_337 { 50.0 } else { 0.0 };
            let spike_i = if k == 77_777 { -3.0 } else { 0.0 };
            [t, (t * 20.0).sin() + spike_v, (t * 7.0).cos() + spike_i]
        })
        .collect();
    for n in [2, 5, 10, 400, 4000] {
        let kept = decimate(&points, n);
        assert!(kept.len() <= n, "{n}: {}", kept.len());
        assert!(kept.windows(2).all(|w| w[0][0] < w[1][0]));
        assert_eq!(kept.first(), points.first());
        assert_eq!(kept.last(), points.last());
        if n >= 10 {
            assert!(kept.iter().any(|p| p[1] == points[31_337][1]), "{n}");
            assert!(kept.iter().any(|p| p[2] == points[77_777][2]), "{n}");
        }
    }
    let few = &points[..10];
    assert_eq!(decimate(few, 100), few.to_vec());
    assert!(decimate::<3>(&[], 10).is_empty());
}

#[test]
fn outputs_carry_the_binding_keys() {
    let stage = coil_stage(ClampType::Diode, None);
    let library = Library::new();
    let trace = trace_of(&stage, &library, None, &Options::default());
    let doc = report::to_json(&trace, 500);
    for key in [
        "peak_voltage",
        "clamp_energy",
        "release_time",
        "rise_time",
        "settle_time",
        "points",
    ] {
        assert!(doc.get(key).is_some(), "{key}");
    }
    let points = doc["points"].as_array().map_or(0, Vec::len);
    assert!(points > 100 && points <= 500, "{points}");
    assert!(doc["rise_time"].is_null());
    let csv = report::to_csv(&trace);
    assert!(csv.starts_with("time_s,voltage_V,current_A\n"));
    assert_eq!(csv.lines().count(), trace.points.len() + 1);
    let text = report::to_text(&trace);
    assert!(text.contains("peak voltage") && text.contains("release time"));
}

#[test]
fn svg_is_a_labelled_plot() {
    let mut stage = coil_stage(ClampType::Zener, Some(24.0));
    stage.title = "Coil <test> & \"quotes\"".to_string();
    let library = parts();
    let trace = trace_of(
        &stage,
        &library,
        Some(part(&library, "TQN-40")),
        &Options::default(),
    );
    let svg = svg::to_svg(&trace);
    assert!(svg.starts_with("<svg xmlns=\"http://www.w3.org/2000/svg\""));
    assert!(svg.trim_end().ends_with("</svg>"));
    assert!(svg.contains("Coil &lt;test&gt; &amp; &quot;quotes&quot;"));
    assert!(!svg.contains("<test>"));
    assert_eq!(svg.matches("<polyline").count(), 2);
    assert!(svg.contains("VCEO 40.0 V rating"));
    let peak = format_eng(trace.peak_voltage.unwrap_or(f64::NAN), Dim::Volt);
    assert!(svg.contains(&format!("peak {peak}")), "{peak}");
    assert!(svg.contains("release:"));
    assert!(svg.contains("µs"));
    assert!(svg.contains("voltage across the switch (V)"));
}

/// Stages many decades apart — 5 V to 400 V, 1 Ω to 100 kΩ coils of 1 µH to 10 H, every clamp,
/// 1 pF to 10 nF stray — all finish, in time order, with finite figures, the peak at least the
/// supply and the release found: no figures a user can type make the solver give up.
#[test]
fn stages_many_decades_apart_all_finish() {
    let library = Library::new();
    for &vs in &[5.0, 400.0] {
        for &r in &[1.0, 1e5] {
            for &l in &[1e-6, 10.0] {
                for clamp in [ClampType::Diode, ClampType::Zener, ClampType::None] {
                    for &stray in &[1e-12, 10e-9] {
                        let mut load = Load::of(LoadType::Inductive);
                        load.resistance = Some(Ohms(r));
                        load.inductance = Some(Henries(l));
                        let mut stage = Stage::new(Volts(vs), load);
                        stage.switch.kind = SwitchType::Npn;
                        stage.clamp = Clamp {
                            kind: clamp,
                            zener_volts: Some(Volts(24.0)),
                        };
                        let options = Options {
                            stray: Farads(stray),
                            ..Options::default()
                        };
                        let case = format!("{vs} V, {r} Ω, {l} H, {clamp:?}, {stray} F");
                        let trace = trace_of(&stage, &library, None, &options);
                        assert!(trace.points.windows(2).all(|w| w[0][0] < w[1][0]), "{case}");
                        assert!(
                            trace.points.iter().flatten().all(|x| x.is_finite()),
                            "{case}"
                        );
                        let peak = trace.peak_voltage.unwrap_or(f64::NAN);
                        assert!(peak >= 0.95 * vs, "{case}: peak {peak}");
                        assert!(trace.release_time.is_some(), "{case}");
                    }
                }
            }
        }
    }
}
