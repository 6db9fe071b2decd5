//! What a [`super::Workspace`] remembers about each emitter between solves,
//! so that an edit re-evaluates only the emitters whose inputs changed: the
//! emitter's design (keyed by its model, load and design temperatures) and
//! its last operating point with the local slope of output and return
//! temperature against the flow (for the small flow changes a warm re-solve
//! brings to every emitter).

use std::sync::Arc;

use super::findings::FindingKind;
use super::{Side, SizeInputs};
use crate::emitters::{Characteristic, DesignTemperatures, EmitterDesign, EmitterModel, FlowOutput, InstalledEmitter};
use crate::error::PhysicsResult;
use crate::network::LinkLaw;
use crate::project::{NodeId, RunId};
use crate::water;

/// Largest relative flow change, |m − m₀|/m₀, over which an emitter's output
/// is carried from its cached operating point along the local slope instead
/// of solved again. The error of that first-order step is about
/// ½·(Δm/m)²·m²·|Q''|/Q ≲ 1e-8 of the output here (Q is smooth and
/// concave in m), far below the solver's own flow tolerance (1e-6).
pub const LINEAR_OUTPUT_MAX_RELATIVE_FLOW_CHANGE: f64 = 1e-4;

/// Largest node id (as an index) the per-emitter cache holds, relative to
/// the project's node count; ids beyond are simply not cached.
const ID_SPREAD: usize = 8;

/// The design of one emitter and the inputs it was made for.
#[derive(Debug)]
struct DesignEntry {
    model: EmitterModel,
    load_w: f64,
    temps: DesignTemperatures,
    design: PhysicsResult<Arc<EmitterDesign>>,
}

/// An operating point of one emitter: output and return temperature at a
/// flow, and their derivatives against the flow.
#[derive(Debug, Clone, Copy)]
struct OutputPoint {
    supply_c: f64,
    room_c: f64,
    flow_kg_s: f64,
    out: FlowOutput,
    d_output_w_per_kg_s: f64,
    d_return_c_per_kg_s: f64,
}

#[derive(Debug, Default)]
struct Entry {
    design: Option<DesignEntry>,
    point: Option<OutputPoint>,
}

/// Per-emitter cache, indexed by node id.
#[derive(Debug, Default)]
pub(super) struct EmitterCache {
    entries: Vec<Entry>,
}

impl EmitterCache {
    fn slot(&mut self, id: NodeId, node_count: usize) -> Option<&mut Entry> {
        let ix = id.0 as usize;
        if ix > ID_SPREAD * (node_count + 1024) {
            return None;
        }
        if ix >= self.entries.len() {
            // Room for every node id at once (ids run up to about the node
            // count): growing by doubling would copy the entries and keep
            // up to twice the room.
            self.entries.reserve_exact((ix + 1).max(node_count + 1).saturating_sub(self.entries.len()));
            self.entries.resize_with(ix + 1, Entry::default);
        }
        self.entries.get_mut(ix)
    }

    /// The design of emitter `id` (`model` at `load_w` and `temps`), from the
    /// cache when the inputs are exactly those of the last call.
    pub(super) fn design(
        &mut self,
        id: NodeId,
        node_count: usize,
        model: &EmitterModel,
        load_w: f64,
        temps: &DesignTemperatures,
    ) -> PhysicsResult<Arc<EmitterDesign>> {
        let Some(entry) = self.slot(id, node_count) else {
            return model.design(load_w, temps).map(Arc::new);
        };
        if let Some(d) = &entry.design
            && d.load_w.to_bits() == load_w.to_bits()
            && d.temps == *temps
            && d.model == *model
        {
            return d.design.clone();
        }
        let design = model.design(load_w, temps).map(Arc::new);
        entry.design = Some(DesignEntry { model: model.clone(), load_w, temps: *temps, design: design.clone() });
        // A new design is a new characteristic: the operating point goes.
        entry.point = None;
        design
    }

