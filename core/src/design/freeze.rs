//! Freezing a solved design into the project (installed mode) and
//! thawing it back (design follows layout). Both are [`Edit`]s, so one
//! switch is one undo step.

use crate::emitters::{EmitterDetail, EmitterModel, RadiatorSizing};
use crate::project::{BranchDevice, DesignSettings, Edit, Mode, NodeKind, Project, RunProps};
use crate::pump::PumpControl;

use super::results::{DeviceResult, Side, Solution};

/// The edit that freezes a solved design into the project and switches to
/// installed mode: every run gets its supply pipe's size as a fixed size,
/// every emitter its presetting and lockshield setting, every radiator to size its chosen size
/// ([`RadiatorSizing::Chosen`], which keeps its design
/// flow), a controlled pump its duty head as set-point.
#[must_use]
pub fn freeze_edit(p: &Project, sol: &Solution) -> Edit {
    let mut edits = Vec::new();
    for run in p.runs() {
        if let Some(pr) = sol.run_pipes(run.id).find(|x| x.side == Side::Supply) {
            let ret = sol.run_pipes(run.id).find(|x| x.side == Side::Return).map(|x| x.size.to_owned());
            let fixed_return_size = ret.filter(|r| *r != pr.size);
            let device = match (&run.props.device, sol.devices.iter().find(|d| d.run == run.id)) {
                (Some(d), Some(res)) => Some(frozen_device(d, res)),
                (d, _) => d.clone(),
            };
            let props =
                RunProps { fixed_size: Some(pr.size.to_owned()), fixed_return_size, device, ..run.props.clone() };
            if props != run.props {
                edits.push(Edit::SetRunProps { id: run.id, props });
            }
        }
    }
    for e in &sol.emitters {
        let Some(node) = p.node(e.id) else { continue };
        let NodeKind::Emitter(em) = &node.kind else { continue };
        let mut frozen = em.clone();
        if !(&*e.presetting == "—" || e.presetting.is_empty()) {
            frozen.valves.presetting = Some(e.presetting.to_string());
            if !e.lockshield.is_empty() {
                frozen.valves.lockshield_setting = Some(e.lockshield.to_string());
            }
        }
        if let (EmitterModel::Radiator(spec), Some(EmitterDetail::Radiator(d))) = (&mut frozen.model, &e.detail)
            && spec.sizing == RadiatorSizing::ToSize
        {
            spec.sizing = d.frozen_sizing();
        }
        if frozen != *em {
            edits.push(Edit::SetNodeKind { id: e.id, kind: NodeKind::Emitter(frozen) });
        }
    }
    if let (Some(pump), Some(src)) = (&sol.pump, p.sources().first().and_then(|&s| p.node(s)))
        && let NodeKind::Source(source) = &src.kind
    {
        let mut source = source.clone();
        source.pump = frozen_pump(&source.pump, pump);
        edits.push(Edit::SetNodeKind { id: src.id, kind: NodeKind::Source(source) });
    }
    // Each pumped circuit's pump keeps its set-point and design flow too.
    for c in &sol.circuits {
        let (Some(pump), Some(NodeKind::Circuit(circuit))) = (&c.pump, p.node(c.root).map(|n| &n.kind)) else {
            continue;
        };
        let mut circuit = circuit.clone();
        circuit.pump = frozen_pump(&circuit.pump, pump);
        edits.push(Edit::SetNodeKind { id: c.root, kind: NodeKind::Circuit(circuit) });
    }
    let settings = DesignSettings { mode: Mode::Installed, ..p.settings.clone() };
    edits.push(Edit::SetSettings(Box::new(settings)));
    Edit::Batch(edits)
}

