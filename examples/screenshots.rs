//! Renders every workbench panel from the demo data into `screenshots/` as `.txt` (the
//! characters) and `.svg` (characters with their colours), for the README.
//! Run: `cargo run --example screenshots`.

use loadfit::library::Library;
use loadfit::tui::action::Action;
use loadfit::tui::app::{App, Panel};
use loadfit::tui::fields::StageDoc;
use loadfit::tui::view::{self, Theme};
use ratatui::Terminal;
use ratatui::backend::TestBackend;
use ratatui::buffer::Buffer;
use ratatui::style::{Color, Modifier};
use std::fmt::Write;

const WIDTH: u16 = 120;
const HEIGHT: u16 = 32;

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let doc = StageDoc::parse(loadfit::tui::DEMO_STAGE, "mains-pump-relay.toml")?;
    let mut app = App::new(Library::demo(), Vec::new(), doc, None);
    // Keep a pick and an alternate for two roles so the Shortlist panel has something to show.
    app.update(Action::Panel(2));
    app.update(Action::ToggleShortlist);
    app.update(Action::Down);
    app.update(Action::ToggleShortlist);
    app.update(Action::Right);
    app.update(Action::ToggleShortlist);
    app.update(Action::Left);
    app.update(Action::Up);
    app.message = None;
    std::fs::create_dir_all("screenshots")?;
    for (i, panel) in Panel::ALL.into_iter().enumerate() {
        app.update(Action::Panel(i));
        app.message = None;
        shoot(&app, &panel.title().to_lowercase())?;
    }
    // The Swap panel for the E-B-C transistor whose C-B-E twin is the pin-order trap.
    app.update(Action::Panel(2));
    if let Some(at) = app.visible().iter().position(|&c| {
        let part = app.fit.roles[app.role].candidates[c].part;
        &*app.library.parts[part].number == "BRN2210E"
    }) {
        app.parts_cursor = at;
    }
    app.update(Action::FindSubstitutes);
    if let Some(swap) = &app.swap
        && let Some(twin) = swap
            .candidates
            .iter()
            .position(|c| &*app.library.parts[c.part].number == "BRN2210C")
    {
        app.swap_cursor = twin;
    }
    app.message = None;
    shoot(&app, "swap")?;
    app.update(Action::Panel(1));
    app.needs_cursor = app
        .needs
        .needs
        .iter()
        .position(|n| n.id == "relay.impulse")
        .unwrap_or(0);
    shoot(&app, "needs-working")?;
    app.update(Action::ToggleHelp);
    shoot(&app, "help")?;
    println!("wrote screenshots/*.txt and *.svg");
    Ok(())
}

fn shoot(app: &App, name: &str) -> Result<(), Box<dyn std::error::Error>> {
    let mut terminal = Terminal::new(TestBackend::new(WIDTH, HEIGHT))?;
    terminal.draw(|frame| view::draw(frame, app, Theme { color: true }))?;
    let buffer = terminal.backend().buffer().clone();
    std::fs::write(format!("screenshots/{name}.txt"), text(&buffer))?;
    std::fs::write(format!("screenshots/{name}.svg"), svg(&buffer))?;
    Ok(())
}

fn text(buffer: &Buffer) -> String {
    let mut out = String::new();
    for y in 0..buffer.area.height {
        let line: String = (0..buffer.area.width)
            .map(|x| buffer[(x, y)].symbol().to_string())
            .collect();
        out.push_str(line.trim_end());
        out.push('\n');
    }
    out
}

fn rgb(color: Color, fallback: &str) -> String {
    match color {
        Color::Reset => fallback.to_string(),
        Color::Black => "#1d1f21".into(),
        Color::Red => "#cc6666".into(),
        Color::Green => "#8fbf5f".into(),
        Color::Yellow => "#e0b850".into(),
        Color::Blue => "#6f9fd8".into(),
        Color::Magenta => "#c397d8".into(),
        Color::Cyan => "#70c0c0".into(),
        Color::Gray | Color::White => "#d0d0d0".into(),
        Color::DarkGray => "#7a7a7a".into(),
        Color::Rgb(r, g, b) => format!("#{r:02x}{g:02x}{b:02x}"),
        _ => fallback.to_string(),
    }
}

fn escape(s: &str) -> String {
    s.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
}

fn svg(buffer: &Buffer) -> String {
    let (cw, ch) = (8.4, 17.0);
    let (w, h) = (
        f64::from(buffer.area.width) * cw,
        f64::from(buffer.area.height) * ch,
    );
    let mut out = format!(
        "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"{w}\" height=\"{h}\" viewBox=\"0 0 {w} {h}\">\n<rect width=\"100%\" height=\"100%\" fill=\"#1d1f21\"/>\n<g font-family=\"DejaVu Sans Mono, Menlo, Consolas, monospace\" font-size=\"14\" xml:space=\"preserve\">\n"
    );
    for y in 0..buffer.area.height {
        for x in 0..buffer.area.width {
            let cell = &buffer[(x, y)];
            let reversed = cell.modifier.contains(Modifier::REVERSED);
            let (mut fg, mut bg) = (rgb(cell.fg, "#d0d0d0"), rgb(cell.bg, "#1d1f21"));
            if reversed {
                std::mem::swap(&mut fg, &mut bg);
            }
            let (px, py) = (f64::from(x) * cw, f64::from(y) * ch);
            if bg != "#1d1f21" {
                let _ = writeln!(
                    out,
                    "<rect x=\"{px:.1}\" y=\"{py:.1}\" width=\"{cw}\" height=\"{ch}\" fill=\"{bg}\"/>"
                );
            }
            let symbol = cell.symbol();
            if symbol.trim().is_empty() {
                continue;
            }
            let weight = if cell.modifier.contains(Modifier::BOLD) {
                " font-weight=\"bold\""
            } else {
                ""
            };
            let under = if cell.modifier.contains(Modifier::UNDERLINED) {
                " text-decoration=\"underline\""
            } else {
                ""
            };
            let _ = writeln!(
                out,
                "<text x=\"{px:.1}\" y=\"{:.1}\" fill=\"{fg}\"{weight}{under}>{}</text>",
                py + ch * 0.78,
                escape(symbol)
            );
        }
    }
    out.push_str("</g>\n</svg>\n");
    out
}
