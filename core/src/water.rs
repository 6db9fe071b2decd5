//! Properties of liquid water in a heating system.
//!
//! Density and isobaric specific heat come from IAPWS-IF97 region 1 and the
//! dynamic viscosity from the IAPWS 2008 formulation, both through the
//! `seuif97` crate. The pressure defaults to [`SYSTEM_PRESSURE_PA`]; in the
//! 5–95 °C range the pressure dependence of density is ~0.005 % per bar, so a
//! single system pressure is adequate for hydraulics.
//!
//! Reference checks: `tests/tests/reference_water.rs` against the Python
//! library `iapws` (IAPWS97 and the IAPWS 2008 viscosity), fixtures produced
//! by `tests/reference/generate.py`.

use std::sync::OnceLock;

use crate::error::{PhysicsResult, check};

/// Default absolute pressure of a sealed heating system, Pa (3 bar absolute,
/// about 2 bar gauge; common practice for small and medium buildings).
pub const SYSTEM_PRESSURE_PA: f64 = 300_000.0;

/// Lowest water temperature the property functions accept, °C.
pub const MIN_TEMPERATURE_C: f64 = 1.0;
/// Highest water temperature the property functions accept, °C (liquid at
/// the lowest accepted pressure).
pub const MAX_TEMPERATURE_C: f64 = 99.0;
/// Accepted absolute pressure range, Pa (1 to 16 bar absolute).
pub const PRESSURE_RANGE_PA: (f64, f64) = (100_000.0, 1_600_000.0);

/// Properties of water at one temperature and pressure.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct WaterProperties {
    /// Temperature, °C.
    pub temperature_c: f64,
    /// Density, kg/m³.
    pub density_kg_m3: f64,
    /// Dynamic viscosity, Pa·s.
    pub viscosity_pa_s: f64,
    /// Isobaric specific heat capacity, J/(kg·K).
    pub cp_j_kg_k: f64,
}

impl WaterProperties {
    /// Kinematic viscosity, m²/s.
    #[must_use]
    pub fn kinematic_viscosity_m2_s(&self) -> f64 {
        self.viscosity_pa_s / self.density_kg_m3
    }
}

/// Water properties at `temperature_c` and the default system pressure.
///
/// # Errors
/// [`crate::PhysicsError`] when the temperature is not finite or outside
/// [`MIN_TEMPERATURE_C`]..=[`MAX_TEMPERATURE_C`].
pub fn properties(temperature_c: f64) -> PhysicsResult<WaterProperties> {
    properties_at(temperature_c, SYSTEM_PRESSURE_PA)
}

/// Water properties at `temperature_c` and absolute pressure `pressure_pa`.
///
/// # Errors
/// [`crate::PhysicsError`] when either input is not finite or out of range.
pub fn properties_at(temperature_c: f64, pressure_pa: f64) -> PhysicsResult<WaterProperties> {
    check::in_range("water temperature", temperature_c, "°C", MIN_TEMPERATURE_C, MAX_TEMPERATURE_C)?;
    check::in_range("system pressure (absolute)", pressure_pa, "Pa", PRESSURE_RANGE_PA.0, PRESSURE_RANGE_PA.1)?;
    let p_mpa = pressure_pa * 1e-6;
    // Region 1 (compressed liquid) is forced: inside the accepted ranges the
    // state is always liquid.
    let region = 1;
    let density_kg_m3 = seuif97::pt(p_mpa, temperature_c, (seuif97::OD, region));
    let cp_j_kg_k = seuif97::pt(p_mpa, temperature_c, (seuif97::OCP, region)) * 1000.0;
    let viscosity_pa_s = seuif97::pt(p_mpa, temperature_c, (seuif97::ODV, region));
    Ok(WaterProperties { temperature_c, density_kg_m3, viscosity_pa_s, cp_j_kg_k })
}

/// Density of water at `temperature_c` and the default pressure, kg/m³.
///
/// # Errors
/// As [`properties`].
pub fn density_kg_m3(temperature_c: f64) -> PhysicsResult<f64> {
    Ok(properties(temperature_c)?.density_kg_m3)
}

