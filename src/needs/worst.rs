//! Worst case (issue 10): every need at the corner of supply, temperature and tolerance where
//! it is hardest to meet, and the name of that corner.
//!
//! The design (the resistors loadfit picks) stays the nominal one; the worst case evaluates that
//! design at its corners, as a worst-case analysis does. The relations:
//! - copper coil resistance R(T) = R20 (1 + 0.00393 (T - 20)) (IEC 60028): a cold coil draws
//!   most, a hot coil (ambient plus its self-heating `coil_rise`) needs most volts to pull in;
//! - VBE(T) = VBE(25 °C) + tempco (T - 25), tempco about -2 mV/K (common practice): VBE is
//!   highest in the cold;
//! - hFE(T) = hFE(25 °C) (1 + tempco (T - 25)), tempco about +0.5 %/K (common practice, from
//!   memory): hFE is lowest in the cold, so the gain a part needs at 25 °C is the cold need
//!   divided by that factor;
//! - a picked resistor lies anywhere within ± its tolerance (IEC 60063 pairs each series with
//!   its tolerance).
//!
//! Each factor sits at the end that is worst for the need at hand. Where the load current and
//! the drive both move with the one supply (a drive that is the supply rail, a photocell
//! divider), the load is taken at Vs_max and the drive at its lowest, as the nominal needs pair
//! them: a bound over the supply, with the drive named as a factor of its own.
//!
//! Stage figures and part ratings are taken at 20-25 °C; the worst case is at least as
//! demanding as the nominal whenever the temperature range includes that.

use super::relay::copper_factor;
use crate::stage::Stage;
use crate::units::{Amps, Celsius, Kelvins, Ohms, Volts, format_number};
use std::fmt;

/// The temperature hFE and VBE figures are given at (datasheet convention, common practice).
pub const JUNCTION_REFERENCE: Celsius = Celsius(25.0);

/// Source named beside the temperature relations.
pub const SOURCE_TEMPERATURE: &str = "IEC 60028 (copper, 0.00393 /K); VBE -2 mV/K and hFE +0.5 %/K about 25 °C (common practice, from memory)";

/// One thing that moves a need between its nominal and its worst value.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Factor {
    /// The supply within its tolerance.
    Supply,
    /// The drive's high level, when it is the supply rail (`drive.high` equal to the supply):
    /// it then moves with the supply.
    Drive,
    /// The ambient within `rules.temperature_min` ..= `rules.temperature_max`.
    Temperature,
    /// The drive's resistor loadfit picked (the base resistor, or the photocell divider's
    /// fixed resistor), within `assume.resistor_tolerance`.
    Resistor,
    /// An LED's series resistor loadfit picked, within `assume.resistor_tolerance`.
    SeriesResistor,
    /// The photocell's resistance at 10 lux, within its `r10_tolerance`.
    R10,
}

impl Factor {
    /// The key used in the JSON `corner` object and in the working.
    #[must_use]
    pub fn name(self) -> &'static str {
        match self {
            Factor::Supply => "supply",
            Factor::Drive => "drive",
            Factor::Temperature => "temperature",
            Factor::Resistor => "resistor",
            Factor::SeriesResistor => "series_resistor",
            Factor::R10 => "r10",
        }
    }
}

/// Where within its range a factor sits at the worst corner.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Extreme {
    /// The low end of a range (Vs_min, temperature_min).
    Min,
    /// The high end of a range.
    Max,
    /// The nominal value plus its tolerance.
    PlusTol,
    /// The nominal value minus its tolerance.
    MinusTol,
}

impl Extreme {
    /// The word used in the JSON `corner` object: `min`, `max`, `+tol`, `-tol`.
    #[must_use]
    pub fn name(self) -> &'static str {
        match self {
            Extreme::Min => "min",
            Extreme::Max => "max",
            Extreme::PlusTol => "+tol",
            Extreme::MinusTol => "-tol",
        }
    }

    /// `Min` or `Max` by a flag, for corners found by search.
    #[must_use]
    pub fn range(high: bool) -> Extreme {
        if high { Extreme::Max } else { Extreme::Min }
    }

    /// `PlusTol` or `MinusTol` by a flag.
    #[must_use]
    pub fn tolerance(plus: bool) -> Extreme {
        if plus {
            Extreme::PlusTol
        } else {
            Extreme::MinusTol
        }
    }
}

