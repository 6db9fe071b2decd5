//! No subcommand: open the drawing window.

use std::path::Path;
use std::process::ExitCode;

use super::common::{EXIT_INVALID, load_or_exit};

/// Open the drawing window on `file`, or on the embedded demo project.
pub fn open_window(file: Option<&Path>) -> ExitCode {
    let start = match file {
        Some(path) => match load_or_exit(path) {
            Ok(project) => flowrise::gui::StartProject { project, path: Some(path.to_path_buf()) },
            Err(code) => return code,
        },
        None => match flowrise::gui::StartProject::default_demo() {
            Ok(start) => start,
            Err(e) => {
                eprintln!("flowrise: the built-in demo project does not load: {e}");
                return ExitCode::FAILURE;
            }
        },
    };
    match flowrise::gui::run_window(start) {
        Ok(()) => ExitCode::SUCCESS,
        Err(flowrise::gui::WindowError::NoDisplay) => {
            eprintln!("flowrise: no display found; use `flowrise solve FILE` for headless work");
            ExitCode::from(EXIT_INVALID)
        }
        Err(flowrise::gui::WindowError::Platform(e)) => {
            eprintln!("flowrise: the window could not open ({e}); use `flowrise solve FILE` for headless work");
            ExitCode::FAILURE
        }
    }
}
