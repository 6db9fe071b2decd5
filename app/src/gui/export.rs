//! Exports from the window: the parts list as CSV and the design report as
//! HTML, both straight from the solved design (nothing retyped), written
//! atomically.

use std::path::Path;

use flowrise_core::design::Solution;
use flowrise_core::parts::{self, PartsList, PartsOptions};
use flowrise_core::project::Project;
use flowrise_core::report::Studies;

use super::file_dialog::FileType;

/// What to export.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Kind {
    /// Parts list, CSV.
    Parts,
    /// Design report, self-contained HTML.
    Report,
}

impl Kind {
    /// The file type offered by the dialog.
    #[must_use]
    pub fn file_type(self) -> FileType {
        match self {
            Self::Parts => FileType::CSV,
            Self::Report => FileType::HTML,
        }
    }
    /// What it is, for people ("parts list").
    #[must_use]
    pub fn words(self) -> &'static str {
        match self {
            Self::Parts => "parts list",
            Self::Report => "design report",
        }
    }
    /// Added to the project's name for the proposed file name.
    #[must_use]
    pub fn suffix(self) -> &'static str {
        match self {
            Self::Parts => "-parts",
            Self::Report => "-report",
        }
    }
}

/// The parts list of the solved design.
///
/// # Errors
/// A message when the design has errors or the list cannot be made.
pub fn parts_of(project: &Project, sol: &Solution) -> Result<PartsList, String> {
    if sol.has_errors() {
        return Err("the design has errors — fix the findings marked Error before exporting".to_owned());
    }
    parts::parts_list(project, sol, &PartsOptions::default()).map_err(|e| e.to_string())
}

/// The text of an export.
///
/// # Errors
/// A message naming what is missing.
pub fn text(kind: Kind, project: &Project, sol: &Solution, studies: Studies<'_>) -> Result<String, String> {
    let list = parts_of(project, sol)?;
    match kind {
        Kind::Parts => parts::parts_csv(&list).map_err(|e| e.to_string()),
        Kind::Report => Ok(flowrise_core::report::report_html_with(project, sol, &list, studies)),
    }
}

/// Write an export to `path` atomically.
///
/// # Errors
/// A message naming the file.
pub fn write(kind: Kind, project: &Project, sol: &Solution, studies: Studies<'_>, path: &Path) -> Result<(), String> {
    let t = text(kind, project, sol, studies)?;
    flowrise_core::project::file::write_atomic(path, t.as_bytes()).map_err(|e| e.to_string())
}

#[cfg(test)]
mod tests {
    use super::*;
    use flowrise_core::design::{SolveOptions, Workspace, solve_project};

    #[test]
    fn exports_come_from_the_solved_design_and_are_written() {
        let text_ron = include_str!("../../../demo-projects/flat-six-radiators.ron");
        let p = Project::from_ron(text_ron).unwrap();
        let sol = solve_project(&p, &SolveOptions::default(), &mut Workspace::default());
        let dir = std::env::temp_dir().join(format!("flowrise-gui-export-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        let csv = dir.join("parts.csv");
        write(Kind::Parts, &p, &sol, Studies::default(), &csv).unwrap();
        let back = parts::read_parts_csv(&std::fs::read_to_string(&csv).unwrap()).unwrap();
        assert_eq!(back, parts_of(&p, &sol).unwrap().lines);
        let html = dir.join("report.html");
        write(Kind::Report, &p, &sol, Studies::default(), &html).unwrap();
        let h = std::fs::read_to_string(&html).unwrap();
        assert!(h.contains("Living room") && h.contains("<svg"));
        std::fs::remove_dir_all(&dir).ok();
    }
}
