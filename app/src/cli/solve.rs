//! `flowrise solve`: design and solve a project, print the summary or the
//! JSON document.

use std::path::Path;
use std::process::ExitCode;

use flowrise_core::design::{SolveOptions, Workspace, solve_project};
use flowrise_core::output::{SolveJson, write_solve_text};
use flowrise_core::project::Mode;

use super::common::{EXIT_INVALID, closed_emitters, load_or_exit, print_error_findings, print_text};

/// `flowrise solve`: a design with error findings exits 2, the errors on
/// stderr after the output.
pub fn solve(file: &Path, json: bool, installed: bool, close: &[String]) -> ExitCode {
    let mut project = match load_or_exit(file) {
        Ok(p) => p,
        Err(code) => return code,
    };
    if installed {
        project.settings.mode = Mode::Installed;
    }
    let closed = match closed_emitters(close, &project, file) {
        Ok(c) => c,
        Err(code) => return code,
    };
    let opts = SolveOptions { closed_emitters: closed, ..SolveOptions::default() };
    let sol = solve_project(&project, &opts, &mut Workspace::one_shot());
    if json {
        // Streamed: a large project's document is never held whole.
        let mut out = std::io::BufWriter::new(std::io::stdout().lock());
        let written = serde_json::to_writer_pretty(&mut out, &SolveJson { project: &project, solution: &sol })
            .map_err(std::io::Error::from)
            .and_then(|()| {
                use std::io::Write;
                writeln!(out)?;
                out.flush()
            });
        if let Err(e) = written {
            eprintln!("flowrise: cannot write JSON: {e}");
            return ExitCode::FAILURE;
        }
    } else {
        // Streamed line by line, like the JSON.
        if let Err(code) = print_text("summary", |out| write_solve_text(out, &project, &sol)) {
            return code;
        }
    }
    if sol.has_errors() {
        print_error_findings(&sol);
        return ExitCode::from(EXIT_INVALID);
    }
    ExitCode::SUCCESS
}
