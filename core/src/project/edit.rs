//! Edits: the only way the project document changes.
//!
//! Widgets and the CLI build [`Edit`] values; [`Project::apply`] checks an
//! edit completely before changing anything, so a refused edit leaves the
//! project exactly as it was. Every refusal names the item and the fix.

use thiserror::Error;

use super::limits::{self, Limit};
use super::{
    BranchDevice, DesignSettings, Level, LevelId, Node, NodeId, NodeKind, PlanPoint, Project, Run, RunId, RunProps,
};
use crate::emitters::{EmitterModel, RadiatorSizing};
use crate::pump::PumpControl;

/// One change to the project.
#[derive(Debug, Clone, PartialEq)]
pub enum Edit {
    /// Rename the project.
    Rename(String),
    /// Replace the design settings.
    SetSettings(Box<DesignSettings>),
    /// Add a level.
    AddLevel {
        /// Name.
        name: String,
        /// Elevation of its pipework, m.
        elevation_m: f64,
    },
    /// Change a level's name, elevation or plan underlay.
    SetLevel(Level),
    /// Add a node.
    AddNode {
        /// Level.
        level: LevelId,
        /// Position.
        pos: PlanPoint,
        /// Kind and data.
        kind: NodeKind,
    },
    /// Move nodes by a plan offset (a node, or a whole branch); vertices of
    /// runs whose both ends move go along.
    MoveNodes {
        /// Nodes to move.
        ids: Vec<NodeId>,
        /// Offset east, m.
        dx_m: f64,
        /// Offset north, m.
        dy_m: f64,
    },
    /// Replace a node's data (kind stays a node; its id and runs stay).
    SetNodeKind {
        /// Node.
        id: NodeId,
        /// New data.
        kind: NodeKind,
    },
    /// Remove a node and its runs.
    RemoveNode(NodeId),
    /// Draw a run between two nodes.
    AddRun {
        /// One end.
        a: NodeId,
        /// Other end.
        b: NodeId,
        /// Bend points between them.
        vertices: Vec<PlanPoint>,
    },
    /// Split a run with a new junction at a point (projected onto the run).
    SplitRun {
        /// Run to split.
        run: RunId,
        /// Where, on the run's level.
        at: PlanPoint,
    },
    /// Remove a run.
    RemoveRun(RunId),
    /// Replace a run's user properties.
    SetRunProps {
        /// Run.
        id: RunId,
        /// New properties.
        props: RunProps,
    },
    /// Several edits as one undo step (all or nothing).
    Batch(Vec<Edit>),
}

/// Why an edit was refused. The project is unchanged.
#[derive(Debug, Clone, PartialEq, Eq, Error)]
pub enum EditError {
    /// The edit names an item that does not exist.
    #[error("{0} does not exist (it may have been deleted)")]
    Missing(String),
    /// The edit's values are not acceptable.
    #[error("{item}: {message}")]
    Invalid {
        /// The item concerned ("run R12", "emitter Bedroom (N4)", "settings").
        item: String,
        /// What is wrong and how to fix it.
        message: String,
    },
}

/// What an applied edit created.
#[derive(Debug, Clone, PartialEq, Eq, Default)]
pub struct EditOutcome {
    /// Nodes created.
    pub nodes: Vec<NodeId>,
    /// Runs created.
    pub runs: Vec<RunId>,
}

fn invalid(item: impl Into<String>, message: impl Into<String>) -> EditError {
    EditError::Invalid { item: item.into(), message: message.into() }
}

