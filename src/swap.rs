//! Swap: the parts of the library that can take a given part's place, each classed
//! `drop-in`, `rework` or `unsuitable`, with the pin-order traps named.
//!
//! - Candidates are of a compatible kind ([`rules::Pairing`]): the same kind, or across kinds
//!   only a logic-level N-MOSFET for an NPN low-side switch (always rework) and a Schottky for
//!   a rectifier (with a leakage note). A relay is a candidate only with the original's coil
//!   voltage: a 12 V coil is never offered for a 5 V one.
//! - The bar is the original's ratings ([`Bar::Original`], [`rules`]), or a stage's needs
//!   ([`Bar::Stage`]), which frees substitutes the original over-specified.
//! - Pin orders are compared position by position ([`pins`]); a package or pin order that
//!   differs makes a passing candidate `rework`, and a pin order not given keeps it from being
//!   a drop-in.
//! - Within a class, closest first: the distance of the ratings from the original's on a log
//!   scale ([`rules::distance`]), then stock (most first), price (lowest first), part number.
//!
//! [`pick`] finds the original from what the user typed; [`report`] renders a swap as text,
//! CSV and the binding JSON.

pub mod pick;
pub mod pins;
pub mod report;
pub mod rules;

pub use pick::{find_original, search};

use crate::fit::checks::ids_part;
use crate::fit::{self, Check, CheckVerdict, Role, Verdict};
use crate::library::{Kind, Library, Part, Status};
use crate::needs::Needs;
use crate::stage::Stage;
use crate::units::{Dim, format_eng};
use pins::PinDiff;
use rules::{LOGIC_LEVEL_VGS, Pairing};
use std::borrow::Cow;
use std::cmp::Ordering;
use thiserror::Error;

/// Need id of the logic-level gate check when an N-MOSFET stands in for an NPN.
pub const LOGIC_LEVEL: &str = "swap.logic_level";
/// Need id of the contact-form check of a relay.
pub const CONTACT_FORM: &str = "original.contact_form";
/// Need id of the coil-voltage check of a relay whose coil voltage is not given.
pub const COIL_VOLTAGE: &str = "original.coil_v";

/// Two coil voltages closer than this fraction are the same rating (rounding in a file).
const SAME_COIL_V: f64 = 1e-6;

/// How a candidate can take the original's place.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Class {
    /// Same package and pin order, every check passes: it goes in the same holes.
    DropIn,
    /// Every check passes, but the package or pin order differs, or the kind does: it fits
    /// the circuit after work on the board (named in its pin changes and notes).
    Rework,
    /// A check fails or cannot be made.
    Unsuitable,
}

impl Class {
    /// Every class, in report order.
    pub const ALL: [Class; 3] = [Class::DropIn, Class::Rework, Class::Unsuitable];

    /// The word used in outputs: `drop-in`, `rework`, `unsuitable`.
    #[must_use]
    pub fn name(self) -> &'static str {
        match self {
            Class::DropIn => "drop-in",
            Class::Rework => "rework",
            Class::Unsuitable => "unsuitable",
        }
    }

    /// A glyph shown beside the word, so colour is never the only signal.
    #[must_use]
    pub fn glyph(self) -> &'static str {
        match self {
            Class::DropIn => "✓",
            Class::Rework => "~",
            Class::Unsuitable => "✗",
        }
    }
}

/// What the candidates are held against.
#[derive(Debug, Clone, Copy)]
pub enum Bar<'a> {
    /// Every rating that matters for the kind at least the original's.
    Original,
    /// The needs of a stage, for the role the original's kind fills in it.
    Stage(&'a Stage, &'a Needs),
}

