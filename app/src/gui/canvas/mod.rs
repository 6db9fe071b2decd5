//! The plan canvas: one level at a time, level tabs along its lower edge and
//! an optional riser strip beside it.
//!
//! Per frame: map the pointer to plan space once, resolve what is under it
//! ([`hit`]), handle zoom/pan/drag, draw ([`draw`]), then turn clicks into
//! edits through the active tool ([`tools`]). Points drawn or dragged go
//! through the drawing aids ([`snap`]); many nodes are picked with
//! [`select`]. Everything here is transient state ([`CanvasState`]) and is
//! never saved.

pub mod draw;
pub mod elevation;
pub mod hit;
pub mod level_index;
pub mod returns;
pub mod select;
pub mod snap;
pub mod tools;
pub mod view;

use std::collections::BTreeSet;

use egui::{Align2, FontId, Pos2, Sense, Shape, Stroke, Ui};
use flowrise_core::design::Solution;
use flowrise_core::project::{Edit, LevelId, NodeId, PlanPoint, Project};

use tools::RunDraft;
pub use tools::Tool;
pub use view::View;

use super::actions::Action;
use super::intents::{Intents, Selection};
use super::theme::{self, ColourBy};
use super::underlay::UnderlayUi;

/// A drag in progress.
#[derive(Debug, Clone, PartialEq)]
enum Drag {
    /// Panning the view.
    Pan,
    /// Moving nodes: the grabbed node's start position, the offset applied so far.
    Move { ids: Vec<NodeId>, grabbed_start: PlanPoint, pointer_start: PlanPoint, applied: (f64, f64) },
    /// Dragging a selection box (screen points).
    Box { start: Pos2, now: Pos2 },
}

/// Transient canvas state (never saved).
#[derive(Debug, Clone)]
pub struct CanvasState {
    /// Pan and zoom.
    pub view: View,
    /// Level shown.
    pub level: LevelId,
    /// Active tool.
    pub tool: Tool,
    /// Outlets of headers placed with the header tool.
    pub header_outlets: u32,
    /// Run being drawn.
    pub draft: Option<RunDraft>,
    drag: Option<Drag>,
    /// What is under the pointer.
    pub hover: Option<hit::Hit>,
    /// Pointer position on the plan, m.
    pub pointer_plan: Option<PlanPoint>,
    /// Fit the view on the next frame (after open or on request).
    pub fit_pending: bool,
    /// The riser view as last drawn: its rectangle and where each level
    /// is (None when it is not shown).
    pub riser: Option<(egui::Rect, elevation::Bands)>,
    /// Nodes selected together (box select, Shift+click); moved, deleted
    /// and copied as one.
    pub group: BTreeSet<NodeId>,
    /// Where the point being drawn or dragged snapped, and its anchor.
    pub snapped: Option<(snap::Snapped, Option<PlanPoint>)>,
    /// Line ends of the shown level's plan underlay while drawing or
    /// dragging (snap targets; empty otherwise).
    pub plan_ends: Vec<PlanPoint>,
    /// The shown level's nodes and runs, per project revision.
    pub index: level_index::LevelIndex,
}

impl Default for CanvasState {
    fn default() -> Self {
        Self {
            view: View::default(),
            level: LevelId(0),
            tool: Tool::Select,
            header_outlets: 4,
            draft: None,
            drag: None,
            hover: None,
            pointer_plan: None,
            fit_pending: true,
            riser: None,
            group: BTreeSet::new(),
            snapped: None,
            plan_ends: Vec::new(),
            index: level_index::LevelIndex::default(),
        }
    }
}

impl CanvasState {
    /// Fresh state for a newly opened project: the level with the most
    /// emitters (the source's level when there are none), fitted.
    #[must_use]
    pub fn for_project(project: &Project) -> Self {
        let emitters_on =
            |l: LevelId| project.emitters().iter().filter(|&&e| project.node(e).is_some_and(|n| n.level == l)).count();
        let busiest = project
            .levels
            .iter()
            .map(|l| (emitters_on(l.id), l.id))
            .filter(|&(n, _)| n > 0)
            .max_by_key(|&(n, id)| (n, std::cmp::Reverse(id)))
            .map(|(_, id)| id);
        let level = busiest
            .or_else(|| project.sources().first().and_then(|&s| project.node(s)).map(|n| n.level))
            .or_else(|| project.levels.first().map(|l| l.id))
            .unwrap_or(LevelId(0));
        Self { level, ..Self::default() }
    }

