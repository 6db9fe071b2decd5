//! The network solver: the Global Gradient Algorithm in pressure / mass-flow
//! form.
//!
//! Source: Todini, E. & Pilati, S. (1988) "A gradient algorithm for the
//! analysis of pipe networks", in Computer Applications in Water Supply,
//! Vol. 1, Research Studies Press, pp. 1–20. Their unknowns are heads and
//! volume flows; here they are pressures (Pa) and mass flows (kg/s), with the
//! elevation term carried per link so that links of different density
//! (supply and return) give buoyancy.
//!
//! This file is longer than the house's ~700 lines on purpose: it is one
//! algorithm (equations, regularisation, convergence test, warm starts and
//! the chord step, non-convergence diagnostics) whose documentation belongs
//! beside the code it explains; the workspace (symbolic factorisation,
//! sparsity pattern), the validation of a network's values against it and
//! the tests live in `solver/`.
//!
//! # Equations
//! Link k from node i to node j, mass flow m_k (positive i → j):
//!
//! ```text
//! F_k(m_k) = p_i − p_j + c_k,        c_k = ρ_k · g · (z_i − z_j)
//! ```
//!
//! with F_k the pressure drop of the link in its own direction ([`link_dp`]:
//! a pipe, a quadratic resistance, or a pump whose drop is minus its rise).
//! Node i: Σ m_out − Σ m_in = demand_i. The reference node's pressure is
//! fixed; it absorbs the net demand.
//!
//! # One Newton iteration
//! With D_k = F'_k(m_k) (floored, see below) and the link flow that would
//! pass at equal end pressures q_k = m_k + (c_k − F_k)/D_k, the new flows are
//! m'_k = q_k + (p_i − p_j)/D_k. Putting them into continuity gives
//!
//! ```text
//! A · diag(1/D) · Aᵀ · x = d − A · q        (x = p − p_ref)
//! ```
//!
//! a graph Laplacian weighted by the conductances 1/D_k, with the reference
//! row and column removed: symmetric positive definite for a connected
//! network. It is factored by `faer`'s sparse Cholesky (AMD ordering, symbolic
//! analysis once per topology in [`SolverWorkspace`], numeric LLᵀ per
//! iteration). Because the flows are updated from the solved pressures, every
//! node balances to the accuracy of the linear solve after *every* iteration;
//! what is iterated is the link law.
//!
//! # Regularisation (why it does not bias the answer)
//! - The derivative used in the matrix is max(F'_k, floor), with
//!   floor = [`SolveSettings::min_slope_ratio`] · S, S = max|F| / max|m|
//!   over the open links at the current iterate (the network's own ratio of
//!   pressure scale to flow scale, Pa·s/kg), and never below
//!   [`MIN_SLOPE_PA_S_KG`]. Only the Jacobian changes, never the residual
//!   F_k − (p_i − p_j + c_k): a converged answer satisfies the exact link
//!   laws. The floor matters for pumps held at constant Δp (F' = 0), pump
//!   curves turning upwards, and quadratic links in their linear zero-flow
//!   range; a link whose true slope is below the floor converges linearly
//!   instead of quadratically, with a contraction factor ≈ floor / (slope of
//!   the rest of the network it sees) ≈ 1e-6. Why scale-aware: the floor
//!   caps the largest conductance 1/D, and the rounding of the linear solve
//!   leaves each node out of balance by ≈ ε·Δp_max/floor ≈ 1e-10·m_max
//!   (ε = 2.2e-16); an absolute floor would either spoil the balance of a
//!   small loop or slow down the mains of a large network.
//! - A quadratic resistance r·m|m| is replaced below
//!   [`QUADRATIC_LINEAR_BELOW_KG_S`] by the line r·m₀·m (continuous at m₀).
//!   This is a change of the law (common practice in network-hydraulics
//!   solvers, recalled from memory, not verified against a document),
//!   bounded by r·m₀²: 1e-3 Pa for an extreme r = 1e9 Pa·s²/kg², well below
//!   the pressure tolerance.
//! - A closed link carries no flow and puts nothing in the matrix. A part of
//!   the network cut off from the reference node by closed links would make
//!   the matrix singular, so one node of each such part gets its diagonal
//!   doubled (1 kg/(s·Pa) when it has no open link). Summing the rows of the
//!   part shows that this anchors that node to the reference pressure
//!   *exactly* (the part's demand must be zero, checked) without disturbing
//!   continuity inside it — unlike a tiny conductance in the closed link,
//!   which would leak a little flow. The parts are listed in
//!   [`SolveReport::isolated_nodes`]; their pressure level is not defined by
//!   the physics.
//!
//! # Warm starts: the chord step
//! A solve that starts from given flows, in a workspace whose last numeric
//! factorisation is still at hand (same open links, no anchored part), makes
//! its first step with that factor and the conductances it was built from
//! (a chord, or modified-Newton, step: Ortega & Rheinboldt, *Iterative
//! Solution of Nonlinear Equations in Several Variables*, 1970, §7.1). The
//! flows are updated with the same conductances as the matrix, so every node
//! still balances; only the link laws are iterated, with a slightly older
//! slope. A chord step larger than [`CHORD_MAX_FLOW_CHANGE`] is discarded.
//! The convergence test below is the same for a chord step as for a Newton
//! step: it reads the link laws at the new flows, never the Jacobian. After
//! a drag the warm start is within about 1e-9 of the answer, the chord step
//! converges, and the numeric factorisation — a third of a Newton
//! iteration — is skipped.
//!
//! # Convergence
//! Both, after the last update: relative flow change Σ|Δm|/Σ|m| ≤
//! [`SolveSettings::flow_tolerance`], and for every open link
//! |F_k(m_k) − (p_i − p_j + c_k)| ≤ [`SolveSettings::pressure_tolerance_pa`].
//! When the relative change grows from one iteration to the next (from the
//! third on), the step is scaled by [`SolveSettings::damping_factor`]; scaling
//! both the flows and the pressures keeps continuity, since the previous
//! iterate already balanced.

mod validate;
mod workspace;

pub use workspace::SolverWorkspace;

use std::time::Instant;

use faer::dyn_stack::MemStack;
use faer::sparse::SparseColMatRef;
use faer::sparse::linalg::cholesky::LltRef;
use faer::{Conj, MatMut, Par, Side};
use thiserror::Error;

