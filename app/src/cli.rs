//! Command-line interface.

use std::collections::BTreeSet;
use std::path::PathBuf;
use std::process::ExitCode;

use clap::{Parser, Subcommand};
use flowrise_core::design::{SolveOptions, Workspace, solve_project};
use flowrise_core::output::{SolveJson, write_solve_text};
use flowrise_core::project::{Mode, NodeId, Project};

/// Exit code for invalid input (the message is on stderr).
pub const EXIT_INVALID: u8 = 2;

#[derive(Debug, Parser)]
#[command(
    name = "flowrise",
    version,
    about = "Design two-pipe hydronic heating networks",
    args_conflicts_with_subcommands = true
)]
struct Cli {
    #[command(subcommand)]
    command: Option<Command>,
    /// Project file to open.
    file: Option<PathBuf>,
}

#[derive(Debug, Subcommand)]
enum Command {
    /// Supply-temperature sweep: how low can the supply go with these emitters?
    Sweep {
        /// Project file (.ron).
        file: PathBuf,
        /// Highest supply temperature, °C.
        #[arg(long, default_value_t = 75.0)]
        from: f64,
        /// Lowest supply temperature, °C.
        #[arg(long, default_value_t = 35.0)]
        to: f64,
        /// Step, K.
        #[arg(long, default_value_t = 1.0)]
        step: f64,
        /// Size upgrades for this supply temperature, °C (default: --to).
        #[arg(long)]
        target: Option<f64>,
        /// Keep the design's presettings and pump set-point instead of re-balancing.
        #[arg(long)]
        frozen: bool,
        /// Print JSON.
        #[arg(long)]
        json: bool,
        /// Also write the points as CSV to this file.
        #[arg(long)]
        csv: Option<PathBuf>,
    },
    /// Part load: close valves and solve for each pump control mode.
    PartLoad {
        /// Project file (.ron).
        file: PathBuf,
        /// Close these emitters' valves (N12,N15).
        #[arg(long, value_delimiter = ',')]
        close: Vec<String>,
        /// Close this fraction of the valves, chosen by --seed.
        #[arg(long)]
        fraction: Option<f64>,
        /// Seed for --fraction.
        #[arg(long, default_value_t = 1)]
        seed: u64,
        /// Print JSON.
        #[arg(long)]
        json: bool,
        /// Also write the cases as CSV to this file.
        #[arg(long)]
        csv: Option<PathBuf>,
    },
    /// Design and solve a project; print a summary or JSON.
    Solve {
        /// Project file (.ron).
        file: PathBuf,
        /// Print the stable JSON document (docs/solve-json.md) instead of text.
        #[arg(long)]
        json: bool,
        /// Freeze sizes and presettings as stored in the project (installed mode).
        #[arg(long)]
        installed: bool,
        /// Close these emitters' valves (ids, comma-separated: N12,N15 or 12,15).
        #[arg(long, value_delimiter = ',')]
        close: Vec<String>,
    },
    /// Write the parts list of the solved design as CSV (stdout without -o).
    Parts {
        /// Project file (.ron).
        file: PathBuf,
        /// Output file (.csv).
        #[arg(short, long)]
        output: Option<PathBuf>,
    },
    /// Write the design report as one self-contained HTML file (stdout without -o).
    Report {
        /// Project file (.ron).
        file: PathBuf,
        /// Output file (.html).
        #[arg(short, long)]
        output: Option<PathBuf>,
        /// Include the supply-temperature sweep (75 → 35 °C, upgrades for 45 °C)
        /// and a part-load case (half the valves closed, seed 1).
        #[arg(long)]
        studies: bool,
    },
    /// Generate a building (riser, floors, branches, emitters) as a project file.
    Generate(perf::GenerateArgs),
    /// Export the derived network (design state) in the EPANET input format.
    ExportNetwork(perf::ExportArgs),
    /// Time the stages on a project (for tests/epanet/bench_side_by_side.py).
    #[command(hide = true)]
    BenchSolve(perf::BenchArgs),
}

#[path = "cli_perf.rs"]
mod perf;