/// Check a text the user gives (a name, a label, a catalog id): control
/// characters — NUL, BEL, ESC, tab, newline and the rest of Unicode's
/// "Cc" class — are refused, because names reach terminals, CSV files and
/// exported networks. The message names the item and the field, and shows
/// the text with the character escaped (never the character itself).
///
/// # Errors
/// [`EditError::Invalid`] naming `item`.
pub fn check_text(item: &str, field: &str, text: &str) -> Result<(), EditError> {
    let Some((at, c)) = text.chars().enumerate().find(|(_, c)| c.is_control()) else { return Ok(()) };
    let shown: String = text.chars().take(80).collect::<String>().escape_debug().to_string();
    let more = if text.chars().count() > 80 { "…" } else { "" };
    Err(invalid(
        printable(item),
        format!(
            "{field} \"{shown}{more}\" holds the control character U+{:04X} at character {} — remove it (a name \
             may hold any printable character, but no tab, newline or other control character)",
            u32::from(c),
            at + 1
        ),
    ))
}

/// `text` with control characters escaped (for an item label built from a
/// name that has not been checked yet).
#[must_use]
pub fn printable(text: &str) -> String {
    if text.chars().any(char::is_control) { text.escape_debug().to_string() } else { text.to_owned() }
}

/// The texts a node holds, as (field, text): its name and the catalog ids
/// and labels of an emitter.
#[must_use]
pub fn node_texts(kind: &NodeKind) -> Vec<(&'static str, &str)> {
    match kind {
        NodeKind::Junction => Vec::new(),
        NodeKind::Header(h) => vec![("name", h.name.as_str())],
        NodeKind::Source(s) => vec![("name", s.name.as_str())],
        NodeKind::Circuit(c) => vec![("name", c.name.as_str())],
        NodeKind::Separator(x) => vec![("name", x.name.as_str())],
        NodeKind::Emitter(e) => {
            let mut v = vec![
                ("name", e.name.as_str()),
                ("valve family", e.valves.valve_family.as_str()),
                ("lockshield family", e.valves.lockshield_family.as_str()),
            ];
            if let Some(p) = &e.valves.presetting {
                v.push(("presetting", p.as_str()));
            }
            if let Some(p) = &e.valves.lockshield_setting {
                v.push(("lockshield setting", p.as_str()));
            }
            if let EmitterModel::Radiator(r) = &e.model {
                v.push(("radiator type", r.type_code.as_str()));
            }
            v
        }
    }
}

