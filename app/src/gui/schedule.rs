//! The room-load schedule window (Edit → Import room loads…): a CSV file
//! or a table pasted from a spreadsheet, the column mapping (remembered in
//! the preferences), a preview of what changes and of the rows that cannot
//! be placed, and one Apply (one undo step). The work is done by
//! `flowrise_core::project::schedule`.

use egui::{RichText, ScrollArea, TextEdit, Ui};
use flowrise_core::project::schedule::{self, ColumnMap, PlannedAction, Role, SchedulePlan, Table};
use flowrise_core::project::{Edit, Project};

use super::theme;

/// Largest schedule file read, bytes (a room list of 100,000 rows is a few MB).
pub const MAX_FILE_BYTES: u64 = 32 * 1024 * 1024;

/// Rows of the preview drawn at most (the rest are counted).
const PREVIEW_ROWS: usize = 200;

/// The window's state (transient; the mapping is copied to the preferences
/// when the import is applied).
#[derive(Debug, Default)]
pub struct ScheduleDialog {
    /// Where the table came from, for people.
    pub source: String,
    /// The paste box.
    pub pasted: String,
    /// The table read, or why not.
    table: Option<Result<Table, String>>,
    /// Which column holds what.
    pub map: ColumnMap,
    /// The plan for (project revision, mapping).
    plan: Option<(u64, ColumnMap, Result<SchedulePlan, String>)>,
}

/// What the window asks for.
#[derive(Debug, Clone, PartialEq)]
pub enum Outcome {
    /// Nothing yet.
    Open,
    /// Closed without importing.
    Cancelled,
    /// Choose a file to read.
    ChooseFile,
    /// Apply this edit (one undo step); the words for the status line.
    Apply(Box<Edit>, String),
}

impl ScheduleDialog {
    /// A window with `remembered` as the starting mapping.
    #[must_use]
    pub fn new(remembered: ColumnMap) -> Self {
        Self { map: remembered, ..Self::default() }
    }

    /// Read `text` (from a file or the clipboard) as the table; the
    /// mapping keeps the remembered columns this table has and guesses the rest.
    pub fn load(&mut self, text: &str, source: impl Into<String>) {
        self.source = source.into();
        self.plan = None;
        let table = schedule::read_table(text).map_err(|e| e.to_string());
        if let Ok(t) = &table {
            self.map = self.map.fitted_to(&t.headers);
        }
        self.table = Some(table);
    }

    /// The current plan (tests and the preview).
    #[must_use]
    pub fn plan(&self) -> Option<&Result<SchedulePlan, String>> {
        self.plan.as_ref().map(|(_, _, p)| p)
    }

    fn refresh(&mut self, project: &Project) {
        let Some(Ok(table)) = &self.table else {
            self.plan = None;
            return;
        };
        let fresh = self.plan.as_ref().is_some_and(|(rev, map, _)| *rev == project.revision && *map == self.map);
        if !fresh {
            let p = schedule::plan(project, table, &self.map).map_err(|e| e.to_string());
            self.plan = Some((project.revision, self.map.clone(), p));
        }
    }
}

/// Draw the window's contents.
pub fn show(ui: &mut Ui, dlg: &mut ScheduleDialog, project: &Project) -> Outcome {
    let mut outcome = Outcome::Open;
    ui.label("Rooms and heat loads from a heat-load schedule: emitters are updated by room name and level, rooms without one get a new emitter.");
    ui.horizontal(|ui| {
        if ui
            .button("Choose a CSV file…")
            .on_hover_text("Comma, semicolon or tab separated, first row = column names")
            .clicked()
        {
            outcome = Outcome::ChooseFile;
        }
        if !dlg.source.is_empty() {
            ui.label(RichText::new(format!("read: {}", dlg.source)).weak());
        }
    });
    ui.label("…or paste the cells copied from a spreadsheet (first row = column names):");
    let label = ui.label(RichText::new("Pasted table").small()).id;
    ui.add(TextEdit::multiline(&mut dlg.pasted).desired_rows(4).desired_width(f32::INFINITY).code_editor())
        .labelled_by(label);
    if ui.add_enabled(!dlg.pasted.trim().is_empty(), egui::Button::new("Read pasted table")).clicked() {
        let text = dlg.pasted.clone();
        dlg.load(&text, "pasted table");
    }
    match &dlg.table {
        None => {}
        Some(Err(e)) => {
            ui.label(RichText::new(e).color(theme::ERROR));
        }
        Some(Ok(t)) => {
            let headers = t.headers.clone();
            ui.separator();
            ui.label(RichText::new(format!("{} rows. Which column holds what:", t.rows.len())).strong());
            egui::Grid::new("schedule_map").num_columns(2).show(ui, |ui| {
                for role in Role::ALL {
                    mapping_row(ui, &mut dlg.map, role, &headers);
                }
            });
        }
    }
    dlg.refresh(project);
    match dlg.plan() {
        None => {}
        Some(Err(e)) => {
            ui.label(RichText::new(e).color(theme::ERROR));
        }
        Some(Ok(plan)) => preview(ui, plan, project),
    }
    ui.separator();
    ui.horizontal(|ui| {
        let ready = dlg.plan().and_then(|p| p.as_ref().ok()).filter(|p| !p.rows.is_empty());
        let text = ready
            .map_or_else(|| "Apply".to_owned(), |p| format!("Apply: {} new, {} updated", p.creates(), p.updates()));
        let apply = ui.add_enabled(ready.is_some(), egui::Button::new(text)).on_hover_text("One undo step");
        if apply.clicked()
            && let Some(p) = ready
            && let Some(edit) = p.edit()
        {
            outcome = Outcome::Apply(Box::new(edit), applied_words(p, project));
        }
        if ui.button("Cancel").clicked() {
            outcome = Outcome::Cancelled;
        }
    });
    outcome
}

