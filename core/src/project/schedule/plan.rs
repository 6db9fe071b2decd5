//! From a mapped schedule to the edits it makes, and back to CSV.
//!
//! Rows are matched with emitters by room name (the emitter's name,
//! ignoring case and surrounding spaces) on the row's level. A matched
//! emitter gets the row's load, and its room temperature and emitter type
//! when the table has them. A row without a match creates an emitter.
//!
//! Where a new emitter goes: it cannot be connected by rule — which branch
//! serves a room is the designer's decision — so new emitters are placed
//! **unconnected**, in a tidy row below the level's drawing, starting under
//! the level's header (else its riser, else its heat source, else the
//! middle of its drawing), [`PLACE_STEP_M`] apart, [`PLACE_PER_ROW`] to a
//! row. The solve marks each as unreachable until a run joins it, which is
//! the notice that it needs connecting.

use std::collections::{BTreeMap, BTreeSet};
use std::fmt;

use super::{ColumnMap, Columns, ScheduleError, Table, parse_quantity};
use crate::csv_cell;
use crate::emitters::EmitterKind;
use crate::project::edit::{check_text, printable};
use crate::project::limits::{self, Limit};
use crate::project::{Edit, Emitter, EmitterValves, LevelId, NodeId, NodeKind, PlanPoint, Project};

/// Distance between new emitters placed in a row, m.
pub const PLACE_STEP_M: f64 = 1.5;
/// New emitters per row before the next row starts.
pub const PLACE_PER_ROW: usize = 10;
/// Gap between the level's drawing and the first row of new emitters, m.
pub const PLACE_GAP_M: f64 = 3.0;

/// What a placed row does.
#[derive(Debug, Clone, PartialEq)]
pub enum PlannedAction {
    /// Update this emitter (its data before).
    Update {
        /// The emitter.
        id: NodeId,
        /// Its data now.
        before: Box<Emitter>,
    },
    /// Create an emitter here (unconnected).
    Create {
        /// Position on the level's plan.
        pos: PlanPoint,
    },
}

/// A row the import can place.
#[derive(Debug, Clone, PartialEq)]
pub struct PlannedRow {
    /// Row of the table (header = 1).
    pub line: usize,
    /// Level.
    pub level: LevelId,
    /// The emitter after the import.
    pub emitter: Emitter,
    /// Update or create.
    pub action: PlannedAction,
}

/// A row the import cannot place: its row, its column and why.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct RowIssue {
    /// Row of the table (header = 1).
    pub line: usize,
    /// Column concerned (its header).
    pub column: String,
    /// What is wrong and the fix.
    pub message: String,
}

impl fmt::Display for RowIssue {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "row {}, column “{}”: {}", self.line, self.column, self.message)
    }
}

/// The import worked out, not applied yet (the window's preview).
#[derive(Debug, Clone, PartialEq, Default)]
pub struct SchedulePlan {
    /// Rows that change something, in table order.
    pub rows: Vec<PlannedRow>,
    /// Rows that match an emitter holding the same data already.
    pub unchanged: usize,
    /// Rows it cannot place.
    pub issues: Vec<RowIssue>,
}

impl SchedulePlan {
    /// Number of emitters the import creates.
    #[must_use]
    pub fn creates(&self) -> usize {
        self.rows.iter().filter(|r| matches!(r.action, PlannedAction::Create { .. })).count()
    }

    /// Number of emitters the import updates.
    #[must_use]
    pub fn updates(&self) -> usize {
        self.rows.len() - self.creates()
    }

    /// The one edit that applies the plan (all or nothing: one undo step);
    /// `None` when it changes nothing.
    #[must_use]
    pub fn edit(&self) -> Option<Edit> {
        if self.rows.is_empty() {
            return None;
        }
        let edits = self
            .rows
            .iter()
            .map(|r| match &r.action {
                PlannedAction::Update { id, .. } => {
                    Edit::SetNodeKind { id: *id, kind: NodeKind::Emitter(r.emitter.clone()) }
                }
                PlannedAction::Create { pos } => {
                    Edit::AddNode { level: r.level, pos: *pos, kind: NodeKind::Emitter(r.emitter.clone()) }
                }
            })
            .collect();
        Some(Edit::Batch(edits))
    }

