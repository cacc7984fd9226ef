//! The needs of a stage: what every role of a switching stage requires, each need with the
//! working behind its number and the source of its rule.
//!
//! [`compute`] turns a [`Stage`](crate::stage::Stage) (and, when given, the library that holds
//! the relay or photocell the stage names) into [`Needs`]. The topic modules hold the relations
//! themselves as pure functions, each returning its value with its working ([`Worked`]), so the
//! fit and trace code can reuse them per part. [`report`] renders needs as text, Markdown and
//! the JSON that `loadfit needs --format json` prints.
//!
//! With `rules.worst_case` on, [`compute`] gives every need at its worst corner of supply,
//! temperature and tolerance ([`worst`]): each [`Need`] then carries the [`Corner`] it is taken
//! at and its nominal value beside it. [`compute_both`] gives the nominal and the worst-case
//! needs of a stage together, whatever its `worst_case` says, for a view that shows both.

mod assemble;
pub mod eseries;
pub mod inductive;
pub mod isolation;
pub mod photocell;
pub mod relay;
pub mod report;
pub mod switching;
pub mod thermal;
pub mod timing;
pub mod worst;

pub use assemble::{Cases, compute, compute_both, compute_nominal};
pub use worst::Corner;

use crate::units::{Dim, format_eng};
use std::fmt;

