//! The Parts panel's search: which parts a query keeps ([`Query`]), and the search of a long
//! candidate list on every core ([`Wanted::search`]), which hands over its first screenful of
//! hits before the rest. One test of a candidate ([`keeps`]) serves the UI thread and the
//! workers alike, so a search gives the same hits in the same order wherever it ran.
//!
//! Only whether a part matches decides the list: it keeps the ranking's order, so no score is
//! computed here. The letters highlighted on screen still come from fuzzy-matcher's scorer, for
//! the visible rows only.

use crate::fit::{Candidate, RoleFit, Verdict};
use crate::library::Library;
use std::sync::atomic::{AtomicU64, AtomicUsize, Ordering};

/// The filter a list of hits was made for: the role (index into the fit's roles), whether
/// only fitting parts are kept, and the query (trimmed).
pub type Filter = (usize, bool, String);

/// Hits a worker sends ahead of the full list: more than a screen holds, so paging down a
/// little does not run out before the rest arrives.
pub const FIRST_SCREEN: usize = 200;

/// Candidates a worker takes at a time. Each share ends with a look at whether a newer key has
/// overtaken the search, and the first shares in rank order make the first screenful.
const SHARE: usize = 8192;

/// A query made ready for testing parts against it.
///
/// The rule is fuzzy-matcher's `SkimMatcherV2` (with its defaults, the matcher the workbench
/// highlights with) for whether a text matches at all: every character of the query appears in
/// the text in order, spaces included; a query without an ASCII capital ignores ASCII case, one
/// with a capital respects case; other letters are compared as they are. The scorer does the
/// same test first and, once it passes, always gives a score; here the test is all there is,
/// walking the part's fields in place with no text built per part.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Query {
    pattern: Pattern,
}

#[derive(Debug, Clone, PartialEq, Eq)]
enum Pattern {
    /// Matches everything, as the scorer does for an empty pattern.
    Empty,
    /// An ASCII query, compared byte by byte: an ASCII byte of UTF-8 is always a whole
    /// character, and the bytes of other characters (all 0x80 and over) never equal it.
    Ascii { bytes: Vec<u8>, fold: bool },
    /// A query with other characters, compared character by character.
    Chars { chars: Vec<char>, fold: bool },
}

impl Query {
    /// The query `text` as typed (the workbench trims it first).
    #[must_use]
    pub fn new(text: &str) -> Query {
        // Smart case, as the scorer: any ASCII capital makes the whole query respect case.
        let fold = !text.bytes().any(|b| b.is_ascii_uppercase());
        let pattern = if text.is_empty() {
            Pattern::Empty
        } else if text.is_ascii() {
            Pattern::Ascii {
                bytes: text.as_bytes().to_vec(),
                fold,
            }
        } else {
            Pattern::Chars {
                chars: text.chars().collect(),
                fold,
            }
        };
        Query { pattern }
    }

    /// Whether the query is empty (and so keeps every part).
    #[must_use]
    pub fn is_empty(&self) -> bool {
        self.pattern == Pattern::Empty
    }

    /// Whether `text` matches the query.
    #[must_use]
    pub fn matches_text(&self, text: &str) -> bool {
        self.matches_fields(&[text])
    }

    /// Whether the part at `part` matches the query by its [`search_text`]; false when there is
    /// no such part.
    #[must_use]
    pub fn matches_part(&self, library: &Library, part: usize) -> bool {
        fields(library, part).is_some_and(|f| self.matches_fields(&f))
    }

    /// Whether the texts joined by single spaces match, without joining them.
    fn matches_fields(&self, fields: &[&str]) -> bool {
        match &self.pattern {
            Pattern::Empty => true,
            Pattern::Ascii { bytes, fold: true } => {
                in_order(bytes, fields, str::bytes, |b| b.to_ascii_lowercase())
            }
            Pattern::Ascii { bytes, fold: false } => in_order(bytes, fields, str::bytes, id),
            Pattern::Chars { chars, fold: true } => {
                in_order(chars, fields, str::chars, |c| c.to_ascii_lowercase())
            }
            Pattern::Chars { chars, fold: false } => in_order(chars, fields, str::chars, id),
        }
    }
}

