//! Whole-app snapshots of every panel (insta, `TestBackend`) and action-level tests.

use super::action::Action;
use super::app::{App, Panel};
use super::fields::{FIELDS, StageDoc};
use super::view::{self, Theme};
use crate::fit::Verdict;
use crate::library::Library;
use ratatui::Terminal;
use ratatui::backend::TestBackend;

fn demo_app() -> App {
    let doc = StageDoc::parse(super::DEMO_STAGE, "mains-pump-relay.toml").unwrap();
    App::new(Library::demo(), Vec::new(), doc, None)
}

fn render(app: &App, width: u16, height: u16) -> String {
    let mut terminal = Terminal::new(TestBackend::new(width, height)).unwrap();
    terminal
        .draw(|frame| view::draw(frame, app, Theme { color: false }))
        .unwrap();
    terminal.backend().to_string()
}

fn field_index(path: &str) -> usize {
    FIELDS.iter().position(|f| f.path() == path).unwrap()
}

#[test]
fn snapshot_every_panel() {
    let mut app = demo_app();
    for (i, panel) in Panel::ALL.into_iter().enumerate() {
        app.update(Action::Panel(i));
        assert_eq!(app.panel, panel);
        insta::assert_snapshot!(
            format!("panel_{}", panel.title().to_lowercase()),
            render(&app, 120, 32)
        );
    }
}

#[test]
fn snapshot_help_and_too_small() {
    let mut app = demo_app();
    app.update(Action::ToggleHelp);
    insta::assert_snapshot!("help_overlay", render(&app, 120, 40));
    app.update(Action::Back);
    assert!(!app.help);
    insta::assert_snapshot!("too_small", render(&app, 60, 20));
}

#[test]
fn snapshot_shortlist_with_picks_and_search() {
    let mut app = demo_app();
    app.update(Action::Panel(2));
    app.update(Action::ToggleShortlist);
    app.update(Action::Down);
    app.update(Action::ToggleShortlist);
    app.update(Action::Right);
    app.update(Action::ToggleShortlist);
    app.update(Action::Panel(4));
    insta::assert_snapshot!("shortlist_with_picks", render(&app, 120, 32));
    app.update(Action::StartSearch);
    for c in "BRN".chars() {
        app.update(Action::Type(c));
    }
    insta::assert_snapshot!("parts_search", render(&app, 120, 32));
}

#[test]
fn editing_the_supply_changes_a_need_and_a_verdict() {
    let mut app = demo_app();
    let before = app.needs.value("switch.voltage").unwrap();
    let verdicts = |app: &App| -> Vec<Verdict> {
        app.fit.roles[0]
            .candidates
            .iter()
            .map(|c| c.verdict)
            .collect()
    };
    let old = verdicts(&app);
    app.stage_cursor = field_index("supply.volts");
    app.update(Action::Enter);
    for _ in 0..10 {
        app.update(Action::Backspace);
    }
    for c in "48 V".chars() {
        app.update(Action::Type(c));
    }
    app.update(Action::Enter);
    let after = app.needs.value("switch.voltage").unwrap();
    // (48 V × 1.1 + VF 0.8 V) / 0.8 against (12 V × 1.1 + 0.8 V) / 0.8: 67 V against 17.5 V.
    assert!(
        (after - 67.0).abs() < 1e-9 && (before - 17.5).abs() < 1e-9,
        "{before} -> {after}"
    );
    assert_ne!(
        verdicts(&app),
        old,
        "some verdict changes with a 48 V supply"
    );
    assert!(app.dirty);
}

#[test]
fn an_invalid_entry_keeps_the_old_value_and_says_why() {
    let mut app = demo_app();
    app.stage_cursor = field_index("supply.volts");
    app.update(Action::Enter);
    for _ in 0..10 {
        app.update(Action::Backspace);
    }
    for c in "12 A".chars() {
        app.update(Action::Type(c));
    }
    // Said while typing, before Enter.
    let live = app.editor.as_ref().and_then(|e| e.problem.clone()).unwrap();
    assert!(live.contains("12 A"), "{live}");
    app.update(Action::Enter);
    assert_eq!(app.doc.stage.supply.volts.value(), 12.0);
    let (at, message) = app.field_error.clone().unwrap();
    assert_eq!(at, field_index("supply.volts"));
    assert!(message.contains("12 A"), "{message}");
    assert!(!app.dirty);
    assert!(render(&app, 120, 32).contains("✗"));
}

