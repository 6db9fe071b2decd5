//! Where a drag's time goes: generate a building, solve it once, then move
//! one emitter back and forth and print the median of each stage of the
//! re-solve (derive, design, operate, the hydraulic solve inside operate)
//! and of the whole edit → results cycle, for the cold path
//! (`solve_project` with the kept workspace), the incremental path
//! (`solve_edit` with the edit's hint) and the drag preview
//! (`solve_preview`).
//!
//! Run: `cargo run --release -p flowrise-core --example drag_timing -- [floors] [per_floor] [repeat] [source]`
//! (defaults 20 × 500 = 10,000 emitters, 15 repeats; `source` moves the
//! heat source instead of the first emitter; `DRAG_STEP_M` sets the step,
//! default 0.05 m; `DRAG_MODES=2` runs the preview alone; `MATCHED=1` solves with matched physics, as the
//! side-by-side with EPANET does). A profiling aid, not
//! a benchmark: the recorded figures come from criterion
//! (`cargo bench -p flowrise-core --bench pipeline`).

#![allow(clippy::expect_used, clippy::unwrap_used, clippy::print_stdout)] // reason: a developer's example, not product code

use std::time::Instant;

use flowrise_core::design::{EditHint, SolveOptions, Workspace, solve_edit, solve_preview, solve_project};
use flowrise_core::generate::{BuildingSpec, generate_building};
use flowrise_core::project::{Edit, NodeKind};

/// The allocator the flowrise binary uses (app/src/main.rs).
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

fn median(mut v: Vec<f64>) -> f64 {
    v.sort_by(f64::total_cmp);
    v[v.len() / 2]
}

fn main() {
    let args: Vec<u32> = std::env::args().skip(1).filter_map(|a| a.parse().ok()).collect();
    let floors = args.first().copied().unwrap_or(20);
    let per_floor = args.get(1).copied().unwrap_or(500);
    let repeat = args.get(2).copied().unwrap_or(15) as usize;
    let mut p = generate_building(&BuildingSpec::new(floors, per_floor)).expect("generate");
    let opts = SolveOptions { matched_physics: std::env::var_os("MATCHED").is_some(), ..SolveOptions::default() };
    // `source` as a fourth argument moves the heat source (its mains)
    // instead of the first emitter.
    let source = std::env::args().nth(4).is_some_and(|a| a == "source");
    let step: f64 = std::env::var("DRAG_STEP_M").ok().and_then(|s| s.parse().ok()).unwrap_or(0.05);
    let mover = p
        .nodes()
        .find(|x| if source { matches!(x.kind, NodeKind::Source(_)) } else { matches!(x.kind, NodeKind::Emitter(_)) })
        .map(|x| x.id)
        .expect("a node to move");
    // `DRAG_MODES=2` (a list of digits) runs only those paths: 0 full,
    // 1 incremental, 2 preview (for a profile of one of them).
    let modes: Vec<usize> = std::env::var("DRAG_MODES").map_or_else(
        |_| vec![0, 1, 2],
        |s| s.chars().filter_map(|c| c.to_digit(10)).map(|d| d as usize).filter(|&d| d < 3).collect(),
    );
    for mode in modes {
        let mut ws = if mode == 0 { Workspace::default() } else { Workspace::for_edits() };
        let t = Instant::now();
        let first = solve_project(&p, &opts, &mut ws);
        println!(
            "{} emitters, cold solve {:.1} ms ({} findings)",
            floors * per_floor,
            t.elapsed().as_secs_f64() * 1e3,
            first.findings.len()
        );
        let (mut total, mut derive, mut design, mut operate, mut solver) = (vec![], vec![], vec![], vec![], vec![]);
        let (mut runs, mut passes) = (vec![], vec![]);
        for i in 0..repeat {
            let dx = if i % 2 == 0 { step } else { -step };
            let edit = Edit::MoveNodes { ids: vec![mover], dx_m: dx, dy_m: 0.0 };
            let t = Instant::now();
            let hint = EditHint::for_edit(&p, &edit);
            p.apply(edit).expect("move");
            let s = match (&hint, mode) {
                (Some(h), 2) => solve_preview(&p, &opts, &mut ws, h).expect("a preview"),
                (Some(h), 1) => solve_edit(&p, &opts, &mut ws, h),
                _ => solve_project(&p, &opts, &mut ws),
            };
            let timings = s.timings;
            // The result dropped inside the timing, as a benchmark loop
            // drops the last one (the window drops it on the UI thread).
            drop(s);
            total.push(t.elapsed().as_secs_f64() * 1e3);
            derive.push(timings.derive_ms);
            design.push(timings.design_ms);
            operate.push(timings.operate_ms);
            solver.push(timings.solver_ms);
            runs.push(f64::from(timings.solver_runs));
            passes.push(f64::from(timings.operate_passes));
        }
        println!(
            "  {}: edit -> results {:.2} ms; derive {:.2}, design {:.2}, operate {:.2} in {} passes (last pass: solver {:.2} ms in {} Newton solves)",
            ["full re-solve (solve_project)", "incremental (solve_edit)", "drag preview (solve_preview)"][mode],
            median(total),
            median(derive),
            median(design),
            median(operate),
            median(passes),
            median(solver),
            median(runs)
        );
    }
}
