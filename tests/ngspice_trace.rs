//! loadfit's traces against ngspice, an independent circuit simulator (Debian package
//! `ngspice`, run as `ngspice -b`), and against the figures REFERENCES.md records from it.
//!
//! Each ngspice test writes a deck of the circuit the trace models — the same supply, coil,
//! on-resistance, stray capacitance, and diodes with the same IS, N, BV and IBV — runs it and
//! compares the peak voltage (within 3 %), the release time (within 5 %) and the energy into
//! the clamp or the switch (within 5 %), the tolerances; what the two actually differ
//! by is far smaller, and each check says why it may differ at all.
//!
//! Without ngspice those tests print that they skipped; with `CI=true` they fail instead. The
//! REFERENCES.md tests need no simulator.

#[path = "common/ngspice.rs"]
mod ngspice;

use loadfit::library::{Library, Part};
use loadfit::needs;
use loadfit::stage::{Clamp, ClampType, Load, LoadType, Stage, SwitchType};
use loadfit::trace::{self, Options, Trace};
use loadfit::units::{Farads, Henries, Ohms, Volts};
use ngspice::{Wave, control, ngspice_available, relative, simulate};

/// An invented switch rated 40 V, for the breakdown deck.
const PARTS: &str = "part,kind,vceo,vce_sat\nTQN-40,npn,40 V,0.07 V\n";

/// REFERENCES.md's simulated stage: 10 V, coil 550 Ω + 100 mH, an NPN switch. VCE(sat)
/// 0.07 V puts the on-state current at the 18.05 mA the simulated transistor gives
/// ((10 - 0.07) / 550), so the references are met on the same current.
fn coil_stage(kind: ClampType, zener: Option<f64>) -> Stage {
    let mut load = Load::of(LoadType::Inductive);
    load.resistance = Some(Ohms(550.0));
    load.inductance = Some(Henries(0.1));
    let mut stage = Stage::new(Volts(10.0), load);
    stage.switch.kind = SwitchType::Npn;
    stage.assume.vce_sat = Volts(0.07);
    stage.clamp = Clamp {
        kind,
        zener_volts: zener.map(Volts),
    };
    stage
}

fn trace_of(stage: &Stage, library: &Library, part: Option<&Part>, options: &Options) -> Trace {
    let needs = needs::compute(stage, Some(library));
    trace::simulate_with(stage, &needs, library, part, options).unwrap_or_else(|e| panic!("{e}"))
}

fn library() -> Library {
    let mut library = Library::new();
    library
        .add_bytes("ngspice-trace.csv", PARTS.as_bytes())
        .unwrap_or_else(|e| panic!("{e}"));
    library
}

/// The time after switch-off at which the trace's coil current first falls to `level`.
fn falls_to(trace: &Trace, level: f64) -> f64 {
    let t_off = trace.switch_off.unwrap_or(f64::NAN);
    let pts = &trace.points;
    pts.windows(2)
        .find(|w| w[0][0] >= t_off && w[0][2] > level && w[1][2] <= level)
        .map_or(f64::NAN, |w| {
            w[0][0] + (level - w[0][2]) * (w[1][0] - w[0][0]) / (w[1][2] - w[0][2]) - t_off
        })
}

/// The deck of the trace's coil circuit: supply, an ammeter for the coil current (VS), the
/// coil, the stray capacitance, the switch as a resistance RON turned off at `t_off` by a
/// control voltage crossing its threshold at `t_off` (ROFF 1 TΩ, as loadfit's 1 pS), and `extra` (the clamp or the breakdown)
/// plus, when `reverse`, the below-ground junction loadfit gives every switch (IS 1e-14, N 1).
/// Vectors: v(c), i(VS), and `currents`.
#[allow(clippy::too_many_arguments)]
fn coil_deck(
    vs: f64,
    r: f64,
    l: f64,
    stray: f64,
    r_on: f64,
    t_off: f64,
    t_stop: f64,
    extra: &str,
    reverse: bool,
    currents: &str,
) -> String {
    let reverse = if reverse {
        "DR 0 c DREV\n.model DREV D(IS=1e-14 N=1)\n"
    } else {
        ""
    };
    format!(
        "loadfit trace deck\n\
         VCC vcc 0 DC {vs}\n\
         VS vcc top DC 0\n\
         RL top mid {r}\n\
         LL mid c {l}\n\
         CS c 0 {stray}\n\
         S1 c 0 ctl 0 SWITCH\n\
         .model SWITCH SW(VT=0.5 VH=0 RON={r_on} ROFF=1e12)\n\
         VCTL ctl 0 PWL(0 1 {t_start} 1 {t_end} 0)\n\
         {reverse}{extra}\n\
         {}",
        control(
            &format!("2n {t_stop} 0 20n"),
            &format!("v(c) i(VS) {currents}")
        ),
        t_start = t_off - 0.5e-9,
        t_end = t_off + 0.5e-9,
    )
}

