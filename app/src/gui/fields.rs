//! Input fields with units, ranges and an error beside the field. A value
//! is committed when the field loses focus (Enter, Tab, click elsewhere);
//! text that does not parse or is out of range shows a red message and is
//! not applied. A refused edit's message lands beside its field too.

use std::collections::BTreeMap;

use egui::{RichText, TextEdit, Ui};

use super::theme;

/// Text buffers and messages of the input fields (transient).
#[derive(Debug, Default)]
pub struct FieldState {
    buffers: BTreeMap<String, String>,
    errors: BTreeMap<String, String>,
    focused: Option<String>,
}

impl FieldState {
    /// Show `message` beside field `key`.
    pub fn set_error(&mut self, key: &str, message: String) {
        self.errors.insert(key.to_owned(), message);
    }

    /// Clear the message of field `key`.
    pub fn clear_error(&mut self, key: &str) {
        self.errors.remove(key);
    }

    /// The message beside field `key`.
    #[must_use]
    pub fn error(&self, key: &str) -> Option<&str> {
        self.errors.get(key).map(String::as_str)
    }

    /// Text field; returns the committed text when it changed.
    fn text_field(&mut self, ui: &mut Ui, key: &str, label_id: egui::Id, current: &str, width: f32) -> Option<String> {
        let editing = self.focused.as_deref() == Some(key);
        let has_error = self.errors.contains_key(key);
        let buf = self.buffers.entry(key.to_owned()).or_default();
        if !editing && !has_error {
            current.clone_into(buf);
        }
        let resp = ui
            .add(TextEdit::singleline(buf).id_salt(key).desired_width(width).min_size(egui::vec2(width, 0.0)))
            .labelled_by(label_id);
        if resp.has_focus() {
            self.focused = Some(key.to_owned());
        } else if editing {
            self.focused = None;
        }
        if resp.lost_focus() && buf.trim() != current.trim() {
            return Some(buf.trim().to_owned());
        }
        None
    }

    fn error_cell(&self, ui: &mut Ui, key: &str) {
        if let Some(e) = self.errors.get(key) {
            ui.label(RichText::new(e).color(theme::ERROR).small());
        }
    }

    /// A numeric field in a grid row: label | value unit | message.
    /// Returns a committed, parsed, in-range value different from `value`.
    #[allow(clippy::too_many_arguments)] // reason: one call per field reads best with all of them at hand
    pub fn number(
        &mut self,
        ui: &mut Ui,
        key: &str,
        label: &str,
        unit: &str,
        value: f64,
        range: (f64, f64),
        decimals: usize,
    ) -> Option<f64> {
        let current = format!("{value:.decimals$}");
        let mut out = None;
        let label_id = ui.label(label).id;
        ui.horizontal(|ui| {
            if let Some(text) = self.text_field(ui, key, label_id, &current, 70.0) {
                match parse_number(&text, unit, range) {
                    Ok(v) => {
                        self.errors.remove(key);
                        if (v - value).abs() > 1e-12 * value.abs().max(1.0) {
                            out = Some(v);
                        }
                    }
                    Err(e) => self.set_error(key, e),
                }
            }
            ui.label(unit);
        });
        self.error_cell(ui, key);
        ui.end_row();
        out
    }

    /// A numeric field that may be empty ("use the computed value").
    /// Returns `Some(None)` when cleared, `Some(Some(v))` for a new value.
    #[allow(clippy::too_many_arguments)] // reason: as `number`
    pub fn optional_number(
        &mut self,
        ui: &mut Ui,
        key: &str,
        label: &str,
        unit: &str,
        value: Option<f64>,
        range: (f64, f64),
        decimals: usize,
    ) -> Option<Option<f64>> {
        let current = value.map_or_else(String::new, |v| format!("{v:.decimals$}"));
        let mut out = None;
        let label_id = ui.label(label).id;
        ui.horizontal(|ui| {
            if let Some(text) = self.text_field(ui, key, label_id, &current, 70.0) {
                if text.is_empty() {
                    self.errors.remove(key);
                    out = Some(None);
                } else {
                    match parse_number(&text, unit, range) {
                        Ok(v) => {
                            self.errors.remove(key);
                            out = Some(Some(v));
                        }
                        Err(e) => self.set_error(key, e),
                    }
                }
            }
            ui.label(unit);
        });
        self.error_cell(ui, key);
        ui.end_row();
        out
    }

    /// A text field in a grid row; returns the new non-empty text.
    pub fn text(&mut self, ui: &mut Ui, key: &str, label: &str, value: &str) -> Option<String> {
        let mut out = None;
        let label_id = ui.label(label).id;
        ui.horizontal(|ui| {
            if let Some(text) = self.text_field(ui, key, label_id, value, 150.0) {
                if text.is_empty() {
                    self.set_error(key, "empty — give a name".to_owned());
                } else {
                    self.errors.remove(key);
                    out = Some(text);
                }
            }
        });
        self.error_cell(ui, key);
        ui.end_row();
        out
    }
}

/// Parse a number typed by a user: decimal comma accepted, range checked.
///
/// # Errors
/// A message naming the text and the range.
pub fn parse_number(text: &str, unit: &str, (lo, hi): (f64, f64)) -> Result<f64, String> {
    let t = text.trim().replace(',', ".");
    let v: f64 = t.parse().map_err(|_| format!("“{}” is not a number — type a value in {unit}", text.trim()))?;
    if !v.is_finite() || v < lo || v > hi {
        return Err(format!("{v} {unit} is out of range — give {lo} to {hi} {unit}"));
    }
    Ok(v)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbers_parse_with_comma_and_reject_text_and_range() {
        assert_eq!(parse_number(" 2,5 ", "m", (0.1, 10.0)), Ok(2.5));
        assert!(parse_number("abc", "m", (0.1, 10.0)).unwrap_err().contains("not a number"));
        assert!(parse_number("-3", "m", (0.1, 10.0)).unwrap_err().contains("out of range"));
        assert!(parse_number("NaN", "m", (0.1, 10.0)).is_err());
    }
}
