//! Drawing the workbench. Views only read the [`App`]; the layout is split once per frame into
//! named areas. Every verdict is shown with a word or glyph as well as colour, and colour is
//! left out entirely when `NO_COLOR` is set.

use super::app::{App, Panel, Prompt};
use super::fields::{FIELDS, FieldKind};
use super::keymap::help_lines;
use crate::fit::report::{check_line, reason};
use crate::fit::{CheckVerdict, Verdict};
use crate::library::{Kind, Part};
use crate::text::clean;
use crate::units::{Dim, format_eng};
use ratatui::Frame;
use ratatui::layout::{Constraint, Layout, Rect};
use ratatui::style::{Color, Modifier, Style};
use ratatui::symbols::Marker;
use ratatui::text::{Line, Span};
use ratatui::widgets::{
    Axis, Block, Borders, Cell, Chart, Clear, Dataset, GraphType, Paragraph, Row, Table, Wrap,
};

/// The smallest terminal the layout is drawn in.
pub const MIN_WIDTH: u16 = 80;
/// The smallest terminal height.
pub const MIN_HEIGHT: u16 = 24;

/// Colours, or none.
#[derive(Debug, Clone, Copy)]
pub struct Theme {
    /// Whether colour is used (false under `NO_COLOR`).
    pub color: bool,
}

impl Theme {
    /// Colour unless the `NO_COLOR` environment variable is set and not empty.
    #[must_use]
    pub fn from_env() -> Theme {
        Theme {
            color: std::env::var_os("NO_COLOR").is_none_or(|v| v.is_empty()),
        }
    }

    fn fg(self, color: Color) -> Style {
        if self.color {
            Style::new().fg(color)
        } else {
            Style::new()
        }
    }

    fn verdict(self, verdict: Verdict) -> Style {
        self.fg(match verdict {
            Verdict::Fits => Color::Green,
            Verdict::Near => Color::Yellow,
            Verdict::Unknown => Color::Cyan,
            Verdict::Short => Color::Red,
        })
    }

    fn check(self, verdict: CheckVerdict) -> Style {
        self.fg(match verdict {
            CheckVerdict::Pass => Color::Green,
            CheckVerdict::Short => Color::Red,
            CheckVerdict::Unknown => Color::Cyan,
        })
    }

    fn dim(self) -> Style {
        if self.color {
            Style::new().fg(Color::DarkGray)
        } else {
            Style::new().add_modifier(Modifier::DIM)
        }
    }

    fn selected(self) -> Style {
        Style::new().add_modifier(Modifier::REVERSED)
    }

    fn focus(self) -> Style {
        self.fg(Color::Yellow).add_modifier(Modifier::BOLD)
    }
}

/// The named areas of one frame.
struct Areas {
    tabs: Rect,
    left: Rect,
    right: Rect,
    status: Rect,
    bottom: Rect,
}

fn split(area: Rect, panel: Panel, worst_case: bool) -> Areas {
    let [tabs, body, status, bottom] = Layout::vertical([
        Constraint::Length(1),
        Constraint::Min(0),
        Constraint::Length(1),
        Constraint::Length(1),
    ])
    .areas(area);
    let ratio = match panel {
        Panel::Stage => [Constraint::Percentage(50), Constraint::Percentage(50)],
        Panel::Needs if worst_case => [Constraint::Percentage(66), Constraint::Percentage(34)],
        Panel::Needs => [Constraint::Percentage(45), Constraint::Percentage(55)],
        Panel::Parts | Panel::Detail => [Constraint::Percentage(66), Constraint::Percentage(34)],
        Panel::Shortlist => [Constraint::Percentage(55), Constraint::Percentage(45)],
        Panel::Swap => [Constraint::Percentage(55), Constraint::Percentage(45)],
        Panel::Trace => [Constraint::Percentage(68), Constraint::Percentage(32)],
        Panel::Library => [Constraint::Percentage(100), Constraint::Percentage(0)],
    };
    let [left, right] = Layout::horizontal(ratio).areas(body);
    Areas {
        tabs,
        left,
        right,
        status,
        bottom,
    }
}

/// Draws the whole workbench.
pub fn draw(frame: &mut Frame<'_>, app: &App, theme: Theme) {
    let area = frame.area();
    if area.width < MIN_WIDTH || area.height < MIN_HEIGHT {
        let text = vec![
            Line::from("terminal too small"),
            Line::from(format!(
                "loadfit needs {MIN_WIDTH}×{MIN_HEIGHT}; this one is {}×{}",
                area.width, area.height
            )),
            Line::from("enlarge the window, or press q to quit"),
        ];
        frame.render_widget(Paragraph::new(text).wrap(Wrap { trim: true }), area);
        return;
    }
    let areas = split(area, app.panel, app.worst_case);
    tabs(frame, app, theme, areas.tabs);
    match app.panel {
        Panel::Stage => {
            stage(frame, app, theme, areas.left, true);
            needs_list(frame, app, theme, areas.right, false);
        }
        Panel::Needs => {
            needs_list(frame, app, theme, areas.left, true);
            working(frame, app, theme, areas.right);
        }
        Panel::Parts => {
            parts(frame, app, theme, areas.left, true);
            detail(frame, app, theme, areas.right, false);
        }
        Panel::Detail => {
            parts(frame, app, theme, areas.left, false);
            detail(frame, app, theme, areas.right, true);
        }
        Panel::Shortlist => {
            shortlist(frame, app, theme, areas.left);
            detail(frame, app, theme, areas.right, false);
        }
        Panel::Swap => {
            swap_list(frame, app, theme, areas.left);
            swap_detail(frame, app, theme, areas.right);
        }
        Panel::Trace => {
            trace_charts(frame, app, theme, areas.left);
            trace_readout(frame, app, theme, areas.right);
        }
        Panel::Library => library(frame, app, theme, areas.left),
    }
    status(frame, app, theme, areas.status);
    bottom(frame, app, theme, areas.bottom);
    if app.help {
        help(frame, theme, area);
    }
}

