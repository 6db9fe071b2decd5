//! The inspector (right): the selection's inputs with units and ranges,
//! then its computed results, then the findings list. When nothing is
//! selected it shows the design settings.

mod circuit;
mod device;

use egui::{Grid, RichText, ScrollArea, Ui};
use flowrise_core::design::{FindingKind, ItemRef, Side, Solution};
use flowrise_core::emitters::floor::FloorZone;
use flowrise_core::emitters::{
    EmitterDetail, EmitterKind, EmitterModel, FloorLoopSpec, RadiatorSizing, RadiatorSpec, TerminalSpec, radiator,
};
use flowrise_core::pipes;
use flowrise_core::project::limits as L;
use flowrise_core::project::{Edit, LevelId, NodeId, NodeKind, PipeClass, Project, ReturnLayout, Run, RunId, RunProps};
use flowrise_core::pump::PumpControl;
use flowrise_core::valves::{self, ValveKind};

use super::fields::FieldState;
use super::findings_view::findings_list;
use super::intents::{Intents, Selection};
use super::{settings_panel, theme};

/// Show the inspector.
pub fn show(
    ui: &mut Ui,
    project: &Project,
    sol: &Solution,
    selection: Selection,
    level: LevelId,
    fs: &mut FieldState,
    out: &mut Intents,
) {
    // Both ways: a wide form scrolls sideways instead of widening the panel.
    ScrollArea::both().auto_shrink([false, false]).show_viewport(ui, |ui, viewport| {
        // Text wraps at the visible width; only a wider form scrolls.
        ui.set_max_width(viewport.width());
        match selection {
            Selection::None => {
                level_summary(ui, project, sol, level);
                ui.heading("Project");
                Grid::new("project_fields").num_columns(3).show(ui, |ui| {
                    if let Some(name) = fs.text(ui, "project.name", "Name", &project.name) {
                        out.edit_field(Edit::Rename(name), "project.name");
                    }
                });
                ui.add_space(4.0);
                ui.collapsing("Design settings", |ui| settings_panel::show(ui, project, sol, fs, out));
                totals(ui, sol);
            }
            Selection::Node(id) => match project.node(id) {
                Some(node) => {
                    ui.heading(node.label());
                    ui.label(RichText::new(node.kind.word()).weak());
                    node_inputs(ui, project, id, fs, out);
                    ui.separator();
                    node_results(ui, project, sol, id);
                    if matches!(node.kind, NodeKind::Circuit(_)) {
                        circuit::circuit_results(ui, sol, id);
                    }
                }
                None => {
                    ui.label("The selected item is gone.");
                }
            },
            Selection::Run(id) => match project.run(id) {
                Some(run) => {
                    ui.heading(format!("Run {id}"));
                    ui.label(
                        RichText::new(format!("{} – {}", label_of(project, run.a), label_of(project, run.b))).weak(),
                    );
                    run_inputs(ui, project, sol, run, fs, out);
                    device::inputs(ui, run, fs, out);
                    ui.separator();
                    run_results(ui, sol, id);
                    device::results(ui, sol, run);
                }
                None => {
                    ui.label("The selected run is gone.");
                }
            },
        }
        ui.separator();
        findings_list(ui, sol, out);
    });
}

/// The level shown on the canvas: what is on it (the inspector follows
/// the level tabs).
fn level_summary(ui: &mut Ui, project: &Project, sol: &Solution, level: LevelId) {
    let Some(l) = project.levels.iter().find(|l| l.id == level) else { return };
    ui.heading(format!("Level: {}", l.name));
    // Counted once per project revision, result and level, not every frame
    // (a scan of every emitter of a 200,000-emitter building per frame).
    let key = (project.revision, sol.revision, sol.preview, level, sol.emitters.len());
    let id = egui::Id::unique("level_summary_counts");
    let cached = ui.data(|d| d.get_temp::<((u64, u64, bool, LevelId, usize), (usize, f64))>(id));
    let (count, load) = match cached {
        Some((k, v)) if k == key => v,
        _ => {
            let on_level = sol.emitters.iter().filter(|e| project.node(e.id).is_some_and(|n| n.level == level));
            let v = on_level.fold((0usize, 0.0f64), |(n, w), e| (n + 1, w + e.load_w));
            ui.data_mut(|d| d.insert_temp(id, (key, v)));
            v
        }
    };
    Grid::new("level_summary").num_columns(2).striped(true).show(ui, |ui| {
        row(ui, "Elevation", format!("{:+.2} m", l.elevation_m));
        row(ui, "Emitters", count.to_string());
        row(ui, "Heat load", format!("{:.2} kW", load / 1000.0));
    });
    ui.separator();
}