#[test]
fn choices_cycle_with_the_arrows() {
    let mut app = demo_app();
    app.stage_cursor = field_index("clamp.type");
    // A zener clamp needs its voltage first: the stage refuses, the diode stays, and says why.
    app.update(Action::Right);
    assert_eq!(
        app.doc.get(&FIELDS[app.stage_cursor]).as_deref(),
        Some("diode")
    );
    assert!(
        app.field_error
            .as_ref()
            .is_some_and(|(_, m)| m.contains("zener_volts")),
        "{:?}",
        app.field_error
    );
    app.doc
        .set(&FIELDS[field_index("clamp.zener_volts")], "24 V")
        .unwrap();
    app.update(Action::Right);
    assert_eq!(
        app.doc.get(&FIELDS[app.stage_cursor]).as_deref(),
        Some("zener")
    );
    assert!(
        app.fit
            .roles
            .iter()
            .any(|r| r.role == crate::fit::Role::Zener)
    );
}

#[test]
fn search_narrows_the_table() {
    let mut app = demo_app();
    app.update(Action::Panel(2));
    let all = app.visible().len();
    app.update(Action::StartSearch);
    for c in "BRN22".chars() {
        app.update(Action::Type(c));
    }
    let narrowed = app.visible().len();
    assert!(narrowed > 0 && narrowed < all, "{all} -> {narrowed}");
    // Narrowing from the last hits as the query grows gives what a search from scratch gives.
    let shown = app.visible().to_vec();
    assert_eq!(shown, app.visible_from_scratch());
    app.update(Action::Backspace);
    let shown = app.visible().to_vec();
    assert_eq!(shown, app.visible_from_scratch());
    app.update(Action::Back);
    assert_eq!(app.visible().len(), all);
}

#[test]
fn shortlist_then_export_writes_the_file() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = demo_app();
    app.update(Action::Panel(2));
    app.update(Action::ToggleShortlist);
    let kept = app.library.parts[app.shortlist.roles[0].1[0]]
        .number
        .to_string();
    let path = dir.path().join("picks.csv");
    app.update(Action::StartExport);
    for _ in 0..20 {
        app.update(Action::Backspace);
    }
    for c in path.display().to_string().chars() {
        app.update(Action::Type(c));
    }
    app.update(Action::Enter);
    let text = std::fs::read_to_string(&path).unwrap();
    assert!(text.contains(&kept), "{text}");
    // A second export asks before overwriting.
    app.update(Action::StartExport);
    for _ in 0..200 {
        app.update(Action::Backspace);
    }
    for c in path.display().to_string().chars() {
        app.update(Action::Type(c));
    }
    app.update(Action::Enter);
    assert!(matches!(
        app.prompt,
        Some(super::app::Prompt::ConfirmExport(_))
    ));
    app.update(Action::Type('n'));
    assert!(app.prompt.is_none());
}

#[test]
fn quitting_with_unsaved_edits_asks_first() {
    let mut app = demo_app();
    app.stage_cursor = field_index("rules.require_rohs");
    app.update(Action::Right);
    assert!(app.dirty);
    app.update(Action::Quit);
    assert!(!app.quit);
    app.update(Action::Type('y'));
    assert!(app.quit);
}

#[test]
fn saving_the_stage_writes_a_file_that_reads_back() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("edited.toml");
    let mut app = demo_app();
    app.stage_cursor = field_index("rules.require_rohs");
    app.update(Action::Right);
    app.save(&path, false);
    assert!(!app.dirty, "{:?}", app.message);
    let stage = crate::stage::Stage::read(&path).unwrap();
    assert!(stage.rules.require_rohs);
}

