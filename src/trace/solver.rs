//! A stiff-safe transient solver for a switch node with one load state.
//!
//! The network has two unknowns: the node voltage `v` (across the stray capacitance C) and
//! the load's state `q` (a coil's current or a capacitor's voltage):
//!
//! ```text
//! dq/dt = p0 + p1 q + p2 v                        (linear: the load)
//! C dv/dt = l(v) + beta q - g(v)                  (the node: load current in, switch and clamp out)
//! ```
//!
//! with `l` non-increasing and `g` increasing (the junctions). Steps use the second-order
//! backward differentiation formula on a variable grid (backward Euler for the first step
//! after each switching event): it is L-stable enough that the nanosecond time constant of a
//! conducting diode against the stray capacitance does not force nanosecond steps over
//! milliseconds. Within a step `q` is linear in `v`, which leaves one monotone equation in
//! `v`; it is solved by Newton's method with junction limiting inside a bracket, so it always
//! converges. The step size follows an estimate of the local truncation error from divided
//! differences of the last four points.

use thiserror::Error;

/// What the solver needs from a circuit.
pub trait Network {
    /// The capacitance at the node, F (positive).
    fn capacitance(&self) -> f64;
    /// (p0, p1, p2) of dq/dt = p0 + p1 q + p2 v.
    fn state(&self) -> (f64, f64, f64);
    /// The part of the load current that depends on `v` alone, and its derivative (≤ 0).
    fn load(&self, v: f64) -> (f64, f64);
    /// The load current's factor on `q`.
    fn beta(&self) -> f64;
    /// The current leaving the node through the switch (`on` or off) and the clamp, and its
    /// derivative (> 0).
    fn node(&self, v: f64, on: bool) -> (f64, f64);
    /// A Newton iterate from `v_old` towards `v_new`, shortened where a junction would leap
    /// up its exponential.
    fn limit(&self, v_old: f64, v_new: f64) -> f64;
}

/// Why a transient could not be computed.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum SolverError {
    /// The step size fell below the smallest allowed: the circuit changes faster than the
    /// solver can follow.
    #[error("the step size fell below {h:.3e} s at t = {t:.6e} s")]
    StepTooSmall {
        /// Where.
        t: f64,
        /// The smallest step allowed.
        h: f64,
    },
    /// More steps than allowed.
    #[error("more than {steps} steps by t = {t:.6e} s")]
    TooManySteps {
        /// Where it stopped.
        t: f64,
        /// The limit.
        steps: usize,
    },
    /// No consistent node voltage at the start.
    #[error("no operating point: the node equation has no solution at the start")]
    NoOperatingPoint,
}

/// Error tolerances: a step is accepted when its estimated local error is below
/// `rtol |y| + atol` in both unknowns.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Tolerance {
    /// Relative tolerance.
    pub rtol: f64,
    /// Absolute tolerance of the node voltage, V.
    pub atol_v: f64,
    /// Absolute tolerance of the load state (A or V).
    pub atol_q: f64,
}

/// Limits on the run.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Limits {
    /// The largest step, s.
    pub h_max: f64,
    /// The smallest step, s; below it the run fails.
    pub h_min: f64,
    /// The first step after each switching event, s.
    pub h_start: f64,
    /// The most steps, accepted and rejected together.
    pub max_steps: usize,
}

/// One accepted point of the solution.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Point {
    /// Time, s.
    pub t: f64,
    /// Node voltage, V.
    pub v: f64,
    /// Load state.
    pub q: f64,
}

/// The most Newton iterations in one step before the step is retried smaller.
const MAX_NEWTON: usize = 100;

/// The transient solver, advanced event by event.
pub struct Solver<'a, N: Network> {
    net: &'a N,
    tol: Tolerance,
    limits: Limits,
    on: bool,
    /// The accepted points since the last event, newest last (at most four kept).
    history: Vec<Point>,
    /// The next step to try.
    h: f64,
    /// Every accepted point.
    pub points: Vec<Point>,
    /// Steps accepted.
    pub accepted: usize,
    /// Steps rejected (error too large or Newton not converged).
    pub rejected: usize,
    /// A voltage scale for convergence tests (the supply).
    v_scale: f64,
}

