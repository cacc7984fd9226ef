//! Coil-to-contact insulation of a relay: the rated impulse voltage of IEC 60664-1 table F.1
//! (reinforced one step higher), the clearance that goes with it (table F.2), and the
//! dielectric test voltage of IEC 60950-1 table 5B.
//!
//! These figures are an aid. They are corroborated values, several recalled from memory and
//! marked so; confirm them against the edition of the standard in force before relying on them.

use super::{Worked, sources};
use crate::stage::Insulation;
use crate::units::Volts;

/// Line-to-neutral voltages heading the rows of IEC 60664-1 table F.1, "up to and including".
pub const IMPULSE_ROWS: [f64; 6] = [50.0, 100.0, 150.0, 300.0, 600.0, 1000.0];

/// IEC 60664-1 table F.1: rated impulse voltage (V) by row and overvoltage category I..IV.
const IMPULSE_TABLE: [[f64; 4]; 6] = [
    [330.0, 500.0, 800.0, 1500.0],
    [500.0, 800.0, 1500.0, 2500.0],
    [800.0, 1500.0, 2500.0, 4000.0],
    [1500.0, 2500.0, 4000.0, 6000.0],
    [2500.0, 4000.0, 6000.0, 8000.0],
    [4000.0, 6000.0, 8000.0, 12000.0],
];

/// The preferred series of rated impulse voltages (IEC 60664-1), in V.
pub const IMPULSE_SERIES: [f64; 9] = [
    330.0, 500.0, 800.0, 1500.0, 2500.0, 4000.0, 6000.0, 8000.0, 12000.0,
];

/// Clearance in mm by rated impulse voltage, IEC 60664-1 table F.2, inhomogeneous field,
/// pollution degree 2, up to 2000 m: the rows corroborated in REFERENCES.md.
const CLEARANCE_MM: [(f64, f64); 5] = [
    (1500.0, 0.5),
    (2500.0, 1.5),
    (4000.0, 3.0),
    (6000.0, 5.5),
    (8000.0, 8.0),
];

/// The rated impulse voltage for a working voltage (line to neutral, V rms or dc) and an
/// overvoltage category 1..=4, basic insulation: IEC 60664-1 table F.1. `None` above 1000 V
/// or for a category outside 1..=4.
#[must_use]
pub fn rated_impulse(volts: f64, category: u8) -> Option<f64> {
    let column = usize::from(category.checked_sub(1)?);
    let row = IMPULSE_ROWS.iter().position(|&v| volts <= v)?;
    IMPULSE_TABLE.get(row)?.get(column).copied()
}

/// The next value of the preferred impulse series above `impulse`: reinforced insulation is
/// dimensioned one step higher (IEC 60664-1 clause 5.1.6, from memory). `None` at the top.
#[must_use]
pub fn one_step_higher(impulse: f64) -> Option<f64> {
    IMPULSE_SERIES.iter().copied().find(|&v| v > impulse)
}

/// The clearance for a rated impulse voltage (table F.2, inhomogeneous field, PD2, ≤ 2000 m),
/// for the rows REFERENCES.md corroborates; `None` for the others.
#[must_use]
pub fn clearance_mm(impulse: f64) -> Option<f64> {
    CLEARANCE_MM
        .iter()
        .find(|(v, _)| (*v - impulse).abs() < 0.5)
        .map(|&(_, mm)| mm)
}

/// The short name of an overvoltage category (II).
#[must_use]
pub fn category_name(category: u8) -> &'static str {
    match category {
        1 => "I",
        2 => "II",
        3 => "III",
        4 => "IV",
        _ => "?",
    }
}

/// The coil-to-contact impulse withstand a relay needs.
#[derive(Debug, Clone, PartialEq)]
pub enum ImpulseNeed {
    /// A value from the table, with its working.
    Value(Worked<Volts>),
    /// Functional insulation only: no impulse need.
    NotRequired,
    /// Outside the table (above 1000 V, or reinforced above 12 kV): consult the standard.
    OutOfTable,
}

