//! The valves of one emitter: the presetting and the lockshield setting
//! chosen together ([`valves::choose_trim`]) or checked where fixed, their
//! Δp at design flow, the valve's authority and the trim's findings. Used
//! by the balance stage and by the commissioning rounds.

use smol_str::SmolStr;

use super::SolveOptions;
use super::Workspace;
use super::findings::{self, FindingKind};
use super::results::EmitterResult;
use super::state::Derivation;
use crate::project::{DesignSettings, Mode, Node};
use crate::valves::{self, ValveFamily};

/// An emitter's valves and what of them is fixed.
pub(super) struct Settings<'a> {
    /// The presetting valve's family.
    pub(super) valve: &'static ValveFamily,
    /// The lockshield's family.
    pub(super) lockshield: Option<&'static ValveFamily>,
    /// Fixed presetting and lockshield setting labels.
    pub(super) fixed: (Option<&'a str>, Option<&'a str>),
    /// Design mode.
    pub(super) mode: Mode,
}

/// Kv the valve needs in series with a lockshield of `lock_kv` for the pair
/// to give `pair_kv`, m³/h (0 when the lockshield alone is tighter).
pub(super) fn valve_kv_needed(pair_kv: f64, lock_kv: f64) -> f64 {
    let inv = 1.0 / (pair_kv * pair_kv) - 1.0 / (lock_kv * lock_kv);
    if inv > 0.0 { 1.0 / inv.sqrt() } else { 0.0 }
}

/// What the presetting of one emitter needs to know of its circuit.
pub(super) struct CircuitInputs {
    /// Head available for balancing (pump at design flow), Pa.
    pub(super) available_pa: f64,
    /// Circuit Δp without the valve, Pa.
    pub(super) rest_pa: f64,
    /// The emitter's own resistances in series with the valve, Pa.
    pub(super) own_rest_pa: f64,
    /// Δp of the lockshield fully open at design flow (part of both rests
    /// above), Pa.
    pub(super) lock_open_pa: f64,
    /// Mean water density of the valve, kg/m³.
    pub(super) rho_mean: f64,
    /// Design volume flow, m³/h.
    pub(super) q_m3_h: f64,
    /// Node slot (message cache).
    pub(super) slot: usize,
}

