//! Drawing aids: where a point being drawn or dragged lands.
//!
//! [`snap`] is a pure function of the candidate point, the anchor it is
//! drawn from (the last point of a run being drawn, or where a dragged
//! node started) and the targets nearby — points (nodes; more sources can
//! add their own, such as the line ends of a plan underlay) and segments
//! (runs). In order:
//! 1. a target point within the snap radius wins (exactly on the node);
//! 2. orthogonal: when the line from the anchor is within
//!    [`ORTHO_TOLERANCE_DEG`] of horizontal or vertical it is made exactly
//!    so (unless free angles are asked for — the window holds Alt); on that
//!    line, a segment crossing it within the radius gives the crossing;
//! 3. a segment within the radius gives its nearest point;
//! 4. else the grid (the orthogonal line's free coordinate too).
//!
//! The result says which rule placed it, so the canvas draws the matching
//! indicator and the status line can name it.

use std::collections::BTreeSet;

use flowrise_core::project::edit::nearest_on_segment;
use flowrise_core::project::{LevelId, NodeId, PlanPoint, Project, RunId};

use super::hit::Hit;

/// Angle from horizontal or vertical within which a line is made exactly
/// orthogonal, degrees (15°: a hand-drawn "straight" line is rarely more
/// than a few degrees off, a meant diagonal is 45°).
pub const ORTHO_TOLERANCE_DEG: f64 = 15.0;

/// Snap radius around targets, screen points (the canvas turns it into
/// metres at the current zoom).
pub const SNAP_RADIUS_PX: f64 = 10.0;

/// Which rule placed the point.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum SnapKind {
    /// On target point `i` of the list given.
    Point(usize),
    /// On segment `i`, at its nearest point (or where the orthogonal line crosses it).
    Segment {
        /// Index in the segment list.
        index: usize,
        /// Also on the orthogonal line from the anchor.
        orthogonal: bool,
    },
    /// On the horizontal line through the anchor (free coordinate on the grid).
    Horizontal,
    /// On the vertical line through the anchor.
    Vertical,
    /// On the end of a line of the level's plan underlay (a DXF drawing).
    PlanEnd,
    /// On the grid.
    Grid,
    /// Where the pointer is (no grid, nothing near).
    Free,
}

impl SnapKind {
    /// Words for the status line and the indicator.
    #[must_use]
    pub fn words(self) -> &'static str {
        match self {
            Self::Point(_) => "on a node",
            Self::Segment { orthogonal: false, .. } => "on a run",
            Self::Segment { orthogonal: true, .. } => "on a run, square to the last point",
            Self::Horizontal => "horizontal",
            Self::Vertical => "vertical",
            Self::PlanEnd => "on a line end of the plan",
            Self::Grid => "on the grid",
            Self::Free => "free",
        }
    }
}

/// A snapped point.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Snapped {
    /// Where the point lands, m.
    pub at: PlanPoint,
    /// Why.
    pub kind: SnapKind,
}

/// What [`snap`] works with.
#[derive(Debug, Clone, Copy)]
pub struct SnapInput<'a> {
    /// The pointer's plan point (after any drag offset), m.
    pub candidate: PlanPoint,
    /// The point the line is drawn from, if any.
    pub anchor: Option<PlanPoint>,
    /// Target points.
    pub points: &'a [PlanPoint],
    /// Target segments.
    pub segments: &'a [(PlanPoint, PlanPoint)],
    /// Snap radius, m.
    pub radius_m: f64,
    /// Grid step, m (`None`: no grid).
    pub grid_m: Option<f64>,
    /// Free angles asked for: no orthogonal rule.
    pub free_angles: bool,
}

fn on_grid(v: f64, grid_m: Option<f64>) -> f64 {
    match grid_m {
        Some(g) if g > 0.0 => (v / g).round() * g,
        _ => v,
    }
}

