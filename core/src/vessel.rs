//! Expansion vessel sizing for a sealed heating system (EN 12828, annex D
//! method).
//!
//! Steps and where each comes from:
//!
//! | step | formula | source |
//! |---|---|---|
//! | expansion coefficient | e = ρ(θ_fill)/ρ(θ_max) − 1 | physics (mass conserved); densities IAPWS-IF97 via [`crate::water`] instead of the table EN 12828 prints |
//! | expansion volume | V_e = e · V_system | EN 12828 annex D |
//! | water reserve | V_wr = max(0.5 % · V_system, 3 l) | EN 12828 annex D (recalled from memory, not verified against the document) |
//! | static pressure | p_st = ρ(θ_fill) · g · h | physics; h = height of the system's highest point above the vessel |
//! | pre-charge | p0 = p_st + 0.3 bar | common practice margin; EN 12828 annex D sets a minimum margin over p_st (recalled from memory as 0.2 bar, not verified against the document) |
//! | final pressure | p_e = p_sv − 0.5 bar (p_sv ≤ 5 bar), p_e = 0.9 · p_sv (p_sv > 5 bar) | safety-valve closing margin as commonly applied with EN 12828 (recalled from memory, not verified against the document) |
//! | nominal volume | V_n = (V_e + V_wr) · (p_e + 1)/(p_e − p0) | EN 12828 annex D (Boyle–Mariotte, gauge pressures in bar, +1 bar for the atmosphere) |
//! | fill pressure | p_a = (p0 + 1) · V_n/(V_n − V_wr) − 1 | Boyle–Mariotte: the pressure once the water reserve is in the vessel |
//!
//! The method here has no vapour-pressure term, so the maximum temperature
//! is limited to 99 °C (the water module's range; above 100 °C EN 12828 adds
//! the vapour pressure to p0). The nominal volume is a minimum: choose the
//! next larger vessel available.
//!
//! Reference checks: `tests/tests/reference/valves_pump_vessel.rs` (worked
//! case by hand; expansion coefficient against `iapws` 1.5.5).

use serde::{Deserialize, Serialize};

use crate::error::{PhysicsError, PhysicsResult, check};
use crate::water;

/// Standard gravity, m/s² (CGPM 1901 conventional value).
const G_M_S2: f64 = 9.806_65;

/// Pascals per bar.
const PA_PER_BAR: f64 = 100_000.0;

/// Default fill (lowest) water temperature, °C (common practice: cold mains
/// water at about 10 °C).
pub const DEFAULT_FILL_TEMPERATURE_C: f64 = 10.0;

/// Default pre-charge margin over the static pressure, bar (common
/// practice).
pub const DEFAULT_PRECHARGE_MARGIN_BAR: f64 = 0.3;

/// Water reserve as a share of the system volume (EN 12828 annex D,
/// recalled from memory, not verified against the document).
pub const WATER_RESERVE_SHARE: f64 = 0.005;

/// Smallest water reserve, l (EN 12828 annex D, recalled from memory, not
/// verified against the document).
pub const WATER_RESERVE_MIN_L: f64 = 3.0;

/// Largest single membrane expansion vessel the design counts on, l
/// (common practice: the largest membrane vessels commonly made hold a few
/// thousand litres; recalled from memory, not from a catalogue). A larger
/// nominal volume is several vessels in parallel on one connection, or a
/// pump-pressurisation unit ([`vessels_in_parallel`]).
pub const LARGEST_MEMBRANE_VESSEL_L: f64 = 5000.0;

/// Most system water volume the method accepts, l: a sanity bound on the
/// input (10⁸ l is beyond the water any one heating network holds), not a
/// limit of the method, whose volumes are proportional to the system's.
pub const MAX_SYSTEM_VOLUME_L: f64 = 1.0e8;

/// Highest fill temperature accepted, °C.
pub const MAX_FILL_TEMPERATURE_C: f64 = 40.0;

/// What the vessel is sized for.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct VesselInput {
    /// Water volume of the whole system (pipes, emitters, source), l.
    pub system_volume_l: f64,
    /// Lowest water temperature (at filling), °C.
    pub fill_temperature_c: f64,
    /// Highest water temperature (maximum flow temperature), °C.
    pub max_temperature_c: f64,
    /// Height of the system's highest point above the vessel connection, m.
    pub static_height_m: f64,
    /// Set pressure of the safety valve, bar gauge.
    pub safety_valve_set_pressure_bar: f64,
    /// Pre-charge margin over the static pressure, bar.
    pub precharge_margin_bar: f64,
}

