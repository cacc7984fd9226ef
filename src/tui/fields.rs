//! The stage as editable fields. The TOML document is the one source of truth: an edit sets one
//! key in a copy of it and the whole stage is read again with [`Stage::from_toml`], so the
//! workbench applies exactly the rules (and gives exactly the messages) of a stage file. An
//! edit the stage refuses leaves the last good document in force.

use crate::stage::Stage;
use toml::{Table, Value};

/// What a field holds and how it is edited.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum FieldKind {
    /// Free text (title, a part number).
    Text,
    /// A quantity with a unit, stored as a string ("12 V").
    Quantity,
    /// A plain number (a derating, a gain), stored as a float.
    Number,
    /// A whole number, stored as an integer.
    Integer,
    /// True or false, toggled with the arrows.
    Bool,
    /// One word of a list, cycled with the arrows.
    Choice(&'static [&'static str]),
}

/// One editable key of the stage.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Field {
    /// The table (`supply`), or "" for the top level.
    pub table: &'static str,
    /// The key (`volts`).
    pub key: &'static str,
    /// How it is edited.
    pub kind: FieldKind,
    /// What the stage uses when the key is absent, for display.
    pub default: &'static str,
}

impl Field {
    /// `table.key`, or `key` at the top level.
    #[must_use]
    pub fn path(&self) -> String {
        if self.table.is_empty() {
            self.key.to_string()
        } else {
            format!("{}.{}", self.table, self.key)
        }
    }
}

const fn field(
    table: &'static str,
    key: &'static str,
    kind: FieldKind,
    default: &'static str,
) -> Field {
    Field {
        table,
        key,
        kind,
        default,
    }
}

use FieldKind::{Bool, Choice, Integer, Number, Quantity, Text};

/// Every stage key the workbench edits, in file order (issue 3's binding key list).
pub const FIELDS: &[Field] = &[
    field("", "title", Text, "the file name"),
    field("supply", "volts", Quantity, "required"),
    field("supply", "tolerance", Quantity, "0 %"),
    field("drive", "source", Choice(&["logic", "photocell"]), "logic"),
    field("drive", "high", Quantity, "the supply volts"),
    field("drive", "max_current", Quantity, "no limit"),
    field(
        "load",
        "type",
        Choice(&["resistive", "led", "capacitive", "inductive", "relay"]),
        "required",
    ),
    field("load", "resistance", Quantity, "—"),
    field("load", "inductance", Quantity, "—"),
    field("load", "capacitance", Quantity, "—"),
    field("load", "led_vf", Quantity, "—"),
    field("load", "led_current", Quantity, "—"),
    field("load", "relay", Text, "—"),
    field("contacts", "volts", Quantity, "—"),
    field("contacts", "ac", Bool, "true"),
    field("contacts", "amps", Quantity, "—"),
    field(
        "contacts",
        "kind",
        Choice(&["resistive", "motor", "lamp", "capacitive"]),
        "resistive",
    ),
    field("contacts", "inrush", Number, "by kind"),
    field(
        "contacts",
        "insulation",
        Choice(&["functional", "basic", "reinforced"]),
        "reinforced",
    ),
    field("contacts", "overvoltage_category", Integer, "2"),
    field(
        "switch",
        "type",
        Choice(&["any", "npn", "pnp", "nmos", "pmos"]),
        "any",
    ),
    field("switch", "forced_beta", Number, "10"),
    field(
        "clamp",
        "type",
        Choice(&["diode", "zener", "none"]),
        "diode",
    ),
    field("clamp", "zener_volts", Quantity, "—"),
    field("sensor", "activate", Choice(&["light", "dark"]), "—"),
    field("sensor", "on_lux", Quantity, "—"),
    field("sensor", "threshold", Quantity, "assume.vbe_on"),
    field("sensor", "r10", Quantity, "from the part"),
    field("sensor", "r10_tolerance", Quantity, "0 %"),
    field("sensor", "gamma", Number, "from the part"),
    field("sensor", "part", Text, "—"),
    field("rules", "voltage_derating", Number, "0.8"),
    field("rules", "current_derating", Number, "0.8"),
    field("rules", "power_derating", Number, "0.5"),
    field("rules", "ambient", Quantity, "25 °C"),
    field(
        "rules",
        "eseries",
        Choice(&["E6", "E12", "E24", "E48", "E96"]),
        "E12",
    ),
    field("rules", "quantity", Integer, "1"),
    field("rules", "allow_obsolete", Bool, "false"),
    field("rules", "require_rohs", Bool, "false"),
    field("rules", "worst_case", Bool, "false"),
    field("rules", "temperature_min", Quantity, "-20 °C"),
    field("rules", "temperature_max", Quantity, "60 °C"),
    field("rules", "coil_rise", Quantity, "30 K"),
    field("assume", "vce_sat", Quantity, "0.2 V"),
    field("assume", "vbe_on", Quantity, "0.7 V"),
    field("assume", "diode_vf", Quantity, "0.7 V"),
    field("assume", "vbe_tempco", Quantity, "-2 mV/K"),
    field("assume", "hfe_tempco", Quantity, "0.5 %/K"),
    field(
        "assume",
        "resistor_tolerance",
        Quantity,
        "the E-series tolerance",
    ),
];

