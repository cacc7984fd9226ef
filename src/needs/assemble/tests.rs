//! Whole-stage tests: stages built from the worked examples of REFERENCES.md, the example
//! stage files, and properties over random stages.

use super::*;
use crate::stage::{Clamp, ContactLoad, Contacts, Insulation, Load};
use proptest::prelude::*;

fn close(a: Option<f64>, b: f64, rel: f64) -> bool {
    a.is_some_and(|a| (a - b).abs() <= rel * b.abs())
}

fn value(needs: &Needs, id: &str) -> f64 {
    needs.value(id).unwrap_or(f64::NAN)
}

fn resistive(volts: f64, ohms: f64) -> Stage {
    let mut load = Load::of(LoadType::Resistive);
    load.resistance = Some(Ohms(ohms));
    Stage::new(Volts(volts), load)
}

fn coil(volts: f64, ohms: f64, henries: Option<f64>, kind: LoadType) -> Stage {
    let mut load = Load::of(kind);
    load.resistance = Some(Ohms(ohms));
    load.inductance = henries.map(Henries);
    Stage::new(Volts(volts), load)
}

const UNITS: [&str; 10] = ["V", "A", "ohm", "W", "F", "H", "s", "J", "lux", ""];

/// Every need keeps the binding shape: `role.name` id, a known unit, finite value or none,
/// working and a source.
fn assert_shape(needs: &Needs) {
    for n in &needs.needs {
        assert!(n.id.contains('.'), "{}", n.id);
        assert_eq!(n.role, n.id.split('.').next().unwrap_or(""));
        assert!(
            UNITS.contains(&n.unit.ascii()),
            "{} {}",
            n.id,
            n.unit.ascii()
        );
        assert!(n.value.is_none_or(f64::is_finite), "{}", n.id);
        assert!(!n.working.is_empty(), "{} has no working", n.id);
        assert!(!n.source.is_empty(), "{} has no source", n.id);
        assert!(!n.formula.is_empty(), "{} has no formula", n.id);
    }
    let mut seen = std::collections::HashSet::new();
    for n in &needs.needs {
        assert!(seen.insert(n.id), "{} twice", n.id);
    }
}

/// Floyd, Electronic Devices, ch. 4, example 4-9, as a stage: VCC 10 V, RC 1.0 kΩ,
/// VCE(sat) neglected, β 200, VIN 5 V, VBE 0.7 V -> IC 10 mA, IB(min) 50 µA, RB(max) 86 kΩ,
/// 82 kΩ in E12.
#[test]
fn floyd_example_4_9_as_a_stage() {
    let mut stage = resistive(10.0, 1e3);
    stage.switch.kind = SwitchType::Npn;
    stage.switch.forced_beta = 200.0;
    stage.assume.vce_sat = Volts(0.0);
    stage.drive.high = Volts(5.0);
    let needs = compute(&stage, None);
    assert_shape(&needs);
    assert!(close(needs.value(ids::LOAD_CURRENT), 10e-3, 1e-12));
    assert!(close(needs.value(ids::SWITCH_BASE_CURRENT), 50e-6, 1e-12));
    assert!(close(
        needs.value(ids::SWITCH_BASE_RESISTOR_MAX),
        86e3,
        1e-12
    ));
    assert_eq!(needs.value(ids::SWITCH_BASE_RESISTOR), Some(82e3));
    // With 82 kΩ the base gets 4.3 V / 82 kΩ = 52.4 µA: hFE 191 is needed.
    assert!(close(
        needs.value(ids::SWITCH_GAIN),
        10e-3 / (4.3 / 82e3),
        1e-12
    ));
    assert!(!needs.has_errors());
}

