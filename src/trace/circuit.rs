//! The circuit a trace simulates: the supply, the load between the supply and the switch node,
//! the switch from that node to ground, the clamp from the node back to the supply, and the
//! stray capacitance at the node.
//!
//! Every nonlinear element is a [`Junction`]: an exponential of the voltage across it, which
//! covers a Shockley diode, a zener (or a switch) in breakdown and a diode in series with a
//! zener. All of them are monotone, so the one nonlinear equation of each time step (the node
//! voltage) has exactly one root and the solver can bracket it.
//!
//! A high-side switch (PNP, P-MOSFET) is the mirror image of a low-side one: the same voltage
//! across the switch and the same load current, so both are built as the low-side circuit.
//!
//! [`build`] puts the circuit together from the stage and, when given, the candidate part in
//! the role it fills, and plans the run (when the switch turns on or off, how long to watch).

use super::junction::{Junction, VT};
use super::solver::Network;
use super::{
    BREAKDOWN_CURRENT, CLAMP_N, DEFAULT_CLAMP_IS, R_ON_MIN, REVERSE_IS, RatingLine, TraceError,
};
use crate::fit::{self, Role};
use crate::library::{Kind, Library, Part, Relay};
use crate::needs::{Needs, Problem, Severity, ids};
use crate::stage::{ClampType, DriveSource, LoadType, Stage};
use crate::units::{Dim, format_eng, format_number};

/// Conductance of an open switch and of a blocked LED: 1 pS, the smallest conductance SPICE
/// simulators put across a junction, so the node is never left without a path to ground.
pub const G_OFF: f64 = 1e-12;

/// What sits between the supply and the switch node.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum LoadModel {
    /// A resistance.
    Resistive {
        /// Ω.
        r: f64,
    },
    /// An LED with its series resistor, the LED as a fixed forward drop.
    Led {
        /// The series resistor, Ω.
        r: f64,
        /// The LED's forward voltage, V.
        vf: f64,
    },
    /// A capacitor charged through a series resistance; the state is the capacitor voltage.
    Rc {
        /// Ω.
        r: f64,
        /// F.
        c: f64,
    },
    /// A coil: resistance and inductance in series; the state is the coil current.
    Coil {
        /// Ω.
        r: f64,
        /// H.
        l: f64,
    },
}

/// The whole circuit, in SI units.
#[derive(Debug, Clone, PartialEq)]
pub struct Circuit {
    /// The supply voltage.
    pub vs: f64,
    /// The stray capacitance from the switch node to ground.
    pub stray: f64,
    /// The load.
    pub load: LoadModel,
    /// The switch's resistance when on (saturated BJT or enhanced MOSFET).
    pub r_on: f64,
    /// The switch's breakdown (VCEO, VDS), when a part gives it.
    pub breakdown: Option<Junction>,
    /// The junction that conducts when the node goes below ground: a MOSFET's body diode, a
    /// BJT's collector-base junction (base held near ground by its drive).
    pub reverse: Junction,
    /// The clamp from the node to the supply, when there is one.
    pub clamp: Option<Junction>,
}

impl Circuit {
    /// The clamp's current (node to supply) at node voltage `v`.
    #[must_use]
    pub fn clamp_current(&self, v: f64) -> f64 {
        self.clamp.map_or(0.0, |j| j.current(v - self.vs).0)
    }

    /// The switch's current (node to ground) at node voltage `v`, on or off, with its
    /// derivative.
    #[must_use]
    pub fn switch_current(&self, v: f64, on: bool) -> (f64, f64) {
        let (mut i, mut g) = if on {
            (v / self.r_on, 1.0 / self.r_on)
        } else {
            (G_OFF * v, G_OFF)
        };
        if let Some(b) = self.breakdown {
            let (bi, bg) = b.current(v);
            i += bi;
            g += bg;
        }
        let (ri, rg) = self.reverse.current(-v);
        (i - ri, g + rg)
    }

    /// The load current (supply into the node) at node voltage `v` and load state `q`.
    #[must_use]
    pub fn load_current(&self, v: f64, q: f64) -> f64 {
        let (l, _) = self.load(v);
        l + self.beta() * q
    }
}

impl Network for Circuit {
    fn capacitance(&self) -> f64 {
        self.stray
    }

