//! The flowrise window.
//!
//! [`FlowriseApp::ui`] draws everything from `&mut self` and an
//! [`egui::Ui`]; the `eframe::App` impl and the kittest tests both call it.
//!
//! Three kinds of state are kept apart:
//! - **the document** — the [`Project`] (saved to its file), its path, the
//!   last saved copy (for the unsaved mark) and the undo [`history`];
//! - **UI preferences** — [`Prefs`] ([`prefs`]), kept in eframe's storage
//!   between sessions (recent files, labels, colour-by, open panels);
//! - **transient state** — canvas view, tool in progress, hover,
//!   [`Selection`], inspector text buffers, [`Status`] line, open windows;
//!   never saved. The small types the panels share live in [`intents`].
//!
//! Each frame: solve if the project changed (see [`solve`]), draw the
//! panels (they receive what they need and push [`Intents`]: edits, actions,
//! selection), then apply the edits with `Project::apply` in one place.
//!
//! Panels import the shared types from their own modules ([`intents`],
//! [`prefs`], `findings_view`, [`theme`], …), never from this file, which
//! puts the panels together; only the window launcher
//! ([`run_window`], in `files`) reaches up, for [`FlowriseApp`] itself.

pub mod actions;
pub mod canvas;
pub mod dialogs;
mod drawer;
mod export;
mod fields;
pub mod file_dialog;
mod file_flow;
mod files;
mod findings_view;
mod history;
mod inspector;
pub mod intents;
pub mod many;
mod outline;
pub mod prefs;
pub mod recovery;
mod scenarios;
pub mod schedule;
mod settings_panel;
mod solve;
pub mod theme;
mod tool_column;
mod top_bar;
pub mod underlay;

use std::path::PathBuf;
use std::sync::Arc;

use egui::{Color32, RichText, Ui};
use flowrise_core::design::{ItemRef, Solution};
use flowrise_core::project::{Edit, PlanPoint, Project};

pub use actions::Action;
pub use canvas::{CanvasState, Tool};
pub use files::{StartProject, WindowError, run_window};
pub use intents::{Intents, QueuedEdit, SelectNew, Selection, Status};
pub use prefs::{PREFS_KEY, Prefs};
pub use theme::ColourBy;

/// The caution shown in the status line and the About window (the same words as the report and the README).
pub const CAUTION: &str = "Design aid only — pressures, temperatures, materials and safety devices must follow local codes and licensed practice (EN 12828 or the local equivalent). Hot surfaces can burn.";

pub use drawer::Tab as DrawerTab;
pub use file_flow::{FilePurpose, Notice, Pending, ScheduleFile};

/// The flowrise application.
#[derive(Debug)]
pub struct FlowriseApp {
    // ---- the document (shared with the saved copy, the undo snapshots and
    // a background solve until it is edited: `Arc::make_mut` on edit)
    project: Arc<Project>,
    path: Option<PathBuf>,
    saved: Arc<Project>,
    /// Whether the document differs from `saved`, for the project revision
    /// it was found at: the comparison walks the whole document, and the
    /// title, the top bar and the close guard ask every frame. Cleared
    /// wherever `saved` or the document is replaced.
    dirty_memo: std::cell::Cell<Option<(u64, bool)>>,
    history: history::History,
    // ---- results
    solver: solve::SolveRunner,
    // ---- UI preferences (eframe storage)
    /// Preferences.
    pub prefs: Prefs,
    // ---- transient state
    canvas: CanvasState,
    selection: Selection,
    inspector: fields::FieldState,
    drawer: drawer::DrawerState,
    status: Option<Status>,
    show_about: bool,
    show_settings: bool,
    outline: Option<outline::OutlineForm>,
    /// Copy and paste, repeat level, the room-load schedule.
    many: many::ManyState,
    /// What waits behind the unsaved-changes question.
    pending: Option<Pending>,
    allow_close: bool,
    /// A file being chosen (desktop or in-window dialog).
    file_request: Option<file_flow::FileRequest>,
    /// Whether the desktop offers a file dialog.
    probe: dialogs::Probe,
    /// A failure or a finished export waiting for an answer.
    notice: Option<Notice>,
    /// How a written report is opened with the default program.
    opener: file_flow::Opener,
    /// A report being opened on a worker thread, and its answer to come.
    opening: Option<(PathBuf, std::sync::mpsc::Receiver<std::io::Result<()>>)>,
    /// What waits for the save behind the conflict question.
    conflict_then: Option<Pending>,
    /// The window title last sent.
    title: String,
    /// Height of the top strip, measured on the last frame.
    top_height: f32,
    /// The document's file as this session last read or wrote it.
    disk_stamp: Option<recovery::FileStamp>,
    /// Recovered work whose file changed or moved since: saving over it asks.
    save_conflict: Option<recovery::SaveConflict>,
    /// The question about [`Self::save_conflict`] is open.
    conflict_prompt: bool,
    // ---- no lost work
    autosave: Option<recovery::Autosaver>,
    /// Work of sessions that did not close cleanly, offered on start.
    orphans: Vec<recovery::Orphan>,
    /// Plan underlays: files read, the panel, scale by two points.
    underlay: underlay::UnderlayUi,
}

