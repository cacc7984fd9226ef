//! What a key press asks for. Keys map to actions in [`super::keymap`]; [`super::app::App::update`]
//! carries them out.

/// One thing the user asked for.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Action {
    /// Focus the next panel.
    NextPanel,
    /// Focus the previous panel.
    PrevPanel,
    /// Focus panel number n (0-based, in tab order).
    Panel(usize),
    /// Move the cursor up.
    Up,
    /// Move the cursor down.
    Down,
    /// Previous role, or previous choice of a Stage field.
    Left,
    /// Next role, or next choice of a Stage field.
    Right,
    /// To the first row.
    Top,
    /// To the last row.
    Bottom,
    /// A page up.
    PageUp,
    /// A page down.
    PageDown,
    /// Edit the field, open the part, accept the prompt.
    Enter,
    /// Leave the help, the search, a prompt.
    Back,
    /// Keep or drop the selected part.
    ToggleShortlist,
    /// Find substitutes for the selected part (the Swap panel).
    FindSubstitutes,
    /// Switch the needs between nominal and worst case.
    ToggleWorstCase,
    /// Start a fuzzy search of the parts.
    StartSearch,
    /// Next sort key.
    CycleSort,
    /// Show only fitting parts, or all.
    ToggleOnlyFits,
    /// Ask where to export the shortlist.
    StartExport,
    /// Ask where to save the stage.
    StartSave,
    /// Show or hide the help.
    ToggleHelp,
    /// Quit (asking first when the stage has unsaved edits).
    Quit,
    /// Text entry: a character typed.
    Type(char),
    /// Text entry: delete the character before the cursor.
    Backspace,
}
