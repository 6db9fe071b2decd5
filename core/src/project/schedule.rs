//! Room-load schedules: the table of rooms and heat loads a heat-load
//! calculation produces, read from a CSV file or from cells pasted out of a
//! spreadsheet (tab-separated), and written back as CSV.
//!
//! The steps, each a plain function so the CLI, the window and the tests
//! share them:
//! 1. [`read_table`]: text → header + rows (comma, semicolon or tab
//!    separated, found from the first line);
//! 2. [`ColumnMap`]: which column holds what, by header name (the window
//!    remembers it between sessions; [`ColumnMap::guess`] proposes one);
//! 3. [`plan`](plan::plan): rows → the emitters to update (matched by room
//!    name and level) and to create, plus every row it cannot place with
//!    its row, column and reason; [`plan::SchedulePlan::edit`] is one
//!    all-or-nothing [`Edit::Batch`](super::Edit::Batch), so one undo step;
//! 4. [`plan::schedule_csv`]: the project's emitters as the same table.

pub mod plan;

use std::fmt;

use serde::{Deserialize, Serialize};
use thiserror::Error;

use crate::csv_cell;

pub use plan::{PlannedAction, PlannedRow, SchedulePlan, plan, schedule_csv};

/// Most rows a schedule may have (a hostile or mistaken file is refused
/// before it is planned; the largest generated building has 50,000 rooms).
pub const MAX_ROWS: usize = 100_000;

/// Header of the CSV [`schedule_csv`] writes (and [`ColumnMap::guess`]
/// recognises).
pub const CSV_HEADER: [&str; 5] = ["Room", "Level", "Heat load W", "Room temperature °C", "Emitter type"];

/// A table read from a schedule: its header and its data rows.
#[derive(Debug, Clone, PartialEq, Eq, Default)]
pub struct Table {
    /// Column names, as in the file (trimmed).
    pub headers: Vec<String>,
    /// Data rows; row `i` is line `i + 2` of the file (the header is 1).
    pub rows: Vec<Vec<String>>,
}

impl Table {
    /// The spreadsheet row number of data row `i` (header = row 1).
    #[must_use]
    pub const fn line(i: usize) -> usize {
        i + 2
    }
}

/// Why a schedule cannot be read or mapped at all. The project is unchanged.
#[derive(Debug, Clone, PartialEq, Eq, Error)]
pub enum ScheduleError {
    /// No header line.
    #[error("the table is empty — paste or choose a table whose first row names the columns")]
    Empty,
    /// The CSV layer refused the text.
    #[error("row {line}: {message}")]
    Malformed {
        /// Row of the file (1 = header).
        line: usize,
        /// What is wrong.
        message: String,
    },
    /// Too many rows.
    #[error("the table has more than {MAX_ROWS} rows — split it by level")]
    TooLarge,
    /// A column the import needs is not mapped or not in the table.
    #[error("{0}")]
    Columns(String),
}

/// What a column holds.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Role {
    /// Room name (matched with the emitter's name).
    Room,
    /// Level name.
    Level,
    /// Design heat load, W.
    LoadW,
    /// Room design temperature, °C (optional).
    RoomC,
    /// Emitter type (optional): radiator, floor loop, terminal.
    EmitterType,
}

impl Role {
    /// Every role, in the order the window lists them.
    pub const ALL: [Self; 5] = [Self::Room, Self::Level, Self::LoadW, Self::RoomC, Self::EmitterType];

    /// Words for the mapping form and messages.
    #[must_use]
    pub const fn label(self) -> &'static str {
        match self {
            Self::Room => "Room name",
            Self::Level => "Level",
            Self::LoadW => "Heat load (W)",
            Self::RoomC => "Room temperature (°C)",
            Self::EmitterType => "Emitter type",
        }
    }

    /// True when the import cannot go without it.
    #[must_use]
    pub const fn required(self) -> bool {
        matches!(self, Self::Room | Self::LoadW)
    }

    /// Does a header name look like this role's column?
    fn matches(self, header: &str) -> bool {
        let h = header.to_lowercase();
        let any = |words: &[&str]| words.iter().any(|w| h.contains(w));
        match self {
            Self::Room => any(&["room", "name", "space", "zone"]) && !any(&["temp", "°c", "type", "load"]),
            Self::Level => any(&["level", "floor", "storey", "story"]) && !any(&["type", "loop", "load"]),
            Self::LoadW => any(&["load", "heat", "loss", "demand", "(w)", " w"]) && !any(&["temp", "type"]),
            Self::RoomC => any(&["temp", "°c", "(c)"]),
            Self::EmitterType => any(&["type", "emitter"]),
        }
    }
}

impl fmt::Display for Role {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.label())
    }
}

