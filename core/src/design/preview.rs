//! The drag preview: while a node is being dragged, the window shows the
//! flows of the network *as last designed* with the moved runs at their new
//! lengths — the operating solve alone, warm-started from the last flows
//! and controller openings — and the full design (sizes, presettings,
//! pump duty: [`super::solve_edit`]) follows when the drag ends.
//!
//! What a preview is, exactly: the operating solve of the installed
//! network — the last design's pipe sizes, presettings, lockshield and
//! device settings and pump law frozen — with the moved runs' pipes at
//! their new length and bends. That is what `freeze_edit` followed by a
//! solve in installed mode computes; the test
//! `previews_equal_the_frozen_design_solved` (tests/tests/incremental.rs)
//! checks the two agree. Its design figures (sizes, presettings, index
//! circuit, pump duty) are the last design's, and [`Solution::preview`]
//! says so.
//!
//! Kept for it, after each full solve of a workspace made with
//! [`super::Workspace::for_edits`]: the derivation after the operate stage
//! (the final link laws), the split between design and operating findings,
//! and the solution; a preview updates the kept derivation's moved pipes
//! and runs the operate stage on it, lent rather than copied (what the
//! pass changes — the moved pipes' laws, the controllers' openings — is
//! the next preview's warm start), telling the solver which links changed
//! (`solver::solve_changed`).

use std::sync::Arc;
use std::time::Instant;

use super::incremental::{EditHint, Retained};
use super::results::Solution;
use super::state::Derivation;
use super::{SolveOptions, Workspace, ms_since, with_findings};
use crate::project::{Project, RunId};

/// How close a Δp controller holds its target in a preview, Pa: ten times
/// the full solve's ([`super::HELD_DP_TOLERANCE_PA`]). When a drag moves a
/// main every controller re-regulates, and the last rounds only move the
/// flows by some 1e-4 (½ · 10 Pa over a set-point of 5 kPa or more); the
/// full design on release settles them to the full tolerance.
pub const PREVIEW_HELD_DP_TOLERANCE_PA: f64 = 10.0;

/// What a preview starts from (see the module docs).
#[derive(Debug)]
pub(super) struct PreviewBase {
    /// The derivation after the last operating pass.
    state: Retained,
    /// Order of the solution's emitters in the derivation's.
    result_emitter: Vec<usize>,
    /// Head the pump leaves for balancing at design, Pa.
    available_pa: f64,
    /// Findings before the last operating pass (derive, size, design).
    design_findings: usize,
    /// The full solve's solution (its design figures).
    solution: Option<Solution>,
    /// Runs moved by the previews since that solve.
    moved: Vec<RunId>,
}

impl PreviewBase {
    /// The state of `d` after its last operating pass, whose findings
    /// began at `design_findings`.
    pub(super) fn keep(d: &Derivation<'_>, p: &Project, design_findings: usize) -> Self {
        Self {
            state: Retained::keep(d, p),
            result_emitter: d.result_emitter.clone(),
            available_pa: d.available_pa,
            design_findings,
            solution: None,
            moved: Vec::new(),
        }
    }

    /// Record the full solve's solution: its design figures and (shared)
    /// its link roles and topology (a preview makes its own network,
    /// flows, pressures and findings, so those are not copied).
    pub(super) fn set_solution(&mut self, sol: &Solution) {
        self.solution = Some(Solution {
            revision: sol.revision,
            preview: sol.preview,
            pipes: sol.pipes.clone(),
            emitters: sol.emitters.clone(),
            devices: sol.devices.clone(),
            pump: sol.pump.clone(),
            index_emitter: sol.index_emitter,
            heat_load_w: sol.heat_load_w,
            water_volume_l: sol.water_volume_l,
            vessel: sol.vessel.clone(),
            iterations: sol.iterations,
            converged: sol.converged,
            timings: sol.timings,
            index_path: sol.index_path.clone(),
            circuits: sol.circuits.clone(),
            roles: Arc::clone(&sol.roles),
            topology: Arc::clone(&sol.topology),
            ..Solution::default()
        });
    }
}

/// The drag preview of `p` after the edit(s) `hint` describes (see the
/// module docs), on the workspace that solved or previewed the revision
/// before them. `None` when the workspace kept nothing that fits (no full
/// solve yet, another edit in between, a moved run in a reverse-return
/// chain, a project with pumped circuits): the caller then solves fully.
#[must_use]
pub fn solve_preview(p: &Project, opts: &SolveOptions, ws: &mut Workspace, hint: &EditHint) -> Option<Solution> {
    let mut base = ws.preview.take().filter(|b| b.solution.is_some() && b.state.fits(p, hint))?;
    let t0 = Instant::now();
    let mut findings = Vec::new();
    let mut d = Derivation::new(&mut findings);
    if !base.state.lend_updated(p, hint, &mut d) {
        base.state.take_back(&mut d);
        return None;
    }
    d.result_emitter.clone_from(&base.result_emitter);
    d.held_dp_tolerance_pa = PREVIEW_HELD_DP_TOLERANCE_PA;
    d.loose_regulation = true;
    d.available_pa = base.available_pa;
    d.findings.truncate(base.design_findings);
    base.moved.extend_from_slice(&hint.runs);
    base.moved.sort_unstable();
    base.moved.dedup();
    let Some(mut sol) = base.solution.clone() else {
        base.state.take_back(&mut d);
        return None;
    };
    sol.revision = p.revision;
    sol.preview = true;
    sol.findings.clear();
    sol.finding_keys.clear();
    sol.timings = super::StageTimings { incremental: true, ..super::StageTimings::default() };
    // The moved runs' pipes: their new lengths (sizes and ζ stay).
    for pr in &mut sol.pipes {
        if base.moved.binary_search(&pr.run).is_ok()
            && let Some(pd) = d.pipes.iter().find(|x| x.link == pr.link)
        {
            pr.length_m = pd.length_m;
            pr.bends_90 = pd.bends_90;
            pr.bends_45 = pd.bends_45;
        }
    }
    sol.timings.derive_ms = ms_since(t0);
    let t1 = Instant::now();
    d.operate(p, opts, ws, &mut sol);
    sol.timings.operate_ms = ms_since(t1);
    // The kept state goes back to the base; the solution gets a copy of
    // the network (the moved pipes' laws are new) and shares the last
    // design's link roles and topology, which a move does not change.
    sol.network.clone_from(&d.net);
    debug_assert!(*sol.roles == d.roles && sol.topology.emitters == d.topo.emitters);
    base.state.take_back(&mut d);
    drop(d);
    ws.preview = Some(base);
    Some(with_findings(sol, findings))
}
