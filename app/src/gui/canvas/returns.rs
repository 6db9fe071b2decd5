//! The return pipes of reverse-return chains, drawn beside the chain so the
//! layout reads on the plan: a run carries one line (its supply and return
//! drawn as one), which hides the extra pipe a reverse-return chain needs.
//! Beside each chain run this draws the return that collects in supply
//! order and, further out, the home pipe from the chain's last node back to
//! its start, each with a chevron giving the direction of flow.

use egui::{Align2, Painter, Pos2, Stroke, Vec2, vec2};

use super::draw::{Labels, PlanScene, dashed};
use super::hit::run_polyline;
use crate::gui::theme;

/// Screen distance between a run and the return drawn beside it (px).
const GAP_PX: f32 = 7.0;

/// Draw the return and the home pipe beside every reverse-return chain run
/// on the level (under the runs; their label goes to `labels`).
pub fn draw_reverse_returns(painter: &Painter, s: &PlanScene<'_>, labels: &mut Labels) {
    let topo = &s.sol.topology;
    let collect = Stroke::new(1.6, theme::RETURN.gamma_multiply(0.85));
    let home = Stroke::new(1.6, theme::RETURN.gamma_multiply(0.6));
    for chain in &topo.reverse_chains {
        let mut labelled = false;
        for &run_id in &chain.runs {
            let (Some(run), Some(tr)) = (s.project.run(run_id), topo.tree_run(run_id)) else { continue };
            let Some(mut pts) = run_polyline(s.project, run, s.level, s.view) else { continue };
            if run.a != tr.up {
                pts.reverse();
            }
            // Supply order: from the upstream end down the chain.
            let along = offset_polyline(&pts, GAP_PX);
            let back = offset_polyline(&pts, 2.0 * GAP_PX);
            painter.add(egui::Shape::line(along.clone(), collect));
            dashed(painter, &back, home);
            chevron(painter, &along, false, collect);
            chevron(painter, &back, true, home);
            if s.show_labels
                && !labelled
                && let Some((mid, dir)) = middle(&back)
            {
                let n = vec2(-dir.y, dir.x);
                labels.add(
                    "reverse return · home pipe".to_owned(),
                    vec![(mid + n * 8.0, Align2::LEFT_CENTER), (mid - n * 8.0, Align2::RIGHT_CENTER)],
                    false,
                );
                labelled = true;
            }
        }
    }
}

/// `pts` moved `d` pixels to their left (screen coordinates), corners mitred
/// (the mitre capped at 3 d so sharp turns do not shoot out).
#[must_use]
pub fn offset_polyline(pts: &[Pos2], d: f32) -> Vec<Pos2> {
    let normal = |a: Pos2, b: Pos2| {
        let t = (b - a).normalized();
        vec2(t.y, -t.x)
    };
    let n = pts.len();
    (0..n)
        .map(|i| {
            let before = (i > 0).then(|| normal(pts[i - 1], pts[i]));
            let after = (i + 1 < n).then(|| normal(pts[i], pts[i + 1]));
            let off = match (before, after) {
                (Some(a), Some(b)) => {
                    let m = (a + b).normalized();
                    let cos = m.dot(a).max(1.0 / 3.0);
                    m * (d / cos)
                }
                (Some(a), None) | (None, Some(a)) => a * d,
                (None, None) => Vec2::ZERO,
            };
            pts[i] + if off.x.is_finite() && off.y.is_finite() { off } else { Vec2::ZERO }
        })
        .collect()
}

/// Middle of the longest segment and its direction.
fn middle(pts: &[Pos2]) -> Option<(Pos2, Vec2)> {
    pts.windows(2)
        .max_by(|a, b| a[0].distance_sq(a[1]).total_cmp(&b[0].distance_sq(b[1])))
        .filter(|w| w[0].distance(w[1]) > 1.0)
        .map(|w| (w[0].lerp(w[1], 0.5), (w[1] - w[0]).normalized()))
}

/// A small chevron at the middle of the polyline pointing along it
/// (`backwards`: against it).
fn chevron(painter: &Painter, pts: &[Pos2], backwards: bool, stroke: Stroke) {
    let Some((mid, mut dir)) = middle(pts) else { return };
    if backwards {
        dir = -dir;
    }
    let n = vec2(-dir.y, dir.x);
    let tip = mid + dir * 4.0;
    painter.line_segment([tip, tip - dir * 6.0 + n * 4.0], stroke);
    painter.line_segment([tip, tip - dir * 6.0 - n * 4.0], stroke);
}

#[cfg(test)]
mod tests {
    use super::*;
    use egui::pos2;

    #[test]
    fn an_offset_line_stays_parallel_at_the_gap_also_round_a_corner() {
        // An L: right then down (screen y grows downwards).
        let pts = [pos2(0.0, 0.0), pos2(100.0, 0.0), pos2(100.0, 100.0)];
        let off = offset_polyline(&pts, 7.0);
        assert_eq!(off.len(), 3);
        // Left of "right" in screen coordinates is up (−y).
        assert!((off[0] - pos2(0.0, -7.0)).length() < 1e-4, "{:?}", off[0]);
        // The corner is mitred: 7 px from both legs.
        assert!((off[1] - pos2(107.0, -7.0)).length() < 1e-3, "{:?}", off[1]);
        assert!((off[2] - pos2(107.0, 100.0)).length() < 1e-4, "{:?}", off[2]);
    }
}
