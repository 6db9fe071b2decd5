//! Supply-temperature sweep and part-load scenarios.
//!
//! **Sweep** — the retrofit question: with the emitters and pipes already
//! installed, how low can the supply temperature go before a room falls
//! short? Radiators still marked "to size" are first fixed at the size the
//! design chose at the project's temperatures, and every pipe at its
//! design size (they are what is installed). For each supply temperature
//! the whole design is redone with them: in the default *re-balanced* mode
//! presettings and the pump set-point are chosen again, every emitter may
//! run down to a minimum water temperature drop ([`SweepSpec::min_drop_k`],
//! 5 K for a heat pump by default, common practice) and no further, and a
//! room counts as covered only when it gets its load within that drop
//! *and* within the design's limits: pipe velocities and friction
//! gradients inside their limits, and a pump that can give the head the
//! index circuit needs. The answer names the room that falls short first
//! and the constraint that stops it ([`LimitingConstraint`]). With
//! *presettings frozen* the network keeps the presettings and pump
//! set-point of the original design and the delivered fraction follows from
//! the operating solve.
//!
//! **Part load** — close a set of emitter valves and solve the installed
//! network for each pump control mode (`sweep/part_load.rs`): flows, Δp across the open valves
//! (warning above [`NOISE_DP_PA`]), pump operating point, over-supply.

mod part_load;

use std::collections::BTreeSet;

use serde::Serialize;

use crate::design::{self, FindingKind, ItemRef, Side, Solution, SolveOptions, Workspace, solve_project};
use crate::emitters::{EmitterDetail, EmitterModel, RadiatorSizing, radiator};
use crate::project::{Edit, Mode, NodeId, NodeKind, Project};

pub use part_load::{
    PartLoadCase, PartLoadCircuit, PartLoadEmitter, part_load, part_load_csv, random_closed_set, valve_dp_pa,
};

/// Δp across an open radiator valve above which flow noise is likely, Pa
/// (about 20 kPa: common practice).
pub const NOISE_DP_PA: f64 = 20_000.0;

/// Default minimum water temperature drop of the sweep, K (5 K: common
/// practice for heat-pump design; an upgraded radiator is sized for it too).
pub const UPGRADE_DELTA_K: f64 = 5.0;

/// Most points a sweep computes (each is a whole design): a range and step
/// that ask for more are refused.
pub const MAX_SWEEP_POINTS: usize = 10_000;

/// What stops a room from being covered at a supply temperature.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum LimitingConstraint {
    /// The emitter cannot give the load at any flow: too small.
    EmitterSize,
    /// The emitter could give the load only with a water drop below the
    /// minimum (a flow the limit does not allow).
    FlowLimit,
    /// The pump cannot give the head the circuit needs.
    PumpHead,
    /// A pipe feeding the room is over its velocity limit.
    Velocity,
    /// A pipe feeding the room is over the pressure-gradient limit.
    Gradient,
}

impl LimitingConstraint {
    /// Words for people.
    #[must_use]
    pub fn words(self) -> &'static str {
        match self {
            Self::EmitterSize => "emitter size",
            Self::FlowLimit => "flow limit (minimum water temperature drop)",
            Self::PumpHead => "pump head",
            Self::Velocity => "pipe velocity",
            Self::Gradient => "pipe pressure gradient",
        }
    }
}

/// What to sweep.
#[derive(Debug, Clone, PartialEq)]
pub struct SweepSpec {
    /// Highest supply temperature, °C.
    pub from_c: f64,
    /// Lowest supply temperature, °C.
    pub to_c: f64,
    /// Step, K (> 0).
    pub step_k: f64,
    /// Keep the original presettings and pump set-point (true) or re-balance
    /// at every temperature (false).
    pub frozen_presettings: bool,
    /// Supply temperature at which upgrades are sized, °C; `None` = the
    /// lowest temperature of the sweep.
    pub target_c: Option<f64>,
    /// Smallest water temperature drop an emitter may run at, K (default
    /// [`UPGRADE_DELTA_K`], 5 K).
    pub min_drop_k: f64,
    /// Sweep the supply temperature of this pumped circuit (its mixing or
    /// injection valve's set supply) and judge its rooms only; `None` = the
    /// heat source's supply and every room.
    pub circuit: Option<NodeId>,
}

