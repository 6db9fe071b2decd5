//! UI preferences: kept in eframe's storage between sessions, never in the
//! project file.

use std::path::PathBuf;

use serde::{Deserialize, Serialize};

use super::dialogs::DialogChoice;
use super::theme::ColourBy;

/// UI preferences, kept in eframe storage between sessions.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct Prefs {
    /// Recently opened or saved files, newest first.
    pub recent: Vec<PathBuf>,
    /// Labels on the canvas.
    pub show_labels: bool,
    /// Metric of the run colours.
    pub colour_by: ColourBy,
    /// Riser strip open.
    pub show_elevation: bool,
    /// Bottom drawer open.
    pub drawer_open: bool,
    /// Height of the open drawer, points.
    pub drawer_height: f32,
    /// Which file dialog to use.
    pub file_dialog: DialogChoice,
    /// The folder of the last file chosen in a dialog.
    pub last_dir: Option<PathBuf>,
    /// Which column of a room-load schedule holds what (the last import's).
    pub schedule_columns: flowrise_core::project::schedule::ColumnMap,
}

impl Default for Prefs {
    fn default() -> Self {
        Self {
            recent: Vec::new(),
            show_labels: true,
            colour_by: ColourBy::default(),
            show_elevation: true,
            drawer_open: true,
            drawer_height: DEFAULT_DRAWER_HEIGHT,
            file_dialog: DialogChoice::default(),
            last_dir: None,
            schedule_columns: flowrise_core::project::schedule::ColumnMap::default(),
        }
    }
}

/// Height of the drawer when first opened, points.
pub const DEFAULT_DRAWER_HEIGHT: f32 = 240.0;

/// Storage key of [`Prefs`].
pub const PREFS_KEY: &str = "flowrise-prefs";