impl VesselInput {
    /// Input with the default fill temperature ([`DEFAULT_FILL_TEMPERATURE_C`])
    /// and pre-charge margin ([`DEFAULT_PRECHARGE_MARGIN_BAR`]).
    #[must_use]
    pub fn new(
        system_volume_l: f64,
        max_temperature_c: f64,
        static_height_m: f64,
        safety_valve_set_pressure_bar: f64,
    ) -> Self {
        Self {
            system_volume_l,
            fill_temperature_c: DEFAULT_FILL_TEMPERATURE_C,
            max_temperature_c,
            static_height_m,
            safety_valve_set_pressure_bar,
            precharge_margin_bar: DEFAULT_PRECHARGE_MARGIN_BAR,
        }
    }
}

/// Result of the sizing, with every intermediate value.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct VesselSizing {
    /// The input sized for.
    pub input: VesselInput,
    /// Water density at the fill temperature, kg/m³.
    pub density_fill_kg_m3: f64,
    /// Water density at the maximum temperature, kg/m³.
    pub density_max_kg_m3: f64,
    /// Expansion coefficient e (fraction, not %).
    pub expansion_coefficient: f64,
    /// Expansion volume V_e, l.
    pub expansion_volume_l: f64,
    /// Water reserve V_wr, l.
    pub water_reserve_l: f64,
    /// Static pressure at the vessel p_st, bar gauge.
    pub static_pressure_bar: f64,
    /// Gas pre-charge p0, bar gauge.
    pub precharge_pressure_bar: f64,
    /// Final (maximum) pressure p_e, bar gauge.
    pub final_pressure_bar: f64,
    /// Pressure factor (p_e + 1)/(p_e − p0).
    pub pressure_factor: f64,
    /// Minimum nominal vessel volume V_n, l.
    pub nominal_volume_l: f64,
    /// Fill (initial) pressure with the water reserve in the vessel, bar gauge.
    pub fill_pressure_bar: f64,
    /// The assumptions made, as sentences for the report.
    pub assumptions: Vec<String>,
}

/// Final pressure p_e from the safety valve set pressure, bar gauge:
/// p_sv − 0.5 bar up to 5 bar, 0.9·p_sv above (closing margin as commonly
/// applied with EN 12828; recalled from memory, not verified against the
/// document).
///
/// # Errors
/// [`PhysicsError`] when the set pressure is outside 1–10 bar.
pub fn final_pressure_bar(safety_valve_set_pressure_bar: f64) -> PhysicsResult<f64> {
    let p_sv = check::in_range("safety valve set pressure", safety_valve_set_pressure_bar, "bar", 1.0, 10.0)?;
    Ok(if p_sv <= 5.0 { p_sv - 0.5 } else { 0.9 * p_sv })
}

/// Static pressure of `static_height_m` of water at `density_kg_m3`, bar:
/// p_st = ρ·g·h.
#[must_use]
pub fn static_pressure_bar(static_height_m: f64, density_kg_m3: f64) -> f64 {
    density_kg_m3 * G_M_S2 * static_height_m / PA_PER_BAR
}

/// Expansion coefficient between two temperatures, fraction:
/// e = ρ(θ_low)/ρ(θ_high) − 1, densities from [`crate::water::density_kg_m3`].
///
/// # Errors
/// [`PhysicsError`] when a temperature is out of the water range or the
/// high temperature is not above the low one.
pub fn expansion_coefficient(low_temperature_c: f64, high_temperature_c: f64) -> PhysicsResult<f64> {
    let rho_low = water::density_kg_m3(low_temperature_c)?;
    let rho_high = water::density_kg_m3(high_temperature_c)?;
    if high_temperature_c <= low_temperature_c {
        return Err(PhysicsError::Inconsistent(format!(
            "maximum temperature {high_temperature_c} °C must be above the fill temperature {low_temperature_c} °C"
        )));
    }
    Ok(rho_low / rho_high - 1.0)
}

/// Number of membrane vessels of at most [`LARGEST_MEMBRANE_VESSEL_L`]
/// that together give `nominal_volume_l` (at least one).
#[must_use]
pub fn vessels_in_parallel(nominal_volume_l: f64) -> u32 {
    let n = (nominal_volume_l.max(0.0) / LARGEST_MEMBRANE_VESSEL_L).ceil();
    // Saturates for absurd volumes; the input bound keeps n far below.
    (n as u32).max(1)
}

