//! The design and operating passes: from a project to flows, pipe sizes,
//! index circuit, pump duty, presettings and the real flows that result.
//!
//! Pipeline (each stage timed):
//! 1. **derive** — topology ([`topology::analyse`]), emitter design flows,
//!    the flat hydraulic network ([`crate::network`]) with one supply and one
//!    return pipe per drawn run (direct or reverse return), an emitter valve
//!    link and an emitter body link per emitter, the source link and the pump
//!    link; the reference node is the pump suction (expansion vessel).
//! 2. **design** — tree flows, pipe sizing per class limits, pressure drops
//!    at design flow, the index circuit (largest Δp with the emitter valves
//!    fully open), pump duty, presettings, authority, volumes, vessel.
//! 3. **operate** — the Global Gradient solve of the network with sizes,
//!    presettings and the pump fixed: real flows and emitter outputs.
//!
//! Assumptions (stated in the report): pipe water properties at the design
//! supply and return temperatures; no heat loss from pipes; supply
//! temperature at every emitter = source supply temperature.

mod cache;
pub mod findings;
pub mod topology;

use std::collections::BTreeSet;
use std::sync::Arc;
use std::time::Instant;

pub use findings::{Finding, ItemRef, Severity};
use topology::Dense;

use crate::emitters::{CheckOutcome, DesignTemperatures, EmitterDesign, EmitterDetail};
use crate::friction::{PipeHydraulics, friction_gradient_pa_m, pipe_dp};
use crate::network::solver::{self, SolveSettings, SolverWorkspace};
use crate::network::{GRAVITY_M_S2, HydLink, HydNode, HydraulicNetwork, LinkLaw};
use crate::pipes::{self, PipeSeries};
use crate::project::{Mode, NodeId, NodeKind, PipeClass, Project, RunId};
use crate::pump::{PumpControl, PumpCurve};
use crate::valves::{self, ValveFamily};
use crate::water::{self, WaterProperties};
use crate::{fittings, vessel};

/// ζ of one header outlet (distributor or collector connection), referred
/// to the outlet pipe: 1.0, common practice (a manifold outlet is about one
/// velocity head; recalled from memory, not verified against a document).
pub const HEADER_OUTLET_ZETA: f64 = 1.0;

/// Supply or return side of a drawn run.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, serde::Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Side {
    /// Supply (flow) pipe.
    Supply,
    /// Return pipe.
    Return,
}

/// What a link of the derived network stands for.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum LinkRole {
    /// A pipe of a drawn run.
    Pipe {
        /// The run.
        run: RunId,
        /// Supply or return.
        side: Side,
    },
    /// An emitter's valve + lockshield.
    EmitterValves(NodeId),
    /// An emitter's body (radiator, floor loop, terminal coil).
    EmitterBody(NodeId),
    /// The heat source's water path.
    Source(NodeId),
    /// The circulation pump.
    Pump(NodeId),
}

/// Options of a solve (not part of the document).
#[derive(Debug, Clone, Default, PartialEq)]
pub struct SolveOptions {
    /// Emitter valves closed for a part-load scenario.
    pub closed_emitters: BTreeSet<NodeId>,
    /// Use a continuous presetting (Kv exactly as needed, within the valve's
    /// range) instead of the nearest step — for checking the balancing.
    pub continuous_presetting: bool,
    /// Matched physics for the outside cross-check against EPANET
    /// (`tests/epanet/crosscheck.py`): the operating solve gives every link
    /// the density, and every pipe the viscosity, of water at the mean design
    /// temperature (so buoyancy vanishes) and EPANET's Darcy–Weisbach friction
    /// factor ([`crate::friction::FrictionLaw::SwameeJainEpanet`]). Sizing
    /// and presettings are designed as usual; only the operating solve's link
    /// laws change. Not for design work.
    pub matched_physics: bool,
    /// Solver settings.
    pub solver: SolveSettings,
}

/// Results of one pipe (one side of one run).
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct PipeResult {
    /// Run.
    pub run: RunId,
    /// Side.
    pub side: Side,
    /// Pipe class.
    #[serde(skip)]
    pub class: PipeClass,
    /// Length, m.
    pub length_m: f64,
    /// Series id (borrowed from the pipe catalogue: no copy per pipe).
    pub series: &'static str,
    /// Size label (borrowed from the pipe catalogue).
    pub size: &'static str,
    /// Inner diameter, mm.
    pub inner_mm: f64,
    /// Sum of local loss coefficients.
    pub zeta: f64,
    /// Water temperature, °C.
    pub temperature_c: f64,
    /// Design mass flow, kg/s.
    pub design_flow_kg_s: f64,
    /// Operating mass flow, kg/s (= design when no operating solve ran).
    pub flow_kg_s: f64,
    /// Operating volume flow, l/h.
    pub flow_l_h: f64,
    /// Operating velocity, m/s.
    pub velocity_m_s: f64,
    /// Velocity limit of its class, m/s.
    pub velocity_limit_m_s: f64,
    /// Friction pressure gradient at operating flow, Pa/m.
    pub gradient_pa_m: f64,
    /// Total pressure drop (friction + local) at operating flow, Pa.
    pub dp_pa: f64,
    /// Index of the link in the derived network.
    #[serde(skip)]
    pub link: usize,
}

/// Results of one emitter and its circuit.
#[derive(Debug, Clone, PartialEq)]
pub struct EmitterResult {
    /// Node id.
    pub id: NodeId,
    /// Name.
    pub name: String,
    /// Level name.
    pub level: String,
    /// Design load, W.
    pub load_w: f64,
    /// Room temperature, °C.
    pub room_c: f64,
    /// Supply temperature, °C.
    pub supply_c: f64,
    /// Design return temperature, °C.
    pub design_return_c: f64,
    /// Design mass flow, kg/s.
    pub design_flow_kg_s: f64,
    /// Design volume flow at the supply temperature, l/h.
    pub design_flow_l_h: f64,
    /// Design output, W (less than the load when short).
    pub design_output_w: f64,
    /// The emitter's design detail (radiator size, floor loop data).
    pub detail: Option<EmitterDetail>,
    /// Circuit Δp with the valve fully open (source → emitter → source), Pa.
    pub circuit_dp_open_pa: f64,
    /// Circuit Δp without the valve (the rest of the circuit), Pa.
    pub circuit_rest_pa: f64,
    /// Δp the valve absorbs at design flow, Pa.
    pub valve_dp_pa: f64,
    /// Kv needed, m³/h.
    pub kv_needed_m3_h: f64,
    /// Presetting label.
    pub presetting: String,
    /// Kv at the presetting, m³/h.
    pub valve_kv_m3_h: f64,
    /// Valve authority.
    pub authority: f64,
    /// Flow error expected from the presetting step, fraction.
    pub presetting_flow_error: f64,
    /// Operating mass flow, kg/s.
    pub flow_kg_s: f64,
    /// Operating volume flow at the supply temperature, l/h.
    pub flow_l_h: f64,
    /// Operating return temperature, °C.
    pub return_c: f64,
    /// Operating output, W.
    pub output_w: f64,
    /// Operating flow / design flow − 1.
    pub flow_deviation: f64,
    /// Valve closed in this scenario.
    pub closed: bool,
}

/// Pump duty and operating point.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct PumpResult {
    /// Design mass flow, kg/s.
    pub design_flow_kg_s: f64,
    /// Design flow at the pump (return temperature), m³/h.
    pub design_flow_m3_h: f64,
    /// Index-circuit Δp incl. the index valve's minimum, Pa.
    pub index_dp_pa: f64,
    /// Duty head with margin, Pa.
    pub duty_head_pa: f64,
    /// Head the pump gives at design flow under its control, Pa (what the
    /// presettings balance against).
    pub available_pa: f64,
    /// Control mode used.
    #[serde(skip)]
    pub control: PumpControl,
    /// The pump curve.
    #[serde(skip)]
    pub curve: Option<PumpCurve>,
    /// Operating flow, m³/h.
    pub operating_flow_m3_h: f64,
    /// Operating head, Pa.
    pub operating_head_pa: f64,
    /// Hydraulic power at the operating point, W.
    pub hydraulic_power_w: f64,
    /// A controlled pump runs on its maximum curve at the operating point,
    /// below its set-point (never true at fixed speed).
    pub on_max_curve: bool,
}

/// Timing of the stages, ms.
#[derive(Debug, Clone, Copy, PartialEq, Default, serde::Serialize)]
pub struct StageTimings {
    /// Topology + network derivation.
    pub derive_ms: f64,
    /// Design pass.
    pub design_ms: f64,
    /// Operating solve (the hydraulic solve and the results at the real
    /// flows: emitter outputs, pipe velocities and gradients, findings).
    pub operate_ms: f64,
    /// The hydraulic solve alone, part of `operate_ms` (what a
    /// general-purpose network solver does: flows and pressures).
    pub solver_ms: f64,
}

/// Everything a solve produces.
#[derive(Debug, Clone, Default)]
pub struct Solution {
    /// Project revision the results belong to.
    pub revision: u64,
    /// Pipes (both sides of every run), sorted by run then side.
    pub pipes: Vec<PipeResult>,
    /// Emitters in id order.
    pub emitters: Vec<EmitterResult>,
    /// Pump duty.
    pub pump: Option<PumpResult>,
    /// Index emitter.
    pub index_emitter: Option<NodeId>,
    /// Total heat load, W.
    pub heat_load_w: f64,
    /// System water volume, l.
    pub water_volume_l: f64,
    /// Expansion vessel.
    pub vessel: Option<vessel::VesselSizing>,
    /// Findings, errors first.
    pub findings: Vec<Finding>,
    /// Newton iterations of the operating solve.
    pub iterations: usize,
    /// Operating solve converged.
    pub converged: bool,
    /// Stage timings.
    pub timings: StageTimings,
    /// The derived network.
    pub network: HydraulicNetwork,
    /// Role of each link of the network.
    pub roles: Vec<LinkRole>,
    /// Operating mass flow of each link, kg/s.
    pub link_flows_kg_s: Vec<f64>,
    /// Node pressures of the operating solve, Pa (gauge).
    pub node_pressures_pa: Vec<f64>,
    /// Links of the index circuit in flow order (pump outlet → pump inlet).
    pub index_path: Vec<usize>,
}

impl Solution {
    /// True when there is an error finding (the design is incomplete).
    #[must_use]
    pub fn has_errors(&self) -> bool {
        self.findings.iter().any(|f| f.severity == Severity::Error)
    }

