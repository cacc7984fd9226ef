//! Picking the original: the exact part number, or enough of it to name one part, with the
//! near spellings offered when nothing matches.

use super::SwapError;
use crate::library::Library;
use fuzzy_matcher::FuzzyMatcher;
use fuzzy_matcher::skim::SkimMatcherV2;

/// How many matches an error lists.
const LISTED: usize = 8;

/// How many near spellings a not-found error offers.
const NEAR_LISTED: usize = 5;

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
        ([], several) | (several, _) => Err(ambiguous(several)),
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

/// The optimal-string-alignment distance of two texts, ignoring ASCII case: insertions,
/// deletions, substitutions and swaps of two neighbours each cost one (the usual typing slips).
fn edits(a: &[char], b: &[char]) -> usize {
    let same = |x: char, y: char| x.eq_ignore_ascii_case(&y);
    let width = b.len() + 1;
    let mut d = vec![0usize; (a.len() + 1) * width];
    for i in 0..=a.len() {
        d[i * width] = i;
    }
    for (j, cell) in d.iter_mut().enumerate().take(width) {
        *cell = j;
    }
    for i in 1..=a.len() {
        for j in 1..=b.len() {
            let cost = usize::from(!same(a[i - 1], b[j - 1]));
            let mut best = (d[(i - 1) * width + j] + 1)
                .min(d[i * width + j - 1] + 1)
                .min(d[(i - 1) * width + j - 1] + cost);
            if i > 1 && j > 1 && same(a[i - 1], b[j - 2]) && same(a[i - 2], b[j - 1]) {
                best = best.min(d[(i - 2) * width + j - 2] + 1);
            }
            d[i * width + j] = best;
        }
    }
    d[a.len() * width + b.len()]
}

/// Part numbers spelled nearly like `text` (a character dropped, added, changed, or two
/// transposed: at most one slip in four characters), nearest first.
#[must_use]
pub fn near_spellings(library: &Library, text: &str) -> Vec<String> {
    let key: Vec<char> = text.trim().chars().collect();
    let allowed = (key.len() / 4).max(1);
    let mut near: Vec<(usize, &str)> = library
        .parts
        .iter()
        .filter(|p| p.number.chars().count().abs_diff(key.len()) <= allowed)
        .filter_map(|p| {
            let number: Vec<char> = p.number.chars().collect();
            let d = edits(&key, &number);
            (d <= allowed).then_some((d, &*p.number))
        })
        .collect();
    near.sort_by(|a, b| a.0.cmp(&b.0).then_with(|| a.1.cmp(b.1)));
    near.into_iter()
        .take(NEAR_LISTED)
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
        assert_eq!(
            find_original(&library, "250").unwrap(),
            2,
            "one number holds it"
        );
        assert_eq!(
            find_original(&library, "zr7").unwrap(),
            3,
            "one fuzzy match"
        );
        match find_original(&library, "QX-100") {
            Err(SwapError::Ambiguous { matches, count, .. }) => {
                assert_eq!(count, 2);
                assert!(matches.contains(&"QX-100E".to_string()));
                assert!(matches.contains(&"QX-100C".to_string()));
            }
            other => panic!("{other:?}"),
        }
    }

    /// Optimal string alignment (Damerau's four slips, no substring edited twice): a
    /// transposition costs one where plain Levenshtein counts two.
    #[test]
    fn edit_distance_counts_typing_slips() {
        let d = |a: &str, b: &str| {
            edits(
                &a.chars().collect::<Vec<_>>(),
                &b.chars().collect::<Vec<_>>(),
            )
        };
        assert_eq!(
            d("kitten", "sitting"),
            3,
            "the textbook Levenshtein example"
        );
        assert_eq!(d("QX-10E0", "QX-100E"), 1);
        assert_eq!(d("ab", "BA"), 1);
        assert_eq!(d("", "abc"), 3);
        assert_eq!(d("CA", "ABC"), 3, "OSA edits no substring twice");
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
