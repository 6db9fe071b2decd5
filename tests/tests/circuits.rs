//! Pumped secondary circuits (issue 17): a floor-heating mixing circuit at
//! 35/30 °C off a 55/45 °C radiator network, and pump-only and mixing
//! circuits off a hydraulic separator. Energy balance at the mixing point
//! (c_p: the IAPWS-IF97 mean over the interval, `water::mean_cp_j_kg_k`,
//! itself checked against the `iapws` fixture), each circuit's own pump
//! and index circuit, the merged results.

#![allow(clippy::unwrap_used, clippy::expect_used, clippy::panic)] // reason: test code

use flowrise_core::design::{CircuitResult, Side, Solution, SolveOptions, Workspace, solve_project};
use flowrise_core::emitters::FloorZone;
use flowrise_core::project::{CircuitConnection, LevelId, NodeId, Project, RunId};
use flowrise_core::pump::PumpControl;
use flowrise_core::water;
use flowrise_tests::builder::Builder;

const PUMP: [(f64, f64); 3] = [(0.2, 60.0), (1.5, 50.0), (3.0, 20.0)];

/// Three radiators along a branch and the floor-heating circuit hanging off
/// the first tee: circuit node → header → four loops.
fn radiators(b: &mut Builder, g: LevelId, from: NodeId, x0: f64) {
    let mut prev = from;
    for k in 0..3 {
        let x = x0 + 3.0 * f64::from(k);
        let t = b.junction(g, x, 0.0);
        b.run(prev, t);
        let r = b.radiator(g, x, 3.0, &format!("Bedroom {x}"), 900.0 + 250.0 * f64::from(k), 20.0);
        b.run(t, r);
        prev = t;
    }
}

fn loops(b: &mut Builder, g: LevelId, from: NodeId, x0: f64) {
    let h = b.header(g, x0, -7.0, "Floor header", 6);
    b.run(from, h);
    for k in 0..4 {
        let x = x0 - 3.0 + 2.0 * f64::from(k);
        let load = 450.0 + 50.0 * f64::from(k);
        let l = b.floor_loop(g, x, -10.0, &format!("Living {k}"), load, 20.0, 14.0, FloorZone::Occupied);
        b.run(h, l);
    }
}

fn mixed_project() -> (Project, NodeId, RunId) {
    let mut b = Builder::new("Radiators and a floor-heating mixing circuit");
    b.p.settings.supply_c = 55.0;
    b.p.settings.return_c = 45.0;
    let g = LevelId(0);
    let src = b.source(g, 0.0, 0.0, 40_000.0, PUMP, PumpControl::ConstantDp { setpoint_kpa: 30.0 });
    let j = b.junction(g, 4.0, 0.0);
    b.run(src, j);
    radiators(&mut b, g, j, 6.0);
    let m = b.circuit(g, 4.0, -4.0, "Floor heating", CircuitConnection::MixingValve, (35.0, 30.0));
    let feed = b.run(j, m);
    loops(&mut b, g, m, 4.0);
    (b.p, m, feed)
}

fn solve(p: &Project) -> Solution {
    solve_project(p, &SolveOptions::default(), &mut Workspace::default())
}

fn kg_s(l_h: f64, at_c: f64) -> f64 {
    l_h * water::density_kg_m3(at_c).unwrap() / 3.6e6
}

fn circuit(sol: &Solution, root: NodeId) -> &CircuitResult {
    sol.circuits.iter().find(|c| c.root == root).unwrap()
}

