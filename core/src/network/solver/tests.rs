//! Unit tests of the solver: input rejection, the link laws, workspace reuse.
//! The physics checks (closed forms, buoyancy, ladders) are in
//! `tests/tests/solver.rs`.

use super::*;
use crate::network::{HydLink, HydNode};

fn node(elevation_m: f64) -> HydNode {
    HydNode { elevation_m, demand_kg_s: 0.0 }
}

fn link(from: usize, to: usize, law: LinkLaw) -> HydLink {
    HydLink { from, to, density_kg_m3: 980.0, law, closed: false }
}

fn quad(r: f64) -> LinkLaw {
    LinkLaw::Quadratic { r_pa_s2_kg2: r }
}

fn pump(a0: f64) -> LinkLaw {
    LinkLaw::Pump {
        a0_pa: a0,
        a1_pa_s_kg: 0.0,
        a2_pa_s2_kg2: 0.0,
        max_curve_pa: None,
        linear_beyond_kg_s: f64::INFINITY,
    }
}

/// Pump 0 → 1, circuit 1 → 0 (reference 0).
fn loop_net(a0: f64, r: f64) -> HydraulicNetwork {
    HydraulicNetwork {
        nodes: vec![node(0.0), node(0.0)],
        links: vec![link(0, 1, pump(a0)), link(1, 0, quad(r))],
        reference_node: 0,
        reference_pressure_pa: 150_000.0,
    }
}

fn run(net: &HydraulicNetwork) -> Result<SolveReport, SolveError> {
    let mut ws = SolverWorkspace::default();
    solve(net, &SolveSettings::default(), &mut ws, None)
}

#[test]
fn rejects_invalid_topology_with_typed_errors() {
    let empty = HydraulicNetwork::default();
    assert!(matches!(run(&empty), Err(SolveError::EmptyNetwork)));

    let mut net = loop_net(10_000.0, 2.5e7);
    net.reference_node = 5;
    assert!(matches!(run(&net), Err(SolveError::ReferenceNodeOutOfRange { reference_node: 5, node_count: 2 })));

    let mut net = loop_net(10_000.0, 2.5e7);
    net.links[1].to = 7;
    assert!(matches!(run(&net), Err(SolveError::LinkEndpointOutOfRange { link: 1, node: 7, .. })));

    let mut net = loop_net(10_000.0, 2.5e7);
    net.links[1].to = 1;
    assert!(matches!(run(&net), Err(SolveError::SelfLoop { link: 1, node: 1 })));

    // Node 2 and 3 joined to each other but not to the rest.
    let mut net = loop_net(10_000.0, 2.5e7);
    net.nodes.push(node(0.0));
    net.nodes.push(node(0.0));
    net.links.push(link(2, 3, quad(1e6)));
    let e = run(&net).unwrap_err();
    assert!(matches!(e, SolveError::NodeNotConnected { node: 2, reference_node: 0 }), "{e}");
    assert!(e.to_string().contains("node 2"), "{e}");
}