/// The on-resistance loadfit gives the stage's switch: VCE(sat) at the load current,
/// 0.07 V × 550 Ω / (10 V - 0.07 V).
const R_ON: f64 = 0.07 * 550.0 / 9.93;

/// The switch-off: the deck's 1 ns control ramp crosses the switch's 0.5 V threshold at the
/// instant loadfit opens the switch; times are measured from there.
fn deck_off(trace: &Trace) -> f64 {
    trace.switch_off.unwrap_or(f64::NAN)
}

/// Plain diode clamp (IS 1e-9, N 1.8) against ngspice: peak, release to 10 % of the on-state
/// current, and the energy into the clamp, ∫ (v(c) - Vs) i(D) dt. Both simulate the same
/// equations; what differs is the integrator (ngspice's trapezoidal rule with a 20 ns
/// ceiling, loadfit's BDF2 with its own error control) and ngspice's 1 ns switch edge:
/// agreement is expected to a fraction of a percent, under the 3 % and 5 %.
#[test]
fn diode_clamp_matches_ngspice() {
    if !ngspice_available("diode_clamp_matches_ngspice") {
        return;
    }
    let trace = trace_of(
        &coil_stage(ClampType::Diode, None),
        &Library::new(),
        None,
        &Options::default(),
    );
    let t_off = deck_off(&trace);
    let wave = simulate(&coil_deck(
        10.0,
        550.0,
        0.1,
        100e-12,
        R_ON,
        t_off,
        t_off + 1e-3,
        "VD c cl DC 0\nD1 cl vcc DCLAMP\n.model DCLAMP D(IS=1e-9 N=1.8)",
        true,
        "i(VD)",
    ));
    compare(&trace, &wave, t_off, |r| (r[1] - 10.0) * r[3], "clamp");
}

/// Diode plus 24 V zener (the zener as a SPICE diode with BV 24 V, IBV 1 mA) against ngspice:
/// peak, release, energy into the clamp, and the time for the current to reach zero (0.1 % of
/// the on-state current). Same expectations as the plain diode.
#[test]
fn zener_clamp_matches_ngspice() {
    if !ngspice_available("zener_clamp_matches_ngspice") {
        return;
    }
    let trace = trace_of(
        &coil_stage(ClampType::Zener, Some(24.0)),
        &Library::new(),
        None,
        &Options::default(),
    );
    let t_off = deck_off(&trace);
    let wave = simulate(&coil_deck(
        10.0,
        550.0,
        0.1,
        100e-12,
        R_ON,
        t_off,
        t_off + 300e-6,
        "VD c cl DC 0\nD1 cl z DCLAMP\n.model DCLAMP D(IS=1e-9 N=1.8)\nDZ vcc z DZENER\n.model DZENER D(IS=1e-14 N=1 BV=24 IBV=1m)",
        true,
        "i(VD)",
    ));
    compare(&trace, &wave, t_off, |r| (r[1] - 10.0) * r[3], "clamp");
    let i_on = wave.at(t_off - 1e-6, 2);
    let zero_spice = wave.crossing(2, 1e-3 * i_on, t_off, false) - t_off;
    let zero_trace = falls_to(&trace, 1e-3 * trace.on_current);
    assert!(
        relative(zero_trace, zero_spice) < 0.05,
        "to zero: loadfit {zero_trace}, ngspice {zero_spice}"
    );
}

