//! The findings list: every finding of the design, errors first, each a
//! button that selects its item and centres the canvas on it. Shown in the
//! inspector and in the drawer's Findings tab.
//!
//! Each finding reads as a sentence: its severity as a coloured tag, then
//! the message, which already names its item ("Run R3: …"); the item is
//! not named twice.

use egui::{RichText, Ui};
use flowrise_core::design::{ItemRef, Severity, Solution};

use super::intents::{Intents, Selection};
use super::theme;

/// "1 error", "2 warnings".
#[must_use]
pub fn count(n: usize, one: &str, many: &str) -> String {
    format!("{n} {}", if n == 1 { one } else { many })
}

/// The findings' count as a phrase: "1 error, 3 warnings and 1 note".
#[must_use]
pub fn summary(sol: &Solution) -> String {
    let n = |s: Severity| sol.findings.iter().filter(|f| f.severity == s).count();
    let parts: Vec<String> = [
        (n(Severity::Error), "error", "errors"),
        (n(Severity::Warning), "warning", "warnings"),
        (n(Severity::Note), "note", "notes"),
    ]
    .into_iter()
    .filter(|(k, _, _)| *k > 0)
    .map(|(k, one, many)| count(k, one, many))
    .collect();
    match parts.as_slice() {
        [] => "no findings".to_owned(),
        [a] => a.clone(),
        [rest @ .., last] => format!("{} and {last}", rest.join(", ")),
    }
}

/// The message with its first letter capitalised, as a sentence starts.
fn sentence(message: &str) -> String {
    let m = message.replace('→', "->").replace('≥', ">=").replace('≤', "<=");
    let mut chars = m.chars();
    match chars.next() {
        Some(c) => c.to_uppercase().chain(chars).collect(),
        None => String::new(),
    }
}

/// The findings, errors first; a click selects the item and centres on it.
pub fn findings_list(ui: &mut Ui, sol: &Solution, out: &mut Intents) {
    let n = sol.findings.len();
    if n == 0 {
        ui.strong("Findings");
        ui.label(RichText::new("No findings — the design is complete.").weak());
        return;
    }
    ui.strong(format!("Findings: {}", summary(sol)));
    for f in &sol.findings {
        let (mark, colour) = match f.severity {
            Severity::Error => ("Error", theme::ERROR),
            Severity::Warning => ("Warning", theme::WARNING_TEXT),
            Severity::Note => ("Note", theme::INK),
        };
        ui.horizontal_top(|ui| {
            ui.add_sized([58.0, 18.0], egui::Label::new(RichText::new(mark).color(colour).strong()));
            if ui
                .add(egui::Button::selectable(false, sentence(&f.message)).wrap())
                .on_hover_text("Select this item and centre the canvas on it")
                .clicked()
            {
                out.centre_on = Some(f.item);
                if f.item == ItemRef::Settings {
                    out.select = Some(Selection::None);
                }
            }
        });
    }
}
