//! Ranking: fits first, then near misses, unknown and short; within a group by a sort key the
//! user picks, ties broken by part number so the order is stable.
//!
//! The score is transparent and depends on the part alone (so adding a part never reorders the
//! others). It starts at 100 and loses points for:
//! - status: nrnd −15, not given −5, obsolete −30;
//! - stock: none given −10, fewer than the quantity −10, fewer than ten times it −3;
//! - price: 6·ln(1 + price) (0.10 costs 0.6, 1.00 costs 4.2, 10 costs 14.4), none given −8;
//! - headroom (the smallest over the checks): a part should sit in the band 1.25–4 × its need;
//!   below 1.25 it loses up to 20 (tight), above 4 it loses 5 per doubling, at most 20
//!   (grossly oversized: dearer, bigger, slower).

use super::{Candidate, Checks, Verdict};
use crate::library::{Library, Part, Status};
use std::cmp::Ordering;

/// The lower edge of the headroom band a well-chosen part sits in.
pub const BAND_LOW: f64 = 1.25;
/// The upper edge of the headroom band.
pub const BAND_HIGH: f64 = 4.0;

/// What orders candidates within a verdict group.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Default)]
pub enum SortKey {
    /// The score, highest first.
    #[default]
    Score,
    /// Price, lowest first (missing last).
    Price,
    /// Smallest headroom, highest first.
    Headroom,
    /// Stock, highest first.
    Stock,
    /// Part number, A to Z.
    Part,
}

impl SortKey {
    /// Every key, in the order the workbench cycles them.
    pub const ALL: [SortKey; 5] = [
        SortKey::Score,
        SortKey::Price,
        SortKey::Headroom,
        SortKey::Stock,
        SortKey::Part,
    ];

    /// The word shown and accepted on the command line.
    #[must_use]
    pub fn name(self) -> &'static str {
        match self {
            SortKey::Score => "score",
            SortKey::Price => "price",
            SortKey::Headroom => "headroom",
            SortKey::Stock => "stock",
            SortKey::Part => "part",
        }
    }

    /// The next key in [`SortKey::ALL`], wrapping.
    #[must_use]
    pub fn next(self) -> SortKey {
        let i = SortKey::ALL.iter().position(|&k| k == self).unwrap_or(0);
        SortKey::ALL[(i + 1) % SortKey::ALL.len()]
    }
}

/// The points a part loses for its headroom `h` (see the module documentation).
#[must_use]
pub fn headroom_penalty(h: Option<f64>) -> f64 {
    match h {
        None => 0.0,
        Some(h) if h < BAND_LOW => (20.0 * (BAND_LOW - h) / (BAND_LOW - 1.0)).min(20.0),
        Some(h) if h > BAND_HIGH => (5.0 * (h / BAND_HIGH).log2()).min(20.0),
        Some(_) => 0.0,
    }
}

/// The score of a candidate (see the module documentation), rounded to 0.1.
#[must_use]
pub fn score(part: &Part, candidate: &Candidate) -> f64 {
    score_of(part, &candidate.checks, candidate.headroom)
}

/// The score of a part with these checks and this smallest headroom: [`score`] for a
/// candidate whose checks are held elsewhere.
#[must_use]
pub fn score_of(part: &Part, checks: &[super::Check], headroom: Option<f64>) -> f64 {
    score_with(part, super::Tally::of(checks).quantity(), headroom)
}

/// The score of a part whose stock is held against `quantity`, with this smallest headroom.
#[must_use]
pub fn score_with(part: &Part, quantity: f64, headroom: Option<f64>) -> f64 {
    score_from(part, quantity, headroom, price_points(part.price.get()))
}

/// The points a part loses for its price (8 when the price is not given).
fn price_points(price: Option<f64>) -> f64 {
    price.map_or(8.0, |p| 6.0 * p.max(0.0).ln_1p())
}

/// [`price_points`] remembered for the prices last seen: a library's prices repeat (whole
/// cents, a few thousand values among a million parts), and the logarithm is the dearest
/// step of a part's score. A direct-mapped table of 4096 prices, 64 KiB, one for each thread
/// of a ranking; a price not in it is worked out and takes its slot. The points are exactly
/// [`price_points`]'s.
pub(crate) struct PricePoints {
    slots: Vec<(u64, f64)>,
}

impl PricePoints {
    const SLOTS: usize = 4096;