    /// Fit the view to the drawing of the current level.
    pub fn fit(&mut self, project: &Project) {
        let mut pts: Vec<PlanPoint> = project.nodes().filter(|n| n.level == self.level).map(|n| n.pos).collect();
        for r in project.runs() {
            if project.node(r.a).is_some_and(|n| n.level == self.level) {
                pts.extend(r.vertices.iter().copied());
            }
        }
        if pts.is_empty() {
            pts.push(PlanPoint::new(0.0, 0.0));
        }
        let min = pts.iter().fold(PlanPoint::new(f64::INFINITY, f64::INFINITY), |m, p| {
            PlanPoint::new(m.x_m.min(p.x_m), m.y_m.min(p.y_m))
        });
        let max = pts.iter().fold(PlanPoint::new(f64::NEG_INFINITY, f64::NEG_INFINITY), |m, p| {
            PlanPoint::new(m.x_m.max(p.x_m), m.y_m.max(p.y_m))
        });
        self.view.fit(min, max);
    }

    /// Centre the view on a plan point (and show its level).
    pub fn centre_on(&mut self, level: LevelId, at: PlanPoint) {
        self.level = level;
        self.view.centre = at;
    }

    /// Cancel the tool in progress (Esc).
    pub fn cancel(&mut self) {
        self.draft = None;
        self.group.clear();
    }

    /// True while a node drag is in progress.
    #[must_use]
    pub fn is_moving(&self) -> bool {
        matches!(self.drag, Some(Drag::Move { .. }))
    }
}

/// What the canvas shows besides the plan.
#[derive(Debug, Clone, Copy)]
pub struct CanvasOptions {
    /// Metric of the run colours.
    pub colour_by: ColourBy,
    /// Labels on.
    pub show_labels: bool,
    /// Riser strip open.
    pub show_elevation: bool,
}