/// Parse an emitter id: `N12` or `12`.
pub fn parse_node_id(text: &str) -> Result<NodeId, String> {
    let t = text.trim();
    let digits = t.strip_prefix('N').or_else(|| t.strip_prefix('n')).unwrap_or(t);
    digits.parse::<u32>().map(NodeId).map_err(|_| format!("\"{t}\" is not an emitter id — give ids like N12 or 12"))
}

pub fn main() -> ExitCode {
    let cli = Cli::parse();
    match cli.command {
        Some(Command::Solve { file, json, installed, close }) => solve(&file, json, installed, &close),
        Some(Command::Parts { file, output }) => export(&file, output.as_deref(), Export::Parts),
        Some(Command::Report { file, output, studies }) => {
            export(&file, output.as_deref(), if studies { Export::ReportWithStudies } else { Export::Report })
        }
        Some(Command::Generate(args)) => perf::generate(&args),
        Some(Command::ExportNetwork(args)) => perf::export_network(&args),
        Some(Command::BenchSolve(args)) => perf::bench_solve(&args),
        Some(Command::Sweep { file, from, to, step, target, frozen, json, csv }) => {
            let spec = flowrise_core::sweep::SweepSpec {
                from_c: from,
                to_c: to,
                step_k: step,
                frozen_presettings: frozen,
                target_c: target,
            };
            crate::cli_sweep::run_sweep(&file, &spec, json, csv.as_deref())
        }
        Some(Command::PartLoad { file, close, fraction, seed, json, csv }) => {
            crate::cli_sweep::run_part_load(&file, &close, fraction, seed, json, csv.as_deref())
        }
        None => open_window(cli.file.as_deref()),
    }
}

