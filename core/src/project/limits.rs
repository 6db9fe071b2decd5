//! The accepted range of every number a user types or a file holds: one
//! table, read by the file validation, by the edits and by the window's
//! input fields, so that a value the window takes is a value the file
//! takes and the other way round.
//!
//! Ranges are generous: they exclude what is not physical or would
//! overflow a calculation, not what is unusual. A range without a source
//! is common practice for the trade's equipment (e.g. room temperatures of
//! heated rooms, set-points of circulators).

use std::fmt;

/// An accepted range of one quantity, in the unit the project stores.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Limit {
    /// Quantity, as a message names it ("room temperature").
    pub name: &'static str,
    /// Unit of the stored value ("°C").
    pub unit: &'static str,
    /// Smallest accepted value.
    pub min: f64,
    /// Largest accepted value.
    pub max: f64,
    /// The smallest value itself is refused (a length must be above 0).
    pub min_exclusive: bool,
}

impl Limit {
    const fn new(name: &'static str, unit: &'static str, min: f64, max: f64) -> Self {
        Self { name, unit, min, max, min_exclusive: false }
    }

    const fn above(name: &'static str, unit: &'static str, min: f64, max: f64) -> Self {
        Self { name, unit, min, max, min_exclusive: true }
    }

    /// True when `v` is finite and inside the range.
    #[must_use]
    pub fn contains(&self, v: f64) -> bool {
        v.is_finite() && v <= self.max && if self.min_exclusive { v > self.min } else { v >= self.min }
    }

    /// `Ok(v)` inside the range, else the message naming the value and the
    /// range ("room temperature 45 °C — give 5 to 30 °C").
    ///
    /// # Errors
    /// The message, when `v` is outside.
    pub fn check(&self, v: f64) -> Result<f64, String> {
        if self.contains(v) {
            Ok(v)
        } else {
            Err(format!("{} {}{} — give {}", self.name, readable(v), self.unit_suffix(), self.range_text()))
        }
    }

    /// "5 to 30 °C", "more than 0 and at most 10000 m".
    #[must_use]
    pub fn range_text(&self) -> String {
        if self.min_exclusive {
            format!("more than {} and at most {}{}", num(self.min), num(self.max), self.unit_suffix())
        } else {
            format!("{} to {}{}", num(self.min), num(self.max), self.unit_suffix())
        }
    }

    /// " °C", or nothing for a quantity without a unit.
    fn unit_suffix(&self) -> String {
        if self.unit.is_empty() { String::new() } else { format!(" {}", self.unit) }
    }

    /// The range scaled to a display unit (a value shown in kW of a limit
    /// stored in W: `scaled(1e-3)`), as (min, max).
    #[must_use]
    pub fn scaled(&self, factor: f64) -> (f64, f64) {
        (self.min * factor, self.max * factor)
    }
}

impl fmt::Display for Limit {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{} {}", self.name, self.range_text())
    }
}

/// A number for a message: no trailing zeros.
fn num(v: f64) -> String {
    readable(v)
}

/// A number as a person reads it in a message: four significant digits
/// below 1,000 (`0.1235`, `21.5`, `999.9`), whole numbers from 1,000 to
/// 10^15 (`4228439`), powers of ten outside (`1e-9`, `1e308`); no trailing
/// zeros; `NaN`, `inf` and `-inf` as such.
#[must_use]
pub fn readable(v: f64) -> String {
    if !v.is_finite() {
        return format!("{v}");
    }
    let a = v.abs();
    if v == 0.0 {
        return "0".to_owned();
    }
    if !(1e-3..1e15).contains(&a) {
        let t = format!("{v:.3e}");
        return match t.split_once('e') {
            Some((m, e)) => format!("{}e{e}", trim_zeros(m)),
            None => t,
        };
    }
    if a >= 1000.0 {
        return format!("{v:.0}");
    }
    // 4 significant digits: 3 decimals at 1–10, 6 at 0.001–0.01.
    let magnitude = a.log10().floor();
    let decimals = (3.0 - magnitude).max(0.0) as usize;
    let t = format!("{v:.decimals$}");
    let t = trim_zeros(&t);
    if t == "-0" { "0".to_owned() } else { t }
}

/// A power as a person reads it: watts below 1 kW (`1 W`, `950 W`), else
/// kilowatts with one decimal (`2.4 kW`).
#[must_use]
pub fn readable_power(w: f64) -> String {
    if w.is_finite() && w.abs() >= 1000.0 { format!("{:.1} kW", w / 1000.0) } else { format!("{} W", readable(w)) }
}

fn trim_zeros(t: &str) -> String {
    if t.contains('.') { t.trim_end_matches('0').trim_end_matches('.').to_owned() } else { t.to_owned() }
}

