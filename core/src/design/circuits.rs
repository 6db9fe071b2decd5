//! Pumped secondary circuits: a project whose network feeds pumped circuits
//! (a mixing or injection circuit at its own temperatures, or pump-only
//! circuits off a hydraulic separator) is designed circuit by circuit.
//!
//! 1. **Plan.** The layout's tree (from the heat source) is cut at every
//!    pumped-circuit node: the source's circuit (the primary) and one circuit
//!    per pumped-circuit node, each with the nodes and runs down to the next
//!    circuits. A hydraulic separator is a leaf of the circuit that feeds it;
//!    its outlets are pumped circuits.
//! 2. **Circuits, deepest first.** Each circuit is designed and operated as a
//!    project of its own: its root becomes its heat source (the circuit's
//!    pump; for a mixing or injection circuit the source resistance is the
//!    valve's Kvs, which the circuit's water passes), at the circuit's own
//!    design temperatures. Each circuit (or separator) it feeds stands in as
//!    a leaf drawing the feed's heat at the feed's return temperature: a
//!    characteristic through that single point, so its design primary flow
//!    is exactly heat / (c_p · (supply − return)).
//! 3. **Regulation.** In operation a mixing or injection valve holds the
//!    circuit's supply temperature: it draws the primary flow that carries
//!    the circuit's operating heat, m_p = Q / (c_p · (θ_feed − θ_return)),
//!    with θ_return the circuit's operating mixed return. The feeding
//!    network sees this as a fixed draw; when it does not give the valve the
//!    Δp to pass it (fully open), a finding says so. A separator passes
//!    what the primary loop gives it; when that is less than its circuits
//!    draw, their supply is mixed down (finding).
//! 4. **Merge.** The circuits' results become one [`Solution`]: every
//!    emitter, pipe and device; the networks side by side (each circuit's
//!    links in [`CircuitResult::links`]); the primary's pump and index
//!    circuit as the project's; one expansion vessel for all the water.
//!
//! Energy at a mixing point: primary m_p at θ_feed and bypass m_b at
//! θ_return make the circuit's m_s at θ_supply, m_p·c_p·(θ_feed − θ_return) =
//! m_s·c_p·(θ_supply − θ_return) = Q, with c_p the mean over the interval
//! (IAPWS-IF97 enthalpy difference, [`crate::water::mean_cp_j_kg_k`]).

use std::sync::Arc;

use std::collections::{BTreeMap, BTreeSet};

use super::balance::size_vessel;
use super::findings::{self, Finding, FindingKind, ItemRef};
use super::results::{CircuitResult, LinkRole, Solution};
use super::state::Feed;
use super::topology::{self, Topology};
use super::{SolveOptions, Workspace, solve_one, with_findings};
use crate::emitters::{EmitterModel, TerminalSpec};
use crate::network::solver;
use crate::project::{
    CircuitConnection, Emitter, EmitterValves, HeatSource, Node, NodeId, NodeKind, Project, PumpedCircuit, RunId,
};
use crate::water;

/// Room temperature of the stand-in leaf of a feed. Its characteristic is
/// only ever evaluated at its nominal point, so any value below the return
/// serves; this one is the lowest room temperature the project accepts, °C.
const FEED_ROOM_C: f64 = 5.0;
/// Kv of a pump-only circuit's source link (its connection to the
/// separator, next to no resistance), m³/h.
const DIRECT_KV_M3_H: f64 = 1000.0;

/// Whether the project has pumped circuits or separators.
pub(super) fn has_circuits(p: &Project) -> bool {
    p.nodes().any(|n| matches!(n.kind, NodeKind::Circuit(_) | NodeKind::Separator(_)))
}

/// One circuit of the plan.
#[derive(Debug, Clone)]
struct Part {
    root: NodeId,
    parent: Option<usize>,
    separator: Option<NodeId>,
    /// Nodes inside (root excluded); feeds included as leaves.
    nodes: Vec<NodeId>,
    runs: Vec<RunId>,
    /// Pumped circuits and separators that are leaves of this circuit.
    feeds: Vec<NodeId>,
    supply_c: f64,
    return_c: f64,
    /// The circuit can be designed (its connection is valid).
    valid: bool,
}