#[test]
fn a_mixing_circuit_balances_energy_at_its_mixing_point() {
    let (p, m, feed_run) = mixed_project();
    let sol = solve(&p);
    assert!(!sol.has_errors(), "{:#?}", sol.findings);
    assert_eq!(sol.circuits.len(), 2);
    let c = circuit(&sol, m);
    assert_eq!(c.connection, Some(CircuitConnection::MixingValve));
    assert!((c.supply_c - 35.0).abs() < 1e-12 && (c.feed_supply_c - 55.0).abs() < 1e-12);
    // Every emitter runs at its circuit's supply temperature.
    let loop_ids: Vec<NodeId> = c.nodes.clone();
    for e in &sol.emitters {
        let want = if loop_ids.contains(&e.id) { 35.0 } else { 55.0 };
        assert!((e.supply_c - want).abs() < 1e-12, "{} at {} °C", e.name, e.supply_c);
    }
    // The circuit's heat is what its loops give.
    let loops_w: f64 = sol.emitters.iter().filter(|e| loop_ids.contains(&e.id)).map(|e| e.output_w).sum();
    assert!((c.heat_w - loops_w).abs() <= 1e-9 * loops_w, "{} vs {loops_w}", c.heat_w);
    // Mixing point: primary flow · c_p · (θ_feed − θ_return) = heat within 0.1 %.
    let m_p = kg_s(c.primary_flow_l_h, c.return_c);
    let cp = water::mean_cp_j_kg_k(c.feed_supply_c, c.operating_return_c).unwrap();
    let q_primary = m_p * cp * (c.feed_supply_c - c.operating_return_c);
    assert!((q_primary / c.heat_w - 1.0).abs() < 1e-3, "primary {q_primary} W, circuit {} W", c.heat_w);
    // … and the secondary flow · c_p · (θ_supply − θ_return) is the same heat.
    let m_s = kg_s(c.flow_l_h, c.return_c);
    let cp_s = water::mean_cp_j_kg_k(c.supply_c, c.operating_return_c).unwrap();
    let q_secondary = m_s * cp_s * (c.supply_c - c.operating_return_c);
    assert!((q_secondary / c.heat_w - 1.0).abs() < 1e-3, "secondary {q_secondary} W, circuit {} W", c.heat_w);
    assert!(m_p < m_s, "a mixing circuit draws less primary water than it circulates");
    // The primary network really carries that flow to the circuit.
    let pipe = sol.run_pipes(feed_run).find(|x| x.side == Side::Supply).unwrap();
    assert!((pipe.flow_kg_s / m_p - 1.0).abs() < 1e-6, "{} vs {m_p}", pipe.flow_kg_s);
    // Its own pump and index circuit, inside its own links.
    let pump = c.pump.as_ref().unwrap();
    assert!(pump.duty_head_pa > 0.0 && pump.design_flow_kg_s > m_p);
    assert!(loop_ids.contains(&c.index_emitter.unwrap()));
    assert!(c.index_path.iter().all(|&l| (c.links.0..c.links.1).contains(&l)), "{:?} {:?}", c.index_path, c.links);
    // The project's heat load counts each room once.
    let loads: f64 = sol.emitters.iter().map(|e| e.load_w).sum();
    assert!((sol.heat_load_w - loads).abs() < 1e-6);
    assert_eq!(sol.emitters.len(), 7);
}

#[test]
fn a_starved_mixing_circuit_has_a_finding() {
    let (mut p, m, _) = mixed_project();
    // A primary pump far too weak for the mixing valve's port.
    let mut f = p.to_file();
    for n in &mut f.nodes {
        if let flowrise_core::project::NodeKind::Source(src) = &mut n.kind {
            src.pump.control = PumpControl::FixedSpeed;
            src.pump.curve_points = [(0.05, 0.02), (0.3, 0.015), (0.6, 0.005)];
        }
    }
    p = Project::from_file(f).unwrap();
    let sol = solve(&p);
    let c = circuit(&sol, m);
    assert!(c.feed_dp_needed_pa > c.feed_dp_available_pa, "{c:?}");
    assert!(sol.findings.iter().any(|x| x.kind == flowrise_core::design::FindingKind::CircuitFeedShort));
}