// ---- design settings
/// Design supply temperature, °C.
pub const SUPPLY_C: Limit = Limit::new("supply temperature", "°C", 20.0, 95.0);
/// Design return temperature, °C.
pub const RETURN_C: Limit = Limit::new("return temperature", "°C", 10.0, 90.0);
/// Room temperature of a heated room (settings default and each emitter),
/// °C.
pub const ROOM_C: Limit = Limit::new("room temperature", "°C", 5.0, 30.0);
/// Velocity limit of a pipe class, m/s.
pub const VELOCITY_LIMIT_M_S: Limit = Limit::new("velocity limit", "m/s", 0.1, 3.0);
/// Pressure-gradient limit for sizing, Pa/m.
pub const GRADIENT_LIMIT_PA_M: Limit = Limit::new("pressure gradient limit", "Pa/m", 20.0, 1000.0);
/// Velocity sizing reserve, fraction of the limit.
pub const VELOCITY_RESERVE_FRACTION: Limit = Limit::new("velocity sizing reserve", "", 0.0, 0.3);
/// Pump head margin, fraction.
pub const HEAD_MARGIN_FRACTION: Limit = Limit::new("pump head margin", "", 0.0, 1.0);
/// Minimum Δp of the index valve, Pa.
pub const MIN_VALVE_DP_PA: Limit = Limit::new("minimum valve Δp", "Pa", 0.0, 50_000.0);
/// Fill water temperature, °C (the vessel model's range).
pub const FILL_TEMPERATURE_C: Limit = Limit::new("fill temperature", "°C", 1.0, 40.0);
/// Static height above the vessel, m.
pub const STATIC_HEIGHT_M: Limit = Limit::new("static height", "m", 0.0, 200.0);
/// Safety valve set pressure, bar.
pub const SAFETY_VALVE_BAR: Limit = Limit::new("safety valve pressure", "bar", 1.0, 10.0);

/// Accepted flow deviation from design, fraction.
pub const FLOW_TOLERANCE_FRACTION: Limit = Limit::new("flow tolerance", "", 0.01, 0.5);
/// Margin of a hot return above the design return, K.
pub const HOT_RETURN_MARGIN_K: Limit = Limit::new("hot-return margin", "K", 0.5, 20.0);
/// Smallest water temperature drop of a checked emitter, K.
pub const MIN_WATER_DROP_K: Limit = Limit::new("minimum water temperature drop", "K", 0.5, 20.0);
/// Highest flow temperature a source can deliver, °C.
pub const SOURCE_MAX_FLOW_C: Limit = Limit::new("maximum flow temperature", "°C", 20.0, 110.0);

// ---- layout
/// A plan coordinate, m (within 100 km of the origin).
pub const PLAN_COORDINATE_M: Limit = Limit::new("plan coordinate", "m", -1e5, 1e5);
/// A level's elevation, m.
pub const ELEVATION_M: Limit = Limit::new("elevation", "m", -500.0, 500.0);
/// Metres per unit of a plan underlay (an image pixel, a drawing unit):
/// from a 1 µm unit to 1 km per pixel.
pub const UNDERLAY_M_PER_UNIT: Limit = Limit::above("underlay scale", "m per unit", 1e-6, 1000.0);
/// Rotation of a plan underlay, degrees anticlockwise.
pub const UNDERLAY_ROTATION_DEG: Limit = Limit::new("underlay rotation", "°", -360.0, 360.0);
/// Opacity of a plan underlay (0 invisible, 1 opaque).
pub const UNDERLAY_OPACITY: Limit = Limit::new("underlay opacity", "", 0.0, 1.0);
/// A run's length (drawn or given), m.
pub const RUN_LENGTH_M: Limit = Limit::above("length", "m", 0.0, 10_000.0);
/// Outlet pairs of a header.
pub const HEADER_OUTLETS: Limit = Limit::new("outlets", "pairs", 1.0, 24.0);

// ---- heat source and pump
/// Source capacity, W.
pub const SOURCE_CAPACITY_W: Limit = Limit::new("capacity", "W", 1.0, 1e9);
/// Kv of the source's water path, m³/h.
pub const SOURCE_KV_M3_H: Limit = Limit::new("Kv", "m³/h", 0.01, 100_000.0);
/// Water content of the source, l.
pub const SOURCE_WATER_L: Limit = Limit::new("water content", "l", 0.0, 1e6);
/// A pump's Δp set-point, kPa.
pub const PUMP_SETPOINT_KPA: Limit = Limit::new("pump set-point", "kPa", 0.1, 1000.0);
/// Flow of a pump-curve point, m³/h.
pub const PUMP_CURVE_FLOW_M3_H: Limit = Limit::new("pump curve flow", "m³/h", 0.0, 100_000.0);
/// Head of a pump-curve point, kPa.
pub const PUMP_CURVE_HEAD_KPA: Limit = Limit::new("pump curve head", "kPa", 0.0, 2000.0);
/// Kvs of a pumped circuit's mixing or injection valve, m³/h.
pub const CIRCUIT_VALVE_KVS_M3_H: Limit = Limit::new("mixing valve Kvs", "m³/h", 0.1, 1000.0);
/// Set-point of a branch's Δp controller, kPa.
pub const DP_CONTROLLER_SETPOINT_KPA: Limit = Limit::new("Δp controller set-point", "kPa", 1.0, 200.0);
/// Design flow a proportional-Δp pump was set for, m³/h.
pub const PUMP_DESIGN_FLOW_M3_H: Limit = Limit::above("pump design flow", "m³/h", 0.0, 100_000.0);

