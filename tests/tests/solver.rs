//! Network solver (Global Gradient Algorithm, Todini & Pilati 1988) checked
//! against closed forms, balances and generated networks.
//!
//! The closed forms below are elementary algebra on the link laws
//! (Δp = r·m|m| for a quadratic resistance, Δp_rise = a0 + a1·m + a2·m² for a
//! pump, Δp_static = ρ·g·Δz); no outside data is involved. The balances (mass
//! at every node, pressure around every link and so around every loop) hold
//! for any correct solution.

#![allow(clippy::unwrap_used, clippy::expect_used, clippy::panic)] // reason: test code

use flowrise_core::friction::{PipeHydraulics, pipe_dp};
use flowrise_core::network::solver::{
    NonConvergenceReason, SolveReport, SolveSettings, SolverWorkspace, link_dp, solve,
};
use flowrise_core::network::{GRAVITY_M_S2, HydLink, HydNode, HydraulicNetwork, LinkLaw};
use flowrise_core::water;

const RHO: f64 = 980.0;

fn node(elevation_m: f64) -> HydNode {
    HydNode { elevation_m, demand_kg_s: 0.0 }
}

fn link(from: usize, to: usize, law: LinkLaw) -> HydLink {
    HydLink { from, to, density_kg_m3: RHO, law, closed: false }
}

fn quad(r: f64) -> LinkLaw {
    LinkLaw::Quadratic { r_pa_s2_kg2: r }
}

fn pump(a0: f64, a1: f64, a2: f64) -> LinkLaw {
    LinkLaw::Pump { a0_pa: a0, a1_pa_s_kg: a1, a2_pa_s2_kg2: a2, max_curve_pa: None, linear_beyond_kg_s: f64::INFINITY }
}

fn solve_fresh(net: &HydraulicNetwork) -> SolveReport {
    let mut ws = SolverWorkspace::new(net).unwrap();
    let report = solve(net, &SolveSettings::default(), &mut ws, None).unwrap();
    assert!(report.converged, "not converged: {:?}", report.diagnostic);
    report
}

/// Every node balances (≤ 1e-9 of the largest flow) and every open link
/// satisfies F_k(m_k) = p_i − p_j + c_k (≤ 0.01 Pa), which is loop closure
/// around every independent loop.
fn assert_balanced(net: &HydraulicNetwork, r: &SolveReport) {
    let scale = r.flows_kg_s.iter().fold(0.0f64, |a, m| a.max(m.abs())).max(1e-12);
    let mut balance: Vec<f64> = net.nodes.iter().map(|n| -n.demand_kg_s).collect();
    for (l, &m) in net.links.iter().zip(&r.flows_kg_s) {
        balance[l.from] += m;
        balance[l.to] -= m;
    }
    for (v, b) in balance.iter().enumerate() {
        if v != net.reference_node {
            assert!(b.abs() <= 1e-9 * scale, "node {v} imbalance {b} kg/s (scale {scale})");
        }
    }
    assert!(r.max_mass_imbalance_kg_s <= 1e-9 * scale, "{}", r.max_mass_imbalance_kg_s);
    for (k, (l, &m)) in net.links.iter().zip(&r.flows_kg_s).enumerate() {
        if l.closed {
            assert!(m.abs() < f64::MIN_POSITIVE, "closed link {k} carries {m}");
            continue;
        }
        let (f, _) = link_dp(&l.law, m).unwrap();
        let c = l.density_kg_m3 * GRAVITY_M_S2 * (net.nodes[l.from].elevation_m - net.nodes[l.to].elevation_m);
        let res = f - (r.pressures_pa[l.from] - r.pressures_pa[l.to] + c);
        assert!(res.abs() <= 0.01, "link {k}: residual {res} Pa");
    }
}

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs()
}

