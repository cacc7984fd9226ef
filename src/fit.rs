//! Fit: every part of a fitting kind held against every need of its role, with a verdict per
//! check and per part, and a ranking that puts the right part on top and keeps the reason for
//! every other part one look away.
//!
//! - [`checks`] holds one need against one rating (`pass`, `short` with its shortfall,
//!   `unknown` when the rating is missing), per role;
//! - [`rank`] scores and orders candidates (fits, near misses, unknown, short);
//! - [`report`] renders a fit as text, CSV and the binding JSON.

pub mod checks;
pub mod rank;
pub mod report;

use crate::library::{Kind, Library, Part, Ratings};
use crate::needs::{Bound, Needs};
use crate::stage::{ClampType, DriveSource, LoadType, Stage, SwitchType};
use crate::units::Dim;
use std::borrow::Cow;

pub use rank::{SortKey, score};

/// A part is `near` when exactly one check is short by at most this fraction (DESIGN.md: near
/// miss, 10 %).
pub const NEAR_MISS: f64 = 0.10;

/// A place in the stage a part fills.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Role {
    /// The transistor that switches the load.
    Switch,
    /// The diode across an inductive load.
    Clamp,
    /// The zener of a diode-plus-zener clamp.
    Zener,
    /// The relay of a relay load.
    Relay,
    /// The photocell of a photocell drive.
    Sensor,
}

impl Role {
    /// Every role, in report order.
    pub const ALL: [Role; 5] = [
        Role::Switch,
        Role::Clamp,
        Role::Zener,
        Role::Relay,
        Role::Sensor,
    ];

    /// The word used in outputs and need ids.
    #[must_use]
    pub fn name(self) -> &'static str {
        match self {
            Role::Switch => "switch",
            Role::Clamp => "clamp",
            Role::Zener => "zener",
            Role::Relay => "relay",
            Role::Sensor => "sensor",
        }
    }

    /// Reads a role name.
    #[must_use]
    pub fn from_name(name: &str) -> Option<Role> {
        Role::ALL
            .into_iter()
            .find(|r| r.name().eq_ignore_ascii_case(name.trim()))
    }
}

/// The roles a stage has, in report order.
#[must_use]
pub fn roles(stage: &Stage) -> Vec<Role> {
    let mut roles = vec![Role::Switch];
    let coil = stage.load.kind.is_coil();
    if coil && stage.clamp.kind != ClampType::None {
        roles.push(Role::Clamp);
        if stage.clamp.kind == ClampType::Zener {
            roles.push(Role::Zener);
        }
    }
    if stage.load.kind == LoadType::Relay {
        roles.push(Role::Relay);
    }
    if stage.drive.source == DriveSource::Photocell || stage.sensor.is_some() {
        roles.push(Role::Sensor);
    }
    roles
}

/// Whether a part of `kind` can fill `role` in this stage.
#[must_use]
pub fn kind_fits_role(stage: &Stage, role: Role, kind: Kind) -> bool {
    match role {
        Role::Switch => match stage.switch.kind {
            SwitchType::Npn => kind == Kind::Npn,
            SwitchType::Pnp => kind == Kind::Pnp,
            SwitchType::Nmos => kind == Kind::Nmos,
            SwitchType::Pmos => kind == Kind::Pmos,
            // `any` is the usual low-side switch: an NPN or an N-MOSFET.
            SwitchType::Any => matches!(kind, Kind::Npn | Kind::Nmos),
        },
        Role::Clamp => matches!(kind, Kind::Diode | Kind::Schottky),
        Role::Zener => kind == Kind::Zener,
        Role::Relay => kind == Kind::Relay,
        Role::Sensor => kind == Kind::Photocell,
    }
}

/// The verdict of one check.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum CheckVerdict {
    /// The rating meets the need.
    Pass,
    /// The rating falls short of the need.
    Short,
    /// The library does not give the rating.
    Unknown,
}

impl CheckVerdict {
    /// The word used in outputs.
    #[must_use]
    pub fn name(self) -> &'static str {
        match self {
            CheckVerdict::Pass => "pass",
            CheckVerdict::Short => "short",
            CheckVerdict::Unknown => "unknown",
        }
    }

    /// A glyph shown beside the word, so colour is never the only signal.
    #[must_use]
    pub fn glyph(self) -> &'static str {
        match self {
            CheckVerdict::Pass => "✓",
            CheckVerdict::Short => "✗",
            CheckVerdict::Unknown => "?",
        }
    }
}

/// One need held against one rating of one part.
#[derive(Debug, Clone, PartialEq)]
pub struct Check {
    /// The need's id (`switch.voltage`) or a part rule (`part.status`, `part.stock`,
    /// `part.rohs`).
    pub need: &'static str,
    /// The rating's name (`vceo`, `derated pd`, `status`).
    pub rating_name: &'static str,
    /// The part's rating (SI), when known.
    pub rating: Option<f64>,
    /// What the need asks (SI), when it is a number.
    pub required: Option<f64>,
    /// The dimension of both (°C for a junction temperature, which no need has).
    pub dim: Dim,
    /// Which side the rating must fall on.
    pub bound: Bound,
    /// The verdict.
    pub verdict: CheckVerdict,
    /// rating / need for a lower bound, need / rating for an upper bound; ≥ 1 passes.
    pub headroom: Option<f64>,
    /// Why, in words, where there is more to say than the numbers.
    pub note: Cow<'static, str>,
}