/// No folding: a query with an ASCII capital respects case.
fn id<T>(x: T) -> T {
    x
}

/// Whether `want` appears in order in the `fields` joined by spaces, each field read as units
/// by `units` and each unit compared after `fold`. A query folds only when it holds no ASCII
/// capital, so folding the text alone is enough.
fn in_order<'f, T, I>(
    mut want: &[T],
    fields: &[&'f str],
    units: impl Fn(&'f str) -> I,
    fold: impl Fn(T) -> T,
) -> bool
where
    T: Copy + PartialEq + From<u8>,
    I: IntoIterator<Item = T>,
{
    for (n, field) in fields.iter().enumerate() {
        if n > 0 {
            want = take(want, std::iter::once(T::from(b' ')), &fold);
        }
        want = take(want, units(field), &fold);
        if want.is_empty() {
            return true;
        }
    }
    want.is_empty()
}

/// What is left of `want` after reading `text`: each unit that equals (after `fold`) the next
/// one wanted takes it off, as far as `want` goes.
#[inline]
fn take<T: Copy + PartialEq>(
    mut want: &[T],
    text: impl IntoIterator<Item = T>,
    fold: impl Fn(T) -> T,
) -> &[T] {
    for unit in text {
        let Some((&next, rest)) = want.split_first() else {
            break;
        };
        if fold(unit) == next {
            want = rest;
        }
    }
    want
}

/// The fields a part is searched by, in order: number, maker, package, notes and tags.
fn fields(library: &Library, part: usize) -> Option<[&str; 5]> {
    let p = library.parts.get(part)?;
    Some([
        &p.number,
        library.text(p.maker),
        library.text(p.package),
        &p.notes,
        &p.tags,
    ])
}

/// The text a part is searched by: number, maker, package, notes and tags, joined by spaces.
/// [`Query`] walks these fields without building it; it is for showing and for tests.
#[must_use]
pub fn search_text(library: &Library, part: usize) -> String {
    fields(library, part).map_or_else(String::new, |f| f.join(" "))
}

/// Whether a candidate stays in the list: a fit when only fits are shown, and a match of the
/// query.
#[must_use]
pub fn keeps(library: &Library, candidate: &Candidate, only_fits: bool, query: &Query) -> bool {
    (!only_fits || candidate.verdict == Verdict::Fits)
        && query.matches_part(library, candidate.part)
}

/// The candidates a search looks through: all of a role's, or the hits of a shorter query.
#[derive(Debug, Clone, Copy)]
pub enum Base<'a> {
    /// Every candidate of the role (this many), in rank order.
    All(usize),
    /// These candidates (indices into the role's candidates, in rank order).
    Some(&'a [usize]),
}

impl Base<'_> {
    /// How many candidates.
    #[must_use]
    pub fn len(self) -> usize {
        match self {
            Base::All(n) => n,
            Base::Some(list) => list.len(),
        }
    }

    /// Whether there are none.
    #[must_use]
    pub fn is_empty(self) -> bool {
        self.len() == 0
    }
}

/// What a search keeps: the candidates of one role that match a query (and fit, if asked).
#[derive(Debug, Clone, Copy)]
pub struct Wanted<'a> {
    /// The library the candidates point into.
    pub library: &'a Library,
    /// The role whose ranked candidates are searched.
    pub role: &'a RoleFit,
    /// Keep fitting parts only.
    pub only_fits: bool,
    /// The query.
    pub query: &'a Query,
}