impl Default for SweepSpec {
    fn default() -> Self {
        Self {
            from_c: 75.0,
            to_c: 35.0,
            step_k: 1.0,
            frozen_presettings: false,
            target_c: None,
            min_drop_k: UPGRADE_DELTA_K,
            circuit: None,
        }
    }
}

/// One emitter at one supply temperature.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct EmitterPoint {
    /// Emitter id (`N7`).
    pub id: String,
    /// Delivered output / load (0 to 1; 1 = covered).
    pub fraction: f64,
    /// Flow the emitter gets, l/h.
    pub flow_l_h: f64,
    /// What keeps it from its load (`None` when covered).
    pub constraint: Option<LimitingConstraint>,
}

/// One supply temperature.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SweepPoint {
    /// Supply temperature, °C.
    pub supply_c: f64,
    /// Per emitter.
    pub emitters: Vec<EmitterPoint>,
    /// Total flow, l/h.
    pub flow_l_h: f64,
    /// Pump duty head, kPa.
    pub pump_head_kpa: f64,
    /// A limit of the network itself broken at this temperature (pump head,
    /// a pipe's velocity or gradient): the constraint, the room it stops
    /// (the index circuit's, or the largest one the pipe feeds) and the
    /// item ("pump", "run R12").
    pub system: Option<(LimitingConstraint, String, String)>,
}

/// An emitter that must be upgraded to cover its room at the target.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Upgrade {
    /// Emitter id.
    pub id: String,
    /// Emitter name.
    pub name: String,
    /// Nominal output (EN 442, 75/65/20 °C) it has now, W.
    pub current_nominal_w: f64,
    /// Nominal output it would need, W.
    pub needed_nominal_w: f64,
}

/// Result of a sweep.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SweepResult {
    /// Lowest supply temperature at which every room is covered, °C.
    pub lowest_supply_c: Option<f64>,
    /// The emitter that falls short first below that temperature.
    pub limiting_emitter: Option<String>,
    /// What stops it there.
    pub limiting_constraint: Option<LimitingConstraint>,
    /// The item of a network constraint ("pump", "run R12"), if that is it.
    pub limiting_item: Option<String>,
    /// The minimum water temperature drop used, K.
    pub min_drop_k: f64,
    /// Target temperature the upgrades are sized for, °C.
    pub target_c: f64,
    /// Points from the highest temperature down.
    pub points: Vec<SweepPoint>,
    /// Upgrades needed at the target temperature.
    pub upgrades: Vec<Upgrade>,
    /// Emitters that are not radiators and fall short at the target (no
    /// EN 442 rating to upgrade).
    pub short_other: Vec<String>,
}

/// Why a sweep could not run.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("{0}")]
pub struct SweepError(pub String);

/// The project with every "to size" radiator fixed at the size its design
/// chose (what would be installed).
#[must_use]
pub fn with_existing_emitters(p: &Project, sol: &Solution) -> Project {
    let mut q = p.clone();
    let mut edits = Vec::new();
    for e in &sol.emitters {
        let Some(node) = p.node(e.id) else { continue };
        let NodeKind::Emitter(em) = &node.kind else { continue };
        if let (EmitterModel::Radiator(spec), Some(EmitterDetail::Radiator(d))) = (&em.model, &e.detail)
            && matches!(spec.sizing, RadiatorSizing::ToSize | RadiatorSizing::Chosen { .. })
        {
            let mut em = em.clone();
            let mut spec = spec.clone();
            spec.sizing = d.existing_sizing();
            em.model = EmitterModel::Radiator(spec);
            edits.push(Edit::SetNodeKind { id: e.id, kind: NodeKind::Emitter(em) });
        }
    }
    if !edits.is_empty() {
        // Each edit only replaces a sized radiator by the same radiator
        // marked existing; a refusal would leave `q` as `p`.
        if q.apply(Edit::Batch(edits)).is_err() {
            return p.clone();
        }
    }
    q
}