impl FlowriseApp {
    /// An app showing `project` (loaded from `path`, if any).
    #[must_use]
    pub fn new(project: Project, path: Option<PathBuf>) -> Self {
        let canvas = CanvasState::for_project(&project);
        let project = Arc::new(project);
        let path = path.map(|p| recovery::absolute_path(&p));
        Self {
            disk_stamp: path.as_deref().and_then(recovery::FileStamp::of),
            save_conflict: None,
            conflict_prompt: false,
            saved: Arc::clone(&project),
            dirty_memo: std::cell::Cell::new(None),
            project,
            path,
            history: history::History::default(),
            solver: solve::SolveRunner::default(),
            prefs: Prefs::default(),
            canvas,
            selection: Selection::None,
            inspector: fields::FieldState::default(),
            drawer: drawer::DrawerState::default(),
            status: None,
            show_about: false,
            show_settings: false,
            outline: None,
            many: many::ManyState::default(),
            pending: None,
            allow_close: false,
            file_request: None,
            probe: dialogs::Probe::none("no desktop dialog was looked for"),
            notice: None,
            opener: file_flow::open_with_default_program,
            opening: None,
            conflict_then: None,
            title: String::new(),
            top_height: 32.0,
            autosave: None,
            orphans: Vec::new(),
            underlay: underlay::UnderlayUi::default(),
        }
    }

    /// Turn on autosave in `cfg.dir` and look there for work left by
    /// sessions that did not close cleanly (offered in a window on the next
    /// frame). A folder that cannot be used is reported in the status line.
    #[must_use]
    pub fn with_recovery(mut self, cfg: recovery::RecoveryConfig, background: bool) -> Self {
        recovery::remove_stale_locks(&cfg.dir);
        self.orphans = recovery::find_orphans(&cfg.dir);
        match recovery::Autosaver::start(cfg, self.project.revision) {
            Ok(mut a) => {
                a.background = background;
                self.autosave = Some(a);
            }
            Err(e) => self.status = Some(Status::error(format!("no autosave: {e}"))),
        }
        self
    }

    /// Open written reports with `opener` instead of the default program
    /// (tests: an opener that fails, to see the message).
    #[must_use]
    pub fn with_opener(mut self, opener: file_flow::Opener) -> Self {
        self.opener = opener;
        self
    }

    /// This session's autosave file, when autosave is on.
    #[must_use]
    pub fn autosave_path(&self) -> Option<PathBuf> {
        self.autosave.as_ref().map(recovery::Autosaver::project_path)
    }

    /// Work offered for recovery.
    #[must_use]
    pub fn orphans(&self) -> &[recovery::Orphan] {
        &self.orphans
    }

    /// A clean close: remove this session's recovery files.
    pub fn close_cleanly(&mut self) {
        if let Some(a) = &mut self.autosave {
            a.finish();
        }
    }