    fn state(&self) -> (f64, f64, f64) {
        match self.load {
            // L di/dt = Vs - R i - v
            LoadModel::Coil { r, l } => (self.vs / l, -r / l, -1.0 / l),
            // C dvc/dt = (Vs - vc - v) / R
            LoadModel::Rc { r, c } => {
                let k = 1.0 / (r * c);
                (self.vs * k, -k, -k)
            }
            LoadModel::Resistive { .. } | LoadModel::Led { .. } => (0.0, 0.0, 0.0),
        }
    }

    fn load(&self, v: f64) -> (f64, f64) {
        match self.load {
            LoadModel::Coil { .. } => (0.0, 0.0),
            LoadModel::Rc { r, .. } | LoadModel::Resistive { r } => ((self.vs - v) / r, -1.0 / r),
            LoadModel::Led { r, vf } => {
                let drive = self.vs - vf - v;
                if drive > 0.0 {
                    (drive / r, -1.0 / r)
                } else {
                    (G_OFF * drive, -G_OFF)
                }
            }
        }
    }

    fn beta(&self) -> f64 {
        match self.load {
            LoadModel::Coil { .. } => 1.0,
            LoadModel::Rc { r, .. } => -1.0 / r,
            LoadModel::Resistive { .. } | LoadModel::Led { .. } => 0.0,
        }
    }

    fn node(&self, v: f64, on: bool) -> (f64, f64) {
        let (mut i, mut g) = self.switch_current(v, on);
        if let Some(c) = self.clamp {
            let (ci, cg) = c.current(v - self.vs);
            i += ci;
            g += cg;
        }
        (i, g)
    }

    fn limit(&self, v_old: f64, v_new: f64) -> f64 {
        // Each junction proposes its limited step; the most cautious one (closest to the old
        // iterate) is taken.
        let mut best = v_new;
        let mut consider = |candidate: f64| {
            if (candidate - v_old).abs() < (best - v_old).abs() {
                best = candidate;
            }
        };
        if let Some(c) = self.clamp {
            consider(c.limit(v_old - self.vs, v_new - self.vs, 1.0) + self.vs);
        }
        if let Some(b) = self.breakdown {
            consider(b.limit(v_old, v_new, 1.0));
        }
        consider(self.reverse.limit(v_old, v_new, -1.0));
        best
    }
}

/// The role `part` fills in `stage`.
pub fn role_of(stage: &Stage, part: &Part) -> Result<Role, TraceError> {
    let refuse = |why: String| TraceError::Part {
        part: part.number.to_string(),
        why,
    };
    let role = fit::roles(stage)
        .into_iter()
        .find(|&r| fit::kind_fits_role(stage, r, part.kind));
    match role {
        Some(Role::Sensor) => Err(refuse(
            "a photocell sets when the stage switches, not how the switching edge looks; trace a switch, clamp, zener or relay part".to_string(),
        )),
        Some(role) => Ok(role),
        None => {
            let roles: Vec<&str> = fit::roles(stage)
                .into_iter()
                .filter(|r| *r != Role::Sensor)
                .map(Role::name)
                .collect();
            Err(refuse(format!(
                "a {} fills no role of this stage (it has: {}); name a part of a kind the stage uses",
                part.kind,
                roles.join(", ")
            )))
        }
    }
}

/// The circuit and the plan of the run.
pub struct Built {
    /// The circuit.
    pub circuit: Circuit,
    /// Start with the switch on, in steady state (coils), or off with the load at rest.
    pub start_on: bool,
    /// Switching events (time, on).
    pub events: Vec<(f64, bool)>,
    /// The end of the planned window.
    pub end: f64,
    /// For a coil: how far the run may be stretched to reach the release current.
    pub cap: f64,
    /// For a coil: the release current, or the fraction of the on-state current it is.
    pub release: Release,
    /// What was modelled, one line an element.
    pub model: Vec<String>,
    /// Problems found while building (a rating the part does not give).
    pub problems: Vec<Problem>,
    /// The switch part's voltage rating.
    pub rating: Option<RatingLine>,
    /// The traced part's number, for messages.
    pub part: Option<String>,
}

