//! Plan underlays in the window: a plan (PNG, JPEG, PDF page or DXF
//! drawing) drawn under a level's network to trace over.
//!
//! - The placement is part of the document (`Level::underlay`, changed by
//!   `Edit::SetLevel`, so every change is one undo step); the files read
//!   and what is drawn from them are transient ([`UnderlayUi`], never saved).
//! - Files are read on a worker thread ([`cache`]); while one is read the
//!   canvas shows a busy mark with its name; one that cannot be read is a
//!   mark on the canvas and a line in the status strip — the project opens
//!   and works all the same.
//! - The "Plan underlay" panel ([`panel`], from the tool column or a level
//!   tab's context menu): choose the file, scale by two points and a typed
//!   distance, move, rotate, fade, hide, lock.
//! - [`UnderlayUi::line_ends`]: the plan points where the drawing's lines
//!   end, for snapping.

mod cache;
mod paint;
mod panel;

use std::path::{Path, PathBuf};
use std::sync::Arc;

use egui::{Pos2, Stroke, vec2};
use flowrise_core::project::{Edit, Level, LevelId, PlanPoint, Project, Underlay, underlay::stored_path};
use flowrise_core::underlay::LoadedUnderlay;

pub use paint::Geometry;

use super::FlowriseApp;
use super::canvas::CanvasState;
use super::intents::{Intents, Status};
use super::theme;

/// Scale by two points, in progress.
#[derive(Debug, Clone, PartialEq)]
pub struct Calibration {
    /// Level whose underlay is scaled.
    pub level: LevelId,
    /// First point clicked, m.
    pub a: Option<PlanPoint>,
    /// Second point clicked, m.
    pub b: Option<PlanPoint>,
    /// The distance as typed, m.
    pub distance: String,
    /// Why the last "Apply" was refused.
    pub error: Option<String>,
}

/// Moving a level's plan by dragging on the canvas: armed from the panel
/// until "Done moving"; `grab` while a drag runs.
#[derive(Debug, Clone, PartialEq)]
struct Moving {
    level: LevelId,
    /// Where the drag was pressed and where the plan's origin was then, m.
    grab: Option<(PlanPoint, PlanPoint)>,
}

/// An import being read.
#[derive(Debug)]
struct Import {
    level: LevelId,
    path: PathBuf,
    state: cache::State,
}

/// Transient underlay state of the window (never saved).
#[derive(Debug)]
pub struct UnderlayUi {
    /// The panel is open.
    pub open: bool,
    /// Read files on worker threads (off in tests and benchmarks).
    pub background: bool,
    files: cache::Files,
    calibration: Option<Calibration>,
    moving: Option<Moving>,
    import: Option<Import>,
    /// Folder of the project file (relative underlay paths start there).
    project_dir: Option<PathBuf>,
    /// Line ends of the drawing shown while scaling (snapping the clicks).
    snap_cache: Vec<PlanPoint>,
}

impl Default for UnderlayUi {
    fn default() -> Self {
        Self {
            open: false,
            background: true,
            files: cache::Files::default(),
            calibration: None,
            moving: None,
            import: None,
            project_dir: None,
            snap_cache: Vec::new(),
        }
    }
}

/// Snap distance to a drawing's line end, screen points.
const SNAP_PX: f32 = 8.0;

impl UnderlayUi {
    /// The scale-by-two-points state, while it runs.
    #[must_use]
    pub fn calibration(&self) -> Option<&Calibration> {
        self.calibration.as_ref()
    }

    /// Start setting the scale of `level`'s underlay by two points.
    pub fn start_calibration(&mut self, level: LevelId) {
        self.calibration = Some(Calibration { level, a: None, b: None, distance: String::new(), error: None });
        self.moving = None;
    }

    /// True while dragging on the canvas moves `level`'s plan.
    #[must_use]
    pub fn moving(&self, level: LevelId) -> bool {
        self.moving.as_ref().is_some_and(|m| m.level == level)
    }

    /// Arm (or, with `false`, end) moving `level`'s plan by dragging on the
    /// canvas; it ends scaling by two points.
    pub fn set_moving(&mut self, level: LevelId, on: bool) {
        self.moving = on.then_some(Moving { level, grab: None });
        if on {
            self.calibration = None;
        }
    }

