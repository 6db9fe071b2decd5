//! Criterion benchmarks of the engine on generated buildings of 100, 1,000,
//! 10,000 and 50,000 emitters (see DEVELOPERS.md, "Benchmarks", and
//! docs/benchmarks.md for the recorded figures).
//!
//! Per size: the full pipeline from a cold start (derive + design + operate
//! with a new workspace), the warm edit → results cycle of a drag (move one
//! emitter by ±5 cm, solve with the same workspace: symbolic factor reused,
//! warm start), the same drag on the incremental path (`solve_edit`, see
//! `design/incremental.rs`) and as a drag preview (`solve_preview`, see
//! `design/preview.rs`), load (parse + validate the RON text) and save (write the RON
//! text), and the parts list of a solved project. Sample counts are small so
//! a full run fits in about ten minutes on two cores.
//!
//! Run: `cargo bench -p flowrise-core --bench pipeline` (filter with e.g.
//! `-- emitters_1000`).

#![allow(clippy::expect_used, clippy::unwrap_used)] // reason: benchmark harness, not product code

/// The allocator the flowrise binary uses (app/src/main.rs), so the figures
/// are the product's.
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

use std::hint::black_box;
use std::time::Duration;

use criterion::{BenchmarkId, Criterion, criterion_group, criterion_main};
use flowrise_core::design::{EditHint, Solution, SolveOptions, Workspace, solve_edit, solve_preview, solve_project};
use flowrise_core::generate::{BuildingSpec, generate_building};
use flowrise_core::parts::{PartsOptions, parts_list};
use flowrise_core::project::{Edit, NodeId, NodeKind, Project};

/// (floors, emitters per floor) for 100, 1,000, 10,000 and 50,000 emitters.
const SIZES: [(u32, u32); 4] = [(5, 20), (10, 100), (20, 500), (50, 1000)];

fn pipeline(c: &mut Criterion) {
    for (floors, per_floor) in SIZES {
        let n = floors * per_floor;
        let project = generate_building(&BuildingSpec::new(floors, per_floor)).expect("generated building");
        let opts = SolveOptions::default();
        let mut g = c.benchmark_group(format!("emitters_{n}"));
        let (samples, secs) = if n >= 10_000 { (10, 8) } else { (20, 3) };
        g.sample_size(samples).measurement_time(Duration::from_secs(secs)).warm_up_time(Duration::from_secs(1));

        g.bench_function(BenchmarkId::new("solve_cold", n), |b| {
            b.iter(|| black_box(solve_project(&project, &opts, &mut Workspace::default())));
        });

        let mover = project.nodes().find(|x| matches!(x.kind, NodeKind::Emitter(_))).map(|x| x.id).expect("an emitter");
        let mut drag = project.clone();
        let mut ws = Workspace::default();
        let _ = solve_project(&drag, &opts, &mut ws);
        let mut step = 0u64;
        g.bench_function(BenchmarkId::new("drag_edit_to_results", n), |b| {
            b.iter(|| {
                step += 1;
                let dx = if step.is_multiple_of(2) { 0.05 } else { -0.05 };
                drag.apply(Edit::MoveNodes { ids: vec![mover], dx_m: dx, dy_m: 0.0 }).expect("move");
                black_box(solve_project(&drag, &opts, &mut ws))
            });
        });

        // The same drag on the incremental path the window uses
        // (`solve_edit` with the edit's hint, a workspace that keeps the
        // derivation).
        hinted_drag(&mut g, "drag_edit_to_results_incremental", n, &project, mover, |p, ws, hint| {
            let sol = solve_edit(p, &opts, ws, hint);
            assert!(sol.timings.incremental, "the drag took the full path");
            sol
        });
        // The same drag as the window solves it while the pointer is down:
        // a drag preview (`solve_preview`, design/preview.rs) on the last
        // full design.
        hinted_drag(&mut g, "drag_preview", n, &project, mover, |p, ws, hint| {
            solve_preview(p, &opts, ws, hint).expect("a preview")
        });

        let text = project.to_ron().expect("ron");
        g.bench_function(BenchmarkId::new("load", n), |b| {
            b.iter(|| black_box(Project::from_ron(&text).expect("load")))
        });
        g.bench_function(BenchmarkId::new("save_to_text", n), |b| {
            b.iter(|| black_box(project.to_ron().expect("save")))
        });

        let sol = solve_project(&project, &opts, &mut Workspace::default());
        let popts = PartsOptions::default();
        g.bench_function(BenchmarkId::new("parts_list", n), |b| {
            b.iter(|| black_box(parts_list(&project, &sol, &popts).expect("parts")));
        });
        g.finish();
    }
}

/// A drag of `mover` by ±5 cm per iteration on a workspace that keeps the
/// derivation ([`Workspace::for_edits`]), each move solved by `solve` with
/// its edit's hint.
fn hinted_drag(
    g: &mut criterion::BenchmarkGroup<'_, criterion::measurement::WallTime>,
    name: &str,
    n: u32,
    project: &Project,
    mover: NodeId,
    mut solve: impl FnMut(&Project, &mut Workspace, &EditHint) -> Solution,
) {
    let mut moving = project.clone();
    let mut ws = Workspace::for_edits();
    let _ = solve_project(&moving, &SolveOptions::default(), &mut ws);
    let mut step = 0u64;
    g.bench_function(BenchmarkId::new(name, n), |b| {
        b.iter(|| {
            step += 1;
            let dx = if step.is_multiple_of(2) { 0.05 } else { -0.05 };
            let edit = Edit::MoveNodes { ids: vec![mover], dx_m: dx, dy_m: 0.0 };
            let hint = EditHint::for_edit(&moving, &edit).expect("a move has a hint");
            moving.apply(edit).expect("move");
            black_box(solve(&moving, &mut ws, &hint))
        });
    });
}

criterion_group!(benches, pipeline);
criterion_main!(benches);