fn block(title: String, focused: bool, theme: Theme) -> Block<'static> {
    let block = Block::default().borders(Borders::ALL).title(title);
    if focused {
        block.border_style(theme.focus()).title_style(theme.focus())
    } else {
        block
    }
}

fn tabs(frame: &mut Frame<'_>, app: &App, theme: Theme, area: Rect) {
    let mut spans = vec![
        Span::styled(" loadfit ", Style::new().add_modifier(Modifier::BOLD)),
        Span::raw("│"),
    ];
    for (i, panel) in Panel::ALL.into_iter().enumerate() {
        let label = format!(" {} {} ", i + 1, panel.title());
        if panel == app.panel {
            spans.push(Span::styled(format!("[{}]", label.trim()), theme.focus()));
        } else {
            spans.push(Span::raw(label));
        }
    }
    frame.render_widget(Paragraph::new(Line::from(spans)), area);
}

/// Keeps `cursor` on screen with stateless paging: the window starts at a multiple of `height`.
fn window(cursor: usize, len: usize, height: usize) -> std::ops::Range<usize> {
    if height == 0 {
        return 0..0;
    }
    let start = (cursor / height) * height;
    start..(start + height).min(len)
}

fn stage(frame: &mut Frame<'_>, app: &App, theme: Theme, area: Rect, focused: bool) {
    let title = format!(
        "Stage: {}{}",
        clean(&app.doc.stage.title),
        if app.dirty { " (edited)" } else { "" }
    );
    let block = block(title, focused, theme);
    let inner = block.inner(area);
    frame.render_widget(block, area);
    let height = inner.height as usize;
    let mut lines = Vec::new();
    for i in window(app.stage_cursor, FIELDS.len(), height) {
        let field = &FIELDS[i];
        let editing = app.editor.as_ref().filter(|e| e.field == i);
        let stored = app.doc.get(field);
        let value = match (editing, &stored) {
            (Some(e), _) => Span::styled(format!("{}▏", e.buffer), theme.focus()),
            (None, Some(v)) => Span::raw(clean(v).into_owned()),
            (None, None) => Span::styled(format!("({})", field.default), theme.dim()),
        };
        let marker = match field.kind {
            FieldKind::Choice(_) | FieldKind::Bool => "‹›",
            _ => "  ",
        };
        let mut spans = vec![
            Span::raw(format!("{:<27}", field.path())),
            Span::styled(marker, theme.dim()),
            Span::raw(" "),
            value,
        ];
        if let Some(problem) = editing.and_then(|e| e.problem.as_ref()) {
            spans.push(Span::styled(
                format!("  ✗ {}", clean(problem)),
                theme.fg(Color::Red),
            ));
        } else if let Some((at, error)) = &app.field_error
            && *at == i
            && editing.is_none()
        {
            spans.push(Span::styled(
                format!("  ✗ {}", clean(error)),
                theme.fg(Color::Red),
            ));
        }
        let mut line = Line::from(spans);
        if i == app.stage_cursor && focused {
            line = line.style(theme.selected());
        }
        lines.push(line);
    }
    frame.render_widget(Paragraph::new(lines), inner);
}

fn needs_list(frame: &mut Frame<'_>, app: &App, theme: Theme, area: Rect, focused: bool) {
    let errors = app
        .needs
        .problems
        .iter()
        .filter(|p| p.severity == crate::needs::Severity::Error)
        .count();
    let title = format!(
        "Needs: {} computed{}{}",
        app.needs.needs.len(),
        if errors > 0 {
            format!(", {errors} error(s)")
        } else {
            String::new()
        },
        if app.worst_case {
            " · WORST CASE (c: nominal)"
        } else {
            " · nominal (c: worst case)"
        }
    );
    let block = block(title, focused, theme);
    let inner = block.inner(area);
    frame.render_widget(block, area);
    let height = inner.height.saturating_sub(u16::from(app.worst_case)) as usize;
    let mut lines = Vec::new();
    if app.worst_case {
        lines.push(Line::from(Span::styled(
            format!(
                "{:<28}{:<3}{:<11}{:<11}corner",
                "need", "", "worst", "nominal"
            ),
            Style::new().add_modifier(Modifier::BOLD),
        )));
    }
    for i in window(app.needs_cursor, app.needs.needs.len(), height) {
        let need = &app.needs.needs[i];
        let flagged = app
            .needs
            .problems
            .iter()
            .any(|p| p.need == Some(need.id) && p.severity == crate::needs::Severity::Error);
        let value = if flagged {
            Span::styled(format!("{} ✗", need.shown()), theme.fg(Color::Red))
        } else {
            Span::raw(need.shown())
        };
        let mut spans = vec![
            Span::raw(format!("{:<28}", need.id)),
            Span::styled(format!("{:<3}", need.bound.symbol()), theme.dim()),
        ];
        if app.worst_case {
            spans.push(Span::raw(format!("{:<11}", need.shown())));
            spans.push(Span::styled(
                format!("{:<11}", need.nominal_shown()),
                theme.dim(),
            ));
            spans.push(Span::raw(
                need.corner
                    .as_ref()
                    .map_or(String::new(), |c| c.to_string()),
            ));
        } else {
            spans.push(value);
        }
        let mut line = Line::from(spans);
        if focused && i == app.needs_cursor {
            line = line.style(theme.selected());
        }
        lines.push(line);
    }
    frame.render_widget(Paragraph::new(lines), inner);
}