    /// Recover the work of offer `i`: it becomes the open document (with
    /// unsaved changes, tied to its original file), is autosaved by this
    /// session, and only then are the old files removed.
    pub fn recover(&mut self, i: usize) {
        if i >= self.orphans.len() {
            return;
        }
        let o = self.orphans.remove(i);
        match o.load() {
            Ok(p) => {
                let conflict = o.save_conflict();
                // An autosave of an older build may name its file without
                // the folder: that could be any file, so Save asks where.
                let original = o.original_path.clone().filter(|q| q.is_absolute());
                let on_disk = original.as_ref().filter(|_| conflict.is_none()).and_then(|q| Project::load(q).ok());
                self.replace_project(p, original);
                // Compared with the file on disk (or with nothing, if it
                // never had one) the recovered work shows as unsaved.
                self.saved = Arc::new(on_disk.unwrap_or_else(|| Project::new("")));
                self.dirty_memo.set(None);
                // The stamp the crashed session knew: a second crash still
                // sees the file as changed.
                self.disk_stamp = o.original_stamp;
                self.save_conflict = conflict.filter(|c| c.path.is_absolute());
                let kept = match &mut self.autosave {
                    Some(a) => {
                        let origin = self.path.as_deref().map(|q| (q, self.disk_stamp));
                        a.write(&self.project, origin);
                        a.tick(&self.project, true, origin, false);
                        a.error.is_none()
                    }
                    None => false,
                };
                if kept && let Some(a) = &self.autosave {
                    o.remove(a.dir());
                }
                let belongs = match (&self.path, &self.save_conflict) {
                    (Some(q), None) => format!(" — it belongs to {}", q.display()),
                    (Some(q), Some(c)) => {
                        format!(" — it belongs to {}, which {}; saving will ask", q.display(), c.reason)
                    }
                    (None, _) => String::new(),
                };
                let text = format!("recovered “{}”{belongs} — save it to keep it", self.project.name);
                self.status = Some(if self.save_conflict.is_some() { Status::error(text) } else { Status::note(text) });
            }
            Err(e) => {
                self.status = Some(Status::error(format!("cannot recover {}: {e}", o.project_path.display())));
                self.orphans.insert(i, o);
            }
        }
    }

    /// Delete the work of offer `i`.
    pub fn discard_orphan(&mut self, i: usize) {
        if i < self.orphans.len() {
            let o = self.orphans.remove(i);
            if let Some(dir) = o.project_path.parent() {
                o.remove(dir);
            }
        }
    }

    /// The document.
    #[must_use]
    pub fn project(&self) -> &Project {
        &self.project
    }

    /// The latest results (may be one revision behind while a worker runs).
    #[must_use]
    pub fn solution(&self) -> &Solution {
        self.solver.latest()
    }

    /// How long the last solve took, ms (what the top bar shows).
    #[must_use]
    pub fn last_solve_ms(&self) -> f64 {
        self.solver.last_ms()
    }

    /// The document's file (absolute), if it has one.
    #[must_use]
    pub fn path(&self) -> Option<&std::path::Path> {
        self.path.as_deref()
    }

    /// The status line's message, if any.
    #[must_use]
    pub fn status(&self) -> Option<&Status> {
        self.status.as_ref()
    }

    /// The current selection.
    #[must_use]
    pub fn selection(&self) -> Selection {
        self.selection
    }

    /// Select an item (tests, findings).
    pub fn select(&mut self, selection: Selection) {
        self.selection = selection;
    }

    /// The canvas state (view, level, tool).
    #[must_use]
    pub fn canvas(&self) -> &CanvasState {
        &self.canvas
    }

    /// The canvas state, mutable (tests pick the level this way).
    pub fn canvas_mut(&mut self) -> &mut CanvasState {
        &mut self.canvas
    }

    /// Screen position of a plan point on the canvas as drawn in the last frame.
    #[must_use]
    pub fn screen_from_plan(&self, p: PlanPoint) -> egui::Pos2 {
        self.canvas.view.screen_from_plan(p)
    }

    /// Solve on the UI thread only (deterministic tests and benchmarks).
    pub fn set_background_solve(&mut self, on: bool) {
        self.solver.background = on;
    }

