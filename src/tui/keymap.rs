//! One key map: every binding with its action and help text. The help overlay is generated
//! from this table, so it always matches what the keys do.

use super::action::Action;
use crossterm::event::{KeyCode, KeyEvent, KeyModifiers};

/// Where a binding applies.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Scope {
    /// Everywhere (outside text entry).
    Global,
    /// The Stage panel.
    Stage,
    /// The Parts panel.
    Parts,
}

impl Scope {
    /// A heading for the help overlay.
    #[must_use]
    pub fn heading(self) -> &'static str {
        match self {
            Scope::Global => "everywhere",
            Scope::Stage => "Stage panel",
            Scope::Parts => "Parts panel",
        }
    }
}

/// One binding.
#[derive(Debug, Clone, Copy)]
pub struct Binding {
    /// The key.
    pub code: KeyCode,
    /// Modifiers that must be held (exactly).
    pub modifiers: KeyModifiers,
    /// What it does.
    pub action: Action,
    /// Where.
    pub scope: Scope,
    /// The key as the help shows it.
    pub label: &'static str,
    /// What it does, in words.
    pub help: &'static str,
}

const NONE: KeyModifiers = KeyModifiers::NONE;

const fn bind(
    code: KeyCode,
    modifiers: KeyModifiers,
    action: Action,
    scope: Scope,
    label: &'static str,
    help: &'static str,
) -> Binding {
    Binding {
        code,
        modifiers,
        action,
        scope,
        label,
        help,
    }
}

/// The key map. A label of "" hides a binding from the help (an alias shown on its twin).
pub const BINDINGS: &[Binding] = &[
    bind(
        KeyCode::Tab,
        NONE,
        Action::NextPanel,
        Scope::Global,
        "Tab",
        "next panel",
    ),
    bind(
        KeyCode::BackTab,
        KeyModifiers::SHIFT,
        Action::PrevPanel,
        Scope::Global,
        "Shift-Tab",
        "previous panel",
    ),
    bind(
        KeyCode::BackTab,
        NONE,
        Action::PrevPanel,
        Scope::Global,
        "",
        "",
    ),
    bind(
        KeyCode::Up,
        NONE,
        Action::Up,
        Scope::Global,
        "↑ k",
        "move up",
    ),
    bind(KeyCode::Char('k'), NONE, Action::Up, Scope::Global, "", ""),
    bind(
        KeyCode::Down,
        NONE,
        Action::Down,
        Scope::Global,
        "↓ j",
        "move down",
    ),
    bind(
        KeyCode::Char('j'),
        NONE,
        Action::Down,
        Scope::Global,
        "",
        "",
    ),
    bind(
        KeyCode::Left,
        NONE,
        Action::Left,
        Scope::Global,
        "← h",
        "previous role; previous choice (Stage); time cursor (Trace)",
    ),
    bind(
        KeyCode::Char('h'),
        NONE,
        Action::Left,
        Scope::Global,
        "",
        "",
    ),
    bind(
        KeyCode::Right,
        NONE,
        Action::Right,
        Scope::Global,
        "→ l",
        "next role; next choice (Stage); time cursor (Trace)",
    ),
    bind(
        KeyCode::Char('l'),
        NONE,
        Action::Right,
        Scope::Global,
        "",
        "",
    ),
    bind(
        KeyCode::Char('g'),
        NONE,
        Action::Top,
        Scope::Global,
        "g",
        "to the top",
    ),
    bind(KeyCode::Home, NONE, Action::Top, Scope::Global, "", ""),
    bind(
        KeyCode::Char('G'),
        KeyModifiers::SHIFT,
        Action::Bottom,
        Scope::Global,
        "G",
        "to the bottom",
    ),
    bind(
        KeyCode::Char('G'),
        NONE,
        Action::Bottom,
        Scope::Global,
        "",
        "",
    ),
    bind(KeyCode::End, NONE, Action::Bottom, Scope::Global, "", ""),
    bind(
        KeyCode::PageUp,
        NONE,
        Action::PageUp,
        Scope::Global,
        "PgUp",
        "a page up",
    ),
    bind(
        KeyCode::PageDown,
        NONE,
        Action::PageDown,
        Scope::Global,
        "PgDn",
        "a page down",
    ),
    bind(
        KeyCode::Enter,
        NONE,
        Action::Enter,
        Scope::Global,
        "Enter",
        "edit a field; open a part's detail",
    ),
    bind(
        KeyCode::Esc,
        NONE,
        Action::Back,
        Scope::Global,
        "Esc",
        "back; clear the search",
    ),
    bind(
        KeyCode::Char(' '),
        NONE,
        Action::ToggleShortlist,
        Scope::Global,
        "Space",
        "keep or drop the part for its role",
    ),
    bind(
        KeyCode::Char('c'),
        NONE,
        Action::ToggleWorstCase,
        Scope::Global,
        "c",
        "needs at nominal or at their worst corners",
    ),
    bind(
        KeyCode::Char('r'),
        NONE,
        Action::FindSubstitutes,
        Scope::Global,
        "r",
        "find substitutes for the selected part (Swap panel)",
    ),
    bind(
        KeyCode::Char('/'),
        NONE,
        Action::StartSearch,
        Scope::Parts,
        "/",
        "search part, maker, package, notes, tags",
    ),
    bind(
        KeyCode::Char('s'),
        NONE,
        Action::CycleSort,
        Scope::Parts,
        "s",
        "change the sort key",
    ),
    bind(
        KeyCode::Char('f'),
        NONE,
        Action::ToggleOnlyFits,
        Scope::Parts,
        "f",
        "show only fits, or all",
    ),
    bind(
        KeyCode::Char('x'),
        NONE,
        Action::StartExport,
        Scope::Global,
        "x",
        "export the shortlist (.csv .md .json), or the trace shown (.svg .csv .json)",
    ),
    bind(
        KeyCode::Char('w'),
        NONE,
        Action::StartSave,
        Scope::Global,
        "w",
        "save the stage file",
    ),
    bind(
        KeyCode::Char('1'),
        NONE,
        Action::Panel(0),
        Scope::Global,
        "1-8",
        "go to Stage, Needs, Parts, Detail, Shortlist, Swap, Trace, Library",
    ),
    bind(
        KeyCode::Char('2'),
        NONE,
        Action::Panel(1),
        Scope::Global,
        "",
        "",
    ),
    bind(
        KeyCode::Char('3'),
        NONE,
        Action::Panel(2),
        Scope::Global,
        "",
        "",
    ),
    bind(
        KeyCode::Char('4'),
        NONE,
        Action::Panel(3),
        Scope::Global,
        "",
        "",
    ),
    bind(
        KeyCode::Char('5'),
        NONE,
        Action::Panel(4),
        Scope::Global,
        "",
        "",
    ),
    bind(
        KeyCode::Char('6'),
        NONE,
        Action::Panel(5),
        Scope::Global,
        "",
        "",
    ),
    bind(
        KeyCode::Char('7'),
        NONE,
        Action::Panel(6),
        Scope::Global,
        "",
        "",
    ),
    bind(
        KeyCode::Char('8'),
        NONE,
        Action::Panel(7),
        Scope::Global,
        "",
        "",
    ),
    bind(
        KeyCode::Char('?'),
        NONE,
        Action::ToggleHelp,
        Scope::Global,
        "?",
        "this help",
    ),
    bind(
        KeyCode::Char('?'),
        KeyModifiers::SHIFT,
        Action::ToggleHelp,
        Scope::Global,
        "",
        "",
    ),
    bind(
        KeyCode::Char('q'),
        NONE,
        Action::Quit,
        Scope::Global,
        "q",
        "quit (asks when the stage has unsaved edits)",
    ),
    bind(
        KeyCode::Char('c'),
        KeyModifiers::CONTROL,
        Action::Quit,
        Scope::Global,
        "Ctrl-C",
        "quit",
    ),
];

