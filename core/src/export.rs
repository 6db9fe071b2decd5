//! Interoperability export: the derived hydraulic network in the input-file
//! format of EPANET, the open general-purpose network-hydraulics engine
//! (US EPA; format as described in Rossman et al., EPANET 2.2 Users Manual,
//! EPA/600/R-20/133, 2020, appendix "Input file format").
//!
//! What is written is the network of a solved project in its design state:
//! pipe sizes and local losses as designed, emitter valves at their
//! presettings, the pump as controlled, the expansion-vessel node as the
//! fixed-head node. It serves the outside cross-check of the solver
//! (`tests/epanet/crosscheck.py`) and anyone who wants to look at the
//! network in another hydraulics tool; it is not a project file (nothing is
//! read back).
//!
//! # Mapping
//! - Units: `LPS` (flows L/s; lengths m, diameters mm, heads m), headloss
//!   `D-W` (Darcy–Weisbach, roughness in mm). Pressures become heads with
//!   one reference density ρ_ref and EPANET's own gravity
//!   ([`EPANET_GRAVITY_M_S2`]), flows become volume flows Q = m/ρ_ref; with
//!   these the friction and local-loss terms carry over unchanged.
//! - Node `N<i>`: network node i, elevation in m. The reference node (pump
//!   suction, expansion vessel) is a reservoir with head
//!   z + p_ref/(ρ_ref·g_E).
//! - Pipe link → `PIPES` entry with length, inner diameter, roughness
//!   (at least [`MIN_ROUGHNESS_MM`]: the format refuses 0) and its ζ-sum as
//!   the minor-loss coefficient.
//!   A pipe whose density ρ_k differs from ρ_ref gets ζ·ρ_ref/ρ_k and, in
//!   turbulent flow, the equivalent length L·ρ_ref/ρ_k (the dynamic pressure
//!   is m²/(2ρA²)); a pipe in laminar flow at the operating point gets
//!   L·ν_k/ν_ref instead (Hagen–Poiseuille Δp ∝ ν·L·m), which carries its
//!   own viscosity over exactly. Only the turbulent friction factor keeps
//!   the single viscosity's Reynolds number.
//! - Quadratic link (emitter valves at their presetting + lockshield,
//!   radiator bodies, the heat source) → a throttle control valve (`TCV`) of
//!   diameter [`TCV_DIAMETER_MM`] with the equivalent loss coefficient
//!   K = 2·r·ρ_ref·A² (h = K·v²/2g with v = Q/A reproduces Δp = r·m²).
//! - Closed links are listed under `STATUS` as `Closed`.
//! - Buoyancy: a link whose density ρ_k differs from ρ_ref and whose ends
//!   differ in height by Δz gets a pressure breaker valve (`PBV`, which holds
//!   a fixed head difference whatever the flow) in series, through an extra
//!   node `M<k>`, with the head gain Δz·(ρ_k − ρ_ref)·g/(ρ_ref·g_E): with it
//!   the single-fluid engine sees the same static pressures as flowrise's
//!   per-link densities.
//! - The pump: EPANET's three-point curve is the power function
//!   h = A − B·q^C through (0, h0), (q1, h1), (q2, h2), and it must fall
//!   with flow. [`PumpExport::Auto`] writes a `PUMP` with a three-point
//!   curve taken from the law actually used when that law has this form
//!   exactly (a falling parabola without linear term, or a falling line);
//!   otherwise — constant-Δp control (flat), proportional-Δp control
//!   (rising) — it writes the pump outlet as a second reservoir whose head
//!   is the suction head plus the pump's rise at the operating point
//!   (exact for constant Δp; for proportional Δp exact at the solved
//!   operating point, which the cross-check verifies by comparing the total
//!   flow). [`PumpExport::Curve`] forces the three-point curve (approximate
//!   when the law has both a linear and a quadratic term).
//! - Options: one viscosity (EPANET takes a single fluid): the mean
//!   kinematic viscosity of the pipes, written relative to EPANET's
//!   reference [`EPANET_REFERENCE_VISCOSITY_M2_S`]; specific gravity 1
//!   (it scales only the reported pressures).
//!
//! In flowrise's normal physics every link has its own temperature
//! (density, viscosity); the buoyancy this gives in risers is carried over
//! by the PBVs, but a single-fluid engine has one viscosity and its own
//! friction formula, so its flows agree only to about a percent. With
//! [`crate::design::SolveOptions::matched_physics`] the network has one
//! density and viscosity and EPANET's friction law, and the export is exact.

