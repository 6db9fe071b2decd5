//! Stage 4, **operate**: the Global Gradient solve of the derived network
//! with sizes, presettings and the pump law fixed ([`crate::network::solver`]),
//! then the results at the real flows: pipe flows, velocities, gradients
//! and pressure drops, each emitter's output and return temperature, the
//! pump's operating point, and the findings only the real flows show.
//!
//! The [`Workspace`] keeps the solver's symbolic factorisation and the last
//! flows: an edit that keeps the topology re-solves from a warm start.

use super::findings;
use super::results::{LinkRole, Side, Solution};
use super::state::Derivation;
use super::{SolveOptions, Workspace};
use crate::friction::{FrictionLaw, friction_gradient_pa_m, pipe_dp};
use crate::network::solver::{self, SolveSettings, SolverWorkspace};
use crate::network::{HydLink, HydraulicNetwork, LinkLaw};
use crate::project::{Mode, NodeId, Project};
use crate::pump::PumpControl;
use crate::water;

/// Relative flow change at which a drag preview's solve stops while the
/// Δp controllers still regulate (the full tolerance applies to the solve
/// that confirms they hold): Newton is then within a step or two of the
/// full tolerance ([`SolveSettings::flow_tolerance`]).
const LOOSE_FLOW_TOLERANCE: f64 = 1e-3;
/// Pressure balance at which such a solve stops, Pa (the preview's
/// controllers hold to 10 Pa: `super::preview::PREVIEW_HELD_DP_TOLERANCE_PA`).
const LOOSE_PRESSURE_TOLERANCE_PA: f64 = 1.0;