    /// An empty table.
    pub(crate) fn new() -> PricePoints {
        // No price has the bits of NaN with this payload, so every slot starts empty.
        PricePoints {
            slots: vec![(u64::MAX, 0.0); Self::SLOTS],
        }
    }

    /// [`price_points`] of `price`.
    #[inline]
    pub(crate) fn get(&mut self, price: Option<f64>) -> f64 {
        let Some(p) = price else {
            return price_points(None);
        };
        let bits = p.to_bits();
        if bits == u64::MAX {
            return price_points(price);
        }
        // Mix the bits (Fibonacci hashing) so prices a cent apart spread over the table.
        let slot = (bits.wrapping_mul(0x9E37_79B9_7F4A_7C15) >> 52) as usize & (Self::SLOTS - 1);
        match self.slots.get_mut(slot) {
            Some(&mut (held, points)) if held == bits => points,
            Some(entry) => {
                let points = price_points(price);
                *entry = (bits, points);
                points
            }
            None => price_points(price),
        }
    }
}

/// [`score_with`] with the price's points given.
pub(crate) fn score_from(part: &Part, quantity: f64, headroom: Option<f64>, price: f64) -> f64 {
    let status = match part.status {
        Status::Active => 0.0,
        Status::Nrnd => 15.0,
        Status::Unknown => 5.0,
        Status::Obsolete => 30.0,
    };
    let stock = match part.stock {
        None => 10.0,
        Some(s) if (s as f64) < quantity => 10.0,
        Some(s) if (s as f64) < 10.0 * quantity => 3.0,
        Some(_) => 0.0,
    };
    let raw = 100.0 - status - stock - price - headroom_penalty(headroom);
    round_half_away(raw * 10.0) / 10.0
}

/// `x.round()` for the tenths of a score, without the library call `round` becomes on a
/// processor without a rounding instruction (a million calls an edit). Exact: truncating
/// through an integer is exact below 2^63 and `x − trunc(x)` is exact, so halves are found
/// as `round` finds them; the sign is kept for −0. Beyond ±2^62 (no score comes near) and
/// for what is not a number, `round` itself.
#[inline]
fn round_half_away(x: f64) -> f64 {
    const LIMIT: f64 = 4_611_686_018_427_387_904.0; // 2^62
    if x.is_nan() || x.abs() >= LIMIT {
        return x.round();
    }
    // |x| < 2^62: the cast truncates exactly.
    let t = x as i64 as f64;
    let r = if (x - t).abs() >= 0.5 {
        t + x.signum()
    } else {
        t
    };
    r.copysign(x)
}

/// A verdict's group in the ranking, best first (fits, near, unknown, short), as 0 to 3.
pub(crate) fn group(verdict: Verdict) -> u8 {
    match verdict {
        Verdict::Fits => 0,
        Verdict::Near => 1,
        Verdict::Unknown => 2,
        Verdict::Short => 3,
    }
}

/// Orders two candidates: group, then the key, then part number.
#[must_use]
pub fn compare(library: &Library, a: &Candidate, b: &Candidate, key: SortKey) -> Ordering {
    let pa = &library.parts[a.part];
    let pb = &library.parts[b.part];
    let by_float_desc = |x: Option<f64>, y: Option<f64>| match (x, y) {
        (Some(x), Some(y)) => y.partial_cmp(&x).unwrap_or(Ordering::Equal),
        (Some(_), None) => Ordering::Less,
        (None, Some(_)) => Ordering::Greater,
        (None, None) => Ordering::Equal,
    };
    let within = match key {
        SortKey::Score => by_float_desc(Some(a.score), Some(b.score)),
        SortKey::Price => by_float_desc(pa.price.get().map(|p| -p), pb.price.get().map(|p| -p)),
        SortKey::Headroom => by_float_desc(a.headroom, b.headroom),
        SortKey::Stock => by_float_desc(pa.stock.map(|s| s as f64), pb.stock.map(|s| s as f64)),
        SortKey::Part => Ordering::Equal,
    };
    group(a.verdict)
        .cmp(&group(b.verdict))
        .then(within)
        .then_with(|| pa.number.cmp(&pb.number))
        .then(a.part.cmp(&b.part))
}

