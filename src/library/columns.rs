//! The columns loadfit knows: their canonical names, aliases, dimensions and the kinds they
//! apply to, and the mapping of a file's header onto them.
//!
//! To add a column: add a [`Field`] variant, a row in [`FIELDS`], and a slot in
//! [`Field::slot`] (or a case in the reader for a common column).

use super::part::{Kind, Rating, Ratings};
use crate::units::{self, Dim};

/// A column loadfit reads into the part model.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
#[allow(missing_docs)] // each variant is the column of the same name in DESIGN.md section 3
pub enum Field {
    Part,
    Kind,
    Package,
    Pinout,
    Maker,
    Price,
    Stock,
    Status,
    Rohs,
    Notes,
    Tags,
    Vceo,
    IcMax,
    HfeMin,
    HfeAtIc,
    VceSat,
    VceSatAtIc,
    VbeOn,
    Vds,
    IdMax,
    RdsOn,
    RdsOnVgs,
    VgsThMax,
    VgsMax,
    Pd,
    TjMax,
    RthJa,
    Vrrm,
    IfAvg,
    Ifsm,
    Vf,
    VfAtIf,
    Trr,
    Vz,
    Pz,
    CoilV,
    CoilR,
    CoilL,
    MustOperateV,
    MustReleaseV,
    CoilVMax,
    ContactForm,
    ContactAAc,
    ContactVAc,
    ContactADc,
    ContactVDc,
    InrushA,
    DielectricV,
    ImpulseV,
    OperateMs,
    ReleaseMs,
    R10Lux,
    R10LuxTol,
    Gamma,
    RDark,
    VMax,
    PMax,
    PeakNm,
    RiseMs,
    DecayMs,
}

/// What a column holds and how a bare number in it is read.
#[derive(Debug, Clone, Copy)]
pub struct FieldSpec {
    /// The field.
    pub field: Field,
    /// The canonical column name.
    pub name: &'static str,
    /// Other header spellings (already normalised: lower case, no spaces, `_` or `-`).
    pub aliases: &'static [&'static str],
    /// The dimension of the values; `None` for text columns.
    pub dim: Option<Dim>,
    /// The scale of a bare number: the column's natural unit (`operate_ms` holds milliseconds,
    /// `peak_nm` nanometres, percent columns percent). 1 for SI base units.
    pub bare_scale: f64,
    /// What the column means, for the README and `init`.
    pub meaning: &'static str,
}

const fn spec(
    field: Field,
    name: &'static str,
    aliases: &'static [&'static str],
    dim: Option<Dim>,
    bare_scale: f64,
    meaning: &'static str,
) -> FieldSpec {
    FieldSpec {
        field,
        name,
        aliases,
        dim,
        bare_scale,
        meaning,
    }
}

const V: Option<Dim> = Some(Dim::Volt);
const A: Option<Dim> = Some(Dim::Amp);
const OHM: Option<Dim> = Some(Dim::Ohm);
const W: Option<Dim> = Some(Dim::Watt);
const S: Option<Dim> = Some(Dim::Second);
const N: Option<Dim> = Some(Dim::Number);