    /// Results of emitter `id`.
    #[must_use]
    pub fn emitter(&self, id: NodeId) -> Option<&EmitterResult> {
        self.emitters.iter().find(|e| e.id == id)
    }

    /// Results of both sides of run `run`.
    pub fn run_pipes(&self, run: RunId) -> impl Iterator<Item = &PipeResult> + '_ {
        self.pipes.iter().filter(move |p| p.run == run)
    }
}

/// State kept between solves: the solver's symbolic factorisation, cached
/// link-law evaluations and the last flows (warm start), valid while the
/// topology is unchanged; and per emitter its design and last operating
/// point, reused while the emitter's inputs are unchanged. A workspace may
/// serve any project: every cached value is checked against its inputs
/// before use.
#[derive(Debug, Default)]
pub struct Workspace {
    solver: Option<SolverWorkspace>,
    last_roles: Vec<LinkRole>,
    last_flows: Vec<f64>,
    emitters: cache::EmitterCache,
    sizes: cache::SizeCache,
    link_dps: cache::LinkDpCache,
    tees: cache::TeeCache,
    messages: cache::MessageCache,
}

/// Design and operate a project. Never panics; everything that goes wrong
/// becomes a finding naming the item.
#[must_use]
pub fn solve_project(p: &Project, opts: &SolveOptions, ws: &mut Workspace) -> Solution {
    let mut sol = Solution { revision: p.revision, ..Solution::default() };
    let t0 = Instant::now();
    let mut findings = Vec::new();
    let mut d = Derivation::new(p, &mut findings);
    let dn = Dense::new(p);
    let ok = d.run(p, &dn, ws);
    sol.timings.derive_ms = ms_since(t0);
    if ok {
        let t1 = Instant::now();
        d.design(p, &dn, opts, ws, &mut sol);
        sol.timings.design_ms = ms_since(t1);
        let t2 = Instant::now();
        if opts.matched_physics {
            d.match_physics(p);
        }
        d.operate(p, opts, ws, &mut sol);
        sol.timings.operate_ms = ms_since(t2);
    }
    if !d.pipes_filled {
        let flows = std::mem::take(&mut d.design_flows);
        fill_pipe_flows(&mut sol, &d.net, &flows, None);
    }
    sol.network = std::mem::take(&mut d.net);
    sol.roles = std::mem::take(&mut d.roles);
    drop(d);
    let mut all = findings;
    all.sort_by(|a, b| a.severity.cmp(&b.severity).then(a.item.cmp(&b.item)));
    all.dedup();
    sol.findings = all;
    sol
}

fn ms_since(t: Instant) -> f64 {
    t.elapsed().as_secs_f64() * 1e3
}

/// Marks "none" in the dense index vectors.
const NONE: usize = usize::MAX;

/// Catalog look-ups of valve families by id, remembered for one derivation
/// (emitters mostly share a handful of families).
#[derive(Default)]
struct FamilyMemo {
    seen: Vec<(String, Result<&'static ValveFamily, crate::PhysicsError>)>,
}

impl FamilyMemo {
    fn get(&mut self, id: &str) -> Result<&'static ValveFamily, crate::PhysicsError> {
        if let Some((_, r)) = self.seen.iter().find(|(k, _)| k == id) {
            return r.clone();
        }
        let r = valves::valve_family(id);
        if self.seen.len() < 64 {
            self.seen.push((id.to_owned(), r.clone()));
        }
        r
    }
}

/// Per-emitter derivation data.
#[derive(Debug)]
struct EmitterData {
    id: NodeId,
    s: usize,
    r: usize,
    valves_link: usize,
    body_link: usize,
    design: Option<Arc<EmitterDesign>>,
    flow_kg_s: f64,
    valve: Option<&'static ValveFamily>,
    lockshield_kv: f64,
}

/// Per-pipe derivation data.
#[derive(Debug, Clone, Copy)]
struct PipeData {
    run: RunId,
    side: Side,
    class: PipeClass,
    length_m: f64,
    bends: f64,
    vertical: bool,
    link: usize,
    series: Option<&'static PipeSeries>,
    size: usize,
}

struct Derivation<'f> {
    findings: &'f mut Vec<Finding>,
    topo: topology::Topology,
    net: HydraulicNetwork,
    roles: Vec<LinkRole>,
    emitters: Vec<EmitterData>,
    pipes: Vec<PipeData>,
    source: Option<NodeId>,
    source_link: usize,
    pump_link: usize,
    supply_props: Option<WaterProperties>,
    return_props: Option<WaterProperties>,
    /// Node pair (supply, return) of each reachable non-emitter node.
    /// By node id; emitters get their (supply, return) nodes here too.
    /// `(NONE, NONE)` for nodes outside the network.
    pairs: Vec<(usize, usize)>,
    /// Design flow of each link, kg/s.
    design_flows: Vec<f64>,
    /// Supply pipe link of each run.
    /// By run id (`NONE` when the run has no supply pipe).
    supply_link: Vec<usize>,
    /// Index into `pipes` of each run's supply pipe.
    /// By run id (`NONE` when the run has no supply pipe).
    supply_pipe: Vec<usize>,
    /// Return pipe link of each run, by run id (`NONE` when none).
    return_link: Vec<usize>,
    available_pa: f64,
    control: PumpControl,
    curve: Option<PumpCurve>,
    total_design_kg_s: f64,
    /// The flow-dependent pipe results are filled (by the operating solve).
    pipes_filled: bool,
    /// Index into `emitters` of each entry of `Solution::emitters`.
    result_emitter: Vec<usize>,
    /// Breadth-first link orders of the supply and return trees.
    tree_orders: Option<(Vec<usize>, Vec<usize>)>,
}

impl<'f> Derivation<'f> {
    fn new(_p: &Project, findings: &'f mut Vec<Finding>) -> Self {
        Self {
            findings,
            topo: topology::Topology::default(),
            net: HydraulicNetwork::default(),
            roles: Vec::new(),
            emitters: Vec::new(),
            pipes: Vec::new(),
            source: None,
            source_link: 0,
            pump_link: 0,
            supply_props: None,
            return_props: None,
            pairs: Vec::new(),
            design_flows: Vec::new(),
            supply_link: Vec::new(),
            supply_pipe: Vec::new(),
            return_link: Vec::new(),
            available_pa: 0.0,
            control: PumpControl::FixedSpeed,
            curve: None,
            total_design_kg_s: 0.0,
            pipes_filled: false,
            result_emitter: Vec::new(),
            tree_orders: None,
        }
    }

    /// The (supply, return) network nodes of project node `n`.
    fn pair(&self, n: NodeId) -> Option<(usize, usize)> {
        self.pairs.get(self.topo.nix(n)).copied().filter(|x| x.0 != NONE)
    }

    fn add_node(&mut self, elevation_m: f64) -> usize {
        self.net.nodes.push(HydNode { elevation_m, demand_kg_s: 0.0 });
        self.net.nodes.len() - 1
    }

    fn add_link(&mut self, from: usize, to: usize, density_kg_m3: f64, law: LinkLaw, role: LinkRole) -> usize {
        self.net.links.push(HydLink { from, to, density_kg_m3, law, closed: false });
        self.roles.push(role);
        self.net.links.len() - 1
    }

