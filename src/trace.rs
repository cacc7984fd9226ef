//! Trace: the switching waveforms of a stage — the voltage across the switch and the current in
//! the load against time — with the figures read off them, for the stage as assumed and for
//! one candidate part.
//!
//! [`simulate`] builds the circuit from the stage (and the part, in whichever role it fills),
//! runs a transient through the switching edge and measures it. The models (issue 9):
//! - the switch is a saturated resistance when on (VCE(sat) at the load current for a BJT,
//!   RDS(on) for a MOSFET) and open when off, breaking down at its VCEO or VDS when a part
//!   gives one; below ground it conducts as a silicon junction (a body diode, or a BJT's
//!   collector-base junction);
//! - the clamp diode is a Shockley junction, IS and N from the part's VF at IF (N 1.8) or the
//!   defaults IS 1 nA, N 1.8; a zener is a breakdown at VZ carrying 1 mA there;
//! - the switch node has a stray capacitance to ground ([`Options::stray`], 100 pF unless
//!   told), which sets the unclamped ring when nothing breaks down;
//! - the supply is at the top of its tolerance, as the needs take it.
//!
//! The solver (`trace/solver.rs`) is implicit (variable-step BDF2) with error control, so the
//! nanosecond edges and the millisecond decays of one trace cost a few thousand steps.
//! [`report`] writes a trace as JSON, CSV and text; [`svg`] draws it for a review.

mod circuit;
mod junction;
pub mod report;
mod solver;
pub mod svg;

pub use solver::SolverError;

use crate::fit::Role;
use crate::library::{Library, Part};
use crate::needs::{Needs, Problem, Severity, ids};
use crate::stage::{LoadType, Stage};
use crate::units::{Dim, Farads, format_eng};
use circuit::{Built, LoadModel, Release, build, role_of};
use solver::{Limits, Point, Solver, Tolerance};
use thiserror::Error;

/// The stray capacitance at the switch node when none is given: 100 pF, the figure
/// REFERENCES.md's unclamped stage is simulated with (wiring, the switch's own output
/// capacitance and the coil's winding capacitance together; common practice).
pub const DEFAULT_STRAY: Farads = Farads(100e-12);

/// Saturation current of the clamp diode when no part gives its VF (REFERENCES.md).
pub const DEFAULT_CLAMP_IS: f64 = 1e-9;

/// Emission coefficient of the clamp diode, with or without a part (REFERENCES.md); with a
/// part, IS is fitted so the diode gives the part's VF at its IF.
pub const CLAMP_N: f64 = 1.8;

/// The current a zener, or a switch in breakdown, carries at its rated voltage: 1 mA, a
/// typical zener test current and the IBV a SPICE diode model of a zener is given.
pub const BREAKDOWN_CURRENT: f64 = 1e-3;

/// Saturation current of the junction that conducts when the switch node goes below ground
/// (emission coefficient 1): a small silicon junction, about 0.7 V at 10 mA (common practice).
pub const REVERSE_IS: f64 = 1e-14;

/// The on-resistance of a switch with no drop given (a MOSFET before a part is chosen): small
/// enough to be ideal, large enough to keep the equations well scaled.
pub const R_ON_MIN: f64 = 1e-3;

/// How many points the JSON output keeps ([`decimate`]d, peaks kept).
pub const OUTPUT_POINTS: usize = 4000;

/// Settings of a trace.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Options {
    /// The stray capacitance from the switch node to ground.
    pub stray: Farads,
    /// The most solver steps, accepted and rejected together, before the trace gives up.
    pub max_steps: usize,
}

impl Default for Options {
    fn default() -> Self {
        Options {
            stray: DEFAULT_STRAY,
            max_steps: 200_000,
        }
    }
}

/// The voltage rating drawn across the voltage plot: the traced switch part's VCEO or VDS.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RatingLine {
    /// The rating's trade name, `VCEO` or `VDS`.
    pub name: &'static str,
    /// Its value, V.
    pub volts: f64,
}