/// Check a node's data; the message names the field and the fix.
///
/// # Errors
/// [`EditError::Invalid`] naming the node.
pub fn validate_node_kind(label: &str, kind: &NodeKind) -> Result<(), EditError> {
    for (field, text) in node_texts(kind) {
        check_text(label, field, text)?;
    }
    let within = |l: &Limit, v: f64| l.check(v).map(|_| ()).map_err(|m| invalid(label, m));
    match kind {
        NodeKind::Junction => Ok(()),
        NodeKind::Header(h) => within(&limits::HEADER_OUTLETS, f64::from(h.outlets)),
        NodeKind::Source(s) => {
            within(&limits::SOURCE_CAPACITY_W, s.capacity_w)?;
            within(&limits::SOURCE_KV_M3_H, s.kv_m3_h)?;
            within(&limits::SOURCE_WATER_L, s.water_content_l)?;
            validate_pump(label, &s.pump)?;
            if let Some(t) = s.max_flow_c {
                within(&limits::SOURCE_MAX_FLOW_C, t)?;
            }
            Ok(())
        }
        NodeKind::Circuit(c) => {
            within(&limits::SUPPLY_C, c.supply_c)?;
            within(&limits::RETURN_C, c.return_c)?;
            if c.return_c >= c.supply_c && c.connection != crate::project::CircuitConnection::Direct {
                return Err(invalid(
                    label,
                    format!(
                        "return {} °C is not below supply {} °C — give the circuit a return below its supply",
                        c.return_c, c.supply_c
                    ),
                ));
            }
            within(&limits::CIRCUIT_VALVE_KVS_M3_H, c.valve_kvs_m3_h)?;
            validate_pump(label, &c.pump)
        }
        NodeKind::Separator(x) => within(&limits::SOURCE_KV_M3_H, x.kv_m3_h),
        NodeKind::Emitter(e) => {
            for (field, setting) in
                [("presetting", &e.valves.presetting), ("lockshield setting", &e.valves.lockshield_setting)]
            {
                if setting.as_deref().is_some_and(|t| t.trim().is_empty()) {
                    return Err(invalid(
                        label,
                        format!(
                            "{field} label is empty — give one of the family's steps (\"4\"), or none to let the \
                             design choose"
                        ),
                    ));
                }
            }
            within(&limits::LOAD_W, e.load_w)?;
            within(&limits::ROOM_C, e.room_c)?;
            e.model.validate().map_err(|err| invalid(label, err.to_string()))?;
            // Hydraulic data far outside any real emitter would overflow the
            // circuit pressure drops (Δp ∝ 1/Kv², ∝ ζ): generous bounds.
            match &e.model {
                EmitterModel::Radiator(r) => {
                    within(&limits::RADIATOR_HEIGHT_MM, f64::from(r.height_mm))?;
                    match r.sizing {
                        RadiatorSizing::ToSize => {}
                        RadiatorSizing::Existing { nominal_output_w, length_mm }
                        | RadiatorSizing::Chosen { nominal_output_w, length_mm } => {
                            within(&limits::RADIATOR_NOMINAL_W, nominal_output_w)?;
                            within(&limits::RADIATOR_LENGTH_MM, f64::from(length_mm))?;
                        }
                    }
                }
                EmitterModel::FloorLoop(f) => {
                    within(&limits::FLOOR_AREA_M2, f.area_m2)?;
                    within(&limits::FLOOR_SPACING_M, f.spacing_m)?;
                    within(&limits::FLOOR_COVERING_M2K_W, f.covering_resistance_m2k_w)?;
                    within(&limits::FLOOR_ZETA, f.zeta_sum)?;
                    within(&limits::FLOOR_ROUGHNESS_M, f.pipe_roughness_m)?;
                }
                EmitterModel::Terminal(t) => {
                    within(&limits::TERMINAL_NOMINAL_W, t.nominal_output_w)?;
                    within(&limits::TERMINAL_KV_M3_H, t.kv_m3_h)?;
                }
            }
            Ok(())
        }
    }
}

/// Check a pump's curve and control.
fn validate_pump(label: &str, pump: &crate::project::PumpSpec) -> Result<(), EditError> {
    let within = |l: &Limit, v: f64| l.check(v).map(|_| ()).map_err(|m| invalid(label, m));
    for (q, h) in pump.curve_points {
        within(&limits::PUMP_CURVE_FLOW_M3_H, q)?;
        within(&limits::PUMP_CURVE_HEAD_KPA, h)?;
    }
    crate::pump::PumpCurve::from_three_points(pump.curve_points)
        .map_err(|e| invalid(label, format!("pump curve: {e}")))?;
    match pump.control {
        PumpControl::FixedSpeed => {}
        PumpControl::ConstantDp { setpoint_kpa } | PumpControl::ProportionalDp { setpoint_kpa } => {
            within(&limits::PUMP_SETPOINT_KPA, setpoint_kpa)?;
        }
    }
    if let Some(q) = pump.design_flow_m3_h {
        within(&limits::PUMP_DESIGN_FLOW_M3_H, q)?;
    }
    Ok(())
}

