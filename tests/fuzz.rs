//! Fuzzing the three readers of outside input with proptest generators: the quantity parser,
//! the CSV library reader (header mapping included) and the stage file reader. Each target
//! mixes structured input (what people and spreadsheets write, slightly wrong) with raw
//! mutations of it, and checks more than "no panic": what loads is consistent, every
//! diagnostic names a line inside the input, every error names the file.
//!
//! By default each target runs a short pass (`SHORT` cases, five times that for the cheap
//! quantity parser) as part of `cargo test`. The long runs (100 000 cases each, the issue's bar;
//! a million for the quantity parser) are ignored by default:
//!
//!     cargo test --release --test fuzz -- --ignored --nocapture
//!
//! `LOADFIT_FUZZ_CASES=N` changes the long runs' count; `LOADFIT_FUZZ_SAVE=DIR` saves one input
//! per new kind of diagnostic seen, which is how `tests/corpus/fuzz/` was filled. Every file
//! there is replayed by `the_saved_fuzz_corpus_replays_cleanly`. No fuzz run has panicked (the
//! runs and their times are in the README's Reliability section); the faults the malformed-file
//! corpus found have their regression tests in `tests/corpus.rs` and `tests/terminal_safety.rs`.
//! A fault the fuzzer finds gets a regression test here, with the shrunk input.

use loadfit::library::columns::FIELDS;
use loadfit::library::{Library, lint};
use loadfit::stage::Stage;
use loadfit::units::{self, Dim, ParseOptions};
use proptest::prelude::*;
use proptest::test_runner::{Config, TestCaseError, TestRunner};
use std::collections::BTreeSet;
use std::path::{Path, PathBuf};
use std::sync::Mutex;
use std::time::Instant;

/// Cases of the short pass each target runs under plain `cargo test`.
const SHORT: u32 = 2_000;
/// Cases of each long run (the issue asks for at least 100 000).
const LONG: u32 = 100_000;

fn long_cases() -> u32 {
    std::env::var("LOADFIT_FUZZ_CASES")
        .ok()
        .and_then(|n| n.parse().ok())
        .unwrap_or(LONG)
}

/// Runs `test` on `cases` inputs of `strategy`, reporting the time taken; a failure (a panic
/// included) fails the test with the shrunk input.
fn fuzz<S: Strategy>(
    name: &str,
    cases: u32,
    strategy: S,
    test: impl Fn(S::Value) -> Result<(), TestCaseError>,
) where
    S::Value: std::fmt::Debug,
{
    let config = Config {
        cases,
        failure_persistence: None,
        max_shrink_iters: 4096,
        ..Config::default()
    };
    let started = Instant::now();
    let mut runner = TestRunner::new(config);
    let result = runner.run(&strategy, test);
    eprintln!(
        "fuzz {name}: {cases} cases in {:.1} s",
        started.elapsed().as_secs_f64()
    );
    if let Err(e) = result {
        panic!("fuzz {name}: {e}");
    }
}

// ---------------------------------------------------------------------------------------------
// Saving interesting inputs

/// Kinds of diagnostic already saved this run, shared by the targets.
static SEEN: Mutex<BTreeSet<String>> = Mutex::new(BTreeSet::new());

/// A diagnostic's message with its specifics (quoted text, names in backticks or brackets,
/// numbers, punctuation) taken out, cut to a few words: its kind.
fn message_kind(message: &str) -> String {
    let mut kind = String::new();
    let mut depth = 0i32;
    let mut quoted = false;
    for c in message.chars() {
        match c {
            '"' | '`' => quoted = !quoted,
            '(' | '[' => depth += 1,
            ')' | ']' => depth -= 1,
            _ if quoted || depth > 0 => {}
            c if c.is_ascii_alphabetic() => kind.push(c),
            ' ' if !kind.ends_with(' ') => kind.push(' '),
            _ => {}
        }
    }
    kind.trim().chars().take(32).collect()
}

/// Most inputs saved per target, and the largest saved: small examples of each kind.
const SAVE_MOST: usize = 40;
const SAVE_LARGEST: usize = 2048;

