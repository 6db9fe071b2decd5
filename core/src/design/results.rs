//! What a solve produces: per pipe, per emitter, the pump, totals, the
//! derived network with its flows and pressures, the layout's topology and
//! the findings. Everything downstream (the window, the parts list, the
//! report, the exports) reads these; none of it derives facts again.

use std::sync::Arc;

use smol_str::SmolStr;

use crate::emitters::EmitterDetail;
use crate::network::HydraulicNetwork;
use crate::project::{NodeId, PipeClass, RunId};
use crate::pump::{PumpControl, PumpCurve};
use crate::vessel;

use super::findings::{Finding, Severity};
use super::topology::Topology;

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
    /// The balancing device on a run.
    Device(RunId),
}

impl LinkRole {
    /// Words for the link, for messages and exports ("run R3 supply",
    /// "valves of N7").
    #[must_use]
    pub fn describe(&self) -> String {
        match self {
            Self::Pipe { run, side: Side::Supply } => format!("run {run} supply"),
            Self::Pipe { run, side: Side::Return } => format!("run {run} return"),
            Self::EmitterValves(n) => format!("valves of {n}"),
            Self::EmitterBody(n) => format!("emitter {n}"),
            Self::Source(n) => format!("heat source {n}"),
            Self::Pump(n) => format!("pump of {n}"),
            Self::Device(r) => format!("device on run {r}"),
        }
    }
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
    /// Pressure-gradient limit it was sized to, Pa/m (the general limit,
    /// or the lower one behind a Δp controller).
    pub gradient_limit_pa_m: f64,
    /// Friction pressure gradient at operating flow, Pa/m.
    pub gradient_pa_m: f64,
    /// Total pressure drop (friction + local) at operating flow, Pa.
    pub dp_pa: f64,
    /// Index of the link in the derived network.
    #[serde(skip)]
    pub link: usize,
    /// The layout nodes the pipe joins, upstream end first on the supply
    /// side (a reverse-return home pipe: from the chain's last node back to
    /// its start; the other returns of a chain: from one chain node to the
    /// next, in supply order).
    #[serde(skip)]
    pub ends: [NodeId; 2],
    /// 90° bends along the pipe as the design counts them: turns of 60° or
    /// more in the drawn polyline ([`super::BEND_90_MIN_DEG`]), plus
    /// [`super::RISER_BENDS_PER_VERTICAL_RUN`] on a vertical run (riser foot
    /// and head). A home pipe follows its whole chain.
    #[serde(skip)]
    pub bends_90: u32,
    /// 45° bends along the pipe: turns of 20°–60° in the drawn polyline.
    #[serde(skip)]
    pub bends_45: u32,
}

