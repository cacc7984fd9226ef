//! The checks of each role: which rating of a part meets which need, and the figures a part
//! brings itself (its own VCE(sat), RDS(on), coil resistance, photocell law).

use super::{Check, CheckVerdict, Role, Tally};
use crate::library::{Kind, Part, Status};
use crate::needs::{Bound, Needs, ids};
use crate::needs::{photocell, thermal, worst};
use crate::stage::Stage;
use crate::units::{Amps, Celsius, Ohms, Watts};
use crate::units::{Dim, format_eng};
use std::borrow::Cow;

/// Junction temperature assumed when a part does not give `tj_max` (common practice for
/// silicon small-signal and power parts).
pub const DEFAULT_TJ_MAX: f64 = 150.0;

/// The check id of the junction temperature TJ = Ta + P·RthJA against TJmax (a check of the
/// `switch.power` need's dissipation, not a need of its own).
pub const SWITCH_JUNCTION: &str = "switch.junction";

/// A photocell's own switching light level may differ from the stage's `on_lux` by this much
/// and still fit (issue 4: ±25 %).
pub const ON_LUX_TOLERANCE: f64 = 0.25;

/// A zener's VZ may differ from the stage's `zener_volts` by this much (common practice: the
/// usual ±5 % VZ tolerance).
pub const ZENER_TOLERANCE: f64 = 0.05;

/// hFE quoted at a current below this fraction of the load current is flagged: gain falls at
/// high collector current (common practice).
pub const HFE_CURRENT_FRACTION: f64 = 0.5;

/// Passing allows for rounding in the last bit (a rating equal to the need passes).
const EPSILON: f64 = 1e-9;

/// A rating that must be at least `required`.
pub(crate) fn at_least(
    need: &'static str,
    rating_name: &'static str,
    rating: Option<f64>,
    required: Option<f64>,
    dim: Dim,
) -> Check {
    compare(need, rating_name, rating, required, dim, Bound::Min)
}

/// A rating that must be at most `required`.
pub(crate) fn at_most(
    need: &'static str,
    rating_name: &'static str,
    rating: Option<f64>,
    required: Option<f64>,
    dim: Dim,
) -> Check {
    compare(need, rating_name, rating, required, dim, Bound::Max)
}

fn compare(
    need: &'static str,
    rating_name: &'static str,
    rating: Option<f64>,
    required: Option<f64>,
    dim: Dim,
    bound: Bound,
) -> Check {
    let (verdict, headroom) = hold(rating, required, bound);
    let note = if required.is_none() {
        "the need is not bounded: see the stage's problems"
    } else if rating.is_none() {
        "not given in the library"
    } else {
        ""
    };
    Check {
        need,
        rating_name,
        rating,
        required,
        dim,
        bound,
        verdict,
        headroom,
        note: Cow::Borrowed(note),
    }
}

/// A rating held against a need, as a verdict and a headroom: an unbounded need fails every
/// part, a missing rating is unknown, and otherwise the headroom (rating over need for a lower
/// bound, need over rating for an upper one) of at least 1 passes. The one rule for every
/// bound check, with its notes ([`compare`]) or without ([`Out::min`] while ranking).
fn hold(rating: Option<f64>, required: Option<f64>, bound: Bound) -> (CheckVerdict, Option<f64>) {
    let Some(required) = required else {
        return (CheckVerdict::Short, None);
    };
    let Some(value) = rating else {
        return (CheckVerdict::Unknown, None);
    };
    let headroom = match bound {
        Bound::Max if value <= 0.0 => f64::INFINITY,
        Bound::Max => required / value,
        _ if required <= 0.0 => f64::INFINITY,
        _ => value / required,
    };
    let verdict = if headroom >= 1.0 - EPSILON {
        CheckVerdict::Pass
    } else {
        CheckVerdict::Short
    };
    (verdict, Some(headroom))
}

/// A figure that must be within `tolerance` of a target; headroom (1 + tol) / (1 + |dev|).
pub(crate) fn within(
    need: &'static str,
    rating_name: &'static str,
    value: Option<f64>,
    target: Option<f64>,
    tolerance: f64,
    dim: Dim,
) -> Check {
    within_noting::<true>(need, rating_name, value, target, tolerance, dim)
}