/// The coil current at which the load lets go.
#[derive(Debug, Clone, Copy)]
pub enum Release {
    /// Not a coil.
    None,
    /// A fixed current (the relay's must-release voltage / R).
    Current(f64),
    /// A fraction of the on-state current.
    Fraction(f64),
}

/// The coil's figures: resistance, inductance and the must-release voltage, each from the
/// candidate relay, the stage or the relay the stage names.
fn coil_figures(
    stage: &Stage,
    library: &Library,
    part: Option<&Part>,
    role: Option<Role>,
    model: &mut Vec<String>,
) -> Result<(f64, f64, Option<f64>), TraceError> {
    let load = &stage.load;
    let named = load
        .relay
        .as_deref()
        .filter(|_| load.kind == LoadType::Relay)
        .and_then(|n| library.find(n))
        .filter(|p| p.kind == Kind::Relay);
    let candidate = part.filter(|_| role == Some(Role::Relay));
    fn rated(p: Option<&Part>) -> Option<&Relay> {
        p.and_then(Part::relay)
    }
    let (r, l) = match candidate {
        // A candidate's own coil is what makes its trace differ from the stage's.
        Some(c) => {
            let own = rated(Some(c));
            (
                own.and_then(|x| x.coil_r.get())
                    .or(load.resistance.map(|r| r.0)),
                own.and_then(|x| x.coil_l.get())
                    .or(load.inductance.map(|l| l.0)),
            )
        }
        // The stage's own figures first, as the needs take them.
        None => (
            load.resistance
                .map(|r| r.0)
                .or(rated(named).and_then(|x| x.coil_r.get())),
            load.inductance
                .map(|l| l.0)
                .or(rated(named).and_then(|x| x.coil_l.get())),
        ),
    };
    let release_v = rated(candidate.or(named)).and_then(|x| x.must_release_v.get());
    let r = r.filter(|r| *r > 0.0).ok_or_else(|| {
        TraceError::Missing(
            "the coil resistance is unknown: give [load] resistance, or a relay part with coil_r"
                .to_string(),
        )
    })?;
    let l = l.filter(|l| *l > 0.0).ok_or_else(|| {
        TraceError::Missing(
            "the coil's inductance is unknown, so there is no switch-off to trace: give [load] inductance (e.g. inductance = \"100 mH\") or a relay part with coil_l".to_string(),
        )
    })?;
    let from = match candidate {
        Some(c) => format!(" ({}'s coil where it gives one)", c.number),
        None => String::new(),
    };
    model.push(format!(
        "load: coil {}, {}{from}; τ = L/R = {}",
        format_eng(r, Dim::Ohm),
        format_eng(l, Dim::Henry),
        format_eng(l / r, Dim::Second)
    ));
    Ok((r, l, release_v))
}

/// The load's model, without the switch.
fn load_model(
    stage: &Stage,
    needs: &Needs,
    library: &Library,
    part: Option<&Part>,
    role: Option<Role>,
    model: &mut Vec<String>,
) -> Result<(LoadModel, Option<f64>), TraceError> {
    let load = &stage.load;
    let missing = |what: &str| TraceError::Missing(what.to_string());
    Ok(match load.kind {
        LoadType::Inductive | LoadType::Relay => {
            let (r, l, release_v) = coil_figures(stage, library, part, role, model)?;
            (LoadModel::Coil { r, l }, release_v)
        }
        LoadType::Capacitive => {
            let r = load
                .resistance
                .ok_or_else(|| missing("a capacitive load needs [load] resistance"))?
                .0;
            let c = load
                .capacitance
                .ok_or_else(|| missing("a capacitive load needs [load] capacitance"))?
                .0;
            model.push(format!(
                "load: {} charging {}; τ = R C = {}",
                format_eng(r, Dim::Ohm),
                format_eng(c, Dim::Farad),
                format_eng(r * c, Dim::Second)
            ));
            (LoadModel::Rc { r, c }, None)
        }
        LoadType::Resistive => {
            let r = load
                .resistance
                .ok_or_else(|| missing("a resistive load needs [load] resistance"))?
                .0;
            model.push(format!("load: {}", format_eng(r, Dim::Ohm)));
            (LoadModel::Resistive { r }, None)
        }
        LoadType::Led => {
            let vf = load
                .led_vf
                .ok_or_else(|| missing("an LED load needs [load] led_vf"))?
                .0;
            let r = needs.value(ids::LOAD_SERIES_RESISTOR).ok_or_else(|| {
                missing("the LED's series resistor could not be computed (see `loadfit needs`)")
            })?;
            model.push(format!(
                "load: LED as a fixed {} drop, with the series resistor {}",
                format_eng(vf, Dim::Volt),
                format_eng(r, Dim::Ohm)
            ));
            (LoadModel::Led { r, vf }, None)
        }
    })
}

