//! loadfit's τ-based figures against ngspice, an independent circuit simulator (Debian package
//! `ngspice`, run as `ngspice -b`). Each test writes a deck, simulates it, reads the waveform
//! ngspice writes and compares it with what `loadfit::needs` computes for the same stage,
//! within a tolerance stated and justified beside each check.
//!
//! Without ngspice the tests print that they skipped; with `CI=true` they fail instead, so CI
//! never passes without the reference having run.

use loadfit::needs::{self, ids, inductive};
use loadfit::stage::{Clamp, ClampType, Load, LoadType, Stage, SwitchType};
use loadfit::units::{Amps, Farads, Henries, Ohms, Volts};

#[path = "common/ngspice.rs"]
mod ngspice;
use ngspice::{control, ngspice_available, relative, simulate};

/// RC step, 1 kΩ and 100 nF (τ 100 µs) driven by a 1 V step: ngspice's v/V∞ at 1..5 τ
/// against 1 - e^(-n) (REFERENCES.md: ngspice 39 agrees to 4 digits), the 10-90 % rise
/// against load.rise_time = τ ln 9 and the 5 τ settling against load.settle_time.
/// Tolerance 0.1 %: the step is 0.001 τ and the 1 ns edge is 10⁻⁵ τ, so the simulation's own
/// error is far below it.
#[test]
fn rc_step_matches_loadfit_timing() {
    if !ngspice_available("rc_step_matches_loadfit_timing") {
        return;
    }
    let mut load = Load::of(LoadType::Capacitive);
    load.resistance = Some(Ohms(1e3));
    load.capacitance = Some(Farads(100e-9));
    let stage = Stage::new(Volts(1.0), load);
    let needs = needs::compute(&stage, None);
    let tau = needs.value(ids::LOAD_TAU).unwrap_or(f64::NAN);
    let rise = needs.value(ids::LOAD_RISE_TIME).unwrap_or(f64::NAN);
    let settle = needs.value(ids::LOAD_SETTLE_TIME).unwrap_or(f64::NAN);

    let deck = format!(
        "loadfit RC step\nV1 in 0 PULSE(0 1 0 1n 1n 1 2)\nR1 in out 1k\nC1 out 0 100n\n{}",
        control("0.1u 600u 0 0.1u", "v(out)")
    );
    let wave = simulate(&deck);
    for n in 1..=5 {
        let t = n as f64 * tau;
        let simulated = wave.at(t + 1e-9, 1);
        let expected = 1.0 - (-(n as f64)).exp();
        assert!(
            relative(simulated, expected) < 1e-3,
            "{n} τ: ngspice {simulated}, relation {expected}"
        );
    }
    let t10 = wave.crossing(1, 0.1, 0.0, true);
    let t90 = wave.crossing(1, 0.9, 0.0, true);
    assert!(
        relative(t90 - t10, rise) < 1e-3,
        "rise: ngspice {} s, loadfit {rise} s",
        t90 - t10
    );
    let settled = wave.at(settle + 1e-9, 1);
    assert!((0.993..0.9935).contains(&settled), "at 5 τ: {settled}");
}

/// The coil stage REFERENCES.md simulates: 10 V, coil 550 Ω + 100 mH, NPN (IS 1e-14, BF 100)
/// driven with 5 V through 2.2 kΩ.
fn coil_stage(clamp: Clamp) -> Stage {
    let mut load = Load::of(LoadType::Inductive);
    load.resistance = Some(Ohms(550.0));
    load.inductance = Some(Henries(0.1));
    let mut stage = Stage::new(Volts(10.0), load);
    stage.switch.kind = SwitchType::Npn;
    stage.drive.high = Volts(5.0);
    stage.clamp = clamp;
    stage
}

/// The coil deck; `clamp` holds the clamp's lines between the collector `c` and the supply.
fn coil_deck(clamp: &str) -> String {
    format!(
        "loadfit coil at switch-off\n\
         VCC vcc 0 DC 10\n\
         VS vcc top DC 0\n\
         RC top mid 550\n\
         LC mid c 100m\n\
         {clamp}\n\
         .model DCLAMP D(IS=1e-9 N=1.8)\n\
         Q1 c b 0 QSW\n\
         .model QSW NPN(IS=1e-14 BF=100)\n\
         VIN in 0 PULSE(0 5 0 10n 10n 2m 10m)\n\
         RB in b 2.2k\n\
         {}",
        control("0.05u 3m 0 0.05u", "v(c) i(VS)")
    )
}

/// The drive falls at 2 ms + the 10 ns rise.
const SWITCH_OFF: f64 = 2.0e-3 + 10e-9;