use self::validate::{validate_changed, validate_values};
use self::workspace::NONE;
use super::{GRAVITY_M_S2, HydraulicNetwork, LinkLaw};
use crate::error::{PhysicsError, PhysicsResult, check};
use crate::friction::PipeKernel;

/// Below this |mass flow|, kg/s, a [`LinkLaw::Quadratic`] resistance follows
/// the straight line r·m₀·m instead of r·m|m| (m₀ = this value), so its
/// derivative does not vanish at zero flow.
///
/// 1e-6 kg/s is 3.6 g/h: no heating circuit is designed near it, and the
/// change of the law is at most r·m₀² (see the module docs).
pub const QUADRATIC_LINEAR_BELOW_KG_S: f64 = 1e-6;

/// Largest relative flow change |m − m₀|/|m₀| over which a link law's last
/// exact evaluation at m₀ is carried along its slope instead of evaluated
/// again (a NaN m₀, the state of a new or changed law, never qualifies):
/// the default of [`SolveSettings::reuse_relative_flow_change`].
pub const LINEAR_REUSE_MAX_RELATIVE_FLOW_CHANGE: f64 = 1e-7;

/// The same for a drag preview's solves: 1e-4, so a drop is off by at most
/// about 1e-8 of itself — far inside the preview's loose tolerance — and a
/// move that shifts the whole building's flows by a few parts in ten
/// thousand evaluates only the links whose flows moved more.
pub const PREVIEW_REUSE_RELATIVE_FLOW_CHANGE: f64 = 1e-4;

/// Largest relative flow change Σ|Δm|/Σ|m| of a chord step (the first step
/// of a warm start, solved with the factor kept from the last solve) that is
/// kept; a larger one is discarded and the iteration goes on with a fresh
/// factor, as if it had not been tried.
///
/// The chord step uses the conductances of the previous answer instead of
/// the current ones. Its error against the Newton step is of the order of
/// (relative change of the conductances) × (step), so at a kept step of
/// 1e-2 it is still a good step; near convergence (steps of 1e-6 and less,
/// what a drag produces) the two agree to far below the flow tolerance.
pub const CHORD_MAX_FLOW_CHANGE: f64 = 1e-2;

/// Below this total |flow|, kg/s, the flow-change criterion becomes absolute
/// (a network at rest has Σ|m| = 0).
pub const FLOW_SCALE_FLOOR_KG_S: f64 = 1e-9;

/// Absolute lower bound of the slope floor, Pa·s/kg (a network at rest has
/// a slope scale of zero).
pub const MIN_SLOPE_PA_S_KG: f64 = 1e-9;

/// How many suspect links a non-convergence diagnostic names at most.
pub const MAX_SUSPECT_LINKS: usize = 10;

/// Numeric parameters of the solver. Every field: unit, default, reason.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SolveSettings {
    /// Convergence limit on the relative flow change of the last iteration,
    /// Σ|Δm_k| / Σ|m_k| (dimensionless). Default 1e-6: one part per million
    /// of the flows, far below what a balancing valve or a flow meter
    /// resolves; Newton reaches it one or two iterations after 1e-3.
    pub flow_tolerance: f64,
    /// Convergence limit on the pressure balance of every open link,
    /// |F_k(m_k) − (p_i − p_j + c_k)|, Pa. Default 0.01 Pa: a millionth of a
    /// typical 10 kPa circuit, and still well above the rounding of the
    /// pressures (~1e-11 relative).
    pub pressure_tolerance_pa: f64,
    /// Most Newton iterations (linear solves) before giving up with a
    /// diagnostic. Default 100: the Global Gradient Algorithm usually needs
    /// 5–15 from a cold start and 1–2 from a warm start; 100 leaves room for
    /// damped steps.
    pub max_iterations: usize,
    /// Floor of the link derivative dF/dm used in the matrix, relative to
    /// the network's slope scale S = max|F| / max|m| (dimensionless; see the
    /// module docs). Default 1e-6: a pump at constant Δp (dF/dm = 0) gets a
    /// conductance 1e6 times the network's typical one, which slows nothing
    /// measurably and keeps the rounding of the mass balance near 1e-10 of
    /// the largest flow. Only the Jacobian changes, not the answer.
    pub min_slope_ratio: f64,
    /// Starting velocity of a pipe without a given start flow, m/s.
    /// Default 0.3: mid-range for heating pipes (common practice 0.2–1 m/s).
    pub initial_velocity_m_s: f64,
    /// Starting pressure drop of a quadratic link without a given start
    /// flow, Pa: it starts at m = sqrt(Δp₀/r), positive along the link, so a
    /// low-resistance link (a main) starts with a large flow and a throttled
    /// emitter with a small one. Default 3000 Pa: mid-range of an emitter
    /// circuit's pressure drop (common practice 1–10 kPa).
    pub initial_quadratic_dp_pa: f64,
    /// Starting mass flow of a pump link, or of a quadratic link with r = 0,
    /// without a given start flow, kg/s, positive along the link. Default
    /// 0.1 kg/s (360 kg/h, a small heating loop; common practice). A pump
    /// starts far from its answer in a large network; its conductance is
    /// bounded by the slope floor ([`SolveSettings::min_slope_ratio`]), so
    /// this costs little.
    pub initial_flow_kg_s: f64,
    /// Step scale (0 < f ≤ 1) applied when the relative flow change grows
    /// from one iteration to the next, from the third iteration on. Default
    /// 0.5 (halving, the usual line-search choice); 1 disables damping.
    pub damping_factor: f64,
    /// Largest relative flow change |m − m₀|/|m₀| over which a link law's
    /// last exact evaluation at m₀ is carried along its slope instead of
    /// evaluated again. The drop it gives is off by about |Δp|·(Δm/m₀)²:
    /// default [`LINEAR_REUSE_MAX_RELATIVE_FLOW_CHANGE`] (1e-7, 1e-14 of
    /// the drop: a full solve's answer does not depend on where it
    /// started); the drag preview allows [`PREVIEW_REUSE_RELATIVE_FLOW_CHANGE`].
    pub reuse_relative_flow_change: f64,
}

impl Default for SolveSettings {
    fn default() -> Self {
        Self {
            flow_tolerance: 1e-6,
            pressure_tolerance_pa: 0.01,
            max_iterations: 100,
            min_slope_ratio: 1e-6,
            initial_velocity_m_s: 0.3,
            initial_quadratic_dp_pa: 3000.0,
            initial_flow_kg_s: 0.1,
            damping_factor: 0.5,
            reuse_relative_flow_change: LINEAR_REUSE_MAX_RELATIVE_FLOW_CHANGE,
        }
    }
}

