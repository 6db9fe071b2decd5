//! Running the design solve for the GUI: synchronously while it is fast,
//! on a worker thread once a solve took longer than [`BACKGROUND_AFTER_MS`];
//! the last result stays on screen until the new one arrives, and every
//! result carries the project revision it belongs to. Edits the app
//! reports with [`SolveRunner::note_edit`] (a drag, a changed run length)
//! are solved on the incremental path (`design::solve_edit`: only the
//! touched runs are derived again) when the workspace kept the revision
//! they start from; anything else takes the full solve.

use std::sync::Arc;
use std::sync::mpsc::{Receiver, channel};

use flowrise_core::design::{EditHint, Solution, SolveOptions, Workspace, solve_edit, solve_project};
use flowrise_core::project::Project;

/// A solve slower than this moves to the worker thread, ms.
pub const BACKGROUND_AFTER_MS: f64 = 8.0;

/// The solve state of the app.
#[derive(Debug)]
pub struct SolveRunner {
    latest: Arc<Solution>,
    /// `latest` came from a solve (not the empty start value).
    valid: bool,
    workspace: Option<Workspace>,
    worker: Option<Receiver<(Solution, Workspace, f64)>>,
    /// Project waiting for the worker to be free.
    queued: Option<Project>,
    last_ms: f64,
    /// Allow the worker thread (off in tests for determinism).
    pub background: bool,
    options: SolveOptions,
    /// What the edits since the last solve started changed, when every
    /// one of them was a geometry edit (see [`Self::note_edit`]).
    pending: Option<EditHint>,
}

impl Default for SolveRunner {
    fn default() -> Self {
        Self {
            latest: Arc::new(Solution::default()),
            valid: false,
            workspace: Some(Workspace::for_edits()),
            worker: None,
            queued: None,
            last_ms: 0.0,
            background: true,
            options: SolveOptions::default(),
            pending: None,
        }
    }
}

impl SolveRunner {
    /// The latest result (may belong to an older revision).
    #[must_use]
    pub fn latest(&self) -> &Arc<Solution> {
        &self.latest
    }

    /// Duration of the last solve, ms.
    #[must_use]
    pub fn last_ms(&self) -> f64 {
        self.last_ms
    }

    /// True while a result for an older revision is on screen.
    #[must_use]
    pub fn is_busy(&self) -> bool {
        self.worker.is_some() || self.queued.is_some()
    }

    /// Record an edit just applied to the project: its hint
    /// ([`EditHint::for_edit`], taken before applying) or `None` for an
    /// edit the incremental path does not cover, which makes the next
    /// solve a full one.
    pub fn note_edit(&mut self, hint: Option<EditHint>) {
        self.pending = match (self.pending.take(), hint) {
            (_, None) => None,
            (None, Some(h)) => Some(h),
            (Some(p), Some(h)) => p.then(&h).or(Some(h)),
        };
    }

    /// Forget the recorded edits (the project was replaced: undo, redo).
    pub fn forget_edits(&mut self) {
        self.pending = None;
    }

    /// The recorded edits' hint when it leads to `project`'s revision
    /// (taken: the solve about to start consumes it).
    fn take_hint(&mut self, project: &Project) -> Option<EditHint> {
        self.pending.take().filter(|h| h.to_revision == project.revision)
    }

    /// Start over with a fresh workspace (another project was opened).
    pub fn reset(&mut self) {
        *self = Self { background: self.background, ..Self::default() };
    }

    /// Make sure the results belong to `project`'s revision: solve now, or
    /// hand the work to the worker. Returns true when a repaint is needed
    /// later (a worker is running).
    pub fn ensure(&mut self, project: &Project) -> bool {
        self.poll();
        if self.valid && self.latest.revision == project.revision {
            return self.is_busy();
        }
        if self.worker.is_some() {
            if self.queued.as_ref().is_none_or(|q| q.revision != project.revision) {
                self.queued = Some(project.clone());
            }
            return true;
        }
        if self.background && self.last_ms > BACKGROUND_AFTER_MS {
            self.spawn(project.clone());
            return true;
        }
        let hint = self.take_hint(project);
        let mut ws = self.workspace.take().unwrap_or_else(Workspace::for_edits);
        let sol = solve(project, &self.options, &mut ws, hint.as_ref());
        self.workspace = Some(ws);
        self.last_ms = sol.timings.derive_ms + sol.timings.design_ms + sol.timings.operate_ms;
        self.latest = Arc::new(sol);
        self.valid = true;
        false
    }

    fn spawn(&mut self, project: Project) {
        let hint = self.take_hint(&project);
        let mut ws = self.workspace.take().unwrap_or_else(Workspace::for_edits);
        let options = self.options.clone();
        let (tx, rx) = channel();
        std::thread::spawn(move || {
            let sol = solve(&project, &options, &mut ws, hint.as_ref());
            let ms = sol.timings.derive_ms + sol.timings.design_ms + sol.timings.operate_ms;
            // The receiver is gone only when the app has closed.
            tx.send((sol, ws, ms)).ok();
        });
        self.worker = Some(rx);
    }

    /// Collect a finished worker result; start the queued project if any.
    fn poll(&mut self) {
        let Some(rx) = &self.worker else { return };
        match rx.try_recv() {
            Ok((sol, ws, ms)) => {
                self.worker = None;
                self.workspace = Some(ws);
                self.last_ms = ms;
                self.latest = Arc::new(sol);
                self.valid = true;
                if let Some(p) = self.queued.take() {
                    self.spawn(p);
                }
            }
            Err(std::sync::mpsc::TryRecvError::Empty) => {}
            Err(std::sync::mpsc::TryRecvError::Disconnected) => {
                self.worker = None;
                self.workspace = Some(Workspace::for_edits());
            }
        }
    }
}

/// The incremental solve when there is a hint, else the full one.
fn solve(project: &Project, options: &SolveOptions, ws: &mut Workspace, hint: Option<&EditHint>) -> Solution {
    match hint {
        Some(h) => solve_edit(project, options, ws, h),
        None => solve_project(project, options, ws),
    }
}