/// With `LOADFIT_FUZZ_SAVE` set, writes `bytes` there the first time a kind of diagnostic is
/// seen.
fn save_if_new(target: &str, kinds: impl IntoIterator<Item = String>, bytes: &[u8], ext: &str) {
    let Some(dir) = std::env::var_os("LOADFIT_FUZZ_SAVE") else {
        return;
    };
    if bytes.len() > SAVE_LARGEST {
        return;
    }
    let mut seen = SEEN
        .lock()
        .unwrap_or_else(std::sync::PoisonError::into_inner);
    let saved = seen
        .iter()
        .filter(|k| k.starts_with(&format!("{target}: ")))
        .count();
    if saved >= SAVE_MOST {
        return;
    }
    for kind in kinds {
        if seen.insert(format!("{target}: {kind}")) {
            let name = format!("{target}-{:02}.{ext}", saved + 1);
            let _ = std::fs::create_dir_all(&dir);
            let _ = std::fs::write(Path::new(&dir).join(name), bytes);
            return;
        }
    }
}

// ---------------------------------------------------------------------------------------------
// Quantities

const DIMS: &[Dim] = &[
    Dim::Volt,
    Dim::Amp,
    Dim::Ohm,
    Dim::Watt,
    Dim::Farad,
    Dim::Henry,
    Dim::Second,
    Dim::Hertz,
    Dim::Joule,
    Dim::Lux,
    Dim::Celsius,
    Dim::Kelvin,
    Dim::KelvinPerWatt,
    Dim::Metre,
    Dim::Percent,
    Dim::Number,
];

/// Pieces people put around a number: prefixes, units, separators, and things that are neither.
const SUFFIXES: &[&str] = &[
    "",
    "V",
    "mV",
    "kV",
    "A",
    "mA",
    "uA",
    "µA",
    "μA",
    "nA",
    "ohm",
    "Ω",
    "kΩ",
    "k",
    "M",
    "MEG",
    "meg",
    "R",
    "G",
    "m",
    "u",
    "n",
    "p",
    "W",
    "mW",
    "F",
    "uF",
    "nF",
    "pF",
    "H",
    "mH",
    "s",
    "ms",
    "us",
    "ns",
    "Hz",
    "kHz",
    "J",
    "mJ",
    "lux",
    "lx",
    "C",
    "°C",
    "K",
    "K/W",
    "°C/W",
    "m",
    "nm",
    "%",
    "ppm",
    "V/K",
    "%/K",
    "VV",
    "AV",
    "k7",
    "kk",
    "e",
    "E",
    "e+",
    "x",
    "()",
    " V ",
    "\u{0}",
    "\u{feff}",
    "\u{1b}[2J",
    "\u{202e}",
    ",",
    ".",
    "-",
    "+",
    "..",
    "e400",
    "e-400",
    "inf",
    "NaN",
];

/// Any text, control and unassigned characters included (cheaper to generate than a regex).
fn junk(max: usize) -> impl Strategy<Value = String> {
    proptest::collection::vec(any::<char>(), 0..max).prop_map(String::from_iter)
}

fn number_text() -> impl Strategy<Value = String> {
    let sign = prop_oneof![Just(""), Just("-"), Just("+"), Just("--"), Just(" ")];
    let number = prop_oneof![
        (0u32..10_000).prop_map(|n| n.to_string()),
        (0u32..1000, prop_oneof![Just('.'), Just(',')], 0u32..10_000)
            .prop_map(|(a, sep, b)| format!("{a}{sep}{b}")),
        (
            0u32..100,
            0u32..1000,
            prop_oneof![Just("e"), Just("E"), Just("e-"), Just("e+")],
            0u32..500
        )
            .prop_map(|(a, b, e, x)| format!("{a}.{b}{e}{x}")),
        (
            1u32..100,
            proptest::sample::select(&['k', 'K', 'm', 'M', 'u', 'µ', 'R', 'r', 'V', 'A'][..]),
            0u32..100
        )
            .prop_map(|(a, letter, b)| format!("{a}{letter}{b}")),
        (1u32..1000, 0u32..1000, 0u32..1000).prop_map(|(a, b, c)| format!("{a},{b:03},{c:03}")),
        proptest::sample::select(
            &[
                "1e308",
                "1.7976931348623157e308",
                "4.9e-324",
                "0",
                ".",
                "0.",
                ".5",
                "00012",
                "1_000",
            ][..]
        )
        .prop_map(str::to_string),
    ];
    (sign, number).prop_map(|(sign, number)| format!("{sign}{number}"))
}

/// Text shaped like a quantity, often slightly wrong.
fn quantity_text() -> impl Strategy<Value = String> {
    prop_oneof![
        6 => (
            number_text(),
            prop_oneof![Just(""), Just(" "), Just("  "), Just("\t")],
            proptest::sample::select(SUFFIXES),
            proptest::sample::select(SUFFIXES),
        )
            .prop_map(|(n, space, a, b)| format!("{n}{space}{a}{b}")),
        2 => junk(24),
        1 => proptest::collection::vec(proptest::sample::select(SUFFIXES), 0..6)
            .prop_map(|parts| parts.concat()),
    ]
}

