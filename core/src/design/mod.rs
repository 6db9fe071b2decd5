//! The design and operating passes: from a project to flows, pipe sizes,
//! index circuit, pump duty, presettings and the real flows that result.
//!
//! [`solve_project`] runs four stages over one derivation state
//! (`state.rs`), each in its own file and each a function of that state:
//! 1. **derive** (`derive.rs`) — topology ([`topology::analyse`]), emitter
//!    design flows, the flat hydraulic network ([`crate::network`]) with
//!    one supply and one return pipe per drawn run (direct or reverse
//!    return), an emitter valve link and an emitter body link per emitter,
//!    the source link and the pump link; the reference node is the pump
//!    suction (expansion vessel).
//! 2. **size** (`size.rs`) — tree flows, pipe sizing per class limits,
//!    local losses (bends, tees, header outlets).
//! 3. **balance** (`balance.rs`) — pressures at design flow, the index
//!    circuit (largest Δp with the emitter valves fully open), pump duty,
//!    presettings, authority, volumes, vessel.
//! 4. **operate** (`operate.rs`) — the Global Gradient solve of the network
//!    with sizes, presettings and the pump fixed: real flows and emitter
//!    outputs.
//!
//! The results are typed in `results.rs`, every finding text is written in
//! `findings.rs`, and `freeze.rs` turns a solved design into the edit that
//! freezes it for installation (and back).
//!
//! Assumptions (stated in the report): pipe water properties at the design
//! supply and return temperatures; no heat loss from pipes; supply
//! temperature at every emitter = source supply temperature.

mod accel;
mod balance;
mod cache;
mod circuits;
mod commission;
mod derive;
mod devices;
pub mod findings;
mod freeze;
mod incremental;
mod operate;
mod preview;
mod results;
mod size;
mod state;
pub mod topology;
mod trim;

use std::sync::Arc;

use std::collections::{BTreeMap, BTreeSet};
use std::time::Instant;

pub use derive::{BEND_45_MIN_DEG, BEND_90_MIN_DEG, RISER_BENDS_PER_VERTICAL_RUN, bend_count, bends_in_run};
pub use devices::{HELD_DP_TOLERANCE_PA, MAX_REGULATION_ROUNDS};
pub use findings::{Finding, FindingKind, ItemRef, Severity};
pub use freeze::{freeze_edit, thaw_edit};
pub use incremental::EditHint;
pub use preview::{PREVIEW_HELD_DP_TOLERANCE_PA, solve_preview};
pub use results::{
    CircuitResult, DeviceResult, DeviceState, EmitterResult, LinkRole, PipeResult, PumpResult, Side, Solution,
    StageTimings,
};
pub use size::{HEADER_OUTLET_ZETA, SizeInputs, choose_size};

use crate::network::solver::{SolveSettings, SolverWorkspace};
use crate::project::{NodeId, Project};
use state::Derivation;
use topology::Dense;

/// Options of a solve (not part of the document).
#[derive(Debug, Clone, Default, PartialEq)]
pub struct SolveOptions {
    /// Emitter valves closed for a part-load scenario.
    pub closed_emitters: BTreeSet<NodeId>,
    /// Use a continuous presetting (Kv exactly as needed, within the valve's
    /// range) instead of the nearest step — for checking the balancing.
    pub continuous_presetting: bool,
    /// Matched physics for the outside cross-check against EPANET
    /// (`tests/epanet/crosscheck.py`): the operating solve gives every link
    /// the density, and every pipe the viscosity, of water at the mean design
    /// temperature (so buoyancy vanishes) and EPANET's Darcy–Weisbach friction
    /// factor ([`crate::friction::FrictionLaw::SwameeJainEpanet`]). Sizing
    /// and presettings are designed as usual; only the operating solve's link
    /// laws change. Not for design work.
    pub matched_physics: bool,
    /// Solver settings.
    pub solver: SolveSettings,
}