/// The switch's on-state drop and where it comes from; its rating line when a part gives one.
fn switch_figures(
    stage: &Stage,
    part: Option<&Part>,
    role: Option<Role>,
    problems: &mut Vec<Problem>,
) -> (SwitchOn, Option<RatingLine>) {
    let assumed = stage.v_sat().0;
    let Some(p) = part.filter(|_| role == Some(Role::Switch)) else {
        let why = if assumed > 0.0 {
            "assume.vce_sat"
        } else {
            "an ideal switch until a part is chosen"
        };
        return (SwitchOn::Drop(assumed, why.to_string()), None);
    };
    let mut missing_rating = |name: &str| {
        problems.push(Problem {
            severity: Severity::Warning,
            need: Some(ids::SWITCH_VOLTAGE),
            message: format!(
                "{} gives no {name}: its breakdown is not modelled, so the trace cannot show the spike crossing it",
                p.number
            ),
        });
    };
    if let Some(b) = p.bjt() {
        let rating = b.vceo.get().filter(|v| *v > 0.0).map(|volts| RatingLine {
            name: "VCEO",
            volts,
        });
        if rating.is_none() {
            missing_rating("vceo");
        }
        let on = match b.vce_sat.get().filter(|v| *v >= 0.0) {
            Some(v) => SwitchOn::Drop(v, format!("{}'s VCE(sat)", p.number)),
            None => SwitchOn::Drop(
                stage.assume.vce_sat.0,
                format!("assume.vce_sat: {} gives no vce_sat", p.number),
            ),
        };
        return (on, rating);
    }
    if let Some(m) = p.mosfet() {
        let rating = m
            .vds
            .get()
            .filter(|v| *v > 0.0)
            .map(|volts| RatingLine { name: "VDS", volts });
        if rating.is_none() {
            missing_rating("vds");
        }
        let on = match m.rds_on.get().filter(|r| *r > 0.0) {
            Some(r) => SwitchOn::Resistance(r, format!("{}'s RDS(on)", p.number)),
            None => SwitchOn::Drop(
                0.0,
                format!("an ideal switch: {} gives no rds_on", p.number),
            ),
        };
        return (on, rating);
    }
    // `role_of` only gives the switch role to a transistor.
    (SwitchOn::Drop(assumed, "assume.vce_sat".to_string()), None)
}

/// How the switch's on-state is given.
enum SwitchOn {
    /// A voltage drop at the load current (VCE(sat)), with its source.
    Drop(f64, String),
    /// A resistance (RDS(on)), with its source.
    Resistance(f64, String),
}