impl Check {
    /// The check of a part rule (status, stock, RoHS): a verdict and a note, no rating.
    pub(crate) fn rule(
        need: &'static str,
        rating_name: &'static str,
        verdict: CheckVerdict,
        note: impl Into<Cow<'static, str>>,
    ) -> Check {
        Check {
            need,
            rating_name,
            rating: None,
            required: None,
            dim: Dim::Number,
            bound: Bound::Value,
            verdict,
            headroom: None,
            note: note.into(),
        }
    }

    /// The shortfall of a short check as a fraction (0.05 is 5 % short).
    #[must_use]
    pub fn shortfall(&self) -> Option<f64> {
        match self.verdict {
            CheckVerdict::Short => Some(shortfall(self.headroom)),
            _ => None,
        }
    }
}

/// How far short a short check with this headroom falls, as a fraction: 1 − headroom, and
/// all of it (1) when there is no headroom to tell.
fn shortfall(headroom: Option<f64>) -> f64 {
    headroom.map_or(1.0, |h| (1.0 - h).clamp(0.0, 1.0))
}

/// The verdict of a part over all its checks.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Verdict {
    /// Every check passes.
    Fits,
    /// Exactly one check short, by at most 10 %; the rest pass.
    Near,
    /// Nothing short, at least one rating missing.
    Unknown,
    /// Anything else.
    Short,
}

impl Verdict {
    /// The word used in outputs.
    #[must_use]
    pub fn name(self) -> &'static str {
        match self {
            Verdict::Fits => "fits",
            Verdict::Near => "near",
            Verdict::Unknown => "unknown",
            Verdict::Short => "short",
        }
    }

    /// A glyph shown beside the word.
    #[must_use]
    pub fn glyph(self) -> &'static str {
        match self {
            Verdict::Fits => "✓",
            Verdict::Near => "≈",
            Verdict::Unknown => "?",
            Verdict::Short => "✗",
        }
    }

    /// The verdict of a set of checks (DESIGN.md: fit, near miss; `unknown` never counts as a
    /// pass).
    #[must_use]
    pub fn of(checks: &[Check]) -> Verdict {
        Tally::of(checks).verdict()
    }
}

/// What ranking takes from a part's checks, gathered one check at a time: how many are short
/// and by how much the first falls short, whether a rating is missing, the smallest headroom
/// over the ratings and the quantity the stock is held against. A million-part ranking keeps
/// this instead of the checks themselves, and the verdict, headroom and score of a part with
/// its checks written out come from the same tally.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct Tally {
    shorts: u32,
    first_shortfall: f64,
    unknown: bool,
    headroom: Option<f64>,
    quantity: Option<f64>,
}

impl Tally {
    /// The tally of these checks.
    #[must_use]
    pub fn of(checks: &[Check]) -> Tally {
        let mut tally = Tally::default();
        for check in checks {
            tally.add(check);
        }
        tally
    }

    /// Counts one more check.
    pub fn add(&mut self, check: &Check) {
        self.count(check.need, check.verdict, check.headroom, check.required);
    }

    /// Counts one more check given by its parts (the checks of a ranking are not written).
    #[inline]
    pub(crate) fn count(
        &mut self,
        need: &str,
        verdict: CheckVerdict,
        headroom: Option<f64>,
        required: Option<f64>,
    ) {
        // Part rules (stock, status) are not ratings: a part's headroom is over its ratings.
        if need.starts_with("part.") {
            self.count_verdict(verdict, headroom);
            if need == checks::ids_part::STOCK {
                self.quantity = required;
            }
        } else {
            self.count_rating(verdict, headroom);
        }
    }

    /// Counts one more check of a rating (not a part rule).
    #[inline]
    pub(crate) fn count_rating(&mut self, verdict: CheckVerdict, headroom: Option<f64>) {
        self.count_verdict(verdict, headroom);
        if let Some(h) = headroom {
            self.headroom = Some(self.headroom.map_or(h, |a| a.min(h)));
        }
    }

    #[inline]
    fn count_verdict(&mut self, verdict: CheckVerdict, headroom: Option<f64>) {
        match verdict {
            CheckVerdict::Short => {
                if self.shorts == 0 {
                    self.first_shortfall = shortfall(headroom);
                }
                self.shorts += 1;
            }
            CheckVerdict::Unknown => self.unknown = true,
            CheckVerdict::Pass => {}
        }
    }

    /// The verdict (DESIGN.md: fit, near miss; `unknown` never counts as a pass).
    #[must_use]
    pub fn verdict(&self) -> Verdict {
        match self.shorts {
            0 if !self.unknown => Verdict::Fits,
            0 => Verdict::Unknown,
            1 if !self.unknown && self.first_shortfall <= NEAR_MISS + 1e-12 => Verdict::Near,
            _ => Verdict::Short,
        }
    }

    /// The smallest headroom over the ratings' checks that have one.
    #[must_use]
    pub fn headroom(&self) -> Option<f64> {
        self.headroom
    }

    /// The quantity the stock rule asked for (1 when there was no stock rule).
    #[must_use]
    pub fn quantity(&self) -> f64 {
        self.quantity.unwrap_or(1.0)
    }
}