/// A computed trace: the waveforms, the figures read off them and what was modelled.
#[derive(Debug, Clone, PartialEq)]
pub struct Trace {
    /// The stage's title.
    pub stage: String,
    /// The part traced, when one was given.
    pub part: Option<String>,
    /// The role that part fills.
    pub role: Option<Role>,
    /// The load.
    pub load: LoadType,
    /// The supply the trace runs at (Vs_max), V.
    pub supply: f64,
    /// The highest voltage across the switch, V (after switch-off for a coil).
    pub peak_voltage: Option<f64>,
    /// When the peak occurs, s.
    pub peak_time: Option<f64>,
    /// Energy into the clamp at each switch-off, J; with no clamp, the energy into the switch
    /// in breakdown. `None` when nothing absorbs it (no clamp, and no part to break down) or
    /// the load is not a coil.
    pub clamp_energy: Option<f64>,
    /// Energy into the switch while off, J (breakdown and reverse conduction); coils only.
    pub switch_energy: Option<f64>,
    /// Time from switch-off for the coil current to fall to [`Trace::release_current`], s.
    pub release_time: Option<f64>,
    /// The coil current at which the load lets go: the relay's must-release voltage / R, else
    /// 10 % of the on-state current, A.
    pub release_current: Option<f64>,
    /// The load current with the switch on, in steady state (coil) or at its peak (R-C), A.
    pub on_current: f64,
    /// 10-90 % rise of the load voltage after switch-on, s (R-C loads).
    pub rise_time: Option<f64>,
    /// Time from switch-on for the load voltage to settle within e⁻⁵ (0.67 %) of its final
    /// value, the 5 τ of a first-order load, s (R-C loads).
    pub settle_time: Option<f64>,
    /// When the switch turns on, s (none for a coil: it starts on, in steady state).
    pub switch_on: Option<f64>,
    /// When the switch turns off, s (none for an R-C load: it is only switched on).
    pub switch_off: Option<f64>,
    /// The traced switch part's voltage rating, for the line across the voltage plot.
    pub rating: Option<RatingLine>,
    /// (t s, voltage across the switch V, load current A), in time order, every solver point.
    pub points: Vec<[f64; 3]>,
    /// (t s, capacitor voltage V) for an R-C load, in time order; empty otherwise.
    pub load_voltage: Vec<[f64; 2]>,
    /// What the trace found that needs attention (the spike over the rating, an unbounded ring).
    pub problems: Vec<Problem>,
    /// What was simulated, one line an element, for the reader of the plot.
    pub model: Vec<String>,
    /// Solver steps accepted.
    pub steps: usize,
    /// Solver steps rejected and retried.
    pub rejected: usize,
}

impl Trace {
    /// Whether any problem is an error (the switch breaks down, the ring is unbounded).
    #[must_use]
    pub fn has_errors(&self) -> bool {
        self.problems.iter().any(|p| p.severity == Severity::Error)
    }

    /// Where to mark the release on the current plot: (time, current).
    #[must_use]
    pub fn release_marker(&self) -> Option<(f64, f64)> {
        Some((self.switch_off? + self.release_time?, self.release_current?))
    }

    /// Where to mark the peak on the voltage plot: (time, voltage).
    #[must_use]
    pub fn peak_marker(&self) -> Option<(f64, f64)> {
        Some((self.peak_time?, self.peak_voltage?))
    }

    /// (t, voltage across the switch), for a chart of the voltage alone.
    #[must_use]
    pub fn voltage(&self) -> Vec<[f64; 2]> {
        self.points.iter().map(|p| [p[0], p[1]]).collect()
    }

    /// (t, load current), for a chart of the current alone.
    #[must_use]
    pub fn current(&self) -> Vec<[f64; 2]> {
        self.points.iter().map(|p| [p[0], p[2]]).collect()
    }
}

