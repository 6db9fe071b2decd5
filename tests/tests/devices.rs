//! Acceptance tests of the balancing devices on runs (issue 17): a branch
//! behind a differential-pressure controller, a saturated controller, a
//! static balancing valve.

#![allow(clippy::unwrap_used, clippy::expect_used, clippy::panic)] // reason: test code

use flowrise_core::design::{
    DeviceState, FindingKind, ItemRef, Solution, SolveOptions, Workspace, freeze_edit, solve_project,
};
use flowrise_core::network::solver::{self, SolveSettings, SolverWorkspace};
use flowrise_core::network::{LinkLaw, solver::link_dp};
use flowrise_core::parts::PartCategory;
use flowrise_core::project::{BranchDevice, Edit, LevelId, Mode, NodeKind, Project, RunId, RunProps};
use flowrise_core::pump::PumpControl;
use flowrise_tests::builder::Builder;

/// A source, a main to a junction, a branch (with the device on its first
/// run) of four radiators, and two radiators off the main near the source.
fn branch_project(device: BranchDevice) -> (Project, RunId) {
    let mut b = Builder::new("Branch behind a device");
    let g = LevelId(0);
    // A strong pump (invented curve): 80 kPa at shut-off.
    let src = b.source(
        g,
        0.0,
        0.0,
        30_000.0,
        [(0.3, 80.0), (1.5, 70.0), (3.0, 40.0)],
        PumpControl::ConstantDp { setpoint_kpa: 30.0 },
    );
    let j = b.junction(g, 6.0, 0.0);
    b.run(src, j);
    for (k, x) in [4.0, 8.0].into_iter().enumerate() {
        let r = b.radiator(g, x, 3.0, &format!("Near {k}"), 1200.0, 20.0);
        b.run(j, r);
    }
    let bj = b.junction(g, 10.0, 0.0);
    let branch = b.run(j, bj);
    let mut prev = bj;
    for k in 0..4 {
        let x = 14.0 + 4.0 * f64::from(k);
        let jk = b.junction(g, x, 0.0);
        b.run(prev, jk);
        let r = b.radiator(g, x, 3.0, &format!("Room {k}"), 1000.0 + 100.0 * f64::from(k), 20.0);
        b.run(jk, r);
        prev = jk;
    }
    b.p.apply(Edit::SetRunProps { id: branch, props: RunProps { device: Some(device), ..RunProps::default() } })
        .unwrap();
    (b.p, branch)
}

fn solve(p: &Project) -> Solution {
    solve_project(p, &SolveOptions::default(), &mut Workspace::default())
}

fn controller() -> BranchDevice {
    BranchDevice::DpController { family: None, setpoint_kpa: None }
}

/// Set the pump of an installed project to hold `kpa`.
fn with_pump_head(p: &Project, kpa: f64) -> Project {
    let mut q = p.clone();
    let src = q.sources()[0];
    let Some(NodeKind::Source(mut s)) = q.node(src).map(|n| n.kind.clone()) else { panic!() };
    s.pump.control = PumpControl::ConstantDp { setpoint_kpa: kpa };
    q.apply(Edit::SetNodeKind { id: src, kind: NodeKind::Source(s) }).unwrap();
    q
}

#[test]
fn the_design_sets_a_controller_and_the_branch_is_balanced_against_it() {
    let (p, run) = branch_project(controller());
    let sol = solve(&p);
    assert!(!sol.has_errors(), "{:#?}", sol.findings);
    assert_eq!(sol.devices.len(), 1);
    let d = &sol.devices[0];
    assert_eq!(d.run, run);
    assert_eq!(d.state, DeviceState::Regulating, "{d:?}");
    // The branch's emitters got within the tolerance of their design flows.
    for e in &sol.emitters {
        assert!(e.flow_within_tolerance, "{}: {:+.1} %", e.id, e.flow_deviation * 100.0);
    }
    // It holds about what its branch needs (within its proportional band).
    assert!((d.held_dp_pa - d.branch_dp_pa).abs() < 2_500.0, "{d:?}");
    assert!(!sol.findings.iter().any(|f| f.kind == FindingKind::ControllerSaturated));
}