fn check_quantity(text: &str, dim: Dim, decimal_comma: bool) -> Result<(), TestCaseError> {
    let options = ParseOptions { decimal_comma };
    match units::parse_with(text, dim, options) {
        Ok(q) => {
            prop_assert!(q.value.is_finite(), "{text:?} gave {}", q.value);
            // What parsed can be shown, and what is shown parses back close to it.
            let shown = units::format_eng(q.value, q.dim);
            if q.dim == dim && q.value != 0.0 && (1e-12..1e12).contains(&q.value.abs()) {
                let back = units::parse(&shown, dim)
                    .map_err(|e| TestCaseError::fail(format!("{text:?} -> {shown:?}: {e}")))?;
                prop_assert!(
                    (back.value - q.value).abs() <= 0.006 * q.value.abs(),
                    "{text:?} -> {} -> {shown:?} -> {}",
                    q.value,
                    back.value
                );
            }
        }
        Err(e) => {
            let message = e.to_string();
            prop_assert!(!message.is_empty());
            save_if_new(
                "quantity",
                [message_kind(&message)],
                format!("{text}\n").as_bytes(),
                "txt",
            );
        }
    }
    Ok(())
}

fn quantity_input() -> impl Strategy<Value = (String, Dim, bool)> {
    (
        quantity_text(),
        proptest::sample::select(DIMS),
        any::<bool>(),
    )
}

#[test]
fn fuzz_quantity_parser_short() {
    fuzz("quantity", SHORT * 5, quantity_input(), |(t, d, c)| {
        check_quantity(&t, d, c)
    });
}

#[test]
#[ignore = "long run: cargo test --release --test fuzz -- --ignored"]
fn fuzz_quantity_parser_long() {
    fuzz(
        "quantity",
        long_cases() * 10,
        quantity_input(),
        |(t, d, c)| check_quantity(&t, d, c),
    );
}

// ---------------------------------------------------------------------------------------------
// The CSV library reader

/// A header cell: a known column under any of its spellings, mangled as spreadsheets and people
/// mangle them, often with a unit in brackets; or something unknown.
fn header_cell() -> impl Strategy<Value = String> {
    let names: Vec<&'static str> = FIELDS
        .iter()
        .flat_map(|f| std::iter::once(f.name).chain(f.aliases.iter().copied()))
        .collect();
    prop_oneof![
        8 => (
            proptest::sample::select(names),
            any::<bool>(),
            prop_oneof![Just(""), Just(" "), Just("_"), Just("-"), Just(".")],
            prop_oneof![
                Just(""), Just(" (V)"), Just(" (mA)"), Just(" [A]"), Just("(kohm)"), Just(" (%)"),
                Just(" (ms)"), Just(" (nm)"), Just(" (°C)"), Just(" (mW)"), Just(" (lux)"),
                Just(" (x)"), Just(" ()"), Just(" ((V))"), Just(" (V"), Just(" [mV] (A)"),
            ],
        )
            .prop_map(|(name, upper, sep, unit)| {
                let name = name.replace('_', sep);
                let name = if upper { name.to_uppercase() } else { name };
                format!("{name}{unit}")
            }),
        1 => junk(12),
        1 => Just(String::new()),
    ]
}

const KINDS: &[&str] = &[
    "npn",
    "pnp",
    "nmos",
    "pmos",
    "diode",
    "schottky",
    "zener",
    "relay",
    "photocell",
    "NPN",
    " n-mosfet ",
    "ldr",
    "reed",
    "rectifier",
    "transistor",
    "",
    "npn\u{0}",
    "\u{feff}npn",
];

/// A data cell: mostly what the columns hold, sometimes hostile.
fn data_cell() -> impl Strategy<Value = String> {
    prop_oneof![
        6 => quantity_text(),
        2 => proptest::sample::select(KINDS).prop_map(str::to_string),
        1 => prop_oneof![
            Just("active"), Just("nrnd"), Just("obsolete"), Just("yes"), Just("no"), Just("1C"),
            Just("2 form C"), Just("EBC"), Just("TO-92"), Just("$0.12"), Just("1,000"),
            Just("=HYPERLINK(\"x\")"), Just("-1"), Just("1e400"), Just("NaN"),
        ]
        .prop_map(str::to_string),
        2 => Just(String::new()),
        1 => (0u32..10_000).prop_map(|n| format!("CX{n}")),
        2 => junk(16),
    ]
}

/// How a cell is written: bare, quoted (with inner quotes doubled), or with a quote wrong.
#[derive(Debug, Clone, Copy)]
enum Quote {
    Bare,
    Quoted,
    OpenOnly,
    Stray,
}

