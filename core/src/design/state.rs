//! The derivation state: what the stages of one solve share. Each stage
//! (`derive`, `size`, `balance`, `operate`) is a function over this state,
//! called in order from [`super::solve_project`]; the stage files import
//! this one, never each other.

use std::sync::Arc;

use super::findings::Finding;
use super::results::{LinkRole, Side};
use super::topology;
use crate::emitters::EmitterDesign;
use crate::network::{HydLink, HydNode, HydraulicNetwork, LinkLaw};
use crate::pipes::PipeSeries;
use crate::project::{NodeId, PipeClass, RunId};
use crate::pump::{PumpControl, PumpCurve};
use crate::valves::{self, ValveFamily};
use crate::water::WaterProperties;

/// Marks "none" in the dense index vectors.
pub(super) const NONE: usize = usize::MAX;

/// Catalog look-ups of valve families by id, remembered for one derivation
/// (emitters mostly share a handful of families).
#[derive(Default)]
pub(super) struct FamilyMemo {
    seen: Vec<(String, Result<&'static ValveFamily, crate::PhysicsError>)>,
}

impl FamilyMemo {
    pub(super) fn get(&mut self, id: &str) -> Result<&'static ValveFamily, crate::PhysicsError> {
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

/// A pumped circuit or hydraulic separator seen from the network that
/// feeds it (see `circuits.rs`): a leaf drawing the circuit's primary flow.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Feed {
    /// Kv of its port on this network: the mixing or injection valve fully
    /// open, or the separator, m³/h.
    pub(crate) kv_m3_h: f64,
    /// The primary flow its control valve holds in operation, kg/s; `None`
    /// for a separator, which takes what the network gives it.
    pub(crate) fixed_flow_kg_s: Option<f64>,
}

/// Per-emitter derivation data.
#[derive(Debug, Clone)]
pub(super) struct EmitterData {
    pub(super) id: NodeId,
    /// Supply and return network nodes.
    pub(super) s: usize,
    pub(super) r: usize,
    pub(super) valves_link: usize,
    pub(super) body_link: usize,
    pub(super) design: Option<Arc<EmitterDesign>>,
    pub(super) flow_kg_s: f64,
    pub(super) valve: Option<&'static ValveFamily>,
    pub(super) lockshield: Option<&'static ValveFamily>,
    /// Kv of the lockshield fully open, m³/h (∞ without a lockshield).
    pub(super) lockshield_kv: f64,
    /// A pumped circuit or separator standing in for an emitter.
    pub(super) feed: Option<Feed>,
}

/// Per-pipe derivation data.
#[derive(Debug, Clone, Copy)]
pub(super) struct PipeData {
    pub(super) run: RunId,
    pub(super) side: Side,
    pub(super) class: PipeClass,
    pub(super) length_m: f64,
    /// Layout nodes joined (see [`super::PipeResult::ends`]).
    pub(super) ends: [NodeId; 2],
    /// 90° and 45° bends of the drawn polyline (riser foot and head not
    /// included).
    pub(super) bends_90: u32,
    pub(super) bends_45: u32,
    pub(super) vertical: bool,
    pub(super) link: usize,
    pub(super) series: Option<&'static PipeSeries>,
    pub(super) size: usize,
    /// ζ of the fitting at its upstream end (tee or header outlet), set
    /// by the sizing stage; kept so the incremental path can rebuild the
    /// pipe's law after a change of geometry with the same arithmetic.
    pub(super) fitting_zeta: f64,
    /// The pressure-gradient limit it was sized to, Pa/m (set by the
    /// sizing stage: lower inside a branch held by a Δp controller when the
    /// settings ask for it).
    pub(super) gradient_limit_pa_m: f64,
}

impl PipeData {
    /// Bends in 90° equivalents for the local losses: a 45° bend counts as
    /// half (the riser foot and head are added by the sizing stage).
    pub(super) fn bend_equivalents(&self) -> f64 {
        f64::from(self.bends_90) + 0.5 * f64::from(self.bends_45)
    }
}

/// A balancing device of the derived network (see
/// [`crate::project::BranchDevice`]).
#[derive(Debug, Clone)]
pub(super) struct DeviceData {
    /// The run it sits on.
    pub(super) run: RunId,
    /// The run's downstream layout node (the branch's first node).
    pub(super) down: NodeId,
    /// What the project says.
    pub(super) device: crate::project::BranchDevice,
    /// Its link (inlet → the upstream node's return).
    pub(super) link: usize,
    /// Its inlet node: the branch's return end.
    pub(super) inlet: usize,
    /// The upstream node's supply and return nodes (the branch's entry).
    pub(super) entry_supply: usize,
    pub(super) entry_return: usize,
    /// The balancing valve family used (sized or given).
    pub(super) valve: Option<&'static crate::valves::ValveFamily>,
    /// The controller model used (sized or given).
    pub(super) controller: Option<&'static crate::controllers::DpControllerFamily>,
    /// Controller set-point (at fully open, see [`crate::controllers`]), Pa.
    pub(super) setpoint_pa: f64,
    /// Design mass flow through the device, kg/s.
    pub(super) flow_kg_s: f64,
    /// Index into `Solution::devices`.
    pub(super) result: usize,
}

/// What one pipe to add joins and how it was drawn.
#[derive(Debug, Clone, Copy)]
pub(super) struct NewPipe {
    pub(super) run: RunId,
    pub(super) side: Side,
    pub(super) class: PipeClass,
    /// Network nodes, in the link's direction.
    pub(super) from: usize,
    pub(super) to: usize,
    pub(super) ends: [NodeId; 2],
    pub(super) length_m: f64,
    pub(super) bends: (u32, u32),
    pub(super) vertical: bool,
    pub(super) density_kg_m3: f64,
}

/// The state of one solve, from derivation to operating results.
pub(super) struct Derivation<'f> {
    pub(super) findings: &'f mut Vec<Finding>,
    pub(super) topo: topology::Topology,
    pub(super) net: HydraulicNetwork,
    pub(super) roles: Vec<LinkRole>,
    pub(super) emitters: Vec<EmitterData>,
    pub(super) pipes: Vec<PipeData>,
    pub(super) devices: Vec<DeviceData>,
    pub(super) source: Option<NodeId>,
    pub(super) source_link: usize,
    pub(super) pump_link: usize,
    pub(super) supply_props: Option<WaterProperties>,
    pub(super) return_props: Option<WaterProperties>,
    /// Node pair (supply, return) of each reachable non-emitter node.
    /// By node id; emitters get their (supply, return) nodes here too.
    /// `(NONE, NONE)` for nodes outside the network.
    pub(super) pairs: Vec<(usize, usize)>,
    /// Design flow of each link, kg/s.
    pub(super) design_flows: Vec<f64>,
    /// Supply pipe link of each run.
    /// By run id (`NONE` when the run has no supply pipe).
    pub(super) supply_link: Vec<usize>,
    /// Index into `pipes` of each run's supply pipe.
    /// By run id (`NONE` when the run has no supply pipe).
    pub(super) supply_pipe: Vec<usize>,
    /// Return pipe link of each run, by run id (`NONE` when none).
    pub(super) return_link: Vec<usize>,
    pub(super) available_pa: f64,
    pub(super) control: PumpControl,
    pub(super) curve: Option<PumpCurve>,
    pub(super) total_design_kg_s: f64,
    /// The flow-dependent pipe results are filled (by the operating solve).
    pub(super) pipes_filled: bool,
    /// Index into `emitters` of each entry of `Solution::emitters`.
    pub(super) result_emitter: Vec<usize>,
    /// Δp available at design to each entry of `Solution::emitters`, Pa:
    /// its Δp controller's or balancing valve's zone's when it has one,
    /// else the pump's. The reference of its valve's authority.
    pub(super) circuit_available_pa: Vec<f64>,
    /// Breadth-first link orders of the supply and return trees.
    pub(super) tree_orders: Option<(Vec<usize>, Vec<usize>)>,
    /// Emitters that stand for pumped circuits or separators.
    pub(super) feeds: std::collections::BTreeMap<NodeId, Feed>,
    /// How close a regulating Δp controller must hold its target before
    /// the operating solve stops regulating, Pa (at least; see
    /// `devices::HELD_DP_TOLERANCE_PA`, and the drag preview's own).
    pub(super) held_dp_tolerance_pa: f64,
    /// Solve loosely while the controllers still move (drag preview only:
    /// the path then depends on the start, which a full solve must not).
    pub(super) loose_regulation: bool,
    /// Every pipe law is already the operating one (a drag preview's
    /// state, kept after an operating pass): the operate stage need not
    /// switch the friction laws of the whole network again.
    pub(super) operating_laws: bool,
    /// The links whose law changed since the workspace's last solve of
    /// this network (a drag preview's moved pipes), when that is known:
    /// the operate stage then has the solver validate only those and the
    /// Δp controllers' links (`solver::solve_changed`).
    pub(super) changed_links: Option<Vec<usize>>,
}

