//! Part-load scenarios: a share of the valves closed, the installed network
//! solved for each pump control (and, with branch Δp controllers, for the
//! same building without them), with each pumped circuit's pump point.

use std::collections::BTreeSet;

use serde::Serialize;

use super::{NOISE_DP_PA, SweepError, csv_text};
use crate::design::{self, Solution, SolveOptions, Workspace, solve_project};
use crate::project::{BranchDevice, Edit, NodeId, NodeKind, Project, RunProps};
use crate::pump::PumpControl;

/// One pump control mode under a part-load scenario.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PartLoadCase {
    /// "fixed speed", "constant Δp", "proportional Δp".
    pub control: String,
    /// The network has its branch Δp controllers (false for a project that
    /// has none, and for the comparison case with them taken out).
    pub branch_controllers: bool,
    /// Pump operating flow, l/h.
    pub pump_flow_l_h: f64,
    /// Pump operating head, kPa.
    pub pump_head_kpa: f64,
    /// Per open emitter: id, flow l/h, flow / design − 1, Δp across its
    /// valves kPa.
    pub emitters: Vec<PartLoadEmitter>,
    /// Largest Δp across an open valve, kPa.
    pub max_valve_dp_kpa: f64,
    /// Findings of this case (noise risk, non-convergence).
    pub warnings: Vec<String>,
    /// Per pumped circuit (empty without): its pump's operating point and
    /// its rooms' worst over-supply. The pump control of the case is the
    /// heat source's; each circuit's pump keeps its own.
    pub circuits: Vec<PartLoadCircuit>,
}

/// One pumped circuit in a part-load case.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PartLoadCircuit {
    /// The circuit's root (source or circuit node).
    pub root: String,
    /// Its name.
    pub name: String,
    /// Its pump's operating flow, l/h.
    pub pump_flow_l_h: f64,
    /// Its pump's operating head, kPa.
    pub pump_head_kpa: f64,
    /// The worst over-supply of its open rooms.
    pub worst_over_supply: f64,
}

impl PartLoadCase {
    /// The worst over-supply of an open emitter (flow / design − 1; 0 when
    /// none is over its design flow).
    #[must_use]
    pub fn worst_over_supply(&self) -> f64 {
        self.emitters.iter().map(|e| e.over_supply).fold(0.0_f64, f64::max)
    }
}

/// An open emitter in a part-load case.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PartLoadEmitter {
    /// Id.
    pub id: String,
    /// Flow, l/h.
    pub flow_l_h: f64,
    /// Over-supply: flow / design − 1.
    pub over_supply: f64,
    /// Δp across valve + lockshield, kPa.
    pub valve_dp_kpa: f64,
}

/// A closed set of `fraction` of the emitters, chosen by a seeded shuffle
/// (deterministic for a seed).
#[must_use]
pub fn random_closed_set(p: &Project, fraction: f64, seed: u64) -> BTreeSet<NodeId> {
    let mut ids = p.emitters();
    let mut state = seed ^ 0x9E37_79B9_7F4A_7C15;
    let mut next = || {
        state = state.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = state;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    };
    for i in (1..ids.len()).rev() {
        let j = (next() % (i as u64 + 1)) as usize;
        ids.swap(i, j);
    }
    let n = ((ids.len() as f64) * fraction.clamp(0.0, 1.0)).round() as usize;
    ids.into_iter().take(n).collect()
}

/// Solve the installed network (sizes and presettings frozen at the
/// design) with `closed` valves shut, once per pump control mode. When the
/// project has branch Δp controllers, the same scenario follows for the
/// same building designed without them (every other device kept), so the
/// two can be compared.
///
/// # Errors
/// [`SweepError`] when the project does not design.
pub fn part_load(p: &Project, closed: &BTreeSet<NodeId>) -> Result<Vec<PartLoadCase>, SweepError> {
    let controlled = p.runs().any(|r| matches!(r.props.device, Some(BranchDevice::DpController { .. })));
    let mut out = part_load_cases(p, closed, controlled)?;
    if controlled {
        let mut without = p.clone();
        let ids: Vec<_> = p
            .runs()
            .filter(|r| matches!(r.props.device, Some(BranchDevice::DpController { .. })))
            .map(|r| (r.id, RunProps { device: None, ..r.props.clone() }))
            .collect();
        for (id, props) in ids {
            without.apply(Edit::SetRunProps { id, props }).map_err(|e| SweepError(e.to_string()))?;
        }
        out.extend(part_load_cases(&without, closed, false)?);
    }
    Ok(out)
}