/// Relay driver, common practice (REFERENCES.md): 6 V, 100 Ω coil -> 60 mA; forced beta 10
/// -> IB 6 mA; 6 V drive, VBE(sat) 1 V -> RB 833 Ω -> 820 Ω (E12).
#[test]
fn relay_driver_as_a_stage_common_practice() {
    let mut stage = coil(6.0, 100.0, None, LoadType::Relay);
    stage.switch.kind = SwitchType::Npn;
    stage.assume.vce_sat = Volts(0.0);
    stage.assume.vbe_on = Volts(1.0);
    let needs = compute(&stage, None);
    assert!(close(needs.value(ids::LOAD_CURRENT), 60e-3, 1e-12));
    assert!(close(needs.value(ids::RELAY_COIL_CURRENT), 60e-3, 1e-12));
    assert!(close(needs.value(ids::SWITCH_BASE_CURRENT), 6e-3, 1e-12));
    assert!(close(
        needs.value(ids::SWITCH_BASE_RESISTOR_MAX),
        833.33,
        1e-4
    ));
    assert_eq!(needs.value(ids::SWITCH_BASE_RESISTOR), Some(820.0));
    // No [contacts]: a warning, not an error.
    assert!(
        needs
            .problems
            .iter()
            .any(|p| p.message.contains("[contacts]"))
    );
    assert!(!needs.has_errors());
}

/// REFERENCES.md simulated stage (circuit theory, ngspice 39): 10 V, coil 550 Ω + 100 mH:
/// τ 181.8 µs; with VCE(sat) 0.2 V the coil draws 17.8 mA (common practice); with a plain
/// diode of VF 0.6 V the collector stops near 10.6 V.
#[test]
fn clamped_coil_as_a_stage_circuit_theory() {
    let mut stage = coil(10.0, 550.0, Some(0.1), LoadType::Inductive);
    stage.switch.kind = SwitchType::Npn;
    stage.drive.high = Volts(5.0);
    stage.assume.diode_vf = Volts(0.6);
    let needs = compute(&stage, None);
    assert_shape(&needs);
    assert_eq!(
        format_eng(value(&needs, ids::LOAD_CURRENT), Dim::Amp),
        "17.8 mA"
    );
    assert!(close(needs.value(ids::COIL_TAU), 181.8e-6, 3e-4));
    assert!(close(needs.value(ids::SWITCH_OFF_PEAK), 10.6, 1e-12));
    assert!(close(needs.value(ids::SWITCH_VOLTAGE), 10.6 / 0.8, 1e-12));
    assert!(close(needs.value(ids::CLAMP_VOLTAGE), 12.5, 1e-12));
    let il = value(&needs, ids::LOAD_CURRENT);
    assert!(close(needs.value(ids::CLAMP_CURRENT), il / 0.8, 1e-12));
    assert!(close(
        needs.value(ids::COIL_ENERGY),
        0.5 * 0.1 * il * il,
        1e-12
    ));
    // Release to 10 % of IL with Vc = 0.6 V: τ ln((IL + Vc/R) / (0.1 IL + Vc/R)).
    let offset = 0.6 / 550.0;
    let t = 0.1 / 550.0 * ((il + offset) / (0.1 * il + offset)).ln();
    assert!(close(needs.value(ids::COIL_RELEASE_TIME), t, 1e-12));
    assert!(!needs.has_errors());
}

/// REFERENCES.md: diode plus 24 V zener on the simulated coil (peak 34.82 V in ngspice): the
/// relation gives Vs + VZ + VF, and the release is several times faster than the diode's.
#[test]
fn zener_clamp_as_a_stage_circuit_theory() {
    let mut stage = coil(10.0, 550.0, Some(0.1), LoadType::Inductive);
    let diode = compute(&stage, None);
    stage.clamp = Clamp {
        kind: ClampType::Zener,
        zener_volts: Some(Volts(24.0)),
    };
    let zener = compute(&stage, None);
    assert_shape(&zener);
    assert!(close(zener.value(ids::SWITCH_OFF_PEAK), 34.7, 1e-12));
    assert_eq!(zener.value(ids::ZENER_VOLTAGE), Some(24.0));
    let fast = value(&zener, ids::COIL_RELEASE_TIME);
    let slow = value(&diode, ids::COIL_RELEASE_TIME);
    assert!(fast < slow / 4.0, "{fast} vs {slow}");
    let stored = value(&zener, ids::COIL_ENERGY);
    let absorbed = value(&zener, ids::ZENER_ENERGY);
    assert!(absorbed > 0.0 && absorbed < stored);
}

