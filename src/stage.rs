//! The stage file: the switching circuit being designed, as TOML, read into a typed [`Stage`]
//! with its defaults filled in and its values checked.
//!
//! Quantities are unit strings (`"12 V"`, `"550 ohm"`, `"100 mH"`) read by [`crate::units::parse`],
//! or bare numbers in SI base units (°C for temperatures, a fraction for percentages).
//! An unknown key is an error naming the key, so a misspelt `resistnce` is never ignored.
//! The binding key list is issue 3's; [`KEYS`] holds it.

mod read;

use crate::needs::eseries::Series;
use crate::units::{Amps, Celsius, Farads, Henries, Kelvins, Lux, Ohms, Volts};
use std::fmt;
use std::path::Path;
use thiserror::Error;

/// The keys of every table, in the order the issue lists them. Unknown keys are errors.
pub const KEYS: [(&str, &[&str]); 10] = [
    ("", &["title"]),
    ("supply", &["volts", "tolerance"]),
    ("drive", &["source", "high", "max_current"]),
    (
        "load",
        &[
            "type",
            "resistance",
            "inductance",
            "capacitance",
            "led_vf",
            "led_current",
            "relay",
        ],
    ),
    (
        "contacts",
        &[
            "volts",
            "ac",
            "amps",
            "kind",
            "inrush",
            "insulation",
            "overvoltage_category",
        ],
    ),
    ("switch", &["type", "forced_beta"]),
    ("clamp", &["type", "zener_volts"]),
    (
        "sensor",
        &[
            "activate",
            "on_lux",
            "threshold",
            "r10",
            "r10_tolerance",
            "gamma",
            "part",
        ],
    ),
    (
        "rules",
        &[
            "voltage_derating",
            "current_derating",
            "power_derating",
            "ambient",
            "eseries",
            "quantity",
            "allow_obsolete",
            "require_rohs",
            "worst_case",
            "temperature_min",
            "temperature_max",
            "coil_rise",
        ],
    ),
    (
        "assume",
        &[
            "vce_sat",
            "vbe_on",
            "diode_vf",
            "vbe_tempco",
            "hfe_tempco",
            "resistor_tolerance",
        ],
    ),
];

/// Largest stage file read, in bytes: a stage is a few hundred bytes; this keeps a wrong path
/// (a disk image, a log) from being read whole.
pub const MAX_FILE_BYTES: u64 = 1024 * 1024;

/// Why a stage file cannot be read: the file, where, the text, what is wrong and what to do.
#[derive(Debug, Clone, PartialEq, Eq, Error)]
#[error("{}", self.render())]
pub struct StageError {
    /// The file as named by the user.
    pub file: String,
    /// The 1-based line of the offending text, when known.
    pub line: Option<u32>,
    /// The key, written `[table] key` (`[load] resistance`), or `[table]` for a table-level
    /// problem; `None` for the whole file.
    pub key: Option<String>,
    /// The offending text as written, when there is one.
    pub text: Option<String>,
    /// What is wrong (and, for most errors, what to do about it).
    pub message: String,
    /// More on what to do, shown after the line number (the known keys after an unknown key);
    /// empty when the message says it all.
    pub detail: Box<str>,
}

impl StageError {
    /// One line: `file: [table] key = text: message (line N): detail`.
    fn render(&self) -> String {
        let mut out = format!("{}: ", self.file);
        if let Some(key) = &self.key {
            out.push_str(key);
            if let Some(text) = &self.text {
                out.push_str(" = ");
                out.push_str(text);
                out.push(':');
            }
            out.push(' ');
        }
        out.push_str(&self.message);
        if let Some(line) = self.line {
            out.push_str(&format!(" (line {line})"));
        }
        if !self.detail.is_empty() {
            out.push_str(": ");
            out.push_str(&self.detail);
        }
        out
    }
}

/// What drives the switch.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum DriveSource {
    /// A logic output or other voltage source, `drive.high` when on.
    Logic,
    /// A photocell divider ([`Sensor`]) drives the switch directly.
    Photocell,
}

