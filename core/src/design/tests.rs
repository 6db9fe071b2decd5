//! Tests of the design chain: warm solves agree with cold ones, pipe
//! results from the solver's drops.

use super::*;
use crate::friction::{friction_gradient_pa_m, pipe_dp};
use crate::generate::{BuildingSpec, generate_building};
use crate::network::LinkLaw;
use crate::project::{Edit, NodeKind};

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / a.abs().max(b.abs()).max(1e-12)
}

/// A solve with a workspace kept from earlier solves (caches, warm
/// start) must give the cold solve's answer within the solver tolerance:
/// the same sizes, presettings and findings, flows and outputs within
/// 1e-5 relative.
#[test]
fn warm_solves_after_drags_agree_with_cold_solves() {
    for spec in [
        BuildingSpec::new(3, 12),
        BuildingSpec { reverse_return: true, ..BuildingSpec::new(2, 15) },
        BuildingSpec { headers: true, ..BuildingSpec::new(2, 12) },
    ] {
        let mut p = generate_building(&spec).unwrap();
        for matched in [false, true] {
            let opts = SolveOptions { matched_physics: matched, ..SolveOptions::default() };
            let mut ws = Workspace::default();
            let _ = solve_project(&p, &opts, &mut ws);
            let movers: Vec<NodeId> =
                p.nodes().filter(|n| matches!(n.kind, NodeKind::Emitter(_))).map(|n| n.id).step_by(7).collect();
            for (i, &id) in movers.iter().enumerate() {
                let dx = if i % 2 == 0 { 0.4 } else { -0.25 };
                p.apply(Edit::MoveNodes { ids: vec![id], dx_m: dx, dy_m: 0.1 }).unwrap();
                let warm = solve_project(&p, &opts, &mut ws);
                let cold = solve_project(&p, &opts, &mut Workspace::default());
                assert!(warm.converged && cold.converged);
                assert_eq!(warm.findings.len(), cold.findings.len(), "{spec:?}");
                for (a, b) in warm.findings.iter().zip(&cold.findings) {
                    assert_eq!((a.severity, a.item), (b.severity, b.item));
                }
                assert_eq!(warm.pipes.len(), cold.pipes.len());
                for (a, b) in warm.pipes.iter().zip(&cold.pipes) {
                    assert_eq!((a.run, a.side, &a.size), (b.run, b.side, &b.size));
                    assert!(rel(a.flow_kg_s, b.flow_kg_s) < 1e-5, "{a:?} {b:?}");
                    assert!(rel(a.dp_pa, b.dp_pa) < 1e-5, "{a:?} {b:?}");
                    assert!(rel(a.gradient_pa_m, b.gradient_pa_m) < 1e-5, "{a:?} {b:?}");
                }
                for (a, b) in warm.emitters.iter().zip(&cold.emitters) {
                    assert_eq!((a.id, &a.presetting), (b.id, &b.presetting));
                    assert!(rel(a.flow_kg_s, b.flow_kg_s) < 1e-5, "{a:?} {b:?}");
                    assert!(rel(a.output_w, b.output_w) < 1e-5, "{a:?} {b:?}");
                    assert!((a.return_c - b.return_c).abs() < 1e-4, "{a:?} {b:?}");
                }
            }
        }
    }
}

/// The gradient taken from the solver's pressure drop (local losses
/// removed) equals the friction gradient evaluated directly.
#[test]
fn pipe_results_from_solver_drops_match_direct_evaluation() {
    let p = generate_building(&BuildingSpec::new(2, 10)).unwrap();
    let sol = solve_project(&p, &SolveOptions::default(), &mut Workspace::default());
    for pr in &sol.pipes {
        let LinkLaw::Pipe(h) = &sol.network.links[pr.link].law else { panic!("pipe link") };
        let m = sol.link_flows_kg_s[pr.link];
        // The same law at the same flow: the same value (to rounding;
        // the solver may carry a law along its slope over a relative
        // flow change ≤ 1e-7, an error below 1e-14 of the drop).
        assert!(rel(pr.dp_pa, pipe_dp(h, m).0) < 1e-12, "{pr:?}");
        assert!(rel(pr.gradient_pa_m, friction_gradient_pa_m(h, m.abs())) < 1e-9, "{pr:?}");
    }
}

/// A workspace for one solve keeps no size or tee cache, and gives the
/// same document as a caching one, bit for bit (the caches only remember).
#[test]
fn a_one_shot_workspace_gives_the_same_solution() {
    for spec in [BuildingSpec::new(3, 12), BuildingSpec { headers: true, ..BuildingSpec::new(2, 12) }] {
        let p = generate_building(&spec).unwrap();
        let mut ws = Workspace::one_shot();
        let a = solve_project(&p, &SolveOptions::default(), &mut ws);
        let b = solve_project(&p, &SolveOptions::default(), &mut Workspace::default());
        let strip = |mut v: serde_json::Value| {
            for k in ["derive_ms", "design_ms", "operate_ms", "operate_solver_ms", "solve_ms"] {
                v["totals"][k] = serde_json::Value::Null;
            }
            v
        };
        assert_eq!(strip(crate::output::solve_json(&p, &a)), strip(crate::output::solve_json(&p, &b)), "{spec:?}");
        assert!(ws.sizes.entries_len() == 0 && ws.tees.entries_len() == 0, "nothing kept");
    }
}