fn label_of(p: &Project, id: NodeId) -> String {
    p.node(id).map_or_else(|| id.to_string(), flowrise_core::project::Node::label)
}

fn totals(ui: &mut Ui, sol: &Solution) {
    ui.separator();
    ui.strong("Totals");
    Grid::new("totals").num_columns(2).striped(true).show(ui, |ui| {
        row(ui, "Heat load", format!("{:.2} kW", sol.heat_load_w / 1000.0));
        row(ui, "Water volume", format!("{:.0} l", sol.water_volume_l));
        if let Some(p) = &sol.pump {
            row(ui, "Pump duty", format!("{:.2} m³/h at {:.1} kPa", p.design_flow_m3_h, p.duty_head_pa / 1000.0));
            row(
                ui,
                "Operating point",
                format!("{:.2} m³/h at {:.1} kPa", p.operating_flow_m3_h, p.operating_head_pa / 1000.0),
            );
            row(ui, "Pump control", control_words(p.control));
        }
        if let Some(v) = &sol.vessel {
            let chosen = flowrise_core::parts::vessel_nominal_size_l(v.nominal_volume_l)
                .map_or_else(|| "several vessels".to_owned(), |n| format!("{n:.0} l"));
            row(ui, "Expansion vessel", format!("{chosen} (minimum {:.1} l, EN 12828)", v.nominal_volume_l));
            row(ui, "Expansion volume", format!("{:.1} l", v.expansion_volume_l));
            row(
                ui,
                "Vessel pre-charge",
                format!("{:.2} bar (sized at {:.0} °C)", v.precharge_pressure_bar, v.input.max_temperature_c),
            );
        }
    });
    if let Some(p) = &sol.pump {
        ui.add(egui::Label::new(RichText::new(pump_explanation(p)).small()).wrap());
    }
}

fn row(ui: &mut Ui, name: &str, value: String) {
    ui.label(name);
    ui.label(value);
    ui.end_row();
}

fn set_kind(out: &mut Intents, id: NodeId, kind: NodeKind, field: &str) {
    out.edit_field(Edit::SetNodeKind { id, kind }, field);
}

fn position(ui: &mut Ui, project: &Project, id: NodeId, fs: &mut FieldState, out: &mut Intents) {
    let Some(n) = project.node(id) else { return };
    if let Some(x) = fs.number(ui, "node.x", "x (east)", "m", n.pos.x_m, L::PLAN_COORDINATE_M.scaled(1.0), 2) {
        out.edit_field(Edit::MoveNodes { ids: vec![id], dx_m: x - n.pos.x_m, dy_m: 0.0 }, "node.x");
    }
    if let Some(y) = fs.number(ui, "node.y", "y (north)", "m", n.pos.y_m, L::PLAN_COORDINATE_M.scaled(1.0), 2) {
        out.edit_field(Edit::MoveNodes { ids: vec![id], dx_m: 0.0, dy_m: y - n.pos.y_m }, "node.y");
    }
}