/// What the switch drives.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum LoadType {
    /// A resistor, heater, or anything without stored energy.
    Resistive,
    /// An LED with its series resistor.
    Led,
    /// A capacitor charged through a series resistance.
    Capacitive,
    /// A solenoid, valve or motor winding: resistance and inductance.
    Inductive,
    /// A relay coil, whose contacts switch a second circuit ([`Contacts`]).
    Relay,
}

impl LoadType {
    /// The word used in stage files.
    #[must_use]
    pub fn name(self) -> &'static str {
        match self {
            LoadType::Resistive => "resistive",
            LoadType::Led => "led",
            LoadType::Capacitive => "capacitive",
            LoadType::Inductive => "inductive",
            LoadType::Relay => "relay",
        }
    }

    /// Whether the load is a coil, whose current must be given a path at switch-off.
    #[must_use]
    pub fn is_coil(self) -> bool {
        matches!(self, LoadType::Inductive | LoadType::Relay)
    }
}

/// What the relay contacts switch; sets the inrush multiplier.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum ContactLoad {
    /// Heaters and other resistive loads.
    Resistive,
    /// Motors (locked-rotor current at start).
    Motor,
    /// Tungsten lamps (cold filament).
    Lamp,
    /// Capacitive loads and LED drivers (charging spike).
    Capacitive,
}

impl ContactLoad {
    /// The word used in stage files.
    #[must_use]
    pub fn name(self) -> &'static str {
        match self {
            ContactLoad::Resistive => "resistive",
            ContactLoad::Motor => "motor",
            ContactLoad::Lamp => "lamp",
            ContactLoad::Capacitive => "capacitive",
        }
    }
}

/// The insulation required between the relay's coil and its contacts.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Insulation {
    /// Only what the circuit needs to work: no protection against shock.
    Functional,
    /// One level of protection against shock.
    Basic,
    /// Protection equal to double insulation.
    Reinforced,
}

impl Insulation {
    /// The word used in stage files.
    #[must_use]
    pub fn name(self) -> &'static str {
        match self {
            Insulation::Functional => "functional",
            Insulation::Basic => "basic",
            Insulation::Reinforced => "reinforced",
        }
    }
}

/// The switch family the stage allows.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum SwitchType {
    /// NPN low-side switch.
    Npn,
    /// PNP high-side switch.
    Pnp,
    /// N-MOSFET low-side switch.
    Nmos,
    /// P-MOSFET high-side switch.
    Pmos,
    /// Any of them: needs for both BJT and MOSFET drive are given.
    Any,
}

impl SwitchType {
    /// The word used in stage files.
    #[must_use]
    pub fn name(self) -> &'static str {
        match self {
            SwitchType::Npn => "npn",
            SwitchType::Pnp => "pnp",
            SwitchType::Nmos => "nmos",
            SwitchType::Pmos => "pmos",
            SwitchType::Any => "any",
        }
    }

    /// Whether BJT drive needs apply (npn, pnp, any).
    #[must_use]
    pub fn has_bjt_drive(self) -> bool {
        matches!(self, SwitchType::Npn | SwitchType::Pnp | SwitchType::Any)
    }

    /// Whether MOSFET drive needs apply (nmos, pmos, any).
    #[must_use]
    pub fn has_mosfet_drive(self) -> bool {
        matches!(self, SwitchType::Nmos | SwitchType::Pmos | SwitchType::Any)
    }

    /// Whether the switch sits on the supply side (pnp, pmos): it turns off only when its
    /// base or gate is pulled all the way to the supply.
    #[must_use]
    pub fn is_high_side(self) -> bool {
        matches!(self, SwitchType::Pnp | SwitchType::Pmos)
    }
}

/// How the coil is clamped at switch-off.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum ClampType {
    /// No clamp.
    None,
    /// A diode across the coil.
    Diode,
    /// A diode in series with a zener across the coil (faster release).
    Zener,
}

impl ClampType {
    /// The word used in stage files.
    #[must_use]
    pub fn name(self) -> &'static str {
        match self {
            ClampType::None => "none",
            ClampType::Diode => "diode",
            ClampType::Zener => "zener",
        }
    }
}