/// No clamp, a switch rated 40 V: the coil drives it into breakdown (a SPICE diode with BV
/// 40 V, IBV 1 mA from the node to ground, whose forward side is the below-ground junction).
/// Energy into the switch, ∫ v(c) i(breakdown) dt.
#[test]
fn breakdown_matches_ngspice() {
    if !ngspice_available("breakdown_matches_ngspice") {
        return;
    }
    let library = library();
    let part = library.find("TQN-40");
    let trace = trace_of(
        &coil_stage(ClampType::None, None),
        &library,
        part,
        &Options::default(),
    );
    let t_off = deck_off(&trace);
    let wave = simulate(&coil_deck(
        10.0,
        550.0,
        0.1,
        100e-12,
        R_ON,
        t_off,
        t_off + 300e-6,
        "VB c cb DC 0\nDBR 0 cb DBRK\n.model DBRK D(IS=1e-14 N=1 BV=40 IBV=1m)",
        false,
        "i(VB)",
    ));
    compare(&trace, &wave, t_off, |r| r[1] * r[3], "switch");
}

/// No clamp and no part: the ring against 100 pF (REFERENCES.md: ngspice 569 V with the
/// simulated transistor). Peak and the first fall of the current to 10 %.
#[test]
fn unclamped_ring_matches_ngspice() {
    if !ngspice_available("unclamped_ring_matches_ngspice") {
        return;
    }
    let trace = trace_of(
        &coil_stage(ClampType::None, None),
        &Library::new(),
        None,
        &Options::default(),
    );
    let t_off = deck_off(&trace);
    let wave = simulate(&coil_deck(
        10.0,
        550.0,
        0.1,
        100e-12,
        R_ON,
        t_off,
        t_off + 60e-6,
        "",
        true,
        "",
    ));
    let peak = trace.peak_voltage.unwrap_or(f64::NAN);
    let spice_peak = wave.max_after(1, t_off);
    assert!(
        relative(peak, spice_peak) < 0.03,
        "peak: loadfit {peak}, ngspice {spice_peak}"
    );
    let i_on = wave.at(t_off - 1e-6, 2);
    let spice_release = wave.crossing(2, 0.1 * i_on, t_off, false) - t_off;
    let release = trace.release_time.unwrap_or(f64::NAN);
    assert!(
        relative(release, spice_release) < 0.05,
        "release: loadfit {release}, ngspice {spice_release}"
    );
}

/// R-C load, 1 kΩ charging 100 nF through an ideal switch (1 mΩ): rise and settling of the
/// capacitor voltage against ngspice, the capacitor empty at the start (`.ic` holds both its
/// ends at the supply for the operating point). Tolerance 1 %: both integrate the same
/// first-order circuit; the issue sets no tolerance for these, so the RC reference's own
/// (REFERENCES.md: ngspice agrees with the relation to 4 digits) with room for the 100 ns
/// output grid.
#[test]
fn rc_load_matches_ngspice() {
    if !ngspice_available("rc_load_matches_ngspice") {
        return;
    }
    let mut load = Load::of(LoadType::Capacitive);
    load.resistance = Some(Ohms(1e3));
    load.capacitance = Some(Farads(100e-9));
    let mut stage = Stage::new(Volts(10.0), load);
    stage.switch.kind = SwitchType::Nmos;
    let trace = trace_of(&stage, &Library::new(), None, &Options::default());
    let t_on = trace.switch_on.unwrap_or(f64::NAN);
    let deck = format!(
        "loadfit trace R-C deck\n\
         VCC vcc 0 DC 10\n\
         RL vcc top 1k\n\
         CL top s 100n\n\
         CS s 0 100p\n\
         S1 s 0 ctl 0 SWITCH\n\
         .model SWITCH SW(VT=0.5 VH=0 RON=1m ROFF=1e12)\n\
         VCTL ctl 0 PWL(0 0 {} 0 {} 1)\n\
         DR 0 s DREV\n.model DREV D(IS=1e-14 N=1)\n\
         .ic v(top)=10 v(s)=10\n\
         {}",
        t_on - 0.5e-9,
        t_on + 0.5e-9,
        control(&format!("10n {} 0 100n", t_on + 800e-6), "v(top,s)")
    );
    let wave = simulate(&deck);
    let from = t_on;
    let rise_spice = wave.crossing(1, 9.0, from, true) - wave.crossing(1, 1.0, from, true);
    let settle_spice = wave.crossing(1, 10.0 * (1.0 - (-5.0f64).exp()), from, true) - from;
    let rise = trace.rise_time.unwrap_or(f64::NAN);
    let settle = trace.settle_time.unwrap_or(f64::NAN);
    assert!(
        relative(rise, rise_spice) < 0.01,
        "rise: loadfit {rise}, ngspice {rise_spice}"
    );
    assert!(
        relative(settle, settle_spice) < 0.01,
        "settle: loadfit {settle}, ngspice {settle_spice}"
    );
    println!("R-C: rise {rise} / {rise_spice} s, settle {settle} / {settle_spice} s");
}