#[test]
fn constant_dp_pump_and_one_circuit() {
    // m = sqrt(Δp/r) (elementary algebra).
    let (dp, r) = (12_000.0, 2.5e7);
    let net = HydraulicNetwork {
        nodes: vec![node(0.0), node(1.5)],
        links: vec![link(0, 1, pump(dp, 0.0, 0.0)), link(1, 0, quad(r))],
        reference_node: 0,
        reference_pressure_pa: 150_000.0,
    };
    let rep = solve_fresh(&net);
    assert_balanced(&net, &rep);
    let expected = (dp / r).sqrt();
    assert!(rel(rep.flows_kg_s[0], expected) < 1e-8, "{} vs {expected}", rep.flows_kg_s[0]);
    assert!(rel(rep.flows_kg_s[1], expected) < 1e-8);
    // Pressure at the pump outlet: rise minus the static head of the 1.5 m
    // climb (c = ρg(z_0 − z_1) enters the pump link equation).
    let p_out = 150_000.0 + dp - RHO * GRAVITY_M_S2 * 1.5;
    assert!((rep.pressures_pa[1] - p_out).abs() < 1e-6, "{}", rep.pressures_pa[1]);
    println!("single circuit: {} iterations, history {:?}", rep.iterations, rep.flow_change_history);
}

#[test]
fn constant_dp_pump_and_two_parallel_circuits() {
    // m_i = sqrt(Δp/r_i) (elementary algebra).
    let dp = 20_000.0;
    let (r1, r2) = (1.0e7, 4.0e7);
    let net = HydraulicNetwork {
        nodes: vec![node(0.0), node(0.0)],
        links: vec![link(0, 1, pump(dp, 0.0, 0.0)), link(1, 0, quad(r1)), link(1, 0, quad(r2))],
        reference_node: 0,
        reference_pressure_pa: 100_000.0,
    };
    let rep = solve_fresh(&net);
    assert_balanced(&net, &rep);
    assert!(rel(rep.flows_kg_s[1], (dp / r1).sqrt()) < 1e-8, "{:?}", rep.flows_kg_s);
    assert!(rel(rep.flows_kg_s[2], (dp / r2).sqrt()) < 1e-8, "{:?}", rep.flows_kg_s);
    assert!(rel(rep.flows_kg_s[0], (dp / r1).sqrt() + (dp / r2).sqrt()) < 1e-8);
}

#[test]
fn fixed_speed_pump_curve_against_quadratic_system() {
    // a0 + a1·m + a2·m² = r·m²  ⇒  (r − a2)·m² − a1·m − a0 = 0, positive root
    // m = (a1 + sqrt(a1² + 4(r − a2)a0)) / (2(r − a2)) (elementary algebra).
    let (a0, a1, a2) = (35_000.0, -8_000.0, -30_000.0);
    let r = 60_000.0;
    let net = HydraulicNetwork {
        nodes: vec![node(0.0), node(0.0), node(0.0)],
        // The system split in two series resistances through a middle node.
        links: vec![link(0, 1, pump(a0, a1, a2)), link(1, 2, quad(0.25 * r)), link(2, 0, quad(0.75 * r))],
        reference_node: 0,
        reference_pressure_pa: 100_000.0,
    };
    let rep = solve_fresh(&net);
    assert_balanced(&net, &rep);
    let expected = (a1 + (a1 * a1 + 4.0 * (r - a2) * a0).sqrt()) / (2.0 * (r - a2));
    assert!(rel(rep.flows_kg_s[0], expected) < 1e-8, "{} vs {expected}", rep.flows_kg_s[0]);
    let rise = a0 + a1 * expected + a2 * expected * expected;
    assert!((rep.pressures_pa[1] - 100_000.0 - rise).abs() < 1e-4);
}

