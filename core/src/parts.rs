//! The parts list: what the installer orders, taken straight from a solved
//! design (nothing retyped).
//!
//! Lines are grouped and sorted (category, item, size, note), so the same
//! project always gives the same list. Rules and where they come from:
//! - **pipes** per series, size and side: total length of the solution's
//!   pipes plus a stated cutting allowance (default 5 %, common practice);
//!   reverse-return home pipes use the solution's return lengths;
//! - **bends** per material and size as the design counted them for its
//!   local losses ([`crate::design::PipeResult::bends_90`]: a turn of 60° or
//!   more is a 90° bend, 20–60° a 45° bend, plus two bends (foot and head)
//!   per vertical run and side); a junction joining two
//!   horizontal runs at an angle also gets a bend per side (the design's
//!   friction counts bends inside runs only — stated in the line's note);
//! - **tees** where three pipes of one side meet at a junction: equal, or
//!   reducing with the sizes ordered trunk × through × branch by design flow
//!   (`DN20 × DN15` when trunk and through are equal); four or more pipes →
//!   a "cross or tee pair" line; **reducers** where two pipes of different
//!   sizes meet at a junction; **adaptors** where series change;
//! - **couplings** per stock length (common practice: steel 6 m, copper 5 m,
//!   multilayer 5 m bars; PE-X and PE-RT come in coils, no couplings);
//! - emitters, emitter valves per family and presetting, lockshields,
//!   headers with their outlet count, the pump with its duty point, the
//!   expansion vessel as the next common nominal size, and pipe insulation
//!   per size (both sides; its thickness follows the local energy code).

use std::cmp::Ordering;
use std::collections::{BTreeMap, BTreeSet};

use thiserror::Error;

mod lines;
use lines::{
    circuit_lines, device_lines, emitter_lines, fitting_lines, header_lines, insulation_lines, pipe_lines, plant_lines,
    valve_lines,
};

use crate::csv_cell;
use crate::design::{Side, Solution};
use crate::error::{PhysicsError, PhysicsResult, check};
use crate::pipes::PipeMaterial;
use crate::project::Project;

/// Default cutting allowance on pipe lengths, fraction (common practice:
/// about 5 % for offcuts and jointing).
pub const DEFAULT_CUTTING_ALLOWANCE_FRACTION: f64 = 0.05;

/// Common nominal expansion-vessel sizes, l (common practice; the vessel
/// chosen is the first size not below the EN 12828 minimum).
pub const VESSEL_NOMINAL_SIZES_L: [f64; 11] = [8.0, 12.0, 18.0, 25.0, 35.0, 50.0, 80.0, 100.0, 140.0, 200.0, 300.0];

/// Stock length of straight pipe per material, m; `None` for pipe sold in
/// coils (no couplings). Common practice: steel 6 m, copper 5 m, multilayer
/// 5 m bars; PE-X and PE-RT in coils.
#[must_use]
pub fn stock_length_m(material: PipeMaterial) -> Option<f64> {
    match material {
        PipeMaterial::Steel => Some(6.0),
        PipeMaterial::Copper | PipeMaterial::Multilayer => Some(5.0),
        PipeMaterial::PeX | PipeMaterial::PeRt => None,
    }
}

/// Options of the parts list.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PartsOptions {
    /// Cutting allowance added to pipe and insulation lengths, fraction
    /// (default [`DEFAULT_CUTTING_ALLOWANCE_FRACTION`]).
    pub cutting_allowance_fraction: f64,
}

impl Default for PartsOptions {
    fn default() -> Self {
        Self { cutting_allowance_fraction: DEFAULT_CUTTING_ALLOWANCE_FRACTION }
    }
}

impl PartsOptions {
    /// Check the options.
    ///
    /// # Errors
    /// [`PhysicsError`] when the allowance is not finite or outside 0–0.5.
    pub fn validate(&self) -> PhysicsResult<()> {
        check::in_range("cutting allowance", self.cutting_allowance_fraction, "(fraction)", 0.0, 0.5).map(|_| ())
    }
}

/// What kind of part a line is.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum PartCategory {
    /// Straight pipe.
    Pipe,
    /// Bends, tees, reducers, adaptors, couplings.
    Fitting,
    /// Radiators, floor loops, terminals.
    Emitter,
    /// Emitter valves, lockshields and balancing devices on runs.
    Valve,
    /// Distributor + collector pairs.
    Header,
    /// The circulation pump.
    Pump,
    /// The expansion vessel.
    Vessel,
    /// Pipe insulation.
    Insulation,
}

