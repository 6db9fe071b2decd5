//! The incremental path of an edit: a drag (move nodes) or a changed run
//! length changes the length and bends of a few runs and nothing else the
//! derive and size stages read, so the derivation made for the previous
//! revision is kept (`Retained`) and only the touched runs' pipes get their
//! new geometry and law; balance, operate and commission then run as in a
//! full solve, from the kept workspace.
//!
//! What stays valid, and why: topology, classes, the network's nodes and
//! links, emitter designs and design flows depend on the drawn connections,
//! levels and node data, not on plan positions; tree flows and sizes follow
//! from the design flows; a tee's ζ from the load split and the diameters.
//! A run's length and bends enter only its own two pipe laws (and, in a
//! reverse-return chain, the home pipe's: such edits take the full path).
//!
//! How it is kept honest: an [`EditHint`] names the revision it starts from
//! and the one it leads to; the kept derivation is used only for exactly
//! that step (same revision, same node and run counts), otherwise the solve
//! is the full one. Projects with pumped circuits always take the full
//! path. A property test applies random edit sequences to generated
//! buildings and compares every incremental solution with a cold one.

use super::findings::Finding;
use super::results::LinkRole;
use super::size::bend_zeta;
use super::state::{Derivation, DeviceData, EmitterData, PipeData};
use super::topology;
use crate::network::HydraulicNetwork;
use crate::project::{Edit, NodeId, Project, RunId};
use crate::pump::{PumpControl, PumpCurve};
use crate::water::WaterProperties;

/// What an edit changed, for [`super::solve_edit`]: the step from one
/// revision to the next and the runs whose geometry (length, bends) it may
/// have changed — and nothing else.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct EditHint {
    /// Revision of the project before the edit(s).
    pub from_revision: u64,
    /// Revision after them.
    pub to_revision: u64,
    /// Runs whose length or bends may differ (sorted, no repeats).
    pub runs: Vec<RunId>,
}

impl EditHint {
    /// The hint for `edit` about to be applied to `before` (which must
    /// succeed for the hint to mean anything): `Some` for a move of nodes
    /// (the runs touching them) and for run properties that differ only
    /// in the length override; `None` for every other edit, which may
    /// change what the derivation depends on.
    #[must_use]
    pub fn for_edit(before: &Project, edit: &Edit) -> Option<Self> {
        let mut runs: Vec<RunId> = match edit {
            Edit::MoveNodes { ids, .. } => ids.iter().flat_map(|&id| before.runs_at(id)).collect(),
            Edit::SetRunProps { id, props } => {
                let old = &before.run(*id)?.props;
                let mut same = old.clone();
                same.length_override_m = props.length_override_m;
                (same == *props).then(|| vec![*id])?
            }
            Edit::Rename(_)
            | Edit::SetSettings(_)
            | Edit::AddLevel { .. }
            | Edit::SetLevel(_)
            | Edit::AddNode { .. }
            | Edit::SetNodeKind { .. }
            | Edit::RemoveNode(_)
            | Edit::AddRun { .. }
            | Edit::SplitRun { .. }
            | Edit::RemoveRun(_)
            | Edit::Batch(_) => return None,
        };
        runs.sort_unstable();
        runs.dedup();
        Some(Self { from_revision: before.revision, to_revision: before.revision.wrapping_add(1), runs })
    }

    /// This hint followed by `next` (the revision after this one), as one
    /// hint; `None` when `next` does not start where this one ends.
    #[must_use]
    pub fn then(mut self, next: &Self) -> Option<Self> {
        if next.from_revision != self.to_revision {
            return None;
        }
        self.to_revision = next.to_revision;
        self.runs.extend_from_slice(&next.runs);
        self.runs.sort_unstable();
        self.runs.dedup();
        Some(self)
    }
}

/// The derivation after the size stage, kept in the [`super::Workspace`]
/// for the next edit (see the module docs).
#[derive(Debug)]
pub(super) struct Retained {
    revision: u64,
    node_count: usize,
    run_count: usize,
    /// Findings of the derive and size stages.
    findings: Vec<Finding>,
    topo: topology::Topology,
    net: HydraulicNetwork,
    roles: Vec<LinkRole>,
    emitters: Vec<EmitterData>,
    pipes: Vec<PipeData>,
    devices: Vec<DeviceData>,
    source: Option<NodeId>,
    source_link: usize,
    pump_link: usize,
    supply_props: Option<WaterProperties>,
    return_props: Option<WaterProperties>,
    pairs: Vec<(usize, usize)>,
    design_flows: Vec<f64>,
    supply_link: Vec<usize>,
    supply_pipe: Vec<usize>,
    return_link: Vec<usize>,
    control: PumpControl,
    curve: Option<PumpCurve>,
    total_design_kg_s: f64,
    tree_orders: Option<(Vec<usize>, Vec<usize>)>,
    /// Runs of reverse-return chains (their home pipe spans the chain).
    in_chain: Vec<bool>,
}