/// The need ids of issue 3, a binding contract: outputs and the fit code refer to needs by these.
pub mod ids {
    /// Supply at its upper tolerance, Vs_max (a computed figure the other needs use).
    pub const SUPPLY_MAX: &str = "supply.max";
    /// Supply at its lower tolerance, Vs_min.
    pub const SUPPLY_MIN: &str = "supply.min";
    /// Current through the load with the switch on.
    pub const LOAD_CURRENT: &str = "load.current";
    /// LED series resistor, the E-series value at or above the exact one.
    pub const LOAD_SERIES_RESISTOR: &str = "load.series_resistor";
    /// Power rating the LED series resistor needs.
    pub const LOAD_SERIES_RESISTOR_POWER: &str = "load.series_resistor_power";
    /// RC time constant of a capacitive load.
    pub const LOAD_TAU: &str = "load.tau";
    /// 10-90 % rise time of a capacitive load.
    pub const LOAD_RISE_TIME: &str = "load.rise_time";
    /// Time to settle within 0.7 % (5 τ) of a capacitive load.
    pub const LOAD_SETTLE_TIME: &str = "load.settle_time";
    /// Highest voltage across the switch when it is off.
    pub const SWITCH_OFF_PEAK: &str = "switch.off_peak";
    /// Breakdown voltage (VCEO, VDS) the switch needs.
    pub const SWITCH_VOLTAGE: &str = "switch.voltage";
    /// Continuous current (IC, ID) the switch needs.
    pub const SWITCH_CURRENT: &str = "switch.current";
    /// Base current of a BJT switch.
    pub const SWITCH_BASE_CURRENT: &str = "switch.base_current";
    /// Largest base resistor that still gives the base current.
    pub const SWITCH_BASE_RESISTOR_MAX: &str = "switch.base_resistor_max";
    /// The base resistor picked from the E-series.
    pub const SWITCH_BASE_RESISTOR: &str = "switch.base_resistor";
    /// Minimum hFE the BJT needs to saturate with the picked base resistor.
    pub const SWITCH_GAIN: &str = "switch.gain";
    /// Dissipation of a saturated BJT switch.
    pub const SWITCH_DISSIPATION: &str = "switch.dissipation";
    /// PD rating the BJT switch needs.
    pub const SWITCH_POWER: &str = "switch.power";
    /// Gate drive of a MOSFET switch: RDS(on) must be specified at a VGS no higher than this.
    pub const SWITCH_GATE_DRIVE: &str = "switch.gate_drive";
    /// Highest VGS(th)max that leaves the channel well enhanced at the gate drive.
    pub const SWITCH_GATE_THRESHOLD: &str = "switch.gate_threshold";
    /// VGS max rating the MOSFET needs to stand the gate drive.
    pub const SWITCH_GATE_VOLTAGE: &str = "switch.gate_voltage";
    /// VRRM the clamp diode needs.
    pub const CLAMP_VOLTAGE: &str = "clamp.voltage";
    /// Forward current rating the clamp diode needs.
    pub const CLAMP_CURRENT: &str = "clamp.current";
    /// Zener voltage of a diode-plus-zener clamp.
    pub const ZENER_VOLTAGE: &str = "zener.voltage";
    /// Energy the zener absorbs at each switch-off.
    pub const ZENER_ENERGY: &str = "zener.energy";
    /// L/R time constant of the coil.
    pub const COIL_TAU: &str = "coil.tau";
    /// Energy held in the coil, ½ L IL².
    pub const COIL_ENERGY: &str = "coil.energy";
    /// Time for the coil current to fall to the release current through the clamp.
    pub const COIL_RELEASE_TIME: &str = "coil.release_time";
    /// Coil current of a relay load.
    pub const RELAY_COIL_CURRENT: &str = "relay.coil_current";
    /// Highest must-operate voltage that still pulls the relay in at Vs_min.
    pub const RELAY_OPERATE_VOLTAGE: &str = "relay.operate_voltage";
    /// Coil voltage the relay must stand continuously at Vs_max.
    pub const RELAY_COIL_VOLTAGE_MAX: &str = "relay.coil_voltage_max";
    /// Contact voltage rating the relay needs.
    pub const RELAY_CONTACT_VOLTAGE: &str = "relay.contact_voltage";
    /// Contact current rating the relay needs.
    pub const RELAY_CONTACT_CURRENT: &str = "relay.contact_current";
    /// Inrush current the contacts must make.
    pub const RELAY_INRUSH: &str = "relay.inrush";
    /// Coil-to-contact rated impulse voltage (IEC 60664-1).
    pub const RELAY_IMPULSE: &str = "relay.impulse";
    /// Coil-to-contact dielectric strength, V rms.
    pub const RELAY_DIELECTRIC: &str = "relay.dielectric";
    /// Photocell resistance at the switching light level.
    pub const SENSOR_RESISTANCE_AT_ON: &str = "sensor.resistance_at_on";
    /// Fixed divider resistor that puts the node at the threshold at on_lux.
    pub const SENSOR_FIXED_RESISTOR_EXACT: &str = "sensor.fixed_resistor_exact";
    /// The fixed divider resistor picked from the E-series.
    pub const SENSOR_FIXED_RESISTOR: &str = "sensor.fixed_resistor";
    /// Light level at which the picked resistor switches.
    pub const SENSOR_ON_LUX: &str = "sensor.on_lux";
    /// Switching light level with R10 at the low end of its tolerance.
    pub const SENSOR_ON_LUX_LOW: &str = "sensor.on_lux_low";
    /// Switching light level with R10 at the high end of its tolerance.
    pub const SENSOR_ON_LUX_HIGH: &str = "sensor.on_lux_high";
    /// Voltage rating the photocell needs.
    pub const SENSOR_VOLTAGE: &str = "sensor.voltage";
    /// Dissipation rating the photocell needs.
    pub const SENSOR_POWER: &str = "sensor.power";
    /// Current the divider can give the switch one decade of light past the switching level.
    pub const SENSOR_DRIVE_CURRENT: &str = "sensor.drive_current";
}

/// Sources named beside the rules, so the same rule always cites the same words.
pub mod sources {
    /// Ohm's and Kirchhoff's laws.
    pub const CIRCUIT_THEORY: &str = "circuit theory (Ohm's and Kirchhoff's laws)";
    /// A rule of the trade with no single source.
    pub const COMMON_PRACTICE: &str = "common practice";
    /// Derating: need = stress / derating factor.
    pub const DERATING: &str = "common practice (derating: need = stress / factor from [rules])";
    /// First-order RC and RL responses.
    pub const FIRST_ORDER: &str = "circuit theory (first-order RC/RL response)";
    /// The clamped-coil decay.
    pub const COIL_DECAY: &str =
        "circuit theory: i(t) = -Vc/R + (I0 + Vc/R) e^(-t/τ) through a clamp of voltage Vc";
    /// IEC 60664-1 rated impulse voltage.
    pub const IEC_60664_IMPULSE: &str = "IEC 60664-1 (ed. 2007/2020) table F.1; reinforced one step higher (clause 5.1.6, from memory); confirm against the edition in force";
    /// IEC 60950-1 dielectric test voltages.
    pub const IEC_60950_DIELECTRIC: &str =
        "IEC 60950-1 ed. 2 table 5B (from memory); confirm against the edition in force";
    /// The CdS photocell law.
    pub const PHOTOCELL_LAW: &str =
        "common practice: CdS photocell R(E) = R10 (E / 10 lux)^-γ, with a voltage divider";
}

