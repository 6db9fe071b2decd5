//! A small builder for projects in tests and demo generation: every change
//! goes through `Project::apply` with an `Edit`, exactly as the GUI does.

// reason: a test helper — a refused edit must stop the test loudly, and the
// builder mirrors the many inputs of the items it builds.
#![allow(clippy::unwrap_used, clippy::panic, clippy::too_many_arguments)]

use flowrise_core::emitters::floor::FloorZone;
use flowrise_core::emitters::{EmitterModel, FloorLoopSpec, RadiatorSizing, RadiatorSpec, TerminalSpec};
use flowrise_core::project::{
    CircuitConnection, Edit, Emitter, EmitterValves, Header, HeatSource, LevelId, NodeId, NodeKind, PlanPoint, Project,
    PumpSpec, PumpedCircuit, RunId, Separator,
};
use flowrise_core::pump::PumpControl;

/// Builds a project edit by edit; panics on a refused edit (test code).
#[derive(Debug)]
pub struct Builder {
    /// The project being built.
    pub p: Project,
}

#[allow(clippy::missing_panics_doc, clippy::must_use_candidate)] // reason: test helper; panics are the point
impl Builder {
    /// A new project named `name` with one level at elevation 0.
    pub fn new(name: &str) -> Self {
        Self { p: Project::new(name) }
    }

    /// Add a level; returns its id.
    pub fn level(&mut self, name: &str, elevation_m: f64) -> LevelId {
        self.p.apply(Edit::AddLevel { name: name.to_owned(), elevation_m }).unwrap();
        self.p.levels.iter().find(|l| l.name == name).unwrap().id
    }

    fn node(&mut self, level: LevelId, x: f64, y: f64, kind: NodeKind) -> NodeId {
        let o = self.p.apply(Edit::AddNode { level, pos: PlanPoint::new(x, y), kind }).unwrap();
        o.nodes[0]
    }

    /// A heat source with a circulator of the given three curve points.
    pub fn source(
        &mut self,
        level: LevelId,
        x: f64,
        y: f64,
        capacity_w: f64,
        curve: [(f64, f64); 3],
        control: PumpControl,
    ) -> NodeId {
        let kind = NodeKind::Source(HeatSource {
            name: "Heat source".to_owned(),
            capacity_w,
            kv_m3_h: 4.0,
            water_content_l: 3.0,
            pump: PumpSpec { curve_points: curve, control, design_flow_m3_h: None },
            max_flow_c: None,
        });
        self.node(level, x, y, kind)
    }

    /// A pumped circuit with the small circulator curve at constant Δp.
    pub fn circuit(
        &mut self,
        level: LevelId,
        x: f64,
        y: f64,
        name: &str,
        connection: CircuitConnection,
        supply_return_c: (f64, f64),
    ) -> NodeId {
        let kind = NodeKind::Circuit(PumpedCircuit {
            name: name.to_owned(),
            connection,
            supply_c: supply_return_c.0,
            return_c: supply_return_c.1,
            valve_kvs_m3_h: 4.0,
            pump: PumpSpec {
                curve_points: SMALL_PUMP,
                control: PumpControl::ConstantDp { setpoint_kpa: 25.0 },
                design_flow_m3_h: None,
            },
        });
        self.node(level, x, y, kind)
    }

    /// A hydraulic separator.
    pub fn separator(&mut self, level: LevelId, x: f64, y: f64, name: &str) -> NodeId {
        self.node(level, x, y, NodeKind::Separator(Separator { name: name.to_owned(), kv_m3_h: 40.0 }))
    }

    /// A junction.
    pub fn junction(&mut self, level: LevelId, x: f64, y: f64) -> NodeId {
        self.node(level, x, y, NodeKind::Junction)
    }

    /// A header with `outlets` outlets.
    pub fn header(&mut self, level: LevelId, x: f64, y: f64, name: &str, outlets: u32) -> NodeId {
        self.node(level, x, y, NodeKind::Header(Header { name: name.to_owned(), outlets }))
    }

    fn valves(&self) -> EmitterValves {
        EmitterValves {
            valve_family: self.p.settings.valve_family.clone(),
            presetting: None,
            lockshield_family: self.p.settings.lockshield_family.clone(),
            lockshield_setting: None,
        }
    }