impl Retained {
    /// A copy of `d` after the size stage, made for project `p`.
    pub(super) fn keep(d: &Derivation<'_>, p: &Project) -> Self {
        let mut in_chain = vec![false; d.topo.run_slots()];
        for ch in &d.topo.reverse_chains {
            for r in &ch.runs {
                if let Some(x) = in_chain.get_mut(d.topo.rix(*r)) {
                    *x = true;
                }
            }
        }
        Self {
            revision: p.revision,
            node_count: p.node_count(),
            run_count: p.run_count(),
            findings: d.findings.clone(),
            topo: d.topo.clone(),
            net: d.net.clone(),
            roles: d.roles.clone(),
            emitters: d.emitters.clone(),
            pipes: d.pipes.clone(),
            devices: d.devices.clone(),
            source: d.source,
            source_link: d.source_link,
            pump_link: d.pump_link,
            supply_props: d.supply_props,
            return_props: d.return_props,
            pairs: d.pairs.clone(),
            design_flows: d.design_flows.clone(),
            supply_link: d.supply_link.clone(),
            supply_pipe: d.supply_pipe.clone(),
            return_link: d.return_link.clone(),
            control: d.control,
            curve: d.curve,
            total_design_kg_s: d.total_design_kg_s,
            tree_orders: d.tree_orders.clone(),
            in_chain,
        }
    }

    /// True when this derivation was made for the revision `hint` starts
    /// from and `p` is the revision it leads to (same counts of nodes and
    /// runs, every hinted run present).
    pub(super) fn fits(&self, p: &Project, hint: &EditHint) -> bool {
        self.revision == hint.from_revision
            && p.revision == hint.to_revision
            && self.node_count == p.node_count()
            && self.run_count == p.run_count()
            && hint.runs.iter().all(|&r| p.run(r).is_some())
    }

    /// Bring the kept derivation to project `p` (the hinted runs' pipes get
    /// their new length, bends and law) and copy it into `d`. False when a
    /// hinted run is part of a reverse-return chain or a new law cannot be
    /// built: the caller then takes the full path, which reports why.
    pub(super) fn update_into(&mut self, p: &Project, hint: &EditHint, d: &mut Derivation<'_>) -> bool {
        let Some(touched) = self.update_geometry(p, hint) else { return false };
        self.restore(d);
        if !set_laws(d, &touched) {
            return false;
        }
        for &i in &touched {
            if let Some(link) = d.pipes.get(i).map(|pd| pd.link) {
                // The kept copy follows, for the next edit.
                self.net.links[link].law.clone_from(&d.net.links[link].law);
            }
        }
        self.revision = p.revision;
        true
    }

    /// As [`Self::update_into`], but the kept derivation is *lent* to `d`
    /// (its vectors moved, not copied: a drag preview's operating pass
    /// then works on the kept state itself) and must come back with
    /// [`Self::take_back`], whether or not this succeeded. What the pass
    /// changes stays for the next preview: the moved pipes' laws and the
    /// Δp controllers' openings (a warm start for the next frame).
    pub(super) fn lend_updated(&mut self, p: &Project, hint: &EditHint, d: &mut Derivation<'_>) -> bool {
        let Some(touched) = self.update_geometry(p, hint) else { return false };
        (*d.findings).clone_from(&self.findings);
        self.swap(d);
        if !set_laws(d, &touched) {
            return false;
        }
        // Kept after an operating pass, every other law is the operating
        // one already; the new laws become so here, and they are all that
        // changed since the workspace's last solve of this network.
        let mut changed = Vec::with_capacity(touched.len());
        for &i in &touched {
            if let Some(k) = d.pipes.get(i).map(|pd| pd.link)
                && let Some(link) = d.net.links.get_mut(k)
            {
                super::operate::to_operating_law(link);
                changed.push(k);
            }
        }
        d.operating_laws = true;
        d.changed_links = Some(changed);
        self.revision = p.revision;
        true
    }

    /// Take back what [`Self::lend_updated`] lent to `d`.
    pub(super) fn take_back(&mut self, d: &mut Derivation<'_>) {
        self.swap(d);
    }