fn quote() -> impl Strategy<Value = Quote> {
    prop_oneof![
        12 => Just(Quote::Bare),
        4 => Just(Quote::Quoted),
        1 => Just(Quote::OpenOnly),
        1 => Just(Quote::Stray),
    ]
}

fn write_cell(cell: &str, quote: Quote) -> String {
    match quote {
        Quote::Bare => cell.to_string(),
        Quote::Quoted => format!("\"{}\"", cell.replace('"', "\"\"")),
        Quote::OpenOnly => format!("\"{cell}"),
        Quote::Stray => format!("{cell}\"x"),
    }
}

/// A whole library file: a header holding `part` and `kind` (most of the time) and rows of
/// cells, with one delimiter and a mix of line ends; then perhaps re-encoded or mutated.
#[derive(Debug, Clone)]
struct CsvInput {
    bytes: Vec<u8>,
    utf16: bool,
}

/// A cell for the column headed `name`: part numbers under `part`, kinds under `kind`, mostly
/// bare numbers, blanks or quantities elsewhere, sometimes anything.
fn cell_for(name: &str) -> BoxedStrategy<(String, Quote)> {
    let cell = match name {
        "part" => prop_oneof![
            9 => (0u32..300).prop_map(|n| format!("CX{n}")),
            1 => data_cell(),
        ]
        .boxed(),
        "kind" => prop_oneof![
            9 => proptest::sample::select(&KINDS[..9]).prop_map(str::to_string),
            1 => data_cell(),
        ]
        .boxed(),
        _ => prop_oneof![
            4 => (0u32..1000).prop_map(|n| n.to_string()),
            3 => Just(String::new()),
            2 => quantity_text(),
            1 => data_cell(),
        ]
        .boxed(),
    };
    (cell, quote()).boxed()
}

fn csv_input() -> impl Strategy<Value = CsvInput> {
    let header = (
        proptest::collection::vec(header_cell(), 0..12),
        prop_oneof![9 => Just(true), 1 => Just(false)],
        0usize..12,
        0usize..12,
    )
        .prop_map(|(mut cells, keep_required, part_at, kind_at)| {
            if keep_required {
                cells.insert(part_at.min(cells.len()), "part".to_string());
                cells.insert(kind_at.min(cells.len()), "kind".to_string());
            }
            cells
        });
    let ends = proptest::collection::vec(
        prop_oneof![8 => Just("\n"), 4 => Just("\r\n"), 1 => Just("\r"), 1 => Just("\n\n")],
        1..4,
    );
    let mutations = prop_oneof![
        3 => Just(Vec::new()),
        1 => proptest::collection::vec((any::<prop::sample::Index>(), any::<u8>(), 0u8..3), 1..4),
    ];
    let body = header.prop_flat_map(|header| {
        // Rows that follow the header, and now and then one that does not.
        let row: Vec<BoxedStrategy<(String, Quote)>> = header.iter().map(|h| cell_for(h)).collect();
        let rows = proptest::collection::vec(
            prop_oneof![
                9 => row.boxed(),
                1 => proptest::collection::vec((data_cell(), quote()), 0..12).boxed(),
            ],
            0..16,
        );
        (Just(header), rows)
    });
    (
        body,
        prop_oneof![6 => Just(','), 2 => Just(';'), 1 => Just('\t')],
        ends,
        prop_oneof![8 => Just(0u8), 1 => Just(1), 1 => Just(2), 1 => Just(3)],
        mutations,
        any::<bool>(),
    )
        .prop_map(
            |((header, rows), delimiter, ends, encoding, mutations, bom)| {
                let mut text = String::new();
                if bom {
                    text.push('\u{feff}');
                }
                let d = delimiter.to_string();
                text.push_str(&header.join(&d));
                for (i, row) in rows.iter().enumerate() {
                    text.push_str(ends[i % ends.len()]);
                    let cells: Vec<String> = row.iter().map(|(c, q)| write_cell(c, *q)).collect();
                    text.push_str(&cells.join(&d));
                }
                text.push_str(ends[0]);
                let (mut bytes, utf16) = match encoding {
                    1 => {
                        let mut b = vec![0xFF, 0xFE];
                        b.extend(text.encode_utf16().flat_map(u16::to_le_bytes));
                        (b, true)
                    }
                    2 => (
                        text.chars()
                            .map(|c| u8::try_from(u32::from(c)).unwrap_or(b'?'))
                            .collect(),
                        false,
                    ),
                    3 => (
                        text.encode_utf16().flat_map(u16::to_le_bytes).collect(),
                        true,
                    ),
                    _ => (text.into_bytes(), false),
                };
                for (at, byte, how) in mutations {
                    if bytes.is_empty() {
                        break;
                    }
                    let i = at.index(bytes.len());
                    match how {
                        0 => bytes[i] = byte,
                        1 => bytes.insert(i, byte),
                        _ => {
                            bytes.remove(i);
                        }
                    }
                }
                CsvInput { bytes, utf16 }
            },
        )
}

