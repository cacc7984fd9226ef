//! The checks of each role: which rating of a part meets which need, and the figures a part
//! brings itself (its own VCE(sat), RDS(on), coil resistance, photocell law).

use super::{Check, CheckVerdict, Role, Tally};
use crate::library::{Kind, Part, Status};
use crate::needs::{Bound, Need, Needs, ids};
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
        check.note = Cow::Owned(format!(
            "{} from the target (within ±{:.0} % fits)",
            signed_percent((value - target) / target),
            tolerance * 100.0
        ));
    }
    check
}

fn signed_percent(fraction: f64) -> String {
    format!("{:+.1} %", fraction * 100.0)
}

/// The needs as the checks look them up: a small table keyed by the address of each id's
/// text (the checks name needs by the statics of [`ids`], one piece of memory each), the
/// values beside it, and whether the needs are worst-case, found once. A million-part ranking
/// looks needs up some ten times a part; built once a role, this finds one in a probe or two
/// where searching the needs by text took twenty nanoseconds.
pub struct NeedLookup<'a> {
    needs: &'a Needs,
    ids: Vec<&'static str>,
    values: Vec<Option<f64>>,
    /// Open addressing by text address: (address, position + 1), 0 for an empty slot.
    slots: Vec<(usize, u32)>,
    worst_case: bool,
}

impl<'a> NeedLookup<'a> {
    /// The look-up of these needs.
    #[must_use]
    pub fn new(needs: &'a Needs) -> NeedLookup<'a> {
        let ids: Vec<&'static str> = needs.needs.iter().map(|n| n.id).collect();
        let mut slots = vec![(0, 0); (ids.len() * 2).next_power_of_two().max(16)];
        for (i, id) in ids.iter().enumerate() {
            let address = id.as_ptr() as usize;
            let mut s = Self::slot(address, slots.len());
            // The first need of an id is the one found, as `Needs::get` finds it.
            while slots[s].1 != 0 && slots[s].0 != address {
                s = (s + 1) & (slots.len() - 1);
            }
            if slots[s].1 == 0 {
                // Needs are a few dozen: positions fit in u32.
                slots[s] = (address, i as u32 + 1);
            }
        }
        NeedLookup {
            needs,
            values: needs.needs.iter().map(|n| n.value).collect(),
            ids,
            slots,
            worst_case: needs.is_worst_case(),
        }
    }

    #[inline]
    fn slot(address: usize, len: usize) -> usize {
        // Texts are at least byte-aligned and a few bytes apart: mix the low bits.
        ((address >> 2) ^ (address >> 9)) & (len - 1)
    }

    #[inline]
    fn position(&self, id: &str) -> Option<usize> {
        let address = id.as_ptr() as usize;
        let mut s = Self::slot(address, self.slots.len());
        while let Some(&(at, held)) = self.slots.get(s)
            && held != 0
        {
            let i = held as usize - 1;
            if at == address && self.ids.get(i).is_some_and(|known| known.len() == id.len()) {
                return Some(i);
            }
            s = (s + 1) & (self.slots.len() - 1);
        }
        // The text test decides where an id was built some other way (or is not a need).
        self.ids.iter().position(|&known| known == id)
    }

    /// The need with this id (as [`Needs::get`]).
    #[must_use]
    #[inline]
    pub fn get(&self, id: &str) -> Option<&'a Need> {
        self.position(id).and_then(|i| self.needs.needs.get(i))
    }

    /// The value of the need with this id (as [`Needs::value`]).
    #[must_use]
    #[inline]
    pub fn value(&self, id: &str) -> Option<f64> {
        self.position(id)
            .and_then(|i| self.values.get(i).copied().flatten())
    }

    /// Whether the needs are taken at their worst corners (as [`Needs::is_worst_case`]).
    #[must_use]
    pub fn is_worst_case(&self) -> bool {
        self.worst_case
    }
}

/// Where the checks of one part go as they are made: kept with their notes, or only counted
/// in a [`Tally`] (notes cost formatting, and a million-part ranking needs only verdicts,
/// headrooms and the stock's quantity).
pub(crate) struct Out {
    checks: Vec<Check>,
    tally: Tally,
    detail: bool,
}

impl Out {
    fn push(&mut self, check: Check) {
        if self.detail {
            self.checks.push(check);
        } else {
            self.tally.add(&check);
        }
    }

    fn last_mut(&mut self) -> Option<&mut Check> {
        self.checks.last_mut()
    }

    /// Holds `rating` against the need `id` as a lower bound.
    fn min(
        &mut self,
        needs: &NeedLookup,
        id: &'static str,
        name: &'static str,
        rating: Option<f64>,
        dim: Dim,
    ) {
        self.bound(needs, id, name, rating, dim, Bound::Min);
    }