/// Where `input.candidate` lands (see the module docs).
#[must_use]
pub fn snap(input: &SnapInput<'_>) -> Snapped {
    let c = input.candidate;
    let r = input.radius_m;
    if let Some((i, _)) = input
        .points
        .iter()
        .enumerate()
        .map(|(i, p)| (i, p.distance_m(c)))
        .filter(|&(_, d)| d <= r)
        .min_by(|a, b| a.1.total_cmp(&b.1))
    {
        return Snapped { at: input.points[i], kind: SnapKind::Point(i) };
    }
    let ortho = input.anchor.filter(|_| !input.free_angles).and_then(|a| {
        let (dx, dy) = (c.x_m - a.x_m, c.y_m - a.y_m);
        if dx.hypot(dy) < 1e-9 {
            return None;
        }
        let off_axis = dy.abs().atan2(dx.abs()).to_degrees();
        if off_axis <= ORTHO_TOLERANCE_DEG {
            Some((a, true))
        } else if off_axis >= 90.0 - ORTHO_TOLERANCE_DEG {
            Some((a, false))
        } else {
            None
        }
    });
    if let Some((a, horizontal)) = ortho {
        let on_line = if horizontal { PlanPoint::new(c.x_m, a.y_m) } else { PlanPoint::new(a.x_m, c.y_m) };
        let crossing = input
            .segments
            .iter()
            .enumerate()
            .filter_map(|(i, &(p, q))| cross_line(p, q, a, horizontal).map(|x| (i, x)))
            .map(|(i, x)| (i, x, x.distance_m(on_line)))
            .filter(|&(_, _, d)| d <= r)
            .min_by(|a, b| a.2.total_cmp(&b.2));
        if let Some((index, at, _)) = crossing {
            return Snapped { at, kind: SnapKind::Segment { index, orthogonal: true } };
        }
        let at = if horizontal {
            PlanPoint::new(on_grid(c.x_m, input.grid_m), a.y_m)
        } else {
            PlanPoint::new(a.x_m, on_grid(c.y_m, input.grid_m))
        };
        return Snapped { at, kind: if horizontal { SnapKind::Horizontal } else { SnapKind::Vertical } };
    }
    if let Some((index, at, _)) = input
        .segments
        .iter()
        .enumerate()
        .map(|(i, &(p, q))| {
            let (at, d) = nearest_on_segment(p, q, c);
            (i, at, d)
        })
        .filter(|&(_, _, d)| d <= r)
        .min_by(|a, b| a.2.total_cmp(&b.2))
    {
        return Snapped { at, kind: SnapKind::Segment { index, orthogonal: false } };
    }
    match input.grid_m {
        Some(_) => Snapped {
            at: PlanPoint::new(on_grid(c.x_m, input.grid_m), on_grid(c.y_m, input.grid_m)),
            kind: SnapKind::Grid,
        },
        None => Snapped { at: c, kind: SnapKind::Free },
    }
}

/// Where segment `p`–`q` crosses the horizontal (or vertical) line through `a`.
fn cross_line(p: PlanPoint, q: PlanPoint, a: PlanPoint, horizontal: bool) -> Option<PlanPoint> {
    let (pv, qv, av) = if horizontal { (p.y_m, q.y_m, a.y_m) } else { (p.x_m, q.x_m, a.x_m) };
    let span = qv - pv;
    if span.abs() < 1e-12 {
        return None; // parallel to the line
    }
    let t = (av - pv) / span;
    if !(0.0..=1.0).contains(&t) {
        return None;
    }
    let x = p.x_m + t * (q.x_m - p.x_m);
    let y = p.y_m + t * (q.y_m - p.y_m);
    Some(if horizontal { PlanPoint::new(x, a.y_m) } else { PlanPoint::new(a.x_m, y) })
}

