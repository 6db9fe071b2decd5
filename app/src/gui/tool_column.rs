//! The tool column (left): icon, word and key letter per tool.

use egui::{Align2, Color32, FontId, Pos2, Rect, Sense, Shape, Stroke, Ui, pos2, vec2};

use super::actions::Action;
use super::canvas::Tool;
use super::intents::Intents;
use super::theme;

/// Draw the small icon of a tool into `r`.
fn icon(p: &egui::Painter, r: Rect, tool: Tool, c: Color32) {
    let s = Stroke::new(1.6, c);
    let m = r.center();
    match tool {
        Tool::Select => {
            let pts = vec![
                m + vec2(-5.0, -7.0),
                m + vec2(5.0, 1.0),
                m + vec2(0.0, 1.5),
                m + vec2(-2.0, 7.0),
                m + vec2(-5.0, -7.0),
            ];
            p.add(Shape::line(pts, s));
        }
        Tool::Run => {
            p.add(Shape::line(
                vec![m + vec2(-7.0, 6.0), m + vec2(-1.0, -4.0), m + vec2(7.0, -4.0)],
                Stroke::new(2.5, c),
            ));
            p.circle_filled(m + vec2(-7.0, 6.0), 2.5, c);
            p.circle_filled(m + vec2(7.0, -4.0), 2.5, c);
        }
        Tool::Emitter => {
            let b = Rect::from_center_size(m, vec2(16.0, 10.0));
            p.rect_stroke(b, 1, s, egui::StrokeKind::Middle);
            for i in 1..4 {
                let x = b.left() + i as f32 * 4.0;
                p.line_segment([pos2(x, b.top() + 2.0), pos2(x, b.bottom() - 2.0)], Stroke::new(1.0, c));
            }
        }
        Tool::Header => {
            let b = Rect::from_center_size(m + vec2(0.0, -2.0), vec2(16.0, 6.0));
            p.rect_stroke(b, 1, s, egui::StrokeKind::Middle);
            for i in 0..4 {
                let x = b.left() + 2.0 + i as f32 * 4.0;
                p.line_segment([pos2(x, b.bottom()), pos2(x, b.bottom() + 5.0)], s);
            }
        }
        Tool::Source => {
            p.rect_stroke(Rect::from_center_size(m, vec2(14.0, 14.0)), 2, s, egui::StrokeKind::Middle);
            p.add(Shape::convex_polygon(
                vec![m + vec2(-2.5, 3.0), m + vec2(3.5, 0.0), m + vec2(-2.5, -3.0)],
                c,
                Stroke::NONE,
            ));
        }
        Tool::Circuit => {
            p.rect_stroke(Rect::from_center_size(m, vec2(18.0, 14.0)), 4, s, egui::StrokeKind::Middle);
            p.circle_stroke(m, 4.5, s);
            p.add(Shape::convex_polygon(
                vec![m + vec2(-2.0, 2.5), m + vec2(3.0, 0.0), m + vec2(-2.0, -2.5)],
                c,
                Stroke::NONE,
            ));
        }
        Tool::Separator => {
            p.rect_stroke(Rect::from_center_size(m, vec2(8.0, 18.0)), 1, s, egui::StrokeKind::Middle);
            for dy in [-5.0, 0.0, 5.0] {
                p.line_segment([m + vec2(-8.0, dy), m + vec2(-4.0, dy)], Stroke::new(1.2, c));
                p.line_segment([m + vec2(4.0, dy), m + vec2(8.0, dy)], Stroke::new(1.2, c));
            }
        }
        Tool::Riser => {
            p.line_segment([m + vec2(0.0, 7.0), m + vec2(0.0, -7.0)], Stroke::new(2.0, c));
            p.add(Shape::convex_polygon(
                vec![m + vec2(-4.0, -3.0), m + vec2(0.0, -8.0), m + vec2(4.0, -3.0)],
                c,
                Stroke::NONE,
            ));
            p.line_segment([m + vec2(-7.0, 7.0), m + vec2(7.0, 7.0)], s);
        }
        Tool::Split => {
            p.line_segment([m + vec2(-8.0, 0.0), m + vec2(8.0, 0.0)], Stroke::new(2.5, c));
            p.circle_filled(m, 3.5, c);
            p.line_segment([m + vec2(0.0, -7.0), m + vec2(0.0, -3.0)], s);
        }
        Tool::Erase => {
            p.line_segment([m + vec2(-6.0, -6.0), m + vec2(6.0, 6.0)], Stroke::new(2.0, c));
            p.line_segment([m + vec2(-6.0, 6.0), m + vec2(6.0, -6.0)], Stroke::new(2.0, c));
        }
    }
}

fn tool_button(ui: &mut Ui, tool: Tool, active: bool) -> egui::Response {
    let (rect, resp) = ui.allocate_exact_size(vec2(ui.available_width(), 30.0), Sense::click());
    resp.widget_info(|| egui::WidgetInfo::selected(egui::Role::Button, true, active, tool.word()));
    let visuals = ui.style().interact_selectable(&resp, active);
    let fill = if active {
        theme::ACCENT
    } else if resp.hovered() {
        visuals.bg_fill
    } else {
        Color32::TRANSPARENT
    };
    let ink = if active { Color32::WHITE } else { theme::INK };
    let p = ui.painter();
    p.rect_filled(rect, 4, fill);
    icon(p, Rect::from_min_size(rect.min + vec2(4.0, 3.0), vec2(24.0, 24.0)), tool, ink);
    p.text(
        Pos2::new(rect.left() + 34.0, rect.center().y),
        Align2::LEFT_CENTER,
        tool.word(),
        FontId::proportional(13.5),
        ink,
    );
    let key = format!("{:?}", tool.key());
    p.text(
        Pos2::new(rect.right() - 6.0, rect.center().y),
        Align2::RIGHT_CENTER,
        key,
        FontId::monospace(11.0),
        if active { Color32::WHITE } else { theme::NO_RESULT },
    );
    resp.on_hover_text(tool.tooltip())
}

/// Show the tool column.
pub fn show(ui: &mut Ui, tool: &mut Tool, header_outlets: &mut u32, out: &mut Intents) {
    ui.add_space(4.0);
    ui.label(egui::RichText::new("Tools").weak());
    for t in Tool::ALL {
        if tool_button(ui, t, *tool == t).clicked() {
            out.actions.push(Action::Tool(t));
        }
    }
    if *tool == Tool::Header {
        ui.add_space(6.0);
        let l = ui.label("Outlets");
        ui.add(egui::DragValue::new(header_outlets).range(1..=24))
            .labelled_by(l.id)
            .on_hover_text("Outlet pairs of new headers");
    }
    ui.add_space(10.0);
    ui.separator();
    if ui.button(Action::PlanUnderlay.label()).on_hover_text(Action::PlanUnderlay.tooltip()).clicked() {
        out.actions.push(Action::PlanUnderlay);
    }
    if ui.button("Settings").on_hover_text(Action::Settings.tooltip()).clicked() {
        out.actions.push(Action::Settings);
    }
    if ui.button("About").on_hover_text(Action::About.tooltip()).clicked() {
        out.actions.push(Action::About);
    }
}