fn line_count(bytes: &[u8]) -> usize {
    bytes
        .iter()
        .enumerate()
        .filter(|&(i, &b)| b == b'\n' || (b == b'\r' && bytes.get(i + 1) != Some(&b'\n')))
        .count()
        + 1
}

/// Stages every kind of part is held against, for fit over fuzzed libraries.
fn fit_stages() -> Vec<Stage> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("data/stages");
    [
        "greenhouse-fan-relay.toml",
        "cabinet-light-sensor.toml",
        "door-strike.toml",
    ]
    .iter()
    .filter_map(|name| Stage::read(&dir.join(name)).ok())
    .collect()
}

fn check_csv(input: &CsvInput, stages: &[Stage]) -> Result<(), TestCaseError> {
    let mut library = Library::new();
    let Ok(()) = library.add_bytes("fuzz.csv", &input.bytes) else {
        return Ok(());
    };
    prop_assert_eq!(
        library.parts.len() + library.rows_rejected,
        library.rows,
        "loaded + rejected = rows"
    );
    // UTF-16 input is decoded first: its lines are counted after decoding.
    let lines = if input.utf16 {
        usize::MAX
    } else {
        line_count(&input.bytes)
    };
    for d in library.rejected.iter().chain(&library.warnings) {
        prop_assert!(
            d.line >= 1 && (d.line as usize) <= lines,
            "line {} of {lines}: {d:?}",
            d.line
        );
        prop_assert_eq!(d.file, 0);
    }
    let mut numbers = BTreeSet::new();
    for part in &library.parts {
        prop_assert!(
            !part.number.trim().is_empty(),
            "an empty part number loaded"
        );
        prop_assert!(
            numbers.insert(part.number.to_ascii_lowercase()),
            "{} loaded twice",
            part.number
        );
        let mut ratings = part.ratings.clone();
        for spec in FIELDS {
            if let Some(rating) = spec.field.slot(&mut ratings)
                && let Some(v) = rating.get()
            {
                prop_assert!(v >= 0.0, "{} {} = {v}", part.number, spec.name);
            }
        }
    }
    let _ = lint::problem_lines(&library);
    let _ = loadfit::text::to_json_pretty(&lint::to_json(&library));
    // Whatever loaded can be held against a stage and reported.
    for stage in stages {
        let needs = loadfit::needs::compute(stage, Some(&library));
        let fit = loadfit::fit::evaluate(stage, &needs, &library, loadfit::fit::SortKey::Score);
        let _ = loadfit::fit::report::to_text(&needs, &library, &fit, Some(5));
        let _ = loadfit::fit::report::to_csv(&library, &fit, Some(5));
    }
    save_if_new(
        "library",
        library
            .rejected
            .iter()
            .chain(&library.warnings)
            .map(|d| message_kind(&d.message)),
        &input.bytes,
        "csv",
    );
    Ok(())
}

#[test]
fn fuzz_library_reader_short() {
    let stages = fit_stages();
    assert_eq!(stages.len(), 3);
    fuzz("library", SHORT, csv_input(), |input| {
        check_csv(&input, &stages)
    });
}

#[test]
#[ignore = "long run: cargo test --release --test fuzz -- --ignored"]
fn fuzz_library_reader_long() {
    let stages = fit_stages();
    fuzz("library", long_cases(), csv_input(), |input| {
        check_csv(&input, &stages)
    });
}

// ---------------------------------------------------------------------------------------------
// The stage file reader

const WORDS: &[&str] = &[
    "logic",
    "photocell",
    "resistive",
    "led",
    "capacitive",
    "inductive",
    "relay",
    "npn",
    "pnp",
    "nmos",
    "pmos",
    "any",
    "none",
    "diode",
    "zener",
    "light",
    "dark",
    "functional",
    "basic",
    "reinforced",
    "motor",
    "lamp",
    "E6",
    "E12",
    "E24",
    "E48",
    "E96",
    "E3",
    "",
    "yes",
];

