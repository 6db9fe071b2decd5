//! The project document: settings, levels and the drawn layout graph.
//!
//! The user draws single lines: one [`Run`] stands for a supply + return
//! pair; the derivation ([`crate::derive`]) doubles it. Nodes and runs carry
//! ids that we own ([`NodeId`], [`RunId`]); the petgraph indices behind them
//! are an implementation detail and never reach a file.
//!
//! The document changes only through [`Project::apply`] with an [`Edit`]
//! value (see [`edit`]); the GUI's undo stack is built from snapshots taken
//! between edits.

pub mod edit;
pub mod file;
pub mod limits;
pub mod repeat;
pub mod schedule;
pub mod settings;
pub mod underlay;

use std::collections::BTreeMap;
use std::fmt;

use petgraph::Undirected;
use petgraph::stable_graph::{EdgeIndex, NodeIndex, StableGraph};
use serde::{Deserialize, Serialize};

pub use edit::{Edit, EditError, EditOutcome};
pub use settings::{DesignSettings, Mode, PipeClass, ReturnLayout};
pub use underlay::Underlay;

use crate::emitters::EmitterModel;
use crate::pump::PumpControl;

/// Id of a layout node, unique in a project and stable across edits.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize)]
#[serde(transparent)]
pub struct NodeId(pub u32);

/// Id of a drawn run, unique in a project and stable across edits.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize)]
#[serde(transparent)]
pub struct RunId(pub u32);

/// Id of a level (storey).
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize)]
#[serde(transparent)]
pub struct LevelId(pub u32);

impl fmt::Display for NodeId {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "N{}", self.0)
    }
}
impl fmt::Display for RunId {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "R{}", self.0)
    }
}
impl fmt::Display for LevelId {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "L{}", self.0)
    }
}

/// A point on a level's plan, metres.
#[derive(Debug, Clone, Copy, PartialEq, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct PlanPoint {
    /// East, m.
    pub x_m: f64,
    /// North, m.
    pub y_m: f64,
}

impl PlanPoint {
    /// A point at `(x_m, y_m)`.
    #[must_use]
    pub const fn new(x_m: f64, y_m: f64) -> Self {
        Self { x_m, y_m }
    }
    /// Distance to `other`, m.
    #[must_use]
    pub fn distance_m(self, other: Self) -> f64 {
        (self.x_m - other.x_m).hypot(self.y_m - other.y_m)
    }
}

/// A storey of the building.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Level {
    /// Id.
    pub id: LevelId,
    /// Name shown on the level tabs ("Ground floor").
    pub name: String,
    /// Elevation of the pipework on this level above the datum, m.
    pub elevation_m: f64,
    /// The plan drawn under this level's network (absent in older files).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub underlay: Option<Underlay>,
}

/// The pump and hydraulic data of a heat source.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct PumpSpec {
    /// Three points of the pump curve at full speed: (flow m³/h, head kPa).
    pub curve_points: [(f64, f64); 3],
    /// How the pump is controlled.
    pub control: PumpControl,
    /// Design flow the proportional-Δp line refers to, m³/h; written when a
    /// design is frozen (installed mode) so the control line stays where it
    /// was set. `None` = the current design flow.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub design_flow_m3_h: Option<f64>,
}

/// A heat source (boiler, heat pump, substation heat exchanger) with its
/// circulation pump; the expansion vessel sits at its return (pump suction).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct HeatSource {
    /// Name.
    pub name: String,
    /// Heat output available, W.
    pub capacity_w: f64,
    /// Hydraulic resistance of the source as a Kv, m³/h at 1 bar.
    pub kv_m3_h: f64,
    /// Water content of the source, l.
    pub water_content_l: f64,
    /// The circulation pump.
    pub pump: PumpSpec,
    /// Highest flow temperature the source can deliver (its limit
    /// thermostat), °C: the expansion vessel is sized for it. `None` = the
    /// design supply temperature + [`DEFAULT_MAX_FLOW_ABOVE_DESIGN_K`].
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub max_flow_c: Option<f64>,
}

/// How far above the design supply a source's flow can rise when its
/// highest flow temperature is not given, K (10 K: common practice for the
/// margin of a limit thermostat over the design flow temperature).
pub const DEFAULT_MAX_FLOW_ABOVE_DESIGN_K: f64 = 10.0;

