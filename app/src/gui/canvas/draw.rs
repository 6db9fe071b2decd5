//! Drawing the plan: runs coloured by the chosen metric, node symbols,
//! labels, the legend and the scale bar. Pure painting; no input here.

use std::collections::BTreeSet;

use egui::{Align2, Color32, CornerRadius, FontId, Painter, Pos2, Rect, Shape, Stroke, StrokeKind, Vec2, pos2, vec2};
use flowrise_core::design::{ItemRef, Severity, Side, Solution};
use flowrise_core::emitters::EmitterModel;
use flowrise_core::project::{LevelId, Node, NodeKind, Project};

use super::hit::{Hit, run_polyline};
use super::view::View;
use crate::gui::Selection;
use crate::gui::theme::{self, ColourBy};

/// What a plan drawing needs for one frame.
#[derive(Debug)]
pub struct PlanScene<'a> {
    /// The document.
    pub project: &'a Project,
    /// The latest results (may be one revision behind).
    pub sol: &'a Solution,
    /// Level shown.
    pub level: LevelId,
    /// View transform.
    pub view: &'a View,
    /// Metric of the run colours.
    pub colour_by: ColourBy,
    /// Draw size/flow/presetting labels.
    pub show_labels: bool,
    /// Selected item.
    pub selection: Selection,
    /// Item under the pointer.
    pub hover: Option<Hit>,
    /// Items with an error or warning finding.
    pub flagged: &'a BTreeSet<ItemRef>,
}

fn label_box(painter: &Painter, at: Pos2, anchor: Align2, text: &str, colour: Color32, size: f32) {
    let galley = painter.layout_no_wrap(text.to_owned(), FontId::proportional(size), colour);
    let rect = anchor.anchor_size(at, galley.size()).expand2(vec2(3.0, 1.0));
    painter.rect_filled(rect, CornerRadius::same(3), Color32::from_rgba_unmultiplied(0xf4, 0xf3, 0xef, 215));
    painter.galley(rect.min + vec2(3.0, 1.0), galley, colour);
}

/// Dashed polyline (over-limit runs).
fn dashed(painter: &Painter, pts: &[Pos2], stroke: Stroke) {
    painter.extend(Shape::dashed_line(pts, stroke, 9.0, 5.0));
}

/// Draw the runs of the level.
pub fn draw_runs(painter: &Painter, s: &PlanScene<'_>) {
    let limit = s.project.settings.gradient_limit_pa_m;
    for run in s.project.runs() {
        let Some(pts) = run_polyline(s.project, run, s.level, s.view) else { continue };
        let value = s.colour_by.run_value(s.sol, run.id, limit);
        let (stroke, over) = theme::run_stroke(value, s.view.px_per_m);
        let selected = s.selection == Selection::Run(run.id);
        let hovered = matches!(s.hover, Some(Hit::Run(r, _)) if r == run.id);
        if selected || hovered {
            let c = if selected { theme::SELECT } else { theme::HOVER };
            painter.add(Shape::line(pts.clone(), Stroke::new(stroke.width + 7.0, c.gamma_multiply(0.45))));
        }
        painter.add(Shape::line(pts.clone(), Stroke::new(stroke.width + 2.0, theme::CASING)));
        if over {
            dashed(painter, &pts, stroke);
        } else {
            painter.add(Shape::line(pts.clone(), stroke));
        }
        if s.flagged.contains(&ItemRef::Run(run.id)) {
            let (mid, _) = longest_segment_mid(&pts);
            warning_badge(painter, mid + vec2(0.0, -12.0));
        }
        if s.show_labels {
            run_label(painter, s, run.id, &pts);
        }
    }
}

fn longest_segment_mid(pts: &[Pos2]) -> (Pos2, Vec2) {
    let mut best = (pts[0], Vec2::X, -1.0_f32);
    for w in pts.windows(2) {
        let d = w[1] - w[0];
        if d.length() > best.2 {
            best = (w[0] + 0.5 * d, d, d.length());
        }
    }
    (best.0, best.1)
}

fn run_label(painter: &Painter, s: &PlanScene<'_>, run: flowrise_core::project::RunId, pts: &[Pos2]) {
    let Some(p) = s.sol.run_pipes(run).find(|p| p.side == Side::Supply) else { return };
    let (mid, dir) = longest_segment_mid(pts);
    if dir.length() < 40.0 {
        return;
    }
    let normal = vec2(-dir.y, dir.x).normalized();
    let n = if normal.y > 0.0 { -normal } else { normal };
    let text = format!("{}  {:.0} l/h", p.size, p.flow_l_h);
    label_box(painter, mid + n * 11.0, Align2::CENTER_CENTER, &text, theme::INK, 11.5);
}

