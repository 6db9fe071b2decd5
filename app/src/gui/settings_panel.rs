//! Design settings: temperatures, velocity limits per class, gradient
//! limit, pipe series per class, pump head margin, return layout, mode.
//! Every change is one `Edit::SetSettings`; a refused one shows its reason
//! beside the field.

use egui::{Grid, RichText, Ui};
use flowrise_core::design::{Solution, freeze_edit};
use flowrise_core::pipes;
use flowrise_core::project::limits as L;
use flowrise_core::project::{DesignSettings, Edit, Mode, PipeClass, Project, ReturnLayout};

use super::fields::FieldState;
use super::intents::Intents;

fn set(out: &mut Intents, s: DesignSettings, field: &str) {
    out.edit_field(Edit::SetSettings(Box::new(s)), field);
}

/// The edit that switches between the two modes.
#[must_use]
pub fn mode_edit(project: &Project, sol: &Solution, mode: Mode) -> Edit {
    match mode {
        Mode::Installed => freeze_edit(project, sol),
        Mode::DesignFollowsLayout => flowrise_core::design::thaw_edit(project),
    }
}

/// Show the settings form.
pub fn show(ui: &mut Ui, project: &Project, sol: &Solution, fs: &mut FieldState, out: &mut Intents) {
    let s = &project.settings;
    Grid::new("settings_fields").num_columns(3).spacing([8.0, 4.0]).show(ui, |ui| {
        if let Some(v) = fs.number(ui, "set.supply", "Supply", "°C", s.supply_c, L::SUPPLY_C.scaled(1.0), 1) {
            set(out, DesignSettings { supply_c: v, ..s.clone() }, "set.supply");
        }
        if let Some(v) = fs.number(ui, "set.return", "Return", "°C", s.return_c, L::RETURN_C.scaled(1.0), 1) {
            set(out, DesignSettings { return_c: v, ..s.clone() }, "set.return");
        }
        if let Some(v) = fs.number(ui, "set.room", "Default room", "°C", s.room_c, L::ROOM_C.scaled(1.0), 1) {
            set(out, DesignSettings { room_c: v, ..s.clone() }, "set.room");
        }
        for class in PipeClass::ALL {
            let key = format!("set.v.{class:?}");
            let v0 = *s.velocity_limit_m_s.get(class);
            if let Some(v) = fs.number(
                ui,
                &key,
                &format!("Velocity limit, {}", class.name()),
                "m/s",
                v0,
                L::VELOCITY_LIMIT_M_S.scaled(1.0),
                2,
            ) {
                let mut s2 = s.clone();
                *s2.velocity_limit_m_s.get_mut(class) = v;
                set(out, s2, &key);
            }
        }
        if let Some(v) = fs.number(
            ui,
            "set.vreserve",
            "Velocity sizing reserve",
            "%",
            s.velocity_reserve_fraction * 100.0,
            L::VELOCITY_RESERVE_FRACTION.scaled(100.0),
            1,
        ) {
            set(out, DesignSettings { velocity_reserve_fraction: v / 100.0, ..s.clone() }, "set.vreserve");
        }
        if let Some(v) = fs.number(
            ui,
            "set.grad",
            "Gradient limit",
            "Pa/m",
            s.gradient_limit_pa_m,
            L::GRADIENT_LIMIT_PA_M.scaled(1.0),
            0,
        ) {
            set(out, DesignSettings { gradient_limit_pa_m: v, ..s.clone() }, "set.grad");
        }
        // Behind Δp controllers: the general limit, or an own (lower) one.
        ui.label("Behind Δp controllers");
        let mut own = s.controlled_gradient_limit_pa_m.is_some();
        let toggled = ui
            .checkbox(&mut own, "own gradient limit")
            .on_hover_text(
                "Size the pipes inside a branch held by a differential-pressure controller to a lower gradient, so \
                 they stay a small share of the Δp it holds and the radiator valves keep their authority when other \
                 rooms close",
            )
            .changed();
        ui.end_row();
        if toggled {
            // Ticked: the limit the generated buildings use (measured in
            // docs/part-load.md), never above the general one.
            let g = own.then(|| {
                flowrise_core::generate::CONTROLLED_GRADIENT_LIMIT_PA_M
                    .min(s.gradient_limit_pa_m)
                    .max(L::GRADIENT_LIMIT_PA_M.min)
            });
            set(out, DesignSettings { controlled_gradient_limit_pa_m: g, ..s.clone() }, "set.cgrad");
        }
        if let Some(g0) = s.controlled_gradient_limit_pa_m
            && let Some(v) =
                fs.number(ui, "set.cgrad", "Gradient limit there", "Pa/m", g0, L::GRADIENT_LIMIT_PA_M.scaled(1.0), 0)
        {
            set(out, DesignSettings { controlled_gradient_limit_pa_m: Some(v), ..s.clone() }, "set.cgrad");
        }
        if let Some(v) = fs.number(
            ui,
            "set.margin",
            "Pump head margin",
            "%",
            s.head_margin_fraction * 100.0,
            L::HEAD_MARGIN_FRACTION.scaled(100.0),
            0,
        ) {
            set(out, DesignSettings { head_margin_fraction: v / 100.0, ..s.clone() }, "set.margin");
        }
        if let Some(v) = fs.number(
            ui,
            "set.minvalve",
            "Min. valve Δp",
            "kPa",
            s.min_valve_dp_pa / 1000.0,
            L::MIN_VALVE_DP_PA.scaled(1e-3),
            1,
        ) {
            set(out, DesignSettings { min_valve_dp_pa: v * 1000.0, ..s.clone() }, "set.minvalve");
        }
        if let Some(v) = fs.number(
            ui,
            "set.tolerance",
            "Flow tolerance (±)",
            "%",
            s.flow_tolerance_fraction * 100.0,
            L::FLOW_TOLERANCE_FRACTION.scaled(100.0),
            0,
        ) {
            set(out, DesignSettings { flow_tolerance_fraction: v / 100.0, ..s.clone() }, "set.tolerance");
        }
        if let Some(v) = fs.number(
            ui,
            "set.hotreturn",
            "Hot-return margin",
            "K",
            s.hot_return_margin_k,
            L::HOT_RETURN_MARGIN_K.scaled(1.0),
            1,
        ) {
            set(out, DesignSettings { hot_return_margin_k: v, ..s.clone() }, "set.hotreturn");
        }
        let all_series = pipes::builtin_series().unwrap_or_default();
        for class in PipeClass::ALL {
            let label_id = ui.label(format!("Series, {}", class.name())).id;
            let mut id = s.series.get(class).clone();
            let name_of =
                |id: &str| all_series.iter().find(|x| x.id == id).map_or_else(|| id.to_owned(), |x| x.name.clone());
            egui::ComboBox::from_id_salt(format!("set.series.{class:?}"))
                .selected_text(name_of(&id))
                .width(170.0)
                .show_ui(ui, |ui| {
                    for x in all_series {
                        ui.selectable_value(&mut id, x.id.clone(), &x.name).on_hover_text(&x.standard);
                    }
                })
                .response
                .labelled_by(label_id);
            ui.end_row();
            if &id != s.series.get(class) {
                let mut s2 = s.clone();
                *s2.series.get_mut(class) = id;
                set(out, s2, "set.series");
            }
        }
        ui.label("Return layout");
        let mut layout = s.return_layout;
        ui.horizontal(|ui| {
            ui.radio_value(&mut layout, ReturnLayout::Direct, "direct");
            ui.radio_value(&mut layout, ReturnLayout::Reverse, "reverse");
        });
        ui.end_row();
        if layout != s.return_layout {
            set(out, DesignSettings { return_layout: layout, ..s.clone() }, "set.layout");
        }
        ui.label("Mode");
        let mut mode = s.mode;
        ui.horizontal(|ui| {
            ui.radio_value(&mut mode, Mode::DesignFollowsLayout, "design follows layout");
            ui.radio_value(&mut mode, Mode::Installed, "installed");
        });
        ui.end_row();
        if mode != s.mode {
            out.edit_field(mode_edit(project, sol, mode), "set.mode");
        }
    });
    if let Some(e) = fs.error("set.series").or(fs.error("set.mode")).or(fs.error("set.layout")) {
        ui.label(RichText::new(e).color(super::theme::ERROR));
    }
    ui.label(
        RichText::new("Limits are common practice, not code requirements; change them to suit the job.").small().weak(),
    );
}
