//! The typed model of one part: common columns, ratings per kind, unknown columns kept.

use std::fmt;

pub use compact_str::CompactString as Text;

/// A rating that may be missing. Held as `f64` with NaN for "not given" so a part stays
/// compact (a million parts are held in memory); read it with [`Rating::get`].
#[derive(Clone, Copy)]
pub struct Rating(f64);

impl PartialEq for Rating {
    /// Two ratings are equal when both are missing or both hold the same value.
    fn eq(&self, other: &Rating) -> bool {
        self.get() == other.get()
    }
}

impl Rating {
    /// A rating the library does not give.
    pub const MISSING: Rating = Rating(f64::NAN);

    /// A given rating (SI base units). A non-finite value counts as missing.
    #[must_use]
    pub fn of(value: f64) -> Rating {
        Rating(value)
    }

    /// The value in SI base units, or `None` when the library does not give it.
    #[must_use]
    pub fn get(self) -> Option<f64> {
        self.0.is_finite().then_some(self.0)
    }
}

impl Default for Rating {
    fn default() -> Self {
        Rating::MISSING
    }
}

impl fmt::Debug for Rating {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self.get() {
            Some(v) => write!(f, "{v}"),
            None => f.write_str("-"),
        }
    }
}

/// What a part is. The kind decides which ratings it carries and which roles it can fill.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Kind {
    /// NPN bipolar transistor.
    Npn,
    /// PNP bipolar transistor.
    Pnp,
    /// N-channel MOSFET.
    Nmos,
    /// P-channel MOSFET.
    Pmos,
    /// Rectifier or small-signal diode.
    Diode,
    /// Schottky diode.
    Schottky,
    /// Zener diode.
    Zener,
    /// Electromechanical or reed relay.
    Relay,
    /// Light-dependent resistor.
    Photocell,
}

impl Kind {
    /// Every kind, in the order reports list them.
    pub const ALL: [Kind; 9] = [
        Kind::Npn,
        Kind::Pnp,
        Kind::Nmos,
        Kind::Pmos,
        Kind::Diode,
        Kind::Schottky,
        Kind::Zener,
        Kind::Relay,
        Kind::Photocell,
    ];

    /// The word used in files and outputs.
    #[must_use]
    pub fn name(self) -> &'static str {
        match self {
            Kind::Npn => "npn",
            Kind::Pnp => "pnp",
            Kind::Nmos => "nmos",
            Kind::Pmos => "pmos",
            Kind::Diode => "diode",
            Kind::Schottky => "schottky",
            Kind::Zener => "zener",
            Kind::Relay => "relay",
            Kind::Photocell => "photocell",
        }
    }

    /// Reads a kind, accepting a few common spellings (`n-mosfet`, `rectifier`, `ldr`).
    #[must_use]
    pub fn from_text(text: &str) -> Option<Kind> {
        let trimmed = text.trim();
        // The canonical names first, without allocating: this runs once a row.
        if let Some(kind) = Kind::ALL
            .into_iter()
            .find(|k| k.name().eq_ignore_ascii_case(trimmed))
        {
            return Some(kind);
        }
        let lower = trimmed.to_ascii_lowercase();
        let squashed: String = lower
            .chars()
            .filter(|c| !matches!(c, ' ' | '-' | '_'))
            .collect();
        Some(match squashed.as_str() {
            "npn" => Kind::Npn,
            "pnp" => Kind::Pnp,
            "nmos" | "nmosfet" | "nfet" | "nchannel" | "nch" => Kind::Nmos,
            "pmos" | "pmosfet" | "pfet" | "pchannel" | "pch" => Kind::Pmos,
            "diode" | "rectifier" | "signal" | "switchingdiode" => Kind::Diode,
            "schottky" | "schottkydiode" => Kind::Schottky,
            "zener" | "zenerdiode" => Kind::Zener,
            "relay" | "reed" | "reedrelay" | "powerrelay" => Kind::Relay,
            "photocell" | "ldr" | "photoresistor" | "cds" => Kind::Photocell,
            _ => return None,
        })
    }

    /// Whether the kind is a bipolar transistor.
    #[must_use]
    pub fn is_bjt(self) -> bool {
        matches!(self, Kind::Npn | Kind::Pnp)
    }

    /// Whether the kind is a MOSFET.
    #[must_use]
    pub fn is_mosfet(self) -> bool {
        matches!(self, Kind::Nmos | Kind::Pmos)
    }

    /// Whether the kind is a diode of any sort.
    #[must_use]
    pub fn is_diode(self) -> bool {
        matches!(self, Kind::Diode | Kind::Schottky | Kind::Zener)
    }
}