/// The project with every pipe fixed at the size the design chose (an
/// installed network keeps its pipes when the supply temperature falls).
fn with_installed_pipes(p: &Project, sol: &Solution) -> Project {
    let mut edits = Vec::new();
    for run in p.runs() {
        let Some(sup) = sol.run_pipes(run.id).find(|x| x.side == Side::Supply) else { continue };
        let ret = sol.run_pipes(run.id).find(|x| x.side == Side::Return).map(|x| x.size.to_owned());
        let props = crate::project::RunProps {
            fixed_size: Some(sup.size.to_owned()),
            fixed_return_size: ret.filter(|r| r != sup.size),
            ..run.props.clone()
        };
        if props != run.props {
            edits.push(Edit::SetRunProps { id: run.id, props });
        }
    }
    let mut q = p.clone();
    if !edits.is_empty() && q.apply(Edit::Batch(edits)).is_err() {
        return p.clone();
    }
    q
}

fn settings_at(p: &Project, supply_c: f64, min_drop_k: f64) -> Option<crate::project::DesignSettings> {
    let s = &p.settings;
    let dt = (s.supply_c - s.return_c).max(1.0);
    let max_room = p
        .nodes()
        .filter_map(|n| if let NodeKind::Emitter(e) = &n.kind { Some(e.room_c) } else { None })
        .fold(s.room_c, f64::max);
    let return_c = (supply_c - dt).max(max_room + 0.5).min(supply_c - 0.5);
    let out = crate::project::DesignSettings { supply_c, return_c, min_water_drop_k: min_drop_k, ..s.clone() };
    out.problems().is_empty().then_some(out)
}

/// What a sweep varies: the source's supply, or one pumped circuit's (with
/// the rooms it judges).
#[derive(Debug, Clone)]
enum Target {
    Source,
    Circuit { id: NodeId, rooms: BTreeSet<NodeId> },
}

/// The project with the swept supply at `supply_c` (its return keeping the
/// design drop, above the warmest room), `None` when no valid settings
/// follow.
fn project_at(p: &Project, target: &Target, supply_c: f64, min_drop_k: f64) -> Option<Project> {
    match target {
        Target::Source => {
            let mut q = p.clone();
            q.settings = settings_at(p, supply_c, min_drop_k)?;
            Some(q)
        }
        Target::Circuit { id, rooms } => {
            let Some(NodeKind::Circuit(c)) = p.node(*id).map(|n| &n.kind) else { return None };
            let dt = (c.supply_c - c.return_c).max(1.0);
            let max_room = rooms
                .iter()
                .filter_map(|&n| {
                    if let Some(NodeKind::Emitter(e)) = p.node(n).map(|n| &n.kind) { Some(e.room_c) } else { None }
                })
                .fold(f64::MIN, f64::max);
            let return_c = (supply_c - dt).max(max_room + 0.5).min(supply_c - 0.5);
            let mut c = c.clone();
            c.supply_c = supply_c;
            c.return_c = return_c;
            let mut q = p.clone();
            q.apply(Edit::SetNodeKind { id: *id, kind: NodeKind::Circuit(c) }).ok()?;
            q.settings.min_water_drop_k = min_drop_k;
            q.settings.problems().is_empty().then_some(q)
        }
    }
}

/// The rooms a pumped circuit heats: its own and those of the circuits it
/// feeds.
fn circuit_rooms(sol: &Solution, id: NodeId) -> BTreeSet<NodeId> {
    let mut roots = vec![id];
    let mut i = 0;
    while i < roots.len() {
        let r = roots[i];
        roots.extend(sol.circuits.iter().filter(|c| c.parent == Some(r)).map(|c| c.root));
        i += 1;
    }
    let emitters: BTreeSet<NodeId> = sol.emitters.iter().map(|e| e.id).collect();
    sol.circuits
        .iter()
        .filter(|c| roots.contains(&c.root))
        .flat_map(|c| c.nodes.iter().copied())
        .filter(|n| emitters.contains(n))
        .collect()
}