/// Mean specific heat between two temperatures, J/(kg·K): the enthalpy
/// difference divided by the temperature difference (IAPWS-IF97), which is
/// what converts a heat flow into a mass flow exactly. Equal temperatures give
/// c_p at that temperature.
///
/// # Errors
/// As [`properties`].
pub fn mean_cp_j_kg_k(t1_c: f64, t2_c: f64) -> PhysicsResult<f64> {
    check::in_range("water temperature", t1_c, "°C", MIN_TEMPERATURE_C, MAX_TEMPERATURE_C)?;
    check::in_range("water temperature", t2_c, "°C", MIN_TEMPERATURE_C, MAX_TEMPERATURE_C)?;
    if (t1_c - t2_c).abs() < 0.01 {
        return Ok(properties(0.5 * (t1_c + t2_c))?.cp_j_kg_k);
    }
    let p_mpa = SYSTEM_PRESSURE_PA * 1e-6;
    let h1 = seuif97::pt(p_mpa, t1_c, (seuif97::OH, 1));
    let h2 = seuif97::pt(p_mpa, t2_c, (seuif97::OH, 1));
    Ok((h1 - h2) / (t1_c - t2_c) * 1000.0)
}

/// Temperature step of the enthalpy table behind [`mean_cp_tabulated_j_kg_k`], K.
const TABLE_STEP_K: f64 = 0.05;

/// Specific enthalpy h (kJ/kg) and isobaric specific heat c_p = dh/dT
/// (kJ/(kg·K)) of IAPWS-IF97 region 1 at [`SYSTEM_PRESSURE_PA`], at
/// [`MIN_TEMPERATURE_C`] + i·[`TABLE_STEP_K`] through [`MAX_TEMPERATURE_C`].
struct EnthalpyTable {
    h_kj_kg: Vec<f64>,
    cp_kj_kg_k: Vec<f64>,
}

fn enthalpy_table() -> &'static EnthalpyTable {
    static TABLE: OnceLock<EnthalpyTable> = OnceLock::new();
    TABLE.get_or_init(|| {
        let p_mpa = SYSTEM_PRESSURE_PA * 1e-6;
        let steps = ((MAX_TEMPERATURE_C - MIN_TEMPERATURE_C) / TABLE_STEP_K).round() as usize;
        let at = |i: usize| (MIN_TEMPERATURE_C + i as f64 * TABLE_STEP_K).min(MAX_TEMPERATURE_C);
        EnthalpyTable {
            h_kj_kg: (0..=steps).map(|i| seuif97::pt(p_mpa, at(i), (seuif97::OH, 1))).collect(),
            cp_kj_kg_k: (0..=steps).map(|i| seuif97::pt(p_mpa, at(i), (seuif97::OCP, 1))).collect(),
        }
    })
}

/// Enthalpy (kJ/kg) and its derivative c_p (kJ/(kg·K)) at `t_c` (inside
/// the accepted range; unchecked) from the table: cubic Hermite
/// interpolation on the tabulated h and dh/dT = c_p, whose own derivative
/// is the interpolated c_p.
fn enthalpy_interpolated(t_c: f64) -> (f64, f64) {
    let table = enthalpy_table();
    let last = table.h_kj_kg.len().saturating_sub(2);
    let x = (t_c - MIN_TEMPERATURE_C) / TABLE_STEP_K;
    // Truncation of a non-negative, bounded value: the interval index.
    #[allow(clippy::cast_possible_truncation, clippy::cast_sign_loss)]
    let i = (x.max(0.0) as usize).min(last);
    let t = x - i as f64;
    let (h0, h1) = (table.h_kj_kg[i], table.h_kj_kg[i + 1]);
    let (m0, m1) = (table.cp_kj_kg_k[i] * TABLE_STEP_K, table.cp_kj_kg_k[i + 1] * TABLE_STEP_K);
    let (t2, t3) = (t * t, t * t * t);
    let h = (2.0 * t3 - 3.0 * t2 + 1.0) * h0 + (t3 - 2.0 * t2 + t) * m0 + (-2.0 * t3 + 3.0 * t2) * h1 + (t3 - t2) * m1;
    let dh_dt =
        ((6.0 * t2 - 6.0 * t) * (h0 - h1) + (3.0 * t2 - 4.0 * t + 1.0) * m0 + (3.0 * t2 - 2.0 * t) * m1) / TABLE_STEP_K;
    (h, dh_dt)
}

