//! Walking a stage file's TOML: every key checked against [`super::KEYS`], every value read with
//! its unit and range, every error pointing at the file, line, key and text.
//!
//! Works on toml's spanned document tree rather than serde derive, so an error can name the
//! line of the offending key and list the keys the table does know.

use super::{
    Activate, Assume, Clamp, ClampType, ContactLoad, Contacts, Drive, DriveSource, Insulation,
    KEYS, Load, LoadType, Rules, Sensor, Stage, StageError, Supply, Switch, SwitchType,
};
use crate::needs::eseries::Series;
use crate::units::{self, Amps, Celsius, Dim, Farads, Henries, Kelvins, Lux, Ohms, Volts};
use std::ops::Range;
use toml::Spanned;
use toml::de::{DeTable, DeValue};

type Result<T> = std::result::Result<T, StageError>;

/// The text being read and the name it is shown under.
struct Doc<'t> {
    text: &'t str,
    file: &'t str,
}

impl Doc<'_> {
    /// The 1-based line holding byte `offset`.
    fn line(&self, offset: usize) -> usize {
        // Clamped to the text's length, so the slice below is always in range.
        let end = offset.min(self.text.len());
        self.text.as_bytes()[..end]
            .iter()
            .filter(|&&b| b == b'\n')
            .count()
            + 1
    }

    fn error(
        &self,
        key: Option<String>,
        text: Option<String>,
        span: Option<Range<usize>>,
        message: String,
    ) -> StageError {
        StageError {
            file: self.file.to_string(),
            line: span.map(|s| u32::try_from(self.line(s.start)).unwrap_or(u32::MAX)),
            key,
            text,
            message,
            detail: Box::default(),
        }
    }
}

/// One table of the stage file (or the top level, named ""), with the keys it allows.
struct Table<'a, 'i> {
    doc: &'a Doc<'a>,
    name: &'static str,
    known: &'static [&'static str],
    entries: Option<&'a DeTable<'i>>,
    span: Option<Range<usize>>,
}

/// The keys allowed in table `name`.
fn known_keys(name: &str) -> &'static [&'static str] {
    KEYS.iter()
        .find(|(table, _)| *table == name)
        .map_or(&[], |(_, keys)| keys)
}

/// A value as the user wrote it, for error messages.
fn shown(value: &DeValue<'_>) -> String {
    match value {
        DeValue::String(s) => format!("\"{s}\""),
        DeValue::Integer(i) => i.to_string(),
        DeValue::Float(f) => f.to_string(),
        DeValue::Boolean(b) => b.to_string(),
        other => format!("(a TOML {})", other.type_str()),
    }
}

/// The number of edits between two short words, for "did you mean".
fn edit_distance(a: &str, b: &str) -> usize {
    let b: Vec<char> = b.chars().collect();
    // Every row holds b.len() + 1 entries, so the indices j, j + 1 (j < b.len()) are in range.
    let mut previous: Vec<usize> = (0..=b.len()).collect();
    for (i, ca) in a.chars().enumerate() {
        let mut current = vec![i + 1];
        for (j, &cb) in b.iter().enumerate() {
            let substitute = previous[j] + usize::from(ca != cb);
            current.push(substitute.min(previous[j + 1] + 1).min(current[j] + 1));
        }
        previous = current;
    }
    previous[b.len()]
}