/// An unclamped coil: the off-state peak is not bounded, an error gives the energy ½ L IL²
/// (REFERENCES.md: 16.3 µJ at 18.05 mA in 100 mH; here 17.82 mA gives 15.9 µJ).
#[test]
fn an_unclamped_coil_is_an_error_with_its_energy() {
    let mut stage = coil(10.0, 550.0, Some(0.1), LoadType::Inductive);
    stage.switch.kind = SwitchType::Npn;
    stage.clamp.kind = ClampType::None;
    let needs = compute(&stage, None);
    assert_shape(&needs);
    assert_eq!(needs.value(ids::SWITCH_OFF_PEAK), None);
    assert!(needs.get(ids::SWITCH_OFF_PEAK).is_some());
    assert_eq!(needs.value(ids::SWITCH_VOLTAGE), None);
    assert!(needs.get(ids::CLAMP_VOLTAGE).is_none());
    assert!(needs.get(ids::COIL_ENERGY).is_some());
    assert!(needs.get(ids::COIL_RELEASE_TIME).is_none());
    let error = needs
        .problems
        .iter()
        .find(|p| p.severity == Severity::Error)
        .map(|p| p.message.clone())
        .unwrap_or_default();
    assert!(error.contains("15.9 µJ"), "{error}");
    assert!(needs.has_errors());
}

/// Worked value of the trade (common practice): 1 kΩ with 0.1 µF: τ 100 µs, rise τ ln 9,
/// about 500 µs (5 τ) to settle.
#[test]
fn capacitive_load_timing_common_practice() {
    let mut load = Load::of(LoadType::Capacitive);
    load.resistance = Some(Ohms(1e3));
    load.capacitance = Some(Farads(0.1e-6));
    let needs = compute(&Stage::new(Volts(5.0), load), None);
    assert_shape(&needs);
    assert!(close(needs.value(ids::LOAD_TAU), 100e-6, 1e-12));
    assert!(close(
        needs.value(ids::LOAD_RISE_TIME),
        100e-6 * 9f64.ln(),
        1e-12
    ));
    assert!(close(needs.value(ids::LOAD_SETTLE_TIME), 500e-6, 1e-12));
    assert!(close(needs.value(ids::SWITCH_OFF_PEAK), 5.0, 1e-12));
    assert!(needs.get(ids::COIL_TAU).is_none());
}

#[test]
fn led_load_picks_the_resistor_at_or_above() {
    let mut load = Load::of(LoadType::Led);
    load.led_vf = Some(Volts(2.0));
    load.led_current = Some(Amps(10e-3));
    let mut stage = Stage::new(Volts(5.0), load);
    stage.supply.tolerance = 0.05;
    stage.switch.kind = SwitchType::Npn;
    stage.rules.eseries = crate::needs::eseries::Series::E24;
    let needs = compute(&stage, None);
    assert_shape(&needs);
    // (5.25 - 2.0 - 0.2) V / 10 mA = 305 Ω: E24 at or above is 330 Ω (300 would overdrive).
    assert_eq!(needs.value(ids::LOAD_SERIES_RESISTOR), Some(330.0));
    assert_eq!(needs.value(ids::LOAD_CURRENT), Some(10e-3));
    let i = 3.05 / 330.0;
    assert!(close(
        needs.value(ids::LOAD_SERIES_RESISTOR_POWER),
        i * i * 330.0 / 0.5,
        1e-12
    ));
}

