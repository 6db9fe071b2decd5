//! Floor-heating loops (wet systems, pipes in the screed; EN 1264 type A).
//!
//! # Method implemented — and its limits
//!
//! 1. **Surface to room: the EN 1264-2 basic characteristic curve**, exactly:
//!    q = 8.92·(θ_F,m − θ_i)^1.1 W/m² ([`basic_curve_w_m2`]) and its inverse
//!    ([`mean_surface_temp_c`]). It fixes the total (radiation + convection)
//!    heat transfer at the floor surface for every floor construction. The
//!    limit heat flux of a zone is q_G = 8.92·(θ_F,max − θ_i)^1.1 with the
//!    EN 1264-2 surface temperature limits 29 °C (occupied zone), 35 °C
//!    (peripheral/edge zone) and 33 °C (bathrooms) ([`FloorZone`]).
//! 2. **Water to surface: a simplified series-resistance model** — *not*
//!    EN 1264-2's full characteristic q = B·a_B·a_T^mT·a_U^mU·a_D^mD·ΔθH
//!    with its tabulated factors, which flowrise does not reproduce. Per m²
//!    of floor:
//!    R = R_λ,B + s/λ_u + T·ln(T/(π·d_a))/(π·λ_u) + T·ln(d_a/d_i)/(2π·λ_R),
//!    with R_λ,B the floor covering resistance, s = s_u + d_a/2 the depth of
//!    the pipe axis below the screed surface (s_u = screed above the pipe),
//!    T the pipe spacing, d_a/d_i the pipe diameters, λ_u/λ_R the screed and
//!    pipe conductivities. The third term is the constriction resistance of a
//!    row of line sources (spacing T) against a plane source of the same
//!    heat, with all heat flowing upwards (adiabatic insulation at the pipe
//!    plane; method of images); it is clamped at 0 for T < π·d_a. The
//!    heating-medium differential temperature then is
//!    ΔθH = (θ_F,m − θ_i) + q·R = (q/8.92)^(1/1.1) + q·R, i.e.
//!    q = K_H·ΔθH with 1/K_H = 1/α + R and α = 8.92·(θ_F,m − θ_i)^0.1 the
//!    total surface coefficient *derived from the basic curve* (≈ 10.8
//!    W/m²K near 7 K, ≈ 11.1 W/m²K at 9 K) instead of a loose constant.
//!    ΔθH is the logarithmic mean water-to-room difference (as in EN 1264-2).
//!
//! Neglected: downward heat loss (the flow carries only the upward output —
//! add the downward loss to the load if it matters), water-side convective
//! resistance (small in turbulent flow, up to ~0.02 m²K/W in laminar flow),
//! the surface temperature waviness between pipes (the mean surface
//! temperature is used), edge effects and the heat of the lead pipes.
//!
//! Validity range (inputs outside are rejected): spacing T 0.05–0.375 m
//! ([`SPACING_RANGE_M`]), covering R_λ,B 0–0.15 m²K/W (EN 1264 limits it to
//! 0.15), screed above the pipe 0.01–0.10 m with λ_u 0.5–3 W/mK. The
//! constriction term assumes the surface is far enough above the pipes to be
//! nearly isothermal (s ≳ T/(2π)); for wide spacings under thin screed the
//! model overstates the output. Results are a design aid; a binding EN 1264
//! design needs the standard's full characteristic and its limit curves.

use std::f64::consts::PI;

use serde::{Deserialize, Serialize};

use super::{Characteristic, CheckOutcome, FlowOutput};
use crate::error::{PhysicsError, PhysicsResult, check};
use crate::friction::{PipeHydraulics, pipe_dp};
use crate::water;

/// Coefficient of the EN 1264-2 basic characteristic curve, W/(m²·K^1.1).
pub const BASIC_CURVE_COEFFICIENT: f64 = 8.92;
/// Exponent of the EN 1264-2 basic characteristic curve.
pub const BASIC_CURVE_EXPONENT: f64 = 1.1;