impl SolveSettings {
    /// Checks every field.
    ///
    /// # Errors
    /// [`PhysicsError`] naming the first invalid field.
    pub fn validate(&self) -> PhysicsResult<()> {
        check::positive("flow tolerance", self.flow_tolerance, "")?;
        check::positive("pressure tolerance", self.pressure_tolerance_pa, "Pa")?;
        if self.max_iterations == 0 {
            return Err(PhysicsError::Inconsistent("maximum iterations must be at least 1".into()));
        }
        check::in_range("minimum slope ratio", self.min_slope_ratio, "", 1e-15, 1.0)?;
        check::positive("initial pipe velocity", self.initial_velocity_m_s, "m/s")?;
        check::positive("initial quadratic-link pressure drop", self.initial_quadratic_dp_pa, "Pa")?;
        check::positive("initial link flow", self.initial_flow_kg_s, "kg/s")?;
        check::positive("damping factor", self.damping_factor, "")?;
        check::in_range("damping factor", self.damping_factor, "", f64::MIN_POSITIVE, 1.0)?;
        check::in_range("linear reuse of a link law", self.reuse_relative_flow_change, "", 0.0, 1e-3)?;
        Ok(())
    }
}

/// An invalid network or input: nothing was solved.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum SolveError {
    /// The network has no node.
    #[error("the network has no nodes")]
    EmptyNetwork,
    /// The reference node index does not exist.
    #[error("reference node {reference_node} does not exist (the network has {node_count} nodes)")]
    ReferenceNodeOutOfRange {
        /// Given reference node.
        reference_node: usize,
        /// Number of nodes.
        node_count: usize,
    },
    /// A link ends at a node that does not exist.
    #[error("link {link} ends at node {node}, which does not exist (the network has {node_count} nodes)")]
    LinkEndpointOutOfRange {
        /// Link index.
        link: usize,
        /// The missing node.
        node: usize,
        /// Number of nodes.
        node_count: usize,
    },
    /// A link joins a node to itself.
    #[error("link {link} starts and ends at node {node}; a link must join two different nodes")]
    SelfLoop {
        /// Link index.
        link: usize,
        /// Its node.
        node: usize,
    },
    /// A node no link path joins to the reference node.
    #[error("node {node} is not connected to the reference node {reference_node} by any link; connect it or remove it")]
    NodeNotConnected {
        /// First unconnected node found.
        node: usize,
        /// Reference node.
        reference_node: usize,
    },
    /// A node with a non-finite elevation or demand.
    #[error("node {node}: {source}")]
    InvalidNode {
        /// Node index.
        node: usize,
        /// What is wrong.
        source: PhysicsError,
    },
    /// A link with a non-physical parameter.
    #[error("link {link}: {source}")]
    InvalidLink {
        /// Link index.
        link: usize,
        /// What is wrong.
        source: PhysicsError,
    },
    /// The reference pressure is not finite.
    #[error("reference pressure: {0}")]
    InvalidReferencePressure(PhysicsError),
    /// A settings field out of range.
    #[error("solver settings: {0}")]
    InvalidSettings(PhysicsError),
    /// The start flows do not match the links.
    #[error("initial flows: {expected} values expected (one per link), {got} given")]
    InitialFlowCount {
        /// Number of links.
        expected: usize,
        /// Number of values given.
        got: usize,
    },
    /// A start flow that is NaN or infinite.
    #[error("initial flow of link {link}: {source}")]
    InvalidInitialFlow {
        /// Link index.
        link: usize,
        /// What is wrong.
        source: PhysicsError,
    },
    /// Closed links cut off a part of the network that has a net demand:
    /// water would have to leave a sealed part.
    #[error(
        "closed links cut node {node} off from the reference node, and that part has a net demand of {demand_kg_s} kg/s; open a link or remove the demand"
    )]
    DemandInIsolatedPart {
        /// A node of the cut-off part.
        node: usize,
        /// Net demand of the part, kg/s.
        demand_kg_s: f64,
    },
    /// The sparse library failed outside the Newton loop (ordering or
    /// memory).
    #[error("sparse factorisation failed: {0}")]
    Factorisation(String),
}

/// Time spent per stage of one solve, µs.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct SolveTimings {
    /// Building the workspace (ordering + symbolic factor), 0 when reused.
    pub symbolic_us: f64,
    /// Evaluating link laws and filling the matrix and right-hand side.
    pub assemble_us: f64,
    /// Numeric Cholesky factorisations.
    pub factor_us: f64,
    /// Triangular solves and flow updates.
    pub solve_us: f64,
    /// The whole call.
    pub total_us: f64,
}

/// Why a solve stopped without converging.
#[derive(Debug, Clone, PartialEq)]
pub enum NonConvergenceReason {
    /// `max_iterations` reached.
    IterationLimit {
        /// The limit.
        max_iterations: usize,
    },
    /// A NaN or infinity appeared in the links named in
    /// [`NonConvergence::suspect_links`] (flow, pressure drop, derivative or
    /// end pressure).
    NonFinite,
    /// The numeric factorisation found a non-positive pivot (should not
    /// happen with positive conductances; reported rather than hidden).
    Factorisation {
        /// The library's message.
        message: String,
    },
}

/// One link a non-convergence diagnostic points at.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SuspectLink {
    /// Link index.
    pub link: usize,
    /// How often its flow step changed sign (oscillation), counting only
    /// steps larger than the flow tolerance.
    pub sign_flips: u32,
    /// Its last step relative to its flow, |Δm|/max(|m|, 1e-9 kg/s).
    pub last_relative_change: f64,
}

/// What the solver knows when it stops without converging.
#[derive(Debug, Clone, PartialEq)]
pub struct NonConvergence {
    /// Why it stopped.
    pub reason: NonConvergenceReason,
    /// Links that oscillate (most sign flips first) or changed most in the
    /// last iteration; for [`NonConvergenceReason::NonFinite`], the links
    /// with a non-finite value. At most [`MAX_SUSPECT_LINKS`].
    pub suspect_links: Vec<SuspectLink>,
    /// Relative flow change of the last iteration.
    pub last_flow_change: f64,
    /// Largest link pressure-balance residual after the last iteration, Pa.
    pub last_residual_pa: f64,
}