impl<'f> Derivation<'f> {
    pub(super) fn new(findings: &'f mut Vec<Finding>) -> Self {
        Self {
            findings,
            topo: topology::Topology::default(),
            net: HydraulicNetwork::default(),
            roles: Vec::new(),
            emitters: Vec::new(),
            pipes: Vec::new(),
            devices: Vec::new(),
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
            circuit_available_pa: Vec::new(),
            tree_orders: None,
            feeds: std::collections::BTreeMap::new(),
            held_dp_tolerance_pa: super::devices::HELD_DP_TOLERANCE_PA,
            loose_regulation: false,
            operating_laws: false,
            changed_links: None,
        }
    }

    /// The (supply, return) network nodes of project node `n`.
    pub(super) fn pair(&self, n: NodeId) -> Option<(usize, usize)> {
        self.pairs.get(self.topo.nix(n)).copied().filter(|x| x.0 != NONE)
    }

    pub(super) fn add_node(&mut self, elevation_m: f64) -> usize {
        self.net.nodes.push(HydNode { elevation_m, demand_kg_s: 0.0 });
        self.net.nodes.len() - 1
    }

    pub(super) fn add_link(
        &mut self,
        from: usize,
        to: usize,
        density_kg_m3: f64,
        law: LinkLaw,
        role: LinkRole,
    ) -> usize {
        self.net.links.push(HydLink { from, to, density_kg_m3, law, closed: false });
        self.roles.push(role);
        self.net.links.len() - 1
    }

    /// Add one pipe: its link (law set by the sizing stage) and its data.
    pub(super) fn add_pipe(&mut self, p: NewPipe) {
        let law = LinkLaw::Quadratic { r_pa_s2_kg2: 0.0 };
        let link = self.add_link(p.from, p.to, p.density_kg_m3, law, LinkRole::Pipe { run: p.run, side: p.side });
        self.pipes.push(PipeData {
            run: p.run,
            side: p.side,
            class: p.class,
            length_m: p.length_m,
            ends: p.ends,
            bends_90: p.bends.0,
            bends_45: p.bends.1,
            vertical: p.vertical,
            link,
            series: None,
            size: 0,
            fitting_zeta: 0.0,
            gradient_limit_pa_m: 0.0,
        });
    }
}