#[test]
fn edits_are_autosaved_and_offered_back_after_a_crash() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("pump.toml");
    std::fs::write(&path, super::DEMO_STAGE).unwrap();
    let open = || {
        let doc = StageDoc::parse(&std::fs::read_to_string(&path).unwrap(), "pump.toml").unwrap();
        let mut app = App::new(Library::demo(), Vec::new(), doc, Some(path.clone()));
        app.offer_autosave();
        app
    };
    let mut app = open();
    assert!(app.prompt.is_none());
    app.stage_cursor = field_index("rules.require_rohs");
    app.update(Action::Right);
    let autosave = app.autosave_path().unwrap();
    assert!(autosave.is_file());
    // The run ends without saving (a crash): the next run offers the edits back.
    drop(app);
    let mut app = open();
    assert!(matches!(
        app.prompt,
        Some(super::app::Prompt::RestoreAutosave(_))
    ));
    assert!(!app.doc.stage.rules.require_rohs);
    app.update(Action::Type('y'));
    assert!(app.doc.stage.rules.require_rohs && app.dirty);
    // Saving writes the stage and removes the autosave.
    app.save(&path, true);
    assert!(!autosave.exists());
    assert!(crate::stage::Stage::read(&path).unwrap().rules.require_rohs);
}

#[test]
fn substitutes_are_found_from_a_part_and_can_be_kept() {
    let mut app = demo_app();
    app.update(Action::Panel(2));
    app.update(Action::FindSubstitutes);
    assert_eq!(app.panel, Panel::Swap);
    let swap = app.swap.as_ref().expect("a swap for the selected part");
    assert!(!swap.candidates.is_empty());
    let first = swap.candidates[0].part;
    app.update(Action::ToggleShortlist);
    assert!(
        app.shortlist
            .roles
            .iter()
            .any(|(_, parts)| parts.contains(&first)),
        "{:?}",
        app.message
    );
    insta::assert_snapshot!("panel_swap_found", render(&app, 120, 32));
}

#[test]
fn the_pin_trap_is_drawn_for_a_twin_in_the_other_order() {
    let mut app = demo_app();
    let original = app
        .library
        .parts
        .iter()
        .position(|p| &*p.number == "BRN2210E")
        .unwrap();
    app.swap = app.swap_for_test(original);
    let swap = app.swap.as_ref().unwrap();
    let twin = swap
        .candidates
        .iter()
        .position(|c| &*app.library.parts[c.part].number == "BRN2210C")
        .expect("the C-B-E twin is a candidate");
    assert_eq!(swap.candidates[twin].class, crate::swap::Class::Rework);
    app.swap_cursor = twin;
    app.panel = Panel::Swap;
    let screen = render(&app, 120, 32);
    assert!(screen.contains("pins 1 and 3 swap"), "{screen}");
    assert!(screen.contains("↕"), "{screen}");
}

#[test]
fn the_worst_case_toggle_shows_both_values_and_tightens_needs() {
    let mut app = demo_app();
    let nominal = app.needs.value("relay.operate_voltage").unwrap();
    app.update(Action::Panel(1));
    app.update(Action::ToggleWorstCase);
    assert!(app.worst_case);
    let need = app.needs.get("relay.operate_voltage").unwrap();
    assert!(
        need.value.unwrap() < nominal,
        "a hot coil needs more volts: the must-operate bound falls"
    );
    assert_eq!(need.nominal, Some(nominal));
    let screen = render(&app, 120, 32);
    assert!(
        screen.contains("WORST CASE") && screen.contains("nominal"),
        "{screen}"
    );
    insta::assert_snapshot!("panel_needs_worst_case", screen);
    app.update(Action::ToggleWorstCase);
    assert_eq!(app.needs.value("relay.operate_voltage"), Some(nominal));
}

#[test]
fn the_trace_follows_the_candidate_and_shows_the_rating() {
    let mut app = demo_app();
    app.update(Action::Panel(6));
    assert_eq!(app.panel, Panel::Trace);
    let stage = app.trace_stage.as_ref().unwrap().as_ref().unwrap();
    assert!(
        stage.peak_voltage.unwrap() > 13.0,
        "the coil kicks above the supply"
    );
    let first = app
        .trace_part
        .as_ref()
        .unwrap()
        .as_ref()
        .unwrap()
        .part
        .clone();
    app.update(Action::Down);
    let second = app
        .trace_part
        .as_ref()
        .unwrap()
        .as_ref()
        .unwrap()
        .part
        .clone();
    assert_ne!(
        first, second,
        "the panel follows the cursor through the candidates"
    );
    app.update(Action::Right);
    assert!(app.trace_cursor > 0.5);
    let screen = render(&app, 120, 32);
    assert!(
        screen.contains("VCEO") && screen.contains("peak"),
        "{screen}"
    );
    insta::assert_snapshot!("trace_after_moves", screen);
}

