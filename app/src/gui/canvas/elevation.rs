//! The riser (elevation) strip: levels as horizontal bands, vertical runs as
//! lines between them, placed by their plan x. A simple side view from the
//! south; it shows what crosses the levels, not the plan. A click on a
//! level shows that level's plan ([`level_at`]).

use egui::{Align2, Color32, FontId, Painter, Rect, Stroke, pos2};
use flowrise_core::design::{Side, Solution};
use flowrise_core::project::{LevelId, Project};

/// Where each level is drawn: (level, y on screen).
pub type Bands = Vec<(LevelId, f32)>;

/// Horizontal room a riser's size label needs beside it, px.
const SIZE_LABEL_ROOM_PX: f32 = 44.0;

/// The level drawn nearest to `y`, within half the spacing to its
/// neighbours (at least 6 points).
#[must_use]
pub fn level_at(bands: &[(LevelId, f32)], y: f32) -> Option<LevelId> {
    let mut ys: Vec<f32> = bands.iter().map(|b| b.1).collect();
    ys.sort_by(f32::total_cmp);
    let gap = ys.windows(2).map(|w| w[1] - w[0]).fold(f32::INFINITY, f32::min);
    let reach = if gap.is_finite() { (gap * 0.5).max(6.0) } else { 40.0 };
    bands
        .iter()
        .map(|&(l, by)| (l, (by - y).abs()))
        .filter(|&(_, d)| d <= reach)
        .min_by(|a, b| a.1.total_cmp(&b.1))
        .map(|(l, _)| l)
}

use super::level_index::LevelIndex;
use crate::gui::theme::{self, ColourBy};

/// Draw the elevation of all vertical runs into `rect`, the shown level
/// marked; returns where each level is drawn.
pub fn draw(
    painter: &Painter,
    rect: Rect,
    project: &Project,
    sol: &Solution,
    colour_by: ColourBy,
    shown: LevelId,
    index: &LevelIndex,
) -> Bands {
    painter.rect_filled(rect, 0, theme::PAPER);
    painter.text(
        rect.left_top() + egui::vec2(8.0, 6.0),
        Align2::LEFT_TOP,
        "Riser view (from the south)",
        FontId::proportional(12.0),
        theme::INK,
    );
    let levels = &project.levels;
    if levels.is_empty() {
        return Vec::new();
    }
    let z_min = levels.iter().map(|l| l.elevation_m).fold(f64::INFINITY, f64::min);
    let z_max = levels.iter().map(|l| l.elevation_m).fold(f64::NEG_INFINITY, f64::max);
    let span = (z_max - z_min).max(3.0);
    let top = rect.top() + 40.0;
    let bottom = rect.bottom() - 30.0;
    let y_of = |z: f64| bottom - ((z - z_min) / span) as f32 * (bottom - top);
    let bands: Bands = levels.iter().map(|l| (l.id, y_of(l.elevation_m))).collect();
    // Labels only where they do not overlap (a tall building): from the
    // bottom up, a label at least a text height above the last one; the
    // shown level always.
    let mut order: Vec<_> = levels.iter().zip(&bands).collect();
    order.sort_by(|a, b| b.1.1.total_cmp(&a.1.1));
    let shown_y = bands.iter().find(|b| b.0 == shown).map(|b| b.1);
    let mut last_label_y = f32::INFINITY;
    for (l, &(_, y)) in order {
        let is_shown = l.id == shown;
        if is_shown {
            painter.rect_filled(
                Rect::from_min_max(pos2(rect.left() + 2.0, y - 13.0), pos2(rect.right() - 2.0, y + 1.0)),
                2,
                Color32::from_rgba_unmultiplied(0x0f, 0x6e, 0x6a, 40),
            );
        }
        painter.line_segment(
            [pos2(rect.left() + 6.0, y), pos2(rect.right() - 6.0, y)],
            Stroke::new(if is_shown { 1.5 } else { 1.0 }, if is_shown { theme::ACCENT } else { theme::GRID_MAJOR }),
        );
        if is_shown || (last_label_y - y >= 13.0 && shown_y.is_none_or(|sy| (y - sy).abs() >= 13.0)) {
            painter.text(
                pos2(rect.left() + 8.0, y - 2.0),
                Align2::LEFT_BOTTOM,
                format!("{}  {:+.1} m", l.name, l.elevation_m),
                FontId::proportional(10.5),
                theme::INK,
            );
            last_label_y = y;
        }
    }
    let vertical: Vec<_> = index.vertical_runs(project).collect();
    if vertical.is_empty() {
        painter.text(
            rect.center(),
            Align2::CENTER_CENTER,
            "no risers yet",
            FontId::proportional(12.0),
            theme::NO_RESULT,
        );
        return bands;
    }
    let xs: Vec<f64> = vertical.iter().map(|(_, a, _)| a.pos.x_m).collect();
    let x_min = xs.iter().copied().fold(f64::INFINITY, f64::min);
    let x_max = xs.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    let x_span = (x_max - x_min).max(1.0);
    // Risers right of the level names, their sizes right of them.
    let left = rect.left() + (rect.width() * 0.55).min(115.0);
    let right = (rect.right() - 45.0).max(left);
    let x_of = |x: f64| {
        if x_max > x_min { left + ((x - x_min) / x_span) as f32 * (right - left) } else { right }
    };
    // Sizes beside every riser only when the risers stand far enough apart
    // for a label; else beside the rightmost one alone (labels of risers a
    // few points apart would print over each other).
    let mut distinct: Vec<f32> = xs.iter().map(|&x| x_of(x)).collect();
    distinct.sort_by(f32::total_cmp);
    distinct.dedup_by(|a, b| (*a - *b).abs() < 0.5);
    let room_for_all = distinct.windows(2).all(|w| w[1] - w[0] >= SIZE_LABEL_ROOM_PX);
    for (r, a, b) in vertical {
        let x = x_of(a.pos.x_m);
        let (ya, yb) = (y_of(project.elevation_m(a.id)), y_of(project.elevation_m(b.id)));
        let value = colour_by.run_value(sol, r.id);
        let (stroke, _) = theme::run_stroke(value, 40.0);
        painter.line_segment([pos2(x, ya), pos2(x, yb)], Stroke::new(stroke.width + 2.0, theme::CASING));
        painter.line_segment([pos2(x, ya), pos2(x, yb)], stroke);
        for y in [ya, yb] {
            painter.circle_filled(pos2(x, y), 3.5, theme::INK);
        }
        // The size where there is room for it (a riser a level high in a
        // tall building is a few points long).
        if (ya - yb).abs() >= 14.0
            && (room_for_all || a.pos.x_m >= x_max)
            && let Some(p) = sol.run_pipes(r.id).find(|p| p.side == Side::Supply)
        {
            painter.text(
                pos2(x + 6.0, 0.5 * (ya + yb)),
                Align2::LEFT_CENTER,
                p.size,
                FontId::proportional(10.5),
                Color32::from_rgb(0x26, 0x2b, 0x33),
            );
        }
    }
    bands
}