/// [`within`], the deviation written in the note only when `NOTE` (a ranking counts the
/// check without reading it).
fn within_noting<const NOTE: bool>(
    need: &'static str,
    rating_name: &'static str,
    value: Option<f64>,
    target: Option<f64>,
    tolerance: f64,
    dim: Dim,
) -> Check {
    let mut check = compare(need, rating_name, value, target, dim, Bound::Value);
    if let (Some(value), Some(target)) = (value, target)
        && target != 0.0
    {
        let deviation = (value - target).abs() / target.abs();
        let headroom = (1.0 + tolerance) / (1.0 + deviation);
        check.headroom = Some(headroom);
        check.verdict = if deviation <= tolerance + EPSILON {
            CheckVerdict::Pass
        } else {
            CheckVerdict::Short
        };
        if NOTE {
            check.note = Cow::Owned(format!(
                "{} from the target (within ±{:.0} % fits)",
                signed_percent((value - target) / target),
                tolerance * 100.0
            ));
        }
    }
    check
}

fn signed_percent(fraction: f64) -> String {
    format!("{:+.1} %", fraction * 100.0)
}

/// A need as the checks read it: whether the stage has it, and its value when it is a number.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
struct Asked {
    held: bool,
    value: Option<f64>,
}

impl Asked {
    fn of(needs: &Needs, id: &str) -> Asked {
        let need = needs.get(id);
        Asked {
            held: need.is_some(),
            value: need.and_then(|n| n.value),
        }
    }
}

/// Everything the checks read besides the part: the values of the needs and the figures of
/// the stage that hold for every part alike (the load current, the ambient of the thermal
/// checks, a BJT's base drive, a relay coil's cold factor, the stock quantity), found once for
/// an evaluation. A million-part ranking would otherwise look each of them up again for every
/// part; written out or only counted, every check reads them from here.
pub struct Plan<'a> {
    stage: &'a Stage,
    worst_case: bool,
    load_current: Option<f64>,
    /// The ambient of the thermal checks: the hotter of `rules.ambient` and `temperature_max`
    /// when the needs are worst-case.
    ambient: f64,
    switch_voltage: Option<f64>,
    switch_current: Option<f64>,
    switch_gain: Asked,
    /// A BJT's base current and VBE in its dissipation P = VCE(sat)·IL + VBE·IB, when the
    /// load current is known.
    base_drive: Option<(f64, f64)>,
    gate_drive: Asked,
    gate_threshold: Asked,
    gate_voltage: Asked,
    clamp_voltage: Option<f64>,
    clamp_current: Option<f64>,
    zener_voltage: Option<f64>,
    /// R(coil at its coldest) / R20 (1 at nominal).
    coil_cold: f64,
    coil_current: Option<f64>,
    operate_voltage: Option<f64>,
    coil_voltage_max: Option<f64>,
    contact_voltage: Asked,
    contact_current: Asked,
    inrush: Asked,
    impulse: Option<f64>,
    dielectric: Option<f64>,
    sensor_voltage: Option<f64>,
    sensor_power: Option<f64>,
    sensor_fixed_resistor: Option<f64>,
    /// The quantity the stock is held against (at least 1).
    quantity: f64,
}

impl<'a> Plan<'a> {
    /// The plan of the checks of `stage` against `needs`.
    #[must_use]
    pub fn new(stage: &'a Stage, needs: &Needs) -> Plan<'a> {
        let value = |id| needs.value(id);
        let worst_case = needs.is_worst_case();
        let load_current = value(ids::LOAD_CURRENT);
        let base_drive = load_current.map(|il| {
            if worst_case {
                // The same bound as the switch.dissipation need: the most base current, the
                // highest VBE.
                let (ib, vbe) = worst::base_dissipation_drive(
                    stage,
                    value(ids::SWITCH_BASE_RESISTOR).map(Ohms),
                    Amps(il),
                );
                (ib.value(), vbe.value())
            } else {
                (base_current(stage, needs), stage.assume.vbe_on.value())
            }
        });
        Plan {
            stage,
            worst_case,
            load_current,
            ambient: worst::thermal_ambient(stage, worst_case).value(),
            switch_voltage: value(ids::SWITCH_VOLTAGE),
            switch_current: value(ids::SWITCH_CURRENT),
            switch_gain: Asked::of(needs, ids::SWITCH_GAIN),
            base_drive,
            gate_drive: Asked::of(needs, ids::SWITCH_GATE_DRIVE),
            gate_threshold: Asked::of(needs, ids::SWITCH_GATE_THRESHOLD),
            gate_voltage: Asked::of(needs, ids::SWITCH_GATE_VOLTAGE),
            clamp_voltage: value(ids::CLAMP_VOLTAGE),
            clamp_current: value(ids::CLAMP_CURRENT),
            zener_voltage: value(ids::ZENER_VOLTAGE),
            coil_cold: worst::coil_resistance_factor(stage, worst_case),
            coil_current: value(ids::RELAY_COIL_CURRENT),
            operate_voltage: value(ids::RELAY_OPERATE_VOLTAGE),
            coil_voltage_max: value(ids::RELAY_COIL_VOLTAGE_MAX),
            contact_voltage: Asked::of(needs, ids::RELAY_CONTACT_VOLTAGE),
            contact_current: Asked::of(needs, ids::RELAY_CONTACT_CURRENT),
            inrush: Asked::of(needs, ids::RELAY_INRUSH),
            impulse: value(ids::RELAY_IMPULSE),
            dielectric: value(ids::RELAY_DIELECTRIC),
            sensor_voltage: value(ids::SENSOR_VOLTAGE),
            sensor_power: value(ids::SENSOR_POWER),
            sensor_fixed_resistor: value(ids::SENSOR_FIXED_RESISTOR),
            quantity: f64::from(stage.rules.quantity.max(1)),
        }
    }

    /// The stage the plan is of.
    #[must_use]
    pub fn stage(&self) -> &Stage {
        self.stage
    }
}

/// Where the checks of one part go as they are made: kept with their notes (`DETAIL`), or
/// only counted in a [`Tally`] (notes cost formatting, and a million-part ranking needs only
/// verdicts, headrooms and the stock's quantity). The choice is made when compiling, so the
/// counting code has no trace of the notes.
pub(crate) struct Out<const DETAIL: bool> {
    checks: Vec<Check>,
    tally: Tally,
}

impl<const DETAIL: bool> Out<DETAIL> {
    /// A check of a rating (not a part rule).
    #[inline]
    fn push(&mut self, check: Check) {
        if DETAIL {
            self.checks.push(check);
        } else {
            self.tally.count_rating(check.verdict, check.headroom);
        }
    }

