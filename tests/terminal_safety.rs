//! Text from a library or a stage file must never act on the terminal or reorder what it shows.
//! A hostile library (ECMA-48 control sequences: CSI, OSC with a hyperlink, C1 controls; Unicode
//! bidi controls, zero-width characters, DEL, BS, NUL, in every text cell, a column name and
//! the file name) and a hostile stage (its title, the relay part it names) go through every
//! output path: `lint` text and JSON, `needs` text, Markdown and JSON, `fit` text, CSV and JSON,
//! `shortlist` Markdown, CSV and JSON, the summary, error messages, and every panel of the
//! workbench drawn with ratatui's `TestBackend`. No forbidden character may come out raw. JSON
//! carries them as `\u` escapes and reads back to the original text.

use loadfit::export::{Context, Shortlist};
use loadfit::fit::{self, SortKey};
use loadfit::library::Library;
use loadfit::needs;
use loadfit::stage::Stage;
use loadfit::tui::action::Action;
use loadfit::tui::app::{App, Panel};
use loadfit::tui::fields::StageDoc;
use loadfit::tui::view::{self, Theme};
use ratatui::Terminal;
use ratatui::backend::TestBackend;
use std::path::{Path, PathBuf};
use std::process::Command;

/// The characters no output may carry raw, defined here on their own rather than by
/// `loadfit::text::is_unsafe`, so that the test checks the product against the standards:
/// - ECMA-48 C0 controls (U+0000–U+001F: ESC U+001B opens every control sequence; BEL, BS, CR
///   move or ring), except the line feed that ends a line of output;
/// - DEL (U+007F);
/// - ECMA-48 C1 controls (U+0080–U+009F: CSI U+009B and OSC U+009D act alone in an 8-bit
///   terminal; NEL U+0085 moves the cursor);
/// - Unicode bidi controls (UAX #9: ALM U+061C, LRM/RLM U+200E–U+200F, the embeddings and
///   overrides U+202A–U+202E, the isolates U+2066–U+2069);
/// - zero-width characters that hide text (U+200B–U+200D, U+2060, U+FEFF).
fn forbidden(c: char) -> bool {
    matches!(c,
        '\u{0}'..='\u{9}' | '\u{b}'..='\u{1f}' | '\u{7f}'..='\u{9f}'
        | '\u{61c}' | '\u{200b}'..='\u{200f}' | '\u{202a}'..='\u{202e}'
        | '\u{2060}' | '\u{2066}'..='\u{2069}' | '\u{feff}')
}

/// Fails with the output's name and the first forbidden characters in context.
fn assert_clean(what: &str, text: &str) {
    let found: Vec<(usize, char)> = text
        .char_indices()
        .filter(|&(_, c)| forbidden(c))
        .take(5)
        .collect();
    if let Some(&(at, _)) = found.first() {
        let from = text[..at]
            .char_indices()
            .rev()
            .nth(40)
            .map_or(0, |(i, _)| i);
        let to = text[at..]
            .char_indices()
            .nth(40)
            .map_or(text.len(), |(i, _)| at + i);
        panic!(
            "{what}: raw {:?} in {:?}",
            found.iter().map(|(_, c)| *c).collect::<Vec<_>>(),
            &text[from..to]
        );
    }
}

/// One string carrying every kind of hostile sequence: an ECMA-48 CSI (erase screen), SGR
/// (red), an OSC 8 hyperlink ended by BEL and one by ST, 8-bit CSI and OSC, NEL, the bidi
/// override RLO with an isolate and RLM, zero-width space, DEL, BS and NUL.
const P: &str = "\u{1b}[2J\u{1b}[31m\u{1b}]8;;http://example.invalid/\u{7}x\u{1b}]8;;\u{1b}\\\u{9b}1A\u{9d}0;t\u{9c}\u{85}\u{202e}\u{2066}\u{200f}\u{200b}\u{7f}\u{8}\u{0}";

/// An invented part number with the hostile string inside.
fn hostile(stem: &str) -> String {
    format!("CX{P}{stem}")
}

/// The columns of the hostile library; one has a hostile name.
const COLUMNS: &[&str] = &[
    "part",
    "kind",
    "package",
    "pinout",
    "maker",
    "price",
    "stock",
    "status",
    "notes",
    "tags",
    "shelf",
    "vceo",
    "ic_max",
    "hfe_min",
    "vce_sat",
    "vbe_on",
    "pd",
    "tj_max",
    "vds",
    "id_max",
    "rds_on",
    "rds_on_vgs",
    "vgs_th_max",
    "vgs_max",
    "vrrm",
    "if_avg",
    "vf",
    "coil_v",
    "coil_r",
    "coil_l",
    "must_operate_v",
    "must_release_v",
    "coil_v_max",
    "contact_form",
    "contact_a_dc",
    "contact_v_dc",
    "contact_a_ac",
    "contact_v_ac",
    "dielectric_v",
    "impulse_v",
];