impl Derivation<'_> {
    /// Matched physics ([`SolveOptions::matched_physics`]): one density and
    /// viscosity (water at the mean design temperature) and EPANET's friction
    /// law on every link of the derived network.
    pub(super) fn match_physics(&mut self, p: &Project) {
        let mean_c = 0.5 * (p.settings.supply_c + p.settings.return_c);
        let Ok(w) = water::properties(mean_c) else { return };
        for k in &mut self.net.links {
            k.density_kg_m3 = w.density_kg_m3;
            if let LinkLaw::Pipe(h) = &mut k.law {
                h.density_kg_m3 = w.density_kg_m3;
                h.viscosity_pa_s = w.viscosity_pa_s;
                h.friction_law = crate::friction::FrictionLaw::SwameeJainEpanet;
            }
        }
    }

    /// The operate stage (see the module docs).
    pub(super) fn operate(&mut self, p: &Project, opts: &SolveOptions, ws: &mut Workspace, sol: &mut Solution) {
        if sol.pump.is_none() || sol.emitters.is_empty() {
            return;
        }
        sol.timings.operate_passes += 1;
        // The design sized and balanced with the conservative friction law;
        // the network operates on the continuous one (smooth for Newton).
        for k in self.net.links.iter_mut().filter(|_| !self.operating_laws) {
            to_operating_law(k);
        }
        // Regulated feeds (pumped circuits behind a mixing or injection
        // valve): the valve holds the circuit's primary flow, so the network
        // sees a fixed draw at the feed's supply node and the same flow back
        // at its return node.
        for e in &self.emitters {
            let Some(m) = e.feed.and_then(|f| f.fixed_flow_kg_s) else { continue };
            let m = if opts.closed_emitters.contains(&e.id) { 0.0 } else { m };
            self.net.links[e.valves_link].closed = true;
            self.net.nodes[e.s].demand_kg_s = -m;
            self.net.nodes[e.r].demand_kg_s = m;
        }
        let same_topology = ws.last_roles == self.roles && ws.last_flows.len() == self.net.links.len();
        if !same_topology {
            ws.solver = None;
        }
        let solver_ws = match ws.solver.take() {
            Some(w) => Ok(w),
            None => SolverWorkspace::new(&self.net),
        };
        let mut solver_ws = match solver_ws {
            Ok(w) => w,
            Err(e) => {
                self.findings.push(findings::network_invalid(&e));
                return;
            }
        };
        let initial: &[f64] = if same_topology { &ws.last_flows } else { &self.design_flows };
        // Δp controllers: their states and openings in an outer loop around
        // the Newton solve (design/devices.rs). In a drag preview every
        // solve stops at a loose tolerance (a relative flow step of 1e-3:
        // Newton's last step being quadratic, the flows left are well
        // inside the preview's 10 Pa hold of the controllers), and the
        // preview ends with the first round in which they hold; a loose
        // solve that stalls goes on at the full tolerance.
        let regulated = self.devices.iter().any(|d| d.controller.is_some());
        let loose = SolveSettings {
            flow_tolerance: opts.solver.flow_tolerance.max(LOOSE_FLOW_TOLERANCE),
            pressure_tolerance_pa: opts.solver.pressure_tolerance_pa.max(LOOSE_PRESSURE_TOLERANCE_PA),
            reuse_relative_flow_change: opts
                .solver
                .reuse_relative_flow_change
                .max(solver::PREVIEW_REUSE_RELATIVE_FLOW_CHANGE),
            ..opts.solver
        };
        let mut loose_allowed = regulated && self.loose_regulation;
        let mut tight = !loose_allowed;
        sol.timings.solver_ms = 0.0;
        sol.timings.solver_runs = 0;
        let mut start = initial.to_vec();
        // What changed since the workspace's last solve, when known: in a
        // drag preview the moved pipes, and from the second round on only
        // the controllers' links (the rounds change nothing else).
        let controller_links: Vec<usize> =
            self.devices.iter().filter(|d| d.controller.is_some()).map(|d| d.link).collect();
        let mut changed: Option<Vec<usize>> = self.changed_links.take().filter(|_| same_topology).map(|mut c| {
            c.extend_from_slice(&controller_links);
            c
        });
        let mut rounds = 0;
        let mut accel = super::accel::Anderson::default();
        let report = loop {
            let settings = if tight { &opts.solver } else { &loose };
            let solved = match &changed {
                Some(c) => solver::solve_changed(&self.net, settings, &mut solver_ws, Some(&start), c),
                None => solver::solve(&self.net, settings, &mut solver_ws, Some(&start)),
            };
            let report = match solved {
                Ok(r) => r,
                Err(e) => {
                    ws.solver = Some(solver_ws);
                    self.findings.push(findings::network_invalid(&e));
                    return;
                }
            };
            sol.timings.solver_ms += report.timings.total_us / 1000.0;
            sol.timings.solver_runs += 1;
            if !report.converged {
                if tight {
                    break report;
                }
                // A loose solve that stalls: go on at the full tolerance.
                tight = true;
                loose_allowed = false;
                continue;
            }
            let x = self.controller_log_r();
            if self.regulate(&report.flows_kg_s, &report.pressures_pa) {
                break report;
            }
            let next = accel.step(x, self.controller_log_r());
            self.set_controller_log_r(&next);
            if changed.is_none() {
                changed = Some(controller_links.clone());
            }
            rounds += 1;
            if rounds > super::devices::MAX_REGULATION_ROUNDS {
                self.findings.push(findings::regulation_not_settled(rounds - 1));
                break report;
            }
            tight = !loose_allowed;
            start.clone_from(&report.flows_kg_s);
        };
        sol.iterations = report.iterations;
        sol.converged = report.converged;
        if !report.converged {
            let detail = report.diagnostic.as_ref().map_or_else(String::new, |d| {
                let links: Vec<String> = d
                    .suspect_links
                    .iter()
                    .take(5)
                    .map(|s| self.roles.get(s.link).map_or_else(|| format!("link {}", s.link), LinkRole::describe))
                    .collect();
                format!(" (last flow change {:.2e}; links that oscillate: {})", d.last_flow_change, links.join(", "))
            });
            self.findings.push(findings::not_converged(report.iterations, &detail));
        }
        let finite = report.flows_kg_s.iter().all(|f| f.is_finite());
        let flows = if finite { report.flows_kg_s } else { self.design_flows.clone() };
        if !same_topology {
            ws.last_roles.clone_from(&self.roles);
        }
        ws.last_flows.clone_from(&flows);
        sol.node_pressures_pa = report.pressures_pa;
        // The solver's last evaluation of the link laws is at these flows.
        fill_pipe_flows(sol, &self.net, &flows, finite.then(|| solver_ws.link_drops_pa()));
        ws.solver = Some(solver_ws);
        self.pipes_filled = true;
        sol.link_flows_kg_s = flows;
        if !self.devices.is_empty() {
            // Lent, not copied: the device results write only `sol.devices`.
            let (f, pr) = (std::mem::take(&mut sol.link_flows_kg_s), std::mem::take(&mut sol.node_pressures_pa));
            self.device_results(&p.settings, &f, &pr, sol);
            (sol.link_flows_kg_s, sol.node_pressures_pa) = (f, pr);
        }
        let flows = &sol.link_flows_kg_s;

        // Emitter outputs at the real flows.
        let Some(sp) = self.supply_props else { return };
        // In id order (the order of `sol.emitters` and of the caches).
        let node_count = p.node_count();
        for (r, &i) in sol.emitters.iter_mut().zip(&self.result_emitter) {
            let Some(e) = self.emitters.get(i) else { continue };
            if let Some(feed) = e.feed {
                // A feed's output and its findings are the circuit's
                // (circuits.rs); here only its primary flow.
                let m = feed.fixed_flow_kg_s.unwrap_or_else(|| flows[e.valves_link].max(0.0));
                r.flow_kg_s = m;
                r.flow_l_h = m / sp.density_kg_m3 * 3.6e6;
                r.flow_deviation = if r.design_flow_kg_s > 0.0 { m / r.design_flow_kg_s - 1.0 } else { 0.0 };
                continue;
            }
            let m = flows[e.valves_link].max(0.0);
            r.flow_kg_s = m;
            r.flow_l_h = m / sp.density_kg_m3 * 3.6e6;
            r.flow_deviation = if r.design_flow_kg_s > 0.0 { m / r.design_flow_kg_s - 1.0 } else { 0.0 };
            if let Some(d) = &e.design
                && let Ok(out) = ws.emitters.output_at_flow(e.id, node_count, &d.installed, m, r.supply_c, r.room_c)
            {
                r.output_w = out.output_w;
                r.return_c = out.return_c;
            }
            let s = &p.settings;
            let installed = s.mode == Mode::Installed;
            let open = !r.closed && r.design_flow_kg_s > 0.0;
            r.flow_within_tolerance = !open || r.flow_deviation.abs() <= s.flow_tolerance_fraction;
            // The node only for a finding (a lookup per emitter is most of
            // this loop's time in a drag preview otherwise).
            let node = || p.node(e.id);
            if let Some(node) = (!r.flow_within_tolerance).then(node).flatten() {
                self.findings.push(findings::flow_out_of_tolerance(
                    node,
                    r.flow_l_h,
                    r.design_flow_l_h,
                    r.flow_deviation,
                    s.flow_tolerance_fraction,
                    r.output_w,
                    r.load_w,
                    installed,
                ));
            } else if installed && open && r.load_w > 0.0 && r.output_w < 0.95 * r.load_w {
                self.findings.push(findings::room_short(e.id, &r.name, 1.0 + r.flow_deviation, r.output_w, r.load_w));
            }
            if let Some(node) = (open && r.return_c > s.return_c + s.hot_return_margin_k).then(node).flatten() {
                self.findings.push(findings::hot_return(node, r.return_c, s.return_c, s.hot_return_margin_k));
            }
        }
        // Pump operating point.
        if let (Some(pump), Some(rp)) = (sol.pump.as_mut(), self.return_props) {
            let m = flows[self.pump_link];
            let (rise, control_rise) = match &self.net.links[self.pump_link].law {
                LinkLaw::Pump { a0_pa, a1_pa_s_kg, a2_pa_s2_kg2, max_curve_pa, linear_beyond_kg_s } => {
                    let law = [*a0_pa, *a1_pa_s_kg, *a2_pa_s2_kg2];
                    let rise = solver::pump_rise_and_slope(law, *max_curve_pa, *linear_beyond_kg_s, m).0;
                    (rise, solver::pump_rise_and_slope(law, None, *linear_beyond_kg_s, m).0)
                }
                LinkLaw::Pipe(_) | LinkLaw::Quadratic { .. } => (0.0, 0.0),
            };
            pump.operating_flow_m3_h = m / rp.density_kg_m3 * 3600.0;
            pump.operating_head_pa = rise;
            pump.hydraulic_power_w =
                crate::pump::hydraulic_power_w(pump.operating_flow_m3_h.max(0.0), (rise / 1000.0).max(0.0))
                    .unwrap_or(0.0);
            // A controlled pump whose set-point its curve cannot give runs
            // on the curve, below the set-point.
            pump.on_max_curve = !matches!(pump.control, PumpControl::FixedSpeed) && rise < control_rise * (1.0 - 1e-6);
            if pump.on_max_curve {
                let source = self.source.unwrap_or(NodeId(0));
                self.findings.push(findings::pump_on_max_curve(
                    source,
                    pump.operating_flow_m3_h,
                    rise / 1000.0,
                    control_rise / 1000.0,
                ));
            }
        }
        // Velocity over limit on the real flows.
        // Both sides: a return over its limit is as noisy as a supply.
        for pr in &sol.pipes {
            if pr.velocity_m_s > pr.velocity_limit_m_s * 1.0001 {
                self.findings.push(findings::velocity_over_limit(
                    pr.run,
                    if pr.side == Side::Supply { "" } else { " return" },
                    pr.velocity_m_s,
                    pr.size,
                    pr.class,
                    pr.velocity_limit_m_s,
                ));
            }
        }
    }
}

