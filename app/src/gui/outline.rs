//! "New from building outline": start a project from a number of floors and
//! rooms per floor. The engine's building generator lays out a riser, floor
//! branches and emitters with varied loads (or a header with floor loops per
//! floor); the user then edits it like any drawing.

use egui::{RichText, Ui};
use flowrise_core::generate::{BuildingSpec, MAX_FLOORS, generate_building};
use flowrise_core::project::Project;

use super::theme;

/// Above this many emitters the form says the solve will take a moment.
const LARGE: u64 = 2_000;

/// The form's state (transient).
#[derive(Debug, Clone)]
pub struct OutlineForm {
    /// The outline being edited.
    pub spec: BuildingSpec,
    /// Why the last attempt failed.
    pub error: Option<String>,
}

impl Default for OutlineForm {
    fn default() -> Self {
        Self { spec: BuildingSpec::new(4, 6), error: None }
    }
}

/// What the form asks for.
#[derive(Debug)]
pub enum OutlineOutcome {
    /// Keep the form open.
    Open,
    /// Closed without a project.
    Cancelled,
    /// The new project.
    Created(Box<Project>),
}

/// The form's contents.
pub fn show(ui: &mut Ui, form: &mut OutlineForm) -> OutlineOutcome {
    let mut outcome = OutlineOutcome::Open;
    ui.label(
        "Start a project from the building's outline: a riser from the heat source (one riser per 100 rooms on a floor, \
         fed by plant-room mains), a corridor main and branches on each floor and an emitter per room, with room loads to \
         replace by your own.",
    );
    ui.add_space(4.0);
    egui::Grid::new("outline_grid").num_columns(2).spacing([12.0, 6.0]).show(ui, |ui| {
        let id = ui.label("Floors").id;
        ui.add(egui::DragValue::new(&mut form.spec.floors).range(1..=MAX_FLOORS)).labelled_by(id);
        ui.end_row();
        let id = ui.label("Rooms per floor").id;
        ui.add(egui::DragValue::new(&mut form.spec.per_floor).range(1..=500)).labelled_by(id);
        ui.end_row();
        ui.label("Emitters");
        ui.checkbox(&mut form.spec.headers, "header with floor loops on each floor")
            .on_hover_text("One header per floor feeding floor-heating loops instead of radiators on a branch");
        ui.end_row();
        ui.label("Branches");
        ui.checkbox(&mut form.spec.reverse_return, "reverse return")
            .on_hover_text("Radiator branches laid as reverse-return chains");
        ui.end_row();
        let id = ui.label("Load variation seed").id;
        ui.add(egui::DragValue::new(&mut form.spec.seed).range(0..=9_999)).labelled_by(id);
        ui.end_row();
    });
    let n = form.spec.emitter_count();
    ui.label(format!("{n} emitters in total."));
    if n > LARGE {
        ui.label(RichText::new("A large building: each solve takes a moment.").color(theme::WARNING));
    }
    if let Some(e) = &form.error {
        ui.label(RichText::new(e).color(theme::ERROR));
    }
    ui.add_space(4.0);
    ui.horizontal(|ui| {
        if ui.button("Create project").clicked() {
            match generate_building(&form.spec) {
                Ok(p) => outcome = OutlineOutcome::Created(Box::new(p)),
                Err(e) => form.error = Some(format!("{e} — change the outline")),
            }
        }
        if ui.button("Cancel").clicked() {
            outcome = OutlineOutcome::Cancelled;
        }
    });
    outcome
}
