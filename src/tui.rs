//! The workbench: a keyboard-driven terminal UI over stage, needs, parts and shortlist. The only
//! module (with `main.rs`) that uses ratatui and crossterm.
//!
//! - [`app`]: the state and [`app::App::update`], the one place it changes;
//! - [`action`]: what a key asks for; [`keymap`]: which key asks for it (and the help);
//! - [`view`]: drawing, reading the state only; [`fields`]: the stage as editable fields.

pub mod action;
pub mod app;
pub mod fields;
pub mod keymap;
pub mod search;
pub mod view;

use action::Action;
use app::{App, Prompt};
use crossterm::event::{self, Event, KeyCode, KeyEvent, KeyEventKind, KeyModifiers};
use crossterm::{cursor, execute, terminal};
use keymap::Scope;
use std::io;
use std::sync::Arc;
use std::sync::atomic::{AtomicBool, Ordering};
use std::time::Duration;

/// The stage the workbench opens when none is given: an invented rain-tank pump through a relay.
pub const DEMO_STAGE: &str = include_str!("../data/stages/mains-pump-relay.toml");

/// The action a key press asks for in the app's present mode.
#[must_use]
pub fn action_for_key(app: &App, key: KeyEvent) -> Option<Action> {
    if key.code == KeyCode::Char('c') && key.modifiers.contains(KeyModifiers::CONTROL) {
        return Some(Action::Quit);
    }
    let confirming = matches!(
        app.prompt,
        Some(
            Prompt::ConfirmExport(_)
                | Prompt::ConfirmSave(_)
                | Prompt::ConfirmQuit
                | Prompt::RestoreAutosave(_)
        )
    );
    if app.typing() || confirming {
        return match key.code {
            KeyCode::Char(c) if !key.modifiers.contains(KeyModifiers::CONTROL) => {
                Some(Action::Type(c))
            }
            KeyCode::Backspace => Some(Action::Backspace),
            KeyCode::Enter => Some(Action::Enter),
            KeyCode::Esc => Some(Action::Back),
            KeyCode::Up => Some(Action::Up),
            KeyCode::Down => Some(Action::Down),
            _ => None,
        };
    }
    let scope = match app.panel {
        app::Panel::Stage => Scope::Stage,
        _ => Scope::Parts,
    };
    keymap::action_for(key, scope)
}

/// Puts the terminal back: raw mode off, main screen, cursor shown. Safe to call twice.
pub fn restore_terminal() {
    let _ = terminal::disable_raw_mode();
    let _ = execute!(io::stdout(), terminal::LeaveAlternateScreen, cursor::Show);
}

/// Runs the workbench until the user quits or a SIGTERM, SIGHUP or SIGINT arrives; the terminal
/// is restored on every way out, a panic included.
///
/// # Errors
/// When the terminal cannot be set up or drawn to.
pub fn run(mut app: App) -> io::Result<()> {
    let stop = Arc::new(AtomicBool::new(false));
    for signal in [
        signal_hook::consts::SIGTERM,
        signal_hook::consts::SIGHUP,
        signal_hook::consts::SIGINT,
    ] {
        signal_hook::flag::register(signal, Arc::clone(&stop))?;
    }
    watch_for_a_stuck_loop()?;
    let previous = std::panic::take_hook();
    std::panic::set_hook(Box::new(move |info| {
        restore_terminal();
        previous(info);
    }));
    terminal::enable_raw_mode()?;
    execute!(io::stdout(), terminal::EnterAlternateScreen, cursor::Hide)?;
    let result = event_loop(&mut app, &stop);
    restore_terminal();
    result
}

/// How long the event loop has to end after a signal before the watcher ends the process.
const SIGNAL_GRACE: Duration = Duration::from_secs(2);

/// Ends the process shortly after a SIGTERM, SIGHUP or SIGINT if the event loop has not ended
/// by then. Once its terminal has gone (the tmux pane or the SSH link closed), crossterm's input
/// poll reads end-of-file and retries without returning, so the loop never sees the stop flag;
/// without this the workbench would spin on a core until killed. Stage edits are autosaved as
/// they are made, so ending here loses nothing.
fn watch_for_a_stuck_loop() -> io::Result<()> {
    use signal_hook::consts::{SIGHUP, SIGINT, SIGTERM};
    let mut signals = signal_hook::iterator::Signals::new([SIGTERM, SIGHUP, SIGINT])?;
    std::thread::Builder::new()
        .name("loadfit-signals".to_string())
        .spawn(move || {
            if let Some(signal) = signals.forever().next() {
                // A loop that is not stuck ends well within this and takes the process with it.
                std::thread::sleep(SIGNAL_GRACE);
                // Standard output is locked by the main thread for the whole run: the terminal
                // is put back through /dev/tty instead (if it is still there).
                let _ = terminal::disable_raw_mode();
                if let Ok(mut tty) = std::fs::OpenOptions::new().write(true).open("/dev/tty") {
                    let _ = execute!(tty, terminal::LeaveAlternateScreen, cursor::Show);
                }
                std::process::exit(128 + signal);
            }
        })?;
    Ok(())
}

fn event_loop(app: &mut App, stop: &AtomicBool) -> io::Result<()> {
    let backend = ratatui::backend::CrosstermBackend::new(io::stdout());
    let mut terminal = ratatui::Terminal::new(backend)?;
    let theme = view::Theme::from_env();
    // A test hook: the end-to-end test of terminal restore needs a real panic in the running
    // workbench. Nothing else sets this variable.
    let panic_for_test = std::env::var_os("LOADFIT_TEST_PANIC").is_some();
    // Drawn when something may have changed: a key, a resize, a result from a worker, a
    // load's gauge. A search's workers get both cores to themselves between frames.
    let mut draw = true;
    loop {
        if draw {
            terminal.draw(|frame| {
                app.page = frame.area().height.saturating_sub(6).max(1) as usize;
                view::draw(frame, app, theme);
            })?;
        }
        if panic_for_test {
            panic!("LOADFIT_TEST_PANIC is set: a panic to test that the terminal is restored");
        }
        if stop.load(Ordering::Relaxed) || app.quit {
            return Ok(());
        }
        // A worker cannot wake the input poll: while a search runs, look for its hits often
        // enough that they are on screen a few milliseconds after they are found.
        let wait = if app.searching.is_some() {
            SEARCH_POLL
        } else if app.pending.is_some() || app.loading.is_some() {
            Duration::from_millis(30)
        } else {
            Duration::from_millis(200)
        };
        if !event::poll(wait)? {
            draw = app.poll_background() || app.loading.is_some();
            continue;
        }
        match event::read()? {
            // Only presses act: terminals that report releases and repeats would act twice.
            Event::Key(key) if key.kind == KeyEventKind::Press => {
                if let Some(action) = action_for_key(app, key) {
                    app.update(action);
                }
            }
            Event::Resize(_, _) => terminal.autoresize()?,
            _ => {}
        }
        app.poll_background();
        draw = true;
    }
}

/// How often the event loop looks for a running search's hits.
const SEARCH_POLL: Duration = Duration::from_millis(4);

#[cfg(test)]
mod tests;
