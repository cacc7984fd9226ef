//! Which kinds may stand in for which, and the ratings compared for each pairing: held as
//! checks when the original is the bar, and always used for the distance that orders
//! substitutes closest first.

use crate::fit::checks::{HFE_CURRENT_FRACTION, ZENER_TOLERANCE, at_least, at_most, within};
use crate::fit::{Check, CheckVerdict};
use crate::library::{Kind, Part};
use crate::units::{Dim, format_eng};
use std::borrow::Cow;

/// Coil resistance of a substitute relay may differ from the original's by this much: the
/// driver and its base or gate resistor were sized for the original's coil current (issue 6:
/// ±10 %; common practice).
pub const COIL_R_TOLERANCE: f64 = 0.10;

/// A photocell's R10 and γ may differ from the original's by this much: the divider was
/// sized for the original's curve, and the switching light level follows both (common
/// practice; a cell's own R10 spread is usually wider, so this asks for the same nominal cell).
pub const PHOTOCELL_TOLERANCE: f64 = 0.10;

/// The original's trr is compared only below this: a standard-recovery rectifier (about
/// 2 µs) works at mains or coil-clamp speed where trr does not matter, a fast one was chosen
/// for it (common practice: "fast recovery" parts are specified well under 1 µs).
pub const FAST_TRR: f64 = 1e-6;

/// Without a stage, an N-MOSFET standing in for an NPN must have RDS(on) specified at a gate
/// voltage no higher than this, the usual meaning of "logic-level" (common practice: 4.5 V,
/// reached by a 5 V logic output).
pub const LOGIC_LEVEL_VGS: f64 = 4.5;

/// How a candidate's kind relates to the original's.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Pairing {
    /// The same kind (NPN for NPN, relay for relay).
    Same,
    /// A logic-level N-MOSFET in place of an NPN low-side switch: always rework.
    NmosForNpn,
    /// A Schottky in place of a rectifier: only where its VRRM covers, with a leakage note.
    SchottkyForRectifier,
}

impl Pairing {
    /// The pairing of an original's kind and a candidate's, or `None` when the candidate's
    /// kind cannot stand in at all (PNP for NPN, zener for rectifier ...).
    #[must_use]
    pub fn of(original: Kind, candidate: Kind) -> Option<Pairing> {
        match (original, candidate) {
            (a, b) if a == b => Some(Pairing::Same),
            (Kind::Npn, Kind::Nmos) => Some(Pairing::NmosForNpn),
            (Kind::Diode, Kind::Schottky) => Some(Pairing::SchottkyForRectifier),
            _ => None,
        }
    }

    /// The original's pin names read in the candidate's terms.
    #[must_use]
    pub fn pin_map(self) -> &'static [(&'static str, &'static str)] {
        match self {
            // The base drives as the gate does, the collector carries the load as the drain.
            Pairing::NmosForNpn => &[("B", "G"), ("C", "D"), ("E", "S")],
            Pairing::Same | Pairing::SchottkyForRectifier => &[],
        }
    }
}

/// Which side of the original's value a candidate's rating must fall on.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Test {
    /// At least the original's.
    AtLeast,
    /// At most the original's.
    AtMost,
    /// Within this fraction of the original's.
    Within(f64),
}

/// One rating compared between original and candidate.
#[derive(Clone, Copy)]
pub struct Rule {
    /// The check's need id (`original.vceo`): the original's rating is the need.
    pub need: &'static str,
    /// The candidate's rating name (`vds` when a MOSFET stands in for an NPN's `vceo`).
    pub name: &'static str,
    /// The dimension of both.
    pub dim: Dim,
    /// How they must compare.
    pub test: Test,
    /// The original's value.
    pub original: fn(&Part) -> Option<f64>,
    /// The candidate's value.
    pub candidate: fn(&Part) -> Option<f64>,
    /// Whether the rule applies, given the original's value (trr only for fast parts).
    pub applies: fn(f64) -> bool,
}

