//! Validation of a network's values against a solver workspace: every
//! node and link value checked before a solve, each link's open flag and
//! static term set, and a link law already validated at the workspace's
//! last solve not checked again. [`validate_changed`] does this for the
//! links a caller names (`super::solve_changed`).

use super::{GRAVITY_M_S2, LinkKernel, LinkLaw, SolveError, SolverWorkspace};
use crate::error::{PhysicsError, check};
use crate::friction::PipeHydraulics;
use crate::network::HydraulicNetwork;

/// Every node and link value checked (topology is checked by the
/// workspace); each link's open flag and static term set. A link law equal to the one validated at the workspace's last
/// solve is not checked again; a changed law is checked, remembered, and its
/// cached evaluation dropped.
///
/// The same pass compares each link's endpoints with the workspace's (the
/// topology check of [`SolverWorkspace::matches`], without a second pass
/// over the links): a difference returns `Ok(false)` — the caller rebuilds
/// the workspace and validates again. A value error is returned only when
/// the topology matches, so a changed topology is always rebuilt (and its
/// own errors reported) first, as with a separate check.
pub(super) fn validate_values(net: &HydraulicNetwork, ws: &mut SolverWorkspace) -> Result<bool, SolveError> {
    ws.validated = false;
    check::finite("reference pressure", net.reference_pressure_pa, "Pa")
        .map_err(SolveError::InvalidReferencePressure)?;
    for (node, n) in net.nodes.iter().enumerate() {
        if !(n.elevation_m.is_finite() && n.demand_kg_s.is_finite()) {
            check::finite("node elevation", n.elevation_m, "m")
                .and_then(|_| check::finite("node demand", n.demand_kg_s, "kg/s"))
                .map_err(|source| SolveError::InvalidNode { node, source })?;
        }
    }
    for link in 0..net.links.len() {
        if !validate_link(net, ws, link)? {
            return Ok(false);
        }
    }
    ws.validated = true;
    Ok(true)
}

/// [`validate_values`] for the links in `changed` alone, on a workspace
/// that validated the rest of the network at its last solve (the caller's
/// word: see [`solve_changed`]; debug builds check it against a full pass).
pub(super) fn validate_changed(
    net: &HydraulicNetwork,
    ws: &mut SolverWorkspace,
    changed: &[usize],
) -> Result<bool, SolveError> {
    ws.validated = false;
    for &link in changed {
        if link >= net.links.len() || !validate_link(net, ws, link)? {
            return Ok(false);
        }
    }
    debug_assert!(
        (0..net.links.len()).all(|k| {
            let l = &net.links[k];
            let static_pa =
                l.density_kg_m3 * GRAVITY_M_S2 * (net.nodes[l.from].elevation_m - net.nodes[l.to].elevation_m);
            ws.endpoints[k] == (l.from, l.to)
                && ws.open[k] != l.closed
                && ws.static_pa[k].to_bits() == static_pa.to_bits()
                && ws.known_law[k].as_ref() == Some(&l.law)
        }),
        "solve_changed: a link changed that the caller did not name"
    );
    ws.validated = true;
    Ok(true)
}

/// One link of [`validate_values`]: `Ok(false)` when its endpoints (or, on
/// an error, those of a later link) differ from the workspace's.
fn validate_link(net: &HydraulicNetwork, ws: &mut SolverWorkspace, link: usize) -> Result<bool, SolveError> {
    let same_ends = |ws: &SolverWorkspace, from: usize| {
        ws.endpoints[from..].iter().zip(&net.links[from..]).all(|(&(i, j), l)| i == l.from && j == l.to)
    };
    let l = &net.links[link];
    if ws.endpoints[link] != (l.from, l.to) {
        return Ok(false);
    }
    if !(l.density_kg_m3.is_finite() && l.density_kg_m3 > 0.0) {
        if !same_ends(ws, link) {
            return Ok(false);
        }
        check::positive("link water density", l.density_kg_m3, "kg/m³")
            .map_err(|source| SolveError::InvalidLink { link, source })?;
    }
    // The open flag and the static term ride along this pass (the
    // endpoints are checked by the workspace).
    ws.open[link] = !l.closed;
    let (zi, zj) = (net.nodes[l.from].elevation_m, net.nodes[l.to].elevation_m);
    ws.static_pa[link] = l.density_kg_m3 * GRAVITY_M_S2 * (zi - zj);
    if ws.known_law[link].as_ref() == Some(&l.law) {
        return Ok(true);
    }
    let checked = match l.law {
        LinkLaw::Pipe(ref p) => PipeHydraulics::new(
            p.length_m,
            p.inner_diameter_m,
            p.roughness_m,
            p.zeta_sum,
            p.density_kg_m3,
            p.viscosity_pa_s,
        )
        .map(|_| ()),
        LinkLaw::Quadratic { r_pa_s2_kg2 } => {
            check::non_negative("resistance coefficient r", r_pa_s2_kg2, "Pa·s²/kg²").map(|_| ())
        }
        LinkLaw::Pump { a0_pa, a1_pa_s_kg, a2_pa_s2_kg2, max_curve_pa, linear_beyond_kg_s } => {
            let [c0, c1, c2] = max_curve_pa.unwrap_or_default();
            let linear_beyond_ok = if linear_beyond_kg_s.is_nan() || linear_beyond_kg_s < 0.0 {
                Err(PhysicsError::OutOfRange {
                    quantity: "pump curve's linear continuation flow",
                    value: linear_beyond_kg_s,
                    unit: "kg/s",
                    min: 0.0,
                    max: f64::INFINITY,
                })
            } else {
                Ok(())
            };
            check::finite("pump coefficient a0", a0_pa, "Pa")
                .and_then(|_| check::finite("pump coefficient a1", a1_pa_s_kg, "Pa·s/kg"))
                .and_then(|_| check::finite("pump coefficient a2", a2_pa_s2_kg2, "Pa·s²/kg²"))
                .and_then(|_| check::finite("pump maximum-curve coefficient a0", c0, "Pa"))
                .and_then(|_| check::finite("pump maximum-curve coefficient a1", c1, "Pa·s/kg"))
                .and_then(|_| check::finite("pump maximum-curve coefficient a2", c2, "Pa·s²/kg²"))
                .and(linear_beyond_ok)
                .map(|_| ())
        }
    };
    if let Err(source) = checked {
        return if same_ends(ws, link) { Err(SolveError::InvalidLink { link, source }) } else { Ok(false) };
    }
    ws.kernels[link] = LinkKernel::new(&l.law);
    match &mut ws.known_law[link] {
        Some(known) => known.clone_from(&l.law),
        slot => *slot = Some(l.law.clone()),
    }
    ws.eval_flow_kg_s[link] = f64::NAN;
    Ok(true)
}
