//! `flowrise parts` and `flowrise report`: solve, then write the parts list
//! as CSV or the design report as one HTML file.

use std::path::Path;
use std::process::ExitCode;

use flowrise_core::design::{SolveOptions, Workspace, solve_project};

use super::common::{
    EXIT_INVALID, load_or_exit, print_error_findings, print_text, refuse_output_over_input, write_output,
};

/// What `export` writes.
#[derive(Debug, Clone, Copy)]
pub enum Export {
    /// The parts list (CSV).
    Parts,
    /// The design report (HTML).
    Report,
    /// The design report with the sweep and part-load studies.
    ReportWithStudies,
    /// The commissioning schedule (CSV).
    Commissioning,
}

/// `flowrise parts` / `flowrise report` / `flowrise commissioning`: solve,
/// then write the parts CSV, the HTML report or the commissioning schedule
/// CSV (stdout without `-o`). An invalid file or a design with
/// errors writes nothing and exits 2 with the errors on stderr.
pub fn export(file: &Path, output: Option<&Path>, what: Export) -> ExitCode {
    if let Some(out) = output
        && let Err(code) = refuse_output_over_input(file, out, "-o")
    {
        return code;
    }
    let project = match load_or_exit(file) {
        Ok(p) => p,
        Err(code) => return code,
    };
    let sol = solve_project(&project, &SolveOptions::default(), &mut Workspace::default());
    if sol.has_errors() {
        print_error_findings(&sol);
        eprintln!("flowrise: the design has errors; nothing written");
        return ExitCode::from(EXIT_INVALID);
    }
    let parts = match flowrise_core::parts::parts_list(&project, &sol, &flowrise_core::parts::PartsOptions::default()) {
        Ok(p) => p,
        Err(e) => {
            eprintln!("flowrise: parts list: {e}");
            return ExitCode::from(EXIT_INVALID);
        }
    };
    let text = match what {
        Export::Parts => match flowrise_core::parts::parts_csv(&parts) {
            Ok(t) => t,
            Err(e) => {
                eprintln!("flowrise: {e}");
                return ExitCode::FAILURE;
            }
        },
        Export::Report => {
            let underlays = read_underlays(&project, file);
            let studies = flowrise_core::report::Studies { underlays: Some(&underlays), ..Default::default() };
            flowrise_core::report::report_html_with(&project, &sol, &parts, studies)
        }
        Export::Commissioning => {
            let lines = flowrise_core::commissioning::schedule(&project, &sol);
            match flowrise_core::commissioning::schedule_csv(&lines) {
                Ok(t) => t,
                Err(e) => {
                    eprintln!("flowrise: {e}");
                    return ExitCode::FAILURE;
                }
            }
        }
        Export::ReportWithStudies => {
            use flowrise_core::sweep;
            let sweep_result =
                sweep::sweep(&project, &sweep::SweepSpec { target_c: Some(45.0), ..sweep::SweepSpec::default() });
            let closed = sweep::random_closed_set(&project, 0.5, 1);
            let cases = sweep::part_load(&project, &closed);
            if let Err(e) = &sweep_result {
                eprintln!("flowrise: sweep: {e} (left out of the report)");
            }
            if let Err(e) = &cases {
                eprintln!("flowrise: part load: {e} (left out of the report)");
            }
            let underlays = read_underlays(&project, file);
            let studies = flowrise_core::report::Studies {
                sweep: sweep_result.as_ref().ok(),
                part_load: cases.as_ref().ok().map(|c| (c.as_slice(), closed.len())),
                underlays: Some(&underlays),
            };
            flowrise_core::report::report_html_with(&project, &sol, &parts, studies)
        }
    };
    match output {
        Some(path) => {
            if let Err(code) = write_output(path, text.as_bytes()) {
                return code;
            }
        }
        None => {
            if let Err(code) = print_text("output", |out| std::fmt::Write::write_str(out, &text)) {
                return code;
            }
        }
    }
    ExitCode::SUCCESS
}

/// The plan underlays of the report, read beside the project file; one
/// that cannot be read is a warning on stderr (the report says so too).
fn read_underlays(project: &flowrise_core::project::Project, file: &Path) -> flowrise_core::report::svg::PlanUnderlays {
    let dir = std::path::absolute(file).ok().and_then(|f| f.parent().map(Path::to_path_buf));
    let u = flowrise_core::report::svg::PlanUnderlays::read(project, dir.as_deref());
    for (level, got) in &u.levels {
        if let Err(e) = got {
            eprintln!("flowrise: warning: plan underlay of level {level} not drawn: {e}");
        }
    }
    u
}