impl HeatSource {
    /// The highest flow temperature the vessel is sized for, °C.
    #[must_use]
    pub fn max_flow_temperature_c(&self, design_supply_c: f64) -> f64 {
        self.max_flow_c.unwrap_or(design_supply_c + DEFAULT_MAX_FLOW_ABOVE_DESIGN_K)
    }
}

/// A header: distributor (supply) and collector (return) pair.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Header {
    /// Name.
    pub name: String,
    /// Number of outlet pairs the header has.
    pub outlets: u32,
}

/// How a pumped circuit takes its heat from the network it hangs from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub enum CircuitConnection {
    /// A three-way mixing valve: the circuit's return is mixed into the
    /// water from the feeding network until the circuit's supply
    /// temperature is reached; the rest of the return goes back.
    MixingValve,
    /// Injection: a two-way control valve on the feeding network injects hot
    /// water into the circuit's loop through a bypass; as much circuit
    /// return leaves as hot water enters.
    Injection,
    /// Pump only (on a hydraulic separator): the circuit runs at the supply
    /// temperature it is given.
    Direct,
}

impl CircuitConnection {
    /// Every connection, in menu order.
    pub const ALL: [Self; 3] = [Self::MixingValve, Self::Injection, Self::Direct];

    /// Words for tables and menus.
    #[must_use]
    pub const fn name(self) -> &'static str {
        match self {
            Self::MixingValve => "three-way mixing valve",
            Self::Injection => "injection, two-way valve",
            Self::Direct => "pump only",
        }
    }
}

/// A pumped secondary circuit: its own pump and design temperatures,
/// taking heat from the network upstream (through a mixing or injection
/// valve) or from a hydraulic separator (pump only). The runs leaving it
/// form the circuit.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct PumpedCircuit {
    /// Name.
    pub name: String,
    /// How it takes its heat.
    pub connection: CircuitConnection,
    /// Design supply temperature of the circuit, °C (a pump-only circuit
    /// runs at its feed's supply temperature and ignores this).
    pub supply_c: f64,
    /// Design return temperature of the circuit, °C.
    pub return_c: f64,
    /// Kvs of the mixing or injection valve, m³/h (the feed's port, fully
    /// open; the circuit's water passes the valve too).
    pub valve_kvs_m3_h: f64,
    /// The circuit's pump.
    pub pump: PumpSpec,
}

/// A hydraulic separator (low-loss header): the feeding network's loop and
/// the pumped circuits leaving it are hydraulically decoupled.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Separator {
    /// Name.
    pub name: String,
    /// Resistance of the separator with its connections on the feeding
    /// side, as a Kv, m³/h.
    pub kv_m3_h: f64,
}

/// Valves of one emitter.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct EmitterValves {
    /// Valve family on the supply (thermostatic or manual, with presetting).
    pub valve_family: String,
    /// Presetting installed (label of a step); `None` = chosen by design.
    pub presetting: Option<String>,
    /// Lockshield family on the return.
    pub lockshield_family: String,
    /// Lockshield setting installed (label of a step); `None` = chosen by
    /// the design (fully open unless the trim needs it).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub lockshield_setting: Option<String>,
}

/// A room's emitter.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Emitter {
    /// Name (usually the room).
    pub name: String,
    /// Room design temperature, °C.
    pub room_c: f64,
    /// Design heat load of the room, W.
    pub load_w: f64,
    /// Emitter model (radiator, floor loop, fixed-Kv terminal).
    pub model: EmitterModel,
    /// Valves.
    pub valves: EmitterValves,
}

/// What a node of the layout is.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub enum NodeKind {
    /// Heat source with pump and expansion vessel.
    Source(HeatSource),
    /// A tee, bend point or riser foot/head where runs meet.
    Junction,
    /// Distributor + collector pair.
    Header(Header),
    /// A room's emitter.
    Emitter(Emitter),
    /// A pumped secondary circuit (mixing, injection or pump only).
    Circuit(PumpedCircuit),
    /// A hydraulic separator feeding pumped circuits.
    Separator(Separator),
}

impl NodeKind {
    /// Short word for the kind, for messages.
    #[must_use]
    pub fn word(&self) -> &'static str {
        match self {
            Self::Source(_) => "heat source",
            Self::Junction => "junction",
            Self::Header(_) => "header",
            Self::Emitter(_) => "emitter",
            Self::Circuit(_) => "pumped circuit",
            Self::Separator(_) => "hydraulic separator",
        }
    }
}