#[test]
fn rejects_non_physical_values() {
    let mut net = loop_net(10_000.0, 2.5e7);
    net.nodes[1].elevation_m = f64::NAN;
    assert!(matches!(run(&net), Err(SolveError::InvalidNode { node: 1, source: PhysicsError::NotFinite { .. } })));

    let mut net = loop_net(10_000.0, 2.5e7);
    net.nodes[1].demand_kg_s = f64::INFINITY;
    assert!(matches!(run(&net), Err(SolveError::InvalidNode { node: 1, .. })));

    let net = loop_net(10_000.0, -1.0);
    let e = run(&net).unwrap_err();
    assert!(matches!(e, SolveError::InvalidLink { link: 1, source: PhysicsError::Negative { .. } }), "{e}");

    let net = loop_net(f64::NAN, 2.5e7);
    assert!(matches!(run(&net), Err(SolveError::InvalidLink { link: 0, source: PhysicsError::NotFinite { .. } })));

    let mut net = loop_net(10_000.0, 2.5e7);
    net.links[1].density_kg_m3 = 0.0;
    assert!(matches!(run(&net), Err(SolveError::InvalidLink { link: 1, source: PhysicsError::NotPositive { .. } })));

    let mut net = loop_net(10_000.0, 2.5e7);
    net.links[1].law = LinkLaw::Pipe(crate::friction::PipeHydraulics {
        length_m: 10.0,
        inner_diameter_m: -0.02,
        roughness_m: 1e-5,
        zeta_sum: 0.0,
        density_kg_m3: 980.0,
        viscosity_pa_s: 4e-4,
        friction_law: crate::friction::FrictionLaw::ColebrookWhite,
    });
    assert!(matches!(run(&net), Err(SolveError::InvalidLink { link: 1, .. })));

    let mut net = loop_net(10_000.0, 2.5e7);
    net.reference_pressure_pa = f64::NAN;
    assert!(matches!(run(&net), Err(SolveError::InvalidReferencePressure(_))));
}

#[test]
fn rejects_bad_settings_and_start_flows() {
    let net = loop_net(10_000.0, 2.5e7);
    let mut ws = SolverWorkspace::default();
    for bad in [
        SolveSettings { flow_tolerance: 0.0, ..SolveSettings::default() },
        SolveSettings { pressure_tolerance_pa: f64::NAN, ..SolveSettings::default() },
        SolveSettings { max_iterations: 0, ..SolveSettings::default() },
        SolveSettings { min_slope_ratio: -1.0, ..SolveSettings::default() },
        SolveSettings { min_slope_ratio: 2.0, ..SolveSettings::default() },
        SolveSettings { damping_factor: 1.5, ..SolveSettings::default() },
        SolveSettings { damping_factor: 0.0, ..SolveSettings::default() },
        SolveSettings { initial_flow_kg_s: 0.0, ..SolveSettings::default() },
        SolveSettings { initial_quadratic_dp_pa: -5.0, ..SolveSettings::default() },
        SolveSettings { initial_velocity_m_s: f64::INFINITY, ..SolveSettings::default() },
    ] {
        assert!(matches!(solve(&net, &bad, &mut ws, None), Err(SolveError::InvalidSettings(_))), "{bad:?}");
    }
    let s = SolveSettings::default();
    assert!(matches!(
        solve(&net, &s, &mut ws, Some(&[0.1])),
        Err(SolveError::InitialFlowCount { expected: 2, got: 1 })
    ));
    assert!(matches!(
        solve(&net, &s, &mut ws, Some(&[0.1, f64::NAN])),
        Err(SolveError::InvalidInitialFlow { link: 1, .. })
    ));
    assert!(link_dp(&quad(1.0), f64::NAN).is_err());
    assert!(static_term_pa(-1.0, 0.0, 1.0).is_err());
    assert!(static_term_pa(980.0, f64::NAN, 1.0).is_err());
}

#[test]
fn link_laws() {
    // Quadratic: r·m|m| and 2r|m| (elementary algebra).
    let (dp, d) = link_dp(&quad(1e6), -0.1).unwrap();
    assert!((dp + 1e4).abs() < 1e-9 && (d - 2e5).abs() < 1e-9, "{dp} {d}");
    // Linear below the threshold, continuous at it.
    let m0 = QUADRATIC_LINEAR_BELOW_KG_S;
    let (at, _) = link_dp(&quad(1e6), m0).unwrap();
    let (below, slope) = link_dp(&quad(1e6), m0 * (1.0 - 1e-12)).unwrap();
    assert!((at - below).abs() < 1e-12 * at.abs().max(1e-30) + 1e-18, "{at} {below}");
    assert!(slope > 0.0);
    // Pump: drop = −rise.
    let law = LinkLaw::Pump {
        a0_pa: 30_000.0,
        a1_pa_s_kg: -1000.0,
        a2_pa_s2_kg2: -5000.0,
        max_curve_pa: None,
        linear_beyond_kg_s: f64::INFINITY,
    };
    let (dp, d) = link_dp(&law, 1.0).unwrap();
    assert!((dp + 24_000.0).abs() < 1e-9 && (d - 11_000.0).abs() < 1e-9, "{dp} {d}");
    // Static term: downhill link pushes along it.
    let c = static_term_pa(1000.0, 3.0, 0.0).unwrap();
    assert!((c - 1000.0 * GRAVITY_M_S2 * 3.0).abs() < 1e-9);
}