/// Result of [`solve`]. Non-convergence is reported here, not as an error.
#[derive(Debug, Clone, PartialEq)]
pub struct SolveReport {
    /// Mass flow per link, kg/s, positive from `from` to `to` (0 for closed
    /// links).
    pub flows_kg_s: Vec<f64>,
    /// Pressure per node, Pa (same gauge as the reference pressure).
    pub pressures_pa: Vec<f64>,
    /// Iterations done (= linear solves, a discarded chord step not
    /// counted).
    pub iterations: usize,
    /// The first iteration was a chord step with the previous solve's factor
    /// and it was kept (see the module docs, "Warm starts").
    pub chord_step_kept: bool,
    /// Both convergence criteria met.
    pub converged: bool,
    /// Relative flow change Σ|Δm|/Σ|m| of each iteration.
    pub flow_change_history: Vec<f64>,
    /// Largest |F_k − (p_i − p_j + c_k)| over open links after each
    /// iteration, Pa.
    pub residual_history_pa: Vec<f64>,
    /// Largest |Σ out − Σ in − demand| over the nodes other than the
    /// reference node, kg/s.
    pub max_mass_imbalance_kg_s: f64,
    /// Nodes cut off from the reference node by closed links (pressure held
    /// at the reference pressure at one node of each part; see module docs).
    pub isolated_nodes: Vec<usize>,
    /// The workspace was (re)built for this solve.
    pub workspace_rebuilt: bool,
    /// Stage timings.
    pub timings: SolveTimings,
    /// Set when `converged` is false.
    pub diagnostic: Option<NonConvergence>,
}

/// Pressure drop of a link law along its direction, Pa, and its derivative
/// d(Δp)/dm, Pa·s/kg, at mass flow `mass_flow_kg_s` (either sign).
///
/// Pipe: [`crate::friction::pipe_dp`]. Quadratic: r·m|m| (linear below
/// [`QUADRATIC_LINEAR_BELOW_KG_S`]). Pump: −(a0 + a1·m + a2·m²), negative
/// for a pressure rise; its derivative may be zero or negative (the solver
/// floors it). The static term ρ·g·Δz is not included.
///
/// # Errors
/// [`PhysicsError::NotFinite`] when the flow is NaN or infinite.
pub fn link_dp(law: &LinkLaw, mass_flow_kg_s: f64) -> PhysicsResult<(f64, f64)> {
    check::finite("link mass flow", mass_flow_kg_s, "kg/s")?;
    Ok(eval_law(law, mass_flow_kg_s))
}

/// Static pressure term c = ρ·g·(z_from − z_to) of a link, Pa: positive when
/// the link runs downhill (the water column pushes along it).
///
/// # Errors
/// [`PhysicsError`] for a non-finite or non-positive density or a non-finite
/// elevation.
pub fn static_term_pa(density_kg_m3: f64, from_elevation_m: f64, to_elevation_m: f64) -> PhysicsResult<f64> {
    check::positive("link water density", density_kg_m3, "kg/m³")?;
    check::finite("node elevation", from_elevation_m, "m")?;
    check::finite("node elevation", to_elevation_m, "m")?;
    Ok(density_kg_m3 * GRAVITY_M_S2 * (from_elevation_m - to_elevation_m))
}

/// Pressure rise of a pump law and its derivative at mass flow `m`: the
/// quadratic `law`, or the lower of it and `max_curve` at this flow (a
/// controlled pump cannot exceed its curve at full speed). Over the pump's
/// range both laws are single-valued in flow, so their lower one is one
/// continuous law with a kink where they cross; the slope taken is the one
/// of the law in force. Each quadratic is evaluated by
/// [`crate::pump::pump_law_at`] (a curve flat near shut-off is held at
/// its peak, one that would turn up again continues as its tangent beyond
/// `linear_beyond`), so a pump law never rises with flow.
#[must_use]
pub fn pump_rise_and_slope(law: [f64; 3], max_curve: Option<[f64; 3]>, linear_beyond: f64, m: f64) -> (f64, f64) {
    let eval = |c: [f64; 3]| crate::pump::pump_law_at(c, linear_beyond, m);
    let controlled = eval(law);
    match max_curve.map(eval) {
        Some(curve) if curve.0 < controlled.0 => curve,
        _ => controlled,
    }
}

/// The law without checks.
fn eval_law(law: &LinkLaw, m: f64) -> (f64, f64) {
    LinkKernel::new(law).eval(m)
}

/// A link law with its flow-independent constants worked out (one per link
/// in the workspace, rebuilt when the law changes): what the hot loop
/// evaluates.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) enum LinkKernel {
    /// A pipe.
    Pipe(PipeKernel),
    /// r·m|m| (linear below [`QUADRATIC_LINEAR_BELOW_KG_S`]).
    Quadratic(f64),
    /// −(a0 + a1·m + a2·m²), bounded by the maximum curve when given.
    Pump([f64; 3], Option<[f64; 3]>, f64),
}

impl LinkKernel {
    fn new(law: &LinkLaw) -> Self {
        match *law {
            LinkLaw::Pipe(ref pipe) => Self::Pipe(PipeKernel::new(pipe)),
            LinkLaw::Quadratic { r_pa_s2_kg2 } => Self::Quadratic(r_pa_s2_kg2),
            LinkLaw::Pump { a0_pa, a1_pa_s_kg, a2_pa_s2_kg2, max_curve_pa, linear_beyond_kg_s } => {
                Self::Pump([a0_pa, a1_pa_s_kg, a2_pa_s2_kg2], max_curve_pa, linear_beyond_kg_s)
            }
        }
    }

    /// Pressure drop along the link and its derivative at mass flow `m`.
    fn eval(&self, m: f64) -> (f64, f64) {
        match *self {
            Self::Pipe(ref pipe) => pipe.dp(m),
            Self::Quadratic(r) => {
                let a = m.abs();
                if a >= QUADRATIC_LINEAR_BELOW_KG_S {
                    (r * m * a, 2.0 * r * a)
                } else {
                    (r * QUADRATIC_LINEAR_BELOW_KG_S * m, r * QUADRATIC_LINEAR_BELOW_KG_S)
                }
            }
            Self::Pump(law, max_curve, linear_beyond) => {
                let (rise, slope) = pump_rise_and_slope(law, max_curve, linear_beyond, m);
                (-rise, -slope)
            }
        }
    }
}