impl Wanted<'_> {
    /// The hits among the candidates at positions `from..to` of `base`, in order.
    fn hits(&self, base: Base<'_>, from: usize, to: usize) -> Vec<usize> {
        let keep = |&i: &usize| {
            self.role
                .candidates
                .get(i)
                .is_some_and(|c| keeps(self.library, c, self.only_fits, self.query))
        };
        match base {
            Base::All(n) => (from.min(n)..to.min(n)).filter(keep).collect(),
            Base::Some(list) => list
                .get(from.min(list.len())..to.min(list.len()))
                .unwrap_or_default()
                .iter()
                .copied()
                .filter(keep)
                .collect(),
        }
    }

    /// The hits among `base`, in rank order, on this thread.
    #[must_use]
    pub fn matching(&self, base: Base<'_>) -> Vec<usize> {
        self.hits(base, 0, base.len())
    }

    /// The hits among `base`, in rank order, searched on every core (up to 8) in shares taken
    /// in rank order. As soon as the shares from the start hold [`FIRST_SCREEN`] hits, those
    /// first hits go to `first`, once: always a beginning of the full list, which may be
    /// complete by then if the other shares were quick. `None` when search `generation` is no
    /// longer the `newest`, or a share failed.
    #[must_use]
    pub fn search(
        &self,
        base: Base<'_>,
        generation: u64,
        newest: &AtomicU64,
        first: &(dyn Fn(Vec<usize>) + Sync),
    ) -> Option<Vec<usize>> {
        let stale = || newest.load(Ordering::Relaxed) != generation;
        let count = base.len().div_ceil(SHARE);
        let next = AtomicUsize::new(0);
        let board = std::sync::Mutex::new(Board {
            shares: vec![None; count],
            done: 0,
            hits_done: 0,
            first_sent: false,
        });
        // Each thread takes the next share until none are left; false when it gave up.
        let work = || -> bool {
            loop {
                let share = next.fetch_add(1, Ordering::Relaxed);
                if share >= count {
                    return true;
                }
                if stale() {
                    return false;
                }
                let from = share * SHARE;
                let hits = self.hits(base, from, from.saturating_add(SHARE));
                let Ok(mut board) = board.lock() else {
                    return false;
                };
                board.finish(share, hits, first);
            }
        };
        let threads = std::thread::available_parallelism()
            .map_or(1, std::num::NonZeroUsize::get)
            .clamp(1, 8)
            .min(count.max(1));
        let finished = std::thread::scope(|scope| {
            // A helper the system refuses is no loss but speed: the shares go to the others.
            let helpers: Vec<_> = (1..threads)
                .filter_map(|_| std::thread::Builder::new().spawn_scoped(scope, work).ok())
                .collect();
            let mine = work();
            // A helper that panicked leaves a share unsearched: the search is given up rather
            // than shown with a hole in it.
            helpers
                .into_iter()
                .fold(mine, |all, h| h.join().unwrap_or(false) && all)
        });
        if !finished || stale() {
            return None;
        }
        let shares = board.into_inner().ok()?.shares;
        let mut hits = Vec::with_capacity(shares.iter().flatten().map(Vec::len).sum());
        for share in shares {
            hits.extend(share?);
        }
        Some(hits)
    }
}

/// The shares of a search finished so far, and how much of the rank order they cover.
struct Board {
    /// The hits of each share, once searched.
    shares: Vec<Option<Vec<usize>>>,
    /// Shares searched from the start without a gap.
    done: usize,
    /// Hits in those shares.
    hits_done: usize,
    /// Whether the first screenful has gone.
    first_sent: bool,
}