#[allow(clippy::too_many_lines)] // reason: one form per node kind
fn node_inputs(ui: &mut Ui, project: &Project, id: NodeId, fs: &mut FieldState, out: &mut Intents) {
    let Some(node) = project.node(id) else { return };
    Grid::new("node_fields").num_columns(3).spacing([8.0, 4.0]).show(ui, |ui| {
        match &node.kind {
            NodeKind::Emitter(e) => {
                if let Some(v) = fs.text(ui, "em.name", "Name", &e.name) {
                    set_kind(
                        out,
                        id,
                        NodeKind::Emitter(flowrise_core::project::Emitter { name: v, ..e.clone() }),
                        "em.name",
                    );
                }
                if let Some(v) = fs.number(ui, "em.load", "Heat load", "W", e.load_w, L::LOAD_W.scaled(1.0), 0) {
                    set_kind(
                        out,
                        id,
                        NodeKind::Emitter(flowrise_core::project::Emitter { load_w: v, ..e.clone() }),
                        "em.load",
                    );
                }
                if let Some(v) = fs.number(ui, "em.room", "Room", "°C", e.room_c, L::ROOM_C.scaled(1.0), 1) {
                    set_kind(
                        out,
                        id,
                        NodeKind::Emitter(flowrise_core::project::Emitter { room_c: v, ..e.clone() }),
                        "em.room",
                    );
                }
                let label_id = ui.label("Emitter").id;
                let cur = e.model.kind();
                let mut pick = cur;
                egui::ComboBox::from_id_salt("em.model")
                    .selected_text(cur.name())
                    .show_ui(ui, |ui| {
                        for k in EmitterKind::ALL {
                            ui.selectable_value(&mut pick, k, k.name());
                        }
                    })
                    .response
                    .labelled_by(label_id);
                ui.end_row();
                if pick != cur {
                    set_kind(
                        out,
                        id,
                        NodeKind::Emitter(flowrise_core::project::Emitter { model: pick.default_model(), ..e.clone() }),
                        "em.model",
                    );
                }
                model_inputs(ui, id, e, fs, out);
                let label_id = ui.label("Valve").id;
                let mut family = e.valves.valve_family.clone();
                let families: Vec<_> = [ValveKind::ThermostaticRadiator, ValveKind::ManualRadiator]
                    .into_iter()
                    .filter_map(|k| valves::families_of_kind(k).ok())
                    .flatten()
                    .collect();
                egui::ComboBox::from_id_salt("em.valve")
                    .selected_text(&family)
                    .show_ui(ui, |ui| {
                        for f in &families {
                            ui.selectable_value(&mut family, f.id.clone(), &f.name);
                        }
                    })
                    .response
                    .labelled_by(label_id);
                ui.end_row();
                if family != e.valves.valve_family {
                    let mut e2 = e.clone();
                    e2.valves.valve_family = family;
                    e2.valves.presetting = None;
                    set_kind(out, id, NodeKind::Emitter(e2), "em.valve");
                }
                if let Some(ls) = &e.valves.lockshield_setting {
                    ui.label("Lockshield (fixed)");
                    ui.horizontal(|ui| {
                        ui.label(ls);
                        if ui
                            .small_button("Clear")
                            .on_hover_text("Let the design choose the lockshield setting again")
                            .clicked()
                        {
                            let mut e2 = e.clone();
                            e2.valves.lockshield_setting = None;
                            set_kind(out, id, NodeKind::Emitter(e2), "em.lock");
                        }
                    });
                    ui.end_row();
                }
                if let Some(ps) = &e.valves.presetting {
                    ui.label("Presetting (fixed)");
                    ui.horizontal(|ui| {
                        ui.label(ps);
                        if ui
                            .small_button("Clear")
                            .on_hover_text("Let the design choose the presetting again")
                            .clicked()
                        {
                            let mut e2 = e.clone();
                            e2.valves.presetting = None;
                            set_kind(out, id, NodeKind::Emitter(e2), "em.preset");
                        }
                    });
                    ui.end_row();
                }
            }
            NodeKind::Source(s) => {
                let with = |f: &dyn Fn(&mut flowrise_core::project::HeatSource)| {
                    let mut s2 = s.clone();
                    f(&mut s2);
                    NodeKind::Source(s2)
                };
                if let Some(v) = fs.text(ui, "src.name", "Name", &s.name) {
                    set_kind(out, id, with(&|x| x.name.clone_from(&v)), "src.name");
                }
                if let Some(v) = fs.number(
                    ui,
                    "src.cap",
                    "Capacity",
                    "kW",
                    s.capacity_w / 1000.0,
                    L::SOURCE_CAPACITY_W.scaled(1e-3),
                    1,
                ) {
                    set_kind(out, id, with(&|x| x.capacity_w = v * 1000.0), "src.cap");
                }
                if let Some(v) =
                    fs.number(ui, "src.kv", "Source Kv", "m³/h", s.kv_m3_h, L::SOURCE_KV_M3_H.scaled(1.0), 2)
                {
                    set_kind(out, id, with(&|x| x.kv_m3_h = v), "src.kv");
                }
                if let Some((pump, key)) = circuit::pump_inputs(ui, "src", &s.pump, fs) {
                    set_kind(out, id, with(&|x| x.pump = pump.clone()), &key);
                }
            }
            NodeKind::Circuit(c) => circuit::circuit_inputs(ui, id, c, fs, out),
            NodeKind::Separator(x) => circuit::separator_inputs(ui, id, x, fs, out),
            NodeKind::Header(h) => {
                if let Some(v) = fs.text(ui, "hd.name", "Name", &h.name) {
                    let mut h2 = h.clone();
                    h2.name = v;
                    set_kind(out, id, NodeKind::Header(h2), "hd.name");
                }
                if let Some(v) = fs.number(
                    ui,
                    "hd.outlets",
                    "Outlets",
                    "pairs",
                    f64::from(h.outlets),
                    L::HEADER_OUTLETS.scaled(1.0),
                    0,
                ) {
                    let mut h2 = h.clone();
                    h2.outlets = v.round() as u32;
                    set_kind(out, id, NodeKind::Header(h2), "hd.outlets");
                }
                let used = project.runs_at(id).len().saturating_sub(1);
                ui.label("Outlets in use");
                ui.label(format!("{used} of {}", h.outlets));
                ui.end_row();
            }
            NodeKind::Junction => {}
        }
        position(ui, project, id, fs, out);
    });
}