/// REFERENCES.md divider (common-practice photocell law): 5 V, photocell on top, 10 kΩ to
/// ground, γ 0.7 gives 2.500 V at 10 lux; with 4.7 kΩ, 2.5 V is reached at 29.41 lux.
#[test]
fn light_activated_sensor_references() {
    let mut stage = resistive(5.0, 1e3);
    stage.sensor = Some(Sensor {
        activate: Activate::Light,
        on_lux: Lux(10.0),
        threshold: Volts(2.5),
        r10: Some(Ohms(10e3)),
        r10_tolerance: Some(0.3),
        gamma: Some(0.7),
        part: None,
    });
    let needs = compute(&stage, None);
    assert_shape(&needs);
    assert!(close(
        needs.value(ids::SENSOR_RESISTANCE_AT_ON),
        10e3,
        1e-12
    ));
    assert!(close(
        needs.value(ids::SENSOR_FIXED_RESISTOR_EXACT),
        10e3,
        1e-12
    ));
    assert_eq!(needs.value(ids::SENSOR_FIXED_RESISTOR), Some(10e3));
    assert!(close(needs.value(ids::SENSOR_ON_LUX), 10.0, 1e-9));
    // R10 30 % low switches at a lower light level, 30 % high at a higher one.
    assert!(value(&needs, ids::SENSOR_ON_LUX_LOW) < 10.0);
    assert!(value(&needs, ids::SENSOR_ON_LUX_HIGH) > 10.0);
    assert!(close(
        needs.value(ids::SENSOR_ON_LUX_LOW),
        10.0 * 0.7f64.powf(1.0 / 0.7),
        1e-9
    ));
    assert!(close(needs.value(ids::SENSOR_VOLTAGE), 5.0, 1e-12));
    assert!(close(
        needs.value(ids::SENSOR_POWER),
        25.0 / 40e3 / 0.5,
        1e-12
    ));

    let mut stage = stage.clone();
    if let Some(s) = stage.sensor.as_mut() {
        s.on_lux = Lux(29.41);
    }
    let needs = compute(&stage, None);
    assert_eq!(needs.value(ids::SENSOR_FIXED_RESISTOR), Some(4.7e3));
    assert!(close(needs.value(ids::SENSOR_ON_LUX), 29.41, 1e-3));
}

/// A photocell driving a BJT directly: no base resistor, the base current capped by the
/// divider, the gain the switch needs from that.
#[test]
fn photocell_drive_caps_the_base_current() {
    let mut load = Load::of(LoadType::Led);
    load.led_vf = Some(Volts(2.8));
    load.led_current = Some(Amps(6e-3));
    let mut stage = Stage::new(Volts(5.0), load);
    stage.switch.kind = SwitchType::Npn;
    stage.drive.source = DriveSource::Photocell;
    stage.sensor = Some(Sensor {
        activate: Activate::Dark,
        on_lux: Lux(10.0),
        threshold: Volts(0.7),
        r10: Some(Ohms(20e3)),
        r10_tolerance: None,
        gamma: Some(0.7),
        part: None,
    });
    let needs = compute(&stage, None);
    assert_shape(&needs);
    let drive = value(&needs, ids::SENSOR_DRIVE_CURRENT);
    assert!(drive > 0.0 && drive < 6e-4);
    assert!(close(needs.value(ids::SWITCH_BASE_CURRENT), drive, 1e-12));
    assert!(needs.get(ids::SWITCH_BASE_RESISTOR).is_none());
    assert!(close(needs.value(ids::SWITCH_GAIN), 6e-3 / drive, 1e-12));
    assert!(
        needs
            .problems
            .iter()
            .any(|p| p.need == Some(ids::SWITCH_BASE_CURRENT))
    );
    assert!(!needs.has_errors());
}

fn mains_contacts(insulation: Insulation) -> Contacts {
    Contacts {
        volts: Volts(230.0),
        ac: true,
        amps: Amps(0.5),
        kind: ContactLoad::Motor,
        inrush: None,
        insulation,
        overvoltage_category: 2,
    }
}