impl<'a, N: Network> Solver<'a, N> {
    /// Starts at `t0` with the switch `on` and the load state `q0`, or, with `q0` `None`, at
    /// the circuit's steady state (dq/dt = 0).
    ///
    /// # Errors
    /// [`SolverError::NoOperatingPoint`] when no node voltage satisfies the node equation.
    pub fn start(
        net: &'a N,
        t0: f64,
        on: bool,
        q0: Option<f64>,
        v_scale: f64,
        tol: Tolerance,
        limits: Limits,
    ) -> Result<Solver<'a, N>, SolverError> {
        let (p0, p1, p2) = net.state();
        let beta = net.beta();
        // With q given the node equation holds q fixed; at steady state q follows v.
        let (q_a, q_b) = match q0 {
            Some(q) => (q, 0.0),
            None if p1 != 0.0 => (-p0 / p1, -p2 / p1),
            None => (0.0, 0.0),
        };
        let residual = |v: f64| {
            let (l, dl) = net.load(v);
            let (g, dg) = net.node(v, on);
            (g - l - beta * (q_a + q_b * v), dg - dl - beta * q_b)
        };
        let v = solve_monotone(residual, |a, b| net.limit(a, b), v_scale, v_scale)
            .ok_or(SolverError::NoOperatingPoint)?;
        let first = Point {
            t: t0,
            v,
            q: q_a + q_b * v,
        };
        Ok(Solver {
            net,
            tol,
            limits,
            on,
            history: vec![first],
            h: limits.h_start,
            points: vec![first],
            accepted: 0,
            rejected: 0,
            v_scale,
        })
    }

    /// The newest point.
    #[must_use]
    pub fn last(&self) -> Point {
        // `history` is never empty: `start` puts a point in and nothing removes the newest.
        self.history[self.history.len() - 1]
    }

    /// Turns the switch on or off at the current time: the solution's history restarts, since
    /// the derivatives jump there.
    pub fn switch(&mut self, on: bool) {
        if on == self.on {
            return;
        }
        self.on = on;
        let last = self.last();
        self.history.clear();
        self.history.push(last);
        self.h = self.limits.h_start;
    }

    /// Advances to exactly `target`.
    ///
    /// # Errors
    /// [`SolverError::StepTooSmall`] when the error control or Newton's method drives the step
    /// below the smallest allowed; [`SolverError::TooManySteps`] past the step limit.
    pub fn advance_to(&mut self, target: f64) -> Result<(), SolverError> {
        loop {
            let now = self.last().t;
            let left = target - now;
            if left <= self.limits.h_min * 0.5 {
                return Ok(());
            }
            if self.accepted + self.rejected >= self.limits.max_steps {
                return Err(SolverError::TooManySteps {
                    t: now,
                    steps: self.limits.max_steps,
                });
            }
            let mut h = self.h.min(self.limits.h_max);
            // Land on the target exactly, without leaving a sliver of a step before it.
            let landing = if h >= left {
                h = left;
                true
            } else {
                if 2.0 * h > left {
                    h = 0.5 * left;
                }
                false
            };
            match self.try_step(h) {
                Some((mut point, err, order)) => {
                    if landing {
                        point.t = target;
                    }
                    // At the smallest step the error control gives way: an edge faster than
                    // the clock can resolve at this time is stepped over, which the
                    // L-stable start (backward Euler) does without ringing.
                    if err > 1.0 && h > self.limits.h_min {
                        self.reject(h, err, order)?;
                        continue;
                    }
                    self.accept(point, h, err, order);
                }
                None => self.reject(h, 16.0, 2)?,
            }
        }
    }

    /// A failed step: the next try is smaller, down to the smallest step; a step that fails
    /// at the smallest is an error.
    fn reject(&mut self, h: f64, err: f64, order: i32) -> Result<(), SolverError> {
        self.rejected += 1;
        let shrink = (0.9 * err.powf(-1.0 / f64::from(order + 1))).clamp(0.1, 0.5);
        self.h = (h * shrink).max(self.limits.h_min);
        if h <= self.limits.h_min {
            return Err(SolverError::StepTooSmall {
                t: self.last().t,
                h: self.limits.h_min,
            });
        }
        Ok(())
    }

    fn accept(&mut self, point: Point, h: f64, err: f64, order: i32) {
        self.accepted += 1;
        if self.history.len() == 4 {
            self.history.remove(0);
        }
        self.history.push(point);
        self.points.push(point);
        // The growth is capped at 2: variable-step BDF2 stays zero-stable below 1 + √2.
        let grow = if err > 0.0 {
            (0.9 * err.powf(-1.0 / f64::from(order + 1))).clamp(0.5, 2.0)
        } else {
            2.0
        };
        self.h = h * grow;
    }

    /// One step of size `h`: the new point and its error relative to the tolerance (0 when
    /// there is not yet history enough to estimate it), or `None` when Newton's method did
    /// not converge.
    fn try_step(&self, h: f64) -> Option<(Point, f64, i32)> {
        let n = self.history.len();
        let newest = self.history[n - 1];
        // Coefficients of y_{n+1} = a y_n + b y_{n-1} + h γ f(y_{n+1}).
        // Backward Euler until three points follow the event: a BDF2 step whose history
        // spans an unresolved stiff edge would overshoot it.
        let (a, b, gamma, prev) = if n >= 3 {
            let prev = self.history[n - 2];
            let w = h / (newest.t - prev.t);
            let d = 1.0 + 2.0 * w;
            (
                (1.0 + w).powi(2) / d,
                -(w * w) / d,
                (1.0 + w) / d,
                Some(prev),
            )
        } else {
            (1.0, 0.0, 1.0, None)
        };
        let (v_hist, q_hist) = match prev {
            Some(p) => (a * newest.v + b * p.v, a * newest.q + b * p.q),
            None => (newest.v, newest.q),
        };
        let prev = prev.or_else(|| (n >= 2).then(|| self.history[n - 2]));
        let hg = h * gamma;
        let (p0, p1, p2) = self.net.state();
        let beta = self.net.beta();
        let c = self.net.capacitance();
        // q = q_a + q_b v, from the load's (linear) step equation.
        let denominator = 1.0 - hg * p1;
        let q_a = (q_hist + hg * p0) / denominator;
        let q_b = hg * p2 / denominator;
        let on = self.on;
        let net = self.net;
        let residual = |v: f64| {
            let (l, dl) = net.load(v);
            let (g, dg) = net.node(v, on);
            let i = l + beta * (q_a + q_b * v) - g;
            let di = dl + beta * q_b - dg;
            (c * (v - v_hist) - hg * i, c - hg * di)
        };
        // Linear extrapolation from the last two points is the first guess.
        let guess = match prev {
            Some(p) => newest.v + (newest.v - p.v) * h / (newest.t - p.t),
            None => newest.v,
        };
        let v = solve_monotone(residual, |x, y| net.limit(x, y), guess, self.v_scale)?;
        let point = Point {
            t: newest.t + h,
            v,
            q: q_a + q_b * v,
        };
        let (err, order) = self.error(point, h, a, b);
        Some((point, err, order))
    }

    /// The estimated local error of `point` against the tolerance, and the order of the
    /// step. For BDF2, (a h³ + b (h + h₁)³) / 6 · y''' with y''' from the third divided
    /// difference of the last four points (the formula's residual on a cubic); for backward
    /// Euler, h² / 2 · y'' from the second divided difference of the last three. The first
    /// step after an event has no estimate (0).
    fn error(&self, point: Point, h: f64, a: f64, b: f64) -> (f64, i32) {
        let n = self.history.len();
        let scaled = |ev: f64, eq: f64| {
            let err = (ev / (self.tol.rtol * point.v.abs() + self.tol.atol_v))
                .max(eq / (self.tol.rtol * point.q.abs() + self.tol.atol_q));
            if err.is_finite() { err } else { f64::INFINITY }
        };
        match n {
            0 | 1 => (0.0, 1),
            2 => {
                let p = [self.history[0], self.history[1], point];
                let second = |y: [f64; 3]| {
                    let d1 = (y[1] - y[0]) / (p[1].t - p[0].t);
                    let d2 = (y[2] - y[1]) / (p[2].t - p[1].t);
                    2.0 * (d2 - d1) / (p[2].t - p[0].t)
                };
                let factor = 0.5 * h * h;
                let ev = factor * second([p[0].v, p[1].v, p[2].v]).abs();
                let eq = factor * second([p[0].q, p[1].q, p[2].q]).abs();
                (scaled(ev, eq), 1)
            }
            _ => {
                let p = [
                    self.history[n - 3],
                    self.history[n - 2],
                    self.history[n - 1],
                    point,
                ];
                let h1 = p[2].t - p[1].t;
                let factor = (a * h.powi(3) + b * (h + h1).powi(3)).abs() / 6.0;
                let third = |y: [f64; 4]| {
                    let t = [p[0].t, p[1].t, p[2].t, p[3].t];
                    let d1 = [
                        (y[1] - y[0]) / (t[1] - t[0]),
                        (y[2] - y[1]) / (t[2] - t[1]),
                        (y[3] - y[2]) / (t[3] - t[2]),
                    ];
                    let d2 = [
                        (d1[1] - d1[0]) / (t[2] - t[0]),
                        (d1[2] - d1[1]) / (t[3] - t[1]),
                    ];
                    6.0 * (d2[1] - d2[0]) / (t[3] - t[0])
                };
                let ev = factor * third([p[0].v, p[1].v, p[2].v, p[3].v]).abs();
                let eq = factor * third([p[0].q, p[1].q, p[2].q, p[3].q]).abs();
                (scaled(ev, eq), 2)
            }
        }
    }
}