/// [`mean_cp_j_kg_k`] from a table of IAPWS-IF97 enthalpy and c_p at
/// 0.05 K steps (built once, on first use, from the same IAPWS-IF97
/// functions) with cubic Hermite interpolation: agrees with the direct
/// evaluation to better than 1e-9 relative over the whole accepted range
/// (unit test `tabulated_mean_cp_matches_direct_evaluation`), at a small
/// fraction of the cost. For the per-emitter inner loops of the solve.
///
/// # Errors
/// As [`mean_cp_j_kg_k`].
pub fn mean_cp_tabulated_j_kg_k(t1_c: f64, t2_c: f64) -> PhysicsResult<f64> {
    check::in_range("water temperature", t1_c, "°C", MIN_TEMPERATURE_C, MAX_TEMPERATURE_C)?;
    check::in_range("water temperature", t2_c, "°C", MIN_TEMPERATURE_C, MAX_TEMPERATURE_C)?;
    if (t1_c - t2_c).abs() < 0.01 {
        return Ok(enthalpy_interpolated(0.5 * (t1_c + t2_c)).1 * 1000.0);
    }
    let (h1, _) = enthalpy_interpolated(t1_c);
    let (h2, _) = enthalpy_interpolated(t2_c);
    Ok((h1 - h2) / (t1_c - t2_c) * 1000.0)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::PhysicsError;

    #[test]
    fn rejects_out_of_range_and_nan() {
        assert!(matches!(properties(f64::NAN), Err(PhysicsError::NotFinite { .. })));
        assert!(matches!(properties(-5.0), Err(PhysicsError::OutOfRange { .. })));
        assert!(matches!(properties(120.0), Err(PhysicsError::OutOfRange { .. })));
        assert!(matches!(properties_at(60.0, 10.0), Err(PhysicsError::OutOfRange { .. })));
        assert!(mean_cp_j_kg_k(70.0, 150.0).is_err());
    }

    #[test]
    fn density_falls_with_temperature() {
        // Water's density maximum is near 4 °C; above it density falls.
        let mut last = density_kg_m3(5.0).unwrap();
        for t in (10..=95).step_by(5) {
            let d = density_kg_m3(f64::from(t)).unwrap();
            assert!(d < last, "density must fall: {t} °C");
            last = d;
        }
    }

    #[test]
    fn mean_cp_is_between_endpoint_values() {
        let cp = mean_cp_j_kg_k(75.0, 65.0).unwrap();
        let a = properties(65.0).unwrap().cp_j_kg_k;
        let b = properties(75.0).unwrap().cp_j_kg_k;
        assert!(cp >= a.min(b) - 0.5 && cp <= a.max(b) + 0.5, "{cp} {a} {b}");
    }

    /// The tabulated mean c_p agrees with the direct IAPWS-IF97 evaluation
    /// (seuif97) over the accepted range: wide and narrow intervals, both
    /// orders, and the equal-temperature limit.
    #[test]
    fn tabulated_mean_cp_matches_direct_evaluation() {
        let mut worst = 0.0_f64;
        let mut t1 = MIN_TEMPERATURE_C;
        while t1 <= MAX_TEMPERATURE_C {
            for dt in [0.0, 0.004, 0.013, 0.37, 1.0, 5.3, 10.0, 20.0, 37.7, 98.0] {
                for t2 in [t1 - dt, t1 + dt] {
                    if !(MIN_TEMPERATURE_C..=MAX_TEMPERATURE_C).contains(&t2) {
                        continue;
                    }
                    let direct = mean_cp_j_kg_k(t1, t2).unwrap();
                    let table = mean_cp_tabulated_j_kg_k(t1, t2).unwrap();
                    worst = worst.max((table - direct).abs() / direct);
                }
            }
            t1 += 0.0173;
        }
        eprintln!("largest relative difference, tabulated vs direct mean c_p: {worst:e}");
        assert!(worst < 1e-9, "{worst}");
    }

    #[test]
    fn tabulated_mean_cp_rejects_out_of_range_and_nan() {
        assert!(matches!(mean_cp_tabulated_j_kg_k(f64::NAN, 40.0), Err(PhysicsError::NotFinite { .. })));
        assert!(matches!(mean_cp_tabulated_j_kg_k(70.0, 150.0), Err(PhysicsError::OutOfRange { .. })));
        assert!(matches!(mean_cp_tabulated_j_kg_k(0.5, 40.0), Err(PhysicsError::OutOfRange { .. })));
    }
}