    /// Topology, emitter design, network skeleton. False when the design
    /// cannot go on (errors recorded as findings).
    #[allow(clippy::too_many_lines)] // reason: the derivation is one sequence of steps
    fn run(&mut self, p: &Project, dn: &Dense<'_>, ws: &mut Workspace) -> bool {
        let s = &p.settings;
        let problems = s.problems();
        for pr in &problems {
            self.findings.push(Finding::error(ItemRef::Settings, format!("{}: {}", pr.field, pr.message)));
        }
        if !problems.is_empty() {
            return false;
        }
        let (topo, f) = topology::analyse_dense(p, dn, false);
        self.findings.extend(f);
        self.topo = topo;
        let Some(source) = self.topo.source else { return false };
        // Two nodes per tree node, three per emitter; two links per run.
        self.net.nodes.reserve(2 * self.topo.order.len() + self.topo.emitters.len() + 1);
        self.net.links.reserve(2 * self.topo.runs.len() + 2);
        self.roles.reserve(2 * self.topo.runs.len() + 2);
        self.pipes.reserve(2 * self.topo.runs.len());
        self.emitters.reserve(self.topo.emitters.len());
        self.source = Some(source);
        let (Ok(sp), Ok(rp)) = (water::properties(s.supply_c), water::properties(s.return_c)) else {
            self.findings
                .push(Finding::error(ItemRef::Settings, "design temperatures outside the water-property range"));
            return false;
        };
        self.supply_props = Some(sp);
        self.return_props = Some(rp);
        let mean_rho = 0.5 * (sp.density_kg_m3 + rp.density_kg_m3);
        let Ok(mp) = water::properties(0.5 * (s.supply_c + s.return_c)) else { return false };

        // Node pairs for the source and every reachable non-emitter node.
        self.pairs = vec![(NONE, NONE); self.topo.node_slots()];
        let order = self.topo.order.clone();
        for &n in &order {
            let Some(node) = dn.node(n) else { continue };
            if matches!(node.kind, NodeKind::Emitter(_)) {
                continue;
            }
            let z = dn.elevation_m(n);
            let a = self.add_node(z);
            let b = self.add_node(z);
            let slot = self.topo.nix(n);
            if let Some(x) = self.pairs.get_mut(slot) {
                *x = (a, b);
            }
        }
        let Some((s_src, r_src)) = self.pair(source) else { return false };
        self.net.reference_node = r_src;
        let z_src = dn.elevation_m(source);
        let pump_out = self.add_node(z_src);

        // Source and pump links.
        let Some(NodeKind::Source(src)) = dn.node(source).map(|n| &n.kind) else { return false };
        let r_source = valves::resistance_r_pa_s2_kg2(src.kv_m3_h, sp.density_kg_m3).unwrap_or(0.0);
        self.source_link = self.add_link(
            pump_out,
            s_src,
            sp.density_kg_m3,
            LinkLaw::Quadratic { r_pa_s2_kg2: r_source },
            LinkRole::Source(source),
        );
        self.pump_link = self.add_link(
            r_src,
            pump_out,
            rp.density_kg_m3,
            LinkLaw::Pump { a0_pa: 0.0, a1_pa_s_kg: 0.0, a2_pa_s2_kg2: 0.0, max_curve_pa: None },
            LinkRole::Pump(source),
        );
        match PumpCurve::from_three_points(src.pump.curve_points) {
            Ok(c) => self.curve = Some(c),
            Err(e) => {
                self.findings.push(Finding::error(
                    ItemRef::Node(source),
                    format!("pump curve: {e} — correct the three curve points"),
                ));
                return false;
            }
        }
        self.control = src.pump.control;

        // Emitters: design flows and their three nodes.
        let mut family_memo = FamilyMemo::default();
        let emitters = self.topo.emitters.clone();
        for &e in &emitters {
            let Some(node) = dn.node(e) else { continue };
            let NodeKind::Emitter(em) = &node.kind else { continue };
            let z = dn.elevation_m(e);
            let (ns, nm, nr) = (self.add_node(z), self.add_node(z), self.add_node(z));
            let temps = DesignTemperatures { supply_c: s.supply_c, return_c: s.return_c, room_c: em.room_c };
            let design = if em.load_w <= 0.0 {
                self.findings.push(Finding::warning(
                    ItemRef::Node(e),
                    format!("{} has zero load — give it the room's heat load (it gets no flow)", node.label()),
                ));
                None
            } else {
                match ws.emitters.design(e, p.node_count(), &em.model, em.load_w, &temps) {
                    Ok(d) => Some(d),
                    Err(err) => {
                        self.findings.push(Finding::error(ItemRef::Node(e), format!("{}: {err}", node.label())));
                        None
                    }
                }
            };
            let flow = design.as_ref().map_or(0.0, |d| d.outcome.mass_flow_kg_s());
            let valve = match family_memo.get(&em.valves.valve_family) {
                Ok(v) => Some(v),
                Err(err) => {
                    self.findings.push(Finding::error(
                        ItemRef::Node(e),
                        format!("{}: valve family: {err} — pick a valve family from the catalog", node.label()),
                    ));
                    None
                }
            };
            let lockshield_kv = match family_memo.get(&em.valves.lockshield_family) {
                Ok(v) => v.settings.last().map_or(v.kvs_fully_open, |st| st.kv_m3_h),
                Err(err) => {
                    self.findings.push(Finding::error(
                        ItemRef::Node(e),
                        format!("{}: lockshield family: {err} — pick a lockshield from the catalog", node.label()),
                    ));
                    f64::INFINITY
                }
            };
            let vl =
                self.add_link(ns, nm, mean_rho, LinkLaw::Quadratic { r_pa_s2_kg2: 0.0 }, LinkRole::EmitterValves(e));
            let body_law = match design.as_ref().map(|d| d.installed.body) {
                // A floor loop's pipe at the network's mean water temperature
                // (not the emitter's own design mean, which jumps when the
                // emitter reaches its flow cap): the loop's resistance then
                // moves smoothly with the supply temperature.
                Some(crate::emitters::BodyHydraulics::Pipe(ph)) => LinkLaw::Pipe(
                    PipeHydraulics::new(
                        ph.length_m,
                        ph.inner_diameter_m,
                        ph.roughness_m,
                        ph.zeta_sum,
                        mp.density_kg_m3,
                        mp.viscosity_pa_s,
                    )
                    .unwrap_or(ph),
                ),
                Some(crate::emitters::BodyHydraulics::Quadratic { r_pa_s2_kg2 }) => LinkLaw::Quadratic { r_pa_s2_kg2 },
                None => LinkLaw::Quadratic { r_pa_s2_kg2: 0.0 },
            };
            let bl = self.add_link(nm, nr, mean_rho, body_law, LinkRole::EmitterBody(e));
            self.emitters.push(EmitterData {
                id: e,
                s: ns,
                r: nr,
                valves_link: vl,
                body_link: bl,
                design,
                flow_kg_s: flow,
                valve,
                lockshield_kv,
            });
        }
        if self.emitters.is_empty() {
            self.findings.push(Finding::error(
                ItemRef::Project,
                "no emitter is connected to the heat source — place emitters and draw runs to them",
            ));
            return false;
        }

        // Pipes: supply for every tree run; return direct or along a
        // reverse-return chain.
        for e in &self.emitters {
            let slot = self.topo.nix(e.id);
            if let Some(x) = self.pairs.get_mut(slot) {
                *x = (e.s, e.r);
            }
        }
        let topo_map = self.topo.clone_maps();
        let ends = |n: NodeId, pairs: &[(usize, usize)]| pairs.get(topo_map.0.ix(n.0)).copied().filter(|x| x.0 != NONE);
        let mut in_chain = vec![false; self.topo.run_slots()];
        for ch in &self.topo.reverse_chains {
            for r in &ch.runs {
                if let Some(x) = in_chain.get_mut(self.topo.rix(*r)) {
                    *x = true;
                }
            }
        }
        let tree_runs = self.topo.runs.clone();
        for tr in &tree_runs {
            let Some(run) = dn.run(tr.run) else { continue };
            let (Some((su, ru)), Some((sd, rd))) = (ends(tr.up, &self.pairs), ends(tr.down, &self.pairs)) else {
                continue;
            };
            let class = self.topo.class_of(tr.run).unwrap_or(PipeClass::Branch);
            let length_m = dn.length_m(run);
            let bends = bend_count_dense(dn, run);
            let vertical = dn.is_vertical(run);
            let placeholder = LinkLaw::Quadratic { r_pa_s2_kg2: 0.0 };
            let l = self.add_link(
                su,
                sd,
                sp.density_kg_m3,
                placeholder.clone(),
                LinkRole::Pipe { run: tr.run, side: Side::Supply },
            );
            self.pipes.push(PipeData {
                run: tr.run,
                side: Side::Supply,
                class,
                length_m,
                bends,
                vertical,
                link: l,
                series: None,
                size: 0,
            });
            if !in_chain.get(topo_map.1.ix(tr.run.0)).copied().unwrap_or(false) {
                let l = self.add_link(
                    rd,
                    ru,
                    rp.density_kg_m3,
                    placeholder,
                    LinkRole::Pipe { run: tr.run, side: Side::Return },
                );
                self.pipes.push(PipeData {
                    run: tr.run,
                    side: Side::Return,
                    class,
                    length_m,
                    bends,
                    vertical,
                    link: l,
                    series: None,
                    size: 0,
                });
            }
        }
        let chains = self.topo.reverse_chains.clone();
        for ch in &chains {
            // Chain nodes J0 (start), J1..Jk.
            let mut nodes = vec![ch.start];
            let mut total_len = 0.0;
            for &r in &ch.runs {
                let Some(tr) = self.topo.tree_run(r) else { continue };
                nodes.push(tr.down);
                total_len += dn.run(r).map_or(0.0, |run| dn.length_m(run));
            }
            for (i, &r) in ch.runs.iter().enumerate() {
                let Some(run) = dn.run(r) else { continue };
                let class = self.topo.class_of(r).unwrap_or(PipeClass::Branch);
                let (from, to, length_m, bends, vertical) = if i == 0 {
                    // The first run's return is the home pipe from the chain's
                    // end back to its start, alongside the whole chain.
                    let (Some(last), Some(first)) = (nodes.last(), nodes.first()) else { continue };
                    let (Some((_, r_last)), Some((_, r_first))) = (ends(*last, &self.pairs), ends(*first, &self.pairs))
                    else {
                        continue;
                    };
                    let bends: f64 = ch.runs.iter().filter_map(|&x| dn.run(x)).map(|x| bend_count_dense(dn, x)).sum();
                    (r_last, r_first, total_len, bends, dn.is_vertical(run))
                } else {
                    // `get`: a chain run without a tree run (never built by the
                    // topology) skips instead of indexing past the end.
                    let (Some(&na), Some(&nb)) = (nodes.get(i), nodes.get(i + 1)) else { continue };
                    let (Some((_, ra)), Some((_, rb))) = (ends(na, &self.pairs), ends(nb, &self.pairs)) else {
                        continue;
                    };
                    (ra, rb, dn.length_m(run), bend_count_dense(dn, run), dn.is_vertical(run))
                };
                let l = self.add_link(
                    from,
                    to,
                    rp.density_kg_m3,
                    LinkLaw::Quadratic { r_pa_s2_kg2: 0.0 },
                    LinkRole::Pipe { run: r, side: Side::Return },
                );
                self.pipes.push(PipeData {
                    run: r,
                    side: Side::Return,
                    class,
                    length_m,
                    bends,
                    vertical,
                    link: l,
                    series: None,
                    size: 0,
                });
            }
        }
        self.order_pipes_by_run();
        self.supply_link = vec![NONE; self.topo.run_slots()];
        self.supply_pipe = vec![NONE; self.topo.run_slots()];
        self.return_link = vec![NONE; self.topo.run_slots()];
        for (i, pd) in self.pipes.iter().enumerate() {
            let r = self.topo.rix(pd.run);
            match pd.side {
                Side::Supply => {
                    if let (Some(l), Some(x)) = (self.supply_link.get_mut(r), self.supply_pipe.get_mut(r)) {
                        *l = pd.link;
                        *x = i;
                    }
                }
                Side::Return => {
                    if let Some(l) = self.return_link.get_mut(r) {
                        *l = pd.link;
                    }
                }
            }
        }
        true
    }

    /// Puts `pipes` in (run id, side) order — the order of the results. Run
    /// slots follow run ids, and a run has at most one supply and one return
    /// pipe, so each pipe has its own bucket: a linear pass instead of a
    /// comparison sort. A repeated (run, side), which the derivation never
    /// builds, falls back to the sort.
    fn order_pipes_by_run(&mut self) {
        let slots = self.topo.run_slots();
        let mut bucket = vec![NONE; 2 * slots];
        let mut unique = true;
        for (i, pd) in self.pipes.iter().enumerate() {
            let b = 2 * self.topo.rix(pd.run) + usize::from(pd.side == Side::Return);
            match bucket.get_mut(b) {
                Some(x) if *x == NONE => *x = i,
                _ => unique = false,
            }
        }
        if !unique {
            // (run, side) is unique per pipe: an unstable sort gives the same order.
            self.pipes.sort_unstable_by_key(|p| (p.run, p.side));
            return;
        }
        // Sized up front: collecting a filtered iterator would grow by
        // doubling and copy the records each time.
        let mut ordered = Vec::with_capacity(self.pipes.len());
        ordered.extend(bucket.iter().filter(|&&i| i != NONE).map(|&i| self.pipes[i]));
        self.pipes = ordered;
    }