/// Why a swap could not be made.
#[derive(Debug, Clone, PartialEq, Eq, Error)]
pub enum SwapError {
    /// No part matches what was typed.
    #[error("no part \"{text}\" in the library{}", close_list(close))]
    NotFound {
        /// What was typed.
        text: String,
        /// Part numbers spelled nearly alike, nearest first.
        close: Vec<String>,
    },
    /// Several parts match and none exactly.
    #[error("\"{text}\" matches {count} parts: {}{}; give the whole part number",
        matches.join(", "), more(*count, matches.len()))]
    Ambiguous {
        /// What was typed.
        text: String,
        /// How many parts match.
        count: usize,
        /// The best matches, best first (at most eight).
        matches: Vec<String>,
    },
    /// The stage has no role the original's kind fills.
    #[error(
        "the stage has no role a {kind} fills (its roles: {roles}); drop --stage to hold substitutes to the original's ratings"
    )]
    NoRole {
        /// The original's kind.
        kind: Kind,
        /// The stage's roles, comma-separated.
        roles: String,
    },
}

fn close_list(close: &[String]) -> String {
    if close.is_empty() {
        "; give the part number or a part of it".to_string()
    } else {
        format!("; close: {}", close.join(", "))
    }
}

fn more(count: usize, listed: usize) -> String {
    if count > listed {
        format!(" and {} more", count - listed)
    } else {
        String::new()
    }
}

/// One part that might take the original's place.
#[derive(Debug, Clone, PartialEq)]
pub struct Substitute {
    /// Index of the part in [`Library::parts`].
    pub part: usize,
    /// How it can take the original's place.
    pub class: Class,
    /// Distance of its ratings from the original's: Σ |log10(candidate / original)| over the
    /// ratings compared (0 is the same ratings; lower is closer).
    pub score: f64,
    /// How its pins relate to the original's.
    pub pins: PinDiff,
    /// The pin changes in words ("pins 1 and 3 swap: E-B-C vs C-B-E").
    pub pin_changes: Vec<String>,
    /// Every check, in the shape fit gives.
    pub checks: Vec<Check>,
    /// What else to know: package, missing pin order, rework instructions, leakage.
    pub notes: Vec<String>,
}

impl Substitute {
    /// The checks that fail or cannot be made.
    pub fn failing(&self) -> impl Iterator<Item = &Check> {
        self.checks
            .iter()
            .filter(|c| c.verdict != CheckVerdict::Pass)
    }
}

/// The substitutes for one part.
#[derive(Debug, Clone, PartialEq)]
pub struct Swap {
    /// Index of the original in [`Library::parts`].
    pub original: usize,
    /// The stage's title, when its needs are the bar.
    pub stage: Option<String>,
    /// The role whose needs are the bar, with a stage.
    pub role: Option<Role>,
    /// The candidates: drop-in, then rework, then unsuitable; closest first in each.
    pub candidates: Vec<Substitute>,
    /// Notes on the swap as a whole: ratings of the original not given, parts left out.
    pub notes: Vec<String>,
}

impl Swap {
    /// How many candidates are in `class`.
    #[must_use]
    pub fn count(&self, class: Class) -> usize {
        self.candidates.iter().filter(|c| c.class == class).count()
    }

    /// Whether any candidate can take the original's place (drop-in or rework).
    #[must_use]
    pub fn has_substitute(&self) -> bool {
        self.candidates.iter().any(|c| c.class != Class::Unsuitable)
    }
}

/// The role of `stage` a part of `kind` fills.
///
/// # Errors
/// [`SwapError::NoRole`] when no role of the stage takes that kind.
pub fn role_for(stage: &Stage, kind: Kind) -> Result<Role, SwapError> {
    let roles = fit::roles(stage);
    roles
        .iter()
        .copied()
        .find(|&role| fit::kind_fits_role(stage, role, kind))
        .ok_or_else(|| SwapError::NoRole {
            kind,
            roles: roles
                .iter()
                .map(|r| r.name())
                .collect::<Vec<_>>()
                .join(", "),
        })
}