fn part_load_cases(
    p: &Project,
    closed: &BTreeSet<NodeId>,
    branch_controllers: bool,
) -> Result<Vec<PartLoadCase>, SweepError> {
    let base = solve_project(p, &SolveOptions::default(), &mut Workspace::default());
    if base.has_errors() {
        return Err(SweepError("the project does not design — fix its errors first".to_owned()));
    }
    let mut installed = p.clone();
    installed.apply(design::freeze_edit(p, &base)).map_err(|e| SweepError(e.to_string()))?;
    let Some(src) = installed.sources().first().copied() else {
        return Err(SweepError("no heat source".to_owned()));
    };
    let Some(NodeKind::Source(source)) = installed.node(src).map(|n| n.kind.clone()) else {
        return Err(SweepError("no heat source".to_owned()));
    };
    let duty_kpa = base.pump.as_ref().map_or(20.0, |x| x.duty_head_pa / 1000.0);
    let modes = [
        ("fixed speed", PumpControl::FixedSpeed),
        ("constant Δp", PumpControl::ConstantDp { setpoint_kpa: duty_kpa }),
        ("proportional Δp", PumpControl::ProportionalDp { setpoint_kpa: duty_kpa }),
    ];
    let mut out = Vec::new();
    for (name, control) in modes {
        let mut q = installed.clone();
        let mut s = source.clone();
        s.pump.control = control;
        q.apply(Edit::SetNodeKind { id: src, kind: NodeKind::Source(s) }).map_err(|e| SweepError(e.to_string()))?;
        let opts = SolveOptions { closed_emitters: closed.clone(), ..SolveOptions::default() };
        let sol = solve_project(&q, &opts, &mut Workspace::default());
        let mut warnings = Vec::new();
        if !sol.converged {
            warnings.push("the operating solve did not converge".to_owned());
        }
        if let Some(pump) = sol.pump.as_ref().filter(|x| x.on_max_curve) {
            warnings.push(format!(
                "the pump cannot hold its {name} set-point of {duty_kpa:.1} kPa: it runs on its maximum curve at \
                 {:.1} kPa and {:.0} l/h — choose a larger pump",
                pump.operating_head_pa / 1000.0,
                pump.operating_flow_m3_h * 1000.0
            ));
        }
        let mut emitters = Vec::new();
        let mut max_dp = 0.0_f64;
        for e in sol.emitters.iter().filter(|e| !e.closed) {
            let dp = valve_dp_pa(&sol, e.id);
            max_dp = max_dp.max(dp);
            if dp > NOISE_DP_PA {
                warnings.push(format!(
                    "{} ({}): {:.1} kPa across the valve — above about {:.0} kPa valves may whistle (common practice); \
                     a Δp-controlled pump or a differential-pressure controller limits it",
                    e.name,
                    e.id,
                    dp / 1000.0,
                    NOISE_DP_PA / 1000.0
                ));
            }
            emitters.push(PartLoadEmitter {
                id: e.id.to_string(),
                flow_l_h: e.flow_l_h,
                over_supply: e.flow_deviation,
                valve_dp_kpa: dp / 1000.0,
            });
        }
        let circuits = sol
            .circuits
            .iter()
            .map(|c| PartLoadCircuit {
                root: c.root.to_string(),
                name: c.name.clone(),
                pump_flow_l_h: c.pump.as_ref().map_or(0.0, |x| x.operating_flow_m3_h * 1000.0),
                pump_head_kpa: c.pump.as_ref().map_or(0.0, |x| x.operating_head_pa / 1000.0),
                worst_over_supply: sol
                    .emitters
                    .iter()
                    .filter(|e| !e.closed && c.nodes.contains(&e.id))
                    .map(|e| e.flow_deviation)
                    .fold(0.0_f64, f64::max),
            })
            .collect();
        let pump = sol.pump.as_ref();
        out.push(PartLoadCase {
            circuits,
            control: name.to_owned(),
            branch_controllers,
            pump_flow_l_h: pump.map_or(0.0, |x| x.operating_flow_m3_h * 1000.0),
            pump_head_kpa: pump.map_or(0.0, |x| x.operating_head_pa / 1000.0),
            emitters,
            max_valve_dp_kpa: max_dp / 1000.0,
            warnings,
        });
    }
    Ok(out)
}

/// Pressure difference across an emitter's valve link (valve + lockshield)
/// in the operating solve, Pa.
#[must_use]
pub fn valve_dp_pa(sol: &Solution, id: NodeId) -> f64 {
    let Some(k) = sol.roles.iter().position(|r| *r == design::LinkRole::EmitterValves(id)) else { return 0.0 };
    let Some(l) = sol.network.links.get(k) else { return 0.0 };
    match (sol.node_pressures_pa.get(l.from), sol.node_pressures_pa.get(l.to)) {
        (Some(a), Some(b)) => a - b,
        _ => 0.0,
    }
}

/// The part-load cases as CSV: one row per pump control and open emitter.
///
/// # Errors
/// The `csv` crate's error.
pub fn part_load_csv(cases: &[PartLoadCase]) -> Result<String, csv::Error> {
    let mut w = csv::Writer::from_writer(Vec::new());
    w.write_record([
        "pump_control",
        "branch_controllers",
        "emitter",
        "flow_l_h",
        "over_supply_fraction",
        "valve_dp_kpa",
        "pump_flow_l_h",
        "pump_head_kpa",
    ])?;
    for c in cases {
        for e in &c.emitters {
            w.write_record([
                crate::csv_cell::neutralise(&c.control).into_owned(),
                if c.branch_controllers { "with" } else { "without" }.to_owned(),
                crate::csv_cell::neutralise(&e.id).into_owned(),
                format!("{:.3}", e.flow_l_h),
                format!("{:.6}", e.over_supply),
                format!("{:.4}", e.valve_dp_kpa),
                format!("{:.2}", c.pump_flow_l_h),
                format!("{:.4}", c.pump_head_kpa),
            ])?;
        }
    }
    csv_text(w)
}
