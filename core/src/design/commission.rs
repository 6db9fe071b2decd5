//! Stage 5 (design follows layout only), **commission**: the presettings
//! of the balance stage are predictions — each circuit's own resistances
//! are counted, the rest of the network is taken as a fixed pressure
//! difference. The operating solve shows where the network around a
//! circuit moved enough to push its flow outside the tolerance; for those
//! emitters the valve pair is chosen again from the pressure difference
//! the solve found at the circuit's branch point, and the network is solved
//! again — what a commissioning engineer does with a measuring instrument,
//! in at most [`MAX_PASSES`] rounds.

use super::Workspace;
use super::findings::{FindingKind, ItemRef};
use super::results::{EmitterResult, Solution};
use super::state::{Derivation, NONE};
use super::topology::Dense;
use crate::network::{GRAVITY_M_S2, LinkLaw};
use crate::project::{Mode, NodeId, NodeKind, Project};
use crate::valves::{self, TrimChoice};

/// Most re-trim rounds after the first operating solve (each one a warm
/// re-solve). Two suffice on the demo projects and generated buildings;
/// the third catches a circuit moved by its neighbours' re-trim.
pub const MAX_PASSES: usize = 3;

/// Finding kinds a re-trim replaces for the emitters it changes.
const TRIM_KINDS: [FindingKind; 4] =
    [FindingKind::KvAboveLargest, FindingKind::KvBelowSmallest, FindingKind::TrimOutOfReach, FindingKind::LowAuthority];

/// One emitter re-trimmed: its index into the results and the new choice.
pub(super) struct Retrim {
    result: usize,
    choice: TrimChoice,
    /// The emitter's valve-pair link, whose law the re-trim changed.
    pub(super) link: usize,
}

