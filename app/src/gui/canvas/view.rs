//! The plan view: pan/zoom transform between plan metres and screen points,
//! the snapping grid and the scale bar.

use egui::{Color32, Painter, Pos2, Rect, Stroke, Vec2, pos2, vec2};
use flowrise_core::project::PlanPoint;

/// Zoom limits, screen points per metre.
pub const ZOOM_RANGE_PX_PER_M: (f32, f32) = (2.0, 400.0);

/// Pan and zoom of the plan. North is up on screen.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct View {
    /// Plan point shown at the centre of the canvas, m.
    pub centre: PlanPoint,
    /// Screen points per metre.
    pub px_per_m: f32,
    /// Canvas rectangle of the last frame (screen points).
    pub rect: Rect,
}

impl Default for View {
    fn default() -> Self {
        Self {
            centre: PlanPoint::new(0.0, 0.0),
            px_per_m: 30.0,
            rect: Rect::from_min_size(Pos2::ZERO, vec2(800.0, 600.0)),
        }
    }
}

impl View {
    /// Screen position of a plan point.
    #[must_use]
    pub fn screen_from_plan(&self, p: PlanPoint) -> Pos2 {
        let c = self.rect.center();
        let s = f64::from(self.px_per_m);
        pos2(c.x + ((p.x_m - self.centre.x_m) * s) as f32, c.y - ((p.y_m - self.centre.y_m) * s) as f32)
    }

    /// Plan point under a screen position.
    #[must_use]
    pub fn plan_from_screen(&self, q: Pos2) -> PlanPoint {
        let c = self.rect.center();
        let s = f64::from(self.px_per_m);
        PlanPoint::new(self.centre.x_m + f64::from(q.x - c.x) / s, self.centre.y_m - f64::from(q.y - c.y) / s)
    }

    /// Move the view by a screen-space drag.
    pub fn pan_by_screen(&mut self, delta: Vec2) {
        let s = f64::from(self.px_per_m);
        self.centre.x_m -= f64::from(delta.x) / s;
        self.centre.y_m += f64::from(delta.y) / s;
    }

    /// Zoom by `factor` keeping the plan point under `about` fixed.
    pub fn zoom_about(&mut self, about: Pos2, factor: f32) {
        let before = self.plan_from_screen(about);
        self.px_per_m = (self.px_per_m * factor).clamp(ZOOM_RANGE_PX_PER_M.0, ZOOM_RANGE_PX_PER_M.1);
        let after = self.plan_from_screen(about);
        self.centre.x_m += before.x_m - after.x_m;
        self.centre.y_m += before.y_m - after.y_m;
    }

    /// Fit the plan box `(min, max)` into the canvas with a margin.
    pub fn fit(&mut self, min: PlanPoint, max: PlanPoint) {
        let w_m = (max.x_m - min.x_m).max(12.0);
        let h_m = (max.y_m - min.y_m).max(8.0);
        let margin = 60.0;
        let sx = (self.rect.width() - 2.0 * margin).max(50.0) / w_m as f32;
        let sy = (self.rect.height() - 2.0 * margin).max(50.0) / h_m as f32;
        self.px_per_m = sx.min(sy).clamp(ZOOM_RANGE_PX_PER_M.0, ZOOM_RANGE_PX_PER_M.1);
        self.centre = PlanPoint::new(0.5 * (min.x_m + max.x_m), 0.5 * (min.y_m + max.y_m));
    }

    /// Grid step in metres: the smallest of 0.1, 0.25, 0.5, 1, 2, 5, 10, 20, 50 m
    /// that is at least 18 screen points wide.
    #[must_use]
    pub fn grid_step_m(&self) -> f64 {
        const STEPS_M: [f64; 9] = [0.1, 0.25, 0.5, 1.0, 2.0, 5.0, 10.0, 20.0, 50.0];
        STEPS_M.iter().copied().find(|s| *s * f64::from(self.px_per_m) >= 18.0).unwrap_or(100.0)
    }

    /// Snap a plan point to the grid.
    #[must_use]
    pub fn snap(&self, p: PlanPoint) -> PlanPoint {
        let g = self.grid_step_m();
        PlanPoint::new((p.x_m / g).round() * g, (p.y_m / g).round() * g)
    }

    /// Draw the grid (minor lines every step, stronger every fifth).
    pub fn draw_grid(&self, painter: &Painter, minor: Color32, major: Color32) {
        let g = self.grid_step_m();
        let lo = self.plan_from_screen(self.rect.left_bottom());
        let hi = self.plan_from_screen(self.rect.right_top());
        let (i0, i1) = ((lo.x_m / g).floor() as i64, (hi.x_m / g).ceil() as i64);
        let (j0, j1) = ((lo.y_m / g).floor() as i64, (hi.y_m / g).ceil() as i64);
        for i in i0..=i1 {
            let x = self.screen_from_plan(PlanPoint::new(i as f64 * g, 0.0)).x;
            let c = if i % 5 == 0 { major } else { minor };
            painter.line_segment([pos2(x, self.rect.top()), pos2(x, self.rect.bottom())], Stroke::new(1.0, c));
        }
        for j in j0..=j1 {
            let y = self.screen_from_plan(PlanPoint::new(0.0, j as f64 * g)).y;
            let c = if j % 5 == 0 { major } else { minor };
            painter.line_segment([pos2(self.rect.left(), y), pos2(self.rect.right(), y)], Stroke::new(1.0, c));
        }
    }

    /// Scale bar text: metres per grid step.
    #[must_use]
    pub fn scale_text(&self) -> String {
        let g = self.grid_step_m();
        if g < 1.0 { format!("grid {:.0} cm", g * 100.0) } else { format!("grid {g:.0} m") }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn screen_and_plan_round_trip_at_any_zoom() {
        for px in [2.0, 30.0, 400.0] {
            let v = View { centre: PlanPoint::new(3.0, -2.0), px_per_m: px, ..View::default() };
            let p = PlanPoint::new(12.5, 7.25);
            let q = v.plan_from_screen(v.screen_from_plan(p));
            assert!((q.x_m - p.x_m).abs() < 1e-3 && (q.y_m - p.y_m).abs() < 1e-3, "{q:?}");
        }
    }

    #[test]
    fn zoom_keeps_the_point_under_the_pointer() {
        let mut v = View::default();
        let at = pos2(100.0, 150.0);
        let p = v.plan_from_screen(at);
        v.zoom_about(at, 2.0);
        let q = v.plan_from_screen(at);
        assert!((q.x_m - p.x_m).abs() < 1e-4 && (q.y_m - p.y_m).abs() < 1e-4);
    }
}