fn model_inputs(ui: &mut Ui, id: NodeId, e: &flowrise_core::project::Emitter, fs: &mut FieldState, out: &mut Intents) {
    let with_model = |m: EmitterModel| NodeKind::Emitter(flowrise_core::project::Emitter { model: m, ..e.clone() });
    match &e.model {
        EmitterModel::Radiator(r) => {
            let label_id = ui.label("Panel type").id;
            let mut code = r.type_code.clone();
            let types: Vec<String> = radiator::radiator_catalog()
                .map(|c| c.types.iter().map(|t| t.code.clone()).collect())
                .unwrap_or_default();
            egui::ComboBox::from_id_salt("rad.type")
                .selected_text(format!("type {code}"))
                .show_ui(ui, |ui| {
                    for t in &types {
                        ui.selectable_value(&mut code, t.clone(), format!("type {t}"));
                    }
                })
                .response
                .labelled_by(label_id);
            ui.end_row();
            if code != r.type_code {
                set_kind(
                    out,
                    id,
                    with_model(EmitterModel::Radiator(RadiatorSpec { type_code: code, ..r.clone() })),
                    "rad.type",
                );
            }
            if let Some(v) =
                fs.number(ui, "rad.h", "Height", "mm", f64::from(r.height_mm), L::RADIATOR_HEIGHT_MM.scaled(1.0), 0)
            {
                set_kind(
                    out,
                    id,
                    with_model(EmitterModel::Radiator(RadiatorSpec { height_mm: v.round() as u32, ..r.clone() })),
                    "rad.h",
                );
            }
            let existing = matches!(r.sizing, RadiatorSizing::Existing { .. });
            ui.label("Sizing");
            let mut ex = existing;
            ui.horizontal(|ui| {
                ui.radio_value(&mut ex, false, "to size");
                ui.radio_value(&mut ex, true, "existing");
            });
            ui.end_row();
            if let RadiatorSizing::Chosen { nominal_output_w, length_mm } = r.sizing {
                ui.label("Installed size");
                ui.label(format!("{length_mm} mm, {nominal_output_w:.0} W nominal (frozen by Installed)"));
                ui.end_row();
            }
            if ex != existing {
                let sizing = match (ex, &r.sizing) {
                    // An installed size becomes the existing radiator it is.
                    (true, RadiatorSizing::Chosen { nominal_output_w, length_mm }) => {
                        RadiatorSizing::Existing { nominal_output_w: *nominal_output_w, length_mm: *length_mm }
                    }
                    (true, _) => RadiatorSizing::Existing { nominal_output_w: 1500.0, length_mm: 1000 },
                    (false, _) => RadiatorSizing::ToSize,
                };
                set_kind(
                    out,
                    id,
                    with_model(EmitterModel::Radiator(RadiatorSpec { sizing, ..r.clone() })),
                    "rad.sizing",
                );
            }
            if let RadiatorSizing::Existing { nominal_output_w, length_mm } = r.sizing {
                if let Some(v) = fs.number(
                    ui,
                    "rad.nom",
                    "Nominal output (75/65/20)",
                    "W",
                    nominal_output_w,
                    L::RADIATOR_NOMINAL_W.scaled(1.0),
                    0,
                ) {
                    let sizing = RadiatorSizing::Existing { nominal_output_w: v, length_mm };
                    set_kind(
                        out,
                        id,
                        with_model(EmitterModel::Radiator(RadiatorSpec { sizing, ..r.clone() })),
                        "rad.nom",
                    );
                }
                if let Some(v) =
                    fs.number(ui, "rad.len", "Length", "mm", f64::from(length_mm), L::RADIATOR_LENGTH_MM.scaled(1.0), 0)
                {
                    let sizing = RadiatorSizing::Existing { nominal_output_w, length_mm: v.round() as u32 };
                    set_kind(
                        out,
                        id,
                        with_model(EmitterModel::Radiator(RadiatorSpec { sizing, ..r.clone() })),
                        "rad.len",
                    );
                }
            }
        }
        EmitterModel::FloorLoop(f) => {
            if let Some(v) = fs.number(ui, "fl.area", "Heated area", "m²", f.area_m2, L::FLOOR_AREA_M2.scaled(1.0), 1)
            {
                set_kind(
                    out,
                    id,
                    with_model(EmitterModel::FloorLoop(FloorLoopSpec { area_m2: v, ..f.clone() })),
                    "fl.area",
                );
            }
            if let Some(v) = fs.number(
                ui,
                "fl.spacing",
                "Pipe spacing",
                "mm",
                f.spacing_m * 1000.0,
                L::FLOOR_SPACING_M.scaled(1000.0),
                0,
            ) {
                set_kind(
                    out,
                    id,
                    with_model(EmitterModel::FloorLoop(FloorLoopSpec { spacing_m: v / 1000.0, ..f.clone() })),
                    "fl.spacing",
                );
            }
            if let Some(v) = fs.number(
                ui,
                "fl.cover",
                "Covering R",
                "m²K/W",
                f.covering_resistance_m2k_w,
                L::FLOOR_COVERING_M2K_W.scaled(1.0),
                3,
            ) {
                set_kind(
                    out,
                    id,
                    with_model(EmitterModel::FloorLoop(FloorLoopSpec { covering_resistance_m2k_w: v, ..f.clone() })),
                    "fl.cover",
                );
            }
            let label_id = ui.label("Zone").id;
            let mut zone = f.zone;
            egui::ComboBox::from_id_salt("fl.zone")
                .selected_text(zone_name(zone))
                .show_ui(ui, |ui| {
                    for z in [FloorZone::Occupied, FloorZone::Edge, FloorZone::Bathroom] {
                        ui.selectable_value(&mut zone, z, zone_name(z));
                    }
                })
                .response
                .labelled_by(label_id);
            ui.end_row();
            if zone != f.zone {
                set_kind(out, id, with_model(EmitterModel::FloorLoop(FloorLoopSpec { zone, ..f.clone() })), "fl.zone");
            }
        }
        EmitterModel::Terminal(t) => {
            if let Some(v) =
                fs.number(ui, "tm.nom", "Nominal output", "W", t.nominal_output_w, L::TERMINAL_NOMINAL_W.scaled(1.0), 0)
            {
                set_kind(
                    out,
                    id,
                    with_model(EmitterModel::Terminal(TerminalSpec { nominal_output_w: v, ..t.clone() })),
                    "tm.nom",
                );
            }
            if let Some(v) = fs.number(ui, "tm.kv", "Coil Kv", "m³/h", t.kv_m3_h, L::TERMINAL_KV_M3_H.scaled(1.0), 2) {
                set_kind(
                    out,
                    id,
                    with_model(EmitterModel::Terminal(TerminalSpec { kv_m3_h: v, ..t.clone() })),
                    "tm.kv",
                );
            }
        }
    }
}