/// IEC 60664-1 table F.1 and the reinforced step (230 V, OVC II: basic 2500 V, reinforced
/// 4000 V), IEC 60950-1 table 5B from memory (reinforced 3000 V rms), motor inrush 6×
/// (common practice), and the mains caution of DESIGN.md section 7.
#[test]
fn mains_relay_needs_and_caution() {
    let mut stage = coil(12.0, 400.0, Some(0.2), LoadType::Relay);
    stage.supply.tolerance = 0.1;
    stage.switch.kind = SwitchType::Npn;
    stage.drive.high = Volts(3.3);
    stage.contacts = Some(mains_contacts(Insulation::Reinforced));
    let needs = compute(&stage, None);
    assert_shape(&needs);
    assert_eq!(needs.value(ids::RELAY_IMPULSE), Some(4000.0));
    assert_eq!(needs.value(ids::RELAY_DIELECTRIC), Some(3000.0));
    assert!(close(needs.value(ids::RELAY_INRUSH), 3.0, 1e-12));
    assert!(close(needs.value(ids::RELAY_CONTACT_CURRENT), 0.625, 1e-12));
    assert_eq!(needs.value(ids::RELAY_CONTACT_VOLTAGE), Some(230.0));
    assert!(close(needs.value(ids::RELAY_OPERATE_VOLTAGE), 10.6, 1e-12));
    assert!(close(needs.value(ids::RELAY_COIL_VOLTAGE_MAX), 13.0, 1e-12));
    let impulse = needs
        .get(ids::RELAY_IMPULSE)
        .map(|n| n.source.clone())
        .unwrap_or_default();
    assert!(
        impulse.contains("IEC 60664-1") && impulse.contains("confirm against the edition in force")
    );
    let caution = needs
        .problems
        .iter()
        .find(|p| p.severity == Severity::Caution)
        .map(|p| p.message.clone())
        .unwrap_or_default();
    for words in [
        "an aid",
        "local electrical codes",
        "qualified persons",
        "confirm",
    ] {
        assert!(caution.contains(words), "{words}: {caution}");
    }
    stage.contacts = Some(mains_contacts(Insulation::Basic));
    let basic = compute(&stage, None);
    assert_eq!(basic.value(ids::RELAY_IMPULSE), Some(2500.0));
    assert_eq!(basic.value(ids::RELAY_DIELECTRIC), Some(1500.0));
    stage.contacts = Some(mains_contacts(Insulation::Functional));
    let functional = compute(&stage, None);
    assert!(functional.get(ids::RELAY_IMPULSE).is_none());
    assert!(functional.get(ids::RELAY_DIELECTRIC).is_none());
    assert!(
        functional
            .problems
            .iter()
            .any(|p| p.message.contains("no protection against shock"))
    );
}

/// Common practice: a general small-signal NPN's VCEO is 40 V minimum, which covers a 12 V
/// relay stage with a diode clamp at 0.8 derating ((13.2 V + 0.7 V) / 0.8 = 17.4 V).
#[test]
fn a_small_signal_npn_covers_a_12_v_relay_common_practice() {
    let mut stage = coil(12.0, 400.0, Some(0.2), LoadType::Relay);
    stage.supply.tolerance = 0.1;
    stage.switch.kind = SwitchType::Npn;
    let needs = compute(&stage, None);
    let need = value(&needs, ids::SWITCH_VOLTAGE);
    assert!(close(Some(need), 13.9 / 0.8, 1e-12));
    assert!(need <= 40.0);
}