    /// True when the document differs from the saved file.
    #[must_use]
    pub fn is_dirty(&self) -> bool {
        let revision = self.project.revision;
        if let Some((at, dirty)) = self.dirty_memo.get()
            && at == revision
        {
            return dirty;
        }
        let dirty = !Arc::ptr_eq(&self.project, &self.saved) && *self.project != *self.saved;
        self.dirty_memo.set(Some((revision, dirty)));
        dirty
    }

    /// Replace the document (New/Open): fresh history, view and results.
    pub fn replace_project(&mut self, mut project: Project, path: Option<PathBuf>) {
        // Revisions stay unique within a session (as on undo), so what is
        // kept per revision — results, the views' per-revision lookups —
        // is never mistaken for another document's.
        project.revision = self.project.revision + 1;
        self.canvas = CanvasState::for_project(&project);
        self.project = Arc::new(project);
        self.saved = Arc::clone(&self.project);
        self.dirty_memo.set(None);
        self.path = path.map(|p| recovery::absolute_path(&p));
        self.disk_stamp = self.path.as_deref().and_then(recovery::FileStamp::of);
        self.save_conflict = None;
        self.conflict_prompt = false;
        self.history.clear();
        self.solver.reset();
        self.drawer.forget_results();
        self.selection = Selection::None;
        self.inspector = fields::FieldState::default();
    }

    /// Draw the whole window and apply what the user asked for.
    pub fn ui(&mut self, ui: &mut Ui) {
        let ctx = ui.ctx().clone();
        let mut out = Intents::default();
        self.handle_keys(&ctx, &mut out);
        self.handle_close_request(&ctx);
        let busy = self.solver.ensure(&self.project);
        let sol = Arc::clone(self.solver.latest());
        let stale = sol.revision != self.project.revision;

        let recent = self.prefs.recent.clone();
        let has_risers = self.project.vertical_runs().next().is_some();
        let width = ui.available_width();
        // Sized to its contents of the last frame: it wraps onto a second
        // row in a narrow window and shrinks back in a wide one.
        let top_height = self.top_height;
        let mut used = top_height;
        egui::Panel::top("top_strip").exact_size(top_height).show(ui, |ui| {
            let model = top_bar::TopBar {
                name: &self.project.name,
                dirty: self.is_dirty(),
                mode: self.project.settings.mode,
                can_undo: self.history.can_undo(),
                can_redo: self.history.can_redo(),
                stale,
                solve_ms: self.solver.last_ms(),
                recent: &recent,
                has_risers,
            };
            used = top_bar::show(ui, &model, &self.project, &sol, &mut self.prefs, &mut out);
        });
        let margin = egui::Frame::side_top_panel(ui.style()).total_margin().sum().y;
        let wanted = (used + margin).max(24.0).ceil();
        if (wanted - self.top_height).abs() > 0.5 {
            self.top_height = wanted;
            ctx.request_repaint();
        }
        egui::Panel::bottom("status_line").show(ui, |ui| status_line(ui, self.status.as_ref()));
        egui::Panel::left("tool_column").resizable(false).exact_size(112.0).show(ui, |ui| {
            tool_column::show(ui, &mut self.canvas.tool, &mut self.canvas.header_outlets, &mut out);
        });
        // The inspector never widens itself to its contents (they scroll),
        // so opening a section cannot squeeze the plan.
        let inspector_max = (width * 0.4).max(280.0);
        egui::Panel::right("inspector").resizable(true).default_size(330.0).size_range(260.0..=inspector_max).show(
            ui,
            |ui| {
                inspector::show(
                    ui,
                    &self.project,
                    &sol,
                    self.selection,
                    self.canvas.level,
                    &mut self.inspector,
                    &mut out,
                );
            },
        );
        let mut drawer_view =
            drawer::DrawerView { open: &mut self.prefs.drawer_open, height: &mut self.prefs.drawer_height };
        drawer::show(ui, &self.project, &sol, &mut drawer_view, &mut self.drawer, &mut out);
        self.underlay_frame(&ctx, &mut out);
        egui::CentralPanel::no_frame().show(ui, |ui| {
            let opts = canvas::CanvasOptions {
                colour_by: self.prefs.colour_by,
                show_labels: self.prefs.show_labels,
                show_elevation: self.prefs.show_elevation && has_risers,
            };
            let (canvas, underlay) = (&mut self.canvas, &mut self.underlay);
            canvas::show(ui, &self.project, &sol, opts, canvas, self.selection, underlay, &mut out);
        });
        self.windows(&ctx, &mut out);
        self.apply(out, &ctx);
        self.autosave_tick(&ctx);
        self.update_title(&ctx);
        if busy {
            ctx.request_repaint_after(std::time::Duration::from_millis(30));
        }
    }

