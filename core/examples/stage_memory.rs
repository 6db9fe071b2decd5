//! Where a fresh `flowrise solve --json` process spends its time and memory:
//! load a project file, design and solve it once (as the CLI does, with a
//! one-shot workspace), write the JSON document to a sink, and print each
//! stage's wall time with the process's resident and peak memory after it
//! (Linux `/proc/self/status`; elsewhere the memory columns read 0).
//!
//! Run: `cargo run --release -p flowrise-core --example stage_memory -- FILE.ron`
//! (`MATCHED=1` solves with matched physics, as the side-by-side does).
//! A profiling aid, not a benchmark: the recorded figures come from the
//! side-by-side script (`tests/epanet/bench_side_by_side.py`).

#![allow(clippy::expect_used, clippy::unwrap_used, clippy::print_stdout)] // reason: a developer's example, not product code

use std::time::Instant;

use flowrise_core::design::{SolveOptions, Workspace, solve_project};
use flowrise_core::output::SolveJson;
use flowrise_core::project::Project;

/// The allocator the flowrise binary uses (app/src/main.rs).
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

/// Resident and peak resident memory in MB.
fn memory_mb() -> (f64, f64) {
    let status = std::fs::read_to_string("/proc/self/status").unwrap_or_default();
    let field = |name: &str| {
        status
            .lines()
            .find(|l| l.starts_with(name))
            .and_then(|l| l.split_whitespace().nth(1))
            .and_then(|v| v.parse::<f64>().ok())
            .map_or(0.0, |kb| kb / 1024.0)
    };
    (field("VmRSS:"), field("VmHWM:"))
}

fn report(stage: &str, t: Instant) {
    let (rss, peak) = memory_mb();
    println!("{stage:<10} {:>9.1} ms   rss {rss:>7.0} MB   peak {peak:>7.0} MB", t.elapsed().as_secs_f64() * 1e3);
}

fn main() {
    let file = std::env::args().nth(1).expect("usage: stage_memory FILE.ron");
    let t = Instant::now();
    let p = Project::load(std::path::Path::new(&file)).expect("load");
    report("load", t);
    let t = Instant::now();
    // `MATCHED=1`: matched physics, as the side-by-side with EPANET solves.
    let opts = SolveOptions { matched_physics: std::env::var_os("MATCHED").is_some(), ..SolveOptions::default() };
    let sol = solve_project(&p, &opts, &mut Workspace::one_shot());
    report("solve", t);
    println!(
        "  derive {:.1} ms, design {:.1} ms, operate {:.1} ms ({} passes; last pass: {} Newton solves, {:.1} ms in the solver, {} iterations in the last)",
        sol.timings.derive_ms,
        sol.timings.design_ms,
        sol.timings.operate_ms,
        sol.timings.operate_passes,
        sol.timings.solver_runs,
        sol.timings.solver_ms,
        sol.iterations
    );
    let t = Instant::now();
    let mut out = std::io::BufWriter::new(std::io::sink());
    serde_json::to_writer_pretty(&mut out, &SolveJson { project: &p, solution: &sol }).expect("json");
    report("json", t);
    let t = Instant::now();
    drop(sol);
    drop(p);
    report("drop", t);
}
