//! `loadfit init DIR`: a starter library (every known column, three example rows) and an
//! example stage file. Refuses to overwrite.

use super::{CliError, Output};
use loadfit::library::columns::FIELDS;
use loadfit::write::write_atomic;
use std::path::PathBuf;

/// Arguments of `init`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// Folder to write `parts.csv` and `stage.toml` into (created if missing).
    dir: PathBuf,
}

/// Example rows of the starter library: (column, value) pairs, invented parts.
const EXAMPLES: [&[(&str, &str)]; 3] = [
    &[
        ("part", "MYQ-100"),
        ("kind", "npn"),
        ("package", "TO-92"),
        ("pinout", "EBC"),
        ("maker", "Your Maker"),
        ("price", "0.05"),
        ("stock", "250"),
        ("status", "active"),
        ("rohs", "yes"),
        ("notes", "general-purpose switch"),
        ("tags", "small-signal"),
        ("vceo", "40 V"),
        ("ic_max", "200 mA"),
        ("hfe_min", "100"),
        ("hfe_at_ic", "10 mA"),
        ("vce_sat", "0.3 V"),
        ("vce_sat_at_ic", "50 mA"),
        ("vbe_on", "0.7 V"),
        ("pd", "625 mW"),
        ("tj_max", "150 C"),
        ("rth_ja", "200"),
    ],
    &[
        ("part", "MYD-1K"),
        ("kind", "diode"),
        ("package", "DO-41"),
        ("pinout", "AK"),
        ("maker", "Your Maker"),
        ("price", "0.03"),
        ("stock", "1000"),
        ("status", "active"),
        ("rohs", "yes"),
        ("notes", "1 A rectifier for coil clamps"),
        ("vrrm", "400 V"),
        ("if_avg", "1 A"),
        ("ifsm", "30 A"),
        ("vf", "1.0 V"),
        ("vf_at_if", "1 A"),
        ("trr", "2 us"),
    ],
    &[
        ("part", "MYK-12"),
        ("kind", "relay"),
        ("package", "THT"),
        ("maker", "Your Maker"),
        ("price", "1.10"),
        ("stock", "20"),
        ("status", "active"),
        ("rohs", "yes"),
        ("notes", "12 V coil, changeover"),
        ("coil_v", "12 V"),
        ("coil_r", "400 ohm"),
        ("must_operate_v", "9 V"),
        ("must_release_v", "1.2 V"),
        ("coil_v_max", "15.6 V"),
        ("contact_form", "1C"),
        ("contact_a_ac", "10 A"),
        ("contact_v_ac", "250 V"),
        ("contact_a_dc", "10 A"),
        ("contact_v_dc", "30 V"),
        ("dielectric_v", "4000 V"),
        ("impulse_v", "6000 V"),
        ("operate_ms", "10"),
        ("release_ms", "5"),
    ],
];

/// The example stage written by `init`: a relay driven from a 3.3 V logic pin.
pub const EXAMPLE_STAGE: &str = r#"# An example stage for loadfit: a 12 V relay switched by an NPN from a 3.3 V logic pin.
# Quantities are strings with units ("12 V", "400 ohm") or bare numbers in SI units.
title = "Relay from a logic pin"

[supply]
volts = "12 V"
tolerance = "10 %"

[drive]
source = "logic"
high = "3.3 V"
max_current = "8 mA"

[load]
type = "relay"
relay = "MYK-12"

[contacts]
volts = "24 V"
ac = false
amps = "2 A"
kind = "resistive"
insulation = "basic"
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
"#;

/// The starter library text: the header with every known column, then the examples.
#[must_use]
pub fn starter_library() -> String {
    let mut writer = csv::Writer::from_writer(Vec::new());
    let header: Vec<&str> = FIELDS.iter().map(|f| f.name).collect();
    // Writing into a Vec cannot fail for I/O reasons; a csv error here would be a bug.
    let mut write = |row: Vec<&str>| writer.write_record(row).is_ok();
    let mut ok = write(header.clone());
    for example in EXAMPLES {
        let row: Vec<&str> = header
            .iter()
            .map(|column| {
                example
                    .iter()
                    .find(|(c, _)| c == column)
                    .map_or("", |(_, v)| v)
            })
            .collect();
        ok &= write(row);
    }
    debug_assert!(ok);
    String::from_utf8(writer.into_inner().unwrap_or_default()).unwrap_or_default()
}

/// Writes both files; refuses when either exists, before writing anything.
pub fn run(args: &Args, out: &mut Output) -> Result<u8, CliError> {
    std::fs::create_dir_all(&args.dir).map_err(|source| loadfit::write::WriteError::Io {
        path: args.dir.clone(),
        source,
    })?;
    let parts = args.dir.join("parts.csv");
    let stage = args.dir.join("stage.toml");
    for path in [&parts, &stage] {
        if path.exists() {
            return Err(loadfit::write::WriteError::Exists { path: path.clone() }.into());
        }
    }
    write_atomic(&parts, starter_library().as_bytes(), false)?;
    write_atomic(&stage, EXAMPLE_STAGE.as_bytes(), false)?;
    out.line(&format!("wrote {}", parts.display()))?;
    out.line(&format!("wrote {}", stage.display()))?;
    out.line(&format!(
        "next: loadfit lint {}   (then edit both files with your own parts and stage)",
        parts.display()
    ))?;
    Ok(0)
}

#[cfg(test)]
mod tests {
    use super::*;
    use loadfit::library::Library;

    #[test]
    fn the_starter_library_loads_cleanly() {
        let mut library = Library::new();
        library
            .add_bytes("parts.csv", starter_library().as_bytes())
            .unwrap();
        assert!(library.rejected.is_empty(), "{:?}", library.rejected);
        assert!(library.warnings.is_empty(), "{:?}", library.warnings);
        assert_eq!(library.parts.len(), 3);
        assert!(library.extra_columns.is_empty(), "every column is known");
    }
}
