//! Drawer views for the two questions beyond the first design: the
//! supply-temperature sweep (how low can the supply go with these emitters,
//! which must be upgraded) and part load (valves closed, each pump control).
//! Both run the engine on demand and keep the result until the project
//! changes.

use egui::{Grid, RichText, ScrollArea, Ui};
use egui_plot::{Line, Plot};
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
    ui.horizontal_wrapped(|ui| {
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
        // With pumped circuits: sweep the source or one mixing circuit.
        let circuits: Vec<(flowrise_core::project::NodeId, String)> = project
            .nodes()
            .filter_map(|n| match &n.kind {
                flowrise_core::project::NodeKind::Circuit(c)
                    if c.connection != flowrise_core::project::CircuitConnection::Direct =>
                {
                    Some((n.id, c.name.clone()))
                }
                _ => None,
            })
            .collect();
        if st.spec.circuit.is_some_and(|id| !circuits.iter().any(|(c, _)| *c == id)) {
            st.spec.circuit = None;
        }
        if !circuits.is_empty() {
            let name_of = |id: Option<flowrise_core::project::NodeId>| {
                id.and_then(|id| circuits.iter().find(|(c, _)| *c == id).map(|(_, n)| n.clone()))
                    .unwrap_or_else(|| "heat source".to_owned())
            };
            let label_id = ui.label("supply of").id;
            egui::ComboBox::from_id_salt("sweep.circuit")
                .selected_text(name_of(st.spec.circuit))
                .show_ui(ui, |ui| {
                    ui.selectable_value(&mut st.spec.circuit, None, "heat source");
                    for (id, name) in &circuits {
                        ui.selectable_value(&mut st.spec.circuit, Some(*id), name);
                    }
                })
                .response
                .on_hover_text("Sweep the heat source's supply (every room) or one pumped circuit's (its rooms)")
                .labelled_by(label_id);
        }
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
    let rooms = room_lines(project, r);
    // The room by its name and level, not only its id.
    let named = |id: &String| {
        r.points
            .first()
            .and_then(|p| p.emitters.iter().position(|e| &e.id == id))
            .and_then(|i| rooms.get(i))
            .map_or_else(|| id.clone(), |room| room.name.clone())
    };
    let limiting = r.limiting_emitter.as_ref().map(named);
    let verdict = match (r.lowest_supply_c, &limiting) {
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
        fraction_plot(&mut cols[0], r, &rooms);
        ScrollArea::vertical().id_salt("sweep_side").auto_shrink([false, false]).show(&mut cols[1], |ui| {
            rooms_legend(ui, &rooms);
            ui.add_space(6.0);
            upgrades_table(ui, r);
        });
    });
}

/// A room's curve in the sweep chart: its name with its level, colour and
/// whether it is the room that falls short first.
struct RoomLine {
    name: String,
    colour: egui::Color32,
    limiting: bool,
}

/// Distinct colours for up to a few dozen curves (hues a golden angle
/// apart, kept away from the red of the room that falls short first; dark
/// enough to read on the light plot background).
fn curve_colour(i: usize) -> egui::Color32 {
    let h = 0.12 + 0.76 * (i as f32 * 0.381_966).fract();
    egui::Color32::from(egui::ecolor::Hsva::new(h, 0.8, 0.62, 1.0))
}

fn room_lines(project: &Project, r: &SweepResult) -> Vec<RoomLine> {
    let Some(first) = r.points.first() else { return Vec::new() };
    let limiting = r.limiting_emitter.as_deref();
    first
        .emitters
        .iter()
        .enumerate()
        .map(|(i, e)| {
            let node = project.nodes().find(|n| n.id.to_string() == e.id);
            let level = node.and_then(|n| project.levels.iter().find(|l| l.id == n.level)).map(|l| l.name.clone());
            let label = node.map_or_else(|| e.id.clone(), flowrise_core::project::Node::label);
            let name = match level {
                Some(l) => format!("{label}, {l}"),
                None => label,
            };
            let lim = Some(e.id.as_str()) == limiting;
            RoomLine { name, colour: if lim { theme::ERROR } else { curve_colour(i) }, limiting: lim }
        })
        .collect()
}