/// Which column holds what, by header name. Kept between sessions by the
/// window, so a schedule from the same program maps itself next time.
#[derive(Debug, Clone, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(default)]
pub struct ColumnMap {
    /// Column of the room name.
    pub room: Option<String>,
    /// Column of the level name (may be left out when the project has one level).
    pub level: Option<String>,
    /// Column of the heat load in W.
    pub load_w: Option<String>,
    /// Column of the room temperature in °C (optional).
    pub room_c: Option<String>,
    /// Column of the emitter type (optional).
    pub emitter_type: Option<String>,
}

impl ColumnMap {
    /// The column chosen for `role`.
    #[must_use]
    pub fn get(&self, role: Role) -> Option<&str> {
        match role {
            Role::Room => self.room.as_deref(),
            Role::Level => self.level.as_deref(),
            Role::LoadW => self.load_w.as_deref(),
            Role::RoomC => self.room_c.as_deref(),
            Role::EmitterType => self.emitter_type.as_deref(),
        }
    }

    /// Choose the column for `role`.
    pub fn set(&mut self, role: Role, column: Option<String>) {
        let slot = match role {
            Role::Room => &mut self.room,
            Role::Level => &mut self.level,
            Role::LoadW => &mut self.load_w,
            Role::RoomC => &mut self.room_c,
            Role::EmitterType => &mut self.emitter_type,
        };
        *slot = column;
    }

    /// A mapping for `headers` from the words in them, one column per role.
    #[must_use]
    pub fn guess(headers: &[String]) -> Self {
        let mut map = Self::default();
        let mut used = vec![false; headers.len()];
        // The specific roles first, so "Room temperature" is not taken as the room.
        for role in [Role::RoomC, Role::EmitterType, Role::LoadW, Role::Level, Role::Room] {
            if let Some(i) = (0..headers.len()).find(|&i| !used[i] && role.matches(&headers[i])) {
                used[i] = true;
                map.set(role, Some(headers[i].clone()));
            }
        }
        map
    }

    /// This mapping where its columns are in `headers`, else the guess for
    /// the roles it lacks (the remembered mapping of an earlier schedule
    /// meets a table from another program).
    #[must_use]
    pub fn fitted_to(&self, headers: &[String]) -> Self {
        let guess = Self::guess(headers);
        let mut map = Self::default();
        for role in Role::ALL {
            let kept = self.get(role).filter(|c| headers.iter().any(|h| h == c)).map(str::to_owned);
            let taken = |c: &str| Role::ALL.iter().any(|&r| map.get(r) == Some(c));
            let fallback = guess.get(role).filter(|c| !taken(c)).map(str::to_owned);
            map.set(role, kept.or(fallback));
        }
        map
    }

    /// The column index of each role in `table`, checked: the required
    /// roles are mapped, every mapped column exists, no column twice.
    ///
    /// # Errors
    /// [`ScheduleError::Columns`] naming the role, the column and the fix.
    pub fn resolve(&self, table: &Table) -> Result<Columns, ScheduleError> {
        let list = table.headers.iter().map(|h| format!("“{h}”")).collect::<Vec<_>>().join(", ");
        let mut idx = [None; 5];
        for (k, role) in Role::ALL.into_iter().enumerate() {
            let Some(name) = self.get(role) else {
                if role.required() {
                    return Err(ScheduleError::Columns(format!(
                        "no column is chosen for {} — pick the column that holds it (this table has {list})",
                        role.label()
                    )));
                }
                continue;
            };
            let Some(i) = table.headers.iter().position(|h| h == name) else {
                return Err(ScheduleError::Columns(format!(
                    "the column “{name}” chosen for {} is not in this table — pick one of {list}",
                    role.label()
                )));
            };
            if let Some(other) = Role::ALL[..k].iter().zip(idx).find(|(_, j)| *j == Some(i)).map(|(r, _)| *r) {
                return Err(ScheduleError::Columns(format!(
                    "the column “{name}” is chosen for both {} and {} — pick another column for one of them",
                    other.label(),
                    role.label()
                )));
            }
            idx[k] = Some(i);
        }
        if let Some(i) = idx[2]
            && let Some(h) = table.headers.get(i)
            && unit_word(h).is_some_and(|u| u.eq_ignore_ascii_case("kw"))
        {
            return Err(ScheduleError::Columns(format!(
                "the heat load column “{h}” holds kilowatts — this import takes watts: convert the column to W \
                 (1.2 kW = 1200 W) or pick the column in W"
            )));
        }
        Ok(Columns {
            room: idx[0].unwrap_or(0),
            level: idx[1],
            load_w: idx[2].unwrap_or(0),
            room_c: idx[3],
            kind: idx[4],
        })
    }
}