fn always(_: f64) -> bool {
    true
}

fn fast(trr: f64) -> bool {
    trr < FAST_TRR
}

macro_rules! rule {
    ($need:literal, $name:literal, $dim:expr, $test:expr, $view:ident . $field:ident) => {
        rule!(
            $need,
            $name,
            $dim,
            $test,
            $view.$field,
            $view.$field,
            always
        )
    };
    ($need:literal, $name:literal, $dim:expr, $test:expr, $view:ident . $field:ident, $when:expr) => {
        rule!($need, $name, $dim, $test, $view.$field, $view.$field, $when)
    };
    ($need:literal, $name:literal, $dim:expr, $test:expr,
     $oview:ident . $ofield:ident, $cview:ident . $cfield:ident, $when:expr) => {
        Rule {
            need: $need,
            name: $name,
            dim: $dim,
            test: $test,
            original: |p: &Part| p.$oview().and_then(|r| r.$ofield.get()),
            candidate: |p: &Part| p.$cview().and_then(|r| r.$cfield.get()),
            applies: $when,
        }
    };
}

/// Issue 6: VCEO, IC, hFE min and PD; and VCE(sat) no higher, so a Darlington (about 1-2 V
/// saturated) is not offered for a saturated switch. hFE and VCE(sat) are compared at a
/// comparable current, see [`test_current`].
const BJT: &[Rule] = &[
    rule!("original.vceo", "vceo", Dim::Volt, Test::AtLeast, bjt.vceo),
    rule!(
        "original.ic_max",
        "ic_max",
        Dim::Amp,
        Test::AtLeast,
        bjt.ic_max
    ),
    rule!(
        "original.hfe_min",
        "hfe_min",
        Dim::Number,
        Test::AtLeast,
        bjt.hfe_min
    ),
    rule!(
        "original.vce_sat",
        "vce_sat",
        Dim::Volt,
        Test::AtMost,
        bjt.vce_sat
    ),
    rule!("original.pd", "pd", Dim::Watt, Test::AtLeast, bjt.pd),
];

/// The MOSFET counterparts, and the gate: RDS(on) no higher, specified at a gate voltage no
/// higher (so the same drive enhances it), and a gate that stands the same drive.
const MOSFET: &[Rule] = &[
    rule!("original.vds", "vds", Dim::Volt, Test::AtLeast, mosfet.vds),
    rule!(
        "original.id_max",
        "id_max",
        Dim::Amp,
        Test::AtLeast,
        mosfet.id_max
    ),
    rule!(
        "original.rds_on",
        "rds_on",
        Dim::Ohm,
        Test::AtMost,
        mosfet.rds_on
    ),
    rule!(
        "original.rds_on_vgs",
        "rds_on_vgs",
        Dim::Volt,
        Test::AtMost,
        mosfet.rds_on_vgs
    ),
    rule!(
        "original.vgs_max",
        "vgs_max",
        Dim::Volt,
        Test::AtLeast,
        mosfet.vgs_max
    ),
    rule!("original.pd", "pd", Dim::Watt, Test::AtLeast, mosfet.pd),
];

/// An N-MOSFET for an NPN: VDS for VCEO, ID for IC, PD for PD; the gate is checked apart
/// (logic-level, [`LOGIC_LEVEL_VGS`]).
const NMOS_FOR_NPN: &[Rule] = &[
    rule!(
        "original.vceo",
        "vds",
        Dim::Volt,
        Test::AtLeast,
        bjt.vceo,
        mosfet.vds,
        always
    ),
    rule!(
        "original.ic_max",
        "id_max",
        Dim::Amp,
        Test::AtLeast,
        bjt.ic_max,
        mosfet.id_max,
        always
    ),
    rule!(
        "original.pd",
        "pd",
        Dim::Watt,
        Test::AtLeast,
        bjt.pd,
        mosfet.pd,
        always
    ),
];