impl Board {
    /// Files the `hits` of `share`, and hands the first screenful to `first` once the shares
    /// from the start hold one.
    fn finish(&mut self, share: usize, hits: Vec<usize>, first: &(dyn Fn(Vec<usize>) + Sync)) {
        if let Some(slot) = self.shares.get_mut(share) {
            *slot = Some(hits);
        }
        while let Some(Some(hits)) = self.shares.get(self.done) {
            self.hits_done += hits.len();
            self.done += 1;
        }
        if !self.first_sent && self.hits_done >= FIRST_SCREEN {
            self.first_sent = true;
            let screen = self
                .shares
                .iter()
                .take(self.done)
                .flatten()
                .flatten()
                .take(FIRST_SCREEN)
                .copied()
                .collect();
            first(screen);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::tui::action::Action;
    use crate::tui::app::App;
    use crate::tui::fields::StageDoc;
    use fuzzy_matcher::FuzzyMatcher;
    use fuzzy_matcher::skim::SkimMatcherV2;
    use proptest::prelude::*;
    use std::sync::Mutex;

    /// The reference: fuzzy-matcher 0.3.7's `SkimMatcherV2` with its defaults (a general-purpose
    /// fuzzy matcher from crates.io, the one the workbench highlights with): a text matches when
    /// it gives a score.
    fn skim(text: &str, query: &str) -> bool {
        SkimMatcherV2::default().fuzzy_match(text, query).is_some()
    }

    /// Letters where the two rules could part: ASCII of both cases, digits, spaces and a tab,
    /// and letters outside ASCII whose case the scorer does not fold (é É, the Kelvin sign that
    /// lowers to k, a long s, dotted and dotless i, a ligature, Greek, CJK).
    const LETTERS: &[char] = &[
        'a', 'b', 'c', 'n', 'q', 's', 'A', 'B', 'C', 'N', 'Q', 'S', '0', '1', '7', ' ', ' ', '\t',
        '-', '.', 'é', 'É', '\u{212a}', 'k', 'K', 'ſ', 'İ', 'ı', 'i', 'I', 'ﬃ', 'Ω', 'ω', 'µ',
        '部',
    ];

    fn words(most: usize) -> impl Strategy<Value = String> {
        proptest::collection::vec(proptest::sample::select(LETTERS), 0..most)
            .prop_map(|c| c.into_iter().collect())
    }

    /// A query picked from `text` (some letters in order, some flipped in case by Unicode's
    /// rules, so that many queries match), or any few letters.
    fn query_from(text: String) -> impl Strategy<Value = (String, String)> {
        let letters: Vec<char> = text.chars().collect();
        let n = letters.len();
        prop_oneof![
            proptest::collection::vec(any::<(bool, u8)>(), n).prop_map(move |picks| {
                let query: String = letters
                    .iter()
                    .zip(picks)
                    .filter(|(_, (keep, _))| *keep)
                    .flat_map(|(&c, (_, flip))| match flip % 4 {
                        0 => c.to_uppercase().collect::<Vec<_>>(),
                        1 => c.to_lowercase().collect(),
                        _ => vec![c],
                    })
                    .take(6)
                    .collect();
                query
            }),
            words(5),
        ]
        .prop_map(move |query| (text.clone(), query))
    }

    /// A few parts with fields of those letters, read from CSV as the workbench reads them.
    fn invented_library(rows: &[[String; 4]]) -> Library {
        let mut csv = csv::Writer::from_writer(Vec::new());
        let _ = csv.write_record(["part", "kind", "maker", "package", "notes", "tags"]);
        for (n, [maker, package, notes, tags]) in rows.iter().enumerate() {
            let number = format!("QX{n}");
            let _ = csv.write_record([number.as_str(), "diode", maker, package, notes, tags]);
        }
        let mut library = Library::new();
        let _ = library.add_bytes("invented.csv", &csv.into_inner().unwrap_or_default());
        library
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(2000))]

        /// Any text and query: the same yes or no as the scorer.
        #[test]
        fn a_text_matches_as_the_scorer_says((text, query) in words(24).prop_flat_map(query_from)) {
            prop_assert_eq!(
                Query::new(&query).matches_text(&text),
                skim(&text, &query),
                "text {:?} query {:?}", text, query
            );
        }

        /// Parts read from CSV: walking the fields gives what the scorer gives on the joined
        /// search text, across the spaces between fields too.
        #[test]
        fn a_part_matches_as_the_scorer_says_on_its_search_text(
            rows in proptest::collection::vec(
                [words(8), words(8), words(10), words(8)], 1..6),
            (_, query) in words(30).prop_flat_map(query_from),
        ) {
            let library = invented_library(&rows);
            let query = Query::new(&query).clone();
            for part in 0..library.parts.len() {
                let joined = search_text(&library, part);
                prop_assert_eq!(
                    query.matches_part(&library, part),
                    skim(&joined, query_text(&query).as_str()),
                    "search text {:?} query {:?}", joined, query
                );
            }
        }
    }

    /// The query back as text, for the reference.
    fn query_text(query: &Query) -> String {
        match &query.pattern {
            Pattern::Empty => String::new(),
            Pattern::Ascii { bytes, .. } => String::from_utf8_lossy(bytes).into_owned(),
            Pattern::Chars { chars, .. } => chars.iter().collect(),
        }
    }

