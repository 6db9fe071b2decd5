//! The derived hydraulic network: flat arrays the solver works on.
//!
//! One drawn run of the layout becomes a supply pipe and a return pipe here;
//! each emitter becomes one link (valve + emitter body + lockshield in series)
//! between a supply node and a return node; the heat source and pump become
//! one link; the expansion vessel fixes the pressure of the reference node at
//! the pump suction.
//!
//! Units: mass flow kg/s (conserved exactly in a closed loop even though the
//! density varies around it), pressure Pa, elevation m.

pub mod solver;

use crate::friction::PipeHydraulics;

/// Standard gravity, m/s² (CGPM 1901; ISO 80000-3).
pub const GRAVITY_M_S2: f64 = 9.806_65;

/// A node of the hydraulic network.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct HydNode {
    /// Elevation of the node, m (above any common datum).
    pub elevation_m: f64,
    /// Mass flow leaving the network at this node, kg/s (0 in a closed loop).
    pub demand_kg_s: f64,
}

/// How a link's pressure drop depends on its mass flow.
#[derive(Debug, Clone, PartialEq)]
pub enum LinkLaw {
    /// A pipe: Darcy–Weisbach friction plus local losses at its own
    /// temperature (see [`crate::friction::pipe_dp`]).
    Pipe(PipeHydraulics),
    /// A purely quadratic resistance: Δp = r · m·|m| with r in Pa·s²/kg².
    /// Valves (Kv), emitter bodies and lockshields in series sum their r.
    Quadratic {
        /// Resistance coefficient, Pa·s²/kg².
        r_pa_s2_kg2: f64,
    },
    /// A pump: pressure *rise* Δp = a0 + a1·m + a2·m² (Pa, m in kg/s). The
    /// derivation maps a pump curve and its control mode to these
    /// coefficients (constant Δp: a1 = a2 = 0).
    Pump {
        /// Shut-off pressure rise, Pa.
        a0_pa: f64,
        /// Linear coefficient, Pa·s/kg.
        a1_pa_s_kg: f64,
        /// Quadratic coefficient, Pa·s²/kg².
        a2_pa_s2_kg2: f64,
        /// The pump's maximum curve (a0 Pa, a1 Pa·s/kg, a2 Pa·s²/kg²) when
        /// the law above is a control law: the pump cannot give more than
        /// its curve at full speed, so the rise is the lower of the two at
        /// every flow. `None` for a pump running on its curve.
        max_curve_pa: Option<[f64; 3]>,
        /// Beyond this mass flow, kg/s, each of the two quadratics above is
        /// its tangent there (a pump curve that would turn up again,
        /// [`crate::pump::pump_law_at`]); infinite when not. A straight-line
        /// control law is unchanged by it.
        linear_beyond_kg_s: f64,
    },
}

/// A link of the hydraulic network, oriented `from` → `to` (positive flow).
#[derive(Debug, Clone, PartialEq)]
pub struct HydLink {
    /// Start node index.
    pub from: usize,
    /// End node index.
    pub to: usize,
    /// Density of the water in this link, kg/m³ (for the static head
    /// between its ends: buoyancy in risers).
    pub density_kg_m3: f64,
    /// Pressure-drop law.
    pub law: LinkLaw,
    /// A closed link carries no flow (closed valve).
    pub closed: bool,
}

/// The flat network the solver works on.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct HydraulicNetwork {
    /// Nodes.
    pub nodes: Vec<HydNode>,
    /// Links.
    pub links: Vec<HydLink>,
    /// Node whose pressure is fixed (the expansion vessel at the pump suction).
    pub reference_node: usize,
    /// Pressure held at the reference node, Pa (gauge).
    pub reference_pressure_pa: f64,
}