#[test]
fn hazard_threshold_is_more_than_50_v_ac_or_120_v_dc() {
    let mut stage = coil(12.0, 400.0, None, LoadType::Relay);
    let caution = |stage: &Stage| {
        compute(stage, None)
            .problems
            .iter()
            .any(|p| p.severity == Severity::Caution)
    };
    let mut contacts = mains_contacts(Insulation::Reinforced);
    contacts.volts = Volts(48.0);
    stage.contacts = Some(contacts);
    assert!(!caution(&stage));
    contacts.volts = Volts(60.0);
    stage.contacts = Some(contacts);
    assert!(caution(&stage));
    contacts.ac = false;
    contacts.volts = Volts(110.0);
    stage.contacts = Some(contacts);
    assert!(!caution(&stage));
    contacts.volts = Volts(125.0);
    stage.contacts = Some(contacts);
    assert!(caution(&stage));
}

/// A logic drive capped below IL / forced_beta: a warning, and the base resistor picked at or
/// above the limit so the source is not overloaded.
#[test]
fn a_capped_drive_warns_and_protects_the_source() {
    let mut stage = coil(12.0, 24.0, Some(0.06), LoadType::Inductive);
    stage.switch.kind = SwitchType::Npn;
    stage.drive.high = Volts(3.3);
    stage.drive.max_current = Some(Amps(8e-3));
    let needs = compute(&stage, None);
    assert_eq!(needs.value(ids::SWITCH_BASE_CURRENT), Some(8e-3));
    let rb = value(&needs, ids::SWITCH_BASE_RESISTOR);
    assert!(2.6 / rb <= 8e-3 * (1.0 + 1e-9), "{rb}");
    assert!(
        needs
            .problems
            .iter()
            .any(|p| p.severity == Severity::Warning && p.need == Some(ids::SWITCH_BASE_CURRENT))
    );
}

#[test]
fn mosfet_drive_needs() {
    let mut stage = resistive(12.0, 24.0);
    stage.switch.kind = SwitchType::Nmos;
    stage.drive.high = Volts(3.3);
    let needs = compute(&stage, None);
    assert_shape(&needs);
    assert_eq!(needs.value(ids::SWITCH_GATE_DRIVE), Some(3.3));
    assert_eq!(needs.value(ids::SWITCH_GATE_THRESHOLD), Some(1.65));
    assert!(needs.get(ids::SWITCH_BASE_CURRENT).is_none());
    // V_sat is 0 for a MOSFET: 12 V / 24 Ω.
    assert!(close(needs.value(ids::LOAD_CURRENT), 0.5, 1e-12));
    stage.switch.kind = SwitchType::Any;
    let any = compute(&stage, None);
    assert!(
        any.get(ids::SWITCH_GATE_DRIVE).is_some() && any.get(ids::SWITCH_BASE_CURRENT).is_some()
    );
    stage.switch.kind = SwitchType::Pmos;
    let pmos = compute(&stage, None);
    assert!(
        pmos.problems
            .iter()
            .any(|p| p.message.contains("level shifter"))
    );
}

/// The named relay comes from the library and is held against its needs.
#[test]
fn a_named_relay_supplies_its_coil_and_is_checked() {
    let csv = "part,kind,coil_v,coil_r,coil_l,must_operate_v,must_release_v,coil_v_max,contact_a_dc,contact_v_dc\n\
               RLY-T1,relay,12 V,400 ohm,200 mH,9 V,1.2 V,15.6 V,10 A,30 V\n\
               NPN-T1,npn,,,,,,,,\n";
    let mut library = Library::new();
    if let Err(e) = library.add_bytes("test.csv", csv.as_bytes()) {
        panic!("{e}");
    }
    let mut load = Load::of(LoadType::Relay);
    load.relay = Some("rly-t1".into());
    let mut stage = Stage::new(Volts(12.0), load);
    stage.switch.kind = SwitchType::Npn;
    stage.contacts = Some(Contacts {
        volts: Volts(48.0),
        ac: false,
        amps: Amps(1.0),
        kind: ContactLoad::Resistive,
        inrush: None,
        insulation: Insulation::Functional,
        overvoltage_category: 1,
    });
    let needs = compute(&stage, Some(&library));
    assert_shape(&needs);
    assert!(close(needs.value(ids::LOAD_CURRENT), 11.8 / 400.0, 1e-12));
    // I_rel from the relay's must-release voltage: 1.2 V / 400 Ω.
    let working = needs
        .get(ids::COIL_RELEASE_TIME)
        .map(|n| n.working.join(" "))
        .unwrap_or_default();
    assert!(working.contains("3.00 mA"), "{working}");
    // 30 V dc contacts on a 48 V dc line: an error naming the part.
    assert!(needs.problems.iter().any(|p| p.severity == Severity::Error
        && p.need == Some(ids::RELAY_CONTACT_VOLTAGE)
        && p.message.contains("RLY-T1")));
    assert!(
        needs
            .problems
            .iter()
            .any(|p| p.message.contains("about 30 V"))
    );

    stage.load.relay = Some("NPN-T1".into());
    let wrong = compute(&stage, Some(&library));
    assert!(
        wrong
            .problems
            .iter()
            .any(|p| p.message.contains("not a relay"))
    );
    stage.load.relay = Some("NO-SUCH".into());
    let missing = compute(&stage, Some(&library));
    assert!(missing.get(ids::LOAD_CURRENT).is_none());
    assert!(missing.has_errors());
}