/// The clamp junction, from the candidate diode or zener, the stage, or the defaults.
fn clamp_junction(
    stage: &Stage,
    part: Option<&Part>,
    role: Option<Role>,
    current: f64,
    model: &mut Vec<String>,
) -> Result<Option<Junction>, TraceError> {
    if stage.clamp.kind == ClampType::None {
        return Ok(None);
    }
    let mut is = DEFAULT_CLAMP_IS;
    let mut how = format!(
        "IS {}, N {} (the defaults)",
        format_eng(DEFAULT_CLAMP_IS, Dim::Amp),
        format_number(CLAMP_N)
    );
    if let Some(p) = part.filter(|_| role == Some(Role::Clamp))
        && let Some(d) = p.diode()
    {
        match d.vf.get().filter(|v| *v > 0.0) {
            Some(vf) => {
                let (at, where_) = match (d.vf_at_if.get(), d.if_avg.get()) {
                    (Some(i), _) if i > 0.0 => (i, "vf_at_if"),
                    (_, Some(i)) if i > 0.0 => (i, "if_avg, as no vf_at_if is given"),
                    _ => (current, "the load current, as no vf_at_if is given"),
                };
                let fitted = at / ((vf / (CLAMP_N * VT)).exp() - 1.0);
                if fitted.is_finite() && fitted > 0.0 {
                    is = fitted;
                    how = format!(
                        "IS {}, N {} (fitted to {}'s VF {} at {}, {where_})",
                        format_eng(is, Dim::Amp),
                        format_number(CLAMP_N),
                        p.number,
                        format_eng(vf, Dim::Volt),
                        format_eng(at, Dim::Amp)
                    );
                }
            }
            None => {
                how = format!(
                    "IS {}, N {} (the defaults: {} gives no vf)",
                    format_eng(DEFAULT_CLAMP_IS, Dim::Amp),
                    format_number(CLAMP_N),
                    p.number
                );
            }
        }
    }
    if stage.clamp.kind == ClampType::Diode {
        model.push(format!("clamp: diode across the coil, {how}"));
        return Ok(Some(Junction::diode(is, CLAMP_N)));
    }
    let zener_part = part
        .filter(|_| role == Some(Role::Zener))
        .and_then(|p| Some((p, p.diode()?.vz.get().filter(|v| *v > 0.0)?)));
    let (vz, vz_from) = match (zener_part, stage.clamp.zener_volts) {
        (Some((p, vz)), _) => (vz, format!("{}'s VZ", p.number)),
        (None, Some(vz)) => (vz.0, "[clamp] zener_volts".to_string()),
        (None, None) => {
            return Err(TraceError::Missing(
                "a zener clamp needs [clamp] zener_volts".to_string(),
            ));
        }
    };
    model.push(format!(
        "clamp: diode ({how}) in series with a {} zener ({vz_from}), {} at VZ",
        format_eng(vz, Dim::Volt),
        format_eng(BREAKDOWN_CURRENT, Dim::Amp)
    ));
    Ok(Some(Junction::diode_and_zener(
        is,
        CLAMP_N,
        vz,
        BREAKDOWN_CURRENT,
    )))
}