    /// The hinted runs' pipes in the kept derivation get their new
    /// length, bends and vertical flag; returns their indices, or `None`
    /// when a hinted run is part of a reverse-return chain or missing.
    fn update_geometry(&mut self, p: &Project, hint: &EditHint) -> Option<Vec<usize>> {
        if self.supply_props.is_none() || self.return_props.is_none() {
            return None;
        }
        // The pipes to touch: both sides of every hinted tree run.
        let mut touched = Vec::new();
        for &run in &hint.runs {
            if self.topo.tree_run(run).is_none() {
                // Not part of the network: no pipe reads its geometry.
                continue;
            }
            if self.in_chain.get(self.topo.rix(run)).copied().unwrap_or(false) {
                return None;
            }
            touched.extend(self.pipes.iter().enumerate().filter(|(_, pd)| pd.run == run).map(|(i, _)| i));
        }
        for &i in &touched {
            let pd = &mut self.pipes[i];
            // The project's own lookups: a few runs, no dense index needed.
            let run = p.run(pd.run)?;
            pd.length_m = p.length_m(run);
            (pd.bends_90, pd.bends_45) = super::derive::bends_in_run(p, run);
            pd.vertical = p.is_vertical(run);
        }
        Some(touched)
    }

    /// Exchange the kept derivation with `d`'s (vectors moved, scalars
    /// copied both ways); the findings are not part of it.
    fn swap(&mut self, d: &mut Derivation<'_>) {
        std::mem::swap(&mut d.topo, &mut self.topo);
        std::mem::swap(&mut d.net, &mut self.net);
        std::mem::swap(&mut d.roles, &mut self.roles);
        std::mem::swap(&mut d.emitters, &mut self.emitters);
        std::mem::swap(&mut d.pipes, &mut self.pipes);
        std::mem::swap(&mut d.devices, &mut self.devices);
        std::mem::swap(&mut d.source, &mut self.source);
        std::mem::swap(&mut d.source_link, &mut self.source_link);
        std::mem::swap(&mut d.pump_link, &mut self.pump_link);
        std::mem::swap(&mut d.supply_props, &mut self.supply_props);
        std::mem::swap(&mut d.return_props, &mut self.return_props);
        std::mem::swap(&mut d.pairs, &mut self.pairs);
        std::mem::swap(&mut d.design_flows, &mut self.design_flows);
        std::mem::swap(&mut d.supply_link, &mut self.supply_link);
        std::mem::swap(&mut d.supply_pipe, &mut self.supply_pipe);
        std::mem::swap(&mut d.return_link, &mut self.return_link);
        std::mem::swap(&mut d.control, &mut self.control);
        std::mem::swap(&mut d.curve, &mut self.curve);
        std::mem::swap(&mut d.total_design_kg_s, &mut self.total_design_kg_s);
        std::mem::swap(&mut d.tree_orders, &mut self.tree_orders);
    }

    /// Copy the kept derivation into `d` (a fresh one) and the kept
    /// findings into its findings.
    fn restore(&self, d: &mut Derivation<'_>) {
        (*d.findings).clone_from(&self.findings);
        d.topo.clone_from(&self.topo);
        d.net.clone_from(&self.net);
        d.roles.clone_from(&self.roles);
        d.emitters.clone_from(&self.emitters);
        d.pipes.clone_from(&self.pipes);
        d.devices.clone_from(&self.devices);
        d.source = self.source;
        d.source_link = self.source_link;
        d.pump_link = self.pump_link;
        d.supply_props = self.supply_props;
        d.return_props = self.return_props;
        d.pairs.clone_from(&self.pairs);
        d.design_flows.clone_from(&self.design_flows);
        d.supply_link.clone_from(&self.supply_link);
        d.supply_pipe.clone_from(&self.supply_pipe);
        d.return_link.clone_from(&self.return_link);
        d.control = self.control;
        d.curve = self.curve;
        d.total_design_kg_s = self.total_design_kg_s;
        d.tree_orders.clone_from(&self.tree_orders);
    }
}

/// The pipe laws of the `touched` pipes of `d`, from their geometry;
/// false when one cannot be built.
fn set_laws(d: &mut Derivation<'_>, touched: &[usize]) -> bool {
    let (Some(sp), Some(rp)) = (d.supply_props, d.return_props) else { return false };
    let bz = bend_zeta();
    touched.iter().all(|&i| d.set_pipe_law(i, bz, sp, rp).is_ok())
}
