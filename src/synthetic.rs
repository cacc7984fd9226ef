//! Synthetic parts libraries for benchmarks and tests: every kind, realistic value spreads
//! (ratings on preferred steps, gains and resistances log-spread), and a small share of bad
//! rows (a wrong unit, a negative rating, a ragged row) so the reader's error paths are timed
//! too. The output is deterministic for a seed. Every part number and maker is invented.

use crate::library::columns::FIELDS;
use std::io::{self, Write};

/// A small, fast, seedable generator (SplitMix64): deterministic across platforms, enough for
/// test data, and no dependency.
#[derive(Debug, Clone)]
pub struct SplitMix(u64);

impl SplitMix {
    /// A generator for `seed`.
    #[must_use]
    pub fn new(seed: u64) -> SplitMix {
        SplitMix(seed)
    }

    /// The next 64 random bits.
    pub fn next_u64(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }

    /// A number in [0, 1).
    pub fn unit(&mut self) -> f64 {
        (self.next_u64() >> 11) as f64 / (1u64 << 53) as f64
    }

    /// One of `items`.
    pub fn pick<'a, T>(&mut self, items: &'a [T]) -> &'a T {
        &items[(self.next_u64() % items.len() as u64) as usize]
    }

    /// A value spread evenly on a log scale between `low` and `high`.
    pub fn log_between(&mut self, low: f64, high: f64) -> f64 {
        (low.ln() + self.unit() * (high.ln() - low.ln())).exp()
    }
}

const MAKERS: [&str; 12] = [
    "Arlowe Semi",
    "Bexmoor",
    "Calderine",
    "Dunmarra Devices",
    "Eskwood",
    "Fenlow Micro",
    "Gravitt",
    "Holloway Reach",
    "Isterne",
    "Jarrowby",
    "Kelvarn",
    "Lustrell",
];
const VOLTS: [f64; 12] = [
    12.0, 20.0, 25.0, 30.0, 40.0, 45.0, 50.0, 60.0, 80.0, 100.0, 150.0, 300.0,
];
const STATUS: [&str; 6] = ["active", "active", "active", "active", "nrnd", "obsolete"];

/// A library of `rows` synthetic parts read from [`write_library`]'s text, named
/// `generated.csv`: what benchmarks and tests of large libraries start from.
///
/// # Errors
/// When the library cannot be read (over a row limit, say); the text itself is written into
/// memory and cannot fail.
pub fn library(rows: u64, seed: u64) -> Result<crate::library::Library, crate::library::LoadError> {
    let mut text = Vec::new();
    // Writing into a Vec cannot fail.
    write_library(&mut text, rows, seed).unwrap_or_default();
    let mut library = crate::library::Library::new();
    library.add_bytes("generated.csv", &text)?;
    Ok(library)
}