/// Check a run's user properties.
///
/// # Errors
/// [`EditError::Invalid`] naming the run.
pub fn validate_run_props(id: RunId, props: &RunProps) -> Result<(), EditError> {
    if let Some(l) = props.length_override_m {
        limits::RUN_LENGTH_M.check(l).map_err(|m| invalid(format!("run {id}"), m))?;
    }
    for (field, size) in [("fixed size", &props.fixed_size), ("fixed return size", &props.fixed_return_size)] {
        if let Some(size) = size {
            check_text(&format!("run {id}"), field, size)?;
            if size.trim().is_empty() {
                return Err(invalid(format!("run {id}"), format!("{field} is empty — pick a size or clear it")));
            }
        }
    }
    match &props.device {
        None | Some(BranchDevice::BalancingValve { family: None, .. }) => {}
        Some(BranchDevice::BalancingValve { family: Some(f), .. }) => {
            let ok = crate::valves::valve_family(f).is_ok_and(|v| v.kind == crate::valves::ValveKind::Balancing);
            if !ok {
                return Err(invalid(
                    format!("run {id}"),
                    format!("balancing valve \"{f}\" is not a balancing valve of the catalog — pick one"),
                ));
            }
        }
        Some(BranchDevice::DpController { family, setpoint_kpa }) => {
            if let Some(f) = family
                && crate::controllers::dp_controller(f).is_err()
            {
                return Err(invalid(
                    format!("run {id}"),
                    format!("Δp controller \"{f}\" is not in the catalog — pick one"),
                ));
            }
            if let Some(sp) = setpoint_kpa {
                limits::DP_CONTROLLER_SETPOINT_KPA.check(*sp).map_err(|m| invalid(format!("run {id}"), m))?;
            }
        }
    }
    Ok(())
}

/// A drawn run is held to the same length limit as a given length
/// ([`limits::RUN_LENGTH_M`]).
///
/// # Errors
/// [`EditError::Invalid`] naming the run, its length and the fixes.
pub fn check_drawn_length(id: RunId, drawn_m: f64) -> Result<(), EditError> {
    if drawn_m.is_finite() && drawn_m <= limits::RUN_LENGTH_M.max {
        return Ok(());
    }
    Err(invalid(
        format!("run {id}"),
        format!(
            "drawn length {} m is longer than the {} m a run may have — move its ends closer, split it, or give \
             its measured length",
            limits::readable(drawn_m),
            limits::readable(limits::RUN_LENGTH_M.max)
        ),
    ))
}

fn check_point(item: &str, p: PlanPoint) -> Result<(), EditError> {
    if limits::PLAN_COORDINATE_M.contains(p.x_m) && limits::PLAN_COORDINATE_M.contains(p.y_m) {
        Ok(())
    } else {
        let (x, y) = (limits::readable(p.x_m), limits::readable(p.y_m));
        Err(invalid(item, format!("position ({x}, {y}) m is not a finite point within 100 km")))
    }
}

impl Project {
    /// Apply an edit. A refused edit leaves the project unchanged.
    ///
    /// # Errors
    /// [`EditError`] naming the item and the fix.
    pub fn apply(&mut self, edit: Edit) -> Result<EditOutcome, EditError> {
        // Check on a copy for batches so a failing member leaves no trace;
        // single edits check before they touch anything.
        if let Edit::Batch(edits) = edit {
            let mut trial = self.clone();
            let mut outcome = EditOutcome::default();
            for e in edits {
                let o = trial.apply_one(e)?;
                outcome.nodes.extend(o.nodes);
                outcome.runs.extend(o.runs);
            }
            *self = trial;
            self.revision += 1;
            return Ok(outcome);
        }
        let outcome = self.apply_one(edit)?;
        self.revision += 1;
        Ok(outcome)
    }

    fn node_label(&self, id: NodeId) -> Result<String, EditError> {
        self.node(id).map(Node::label).ok_or_else(|| EditError::Missing(format!("node {id}")))
    }

    fn check_level(&self, level: LevelId) -> Result<(), EditError> {
        if self.level(level).is_some() { Ok(()) } else { Err(EditError::Missing(format!("level {level}"))) }
    }