    /// Output and return temperature of emitter `id` (installed as `inst`,
    /// designed through [`Self::design`]) at mass flow `flow_kg_s`: the
    /// cached point when the flow is the same, a first-order step from it
    /// when the flow moved by at most
    /// [`LINEAR_OUTPUT_MAX_RELATIVE_FLOW_CHANGE`], else the full solve of
    /// [`InstalledEmitter::output_at_flow`] (which becomes the new point).
    pub(super) fn output_at_flow(
        &mut self,
        id: NodeId,
        node_count: usize,
        inst: &InstalledEmitter,
        flow_kg_s: f64,
        supply_c: f64,
        room_c: f64,
    ) -> PhysicsResult<FlowOutput> {
        let Some(entry) = self.slot(id, node_count) else {
            return inst.output_at_flow(flow_kg_s, supply_c, room_c);
        };
        if let Some(pt) = &entry.point
            && pt.supply_c.to_bits() == supply_c.to_bits()
            && pt.room_c.to_bits() == room_c.to_bits()
            && flow_kg_s > 0.0
        {
            let dm = flow_kg_s - pt.flow_kg_s;
            if dm == 0.0 {
                return Ok(pt.out);
            }
            if dm.abs() <= LINEAR_OUTPUT_MAX_RELATIVE_FLOW_CHANGE * pt.flow_kg_s {
                return Ok(FlowOutput {
                    output_w: pt.out.output_w + pt.d_output_w_per_kg_s * dm,
                    return_c: pt.out.return_c + pt.d_return_c_per_kg_s * dm,
                });
            }
        }
        let out = inst.output_at_flow(flow_kg_s, supply_c, room_c)?;
        entry.point = slopes(inst, flow_kg_s, supply_c, room_c, out).map(|(dq, dr)| OutputPoint {
            supply_c,
            room_c,
            flow_kg_s,
            out,
            d_output_w_per_kg_s: dq,
            d_return_c_per_kg_s: dr,
        });
        Ok(out)
    }
}

/// dQ/dm and dθr/dm at a solved operating point, by implicit
/// differentiation of the balance h(Δ, m) = m·c_p(Δ)·Δ − Φ(ΔT_lm(Δ)) = 0
/// (Δ = θs − θr the water's cooling, Φ the characteristic); Φ' and c_p' by
/// central differences. None where the point is at a limit (no cooling,
/// cooling to room temperature) or a derivative is not finite.
fn slopes(inst: &InstalledEmitter, m: f64, supply_c: f64, room_c: f64, out: FlowOutput) -> Option<(f64, f64)> {
    let a = supply_c - room_c;
    let delta = supply_c - out.return_c;
    if !(m > 0.0 && a > 0.0 && delta > 1e-9 * a && delta < a * (1.0 - 1e-9)) {
        return None;
    }
    let b = a - delta;
    let ln_ab = (a / b).ln();
    let lmtd = delta / ln_ab;
    // dΔT_lm/dΔ for ΔT_lm = Δ / ln(a/(a − Δ)).
    let dl_ddelta = (ln_ab - delta / b) / (ln_ab * ln_ab);
    let ch = &inst.characteristic;
    let eps = 1e-6;
    let dphi_dl = (ch.output_w(lmtd * (1.0 + eps)) - ch.output_w(lmtd * (1.0 - eps))) / (2.0 * eps * lmtd);
    let cp = out.output_w / (m * delta);
    let hd = 1e-4 * delta;
    let cp_hi = water::mean_cp_tabulated_j_kg_k(supply_c, supply_c - delta - hd).ok()?;
    let cp_lo = water::mean_cp_tabulated_j_kg_k(supply_c, supply_c - delta + hd).ok()?;
    let dcp_ddelta = (cp_hi - cp_lo) / (2.0 * hd);
    // ∂h/∂Δ and ∂h/∂m.
    let h_delta = m * (cp + dcp_ddelta * delta) - dphi_dl * dl_ddelta;
    let h_m = cp * delta;
    let ddelta_dm = -h_m / h_delta;
    let dq_dm = cp * delta + m * (cp + dcp_ddelta * delta) * ddelta_dm;
    let dr_dm = -ddelta_dm;
    (h_delta > 0.0 && dq_dm.is_finite() && dr_dm.is_finite()).then_some((dq_dm, dr_dm))
}

/// The pipe size chosen for each side of each run, with the inputs of the
/// choice; reused while they are the same (a drag in design mode changes
/// lengths, not flows).
#[derive(Debug, Default)]
pub(super) struct SizeCache {
    /// By 2·run slot + side (the slot of [`super::topology::Topology`]).
    entries: Vec<Option<SizeEntry>>,
    /// Keep nothing: every call computes (a workspace for one solve).
    pub(super) off: bool,
}

#[derive(Debug, Clone, Copy)]
struct SizeEntry {
    run: RunId,
    inputs: SizeInputs,
    choice: (usize, bool),
}

impl SizeCache {
    /// Entries kept (tests).
    #[cfg(test)]
    pub(super) fn entries_len(&self) -> usize {
        self.entries.len()
    }