/// Every known column, in the order `init` writes them.
pub const FIELDS: &[FieldSpec] = &[
    spec(
        Field::Part,
        "part",
        &["partnumber", "partno", "pn", "mpn", "number"],
        None,
        1.0,
        "part number (required, unique)",
    ),
    spec(
        Field::Kind,
        "kind",
        &["type", "category", "class"],
        None,
        1.0,
        "npn, pnp, nmos, pmos, diode, schottky, zener, relay, photocell (required)",
    ),
    spec(
        Field::Package,
        "package",
        &["pkg", "case", "footprint"],
        None,
        1.0,
        "package, e.g. TO-92, SOT-23",
    ),
    spec(
        Field::Pinout,
        "pinout",
        &["pins", "pinorder"],
        None,
        1.0,
        "pin order as printed, e.g. EBC, CBE, GDS",
    ),
    spec(
        Field::Maker,
        "maker",
        &["manufacturer", "mfr", "vendor", "brand", "make"],
        None,
        1.0,
        "maker",
    ),
    spec(
        Field::Price,
        "price",
        &["unitprice", "cost"],
        N,
        1.0,
        "unit price in your currency",
    ),
    spec(
        Field::Stock,
        "stock",
        &["qty", "quantity", "onhand", "instock"],
        N,
        1.0,
        "units in stock",
    ),
    spec(
        Field::Status,
        "status",
        &["lifecycle", "state"],
        None,
        1.0,
        "active, nrnd or obsolete",
    ),
    spec(
        Field::Rohs,
        "rohs",
        &["rohscompliant"],
        None,
        1.0,
        "yes or no",
    ),
    spec(
        Field::Notes,
        "notes",
        &["note", "description", "desc", "comment", "comments"],
        None,
        1.0,
        "free text",
    ),
    spec(
        Field::Tags,
        "tags",
        &["tag", "keywords"],
        None,
        1.0,
        "free words for search",
    ),
    spec(
        Field::Vceo,
        "vceo",
        &["bvceo", "vce", "vcemax", "vceomax", "vbrceo"],
        V,
        1.0,
        "BJT collector-emitter breakdown, base open",
    ),
    spec(
        Field::IcMax,
        "ic_max",
        &["ic", "icmax", "icontinuous"],
        A,
        1.0,
        "BJT continuous collector current",
    ),
    spec(
        Field::HfeMin,
        "hfe_min",
        &["hfe", "hfemin", "beta", "gain"],
        N,
        1.0,
        "BJT minimum DC current gain",
    ),
    spec(
        Field::HfeAtIc,
        "hfe_at_ic",
        &["hfeatic", "hfeic", "hfetestcurrent"],
        A,
        1.0,
        "collector current where hfe_min is given",
    ),
    spec(
        Field::VceSat,
        "vce_sat",
        &["vcesat", "vcesatmax"],
        V,
        1.0,
        "BJT saturation voltage",
    ),
    spec(
        Field::VceSatAtIc,
        "vce_sat_at_ic",
        &["vcesatatic", "vcesatic"],
        A,
        1.0,
        "collector current where vce_sat is given",
    ),
    spec(
        Field::VbeOn,
        "vbe_on",
        &["vbeon", "vbe", "vbesat"],
        V,
        1.0,
        "BJT base-emitter on voltage",
    ),
    spec(
        Field::Vds,
        "vds",
        &["vdss", "bvdss", "vdsmax"],
        V,
        1.0,
        "MOSFET drain-source breakdown",
    ),
    spec(
        Field::IdMax,
        "id_max",
        &["id", "idmax", "idcontinuous"],
        A,
        1.0,
        "MOSFET continuous drain current",
    ),
    spec(
        Field::RdsOn,
        "rds_on",
        &["rdson", "rdsonmax", "ron"],
        OHM,
        1.0,
        "MOSFET on resistance",
    ),
    spec(
        Field::RdsOnVgs,
        "rds_on_vgs",
        &["rdsonvgs", "rdsonat", "vgsrdson"],
        V,
        1.0,
        "gate voltage where rds_on is given",
    ),
    spec(
        Field::VgsThMax,
        "vgs_th_max",
        &["vgsthmax", "vgsth", "vth", "vgsthreshold"],
        V,
        1.0,
        "MOSFET maximum gate threshold",
    ),
    spec(
        Field::VgsMax,
        "vgs_max",
        &["vgsmax", "vgss"],
        V,
        1.0,
        "MOSFET maximum gate-source voltage",
    ),
    spec(
        Field::Pd,
        "pd",
        &["ptot", "pdmax", "power", "dissipation"],
        W,
        1.0,
        "transistor dissipation at 25 °C",
    ),
    spec(
        Field::TjMax,
        "tj_max",
        &["tjmax", "tj", "tjunction"],
        Some(Dim::Celsius),
        1.0,
        "maximum junction temperature, °C",
    ),
    spec(
        Field::RthJa,
        "rth_ja",
        &["rthja", "thetaja", "rthjunctionambient"],
        Some(Dim::KelvinPerWatt),
        1.0,
        "junction-to-ambient thermal resistance, K/W",
    ),
    spec(
        Field::Vrrm,
        "vrrm",
        &["vr", "vrmax", "vrwm", "prv", "piv"],
        V,
        1.0,
        "diode repetitive peak reverse voltage",
    ),
    spec(
        Field::IfAvg,
        "if_avg",
        &["ifavg", "if", "ifav", "io"],
        A,
        1.0,
        "diode average forward current",
    ),
    spec(
        Field::Ifsm,
        "ifsm",
        &["ifsurge", "isurge"],
        A,
        1.0,
        "diode surge forward current",
    ),
    spec(
        Field::Vf,
        "vf",
        &["vfmax", "vforward"],
        V,
        1.0,
        "diode forward voltage",
    ),
    spec(
        Field::VfAtIf,
        "vf_at_if",
        &["vfatif", "vfif", "iftest"],
        A,
        1.0,
        "forward current where vf is given",
    ),
    spec(
        Field::Trr,
        "trr",
        &["trrmax", "recovery"],
        S,
        1.0,
        "diode reverse recovery time",
    ),
    spec(
        Field::Vz,
        "vz",
        &["vznom", "zenervoltage"],
        V,
        1.0,
        "zener voltage",
    ),
    spec(
        Field::Pz,
        "pz",
        &["pzmax", "zenerpower"],
        W,
        1.0,
        "zener power rating",
    ),
    spec(
        Field::CoilV,
        "coil_v",
        &["coilv", "coilvoltage", "vcoil", "nominalvoltage"],
        V,
        1.0,
        "relay rated coil voltage",
    ),
    spec(
        Field::CoilR,
        "coil_r",
        &["coilr", "coilresistance", "rcoil"],
        OHM,
        1.0,
        "relay coil resistance at 20 °C",
    ),
    spec(
        Field::CoilL,
        "coil_l",
        &["coill", "coilinductance", "lcoil"],
        Some(Dim::Henry),
        1.0,
        "relay coil inductance",
    ),
    spec(
        Field::MustOperateV,
        "must_operate_v",
        &[
            "mustoperatev",
            "mustoperate",
            "pickupv",
            "pickup",
            "pullinv",
        ],
        V,
        1.0,
        "relay must-operate voltage",
    ),
    spec(
        Field::MustReleaseV,
        "must_release_v",
        &["mustreleasev", "mustrelease", "dropoutv", "dropout"],
        V,
        1.0,
        "relay must-release voltage",
    ),
    spec(
        Field::CoilVMax,
        "coil_v_max",
        &["coilvmax", "maxcoilv", "maxcoilvoltage"],
        V,
        1.0,
        "relay maximum continuous coil voltage",
    ),
    spec(
        Field::ContactForm,
        "contact_form",
        &["contactform", "form", "contacts", "arrangement"],
        None,
        1.0,
        "contact form: 1A, 1B, 1C, 2C",
    ),
    spec(
        Field::ContactAAc,
        "contact_a_ac",
        &["contactaac", "contactcurrentac", "iacmax"],
        A,
        1.0,
        "contact current rating, AC",
    ),
    spec(
        Field::ContactVAc,
        "contact_v_ac",
        &["contactvac", "contactvoltageac", "vacmax"],
        V,
        1.0,
        "contact voltage rating, AC rms",
    ),
    spec(
        Field::ContactADc,
        "contact_a_dc",
        &["contactadc", "contactcurrentdc", "idcmax"],
        A,
        1.0,
        "contact current rating, DC",
    ),
    spec(
        Field::ContactVDc,
        "contact_v_dc",
        &["contactvdc", "contactvoltagedc", "vdcmax"],
        V,
        1.0,
        "contact voltage rating, DC",
    ),
    spec(
        Field::InrushA,
        "inrush_a",
        &["inrusha", "inrush", "inrushcurrent"],
        A,
        1.0,
        "inrush current the contacts make",
    ),
    spec(
        Field::DielectricV,
        "dielectric_v",
        &[
            "dielectricv",
            "dielectric",
            "dielectricstrength",
            "isolationv",
        ],
        V,
        1.0,
        "coil-to-contact dielectric strength, V rms",
    ),
    spec(
        Field::ImpulseV,
        "impulse_v",
        &["impulsev", "impulse", "surgev", "impulsewithstand"],
        V,
        1.0,
        "coil-to-contact impulse withstand, V peak",
    ),
    spec(
        Field::OperateMs,
        "operate_ms",
        &["operatems", "operatetime", "ton"],
        S,
        1e-3,
        "relay operate time; a bare number is ms",
    ),
    spec(
        Field::ReleaseMs,
        "release_ms",
        &["releasems", "releasetime", "toff"],
        S,
        1e-3,
        "relay release time; a bare number is ms",
    ),
    spec(
        Field::R10Lux,
        "r_10lux",
        &["r10lux", "r10", "rlight", "resistance10lux"],
        OHM,
        1.0,
        "photocell resistance at 10 lux",
    ),
    spec(
        Field::R10LuxTol,
        "r_10lux_tol",
        &["r10luxtol", "r10tol", "r10tolerance"],
        Some(Dim::Percent),
        0.01,
        "tolerance of r_10lux; a bare number is %",
    ),
    spec(
        Field::Gamma,
        "gamma",
        &["γ", "slope"],
        N,
        1.0,
        "photocell gamma, log10(R10/R100)",
    ),
    spec(
        Field::RDark,
        "r_dark",
        &["rdark", "darkresistance"],
        OHM,
        1.0,
        "photocell dark resistance",
    ),
    spec(
        Field::VMax,
        "v_max",
        &["vmax", "maxvoltage"],
        V,
        1.0,
        "photocell maximum voltage",
    ),
    spec(
        Field::PMax,
        "p_max",
        &["pmax", "maxpower"],
        W,
        1.0,
        "photocell maximum dissipation",
    ),
    spec(
        Field::PeakNm,
        "peak_nm",
        &["peaknm", "peak", "peakwavelength", "lambdapeak"],
        Some(Dim::Metre),
        1e-9,
        "photocell spectral peak; a bare number is nm",
    ),
    spec(
        Field::RiseMs,
        "rise_ms",
        &["risems", "risetime"],
        S,
        1e-3,
        "photocell rise time; a bare number is ms",
    ),
    spec(
        Field::DecayMs,
        "decay_ms",
        &["decayms", "decaytime"],
        S,
        1e-3,
        "photocell decay time; a bare number is ms",
    ),
];