/// The rated impulse voltage between coil and contacts for contacts at `volts` (V rms or dc),
/// overvoltage category `category` and the insulation asked for (IEC 60664-1 table F.1;
/// reinforced one step higher in the preferred series).
#[must_use]
pub fn impulse_need(volts: Volts, category: u8, insulation: Insulation) -> ImpulseNeed {
    if insulation == Insulation::Functional {
        return ImpulseNeed::NotRequired;
    }
    let Some(basic) = rated_impulse(volts.0, category) else {
        return ImpulseNeed::OutOfTable;
    };
    let row = IMPULSE_ROWS
        .iter()
        .copied()
        .find(|&v| volts.0 <= v)
        .unwrap_or(1000.0);
    let mut working = vec![format!(
        "table F.1: {volts} falls in the row up to {row:.0} V; overvoltage category {}: basic insulation {basic:.0} V",
        category_name(category)
    )];
    let value = match insulation {
        Insulation::Reinforced => {
            let Some(step) = one_step_higher(basic) else {
                return ImpulseNeed::OutOfTable;
            };
            working.push(format!(
                "reinforced: one step higher in 330, 500, 800, 1500, 2500, 4000, 6000, 8000, 12000 V: {step:.0} V"
            ));
            step
        }
        // Functional returned above; basic is the table value.
        Insulation::Basic | Insulation::Functional => basic,
    };
    if let Some(mm) = clearance_mm(value) {
        working.push(format!(
            "clearance for {value:.0} V: {mm} mm (table F.2, inhomogeneous field, pollution degree 2, up to 2000 m)"
        ));
    }
    // The 250 V row of the creepage table covers working voltages above 200 V up to 250 V.
    if volts.0 > 200.0 && volts.0 <= 250.0 {
        let basic_mm = 2.5;
        let mm = if insulation == Insulation::Reinforced {
            basic_mm * 2.0
        } else {
            basic_mm
        };
        working.push(format!(
            "creepage at 250 V rms, pollution degree 2, material group III: {mm} mm ({}; table F.4 of 2007 / F.5 of 2020)",
            if insulation == Insulation::Reinforced {
                "twice the basic 2.5 mm, from memory"
            } else {
                "basic"
            }
        ));
    }
    working.push("a relay's impulse_v (coil to contact, peak) must be at least this; confirm against the edition of IEC 60664-1 in force".to_string());
    ImpulseNeed::Value(Worked {
        value: Volts(value),
        working,
        source: sources::IEC_60664_IMPULSE,
    })
}

/// The coil-to-contact dielectric test voltage a relay needs.
#[derive(Debug, Clone, PartialEq)]
pub enum DielectricNeed {
    /// A value, V rms, with its working.
    Value(Worked<Volts>),
    /// Functional insulation only: no dielectric need.
    NotRequired,
    /// A working peak above 354 V: consult the standard. Holds the peak.
    OutOfTable(Volts),
}

/// The working peak of contacts at `volts`: × √2 for AC (V rms), as is for DC.
#[must_use]
pub fn working_peak(volts: Volts, ac: bool) -> Volts {
    if ac {
        volts * std::f64::consts::SQRT_2
    } else {
        volts
    }
}

/// The dielectric strength (V rms) between coil and contacts: working peak up to 184 V:
/// basic 1000 V, reinforced 2000 V; up to 354 V: basic 1500 V, reinforced 3000 V
/// (IEC 60950-1 ed. 2 table 5B, from memory).
#[must_use]
pub fn dielectric_need(volts: Volts, ac: bool, insulation: Insulation) -> DielectricNeed {
    if insulation == Insulation::Functional {
        return DielectricNeed::NotRequired;
    }
    let peak = working_peak(volts, ac);
    let reinforced = insulation == Insulation::Reinforced;
    let (limit, basic) = if peak.0 <= 184.0 {
        (184.0, 1000.0)
    } else if peak.0 <= 354.0 {
        (354.0, 1500.0)
    } else {
        return DielectricNeed::OutOfTable(peak);
    };
    let value = if reinforced { 2.0 * basic } else { basic };
    let peak_line = if ac {
        format!("working peak = {volts} × √2 = {peak}")
    } else {
        format!("working peak = {volts} (dc)")
    };
    DielectricNeed::Value(Worked {
        value: Volts(value),
        working: vec![
            peak_line,
            format!(
                "table 5B, working peak up to {limit:.0} V: basic {basic:.0} V rms, reinforced {:.0} V rms: {} {value:.0} V rms",
                2.0 * basic,
                insulation.name()
            ),
            "a relay's dielectric_v (coil to contact, V rms) must be at least this; IEC 60950-1 table 5B from memory: confirm against the standard in force".to_string(),
        ],
        source: sources::IEC_60950_DIELECTRIC,
    })
}