/// Every example stage in data/stages reads, gives needs in the binding shape, and has no
/// error with the built-in demo library (each was also reviewed by hand).
#[test]
fn example_stages_compute_without_errors() {
    let folder = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("data/stages");
    let Ok(entries) = std::fs::read_dir(&folder) else {
        return;
    };
    let library = Library::demo();
    let mut count = 0;
    for entry in entries.flatten() {
        let path = entry.path();
        if path.extension().is_none_or(|e| e != "toml") {
            continue;
        }
        let stage = Stage::read(&path).unwrap_or_else(|e| panic!("{e}"));
        let needs = compute(&stage, Some(&library));
        assert_shape(&needs);
        let errors: Vec<_> = needs
            .problems
            .iter()
            .filter(|p| p.severity == Severity::Error)
            .collect();
        assert!(errors.is_empty(), "{}: {errors:?}", path.display());
        if stage
            .contacts
            .is_some_and(|c| isolation::is_hazardous(c.volts, c.ac))
        {
            assert!(
                needs
                    .problems
                    .iter()
                    .any(|p| p.severity == Severity::Caution)
            );
        }
        count += 1;
    }
    assert!(count >= 5, "{count} example stages");
}

fn any_load() -> impl Strategy<Value = LoadType> {
    prop::sample::select(vec![
        LoadType::Resistive,
        LoadType::Led,
        LoadType::Capacitive,
        LoadType::Inductive,
        LoadType::Relay,
    ])
}

fn any_clamp() -> impl Strategy<Value = ClampType> {
    prop::sample::select(vec![ClampType::None, ClampType::Diode, ClampType::Zener])
}

fn any_switch() -> impl Strategy<Value = SwitchType> {
    prop::sample::select(vec![
        SwitchType::Npn,
        SwitchType::Pnp,
        SwitchType::Nmos,
        SwitchType::Pmos,
        SwitchType::Any,
    ])
}