/// Maximum mean surface temperature of the occupied zone, °C (EN 1264-2).
pub const SURFACE_LIMIT_OCCUPIED_C: f64 = 29.0;
/// Maximum mean surface temperature of the peripheral (edge) zone, °C
/// (EN 1264-2).
pub const SURFACE_LIMIT_EDGE_C: f64 = 35.0;
/// Maximum mean surface temperature in bathrooms, °C (EN 1264-2; with the
/// usual θ_i = 24 °C this is a 9 K difference).
pub const SURFACE_LIMIT_BATHROOM_C: f64 = 33.0;

/// Loop pressure drop above which a loop is flagged, Pa (common practice
/// ~25 kPa: more makes the pump head of a floor-heating manifold excessive).
pub const LOOP_DP_LIMIT_PA: f64 = 25_000.0;
/// Loop length above which a loop is flagged, m (common practice ~120 m for
/// 16–17 mm pipe).
pub const LOOP_LENGTH_LIMIT_M: f64 = 120.0;

/// Pipe spacing range of this model, m (the EN 1264 range of spacings).
pub const SPACING_RANGE_M: (f64, f64) = (0.05, 0.375);
/// Largest floor covering resistance R_λ,B, m²K/W (EN 1264 design limit).
pub const COVERING_RESISTANCE_MAX_M2K_W: f64 = 0.15;

/// Screed thickness above the pipe when not given, m (45 mm, the EN 1264
/// reference screed cover — recalled from memory, not verified against the
/// document).
pub const DEFAULT_SCREED_ABOVE_PIPE_M: f64 = 0.045;
/// Thermal conductivity of cement screed when not given, W/(m·K) (1.2 — the
/// EN 1264 reference value, recalled from memory, not verified against the
/// document).
pub const DEFAULT_SCREED_CONDUCTIVITY_W_MK: f64 = 1.2;
/// Thermal conductivity of PE-X pipe when not given, W/(m·K) (0.35, recalled
/// from memory, not verified against the document).
pub const DEFAULT_PIPE_CONDUCTIVITY_W_MK: f64 = 0.35;

/// The zone of a floor, which sets the surface temperature limit.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub enum FloorZone {
    /// Occupied zone: 29 °C.
    Occupied,
    /// Peripheral (edge) zone, at most 1 m wide along outer walls: 35 °C.
    Edge,
    /// Bathrooms: 33 °C.
    Bathroom,
}

impl FloorZone {
    /// EN 1264-2 maximum mean surface temperature θ_F,max, °C.
    #[must_use]
    pub fn surface_limit_c(self) -> f64 {
        match self {
            Self::Occupied => SURFACE_LIMIT_OCCUPIED_C,
            Self::Edge => SURFACE_LIMIT_EDGE_C,
            Self::Bathroom => SURFACE_LIMIT_BATHROOM_C,
        }
    }
}

/// EN 1264-2 basic characteristic curve: heat flux at a mean surface
/// temperature `surface_excess_k` = θ_F,m − θ_i above the room, W/m².
///
/// # Errors
/// [`PhysicsError`] when the difference is NaN or outside 0–40 K.
pub fn basic_curve_w_m2(surface_excess_k: f64) -> PhysicsResult<f64> {
    check::in_range("floor surface minus room temperature", surface_excess_k, "K", 0.0, 40.0)?;
    Ok(BASIC_CURVE_COEFFICIENT * surface_excess_k.powf(BASIC_CURVE_EXPONENT))
}

/// Surface excess θ_F,m − θ_i for a heat flux (inverse basic curve), K.
fn surface_excess_k(heat_flux_w_m2: f64) -> f64 {
    (heat_flux_w_m2.max(0.0) / BASIC_CURVE_COEFFICIENT).powf(1.0 / BASIC_CURVE_EXPONENT)
}