    /// [`super::choose_size`] through the cache.
    pub(super) fn choose(&mut self, run: RunId, run_slot: usize, side: Side, inputs: &SizeInputs) -> (usize, bool) {
        if self.off {
            return super::choose_size(inputs);
        }
        let ix = run_slot.saturating_mul(2).saturating_add(usize::from(side == Side::Return));
        if let Some(Some(e)) = self.entries.get(ix)
            && e.run == run
            && e.inputs == *inputs
        {
            return e.choice;
        }
        let choice = super::choose_size(inputs);
        // Slots are bounded by the topology's (dense) run slots.
        if ix < usize::MAX / 2 {
            if ix >= self.entries.len() {
                self.entries.resize(ix + 1, None);
            }
            if let Some(x) = self.entries.get_mut(ix) {
                *x = Some(SizeEntry { run, inputs: *inputs, choice });
            }
        }
        choice
    }
}

/// Pressure drop of each link of the derived network at its design flow,
/// with the law and flow it was evaluated for; reused while both are bit
/// for bit the same (Colebrook–White is iterative; a drag changes one
/// pipe's law, not the others').
#[derive(Debug, Default)]
pub(super) struct LinkDpCache {
    /// By link index.
    entries: Vec<Option<(LinkLaw, u64, f64)>>,
    /// Keep nothing: every call computes (a workspace for one solve).
    pub(super) off: bool,
}

impl LinkDpCache {
    /// Room for `links` entries at once (growing by doubling would copy
    /// the entries and keep up to twice the room).
    pub(super) fn size_for(&mut self, links: usize) {
        if !self.off {
            self.entries.reserve_exact(links.saturating_sub(self.entries.len()));
        }
    }

    /// Δp of `law` at `m` (link `link`), as [`crate::network::solver::link_dp`]
    /// (0 for a non-finite flow).
    pub(super) fn dp(&mut self, link: usize, law: &LinkLaw, m: f64) -> f64 {
        if self.off {
            return crate::network::solver::link_dp(law, m).map_or(0.0, |x| x.0);
        }
        if let Some(Some((l, bits, dp))) = self.entries.get(link)
            && *bits == m.to_bits()
            && l == law
        {
            return *dp;
        }
        let dp = crate::network::solver::link_dp(law, m).map_or(0.0, |x| x.0);
        if link >= self.entries.len() {
            self.entries.resize(link + 1, None);
        }
        if let Some(x) = self.entries.get_mut(link) {
            match x {
                Some(e) => {
                    e.0.clone_from(law);
                    e.1 = m.to_bits();
                    e.2 = dp;
                }
                None => *x = Some((law.clone(), m.to_bits(), dp)),
            }
        }
        dp
    }
}

/// Finding messages per item and kind with the inputs they were written
/// from: an unchanged warning is copied, not formatted again (a large
/// building has tens of thousands of warnings).
#[derive(Debug, Default)]
pub(super) struct MessageCache {
    /// By `slot · KINDS + kind`; boxed because most slots stay empty (one
    /// pointer each instead of a whole entry: 30 MB less at 50,000 emitters).
    entries: Vec<Option<Box<MessageEntry>>>,
}

#[derive(Debug)]
struct MessageEntry {
    key: [u64; 5],
    text: String,
    message: Arc<str>,
}

impl MessageCache {
    /// Kinds of cached messages per slot.
    const KINDS: usize = 4;

    /// Position of a cached kind among a slot's entries; `None` for kinds
    /// that are not cached (they are rare: formatted each time). A kind
    /// cached here is one that can appear on thousands of items at once.
    fn kind_ix(kind: FindingKind) -> Option<usize> {
        match kind {
            FindingKind::KvAboveLargest => Some(0),
            FindingKind::KvBelowSmallest => Some(1),
            FindingKind::LowAuthority => Some(2),
            FindingKind::SizeLimitsExceeded => Some(3),
            _ => None,
        }
    }