    /// Design flow of every link from the emitter flows, by accumulation
    /// over the supply tree (rooted at the source's supply node) and the
    /// return tree (rooted at the pump suction).
    fn tree_flows(&mut self, emitter_flows: &[(usize, usize, f64)]) -> Vec<f64> {
        let n_links = self.net.links.len();
        let n_nodes = self.net.nodes.len();
        let mut flows = vec![0.0; n_links];
        // Net inflow that must leave each node through its tree link:
        // supply side: the emitter valve link draws m at node s; return side:
        // the emitter body delivers m at node r.
        let mut excess = vec![0.0; n_nodes];
        for &(s, r, m) in emitter_flows {
            excess[s] -= m;
            excess[r] += m;
        }
        for e in &self.emitters {
            flows[e.valves_link] = e.flow_kg_s;
            flows[e.body_link] = e.flow_kg_s;
        }
        if self.tree_orders.is_none() {
            self.tree_orders = self.compute_tree_orders();
        }
        let Some((order_s, order_r)) = &self.tree_orders else { return flows };
        // Supply pipes: oriented away from the root; process leaves first.
        for &l in order_s.iter().rev() {
            let to = self.net.links[l].to;
            let m = -excess[to];
            flows[l] = m;
            excess[self.net.links[l].from] -= m;
            excess[to] += m;
        }
        for &l in order_r.iter().rev() {
            let from = self.net.links[l].from;
            let m = excess[from];
            flows[l] = m;
            excess[from] -= m;
            excess[self.net.links[l].to] += m;
        }
        let total: f64 = emitter_flows.iter().map(|x| x.2).sum();
        flows[self.source_link] = total;
        flows[self.pump_link] = total;
        flows
    }

    /// Breadth-first orders of the supply pipes from the source's supply
    /// node and of the return pipes from the pump suction (the same for
    /// every flow pattern: computed once per derivation).
    fn compute_tree_orders(&self) -> Option<(Vec<usize>, Vec<usize>)> {
        let n_nodes = self.net.nodes.len();
        let supply_links: Vec<usize> = self.pipes.iter().filter(|p| p.side == Side::Supply).map(|p| p.link).collect();
        let return_links: Vec<usize> = self.pipes.iter().filter(|p| p.side == Side::Return).map(|p| p.link).collect();
        let depth = |links: &[usize], root: usize, towards_root: bool| -> Vec<usize> {
            // Links by their node nearer the root (CSR, in `links` order).
            let near_of = |l: usize| {
                let k = &self.net.links[l];
                if towards_root { k.to } else { k.from }
            };
            let mut ptr = vec![0usize; n_nodes + 1];
            for &l in links {
                ptr[near_of(l) + 1] += 1;
            }
            for v in 0..n_nodes {
                ptr[v + 1] += ptr[v];
            }
            let mut fill = ptr.clone();
            let mut adj = vec![0usize; links.len()];
            for &l in links {
                let v = near_of(l);
                adj[fill[v]] = l;
                fill[v] += 1;
            }
            let mut out = Vec::with_capacity(links.len());
            let mut q = vec![root];
            let mut head = 0;
            while head < q.len() {
                let n = q[head];
                head += 1;
                for &l in &adj[ptr[n]..ptr[n + 1]] {
                    out.push(l);
                    let k = &self.net.links[l];
                    q.push(if towards_root { k.from } else { k.to });
                }
            }
            out
        };
        let (s_src, _) = self.source.and_then(|s| self.pair(s))?;
        Some((depth(&supply_links, s_src, false), depth(&return_links, self.net.reference_node, true)))
    }