/// Mean floor surface temperature θ_F,m at heat flux `heat_flux_w_m2` in a
/// room at `room_c` (inverse of the basic curve), °C.
///
/// # Errors
/// [`PhysicsError`] for a negative/NaN flux above 500 W/m² or a room
/// temperature out of range.
pub fn mean_surface_temp_c(heat_flux_w_m2: f64, room_c: f64) -> PhysicsResult<f64> {
    check::in_range("floor heat flux", heat_flux_w_m2, "W/m²", 0.0, 500.0)?;
    check::in_range(
        "room temperature",
        room_c,
        "°C",
        super::ROOM_TEMPERATURE_RANGE_C.0,
        super::ROOM_TEMPERATURE_RANGE_C.1,
    )?;
    Ok(room_c + surface_excess_k(heat_flux_w_m2))
}

/// Limit heat flux q_G of a zone: the basic curve at θ_F,max − θ_i, W/m².
///
/// # Errors
/// [`PhysicsError`] when the room is not below the zone's surface limit.
pub fn limit_heat_flux_w_m2(zone: FloorZone, room_c: f64) -> PhysicsResult<f64> {
    check::finite("room temperature", room_c, "°C")?;
    let limit_c = zone.surface_limit_c();
    if room_c >= limit_c {
        return Err(PhysicsError::Inconsistent(format!(
            "room temperature {room_c} °C is not below the floor surface limit {limit_c} °C of the {zone:?} zone"
        )));
    }
    basic_curve_w_m2(limit_c - room_c)
}

fn default_screed_above() -> f64 {
    DEFAULT_SCREED_ABOVE_PIPE_M
}
fn default_screed_conductivity() -> f64 {
    DEFAULT_SCREED_CONDUCTIVITY_W_MK
}
fn default_pipe_conductivity() -> f64 {
    DEFAULT_PIPE_CONDUCTIVITY_W_MK
}

/// A floor-heating loop as a project stores it.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct FloorLoopSpec {
    /// Heated floor area served by the loop, m².
    pub area_m2: f64,
    /// Zone (sets the surface limit).
    pub zone: FloorZone,
    /// Pipe spacing T, m.
    pub spacing_m: f64,
    /// Floor covering resistance R_λ,B, m²K/W (0 to 0.15).
    pub covering_resistance_m2k_w: f64,
    /// Screed thickness above the pipe s_u, m.
    #[serde(default = "default_screed_above")]
    pub screed_above_pipe_m: f64,
    /// Screed thermal conductivity λ_u, W/(m·K).
    #[serde(default = "default_screed_conductivity")]
    pub screed_conductivity_w_mk: f64,
    /// Pipe outer diameter d_a, m.
    pub pipe_outer_diameter_m: f64,
    /// Pipe inner diameter d_i, m.
    pub pipe_inner_diameter_m: f64,
    /// Pipe wall thermal conductivity λ_R, W/(m·K).
    #[serde(default = "default_pipe_conductivity")]
    pub pipe_conductivity_w_mk: f64,
    /// Absolute roughness of the pipe bore, m.
    pub pipe_roughness_m: f64,
    /// Length of one lead (manifold to the heated area), m; the loop has two.
    pub lead_length_m: f64,
    /// Sum of local loss coefficients ζ in the loop (bends), referred to the
    /// loop pipe's velocity.
    #[serde(default)]
    pub zeta_sum: f64,
}

impl FloorLoopSpec {
    /// A typical loop for new emitters and generated buildings: 16×2 PE-X at
    /// 150 mm spacing in 45 mm screed (λ 1.2 W/(m·K)), covering 0.05 m²K/W,
    /// 4 m leads, ζ 2 (illustrative defaults, common practice; the user
    /// edits them).
    #[must_use]
    pub fn typical(area_m2: f64, zone: FloorZone) -> Self {
        Self {
            area_m2,
            zone,
            spacing_m: 0.15,
            covering_resistance_m2k_w: 0.05,
            screed_above_pipe_m: 0.045,
            screed_conductivity_w_mk: 1.2,
            pipe_outer_diameter_m: 0.016,
            pipe_inner_diameter_m: 0.012,
            pipe_conductivity_w_mk: 0.35,
            pipe_roughness_m: 7e-6,
            lead_length_m: 4.0,
            zeta_sum: 2.0,
        }
    }
}