/// One part evaluated for a role.
#[derive(Debug, Clone, PartialEq)]
pub struct Candidate {
    /// Index of the part in [`Library::parts`].
    pub part: usize,
    /// The part's verdict.
    pub verdict: Verdict,
    /// Every check, in need order, then the part rules (none kept for most candidates of a
    /// large library: see [`DETAIL_RANKS`]).
    pub checks: Checks,
    /// The ranking score (higher is better); see [`rank::score`].
    pub score: f64,
    /// The smallest headroom over the checks that have one.
    pub headroom: Option<f64>,
    /// 1-based position in the ranked list.
    pub rank: u32,
}

/// A candidate's checks: one null pointer while there are none, as for most candidates of a
/// large library, so a million candidates take 48 bytes each, not 72. Reads as a slice.
#[derive(Debug, Clone, PartialEq, Default)]
// The box around the vector is the point: a thin pointer of 8 bytes, where a vector takes 24
// and a boxed slice 16; the extra allocation is paid only by candidates that keep checks.
#[allow(clippy::box_collection)]
pub struct Checks(Option<Box<Vec<Check>>>);

impl std::ops::Deref for Checks {
    type Target = [Check];
    fn deref(&self) -> &[Check] {
        self.0.as_deref().map_or(&[], Vec::as_slice)
    }
}

impl From<Vec<Check>> for Checks {
    fn from(checks: Vec<Check>) -> Checks {
        Checks((!checks.is_empty()).then(|| Box::new(checks)))
    }
}

impl<'a> IntoIterator for &'a Checks {
    type Item = &'a Check;
    type IntoIter = std::slice::Iter<'a, Check>;
    fn into_iter(self) -> Self::IntoIter {
        self.iter()
    }
}

impl Candidate {
    /// The check with the smallest headroom, the one that limits this part.
    #[must_use]
    pub fn limiting(&self) -> Option<&Check> {
        self.checks
            .iter()
            .filter(|c| c.verdict == CheckVerdict::Short)
            .chain(
                self.checks
                    .iter()
                    .filter(|c| c.verdict == CheckVerdict::Unknown),
            )
            .next()
            .or_else(|| {
                self.checks
                    .iter()
                    .filter(|c| c.headroom.is_some() && !c.need.starts_with("part."))
                    .min_by(|a, b| {
                        a.headroom
                            .partial_cmp(&b.headroom)
                            .unwrap_or(std::cmp::Ordering::Equal)
                    })
            })
    }
}

/// The candidates of one role, ranked.
#[derive(Debug, Clone, PartialEq)]
pub struct RoleFit {
    /// The role.
    pub role: Role,
    /// The ids of the needs its parts are held against.
    pub needs: Vec<&'static str>,
    /// The candidates, ranked.
    pub candidates: Vec<Candidate>,
}

impl RoleFit {
    /// How many candidates fit.
    #[must_use]
    pub fn fits(&self) -> usize {
        self.candidates
            .iter()
            .filter(|c| c.verdict == Verdict::Fits)
            .count()
    }
}

/// The fit of a whole stage.
#[derive(Debug, Clone, PartialEq)]
pub struct Fit {
    /// One entry per role of the stage.
    pub roles: Vec<RoleFit>,
}

impl Fit {
    /// The fit of one role.
    #[must_use]
    pub fn role(&self, role: Role) -> Option<&RoleFit> {
        self.roles.iter().find(|r| r.role == role)
    }

    /// Whether every role has at least one fitting part.
    #[must_use]
    pub fn every_role_fits(&self) -> bool {
        self.roles.iter().all(|r| r.fits() > 0)
    }
}

/// Libraries up to this many parts keep every candidate's checks with their notes.
pub const FULL_DETAIL_PARTS: usize = 20_000;

/// In larger libraries, the candidates ranked up to this place in each role keep their checks
/// with notes; the others keep their verdict, score and headroom only (a ranking of a million
/// parts must not hold eight million checks), and [`evaluate_part`] gives any part's checks.
/// A hundred covers more than a screenful (the workbench writes the checks of the rows it
/// shows) while writing their notes stays near a millisecond an edit.
pub const DETAIL_RANKS: usize = 100;

/// Evaluates one part for one role, every check with its notes; `None` when its kind cannot
/// fill the role.
#[must_use]
pub fn evaluate_part(
    stage: &Stage,
    needs: &Needs,
    library: &Library,
    role: Role,
    index: usize,
) -> Option<Candidate> {
    evaluate_part_on(&checks::Plan::new(stage, needs), library, role, index)
}

/// [`evaluate_part`] with the plan of the stage and needs made already.
fn evaluate_part_on(
    plan: &checks::Plan,
    library: &Library,
    role: Role,
    index: usize,
) -> Option<Candidate> {
    let part: &Part = library.parts.get(index)?;
    if !kind_fits_role(plan.stage(), role, part.kind) {
        return None;
    }
    let checks = checks::written(plan, role, part);
    let mut candidate = judge(part, index, &Tally::of(&checks));
    candidate.checks = checks.into();
    Some(candidate)
}

/// A candidate's checks again, with notes, when the ranking kept only its verdict.
#[must_use]
pub fn with_checks(
    stage: &Stage,
    needs: &Needs,
    library: &Library,
    role: Role,
    candidate: &Candidate,
) -> Candidate {
    if !candidate.checks.is_empty() {
        return candidate.clone();
    }
    with_checks_on(&checks::Plan::new(stage, needs), library, role, candidate)
}