fn zone_name(z: FloorZone) -> &'static str {
    match z {
        FloorZone::Occupied => "occupied (29 °C)",
        FloorZone::Edge => "edge zone (35 °C)",
        FloorZone::Bathroom => "bathroom (33 °C)",
    }
}

fn node_results(ui: &mut Ui, project: &Project, sol: &Solution, id: NodeId) {
    ui.strong("Results");
    Grid::new("node_results").num_columns(2).striped(true).show(ui, |ui| {
        if let Some(r) = sol.emitter(id) {
            row(ui, "Design flow", format!("{:.1} l/h", r.design_flow_l_h));
            // A value in warning colour always has a finding behind it.
            let flagged = |kinds: &[FindingKind]| sol.has_finding(ItemRef::Node(id), kinds);
            let flow = format!("{:.1} l/h ({:+.1} %)", r.flow_l_h, r.flow_deviation * 100.0);
            if flagged(&[FindingKind::FlowOutOfTolerance]) {
                ui.label("Operating flow");
                ui.label(RichText::new(format!("{flow} — outside the tolerance")).color(theme::ERROR));
                ui.end_row();
            } else {
                row(ui, "Operating flow", flow);
            }
            let ret = format!("{:.1} °C", r.return_c);
            if flagged(&[FindingKind::HotReturn]) {
                ui.label("Return (operating)");
                ui.label(RichText::new(format!("{ret} — hot")).color(theme::WARNING));
                ui.end_row();
            } else {
                row(ui, "Return (operating)", ret);
            }
            row(ui, "Output", format!("{:.0} W of {:.0} W", r.output_w, r.load_w));
            let short = (r.load_w - r.output_w).max(0.0);
            if short > 1.0 && !r.closed && flagged(&FindingKind::OUTPUT_SHORT) {
                ui.label(RichText::new("Shortfall").color(theme::ERROR));
                ui.label(RichText::new(format!("{short:.0} W")).color(theme::ERROR));
                ui.end_row();
            }
            row(ui, "Presetting", format!("{}  (Kv {:.3})", r.presetting, r.valve_kv_m3_h));
            row(ui, "Lockshield", format!("{}  (Kv {:.3})", r.lockshield, r.lockshield_kv_m3_h));
            row(ui, "Kv needed", format!("{:.3} m³/h", r.kv_needed_m3_h));
            row(ui, "Valve Δp", format!("{:.1} kPa", r.valve_dp_pa / 1000.0));
            if flagged(&[FindingKind::LowAuthority]) {
                ui.label("Authority");
                ui.label(RichText::new(format!("{:.2} — low", r.authority)).color(theme::WARNING));
                ui.end_row();
            } else {
                row(ui, "Authority", format!("{:.2}", r.authority));
            }
            row(ui, "Circuit Δp (valve open)", format!("{:.1} kPa", r.circuit_dp_open_pa / 1000.0));
            match &r.detail {
                Some(EmitterDetail::Radiator(d)) => {
                    row(ui, "Nominal needed", format!("{:.0} W", d.required_nominal_w));
                    row(ui, "Radiator", format!("{} mm, {:.0} W nominal", d.length_mm, d.nominal_output_w));
                }
                Some(EmitterDetail::FloorLoop(d)) => {
                    row(ui, "Heat flux", format!("{:.0} W/m²", d.heat_flux_w_m2));
                    row(ui, "Surface", format!("{:.1} °C (limit {:.0} °C)", d.mean_surface_c, d.surface_limit_c));
                    row(ui, "Loop", format!("{:.0} m, {:.1} kPa", d.loop_length_m, d.loop_dp_pa / 1000.0));
                }
                _ => {}
            }
            if sol.index_emitter == Some(id) {
                ui.label(RichText::new("Index circuit").color(theme::ACCENT));
                ui.label("largest Δp with valves open");
                ui.end_row();
            }
        } else if matches!(project.node(id).map(|n| &n.kind), Some(NodeKind::Source(_))) {
            if let Some(p) = &sol.pump {
                row(ui, "Design flow", format!("{:.2} m³/h", p.design_flow_m3_h));
                row(ui, "Index circuit Δp", format!("{:.1} kPa", p.index_dp_pa / 1000.0));
                row(ui, "Duty head (+ margin)", format!("{:.1} kPa", p.duty_head_pa / 1000.0));
                row(ui, "Control", control_words(p.control));
                row(ui, "Head at design flow", format!("{:.1} kPa", p.available_pa / 1000.0));
                row(
                    ui,
                    "Operating point",
                    format!("{:.2} m³/h at {:.1} kPa", p.operating_flow_m3_h, p.operating_head_pa / 1000.0),
                );
                row(ui, "Hydraulic power", format!("{:.0} W", p.hydraulic_power_w));
            }
            row(ui, "Heat load", format!("{:.2} kW", sol.heat_load_w / 1000.0));
        } else {
            let runs = project.runs_at(id);
            row(ui, "Runs here", runs.iter().map(ToString::to_string).collect::<Vec<_>>().join(", "));
        }
    });
    if matches!(project.node(id).map(|n| &n.kind), Some(NodeKind::Source(_)))
        && let Some(p) = &sol.pump
    {
        ui.add(egui::Label::new(RichText::new(pump_explanation(p)).small()).wrap());
    }
}