/// Why a trace cannot be computed.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum TraceError {
    /// A figure the circuit needs is not given.
    #[error("{0}")]
    Missing(String),
    /// The part cannot be traced in this stage.
    #[error("{part}: {why}")]
    Part {
        /// The part number.
        part: String,
        /// Why, and what to do.
        why: String,
    },
    /// The settings are out of range.
    #[error("{0}")]
    Options(String),
    /// The solver could not follow the circuit.
    #[error(
        "the waveform could not be computed ({0}); check the stage's figures for values many decades apart"
    )]
    Solver(#[from] SolverError),
}

/// The trace of `stage` with the default [`Options`]; `part`, when given, is a candidate for
/// one of the stage's roles (switch, clamp, zener or relay) and replaces the stage's
/// assumptions for that role. `library` supplies the relay the stage names.
///
/// # Errors
/// [`TraceError::Missing`] when the load lacks a figure the circuit needs (a coil's
/// inductance); [`TraceError::Part`] when the part fills no role of the stage that changes
/// the waveform; [`TraceError::Solver`] when the transient cannot be computed.
pub fn simulate(
    stage: &Stage,
    needs: &Needs,
    library: &Library,
    part: Option<&Part>,
) -> Result<Trace, TraceError> {
    simulate_with(stage, needs, library, part, &Options::default())
}

/// As [`simulate`], with `options`.
///
/// # Errors
/// As [`simulate`], and [`TraceError::Options`] for a stray capacitance that is not a
/// positive number or a step limit of zero.
pub fn simulate_with(
    stage: &Stage,
    needs: &Needs,
    library: &Library,
    part: Option<&Part>,
    options: &Options,
) -> Result<Trace, TraceError> {
    let stray = options.stray.0;
    if !(stray.is_finite() && stray > 0.0) {
        return Err(TraceError::Options(format!(
            "the stray capacitance must be a positive capacitance, not {}",
            options.stray
        )));
    }
    if options.max_steps == 0 {
        return Err(TraceError::Options(
            "the step limit must be at least 1".to_string(),
        ));
    }
    let role = part.map(|p| role_of(stage, p)).transpose()?;
    let built = build(stage, needs, library, part, role, stray)?;
    if !(built.end.is_finite() && built.end > 0.0 && built.cap.is_finite()) {
        return Err(TraceError::Missing(
            "the load's figures give no time scale to trace over (a value out of range?); check [load]".to_string(),
        ));
    }
    let mut trace = run(&built, options)?;
    trace.stage = stage.title.clone();
    trace.part = part.map(|p| p.number.to_string());
    trace.role = role;
    trace.load = stage.load.kind;
    judge(&mut trace, &built, stage);
    Ok(trace)
}