/// Every part of the library that could take the place of part `original`, classed and
/// ordered.
///
/// # Errors
/// [`SwapError::NotFound`] when `original` is not an index into the library;
/// [`SwapError::NoRole`] when a stage is the bar and none of its roles takes the original's
/// kind.
pub fn substitutes(library: &Library, original: usize, bar: Bar<'_>) -> Result<Swap, SwapError> {
    let orig = library
        .parts
        .get(original)
        .ok_or_else(|| SwapError::NotFound {
            text: format!("#{original}"),
            close: Vec::new(),
        })?;
    let mut swap = Swap {
        original,
        stage: None,
        role: None,
        candidates: Vec::new(),
        notes: Vec::new(),
    };
    let against = if let Bar::Stage(stage, needs) = bar {
        let role = role_for(stage, orig.kind)?;
        swap.stage = Some(needs.stage.clone());
        swap.role = Some(role);
        let own = fit::checks::for_part(stage, needs, role, orig);
        swap.notes.push(format!(
            "the bar is the stage's `{}` needs; the original itself: {}",
            role.name(),
            Verdict::of(&own).name()
        ));
        Against::Stage(stage, needs, role)
    } else {
        note_ratings_not_compared(orig, &mut swap.notes);
        Against::Original
    };
    let mut other_coil = 0usize;
    for (index, part) in library.parts.iter().enumerate() {
        if index == original {
            continue;
        }
        let Some(pairing) = Pairing::of(orig.kind, part.kind) else {
            continue;
        };
        if other_coil_voltage(orig, part) {
            other_coil += 1;
            continue;
        }
        swap.candidates
            .push(substitute(library, orig, index, part, pairing, against));
    }
    if other_coil > 0 {
        swap.notes.push(format!(
            "{other_coil} relay{} with another coil voltage left out: a relay is only offered with the original's coil voltage",
            if other_coil == 1 { "" } else { "s" }
        ));
    }
    swap.candidates.sort_by(|a, b| order(library, a, b));
    Ok(swap)
}

/// Ratings the original does not give cannot be a bar: say so once, not on every candidate.
fn note_ratings_not_compared(orig: &Part, notes: &mut Vec<String>) {
    let missing: Vec<&str> = rules::rules(orig.kind, Pairing::Same)
        .iter()
        .filter(|r| (r.original)(orig).is_none())
        .map(|r| r.name)
        .collect();
    if !missing.is_empty() {
        notes.push(format!(
            "the original does not give {}: not compared",
            missing.join(", ")
        ));
    }
    if let Some(trr) = orig.diode().and_then(|d| d.trr.get())
        && trr >= rules::FAST_TRR
    {
        notes.push(format!(
            "the original's trr is {} (standard recovery): trr not compared",
            format_eng(trr, Dim::Second)
        ));
    }
}

/// Whether both relays give a coil voltage and they differ.
fn other_coil_voltage(orig: &Part, part: &Part) -> bool {
    let coil = |p: &Part| p.relay().and_then(|r| r.coil_v.get());
    match (coil(orig), coil(part)) {
        (Some(a), Some(b)) => (a - b).abs() > SAME_COIL_V * a.abs().max(b.abs()),
        _ => false,
    }
}

/// The bar with the stage's role found once.
#[derive(Clone, Copy)]
enum Against<'a> {
    Original,
    Stage(&'a Stage, &'a Needs, Role),
}