/// A node of the layout.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Node {
    /// Id.
    pub id: NodeId,
    /// Level the node is on.
    pub level: LevelId,
    /// Position on the level's plan.
    pub pos: PlanPoint,
    /// What it is.
    pub kind: NodeKind,
}

impl Node {
    /// Name for messages and tables: the user's name or the kind and id.
    #[must_use]
    pub fn label(&self) -> String {
        match &self.kind {
            NodeKind::Source(s) => format!("{} ({})", s.name, self.id),
            NodeKind::Header(h) => format!("{} ({})", h.name, self.id),
            NodeKind::Emitter(e) => format!("{} ({})", e.name, self.id),
            NodeKind::Circuit(c) => format!("{} ({})", c.name, self.id),
            NodeKind::Separator(x) => format!("{} ({})", x.name, self.id),
            NodeKind::Junction => format!("junction {}", self.id),
        }
    }
}

/// Properties of a run the user can set.
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RunProps {
    /// Measured length overriding the drawn one, m.
    pub length_override_m: Option<f64>,
    /// Pipe class; `None` = chosen from the topology.
    pub class: Option<PipeClass>,
    /// Fixed pipe size label ("DN20", "16x2"); `None` = sized by design.
    pub fixed_size: Option<String>,
    /// Fixed size of the return pipe when it differs from the supply's
    /// (reverse return); `None` = as `fixed_size`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub fixed_return_size: Option<String>,
    /// Return layout from this run downstream; `None` = inherited.
    pub return_layout: Option<ReturnLayout>,
    /// A device on the run's return, at its upstream end, balancing the
    /// branch the run feeds.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub device: Option<BranchDevice>,
}

/// A device that balances the branch a run feeds. It sits on the run's
/// return at the run's upstream end (where the branch leaves the main).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub enum BranchDevice {
    /// A static balancing valve with handwheel settings. The design chooses
    /// its setting so that the branch takes what its own index circuit needs
    /// and no more.
    BalancingValve {
        /// Valve family (`assets/valves`, kind Balancing); `None` = the design
        /// picks the smallest that passes the branch's design flow.
        family: Option<String>,
        /// Setting installed; `None` = chosen by the design.
        setting: Option<String>,
    },
    /// A differential-pressure controller holding the Δp across the branch
    /// (branch supply to branch return at the run's upstream end).
    DpController {
        /// Controller model (`assets/controllers`); `None` = the design picks
        /// the smallest that passes the branch's design flow.
        family: Option<String>,
        /// Set-point, kPa; `None` = chosen by the design (the branch's own
        /// index circuit with the minimum valve Δp).
        setpoint_kpa: Option<f64>,
    },
}

impl BranchDevice {
    /// Words for people.
    #[must_use]
    pub fn name(&self) -> &'static str {
        match self {
            Self::BalancingValve { .. } => "balancing valve",
            Self::DpController { .. } => "Δp controller",
        }
    }
}

/// A drawn run: one line standing for a supply + return pair.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Run {
    /// Id.
    pub id: RunId,
    /// One end.
    pub a: NodeId,
    /// Other end.
    pub b: NodeId,
    /// Intermediate polyline vertices on the plan (bends), m.
    pub vertices: Vec<PlanPoint>,
    /// User properties.
    pub props: RunProps,
}

/// The project document.
#[derive(Debug, Clone)]
pub struct Project {
    /// Project name.
    pub name: String,
    /// Design settings.
    pub settings: DesignSettings,
    /// Levels, ordered by elevation.
    pub levels: Vec<Level>,
    graph: StableGraph<Node, Run, Undirected, u32>,
    node_ix: BTreeMap<NodeId, NodeIndex<u32>>,
    run_ix: BTreeMap<RunId, EdgeIndex<u32>>,
    next_node: u32,
    next_run: u32,
    /// Edit counter: increases with every applied edit; results carry the
    /// revision they were computed from.
    pub revision: u64,
}

impl PartialEq for Project {
    /// Two projects are equal when their documents are equal (the revision
    /// counter and petgraph's internal indices are not part of the document).
    fn eq(&self, other: &Self) -> bool {
        self.name == other.name
            && self.settings == other.settings
            && self.levels == other.levels
            && self.nodes().eq(other.nodes())
            && self.runs().eq(other.runs())
    }
}