/// The pipes behind a Δp controller (its run and everything it feeds) are
/// sized to the settings' own gradient limit there; every other pipe to the
/// general one; without a controller the setting changes nothing.
#[test]
fn pipes_behind_a_controller_are_sized_to_their_own_gradient_limit() {
    let (p, branch) = branch_project(controller());
    let mut tight = p.clone();
    let settings =
        flowrise_core::project::DesignSettings { controlled_gradient_limit_pa_m: Some(40.0), ..p.settings.clone() };
    tight.apply(Edit::SetSettings(Box::new(settings.clone()))).unwrap();
    let (loose, sol) = (solve(&p), solve(&tight));
    assert!(!sol.has_errors(), "{:#?}", sol.findings);
    let down = sol.topology.tree_run(branch).unwrap().down;
    let zone: std::collections::HashSet<_> = sol.topology.subtree(down).into_iter().collect();
    let behind = |r: RunId| r == branch || sol.topology.tree_run(r).is_some_and(|t| zone.contains(&t.down));
    let mut larger = 0;
    for (pipe, before) in sol.pipes.iter().zip(&loose.pipes) {
        assert_eq!((pipe.run, pipe.side), (before.run, before.side));
        if behind(pipe.run) {
            assert!((pipe.gradient_limit_pa_m - 40.0).abs() < 1e-9, "{} {:?}", pipe.run, pipe.side);
            // Sized at the design flow; the operating flow is within the
            // flow tolerance of it.
            assert!(pipe.gradient_pa_m <= 40.0 * 1.25, "{}: {:.0} Pa/m", pipe.run, pipe.gradient_pa_m);
            larger += usize::from(pipe.inner_mm > before.inner_mm + 1e-9);
        } else {
            assert!((pipe.gradient_limit_pa_m - 150.0).abs() < 1e-9, "{}", pipe.run);
            assert_eq!(pipe.size, before.size, "{}: outside the branch nothing changes", pipe.run);
        }
    }
    assert!(larger > 0, "some pipe behind the controller grew");
    // Without the controller the setting sizes nothing differently.
    let mut bare = tight.clone();
    bare.apply(Edit::SetRunProps { id: branch, props: RunProps::default() }).unwrap();
    assert!(solve(&bare).pipes.iter().all(|pipe| (pipe.gradient_limit_pa_m - 150.0).abs() < 1e-9));
    // A limit outside the accepted range is refused with the field named.
    let bad = flowrise_core::project::DesignSettings { controlled_gradient_limit_pa_m: Some(5.0), ..settings };
    assert!(bad.problems().iter().any(|pr| pr.field == "gradient limit behind Δp controllers"));
}

/// A branch that needs less than the lowest set-point of its controller's
/// model: the controller is set to its lowest, which is a note (the
/// branch's valves are trimmed against what it then holds and every room
/// still gets its flow), not a warning; a branch needing more than the
/// model's highest stays a warning.
#[test]
fn a_set_point_below_the_models_range_is_a_note_and_the_rooms_get_their_flows() {
    // DN50 (demo): set-points 10–80 kPa; the four-room branch needs ~6 kPa.
    let device = BranchDevice::DpController { family: Some("dpc-demo-dn50".to_owned()), setpoint_kpa: None };
    let (p, run) = branch_project(device);
    let sol = solve(&p);
    let f = sol.findings.iter().find(|f| f.kind == FindingKind::SetpointOutOfRange).expect("a set-point finding");
    assert_eq!(f.severity, flowrise_core::design::Severity::Note, "{}", f.message);
    assert_eq!(f.item, flowrise_core::design::ItemRef::Run(run));
    assert!(f.message.contains("10.0 kPa"), "{}", f.message);
    assert!((sol.devices[0].setpoint_kpa - 10.0).abs() < 1e-9);
    for e in &sol.emitters {
        assert!(e.flow_within_tolerance, "{}: {:+.1} %", e.id, e.flow_deviation * 100.0);
    }
    assert!(
        !sol.findings.iter().any(|f| f.severity == flowrise_core::design::Severity::Warning),
        "{:#?}",
        sol.findings
    );
}

