//! Inspector forms of a pumped circuit and a hydraulic separator, and the
//! pump inputs (control, set-point, curve) shared with the heat source.

use egui::Ui;
use flowrise_core::design::Solution;
use flowrise_core::project::limits as L;
use flowrise_core::project::{CircuitConnection, NodeId, NodeKind, PumpSpec, PumpedCircuit, Separator};
use flowrise_core::pump::PumpControl;

use super::super::fields::FieldState;
use super::super::intents::Intents;
use super::{row, set_kind};

/// Control, set-point and curve of a pump; the changed pump and the field
/// key when the user edited one. Rows of the caller's 3-column grid.
pub(super) fn pump_inputs(ui: &mut Ui, key: &str, pump: &PumpSpec, fs: &mut FieldState) -> Option<(PumpSpec, String)> {
    let mut out = None;
    let label_id = ui.label("Pump control").id;
    let names = ["Fixed speed", "Constant Δp", "Proportional Δp"];
    let (cur, sp) = match pump.control {
        PumpControl::FixedSpeed => (0, 40.0),
        PumpControl::ConstantDp { setpoint_kpa } => (1, setpoint_kpa),
        PumpControl::ProportionalDp { setpoint_kpa } => (2, setpoint_kpa),
    };
    let mut pick = cur;
    egui::ComboBox::from_id_salt(format!("{key}.control"))
        .selected_text(names[cur])
        .show_ui(ui, |ui| {
            for (i, n) in names.iter().enumerate() {
                ui.selectable_value(&mut pick, i, *n);
            }
        })
        .response
        .labelled_by(label_id);
    ui.end_row();
    let control = |i: usize, sp: f64| match i {
        1 => PumpControl::ConstantDp { setpoint_kpa: sp },
        2 => PumpControl::ProportionalDp { setpoint_kpa: sp },
        _ => PumpControl::FixedSpeed,
    };
    if pick != cur {
        out = Some((PumpSpec { control: control(pick, sp), ..pump.clone() }, format!("{key}.control")));
    }
    let k = format!("{key}.sp");
    if cur != 0
        && let Some(v) = fs.number(ui, &k, "Set-point", "kPa", sp, L::PUMP_SETPOINT_KPA.scaled(1.0), 1)
    {
        out = Some((PumpSpec { control: control(cur, v), ..pump.clone() }, k));
    }
    for (i, (q, h)) in pump.curve_points.iter().enumerate() {
        let kq = format!("{key}.q{i}");
        let label = format!("Curve point {} flow", i + 1);
        if let Some(v) = fs.number(ui, &kq, &label, "m³/h", *q, L::PUMP_CURVE_FLOW_M3_H.scaled(1.0), 2) {
            let mut p2 = pump.clone();
            p2.curve_points[i].0 = v;
            out = Some((p2, kq));
        }
        let kh = format!("{key}.h{i}");
        let label = format!("Curve point {} head", i + 1);
        if let Some(v) = fs.number(ui, &kh, &label, "kPa", *h, L::PUMP_CURVE_HEAD_KPA.scaled(1.0), 1) {
            let mut p2 = pump.clone();
            p2.curve_points[i].1 = v;
            out = Some((p2, kh));
        }
    }
    out
}