/// State kept between solves: the solver's symbolic factorisation, cached
/// link-law evaluations and the last flows (warm start), valid while the
/// topology is unchanged; and per emitter its design and last operating
/// point, reused while the emitter's inputs are unchanged. A workspace may
/// serve any project: every cached value is checked against its inputs
/// before use.
#[derive(Debug, Default)]
pub struct Workspace {
    solver: Option<SolverWorkspace>,
    last_roles: Vec<LinkRole>,
    last_flows: Vec<f64>,
    emitters: cache::EmitterCache,
    sizes: cache::SizeCache,
    link_dps: cache::LinkDpCache,
    tees: cache::TeeCache,
    messages: cache::MessageCache,
    /// The workspaces of the pumped circuits, by circuit root.
    circuits: BTreeMap<NodeId, Workspace>,
    /// Keep the derivation after each solve for [`solve_edit`] (costs a
    /// copy of the derived network per solve; see [`Workspace::for_edits`]).
    retain: bool,
    /// The derivation kept for the next edit.
    retained: Option<Box<incremental::Retained>>,
    /// What a drag preview starts from ([`solve_preview`]), kept with
    /// `retain`.
    preview: Option<Box<preview::PreviewBase>>,
}

impl Workspace {
    /// A workspace for a window or any caller that re-solves after small
    /// edits with [`solve_edit`]: it keeps each solve's derivation (after
    /// the size stage) so the next edit re-derives only the runs it touched.
    #[must_use]
    pub fn for_edits() -> Self {
        Self { retain: true, ..Self::default() }
    }

    /// A workspace for a single solve (a command-line run): it keeps no
    /// per-pipe size or tee ζ cache, which only a later solve of the same
    /// project could use (at 200,000 emitters they hold a few hundred
    /// megabytes). The pressure-drop cache stays: one solve asks it again.
    /// Any workspace gives the same results.
    #[must_use]
    pub fn one_shot() -> Self {
        let mut ws = Self::default();
        ws.sizes.off = true;
        ws.tees.off = true;
        ws
    }
}

/// Design and operate a project. Never panics; everything that goes wrong
/// becomes a finding naming the item.
#[must_use]
pub fn solve_project(p: &Project, opts: &SolveOptions, ws: &mut Workspace) -> Solution {
    ws.preview = None;
    if circuits::has_circuits(p) {
        ws.retained = None;
        return circuits::solve_composite(p, opts, ws);
    }
    solve_one(p, opts, ws, BTreeMap::new())
}

/// Design and operate `p` after the edit(s) `hint` describes, on the
/// workspace that solved the revision before them: the same answer as
/// [`solve_project`], re-deriving only the runs the edit touched when the
/// workspace kept that revision's derivation ([`Workspace::for_edits`]),
/// otherwise by the full path (see `design/incremental.rs`).
#[must_use]
pub fn solve_edit(p: &Project, opts: &SolveOptions, ws: &mut Workspace, hint: &EditHint) -> Solution {
    ws.preview = None;
    let Some(mut kept) = ws.retained.take().filter(|r| r.fits(p, hint)) else {
        return solve_project(p, opts, ws);
    };
    let mut sol = Solution { revision: p.revision, ..Solution::default() };
    let t0 = Instant::now();
    let mut findings = Vec::new();
    let mut d = Derivation::new(&mut findings);
    if !kept.update_into(p, hint, &mut d) {
        drop(d);
        return solve_project(p, opts, ws);
    }
    ws.retained = Some(kept);
    let dn = Dense::new(p);
    sol.timings.derive_ms = ms_since(t0);
    sol.timings.incremental = true;
    finish(&mut d, p, &dn, opts, ws, &mut sol, true, Instant::now());
    drop(d);
    kept_for_preview(ws, with_findings(sol, findings))
}

/// Give the preview base the full solve's solution.
fn kept_for_preview(ws: &mut Workspace, sol: Solution) -> Solution {
    if let Some(base) = ws.preview.as_mut() {
        base.set_solution(&sol);
    }
    sol
}