/// Column indices of a mapped table.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Columns {
    /// Room name.
    pub room: usize,
    /// Level name, if mapped.
    pub level: Option<usize>,
    /// Heat load.
    pub load_w: usize,
    /// Room temperature, if mapped.
    pub room_c: Option<usize>,
    /// Emitter type, if mapped.
    pub kind: Option<usize>,
}

/// The unit word of a header or cell: "kW" of "Load (kW)" or "1.2 kW".
fn unit_word(text: &str) -> Option<&str> {
    let t = text.trim().trim_end_matches([')', ']']);
    let start = t.rfind(|c: char| c.is_whitespace() || c == '(' || c == '[' || c.is_ascii_digit())?;
    let word = t[start..].trim_start_matches(|c: char| c.is_whitespace() || c == '(' || c == '[' || c.is_ascii_digit());
    (!word.is_empty()).then_some(word)
}

/// Read a schedule: comma-separated (CSV), semicolon-separated (what
/// spreadsheets in decimal-comma locales write) or tab-separated (cells
/// pasted from a spreadsheet); the separator is the one the first line
/// uses. Quoted cells may hold separators and line breaks. Cells are
/// trimmed; a leading quote flowrise added against spreadsheet formulas
/// ([`csv_cell::neutralise`]) is removed. Blank lines are skipped.
///
/// # Errors
/// [`ScheduleError`] for an empty text, a malformed CSV or too many rows.
pub fn read_table(text: &str) -> Result<Table, ScheduleError> {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let first = text.lines().find(|l| !l.trim().is_empty()).ok_or(ScheduleError::Empty)?;
    let sep = if first.contains('\t') {
        b'\t'
    } else if first.matches(';').count() > first.matches(',').count() {
        b';'
    } else {
        b','
    };
    let mut r = csv::ReaderBuilder::new()
        .delimiter(sep)
        .has_headers(false)
        .flexible(true)
        .trim(csv::Trim::All)
        .from_reader(text.as_bytes());
    let mut headers: Option<Vec<String>> = None;
    let mut rows = Vec::new();
    for rec in r.records() {
        let rec = rec.map_err(|e| ScheduleError::Malformed {
            line: e.position().map_or(0, |p| usize::try_from(p.line()).unwrap_or(usize::MAX)),
            message: format!("{e} — check the quotes in that row"),
        })?;
        let cells: Vec<String> = rec.iter().map(|c| csv_cell::restore(c).to_owned()).collect();
        if cells.iter().all(String::is_empty) {
            continue;
        }
        if headers.is_none() {
            headers = Some(cells);
            continue;
        }
        if rows.len() >= MAX_ROWS {
            return Err(ScheduleError::TooLarge);
        }
        rows.push(cells);
    }
    let headers = headers.ok_or(ScheduleError::Empty)?;
    Ok(Table { headers, rows })
}

/// Parse a cell holding a quantity in `unit` ("W" or "°C"): a plain number,
/// optionally followed by that unit; a decimal comma and spaces between
/// thousands are accepted. A cell in another unit ("1.2 kW" in a W column)
/// is refused with the conversion to make.
///
/// # Errors
/// The message for the preview (without the row and column, which the
/// caller adds).
pub fn parse_quantity(cell: &str, unit: &str) -> Result<f64, String> {
    let t = cell.trim();
    if t.is_empty() {
        return Err("the cell is empty — give a number".to_owned());
    }
    let number_end = t.find(|c: char| {
        !(c.is_ascii_digit() || matches!(c, '.' | ',' | '-' | '+' | ' ' | '\u{a0}' | '\u{202f}' | 'e' | 'E'))
    });
    let (num, rest) = number_end.map_or((t, ""), |i| t.split_at(i));
    // "e" belongs to the number only between digits ("1.5e3").
    let rest = rest.trim();
    let written = rest.trim_start_matches('°').to_lowercase();
    let wanted = unit.trim_start_matches('°').to_lowercase();
    if !rest.is_empty() && written != wanted {
        return Err(match (unit, written.as_str()) {
            ("W", "kw") => {
                let v = to_number(num).map_or_else(|| "…".to_owned(), |v| crate::project::limits::readable(v * 1000.0));
                format!("“{t}” is in kW — this column takes watts: write {v}")
            }
            ("W", "mw") => format!("“{t}” is in MW — this column takes watts"),
            ("°C", "f") => format!("“{t}” is in °F — this column takes °C"),
            ("°C", "k") => format!("“{t}” is in kelvin — this column takes °C (20 °C = 293.15 K)"),
            _ => format!("“{t}” is not a number of {unit} — give a number such as 1200"),
        });
    }
    to_number(num).ok_or_else(|| format!("“{t}” is not a number of {unit} — give a number such as 1200"))
}