/// Issue 17 acceptance: with the pump head ±30 % around a set-point with
/// reserve (1.5 × the design duty: at the duty itself the index branch's
/// controller is already fully open, as designed), the branch behind the
/// controller keeps its Δp within the controller's proportional band.
#[test]
fn a_controlled_branch_keeps_its_dp_while_the_pump_head_varies() {
    let (p, _) = branch_project(controller());
    let sol = solve(&p);
    let mut installed = p.clone();
    installed.apply(freeze_edit(&p, &sol)).unwrap();
    assert_eq!(installed.settings.mode, Mode::Installed);
    let base = solve(&installed);
    let d = base.devices[0].clone();
    let BranchDevice::DpController { setpoint_kpa: Some(sp_kpa), family: Some(fam) } =
        installed.runs().find(|r| r.id == d.run).unwrap().props.device.clone().unwrap()
    else {
        panic!("frozen with its set-point and model")
    };
    let f = flowrise_core::controllers::dp_controller(&fam).unwrap();
    let head = 1.5 * base.pump.as_ref().unwrap().duty_head_pa / 1000.0;
    for factor in [0.7, 0.85, 1.0, 1.15, 1.3] {
        let q = with_pump_head(&installed, head * factor);
        let s = solve(&q);
        let dev = &s.devices[0];
        assert_eq!(dev.state, DeviceState::Regulating, "×{factor}: {dev:?}");
        let lo = sp_kpa * 1000.0 - 1.0;
        let hi = sp_kpa * 1000.0 + f.proportional_band_kpa * 1000.0 + 1.0;
        assert!(
            (lo..=hi).contains(&dev.held_dp_pa),
            "×{factor}: branch Δp {:.0} Pa outside the band {lo:.0}..{hi:.0} Pa",
            dev.held_dp_pa
        );
    }
}

/// Issue 17 acceptance: a controller the pump cannot serve saturates
/// fully open: the finding names it and the missing Δp, and the flows are
/// exactly those of the same network with a fixed valve of the
/// controller's Kvs in its place (same solver, same network).
#[test]
fn a_saturated_controller_is_a_fixed_valve_at_kvs_with_a_finding() {
    let (p, run) = branch_project(controller());
    let sol = solve(&p);
    let mut installed = p.clone();
    installed.apply(freeze_edit(&p, &sol)).unwrap();
    let weak = with_pump_head(&installed, 4.0);
    let s = solve(&weak);
    let dev = &s.devices[0];
    assert_eq!(dev.state, DeviceState::Saturated, "{dev:?}");
    let finding = s.findings.iter().find(|f| f.kind == FindingKind::ControllerSaturated).expect("a finding");
    assert_eq!(finding.item, ItemRef::Run(run));
    assert!(finding.message.contains("short"), "{}", finding.message);
    // The same network with the device link at the controller's Kvs.
    let mut net = s.network.clone();
    let k = s.roles.iter().position(|r| *r == flowrise_core::design::LinkRole::Device(run)).unwrap();
    let rho = net.links[k].density_kg_m3;
    let r_kvs = flowrise_core::valves::resistance_r_pa_s2_kg2(dev.kv_m3_h, rho).unwrap();
    net.links[k].law = LinkLaw::Quadratic { r_pa_s2_kg2: r_kvs };
    let mut ws = SolverWorkspace::new(&net).unwrap();
    let fixed = solver::solve(&net, &SolveSettings::default(), &mut ws, None).unwrap();
    assert!(fixed.converged);
    for (a, b) in s.link_flows_kg_s.iter().zip(&fixed.flows_kg_s) {
        assert!((a - b).abs() <= 1e-6 * b.abs().max(1e-3), "{a} vs {b}");
    }
    // And the device's own Δp is its Kvs drop at that flow.
    let m = s.link_flows_kg_s[k];
    assert!((link_dp(&net.links[k].law, m).unwrap().0 - dev.dp_pa).abs() < 1.0);
}