/// When a photocell stage switches on.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Activate {
    /// On above `on_lux`: photocell to the supply, fixed resistor to ground.
    Light,
    /// On below `on_lux`: fixed resistor to the supply, photocell to ground.
    Dark,
}

impl Activate {
    /// The word used in stage files.
    #[must_use]
    pub fn name(self) -> &'static str {
        match self {
            Activate::Light => "light",
            Activate::Dark => "dark",
        }
    }
}

/// `[supply]`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Supply {
    /// Nominal supply voltage.
    pub volts: Volts,
    /// Tolerance either way, as a fraction (0.1 for 10 %).
    pub tolerance: f64,
}

impl Supply {
    /// Vs_max = Vs (1 + tolerance).
    #[must_use]
    pub fn max(&self) -> Volts {
        self.volts * (1.0 + self.tolerance)
    }

    /// Vs_min = Vs (1 - tolerance).
    #[must_use]
    pub fn min(&self) -> Volts {
        self.volts * (1.0 - self.tolerance)
    }
}

/// `[drive]`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Drive {
    /// What drives the switch.
    pub source: DriveSource,
    /// The drive's on level (default: the supply voltage).
    pub high: Volts,
    /// The most current the drive can source, when limited.
    pub max_current: Option<Amps>,
}

/// `[load]`.
#[derive(Debug, Clone, PartialEq)]
pub struct Load {
    /// What the load is.
    pub kind: LoadType,
    /// Load resistance, series resistance of a capacitive load, or coil resistance.
    pub resistance: Option<Ohms>,
    /// Coil inductance.
    pub inductance: Option<Henries>,
    /// Capacitance of a capacitive load.
    pub capacitance: Option<Farads>,
    /// LED forward voltage.
    pub led_vf: Option<Volts>,
    /// LED current to set.
    pub led_current: Option<Amps>,
    /// Part number of the relay in the library, supplying coil figures not given here.
    pub relay: Option<String>,
}

impl Load {
    /// A load of `kind` with nothing else given.
    #[must_use]
    pub fn of(kind: LoadType) -> Load {
        Load {
            kind,
            resistance: None,
            inductance: None,
            capacitance: None,
            led_vf: None,
            led_current: None,
            relay: None,
        }
    }
}

/// `[contacts]`: what a relay's contacts switch.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Contacts {
    /// Working voltage on the contacts (V rms for AC).
    pub volts: Volts,
    /// Whether the contact circuit is AC.
    pub ac: bool,
    /// Steady current through the contacts.
    pub amps: Amps,
    /// What the contacts switch.
    pub kind: ContactLoad,
    /// Inrush multiplier, overriding the kind's.
    pub inrush: Option<f64>,
    /// Insulation required coil to contacts.
    pub insulation: Insulation,
    /// Overvoltage category of the contact circuit, 1 ..= 4 (IEC 60664-1).
    pub overvoltage_category: u8,
}

/// `[switch]`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Switch {
    /// The switch family.
    pub kind: SwitchType,
    /// IC / IB for a saturated BJT.
    pub forced_beta: f64,
}

/// `[clamp]`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Clamp {
    /// How the coil is clamped.
    pub kind: ClampType,
    /// Zener voltage of a diode-plus-zener clamp.
    pub zener_volts: Option<Volts>,
}

/// `[sensor]`: a photocell divider.
#[derive(Debug, Clone, PartialEq)]
pub struct Sensor {
    /// Whether the stage switches on in light or in the dark.
    pub activate: Activate,
    /// The light level at which it switches.
    pub on_lux: Lux,
    /// The node voltage at which what follows the divider switches (default: assume.vbe_on).
    pub threshold: Volts,
    /// Photocell resistance at 10 lux, when given here.
    pub r10: Option<Ohms>,
    /// Tolerance of `r10` as a fraction, when given here.
    pub r10_tolerance: Option<f64>,
    /// Slope γ of log R against log E, when given here.
    pub gamma: Option<f64>,
    /// Part number of the photocell in the library, supplying figures not given here.
    pub part: Option<String>,
}