/// Which side of a need a part's rating must fall on.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Bound {
    /// A part's rating must be at least the value.
    Min,
    /// A part's rating must be at most the value.
    Max,
    /// A computed figure, not a limit.
    Value,
}

impl Bound {
    /// The word used in the JSON output (`min`, `max`, `value`).
    #[must_use]
    pub fn name(self) -> &'static str {
        match self {
            Bound::Min => "min",
            Bound::Max => "max",
            Bound::Value => "value",
        }
    }

    /// The relation shown in text output (`>=`, `<=`, `=`).
    #[must_use]
    pub fn symbol(self) -> &'static str {
        match self {
            Bound::Min => ">=",
            Bound::Max => "<=",
            Bound::Value => "=",
        }
    }
}

/// The unit of a need, one of the binding JSON units.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Unit {
    /// Volts.
    Volt,
    /// Amperes.
    Amp,
    /// Ohms.
    Ohm,
    /// Watts.
    Watt,
    /// Farads.
    Farad,
    /// Henries.
    Henry,
    /// Seconds.
    Second,
    /// Joules.
    Joule,
    /// Lux.
    Lux,
    /// A plain number (a gain).
    None,
}

impl Unit {
    /// The unit as the JSON output writes it: `V` `A` `ohm` `W` `F` `H` `s` `J` `lux` or empty.
    #[must_use]
    pub fn ascii(self) -> &'static str {
        self.dim().ascii()
    }

    /// The dimension used to show a value of this unit.
    #[must_use]
    pub fn dim(self) -> Dim {
        match self {
            Unit::Volt => Dim::Volt,
            Unit::Amp => Dim::Amp,
            Unit::Ohm => Dim::Ohm,
            Unit::Watt => Dim::Watt,
            Unit::Farad => Dim::Farad,
            Unit::Henry => Dim::Henry,
            Unit::Second => Dim::Second,
            Unit::Joule => Dim::Joule,
            Unit::Lux => Dim::Lux,
            Unit::None => Dim::Number,
        }
    }
}

/// A value with the working that gives it and the source of its rule: what every relation
/// in the topic modules returns.
#[derive(Debug, Clone, PartialEq)]
pub struct Worked<T> {
    /// The value.
    pub value: T,
    /// The derivation lines: formula, numbers, rule.
    pub working: Vec<String>,
    /// The source of the rule: a standard, a handbook relation or "common practice".
    pub source: &'static str,
}

impl<T> Worked<T> {
    /// A value with one line of working.
    pub fn new(value: T, line: String, source: &'static str) -> Self {
        Worked {
            value,
            working: vec![line],
            source,
        }
    }

    /// Adds a line of working.
    #[must_use]
    pub fn with(mut self, line: String) -> Self {
        self.working.push(line);
        self
    }
}

/// One computed requirement of the stage, e.g. `switch.voltage >= 16.5 V`, with its working.
#[derive(Debug, Clone, PartialEq)]
pub struct Need {
    /// The id, `role.name` (see [`ids`]).
    pub id: &'static str,
    /// The role: the part of the id before the dot (`switch`, `clamp`, `relay` ...).
    pub role: &'static str,
    /// The value in SI base units; `None` where the need is not bounded (an unclamped coil).
    pub value: Option<f64>,
    /// The unit of the value.
    pub unit: Unit,
    /// Which side a part's rating must fall on.
    pub bound: Bound,
    /// The short formula shown in text output (`off_peak / voltage_derating`).
    pub formula: String,
    /// The derivation lines.
    pub working: Vec<String>,
    /// The source of the rule.
    pub source: String,
    /// In a worst-case computation, the corner the value is taken at (empty when no factor
    /// moves it); `None` in a nominal computation.
    pub corner: Option<Corner>,
    /// In a worst-case computation, the need's nominal value (SI), for showing beside the worst
    /// one; `None` in a nominal computation or where the nominal has no value.
    pub nominal: Option<f64>,
}