use std::fmt::Write as _;

use crate::design::{LinkRole, Solution};
use crate::error::{PhysicsError, PhysicsResult, check};
use crate::network::{HydraulicNetwork, LinkLaw};

/// Gravity EPANET uses internally: 32.2 ft/s² = 9.81456 m/s² (the engine's
/// constant, recalled from memory and confirmed by a laminar single-pipe
/// probe with epyt 2.3.5.3 / EPANET 2.3: flows match Hagen–Poiseuille with
/// this g and the reference viscosity below to 1e-5).
pub const EPANET_GRAVITY_M_S2: f64 = 32.2 * 0.3048;

/// Kinematic viscosity EPANET's relative `Viscosity` option refers to:
/// 1.1e-5 ft²/s = 1.0219e-6 m²/s (engine constant; same provenance as
/// [`EPANET_GRAVITY_M_S2`]).
pub const EPANET_REFERENCE_VISCOSITY_M2_S: f64 = 1.1e-5 * 0.3048 * 0.3048;

/// Diameter given to the throttle valves standing for quadratic links, mm
/// (any value works: K scales with A²).
pub const TCV_DIAMETER_MM: f64 = 50.0;

/// Smallest roughness written, mm (EPANET refuses a zero D-W roughness;
/// 1e-6 mm changes f by far less than 1e-9 in any heating pipe).
pub const MIN_ROUGHNESS_MM: f64 = 1e-6;

/// How the pump is written.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum PumpExport {
    /// A three-point curve when it represents the law exactly, else a
    /// fixed head rise at the operating point (see the module docs).
    #[default]
    Auto,
    /// Always a three-point curve (error when the law does not fall).
    Curve,
    /// Always a fixed head rise at the operating point (two reservoirs).
    FixedRise,
}

/// Options of the export.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ExportOptions {
    /// Pump representation.
    pub pump: PumpExport,
    /// EPANET's `Accuracy` (relative flow change to stop at). Default 0.001,
    /// EPANET's default.
    pub accuracy: f64,
    /// EPANET's `Trials` (most iterations). Default 200.
    pub trials: u32,
}

impl Default for ExportOptions {
    fn default() -> Self {
        Self { pump: PumpExport::Auto, accuracy: 0.001, trials: 200 }
    }
}

/// The reference fluid of an export.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ReferenceFluid {
    /// Density used for every pressure ↔ head and mass ↔ volume conversion,
    /// kg/m³: the mean of the lightest and heaviest link.
    pub density_kg_m3: f64,
    /// Kinematic viscosity written, m²/s: mean over the pipe links.
    pub kinematic_viscosity_m2_s: f64,
}

/// The reference fluid of network `net` (see [`ReferenceFluid`]).
///
/// # Errors
/// [`PhysicsError`] when the network has no link or a non-physical density.
pub fn reference_fluid(net: &HydraulicNetwork) -> PhysicsResult<ReferenceFluid> {
    let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
    let (mut nu_sum, mut n) = (0.0, 0usize);
    for k in &net.links {
        lo = lo.min(k.density_kg_m3);
        hi = hi.max(k.density_kg_m3);
        if let LinkLaw::Pipe(h) = &k.law {
            nu_sum += h.viscosity_pa_s / h.density_kg_m3;
            n += 1;
        }
    }
    if net.links.is_empty() {
        return Err(PhysicsError::Inconsistent(
            "the network has no links — solve a project with emitters first".into(),
        ));
    }
    let density_kg_m3 = 0.5 * (lo + hi);
    check::in_range("link density", density_kg_m3, "kg/m³", 500.0, 2000.0)?;
    let kinematic_viscosity_m2_s = if n > 0 { nu_sum / n as f64 } else { EPANET_REFERENCE_VISCOSITY_M2_S };
    check::positive("pipe kinematic viscosity", kinematic_viscosity_m2_s, "m²/s")?;
    Ok(ReferenceFluid { density_kg_m3, kinematic_viscosity_m2_s })
}