/// The root of an increasing function `f` (value, derivative), from `guess`: Newton's method
/// with `limit` applied to each iterate, inside the bracket the signs seen so far give. An
/// iterate outside the bracket, or a bracket that has not halved in three iterations (Newton
/// creeping down an exponential from above), is replaced by bisection; with only one side
/// known for long, the search steps out to find the other. `scale` sets the convergence test
/// (1e-10 × (|v| + scale)) and the first step out. `None` when it does not converge.
pub fn solve_monotone(
    f: impl Fn(f64) -> (f64, f64),
    limit: impl Fn(f64, f64) -> f64,
    guess: f64,
    scale: f64,
) -> Option<f64> {
    let scale = scale.abs().max(1e-3);
    let mut v = guess;
    let mut lo = f64::NEG_INFINITY;
    let mut hi = f64::INFINITY;
    let mut widen = 0.1 * scale;
    let mut one_sided = 0;
    let mut since_check = 0;
    let mut width_at_check = f64::INFINITY;
    for _ in 0..MAX_NEWTON {
        let (y, dy) = f(v);
        if !y.is_finite() {
            return None;
        }
        if y == 0.0 {
            return Some(v);
        }
        // Every iterate lies inside the bracket, so it replaces the side its sign says.
        if y < 0.0 {
            lo = v;
        } else {
            hi = v;
        }
        let tolerance = 1e-10 * (v.abs() + scale);
        let bracketed = lo.is_finite() && hi.is_finite();
        if bracketed && hi - lo <= tolerance {
            return Some(0.5 * (lo + hi));
        }
        let newton = if dy > 0.0 && dy.is_finite() {
            v - y / dy
        } else {
            f64::NAN
        };
        let limited = if newton.is_finite() {
            limit(v, newton)
        } else {
            newton
        };
        let mut bisect = false;
        if bracketed {
            one_sided = 0;
            since_check += 1;
            if since_check >= 3 {
                bisect = hi - lo > 0.5 * width_at_check;
                width_at_check = hi - lo;
                since_check = 0;
            }
        } else {
            one_sided += 1;
        }
        let next = if !bisect && one_sided <= 4 && limited > lo && limited < hi {
            limited
        } else if bracketed {
            0.5 * (lo + hi)
        } else {
            widen *= 2.0;
            if y < 0.0 { v + widen } else { v - widen }
        };
        if next == newton && (next - v).abs() <= tolerance {
            return Some(next);
        }
        v = next;
    }
    None
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A plain R-C from a step, no junctions: dq/dt = (1 - q - v)/τ-like with the node tied to
    /// ground through a stiff conductance.
    struct Rc {
        r: f64,
        c: f64,
    }

    impl Network for Rc {
        fn capacitance(&self) -> f64 {
            1e-12
        }
        fn state(&self) -> (f64, f64, f64) {
            let k = 1.0 / (self.r * self.c);
            (k, -k, -k)
        }
        fn load(&self, v: f64) -> (f64, f64) {
            ((1.0 - v) / self.r, -1.0 / self.r)
        }
        fn beta(&self) -> f64 {
            -1.0 / self.r
        }
        fn node(&self, v: f64, on: bool) -> (f64, f64) {
            let g = if on { 1e3 } else { 1e-12 };
            (g * v, g)
        }
        fn limit(&self, _: f64, v: f64) -> f64 {
            v
        }
    }

    fn tolerance() -> Tolerance {
        Tolerance {
            rtol: 1e-5,
            atol_v: 1e-8,
            atol_q: 1e-8,
        }
    }

    /// First-order step response, circuit theory: q(t) = 1 - e^(-t/τ) (the node is held at
    /// about 1 mV by a 1 mΩ switch, hence the 0.1 % allowance on τ).
    #[test]
    fn rc_step_follows_the_exponential() {
        let net = Rc { r: 1.0, c: 1.0 };
        let limits = Limits {
            h_max: 0.05,
            h_min: 1e-15,
            h_start: 1e-9,
            max_steps: 100_000,
        };
        let mut s = Solver::start(&net, 0.0, false, Some(0.0), 1.0, tolerance(), limits)
            .unwrap_or_else(|e| panic!("{e}"));
        s.switch(true);
        s.advance_to(5.0).unwrap_or_else(|e| panic!("{e}"));
        let tau = 1.0 + 1e-3;
        for p in &s.points {
            let expected = 1.0 - (-p.t / tau).exp();
            assert!(
                (p.q - expected).abs() < 2e-4,
                "t {}: {} vs {expected}",
                p.t,
                p.q
            );
        }
        assert!((s.last().t - 5.0).abs() < 1e-15);
        assert!(s.accepted < 2000, "{} steps", s.accepted);
    }

    #[test]
    fn monotone_solver_finds_an_exponential_root() {
        // 1e-6 e^(v/0.05) - 1, the exponential continued as its tangent past e^80 as the
        // junctions are, from far below and far above.
        let f = |v: f64| {
            let x = v / 0.05;
            let (e, de) = if x <= 80.0 {
                (x.exp(), x.exp())
            } else {
                (80f64.exp() * (1.0 + x - 80.0), 80f64.exp())
            };
            (1e-6 * e - 1.0, 1e-6 * de / 0.05)
        };
        let root = 0.05 * 1e6f64.ln();
        for guess in [-100.0, 0.0, 5.0, 100.0] {
            let v = solve_monotone(f, |_, b| b, guess, 1.0);
            assert!(v.is_some_and(|v| (v - root).abs() < 1e-8), "{guess}: {v:?}");
        }
    }
}