/// The stage as a TOML document plus the stage it reads as.
#[derive(Debug, Clone)]
pub struct StageDoc {
    table: Table,
    /// The stage the document reads as (always the last good one).
    pub stage: Stage,
    /// The name errors use.
    pub file: String,
}

impl StageDoc {
    /// Reads a document.
    ///
    /// # Errors
    /// The stage's own message when the text is not a stage.
    pub fn parse(text: &str, file: &str) -> Result<StageDoc, String> {
        let mut stage = Stage::from_toml(text, file).map_err(|e| e.to_string())?;
        if stage.title.is_empty() {
            // As `Stage::read` does: a stage without a title is called by its file's name.
            stage.title = std::path::Path::new(file)
                .file_name()
                .map_or_else(|| file.to_string(), |n| n.to_string_lossy().into_owned());
        }
        let table: Table = text.parse().map_err(|e: toml::de::Error| e.to_string())?;
        Ok(StageDoc {
            table,
            stage,
            file: file.to_string(),
        })
    }

    /// The text of a key as stored, if present.
    #[must_use]
    pub fn get(&self, field: &Field) -> Option<String> {
        let value = if field.table.is_empty() {
            self.table.get(field.key)
        } else {
            self.table.get(field.table)?.as_table()?.get(field.key)
        }?;
        Some(match value {
            Value::String(s) => s.clone(),
            Value::Integer(i) => i.to_string(),
            Value::Float(f) => f.to_string(),
            Value::Boolean(b) => b.to_string(),
            other => other.to_string(),
        })
    }

    /// The document as TOML text, for saving.
    #[must_use]
    pub fn to_text(&self) -> String {
        toml::to_string(&self.table).unwrap_or_default()
    }

    /// Sets a key from what the user typed (empty removes it, back to the default) and reads
    /// the stage again. On success the document and stage change; on failure nothing does.
    ///
    /// # Errors
    /// Why the text does not fit the field, or the stage's message for the new document.
    pub fn set(&mut self, field: &Field, text: &str) -> Result<(), String> {
        let text = text.trim();
        let value = if text.is_empty() {
            None
        } else {
            Some(typed(field, text)?)
        };
        let mut table = self.table.clone();
        let target = if field.table.is_empty() {
            &mut table
        } else {
            let entry = table
                .entry(field.table.to_string())
                .or_insert_with(|| Value::Table(Table::new()));
            match entry {
                Value::Table(t) => t,
                _ => {
                    return Err(format!(
                        "[{}] is not a table in the stage file",
                        field.table
                    ));
                }
            }
        };
        match value {
            Some(v) => {
                target.insert(field.key.to_string(), v);
            }
            None => {
                target.remove(field.key);
            }
        }
        if let Some(Value::Table(t)) = table.get(field.table)
            && t.is_empty()
        {
            table.remove(field.table);
        }
        let text = toml::to_string(&table).map_err(|e| e.to_string())?;
        let stage = Stage::from_toml(&text, &self.file).map_err(|e| e.to_string())?;
        let title = self.stage.title.clone();
        self.table = table;
        self.stage = stage;
        if self.stage.title.is_empty() {
            self.stage.title = title;
        }
        Ok(())
    }