impl fmt::Display for Kind {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

/// Availability of a part from its maker.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Default)]
pub enum Status {
    /// In production.
    Active,
    /// Not recommended for new designs.
    Nrnd,
    /// No longer made.
    Obsolete,
    /// The library does not say.
    #[default]
    Unknown,
}

impl Status {
    /// The word used in files and outputs.
    #[must_use]
    pub fn name(self) -> &'static str {
        match self {
            Status::Active => "active",
            Status::Nrnd => "nrnd",
            Status::Obsolete => "obsolete",
            Status::Unknown => "",
        }
    }

    /// Reads a status word (`active`, `nrnd`, `obsolete`, and `eol`, `discontinued` for obsolete).
    #[must_use]
    pub fn from_text(text: &str) -> Option<Status> {
        Some(match text.trim().to_ascii_lowercase().as_str() {
            "active" | "production" | "in production" => Status::Active,
            "nrnd" | "not recommended" => Status::Nrnd,
            "obsolete" | "eol" | "discontinued" => Status::Obsolete,
            "" => Status::Unknown,
            _ => return None,
        })
    }
}

/// A relay's contact arrangement.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum ContactForm {
    /// Normally open, `poles` poles (1A, 2A).
    A(u8),
    /// Normally closed (1B, 2B).
    B(u8),
    /// Changeover (1C, 2C).
    C(u8),
}

impl ContactForm {
    /// Reads `1A`, `1 form C`, `SPDT`, `DPDT`, `SPST-NO` ...
    #[must_use]
    pub fn from_text(text: &str) -> Option<ContactForm> {
        let upper: String = text
            .trim()
            .to_ascii_uppercase()
            .chars()
            .filter(|c| !c.is_whitespace())
            .collect();
        match upper.as_str() {
            "SPST" | "SPST-NO" | "SPSTNO" => return Some(ContactForm::A(1)),
            "SPST-NC" | "SPSTNC" => return Some(ContactForm::B(1)),
            "SPDT" => return Some(ContactForm::C(1)),
            "DPST" | "DPST-NO" => return Some(ContactForm::A(2)),
            "DPDT" => return Some(ContactForm::C(2)),
            _ => {}
        }
        let digits: String = upper.chars().take_while(char::is_ascii_digit).collect();
        let rest = upper[digits.len()..].trim_start_matches("FORM");
        let poles: u8 = if digits.is_empty() {
            1
        } else {
            digits.parse().ok()?
        };
        if poles == 0 {
            return None;
        }
        match rest {
            "A" => Some(ContactForm::A(poles)),
            "B" => Some(ContactForm::B(poles)),
            "C" => Some(ContactForm::C(poles)),
            _ => None,
        }
    }

    /// The number of poles.
    #[must_use]
    pub fn poles(self) -> u8 {
        match self {
            ContactForm::A(n) | ContactForm::B(n) | ContactForm::C(n) => n,
        }
    }

    /// Whether this form can do everything `other` does: a changeover covers a make or a
    /// break contact, and more poles cover fewer.
    #[must_use]
    pub fn covers(self, other: ContactForm) -> bool {
        if self.poles() < other.poles() {
            return false;
        }
        matches!(
            (self, other),
            (ContactForm::C(_), _)
                | (ContactForm::A(_), ContactForm::A(_))
                | (ContactForm::B(_), ContactForm::B(_))
        )
    }
}