fn mapping_row(ui: &mut Ui, map: &mut ColumnMap, role: Role, headers: &[String]) {
    let label = match role {
        Role::RoomC | Role::EmitterType => format!("{} (optional)", role.label()),
        Role::Level => format!("{} (may be left out with one level)", role.label()),
        Role::Room | Role::LoadW => role.label().to_owned(),
    };
    let label_id = ui.label(label).id;
    let mut pick = map.get(role).map(str::to_owned);
    egui::ComboBox::from_id_salt(("schedule_role", role.label()))
        .selected_text(pick.clone().unwrap_or_else(|| "(none)".to_owned()))
        .width(220.0)
        .show_ui(ui, |ui| {
            ui.selectable_value(&mut pick, None, "(none)");
            for h in headers {
                ui.selectable_value(&mut pick, Some(h.clone()), h);
            }
        })
        .response
        .labelled_by(label_id);
    ui.end_row();
    if pick.as_deref() != map.get(role) {
        map.set(role, pick);
    }
}

fn level_name(project: &Project, id: flowrise_core::project::LevelId) -> String {
    project.level(id).map_or_else(|| id.to_string(), |l| l.name.clone())
}

fn preview(ui: &mut Ui, plan: &SchedulePlan, project: &Project) {
    ui.label(RichText::new(plan.summary()).strong());
    if plan.creates() > 0 {
        ui.label(
            RichText::new(
                "New emitters are placed unconnected in a row below each level's drawing, under its header or riser: \
                 connect each to its branch (the findings list them until then).",
            )
            .color(theme::WARNING_TEXT),
        );
    }
    ScrollArea::vertical().max_height(220.0).auto_shrink([false, true]).show(ui, |ui| {
        for issue in plan.issues.iter().take(PREVIEW_ROWS) {
            ui.label(RichText::new(issue.to_string()).color(theme::ERROR));
        }
        if plan.issues.len() > PREVIEW_ROWS {
            ui.label(format!("… and {} more rows that cannot be placed", plan.issues.len() - PREVIEW_ROWS));
        }
        egui::Grid::new("schedule_preview").striped(true).num_columns(4).show(ui, |ui| {
            for h in ["Row", "Room", "Level", "Change"] {
                ui.label(RichText::new(h).strong());
            }
            ui.end_row();
            for r in plan.rows.iter().take(PREVIEW_ROWS) {
                ui.label(r.line.to_string());
                ui.label(&r.emitter.name);
                ui.label(level_name(project, r.level));
                ui.label(match &r.action {
                    PlannedAction::Create { .. } => format!("new, {:.0} W", r.emitter.load_w),
                    PlannedAction::Update { before, .. } => {
                        format!("{:.0} W to {:.0} W", before.load_w, r.emitter.load_w)
                    }
                });
                ui.end_row();
            }
        });
        if plan.rows.len() > PREVIEW_ROWS {
            ui.label(format!("… and {} more rows", plan.rows.len() - PREVIEW_ROWS));
        }
    });
}

/// The status line after an import.
fn applied_words(plan: &SchedulePlan, project: &Project) -> String {
    let mut levels: Vec<String> = plan
        .rows
        .iter()
        .filter(|r| matches!(r.action, PlannedAction::Create { .. }))
        .map(|r| level_name(project, r.level))
        .collect();
    levels.sort();
    levels.dedup();
    let mut text = format!("room loads imported: {}", plan.summary());
    if !levels.is_empty() {
        text.push_str(&format!(
            " — the new emitters are unconnected, below the drawing of {}: connect each to its branch",
            levels.join(", ")
        ));
    }
    text
}