    /// An emitter with any model.
    pub fn emitter(
        &mut self,
        level: LevelId,
        x: f64,
        y: f64,
        name: &str,
        load_w: f64,
        room_c: f64,
        model: EmitterModel,
    ) -> NodeId {
        let kind = NodeKind::Emitter(Emitter { name: name.to_owned(), room_c, load_w, model, valves: self.valves() });
        self.node(level, x, y, kind)
    }

    /// A type-22, 600 mm radiator to be sized.
    pub fn radiator(&mut self, level: LevelId, x: f64, y: f64, name: &str, load_w: f64, room_c: f64) -> NodeId {
        let model = EmitterModel::Radiator(RadiatorSpec {
            type_code: "22".to_owned(),
            height_mm: 600,
            sizing: RadiatorSizing::ToSize,
            exponent_n: None,
        });
        self.emitter(level, x, y, name, load_w, room_c, model)
    }

    /// An existing radiator of a known nominal output (75/65/20 °C).
    #[allow(clippy::too_many_arguments)] // reason: a radiator is described by these
    pub fn existing_radiator(
        &mut self,
        level: LevelId,
        x: f64,
        y: f64,
        name: &str,
        load_w: f64,
        room_c: f64,
        nominal_w: f64,
        length_mm: u32,
    ) -> NodeId {
        let model = EmitterModel::Radiator(RadiatorSpec {
            type_code: "22".to_owned(),
            height_mm: 600,
            sizing: RadiatorSizing::Existing { nominal_output_w: nominal_w, length_mm },
            exponent_n: None,
        });
        self.emitter(level, x, y, name, load_w, room_c, model)
    }

    /// A floor loop (16x2 PE-X, 150 mm spacing) over `area_m2`.
    #[allow(clippy::too_many_arguments)] // reason: a floor loop is described by these
    pub fn floor_loop(
        &mut self,
        level: LevelId,
        x: f64,
        y: f64,
        name: &str,
        load_w: f64,
        room_c: f64,
        area_m2: f64,
        zone: FloorZone,
    ) -> NodeId {
        let model = EmitterModel::FloorLoop(FloorLoopSpec::typical(area_m2, zone));
        let id = self.emitter(level, x, y, name, load_w, room_c, model);
        self.set_valve_family(id, "header-loop-demo");
        id
    }

    /// Use valve family `family` on emitter `id`.
    pub fn set_valve_family(&mut self, id: NodeId, family: &str) {
        let Some(NodeKind::Emitter(mut e)) = self.p.node(id).map(|n| n.kind.clone()) else {
            panic!("{id} is not an emitter")
        };
        e.valves.valve_family = family.to_owned();
        self.p.apply(Edit::SetNodeKind { id, kind: NodeKind::Emitter(e) }).unwrap();
    }

    /// A fan coil–like terminal with a fixed Kv.
    pub fn terminal(
        &mut self,
        level: LevelId,
        x: f64,
        y: f64,
        name: &str,
        load_w: f64,
        room_c: f64,
        nominal_w: f64,
    ) -> NodeId {
        let model = EmitterModel::Terminal(TerminalSpec {
            nominal_output_w: nominal_w,
            nominal_supply_c: 70.0,
            nominal_return_c: 60.0,
            nominal_room_c: 20.0,
            exponent_n: 1.0,
            kv_m3_h: 2.5,
            water_content_l: 1.5,
        });
        self.emitter(level, x, y, name, load_w, room_c, model)
    }

    /// A straight run.
    pub fn run(&mut self, a: NodeId, b: NodeId) -> RunId {
        self.run_via(a, b, &[])
    }

    /// A run with bend points.
    pub fn run_via(&mut self, a: NodeId, b: NodeId, via: &[(f64, f64)]) -> RunId {
        let vertices = via.iter().map(|&(x, y)| PlanPoint::new(x, y)).collect();
        self.p.apply(Edit::AddRun { a, b, vertices }).unwrap().runs[0]
    }
}

/// A typical small circulator curve: (m³/h, kPa).
pub const SMALL_PUMP: [(f64, f64); 3] = [(0.2, 58.0), (1.5, 45.0), (3.0, 15.0)];