#[test]
fn a_trace_exports_as_svg_from_its_panel() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("kick.svg");
    let mut app = demo_app();
    app.update(Action::Panel(6));
    app.export(&path, false);
    let svg = std::fs::read_to_string(&path).unwrap_or_else(|e| panic!("{e}: {:?}", app.message));
    assert!(
        svg.starts_with("<svg") || svg.contains("<svg"),
        "{}",
        &svg[..80.min(svg.len())]
    );
}

#[test]
fn a_large_library_is_recomputed_in_the_background() {
    let library = crate::synthetic::library(60_000, 5).unwrap();
    assert!(library.parts.len() > super::app::BACKGROUND_PARTS);
    let doc = StageDoc::parse(super::DEMO_STAGE, "mains-pump-relay.toml").unwrap();
    let mut app = App::new(library, Vec::new(), doc, None);
    assert!(
        app.pending.is_some(),
        "the first evaluation runs on a worker"
    );
    assert!(render(&app, 120, 32).contains("recomputing"));
    app.wait_for_background();
    let before = app.needs.value("switch.voltage").unwrap();
    assert!(!app.fit.roles.is_empty());
    // An edit returns at once; the result follows.
    app.stage_cursor = field_index("supply.volts");
    app.update(Action::Enter);
    for _ in 0..10 {
        app.update(Action::Backspace);
    }
    for c in "24 V".chars() {
        app.update(Action::Type(c));
    }
    app.update(Action::Enter);
    assert!(app.pending.is_some());
    assert_eq!(
        app.needs.value("switch.voltage"),
        Some(before),
        "the last result stays on screen"
    );
    app.wait_for_background();
    assert!(app.needs.value("switch.voltage").unwrap() > before);
    assert!(app.pending.is_none());
}

#[test]
fn a_library_loads_in_the_background_while_the_demo_stays_usable() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("big.csv");
    let mut text = Vec::new();
    crate::synthetic::write_library(&mut text, 30_000, 9).unwrap();
    std::fs::write(&path, &text).unwrap();
    let doc = StageDoc::parse(super::DEMO_STAGE, "mains-pump-relay.toml").unwrap();
    let mut app = App::new(Library::demo(), Vec::new(), doc, None);
    let demo_parts = app.library.parts.len();
    app.start_load(vec![path.clone()]);
    assert!(app.loading.is_some());
    // The file is protected from exports before it is read.
    assert_eq!(app.library_paths, vec![path.clone()]);
    // Keys keep working on the library at hand while the load runs.
    app.update(Action::Panel(2));
    assert_eq!(app.panel, super::app::Panel::Parts);
    let screen = render(&app, 140, 32);
    // Nothing takes the finished load in until it is polled, so the gauge is on screen.
    assert!(screen.contains("reading library"), "{screen}");
    app.wait_for_load();
    app.wait_for_background();
    assert!(app.loading.is_none());
    assert!(app.library.parts.len() > 29_000 && app.library.parts.len() != demo_parts);
    assert!(
        app.message
            .as_deref()
            .unwrap_or("")
            .starts_with("library read: ")
    );
    assert!(!app.fit.roles.is_empty());
    assert!(
        app.fit.roles[0]
            .candidates
            .iter()
            .all(|c| c.part < app.library.parts.len())
    );
    assert!(!render(&app, 140, 32).contains("reading library"));
}

#[test]
fn a_failed_background_load_keeps_the_demo_and_says_why() {
    let doc = StageDoc::parse(super::DEMO_STAGE, "mains-pump-relay.toml").unwrap();
    let mut app = App::new(Library::demo(), Vec::new(), doc, None);
    let demo_parts = app.library.parts.len();
    app.start_load(vec![std::path::PathBuf::from("/nonexistent/parts.csv")]);
    app.wait_for_load();
    assert!(app.loading.is_none());
    assert_eq!(app.library.parts.len(), demo_parts);
    let message = app.message.clone().unwrap_or_default();
    assert!(
        message.contains("could not read the library")
            && message.contains("/nonexistent/parts.csv")
            && message.contains("demo library stays"),
        "{message}"
    );
}

