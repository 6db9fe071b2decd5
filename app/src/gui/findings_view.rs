//! The findings list: every finding of the design, errors first, each a
//! button that selects its item and centres the canvas on it. Shown in the
//! inspector and in the drawer's Findings tab.

use egui::{RichText, Ui};
use flowrise_core::design::{ItemRef, Severity, Solution};

use super::intents::{Intents, Selection};
use super::theme;

/// The findings, errors first; a click selects the item and centres on it.
pub fn findings_list(ui: &mut Ui, sol: &Solution, out: &mut Intents) {
    let n = sol.findings.len();
    ui.strong(format!("Findings ({n})"));
    if n == 0 {
        ui.label(RichText::new("No findings — the design is complete.").weak());
    }
    for f in &sol.findings {
        let (mark, colour) = match f.severity {
            Severity::Error => ("Error", theme::ERROR),
            Severity::Warning => ("Warning", theme::WARNING),
            Severity::Note => ("Note", theme::INK),
        };
        let text = RichText::new(format!("{mark} at {}: {}", f.item, f.message)).color(colour);
        if ui
            .add(egui::Button::selectable(false, text).wrap())
            .on_hover_text("Select this item and centre the canvas on it")
            .clicked()
        {
            out.centre_on = Some(f.item);
            if f.item == ItemRef::Settings {
                out.select = Some(Selection::None);
            }
        }
    }
}
