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

use crate::csv_cell;
use crate::design::{PipeResult, Side, Solution};
use crate::emitters::{EmitterDetail, EmitterModel, RadiatorSizing};
use crate::error::{PhysicsError, PhysicsResult, check};
use crate::pipes::{self, PipeMaterial};
use crate::project::{NodeId, NodeKind, Project, Run};
use crate::pump::PumpControl;
use crate::valves;

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
    /// Emitter valves and lockshields.
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
    header_lines(p, sol, &mut acc);
    plant_lines(p, sol, &mut acc);
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
        "The layout has no balancing valves (flowrise places none on branches); emitter valves are listed with their \
         presetting, lockshields set fully open as designed."
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

fn series_of(pr: &PipeResult) -> PhysicsResult<&'static pipes::PipeSeries> {
    pipes::find_series(pr.series)
}

fn pipe_lines(sol: &Solution, opts: &PartsOptions, acc: &mut Acc) -> PhysicsResult<()> {
    // Net length per (side, series, size) first, so the note can state it.
    let mut net: BTreeMap<(Side, String, String), (f64, Vec<String>)> = BTreeMap::new();
    for pr in &sol.pipes {
        let e = net.entry((pr.side, pr.series.to_owned(), pr.size.to_owned())).or_default();
        e.0 += pr.length_m;
        e.1.push(pr.run.to_string());
    }
    for ((side, series_id, size), (length_m, serves)) in net {
        let series = pipes::find_series(&series_id)?;
        let stock =
            stock_length_m(series.material).map_or_else(|| "coils".to_owned(), |l| format!("{l:.0} m stock lengths"));
        let note = format!(
            "{} ({}); net {length_m:.2} m + {:.0} % cutting allowance (common practice); {stock}",
            series.standard,
            series.material.label(),
            opts.cutting_allowance_fraction * 100.0
        );
        let qty = length_m * (1.0 + opts.cutting_allowance_fraction);
        acc.add(PartCategory::Pipe, pipe_item(side, &series.name), size, note, PartUnit::Metre, qty, &serves);
    }
    Ok(())
}

/// Direction (unit vector on the plan) in which run `run` leaves node `at`.
fn leaving_direction(p: &Project, run: &Run, at: NodeId) -> Option<(f64, f64)> {
    let here = p.node(at)?.pos;
    let next = if run.a == at {
        run.vertices.first().copied().or_else(|| p.node(run.b).map(|n| n.pos))?
    } else {
        run.vertices.last().copied().or_else(|| p.node(run.a).map(|n| n.pos))?
    };
    let (dx, dy) = (next.x_m - here.x_m, next.y_m - here.y_m);
    let l = dx.hypot(dy);
    (l > 0.0).then(|| (dx / l, dy / l))
}

