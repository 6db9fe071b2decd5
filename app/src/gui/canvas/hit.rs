//! Hit-testing on the plan, in screen points so it behaves the same at
//! every zoom: a cheap bounding-box test first, then the exact distance to
//! the node or the run's polyline.

use egui::{Pos2, Rect};
use flowrise_core::project::{LevelId, Node, NodeId, PlanPoint, Project, Run, RunId};

use super::level_index::LevelIndex;
use super::view::View;

/// Pick radius around a node symbol, screen points.
pub const NODE_PICK_PX: f32 = 10.0;
/// Pick distance from a run's line, screen points.
pub const RUN_PICK_PX: f32 = 6.0;

/// What is under the pointer.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Hit {
    /// A node.
    Node(NodeId),
    /// A run, with the nearest point on it (plan metres).
    Run(RunId, PlanPoint),
}

/// The screen polyline of a run drawn on `level` (both ends on it).
#[must_use]
pub fn run_polyline(project: &Project, run: &Run, level: LevelId, view: &View) -> Option<Vec<Pos2>> {
    run_polyline_between(project.node(run.a)?, project.node(run.b)?, run, level, view)
}

/// [`run_polyline`] with the run's end nodes `a` and `b` given (from
/// [`Project::runs_with_ends`]: a frame that walks every run looks up no
/// node).
#[must_use]
pub fn run_polyline_between(a: &Node, b: &Node, run: &Run, level: LevelId, view: &View) -> Option<Vec<Pos2>> {
    if a.level != level || b.level != level {
        return None;
    }
    let mut pts = Vec::with_capacity(run.vertices.len() + 2);
    pts.push(view.screen_from_plan(a.pos));
    pts.extend(run.vertices.iter().map(|&v| view.screen_from_plan(v)));
    pts.push(view.screen_from_plan(b.pos));
    Some(pts)
}

/// Distance from `p` to segment `a`–`b` and the parameter of the nearest point.
#[must_use]
pub fn distance_to_segment(a: Pos2, b: Pos2, p: Pos2) -> (f32, f32) {
    let ab = b - a;
    let len2 = ab.length_sq();
    let t = if len2 > 0.0 { ((p - a).dot(ab) / len2).clamp(0.0, 1.0) } else { 0.0 };
    ((a + t * ab).distance(p), t)
}

/// The nearest node on `level` within [`NODE_PICK_PX`] of `pos` (`index`
/// holds the level's nodes).
#[must_use]
pub fn hit_node(project: &Project, index: &LevelIndex, level: LevelId, view: &View, pos: Pos2) -> Option<NodeId> {
    let mut best: Option<(f32, NodeId)> = None;
    for n in index.nodes(project).filter(|n| n.level == level) {
        let q = view.screen_from_plan(n.pos);
        if (q.x - pos.x).abs() > NODE_PICK_PX || (q.y - pos.y).abs() > NODE_PICK_PX {
            continue;
        }
        let d = q.distance(pos);
        if d <= NODE_PICK_PX && best.is_none_or(|(bd, _)| d < bd) {
            best = Some((d, n.id));
        }
    }
    best.map(|(_, id)| id)
}

/// The nearest run on `level` within [`RUN_PICK_PX`] of `pos` (`index`
/// holds the level's runs).
#[must_use]
pub fn hit_run(
    project: &Project,
    index: &LevelIndex,
    level: LevelId,
    view: &View,
    pos: Pos2,
) -> Option<(RunId, PlanPoint)> {
    let mut best: Option<(f32, RunId, Pos2)> = None;
    for (run, a, b) in index.runs(project) {
        let Some(pts) = run_polyline_between(a, b, run, level, view) else { continue };
        let bbox = Rect::from_points(&pts).expand(RUN_PICK_PX);
        if !bbox.contains(pos) {
            continue;
        }
        for w in pts.windows(2) {
            let (d, t) = distance_to_segment(w[0], w[1], pos);
            if d <= RUN_PICK_PX && best.is_none_or(|(bd, _, _)| d < bd) {
                best = Some((d, run.id, w[0] + t * (w[1] - w[0])));
            }
        }
    }
    best.map(|(_, id, q)| (id, view.plan_from_screen(q)))
}

/// Nodes first (they sit on top of runs), then runs.
#[must_use]
pub fn hit_test(project: &Project, index: &LevelIndex, level: LevelId, view: &View, pos: Pos2) -> Option<Hit> {
    hit_node(project, index, level, view, pos)
        .map(Hit::Node)
        .or_else(|| hit_run(project, index, level, view, pos).map(|(r, p)| Hit::Run(r, p)))
}

#[cfg(test)]
mod tests {
    use super::*;
    use egui::pos2;

    #[test]
    fn segment_distance_is_perpendicular_inside_and_to_the_end_outside() {
        let (d, t) = distance_to_segment(pos2(0.0, 0.0), pos2(10.0, 0.0), pos2(5.0, 3.0));
        assert!((d - 3.0).abs() < 1e-6 && (t - 0.5).abs() < 1e-6);
        let (d, t) = distance_to_segment(pos2(0.0, 0.0), pos2(10.0, 0.0), pos2(13.0, 4.0));
        assert!((d - 5.0).abs() < 1e-6 && (t - 1.0).abs() < 1e-6);
    }
}