impl fmt::Display for ContactForm {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            ContactForm::A(n) => write!(f, "{n}A"),
            ContactForm::B(n) => write!(f, "{n}B"),
            ContactForm::C(n) => write!(f, "{n}C"),
        }
    }
}

/// Ratings of a bipolar transistor (NPN or PNP; magnitudes, so a PNP's VCEO is positive).
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct Bjt {
    /// Collector-emitter breakdown, base open, V.
    pub vceo: Rating,
    /// Maximum continuous collector current, A.
    pub ic_max: Rating,
    /// Minimum DC current gain.
    pub hfe_min: Rating,
    /// Collector current at which `hfe_min` is specified, A.
    pub hfe_at_ic: Rating,
    /// Collector-emitter saturation voltage, V.
    pub vce_sat: Rating,
    /// Collector current at which `vce_sat` is specified, A.
    pub vce_sat_at_ic: Rating,
    /// Base-emitter on voltage, V.
    pub vbe_on: Rating,
    /// Total dissipation at 25 °C, W.
    pub pd: Rating,
    /// Maximum junction temperature, °C.
    pub tj_max: Rating,
    /// Junction-to-ambient thermal resistance, K/W.
    pub rth_ja: Rating,
}

/// Ratings of a MOSFET (N or P; magnitudes).
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct Mosfet {
    /// Drain-source breakdown, V.
    pub vds: Rating,
    /// Maximum continuous drain current, A.
    pub id_max: Rating,
    /// On resistance, Ω.
    pub rds_on: Rating,
    /// Gate-source voltage at which `rds_on` is specified, V.
    pub rds_on_vgs: Rating,
    /// Maximum gate threshold voltage, V.
    pub vgs_th_max: Rating,
    /// Maximum gate-source voltage, V.
    pub vgs_max: Rating,
    /// Total dissipation at 25 °C, W.
    pub pd: Rating,
    /// Maximum junction temperature, °C.
    pub tj_max: Rating,
    /// Junction-to-ambient thermal resistance, K/W.
    pub rth_ja: Rating,
}

/// Ratings of a diode, Schottky or zener.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct Diode {
    /// Repetitive peak reverse voltage, V.
    pub vrrm: Rating,
    /// Average forward current, A.
    pub if_avg: Rating,
    /// Non-repetitive surge forward current, A.
    pub ifsm: Rating,
    /// Forward voltage, V.
    pub vf: Rating,
    /// Forward current at which `vf` is specified, A.
    pub vf_at_if: Rating,
    /// Reverse recovery time, s.
    pub trr: Rating,
    /// Zener voltage, V.
    pub vz: Rating,
    /// Zener power rating, W.
    pub pz: Rating,
}

/// Ratings of a relay: coil, contacts and coil-to-contact insulation.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct Relay {
    /// Rated coil voltage, V.
    pub coil_v: Rating,
    /// Coil resistance at 20 °C, Ω.
    pub coil_r: Rating,
    /// Coil inductance, H.
    pub coil_l: Rating,
    /// Must-operate (pick-up) voltage, V.
    pub must_operate_v: Rating,
    /// Must-release (drop-out) voltage, V.
    pub must_release_v: Rating,
    /// Maximum continuous coil voltage, V.
    pub coil_v_max: Rating,
    /// Contact form, when given.
    pub contact_form: Option<ContactForm>,
    /// Contact current rating on AC, A.
    pub contact_a_ac: Rating,
    /// Contact voltage rating on AC, V rms.
    pub contact_v_ac: Rating,
    /// Contact current rating on DC, A.
    pub contact_a_dc: Rating,
    /// Contact voltage rating on DC, V.
    pub contact_v_dc: Rating,
    /// Inrush current the contacts make, A.
    pub inrush_a: Rating,
    /// Coil-to-contact dielectric strength, V rms.
    pub dielectric_v: Rating,
    /// Coil-to-contact impulse withstand, V peak.
    pub impulse_v: Rating,
    /// Operate time, s.
    pub operate_ms: Rating,
    /// Release time, s.
    pub release_ms: Rating,
}