fn working(frame: &mut Frame<'_>, app: &App, theme: Theme, area: Rect) {
    let block = block("Working".to_string(), false, theme);
    let mut lines = Vec::new();
    if let Some(need) = app.needs.needs.get(app.needs_cursor) {
        lines.push(Line::from(Span::styled(
            format!("{} {} {}", need.id, need.bound.symbol(), need.shown()),
            Style::new().add_modifier(Modifier::BOLD),
        )));
        if !need.formula.is_empty() {
            lines.push(Line::from(format!("= {}", clean(&need.formula))));
        }
        lines.push(Line::from(""));
        for w in &need.working {
            lines.push(Line::from(format!("  {}", clean(w))));
        }
        lines.push(Line::from(""));
        lines.push(Line::from(Span::styled(
            format!("source: {}", clean(&need.source)),
            theme.dim(),
        )));
        for p in app
            .needs
            .problems
            .iter()
            .filter(|p| p.need == Some(need.id))
        {
            lines.push(Line::from(""));
            lines.push(Line::from(Span::styled(
                format!("{}: {}", p.severity.name(), clean(&p.message)),
                severity_style(theme, p.severity),
            )));
        }
    }
    let general: Vec<_> = app
        .needs
        .problems
        .iter()
        .filter(|p| p.need.is_none())
        .collect();
    if !general.is_empty() {
        lines.push(Line::from(""));
        for p in general {
            lines.push(Line::from(Span::styled(
                format!("{}: {}", p.severity.name(), clean(&p.message)),
                severity_style(theme, p.severity),
            )));
        }
    }
    frame.render_widget(
        Paragraph::new(lines)
            .block(block)
            .wrap(Wrap { trim: false }),
        area,
    );
}

fn severity_style(theme: Theme, severity: crate::needs::Severity) -> Style {
    match severity {
        crate::needs::Severity::Error => theme.fg(Color::Red),
        crate::needs::Severity::Warning => theme.fg(Color::Yellow),
        crate::needs::Severity::Caution => theme.fg(Color::Magenta).add_modifier(Modifier::BOLD),
    }
}

/// The three key ratings of a part, by kind, for the Parts table.
fn key_ratings(part: &Part) -> [String; 3] {
    let v = |r: crate::library::Rating, dim: Dim| {
        r.get().map_or("—".to_string(), |x| format_eng(x, dim))
    };
    if let Some(b) = part.bjt() {
        return [
            v(b.vceo, Dim::Volt),
            v(b.ic_max, Dim::Amp),
            b.hfe_min
                .get()
                .map_or("—".to_string(), |h| format!("hFE {h:.0}")),
        ];
    }
    if let Some(m) = part.mosfet() {
        let rds = match (m.rds_on.get(), m.rds_on_vgs.get()) {
            (Some(r), Some(g)) => {
                format!("{}@{}", format_eng(r, Dim::Ohm), format_eng(g, Dim::Volt))
            }
            (Some(r), None) => format_eng(r, Dim::Ohm),
            _ => "—".to_string(),
        };
        return [v(m.vds, Dim::Volt), v(m.id_max, Dim::Amp), rds];
    }
    if let Some(d) = part.diode() {
        if part.kind == Kind::Zener {
            return [v(d.vz, Dim::Volt), v(d.pz, Dim::Watt), v(d.vf, Dim::Volt)];
        }
        return [
            v(d.vrrm, Dim::Volt),
            v(d.if_avg, Dim::Amp),
            v(d.vf, Dim::Volt),
        ];
    }
    if let Some(r) = part.relay() {
        return [
            v(r.coil_v, Dim::Volt),
            v(r.coil_r, Dim::Ohm),
            v(r.dielectric_v, Dim::Volt),
        ];
    }
    if let Some(p) = part.photocell() {
        return [
            v(p.r_10lux, Dim::Ohm),
            p.gamma
                .get()
                .map_or("—".to_string(), |g| format!("γ {g:.2}")),
            v(p.v_max, Dim::Volt),
        ];
    }
    ["—".to_string(), "—".to_string(), "—".to_string()]
}

fn parts(frame: &mut Frame<'_>, app: &App, theme: Theme, area: Rect, focused: bool) {
    let Some(role) = app.fit.roles.get(app.role) else {
        frame.render_widget(
            Paragraph::new("no roles: the stage has no parts to choose").block(block(
                "Parts".into(),
                focused,
                theme,
            )),
            area,
        );
        return;
    };
    let roles: Vec<String> = app
        .fit
        .roles
        .iter()
        .enumerate()
        .map(|(i, r)| {
            if i == app.role {
                format!("[{}]", r.role.name())
            } else {
                r.role.name().to_string()
            }
        })
        .collect();
    let filter = match (&app.search, app.only_fits) {
        (Some(s), _) => format!(" /{}{}", clean(&s.query), if s.typing { "▏" } else { "" }),
        (None, true) => " fits only".to_string(),
        (None, false) => String::new(),
    };
    let title = format!(
        "Parts: {}  {} of {} · {} fit · sort {}{}",
        roles.join(" "),
        app.visible().len(),
        role.candidates.len(),
        app.fits_in(app.role),
        app.sort.name(),
        filter
    );
    let block = block(title, focused, theme);
    let inner = block.inner(area);
    frame.render_widget(block, area);
    let height = inner.height.saturating_sub(1) as usize;
    let range = window(app.parts_cursor, app.visible().len(), height);
    // Only the visible rows are built: a frame costs the same at a million parts.
    let rows: Vec<Row> = app.visible()[range.clone()]
        .iter()
        .enumerate()
        .map(|(offset, &ci)| {
            let c = &role.candidates[ci];
            let part = &app.library.parts[c.part];
            let number = clean(&part.number).into_owned();
            let letters = app.matched_letters(&number);
            let number_line: Line = Line::from(
                number
                    .chars()
                    .enumerate()
                    .map(|(i, ch)| {
                        if letters.contains(&i) {
                            Span::styled(
                                ch.to_string(),
                                Style::new().add_modifier(Modifier::UNDERLINED | Modifier::BOLD),
                            )
                        } else {
                            Span::raw(ch.to_string())
                        }
                    })
                    .collect::<Vec<_>>(),
            );
            let kept = if app.shortlist.contains(role.role, c.part) {
                "●"
            } else {
                " "
            };
            let [a, b, k] = key_ratings(part);
            let mut row = Row::new(vec![
                Cell::from(kept),
                Cell::from(Span::styled(
                    format!("{} {}", c.verdict.glyph(), c.verdict.name()),
                    theme.verdict(c.verdict),
                )),
                Cell::from(number_line),
                Cell::from(clean(app.library.text(part.package)).into_owned()),
                Cell::from(a),
                Cell::from(b),
                Cell::from(k),
                Cell::from(
                    c.headroom
                        .filter(|h| h.is_finite())
                        .map_or("—".to_string(), |h| format!("{h:.2}×")),
                ),
                Cell::from(
                    part.price
                        .get()
                        .map_or("—".to_string(), |p| format!("{p:.2}")),
                ),
                Cell::from(part.stock.map_or("—".to_string(), |s| s.to_string())),
            ]);
            if focused && range.start + offset == app.parts_cursor {
                row = row.style(theme.selected());
            }
            row
        })
        .collect();
    let header = Row::new(vec![
        "", "verdict", "part", "package", "V", "I", "key", "margin", "price", "stock",
    ])
    .style(Style::new().add_modifier(Modifier::BOLD));
    let widths = [
        Constraint::Length(1),
        Constraint::Length(9),
        Constraint::Min(9),
        Constraint::Length(7),
        Constraint::Length(7),
        Constraint::Length(7),
        Constraint::Length(10),
        Constraint::Length(6),
        Constraint::Length(5),
        Constraint::Length(6),
    ];
    frame.render_widget(
        Table::new(rows, widths).header(header).column_spacing(1),
        inner,
    );
}