    #[allow(clippy::too_many_lines)] // reason: the design pass is one sequence of steps
    fn design(&mut self, p: &Project, dn: &Dense<'_>, opts: &SolveOptions, ws: &mut Workspace, sol: &mut Solution) {
        let s = &p.settings;
        let (Some(sp), Some(rp)) = (self.supply_props, self.return_props) else { return };
        let emitter_flows: Vec<(usize, usize, f64)> = self.emitters.iter().map(|e| (e.s, e.r, e.flow_kg_s)).collect();
        let flows = self.tree_flows(&emitter_flows);
        self.total_design_kg_s = emitter_flows.iter().map(|x| x.2).sum();

        // Size every pipe.
        for i in 0..self.pipes.len() {
            let pd = &self.pipes[i];
            let (run, side, class, link) = (pd.run, pd.side, pd.class, pd.link);
            let props = if side == Side::Supply { sp } else { rp };
            let series_id = s.series.get(class);
            let series = match pipes::find_series(series_id) {
                Ok(x) => x,
                Err(e) => {
                    self.findings
                        .push(Finding::error(ItemRef::Settings, format!("pipe series for {}: {e}", class.name())));
                    continue;
                }
            };
            let m = flows[link].abs();
            let fixed = dn.run(run).and_then(|r| match side {
                Side::Supply => r.props.fixed_size.clone(),
                Side::Return => r.props.fixed_return_size.clone().or_else(|| r.props.fixed_size.clone()),
            });
            let v_lim = *s.velocity_limit_m_s.get(class);
            let size = if let Some(label) = fixed {
                if let Some(ix) = series.sizes.iter().position(|z| z.label == label) {
                    ix
                } else {
                    self.findings.push(Finding::error(
                        ItemRef::Run(run),
                        format!("run {run}: fixed size {label} is not in {} — pick one of its sizes", series.name),
                    ));
                    ws.sizes.choose(run, self.topo.rix(run), side, series, m, &props, v_lim, s.gradient_limit_pa_m).0
                }
            } else {
                let (ix, ok) =
                    ws.sizes.choose(run, self.topo.rix(run), side, series, m, &props, v_lim, s.gradient_limit_pa_m);
                if !ok && side == Side::Supply {
                    let largest = series.sizes.last().map_or("", |z| z.label.as_str());
                    let flow_l_h = m / props.density_kg_m3 * 3.6e6;
                    let key = [
                        u64::from(run.0),
                        std::ptr::from_ref(series).addr() as u64,
                        class as u64,
                        flow_l_h.to_bits(),
                        0,
                    ];
                    let message = ws.messages.get(self.topo.rix(run), 3, key, "", || {
                        format!(
                            "run {run}: even the largest size {largest} of {} exceeds the {} limits at {flow_l_h:.0} l/h — \
                             choose a series with larger sizes or split the load",
                            series.name,
                            class.name(),
                        )
                    });
                    self.findings.push(Finding::warning(ItemRef::Run(run), message));
                }
                ix
            };
            self.pipes[i].series = Some(series);
            self.pipes[i].size = size;
        }

        // Pipe laws with local losses (bends from geometry, tees from
        // topology). The tee split is taken from the downstream heat loads,
        // not the design flows, so ζ does not jump when an emitter reaches
        // its flow cap at a low supply temperature (the sweep).
        let load_split: Vec<(usize, usize, f64)> = self
            .emitters
            .iter()
            .map(|e| {
                let load = dn.node(e.id).map_or(0.0, |n| match &n.kind {
                    NodeKind::Emitter(em) if e.flow_kg_s > 0.0 => em.load_w,
                    _ => 0.0,
                });
                (e.s, e.r, load)
            })
            .collect();
        let split = self.tree_flows(&load_split);
        // ζ of a 90° bend: one value for every pipe (its correlation is the
        // same call each time).
        let bend_zeta = fittings::Fitting::BEND_90.zeta().unwrap_or(0.3);
        for i in 0..self.pipes.len() {
            let pd = &self.pipes[i];
            let Some(series) = pd.series else { continue };
            let Some(size) = series.sizes.get(pd.size) else { continue };
            let props = if pd.side == Side::Supply { sp } else { rp };
            let mut zeta = pd.bends * bend_zeta;
            if pd.vertical {
                // Foot and head of a riser: two bends (assumption, stated).
                zeta += 2.0 * bend_zeta;
            }
            // A header is a manifold, not a tee: its outlet gets a fixed ζ
            // (HEADER_OUTLET_ZETA); tees are booked at junctions.
            let at_header = self
                .topo
                .tree_run(pd.run)
                .is_some_and(|tr| matches!(dn.node(tr.up).map(|n| &n.kind), Some(NodeKind::Header(_))));
            if at_header {
                zeta += HEADER_OUTLET_ZETA;
            } else {
                zeta += self.tee_zeta(pd.run, pd.side, &split, &mut ws.tees).max(0.0);
            }
            let zeta = zeta.max(0.0);
            let law = PipeHydraulics::new(
                pd.length_m.max(0.01),
                size.inner_diameter_m(),
                series.roughness_m,
                zeta,
                props.density_kg_m3,
                props.viscosity_pa_s,
            );
            match law {
                Ok(h) => self.net.links[pd.link].law = LinkLaw::Pipe(h),
                Err(e) => self.findings.push(Finding::error(ItemRef::Run(pd.run), format!("run {}: {e}", pd.run))),
            }
        }

        // Lockshields (fully open) in the valve links for the open-valve
        // circuit pressure drops.
        let dp = |law: &LinkLaw, m: f64| solver::link_dp(law, m).map_or(0.0, |x| x.0);
        let rho_mean = 0.5 * (sp.density_kg_m3 + rp.density_kg_m3);
        let lockshield_r: Vec<f64> = self
            .emitters
            .iter()
            .map(|e| {
                if e.lockshield_kv.is_finite() {
                    valves::resistance_r_pa_s2_kg2(e.lockshield_kv, rho_mean).unwrap_or(0.0)
                } else {
                    0.0
                }
            })
            .collect();

        // Pressures at design flows: supply nodes relative to the source
        // outlet, return nodes relative to the pump suction.
        let n_nodes = self.net.nodes.len();
        let mut p_node = vec![f64::NAN; n_nodes];
        let Some((s_src, r_src)) = self.source.and_then(|x| self.pair(x)) else { return };
        p_node[s_src] = 0.0;
        p_node[r_src] = 0.0;
        let static_c = |k: &HydLink, nodes: &[HydNode]| {
            k.density_kg_m3 * GRAVITY_M_S2 * (nodes[k.from].elevation_m - nodes[k.to].elevation_m)
        };
        // Resolve by repeated sweeps over pipe links (trees: each sweep
        // resolves at least one level; the breadth-first order of the runs
        // makes it one sweep, but for reverse-return chains).
        // (tree position, link) in ascending order: built by walking the tree
        // runs in order (a run's supply link precedes its return link), sorted
        // only if that does not hold.
        let mut pending: Vec<(usize, usize)> = Vec::with_capacity(self.pipes.len());
        for (pos, tr) in self.topo.runs.iter().enumerate() {
            let r = self.topo.rix(tr.run);
            for by_run in [&self.supply_link, &self.return_link] {
                if let Some(&l) = by_run.get(r).filter(|&&l| l != NONE) {
                    pending.push((pos, l));
                }
            }
        }
        if pending.len() != self.pipes.len() || !pending.is_sorted() {
            pending.clear();
            pending.extend(self.pipes.iter().map(|pd| (self.topo.run_position(pd.run).unwrap_or(usize::MAX), pd.link)));
            pending.sort_unstable();
        }
        let mut guard = 0;
        while !pending.is_empty() && guard < 2 * n_nodes + 2 {
            guard += 1;
            pending.retain(|&(_, l)| {
                let k = &self.net.links[l];
                let (pf, pt) = (p_node[k.from], p_node[k.to]);
                let mut f = || ws.link_dps.dp(l, &k.law, flows[l]) - static_c(k, &self.net.nodes);
                if pf.is_finite() && !pt.is_finite() {
                    p_node[k.to] = pf - f();
                    false
                } else if pt.is_finite() && !pf.is_finite() {
                    p_node[k.from] = pt + f();
                    false
                } else {
                    !(pf.is_finite() && pt.is_finite())
                }
            });
        }
        let total = self.total_design_kg_s;
        let src_dp = dp(&self.net.links[self.source_link].law, total);

        // Index circuit.
        let mut req0 = vec![0.0; self.emitters.len()];
        let mut open_dp = vec![0.0; self.emitters.len()];
        let mut best: Option<(usize, f64)> = None;
        for (i, e) in self.emitters.iter().enumerate() {
            if e.flow_kg_s <= 0.0 {
                continue;
            }
            let m = e.flow_kg_s;
            let body = ws.link_dps.dp(e.body_link, &self.net.links[e.body_link].law, m);
            let lock = lockshield_r[i] * m * m;
            let (ps, pr) = (p_node[e.s], p_node[e.r]);
            if !(ps.is_finite() && pr.is_finite()) {
                continue;
            }
            req0[i] = src_dp - ps + body + lock + pr;
            let valve_open = e
                .valve
                .and_then(|v| v.settings.last())
                .map_or(0.0, |st| valves::resistance_r_pa_s2_kg2(st.kv_m3_h, rho_mean).unwrap_or(0.0) * m * m);
            open_dp[i] = valve_open;
            let need = req0[i] + valve_open.max(s.min_valve_dp_pa);
            if best.is_none_or(|(_, b)| need > b) {
                best = Some((i, need));
            }
        }
        let Some((index, index_dp)) = best else {
            self.findings
                .push(Finding::error(ItemRef::Project, "no emitter has a design flow — give the rooms their loads"));
            return;
        };
        sol.index_emitter = Some(self.emitters[index].id);
        let duty = index_dp * (1.0 + s.head_margin_fraction);

        // Pump: control set-point and the head available for balancing.
        let Some(curve) = self.curve else { return };
        let q_design_m3_h = total / rp.density_kg_m3 * 3600.0;
        let source = self.source.unwrap_or(crate::project::NodeId(0));
        let control = match (s.mode, self.control) {
            (Mode::DesignFollowsLayout, PumpControl::ConstantDp { .. }) => {
                PumpControl::ConstantDp { setpoint_kpa: duty / 1000.0 }
            }
            (Mode::DesignFollowsLayout, PumpControl::ProportionalDp { .. }) => {
                PumpControl::ProportionalDp { setpoint_kpa: duty / 1000.0 }
            }
            (_, c) => c,
        };
        self.control = control;
        let curve_head_pa = curve.head_kpa(q_design_m3_h).map_or(0.0, |h| h * 1000.0);
        let available =
            control.head_kpa(&curve, q_design_m3_h, q_design_m3_h.max(1e-9)).map_or(curve_head_pa, |h| h * 1000.0);
        if curve_head_pa < duty {
            self.findings.push(Finding::warning(
                ItemRef::Node(source),
                format!(
                    "pump too weak: its curve gives {:.1} kPa at the design flow {:.2} m³/h but the index circuit needs \
                     {:.1} kPa with margin — choose a larger pump or reduce the index circuit's pressure drop",
                    curve_head_pa / 1000.0,
                    q_design_m3_h,
                    duty / 1000.0
                ),
            ));
        }
        self.available_pa = available;
        self.curve = Some(curve);

        // Presettings.
        let mut results = Vec::with_capacity(self.emitters.len());
        let emitters = std::mem::take(&mut self.emitters);
        // Results in id order (the order of `Solution::emitters`): sort the
        // indices, not the (large) results.
        let mut by_id: Vec<usize> = (0..emitters.len()).collect();
        by_id.sort_unstable_by_key(|&i| emitters[i].id);
        let mut result_emitter = Vec::with_capacity(emitters.len());
        for &i in &by_id {
            let e = &emitters[i];
            let slot = self.topo.nix(e.id);
            let Some(node) = dn.node(e.id) else { continue };
            let NodeKind::Emitter(em) = &node.kind else { continue };
            let level = p.level(node.level).map_or_else(String::new, |l| l.name.clone());
            let m = e.flow_kg_s;
            let q_m3_h = m / sp.density_kg_m3 * 3600.0;
            let mut r = EmitterResult {
                id: e.id,
                name: em.name.clone(),
                level,
                load_w: em.load_w,
                room_c: em.room_c,
                supply_c: s.supply_c,
                design_return_c: e.design.as_ref().map_or(em.room_c, |d| d.outcome.return_c()),
                design_flow_kg_s: m,
                design_flow_l_h: q_m3_h * 1000.0,
                design_output_w: e.design.as_ref().map_or(0.0, |d| d.outcome.output_w()),
                detail: e.design.as_ref().map(|d| d.detail.clone()),
                circuit_dp_open_pa: req0[i] + open_dp[i],
                circuit_rest_pa: req0[i],
                valve_dp_pa: 0.0,
                kv_needed_m3_h: 0.0,
                presetting: String::from("—"),
                valve_kv_m3_h: 0.0,
                authority: 0.0,
                presetting_flow_error: 0.0,
                flow_kg_s: 0.0,
                flow_l_h: 0.0,
                return_c: em.room_c,
                output_w: 0.0,
                flow_deviation: 0.0,
                closed: opts.closed_emitters.contains(&e.id),
            };
            if let Some(d) = &e.design {
                self.emitter_findings(node, d.as_ref());
            }
            let mut valve_kv = e.valve.and_then(|v| v.settings.last()).map_or(1.0, |st| st.kv_m3_h);
            if let (Some(family), true) = (e.valve, m > 0.0) {
                let dp_valve = available - req0[i];
                // The emitter's own resistances in series with the valve: its
                // connection pipes, body and lockshield. The shared pipes
                // upstream carry many circuits, so their Δp barely follows
                // one circuit's flow error; treating them as a fixed pressure
                // difference gives a realistic residual for a stepped
                // presetting.
                let own_rest = {
                    let conn = self.topo.parent_run_of(e.id);
                    let mut pipe_dp = |side: Side| {
                        let by_run = if side == Side::Supply { &self.supply_link } else { &self.return_link };
                        conn.and_then(|r| by_run.get(self.topo.rix(r)))
                            .and_then(|&link| self.net.links.get(link).map(|l| (link, l)))
                            .map_or(0.0, |(link, l)| ws.link_dps.dp(link, &l.law, m))
                    };
                    let (supply_dp, return_dp) = (pipe_dp(Side::Supply), pipe_dp(Side::Return));
                    let body = self.net.links.get(e.body_link).map_or(0.0, |l| ws.link_dps.dp(e.body_link, &l.law, m));
                    (supply_dp + return_dp + body + lockshield_r[i] * m * m).min(req0[i])
                };
                let fixed = em.valves.presetting.clone();
                if let Some(label) = fixed {
                    if let Some(st) = family.settings.iter().find(|st| st.label == label) {
                        valve_kv = st.kv_m3_h;
                        r.presetting = label;
                    } else if let Some(pos) =
                        label.parse::<f64>().ok().filter(|_| opts.continuous_presetting || s.mode == Mode::Installed)
                        && let Ok(kv) = valves::kv_at_continuous_setting(family, pos)
                    {
                        valve_kv = kv;
                        r.presetting = label;
                    } else {
                        self.findings.push(Finding::error(
                            ItemRef::Node(e.id),
                            format!(
                                "{}: presetting {label} is not a step of {} — pick one of its steps",
                                node.label(),
                                family.name
                            ),
                        ));
                    }
                    // The same quantities as for a chosen presetting, so that
                    // freezing a design (installed mode) changes no number:
                    // the Δp the valve must absorb, the Kv that needs and the
                    // flow error the stored setting gives.
                    if dp_valve > 0.0 {
                        r.valve_dp_pa = dp_valve;
                        r.kv_needed_m3_h = valves::kv_needed(q_m3_h, dp_valve, rho_mean).unwrap_or(0.0);
                        r.presetting_flow_error =
                            valves::flow_ratio_in_circuit(valve_kv, r.kv_needed_m3_h, dp_valve, own_rest)
                                .map_or(0.0, |ratio| ratio - 1.0);
                    } else {
                        r.valve_dp_pa = valves::resistance_r_pa_s2_kg2(valve_kv, rho_mean).unwrap_or(0.0) * m * m;
                    }
                } else if dp_valve <= 0.0 {
                    valve_kv = family.settings.last().map_or(valve_kv, |st| st.kv_m3_h);
                    r.presetting = family.settings.last().map_or_else(String::new, |st| st.label.clone());
                    self.findings.push(Finding::warning(
                        ItemRef::Node(e.id),
                        format!(
                            "{}: the pump head cannot drive the design flow even with the valve fully open",
                            node.label()
                        ),
                    ));
                } else {
                    let kv_needed = valves::kv_needed(q_m3_h, dp_valve, rho_mean).unwrap_or(valve_kv);
                    r.kv_needed_m3_h = kv_needed;
                    if opts.continuous_presetting {
                        let pos = valves::continuous_setting_for_kv(family, kv_needed).unwrap_or(0.0);
                        valve_kv = valves::kv_at_continuous_setting(family, pos).unwrap_or(kv_needed);
                        r.presetting = format!("{pos:.3}");
                    } else {
                        match valves::choose_setting(family, kv_needed) {
                            Ok(choice) => {
                                valve_kv = choice.kv_m3_h;
                                r.presetting.clone_from(&choice.label);
                                r.presetting_flow_error =
                                    choice.flow_error_fraction_in_circuit(dp_valve, own_rest).unwrap_or(0.0);
                                match choice.fit {
                                    valves::SettingFit::InRange => {}
                                    valves::SettingFit::AboveLargest => {
                                        let key = [
                                            u64::from(e.id.0),
                                            std::ptr::from_ref(family).addr() as u64,
                                            kv_needed.to_bits(),
                                            choice.kv_m3_h.to_bits(),
                                            r.presetting_flow_error.to_bits(),
                                        ];
                                        let message = ws.messages.get(slot, 0, key, &em.name, || {
                                            format!(
                                                "{}: needs Kv {kv_needed:.3} but {} opens only to {:.3} — the room gets about {:.0} % of its flow; \
                                                 choose a valve with a larger Kv or lower the circuit's resistance",
                                                node.label(),
                                                family.name,
                                                choice.kv_m3_h,
                                                (1.0 + r.presetting_flow_error) * 100.0
                                            )
                                        });
                                        self.findings.push(Finding::warning(ItemRef::Node(e.id), message));
                                    }
                                    valves::SettingFit::BelowSmallest => {
                                        let key = [
                                            u64::from(e.id.0),
                                            0,
                                            kv_needed.to_bits(),
                                            choice.kv_m3_h.to_bits(),
                                            r.presetting_flow_error.to_bits(),
                                        ];
                                        let message = ws.messages.get(slot, 1, key, &em.name, || {
                                            format!(
                                                "{}: needs Kv {kv_needed:.3}, below the smallest presetting ({:.3}) — the room gets about {:.0} % of its \
                                                 flow; throttle with the lockshield or choose a valve with a finer presetting",
                                                node.label(),
                                                choice.kv_m3_h,
                                                (1.0 + r.presetting_flow_error) * 100.0
                                            )
                                        });
                                        self.findings.push(Finding::warning(ItemRef::Node(e.id), message));
                                    }
                                }
                            }
                            Err(err) => self
                                .findings
                                .push(Finding::error(ItemRef::Node(e.id), format!("{}: {err}", node.label()))),
                        }
                    }
                    r.valve_dp_pa = dp_valve;
                }
                if r.valve_dp_pa > 0.0 && available > 0.0 {
                    r.authority = (r.valve_dp_pa / available).min(1.0);
                    if r.authority < valves::AUTHORITY_WARN_BELOW && !r.closed {
                        let key = [u64::from(e.id.0), r.authority.to_bits(), 0, 0, 0];
                        let message = ws.messages.get(slot, 2, key, &em.name, || {
                            format!(
                                "{}: valve authority {:.2} is below {:.1} (common practice) — the valve has little control; \
                                 reduce the pump head or the circuit's other resistances",
                                node.label(),
                                r.authority,
                                valves::AUTHORITY_WARN_BELOW
                            )
                        });
                        self.findings.push(Finding::warning(ItemRef::Node(e.id), message));
                    }
                }
            }
            r.valve_kv_m3_h = valve_kv;
            let r_valve = valves::resistance_r_pa_s2_kg2(valve_kv, rho_mean).unwrap_or(0.0) + lockshield_r[i];
            self.net.links[e.valves_link].law = LinkLaw::Quadratic { r_pa_s2_kg2: r_valve };
            if m <= 0.0 || r.closed {
                self.net.links[e.valves_link].closed = true;
            }
            results.push(r);
            result_emitter.push(i);
        }
        self.emitters = emitters;
        self.result_emitter = result_emitter;
        sol.emitters = results;

        // Pump law for the operating solve.
        // In installed mode the proportional-Δp line keeps the design flow it
        // was set for (stored by `freeze_edit`).
        let stored_design_kg_s = match dn.node(source).map(|n| &n.kind) {
            Some(NodeKind::Source(src)) if s.mode == Mode::Installed => {
                src.pump.design_flow_m3_h.map(|q| q * rp.density_kg_m3 / 3600.0)
            }
            _ => None,
        };
        if let Ok((a0, a1, a2)) = crate::pump::to_mass_flow_coefficients(
            &curve,
            &self.control,
            rp.density_kg_m3,
            stored_design_kg_s.unwrap_or(total).max(1e-9),
        ) {
            // A controlled pump never gives more than its curve at full
            // speed: the operating law is the lower of the two.
            let max_curve_pa = match self.control {
                PumpControl::FixedSpeed => None,
                PumpControl::ConstantDp { .. } | PumpControl::ProportionalDp { .. } => {
                    let (c0, c1, c2) = crate::pump::curve_in_mass_flow(&curve, rp.density_kg_m3);
                    Some([c0, c1, c2])
                }
            };
            self.net.links[self.pump_link].law =
                LinkLaw::Pump { a0_pa: a0, a1_pa_s_kg: a1, a2_pa_s2_kg2: a2, max_curve_pa };
        }
        self.net.reference_pressure_pa = 0.0;
        sol.pump = Some(PumpResult {
            design_flow_kg_s: total,
            design_flow_m3_h: q_design_m3_h,
            index_dp_pa: index_dp,
            duty_head_pa: duty,
            available_pa: available,
            control: self.control,
            curve: Some(curve),
            operating_flow_m3_h: q_design_m3_h,
            operating_head_pa: available,
            hydraulic_power_w: 0.0,
            on_max_curve: false,
        });

        // Heat load, source capacity, volumes, vessel.
        sol.heat_load_w = self
            .emitters
            .iter()
            .filter_map(|e| dn.node(e.id))
            .map(|n| match &n.kind {
                NodeKind::Emitter(em) => em.load_w,
                _ => 0.0,
            })
            .sum();
        if let Some(NodeKind::Source(src)) = dn.node(source).map(|n| &n.kind) {
            if src.capacity_w < sol.heat_load_w {
                self.findings.push(Finding::warning(
                    ItemRef::Node(source),
                    format!(
                        "the source's capacity {:.1} kW is below the total load {:.1} kW — choose a larger source",
                        src.capacity_w / 1000.0,
                        sol.heat_load_w / 1000.0
                    ),
                ));
            }
            let pipes_l: f64 = self
                .pipes
                .iter()
                .filter_map(|pd| {
                    pd.series.and_then(|s| s.sizes.get(pd.size)).map(|z| z.water_content_l_per_m() * pd.length_m)
                })
                .sum();
            let emitters_l: f64 =
                self.emitters.iter().filter_map(|e| e.design.as_ref()).map(|d| d.installed.water_content_l).sum();
            sol.water_volume_l = pipes_l + emitters_l + src.water_content_l;
            let z_src = dn.elevation_m(source);
            let z_max = p.nodes().map(|n| dn.elevation_m(n.id)).fold(z_src, f64::max);
            let static_height = s.static_height_m.unwrap_or(z_max - z_src + 1.0);
            let mut input = vessel::VesselInput::new(sol.water_volume_l, s.supply_c, static_height, s.safety_valve_bar);
            input.fill_temperature_c = s.fill_temperature_c;
            match vessel::size_expansion_vessel(&input) {
                Ok(v) => sol.vessel = Some(v),
                Err(e) => self.findings.push(Finding::warning(ItemRef::Settings, format!("expansion vessel: {e}"))),
            }
        }
        self.design_flows = flows;
        sol.index_path = self.circuit_links(index);
        self.pipe_results(sol, s);
    }