/// Sorts candidates and numbers their ranks from 1, in the order of [`compare`].
///
/// A million candidates are ranked on every edit in the workbench, so the order is not found
/// by calling [`compare`]: each candidate gets a key of plain integers (group, the sort key's
/// value as order-preserving bits, the part's place in part-number order from
/// [`Library::number_order`]), the keys are sorted (a large list in one share a core, the
/// sorted shares then merged), and the candidates are gathered into their places in one pass
/// of independent reads (moving them along the permutation's cycles instead waits on each
/// read before the next). A test holds this equal to sorting with [`compare`].
pub fn rank(candidates: &mut Vec<Candidate>, library: &Library, key: SortKey) {
    let order = library.number_order();
    let mut keys: Vec<u128> = candidates
        .iter()
        .enumerate()
        .map(|(i, c)| {
            let part = library.parts.get(c.part);
            sort_key(key, order, c.part, part, c.verdict, c.score, c.headroom, i)
        })
        .collect();
    sort_keys(&mut keys);
    let mut ordered = Vec::with_capacity(candidates.len());
    for &k in &keys {
        // Every position below the list's length is in the keys exactly once.
        let from = &mut candidates[position(k)];
        // A large library's candidates mostly have no checks: leaving those alone keeps the
        // source lines clean.
        let checks = if from.checks.is_empty() {
            Checks::default()
        } else {
            std::mem::take(&mut from.checks)
        };
        ordered.push(Candidate { checks, ..*from });
    }
    *candidates = ordered;
    for (i, c) in candidates.iter_mut().enumerate() {
        // Ranks stay below `limits::MAX_ROWS`, well inside u32.
        c.rank = i as u32 + 1;
    }
}

/// Bits of a candidate's place in number order and of its position in the list being
/// ranked: both are below `limits::MAX_ROWS` (5 000 000 < 2^23).
const BITS: u32 = 23;
const MASK: u128 = (1 << BITS) - 1;
const _: () = assert!(crate::library::limits::MAX_ROWS < 1 << BITS);

/// The integer a candidate sorts by, most significant first: group (2 bits), the sort key's
/// value as order-preserving bits (64), the part's place in number order (23), and
/// `position`, the candidate's place in the list being ranked (23), so that [`position`]
/// finds it again after the sort. Sorting these integers gives the order of [`compare`].
#[allow(clippy::too_many_arguments)]
pub(crate) fn sort_key(
    key: SortKey,
    order: &[u32],
    index: usize,
    part: Option<&Part>,
    verdict: Verdict,
    score: f64,
    headroom: Option<f64>,
    position: usize,
) -> u128 {
    let within = match key {
        SortKey::Score => descending(Some(score)),
        SortKey::Price => ascending(part.and_then(|p| p.price.get())),
        SortKey::Headroom => descending(headroom),
        SortKey::Stock => descending(part.and_then(|p| p.stock).map(f64::from)),
        SortKey::Part => 0,
    };
    // Candidates index parts of this library; a stray index sorts last.
    let place = order.get(index).map_or(MASK, |&p| u128::from(p) & MASK);
    (u128::from(group(verdict)) << (64 + 2 * BITS))
        | (u128::from(within) << (2 * BITS))
        | (place << BITS)
        | (position as u128 & MASK)
}

/// The position a [`sort_key`] was made with.
pub(crate) fn position(key: u128) -> usize {
    (key & MASK) as usize
}

/// A [`sort_key`] by score in 64 bits, where the score allows: group (2 bits), the score in
/// tenths as 16 bits, highest first (scores are rounded to tenths, so this orders as the
/// score does), place (23) and position (23). Half the bytes to sort; `None` for a score
/// outside ±3276.7 (a price beyond reason), which the 128-bit key sorts instead.
pub(crate) fn score_key(key: u128, score: f64) -> Option<u64> {
    let tenths = round_half_away(score * 10.0);
    if !(-32767.0..=32767.0).contains(&tenths) {
        return None;
    }
    // Within ±32767 by the test above: the cast is exact.
    let class = (32767 - tenths as i64) as u64;
    let group = (key >> (64 + 2 * BITS)) as u64 & 0b11;
    let place_and_position = (key & ((1 << (2 * BITS)) - 1)) as u64;
    Some((group << 62) | (class << (2 * BITS)) | place_and_position)
}

/// The position a [`score_key`] was made with.
pub(crate) fn score_key_position(key: u64) -> usize {
    (key & ((1 << BITS) - 1)) as usize
}

/// Sorts distinct keys: a long list in one share a core, then the sorted shares merged pair
/// by pair (see [`sort_keys_with`]).
pub(crate) fn sort_keys(keys: &mut Vec<u128>) {
    const SHARED_FROM: usize = 50_000;
    let threads = if keys.len() < SHARED_FROM {
        1
    } else {
        std::thread::available_parallelism().map_or(1, |t| t.get().min(8))
    };
    sort_keys_on(keys, threads);
}