/// Run the supply-temperature sweep.
///
/// # Errors
/// [`SweepError`] for a bad range, more than [`MAX_SWEEP_POINTS`] points, a
/// minimum drop out of range, or a project that does not design at its own
/// temperatures.
pub fn sweep(p: &Project, spec: &SweepSpec) -> Result<SweepResult, SweepError> {
    use crate::project::limits;
    limits::SWEEP_STEP_K.check(spec.step_k).map_err(SweepError)?;
    for t in [spec.from_c, spec.to_c].into_iter().chain(spec.target_c) {
        limits::SUPPLY_C.check(t).map_err(SweepError)?;
    }
    if spec.from_c < spec.to_c {
        return Err(SweepError(format!("range {} to {} °C — give from ≥ to", spec.from_c, spec.to_c)));
    }
    let n_steps = ((spec.from_c - spec.to_c) / spec.step_k).floor();
    if n_steps >= MAX_SWEEP_POINTS as f64 {
        return Err(SweepError(format!(
            "{} to {} °C in steps of {} K is {} points — at most {MAX_SWEEP_POINTS}; give a larger step",
            spec.from_c,
            spec.to_c,
            spec.step_k,
            n_steps + 1.0
        )));
    }
    limits::MIN_WATER_DROP_K.check(spec.min_drop_k).map_err(SweepError)?;
    let base = solve_project(p, &SolveOptions::default(), &mut Workspace::default());
    if base.has_errors() {
        // The first error, its item named once.
        let first = base
            .findings
            .iter()
            .find(|f| f.severity == crate::design::Severity::Error)
            .map_or_else(String::new, crate::output::finding_line);
        return Err(SweepError(format!("the project does not design at its own temperatures — {first}")));
    }
    let target = match spec.circuit {
        None => Target::Source,
        Some(id) => match p.node(id).map(|n| &n.kind) {
            Some(NodeKind::Circuit(c)) if c.connection != crate::project::CircuitConnection::Direct => {
                Target::Circuit { id, rooms: circuit_rooms(&base, id) }
            }
            Some(NodeKind::Circuit(_)) => {
                return Err(SweepError(format!(
                    "{id} is a pump-only circuit: it runs at its separator's temperature — sweep the heat source instead"
                )));
            }
            _ => return Err(SweepError(format!("{id} is not a pumped circuit — give a circuit node's id"))),
        },
    };
    let existing = with_installed_pipes(&with_existing_emitters(p, &base), &base);
    // Frozen mode: presettings and pump set-point of the original design.
    let frozen = if spec.frozen_presettings {
        let mut q = existing.clone();
        q.apply(design::freeze_edit(&existing, &base)).map_err(|e| SweepError(e.to_string()))?;
        Some(q)
    } else {
        None
    };
    // `n_steps` is below MAX_SWEEP_POINTS: the cast is exact.
    let n_steps = n_steps as usize;
    let mut points = Vec::with_capacity(n_steps + 1);
    let mut ws = Workspace::default();
    for i in 0..=n_steps {
        let t = spec.from_c - spec.step_k * i as f64;
        points.push(point_at(
            frozen.as_ref().unwrap_or(&existing),
            &target,
            t,
            frozen.is_some(),
            spec.min_drop_k,
            &mut ws,
        ));
    }
    // Lowest covering temperature: walking down, the last point before the
    // first short room or broken limit.
    let mut lowest = None;
    let mut limiting = None;
    for pt in &points {
        let short =
            pt.emitters.iter().filter(|e| e.fraction < 1.0 - 1e-9).min_by(|a, b| a.fraction.total_cmp(&b.fraction));
        match (short, &pt.system) {
            (None, None) => lowest = Some(pt.supply_c),
            (Some(e), _) => {
                limiting = Some((e.id.clone(), e.constraint.unwrap_or(LimitingConstraint::EmitterSize), None));
                break;
            }
            (None, Some((c, room, item))) => {
                limiting = Some((room.clone(), *c, Some(item.clone())));
                break;
            }
        }
    }
    let target_c = spec.target_c.unwrap_or(spec.to_c);
    let (upgrades, short_other) = upgrades_at(&existing, &target, target_c, spec.min_drop_k);
    let (limiting_emitter, limiting_constraint, limiting_item) = match limiting {
        Some((e, c, item)) => (Some(e), Some(c), item),
        None => (None, None, None),
    };
    Ok(SweepResult {
        lowest_supply_c: lowest,
        limiting_emitter,
        limiting_constraint,
        limiting_item,
        min_drop_k: spec.min_drop_k,
        target_c,
        points,
        upgrades,
        short_other,
    })
}

