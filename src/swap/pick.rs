//! Picking the original: the exact part number, or enough of it to name one part, with the
//! near spellings offered when nothing matches.

use super::SwapError;
use crate::library::Library;
use fuzzy_matcher::FuzzyMatcher;
use fuzzy_matcher::skim::SkimMatcherV2;

/// How many matches an error lists.
const LISTED: usize = 8;

/// Two part numbers share at least this share of their letter pairs (Dice coefficient over
/// bigrams) to be offered as a near spelling: high enough that unrelated numbers stay out,
/// low enough to catch two transposed digits.
const NEAR_SPELLING: f64 = 0.5;

/// The part whose number is `text` (ignoring case and surrounding spaces); else the one part
/// whose number holds `text`; else the one part the fuzzy matcher (skim) matches.
///
/// # Errors
/// [`SwapError::Ambiguous`] when several parts match and none exactly, listing them best
/// first; [`SwapError::NotFound`] when none matches, listing near spellings.
pub fn find_original(library: &Library, text: &str) -> Result<usize, SwapError> {
    let key = text.trim();
    let not_found = || SwapError::NotFound {
        text: key.to_string(),
        close: near_spellings(library, key),
    };
    if key.is_empty() {
        return Err(not_found());
    }
    if let Some(exact) = library
        .parts
        .iter()
        .position(|p| p.number.eq_ignore_ascii_case(key))
    {
        return Ok(exact);
    }
    let ranked = search(library, key, usize::MAX);
    let holding: Vec<usize> = ranked
        .iter()
        .copied()
        .filter(|&i| contains_ignore_case(&library.parts[i].number, key))
        .collect();
    let ambiguous = |found: &[usize]| SwapError::Ambiguous {
        text: key.to_string(),
        count: found.len(),
        matches: found
            .iter()
            .take(LISTED)
            .map(|&i| library.parts[i].number.to_string())
            .collect(),
    };
    match (holding.as_slice(), ranked.as_slice()) {
        ([one], _) | ([], [one]) => Ok(*one),
        ([], []) => Err(not_found()),
        ([], several) => Err(ambiguous(several)),
        (several, _) => Err(ambiguous(several)),
    }
}

/// The parts the fuzzy matcher (skim, case ignored) matches with `text` against their part
/// numbers, best first (ties by part number), at most `limit`: the pick list of a search box.
#[must_use]
pub fn search(library: &Library, text: &str, limit: usize) -> Vec<usize> {
    let matcher = SkimMatcherV2::default().ignore_case();
    let key = text.trim();
    let mut scored: Vec<(i64, usize)> = library
        .parts
        .iter()
        .enumerate()
        .filter_map(|(i, p)| matcher.fuzzy_match(&p.number, key).map(|s| (s, i)))
        .collect();
    scored.sort_by(|a, b| {
        b.0.cmp(&a.0)
            .then_with(|| library.parts[a.1].number.cmp(&library.parts[b.1].number))
    });
    scored.into_iter().take(limit).map(|(_, i)| i).collect()
}

fn contains_ignore_case(haystack: &str, needle: &str) -> bool {
    let (h, n) = (haystack.as_bytes(), needle.as_bytes());
    n.len() <= h.len() && h.windows(n.len()).any(|w| w.eq_ignore_ascii_case(n))
}

/// Letter pairs of a text, upper-cased, for the near-spelling measure.
fn bigrams(text: &str) -> Vec<[char; 2]> {
    let chars: Vec<char> = text.chars().map(|c| c.to_ascii_uppercase()).collect();
    chars.windows(2).map(|w| [w[0], w[1]]).collect()
}

/// The Dice coefficient of two texts' letter pairs: 2·shared / (pairs of a + pairs of b).
fn dice(a: &[[char; 2]], b: &[[char; 2]]) -> f64 {
    if a.is_empty() || b.is_empty() {
        return 0.0;
    }
    let mut left = b.to_vec();
    let mut shared = 0usize;
    for pair in a {
        if let Some(k) = left.iter().position(|p| p == pair) {
            left.swap_remove(k);
            shared += 1;
        }
    }
    2.0 * shared as f64 / (a.len() + b.len()) as f64
}

/// Part numbers spelled nearly like `text` (a digit dropped or two transposed), nearest first.
#[must_use]
pub fn near_spellings(library: &Library, text: &str) -> Vec<String> {
    let key = bigrams(text.trim());
    let mut near: Vec<(f64, &str)> = library
        .parts
        .iter()
        .map(|p| (dice(&key, &bigrams(&p.number)), &*p.number))
        .filter(|(d, _)| *d >= NEAR_SPELLING)
        .collect();
    near.sort_by(|a, b| b.0.total_cmp(&a.0).then_with(|| a.1.cmp(b.1)));
    near.into_iter()
        .take(LISTED)
        .map(|(_, n)| n.to_string())
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn library() -> Library {
        let mut library = Library::new();
        library
            .add_bytes(
                "pick.csv",
                b"part,kind\nQX-100E,npn\nQX-100C,npn\nQX-250E,npn\nZR-7,zener\n",
            )
            .unwrap();
        library
    }

    #[test]
    fn exact_then_unique_then_ambiguous() {
        let library = library();
        assert_eq!(find_original(&library, " qx-100c ").unwrap(), 1);
        assert_eq!(find_original(&library, "250").unwrap(), 2, "one number holds it");
        assert_eq!(find_original(&library, "zr7").unwrap(), 3, "one fuzzy match");
        match find_original(&library, "QX-100") {
            Err(SwapError::Ambiguous { matches, count, .. }) => {
                assert_eq!(count, 2);
                assert!(matches.contains(&"QX-100E".to_string()));
                assert!(matches.contains(&"QX-100C".to_string()));
            }
            other => panic!("{other:?}"),
        }
    }

    #[test]
    fn nothing_matching_lists_near_spellings() {
        let library = library();
        match find_original(&library, "QX-10E0") {
            Err(SwapError::NotFound { close, .. }) => {
                assert_eq!(close.first().map(String::as_str), Some("QX-100E"));
            }
            other => panic!("{other:?}"),
        }
        match find_original(&library, "NO-SUCH-PART-0000") {
            Err(SwapError::NotFound { close, .. }) => assert!(close.is_empty(), "{close:?}"),
            other => panic!("{other:?}"),
        }
        assert!(matches!(
            find_original(&library, "  "),
            Err(SwapError::NotFound { .. })
        ));
    }
}