/// [`with_checks`] of a candidate without checks, with the plan made already.
fn with_checks_on(
    plan: &checks::Plan,
    library: &Library,
    role: Role,
    candidate: &Candidate,
) -> Candidate {
    let mut full =
        evaluate_part_on(plan, library, role, candidate.part).unwrap_or_else(|| candidate.clone());
    full.rank = candidate.rank;
    full
}

/// Gives every candidate that will be shown (the first `limit` of each role, or all) its
/// checks, for outputs that list them.
pub fn fill_checks(
    fit: &mut Fit,
    stage: &Stage,
    needs: &Needs,
    library: &Library,
    limit: Option<usize>,
) {
    let plan = checks::Plan::new(stage, needs);
    for role in &mut fit.roles {
        let name = role.role;
        for c in role.candidates.iter_mut().take(limit.unwrap_or(usize::MAX)) {
            if c.checks.is_empty() {
                *c = with_checks_on(&plan, library, name, c);
            }
        }
    }
}

/// A candidate's verdict, headroom and score from the tally of its checks; the checks
/// themselves are not kept (the caller keeps them when it wants the detail).
fn judge(part: &Part, index: usize, tally: &Tally) -> Candidate {
    let headroom = tally.headroom();
    let score = rank::score_with(part, tally.quantity(), headroom);
    judged(index, tally, score)
}

/// As [`judge`], the price's points taken from a ranking thread's table.
fn judge_remembering(
    part: &Part,
    index: usize,
    tally: &Tally,
    prices: &mut rank::PricePoints,
) -> Candidate {
    let points = prices.get(part.price.get());
    let score = rank::score_from(part, tally.quantity(), tally.headroom(), points);
    judged(index, tally, score)
}

fn judged(index: usize, tally: &Tally, score: f64) -> Candidate {
    Candidate {
        part: index,
        verdict: tally.verdict(),
        checks: Checks::default(),
        score,
        headroom: tally.headroom(),
        rank: 0,
    }
}

/// Parts whose memory is read ahead at once while evaluating a large library: 32 parts of
/// 200 bytes stay well inside a core's first-level cache.
const TOUCH_AHEAD: usize = 32;

/// The indices of the parts whose kind can fill `role`, in library order within each kind,
/// written into `into`.
fn role_parts_into(stage: &Stage, library: &Library, role: Role, into: &mut Vec<u32>) {
    into.clear();
    for kind in Kind::ALL {
        if kind_fits_role(stage, role, kind) {
            into.extend_from_slice(library.parts_of_kind(kind));
        }
    }
}

/// Every candidate of `role` with its checks, in library order (a small library).
fn candidates(plan: &checks::Plan, library: &Library, role: Role) -> Vec<Candidate> {
    let mut indices = Vec::new();
    role_parts_into(plan.stage(), library, role, &mut indices);
    indices
        .iter()
        .filter_map(|&i| evaluate_part_on(plan, library, role, i as usize))
        .collect()
}

/// A candidate as a large ranking first holds it, beside its sort key: the part's index,
/// the verdict and whether there is a headroom in one word, then the score and the headroom
/// as bits. 24 bytes where a [`Candidate`] takes 48.
type Brief = [u64; 3];

/// The brief of a part the role's list names but the library does not have (it cannot
/// happen: the kind lists index this library). No part's brief has all its bits set.
const NO_PART: Brief = [u64::MAX; 3];

fn brief(c: &Candidate) -> Brief {
    let verdict = u64::from(rank::group(c.verdict));
    [
        (c.part as u64 & u64::from(u32::MAX))
            | (verdict << 32)
            | (u64::from(c.headroom.is_some()) << 40),
        c.score.to_bits(),
        c.headroom.unwrap_or(0.0).to_bits(),
    ]
}

fn unbrief(b: &Brief, rank: u32) -> Candidate {
    Candidate {
        part: (b[0] & u64::from(u32::MAX)) as usize,
        verdict: verdict_of_group(b[0] >> 32),
        checks: Checks::default(),
        score: f64::from_bits(b[1]),
        headroom: ((b[0] >> 40) & 1 == 1).then(|| f64::from_bits(b[2])),
        rank,
    }
}

/// What a candidate list holds where a candidate is yet to be written.
const UNFILLED: Candidate = Candidate {
    part: 0,
    verdict: Verdict::Short,
    checks: Checks(None),
    score: 0.0,
    headroom: None,
    rank: 0,
};

/// Writes the candidates of the sorted `keys` into `list` in rank order, each from the brief
/// at the key's `position`, `threads` threads each writing its stretch of the list.
fn fill_in_rank_order<K: Copy + Sync>(
    list: &mut [Candidate],
    keys: &[K],
    briefs: &[Brief],
    position: impl Fn(K) -> usize + Sync,
    threads: usize,
) {
    let fill = |first: usize, list: &mut [Candidate], keys: &[K]| {
        for (r, (slot, &k)) in list.iter_mut().zip(keys).enumerate() {
            // Ranks stay below `limits::MAX_ROWS`, well inside u32; every position is a
            // brief's (the keys were made with them).
            *slot = unbrief(&briefs[position(k)], (first + r) as u32 + 1);
        }
    };
    let width = list.len().div_ceil(threads.max(1)).max(1);
    let fill = &fill;
    let refused = std::thread::scope(|scope| {
        let mut stretches = list.chunks_mut(width).zip(keys.chunks(width)).enumerate();
        let here = stretches.next();
        let others: Vec<_> = stretches
            .map(|(s, (list, keys))| {
                std::thread::Builder::new().spawn_scoped(scope, move || fill(s * width, list, keys))
            })
            .collect();
        if let Some((_, (list, keys))) = here {
            fill(0, list, keys);
        }
        others.into_iter().any(|h| h.is_err())
    });
    if refused {
        // The system refused a thread: its stretch is written here instead (all of them
        // again, which gives the same list).
        fill(0, list, keys);
    }
}