    fn generated(rows: u64, seed: u64) -> Library {
        crate::synthetic::library(rows, seed).expect("a generated library reads")
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(300))]

        /// Generated parts, with queries picked from one of their search texts: the same hits
        /// as the scorer over every part.
        #[test]
        fn generated_parts_match_as_the_scorer_says(
            pick in 0usize..400,
            picks in proptest::collection::vec(any::<(bool, u8)>(), 40),
        ) {
            static LIBRARY: std::sync::LazyLock<Library> =
                std::sync::LazyLock::new(|| generated(400, 3));
            let library = &*LIBRARY;
            let source = search_text(library, pick % library.parts.len().max(1));
            let query: String = source
                .chars()
                .zip(picks)
                .filter(|(_, (keep, _))| *keep)
                .map(|(c, (_, flip))| if flip % 5 == 0 { c.to_ascii_uppercase() } else { c })
                .take(5)
                .collect();
            let prepared = Query::new(&query);
            for part in 0..library.parts.len() {
                prop_assert_eq!(
                    prepared.matches_part(library, part),
                    skim(&search_text(library, part), &query),
                    "part {} query {:?}", part, query
                );
            }
        }
    }

    #[test]
    fn the_scorers_rules_by_hand() {
        // Each line checked against the reference too, so a change of either shows.
        let cases = [
            ("SQN00000042 Lumaro TO-92  synthetic", "sqn", true),
            ("SQN00000042 Lumaro TO-92  synthetic", "SQN", true),
            // A capital makes the query respect case.
            ("sqn00000042", "SQN", false),
            ("SQN00000042", "Sqn", false),
            // A space must meet a space.
            ("SQN00000042 Lumaro", "42 l", true),
            ("SQN00000042Lumaro", "42 l", false),
            // Only ASCII letters are folded, and only an ASCII capital respects case.
            ("ÜBER", "über", false),
            ("ÜBER", "Über", true),
            ("Türöffner", "tür", true),
            ("ÉTÉ", "été", false),
            ("\u{212a}elvin", "kelvin", false),
            ("anything", "", true),
        ];
        for (text, query, expected) in cases {
            assert_eq!(
                skim(text, query),
                expected,
                "reference on {text:?} / {query:?}"
            );
            assert_eq!(
                Query::new(query).matches_text(text),
                expected,
                "{text:?} / {query:?}"
            );
        }
    }

    fn door_strike(rows: u64) -> App {
        let doc = StageDoc::parse(
            include_str!("../../data/stages/door-strike.toml"),
            "door-strike.toml",
        )
        .unwrap();
        let mut app = App::new(generated(rows, 7), Vec::new(), doc, None);
        app.wait_for_background();
        app.update(Action::Panel(2));
        app
    }

    #[test]
    fn the_first_screenful_leads_and_all_the_hits_follow() {
        let app = door_strike(40_000);
        let role = &app.fit.roles[0];
        assert!(role.candidates.len() > SHARE, "{}", role.candidates.len());
        let query = Query::new("c");
        let wanted = Wanted {
            library: &app.library,
            role,
            only_fits: false,
            query: &query,
        };
        let base = Base::All(role.candidates.len());
        let screens = Mutex::new(Vec::new());
        let newest = AtomicU64::new(1);
        let first = |screen| screens.lock().unwrap().push(screen);
        let hits = wanted.search(base, 1, &newest, &first).unwrap();
        assert_eq!(hits, wanted.matching(base), "the same as one thread");
        let screens = screens.into_inner().unwrap();
        assert_eq!(screens.len(), 1, "one first screenful");
        assert_eq!(screens[0].as_slice(), &hits[..FIRST_SCREEN]);

        // Too few hits for a screenful: none goes ahead.
        let rare = Query::new(&app.library.parts[role.candidates[5].part].number);
        let wanted = Wanted {
            query: &rare,
            ..wanted
        };
        let called = Mutex::new(0);
        let hits = wanted
            .search(base, 1, &newest, &|_| *called.lock().unwrap() += 1)
            .unwrap();
        assert!(
            !hits.is_empty() && hits.len() < FIRST_SCREEN,
            "{}",
            hits.len()
        );
        assert_eq!(*called.lock().unwrap(), 0);

        // Overtaken by a newer key: nothing.
        newest.store(2, Ordering::Relaxed);
        assert_eq!(wanted.search(base, 1, &newest, &|_| {}), None);
    }
}