/// The known word closest to `word`, if it is a likely misspelling.
fn suggestion(word: &str, known: &[&'static str]) -> Option<&'static str> {
    let lower = word.to_ascii_lowercase();
    known
        .iter()
        .map(|&k| (edit_distance(&lower, k), k))
        .filter(|&(d, k)| d <= 2.max(k.len() / 4))
        .min_by_key(|&(d, _)| d)
        .map(|(_, k)| k)
}

impl<'a, 'i> Table<'a, 'i> {
    fn label(&self, key: &str) -> String {
        if self.name.is_empty() {
            key.to_string()
        } else {
            format!("[{}] {key}", self.name)
        }
    }

    fn header(&self) -> String {
        format!("[{}]", self.name)
    }

    fn present(&self) -> bool {
        self.entries.is_some()
    }

    /// Every key must be one the table knows; a misspelling gets a suggestion.
    fn check_keys(&self) -> Result<()> {
        let Some(entries) = self.entries else {
            return Ok(());
        };
        for (key, _) in entries.iter() {
            let word: &str = key.get_ref();
            if self.known.contains(&word) {
                continue;
            }
            let hint = match suggestion(word, self.known) {
                Some(k) => format!("did you mean `{k}`? "),
                None => String::new(),
            };
            let place = if self.name.is_empty() {
                "the top level".to_string()
            } else {
                self.header()
            };
            let detail = format!("{hint}The keys of {place} are: {}.", self.known.join(", "));
            let key_label = if self.name.is_empty() {
                None
            } else {
                Some(self.header())
            };
            let mut error = self.doc.error(
                key_label,
                None,
                Some(key.span()),
                format!("unknown key `{word}`"),
            );
            error.detail = detail.into();
            return Err(error);
        }
        Ok(())
    }

    fn get(&self, key: &str) -> Option<&'a Spanned<DeValue<'i>>> {
        self.entries?.get(key)
    }

    fn fail(&self, key: &str, value: &Spanned<DeValue<'_>>, message: String) -> StageError {
        self.doc.error(
            Some(self.label(key)),
            Some(shown(value.get_ref())),
            Some(value.span()),
            message,
        )
    }

    fn missing(&self, key: &str, what: &str) -> StageError {
        let span = self.span.clone();
        let message = if self.present() || self.name.is_empty() {
            format!("is missing: {what}")
        } else {
            format!("is missing (there is no {} table): {what}", self.header())
        };
        self.doc.error(Some(self.label(key)), None, span, message)
    }

    /// A bare TOML number as f64, or an error for NaN, infinity or a huge integer.
    fn bare_number(&self, key: &str, value: &Spanned<DeValue<'_>>) -> Result<Option<f64>> {
        match value.get_ref() {
            DeValue::Integer(i) => i64::from_str_radix(i.as_str(), i.radix())
                .map(|n| Some(n as f64))
                .map_err(|_| self.fail(key, value, "is too large a number".to_string())),
            DeValue::Float(f) => {
                let number: f64 = f.as_str().parse().unwrap_or(f64::NAN);
                if number.is_finite() {
                    Ok(Some(number))
                } else {
                    Err(self.fail(
                        key,
                        value,
                        "is not a finite number; write a value such as 0.8".to_string(),
                    ))
                }
            }
            _ => Ok(None),
        }
    }

    /// A quantity of `dim`: a unit string or a bare number in SI base units.
    fn quantity(&self, key: &str, dim: Dim, example: &str) -> Result<Option<f64>> {
        let Some(value) = self.get(key) else {
            return Ok(None);
        };
        if let DeValue::String(text) = value.get_ref() {
            return units::parse(text, dim).map(|q| Some(q.value)).map_err(|e| {
                self.fail(
                    key,
                    value,
                    format!("{e}; write {} such as \"{example}\"", dim.noun()),
                )
            });
        }
        match self.bare_number(key, value)? {
            Some(n) => Ok(Some(n)),
            None => Err(self.fail(
                key,
                value,
                format!(
                    "expected {}: a string with a unit such as \"{example}\", or a bare number in {}",
                    dim.noun(),
                    base_unit(dim)
                ),
            )),
        }
    }

    /// A quantity that must be greater than zero.
    fn positive(&self, key: &str, dim: Dim, example: &str) -> Result<Option<f64>> {
        let value = self.quantity(key, dim, example)?;
        self.in_range(key, value, |v| v > 0.0, "must be greater than zero")
    }

    /// A quantity that must not be negative.
    fn non_negative(&self, key: &str, dim: Dim, example: &str) -> Result<Option<f64>> {
        let value = self.quantity(key, dim, example)?;
        self.in_range(key, value, |v| v >= 0.0, "must not be negative")
    }

    fn in_range(
        &self,
        key: &str,
        value: Option<f64>,
        ok: impl Fn(f64) -> bool,
        message: &str,
    ) -> Result<Option<f64>> {
        match (value, self.get(key)) {
            (Some(v), Some(raw)) if !ok(v) => Err(self.fail(key, raw, message.to_string())),
            _ => Ok(value),
        }
    }

    /// A fraction written as a percentage (`"10 %"`) or a bare fraction (0.1), within `range`.
    fn fraction(&self, key: &str, range: Range<f64>, inclusive_end: bool) -> Result<Option<f64>> {
        let Some(raw) = self.get(key) else {
            return Ok(None);
        };
        let value = self.quantity(key, Dim::Percent, "10 %")?;
        let Some(v) = value else { return Ok(None) };
        let inside = v >= range.start && (v < range.end || (inclusive_end && v == range.end));
        if !inside {
            let bare = !matches!(raw.get_ref(), DeValue::String(_));
            let hint = if bare && v > 1.0 {
                format!(
                    " (a bare number is a fraction: write \"{v} %\" or {})",
                    v / 100.0
                )
            } else {
                String::new()
            };
            let end = if inclusive_end { "up to" } else { "below" };
            return Err(self.fail(
                key,
                raw,
                format!(
                    "must be from {} % {end} {} %{hint}",
                    range.start * 100.0,
                    range.end * 100.0
                ),
            ));
        }
        Ok(value)
    }

    /// A plain number (a gain, a multiplier), bare or as a string.
    fn number(&self, key: &str, example: &str) -> Result<Option<f64>> {
        self.quantity(key, Dim::Number, example)
    }

    /// One of `choices`, compared without regard to case.
    fn word(&self, key: &str, choices: &[&'static str]) -> Result<Option<&'static str>> {
        let Some(value) = self.get(key) else {
            return Ok(None);
        };
        let list = choices
            .iter()
            .map(|c| format!("\"{c}\""))
            .collect::<Vec<_>>()
            .join(", ");
        let DeValue::String(text) = value.get_ref() else {
            return Err(self.fail(key, value, format!("expected one of {list}")));
        };
        let lower = text.trim().to_ascii_lowercase();
        if let Some(&choice) = choices.iter().find(|&&c| c == lower) {
            return Ok(Some(choice));
        }
        let hint = suggestion(&lower, choices)
            .map(|c| format!(" (did you mean \"{c}\"?)"))
            .unwrap_or_default();
        Err(self.fail(key, value, format!("expected one of {list}{hint}")))
    }

    fn boolean(&self, key: &str) -> Result<Option<bool>> {
        let Some(value) = self.get(key) else {
            return Ok(None);
        };
        match value.get_ref() {
            DeValue::Boolean(b) => Ok(Some(*b)),
            _ => Err(self.fail(
                key,
                value,
                "expected true or false (without quotes)".to_string(),
            )),
        }
    }

    fn string(&self, key: &str, what: &str) -> Result<Option<String>> {
        let Some(value) = self.get(key) else {
            return Ok(None);
        };
        match value.get_ref() {
            DeValue::String(s) if !s.trim().is_empty() => Ok(Some(s.trim().to_string())),
            _ => Err(self.fail(key, value, format!("expected {what} in quotes"))),
        }
    }

    fn integer(&self, key: &str, range: std::ops::RangeInclusive<i64>) -> Result<Option<i64>> {
        let Some(value) = self.get(key) else {
            return Ok(None);
        };
        let number = match value.get_ref() {
            DeValue::Integer(i) => i64::from_str_radix(i.as_str(), i.radix()).ok(),
            DeValue::String(s) => s.trim().parse::<i64>().ok(),
            _ => None,
        };
        match number {
            Some(n) if range.contains(&n) => Ok(Some(n)),
            _ => Err(self.fail(
                key,
                value,
                format!(
                    "expected a whole number from {} to {}",
                    range.start(),
                    range.end()
                ),
            )),
        }
    }

    /// A note for a key given where it does not apply.
    fn unused(&self, key: &str, why: &str) -> Option<String> {
        self.get(key)
            .map(|_| format!("{} is not used: {why}", self.label(key)))
    }
}

/// The unit a bare number is read in.
fn base_unit(dim: Dim) -> &'static str {
    match dim {
        Dim::Volt => "volts",
        Dim::Amp => "amperes",
        Dim::Ohm => "ohms",
        Dim::Farad => "farads",
        Dim::Henry => "henries",
        Dim::Second => "seconds",
        Dim::Lux => "lux",
        Dim::Celsius => "°C",
        Dim::Kelvin => "kelvins",
        Dim::Percent => "a fraction (0.1 for 10 %)",
        Dim::VoltPerKelvin => "volts per kelvin (-0.002 for -2 mV/K)",
        Dim::PercentPerKelvin => "a fraction per kelvin (0.005 for 0.5 %/K)",
        _ => "SI units",
    }
}

/// Reads a stage from TOML text.
pub(super) fn stage(text: &str, file: &str) -> Result<Stage> {
    let doc = Doc { text, file };
    let root = DeTable::parse(text).map_err(|e| {
        doc.error(
            None,
            None,
            e.span(),
            format!(
                "not valid TOML: {}; check the quotes, brackets and `=` on that line",
                e.message()
            ),
        )
    })?;
    let root = root.get_ref();
    let top = Table {
        doc: &doc,
        name: "",
        known: &["title"],
        entries: Some(root),
        span: None,
    };
    // Top-level keys: `title` and the tables.
    for (key, value) in root.iter() {
        let word: &str = key.get_ref();
        if word == "title" {
            continue;
        }
        if known_keys(word).is_empty() || word.is_empty() {
            let tables: Vec<&str> = KEYS
                .iter()
                .map(|(t, _)| *t)
                .filter(|t| !t.is_empty())
                .collect();
            let mut known: Vec<&'static str> = vec!["title"];
            known.extend(KEYS.iter().map(|(t, _)| *t).filter(|t| !t.is_empty()));
            let hint = suggestion(word, &known)
                .map(|k| format!("did you mean `{k}`? "))
                .unwrap_or_default();
            let mut error = doc.error(
                None,
                None,
                Some(key.span()),
                format!("unknown key `{word}`"),
            );
            error.detail = format!(
                "{hint}A stage file has `title` and the tables [{}].",
                tables.join("], [")
            )
            .into();
            return Err(error);
        }
        if !matches!(value.get_ref(), DeValue::Table(_)) {
            return Err(doc.error(
                Some(format!("[{word}]")),
                Some(shown(value.get_ref())),
                Some(value.span()),
                format!("must be a table: write [{word}] on a line of its own, then its keys"),
            ));
        }
    }
    let table = |name: &'static str| {
        let entry = root.get(name);
        Table {
            doc: &doc,
            name,
            known: known_keys(name),
            entries: entry.and_then(|v| v.get_ref().as_table()),
            span: entry.map(Spanned::span),
        }
    };
    let supply_t = table("supply");
    let drive_t = table("drive");
    let load_t = table("load");
    let contacts_t = table("contacts");
    let switch_t = table("switch");
    let clamp_t = table("clamp");
    let sensor_t = table("sensor");
    let rules_t = table("rules");
    let assume_t = table("assume");
    // Unknown keys first: a misspelt key explains a "missing" one better than the reverse.
    for t in [
        &supply_t,
        &drive_t,
        &load_t,
        &contacts_t,
        &switch_t,
        &clamp_t,
        &sensor_t,
        &rules_t,
        &assume_t,
    ] {
        t.check_keys()?;
    }

    let mut notes = Vec::new();
    let title = top.string("title", "a title")?.unwrap_or_else(|| {
        std::path::Path::new(file)
            .file_name()
            .map_or_else(|| file.to_string(), |n| n.to_string_lossy().into_owned())
    });

    let assume = read_assume(&assume_t)?;
    let supply = read_supply(&supply_t)?;
    let drive = read_drive(&drive_t, supply.volts)?;
    let load = read_load(&load_t, &mut notes)?;
    let contacts = read_contacts(&contacts_t, load.kind, &mut notes)?;
    let switch = read_switch(&switch_t)?;
    let clamp = read_clamp(&clamp_t, load.kind, &mut notes)?;
    let sensor = read_sensor(&sensor_t, &drive_t, drive.source, supply.volts, assume)?;
    let rules = read_rules(&rules_t)?;
    check_worst_case(&rules_t, &assume_t, &rules, &assume, &mut notes)?;

    Ok(Stage {
        title,
        supply,
        drive,
        load,
        contacts,
        switch,
        clamp,
        sensor,
        rules,
        assume,
        notes,
    })
}

fn read_assume(t: &Table<'_, '_>) -> Result<Assume> {
    let defaults = Assume::default();
    Ok(Assume {
        vce_sat: Volts(
            t.non_negative("vce_sat", Dim::Volt, "0.2 V")?
                .unwrap_or(defaults.vce_sat.0),
        ),
        vbe_on: Volts(
            t.positive("vbe_on", Dim::Volt, "0.7 V")?
                .unwrap_or(defaults.vbe_on.0),
        ),
        diode_vf: Volts(
            t.non_negative("diode_vf", Dim::Volt, "0.7 V")?
                .unwrap_or(defaults.diode_vf.0),
        ),
        vbe_tempco: {
            let value = t.quantity("vbe_tempco", Dim::VoltPerKelvin, "-2 mV/K")?;
            t.in_range(
                "vbe_tempco",
                value,
                |v| (-10e-3..=10e-3).contains(&v),
                "must be from -10 mV/K to +10 mV/K (a silicon junction drifts about -2 mV/K)",
            )?
            .unwrap_or(defaults.vbe_tempco)
        },
        hfe_tempco: {
            let value = t.quantity("hfe_tempco", Dim::PercentPerKelvin, "0.5 %/K")?;
            t.in_range(
                "hfe_tempco",
                value,
                |v| (-0.05..=0.05).contains(&v),
                "must be from -5 %/K to +5 %/K (about +0.5 %/K is usual for a silicon BJT)",
            )?
            .unwrap_or(defaults.hfe_tempco)
        },
        resistor_tolerance: t.fraction("resistor_tolerance", 0.0..0.5, true)?,
    })
}

/// The worst-case keys against each other: the temperature range must be a range, hFE must
/// stay positive over it, and keys that only the worst case uses are noted when it is off.
fn check_worst_case(
    rules_t: &Table<'_, '_>,
    assume_t: &Table<'_, '_>,
    rules: &Rules,
    assume: &Assume,
    notes: &mut Vec<String>,
) -> Result<()> {
    let (low, high) = (rules.temperature_min, rules.temperature_max);
    if low.0 >= high.0 {
        let key = if rules_t.get("temperature_max").is_some() {
            "temperature_max"
        } else {
            "temperature_min"
        };
        let message = format!(
            "the temperature range is empty: temperature_min {low} must be below temperature_max {high}"
        );
        return Err(match rules_t.get(key) {
            Some(raw) => rules_t.fail(key, raw, message),
            None => rules_t.missing(key, &message),
        });
    }
    // hFE(T) = hFE(25 °C) × (1 + tempco × (T - 25)): a factor at or below zero means the
    // tempco and the range together say the transistor has no gain at one end.
    for t in [low, high] {
        let factor = 1.0 + assume.hfe_tempco * (t.0 - 25.0);
        if factor <= 0.05
            && let Some(raw) = assume_t.get("hfe_tempco")
        {
            return Err(assume_t.fail(
                "hfe_tempco",
                raw,
                format!(
                    "at {t} this leaves hFE at {:.0} % of its 25 °C value, which no switch works with; check the sign and the unit (%/K)",
                    factor * 100.0
                ),
            ));
        }
    }
    if !rules.worst_case {
        let why = "[rules] worst_case is false";
        for key in ["temperature_min", "temperature_max", "coil_rise"] {
            notes.extend(rules_t.unused(key, why));
        }
        for key in ["vbe_tempco", "hfe_tempco", "resistor_tolerance"] {
            notes.extend(assume_t.unused(key, why));
        }
    }
    Ok(())
}

fn read_supply(t: &Table<'_, '_>) -> Result<Supply> {
    let volts = t
        .positive("volts", Dim::Volt, "12 V")?
        .ok_or_else(|| t.missing("volts", "give the supply voltage, e.g. volts = \"12 V\""))?;
    let tolerance = t.fraction("tolerance", 0.0..0.5, true)?.unwrap_or(0.0);
    Ok(Supply {
        volts: Volts(volts),
        tolerance,
    })
}

fn read_drive(t: &Table<'_, '_>, supply: Volts) -> Result<Drive> {
    let source = match t.word("source", &["logic", "photocell"])? {
        Some("photocell") => DriveSource::Photocell,
        _ => DriveSource::Logic,
    };
    let high = t
        .positive("high", Dim::Volt, "3.3 V")?
        .map_or(supply, Volts);
    let max_current = t.positive("max_current", Dim::Amp, "8 mA")?.map(Amps);
    Ok(Drive {
        source,
        high,
        max_current,
    })
}

fn read_load(t: &Table<'_, '_>, notes: &mut Vec<String>) -> Result<Load> {
    let kind = match t.word(
        "type",
        &["resistive", "led", "capacitive", "inductive", "relay"],
    )? {
        Some("resistive") => LoadType::Resistive,
        Some("led") => LoadType::Led,
        Some("capacitive") => LoadType::Capacitive,
        Some("inductive") => LoadType::Inductive,
        Some(_) => LoadType::Relay,
        None => {
            return Err(t.missing(
                "type",
                "say what the switch drives: type = \"resistive\", \"led\", \"capacitive\", \"inductive\" or \"relay\"",
            ));
        }
    };
    let load = Load {
        kind,
        resistance: t.positive("resistance", Dim::Ohm, "550 ohm")?.map(Ohms),
        inductance: t.positive("inductance", Dim::Henry, "100 mH")?.map(Henries),
        capacitance: t.positive("capacitance", Dim::Farad, "100 nF")?.map(Farads),
        led_vf: t.positive("led_vf", Dim::Volt, "2.0 V")?.map(Volts),
        led_current: t.positive("led_current", Dim::Amp, "10 mA")?.map(Amps),
        relay: t.string("relay", "a part number")?,
    };
    let require = |present: bool, key: &str, what: &str| {
        if present {
            Ok(())
        } else {
            Err(t.missing(key, what))
        }
    };
    let mut unused = |key: &str, why: &str| notes.extend(t.unused(key, why));
    match kind {
        LoadType::Resistive => {
            require(
                load.resistance.is_some(),
                "resistance",
                "a resistive load needs its resistance, e.g. resistance = \"1 kohm\"",
            )?;
            for key in [
                "inductance",
                "capacitance",
                "led_vf",
                "led_current",
                "relay",
            ] {
                unused(key, "the load is resistive");
            }
        }
        LoadType::Led => {
            require(
                load.led_vf.is_some(),
                "led_vf",
                "an LED load needs its forward voltage, e.g. led_vf = \"2.0 V\"",
            )?;
            require(
                load.led_current.is_some(),
                "led_current",
                "an LED load needs the current to set, e.g. led_current = \"10 mA\"",
            )?;
            for key in ["resistance", "inductance", "capacitance", "relay"] {
                unused(key, "an LED load's series resistor is computed");
            }
        }
        LoadType::Capacitive => {
            require(
                load.resistance.is_some(),
                "resistance",
                "a capacitive load needs the series resistance it charges through, e.g. resistance = \"1 kohm\"",
            )?;
            require(
                load.capacitance.is_some(),
                "capacitance",
                "a capacitive load needs its capacitance, e.g. capacitance = \"100 nF\"",
            )?;
            for key in ["inductance", "led_vf", "led_current", "relay"] {
                unused(key, "the load is capacitive");
            }
        }
        LoadType::Inductive => {
            require(
                load.resistance.is_some(),
                "resistance",
                "an inductive load needs its winding resistance, e.g. resistance = \"550 ohm\"",
            )?;
            for key in ["capacitance", "led_vf", "led_current", "relay"] {
                unused(
                    key,
                    "the load is inductive (use type = \"relay\" for a relay)",
                );
            }
        }
        LoadType::Relay => {
            require(
                load.resistance.is_some() || load.relay.is_some(),
                "resistance",
                "a relay load needs the coil resistance (resistance = \"400 ohm\") or the relay's part number (relay = \"...\") to take it from the library",
            )?;
            for key in ["capacitance", "led_vf", "led_current"] {
                unused(key, "the load is a relay coil");
            }
        }
    }
    Ok(load)
}

fn read_contacts(
    t: &Table<'_, '_>,
    load: LoadType,
    notes: &mut Vec<String>,
) -> Result<Option<Contacts>> {
    if !t.present() {
        return Ok(None);
    }
    if load != LoadType::Relay {
        notes.push(format!(
            "[contacts] is not used: the load is {}, not a relay",
            load.name()
        ));
    }
    let volts = t.positive("volts", Dim::Volt, "230 V")?.ok_or_else(|| {
        t.missing(
            "volts",
            "give the voltage the contacts switch, e.g. volts = \"230 V\"",
        )
    })?;
    let amps = t.positive("amps", Dim::Amp, "0.5 A")?.ok_or_else(|| {
        t.missing(
            "amps",
            "give the current the contacts carry, e.g. amps = \"0.5 A\"",
        )
    })?;
    let kind = match t.word("kind", &["resistive", "motor", "lamp", "capacitive"])? {
        Some("motor") => ContactLoad::Motor,
        Some("lamp") => ContactLoad::Lamp,
        Some("capacitive") => ContactLoad::Capacitive,
        _ => ContactLoad::Resistive,
    };
    let inrush = t.number("inrush", "6")?;
    let inrush = t.in_range(
        "inrush",
        inrush,
        |v| v >= 1.0,
        "must be at least 1 (a multiple of amps)",
    )?;
    let insulation = match t.word("insulation", &["functional", "basic", "reinforced"])? {
        Some("functional") => Insulation::Functional,
        Some("basic") => Insulation::Basic,
        _ => Insulation::Reinforced,
    };
    let overvoltage_category = match t.get("overvoltage_category") {
        Some(raw) => {
            let roman = match raw.get_ref() {
                DeValue::String(s) => match s.trim().to_ascii_uppercase().as_str() {
                    "I" => Some(1),
                    "II" => Some(2),
                    "III" => Some(3),
                    "IV" => Some(4),
                    _ => None,
                },
                _ => None,
            };
            match roman {
                Some(n) => n,
                None => t.integer("overvoltage_category", 1..=4)?.unwrap_or(2) as u8,
            }
        }
        None => 2,
    };
    Ok(Some(Contacts {
        volts: Volts(volts),
        ac: t.boolean("ac")?.unwrap_or(true),
        amps: Amps(amps),
        kind,
        inrush,
        insulation,
        overvoltage_category,
    }))
}

fn read_switch(t: &Table<'_, '_>) -> Result<Switch> {
    let kind = match t.word("type", &["npn", "pnp", "nmos", "pmos", "any"])? {
        Some("npn") => SwitchType::Npn,
        Some("pnp") => SwitchType::Pnp,
        Some("nmos") => SwitchType::Nmos,
        Some("pmos") => SwitchType::Pmos,
        _ => SwitchType::Any,
    };
    let beta = t.number("forced_beta", "10")?;
    let beta = t.in_range(
        "forced_beta",
        beta,
        |v| v >= 1.0,
        "must be at least 1 (10 is usual for hard saturation)",
    )?;
    Ok(Switch {
        kind,
        forced_beta: beta.unwrap_or(10.0),
    })
}

fn read_clamp(t: &Table<'_, '_>, load: LoadType, notes: &mut Vec<String>) -> Result<Clamp> {
    let kind = match t.word("type", &["none", "diode", "zener"])? {
        Some("none") => ClampType::None,
        Some("zener") => ClampType::Zener,
        _ => ClampType::Diode,
    };
    let zener_volts = t.positive("zener_volts", Dim::Volt, "24 V")?.map(Volts);
    if kind == ClampType::Zener && zener_volts.is_none() {
        return Err(t.missing(
            "zener_volts",
            "a zener clamp needs the zener voltage, e.g. zener_volts = \"24 V\"",
        ));
    }
    if kind != ClampType::Zener {
        notes.extend(t.unused("zener_volts", "the clamp is not a zener clamp"));
    }
    // `type = "none"` on a load without a coil says the same as leaving [clamp] out.
    if t.present() && !load.is_coil() && kind != ClampType::None {
        notes.push(format!(
            "[clamp] is not used: a {} load stores no magnetic energy to clamp",
            load.name()
        ));
    }
    Ok(Clamp { kind, zener_volts })
}

fn read_sensor(
    t: &Table<'_, '_>,
    drive: &Table<'_, '_>,
    source: DriveSource,
    supply: Volts,
    assume: Assume,
) -> Result<Option<Sensor>> {
    if !t.present() {
        if source == DriveSource::Photocell {
            let at = drive.get("source");
            return Err(drive.doc.error(
                Some("[drive] source".to_string()),
                at.map(|v| shown(v.get_ref())),
                at.map(Spanned::span),
                "a photocell drive needs a [sensor] table (activate, on_lux, r10, gamma or part)"
                    .to_string(),
            ));
        }
        return Ok(None);
    }
    let activate = match t.word("activate", &["light", "dark"])? {
        Some("light") => Activate::Light,
        Some(_) => Activate::Dark,
        None => {
            return Err(t.missing(
                "activate",
                "say when the stage switches on: activate = \"light\" or \"dark\"",
            ));
        }
    };
    let on_lux = t.positive("on_lux", Dim::Lux, "15 lux")?.ok_or_else(|| {
        t.missing(
            "on_lux",
            "give the light level to switch at, e.g. on_lux = \"15 lux\"",
        )
    })?;
    let threshold = t
        .positive("threshold", Dim::Volt, "0.7 V")?
        .map_or(assume.vbe_on, Volts);
    if threshold.0 >= supply.0 {
        let raw = t.get("threshold");
        return Err(t.doc.error(
            Some(t.label("threshold")),
            raw.map(|v| shown(v.get_ref()))
                .or_else(|| Some(format!("{threshold} (assume.vbe_on)"))),
            raw.map(Spanned::span).or(t.span.clone()),
            format!("must be below the supply voltage ({supply}) for the divider to reach it"),
        ));
    }
    let gamma = t.number("gamma", "0.7")?;
    let gamma = t.in_range(
        "gamma",
        gamma,
        |g| g > 0.0 && g <= 3.0,
        "must be above 0 and at most 3 (CdS photocells are 0.5 to 1.0)",
    )?;
    Ok(Some(Sensor {
        activate,
        on_lux: Lux(on_lux),
        threshold,
        r10: t.positive("r10", Dim::Ohm, "20 kohm")?.map(Ohms),
        r10_tolerance: t.fraction("r10_tolerance", 0.0..1.0, false)?,
        gamma,
        part: t.string("part", "a part number")?,
    }))
}

fn read_rules(t: &Table<'_, '_>) -> Result<Rules> {
    let defaults = Rules::default();
    let derating = |key: &str, default: f64| -> Result<f64> {
        let value = t.fraction(key, 0.01..1.0, true)?;
        Ok(value.unwrap_or(default))
    };
    let temperature = |key: &str, example: &str| -> Result<Option<f64>> {
        let value = t.quantity(key, Dim::Celsius, example)?;
        t.in_range(
            key,
            value,
            |c| (-70.0..=200.0).contains(&c),
            "must be from -70 °C to 200 °C",
        )
    };
    let ambient = temperature("ambient", "40 C")?;
    let eseries = match t.get("eseries") {
        Some(raw) => {
            let text = match raw.get_ref() {
                DeValue::String(s) => Some(s.to_string()),
                _ => None,
            };
            text.as_deref().and_then(Series::from_name).ok_or_else(|| {
                t.fail(
                    "eseries",
                    raw,
                    "expected one of \"E6\", \"E12\", \"E24\", \"E48\", \"E96\"".to_string(),
                )
            })?
        }
        None => defaults.eseries,
    };
    Ok(Rules {
        voltage_derating: derating("voltage_derating", defaults.voltage_derating)?,
        current_derating: derating("current_derating", defaults.current_derating)?,
        power_derating: derating("power_derating", defaults.power_derating)?,
        ambient: ambient.map_or(defaults.ambient, Celsius),
        eseries,
        quantity: t
            .integer("quantity", 1..=1_000_000_000)?
            .map_or(defaults.quantity, |q| q as u32),
        allow_obsolete: t
            .boolean("allow_obsolete")?
            .unwrap_or(defaults.allow_obsolete),
        require_rohs: t.boolean("require_rohs")?.unwrap_or(defaults.require_rohs),
        worst_case: t.boolean("worst_case")?.unwrap_or(defaults.worst_case),
        temperature_min: temperature("temperature_min", "-20 C")?
            .map_or(defaults.temperature_min, Celsius),
        temperature_max: temperature("temperature_max", "60 C")?
            .map_or(defaults.temperature_max, Celsius),
        coil_rise: {
            let rise = t.quantity("coil_rise", Dim::Kelvin, "30 K")?;
            t.in_range(
                "coil_rise",
                rise,
                |k| (0.0..=200.0).contains(&k),
                "must be from 0 K to 200 K (the coil's self-heating above the ambient)",
            )?
            .map_or(defaults.coil_rise, Kelvins)
        },
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn read(text: &str) -> Result<Stage> {
        stage(text, "stage.toml")
    }

    fn error(text: &str) -> String {
        match read(text) {
            Ok(s) => panic!("read: {s:?}"),
            Err(e) => e.to_string(),
        }
    }

    const SKETCH: &str = r#"
title = "Door strike driver"
[supply]
volts = "12 V"
tolerance = "10 %"
[drive]
source = "logic"
high = "3.3 V"
max_current = "8 mA"
[load]
type = "relay"
resistance = "400 ohm"
inductance = "0.2 H"
[contacts]
volts = "230 V"
ac = true
amps = "0.5 A"
kind = "motor"
insulation = "reinforced"
overvoltage_category = 2
[switch]
type = "npn"
forced_beta = 10
[clamp]
type = "diode"
[rules]
voltage_derating = 0.8
current_derating = 0.8
power_derating = 0.5
ambient = "40 C"
eseries = "E12"
[assume]
vce_sat = "0.2 V"
vbe_on = "0.7 V"
diode_vf = "0.7 V"
"#;

    #[test]
    fn the_design_sketch_reads() {
        let s = read(SKETCH).unwrap_or_else(|e| panic!("{e}"));
        assert_eq!(s.title, "Door strike driver");
        assert_eq!(s.supply.volts, Volts(12.0));
        assert!((s.supply.tolerance - 0.1).abs() < 1e-12);
        assert!((s.supply.max().0 - 13.2).abs() < 1e-9);
        assert_eq!(s.drive.high, Volts(3.3));
        assert!((s.drive.max_current.map_or(0.0, |a| a.0) - 8e-3).abs() < 1e-15);
        assert_eq!(s.load.kind, LoadType::Relay);
        assert_eq!(s.load.resistance, Some(Ohms(400.0)));
        let c = s.contacts.unwrap_or_else(|| panic!("contacts"));
        assert_eq!(c.kind, ContactLoad::Motor);
        assert_eq!(c.insulation, Insulation::Reinforced);
        assert_eq!(c.overvoltage_category, 2);
        assert_eq!(s.switch.kind, SwitchType::Npn);
        assert_eq!(s.rules.ambient, Celsius(40.0));
        assert_eq!(s.rules.eseries, Series::E12);
        assert!(s.notes.is_empty(), "{:?}", s.notes);
    }

    #[test]
    fn defaults_follow_the_issue() {
        let s = read("[supply]\nvolts = 5\n[load]\ntype = \"resistive\"\nresistance = 1000\n")
            .unwrap_or_else(|e| panic!("{e}"));
        assert_eq!(s.title, "stage.toml");
        assert_eq!(s.supply.tolerance, 0.0);
        assert_eq!(s.drive.source, DriveSource::Logic);
        assert_eq!(
            s.drive.high,
            Volts(5.0),
            "drive.high defaults to the supply"
        );
        assert_eq!(s.switch.kind, SwitchType::Any);
        assert_eq!(s.switch.forced_beta, 10.0);
        assert_eq!(s.clamp.kind, ClampType::Diode);
        assert_eq!(s.rules, Rules::default());
        assert_eq!(s.rules.voltage_derating, 0.8);
        assert_eq!(s.rules.power_derating, 0.5);
        assert_eq!(s.rules.ambient, Celsius(25.0));
        assert_eq!(s.rules.eseries, Series::E12);
        assert_eq!(s.assume, Assume::default());
        assert_eq!(s.assume.vbe_on, Volts(0.7));
        assert!(s.contacts.is_none() && s.sensor.is_none());
    }

    #[test]
    fn contact_and_sensor_defaults() {
        let s = read(
            r#"[supply]
volts = "5 V"
[drive]
source = "photocell"
[load]
type = "relay"
relay = "RLY-05"
[contacts]
volts = "24 V"
amps = "1 A"
[sensor]
activate = "dark"
on_lux = "15 lux"
r10 = "20k"
gamma = 0.7
"#,
        )
        .unwrap_or_else(|e| panic!("{e}"));
        let c = s.contacts.unwrap_or_else(|| panic!("contacts"));
        assert!(c.ac);
        assert_eq!(c.kind, ContactLoad::Resistive);
        assert_eq!(c.insulation, Insulation::Reinforced);
        assert_eq!(c.overvoltage_category, 2);
        let sensor = s.sensor.unwrap_or_else(|| panic!("sensor"));
        assert_eq!(
            sensor.threshold,
            Volts(0.7),
            "threshold defaults to assume.vbe_on"
        );
        assert_eq!(sensor.r10, Some(Ohms(20e3)));
        assert_eq!(sensor.r10_tolerance, None);
        assert_eq!(s.load.relay.as_deref(), Some("RLY-05"));
    }

    #[test]
    fn an_unknown_key_is_named_with_its_table_and_a_suggestion() {
        let e =
            error("[supply]\nvolts = \"12 V\"\n[load]\ntype = \"resistive\"\nresistnce = \"1k\"\n");
        assert!(
            e.starts_with("stage.toml: [load] unknown key `resistnce`"),
            "{e}"
        );
        assert!(e.contains("did you mean `resistance`"), "{e}");
        assert!(e.contains("line 5"), "{e}");
        let e = error("titel = \"x\"\n[supply]\nvolts = 5\n");
        assert!(
            e.contains("unknown key `titel`") && e.contains("`title`"),
            "{e}"
        );
        let e = error("[suply]\nvolts = 5\n");
        assert!(
            e.contains("unknown key `suply`") && e.contains("`supply`"),
            "{e}"
        );
    }

    #[test]
    fn a_bad_value_names_the_key_the_text_and_what_to_write() {
        let e =
            error("[supply]\nvolts = \"12 A\"\n[load]\ntype = \"resistive\"\nresistance = 10\n");
        assert!(e.contains("[supply] volts = \"12 A\""), "{e}");
        assert!(e.contains("line 2"), "{e}");
        assert!(e.contains("a voltage such as \"12 V\""), "{e}");
        let e = error("[supply]\nvolts = 12\n[load]\ntype = \"resistiv\"\n");
        assert!(e.contains("did you mean \"resistive\""), "{e}");
        let e = error(
            "[supply]\nvolts = 12\ntolerance = 10\n[load]\ntype = \"resistive\"\nresistance = 10\n",
        );
        assert!(e.contains("write \"10 %\" or 0.1"), "{e}");
        let e = error("[supply]\nvolts = nan\n[load]\ntype = \"resistive\"\nresistance = 10\n");
        assert!(e.contains("finite"), "{e}");
        let e = error("[supply]\nvolts = -5\n[load]\ntype = \"resistive\"\nresistance = 10\n");
        assert!(e.contains("greater than zero"), "{e}");
        let e = error("supply = 12\n");
        assert!(
            e.contains("[supply] = 12:") && e.contains("must be a table"),
            "{e}"
        );
    }

    #[test]
    fn missing_and_contradictory_keys_are_errors() {
        let e = error("[load]\ntype = \"resistive\"\nresistance = 10\n");
        assert!(
            e.contains("[supply] volts is missing (there is no [supply] table)"),
            "{e}"
        );
        let e = error("[supply]\nvolts = 12\n[load]\ntype = \"resistive\"\n");
        assert!(
            e.contains("[load] resistance") && e.contains("missing"),
            "{e}"
        );
        let e = error(
            "[supply]\nvolts = 12\n[load]\ntype = \"inductive\"\nresistance = 10\n[clamp]\ntype = \"zener\"\n",
        );
        assert!(e.contains("zener_volts"), "{e}");
        let e = error(
            "[supply]\nvolts = 12\n[drive]\nsource = \"photocell\"\n[load]\ntype = \"resistive\"\nresistance = 10\n",
        );
        assert!(e.contains("[sensor]"), "{e}");
        let e = error("[supply]\nvolts = 12\n[load]\ntype = \"relay\"\n");
        assert!(e.contains("coil resistance"), "{e}");
    }

    #[test]
    fn toml_syntax_errors_give_the_line() {
        let e = error("[supply]\nvolts = \"12 V\n");
        assert!(
            e.starts_with("stage.toml: not valid TOML") && e.contains("(line 2)"),
            "{e}"
        );
    }

    #[test]
    fn keys_that_do_not_apply_become_notes() {
        let s = read("[supply]\nvolts = 12\n[load]\ntype = \"resistive\"\nresistance = 10\ninductance = \"1 mH\"\n[contacts]\nvolts = 230\namps = 1\n")
            .unwrap_or_else(|e| panic!("{e}"));
        assert_eq!(s.notes.len(), 2, "{:?}", s.notes);
        assert!(s.notes[0].contains("[load] inductance is not used"));
        assert!(s.notes[1].contains("[contacts] is not used"));
    }

    #[test]
    fn overvoltage_category_accepts_roman_numerals() {
        let base = "[supply]\nvolts = 12\n[load]\ntype = \"relay\"\nresistance = 400\n[contacts]\nvolts = 230\namps = 1\n";
        let s = read(&format!("{base}overvoltage_category = \"III\"\n"))
            .unwrap_or_else(|e| panic!("{e}"));
        assert_eq!(s.contacts.map(|c| c.overvoltage_category), Some(3));
        let e = error(&format!("{base}overvoltage_category = 5\n"));
        assert!(e.contains("from 1 to 4"), "{e}");
    }

    proptest::proptest! {
        /// The reader never panics, whatever the text (arbitrary text, and the design sketch
        /// with a run of characters replaced), and a stage that reads always computes.
        #[test]
        fn reading_never_panics(text in "\\PC{0,200}", at in 0usize..800, cut in 0usize..20, patch in "\\PC{0,12}") {
            let _ = read(&text);
            let mut mangled: String = SKETCH.chars().take(at).collect();
            mangled.push_str(&patch);
            mangled.extend(SKETCH.chars().skip(at + cut));
            // What reads must also compute without panicking.
            if let Ok(stage) = read(&mangled) {
                let _ = crate::needs::compute(&stage, None);
            }
        }
    }

    /// Issue 10's worst-case keys and their defaults: worst_case false, -20 °C to 60 °C, a
    /// 30 K coil rise, VBE -2 mV/K, hFE +0.5 %/K (common practice, from memory), and the
    /// resistor tolerance of the chosen E-series (IEC 60063: E12 ±10 %, E24 ±5 %).
    #[test]
    fn worst_case_keys_and_defaults() {
        let base = "[supply]\nvolts = 12\n[load]\ntype = \"relay\"\nresistance = 400\n";
        let s = read(base).unwrap_or_else(|e| panic!("{e}"));
        assert!(!s.rules.worst_case);
        assert_eq!(s.rules.temperature_min, Celsius(-20.0));
        assert_eq!(s.rules.temperature_max, Celsius(60.0));
        assert_eq!(s.rules.coil_rise, Kelvins(30.0));
        assert_eq!(s.assume.vbe_tempco, -2e-3);
        assert_eq!(s.assume.hfe_tempco, 0.005);
        assert_eq!(s.assume.resistor_tolerance, None);
        assert_eq!(s.resistor_tolerance(), 0.10);
        let s = read(&format!(
            "{base}[rules]\nworst_case = true\ntemperature_min = \"-40 C\"\ntemperature_max = \"85 °C\"\ncoil_rise = \"25 K\"\neseries = \"E24\"\n[assume]\nvbe_tempco = \"-2.2 mV/K\"\nhfe_tempco = \"+0.7 %/K\"\n"
        ))
        .unwrap_or_else(|e| panic!("{e}"));
        assert!(s.rules.worst_case);
        assert_eq!(s.rules.temperature_min, Celsius(-40.0));
        assert_eq!(s.rules.temperature_max, Celsius(85.0));
        assert_eq!(s.rules.coil_rise, Kelvins(25.0));
        assert!((s.assume.vbe_tempco + 2.2e-3).abs() < 1e-15);
        assert!((s.assume.hfe_tempco - 0.007).abs() < 1e-15);
        assert_eq!(s.resistor_tolerance(), 0.05, "E24 is a ±5 % series");
        assert!(s.notes.is_empty(), "{:?}", s.notes);
        let s = read(&format!(
            "{base}[rules]\nworst_case = true\n[assume]\nresistor_tolerance = \"1 %\"\n"
        ))
        .unwrap_or_else(|e| panic!("{e}"));
        assert!((s.resistor_tolerance() - 0.01).abs() < 1e-15);
    }

    #[test]
    fn worst_case_keys_are_checked_and_noted_when_off() {
        let base = "[supply]\nvolts = 12\n[load]\ntype = \"relay\"\nresistance = 400\n";
        let e = error(&format!(
            "{base}[rules]\ntemperature_min = \"70 C\"\ntemperature_max = \"60 C\"\n"
        ));
        assert!(
            e.contains("[rules] temperature_max") && e.contains("range is empty"),
            "{e}"
        );
        let e = error(&format!("{base}[rules]\ntemperature_min = \"-20 V\"\n"));
        assert!(e.contains("a temperature such as"), "{e}");
        let e = error(&format!("{base}[assume]\nvbe_tempco = \"-2 mV\"\n"));
        assert!(
            e.contains("[assume] vbe_tempco") && e.contains("-2 mV/K"),
            "{e}"
        );
        let e = error(&format!("{base}[assume]\nvbe_tempco = \"-20 mV/K\"\n"));
        assert!(e.contains("-10 mV/K to +10 mV/K"), "{e}");
        let e = error(&format!("{base}[assume]\nhfe_tempco = \"3 %/K\"\n"));
        assert!(
            e.contains("[assume] hfe_tempco") && e.contains("no switch works with"),
            "{e}"
        );
        let e = error(&format!("{base}[rules]\ncoil_rise = \"-5 K\"\n"));
        assert!(e.contains("from 0 K to 200 K"), "{e}");
        let e = error(&format!("{base}[assume]\nresistor_tolerance = 10\n"));
        assert!(e.contains("write \"10 %\" or 0.1"), "{e}");
        let e = error(&format!("{base}[rules]\nworst_case = \"yes\"\n"));
        assert!(e.contains("true or false"), "{e}");
        let s = read(&format!(
            "{base}[rules]\ncoil_rise = \"20 K\"\n[assume]\nhfe_tempco = \"0.4 %/K\"\n"
        ))
        .unwrap_or_else(|e| panic!("{e}"));
        assert_eq!(s.notes.len(), 2, "{:?}", s.notes);
        assert!(s.notes[0].contains("[rules] coil_rise is not used: [rules] worst_case is false"));
        assert!(s.notes[1].contains("[assume] hfe_tempco is not used"));
    }

    #[test]
    fn edit_distance_counts_edits() {
        assert_eq!(edit_distance("resistnce", "resistance"), 1);
        assert_eq!(edit_distance("", "abc"), 3);
        assert_eq!(edit_distance("volts", "volts"), 0);
    }
}