fn substitute(
    library: &Library,
    orig: &Part,
    index: usize,
    part: &Part,
    pairing: Pairing,
    bar: Against<'_>,
) -> Substitute {
    let rules = rules::rules(orig.kind, pairing);
    let mut checks = match bar {
        Against::Original => {
            let mut checks: Vec<Check> = rules
                .iter()
                .filter_map(|rule| rules::check(rule, orig, part))
                .collect();
            for check in &mut checks {
                rules::test_current(check, orig, part);
                rules::schottky_recovery(check, part);
            }
            checks
        }
        Against::Stage(stage, needs, role) => fit::checks::for_part(stage, needs, role, part),
    };
    let mut extra = Vec::new();
    let mut notes = Vec::new();
    match pairing {
        Pairing::NmosForNpn => {
            // A stage that allows a MOSFET switch has its own gate-drive need, checked by fit.
            let gate_need = matches!(bar, Against::Stage(_, needs, _)
                if needs.get(crate::needs::ids::SWITCH_GATE_DRIVE).is_some());
            if !gate_need {
                extra.push(logic_level(part, bar));
            }
            notes.push(
                "an N-MOSFET in place of an NPN, low-side only: drive the gate through a series resistor (about 100 Ω) where the base resistor was, and add a pull-down (about 100 kΩ) from gate to source so the gate cannot float"
                    .to_string(),
            );
        }
        Pairing::SchottkyForRectifier => notes.push(
            "a Schottky in place of a rectifier: its reverse leakage is far higher than a PN diode's and rises steeply with temperature; check it at the working temperature"
                .to_string(),
        ),
        Pairing::Same => {}
    }
    if orig.kind == Kind::Relay {
        extra.extend(relay_checks(orig, part));
    }
    if matches!(bar, Against::Original) {
        extra.extend(part_rules(part));
    }
    // The pairing's own checks go before the part rules, as fit orders them.
    let at = checks
        .iter()
        .position(|c| c.need.starts_with("part."))
        .unwrap_or(checks.len());
    checks.splice(at..at, extra);

    let (pins, pin_changes, pin_notes, same_place) = compare_pins(library, orig, part, pairing);
    notes.extend(pin_notes);
    let passes = checks.iter().all(|c| c.verdict == CheckVerdict::Pass);
    let class = if !passes {
        Class::Unsuitable
    } else if same_place && pairing != Pairing::NmosForNpn {
        Class::DropIn
    } else {
        Class::Rework
    };
    Substitute {
        part: index,
        class,
        score: rules::distance(rules, orig, part),
        pins,
        pin_changes,
        checks,
        notes,
    }
}

/// Package and pin order: the diff, its lines, notes, and whether the part goes in the same
/// holes the same way round.
fn compare_pins(
    library: &Library,
    orig: &Part,
    part: &Part,
    pairing: Pairing,
) -> (PinDiff, Vec<String>, Vec<String>, bool) {
    let mut notes = Vec::new();
    let (pa, pb) = (library.text(orig.package), library.text(part.package));
    let same_package = match (pa.trim(), pb.trim()) {
        ("", _) | (_, "") => {
            notes.push("package not given: check the footprint".to_string());
            false
        }
        (a, b) if squash(a) == squash(b) => true,
        (a, b) => {
            notes.push(format!("package differs: {a} vs {b}"));
            false
        }
    };
    let (oa, ob) = (library.text(orig.pinout), library.text(part.pinout));
    let map = pairing.pin_map();
    let diff = pins::diff(oa, ob, map);
    let changes = pins::describe(oa, ob, map, &diff);
    let same_pins = match &diff {
        PinDiff::Same => true,
        // A photocell is two leads either way round: its pin order does not apply.
        PinDiff::NotGiven if orig.kind == Kind::Photocell && part.kind == Kind::Photocell => true,
        PinDiff::NotGiven => {
            notes.push("pin order not given: check the datasheet".to_string());
            false
        }
        PinDiff::Moved(_) | PinDiff::Unmatched => false,
    };
    if !map.is_empty() && diff == PinDiff::Same {
        notes.push(format!(
            "pins keep their places: {} vs {}, reading {}",
            pins::dashed(oa),
            pins::dashed(ob),
            map.iter()
                .map(|(a, b)| format!("{a} as {b}"))
                .collect::<Vec<_>>()
                .join(", ")
        ));
    }
    (diff, changes, notes, same_package && same_pins)
}

/// A package name compared without regard to case, spaces, `-` or `_` (`TO-92` is `to92`).
fn squash(text: &str) -> String {
    text.chars()
        .filter(|c| !matches!(c, ' ' | '-' | '_'))
        .map(|c| c.to_ascii_uppercase())
        .collect()
}

