//! Differential-pressure controllers: the catalog (embedded from
//! `assets/controllers/dp-controllers.ron`, demo data) and the controller's
//! proportional law.
//!
//! A self-acting Δp controller sits on a branch's return with an impulse
//! line to the branch's supply. It throttles so that the pressure difference
//! across the branch stays at its set-point. Being proportional, it holds
//! the set-point at one opening only: as it closes from fully open towards
//! shut, the Δp it holds rises by up to its proportional band xp:
//!
//! Δp_held = Δp_set + xp · (1 − Kv/Kvs)
//!
//! (the usual description of a proportional regulator's offset; the band is
//! a datum of the controller). When the pump cannot give the branch its
//! set-point even with the controller fully open, the controller saturates
//! at Kvs and the branch gets less.

use std::sync::OnceLock;

use serde::{Deserialize, Serialize};

use crate::error::{PhysicsError, PhysicsResult};

/// The embedded demo catalog file.
const CATALOG_FILE: (&str, &str) =
    ("assets/controllers/dp-controllers.ron", include_str!("../../assets/controllers/dp-controllers.ron"));

/// Largest Δp at Kvs and design flow a controller should take when the
/// design picks its size, Pa (common practice: a controller that already
/// takes more than about 10 kPa fully open leaves little to regulate).
pub const SIZING_DP_AT_KVS_PA: f64 = 10_000.0;

/// One controller model.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct DpControllerFamily {
    /// Stable identifier used by project files.
    pub id: String,
    /// Display name.
    pub name: String,
    /// Nominal connection size DN.
    pub connection_dn: u16,
    /// Kv fully open, m³/h.
    pub kvs_m3_h: f64,
    /// Smallest set-point, kPa.
    pub setpoint_min_kpa: f64,
    /// Largest set-point, kPa.
    pub setpoint_max_kpa: f64,
    /// Proportional band, kPa (see the module docs).
    pub proportional_band_kpa: f64,
    /// Provenance note.
    pub note: String,
}

impl DpControllerFamily {
    /// The Δp the controller holds at an effective Kv of `kv_m3_h`, Pa, for
    /// a set-point of `setpoint_pa` (see the module docs).
    #[must_use]
    pub fn held_dp_pa(&self, setpoint_pa: f64, kv_m3_h: f64) -> f64 {
        let opening = (kv_m3_h / self.kvs_m3_h).clamp(0.0, 1.0);
        setpoint_pa + self.proportional_band_kpa * 1000.0 * (1.0 - opening)
    }
}

/// Layout of the catalog file.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
struct DpControllerCatalog {
    note: String,
    families: Vec<DpControllerFamily>,
}

fn catalog_error(message: String) -> PhysicsError {
    PhysicsError::Catalog { file: CATALOG_FILE.0.to_owned(), message }
}

fn load() -> PhysicsResult<Vec<DpControllerFamily>> {
    let catalog: DpControllerCatalog = ron::from_str(CATALOG_FILE.1).map_err(|e| catalog_error(e.to_string()))?;
    let mut out: Vec<DpControllerFamily> = Vec::new();
    for f in catalog.families {
        let ok = f.kvs_m3_h.is_finite()
            && f.kvs_m3_h > 0.0
            && f.setpoint_min_kpa.is_finite()
            && f.setpoint_min_kpa > 0.0
            && f.setpoint_max_kpa >= f.setpoint_min_kpa
            && f.proportional_band_kpa.is_finite()
            && f.proportional_band_kpa >= 0.0;
        if !ok {
            return Err(catalog_error(format!(
                "controller '{}': Kvs and set-points must be positive, the range ordered, the band not negative",
                f.id
            )));
        }
        if out.iter().any(|g| g.id == f.id) {
            return Err(catalog_error(format!("controller id '{}' appears twice", f.id)));
        }
        out.push(f);
    }
    out.sort_by(|a, b| a.kvs_m3_h.total_cmp(&b.kvs_m3_h));
    Ok(out)
}

/// Every controller of the embedded demo catalog, by increasing Kvs.
///
/// # Errors
/// [`PhysicsError::Catalog`] when the embedded file is malformed.
pub fn dp_controllers() -> PhysicsResult<&'static [DpControllerFamily]> {
    static CATALOG: OnceLock<PhysicsResult<Vec<DpControllerFamily>>> = OnceLock::new();
    match CATALOG.get_or_init(load) {
        Ok(f) => Ok(f.as_slice()),
        Err(e) => Err(e.clone()),
    }
}

/// The controller with id `id`.
///
/// # Errors
/// [`PhysicsError::NotFound`] for an unknown id.
pub fn dp_controller(id: &str) -> PhysicsResult<&'static DpControllerFamily> {
    dp_controllers()?
        .iter()
        .find(|f| f.id == id)
        .ok_or_else(|| PhysicsError::NotFound(format!("no Δp controller with id '{id}' in the catalog")))
}

/// The smallest controller that takes at most [`SIZING_DP_AT_KVS_PA`] fully
/// open at `flow_m3_h` (density `density_kg_m3`), else the largest.
///
/// # Errors
/// [`PhysicsError`] for a malformed catalog or non-physical flow.
pub fn size_dp_controller(flow_m3_h: f64, density_kg_m3: f64) -> PhysicsResult<&'static DpControllerFamily> {
    let all = dp_controllers()?;
    for f in all {
        if crate::valves::dp_pa_from_kv(flow_m3_h.max(0.0), f.kvs_m3_h, density_kg_m3)? <= SIZING_DP_AT_KVS_PA {
            return Ok(f);
        }
    }
    all.last().ok_or_else(|| catalog_error("the catalog has no controller".to_owned()))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn catalog_loads_marked_illustrative_and_sorted() {
        let all = dp_controllers().unwrap();
        assert!(all.len() >= 4);
        assert!(all.iter().all(|f| f.note.contains("illustrative")));
        assert!(all.windows(2).all(|w| w[0].kvs_m3_h < w[1].kvs_m3_h));
        assert!(dp_controller("nope").is_err());
    }

    #[test]
    fn the_held_dp_rises_by_the_band_as_the_controller_closes() {
        let f = dp_controller("dpc-demo-dn20").unwrap();
        let sp = 10_000.0;
        assert!((f.held_dp_pa(sp, f.kvs_m3_h) - sp).abs() < 1e-9);
        assert!((f.held_dp_pa(sp, 0.0) - (sp + 1000.0 * f.proportional_band_kpa)).abs() < 1e-9);
        let half = f.held_dp_pa(sp, 0.5 * f.kvs_m3_h);
        assert!((half - (sp + 500.0 * f.proportional_band_kpa)).abs() < 1e-9);
    }

    #[test]
    fn sizing_takes_the_smallest_that_passes_the_flow() {
        // Δp = 10⁵·(Q/Kv)²·ρ/1000: at 1 m³/h, Kv 1.6 gives 39 kPa (too much),
        // Kv 4.0 gives 6.25 kPa.
        let f = size_dp_controller(1.0, 1000.0).unwrap();
        assert_eq!(f.id, "dpc-demo-dn25");
        let big = size_dp_controller(1e3, 1000.0).unwrap();
        assert_eq!(big.id, dp_controllers().unwrap().last().unwrap().id);
    }
}
