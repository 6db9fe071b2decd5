//! Driver of `tests/epanet/bench_side_by_side.py` (a bench target so it is
//! built with optimisations, without the GUI): for each size given, generate
//! the building, export its network (matched physics, design state) to
//! `<dir>/gen-<n>.inp` (and the project to `<dir>/gen-<n>.ron`) and print one JSON line with flowrise's medians: the
//! stages of a cold solve (new workspace) and the warm drag cycle.
//!
//! Run: `cargo bench -p flowrise-core --bench side_by_side -- <dir> <repeat> <emitters>...`
//! (emitters one of 100, 1000, 10000, 50000, 200000). For profiling the drag alone,
//! `SIDE_BY_SIDE_WARM_REPEAT=N` runs the warm drag cycle N times instead of
//! `<repeat>` times.

#![allow(clippy::expect_used, clippy::unwrap_used)] // reason: benchmark harness, not product code

/// The allocator the flowrise binary uses (app/src/main.rs), so the figures
/// are the product's.
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

use std::time::Instant;

use flowrise_core::design::{SolveOptions, Workspace, solve_project};
use flowrise_core::export::{ExportOptions, network_to_inp};
use flowrise_core::generate::{BuildingSpec, generate_building};
use flowrise_core::project::{Edit, NodeKind};

fn median(v: &mut [f64]) -> f64 {
    v.sort_by(f64::total_cmp);
    v[v.len() / 2]
}

fn main() {
    let args: Vec<String> = std::env::args().skip(1).filter(|a| !a.starts_with("--")).collect();
    if args.len() < 3 {
        eprintln!("usage: side_by_side <dir> <repeat> <emitters>...");
        return;
    }
    let dir = std::path::PathBuf::from(&args[0]);
    let repeat: usize = args[1].parse().unwrap_or(5).max(1);
    for n in args[2..].iter().filter_map(|a| a.parse::<u32>().ok()) {
        let (floors, per_floor) = match n {
            100 => (5, 20),
            1000 => (10, 100),
            10_000 => (20, 500),
            50_000 => (50, 1000),
            200_000 => (100, 2000),
            _ => (n.div_ceil(100).clamp(1, 200), n.min(100)),
        };
        let project = generate_building(&BuildingSpec::new(floors, per_floor)).expect("generate");
        // The project itself, for the fresh-process comparison (`flowrise solve --json`).
        let ron = dir.join(format!("gen-{n}.ron"));
        std::fs::write(&ron, project.to_ron().expect("ron")).expect("write ron");
        let opts = SolveOptions { matched_physics: true, ..SolveOptions::default() };
        let (mut derive, mut design, mut operate, mut total, mut iters) = (vec![], vec![], vec![], vec![], vec![]);
        let (mut solver, mut w_solver) = (vec![], vec![]);
        let mut last = None;
        for _ in 0..repeat {
            let t = Instant::now();
            let sol = solve_project(&project, &opts, &mut Workspace::default());
            total.push(t.elapsed().as_secs_f64() * 1e3);
            derive.push(sol.timings.derive_ms);
            design.push(sol.timings.design_ms);
            operate.push(sol.timings.operate_ms);
            solver.push(sol.timings.solver_ms);
            iters.push(sol.iterations as f64);
            last = Some(sol);
        }
        let sol = last.expect("solved");
        assert!(!sol.has_errors(), "error findings at {n} emitters");
        let eo = ExportOptions { accuracy: opts.solver.flow_tolerance, ..ExportOptions::default() };
        let inp = dir.join(format!("gen-{n}.inp"));
        std::fs::write(&inp, network_to_inp(&sol, &project.name, &eo).expect("export")).expect("write");
        // Warm drag cycle.
        let mover = project.nodes().find(|x| matches!(x.kind, NodeKind::Emitter(_))).map(|x| x.id).expect("emitter");
        let mut drag = project.clone();
        let mut ws = Workspace::default();
        let _ = solve_project(&drag, &opts, &mut ws);
        let (mut w_op, mut w_total, mut w_it) = (vec![], vec![], vec![]);
        let (mut w_derive, mut w_design) = (vec![], vec![]);
        let warm_repeat = std::env::var("SIDE_BY_SIDE_WARM_REPEAT").ok().and_then(|v| v.parse().ok()).unwrap_or(repeat);
        for i in 0..warm_repeat {
            let dx = if i % 2 == 0 { 0.05 } else { -0.05 };
            let t = Instant::now();
            drag.apply(Edit::MoveNodes { ids: vec![mover], dx_m: dx, dy_m: 0.0 }).expect("move");
            let s = solve_project(&drag, &opts, &mut ws);
            w_total.push(t.elapsed().as_secs_f64() * 1e3);
            w_op.push(s.timings.operate_ms);
            w_solver.push(s.timings.solver_ms);
            w_derive.push(s.timings.derive_ms);
            w_design.push(s.timings.design_ms);
            w_it.push(s.iterations as f64);
        }
        println!(
            "{}",
            serde_json::json!({
                "emitters": n, "inp": inp.display().to_string(), "ron": ron.display().to_string(),
                "links": sol.network.links.len(), "nodes": sol.network.nodes.len(),
                "flow_tolerance": opts.solver.flow_tolerance,
                "cold_derive_ms": median(&mut derive), "cold_design_ms": median(&mut design),
                "cold_operate_ms": median(&mut operate), "cold_total_ms": median(&mut total),
                "cold_iterations": median(&mut iters), "cold_solver_ms": median(&mut solver),
                "warm_derive_ms": median(&mut w_derive), "warm_design_ms": median(&mut w_design),
                "warm_operate_ms": median(&mut w_op), "warm_edit_to_results_ms": median(&mut w_total),
                "warm_iterations": median(&mut w_it), "warm_solver_ms": median(&mut w_solver),
            })
        );
    }
}
