//! Cells of the CSV files flowrise writes, made safe to open in a
//! spreadsheet.
//!
//! A spreadsheet treats a cell that starts with `=`, `+`, `-` or `@` as a
//! formula, and some also act on a leading tab or carriage return ("CSV
//! injection"; OWASP's page on it recommends the same remedy). A room or
//! header name is user text, so every text cell that starts with one of
//! these characters gets a leading single quote, which spreadsheets show
//! as text and hide. Plain numbers (`-0.05`, `+3`) are left alone: they are
//! values, not formulas, and scripts read them as numbers.
//!
//! [`restore`] undoes [`neutralise`] for flowrise's own readers, so a
//! written file reads back to the same names.

use std::borrow::Cow;

/// First characters that make a spreadsheet read a cell as a formula.
pub const FORMULA_TRIGGERS: [char; 6] = ['=', '+', '-', '@', '\t', '\r'];

/// The cell as written: prefixed with `'` when it starts with a formula
/// trigger (after any quotes of its own) and is not a plain number.
#[must_use]
pub fn neutralise(cell: &str) -> Cow<'_, str> {
    if needs_quote(cell) { Cow::Owned(format!("'{cell}")) } else { Cow::Borrowed(cell) }
}

/// Undo [`neutralise`] (for reading flowrise's own CSV files back).
#[must_use]
pub fn restore(cell: &str) -> &str {
    match cell.strip_prefix('\'') {
        Some(rest) if needs_quote(rest) => rest,
        _ => cell,
    }
}

/// True when [`neutralise`] prefixes `cell`. Leading quotes of the text's
/// own are looked through, so that [`restore`] is an exact inverse.
fn needs_quote(cell: &str) -> bool {
    let inner = cell.trim_start_matches('\'');
    inner.starts_with(FORMULA_TRIGGERS) && (inner.len() != cell.len() || !is_plain_number(cell))
}

/// True for a decimal number a spreadsheet reads as a value (`-12`,
/// `+0.5`, `-1.5e-3`), not an expression.
fn is_plain_number(cell: &str) -> bool {
    let body = cell.strip_prefix(['-', '+']).unwrap_or(cell);
    body.starts_with(|c: char| c.is_ascii_digit() || c == '.')
        && body.chars().all(|c| c.is_ascii_digit() || matches!(c, '.' | 'e' | 'E' | '-' | '+'))
        && cell.parse::<f64>().is_ok_and(f64::is_finite)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_formula_trigger_is_neutralised_and_restored() {
        for lead in FORMULA_TRIGGERS {
            let name = format!("{lead}HYPERLINK(\"http://x\",\"Kitchen\")");
            let safe = neutralise(&name);
            assert!(safe.starts_with('\''), "{lead:?}: {safe}");
            assert_eq!(restore(&safe), name);
        }
    }

    #[test]
    fn plain_text_and_numbers_are_unchanged() {
        for cell in ["Kitchen", "DN15", "-0.05", "+3", "-1.5e-3", "12", "", "'quoted"] {
            assert_eq!(neutralise(cell), cell);
            assert_eq!(restore(cell), cell);
        }
        // Looks numeric at first, but is an expression.
        assert_eq!(neutralise("-2+3"), "'-2+3");
        assert_eq!(neutralise("-inf"), "'-inf");
    }

    #[test]
    fn a_name_starting_with_a_quote_and_a_trigger_round_trips() {
        let name = "'=A1";
        let safe = neutralise(name);
        assert_eq!(safe, "''=A1");
        assert_eq!(restore(&safe), name);
    }
}