/// Whether contacts at `volts` are beyond extra-low voltage: more than 50 V ac or 120 V dc
/// (the ELV limits of IEC 61140, from memory), where the stage can hurt someone.
#[must_use]
pub fn is_hazardous(volts: Volts, ac: bool) -> bool {
    if ac { volts.0 > 50.0 } else { volts.0 > 120.0 }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn impulse(volts: f64, category: u8, insulation: Insulation) -> Option<f64> {
        match impulse_need(Volts(volts), category, insulation) {
            ImpulseNeed::Value(w) => Some(w.value.0),
            _ => None,
        }
    }

    /// IEC 60664-1 table F.1 (ed. 2007/2020; values corroborated, confirm against the edition
    /// in force), every cell of the table in REFERENCES.md.
    #[test]
    fn rated_impulse_iec_60664_1_table_f1() {
        let table = [
            (50.0, [330.0, 500.0, 800.0, 1500.0]),
            (100.0, [500.0, 800.0, 1500.0, 2500.0]),
            (150.0, [800.0, 1500.0, 2500.0, 4000.0]),
            (300.0, [1500.0, 2500.0, 4000.0, 6000.0]),
            (600.0, [2500.0, 4000.0, 6000.0, 8000.0]),
            (1000.0, [4000.0, 6000.0, 8000.0, 12000.0]),
        ];
        for (volts, row) in table {
            for (i, want) in row.iter().enumerate() {
                let category = i as u8 + 1;
                assert_eq!(
                    rated_impulse(volts, category),
                    Some(*want),
                    "{volts} V OVC {category}"
                );
            }
        }
        // "Up to and including": 230 V is in the 300 V row, 24 V in the 50 V row.
        assert_eq!(rated_impulse(230.0, 2), Some(2500.0));
        assert_eq!(rated_impulse(24.0, 1), Some(330.0));
        assert_eq!(rated_impulse(1001.0, 2), None);
        assert_eq!(rated_impulse(230.0, 0), None);
        assert_eq!(rated_impulse(230.0, 5), None);
    }

    /// IEC 60664-1 clause 5.1.6 (from memory): reinforced one step higher in the preferred
    /// series; 230 V mains, OVC II -> basic 2500 V, reinforced 4000 V (REFERENCES.md).
    #[test]
    fn reinforced_is_one_step_higher_iec_60664_1_from_memory() {
        assert_eq!(impulse(230.0, 2, Insulation::Basic), Some(2500.0));
        assert_eq!(impulse(230.0, 2, Insulation::Reinforced), Some(4000.0));
        assert_eq!(one_step_higher(330.0), Some(500.0));
        assert_eq!(one_step_higher(8000.0), Some(12000.0));
        assert_eq!(one_step_higher(12000.0), None);
        assert_eq!(impulse(230.0, 2, Insulation::Functional), None);
        assert!(matches!(
            impulse_need(Volts(1000.0), 4, Insulation::Reinforced),
            ImpulseNeed::OutOfTable
        ));
    }

    /// IEC 60664-1 table F.2 (inhomogeneous field, PD2, ≤ 2000 m), rows from REFERENCES.md;
    /// the 230 V reinforced case shows 3.0 mm and the 250 V creepage (table F.4/F.5).
    #[test]
    fn clearance_iec_60664_1_table_f2() {
        assert_eq!(clearance_mm(1500.0), Some(0.5));
        assert_eq!(clearance_mm(2500.0), Some(1.5));
        assert_eq!(clearance_mm(4000.0), Some(3.0));
        assert_eq!(clearance_mm(6000.0), Some(5.5));
        assert_eq!(clearance_mm(8000.0), Some(8.0));
        assert_eq!(clearance_mm(330.0), None);
        let ImpulseNeed::Value(w) = impulse_need(Volts(230.0), 2, Insulation::Reinforced) else {
            panic!("a value is expected for 230 V OVC II");
        };
        assert!(
            w.working.iter().any(|l| l.contains("3 mm")),
            "{:?}",
            w.working
        );
        assert!(
            w.working
                .iter()
                .any(|l| l.contains("creepage") && l.contains("5 mm"))
        );
        assert!(w.source.contains("confirm against the edition in force"));
    }

    /// IEC 60950-1 ed. 2 table 5B (from memory): working voltage up to 250 V rms (354 V peak):
    /// basic 1500 V rms, reinforced 3000 V rms; up to 184 V peak: 1000 / 2000 V rms.
    #[test]
    fn dielectric_iec_60950_1_table_5b_from_memory() {
        let value = |v: f64, ac: bool, ins: Insulation| match dielectric_need(Volts(v), ac, ins) {
            DielectricNeed::Value(w) => Some(w.value.0),
            _ => None,
        };
        assert_eq!(value(230.0, true, Insulation::Basic), Some(1500.0));
        assert_eq!(value(230.0, true, Insulation::Reinforced), Some(3000.0));
        assert_eq!(value(250.0, true, Insulation::Reinforced), Some(3000.0));
        assert_eq!(value(120.0, true, Insulation::Basic), Some(1000.0));
        assert_eq!(value(130.0, true, Insulation::Reinforced), Some(2000.0));
        assert_eq!(value(184.0, false, Insulation::Basic), Some(1000.0));
        assert_eq!(value(48.0, false, Insulation::Functional), None);
        assert!(matches!(
            dielectric_need(Volts(400.0), true, Insulation::Basic),
            DielectricNeed::OutOfTable(_)
        ));
    }

    /// The hazard thresholds of DESIGN.md section 7 (more than 50 V ac or 120 V dc).
    #[test]
    fn hazard_thresholds() {
        assert!(!is_hazardous(Volts(50.0), true));
        assert!(is_hazardous(Volts(50.1), true));
        assert!(!is_hazardous(Volts(120.0), false));
        assert!(is_hazardous(Volts(121.0), false));
        assert!(is_hazardous(Volts(230.0), true));
    }
}