/// Solves the network for link mass flows and node pressures.
///
/// `workspace` is reused when it matches `net`'s topology and rebuilt
/// otherwise. `initial_flows_kg_s` (one per link) warm-starts the iteration —
/// pass the previous answer after a small edit; without it pipes start at
/// [`SolveSettings::initial_velocity_m_s`], quadratic links at
/// [`SolveSettings::initial_quadratic_dp_pa`] and pumps at
/// [`SolveSettings::initial_flow_kg_s`]. Closed links always start (and stay)
/// at zero.
///
/// Non-convergence (iteration limit, NaN/inf, failed factorisation) is a
/// report with `converged == false` and a [`NonConvergence`] diagnostic.
/// Allocation happens before and after the Newton loop, not inside it.
///
/// # Errors
/// [`SolveError`] for an invalid network, settings or start flows.
pub fn solve(
    net: &HydraulicNetwork,
    settings: &SolveSettings,
    workspace: &mut SolverWorkspace,
    initial_flows_kg_s: Option<&[f64]>,
) -> Result<SolveReport, SolveError> {
    solve_with(net, settings, workspace, initial_flows_kg_s, None)
}

/// [`solve`] for a caller that knows what changed since the last solve on
/// `workspace`: only the links in `changed` (their law, open flag or
/// density); no node, no other link. Only those links are validated
/// again — a full pass reads every link law, a tenth of a drag preview's
/// solve on a large building. When the workspace has no full validation
/// to build on, or a named link's ends moved, this is [`solve`].
///
/// # Errors
/// As [`solve`].
pub fn solve_changed(
    net: &HydraulicNetwork,
    settings: &SolveSettings,
    workspace: &mut SolverWorkspace,
    initial_flows_kg_s: Option<&[f64]>,
    changed: &[usize],
) -> Result<SolveReport, SolveError> {
    solve_with(net, settings, workspace, initial_flows_kg_s, Some(changed))
}

fn solve_with(
    net: &HydraulicNetwork,
    settings: &SolveSettings,
    workspace: &mut SolverWorkspace,
    initial_flows_kg_s: Option<&[f64]>,
    changed: Option<&[usize]>,
) -> Result<SolveReport, SolveError> {
    let t_total = Instant::now();
    // Set again by this solve's last evaluation (an early error leaves it
    // unset).
    let was_evaluated = std::mem::replace(&mut workspace.evaluated, false);
    settings.validate().map_err(SolveError::InvalidSettings)?;
    let mut timings = SolveTimings::default();
    // The cheap part of the topology check here; the endpoints are compared
    // in the pass of `validate_values`.
    let mut workspace_rebuilt = !workspace.matches_counts(net);
    let partial = changed.filter(|_| workspace.validated && !workspace_rebuilt);
    let valid = |ws: &mut SolverWorkspace| match partial {
        Some(links) => validate_changed(net, ws, links),
        None => validate_values(net, ws),
    };
    if workspace_rebuilt || !valid(workspace)? {
        let t = Instant::now();
        *workspace = SolverWorkspace::new(net)?;
        timings.symbolic_us = micros(t);
        workspace_rebuilt = true;
        if !validate_values(net, workspace)? {
            return Err(SolveError::Factorisation("the rebuilt workspace does not match the network".into()));
        }
    }
    if let Some(init) = initial_flows_kg_s {
        if init.len() != net.links.len() {
            return Err(SolveError::InitialFlowCount { expected: net.links.len(), got: init.len() });
        }
        for (link, &m) in init.iter().enumerate() {
            check::finite("initial mass flow", m, "kg/s")
                .map_err(|source| SolveError::InvalidInitialFlow { link, source })?;
        }
    }

    let ws = workspace;
    // Only the named links need evaluating first when the last evaluation
    // was at these very flows and nothing else changed.
    let first_only = partial.filter(|_| {
        was_evaluated
            && !workspace_rebuilt
            && initial_flows_kg_s.is_some_and(|init| {
                init.iter().zip(&ws.flow_kg_s).zip(&ws.open).all(|((a, b), &open)| !open || a.to_bits() == b.to_bits())
            })
    });
    let isolated_nodes = prepare(ws, net, settings, initial_flows_kg_s)?;
    let mut state = LoopState::new(settings.max_iterations);
    let chord = initial_flows_kg_s.is_some() && ws.factor_ready && ws.anchors.is_empty() && ws.factored_open == ws.open;
    let outcome = newton_loop(ws, net, settings, &mut state, &mut timings, chord, first_only);

    let max_mass_imbalance_kg_s = mass_imbalance(ws, net);
    let converged = matches!(outcome, Outcome::Converged);
    let diagnostic = match outcome {
        Outcome::Converged => None,
        Outcome::IterationLimit => Some(NonConvergence {
            reason: NonConvergenceReason::IterationLimit { max_iterations: settings.max_iterations },
            suspect_links: suspects(ws, settings),
            last_flow_change: state.last_flow_change,
            last_residual_pa: state.last_residual_pa,
        }),
        Outcome::NonFinite(suspect_links) => Some(NonConvergence {
            reason: NonConvergenceReason::NonFinite,
            suspect_links,
            last_flow_change: state.last_flow_change,
            last_residual_pa: state.last_residual_pa,
        }),
        Outcome::Factorisation(message) => Some(NonConvergence {
            reason: NonConvergenceReason::Factorisation { message },
            suspect_links: suspects(ws, settings),
            last_flow_change: state.last_flow_change,
            last_residual_pa: state.last_residual_pa,
        }),
    };
    let flows_kg_s = ws.flow_kg_s.iter().zip(&ws.open).map(|(&m, &open)| if open { m } else { 0.0 }).collect();
    let pressures_pa = ws.rel_pressure_pa.iter().map(|&x| net.reference_pressure_pa + x).collect();
    timings.total_us = micros(t_total);
    Ok(SolveReport {
        flows_kg_s,
        pressures_pa,
        iterations: state.iterations,
        chord_step_kept: state.chord_step_kept,
        converged,
        flow_change_history: state.flow_change_history,
        residual_history_pa: state.residual_history_pa,
        max_mass_imbalance_kg_s,
        isolated_nodes,
        workspace_rebuilt,
        timings,
        diagnostic,
    })
}

fn micros(t: Instant) -> f64 {
    t.elapsed().as_secs_f64() * 1e6
}