#[allow(clippy::too_many_lines)] // reason: one pass over the junctions, each fitting rule beside the next
fn fitting_lines(p: &Project, sol: &Solution, acc: &mut Acc) -> PhysicsResult<()> {
    // Bends and couplings per pipe.
    for pr in &sol.pipes {
        let series = series_of(pr)?;
        let mat = series.material.label();
        let serves = [pr.run.to_string()];
        let (n90, n45) = (pr.bends_90, pr.bends_45);
        let note = "from the run geometry and riser foot/head (as the design counts them)".to_owned();
        acc.add(
            PartCategory::Fitting,
            format!("bend 90°, {mat}"),
            pr.size.to_owned(),
            note.clone(),
            PartUnit::Piece,
            f64::from(n90),
            &serves,
        );
        acc.add(
            PartCategory::Fitting,
            format!("bend 45°, {mat}"),
            pr.size.to_owned(),
            note,
            PartUnit::Piece,
            f64::from(n45),
            &serves,
        );
        if let Some(stock) = stock_length_m(series.material) {
            let couplings = ((pr.length_m / stock).ceil() - 1.0).max(0.0);
            acc.add(
                PartCategory::Fitting,
                format!("coupling, {mat}"),
                pr.size.to_owned(),
                format!("one per {stock:.0} m stock length (common practice)"),
                PartUnit::Piece,
                couplings,
                &serves,
            );
        }
    }

    // Pipes meeting at each node, per side.
    let mut at: BTreeMap<(NodeId, Side), Vec<&PipeResult>> = BTreeMap::new();
    for pr in &sol.pipes {
        let [u, d] = pr.ends;
        at.entry((u, pr.side)).or_default().push(pr);
        at.entry((d, pr.side)).or_default().push(pr);
    }
    for ((node_id, side), mut list) in at {
        let Some(node) = p.node(node_id) else { continue };
        if !matches!(node.kind, NodeKind::Junction) {
            continue;
        }
        list.sort_by(|a, b| b.design_flow_kg_s.abs().total_cmp(&a.design_flow_kg_s.abs()).then(a.run.cmp(&b.run)));
        let serves = [node_id.to_string()];
        let trunk_series = series_of(list[0])?;
        let mat = trunk_series.material.label();
        // Adaptors for legs of another series.
        for pr in list.iter().skip(1) {
            let s = series_of(pr)?;
            if s.id != trunk_series.id {
                acc.add(
                    PartCategory::Fitting,
                    format!("adaptor, {mat} to {}", s.material.label()),
                    format!("{} × {}", list[0].size, pr.size),
                    format!("series change at the junction ({} / {})", trunk_series.standard, s.standard),
                    PartUnit::Piece,
                    1.0,
                    &serves,
                );
            }
        }
        match list.as_slice() {
            [a, b] => {
                // A size change within one series (a series change is an adaptor, above).
                if a.series == b.series && a.size != b.size {
                    let (big, small) = if a.inner_mm >= b.inner_mm { (a, b) } else { (b, a) };
                    acc.add(
                        PartCategory::Fitting,
                        format!("reducer, {mat}"),
                        format!("{} × {}", big.size, small.size),
                        "size change between two runs".to_owned(),
                        PartUnit::Piece,
                        1.0,
                        &serves,
                    );
                }
                // A bend where two horizontal runs meet at an angle.
                let (Some(ra), Some(rb)) = (p.run(a.run), p.run(b.run)) else { continue };
                let touches = |r: &Run| r.a == node_id || r.b == node_id;
                if p.is_vertical(ra) || p.is_vertical(rb) || !touches(ra) || !touches(rb) {
                    continue;
                }
                let (Some(da), Some(db)) = (leaving_direction(p, ra, node_id), leaving_direction(p, rb, node_id))
                else {
                    continue;
                };
                // Turn = 180° − angle between the two leaving directions.
                let turn = 180.0 - (da.0 * db.0 + da.1 * db.1).clamp(-1.0, 1.0).acos().to_degrees();
                let kind = if turn >= 60.0 {
                    "bend 90°"
                } else if turn >= 20.0 {
                    "bend 45°"
                } else {
                    continue;
                };
                let size = if a.inner_mm >= b.inner_mm { &a.size } else { &b.size };
                acc.add(
                    PartCategory::Fitting,
                    format!("{kind}, {mat}"),
                    (*size).to_owned(),
                    "at a junction of two runs (not in the design's friction, which counts bends inside runs)"
                        .to_owned(),
                    PartUnit::Piece,
                    1.0,
                    &serves,
                );
            }
            [trunk, through, branch] => {
                let (item, size) = if trunk.size == through.size && through.size == branch.size {
                    ("equal tee", trunk.size.to_owned())
                } else if trunk.size == through.size {
                    ("reducing tee", format!("{} × {}", trunk.size, branch.size))
                } else {
                    ("reducing tee", format!("{} × {} × {}", trunk.size, through.size, branch.size))
                };
                acc.add(
                    PartCategory::Fitting,
                    format!("{item}, {mat} — {}", side_word(side)),
                    size,
                    "sizes trunk × through × branch (by design flow)".to_owned(),
                    PartUnit::Piece,
                    1.0,
                    &serves,
                );
            }
            more if more.len() >= 4 => {
                let sizes: Vec<&str> = more.iter().map(|x| x.size).collect();
                acc.add(
                    PartCategory::Fitting,
                    format!("cross or tee pair, {mat} — {}", side_word(side)),
                    sizes.join(" × "),
                    format!("{} pipes meet at {node_id}: fit a cross or two tees", more.len()),
                    PartUnit::Piece,
                    1.0,
                    &serves,
                );
            }
            _ => {}
        }
    }
    Ok(())
}

