//! From a stage to its needs: the topic relations applied in order (supply, load, switch,
//! drive, clamp and coil, relay, sensor), each need with its working, and the problems found
//! on the way.

use super::eseries::{self, Preferred};
use super::inductive;
use super::isolation::{self, DielectricNeed, ImpulseNeed};
use super::photocell;
use super::relay;
use super::switching::{self, OffState};
use super::thermal;
use super::timing;
use super::{Bound, Need, Needs, Problem, Severity, Unit, Worked, ids, sources};
use crate::library::{Kind, Library, Part};
use crate::stage::{Activate, ClampType, DriveSource, LoadType, Sensor, Stage, SwitchType};
use crate::units::{Amps, Dim, Farads, Henries, Lux, Ohms, Volts, format_eng, format_number};

/// Computes every need of `stage`. `library`, when given, supplies the figures of the relay
/// (`load.relay`) and photocell (`sensor.part`) the stage names, and those parts are held
/// against their needs; without it only the stage's own figures are used.
///
/// Never fails: what cannot be computed is left out or unbounded, with a problem saying why.
#[must_use]
pub fn compute(stage: &Stage, library: Option<&Library>) -> Needs {
    let mut builder = Builder {
        stage,
        library,
        out: Needs {
            stage: stage.title.clone(),
            needs: Vec::new(),
            problems: Vec::new(),
        },
    };
    builder.run();
    builder.out
}

/// The photocell divider worked out once, used by the drive and the sensor needs.
struct Divider {
    activate: Activate,
    r10: Ohms,
    tolerance: f64,
    gamma: f64,
    r_on: Ohms,
    exact: Worked<Ohms>,
    pick: Preferred,
    threshold: Volts,
    on_lux: Lux,
    /// Current into the switch input one decade past the switching level, at Vs_min.
    drive: Worked<Amps>,
    /// Open-circuit node voltage one decade past the switching level, at Vs_min.
    open: Volts,
    /// Where r10, gamma and the tolerance came from, for the working.
    origin: String,
}

struct Builder<'a> {
    stage: &'a Stage,
    library: Option<&'a Library>,
    out: Needs,
}

impl<'a> Builder<'a> {
    #[allow(clippy::too_many_arguments)]
    fn need(
        &mut self,
        id: &'static str,
        bound: Bound,
        unit: Unit,
        value: Option<f64>,
        formula: &str,
        working: Vec<String>,
        source: &str,
    ) {
        let mut need = Need::new(id, bound, unit, value);
        need.formula = formula.to_string();
        need.working = working;
        need.source = source.to_string();
        self.out.needs.push(need);
    }

    fn worked<T>(
        &mut self,
        id: &'static str,
        bound: Bound,
        unit: Unit,
        value: f64,
        formula: &str,
        worked: Worked<T>,
    ) {
        self.need(
            id,
            bound,
            unit,
            Some(value),
            formula,
            worked.working,
            worked.source,
        );
    }

    fn problem(&mut self, severity: Severity, need: Option<&'static str>, message: String) {
        self.out.problems.push(Problem {
            severity,
            need,
            message,
        });
    }

    /// A derated need: stress / factor, with the stress's own derivation named.
    #[allow(clippy::too_many_arguments)]
    fn derated(
        &mut self,
        id: &'static str,
        unit: Unit,
        stress: f64,
        factor: f64,
        stress_name: &str,
        factor_name: &str,
        note: &str,
    ) {
        let worked = switching::derated(stress, factor, unit.dim(), stress_name, factor_name)
            .with(note.to_string());
        let formula = format!("{stress_name} / {factor_name}");
        self.worked(id, Bound::Min, unit, worked.value, &formula, worked);
    }

    /// Holds a named part's rating against a need already computed; a rating on the wrong side
    /// is a problem of `severity`. A missing rating is left to the fit (`unknown`).
    fn hold(
        &mut self,
        part: &str,
        id: &'static str,
        rating: Option<f64>,
        rating_name: &str,
        severity: Severity,
        consequence: &str,
    ) {
        let Some(need) = self.out.get(id) else {
            return;
        };
        let (Some(value), Some(rating)) = (need.value, rating) else {
            return;
        };
        let short = match need.bound {
            Bound::Min => rating < value * (1.0 - 1e-9),
            Bound::Max => rating > value * (1.0 + 1e-9),
            Bound::Value => false,
        };
        if short {
            let dim = need.unit.dim();
            let relation = if need.bound == Bound::Min {
                "below"
            } else {
                "above"
            };
            let message = format!(
                "{part}: {rating_name} {} is {relation} the {} the stage needs ({id}): {consequence}",
                format_eng(rating, dim),
                format_eng(value, dim)
            );
            self.problem(severity, Some(id), message);
        }
    }

    fn run(&mut self) {
        let stage = self.stage;
        for note in &stage.notes {
            self.problem(Severity::Warning, None, note.clone());
        }
        let (max, min) = switching::supply_extremes(stage.supply.volts, stage.supply.tolerance);
        let (vs_max, vs_min) = (max.value, min.value);
        self.worked(
            ids::SUPPLY_MAX,
            Bound::Value,
            Unit::Volt,
            vs_max.0,
            "Vs × (1 + tolerance)",
            max,
        );
        self.worked(
            ids::SUPPLY_MIN,
            Bound::Value,
            Unit::Volt,
            vs_min.0,
            "Vs × (1 - tolerance)",
            min,
        );

        let relay_part = self.relay_part();
        let (resistance, inductance) = self.coil_figures(relay_part);
        let divider = self.divider();

        let il = self.load(vs_max, resistance);
        self.off_state(vs_max, il, inductance);
        if let Some(il) = il {
            if stage.switch.kind.has_bjt_drive() {
                self.bjt_drive(il, divider.as_ref());
            }
            if stage.switch.kind.has_mosfet_drive() {
                self.mosfet_drive(divider.as_ref());
            }
            if stage.load.kind.is_coil() {
                self.coil(vs_max, il, resistance, inductance, relay_part);
            }
            if stage.load.kind == LoadType::Relay {
                self.relay(vs_max, vs_min, il, relay_part);
            }
        }
        self.high_side_warnings();
        if let (Some(sensor), Some(divider)) = (&stage.sensor, divider.as_ref()) {
            self.sensor(sensor, divider, vs_max);
        }
    }