/// [`sort_keys`] in `threads` shares.
pub(crate) fn sort_keys_on<K: Ord + Copy + Send + Sync>(keys: &mut Vec<K>, threads: usize) {
    sort_keys_with(keys, &mut Vec::new(), threads);
}

/// Sorts keys in `threads` shares, one a thread, then merges the sorted shares pair by pair
/// through `merged` (memory kept for the next call), each merge on two threads: one writes
/// the smaller half from the front, the other the larger half from the back. The pairs are
/// merged one after the other, so the merging uses two cores however many there are (the
/// machines loadfit is measured on have two).
pub(crate) fn sort_keys_with<K: Ord + Copy + Send + Sync>(
    keys: &mut Vec<K>,
    merged: &mut Vec<K>,
    threads: usize,
) {
    let n = keys.len();
    if threads <= 1 || n < 2 {
        keys.sort_unstable();
        return;
    }
    let width = n.div_ceil(threads);
    let refused = std::thread::scope(|scope| {
        let spawned: Vec<_> = keys
            .chunks_mut(width)
            .map(|share| {
                std::thread::Builder::new().spawn_scoped(scope, move || share.sort_unstable())
            })
            .collect();
        spawned.into_iter().any(|h| h.is_err())
    });
    if refused {
        // The system refused a thread: its share is unsorted; sort the whole list here.
        keys.sort_unstable();
        return;
    }
    // Every place of `merged` is written by the first merge: only new room needs a value
    // (any key will do; there are at least two).
    merged.truncate(n);
    merged.resize(n, keys[0]);
    let mut run = width;
    let mut in_keys = true;
    while run < n {
        if in_keys {
            merge_runs(keys, merged, run);
        } else {
            merge_runs(merged, keys, run);
        }
        in_keys = !in_keys;
        run *= 2;
    }
    if !in_keys {
        // The sorted keys are in the merge memory: the two lists trade places.
        std::mem::swap(keys, merged);
    }
}

/// Merges each pair of neighbouring sorted runs of `run` keys of `from` into `to`.
fn merge_runs<K: Ord + Copy + Send + Sync>(from: &[K], to: &mut [K], run: usize) {
    for (pair, out) in from.chunks(2 * run).zip(to.chunks_mut(2 * run)) {
        let (a, b) = pair.split_at(run.min(pair.len()));
        let (front, back) = out.split_at_mut(out.len() / 2);
        let both = std::thread::scope(|scope| {
            let back_half =
                std::thread::Builder::new().spawn_scoped(scope, || merge_back(a, b, back));
            merge_front(a, b, front);
            back_half.is_ok()
        });
        if !both {
            merge_back(a, b, back);
        }
    }
}

/// The smallest `out.len()` keys of the sorted runs `a` and `b`, in order (`out` is no
/// longer than the two together).
fn merge_front<K: Ord + Copy>(a: &[K], b: &[K], out: &mut [K]) {
    let (mut i, mut j) = (0, 0);
    for slot in out {
        match (a.get(i), b.get(j)) {
            (Some(&x), Some(&y)) if x <= y => {
                *slot = x;
                i += 1;
            }
            (Some(&x), None) => {
                *slot = x;
                i += 1;
            }
            (_, Some(&y)) => {
                *slot = y;
                j += 1;
            }
            (None, None) => break,
        }
    }
}

/// The largest `out.len()` keys of the sorted runs `a` and `b`, in order (`out` is no longer
/// than the two together).
fn merge_back<K: Ord + Copy>(a: &[K], b: &[K], out: &mut [K]) {
    // `i` and `j` count the keys of `a` and `b` not yet taken, from the front.
    let (mut i, mut j) = (a.len(), b.len());
    for slot in out.iter_mut().rev() {
        let last_a = i.checked_sub(1).and_then(|i| a.get(i));
        let last_b = j.checked_sub(1).and_then(|j| b.get(j));
        match (last_a, last_b) {
            (Some(&x), Some(&y)) if x > y => {
                *slot = x;
                i -= 1;
            }
            (Some(&x), None) => {
                *slot = x;
                i -= 1;
            }
            (_, Some(&y)) => {
                *slot = y;
                j -= 1;
            }
            (None, None) => break,
        }
    }
}