/// EPANET id of network node `i`.
#[must_use]
pub fn node_id(i: usize) -> String {
    format!("N{i}")
}

/// EPANET id of network link `k`.
#[must_use]
pub fn link_id(k: usize) -> String {
    format!("L{k}")
}

/// Words for a link role (comment in the file, `role` in the flows JSON).
#[must_use]
pub fn role_text(role: Option<&LinkRole>) -> String {
    role.map_or_else(|| "link".to_owned(), LinkRole::describe)
}

/// A pump link and its law: (link, a0 Pa, a1 Pa·s/kg, a2 Pa·s²/kg², the
/// maximum-curve bound, the flow beyond which the curve is straight kg/s).
type PumpOf = (usize, f64, f64, f64, Option<[f64; 3]>, f64);

/// The pump link of the network and its law.
fn pump_of(net: &HydraulicNetwork) -> Option<PumpOf> {
    net.links.iter().enumerate().find_map(|(k, l)| match l.law {
        LinkLaw::Pump { a0_pa, a1_pa_s_kg, a2_pa_s2_kg2, max_curve_pa, linear_beyond_kg_s } => {
            Some((k, a0_pa, a1_pa_s_kg, a2_pa_s2_kg2, max_curve_pa, linear_beyond_kg_s))
        }
        _ => None,
    })
}

/// Whether EPANET's three-point power curve reproduces the law exactly (a
/// law bounded by a maximum curve never is).
fn curve_is_exact(a0: f64, a1: f64, a2: f64, bound: Option<[f64; 3]>, linear_beyond: f64) -> bool {
    bound.is_none() && linear_beyond.is_infinite() && a0 > 0.0 && ((a1 == 0.0 && a2 < 0.0) || (a2 == 0.0 && a1 < 0.0))
}