/// The pump's control in words, with its set-point.
fn control_words(c: PumpControl) -> String {
    match c {
        PumpControl::FixedSpeed => "fixed speed".to_owned(),
        PumpControl::ConstantDp { setpoint_kpa } => format!("constant Δp, {setpoint_kpa:.1} kPa"),
        PumpControl::ProportionalDp { setpoint_kpa } => format!("proportional Δp, {setpoint_kpa:.1} kPa"),
    }
}

/// Why the set-point, the duty head and the operating point agree or
/// differ, in sentences.
#[must_use]
pub fn pump_explanation(p: &flowrise_core::design::PumpResult) -> String {
    let kpa = |pa: f64| pa / 1000.0;
    let (duty, avail, op) = (kpa(p.duty_head_pa), kpa(p.available_pa), kpa(p.operating_head_pa));
    let close = |a: f64, b: f64| (a - b).abs() <= 0.05 * a.abs().max(b.abs()).max(0.1);
    let flows_differ = !close(p.operating_flow_m3_h, p.design_flow_m3_h);
    let mut s = String::from("The duty head is what the index circuit needs at the design flow, plus the margin. ");
    if p.on_max_curve {
        s.push_str(&format!(
            "The pump cannot reach its set-point here: it runs on its maximum curve, giving {op:.1} kPa at \
             {:.2} m³/h.",
            p.operating_flow_m3_h
        ));
        return s;
    }
    match p.control {
        PumpControl::FixedSpeed => s.push_str(&format!(
            "At fixed speed the pump gives what its curve gives: {avail:.1} kPa at the design flow{}. The \
             operating point is where its curve meets the network's resistance.",
            if close(avail, duty) {
                String::new()
            } else {
                format!(", {:.1} kPa more than the duty; the presettings take up the difference", avail - duty)
            }
        )),
        PumpControl::ConstantDp { setpoint_kpa } => {
            s.push_str(&format!("Under constant Δp the pump holds {setpoint_kpa:.1} kPa at every flow"));
            if close(setpoint_kpa, duty) {
                s.push_str(", the duty head.");
            } else if setpoint_kpa > duty {
                s.push_str(&format!(
                    ", {:.1} kPa above the duty head; the presettings take up the difference.",
                    setpoint_kpa - duty
                ));
            } else {
                s.push_str(&format!(
                    ", {:.1} kPa below the duty head: the index circuit gets less than it needs.",
                    duty - setpoint_kpa
                ));
            }
            if !close(op, setpoint_kpa) {
                s.push_str(&format!(" The operating head is {op:.1} kPa."));
            }
        }
        PumpControl::ProportionalDp { setpoint_kpa } => {
            s.push_str(&format!(
                "Under proportional Δp the pump gives {setpoint_kpa:.1} kPa at the design flow and less at lower \
                 flows (half at no flow)"
            ));
            if close(setpoint_kpa, duty) {
                s.push_str(", the duty head at the design flow.");
            } else {
                s.push_str(&format!(" (the duty head is {duty:.1} kPa)."));
            }
            if flows_differ {
                s.push_str(&format!(
                    " The network runs at {:.2} m³/h, not the design {:.2} m³/h, so the operating head is the \
                     control law at that flow: {op:.1} kPa.",
                    p.operating_flow_m3_h, p.design_flow_m3_h
                ));
            }
        }
    }
    s
}

