//! Command-line interface: the clap definitions and the dispatch.
//!
//! One file per subcommand family, each importing only [`common`] (the
//! shared helpers: loading, `--close` ids, output files) and
//! `flowrise-core`, never each other nor this file:
//! - [`solve`] — `solve`;
//! - [`export`] — `parts`, `report`;
//! - [`studies`] — `sweep`, `part-load`;
//! - [`perf`] — `generate`, `export-network`, the hidden `bench-solve`;
//! - [`window`] — no subcommand: the drawing window.
//!
//! Exit codes: 0 success; 2 ([`common::EXIT_INVALID`]) invalid input or a
//! design with errors; 1 any other failure (writing to stdout, the window).
//! The message is on stderr, printed once where the failure is met.

mod common;
mod export;
mod perf;
mod solve;
mod studies;
mod window;

use std::path::PathBuf;
use std::process::ExitCode;

use clap::{Parser, Subcommand};
use flowrise_core::project::limits;

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
        /// Highest supply temperature, °C (20 to 95).
        #[arg(long, default_value_t = 75.0, value_parser = common::within(&limits::SUPPLY_C))]
        from: f64,
        /// Lowest supply temperature, °C (20 to 95).
        #[arg(long, default_value_t = 35.0, value_parser = common::within(&limits::SUPPLY_C))]
        to: f64,
        /// Step, K (0.01 to 75; at most 10,000 points).
        #[arg(long, default_value_t = 1.0, value_parser = common::within(&limits::SWEEP_STEP_K))]
        step: f64,
        /// Size upgrades for this supply temperature, °C (20 to 95; default: --to).
        #[arg(long, value_parser = common::within(&limits::SUPPLY_C))]
        target: Option<f64>,
        /// Smallest water temperature drop an emitter may run at, K (0.5 to 20; 5 K: heat pump, common practice).
        #[arg(
            long,
            default_value_t = flowrise_core::sweep::UPGRADE_DELTA_K,
            value_parser = common::within(&limits::MIN_WATER_DROP_K)
        )]
        min_drop: f64,
        /// Keep the design's presettings and pump set-point instead of re-balancing.
        #[arg(long)]
        frozen: bool,
        /// Sweep this pumped circuit's supply (its node id, e.g. N3) and judge its rooms only.
        #[arg(long, value_parser = common::parse_node_id)]
        circuit: Option<flowrise_core::project::NodeId>,
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
        /// Close this fraction of the valves (0 to 1), chosen by --seed.
        #[arg(long, value_parser = common::within(&limits::CLOSED_FRACTION))]
        fraction: Option<f64>,
        /// Seed for --fraction (any whole number from 0 to 18446744073709551615).
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
    /// Write the commissioning schedule as CSV: per valve its setting, design flow and expected Δp (stdout without -o).
    Commissioning {
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

/// Run the command line (no subcommand: the window).
pub fn main() -> ExitCode {
    let cli = Cli::parse();
    match cli.command {
        Some(Command::Solve { file, json, installed, close }) => solve::solve(&file, json, installed, &close),
        Some(Command::Parts { file, output }) => export::export(&file, output.as_deref(), export::Export::Parts),
        Some(Command::Commissioning { file, output }) => {
            export::export(&file, output.as_deref(), export::Export::Commissioning)
        }
        Some(Command::Report { file, output, studies }) => {
            let what = if studies { export::Export::ReportWithStudies } else { export::Export::Report };
            export::export(&file, output.as_deref(), what)
        }
        Some(Command::Generate(args)) => perf::generate(&args),
        Some(Command::ExportNetwork(args)) => perf::export_network(&args),
        Some(Command::BenchSolve(args)) => perf::bench_solve(&args),
        Some(Command::Sweep { file, from, to, step, target, min_drop, frozen, circuit, json, csv }) => {
            let spec = flowrise_core::sweep::SweepSpec {
                from_c: from,
                to_c: to,
                step_k: step,
                frozen_presettings: frozen,
                target_c: target,
                min_drop_k: min_drop,
                circuit,
            };
            studies::run_sweep(&file, &spec, json, csv.as_deref())
        }
        Some(Command::PartLoad { file, close, fraction, seed, json, csv }) => {
            studies::run_part_load(&file, &close, fraction, seed, json, csv.as_deref())
        }
        None => window::open_window(cli.file.as_deref()),
    }
}