fn warning_badge(painter: &Painter, at: Pos2) {
    let pts = vec![at + vec2(0.0, -6.0), at + vec2(6.0, 5.0), at + vec2(-6.0, 5.0)];
    painter.add(Shape::convex_polygon(pts, theme::WARNING, Stroke::new(1.0, Color32::WHITE)));
    painter.text(at + vec2(0.0, 1.0), Align2::CENTER_CENTER, "!", FontId::proportional(9.0), Color32::WHITE);
}

/// Draw the nodes of the level with their symbols.
pub fn draw_nodes(painter: &Painter, s: &PlanScene<'_>) {
    for n in s.project.nodes().filter(|n| n.level == s.level) {
        let at = s.view.screen_from_plan(n.pos);
        let selected = s.selection == Selection::Node(n.id);
        let hovered = s.hover == Some(Hit::Node(n.id));
        if selected || hovered {
            let c = if selected { theme::SELECT } else { theme::HOVER };
            painter.circle_stroke(at, 15.0, Stroke::new(2.5, c));
        }
        let riser = s.project.runs_at(n.id).iter().any(|&r| s.project.run(r).is_some_and(|r| s.project.is_vertical(r)));
        if riser {
            painter.circle_stroke(at, 9.0, Stroke::new(1.5, theme::INK));
            // Riser mark: a small up/down arrow pair beside the node.
            let c = at + vec2(14.0, -14.0);
            for s in [-1.0, 1.0] {
                let tip = c + vec2(0.0, 6.0 * s);
                let tri = vec![tip, tip + vec2(-3.5, -4.0 * s), tip + vec2(3.5, -4.0 * s)];
                painter.add(Shape::convex_polygon(tri, theme::INK, Stroke::NONE));
            }
            painter.line_segment([c + vec2(0.0, -3.0), c + vec2(0.0, 3.0)], Stroke::new(1.5, theme::INK));
        }
        node_symbol(painter, at, n);
        if s.flagged.contains(&ItemRef::Node(n.id)) {
            warning_badge(painter, at + vec2(12.0, -12.0));
        }
        if s.show_labels {
            node_label(painter, s, n, at);
        }
    }
}

/// The symbol of one node centred on `at`.
pub fn node_symbol(painter: &Painter, at: Pos2, n: &Node) {
    let ink = Stroke::new(1.6, theme::INK);
    match &n.kind {
        NodeKind::Junction => {
            painter.circle_filled(at, 3.8, theme::INK);
        }
        NodeKind::Source(_) => {
            let r = Rect::from_center_size(at, vec2(22.0, 22.0));
            painter.rect(r, CornerRadius::same(3), Color32::from_rgb(0xb8, 0x3b, 0x2b), ink, StrokeKind::Middle);
            painter.circle_stroke(at, 6.5, Stroke::new(1.6, Color32::WHITE));
            let tri = vec![at + vec2(-3.0, 3.5), at + vec2(4.5, 0.0), at + vec2(-3.0, -3.5)];
            painter.add(Shape::convex_polygon(tri, Color32::WHITE, Stroke::NONE));
        }
        NodeKind::Header(h) => {
            let w = (10.0 + 5.0 * h.outlets as f32).min(60.0);
            let r = Rect::from_center_size(at, vec2(w, 10.0));
            painter.rect(r, CornerRadius::same(2), Color32::from_rgb(0xd9, 0xe7, 0xe5), ink, StrokeKind::Middle);
            for i in 0..h.outlets.min(10) {
                let x = r.left() + (i as f32 + 0.5) * r.width() / h.outlets.min(10) as f32;
                painter.line_segment([pos2(x, r.bottom()), pos2(x, r.bottom() + 4.0)], ink);
            }
        }
        NodeKind::Emitter(e) => match &e.model {
            EmitterModel::Radiator(_) => {
                let r = Rect::from_center_size(at, vec2(24.0, 12.0));
                painter.rect(r, CornerRadius::same(1), Color32::WHITE, ink, StrokeKind::Middle);
                for i in 1..5 {
                    let x = r.left() + i as f32 * r.width() / 5.0;
                    painter.line_segment(
                        [pos2(x, r.top() + 2.0), pos2(x, r.bottom() - 2.0)],
                        Stroke::new(1.0, theme::INK),
                    );
                }
            }
            EmitterModel::FloorLoop(_) => {
                let r = Rect::from_center_size(at, vec2(18.0, 18.0));
                painter.rect(r, CornerRadius::same(1), Color32::WHITE, ink, StrokeKind::Middle);
                let mut pts = Vec::new();
                for i in 0..4 {
                    let y = r.top() + 3.0 + i as f32 * 4.0;
                    let (x0, x1) =
                        if i % 2 == 0 { (r.left() + 3.0, r.right() - 3.0) } else { (r.right() - 3.0, r.left() + 3.0) };
                    pts.push(pos2(x0, y));
                    pts.push(pos2(x1, y));
                }
                painter.add(Shape::line(pts, Stroke::new(1.2, Color32::from_rgb(0xb8, 0x3b, 0x2b))));
            }
            EmitterModel::Terminal(_) => {
                painter.circle(at, 9.0, Color32::WHITE, ink);
                for d in [vec2(5.0, 5.0), vec2(5.0, -5.0)] {
                    painter.line_segment([at - d, at + d], Stroke::new(1.2, theme::INK));
                }
            }
        },
    }
}