/// Writes `rows` synthetic parts as CSV to `out`, with the header of every known column.
///
/// # Errors
/// When `out` fails.
pub fn write_library(out: &mut dyn Write, rows: u64, seed: u64) -> io::Result<()> {
    let mut rng = SplitMix::new(seed);
    let header: Vec<&str> = FIELDS.iter().map(|f| f.name).collect();
    writeln!(out, "{}", header.join(","))?;
    let index = |name: &str| FIELDS.iter().position(|f| f.name == name).unwrap_or(0);
    let mut cells: Vec<String> = vec![String::new(); FIELDS.len()];
    for row in 0..rows {
        for cell in &mut cells {
            cell.clear();
        }
        let kind = *rng.pick(&[
            "npn",
            "npn",
            "npn",
            "pnp",
            "nmos",
            "nmos",
            "pmos",
            "diode",
            "diode",
            "schottky",
            "zener",
            "relay",
            "photocell",
        ]);
        let mut set = |name: &str, value: String| cells[index(name)] = value;
        let prefix = match kind {
            "npn" => "SQN",
            "pnp" => "SQP",
            "nmos" => "SMN",
            "pmos" => "SMP",
            "diode" => "SDR",
            "schottky" => "SDS",
            "zener" => "SDZ",
            "relay" => "SKR",
            _ => "SLD",
        };
        set("part", format!("{prefix}{row:08}"));
        set("kind", kind.to_string());
        set("maker", rng.pick(&MAKERS).to_string());
        set("price", format!("{:.3}", rng.log_between(0.01, 5.0)));
        set(
            "stock",
            format!(
                "{}",
                (rng.log_between(1.0, 100_000.0) as u64).saturating_sub(1)
            ),
        );
        set("status", rng.pick(&STATUS).to_string());
        set(
            "rohs",
            if rng.unit() < 0.9 { "yes" } else { "no" }.to_string(),
        );
        set("tags", "synthetic".to_string());
        let v = *rng.pick(&VOLTS);
        match kind {
            "npn" | "pnp" => {
                set(
                    "package",
                    rng.pick(&["TO-92", "SOT-23", "TO-126", "TO-220"])
                        .to_string(),
                );
                set(
                    "pinout",
                    rng.pick(&["EBC", "CBE", "BEC", "BCE"]).to_string(),
                );
                set("vceo", format!("{v} V"));
                set("ic_max", format!("{:.0} mA", rng.log_between(50.0, 8000.0)));
                set("hfe_min", format!("{:.0}", rng.log_between(20.0, 600.0)));
                set("hfe_at_ic", "10 mA".to_string());
                set("vce_sat", format!("{:.2} V", 0.1 + rng.unit() * 0.5));
                set("vbe_on", "0.7 V".to_string());
                set("pd", format!("{:.0} mW", rng.log_between(200.0, 40_000.0)));
                set("tj_max", "150 C".to_string());
                set("rth_ja", format!("{:.0}", rng.log_between(40.0, 400.0)));
            }
            "nmos" | "pmos" => {
                set(
                    "package",
                    rng.pick(&["SOT-23", "TO-252", "TO-220"]).to_string(),
                );
                set("pinout", "GDS".to_string());
                set("vds", format!("{v} V"));
                set("id_max", format!("{:.2} A", rng.log_between(0.2, 60.0)));
                set(
                    "rds_on",
                    format!("{:.0} mohm", rng.log_between(5.0, 2000.0)),
                );
                set(
                    "rds_on_vgs",
                    rng.pick(&["2.5 V", "4.5 V", "10 V"]).to_string(),
                );
                set("vgs_th_max", format!("{:.1} V", 1.0 + rng.unit() * 3.0));
                set("vgs_max", "20 V".to_string());
                set("pd", format!("{:.0} mW", rng.log_between(300.0, 100_000.0)));
                set("tj_max", "150 C".to_string());
            }
            "diode" | "schottky" | "zener" => {
                set(
                    "package",
                    rng.pick(&["DO-41", "SOD-123", "DO-35", "SMA"]).to_string(),
                );
                set("pinout", "AK".to_string());
                set("vrrm", format!("{v} V"));
                set("if_avg", format!("{:.2} A", rng.log_between(0.1, 5.0)));
                set("ifsm", format!("{:.0} A", rng.log_between(2.0, 200.0)));
                set(
                    "vf",
                    format!(
                        "{:.2} V",
                        if kind == "schottky" {
                            0.3 + rng.unit() * 0.3
                        } else {
                            0.7 + rng.unit() * 0.4
                        }
                    ),
                );
                set("vf_at_if", "1 A".to_string());
                set("trr", format!("{:.0} ns", rng.log_between(4.0, 3000.0)));
                if kind == "zener" {
                    set("vz", format!("{:.1} V", rng.log_between(2.4, 75.0)));
                    set("pz", rng.pick(&["500 mW", "1.3 W"]).to_string());
                }
            }
            "relay" => {
                let coil = *rng.pick(&[5.0, 12.0, 24.0]);
                set("package", "THT".to_string());
                set("coil_v", format!("{coil} V"));
                set(
                    "coil_r",
                    format!("{:.0} ohm", coil * coil / rng.log_between(0.2, 0.9)),
                );
                set(
                    "must_operate_v",
                    format!("{:.2} V", coil * rng.pick(&[0.7, 0.75, 0.8])),
                );
                set("must_release_v", format!("{:.2} V", coil * 0.1));
                set("coil_v_max", format!("{:.1} V", coil * 1.3));
                set("contact_form", rng.pick(&["1A", "1C", "2C"]).to_string());
                set(
                    "contact_a_ac",
                    format!("{:.0} A", rng.log_between(1.0, 30.0)),
                );
                set("contact_v_ac", "250 V".to_string());
                set(
                    "contact_a_dc",
                    format!("{:.0} A", rng.log_between(1.0, 30.0)),
                );
                set("contact_v_dc", "30 V".to_string());
                set(
                    "dielectric_v",
                    rng.pick(&["1000 V", "1500 V", "4000 V", "5000 V"])
                        .to_string(),
                );
                set(
                    "impulse_v",
                    rng.pick(&["2500 V", "4000 V", "6000 V"]).to_string(),
                );
            }
            _ => {
                set("package", "5 mm".to_string());
                set("r_10lux", format!("{:.1}k", rng.log_between(2.0, 100.0)));
                set("r_10lux_tol", format!("{:.0} %", 20.0 + rng.unit() * 30.0));
                set("gamma", format!("{:.2}", 0.5 + rng.unit() * 0.4));
                set("r_dark", format!("{:.1} Mohm", rng.log_between(0.5, 20.0)));
                set("v_max", "150 V".to_string());
                set("p_max", "100 mW".to_string());
            }
        }
        // One row in about 400 is bad, as real exports are: a rating in the wrong unit, a
        // negative value, or a ragged row.
        let bad = rng.next_u64() % 400;
        let line = match bad {
            0 => {
                let vi = index(if kind == "npn" || kind == "pnp" {
                    "vceo"
                } else {
                    "price"
                });
                cells[vi] = "40 A".to_string();
                cells.join(",")
            }
            1 => {
                cells[index("stock")] = "-5".to_string();
                cells.join(",")
            }
            2 => cells[..cells.len() / 2].join(","),
            _ => cells.join(","),
        };
        writeln!(out, "{line}")?;
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::library::Library;

    #[test]
    fn generated_libraries_load_with_a_few_bad_rows() {
        let mut text = Vec::new();
        write_library(&mut text, 4000, 7).unwrap();
        let mut again = Vec::new();
        write_library(&mut again, 4000, 7).unwrap();
        assert_eq!(text, again, "the same seed gives the same file");
        let mut library = Library::new();
        library.add_bytes("gen.csv", &text).unwrap();
        assert_eq!(library.rows, 4000);
        assert!(
            library.rows_rejected > 0 && library.rows_rejected < 40,
            "{}",
            library.rows_rejected
        );
        assert_eq!(library.kind_counts().len(), 9, "every kind");
    }
}