    /// The window title: the project, its file and the unsaved mark.
    fn update_title(&mut self, ctx: &egui::Context) {
        let file = self
            .path
            .as_deref()
            .and_then(std::path::Path::file_name)
            .map_or_else(|| "not saved to a file".to_owned(), |f| f.to_string_lossy().into_owned());
        let mark = if self.is_dirty() { " •" } else { "" };
        let title = format!("{}{mark} ({file}) — flowrise", self.project.name);
        if title != self.title {
            ctx.send_viewport_cmd(egui::ViewportCommand::Title(title.clone()));
            self.title = title;
        }
    }

    fn autosave_tick(&mut self, ctx: &egui::Context) {
        let dirty = self.is_dirty();
        let Some(a) = &mut self.autosave else { return };
        let hold = ctx.input(|i| i.pointer.any_down());
        let origin = self.path.as_deref().map(|q| (q, self.disk_stamp));
        if let Some(wait) = a.tick(&self.project, dirty, origin, hold) {
            ctx.request_repaint_after(wait);
        }
        if let Some(e) = a.error.take() {
            self.status = Some(Status::error(e));
        }
    }

    /// The recovery offer, while there is work to offer.
    fn recovery_offer(&mut self, ctx: &egui::Context) {
        // Hidden while the unsaved-changes question about it is open.
        if self.orphans.is_empty() || self.pending.is_some() {
            return;
        }
        enum Choice {
            Recover(usize),
            Discard(usize),
            Later,
        }
        let mut choice = None;
        egui::Modal::new(egui::Id::unique("recovery_offer")).show(ctx, |ui| {
            ui.set_max_width(560.0);
            ui.heading("Recover unsaved work?");
            ui.label("flowrise did not close cleanly last time. This unsaved work was kept:");
            ui.add_space(6.0);
            for (i, o) in self.orphans.iter().enumerate() {
                ui.group(|ui| {
                    match &o.summary {
                        Ok(s) => ui.label(RichText::new(s).strong()),
                        Err(e) => ui.label(RichText::new(format!("damaged autosave: {e}")).color(theme::ERROR)),
                    };
                    let from = o
                        .original_path
                        .as_ref()
                        .map_or_else(|| "never saved to a file".to_owned(), |p| format!("belongs to {}", p.display()));
                    ui.label(format!("{from}; autosaved {}", o.age_text()));
                    if let Some(c) = &o.conflict {
                        ui.label(
                            RichText::new(format!("that file {} — saving will ask", c.reason)).color(theme::WARNING),
                        );
                    }
                    ui.label(RichText::new(o.project_path.display().to_string()).small().weak());
                    ui.horizontal(|ui| {
                        if o.summary.is_ok() && ui.button("Recover").clicked() {
                            choice = Some(Choice::Recover(i));
                        }
                        if ui.button("Discard").clicked() {
                            choice = Some(Choice::Discard(i));
                        }
                    });
                });
            }
            ui.add_space(6.0);
            if ui.button("Decide later").on_hover_text("Keep the files; ask again next start").clicked() {
                choice = Some(Choice::Later);
            }
        });
        match choice {
            Some(Choice::Recover(i)) => self.replace_or_ask(Pending::Recover(i), ctx),
            Some(Choice::Discard(i)) => self.discard_orphan(i),
            Some(Choice::Later) => self.orphans.clear(),
            None => {}
        }
    }