/// The corner a worst-case need is taken at: each factor that moves it, with its extreme. Empty
/// for a need no factor moves (a contact rating, a time constant of given parts).
#[derive(Debug, Clone, PartialEq, Eq, Default)]
pub struct Corner {
    entries: Vec<(Factor, Extreme)>,
}

impl Corner {
    /// A corner with no factor.
    #[must_use]
    pub fn none() -> Corner {
        Corner::default()
    }

    /// This corner with `factor` at `extreme` (replacing an earlier setting of the factor).
    #[must_use]
    pub fn with(mut self, factor: Factor, extreme: Extreme) -> Corner {
        self.entries.retain(|(f, _)| *f != factor);
        self.entries.push((factor, extreme));
        self.entries.sort_by_key(|(f, _)| *f);
        self
    }

    /// This corner without `factor` (a factor that turned out not to move the need).
    #[must_use]
    pub fn without(mut self, factor: Factor) -> Corner {
        self.entries.retain(|(f, _)| *f != factor);
        self
    }

    /// The factors and their extremes, in [`Factor`] order.
    #[must_use]
    pub fn entries(&self) -> &[(Factor, Extreme)] {
        &self.entries
    }

    /// Where `factor` sits, when it moves the need.
    #[must_use]
    pub fn get(&self, factor: Factor) -> Option<Extreme> {
        self.entries
            .iter()
            .find(|(f, _)| *f == factor)
            .map(|(_, e)| *e)
    }

    /// Whether no factor moves the need.
    #[must_use]
    pub fn is_empty(&self) -> bool {
        self.entries.is_empty()
    }
}

impl fmt::Display for Corner {
    /// `supply min, temperature max, resistor +tol`, or `none` for an empty corner.
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        if self.entries.is_empty() {
            return f.write_str("none");
        }
        for (i, (factor, extreme)) in self.entries.iter().enumerate() {
            if i > 0 {
                f.write_str(", ")?;
            }
            write!(f, "{} {}", factor.name(), extreme.name())?;
        }
        Ok(())
    }
}

/// The worst-case figures of a stage, worked out once from its keys.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Conditions {
    /// The coldest ambient.
    pub t_min: Celsius,
    /// The hottest ambient.
    pub t_max: Celsius,
    /// The coil's self-heating above the ambient.
    pub coil_rise: Kelvins,
    /// VBE drift, V/K.
    pub vbe_tempco: f64,
    /// hFE drift, fraction per kelvin about 25 °C.
    pub hfe_tempco: f64,
    /// Tolerance of the picked resistors, a fraction.
    pub tolerance: f64,
}

impl Conditions {
    /// The conditions a stage's keys give (whether or not `rules.worst_case` is on).
    #[must_use]
    pub fn of(stage: &Stage) -> Conditions {
        Conditions {
            t_min: stage.rules.temperature_min,
            t_max: stage.rules.temperature_max,
            coil_rise: stage.rules.coil_rise,
            vbe_tempco: stage.assume.vbe_tempco,
            hfe_tempco: stage.assume.hfe_tempco,
            tolerance: stage.resistor_tolerance(),
        }
    }

    /// R(T_min) / R20 of a copper coil at the coldest ambient, not yet warmed by its current:
    /// the coil draws most then.
    #[must_use]
    pub fn coil_cold(&self) -> f64 {
        copper_factor(self.t_min)
    }

    /// The temperature of a coil that has warmed up at the hottest ambient: T_max + coil_rise.
    #[must_use]
    pub fn coil_hot_temperature(&self) -> Celsius {
        Celsius(self.t_max.0 + self.coil_rise.0)
    }

    /// R(T_max + coil_rise) / R20: a hot coil needs most volts to pull in.
    #[must_use]
    pub fn coil_hot(&self) -> f64 {
        copper_factor(self.coil_hot_temperature())
    }