/// The edit that switches back to *design follows layout*: every fixed pipe
/// size, every presetting and every radiator size frozen by
/// [`freeze_edit`] is released so the design re-chooses them on each edit
/// (undo brings a released value back), and a proportional pump's stored
/// design flow is cleared.
#[must_use]
pub fn thaw_edit(p: &Project) -> Edit {
    let mut edits = Vec::new();
    for run in p.runs() {
        let device = run.props.device.clone().map(|d| match d {
            BranchDevice::BalancingValve { family, .. } => BranchDevice::BalancingValve { family, setting: None },
            BranchDevice::DpController { family, .. } => BranchDevice::DpController { family, setpoint_kpa: None },
        });
        let props = RunProps { fixed_size: None, fixed_return_size: None, device, ..run.props.clone() };
        if props != run.props {
            edits.push(Edit::SetRunProps { id: run.id, props });
        }
    }
    for node in p.nodes() {
        match &node.kind {
            NodeKind::Emitter(em) => {
                let mut thawed = em.clone();
                thawed.valves.presetting = None;
                thawed.valves.lockshield_setting = None;
                if let EmitterModel::Radiator(spec) = &mut thawed.model
                    && matches!(spec.sizing, RadiatorSizing::Chosen { .. })
                {
                    spec.sizing = RadiatorSizing::ToSize;
                }
                if thawed != *em {
                    edits.push(Edit::SetNodeKind { id: node.id, kind: NodeKind::Emitter(thawed) });
                }
            }
            NodeKind::Source(src) if src.pump.design_flow_m3_h.is_some() => {
                let mut src = src.clone();
                src.pump.design_flow_m3_h = None;
                edits.push(Edit::SetNodeKind { id: node.id, kind: NodeKind::Source(src) });
            }
            NodeKind::Circuit(c) if c.pump.design_flow_m3_h.is_some() => {
                let mut c = c.clone();
                c.pump.design_flow_m3_h = None;
                edits.push(Edit::SetNodeKind { id: node.id, kind: NodeKind::Circuit(c) });
            }
            NodeKind::Source(_)
            | NodeKind::Junction
            | NodeKind::Header(_)
            | NodeKind::Circuit(_)
            | NodeKind::Separator(_) => {}
        }
    }
    let settings = DesignSettings { mode: Mode::DesignFollowsLayout, ..p.settings.clone() };
    edits.push(Edit::SetSettings(Box::new(settings)));
    Edit::Batch(edits)
}

/// A device with the model and the setting (or set-point) the design chose.
fn frozen_device(d: &BranchDevice, res: &DeviceResult) -> BranchDevice {
    match d {
        BranchDevice::BalancingValve { family, setting } => BranchDevice::BalancingValve {
            family: family.clone().or_else(|| family_id_of(&res.family, false)),
            setting: setting.clone().or_else(|| (!res.setting.is_empty()).then(|| res.setting.clone())),
        },
        BranchDevice::DpController { family, setpoint_kpa } => BranchDevice::DpController {
            family: family.clone().or_else(|| family_id_of(&res.family, true)),
            setpoint_kpa: setpoint_kpa.or_else(|| res.setting.trim_end_matches(" kPa").parse().ok()),
        },
    }
}

/// The catalog id of a model by its display name.
fn family_id_of(name: &str, controller: bool) -> Option<String> {
    if controller {
        crate::controllers::dp_controllers().ok()?.iter().find(|f| f.name == name).map(|f| f.id.clone())
    } else {
        crate::valves::valve_families().ok()?.iter().find(|f| f.name == name).map(|f| f.id.clone())
    }
}

/// A pump as the design set it: its design flow and, for a controlled pump,
/// the duty head as its set-point.
fn frozen_pump(spec: &crate::project::PumpSpec, pump: &super::PumpResult) -> crate::project::PumpSpec {
    let control = match spec.control {
        PumpControl::ConstantDp { .. } => PumpControl::ConstantDp { setpoint_kpa: pump.duty_head_pa / 1000.0 },
        PumpControl::ProportionalDp { .. } => PumpControl::ProportionalDp { setpoint_kpa: pump.duty_head_pa / 1000.0 },
        PumpControl::FixedSpeed => PumpControl::FixedSpeed,
    };
    crate::project::PumpSpec { design_flow_m3_h: Some(pump.design_flow_m3_h), control, ..spec.clone() }
}