fn node_label(painter: &Painter, s: &PlanScene<'_>, n: &Node, at: Pos2) {
    match &n.kind {
        NodeKind::Emitter(e) => {
            let mut text = format!("{}  {:.0} W", e.name, e.load_w);
            if let Some(r) = s.sol.emitter(n.id) {
                text.push_str(&format!("  ·  preset {}", r.presetting));
                if r.output_w + 1.0 < r.load_w && !r.closed {
                    text.push_str(&format!("  ·  short {:.0} W", r.load_w - r.output_w));
                }
            }
            label_box(painter, at + vec2(0.0, 12.0), Align2::CENTER_TOP, &text, theme::INK, 11.5);
        }
        NodeKind::Header(h) => {
            label_box(painter, at + vec2(0.0, 12.0), Align2::CENTER_TOP, &h.name, theme::INK, 11.5);
        }
        NodeKind::Source(src) => {
            label_box(painter, at + vec2(0.0, 15.0), Align2::CENTER_TOP, &src.name, theme::INK, 11.5);
        }
        NodeKind::Junction => {}
    }
}

/// Legend of the colour scale in the canvas's upper-right corner.
pub fn draw_legend(painter: &Painter, rect: Rect, colour_by: ColourBy) {
    let (title, note) = colour_by.legend();
    let w = 170.0;
    let frame = Rect::from_min_size(pos2(rect.right() - w - 12.0, rect.top() + 12.0), vec2(w, 78.0));
    painter.rect(
        frame,
        CornerRadius::same(5),
        Color32::from_rgba_unmultiplied(255, 255, 255, 235),
        Stroke::new(1.0, theme::GRID_MAJOR),
        StrokeKind::Inside,
    );
    painter.text(frame.min + vec2(8.0, 6.0), Align2::LEFT_TOP, title, FontId::proportional(12.0), theme::INK);
    let bar = Rect::from_min_size(frame.min + vec2(8.0, 24.0), vec2(w - 16.0, 10.0));
    let steps = 48;
    for i in 0..steps {
        let t0 = i as f32 / steps as f32;
        let x0 = bar.left() + t0 * bar.width();
        let x1 = bar.left() + (i + 1) as f32 / steps as f32 * bar.width() + 0.5;
        painter.rect_filled(Rect::from_x_y_ranges(x0..=x1, bar.y_range()), 0, theme::scale_colour(f64::from(t0)));
    }
    for (t, s) in [(0.0, "0"), (0.5, "0.5"), (1.0, "1")] {
        let x = bar.left() + t * bar.width();
        painter.line_segment([pos2(x, bar.bottom()), pos2(x, bar.bottom() + 3.0)], Stroke::new(1.0, theme::INK));
        painter.text(pos2(x, bar.bottom() + 4.0), Align2::CENTER_TOP, s, FontId::proportional(10.5), theme::INK);
    }
    let y = frame.bottom() - 12.0;
    let x0 = frame.left() + 8.0;
    dashed(painter, &[pos2(x0, y), pos2(x0 + 26.0, y)], Stroke::new(5.0, theme::scale_colour(1.0)));
    painter.text(
        pos2(x0 + 32.0, y),
        Align2::LEFT_CENTER,
        format!("over the limit · {note}"),
        FontId::proportional(10.0),
        theme::INK,
    );
}

/// Scale bar in the lower-left corner: one grid step.
pub fn draw_scale_bar(painter: &Painter, view: &View, bottom_left: Pos2) {
    let len = (view.grid_step_m() * f64::from(view.px_per_m)) as f32;
    let y = bottom_left.y - 10.0;
    let x0 = bottom_left.x + 12.0;
    let stroke = Stroke::new(2.0, theme::INK);
    painter.line_segment([pos2(x0, y), pos2(x0 + len, y)], stroke);
    for x in [x0, x0 + len] {
        painter.line_segment([pos2(x, y - 4.0), pos2(x, y + 4.0)], stroke);
    }
    painter.text(
        pos2(x0 + len + 6.0, y),
        Align2::LEFT_CENTER,
        view.scale_text(),
        FontId::proportional(11.0),
        theme::INK,
    );
}

/// Items with error or warning findings.
#[must_use]
pub fn flagged_items(sol: &Solution) -> BTreeSet<ItemRef> {
    sol.findings.iter().filter(|f| f.severity != Severity::Note).map(|f| f.item).collect()
}