    /// Holds `rating` against the need `id` as an upper bound.
    fn max(
        &mut self,
        needs: &NeedLookup,
        id: &'static str,
        name: &'static str,
        rating: Option<f64>,
        dim: Dim,
    ) {
        self.bound(needs, id, name, rating, dim, Bound::Max);
    }

    /// Holds `rating` against the need `id`; while ranking only the verdict and headroom are
    /// counted (no check is written).
    fn bound(
        &mut self,
        needs: &NeedLookup,
        id: &'static str,
        name: &'static str,
        rating: Option<f64>,
        dim: Dim,
        bound: Bound,
    ) {
        let required = needs.value(id);
        if self.detail {
            self.checks
                .push(compare(id, name, rating, required, dim, bound));
        } else {
            let (verdict, headroom) = hold(rating, required, bound);
            self.tally.count_rating(verdict, headroom);
        }
    }

    /// The check with a note added, the note written only when detail is asked for.
    fn note(&self, check: Check, note: impl FnOnce() -> String) -> Check {
        if self.detail {
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
    let mut out = Out {
        checks: Vec::with_capacity(8),
        tally: Tally::default(),
        detail: true,
    };
    fill(stage, &NeedLookup::new(needs), role, part, &mut out);
    out.checks
}

/// The tally of [`for_part`]'s checks without writing them: the same verdict, headroom and
/// quantity, for ranking large libraries (a part's checks are written again when it is shown).
#[must_use]
pub fn tally(stage: &Stage, needs: &NeedLookup, role: Role, part: &Part) -> Tally {
    let mut out = Out {
        checks: Vec::new(),
        tally: Tally::default(),
        detail: false,
    };
    fill(stage, needs, role, part, &mut out);
    out.tally
}

fn fill(stage: &Stage, needs: &NeedLookup, role: Role, part: &Part, out: &mut Out) {
    let checks = out;
    match role {
        Role::Switch => switch(stage, needs, part, checks),
        Role::Clamp => clamp(needs, part, checks),
        Role::Zener => zener(needs, part, checks),
        Role::Relay => relay(stage, needs, part, checks),
        Role::Sensor => sensor(stage, needs, part, checks),
    }
    part_rules(stage, part, checks);
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

/// The thermal checks of a switch dissipating `dissipation` at `ambient` (°C): the hotter of
/// `rules.ambient` and `temperature_max` when the needs are worst-case.
#[allow(clippy::too_many_arguments)]
fn power_checks(
    stage: &Stage,
    ambient: f64,
    dissipation: Option<f64>,
    pd: Option<f64>,
    tj_max: Option<f64>,
    rth_ja: Option<f64>,
    how: &dyn Fn() -> String,
    checks: &mut Out,
) {
    let required = dissipation.map(|p| p / stage.rules.power_derating);
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

fn switch(stage: &Stage, needs: &NeedLookup, part: &Part, checks: &mut Out) {
    let il = needs.value(ids::LOAD_CURRENT);
    let worst_case = needs.is_worst_case();
    let ambient = worst::thermal_ambient(stage, worst_case).value();
    if let Some(b) = part.bjt() {
        checks.min(needs, ids::SWITCH_VOLTAGE, "vceo", b.vceo.get(), Dim::Volt);
        checks.min(
            needs,
            ids::SWITCH_CURRENT,
            "ic_max",
            b.ic_max.get(),
            Dim::Amp,
        );
        if needs.get(ids::SWITCH_GAIN).is_some() {
            let mut gain = at_least(
                ids::SWITCH_GAIN,
                "hfe_min",
                b.hfe_min.get(),
                needs.value(ids::SWITCH_GAIN),
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
        if let Some(il) = il {
            let vce_sat = b.vce_sat.get().unwrap_or(stage.assume.vce_sat.value());
            let (base, vbe) = if worst_case {
                // The same bound as the switch.dissipation need: the most base current, the
                // highest VBE.
                let (ib, vbe) = worst::base_dissipation_drive(
                    stage,
                    needs.value(ids::SWITCH_BASE_RESISTOR).map(Ohms),
                    Amps(il),
                );
                (ib.value(), vbe.value())
            } else {
                (base_current(stage, needs), stage.assume.vbe_on.value())
            };
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
                stage,
                ambient,
                Some(p),
                b.pd.get(),
                b.tj_max.get(),
                b.rth_ja.get(),
                &how,
                checks,
            );
        }
    } else if let Some(m) = part.mosfet() {
        checks.min(needs, ids::SWITCH_VOLTAGE, "vds", m.vds.get(), Dim::Volt);
        checks.min(
            needs,
            ids::SWITCH_CURRENT,
            "id_max",
            m.id_max.get(),
            Dim::Amp,
        );
        if needs.get(ids::SWITCH_GATE_DRIVE).is_some() {
            let mut gate = at_most(
                ids::SWITCH_GATE_DRIVE,
                "rds_on_vgs",
                m.rds_on_vgs.get(),
                needs.value(ids::SWITCH_GATE_DRIVE),
                Dim::Volt,
            );
            if gate.verdict == CheckVerdict::Short {
                gate = checks.note(gate, || {
                    "RDS(on) is not specified at a gate voltage the drive reaches".to_string()
                });
            }
            checks.push(gate);
        }
        if needs.get(ids::SWITCH_GATE_THRESHOLD).is_some() {
            checks.max(
                needs,
                ids::SWITCH_GATE_THRESHOLD,
                "vgs_th_max",
                m.vgs_th_max.get(),
                Dim::Volt,
            );
        }
        if needs.get(ids::SWITCH_GATE_VOLTAGE).is_some() {
            checks.min(
                needs,
                ids::SWITCH_GATE_VOLTAGE,
                "vgs_max",
                m.vgs_max.get(),
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
                    stage,
                    ambient,
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
fn base_current(stage: &Stage, needs: &NeedLookup) -> f64 {
    let drive = stage.drive.high.value() - stage.assume.vbe_on.value();
    needs
        .value(ids::SWITCH_BASE_RESISTOR)
        .filter(|r| *r > 0.0)
        .map(|r| drive / r)
        .or_else(|| needs.value(ids::SWITCH_BASE_CURRENT))
        .unwrap_or(0.0)
        .max(0.0)
}

fn clamp(needs: &NeedLookup, part: &Part, checks: &mut Out) {
    let Some(d) = part.diode() else { return };
    checks.min(needs, ids::CLAMP_VOLTAGE, "vrrm", d.vrrm.get(), Dim::Volt);
    checks.min(
        needs,
        ids::CLAMP_CURRENT,
        "if_avg",
        d.if_avg.get(),
        Dim::Amp,
    );
}

fn zener(needs: &NeedLookup, part: &Part, checks: &mut Out) {
    let Some(d) = part.diode() else { return };
    checks.push(within(
        ids::ZENER_VOLTAGE,
        "vz",
        d.vz.get(),
        needs.value(ids::ZENER_VOLTAGE),
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

fn relay(stage: &Stage, needs: &NeedLookup, part: &Part, checks: &mut Out) {
    let Some(r) = part.relay() else { return };
    // Worst case: the part's own coil taken cold, at the corner of the stage's coil current.
    let cold = worst::coil_resistance_factor(stage, needs.is_worst_case());
    let coil = own_coil_current(stage, part).map(|i| i / cold);
    let mut coil_check = at_most(
        ids::RELAY_COIL_CURRENT,
        "coil current",
        coil,
        needs.value(ids::RELAY_COIL_CURRENT),
        Dim::Amp,
    );
    if coil.is_some() {
        coil_check = checks.note(coil_check, || {
            if needs.is_worst_case() {
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
        needs,
        ids::RELAY_OPERATE_VOLTAGE,
        "must_operate_v",
        r.must_operate_v.get(),
        Dim::Volt,
    );
    checks.min(
        needs,
        ids::RELAY_COIL_VOLTAGE_MAX,
        "coil_v_max",
        r.coil_v_max.get(),
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
    if needs.get(ids::RELAY_CONTACT_VOLTAGE).is_some() {
        checks.min(needs, ids::RELAY_CONTACT_VOLTAGE, v_name, v, Dim::Volt);
    }
    if needs.get(ids::RELAY_CONTACT_CURRENT).is_some() {
        checks.min(needs, ids::RELAY_CONTACT_CURRENT, a_name, a, Dim::Amp);
    }
    if let Some(inrush) = needs.get(ids::RELAY_INRUSH) {
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
    if needs.value(ids::RELAY_IMPULSE).is_some() {
        checks.min(
            needs,
            ids::RELAY_IMPULSE,
            "impulse_v",
            r.impulse_v.get(),
            Dim::Volt,
        );
    }
    if needs.value(ids::RELAY_DIELECTRIC).is_some() {
        checks.min(
            needs,
            ids::RELAY_DIELECTRIC,
            "dielectric_v",
            r.dielectric_v.get(),
            Dim::Volt,
        );
    }
}

fn sensor(stage: &Stage, needs: &NeedLookup, part: &Part, checks: &mut Out) {
    let Some(p) = part.photocell() else { return };
    checks.min(
        needs,
        ids::SENSOR_VOLTAGE,
        "v_max",
        p.v_max.get(),
        Dim::Volt,
    );
    checks.min(needs, ids::SENSOR_POWER, "p_max", p.p_max.get(), Dim::Watt);
    if let Some(sensor) = &stage.sensor {
        let own = match (
            needs.value(ids::SENSOR_FIXED_RESISTOR),
            p.r_10lux.get(),
            p.gamma.get(),
        ) {
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
        let mut check = within(
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

fn part_rules(stage: &Stage, part: &Part, checks: &mut Out) {
    let rule = |need: &'static str,
                rating_name: &'static str,
                verdict: CheckVerdict,
                note: Cow<'static, str>| Check {
        need,
        rating_name,
        rating: None,
        required: None,
        dim: Dim::Number,
        bound: Bound::Value,
        verdict,
        headroom: None,
        note,
    };
    let status = match part.status {
        Status::Obsolete if !stage.rules.allow_obsolete => rule(
            ids_part::STATUS,
            "status",
            CheckVerdict::Short,
            Cow::Borrowed("obsolete; set rules.allow_obsolete = true to accept it"),
        ),
        Status::Obsolete => rule(
            ids_part::STATUS,
            "status",
            CheckVerdict::Pass,
            Cow::Borrowed("obsolete, allowed by the rules"),
        ),
        Status::Nrnd => rule(
            ids_part::STATUS,
            "status",
            CheckVerdict::Pass,
            Cow::Borrowed("not recommended for new designs"),
        ),
        Status::Active => rule(
            ids_part::STATUS,
            "status",
            CheckVerdict::Pass,
            Cow::Borrowed(""),
        ),
        Status::Unknown => rule(
            ids_part::STATUS,
            "status",
            CheckVerdict::Pass,
            Cow::Borrowed("status not given"),
        ),
    };
    checks.push(status);
    let quantity = f64::from(stage.rules.quantity.max(1));
    let mut stock = at_least(
        ids_part::STOCK,
        "stock",
        part.stock.map(|s| s as f64),
        Some(quantity),
        Dim::Number,
    );
    if stock.verdict == CheckVerdict::Short {
        // Written only with the detail: a ranking need not format a sentence for every part
        // short of stock.
        stock = checks.note(stock, || {
            format!("{} in stock, {} needed", part.stock.unwrap_or(0), quantity)
        });
    }
    checks.push(stock);
    if stage.rules.require_rohs {
        let check = if is_cadmium_cell(part) {
            rule(
                ids_part::ROHS,
                "rohs",
                CheckVerdict::Short,
                Cow::Borrowed(
                    "CdS photocell: cadmium above 0.01 % (EU RoHS 2011/65/EU Annex II); the photoresistor exemption expired at the end of 2013",
                ),
            )
        } else {
            match part.rohs {
                Some(true) => rule(
                    ids_part::ROHS,
                    "rohs",
                    CheckVerdict::Pass,
                    Cow::Borrowed(""),
                ),
                Some(false) => rule(
                    ids_part::ROHS,
                    "rohs",
                    CheckVerdict::Short,
                    Cow::Borrowed("not RoHS compliant"),
                ),
                None => rule(
                    ids_part::ROHS,
                    "rohs",
                    CheckVerdict::Unknown,
                    Cow::Borrowed("RoHS status not given"),
                ),
            }
        };
        checks.push(check);
    } else if is_cadmium_cell(part) || (part.kind == Kind::Photocell && part.rohs == Some(false)) {
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
                            tally(&stage, &NeedLookup::new(&needs), role, part),
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

    /// The look-up finds what `Needs::get` finds: by the ids' statics, by an equal text built
    /// elsewhere, and nothing for an id the needs do not have.
    #[test]
    fn need_lookup_finds_what_the_needs_hold() {
        for text in [
            include_str!("../../data/stages/door-strike.toml"),
            include_str!("../../data/stages/mains-pump-relay.toml"),
            include_str!("../../data/stages/cabinet-light-sensor.toml"),
        ] {
            let stage = Stage::from_toml(text, "stage.toml").expect("a demo stage parses");
            let needs = crate::needs::compute(&stage, None);
            let lookup = NeedLookup::new(&needs);
            for need in &needs.needs {
                let built = need.id.to_string();
                for id in [need.id, built.as_str()] {
                    assert_eq!(lookup.value(id), needs.value(id), "{id}");
                    assert!(
                        std::ptr::eq(lookup.get(id).expect("found"), needs.get(id).expect("held")),
                        "{id}"
                    );
                }
            }
            assert!(lookup.get("switch.no_such_need").is_none());
            assert_eq!(lookup.is_worst_case(), needs.is_worst_case());
        }
    }
}