fn circuit_of(p: &Project, id: NodeId) -> Option<&PumpedCircuit> {
    match p.node(id).map(|n| &n.kind) {
        Some(NodeKind::Circuit(c)) => Some(c),
        _ => None,
    }
}

fn is_separator(p: &Project, id: NodeId) -> bool {
    matches!(p.node(id).map(|n| &n.kind), Some(NodeKind::Separator(_)))
}

/// Cut the tree into circuits (the primary first, each circuit after the
/// one feeding it).
fn plan(p: &Project, t: &Topology, out: &mut Vec<Finding>) -> Vec<Part> {
    let Some(source) = t.source else { return Vec::new() };
    let s = &p.settings;
    let mut parts = vec![Part {
        root: source,
        parent: None,
        separator: None,
        nodes: Vec::new(),
        runs: Vec::new(),
        feeds: Vec::new(),
        supply_c: s.supply_c,
        return_c: s.return_c,
        valid: true,
    }];
    // The circuit whose nodes hang below each node (`None`: cut off).
    let mut owner: BTreeMap<NodeId, Option<usize>> = BTreeMap::new();
    owner.insert(source, Some(0));
    for tr in &t.runs {
        let Some(ci) = owner.get(&tr.up).copied().flatten() else {
            owner.insert(tr.down, None);
            continue;
        };
        let Some(down) = p.node(tr.down) else { continue };
        let from_separator = is_separator(p, tr.up);
        match (&down.kind, from_separator) {
            (NodeKind::Circuit(c), _) => {
                let feed_supply = parts[ci].supply_c;
                let mut valid = true;
                if c.connection == CircuitConnection::Direct && !from_separator {
                    out.push(findings::circuit_connection_invalid(
                        down,
                        "a pump-only circuit hangs from a hydraulic separator, this one from the network itself — \
                         connect it to a separator or give it a mixing or injection valve",
                    ));
                    valid = false;
                }
                // Fed colder than its set supply, the valve stands fully open
                // and the circuit runs at the feed's temperature (its return
                // at least the minimum water drop below).
                let set_supply = if c.connection == CircuitConnection::Direct { feed_supply } else { c.supply_c };
                if set_supply > feed_supply + 1e-9 {
                    out.push(findings::circuit_fed_too_cold(down, set_supply, feed_supply));
                }
                let supply_c = set_supply.min(feed_supply);
                let return_c = if c.return_c < supply_c { c.return_c } else { supply_c - s.min_water_drop_k.max(0.5) };
                if from_separator {
                    // The run from the separator is part of the separator:
                    // a device on it would do nothing.
                    if p.run(tr.run).is_some_and(|r| r.props.device.is_some()) {
                        out.push(findings::device_ignored(
                            tr.run,
                            "it sits between a hydraulic separator and a pumped circuit, where the circuit's own pump \
                             sets the flow — put it on one of the circuit's runs",
                        ));
                    }
                } else {
                    parts[ci].runs.push(tr.run);
                    parts[ci].nodes.push(tr.down);
                    parts[ci].feeds.push(tr.down);
                }
                parts.push(Part {
                    root: tr.down,
                    parent: Some(ci),
                    separator: from_separator.then_some(tr.up),
                    nodes: Vec::new(),
                    runs: Vec::new(),
                    feeds: Vec::new(),
                    supply_c,
                    return_c,
                    valid: valid && parts[ci].valid,
                });
                owner.insert(tr.down, Some(parts.len() - 1));
            }
            (_, true) => {
                out.push(findings::circuit_connection_invalid(
                    down,
                    "a hydraulic separator's outlets are pumped circuits; this is not one — put a pumped circuit between",
                ));
                owner.insert(tr.down, None);
            }
            (NodeKind::Separator(_), false) => {
                parts[ci].runs.push(tr.run);
                parts[ci].nodes.push(tr.down);
                parts[ci].feeds.push(tr.down);
                owner.insert(tr.down, Some(ci));
            }
            (NodeKind::Source(_) | NodeKind::Junction | NodeKind::Header(_) | NodeKind::Emitter(_), false) => {
                parts[ci].runs.push(tr.run);
                parts[ci].nodes.push(tr.down);
                owner.insert(tr.down, Some(ci));
            }
        }
    }
    parts
}