/// Plain diode clamp: on-state current, collector peak and the release to 10 % of IL.
#[test]
fn coil_with_diode_matches_loadfit() {
    if !ngspice_available("coil_with_diode_matches_loadfit") {
        return;
    }
    let stage = coil_stage(Clamp {
        kind: ClampType::Diode,
        zener_volts: None,
    });
    let needs = needs::compute(&stage, None);
    let il = needs.value(ids::LOAD_CURRENT).unwrap_or(f64::NAN);
    let peak = needs.value(ids::SWITCH_OFF_PEAK).unwrap_or(f64::NAN);
    let release = needs.value(ids::COIL_RELEASE_TIME).unwrap_or(f64::NAN);
    let tau = needs.value(ids::COIL_TAU).unwrap_or(f64::NAN);

    let wave = simulate(&coil_deck("D1 c vcc DCLAMP"));
    let i_on = wave.at(1.99e-3, 2);
    // On-state current, REFERENCES.md 18.05 mA. Tolerance 2 %: loadfit assumes VCE(sat)
    // 0.2 V; the model saturates at about 0.065 V at this forced beta, 0.135 V on 9.8 V (1.4 %).
    assert!(
        relative(il, i_on) < 0.02,
        "IL: loadfit {il}, ngspice {i_on}"
    );
    assert!((tau - 0.1 / 550.0).abs() < 1e-12);

    // Collector peak, REFERENCES.md 10.78 V. Tolerance 1.5 %: loadfit assumes VF 0.7 V; the
    // model's diode gives n Vt ln(I/IS) = 0.78 V at 18 mA (0.08 V on 10.7 V, 0.8 %).
    let v_peak = wave.max_after(1, SWITCH_OFF);
    assert!(
        relative(peak, v_peak) < 0.015,
        "peak: loadfit {peak}, ngspice {v_peak}"
    );
    // With the diode equation's own VF (Shockley, n 1.8, IS 1 nA, Vt at 27 °C) the relation
    // Vs + VF matches to 0.2 % (what is left is the collector's own drop at the peak).
    let vt = 1.380649e-23 * 300.15 / 1.602176634e-19;
    let vf = 1.8 * vt * (i_on / 1e-9).ln();
    assert!(
        relative(10.0 + vf, v_peak) < 0.002,
        "Vs + VF(I0) = {}, ngspice {v_peak}",
        10.0 + vf
    );

    // Release to 10 % of IL, REFERENCES.md 333 µs. Tolerance 3 %: the relation holds Vc
    // constant, while the diode's VF falls from 0.78 V to about 0.67 V as the current decays.
    let t10 = wave.crossing(2, 0.1 * i_on, SWITCH_OFF, false) - SWITCH_OFF;
    assert!(
        relative(release, t10) < 0.03,
        "release: loadfit {release}, ngspice {t10}"
    );
}

/// Diode plus 24 V zener clamp: collector peak Vs + VZ + VF and the time for the current to
/// reach zero.
#[test]
fn coil_with_diode_and_zener_matches_loadfit() {
    if !ngspice_available("coil_with_diode_and_zener_matches_loadfit") {
        return;
    }
    let stage = coil_stage(Clamp {
        kind: ClampType::Zener,
        zener_volts: Some(Volts(24.0)),
    });
    let needs = needs::compute(&stage, None);
    let il = needs.value(ids::LOAD_CURRENT).unwrap_or(f64::NAN);
    let peak = needs.value(ids::SWITCH_OFF_PEAK).unwrap_or(f64::NAN);

    let wave = simulate(&coil_deck(
        "D1 c z DCLAMP\nDZ vcc z DZENER\n.model DZENER D(IS=1e-14 BV=24 IBV=1m)",
    ));
    // Collector peak, REFERENCES.md 34.82 V (this zener model: 34.9 V). Tolerance 1 %: the
    // assumed VF 0.7 V against 0.78 V, and the zener's rise above BV at 18 mA (n Vt ln(18) ≈ 0.075 V).
    let v_peak = wave.max_after(1, SWITCH_OFF);
    assert!(
        relative(peak, v_peak) < 0.01,
        "peak: loadfit {peak}, ngspice {v_peak}"
    );

    // Time to zero, REFERENCES.md 61.8 µs (relation 61.2 µs), with loadfit's IL and
    // Vc = VZ + VF. The simulated current is taken as zero at 0.1 % of I0. Tolerance 3 %: the
    // relation holds Vc constant, the diodes' drops fall as the current decays, and loadfit's
    // IL is 1.4 % low (its VCE(sat) assumption, see above).
    let vc = Volts(24.0) + stage.assume.diode_vf;
    let t0 = inductive::release_time(Henries(0.1), Ohms(550.0), Amps(il), vc, Amps(0.0))
        .map_or(f64::NAN, |w| w.value.value());
    let i_on = wave.at(1.99e-3, 2);
    let simulated = wave.crossing(2, 1e-3 * i_on, SWITCH_OFF, false) - SWITCH_OFF;
    assert!(
        relative(t0, simulated) < 0.03,
        "to zero: loadfit {t0}, ngspice {simulated}"
    );
    // The release time loadfit reports (to 10 % of IL, no relay figure) agrees too.
    let release = needs.value(ids::COIL_RELEASE_TIME).unwrap_or(f64::NAN);
    let t10 = wave.crossing(2, 0.1 * i_on, SWITCH_OFF, false) - SWITCH_OFF;
    assert!(
        relative(release, t10) < 0.03,
        "release: loadfit {release}, ngspice {t10}"
    );
}