    /// VBE at `t` for a part whose VBE is `vbe_25` at 25 °C.
    #[must_use]
    pub fn vbe_at(&self, vbe_25: Volts, t: Celsius) -> Volts {
        vbe_at(vbe_25, self.vbe_tempco, t)
    }

    /// hFE(T) / hFE(25 °C) at `t`.
    #[must_use]
    pub fn hfe_factor(&self, t: Celsius) -> f64 {
        hfe_factor(self.hfe_tempco, t)
    }

    /// A working line naming the coil at its coldest.
    #[must_use]
    pub fn cold_coil_line(&self, r20: Ohms) -> String {
        let k = self.coil_cold();
        format!(
            "cold coil at temperature_min {}: R = R20 × (1 + 0.00393 × ({} - 20)) = {r20} × {k:.4} = {} (IEC 60028)",
            self.t_min,
            format_number(self.t_min.0),
            r20 * k
        )
    }

    /// A working line naming the coil at its hottest.
    #[must_use]
    pub fn hot_coil_line(&self) -> String {
        let t = self.coil_hot_temperature();
        format!(
            "hot coil at temperature_max {} + coil_rise {} = {t}: R = R20 × (1 + 0.00393 × ({} - 20)) = R20 × {:.4} (IEC 60028)",
            self.t_max,
            self.coil_rise,
            format_number(t.0),
            self.coil_hot()
        )
    }
}

/// VBE(T) = VBE(25 °C) + tempco × (T - 25): with a negative tempco VBE rises in the cold.
#[must_use]
pub fn vbe_at(vbe_25: Volts, tempco: f64, t: Celsius) -> Volts {
    Volts(vbe_25.0 + tempco * (t.0 - JUNCTION_REFERENCE.0))
}

/// hFE(T) / hFE(25 °C) = 1 + tempco × (T - 25), linear about 25 °C (common practice, from
/// memory; linear is the more cautious of the usual models below 25 °C).
#[must_use]
pub fn hfe_factor(tempco: f64, t: Celsius) -> f64 {
    1.0 + tempco * (t.0 - JUNCTION_REFERENCE.0)
}

/// Whether the drive's high level is the supply rail itself (`drive.high` equal to the supply,
/// its default): it then moves with the supply's tolerance. A drive given at another level has
/// no tolerance key and is taken as stated.
#[must_use]
pub fn drive_follows_supply(stage: &Stage) -> bool {
    (stage.drive.high.0 - stage.supply.volts.0).abs() <= 1e-9 * stage.supply.volts.0.abs()
}

/// The drive's high level at the supply's low (`high = false`) or high end.
#[must_use]
pub fn drive_at(stage: &Stage, high: bool) -> Volts {
    if !drive_follows_supply(stage) {
        return stage.drive.high;
    }
    if high {
        stage.supply.max()
    } else {
        stage.supply.min()
    }
}

/// The ambient the thermal checks use: the hotter of `rules.ambient` and, in the worst case,
/// `rules.temperature_max` (PD derates with temperature, so the hottest ambient is worst).
#[must_use]
pub fn thermal_ambient(stage: &Stage, worst: bool) -> Celsius {
    if worst {
        Celsius(stage.rules.ambient.0.max(stage.rules.temperature_max.0))
    } else {
        stage.rules.ambient
    }
}

/// R(coil at its coldest) / R20 in the worst case, 1 at nominal: what a part's own coil
/// current (taken at 20 °C) is divided by to compare with the stage's worst-case coil current.
#[must_use]
pub fn coil_resistance_factor(stage: &Stage, worst: bool) -> f64 {
    if worst {
        copper_factor(stage.rules.temperature_min)
    } else {
        1.0
    }
}