    /// ζ of the tee at the upstream end of a run: dividing on the supply,
    /// combining on the return; the child with the largest flow is the run
    /// (straight) leg, the others are branches.
    fn tee_zeta(&self, run: RunId, side: Side, flows: &[f64], tees: &mut cache::TeeCache) -> f64 {
        let Some(tr) = self.topo.tree_run(run) else { return 0.0 };
        let children = self.topo.children_of(tr.up);
        if children.len() < 2 {
            return 0.0;
        }
        let flow_of =
            |r: RunId| self.supply_link.get(self.topo.rix(r)).and_then(|&l| flows.get(l)).map_or(0.0, |f| f.abs());
        // Inner diameter of a run's supply pipe (sizes are chosen by now).
        let diameter_of = |r: RunId| {
            self.supply_pipe
                .get(self.topo.rix(r))
                .and_then(|&i| self.pipes.get(i))
                .and_then(|pd| pd.series.and_then(|s| s.sizes.get(pd.size)))
                .map_or(0.0, crate::pipes::PipeSize::inner_diameter_m)
        };
        let combined: f64 = children.iter().map(|c| flow_of(c.run)).sum();
        if combined <= 0.0 {
            return 0.0;
        }
        let mine = flow_of(run);
        let largest = children
            .iter()
            .map(|c| (flow_of(c.run), c.run))
            .fold((f64::MIN, run), |a, b| if b.0 > a.0 { b } else { a })
            .1;
        let leg = if largest == run { fittings::TeeLeg::Run } else { fittings::TeeLeg::Branch };
        let flow = if side == Side::Supply { fittings::TeeFlow::Dividing } else { fittings::TeeFlow::Combining };
        let branch_flow = if leg == fittings::TeeLeg::Branch { mine } else { combined - mine };
        let ratio = (branch_flow / combined).clamp(0.0, 1.0);
        // Branch over run diameter: the branch leg's pipe against the pipe
        // feeding the tee (or the straight-through leg at the source).
        let branch_run = if leg == fittings::TeeLeg::Branch {
            run
        } else {
            children
                .iter()
                .map(|c| c.run)
                .filter(|&r| r != run)
                .max_by(|&a, &b| flow_of(a).total_cmp(&flow_of(b)))
                .unwrap_or(run)
        };
        let feed = self.topo.parent_run_of(tr.up).unwrap_or(largest);
        let (d_branch, d_run) = (diameter_of(branch_run), diameter_of(feed));
        let beta = if d_branch > 0.0 && d_run > 0.0 { (d_branch / d_run).clamp(0.05, 1.0) } else { 1.0 };
        let key = [flow as u64, leg as u64, ratio.to_bits(), beta.to_bits()];
        let slot = 2 * self.topo.rix(run) + usize::from(side == Side::Return);
        tees.zeta(slot, 2 * self.topo.run_slots(), key, || {
            fittings::Fitting::Tee { flow, leg, flow_ratio: ratio, branch_diameter_ratio: beta }.zeta().unwrap_or(0.0)
        })
    }