#[test]
fn a_separator_feeds_a_pump_only_and_a_mixing_circuit() {
    let mut b = Builder::new("Separator with two circuits");
    b.p.settings.supply_c = 55.0;
    b.p.settings.return_c = 45.0;
    let g = LevelId(0);
    let src = b.source(g, 0.0, 0.0, 40_000.0, PUMP, PumpControl::ConstantDp { setpoint_kpa: 20.0 });
    let s = b.separator(g, 2.0, 0.0, "Separator");
    b.run(src, s);
    let direct = b.circuit(g, 4.0, 2.0, "Radiators", CircuitConnection::Direct, (55.0, 45.0));
    let to_direct = b.run(s, direct);
    radiators(&mut b, g, direct, 6.0);
    let mix = b.circuit(g, 4.0, -4.0, "Floor", CircuitConnection::MixingValve, (35.0, 30.0));
    b.run(s, mix);
    loops(&mut b, g, mix, 4.0);
    let sol = solve(&b.p);
    assert!(!sol.has_errors(), "{:#?}", sol.findings);
    assert_eq!(sol.circuits.len(), 3);
    let d = circuit(&sol, direct);
    assert_eq!(d.separator, Some(s));
    assert!((d.supply_c - 55.0).abs() < 1e-12);
    // The primary carries the heat of both circuits.
    let total: f64 = sol.circuits[1..].iter().map(|c| c.heat_w).sum();
    assert!((sol.circuits[0].heat_w - total).abs() <= 1e-6 * total);
    // A device between the separator and a circuit does nothing: it says so.
    let mut with_device = b.p.clone();
    let device = Some(flowrise_core::project::BranchDevice::BalancingValve { family: None, setting: None });
    with_device
        .apply(flowrise_core::project::Edit::SetRunProps {
            id: to_direct,
            props: flowrise_core::project::RunProps { device, ..Default::default() },
        })
        .unwrap();
    let sol2 = solve(&with_device);
    assert!(sol2.findings.iter().any(|f| f.kind == flowrise_core::design::FindingKind::DeviceIgnored
        && f.item == flowrise_core::design::ItemRef::Run(to_direct)));
    // A primary pump far too weak for the separator gives the finding.
    let mut f = b.p.to_file();
    for n in &mut f.nodes {
        if let flowrise_core::project::NodeKind::Source(src) = &mut n.kind {
            src.pump.control = PumpControl::FixedSpeed;
            src.pump.curve_points = [(0.01, 0.5), (0.05, 0.4), (0.1, 0.1)];
        }
    }
    let weak = solve(&Project::from_file(f).unwrap());
    assert!(
        weak.findings.iter().any(|x| x.kind == flowrise_core::design::FindingKind::SeparatorFlowShort),
        "{:#?}",
        weak.findings
    );
}

#[test]
fn a_pump_only_circuit_off_the_network_is_refused_with_a_finding() {
    let mut b = Builder::new("Misplaced pump");
    let g = LevelId(0);
    let src = b.source(g, 0.0, 0.0, 40_000.0, PUMP, PumpControl::FixedSpeed);
    let c = b.circuit(g, 3.0, 0.0, "Booster", CircuitConnection::Direct, (70.0, 55.0));
    b.run(src, c);
    radiators(&mut b, g, c, 5.0);
    let sol = solve(&b.p);
    assert!(sol.findings.iter().any(|x| x.kind == flowrise_core::design::FindingKind::CircuitConnectionInvalid
        && x.item == flowrise_core::design::ItemRef::Node(c)));
}

/// Part load works per circuit: each case reports every circuit's pump
/// and its rooms' worst over-supply, and closing the floor loops changes the
/// floor circuit's pump point but not the primary's heat balance rules.
#[test]
fn part_load_reports_each_circuit() {
    let (p, m, _) = mixed_project();
    let sol = solve(&p);
    let loops: std::collections::BTreeSet<NodeId> =
        sol.emitters.iter().filter(|e| circuit(&sol, m).nodes.contains(&e.id)).map(|e| e.id).take(2).collect();
    let cases = flowrise_core::sweep::part_load(&p, &loops).unwrap();
    assert_eq!(cases.len(), 3);
    for c in &cases {
        assert_eq!(c.circuits.len(), 2, "{}", c.control);
        let floor = c.circuits.iter().find(|x| x.root == m.to_string()).unwrap();
        let design = circuit(&sol, m).pump.as_ref().unwrap();
        // Two of four loops shut: the circuit pump moves less water.
        assert!(floor.pump_flow_l_h < design.operating_flow_m3_h * 1000.0, "{floor:?}");
        assert!(floor.worst_over_supply > 0.0);
    }
}

/// A file written before run devices and pumped circuits existed (by the
/// build at commit 5bb67e7, kept in tests/fixtures) still loads, designs
/// without errors and is written back with no device or circuit field.
#[test]
fn a_file_from_before_devices_and_circuits_still_loads() {
    let path = flowrise_tests::repo_root().join("tests/fixtures/written-before-devices-and-circuits.ron");
    let text = std::fs::read_to_string(&path).unwrap();
    assert!(!text.contains("device:") && !text.contains("Circuit(("), "the fixture predates both");
    let p = Project::load(&path).unwrap();
    let sol = solve(&p);
    assert!(!sol.has_errors(), "{:#?}", sol.findings);
    assert!(sol.circuits.is_empty() && sol.devices.is_empty());
    let again = p.to_ron().unwrap();
    assert!(!again.contains("device:") && !again.contains("Circuit(("));
    assert_eq!(Project::from_ron(&again).unwrap(), p);
}