// ---- emitters
/// Heat load of a room, W.
pub const LOAD_W: Limit = Limit::new("load", "W", 0.0, 1e6);
/// Radiator height, mm.
pub const RADIATOR_HEIGHT_MM: Limit = Limit::new("radiator height", "mm", 100.0, 3000.0);
/// Radiator length, mm.
pub const RADIATOR_LENGTH_MM: Limit = Limit::new("radiator length", "mm", 100.0, 6000.0);
/// Nominal output of a radiator at 75/65/20 °C, W.
pub const RADIATOR_NOMINAL_W: Limit = Limit::new("nominal output", "W", 1.0, 1e5);
/// Heated floor area of a loop, m².
pub const FLOOR_AREA_M2: Limit = Limit::new("heated area", "m²", 0.5, 500.0);
/// Pipe spacing of a floor loop, m.
pub const FLOOR_SPACING_M: Limit = Limit::new("pipe spacing", "m", 0.05, 0.4);
/// Thermal resistance of a floor covering, m²K/W (EN 1264 uses up to 0.15).
pub const FLOOR_COVERING_M2K_W: Limit = Limit::new("covering resistance", "m²K/W", 0.0, 0.15);
/// Sum of local loss coefficients of a loop.
pub const FLOOR_ZETA: Limit = Limit::new("loop ζ sum", "", 0.0, 1000.0);
/// Roughness of a floor-loop pipe, m.
pub const FLOOR_ROUGHNESS_M: Limit = Limit::new("pipe roughness", "m", 0.0, 0.005);
/// Nominal output of a terminal, W.
pub const TERMINAL_NOMINAL_W: Limit = Limit::new("nominal output", "W", 1.0, 1e6);
/// Kv of a terminal's coil, m³/h.
pub const TERMINAL_KV_M3_H: Limit = Limit::new("terminal Kv", "m³/h", 0.01, 10_000.0);

// ---- studies and the command line
/// Step of a supply-temperature sweep, K (0.01 K keeps the widest range,
/// 95 to 20 °C, at 7,501 points, inside the sweep's 10,000).
pub const SWEEP_STEP_K: Limit = Limit::new("sweep step", "K", 0.01, 75.0);
/// Share of the valves a part-load case closes.
pub const CLOSED_FRACTION: Limit = Limit::new("share of valves closed", "", 0.0, 1.0);
/// Accuracy written into an exported network (the relative flow change
/// its solver stops at).
pub const EXPORT_ACCURACY: Limit = Limit::new("export accuracy", "", 1e-12, 0.1);
/// Relative flow change at which the operating solve stops.
pub const SOLVER_FLOW_TOLERANCE: Limit = Limit::new("solver flow tolerance", "", 1e-12, 0.1);
/// Repetitions of a timing measurement.
pub const BENCH_REPEAT: Limit = Limit::new("repetitions", "", 1.0, 1000.0);

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ranges_name_the_value_and_the_fix() {
        assert_eq!(ROOM_C.check(21.0), Ok(21.0));
        assert_eq!(ROOM_C.check(45.0).unwrap_err(), "room temperature 45 °C — give 5 to 30 °C");
        assert!(ROOM_C.check(f64::NAN).is_err());
        assert!(RUN_LENGTH_M.check(0.0).unwrap_err().contains("more than 0 and at most 10000 m"));
        assert!(RUN_LENGTH_M.contains(0.5));
        assert_eq!(SOURCE_CAPACITY_W.scaled(1e-3), (0.001, 1e6));
    }

    /// Issue 20 item 10: numbers in messages are rounded for reading.
    #[test]
    fn numbers_read_well() {
        assert_eq!(readable(4_228_438.717_616_956), "4228439");
        assert_eq!(readable(21.0), "21");
        assert_eq!(readable(0.123_456), "0.1235");
        assert_eq!(readable(999.94), "999.9");
        assert_eq!(readable(-2.5), "-2.5");
        assert_eq!(readable(1e-9), "1e-9");
        assert_eq!(readable(1e308), "1e308");
        assert_eq!(readable(1.5e-300), "1.5e-300");
        assert_eq!(readable(0.0), "0");
        assert_eq!(readable(f64::INFINITY), "inf");
        assert_eq!(readable(f64::NAN), "NaN");
        assert_eq!(
            SOURCE_WATER_L.check(4_228_438.717_616_956).unwrap_err(),
            "water content 4228439 l — give 0 to 1000000 l"
        );
        assert_eq!(RUN_LENGTH_M.range_text(), "more than 0 and at most 10000 m");
        assert_eq!(CLOSED_FRACTION.check(2.0).unwrap_err(), "share of valves closed 2 — give 0 to 1");
        assert_eq!(readable_power(1.0), "1 W");
        assert_eq!(readable_power(999.4), "999.4 W");
        assert_eq!(readable_power(2400.0), "2.4 kW");
    }
}
