//! Drawing the plan: runs coloured by the chosen metric, node symbols,
//! labels, the legend and the scale bar. Pure painting; no input here.

use std::collections::BTreeSet;

use egui::{Align2, Color32, CornerRadius, FontId, Painter, Pos2, Rect, Shape, Stroke, StrokeKind, Vec2, pos2, vec2};
use flowrise_core::design::{FindingKind, ItemRef, Severity, Side, Solution};
use flowrise_core::emitters::EmitterModel;
use flowrise_core::project::{BranchDevice, LevelId, Node, NodeKind, Project, Run};

use super::hit::{Hit, run_polyline_between};
use super::view::View;
use crate::gui::intents::Selection;
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
    /// The level's nodes and runs (for `project` and `level`).
    pub index: &'a super::level_index::LevelIndex,
}

/// Text size of the plan labels (points).
const LABEL_SIZE: f32 = 11.5;

/// A label waiting for a place on the plan.
#[derive(Debug)]
pub struct LabelRequest {
    text: String,
    /// Places to try, best first: anchor point and alignment.
    spots: Vec<(Pos2, Align2)>,
    /// Drawn first and always (selected or hovered item).
    must: bool,
}

/// Labels of one frame: collected while drawing, placed at the end so none
/// covers another. Labels outside the view are skipped before any text
/// layout; a label that finds no free spot is left out (zoom in to see it)
/// unless its item is selected or under the pointer.
#[derive(Debug, Default)]
pub struct Labels {
    requests: Vec<LabelRequest>,
    /// Screen areas labels must not cover (node symbols).
    obstacles: Vec<Rect>,
}

impl Labels {
    /// Keep labels off `rect`.
    pub fn avoid(&mut self, rect: Rect) {
        self.obstacles.push(rect);
    }

    pub(super) fn add(&mut self, text: String, spots: Vec<(Pos2, Align2)>, must: bool) {
        self.requests.push(LabelRequest { text, spots, must });
    }

    /// These labels, then `other`'s (placed in that order).
    #[must_use]
    pub fn then(mut self, other: Self) -> Self {
        self.requests.extend(other.requests);
        self.obstacles.extend(other.obstacles);
        self
    }

    /// Lay out and paint the labels that fit. Returns how many were drawn.
    pub fn paint(mut self, painter: &Painter) -> usize {
        let clip = painter.clip_rect();
        // Selected/hovered first; otherwise in drawing order (nodes were
        // queued before runs: names win over sizes).
        self.requests.sort_by_key(|r| !r.must);
        let mut placed = PlacedRects::default();
        for &o in self.obstacles.iter().filter(|o| clip.intersects(**o)) {
            placed.insert(o);
        }
        let mut drawn = 0;
        for r in self.requests {
            // A generous estimate of the size culls labels far outside the
            // view without laying out their text.
            let guess = vec2(7.5 * r.text.chars().count() as f32 + 6.0, LABEL_SIZE + 6.0);
            if !r.spots.iter().any(|&(at, a)| clip.intersects(a.anchor_size(at, guess))) {
                continue;
            }
            let galley = painter.layout_no_wrap(r.text, FontId::proportional(LABEL_SIZE), theme::INK);
            let size = galley.size() + vec2(6.0, 2.0);
            let spot = r
                .spots
                .iter()
                .map(|&(at, a)| a.anchor_size(at, size))
                .find(|rect| clip.contains_rect(*rect) && !placed.overlaps(*rect))
                .or_else(|| r.must.then(|| r.spots.first().map(|&(at, a)| a.anchor_size(at, size))).flatten());
            let Some(rect) = spot else { continue };
            placed.insert(rect);
            painter.rect_filled(rect, CornerRadius::same(3), Color32::from_rgba_unmultiplied(0xf4, 0xf3, 0xef, 215));
            painter.galley(rect.min + vec2(3.0, 1.0), galley, theme::INK);
            drawn += 1;
        }
        drawn
    }
}

/// Rectangles already taken, bucketed on a coarse screen grid so a test
/// costs a few comparisons however many labels there are.
#[derive(Debug, Default)]
struct PlacedRects {
    rects: Vec<Rect>,
    cells: std::collections::HashMap<(i32, i32), Vec<usize>>,
}

impl PlacedRects {
    const CELL: f32 = 64.0;

    fn cells_of(rect: Rect) -> impl Iterator<Item = (i32, i32)> {
        let (x0, x1) = ((rect.min.x / Self::CELL).floor() as i32, (rect.max.x / Self::CELL).floor() as i32);
        let (y0, y1) = ((rect.min.y / Self::CELL).floor() as i32, (rect.max.y / Self::CELL).floor() as i32);
        (x0..=x1).flat_map(move |x| (y0..=y1).map(move |y| (x, y)))
    }