/// The nodes and run segments of a level as snap targets, with the item
/// each one belongs to.
#[derive(Debug, Clone, Default)]
pub struct Targets {
    /// Node positions.
    pub points: Vec<PlanPoint>,
    /// The node of each point.
    pub nodes: Vec<NodeId>,
    /// Run segments (polyline pieces).
    pub segments: Vec<(PlanPoint, PlanPoint)>,
    /// The run of each segment.
    pub runs: Vec<RunId>,
    /// Line ends of the level's plan underlay (after nodes and runs).
    pub plan_ends: Vec<PlanPoint>,
}

impl Targets {
    /// Targets on `level`, leaving out the nodes in `moving` and the runs
    /// touching them (they move with the pointer).
    #[must_use]
    pub fn of_level(project: &Project, level: LevelId, moving: &BTreeSet<NodeId>) -> Self {
        let mut t = Self::default();
        for n in project.nodes().filter(|n| n.level == level && !moving.contains(&n.id)) {
            t.points.push(n.pos);
            t.nodes.push(n.id);
        }
        for (r, a, b) in project.runs_with_ends() {
            if moving.contains(&r.a) || moving.contains(&r.b) {
                continue;
            }
            if a.level != level || b.level != level {
                continue;
            }
            let pts: Vec<PlanPoint> = std::iter::once(a.pos).chain(r.vertices.iter().copied()).chain([b.pos]).collect();
            for w in pts.windows(2) {
                t.segments.push((w[0], w[1]));
                t.runs.push(r.id);
            }
        }
        t
    }

    /// The item a snapped point landed on, as a canvas hit.
    #[must_use]
    pub fn hit(&self, s: &Snapped) -> Option<Hit> {
        match s.kind {
            SnapKind::Point(i) => self.nodes.get(i).map(|&id| Hit::Node(id)),
            SnapKind::Segment { index, .. } => self.runs.get(index).map(|&id| Hit::Run(id, s.at)),
            SnapKind::Horizontal | SnapKind::Vertical | SnapKind::PlanEnd | SnapKind::Grid | SnapKind::Free => None,
        }
    }

    /// Snap `candidate` drawn from `anchor` against these targets.
    #[must_use]
    pub fn snap(
        &self,
        candidate: PlanPoint,
        anchor: Option<PlanPoint>,
        view: &super::View,
        free_angles: bool,
    ) -> Snapped {
        let s = snap(&SnapInput {
            candidate,
            anchor,
            points: &self.points,
            segments: &self.segments,
            radius_m: SNAP_RADIUS_PX / f64::from(view.px_per_m),
            grid_m: Some(view.grid_step_m()),
            free_angles,
        });
        // Nothing of the network near: a line end of the plan underlay.
        if matches!(s.kind, SnapKind::Horizontal | SnapKind::Vertical | SnapKind::Grid | SnapKind::Free) {
            let r = SNAP_RADIUS_PX / f64::from(view.px_per_m);
            if let Some(&at) = self
                .plan_ends
                .iter()
                .filter(|e| e.distance_m(candidate) <= r)
                .min_by(|a, b| a.distance_m(candidate).total_cmp(&b.distance_m(candidate)))
            {
                return Snapped { at, kind: SnapKind::PlanEnd };
            }
        }
        s
    }
}