    /// Findings from an emitter's own design.
    fn emitter_findings(&mut self, node: &crate::project::Node, d: &EmitterDesign) {
        if let CheckOutcome::Shortfall { shortfall_w, fraction_delivered, .. } = d.outcome {
            self.findings.push(Finding::warning(
                ItemRef::Node(node.id),
                format!(
                    "{} falls short by {shortfall_w:.0} W ({:.0} % of the load delivered) at the design temperatures — \
                     a larger emitter or a higher supply temperature is needed",
                    node.label(),
                    fraction_delivered * 100.0
                ),
            ));
        }
        match &d.detail {
            EmitterDetail::FloorLoop(f) => {
                if f.exceeds_surface_limit {
                    self.findings.push(Finding::warning(
                        ItemRef::Node(node.id),
                        format!(
                            "{}: floor surface {:.1} °C exceeds the EN 1264 limit {:.0} °C — add area (edge zone, wall heating) or \
                             a supplementary emitter",
                            node.label(),
                            f.mean_surface_c,
                            f.surface_limit_c
                        ),
                    ));
                }
                if f.exceeds_dp_limit {
                    self.findings.push(Finding::warning(
                        ItemRef::Node(node.id),
                        format!(
                            "{}: loop pressure drop {:.1} kPa exceeds {:.0} kPa (common practice) — split it into two loops",
                            node.label(),
                            f.loop_dp_pa / 1000.0,
                            crate::emitters::floor::LOOP_DP_LIMIT_PA / 1000.0
                        ),
                    ));
                }
                if f.exceeds_length_limit {
                    self.findings.push(Finding::warning(
                        ItemRef::Node(node.id),
                        format!(
                            "{}: loop length {:.0} m is long (common practice limit) — split it into two loops",
                            node.label(),
                            f.loop_length_m
                        ),
                    ));
                }
            }
            EmitterDetail::Radiator(r) if !r.fits_catalog => {
                self.findings.push(Finding::warning(
                    ItemRef::Node(node.id),
                    format!(
                        "{}: needs {:.0} W nominal, more than the longest radiator of its type and height — choose a taller or \
                         deeper type, or two radiators",
                        node.label(),
                        r.required_nominal_w
                    ),
                ));
            }
            _ => {}
        }
    }

    /// Matched physics ([`SolveOptions::matched_physics`]): one density and
    /// viscosity (water at the mean design temperature) and EPANET's friction
    /// law on every link of the derived network.
    fn match_physics(&mut self, p: &Project) {
        let mean_c = 0.5 * (p.settings.supply_c + p.settings.return_c);
        let Ok(w) = water::properties(mean_c) else { return };
        for k in &mut self.net.links {
            k.density_kg_m3 = w.density_kg_m3;
            if let LinkLaw::Pipe(h) = &mut k.law {
                h.density_kg_m3 = w.density_kg_m3;
                h.viscosity_pa_s = w.viscosity_pa_s;
                h.friction_law = crate::friction::FrictionLaw::SwameeJainEpanet;
            }
        }
    }

    /// Links of the circuit through emitter `i`: source, supply path,
    /// emitter, return path, pump — in flow order.
    fn circuit_links(&self, i: usize) -> Vec<usize> {
        let Some(e) = self.emitters.get(i) else { return Vec::new() };
        // Walk the supply tree up from the emitter's supply node, and the
        // return tree down from its return node to the suction.
        let n_nodes = self.net.nodes.len();
        let mut into = vec![NONE; n_nodes]; // supply: node -> link feeding it
        let mut out_of = vec![NONE; n_nodes]; // return: node -> link leaving it
        for pd in &self.pipes {
            let k = &self.net.links[pd.link];
            match pd.side {
                Side::Supply => into[k.to] = pd.link,
                Side::Return => out_of[k.from] = pd.link,
            }
        }
        let mut supply = Vec::new();
        let mut n = e.s;
        while let Some(&l) = into.get(n).filter(|&&l| l != NONE) {
            supply.push(l);
            n = self.net.links[l].from;
            if supply.len() > self.net.links.len() {
                break;
            }
        }
        supply.reverse();
        let mut path = vec![self.source_link];
        path.extend(supply);
        path.push(e.valves_link);
        path.push(e.body_link);
        let mut n = e.r;
        let mut guard = 0;
        while let Some(&l) = out_of.get(n).filter(|&&l| l != NONE) {
            path.push(l);
            n = self.net.links[l].to;
            guard += 1;
            if guard > self.net.links.len() {
                break;
            }
        }
        path.push(self.pump_link);
        path
    }

    /// Words for a link of the derived network, for messages.
    fn describe_link(&self, link: usize) -> String {
        match self.roles.get(link) {
            Some(LinkRole::Pipe { run, side: Side::Supply }) => format!("run {run} supply"),
            Some(LinkRole::Pipe { run, side: Side::Return }) => format!("run {run} return"),
            Some(LinkRole::EmitterValves(n)) => format!("valves of {n}"),
            Some(LinkRole::EmitterBody(n)) => format!("emitter {n}"),
            Some(LinkRole::Source(n)) => format!("heat source {n}"),
            Some(LinkRole::Pump(n)) => format!("pump of {n}"),
            None => format!("link {link}"),
        }
    }

    fn pipe_results(&self, sol: &mut Solution, s: &crate::project::DesignSettings) {
        let (Some(sp), Some(rp)) = (self.supply_props, self.return_props) else { return };
        // Sized up front: a filtered iterator would grow the vector by
        // doubling, copying the large records each time.
        let mut pipes = Vec::with_capacity(self.pipes.len());
        pipes.extend(self.pipes.iter().filter_map(|pd| {
            let series = pd.series?;
            let size = series.sizes.get(pd.size)?;
            let props = if pd.side == Side::Supply { sp } else { rp };
            let zeta = match &self.net.links[pd.link].law {
                LinkLaw::Pipe(h) => h.zeta_sum,
                _ => 0.0,
            };
            Some(PipeResult {
                run: pd.run,
                side: pd.side,
                class: pd.class,
                length_m: pd.length_m,
                series: series.id.as_str(),
                size: size.label.as_str(),
                inner_mm: size.inner_diameter_m() * 1000.0,
                zeta,
                temperature_c: props.temperature_c,
                design_flow_kg_s: self.design_flows.get(pd.link).copied().unwrap_or(0.0),
                flow_kg_s: 0.0,
                flow_l_h: 0.0,
                velocity_m_s: 0.0,
                velocity_limit_m_s: *s.velocity_limit_m_s.get(pd.class),
                gradient_pa_m: 0.0,
                dp_pa: 0.0,
                link: pd.link,
            })
        }));
        sol.pipes = pipes;
    }

    fn operate(&mut self, p: &Project, opts: &SolveOptions, ws: &mut Workspace, sol: &mut Solution) {
        if sol.pump.is_none() || sol.emitters.is_empty() {
            return;
        }
        let same_topology = ws.last_roles == self.roles && ws.last_flows.len() == self.net.links.len();
        if !same_topology {
            ws.solver = None;
        }
        let solver_ws = match ws.solver.take() {
            Some(w) => Ok(w),
            None => SolverWorkspace::new(&self.net),
        };
        let mut solver_ws = match solver_ws {
            Ok(w) => w,
            Err(e) => {
                self.findings.push(Finding::error(ItemRef::Project, format!("network: {e}")));
                return;
            }
        };
        let initial: &[f64] = if same_topology { &ws.last_flows } else { &self.design_flows };
        let report = solver::solve(&self.net, &opts.solver, &mut solver_ws, Some(initial));
        let report = match report {
            Ok(r) => {
                sol.timings.solver_ms = r.timings.total_us / 1000.0;
                r
            }
            Err(e) => {
                ws.solver = Some(solver_ws);
                self.findings.push(Finding::error(ItemRef::Project, format!("network: {e}")));
                return;
            }
        };
        sol.iterations = report.iterations;
        sol.converged = report.converged;
        if !report.converged {
            let detail = report.diagnostic.as_ref().map_or_else(String::new, |d| {
                let links: Vec<String> = d.suspect_links.iter().take(5).map(|s| self.describe_link(s.link)).collect();
                format!(" (last flow change {:.2e}; links that oscillate: {})", d.last_flow_change, links.join(", "))
            });
            self.findings.push(Finding::error(
                ItemRef::Project,
                format!(
                    "the operating solve did not converge in {} iterations{detail} — check for closed valves isolating \
                     emitters, a pump far too weak, or extreme resistances",
                    report.iterations
                ),
            ));
        }
        let finite = report.flows_kg_s.iter().all(|f| f.is_finite());
        let flows = if finite { report.flows_kg_s } else { self.design_flows.clone() };
        if !same_topology {
            ws.last_roles.clone_from(&self.roles);
        }
        ws.last_flows.clone_from(&flows);
        sol.node_pressures_pa = report.pressures_pa;
        // The solver's last evaluation of the link laws is at these flows.
        fill_pipe_flows(sol, &self.net, &flows, finite.then(|| solver_ws.link_drops_pa()));
        ws.solver = Some(solver_ws);
        self.pipes_filled = true;
        sol.link_flows_kg_s = flows;
        let flows = &sol.link_flows_kg_s;

        // Emitter outputs at the real flows.
        let Some(sp) = self.supply_props else { return };
        // In id order (the order of `sol.emitters` and of the caches).
        let node_count = p.node_count();
        for (r, &i) in sol.emitters.iter_mut().zip(&self.result_emitter) {
            let Some(e) = self.emitters.get(i) else { continue };
            let m = flows[e.valves_link].max(0.0);
            r.flow_kg_s = m;
            r.flow_l_h = m / sp.density_kg_m3 * 3.6e6;
            r.flow_deviation = if r.design_flow_kg_s > 0.0 { m / r.design_flow_kg_s - 1.0 } else { 0.0 };
            if let Some(d) = &e.design
                && let Ok(out) = ws.emitters.output_at_flow(e.id, node_count, &d.installed, m, r.supply_c, r.room_c)
            {
                r.output_w = out.output_w;
                r.return_c = out.return_c;
            }
            if p.settings.mode == Mode::Installed && !r.closed && r.load_w > 0.0 && r.output_w < 0.95 * r.load_w {
                self.findings.push(Finding::warning(
                    ItemRef::Node(e.id),
                    format!(
                        "{} gets {:.0} % of its design flow and delivers {:.0} W of {:.0} W",
                        r.name,
                        (1.0 + r.flow_deviation) * 100.0,
                        r.output_w,
                        r.load_w
                    ),
                ));
            }
        }
        // Pump operating point.
        if let (Some(pump), Some(rp)) = (sol.pump.as_mut(), self.return_props) {
            let m = flows[self.pump_link];
            let (rise, control_rise) = match &self.net.links[self.pump_link].law {
                LinkLaw::Pump { a0_pa, a1_pa_s_kg, a2_pa_s2_kg2, max_curve_pa } => {
                    let law = [*a0_pa, *a1_pa_s_kg, *a2_pa_s2_kg2];
                    let rise = solver::pump_rise_and_slope(law, *max_curve_pa, m).0;
                    (rise, solver::pump_rise_and_slope(law, None, m).0)
                }
                _ => (0.0, 0.0),
            };
            pump.operating_flow_m3_h = m / rp.density_kg_m3 * 3600.0;
            pump.operating_head_pa = rise;
            pump.hydraulic_power_w =
                crate::pump::hydraulic_power_w(pump.operating_flow_m3_h.max(0.0), (rise / 1000.0).max(0.0))
                    .unwrap_or(0.0);
            // A controlled pump whose set-point its curve cannot give runs
            // on the curve, below the set-point.
            pump.on_max_curve = !matches!(pump.control, PumpControl::FixedSpeed) && rise < control_rise * (1.0 - 1e-6);
            if pump.on_max_curve {
                let source = self.source.unwrap_or(NodeId(0));
                self.findings.push(Finding::warning(
                    ItemRef::Node(source),
                    format!(
                        "the pump cannot hold its set-point: at {:.2} m³/h its maximum curve gives {:.1} kPa, the control asks \
                         {:.1} kPa — it runs on its maximum curve and the flows are those of full speed; choose a larger pump \
                         or lower the set-point",
                        pump.operating_flow_m3_h,
                        rise / 1000.0,
                        control_rise / 1000.0,
                    ),
                ));
            }
        }
        // Velocity over limit on the real flows.
        for pr in &sol.pipes {
            if pr.side == Side::Supply && pr.velocity_m_s > pr.velocity_limit_m_s * 1.0001 {
                self.findings.push(Finding::warning(
                    ItemRef::Run(pr.run),
                    format!(
                        "run {}: {:.2} m/s in {} exceeds the {} limit {:.2} m/s — use a larger size or clear its fixed size",
                        pr.run,
                        pr.velocity_m_s,
                        pr.size,
                        pr.class.name(),
                        pr.velocity_limit_m_s
                    ),
                ));
            }
        }
    }
}