/// Ratings of a photocell (light-dependent resistor).
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct Photocell {
    /// Resistance at 10 lux, Ω.
    pub r_10lux: Rating,
    /// Tolerance of `r_10lux`, as a fraction.
    pub r_10lux_tol: Rating,
    /// Slope γ of log R against log E.
    pub gamma: Rating,
    /// Dark resistance, Ω.
    pub r_dark: Rating,
    /// Maximum voltage, V.
    pub v_max: Rating,
    /// Maximum dissipation, W.
    pub p_max: Rating,
    /// Spectral peak, m.
    pub peak_nm: Rating,
    /// Rise time, s.
    pub rise_ms: Rating,
    /// Decay time, s.
    pub decay_ms: Rating,
}

/// The ratings of a part, by kind.
#[derive(Debug, Clone, PartialEq)]
pub enum Ratings {
    /// NPN or PNP.
    Bjt(Bjt),
    /// N- or P-MOSFET.
    Mosfet(Mosfet),
    /// Diode, Schottky or zener.
    Diode(Diode),
    /// Relay; boxed because relays are few and their ratings many.
    Relay(Box<Relay>),
    /// Photocell.
    Photocell(Photocell),
}

impl Ratings {
    /// Empty ratings for a kind, every value missing.
    #[must_use]
    pub fn empty(kind: Kind) -> Ratings {
        match kind {
            Kind::Npn | Kind::Pnp => Ratings::Bjt(Bjt::default()),
            Kind::Nmos | Kind::Pmos => Ratings::Mosfet(Mosfet::default()),
            Kind::Diode | Kind::Schottky | Kind::Zener => Ratings::Diode(Diode::default()),
            Kind::Relay => Ratings::Relay(Box::default()),
            Kind::Photocell => Ratings::Photocell(Photocell::default()),
        }
    }
}

/// Where a part came from: the library file (an index into [`super::Library::files`]) and the
/// 1-based line of its row, as a spreadsheet numbers it (the header is line 1).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Source {
    /// Index of the file in the library's file list.
    pub file: u32,
    /// 1-based line of the row.
    pub line: u32,
}

/// One part of the library. A million of these are held in memory, so the texts are
/// [`Text`]s, stored inline up to 24 bytes (no allocation for a part number or a short note),
/// and the rarely used columns sit behind one pointer.
#[derive(Debug, Clone, PartialEq)]
pub struct Part {
    /// The part number, unique in the library.
    pub number: Text,
    /// What the part is.
    pub kind: Kind,
    /// Package name (TO-92, SOT-23 ...), interned: see [`super::Library::text`].
    pub package: Sym,
    /// Pin order as printed (EBC, CBE, GDS ...), interned.
    pub pinout: Sym,
    /// Maker, interned.
    pub maker: Sym,
    /// Unit price in the library's currency.
    pub price: Rating,
    /// Units in stock (a count over `u32::MAX` is read as that, with a warning).
    pub stock: Option<u32>,
    /// Production status.
    pub status: Status,
    /// RoHS compliance, when given.
    pub rohs: Option<bool>,
    /// Free text from the `notes` column.
    pub notes: Note,
    /// Free text from the `tags` column.
    pub tags: Text,
    /// The ratings of its kind.
    pub ratings: Ratings,
    /// Columns loadfit does not know, kept as (column index into
    /// [`super::Library::extra_columns`], text).
    pub extra: Extras,
    /// Where the row came from.
    pub source: Source,
}

/// A part's free-text note: empty in most rows, so it costs one null pointer in the part
/// until it holds text. Reads as a `&str` (empty when there is none).
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Note(Option<Box<Text>>);

impl std::ops::Deref for Note {
    type Target = str;
    fn deref(&self) -> &str {
        self.0.as_deref().map_or("", |t| t.as_str())
    }
}

impl fmt::Display for Note {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self)
    }
}

impl From<&str> for Note {
    fn from(text: &str) -> Note {
        if text.is_empty() {
            Note(None)
        } else {
            Note(Some(Box::new(Text::from(text))))
        }
    }
}

impl serde::Serialize for Note {
    fn serialize<S: serde::Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        serializer.serialize_str(self)
    }
}