    fn windows(&mut self, ctx: &egui::Context, out: &mut Intents) {
        self.recovery_offer(ctx);
        self.many_windows(ctx);
        self.conflict_question(ctx);
        self.unsaved_question(ctx);
        self.file_request_frame(ctx);
        self.notice_window(ctx);
        if self.show_about {
            egui::Window::new("About flowrise").open(&mut self.show_about).collapsible(false).show(ctx, |ui| {
                ui.heading("flowrise");
                ui.label(format!("version {}", env!("CARGO_PKG_VERSION")));
                ui.label("Draws two-pipe hydronic heating networks and re-solves the whole design on every edit: emitters, pipe sizes, index circuit, pump duty and valve presettings.");
                ui.add_space(6.0);
                ui.label(RichText::new(CAUTION).color(theme::WARNING));
                ui.label("Values marked “common practice” are rules of thumb, not code requirements.");
            });
        }
        if self.show_settings {
            let mut open = true;
            egui::Window::new("Design settings").open(&mut open).default_width(380.0).show(ctx, |ui| {
                settings_panel::show(ui, &self.project, &sol_ref(&self.solver), &mut self.inspector, out);
            });
            self.show_settings = open;
        }
        if let Some(form) = &mut self.outline {
            let mut open = true;
            let mut outcome = outline::OutlineOutcome::Open;
            egui::Window::new("New from building outline")
                .open(&mut open)
                .collapsible(false)
                .default_width(420.0)
                .show(ctx, |ui| outcome = outline::show(ui, form));
            match outcome {
                outline::OutlineOutcome::Created(mut p) => {
                    let n = p.emitters().len();
                    p.name = format!("New building, {} floors", p.levels.len());
                    self.replace_project(*p, None);
                    self.outline = None;
                    self.status = Some(Status::note(format!(
                        "new project with {n} emitters — replace the room loads with your own"
                    )));
                }
                outline::OutlineOutcome::Cancelled => self.outline = None,
                outline::OutlineOutcome::Open if !open => self.outline = None,
                outline::OutlineOutcome::Open => {}
            }
        }
    }

    fn handle_close_request(&mut self, ctx: &egui::Context) {
        if ctx.input(|i| i.viewport().close_requested()) && !self.allow_close && self.is_dirty() {
            ctx.send_viewport_cmd(egui::ViewportCommand::CancelClose);
            self.pending = Some(Pending::Close);
        }
    }

    fn handle_keys(&mut self, ctx: &egui::Context, out: &mut Intents) {
        let typing = ctx.egui_wants_keyboard_input();
        // No shortcuts under a dialog or question: it has the keyboard.
        if self.file_request.is_some() || self.pending.is_some() || self.notice.is_some() {
            return;
        }
        self.clipboard_events(ctx);
        for a in Action::WITH_KEYS {
            if typing && (a.is_plain_key() || matches!(a, Action::Many(_))) {
                continue;
            }
            let pressed = [a.shortcut(), a.second_shortcut()]
                .into_iter()
                .flatten()
                .any(|sc| ctx.input_mut(|i| i.consume_shortcut(&sc)));
            if pressed {
                out.actions.push(a);
            }
        }
        if !typing {
            if ctx.input(|i| i.key_pressed(egui::Key::Escape)) {
                self.canvas.cancel();
            }
            if ctx.input(|i| i.key_pressed(egui::Key::Delete)) {
                match self.selection {
                    _ if !self.canvas.group.is_empty() => out.actions.push(Action::Many(many::ManyAction::Delete)),
                    Selection::Node(id) => out.edit(Edit::RemoveNode(id)),
                    Selection::Run(id) => out.edit(Edit::RemoveRun(id)),
                    Selection::None => {}
                }
                out.select = Some(Selection::None);
            }
        }
    }