fn verdict_of_group(bits: u64) -> Verdict {
    match bits & 0xff {
        0 => Verdict::Fits,
        1 => Verdict::Near,
        2 => Verdict::Unknown,
        _ => Verdict::Short,
    }
}

/// Memory a large evaluation works in, kept from one evaluation to the next: the lists of
/// briefs and sort keys, and the candidate lists of fits given back with [`Spare::keep`].
/// At a million parts an evaluation fills some 60 MB; memory the system hands out afresh
/// costs a fault a page (on the workbench's worker threads, about a thousand an edit; the
/// README's performance section has the timings with and without). The workbench keeps one across edits; an evaluation without one ([`evaluate`]) starts
/// from empty memory. What is in it never
/// changes a result (a test evaluates with a used one and a new one).
#[derive(Debug, Default)]
pub struct Spare {
    parts: Vec<u32>,
    briefs: Vec<Brief>,
    keys: Vec<u128>,
    score_keys: Vec<u64>,
    merged: Vec<u128>,
    score_merged: Vec<u64>,
    /// Fits given back, their lists taken apart by the next evaluation (off the caller's
    /// thread: a million candidates take a few milliseconds to clear).
    fits: Vec<Fit>,
    lists: Vec<Vec<Candidate>>,
}

impl Spare {
    /// Fits kept at most: the workbench gives back one an edit.
    const KEPT_FITS: usize = 2;

    /// Candidate lists kept at most: a stage has five roles at most, and the lists of two fits
    /// cover the next evaluation's.
    const KEPT_LISTS: usize = 2 * Role::ALL.len();

    /// Lets go of everything kept: a library small enough to be evaluated with every check
    /// written does not use the spare, and should not hold a large one's memory.
    fn clear(&mut self) {
        *self = Spare::default();
    }

    /// Gives back a fit that is done with: its candidate lists' memory serves the next
    /// evaluation's.
    pub fn keep(&mut self, fit: Fit) {
        if self.fits.len() < Self::KEPT_FITS {
            self.fits.push(fit);
        }
    }

    /// A list of `n` candidates to overwrite: the smallest kept list that holds them, or the
    /// largest kept one grown. Its old candidates stay until overwritten, so that the threads
    /// that write the new ones also let the old ones go.
    fn list(&mut self, n: usize) -> Vec<Candidate> {
        for fit in self.fits.drain(..) {
            self.lists
                .extend(fit.roles.into_iter().map(|role| role.candidates));
        }
        self.lists.sort_by_key(Vec::capacity);
        let at = self
            .lists
            .iter()
            .position(|l| l.capacity() >= n)
            .or_else(|| self.lists.len().checked_sub(1));
        let mut list = at.map_or_else(Vec::new, |at| self.lists.remove(at));
        // The smallest lists go first: the largest serve the next evaluations best.
        let extra = self.lists.len().saturating_sub(Self::KEPT_LISTS);
        self.lists.drain(..extra);
        list.truncate(n);
        list.resize(n, UNFILLED);
        list
    }
}

/// Every candidate of `role` in a large library, evaluated and ranked by `sort` on all
/// cores, without their checks. Each core evaluates its share of the role's parts into
/// [`Brief`]s and their sort keys (the part is in cache then); the keys are sorted; the
/// candidates are written once, in rank order. The order is [`rank::rank`]'s (a test holds
/// the two equal for every sort key).
fn ranked_candidates(
    plan: &checks::Plan,
    library: &Library,
    role: Role,
    sort: SortKey,
    spare: &mut Spare,
) -> Vec<Candidate> {
    let mut indices = std::mem::take(&mut spare.parts);
    role_parts_into(plan.stage(), library, role, &mut indices);
    let threads = if indices.len() < SHARE_FROM {
        1
    } else {
        std::thread::available_parallelism()
            .map_or(1, |t| t.get())
            .min(8)
    };
    let list = ranked_candidates_on(plan, library, role, &indices, sort, threads, PIECE, spare);
    spare.parts = indices;
    list
}

/// Parts of a role dealt to one thread at a time while evaluating a large library.
const PIECE: usize = 4096;

/// A piece of a role's list: the place of its first part, the parts' indices, and where their
/// briefs and sort keys go.
type Piece<'a, K> = (usize, &'a [u32], &'a mut [Brief], &'a mut [K]);

/// Roles with at least this many candidates are evaluated on all cores: below, starting
/// threads costs more than it saves.
const SHARE_FROM: usize = 50_000;

/// A 64-bit score key that does not hold its score ([`rank::score_key`] gives none): the
/// role is then sorted by the 128-bit keys. No real key has all its bits set.
const WIDE: u64 = u64::MAX;

/// The 128-bit key of a part the library does not have: sorts after every real one
/// (positions stay below 2^23, so no real key has all its bits set).
const MISSING: u128 = u128::MAX;