/// Per-solve setup: start flows, anchors of the
/// parts cut off by closed links. Returns the isolated nodes (sorted).
fn prepare(
    ws: &mut SolverWorkspace,
    net: &HydraulicNetwork,
    settings: &SolveSettings,
    initial_flows_kg_s: Option<&[f64]>,
) -> Result<Vec<usize>, SolveError> {
    // Open flags and static terms: set by `validate_values`.
    if let Some(init) = initial_flows_kg_s {
        // From the flat arrays (the links themselves are not read again).
        for ((m, &start), &open) in ws.flow_kg_s.iter_mut().zip(init).zip(&ws.open) {
            *m = if open { start } else { 0.0 };
        }
    } else {
        for (k, l) in net.links.iter().enumerate() {
            let start = match l.law {
                LinkLaw::Pipe(ref p) => p.density_kg_m3 * settings.initial_velocity_m_s * p.flow_area_m2(),
                LinkLaw::Quadratic { r_pa_s2_kg2 } if r_pa_s2_kg2 > 0.0 => {
                    (settings.initial_quadratic_dp_pa / r_pa_s2_kg2).sqrt()
                }
                LinkLaw::Quadratic { .. } | LinkLaw::Pump { .. } => settings.initial_flow_kg_s,
            };
            ws.flow_kg_s[k] = if l.closed { 0.0 } else { start };
        }
    }
    ws.step_kg_s.iter_mut().for_each(|v| *v = 0.0);
    ws.last_significant_step_kg_s.iter_mut().for_each(|v| *v = 0.0);
    ws.sign_flips.iter_mut().for_each(|v| *v = 0);
    ws.rel_pressure_pa.iter_mut().for_each(|v| *v = 0.0);

    // Parts cut off by closed links: one anchor each. When the open flags
    // are those of the last solve and it had no such part, there is none.
    if !ws.last_had_isolated && ws.last_open == ws.open {
        ws.anchors.clear();
        return Ok(Vec::new());
    }
    ws.last_open.clone_from(&ws.open);
    ws.last_had_isolated = true;
    ws.anchors.clear();
    let mut isolated = Vec::new();
    let open = std::mem::take(&mut ws.open);
    let usable = |k: usize| open[k];
    let mut result = Ok(());
    if ws.first_unreachable_node(usable).is_some() {
        for start in 0..ws.node_count {
            if ws.visited[start] {
                continue;
            }
            ws.flood_from(start, &usable);
            let demand_kg_s: f64 = ws.queue.iter().map(|&v| net.nodes[v].demand_kg_s).sum();
            let scale: f64 = ws.queue.iter().map(|&v| net.nodes[v].demand_kg_s.abs()).sum();
            if demand_kg_s.abs() > 1e-12 * scale.max(1.0) {
                result = Err(SolveError::DemandInIsolatedPart { node: start, demand_kg_s });
                break;
            }
            ws.anchors.push(start);
            isolated.extend_from_slice(&ws.queue);
        }
    }
    ws.open = open;
    result?;
    ws.last_had_isolated = !isolated.is_empty();
    isolated.sort_unstable();
    Ok(isolated)
}

/// Counters and histories of one solve.
struct LoopState {
    iterations: usize,
    chord_step_kept: bool,
    flow_change_history: Vec<f64>,
    residual_history_pa: Vec<f64>,
    last_flow_change: f64,
    last_residual_pa: f64,
}

impl LoopState {
    fn new(max_iterations: usize) -> Self {
        Self {
            iterations: 0,
            chord_step_kept: false,
            flow_change_history: Vec::with_capacity(max_iterations),
            residual_history_pa: Vec::with_capacity(max_iterations),
            last_flow_change: f64::INFINITY,
            last_residual_pa: f64::INFINITY,
        }
    }
}

enum Outcome {
    Converged,
    IterationLimit,
    NonFinite(Vec<SuspectLink>),
    Factorisation(String),
}

/// Evaluates every open link law at the current flows into `drop_pa` and
/// `slope_pa_s_kg` (floored, see the module docs) and returns the largest
/// pressure-balance residual, Pa, or the links with non-finite values.
fn evaluate_links(
    ws: &mut SolverWorkspace,
    net: &HydraulicNetwork,
    settings: &SolveSettings,
) -> Result<f64, Vec<SuspectLink>> {
    let mut max_residual_pa = 0.0f64;
    let mut max_drop_pa = 0.0f64;
    let mut max_flow_kg_s = 0.0f64;
    let mut bad = false;
    for k in 0..net.links.len() {
        if !ws.open[k] {
            ws.drop_pa[k] = 0.0;
            ws.slope_pa_s_kg[k] = 1.0;
            continue;
        }
        let m = ws.flow_kg_s[k];
        let (drop_pa, slope) = eval_kept(ws, settings, k, m);
        ws.drop_pa[k] = drop_pa;
        ws.slope_pa_s_kg[k] = slope;
        let (i, j) = ws.endpoints[k];
        let residual = drop_pa - (ws.rel_pressure_pa[i] - ws.rel_pressure_pa[j] + ws.static_pa[k]);
        if residual.is_finite() && slope.is_finite() && m.is_finite() {
            max_residual_pa = max_residual_pa.max(residual.abs());
            max_drop_pa = max_drop_pa.max(drop_pa.abs());
            max_flow_kg_s = max_flow_kg_s.max(m.abs());
        } else {
            bad = true;
        }
    }
    if bad {
        ws.evaluated = false;
        return Err(non_finite_links(ws, net));
    }
    let scale_pa_s_kg = max_drop_pa / max_flow_kg_s.max(FLOW_SCALE_FLOOR_KG_S);
    let floor = (settings.min_slope_ratio * scale_pa_s_kg).max(MIN_SLOPE_PA_S_KG);
    for (slope, &open) in ws.slope_pa_s_kg.iter_mut().zip(&ws.open) {
        if open {
            *slope = slope.max(floor);
        }
    }
    ws.slope_floor = floor;
    ws.evaluated = true;
    Ok(max_residual_pa)
}

/// Link `k`'s law at flow `m`: its drop and (unfloored) slope.
fn eval_kept(ws: &mut SolverWorkspace, settings: &SolveSettings, k: usize, m: f64) -> (f64, f64) {
    // Same flow as the last evaluation of this (unchanged) law: reuse it
    // (a warm start from the last answer re-evaluates nothing here).
    let m0 = ws.eval_flow_kg_s[k];
    if m0.to_bits() == m.to_bits() {
        (ws.eval_drop_pa[k], ws.eval_slope_pa_s_kg[k])
    } else if (m - m0).abs() <= settings.reuse_relative_flow_change * m0.abs() {
        // A flow within 1e-7 of the last evaluation (the rest of the
        // network during a warm re-solve): first-order step from it,
        // which stays the anchor. The step's error, about
        // ½·F''·Δm² ≈ |F|·(Δm/m)², is below 1e-14 of the drop.
        (ws.eval_drop_pa[k] + ws.eval_slope_pa_s_kg[k] * (m - m0), ws.eval_slope_pa_s_kg[k])
    } else {
        let (d, s) = ws.kernels[k].eval(m);
        ws.eval_flow_kg_s[k] = m;
        ws.eval_drop_pa[k] = d;
        ws.eval_slope_pa_s_kg[k] = s;
        (d, s)
    }
}

