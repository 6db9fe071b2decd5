//! The balancing device of a run in the inspector: none, a static balancing
//! valve or a Δp controller; its model and setting (or set-point), and what
//! the solve says it does.

use egui::{Grid, RichText, Ui};
use flowrise_core::controllers;
use flowrise_core::design::{FindingKind, ItemRef, Solution};
use flowrise_core::project::limits as L;
use flowrise_core::project::{BranchDevice, Edit, Run, RunProps};
use flowrise_core::valves::{self, ValveKind};

use super::super::fields::FieldState;
use super::super::intents::Intents;
use super::super::theme;

/// Which device, without its parameters (the combo box's value).
#[derive(Clone, Copy, PartialEq, Eq)]
enum Kind {
    None,
    Valve,
    Controller,
}

const fn kind_of(d: Option<&BranchDevice>) -> Kind {
    match d {
        None => Kind::None,
        Some(BranchDevice::BalancingValve { .. }) => Kind::Valve,
        Some(BranchDevice::DpController { .. }) => Kind::Controller,
    }
}

const fn kind_text(k: Kind) -> &'static str {
    match k {
        Kind::None => "none",
        Kind::Valve => "balancing valve",
        Kind::Controller => "Δp controller",
    }
}

/// Device inputs of `run`; edits go out as one `SetRunProps`.
pub(super) fn inputs(ui: &mut Ui, run: &Run, fs: &mut FieldState, out: &mut Intents) {
    let id = run.id;
    let set = |out: &mut Intents, device: Option<BranchDevice>, field: &str| {
        out.edit_field(Edit::SetRunProps { id, props: RunProps { device, ..run.props.clone() } }, field);
    };
    let device = run.props.device.as_ref();
    Grid::new("run_device").num_columns(3).spacing([8.0, 4.0]).show(ui, |ui| {
        let label_id = ui.label("Balancing device").id;
        let current = kind_of(device);
        let mut kind = current;
        egui::ComboBox::from_id_salt("run.device")
            .selected_text(kind_text(kind))
            .show_ui(ui, |ui| {
                for k in [Kind::None, Kind::Valve, Kind::Controller] {
                    ui.selectable_value(&mut kind, k, kind_text(k));
                }
            })
            .response
            .on_hover_text(
                "A device on this run makes everything downstream a zone: its emitters are balanced against what the \
                 device leaves them.",
            )
            .labelled_by(label_id);
        ui.end_row();
        if kind != current {
            let d = match kind {
                Kind::None => None,
                Kind::Valve => Some(BranchDevice::BalancingValve { family: None, setting: None }),
                Kind::Controller => Some(BranchDevice::DpController { family: None, setpoint_kpa: None }),
            };
            set(out, d, "run.device");
            return;
        }
        match device {
            None => {}
            Some(BranchDevice::BalancingValve { family, setting }) => {
                let families: Vec<&valves::ValveFamily> = valves::valve_families()
                    .map(|fs| fs.iter().filter(|f| f.kind == ValveKind::Balancing).collect())
                    .unwrap_or_default();
                let models: Vec<(&str, &str)> = families.iter().map(|f| (f.id.as_str(), f.name.as_str())).collect();
                let fam = model_combo(ui, family.as_deref(), &models);
                if fam != *family {
                    // A new model keeps no setting of the old one.
                    set(out, Some(BranchDevice::BalancingValve { family: fam, setting: None }), "run.device.model");
                    return;
                }
                let settings: Vec<String> = family
                    .as_ref()
                    .and_then(|id| families.iter().find(|f| f.id == *id))
                    .map(|f| f.settings.iter().map(|s| s.label.clone()).collect())
                    .unwrap_or_default();
                let label_id = ui.label("Setting").id;
                let mut st = setting.clone();
                let st_text = |s: &Option<String>| s.clone().unwrap_or_else(|| "chosen by the design".to_owned());
                ui.add_enabled_ui(family.is_some(), |ui| {
                    egui::ComboBox::from_id_salt("run.device.setting")
                        .selected_text(st_text(&st))
                        .show_ui(ui, |ui| {
                            ui.selectable_value(&mut st, None, st_text(&None));
                            for s in &settings {
                                ui.selectable_value(&mut st, Some(s.clone()), s);
                            }
                        })
                        .response
                        .on_disabled_hover_text("Pick a model first; its handwheel settings are listed then.")
                        .labelled_by(label_id);
                });
                ui.end_row();
                if st != *setting {
                    set(
                        out,
                        Some(BranchDevice::BalancingValve { family: family.clone(), setting: st }),
                        "run.device.setting",
                    );
                }
            }
            Some(BranchDevice::DpController { family, setpoint_kpa }) => {
                let families = controllers::dp_controllers().unwrap_or_default();
                let models: Vec<(&str, &str)> = families.iter().map(|f| (f.id.as_str(), f.name.as_str())).collect();
                let fam = model_combo(ui, family.as_deref(), &models);
                if fam != *family {
                    set(
                        out,
                        Some(BranchDevice::DpController { family: fam, setpoint_kpa: *setpoint_kpa }),
                        "run.device.model",
                    );
                    return;
                }
                if let Some(v) = fs.optional_number(
                    ui,
                    "run.device.setpoint",
                    "Set-point (empty = by design)",
                    "kPa",
                    *setpoint_kpa,
                    L::DP_CONTROLLER_SETPOINT_KPA.scaled(1.0),
                    1,
                ) {
                    set(
                        out,
                        Some(BranchDevice::DpController { family: family.clone(), setpoint_kpa: v }),
                        "run.device.setpoint",
                    );
                }
            }
        }
    });
    for key in ["run.device", "run.device.model", "run.device.setting"] {
        if let Some(e) = fs.error(key) {
            ui.label(RichText::new(e).color(theme::ERROR));
        }
    }
}