/// [`ranked_candidates`] of the parts at `indices` (the role's, from [`role_parts_into`]) on
/// this many threads, dealing them pieces of `piece` parts.
#[allow(clippy::too_many_arguments)]
fn ranked_candidates_on(
    plan: &checks::Plan,
    library: &Library,
    role: Role,
    indices: &[u32],
    sort: SortKey,
    threads: usize,
    piece: usize,
    spare: &mut Spare,
) -> Vec<Candidate> {
    let n = indices.len();
    let order = library.number_order();
    let mut briefs = std::mem::take(&mut spare.briefs);
    // Every brief is written by the evaluation: only new room needs a value.
    briefs.resize(n, NO_PART);
    let mut list = spare.list(n);
    let wide_key = |c: &Candidate, part: Option<&Part>, at: usize| {
        rank::sort_key(
            sort, order, c.part, part, c.verdict, c.score, c.headroom, at,
        )
    };
    let mut wide = sort != SortKey::Score;
    if sort == SortKey::Score {
        // Sorting by score, 64 bits a key hold the same order: half the bytes to sort.
        let mut keys = std::mem::take(&mut spare.score_keys);
        keys.resize(n, WIDE);
        let key = |c: &Candidate, part: &Part, at: usize| {
            rank::score_key(wide_key(c, Some(part), at), c.score).unwrap_or(WIDE)
        };
        evaluate_shares(
            plan,
            library,
            role,
            indices,
            &mut briefs,
            &mut keys,
            WIDE,
            key,
            threads,
            piece,
        );
        if keys.contains(&WIDE) {
            wide = true;
        } else {
            rank::sort_keys_with(&mut keys, &mut spare.score_merged, threads);
            let position = rank::score_key_position;
            fill_in_rank_order(&mut list, &keys, &briefs, position, threads);
        }
        spare.score_keys = keys;
    }
    if wide {
        let mut keys = std::mem::take(&mut spare.keys);
        keys.resize(n, MISSING);
        if sort == SortKey::Score {
            // A score beyond the 64-bit key's reach: the wide keys, made from the briefs.
            for (at, (b, k)) in briefs.iter().zip(keys.iter_mut()).enumerate() {
                // The score key reads no part.
                *k = if *b == NO_PART {
                    MISSING
                } else {
                    wide_key(&unbrief(b, 0), None, at)
                };
            }
        } else {
            let key = |c: &Candidate, part: &Part, at: usize| wide_key(c, Some(part), at);
            evaluate_shares(
                plan,
                library,
                role,
                indices,
                &mut briefs,
                &mut keys,
                MISSING,
                key,
                threads,
                piece,
            );
        }
        rank::sort_keys_with(&mut keys, &mut spare.merged, threads);
        // Parts the library does not have sort last, and are left out.
        let there = keys.partition_point(|&k| k != MISSING);
        list.truncate(there);
        fill_in_rank_order(&mut list, &keys[..there], &briefs, rank::position, threads);
        spare.keys = keys;
    }
    spare.briefs = briefs;
    list
}

/// Evaluates the parts at `indices` into their briefs and sort keys (`key` of the candidate,
/// the part and its place in the list; `missing` for a part the library does not have), on
/// `threads` threads dealt pieces of `piece` parts in turn.
#[allow(clippy::too_many_arguments)]
fn evaluate_shares<K: Copy + Send + Sync>(
    plan: &checks::Plan,
    library: &Library,
    role: Role,
    indices: &[u32],
    briefs: &mut [Brief],
    keys: &mut [K],
    missing: K,
    key: impl Fn(&Candidate, &Part, usize) -> K + Sync,
    threads: usize,
    piece: usize,
) {
    let piece = piece.max(1);
    let scan = |first: usize,
                indices: &[u32],
                briefs: &mut [Brief],
                keys: &mut [K],
                prices: &mut rank::PricePoints| {
        let blocks = indices
            .chunks(TOUCH_AHEAD)
            .zip(briefs.chunks_mut(TOUCH_AHEAD))
            .zip(keys.chunks_mut(TOUCH_AHEAD));
        let mut position = first;
        for ((indices, briefs), keys) in blocks {
            // Read a few bytes of each part of the block first, in a loop short enough that
            // the processor has all their cache misses in flight at once; the checks then
            // find the parts in cache. Without this half the checks' time is spent waiting
            // on memory, one part after the other.
            let mut touched = 0u8;
            for &i in indices {
                if let Some(part) = library.parts.get(i as usize) {
                    touched ^= part.status as u8
                        ^ u8::from(part.stock.is_some())
                        ^ u8::from(part.price.get().is_some())
                        ^ u8::from(matches!(part.ratings, Ratings::Bjt(_)));
                }
            }
            std::hint::black_box(touched);
            for ((&i, brief_slot), key_slot) in indices.iter().zip(briefs).zip(keys) {
                // The key's position is the brief's place, whether or not the part is there.
                let at = position;
                position += 1;
                let Some(part) = library.parts.get(i as usize) else {
                    *brief_slot = NO_PART;
                    *key_slot = missing;
                    continue;
                };
                let tally = checks::tally(plan, role, part);
                let c = judge_remembering(part, i as usize, &tally, prices);
                *brief_slot = brief(&c);
                *key_slot = key(&c, part, at);
            }
        }
    };
    // The role's list is cut in pieces dealt to the threads in turn, so that each thread gets
    // a like mix of kinds (a BJT and a MOSFET do not cost the same to check).
    let finished = threads > 1 && {
        let mut shares: Vec<Vec<Piece<K>>> = (0..threads).map(|_| Vec::new()).collect();
        let pieces = indices
            .chunks(piece)
            .zip(briefs.chunks_mut(piece))
            .zip(keys.chunks_mut(piece))
            .enumerate();
        for (p, ((indices, briefs), keys)) in pieces {
            shares[p % threads].push((p * piece, indices, briefs, keys));
        }
        let scan = &scan;
        std::thread::scope(|scope| {
            let handles: Vec<_> = shares
                .into_iter()
                .map(|share| {
                    std::thread::Builder::new().spawn_scoped(scope, move || {
                        let mut prices = rank::PricePoints::new();
                        for (first, indices, briefs, keys) in share {
                            scan(first, indices, briefs, keys, &mut prices);
                        }
                    })
                })
                .collect();
            // A scan thread only evaluates parts and cannot panic on library data, but the
            // system may refuse a thread: then the whole role is evaluated on this one.
            handles
                .into_iter()
                .all(|h| h.is_ok_and(|h| h.join().is_ok()))
        })
    };
    if !finished {
        scan(0, indices, briefs, keys, &mut rank::PricePoints::new());
    }
}

