//! Balancing devices on runs ([`crate::project::BranchDevice`]): each one
//! makes the branch its run feeds a *zone* whose emitters are balanced
//! against the zone's own pressure difference instead of the pump's.
//!
//! - **Size** (with the size stage): a device without a given model gets
//!   the smallest of its catalog that passes the branch's design flow, and
//!   its link the law of the device fully open, so the design pressures and
//!   the index circuit include it.
//! - **Balance**: the zone needs `zone_need` at its entry (its own index
//!   circuit with the index valve at the minimum valve Δp). A static
//!   balancing valve takes the rest of what the pump leaves at the entry, to
//!   the nearest step of its handwheel; its emitters balance against what
//!   remains. A Δp controller's set-point is chosen so that it holds
//!   `zone_need` at its design opening; its emitters balance against that.
//! - **Operate**: a controller is a controlled element, its state decided in
//!   an outer loop around the Newton solve ([`MAX_REGULATION_ROUNDS`]
//!   rounds): *regulating* — its resistance is set so that the branch's Δp
//!   equals what it holds at its opening (its proportional law), estimated
//!   from the last solve with the outside pressure difference and the
//!   branch's quadratic law (`held_resistance`), then solved again, the
//!   rounds' steps mixed by Anderson acceleration (`super::accel`);
//!   *saturated* — fully open at
//!   Kvs when the pump leaves less than that (a finding names the missing
//!   Δp); *closed* — when its branch draws nothing. The states are checked
//!   for consistency when the loop ends.

use super::findings;
use super::results::{DeviceResult, DeviceState, Solution};
use super::state::{Derivation, DeviceData};
use crate::controllers;
use crate::network::LinkLaw;
use crate::project::{BranchDevice, DesignSettings, Mode};
use crate::valves::{self, ValveFamily, ValveKind};

/// Half the step a Δp controller's set-point is shown and set in (0.1 kPa),
/// Pa.
const SETPOINT_HALF_STEP_PA: f64 = 50.0;

/// Most regulation rounds (solves) of the controllers' outer loop.
pub const MAX_REGULATION_ROUNDS: usize = 40;

/// A controller's held Δp is met when within this of its target, Pa (or
/// 1e-4 of the target, whichever is larger).
pub const HELD_DP_TOLERANCE_PA: f64 = 1.0;

/// Below this flow a controller's branch draws nothing, kg/s.
const CLOSED_FLOW_KG_S: f64 = 1e-7;

/// The zone of each device: what the balance stage needs.
#[derive(Debug, Clone, Default)]
pub(super) struct Zones {
    /// Device of each emitter (index into `Derivation::devices`), by index
    /// into `Derivation::emitters`.
    pub(super) of_emitter: Vec<Option<usize>>,
    /// Δp available to the emitters of each zone at design, Pa.
    pub(super) available_pa: Vec<f64>,
}

impl Zones {
    /// The rest of a circuit (all but its valve) inside zone `d`: from the
    /// zone's entry supply to the device's inlet, given its whole rest
    /// `rest_pa` from the pump outlet to the suction.
    pub(super) fn rest_in(&self, d: usize, rest_pa: f64, src_dp: f64, p_node: &[f64], devices: &[DeviceData]) -> f64 {
        let dev = &devices[d];
        rest_pa - src_dp + p_node[dev.entry_supply] - p_node[dev.inlet]
    }
}

/// The smallest balancing valve family whose fully open Kv passes
/// `flow_m3_h` with at most [`controllers::SIZING_DP_AT_KVS_PA`], else the
/// largest.
fn size_balancing_valve(flow_m3_h: f64, density_kg_m3: f64) -> Option<&'static ValveFamily> {
    let mut all = valves::families_of_kind(ValveKind::Balancing).ok()?;
    all.sort_by(|a, b| a.kvs_fully_open.total_cmp(&b.kvs_fully_open));
    all.iter()
        .copied()
        .find(|f| {
            valves::dp_pa_from_kv(flow_m3_h, f.kvs_fully_open, density_kg_m3)
                .is_ok_and(|dp| dp <= controllers::SIZING_DP_AT_KVS_PA)
        })
        .or_else(|| all.last().copied())
}

fn r_of(kv: f64, rho: f64) -> f64 {
    valves::resistance_r_pa_s2_kg2(kv, rho).unwrap_or(0.0)
}