/// An N-MOSFET in an NPN's place is driven by what drove the base: RDS(on) must be
/// specified at a gate voltage that drive reaches (the stage's logic high, or the usual
/// logic-level 4.5 V without a stage).
fn logic_level(part: &Part, bar: Against<'_>) -> Check {
    let (limit, whose) = match bar {
        Against::Stage(stage, _, _) => (stage.drive.high.value(), "the stage's drive high"),
        Against::Original => (LOGIC_LEVEL_VGS, "logic-level, 4.5 V"),
    };
    let vgs = part.mosfet().and_then(|m| m.rds_on_vgs.get());
    let mut check = fit::checks::at_most(LOGIC_LEVEL, "rds_on_vgs", vgs, Some(limit), Dim::Volt);
    let why =
        format!("RDS(on) must be specified at a gate voltage the base drive reaches ({whose})");
    check.note = if check.note.is_empty() {
        Cow::Owned(why)
    } else {
        Cow::Owned(format!("{}; {why}", check.note))
    };
    check
}

/// The relay checks no rating table holds: the contact form must cover the original's, and
/// a coil voltage not given on one side cannot be matched.
fn relay_checks(orig: &Part, part: &Part) -> Vec<Check> {
    let (Some(a), Some(b)) = (orig.relay(), part.relay()) else {
        return Vec::new();
    };
    let rule = |need, name, verdict, note: String| Check::rule(need, name, verdict, note);
    let mut checks = Vec::new();
    if a.coil_v.get().is_none() || b.coil_v.get().is_none() {
        checks.push(rule(
            COIL_VOLTAGE,
            "coil_v",
            CheckVerdict::Unknown,
            "coil voltage not given on one side: the coils cannot be matched".to_string(),
        ));
    }
    let form = match (a.contact_form, b.contact_form) {
        (Some(need), Some(have)) if have.covers(need) => rule(
            CONTACT_FORM,
            "contact_form",
            CheckVerdict::Pass,
            format!("{have} covers {need}"),
        ),
        (Some(need), Some(have)) => rule(
            CONTACT_FORM,
            "contact_form",
            CheckVerdict::Short,
            format!("{have} does not cover the original's {need}"),
        ),
        (Some(need), None) => rule(
            CONTACT_FORM,
            "contact_form",
            CheckVerdict::Unknown,
            format!("contact form not given; the original is {need}"),
        ),
        (None, _) => rule(
            CONTACT_FORM,
            "contact_form",
            CheckVerdict::Unknown,
            "the original's contact form is not given: check the wiring".to_string(),
        ),
    };
    checks.push(form);
    checks
}

/// Without a stage, a substitute must be obtainable: an obsolete part or none in stock is no
/// answer for a part that failed or went scarce. Stock not given is not a check (a library
/// without a stock column still gets answers); with a stage, fit's part rules apply instead.
fn part_rules(part: &Part) -> Vec<Check> {
    let rule = |need, name, verdict, note: &'static str| Check::rule(need, name, verdict, note);
    let mut checks = vec![match part.status {
        Status::Obsolete => rule(
            ids_part::STATUS,
            "status",
            CheckVerdict::Short,
            "obsolete: no answer for a part that failed or went scarce",
        ),
        Status::Nrnd => rule(
            ids_part::STATUS,
            "status",
            CheckVerdict::Pass,
            "not recommended for new designs",
        ),
        Status::Active => rule(ids_part::STATUS, "status", CheckVerdict::Pass, ""),
        Status::Unknown => rule(
            ids_part::STATUS,
            "status",
            CheckVerdict::Pass,
            "status not given",
        ),
    }];
    if let Some(stock) = part.stock {
        let mut check = fit::checks::at_least(
            ids_part::STOCK,
            "stock",
            Some(stock as f64),
            Some(1.0),
            Dim::Number,
        );
        if stock == 0 {
            check.note = Cow::Borrowed("none in stock");
        }
        checks.push(check);
    }
    checks
}