/// `[rules]`: deratings, ambient, the E-series for picked resistors, buying rules, and the
/// worst-case switch with its temperature range (issue 10).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Rules {
    /// Voltage derating factor (0.8: a part works at most at 80 % of its voltage rating).
    pub voltage_derating: f64,
    /// Current derating factor.
    pub current_derating: f64,
    /// Power derating factor.
    pub power_derating: f64,
    /// Ambient temperature.
    pub ambient: Celsius,
    /// The series picked resistors come from.
    pub eseries: Series,
    /// How many stages are built (for buying).
    pub quantity: u32,
    /// Whether obsolete parts may be proposed.
    pub allow_obsolete: bool,
    /// Whether parts must be RoHS compliant.
    pub require_rohs: bool,
    /// Whether every need is taken at its worst corner of supply, temperature and tolerance
    /// (see [`crate::needs::worst`]) instead of at nominal.
    pub worst_case: bool,
    /// The coldest ambient the stage must work in (worst case).
    pub temperature_min: Celsius,
    /// The hottest ambient the stage must work in (worst case).
    pub temperature_max: Celsius,
    /// How far a relay or solenoid coil warms above the ambient when energised (worst case).
    pub coil_rise: Kelvins,
}

impl Default for Rules {
    fn default() -> Self {
        Rules {
            voltage_derating: 0.8,
            current_derating: 0.8,
            power_derating: 0.5,
            ambient: Celsius(25.0),
            eseries: Series::E12,
            quantity: 1,
            allow_obsolete: false,
            require_rohs: false,
            worst_case: false,
            temperature_min: Celsius(-20.0),
            temperature_max: Celsius(60.0),
            coil_rise: Kelvins(30.0),
        }
    }
}

/// `[assume]`: figures assumed before a part is chosen.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Assume {
    /// BJT saturation voltage.
    pub vce_sat: Volts,
    /// BJT base-emitter voltage when on.
    pub vbe_on: Volts,
    /// Clamp diode forward voltage.
    pub diode_vf: Volts,
    /// Drift of the base-emitter voltage with temperature, V/K (-2 mV/K: VBE rises in the
    /// cold); worst case only.
    pub vbe_tempco: f64,
    /// Relative drift of hFE with temperature about 25 °C, per kelvin as a fraction (0.005 is
    /// +0.5 %/K: hFE falls in the cold; common practice, from memory); worst case only.
    pub hfe_tempco: f64,
    /// Tolerance of the resistors loadfit picks (base, LED series, photocell divider), as a
    /// fraction; `None` for the tolerance of `rules.eseries` ([`Stage::resistor_tolerance`]).
    pub resistor_tolerance: Option<f64>,
}

impl Default for Assume {
    fn default() -> Self {
        Assume {
            vce_sat: Volts(0.2),
            vbe_on: Volts(0.7),
            diode_vf: Volts(0.7),
            vbe_tempco: -2e-3,
            hfe_tempco: 0.005,
            resistor_tolerance: None,
        }
    }
}

/// A stage: everything the needs are computed from, defaults filled in.
#[derive(Debug, Clone, PartialEq)]
pub struct Stage {
    /// The title (default: the stage file's name).
    pub title: String,
    /// `[supply]`.
    pub supply: Supply,
    /// `[drive]`.
    pub drive: Drive,
    /// `[load]`.
    pub load: Load,
    /// `[contacts]`, for relay loads.
    pub contacts: Option<Contacts>,
    /// `[switch]`.
    pub switch: Switch,
    /// `[clamp]`.
    pub clamp: Clamp,
    /// `[sensor]`, for photocell stages.
    pub sensor: Option<Sensor>,
    /// `[rules]`.
    pub rules: Rules,
    /// `[assume]`.
    pub assume: Assume,
    /// Things noticed while reading that do not stop the stage (a table that does not apply
    /// to the load); the needs report them as warnings.
    pub notes: Vec<String>,
}

