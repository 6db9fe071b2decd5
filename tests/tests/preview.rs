//! Drag previews (`design::solve_preview`): while a node is dragged the
//! window shows the operating solve of the last design with the moved runs
//! at their new lengths. That is, by definition, the last design frozen
//! into the project (`design::freeze_edit`: sizes, presettings, lockshield
//! and device settings, the pump's set-point) and solved in installed mode
//! with the new geometry — a cold, independent path through the whole
//! engine. These tests hold the preview to it, and check when a preview is
//! refused (the caller then solves fully).

#![allow(clippy::unwrap_used, clippy::expect_used, clippy::panic)] // reason: test code

use flowrise_core::design::{
    EditHint, HELD_DP_TOLERANCE_PA, PREVIEW_HELD_DP_TOLERANCE_PA, Solution, SolveOptions, Workspace, freeze_edit,
    solve_edit, solve_preview, solve_project,
};
use flowrise_core::generate::{BranchDevices, BuildingSpec, generate_building};
use flowrise_core::project::{BranchDevice, Edit, NodeId, NodeKind, Project};

/// Without Δp controllers both solves agree to the solver's tolerance
/// (relative flow change 1e-6; they start Newton from different flows).
const FLOW_TOLERANCE: f64 = 1e-5;
/// With controllers the preview starts their regulation where the last
/// solve left it and stops within `PREVIEW_HELD_DP_TOLERANCE_PA` (10 Pa) of
/// what each holds; the installed-mode solve starts from their design
/// openings and stops within `HELD_DP_TOLERANCE_PA` (1 Pa). Two held Δp
/// then differ by up to 11 Pa: on the smallest set-point a catalog
/// controller takes, 5 kPa (assets/controllers/dp-controllers.ron),
/// 2.2e-3, and a branch's flow (∝ √Δp) by half of that.
const CONTROLLED_FLOW_TOLERANCE: f64 =
    0.5 * (PREVIEW_HELD_DP_TOLERANCE_PA + HELD_DP_TOLERANCE_PA) / SMALLEST_SETPOINT_PA;
const SMALLEST_SETPOINT_PA: f64 = 5_000.0;

fn rel(a: f64, b: f64, floor: f64) -> f64 {
    if (a - b).abs() <= floor {
        return 0.0;
    }
    (a - b).abs() / a.abs().max(b.abs())
}

fn emitters(p: &Project) -> Vec<NodeId> {
    p.nodes().filter(|n| matches!(n.kind, NodeKind::Emitter(_))).map(|n| n.id).collect()
}

/// Move `ids` one after the other (a drag's frames), previewing each.
fn drag(p: &mut Project, ws: &mut Workspace, ids: &[NodeId], opts: &SolveOptions) -> Option<Solution> {
    let mut last = None;
    for (k, &id) in ids.iter().enumerate() {
        let dx = if k % 2 == 0 { 0.8 } else { -0.3 };
        let edit = Edit::MoveNodes { ids: vec![id], dx_m: dx, dy_m: 0.4 };
        let hint = EditHint::for_edit(p, &edit).unwrap();
        p.apply(edit).unwrap();
        last = Some(solve_preview(p, opts, ws, &hint)?);
    }
    last
}

/// The preview's operating figures against the frozen design solved cold;
/// its design figures against the design it previews.
fn assert_preview_is_frozen_design(preview: &Solution, frozen: &Solution, design: &Solution, tolerance: f64) {
    assert!(preview.preview, "marked as a preview");
    assert!(preview.converged && frozen.converged);
    let flow_floor = 1e-9 * frozen.pipes.iter().fold(0.0_f64, |m, x| m.max(x.flow_kg_s.abs()));
    assert_eq!(preview.pipes.len(), frozen.pipes.len());
    for (a, b) in preview.pipes.iter().zip(&frozen.pipes) {
        assert_eq!((a.run, a.side, a.size), (b.run, b.side, b.size));
        assert!(
            (a.length_m - b.length_m).abs() < 1e-12,
            "{:?} {:?}: length {} vs {}",
            a.run,
            a.side,
            a.length_m,
            b.length_m
        );
        assert!(rel(a.flow_kg_s, b.flow_kg_s, flow_floor) <= tolerance, "{a:?}\n{b:?}");
    }
    for ((a, b), d) in preview.emitters.iter().zip(&frozen.emitters).zip(&design.emitters) {
        assert_eq!(a.id, b.id);
        assert_eq!((&a.presetting, &a.lockshield), (&d.presetting, &d.lockshield), "the design's settings");
        assert!(rel(a.flow_kg_s, b.flow_kg_s, 1e-12) <= tolerance, "{a:?}\n{b:?}");
        assert!(rel(a.output_w, b.output_w, 1e-9) <= tolerance, "{a:?}\n{b:?}");
    }
    let (a, b) = (preview.pump.as_ref().unwrap(), frozen.pump.as_ref().unwrap());
    assert!(rel(a.operating_flow_m3_h, b.operating_flow_m3_h, 1e-12) <= tolerance, "{a:?}\n{b:?}");
    assert!(rel(a.operating_head_pa, b.operating_head_pa, 1e-9) <= tolerance, "{a:?}\n{b:?}");
    assert_eq!(preview.index_emitter, design.index_emitter, "the design's index circuit");
}