/// Odd layouts never panic and every problem names an item: a circuit with
/// nothing behind it, a separator with nothing behind it, a circuit inside
/// a circuit, a circuit behind a separator behind a circuit.
#[test]
fn odd_circuit_layouts_are_named_not_fatal() {
    let g = LevelId(0);
    // A circuit with nothing behind it and an empty separator.
    let mut b = Builder::new("Empty circuit");
    let src = b.source(g, 0.0, 0.0, 40_000.0, PUMP, PumpControl::FixedSpeed);
    let j = b.junction(g, 3.0, 0.0);
    b.run(src, j);
    radiators(&mut b, g, j, 5.0);
    let c = b.circuit(g, 3.0, -3.0, "Nothing", CircuitConnection::MixingValve, (40.0, 30.0));
    b.run(j, c);
    let s = b.separator(g, 3.0, 3.0, "Lonely");
    b.run(j, s);
    let sol = solve(&b.p);
    for id in [c, s] {
        assert!(
            sol.findings.iter().any(|f| f.item == flowrise_core::design::ItemRef::Node(id)),
            "{id}: {:#?}",
            sol.findings
        );
    }
    // Nested: primary → mixing circuit (45/35) → mixing circuit (30/25)
    // → loops; and a separator inside the first circuit feeding a pump-only one.
    let mut b = Builder::new("Nested circuits");
    b.p.settings.supply_c = 60.0;
    b.p.settings.return_c = 45.0;
    let src = b.source(g, 0.0, 0.0, 40_000.0, PUMP, PumpControl::ConstantDp { setpoint_kpa: 30.0 });
    let outer = b.circuit(g, 2.0, 0.0, "Outer", CircuitConnection::MixingValve, (45.0, 35.0));
    b.run(src, outer);
    let j = b.junction(g, 4.0, 0.0);
    b.run(outer, j);
    radiators(&mut b, g, j, 6.0);
    let inner = b.circuit(g, 4.0, -4.0, "Inner", CircuitConnection::Injection, (32.0, 27.0));
    b.run(j, inner);
    loops(&mut b, g, inner, 4.0);
    let sol = solve(&b.p);
    assert!(!sol.has_errors(), "{:#?}", sol.findings);
    assert_eq!(sol.circuits.len(), 3);
    assert_eq!(circuit(&sol, inner).parent, Some(outer));
    // Each feed's primary flow carries its heat from its feed's supply.
    for c in &sol.circuits[1..] {
        let m_p = kg_s(c.primary_flow_l_h, c.return_c);
        let cp = water::mean_cp_j_kg_k(c.feed_supply_c, c.operating_return_c).unwrap();
        let q = m_p * cp * (c.feed_supply_c - c.operating_return_c);
        assert!((q / c.heat_w - 1.0).abs() < 1e-3, "{}: {q} vs {}", c.name, c.heat_w);
    }
    // The outer circuit carries the inner one's heat.
    let (o, i) = (circuit(&sol, outer), circuit(&sol, inner));
    let own: f64 = sol.emitters.iter().filter(|e| o.nodes.contains(&e.id)).map(|e| e.output_w).sum();
    assert!((o.heat_w - own - i.heat_w).abs() <= 1e-6 * o.heat_w);
}

/// The project's results stay in the order their lookups rely on after
/// the circuits are merged: emitters by id, pipes by run then side (both
/// looked up by binary search, `Solution::emitter` and `run_pipes`).
#[test]
fn merged_results_are_in_lookup_order() {
    let (p, _, _) = mixed_project();
    let sol = solve(&p);
    assert!(!sol.circuits.is_empty(), "a project with pumped circuits");
    assert!(sol.emitters.windows(2).all(|w| w[0].id < w[1].id));
    assert!(sol.pipes.windows(2).all(|w| (w[0].run, w[0].side) < (w[1].run, w[1].side)));
    for run in p.runs() {
        let found: Vec<_> = sol.run_pipes(run.id).map(|x| (x.run, x.side)).collect();
        let scanned: Vec<_> = sol.pipes.iter().filter(|x| x.run == run.id).map(|x| (x.run, x.side)).collect();
        assert_eq!(found, scanned, "{:?}", run.id);
    }
    for e in &sol.emitters {
        assert_eq!(sol.emitter(e.id).map(|x| x.id), Some(e.id));
    }
}