    #[allow(clippy::too_many_lines)] // reason: one match arm per edit kind reads best in one place
    fn apply_one(&mut self, edit: Edit) -> Result<EditOutcome, EditError> {
        let mut outcome = EditOutcome::default();
        match edit {
            Edit::Batch(edits) => {
                for e in edits {
                    let o = self.apply_one(e)?;
                    outcome.nodes.extend(o.nodes);
                    outcome.runs.extend(o.runs);
                }
            }
            Edit::Rename(name) => {
                check_text("project", "name", &name)?;
                if name.trim().is_empty() {
                    return Err(invalid("project", "name is empty — give the project a name"));
                }
                self.name = name;
            }
            Edit::SetSettings(settings) => {
                if let Some(p) = settings.problems().first() {
                    return Err(invalid(format!("settings: {}", p.field), p.message.clone()));
                }
                self.settings = *settings;
            }
            Edit::AddLevel { name, elevation_m } => {
                check_text("new level", "name", &name)?;
                if !(limits::ELEVATION_M.contains(elevation_m)) {
                    return Err(invalid(
                        format!("level {name}"),
                        limits::ELEVATION_M.check(elevation_m).err().unwrap_or_default(),
                    ));
                }
                let id = LevelId(self.levels.iter().map(|l| l.id.0 + 1).max().unwrap_or(0));
                self.levels.push(Level { id, name, elevation_m, underlay: None });
                self.levels.sort_by(|a, b| a.elevation_m.total_cmp(&b.elevation_m));
            }
            Edit::SetLevel(level) => {
                check_text(&format!("level {}", level.id), "name", &level.name)?;
                if let Some((field, message)) = level.underlay.as_ref().and_then(|u| u.problems().into_iter().next()) {
                    return Err(invalid(format!("plan underlay of level {} ({field})", level.name), message));
                }
                if !(limits::ELEVATION_M.contains(level.elevation_m)) {
                    return Err(invalid(
                        format!("level {}", level.name),
                        limits::ELEVATION_M.check(level.elevation_m).err().unwrap_or_default(),
                    ));
                }
                let slot = self
                    .levels
                    .iter_mut()
                    .find(|l| l.id == level.id)
                    .ok_or_else(|| EditError::Missing(format!("level {}", level.id)))?;
                let old = std::mem::replace(slot, level);
                let id = old.id;
                // A new elevation changes the length of every vertical run
                // to this level: checked, and undone when one is too long.
                if let Err(e) = self.check_lengths_on_level(id) {
                    if let Some(slot) = self.levels.iter_mut().find(|l| l.id == id) {
                        *slot = old;
                    }
                    return Err(e);
                }
                self.levels.sort_by(|a, b| a.elevation_m.total_cmp(&b.elevation_m));
            }
            Edit::AddNode { level, pos, kind } => {
                self.check_level(level)?;
                check_point("new node", pos)?;
                validate_node_kind(&format!("new {}", kind.word()), &kind)?;
                if matches!(kind, NodeKind::Source(_)) && !self.sources().is_empty() {
                    return Err(invalid(
                        "new heat source",
                        "the project has a heat source already — one source per network; move or edit it instead",
                    ));
                }
                let id = self.alloc_node_id();
                self.insert_node(Node { id, level, pos, kind });
                outcome.nodes.push(id);
            }
            Edit::MoveNodes { ids, dx_m, dy_m } => {
                if !(dx_m.is_finite() && dy_m.is_finite()) {
                    return Err(invalid("move", "offset is not a finite number"));
                }
                for &id in &ids {
                    let n = self.node(id).ok_or_else(|| EditError::Missing(format!("node {id}")))?;
                    check_point(&n.label(), PlanPoint::new(n.pos.x_m + dx_m, n.pos.y_m + dy_m))?;
                }
                let moved: std::collections::BTreeSet<NodeId> = ids.iter().copied().collect();
                self.check_lengths_after_move(&moved, dx_m, dy_m)?;
                for &id in &moved {
                    if let Some(n) = self.node_mut(id) {
                        n.pos.x_m += dx_m;
                        n.pos.y_m += dy_m;
                    }
                }
                let runs: Vec<RunId> =
                    self.runs().filter(|r| moved.contains(&r.a) && moved.contains(&r.b)).map(|r| r.id).collect();
                for id in runs {
                    if let Some(r) = self.run_mut(id) {
                        for v in &mut r.vertices {
                            v.x_m += dx_m;
                            v.y_m += dy_m;
                        }
                    }
                }
            }
            Edit::SetNodeKind { id, kind } => {
                let label = self.node_label(id)?;
                validate_node_kind(&label, &kind)?;
                let old_word = self.node(id).map(|n| n.kind.word());
                if matches!(kind, NodeKind::Source(_)) && old_word != Some("heat source") && !self.sources().is_empty()
                {
                    return Err(invalid(label, "the project has a heat source already — one source per network"));
                }
                if matches!(kind, NodeKind::Emitter(_)) && self.runs_at(id).len() > 1 {
                    return Err(invalid(label, "an emitter connects by one run — remove the other runs first"));
                }
                if let Some(n) = self.node_mut(id) {
                    n.kind = kind;
                }
            }
            Edit::RemoveNode(id) => {
                self.node_label(id)?;
                self.take_node(id);
            }
            Edit::AddRun { a, b, vertices } => {
                let la = self.node_label(a)?;
                let lb = self.node_label(b)?;
                if a == b {
                    return Err(invalid(la, "a run needs two different ends — finish it on another node"));
                }
                for &v in &vertices {
                    check_point("new run", v)?;
                }
                for (id, label) in [(a, &la), (b, &lb)] {
                    if let Some(n) = self.node(id)
                        && matches!(n.kind, NodeKind::Emitter(_))
                        && !self.runs_at(id).is_empty()
                    {
                        return Err(invalid(
                            label.clone(),
                            "an emitter connects by one run (its supply + return pair) and has one already — \
                             start the new run at a junction or header",
                        ));
                    }
                }
                if self.runs().any(|r| (r.a == a && r.b == b) || (r.a == b && r.b == a)) {
                    return Err(invalid(format!("{la} – {lb}"), "these two are joined by a run already"));
                }
                let id = self.peek_run_id();
                let run = Run { id, a, b, vertices, props: RunProps::default() };
                check_drawn_length(id, self.drawn_length_m(&run))?;
                let id = self.alloc_run_id();
                if !self.insert_run(run) {
                    return Err(EditError::Missing(format!("an end of run {id}")));
                }
                outcome.runs.push(id);
            }
            Edit::SplitRun { run, at } => {
                check_point("split point", at)?;
                let r = self.run(run).cloned().ok_or_else(|| EditError::Missing(format!("run {run}")))?;
                if self.is_vertical(&r) {
                    return Err(invalid(
                        format!("run {run}"),
                        "a vertical run cannot be split on a plan — add a level between its ends instead",
                    ));
                }
                let level =
                    self.node(r.a).map(|n| n.level).ok_or_else(|| EditError::Missing(format!("node {}", r.a)))?;
                let (seg, p) = self.project_onto_run(&r, at);
                let first: Vec<PlanPoint> = r.vertices[..seg].to_vec();
                let second: Vec<PlanPoint> = r.vertices[seg..].to_vec();
                self.take_run(run);
                let j = self.alloc_node_id();
                self.insert_node(Node { id: j, level, pos: p, kind: NodeKind::Junction });
                let r1 = self.alloc_run_id();
                let r2 = self.alloc_run_id();
                let mut props1 = r.props.clone();
                let mut props2 = r.props.clone();
                if let Some(l) = r.props.length_override_m {
                    // Share an override in proportion to the drawn lengths.
                    let total = self.drawn_length_m(&r).max(1e-9);
                    let l1 = polyline_len(self.node(r.a).map(|n| n.pos).unwrap_or(p), &first, p);
                    let f = (l1 / total).clamp(0.01, 0.99);
                    props1.length_override_m = Some(l * f);
                    props2.length_override_m = Some(l * (1.0 - f));
                }
                self.insert_run(Run { id: r1, a: r.a, b: j, vertices: first, props: props1 });
                self.insert_run(Run { id: r2, a: j, b: r.b, vertices: second, props: props2 });
                outcome.nodes.push(j);
                outcome.runs.extend([r1, r2]);
            }
            Edit::RemoveRun(id) => {
                self.take_run(id).ok_or_else(|| EditError::Missing(format!("run {id}")))?;
            }
            Edit::SetRunProps { id, props } => {
                validate_run_props(id, &props)?;
                let r = self.run(id).ok_or_else(|| EditError::Missing(format!("run {id}")))?;
                if props.length_override_m.is_none() {
                    check_drawn_length(id, self.drawn_length_m(r))?;
                }
                let r = self.run_mut(id).ok_or_else(|| EditError::Missing(format!("run {id}")))?;
                r.props = props;
            }
        }
        Ok(outcome)
    }