impl Derivation<'_> {
    /// Choose (or check the fixed) presetting and lockshield setting of one
    /// emitter ([`valves::choose_trim`]), fill its valve results in `r` and
    /// return the Kv of the valve and of the lockshield.
    #[allow(clippy::too_many_arguments)] // reason: the emitter, its valves, its circuit and where the results go
    pub(super) fn trim(
        &mut self,
        node: &Node,
        name: &str,
        set: &Settings<'_>,
        c: &CircuitInputs,
        s: &DesignSettings,
        opts: &SolveOptions,
        ws: &mut Workspace,
        r: &mut EmitterResult,
    ) -> (f64, f64) {
        let family = set.valve;
        let lock_open = set.lockshield.and_then(|l| l.settings.last());
        let mut valve_kv = family.settings.last().map_or(1.0, |st| st.kv_m3_h);
        let mut lock_kv = lock_open.map_or(f64::INFINITY, |st| st.kv_m3_h);
        let dp_pair = c.available_pa - c.rest_pa + c.lock_open_pa;
        let own_rest = (c.own_rest_pa - c.lock_open_pa).max(0.0);
        let need = valves::TrimNeed {
            flow_m3_h: c.q_m3_h,
            dp_pair_pa: dp_pair,
            dp_own_rest_pa: own_rest,
            density_kg_m3: c.rho_mean,
            tolerance_fraction: s.flow_tolerance_fraction,
            authority_dp_pa: valves::AUTHORITY_WARN_BELOW * c.available_pa,
        };
        let valve_step = |label: &str| family.settings.iter().position(|st| st.label == label);
        let lock_step = |label: &str| set.lockshield.and_then(|l| l.settings.iter().position(|st| st.label == label));
        match set.fixed {
            // Both fixed (installed), or a fixed presetting in installed mode
            // with a lockshield left open by an older build.
            (Some(label), lock) if lock.is_some() || set.mode == Mode::Installed || opts.continuous_presetting => {
                if let Some(i) = valve_step(label) {
                    valve_kv = family.settings[i].kv_m3_h;
                    r.presetting = label.into();
                } else if let Some(pos) =
                    label.parse::<f64>().ok().filter(|_| opts.continuous_presetting || set.mode == Mode::Installed)
                    && let Ok(kv) = valves::kv_at_continuous_setting(family, pos)
                {
                    valve_kv = kv;
                    r.presetting = label.into();
                } else {
                    self.findings.push(findings::presetting_unknown(node, label, &family.name));
                }
                if let Some(l) = lock {
                    match (lock_step(l), set.lockshield) {
                        (Some(i), Some(fam)) => {
                            lock_kv = fam.settings[i].kv_m3_h;
                            r.lockshield = l.into();
                        }
                        (_, fam) => {
                            let fam = fam.map_or("its lockshield family", |f| f.name.as_str());
                            self.findings.push(findings::lockshield_setting_unknown(node, l, fam));
                        }
                    }
                }
                if dp_pair > 0.0 {
                    let pair = 1.0 / (1.0 / (valve_kv * valve_kv) + 1.0 / (lock_kv * lock_kv)).sqrt();
                    let needed = valves::kv_needed(c.q_m3_h, dp_pair, c.rho_mean).unwrap_or(pair);
                    r.presetting_flow_error =
                        valves::flow_ratio_in_circuit(pair, needed, dp_pair, own_rest).map_or(0.0, |x| x - 1.0);
                    r.kv_needed_m3_h = valve_kv_needed(needed, lock_kv);
                }
            }
            (_, _) if dp_pair <= 0.0 => {
                r.presetting = family.settings.last().map_or_else(SmolStr::default, |st| st.label.as_str().into());
                self.findings.push(findings::valve_cannot_deliver(node));
            }
            (None, _) if opts.continuous_presetting => {
                let dp_valve = dp_pair - c.lock_open_pa;
                let kv_needed = valves::kv_needed(c.q_m3_h, dp_valve.max(1e-9), c.rho_mean).unwrap_or(valve_kv);
                r.kv_needed_m3_h = kv_needed;
                let pos = valves::continuous_setting_for_kv(family, kv_needed).unwrap_or(0.0);
                valve_kv = valves::kv_at_continuous_setting(family, pos).unwrap_or(kv_needed);
                r.presetting = format!("{pos:.3}").into();
            }
            (fixed_valve, _) => {
                let Some(lock_family) = set.lockshield else {
                    return (valve_kv, lock_kv);
                };
                let fixed_ix = fixed_valve.and_then(valve_step);
                if let Some(label) = fixed_valve.filter(|_| fixed_ix.is_none()) {
                    self.findings.push(findings::presetting_unknown(node, label, &family.name));
                }
                match valves::choose_trim_with(family, lock_family, &need, fixed_ix) {
                    Ok(t) => {
                        valve_kv = t.valve_kv_m3_h;
                        lock_kv = t.lockshield_kv_m3_h;
                        r.presetting = family.settings[t.valve_index].label.as_str().into();
                        r.lockshield = lock_family.settings[t.lockshield_index].label.as_str().into();
                        r.presetting_flow_error = t.flow_error_fraction;
                        r.kv_needed_m3_h = valve_kv_needed(t.pair_kv_needed_m3_h, lock_kv);
                        self.trim_findings(node, name, family, lock_family, &t, r, s, c.slot, ws);
                    }
                    Err(err) => self.findings.push(findings::presetting_failed(node, &err)),
                }
            }
        }
        self.valve_results(node, name, (valve_kv, lock_kv), c.rho_mean, c.available_pa, c.slot, ws, r);
        (valve_kv, lock_kv)
    }

    /// The valve's and the lockshield's own Δp at design flow with their
    /// settings (what the commissioning engineer reads across each), the
    /// valve's authority and its finding.
    #[allow(clippy::too_many_arguments)] // reason: the emitter, its two Kv, its circuit and the message cache
    pub(super) fn valve_results(
        &mut self,
        node: &Node,
        name: &str,
        (valve_kv, lock_kv): (f64, f64),
        rho_mean: f64,
        available_pa: f64,
        slot: usize,
        ws: &mut Workspace,
        r: &mut EmitterResult,
    ) {
        let m = r.design_flow_kg_s;
        r.valve_dp_pa = valves::resistance_r_pa_s2_kg2(valve_kv, rho_mean).unwrap_or(0.0) * m * m;
        r.lockshield_dp_pa = if lock_kv.is_finite() {
            valves::resistance_r_pa_s2_kg2(lock_kv, rho_mean).unwrap_or(0.0) * m * m
        } else {
            0.0
        };
        if r.valve_dp_pa > 0.0 && available_pa > 0.0 {
            r.authority = (r.valve_dp_pa / available_pa).min(1.0);
            if r.authority < valves::AUTHORITY_WARN_BELOW && !r.closed {
                let key = [u64::from(node.id.0), r.authority.to_bits(), 0, 0, 0];
                let kind = FindingKind::LowAuthority;
                let message = ws.messages.get(slot, kind, key, name, || {
                    findings::low_authority_text(node, r.authority, valves::AUTHORITY_WARN_BELOW)
                });
                self.findings.push(findings::Finding::warning(kind, findings::ItemRef::Node(node.id), message));
            }
        }
    }

    /// Findings of a trim that does not meet the tolerance.
    #[allow(clippy::too_many_arguments)] // reason: the emitter, its valves, the choice and the message cache
    pub(super) fn trim_findings(
        &mut self,
        node: &Node,
        name: &str,
        valve: &ValveFamily,
        lockshield: &ValveFamily,
        t: &valves::TrimChoice,
        r: &EmitterResult,
        s: &DesignSettings,
        slot: usize,
        ws: &mut Workspace,
    ) {
        let share = 1.0 + t.flow_error_fraction;
        let key = [
            u64::from(node.id.0),
            std::ptr::from_ref(valve).addr() as u64,
            t.pair_kv_needed_m3_h.to_bits(),
            t.pair_kv_m3_h().to_bits(),
            t.flow_error_fraction.to_bits(),
        ];
        let (kind, make): (FindingKind, Box<dyn FnOnce() -> String>) = match t.fit {
            valves::TrimFit::Within => return,
            valves::TrimFit::AboveLargest => (
                FindingKind::KvAboveLargest,
                Box::new(|| {
                    findings::kv_above_largest_text(node, t.pair_kv_needed_m3_h, &valve.name, t.pair_kv_m3_h(), share)
                }),
            ),
            valves::TrimFit::BelowSmallest => (
                FindingKind::KvBelowSmallest,
                Box::new(|| findings::kv_below_smallest_text(node, t.pair_kv_needed_m3_h, t.pair_kv_m3_h(), share)),
            ),
            valves::TrimFit::Coarse => (
                FindingKind::TrimOutOfReach,
                Box::new(|| {
                    findings::trim_out_of_reach_text(
                        node,
                        &valve.name,
                        &lockshield.name,
                        s.flow_tolerance_fraction,
                        &r.presetting,
                        &r.lockshield,
                        t.flow_error_fraction,
                    )
                }),
            ),
        };
        let message = ws.messages.get(slot, kind, key, name, make);
        self.findings.push(findings::Finding::warning(kind, findings::ItemRef::Node(node.id), message));
    }
}
