//! The workbench's Parts panel over generated libraries of 100 000 and 1 000 000 parts: a search
//! key's hits, and whole frames. `cargo bench --bench workbench`. Issue targets: a key's hits on
//! screen within 30 ms at 100 000 parts; at 1 000 000 parts the first screenful within 150 ms
//! and the full list within half of `fzf --filter`'s time on the same texts; a frame under
//! 5 ms at any size.
//!
//! The door-strike stage's switch role, the Parts panel. Only the key is timed: the query is
//! cleared and the search started (or the shorter query typed) before the clock starts.

use loadfit::library::Library;
use loadfit::tui::action::Action;
use loadfit::tui::app::App;
use loadfit::tui::fields::StageDoc;
use loadfit::tui::view::{self, Theme};
use ratatui::Terminal;
use ratatui::backend::TestBackend;
use std::cell::RefCell;

fn main() {
    divan::main();
}

const STAGE: &str = include_str!("../data/stages/door-strike.toml");

fn library(rows: u64) -> Library {
    loadfit::synthetic::library(rows, 1).expect("a generated library reads")
}

/// A workbench over `rows` generated parts, its fit done, the Parts panel in front.
fn parts_panel(rows: u64) -> App {
    let doc = StageDoc::parse(STAGE, "door-strike.toml").expect("the demo stage reads");
    let mut app = App::new(library(rows), Vec::new(), doc, None);
    app.wait_for_background();
    app.update(Action::Panel(2));
    app
}

/// Clears the search and starts a new one with `typed` in it, every hit of it in.
fn search_for(app: &mut App, typed: &str) {
    app.wait_for_search();
    app.update(Action::Back);
    app.update(Action::StartSearch);
    for c in typed.chars() {
        app.update(Action::Type(c));
    }
    app.wait_for_search();
}

/// Times one `key` typed after `typed`, until `arrived` says its hits are on screen. Each
/// sample is one key, its setup untimed.
fn key(bencher: divan::Bencher, app: App, typed: &str, key: char, arrived: fn(&mut App)) {
    let app = RefCell::new(app);
    bencher
        .with_inputs(|| search_for(&mut app.borrow_mut(), typed))
        .bench_local_values(|()| {
            let mut app = app.borrow_mut();
            app.update(Action::Type(key));
            arrived(&mut app);
            app.visible().len()
        });
}

/// One key of a search from an empty query, all its hits in: nothing to narrow from, and
/// every part matches ('c' is in every generated part's tag).
#[divan::bench(args = [100_000], sample_count = 100, sample_size = 1)]
fn key_from_empty(bencher: divan::Bencher, rows: u64) {
    key(bencher, parts_panel(rows), "", 'c', App::wait_for_search);
}

/// A key that narrows the hits of "sq" (every NPN) to those of "sqn".
#[divan::bench(args = [100_000], sample_count = 100, sample_size = 1)]
fn key_narrowing(bencher: divan::Bencher, rows: u64) {
    key(bencher, parts_panel(rows), "sq", 'n', App::wait_for_search);
}

/// One key from an empty query until its first screenful is on screen.
#[divan::bench(args = [1_000_000], sample_count = 30, sample_size = 1)]
fn first_screenful(bencher: divan::Bencher, rows: u64) {
    key(
        bencher,
        parts_panel(rows),
        "",
        'c',
        App::wait_for_first_screenful,
    );
}

/// One key from an empty query until all its hits are in.
#[divan::bench(args = [1_000_000], sample_count = 30, sample_size = 1)]
fn full_list(bencher: divan::Bencher, rows: u64) {
    key(bencher, parts_panel(rows), "", 'c', App::wait_for_search);
}

/// A whole 160 × 48 frame of the Parts panel (with the Detail beside it), with no search and
/// with a search whose letters are highlighted.
#[divan::bench(args = [100_000, 1_000_000], sample_count = 50)]
fn frame(bencher: divan::Bencher, rows: u64) {
    frames(bencher, parts_panel(rows), "");
}

/// [`frame`] with the search "sqn" on, its letters highlighted in each row.
#[divan::bench(args = [100_000, 1_000_000], sample_count = 50)]
fn frame_searching(bencher: divan::Bencher, rows: u64) {
    let mut app = parts_panel(rows);
    search_for(&mut app, "sqn");
    frames(bencher, app, "sqn");
}

fn frames(bencher: divan::Bencher, app: App, query: &str) {
    assert_eq!(app.search.as_ref().map_or("", |s| s.query.as_str()), query);
    let mut terminal = Terminal::new(TestBackend::new(160, 48)).expect("a test terminal");
    let theme = Theme { color: true };
    bencher.bench_local(|| {
        terminal
            .draw(|frame| view::draw(frame, &app, theme))
            .map(|f| f.area.width)
    });
}