    fn overlaps(&self, rect: Rect) -> bool {
        Self::cells_of(rect).any(|c| {
            self.cells
                .get(&c)
                .is_some_and(|ids| ids.iter().any(|&i| self.rects.get(i).is_some_and(|r| r.intersects(rect))))
        })
    }

    fn insert(&mut self, rect: Rect) {
        let i = self.rects.len();
        self.rects.push(rect);
        for c in Self::cells_of(rect) {
            self.cells.entry(c).or_default().push(i);
        }
    }
}

/// Dashed polyline (over-limit runs).
pub(super) fn dashed(painter: &Painter, pts: &[Pos2], stroke: Stroke) {
    painter.extend(Shape::dashed_line(pts, stroke, 9.0, 5.0));
}

/// Outline each pumped circuit's nodes on the level (a tinted, dashed box
/// with the circuit's name and temperatures), under the runs.
pub fn draw_circuits(painter: &Painter, s: &PlanScene<'_>, labels: &mut Labels) {
    for c in s.sol.circuits.iter().filter(|c| c.connection.is_some()) {
        let mut pts: Vec<Pos2> = c
            .nodes
            .iter()
            .filter_map(|&n| s.project.node(n))
            .filter(|n| n.level == s.level)
            .map(|n| s.view.screen_from_plan(n.pos))
            .collect();
        if let Some(root) = s.project.node(c.root).filter(|n| n.level == s.level) {
            pts.push(s.view.screen_from_plan(root.pos));
        }
        if pts.is_empty() {
            continue;
        }
        let r = Rect::from_points(&pts).expand(22.0);
        let tint = Color32::from_rgba_unmultiplied(0x1f, 0x78, 0xc8, 14);
        let edge = Stroke::new(1.2, Color32::from_rgb(0x1f, 0x78, 0xc8));
        painter.rect_filled(r, CornerRadius::same(10), tint);
        let corners = [r.left_top(), r.right_top(), r.right_bottom(), r.left_bottom(), r.left_top()];
        dashed(painter, &corners, edge);
        let text = format!("{} · {:.0}/{:.0} °C", c.name, c.supply_c, c.return_c);
        labels.add(
            text,
            vec![
                (r.left_top() + vec2(6.0, 3.0), Align2::LEFT_TOP),
                (r.left_bottom() + vec2(6.0, -3.0), Align2::LEFT_BOTTOM),
                (r.left_top() + vec2(6.0, -3.0), Align2::LEFT_BOTTOM),
            ],
            true,
        );
    }
}

/// Draw the runs of the level; their labels go to `labels`.
pub fn draw_runs(painter: &Painter, s: &PlanScene<'_>, labels: &mut Labels) {
    for (run, a, b) in s.index.runs(s.project) {
        let Some(pts) = run_polyline_between(a, b, run, s.level, s.view) else { continue };
        let value = s.colour_by.run_value(s.sol, run.id);
        let (stroke, over) = theme::run_stroke(value, s.view.px_per_m);
        // Drawn as over the limit only with a finding behind it.
        let over = over && s.sol.has_finding(ItemRef::Run(run.id), s.colour_by.finding_kinds());
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
        if let Some(device) = &run.props.device {
            device_symbol(painter, s, run, &pts, device);
        }
        if s.flagged.contains(&ItemRef::Run(run.id)) {
            let (mid, _) = longest_segment_mid(&pts);
            warning_badge(painter, mid + vec2(0.0, -12.0));
        }
        if s.show_labels {
            run_label(s, run.id, &pts, selected || hovered, labels);
        }
    }
}