/// Results of one emitter and its circuit.
#[derive(Debug, Clone, PartialEq)]
pub struct EmitterResult {
    /// Node id.
    pub id: NodeId,
    /// Name.
    pub name: SmolStr,
    /// Level name.
    pub level: SmolStr,
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
    /// Δp across the valve at its presetting at design flow, Pa.
    pub valve_dp_pa: f64,
    /// Δp across the lockshield at its setting at design flow, Pa.
    pub lockshield_dp_pa: f64,
    /// Kv the valve needs at its chosen lockshield setting, m³/h (0 when
    /// the circuit cannot be balanced).
    pub kv_needed_m3_h: f64,
    /// Presetting label.
    pub presetting: SmolStr,
    /// Kv at the presetting, m³/h.
    pub valve_kv_m3_h: f64,
    /// Lockshield setting label (its last step is fully open).
    pub lockshield: SmolStr,
    /// Kv at the lockshield setting, m³/h.
    pub lockshield_kv_m3_h: f64,
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
    /// The operating flow is within the flow tolerance of the design flow
    /// (always true for a closed valve or an emitter without design flow).
    pub flow_within_tolerance: bool,
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

/// One pumped circuit of a project with secondary circuits (the primary,
/// from the heat source, comes first). See `design/circuits.rs`.
#[derive(Debug, Clone, PartialEq)]
pub struct CircuitResult {
    /// The circuit's root: the heat source, or the pumped-circuit node.
    pub root: NodeId,
    /// Name (of the source or the circuit).
    pub name: String,
    /// How it takes its heat; `None` for the primary.
    pub connection: Option<crate::project::CircuitConnection>,
    /// Root of the circuit feeding it; `None` for the primary.
    pub parent: Option<NodeId>,
    /// The hydraulic separator it hangs from, if any.
    pub separator: Option<NodeId>,
    /// Design supply and return temperatures, °C.
    pub supply_c: f64,
    /// Design return temperature, °C.
    pub return_c: f64,
    /// Design heat load it carries (its rooms and the circuits it feeds), W.
    pub heat_load_w: f64,
    /// Heat delivered at the operating point, W.
    pub heat_w: f64,
    /// Design flow of its own pump, l/h.
    pub design_flow_l_h: f64,
    /// Operating flow of its own pump, l/h.
    pub flow_l_h: f64,
    /// Mixed return temperature at the operating point, °C.
    pub operating_return_c: f64,
    /// Primary (feed-side) design flow, l/h (the secondary flow for a pump-only
    /// circuit; 0 for the primary).
    pub primary_design_flow_l_h: f64,
    /// Primary flow at the operating point, l/h (held by the circuit's valve:
    /// operating heat / (c_p · (feed supply − operating return))).
    pub primary_flow_l_h: f64,
    /// Feed supply temperature, °C (0 for the primary).
    pub feed_supply_c: f64,
    /// Δp the feeding network gives at the circuit at the operating point, Pa.
    pub feed_dp_available_pa: f64,
    /// Δp its valve needs fully open at the primary flow, Pa.
    pub feed_dp_needed_pa: f64,
    /// Its pump.
    pub pump: Option<PumpResult>,
    /// Its index emitter (or the circuit it feeds that is its index).
    pub index_emitter: Option<NodeId>,
    /// Its index circuit as links of [`Solution::network`].
    pub index_path: Vec<usize>,
    /// Its links in [`Solution::network`]: `links.0 .. links.1`.
    pub links: (usize, usize),
    /// Layout nodes in the circuit (root excluded; circuits it feeds
    /// included as its leaves).
    pub nodes: Vec<NodeId>,
    /// Runs in the circuit.
    pub runs: Vec<RunId>,
    /// Expansion vessel, water volume: the project's totals; here the
    /// circuit's own water, l.
    pub water_volume_l: f64,
    /// The operating solve converged.
    pub converged: bool,
}

/// What a balancing device is doing in the operating solve.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum DeviceState {
    /// A static valve at its setting.
    Fixed,
    /// A controller throttling to hold its Δp.
    Regulating,
    /// A controller fully open at Kvs: the pump does not give the branch its
    /// set-point.
    Saturated,
    /// A controller shut: its branch draws no flow.
    Closed,
}

impl DeviceState {
    /// Word used in tables.
    #[must_use]
    pub const fn label(self) -> &'static str {
        match self {
            Self::Fixed => "fixed",
            Self::Regulating => "regulating",
            Self::Saturated => "saturated",
            Self::Closed => "closed",
        }
    }
}