impl Field {
    /// The specification of this field.
    #[must_use]
    pub fn spec(self) -> &'static FieldSpec {
        // FIELDS lists every variant: the `every_field_has_a_spec` test proves this cannot fail.
        FIELDS
            .iter()
            .find(|s| s.field == self)
            .expect("every field has a spec")
    }

    /// The canonical column name.
    #[must_use]
    pub fn name(self) -> &'static str {
        self.spec().name
    }

    /// The rating slot this field fills in `ratings`, if the field applies to that kind.
    pub fn slot(self, ratings: &mut Ratings) -> Option<&mut Rating> {
        use Field as F;
        match ratings {
            Ratings::Bjt(b) => Some(match self {
                F::Vceo => &mut b.vceo,
                F::IcMax => &mut b.ic_max,
                F::HfeMin => &mut b.hfe_min,
                F::HfeAtIc => &mut b.hfe_at_ic,
                F::VceSat => &mut b.vce_sat,
                F::VceSatAtIc => &mut b.vce_sat_at_ic,
                F::VbeOn => &mut b.vbe_on,
                F::Pd => &mut b.pd,
                F::TjMax => &mut b.tj_max,
                F::RthJa => &mut b.rth_ja,
                _ => return None,
            }),
            Ratings::Mosfet(m) => Some(match self {
                F::Vds => &mut m.vds,
                F::IdMax => &mut m.id_max,
                F::RdsOn => &mut m.rds_on,
                F::RdsOnVgs => &mut m.rds_on_vgs,
                F::VgsThMax => &mut m.vgs_th_max,
                F::VgsMax => &mut m.vgs_max,
                F::Pd => &mut m.pd,
                F::TjMax => &mut m.tj_max,
                F::RthJa => &mut m.rth_ja,
                _ => return None,
            }),
            Ratings::Diode(d) => Some(match self {
                F::Vrrm => &mut d.vrrm,
                F::IfAvg => &mut d.if_avg,
                F::Ifsm => &mut d.ifsm,
                F::Vf => &mut d.vf,
                F::VfAtIf => &mut d.vf_at_if,
                F::Trr => &mut d.trr,
                F::Vz => &mut d.vz,
                F::Pz => &mut d.pz,
                _ => return None,
            }),
            Ratings::Relay(r) => Some(match self {
                F::CoilV => &mut r.coil_v,
                F::CoilR => &mut r.coil_r,
                F::CoilL => &mut r.coil_l,
                F::MustOperateV => &mut r.must_operate_v,
                F::MustReleaseV => &mut r.must_release_v,
                F::CoilVMax => &mut r.coil_v_max,
                F::ContactAAc => &mut r.contact_a_ac,
                F::ContactVAc => &mut r.contact_v_ac,
                F::ContactADc => &mut r.contact_a_dc,
                F::ContactVDc => &mut r.contact_v_dc,
                F::InrushA => &mut r.inrush_a,
                F::DielectricV => &mut r.dielectric_v,
                F::ImpulseV => &mut r.impulse_v,
                F::OperateMs => &mut r.operate_ms,
                F::ReleaseMs => &mut r.release_ms,
                _ => return None,
            }),
            Ratings::Photocell(p) => Some(match self {
                F::R10Lux => &mut p.r_10lux,
                F::R10LuxTol => &mut p.r_10lux_tol,
                F::Gamma => &mut p.gamma,
                F::RDark => &mut p.r_dark,
                F::VMax => &mut p.v_max,
                F::PMax => &mut p.p_max,
                F::PeakNm => &mut p.peak_nm,
                F::RiseMs => &mut p.rise_ms,
                F::DecayMs => &mut p.decay_ms,
                _ => return None,
            }),
        }
    }

    /// The kinds whose rows carry this rating (empty for common columns).
    #[must_use]
    pub fn kinds(self) -> Vec<Kind> {
        Kind::ALL
            .into_iter()
            .filter(|&k| self.slot(&mut Ratings::empty(k)).is_some())
            .collect()
    }
}