#[test]
fn a_balancing_valve_takes_the_excess_of_its_branch() {
    let (p, run) = branch_project(BranchDevice::BalancingValve { family: None, setting: None });
    let sol = solve(&p);
    assert!(!sol.has_errors(), "{:#?}", sol.findings);
    let d = &sol.devices[0];
    assert_eq!(d.run, run);
    assert!(!d.setting.is_empty() && d.design_dp_pa > 0.0, "{d:?}");
    for e in &sol.emitters {
        assert!(e.flow_within_tolerance, "{}: {:+.1} %", e.id, e.flow_deviation * 100.0);
    }
    // Old files (no device field) still load; the device round-trips.
    let text = p.to_ron().unwrap();
    assert_eq!(Project::from_ron(&text).unwrap(), p);
}

#[test]
fn a_device_reaches_the_parts_list_the_report_the_schedule_and_the_json() {
    let (p, run) = branch_project(controller());
    let sol = solve(&p);
    let d = &sol.devices[0];
    let parts = flowrise_core::parts::parts_list(&p, &sol, &flowrise_core::parts::PartsOptions::default()).unwrap();
    let line = parts
        .lines
        .iter()
        .find(|l| l.category == PartCategory::Valve && l.serves.contains(&run.to_string()))
        .unwrap_or_else(|| panic!("no parts line serves {run}: {:#?}", parts.lines));
    assert_eq!(line.item, d.family);
    assert!(line.note.contains(&d.setting), "{}", line.note);
    let html = flowrise_core::report::report_html(&p, &sol, &parts);
    assert!(html.contains("id=\"devices\"") && html.contains(&d.setting));
    let sched = flowrise_core::commissioning::schedule(&p, &sol);
    assert!(sched.iter().any(|l| l.item == run.to_string() && l.setting == d.setting), "{sched:#?}");
    let json = flowrise_core::output::solve_json(&p, &sol);
    let dev = &json["devices"][0];
    assert_eq!(dev["run"], run.to_string());
    assert_eq!(dev["state"], "regulating");
    assert!((dev["flow_l_h"].as_f64().unwrap() - d.flow_l_h).abs() < 0.1, "{dev}");
}

/// Issue 17's part-load comparison on a generated building (4 floors × 30
/// rooms, a Δp controller per radiator branch), half the valves closed: at
/// fixed pump speed the worst open room's excess flow with the controllers
/// is under half of that of the same building designed without them, and
/// the controllers keep every open valve's Δp near their set-points.
#[test]
fn branch_controllers_halve_the_worst_part_load_excess_at_fixed_speed() {
    use flowrise_core::generate::{BuildingSpec, generate_building};
    use flowrise_core::sweep;
    let p = generate_building(&BuildingSpec::new(4, 30)).unwrap();
    assert!(p.runs().any(|r| matches!(r.props.device, Some(BranchDevice::DpController { .. }))));
    let closed = sweep::random_closed_set(&p, 0.5, 1);
    let cases = sweep::part_load(&p, &closed).unwrap();
    assert_eq!(cases.len(), 6, "three pump controls with and three without");
    let case = |with: bool| cases.iter().find(|c| c.branch_controllers == with && c.control == "fixed speed").unwrap();
    let (with, without) = (case(true), case(false));
    assert!(
        with.worst_over_supply() < 0.5 * without.worst_over_supply(),
        "with {:+.0} %, without {:+.0} %",
        with.worst_over_supply() * 100.0,
        without.worst_over_supply() * 100.0
    );
    assert!(with.max_valve_dp_kpa < 0.5 * without.max_valve_dp_kpa);
    // With a constant-Δp pump the controlled building still does better; a
    // proportional-Δp pump already relieves the far branches, and the
    // excess left is the loss inside each branch that its controller does
    // not see (docs/part-load.md).
    for c in cases.iter().filter(|c| c.branch_controllers && c.control != "proportional Δp") {
        let o = cases.iter().find(|o| !o.branch_controllers && o.control == c.control).unwrap();
        assert!(c.worst_over_supply() < o.worst_over_supply(), "{}", c.control);
    }
}

