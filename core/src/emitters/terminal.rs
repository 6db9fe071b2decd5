//! Generic fixed-Kv terminal (fan coil, air heater, convector with a coil).
//!
//! Given by a nominal output at stated nominal conditions (supply, return,
//! room), an exponent n (default 1.0) and a fixed Kv of its coil. Its output
//! follows Φ = Φ_nom·(ΔT_lm/ΔT_lm,nom)^n with the same logarithmic mean
//! temperature difference as a radiator. With n = 1 this is a heat exchanger
//! of constant UA against room air at a fixed temperature — a simplification
//! that ignores the air-side temperature rise and fan speed; use the
//! product's own data at the design point as the nominal conditions so the
//! error is small near design.

use serde::{Deserialize, Serialize};

use super::{Characteristic, CheckOutcome, FlowOutput, lmtd_k};
use crate::error::{PhysicsResult, check};

/// Default terminal exponent (constant-UA heat exchanger).
pub const DEFAULT_EXPONENT_N: f64 = 1.0;

/// Accepted terminal exponents.
pub const EXPONENT_RANGE: (f64, f64) = (0.8, 2.0);

fn default_exponent() -> f64 {
    DEFAULT_EXPONENT_N
}

/// A terminal as a project stores it.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct TerminalSpec {
    /// Output at the nominal conditions, W.
    pub nominal_output_w: f64,
    /// Nominal supply temperature, °C.
    pub nominal_supply_c: f64,
    /// Nominal return temperature, °C.
    pub nominal_return_c: f64,
    /// Nominal room (entering air) temperature, °C.
    pub nominal_room_c: f64,
    /// Exponent n of the characteristic (default 1.0).
    #[serde(default = "default_exponent")]
    pub exponent_n: f64,
    /// Flow coefficient of the coil, m³/h.
    pub kv_m3_h: f64,
    /// Water content of the coil, l.
    pub water_content_l: f64,
}

/// The checked characteristic of a terminal.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TerminalRating {
    /// Output at the nominal conditions, W.
    pub nominal_output_w: f64,
    /// ΔT_lm at the nominal conditions, K.
    pub nominal_lmtd_k: f64,
    /// Exponent n.
    pub exponent_n: f64,
}

impl TerminalSpec {
    /// Check the spec and build its characteristic.
    ///
    /// # Errors
    /// [`crate::PhysicsError`] for a non-positive output or Kv, a negative
    /// water content, an exponent outside [`EXPONENT_RANGE`] or nominal
    /// temperatures rejected by [`lmtd_k`].
    pub fn rating(&self) -> PhysicsResult<TerminalRating> {
        check::positive("terminal nominal output", self.nominal_output_w, "W")?;
        check::in_range("terminal exponent n", self.exponent_n, "", EXPONENT_RANGE.0, EXPONENT_RANGE.1)?;
        check::positive("terminal Kv", self.kv_m3_h, "m³/h")?;
        check::non_negative("terminal water content", self.water_content_l, "l")?;
        let nominal_lmtd_k = lmtd_k(self.nominal_supply_c, self.nominal_return_c, self.nominal_room_c)?;
        Ok(TerminalRating { nominal_output_w: self.nominal_output_w, nominal_lmtd_k, exponent_n: self.exponent_n })
    }

    /// Check the terminal against a load (see
    /// [`Characteristic::return_temp_for_load`]).
    ///
    /// # Errors
    /// As [`Self::rating`] and [`Characteristic::return_temp_for_load`].
    pub fn check(&self, load_w: f64, supply_c: f64, room_c: f64) -> PhysicsResult<CheckOutcome> {
        self.rating()?.return_temp_for_load(load_w, supply_c, room_c)
    }

    /// Output at a mass flow (see [`Characteristic::output_at_flow`]).
    ///
    /// # Errors
    /// As [`Self::rating`] and [`Characteristic::output_at_flow`].
    pub fn output_at_flow(&self, mass_flow_kg_s: f64, supply_c: f64, room_c: f64) -> PhysicsResult<FlowOutput> {
        self.rating()?.output_at_flow(mass_flow_kg_s, supply_c, room_c)
    }
}

impl Characteristic for TerminalRating {
    fn output_w(&self, lmtd_k: f64) -> f64 {
        self.nominal_output_w * (lmtd_k.max(0.0) / self.nominal_lmtd_k).powf(self.exponent_n)
    }

    fn output_and_slope(&self, lmtd_k: f64) -> (f64, f64) {
        let q = self.output_w(lmtd_k);
        // Power law: dΦ/dΔT = n·Φ/ΔT.
        (q, if lmtd_k > 0.0 { self.exponent_n * q / lmtd_k } else { 0.0 })
    }

    fn lmtd_for_output_k(&self, output_w: f64) -> f64 {
        self.nominal_lmtd_k * (output_w.max(0.0) / self.nominal_output_w).powf(1.0 / self.exponent_n)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::PhysicsError;
    use crate::water;

    fn fan_coil() -> TerminalSpec {
        // Demo values (invented), not any product's data.
        TerminalSpec {
            nominal_output_w: 3000.0,
            nominal_supply_c: 45.0,
            nominal_return_c: 40.0,
            nominal_room_c: 20.0,
            exponent_n: 1.0,
            kv_m3_h: 1.6,
            water_content_l: 1.2,
        }
    }

    #[test]
    fn rejects_bad_specs() {
        let mut t = fan_coil();
        t.kv_m3_h = 0.0;
        assert!(matches!(t.rating(), Err(PhysicsError::NotPositive { .. })));
        let mut t = fan_coil();
        t.nominal_return_c = 50.0;
        assert!(matches!(t.rating(), Err(PhysicsError::Inconsistent(_))));
        let mut t = fan_coil();
        t.exponent_n = f64::NAN;
        assert!(t.rating().is_err());
    }

    #[test]
    fn nominal_point_round_trip() {
        let t = fan_coil();
        let out = t.check(3000.0, 45.0, 20.0).unwrap();
        assert!(out.meets_load());
        assert!((out.return_c() - 40.0).abs() < 1e-8, "{out:?}");
        let cp = water::mean_cp_j_kg_k(45.0, 40.0).unwrap();
        assert!((out.mass_flow_kg_s() - 3000.0 / (cp * 5.0)).abs() < 1e-9);
        let back = t.output_at_flow(out.mass_flow_kg_s(), 45.0, 20.0).unwrap();
        assert!((back.output_w - 3000.0).abs() < 1e-6 && (back.return_c - 40.0).abs() < 1e-8, "{back:?}");
    }
}