fn detail(frame: &mut Frame<'_>, app: &App, theme: Theme, area: Rect, focused: bool) {
    let candidate = if app.panel == Panel::Shortlist {
        app.shortlist_rows()
            .get(app.shortlist_cursor)
            .and_then(|&(role, part)| {
                let c = app
                    .fit
                    .role(role)?
                    .candidates
                    .iter()
                    .find(|c| c.part == part)?;
                Some((role, c))
            })
    } else {
        app.fit
            .roles
            .get(app.role)
            .map(|r| r.role)
            .zip(app.selected())
    };
    // A large library's ranking keeps checks only for its first places: write them for the
    // part shown.
    let candidate = candidate.map(|(role, c)| {
        crate::fit::with_checks(&app.doc.stage, &app.needs, &app.library, role, c)
    });
    let Some(c) = candidate.as_ref() else {
        frame.render_widget(
            Paragraph::new("no part selected").block(block("Detail".into(), focused, theme)),
            area,
        );
        return;
    };
    let part = &app.library.parts[c.part];
    let lib = &app.library;
    let mut lines = vec![
        Line::from(vec![
            Span::styled(
                clean(&part.number).into_owned(),
                Style::new().add_modifier(Modifier::BOLD),
            ),
            Span::raw("  "),
            Span::styled(
                format!("{} {}", c.verdict.glyph(), c.verdict.name()),
                theme.verdict(c.verdict),
            ),
            Span::raw(format!("  rank {} · score {:.1}", c.rank, c.score)),
        ]),
        Line::from(format!(
            "{} · {} · {} pins {} · {}",
            part.kind.name(),
            clean(lib.text(part.maker)),
            clean(lib.text(part.package)),
            clean(lib.text(part.pinout)),
            if part.status.name().is_empty() {
                "status not given"
            } else {
                part.status.name()
            }
        )),
        Line::from(format!(
            "price {} · stock {} · from {}:{}",
            part.price
                .get()
                .map_or("—".to_string(), |p| format!("{p:.2}")),
            part.stock.map_or("—".to_string(), |s| s.to_string()),
            clean(lib.file_name(part.source)),
            part.source.line
        )),
        Line::from(Span::styled(
            format!("limited by: {}", reason(c)),
            theme.dim(),
        )),
        Line::from(""),
    ];
    for check in &c.checks {
        lines.push(Line::from(Span::styled(
            clean(&check_line(check)).into_owned(),
            theme.check(check.verdict),
        )));
    }
    if !part.notes.is_empty() {
        lines.push(Line::from(""));
        lines.push(Line::from(format!("notes: {}", clean(&part.notes))));
    }
    if !part.tags.is_empty() {
        lines.push(Line::from(format!("tags: {}", clean(&part.tags))));
    }
    for (column, text) in part.extra.iter() {
        let name = lib
            .extra_columns
            .get(*column as usize)
            .map_or("", |s| s.as_str());
        lines.push(Line::from(format!("{}: {}", clean(name), clean(text))));
    }
    for p in app
        .needs
        .problems
        .iter()
        .filter(|p| p.severity == crate::needs::Severity::Caution)
    {
        lines.push(Line::from(""));
        lines.push(Line::from(Span::styled(
            format!("caution: {}", clean(&p.message)),
            severity_style(theme, p.severity),
        )));
    }
    let scroll = if focused { app.detail_scroll as u16 } else { 0 };
    frame.render_widget(
        Paragraph::new(lines)
            .block(block("Detail".to_string(), focused, theme))
            .wrap(Wrap { trim: false })
            .scroll((scroll, 0)),
        area,
    );
}