/// Issue 17's acceptance on the building it names: the generated 10-storey,
/// 1,000-emitter building (a Δp controller per ten-room branch, the pipes
/// behind each sized to its own lower gradient limit, a constant-Δp pump as
/// generated), half the valves closed by three seeds: the worst open room's
/// excess flow with the controllers is under half of that of the same
/// building designed without them (docs/part-load.md has the figures).
#[test]
fn branch_controllers_halve_the_worst_excess_of_the_ten_storey_building() {
    use flowrise_core::generate::{BuildingSpec, CONTROLLED_GRADIENT_LIMIT_PA_M, generate_building};
    use flowrise_core::sweep;
    let p = generate_building(&BuildingSpec::new(10, 100)).unwrap();
    assert_eq!(p.settings.controlled_gradient_limit_pa_m, Some(CONTROLLED_GRADIENT_LIMIT_PA_M));
    let pump_is_constant_dp = p.nodes().any(|n| match &n.kind {
        NodeKind::Source(s) => matches!(s.pump.control, PumpControl::ConstantDp { .. }),
        _ => false,
    });
    assert!(pump_is_constant_dp, "the generated building's own pump control");
    for seed in 1..=3 {
        let closed = sweep::random_closed_set(&p, 0.5, seed);
        let cases = sweep::part_load(&p, &closed).unwrap();
        let case =
            |with: bool| cases.iter().find(|c| c.branch_controllers == with && c.control == "constant Δp").unwrap();
        let (with, without) = (case(true).worst_over_supply(), case(false).worst_over_supply());
        assert!(
            with > 0.0 && with < 0.5 * without,
            "seed {seed}: with {:+.1} %, without {:+.1} %",
            with * 100.0,
            without * 100.0
        );
    }
}

/// Behind a branch controller a valve's authority is judged against the Δp
/// its controller holds, in the balance stage and after commissioning
/// re-trims it alike: a re-trimmed valve was once judged against the pump's
/// head (a few per cent "authority" for a valve taking half its zone's Δp)
/// and its pair chosen for an authority it could not reach. A 10-storey
/// generated building on the coarse 8-step valve family, whose small rooms
/// commissioning re-trims.
#[test]
fn valves_behind_a_controller_are_judged_against_its_zone_after_commissioning() {
    use flowrise_core::generate::{BuildingSpec, generate_building};
    let p = generate_building(&BuildingSpec::new(10, 100)).unwrap();
    let mut file = p.to_file();
    "trv-demo-8".clone_into(&mut file.settings.valve_family);
    for n in &mut file.nodes {
        if let NodeKind::Emitter(e) = &mut n.kind {
            "trv-demo-8".clone_into(&mut e.valves.valve_family);
        }
    }
    let p = Project::from_file(file).unwrap();
    let sol = solve(&p);
    assert!(sol.converged);
    let pump_pa = sol.pump.as_ref().unwrap().available_pa;
    let largest_held_pa = sol.devices.iter().map(|d| d.branch_dp_pa).fold(0.0, f64::max);
    assert!(largest_held_pa > 0.0 && largest_held_pa < 0.5 * pump_pa, "{largest_held_pa} Pa of {pump_pa} Pa");
    for e in sol.emitters.iter().filter(|e| e.authority > 0.0) {
        // authority = valve Δp / Δp available to the circuit. An authority
        // of 1 is the clamp (the valve takes all that is available, a room
        // next to its controller): its reference is then at most the
        // valve's own Δp, which must still be a zone's, not the pump's.
        let reference_pa = e.valve_dp_pa / e.authority;
        if e.authority >= 0.999 {
            assert!(e.valve_dp_pa < 0.5 * pump_pa, "{} ({}): {} Pa", e.name, e.id, e.valve_dp_pa);
            continue;
        }
        assert!(
            reference_pa <= 1.01 * largest_held_pa,
            "{} ({}): authority {:.3} judged against {:.1} kPa; the controllers hold at most {:.1} kPa",
            e.name,
            e.id,
            e.authority,
            reference_pa / 1000.0,
            largest_held_pa / 1000.0
        );
    }
}