    /// The message for item `slot` and `kind` written by `make` from the
    /// numbers `key` (bit patterns, ids) and the name `text`, from the cache
    /// when all are the same as last time.
    pub(super) fn get(
        &mut self,
        slot: usize,
        kind: FindingKind,
        key: [u64; 5],
        text: &str,
        make: impl FnOnce() -> String,
    ) -> Arc<str> {
        let Some(ix) = Self::kind_ix(kind).and_then(|k| slot.checked_mul(Self::KINDS).and_then(|x| x.checked_add(k)))
        else {
            return make().into();
        };
        if let Some(Some(e)) = self.entries.get(ix)
            && e.key == key
            && e.text == text
        {
            return e.message.clone();
        }
        let message: Arc<str> = make().into();
        // Slots are bounded by the topology's dense node and run slots.
        if ix < usize::MAX / 2 {
            if ix >= self.entries.len() {
                self.entries.resize_with(ix + 1, || None);
            }
            if let Some(x) = self.entries.get_mut(ix) {
                match x {
                    Some(e) => {
                        e.key = key;
                        text.clone_into(&mut e.text);
                        e.message.clone_from(&message);
                    }
                    None => *x = Some(Box::new(MessageEntry { key, text: text.to_owned(), message: message.clone() })),
                }
            }
        }
        message
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::emitters::{RadiatorSizing, RadiatorSpec};

    fn radiator() -> (EmitterModel, DesignTemperatures) {
        let spec = RadiatorSpec {
            type_code: "22".into(),
            height_mm: 600,
            sizing: RadiatorSizing::Existing { nominal_output_w: 1500.0, length_mm: 1000 },
            exponent_n: None,
        };
        (EmitterModel::Radiator(spec), DesignTemperatures::new(70.0, 55.0, 20.0))
    }

    #[test]
    fn design_is_cached_and_refreshed_when_an_input_changes() {
        let (model, temps) = radiator();
        let mut c = EmitterCache::default();
        let a = c.design(NodeId(3), 10, &model, 1000.0, &temps).unwrap();
        let b = c.design(NodeId(3), 10, &model, 1000.0, &temps).unwrap();
        assert!(Arc::ptr_eq(&a, &b));
        let d = c.design(NodeId(3), 10, &model, 1100.0, &temps).unwrap();
        assert!(!Arc::ptr_eq(&a, &d));
        assert_eq!(*d, model.design(1100.0, &temps).unwrap());
    }

    #[test]
    fn first_order_step_agrees_with_the_full_solve() {
        // Reference: the full solve of `InstalledEmitter::output_at_flow`
        // (this crate) at the new flow; the cached step must agree to far
        // below the solver's flow tolerance.
        let (model, temps) = radiator();
        let mut c = EmitterCache::default();
        let d = c.design(NodeId(1), 10, &model, 1000.0, &temps).unwrap();
        let m0 = d.outcome.mass_flow_kg_s();
        let first = c.output_at_flow(NodeId(1), 10, &d.installed, m0, 70.0, 20.0).unwrap();
        let exact = d.installed.output_at_flow(m0, 70.0, 20.0).unwrap();
        assert!((first.output_w - exact.output_w).abs() <= 1e-9 * exact.output_w);
        for rel in [1e-7, -3e-6, 5e-5, -1e-4] {
            let m = m0 * (1.0 + rel);
            let step = c.output_at_flow(NodeId(1), 10, &d.installed, m, 70.0, 20.0).unwrap();
            let full = d.installed.output_at_flow(m, 70.0, 20.0).unwrap();
            assert!((step.output_w - full.output_w).abs() <= 1e-8 * full.output_w, "{rel}: {step:?} {full:?}");
            assert!((step.return_c - full.return_c).abs() <= 1e-8 * full.return_c, "{rel}: {step:?} {full:?}");
        }
        // A large change is solved in full.
        let m = m0 * 1.3;
        let far = c.output_at_flow(NodeId(1), 10, &d.installed, m, 70.0, 20.0).unwrap();
        let exact = d.installed.output_at_flow(m, 70.0, 20.0).unwrap();
        assert!((far.output_w - exact.output_w).abs() <= 1e-9 * exact.output_w);
    }

    #[test]
    fn huge_ids_are_not_cached_but_still_solved() {
        let (model, temps) = radiator();
        let mut c = EmitterCache::default();
        let d = c.design(NodeId(u32::MAX), 10, &model, 1000.0, &temps).unwrap();
        assert_eq!(*d, model.design(1000.0, &temps).unwrap());
        assert!(c.entries.is_empty());
    }
}

/// ζ of the tee at the head of each (run, side), kept with the exact inputs
/// it came from (flow direction, leg, flow ratio and diameter ratio, as
/// bits): a drag leaves them unchanged, and the tee correlations (powers
/// and sines) are the dearest part of the pipe laws.
#[derive(Debug, Default)]
pub(super) struct TeeCache {
    entries: Vec<Option<([u64; 4], f64)>>,
    /// Keep nothing: every call computes (a workspace for one solve).
    pub(super) off: bool,
}

impl TeeCache {
    /// Entries kept (tests).
    #[cfg(test)]
    pub(super) fn entries_len(&self) -> usize {
        self.entries.len()
    }

    /// ζ for slot `slot` of `slots` with inputs `key`: the kept value when
    /// the inputs are identical, else `compute()` (kept for next time).
    pub(super) fn zeta(&mut self, slot: usize, slots: usize, key: [u64; 4], compute: impl FnOnce() -> f64) -> f64 {
        if self.off {
            return compute();
        }
        if self.entries.len() != slots {
            self.entries.clear();
            self.entries.resize(slots, None);
        }
        match self.entries.get_mut(slot) {
            Some(Some((k, z))) if *k == key => *z,
            Some(e) => {
                let z = compute();
                *e = Some((key, z));
                z
            }
            None => compute(),
        }
    }
}
