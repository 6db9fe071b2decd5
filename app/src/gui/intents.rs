//! What the panels hand back each frame, and the small state types they
//! share: the selection, queued edits, status-line messages.
//!
//! Panels never change the document while drawing: they push into the
//! frame's [`Intents`], which the app applies after the frame is drawn.

use std::path::PathBuf;

use flowrise_core::design::ItemRef;
use flowrise_core::project::{Edit, NodeId, RunId};

use super::actions::Action;

/// What is selected.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Selection {
    /// Nothing: the inspector shows the design settings.
    #[default]
    None,
    /// A node.
    Node(NodeId),
    /// A run.
    Run(RunId),
}

/// Select what an edit creates.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SelectNew {
    /// Keep the selection.
    Nothing,
    /// Select the last node created.
    Node,
    /// Select the first run created.
    Run,
}

/// An edit waiting to be applied after the frame is drawn.
#[derive(Debug, Clone)]
pub struct QueuedEdit {
    /// The edit.
    pub edit: Edit,
    /// Inspector field that asked for it (a refusal is shown beside it).
    pub field: Option<String>,
    /// Part of a drag: no undo step of its own.
    pub during_drag: bool,
    /// What to select afterwards.
    pub select_new: SelectNew,
}

/// A status-line message.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Status {
    /// Text.
    pub text: String,
    /// Shown in red.
    pub error: bool,
    /// A tool's hint or complaint: cleared when the tool changes.
    pub hint: bool,
}

impl Status {
    /// A note.
    #[must_use]
    pub fn note(text: impl Into<String>) -> Self {
        Self { text: text.into(), error: false, hint: false }
    }
    /// An error.
    #[must_use]
    pub fn error(text: impl Into<String>) -> Self {
        Self { text: text.into(), error: true, hint: false }
    }
}

/// What the panels ask for during one frame; applied after drawing.
#[derive(Debug, Default)]
pub struct Intents {
    /// Edits in order.
    pub edits: Vec<QueuedEdit>,
    /// Actions in order.
    pub actions: Vec<Action>,
    /// New selection.
    pub select: Option<Selection>,
    /// Centre the canvas on this item.
    pub centre_on: Option<ItemRef>,
    /// A node drag started: take one undo snapshot now.
    pub drag_begin: bool,
    /// The node drag ended.
    pub drag_end: bool,
    /// Status message.
    pub status: Option<Status>,
    /// Open this file (recent files menu).
    pub open_path: Option<PathBuf>,
    /// Show this level on the canvas (riser view, level tabs).
    pub show_level: Option<flowrise_core::project::LevelId>,
    /// Show this drawer tab (the findings count in the top strip).
    pub drawer_tab: Option<super::drawer::Tab>,
}

impl Intents {
    fn push(&mut self, edit: Edit, select_new: SelectNew) {
        self.edits.push(QueuedEdit { edit, field: None, during_drag: false, select_new });
    }
    /// Queue an edit.
    pub fn edit(&mut self, edit: Edit) {
        self.push(edit, SelectNew::Nothing);
    }
    /// Queue an edit and select the node it creates.
    pub fn edit_select(&mut self, edit: Edit) {
        self.push(edit, SelectNew::Node);
    }
    /// Queue an edit and select the run it creates.
    pub fn edit_select_run(&mut self, edit: Edit) {
        self.push(edit, SelectNew::Run);
    }
    /// Queue an edit from an inspector field.
    pub fn edit_field(&mut self, edit: Edit, field: &str) {
        self.edits.push(QueuedEdit {
            edit,
            field: Some(field.to_owned()),
            during_drag: false,
            select_new: SelectNew::Nothing,
        });
    }
    /// Queue one step of a drag (no undo step of its own).
    pub fn edit_during_drag(&mut self, edit: Edit) {
        self.edits.push(QueuedEdit { edit, field: None, during_drag: true, select_new: SelectNew::Nothing });
    }
    /// Show a tool's complaint in the status line (cleared with the tool).
    pub fn status_error(&mut self, text: impl Into<String>) {
        self.status = Some(Status { text: text.into(), error: true, hint: true });
    }
    /// Show a tool's hint in the status line (cleared with the tool).
    pub fn status_note(&mut self, text: impl Into<String>) {
        self.status = Some(Status { text: text.into(), error: false, hint: true });
    }
}
