//! Trace speed: one switching edge of a coil stage, a few milliseconds of circuit time, as the
//! workbench computes it for every candidate the cursor lands on. `cargo bench --bench trace`.
//! The bar: well under 50 ms in release.

use loadfit::library::Library;
use loadfit::needs;
use loadfit::stage::{Clamp, ClampType, Load, LoadType, Stage, SwitchType};
use loadfit::trace;
use loadfit::units::{Farads, Henries, Ohms, Volts};

fn main() {
    divan::main();
}

/// A stage with a coil and the given clamp: the door strike of the demo stages (12 V,
/// 24 Ω + 60 mH, a few milliseconds of decay) or, with `l` and `r` given, another coil.
fn coil(volts: f64, r: f64, l: f64, kind: ClampType, zener: Option<f64>) -> Stage {
    let mut load = Load::of(LoadType::Inductive);
    load.resistance = Some(Ohms(r));
    load.inductance = Some(Henries(l));
    let mut stage = Stage::new(Volts(volts), load);
    stage.switch.kind = SwitchType::Npn;
    stage.clamp = Clamp {
        kind,
        zener_volts: zener.map(Volts),
    };
    stage
}

fn bench_stage(bencher: divan::Bencher, stage: &Stage) {
    let library = Library::new();
    let needs = needs::compute(stage, None);
    bencher.bench(|| {
        trace::simulate(divan::black_box(stage), &needs, &library, None)
            .map(|t| t.points.len())
            .unwrap_or(0)
    });
}

/// Plain diode, 12 V, 24 Ω + 60 mH: about 9 ms of circuit time.
#[divan::bench]
fn diode_clamp(bencher: divan::Bencher) {
    bench_stage(bencher, &coil(12.0, 24.0, 0.06, ClampType::Diode, None));
}

/// Diode plus 24 V zener, 24 V, 80 Ω + 150 mH: about 2 ms.
#[divan::bench]
fn zener_clamp(bencher: divan::Bencher) {
    bench_stage(
        bencher,
        &coil(24.0, 80.0, 0.15, ClampType::Zener, Some(24.0)),
    );
}

/// No clamp, the ring against 100 pF.
#[divan::bench]
fn unclamped_ring(bencher: divan::Bencher) {
    bench_stage(bencher, &coil(10.0, 550.0, 0.1, ClampType::None, None));
}

/// R-C load, 4.7 Ω charging 470 µF: about 20 ms.
#[divan::bench]
fn rc_load(bencher: divan::Bencher) {
    let mut load = Load::of(LoadType::Capacitive);
    load.resistance = Some(Ohms(4.7));
    load.capacitance = Some(Farads(470e-6));
    let stage = Stage::new(Volts(5.0), load);
    bench_stage(bencher, &stage);
}
