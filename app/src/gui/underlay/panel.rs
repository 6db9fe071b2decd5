//! The "Plan underlay" panel of the shown level.

use egui::{RichText, Ui};
use flowrise_core::project::{Edit, Level, Underlay, limits};
use flowrise_core::underlay::{LoadedUnderlay, SourceKind, UnderlayContent};

use super::super::FlowriseApp;
use super::super::file_flow::FilePurpose;
use super::super::intents::Intents;
use super::super::theme;
use super::cache;

/// Push a new placement: one undo step, or one per drag of a number.
fn push(out: &mut Intents, level: &Level, u: Underlay, resp: Option<&egui::Response>) {
    let edit = Edit::SetLevel(Level { underlay: Some(u), ..level.clone() });
    match resp {
        Some(r) if r.dragged() => out.edit_during_drag(edit),
        _ => out.edit(edit),
    }
}

fn drag_marks(out: &mut Intents, r: &egui::Response) {
    if r.drag_started() {
        out.drag_begin = true;
    }
    if r.drag_stopped() {
        out.drag_end = true;
    }
}

/// A labelled number; a changed value becomes an edit of the placement.
fn number(
    ui: &mut Ui,
    label: &str,
    value: f64,
    speed: f64,
    range: std::ops::RangeInclusive<f64>,
    enabled: bool,
) -> (Option<f64>, egui::Response) {
    let l = ui.label(label);
    let mut v = value;
    let r = ui
        .add_enabled(enabled, egui::DragValue::new(&mut v).speed(speed).range(range).max_decimals(6))
        .labelled_by(l.id);
    ui.end_row();
    let changed = (r.changed() && v.to_bits() != value.to_bits()).then_some(v);
    (changed, r)
}

fn describe(l: &LoadedUnderlay) -> String {
    match &l.content {
        UnderlayContent::Raster(r) => {
            let [w, h] = r.size_units();
            match l.kind {
                SourceKind::Pdf => format!(
                    "PDF page {} of {}, {w:.0} × {h:.0} pt, shown at {} × {} px",
                    l.page, l.pages, r.width, r.height
                ),
                _ => format!("image, {w:.0} × {h:.0} px"),
            }
        }
        UnderlayContent::Vector(v) => {
            let units = v.m_per_unit.map_or_else(|| "units not given".to_owned(), |m| format!("1 unit = {} m", m));
            format!(
                "DXF drawing, {} entities ({} lines and polylines, {} texts), {units}",
                v.entities,
                v.starts.len(),
                v.texts.len()
            )
        }
    }
}