/// Draw the indicator of a snapped point: a square on a node, a diamond
/// on a run, a guide line from the anchor when it is orthogonal, and the
/// words beside it.
pub fn draw_indicator(painter: &egui::Painter, view: &super::View, s: &Snapped, anchor: Option<PlanPoint>) {
    use egui::{Align2, FontId, Stroke, vec2};
    let colour = crate::gui::theme::SELECT;
    let q = view.screen_from_plan(s.at);
    let stroke = Stroke::new(1.5, colour);
    let orthogonal =
        matches!(s.kind, SnapKind::Horizontal | SnapKind::Vertical | SnapKind::Segment { orthogonal: true, .. });
    if orthogonal && let Some(a) = anchor {
        let from = view.screen_from_plan(a);
        painter.extend(egui::Shape::dashed_line(&[from, q], Stroke::new(1.0, colour), 4.0, 4.0));
    }
    match s.kind {
        SnapKind::Point(_) => {
            painter.rect_stroke(egui::Rect::from_center_size(q, vec2(14.0, 14.0)), 0, stroke, egui::StrokeKind::Middle);
        }
        SnapKind::Segment { .. } => {
            let d = 7.0;
            let pts = vec![q + vec2(0.0, -d), q + vec2(d, 0.0), q + vec2(0.0, d), q + vec2(-d, 0.0)];
            painter.add(egui::Shape::closed_line(pts, stroke));
        }
        SnapKind::Horizontal | SnapKind::Vertical => {
            painter.circle_stroke(q, 5.0, stroke);
        }
        SnapKind::PlanEnd => {
            painter.rect_stroke(egui::Rect::from_center_size(q, vec2(9.0, 9.0)), 0, stroke, egui::StrokeKind::Middle);
            painter.circle_stroke(q, 2.0, stroke);
        }
        SnapKind::Grid | SnapKind::Free => return,
    }
    painter.text(q + vec2(10.0, -10.0), Align2::LEFT_BOTTOM, s.kind.words(), FontId::proportional(11.0), colour);
}

#[cfg(test)]
mod tests {
    use super::*;

    fn input(c: PlanPoint) -> SnapInput<'static> {
        SnapInput {
            candidate: c,
            anchor: Some(PlanPoint::new(0.0, 0.0)),
            points: &[],
            segments: &[],
            radius_m: 0.3,
            grid_m: Some(0.5),
            free_angles: false,
        }
    }

    #[test]
    fn a_nearly_horizontal_line_ends_exactly_horizontal_unless_free_angles() {
        let s = snap(&input(PlanPoint::new(6.1, 0.9)));
        assert_eq!(s, Snapped { at: PlanPoint::new(6.0, 0.0), kind: SnapKind::Horizontal });
        let s = snap(&input(PlanPoint::new(-0.7, -5.2)));
        assert_eq!(s, Snapped { at: PlanPoint::new(0.0, -5.0), kind: SnapKind::Vertical });
        let free = snap(&SnapInput { free_angles: true, ..input(PlanPoint::new(6.1, 0.9)) });
        assert_eq!(free, Snapped { at: PlanPoint::new(6.0, 1.0), kind: SnapKind::Grid });
        let diagonal = snap(&input(PlanPoint::new(3.1, 2.9)));
        assert_eq!(diagonal.kind, SnapKind::Grid, "45° is meant, not straightened");
    }

    #[test]
    fn nodes_win_then_runs_crossing_the_orthogonal_line_then_runs() {
        let points = [PlanPoint::new(6.2, 1.1)];
        let segments = [(PlanPoint::new(4.25, -3.0), PlanPoint::new(4.25, 3.0))];
        let s = snap(&SnapInput { points: &points, ..input(PlanPoint::new(6.1, 0.9)) });
        assert_eq!(s, Snapped { at: points[0], kind: SnapKind::Point(0) });
        let s = snap(&SnapInput { segments: &segments, ..input(PlanPoint::new(4.1, 0.5)) });
        assert_eq!(
            s,
            Snapped { at: PlanPoint::new(4.25, 0.0), kind: SnapKind::Segment { index: 0, orthogonal: true } }
        );
        let s = snap(&SnapInput { segments: &segments, anchor: None, ..input(PlanPoint::new(4.1, 0.6)) });
        assert_eq!(s.kind, SnapKind::Segment { index: 0, orthogonal: false });
        assert!(s.at.distance_m(PlanPoint::new(4.25, 0.6)) < 1e-12, "the nearest point of the run: {s:?}");
        let s = snap(&SnapInput { grid_m: None, anchor: None, ..input(PlanPoint::new(1.23, 4.56)) });
        assert_eq!(s.kind, SnapKind::Free);
    }
}
