//! The commissioning schedule: per valve (each emitter's presetting valve
//! and lockshield; balancing devices where the network has them) the
//! setting the installer sets, the design flow through it and the Δp
//! expected across it at that flow — what the commissioning engineer
//! measures to prove the balance. Made from the solved design, sorted by
//! level and item (deterministic), written as CSV by
//! `flowrise commissioning` and shown in the report.

use serde::Serialize;

use crate::csv_cell;
use crate::design::Solution;
use crate::project::{NodeKind, Project};
use crate::valves;

/// What a line of the schedule is.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Device {
    /// An emitter's presetting valve (supply).
    Valve,
    /// An emitter's lockshield (return).
    Lockshield,
    /// A balancing valve on a branch.
    BalancingValve,
    /// A differential-pressure controller on a branch (its setting is the
    /// set-point; its Δp the one it holds across the branch).
    DpController,
}

impl Device {
    /// Words for the schedule.
    #[must_use]
    pub fn label(self) -> &'static str {
        match self {
            Self::Valve => "valve",
            Self::Lockshield => "lockshield",
            Self::BalancingValve => "balancing valve",
            Self::DpController => "Δp controller",
        }
    }
}

/// One valve to set.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ScheduleLine {
    /// Level name.
    pub level: String,
    /// Item id (`N12`).
    pub item: String,
    /// Room or device name.
    pub name: String,
    /// Which device.
    pub device: Device,
    /// Valve family (catalog name).
    pub family: String,
    /// Setting to set.
    pub setting: String,
    /// Kv at that setting, m³/h.
    pub kv_m3_h: f64,
    /// Design flow through it, l/h.
    pub design_flow_l_h: f64,
    /// Δp expected across it at the design flow, kPa.
    pub dp_kpa: f64,
}

/// The schedule of a solved design (closed valves and emitters without a
/// design flow are left out: nothing to set).
#[must_use]
pub fn schedule(p: &Project, sol: &Solution) -> Vec<ScheduleLine> {
    let mut out = Vec::with_capacity(2 * sol.emitters.len());
    for e in &sol.emitters {
        if e.design_flow_kg_s <= 0.0 {
            continue;
        }
        let Some(NodeKind::Emitter(em)) = p.node(e.id).map(|n| &n.kind) else { continue };
        let name_of = |id: &str| valves::valve_family(id).map_or_else(|_| id.to_owned(), |f| f.name.clone());
        out.push(ScheduleLine {
            level: e.level.to_string(),
            item: e.id.to_string(),
            name: e.name.to_string(),
            device: Device::Valve,
            family: name_of(&em.valves.valve_family),
            setting: e.presetting.to_string(),
            kv_m3_h: e.valve_kv_m3_h,
            design_flow_l_h: e.design_flow_l_h,
            dp_kpa: e.valve_dp_pa / 1000.0,
        });
        out.push(ScheduleLine {
            level: e.level.to_string(),
            item: e.id.to_string(),
            name: e.name.to_string(),
            device: Device::Lockshield,
            family: name_of(&em.valves.lockshield_family),
            setting: e.lockshield.to_string(),
            kv_m3_h: e.lockshield_kv_m3_h,
            design_flow_l_h: e.design_flow_l_h,
            dp_kpa: e.lockshield_dp_pa / 1000.0,
        });
    }
    for d in &sol.devices {
        let level = p.node(d.branch).and_then(|n| p.level(n.level)).map_or_else(String::new, |l| l.name.clone());
        let controller = d.kind == "Δp controller";
        out.push(ScheduleLine {
            level,
            item: d.run.to_string(),
            name: format!("branch from {}", d.branch),
            device: if controller { Device::DpController } else { Device::BalancingValve },
            family: d.family.clone(),
            setting: d.setting.clone(),
            kv_m3_h: d.kv_m3_h,
            design_flow_l_h: d.design_flow_l_h,
            // A controller: the Δp it holds across its branch; a valve: the
            // Δp across it.
            dp_kpa: if controller { d.branch_dp_pa } else { d.design_dp_pa } / 1000.0,
        });
    }
    // Emitters come in id order; a level's lines together, in the order
    // the levels are listed.
    let level_rank = |name: &str| p.levels.iter().position(|l| l.name == name).unwrap_or(usize::MAX);
    out.sort_by_key(|l| level_rank(&l.level));
    out
}

/// Header of the schedule CSV.
pub const CSV_HEADER: [&str; 9] =
    ["level", "item", "name", "device", "family", "setting", "kv_m3_h", "design_flow_l_h", "dp_kpa"];

/// The schedule as CSV (UTF-8, header row, units in the column names; text
/// cells neutralised against spreadsheet formulas).
///
/// # Errors
/// The `csv` crate's error (writing to memory does not fail in practice).
pub fn schedule_csv(lines: &[ScheduleLine]) -> Result<String, csv::Error> {
    let mut w = csv::Writer::from_writer(Vec::new());
    w.write_record(CSV_HEADER)?;
    for l in lines {
        let text = |t: &str| csv_cell::neutralise(t).into_owned();
        w.write_record([
            text(&l.level),
            text(&l.item),
            text(&l.name),
            l.device.label().to_owned(),
            text(&l.family),
            text(&l.setting),
            format!("{:.4}", l.kv_m3_h),
            format!("{:.2}", l.design_flow_l_h),
            format!("{:.3}", l.dp_kpa),
        ])?;
    }
    let bytes = w.into_inner().map_err(|e| csv::Error::from(e.into_error()))?;
    Ok(String::from_utf8_lossy(&bytes).into_owned())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::design::{SolveOptions, Workspace, solve_project};
    use crate::generate::{BuildingSpec, generate_building};

    #[test]
    fn every_emitter_has_its_valve_and_lockshield_with_the_expected_dp() {
        let p = generate_building(&BuildingSpec::new(2, 6)).unwrap();
        let sol = solve_project(&p, &SolveOptions::default(), &mut Workspace::default());
        let lines = schedule(&p, &sol);
        // Valve and lockshield per emitter, one line per branch controller.
        assert_eq!(lines.len(), 2 * sol.emitters.len() + sol.devices.len());
        assert!(!sol.devices.is_empty());
        for l in lines.iter().filter(|l| matches!(l.device, Device::Valve | Device::Lockshield)) {
            let e = sol.emitters.iter().find(|e| e.id.to_string() == l.item).unwrap();
            // Δp = 10⁵·(Q/Kv)²·ρ/1000 (IEC 60534-1) at the design flow.
            let q = e.design_flow_l_h / 1000.0;
            let rho = 0.5
                * (crate::water::density_kg_m3(p.settings.supply_c).unwrap()
                    + crate::water::density_kg_m3(p.settings.return_c).unwrap());
            let dp = valves::dp_pa_from_kv(
                q * crate::water::density_kg_m3(p.settings.supply_c).unwrap() / rho,
                l.kv_m3_h,
                rho,
            )
            .unwrap()
                / 1000.0;
            assert!((l.dp_kpa - dp).abs() <= 1e-9 * dp.max(1.0), "{l:?}: {dp}");
            assert!(!l.setting.is_empty(), "{l:?}");
        }
        let csv = schedule_csv(&lines).unwrap();
        assert_eq!(csv.lines().count(), lines.len() + 1);
        assert!(csv.starts_with("level,item,name,device,family,setting,kv_m3_h,design_flow_l_h,dp_kpa\n"));
    }
}