/// The panel window.
pub fn window(app: &mut FlowriseApp, ctx: &egui::Context, out: &mut Intents) {
    let level_id = app.canvas.level;
    let Some(level) = app.project.levels.iter().find(|l| l.id == level_id).cloned() else { return };
    let mut open = true;
    let mut choose = false;
    egui::Window::new(format!("Plan underlay — {}", level.name))
        .id(egui::Id::unique("plan_underlay_panel"))
        .open(&mut open)
        .default_width(340.0)
        // Top right of the canvas, clear of where a plan is usually traced.
        .default_pos(ctx.content_rect().right_top() + egui::vec2(-740.0, 70.0))
        .show(ctx, |ui| {
            if let Some(p) = app.underlay.importing() {
                ui.horizontal(|ui| {
                    ui.spinner();
                    ui.label(format!(
                        "Reading {}…",
                        p.file_name().map_or_else(String::new, |n| n.to_string_lossy().into_owned())
                    ));
                });
            }
            let Some(u) = level.underlay.clone() else {
                ui.label(format!(
                    "No plan under {}. Put a floor plan under the level to trace the network over it: \
                     a PNG or JPEG image, a page of a PDF, or a DXF drawing.",
                    level.name
                ));
                if ui.button("Choose plan file…").clicked() {
                    choose = true;
                }
                return;
            };
            ui.label(RichText::new(&u.path).monospace()).on_hover_text("Stored relative to the project file");
            let path = app.underlay.file_of(&u);
            let entry = app.underlay.files.get(&path, app.underlay.background);
            let kind = match &entry.state {
                cache::State::Loading(_) => {
                    ui.horizontal(|ui| {
                        ui.spinner();
                        ui.label("Reading the file…");
                    });
                    None
                }
                cache::State::Failed(why) => {
                    ui.label(RichText::new(format!("Not shown: {why}")).color(theme::ERROR));
                    None
                }
                cache::State::Ready(l) => {
                    ui.label(RichText::new(describe(l)).weak());
                    Some((l.kind, l.pages))
                }
            };
            // A PDF of several pages: which page lies under the level. A
            // later page that cannot be shown can go back to the first.
            if kind.is_none()
                && u.page > 1
                && !matches!(entry.state, cache::State::Loading(_))
                && ui.button("Show page 1 instead").clicked()
            {
                push(out, &level, Underlay { page: 1, ..u.clone() }, None);
            }
            if let Some((SourceKind::Pdf, n)) = kind.filter(|&(_, n)| n > 1) {
                ui.horizontal(|ui| {
                    let mut page = u.page;
                    if ui.add_enabled(page > 1, egui::Button::new("Previous page")).clicked() {
                        page -= 1;
                    }
                    ui.label(format!("Page {} of {n}", u.page));
                    if ui.add_enabled(page < n, egui::Button::new("Next page")).clicked() {
                        page += 1;
                    }
                    if page != u.page {
                        push(out, &level, Underlay { page: page.clamp(1, n), ..u.clone() }, None);
                    }
                });
            }
            let kind = kind.map(|(k, _)| k);
            ui.horizontal(|ui| {
                if ui.button("Replace file…").clicked() {
                    choose = true;
                }
                if ui.button("Reload").on_hover_text("Read the file again (after it changed on disk)").clicked() {
                    app.underlay.files.forget(&path);
                }
                if ui
                    .button("Remove underlay")
                    .on_hover_text("Take the plan away from this level (undo brings it back)")
                    .clicked()
                {
                    out.edit(Edit::SetLevel(Level { underlay: None, ..level.clone() }));
                }
            });
            ui.separator();
            let movable = !u.locked;
            if !movable {
                app.underlay.set_moving(level.id, false);
            }
            calibration_ui(app, ui, &level, &u, movable, out);
            moving_ui(app, ui, &level, movable);
            ui.separator();
            egui::Grid::new("underlay_numbers").num_columns(2).show(ui, |ui| {
                let unit = kind.map_or("source unit", SourceKind::unit_word);
                let m = limits::UNDERLAY_M_PER_UNIT;
                let (v, r) = number(
                    ui,
                    &format!("Metres per {unit}"),
                    u.m_per_unit,
                    u.m_per_unit * 0.002,
                    m.min * 1.0001..=m.max,
                    movable,
                );
                drag_marks(out, &r);
                if let Some(v) = v {
                    push(out, &level, Underlay { m_per_unit: v, ..u.clone() }, Some(&r));
                }
                let c = limits::PLAN_COORDINATE_M;
                let (v, r) = number(ui, "Origin east (m)", u.origin.x_m, 0.05, c.min..=c.max, movable);
                drag_marks(out, &r);
                if let Some(v) = v {
                    let mut n = u.clone();
                    n.origin.x_m = v;
                    push(out, &level, n, Some(&r));
                }
                let (v, r) = number(ui, "Origin north (m)", u.origin.y_m, 0.05, c.min..=c.max, movable);
                drag_marks(out, &r);
                if let Some(v) = v {
                    let mut n = u.clone();
                    n.origin.y_m = v;
                    push(out, &level, n, Some(&r));
                }
                let (v, r) = number(ui, "Rotation (°, anticlockwise)", u.rotation_deg, 0.1, -360.0..=360.0, movable);
                drag_marks(out, &r);
                if let Some(v) = v {
                    push(out, &level, Underlay { rotation_deg: v, ..u.clone() }, Some(&r));
                }
                let l = ui.label("Opacity");
                let mut o = u.opacity;
                let r = ui.add(egui::Slider::new(&mut o, 0.0..=1.0).fixed_decimals(2)).labelled_by(l.id);
                ui.end_row();
                drag_marks(out, &r);
                if r.changed() && o.to_bits() != u.opacity.to_bits() {
                    push(out, &level, Underlay { opacity: o, ..u.clone() }, Some(&r));
                }
            });
            ui.horizontal(|ui| {
                let mut hidden = u.hidden;
                if ui.checkbox(&mut hidden, "Hide").on_hover_text("Keep the plan but do not draw it").changed() {
                    push(out, &level, Underlay { hidden, ..u.clone() }, None);
                }
                let mut locked = u.locked;
                if ui
                    .checkbox(&mut locked, "Lock placement")
                    .on_hover_text("Scale, position and rotation cannot change until unlocked")
                    .changed()
                {
                    push(out, &level, Underlay { locked, ..u.clone() }, None);
                }
            });
        });
    if choose {
        app.choose_file(FilePurpose::Underlay(level_id));
    }
    if !open {
        app.underlay.open = false;
        app.underlay.calibration = None;
        app.underlay.set_moving(level_id, false);
    }
}