impl PartCategory {
    /// Every category, in list order.
    pub const ALL: [Self; 8] = [
        Self::Pipe,
        Self::Fitting,
        Self::Emitter,
        Self::Valve,
        Self::Header,
        Self::Pump,
        Self::Vessel,
        Self::Insulation,
    ];

    /// Word used in tables and the CSV.
    #[must_use]
    pub fn label(self) -> &'static str {
        match self {
            Self::Pipe => "pipe",
            Self::Fitting => "fitting",
            Self::Emitter => "emitter",
            Self::Valve => "valve",
            Self::Header => "header",
            Self::Pump => "pump",
            Self::Vessel => "vessel",
            Self::Insulation => "insulation",
        }
    }

    /// The category with label `text`.
    #[must_use]
    pub fn from_label(text: &str) -> Option<Self> {
        Self::ALL.into_iter().find(|c| c.label() == text)
    }
}

/// Unit of a line's quantity.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum PartUnit {
    /// Metres.
    Metre,
    /// Pieces.
    Piece,
}

impl PartUnit {
    /// Symbol: `m` or `pcs`.
    #[must_use]
    pub fn symbol(self) -> &'static str {
        match self {
            Self::Metre => "m",
            Self::Piece => "pcs",
        }
    }

    /// The unit with symbol `text`.
    #[must_use]
    pub fn from_symbol(text: &str) -> Option<Self> {
        match text {
            "m" => Some(Self::Metre),
            "pcs" => Some(Self::Piece),
            _ => None,
        }
    }
}

/// One line of the parts list.
#[derive(Debug, Clone, PartialEq)]
pub struct PartLine {
    /// Category.
    pub category: PartCategory,
    /// What to order ("supply pipe — Steel tube, medium series").
    pub item: String,
    /// Size ("DN20", "DN20 × DN15", "600 × 1200 mm", "25 l").
    pub size: String,
    /// Quantity in `unit` (metres rounded to 0.01 m; pieces whole).
    pub quantity: f64,
    /// Unit.
    pub unit: PartUnit,
    /// Ids of the items the line serves (`R3`, `N7`), sorted.
    pub serves: Vec<String>,
    /// Remarks: allowance, presetting, duty point, assumptions.
    pub note: String,
}

/// A parts list.
#[derive(Debug, Clone, PartialEq)]
pub struct PartsList {
    /// Lines, sorted by category, item, size and note.
    pub lines: Vec<PartLine>,
    /// The options used.
    pub options: PartsOptions,
    /// Statements about the whole list (rules used, what is not included).
    pub notes: Vec<String>,
}

impl PartsList {
    /// Lines of one category.
    pub fn lines_in(&self, category: PartCategory) -> impl Iterator<Item = &PartLine> + '_ {
        self.lines.iter().filter(move |l| l.category == category)
    }
}

/// Problems writing or reading a parts CSV.
#[derive(Debug, Error)]
pub enum PartsCsvError {
    /// The csv writer or reader failed.
    #[error("parts CSV: {0}")]
    Csv(#[from] csv::Error),
    /// The written bytes could not be taken back from the writer.
    #[error("parts CSV: {0}")]
    Buffer(String),
    /// A row of a CSV being read is not a parts line.
    #[error("parts CSV row {row}: {message}")]
    Row {
        /// 1-based data row.
        row: usize,
        /// What is wrong.
        message: String,
    },
}

/// Column names of the parts CSV (the unit of `quantity` is in `unit`).
pub const CSV_HEADER: [&str; 7] = ["category", "item", "size", "quantity", "unit", "serves", "note"];

/// The item text of a pipe line: `"{side} pipe — {series name}"`.
#[must_use]
pub fn pipe_item(side: Side, series_name: &str) -> String {
    format!("{} pipe — {series_name}", side_word(side))
}

fn side_word(side: Side) -> &'static str {
    match side {
        Side::Supply => "supply",
        Side::Return => "return",
    }
}

fn round_to(x: f64, step: f64) -> f64 {
    (x / step).round() * step
}