fn run_inputs(ui: &mut Ui, project: &Project, sol: &Solution, run: &Run, fs: &mut FieldState, out: &mut Intents) {
    let id = run.id;
    let set = |out: &mut Intents, props: RunProps, field: &str| out.edit_field(Edit::SetRunProps { id, props }, field);
    Grid::new("run_fields").num_columns(3).spacing([8.0, 4.0]).show(ui, |ui| {
        row(ui, "Drawn length", format!("{:.2} m", project.drawn_length_m(run)));
        if let Some(v) = fs.optional_number(
            ui,
            "run.length",
            "Length override",
            "m",
            run.props.length_override_m,
            L::RUN_LENGTH_M.scaled(1.0),
            2,
        ) {
            set(out, RunProps { length_override_m: v, ..run.props.clone() }, "run.length");
        }
        let label_id = ui.label("Pipe class").id;
        let mut class = run.props.class;
        let class_text = |c: Option<PipeClass>| c.map_or("from the layout", PipeClass::name);
        egui::ComboBox::from_id_salt("run.class")
            .selected_text(class_text(class))
            .show_ui(ui, |ui| {
                ui.selectable_value(&mut class, None, class_text(None));
                for c in PipeClass::ALL {
                    ui.selectable_value(&mut class, Some(c), c.name());
                }
            })
            .response
            .labelled_by(label_id);
        ui.end_row();
        if class != run.props.class {
            set(out, RunProps { class, ..run.props.clone() }, "run.class");
        }
        let label_id = ui.label("Size").id;
        let series_id = sol.run_pipes(id).next().map(|p| p.series.to_owned());
        let sizes: Vec<String> = series_id
            .and_then(|s| pipes::find_series(&s).ok())
            .map(|s| s.sizes.iter().map(|z| z.label.clone()).collect())
            .unwrap_or_default();
        let mut fixed = run.props.fixed_size.clone();
        let size_text = |f: &Option<String>| f.clone().unwrap_or_else(|| "sized by design".to_owned());
        egui::ComboBox::from_id_salt("run.size")
            .selected_text(size_text(&fixed))
            .show_ui(ui, |ui| {
                ui.selectable_value(&mut fixed, None, "sized by design");
                for s in &sizes {
                    ui.selectable_value(&mut fixed, Some(s.clone()), s);
                }
            })
            .response
            .labelled_by(label_id);
        ui.end_row();
        if fixed != run.props.fixed_size {
            set(out, RunProps { fixed_size: fixed, ..run.props.clone() }, "run.size");
        }
        let label_id = ui.label("Return layout").id;
        let mut layout = run.props.return_layout;
        let lt = |l: Option<ReturnLayout>| match l {
            None => "inherited",
            Some(ReturnLayout::Direct) => "direct return",
            Some(ReturnLayout::Reverse) => "reverse return",
        };
        egui::ComboBox::from_id_salt("run.return")
            .selected_text(lt(layout))
            .show_ui(ui, |ui| {
                for l in [None, Some(ReturnLayout::Direct), Some(ReturnLayout::Reverse)] {
                    ui.selectable_value(&mut layout, l, lt(l));
                }
            })
            .response
            .labelled_by(label_id);
        ui.end_row();
        if layout != run.props.return_layout {
            set(out, RunProps { return_layout: layout, ..run.props.clone() }, "run.return");
        }
    });
    if let Some(e) = fs.error("run.props") {
        ui.label(RichText::new(e).color(theme::ERROR));
    }
}