fn point_at(
    p: &Project,
    target: &Target,
    supply_c: f64,
    frozen: bool,
    min_drop_k: f64,
    ws: &mut Workspace,
) -> SweepPoint {
    let judged = |id: NodeId| match target {
        Target::Source => true,
        Target::Circuit { rooms, .. } => rooms.contains(&id),
    };
    let emitters: Vec<NodeId> = p.emitters().into_iter().filter(|&id| judged(id)).collect();
    let Some(mut q) = project_at(p, target, supply_c, min_drop_k) else {
        return SweepPoint {
            supply_c,
            emitters: emitters
                .iter()
                .map(|id| EmitterPoint {
                    id: id.to_string(),
                    fraction: 0.0,
                    flow_l_h: 0.0,
                    constraint: Some(LimitingConstraint::EmitterSize),
                })
                .collect(),
            flow_l_h: 0.0,
            pump_head_kpa: 0.0,
            system: None,
        };
    };
    if frozen {
        q.settings.mode = Mode::Installed;
    }
    let sol = solve_project(&q, &SolveOptions::default(), ws);
    let emitters = sol
        .emitters
        .iter()
        .filter(|e| judged(e.id))
        .map(|e| {
            let (out, flow) = if frozen { (e.output_w, e.flow_l_h) } else { (e.design_output_w, e.design_flow_l_h) };
            let fraction = if e.load_w > 0.0 { (out / e.load_w).clamp(0.0, 1.0) } else { 1.0 };
            // Round away the solver's last digits so "covered" is stable.
            let fraction = if fraction > 1.0 - 1e-6 { 1.0 } else { fraction };
            let constraint = (fraction < 1.0).then(|| emitter_constraint(&q, e.id, supply_c, frozen));
            EmitterPoint { id: e.id.to_string(), fraction, flow_l_h: flow, constraint }
        })
        .collect();
    let pump = sol.pump.as_ref();
    SweepPoint {
        supply_c,
        emitters,
        flow_l_h: pump.map_or(0.0, |x| if frozen { x.operating_flow_m3_h } else { x.design_flow_m3_h } * 1000.0),
        pump_head_kpa: pump.map_or(0.0, |x| x.duty_head_pa / 1000.0),
        system: system_constraint(&sol),
    }
}

/// Why an emitter falls short: it could not give its load at any flow
/// (emitter size), or only at a flow its valves or the minimum drop do not
/// allow (flow limit).
fn emitter_constraint(p: &Project, id: NodeId, supply_c: f64, frozen: bool) -> LimitingConstraint {
    let Some(NodeKind::Emitter(em)) = p.node(id).map(|n| &n.kind) else { return LimitingConstraint::EmitterSize };
    let temps = crate::emitters::DesignTemperatures::new(supply_c, p.settings.return_c, em.room_c);
    let Ok(d) = em.model.design(em.load_w.max(1e-9), &temps) else { return LimitingConstraint::EmitterSize };
    use crate::emitters::Characteristic;
    // Everything the water could give: cooled to the room, at any flow.
    let most = d.installed.characteristic.output_w((supply_c - em.room_c).max(0.0));
    if frozen || most >= em.load_w { LimitingConstraint::FlowLimit } else { LimitingConstraint::EmitterSize }
}