    /// Moves a choice or boolean field one step (`forward` or back) and applies it.
    ///
    /// # Errors
    /// The stage's message when the new value is refused (the old one stays).
    pub fn cycle(&mut self, field: &Field, forward: bool) -> Result<(), String> {
        let current = self.get(field).unwrap_or_else(|| field.default.to_string());
        let next = match field.kind {
            Bool => (current != "true").to_string(),
            Choice(words) => {
                let at = words
                    .iter()
                    .position(|w| w.eq_ignore_ascii_case(&current))
                    .unwrap_or(0);
                let n = words.len();
                let i = if forward {
                    (at + 1) % n
                } else {
                    (at + n - 1) % n
                };
                words[i].to_string()
            }
            Integer if field.key == "overvoltage_category" => {
                let at: i64 = current.parse().unwrap_or(2);
                let i = if forward {
                    at % 4 + 1
                } else {
                    (at + 2) % 4 + 1
                };
                i.to_string()
            }
            _ => return Ok(()),
        };
        self.set(field, &next)
    }
}

/// The TOML value for what was typed into a field.
fn typed(field: &Field, text: &str) -> Result<Value, String> {
    match field.kind {
        Text | Quantity => Ok(Value::String(text.to_string())),
        Choice(words) => words
            .iter()
            .find(|w| w.eq_ignore_ascii_case(text))
            .map(|w| Value::String((*w).to_string()))
            .ok_or_else(|| format!("\"{text}\": choose one of {}", words.join(", "))),
        Number => text
            .replace(',', ".")
            .parse::<f64>()
            .ok()
            .filter(|v| v.is_finite())
            .map(Value::Float)
            .ok_or_else(|| format!("\"{text}\" is not a number")),
        Integer => text
            .parse::<i64>()
            .map(Value::Integer)
            .map_err(|_| format!("\"{text}\" is not a whole number")),
        Bool => match text.to_ascii_lowercase().as_str() {
            "true" | "yes" | "on" | "1" => Ok(Value::Boolean(true)),
            "false" | "no" | "off" | "0" => Ok(Value::Boolean(false)),
            _ => Err(format!("\"{text}\": true or false")),
        },
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const TEXT: &str = "title = \"t\"\n[supply]\nvolts = \"12 V\"\n[load]\ntype = \"resistive\"\nresistance = \"120 ohm\"\n";

    fn find(path: &str) -> &'static Field {
        FIELDS.iter().find(|f| f.path() == path).unwrap()
    }

    #[test]
    fn every_stage_key_is_a_field() {
        for (table, keys) in crate::stage::KEYS {
            for key in keys {
                assert!(
                    FIELDS.iter().any(|f| f.table == table && f.key == *key),
                    "{table}.{key} is not editable"
                );
            }
        }
    }

    #[test]
    fn an_edit_applies_and_a_bad_one_keeps_the_old_value() {
        let mut doc = StageDoc::parse(TEXT, "t.toml").unwrap();
        doc.set(find("supply.volts"), "24 V").unwrap();
        assert_eq!(doc.stage.supply.volts.value(), 24.0);
        let error = doc.set(find("supply.volts"), "24 A").unwrap_err();
        assert!(error.contains("24 A"), "{error}");
        assert_eq!(doc.stage.supply.volts.value(), 24.0);
        assert_eq!(doc.get(find("supply.volts")).as_deref(), Some("24 V"));
        doc.set(find("rules.voltage_derating"), "0.7").unwrap();
        assert_eq!(doc.stage.rules.voltage_derating, 0.7);
        doc.set(find("rules.voltage_derating"), "").unwrap();
        assert_eq!(doc.stage.rules.voltage_derating, 0.8);
    }

    #[test]
    fn choices_cycle() {
        let mut doc = StageDoc::parse(TEXT, "t.toml").unwrap();
        doc.cycle(find("switch.type"), true).unwrap();
        assert_eq!(doc.get(find("switch.type")).as_deref(), Some("npn"));
        doc.cycle(find("switch.type"), false).unwrap();
        assert_eq!(doc.get(find("switch.type")).as_deref(), Some("any"));
        doc.cycle(find("rules.require_rohs"), true).unwrap();
        assert!(doc.stage.rules.require_rohs);
    }
}