fn emitter_lines(p: &Project, sol: &Solution, acc: &mut Acc) {
    for e in &sol.emitters {
        let Some(node) = p.node(e.id) else { continue };
        let NodeKind::Emitter(em) = &node.kind else { continue };
        let serves = [e.id.to_string()];
        match (&em.model, &e.detail) {
            (EmitterModel::Radiator(spec), Some(EmitterDetail::Radiator(r))) => {
                let existing = matches!(spec.sizing, RadiatorSizing::Existing { .. });
                let item = if existing {
                    format!("panel radiator type {} (existing — check, do not order)", spec.type_code)
                } else {
                    format!("panel radiator type {}", spec.type_code)
                };
                acc.add(
                    PartCategory::Emitter,
                    item,
                    format!("{} × {} mm", spec.height_mm, r.length_mm),
                    format!(
                        "nominal output {:.0} W at 75/65/20 °C (EN 442), n = {:.2}",
                        r.nominal_output_w, r.exponent_n
                    ),
                    PartUnit::Piece,
                    1.0,
                    &serves,
                );
            }
            (EmitterModel::FloorLoop(spec), Some(EmitterDetail::FloorLoop(f))) => {
                let wall_mm = 0.5 * (spec.pipe_outer_diameter_m - spec.pipe_inner_diameter_m) * 1000.0;
                acc.add(
                    PartCategory::Emitter,
                    format!("floor-heating loop pipe, {}", node.label()),
                    format!("{:.0} × {:.1} mm", spec.pipe_outer_diameter_m * 1000.0, wall_mm),
                    format!(
                        "area {:.1} m², spacing {:.0} mm, two leads of {:.1} m; one loop from a coil",
                        spec.area_m2,
                        spec.spacing_m * 1000.0,
                        spec.lead_length_m
                    ),
                    PartUnit::Metre,
                    f.loop_length_m,
                    &serves,
                );
            }
            (EmitterModel::Terminal(spec), _) => {
                acc.add(
                    PartCategory::Emitter,
                    "terminal unit (fan coil / air heater)".to_owned(),
                    format!("{:.0} W", spec.nominal_output_w),
                    format!(
                        "nominal at {:.0}/{:.0}/{:.0} °C, coil Kv {:.2} m³/h",
                        spec.nominal_supply_c, spec.nominal_return_c, spec.nominal_room_c, spec.kv_m3_h
                    ),
                    PartUnit::Piece,
                    1.0,
                    &serves,
                );
            }
            _ => {}
        }
    }
}

fn valve_lines(p: &Project, sol: &Solution, acc: &mut Acc) {
    for e in &sol.emitters {
        let Some(NodeKind::Emitter(em)) = p.node(e.id).map(|n| &n.kind) else { continue };
        let serves = [e.id.to_string()];
        let (name, size) = valves::valve_family(&em.valves.valve_family).map_or_else(
            |_| (em.valves.valve_family.clone(), String::new()),
            |f| (f.name.clone(), format!("DN{}", f.connection_dn)),
        );
        acc.add(
            PartCategory::Valve,
            name,
            size,
            format!("presetting {} (Kv {:.3} m³/h)", e.presetting, e.valve_kv_m3_h),
            PartUnit::Piece,
            1.0,
            &serves,
        );
        let (name, size, open) = valves::valve_family(&em.valves.lockshield_family).map_or_else(
            |_| (em.valves.lockshield_family.clone(), String::new(), String::new()),
            |f| {
                let open = f
                    .settings
                    .last()
                    .filter(|s| !s.label.eq_ignore_ascii_case("open"))
                    .map_or_else(String::new, |s| format!(" (setting {})", s.label));
                (f.name.clone(), format!("DN{}", f.connection_dn), open)
            },
        );
        acc.add(
            PartCategory::Valve,
            name,
            size,
            format!("lockshield, fully open{open} as designed"),
            PartUnit::Piece,
            1.0,
            &serves,
        );
    }
}

fn header_lines(p: &Project, sol: &Solution, acc: &mut Acc) {
    let topo = &sol.topology;
    for node in p.nodes() {
        let NodeKind::Header(h) = &node.kind else { continue };
        let used = topo.children_of(node.id).len();
        let inlet = topo
            .parent_run_of(node.id)
            .and_then(|r| sol.run_pipes(r).find(|x| x.side == Side::Supply))
            .map_or_else(String::new, |x| format!("; inlet {}", x.size));
        acc.add(
            PartCategory::Header,
            "header: distributor + collector pair".to_owned(),
            format!("{} outlets", h.outlets),
            format!(
                "{}: {used} outlets used, {} spare{inlet}",
                h.name,
                h.outlets.saturating_sub(u32::try_from(used).unwrap_or(u32::MAX))
            ),
            PartUnit::Piece,
            1.0,
            &[node.id.to_string()],
        );
    }
}

