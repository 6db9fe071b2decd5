//! Running the design solve for the GUI: synchronously while it is fast,
//! on a worker thread once a solve took longer than [`BACKGROUND_AFTER_MS`];
//! the last result stays on screen until the new one arrives, and every
//! result carries the project revision it belongs to. Edits the app
//! reports with [`SolveRunner::note_edit`] (a drag, a changed run length)
//! are solved on the incremental path (`design::solve_edit`: only the
//! touched runs are derived again) when the workspace kept the revision
//! they start from; anything else takes the full solve. While a drag is in
//! progress, its moves are solved as drag previews (`design::solve_preview`:
//! the last design's network with the moved runs at their new lengths,
//! operated only), and the full design follows when the drag ends.

use std::sync::Arc;
use std::sync::mpsc::{Receiver, channel};

use flowrise_core::design::{EditHint, Solution, SolveOptions, Workspace, solve_edit, solve_preview, solve_project};
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
    last_ms: f64,
    /// Allow the worker thread (off in tests for determinism).
    pub background: bool,
    options: SolveOptions,
    /// What the edits since the last full solve started changed, when
    /// every one of them was a geometry edit (see [`Self::note_edit`]).
    pending: Option<EditHint>,
    /// The same since the last solve of any kind (full or preview).
    pending_preview: Option<EditHint>,
    /// A drag is moving things: its edits are previewed.
    dragging: bool,
}

/// What a solve job does.
#[derive(Debug, Clone)]
enum Job {
    /// The full design: incremental with a hint, else from scratch.
    Full(Option<EditHint>),
    /// A drag preview, with the full solve's hint to fall back on when the
    /// workspace cannot preview.
    Preview { preview: EditHint, full: Option<EditHint> },
}

impl Default for SolveRunner {
    fn default() -> Self {
        Self {
            latest: Arc::new(Solution::default()),
            valid: false,
            workspace: Some(Workspace::for_edits()),
            worker: None,
            last_ms: 0.0,
            background: true,
            options: SolveOptions::default(),
            pending: None,
            pending_preview: None,
            dragging: false,
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
        self.worker.is_some()
    }

    /// Record an edit just applied to the project: its hint
    /// ([`EditHint::for_edit`], taken before applying) or `None` for an
    /// edit the incremental path does not cover, which makes the next
    /// solve a full one; `during_drag`: the edit is a move of an ongoing
    /// drag (previewed until [`Self::end_drag`]).
    pub fn note_edit(&mut self, hint: Option<EditHint>, during_drag: bool) {
        let chain = |pending: Option<EditHint>, hint: &Option<EditHint>| match (pending, hint) {
            (_, None) => None,
            (None, Some(h)) => Some(h.clone()),
            (Some(p), Some(h)) => p.then(h).or_else(|| Some(h.clone())),
        };
        self.pending = chain(self.pending.take(), &hint);
        self.pending_preview = chain(self.pending_preview.take(), &hint);
        self.dragging = during_drag;
    }

    /// The drag ended: the next solve is the full design.
    pub fn end_drag(&mut self) {
        self.dragging = false;
    }

    /// Forget the recorded edits (the project was replaced: undo, redo).
    pub fn forget_edits(&mut self) {
        self.pending = None;
        self.pending_preview = None;
        self.dragging = false;
    }

    /// The job for `project`: a preview while a drag moves things and the
    /// recorded moves lead to its revision, else the full solve (with the
    /// recorded edits' hint when it leads there). Takes the hints it uses.
    fn take_job(&mut self, project: &Project) -> Job {
        let preview = self.pending_preview.take().filter(|h| h.to_revision == project.revision);
        match preview {
            Some(preview) if self.dragging => {
                let full = self.pending.clone().filter(|h| h.to_revision == project.revision);
                Job::Preview { preview, full }
            }
            _ => Job::Full(self.pending.take().filter(|h| h.to_revision == project.revision)),
        }
    }

    /// Start over with a fresh workspace (another project was opened).
    pub fn reset(&mut self) {
        *self = Self { background: self.background, ..Self::default() };
    }

    /// Make sure the results belong to `project`'s revision: solve now, or
    /// hand the work to the worker. Returns true when a repaint is needed
    /// later (a worker is running).
    pub fn ensure(&mut self, project: &Arc<Project>) -> bool {
        self.poll();
        if self.valid && self.accepts(self.latest.revision, self.latest.preview, project.revision) {
            return self.is_busy();
        }
        if self.worker.is_some() {
            // Busy: the project as it stands then is solved next, when this
            // job is done (the app repaints while a worker runs).
            return true;
        }
        if self.background && self.last_ms > BACKGROUND_AFTER_MS {
            // The worker shares the document (no copy of a large building).
            self.spawn(Arc::clone(project));
            return true;
        }
        let job = self.take_job(project);
        let mut ws = self.workspace.take().unwrap_or_else(Workspace::for_edits);
        let sol = solve(project, &self.options, &mut ws, &job);
        self.workspace = Some(ws);
        self.last_ms = sol.timings.derive_ms + sol.timings.design_ms + sol.timings.operate_ms;
        self.latest = Arc::new(sol);
        self.valid = true;
        false
    }

    /// A result (or a job) for `revision`, a preview or not, will do for a
    /// project at `project_revision`: the same revision, and a preview only
    /// while the drag goes on.
    fn accepts(&self, revision: u64, preview: bool, project_revision: u64) -> bool {
        revision == project_revision && (!preview || self.dragging)
    }

    fn spawn(&mut self, project: Arc<Project>) {
        let job = self.take_job(&project);
        let mut ws = self.workspace.take().unwrap_or_else(Workspace::for_edits);
        let options = self.options.clone();
        let (tx, rx) = channel();
        std::thread::spawn(move || {
            let sol = solve(&project, &options, &mut ws, &job);
            let ms = sol.timings.derive_ms + sol.timings.design_ms + sol.timings.operate_ms;
            // The receiver is gone only when the app has closed.
            tx.send((sol, ws, ms)).ok();
        });
        self.worker = Some(rx);
    }

    /// Collect a finished worker result.
    fn poll(&mut self) {
        let Some(rx) = &self.worker else { return };
        match rx.try_recv() {
            Ok((sol, ws, ms)) => {
                self.worker = None;
                self.workspace = Some(ws);
                self.last_ms = ms;
                self.latest = Arc::new(sol);
                self.valid = true;
            }
            Err(std::sync::mpsc::TryRecvError::Empty) => {}
            Err(std::sync::mpsc::TryRecvError::Disconnected) => {
                self.worker = None;
                self.workspace = Some(Workspace::for_edits());
            }
        }
    }
}

/// Run `job`: a preview when the workspace can, else the full design
/// (incremental when there is a hint that fits).
fn solve(project: &Project, options: &SolveOptions, ws: &mut Workspace, job: &Job) -> Solution {
    let full = match job {
        Job::Preview { preview, full } => match solve_preview(project, options, ws, preview) {
            Some(sol) => return sol,
            None => full,
        },
        Job::Full(full) => full,
    };
    match full {
        Some(h) => solve_edit(project, options, ws, h),
        None => solve_project(project, options, ws),
    }
}