/// Evaluates every part of the library for every role of the stage and ranks each role by
/// `sort`. In libraries over [`FULL_DETAIL_PARTS`] parts only the first [`DETAIL_RANKS`] of each
/// role keep their checks.
#[must_use]
pub fn evaluate(stage: &Stage, needs: &Needs, library: &Library, sort: SortKey) -> Fit {
    evaluate_with(stage, needs, library, sort, &mut Spare::default())
}

/// [`evaluate`], working in the memory of `spare` (kept for the next evaluation): the same
/// fit, sooner when the spare has served a library of this size before.
#[must_use]
pub fn evaluate_with(
    stage: &Stage,
    needs: &Needs,
    library: &Library,
    sort: SortKey,
    spare: &mut Spare,
) -> Fit {
    let detail = library.parts.len() <= FULL_DETAIL_PARTS;
    if detail {
        spare.clear();
    }
    let plan = checks::Plan::new(stage, needs);
    let roles = roles(stage)
        .into_iter()
        .map(|role| {
            let candidates = if detail {
                let mut candidates = candidates(&plan, library, role);
                rank::rank(&mut candidates, library, sort);
                candidates
            } else {
                let mut candidates = ranked_candidates(&plan, library, role, sort, spare);
                for c in candidates.iter_mut().take(DETAIL_RANKS) {
                    *c = with_checks_on(&plan, library, role, c);
                }
                candidates
            };
            // The needs this role's parts are held against, in the needs' order. In a large
            // library only the first places have their checks, and they may all be of one
            // kind: the first part of every kind of the role is looked at as well.
            let mut seen: Vec<&'static str> = Vec::new();
            let mut note = |checks: &[Check]| {
                for k in checks {
                    if !seen.contains(&k.need) {
                        seen.push(k.need);
                    }
                }
            };
            let with_checks = if detail { usize::MAX } else { DETAIL_RANKS };
            for c in candidates.iter().take(with_checks) {
                note(&c.checks);
            }
            if !detail {
                let firsts = Kind::ALL
                    .into_iter()
                    .filter(|&kind| kind_fits_role(stage, role, kind))
                    .filter_map(|kind| library.parts_of_kind(kind).first());
                for &i in firsts {
                    if let Some(c) = evaluate_part_on(&plan, library, role, i as usize) {
                        note(&c.checks);
                    }
                }
            }
            let needs_checked = needs
                .needs
                .iter()
                .map(|n| n.id)
                .filter(|id| seen.contains(id))
                .collect();
            RoleFit {
                role,
                needs: needs_checked,
                candidates,
            }
        })
        .collect();
    Fit { roles }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn check(verdict: CheckVerdict, headroom: Option<f64>) -> Check {
        Check {
            need: "x.y",
            rating_name: "r",
            rating: None,
            required: None,
            dim: Dim::Volt,
            bound: Bound::Min,
            verdict,
            headroom,
            note: Cow::Borrowed(""),
        }
    }

    /// DESIGN.md: fit = all pass; near = exactly one short by at most 10 %, the rest pass;
    /// unknown = nothing short, something missing; short otherwise.
    #[test]
    fn verdicts_follow_the_design() {
        use CheckVerdict::{Pass, Short, Unknown};
        let pass = check(Pass, Some(1.5));
        assert_eq!(Verdict::of(&[pass.clone(), pass.clone()]), Verdict::Fits);
        assert_eq!(
            Verdict::of(&[pass.clone(), check(Short, Some(0.95))]),
            Verdict::Near
        );
        assert_eq!(
            Verdict::of(&[pass.clone(), check(Short, Some(0.90))]),
            Verdict::Near
        );
        assert_eq!(
            Verdict::of(&[pass.clone(), check(Short, Some(0.80))]),
            Verdict::Short
        );
        assert_eq!(
            Verdict::of(&[check(Short, Some(0.95)), check(Short, Some(0.95))]),
            Verdict::Short
        );
        assert_eq!(
            Verdict::of(&[pass.clone(), check(Unknown, None)]),
            Verdict::Unknown
        );
        assert_eq!(
            Verdict::of(&[check(Short, Some(0.95)), check(Unknown, None)]),
            Verdict::Short
        );
        assert_eq!(Verdict::of(&[check(Short, None)]), Verdict::Short);
    }

    /// A million candidates are held at once: each stays at 48 bytes (72 before the checks
    /// became a single pointer and the rank 32 bits).
    #[test]
    fn a_candidate_is_small() {
        assert!(std::mem::size_of::<Candidate>() <= 48);
    }

    /// A large library's ranking (evaluated in shares, keys sorted, candidates written once)
    /// gives the same list as evaluating every part with its checks and ranking with
    /// [`rank::rank`], for every sort key, on one to three threads dealt pieces of any size.
    #[test]
    fn large_ranking_equals_the_full_one() {
        let library = crate::synthetic::library(6_000, 5).expect("the generated library reads");
        // One spare for every ranking below: lists of other roles and sort keys in it,
        // longer and shorter than the next one, never change a result.
        let mut spare = Spare::default();
        for stage_text in [
            include_str!("../data/stages/door-strike.toml"),
            include_str!("../data/stages/mains-pump-relay.toml"),
        ] {
            let stage = Stage::from_toml(stage_text, "stage.toml").expect("a demo stage");
            let needs = crate::needs::compute(&stage, Some(&library));
            let plan = checks::Plan::new(&stage, &needs);
            for role in roles(&stage) {
                for sort in SortKey::ALL {
                    let mut full = candidates(&plan, &library, role);
                    rank::rank(&mut full, &library, sort);
                    for c in &mut full {
                        c.checks = Checks::default();
                    }
                    assert!(!full.is_empty(), "{role:?}");
                    let mut indices = Vec::new();
                    role_parts_into(&stage, &library, role, &mut indices);
                    for (threads, piece) in [(1, PIECE), (2, PIECE), (2, 100), (3, 7)] {
                        let large = ranked_candidates_on(
                            &plan, &library, role, &indices, sort, threads, piece, &mut spare,
                        );
                        assert_eq!(large, full, "{role:?} by {sort:?}, {threads} threads");
                        spare.keep(Fit {
                            roles: vec![RoleFit {
                                role,
                                needs: Vec::new(),
                                candidates: large,
                            }],
                        });
                    }
                }
            }
        }
    }

    /// An evaluation in a used spare gives the fit an evaluation in new memory gives, for
    /// stages whose roles are longer and shorter than the last, and every sort key.
    #[test]
    fn a_used_spare_changes_nothing() {
        let library = crate::synthetic::library(30_000, 3).expect("the generated library reads");
        let mut spare = Spare::default();
        for stage_text in [
            include_str!("../data/stages/door-strike.toml"),
            include_str!("../data/stages/mains-pump-relay.toml"),
            include_str!("../data/stages/cabinet-light-sensor.toml"),
            include_str!("../data/stages/door-strike.toml"),
        ] {
            let stage = Stage::from_toml(stage_text, "stage.toml").expect("a demo stage");
            let needs = crate::needs::compute(&stage, Some(&library));
            for sort in SortKey::ALL {
                let fresh = evaluate(&stage, &needs, &library, sort);
                let reused = evaluate_with(&stage, &needs, &library, sort, &mut spare);
                assert_eq!(reused, fresh, "by {sort:?}");
                spare.keep(reused);
                assert!(spare.lists.len() <= Spare::KEPT_LISTS);
            }
        }
        // A library small enough for every check to be written lets the large one's memory go.
        let demo = Library::demo();
        let stage = Stage::from_toml(
            include_str!("../data/stages/door-strike.toml"),
            "door-strike.toml",
        )
        .expect("a demo stage");
        let needs = crate::needs::compute(&stage, Some(&demo));
        let small = evaluate_with(&stage, &needs, &demo, SortKey::Score, &mut spare);
        assert_eq!(small, evaluate(&stage, &needs, &demo, SortKey::Score));
        assert!(spare.fits.is_empty() && spare.lists.is_empty());
        assert_eq!(spare.briefs.capacity() + spare.score_keys.capacity(), 0);
    }

    /// A score the 64-bit key cannot hold (a price beyond reason) sorts by the 128-bit key:
    /// the ranking is still the full one.
    #[test]
    fn a_score_beyond_the_narrow_key_ranks_as_the_full_one() {
        let mut library = crate::synthetic::library(3_000, 9).expect("the generated library reads");
        let stage = Stage::from_toml(
            include_str!("../data/stages/door-strike.toml"),
            "door-strike.toml",
        )
        .expect("a demo stage");
        let dear = library.parts_of_kind(Kind::Npn)[0] as usize;
        library.parts[dear].price = crate::library::Rating::of(1e300);
        let needs = crate::needs::compute(&stage, Some(&library));
        let plan = checks::Plan::new(&stage, &needs);
        let mut full = candidates(&plan, &library, Role::Switch);
        rank::rank(&mut full, &library, SortKey::Score);
        for c in &mut full {
            c.checks = Checks::default();
        }
        assert!(
            full.iter().any(|c| c.part == dear && c.score < -3276.7),
            "the dear part scores beyond the narrow key"
        );
        let mut indices = Vec::new();
        role_parts_into(&stage, &library, Role::Switch, &mut indices);
        for threads in [1, 2] {
            let large = ranked_candidates_on(
                &plan,
                &library,
                Role::Switch,
                &indices,
                SortKey::Score,
                threads,
                PIECE,
                &mut Spare::default(),
            );
            assert_eq!(large, full, "{threads} threads");
        }
    }
}