impl Derivation<'_> {
    /// Size every device and give its link the law fully open.
    pub(super) fn size_devices(&mut self) {
        let Some(rp) = self.return_props else { return };
        let rho = rp.density_kg_m3;
        for i in 0..self.devices.len() {
            let m = self.design_flows.get(self.devices[i].link).copied().unwrap_or(0.0).abs();
            let q_m3_h = m / rho * 3600.0;
            self.devices[i].flow_kg_s = m;
            let run = self.devices[i].run;
            let law_kv = match self.devices[i].device.clone() {
                BranchDevice::BalancingValve { family, .. } => {
                    let f = match family {
                        Some(id) => valves::valve_family(&id).ok(),
                        None => size_balancing_valve(q_m3_h, rho),
                    };
                    if f.is_none() {
                        self.findings.push(findings::device_model_unknown(run, "balancing valve"));
                    }
                    self.devices[i].valve = f;
                    f.map(|f| f.kvs_fully_open)
                }
                BranchDevice::DpController { family, .. } => {
                    let f = match family {
                        Some(id) => controllers::dp_controller(&id).ok(),
                        None => controllers::size_dp_controller(q_m3_h, rho).ok(),
                    };
                    if f.is_none() {
                        self.findings.push(findings::device_model_unknown(run, "Δp controller"));
                    }
                    self.devices[i].controller = f;
                    f.map(|f| f.kvs_m3_h)
                }
            };
            let r = law_kv.map_or(0.0, |kv| r_of(kv, rho));
            let link = self.devices[i].link;
            self.net.links[link].law = LinkLaw::Quadratic { r_pa_s2_kg2: r };
        }
    }

    /// The zones of the devices and what each leaves its emitters at design
    /// flow; the devices' settings, set-points and operating laws; their
    /// design results in `sol.devices`.
    ///
    /// `p_node`: design pressures; `rest_pa`, `open_valve_pa`: each
    /// emitter's circuit Δp without its valve and of its valve fully open
    /// (design flow, whole circuit); `available`: the pump's head at design
    /// flow; `src_dp`: the source's Δp at design flow.
    #[allow(clippy::too_many_arguments)] // reason: the design pressures and circuits the zones are made from
    pub(super) fn balance_devices(
        &mut self,
        s: &DesignSettings,
        p_node: &[f64],
        rest_pa: &[f64],
        open_valve_pa: &[f64],
        available: f64,
        src_dp: f64,
        sol: &mut Solution,
    ) -> Zones {
        let mut zones =
            Zones { of_emitter: vec![None; self.emitters.len()], available_pa: vec![0.0; self.devices.len()] };
        if self.devices.is_empty() {
            return zones;
        }
        let Some(rp) = self.return_props else { return zones };
        let rho = rp.density_kg_m3;
        // Emitters of each zone (their nodes downstream of the device's run).
        let slot_of: std::collections::HashMap<crate::project::NodeId, usize> =
            self.emitters.iter().enumerate().map(|(i, e)| (e.id, i)).collect();
        let mut order: Vec<usize> = (0..self.devices.len()).collect();
        order.sort_by_key(|&d| self.devices[d].run);
        let mut members: Vec<usize> = Vec::new();
        for d in order {
            let dev = self.devices[d].clone();
            members.clear();
            for n in self.topo.subtree(dev.down) {
                if let Some(&i) = slot_of.get(&n) {
                    zones.of_emitter[i] = Some(d);
                    members.push(i);
                }
            }
            // The zone's own index circuit: the most its circuits need at
            // its entry, the valve taking at least its minimum (over its
            // own emitters, not a scan of the building's per device).
            let need = members
                .iter()
                .copied()
                .filter(|&i| self.emitters[i].flow_kg_s > 0.0)
                .map(|i| {
                    zones.rest_in(d, rest_pa[i], src_dp, p_node, &self.devices)
                        + open_valve_pa[i].max(s.min_valve_dp_pa)
                })
                .fold(0.0_f64, f64::max);
            let outside = src_dp - p_node[dev.entry_supply] + p_node[dev.entry_return];
            let entry = available - outside;
            let m = dev.flow_kg_s;
            let q_m3_h = m / rho * 3600.0;
            let mut result = DeviceResult {
                run: dev.run,
                branch: dev.down,
                kind: dev.device.name(),
                family: String::new(),
                setting: String::new(),
                setpoint_kpa: 0.0,
                kv_m3_h: 0.0,
                design_flow_l_h: q_m3_h * 1000.0,
                design_dp_pa: 0.0,
                branch_dp_pa: need,
                flow_l_h: 0.0,
                dp_pa: 0.0,
                held_dp_pa: 0.0,
                state: DeviceState::Fixed,
                flow_deviation: 0.0,
            };
            let link = dev.link;
            match (&dev.device, dev.valve, dev.controller) {
                (BranchDevice::BalancingValve { setting, .. }, Some(f), _) => {
                    result.family.clone_from(&f.name);
                    let chosen = match setting {
                        Some(label) => f.settings.iter().find(|st| st.label == *label).or_else(|| {
                            self.findings.push(findings::presetting_unknown_on_run(dev.run, label, &f.name));
                            f.settings.last()
                        }),
                        None if m > 0.0 && entry - need > 0.0 => {
                            let kv = valves::kv_needed(q_m3_h, entry - need, rho).unwrap_or(f.kvs_fully_open);
                            valves::choose_setting(f, kv).ok().and_then(|c| f.settings.get(c.index))
                        }
                        None => f.settings.last(),
                    };
                    if let Some(st) = chosen {
                        result.setting.clone_from(&st.label);
                        result.kv_m3_h = st.kv_m3_h;
                        let r = r_of(st.kv_m3_h, rho);
                        result.design_dp_pa = r * m * m;
                        self.net.links[link].law = LinkLaw::Quadratic { r_pa_s2_kg2: r };
                    }
                    zones.available_pa[d] = entry - result.design_dp_pa;
                }
                (BranchDevice::DpController { setpoint_kpa, .. }, _, Some(f)) => {
                    result.family.clone_from(&f.name);
                    result.kv_m3_h = f.kvs_m3_h;
                    // Design opening: the controller takes what the pump
                    // leaves above the branch's need (at least its Kvs drop).
                    let dp_dev = (entry - need).max(r_of(f.kvs_m3_h, rho) * m * m);
                    let kv_design = if dp_dev > 0.0 && m > 0.0 {
                        valves::kv_needed(q_m3_h, dp_dev, rho).unwrap_or(f.kvs_m3_h).min(f.kvs_m3_h)
                    } else {
                        f.kvs_m3_h
                    };
                    let sp_pa = match (setpoint_kpa, s.mode) {
                        (Some(kpa), _) => kpa * 1000.0,
                        (None, Mode::DesignFollowsLayout | Mode::Installed) => {
                            // Held at the design opening = the branch's need.
                            need - f.proportional_band_kpa * 1000.0 * (1.0 - kv_design / f.kvs_m3_h)
                        }
                    };
                    let lo = f.setpoint_min_kpa * 1000.0;
                    let hi = f.setpoint_max_kpa * 1000.0;
                    // A need within half the set-point's 0.1 kPa step of
                    // the lowest set-point is that set-point: no note.
                    if sp_pa < lo - SETPOINT_HALF_STEP_PA {
                        self.findings.push(findings::setpoint_below_range(dev.run, &f.name, sp_pa, lo));
                    } else if sp_pa > hi {
                        self.findings.push(findings::setpoint_out_of_range(dev.run, &f.name, sp_pa, lo, hi));
                    }
                    let sp_pa = sp_pa.clamp(lo, hi);
                    self.devices[d].setpoint_pa = sp_pa;
                    result.setting = format!("{:.1} kPa", sp_pa / 1000.0);
                    result.setpoint_kpa = sp_pa / 1000.0;
                    result.design_dp_pa = dp_dev;
                    result.branch_dp_pa = f.held_dp_pa(sp_pa, kv_design);
                    result.state = DeviceState::Regulating;
                    let r = if m > 0.0 { (dp_dev / (m * m)).max(r_of(f.kvs_m3_h, rho)) } else { r_of(f.kvs_m3_h, rho) };
                    self.net.links[link].law = LinkLaw::Quadratic { r_pa_s2_kg2: r };
                    zones.available_pa[d] = result.branch_dp_pa;
                }
                _ => zones.available_pa[d] = entry,
            }
            self.devices[d].result = sol.devices.len();
            sol.devices.push(result);
        }
        zones
    }

    /// One round of the controllers' outer loop after a solve. Returns true,
    /// changing nothing, when every regulating controller's branch Δp is
    /// within tolerance of what it holds; otherwise moves **every**
    /// regulating controller to its held resistance ([`held_resistance`]),
    /// also those already within tolerance, and returns false.
    ///
    /// Moving all of them keeps the round a continuous map of the openings
    /// (what Anderson mixing, `super::accel`, assumes): a controller left
    /// where it was because it sat just inside the tolerance drifts out of
    /// it as the others move, and the loop then chases errors of about the
    /// tolerance one controller at a time (16 solves instead of 6 on the
    /// generated 200,000-emitter building, docs/benchmarks.md).
    pub(super) fn regulate(&mut self, flows: &[f64], pressures: &[f64]) -> bool {
        let Some(rp) = self.return_props else { return true };
        let rho = rp.density_kg_m3;
        let mut settled = true;
        let mut moves = Vec::new();
        for dev in &self.devices {
            let Some(f) = dev.controller else { continue };
            let (Some(&m), Some(&p_s), Some(&p_x), Some(&p_r)) = (
                flows.get(dev.link),
                pressures.get(dev.entry_supply),
                pressures.get(dev.inlet),
                pressures.get(dev.entry_return),
            ) else {
                continue;
            };
            let LinkLaw::Quadratic { r_pa_s2_kg2: r } = self.net.links[dev.link].law else { continue };
            if m.abs() < CLOSED_FLOW_KG_S {
                continue;
            }
            let r_kvs = r_of(f.kvs_m3_h, rho);
            let branch = p_s - p_x; // what the branch gets
            let outside = p_s - p_r; // branch + device
            let kv = kv_of(r, rho);
            let target = f.held_dp_pa(dev.setpoint_pa, kv);
            let tol = self.held_dp_tolerance_pa.max(1e-4 * target);
            let at_kvs = r <= r_kvs * (1.0 + 1e-9);
            if at_kvs && branch < target {
                continue;
            }
            let r_new = held_resistance(f, dev.setpoint_pa, m, branch, outside, rho).max(r_kvs);
            if (r_new - r).abs() > 1e-12 * r.max(1.0) {
                moves.push((dev.link, r_new));
                settled &= (branch - target).abs() <= tol;
            }
        }
        if !settled {
            for (link, r) in moves {
                self.net.links[link].law = LinkLaw::Quadratic { r_pa_s2_kg2: r };
            }
        }
        settled
    }

    /// The controllers whose link is a quadratic resistance (the ones the
    /// outer loop regulates), in device order: their links, models and
    /// present resistances.
    fn regulated_links(
        &self,
    ) -> impl Iterator<Item = (usize, &'static crate::controllers::DpControllerFamily, f64)> + '_ {
        self.devices.iter().filter_map(|d| match (d.controller, &self.net.links[d.link].law) {
            (Some(f), &LinkLaw::Quadratic { r_pa_s2_kg2 }) => Some((d.link, f, r_pa_s2_kg2)),
            _ => None,
        })
    }

    /// The regulated controllers' log-resistances, in the order of
    /// [`Self::regulated_links`] (the iterate of the outer loop, see
    /// [`super::accel`]).
    pub(super) fn controller_log_r(&self) -> Vec<f64> {
        self.regulated_links().map(|(_, _, r)| r.max(f64::MIN_POSITIVE).ln()).collect()
    }

    /// Set the controllers' resistances from log-resistances in the order
    /// of [`Self::controller_log_r`], none below its resistance at Kvs.
    pub(super) fn set_controller_log_r(&mut self, x: &[f64]) {
        let Some(rp) = self.return_props else { return };
        let targets: Vec<(usize, f64)> = self
            .regulated_links()
            .zip(x)
            .map(|((link, f, _), &v)| (link, v.exp().max(r_of(f.kvs_m3_h, rp.density_kg_m3))))
            .collect();
        for (link, r) in targets {
            self.net.links[link].law = LinkLaw::Quadratic { r_pa_s2_kg2: r };
        }
    }

    /// The devices' operating results, their states and findings.
    pub(super) fn device_results(&mut self, s: &DesignSettings, flows: &[f64], pressures: &[f64], sol: &mut Solution) {
        let Some(rp) = self.return_props else { return };
        let rho = rp.density_kg_m3;
        let installed = s.mode == Mode::Installed;
        for dev in &self.devices {
            let Some(res) = sol.devices.get_mut(dev.result) else { continue };
            let m = flows.get(dev.link).copied().unwrap_or(0.0);
            let p = |n: usize| pressures.get(n).copied().unwrap_or(0.0);
            res.flow_l_h = m / rho * 3.6e6;
            res.dp_pa = p(dev.inlet) - p(dev.entry_return);
            res.held_dp_pa = p(dev.entry_supply) - p(dev.inlet);
            res.flow_deviation = if dev.flow_kg_s > 0.0 { m / dev.flow_kg_s - 1.0 } else { 0.0 };
            if let Some(f) = dev.controller {
                let r = match self.net.links[dev.link].law {
                    LinkLaw::Quadratic { r_pa_s2_kg2 } => r_pa_s2_kg2,
                    LinkLaw::Pipe(_) | LinkLaw::Pump { .. } => 0.0,
                };
                let target = f.held_dp_pa(dev.setpoint_pa, kv_of(r, rho));
                res.state = if m.abs() < CLOSED_FLOW_KG_S {
                    DeviceState::Closed
                } else if r <= r_of(f.kvs_m3_h, rho) * (1.0 + 1e-9)
                    && res.held_dp_pa < target - HELD_DP_TOLERANCE_PA.max(1e-4 * target)
                {
                    DeviceState::Saturated
                } else {
                    DeviceState::Regulating
                };
                if res.state == DeviceState::Saturated {
                    self.findings.push(findings::controller_saturated(dev.run, &f.name, target, res.held_dp_pa));
                }
            } else if m.abs() > CLOSED_FLOW_KG_S
                && dev.flow_kg_s > 0.0
                && res.flow_deviation.abs() > s.flow_tolerance_fraction
            {
                self.findings.push(findings::device_flow_out_of_tolerance(
                    dev.run,
                    res.kind,
                    res.flow_l_h,
                    res.design_flow_l_h,
                    res.flow_deviation,
                    s.flow_tolerance_fraction,
                    installed,
                ));
            }
        }
    }
}