/// Open the drawing window on `file`, or on the embedded demo project.
fn open_window(file: Option<&std::path::Path>) -> ExitCode {
    let start = match file {
        Some(path) => match Project::load(path) {
            Ok(project) => flowrise::gui::StartProject { project, path: Some(path.to_path_buf()) },
            Err(e) => {
                eprintln!("flowrise: {e}");
                return ExitCode::from(EXIT_INVALID);
            }
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

/// Refuse an output option that names the input file (after links): it
/// would destroy the project. Prints the message and gives the exit code.
pub fn refuse_output_over_input(
    input: &std::path::Path,
    output: &std::path::Path,
    option: &str,
) -> Result<(), ExitCode> {
    if flowrise_core::project::file::same_file(input, output) {
        eprintln!(
            "flowrise: {option} {} is the project file itself — writing there would destroy the project; \
             give another output file",
            output.display()
        );
        return Err(ExitCode::from(EXIT_INVALID));
    }
    Ok(())
}

/// Load a project or print the error and return the exit code.
pub fn load_or_exit(file: &std::path::Path) -> Result<Project, ExitCode> {
    Project::load(file).map_err(|e| {
        eprintln!("flowrise: {e}");
        ExitCode::from(EXIT_INVALID)
    })
}

/// A [`std::fmt::Write`] sink writing to a byte stream, keeping the first
/// I/O error (which `fmt::Error` cannot carry).
struct IoLines<W: std::io::Write> {
    out: W,
    error: Option<std::io::Error>,
}

impl<W: std::io::Write> std::fmt::Write for IoLines<W> {
    fn write_str(&mut self, s: &str) -> std::fmt::Result {
        self.out.write_all(s.as_bytes()).map_err(|e| {
            self.error.get_or_insert(e);
            std::fmt::Error
        })
    }
}

fn solve(file: &std::path::Path, json: bool, installed: bool, close: &[String]) -> ExitCode {
    let mut project = match Project::load(file) {
        Ok(p) => p,
        Err(e) => {
            eprintln!("flowrise: {e}");
            return ExitCode::from(EXIT_INVALID);
        }
    };
    if installed {
        project.settings.mode = Mode::Installed;
    }
    let mut closed = BTreeSet::new();
    for c in close {
        match parse_node_id(c) {
            Ok(id) if project.emitters().contains(&id) => {
                closed.insert(id);
            }
            Ok(id) => {
                eprintln!("flowrise: --close {id}: no emitter with this id in {}", file.display());
                return ExitCode::from(EXIT_INVALID);
            }
            Err(e) => {
                eprintln!("flowrise: --close: {e}");
                return ExitCode::from(EXIT_INVALID);
            }
        }
    }
    let opts = SolveOptions { closed_emitters: closed, ..SolveOptions::default() };
    let sol = solve_project(&project, &opts, &mut Workspace::default());
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
        let mut out = IoLines { out: std::io::BufWriter::new(std::io::stdout().lock()), error: None };
        let written = write_solve_text(&mut out, &project, &sol);
        let flushed = std::io::Write::flush(&mut out.out);
        if let Some(e) = out.error.or(flushed.err()).or_else(|| written.err().map(|_| std::io::Error::other("format")))
        {
            eprintln!("flowrise: cannot write the summary: {e}");
            return ExitCode::FAILURE;
        }
    }
    if sol.has_errors() {
        for f in sol.findings.iter().filter(|f| f.severity == flowrise_core::design::Severity::Error) {
            eprintln!("flowrise: {}: {}", f.item, f.message);
        }
        return ExitCode::from(EXIT_INVALID);
    }
    ExitCode::SUCCESS
}

/// What `export` writes.
#[derive(Debug, Clone, Copy)]
enum Export {
    Parts,
    Report,
    ReportWithStudies,
}

/// `flowrise parts` / `flowrise report`: solve, then write the parts CSV or
/// the HTML report. An invalid file or a design with errors writes nothing
/// and exits 2 with the errors on stderr.
fn export(file: &std::path::Path, output: Option<&std::path::Path>, what: Export) -> ExitCode {
    if let Some(out) = output
        && let Err(code) = refuse_output_over_input(file, out, "-o")
    {
        return code;
    }
    let project = match Project::load(file) {
        Ok(p) => p,
        Err(e) => {
            eprintln!("flowrise: {e}");
            return ExitCode::from(EXIT_INVALID);
        }
    };
    let sol = solve_project(&project, &SolveOptions::default(), &mut Workspace::default());
    if sol.has_errors() {
        for f in sol.findings.iter().filter(|f| f.severity == flowrise_core::design::Severity::Error) {
            eprintln!("flowrise: {}: {}", f.item, f.message);
        }
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
        Export::Report => flowrise_core::report::report_html(&project, &sol, &parts),
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
            let studies = flowrise_core::report::Studies {
                sweep: sweep_result.as_ref().ok(),
                part_load: cases.as_ref().ok().map(|c| (c.as_slice(), closed.len())),
            };
            flowrise_core::report::report_html_with(&project, &sol, &parts, studies)
        }
    };
    match output {
        Some(path) => {
            if let Err(e) = flowrise_core::project::file::write_atomic(path, text.as_bytes()) {
                eprintln!("flowrise: cannot write {e}");
                return ExitCode::from(EXIT_INVALID);
            }
        }
        None => print!("{text}"),
    }
    ExitCode::SUCCESS
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn node_ids_parse_with_or_without_prefix() {
        assert_eq!(parse_node_id("N12"), Ok(NodeId(12)));
        assert_eq!(parse_node_id(" 7 "), Ok(NodeId(7)));
        assert!(parse_node_id("x").is_err());
    }

    /// A stream that takes `room` bytes, then fails like a full disk.
    struct Full {
        room: usize,
    }

    impl std::io::Write for Full {
        fn write(&mut self, buf: &[u8]) -> std::io::Result<usize> {
            if self.room == 0 {
                return Err(std::io::Error::new(std::io::ErrorKind::StorageFull, "disk full"));
            }
            let n = buf.len().min(self.room);
            self.room -= n;
            Ok(n)
        }
        fn flush(&mut self) -> std::io::Result<()> {
            Ok(())
        }
    }

    #[test]
    fn the_streamed_summary_stops_at_a_write_error_and_keeps_it() {
        let project = flowrise_core::generate::generate_building(&flowrise_core::generate::BuildingSpec::new(1, 3))
            .expect("generated");
        let sol = solve_project(&project, &SolveOptions::default(), &mut Workspace::default());
        let mut whole = String::new();
        write_solve_text(&mut whole, &project, &sol).expect("a String takes everything");
        assert_eq!(whole, flowrise_core::output::solve_text(&project, &sol));

        let mut sink = IoLines { out: Full { room: 100 }, error: None };
        assert!(write_solve_text(&mut sink, &project, &sol).is_err());
        let kept = sink.error.expect("the I/O error is kept");
        assert_eq!(kept.kind(), std::io::ErrorKind::StorageFull);
    }
}