/// The exported `.inp` text of a solved project's network.
///
/// Uses `sol.network`, `sol.roles` and (for the pump's operating point)
/// `sol.link_flows_kg_s`; without operating flows the design flow of the
/// pump is not known and a fixed-rise pump cannot be written.
///
/// # Errors
/// [`PhysicsError`] when the solution has no network, a link law is
/// non-physical, the options are out of range, or the pump cannot be written
/// as asked.
#[allow(clippy::too_many_lines)] // reason: one section after the other
pub fn network_to_inp(sol: &Solution, title: &str, opts: &ExportOptions) -> PhysicsResult<String> {
    let acc = crate::project::limits::EXPORT_ACCURACY;
    check::in_range("EPANET accuracy", opts.accuracy, "", acc.min, acc.max)?;
    check::in_range("EPANET trials", f64::from(opts.trials), "", 1.0, 100_000.0)?;
    if sol.circuits.len() > 1 {
        return Err(PhysicsError::Inconsistent(
            "the project has pumped circuits: each is its own network, joined by the regulated flow of its valve, which \
             one EPANET network file cannot hold — export a project without pumped circuits"
                .into(),
        ));
    }
    let net = &sol.network;
    if net.nodes.is_empty() || net.reference_node >= net.nodes.len() {
        return Err(PhysicsError::Inconsistent("the solution has no network — the design stopped with errors".into()));
    }
    let fluid = reference_fluid(net)?;
    let rho = fluid.density_kg_m3;
    let g = EPANET_GRAVITY_M_S2;
    let to_head = |p_pa: f64| p_pa / (rho * g);
    let to_l_s = |m_kg_s: f64| m_kg_s / rho * 1000.0;

    let pump = pump_of(net);
    let (pump_link, pump_as_curve) = match (pump, opts.pump) {
        (None, _) => (None, false),
        (Some((k, a0, a1, a2, bound, lb)), PumpExport::Auto) => (Some(k), curve_is_exact(a0, a1, a2, bound, lb)),
        (Some((k, a0, a1, a2, bound, lb)), PumpExport::Curve) => {
            if bound.is_some() || lb.is_finite() || !(a0 > 0.0 && a1 <= 0.0 && a2 <= 0.0 && (a1 < 0.0 || a2 < 0.0)) {
                return Err(PhysicsError::Inconsistent(
                    "the pump law is not a parabola falling from zero flow (constant or proportional Δp control, \
                     or a curve held flat near shut-off): EPANET's pump curve cannot represent it — export it as a \
                     fixed head rise"
                        .into(),
                ));
            }
            (Some(k), true)
        }
        (Some((k, ..)), PumpExport::FixedRise) => (Some(k), false),
    };
    let pump_flow_kg_s = pump_link.and_then(|k| sol.link_flows_kg_s.get(k).copied());
    // Reservoirs: the reference node, and the pump outlet for a fixed rise.
    let ref_head_m = net.nodes[net.reference_node].elevation_m + to_head(net.reference_pressure_pa);
    let mut outlet_reservoir: Option<(usize, f64)> = None;
    if let (Some(k), false) = (pump_link, pump_as_curve) {
        let Some((_, a0, a1, a2, bound, linear_beyond)) = pump else {
            return Err(PhysicsError::Inconsistent("no pump".into()));
        };
        let Some(m) = pump_flow_kg_s.filter(|m| m.is_finite()) else {
            return Err(PhysicsError::Inconsistent(
                "the pump's operating flow is not known (no operating solve) — a fixed head rise needs it".into(),
            ));
        };
        // The rise actually given at the operating point (a controlled
        // pump's law bounded by its maximum curve).
        let rise_pa = crate::network::solver::pump_rise_and_slope([a0, a1, a2], bound, linear_beyond, m).0;
        let link = &net.links[k];
        if link.to == net.reference_node {
            return Err(PhysicsError::Inconsistent("the pump discharges into the reference node".into()));
        }
        let from_head = if link.from == net.reference_node { ref_head_m } else { f64::NAN };
        if !from_head.is_finite() {
            return Err(PhysicsError::Inconsistent("the pump does not draw from the reference node".into()));
        }
        // Head at the outlet: suction head + rise (heads include elevation,
        // so the ρ·g·Δz of the link is already in them).
        outlet_reservoir = Some((link.to, from_head + to_head(rise_pa)));
    }

    let mut s = String::new();
    let w = &mut s;
    let _ = writeln!(w, "[TITLE]");
    let _ = writeln!(w, "flowrise network export: {}", title.replace(['\n', '\r', ';'], " "));
    let _ = writeln!(
        w,
        "reference density {:.4} kg/m3, kinematic viscosity {:.5e} m2/s, revision {}",
        rho, fluid.kinematic_viscosity_m2_s, sol.revision
    );
    let pump_note = match (pump_link, pump_as_curve) {
        (None, _) => "no pump".to_owned(),
        (Some(_), true) => "pump as a three-point curve of the law used".to_owned(),
        (Some(_), false) => format!(
            "pump as a fixed head rise at its operating point {:.6} L/s (second reservoir at the pump outlet)",
            pump_flow_kg_s.map_or(0.0, to_l_s)
        ),
    };
    let _ = writeln!(w, "{pump_note}");
    let _ = writeln!(w);

    let is_reservoir = |i: usize| i == net.reference_node || outlet_reservoir.is_some_and(|(o, _)| o == i);
    let _ = writeln!(w, "[JUNCTIONS]");
    let _ = writeln!(w, ";ID\tElev_m\tDemand_LPS");
    for (i, n) in net.nodes.iter().enumerate() {
        check::finite("node elevation", n.elevation_m, "m")?;
        if !is_reservoir(i) {
            let _ = writeln!(w, "{}\t{:.6}\t{:.9}", node_id(i), n.elevation_m, to_l_s(n.demand_kg_s));
        }
    }
    let _ = writeln!(w);
    let _ = writeln!(w, "[RESERVOIRS]");
    let _ = writeln!(w, ";ID\tHead_m");
    let _ = writeln!(w, "{}\t{:.9}\t;expansion vessel (reference node)", node_id(net.reference_node), ref_head_m);
    if let Some((o, h)) = outlet_reservoir {
        let _ = writeln!(w, "{}\t{:.9}\t;pump outlet held at suction head + pump rise", node_id(o), h);
    }
    let _ = writeln!(w);

    let mut pipes = String::new();
    let mut valves = String::new();
    let mut status = String::new();
    let mut pumps = String::new();
    let mut curves = String::new();
    let tcv_area_m2 = 0.25 * std::f64::consts::PI * (TCV_DIAMETER_MM / 1000.0).powi(2);
    let mut extra_junctions = String::new();
    for (k, l) in net.links.iter().enumerate() {
        let role = role_text(sol.roles.get(k));
        let (a, mut b) = (node_id(l.from), node_id(l.to));
        // Buoyancy: the link's own density differs from ρ_ref over a height
        // difference; a pressure breaker valve in series (node M<k>, valve
        // B<k>) adds the constant head gain b (see the module docs).
        let dz = net.nodes[l.from].elevation_m - net.nodes[l.to].elevation_m;
        let gain_m = dz * (l.density_kg_m3 - rho) * crate::network::GRAVITY_M_S2 / (rho * g);
        if gain_m != 0.0 && !matches!(l.law, LinkLaw::Pump { .. }) {
            let mid = format!("M{k}");
            let _ = writeln!(extra_junctions, "{mid}\t{:.6}\t0\t;buoyancy node of {role}", net.nodes[l.to].elevation_m);
            let (v_from, v_to) = if gain_m > 0.0 { (b.clone(), mid.clone()) } else { (mid.clone(), b.clone()) };
            let _ = writeln!(
                valves,
                "B{k}\t{v_from}\t{v_to}\t{TCV_DIAMETER_MM}\tPBV\t{:.9e}\t0\t;buoyancy of {role}",
                gain_m.abs()
            );
            b = mid;
        }
        match &l.law {
            LinkLaw::Pipe(h) => {
                let rough_mm = (h.roughness_m * 1000.0).max(MIN_ROUGHNESS_MM);
                // Own density and viscosity carried over exactly where the
                // law allows (see the module docs): ζ and, in turbulent flow,
                // L scale with ρ_ref/ρ_k; in laminar flow (at the operating
                // point) L scales with ν_k/ν_ref.
                let rho_ratio = rho / h.density_kg_m3;
                let nu_k = h.viscosity_pa_s / h.density_kg_m3;
                let m_op = sol.link_flows_kg_s.get(k).copied().unwrap_or(0.0);
                let laminar = h.reynolds(m_op) <= crate::friction::LAMINAR_RE_MAX;
                let length_m =
                    if laminar { h.length_m * nu_k / fluid.kinematic_viscosity_m2_s } else { h.length_m * rho_ratio };
                let zeta = h.zeta_sum * rho_ratio;
                let st = if l.closed { "Closed" } else { "Open" };
                let _ = writeln!(
                    pipes,
                    "{}\t{a}\t{b}\t{:.6}\t{:.6}\t{:.9}\t{:.9}\t{st}\t;{role}",
                    link_id(k),
                    length_m,
                    h.inner_diameter_m * 1000.0,
                    rough_mm,
                    zeta
                );
            }
            LinkLaw::Quadratic { r_pa_s2_kg2 } => {
                check::non_negative("resistance coefficient r", *r_pa_s2_kg2, "Pa·s²/kg²")?;
                let k_loss = 2.0 * r_pa_s2_kg2 * rho * tcv_area_m2 * tcv_area_m2;
                let _ = writeln!(valves, "{}\t{a}\t{b}\t{TCV_DIAMETER_MM}\tTCV\t{k_loss:.9e}\t0\t;{role}", link_id(k));
                if l.closed {
                    let _ = writeln!(status, "{}\tClosed", link_id(k));
                }
            }
            LinkLaw::Pump { a0_pa, a1_pa_s_kg, a2_pa_s2_kg2, linear_beyond_kg_s, .. } => {
                if !pump_as_curve {
                    let _ = writeln!(pipes, ";{} ({role}) written as the reservoir {b}", link_id(k));
                    continue;
                }
                // A bounded (controlled) law is refused above: this is a curve.
                let law = [*a0_pa, *a1_pa_s_kg, *a2_pa_s2_kg2];
                let rise = |m: f64| crate::pump::pump_law_at(law, *linear_beyond_kg_s, m).0;
                // Flow where the law reaches zero rise, kg/s.
                let Some(m_zero): Option<f64> = crate::pump::law_zero_flow(law, *linear_beyond_kg_s) else {
                    return Err(PhysicsError::Inconsistent(format!(
                        "the pump law of {role} never reaches zero rise — check the pump curve"
                    )));
                };
                let m_op = pump_flow_kg_s.filter(|m| m.is_finite() && *m > 0.0).unwrap_or(0.5 * m_zero);
                let m1 = m_op.min(0.6 * m_zero);
                let m2 = (2.0 * m1).min(0.9 * m_zero);
                let cid = format!("C{k}");
                let _ = writeln!(curves, ";pump curve of {role}: flow L/s, head m");
                for m in [0.0, m1, m2] {
                    let _ = writeln!(curves, "{cid}\t{:.9}\t{:.9}", to_l_s(m), to_head(rise(m)));
                }
                let _ = writeln!(pumps, "{}\t{a}\t{b}\tHEAD {cid}\t;{role}", link_id(k));
            }
        }
    }
    if !extra_junctions.is_empty() {
        let _ = writeln!(w, "[JUNCTIONS]");
        w.push_str(&extra_junctions);
        let _ = writeln!(w);
    }
    let _ = writeln!(w, "[PIPES]");
    let _ = writeln!(w, ";ID\tNode1\tNode2\tLength_m\tDiameter_mm\tRoughness_mm\tMinorLoss\tStatus");
    w.push_str(&pipes);
    let _ = writeln!(w);
    let _ = writeln!(w, "[VALVES]");
    let _ = writeln!(w, ";ID\tNode1\tNode2\tDiameter_mm\tType\tSetting_K\tMinorLoss");
    w.push_str(&valves);
    let _ = writeln!(w);
    let _ = writeln!(w, "[PUMPS]");
    w.push_str(&pumps);
    let _ = writeln!(w);
    let _ = writeln!(w, "[CURVES]");
    w.push_str(&curves);
    let _ = writeln!(w);
    let _ = writeln!(w, "[STATUS]");
    w.push_str(&status);
    let _ = writeln!(w);
    let _ = writeln!(w, "[TIMES]");
    let _ = writeln!(w, "Duration\t0");
    let _ = writeln!(w);
    let _ = writeln!(w, "[OPTIONS]");
    let _ = writeln!(w, "Units\tLPS");
    let _ = writeln!(w, "Headloss\tD-W");
    // Specific gravity 1: pressures in the file (PBV settings) are then
    // heads of the reference fluid; it does not change flows.
    let _ = writeln!(w, "Specific Gravity\t1.0");
    let _ = writeln!(w, "Viscosity\t{:.9}", fluid.kinematic_viscosity_m2_s / EPANET_REFERENCE_VISCOSITY_M2_S);
    let _ = writeln!(w, "Trials\t{}", opts.trials);
    let _ = writeln!(w, "Accuracy\t{}", opts.accuracy);
    let _ = writeln!(w, "Unbalanced\tStop");
    let _ = writeln!(w);
    let _ = writeln!(w, "[REPORT]");
    let _ = writeln!(w, "Status\tNo");
    let _ = writeln!(w, "Summary\tNo");
    let _ = writeln!(w);
    let _ = writeln!(w, "[END]");
    Ok(s)
}