fn run_results(ui: &mut Ui, sol: &Solution, id: RunId) {
    ui.strong("Results");
    Grid::new("run_results").num_columns(3).striped(true).show(ui, |ui| {
        ui.label("");
        ui.label("supply");
        ui.label("return");
        ui.end_row();
        let s = sol.run_pipes(id).find(|p| p.side == Side::Supply);
        let r = sol.run_pipes(id).find(|p| p.side == Side::Return);
        let mut line = |name: &str, f: &dyn Fn(&flowrise_core::design::PipeResult) -> String| {
            ui.label(name);
            ui.label(s.map_or_else(|| "—".to_owned(), f));
            ui.label(r.map_or_else(|| "—".to_owned(), f));
            ui.end_row();
        };
        line("Size", &|p| format!("{} ({:.1} mm)", p.size, p.inner_mm));
        line("Length", &|p| format!("{:.2} m", p.length_m));
        line("Flow", &|p| format!("{:.0} l/h", p.flow_l_h));
        line("Velocity", &|p| format!("{:.2} m/s (≤ {:.1})", p.velocity_m_s, p.velocity_limit_m_s));
        line("Gradient", &|p| format!("{:.0} Pa/m (≤ {:.0})", p.gradient_pa_m, p.gradient_limit_pa_m));
        line("Δp", &|p| format!("{:.2} kPa", p.dp_pa / 1000.0));
        line("Water", &|p| format!("{:.0} °C", p.temperature_c));
    });
}
