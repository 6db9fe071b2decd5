//! The top strip: project name and unsaved mark, file menu, undo/redo, the
//! mode switch, colour-by, labels and the solve status.

use std::path::PathBuf;

use egui::{RichText, Ui};
use flowrise_core::design::{Severity, Solution};
use flowrise_core::project::{Mode, Project};

use super::actions::Action;
use super::intents::Intents;
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

/// Show the strip.
pub fn show(ui: &mut Ui, m: &TopBar<'_>, project: &Project, sol: &Solution, prefs: &mut Prefs, out: &mut Intents) {
    ui.horizontal(|ui| {
        ui.label(RichText::new("flowrise").strong().color(theme::ACCENT).size(16.0));
        ui.separator();
        let title = if m.dirty { format!("{} •", m.name) } else { m.name.to_owned() };
        ui.label(RichText::new(title).strong()).on_hover_text(if m.dirty { "unsaved changes" } else { "saved" });
        ui.separator();
        ui.menu_button("File", |ui| {
            for a in [Action::New, Action::NewFromOutline, Action::Open, Action::Save, Action::SaveAs] {
                if ui.button(a.menu_text(ui.ctx())).on_hover_text(a.tooltip()).clicked() {
                    out.actions.push(a);
                    ui.close();
                }
            }
            ui.separator();
            for a in [Action::ExportParts, Action::ExportReport] {
                if ui.button(a.label()).on_hover_text(a.tooltip()).clicked() {
                    out.actions.push(a);
                    ui.close();
                }
            }
            if !m.recent.is_empty() {
                ui.separator();
                ui.label(RichText::new("Recent").weak());
                for p in m.recent {
                    let name =
                        p.file_name().map_or_else(|| p.display().to_string(), |n| n.to_string_lossy().into_owned());
                    if ui.button(name).on_hover_text(p.display().to_string()).clicked() {
                        out.open_path = Some(p.clone());
                        ui.close();
                    }
                }
            }
            ui.separator();
            if ui.button(Action::About.label()).clicked() {
                out.actions.push(Action::About);
                ui.close();
            }
        });
        action_button(ui, Action::Undo, m.can_undo, out);
        action_button(ui, Action::Redo, m.can_redo, out);
        ui.separator();
        let mut mode = m.mode;
        ui.selectable_value(&mut mode, Mode::DesignFollowsLayout, "Design follows layout")
            .on_hover_text("Sizes and presettings are re-chosen on every edit (switching back releases the frozen sizes and presettings; Undo restores them)");
        ui.selectable_value(&mut mode, Mode::Installed, "Installed")
            .on_hover_text("Freeze sizes and presettings as designed; edits show how the real flows move");
        if mode != m.mode {
            out.edit(settings_panel::mode_edit(project, sol, mode));
        }
        ui.separator();
        let mut colour_by = prefs.colour_by;
        let label_id = ui.label("Colour by").id;
        egui::ComboBox::from_id_salt("colour_by")
            .selected_text(colour_by.name())
            .show_ui(ui, |ui| {
                for c in ColourBy::ALL {
                    ui.selectable_value(&mut colour_by, c, c.name());
                }
            })
            .response
            .labelled_by(label_id);
        prefs.colour_by = colour_by;
        ui.toggle_value(&mut prefs.show_labels, "Labels").on_hover_text(Action::ToggleLabels.tooltip());
        ui.toggle_value(&mut prefs.show_elevation, "Riser view").on_hover_text(Action::ToggleElevation.tooltip());
        if ui.button("Fit").on_hover_text(Action::FitView.tooltip()).clicked() {
            out.actions.push(Action::FitView);
        }
        ui.separator();
        solve_status(ui, m, sol);
    });
}

fn solve_status(ui: &mut Ui, m: &TopBar<'_>, sol: &Solution) {
    let errors = sol.findings.iter().filter(|f| f.severity == Severity::Error).count();
    let warnings = sol.findings.iter().filter(|f| f.severity == Severity::Warning).count();
    let text = if m.stale {
        "solving…".to_owned()
    } else if sol.iterations > 0 || sol.converged {
        format!("solved: {} iterations, {:.1} ms", sol.iterations, m.solve_ms)
    } else {
        format!("design: {:.1} ms", m.solve_ms)
    };
    ui.label(text);
    let (t, c) = if errors > 0 {
        (format!("{errors} errors, {warnings} warnings"), theme::ERROR)
    } else if warnings > 0 {
        (format!("{warnings} warnings"), theme::WARNING)
    } else {
        ("no findings".to_owned(), theme::ACCENT)
    };
    ui.label(RichText::new(t).color(c));
}