/// Class, then distance, then stock (most first, not given last), then price (lowest first,
/// not given last), then part number: a stable order.
fn order(library: &Library, a: &Substitute, b: &Substitute) -> Ordering {
    let (pa, pb) = (&library.parts[a.part], &library.parts[b.part]);
    a.class
        .cmp(&b.class)
        .then_with(|| a.score.total_cmp(&b.score))
        .then_with(|| match (pa.stock, pb.stock) {
            (Some(x), Some(y)) => y.cmp(&x),
            (Some(_), None) => Ordering::Less,
            (None, Some(_)) => Ordering::Greater,
            (None, None) => Ordering::Equal,
        })
        .then_with(|| match (pa.price.get(), pb.price.get()) {
            (Some(x), Some(y)) => x.total_cmp(&y),
            (Some(_), None) => Ordering::Less,
            (None, Some(_)) => Ordering::Greater,
            (None, None) => Ordering::Equal,
        })
        .then_with(|| pa.number.cmp(&pb.number))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn library(csv: &str) -> Library {
        let mut library = Library::new();
        library.add_bytes("swap.csv", csv.as_bytes()).unwrap();
        assert!(library.rejected.is_empty(), "{:?}", library.rejected);
        library
    }

    fn class_of(library: &Library, swap: &Swap, number: &str) -> Class {
        swap.candidates
            .iter()
            .find(|c| &*library.parts[c.part].number == number)
            .map(|c| c.class)
            .unwrap_or_else(|| panic!("{number} not a candidate"))
    }

    const NPNS: &str = "part,kind,package,pinout,stock,price,vceo,ic_max,hfe_min,hfe_at_ic,pd\n\
        QA-1,npn,TO-92,EBC,10,0.1,40 V,600 mA,100,150 mA,625 mW\n\
        QA-2,npn,TO-92,EBC,10,0.1,60 V,600 mA,100,150 mA,625 mW\n\
        QA-3,npn,TO-92,EBC,10,0.1,40 V,600 mA,300,1 mA,625 mW\n\
        QA-4,pnp,TO-92,EBC,10,0.1,40 V,600 mA,100,150 mA,625 mW\n\
        QA-5,npn,TO-92,EBC,0,0.1,40 V,600 mA,100,150 mA,625 mW\n";

    /// A log scale is symmetric: twice and half the original's rating are equally far
    /// (|log10 2| = 0.301 either way).
    #[test]
    fn distance_is_symmetric_on_a_log_scale() {
        let library =
            library("part,kind,vceo,ic_max\nA,npn,40 V,1 A\nB,npn,80 V,1 A\nC,npn,20 V,1 A\n");
        let rules = rules::rules(Kind::Npn, Pairing::Same);
        let [a, b, c] = [&library.parts[0], &library.parts[1], &library.parts[2]];
        assert_eq!(rules::distance(rules, a, a), 0.0);
        let up = rules::distance(rules, a, b);
        let down = rules::distance(rules, a, c);
        assert!((up - 2f64.log10()).abs() < 1e-12, "{up}");
        assert!((up - down).abs() < 1e-12);
    }

    #[test]
    fn polarity_gain_current_and_stock_decide() {
        let library = library(NPNS);
        let swap = substitutes(&library, 0, Bar::Original).unwrap();
        // The PNP is not a candidate at all.
        assert_eq!(swap.candidates.len(), 3);
        assert_eq!(class_of(&library, &swap, "QA-2"), Class::DropIn);
        // hFE 300 at 1 mA says nothing of the gain at 150 mA (common practice).
        let gain = swap
            .candidates
            .iter()
            .find(|c| &*library.parts[c.part].number == "QA-3")
            .unwrap();
        assert_eq!(gain.class, Class::Unsuitable);
        assert!(gain.checks.iter().any(|c| c.need == "original.hfe_min"
            && c.verdict == CheckVerdict::Unknown
            && c.note.contains("not comparable")));
        assert_eq!(class_of(&library, &swap, "QA-5"), Class::Unsuitable);
        assert!(swap.has_substitute());
    }

    #[test]
    fn a_bad_index_is_an_error_not_a_panic() {
        let library = library(NPNS);
        assert!(matches!(
            substitutes(&library, 99, Bar::Original),
            Err(SwapError::NotFound { .. })
        ));
    }
}