/// The controller's resistance at which it holds what its law asks, with
/// the outside difference `outside_pa` (branch + controller) as it stands
/// and the branch a quadratic resistance through its present point
/// (`m_kg_s` at `branch_pa`), Pa·s²/kg².
///
/// Solves B = Δp_held(Kv(B)) for the branch's Δp B, where the branch then
/// passes m(B) = m·√(B / branch) and the controller takes the rest,
/// Kv(B) from r = (outside − B) / m(B)²: the proportional band (the held Δp
/// rises as the controller closes) is inside the equation, so one round
/// lands where the controller's law and the branch agree, not where the
/// old opening's set-point was. B − Δp_held is increasing in B (a larger B
/// opens the controller, which lowers what it holds), so a bracketed
/// Newton iteration finds the root. When even fully open (Kv ≥ Kvs) the
/// branch would get less than the set-point, returns 0 (the caller clamps
/// to the resistance at Kvs).
fn held_resistance(
    f: &crate::controllers::DpControllerFamily,
    setpoint_pa: f64,
    m_kg_s: f64,
    branch_pa: f64,
    outside_pa: f64,
    rho: f64,
) -> f64 {
    let (o, b0) = (outside_pa, branch_pa.max(1e-9));
    if o <= 0.0 {
        return 0.0;
    }
    // kv(B) = a · √(B / (O − B)), with a = √(K)·c and r = K / kv².
    let k = valves::PA_PER_BAR * 3600.0 * 3600.0 / (valves::RHO_REF_KG_M3 * rho);
    let c2 = m_kg_s * m_kg_s / b0; // m² per Pa of branch Δp
    let a = (k * c2).sqrt();
    let kvs = f.kvs_m3_h;
    let band = f.proportional_band_kpa * 1000.0;
    // Fully open at B_open (kv = Kvs); there the controller holds its
    // set-point.
    let b_open = o * kvs * kvs / (a * a + kvs * kvs);
    if b_open <= setpoint_pa {
        return 0.0;
    }
    let g = |b: f64| -> (f64, f64) {
        let ratio = b / (o - b);
        let kv = a * ratio.sqrt();
        let held = setpoint_pa + band * (1.0 - kv / kvs);
        let dkv = 0.5 * a / ratio.sqrt() * o / ((o - b) * (o - b));
        (b - held, 1.0 + band / kvs * dkv)
    };
    let (mut lo, mut hi) = (0.0, b_open);
    let mut b = b0.clamp(0.5 * b_open.min(setpoint_pa), b_open);
    for _ in 0..60 {
        let (gb, dg) = g(b);
        if gb.abs() <= 1e-9 * setpoint_pa.max(1.0) {
            break;
        }
        if gb > 0.0 {
            hi = b;
        } else {
            lo = b;
        }
        let step = b - gb / dg;
        b = if step > lo && step < hi && dg.is_finite() { step } else { 0.5 * (lo + hi) };
    }
    (o - b) / (c2 * b)
}

/// Effective Kv of a quadratic resistance, m³/h (inverse of
/// [`valves::resistance_r_pa_s2_kg2`]).
fn kv_of(r_pa_s2_kg2: f64, rho: f64) -> f64 {
    if r_pa_s2_kg2 <= 0.0 {
        return f64::INFINITY;
    }
    (valves::PA_PER_BAR * 3600.0 * 3600.0 / (valves::RHO_REF_KG_M3 * rho * r_pa_s2_kg2)).sqrt()
}