/// What a solved circuit offers the circuit feeding it.
#[derive(Debug, Clone, Copy, Default)]
struct Offer {
    /// Design heat, W.
    heat_load_w: f64,
    /// Operating heat, W.
    heat_w: f64,
    /// Secondary design and operating mass flows, kg/s.
    design_kg_s: f64,
    flow_kg_s: f64,
    /// Design mixed return (its design heat over its design flow), °C.
    design_return_c: f64,
    /// Operating mixed return, °C.
    operating_return_c: f64,
}

/// Mass flow carrying `heat_w` from `hot_c` down to `cold_c`, kg/s (0 when
/// the interval is empty or the water tables are left).
fn flow_for_heat(heat_w: f64, hot_c: f64, cold_c: f64) -> f64 {
    if heat_w <= 0.0 || hot_c <= cold_c {
        return 0.0;
    }
    water::mean_cp_j_kg_k(hot_c, cold_c).map_or(0.0, |cp| heat_w / (cp * (hot_c - cold_c)))
}

/// The return temperature at which `flow_kg_s` carries `heat_w` down from
/// `hot_c`, °C (c_p over the interval, by fixed-point iteration).
fn return_for(heat_w: f64, flow_kg_s: f64, hot_c: f64) -> f64 {
    if flow_kg_s <= 0.0 || heat_w <= 0.0 {
        return hot_c;
    }
    let mut cold = hot_c - heat_w / (4186.0 * flow_kg_s);
    for _ in 0..6 {
        let cp = water::mean_cp_j_kg_k(hot_c, cold.clamp(1.0, hot_c - 1e-6)).unwrap_or(4186.0);
        cold = hot_c - heat_w / (cp * flow_kg_s);
    }
    cold
}

/// The stand-in leaf of a feed: heat `heat_w` from `supply_c` to `return_c`
/// through a port of `kv_m3_h`.
fn stand_in(node: &Node, name: &str, heat_w: f64, supply_c: f64, return_c: f64, kv_m3_h: f64) -> Node {
    let model = EmitterModel::Terminal(TerminalSpec {
        nominal_output_w: heat_w.max(0.0),
        nominal_supply_c: supply_c,
        nominal_return_c: return_c,
        nominal_room_c: FEED_ROOM_C,
        exponent_n: 1.0,
        kv_m3_h,
        water_content_l: 0.0,
    });
    let valves = EmitterValves {
        valve_family: String::new(),
        presetting: None,
        lockshield_family: String::new(),
        lockshield_setting: None,
    };
    Node {
        kind: NodeKind::Emitter(Emitter {
            name: name.to_owned(),
            room_c: FEED_ROOM_C,
            load_w: heat_w.max(0.0),
            model,
            valves,
        }),
        ..node.clone()
    }
}