/// Results of one balancing device (see [`crate::project::BranchDevice`]).
#[derive(Debug, Clone, PartialEq)]
pub struct DeviceResult {
    /// The run it sits on.
    pub run: RunId,
    /// The branch's first node (downstream end of the run).
    pub branch: NodeId,
    /// "balancing valve" or "Δp controller".
    pub kind: &'static str,
    /// Catalog name of the model.
    pub family: String,
    /// Setting (balancing valve) or set-point in kPa (controller), as text.
    pub setting: String,
    /// A controller's set-point as the design chose or the project gave
    /// it, unrounded, kPa (`setting` shows it to 0.1 kPa, the resolution of
    /// a controller's dial); 0 for a balancing valve.
    pub setpoint_kpa: f64,
    /// Kv at the setting (valve) or Kvs (controller), m³/h.
    pub kv_m3_h: f64,
    /// Design flow through it, l/h.
    pub design_flow_l_h: f64,
    /// Δp across it at design flow, Pa.
    pub design_dp_pa: f64,
    /// Δp the branch needs at its entry at design flow (its own index
    /// circuit), Pa: what a controller holds.
    pub branch_dp_pa: f64,
    /// Operating flow through it, l/h.
    pub flow_l_h: f64,
    /// Operating Δp across it, Pa.
    pub dp_pa: f64,
    /// Operating Δp across the branch (supply at its entry to the device's
    /// inlet), Pa.
    pub held_dp_pa: f64,
    /// Operating state.
    pub state: DeviceState,
    /// Operating flow / design flow − 1.
    pub flow_deviation: f64,
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
    /// The hydraulic solve alone of the last operating pass, part of
    /// `operate_ms` (what a general-purpose network solver does: flows and
    /// pressures).
    pub solver_ms: f64,
    /// Newton solves in the last operating pass: one, plus one per
    /// regulation round of the Δp controllers (design/devices.rs).
    pub solver_runs: u32,
    /// Operating passes in `operate_ms`: one, plus one per commissioning
    /// pass that moved a stepped presetting (design/commission.rs).
    pub operate_passes: u32,
    /// The derivation was the one kept from the previous revision, brought
    /// up to date for the runs the edit touched ([`super::solve_edit`]);
    /// `derive_ms` is then that update.
    pub incremental: bool,
}

/// Everything a solve produces.
#[derive(Debug, Clone, Default)]
pub struct Solution {
    /// Project revision the results belong to.
    pub revision: u64,
    /// A drag preview ([`super::solve_preview`]): the operating figures of
    /// the last design with the moved runs at their new lengths; sizes,
    /// presettings, index circuit and pump duty are that design's, not yet
    /// chosen again for this revision.
    pub preview: bool,
    /// Pipes (both sides of every run), sorted by run then side.
    pub pipes: Vec<PipeResult>,
    /// Emitters in id order.
    pub emitters: Vec<EmitterResult>,
    /// Balancing devices, in run id order.
    pub devices: Vec<DeviceResult>,
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
    pub roles: Arc<Vec<LinkRole>>,
    /// Operating mass flow of each link, kg/s.
    pub link_flows_kg_s: Vec<f64>,
    /// Node pressures of the operating solve, Pa (gauge).
    pub node_pressures_pa: Vec<f64>,
    /// Links of the index circuit in flow order (pump outlet → pump inlet).
    pub index_path: Vec<usize>,
    /// The layout's supply tree: run orientation, classes, reverse-return
    /// chains (what the derivation worked from).
    pub topology: Arc<Topology>,
    /// Pumped circuits (empty for a project with one circuit): the primary
    /// first, then each secondary circuit, feeds before the circuits they
    /// feed.
    pub circuits: Vec<CircuitResult>,
    /// (item, kind) of every finding, sorted: [`Solution::has_finding`].
    pub finding_keys: Vec<(super::ItemRef, super::FindingKind)>,
}

impl Solution {
    /// True when there is an error finding (the design is incomplete).
    #[must_use]
    pub fn has_errors(&self) -> bool {
        self.findings.iter().any(|f| f.severity == Severity::Error)
    }

    /// True when a finding of one of `kinds` concerns `item`: what a value
    /// shown in warning colour must have behind it (the window colours a
    /// value only when this says so).
    #[must_use]
    pub fn has_finding(&self, item: super::ItemRef, kinds: &[super::FindingKind]) -> bool {
        kinds.iter().any(|&k| self.finding_keys.binary_search(&(item, k)).is_ok())
    }

    /// Results of emitter `id` (a binary search: `emitters` is in id order;
    /// the window looks up every emitter it draws, every frame).
    #[must_use]
    pub fn emitter(&self, id: NodeId) -> Option<&EmitterResult> {
        self.emitters.binary_search_by_key(&id, |e| e.id).ok().and_then(|i| self.emitters.get(i))
    }

    /// Results of both sides of run `run` (a binary search: `pipes` is
    /// sorted by run then side; the window looks up every run it draws,
    /// every frame).
    pub fn run_pipes(&self, run: RunId) -> impl Iterator<Item = &PipeResult> + '_ {
        let start = self.pipes.partition_point(|p| p.run < run);
        self.pipes[start..].iter().take_while(move |p| p.run == run)
    }
}