/// A TOML value: quantities with units, numbers of every size, words the stage knows, and
/// values of the wrong type.
fn toml_value() -> impl Strategy<Value = String> {
    prop_oneof![
        6 => quantity_text().prop_map(|q| toml_string(&q)),
        2 => proptest::sample::select(WORDS).prop_map(|w| format!("\"{w}\"")),
        2 => prop_oneof![
            any::<i64>().prop_map(|i| i.to_string()),
            (-5i32..5).prop_map(|i| i.to_string()),
            any::<f64>().prop_map(|f| format!("{f:?}")),
            (0.0f64..2.0).prop_map(|f| format!("{f}")),
            Just("nan".to_string()),
            Just("-inf".to_string()),
            Just("1e400".to_string()),
        ],
        1 => any::<bool>().prop_map(|b| b.to_string()),
        1 => Just("[1, \"2 V\"]".to_string()),
        1 => Just("{ volts = \"12 V\" }".to_string()),
        1 => Just("1979-05-27T07:32:00Z".to_string()),
        1 => junk(10),
    ]
}

/// A TOML basic string holding `text`, escaped as TOML requires.
fn toml_string(text: &str) -> String {
    let mut out = String::from("\"");
    for c in text.chars() {
        match c {
            '"' => out.push_str("\\\""),
            '\\' => out.push_str("\\\\"),
            c if c.is_control() => out.push_str(&format!("\\u{:04X}", c as u32)),
            c => out.push(c),
        }
    }
    out.push('"');
    out
}

/// The values the example stages give each key, as TOML text, by (table, key).
fn example_values() -> std::collections::BTreeMap<(String, String), Vec<String>> {
    let mut values: std::collections::BTreeMap<(String, String), Vec<String>> =
        std::collections::BTreeMap::new();
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("data/stages");
    for entry in std::fs::read_dir(dir).into_iter().flatten().flatten() {
        let Ok(text) = std::fs::read_to_string(entry.path()) else {
            continue;
        };
        let Ok(doc) = text.parse::<toml::Table>() else {
            continue;
        };
        for (name, value) in doc {
            match value {
                toml::Value::Table(table) => {
                    for (key, v) in table {
                        values
                            .entry((name.clone(), key))
                            .or_default()
                            .push(v.to_string());
                    }
                }
                v => values
                    .entry((String::new(), name))
                    .or_default()
                    .push(v.to_string()),
            }
        }
    }
    values
}

/// A TOML value text with its first number scaled by `factor` (`"12 V"` by 10 is `"120 V"`).
fn scaled(value: &str, factor: f64) -> String {
    let start = value.find(|c: char| c.is_ascii_digit());
    let Some(start) = start else {
        return value.to_string();
    };
    let end = value[start..]
        .find(|c: char| !(c.is_ascii_digit() || c == '.'))
        .map_or(value.len(), |e| start + e);
    match value[start..end].parse::<f64>() {
        Ok(n) => format!("{}{}{}", &value[..start], n * factor, &value[end..]),
        Err(_) => value.to_string(),
    }
}