impl Derivation<'_> {
    /// The Δp available at design to the circuit of result `k` (its zone's
    /// behind a balancing device, else the pump's), Pa.
    fn circuit_available(&self, k: usize) -> f64 {
        self.circuit_available_pa.get(k).copied().unwrap_or(self.available_pa)
    }

    /// Choose the valve pair again for every emitter outside the tolerance
    /// whose valves the design chooses (not fixed by the user), from the
    /// operating solve's pressures; apply the new settings to the network
    /// and the results. Returns the re-trimmed emitters (empty: nothing to
    /// do, or nothing better to choose).
    pub(super) fn commission(
        &mut self,
        p: &Project,
        dn: &Dense<'_>,
        ws: &mut Workspace,
        sol: &mut Solution,
    ) -> Vec<Retrim> {
        let s = &p.settings;
        let mut out = Vec::new();
        if s.mode != Mode::DesignFollowsLayout || !sol.converged {
            return out;
        }
        let (Some(sp), Some(rp)) = (self.supply_props, self.return_props) else { return out };
        let rho_mean = 0.5 * (sp.density_kg_m3 + rp.density_kg_m3);
        let pressures = &sol.node_pressures_pa;
        for k in 0..sol.emitters.len() {
            let r = &sol.emitters[k];
            if r.closed || r.design_flow_kg_s <= 0.0 || r.flow_within_tolerance {
                continue;
            }
            let Some(e) = self.result_emitter.get(k).and_then(|&i| self.emitters.get(i)) else { continue };
            let (Some(valve), Some(lock)) = (e.valve, e.lockshield) else { continue };
            let fixed_by_user = match dn.node(e.id).map(|n| &n.kind) {
                Some(NodeKind::Emitter(em)) => em.valves.presetting.is_some() || em.valves.lockshield_setting.is_some(),
                Some(
                    NodeKind::Source(_)
                    | NodeKind::Junction
                    | NodeKind::Header(_)
                    | NodeKind::Circuit(_)
                    | NodeKind::Separator(_),
                )
                | None => true,
            };
            if fixed_by_user {
                continue;
            }
            // The circuit from its branch point: connection supply pipe,
            // valves, body, connection return pipe.
            let Some(tr) = self.topo.parent_run_of(e.id).and_then(|run| self.topo.tree_run(run)) else { continue };
            let Some((sj, rj)) = self.pair(tr.up) else { continue };
            let ri = self.topo.rix(tr.run);
            let (Some(&ls), Some(&lr)) = (self.supply_link.get(ri), self.return_link.get(ri)) else { continue };
            if ls == NONE || lr == NONE {
                continue;
            }
            let (Some(&p_sj), Some(&p_rj)) = (pressures.get(sj), pressures.get(rj)) else { continue };
            let m = r.design_flow_kg_s;
            let links = [ls, e.valves_link, e.body_link, lr];
            let statics: f64 = links
                .iter()
                .map(|&l| {
                    let k = &self.net.links[l];
                    k.density_kg_m3
                        * GRAVITY_M_S2
                        * (self.net.nodes[k.from].elevation_m - self.net.nodes[k.to].elevation_m)
                })
                .sum();
            let own: f64 = [ls, e.body_link, lr].iter().map(|&l| ws.link_dps.dp(l, &self.net.links[l].law, m)).sum();
            let dp_pair = p_sj - p_rj + statics - own;
            if dp_pair <= 0.0 {
                continue;
            }
            let need = valves::TrimNeed {
                flow_m3_h: r.design_flow_l_h / 1000.0,
                dp_pair_pa: dp_pair,
                dp_own_rest_pa: own,
                density_kg_m3: rho_mean,
                tolerance_fraction: s.flow_tolerance_fraction,
                authority_dp_pa: valves::AUTHORITY_WARN_BELOW * self.circuit_available(k),
            };
            let Ok(t) = valves::choose_trim(valve, lock, &need) else { continue };
            let same = *valve.settings[t.valve_index].label == *r.presetting
                && *lock.settings[t.lockshield_index].label == *r.lockshield;
            if same {
                continue;
            }
            let r = &mut sol.emitters[k];
            r.presetting = valve.settings[t.valve_index].label.as_str().into();
            r.lockshield = lock.settings[t.lockshield_index].label.as_str().into();
            r.valve_kv_m3_h = t.valve_kv_m3_h;
            r.lockshield_kv_m3_h = t.lockshield_kv_m3_h;
            r.presetting_flow_error = t.flow_error_fraction;
            r.kv_needed_m3_h = super::trim::valve_kv_needed(t.pair_kv_needed_m3_h, t.lockshield_kv_m3_h);
            let r_pair = valves::resistance_r_pa_s2_kg2(t.valve_kv_m3_h, rho_mean).unwrap_or(0.0)
                + valves::resistance_r_pa_s2_kg2(t.lockshield_kv_m3_h, rho_mean).unwrap_or(0.0);
            self.net.links[e.valves_link].law = LinkLaw::Quadratic { r_pa_s2_kg2: r_pair };
            out.push(Retrim { result: k, choice: t, link: e.valves_link });
        }
        out
    }

    /// Replace the trim findings (and the authority finding) of the
    /// re-trimmed emitters by those of their new settings.
    pub(super) fn retrim_findings(
        &mut self,
        p: &Project,
        dn: &Dense<'_>,
        ws: &mut Workspace,
        sol: &mut Solution,
        done: &[Retrim],
    ) {
        let items: Vec<NodeId> = done.iter().filter_map(|d| sol.emitters.get(d.result).map(|r| r.id)).collect();
        self.findings.retain(|f| {
            !(TRIM_KINDS.contains(&f.kind) && matches!(f.item, ItemRef::Node(n) if items.binary_search(&n).is_ok()))
        });
        let (Some(sp), Some(rp)) = (self.supply_props, self.return_props) else { return };
        let rho_mean = 0.5 * (sp.density_kg_m3 + rp.density_kg_m3);
        for d in done {
            let available = self.circuit_available(d.result);
            let Some(i) = self.result_emitter.get(d.result).copied() else { continue };
            let Some(e) = self.emitters.get(i) else { continue };
            let (Some(valve), Some(lock), id) = (e.valve, e.lockshield, e.id) else { continue };
            let Some(node) = dn.node(id) else { continue };
            let NodeKind::Emitter(em) = &node.kind else { continue };
            let slot = self.topo.nix(id);
            let Some(r) = sol.emitters.get_mut(d.result) else { continue };
            let mut r2: EmitterResult = r.clone();
            self.trim_findings(node, &em.name, valve, lock, &d.choice, &r2, &p.settings, slot, ws);
            let kvs = (d.choice.valve_kv_m3_h, d.choice.lockshield_kv_m3_h);
            self.valve_results(node, &em.name, kvs, rho_mean, available, slot, ws, &mut r2);
            *r = r2;
        }
    }
}
