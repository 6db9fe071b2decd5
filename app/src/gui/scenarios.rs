//! Drawer views for the two questions beyond the first design: the
//! supply-temperature sweep (how low can the supply go with these emitters,
//! which must be upgraded) and part load (valves closed, each pump control).
//! Both run the engine on demand and keep the result until the project
//! changes.

use egui::{Grid, RichText, ScrollArea, Ui};
use egui_plot::{Legend, Line, Plot};
use flowrise_core::project::Project;
use flowrise_core::sweep::{self, PartLoadCase, SweepResult, SweepSpec};

use super::theme;

/// Transient state of the scenario views.
#[derive(Debug)]
pub struct ScenarioState {
    /// Sweep range and mode.
    pub spec: SweepSpec,
    /// Last sweep and the revision it belongs to.
    pub sweep: Option<(u64, Result<SweepResult, String>)>,
    /// Fraction of valves to close.
    pub closed_fraction: f64,
    /// Seed of the closed set.
    pub seed: u64,
    /// Last part-load result and its revision.
    pub part_load: Option<(u64, Result<Vec<PartLoadCase>, String>)>,
}

impl Default for ScenarioState {
    fn default() -> Self {
        Self {
            spec: SweepSpec {
                from_c: 75.0,
                to_c: 35.0,
                step_k: 1.0,
                frozen_presettings: false,
                target_c: Some(45.0),
                min_drop_k: flowrise_core::sweep::UPGRADE_DELTA_K,
                circuit: None,
            },
            sweep: None,
            closed_fraction: 0.5,
            seed: 1,
            part_load: None,
        }
    }
}

/// The supply-temperature sweep view.
pub fn sweep_view(ui: &mut Ui, project: &Project, st: &mut ScenarioState) {
    ui.horizontal(|ui| {
        ui.label("from");
        ui.add(egui::DragValue::new(&mut st.spec.from_c).range(20.0..=95.0).suffix(" °C").speed(0.5));
        ui.label("to");
        ui.add(egui::DragValue::new(&mut st.spec.to_c).range(20.0..=95.0).suffix(" °C").speed(0.5));
        let mut target = st.spec.target_c.unwrap_or(st.spec.to_c);
        ui.label("upgrades for");
        ui.add(egui::DragValue::new(&mut target).range(20.0..=95.0).suffix(" °C").speed(0.5));
        st.spec.target_c = Some(target);
        ui.label("min. water drop");
        ui.add(egui::DragValue::new(&mut st.spec.min_drop_k).range(0.5..=20.0).suffix(" K").speed(0.1))
            .on_hover_text("The smallest cooling of the water an emitter may run at (5 K: heat pump, common practice)");
        ui.checkbox(&mut st.spec.frozen_presettings, "presettings frozen");
        if ui
            .button("Run sweep")
            .on_hover_text("Redo the design at every supply temperature with these emitters")
            .clicked()
        {
            let spec = SweepSpec { from_c: st.spec.from_c.max(st.spec.to_c), ..st.spec.clone() };
            st.sweep = Some((project.revision, sweep::sweep(project, &spec).map_err(|e| e.to_string())));
        }
    });
    let Some((rev, result)) = &st.sweep else {
        ui.label(
            RichText::new(
                "Run the sweep to see, per room, the share of its load delivered at each supply temperature.",
            )
            .weak(),
        );
        return;
    };
    if *rev != project.revision {
        ui.label(RichText::new("The project changed since this sweep — run it again.").color(theme::WARNING));
    }
    let r = match result {
        Ok(r) => r,
        Err(e) => {
            ui.label(RichText::new(e).color(theme::ERROR));
            return;
        }
    };
    let why = match (r.limiting_constraint, &r.limiting_item) {
        (Some(c), Some(item)) => format!(" (limit: {} — {item})", c.words()),
        (Some(c), None) => format!(" (limit: {})", c.words()),
        (None, _) => String::new(),
    };
    let verdict = match (r.lowest_supply_c, &r.limiting_emitter) {
        (Some(t), Some(e)) => format!("Every room covered down to {t:.1} °C; {e} falls short first below it{why}."),
        (Some(t), None) => format!("Every room covered over the whole range, down to {t:.1} °C."),
        (None, Some(e)) => format!("{e} is short already at the top of the range{why}."),
        (None, None) => "No point of the sweep could be designed.".to_owned(),
    };
    ui.label(RichText::new(verdict).strong());
    ui.label(
        RichText::new(format!(
            "Covered: the load delivered with a water drop of at least {:.1} K, pipes inside their velocity and gradient \
             limits, the pump giving the head needed.",
            r.min_drop_k
        ))
        .small()
        .weak(),
    );
    ui.columns(2, |cols| {
        fraction_plot(&mut cols[0], project, r);
        upgrades_table(&mut cols[1], r);
    });
}