    /// A canvas drag while moving the plan is armed: a primary-button drag
    /// moves the shown level's plan (one undo step per drag); right and
    /// middle drags still pan. True when the drag was taken.
    pub fn canvas_drag(
        &mut self,
        ui: &egui::Ui,
        resp: &egui::Response,
        project: &Project,
        state: &CanvasState,
        out: &mut Intents,
    ) -> bool {
        let Some(m) = self.moving.as_mut().filter(|m| m.level == state.level) else { return false };
        let Some(level) = project.levels.iter().find(|l| l.id == state.level) else { return false };
        let Some(u) = level.underlay.as_ref().filter(|u| !u.locked) else {
            m.grab = None;
            return false;
        };
        if resp.hovered() {
            ui.ctx().set_cursor_icon(egui::CursorIcon::Move);
        }
        if resp.drag_started_by(egui::PointerButton::Primary) {
            let press = ui.input(|i| i.pointer.press_origin()).or(resp.interact_pointer_pos());
            if let Some(p) = press {
                m.grab = Some((state.view.plan_from_screen(p), u.origin));
                out.drag_begin = true;
            }
        }
        let Some((press, origin)) = m.grab else { return false };
        if resp.dragged()
            && let Some(p) = resp.interact_pointer_pos().map(|q| state.view.plan_from_screen(q))
        {
            let to = PlanPoint::new(origin.x_m + p.x_m - press.x_m, origin.y_m + p.y_m - press.y_m);
            if to != u.origin {
                let moved = Underlay { origin: to, ..u.clone() };
                out.edit_during_drag(Edit::SetLevel(Level { underlay: Some(moved), ..level.clone() }));
            }
        }
        if resp.drag_stopped() {
            m.grab = None;
            out.drag_end = true;
        }
        true
    }

    /// Read `path` and make it the underlay of `level` when it can be read
    /// (the project is unchanged when it cannot).
    pub fn start_import(&mut self, level: LevelId, path: PathBuf) {
        let state = cache::spawn(&path, 1, self.background);
        self.import = Some(Import { level, path, state });
    }

    /// True while an import is being read.
    #[must_use]
    pub fn importing(&self) -> Option<&Path> {
        self.import.as_ref().map(|i| i.path.as_path())
    }

    fn file_of(&self, u: &Underlay) -> cache::Key {
        (u.resolve(self.project_dir.as_deref()), u.page)
    }

    /// The file of `level`'s underlay as read, when it has been.
    #[must_use]
    pub fn loaded(&mut self, project: &Project, level: LevelId) -> Option<Arc<LoadedUnderlay>> {
        let u = project.levels.iter().find(|l| l.id == level)?.underlay.as_ref()?;
        let path = self.file_of(u);
        match &self.files.get(&path, self.background).state {
            cache::State::Ready(l) => Some(Arc::clone(l)),
            _ => None,
        }
    }

    /// The plan points where the lines of `level`'s underlay drawing end
    /// (none for a picture, a hidden underlay or one not read yet): the
    /// targets for snapping to the underlay.
    #[must_use]
    pub fn line_ends(&mut self, project: &Project, level: LevelId) -> Vec<PlanPoint> {
        let Some(u) = project.levels.iter().find(|l| l.id == level).and_then(|l| l.underlay.as_ref()) else {
            return Vec::new();
        };
        if u.hidden {
            return Vec::new();
        }
        let path = self.file_of(u);
        let entry = self.files.get(&path, self.background);
        let cache::State::Ready(l) = &entry.state else { return Vec::new() };
        let flowrise_core::underlay::UnderlayContent::Vector(v) = &l.content else { return Vec::new() };
        if !entry.geometry.as_ref().is_some_and(|g| g.fits(u)) {
            entry.geometry = Some(Geometry::build(v, u));
        }
        entry.geometry.as_ref().map(|g| g.ends.clone()).unwrap_or_default()
    }

    /// A canvas click while scaling by two points: it sets a point (snapped
    /// to a drawing's line end within a few pixels). True when the click
    /// was taken.
    pub fn canvas_click(&mut self, resp: &egui::Response, state: &CanvasState, _out: &mut Intents) -> bool {
        let Some(cal) = &self.calibration else { return false };
        if cal.level != state.level || !resp.clicked() {
            return false;
        }
        let Some(pos) = resp.interact_pointer_pos() else { return false };
        let at = snap_to(&self.snap_cache, state, pos);
        let Some(cal) = &mut self.calibration else { return false };
        match (cal.a, cal.b) {
            (None, _) | (Some(_), Some(_)) => {
                cal.a = Some(at);
                cal.b = None;
            }
            (Some(_), None) => cal.b = Some(at),
        }
        cal.error = None;
        true
    }