/// flowrise's operating flows of the exported links, for a side-by-side
/// comparison: `{ "density_kg_m3", "iterations", "converged", "operate_ms",
/// "links": [{ "id", "role", "flow_kg_s", "flow_l_s", "in_inp" }] }` with
/// `flow_l_s` converted with the same reference density as the `.inp`.
///
/// # Errors
/// As [`reference_fluid`].
pub fn flows_json(sol: &Solution, opts: &ExportOptions) -> PhysicsResult<serde_json::Value> {
    let net = &sol.network;
    let fluid = reference_fluid(net)?;
    let pump_as_curve = match (pump_of(net), opts.pump) {
        (Some((_, a0, a1, a2, bound, lb)), PumpExport::Auto) => curve_is_exact(a0, a1, a2, bound, lb),
        (Some(_), PumpExport::Curve) => true,
        _ => false,
    };
    let links: Vec<serde_json::Value> = net
        .links
        .iter()
        .enumerate()
        .map(|(k, l)| {
            let m = sol.link_flows_kg_s.get(k).copied().unwrap_or(f64::NAN);
            let in_inp = !matches!(l.law, LinkLaw::Pump { .. }) || pump_as_curve;
            serde_json::json!({
                "id": link_id(k),
                "role": role_text(sol.roles.get(k)),
                "flow_kg_s": m,
                "flow_l_s": m / fluid.density_kg_m3 * 1000.0,
                "in_inp": in_inp,
                "closed": l.closed,
            })
        })
        .collect();
    Ok(serde_json::json!({
        "density_kg_m3": fluid.density_kg_m3,
        "kinematic_viscosity_m2_s": fluid.kinematic_viscosity_m2_s,
        "iterations": sol.iterations,
        "converged": sol.converged,
        "derive_ms": sol.timings.derive_ms,
        "design_ms": sol.timings.design_ms,
        "operate_ms": sol.timings.operate_ms,
        "links": links,
    }))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::design::{SolveOptions, Workspace, solve_project};
    use crate::generate::{BuildingSpec, generate_building};

    #[test]
    fn constants_in_si() {
        // 32.2 ft/s² and 1.1e-5 ft²/s (1 ft = 0.3048 m exactly, by the 1959
        // international yard and pound agreement).
        assert!((EPANET_GRAVITY_M_S2 - 9.814_56).abs() < 1e-9);
        assert!((EPANET_REFERENCE_VISCOSITY_M2_S - 1.021_933e-6).abs() < 1e-11);
    }

    #[test]
    fn rejects_bad_options_and_empty_solutions() {
        let sol = Solution::default();
        assert!(network_to_inp(&sol, "x", &ExportOptions::default()).is_err());
        let p = generate_building(&BuildingSpec::new(1, 3)).unwrap();
        let sol = solve_project(&p, &SolveOptions::default(), &mut Workspace::default());
        let bad = ExportOptions { accuracy: f64::NAN, ..ExportOptions::default() };
        assert!(matches!(
            network_to_inp(&sol, "x", &bad),
            Err(PhysicsError::NotFinite { .. } | PhysicsError::OutOfRange { .. })
        ));
        // Constant-Δp pump: a curve cannot represent it.
        let curve = ExportOptions { pump: PumpExport::Curve, ..ExportOptions::default() };
        assert!(network_to_inp(&sol, "x", &curve).is_err());
    }

    #[test]
    fn quadratic_link_becomes_an_equivalent_tcv() {
        let p = generate_building(&BuildingSpec::new(2, 4)).unwrap();
        let sol = solve_project(&p, &SolveOptions::default(), &mut Workspace::default());
        let text = network_to_inp(&sol, "t", &ExportOptions::default()).unwrap();
        let rho = reference_fluid(&sol.network).unwrap().density_kg_m3;
        let a = 0.25 * std::f64::consts::PI * 0.05_f64.powi(2);
        for (k, l) in sol.network.links.iter().enumerate() {
            if let LinkLaw::Quadratic { r_pa_s2_kg2 } = l.law {
                let line = text.lines().find(|x| x.starts_with(&format!("{}\t", link_id(k)))).unwrap();
                let kk: f64 = line.split('\t').nth(5).unwrap().parse().unwrap();
                // h = K·Q²/(2gA²) with Q = m/ρ must equal r·m²/(ρ g).
                let m = 0.05;
                let q = m / rho;
                let h_tcv = kk * q * q / (2.0 * EPANET_GRAVITY_M_S2 * a * a);
                let h_law = r_pa_s2_kg2 * m * m / (rho * EPANET_GRAVITY_M_S2);
                assert!((h_tcv - h_law).abs() <= 1e-9 * h_law.max(1e-12), "link {k}");
            }
        }
    }
}