/// Show the canvas with its level tabs and riser strip.
#[allow(clippy::too_many_arguments)] // reason: the panels' inputs are passed, not reached for through the app
pub fn show(
    ui: &mut Ui,
    project: &Project,
    sol: &Solution,
    opts: CanvasOptions,
    state: &mut CanvasState,
    selection: Selection,
    underlay: &mut UnderlayUi,
    out: &mut Intents,
) {
    // The level's items for this revision (the tabs, the hit-tests and the
    // plan read them).
    state.index.update(project, sol, state.level);
    egui::Panel::bottom("level_tabs").show(ui, |ui| level_tabs(ui, project, state, out));
    // Only when there is a riser to show: an empty riser view takes no room.
    state.riser = None;
    if opts.show_elevation {
        let max = (ui.available_width() * 0.4).max(160.0);
        let default = (ui.available_width() * 0.3).clamp(150.0, 240.0);
        egui::Panel::right("riser_strip").resizable(true).default_size(default).size_range(140.0..=max).show(
            ui,
            |ui| {
                let rect = ui.available_rect_before_wrap();
                let resp = ui.allocate_rect(rect, Sense::click());
                let bands =
                    elevation::draw(ui.painter(), rect, project, sol, opts.colour_by, state.level, &state.index);
                state.riser = Some((rect, bands.clone()));
                let hovered = resp.hover_pos().and_then(|p| elevation::level_at(&bands, p.y));
                if let Some(l) = hovered {
                    ui.ctx().set_cursor_icon(egui::CursorIcon::PointingHand);
                    let name = project.levels.iter().find(|x| x.id == l).map_or("", |x| x.name.as_str());
                    resp.clone().on_hover_text(format!("Show {name}"));
                }
                if resp.clicked()
                    && let Some(l) = resp.interact_pointer_pos().and_then(|p| elevation::level_at(&bands, p.y))
                {
                    out.show_level = Some(l);
                }
            },
        );
    }
    let rect = ui.available_rect_before_wrap();
    let resp = ui.allocate_rect(rect, Sense::click_and_drag());
    state.view.rect = rect;
    if state.fit_pending {
        state.fit(project);
        state.fit_pending = false;
    }
    let painter = ui.painter_at(rect);

    // Pointer → plan once per frame; hit-test.
    let pointer = resp.hover_pos().or_else(|| if resp.dragged() { resp.interact_pointer_pos() } else { None });
    state.pointer_plan = pointer.map(|p| state.view.plan_from_screen(p));
    state.hover = pointer.and_then(|p| hit::hit_test(project, &state.index, state.level, &state.view, p));

    // Zoom about the pointer.
    if let Some(p) = resp.hover_pos() {
        let (scroll, zoom) = ui.input(|i| (i.smooth_scroll_delta.y, i.zoom_delta()));
        let factor = zoom * (scroll * 0.0015).exp();
        if (factor - 1.0).abs() > 1e-4 {
            state.view.zoom_about(p, factor);
        }
    }

    state.plan_ends = if state.draft.is_some() || state.tool == Tool::Run || resp.dragged() {
        underlay.line_ends(project, state.level)
    } else {
        Vec::new()
    };
    if !underlay.canvas_drag(ui, &resp, project, state, out) {
        handle_drag(ui, &resp, project, sol, state, out);
    }
    if !underlay.canvas_click(&resp, state, out) {
        handle_clicks(ui, &resp, project, selection, state, out);
    }

    // Draw.
    painter.rect_filled(rect, 0, theme::PAPER);
    state.view.draw_grid(&painter, theme::GRID_MINOR, theme::GRID_MAJOR);
    underlay.paint(&painter, project, state);
    let flagged = draw::flagged_items(sol);
    let scene = draw::PlanScene {
        project,
        sol,
        level: state.level,
        view: &state.view,
        colour_by: opts.colour_by,
        show_labels: opts.show_labels,
        selection,
        hover: state.hover,
        flagged: &flagged,
        index: &state.index,
    };
    // Runs under nodes; labels over both, node names placed before run sizes.
    let (mut run_labels, mut node_labels) = (draw::Labels::default(), draw::Labels::default());
    let mut circuit_labels = draw::Labels::default();
    // Labels keep off the legend, the scale bar and the coordinate readout.
    circuit_labels.avoid(draw::legend_rect(rect));
    for r in draw::corner_readout_rects(rect) {
        circuit_labels.avoid(r);
    }
    draw::draw_circuits(&painter, &scene, &mut circuit_labels);
    returns::draw_reverse_returns(&painter, &scene, &mut run_labels);
    draw::draw_runs(&painter, &scene, &mut run_labels);
    draw::draw_nodes(&painter, &scene, &mut node_labels);
    circuit_labels.then(node_labels).then(run_labels).paint(&painter);
    select::draw_group(&painter, project, state.level, &state.view, &state.group);
    if let Some(Drag::Box { start, now }) = &state.drag {
        select::draw_box(&painter, *start, *now);
    }
    draw_draft(&painter, project, state);
    if let Some((s, anchor)) = &state.snapped {
        snap::draw_indicator(&painter, &state.view, s, *anchor);
    }
    draw::draw_legend(&painter, rect, opts.colour_by);
    draw::draw_scale_bar(&painter, &state.view, rect.left_bottom());
    if project.node_count() == 0 {
        painter.text(
            rect.center(),
            Align2::CENTER_CENTER,
            "Empty level — place a heat source (Q), then draw runs (R) to emitters (E)",
            FontId::proportional(14.0),
            theme::INK,
        );
    }
    if let Some(p) = state.pointer_plan {
        painter.text(
            rect.right_bottom() + egui::vec2(-10.0, -8.0),
            Align2::RIGHT_BOTTOM,
            format!("x {:.2} m   y {:.2} m", p.x_m, p.y_m),
            FontId::monospace(11.0),
            theme::INK,
        );
    }
}

