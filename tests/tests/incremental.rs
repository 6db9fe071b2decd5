//! Property test of the incremental edit path (`design::solve_edit`): after
//! any sequence of edits on a generated building, the solution the window
//! gets from the incremental path equals a cold `solve_project` of the same
//! project — flows, pressures, sizes, presettings, lockshield settings, pump
//! duty and findings.
//!
//! Each case draws a building (floors, emitters per floor, direct or
//! reverse return, headers, branch devices) and a sequence of edits from a
//! seeded splitmix64: moves of emitters, junctions and whole groups (the
//! hinted edits of a drag), length overrides set and cleared (hinted),
//! and now and then an edit the hint does not cover (a changed load, a
//! removed emitter) or a hint that does not fit the workspace, which must
//! take the full path. A failure names the seed; replay one case with
//! `FLOWRISE_INCREMENTAL_SEED=<seed>`. Cases: 24 by default,
//! `FLOWRISE_INCREMENTAL_CASES=N` for a longer run.

#![allow(clippy::unwrap_used, clippy::expect_used, clippy::panic)] // reason: test code

use flowrise_core::design::{EditHint, Solution, SolveOptions, Workspace, solve_edit, solve_project};
use flowrise_core::generate::{BranchDevices, BuildingSpec, SplitMix64, generate_building};
use flowrise_core::project::{Edit, NodeId, NodeKind, Project, RunId};

/// Flows and outputs: the two solves start Newton from different flows, so
/// they agree to the solver's tolerance (relative flow change 1e-6), not to
/// the bit.
const FLOW_TOLERANCE: f64 = 1e-5;
/// Design-side quantities (circuit Δp, needed Kv, pump duty) come from the
/// same arithmetic on the same inputs.
const DESIGN_TOLERANCE: f64 = 1e-9;

fn rel(a: f64, b: f64) -> f64 {
    rel_above(a, b, 1e-12)
}

/// Relative difference, with differences below `floor` (a billionth of
/// the largest value of the kind, say: rounding noise on a link that
/// carries nothing) counting as none.
fn rel_above(a: f64, b: f64, floor: f64) -> f64 {
    if (a - b).abs() <= floor {
        return 0.0;
    }
    (a - b).abs() / a.abs().max(b.abs()).max(1e-12)
}

fn uniform(rng: &mut SplitMix64, lo: f64, hi: f64) -> f64 {
    // 53 random bits as a fraction in [0, 1).
    #[allow(clippy::cast_precision_loss)] // reason: 53 bits fit an f64 exactly
    let f = (rng.next_u64() >> 11) as f64 / (1u64 << 53) as f64;
    lo + (hi - lo) * f
}

fn below(rng: &mut SplitMix64, n: usize) -> usize {
    usize::try_from(rng.next_u64() % (n.max(1) as u64)).unwrap()
}

fn building(rng: &mut SplitMix64) -> Project {
    let floors = 1 + u32::try_from(below(rng, 3)).unwrap();
    let per_floor = 5 + u32::try_from(below(rng, 12)).unwrap();
    let mut spec = BuildingSpec::new(floors, per_floor);
    spec.seed = rng.next_u64() % 1000;
    match below(rng, 5) {
        0 => spec.reverse_return = true,
        1 => spec.headers = true,
        _ => {}
    }
    spec.branch_devices = match below(rng, 3) {
        0 => BranchDevices::None,
        1 => BranchDevices::BalancingValves,
        _ => spec.branch_devices,
    };
    generate_building(&spec).unwrap()
}

/// One random edit and its hint (`None`: an edit the hint does not cover).
fn random_edit(rng: &mut SplitMix64, p: &Project) -> (Edit, Option<EditHint>) {
    let nodes: Vec<NodeId> = p.nodes().filter(|n| !matches!(n.kind, NodeKind::Source(_))).map(|n| n.id).collect();
    let runs: Vec<RunId> = p.runs().map(|r| r.id).collect();
    let edit = match below(rng, 10) {
        0..=4 => {
            let id = nodes[below(rng, nodes.len())];
            Edit::MoveNodes { ids: vec![id], dx_m: uniform(rng, -0.8, 0.8), dy_m: uniform(rng, -0.8, 0.8) }
        }
        5 => {
            // A group, as a branch drag moves it.
            let ids = (0..3).map(|_| nodes[below(rng, nodes.len())]).collect();
            Edit::MoveNodes { ids, dx_m: uniform(rng, -0.5, 0.5), dy_m: uniform(rng, -0.5, 0.5) }
        }
        6 | 7 => {
            let id = runs[below(rng, runs.len())];
            let mut props = p.run(id).unwrap().props.clone();
            props.length_override_m = if below(rng, 3) == 0 { None } else { Some(uniform(rng, 0.5, 25.0)) };
            Edit::SetRunProps { id, props }
        }
        8 => {
            // A changed load: not a geometry edit.
            let emitters: Vec<_> = p.nodes().filter(|n| matches!(n.kind, NodeKind::Emitter(_))).collect();
            let n = emitters[below(rng, emitters.len())];
            let mut kind = n.kind.clone();
            if let NodeKind::Emitter(e) = &mut kind {
                e.load_w = (e.load_w * uniform(rng, 0.7, 1.3)).max(50.0);
            }
            Edit::SetNodeKind { id: n.id, kind }
        }
        _ => {
            let emitters: Vec<NodeId> =
                p.nodes().filter(|n| matches!(n.kind, NodeKind::Emitter(_))).map(|n| n.id).collect();
            Edit::RemoveNode(emitters[below(rng, emitters.len())])
        }
    };
    let hint = EditHint::for_edit(p, &edit);
    (edit, hint)
}