/// Runs the transient and reads the figures off it.
fn run(built: &Built, options: &Options) -> Result<Trace, TraceError> {
    let c = &built.circuit;
    let vs = c.vs;
    let window = built.end;
    // The current the load carries when on: the scale of the load state's tolerance and of
    // the node's fastest edge.
    let i_scale = match c.load {
        LoadModel::Coil { r, .. } | LoadModel::Resistive { r } | LoadModel::Rc { r, .. } => {
            vs / (r + c.r_on)
        }
        // An LED whose drop exceeds the supply carries nothing; its scale is still the supply's.
        LoadModel::Led { r, vf } => ((vs - vf) / (r + c.r_on)).max(vs / r * 1e-3),
    };
    let q_scale = match c.load {
        LoadModel::Coil { .. } => i_scale,
        _ => vs,
    };
    // The node swings the supply in C Vs / I: the first step after an edge is a thousandth,
    // but no less than the clock can resolve at the end of the run (64 units in the last
    // place: an edge faster than that is stepped over).
    let edge = c.stray * vs / i_scale.max(1e-12);
    let resolution = 64.0 * f64::EPSILON * built.cap.max(window);
    let h_start = (1e-3 * edge).min(1e-9 * window).max(resolution);
    let tol = Tolerance {
        rtol: 1e-4,
        atol_v: 1e-5 * vs,
        atol_q: 1e-5 * q_scale,
    };
    let limits = Limits {
        h_max: window / 500.0,
        h_min: (1e-6 * h_start).max(resolution),
        h_start,
        max_steps: options.max_steps,
    };
    let q0 = if built.start_on { None } else { Some(0.0) };
    let mut solver = Solver::start(c, 0.0, built.start_on, q0, vs, tol, limits)?;
    let on_state = solver.last();
    for &(t, on) in &built.events {
        solver.advance_to(t)?;
        solver.switch(on);
    }
    solver.advance_to(built.end)?;

    let switch_off = built.events.iter().find(|e| !e.1).map(|e| e.0);
    let switch_on = built.events.iter().find(|e| e.1).map(|e| e.0);
    let coil = matches!(c.load, LoadModel::Coil { .. });
    let off_index = switch_off.map_or(0, |t| solver.points.partition_point(|p| p.t < t));
    // A coil's on-state current is the one at switch-off (it starts on, in steady state);
    // another load's is its largest (an R-C load's peak charging current).
    let i_off = if coil {
        solver
            .points
            .get(off_index)
            .map_or(on_state.q, |p| c.load_current(p.v, p.q))
    } else {
        solver
            .points
            .iter()
            .map(|p| c.load_current(p.v, p.q))
            .fold(0.0, f64::max)
    };
    let release_current = match built.release {
        Release::None => None,
        Release::Current(i) => Some(i),
        Release::Fraction(f) => Some(f * i_off),
    };
    if coil && let (Some(level), Some(_)) = (release_current, switch_off) {
        // Stretch the run until the current is down to the release level (a decay slower
        // than the estimate), within the cap.
        let mut from = off_index;
        while crossing_down(&solver.points[from..], level, |p| p.q).is_none() {
            let now = solver.last().t;
            if now >= built.cap {
                break;
            }
            from = solver.points.len() - 1;
            solver.advance_to((now + window).min(built.cap))?;
        }
    }
    let points_raw = &solver.points;

    let mut trace = Trace {
        stage: String::new(),
        part: None,
        role: None,
        load: LoadType::Resistive,
        supply: vs,
        peak_voltage: None,
        peak_time: None,
        clamp_energy: None,
        switch_energy: None,
        release_time: None,
        release_current,
        on_current: i_off,
        rise_time: None,
        settle_time: None,
        switch_on,
        switch_off,
        rating: built.rating,
        points: points_raw
            .iter()
            .map(|p| [p.t, p.v, c.load_current(p.v, p.q)])
            .collect(),
        load_voltage: Vec::new(),
        problems: built.problems.clone(),
        model: built.model.clone(),
        steps: solver.accepted,
        rejected: solver.rejected,
    };

    // The peak: after switch-off for a coil, anywhere otherwise.
    let peak_from = if coil { off_index } else { 0 };
    if let Some(p) = points_raw[peak_from..]
        .iter()
        .max_by(|a, b| a.v.total_cmp(&b.v))
    {
        trace.peak_voltage = Some(p.v);
        trace.peak_time = Some(p.t);
    }

    if coil && let Some(t_off) = switch_off {
        let after = &points_raw[off_index..];
        let clamp_power = |p: &Point| {
            let i = c.clamp_current(p.v);
            (p.v - vs) * i
        };
        let switch_power = |p: &Point| p.v * c.switch_current(p.v, false).0;
        // Below a billionth of what the coil holds an energy is leakage (1 pS, a blocked
        // junction), not absorption: shown as zero.
        let stored = match c.load {
            LoadModel::Coil { l, .. } => 0.5 * l * i_off * i_off,
            _ => 0.0,
        };
        let significant = |e: f64| if e.abs() < 1e-9 * stored { 0.0 } else { e };
        let e_clamp = c.clamp.map(|_| significant(integrate(after, clamp_power)));
        let e_switch = significant(integrate(after, switch_power));
        trace.switch_energy = Some(e_switch);
        trace.clamp_energy = match (e_clamp, c.breakdown) {
            (Some(e), _) => Some(e),
            (None, Some(_)) => Some(e_switch),
            (None, None) => None,
        };
        if let Some(level) = release_current {
            trace.release_time = crossing_down(after, level, |p| p.q).map(|t| t - t_off);
        }
    }

    if let (LoadModel::Rc { .. }, Some(t_on)) = (c.load, switch_on) {
        trace.load_voltage = points_raw.iter().map(|p| [p.t, p.q]).collect();
        let from = points_raw.partition_point(|p| p.t < t_on);
        let after = &points_raw[from..];
        // The capacitor starts empty and ends at the supply (no current flows at the end).
        let final_v = vs;
        let t10 = crossing_up(after, 0.1 * final_v, |p| p.q);
        let t90 = crossing_up(after, 0.9 * final_v, |p| p.q);
        if let (Some(a), Some(b)) = (t10, t90) {
            trace.rise_time = Some(b - a);
        }
        trace.settle_time =
            crossing_up(after, (1.0 - (-5.0f64).exp()) * final_v, |p| p.q).map(|t| t - t_on);
    }
    Ok(trace)
}