/// The model of a device: "chosen by the design" or one of `models` (id,
/// name); the choice as an owned id. One row of the caller's grid.
fn model_combo(ui: &mut Ui, current: Option<&str>, models: &[(&str, &str)]) -> Option<String> {
    let name_of = |id: Option<&str>| {
        id.map_or_else(
            || "chosen by the design".to_owned(),
            |id| models.iter().find(|m| m.0 == id).map_or_else(|| id.to_owned(), |m| m.1.to_owned()),
        )
    };
    let label_id = ui.label("Model").id;
    let mut pick = current.map(str::to_owned);
    egui::ComboBox::from_id_salt("run.device.model")
        .selected_text(name_of(current))
        .show_ui(ui, |ui| {
            ui.selectable_value(&mut pick, None, name_of(None));
            for (id, name) in models {
                ui.selectable_value(&mut pick, Some((*id).to_owned()), *name);
            }
        })
        .response
        .labelled_by(label_id);
    ui.end_row();
    pick
}

/// What the solve says the device of `run` does (nothing when it has none).
pub(super) fn results(ui: &mut Ui, sol: &Solution, run: &Run) {
    let Some(d) = sol.devices.iter().find(|d| d.run == run.id) else { return };
    ui.add_space(4.0);
    ui.strong(format!("{} — {}", d.kind, d.family));
    let flagged = sol.has_finding(ItemRef::Run(run.id), &FindingKind::DEVICE);
    Grid::new("run_device_results").num_columns(2).striped(true).show(ui, |ui| {
        let mut row = |name: &str, value: String, warn: bool| {
            ui.label(name);
            if warn {
                ui.label(RichText::new(value).color(theme::WARNING));
            } else {
                ui.label(value);
            }
            ui.end_row();
        };
        let setting_word = if d.kind == "Δp controller" { "Set-point" } else { "Setting" };
        row(setting_word, d.setting.clone(), false);
        row("Kv", format!("{:.2} m³/h", d.kv_m3_h), false);
        row(
            "Flow",
            format!("{:.0} l/h (design {:.0}, {:+.1} %)", d.flow_l_h, d.design_flow_l_h, d.flow_deviation * 100.0),
            flagged,
        );
        row("Δp across it", format!("{:.1} kPa (design {:.1})", d.dp_pa / 1000.0, d.design_dp_pa / 1000.0), false);
        row("Branch Δp", format!("{:.1} kPa (needs {:.1})", d.held_dp_pa / 1000.0, d.branch_dp_pa / 1000.0), false);
        row("State", d.state.label().to_owned(), flagged);
    });
}