    /// Every run without a given length that a move of `moved` by
    /// (`dx_m`, `dy_m`) changes stays within the length limit (checked
    /// before anything moves).
    fn check_lengths_after_move(
        &self,
        moved: &std::collections::BTreeSet<NodeId>,
        dx_m: f64,
        dy_m: f64,
    ) -> Result<(), EditError> {
        let shift = |p: PlanPoint| PlanPoint::new(p.x_m + dx_m, p.y_m + dy_m);
        for &id in moved {
            for rid in self.runs_at(id) {
                let Some(r) = self.run(rid) else { continue };
                if r.props.length_override_m.is_some() {
                    continue;
                }
                let (Some(a), Some(b)) = (self.node(r.a), self.node(r.b)) else { continue };
                let (ma, mb) = (moved.contains(&r.a), moved.contains(&r.b));
                if ma && mb {
                    continue; // moves as a whole: its length stays
                }
                let pa = if ma { shift(a.pos) } else { a.pos };
                let pb = if mb { shift(b.pos) } else { b.pos };
                let plan = super::plan_length_m(pa, &r.vertices, pb);
                let rise = (self.elevation_m(r.a) - self.elevation_m(r.b)).abs();
                check_drawn_length(rid, plan + rise)?;
            }
        }
        Ok(())
    }