fn to_number(text: &str) -> Option<f64> {
    let compact: String = text.chars().filter(|c| !matches!(c, ' ' | '\u{a0}' | '\u{202f}')).collect();
    let normal = if compact.contains(',') && !compact.contains('.') { compact.replace(',', ".") } else { compact };
    normal.parse::<f64>().ok().filter(|v| v.is_finite())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_separator_is_found_from_the_first_line() {
        let csv = read_table("Room,Level,Load W\nKitchen,Ground floor,1200\n").unwrap();
        assert_eq!(csv.headers, ["Room", "Level", "Load W"]);
        assert_eq!(csv.rows, [["Kitchen", "Ground floor", "1200"]]);
        let pasted = read_table("Room\tLevel\tLoad W\r\nKitchen\tGround floor\t1 200,5\r\n\r\n").unwrap();
        assert_eq!(pasted.rows, [["Kitchen", "Ground floor", "1 200,5"]]);
        let semi = read_table("Room;Level;Load W\n\"Hall; east\";L1;800\n").unwrap();
        assert_eq!(semi.rows[0][0], "Hall; east");
        assert_eq!(read_table(" \n\n"), Err(ScheduleError::Empty));
    }

    #[test]
    fn quantities_accept_units_and_commas_and_refuse_other_units_with_the_conversion() {
        assert_eq!(parse_quantity("1200", "W"), Ok(1200.0));
        assert_eq!(parse_quantity("1 200 W", "W"), Ok(1200.0));
        assert_eq!(parse_quantity("850,5", "W"), Ok(850.5));
        assert_eq!(parse_quantity("21 °C", "°C"), Ok(21.0));
        assert_eq!(parse_quantity("1.5e3", "W"), Ok(1500.0));
        let kw = parse_quantity("1.2 kW", "W").unwrap_err();
        assert!(kw.contains("kW") && kw.contains("1200"), "{kw}");
        assert!(parse_quantity("70 F", "°C").unwrap_err().contains("°F"));
        assert!(parse_quantity("", "W").unwrap_err().contains("empty"));
        assert!(parse_quantity("lots", "W").unwrap_err().contains("not a number"));
    }

    #[test]
    fn the_guess_maps_our_own_header_and_common_words() {
        let ours: Vec<String> = CSV_HEADER.iter().map(|s| (*s).to_owned()).collect();
        let m = ColumnMap::guess(&ours);
        assert_eq!(m.room.as_deref(), Some("Room"));
        assert_eq!(m.level.as_deref(), Some("Level"));
        assert_eq!(m.load_w.as_deref(), Some("Heat load W"));
        assert_eq!(m.room_c.as_deref(), Some("Room temperature °C"));
        assert_eq!(m.emitter_type.as_deref(), Some("Emitter type"));
        let other: Vec<String> = ["Space name", "Storey", "Design heat loss (W)"].map(str::to_owned).to_vec();
        let m = ColumnMap::guess(&other);
        assert_eq!((m.room.as_deref(), m.level.as_deref()), (Some("Space name"), Some("Storey")));
        assert_eq!(m.load_w.as_deref(), Some("Design heat loss (W)"));
    }

    #[test]
    fn resolving_names_the_missing_column_and_a_kilowatt_header() {
        let t = read_table("Name,Floor,Heat load kW\nA,B,1\n").unwrap();
        let mut m = ColumnMap::guess(&t.headers);
        let e = m.resolve(&t).unwrap_err().to_string();
        assert!(e.contains("kilowatts") && e.contains("Heat load kW"), "{e}");
        m.load_w = Some("Load W".to_owned());
        let e = m.resolve(&t).unwrap_err().to_string();
        assert!(e.contains("“Load W”") && e.contains("not in this table"), "{e}");
        m.load_w = None;
        assert!(m.resolve(&t).unwrap_err().to_string().contains("no column is chosen for Heat load"));
        m.load_w = Some("Name".to_owned());
        assert!(m.resolve(&t).unwrap_err().to_string().contains("both"));
    }

    #[test]
    fn a_remembered_mapping_keeps_its_columns_and_guesses_the_rest() {
        let remembered = ColumnMap { room: Some("Raum".to_owned()), ..ColumnMap::default() };
        let headers: Vec<String> = ["Raum", "Level", "Load W"].map(str::to_owned).to_vec();
        let m = remembered.fitted_to(&headers);
        assert_eq!(m.room.as_deref(), Some("Raum"));
        assert_eq!(m.level.as_deref(), Some("Level"));
        assert_eq!(m.load_w.as_deref(), Some("Load W"));
    }
}