#[test]
fn pipe_law_is_wired_to_friction() {
    // Constant-Δp pump against one pipe: the solver's flow must satisfy
    // pipe_dp(m) = Δp, found here by bisection on the law itself.
    let pipe = PipeHydraulics::new(25.0, 0.016, 1.5e-6, 4.0, 977.8, 4.04e-4).unwrap();
    let dp = 6_000.0;
    let net = HydraulicNetwork {
        nodes: vec![node(0.0), node(0.0)],
        links: vec![link(0, 1, pump(dp, 0.0, 0.0)), link(1, 0, LinkLaw::Pipe(pipe))],
        reference_node: 0,
        reference_pressure_pa: 100_000.0,
    };
    let rep = solve_fresh(&net);
    assert_balanced(&net, &rep);
    let (mut lo, mut hi) = (0.0f64, 10.0f64);
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if pipe_dp(&pipe, mid).0 < dp {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    assert!(rel(rep.flows_kg_s[1], lo) < 1e-8, "{} vs {lo}", rep.flows_kg_s[1]);
    println!("pipe circuit: {} iterations, m = {lo} kg/s", rep.iterations);
}

#[test]
fn buoyancy_drives_a_loop_without_pump() {
    // Loop: 0 (bottom left) → 1 (top left) hot riser, 1 → 2 top, 2 → 3 (bottom
    // right) cold down-comer, 3 → 0 bottom. Around the loop the pressures
    // cancel and Σ r_k·m² = Σ c_k = g·H·(ρ_cold − ρ_hot) (elementary algebra),
    // positive: the hot leg rises.
    let h = 9.0;
    let rho_hot = water::density_kg_m3(70.0).unwrap();
    let rho_cold = water::density_kg_m3(40.0).unwrap();
    let rs = [2.0e5, 1.0e5, 3.0e5, 1.5e5];
    let mut links =
        vec![link(0, 1, quad(rs[0])), link(1, 2, quad(rs[1])), link(2, 3, quad(rs[2])), link(3, 0, quad(rs[3]))];
    links[0].density_kg_m3 = rho_hot;
    links[1].density_kg_m3 = rho_hot;
    links[2].density_kg_m3 = rho_cold;
    links[3].density_kg_m3 = rho_cold;
    let net = HydraulicNetwork {
        nodes: vec![node(0.0), node(h), node(h), node(0.0)],
        links,
        reference_node: 0,
        reference_pressure_pa: 200_000.0,
    };
    let rep = solve_fresh(&net);
    assert_balanced(&net, &rep);
    let expected = (GRAVITY_M_S2 * h * (rho_cold - rho_hot) / rs.iter().sum::<f64>()).sqrt();
    assert!(expected > 0.01, "{expected}");
    for m in &rep.flows_kg_s {
        assert!(rel(*m, expected) < 1e-8, "{m} vs {expected}");
    }
    // Reversed temperatures drive it the other way round.
    let mut reversed = net.clone();
    for l in &mut reversed.links[..2] {
        l.density_kg_m3 = rho_cold;
    }
    for l in &mut reversed.links[2..] {
        l.density_kg_m3 = rho_hot;
    }
    let rep = solve_fresh(&reversed);
    assert!(rel(rep.flows_kg_s[0], -expected) < 1e-8, "{:?}", rep.flows_kg_s);
}

/// Fixed-speed pump rise a0 + a2·m² (a2 < 0) feeding parallel circuits r_i:
/// with S = Σ 1/sqrt(r_i), m_total = S·sqrt(Δp) and Δp = a0/(1 − a2·S²)
/// (elementary algebra).
fn parallel_dp(a0: f64, a2: f64, rs: &[f64]) -> f64 {
    let s: f64 = rs.iter().map(|r| 1.0 / r.sqrt()).sum();
    a0 / (1.0 - a2 * s * s)
}

#[test]
fn closing_valves_redistributes_and_raises_dp() {
    let (a0, a2) = (40_000.0, -60_000.0);
    let rs = [1.0e6, 2.0e6, 4.0e6, 8.0e6];
    let mut net = HydraulicNetwork {
        nodes: vec![node(0.0), node(0.0)],
        links: vec![link(0, 1, pump(a0, 0.0, a2))],
        reference_node: 0,
        reference_pressure_pa: 100_000.0,
    };
    for r in rs {
        net.links.push(link(1, 0, quad(r)));
    }
    let mut ws = SolverWorkspace::new(&net).unwrap();
    let s = SolveSettings::default();
    let open = solve(&net, &s, &mut ws, None).unwrap();
    assert!(open.converged);
    assert_balanced(&net, &open);
    let dp_open = open.pressures_pa[1] - open.pressures_pa[0];
    assert!(rel(dp_open, parallel_dp(a0, a2, &rs)) < 1e-8, "{dp_open}");

    // Close circuit 1 (r = 1e6), warm-started from the open answer, as the
    // app would after a click.
    net.links[1].closed = true;
    let one = solve(&net, &s, &mut ws, Some(&open.flows_kg_s)).unwrap();
    assert!(one.converged && !one.workspace_rebuilt);
    assert_balanced(&net, &one);
    assert!(one.flows_kg_s[1].abs() < f64::MIN_POSITIVE);
    let dp_one = one.pressures_pa[1] - one.pressures_pa[0];
    assert!(rel(dp_one, parallel_dp(a0, a2, &rs[1..])) < 1e-8, "{dp_one}");
    assert!(dp_one > dp_open);
    for k in 2..=4 {
        assert!(one.flows_kg_s[k] > open.flows_kg_s[k], "circuit {k} must gain flow");
    }

    // Close another: Δp rises again.
    net.links[2].closed = true;
    let two = solve(&net, &s, &mut ws, Some(&one.flows_kg_s)).unwrap();
    assert!(two.converged);
    assert_balanced(&net, &two);
    let dp_two = two.pressures_pa[1] - two.pressures_pa[0];
    assert!(rel(dp_two, parallel_dp(a0, a2, &rs[2..])) < 1e-8, "{dp_two}");
    assert!(dp_two > dp_one);
}

#[test]
fn a_branch_cut_off_by_closed_valves_is_reported_isolated() {
    // Pump 0 → 1; circuit 1 → 0; branch 1 → 2 (valve) → 3 (emitter) → 0
    // (lockshield). Closing valve and lockshield isolates nodes 2 and 3.
    let mut net = HydraulicNetwork {
        nodes: vec![node(0.0), node(0.0), node(3.0), node(3.0)],
        links: vec![
            link(0, 1, pump(15_000.0, 0.0, -20_000.0)),
            link(1, 0, quad(5.0e6)),
            link(1, 2, quad(1.0e6)),
            link(2, 3, quad(2.0e7)),
            link(3, 0, quad(1.0e6)),
        ],
        reference_node: 0,
        reference_pressure_pa: 100_000.0,
    };
    let before = solve_fresh(&net);
    assert!(before.isolated_nodes.is_empty());
    net.links[2].closed = true;
    net.links[4].closed = true;
    let rep = solve_fresh(&net);
    assert_eq!(rep.isolated_nodes, vec![2, 3]);
    assert_balanced(&net, &rep);
    // The remaining circuit: a0 + a2·m² = r·m² (elementary algebra).
    let expected = (15_000.0f64 / (5.0e6 + 20_000.0)).sqrt();
    assert!(rel(rep.flows_kg_s[1], expected) < 1e-8);
    // Isolated emitter carries nothing.
    assert!(rep.flows_kg_s[3].abs() < 1e-12, "{}", rep.flows_kg_s[3]);
}

/// Two-pipe ladder with direct return: supply chain s_0..s_N, return chain
/// r_0..r_N, emitter rungs s_i → r_i (i ≥ 1), pump r_0 → s_0, reference
/// r_0 (pump suction). Chain resistances sized for ~20 Pa per segment at the
/// design flow, emitters for 10 kPa at 0.02 kg/s, the rungs spread over ten
/// levels 3 m apart (supply and return rise together), supply at 70 °C,
/// return at 50 °C densities (demo data).
fn ladder(n: usize) -> HydraulicNetwork {
    ladder_with_levels(n, |i| 3.0 * ((10 * i / (n + 1)) as f64))
}

/// As [`ladder`], node pair i at elevation `level_m(i)`.
fn ladder_with_levels(n: usize, level_m: impl Fn(usize) -> f64) -> HydraulicNetwork {
    let rho_supply = water::density_kg_m3(70.0).unwrap();
    let rho_return = water::density_kg_m3(50.0).unwrap();
    let rho_emitter = water::density_kg_m3(60.0).unwrap();
    let m_e = 0.02;
    let s = |i: usize| i;
    let r = |i: usize| n + 1 + i;
    let mut nodes = Vec::with_capacity(2 * n + 2);
    for _chain in 0..2 {
        for i in 0..=n {
            nodes.push(node(level_m(i)));
        }
    }
    let head_pa = 10_000.0 + 2.0 * 20.0 * n as f64;
    let m_total = m_e * n as f64;
    let mut links = vec![HydLink {
        from: r(0),
        to: s(0),
        density_kg_m3: rho_return,
        law: pump(1.25 * head_pa, 0.0, -0.25 * head_pa / (m_total * m_total)),
        closed: false,
    }];
    for i in 1..=n {
        let m_seg = m_e * (n - i + 1) as f64;
        let r_seg = 20.0 / (m_seg * m_seg);
        links.push(HydLink { from: s(i - 1), to: s(i), density_kg_m3: rho_supply, law: quad(r_seg), closed: false });
        links.push(HydLink { from: r(i), to: r(i - 1), density_kg_m3: rho_return, law: quad(r_seg), closed: false });
        links.push(HydLink {
            from: s(i),
            to: r(i),
            density_kg_m3: rho_emitter,
            law: quad(10_000.0 / (m_e * m_e)),
            closed: false,
        });
    }
    HydraulicNetwork { nodes, links, reference_node: r(0), reference_pressure_pa: 150_000.0 }
}

/// Loop closure written out for the loop of rung i (supply segment i, rung
/// i, return segment i, rung i−1): Σ ±(F_k − c_k) = 0.
fn ladder_loop_closure(net: &HydraulicNetwork, rep: &SolveReport, i: usize) -> f64 {
    let term = |k: usize| {
        let l = &net.links[k];
        let c = l.density_kg_m3 * GRAVITY_M_S2 * (net.nodes[l.from].elevation_m - net.nodes[l.to].elevation_m);
        link_dp(&l.law, rep.flows_kg_s[k]).unwrap().0 - c
    };
    // Link numbering: 0 pump; for rung i: 3i−2 supply, 3i−1 return, 3i rung.
    let (supply, ret, rung, prev_rung) = (3 * i - 2, 3 * i - 1, 3 * i, 3 * (i - 1));
    // Loop s_{i−1} → s_i → r_i → r_{i−1} → s_{i−1}: the last leg is the
    // previous rung (or the pump for i = 1) taken backwards.
    term(supply) + term(rung) + term(ret) - term(prev_rung)
}

fn check_ladder(n: usize) {
    let net = ladder(n);
    let mut ws = SolverWorkspace::new(&net).unwrap();
    let s = SolveSettings::default();
    let rep = solve(&net, &s, &mut ws, None).unwrap();
    println!(
        "ladder {n} rungs: {} iterations, converged {}, flow change {:?}, residual {:?} Pa, imbalance {:e} kg/s, \
         matrix nnz {}, factor nnz {}, timings {:?}",
        rep.iterations,
        rep.converged,
        rep.flow_change_history,
        rep.residual_history_pa,
        rep.max_mass_imbalance_kg_s,
        ws.matrix_nonzeros(),
        ws.factor_nonzeros(),
        rep.timings
    );
    assert!(rep.converged, "{:?}", rep.diagnostic);
    assert_balanced(&net, &rep);
    for i in [2, n / 2, n] {
        let closure = ladder_loop_closure(&net, &rep, i);
        assert!(closure.abs() < 0.02, "loop {i}: {closure} Pa");
    }
    // Every emitter flows from supply to return.
    for i in 1..=n {
        assert!(rep.flows_kg_s[3 * i] > 0.0, "rung {i}");
    }

    // Warm start from the converged answer: ≤ 2 iterations.
    let warm = solve(&net, &s, &mut ws, Some(&rep.flows_kg_s)).unwrap();
    assert!(warm.converged && !warm.workspace_rebuilt);
    assert!(warm.iterations <= 2, "warm start took {} iterations", warm.iterations);

    // A small edit (one emitter 20 % more resistive), warm-started.
    let mut edited = net.clone();
    edited.links[3 * (n / 2)].law = quad(1.2 * 10_000.0 / (0.02 * 0.02));
    let after = solve(&edited, &s, &mut ws, Some(&rep.flows_kg_s)).unwrap();
    assert!(after.converged);
    assert_balanced(&edited, &after);
    assert!(after.flows_kg_s[3 * (n / 2)] < rep.flows_kg_s[3 * (n / 2)]);
    println!("ladder {n}: warm start {} iterations, after an edit {}", warm.iterations, after.iterations);
}

#[test]
fn ladder_of_1000_rungs() {
    check_ladder(1000);
}

#[test]
fn ladder_of_10000_rungs() {
    check_ladder(10_000);
}

#[test]
fn thermosiphon_reversal_in_a_zigzag_ladder_converges() {
    // The chains climb 3 m per rung and drop 27 m every tenth rung; near the
    // far end the emitters' pressure difference is small and the buoyancy of
    // the 27 m drop (g·27 m·Δρ ≈ 2.6 kPa) reverses some rungs: Newton must
    // pass flows through zero.
    let n = 10_000;
    let net = ladder_with_levels(n, |i| 3.0 * ((i % 10) as f64));
    let rep = solve_fresh(&net);
    assert_balanced(&net, &rep);
    let reversed = (1..=n).filter(|&i| rep.flows_kg_s[3 * i] < 0.0).count();
    println!("zigzag ladder: {} iterations, {reversed} reversed rungs", rep.iterations);
    assert!(reversed > 0, "the case is meant to reverse some rungs");
}

#[test]
fn warm_start_on_a_small_network_takes_at_most_two_iterations() {
    let net = ladder(5);
    let mut ws = SolverWorkspace::new(&net).unwrap();
    let s = SolveSettings::default();
    let cold = solve(&net, &s, &mut ws, None).unwrap();
    assert!(cold.converged);
    assert!(cold.iterations > 2, "a cold start needs more than 2 iterations: {}", cold.iterations);
    let warm = solve(&net, &s, &mut ws, Some(&cold.flows_kg_s)).unwrap();
    assert!(warm.converged && warm.iterations <= 2, "{}", warm.iterations);
    for (a, b) in warm.flows_kg_s.iter().zip(&cold.flows_kg_s) {
        assert!((a - b).abs() <= 1e-6 * b.abs().max(1e-6));
    }
}

/// A ladder of `n` rungs solved cold in its own workspace (kept for warm
/// re-solves).
fn solved_ladder(n: usize) -> (HydraulicNetwork, SolverWorkspace, SolveReport) {
    let net = ladder(n);
    let mut ws = SolverWorkspace::new(&net).unwrap();
    let cold = solve(&net, &SolveSettings::default(), &mut ws, None).unwrap();
    assert!(cold.converged && !cold.chord_step_kept);
    (net, ws, cold)
}

/// Largest |a − b| / max(|b|, 1e-9) over the links.
fn max_rel_diff(a: &[f64], b: &[f64]) -> f64 {
    a.iter().zip(b).map(|(x, y)| (x - y).abs() / y.abs().max(1e-9)).fold(0.0, f64::max)
}

#[test]
fn a_small_edit_is_solved_with_the_kept_factor_and_agrees_with_a_fresh_solve() {
    // What a drag does: one rung's resistance changes by 0.01 %, the solve
    // starts from the last answer with the last factor (a chord step, module
    // docs of the solver, "Warm starts").
    let n = 1000;
    let s = SolveSettings::default();
    let (net, mut ws, cold) = solved_ladder(n);
    // 0.1 %: the chord step is kept, and one Newton step with a fresh
    // factor finishes (the old slope leaves a residual above the pressure
    // tolerance at the edited rung).
    let mut edited = net.clone();
    edited.links[3 * 400].law = quad(1.001 * 10_000.0 / (0.02 * 0.02));
    let warm = solve(&edited, &s, &mut SolverWorkspace::new(&net).unwrap(), Some(&cold.flows_kg_s)).unwrap();
    assert!(warm.converged && !warm.chord_step_kept, "a fresh workspace has no factor to keep");
    let (_, mut ws2, _) = solved_ladder(n);
    let warm = solve(&edited, &s, &mut ws2, Some(&cold.flows_kg_s)).unwrap();
    assert!(warm.converged && warm.chord_step_kept && warm.iterations <= 2, "{:?}", warm.flow_change_history);
    assert!(max_rel_diff(&warm.flows_kg_s, &solve_fresh(&edited).flows_kg_s) < 1e-5);
    // 0.01 %: the chord step alone converges.
    edited.links[3 * 400].law = quad(1.0001 * 10_000.0 / (0.02 * 0.02));
    let warm = solve(&edited, &s, &mut ws, Some(&cold.flows_kg_s)).unwrap();
    assert!(warm.converged, "{:?}", warm.diagnostic);
    assert!(warm.chord_step_kept, "the first step should reuse the factor: {:?}", warm.flow_change_history);
    assert_eq!(warm.iterations, 1, "{:?}", warm.flow_change_history);
    assert_balanced(&edited, &warm);
    for i in [2, 400, n] {
        let closure = ladder_loop_closure(&edited, &warm, i);
        assert!(closure.abs() < 0.02, "loop {i}: {closure} Pa");
    }
    // The same answer as Newton from scratch, to the flow tolerance.
    let fresh = solve_fresh(&edited);
    assert!(fresh.converged);
    let d = max_rel_diff(&warm.flows_kg_s, &fresh.flows_kg_s);
    assert!(d < 1e-5, "warm (chord) and fresh answers differ by {d:e}");
    assert!(warm.flows_kg_s[3 * 400] < cold.flows_kg_s[3 * 400]);
}

#[test]
fn a_large_edit_discards_the_chord_step_and_still_converges() {
    // The pump's head doubles: every flow moves by about 40 %, too far for a
    // step on the old factor. The chord step is tried, discarded, and Newton
    // reaches the same answer as from scratch.
    let n = 200;
    let s = SolveSettings::default();
    let (net, mut ws, cold) = solved_ladder(n);
    let mut edited = net.clone();
    let head_pa = 10_000.0 + 2.0 * 20.0 * n as f64;
    let m_total = 0.02 * n as f64;
    edited.links[0].law = pump(2.5 * head_pa, 0.0, -0.5 * head_pa / (m_total * m_total));
    let warm = solve(&edited, &s, &mut ws, Some(&cold.flows_kg_s)).unwrap();
    assert!(warm.converged, "{:?}", warm.diagnostic);
    assert!(!warm.chord_step_kept);
    assert!(warm.flow_change_history[0] > 0.1, "{:?}", warm.flow_change_history);
    assert_balanced(&edited, &warm);
    let fresh = solve_fresh(&edited);
    let d = max_rel_diff(&warm.flows_kg_s, &fresh.flows_kg_s);
    assert!(d < 1e-5, "warm and fresh answers differ by {d:e}");
}

#[test]
fn iteration_limit_reports_a_diagnostic() {
    let net = ladder(20);
    let mut ws = SolverWorkspace::new(&net).unwrap();
    let s = SolveSettings { max_iterations: 1, ..SolveSettings::default() };
    let rep = solve(&net, &s, &mut ws, None).unwrap();
    assert!(!rep.converged);
    assert_eq!(rep.iterations, 1);
    let d = rep.diagnostic.expect("diagnostic");
    assert_eq!(d.reason, NonConvergenceReason::IterationLimit { max_iterations: 1 });
    assert!(!d.suspect_links.is_empty());
    assert!(d.last_flow_change > s.flow_tolerance);
    // Even after one iteration every node balances (GGA property).
    assert!(rep.max_mass_imbalance_kg_s < 1e-9, "{}", rep.max_mass_imbalance_kg_s);
}

#[test]
fn overflow_is_reported_naming_the_link() {
    // A pump curve whose quadratic term overflows to infinity at the start flow.
    let net = HydraulicNetwork {
        nodes: vec![node(0.0), node(0.0)],
        links: vec![link(1, 0, quad(1e7)), link(0, 1, pump(1e4, 0.0, -1e308))],
        reference_node: 0,
        reference_pressure_pa: 100_000.0,
    };
    let mut ws = SolverWorkspace::new(&net).unwrap();
    let rep = solve(&net, &SolveSettings::default(), &mut ws, Some(&[0.1, 10.0])).unwrap();
    assert!(!rep.converged);
    let d = rep.diagnostic.expect("diagnostic");
    assert_eq!(d.reason, NonConvergenceReason::NonFinite);
    assert_eq!(d.suspect_links.iter().map(|s| s.link).collect::<Vec<_>>(), vec![1]);
}