fn plant_lines(p: &Project, sol: &Solution, acc: &mut Acc) {
    let source = p.sources().first().map(ToString::to_string).unwrap_or_default();
    let serves = [source];
    if let Some(pump) = &sol.pump {
        let control = match pump.control {
            PumpControl::FixedSpeed => "fixed speed".to_owned(),
            PumpControl::ConstantDp { setpoint_kpa } => format!("constant Δp {setpoint_kpa:.1} kPa"),
            PumpControl::ProportionalDp { setpoint_kpa } => {
                format!("proportional Δp {setpoint_kpa:.1} kPa at design flow")
            }
        };
        acc.add(
            PartCategory::Pump,
            "circulation pump".to_owned(),
            format!("{:.2} m³/h at {:.1} kPa", pump.design_flow_m3_h, pump.duty_head_pa / 1000.0),
            format!(
                "duty point: design flow and index circuit {:.1} kPa + {:.0} % margin (common practice); control {control}",
                pump.index_dp_pa / 1000.0,
                p.settings.head_margin_fraction * 100.0
            ),
            PartUnit::Piece,
            1.0,
            &serves,
        );
    }
    if let Some(v) = &sol.vessel {
        let (size, note) = match vessel_nominal_size_l(v.nominal_volume_l) {
            Some(n) => (
                format!("{n:.0} l"),
                format!(
                    "EN 12828 minimum {:.1} l → next common size (common practice); pre-charge {:.2} bar, fill {:.2} bar",
                    v.nominal_volume_l, v.precharge_pressure_bar, v.fill_pressure_bar
                ),
            ),
            None => (
                format!("{:.0} l", v.nominal_volume_l.ceil()),
                format!("EN 12828 minimum {:.1} l is above 300 l: several vessels in parallel", v.nominal_volume_l),
            ),
        };
        acc.add(
            PartCategory::Vessel,
            "expansion vessel (diaphragm)".to_owned(),
            size,
            note,
            PartUnit::Piece,
            1.0,
            &serves,
        );
    }
}

/// The first common nominal vessel size not below `minimum_l`, l; `None`
/// above the largest (300 l).
#[must_use]
pub fn vessel_nominal_size_l(minimum_l: f64) -> Option<f64> {
    VESSEL_NOMINAL_SIZES_L.into_iter().find(|&s| s >= minimum_l)
}