    /// One line for the status line and the preview.
    #[must_use]
    pub fn summary(&self) -> String {
        let new = self.creates();
        let mut parts = vec![
            format!("{new} new {}", if new == 1 { "emitter" } else { "emitters" }),
            format!("{} updated", self.updates()),
        ];
        if self.unchanged > 0 {
            parts.push(format!("{} unchanged", self.unchanged));
        }
        if !self.issues.is_empty() {
            parts.push(format!("{} rows cannot be placed", self.issues.len()));
        }
        parts.join(", ")
    }
}

/// The key rooms are matched by: name without surrounding spaces, any case.
fn room_key(name: &str) -> String {
    name.trim().to_lowercase()
}

/// The emitter kind a cell names ("radiator", "Floor loop", "floor", "terminal").
fn kind_of(cell: &str) -> Option<EmitterKind> {
    let c = cell.trim().to_lowercase();
    EmitterKind::ALL.into_iter().find(|k| {
        let n = k.name().to_lowercase();
        c == n || n.split(' ').next().is_some_and(|first| c == first)
    })
}

/// Work out what a schedule changes in `project`.
///
/// # Errors
/// [`ScheduleError::Columns`] when the mapping does not fit the table (a
/// required column missing, a column in kW); row problems are
/// [`SchedulePlan::issues`], not errors.
pub fn plan(project: &Project, table: &Table, map: &ColumnMap) -> Result<SchedulePlan, ScheduleError> {
    let cols = map.resolve(table)?;
    if cols.level.is_none() && project.levels.len() > 1 {
        return Err(ScheduleError::Columns(format!(
            "no column is chosen for Level and the project has {} levels — pick the column that names each room's level",
            project.levels.len()
        )));
    }
    let header = |i: usize| table.headers.get(i).cloned().unwrap_or_default();
    // Existing emitters by (level, room key); a name used twice on a level
    // cannot be matched.
    let mut existing: BTreeMap<(LevelId, String), Vec<NodeId>> = BTreeMap::new();
    for n in project.nodes() {
        if let NodeKind::Emitter(e) = &n.kind {
            existing.entry((n.level, room_key(&e.name))).or_default().push(n.id);
        }
    }
    let mut out = SchedulePlan::default();
    let mut seen: BTreeMap<(LevelId, String), usize> = BTreeMap::new();
    for (i, row) in table.rows.iter().enumerate() {
        let line = Table::line(i);
        let cell = |c: usize| row.get(c).map_or("", String::as_str);
        let issue = |col: usize, message: String| RowIssue { line, column: header(col), message };
        let parsed = match read_row(project, &cols, cell, &issue) {
            Ok(p) => p,
            Err(e) => {
                out.issues.push(e);
                continue;
            }
        };
        let key = (parsed.level, room_key(&parsed.room));
        if let Some(first) = seen.insert(key.clone(), line) {
            out.issues.push(issue(
                cols.room,
                format!("room “{}” on this level is in row {first} already — keep one row per room", parsed.room),
            ));
            continue;
        }
        match existing.get(&key).map(Vec::as_slice) {
            Some([id]) => {
                let Some(NodeKind::Emitter(before)) = project.node(*id).map(|n| &n.kind) else { continue };
                let mut after = before.clone();
                after.load_w = parsed.load_w;
                if let Some(t) = parsed.room_c {
                    after.room_c = t;
                }
                if let Some(k) = parsed.kind
                    && k != before.model.kind()
                {
                    after.model = k.default_model();
                }
                if after == *before {
                    out.unchanged += 1;
                } else {
                    out.rows.push(PlannedRow {
                        line,
                        level: parsed.level,
                        emitter: after,
                        action: PlannedAction::Update { id: *id, before: Box::new(before.clone()) },
                    });
                }
            }
            Some(ids) => {
                let list = ids.iter().map(ToString::to_string).collect::<Vec<_>>().join(", ");
                out.issues.push(issue(
                    cols.room,
                    format!(
                        "{} emitters on this level are named “{}” ({list}) — rename them so each room has one name",
                        ids.len(),
                        parsed.room
                    ),
                ));
            }
            None => {
                let emitter = Emitter {
                    name: parsed.room.clone(),
                    room_c: parsed.room_c.unwrap_or(project.settings.room_c),
                    load_w: parsed.load_w,
                    model: parsed.kind.unwrap_or(EmitterKind::Radiator).default_model(),
                    valves: EmitterValves {
                        valve_family: project.settings.valve_family.clone(),
                        presetting: None,
                        lockshield_family: project.settings.lockshield_family.clone(),
                        lockshield_setting: None,
                    },
                };
                out.rows.push(PlannedRow {
                    line,
                    level: parsed.level,
                    emitter,
                    // The position is given once every new emitter is known.
                    action: PlannedAction::Create { pos: PlanPoint::default() },
                });
            }
        }
    }
    place_new(project, &mut out);
    Ok(out)
}