/// [`evaluate_links`] for the links in `links` alone, the others' values
/// being those of the last evaluation at the same flows (`ws.evaluated`);
/// their slopes take that evaluation's floor. The first evaluation of a
/// solve that starts where the last one ended and knows what changed.
fn evaluate_named(
    ws: &mut SolverWorkspace,
    net: &HydraulicNetwork,
    settings: &SolveSettings,
    links: &[usize],
) -> Result<(), Vec<SuspectLink>> {
    for &k in links {
        if !ws.open[k] {
            ws.drop_pa[k] = 0.0;
            ws.slope_pa_s_kg[k] = 1.0;
            continue;
        }
        let m = ws.flow_kg_s[k];
        let (drop_pa, slope) = eval_kept(ws, settings, k, m);
        if !(drop_pa.is_finite() && slope.is_finite() && m.is_finite()) {
            ws.evaluated = false;
            return Err(non_finite_links(ws, net));
        }
        ws.drop_pa[k] = drop_pa;
        ws.slope_pa_s_kg[k] = slope.max(ws.slope_floor);
    }
    Ok(())
}

/// Links with a non-finite flow, pressure drop, derivative or end pressure
/// (allocates; only on the failure path).
fn non_finite_links(ws: &SolverWorkspace, net: &HydraulicNetwork) -> Vec<SuspectLink> {
    (0..net.links.len())
        .filter(|&k| ws.open[k])
        .filter(|&k| {
            let (i, j) = ws.endpoints[k];
            ![ws.flow_kg_s[k], ws.drop_pa[k], ws.slope_pa_s_kg[k], ws.rel_pressure_pa[i], ws.rel_pressure_pa[j]]
                .iter()
                .all(|v| v.is_finite())
        })
        .take(MAX_SUSPECT_LINKS)
        .map(|link| SuspectLink { link, sign_flips: ws.sign_flips[link], last_relative_change: f64::NAN })
        .collect()
}

