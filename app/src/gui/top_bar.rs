//! The top strip: project name and unsaved mark, file menu, undo/redo, the
//! mode switch, colour-by, labels and the solve status.

use std::path::PathBuf;

use egui::{RichText, Ui};
use flowrise_core::design::{Severity, Solution};
use flowrise_core::project::{Mode, Project};

use super::actions::Action;
use super::dialogs::DialogChoice;
use super::findings_view::count;
use super::intents::Intents;
use super::many::ManyAction;
use super::prefs::Prefs;
use super::theme::ColourBy;
use super::{settings_panel, theme};

/// What the strip shows.
#[derive(Debug)]
pub struct TopBar<'a> {
    /// Project name.
    pub name: &'a str,
    /// Unsaved changes.
    pub dirty: bool,
    /// Mode.
    pub mode: Mode,
    /// Undo possible.
    pub can_undo: bool,
    /// Redo possible.
    pub can_redo: bool,
    /// Results on screen belong to an older revision.
    pub stale: bool,
    /// Last solve time, ms.
    pub solve_ms: f64,
    /// Recent files.
    pub recent: &'a [PathBuf],
    /// The project has vertical runs (the riser view has something to show).
    pub has_risers: bool,
}

fn action_button(ui: &mut Ui, a: Action, enabled: bool, out: &mut Intents) {
    let tip = match a.shortcut() {
        Some(s) => format!("{}  ({})", a.tooltip(), ui.ctx().format_shortcut(&s)),
        None => a.tooltip().to_owned(),
    };
    if ui.add_enabled(enabled, egui::Button::new(a.label())).on_hover_text(tip).clicked() {
        out.actions.push(a);
    }
}

/// Widest the project name may be: it is elided beyond, never pushing
/// the menu or the solve status away.
fn name_width(total: f32) -> f32 {
    (total * 0.22).clamp(90.0, 320.0)
}

/// Show the strip: the solve status on the right, always whole; the rest
/// from the left, wrapping onto a second row when the window is narrow.
///
/// Returns the height the strip's contents took (the panel is sized to it
/// on the next frame).
pub fn show(
    ui: &mut Ui,
    m: &TopBar<'_>,
    project: &Project,
    sol: &Solution,
    prefs: &mut Prefs,
    out: &mut Intents,
) -> f32 {
    let full = ui.available_rect_before_wrap();
    let mut right_ui = ui.new_child(
        egui::UiBuilder::new()
            .max_rect(full)
            .layout(egui::Layout::right_to_left(egui::Align::Min))
            .id_salt("top_right"),
    );
    right_ui.set_row_height(ui.spacing().interact_size.y);
    solve_status(&mut right_ui, m, sol, out);
    let right = right_ui.min_rect();
    let left_rect =
        egui::Rect::from_min_max(full.min, egui::pos2((right.left() - 16.0).max(full.left() + 100.0), full.max.y));
    let mut left_ui = ui.new_child(
        egui::UiBuilder::new()
            .max_rect(left_rect)
            .layout(egui::Layout::left_to_right(egui::Align::Min).with_main_wrap(true))
            .id_salt("top_left"),
    );
    // Rows as tall as a button, not the whole panel (what
    // `Ui::horizontal_wrapped` does too).
    left_ui.set_row_height(ui.spacing().interact_size.y);
    left(&mut left_ui, m, project, sol, prefs, out, full.width());
    let used = left_ui.min_rect().union(right);
    ui.advance_cursor_after_rect(used);
    used.height()
}

/// A short vertical separator (a full-height one would stretch the rows
/// of the wrapping strip).
fn bar(ui: &mut Ui) {
    ui.add_sized([8.0, 18.0], egui::Separator::default().vertical());
}