/// The thermal characteristic of a floor loop (see the module docs).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FloorCharacteristic {
    /// Heated area, m².
    pub area_m2: f64,
    /// Conduction resistance water → surface R (everything but 1/α), m²K/W.
    pub resistance_m2k_w: f64,
}

impl FloorCharacteristic {
    /// ΔθH needed for heat flux `heat_flux_w_m2`, K.
    #[must_use]
    pub fn medium_difference_k(&self, heat_flux_w_m2: f64) -> f64 {
        surface_excess_k(heat_flux_w_m2) + heat_flux_w_m2.max(0.0) * self.resistance_m2k_w
    }

    /// Heat flux at ΔθH = `medium_difference_k`, W/m². Newton on the surface
    /// excess s: s + R·8.92·s^1.1 = ΔθH is convex and increasing in s, so
    /// Newton from s = ΔθH converges monotonically.
    #[must_use]
    pub fn heat_flux_w_m2(&self, medium_difference_k: f64) -> f64 {
        let target = medium_difference_k.max(0.0);
        if target == 0.0 {
            return 0.0;
        }
        BASIC_CURVE_COEFFICIENT * self.surface_excess_for_k(target).powf(BASIC_CURVE_EXPONENT)
    }

    /// Heat flux (W/m²) and its derivative against ΔθH (W/(m²·K)) at
    /// ΔθH = `medium_difference_k`: with q = c·s^1.1 and ΔθH = s + R·q,
    /// dq/dΔθH = q'(s)/(1 + R·q'(s)).
    #[must_use]
    pub fn heat_flux_and_slope(&self, medium_difference_k: f64) -> (f64, f64) {
        let target = medium_difference_k.max(0.0);
        if target == 0.0 {
            return (0.0, 0.0);
        }
        let s = self.surface_excess_for_k(target);
        let q = BASIC_CURVE_COEFFICIENT * s.powf(BASIC_CURVE_EXPONENT);
        let dq_ds = BASIC_CURVE_EXPONENT * q / s;
        (q, dq_ds / (1.0 + self.resistance_m2k_w * dq_ds))
    }

    /// The surface excess s at ΔθH = `target` (> 0), K.
    fn surface_excess_for_k(&self, target: f64) -> f64 {
        let r = self.resistance_m2k_w;
        let mut s = target;
        for _ in 0..60 {
            let q = BASIC_CURVE_COEFFICIENT * s.powf(BASIC_CURVE_EXPONENT);
            let f = s + r * q - target;
            let df = 1.0 + r * BASIC_CURVE_EXPONENT * q / s;
            let next = (s - f / df).max(0.5 * s);
            let done = (s - next).abs() <= 1e-15 * target;
            s = next;
            if done {
                break;
            }
        }
        s
    }
}

impl Characteristic for FloorCharacteristic {
    fn output_w(&self, lmtd_k: f64) -> f64 {
        self.area_m2 * self.heat_flux_w_m2(lmtd_k)
    }

    fn output_and_slope(&self, lmtd_k: f64) -> (f64, f64) {
        let (q, dq) = self.heat_flux_and_slope(lmtd_k);
        (self.area_m2 * q, self.area_m2 * dq)
    }

    fn lmtd_for_output_k(&self, output_w: f64) -> f64 {
        self.medium_difference_k(output_w / self.area_m2)
    }
}