impl Stage {
    /// A stage with a supply of `volts` and `load`, everything else at its default: logic drive
    /// at the supply voltage, any switch, a diode clamp, default rules and assumptions.
    #[must_use]
    pub fn new(volts: Volts, load: Load) -> Stage {
        Stage {
            title: String::new(),
            supply: Supply {
                volts,
                tolerance: 0.0,
            },
            drive: Drive {
                source: DriveSource::Logic,
                high: volts,
                max_current: None,
            },
            load,
            contacts: None,
            switch: Switch {
                kind: SwitchType::Any,
                forced_beta: 10.0,
            },
            clamp: Clamp {
                kind: ClampType::Diode,
                zener_volts: None,
            },
            sensor: None,
            rules: Rules::default(),
            assume: Assume::default(),
            notes: Vec::new(),
        }
    }

    /// Reads a stage from TOML text; `file` names it in errors and is the default title.
    ///
    /// # Errors
    /// [`StageError`] when the text is not TOML, a key is unknown, a value has the wrong type,
    /// unit or range, a required key is missing, or keys contradict each other (a zener clamp
    /// without `zener_volts`). The error names the file, the key, the text and what to do.
    pub fn from_toml(text: &str, file: &str) -> Result<Stage, StageError> {
        read::stage(text, file)
    }

    /// Reads a stage file.
    ///
    /// # Errors
    /// [`StageError`] when the file cannot be read, is larger than [`MAX_FILE_BYTES`], is not
    /// UTF-8, or holds a stage [`Stage::from_toml`] refuses.
    pub fn read(path: &Path) -> Result<Stage, StageError> {
        let file = path.display().to_string();
        let whole = |message: String| StageError {
            file: file.clone(),
            line: None,
            key: None,
            text: None,
            message,
            detail: Box::default(),
        };
        let meta = std::fs::metadata(path)
            .map_err(|e| whole(format!("cannot read the stage file: {e}; check the path")))?;
        if meta.is_dir() {
            return Err(whole(
                "is a folder; name a stage file (a .toml file)".to_string(),
            ));
        }
        if meta.len() > MAX_FILE_BYTES {
            return Err(whole(format!(
                "{} bytes, over the {MAX_FILE_BYTES}-byte limit for a stage file; is this the right file?",
                meta.len()
            )));
        }
        // Read at most one byte past the limit: a device or pipe (`/dev/zero`) has no length
        // to check beforehand and may never end.
        let mut bytes = Vec::new();
        std::io::Read::read_to_end(
            &mut std::io::Read::take(
                std::fs::File::open(path).map_err(|e| {
                    whole(format!("cannot read the stage file: {e}; check the path"))
                })?,
                MAX_FILE_BYTES + 1,
            ),
            &mut bytes,
        )
        .map_err(|e| whole(format!("cannot read the stage file: {e}; check the path")))?;
        if bytes.len() as u64 > MAX_FILE_BYTES {
            return Err(whole(format!(
                "over the {MAX_FILE_BYTES}-byte limit for a stage file; is this the right file?"
            )));
        }
        let text = String::from_utf8(bytes).map_err(|e| {
            whole(format!(
                "not UTF-8 text (bad byte at offset {}); save the stage file as UTF-8",
                e.utf8_error().valid_up_to()
            ))
        })?;
        Stage::from_toml(&text, &file)
    }

    /// The tolerance of the resistors loadfit picks: `assume.resistor_tolerance` when given,
    /// else the tolerance the chosen E-series is made for (IEC 60063: E12 ±10 %).
    #[must_use]
    pub fn resistor_tolerance(&self) -> f64 {
        self.assume
            .resistor_tolerance
            .unwrap_or_else(|| self.rules.eseries.tolerance())
    }

    /// V_sat for the off-state and load-current needs: assume.vce_sat for an npn or pnp switch,
    /// 0 for a MOSFET or `any` (issue 3: the MOSFET's drop is per part, IL × RDS(on)).
    #[must_use]
    pub fn v_sat(&self) -> Volts {
        match self.switch.kind {
            SwitchType::Npn | SwitchType::Pnp => self.assume.vce_sat,
            SwitchType::Nmos | SwitchType::Pmos | SwitchType::Any => Volts(0.0),
        }
    }
}

impl fmt::Display for DriveSource {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            DriveSource::Logic => "logic",
            DriveSource::Photocell => "photocell",
        })
    }
}