/// Builds the circuit and the plan of the run.
///
/// # Errors
/// [`TraceError::Missing`] when the load lacks a figure the circuit needs.
pub fn build(
    stage: &Stage,
    needs: &Needs,
    library: &Library,
    part: Option<&Part>,
    role: Option<Role>,
    stray: f64,
) -> Result<Built, TraceError> {
    let mut model = Vec::new();
    let mut problems = Vec::new();
    let vs = stage.supply.max().0;
    if vs.is_nan() || vs <= 0.0 {
        return Err(TraceError::Missing(
            "the supply must be above 0 V to trace".to_string(),
        ));
    }
    model.push(format!(
        "supply {} (Vs_max, the top of the supply's tolerance)",
        format_eng(vs, Dim::Volt)
    ));
    let (load, release_v) = load_model(stage, needs, library, part, role, &mut model)?;
    let (on, rating) = switch_figures(stage, part, role, &mut problems);
    // The load current the on-state figure is given at.
    let (r_on, on_line) = match on {
        SwitchOn::Resistance(r, from) => (r, format!("{} ({from})", format_eng(r, Dim::Ohm))),
        SwitchOn::Drop(drop, from) => {
            let at = match load {
                LoadModel::Led { .. } => stage.load.led_current.map_or(f64::NAN, |i| i.0),
                LoadModel::Coil { r, .. }
                | LoadModel::Rc { r, .. }
                | LoadModel::Resistive { r } => (vs - drop) / r,
            };
            if drop > 0.0 && (at.is_nan() || at <= 0.0) {
                return Err(TraceError::Missing(format!(
                    "the supply ({}) does not exceed the switch's drop ({}): no current can flow",
                    format_eng(vs, Dim::Volt),
                    format_eng(drop, Dim::Volt)
                )));
            }
            let r = if drop > 0.0 { drop / at } else { 0.0 };
            (
                r.max(R_ON_MIN),
                format!(
                    "{} ({} at {}, {from})",
                    format_eng(r.max(R_ON_MIN), Dim::Ohm),
                    format_eng(drop, Dim::Volt),
                    format_eng(at, Dim::Amp)
                ),
            )
        }
    };
    model.push(format!("switch on: a saturated resistance {on_line}"));
    let breakdown = rating.map(|r| Junction::breakdown(r.volts, BREAKDOWN_CURRENT));
    model.push(match rating {
        Some(r) => format!(
            "switch off: open (1 pS), breaking down at its {} {} ({} there)",
            r.name,
            format_eng(r.volts, Dim::Volt),
            format_eng(BREAKDOWN_CURRENT, Dim::Amp)
        ),
        None => "switch off: open (1 pS), no breakdown modelled".to_string(),
    });
    model.push(format!(
        "below ground the switch conducts as a silicon junction (IS {}, N 1)",
        format_eng(REVERSE_IS, Dim::Amp)
    ));
    model.push(format!(
        "stray capacitance {} from the switch node to ground",
        format_eng(stray, Dim::Farad)
    ));
    if stage.switch.kind.is_high_side() {
        model.push(
            "a high-side switch, traced as its low-side mirror: the same voltage across the switch and the same load current".to_string(),
        );
    }
    if stage.drive.source == DriveSource::Photocell {
        model.push(
            "the switch is taken fully on and fully off: a photocell drive moves slowly, and this is the edge once it has".to_string(),
        );
    }

    let mut circuit = Circuit {
        vs,
        stray,
        load,
        r_on,
        breakdown,
        reverse: Junction::diode(REVERSE_IS, 1.0),
        clamp: None,
    };
    let part_number = part.map(|p| p.number.to_string());
    match load {
        LoadModel::Coil { r, l } => {
            let i_on = vs / (r + r_on);
            // The clamp's line goes beside the load's, before the switch's.
            let mut clamp_line = Vec::new();
            circuit.clamp = clamp_junction(stage, part, role, i_on, &mut clamp_line)?;
            if circuit.clamp.is_none() {
                clamp_line.push("clamp: none".to_string());
            }
            model.splice(2..2, clamp_line);
            let tau = l / r;
            // The clamp's voltage against the coil at the on-state current: the diode's (and
            // zener's), or with no clamp the switch's breakdown above the supply.
            let held = match (circuit.clamp, circuit.breakdown) {
                (Some(c), _) => c.voltage_at(i_on),
                (None, Some(b)) => b.voltage_at(i_on) - vs,
                (None, None) => f64::NAN,
            };
            let ring = std::f64::consts::TAU * (l * stray).sqrt();
            let window = if held > 0.0 {
                // The current reaches zero after τ ln(1 + I0 R / Vc); half as much again
                // shows what follows.
                1.5 * tau * (1.0 + i_on * r / held).ln()
            } else if held.is_nan() {
                // Nothing holds the coil: ten periods of the ring with the stray capacitance.
                10.0 * ring
            } else {
                // A rating below the supply: the switch never blocks; show a few τ.
                5.0 * tau
            };
            // At least four periods of the ring, and, when the load resistance against the
            // stray capacitance is slower than the coil (an overdamped node), four of that.
            let window = window.max(4.0 * ring).max(4.0 * r * stray);
            let t_off = window / 9.0;
            let release = match release_v {
                Some(v) => Release::Current(v / r),
                None => Release::Fraction(0.1),
            };
            Ok(Built {
                circuit,
                start_on: true,
                events: vec![(t_off, false)],
                end: t_off + window,
                cap: t_off + 60.0 * tau.max(r * stray) + 10.0 * ring,
                release,
                model,
                problems,
                rating,
                part: part_number,
            })
        }
        LoadModel::Rc { r, c } => {
            let tau = (r + r_on) * c;
            let t_on = 0.5 * tau;
            Ok(Built {
                circuit,
                start_on: false,
                events: vec![(t_on, true)],
                end: t_on + 8.0 * tau,
                cap: t_on + 8.0 * tau,
                release: Release::None,
                model,
                problems,
                rating,
                part: part_number,
            })
        }
        LoadModel::Resistive { .. } | LoadModel::Led { .. } => {
            // Nothing in the load stores energy: the edges are set by the stray capacitance
            // alone, so any window shows them as steps; 1 ms is a readable one.
            let window = 1e-3;
            Ok(Built {
                circuit,
                start_on: false,
                events: vec![(0.1 * window, true), (0.6 * window, false)],
                end: window,
                cap: window,
                release: Release::None,
                model,
                problems,
                rating,
                part: part_number,
            })
        }
    }
}