    /// A part rule's verdict, with its note when detail is asked for.
    #[inline]
    fn rule(
        &mut self,
        need: &'static str,
        rating_name: &'static str,
        verdict: CheckVerdict,
        note: &'static str,
    ) {
        if DETAIL {
            self.checks
                .push(Check::rule(need, rating_name, verdict, note));
        } else {
            self.tally.count(need, verdict, None, None);
        }
    }

    fn last_mut(&mut self) -> Option<&mut Check> {
        self.checks.last_mut()
    }

    /// Holds `rating` against `required` as a lower bound.
    #[inline]
    fn min(
        &mut self,
        id: &'static str,
        name: &'static str,
        rating: Option<f64>,
        required: Option<f64>,
        dim: Dim,
    ) {
        self.bound(id, name, rating, required, dim, Bound::Min);
    }

    /// Holds `rating` against `required` as an upper bound.
    #[inline]
    fn max(
        &mut self,
        id: &'static str,
        name: &'static str,
        rating: Option<f64>,
        required: Option<f64>,
        dim: Dim,
    ) {
        self.bound(id, name, rating, required, dim, Bound::Max);
    }

    /// Holds `rating` against the need `id`, which asks `required`; while ranking only the
    /// verdict and headroom are counted (no check is written).
    #[inline]
    fn bound(
        &mut self,
        id: &'static str,
        name: &'static str,
        rating: Option<f64>,
        required: Option<f64>,
        dim: Dim,
        bound: Bound,
    ) {
        if DETAIL {
            self.checks
                .push(compare(id, name, rating, required, dim, bound));
        } else {
            let (verdict, headroom) = hold(rating, required, bound);
            self.tally.count_rating(verdict, headroom);
        }
    }