    /// Every run without a given length touching level `level` is within
    /// the length limit.
    fn check_lengths_on_level(&self, level: LevelId) -> Result<(), EditError> {
        for r in self.runs() {
            if r.props.length_override_m.is_some() {
                continue;
            }
            let on_level = [r.a, r.b].iter().any(|&n| self.node(n).is_some_and(|n| n.level == level));
            if on_level {
                check_drawn_length(r.id, self.drawn_length_m(r))?;
            }
        }
        Ok(())
    }

    /// The segment index and the point of run `r`'s polyline nearest `at`.
    fn project_onto_run(&self, r: &Run, at: PlanPoint) -> (usize, PlanPoint) {
        let a = self.node(r.a).map_or(at, |n| n.pos);
        let b = self.node(r.b).map_or(at, |n| n.pos);
        let mut pts = Vec::with_capacity(r.vertices.len() + 2);
        pts.push(a);
        pts.extend_from_slice(&r.vertices);
        pts.push(b);
        let mut best = (0, a, f64::INFINITY);
        for (i, w) in pts.windows(2).enumerate() {
            let (p, d) = nearest_on_segment(w[0], w[1], at);
            if d < best.2 {
                best = (i, p, d);
            }
        }
        (best.0, best.1)
    }
}

fn polyline_len(start: PlanPoint, vertices: &[PlanPoint], end: PlanPoint) -> f64 {
    let mut last = start;
    let mut len = 0.0;
    for &v in vertices {
        len += last.distance_m(v);
        last = v;
    }
    len + last.distance_m(end)
}

/// Nearest point to `p` on segment `a`–`b`, and its distance, m.
#[must_use]
pub fn nearest_on_segment(a: PlanPoint, b: PlanPoint, p: PlanPoint) -> (PlanPoint, f64) {
    let (dx, dy) = (b.x_m - a.x_m, b.y_m - a.y_m);
    let len2 = dx * dx + dy * dy;
    let t = if len2 > 0.0 { (((p.x_m - a.x_m) * dx + (p.y_m - a.y_m) * dy) / len2).clamp(0.0, 1.0) } else { 0.0 };
    let q = PlanPoint::new(a.x_m + t * dx, a.y_m + t * dy);
    (q, q.distance_m(p))
}