/// The Newton iterations (no allocation inside, except on failure paths and
/// the preallocated histories). With `chord`, the first step reuses the
/// factor of the last solve (module docs, "Warm starts").
#[allow(clippy::too_many_lines)] // reason: one iteration is one sequence of steps
fn newton_loop(
    ws: &mut SolverWorkspace,
    net: &HydraulicNetwork,
    settings: &SolveSettings,
    state: &mut LoopState,
    timings: &mut SolveTimings,
    mut chord: bool,
    first_only: Option<&[usize]>,
) -> Outcome {
    let t = Instant::now();
    let first = match first_only {
        Some(links) => evaluate_named(ws, net, settings, links),
        None => evaluate_links(ws, net, settings).map(|_| ()),
    };
    #[cfg(debug_assertions)]
    if first_only.is_some() && first.is_ok() {
        // Debug builds (the test suite) hold the kept values to a full
        // evaluation at the same flows, then go on with the kept ones.
        let kept = (ws.drop_pa.clone(), ws.slope_pa_s_kg.clone(), ws.slope_floor);
        if evaluate_links(ws, net, settings).is_ok() {
            let stale = (0..net.links.len()).find(|&k| ws.drop_pa[k].to_bits() != kept.0[k].to_bits());
            assert!(stale.is_none(), "solve_changed: link {stale:?} changed but was not named");
        }
        (ws.drop_pa, ws.slope_pa_s_kg, ws.slope_floor) = kept;
        ws.evaluated = true;
    }
    timings.assemble_us += micros(t);
    if let Err(links) = first {
        return Outcome::NonFinite(links);
    }
    let n_red = ws.rhs.len();
    if n_red == 0 {
        // The reference node alone: nothing to solve.
        state.last_flow_change = 0.0;
        state.last_residual_pa = 0.0;
        return Outcome::Converged;
    }
    let mut previous_change = f64::INFINITY;
    let mut iteration = 0;
    while iteration < settings.max_iterations {
        iteration += 1;
        state.iterations = iteration;

        // --- assemble: conductances (not for a chord step: it keeps those
        // of its factor) and right-hand side d − A·q ---
        let t = Instant::now();
        if !chord {
            ws.values.iter_mut().for_each(|v| *v = 0.0);
        }
        for (v, node) in net.nodes.iter().enumerate() {
            let row = ws.reduced_row[v];
            if row != NONE {
                ws.rhs[row] = node.demand_kg_s;
            }
        }
        for k in 0..ws.endpoints.len() {
            if !ws.open[k] {
                ws.conductance[k] = 0.0;
                ws.base_flow_kg_s[k] = 0.0;
                continue;
            }
            let w = if chord { ws.conductance[k] } else { 1.0 / ws.slope_pa_s_kg[k] };
            let q = ws.flow_kg_s[k] + (ws.static_pa[k] - ws.drop_pa[k]) * w;
            ws.conductance[k] = w;
            ws.base_flow_kg_s[k] = q;
            let (i, j) = ws.endpoints[k];
            let (ri, rj) = (ws.reduced_row[i], ws.reduced_row[j]);
            if ri != NONE {
                ws.rhs[ri] -= q;
            }
            if rj != NONE {
                ws.rhs[rj] += q;
            }
            if chord {
                continue;
            }
            if ri != NONE {
                ws.values[ws.diag_slot[ri]] += w;
            }
            if rj != NONE {
                ws.values[ws.diag_slot[rj]] += w;
            }
            let slot = ws.link_slot[k];
            if slot != NONE {
                ws.values[slot] -= w;
            }
        }
        if !chord {
            for &node in &ws.anchors {
                let row = ws.reduced_row[node];
                if row != NONE {
                    let slot = ws.diag_slot[row];
                    let v = ws.values[slot];
                    ws.values[slot] = if v > 0.0 { 2.0 * v } else { 1.0 };
                }
            }
        }
        timings.assemble_us += micros(t);

        // --- factor (or take the kept factor) and solve ---
        let (Some(pattern), Some(symbolic), Some(mem)) = (&ws.pattern, &ws.symbolic, &mut ws.stack) else {
            return Outcome::Factorisation("workspace has no factor".into());
        };
        let t = Instant::now();
        let llt = if chord {
            LltRef::new(symbolic, &ws.factor_values)
        } else {
            ws.factor_ready = false;
            let matrix = SparseColMatRef::new(pattern.as_ref(), &ws.values);
            match symbolic.factorize_numeric_llt(
                &mut ws.factor_values,
                matrix,
                Side::Upper,
                Default::default(),
                Par::Seq,
                MemStack::new(mem),
                Default::default(),
            ) {
                Ok(llt) => llt,
                Err(e) => return Outcome::Factorisation(format!("{e:?}")),
            }
        };
        timings.factor_us += micros(t);
        let t = Instant::now();
        llt.solve_in_place_with_conj(
            Conj::No,
            MatMut::from_column_major_slice_mut(&mut ws.rhs, n_red, 1),
            Par::Seq,
            MemStack::new(mem),
        );
        if !chord {
            ws.factor_ready = ws.anchors.is_empty();
            ws.factored_open.clone_from(&ws.open);
        }

        // --- update pressures and flows ---
        std::mem::swap(&mut ws.rel_pressure_pa, &mut ws.rel_pressure_old_pa);
        for (v, x) in ws.rel_pressure_pa.iter_mut().enumerate() {
            let row = ws.reduced_row[v];
            *x = if row == NONE { 0.0 } else { ws.rhs[row] };
        }
        let mut sum_step = 0.0f64;
        let mut sum_flow = 0.0f64;
        for k in 0..ws.endpoints.len() {
            if !ws.open[k] {
                ws.step_kg_s[k] = 0.0;
                continue;
            }
            let (i, j) = ws.endpoints[k];
            let m_new = ws.base_flow_kg_s[k] + ws.conductance[k] * (ws.rel_pressure_pa[i] - ws.rel_pressure_pa[j]);
            let step = m_new - ws.flow_kg_s[k];
            ws.step_kg_s[k] = step;
            sum_step += step.abs();
            sum_flow += m_new.abs();
        }
        let change = sum_step / sum_flow.max(FLOW_SCALE_FLOOR_KG_S);
        if chord {
            chord = false;
            if change.is_nan() || change > CHORD_MAX_FLOW_CHANGE {
                // Too large (or not finite) for a step on an old slope:
                // forget it and make a Newton step from the same state.
                std::mem::swap(&mut ws.rel_pressure_pa, &mut ws.rel_pressure_old_pa);
                ws.step_kg_s.iter_mut().for_each(|v| *v = 0.0);
                iteration -= 1;
                timings.solve_us += micros(t);
                continue;
            }
            state.chord_step_kept = true;
        }
        let alpha = if iteration >= 3 && change > previous_change { settings.damping_factor } else { 1.0 };
        previous_change = change;
        for k in 0..ws.endpoints.len() {
            if !ws.open[k] {
                continue;
            }
            let step = alpha * ws.step_kg_s[k];
            ws.step_kg_s[k] = step;
            ws.flow_kg_s[k] += step;
            let significant = step.abs() > settings.flow_tolerance * ws.flow_kg_s[k].abs().max(FLOW_SCALE_FLOOR_KG_S);
            if significant {
                if step * ws.last_significant_step_kg_s[k] < 0.0 {
                    ws.sign_flips[k] = ws.sign_flips[k].saturating_add(1);
                }
                ws.last_significant_step_kg_s[k] = step;
            }
        }
        if alpha < 1.0 {
            for (x, &x_old) in ws.rel_pressure_pa.iter_mut().zip(&ws.rel_pressure_old_pa) {
                *x = x_old + alpha * (*x - x_old);
            }
        }
        timings.solve_us += micros(t);

        // --- check ---
        let t = Instant::now();
        let evaluated = evaluate_links(ws, net, settings);
        timings.assemble_us += micros(t);
        state.last_flow_change = change;
        state.flow_change_history.push(change);
        let residual_pa = match evaluated {
            Ok(r) => r,
            Err(links) => {
                state.residual_history_pa.push(f64::NAN);
                state.last_residual_pa = f64::NAN;
                return Outcome::NonFinite(links);
            }
        };
        state.last_residual_pa = residual_pa;
        state.residual_history_pa.push(residual_pa);
        if !change.is_finite() {
            return Outcome::NonFinite(non_finite_links(ws, net));
        }
        if change <= settings.flow_tolerance && residual_pa <= settings.pressure_tolerance_pa {
            return Outcome::Converged;
        }
    }
    Outcome::IterationLimit
}

/// Largest |Σ out − Σ in − demand| over non-reference nodes, kg/s (after
/// the loop; the node sums go in the workspace's `balance`).
fn mass_imbalance(ws: &mut SolverWorkspace, net: &HydraulicNetwork) -> f64 {
    let mut balance = std::mem::take(&mut ws.balance);
    balance.clear();
    balance.extend(net.nodes.iter().map(|n| -n.demand_kg_s));
    for (k, &(i, j)) in ws.endpoints.iter().enumerate() {
        if ws.open[k] {
            balance[i] += ws.flow_kg_s[k];
            balance[j] -= ws.flow_kg_s[k];
        }
    }
    let worst =
        balance.iter().enumerate().filter(|&(v, _)| v != net.reference_node).map(|(_, b)| b.abs()).fold(0.0, f64::max);
    ws.balance = balance;
    worst
}

/// Links that oscillate or still move, most suspicious first.
fn suspects(ws: &SolverWorkspace, settings: &SolveSettings) -> Vec<SuspectLink> {
    let mut list: Vec<SuspectLink> = (0..ws.endpoints.len())
        .filter(|&k| ws.open[k])
        .map(|link| SuspectLink {
            link,
            sign_flips: ws.sign_flips[link],
            last_relative_change: ws.step_kg_s[link].abs() / ws.flow_kg_s[link].abs().max(FLOW_SCALE_FLOOR_KG_S),
        })
        .filter(|s| s.sign_flips > 0 || s.last_relative_change > settings.flow_tolerance)
        .collect();
    list.sort_by(|a, b| {
        b.sign_flips
            .cmp(&a.sign_flips)
            .then(b.last_relative_change.total_cmp(&a.last_relative_change))
            .then(a.link.cmp(&b.link))
    });
    list.truncate(MAX_SUSPECT_LINKS);
    list
}

#[cfg(test)]
mod tests;