fn shortlist(frame: &mut Frame<'_>, app: &App, theme: Theme, area: Rect) {
    let rows_data = app.shortlist_rows();
    let block = block(format!("Shortlist: {} parts", rows_data.len()), true, theme);
    let inner = block.inner(area);
    frame.render_widget(block, area);
    if rows_data.is_empty() {
        frame.render_widget(
            Paragraph::new("nothing kept yet: press Space on a part in the Parts panel")
                .style(theme.dim()),
            inner,
        );
        return;
    }
    let mut lines = Vec::new();
    let mut last_role = None;
    let mut position = 0;
    for (i, (role, part)) in rows_data.iter().enumerate() {
        if last_role != Some(*role) {
            position = 0;
            last_role = Some(*role);
        }
        let p = &app.library.parts[*part];
        let verdict = app
            .fit
            .role(*role)
            .and_then(|r| r.candidates.iter().find(|c| c.part == *part))
            .map(|c| c.verdict);
        let mut line = Line::from(vec![
            Span::raw(format!("{:<8}", role.name())),
            Span::raw(format!(
                "{:<13}",
                if position == 0 {
                    "pick".to_string()
                } else {
                    format!("alternate {position}")
                }
            )),
            Span::raw(format!("{:<16}", clean(&p.number))),
            verdict.map_or(Span::raw("—"), |v| {
                Span::styled(format!("{} {:<8}", v.glyph(), v.name()), theme.verdict(v))
            }),
            Span::raw(format!(
                " {:>6} {:>7}",
                p.price.get().map_or("—".to_string(), |x| format!("{x:.2}")),
                p.stock.map_or("—".to_string(), |s| s.to_string())
            )),
        ]);
        if i == app.shortlist_cursor {
            line = line.style(theme.selected());
        }
        lines.push(line);
        position += 1;
    }
    frame.render_widget(Paragraph::new(lines), inner);
}

fn library(frame: &mut Frame<'_>, app: &App, theme: Theme, area: Rect) {
    let lib = &app.library;
    let block = block(
        format!("Library: {}", clean(&crate::library::lint::summary(lib))),
        true,
        theme,
    );
    let inner = block.inner(area);
    frame.render_widget(block, area);
    let all: Vec<(bool, &crate::library::Diagnostic)> = lib
        .rejected
        .iter()
        .map(|d| (true, d))
        .chain(lib.warnings.iter().map(|d| (false, d)))
        .collect();
    if all.is_empty() {
        frame.render_widget(
            Paragraph::new("every row loaded; no warnings").style(theme.dim()),
            inner,
        );
        return;
    }
    let mut lines = Vec::new();
    for i in window(app.library_cursor, all.len(), inner.height as usize) {
        let (rejected, d) = all[i];
        let mut line = Line::from(vec![
            Span::styled(
                if rejected {
                    "✗ rejected "
                } else {
                    "! warning  "
                },
                theme.fg(if rejected { Color::Red } else { Color::Yellow }),
            ),
            Span::raw(
                clean(&format!(
                    "{}:{}: {}{}",
                    lib.files.get(d.file as usize).map_or("", |s| s.as_str()),
                    d.line,
                    if d.column.is_empty() {
                        String::new()
                    } else {
                        format!("{}: ", d.column)
                    },
                    d.message
                ))
                .into_owned(),
            ),
        ]);
        if i == app.library_cursor {
            line = line.style(theme.selected());
        }
        lines.push(line);
    }
    frame.render_widget(Paragraph::new(lines), inner);
}

fn status(frame: &mut Frame<'_>, app: &App, theme: Theme, area: Rect) {
    let lib = &app.library;
    let files = if lib.files.len() == 1 {
        clean(&lib.files[0]).into_owned()
    } else {
        format!("{} files", lib.files.len())
    };
    let stage = app.stage_path.as_ref().map_or_else(
        || "demo stage (built in)".to_string(),
        |p| clean(&p.display().to_string()).into_owned(),
    );
    let text = format!(
        " library {files}: {} parts, {} rejected │ stage {stage}{}{} │ kept {}",
        lib.parts.len(),
        lib.rows_rejected,
        if app.dirty { " [unsaved edits]" } else { "" },
        if app.pending.is_some() {
            " │ recomputing…"
        } else if app.searching.is_some() {
            " │ searching…"
        } else {
            ""
        },
        app.shortlist.len()
    );
    let area = match &app.loading {
        Some(loading) => {
            let [text_area, gauge_area] =
                Layout::horizontal([Constraint::Percentage(45), Constraint::Percentage(55)])
                    .areas(area);
            let gauge = ratatui::widgets::LineGauge::default()
                .ratio(loading.progress.fraction())
                .label(loading.describe())
                .style(theme.selected());
            frame.render_widget(gauge, gauge_area);
            text_area
        }
        None => area,
    };
    frame.render_widget(Paragraph::new(text).style(theme.selected()), area);
}

fn bottom(frame: &mut Frame<'_>, app: &App, theme: Theme, area: Rect) {
    let line = match &app.prompt {
        Some(Prompt::ExportPath(b)) => Line::from(format!(
            "export the shortlist to (.csv .md .json): {}▏  Enter writes, Esc cancels",
            clean(b)
        )),
        Some(Prompt::SavePath(b)) => Line::from(format!(
            "save the stage to: {}▏  Enter writes, Esc cancels",
            clean(b)
        )),
        Some(Prompt::ConfirmExport(p)) | Some(Prompt::ConfirmSave(p)) => Line::from(Span::styled(
            format!("{} exists: overwrite? y/n", clean(&p.display().to_string())),
            theme.focus(),
        )),
        Some(Prompt::ConfirmQuit) => Line::from(Span::styled(
            "the stage has unsaved edits: quit anyway? y/n (w saves)",
            theme.focus(),
        )),
        Some(Prompt::RestoreAutosave(p)) => Line::from(Span::styled(
            format!(
                "unsaved edits of this stage were kept in {}: restore them? y/n",
                clean(&p.display().to_string())
            ),
            theme.focus(),
        )),
        None => match &app.message {
            Some(m) => Line::from(clean(m).into_owned()),
            None if app.editor.is_some() => Line::from(
                "typing: Enter applies, Esc cancels; units as you like (12 V, 4k7, 100 mH)",
            ),
            None => Line::from(Span::styled(
                "? help · q quit · Tab panels · ↑↓ move · ←→ role/choice · Enter edit · Space keep · / search · r swap · c worst case · x export · w save",
                theme.dim(),
            )),
        },
    };
    frame.render_widget(Paragraph::new(line), area);
}