impl Need {
    /// A need with the role taken from the id.
    #[must_use]
    pub fn new(id: &'static str, bound: Bound, unit: Unit, value: Option<f64>) -> Need {
        Need {
            id,
            role: id.split('.').next().unwrap_or(id),
            value: value.filter(|v| v.is_finite()),
            unit,
            bound,
            formula: String::new(),
            working: Vec::new(),
            source: String::new(),
            corner: None,
            nominal: None,
        }
    }

    /// The nominal value in engineering notation, or "not bounded", for a worst-case need.
    #[must_use]
    pub fn nominal_shown(&self) -> String {
        match self.nominal {
            Some(v) => format_eng(v, self.unit.dim()),
            None => "not bounded".to_string(),
        }
    }

    /// The value in engineering notation with its unit, or "not bounded".
    #[must_use]
    pub fn shown(&self) -> String {
        match self.value {
            Some(v) => format_eng(v, self.unit.dim()),
            None => "not bounded".to_string(),
        }
    }
}

/// How serious a problem is.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Severity {
    /// The stage as given cannot work or cannot be bounded; `loadfit needs` exits 1.
    Error,
    /// Something to check: a capped current, a missing figure, a value outside the usual.
    Warning,
    /// A safety note: mains or hazardous voltages on the contacts.
    Caution,
}

impl Severity {
    /// The word used in outputs.
    #[must_use]
    pub fn name(self) -> &'static str {
        match self {
            Severity::Error => "error",
            Severity::Warning => "warning",
            Severity::Caution => "caution",
        }
    }
}

impl fmt::Display for Severity {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

/// Something wrong or worth knowing about a stage, tied to a need where there is one.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Problem {
    /// How serious it is.
    pub severity: Severity,
    /// The need it concerns, if any.
    pub need: Option<&'static str>,
    /// What is wrong and what to do.
    pub message: String,
}

/// Every need of a stage and its problems.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Needs {
    /// The stage's title.
    pub stage: String,
    /// The needs, in derivation order (supply, load, switch, clamp, coil, relay, sensor).
    pub needs: Vec<Need>,
    /// The problems, in the order found.
    pub problems: Vec<Problem>,
}

impl Needs {
    /// The need with this id.
    #[must_use]
    pub fn get(&self, id: &str) -> Option<&Need> {
        self.needs.iter().find(|n| n.id == id)
    }

    /// The value of the need with this id, when it has one.
    #[must_use]
    pub fn value(&self, id: &str) -> Option<f64> {
        self.get(id).and_then(|n| n.value)
    }

    /// The needs of one role (`switch`, `clamp` ...), in order.
    pub fn for_role<'a>(&'a self, role: &'a str) -> impl Iterator<Item = &'a Need> + 'a {
        self.needs.iter().filter(move |n| n.role == role)
    }

    /// The roles that have needs, in first-appearance order.
    #[must_use]
    pub fn roles(&self) -> Vec<&'static str> {
        let mut roles: Vec<&'static str> = Vec::new();
        for need in &self.needs {
            if !roles.contains(&need.role) {
                roles.push(need.role);
            }
        }
        roles
    }

    /// Whether these needs are taken at their worst corners (computed with `rules.worst_case`
    /// or as the worst half of [`compute_both`]): every need then carries a corner.
    #[must_use]
    pub fn is_worst_case(&self) -> bool {
        self.needs.iter().any(|n| n.corner.is_some())
    }

    /// Whether any problem is an error (the stage cannot work as given).
    #[must_use]
    pub fn has_errors(&self) -> bool {
        self.problems.iter().any(|p| p.severity == Severity::Error)
    }
}