fn fraction_plot(ui: &mut Ui, project: &Project, r: &SweepResult) {
    let Some(first) = r.points.first() else { return };
    let limiting = r.limiting_emitter.as_deref();
    Plot::new("sweep_plot")
        .legend(Legend::default().position(egui_plot::Corner::LeftTop))
        .x_axis_label("supply temperature °C")
        .y_axis_label("delivered share of load %")
        .height(ui.available_height().max(150.0))
        .show(ui, |plot| {
            for (i, e) in first.emitters.iter().enumerate() {
                let pts: Vec<[f64; 2]> = r
                    .points
                    .iter()
                    .filter_map(|p| p.emitters.get(i).map(|x| [p.supply_c, x.fraction * 100.0]))
                    .collect();
                let name = project
                    .nodes()
                    .find(|n| n.id.to_string() == e.id)
                    .map_or_else(|| e.id.clone(), flowrise_core::project::Node::label);
                // The room that falls short first is the one to look at.
                let highlight = Some(e.id.as_str()) == limiting;
                let line = Line::new(name, pts).width(if highlight { 3.0 } else { 1.0 });
                plot.line(if highlight { line.color(theme::ERROR) } else { line });
            }
        });
}

fn upgrades_table(ui: &mut Ui, r: &SweepResult) {
    ui.label(RichText::new(format!("Upgrades to cover every room at {:.0} °C supply", r.target_c)).strong());
    if r.upgrades.is_empty() && r.short_other.is_empty() {
        ui.label("None — every room is covered at that temperature.");
        return;
    }
    ScrollArea::vertical().id_salt("upgrades").show(ui, |ui| {
        Grid::new("upgrades_table").striped(true).num_columns(3).show(ui, |ui| {
            for h in ["Emitter", "Nominal now W", "Needed W (EN 442)"] {
                ui.label(RichText::new(h).strong());
            }
            ui.end_row();
            for u in &r.upgrades {
                ui.label(format!("{} ({})", u.name, u.id));
                ui.label(format!("{:.0}", u.current_nominal_w));
                ui.label(format!("{:.0}", u.needed_nominal_w));
                ui.end_row();
            }
        });
        for id in &r.short_other {
            ui.label(format!("{id}: short at the target but not a radiator — check it separately"));
        }
    });
}

/// The part-load view: close a share of the valves, solve for each pump
/// control mode.
pub fn part_load_view(ui: &mut Ui, project: &Project, st: &mut ScenarioState) {
    ui.horizontal(|ui| {
        ui.add(egui::Slider::new(&mut st.closed_fraction, 0.0..=0.9).text("share of valves closed"));
        ui.add(egui::DragValue::new(&mut st.seed).range(0..=9999).prefix("seed "));
        if ui
            .button("Solve part load")
            .on_hover_text("Close the valves chosen by the seed; solve for each pump control")
            .clicked()
        {
            let closed = sweep::random_closed_set(project, st.closed_fraction, st.seed);
            st.part_load = Some((project.revision, sweep::part_load(project, &closed).map_err(|e| e.to_string())));
        }
    });
    let Some((rev, result)) = &st.part_load else {
        ui.label(
            RichText::new("Solve to see the pump point and the Δp across the open valves under each pump control.")
                .weak(),
        );
        return;
    };
    if *rev != project.revision {
        ui.label(RichText::new("The project changed since this result — solve again.").color(theme::WARNING));
    }
    let cases = match result {
        Ok(c) => c,
        Err(e) => {
            ui.label(RichText::new(e).color(theme::ERROR));
            return;
        }
    };
    // With branch controllers the same scenario follows without them.
    let compare = cases.iter().any(|c| c.branch_controllers);
    Grid::new("part_load_table").striped(true).num_columns(6).show(ui, |ui| {
        if compare {
            ui.label(RichText::new("Branch Δp controllers").strong());
        }
        for h in ["Pump control", "Pump flow l/h", "Pump head kPa", "Largest valve Δp kPa", "Largest over-supply %"] {
            ui.label(RichText::new(h).strong());
        }
        ui.end_row();
        for c in cases {
            if compare {
                ui.label(if c.branch_controllers { "with" } else { "without" });
            }
            ui.label(&c.control);
            ui.label(format!("{:.0}", c.pump_flow_l_h));
            ui.label(format!("{:.1}", c.pump_head_kpa));
            let dp = RichText::new(format!("{:.1}", c.max_valve_dp_kpa));
            ui.label(if c.max_valve_dp_kpa * 1000.0 > sweep::NOISE_DP_PA { dp.color(theme::WARNING) } else { dp });
            ui.label(format!("{:+.0}", c.worst_over_supply() * 100.0));
            ui.end_row();
        }
    });
    if compare {
        ui.label(
            RichText::new(
                "\"without\": the same building designed without its branch Δp controllers, same valves closed.",
            )
            .weak()
            .small(),
        );
    }
    for c in cases {
        for w in &c.warnings {
            let with = if compare && c.branch_controllers {
                ", with branch controllers"
            } else if compare {
                ", without"
            } else {
                ""
            };
            ui.label(
                RichText::new(format!("{}{with}: {}", c.control, w.replace('Δ', "d"))).color(theme::WARNING).small(),
            );
        }
    }
}