    /// The check with a note added, the note written only when detail is asked for.
    #[inline]
    fn note(&self, check: Check, note: impl FnOnce() -> String) -> Check {
        if DETAIL {
            with_note(check, note())
        } else {
            check
        }
    }
}

fn with_note(mut check: Check, note: String) -> Check {
    if check.note.is_empty() {
        check.note = Cow::Owned(note);
    } else {
        check.note = Cow::Owned(format!("{}; {note}", check.note));
    }
    check
}

/// Every check of `part` for `role`, in need order, then the part rules.
#[must_use]
pub fn for_part(stage: &Stage, needs: &Needs, role: Role, part: &Part) -> Vec<Check> {
    written(&Plan::new(stage, needs), role, part)
}

/// [`for_part`] with the plan of the stage and needs made already.
#[must_use]
pub fn written(plan: &Plan, role: Role, part: &Part) -> Vec<Check> {
    let mut out = Out::<true> {
        checks: Vec::with_capacity(8),
        tally: Tally::default(),
    };
    fill(plan, role, part, &mut out);
    out.checks
}

/// The tally of [`for_part`]'s checks without writing them: the same verdict, headroom and
/// quantity, for ranking large libraries (a part's checks are written again when it is shown).
#[must_use]
#[inline]
pub fn tally(plan: &Plan, role: Role, part: &Part) -> Tally {
    let mut out = Out::<false> {
        checks: Vec::new(),
        tally: Tally::default(),
    };
    fill(plan, role, part, &mut out);
    out.tally
}

#[inline]
fn fill<const DETAIL: bool>(plan: &Plan, role: Role, part: &Part, out: &mut Out<DETAIL>) {
    match role {
        Role::Switch => switch(plan, part, out),
        Role::Clamp => clamp(plan, part, out),
        Role::Zener => zener(plan, part, out),
        Role::Relay => relay(plan, part, out),
        Role::Sensor => sensor(plan, part, out),
    }
    part_rules(plan, part, out);
}

/// PD derated at the ambient with the part's TJmax (150 °C when not given): the derating of
/// [`thermal::derated_pd`].
fn derated(pd: f64, tj_max: Option<f64>, ambient: f64) -> f64 {
    thermal::derated_pd(
        Watts(pd),
        Celsius(tj_max.unwrap_or(DEFAULT_TJ_MAX)),
        Celsius(ambient),
    )
    .value()
}

/// The thermal checks of a switch dissipating `dissipation` at the plan's ambient.
fn power_checks<const DETAIL: bool>(
    plan: &Plan,
    dissipation: Option<f64>,
    pd: Option<f64>,
    tj_max: Option<f64>,
    rth_ja: Option<f64>,
    how: &dyn Fn() -> String,
    checks: &mut Out<DETAIL>,
) {
    let ambient = plan.ambient;
    let required = dissipation.map(|p| p / plan.stage.rules.power_derating);
    let derated = pd.map(|pd| derated(pd, tj_max, ambient));
    let mut check = at_least(
        ids::SWITCH_POWER,
        "pd derated",
        derated,
        required,
        Dim::Watt,
    );
    if let (Some(pd), Some(p)) = (pd, dissipation) {
        check = checks.note(check, || {
            format!(
                "{} = {}; pd {} derated to {} at {}{}",
                how(),
                format_eng(p, Dim::Watt),
                format_eng(pd, Dim::Watt),
                format_eng(derated.unwrap_or(pd), Dim::Watt),
                format_eng(ambient, Dim::Celsius),
                if tj_max.is_none() {
                    " (tj_max not given: 150 °C assumed)"
                } else {
                    ""
                }
            )
        });
    }
    checks.push(check);
    if let (Some(rth), Some(p)) = (rth_ja, dissipation) {
        let tj = ambient + p * rth;
        let limit = tj_max.unwrap_or(DEFAULT_TJ_MAX);
        let mut check = at_least(
            SWITCH_JUNCTION,
            "tj_max",
            Some(limit),
            Some(tj),
            Dim::Celsius,
        );
        // Headroom of a temperature is the allowed rise over the actual rise above ambient
        // (a ratio of Celsius readings would mean nothing).
        let rise = tj - ambient;
        if rise > 0.0 {
            check.headroom = Some((limit - ambient) / rise);
        }
        checks.push(checks.note(check, || {
            format!(
                "TJ = Ta + P·RthJA = {} + {} × {:.0} K/W = {}",
                format_eng(ambient, Dim::Celsius),
                format_eng(p, Dim::Watt),
                rth,
                format_eng(tj, Dim::Celsius)
            )
        }));
    }
}

fn switch<const DETAIL: bool>(plan: &Plan, part: &Part, checks: &mut Out<DETAIL>) {
    let stage = plan.stage;
    let il = plan.load_current;
    if let Some(b) = part.bjt() {
        checks.min(
            ids::SWITCH_VOLTAGE,
            "vceo",
            b.vceo.get(),
            plan.switch_voltage,
            Dim::Volt,
        );
        checks.min(
            ids::SWITCH_CURRENT,
            "ic_max",
            b.ic_max.get(),
            plan.switch_current,
            Dim::Amp,
        );
        if plan.switch_gain.held {
            let mut gain = at_least(
                ids::SWITCH_GAIN,
                "hfe_min",
                b.hfe_min.get(),
                plan.switch_gain.value,
                Dim::Number,
            );
            if let (Some(at), Some(il)) = (b.hfe_at_ic.get(), il)
                && at < HFE_CURRENT_FRACTION * il
            {
                gain = checks.note(gain, || format!(
                        "warning: hFE is given at {}, well below the {} load; gain falls at high current: check the curve",
                        format_eng(at, Dim::Amp),
                        format_eng(il, Dim::Amp)
                    ),
                );
            }
            checks.push(gain);
        }
        if let (Some(il), Some((base, vbe))) = (il, plan.base_drive) {
            let vce_sat = b.vce_sat.get().unwrap_or(stage.assume.vce_sat.value());
            let p = vce_sat * il + vbe * base;
            let how = || {
                format!(
                    "P = VCE(sat)·IL + VBE·IB = {} × {} + {} × {}",
                    format_eng(vce_sat, Dim::Volt),
                    format_eng(il, Dim::Amp),
                    format_eng(vbe, Dim::Volt),
                    format_eng(base, Dim::Amp)
                )
            };
            power_checks(
                plan,
                Some(p),
                b.pd.get(),
                b.tj_max.get(),
                b.rth_ja.get(),
                &how,
                checks,
            );
        }
    } else if let Some(m) = part.mosfet() {
        checks.min(
            ids::SWITCH_VOLTAGE,
            "vds",
            m.vds.get(),
            plan.switch_voltage,
            Dim::Volt,
        );
        checks.min(
            ids::SWITCH_CURRENT,
            "id_max",
            m.id_max.get(),
            plan.switch_current,
            Dim::Amp,
        );
        if plan.gate_drive.held {
            let mut gate = at_most(
                ids::SWITCH_GATE_DRIVE,
                "rds_on_vgs",
                m.rds_on_vgs.get(),
                plan.gate_drive.value,
                Dim::Volt,
            );
            if gate.verdict == CheckVerdict::Short {
                gate = checks.note(gate, || {
                    "RDS(on) is not specified at a gate voltage the drive reaches".to_string()
                });
            }
            checks.push(gate);
        }
        if plan.gate_threshold.held {
            checks.max(
                ids::SWITCH_GATE_THRESHOLD,
                "vgs_th_max",
                m.vgs_th_max.get(),
                plan.gate_threshold.value,
                Dim::Volt,
            );
        }
        if plan.gate_voltage.held {
            checks.min(
                ids::SWITCH_GATE_VOLTAGE,
                "vgs_max",
                m.vgs_max.get(),
                plan.gate_voltage.value,
                Dim::Volt,
            );
        }
        if let Some(il) = il {
            let p = m
                .rds_on
                .get()
                .map(|r| thermal::mosfet_power(Amps(il), Ohms(r)).value());
            let how = || {
                format!(
                    "P = IL²·RDS(on)·1.5 (hot) = {}² × {} × 1.5",
                    format_eng(il, Dim::Amp),
                    m.rds_on
                        .get()
                        .map_or("?".to_string(), |r| format_eng(r, Dim::Ohm))
                )
            };
            if p.is_none() {
                let mut check =
                    at_least(ids::SWITCH_POWER, "pd derated", None, Some(0.0), Dim::Watt);
                check.note = Cow::Borrowed("rds_on not given: dissipation unknown");
                checks.push(check);
            } else {
                power_checks(
                    plan,
                    p,
                    m.pd.get(),
                    m.tj_max.get(),
                    m.rth_ja.get(),
                    &how,
                    checks,
                );
            }
        }
    }
}

/// The base current the picked base resistor gives: (V_high − VBE) / RB, or the base-current
/// need when no resistor was picked.
fn base_current(stage: &Stage, needs: &Needs) -> f64 {
    let drive = stage.drive.high.value() - stage.assume.vbe_on.value();
    needs
        .value(ids::SWITCH_BASE_RESISTOR)
        .filter(|r| *r > 0.0)
        .map(|r| drive / r)
        .or_else(|| needs.value(ids::SWITCH_BASE_CURRENT))
        .unwrap_or(0.0)
        .max(0.0)
}

fn clamp<const DETAIL: bool>(plan: &Plan, part: &Part, checks: &mut Out<DETAIL>) {
    let Some(d) = part.diode() else { return };
    checks.min(
        ids::CLAMP_VOLTAGE,
        "vrrm",
        d.vrrm.get(),
        plan.clamp_voltage,
        Dim::Volt,
    );
    checks.min(
        ids::CLAMP_CURRENT,
        "if_avg",
        d.if_avg.get(),
        plan.clamp_current,
        Dim::Amp,
    );
}

fn zener<const DETAIL: bool>(plan: &Plan, part: &Part, checks: &mut Out<DETAIL>) {
    let Some(d) = part.diode() else { return };
    checks.push(within_noting::<DETAIL>(
        ids::ZENER_VOLTAGE,
        "vz",
        d.vz.get(),
        plan.zener_voltage,
        ZENER_TOLERANCE,
        Dim::Volt,
    ));
}

/// The coil current a relay's own coil draws in this stage: (Vs_max − V_sat) / coil_r.
#[must_use]
pub fn own_coil_current(stage: &Stage, part: &Part) -> Option<f64> {
    let r = part.relay()?.coil_r.get().filter(|r| *r > 0.0)?;
    Some((stage.supply.max().value() - stage.v_sat().value()) / r)
}

fn relay<const DETAIL: bool>(plan: &Plan, part: &Part, checks: &mut Out<DETAIL>) {
    let stage = plan.stage;
    let Some(r) = part.relay() else { return };
    // Worst case: the part's own coil taken cold, at the corner of the stage's coil current.
    let cold = plan.coil_cold;
    let coil = own_coil_current(stage, part).map(|i| i / cold);
    let mut coil_check = at_most(
        ids::RELAY_COIL_CURRENT,
        "coil current",
        coil,
        plan.coil_current,
        Dim::Amp,
    );
    if coil.is_some() {
        coil_check = checks.note(coil_check, || {
            if plan.worst_case {
                format!(
                    "(Vs_max − V_sat) / (coil_r × {cold:.4}) = ({} − {}) / ({} cold at temperature_min)",
                    format_eng(stage.supply.max().value(), Dim::Volt),
                    format_eng(stage.v_sat().value(), Dim::Volt),
                    format_eng(r.coil_r.get().unwrap_or(0.0) * cold, Dim::Ohm)
                )
            } else {
                format!(
                    "(Vs_max − V_sat) / coil_r = ({} − {}) / {}",
                    format_eng(stage.supply.max().value(), Dim::Volt),
                    format_eng(stage.v_sat().value(), Dim::Volt),
                    format_eng(r.coil_r.get().unwrap_or(0.0), Dim::Ohm)
                )
            }
        });
    } else {
        coil_check.note = Cow::Borrowed("coil_r not given: the coil current is unknown");
    }
    checks.push(coil_check);
    checks.max(
        ids::RELAY_OPERATE_VOLTAGE,
        "must_operate_v",
        r.must_operate_v.get(),
        plan.operate_voltage,
        Dim::Volt,
    );
    checks.min(
        ids::RELAY_COIL_VOLTAGE_MAX,
        "coil_v_max",
        r.coil_v_max.get(),
        plan.coil_voltage_max,
        Dim::Volt,
    );
    let ac = stage.contacts.is_none_or(|c| c.ac);
    let (v_name, v, a_name, a) = if ac {
        (
            "contact_v_ac",
            r.contact_v_ac.get(),
            "contact_a_ac",
            r.contact_a_ac.get(),
        )
    } else {
        (
            "contact_v_dc",
            r.contact_v_dc.get(),
            "contact_a_dc",
            r.contact_a_dc.get(),
        )
    };
    if plan.contact_voltage.held {
        let need = plan.contact_voltage.value;
        checks.min(ids::RELAY_CONTACT_VOLTAGE, v_name, v, need, Dim::Volt);
    }
    if plan.contact_current.held {
        let need = plan.contact_current.value;
        checks.min(ids::RELAY_CONTACT_CURRENT, a_name, a, need, Dim::Amp);
    }
    if plan.inrush.held {
        let inrush = plan.inrush;
        let mut check = at_least(
            ids::RELAY_INRUSH,
            "inrush_a",
            r.inrush_a.get(),
            inrush.value,
            Dim::Amp,
        );
        // No inrush figure, but the continuous rating already covers the inrush need.
        if r.inrush_a.get().is_none()
            && let (Some(need), Some(rating)) = (inrush.value, a)
            && rating >= need
        {
            check = at_least(
                ids::RELAY_INRUSH,
                a_name,
                Some(rating),
                Some(need),
                Dim::Amp,
            );
            check.note = Cow::Borrowed("no inrush rating; the continuous contact rating covers it");
        }
        checks.push(check);
    }
    if plan.impulse.is_some() {
        checks.min(
            ids::RELAY_IMPULSE,
            "impulse_v",
            r.impulse_v.get(),
            plan.impulse,
            Dim::Volt,
        );
    }
    if plan.dielectric.is_some() {
        checks.min(
            ids::RELAY_DIELECTRIC,
            "dielectric_v",
            r.dielectric_v.get(),
            plan.dielectric,
            Dim::Volt,
        );
    }
}

fn sensor<const DETAIL: bool>(plan: &Plan, part: &Part, checks: &mut Out<DETAIL>) {
    let stage = plan.stage;
    let Some(p) = part.photocell() else { return };
    checks.min(
        ids::SENSOR_VOLTAGE,
        "v_max",
        p.v_max.get(),
        plan.sensor_voltage,
        Dim::Volt,
    );
    checks.min(
        ids::SENSOR_POWER,
        "p_max",
        p.p_max.get(),
        plan.sensor_power,
        Dim::Watt,
    );
    if let Some(sensor) = &stage.sensor {
        let own = match (plan.sensor_fixed_resistor, p.r_10lux.get(), p.gamma.get()) {
            (Some(fixed), Some(r10), Some(gamma))
                if fixed > 0.0
                    && r10 > 0.0
                    && gamma > 0.0
                    && stage.supply.volts.value() > sensor.threshold.value()
                    && sensor.threshold.value() > 0.0 =>
            {
                let lux = photocell::switching_lux(
                    sensor.activate,
                    Ohms(fixed),
                    stage.supply.volts,
                    sensor.threshold,
                    Ohms(r10),
                    gamma,
                )
                .value
                .value();
                lux.is_finite().then_some(lux)
            }
            _ => None,
        };
        let mut check = within_noting::<DETAIL>(
            ids::SENSOR_ON_LUX,
            "own on_lux",
            own,
            Some(sensor.on_lux.value()),
            ON_LUX_TOLERANCE,
            Dim::Lux,
        );
        if own.is_none() {
            check.note = Cow::Borrowed(
                "r_10lux or gamma not given: the part's own switching level is unknown",
            );
        } else {
            check = checks.note(check, || {
                format!(
                    "this cell switches at {} with the stage's fixed resistor",
                    format_eng(own.unwrap_or(0.0), Dim::Lux)
                )
            });
        }
        checks.push(check);
    }
}

/// A CdS photocell holds cadmium above the 0.01 % limit of EU RoHS (Directive 2011/65/EU,
/// Annex II); the only photoresistor exemption (Annex III item 40) expired at the end of 2013.
fn is_cadmium_cell(part: &Part) -> bool {
    if part.kind != Kind::Photocell {
        return false;
    }
    let text = format!("{} {}", part.notes, part.tags).to_ascii_lowercase();
    (text.contains("cds") || text.contains("cadmium"))
        && !text.contains("cadmium-free")
        && !text.contains("cd-free")
}

fn part_rules<const DETAIL: bool>(plan: &Plan, part: &Part, checks: &mut Out<DETAIL>) {
    let stage = plan.stage;
    let (verdict, note) = match part.status {
        Status::Obsolete if !stage.rules.allow_obsolete => (
            CheckVerdict::Short,
            "obsolete; set rules.allow_obsolete = true to accept it",
        ),
        Status::Obsolete => (CheckVerdict::Pass, "obsolete, allowed by the rules"),
        Status::Nrnd => (CheckVerdict::Pass, "not recommended for new designs"),
        Status::Active => (CheckVerdict::Pass, ""),
        Status::Unknown => (CheckVerdict::Pass, "status not given"),
    };
    checks.rule(ids_part::STATUS, "status", verdict, note);
    let quantity = plan.quantity;
    let stock = part.stock.map(f64::from);
    if DETAIL {
        let mut check = at_least(ids_part::STOCK, "stock", stock, Some(quantity), Dim::Number);
        if check.verdict == CheckVerdict::Short {
            check = with_note(
                check,
                format!("{} in stock, {} needed", part.stock.unwrap_or(0), quantity),
            );
        }
        checks.checks.push(check);
    } else {
        // A ranking counts the verdict and keeps the quantity the stock is held against.
        let (verdict, headroom) = hold(stock, Some(quantity), Bound::Min);
        checks
            .tally
            .count(ids_part::STOCK, verdict, headroom, Some(quantity));
    }
    if stage.rules.require_rohs {
        let (verdict, note) = if is_cadmium_cell(part) {
            (
                CheckVerdict::Short,
                "CdS photocell: cadmium above 0.01 % (EU RoHS 2011/65/EU Annex II); the photoresistor exemption expired at the end of 2013",
            )
        } else {
            match part.rohs {
                Some(true) => (CheckVerdict::Pass, ""),
                Some(false) => (CheckVerdict::Short, "not RoHS compliant"),
                None => (CheckVerdict::Unknown, "RoHS status not given"),
            }
        };
        checks.rule(ids_part::ROHS, "rohs", verdict, note);
    } else if DETAIL
        && (is_cadmium_cell(part) || (part.kind == Kind::Photocell && part.rohs == Some(false)))
    {
        // Not a rule of this stage, but a purchaser must know.
        if let Some(last) = checks.last_mut() {
            let note = "note: a CdS photocell is not RoHS compliant (cadmium, 2011/65/EU Annex II)";
            last.note = if last.note.is_empty() {
                Cow::Borrowed(note)
            } else {
                Cow::Owned(format!("{}; {note}", last.note))
            };
        }
    }
}

/// Ids of the part rules, which hold for every role.
pub mod ids_part {
    /// Production status: obsolete fails unless `rules.allow_obsolete`.
    pub const STATUS: &str = "part.status";
    /// Stock at least `rules.quantity`.
    pub const STOCK: &str = "part.stock";
    /// RoHS compliance when `rules.require_rohs`.
    pub const ROHS: &str = "part.rohs";
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn compare_headroom_both_ways() {
        let c = at_least("switch.voltage", "vceo", Some(40.0), Some(20.0), Dim::Volt);
        assert_eq!((c.verdict, c.headroom), (CheckVerdict::Pass, Some(2.0)));
        let c = at_most(
            "switch.gate_drive",
            "rds_on_vgs",
            Some(10.0),
            Some(3.3),
            Dim::Volt,
        );
        assert_eq!(c.verdict, CheckVerdict::Short);
        assert!((c.headroom.unwrap() - 0.33).abs() < 1e-12);
        let c = at_least("switch.voltage", "vceo", None, Some(20.0), Dim::Volt);
        assert_eq!(c.verdict, CheckVerdict::Unknown);
        let c = at_least("switch.voltage", "vceo", Some(40.0), None, Dim::Volt);
        assert_eq!(
            c.verdict,
            CheckVerdict::Short,
            "an unbounded need fails every part"
        );
        let c = at_least("x.y", "r", Some(20.0), Some(20.0), Dim::Volt);
        assert_eq!(c.verdict, CheckVerdict::Pass, "equal passes");
    }

