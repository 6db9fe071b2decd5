//! Running the design solve for the GUI: synchronously while it is fast,
//! on a worker thread once a solve took longer than [`BACKGROUND_AFTER_MS`];
//! the last result stays on screen until the new one arrives, and every
//! result carries the project revision it belongs to.

use std::sync::Arc;
use std::sync::mpsc::{Receiver, channel};

use flowrise_core::design::{Solution, SolveOptions, Workspace, solve_project};
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
}

impl Default for SolveRunner {
    fn default() -> Self {
        Self {
            latest: Arc::new(Solution::default()),
            valid: false,
            workspace: Some(Workspace::default()),
            worker: None,
            queued: None,
            last_ms: 0.0,
            background: true,
            options: SolveOptions::default(),
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
        let mut ws = self.workspace.take().unwrap_or_default();
        let sol = solve_project(project, &self.options, &mut ws);
        self.workspace = Some(ws);
        self.last_ms = sol.timings.derive_ms + sol.timings.design_ms + sol.timings.operate_ms;
        self.latest = Arc::new(sol);
        self.valid = true;
        false
    }

    fn spawn(&mut self, project: Project) {
        let mut ws = self.workspace.take().unwrap_or_default();
        let options = self.options.clone();
        let (tx, rx) = channel();
        std::thread::spawn(move || {
            let sol = solve_project(&project, &options, &mut ws);
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
                self.workspace = Some(Workspace::default());
            }
        }
    }
}