/// Fill the flow-dependent pipe results from link flows. `drops_pa`, when
/// given, are the link laws already evaluated at `flows` (the solver's last
/// evaluation): the pipe's Δp is taken from there and its friction gradient
/// follows by removing the local losses, without evaluating the friction
/// factor again.
fn fill_pipe_flows(sol: &mut Solution, net: &HydraulicNetwork, flows: &[f64], drops_pa: Option<&[f64]>) {
    for pr in &mut sol.pipes {
        let m = flows.get(pr.link).copied().unwrap_or(0.0);
        pr.flow_kg_s = m;
        if let Some(HydLink { law: LinkLaw::Pipe(h), .. }) = net.links.get(pr.link) {
            pr.flow_l_h = m.abs() / h.density_kg_m3 * 3.6e6;
            pr.velocity_m_s = h.velocity_m_s(m).abs();
            if let Some(&dp) = drops_pa.and_then(|d| d.get(pr.link)) {
                // Δp = (f·L/D + Σζ)·ρv²/2: the friction part per metre.
                let area = h.flow_area_m2();
                let local = h.zeta_sum * m * m / (2.0 * h.density_kg_m3 * area * area);
                pr.gradient_pa_m = (dp.abs() - local).max(0.0) / h.length_m;
                pr.dp_pa = dp;
            } else {
                pr.gradient_pa_m = friction_gradient_pa_m(h, m.abs());
                pr.dp_pa = pipe_dp(h, m).0;
            }
        }
    }
}

/// Bends along a run's polyline: a turn of 60° or more counts as a 90°
/// bend, 20–60° as half of one (a 45° bend), less as straight.
pub fn bend_count(p: &Project, run: &crate::project::Run) -> f64 {
    let (Some(a), Some(b)) = (p.node(run.a), p.node(run.b)) else { return 0.0 };
    bends_along(a.pos, &run.vertices, b.pos)
}

/// [`bend_count`] with the project's nodes looked up in `dn`.
fn bend_count_dense(dn: &Dense<'_>, run: &crate::project::Run) -> f64 {
    let (Some(a), Some(b)) = (dn.node(run.a), dn.node(run.b)) else { return 0.0 };
    bends_along(a.pos, &run.vertices, b.pos)
}

/// Bends of the polyline `a` → `vertices` → `b` (see [`bend_count`]).
fn bends_along(
    a: crate::project::PlanPoint,
    vertices: &[crate::project::PlanPoint],
    b: crate::project::PlanPoint,
) -> f64 {
    if vertices.is_empty() {
        return 0.0;
    }
    let mut pts = Vec::with_capacity(vertices.len() + 2);
    pts.push(a);
    pts.extend_from_slice(vertices);
    pts.push(b);
    let mut count = 0.0;
    for w in pts.windows(3) {
        let (u, v) = ((w[1].x_m - w[0].x_m, w[1].y_m - w[0].y_m), (w[2].x_m - w[1].x_m, w[2].y_m - w[1].y_m));
        let (lu, lv) = (u.0.hypot(u.1), v.0.hypot(v.1));
        if lu <= 0.0 || lv <= 0.0 {
            continue;
        }
        let cos = ((u.0 * v.0 + u.1 * v.1) / (lu * lv)).clamp(-1.0, 1.0);
        let turn = cos.acos().to_degrees();
        if turn >= 60.0 {
            count += 1.0;
        } else if turn >= 20.0 {
            count += 0.5;
        }
    }
    count
}

/// Smallest size of `series` meeting the velocity and friction-gradient
/// limits at mass flow `m`; (index, true) or (largest, false).
pub(crate) fn choose_size(
    series: &PipeSeries,
    m: f64,
    props: &WaterProperties,
    v_lim: f64,
    grad_lim: f64,
) -> (usize, bool) {
    for (i, size) in series.sizes.iter().enumerate() {
        let Ok(h) = PipeHydraulics::new(
            1.0,
            size.inner_diameter_m(),
            series.roughness_m,
            0.0,
            props.density_kg_m3,
            props.viscosity_pa_s,
        ) else {
            continue;
        };
        if h.velocity_m_s(m).abs() <= v_lim && friction_gradient_pa_m(&h, m) <= grad_lim {
            return (i, true);
        }
    }
    (series.sizes.len().saturating_sub(1), false)
}

/// The edit that freezes a solved design into the project and switches to
/// installed mode: every run gets its supply pipe's size as a fixed size,
/// every emitter its presetting, every radiator to size its chosen size
/// ([`crate::emitters::RadiatorSizing::Chosen`], which keeps its design
/// flow), a controlled pump its duty head as set-point.
#[must_use]
pub fn freeze_edit(p: &Project, sol: &Solution) -> crate::project::Edit {
    use crate::project::{Edit, RunProps};
    let mut edits = Vec::new();
    for run in p.runs() {
        if let Some(pr) = sol.run_pipes(run.id).find(|x| x.side == Side::Supply) {
            let ret = sol.run_pipes(run.id).find(|x| x.side == Side::Return).map(|x| x.size.to_owned());
            let fixed_return_size = ret.filter(|r| *r != pr.size);
            let props = RunProps { fixed_size: Some(pr.size.to_owned()), fixed_return_size, ..run.props.clone() };
            if props != run.props {
                edits.push(Edit::SetRunProps { id: run.id, props });
            }
        }
    }
    for e in &sol.emitters {
        let Some(node) = p.node(e.id) else { continue };
        let NodeKind::Emitter(em) = &node.kind else { continue };
        let mut frozen = em.clone();
        if !(e.presetting == "—" || e.presetting.is_empty()) {
            frozen.valves.presetting = Some(e.presetting.clone());
        }
        if let (crate::emitters::EmitterModel::Radiator(spec), Some(EmitterDetail::Radiator(d))) =
            (&mut frozen.model, &e.detail)
            && spec.sizing == crate::emitters::RadiatorSizing::ToSize
        {
            spec.sizing = d.frozen_sizing();
        }
        if frozen != *em {
            edits.push(Edit::SetNodeKind { id: e.id, kind: NodeKind::Emitter(frozen) });
        }
    }
    if let (Some(pump), Some(src)) = (&sol.pump, p.sources().first().and_then(|&s| p.node(s)))
        && let NodeKind::Source(source) = &src.kind
    {
        let mut source = source.clone();
        source.pump.design_flow_m3_h = Some(pump.design_flow_m3_h);
        source.pump.control = match source.pump.control {
            PumpControl::ConstantDp { .. } => PumpControl::ConstantDp { setpoint_kpa: pump.duty_head_pa / 1000.0 },
            PumpControl::ProportionalDp { .. } => {
                PumpControl::ProportionalDp { setpoint_kpa: pump.duty_head_pa / 1000.0 }
            }
            PumpControl::FixedSpeed => PumpControl::FixedSpeed,
        };
        edits.push(Edit::SetNodeKind { id: src.id, kind: NodeKind::Source(source) });
    }
    let settings = crate::project::DesignSettings { mode: Mode::Installed, ..p.settings.clone() };
    edits.push(Edit::SetSettings(Box::new(settings)));
    Edit::Batch(edits)
}

/// The edit that switches back to *design follows layout*: every fixed pipe
/// size, every presetting and every radiator size frozen by
/// [`freeze_edit`] is released so the design re-chooses them on each edit
/// (undo brings a released value back), and a proportional pump's stored
/// design flow is cleared.
#[must_use]
pub fn thaw_edit(p: &Project) -> crate::project::Edit {
    use crate::project::{Edit, RunProps};
    let mut edits = Vec::new();
    for run in p.runs() {
        if run.props.fixed_size.is_some() || run.props.fixed_return_size.is_some() {
            let props = RunProps { fixed_size: None, fixed_return_size: None, ..run.props.clone() };
            edits.push(Edit::SetRunProps { id: run.id, props });
        }
    }
    for node in p.nodes() {
        match &node.kind {
            NodeKind::Emitter(em) => {
                let mut thawed = em.clone();
                thawed.valves.presetting = None;
                if let crate::emitters::EmitterModel::Radiator(spec) = &mut thawed.model
                    && matches!(spec.sizing, crate::emitters::RadiatorSizing::Chosen { .. })
                {
                    spec.sizing = crate::emitters::RadiatorSizing::ToSize;
                }
                if thawed != *em {
                    edits.push(Edit::SetNodeKind { id: node.id, kind: NodeKind::Emitter(thawed) });
                }
            }
            NodeKind::Source(src) if src.pump.design_flow_m3_h.is_some() => {
                let mut src = src.clone();
                src.pump.design_flow_m3_h = None;
                edits.push(Edit::SetNodeKind { id: node.id, kind: NodeKind::Source(src) });
            }
            _ => {}
        }
    }
    let settings = crate::project::DesignSettings { mode: Mode::DesignFollowsLayout, ..p.settings.clone() };
    edits.push(Edit::SetSettings(Box::new(settings)));
    Edit::Batch(edits)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::generate::{BuildingSpec, generate_building};
    use crate::project::Edit;

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
}
