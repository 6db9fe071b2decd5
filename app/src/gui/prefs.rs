//! UI preferences: kept in eframe's storage between sessions, never in the
//! project file.

use std::path::PathBuf;

use serde::{Deserialize, Serialize};

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
}

impl Default for Prefs {
    fn default() -> Self {
        Self {
            recent: Vec::new(),
            show_labels: true,
            colour_by: ColourBy::default(),
            show_elevation: true,
            drawer_open: true,
        }
    }
}

/// Storage key of [`Prefs`].
pub const PREFS_KEY: &str = "flowrise-prefs";