/// A header cell split into its normalised name and the unit in brackets, if any.
#[derive(Debug, Clone, PartialEq)]
pub struct HeaderName {
    /// Lower case, without spaces, `_`, `-` and `.`.
    pub key: String,
    /// The text inside a trailing `(...)` or `[...]`, trimmed.
    pub unit: Option<String>,
    /// The key with the bracket's text kept (`Vce (sat)` gives `vcesat`), tried first, because
    /// a bracket may qualify the name rather than give a unit.
    pub full_key: String,
}

/// Normalises a header cell: `Ic max (mA)` becomes key `icmax` with unit `mA`.
#[must_use]
pub fn normalise_header(raw: &str) -> HeaderName {
    let trimmed = raw.trim().trim_start_matches('\u{feff}').trim();
    let (name, unit) = match trimmed.rfind(['(', '[']) {
        Some(open) if trimmed.ends_with([')', ']']) && open > 0 => {
            let inner = trimmed[open + 1..trimmed.len() - 1].trim();
            (
                &trimmed[..open],
                (!inner.is_empty()).then(|| inner.to_string()),
            )
        }
        _ => (trimmed, None),
    };
    let squash = |text: &str| -> String {
        text.chars()
            .filter(|c| !matches!(c, ' ' | '_' | '-' | '.' | '\t' | '(' | ')' | '[' | ']'))
            .flat_map(char::to_lowercase)
            .collect()
    };
    HeaderName {
        key: squash(name),
        unit,
        full_key: squash(trimmed),
    }
}

