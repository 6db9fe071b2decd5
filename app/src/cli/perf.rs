//! `generate`, `export-network` and the hidden `bench-solve` subcommands.

use std::path::PathBuf;
use std::process::ExitCode;
use std::time::Instant;

use clap::{Args, ValueEnum};
use flowrise_core::design::{SolveOptions, Workspace, solve_project};
use flowrise_core::export::{ExportOptions, PumpExport, flows_json, network_to_inp};
use flowrise_core::generate::{BranchDevices, BuildingSpec, MAX_FLOORS, MAX_PER_FLOOR, generate_building};
use flowrise_core::project::limits;
use flowrise_core::project::{Edit, NodeKind};

use super::common::{self, EXIT_INVALID, load_or_exit, print_error_findings, refuse_output_over_input, write_output};

/// Arguments of `flowrise generate`.
#[derive(Debug, Args)]
pub struct GenerateArgs {
    /// Number of floors (levels), 1 to 200.
    #[arg(long, value_parser = common::count_from_to("number of floors", 1, MAX_FLOORS))]
    floors: u32,
    /// Emitters per floor, 1 to 100,000 (at most 1,000,000 in all).
    #[arg(long, value_parser = common::count_from_to("emitters per floor", 1, MAX_PER_FLOOR))]
    per_floor: u32,
    /// Radiator branches as reverse-return chains.
    #[arg(long)]
    reverse_return: bool,
    /// One header with floor loops per floor.
    #[arg(long)]
    headers: bool,
    /// Leave out the differential-pressure controller on each floor branch.
    #[arg(long, conflicts_with = "balancing_valves")]
    no_dp_controllers: bool,
    /// A static balancing valve on each floor branch instead of the
    /// differential-pressure controller.
    #[arg(long)]
    balancing_valves: bool,
    /// Seed of the loads and room temperatures.
    #[arg(long, default_value_t = 1)]
    seed: u64,
    /// Project file to write (.ron).
    #[arg(short = 'o', long = "output")]
    output: PathBuf,
}

/// Pump representation in the export.
#[derive(Debug, Clone, Copy, ValueEnum)]
enum PumpArg {
    /// A curve when exact, else a fixed head rise.
    Auto,
    /// Always a three-point curve.
    Curve,
    /// Always a fixed head rise at the operating point.
    FixedRise,
}

/// Arguments of `flowrise export-network`.
#[derive(Debug, Args)]
pub struct ExportArgs {
    /// Project file (.ron).
    file: PathBuf,
    /// Network file to write (.inp).
    #[arg(short = 'o', long = "output")]
    output: PathBuf,
    /// How to write the pump.
    #[arg(long, value_enum, default_value = "auto")]
    pump: PumpArg,
    /// EPANET accuracy option written to the file (1e-12 to 0.1).
    #[arg(long, default_value_t = 0.001, value_parser = common::within(&limits::EXPORT_ACCURACY))]
    accuracy: f64,
    /// Solve with matched physics (one viscosity and density, EPANET's friction law).
    #[arg(long, hide = true)]
    matched: bool,
    /// Also write flowrise's operating flows of every link as JSON here.
    #[arg(long, hide = true)]
    flows_json: Option<PathBuf>,
}

/// Arguments of `flowrise bench-solve`.
#[derive(Debug, Args)]
pub struct BenchArgs {
    /// Project file (.ron).
    file: PathBuf,
    /// Repetitions per measurement (1 to 1000).
    #[arg(long, default_value_t = 5, value_parser = common::count_within(&limits::BENCH_REPEAT))]
    repeat: u32,
    /// Matched physics.
    #[arg(long)]
    matched: bool,
    /// Solver flow tolerance (relative flow change, 1e-12 to 0.1).
    #[arg(long, value_parser = common::within(&limits::SOLVER_FLOW_TOLERANCE))]
    flow_tolerance: Option<f64>,
}

/// `flowrise generate`.
pub fn generate(a: &GenerateArgs) -> ExitCode {
    let spec = BuildingSpec {
        floors: a.floors,
        per_floor: a.per_floor,
        reverse_return: a.reverse_return,
        headers: a.headers,
        branch_devices: match (a.no_dp_controllers, a.balancing_valves) {
            (true, _) => BranchDevices::None,
            (false, true) => BranchDevices::BalancingValves,
            (false, false) => BranchDevices::DpControllers,
        },
        seed: a.seed,
    };
    let project = match generate_building(&spec) {
        Ok(p) => p,
        Err(e) => {
            eprintln!("flowrise: generate: {e}");
            return ExitCode::from(EXIT_INVALID);
        }
    };
    let text = match project.to_ron() {
        Ok(t) => t,
        Err(e) => {
            eprintln!("flowrise: cannot write {e}");
            return ExitCode::from(EXIT_INVALID);
        }
    };
    if let Err(code) = write_output(&a.output, text.as_bytes()) {
        return code;
    }
    eprintln!(
        "flowrise: wrote {} ({} emitters, {} runs)",
        a.output.display(),
        project.emitters().len(),
        project.run_count()
    );
    ExitCode::SUCCESS
}