fn handle_drag(
    ui: &Ui,
    resp: &egui::Response,
    project: &Project,
    sol: &Solution,
    state: &mut CanvasState,
    out: &mut Intents,
) {
    if resp.drag_started() {
        let origin = ui.input(|i| i.pointer.press_origin()).or(resp.interact_pointer_pos()).unwrap_or(Pos2::ZERO);
        let shift = ui.input(|i| i.modifiers.shift);
        let grabbed = if state.tool == Tool::Select {
            hit::hit_node(project, &state.index, state.level, &state.view, origin)
        } else {
            None
        };
        let primary = resp.drag_started_by(egui::PointerButton::Primary);
        state.drag = Some(match grabbed.and_then(|id| project.node(id)) {
            Some(node) => {
                let ids = if shift {
                    tools::branch_of(sol, node.id)
                } else if state.group.contains(&node.id) {
                    state.group.iter().copied().collect()
                } else {
                    state.group.clear();
                    vec![node.id]
                };
                if state.group.len() <= 1 {
                    out.select = Some(Selection::Node(node.id));
                }
                out.drag_begin = true;
                Drag::Move {
                    ids,
                    grabbed_start: node.pos,
                    pointer_start: state.view.plan_from_screen(origin),
                    applied: (0.0, 0.0),
                }
            }
            None if primary && state.tool == Tool::Select => Drag::Box { start: origin, now: origin },
            None => Drag::Pan,
        });
    }
    if resp.dragged() {
        match &mut state.drag {
            Some(Drag::Pan) => state.view.pan_by_screen(resp.drag_delta()),
            Some(Drag::Box { now, .. }) => {
                if let Some(q) = resp.interact_pointer_pos() {
                    *now = q;
                }
            }
            Some(Drag::Move { ids, grabbed_start, pointer_start, applied }) => {
                if let Some(p) = resp.interact_pointer_pos().map(|q| state.view.plan_from_screen(q)) {
                    let moving: BTreeSet<NodeId> = ids.iter().copied().collect();
                    let mut targets = snap::Targets::of_level(project, state.level, &moving);
                    targets.plan_ends.clone_from(&state.plan_ends);
                    let free = ui.input(|i| i.modifiers.alt);
                    let candidate = PlanPoint::new(
                        grabbed_start.x_m + p.x_m - pointer_start.x_m,
                        grabbed_start.y_m + p.y_m - pointer_start.y_m,
                    );
                    let snapped = targets.snap(candidate, Some(*grabbed_start), &state.view, free);
                    state.snapped = Some((snapped, Some(*grabbed_start)));
                    let target = snapped.at;
                    let total = (target.x_m - grabbed_start.x_m, target.y_m - grabbed_start.y_m);
                    let (dx_m, dy_m) = (total.0 - applied.0, total.1 - applied.1);
                    if dx_m.abs() > 1e-9 || dy_m.abs() > 1e-9 {
                        out.edit_during_drag(Edit::MoveNodes { ids: ids.clone(), dx_m, dy_m });
                        *applied = total;
                    }
                }
            }
            None => {}
        }
    }
    if resp.drag_stopped() {
        if state.is_moving() {
            out.drag_end = true;
        }
        if let Some(Drag::Box { start, now }) = state.drag.take() {
            let shift = ui.input(|i| i.modifiers.shift);
            if !shift {
                state.group.clear();
            }
            if start.distance(now) >= select::MIN_BOX_PX {
                state.group.extend(select::nodes_in_box(project, state.level, &state.view, start, now));
                out.select = Some(select::selection_of(&state.group));
            }
        }
        state.drag = None;
        state.snapped = None;
    }
}

fn handle_clicks(
    ui: &Ui,
    resp: &egui::Response,
    project: &Project,
    selection: Selection,
    state: &mut CanvasState,
    out: &mut Intents,
) {
    if resp.secondary_clicked() {
        state.cancel();
        return;
    }
    // While a run is drawn its next point goes through the drawing aids.
    if !state.is_moving() {
        state.snapped = if state.tool == Tool::Run { draft_snap(ui, project, state) } else { None };
    }
    let Some(pos) = resp.interact_pointer_pos() else { return };
    let at_plan = state.view.plan_from_screen(pos);
    let mut hit = hit::hit_test(project, &state.index, state.level, &state.view, pos);
    let mut at = state.view.snap(at_plan);
    if state.tool == Tool::Run
        && let Some((s, _)) = &state.snapped
    {
        let targets = snap::Targets::of_level(project, state.level, &BTreeSet::new());
        at = s.at;
        hit = targets.hit(s).or(hit.filter(|h| matches!(h, hit::Hit::Node(_))));
    }
    if resp.double_clicked() && state.tool == Tool::Run && hit.is_none() {
        tools::run_double_click(project, state.level, at, &mut state.draft, out);
        return;
    }
    if resp.clicked() {
        if state.tool == Tool::Select {
            if ui.input(|i| i.modifiers.shift) {
                select::toggle(&mut state.group, selection, hit);
                out.select = Some(select::selection_of(&state.group));
                return;
            }
            state.group.clear();
        }
        tools::click(state.tool, project, state.level, at, hit, &mut state.draft, state.header_outlets, out);
    }
}