impl Project {
    /// An empty project with one level and default settings.
    #[must_use]
    pub fn new(name: &str) -> Self {
        Self {
            name: name.to_owned(),
            settings: DesignSettings::default(),
            levels: vec![Level { id: LevelId(0), name: "Ground floor".to_owned(), elevation_m: 0.0, underlay: None }],
            graph: StableGraph::default(),
            node_ix: BTreeMap::new(),
            run_ix: BTreeMap::new(),
            next_node: 1,
            next_run: 1,
            revision: 0,
        }
    }

    /// Nodes in id order.
    pub fn nodes(&self) -> impl Iterator<Item = &Node> + '_ {
        self.node_ix.values().filter_map(|&ix| self.graph.node_weight(ix))
    }

    /// Runs in id order.
    pub fn runs(&self) -> impl Iterator<Item = &Run> + '_ {
        self.run_ix.values().filter_map(|&ix| self.graph.edge_weight(ix))
    }

    /// Runs in id order with their end nodes `(run, a, b)`, read from the
    /// graph: no lookup by id per run (what a frame that walks every run
    /// wants).
    pub fn runs_with_ends(&self) -> impl Iterator<Item = (&Run, &Node, &Node)> + '_ {
        self.run_ix.values().filter_map(|&ix| {
            let run = self.graph.edge_weight(ix)?;
            let (x, y) = self.graph.edge_endpoints(ix)?;
            let (nx, ny) = (self.graph.node_weight(x)?, self.graph.node_weight(y)?);
            Some(if nx.id == run.a { (run, nx, ny) } else { (run, ny, nx) })
        })
    }

    /// The runs that join two levels (risers), with their end nodes, in id
    /// order.
    pub fn vertical_runs(&self) -> impl Iterator<Item = (&Run, &Node, &Node)> + '_ {
        self.runs_with_ends().filter(|(_, a, b)| a.level != b.level)
    }

    /// Number of nodes.
    #[must_use]
    pub fn node_count(&self) -> usize {
        self.node_ix.len()
    }

    /// Number of runs.
    #[must_use]
    pub fn run_count(&self) -> usize {
        self.run_ix.len()
    }

    /// The node with `id`.
    #[must_use]
    pub fn node(&self, id: NodeId) -> Option<&Node> {
        self.node_ix.get(&id).and_then(|&ix| self.graph.node_weight(ix))
    }

    /// The run with `id`.
    #[must_use]
    pub fn run(&self, id: RunId) -> Option<&Run> {
        self.run_ix.get(&id).and_then(|&ix| self.graph.edge_weight(ix))
    }

    /// The level with `id`.
    #[must_use]
    pub fn level(&self, id: LevelId) -> Option<&Level> {
        self.levels.iter().find(|l| l.id == id)
    }

    /// Runs touching node `id` (in id order).
    #[must_use]
    pub fn runs_at(&self, id: NodeId) -> Vec<RunId> {
        let Some(&ix) = self.node_ix.get(&id) else { return Vec::new() };
        let mut out: Vec<RunId> = self.graph.edges(ix).map(|e| e.weight().id).collect();
        out.sort_unstable();
        out
    }

    /// The other end of run `run` seen from node `from`.
    #[must_use]
    pub fn other_end(&self, run: RunId, from: NodeId) -> Option<NodeId> {
        let r = self.run(run)?;
        if r.a == from {
            Some(r.b)
        } else if r.b == from {
            Some(r.a)
        } else {
            None
        }
    }

    /// Elevation of a node (its level's), m.
    #[must_use]
    pub fn elevation_m(&self, id: NodeId) -> f64 {
        self.node(id).and_then(|n| self.level(n.level)).map_or(0.0, |l| l.elevation_m)
    }

    /// Static height of the system above a vessel at `source`, m: from the
    /// source's level to the highest node, plus 1 m for the radiators and
    /// vents above their level (what the design takes when
    /// `settings.static_height_m` is not set).
    #[must_use]
    pub fn static_height_above_m(&self, source: NodeId) -> f64 {
        let z_src = self.elevation_m(source);
        let z_max = self.nodes().map(|n| self.elevation_m(n.id)).fold(z_src, f64::max);
        z_max - z_src + 1.0
    }

    /// Drawn length of a run: plan polyline plus the height between the
    /// levels of its ends, m (before any override).
    #[must_use]
    pub fn drawn_length_m(&self, run: &Run) -> f64 {
        let (Some(a), Some(b)) = (self.node(run.a), self.node(run.b)) else { return 0.0 };
        plan_length_m(a.pos, &run.vertices, b.pos) + (self.elevation_m(run.a) - self.elevation_m(run.b)).abs()
    }

    /// Length used by the hydraulics: the override if set, else drawn, m.
    #[must_use]
    pub fn length_m(&self, run: &Run) -> f64 {
        run.props.length_override_m.unwrap_or_else(|| self.drawn_length_m(run))
    }

    /// True when the run joins two levels.
    #[must_use]
    pub fn is_vertical(&self, run: &Run) -> bool {
        match (self.node(run.a), self.node(run.b)) {
            (Some(a), Some(b)) => a.level != b.level,
            _ => false,
        }
    }

    /// The heat sources (ids).
    #[must_use]
    pub fn sources(&self) -> Vec<NodeId> {
        self.nodes().filter(|n| matches!(n.kind, NodeKind::Source(_))).map(|n| n.id).collect()
    }

    /// The emitters (ids).
    #[must_use]
    pub fn emitters(&self) -> Vec<NodeId> {
        self.nodes().filter(|n| matches!(n.kind, NodeKind::Emitter(_))).map(|n| n.id).collect()
    }

    /// Next free node id (does not reserve it).
    #[must_use]
    pub fn peek_node_id(&self) -> NodeId {
        NodeId(self.next_node)
    }

    /// Next free run id (does not reserve it).
    #[must_use]
    pub fn peek_run_id(&self) -> RunId {
        RunId(self.next_run)
    }

    // ---- low-level mutation used by `edit` and `file` (invariants kept there)

    /// Room for `nodes` more nodes and `runs` more runs, so a file's load
    /// grows the graph's vectors once instead of doubling them (each
    /// doubling copies the whole vector into fresh pages).
    pub(crate) fn reserve(&mut self, nodes: usize, runs: usize) {
        self.graph.reserve_exact_nodes(nodes);
        self.graph.reserve_exact_edges(runs);
    }

    pub(crate) fn insert_node(&mut self, node: Node) {
        self.next_node = self.next_node.max(node.id.0.saturating_add(1));
        let id = node.id;
        let ix = self.graph.add_node(node);
        self.node_ix.insert(id, ix);
    }

    pub(crate) fn insert_run(&mut self, run: Run) -> bool {
        let (Some(&a), Some(&b)) = (self.node_ix.get(&run.a), self.node_ix.get(&run.b)) else {
            return false;
        };
        self.next_run = self.next_run.max(run.id.0.saturating_add(1));
        let id = run.id;
        let ix = self.graph.add_edge(a, b, run);
        self.run_ix.insert(id, ix);
        true
    }

    pub(crate) fn node_mut(&mut self, id: NodeId) -> Option<&mut Node> {
        let ix = *self.node_ix.get(&id)?;
        self.graph.node_weight_mut(ix)
    }

    pub(crate) fn run_mut(&mut self, id: RunId) -> Option<&mut Run> {
        let ix = *self.run_ix.get(&id)?;
        self.graph.edge_weight_mut(ix)
    }

    pub(crate) fn take_node(&mut self, id: NodeId) -> Option<Node> {
        let ix = self.node_ix.remove(&id)?;
        for run in self.runs_at_ix(ix) {
            self.run_ix.remove(&run);
        }
        self.graph.remove_node(ix)
    }

    pub(crate) fn take_run(&mut self, id: RunId) -> Option<Run> {
        let ix = self.run_ix.remove(&id)?;
        self.graph.remove_edge(ix)
    }

    fn runs_at_ix(&self, ix: NodeIndex<u32>) -> Vec<RunId> {
        self.graph.edges(ix).map(|e| e.weight().id).collect()
    }

    pub(crate) fn alloc_node_id(&mut self) -> NodeId {
        let id = NodeId(self.next_node);
        self.next_node = self.next_node.saturating_add(1);
        id
    }

    pub(crate) fn alloc_run_id(&mut self) -> RunId {
        let id = RunId(self.next_run);
        self.next_run = self.next_run.saturating_add(1);
        id
    }
}

/// Length on the plan of the polyline `a → vertices → b`, m (the one place
/// this sum is made, so every caller gets the same bits).
pub(crate) fn plan_length_m(a: PlanPoint, vertices: &[PlanPoint], b: PlanPoint) -> f64 {
    let mut plan = 0.0;
    let mut last = a;
    for &v in vertices {
        plan += last.distance_m(v);
        last = v;
    }
    plan + last.distance_m(b)
}
