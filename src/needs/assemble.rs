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
use super::worst::{self, Corner, Extreme, Factor};
use super::{Bound, Need, Needs, Problem, Severity, Unit, Worked, ids, sources};
use crate::library::{Kind, Library, Part};
use crate::stage::{Activate, ClampType, DriveSource, LoadType, Sensor, Stage, SwitchType};
use crate::units::{Amps, Dim, Farads, Henries, Lux, Ohms, Volts, format_eng, format_number};

/// Computes every need of `stage`: at nominal, or at the worst corners when
/// `rules.worst_case` is on (each need then carries its corner and its nominal value).
/// `library`, when given, supplies the figures of the relay (`load.relay`) and photocell
/// (`sensor.part`) the stage names, and those parts are held against their needs; without it
/// only the stage's own figures are used.
///
/// Never fails: what cannot be computed is left out or unbounded, with a problem saying why.
#[must_use]
pub fn compute(stage: &Stage, library: Option<&Library>) -> Needs {
    if stage.rules.worst_case {
        compute_both(stage, library).worst
    } else {
        compute_nominal(stage, library)
    }
}

/// The needs at nominal (supply within its tolerance, 20-25 °C, picked resistors at their
/// values), whatever `rules.worst_case` says.
#[must_use]
pub fn compute_nominal(stage: &Stage, library: Option<&Library>) -> Needs {
    run(stage, library, None)
}

/// The nominal and the worst-case needs of a stage, both computed whatever `rules.worst_case`
/// says: what a view needs to show them side by side or to switch between them.
#[derive(Debug, Clone, PartialEq)]
pub struct Cases {
    /// The needs at nominal, as [`compute_nominal`] gives them.
    pub nominal: Needs,
    /// The needs at their worst corners: every need carries its [`Corner`](super::Corner)
    /// and its nominal value ([`Need::nominal`](super::Need::nominal)); the problems are those
    /// of the worst case.
    pub worst: Needs,
}

/// Computes the needs of `stage` at nominal and at the worst corners (see [`Cases`]).
#[must_use]
pub fn compute_both(stage: &Stage, library: Option<&Library>) -> Cases {
    let nominal = compute_nominal(stage, library);
    let mut worst = run(
        stage,
        library,
        Some((worst::Conditions::of(stage), &nominal)),
    );
    for need in &mut worst.needs {
        need.nominal = nominal.value(need.id);
        if need.corner.is_none() {
            need.corner = Some(Corner::none());
            need.working.push(
                "worst corner: none (no factor of supply, temperature or tolerance moves this figure)"
                    .to_string(),
            );
        }
    }
    Cases { nominal, worst }
}