fn insulation_lines(sol: &Solution, opts: &PartsOptions, acc: &mut Acc) -> PhysicsResult<()> {
    for pr in &sol.pipes {
        let series = series_of(pr)?;
        acc.add(
            PartCategory::Insulation,
            format!("pipe insulation for {}", series.material.label()),
            pr.size.to_owned(),
            format!(
                "supply + return, {:.0} % cutting allowance; thickness per the local energy code",
                opts.cutting_allowance_fraction * 100.0
            ),
            PartUnit::Metre,
            pr.length_m * (1.0 + opts.cutting_allowance_fraction),
            &[pr.run.to_string()],
        );
    }
    Ok(())
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
mod tests {
    use super::*;

    #[test]
    fn options_out_of_range_are_rejected_naming_the_quantity() {
        for bad in [f64::NAN, -0.01, 0.8] {
            let e = PartsOptions { cutting_allowance_fraction: bad }.validate().unwrap_err();
            assert!(e.to_string().contains("cutting allowance"), "{e}");
        }
        assert!(PartsOptions::default().validate().is_ok());
        let p = Project::new("empty");
        let e = parts_list(&p, &Solution::default(), &PartsOptions { cutting_allowance_fraction: -1.0 }).unwrap_err();
        assert!(matches!(e, PhysicsError::OutOfRange { .. }), "{e}");
    }

    #[test]
    fn vessel_sizes_round_up_to_the_next_common_size() {
        assert_eq!(vessel_nominal_size_l(0.5), Some(8.0));
        assert_eq!(vessel_nominal_size_l(8.0), Some(8.0));
        assert_eq!(vessel_nominal_size_l(17.3), Some(18.0));
        assert_eq!(vessel_nominal_size_l(250.0), Some(300.0));
        assert_eq!(vessel_nominal_size_l(301.0), None);
    }

    #[test]
    fn natural_order_compares_numbers() {
        let mut v = vec!["DN25", "DN8", "DN15", "16x2", "DN20 × DN15", "DN20"];
        v.sort_by(|a, b| natural_cmp(a, b));
        assert_eq!(v, ["16x2", "DN8", "DN15", "DN20", "DN20 × DN15", "DN25"]);
    }

    /// The earlier, allocating implementation: the yardstick of the
    /// allocation-free one.
    fn natural_cmp_by_chunks(a: &str, b: &str) -> Ordering {
        fn chunks(s: &str) -> Vec<(bool, String)> {
            let mut out: Vec<(bool, String)> = Vec::new();
            for c in s.chars() {
                let d = c.is_ascii_digit();
                match out.last_mut() {
                    Some((kind, text)) if *kind == d => text.push(c),
                    _ => out.push((d, c.to_string())),
                }
            }
            out
        }
        let (ca, cb) = (chunks(a), chunks(b));
        for ((da, ta), (db, tb)) in ca.iter().zip(&cb) {
            let o = if *da && *db {
                let (na, nb) = (ta.trim_start_matches('0'), tb.trim_start_matches('0'));
                na.len().cmp(&nb.len()).then_with(|| na.cmp(nb))
            } else {
                ta.cmp(tb)
            };
            if o != Ordering::Equal {
                return o;
            }
        }
        ca.len().cmp(&cb.len()).then_with(|| a.cmp(b))
    }

    #[test]
    fn natural_order_agrees_with_the_chunked_definition() {
        let words = [
            "",
            "0",
            "00",
            "007",
            "7",
            "R1",
            "R01",
            "R10",
            "R2",
            "E1.2",
            "E1.10",
            "E1.2a",
            "Room 0.1.10",
            "Room 0.1.9",
            "DN20 × DN15",
            "DN20",
            "16x2",
            "a",
            "A",
            "é3",
            "é12",
            "x",
            "12x",
            "12",
            "1 2",
            "R1 ",
            "R",
        ];
        for a in words {
            for b in words {
                assert_eq!(natural_cmp(a, b), natural_cmp_by_chunks(a, b), "{a:?} vs {b:?}");
            }
        }
    }

    #[test]
    fn csv_round_trips_quotes_commas_and_unicode() {
        let list = PartsList {
            lines: vec![PartLine {
                category: PartCategory::Fitting,
                item: "reducing tee, \"steel\" — supply".to_owned(),
                size: "DN20 × DN15".to_owned(),
                quantity: 12.34,
                unit: PartUnit::Metre,
                serves: vec!["N7".to_owned(), "R3".to_owned()],
                note: "a, b; Δp 5 kPa".to_owned(),
            }],
            options: PartsOptions::default(),
            notes: Vec::new(),
        };
        let text = parts_csv(&list).unwrap();
        assert!(text.starts_with("category,item,size,quantity,unit,serves,note\n"), "{text}");
        assert_eq!(read_parts_csv(&text).unwrap(), list.lines);
        assert!(read_parts_csv("a,b\n1,2\n").is_err());
        let bad = text.replace(",12.34,", ",-1,");
        assert!(read_parts_csv(&bad).is_err());
    }

    /// Issue 20 item 4: a name that a spreadsheet would run as a formula
    /// is written as text, for every leading character that triggers one,
    /// and reads back unchanged.
    #[test]
    fn csv_cells_starting_a_formula_are_neutralised() {
        for lead in crate::csv_cell::FORMULA_TRIGGERS {
            let name = format!("{lead}HYPERLINK(\"http://example.invalid\",\"Header 1\")");
            let list = PartsList {
                lines: vec![PartLine {
                    category: PartCategory::Header,
                    item: name.clone(),
                    size: format!("{lead}DN2"),
                    quantity: 1.0,
                    unit: PartUnit::Piece,
                    serves: vec!["N1".to_owned()],
                    note: name.clone(),
                }],
                options: PartsOptions::default(),
                notes: Vec::new(),
            };
            let text = parts_csv(&list).unwrap();
            let mut r = csv::Reader::from_reader(text.as_bytes());
            let row = r.records().next().unwrap().unwrap();
            for k in [1, 2, 6] {
                let cell = row.get(k).unwrap();
                assert!(cell.starts_with('\''), "{lead:?}: column {k} is {cell:?}");
            }
            assert_eq!(read_parts_csv(&text).unwrap(), list.lines, "{lead:?}");
        }
    }

    #[test]
    fn stock_lengths_follow_the_material() {
        assert_eq!(stock_length_m(PipeMaterial::Steel), Some(6.0));
        assert_eq!(stock_length_m(PipeMaterial::PeX), None);
    }
}