fn help(frame: &mut Frame<'_>, theme: Theme, area: Rect) {
    let lines: Vec<Line> = help_lines()
        .into_iter()
        .map(|(key, text)| {
            if text.is_empty() {
                Line::from(Span::styled(key, Style::new().add_modifier(Modifier::BOLD)))
            } else {
                Line::from(vec![
                    Span::styled(format!("  {key:<11}"), theme.focus()),
                    Span::raw(text),
                ])
            }
        })
        .collect();
    let height = (lines.len() as u16 + 2).min(area.height);
    let width = area.width.saturating_sub(4).clamp(20, 104);
    let popup = Rect {
        x: area.x + (area.width - width) / 2,
        y: area.y + (area.height - height) / 2,
        width,
        height,
    };
    frame.render_widget(Clear, popup);
    frame.render_widget(
        Paragraph::new(lines).block(block("Help (? or Esc closes)".to_string(), true, theme)),
        popup,
    );
}

fn class_style(theme: Theme, class: crate::swap::Class) -> Style {
    theme.fg(match class {
        crate::swap::Class::DropIn => Color::Green,
        crate::swap::Class::Rework => Color::Yellow,
        crate::swap::Class::Unsuitable => Color::Red,
    })
}

fn swap_list(frame: &mut Frame<'_>, app: &App, theme: Theme, area: Rect) {
    let Some(swap) = &app.swap else {
        let block = block("Swap".to_string(), true, theme);
        frame.render_widget(
            Paragraph::new("no part chosen: press r on a part (Parts, Detail or Shortlist) to find its substitutes")
                .style(theme.dim())
                .wrap(Wrap { trim: true })
                .block(block),
            area,
        );
        return;
    };
    let lib = &app.library;
    let original = &lib.parts[swap.original];
    let bar = match (&swap.stage, swap.role) {
        (Some(_), Some(role)) => format!("held to the stage's {} needs", role.name()),
        _ => "held to the original's ratings".to_string(),
    };
    let title = format!(
        "Swap: {} ({} {} {}) · {} drop-in, {} rework · {bar}",
        clean(&original.number),
        original.kind.name(),
        clean(lib.text(original.package)),
        clean(lib.text(original.pinout)),
        swap.count(crate::swap::Class::DropIn),
        swap.count(crate::swap::Class::Rework),
    );
    let block = block(title, true, theme);
    let inner = block.inner(area);
    frame.render_widget(block, area);
    let height = inner.height as usize;
    let mut lines = Vec::new();
    for i in window(app.swap_cursor, swap.candidates.len(), height) {
        let c = &swap.candidates[i];
        let part = &lib.parts[c.part];
        let kept = swap
            .role
            .or_else(|| crate::swap::role_for(&app.doc.stage, part.kind).ok())
            .is_some_and(|role| app.shortlist.contains(role, c.part));
        let mut line = Line::from(vec![
            Span::raw(if kept { "● " } else { "  " }),
            Span::styled(
                format!("{} {:<11}", c.class.glyph(), c.class.name()),
                class_style(theme, c.class),
            ),
            Span::raw(format!("{:<14}", clean(&part.number))),
            Span::raw(format!("{:<8}", clean(lib.text(part.package)))),
            Span::raw(format!("{:<5}", clean(lib.text(part.pinout)))),
            Span::styled(format!(" {:.2}", c.score), theme.dim()),
            Span::raw(format!(
                "  {}",
                c.pin_changes
                    .first()
                    .map(|s| clean(s).into_owned())
                    .or_else(|| c.failing().next().map(|k| format!(
                        "{} {}",
                        k.need,
                        k.verdict.name()
                    )))
                    .unwrap_or_default()
            )),
        ]);
        if i == app.swap_cursor {
            line = line.style(theme.selected());
        }
        lines.push(line);
    }
    frame.render_widget(Paragraph::new(lines), inner);
}

/// The two pin orders one above the other, with the pins that move marked.
fn pin_diagram(original: &str, candidate: &str, names: (&str, &str)) -> Vec<Line<'static>> {
    let a = crate::swap::pins::pins(original);
    let b = crate::swap::pins::pins(candidate);
    let n = a.len().max(b.len());
    if n == 0 {
        return vec![Line::from("pin order not given: check the datasheet")];
    }
    let row = |label: &str, cells: Vec<String>| {
        Line::from(format!(
            "{label:<14}{}",
            cells.iter().map(|c| format!("{c:^5}")).collect::<String>()
        ))
    };
    let get = |v: &Vec<&str>, i: usize| v.get(i).map_or("?".to_string(), |s| clean(s).into_owned());
    vec![
        row("pin", (1..=n).map(|i| i.to_string()).collect()),
        row(names.0, (0..n).map(|i| get(&a, i)).collect()),
        row(names.1, (0..n).map(|i| get(&b, i)).collect()),
        row(
            "",
            (0..n)
                .map(|i| {
                    if get(&a, i).eq_ignore_ascii_case(&get(&b, i)) {
                        "·".to_string()
                    } else {
                        "↕".to_string()
                    }
                })
                .collect(),
        ),
    ]
}