fn run<'a>(
    stage: &'a Stage,
    library: Option<&'a Library>,
    worst: Option<(worst::Conditions, &'a Needs)>,
) -> Needs {
    let mut builder = Builder {
        stage,
        library,
        worst: worst.map(|(c, _)| c),
        nominal: worst.map(|(_, n)| n),
        il_corner: Corner::none(),
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
    /// Worst case: the corner `drive` is taken at (its lowest over r10 and the fixed resistor).
    drive_corner: Corner,
    /// Worst case: the corner `open` is taken at (its lowest).
    open_corner: Corner,
    /// Where r10, gamma and the tolerance came from, for the working.
    origin: String,
}

struct Builder<'a> {
    stage: &'a Stage,
    library: Option<&'a Library>,
    /// The worst-case conditions; `None` for a nominal computation.
    worst: Option<worst::Conditions>,
    /// In a worst-case computation, the nominal needs: the design's picks are read from them.
    nominal: Option<&'a Needs>,
    /// The corner the load current is taken at (worst case), inherited by the needs built on it.
    il_corner: Corner,
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

    /// Marks need `id` as taken at `corner` (worst case), adding `lines` and the corner's name
    /// to its working.
    fn set_corner(&mut self, id: &'static str, corner: &Corner, lines: Vec<String>) {
        if self.worst.is_none() {
            return;
        }
        if let Some(need) = self.out.needs.iter_mut().find(|n| n.id == id) {
            need.working.extend(lines);
            need.working.push(format!("worst corner: {corner}"));
            need.corner = Some(corner.clone());
        }
    }

    /// A design figure (a picked resistor) of the nominal computation, which the worst case
    /// keeps: the worst case evaluates the design at its corners, it does not redesign it.
    fn nominal_value(&self, id: &str) -> Option<f64> {
        self.nominal.and_then(|n| n.value(id))
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
        let supply_max = Corner::none().with(Factor::Supply, Extreme::Max);
        let supply_min = Corner::none().with(Factor::Supply, Extreme::Min);
        self.set_corner(ids::SUPPLY_MAX, &supply_max, Vec::new());
        self.set_corner(ids::SUPPLY_MIN, &supply_min, Vec::new());

        let relay_part = self.relay_part();
        let (resistance, inductance) = self.coil_figures(relay_part);
        let divider = self.divider();

        let il = self.load(vs_max, resistance);
        self.off_state(vs_max, il, inductance);
        if let Some(il) = il {
            if stage.switch.kind.has_bjt_drive() {
                match self.worst {
                    Some(w) => self.bjt_drive_worst(w, il, divider.as_ref()),
                    None => self.bjt_drive(il, divider.as_ref()),
                }
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
        let r20 = resistance?;
        // Worst case: a coil at its coldest, before its own current warms it, draws most.
        let cold = match self.worst {
            Some(w) if stage.load.kind.is_coil() => Some(w),
            _ => None,
        };
        let r = cold.map_or(r20, |w| r20 * w.coil_cold());
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
            if cold.is_some() {
                "(Vs_max - V_sat) / (R × (1 + α (temperature_min - 20)))"
            } else {
                "(Vs_max - V_sat) / R"
            },
            worked,
        );
        if self.worst.is_some() {
            let mut corner = Corner::none().with(Factor::Supply, Extreme::Max);
            let mut lines = Vec::new();
            if let Some(w) = cold {
                corner = corner.with(Factor::Temperature, Extreme::Min);
                lines.push(w.cold_coil_line(r20));
                lines.push(
                    "a cold coil draws most: its resistance is lowest before its own current warms it (stage and part figures are at 20 °C)".to_string(),
                );
            }
            self.set_corner(ids::LOAD_CURRENT, &corner, lines);
            self.il_corner = corner;
        }
        if let (LoadType::Capacitive, Some(c)) = (stage.load.kind, stage.load.capacitance) {
            self.rc(r20, c);
        }
        Some(il)
    }

    fn led(&mut self, vs_max: Volts, v_sat: Volts) -> Option<Amps> {
        let stage = self.stage;
        let (Some(vf), Some(current)) = (stage.load.led_vf, stage.load.led_current) else {
            // The stage reader requires both for an LED load.
            return None;
        };
        let series = stage.rules.eseries;
        let pick = switching::led_series_resistor(vs_max, vf, v_sat, current, series);
        // Worst case: the picked resistor at its low tolerance lets the most current through;
        // never less than the set current, which the design already allows for.
        let low = match (self.worst, &pick) {
            (Some(w), Some(p)) => {
                let r_low = Ohms(p.value.value()) * (1.0 - w.tolerance);
                let at: Amps = (vs_max - vf - v_sat) / r_low;
                Some((w, r_low, at))
            }
            _ => None,
        };
        let il = low.map_or(current, |(_, _, at)| at.max(current));
        self.need(
            ids::LOAD_CURRENT,
            Bound::Value,
            Unit::Amp,
            Some(il.0),
            if low.is_some() {
                "max(led_current, (Vs_max - led_vf - V_sat) / (R × (1 - tol)))"
            } else {
                "led_current"
            },
            vec![format!(
                "IL = led_current = {current}: the series resistor sets it"
            )],
            sources::CIRCUIT_THEORY,
        );
        if let Some((w, r_low, at)) = low {
            // When the set current is the larger, no corner moves the figure.
            let corner = if at.0 > current.0 {
                Corner::none()
                    .with(Factor::Supply, Extreme::Max)
                    .with(Factor::SeriesResistor, Extreme::MinusTol)
            } else {
                Corner::none()
            };
            let lines = vec![
                format!(
                    "series resistor at -{}: {r_low}; I = (Vs_max - VF - V_sat) / R = ({vs_max} - {vf} - {v_sat}) / {r_low} = {at}",
                    format_eng(w.tolerance, Dim::Percent)
                ),
                format!("IL = the larger of that and led_current = {il}"),
            ];
            self.set_corner(ids::LOAD_CURRENT, &corner, lines);
            self.il_corner = corner;
        }
        match pick {
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
                // Worst case: the resistor at its low tolerance dissipates most, V² / R.
                let r_at = low.map_or(r, |(_, r_low, _)| r_low);
                let actual: Amps = (vs_max - vf - v_sat) / r_at;
                let p = switching::resistor_power(actual, r_at);
                let worked = switching::derated(
                    p.0,
                    stage.rules.power_derating,
                    Dim::Watt,
                    "P(R)",
                    "power_derating",
                )
                .with(format!(
                    "P(R) = I² R = ({actual})² × {r_at} = {p} at Vs_max"
                ));
                self.worked(
                    ids::LOAD_SERIES_RESISTOR_POWER,
                    Bound::Min,
                    Unit::Watt,
                    worked.value,
                    "I² R / power_derating",
                    worked,
                );
                if let Some((w, _, _)) = low {
                    let corner = Corner::none()
                        .with(Factor::Supply, Extreme::Max)
                        .with(Factor::SeriesResistor, Extreme::MinusTol);
                    let line = format!(
                        "the resistor at -{} of {r}: {r_at}, where it dissipates most",
                        format_eng(w.tolerance, Dim::Percent)
                    );
                    self.set_corner(ids::LOAD_SERIES_RESISTOR_POWER, &corner, vec![line]);
                }
            }
            None => {
                let message = format!(
                    "the supply ({vs_max} at most) does not exceed the LED's forward voltage {vf} plus V_sat {v_sat}: the LED cannot light"
                );
                self.problem(Severity::Error, Some(ids::LOAD_SERIES_RESISTOR), message);
            }
        }
        Some(il)
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
        let supply_max = Corner::none().with(Factor::Supply, Extreme::Max);
        self.set_corner(ids::SWITCH_OFF_PEAK, &supply_max, Vec::new());
        self.set_corner(ids::SWITCH_VOLTAGE, &supply_max, Vec::new());
        let il_corner = self.il_corner.clone();
        self.set_corner(ids::SWITCH_CURRENT, &il_corner, Vec::new());
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

    /// The base drive of a BJT switch at its worst corners: the nominal design's base resistor
    /// at +tolerance, VBE at temperature_min, the drive at its lowest, hFE at temperature_min;
    /// `switch.gain` is then the hFE a part needs at 25 °C to saturate in the cold.
    fn bjt_drive_worst(&mut self, w: worst::Conditions, il: Amps, divider: Option<&Divider>) {
        let stage = self.stage;
        let vbe = stage.assume.vbe_on;
        let vbe_cold = w.vbe_at(vbe, w.t_min);
        let hfe = w.hfe_factor(w.t_min);
        let beta = stage.switch.forced_beta;
        let photocell = stage.drive.source == DriveSource::Photocell;
        let follows = worst::drive_follows_supply(stage);
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
                "at the worst corner the photocell divider gives no current to the switch ({available} one decade past the switching level): lower the threshold or the fixed resistor, or add a buffer stage"
            );
            self.problem(Severity::Error, Some(ids::SWITCH_BASE_CURRENT), message);
            return;
        }
        let (mut worked, capped) = switching::base_current(il, beta, limit);
        if photocell {
            worked = worked.with(format!(
                "the divider drives the base directly (no base resistor); at its worst corner it can give {} ({})",
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
        let corner = match (capped, divider) {
            (true, Some(d)) if photocell => d.drive_corner.clone(),
            // A logic source's max_current is a fixed figure.
            (true, _) => Corner::none(),
            (false, _) => self.il_corner.clone(),
        };
        self.set_corner(ids::SWITCH_BASE_CURRENT, &corner, Vec::new());
        if capped {
            let source = if photocell {
                "at its worst corner the photocell divider".to_string()
            } else {
                format!(
                    "[drive] max_current {}",
                    limit.map_or_else(String::new, |a| a.to_string())
                )
            };
            let message = format!(
                "{source} caps the base current at {ib}, below IL / forced_beta = {}: the switch needs an hFE of at least {} to saturate; a MOSFET or a Darlington may suit better",
                il / beta,
                format_number(il / ib)
            );
            self.problem(Severity::Warning, Some(ids::SWITCH_BASE_CURRENT), message);
        }
        let hfe_line = format!(
            "hFE at temperature_min {} is 1 + hfe_tempco × (temperature_min - 25 °C) = 1 + {}/K × ({} K) = {hfe:.3} of its 25 °C value (hfe_tempco {}: common practice, from memory), so hFE(25 °C) must be IL / IB / {hfe:.3}",
            w.t_min,
            format_number(w.hfe_tempco),
            format_number(w.t_min.0 - 25.0),
            format_eng(w.hfe_tempco, Dim::PercentPerKelvin)
        );
        let vbe_line = format!(
            "VBE at temperature_min {} = vbe_on - vbe_tempco × (25 °C - temperature_min) = {vbe} - ({}) × {} K = {vbe_cold}",
            w.t_min,
            format_eng(w.vbe_tempco, Dim::VoltPerKelvin),
            format_number(25.0 - w.t_min.0)
        );
        let drive_line = if photocell {
            String::new()
        } else if follows {
            "drive.high is the supply rail: taken at Vs_min, its lowest, against the load current at Vs_max, each at its own worst end".to_string()
        } else {
            format!(
                "drive.high {} is taken as given (the stage gives it no tolerance)",
                stage.drive.high
            )
        };
        let mut rb_picked = None;
        let gain = if photocell {
            // As the nominal does, the load at Vs_max (its largest) against the divider at
            // Vs_min (its weakest corner): a bound over the supply, so the corner names no
            // supply end.
            let g = il / ib / hfe;
            let mut corner = match divider {
                Some(d) if capped => d.drive_corner.clone(),
                _ => Corner::none(),
            };
            for (factor, extreme) in self.il_corner.entries() {
                corner = corner.with(*factor, *extreme);
            }
            let corner = corner
                .without(Factor::Supply)
                .with(Factor::Temperature, Extreme::Min);
            let line = format!(
                "hFE_min = IL / IB / {hfe:.3} = {il} / {ib} / {hfe:.3} = {}; the load current at Vs_max (its largest), the divider at Vs_min (its weakest): each at its own worst end of the supply",
                format_number(g)
            );
            Some((g, corner, line))
        } else {
            // The drive at its lowest (Vs_min when it is the supply rail) against the load
            // current at its largest (Vs_max): each factor at its own worst end, as the nominal
            // pairs Vs_max with the drive. The drive is a factor of its own for that reason.
            let drive = worst::drive_at(stage, false);
            let with_drive = |corner: Corner| {
                if follows {
                    corner.with(Factor::Drive, Extreme::Min)
                } else {
                    corner
                }
            };
            let across = drive - vbe_cold;
            if across.0 <= 0.0 || ib.0 <= 0.0 {
                let message = format!(
                    "in the cold VBE rises to {vbe_cold} (temperature_min {}): the drive's high level {drive} does not exceed it, so a BJT cannot be turned on there; raise [drive] high or use a MOSFET",
                    w.t_min
                );
                self.problem(
                    Severity::Error,
                    Some(ids::SWITCH_BASE_RESISTOR_MAX),
                    message,
                );
                return;
            }
            let rb_max: Ohms = across / (ib * (1.0 + w.tolerance));
            self.need(
                ids::SWITCH_BASE_RESISTOR_MAX,
                Bound::Max,
                Unit::Ohm,
                Some(rb_max.0),
                "(high - VBE(temperature_min)) / (base_current × (1 + tol))",
                vec![
                    format!(
                        "RB_max = (V_high - VBE) / (IB × (1 + tol)) = ({drive} - {vbe_cold}) / ({ib} × (1 + {})) = {rb_max}",
                        format_number(w.tolerance)
                    ),
                    vbe_line.clone(),
                    drive_line.clone(),
                    "the largest nominal resistor that, at the top of its tolerance in the cold, still gives the base current".to_string(),
                ],
                sources::CIRCUIT_THEORY,
            );
            // A capped base current is the source's figure: the load current does not move it.
            let base = if capped {
                Corner::none()
            } else {
                self.il_corner.clone()
            };
            let corner = with_drive(
                base.with(Factor::Temperature, Extreme::Min)
                    .with(Factor::Resistor, Extreme::PlusTol),
            );
            self.set_corner(ids::SWITCH_BASE_RESISTOR_MAX, &corner, Vec::new());
            let Some(rb) = self.nominal_value(ids::SWITCH_BASE_RESISTOR).map(Ohms) else {
                self.problem(
                    Severity::Error,
                    Some(ids::SWITCH_BASE_RESISTOR),
                    "no base resistor could be picked at nominal (the nominal needs say why), so the worst case cannot evaluate the drive".to_string(),
                );
                return;
            };
            rb_picked = Some(rb);
            let rb_high = rb * (1.0 + w.tolerance);
            let mut working = vec![
                format!(
                    "the nominal design's {} pick, {rb}: the worst case evaluates the design at its corners, it does not re-pick",
                    stage.rules.eseries
                ),
                format!("at +{}: {rb_high}", format_eng(w.tolerance, Dim::Percent)),
            ];
            if rb.0 > rb_max.0 * (1.0 + 1e-9) {
                working.push(format!(
                    "above base_resistor_max at the worst corner ({rb_max}): there the base gets less than IL / forced_beta, and switch.gain gives the hFE that still saturates"
                ));
            }
            self.need(
                ids::SWITCH_BASE_RESISTOR,
                Bound::Value,
                Unit::Ohm,
                Some(rb.0),
                "the nominal pick, taken at +tol",
                working,
                eseries::SOURCE,
            );
            self.set_corner(
                ids::SWITCH_BASE_RESISTOR,
                &Corner::none().with(Factor::Resistor, Extreme::PlusTol),
                Vec::new(),
            );
            // The corner that draws most from a limited source: drive high, VBE hot, -tol.
            if let Some(max_current) = stage.drive.max_current {
                let top = worst::drive_at(stage, true);
                let vbe_hot = w.vbe_at(vbe, w.t_max);
                let drawn: Amps = (top - vbe_hot) / (rb * (1.0 - w.tolerance));
                if drawn.0 > max_current.0 * (1.0 + 1e-9) {
                    let message = format!(
                        "at the corner that draws most (drive {top}, VBE {vbe_hot} at temperature_max {}, resistor at -{}) the base resistor {rb} draws {drawn} from the drive, above [drive] max_current {max_current}: take the next value up or check the source's margin",
                        w.t_max,
                        format_eng(w.tolerance, Dim::Percent)
                    );
                    self.problem(Severity::Warning, Some(ids::SWITCH_BASE_RESISTOR), message);
                }
            }
            let through: Amps = across / rb_high;
            let g = il / through / hfe;
            let corner = with_drive(
                self.il_corner
                    .clone()
                    .with(Factor::Temperature, Extreme::Min)
                    .with(Factor::Resistor, Extreme::PlusTol),
            );
            let line = format!(
                "IB = (V_high - VBE) / (RB × (1 + tol)) = ({drive} - {vbe_cold}) / {rb_high} = {through}; hFE_min = IL / IB / {hfe:.3} = {il} / {through} / {hfe:.3} = {}",
                format_number(g)
            );
            Some((g, corner, line))
        };
        let Some((g, corner, line)) = gain else {
            return;
        };
        let mut working = vec![line];
        if !photocell {
            working.push(vbe_line);
            working.push(drive_line);
        }
        working.push(hfe_line);
        working.push("a part whose hFE at this collector current (at 25 °C) is lower comes out of saturation in the cold".to_string());
        self.need(
            ids::SWITCH_GAIN,
            Bound::Min,
            Unit::None,
            Some(g),
            if photocell {
                "IL / IB(divider at its weakest) / (1 + hfe_tempco × (temperature_min - 25))"
            } else {
                "IL / IB(temperature_min, RB at +tol, drive lowest) / (1 + hfe_tempco × (temperature_min - 25))"
            },
            working,
            worst::SOURCE_TEMPERATURE,
        );
        self.set_corner(ids::SWITCH_GAIN, &corner, Vec::new());

        // Dissipation: the largest collector current with a bound on the base term.
        let (ib_max, vbe_p) = worst::base_dissipation_drive(stage, rb_picked, il);
        let dissipation = thermal::bjt_dissipation(stage.assume.vce_sat, il, vbe_p, ib_max).with(
            if rb_picked.is_some() {
                "the largest collector current (worst load.current) and a bound on the base term: the most base current (drive high, VBE at temperature_max, resistor -tol) times the highest VBE (temperature_min)"
            } else {
                "the largest collector current (worst load.current) and a bound on the base term: IL / forced_beta, the most the design lets the base take, times the highest VBE (temperature_min)"
            }
            .to_string(),
        );
        let p = dissipation.value;
        self.worked(
            ids::SWITCH_DISSIPATION,
            Bound::Value,
            Unit::Watt,
            p.0,
            "vce_sat × IL + VBE × IB, each at its largest",
            dissipation,
        );
        let mut corner = self
            .il_corner
            .clone()
            .with(Factor::Temperature, Extreme::Min);
        if rb_picked.is_some() {
            corner = corner.with(Factor::Resistor, Extreme::MinusTol);
            if follows {
                corner = corner.with(Factor::Drive, Extreme::Max);
            }
        }
        self.set_corner(ids::SWITCH_DISSIPATION, &corner, Vec::new());
        let ambient = worst::thermal_ambient(stage, true);
        let example = thermal::derated_pd(
            crate::units::Watts(1.0),
            crate::units::Celsius(150.0),
            ambient,
        );
        let note = format!(
            "a part's PD (at 25 °C) derated linearly to zero at TJmax must cover this at {ambient}, the hotter of rules.ambient and temperature_max (for TJmax 150 °C: PD × {})",
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
        self.set_corner(ids::SWITCH_POWER, &corner, Vec::new());
    }

    /// The gate drive of a MOSFET switch.
    fn mosfet_drive(&mut self, divider: Option<&Divider>) {
        let stage = self.stage;
        let (gate, origin) = match stage.drive.source {
            DriveSource::Logic if self.worst.is_some() => {
                let low = worst::drive_at(stage, false);
                (low, format!("[drive] high at its lowest = {low}"))
            }
            DriveSource::Logic => (
                stage.drive.high,
                format!("[drive] high = {}", stage.drive.high),
            ),
            DriveSource::Photocell => match divider {
                Some(d) => (
                    d.open,
                    format!(
                        "the divider's open node one decade past the switching level at Vs_min{}: {}",
                        if self.worst.is_some() {
                            ", at its worst corner"
                        } else {
                            ""
                        },
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
        // Worst case: the gate at its lowest for RDS(on) and VGS(th), at its highest for VGS max.
        let mut top = gate;
        let mut corners = None;
        if self.worst.is_some() {
            let follows = worst::drive_follows_supply(stage);
            let (low_corner, high_corner, lines) = match (stage.drive.source, divider) {
                (DriveSource::Photocell, Some(d)) => {
                    top = stage.supply.max();
                    (
                        d.open_corner.clone(),
                        Corner::none().with(Factor::Supply, Extreme::Max),
                        vec![format!(
                            "the divider's node never exceeds the supply: VGS at most Vs_max = {top}"
                        )],
                    )
                }
                _ if follows => {
                    top = worst::drive_at(stage, true);
                    (
                        Corner::none().with(Factor::Drive, Extreme::Min),
                        Corner::none().with(Factor::Drive, Extreme::Max),
                        vec![format!(
                            "drive.high is the supply rail: VGS from Vs_min {gate} to Vs_max {top}"
                        )],
                    )
                }
                _ => (
                    Corner::none(),
                    Corner::none(),
                    vec![format!(
                        "drive.high {} is taken as given (the stage gives it no tolerance)",
                        stage.drive.high
                    )],
                ),
            };
            corners = Some((low_corner, high_corner, lines));
        }
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
            Some(top.0),
            "high",
            vec![format!(
                "a MOSFET's VGS max must stand the gate drive {top}"
            )],
            sources::COMMON_PRACTICE,
        );
        if let Some((low, high, lines)) = corners {
            self.set_corner(ids::SWITCH_GATE_DRIVE, &low, lines.clone());
            self.set_corner(ids::SWITCH_GATE_THRESHOLD, &low, lines.clone());
            self.set_corner(ids::SWITCH_GATE_VOLTAGE, &high, lines);
        }
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
            let il_corner = self.il_corner.clone();
            self.set_corner(
                ids::CLAMP_VOLTAGE,
                &Corner::none().with(Factor::Supply, Extreme::Max),
                Vec::new(),
            );
            self.set_corner(ids::CLAMP_CURRENT, &il_corner, Vec::new());
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
        // Worst case: the cold coil of load.current (lowest R: longest τ, most current).
        let r20 = r;
        let (r, cold_line) = match self.worst {
            Some(w) => (r * w.coil_cold(), Some(w.cold_coil_line(r))),
            None => (r, None),
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
        let il_corner = self.il_corner.clone();
        let cold = Corner::none().with(Factor::Temperature, Extreme::Min);
        let cold_lines: Vec<String> = cold_line.iter().cloned().collect();
        self.set_corner(ids::COIL_TAU, &cold, cold_lines.clone());
        self.set_corner(ids::COIL_ENERGY, &il_corner, Vec::new());
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
                // The release is a magnetic threshold, a current: the 20 °C figure over R20
                // holds at any coil temperature.
                let i: Amps = v / r20;
                (
                    i,
                    format!(
                        "I_rel = must-release voltage / R = {v} / {r20} = {i} (the relay's own figure)"
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
                let mut lines = cold_lines.clone();
                lines.push(
                    "the cold coil at Vs_max releases slowest: τ is longest and the current highest"
                        .to_string(),
                );
                self.set_corner(ids::COIL_RELEASE_TIME, &il_corner, lines);
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
            self.set_corner(ids::ZENER_ENERGY, &il_corner, cold_lines);
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
        let il_corner = self.il_corner.clone();
        self.set_corner(
            ids::RELAY_COIL_CURRENT,
            &il_corner,
            vec![
                "a relay's own coil current is taken at the same corner (its coil_r cold)"
                    .to_string(),
            ],
        );
        match self.worst {
            Some(w) => {
                let operate = relay::operate_voltage_hot(vs_min, v_sat, w.coil_hot_temperature());
                let v = operate.value;
                self.worked(
                    ids::RELAY_OPERATE_VOLTAGE,
                    Bound::Max,
                    Unit::Volt,
                    v.0,
                    "(Vs_min - V_sat) / (1 + α (temperature_max + coil_rise - 20))",
                    operate,
                );
                let corner = Corner::none()
                    .with(Factor::Supply, Extreme::Min)
                    .with(Factor::Temperature, Extreme::Max);
                self.set_corner(ids::RELAY_OPERATE_VOLTAGE, &corner, vec![w.hot_coil_line()]);
            }
            None => {
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
            }
        }
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
        self.set_corner(
            ids::RELAY_COIL_VOLTAGE_MAX,
            &Corner::none().with(Factor::Supply, Extreme::Max),
            Vec::new(),
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
            if self.worst.is_some() {
                "with its coil hot at the low end of the supply the relay may not pull in"
            } else {
                "at the low end of the supply the relay may not pull in"
            },
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
        let mut open = photocell::divider_node(stage.supply.min(), top, bottom);
        let mut drive = drive;
        let mut drive_corner = Corner::none();
        let mut open_corner = Corner::none();
        if let Some(w) = self.worst {
            // The divider's weakest corner at Vs_min: r10 and the fixed resistor each at either
            // end of its tolerance.
            let mut weakest: Option<(Worked<Amps>, Corner)> = None;
            let mut lowest: Option<(Volts, Corner)> = None;
            for (r10_plus, rf_plus) in [(false, false), (false, true), (true, false), (true, true)]
            {
                let r10_at = r10 * (1.0 + if r10_plus { tolerance } else { -tolerance });
                let rf = fixed * (1.0 + if rf_plus { w.tolerance } else { -w.tolerance });
                let corner = Corner::none()
                    .with(Factor::Supply, Extreme::Min)
                    .with(Factor::R10, Extreme::tolerance(r10_plus))
                    .with(Factor::Resistor, Extreme::tolerance(rf_plus));
                let at = photocell::drive_current(
                    sensor.activate,
                    r10_at,
                    gamma,
                    sensor.on_lux,
                    rf,
                    stage.supply.min(),
                    sensor.threshold,
                )
                .with(format!("r10 at {r10_at}, fixed resistor at {rf}"));
                if weakest.as_ref().is_none_or(|(b, _)| at.value.0 < b.value.0) {
                    weakest = Some((at, corner.clone()));
                }
                let (top, bottom) = match sensor.activate {
                    Activate::Light => (
                        photocell::resistance_at(r10_at, gamma, Lux(sensor.on_lux.0 * 10.0)),
                        rf,
                    ),
                    Activate::Dark => (
                        rf,
                        photocell::resistance_at(r10_at, gamma, Lux(sensor.on_lux.0 / 10.0)),
                    ),
                };
                let node = photocell::divider_node(stage.supply.min(), top, bottom);
                if lowest.as_ref().is_none_or(|(b, _)| node.0 < b.0) {
                    lowest = Some((node, corner));
                }
            }
            if let Some((at, corner)) = weakest {
                drive = at;
                drive_corner = corner;
            }
            if let Some((node, corner)) = lowest {
                open = node;
                open_corner = corner;
            }
        }
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
            drive_corner,
            open_corner,
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
        if let Some(w) = self.worst {
            self.on_lux_spread(w, d, fixed);
        } else {
            self.on_lux_nominal_spread(d, fixed, vs);
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
        self.set_corner(
            ids::SENSOR_VOLTAGE,
            &Corner::none().with(Factor::Supply, Extreme::Max),
            Vec::new(),
        );
        // Worst case: the fixed resistor at its low tolerance lets the photocell take most.
        let low_fixed = self.worst.map(|w| (w, fixed * (1.0 - w.tolerance)));
        let p = photocell::worst_power(vs_max, low_fixed.map_or(fixed, |(_, r)| r));
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
        if let Some((w, r)) = low_fixed {
            let corner = Corner::none()
                .with(Factor::Supply, Extreme::Max)
                .with(Factor::Resistor, Extreme::MinusTol);
            let line = format!(
                "the fixed resistor at -{} of {fixed}: {r}",
                format_eng(w.tolerance, Dim::Percent)
            );
            self.set_corner(ids::SENSOR_POWER, &corner, vec![line]);
        }
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
            let corner = d.drive_corner.clone();
            self.set_corner(
                ids::SENSOR_DRIVE_CURRENT,
                &corner,
                vec![
                    "the weakest of the four corners of r10 and the fixed resistor at Vs_min"
                        .to_string(),
                ],
            );
        }
        self.hold_photocell(sensor);
    }

    /// The photocell part named by the stage held against its needs.
    fn hold_photocell(&mut self, sensor: &Sensor) {
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

    /// The switching light level with R10 at either end of its tolerance (nominal supply and
    /// fixed resistor).
    fn on_lux_nominal_spread(&mut self, d: &Divider, fixed: Ohms, vs: Volts) {
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
    }

    /// The switching light level at its lowest and highest over every corner of the supply,
    /// r10 and the fixed resistor's tolerance together (worst case).
    fn on_lux_spread(&mut self, w: worst::Conditions, d: &Divider, fixed: Ohms) {
        let stage = self.stage;
        let mut low: Option<(Worked<Lux>, Corner)> = None;
        let mut high: Option<(Worked<Lux>, Corner)> = None;
        for supply_high in [false, true] {
            let vs = if supply_high {
                stage.supply.max()
            } else {
                stage.supply.min()
            };
            if vs.0 <= d.threshold.0 {
                continue;
            }
            for (r10_plus, rf_plus) in [(false, false), (false, true), (true, false), (true, true)]
            {
                let r10 = d.r10 * (1.0 + if r10_plus { d.tolerance } else { -d.tolerance });
                let rf = fixed * (1.0 + if rf_plus { w.tolerance } else { -w.tolerance });
                let worked =
                    photocell::switching_lux(d.activate, rf, vs, d.threshold, r10, d.gamma).with(
                        format!(
                            "Vs {vs}, r10 {r10} ({} {}), fixed resistor {rf} ({} {})",
                            if r10_plus { "+" } else { "-" },
                            format_eng(d.tolerance, Dim::Percent),
                            if rf_plus { "+" } else { "-" },
                            format_eng(w.tolerance, Dim::Percent)
                        ),
                    );
                if !worked.value.0.is_finite() {
                    continue;
                }
                let corner = Corner::none()
                    .with(Factor::Supply, Extreme::range(supply_high))
                    .with(Factor::R10, Extreme::tolerance(r10_plus))
                    .with(Factor::Resistor, Extreme::tolerance(rf_plus));
                if low.as_ref().is_none_or(|(b, _)| worked.value.0 < b.value.0) {
                    low = Some((worked.clone(), corner.clone()));
                }
                if high
                    .as_ref()
                    .is_none_or(|(b, _)| worked.value.0 > b.value.0)
                {
                    high = Some((worked, corner));
                }
            }
        }
        for (id, found, word) in [
            (ids::SENSOR_ON_LUX_LOW, low, "lowest"),
            (ids::SENSOR_ON_LUX_HIGH, high, "highest"),
        ] {
            let Some((worked, corner)) = found else {
                continue;
            };
            let v = worked.value.0;
            self.worked(
                id,
                Bound::Value,
                Unit::Lux,
                v,
                "on_lux over the corners of supply, r10 and fixed_resistor tolerances",
                worked,
            );
            self.set_corner(
                id,
                &corner,
                vec![format!(
                    "the {word} switching level of the eight corners of supply, r10 tolerance and the fixed resistor's tolerance together"
                )],
            );
        }
    }
}

#[cfg(test)]
mod tests;