/// One row's values, checked.
struct RowValues {
    room: String,
    level: LevelId,
    load_w: f64,
    room_c: Option<f64>,
    kind: Option<EmitterKind>,
}

fn read_row<'a>(
    project: &Project,
    cols: &Columns,
    cell: impl Fn(usize) -> &'a str,
    issue: &impl Fn(usize, String) -> RowIssue,
) -> Result<RowValues, RowIssue> {
    let room = cell(cols.room).trim().to_owned();
    if room.is_empty() {
        return Err(issue(cols.room, "the room name is empty — give each row its room".to_owned()));
    }
    check_text("room", "name", &room).map_err(|e| issue(cols.room, e.to_string()))?;
    let level = match cols.level {
        None => project.levels.first().map(|l| l.id).unwrap_or(LevelId(0)),
        Some(c) => {
            let name = cell(c).trim();
            let found = project.levels.iter().find(|l| l.name.trim().eq_ignore_ascii_case(name));
            match found {
                Some(l) => l.id,
                None => {
                    let names = project.levels.iter().map(|l| format!("“{}”", l.name)).collect::<Vec<_>>().join(", ");
                    return Err(issue(
                        c,
                        format!(
                            "level “{}” is not in the project — use one of {names}, or add the level first",
                            printable(name)
                        ),
                    ));
                }
            }
        }
    };
    let within = |l: &Limit, col: usize, v: f64| l.check(v).map_err(|m| issue(col, m));
    let load_w = parse_quantity(cell(cols.load_w), "W").map_err(|m| issue(cols.load_w, m))?;
    let load_w = within(&limits::LOAD_W, cols.load_w, load_w)?;
    let room_c = match cols.room_c {
        Some(c) if !cell(c).trim().is_empty() => {
            let t = parse_quantity(cell(c), "°C").map_err(|m| issue(c, m))?;
            Some(within(&limits::ROOM_C, c, t)?)
        }
        _ => None,
    };
    let kind = match cols.kind {
        Some(c) if !cell(c).trim().is_empty() => Some(kind_of(cell(c)).ok_or_else(|| {
            let names = EmitterKind::ALL.iter().map(|k| k.name()).collect::<Vec<_>>().join(", ");
            issue(c, format!("emitter type “{}” is not one flowrise knows — use {names}", printable(cell(c).trim())))
        })?),
        _ => None,
    };
    Ok(RowValues { room, level, load_w, room_c, kind })
}

/// Give the new emitters of each level their places (see the module docs).
fn place_new(project: &Project, plan: &mut SchedulePlan) {
    let levels: BTreeSet<LevelId> =
        plan.rows.iter().filter(|r| matches!(r.action, PlannedAction::Create { .. })).map(|r| r.level).collect();
    for level in levels {
        let (start_x, top_y) = row_start(project, level);
        let mut k = 0_usize;
        for r in plan.rows.iter_mut().filter(|r| r.level == level) {
            if let PlannedAction::Create { pos } = &mut r.action {
                let (col, row) = (k % PLACE_PER_ROW, k / PLACE_PER_ROW);
                *pos = PlanPoint::new(start_x + col as f64 * PLACE_STEP_M, top_y - row as f64 * PLACE_STEP_M);
                k += 1;
            }
        }
    }
}