impl FloorLoopSpec {
    /// Check the spec against the model's validity range and build the
    /// characteristic.
    ///
    /// # Errors
    /// [`PhysicsError`] naming the first input outside the range stated in
    /// the module docs.
    pub fn characteristic(&self) -> PhysicsResult<FloorCharacteristic> {
        check::in_range("floor loop area", self.area_m2, "m²", 0.1, 1000.0)?;
        check::in_range("pipe spacing", self.spacing_m, "m", SPACING_RANGE_M.0, SPACING_RANGE_M.1)?;
        check::in_range(
            "floor covering resistance R_λ,B",
            self.covering_resistance_m2k_w,
            "m²K/W",
            0.0,
            COVERING_RESISTANCE_MAX_M2K_W,
        )?;
        check::in_range("screed above the pipe", self.screed_above_pipe_m, "m", 0.01, 0.10)?;
        check::in_range("screed conductivity", self.screed_conductivity_w_mk, "W/(m·K)", 0.5, 3.0)?;
        check::in_range("pipe outer diameter", self.pipe_outer_diameter_m, "m", 0.008, 0.032)?;
        check::positive("pipe inner diameter", self.pipe_inner_diameter_m, "m")?;
        if self.pipe_inner_diameter_m >= self.pipe_outer_diameter_m {
            return Err(PhysicsError::Inconsistent(format!(
                "pipe inner diameter {} m must be smaller than the outer diameter {} m",
                self.pipe_inner_diameter_m, self.pipe_outer_diameter_m
            )));
        }
        check::in_range("pipe conductivity", self.pipe_conductivity_w_mk, "W/(m·K)", 0.1, 500.0)?;
        check::non_negative("pipe roughness", self.pipe_roughness_m, "m")?;
        check::in_range("lead length", self.lead_length_m, "m", 0.0, 200.0)?;
        check::non_negative("loop ζ sum", self.zeta_sum, "")?;

        let t = self.spacing_m;
        let d_a = self.pipe_outer_diameter_m;
        let lambda_u = self.screed_conductivity_w_mk;
        let depth_m = self.screed_above_pipe_m + 0.5 * d_a;
        let constriction = (t * (t / (PI * d_a)).ln() / (PI * lambda_u)).max(0.0);
        let wall = t * (d_a / self.pipe_inner_diameter_m).ln() / (2.0 * PI * self.pipe_conductivity_w_mk);
        let resistance_m2k_w = self.covering_resistance_m2k_w + depth_m / lambda_u + constriction + wall;
        Ok(FloorCharacteristic { area_m2: self.area_m2, resistance_m2k_w })
    }

    /// Pipe length of the loop: area/spacing + 2 × lead length, m.
    #[must_use]
    pub fn loop_length_m(&self) -> f64 {
        self.area_m2 / self.spacing_m + 2.0 * self.lead_length_m
    }

    /// Output and return temperature at a mass flow (see
    /// [`Characteristic::output_at_flow`]).
    ///
    /// # Errors
    /// As [`Self::characteristic`] and [`Characteristic::output_at_flow`].
    pub fn output_at_flow(&self, mass_flow_kg_s: f64, supply_c: f64, room_c: f64) -> PhysicsResult<FlowOutput> {
        self.characteristic()?.output_at_flow(mass_flow_kg_s, supply_c, room_c)
    }
}

/// Design results of a floor loop.
#[derive(Debug, Clone, PartialEq)]
pub struct FloorLoopDesign {
    /// Design heat flux q = load/area, W/m².
    pub heat_flux_w_m2: f64,
    /// Mean floor surface temperature θ_F,m at that flux, °C.
    pub mean_surface_c: f64,
    /// Zone surface limit θ_F,max, °C.
    pub surface_limit_c: f64,
    /// Limit heat flux q_G of the zone at this room temperature, W/m².
    pub limit_heat_flux_w_m2: f64,
    /// θ_F,m > θ_F,max.
    pub exceeds_surface_limit: bool,
    /// Heating-medium differential temperature ΔθH needed, K.
    pub medium_difference_k: f64,
    /// Equivalent heat transmission coefficient K_H = q/ΔθH at design,
    /// W/(m²K) (0 at zero load).
    pub k_h_w_m2k: f64,
    /// Return temperature, flow and output (or the shortfall when the supply
    /// temperature is too low for this load).
    pub outcome: CheckOutcome,
    /// Loop pipe length, m.
    pub loop_length_m: f64,
    /// Loop pressure drop at the design flow, Pa.
    pub loop_dp_pa: f64,
    /// Loop Δp > [`LOOP_DP_LIMIT_PA`].
    pub exceeds_dp_limit: bool,
    /// Loop length > [`LOOP_LENGTH_LIMIT_M`].
    pub exceeds_length_limit: bool,
    /// Water content of the loop pipe, l.
    pub water_content_l: f64,
    /// Thermal characteristic (for the operating solve).
    pub characteristic: FloorCharacteristic,
    /// Loop pipe hydraulics at the design mean water temperature.
    pub loop_pipe: PipeHydraulics,
}

