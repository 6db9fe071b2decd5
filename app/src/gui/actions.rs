//! User actions: one enum with label, shortcut and tooltip, used by the
//! menus, the keyboard handler and the tests alike.

use egui::{Key, KeyboardShortcut, Modifiers};

use super::canvas::Tool;
use super::many::ManyAction;

/// Something the user can ask for from a menu, a button or a key.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Action {
    /// Start a new, empty project.
    New,
    /// Start a project from a building outline (floors, rooms per floor).
    NewFromOutline,
    /// Open a project file.
    Open,
    /// Save to the current file (asks for one when there is none).
    Save,
    /// Save to a new file.
    SaveAs,
    /// Undo the last change.
    Undo,
    /// Redo the last undone change.
    Redo,
    /// Pick a canvas tool.
    Tool(Tool),
    /// Show or hide the size/flow/presetting labels.
    ToggleLabels,
    /// Fit the view to the level's drawing.
    FitView,
    /// Show or hide the riser elevation strip.
    ToggleElevation,
    /// Open the design settings.
    Settings,
    /// Open the About window with the cautions.
    About,
    /// Export the parts list as CSV.
    ExportParts,
    /// Export the design report as HTML.
    ExportReport,
    /// Close the window (asks about unsaved changes).
    Quit,
    /// Look again for unsaved work of sessions that did not close cleanly.
    RecoverWork,
    /// Switch the preference for flowrise's own file dialog.
    InWindowDialog,
    /// Open the plan underlay panel of the shown level.
    PlanUnderlay,
    /// Select, copy, paste, delete or repeat many items; the room-load schedule.
    Many(ManyAction),
}

impl Action {
    /// Actions that have a keyboard shortcut, in the order they are checked.
    pub const WITH_KEYS: [Self; 20] = [
        Self::New,
        Self::Quit,
        Self::Open,
        Self::SaveAs,
        Self::Save,
        Self::Redo,
        Self::Undo,
        Self::Tool(Tool::Select),
        Self::Tool(Tool::Run),
        Self::Tool(Tool::Emitter),
        Self::Tool(Tool::Header),
        Self::Tool(Tool::Source),
        Self::Tool(Tool::Riser),
        Self::Tool(Tool::Split),
        Self::Tool(Tool::Erase),
        Self::ToggleLabels,
        Self::FitView,
        Self::Many(ManyAction::SelectAll),
        Self::Many(ManyAction::Copy),
        Self::Many(ManyAction::Paste),
    ];