/// `flowrise export-network`.
pub fn export_network(a: &ExportArgs) -> ExitCode {
    for (out, option) in [(Some(&a.output), "-o"), (a.flows_json.as_ref(), "--flows-json")] {
        if let Some(out) = out
            && let Err(code) = refuse_output_over_input(&a.file, out, option)
        {
            return code;
        }
    }
    let project = match load_or_exit(&a.file) {
        Ok(p) => p,
        Err(code) => return code,
    };
    let opts = SolveOptions { matched_physics: a.matched, ..SolveOptions::default() };
    let sol = solve_project(&project, &opts, &mut Workspace::default());
    if sol.has_errors() {
        print_error_findings(&sol);
        return ExitCode::from(EXIT_INVALID);
    }
    let pump = match a.pump {
        PumpArg::Auto => PumpExport::Auto,
        PumpArg::Curve => PumpExport::Curve,
        PumpArg::FixedRise => PumpExport::FixedRise,
    };
    let eo = ExportOptions { pump, accuracy: a.accuracy, ..ExportOptions::default() };
    let text = match network_to_inp(&sol, &project.name, &eo) {
        Ok(t) => t,
        Err(e) => {
            eprintln!("flowrise: export-network: {e}");
            return ExitCode::from(EXIT_INVALID);
        }
    };
    if let Err(code) = write_output(&a.output, text.as_bytes()) {
        return code;
    }
    if let Some(path) = &a.flows_json {
        let doc = match flows_json(&sol, &eo) {
            Ok(d) => d,
            Err(e) => {
                eprintln!("flowrise: export-network: {e}");
                return ExitCode::from(EXIT_INVALID);
            }
        };
        let bytes = match serde_json::to_vec(&doc) {
            Ok(b) => b,
            Err(e) => {
                eprintln!("flowrise: cannot write JSON: {e}");
                return ExitCode::FAILURE;
            }
        };
        if let Err(code) = write_output(path, &bytes) {
            return code;
        }
    }
    ExitCode::SUCCESS
}

fn median(v: &mut [f64]) -> f64 {
    if v.is_empty() {
        return f64::NAN;
    }
    v.sort_by(f64::total_cmp);
    let n = v.len();
    if n % 2 == 1 { v[n / 2] } else { 0.5 * (v[n / 2 - 1] + v[n / 2]) }
}

fn ms_since(t: Instant) -> f64 {
    t.elapsed().as_secs_f64() * 1e3
}

/// `flowrise bench-solve`: medians of load, cold solve stages and the warm
/// edit → results cycle of a drag, as JSON on stdout.
pub fn bench_solve(a: &BenchArgs) -> ExitCode {
    let repeat = a.repeat.max(1) as usize;
    let mut load_ms = Vec::new();
    let mut project = None;
    for _ in 0..repeat.min(3) {
        let t = Instant::now();
        match load_or_exit(&a.file) {
            Ok(p) => project = Some(p),
            Err(code) => return code,
        }
        load_ms.push(ms_since(t));
    }
    let Some(mut project) = project else { return ExitCode::FAILURE };
    let mut opts = SolveOptions { matched_physics: a.matched, ..SolveOptions::default() };
    if let Some(tol) = a.flow_tolerance {
        opts.solver.flow_tolerance = tol;
    }
    let (mut derive, mut design, mut operate, mut total, mut iters) = (vec![], vec![], vec![], vec![], vec![]);
    for _ in 0..repeat {
        let t = Instant::now();
        let sol = solve_project(&project, &opts, &mut Workspace::default());
        total.push(ms_since(t));
        derive.push(sol.timings.derive_ms);
        design.push(sol.timings.design_ms);
        operate.push(sol.timings.operate_ms);
        iters.push(sol.iterations as f64);
        if sol.has_errors() {
            eprintln!("flowrise: bench-solve: the project has error findings");
            return ExitCode::from(EXIT_INVALID);
        }
    }
    // Warm: a drag moves one emitter by ±5 cm (its connection's length
    // changes); each step is edit → derive → design → operate with the same
    // workspace (symbolic factor reused, warm start).
    let mover = project.nodes().find(|n| matches!(n.kind, NodeKind::Emitter(_))).map(|n| n.id);
    let mut ws = Workspace::default();
    let _ = solve_project(&project, &opts, &mut ws);
    let (mut w_operate, mut w_total, mut w_iters) = (vec![], vec![], vec![]);
    if let Some(id) = mover {
        for i in 0..repeat {
            let dx = if i % 2 == 0 { 0.05 } else { -0.05 };
            let t = Instant::now();
            if project.apply(Edit::MoveNodes { ids: vec![id], dx_m: dx, dy_m: 0.0 }).is_err() {
                break;
            }
            let sol = solve_project(&project, &opts, &mut ws);
            w_total.push(ms_since(t));
            w_operate.push(sol.timings.operate_ms);
            w_iters.push(sol.iterations as f64);
        }
    }
    let doc = serde_json::json!({
        "file": a.file.display().to_string(),
        "emitters": project.emitters().len(),
        "repeat": repeat,
        "matched_physics": a.matched,
        "flow_tolerance": opts.solver.flow_tolerance,
        "load_ms": median(&mut load_ms),
        "cold": {
            "derive_ms": median(&mut derive),
            "design_ms": median(&mut design),
            "operate_ms": median(&mut operate),
            "total_ms": median(&mut total),
            "iterations": median(&mut iters),
        },
        "warm_drag": {
            "operate_ms": median(&mut w_operate),
            "edit_to_results_ms": median(&mut w_total),
            "iterations": median(&mut w_iters),
        },
    });
    match serde_json::to_string_pretty(&doc) {
        Ok(t) => match common::print_text("timings", |out| std::fmt::Write::write_fmt(out, format_args!("{t}\n"))) {
            Ok(()) => ExitCode::SUCCESS,
            Err(code) => code,
        },
        Err(e) => {
            eprintln!("flowrise: cannot write JSON: {e}");
            ExitCode::FAILURE
        }
    }
}
