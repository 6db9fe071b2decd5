//! The canvas tools: what a click or a drag means for each of them. Tools
//! never change the project; they emit [`Edit`] values into the frame's
//! [`Intents`], which the app applies after drawing.

use flowrise_core::design::Solution;
use flowrise_core::emitters::{EmitterModel, RadiatorSizing, RadiatorSpec};
use flowrise_core::project::{
    CircuitConnection, Edit, Emitter, EmitterValves, Header, HeatSource, LevelId, NodeId, NodeKind, PlanPoint, Project,
    PumpSpec, PumpedCircuit, Separator,
};
use flowrise_core::pump::PumpControl;

use super::hit::Hit;
use crate::gui::intents::{Intents, Selection};

/// A canvas tool.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Tool {
    /// Select (a box, Shift+click), move (Shift: with the downstream branch), pan.
    #[default]
    Select,
    /// Draw a run from node to node with bend points.
    Run,
    /// Place a radiator.
    Emitter,
    /// Place a header.
    Header,
    /// Place the heat source.
    Source,
    /// Place a pumped circuit (mixing valve and pump).
    Circuit,
    /// Place a hydraulic separator.
    Separator,
    /// Rise from a node to the level above.
    Riser,
    /// Split a run with a junction.
    Split,
    /// Remove a node or a run.
    Erase,
}

impl Tool {
    /// All tools in the order of the tool column.
    pub const ALL: [Self; 10] = [
        Self::Select,
        Self::Run,
        Self::Emitter,
        Self::Header,
        Self::Source,
        Self::Circuit,
        Self::Separator,
        Self::Riser,
        Self::Split,
        Self::Erase,
    ];

    /// Word shown in the tool column (and the accessible label).
    #[must_use]
    pub fn word(self) -> &'static str {
        match self {
            Self::Select => "Select",
            Self::Run => "Run",
            Self::Emitter => "Emitter",
            Self::Header => "Header",
            Self::Source => "Source",
            Self::Circuit => "Circuit",
            Self::Separator => "Separator",
            Self::Riser => "Riser",
            Self::Split => "Split",
            Self::Erase => "Erase",
        }
    }

    /// Key that picks the tool.
    #[must_use]
    pub fn key(self) -> egui::Key {
        use egui::Key;
        match self {
            Self::Select => Key::S,
            Self::Run => Key::R,
            Self::Emitter => Key::E,
            Self::Header => Key::H,
            Self::Source => Key::Q,
            Self::Circuit => Key::M,
            Self::Separator => Key::D,
            Self::Riser => Key::V,
            Self::Split => Key::T,
            Self::Erase => Key::X,
        }
    }

    /// What the tool does, for the tooltip and the status line.
    #[must_use]
    pub fn tooltip(self) -> &'static str {
        match self {
            Self::Select => {
                "Click to select, Shift+click to add or remove; drag a box on empty space to select many; drag a node \
                 (or the selection) to move it, Shift+drag to move its whole branch; moves stay square to where they \
                 started (hold Alt for free angles); right- or middle-drag to pan; scroll to zoom"
            }
            Self::Run => {
                "Click a node to start, click bend points, finish on a node (or double-click empty space for a new \
                 junction); lines snap square and onto nodes and runs (hold Alt for free angles); Esc cancels"
            }
            Self::Emitter => "Click to place a radiator; click a junction, header or run to place it connected",
            Self::Header => "Click to place a header; click a run to turn a point of it into a header",
            Self::Source => "Click to place the heat source with its pump (one per network)",
            Self::Circuit => {
                "Click a run to put a pumped circuit (mixing valve + pump, own temperatures) on it: everything downstream \
                 becomes the circuit; or click empty space to place one"
            }
            Self::Separator => {
                "Click a run to put a hydraulic separator on it, or click empty space; connect pumped circuits to its \
                 outlets"
            }
            Self::Riser => {
                "Click a junction, header or the source: adds a junction on the level above and the vertical run to it"
            }
            Self::Split => "Click a run to split it with a junction",
            Self::Erase => "Click a node or a run to remove it",
        }
    }
}

/// A run being drawn.
#[derive(Debug, Clone, PartialEq)]
pub struct RunDraft {
    /// Node the run starts at.
    pub start: NodeId,
    /// Bend points so far, m.
    pub vertices: Vec<PlanPoint>,
}