    /// Draw the shown level's underlay (and the scale points) under the network.
    pub fn paint(&mut self, painter: &egui::Painter, project: &Project, state: &CanvasState) {
        self.snap_cache.clear();
        let Some(level) = project.levels.iter().find(|l| l.id == state.level) else { return };
        let Some(u) = &level.underlay else { return };
        let path = self.file_of(u);
        let name = path.0.file_name().map_or_else(|| u.path.clone(), |n| n.to_string_lossy().into_owned());
        let corner = state.view.rect.left_top() + vec2(10.0, 10.0);
        let entry = self.files.get(&path, self.background);
        match &entry.state {
            cache::State::Loading(_) => paint::loading_mark(painter, corner, &name),
            cache::State::Failed(why) => paint::missing_mark(painter, corner, &u.path, why),
            cache::State::Ready(l) if !u.hidden => {
                let l = Arc::clone(l);
                paint::draw(painter, &state.view, u, &l, entry);
                if let Some(g) = &entry.geometry
                    && self.calibration.as_ref().is_some_and(|c| c.level == level.id)
                {
                    self.snap_cache.clone_from(&g.ends);
                }
            }
            cache::State::Ready(_) => {}
        }
        self.paint_calibration(painter, state);
    }

    fn paint_calibration(&self, painter: &egui::Painter, state: &CanvasState) {
        let Some(cal) = self.calibration.as_ref().filter(|c| c.level == state.level) else { return };
        let stroke = Stroke::new(2.0, theme::ACCENT);
        let mark = |p: Pos2| {
            painter.line_segment([p - vec2(7.0, 0.0), p + vec2(7.0, 0.0)], stroke);
            painter.line_segment([p - vec2(0.0, 7.0), p + vec2(0.0, 7.0)], stroke);
            painter.circle_stroke(p, 4.0, stroke);
        };
        let a = cal.a.map(|p| state.view.screen_from_plan(p));
        let b = cal.b.map(|p| state.view.screen_from_plan(p));
        if let Some(a) = a {
            mark(a);
            let end = b.or_else(|| state.pointer_plan.map(|p| state.view.screen_from_plan(p)));
            if let Some(e) = end {
                painter.extend(egui::Shape::dashed_line(&[a, e], stroke, 6.0, 4.0));
            }
        }
        if let Some(b) = b {
            mark(b);
        }
    }

    /// Forget files no level of `project` names any more.
    fn tidy(&mut self, project: &Project) {
        let keep: Vec<cache::Key> =
            project.levels.iter().filter_map(|l| l.underlay.as_ref()).map(|u| self.file_of(u)).collect();
        self.files.retain(&keep);
    }
}

/// The plan point under `pos`, moved to the nearest of `ends` within
/// [`SNAP_PX`].
fn snap_to(ends: &[PlanPoint], state: &CanvasState, pos: Pos2) -> PlanPoint {
    let mut best: Option<(f32, PlanPoint)> = None;
    for &e in ends {
        let d = state.view.screen_from_plan(e).distance(pos);
        if d <= SNAP_PX && best.is_none_or(|(bd, _)| d < bd) {
            best = Some((d, e));
        }
    }
    best.map_or_else(|| state.view.plan_from_screen(pos), |(_, e)| e)
}

/// A first placement for a file just read: its first scale, its lower-left
/// corner at the lower left of what is drawn on the level (or the origin).
fn first_placement(project: &Project, level: LevelId, loaded: &LoadedUnderlay, stored: String) -> Underlay {
    let pts: Vec<PlanPoint> = project.nodes().filter(|n| n.level == level).map(|n| n.pos).collect();
    let (lo, hi) = pts.iter().fold(
        (PlanPoint::new(f64::INFINITY, f64::INFINITY), PlanPoint::new(f64::NEG_INFINITY, f64::NEG_INFINITY)),
        |(lo, hi), p| {
            (PlanPoint::new(lo.x_m.min(p.x_m), lo.y_m.min(p.y_m)), PlanPoint::new(hi.x_m.max(p.x_m), hi.y_m.max(p.y_m)))
        },
    );
    let width = if pts.len() >= 2 { (hi.x_m - lo.x_m).max(hi.y_m - lo.y_m).max(10.0) * 1.2 } else { 30.0 };
    let mut u = Underlay::new(stored, loaded.first_m_per_unit(width));
    let (src_lo, src_hi) = loaded.bounds();
    // A drawing in real units that already lies over the network stays
    // where its coordinates put it (it was drawn in the same frame).
    let (a, b) = (u.plan_from_source(src_lo), u.plan_from_source(src_hi));
    let overlaps = !pts.is_empty() && a.x_m <= hi.x_m && b.x_m >= lo.x_m && a.y_m <= hi.y_m && b.y_m >= lo.y_m;
    if overlaps && matches!(loaded.content, flowrise_core::underlay::UnderlayContent::Vector(_)) {
        return u;
    }
    let corner = if pts.is_empty() { PlanPoint::new(0.0, 0.0) } else { lo };
    let at = u.plan_from_source(src_lo);
    u.origin = PlanPoint::new(corner.x_m - (at.x_m - u.origin.x_m), corner.y_m - (at.y_m - u.origin.y_m));
    u
}