/// Where the first new emitter of `level` goes: x under the level's
/// header, riser, source or drawing centre; y [`PLACE_GAP_M`] below the
/// lowest point of the level's drawing.
fn row_start(project: &Project, level: LevelId) -> (f64, f64) {
    let on_level: Vec<_> = project.nodes().filter(|n| n.level == level).collect();
    if on_level.is_empty() {
        return (0.0, 0.0);
    }
    let riser =
        |id: NodeId| project.runs_at(id).iter().any(|&r| project.run(r).is_some_and(|r| project.is_vertical(r)));
    let anchor = on_level
        .iter()
        .find(|n| matches!(n.kind, NodeKind::Header(_)))
        .or_else(|| on_level.iter().find(|n| !matches!(n.kind, NodeKind::Emitter(_)) && riser(n.id)))
        .or_else(|| on_level.iter().find(|n| matches!(n.kind, NodeKind::Source(_))))
        .map(|n| n.pos.x_m);
    let mut min_y = f64::INFINITY;
    let (mut sum_x, mut count) = (0.0, 0.0);
    for n in &on_level {
        min_y = min_y.min(n.pos.y_m);
        sum_x += n.pos.x_m;
        count += 1.0;
    }
    for r in project.runs() {
        if project.node(r.a).is_some_and(|n| n.level == level) {
            for v in &r.vertices {
                min_y = min_y.min(v.y_m);
            }
        }
    }
    (anchor.unwrap_or(sum_x / count), min_y - PLACE_GAP_M)
}

/// The project's emitters as a schedule ([`super::CSV_HEADER`]): by level
/// from the lowest, then by name. Text cells are neutralised against
/// spreadsheet formulas ([`csv_cell`]); numbers are written in full, so an
/// export read back changes nothing.
///
/// # Errors
/// A message when the CSV cannot be made (it is built in memory).
pub fn schedule_csv(project: &Project) -> Result<String, String> {
    let mut rows: Vec<(usize, String, NodeId, [String; 5])> = Vec::new();
    for n in project.nodes() {
        let NodeKind::Emitter(e) = &n.kind else { continue };
        let order = project.levels.iter().position(|l| l.id == n.level).unwrap_or(usize::MAX);
        let level = project.level(n.level).map_or_else(|| n.level.to_string(), |l| l.name.clone());
        let cells =
            [e.name.clone(), level, e.load_w.to_string(), e.room_c.to_string(), e.model.kind().name().to_owned()];
        rows.push((order, e.name.to_lowercase(), n.id, cells));
    }
    rows.sort_by(|a, b| (a.0, &a.1, a.2).cmp(&(b.0, &b.1, b.2)));
    let mut w = csv::Writer::from_writer(Vec::new());
    w.write_record(super::CSV_HEADER).map_err(|e| e.to_string())?;
    for (_, _, _, cells) in rows {
        w.write_record(cells.iter().map(|c| csv_cell::neutralise(c).into_owned())).map_err(|e| e.to_string())?;
    }
    let bytes = w.into_inner().map_err(|e| e.to_string())?;
    String::from_utf8(bytes).map_err(|e| e.to_string())
}

#[cfg(test)]
mod tests {
    use super::super::read_table;
    use super::*;
    use crate::project::PlanPoint;

    fn two_levels() -> Project {
        let mut p = Project::new("t");
        p.apply(Edit::AddLevel { name: "First floor".to_owned(), elevation_m: 3.0 }).unwrap();
        let kind = NodeKind::Emitter(Emitter {
            name: "Kitchen".to_owned(),
            room_c: 20.0,
            load_w: 500.0,
            model: EmitterKind::Radiator.default_model(),
            valves: EmitterValves {
                valve_family: p.settings.valve_family.clone(),
                presetting: None,
                lockshield_family: p.settings.lockshield_family.clone(),
                lockshield_setting: None,
            },
        });
        p.apply(Edit::AddNode { level: LevelId(0), pos: PlanPoint::new(4.0, 2.0), kind }).unwrap();
        p.apply(Edit::AddNode {
            level: LevelId(0),
            pos: PlanPoint::new(1.0, 2.0),
            kind: NodeKind::Header(crate::project::Header { name: "H".to_owned(), outlets: 4 }),
        })
        .unwrap();
        p
    }