fn swap_detail(frame: &mut Frame<'_>, app: &App, theme: Theme, area: Rect) {
    let block = block("Substitute".to_string(), false, theme);
    let Some(swap) = &app.swap else {
        frame.render_widget(block, area);
        return;
    };
    let Some(c) = swap.candidates.get(app.swap_cursor) else {
        frame.render_widget(
            Paragraph::new("no candidate of a compatible kind").block(block),
            area,
        );
        return;
    };
    let lib = &app.library;
    let original = &lib.parts[swap.original];
    let part = &lib.parts[c.part];
    let mut lines = vec![
        Line::from(vec![
            Span::styled(
                clean(&part.number).into_owned(),
                Style::new().add_modifier(Modifier::BOLD),
            ),
            Span::raw("  "),
            Span::styled(
                format!("{} {}", c.class.glyph(), c.class.name()),
                class_style(theme, c.class),
            ),
            Span::raw(format!("  for {}", clean(&original.number))),
        ]),
        Line::from(""),
    ];
    lines.extend(pin_diagram(
        lib.text(original.pinout),
        lib.text(part.pinout),
        (&clean(&original.number), &clean(&part.number)),
    ));
    for change in &c.pin_changes {
        lines.push(Line::from(Span::styled(
            clean(change).into_owned(),
            theme.fg(Color::Yellow),
        )));
    }
    lines.push(Line::from(""));
    for check in &c.checks {
        lines.push(Line::from(Span::styled(
            clean(&check_line(check)).into_owned(),
            theme.check(check.verdict),
        )));
    }
    for note in c.notes.iter().chain(&swap.notes) {
        lines.push(Line::from(format!("note: {}", clean(note))));
    }
    frame.render_widget(
        Paragraph::new(lines)
            .block(block)
            .wrap(Wrap { trim: false }),
        area,
    );
}

/// The traces that can be drawn: the stage's own, then the candidate's.
fn traces(app: &App) -> (Option<&crate::trace::Trace>, Option<&crate::trace::Trace>) {
    fn ok(t: &Option<Result<crate::trace::Trace, String>>) -> Option<&crate::trace::Trace> {
        t.as_ref().and_then(|r| r.as_ref().ok())
    }
    (ok(&app.trace_stage), ok(&app.trace_part))
}

fn axis_labels(low: f64, high: f64, dim: Dim) -> Vec<Line<'static>> {
    vec![
        Line::from(format_eng(low, dim)),
        Line::from(format_eng((low + high) / 2.0, dim)),
        Line::from(format_eng(high, dim)),
    ]
}

/// One line or set of points of a trace chart; a series without a name stays out of the legend.
fn chart_series<'a>(
    name: Option<String>,
    marker: Marker,
    kind: GraphType,
    style: Style,
    data: &'a [(f64, f64)],
) -> Dataset<'a> {
    let set = Dataset::default()
        .marker(marker)
        .graph_type(kind)
        .style(style)
        .data(data);
    match name {
        Some(name) => set.name(name),
        None => set,
    }
}

fn trace_charts(frame: &mut Frame<'_>, app: &App, theme: Theme, area: Rect) {
    let (stage, part) = traces(app);
    let Some(base) = part.or(stage) else {
        let why = app
            .trace_part
            .as_ref()
            .and_then(|r| r.as_ref().err())
            .or_else(|| app.trace_stage.as_ref().and_then(|r| r.as_ref().err()))
            .cloned()
            .unwrap_or_else(|| "nothing to trace".to_string());
        frame.render_widget(
            Paragraph::new(clean(&why).into_owned())
                .wrap(Wrap { trim: true })
                .block(block("Trace".to_string(), true, theme)),
            area,
        );
        return;
    };
    let [top, bottom] =
        Layout::vertical([Constraint::Percentage(55), Constraint::Percentage(45)]).areas(area);
    let width = usize::from(top.width.max(10));
    let t_end = base.points.last().map_or(1.0, |p| p[0]).max(1e-12);
    let cursor_t = app.trace_cursor * t_end;
    let series = |t: Option<&crate::trace::Trace>, column: usize| -> Vec<(f64, f64)> {
        t.map_or_else(Vec::new, |t| {
            crate::trace::decimate(&t.points, 2 * width)
                .iter()
                .map(|p| (p[0], p[column]))
                .collect()
        })
    };
    let v_stage = series(stage, 1);
    let v_part = series(part, 1);
    let i_stage = series(stage, 2);
    let i_part = series(part, 2);
    let rating = part.and_then(|t| t.rating);
    let v_max = v_stage
        .iter()
        .chain(&v_part)
        .map(|p| p.1)
        .fold(rating.map_or(0.0, |r| r.volts), f64::max)
        .max(1e-3)
        * 1.1;
    let v_min = v_stage
        .iter()
        .chain(&v_part)
        .map(|p| p.1)
        .fold(0.0, f64::min);
    let i_max = i_stage
        .iter()
        .chain(&i_part)
        .map(|p| p.1)
        .fold(0.0, f64::max)
        .max(1e-9)
        * 1.1;
    let i_min = i_stage
        .iter()
        .chain(&i_part)
        .map(|p| p.1)
        .fold(0.0, f64::min);
    let rating_line: Vec<(f64, f64)> =
        rating.map_or_else(Vec::new, |r| vec![(0.0, r.volts), (t_end, r.volts)]);
    let cursor_v = vec![(cursor_t, v_min), (cursor_t, v_max)];
    let cursor_i = vec![(cursor_t, i_min), (cursor_t, i_max)];
    let peak: Vec<(f64, f64)> = base.peak_marker().into_iter().collect();
    let release: Vec<(f64, f64)> = base.release_marker().into_iter().collect();
    let part_name = base.part.clone().unwrap_or_else(|| "stage".to_string());
    let mut v_sets = vec![chart_series(
        Some("stage (assumed parts)".into()),
        Marker::Braille,
        GraphType::Line,
        theme.dim(),
        &v_stage,
    )];
    if !v_part.is_empty() {
        v_sets.push(chart_series(
            Some(clean(&part_name).into_owned()),
            Marker::Braille,
            GraphType::Line,
            theme.fg(Color::Cyan),
            &v_part,
        ));
    }
    if let Some(r) = rating {
        v_sets.push(chart_series(
            Some(format!("{} {}", r.name, format_eng(r.volts, Dim::Volt))),
            Marker::Dot,
            GraphType::Line,
            theme.fg(Color::Red),
            &rating_line,
        ));
    }
    v_sets.push(chart_series(
        Some("peak ▲".into()),
        Marker::Block,
        GraphType::Scatter,
        theme.fg(Color::Yellow),
        &peak,
    ));
    v_sets.push(chart_series(
        None,
        Marker::Dot,
        GraphType::Line,
        theme.dim(),
        &cursor_v,
    ));
    let v_chart = Chart::new(v_sets)
        .block(block(
            format!(
                "Trace: switch voltage · {} · ←→ time, ↑↓ candidate",
                clean(&part_name)
            ),
            true,
            theme,
        ))
        .x_axis(
            Axis::default()
                .bounds([0.0, t_end])
                .labels(axis_labels(0.0, t_end, Dim::Second)),
        )
        .y_axis(Axis::default().bounds([v_min, v_max]).labels(axis_labels(
            v_min,
            v_max,
            Dim::Volt,
        )));
    frame.render_widget(v_chart, top);
    let mut i_sets = vec![chart_series(
        Some("stage".into()),
        Marker::Braille,
        GraphType::Line,
        theme.dim(),
        &i_stage,
    )];
    if !i_part.is_empty() {
        i_sets.push(chart_series(
            Some(clean(&part_name).into_owned()),
            Marker::Braille,
            GraphType::Line,
            theme.fg(Color::Cyan),
            &i_part,
        ));
    }
    i_sets.push(chart_series(
        Some("release ●".into()),
        Marker::Block,
        GraphType::Scatter,
        theme.fg(Color::Yellow),
        &release,
    ));
    i_sets.push(chart_series(
        None,
        Marker::Dot,
        GraphType::Line,
        theme.dim(),
        &cursor_i,
    ));
    let i_chart = Chart::new(i_sets)
        .block(block("load current".to_string(), false, theme))
        .x_axis(
            Axis::default()
                .bounds([0.0, t_end])
                .labels(axis_labels(0.0, t_end, Dim::Second)),
        )
        .y_axis(
            Axis::default()
                .bounds([i_min, i_max])
                .labels(axis_labels(i_min, i_max, Dim::Amp)),
        );
    frame.render_widget(i_chart, bottom);
}