#[test]
fn the_load_gauge_names_rows_megabytes_and_rate() {
    let progress = crate::library::LoadProgress::default();
    assert_eq!(
        super::app::describe_load(&progress, 1.0),
        "reading library: 0 rows, 0 of 0 MB, 0 MB/s"
    );
}

/// A workbench over `rows` generated parts and the door-strike stage, its fit done.
fn door_strike_app(rows: u64, seed: u64) -> App {
    let library = crate::synthetic::library(rows, seed).unwrap();
    let doc = StageDoc::parse(
        include_str!("../../data/stages/door-strike.toml"),
        "door-strike.toml",
    )
    .unwrap();
    let mut app = App::new(library, Vec::new(), doc, None);
    app.wait_for_background();
    app
}

#[test]
fn a_large_list_is_searched_off_the_ui_thread_with_the_same_hits() {
    let mut app = door_strike_app(40_000, 11);
    app.update(Action::Panel(3));
    let role = app
        .fit
        .roles
        .iter()
        .position(|r| r.candidates.len() > super::app::SEARCH_BACKGROUND)
        .expect("a role with a long candidate list");
    app.role = role;
    app.refilter();
    app.update(Action::StartSearch);
    for (typed, c) in "lx3".chars().enumerate() {
        app.update(Action::Type(c));
        // The first key searches every candidate on a worker; later keys narrow from its
        // hits, on a worker only while those are many.
        if typed == 0 {
            assert!(
                app.searching.is_some(),
                "the first key searches on a worker"
            );
        }
        app.wait_for_search();
        assert!(app.searching.is_none());
        assert_eq!(app.visible(), app.visible_from_scratch().as_slice());
    }
    // A key typed while a search runs makes the older search's hits stale: only the newest
    // query's hits are taken in.
    app.update(Action::Backspace);
    app.update(Action::Type('7'));
    app.wait_for_search();
    assert_eq!(app.visible(), app.visible_from_scratch().as_slice());
    assert_eq!(app.search.as_ref().map(|s| s.query.as_str()), Some("lx7"));
    assert!(!render(&app, 140, 32).contains("searching"));
}

#[test]
fn a_long_search_shows_its_first_screenful_then_every_hit() {
    use super::search::FIRST_SCREEN;
    let mut app = door_strike_app(40_000, 12);
    app.update(Action::Panel(2));
    assert!(app.fit.roles[0].candidates.len() > super::app::SEARCH_BACKGROUND);
    app.update(Action::StartSearch);
    app.update(Action::Type('s'));
    assert!(app.searching.is_some(), "searched on the workers");
    app.wait_for_search();
    assert_eq!(app.visible(), app.visible_from_scratch().as_slice());
    // "sq" narrows from every hit of "s"; its first screenful is shown ahead of the rest.
    app.update(Action::Type('q'));
    app.wait_for_first_screenful();
    let all = app.visible_from_scratch();
    assert!(all.len() > FIRST_SCREEN, "{}", all.len());
    assert_eq!(app.visible(), &all[..FIRST_SCREEN]);
    assert!(app.searching.is_some(), "the rest is on its way");
    let screen = render(&app, 140, 32);
    assert!(screen.contains("searching"), "{screen}");
    assert!(screen.contains(&format!("{FIRST_SCREEN} of ")), "{screen}");
    // A key typed while only the first screenful is shown narrows from every hit of "s",
    // never from the screenful: a hit below it would be lost.
    app.update(Action::Type('n'));
    app.wait_for_search();
    let all = app.visible_from_scratch();
    assert!(all.len() > FIRST_SCREEN, "{}", all.len());
    assert_eq!(app.visible(), all.as_slice());
    assert!(!render(&app, 140, 32).contains("searching"));
    // Backspace, and the same key again before the wider search is in: what is on screen
    // then is no base to narrow from, the last full list is.
    app.update(Action::Backspace);
    app.update(Action::Type('n'));
    app.wait_for_search();
    assert_eq!(app.visible(), app.visible_from_scratch().as_slice());
}