    /// The tally a ranking keeps of a part equals the tally of its checks written out, for
    /// every demo stage (nominal and worst case), role and demo part: one fill, two sinks.
    #[test]
    fn tally_equals_the_checks_written_out() {
        let library = crate::library::Library::demo();
        let mut compared = 0;
        for entry in std::fs::read_dir(concat!(env!("CARGO_MANIFEST_DIR"), "/data/stages"))
            .expect("the demo stages are there")
        {
            let path = entry.expect("a directory entry").path();
            let text = std::fs::read_to_string(&path).expect("a demo stage reads");
            let stage =
                Stage::from_toml(&text, &path.display().to_string()).expect("a demo stage parses");
            for worst in [false, true] {
                let mut stage = stage.clone();
                stage.rules.worst_case = worst;
                let needs = crate::needs::compute(&stage, Some(&library));
                for role in super::super::roles(&stage) {
                    for part in &library.parts {
                        if !super::super::kind_fits_role(&stage, role, part.kind) {
                            continue;
                        }
                        let written = for_part(&stage, &needs, role, part);
                        assert_eq!(
                            tally(&Plan::new(&stage, &needs), role, part),
                            Tally::of(&written),
                            "{} as {} in {}",
                            part.number,
                            role.name(),
                            path.display()
                        );
                        compared += 1;
                    }
                }
            }
        }
        assert!(compared > 200, "{compared} parts compared");
    }