    /// Apply the frame's intents: edits (one undo step each, one per drag),
    /// selection, centring, actions.
    fn apply(&mut self, out: Intents, ctx: &egui::Context) {
        if out.drag_begin {
            self.history.push(Arc::clone(&self.project));
        }
        if let Some(s) = out.select {
            self.selection = s;
        }
        let mut changed = false;
        for q in out.edits {
            let before = (!q.during_drag).then(|| Arc::clone(&self.project));
            let during_drag = q.during_drag;
            let hint = flowrise_core::design::EditHint::for_edit(&self.project, &q.edit);
            let (moves_only, from) = (matches!(q.edit, Edit::MoveNodes { .. }), self.project.revision);
            match Arc::make_mut(&mut self.project).apply(q.edit) {
                Ok(outcome) => {
                    changed = true;
                    if moves_only {
                        // Nothing changes level: the canvas's lists hold.
                        self.canvas.index.carry_over(from, self.project.revision);
                    }
                    self.solver.note_edit(hint, during_drag);
                    if let Some(b) = before {
                        self.history.push(b);
                    }
                    if let Some(f) = &q.field {
                        self.inspector.clear_error(f);
                    }
                    match q.select_new {
                        SelectNew::Node => {
                            if let Some(&n) = outcome.nodes.last() {
                                self.selection = Selection::Node(n);
                            }
                        }
                        SelectNew::Run => {
                            if let Some(&r) = outcome.runs.first() {
                                self.selection = Selection::Run(r);
                            }
                        }
                        SelectNew::Nothing => {}
                    }
                }
                Err(e) => match &q.field {
                    Some(f) => self.inspector.set_error(f, e.to_string()),
                    None => self.status = Some(Status::error(e.to_string())),
                },
            }
        }
        if out.drag_end {
            self.history.drop_if_unchanged(&self.project);
            self.solver.end_drag();
        }
        if let Some(s) = out.status {
            self.status = Some(s);
        }
        if let Some(item) = out.centre_on {
            self.centre_on(item);
        }
        if let Some(path) = out.open_path {
            self.replace_or_ask(Pending::OpenRecent(path), ctx);
        }
        if let Some(level) = out.show_level {
            self.show_level(level);
        }
        if let Some(tab) = out.drawer_tab {
            self.drawer.tab = tab;
            self.prefs.drawer_open = true;
        }
        for a in out.actions {
            self.run_action(a, ctx);
        }
        // Drop a selection whose item is gone.
        match self.selection {
            Selection::Node(id) if self.project.node(id).is_none() => self.selection = Selection::None,
            Selection::Run(id) if self.project.run(id).is_none() => self.selection = Selection::None,
            _ => {}
        }
        if changed {
            ctx.request_repaint();
        }
    }

    /// Select an item and centre the canvas on it.
    pub fn centre_on(&mut self, item: ItemRef) {
        match item {
            ItemRef::Node(id) => {
                if let Some(n) = self.project.node(id) {
                    self.canvas.centre_on(n.level, n.pos);
                    self.selection = Selection::Node(id);
                }
            }
            ItemRef::Run(id) => {
                if let Some(r) = self.project.run(id)
                    && let (Some(a), Some(b)) = (self.project.node(r.a), self.project.node(r.b))
                {
                    let mid = PlanPoint::new(0.5 * (a.pos.x_m + b.pos.x_m), 0.5 * (a.pos.y_m + b.pos.y_m));
                    self.canvas.centre_on(a.level, mid);
                    self.selection = Selection::Run(id);
                }
            }
            ItemRef::Settings | ItemRef::Project => {
                self.selection = Selection::None;
                self.show_settings = true;
            }
        }
    }

    /// Carry out an action.
    pub fn run_action(&mut self, a: Action, ctx: &egui::Context) {
        match a {
            Action::New => self.replace_or_ask(Pending::New, ctx),
            Action::NewFromOutline => self.replace_or_ask(Pending::NewFromOutline, ctx),
            Action::Open => self.replace_or_ask(Pending::Open, ctx),
            Action::Quit => self.replace_or_ask(Pending::Close, ctx),
            Action::RecoverWork => self.look_for_work_to_recover(),
            Action::InWindowDialog => {
                self.prefs.file_dialog = match self.prefs.file_dialog {
                    dialogs::DialogChoice::Automatic => dialogs::DialogChoice::InWindow,
                    dialogs::DialogChoice::InWindow => dialogs::DialogChoice::Automatic,
                };
            }
            Action::Save => self.save(false, None, ctx),
            Action::SaveAs => self.save(true, None, ctx),
            Action::Undo => self.undo(),
            Action::Redo => self.redo(),
            Action::Tool(t) => {
                self.canvas.tool = t;
                self.canvas.cancel();
                // A hint belongs to the tool it was given for.
                if self.status.as_ref().is_some_and(|s| s.hint) {
                    self.status = None;
                }
            }
            Action::ToggleLabels => self.prefs.show_labels = !self.prefs.show_labels,
            Action::FitView => self.canvas.fit_pending = true,
            Action::ToggleElevation => self.prefs.show_elevation = !self.prefs.show_elevation,
            Action::Settings => self.show_settings = true,
            Action::About => self.show_about = true,
            Action::ExportParts => self.export(export::Kind::Parts),
            Action::ExportReport => self.export(export::Kind::Report),
            Action::PlanUnderlay => self.underlay.open = true,
            Action::Many(m) => self.run_many(m, ctx),
        }
        ctx.request_repaint();
    }