/// The design and operating results of a project with pumped circuits (see
/// the module docs).
#[allow(clippy::too_many_lines)] // reason: plan, circuits and merge read best as one sequence
pub(super) fn solve_composite(p: &Project, opts: &SolveOptions, ws: &mut Workspace) -> Solution {
    let mut found = Vec::new();
    let (topo, f) = topology::analyse(p);
    found.extend(f);
    let parts = plan(p, &topo, &mut found);
    if parts.is_empty() {
        return with_findings(
            Solution { revision: p.revision, topology: Arc::new(topo), ..Solution::default() },
            found,
        );
    }
    // Deepest first: every circuit after those it feeds.
    let mut subs: Vec<Option<Solution>> = vec![None; parts.len()];
    let mut offers = vec![Offer::default(); parts.len()];
    let mut stand_ins: Vec<BTreeSet<NodeId>> = vec![BTreeSet::new(); parts.len()];
    for k in (0..parts.len()).rev() {
        let part = &parts[k];
        if !part.valid {
            continue;
        }
        let Some(root) = p.node(part.root) else { continue };
        let mut q = Project::new(&p.name);
        q.settings = p.settings.clone();
        q.settings.supply_c = part.supply_c;
        q.settings.return_c = part.return_c;
        q.levels.clone_from(&p.levels);
        q.revision = p.revision;
        let root_node = match &root.kind {
            NodeKind::Circuit(c) => Node {
                kind: NodeKind::Source(HeatSource {
                    name: c.name.clone(),
                    capacity_w: f64::INFINITY,
                    kv_m3_h: if c.connection == CircuitConnection::Direct { DIRECT_KV_M3_H } else { c.valve_kvs_m3_h },
                    water_content_l: 0.0,
                    pump: c.pump.clone(),
                    max_flow_c: None,
                }),
                ..root.clone()
            },
            _ => root.clone(),
        };
        q.insert_node(root_node);
        let mut feeds = BTreeMap::new();
        for &n in &part.nodes {
            let Some(node) = p.node(n) else { continue };
            let node = match &node.kind {
                NodeKind::Circuit(c) => {
                    let j = parts.iter().position(|x| x.root == n);
                    let o = j.map(|j| offers[j]).unwrap_or_default();
                    let supply = part.supply_c;
                    let m_fixed = flow_for_heat(o.heat_w, supply, o.operating_return_c);
                    feeds.insert(n, Feed { kv_m3_h: c.valve_kvs_m3_h, fixed_flow_kg_s: Some(m_fixed) });
                    stand_in(node, &c.name, o.heat_load_w, supply, o.design_return_c, c.valve_kvs_m3_h)
                }
                NodeKind::Separator(x) => {
                    // Its circuits' primary-side flows and heat, mixed.
                    let (mut heat, mut flow) = (0.0, 0.0);
                    for (j, pj) in parts.iter().enumerate().filter(|(_, pj)| pj.separator == Some(n)) {
                        let o = offers[j];
                        let direct = circuit_of(p, pj.root).is_some_and(|c| c.connection == CircuitConnection::Direct);
                        heat += o.heat_load_w;
                        flow += if direct {
                            o.design_kg_s
                        } else {
                            flow_for_heat(o.heat_load_w, part.supply_c, o.design_return_c)
                        };
                    }
                    let ret = return_for(heat, flow, part.supply_c);
                    feeds.insert(n, Feed { kv_m3_h: x.kv_m3_h, fixed_flow_kg_s: None });
                    stand_in(node, &x.name, heat, part.supply_c, ret, x.kv_m3_h)
                }
                _ => node.clone(),
            };
            q.insert_node(node);
        }
        for &r in &part.runs {
            if let Some(run) = p.run(r) {
                q.insert_run(run.clone());
            }
        }
        stand_ins[k] = feeds.keys().copied().collect();
        let sub_ws = ws.circuits.entry(part.root).or_default();
        let sol = solve_one(&q, opts, sub_ws, feeds);
        // What it offers its feed.
        let own_heat: f64 = sol.emitters.iter().filter(|e| !stand_ins[k].contains(&e.id)).map(|e| e.output_w).sum();
        let fed_heat: f64 = parts
            .iter()
            .enumerate()
            .filter(|(j, pj)| pj.parent == Some(k) && subs[*j].is_some())
            .map(|(j, _)| offers[j].heat_w)
            .sum();
        let heat_w = own_heat + fed_heat;
        let rho_r = water::density_kg_m3(part.return_c).unwrap_or(1000.0);
        let (design_kg_s, flow_kg_s) =
            sol.pump.as_ref().map_or((0.0, 0.0), |x| (x.design_flow_kg_s, x.operating_flow_m3_h * rho_r / 3600.0));
        offers[k] = Offer {
            heat_load_w: sol.heat_load_w,
            heat_w,
            design_kg_s,
            flow_kg_s,
            design_return_c: return_for(sol.heat_load_w, design_kg_s, part.supply_c),
            operating_return_c: return_for(heat_w, flow_kg_s, part.supply_c),
        };
        subs[k] = Some(sol);
    }

    // Merge, the primary first.
    let mut out = Solution { revision: p.revision, ..Solution::default() };
    out.converged = true;
    let mut circuit_results = Vec::with_capacity(parts.len());
    // Δp available and needed at each regulated feed (filled while merging
    // the circuit that feeds it, read when merging the circuit itself).
    let mut feed_dp: BTreeMap<NodeId, (f64, f64)> = BTreeMap::new();
    for (k, part) in parts.iter().enumerate() {
        let Some(sol) = subs[k].take() else {
            out.converged = false;
            continue;
        };
        let link_off = out.network.links.len();
        let node_off = out.network.nodes.len();
        if k == 0 {
            out.network.reference_node = sol.network.reference_node;
            out.network.reference_pressure_pa = sol.network.reference_pressure_pa;
            out.pump.clone_from(&sol.pump);
            out.index_emitter = sol.index_emitter;
        }
        let mine = &stand_ins[k];
        // Feeds of this circuit: the Δp the network gives them.
        for &n in mine {
            let Some(node) = p.node(n) else { continue };
            let role_link = |role: LinkRole| sol.roles.iter().position(|r| *r == role);
            let (Some(vl), Some(bl)) = (role_link(LinkRole::EmitterValves(n)), role_link(LinkRole::EmitterBody(n)))
            else {
                continue;
            };
            let (from, to) = (sol.network.links[vl].from, sol.network.links[bl].to);
            let (Some(&ps), Some(&pr)) = (sol.node_pressures_pa.get(from), sol.node_pressures_pa.get(to)) else {
                continue;
            };
            let available = ps - pr;
            let Some(e) = sol.emitter(n) else { continue };
            let needed = solver::link_dp(&sol.network.links[bl].law, e.flow_kg_s).map_or(0.0, |x| x.0);
            if let NodeKind::Circuit(_) = node.kind {
                if e.flow_kg_s > 0.0 && available < needed * (1.0 - 1e-6) {
                    found.push(findings::circuit_feed_short(node, available / 1000.0, needed / 1000.0, e.flow_l_h));
                }
                feed_dp.insert(n, (available, needed));
            } else if let NodeKind::Separator(_) = node.kind {
                let (mut drawn, mut heat) = (0.0, 0.0);
                for (j, pj) in parts.iter().enumerate().filter(|(_, pj)| pj.separator == Some(n)) {
                    let o = offers[j];
                    let direct = circuit_of(p, pj.root).is_some_and(|c| c.connection == CircuitConnection::Direct);
                    heat += o.heat_w;
                    drawn +=
                        if direct { o.flow_kg_s } else { flow_for_heat(o.heat_w, part.supply_c, o.operating_return_c) };
                }
                let m = e.flow_kg_s;
                if drawn > 0.0 && m < drawn * (1.0 - 1e-3) {
                    // Return water rises through the separator: mixed supply.
                    let o_ret = return_for(heat, drawn, part.supply_c);
                    let mixed = (m * part.supply_c + (drawn - m) * o_ret) / drawn;
                    let rho = water::density_kg_m3(part.supply_c).unwrap_or(1000.0);
                    found.push(findings::separator_flow_short(node, e.flow_l_h, drawn / rho * 3.6e6, mixed));
                }
            }
        }
        out.network.nodes.extend(sol.network.nodes.iter().cloned());
        out.network.links.extend(sol.network.links.iter().map(|l| {
            let mut l = l.clone();
            l.from += node_off;
            l.to += node_off;
            l
        }));
        Arc::make_mut(&mut out.roles).extend(sol.roles.iter().cloned());
        out.link_flows_kg_s.extend_from_slice(&sol.link_flows_kg_s);
        out.node_pressures_pa.extend_from_slice(&sol.node_pressures_pa);
        out.pipes.extend(sol.pipes.iter().cloned().map(|mut x| {
            x.link += link_off;
            x
        }));
        out.emitters.extend(sol.emitters.iter().filter(|e| !mine.contains(&e.id)).cloned());
        out.devices.extend(sol.devices.iter().cloned());
        // Findings: a stand-in's are the circuit's (written here); a
        // circuit's vessel is the project's (sized below).
        let keep = |f: &&Finding| {
            let on_stand_in = matches!(f.item, ItemRef::Node(n) if mine.contains(&n));
            // The vessel is sized once below, for the whole system's water.
            let vessel = matches!(f.kind, FindingKind::VesselNotSized | FindingKind::VesselsInParallel);
            let project_wide = vessel || (k > 0 && f.kind == FindingKind::SourceCapacity);
            !on_stand_in && !project_wide
        };
        found.extend(sol.findings.iter().filter(keep).cloned());
        out.water_volume_l += sol.water_volume_l;
        out.iterations = out.iterations.max(sol.iterations);
        out.converged &= sol.converged;
        out.timings.derive_ms += sol.timings.derive_ms;
        out.timings.design_ms += sol.timings.design_ms;
        out.timings.operate_ms += sol.timings.operate_ms;
        out.timings.solver_ms += sol.timings.solver_ms;
        out.timings.solver_runs += sol.timings.solver_runs;
        out.timings.operate_passes += sol.timings.operate_passes;
        let connection = circuit_of(p, part.root).map(|c| c.connection);
        let name = p.node(part.root).map_or_else(String::new, |n| match &n.kind {
            NodeKind::Source(s) => s.name.clone(),
            NodeKind::Circuit(c) => c.name.clone(),
            _ => n.label(),
        });
        let o = offers[k];
        let feed_supply = part.parent.map_or(0.0, |j| parts[j].supply_c);
        let rho_r = water::density_kg_m3(part.return_c).unwrap_or(1000.0);
        let (primary_design, primary_op) = match connection {
            None => (0.0, 0.0),
            Some(CircuitConnection::Direct) => (o.design_kg_s, o.flow_kg_s),
            Some(CircuitConnection::MixingValve | CircuitConnection::Injection) => (
                flow_for_heat(o.heat_load_w, feed_supply, o.design_return_c),
                flow_for_heat(o.heat_w, feed_supply, o.operating_return_c),
            ),
        };
        let (feed_available, feed_needed) = feed_dp.get(&part.root).copied().unwrap_or_default();
        circuit_results.push(CircuitResult {
            root: part.root,
            name,
            connection,
            parent: part.parent.map(|j| parts[j].root),
            separator: part.separator,
            supply_c: part.supply_c,
            return_c: part.return_c,
            heat_load_w: o.heat_load_w,
            heat_w: o.heat_w,
            design_flow_l_h: o.design_kg_s / rho_r * 3.6e6,
            flow_l_h: o.flow_kg_s / rho_r * 3.6e6,
            operating_return_c: o.operating_return_c,
            primary_design_flow_l_h: primary_design / rho_r * 3.6e6,
            primary_flow_l_h: primary_op / rho_r * 3.6e6,
            feed_supply_c: feed_supply,
            feed_dp_available_pa: feed_available,
            feed_dp_needed_pa: feed_needed,
            pump: sol.pump.clone(),
            index_emitter: sol.index_emitter,
            index_path: sol.index_path.iter().map(|l| l + link_off).collect(),
            links: (link_off, link_off + sol.network.links.len()),
            nodes: part.nodes.clone(),
            runs: part.runs.clone(),
            water_volume_l: sol.water_volume_l,
            converged: sol.converged,
        });
    }
    out.index_path = circuit_results.first().map(|c| c.index_path.clone()).unwrap_or_default();
    out.emitters.sort_by_key(|e| e.id);
    // Each circuit's pipes are sorted; the project's are too (run, side).
    out.pipes.sort_by_key(|x| (x.run, x.side));
    out.heat_load_w = out.emitters.iter().map(|e| e.load_w).sum();
    if let Some(source) = topo.source {
        out.vessel = size_vessel(p, source, out.water_volume_l, &mut found);
    }
    out.circuits = circuit_results;
    out.topology = Arc::new(topo);
    with_findings(out, found)
}