/// A pipe sized with the conservative friction law operates on the
/// continuous one (smooth for Newton).
pub(super) fn to_operating_law(k: &mut HydLink) {
    if let LinkLaw::Pipe(h) = &mut k.law
        && h.friction_law == FrictionLaw::ColebrookWhiteConservative
    {
        h.friction_law = FrictionLaw::ColebrookWhite;
    }
}

/// Fill the flow-dependent pipe results from link flows. `drops_pa`, when
/// given, are the link laws already evaluated at `flows` (the solver's last
/// evaluation): the pipe's Δp is taken from there and its friction gradient
/// follows by removing the local losses, without evaluating the friction
/// factor again.
pub(super) fn fill_pipe_flows(sol: &mut Solution, net: &HydraulicNetwork, flows: &[f64], drops_pa: Option<&[f64]>) {
    for pr in &mut sol.pipes {
        let m = flows.get(pr.link).copied().unwrap_or(0.0);
        pr.flow_kg_s = m;
        if let Some(HydLink { law: LinkLaw::Pipe(h), .. }) = net.links.get(pr.link) {
            pr.flow_l_h = m.abs() / h.density_kg_m3 * 3.6e6;
            pr.velocity_m_s = h.velocity_m_s(m).abs();
            if let Some(&dp) = drops_pa.and_then(|d| d.get(pr.link)) {
                // Δp = (f·L/D + Σζ)·ρv²/2: the friction part per metre.
                let area = h.flow_area_m2();
                let local = h.zeta_sum * m * m / (2.0 * h.density_kg_m3 * area * area);
                pr.gradient_pa_m = (dp.abs() - local).max(0.0) / h.length_m;
                pr.dp_pa = dp;
            } else {
                pr.gradient_pa_m = friction_gradient_pa_m(h, m.abs());
                pr.dp_pa = pipe_dp(h, m).0;
            }
        }
    }
}