/// A balancing device on a run: a disc near the run's upstream end with a
/// valve bow-tie; a Δp controller adds a stem and a diaphragm box.
fn device_symbol(painter: &Painter, s: &PlanScene<'_>, run: &Run, pts: &[Pos2], device: &BranchDevice) {
    if pts.len() < 2 {
        return;
    }
    // The device sits where the branch leaves the upstream network.
    let downstream = s.index.device_branch(run.id);
    let (from, to) =
        if downstream == Some(run.a) { (pts[pts.len() - 1], pts[pts.len() - 2]) } else { (pts[0], pts[1]) };
    let d = to - from;
    if d.length() < 1.0 {
        return;
    }
    let dir = d.normalized();
    let at = from + dir * d.length().min(22.0);
    let n = vec2(-dir.y, dir.x);
    let ink = Stroke::new(1.3, theme::INK);
    painter.circle(at, 8.0, Color32::WHITE, ink);
    let a = 5.0;
    let h = 3.5;
    painter.add(Shape::convex_polygon(vec![at, at - dir * a + n * h, at - dir * a - n * h], theme::INK, Stroke::NONE));
    painter.add(Shape::convex_polygon(vec![at, at + dir * a + n * h, at + dir * a - n * h], theme::INK, Stroke::NONE));
    if matches!(device, BranchDevice::DpController { .. }) {
        let up = if n.y > 0.0 { -n } else { n };
        let top = at + up * 14.0;
        painter.line_segment([at + up * 8.0, top], ink);
        painter.rect_filled(Rect::from_center_size(top + up * 2.0, vec2(10.0, 5.0)), 1.0, theme::INK);
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

fn run_label(s: &PlanScene<'_>, run: flowrise_core::project::RunId, pts: &[Pos2], must: bool, labels: &mut Labels) {
    let Some(p) = s.sol.run_pipes(run).find(|p| p.side == Side::Supply) else { return };
    let (mid, dir) = longest_segment_mid(pts);
    if dir.length() < 40.0 {
        return;
    }
    let normal = vec2(-dir.y, dir.x).normalized();
    let n = if normal.y > 0.0 { -normal } else { normal };
    let text = format!("{}  {:.0} l/h", p.size, p.flow_l_h);
    // Beside the run on the upper side, else on the lower side, else a
    // little along it.
    let along = dir.normalized() * (0.25 * dir.length()).min(60.0);
    let spots = vec![
        (mid + n * 11.0, Align2::CENTER_CENTER),
        (mid - n * 11.0, Align2::CENTER_CENTER),
        (mid + along + n * 11.0, Align2::CENTER_CENTER),
        (mid - along + n * 11.0, Align2::CENTER_CENTER),
    ];
    labels.add(text, spots, must);
}

fn warning_badge(painter: &Painter, at: Pos2) {
    let pts = vec![at + vec2(0.0, -6.0), at + vec2(6.0, 5.0), at + vec2(-6.0, 5.0)];
    painter.add(Shape::convex_polygon(pts, theme::WARNING, Stroke::new(1.0, Color32::WHITE)));
    painter.text(at + vec2(0.0, 1.0), Align2::CENTER_CENTER, "!", FontId::proportional(9.0), Color32::WHITE);
}

/// Draw the nodes of the level with their symbols; their labels go to
/// `labels`.
pub fn draw_nodes(painter: &Painter, s: &PlanScene<'_>, labels: &mut Labels) {
    for n in s.index.nodes(s.project).filter(|n| n.level == s.level) {
        let at = s.view.screen_from_plan(n.pos);
        let selected = s.selection == Selection::Node(n.id);
        let hovered = s.hover == Some(Hit::Node(n.id));
        if selected || hovered {
            let c = if selected { theme::SELECT } else { theme::HOVER };
            painter.circle_stroke(at, 15.0, Stroke::new(2.5, c));
        }
        let riser = s.index.is_riser_end(n.id);
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
        if !matches!(n.kind, NodeKind::Junction) {
            labels.avoid(Rect::from_center_size(at, vec2(22.0, 18.0)));
        }
        if s.flagged.contains(&ItemRef::Node(n.id)) {
            warning_badge(painter, at + vec2(12.0, -12.0));
        }
        if s.show_labels {
            node_label(s, n, at, selected || hovered, labels);
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
        NodeKind::Circuit(_) => {
            // A pump (disc with a triangle) in a rounded box: a pumped
            // circuit; the mixing valve is implied by its label.
            let r = Rect::from_center_size(at, vec2(26.0, 20.0));
            painter.rect(r, CornerRadius::same(5), Color32::from_rgb(0xe3, 0xee, 0xf7), ink, StrokeKind::Middle);
            painter.circle_stroke(at, 6.5, ink);
            let tri = vec![at + vec2(-3.0, 3.5), at + vec2(4.5, 0.0), at + vec2(-3.0, -3.5)];
            painter.add(Shape::convex_polygon(tri, theme::INK, Stroke::NONE));
        }
        NodeKind::Separator(_) => {
            let r = Rect::from_center_size(at, vec2(12.0, 30.0));
            painter.rect(r, CornerRadius::same(2), Color32::WHITE, ink, StrokeKind::Middle);
            let mut y = r.top() + 3.0;
            while y < r.bottom() - 3.0 {
                painter.line_segment([pos2(at.x, y), pos2(at.x, (y + 3.0).min(r.bottom() - 3.0))], ink);
                y += 6.0;
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

fn node_label(s: &PlanScene<'_>, n: &Node, at: Pos2, must: bool, labels: &mut Labels) {
    let (text, gap) = match &n.kind {
        NodeKind::Emitter(e) => {
            let mut text = format!("{}  {:.0} W", e.name, e.load_w);
            if let Some(r) = s.sol.emitter(n.id) {
                text.push_str(&format!("  ·  preset {}", r.presetting));
                if r.output_w + 1.0 < r.load_w
                    && !r.closed
                    && s.sol.has_finding(ItemRef::Node(n.id), &FindingKind::OUTPUT_SHORT)
                {
                    text.push_str(&format!("  ·  short {:.0} W", r.load_w - r.output_w));
                }
            }
            (text, 12.0)
        }
        NodeKind::Header(h) => (h.name.clone(), 12.0),
        NodeKind::Source(src) => (src.name.clone(), 15.0),
        // Its temperatures label the circuit's outline (draw_circuits).
        NodeKind::Circuit(c) => (c.name.clone(), 14.0),
        NodeKind::Separator(x) => (x.name.clone(), 17.0),
        NodeKind::Junction => return,
    };
    // Below the symbol, else above, else to the right or left.
    let spots = vec![
        (at + vec2(0.0, gap), Align2::CENTER_TOP),
        (at - vec2(0.0, gap), Align2::CENTER_BOTTOM),
        (at + vec2(gap + 4.0, 0.0), Align2::LEFT_CENTER),
        (at - vec2(gap + 4.0, 0.0), Align2::RIGHT_CENTER),
    ];
    labels.add(text, spots, must);
}

/// Where the legend sits in a canvas `rect` (labels keep off it).
#[must_use]
pub fn legend_rect(rect: Rect) -> Rect {
    let w = 170.0;
    Rect::from_min_size(pos2(rect.right() - w - 12.0, rect.top() + 12.0), vec2(w, 78.0))
}

/// Where the scale bar and the pointer's coordinate readout sit in a canvas
/// `rect` (labels keep off both).
#[must_use]
pub fn corner_readout_rects(rect: Rect) -> [Rect; 2] {
    [
        Rect::from_min_max(pos2(rect.left(), rect.bottom() - 26.0), pos2(rect.left() + 230.0, rect.bottom())),
        Rect::from_min_max(pos2(rect.right() - 200.0, rect.bottom() - 24.0), rect.right_bottom()),
    ]
}

/// Legend of the colour scale in the canvas's upper-right corner.
pub fn draw_legend(painter: &Painter, rect: Rect, colour_by: ColourBy) {
    let (title, note) = colour_by.legend();
    let frame = legend_rect(rect);
    let w = frame.width();
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

#[cfg(test)]
mod tests {
    use super::*;

    /// Place `labels` in a 400×300 view; returns how many were drawn.
    fn place(labels: Labels) -> usize {
        let ctx = egui::Context::default();
        let mut drawn = 0;
        let mut labels = Some(labels);
        let input = egui::RawInput {
            screen_rect: Some(Rect::from_min_size(Pos2::ZERO, vec2(400.0, 300.0))),
            ..Default::default()
        };
        let mut out = ctx.run_ui(input, |ui| {
            let painter = ui.painter_at(Rect::from_min_size(Pos2::ZERO, vec2(400.0, 300.0)));
            if let Some(l) = labels.take() {
                drawn = l.paint(&painter);
            }
        });
        out.textures_delta.clear();
        drawn
    }

    #[test]
    fn labels_never_cover_each_other_or_symbols_and_off_view_ones_are_skipped() {
        let one_spot = |l: &mut Labels, text: &str, at: Pos2, must: bool| {
            l.add(text.to_owned(), vec![(at, Align2::CENTER_CENTER)], must);
        };
        let mut l = Labels::default();
        one_spot(&mut l, "Room 1  800 W", pos2(200.0, 150.0), false);
        one_spot(&mut l, "Room 2  900 W", pos2(205.0, 152.0), false);
        assert_eq!(place(l), 1, "the second label has no free spot");

        let mut l = Labels::default();
        l.add("Room 1".to_owned(), vec![(pos2(200.0, 150.0), Align2::CENTER_CENTER)], false);
        l.add(
            "Room 2".to_owned(),
            vec![(pos2(200.0, 150.0), Align2::CENTER_CENTER), (pos2(200.0, 190.0), Align2::CENTER_CENTER)],
            false,
        );
        assert_eq!(place(l), 2, "the second label takes its next spot");

        let mut l = Labels::default();
        l.avoid(Rect::from_center_size(pos2(200.0, 150.0), vec2(22.0, 18.0)));
        one_spot(&mut l, "Room 1", pos2(200.0, 150.0), false);
        one_spot(&mut l, "far away", pos2(5000.0, 150.0), false);
        assert_eq!(place(l), 0, "a symbol is not covered; a label outside the view is skipped");

        let mut l = Labels::default();
        one_spot(&mut l, "Room 1", pos2(200.0, 150.0), false);
        one_spot(&mut l, "selected room", pos2(200.0, 150.0), true);
        assert_eq!(place(l), 1, "the selected item's label wins the spot");
    }
}