    /// A need the stage has without a value (unbounded) fails every part, written out or
    /// counted; a need the stage does not have is not checked at all. The plan keeps the two
    /// apart.
    #[test]
    fn an_unbounded_need_fails_and_an_absent_one_is_not_checked() {
        let library = crate::library::Library::demo();
        let stage = Stage::from_toml(
            include_str!("../../data/stages/door-strike.toml"),
            "door-strike.toml",
        )
        .expect("a demo stage parses");
        let needs = crate::needs::compute(&stage, Some(&library));
        let bjt = library
            .parts
            .iter()
            .find(|p| p.kind == Kind::Npn)
            .expect("the demo has NPNs");
        let gain = |checks: &[Check]| {
            checks
                .iter()
                .find(|c| c.need == ids::SWITCH_GAIN)
                .map(|c| c.verdict)
        };
        assert_eq!(
            gain(&for_part(&stage, &needs, Role::Switch, bjt)),
            Some(CheckVerdict::Pass),
            "{}",
            bjt.number
        );
        let mut unbounded = needs.clone();
        for need in &mut unbounded.needs {
            if need.id == ids::SWITCH_GAIN {
                need.value = None;
            }
        }
        let written = for_part(&stage, &unbounded, Role::Switch, bjt);
        assert_eq!(gain(&written), Some(CheckVerdict::Short));
        let counted = tally(&Plan::new(&stage, &unbounded), Role::Switch, bjt);
        assert_eq!(counted, Tally::of(&written));
        assert_eq!(counted.verdict(), super::super::Verdict::Short);
        let mut absent = needs.clone();
        absent.needs.retain(|n| n.id != ids::SWITCH_GAIN);
        let written = for_part(&stage, &absent, Role::Switch, bjt);
        assert_eq!(gain(&written), None);
        assert_eq!(
            tally(&Plan::new(&stage, &absent), Role::Switch, bjt),
            Tally::of(&written)
        );
    }
}
