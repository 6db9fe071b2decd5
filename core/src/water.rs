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
}