/// A new mixing circuit for floor heating (35/30 °C, demo pump data).
#[must_use]
pub fn new_circuit(project: &Project, name: &str) -> NodeKind {
    let supply_c = project.settings.supply_c.min(35.0);
    NodeKind::Circuit(PumpedCircuit {
        name: name.to_owned(),
        connection: CircuitConnection::MixingValve,
        supply_c,
        return_c: (supply_c - 5.0).max(10.0),
        valve_kvs_m3_h: 4.0,
        pump: PumpSpec {
            curve_points: [(0.2, 58.0), (1.5, 45.0), (3.0, 15.0)],
            control: PumpControl::ConstantDp { setpoint_kpa: 25.0 },
            design_flow_m3_h: None,
        },
    })
}

/// A new radiator with the project's default valves (to be sized).
#[must_use]
pub fn new_radiator(project: &Project, name: &str) -> NodeKind {
    NodeKind::Emitter(Emitter {
        name: name.to_owned(),
        room_c: project.settings.room_c,
        load_w: 1000.0,
        model: EmitterModel::Radiator(RadiatorSpec {
            type_code: "22".to_owned(),
            height_mm: 600,
            sizing: RadiatorSizing::ToSize,
            exponent_n: None,
        }),
        valves: EmitterValves {
            valve_family: project.settings.valve_family.clone(),
            presetting: None,
            lockshield_family: project.settings.lockshield_family.clone(),
            lockshield_setting: None,
        },
    })
}

/// A new heat source with a small circulator (demo data: invented curve).
#[must_use]
pub fn new_source() -> NodeKind {
    NodeKind::Source(HeatSource {
        name: "Heat source".to_owned(),
        capacity_w: 15_000.0,
        kv_m3_h: 4.0,
        water_content_l: 3.0,
        pump: PumpSpec {
            curve_points: [(0.2, 58.0), (1.5, 45.0), (3.0, 15.0)],
            control: PumpControl::ConstantDp { setpoint_kpa: 40.0 },
            design_flow_m3_h: None,
        },
        max_flow_c: None,
    })
}

fn count_kind(project: &Project, word: &str) -> usize {
    project.nodes().filter(|n| n.kind.word() == word).count()
}

/// The level directly above `level`, if any.
#[must_use]
pub fn level_above(project: &Project, level: LevelId) -> Option<LevelId> {
    let z = project.level(level)?.elevation_m;
    project
        .levels
        .iter()
        .filter(|l| l.elevation_m > z)
        .min_by(|a, b| a.elevation_m.total_cmp(&b.elevation_m))
        .map(|l| l.id)
}

/// A node and everything downstream of it in the supply tree, from the
/// topology of the latest solve.
#[must_use]
pub fn branch_of(sol: &Solution, root: NodeId) -> Vec<NodeId> {
    sol.topology.subtree(root)
}