impl FlowriseApp {
    /// The underlay state (tests: read files here instead of on a worker).
    pub fn underlays_mut(&mut self) -> &mut UnderlayUi {
        &mut self.underlay
    }

    /// Write the document to `path` as Save as does, without a dialog
    /// (tests); false when it failed (the notice says why).
    pub fn save_to(&mut self, path: &Path) -> bool {
        self.write_project(path)
    }

    /// The levels' underlays for the report, read from their files.
    pub(super) fn report_underlays(&self) -> flowrise_core::report::svg::PlanUnderlays {
        flowrise_core::report::svg::PlanUnderlays::read(&self.project, self.underlay.project_dir.as_deref())
    }

    /// Once per frame: follow imports, report files that cannot be read,
    /// show the panel.
    pub(super) fn underlay_frame(&mut self, ctx: &egui::Context, out: &mut Intents) {
        self.underlay.project_dir = self.path.as_deref().and_then(Path::parent).map(Path::to_path_buf);
        self.finish_import(out);
        self.underlay.tidy(&self.project);
        // A file of the shown level that cannot be read: once in the status line.
        if let Some(u) =
            self.project.levels.iter().find(|l| l.id == self.canvas.level).and_then(|l| l.underlay.as_ref())
        {
            let path = self.underlay.file_of(u);
            let entry = self.underlay.files.get(&path, self.underlay.background);
            if let cache::State::Failed(why) = &entry.state
                && !entry.reported
            {
                entry.reported = true;
                out.status = Some(Status::error(format!("plan underlay {} cannot be shown: {why}", u.path)));
            }
        }
        if self.underlay.files.any_loading() || self.underlay.import.is_some() {
            ctx.request_repaint_after(std::time::Duration::from_millis(50));
        }
        if self.underlay.open {
            panel::window(self, ctx, out);
        }
    }

    fn finish_import(&mut self, out: &mut Intents) {
        let Some(imp) = &mut self.underlay.import else { return };
        cache::poll(&mut imp.state);
        let (level_id, path) = (imp.level, imp.path.clone());
        let outcome = match &imp.state {
            cache::State::Loading(_) => return,
            cache::State::Failed(why) => Err(why.clone()),
            cache::State::Ready(loaded) => Ok(Arc::clone(loaded)),
        };
        self.underlay.import = None;
        match outcome {
            Err(why) => {
                let text = format!("plan underlay {}: {why}", path.display());
                out.status = Some(Status::error(&text));
                self.notice = Some(super::Notice {
                    title: "The plan was not put under the level".to_owned(),
                    text: format!("{text}. The project is unchanged."),
                    error: true,
                    open: None,
                    retry: Some(super::FilePurpose::Underlay(level_id)),
                });
            }
            Ok(loaded) => {
                let Some(level) = self.project.levels.iter().find(|l| l.id == level_id) else { return };
                let abs = super::recovery::absolute_path(&path);
                let stored = stored_path(&abs, self.underlay.project_dir.as_deref());
                let mut u = first_placement(&self.project, level_id, &loaded, stored);
                // A new file under a level keeps the look it had.
                if let Some(old) = &level.underlay {
                    u.opacity = old.opacity;
                }
                self.underlay.files.insert((abs.clone(), loaded.page), loaded);
                out.edit(Edit::SetLevel(Level { underlay: Some(u), ..level.clone() }));
                out.status = Some(Status::note(format!(
                    "plan {} under {} — set its scale: Plan underlay, Set scale by two points",
                    abs.display(),
                    level.name
                )));
                self.underlay.open = true;
            }
        }
    }

    /// Before writing the project to `path`: keep every underlay pointing at
    /// the same file, relative to the new folder.
    pub(super) fn underlay_paths_for(&mut self, path: &Path) {
        let new_dir = super::recovery::absolute_path(path).parent().map(Path::to_path_buf);
        let old_dir = self.path.as_deref().and_then(Path::parent).map(Path::to_path_buf);
        if let Some(to) = new_dir
            && old_dir.as_deref() != Some(to.as_path())
            && self.project.levels.iter().any(|l| l.underlay.is_some())
        {
            flowrise_core::project::underlay::rebase_paths(
                &mut Arc::make_mut(&mut self.project).levels,
                old_dir.as_deref(),
                &to,
            );
            self.dirty_memo.set(None);
        }
    }
}