/// The rooms' colours, beside the chart (a legend inside it would cover
/// the curves).
fn rooms_legend(ui: &mut Ui, rooms: &[RoomLine]) {
    ui.label(RichText::new("Rooms (curves of the chart)").strong());
    for room in rooms {
        ui.horizontal(|ui| {
            let (rect, _) = ui.allocate_exact_size(egui::vec2(18.0, 10.0), egui::Sense::hover());
            ui.painter().line_segment(
                [rect.left_center(), rect.right_center()],
                egui::Stroke::new(if room.limiting { 3.5 } else { 2.0 }, room.colour),
            );
            let text = RichText::new(&room.name);
            ui.label(if room.limiting { text.strong().color(theme::ERROR) } else { text })
                .on_hover_text(if room.limiting { "falls short first" } else { "" });
        });
    }
}

fn fraction_plot(ui: &mut Ui, r: &SweepResult, rooms: &[RoomLine]) {
    Plot::new("sweep_plot")
        .x_axis_label("supply temperature, °C")
        .y_axis_label("share of load, %")
        .height(ui.available_height().max(120.0))
        .show(ui, |plot| {
            for (i, room) in rooms.iter().enumerate() {
                let pts: Vec<[f64; 2]> = r
                    .points
                    .iter()
                    .filter_map(|p| p.emitters.get(i).map(|x| [p.supply_c, x.fraction * 100.0]))
                    .collect();
                // The room that falls short first is the one to look at.
                plot.line(
                    Line::new(room.name.clone(), pts)
                        .id(("sweep_room", i))
                        .color(room.colour)
                        .width(if room.limiting { 3.0 } else { 1.2 }),
                );
            }
        });
}

fn upgrades_table(ui: &mut Ui, r: &SweepResult) {
    ui.label(RichText::new(format!("Upgrades to cover every room at {:.0} °C supply", r.target_c)).strong());
    if r.upgrades.is_empty() && r.short_other.is_empty() {
        ui.label("None — every room is covered at that temperature.");
        return;
    }
    {
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
    }
}

/// The part-load view: close a share of the valves, solve for each pump
/// control mode.
pub fn part_load_view(ui: &mut Ui, project: &Project, st: &mut ScenarioState) {
    ui.horizontal_wrapped(|ui| {
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
    ScrollArea::vertical()
        .id_salt("part_load_body")
        .auto_shrink([false, false])
        .show(ui, |ui| part_load_table(ui, cases));
}

/// The cases of a part-load result and their warnings, as sentences in a
/// colour and size that read on the light panel. With branch Δp
/// controllers the same scenario follows without them; with pumped
/// circuits each case lists every circuit's pump point.
fn part_load_table(ui: &mut Ui, cases: &[PartLoadCase]) {
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
            // Coloured only when the case carries the warning that says why.
            let noisy = c.max_valve_dp_kpa * 1000.0 > sweep::NOISE_DP_PA && !c.warnings.is_empty();
            ui.label(if noisy { dp.color(theme::WARNING_TEXT).strong() } else { dp });
            ui.label(format!("{:+.0}", c.worst_over_supply() * 100.0));
            ui.end_row();
            for ci in c.circuits.iter().skip(1) {
                if compare {
                    ui.label("");
                }
                ui.label(RichText::new(format!("  circuit {}", ci.name)).weak());
                ui.label(format!("{:.0}", ci.pump_flow_l_h));
                ui.label(format!("{:.1}", ci.pump_head_kpa));
                ui.label("");
                ui.label(format!("{:+.0}", ci.worst_over_supply * 100.0));
                ui.end_row();
            }
        }
    });
    if compare {
        ui.label(
            RichText::new(
                "\"without\": the same building designed without its branch Δp controllers, same valves closed.",
            )
            .weak(),
        );
    }
    ui.add_space(4.0);
    const SHOWN: usize = 12;
    for c in cases {
        let with = match (compare, c.branch_controllers) {
            (false, _) => "",
            (true, true) => ", with branch controllers",
            (true, false) => ", without",
        };
        for w in c.warnings.iter().take(SHOWN) {
            ui.horizontal_top(|ui| {
                ui.label(RichText::new("Warning").strong().color(theme::WARNING_TEXT));
                ui.add(egui::Label::new(RichText::new(format!("{}{with}: {w}", c.control)).color(theme::INK)).wrap());
            });
        }
        if c.warnings.len() > SHOWN {
            ui.label(format!(
                "{}{with}: … and {} more warnings (`flowrise part-load FILE --csv` lists every room)",
                c.control,
                c.warnings.len() - SHOWN
            ));
        }
    }
}