#[test]
fn previews_equal_the_frozen_design_solved() {
    let opts = SolveOptions::default();
    for (devices, headers, reverse_return) in [
        (BranchDevices::None, false, false),
        (BranchDevices::DpControllers, false, false),
        (BranchDevices::BalancingValves, false, false),
        (BranchDevices::DpControllers, true, false),
        (BranchDevices::None, false, true),
    ] {
        let mut spec = BuildingSpec::new(3, 14);
        spec.branch_devices = devices;
        spec.headers = headers;
        spec.reverse_return = reverse_return;
        let mut p = generate_building(&spec).unwrap();
        let mut ws = Workspace::for_edits();
        let design = solve_project(&p, &opts, &mut ws);
        let before = p.clone();
        let all = emitters(&p);
        let moved = [all[0], all[5], all[all.len() - 1], all[0]];
        let preview = drag(&mut p, &mut ws, &moved, &opts).expect("a preview");
        let frozen_project = frozen(&before, &design, &p);
        let frozen = solve_project(&frozen_project, &opts, &mut Workspace::default());
        let tolerance =
            if devices == BranchDevices::DpControllers { CONTROLLED_FLOW_TOLERANCE } else { FLOW_TOLERANCE };
        assert_preview_is_frozen_design(&preview, &frozen, &design, tolerance);
        // The drag ends: the full design of the moved project, on the
        // incremental path from the revision the previews started at,
        // equals a cold solve.
        let all_moves =
            EditHint { from_revision: before.revision, to_revision: p.revision, runs: moved_runs(&p, &moved) };
        let released = solve_edit(&p, &opts, &mut ws, &all_moves);
        assert!(released.timings.incremental && !released.preview);
        let cold = solve_project(&p, &opts, &mut Workspace::default());
        for (a, b) in released.emitters.iter().zip(&cold.emitters) {
            assert_eq!((a.id, &a.presetting, &a.lockshield), (b.id, &b.presetting, &b.lockshield));
            assert!(rel(a.flow_kg_s, b.flow_kg_s, 1e-12) <= FLOW_TOLERANCE, "{a:?}\n{b:?}");
        }
    }
}

/// `moved` (the project after the drag) with the design of `before`
/// frozen into it; each controller keeps its set-point unrounded (the
/// frozen setting shows it to the 0.1 kPa of a dial).
fn frozen(before: &Project, design: &Solution, moved: &Project) -> Project {
    let mut q = moved.clone();
    q.apply(freeze_edit(before, design)).unwrap();
    for d in &design.devices {
        let Some(run) = q.run(d.run) else { continue };
        let mut props = run.props.clone();
        if let Some(BranchDevice::DpController { setpoint_kpa, .. }) = &mut props.device {
            *setpoint_kpa = Some(d.setpoint_kpa);
            q.apply(Edit::SetRunProps { id: d.run, props }).unwrap();
        }
    }
    q
}

fn moved_runs(p: &Project, ids: &[NodeId]) -> Vec<flowrise_core::project::RunId> {
    let mut runs: Vec<_> = ids.iter().flat_map(|&id| p.runs_at(id)).collect();
    runs.sort_unstable();
    runs.dedup();
    runs
}

/// A move by nothing previews the design itself: the same flows and the
/// same findings as the full solve.
#[test]
fn a_preview_of_no_move_is_the_design() {
    let opts = SolveOptions::default();
    let mut p = generate_building(&BuildingSpec::new(2, 12)).unwrap();
    let mut ws = Workspace::for_edits();
    let design = solve_project(&p, &opts, &mut ws);
    let id = emitters(&p)[3];
    let edit = Edit::MoveNodes { ids: vec![id], dx_m: 0.0, dy_m: 0.0 };
    let hint = EditHint::for_edit(&p, &edit).unwrap();
    p.apply(edit).unwrap();
    let preview = solve_preview(&p, &opts, &mut ws, &hint).expect("a preview");
    let keys = |s: &Solution| s.findings.iter().map(|f| (f.severity, f.kind, f.item)).collect::<Vec<_>>();
    assert_eq!(keys(&preview), keys(&design));
    for (a, b) in preview.emitters.iter().zip(&design.emitters) {
        assert!(rel(a.flow_kg_s, b.flow_kg_s, 1e-12) <= CONTROLLED_FLOW_TOLERANCE, "{a:?}\n{b:?}");
    }
}

/// Refused: no full solve kept (a plain workspace), a hint that does not
/// start at the kept revision.
#[test]
fn a_preview_needs_the_design_it_previews() {
    let opts = SolveOptions::default();
    let mut p = generate_building(&BuildingSpec::new(2, 8)).unwrap();
    let id = emitters(&p)[2];
    let mut plain = Workspace::default();
    let mut ws = Workspace::for_edits();
    let _ = solve_project(&p, &opts, &mut plain);
    let _ = solve_project(&p, &opts, &mut ws);
    let edit = Edit::MoveNodes { ids: vec![id], dx_m: 0.5, dy_m: 0.0 };
    let hint = EditHint::for_edit(&p, &edit).unwrap();
    p.apply(edit).unwrap();
    assert!(solve_preview(&p, &opts, &mut plain, &hint).is_none(), "nothing kept");
    assert!(solve_preview(&p, &opts, &mut ws, &hint).is_some());
    assert!(solve_preview(&p, &opts, &mut ws, &hint).is_none(), "stale hint");
    // After a full solve previews start again.
    let _ = solve_project(&p, &opts, &mut ws);
    let edit = Edit::MoveNodes { ids: vec![id], dx_m: -0.5, dy_m: 0.0 };
    let hint = EditHint::for_edit(&p, &edit).unwrap();
    p.apply(edit).unwrap();
    assert!(solve_preview(&p, &opts, &mut ws, &hint).is_some());
}