/// ∫ power dt over the points, by the trapezoid rule.
fn integrate(points: &[Point], power: impl Fn(&Point) -> f64) -> f64 {
    points
        .windows(2)
        .map(|w| 0.5 * (power(&w[0]) + power(&w[1])) * (w[1].t - w[0].t))
        .sum()
}

/// The first time `value` falls to `level` or below, linearly interpolated.
fn crossing_down(points: &[Point], level: f64, value: impl Fn(&Point) -> f64) -> Option<f64> {
    crossing(points, |p| level - value(p))
}

/// The first time `value` rises to `level` or above, linearly interpolated.
fn crossing_up(points: &[Point], level: f64, value: impl Fn(&Point) -> f64) -> Option<f64> {
    crossing(points, |p| value(p) - level)
}

/// The first time `f` reaches zero from below, linearly interpolated.
fn crossing(points: &[Point], f: impl Fn(&Point) -> f64) -> Option<f64> {
    let first = points.first()?;
    if f(first) >= 0.0 {
        return Some(first.t);
    }
    points.windows(2).find_map(|w| {
        let (a, b) = (f(&w[0]), f(&w[1]));
        (b >= 0.0).then(|| w[0].t + (w[1].t - w[0].t) * (-a) / (b - a))
    })
}

/// The problems the figures show: the spike over the part's rating, an unbounded ring, a
/// release that never comes.
fn judge(trace: &mut Trace, built: &Built, stage: &Stage) {
    let Some(peak) = trace.peak_voltage else {
        return;
    };
    let coil = stage.load.kind.is_coil();
    let shown_peak = format_eng(peak, Dim::Volt);
    let mut add = |severity, need, message| {
        trace.problems.push(Problem {
            severity,
            need,
            message,
        });
    };
    if coil && built.circuit.clamp.is_none() && built.circuit.breakdown.is_none() {
        let energy = match built.circuit.load {
            LoadModel::Coil { l, .. } => 0.5 * l * trace.on_current * trace.on_current,
            _ => f64::NAN,
        };
        add(
            Severity::Error,
            Some(ids::SWITCH_OFF_PEAK),
            format!(
                "no clamp: with an ideal switch the coil rings up to {shown_peak} against the {} stray capacitance; a real switch breaks down first and takes up to ½ L IL² = {} at every switch-off. Add a clamp ([clamp] type = \"diode\"), or trace a switch part to see its breakdown",
                format_eng(built.circuit.stray, Dim::Farad),
                format_eng(energy, Dim::Joule)
            ),
        );
    }
    if let Some(rating) = trace.rating {
        let who = built.part.as_deref().unwrap_or("the switch");
        let shown_rating = format!("{} {}", rating.name, format_eng(rating.volts, Dim::Volt));
        if peak >= rating.volts {
            let energy = trace.switch_energy.map_or(String::new(), |e| {
                format!(
                    "; it takes {} at every switch-off",
                    format_eng(e, Dim::Joule)
                )
            });
            add(
                Severity::Error,
                Some(ids::SWITCH_VOLTAGE),
                format!(
                    "{who} breaks down: the voltage across it reaches {shown_peak}, its {shown_rating}{energy}. Clamp the coil, or choose a part rated higher"
                ),
            );
        } else if peak > rating.volts * stage.rules.voltage_derating {
            add(
                Severity::Warning,
                Some(ids::SWITCH_VOLTAGE),
                format!(
                    "the peak {shown_peak} is {:.0} % of {who}'s {shown_rating}, above the {:.0} % the voltage derating allows",
                    100.0 * peak / rating.volts,
                    100.0 * stage.rules.voltage_derating
                ),
            );
        }
    }
    if coil
        && trace.release_time.is_none()
        && let Some(level) = trace.release_current
    {
        add(
            Severity::Warning,
            Some(ids::COIL_RELEASE_TIME),
            format!(
                "the coil current did not fall to the release current {} within the trace",
                format_eng(level, Dim::Amp)
            ),
        );
    }
}

