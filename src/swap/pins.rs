//! Pin orders compared position by position: the trap of a substitute that has the right
//! ratings but puts its collector where the original had its emitter.
//!
//! A pin order is the pinout text as printed ("EBC", "CBE", "GDS"); pin 1 is the first
//! letter. Two orders of the same pins differ by a permutation, and a permutation splits into
//! cycles (plain geometry): a 2-cycle is two pins swapping places, a longer cycle moves every
//! pin in it one place along. Each cycle becomes one line of `pin_changes`.

/// How a candidate's pin order relates to the original's.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum PinDiff {
    /// The same pins in the same places.
    Same,
    /// One side or both do not give a pin order: nothing can be said without the datasheet.
    NotGiven,
    /// The same pins in other places: for every pin that moves, its position on the original
    /// and on the candidate (1-based), in the original's order.
    Moved(Vec<(usize, usize)>),
    /// The pins do not correspond (another number of pins, or other pin names).
    Unmatched,
}

/// The pins of a pinout text in printed order. Names are split at `-`, `,`, `/` or spaces
/// when the text has any ("E-B-C", "A1 A2 K"); otherwise every character is one pin ("EBC").
#[must_use]
pub fn pins(text: &str) -> Vec<&str> {
    let separators = ['-', ',', '/', ' ', '\t'];
    if text.contains(separators) {
        text.split(separators).filter(|s| !s.is_empty()).collect()
    } else {
        text.char_indices()
            .map(|(i, c)| &text[i..i + c.len_utf8()])
            .collect()
    }
}

/// The original's pin name read in the candidate's terms through `map` (`B` is `G` when an
/// N-MOSFET takes an NPN's place); names not in the map stay as they are.
fn mapped<'a>(pin: &'a str, map: &[(&'static str, &'static str)]) -> &'a str {
    map.iter()
        .find(|(from, _)| from.eq_ignore_ascii_case(pin))
        .map_or(pin, |(_, to)| to)
}

/// Compares two pin orders position by position, reading the original's pin names through
/// `map` first (empty for parts of the same kind).
#[must_use]
pub fn diff(original: &str, candidate: &str, map: &[(&'static str, &'static str)]) -> PinDiff {
    let from: Vec<&str> = pins(original).into_iter().map(|p| mapped(p, map)).collect();
    let to = pins(candidate);
    if from.is_empty() || to.is_empty() {
        return PinDiff::NotGiven;
    }
    if from.len() != to.len() {
        return PinDiff::Unmatched;
    }
    if from.iter().zip(&to).all(|(a, b)| a.eq_ignore_ascii_case(b)) {
        return PinDiff::Same;
    }
    // Place every original pin on a candidate position of the same name: its own position
    // when that holds the same name (a repeated pin, such as a collector on the tab, stays
    // put), else the first free one.
    let mut taken = vec![false; to.len()];
    let mut place = vec![usize::MAX; from.len()];
    for (i, pin) in from.iter().enumerate() {
        if to[i].eq_ignore_ascii_case(pin) {
            taken[i] = true;
            place[i] = i;
        }
    }
    for (i, pin) in from.iter().enumerate() {
        if place[i] != usize::MAX {
            continue;
        }
        let Some(j) = (0..to.len()).find(|&j| !taken[j] && to[j].eq_ignore_ascii_case(pin)) else {
            return PinDiff::Unmatched;
        };
        taken[j] = true;
        place[i] = j;
    }
    PinDiff::Moved(
        place
            .iter()
            .enumerate()
            .filter(|&(i, &j)| i != j)
            .map(|(i, &j)| (i + 1, j + 1))
            .collect(),
    )
}

/// A pin order written with dashes, as people read it aloud: `E-B-C`.
#[must_use]
pub fn dashed(text: &str) -> String {
    pins(text).join("-")
}

/// The lines of `pin_changes` for a diff: one per cycle of moved pins, each ending with both
/// orders ("pins 1 and 3 swap: E-B-C vs C-B-E"); one line when the pins do not correspond;
/// none when they are the same or not given (the caller notes that).
#[must_use]
pub fn describe(
    original: &str,
    candidate: &str,
    map: &[(&'static str, &'static str)],
    diff: &PinDiff,
) -> Vec<String> {
    let orders = format!("{} vs {}", dashed(original), dashed(candidate));
    let reading = if map.is_empty() {
        String::new()
    } else {
        format!(
            ", reading {}",
            map.iter()
                .map(|(a, b)| format!("{a} as {b}"))
                .collect::<Vec<_>>()
                .join(", ")
        )
    };
    match diff {
        PinDiff::Same | PinDiff::NotGiven => Vec::new(),
        PinDiff::Unmatched => vec![format!(
            "pins do not correspond: {orders}{reading}; check the datasheet"
        )],
        PinDiff::Moved(moves) => {
            let names = pins(original);
            cycles(moves)
                .into_iter()
                .map(|cycle| {
                    let what = match cycle.as_slice() {
                        [(a, b)] | [(a, b), _] => {
                            let (lo, hi) = if a < b { (a, b) } else { (b, a) };
                            if cycle.len() == 2 {
                                format!("pins {lo} and {hi} swap")
                            } else {
                                // A one-move cycle cannot happen (a pin leaving its place
                                // frees it for another); kept readable all the same.
                                format!("pin {a} moves to pin {b}")
                            }
                        }
                        _ => {
                            let steps: Vec<String> = cycle
                                .iter()
                                .map(|&(a, b)| {
                                    let name = names.get(a - 1).copied().unwrap_or("?");
                                    format!("{name} {a}→{b}")
                                })
                                .collect();
                            format!("pins move round: {}", steps.join(", "))
                        }
                    };
                    format!("{what}: {orders}{reading}")
                })
                .collect()
        }
    }
}