prop_compose! {
    fn any_stage()(
        volts in 1.0f64..400.0,
        tolerance in 0.0f64..0.3,
        kind in any_load(),
        ohms in 1.0f64..1e5,
        henries in 1e-4f64..2.0,
        farads in 1e-9f64..1e-3,
        clamp in any_clamp(),
        zener in 1.0f64..100.0,
        switch in any_switch(),
        high in 0.5f64..24.0,
        beta in 1.0f64..100.0,
        contact_volts in 1.0f64..700.0,
        ac: bool,
        sensor: bool,
        lux in 0.1f64..1000.0,
    ) -> Stage {
        let mut load = Load::of(kind);
        load.resistance = Some(Ohms(ohms));
        load.inductance = Some(Henries(henries));
        load.capacitance = Some(Farads(farads));
        load.led_vf = Some(Volts(2.0));
        load.led_current = Some(Amps(0.01));
        let mut stage = Stage::new(Volts(volts), load);
        stage.supply.tolerance = tolerance;
        stage.clamp = Clamp { kind: clamp, zener_volts: Some(Volts(zener)) };
        stage.switch.kind = switch;
        stage.switch.forced_beta = beta;
        stage.drive.high = Volts(high);
        stage.contacts = Some(Contacts {
            volts: Volts(contact_volts),
            ac,
            amps: Amps(1.0),
            kind: ContactLoad::Lamp,
            inrush: None,
            insulation: Insulation::Reinforced,
            overvoltage_category: 3,
        });
        if sensor && volts > 1.0 {
            stage.sensor = Some(Sensor {
                activate: if ac { Activate::Light } else { Activate::Dark },
                on_lux: Lux(lux),
                threshold: Volts(0.7),
                r10: Some(Ohms(20e3)),
                r10_tolerance: Some(0.2),
                gamma: Some(0.7),
                part: None,
            });
        }
        stage
    }
}

proptest! {
    /// The off-state peak never falls below Vs_max (circuit theory: a clamp only adds to it),
    /// and every stage gives needs in the binding shape without panicking.
    #[test]
    fn off_peak_is_never_below_the_supply_maximum(stage in any_stage()) {
        let needs = compute(&stage, None);
        assert_shape(&needs);
        let vs_max = stage.supply.max().0;
        if let Some(peak) = needs.value(ids::SWITCH_OFF_PEAK) {
            prop_assert!(peak >= vs_max * (1.0 - 1e-12), "{} < {}", peak, vs_max);
        } else {
            prop_assert!(stage.load.kind.is_coil() && stage.clamp.kind == ClampType::None);
            prop_assert!(needs.has_errors());
        }
    }

    /// A stricter derating (a smaller factor: a part may work at a smaller share of its
    /// rating) never lowers a need, and only the derated needs change (common practice:
    /// need = stress / factor).
    #[test]
    fn stricter_derating_never_lowers_a_need(
        stage in any_stage(),
        dv in 0.3f64..1.0, di in 0.3f64..1.0, dp in 0.2f64..1.0,
        shrink in 0.5f64..1.0,
    ) {
        let mut loose = stage.clone();
        loose.rules.voltage_derating = dv;
        loose.rules.current_derating = di;
        loose.rules.power_derating = dp;
        let mut strict = loose.clone();
        strict.rules.voltage_derating = dv * shrink;
        strict.rules.current_derating = di * shrink;
        strict.rules.power_derating = dp * shrink;
        let a = compute(&loose, None);
        let b = compute(&strict, None);
        prop_assert_eq!(a.needs.len(), b.needs.len());
        for (x, y) in a.needs.iter().zip(&b.needs) {
            prop_assert_eq!(x.id, y.id);
            if x.bound == Bound::Min && let (Some(p), Some(q)) = (x.value, y.value) {
                prop_assert!(q >= p * (1.0 - 1e-12), "{}: {} -> {}", x.id, p, q);
            }
        }
    }
}

/// Worked value: the dissipation of a saturated BJT at the relay driver's figures,
/// 0.2 V × 60 mA + 1 V × 6 mA = 18 mW (circuit theory), and the power need at 0.5 derating.
#[test]
fn bjt_dissipation_and_power_need() {
    let mut stage = coil(6.0, 100.0, None, LoadType::Relay);
    stage.switch.kind = SwitchType::Npn;
    stage.assume.vce_sat = Volts(0.0);
    stage.assume.vbe_on = Volts(1.0);
    let needs = compute(&stage, None);
    // RB 820 Ω gives 5 V / 820 Ω = 6.10 mA; VCE(sat) is 0 in this stage.
    let ib = 5.0 / 820.0;
    assert!(close(needs.value(ids::SWITCH_DISSIPATION), ib, 1e-12));
    assert!(close(needs.value(ids::SWITCH_POWER), ib / 0.5, 1e-12));
}