/// Design a floor loop for `load_w` with supply `supply_c` in a room at
/// `room_c`: heat flux, surface temperature and limit check, the return
/// temperature and flow that deliver the load (or the shortfall), loop
/// length, loop pressure drop (Darcy–Weisbach/Colebrook–White at the mean
/// water temperature, [`crate::friction`]) and the common-practice flags.
///
/// # Errors
/// [`PhysicsError`] for inputs outside the validity range, a negative load,
/// a room not below the zone limit, or supply ≤ room.
pub fn design(spec: &FloorLoopSpec, load_w: f64, supply_c: f64, room_c: f64) -> PhysicsResult<FloorLoopDesign> {
    let characteristic = spec.characteristic()?;
    check::non_negative("heat load", load_w, "W")?;
    let heat_flux_w_m2 = load_w / spec.area_m2;
    let mean_surface_c = mean_surface_temp_c(heat_flux_w_m2, room_c)?;
    let surface_limit_c = spec.zone.surface_limit_c();
    let limit_heat_flux_w_m2 = limit_heat_flux_w_m2(spec.zone, room_c)?;
    let medium_difference_k = characteristic.medium_difference_k(heat_flux_w_m2);
    let k_h_w_m2k = if medium_difference_k > 0.0 {
        heat_flux_w_m2 / medium_difference_k
    } else {
        // Zero load: α = 8.92·Δθ^0.1 of the basic curve tends to 0, so does K_H.
        0.0
    };
    let outcome = characteristic.return_temp_for_load(load_w, supply_c, room_c)?;

    let loop_length_m = spec.loop_length_m();
    let mean_c = (0.5 * (supply_c + outcome.return_c())).max(water::MIN_TEMPERATURE_C);
    let props = water::properties(mean_c)?;
    let loop_pipe = PipeHydraulics::new(
        loop_length_m,
        spec.pipe_inner_diameter_m,
        spec.pipe_roughness_m,
        spec.zeta_sum,
        props.density_kg_m3,
        props.viscosity_pa_s,
    )?;
    let (loop_dp_pa, _) = pipe_dp(&loop_pipe, outcome.mass_flow_kg_s());
    let water_content_l = loop_pipe.flow_area_m2() * loop_length_m * 1000.0;
    Ok(FloorLoopDesign {
        heat_flux_w_m2,
        mean_surface_c,
        surface_limit_c,
        limit_heat_flux_w_m2,
        exceeds_surface_limit: mean_surface_c > surface_limit_c,
        medium_difference_k,
        k_h_w_m2k,
        outcome,
        loop_length_m,
        loop_dp_pa,
        exceeds_dp_limit: loop_dp_pa > LOOP_DP_LIMIT_PA,
        exceeds_length_limit: loop_length_m > LOOP_LENGTH_LIMIT_M,
        water_content_l,
        characteristic,
        loop_pipe,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Demo loop: 16×2 PE-X at 150 mm under 45 mm cement screed, carpet-like
    /// covering 0.10 m²K/W.
    fn demo() -> FloorLoopSpec {
        FloorLoopSpec {
            area_m2: 12.0,
            zone: FloorZone::Occupied,
            spacing_m: 0.15,
            covering_resistance_m2k_w: 0.10,
            screed_above_pipe_m: DEFAULT_SCREED_ABOVE_PIPE_M,
            screed_conductivity_w_mk: DEFAULT_SCREED_CONDUCTIVITY_W_MK,
            pipe_outer_diameter_m: 0.016,
            pipe_inner_diameter_m: 0.012,
            pipe_conductivity_w_mk: DEFAULT_PIPE_CONDUCTIVITY_W_MK,
            pipe_roughness_m: 7e-6,
            lead_length_m: 5.0,
            zeta_sum: 0.0,
        }
    }

    #[test]
    fn rejects_inputs_outside_the_validity_range() {
        let mut s = demo();
        s.spacing_m = 0.5;
        assert!(matches!(s.characteristic(), Err(PhysicsError::OutOfRange { quantity: "pipe spacing", .. })));
        let mut s = demo();
        s.covering_resistance_m2k_w = 0.2;
        assert!(s.characteristic().is_err());
        let mut s = demo();
        s.pipe_inner_diameter_m = 0.02;
        assert!(matches!(s.characteristic(), Err(PhysicsError::Inconsistent(_))));
        let mut s = demo();
        s.area_m2 = f64::NAN;
        assert!(matches!(s.characteristic(), Err(PhysicsError::NotFinite { .. })));
        assert!(design(&demo(), -1.0, 35.0, 20.0).is_err());
        assert!(limit_heat_flux_w_m2(FloorZone::Occupied, 30.0).is_err());
        assert!(basic_curve_w_m2(-1.0).is_err());
    }

    #[test]
    fn heat_flux_inverts_medium_difference() {
        let c = demo().characteristic().unwrap();
        for q in [0.5, 10.0, 60.0, 100.0, 175.0] {
            let dh = c.medium_difference_k(q);
            assert!((c.heat_flux_w_m2(dh) - q).abs() < 1e-9 * q.max(1.0), "{q}");
        }
    }

    #[test]
    fn k_h_is_plausible() {
        // Common practice: K_H of wet systems lies around 3–7 W/(m²K)
        // (higher for bare floors at close spacing).
        let d = design(&demo(), 12.0 * 70.0, 45.0, 20.0).unwrap();
        assert!(d.k_h_w_m2k > 3.0 && d.k_h_w_m2k < 7.0, "{}", d.k_h_w_m2k);
        assert!(d.outcome.meets_load());
        assert!(!d.exceeds_surface_limit);
        assert!((d.loop_length_m - 90.0).abs() < 1e-12);
        assert!(d.loop_dp_pa > 0.0 && d.water_content_l > 0.0);
        // Closer spacing and no covering transmit more.
        let mut bare = demo();
        bare.spacing_m = 0.10;
        bare.covering_resistance_m2k_w = 0.0;
        let b = design(&bare, 12.0 * 70.0, 45.0, 20.0).unwrap();
        assert!(b.k_h_w_m2k > d.k_h_w_m2k);
    }

    #[test]
    fn flags_surface_and_dp() {
        let d = design(&demo(), 12.0 * 130.0, 55.0, 20.0).unwrap();
        assert!(d.exceeds_surface_limit);
        let mut long = demo();
        long.area_m2 = 25.0;
        long.spacing_m = 0.10;
        let d = design(&long, 25.0 * 80.0, 45.0, 20.0).unwrap();
        assert!(d.exceeds_length_limit);
    }

    #[test]
    fn output_at_design_flow_returns_design_load() {
        let s = demo();
        let d = design(&s, 900.0, 45.0, 20.0).unwrap();
        let o = s.output_at_flow(d.outcome.mass_flow_kg_s(), 45.0, 20.0).unwrap();
        assert!((o.output_w - 900.0).abs() < 1e-6, "{o:?}");
        assert!((o.return_c - d.outcome.return_c()).abs() < 1e-8);
    }
}