#[test]
fn workspace_is_reused_and_rebuilt_on_topology_change() {
    let net = loop_net(10_000.0, 2.5e7);
    let mut ws = SolverWorkspace::new(&net).unwrap();
    assert!(ws.matches(&net));
    let s = SolveSettings::default();
    let a = solve(&net, &s, &mut ws, None).unwrap();
    assert!(a.converged && !a.workspace_rebuilt);
    // Values change: reused.
    let mut softer = net.clone();
    softer.links[1].law = quad(1e7);
    let b = solve(&softer, &s, &mut ws, None).unwrap();
    assert!(b.converged && !b.workspace_rebuilt);
    // Topology change: rebuilt, still right.
    let mut bigger = net.clone();
    bigger.nodes.push(node(0.0));
    bigger.links[1] = link(1, 2, quad(1e7));
    bigger.links.push(link(2, 0, quad(1.5e7)));
    assert!(!ws.matches(&bigger));
    let c = solve(&bigger, &s, &mut ws, None).unwrap();
    assert!(c.converged && c.workspace_rebuilt);
    let expected = (10_000.0f64 / 2.5e7).sqrt();
    assert!((c.flows_kg_s[0] - expected).abs() < 1e-6 * expected, "{:?}", c.flows_kg_s);
    assert!(ws.matrix_nonzeros() >= 3 && ws.factor_nonzeros() >= 3);
    // Same counts, one link rewired (its endpoints are compared in the
    // validation pass): rebuilt, and a bad value on an earlier link is
    // still reported after the rebuild.
    let mut rewired = bigger.clone();
    rewired.links[2] = link(0, 2, quad(1.5e7));
    let d = solve(&rewired, &s, &mut ws, None).unwrap();
    assert!(d.converged && d.workspace_rebuilt);
    let mut bad = bigger.clone();
    bad.links[0].density_kg_m3 = -1.0;
    assert!(matches!(solve(&bad, &s, &mut ws, None), Err(SolveError::InvalidLink { link: 0, .. })));
    assert!(ws.matches(&bigger));
}

#[test]
fn single_node_is_trivially_solved() {
    let net = HydraulicNetwork { nodes: vec![node(2.0)], links: vec![], reference_node: 0, reference_pressure_pa: 1e5 };
    let r = run(&net).unwrap();
    assert!(r.converged);
    assert_eq!(r.iterations, 0);
    assert_eq!(r.pressures_pa, vec![1e5]);
}

#[test]
fn demand_in_a_part_cut_off_by_closed_links_is_an_error() {
    let mut net = loop_net(10_000.0, 2.5e7);
    net.nodes.push(HydNode { elevation_m: 0.0, demand_kg_s: 0.01 });
    let mut valve = link(1, 2, quad(1e6));
    valve.closed = true;
    net.links.push(valve);
    assert!(matches!(run(&net), Err(SolveError::DemandInIsolatedPart { node: 2, .. })));
}