fn assert_same(inc: &Solution, cold: &Solution, what: &str) {
    assert_eq!(inc.converged, cold.converged, "{what}: converged");
    assert_eq!(inc.findings.len(), cold.findings.len(), "{what}: findings {:#?}\n{:#?}", inc.findings, cold.findings);
    for (a, b) in inc.findings.iter().zip(&cold.findings) {
        assert_eq!((a.severity, a.kind, a.item), (b.severity, b.kind, b.item), "{what}");
        if !matches!(a.kind, flowrise_core::design::FindingKind::FlowOutOfTolerance) {
            // Operating figures in a message may differ in the last digit.
            assert_eq!(a.message, b.message, "{what}");
        }
    }
    assert_eq!(inc.index_emitter, cold.index_emitter, "{what}: index circuit");
    assert_eq!(inc.pipes.len(), cold.pipes.len(), "{what}: pipes");
    let flow_floor = 1e-9 * cold.pipes.iter().fold(0.0_f64, |m, x| m.max(x.flow_kg_s.abs()));
    let dp_floor = 1e-9 * cold.pipes.iter().fold(0.0_f64, |m, x| m.max(x.dp_pa.abs()));
    for (a, b) in inc.pipes.iter().zip(&cold.pipes) {
        assert_eq!((a.run, a.side, a.size, a.bends_90, a.bends_45), (b.run, b.side, b.size, b.bends_90, b.bends_45));
        assert_eq!(a.length_m.to_bits(), b.length_m.to_bits(), "{what}: length of {:?}", a.run);
        assert!(rel(a.zeta, b.zeta) <= DESIGN_TOLERANCE, "{what}: {a:?} {b:?}");
        assert!(rel_above(a.flow_kg_s, b.flow_kg_s, flow_floor) <= FLOW_TOLERANCE, "{what}: {a:?} {b:?}");
        assert!(rel_above(a.dp_pa, b.dp_pa, dp_floor) <= FLOW_TOLERANCE, "{what}: {a:?} {b:?}");
    }
    assert_eq!(inc.emitters.len(), cold.emitters.len(), "{what}: emitters");
    for (a, b) in inc.emitters.iter().zip(&cold.emitters) {
        assert_eq!((a.id, &a.presetting, &a.lockshield), (b.id, &b.presetting, &b.lockshield), "{what}");
        assert!(rel(a.circuit_dp_open_pa, b.circuit_dp_open_pa) <= DESIGN_TOLERANCE, "{what}: {a:?} {b:?}");
        assert!(rel(a.kv_needed_m3_h, b.kv_needed_m3_h) <= DESIGN_TOLERANCE, "{what}: {a:?} {b:?}");
        assert!(rel(a.flow_kg_s, b.flow_kg_s) <= FLOW_TOLERANCE, "{what}: {a:?} {b:?}");
        assert!(rel(a.output_w, b.output_w) <= FLOW_TOLERANCE, "{what}: {a:?} {b:?}");
        assert!((a.return_c - b.return_c).abs() <= 1e-4, "{what}: {a:?} {b:?}");
    }
    let (pa, pb) = (inc.pump.as_ref(), cold.pump.as_ref());
    assert_eq!(pa.is_some(), pb.is_some(), "{what}: pump");
    if let (Some(a), Some(b)) = (pa, pb) {
        assert!(rel(a.duty_head_pa, b.duty_head_pa) <= DESIGN_TOLERANCE, "{what}: {a:?} {b:?}");
        assert!(rel(a.operating_flow_m3_h, b.operating_flow_m3_h) <= FLOW_TOLERANCE, "{what}: {a:?} {b:?}");
    }
    assert_eq!(inc.node_pressures_pa.len(), cold.node_pressures_pa.len(), "{what}");
    let scale = cold.node_pressures_pa.iter().fold(1.0_f64, |m, x| m.max(x.abs()));
    for (a, b) in inc.node_pressures_pa.iter().zip(&cold.node_pressures_pa) {
        assert!((a - b).abs() <= FLOW_TOLERANCE * scale, "{what}: pressure {a} vs {b}");
    }
}