    /// Words on the button or menu entry (also the accessible label).
    #[must_use]
    pub fn label(self) -> &'static str {
        match self {
            Self::New => "New",
            Self::NewFromOutline => "New from building outline…",
            Self::Open => "Open…",
            Self::Save => "Save",
            Self::SaveAs => "Save as…",
            Self::Undo => "Undo",
            Self::Redo => "Redo",
            Self::Tool(t) => t.word(),
            Self::ToggleLabels => "Labels",
            Self::FitView => "Fit view",
            Self::ToggleElevation => "Riser view",
            Self::Settings => "Design settings",
            Self::About => "About and cautions",
            Self::ExportParts => "Export parts list (CSV)…",
            Self::ExportReport => "Export design report (HTML)…",
            Self::Quit => "Quit",
            Self::RecoverWork => "Recover unsaved work…",
            Self::InWindowDialog => "Use flowrise's own file dialog",
            Self::PlanUnderlay => "Plan underlay…",
            Self::Many(m) => m.label(),
        }
    }

    /// Keyboard shortcut, if any.
    #[must_use]
    pub fn shortcut(self) -> Option<KeyboardShortcut> {
        let cmd = |key| Some(KeyboardShortcut::new(Modifiers::COMMAND, key));
        let plain = |key| Some(KeyboardShortcut::new(Modifiers::NONE, key));
        match self {
            Self::New => cmd(Key::N),
            Self::Open => cmd(Key::O),
            Self::Save => cmd(Key::S),
            Self::SaveAs => Some(KeyboardShortcut::new(Modifiers::COMMAND | Modifiers::SHIFT, Key::S)),
            Self::Undo => cmd(Key::Z),
            Self::Quit => cmd(Key::Q),
            Self::Redo => Some(KeyboardShortcut::new(Modifiers::COMMAND | Modifiers::SHIFT, Key::Z)),
            Self::Tool(t) => plain(t.key()),
            Self::ToggleLabels => plain(Key::L),
            Self::FitView => plain(Key::F),
            Self::Many(m) => m.shortcut(),
            Self::NewFromOutline
            | Self::ToggleElevation
            | Self::Settings
            | Self::About
            | Self::ExportParts
            | Self::ExportReport
            | Self::RecoverWork
            | Self::InWindowDialog
            | Self::PlanUnderlay => None,
        }
    }

    /// A second shortcut for the same action (Ctrl+Y redoes as well as
    /// Ctrl+Shift+Z).
    #[must_use]
    pub fn second_shortcut(self) -> Option<KeyboardShortcut> {
        match self {
            Self::Redo => Some(KeyboardShortcut::new(Modifiers::COMMAND, Key::Y)),
            _ => None,
        }
    }

    /// True when the shortcut is a bare letter (ignored while typing).
    #[must_use]
    pub fn is_plain_key(self) -> bool {
        self.shortcut().is_some_and(|s| s.modifiers.is_none())
    }

    /// Tooltip: what the action does.
    #[must_use]
    pub fn tooltip(self) -> &'static str {
        match self {
            Self::New => "Start a new project with one level",
            Self::NewFromOutline => {
                "Start a project with a riser, floor branches and emitters from the number of floors and rooms"
            }
            Self::Open => "Open a flowrise project (.ron)",
            Self::Save => "Save the project to its file",
            Self::SaveAs => "Save the project to a new file",
            Self::Undo => "Undo the last change (a whole drag is one step)",
            Self::Redo => "Redo the change you undid",
            Self::Tool(t) => t.tooltip(),
            Self::ToggleLabels => "Show pipe sizes and flows on runs, load and presetting at emitters",
            Self::FitView => "Fit the drawing of this level into the canvas",
            Self::ToggleElevation => "Show the riser across all levels beside the plan",
            Self::Settings => "Temperatures, velocity and gradient limits, pipe series, pump margin",
            Self::About => "What flowrise is for, and the cautions that go with its results",
            Self::ExportParts => "Write the installer's parts list of the solved design as a CSV file",
            Self::ExportReport => {
                "Write the design report (drawings, tables, pump chart, parts, sources, cautions) as one HTML file"
            }
            Self::Quit => "Close flowrise (asks first when there are unsaved changes)",
            Self::RecoverWork => "Look again for unsaved work left by a flowrise that did not close cleanly",
            Self::InWindowDialog => {
                "Choose files in a dialog drawn by flowrise instead of the desktop's (used anyway when the desktop has none)"
            }
            Self::PlanUnderlay => {
                "Trace over a floor plan: put a PNG, JPEG, PDF or DXF drawing under this level, set its scale by two points, move, fade or lock it"
            }
            Self::Many(m) => m.tooltip(),
        }
    }

    /// Label with the shortcut, for menus ("Save  Ctrl+S").
    #[must_use]
    pub fn menu_text(self, ctx: &egui::Context) -> String {
        match self.shortcut() {
            Some(s) => format!("{}    {}", self.label(), ctx.format_shortcut(&s)),
            None => self.label().to_owned(),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn shortcuts_are_unique() {
        let keys: Vec<_> =
            Action::WITH_KEYS.iter().flat_map(|a| [a.shortcut(), a.second_shortcut()]).flatten().collect();
        for (i, a) in keys.iter().enumerate() {
            assert!(!keys[i + 1..].contains(a), "{a:?} is used twice");
        }
    }
}