/// The action bound to a key in a panel's scope, outside text entry.
#[must_use]
pub fn action_for(key: KeyEvent, scope: Scope) -> Option<Action> {
    BINDINGS
        .iter()
        .find(|b| {
            b.code == key.code
                && b.modifiers == key.modifiers
                && (b.scope == Scope::Global || b.scope == scope)
        })
        .map(|b| b.action)
}

/// The help text: a heading per scope, one line a visible binding.
#[must_use]
pub fn help_lines() -> Vec<(String, String)> {
    let mut lines = Vec::new();
    for scope in [Scope::Global, Scope::Stage, Scope::Parts] {
        let bindings: Vec<&Binding> = BINDINGS
            .iter()
            .filter(|b| b.scope == scope && !b.label.is_empty())
            .collect();
        if bindings.is_empty() {
            continue;
        }
        lines.push((scope.heading().to_string(), String::new()));
        for b in bindings {
            lines.push((b.label.to_string(), b.help.to_string()));
        }
    }
    lines.push((String::new(), String::new()));
    lines.push((
        "typing".to_string(),
        "in a field, the search or a prompt: Enter accepts, Esc cancels, Backspace deletes"
            .to_string(),
    ));
    lines
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn no_key_is_bound_twice_in_one_scope() {
        for (i, a) in BINDINGS.iter().enumerate() {
            for b in &BINDINGS[i + 1..] {
                let clash = a.code == b.code
                    && a.modifiers == b.modifiers
                    && (a.scope == b.scope || a.scope == Scope::Global || b.scope == Scope::Global);
                assert!(!clash, "{:?} is bound twice", a.code);
            }
        }
    }

    #[test]
    fn help_comes_from_the_bindings() {
        let help = help_lines();
        for b in BINDINGS.iter().filter(|b| !b.label.is_empty()) {
            assert!(help.iter().any(|(k, h)| k == b.label && h == b.help));
        }
    }
}