/// A library of invented parts whose every text cell, one column name and one bad row are
/// hostile. Every part is strong enough to fit the stage below, so it reaches the shortlist.
fn hostile_csv() -> String {
    let text = |s: &str| format!("{s}{P}");
    let row = |cells: &[(&str, String)]| -> String {
        let line: Vec<String> = COLUMNS
            .iter()
            .map(|column| {
                cells
                    .iter()
                    .find(|(c, _)| c == column)
                    .map_or(String::new(), |(_, v)| v.clone())
            })
            .collect();
        line.join(",") + "\n"
    };
    let part = |stem: &str, kind: &str, ratings: &[(&'static str, &str)]| {
        let mut cells: Vec<(&str, String)> = vec![
            ("part", hostile(stem)),
            ("kind", kind.to_string()),
            ("package", text("TO-92")),
            ("pinout", text("EBC")),
            ("maker", text("Orvelle Devices")),
            ("price", "0.10".to_string()),
            ("stock", "500".to_string()),
            ("status", "active".to_string()),
            ("notes", text("hostile notes")),
            ("tags", text("tag")),
            ("shelf", text("B-12")),
        ];
        cells.extend(ratings.iter().map(|&(c, v)| (c, v.to_string())));
        row(&cells)
    };
    let header: Vec<String> = COLUMNS
        .iter()
        .map(|c| {
            if *c == "shelf" {
                text("shelf")
            } else {
                (*c).to_string()
            }
        })
        .collect();
    let mut out = header.join(",") + "\n";
    out += &part(
        "N1",
        "npn",
        &[
            ("vceo", "100 V"),
            ("ic_max", "2 A"),
            ("hfe_min", "300"),
            ("vce_sat", "0.1 V"),
            ("vbe_on", "0.7 V"),
            ("pd", "2 W"),
            ("tj_max", "150 C"),
        ],
    );
    out += &part(
        "M1",
        "nmos",
        &[
            ("vds", "100 V"),
            ("id_max", "5 A"),
            ("rds_on", "0.05 ohm"),
            ("rds_on_vgs", "2.5 V"),
            ("vgs_th_max", "1.5 V"),
            ("vgs_max", "20 V"),
            ("pd", "2 W"),
            ("tj_max", "150 C"),
        ],
    );
    out += &part(
        "D1",
        "diode",
        &[("vrrm", "400 V"), ("if_avg", "1 A"), ("vf", "0.9 V")],
    );
    out += &part(
        "K1",
        "relay",
        &[
            ("coil_v", "12 V"),
            ("coil_r", "400 ohm"),
            ("coil_l", "200 mH"),
            ("must_operate_v", "8 V"),
            ("must_release_v", "1.2 V"),
            ("coil_v_max", "20 V"),
            ("contact_form", "1C"),
            ("contact_a_dc", "10 A"),
            ("contact_v_dc", "60 V"),
            ("contact_a_ac", "10 A"),
            ("contact_v_ac", "250 V"),
            ("dielectric_v", "5000 V"),
            ("impulse_v", "8000 V"),
        ],
    );
    // A rejected row (hostile kind and value) and a warning (a hostile negative price).
    out += &row(&[
        ("part", hostile("BAD")),
        ("kind", text("npn")),
        ("vceo", format!("40{P} V")),
    ]);
    out += &row(&[
        ("part", hostile("NEG")),
        ("kind", "npn".to_string()),
        ("price", "-1".to_string()),
        ("notes", text("negative price")),
    ]);
    out
}

/// A relay stage whose title and relay part number are hostile (TOML escapes for the controls).
fn hostile_stage() -> String {
    let toml_escaped = |s: &str| -> String {
        s.chars()
            .map(|c| {
                if c.is_control() || c == '"' || c == '\\' {
                    format!("\\u{:04X}", c as u32)
                } else {
                    c.to_string()
                }
            })
            .collect()
    };
    format!(
        "title = \"Bench {}\"\n\
         [supply]\nvolts = \"12 V\"\ntolerance = \"5 %\"\n\
         [drive]\nsource = \"logic\"\nhigh = \"5 V\"\n\
         [load]\ntype = \"relay\"\nrelay = \"{}\"\n\
         [contacts]\nvolts = \"24 V\"\nac = false\namps = \"1 A\"\ninsulation = \"basic\"\n\
         [switch]\ntype = \"any\"\n\
         [clamp]\ntype = \"diode\"\n",
        toml_escaped(&format!("title{P}")),
        toml_escaped(&hostile("K1"))
    )
}

struct Files {
    _dir: tempfile::TempDir,
    dir: PathBuf,
    library: PathBuf,
    stage: PathBuf,
}

/// The hostile library and stage on disk; the library's file name is hostile too.
fn files() -> Files {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().to_path_buf();
    let library = path.join("parts\u{1b}[31m\u{202e}.csv");
    std::fs::write(&library, hostile_csv()).unwrap();
    let stage = path.join("stage.toml");
    std::fs::write(&stage, hostile_stage()).unwrap();
    Files {
        _dir: dir,
        dir: path,
        library,
        stage,
    }
}

fn loaded() -> (Files, Library, Stage) {
    let files = files();
    let library = Library::load(&[&files.library]).unwrap();
    let stage = Stage::read(&files.stage).unwrap();
    (files, library, stage)
}

#[test]
fn the_hostile_library_loads_with_its_hostile_text_intact() {
    let (_files, library, stage) = loaded();
    for stem in ["N1", "M1", "D1", "K1", "NEG"] {
        assert!(library.find(&hostile(stem)).is_some(), "{stem} not loaded");
    }
    assert_eq!(library.rows_rejected, 1, "{:?}", library.rejected);
    assert!(!library.warnings.is_empty());
    assert!(stage.title.contains(P));
}

/// The writers themselves, before any guard in the binary: lint, needs, fit, shortlist.
#[test]
fn every_writer_makes_hostile_text_visible() {
    let (files, library, stage) = loaded();
    let needs = needs::compute(&stage, Some(&library));
    assert!(
        needs.stage.contains(P),
        "the title reaches the needs, to be cleaned by the writers"
    );
    let fit = fit::evaluate(&stage, &needs, &library, SortKey::Score);
    let shortlist = Shortlist::from_fit(&fit, 3);
    assert!(
        shortlist.len() >= 2,
        "hostile parts are kept: {:?}",
        shortlist
    );
    let context = Context {
        stage: &stage,
        needs: &needs,
        library: &library,
        fit: &fit,
    };

    use loadfit::library::lint;
    assert_clean("lint summary", &lint::summary(&library));
    for line in lint::problem_lines(&library) {
        assert_clean("lint text", &line);
    }
    json_round_trip("lint json", &lint::to_json(&library), &format!("npn{P}"));

    assert_clean("needs text", &needs::report::to_text(&needs));
    assert_clean("needs markdown", &needs::report::to_markdown(&needs));
    let text = needs::report::to_json_string(&needs);
    assert_clean("needs json", &text);

    assert_clean(
        "fit text",
        &fit::report::to_text(&needs, &library, &fit, None),
    );
    assert_clean("fit csv", &fit::report::to_csv(&library, &fit, None));
    json_round_trip(
        "fit json",
        &fit::report::to_json(&needs, &library, &fit, None),
        &hostile("N1"),
    );

    assert_clean(
        "shortlist markdown",
        &loadfit::export::to_markdown(&context, &shortlist),
    );
    assert_clean(
        "shortlist csv",
        &loadfit::export::to_csv(&context, &shortlist),
    );
    json_round_trip(
        "shortlist json",
        &loadfit::export::to_json(&context, &shortlist),
        &hostile("K1"),
    );
    for extension in ["md", "csv", "json"] {
        let out = files.dir.join(format!("list.{extension}"));
        loadfit::export::write_shortlist(&out, &context, &shortlist, &[], false).unwrap();
        assert_clean(
            &format!("shortlist file .{extension}"),
            &std::fs::read_to_string(&out).unwrap(),
        );
    }
}

/// Serialises `value` as the binary does, checks the text, and checks that `expected` (a
/// hostile part number) reads back intact: JSON escapes, it does not drop.
fn json_round_trip(what: &str, value: &serde_json::Value, expected: &str) {
    let text = loadfit::text::to_json_pretty(value);
    assert_clean(what, &text);
    let back: serde_json::Value = serde_json::from_str(&text).unwrap();
    // Every string reads back as it was (numbers are not compared: serde_json's float parsing
    // may differ in the last bit).
    assert!(
        collect_strings(&back) == collect_strings(value),
        "{what}: the strings of the JSON read back the same"
    );
    assert!(
        text.contains("\\u001b[2J"),
        "{what}: ESC is escaped, not dropped"
    );
    let strings = collect_strings(&back);
    assert!(
        strings.iter().any(|s| s.contains(expected)),
        "{what}: {expected:?} not found intact"
    );
}

fn collect_strings(value: &serde_json::Value) -> Vec<String> {
    match value {
        serde_json::Value::String(s) => vec![s.clone()],
        serde_json::Value::Array(a) => a.iter().flat_map(collect_strings).collect(),
        serde_json::Value::Object(o) => o
            .iter()
            .flat_map(|(k, v)| {
                let mut all = collect_strings(v);
                all.push(k.clone());
                all
            })
            .collect(),
        _ => Vec::new(),
    }
}

fn loadfit(args: &[&str], dir: &Path) -> (Option<i32>, String, String) {
    let output = Command::new(env!("CARGO_BIN_EXE_loadfit"))
        .args(args)
        .current_dir(dir)
        .env("RUST_BACKTRACE", "1")
        .output()
        .unwrap();
    (
        output.status.code(),
        String::from_utf8(output.stdout).expect("stdout is UTF-8"),
        String::from_utf8(output.stderr).expect("stderr is UTF-8"),
    )
}

/// The binary end to end: every subcommand and format on the hostile files, stdout and stderr.
#[test]
fn no_command_prints_a_raw_control_or_bidi_character() {
    let files = files();
    let lib = files.library.to_str().unwrap();
    let stage = files.stage.to_str().unwrap();
    let mut runs: Vec<Vec<String>> = Vec::new();
    let args = |a: &[&str]| a.iter().map(|s| (*s).to_string()).collect::<Vec<_>>();
    for format in ["text", "json"] {
        runs.push(args(&["lint", lib, "--format", format]));
    }
    for format in ["text", "json", "md"] {
        runs.push(args(&["needs", stage, "--parts", lib, "--format", format]));
    }
    for format in ["text", "json", "csv"] {
        runs.push(args(&["fit", stage, "--parts", lib, "--format", format]));
    }
    runs.push(args(&["--parts", lib]));
    for extension in ["md", "csv", "json"] {
        // The output's own name is hostile too: `wrote …` echoes it.
        let out = format!("short\u{1b}[31m\u{202e}list.{extension}");
        runs.push(args(&["shortlist", stage, "--parts", lib, "--out", &out]));
    }
    for run in &runs {
        let argv: Vec<&str> = run.iter().map(String::as_str).collect();
        let (code, out, err) = loadfit(&argv, &files.dir);
        let what = format!("loadfit {}", argv.join(" "));
        assert!(matches!(code, Some(0 | 1)), "{what}: {code:?} {err}");
        assert_clean(&format!("{what}: stdout"), &out);
        assert_clean(&format!("{what}: stderr"), &err);
        if argv[0] == "fit" {
            let shown = out.contains("CX<U+001B>") || out.contains("CX\\u001b");
            assert!(shown, "{what}: the hostile parts are shown, made visible");
        }
    }
    for extension in ["md", "csv", "json"] {
        let path = files
            .dir
            .join(format!("short\u{1b}[31m\u{202e}list.{extension}"));
        let text = std::fs::read_to_string(&path).unwrap();
        assert_clean(&format!("shortlist .{extension} file"), &text);
    }
}

/// Errors carry the offending text; on stderr it is made visible, and `RUST_BACKTRACE=1` in the
/// environment adds no trace to a user's error.
#[test]
fn errors_show_hostile_text_made_visible() {
    let files = files();
    let bad_stage = files.dir.join("bad\u{1b}[2J.toml");
    std::fs::write(
        &bad_stage,
        "[supply]\nvolts = \"12\u{202e} V\u{1b}[31m\"\n[load]\ntype = \"resistive\"\nresistance = \"1 k\"\n",
    )
    .unwrap();
    let bad_library = files.dir.join("nopart\u{9b}2J.csv");
    std::fs::write(&bad_library, "na\u{1b}[31mme,kind\nCX1,npn\n").unwrap();
    let runs = [
        vec!["needs", bad_stage.to_str().unwrap()],
        vec!["lint", bad_library.to_str().unwrap()],
        vec![
            "fit",
            files.stage.to_str().unwrap(),
            "--parts",
            bad_library.to_str().unwrap(),
        ],
    ];
    for argv in runs {
        let (code, out, err) = loadfit(&argv, &files.dir);
        let what = format!("loadfit {}", argv.join(" "));
        assert_eq!(code, Some(2), "{what}: {err}");
        assert_clean(&format!("{what}: stderr"), &err);
        assert_clean(&format!("{what}: stdout"), &out);
        assert_eq!(err.lines().count(), 1, "{what}: one line: {err}");
        assert!(
            err.contains("<U+001B>") || err.contains("<U+009B>"),
            "{what}: {err}"
        );
        assert!(
            !err.contains("panicked") && !err.contains("stack backtrace"),
            "{err}"
        );
    }
}

/// `RUST_BACKTRACE=1` does not turn a user's error into a trace: a missing file and a bad stage
/// each give one line naming the file and what to do, and exit 2.
#[test]
fn a_backtrace_setting_does_not_change_user_errors() {
    let dir = tempfile::tempdir().unwrap();
    let bad = dir.path().join("stage.toml");
    std::fs::write(
        &bad,
        "[supply]\nvolts = \"12 A\"\n[load]\ntype = \"resistive\"\n",
    )
    .unwrap();
    for backtrace in ["1", "full"] {
        for (argv, words) in [
            (vec!["lint", "no/such/parts.csv"], "no/such/parts.csv"),
            (vec!["needs", "no/such/stage.toml"], "no/such/stage.toml"),
            (vec!["needs", bad.to_str().unwrap()], "[supply] volts"),
            (
                vec!["fit", bad.to_str().unwrap(), "--parts", "no/such.csv"],
                "stage.toml",
            ),
        ] {
            let output = Command::new(env!("CARGO_BIN_EXE_loadfit"))
                .args(&argv)
                .env("RUST_BACKTRACE", backtrace)
                .env("RUST_LIB_BACKTRACE", backtrace)
                .output()
                .unwrap();
            let err = String::from_utf8_lossy(&output.stderr);
            assert_eq!(output.status.code(), Some(2), "{argv:?}: {err}");
            assert_eq!(err.lines().count(), 1, "{argv:?}: {err}");
            assert!(err.starts_with("loadfit: "), "{err}");
            assert!(err.contains(words), "{argv:?}: {err}");
            for trace in ["panicked", "backtrace", "stack", "at src/", ".rs:"] {
                assert!(!err.contains(trace), "{argv:?}: {err}");
            }
        }
    }
}

fn draw(app: &App) -> String {
    let mut terminal = Terminal::new(TestBackend::new(140, 40)).unwrap();
    terminal
        .draw(|frame| view::draw(frame, app, Theme { color: true }))
        .unwrap();
    terminal
        .backend()
        .buffer()
        .content()
        .iter()
        .map(ratatui::buffer::Cell::symbol)
        .collect()
}

/// Every panel of the workbench, with the hostile parts selected, kept and searched for, the
/// hostile rows in the Library panel, a hostile entry typed into a field and a prompt.
#[test]
fn the_workbench_never_draws_a_raw_control_or_bidi_character() {
    let (files, library, _) = loaded();
    let doc = StageDoc::parse(&hostile_stage(), "hostile\u{1b}[31m.toml").unwrap();
    let mut app = App::new(library, vec![files.library.clone()], doc, None);
    let mut screens = 0;
    let mut check = |app: &App, what: &str| {
        assert_clean(what, &draw(app));
        screens += 1;
    };
    for (i, panel) in Panel::ALL.into_iter().enumerate() {
        app.update(Action::Panel(i));
        check(&app, panel.title());
        for step in 0..8 {
            for action in [Action::Down, Action::Enter] {
                app.update(action);
                check(&app, &format!("{} after {step} steps", panel.title()));
                if app.typing() || app.prompt.is_some() {
                    app.update(Action::Back);
                }
            }
        }
        for role in 0..4 {
            app.update(Action::Right);
            app.update(Action::ToggleShortlist);
            check(&app, &format!("{}, role {role}", panel.title()));
        }
    }
    // Find substitutes for the selected hostile part, if the workbench offers it here.
    app.update(Action::Panel(2));
    app.update(Action::FindSubstitutes);
    check(&app, "substitutes");
    // A search and a prompt with hostile characters typed in.
    app.update(Action::Panel(2));
    app.update(Action::StartSearch);
    for c in format!("CX{P}").chars() {
        app.update(Action::Type(c));
    }
    check(&app, "search");
    app.update(Action::Back);
    app.update(Action::StartExport);
    for c in P.chars() {
        app.update(Action::Type(c));
    }
    check(&app, "export prompt");
    app.update(Action::Back);
    // A hostile entry in a Stage field: refused, and the refusal shown.
    app.update(Action::Panel(0));
    app.update(Action::Down);
    app.update(Action::Enter);
    for c in format!("12{P} V").chars() {
        app.update(Action::Type(c));
    }
    check(&app, "field being edited");
    app.update(Action::Enter);
    check(&app, "field refused");
    app.update(Action::ToggleHelp);
    check(&app, "help");
    assert!(screens > 50, "{screens} screens drawn");
}