/// Round metres to 0.01 m (as ordered and as written to the CSV).
fn metres(x: f64) -> f64 {
    // Through the decimal text so that the CSV round trip is exact.
    format!("{:.2}", round_to(x, 0.01)).parse().unwrap_or(x)
}

/// Build the parts list of a solved design.
///
/// # Errors
/// [`PhysicsError`] when the options are out of range or a pipe series of
/// the solution is not in the catalog.
pub fn parts_list(p: &Project, sol: &Solution, opts: &PartsOptions) -> PhysicsResult<PartsList> {
    opts.validate()?;
    let mut acc = Acc::default();
    pipe_lines(sol, opts, &mut acc)?;
    fitting_lines(p, sol, &mut acc)?;
    emitter_lines(p, sol, &mut acc);
    valve_lines(p, sol, &mut acc);
    device_lines(sol, &mut acc);
    header_lines(p, sol, &mut acc);
    plant_lines(p, sol, &mut acc);
    circuit_lines(p, sol, &mut acc);
    insulation_lines(sol, opts, &mut acc)?;
    let mut lines = acc.finish();
    lines.sort_by(compare_lines);
    let allowance_pct = opts.cutting_allowance_fraction * 100.0;
    let notes = vec![
        format!(
            "Pipe and insulation lengths include a cutting allowance of {allowance_pct:.0} % (common practice); \
             floor-loop pipe is listed at its computed loop length."
        ),
        "Bends: from the run geometry (turn ≥ 60° → 90° bend, 20–60° → 45° bend, as the design counts them), two per \
         vertical run and side (riser foot and head, as the design assumes), and one per side where a junction joins two \
         horizontal runs at an angle."
            .to_owned(),
        "Couplings: one per stock length (common practice: steel 6 m, copper 5 m, multilayer 5 m bars); PE-X and PE-RT \
         come in coils and need none."
            .to_owned(),
        "Expansion vessel: the first common nominal size (8 … 300 l, common practice) not below the EN 12828 minimum."
            .to_owned(),
        "Emitter valves are listed with their presetting and lockshields with their setting, chosen together so each \
         room gets its design flow; the commissioning schedule lists what to set and the Δp to expect."
            .to_owned(),
        "Insulation thickness follows the local energy code; lengths cover supply and return.".to_owned(),
        "Not included: pipe supports and clips, fixing material, air vents, drains, safety valve, strainers, controls."
            .to_owned(),
    ];
    Ok(PartsList { lines, options: *opts, notes })
}

/// Grouping key of a line: (category, item, size, note).
type LineKey = (PartCategory, String, String, String);

/// A group being summed: unit, quantity, ids served.
type LineSum = (PartUnit, f64, BTreeSet<String>);

/// Lines being grouped by [`LineKey`].
#[derive(Debug, Default)]
struct Acc {
    groups: BTreeMap<LineKey, LineSum>,
}

impl Acc {
    #[allow(clippy::too_many_arguments)] // reason: one call per line kind reads best with the fields spelled out
    fn add(
        &mut self,
        category: PartCategory,
        item: String,
        size: String,
        note: String,
        unit: PartUnit,
        qty: f64,
        serves: &[String],
    ) {
        let e = self.groups.entry((category, item, size, note)).or_insert((unit, 0.0, BTreeSet::new()));
        e.1 += qty;
        e.2.extend(serves.iter().cloned());
    }

    fn finish(self) -> Vec<PartLine> {
        self.groups
            .into_iter()
            .filter(|(_, (_, q, _))| *q > 0.0)
            .map(|((category, item, size, note), (unit, quantity, serves))| {
                let mut serves: Vec<String> = serves.into_iter().collect();
                serves.sort_unstable_by(|a, b| natural_cmp(a, b));
                let quantity = match unit {
                    PartUnit::Metre => metres(quantity),
                    PartUnit::Piece => quantity.round(),
                };
                PartLine { category, item, size, quantity, unit, serves, note }
            })
            .collect()
    }
}

fn compare_lines(a: &PartLine, b: &PartLine) -> Ordering {
    a.category
        .cmp(&b.category)
        .then_with(|| natural_cmp(&a.item, &b.item))
        .then_with(|| natural_cmp(&a.size, &b.size))
        .then_with(|| natural_cmp(&a.note, &b.note))
}