/// Issue 6: VRRM, IF, IFSM, and trr where the original's is short.
const DIODE: &[Rule] = &[
    rule!(
        "original.vrrm",
        "vrrm",
        Dim::Volt,
        Test::AtLeast,
        diode.vrrm
    ),
    rule!(
        "original.if_avg",
        "if_avg",
        Dim::Amp,
        Test::AtLeast,
        diode.if_avg
    ),
    rule!("original.ifsm", "ifsm", Dim::Amp, Test::AtLeast, diode.ifsm),
    rule!(
        "original.trr",
        "trr",
        Dim::Second,
        Test::AtMost,
        diode.trr,
        fast
    ),
];

/// A zener is its voltage (the usual ±5 % VZ tolerance) and its power.
const ZENER: &[Rule] = &[
    rule!(
        "original.vz",
        "vz",
        Dim::Volt,
        Test::Within(ZENER_TOLERANCE),
        diode.vz
    ),
    rule!("original.pz", "pz", Dim::Watt, Test::AtLeast, diode.pz),
];

/// Issue 6: coil resistance within ±10 %, contact ratings, dielectric and impulse; and
/// must-operate no higher, so the same drive still pulls it in. The coil voltage and the
/// contact form are checked apart.
const RELAY: &[Rule] = &[
    rule!(
        "original.coil_r",
        "coil_r",
        Dim::Ohm,
        Test::Within(COIL_R_TOLERANCE),
        relay.coil_r
    ),
    rule!(
        "original.must_operate_v",
        "must_operate_v",
        Dim::Volt,
        Test::AtMost,
        relay.must_operate_v
    ),
    rule!(
        "original.contact_a_ac",
        "contact_a_ac",
        Dim::Amp,
        Test::AtLeast,
        relay.contact_a_ac
    ),
    rule!(
        "original.contact_v_ac",
        "contact_v_ac",
        Dim::Volt,
        Test::AtLeast,
        relay.contact_v_ac
    ),
    rule!(
        "original.contact_a_dc",
        "contact_a_dc",
        Dim::Amp,
        Test::AtLeast,
        relay.contact_a_dc
    ),
    rule!(
        "original.contact_v_dc",
        "contact_v_dc",
        Dim::Volt,
        Test::AtLeast,
        relay.contact_v_dc
    ),
    rule!(
        "original.inrush_a",
        "inrush_a",
        Dim::Amp,
        Test::AtLeast,
        relay.inrush_a
    ),
    rule!(
        "original.dielectric_v",
        "dielectric_v",
        Dim::Volt,
        Test::AtLeast,
        relay.dielectric_v
    ),
    rule!(
        "original.impulse_v",
        "impulse_v",
        Dim::Volt,
        Test::AtLeast,
        relay.impulse_v
    ),
];

/// A photocell: the same curve (R10, γ) and at least the original's voltage and power.
const PHOTOCELL: &[Rule] = &[
    rule!(
        "original.r_10lux",
        "r_10lux",
        Dim::Ohm,
        Test::Within(PHOTOCELL_TOLERANCE),
        photocell.r_10lux
    ),
    rule!(
        "original.gamma",
        "gamma",
        Dim::Number,
        Test::Within(PHOTOCELL_TOLERANCE),
        photocell.gamma
    ),
    rule!(
        "original.v_max",
        "v_max",
        Dim::Volt,
        Test::AtLeast,
        photocell.v_max
    ),
    rule!(
        "original.p_max",
        "p_max",
        Dim::Watt,
        Test::AtLeast,
        photocell.p_max
    ),
];

/// The ratings compared for an original of `kind` and a candidate paired with it.
#[must_use]
pub fn rules(kind: Kind, pairing: Pairing) -> &'static [Rule] {
    match (pairing, kind) {
        (Pairing::NmosForNpn, _) => NMOS_FOR_NPN,
        (_, Kind::Npn | Kind::Pnp) => BJT,
        (_, Kind::Nmos | Kind::Pmos) => MOSFET,
        (_, Kind::Diode | Kind::Schottky) => DIODE,
        (_, Kind::Zener) => ZENER,
        (_, Kind::Relay) => RELAY,
        (_, Kind::Photocell) => PHOTOCELL,
    }
}