/// Where the next point of the run being drawn lands (drawing aids; Alt
/// draws free angles).
fn draft_snap(ui: &Ui, project: &Project, state: &CanvasState) -> Option<(snap::Snapped, Option<PlanPoint>)> {
    let d = state.draft.as_ref()?;
    let p = state.pointer_plan?;
    let anchor = d.vertices.last().copied().or_else(|| project.node(d.start).map(|n| n.pos));
    let mut targets = snap::Targets::of_level(project, state.level, &BTreeSet::new());
    targets.plan_ends.clone_from(&state.plan_ends);
    let free = ui.input(|i| i.modifiers.alt);
    Some((targets.snap(p, anchor, &state.view, free), anchor))
}

fn draw_draft(painter: &egui::Painter, project: &Project, state: &CanvasState) {
    let Some(d) = &state.draft else { return };
    let Some(start) = project.node(d.start) else { return };
    let mut pts: Vec<Pos2> =
        std::iter::once(start.pos).chain(d.vertices.iter().copied()).map(|p| state.view.screen_from_plan(p)).collect();
    if let Some((s, _)) = &state.snapped {
        pts.push(state.view.screen_from_plan(s.at));
    } else if let Some(p) = state.pointer_plan {
        pts.push(state.view.screen_from_plan(state.view.snap(p)));
    }
    painter.extend(Shape::dashed_line(&pts, Stroke::new(2.5, theme::HOVER), 8.0, 4.0));
    for &p in &pts[1..] {
        painter.circle_filled(p, 3.0, theme::HOVER);
    }
}

/// The level tabs: a row that scrolls sideways when the levels do not fit
/// (a tall building), the shown level scrolled into view; "+ Level" and
/// the tool's hint stay in sight on the right.
fn level_tabs(ui: &mut Ui, project: &Project, state: &CanvasState, out: &mut Intents) {
    ui.horizontal(|ui| {
        ui.label("Level:");
        // The tool's hint only where the tabs leave room for it.
        let show_hint = ui.available_width() >= 760.0;
        let hint_w = if show_hint { (ui.available_width() * 0.3).clamp(0.0, 320.0) } else { 0.0 };
        let tabs_w = (ui.available_width() - hint_w - 80.0).max(120.0);
        let mut levels: Vec<_> = project.levels.iter().collect();
        levels.sort_by(|a, b| a.elevation_m.total_cmp(&b.elevation_m));
        let level_changed = ui.ctx().data_mut(|d| {
            let last = d.get_temp_mut_or(egui::Id::unique("level_tabs_last"), None);
            let changed = *last != Some(state.level);
            *last = Some(state.level);
            changed
        });
        ui.allocate_ui(egui::vec2(tabs_w, ui.spacing().interact_size.y + 6.0), |ui| {
            egui::ScrollArea::horizontal()
                .id_salt("level_tabs_scroll")
                .auto_shrink([false, true])
                .scroll_bar_visibility(egui::scroll_area::ScrollBarVisibility::AlwaysVisible)
                .show(ui, |ui| {
                    ui.horizontal(|ui| {
                        for l in levels {
                            let count = state.index.nodes_on(l.id);
                            let text = format!("{} ({count})", l.name);
                            let r = ui
                                .selectable_label(state.level == l.id, text)
                                .on_hover_text(format!("elevation {:+.2} m, {count} items", l.elevation_m));
                            if state.level == l.id && level_changed {
                                r.scroll_to_me(Some(egui::Align::Center));
                            }
                            if r.clicked() {
                                out.show_level = Some(l.id);
                            }
                            r.context_menu(|ui| {
                                if ui.button(Action::PlanUnderlay.label()).clicked() {
                                    out.show_level = Some(l.id);
                                    out.actions.push(Action::PlanUnderlay);
                                    ui.close();
                                }
                            });
                        }
                    });
                });
        });
        if ui.button("+ Level").on_hover_text("Add a level 3 m above the highest one").clicked() {
            let top = project.levels.iter().map(|l| l.elevation_m).fold(0.0_f64, f64::max);
            let n = project.levels.len();
            out.edit(Edit::AddLevel { name: format!("Level {n}"), elevation_m: top + 3.0 });
        }
        if show_hint {
            ui.separator();
            ui.add(egui::Label::new(egui::RichText::new(state.tool.tooltip()).small().weak()).truncate());
        }
    });
}