/// Compare strings with digit runs compared as numbers ("DN8" < "DN15").
/// Allocation-free: it runs for every comparison of long "serves" lists.
fn natural_cmp(a: &str, b: &str) -> Ordering {
    /// The next run of digits or of non-digits, and the rest.
    fn chunk(s: &str) -> Option<(bool, &str, &str)> {
        let first = s.chars().next()?;
        let digit = first.is_ascii_digit();
        let end = s.find(|c: char| c.is_ascii_digit() != digit).unwrap_or(s.len());
        Some((digit, &s[..end], &s[end..]))
    }
    let (mut ra, mut rb) = (a, b);
    loop {
        match (chunk(ra), chunk(rb)) {
            (Some((da, ta, next_a)), Some((db, tb, next_b))) => {
                let o = if da && db {
                    let (na, nb) = (ta.trim_start_matches('0'), tb.trim_start_matches('0'));
                    na.len().cmp(&nb.len()).then_with(|| na.cmp(nb))
                } else {
                    ta.cmp(tb)
                };
                if o != Ordering::Equal {
                    return o;
                }
                (ra, rb) = (next_a, next_b);
            }
            // Fewer chunks sort first; equal chunk lists fall back to the text.
            (None, Some(_)) => return Ordering::Less,
            (Some(_), None) => return Ordering::Greater,
            (None, None) => return a.cmp(b),
        }
    }
}

/// The first common nominal vessel size not below `minimum_l`, l; `None`
/// above the largest (300 l).
#[must_use]
pub fn vessel_nominal_size_l(minimum_l: f64) -> Option<f64> {
    VESSEL_NOMINAL_SIZES_L.into_iter().find(|&s| s >= minimum_l)
}

/// The parts list as CSV: UTF-8, a header row ([`CSV_HEADER`]), one row per
/// line; `serves` is the ids separated by spaces.
///
/// # Errors
/// [`PartsCsvError`] when the csv writer fails.
pub fn parts_csv(list: &PartsList) -> Result<String, PartsCsvError> {
    let mut w = csv::Writer::from_writer(Vec::new());
    w.write_record(CSV_HEADER)?;
    for l in &list.lines {
        let qty = l.quantity.to_string();
        let serves = l.serves.join(" ");
        // Names are user text: neutralised against spreadsheet formulas.
        w.write_record(
            [l.category.label(), &l.item, &l.size, &qty, l.unit.symbol(), &serves, &l.note]
                .map(|cell| csv_cell::neutralise(cell).into_owned()),
        )?;
    }
    let bytes = w.into_inner().map_err(|e| PartsCsvError::Buffer(e.to_string()))?;
    String::from_utf8(bytes).map_err(|e| PartsCsvError::Buffer(e.to_string()))
}

/// Read a parts CSV written by [`parts_csv`] back into lines (for scripts and
/// the round-trip check).
///
/// # Errors
/// [`PartsCsvError`] for a malformed CSV, a wrong header, an unknown category
/// or unit, or a quantity that is not a finite non-negative number.
pub fn read_parts_csv(text: &str) -> Result<Vec<PartLine>, PartsCsvError> {
    let mut r = csv::Reader::from_reader(text.as_bytes());
    let header = r.headers()?.clone();
    if header.iter().ne(CSV_HEADER) {
        return Err(PartsCsvError::Row { row: 0, message: format!("header must be {}", CSV_HEADER.join(",")) });
    }
    let mut out = Vec::new();
    for (i, rec) in r.records().enumerate() {
        let rec = rec?;
        let row = i + 1;
        let field = |k: usize| csv_cell::restore(rec.get(k).unwrap_or_default()).to_owned();
        let bad = |message: String| PartsCsvError::Row { row, message };
        let category =
            PartCategory::from_label(&field(0)).ok_or_else(|| bad(format!("unknown category {:?}", field(0))))?;
        let quantity: f64 = field(3).parse().map_err(|_| bad(format!("quantity {:?} is not a number", field(3))))?;
        check::non_negative("quantity", quantity, "").map_err(|e: PhysicsError| bad(e.to_string()))?;
        let unit = PartUnit::from_symbol(&field(4)).ok_or_else(|| bad(format!("unknown unit {:?}", field(4))))?;
        out.push(PartLine {
            category,
            item: field(1),
            size: field(2),
            quantity,
            unit,
            serves: field(5).split_whitespace().map(str::to_owned).collect(),
            note: field(6),
        });
    }
    Ok(out)
}

#[cfg(test)]
mod tests;