#[allow(clippy::too_many_arguments)] // reason: the strip's parts, passed through once
fn left(
    ui: &mut Ui,
    m: &TopBar<'_>,
    project: &Project,
    sol: &Solution,
    prefs: &mut Prefs,
    out: &mut Intents,
    total_width: f32,
) {
    ui.label(RichText::new("flowrise").strong().color(theme::ACCENT).size(16.0));
    bar(ui);
    let name = RichText::new(m.name).strong();
    let h = ui.spacing().interact_size.y;
    ui.allocate_ui(egui::vec2(name_width(total_width), h), |ui| {
        ui.add(egui::Label::new(name).truncate()).on_hover_text(m.name);
    });
    if m.dirty {
        ui.label(RichText::new("•").strong()).on_hover_text("unsaved changes");
    }
    bar(ui);
    file_menu(ui, m, prefs, out);
    edit_menu(ui, out);
    action_button(ui, Action::Undo, m.can_undo, out);
    action_button(ui, Action::Redo, m.can_redo, out);
    bar(ui);
    let mut mode = m.mode;
    ui.selectable_value(&mut mode, Mode::DesignFollowsLayout, "Design follows layout")
        .on_hover_text("Sizes and presettings are re-chosen on every edit (switching back releases the frozen sizes and presettings; Undo restores them)");
    ui.selectable_value(&mut mode, Mode::Installed, "Installed")
        .on_hover_text("Freeze sizes and presettings as designed; edits show how the real flows move");
    if mode != m.mode {
        out.edit(settings_panel::mode_edit(project, sol, mode));
    }
    bar(ui);
    // The label and its box stay together when the strip wraps: one
    // allocation of their whole width, which the wrapping layout places.
    let mut colour_by = prefs.colour_by;
    let combo_w = 130.0;
    let label_w = ui.ctx().fonts_mut(|f| {
        f.layout_no_wrap("Colour by".to_owned(), egui::TextStyle::Body.resolve(ui.style()), egui::Color32::BLACK)
            .size()
            .x
    });
    let group_w = label_w + ui.spacing().item_spacing.x * 2.0 + combo_w + ui.spacing().icon_width;
    ui.allocate_ui_with_layout(
        egui::vec2(group_w, ui.spacing().interact_size.y),
        egui::Layout::left_to_right(egui::Align::Center),
        |ui| {
            let label_id = ui.label("Colour by").id;
            egui::ComboBox::from_id_salt("colour_by")
                .selected_text(colour_by.name())
                .width(combo_w)
                .show_ui(ui, |ui| {
                    for c in ColourBy::ALL {
                        ui.selectable_value(&mut colour_by, c, c.name());
                    }
                })
                .response
                .labelled_by(label_id);
        },
    );
    prefs.colour_by = colour_by;
    ui.toggle_value(&mut prefs.show_labels, "Labels").on_hover_text(Action::ToggleLabels.tooltip());
    let riser_tip = if m.has_risers {
        Action::ToggleElevation.tooltip().to_owned()
    } else {
        format!("{} (this project has no risers yet)", Action::ToggleElevation.tooltip())
    };
    ui.toggle_value(&mut prefs.show_elevation, "Riser view").on_hover_text(riser_tip);
    if ui.button("Fit").on_hover_text(Action::FitView.tooltip()).clicked() {
        out.actions.push(Action::FitView);
    }
}