    fn plan_text(p: &Project, text: &str) -> SchedulePlan {
        let t = read_table(text).unwrap();
        plan(p, &t, &ColumnMap::guess(&t.headers)).unwrap()
    }

    #[test]
    fn rows_update_by_room_and_level_and_create_the_rest_in_a_row_below_the_header() {
        let mut p = two_levels();
        let s = plan_text(
            &p,
            "Room,Level,Heat load W,Room temperature °C\nkitchen ,Ground floor,750,22\nHall,Ground floor,300,\nHall,First floor,320,18\n",
        );
        assert!(s.issues.is_empty(), "{:?}", s.issues);
        assert_eq!((s.updates(), s.creates()), (1, 2));
        let PlannedAction::Create { pos } = s.rows[1].action else { panic!() };
        assert_eq!(pos, PlanPoint::new(1.0, 2.0 - PLACE_GAP_M), "under the header, below the drawing");
        let before = p.clone();
        p.apply(s.edit().unwrap()).unwrap();
        assert_eq!(p.revision, before.revision + 1, "one edit");
        let kitchen = p.nodes().find_map(|n| match &n.kind {
            NodeKind::Emitter(e) if e.name == "Kitchen" => Some(e.clone()),
            _ => None,
        });
        assert_eq!(kitchen.map(|e| (e.load_w, e.room_c)), Some((750.0, 22.0)));
        assert_eq!(p.emitters().len(), 3);
        let again = plan_text(&p, "Room,Level,Heat load W\nKitchen,Ground floor,750\n");
        assert_eq!((again.rows.len(), again.unchanged), (0, 1));
        assert!(again.edit().is_none());
    }

    #[test]
    fn rows_it_cannot_place_name_their_row_and_column() {
        let p = two_levels();
        let s = plan_text(
            &p,
            "Room,Level,Heat load W,Emitter type\nA,Roof,100,\nB,Ground floor,1.2 kW,\nC,Ground floor,,\n\
             D,Ground floor,-5,\nE,Ground floor,100,heat pump\nF,Ground floor,100,\nF,Ground floor,200,\n",
        );
        let text: Vec<String> = s.issues.iter().map(ToString::to_string).collect();
        assert_eq!(text.len(), 6, "{text:#?}");
        assert!(text[0].starts_with("row 2, column “Level”") && text[0].contains("Roof"), "{}", text[0]);
        assert!(text[1].starts_with("row 3, column “Heat load W”") && text[1].contains("1200"), "{}", text[1]);
        assert!(text[2].starts_with("row 4") && text[2].contains("empty"));
        assert!(text[3].starts_with("row 5") && text[3].contains("load"));
        assert!(text[4].starts_with("row 6, column “Emitter type”"));
        assert!(text[5].starts_with("row 8, column “Room”") && text[5].contains("row 7"));
        assert_eq!(s.creates(), 1);
    }

    #[test]
    fn export_reads_back_to_the_same_emitters() {
        let mut p = two_levels();
        let s = plan_text(&p, "Room,Level,Heat load W\n=cmd,First floor,123.456\nBath,Ground floor,380\n");
        p.apply(s.edit().unwrap()).unwrap();
        let csv = schedule_csv(&p).unwrap();
        assert!(csv.contains("'=cmd"), "neutralised: {csv}");
        assert!(csv.starts_with("Room,Level,Heat load W,Room temperature °C,Emitter type\nBath,Ground floor,380,"));
        let back = plan_text(&p, &csv);
        assert!(back.issues.is_empty() && back.rows.is_empty(), "{back:?}");
        assert_eq!(back.unchanged, 3);
    }
}