/// Returns (edits solved, of which on the incremental path).
fn run_case(seed: u64) -> (usize, usize) {
    let mut rng = SplitMix64::new(seed);
    let mut p = building(&mut rng);
    let opts = SolveOptions { matched_physics: below(&mut rng, 4) == 0, ..SolveOptions::default() };
    let mut ws = Workspace::for_edits();
    let _ = solve_project(&p, &opts, &mut ws);
    let (mut solved, mut incremental) = (0, 0);
    for step in 0..8 {
        let (edit, hint) = random_edit(&mut rng, &p);
        let what = format!("seed {seed}, step {step}, {edit:?}");
        if p.apply(edit).is_err() {
            // Refused (a move that would make a run too short): the
            // project is unchanged, and so is what the workspace kept.
            continue;
        }
        let inc = match hint {
            // Now and then a hint that does not fit (a revision skipped):
            // the full path, same answer.
            Some(mut h) if below(&mut rng, 8) == 0 => {
                h.from_revision = h.from_revision.wrapping_add(7);
                solve_edit(&p, &opts, &mut ws, &h)
            }
            Some(h) => solve_edit(&p, &opts, &mut ws, &h),
            None => solve_project(&p, &opts, &mut ws),
        };
        incremental += usize::from(inc.timings.incremental);
        solved += 1;
        let cold = solve_project(&p, &opts, &mut Workspace::default());
        assert_same(&inc, &cold, &what);
    }
    (solved, incremental)
}

#[test]
fn incremental_edits_equal_cold_solves() {
    if let Some(seed) = std::env::var("FLOWRISE_INCREMENTAL_SEED").ok().and_then(|s| s.parse().ok()) {
        run_case(seed);
        return;
    }
    let cases: u64 = std::env::var("FLOWRISE_INCREMENTAL_CASES").ok().and_then(|s| s.parse().ok()).unwrap_or(24);
    let (mut solved, mut incremental) = (0, 0);
    for case in 0..cases {
        let (s, i) = run_case(0x5EED_0000 + case);
        solved += s;
        incremental += i;
    }
    println!("{cases} cases: {solved} edits solved, {incremental} on the incremental path");
    // The property means something only if the incremental path ran.
    assert!(incremental * 3 >= solved, "only {incremental} of {solved} edits took the incremental path");
}

/// A hint for exactly one step, on a workspace that kept that step's
/// revision, takes the incremental path; a workspace that keeps nothing,
/// or a project with a different revision, takes the full path.
#[test]
fn the_incremental_path_is_taken_only_when_the_hint_fits() {
    let mut p = generate_building(&BuildingSpec::new(2, 8)).unwrap();
    let opts = SolveOptions::default();
    let mover = p.nodes().find(|n| matches!(n.kind, NodeKind::Emitter(_))).unwrap().id;
    let mut ws = Workspace::for_edits();
    let mut plain = Workspace::default();
    let _ = solve_project(&p, &opts, &mut ws);
    let _ = solve_project(&p, &opts, &mut plain);
    let edit = Edit::MoveNodes { ids: vec![mover], dx_m: 0.3, dy_m: 0.0 };
    let hint = EditHint::for_edit(&p, &edit).unwrap();
    assert_eq!(hint.runs, p.runs_at(mover));
    p.apply(edit).unwrap();
    assert!(solve_edit(&p, &opts, &mut ws, &hint).timings.incremental);
    assert!(!solve_edit(&p, &opts, &mut plain, &hint).timings.incremental, "nothing kept");
    // The same hint again: the workspace now holds the new revision.
    assert!(!solve_edit(&p, &opts, &mut ws, &hint).timings.incremental, "stale hint");
    // Two edits, one merged hint.
    let e1 = Edit::MoveNodes { ids: vec![mover], dx_m: -0.1, dy_m: 0.0 };
    let h1 = EditHint::for_edit(&p, &e1).unwrap();
    p.apply(e1).unwrap();
    let e2 = Edit::MoveNodes { ids: vec![mover], dx_m: 0.0, dy_m: 0.2 };
    let h2 = EditHint::for_edit(&p, &e2).unwrap();
    p.apply(e2).unwrap();
    let both = h1.then(&h2).unwrap();
    assert!(solve_edit(&p, &opts, &mut ws, &both).timings.incremental);
    // Not a geometry edit: no hint.
    let name = Edit::Rename("other".into());
    assert!(EditHint::for_edit(&p, &name).is_none());
}