/// Sizes the expansion vessel (EN 12828 annex D method; see the module
/// documentation for which steps are the standard's and which are common
/// practice).
///
/// # Errors
/// [`PhysicsError`] when the system volume is not positive, a temperature is
/// out of range (fill 1–40 °C, maximum above fill and ≤ 99 °C), the static
/// height is negative or above 200 m, the safety valve is outside 1–10 bar,
/// the margin is negative or above 2 bar, or the final pressure does not
/// exceed the pre-charge (the vessel cannot work: raise the safety valve
/// pressure or put the vessel higher).
pub fn size_expansion_vessel(input: &VesselInput) -> PhysicsResult<VesselSizing> {
    let v_l = check::positive("system water volume", input.system_volume_l, "l")?;
    check::in_range("system water volume", v_l, "l", 0.0, MAX_SYSTEM_VOLUME_L)?;
    let t_fill = check::in_range(
        "fill temperature",
        input.fill_temperature_c,
        "°C",
        water::MIN_TEMPERATURE_C,
        MAX_FILL_TEMPERATURE_C,
    )?;
    let t_max = check::in_range(
        "maximum flow temperature",
        input.max_temperature_c,
        "°C",
        water::MIN_TEMPERATURE_C,
        water::MAX_TEMPERATURE_C,
    )?;
    let h_m = check::in_range("static height above the vessel", input.static_height_m, "m", 0.0, 200.0)?;
    let margin = check::in_range("pre-charge margin", input.precharge_margin_bar, "bar", 0.0, 2.0)?;
    let p_e = final_pressure_bar(input.safety_valve_set_pressure_bar)?;

    let density_fill_kg_m3 = water::density_kg_m3(t_fill)?;
    let density_max_kg_m3 = water::density_kg_m3(t_max)?;
    let e = expansion_coefficient(t_fill, t_max)?;
    let expansion_volume_l = e * v_l;
    let water_reserve_l = (WATER_RESERVE_SHARE * v_l).max(WATER_RESERVE_MIN_L);
    let static_pressure_bar = static_pressure_bar(h_m, density_fill_kg_m3);
    let p0 = static_pressure_bar + margin;
    if p_e <= p0 {
        return Err(PhysicsError::Inconsistent(format!(
            "final pressure {p_e:.2} bar (safety valve {} bar less its closing margin) does not exceed \
             the pre-charge {p0:.2} bar (static {static_pressure_bar:.2} bar + {margin} bar): raise the \
             safety valve set pressure or place the vessel higher",
            input.safety_valve_set_pressure_bar
        )));
    }
    let pressure_factor = (p_e + 1.0) / (p_e - p0);
    let nominal_volume_l = (expansion_volume_l + water_reserve_l) * pressure_factor;
    let fill_pressure_bar = (p0 + 1.0) * nominal_volume_l / (nominal_volume_l - water_reserve_l) - 1.0;

    let assumptions = vec![
        format!(
            "Expansion coefficient e = ρ({t_fill} °C)/ρ({t_max} °C) − 1 from IAPWS-IF97 densities at \
             {:.0} bar absolute, not from a table.",
            water::SYSTEM_PRESSURE_PA / PA_PER_BAR
        ),
        "Water reserve V_wr = max(0.5 % of the system volume, 3 l): EN 12828 annex D (recalled from \
         memory, not verified against the document)."
            .to_owned(),
        "Static pressure p_st = ρ·g·h with h the height of the system's highest point above the vessel.".to_owned(),
        format!(
            "Pre-charge p0 = p_st + {margin} bar: common practice margin (EN 12828 annex D sets a minimum \
             margin, recalled from memory as 0.2 bar, not verified against the document)."
        ),
        "Final pressure p_e = safety valve set pressure − 0.5 bar up to 5 bar, 90 % of it above: closing \
         margin as commonly applied with EN 12828 (recalled from memory, not verified against the document)."
            .to_owned(),
        "Nominal volume V_n = (V_e + V_wr)·(p_e + 1)/(p_e − p0), gauge pressures in bar: EN 12828 annex D; \
         isothermal gas (Boyle–Mariotte)."
            .to_owned(),
        "No vapour-pressure term: maximum temperature at most 99 °C.".to_owned(),
        "V_n is a minimum: choose the next larger vessel available; set its pre-charge to p0 and fill to p_a."
            .to_owned(),
    ];

    Ok(VesselSizing {
        input: *input,
        density_fill_kg_m3,
        density_max_kg_m3,
        expansion_coefficient: e,
        expansion_volume_l,
        water_reserve_l,
        static_pressure_bar,
        precharge_pressure_bar: p0,
        final_pressure_bar: p_e,
        pressure_factor,
        nominal_volume_l,
        fill_pressure_bar,
        assumptions,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn close(a: f64, b: f64, rel: f64) -> bool {
        ((a - b) / b).abs() <= rel
    }

    fn base() -> VesselInput {
        VesselInput::new(300.0, 70.0, 9.0, 3.0)
    }

    #[test]
    fn gas_reaches_final_pressure_at_full_expansion() {
        // Boyle–Mariotte consistency: with V_wr + V_e of water in the vessel
        // the gas is at p_e.
        let s = size_expansion_vessel(&base()).unwrap();
        let gas_l = s.nominal_volume_l - s.water_reserve_l - s.expansion_volume_l;
        let p = (s.precharge_pressure_bar + 1.0) * s.nominal_volume_l / gas_l - 1.0;
        assert!(close(p, s.final_pressure_bar, 1e-12));
        assert!(s.fill_pressure_bar > s.precharge_pressure_bar && s.fill_pressure_bar < s.final_pressure_bar);
        assert!(s.assumptions.iter().any(|a| a.contains("common practice")));
        assert!(s.assumptions.iter().any(|a| a.contains("recalled from memory")));
    }

    #[test]
    fn water_reserve_has_a_minimum() {
        let small = size_expansion_vessel(&VesselInput::new(100.0, 70.0, 5.0, 3.0)).unwrap();
        assert!(close(small.water_reserve_l, 3.0, 1e-12));
        let large = size_expansion_vessel(&VesselInput::new(2000.0, 70.0, 5.0, 3.0)).unwrap();
        assert!(close(large.water_reserve_l, 10.0, 1e-12));
    }

    #[test]
    fn a_large_system_is_sized_like_a_small_one_and_split_into_vessels() {
        // The method is linear in the system volume above the reserve's
        // minimum: 10× the water, 10× the vessel (a campus-scale plant of
        // 2 million litres as well as 200,000 l).
        let small = size_expansion_vessel(&VesselInput::new(2.0e5, 70.0, 9.0, 3.0)).unwrap();
        let large = size_expansion_vessel(&VesselInput::new(2.0e6, 70.0, 9.0, 3.0)).unwrap();
        assert!(close(large.nominal_volume_l, 10.0 * small.nominal_volume_l, 1e-12));
        assert_eq!(vessels_in_parallel(large.nominal_volume_l), (large.nominal_volume_l / 5000.0).ceil() as u32);
        assert_eq!(vessels_in_parallel(120.0), 1);
        assert_eq!(vessels_in_parallel(5000.0), 1);
        assert_eq!(vessels_in_parallel(5000.1), 2);
    }

    #[test]
    fn final_pressure_rule() {
        assert!(close(final_pressure_bar(3.0).unwrap(), 2.5, 1e-12));
        assert!(close(final_pressure_bar(5.0).unwrap(), 4.5, 1e-12));
        assert!(close(final_pressure_bar(6.0).unwrap(), 5.4, 1e-12));
    }

    #[test]
    fn rejects_nonsense() {
        let mut i = base();
        i.system_volume_l = -5.0;
        assert!(matches!(size_expansion_vessel(&i), Err(PhysicsError::NotPositive { .. })));
        let mut i = base();
        i.system_volume_l = 2.0 * MAX_SYSTEM_VOLUME_L;
        assert!(matches!(size_expansion_vessel(&i), Err(PhysicsError::OutOfRange { .. })));
        let mut i = base();
        i.max_temperature_c = 120.0;
        assert!(matches!(size_expansion_vessel(&i), Err(PhysicsError::OutOfRange { .. })));
        let mut i = base();
        i.max_temperature_c = 8.0;
        assert!(matches!(size_expansion_vessel(&i), Err(PhysicsError::Inconsistent(_))));
        let mut i = base();
        i.fill_temperature_c = f64::NAN;
        assert!(matches!(size_expansion_vessel(&i), Err(PhysicsError::NotFinite { .. })));
        let mut i = base();
        i.static_height_m = -1.0;
        assert!(size_expansion_vessel(&i).is_err());
        let mut i = base();
        i.precharge_margin_bar = -0.1;
        assert!(size_expansion_vessel(&i).is_err());
        // 25 m of static height (≈2.45 bar) + 0.3 bar ≥ p_e = 2.5 bar.
        let mut i = base();
        i.static_height_m = 25.0;
        let e = size_expansion_vessel(&i).unwrap_err();
        assert!(e.to_string().contains("does not exceed the pre-charge"), "{e}");
        assert!(final_pressure_bar(0.0).is_err());
        assert!(expansion_coefficient(70.0, 10.0).is_err());
    }
}