/// The moves grouped into cycles, each starting at its lowest pin.
fn cycles(moves: &[(usize, usize)]) -> Vec<Vec<(usize, usize)>> {
    let mut left: Vec<(usize, usize)> = moves.to_vec();
    left.sort_unstable();
    let mut out = Vec::new();
    while let Some(&first) = left.first() {
        let mut cycle = vec![first];
        left.remove(0);
        let mut at = first.1;
        while at != first.0 {
            let Some(k) = left.iter().position(|&(a, _)| a == at) else {
                break;
            };
            let step = left.remove(k);
            cycle.push(step);
            at = step.1;
        }
        out.push(cycle);
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A pin order is a permutation of pin names; position-by-position comparison is plain
    /// geometry: E-B-C against C-B-E exchanges pins 1 and 3 and leaves the base in the middle.
    #[test]
    fn a_reversed_transistor_swaps_pins_one_and_three() {
        let d = diff("EBC", "CBE", &[]);
        assert_eq!(d, PinDiff::Moved(vec![(1, 3), (3, 1)]));
        assert_eq!(
            describe("EBC", "CBE", &[], &d),
            vec!["pins 1 and 3 swap: E-B-C vs C-B-E".to_string()]
        );
    }

    #[test]
    fn same_missing_and_foreign_orders() {
        assert_eq!(diff("EBC", "ebc", &[]), PinDiff::Same);
        assert_eq!(diff("E-B-C", "EBC", &[]), PinDiff::Same);
        assert_eq!(diff("", "EBC", &[]), PinDiff::NotGiven);
        assert_eq!(diff("EBC", "", &[]), PinDiff::NotGiven);
        assert_eq!(diff("EBC", "EBCC", &[]), PinDiff::Unmatched);
        assert_eq!(diff("EBC", "GDS", &[]), PinDiff::Unmatched);
        assert!(describe("EBC", "GDS", &[], &PinDiff::Unmatched)[0].contains("datasheet"));
    }

    /// Three pins each moving one place along form one 3-cycle (geometry: a rotation), so it
    /// is one line naming every pin's move.
    #[test]
    fn a_rotation_is_one_cycle() {
        let d = diff("EBC", "BCE", &[]);
        // E goes 1→3, B 2→1, C 3→2.
        assert_eq!(d, PinDiff::Moved(vec![(1, 3), (2, 1), (3, 2)]));
        let lines = describe("EBC", "BCE", &[], &d);
        assert_eq!(
            lines,
            vec!["pins move round: E 1→3, C 3→2, B 2→1: E-B-C vs B-C-E".to_string()]
        );
    }

    #[test]
    fn an_npn_read_as_a_mosfet_maps_its_pins() {
        let map = [("B", "G"), ("C", "D"), ("E", "S")];
        // E-B-C read as S-G-D; a G-D-S part moves every pin.
        assert_eq!(diff("EBC", "SGD", &map), PinDiff::Same);
        let d = diff("BCE", "GDS", &map);
        assert_eq!(d, PinDiff::Same, "B-C-E reads as G-D-S");
        let d = diff("EBC", "GSD", &map);
        assert_eq!(d, PinDiff::Moved(vec![(1, 2), (2, 1)]));
        assert_eq!(
            describe("EBC", "GSD", &map, &d),
            vec!["pins 1 and 2 swap: E-B-C vs G-S-D, reading B as G, C as D, E as S".to_string()]
        );
    }

    #[test]
    fn a_repeated_pin_stays_put_and_two_swaps_are_two_lines() {
        // A tab that repeats the collector: only the outer pins move.
        assert_eq!(
            diff("BCEC", "ECBC", &[]),
            PinDiff::Moved(vec![(1, 3), (3, 1)])
        );
        let d = diff("ABCD", "BADC", &[]);
        assert_eq!(
            describe("ABCD", "BADC", &[], &d),
            vec![
                "pins 1 and 2 swap: A-B-C-D vs B-A-D-C".to_string(),
                "pins 3 and 4 swap: A-B-C-D vs B-A-D-C".to_string()
            ]
        );
    }

    #[test]
    fn names_split_at_separators() {
        assert_eq!(pins("NO COM NC"), vec!["NO", "COM", "NC"]);
        assert_eq!(pins("K-A"), vec!["K", "A"]);
        assert_eq!(pins("KA"), vec!["K", "A"]);
        assert!(pins("").is_empty());
    }
}