/// At most `n` of `points`, for a chart or an output: the time span is cut into equal
/// buckets and each bucket keeps the points holding the smallest and the largest value of
/// every channel (columns 1..N), in time order, so spikes survive however far the points are
/// thinned. The first and last points are always kept. With `n` at least the number of points
/// they are returned unchanged. A chart `w` cells wide plotting one channel
/// (`[t, value]`) asks for about `2 w`.
#[must_use]
pub fn decimate<const N: usize>(points: &[[f64; N]], n: usize) -> Vec<[f64; N]> {
    if points.len() <= n || N < 2 {
        return points.to_vec();
    }
    let per_bucket = 2 * (N - 1);
    if n < per_bucket + 2 {
        // Too few to keep a bucket's extremes: the ends, and the middle if there is room.
        let mut out = vec![points[0]];
        if n >= 3 {
            out.push(points[points.len() / 2]);
        }
        if n >= 2 {
            out.push(points[points.len() - 1]);
        }
        out.truncate(n);
        return out;
    }
    let buckets = (n - 2) / per_bucket;
    let t0 = points[0][0];
    let span = points[points.len() - 1][0] - t0;
    let mut keep: Vec<usize> = Vec::with_capacity(n);
    keep.push(0);
    let mut start = 1;
    let last = points.len() - 1;
    for b in 0..buckets {
        let limit = if b + 1 == buckets {
            last
        } else {
            let edge = t0 + span * (b + 1) as f64 / buckets as f64;
            start + points[start..last].partition_point(|p| p[0] < edge)
        };
        if limit > start {
            let mut chosen: Vec<usize> = Vec::with_capacity(per_bucket);
            for k in 1..N {
                let slice = &points[start..limit];
                let (mut lo, mut hi) = (0, 0);
                for (j, p) in slice.iter().enumerate() {
                    if p[k] < slice[lo][k] {
                        lo = j;
                    }
                    if p[k] > slice[hi][k] {
                        hi = j;
                    }
                }
                chosen.push(start + lo);
                chosen.push(start + hi);
            }
            chosen.sort_unstable();
            chosen.dedup();
            keep.extend(chosen);
        }
        start = limit;
    }
    keep.push(last);
    keep.dedup();
    keep.into_iter().map(|i| points[i]).collect()
}

#[cfg(test)]
mod tests;