fn file_menu(ui: &mut Ui, m: &TopBar<'_>, prefs: &Prefs, out: &mut Intents) {
    ui.menu_button("File", |ui| {
        for a in [Action::New, Action::NewFromOutline, Action::Open, Action::Save, Action::SaveAs] {
            if ui.button(a.menu_text(ui.ctx())).on_hover_text(a.tooltip()).clicked() {
                out.actions.push(a);
                ui.close();
            }
        }
        if !m.recent.is_empty() {
            ui.menu_button("Open recent", |ui| {
                for p in m.recent {
                    let name =
                        p.file_name().map_or_else(|| p.display().to_string(), |n| n.to_string_lossy().into_owned());
                    if ui.button(name).on_hover_text(p.display().to_string()).clicked() {
                        out.open_path = Some(p.clone());
                        ui.close();
                    }
                }
            });
        }
        ui.separator();
        for a in [
            Action::Many(ManyAction::ImportSchedule),
            Action::Many(ManyAction::ExportSchedule),
            Action::ExportParts,
            Action::ExportReport,
        ] {
            if ui.button(a.label()).on_hover_text(a.tooltip()).clicked() {
                out.actions.push(a);
                ui.close();
            }
        }
        ui.separator();
        if ui.button(Action::RecoverWork.label()).on_hover_text(Action::RecoverWork.tooltip()).clicked() {
            out.actions.push(Action::RecoverWork);
            ui.close();
        }
        let mut own = prefs.file_dialog == DialogChoice::InWindow;
        if ui
            .checkbox(&mut own, Action::InWindowDialog.label())
            .on_hover_text(Action::InWindowDialog.tooltip())
            .clicked()
        {
            out.actions.push(Action::InWindowDialog);
        }
        ui.separator();
        if ui.button(Action::About.label()).clicked() {
            out.actions.push(Action::About);
            ui.close();
        }
        if ui.button(Action::Quit.menu_text(ui.ctx())).on_hover_text(Action::Quit.tooltip()).clicked() {
            out.actions.push(Action::Quit);
            ui.close();
        }
    });
}

/// The Edit menu: the actions on many items at once.
fn edit_menu(ui: &mut Ui, out: &mut Intents) {
    ui.menu_button("Edit", |ui| {
        for m in [ManyAction::SelectAll, ManyAction::Copy, ManyAction::Paste, ManyAction::Delete] {
            let a = Action::Many(m);
            if ui.button(a.menu_text(ui.ctx())).on_hover_text(a.tooltip()).clicked() {
                out.actions.push(a);
                ui.close();
            }
        }
        ui.separator();
        let a = Action::Many(ManyAction::RepeatLevel);
        if ui.button(a.label()).on_hover_text(a.tooltip()).clicked() {
            out.actions.push(a);
            ui.close();
        }
    });
}

/// The solve status and the findings count (a click opens the findings).
fn solve_status(ui: &mut Ui, m: &TopBar<'_>, sol: &Solution, out: &mut Intents) {
    let errors = sol.findings.iter().filter(|f| f.severity == Severity::Error).count();
    let warnings = sol.findings.iter().filter(|f| f.severity == Severity::Warning).count();
    // Right to left: the findings count first, at the edge.
    let (t, c) = if errors > 0 {
        (format!("{}, {}", count(errors, "error", "errors"), count(warnings, "warning", "warnings")), theme::ERROR)
    } else if warnings > 0 {
        (count(warnings, "warning", "warnings"), theme::WARNING)
    } else {
        // Notes are information, not a fault: counted, in the calm colour.
        let notes = sol.findings.iter().filter(|f| f.severity == Severity::Note).count();
        (if notes > 0 { count(notes, "note", "notes") } else { "no findings".to_owned() }, theme::ACCENT)
    };
    if ui
        .add(egui::Button::new(RichText::new(t).color(c).strong()).frame(false))
        .on_hover_text("Show the findings in the drawer")
        .clicked()
    {
        out.drawer_tab = Some(super::drawer::Tab::Findings);
    }
    if sol.preview && !m.stale {
        ui.label(RichText::new(format!("drag preview in {:.1} ms", m.solve_ms)).color(theme::ACCENT)).on_hover_text(
            "While you drag, the flows are solved on the last design with the moved pipes at their new lengths; \
             pipe sizes, presettings and the pump duty are chosen again when you release",
        );
        return;
    }
    let text = if m.stale {
        "solving…".to_owned()
    } else if sol.iterations > 0 || sol.converged {
        format!("solved in {:.1} ms ({})", m.solve_ms, count(sol.iterations, "iteration", "iterations"))
    } else {
        format!("designed in {:.1} ms", m.solve_ms)
    };
    ui.label(text);
}