/// Design and operate one circuit: a project with one source, where the
/// emitters named in `feeds` stand for the pumped circuits it feeds.
fn solve_one(p: &Project, opts: &SolveOptions, ws: &mut Workspace, feeds: BTreeMap<NodeId, state::Feed>) -> Solution {
    let mut sol = Solution { revision: p.revision, ..Solution::default() };
    let t0 = Instant::now();
    let mut findings = Vec::new();
    let mut d = Derivation::new(&mut findings);
    d.feeds = feeds;
    let dn = Dense::new(p);
    let ok = d.derive(p, &dn, ws);
    sol.timings.derive_ms = ms_since(t0);
    let t1 = Instant::now();
    if ok {
        d.size(p, &dn, ws);
    }
    ws.retained = (ws.retain && ok && d.feeds.is_empty()).then(|| Box::new(incremental::Retained::keep(&d, p)));
    finish(&mut d, p, &dn, opts, ws, &mut sol, ok, t1);
    drop(d);
    kept_for_preview(ws, with_findings(sol, findings))
}

/// The stages after sizing — balance, operate, commission — and the
/// solution's network, roles and topology taken from `d`. `t1` is when the
/// design stage began.
#[allow(clippy::too_many_arguments)] // reason: the stages' state, its inputs and where the results go
fn finish(
    d: &mut Derivation<'_>,
    p: &Project,
    dn: &Dense<'_>,
    opts: &SolveOptions,
    ws: &mut Workspace,
    sol: &mut Solution,
    ok: bool,
    t1: Instant,
) {
    if ok {
        d.balance(p, dn, opts, ws, sol);
        sol.timings.design_ms = ms_since(t1);
        let t2 = Instant::now();
        if opts.matched_physics {
            d.match_physics(p);
        }
        let mut mark = d.findings.len();
        d.operate(p, opts, ws, sol);
        if !opts.continuous_presetting {
            for _ in 0..commission::MAX_PASSES {
                let done = d.commission(p, dn, ws, sol);
                if done.is_empty() {
                    break;
                }
                // The operating findings belong to the settings just
                // replaced: drop them, refresh the trim findings, solve again.
                d.findings.truncate(mark);
                d.retrim_findings(p, dn, ws, sol, &done);
                mark = d.findings.len();
                // Only the re-trimmed valves changed since the last solve:
                // the warm re-solve validates and first-evaluates those.
                d.changed_links = Some(done.iter().map(|r| r.link).collect());
                d.operate(p, opts, ws, sol);
            }
        }
        sol.timings.operate_ms = ms_since(t2);
        if ws.retain && d.feeds.is_empty() && sol.pump.is_some() {
            ws.preview = Some(Box::new(preview::PreviewBase::keep(d, p, mark)));
        }
    }
    if !d.pipes_filled {
        let flows = std::mem::take(&mut d.design_flows);
        operate::fill_pipe_flows(sol, &d.net, &flows, None);
    }
    sol.network = std::mem::take(&mut d.net);
    sol.roles = Arc::new(std::mem::take(&mut d.roles));
    sol.topology = Arc::new(std::mem::take(&mut d.topo));
}

/// The solution with its findings sorted (errors first, then by item),
/// deduplicated and indexed for [`Solution::has_finding`].
fn with_findings(mut sol: Solution, mut all: Vec<Finding>) -> Solution {
    all.sort_by(|a, b| a.severity.cmp(&b.severity).then(a.item.cmp(&b.item)));
    all.dedup();
    let mut keys: Vec<(ItemRef, FindingKind)> = all.iter().map(|f| (f.item, f.kind)).collect();
    keys.sort_unstable();
    keys.dedup();
    sol.finding_keys = keys;
    sol.findings = all;
    sol
}

fn ms_since(t: Instant) -> f64 {
    t.elapsed().as_secs_f64() * 1e3
}

#[cfg(test)]
mod tests;