    /// The relay part named by `load.relay`, when the library has it and it is a relay.
    fn relay_part(&mut self) -> Option<&'a Part> {
        let number = self.stage.load.relay.as_deref()?;
        if self.stage.load.kind != LoadType::Relay {
            return None;
        }
        self.named_part(number, "[load] relay", Kind::Relay)
    }

    /// A part named in the stage, with a problem when it cannot be used.
    fn named_part(&mut self, number: &str, key: &str, kind: Kind) -> Option<&'a Part> {
        let Some(library) = self.library else {
            self.problem(
                Severity::Warning,
                None,
                format!("{key} = \"{number}\": no library given, so only the stage's own figures are used"),
            );
            return None;
        };
        match library.find(number) {
            Some(part) if part.kind == kind => Some(part),
            Some(part) => {
                let message = format!(
                    "{key} = \"{number}\" is a {} in the library, not a {}; name a {} part",
                    part.kind,
                    kind.name(),
                    kind.name()
                );
                self.problem(Severity::Error, None, message);
                None
            }
            None => {
                let message = format!(
                    "{key} = \"{number}\" is not in the library; check the part number or pass the library that holds it with --parts"
                );
                self.problem(Severity::Warning, None, message);
                None
            }
        }
    }

    /// Coil resistance and inductance: the stage's, else the named relay's.
    fn coil_figures(&mut self, part: Option<&'a Part>) -> (Option<Ohms>, Option<Henries>) {
        let load = &self.stage.load;
        let rated = part.and_then(Part::relay);
        let from_part_r = rated.and_then(|r| r.coil_r.get()).map(Ohms);
        let from_part_l = rated.and_then(|r| r.coil_l.get()).map(Henries);
        if let (Some(own), Some(theirs), Some(p)) = (load.resistance, from_part_r, part)
            && (own.0 / theirs.0 - 1.0).abs() > 0.05
        {
            let message = format!(
                "[load] resistance {own} differs from {}'s coil_r {theirs}: the stage's figure is used",
                p.number
            );
            self.problem(Severity::Warning, None, message);
        }
        let resistance = load.resistance.or(from_part_r);
        if load.kind == LoadType::Relay && resistance.is_none() {
            self.problem(
                Severity::Error,
                Some(ids::LOAD_CURRENT),
                "the coil resistance is unknown: give [load] resistance, or a relay part (with coil_r) that the library holds".to_string(),
            );
        }
        let inductance = if load.kind.is_coil() {
            load.inductance.or(from_part_l)
        } else {
            None
        };
        (resistance, inductance)
    }

    /// The load's current and its own needs (LED resistor, RC timing).
    fn load(&mut self, vs_max: Volts, resistance: Option<Ohms>) -> Option<Amps> {
        let stage = self.stage;
        let v_sat = stage.v_sat();
        if stage.load.kind == LoadType::Led {
            return self.led(vs_max, v_sat);
        }
        let r = resistance?;
        let Some(worked) = switching::load_current(vs_max, v_sat, r) else {
            let message = format!(
                "the supply ({vs_max} at most) does not exceed the switch's V_sat ({v_sat}): no current can flow"
            );
            self.problem(Severity::Error, Some(ids::LOAD_CURRENT), message);
            return None;
        };
        let il = worked.value;
        let mut worked = worked.with(format!(
            "V_sat = {v_sat} ({})",
            if v_sat.0 > 0.0 {
                "assume.vce_sat for a BJT switch"
            } else {
                "0 for a MOSFET or any switch: its drop is IL × RDS(on), per part"
            }
        ));
        if stage.load.kind == LoadType::Capacitive {
            worked = worked.with(
                "for a capacitive load this is the peak charging current at switch-on".to_string(),
            );
        }
        self.worked(
            ids::LOAD_CURRENT,
            Bound::Value,
            Unit::Amp,
            il.0,
            "(Vs_max - V_sat) / R",
            worked,
        );
        if let (LoadType::Capacitive, Some(c)) = (stage.load.kind, stage.load.capacitance) {
            self.rc(r, c);
        }
        Some(il)
    }

    fn led(&mut self, vs_max: Volts, v_sat: Volts) -> Option<Amps> {
        let stage = self.stage;
        let (Some(vf), Some(current)) = (stage.load.led_vf, stage.load.led_current) else {
            // The stage reader requires both for an LED load.
            return None;
        };
        self.need(
            ids::LOAD_CURRENT,
            Bound::Value,
            Unit::Amp,
            Some(current.0),
            "led_current",
            vec![format!(
                "IL = led_current = {current}: the series resistor sets it"
            )],
            sources::CIRCUIT_THEORY,
        );
        let series = stage.rules.eseries;
        match switching::led_series_resistor(vs_max, vf, v_sat, current, series) {
            Some(worked) => {
                let r = Ohms(worked.value.value());
                self.worked(
                    ids::LOAD_SERIES_RESISTOR,
                    Bound::Value,
                    Unit::Ohm,
                    r.0,
                    "E-series >= (Vs_max - led_vf - V_sat) / led_current",
                    worked,
                );
                let actual: Amps = (vs_max - vf - v_sat) / r;
                let p = switching::resistor_power(actual, r);
                let worked = switching::derated(
                    p.0,
                    stage.rules.power_derating,
                    Dim::Watt,
                    "P(R)",
                    "power_derating",
                )
                .with(format!("P(R) = I² R = ({actual})² × {r} = {p} at Vs_max"));
                self.worked(
                    ids::LOAD_SERIES_RESISTOR_POWER,
                    Bound::Min,
                    Unit::Watt,
                    worked.value,
                    "I² R / power_derating",
                    worked,
                );
            }
            None => {
                let message = format!(
                    "the supply ({vs_max} at most) does not exceed the LED's forward voltage {vf} plus V_sat {v_sat}: the LED cannot light"
                );
                self.problem(Severity::Error, Some(ids::LOAD_SERIES_RESISTOR), message);
            }
        }
        Some(current)
    }

    fn rc(&mut self, r: Ohms, c: Farads) {
        let tau = timing::rc_tau(r, c);
        let t = tau.value;
        self.worked(ids::LOAD_TAU, Bound::Value, Unit::Second, t.0, "R × C", tau);
        let rise = timing::rise_time(t);
        let v = rise.value.0;
        self.worked(
            ids::LOAD_RISE_TIME,
            Bound::Value,
            Unit::Second,
            v,
            "τ ln 9",
            rise,
        );
        let settle = timing::settle_time(t);
        let v = settle.value.0;
        self.worked(
            ids::LOAD_SETTLE_TIME,
            Bound::Value,
            Unit::Second,
            v,
            "5 τ",
            settle,
        );
    }

    fn off_state(&mut self, vs_max: Volts, il: Option<Amps>, inductance: Option<Henries>) {
        let stage = self.stage;
        let vf = stage.assume.diode_vf;
        let state = if !stage.load.kind.is_coil() {
            OffState::Supply
        } else {
            match (stage.clamp.kind, stage.clamp.zener_volts) {
                (ClampType::None, _) => OffState::Unclamped,
                (ClampType::Diode, _) => OffState::Diode { vf },
                (ClampType::Zener, Some(vz)) => OffState::Zener { vz, vf },
                // The stage reader requires zener_volts for a zener clamp; a diode bounds it anyway.
                (ClampType::Zener, None) => OffState::Diode { vf },
            }
        };
        let formula = match state {
            OffState::Supply => "Vs_max",
            OffState::Diode { .. } => "Vs_max + diode_vf",
            OffState::Zener { .. } => "Vs_max + zener_volts + diode_vf",
            OffState::Unclamped => "not bounded (no clamp)",
        };
        let worked = switching::off_peak(vs_max, state);
        let peak = worked.value;
        self.need(
            ids::SWITCH_OFF_PEAK,
            Bound::Value,
            Unit::Volt,
            peak.map(|v| v.0),
            formula,
            worked.working,
            worked.source,
        );
        if state == OffState::Unclamped {
            let energy = match (inductance, il) {
                (Some(l), Some(i)) => format!(
                    "the switch would have to absorb E = ½ L IL² = 0.5 × {l} × ({i})² = {} in breakdown at every switch-off",
                    l.energy_at(i)
                ),
                _ => "the energy it would absorb in breakdown is ½ L IL² (give [load] inductance to see it)".to_string(),
            };
            let message = format!(
                "no clamp on a coil: at switch-off the coil drives the switch into avalanche breakdown; {energy}. Add a clamp: [clamp] type = \"diode\" (or \"zener\" for a faster release)"
            );
            self.problem(Severity::Error, Some(ids::SWITCH_OFF_PEAK), message);
        }
        let rules = stage.rules;
        match peak {
            Some(p) => self.derated(
                ids::SWITCH_VOLTAGE,
                Unit::Volt,
                p.0,
                rules.voltage_derating,
                "off_peak",
                "voltage_derating",
                "a switch's VCEO (BJT) or VDS (MOSFET) must be at least this",
            ),
            None => self.need(
                ids::SWITCH_VOLTAGE,
                Bound::Min,
                Unit::Volt,
                None,
                "off_peak / voltage_derating",
                vec!["not bounded: the off-state peak is not bounded without a clamp".to_string()],
                sources::DERATING,
            ),
        }
        if let Some(il) = il {
            self.derated(
                ids::SWITCH_CURRENT,
                Unit::Amp,
                il.0,
                rules.current_derating,
                "IL",
                "current_derating",
                "a switch's IC max (BJT) or ID max (MOSFET) must be at least this",
            );
        }
    }

    /// The base drive of a BJT switch, from a logic output or straight from the divider.
    fn bjt_drive(&mut self, il: Amps, divider: Option<&Divider>) {
        let stage = self.stage;
        let vbe = stage.assume.vbe_on;
        let high = stage.drive.high;
        let photocell = stage.drive.source == DriveSource::Photocell;
        let limit = if photocell {
            divider.map(|d| d.drive.value)
        } else {
            stage.drive.max_current
        };
        if photocell && divider.is_none() {
            // The divider could not be worked out; its problem says why.
            return;
        }
        if let Some(available) = limit
            && available.0 <= 0.0
        {
            let message = format!(
                "the photocell divider gives no current to the switch ({available} one decade past the switching level): lower the threshold or the fixed resistor, or add a buffer stage"
            );
            self.problem(Severity::Error, Some(ids::SWITCH_BASE_CURRENT), message);
            return;
        }
        let (mut worked, capped) = switching::base_current(il, stage.switch.forced_beta, limit);
        if photocell {
            worked = worked.with(format!(
                "the divider drives the base directly (no base resistor); it can give {} ({}), one decade of light past the switching level at Vs_min",
                limit.map_or_else(String::new, |a| a.to_string()),
                ids::SENSOR_DRIVE_CURRENT
            ));
        }
        let ib = worked.value;
        self.worked(
            ids::SWITCH_BASE_CURRENT,
            Bound::Value,
            Unit::Amp,
            ib.0,
            "IL / forced_beta",
            worked,
        );
        if capped {
            let source = if photocell {
                "the photocell divider".to_string()
            } else {
                format!(
                    "[drive] max_current {}",
                    limit.map_or_else(String::new, |a| a.to_string())
                )
            };
            let message = format!(
                "{source} caps the base current at {ib}, below IL / forced_beta = {}: the switch needs an hFE of at least {} to saturate; a MOSFET or a Darlington may suit better",
                il / stage.switch.forced_beta,
                format_number(il / ib)
            );
            self.problem(Severity::Warning, Some(ids::SWITCH_BASE_CURRENT), message);
        }
        let ib_actual = if photocell {
            ib
        } else {
            let Some(max) = switching::base_resistor_max(high, vbe, ib) else {
                let message = format!(
                    "the drive's high level {high} does not exceed VBE {vbe}: a BJT cannot be turned on; raise [drive] high or use a MOSFET"
                );
                self.problem(
                    Severity::Error,
                    Some(ids::SWITCH_BASE_RESISTOR_MAX),
                    message,
                );
                return;
            };
            let rb_max = max.value;
            let mut max = max;
            if capped {
                max = max.with("with the base current capped by the source, this is the smallest resistor that keeps the source within its limit".to_string());
            }
            self.worked(
                ids::SWITCH_BASE_RESISTOR_MAX,
                Bound::Max,
                Unit::Ohm,
                rb_max.0,
                "(high - vbe_on) / base_current",
                max,
            );
            let series = stage.rules.eseries;
            // Capped: pick at or above, so the source is never asked for more than it gives.
            let pick = if capped {
                eseries::at_or_above(series, rb_max.0)
            } else {
                eseries::at_or_below(series, rb_max.0)
            };
            let Some(pick) = pick else {
                let message = format!(
                    "no {series} value fits a base resistor of {rb_max}; check the drive and the load"
                );
                self.problem(Severity::Error, Some(ids::SWITCH_BASE_RESISTOR), message);
                return;
            };
            let mut rb = Ohms(pick.value());
            let mut actual = switching::base_current_through(high, vbe, rb);
            let mut rule = if capped {
                "the smallest value at or above it (the source is limited)".to_string()
            } else {
                "the largest value at or below it".to_string()
            };
            let mut formula = if capped {
                "E-series >= base_resistor_max (source limited)"
            } else {
                "E-series <= base_resistor_max"
            };
            // Rounding down can draw a little more than a limited source gives: step up then.
            if let Some(limit) = stage.drive.max_current
                && actual.0 > limit.0 * (1.0 + 1e-9)
                && let Some(up) = eseries::at_or_above(series, ((high - vbe) / limit).0)
            {
                rule = format!(
                    "the largest value at or below it, {rb}, would draw {actual}, over max_current {limit}; the smallest value that keeps within the limit is used"
                );
                rb = Ohms(up.value());
                actual = switching::base_current_through(high, vbe, rb);
                formula = "E-series >= (high - vbe_on) / max_current (source limited)";
            }
            self.need(
                ids::SWITCH_BASE_RESISTOR,
                Bound::Value,
                Unit::Ohm,
                Some(rb.0),
                formula,
                vec![
                    format!("{series}: {rule}: {rb}"),
                    format!(
                        "it gives IB = (high - vbe_on) / RB = ({high} - {vbe}) / {rb} = {actual}"
                    ),
                ],
                eseries::SOURCE,
            );
            actual
        };
        let gain = switching::gain_needed(il, ib_actual);
        let g = gain.value;
        self.worked(
            ids::SWITCH_GAIN,
            Bound::Min,
            Unit::None,
            g,
            "load.current / ((high - vbe_on) / base_resistor)",
            gain,
        );
        let dissipation = thermal::bjt_dissipation(stage.assume.vce_sat, il, vbe, ib_actual);
        let p = dissipation.value;
        self.worked(
            ids::SWITCH_DISSIPATION,
            Bound::Value,
            Unit::Watt,
            p.0,
            "vce_sat × IL + vbe_on × IB",
            dissipation,
        );
        let ambient = stage.rules.ambient;
        let example = thermal::derated_pd(
            crate::units::Watts(1.0),
            crate::units::Celsius(150.0),
            ambient,
        );
        let note = format!(
            "a part's PD (at 25 °C) derated linearly to zero at TJmax must cover this at the {ambient} ambient (for TJmax 150 °C: PD × {})",
            format_number(example.0)
        );
        self.derated(
            ids::SWITCH_POWER,
            Unit::Watt,
            p.0,
            stage.rules.power_derating,
            "dissipation",
            "power_derating",
            &note,
        );
    }

    /// The gate drive of a MOSFET switch.
    fn mosfet_drive(&mut self, divider: Option<&Divider>) {
        let stage = self.stage;
        let (gate, origin) = match stage.drive.source {
            DriveSource::Logic => (
                stage.drive.high,
                format!("[drive] high = {}", stage.drive.high),
            ),
            DriveSource::Photocell => match divider {
                Some(d) => (
                    d.open,
                    format!(
                        "the divider's open node one decade past the switching level at Vs_min: {}",
                        d.open
                    ),
                ),
                None => return,
            },
        };
        self.need(
            ids::SWITCH_GATE_DRIVE,
            Bound::Max,
            Unit::Volt,
            Some(gate.0),
            "high",
            vec![
                format!("VGS when on = {origin}"),
                "a MOSFET's RDS(on) must be specified at a VGS no higher than this (rds_on_vgs), or its RDS(on) is not guaranteed".to_string(),
            ],
            sources::COMMON_PRACTICE,
        );
        let threshold = gate * 0.5;
        self.need(
            ids::SWITCH_GATE_THRESHOLD,
            Bound::Max,
            Unit::Volt,
            Some(threshold.0),
            "high / 2",
            vec![
                format!("VGS(th)max <= gate drive / 2 = {gate} / 2 = {threshold}"),
                "VGS(th) is where the channel barely conducts; well below the drive the channel is fully enhanced (rule of thumb: at most half)".to_string(),
            ],
            sources::COMMON_PRACTICE,
        );
        self.need(
            ids::SWITCH_GATE_VOLTAGE,
            Bound::Min,
            Unit::Volt,
            Some(gate.0),
            "high",
            vec![format!(
                "a MOSFET's VGS max must stand the gate drive {gate}"
            )],
            sources::COMMON_PRACTICE,
        );
        if stage.drive.source == DriveSource::Photocell {
            self.problem(
                Severity::Warning,
                Some(ids::SWITCH_GATE_DRIVE),
                "a photocell divider moves a MOSFET gate slowly through its threshold, so the MOSFET spends seconds half on and heats; add a comparator or Schmitt trigger with hysteresis between divider and gate".to_string(),
            );
        }
    }

    /// High-side switches turn off only when their base or gate reaches the supply.
    fn high_side_warnings(&mut self) {
        let stage = self.stage;
        if !stage.switch.kind.is_high_side() || stage.drive.source != DriveSource::Logic {
            return;
        }
        if stage.drive.high.0 < stage.supply.volts.0 {
            let kind = stage.switch.kind.name().to_ascii_uppercase();
            let message = format!(
                "a {kind} high-side switch has its emitter or source at the supply ({}); a drive that reaches only {} cannot turn it off: add a small NPN or N-MOSFET level shifter",
                stage.supply.volts, stage.drive.high
            );
            self.problem(Severity::Warning, None, message);
        }
        if stage.switch.kind == SwitchType::Pmos && stage.supply.max().0 > 20.0 {
            let message = format!(
                "a PMOS gate pulled to ground sees VGS = Vs_max = {}: check the part's VGS max, or clamp the gate with a zener",
                stage.supply.max()
            );
            self.problem(Severity::Warning, Some(ids::SWITCH_GATE_VOLTAGE), message);
        }
    }

    /// Clamp and coil needs of an inductive or relay load.
    fn coil(
        &mut self,
        vs_max: Volts,
        il: Amps,
        resistance: Option<Ohms>,
        inductance: Option<Henries>,
        part: Option<&Part>,
    ) {
        let stage = self.stage;
        let rules = stage.rules;
        let clamped = stage.clamp.kind != ClampType::None;
        if clamped {
            self.derated(
                ids::CLAMP_VOLTAGE,
                Unit::Volt,
                vs_max.0,
                rules.voltage_derating,
                "Vs_max",
                "voltage_derating",
                "with the switch on, the clamp diode is reverse-biased by the supply: its VRRM must be at least this",
            );
            self.derated(
                ids::CLAMP_CURRENT,
                Unit::Amp,
                il.0,
                rules.current_derating,
                "IL",
                "current_derating",
                "at switch-off the clamp takes the whole coil current, decaying from IL: its IF(AV) must be at least this (common practice; its IFSM covers the pulse easily)",
            );
        }
        let vf = stage.assume.diode_vf;
        let zener = match (stage.clamp.kind, stage.clamp.zener_volts) {
            (ClampType::Zener, Some(vz)) => Some(vz),
            _ => None,
        };
        if let Some(vz) = zener {
            self.need(
                ids::ZENER_VOLTAGE,
                Bound::Value,
                Unit::Volt,
                Some(vz.0),
                "zener_volts",
                vec![
                    format!("VZ = [clamp] zener_volts = {vz}"),
                    "the zener sits in series with a blocking diode across the coil; the higher VZ, the faster the release and the higher the switch's off-state peak".to_string(),
                ],
                sources::CIRCUIT_THEORY,
            );
        }
        let (Some(l), Some(r)) = (inductance, resistance) else {
            if inductance.is_none() {
                self.problem(
                    Severity::Warning,
                    Some(ids::COIL_TAU),
                    "the coil's inductance is unknown: coil.tau, coil.energy and coil.release_time need [load] inductance (or a relay part with coil_l)".to_string(),
                );
            }
            return;
        };
        let tau = inductive::rl_tau(l, r);
        let t = tau.value;
        self.worked(ids::COIL_TAU, Bound::Value, Unit::Second, t.0, "L / R", tau);
        let energy = inductive::stored_energy(l, il);
        let e = energy.value;
        self.worked(
            ids::COIL_ENERGY,
            Bound::Value,
            Unit::Joule,
            e.0,
            "½ L IL²",
            energy,
        );
        if !clamped {
            return;
        }
        let vc = vf + zener.unwrap_or(Volts(0.0));
        let release_v = part
            .and_then(Part::relay)
            .and_then(|rl| rl.must_release_v.get())
            .map(Volts);
        let (i_rel, rel_line) = match release_v {
            Some(v) => {
                let i: Amps = v / r;
                (
                    i,
                    format!(
                        "I_rel = must-release voltage / R = {v} / {r} = {i} (the relay's own figure)"
                    ),
                )
            }
            None => (
                il * 0.1,
                format!(
                    "I_rel = 10 % of IL = {} (no must-release figure: the usual end of the decay)",
                    il * 0.1
                ),
            ),
        };
        match inductive::release_time(l, r, il, vc, i_rel) {
            Some(worked) => {
                let t = worked.value;
                let mut worked = worked.with(rel_line);
                if zener.is_none() {
                    worked = worked.with(
                        "a plain diode gives the slowest release; a diode plus zener shortens it"
                            .to_string(),
                    );
                }
                self.worked(
                    ids::COIL_RELEASE_TIME,
                    Bound::Value,
                    Unit::Second,
                    t.0,
                    "τ ln((IL + Vc/R) / (I_rel + Vc/R))",
                    worked,
                );
            }
            None => {
                let message = format!(
                    "the release time cannot be computed: the release current {i_rel} is not below the coil current {il}"
                );
                self.problem(Severity::Warning, Some(ids::COIL_RELEASE_TIME), message);
            }
        }
        if let Some(vz) = zener {
            let worked = inductive::zener_energy(l, r, il, vc, vz);
            let e = worked.value;
            self.worked(
                ids::ZENER_ENERGY,
                Bound::Value,
                Unit::Joule,
                e.0,
                "VZ ∫ i dt",
                worked,
            );
        }
    }

    /// Relay coil, contact and insulation needs; the named relay held against them.
    fn relay(&mut self, vs_max: Volts, vs_min: Volts, il: Amps, part: Option<&Part>) {
        let stage = self.stage;
        let v_sat = stage.v_sat();
        self.need(
            ids::RELAY_COIL_CURRENT,
            Bound::Max,
            Unit::Amp,
            Some(il.0),
            "load.current",
            vec![
                format!("coil current at Vs_max = load.current = {il}"),
                "the switch and the supply are sized for this coil current: a relay's own coil current must be at most this".to_string(),
            ],
            sources::CIRCUIT_THEORY,
        );
        let operate = relay::operate_voltage(vs_min, v_sat, stage.rules.ambient);
        let v = operate.value;
        self.worked(
            ids::RELAY_OPERATE_VOLTAGE,
            Bound::Max,
            Unit::Volt,
            v.0,
            "Vs_min - V_sat",
            operate,
        );
        let coil_max = vs_max - v_sat;
        self.need(
            ids::RELAY_COIL_VOLTAGE_MAX,
            Bound::Min,
            Unit::Volt,
            Some(coil_max.0),
            "Vs_max - V_sat",
            vec![
                format!("V(coil, max) = Vs_max - V_sat = {vs_max} - {v_sat} = {coil_max}"),
                "a relay's maximum continuous coil voltage must be at least this".to_string(),
            ],
            sources::COMMON_PRACTICE,
        );
        match stage.contacts {
            Some(contacts) => self.contacts(&contacts),
            None => self.problem(
                Severity::Warning,
                None,
                "a relay load without a [contacts] table: the contact, inrush and insulation needs are not computed; add [contacts] volts and amps".to_string(),
            ),
        }
        if let Some(p) = part {
            self.hold_relay(p);
        }
    }

    fn contacts(&mut self, c: &crate::stage::Contacts) {
        let stage = self.stage;
        let side = if c.ac { "ac" } else { "dc" };
        let category = relay::utilization_category(c.kind, c.ac);
        self.need(
            ids::RELAY_CONTACT_VOLTAGE,
            Bound::Min,
            Unit::Volt,
            Some(c.volts.0),
            "contacts volts",
            vec![
                format!("the contacts switch {} {side}", c.volts),
                format!(
                    "a relay's {} rating (contact_v_{side}) must be at least this",
                    if c.ac {
                        "AC contact voltage"
                    } else {
                        "DC contact voltage"
                    }
                ),
            ],
            sources::COMMON_PRACTICE,
        );
        let mut note = format!(
            "a relay's contact_a_{side} must be at least this; the load is {category} (IEC 60947-4-1 / -5-1)"
        );
        if matches!(c.kind, crate::stage::ContactLoad::Motor) {
            note.push_str("; an inductive contact rating is typically 30-50 % of the resistive one: prefer the relay's motor rating when it gives one");
        }
        self.derated(
            ids::RELAY_CONTACT_CURRENT,
            Unit::Amp,
            c.amps.0,
            stage.rules.current_derating,
            "amps",
            "current_derating",
            &note,
        );
        let inrush = relay::inrush(c.amps, c.kind, c.inrush);
        let v = inrush.value;
        self.worked(
            ids::RELAY_INRUSH,
            Bound::Min,
            Unit::Amp,
            v.0,
            "amps × multiplier",
            inrush,
        );
        match isolation::impulse_need(c.volts, c.overvoltage_category, c.insulation) {
            ImpulseNeed::Value(worked) => {
                let v = worked.value;
                self.worked(
                    ids::RELAY_IMPULSE,
                    Bound::Min,
                    Unit::Volt,
                    v.0,
                    "IEC 60664-1 table F.1 (reinforced: one step higher)",
                    worked,
                );
            }
            ImpulseNeed::NotRequired => {}
            ImpulseNeed::OutOfTable => {
                let message = format!(
                    "{} is beyond IEC 60664-1 table F.1 as loadfit holds it: consult the standard (the edition in force) for the coil-to-contact impulse withstand",
                    c.volts
                );
                self.problem(Severity::Warning, Some(ids::RELAY_IMPULSE), message);
            }
        }
        match isolation::dielectric_need(c.volts, c.ac, c.insulation) {
            DielectricNeed::Value(worked) => {
                let v = worked.value;
                self.worked(
                    ids::RELAY_DIELECTRIC,
                    Bound::Min,
                    Unit::Volt,
                    v.0,
                    "IEC 60950-1 table 5B by working peak",
                    worked,
                );
            }
            DielectricNeed::NotRequired => {}
            DielectricNeed::OutOfTable(peak) => {
                let message = format!(
                    "a working peak of {peak} is above the 354 V loadfit tabulates: consult the standard in force for the coil-to-contact dielectric strength"
                );
                self.problem(Severity::Warning, Some(ids::RELAY_DIELECTRIC), message);
            }
        }
        if !c.ac && c.volts.0 > 30.0 {
            let message = format!(
                "the contacts break {} dc: a relay's DC breaking capacity falls sharply above about 30 V, so check its DC rating (contact_v_dc, contact_a_dc) at this voltage, not its AC one",
                c.volts
            );
            self.problem(Severity::Warning, Some(ids::RELAY_CONTACT_VOLTAGE), message);
        }
        if isolation::is_hazardous(c.volts, c.ac) {
            if c.insulation == crate::stage::Insulation::Functional {
                let message = format!(
                    "functional insulation gives no protection against shock: with {} {side} on the contacts, the coil circuit would have to be treated as live; ask for basic or reinforced insulation",
                    c.volts
                );
                self.problem(Severity::Warning, Some(ids::RELAY_IMPULSE), message);
            }
            let limit = if c.ac { "50 V ac" } else { "120 V dc" };
            let message = format!(
                "the contacts carry {} {side}, above {limit}: these figures are an aid, not an approval. Insulation, wiring and protection must follow local electrical codes; mains work is for qualified persons. The isolation figures follow IEC 60664-1 and IEC 60950-1 as noted; confirm them against the editions in force",
                c.volts
            );
            self.problem(Severity::Caution, None, message);
        }
    }

    fn hold_relay(&mut self, part: &Part) {
        let Some(r) = part.relay() else { return };
        let name = part.number.to_string();
        let ac = self.stage.contacts.is_none_or(|c| c.ac);
        self.hold(
            &name,
            ids::RELAY_OPERATE_VOLTAGE,
            r.must_operate_v.get(),
            "must-operate voltage",
            Severity::Error,
            "at the low end of the supply the relay may not pull in",
        );
        self.hold(
            &name,
            ids::RELAY_COIL_VOLTAGE_MAX,
            r.coil_v_max.get(),
            "maximum coil voltage",
            Severity::Error,
            "at the high end of the supply the coil overheats",
        );
        let (v, a) = if ac {
            (r.contact_v_ac.get(), r.contact_a_ac.get())
        } else {
            (r.contact_v_dc.get(), r.contact_a_dc.get())
        };
        let side = if ac { "ac" } else { "dc" };
        self.hold(
            &name,
            ids::RELAY_CONTACT_VOLTAGE,
            v,
            &format!("contact voltage rating ({side})"),
            Severity::Error,
            "the contacts are not rated for the circuit they switch",
        );
        self.hold(
            &name,
            ids::RELAY_CONTACT_CURRENT,
            a,
            &format!("contact current rating ({side})"),
            Severity::Error,
            "the contacts are not rated for the current with the stage's derating",
        );
        self.hold(
            &name,
            ids::RELAY_INRUSH,
            r.inrush_a.get(),
            "inrush rating",
            Severity::Warning,
            "the contacts may weld at closing",
        );
        self.hold(
            &name,
            ids::RELAY_IMPULSE,
            r.impulse_v.get(),
            "coil-to-contact impulse withstand",
            Severity::Error,
            "the insulation between coil and contacts is not enough for this circuit",
        );
        self.hold(
            &name,
            ids::RELAY_DIELECTRIC,
            r.dielectric_v.get(),
            "coil-to-contact dielectric strength",
            Severity::Error,
            "the insulation between coil and contacts is not enough for this circuit",
        );
    }

    /// Works out the photocell divider, when the stage has a sensor.
    fn divider(&mut self) -> Option<Divider> {
        let stage = self.stage;
        let sensor = stage.sensor.as_ref()?;
        let part = match sensor.part.as_deref() {
            Some(number) => self.named_part(number, "[sensor] part", Kind::Photocell),
            None => None,
        };
        let cell = part.and_then(Part::photocell);
        let name = part.map(|p| p.number.to_string());
        let pick =
            |own: Option<f64>, theirs: Option<f64>, key: &str, origins: &mut Vec<String>| match (
                own, theirs,
            ) {
                (Some(v), _) => {
                    origins.push(format!("{key} from [sensor]"));
                    Some(v)
                }
                (None, Some(v)) => {
                    origins.push(format!(
                        "{key} from {}",
                        name.as_deref().unwrap_or("the part")
                    ));
                    Some(v)
                }
                (None, None) => None,
            };
        let mut origins = Vec::new();
        let r10 = pick(
            sensor.r10.map(|r| r.0),
            cell.and_then(|c| c.r_10lux.get()),
            "r10",
            &mut origins,
        );
        let gamma = pick(
            sensor.gamma,
            cell.and_then(|c| c.gamma.get()),
            "gamma",
            &mut origins,
        );
        let tolerance = pick(
            sensor.r10_tolerance,
            cell.and_then(|c| c.r_10lux_tol.get()),
            "r10_tolerance",
            &mut origins,
        )
        .unwrap_or(0.0);
        let (Some(r10), Some(gamma)) = (r10, gamma) else {
            self.problem(
                Severity::Error,
                Some(ids::SENSOR_RESISTANCE_AT_ON),
                "the photocell's r10 and gamma are unknown: give [sensor] r10 and gamma, or [sensor] part naming a photocell the library holds".to_string(),
            );
            return None;
        };
        if !(r10 > 0.0 && gamma > 0.0 && (0.0..1.0).contains(&tolerance)) {
            self.problem(
                Severity::Error,
                Some(ids::SENSOR_RESISTANCE_AT_ON),
                format!(
                    "the photocell figures (r10 {}, gamma {}, tolerance {}) are not usable",
                    format_eng(r10, Dim::Ohm),
                    format_number(gamma),
                    format_eng(tolerance, Dim::Percent)
                ),
            );
            return None;
        }
        if !(0.5..=1.0).contains(&gamma) {
            self.problem(
                Severity::Warning,
                Some(ids::SENSOR_RESISTANCE_AT_ON),
                format!(
                    "gamma {} is outside the 0.5-1.0 usual for CdS photocells (common practice): check the datasheet",
                    format_number(gamma)
                ),
            );
        }
        let r10 = Ohms(r10);
        let vs = stage.supply.volts;
        let r_on = photocell::resistance_at(r10, gamma, sensor.on_lux);
        let exact = photocell::fixed_resistor_exact(sensor.activate, r_on, vs, sensor.threshold);
        let Some(chosen) = eseries::nearest(stage.rules.eseries, exact.value.0) else {
            let message = format!(
                "no {} value is near the fixed resistor {}: check on_lux and r10",
                stage.rules.eseries, exact.value
            );
            self.problem(Severity::Error, Some(ids::SENSOR_FIXED_RESISTOR), message);
            return None;
        };
        let fixed = Ohms(chosen.value());
        let drive = photocell::drive_current(
            sensor.activate,
            r10,
            gamma,
            sensor.on_lux,
            fixed,
            stage.supply.min(),
            sensor.threshold,
        );
        let (top, bottom) = match sensor.activate {
            Activate::Light => (
                photocell::resistance_at(r10, gamma, Lux(sensor.on_lux.0 * 10.0)),
                fixed,
            ),
            Activate::Dark => (
                fixed,
                photocell::resistance_at(r10, gamma, Lux(sensor.on_lux.0 / 10.0)),
            ),
        };
        let open = photocell::divider_node(stage.supply.min(), top, bottom);
        if stage.rules.require_rohs || part.is_some_and(|p| p.rohs == Some(false)) {
            self.problem(
                Severity::Warning,
                Some(ids::SENSOR_RESISTANCE_AT_ON),
                "a CdS photocell contains cadmium above the 0.01 % limit of EU RoHS (Directive 2011/65/EU, Annex II); the photoresistor exemption (Annex III item 40) expired at the end of 2013: purchasers should expect it not to be RoHS compliant".to_string(),
            );
        }
        Some(Divider {
            activate: sensor.activate,
            r10,
            tolerance,
            gamma,
            r_on,
            exact,
            pick: chosen,
            threshold: sensor.threshold,
            on_lux: sensor.on_lux,
            drive,
            open,
            origin: origins.join(", "),
        })
    }

    fn sensor(&mut self, sensor: &Sensor, d: &Divider, vs_max: Volts) {
        let stage = self.stage;
        let vs = stage.supply.volts;
        let lux = |v: Lux| format_eng(v.0, Dim::Lux);
        self.need(
            ids::SENSOR_RESISTANCE_AT_ON,
            Bound::Value,
            Unit::Ohm,
            Some(d.r_on.0),
            "r10 × (on_lux / 10)^-γ",
            vec![
                format!(
                    "R_on = R10 × (E / 10 lux)^-γ = {} × ({} / 10 lux)^-{} = {}",
                    d.r10,
                    lux(d.on_lux),
                    format_number(d.gamma),
                    d.r_on
                ),
                format!("{} ({})", d.origin, sensor.activate.name()),
                "CdS photocells are not RoHS compliant (cadmium); rise about 20 ms, decay about 30 ms (common practice)".to_string(),
            ],
            sources::PHOTOCELL_LAW,
        );
        let exact = d.exact.clone();
        let e = exact.value.0;
        self.worked(
            ids::SENSOR_FIXED_RESISTOR_EXACT,
            Bound::Value,
            Unit::Ohm,
            e,
            match d.activate {
                Activate::Light => "R_on × threshold / (Vs - threshold)",
                Activate::Dark => "R_on × (Vs - threshold) / threshold",
            },
            exact,
        );
        let fixed = Ohms(d.pick.value());
        self.need(
            ids::SENSOR_FIXED_RESISTOR,
            Bound::Value,
            Unit::Ohm,
            Some(fixed.0),
            "E-series nearest by ratio",
            vec![format!(
                "{}: the value nearest {} by ratio is {fixed}",
                stage.rules.eseries, d.exact.value
            )],
            eseries::SOURCE,
        );
        let on = photocell::switching_lux(d.activate, fixed, vs, d.threshold, d.r10, d.gamma);
        let v = on.value.0;
        self.worked(
            ids::SENSOR_ON_LUX,
            Bound::Value,
            Unit::Lux,
            v,
            "lux at which fixed_resistor puts the node at threshold",
            on,
        );
        for (id, sign, word) in [
            (ids::SENSOR_ON_LUX_LOW, -1.0, "low"),
            (ids::SENSOR_ON_LUX_HIGH, 1.0, "high"),
        ] {
            let r10 = d.r10 * (1.0 + sign * d.tolerance);
            let worked = photocell::switching_lux(d.activate, fixed, vs, d.threshold, r10, d.gamma)
                .with(format!(
                    "R10 at the {word} end of its tolerance: {} × (1 {} {}) = {r10}",
                    d.r10,
                    if sign < 0.0 { "-" } else { "+" },
                    format_number(d.tolerance)
                ));
            let v = worked.value.0;
            self.worked(
                id,
                Bound::Value,
                Unit::Lux,
                v,
                if sign < 0.0 {
                    "on_lux with r10 × (1 - tol)"
                } else {
                    "on_lux with r10 × (1 + tol)"
                },
                worked,
            );
        }
        self.need(
            ids::SENSOR_VOLTAGE,
            Bound::Min,
            Unit::Volt,
            Some(vs_max.0),
            "Vs_max",
            vec![
                format!(
                    "in the dark the photocell holds nearly the whole supply: Vs_max = {vs_max}"
                ),
                "a photocell's v_max must be at least this".to_string(),
            ],
            sources::CIRCUIT_THEORY,
        );
        let p = photocell::worst_power(vs_max, fixed);
        let worked = switching::derated(
            p.value.0,
            stage.rules.power_derating,
            Dim::Watt,
            "Vs_max² / (4 R_fixed)",
            "power_derating",
        );
        let mut working = p.working;
        working.extend(worked.working);
        working.push("a photocell's p_max must be at least this".to_string());
        self.need(
            ids::SENSOR_POWER,
            Bound::Min,
            Unit::Watt,
            Some(worked.value),
            "Vs_max² / (4 × fixed_resistor) / power_derating",
            working,
            p.source,
        );
        if stage.drive.source == DriveSource::Photocell {
            let drive = d.drive.clone();
            let v = drive.value.0;
            self.worked(
                ids::SENSOR_DRIVE_CURRENT,
                Bound::Value,
                Unit::Amp,
                v,
                "(V_open - threshold) / R_thevenin, one decade past on_lux",
                drive,
            );
        }
        if let Some(number) = sensor.part.as_deref()
            && let Some(part) = self.library.and_then(|l| l.find(number))
            && let Some(cell) = part.photocell()
        {
            let name = part.number.to_string();
            self.hold(
                &name,
                ids::SENSOR_VOLTAGE,
                cell.v_max.get(),
                "v_max",
                Severity::Error,
                "the photocell is not rated for the supply",
            );
            self.hold(
                &name,
                ids::SENSOR_POWER,
                cell.p_max.get(),
                "p_max",
                Severity::Error,
                "the photocell may overheat where its resistance equals the fixed resistor",
            );
        }
    }
}

#[cfg(test)]
mod tests;