/// The point of a trace nearest to time `t`.
fn at_time(trace: &crate::trace::Trace, t: f64) -> Option<[f64; 3]> {
    let i = trace.points.partition_point(|p| p[0] < t);
    trace
        .points
        .get(i.min(trace.points.len().saturating_sub(1)))
        .copied()
}

fn trace_readout(frame: &mut Frame<'_>, app: &App, theme: Theme, area: Rect) {
    let (stage, part) = traces(app);
    let mut lines = Vec::new();
    let opt = |v: Option<f64>, dim: Dim| v.map_or("—".to_string(), |v| format_eng(v, dim));
    let t_end = part
        .or(stage)
        .and_then(|t| t.points.last())
        .map_or(0.0, |p| p[0]);
    let t = app.trace_cursor * t_end;
    lines.push(Line::from(Span::styled(
        format!("cursor t = {}", format_eng(t, Dim::Second)),
        Style::new().add_modifier(Modifier::BOLD),
    )));
    for (label, trace) in [("stage", stage), ("part", part)] {
        let Some(trace) = trace else { continue };
        let name = trace
            .part
            .clone()
            .unwrap_or_else(|| "stage (assumed parts)".to_string());
        lines.push(Line::from(""));
        lines.push(Line::from(Span::styled(
            format!("{label}: {}", clean(&name)),
            Style::new().add_modifier(Modifier::BOLD),
        )));
        if let Some(p) = at_time(trace, t) {
            lines.push(Line::from(format!(
                "  at cursor {} · {}",
                format_eng(p[1], Dim::Volt),
                format_eng(p[2], Dim::Amp)
            )));
        }
        lines.push(Line::from(format!(
            "  peak {}",
            opt(trace.peak_voltage, Dim::Volt)
        )));
        if let Some(r) = trace.rating {
            let over = trace.peak_voltage.is_some_and(|p| p > r.volts);
            lines.push(Line::from(Span::styled(
                format!(
                    "  {} {}{}",
                    r.name,
                    format_eng(r.volts, Dim::Volt),
                    if over {
                        " ✗ the spike crosses the rating"
                    } else {
                        " ✓ above the spike"
                    }
                ),
                theme.fg(if over { Color::Red } else { Color::Green }),
            )));
        }
        lines.push(Line::from(format!(
            "  energy {}",
            opt(trace.clamp_energy, Dim::Joule)
        )));
        lines.push(Line::from(format!(
            "  release {}",
            opt(trace.release_time, Dim::Second)
        )));
        if trace.rise_time.is_some() {
            lines.push(Line::from(format!(
                "  rise {} · settle {}",
                opt(trace.rise_time, Dim::Second),
                opt(trace.settle_time, Dim::Second)
            )));
        }
        for p in &trace.problems {
            lines.push(Line::from(Span::styled(
                format!("  {}: {}", p.severity.name(), clean(&p.message)),
                severity_style(theme, p.severity),
            )));
        }
    }
    if let Some(Err(e)) = &app.trace_part {
        lines.push(Line::from(""));
        lines.push(Line::from(Span::styled(
            format!("part: {}", clean(e)),
            theme.dim(),
        )));
    }
    frame.render_widget(
        Paragraph::new(lines)
            .block(block("Readout".to_string(), false, theme))
            .wrap(Wrap { trim: false }),
        area,
    );
}