/// A pump held at constant Δp above what its curve gives runs on its curve:
/// the bounded law gives the same flow as the curve alone (issue 20,
/// item 3). Closed form: curve 8 kPa − 2000·m² against r·m² with
/// r = 4000 gives m = √(8000/6000).
#[test]
fn a_control_law_above_the_curve_gives_the_curve_result() {
    let curve = [8_000.0, 0.0, -2_000.0];
    let mut net = loop_net(20_000.0, 4_000.0);
    net.links[0].law = LinkLaw::Pump {
        a0_pa: 20_000.0,
        a1_pa_s_kg: 0.0,
        a2_pa_s2_kg2: 0.0,
        max_curve_pa: Some(curve),
        linear_beyond_kg_s: f64::INFINITY,
    };
    let bounded = run(&net).unwrap();
    net.links[0].law = LinkLaw::Pump {
        a0_pa: 8_000.0,
        a1_pa_s_kg: 0.0,
        a2_pa_s2_kg2: -2_000.0,
        max_curve_pa: None,
        linear_beyond_kg_s: f64::INFINITY,
    };
    let on_curve = run(&net).unwrap();
    assert!(bounded.converged && on_curve.converged);
    let exact = (8_000.0_f64 / 6_000.0).sqrt();
    assert!((bounded.flows_kg_s[0] - exact).abs() < 1e-6 * exact, "{}", bounded.flows_kg_s[0]);
    assert!((bounded.flows_kg_s[0] - on_curve.flows_kg_s[0]).abs() < 1e-9);
    // A set-point below the curve is held: 5 kPa against r = 4000.
    net.links[0].law = LinkLaw::Pump {
        a0_pa: 5_000.0,
        a1_pa_s_kg: 0.0,
        a2_pa_s2_kg2: 0.0,
        max_curve_pa: Some(curve),
        linear_beyond_kg_s: f64::INFINITY,
    };
    let held = run(&net).unwrap();
    assert!((held.flows_kg_s[0] - (5_000.0_f64 / 4_000.0).sqrt()).abs() < 1e-6);
}

/// Pump 0 → 1, two parallel resistances 1 → 0 (reference 0).
fn parallel_net() -> HydraulicNetwork {
    HydraulicNetwork {
        nodes: vec![node(0.0), node(3.0)],
        links: vec![link(0, 1, pump(20_000.0)), link(1, 0, quad(2.5e7)), link(1, 0, quad(4.0e7))],
        reference_node: 0,
        reference_pressure_pa: 150_000.0,
    }
}

#[test]
fn naming_the_changed_links_solves_as_a_full_validation_does() {
    let s = SolveSettings::default();
    let mut net = parallel_net();
    let (mut full, mut named) = (SolverWorkspace::default(), SolverWorkspace::default());
    let first = solve(&net, &s, &mut full, None).unwrap();
    // No full validation yet on `named`: it validates everything.
    let _ = solve_changed(&net, &s, &mut named, None, &[]).unwrap();
    net.links[2].law = quad(1.0e7);
    let a = solve(&net, &s, &mut full, Some(&first.flows_kg_s)).unwrap();
    let b = solve_changed(&net, &s, &mut named, Some(&first.flows_kg_s), &[2]).unwrap();
    assert!(a.converged && b.converged);
    assert_eq!(a.flows_kg_s, b.flows_kg_s);
    assert_eq!(a.pressures_pa, b.pressures_pa);
    // A named link out of range: the full path, which rebuilds.
    let c = solve_changed(&net, &s, &mut named, Some(&first.flows_kg_s), &[9]).unwrap();
    assert!(c.workspace_rebuilt);
    // A bad value in a named link is reported as by `solve`.
    net.links[1].law = quad(-1.0);
    assert!(matches!(solve_changed(&net, &s, &mut named, None, &[1]), Err(SolveError::InvalidLink { link: 1, .. })));
}

/// Debug builds hold the caller to its word: a change it did not name is
/// caught by the full pass they run beside the partial one.
#[cfg(debug_assertions)]
#[test]
#[should_panic(expected = "a link changed that the caller did not name")]
fn an_unnamed_change_is_caught_in_debug_builds() {
    let s = SolveSettings::default();
    let mut net = parallel_net();
    let mut ws = SolverWorkspace::default();
    let first = solve(&net, &s, &mut ws, None).unwrap();
    net.links[2].law = quad(1.0e7);
    let _ = solve_changed(&net, &s, &mut ws, Some(&first.flows_kg_s), &[1]);
}