/// The cells of a part's unknown columns: (column index into
/// [`super::Library::extra_columns`], text). Most libraries have none, so an empty set costs
/// one null pointer in the part.
#[derive(Debug, Clone, PartialEq, Default)]
// A thin pointer on purpose: `Vec` alone would take 24 bytes in every part.
#[allow(clippy::box_collection)]
pub struct Extras(Option<Box<Vec<ExtraCell>>>);

/// One unknown-column cell: (column index into [`super::Library::extra_columns`], text).
pub type ExtraCell = (u32, Box<str>);

impl Extras {
    /// The cells, in column order.
    pub fn iter(&self) -> impl Iterator<Item = &(u32, Box<str>)> {
        self.0.iter().flat_map(|cells| cells.iter())
    }

    /// Whether the part has no unknown-column cells.
    #[must_use]
    pub fn is_empty(&self) -> bool {
        self.0.is_none()
    }
}

impl From<Vec<(u32, Box<str>)>> for Extras {
    fn from(cells: Vec<(u32, Box<str>)>) -> Extras {
        if cells.is_empty() {
            Extras(None)
        } else {
            Extras(Some(Box::new(cells)))
        }
    }
}

/// An interned string: an index into the library's string table. Packages, pinouts and makers
/// repeat across thousands of rows, so each distinct text is stored once.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Default)]
pub struct Sym(pub u32);

impl Part {
    /// The BJT ratings, if the part is a bipolar transistor.
    #[must_use]
    pub fn bjt(&self) -> Option<&Bjt> {
        match &self.ratings {
            Ratings::Bjt(b) => Some(b),
            _ => None,
        }
    }

    /// The MOSFET ratings, if the part is a MOSFET.
    #[must_use]
    pub fn mosfet(&self) -> Option<&Mosfet> {
        match &self.ratings {
            Ratings::Mosfet(m) => Some(m),
            _ => None,
        }
    }

    /// The diode ratings, if the part is a diode, Schottky or zener.
    #[must_use]
    pub fn diode(&self) -> Option<&Diode> {
        match &self.ratings {
            Ratings::Diode(d) => Some(d),
            _ => None,
        }
    }

    /// The relay ratings, if the part is a relay.
    #[must_use]
    pub fn relay(&self) -> Option<&Relay> {
        match &self.ratings {
            Ratings::Relay(r) => Some(r),
            _ => None,
        }
    }

    /// The photocell ratings, if the part is a photocell.
    #[must_use]
    pub fn photocell(&self) -> Option<&Photocell> {
        match &self.ratings {
            Ratings::Photocell(p) => Some(p),
            _ => None,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn kinds_read_their_names_and_aliases() {
        for kind in Kind::ALL {
            assert_eq!(Kind::from_text(kind.name()), Some(kind));
        }
        assert_eq!(Kind::from_text("N-MOSFET"), Some(Kind::Nmos));
        assert_eq!(Kind::from_text("LDR"), Some(Kind::Photocell));
        assert_eq!(Kind::from_text("triac"), None);
    }

    #[test]
    fn contact_forms_read_and_cover() {
        assert_eq!(ContactForm::from_text("1C"), Some(ContactForm::C(1)));
        assert_eq!(ContactForm::from_text("1 form A"), Some(ContactForm::A(1)));
        assert_eq!(ContactForm::from_text("DPDT"), Some(ContactForm::C(2)));
        assert_eq!(ContactForm::from_text("0A"), None);
        assert!(ContactForm::C(1).covers(ContactForm::A(1)));
        assert!(!ContactForm::A(1).covers(ContactForm::C(1)));
        assert!(!ContactForm::C(1).covers(ContactForm::A(2)));
    }

    #[test]
    fn ratings_stay_compact() {
        // A million parts are held in memory: keep a part within a few cache lines.
        assert!(
            std::mem::size_of::<Part>() <= 200,
            "{}",
            std::mem::size_of::<Part>()
        );
        assert_eq!(Rating::MISSING.get(), None);
        assert_eq!(Rating::of(3.0).get(), Some(3.0));
    }
}