/// The form of a pumped circuit.
pub(super) fn circuit_inputs(ui: &mut Ui, id: NodeId, c: &PumpedCircuit, fs: &mut FieldState, out: &mut Intents) {
    let with = |f: &dyn Fn(&mut PumpedCircuit)| {
        let mut c2 = c.clone();
        f(&mut c2);
        NodeKind::Circuit(c2)
    };
    if let Some(v) = fs.text(ui, "ci.name", "Name", &c.name) {
        set_kind(out, id, with(&|x| x.name.clone_from(&v)), "ci.name");
    }
    let label_id = ui.label("Connection").id;
    let mut pick = c.connection;
    egui::ComboBox::from_id_salt("ci.connection")
        .selected_text(c.connection.name())
        .show_ui(ui, |ui| {
            for k in CircuitConnection::ALL {
                ui.selectable_value(&mut pick, k, k.name());
            }
        })
        .response
        .on_hover_text(
            "Mixing valve or injection: the circuit runs colder than the network feeding it. Pump only: on a \
             hydraulic separator, at the separator's supply temperature.",
        )
        .labelled_by(label_id);
    ui.end_row();
    if pick != c.connection {
        set_kind(out, id, with(&|x| x.connection = pick), "ci.connection");
    }
    if c.connection != CircuitConnection::Direct
        && let Some(v) = fs.number(ui, "ci.supply", "Circuit supply", "°C", c.supply_c, L::SUPPLY_C.scaled(1.0), 1)
    {
        set_kind(out, id, with(&|x| x.supply_c = v), "ci.supply");
    }
    if let Some(v) = fs.number(ui, "ci.return", "Circuit return", "°C", c.return_c, L::RETURN_C.scaled(1.0), 1) {
        set_kind(out, id, with(&|x| x.return_c = v), "ci.return");
    }
    if c.connection != CircuitConnection::Direct
        && let Some(v) =
            fs.number(ui, "ci.kvs", "Valve Kvs", "m³/h", c.valve_kvs_m3_h, L::CIRCUIT_VALVE_KVS_M3_H.scaled(1.0), 2)
    {
        set_kind(out, id, with(&|x| x.valve_kvs_m3_h = v), "ci.kvs");
    }
    if let Some((pump, key)) = pump_inputs(ui, "ci.pump", &c.pump, fs) {
        set_kind(out, id, with(&|x| x.pump = pump.clone()), &key);
    }
}

/// The form of a hydraulic separator.
pub(super) fn separator_inputs(ui: &mut Ui, id: NodeId, x: &Separator, fs: &mut FieldState, out: &mut Intents) {
    if let Some(v) = fs.text(ui, "sep.name", "Name", &x.name) {
        set_kind(out, id, NodeKind::Separator(Separator { name: v, ..x.clone() }), "sep.name");
    }
    if let Some(v) = fs.number(ui, "sep.kv", "Kv (feed side)", "m³/h", x.kv_m3_h, L::SOURCE_KV_M3_H.scaled(1.0), 1) {
        set_kind(out, id, NodeKind::Separator(Separator { kv_m3_h: v, ..x.clone() }), "sep.kv");
    }
}

/// Results of a pumped circuit: temperatures, flows on both sides, pump.
pub(super) fn circuit_results(ui: &mut Ui, sol: &Solution, id: NodeId) {
    let Some(c) = sol.circuits.iter().find(|c| c.root == id) else {
        ui.label("No result for this circuit — see its findings.");
        return;
    };
    egui::Grid::new("circuit_results").num_columns(2).striped(true).show(ui, |ui| {
        row(ui, "Temperatures", format!("{:.0}/{:.0} °C (fed at {:.0} °C)", c.supply_c, c.return_c, c.feed_supply_c));
        row(ui, "Heat", format!("{:.2} kW (design {:.2} kW)", c.heat_w / 1000.0, c.heat_load_w / 1000.0));
        row(ui, "Circuit flow", format!("{:.0} l/h (design {:.0})", c.flow_l_h, c.design_flow_l_h));
        row(ui, "Primary flow", format!("{:.0} l/h (design {:.0})", c.primary_flow_l_h, c.primary_design_flow_l_h));
        if c.connection == Some(CircuitConnection::MixingValve) {
            row(ui, "Bypass flow", format!("{:.0} l/h", (c.flow_l_h - c.primary_flow_l_h).max(0.0)));
        }
        row(ui, "Mixed return", format!("{:.1} °C", c.operating_return_c));
        if c.feed_dp_needed_pa > 0.0 {
            row(
                ui,
                "Feed Δp",
                format!(
                    "{:.1} kPa given, {:.2} kPa needed",
                    c.feed_dp_available_pa / 1000.0,
                    c.feed_dp_needed_pa / 1000.0
                ),
            );
        }
        if let Some(p) = &c.pump {
            row(ui, "Pump duty", format!("{:.2} m³/h at {:.1} kPa", p.design_flow_m3_h, p.duty_head_pa / 1000.0));
            row(
                ui,
                "Operating point",
                format!("{:.2} m³/h at {:.1} kPa", p.operating_flow_m3_h, p.operating_head_pa / 1000.0),
            );
        }
        if let Some(e) = c.index_emitter {
            row(ui, "Index circuit", e.to_string());
        }
    });
}