/// The check of one rule, or `None` when it does not apply or the original does not give the
/// rating (nothing to hold the candidate to).
#[must_use]
pub fn check(rule: &Rule, original: &Part, candidate: &Part) -> Option<Check> {
    let bar = (rule.original)(original)?;
    if !(rule.applies)(bar) {
        return None;
    }
    let value = (rule.candidate)(candidate);
    let check = match rule.test {
        Test::AtLeast => at_least(rule.need, rule.name, value, Some(bar), rule.dim),
        Test::AtMost => at_most(rule.need, rule.name, value, Some(bar), rule.dim),
        Test::Within(tolerance) => {
            within(rule.need, rule.name, value, Some(bar), tolerance, rule.dim)
        }
    };
    Some(check)
}

/// The distance of a candidate from the original over the rules: the sum of
/// |log10(candidate / original)| over every rating both give (0 for the same ratings; 0.3 is
/// one rating twice or half the original's).
#[must_use]
pub fn distance(rules: &[Rule], original: &Part, candidate: &Part) -> f64 {
    rules
        .iter()
        .filter_map(|rule| {
            let a = (rule.original)(original)?;
            let b = (rule.candidate)(candidate)?;
            (a > 0.0 && b > 0.0).then(|| (b / a).log10().abs())
        })
        .filter(|d| d.is_finite())
        .sum()
}

/// hFE and VCE(sat) are only comparable at comparable collector currents: gain falls and
/// saturation voltage rises with current, so a figure quoted at under half the original's test
/// current flatters the candidate and does not show it matches the original (common practice,
/// the same fraction fit uses for hFE). A passing check becomes `unknown` then, with the
/// reason; one quoted at a higher current is conservative and stands.
pub fn test_current(check: &mut Check, original: &Part, candidate: &Part) {
    let (Some(a), Some(b)) = (original.bjt(), candidate.bjt()) else {
        return;
    };
    let (what, at_original, at_candidate) = match check.need {
        "original.hfe_min" => ("hFE", a.hfe_at_ic.get(), b.hfe_at_ic.get()),
        "original.vce_sat" => ("VCE(sat)", a.vce_sat_at_ic.get(), b.vce_sat_at_ic.get()),
        _ => return,
    };
    if check.rating.is_none() {
        return;
    }
    match (at_original, at_candidate) {
        // A figure already short at a lower current is shorter still at the original's.
        (Some(at_original), Some(at_candidate))
            if at_candidate < HFE_CURRENT_FRACTION * at_original
                && check.verdict == CheckVerdict::Pass =>
        {
            check.verdict = CheckVerdict::Unknown;
            check.headroom = None;
            check.note = Cow::Owned(format!(
                "{what} given at {}, under half the original's {}: not comparable; check the curve",
                format_eng(at_candidate, Dim::Amp),
                format_eng(at_original, Dim::Amp)
            ));
        }
        (Some(_), None) | (None, Some(_)) => {
            check.note = Cow::Owned(format!(
                "the current {what} is given at is missing on one side: compare the curves"
            ));
        }
        _ => {}
    }
}

/// A Schottky diode conducts by majority carriers and stores no minority charge, so it has no
/// reverse recovery to speak of and makers seldom give trr (device physics; common
/// practice). Its missing trr passes the check of a fast original, saying why.
pub fn schottky_recovery(check: &mut Check, candidate: &Part) {
    if check.need == "original.trr" && candidate.kind == Kind::Schottky && check.rating.is_none() {
        check.verdict = CheckVerdict::Pass;
        check.note = Cow::Borrowed(
            "a Schottky has no minority-carrier recovery: trr negligible (majority carriers)",
        );
    }
}