/// What one click means. `at` is the snapped plan point, `hit` what lies
/// under the pointer.
#[allow(clippy::too_many_arguments)] // reason: a click needs the tool, the document, where, what and the tool state
pub fn click(
    tool: Tool,
    project: &Project,
    level: LevelId,
    at: PlanPoint,
    hit: Option<Hit>,
    draft: &mut Option<RunDraft>,
    header_outlets: u32,
    out: &mut Intents,
) {
    let next = project.peek_node_id().0;
    match tool {
        Tool::Select => {
            out.select = Some(match hit {
                Some(Hit::Node(id)) => Selection::Node(id),
                Some(Hit::Run(id, _)) => Selection::Run(id),
                None => Selection::None,
            });
        }
        Tool::Run => run_click(project, at, hit, draft, out),
        Tool::Emitter => {
            let name = format!("Room {}", count_kind(project, "emitter") + 1);
            let kind = new_radiator(project, &name);
            match hit {
                Some(Hit::Node(id))
                    if matches!(project.node(id).map(|n| &n.kind), Some(NodeKind::Junction | NodeKind::Header(_))) =>
                {
                    let pos = project.node(id).map_or(at, |n| PlanPoint::new(n.pos.x_m + 1.5, n.pos.y_m - 1.0));
                    out.edit_select(Edit::Batch(vec![
                        Edit::AddNode { level, pos, kind },
                        Edit::AddRun { a: id, b: NodeId(next), vertices: Vec::new() },
                    ]));
                }
                Some(Hit::Run(run, p)) => {
                    let pos = PlanPoint::new(p.x_m, p.y_m - 1.5);
                    out.edit_select(Edit::Batch(vec![
                        Edit::SplitRun { run, at: p },
                        Edit::AddNode { level, pos, kind },
                        Edit::AddRun { a: NodeId(next), b: NodeId(next + 1), vertices: Vec::new() },
                    ]));
                }
                _ => out.edit_select(Edit::AddNode { level, pos: at, kind }),
            }
        }
        Tool::Header => {
            let kind = NodeKind::Header(Header {
                name: format!("Header {}", count_kind(project, "header") + 1),
                outlets: header_outlets,
            });
            match hit {
                Some(Hit::Run(run, p)) => out.edit_select(Edit::Batch(vec![
                    Edit::SplitRun { run, at: p },
                    Edit::SetNodeKind { id: NodeId(next), kind },
                ])),
                _ => out.edit_select(Edit::AddNode { level, pos: at, kind }),
            }
        }
        Tool::Source => out.edit_select(Edit::AddNode { level, pos: at, kind: new_source() }),
        Tool::Circuit | Tool::Separator => {
            let kind = if tool == Tool::Circuit {
                new_circuit(project, &format!("Circuit {}", count_kind(project, "pumped circuit") + 1))
            } else {
                NodeKind::Separator(Separator {
                    name: format!("Separator {}", count_kind(project, "hydraulic separator") + 1),
                    kv_m3_h: 40.0,
                })
            };
            match hit {
                Some(Hit::Run(run, p)) => out.edit_select(Edit::Batch(vec![
                    Edit::SplitRun { run, at: p },
                    Edit::SetNodeKind { id: NodeId(next), kind },
                ])),
                _ => out.edit_select(Edit::AddNode { level, pos: at, kind }),
            }
        }
        Tool::Riser => match hit {
            Some(Hit::Node(id)) => {
                let Some(node) = project.node(id) else { return };
                if matches!(node.kind, NodeKind::Emitter(_)) {
                    out.status_error("a riser starts at a junction, header or the source, not at an emitter");
                    return;
                }
                let Some(up) = level_above(project, node.level) else {
                    out.status_error("there is no level above — add one with “+ Level” on the level tabs");
                    return;
                };
                let name = project.level(up).map_or_else(String::new, |l| l.name.clone());
                out.edit(Edit::Batch(vec![
                    Edit::AddNode { level: up, pos: node.pos, kind: NodeKind::Junction },
                    Edit::AddRun { a: id, b: NodeId(next), vertices: Vec::new() },
                ]));
                out.status_note(format!("riser added up to {name} — open its tab to go on drawing there"));
            }
            _ => out.status_error("click a junction, header or the source to rise from it"),
        },
        Tool::Split => match hit {
            Some(Hit::Run(run, p)) => out.edit_select(Edit::SplitRun { run, at: p }),
            _ => out.status_error("click on a run to split it"),
        },
        Tool::Erase => match hit {
            Some(Hit::Node(id)) => {
                out.edit(Edit::RemoveNode(id));
                out.select = Some(Selection::None);
            }
            Some(Hit::Run(id, _)) => {
                out.edit(Edit::RemoveRun(id));
                out.select = Some(Selection::None);
            }
            None => {}
        },
    }
}

fn run_click(project: &Project, at: PlanPoint, hit: Option<Hit>, draft: &mut Option<RunDraft>, out: &mut Intents) {
    let next = NodeId(project.peek_node_id().0);
    match (draft.take(), hit) {
        (None, Some(Hit::Node(id))) => {
            *draft = Some(RunDraft { start: id, vertices: Vec::new() });
            out.status_note("click bend points; finish on a node, or double-click for a new junction");
        }
        (None, Some(Hit::Run(run, p))) => {
            // Start a branch from a new tee on the run.
            out.edit(Edit::SplitRun { run, at: p });
            *draft = Some(RunDraft { start: next, vertices: Vec::new() });
        }
        (None, None) => out.status_error("start a run on a node or on a run (a tee is made there)"),
        (Some(d), Some(Hit::Node(id))) if id == d.start => *draft = Some(d),
        (Some(d), Some(Hit::Node(id))) => out.edit_select_run(Edit::AddRun { a: d.start, b: id, vertices: d.vertices }),
        (Some(d), Some(Hit::Run(run, p))) => out.edit_select_run(Edit::Batch(vec![
            Edit::SplitRun { run, at: p },
            Edit::AddRun { a: d.start, b: next, vertices: d.vertices },
        ])),
        (Some(mut d), None) => {
            d.vertices.push(at);
            *draft = Some(d);
        }
    }
}

/// Double-click on empty space while drawing: end the run on a new junction.
pub fn run_double_click(
    project: &Project,
    level: LevelId,
    at: PlanPoint,
    draft: &mut Option<RunDraft>,
    out: &mut Intents,
) {
    let Some(mut d) = draft.take() else { return };
    // The first click of the double-click added a bend point here: drop it.
    if d.vertices.last().is_some_and(|v| v.distance_m(at) < 1e-6) {
        d.vertices.pop();
    }
    let next = NodeId(project.peek_node_id().0);
    out.edit_select(Edit::Batch(vec![
        Edit::AddNode { level, pos: at, kind: NodeKind::Junction },
        Edit::AddRun { a: d.start, b: next, vertices: d.vertices },
    ]));
}