impl HeaderName {
    /// The field this header names and the unit that scales it: the whole text first
    /// (`Vce (sat)` is `vce_sat`), then the name before a bracketed unit (`Ic (mA)`).
    #[must_use]
    pub fn field(&self) -> Option<(Field, Option<&str>)> {
        if self.unit.is_some()
            && let Some(field) = field_for_key(&self.full_key)
        {
            return Some((field, None));
        }
        field_for_key(&self.key).map(|f| (f, self.unit.as_deref()))
    }
}

/// The field a normalised header key names, by canonical name or alias.
#[must_use]
pub fn field_for_key(key: &str) -> Option<Field> {
    FIELDS.iter().find_map(|s| {
        let canonical = s.name.replace('_', "");
        (canonical == key || s.aliases.contains(&key)).then_some(s.field)
    })
}

/// Why a header's unit cannot scale its column.
#[derive(Debug, Clone, PartialEq)]
pub struct HeaderUnitError {
    /// Why, in words.
    pub message: String,
}

/// The scale a header unit applies to bare numbers of a column of dimension `dim`:
/// `(mA)` on a current column is 1e-3, `(%)` on a percent column 0.01.
///
/// # Errors
/// [`HeaderUnitError`] when the unit belongs to another dimension or cannot be read.
pub fn header_scale(unit: &str, dim: Dim) -> Result<f64, HeaderUnitError> {
    match units::parse(&format!("1 {unit}"), dim) {
        Ok(q) => Ok(q.value),
        Err(e) => Err(HeaderUnitError {
            message: format!("the header's unit ({unit}) does not fit: {e}"),
        }),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_field_has_a_spec() {
        use std::collections::HashSet;
        let names: HashSet<_> = FIELDS.iter().map(|s| s.name).collect();
        assert_eq!(names.len(), FIELDS.len(), "names are unique");
        // A rating field applies to at least one kind; a common field to none.
        for s in FIELDS {
            assert_eq!(s.field.spec().name, s.name);
        }
    }

    #[test]
    fn aliases_do_not_collide() {
        let mut seen = std::collections::HashMap::new();
        for s in FIELDS {
            let canonical = s.name.replace('_', "");
            let mut keys: Vec<&str> = s.aliases.to_vec();
            keys.push(&canonical);
            keys.sort_unstable();
            keys.dedup();
            for key in keys {
                if let Some(other) = seen.insert(key.to_string(), s.name) {
                    panic!("{key} names both {other} and {}", s.name);
                }
            }
        }
    }

    #[test]
    fn header_spellings_reach_vceo() {
        for raw in ["VCEO", "Vceo (V)", "V_CEO", "BVceo", " vceo ", "V-CEO [V]"] {
            let name = normalise_header(raw);
            assert_eq!(name.field().map(|f| f.0), Some(Field::Vceo), "{raw}");
        }
        assert_eq!(
            normalise_header("Vce (sat)").field(),
            Some((Field::VceSat, None))
        );
        assert_eq!(
            normalise_header("VCE(sat) (mV)").field(),
            Some((Field::VceSat, Some("mV")))
        );
        let ic = normalise_header("Ic max (mA)");
        assert_eq!(ic.key, "icmax");
        assert_eq!(ic.unit.as_deref(), Some("mA"));
        assert_eq!(field_for_key(&ic.key), Some(Field::IcMax));
        assert_eq!(header_scale("mA", Dim::Amp), Ok(1e-3));
        assert!(header_scale("mA", Dim::Volt).is_err());
    }

    #[test]
    fn rating_fields_apply_to_their_kinds() {
        assert_eq!(Field::Vceo.kinds(), vec![Kind::Npn, Kind::Pnp]);
        assert_eq!(
            Field::Pd.kinds(),
            vec![Kind::Npn, Kind::Pnp, Kind::Nmos, Kind::Pmos]
        );
        assert!(Field::Part.kinds().is_empty());
    }
}