/// The three figures against ngspice's waveform: columns time, v(c), i(VS), then the
/// absorber's current; `power` gives the absorber's power from a row.
fn compare(trace: &Trace, wave: &Wave, t_off: f64, power: impl Fn(&[f64]) -> f64, what: &str) {
    let peak = trace.peak_voltage.unwrap_or(f64::NAN);
    let spice_peak = wave.max_after(1, t_off);
    assert!(
        relative(peak, spice_peak) < 0.03,
        "peak: loadfit {peak}, ngspice {spice_peak}"
    );
    let i_on = wave.at(t_off - 1e-6, 2);
    assert!(
        relative(trace.on_current, i_on) < 1e-3,
        "on-state current: loadfit {}, ngspice {i_on}",
        trace.on_current
    );
    let spice_release = wave.crossing(2, 0.1 * i_on, t_off, false) - t_off;
    let release = trace.release_time.unwrap_or(f64::NAN);
    assert!(
        relative(release, spice_release) < 0.05,
        "release: loadfit {release}, ngspice {spice_release}"
    );
    let spice_energy = wave.integral_after(t_off, power);
    let energy = trace.clamp_energy.unwrap_or(f64::NAN);
    assert!(
        relative(energy, spice_energy) < 0.05,
        "{what} energy: loadfit {energy}, ngspice {spice_energy}"
    );
    println!(
        "{what}: peak {peak} / {spice_peak} V, release {release} / {spice_release} s, energy {energy} / {spice_energy} J"
    );
}

/// REFERENCES.md, plain diode (IS 1e-9, N 1.8), simulated with ngspice 39: peak 10.78 V,
/// current to 10 % in 333 µs. Tolerances the issue's: 3 % and 5 %. The reference circuit's
/// switch is a transistor model rather than a resistance, which moves neither figure by more
/// than its collector drop (tens of millivolts).
#[test]
fn diode_clamp_against_references_md() {
    let trace = trace_of(
        &coil_stage(ClampType::Diode, None),
        &Library::new(),
        None,
        &Options::default(),
    );
    let peak = trace.peak_voltage.unwrap_or(f64::NAN);
    assert!(relative(peak, 10.78) < 0.03, "peak {peak}");
    let release = trace.release_time.unwrap_or(f64::NAN);
    assert!(relative(release, 333e-6) < 0.05, "release {release}");
    println!("diode: peak {peak} V (10.78), release {release} s (333 µs)");
}

/// REFERENCES.md, diode plus 24 V zener: peak 34.82 V, current to zero in 61.8 µs.
#[test]
fn zener_clamp_against_references_md() {
    let trace = trace_of(
        &coil_stage(ClampType::Zener, Some(24.0)),
        &Library::new(),
        None,
        &Options::default(),
    );
    let peak = trace.peak_voltage.unwrap_or(f64::NAN);
    assert!(relative(peak, 34.82) < 0.03, "peak {peak}");
    // "Zero" as the needs' ngspice test takes it: 0.1 % of the on-state current.
    let zero = falls_to(&trace, 1e-3 * trace.on_current);
    assert!(relative(zero, 61.8e-6) < 0.05, "to zero {zero}");
    println!("zener: peak {peak} V (34.82), to zero {zero} s (61.8 µs)");
}

/// REFERENCES.md, no clamp, 100 pF stray: the ring peaks near 569 V (a real part breaks
/// down first). Tolerance 3 %.
#[test]
fn unclamped_ring_against_references_md() {
    let trace = trace_of(
        &coil_stage(ClampType::None, None),
        &Library::new(),
        None,
        &Options::default(),
    );
    let peak = trace.peak_voltage.unwrap_or(f64::NAN);
    assert!(relative(peak, 569.0) < 0.03, "peak {peak}");
    assert!(trace.clamp_energy.is_none());
    assert!(trace.has_errors(), "an unbounded ring is an error");
    println!("ring: peak {peak} V (569)");
}