    fn restore(&mut self, mut p: Arc<Project>) {
        // A restored snapshot gets a new revision so results are never mistaken
        // for the ones of the state it replaced.
        Arc::make_mut(&mut p).revision = self.project.revision + 1;
        self.project = p;
        // A replaced project: no edit hint leads to it.
        self.solver.forget_edits();
        self.inspector = fields::FieldState::default();
    }

    /// Undo one step.
    pub fn undo(&mut self) {
        if let Some(p) = self.history.undo(&self.project) {
            self.restore(p);
        }
    }

    /// Redo one step.
    pub fn redo(&mut self) {
        if let Some(p) = self.history.redo(&self.project) {
            self.restore(p);
        }
    }

    /// Show a level on the canvas (level tabs, riser view). A selection on
    /// another level is dropped, so the inspector shows what is on screen.
    pub fn show_level(&mut self, level: flowrise_core::project::LevelId) {
        if self.canvas.level == level {
            return;
        }
        self.canvas.level = level;
        self.canvas.draft = None;
        self.canvas.fit_pending = true;
        let on_level = |id| self.project.node(id).is_some_and(|n| n.level == level);
        let keep = match self.selection {
            Selection::Node(id) => on_level(id),
            Selection::Run(id) => self.project.run(id).is_some_and(|r| on_level(r.a) || on_level(r.b)),
            Selection::None => true,
        };
        if !keep {
            self.selection = Selection::None;
        }
    }

    /// File → Recover unsaved work: look again for work left by sessions
    /// that did not close cleanly (after "Decide later").
    fn look_for_work_to_recover(&mut self) {
        let Some(dir) = self.autosave.as_ref().map(|a| a.dir().to_path_buf()) else {
            self.status = Some(Status::error("autosave is off in this session: there is no recovery folder"));
            return;
        };
        self.orphans = recovery::find_orphans(&dir);
        if self.orphans.is_empty() {
            self.status = Some(Status::note(format!("no unsaved work of other sessions in {}", dir.display())));
        }
    }

    fn remember(&mut self, path: &std::path::Path) {
        self.prefs.recent.retain(|p| p != path);
        self.prefs.recent.insert(0, path.to_path_buf());
        self.prefs.recent.truncate(8);
    }
}

fn sol_ref(solver: &solve::SolveRunner) -> Arc<Solution> {
    Arc::clone(solver.latest())
}

/// The status line: the last message first (whole when it fits, elided
/// with the full text on hover when not), then the caution.
fn status_line(ui: &mut Ui, status: Option<&Status>) {
    ui.horizontal(|ui| {
        if let Some(s) = status {
            let c = if s.error { theme::ERROR } else { theme::INK };
            ui.add(egui::Label::new(RichText::new(&s.text).color(c)).truncate()).on_hover_text(&s.text);
            ui.separator();
        }
        ui.add(
            egui::Label::new(
                RichText::new(format!("Caution: {CAUTION}")).small().color(Color32::from_rgb(0x7a, 0x5a, 0x10)),
            )
            .truncate(),
        )
        .on_hover_text(CAUTION);
    });
}

impl eframe::App for FlowriseApp {
    fn ui(&mut self, ui: &mut Ui, _frame: &mut eframe::Frame) {
        FlowriseApp::ui(self, ui);
    }

    fn save(&mut self, storage: &mut dyn eframe::Storage) {
        eframe::set_value(storage, PREFS_KEY, &self.prefs);
    }

    fn on_exit(&mut self, _gl: Option<&eframe::glow::Context>) {
        self.close_cleanly();
    }
}