/// What the switch's base dissipation VBE × IB is bounded by in the worst case, for the base
/// resistor `rb` and the load current `il`: the most base current and the highest VBE. With a
/// base resistor the most current is at the drive's highest, the resistor's low tolerance and
/// VBE's lowest; without one (a photocell divider drives the base) it is IL / forced_beta, the
/// most the design lets the base take. Taking both temperature ends at once is a bound, not one
/// corner: the base term is a few per cent of a saturated switch's dissipation, and the bound
/// keeps it never below the nominal.
#[must_use]
pub fn base_dissipation_drive(stage: &Stage, rb: Option<Ohms>, il: Amps) -> (Amps, Volts) {
    let vbe = stage.assume.vbe_on;
    let c = Conditions::of(stage);
    let (cold, hot) = (c.vbe_at(vbe, c.t_min), c.vbe_at(vbe, c.t_max));
    let vbe_high = cold.max(hot).max(vbe);
    let Some(rb) = rb.filter(|r| r.0 > 0.0) else {
        return (Amps((il / stage.switch.forced_beta).0.max(0.0)), vbe_high);
    };
    let vbe_low = cold.min(hot).min(vbe);
    let high = drive_at(stage, true);
    let current: Amps = (high - vbe_low) / (rb * (1.0 - c.tolerance));
    (Amps(current.0.max(0.0)), vbe_high)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::stage::{Load, LoadType};

    fn close(a: f64, b: f64, rel: f64) -> bool {
        (a - b).abs() <= rel * b.abs()
    }

    /// IEC 60028 (copper, 0.00393 /K, through `copper_factor`): a coil 50 K above 20 °C has
    /// 1.1965 × R20 — here as the hot coil of a 40 °C ambient with a 30 K rise.
    #[test]
    fn hot_coil_factor_iec_60028() {
        let mut stage = Stage::new(Volts(24.0), Load::of(LoadType::Relay));
        stage.rules.temperature_max = Celsius(40.0);
        stage.rules.coil_rise = Kelvins(30.0);
        let c = Conditions::of(&stage);
        assert!(close(c.coil_hot(), 1.1965, 1e-12));
        assert_eq!(c.coil_hot_temperature(), Celsius(70.0));
        // -20 °C: 1 + 0.00393 × (-40) = 0.8428.
        assert!(close(c.coil_cold(), 0.8428, 1e-12));
    }

    /// The relations with its defaults (issue 10; -2 mV/K common practice, +0.5 %/K
    /// common practice, from memory): VBE 0.7 V at 25 °C is 0.79 V at -20 °C and 0.63 V at
    /// 60 °C; hFE at -20 °C is 77.5 % of its 25 °C value.
    #[test]
    fn junction_drifts_common_practice() {
        assert!(close(
            vbe_at(Volts(0.7), -2e-3, Celsius(-20.0)).0,
            0.79,
            1e-12
        ));
        assert!(close(
            vbe_at(Volts(0.7), -2e-3, Celsius(60.0)).0,
            0.63,
            1e-12
        ));
        assert!(close(hfe_factor(0.005, Celsius(-20.0)), 0.775, 1e-12));
        assert_eq!(hfe_factor(0.005, Celsius(25.0)), 1.0);
    }

    #[test]
    fn corners_name_each_factor_once_in_order() {
        let c = Corner::none()
            .with(Factor::Temperature, Extreme::Max)
            .with(Factor::Supply, Extreme::Max)
            .with(Factor::Supply, Extreme::Min);
        assert_eq!(c.to_string(), "supply min, temperature max");
        assert_eq!(c.get(Factor::Supply), Some(Extreme::Min));
        assert_eq!(c.get(Factor::Resistor), None);
        assert_eq!(Corner::none().to_string(), "none");
        assert_eq!(Extreme::tolerance(true).name(), "+tol");
        assert_eq!(Extreme::tolerance(false).name(), "-tol");
    }

    #[test]
    fn the_drive_follows_the_supply_only_at_the_supply_level() {
        let mut stage = Stage::new(Volts(12.0), Load::of(LoadType::Resistive));
        stage.supply.tolerance = 0.1;
        assert!(drive_follows_supply(&stage));
        assert!(close(drive_at(&stage, false).0, 10.8, 1e-12));
        stage.drive.high = Volts(3.3);
        assert!(!drive_follows_supply(&stage));
        assert_eq!(drive_at(&stage, false), Volts(3.3));
    }
}