/// Bits of `x` that sort as `x` does, lowest first; missing (or not a number) after all.
fn ascending(x: Option<f64>) -> u64 {
    match x {
        Some(x) if !x.is_nan() => {
            // −0 and +0 are the same value here, as they are to `partial_cmp`.
            let bits = (x + 0.0).to_bits();
            if bits >> 63 == 1 {
                !bits
            } else {
                bits | (1 << 63)
            }
        }
        _ => u64::MAX,
    }
}

/// As [`ascending`], highest first; missing still last.
fn descending(x: Option<f64>) -> u64 {
    ascending(x.map(|x| -x))
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The score's rounding is `f64::round`, bit for bit: halves away from zero, −0 kept,
    /// at the edges of the fast path and beyond it (the standard library's `round` is the
    /// reference).
    #[test]
    fn rounding_is_f64_round() {
        let mut cases = vec![
            0.0,
            -0.0,
            0.5,
            -0.5,
            1.5,
            -1.5,
            2.5,
            -2.5,
            0.49999999999999994,
            -0.49999999999999994,
            4503599627370495.5,
            4503599627370497.0,
            4.611686018427388e18,
            -4.611686018427388e18,
            9.3e18,
            1e300,
            f64::INFINITY,
            f64::NEG_INFINITY,
            f64::MIN_POSITIVE,
            -1e-310,
        ];
        let mut state = 0x2545_f491_4f6c_dd1d_u64;
        for _ in 0..200_000 {
            state ^= state << 13;
            state ^= state >> 7;
            state ^= state << 17;
            // Scores in tenths (a few thousand either way) with every fraction, and any bits.
            cases.push((state % 2_000_000) as f64 / 16.0 - 60_000.0);
            cases.push(f64::from_bits(state));
        }
        for x in cases {
            let (ours, std) = (round_half_away(x), x.round());
            assert!(
                ours.to_bits() == std.to_bits() || (ours.is_nan() && std.is_nan()),
                "{x:e}: {ours:e} vs {std:e}"
            );
        }
    }

    #[test]
    fn headroom_band() {
        assert_eq!(headroom_penalty(Some(2.0)), 0.0);
        assert_eq!(headroom_penalty(Some(1.0)), 20.0);
        assert!((headroom_penalty(Some(8.0)) - 5.0).abs() < 1e-12);
        assert_eq!(headroom_penalty(Some(1e6)), 20.0);
        assert_eq!(headroom_penalty(None), 0.0);
    }

    #[test]
    fn float_keys_keep_their_order() {
        let values = [
            f64::NEG_INFINITY,
            -3.5,
            -1e-300,
            -0.0,
            0.0,
            1e-300,
            2.0,
            7e9,
            f64::INFINITY,
        ];
        for pair in values.windows(2) {
            assert!(
                ascending(Some(pair[0])) <= ascending(Some(pair[1])),
                "{pair:?}"
            );
            assert!(
                descending(Some(pair[0])) >= descending(Some(pair[1])),
                "{pair:?}"
            );
        }
        assert_eq!(ascending(Some(-0.0)), ascending(Some(0.0)));
        assert_eq!(ascending(None), u64::MAX);
        assert_eq!(descending(None), u64::MAX);
        assert_eq!(ascending(Some(f64::NAN)), u64::MAX);
        assert!(ascending(Some(f64::INFINITY)) < u64::MAX);
    }

    /// The integer keys give the order of `compare` for every sort key, on a generated library
    /// with many tied scores.
    #[test]
    fn ranking_by_keys_equals_sorting_by_compare() {
        let library = crate::synthetic::library(3000, 7).unwrap();
        let stage = crate::stage::Stage::from_toml(
            include_str!("../../data/stages/door-strike.toml"),
            "door-strike.toml",
        )
        .unwrap();
        let needs = crate::needs::compute(&stage, Some(&library));
        for key in SortKey::ALL {
            let fit = crate::fit::evaluate(&stage, &needs, &library, key);
            for role in &fit.roles {
                let mut expected = role.candidates.clone();
                expected.sort_by(|a, b| compare(&library, a, b, key));
                let got: Vec<usize> = role.candidates.iter().map(|c| c.part).collect();
                let want: Vec<usize> = expected.iter().map(|c| c.part).collect();
                assert_eq!(got, want, "{key:?} {:?}", role.role);
                assert!(
                    role.candidates
                        .iter()
                        .enumerate()
                        .all(|(i, c)| c.rank as usize == i + 1)
                );
            }
        }
    }

    #[test]
    fn sort_keys_cycle() {
        let mut key = SortKey::Score;
        for _ in 0..SortKey::ALL.len() {
            key = key.next();
        }
        assert_eq!(key, SortKey::Score);
    }

    /// Keys sorted in shares on several threads and merged come out as one sort gives them,
    /// for any length and thread count, with the merge memory used again from call to call
    /// (and with repeated keys, which ranking never makes, all the same).
    #[test]
    fn keys_sorted_in_shares_equal_one_sort() {
        // A fixed pseudo-random sequence (a 64-bit linear congruential generator, Knuth's
        // MMIX constants): distinct keys, as ranking makes them.
        let mut x: u64 = 7;
        let keys: Vec<u128> = (0..10_000u128)
            .map(|i| {
                x = x
                    .wrapping_mul(6364136223846793005)
                    .wrapping_add(1442695040888963407);
                (u128::from(x) << 32) | i
            })
            .collect();
        // A byte of each key: 256 values, so every value repeats some 40 times.
        let repeated: Vec<u64> = keys.iter().map(|&k| ((k >> 88) & 0xff) as u64).collect();
        let mut merged = Vec::new();
        let mut merged_narrow = Vec::new();
        for len in [0, 1, 2, 3, 7, 100, 4097, 10_000] {
            let mut expected = keys[..len].to_vec();
            expected.sort_unstable();
            let mut expected_narrow = repeated[..len].to_vec();
            expected_narrow.sort_unstable();
            for threads in [1, 2, 3, 8] {
                let mut shared = keys[..len].to_vec();
                sort_keys_with(&mut shared, &mut merged, threads);
                assert_eq!(shared, expected, "{len} keys, {threads} threads");
                let mut shared = repeated[..len].to_vec();
                sort_keys_with(&mut shared, &mut merged_narrow, threads);
                assert_eq!(
                    shared, expected_narrow,
                    "{len} repeated keys, {threads} threads"
                );
            }
        }
        let mut one = keys[..1].to_vec();
        sort_keys_on(&mut one, 2);
        assert_eq!(one, keys[..1]);
    }

    /// 64-bit score keys order as the 128-bit keys they come from, and refuse a score they
    /// cannot hold.
    #[test]
    fn score_keys_order_as_the_full_keys() {
        let order: Vec<u32> = (0..64).rev().collect();
        let scores = [
            100.0, 99.9, 87.3, 87.3, 0.0, -0.0, -12.5, -3276.7, 3276.7, 55.5,
        ];
        let verdicts = [
            Verdict::Fits,
            Verdict::Near,
            Verdict::Unknown,
            Verdict::Short,
        ];
        let mut full = Vec::new();
        for (i, &score) in scores.iter().enumerate() {
            for (j, &verdict) in verdicts.iter().enumerate() {
                let index = i * 4 + j;
                let key = sort_key(
                    SortKey::Score,
                    &order,
                    index,
                    None,
                    verdict,
                    score,
                    None,
                    index,
                );
                full.push((key, score_key(key, score).expect("a score in range")));
            }
        }
        let mut by_full = full.clone();
        by_full.sort_by_key(|&(k, _)| k);
        let mut by_short = full.clone();
        by_short.sort_by_key(|&(_, s)| s);
        assert_eq!(by_full, by_short);
        for &(k, s) in &full {
            assert_eq!(position(k), score_key_position(s));
        }
        let key = sort_key(
            SortKey::Score,
            &order,
            0,
            None,
            Verdict::Fits,
            -4000.0,
            None,
            0,
        );
        assert_eq!(score_key(key, -4000.0), None);
        assert_eq!(score_key(key, f64::NEG_INFINITY), None);
        assert_eq!(score_key(key, f64::NAN), None);
    }

    /// The remembered price points are the points worked out, for prices seen once, again,
    /// after their slot was taken by another, and for no price.
    #[test]
    fn remembered_price_points_are_exact() {
        let mut table = PricePoints::new();
        let prices: Vec<Option<f64>> = (0..20_000)
            .map(|i| Some(f64::from(i % 7001) * 0.001))
            .chain([
                None,
                Some(0.0),
                Some(-0.0),
                Some(-1.0),
                Some(1e300),
                Some(f64::INFINITY),
            ])
            .collect();
        for _ in 0..2 {
            for &price in &prices {
                assert_eq!(
                    table.get(price).to_bits(),
                    price_points(price).to_bits(),
                    "{price:?}"
                );
            }
        }
    }
}