/// A network limit the design at this temperature breaks: the pump's head
/// (the index room), a pipe over its velocity or gradient limit (the
/// largest room it feeds).
fn system_constraint(sol: &Solution) -> Option<(LimitingConstraint, String, String)> {
    let pump_short = sol.findings.iter().any(|f| {
        matches!(f.kind, FindingKind::PumpTooWeak | FindingKind::ValveCannotDeliver | FindingKind::KvAboveLargest)
    });
    if pump_short {
        let room = sol
            .findings
            .iter()
            .find_map(|f| match (f.kind, f.item) {
                (FindingKind::ValveCannotDeliver | FindingKind::KvAboveLargest, ItemRef::Node(n)) => Some(n),
                _ => None,
            })
            .or(sol.index_emitter)
            .map_or_else(String::new, |n| n.to_string());
        return Some((LimitingConstraint::PumpHead, room, "pump".to_owned()));
    }
    let over = sol.pipes.iter().find_map(|pr| {
        if pr.velocity_m_s > pr.velocity_limit_m_s * 1.0001 {
            Some((LimitingConstraint::Velocity, pr))
        } else if pr.gradient_pa_m > pr.gradient_limit_pa_m * 1.0001 {
            Some((LimitingConstraint::Gradient, pr))
        } else {
            None
        }
    });
    let (c, pr) = over?;
    // The room the pipe feeds with the largest load.
    let down = sol.topology.tree_run(pr.run).map_or_else(Vec::new, |tr| sol.topology.subtree(tr.down));
    let room = down
        .iter()
        .filter_map(|&n| sol.emitter(n))
        .max_by(|a, b| a.load_w.total_cmp(&b.load_w))
        .map_or_else(String::new, |e| e.id.to_string());
    Some((c, room, format!("run {}", pr.run)))
}

/// Radiators short at `target_c` and the nominal output each would need
/// (EN 442 characteristic at θs = target, θr = target − the minimum drop).
fn upgrades_at(existing: &Project, target: &Target, target_c: f64, min_drop_k: f64) -> (Vec<Upgrade>, Vec<String>) {
    let mut ups = Vec::new();
    let mut other = Vec::new();
    let mut ws = Workspace::default();
    let pt = point_at(existing, target, target_c, false, min_drop_k, &mut ws);
    for ep in pt.emitters.iter().filter(|e| e.fraction < 1.0 - 1e-9) {
        let Some(node) = existing.nodes().find(|n| n.id.to_string() == ep.id) else { continue };
        let NodeKind::Emitter(em) = &node.kind else { continue };
        match &em.model {
            EmitterModel::Radiator(spec) => {
                let RadiatorSizing::Existing { nominal_output_w, .. } = spec.sizing else { continue };
                let n = spec
                    .exponent_n
                    .or_else(|| {
                        radiator::radiator_catalog()
                            .ok()
                            .and_then(|c| c.find(&spec.type_code).ok())
                            .map(|t| t.exponent_n)
                    })
                    .unwrap_or(1.3);
                let ret = (target_c - min_drop_k).max(em.room_c + 0.5);
                if let Ok(need) = radiator::required_nominal_w(em.load_w, n, target_c, ret, em.room_c) {
                    ups.push(Upgrade {
                        id: ep.id.clone(),
                        name: em.name.clone(),
                        current_nominal_w: nominal_output_w,
                        needed_nominal_w: need.ceil(),
                    });
                }
            }
            EmitterModel::FloorLoop(_) | EmitterModel::Terminal(_) => other.push(ep.id.clone()),
        }
    }
    (ups, other)
}

/// The sweep as CSV (UTF-8, header row, units in the column names): one row
/// per supply temperature and emitter.
///
/// # Errors
/// The `csv` crate's error (writing to memory does not fail in practice).
pub fn sweep_csv(r: &SweepResult) -> Result<String, csv::Error> {
    let mut w = csv::Writer::from_writer(Vec::new());
    w.write_record(["supply_c", "emitter", "delivered_fraction", "flow_l_h", "limiting_constraint"])?;
    for pt in &r.points {
        for e in &pt.emitters {
            w.write_record([
                format!("{:.2}", pt.supply_c),
                crate::csv_cell::neutralise(&e.id).into_owned(),
                format!("{:.6}", e.fraction),
                format!("{:.3}", e.flow_l_h),
                e.constraint.map_or_else(String::new, |c| {
                    serde_json::to_value(c).ok().and_then(|v| v.as_str().map(str::to_owned)).unwrap_or_default()
                }),
            ])?;
        }
    }
    csv_text(w)
}

fn csv_text(w: csv::Writer<Vec<u8>>) -> Result<String, csv::Error> {
    let bytes = w.into_inner().map_err(|e| csv::Error::from(e.into_error()))?;
    Ok(String::from_utf8_lossy(&bytes).into_owned())
}
