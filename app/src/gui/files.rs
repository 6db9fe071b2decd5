//! The native window and the unsaved-changes prompt: starting eframe
//! (with the file-dialog detection and the logger that catches a failed
//! desktop dialog, see [`super::dialogs`]) and the question asked before
//! the document is replaced.

use std::path::PathBuf;

use flowrise_core::project::Project;

use super::FlowriseApp;
use super::dialogs::{self, DIALOG_ENV};
use super::prefs::{PREFS_KEY, Prefs};
use super::recovery::{self, RecoveryConfig};
use super::theme;

/// The embedded default demo project.
pub const DEFAULT_DEMO: &str = include_str!("../../../demo-projects/apartment-block-heat-pump.ron");

/// The project the window opens with.
#[derive(Debug)]
pub struct StartProject {
    /// The document.
    pub project: Project,
    /// Its file, if any.
    pub path: Option<PathBuf>,
}

impl StartProject {
    /// The embedded demo (not tied to a file: Save asks where).
    ///
    /// # Errors
    /// The load error text if the embedded file does not load.
    pub fn default_demo() -> Result<Self, String> {
        Project::from_ron(DEFAULT_DEMO).map(|project| Self { project, path: None }).map_err(|e| e.to_string())
    }
}

/// Why the window did not open.
#[derive(Debug)]
pub enum WindowError {
    /// No X11 or Wayland display.
    NoDisplay,
    /// The windowing system or OpenGL refused.
    Platform(String),
}

fn has_display() -> bool {
    ["DISPLAY", "WAYLAND_DISPLAY"].iter().any(|v| std::env::var_os(v).is_some_and(|s| !s.is_empty()))
}

/// Open the window and run until it closes.
///
/// # Errors
/// [`WindowError`] when there is no display or the window cannot open.
pub fn run_window(start: StartProject) -> Result<(), WindowError> {
    if !has_display() {
        return Err(WindowError::NoDisplay);
    }
    recovery::install_crash_hook();
    dialogs::install_logger();
    let recovery_dir =
        std::env::var_os("FLOWRISE_RECOVERY_DIR").map(PathBuf::from).or_else(RecoveryConfig::default_dir);
    let options = eframe::NativeOptions {
        viewport: egui::ViewportBuilder::default()
            .with_inner_size(window_size())
            .with_min_inner_size([800.0, 560.0])
            .with_title("flowrise"),
        ..eframe::NativeOptions::default()
    };
    eframe::run_native(
        "flowrise",
        options,
        Box::new(move |cc| {
            theme::apply_style(&cc.egui_ctx);
            let mut app = FlowriseApp::new(start.project, start.path);
            let forced = std::env::var(DIALOG_ENV).is_ok_and(|v| v == "in-window");
            app.set_dialog_probe(if forced {
                dialogs::Probe::none(&format!("{DIALOG_ENV}=in-window is set"))
            } else {
                dialogs::Probe::start()
            });
            if let Some(dir) = recovery_dir {
                app = app.with_recovery(RecoveryConfig::in_dir(dir), true);
            }
            if let Some(prefs) = cc.storage.and_then(|s| eframe::get_value::<Prefs>(s, PREFS_KEY)) {
                app.prefs = prefs;
            }
            Ok(Box::new(app))
        }),
    )
    .map_err(|e| WindowError::Platform(e.to_string()))
}

/// The window's first size: `FLOWRISE_WINDOW_SIZE=WIDTHxHEIGHT` (for
/// screenshots at a given size), else 1440 × 900.
fn window_size() -> [f32; 2] {
    std::env::var("FLOWRISE_WINDOW_SIZE")
        .ok()
        .and_then(|v| {
            let (w, h) = v.split_once('x')?;
            Some([w.trim().parse::<f32>().ok()?, h.trim().parse::<f32>().ok()?])
        })
        .filter(|[w, h]| (320.0..=10_000.0).contains(w) && (240.0..=10_000.0).contains(h))
        .unwrap_or([1440.0, 900.0])
}

/// Answer of the unsaved-changes prompt.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum PromptChoice {
    /// Save, then go on.
    Save,
    /// Go on without saving.
    Discard,
    /// Stay.
    Cancel,
}

/// The unsaved-changes prompt (`what`: "before closing", …); returns the
/// choice once made.
pub fn unsaved_prompt(ctx: &egui::Context, name: &str, what: &str) -> Option<PromptChoice> {
    let mut choice = None;
    egui::Modal::new(egui::Id::unique("unsaved_prompt")).show(ctx, |ui| {
        ui.set_max_width(520.0);
        ui.heading("Unsaved changes");
        ui.label(format!("“{name}” has changes that are not saved. Save them {what}?"));
        ui.horizontal(|ui| {
            if ui.button("Save").clicked() {
                choice = Some(PromptChoice::Save);
            }
            if ui.button("Discard").clicked() {
                choice = Some(PromptChoice::Discard);
            }
            if ui.button("Cancel").clicked() {
                choice = Some(PromptChoice::Cancel);
            }
        });
    });
    choice
}