fn stage_text() -> impl Strategy<Value = String> {
    let tables: Vec<(&'static str, &'static [&'static str])> = loadfit::stage::KEYS.to_vec();
    let examples = example_values();
    let entry = (
        any::<prop::sample::Index>(),
        any::<prop::sample::Index>(),
        prop_oneof![
            60 => Just(None),
            1 => proptest::collection::vec(
                proptest::sample::select(&['a', 'e', 'o', 's', 't', 'v', 'x', '_'][..]),
                1..12,
            )
            .prop_map(|k| Some(String::from_iter(k))),
        ],
        prop_oneof![
            30 => (any::<prop::sample::Index>(), proptest::sample::select(&[1.0, 1.0, 1.0, 0.1, 0.5, 2.0, 10.0, 1e6, 0.0][..]))
                .prop_map(Ok),
            1 => toml_value().prop_map(Err),
        ],
    );
    let base = (
        proptest::collection::vec(entry, 0..16),
        prop_oneof![30 => Just(None), 1 => any::<prop::sample::Index>().prop_map(Some)],
        prop_oneof![
            30 => Just(None),
            1 => proptest::sample::select(&["suply", "loads", "rule", "Supply", "load.x"][..]).prop_map(Some),
        ],
    )
        .prop_map(move |(entries, repeat, stray)| {
            // One table each, starting from the usual skeleton (supply and load) so that many
            // documents are stages; the entries add to it, override it or contradict it.
            let mut doc: std::collections::BTreeMap<&str, Vec<(String, String)>> =
                std::collections::BTreeMap::new();
            doc.entry("supply").or_default().push(("volts".into(), "\"12 V\"".into()));
            doc.entry("load").or_default().push(("type".into(), "\"resistive\"".into()));
            doc.entry("load").or_default().push(("resistance".into(), "\"100 ohm\"".into()));
            for (table, key, other, value) in entries {
                let (name, keys) = tables[table.index(tables.len())];
                let key = other.unwrap_or_else(|| keys[key.index(keys.len())].to_string());
                let value = match value {
                    Ok((pick, factor)) => examples
                        .get(&(name.to_string(), key.clone()))
                        .map_or_else(|| "\"1\"".to_string(), |v| scaled(&v[pick.index(v.len())], factor)),
                    Err(raw) => raw,
                };
                let entries = doc.entry(name).or_default();
                entries.retain(|(k, _)| *k != key);
                entries.push((key, value));
            }
            let mut text = String::new();
            for (key, value) in doc.get("").into_iter().flatten() {
                text.push_str(&format!("{key} = {value}\n"));
            }
            for (name, entries) in &doc {
                if name.is_empty() {
                    continue;
                }
                text.push_str(&format!("[{name}]\n"));
                for (key, value) in entries {
                    text.push_str(&format!("{key} = {value}\n"));
                }
            }
            // Now and then a table repeated (a TOML error) or one that does not exist.
            if let Some(at) = repeat {
                let (name, _) = tables[at.index(tables.len())];
                text.push_str(&format!("[{name}]\n"));
            }
            if let Some(name) = stray {
                text.push_str(&format!("[{name}]\nvolts = \"5 V\"\n"));
            }
            text
        });
    let examples: Vec<String> =
        std::fs::read_dir(Path::new(env!("CARGO_MANIFEST_DIR")).join("data/stages"))
            .map(|dir| {
                dir.filter_map(Result::ok)
                    .filter_map(|e| std::fs::read_to_string(e.path()).ok())
                    .collect()
            })
            .unwrap_or_default();
    let mutated = (
        proptest::sample::select(examples),
        proptest::collection::vec((any::<prop::sample::Index>(), any::<char>(), 0u8..3), 0..6),
    )
        .prop_map(|(text, edits)| {
            let mut chars: Vec<char> = text.chars().collect();
            for (at, c, how) in edits {
                if chars.is_empty() {
                    break;
                }
                let i = at.index(chars.len());
                match how {
                    0 => chars[i] = c,
                    1 => chars.insert(i, c),
                    _ => {
                        chars.remove(i);
                    }
                }
            }
            chars.into_iter().collect::<String>()
        });
    prop_oneof![8 => base, 2 => mutated, 1 => junk(200)]
}

fn check_stage(text: &str, demo: &Library) -> Result<(), TestCaseError> {
    let lines = text.lines().count().max(1) + 1;
    match Stage::from_toml(text, "fuzz.toml") {
        Err(e) => {
            let message = e.to_string();
            prop_assert!(message.starts_with("fuzz.toml: "), "{message}");
            if let Some(line) = e.line {
                prop_assert!(
                    line >= 1 && line as usize <= lines,
                    "line {line}: {message}"
                );
            }
            save_if_new("stage", [message_kind(&e.message)], text.as_bytes(), "toml");
        }
        Ok(stage) => {
            let needs = loadfit::needs::compute(&stage, Some(demo));
            let _ = loadfit::needs::report::to_text(&needs);
            let _ = loadfit::needs::report::to_markdown(&needs);
            let _ = loadfit::needs::report::to_json_string(&needs);
            let fit = loadfit::fit::evaluate(&stage, &needs, demo, loadfit::fit::SortKey::Score);
            let _ = loadfit::fit::report::to_text(&needs, demo, &fit, Some(3));
            // The workbench's copy of the document saves as text that reads back as a stage.
            if let Ok(doc) = loadfit::tui::fields::StageDoc::parse(text, "fuzz.toml") {
                let saved = doc.to_text();
                prop_assert!(
                    Stage::from_toml(&saved, "fuzz.toml").is_ok(),
                    "saved text does not read back: {saved}"
                );
            }
        }
    }
    Ok(())
}

#[test]
fn fuzz_stage_reader_short() {
    let demo = Library::demo();
    fuzz("stage", SHORT, stage_text(), |text| {
        check_stage(&text, &demo)
    });
}

#[test]
#[ignore = "long run: cargo test --release --test fuzz -- --ignored"]
fn fuzz_stage_reader_long() {
    let demo = Library::demo();
    fuzz("stage", long_cases(), stage_text(), |text| {
        check_stage(&text, &demo)
    });
}

// ---------------------------------------------------------------------------------------------
// The workbench: what a person types

use loadfit::tui::action::Action;

/// Key presses as actions: moving, editing, searching, keeping, typed characters of every kind.
/// Left out: the actions that write files (save, export) or end the run.
fn action() -> impl Strategy<Value = Action> {
    prop_oneof![
        6 => proptest::sample::select(vec![
            Action::NextPanel, Action::PrevPanel, Action::Up, Action::Down, Action::Left,
            Action::Right, Action::Top, Action::Bottom, Action::PageUp, Action::PageDown,
            Action::Enter, Action::Back, Action::ToggleShortlist, Action::FindSubstitutes,
            Action::ToggleWorstCase, Action::StartSearch, Action::CycleSort,
            Action::ToggleOnlyFits, Action::ToggleHelp, Action::Backspace,
        ]),
        1 => (0usize..12).prop_map(Action::Panel),
        4 => proptest::sample::select(&[
            '0', '1', '2', '4', '7', '.', ',', ' ', 'k', 'm', 'u', 'V', 'A', 'H', '%', '-', 'e',
            'µ', 'Ω', '\u{1b}', '\u{202e}', '\u{0}', '\n', '"', '[', '=',
        ][..])
        .prop_map(Action::Type),
        1 => any::<char>().prop_map(Action::Type),
    ]
}

fn draw(app: &loadfit::tui::app::App, width: u16, height: u16) {
    let backend = ratatui::backend::TestBackend::new(width, height);
    // The test backend cannot fail (its error type has no values).
    let Ok(mut terminal) = ratatui::Terminal::new(backend);
    let _ = terminal.draw(|frame| {
        loadfit::tui::view::draw(frame, app, loadfit::tui::view::Theme { color: true });
    });
}

fn check_workbench(actions: &[Action], library: &Library) -> Result<(), TestCaseError> {
    let doc = loadfit::tui::fields::StageDoc::parse(loadfit::tui::DEMO_STAGE, "demo.toml")
        .map_err(TestCaseError::fail)?;
    let mut app = loadfit::tui::app::App::new(library.clone(), Vec::new(), doc, None);
    for (i, &action) in actions.iter().enumerate() {
        app.update(action);
        if i % 8 == 7 {
            draw(&app, 120, 32);
        }
    }
    draw(&app, 120, 32);
    draw(&app, 81, 24);
    Ok(())
}

#[test]
fn fuzz_workbench_short() {
    let library = Library::demo();
    let actions = proptest::collection::vec(action(), 1..60);
    fuzz("workbench", SHORT / 10, actions, |a| {
        check_workbench(&a, &library)
    });
}

#[test]
#[ignore = "long run: cargo test --release --test fuzz -- --ignored"]
fn fuzz_workbench_long() {
    let library = Library::demo();
    let actions = proptest::collection::vec(action(), 1..60);
    fuzz("workbench", long_cases() / 10, actions, |a| {
        check_workbench(&a, &library)
    });
}

// ---------------------------------------------------------------------------------------------
// The saved corpus and the regressions

fn fuzz_corpus() -> Vec<PathBuf> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/corpus/fuzz");
    let mut files: Vec<PathBuf> = std::fs::read_dir(dir)
        .map(|d| d.filter_map(Result::ok).map(|e| e.path()).collect())
        .unwrap_or_default();
    files.sort();
    files
}

/// Every input saved from the fuzz runs goes through its reader again, with the same checks.
#[test]
fn the_saved_fuzz_corpus_replays_cleanly() {
    let demo = Library::demo();
    let stages = fit_stages();
    let mut replayed = 0;
    for path in fuzz_corpus() {
        let bytes = std::fs::read(&path).unwrap();
        let what = path.display().to_string();
        let result = match path.extension().and_then(|e| e.to_str()) {
            Some("csv") => {
                let utf16 = bytes.starts_with(&[0xFF, 0xFE])
                    || bytes.iter().skip(1).step_by(2).take(8).all(|&b| b == 0);
                check_csv(&CsvInput { bytes, utf16 }, &stages)
            }
            Some("toml") => check_stage(&String::from_utf8_lossy(&bytes), &demo),
            Some("txt") => {
                let text = String::from_utf8_lossy(&bytes);
                let text = text.strip_suffix('\n').unwrap_or(&text);
                DIMS.iter()
                    .try_for_each(|&dim| check_quantity(text, dim, true))
                    .and_then(|()| check_quantity(text, Dim::Volt, false))
            }
            _ => continue,
        };
        if let Err(e) = result {
            panic!("{what}: {e}");
        }
        replayed += 1;
    }
    assert!(replayed > 0, "tests/corpus/fuzz holds no inputs");
}