/// Move by dragging on the plan: the toggle and what to do.
fn moving_ui(app: &mut FlowriseApp, ui: &mut Ui, level: &Level, movable: bool) {
    let on = app.underlay.moving(level.id);
    let label = if on { "Done moving" } else { "Move by dragging on the plan" };
    let r = ui.add_enabled(movable, egui::Button::new(label).selected(on));
    let r = if movable {
        r.on_hover_text("While on, dragging anywhere on the plan moves the drawing instead of the network")
    } else {
        r.on_disabled_hover_text("The placement is locked — unlock it first")
    };
    if r.clicked() {
        app.underlay.set_moving(level.id, !on);
    }
    if on {
        ui.label(
            RichText::new("Drag on the plan to move the drawing (right-drag still pans); each drag is one undo step.")
                .color(theme::ACCENT),
        );
    }
}

/// Scale by two points: the button, the instructions, the distance field.
fn calibration_ui(app: &mut FlowriseApp, ui: &mut Ui, level: &Level, u: &Underlay, movable: bool, out: &mut Intents) {
    if app.underlay.calibration.as_ref().is_none_or(|c| c.level != level.id) {
        let r = ui.add_enabled(movable, egui::Button::new("Set scale by two points"));
        let r = if movable {
            r.on_hover_text("Click two points of the plan whose real distance you know (a wall, a dimension line), then type that distance")
        } else {
            r.on_disabled_hover_text("The placement is locked — unlock it first")
        };
        if r.clicked() {
            app.underlay.start_calibration(level.id);
        }
        return;
    }
    let Some(cal) = app.underlay.calibration.as_mut() else { return };
    let step = match (cal.a, cal.b) {
        (None, _) => "Click the first point on the plan (line ends of a drawing attract the click).",
        (Some(_), None) => "Click the second point.",
        (Some(_), Some(_)) => "Type the real distance between the two points.",
    };
    ui.label(RichText::new(step).color(theme::ACCENT));
    let mut apply = false;
    let mut cancel = false;
    ui.horizontal(|ui| {
        let l = ui.label("Real distance (m)");
        let r = ui.add(egui::TextEdit::singleline(&mut cal.distance).desired_width(80.0)).labelled_by(l.id);
        if r.lost_focus() && ui.input(|i| i.key_pressed(egui::Key::Enter)) {
            apply = true;
        }
        if ui.add_enabled(cal.b.is_some(), egui::Button::new("Apply scale")).clicked() {
            apply = true;
        }
        if ui.button("Cancel").clicked() {
            cancel = true;
        }
    });
    if let Some(e) = &cal.error {
        ui.label(RichText::new(e).color(theme::ERROR));
    }
    if let (Some(a), Some(b)) = (cal.a, cal.b) {
        ui.label(RichText::new(format!("now {:.3} m apart on the plan", a.distance_m(b))).weak());
    }
    if apply {
        let (Some(a), Some(b)) = (cal.a, cal.b) else {
            cal.error = Some("click two points on the plan first".to_owned());
            return;
        };
        let typed = cal.distance.trim().replace(',', ".");
        match typed
            .parse::<f64>()
            .map_err(|_| format!("“{}” is not a number — type the distance in metres, e.g. 4.25", cal.distance))
            .and_then(|d| u.scaled_to(a, b, d))
        {
            Ok(n) => {
                out.edit(Edit::SetLevel(Level { underlay: Some(n), ..level.clone() }));
                out.status = Some(super::super::intents::Status::note(format!(
                    "underlay scale set: {} m between the two points",
                    typed
                )));
                app.underlay.calibration = None;
            }
            Err(e) => cal.error = Some(e),
        }
    } else if cancel {
        app.underlay.calibration = None;
    }
}
