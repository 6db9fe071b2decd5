//! Circulating pump: curve, control mode, operating point and duty.
//!
//! The pump's maximum curve is the quadratic H(Q) = a0 + a1·Q + a2·Q²
//! through three points read off the pump's data (Q in m³/h, H in kPa).
//! The control mode ([`PumpControl`]) sets the head the pump aims for; it can
//! never deliver more than the maximum curve, so the effective head is
//! min(control head, curve head).
//!
//! Conventions (common practice, no source): proportional-pressure control
//! runs on a straight line from half the set-point at zero flow to the
//! set-point at design flow, H = H_set · (0.5 + 0.5·Q/Q_design).
//!
//! Reference checks: unit tests below (fit reproduces its points, operating
//! point lies on both curves) and `tests/tests/reference/valves_pump_vessel.rs`.

use serde::{Deserialize, Serialize};

use crate::error::{PhysicsError, PhysicsResult, check};

/// Wire-to-water efficiency assumed when none is given, fraction. An
/// assumption, recalled from memory, not verified against a document: small
/// electronically commutated wet-rotor circulators reach roughly 20–30 % at
/// their best point. Replace it with the pump's own data.
pub const DEFAULT_WIRE_TO_WATER_EFFICIENCY: f64 = 0.25;

/// Share of the set-point at zero flow for proportional-pressure control
/// (common practice: 50 %).
pub const PROPORTIONAL_ZERO_FLOW_SHARE: f64 = 0.5;

/// Three (flow m³/h, head kPa) points — the stored form of a [`PumpCurve`].
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct PumpCurvePoints {
    /// (flow m³/h, head kPa) points on the pump's maximum curve.
    pub points_m3_h_kpa: [(f64, f64); 3],
}

/// Maximum pump curve H = a0 + a1·Q + a2·Q² (H in kPa, Q in m³/h), valid by
/// construction: head falls with flow from zero flow to the flow where the
/// head reaches zero.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(try_from = "PumpCurvePoints", into = "PumpCurvePoints")]
pub struct PumpCurve {
    points: [(f64, f64); 3],
    a0_kpa: f64,
    a1_kpa_h_m3: f64,
    a2_kpa_h2_m6: f64,
    max_flow_m3_h: f64,
}

impl TryFrom<PumpCurvePoints> for PumpCurve {
    type Error = PhysicsError;
    fn try_from(p: PumpCurvePoints) -> PhysicsResult<Self> {
        Self::from_three_points(p.points_m3_h_kpa)
    }
}

impl From<PumpCurve> for PumpCurvePoints {
    fn from(c: PumpCurve) -> Self {
        Self { points_m3_h_kpa: c.points }
    }
}

impl PumpCurve {
    /// Fits the quadratic through three (flow m³/h, head kPa) points, given
    /// in any order.
    ///
    /// # Errors
    /// [`PhysicsError`] when a value is negative or not finite, two flows
    /// coincide, the heads do not fall strictly as flow rises, the fitted
    /// curve never reaches zero head, or it rises with flow anywhere between
    /// zero flow and the zero-head flow (a hump: the operating point would
    /// not be unique).
    pub fn from_three_points(points: [(f64, f64); 3]) -> PhysicsResult<Self> {
        for &(q, h) in &points {
            check::non_negative("pump curve flow", q, "m³/h")?;
            check::non_negative("pump curve head", h, "kPa")?;
        }
        let mut p = points;
        p.sort_by(|a, b| a.0.total_cmp(&b.0));
        let scale_q = p[2].0.max(1e-9);
        for w in p.windows(2) {
            if (w[1].0 - w[0].0) <= 1e-9 * scale_q {
                return Err(PhysicsError::Inconsistent(format!(
                    "pump curve points have the same flow {} m³/h twice; give three different flows",
                    w[0].0
                )));
            }
            if w[1].1 >= w[0].1 {
                return Err(PhysicsError::Inconsistent(format!(
                    "pump curve head must fall as flow rises: {} kPa at {} m³/h but {} kPa at {} m³/h",
                    w[0].1, w[0].0, w[1].1, w[1].0
                )));
            }
        }
        // Newton divided differences → monomial coefficients.
        let [(q0, h0), (q1, h1), (q2, h2)] = p;
        let d01 = (h1 - h0) / (q1 - q0);
        let d12 = (h2 - h1) / (q2 - q1);
        let a2 = (d12 - d01) / (q2 - q0);
        let a1 = d01 - a2 * (q0 + q1);
        let a0 = h0 - a1 * q0 - a2 * q0 * q0;
        if !a0.is_finite() || a0 <= 0.0 {
            return Err(PhysicsError::Inconsistent(format!(
                "pump curve through the points has no positive head at zero flow ({a0} kPa); \
                 check the points"
            )));
        }
        let max_flow_m3_h = smallest_positive_root(a0, a1, a2).ok_or_else(|| {
            PhysicsError::Inconsistent(
                "pump curve through the points never reaches zero head; give points that \
                 describe the falling part of the curve"
                    .to_owned(),
            )
        })?;
        // The derivative a1 + 2·a2·Q is linear: checking both ends suffices.
        let slope_at = |q: f64| a1 + 2.0 * a2 * q;
        if slope_at(0.0) > 0.0 || slope_at(max_flow_m3_h) > 0.0 {
            return Err(PhysicsError::Inconsistent(
                "pump curve through the points rises with flow somewhere between zero flow and \
                 its end (a hump); give points on the falling part of the curve"
                    .to_owned(),
            ));
        }
        Ok(Self { points, a0_kpa: a0, a1_kpa_h_m3: a1, a2_kpa_h2_m6: a2, max_flow_m3_h })
    }

    /// The three points the curve was built from, as given.
    #[must_use]
    pub fn points(&self) -> [(f64, f64); 3] {
        self.points
    }

    /// Coefficients (a0 kPa, a1 kPa·h/m³, a2 kPa·h²/m⁶).
    #[must_use]
    pub fn coefficients(&self) -> (f64, f64, f64) {
        (self.a0_kpa, self.a1_kpa_h_m3, self.a2_kpa_h2_m6)
    }

    /// Head at zero flow (shut-off head), kPa.
    #[must_use]
    pub fn shutoff_head_kpa(&self) -> f64 {
        self.a0_kpa
    }

    /// Flow where the curve's head reaches zero, m³/h.
    #[must_use]
    pub fn max_flow_m3_h(&self) -> f64 {
        self.max_flow_m3_h
    }

    fn eval(&self, q: f64) -> f64 {
        self.a0_kpa + q * (self.a1_kpa_h_m3 + q * self.a2_kpa_h2_m6)
    }

    /// Head at `flow_m3_h`, kPa. Beyond [`Self::max_flow_m3_h`] the quadratic
    /// is extrapolated (negative head: the pump is a resistance there).
    ///
    /// # Errors
    /// [`PhysicsError`] when the flow is negative or not finite.
    pub fn head_kpa(&self, flow_m3_h: f64) -> PhysicsResult<f64> {
        check::non_negative("pump flow", flow_m3_h, "m³/h")?;
        Ok(self.eval(flow_m3_h))
    }

    /// Slope dH/dQ at `flow_m3_h`, kPa·h/m³ (≤ 0 up to the zero-head flow).
    ///
    /// # Errors
    /// [`PhysicsError`] when the flow is negative or not finite.
    pub fn dhead_dflow_kpa_h_m3(&self, flow_m3_h: f64) -> PhysicsResult<f64> {
        check::non_negative("pump flow", flow_m3_h, "m³/h")?;
        Ok(self.a1_kpa_h_m3 + 2.0 * self.a2_kpa_h2_m6 * flow_m3_h)
    }
}

/// Smallest positive root of a0 + a1·x + a2·x² (a0 > 0), if any.
fn smallest_positive_root(a0: f64, a1: f64, a2: f64) -> Option<f64> {
    let scale = a1.abs().max(a0.abs()).max(a2.abs());
    if a2.abs() <= 1e-14 * scale {
        return (a1 < 0.0).then(|| -a0 / a1);
    }
    let disc = a1 * a1 - 4.0 * a2 * a0;
    if disc < 0.0 {
        return None;
    }
    // Numerically stable pair of roots.
    let qq = -0.5 * (a1 + a1.signum() * disc.sqrt());
    let mut roots = Vec::with_capacity(2);
    if qq != 0.0 {
        roots.push(a0 / qq);
        roots.push(qq / a2);
    }
    roots.into_iter().filter(|r| r.is_finite() && *r > 0.0).reduce(f64::min)
}

/// How the pump is controlled. Every mode is bounded by the maximum curve.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub enum PumpControl {
    /// Runs on its maximum curve.
    FixedSpeed,
    /// Holds the head at `setpoint_kpa` at every flow.
    ConstantDp {
        /// Head set-point, kPa.
        setpoint_kpa: f64,
    },
    /// H = setpoint · (0.5 + 0.5·Q/Q_design): the set-point at design flow,
    /// half of it at zero flow (common practice convention).
    ProportionalDp {
        /// Head at design flow, kPa.
        setpoint_kpa: f64,
    },
}

impl PumpControl {
    /// Check the set-point.
    ///
    /// # Errors
    /// [`PhysicsError`] when a set-point is not positive and finite.
    pub fn validate(&self) -> PhysicsResult<()> {
        self.check()
    }

    fn check(&self) -> PhysicsResult<()> {
        match *self {
            Self::FixedSpeed => Ok(()),
            Self::ConstantDp { setpoint_kpa } | Self::ProportionalDp { setpoint_kpa } => {
                check::positive("pump head set-point", setpoint_kpa, "kPa").map(|_| ())
            }
        }
    }

    /// Control head without the curve bound; `None` for fixed speed.
    fn control_head_kpa(&self, q: f64, q_design: f64) -> Option<f64> {
        match *self {
            Self::FixedSpeed => None,
            Self::ConstantDp { setpoint_kpa } => Some(setpoint_kpa),
            Self::ProportionalDp { setpoint_kpa } => Some(
                setpoint_kpa * (PROPORTIONAL_ZERO_FLOW_SHARE + (1.0 - PROPORTIONAL_ZERO_FLOW_SHARE) * q / q_design),
            ),
        }
    }

    /// Effective head at `flow_m3_h`, kPa: the control head, bounded by the
    /// maximum curve.
    ///
    /// # Errors
    /// [`PhysicsError`] when the flow is negative, the design flow is not
    /// positive, or the set-point is not positive.
    pub fn head_kpa(&self, curve: &PumpCurve, flow_m3_h: f64, design_flow_m3_h: f64) -> PhysicsResult<f64> {
        self.check()?;
        check::positive("pump design flow", design_flow_m3_h, "m³/h")?;
        let h_curve = curve.head_kpa(flow_m3_h)?;
        Ok(match self.control_head_kpa(flow_m3_h, design_flow_m3_h) {
            Some(h) => h.min(h_curve),
            None => h_curve,
        })
    }
}

/// Where the pump and the system curve meet.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct OperatingPoint {
    /// Flow, m³/h.
    pub flow_m3_h: f64,
    /// Head, kPa.
    pub head_kpa: f64,
    /// True when the control head is out of reach and the pump runs on its
    /// maximum curve (always true for fixed speed).
    pub on_max_curve: bool,
}

/// Operating point against the system curve Δp = k·Q² (kPa, Q in m³/h).
///
/// # Errors
/// As [`operating_point_with_static`].
pub fn operating_point(
    curve: &PumpCurve,
    control: &PumpControl,
    system_k_kpa_per_m3h2: f64,
    design_flow_m3_h: f64,
) -> PhysicsResult<OperatingPoint> {
    operating_point_with_static(curve, control, system_k_kpa_per_m3h2, 0.0, design_flow_m3_h)
}

/// Operating point against the system curve Δp = static + k·Q² (kPa, Q in
/// m³/h), solved by bisection on [0, zero-head flow] (the effective head
/// minus the system head changes sign exactly once there).
///
/// # Errors
/// [`PhysicsError`] when k is not positive, the static part is negative, the
/// design flow is not positive, the set-point is not positive, or the pump
/// cannot overcome the static part at zero flow (no intersection).
pub fn operating_point_with_static(
    curve: &PumpCurve,
    control: &PumpControl,
    system_k_kpa_per_m3h2: f64,
    system_static_kpa: f64,
    design_flow_m3_h: f64,
) -> PhysicsResult<OperatingPoint> {
    check::positive("system curve coefficient k", system_k_kpa_per_m3h2, "kPa/(m³/h)²")?;
    check::non_negative("system static head", system_static_kpa, "kPa")?;
    check::positive("pump design flow", design_flow_m3_h, "m³/h")?;
    control.check()?;
    let effective = |q: f64| {
        let h = curve.eval(q);
        control.control_head_kpa(q, design_flow_m3_h).map_or(h, |c| c.min(h))
    };
    let excess = |q: f64| effective(q) - system_static_kpa - system_k_kpa_per_m3h2 * q * q;
    if excess(0.0) <= 0.0 {
        return Err(PhysicsError::Inconsistent(format!(
            "the pump's head at zero flow ({:.3} kPa) does not exceed the system's static head \
             ({system_static_kpa} kPa): no operating point",
            effective(0.0)
        )));
    }
    let (mut lo, mut hi) = (0.0, curve.max_flow_m3_h());
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if excess(mid) > 0.0 {
            lo = mid;
        } else {
            hi = mid;
        }
        if hi - lo <= 1e-13 * curve.max_flow_m3_h() {
            break;
        }
    }
    let q = 0.5 * (lo + hi);
    let h_curve = curve.eval(q);
    let on_max_curve = control.control_head_kpa(q, design_flow_m3_h).is_none_or(|c| c >= h_curve);
    Ok(OperatingPoint { flow_m3_h: q, head_kpa: effective(q), on_max_curve })
}

/// Hydraulic power delivered to the water, W: P = Q · Δp.
///
/// # Errors
/// [`PhysicsError`] when flow or head is negative or not finite.
pub fn hydraulic_power_w(flow_m3_h: f64, head_kpa: f64) -> PhysicsResult<f64> {
    check::non_negative("pump flow", flow_m3_h, "m³/h")?;
    check::non_negative("pump head", head_kpa, "kPa")?;
    Ok(flow_m3_h / 3600.0 * head_kpa * 1000.0)
}

/// Electrical input power, W: hydraulic power / wire-to-water efficiency
/// (use [`DEFAULT_WIRE_TO_WATER_EFFICIENCY`] when the pump's is unknown —
/// an assumption to state in the results).
///
/// # Errors
/// [`PhysicsError`] when flow or head is negative, or the efficiency is
/// outside (0, 1].
pub fn electrical_power_w(flow_m3_h: f64, head_kpa: f64, wire_to_water_efficiency: f64) -> PhysicsResult<f64> {
    check::positive("pump wire-to-water efficiency", wire_to_water_efficiency, "")?;
    check::in_range("pump wire-to-water efficiency", wire_to_water_efficiency, "", 0.0, 1.0)?;
    Ok(hydraulic_power_w(flow_m3_h, head_kpa)? / wire_to_water_efficiency)
}

/// The pump law for the network solver in mass-flow form: pressure rise
/// Δp_Pa = a0 + a1·m + a2·m² with m in kg/s. Returns (a0 Pa, a1 Pa·s/kg,
/// a2 Pa·s²/kg²).
///
/// - constant Δp → (setpoint·1000, 0, 0);
/// - proportional Δp → (setpoint/2·1000, setpoint/2·1000/m_design, 0);
/// - fixed speed → the curve with Q = 3600·m/ρ: (1000·a0, 1000·a1·3600/ρ,
///   1000·a2·(3600/ρ)²).
///
/// The controlled laws are returned *without* the max-curve bound (a
/// quadratic cannot express a min); use [`PumpLaw`] for the bounded law, or
/// check the solved point with [`PumpControl::head_kpa`].
///
/// # Errors
/// [`PhysicsError`] when the density is outside 800–1200 kg/m³, the design
/// mass flow is not positive, or the set-point is not positive.
pub fn to_mass_flow_coefficients(
    curve: &PumpCurve,
    control: &PumpControl,
    density_kg_m3: f64,
    design_mass_flow_kg_s: f64,
) -> PhysicsResult<(f64, f64, f64)> {
    check::in_range("water density", density_kg_m3, "kg/m³", 800.0, 1200.0)?;
    check::positive("pump design mass flow", design_mass_flow_kg_s, "kg/s")?;
    control.check()?;
    Ok(match *control {
        PumpControl::FixedSpeed => curve_in_mass_flow(curve, density_kg_m3),
        PumpControl::ConstantDp { setpoint_kpa } => (setpoint_kpa * 1000.0, 0.0, 0.0),
        PumpControl::ProportionalDp { setpoint_kpa } => {
            let base = setpoint_kpa * 1000.0 * PROPORTIONAL_ZERO_FLOW_SHARE;
            let slope = setpoint_kpa * 1000.0 * (1.0 - PROPORTIONAL_ZERO_FLOW_SHARE) / design_mass_flow_kg_s;
            (base, slope, 0.0)
        }
    })
}

/// The maximum curve in mass-flow form (a0 Pa, a1 Pa·s/kg, a2 Pa·s²/kg²),
/// with Q = 3600·m/ρ.
#[must_use]
pub fn curve_in_mass_flow(curve: &PumpCurve, density_kg_m3: f64) -> (f64, f64, f64) {
    let c = 3600.0 / density_kg_m3;
    let (a0, a1, a2) = curve.coefficients();
    (a0 * 1000.0, a1 * 1000.0 * c, a2 * 1000.0 * c * c)
}

/// The bounded pump law in mass-flow form, for a solver that evaluates the
/// pressure rise and its slope at each iteration: Δp(m) = min(control law,
/// maximum curve).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PumpLaw {
    control_pa: (f64, f64, f64),
    curve_pa: (f64, f64, f64),
}

impl PumpLaw {
    /// Builds the law from a curve and a control mode.
    ///
    /// # Errors
    /// As [`to_mass_flow_coefficients`].
    pub fn new(
        curve: &PumpCurve,
        control: &PumpControl,
        density_kg_m3: f64,
        design_mass_flow_kg_s: f64,
    ) -> PhysicsResult<Self> {
        let control_pa = to_mass_flow_coefficients(curve, control, density_kg_m3, design_mass_flow_kg_s)?;
        Ok(Self { control_pa, curve_pa: curve_in_mass_flow(curve, density_kg_m3) })
    }

    fn eval(c: (f64, f64, f64), m: f64) -> f64 {
        c.0 + m * (c.1 + m * c.2)
    }

    /// Pressure rise at mass flow `mass_flow_kg_s` (kg/s, ≥ 0 in normal
    /// operation), Pa, and its derivative dΔp/dm, Pa·s/kg.
    #[must_use]
    pub fn dp_pa_and_slope(&self, mass_flow_kg_s: f64) -> (f64, f64) {
        let m = mass_flow_kg_s;
        let ctrl = Self::eval(self.control_pa, m);
        let curve = Self::eval(self.curve_pa, m);
        if ctrl <= curve {
            (ctrl, self.control_pa.1 + 2.0 * self.control_pa.2 * m)
        } else {
            (curve, self.curve_pa.1 + 2.0 * self.curve_pa.2 * m)
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn curve() -> PumpCurve {
        // Illustrative demo curve (invented): 60 kPa shut-off, 0 kPa near 3.6 m³/h.
        PumpCurve::from_three_points([(0.0, 60.0), (1.5, 50.0), (3.0, 20.0)]).unwrap()
    }

    fn close(a: f64, b: f64, tol: f64) -> bool {
        (a - b).abs() <= tol * b.abs().max(1.0)
    }

    #[test]
    fn fit_reproduces_its_points() {
        let pts = [(2.0, 35.0), (0.5, 55.0), (1.2, 47.0)];
        let c = PumpCurve::from_three_points(pts).unwrap();
        for (q, h) in pts {
            assert!(close(c.head_kpa(q).unwrap(), h, 1e-12), "{q}");
        }
        assert!(close(c.head_kpa(c.max_flow_m3_h()).unwrap(), 0.0, 1e-9));
        assert_eq!(c.points(), pts);
    }

    #[test]
    fn fit_coefficients_of_a_worked_case() {
        // Hand solution through (0, 60), (1.5, 50), (3, 20):
        // a0 = 60 (the point at zero flow);
        // 50 = 60 + 1.5·a1 + 2.25·a2  →  1.5·a1 + 2.25·a2 = −10   (×2: 3·a1 + 4.5·a2 = −20)
        // 20 = 60 + 3·a1 + 9·a2       →  3·a1 + 9·a2 = −40
        // subtract: 4.5·a2 = −20 → a2 = −4.444…; then 1.5·a1 = −10 + 10 → a1 = 0.
        let (a0, a1, a2) = curve().coefficients();
        assert!(close(a0, 60.0, 1e-12));
        assert!(a1.abs() < 1e-12);
        assert!(close(a2, -20.0 / 4.5, 1e-12));
        // Zero head at Q = √(60·4.5/20) = √13.5 = 3.674 m³/h.
        assert!(close(curve().max_flow_m3_h(), 13.5_f64.sqrt(), 1e-12));
    }

    #[test]
    fn fit_rejects_bad_points() {
        assert!(PumpCurve::from_three_points([(0.0, 60.0), (0.0, 50.0), (3.0, 20.0)]).is_err());
        assert!(PumpCurve::from_three_points([(0.0, 60.0), (1.5, 65.0), (3.0, 20.0)]).is_err());
        assert!(PumpCurve::from_three_points([(0.0, 60.0), (1.5, 50.0), (-3.0, 20.0)]).is_err());
        assert!(PumpCurve::from_three_points([(0.0, 60.0), (1.5, f64::NAN), (3.0, 20.0)]).is_err());
        // Convex points whose parabola turns up before zero head.
        assert!(PumpCurve::from_three_points([(0.0, 60.0), (1.0, 20.0), (2.0, 10.0)]).is_err());
        // A hump: heads fall between the points, but the fitted parabola rises near zero flow.
        assert!(PumpCurve::from_three_points([(1.0, 60.0), (2.0, 59.0), (3.0, 50.0)]).is_err());
    }

    #[test]
    fn operating_point_lies_on_both_curves() {
        let c = curve();
        let k = 5.0;
        let op = operating_point(&c, &PumpControl::FixedSpeed, k, 2.0).unwrap();
        assert!(close(op.head_kpa, k * op.flow_m3_h * op.flow_m3_h, 1e-10));
        assert!(close(op.head_kpa, c.head_kpa(op.flow_m3_h).unwrap(), 1e-10));
        assert!(op.on_max_curve);
        // Analytic: 60 − 4.444 Q² = 5 Q² → Q² = 60/9.444 = 6.353
        assert!(close(op.flow_m3_h, (60.0 / (5.0 + 20.0 / 4.5_f64)).sqrt(), 1e-10));
    }

    #[test]
    fn constant_dp_gives_the_setpoint() {
        let c = curve();
        let op = operating_point(&c, &PumpControl::ConstantDp { setpoint_kpa: 30.0 }, 10.0, 2.0).unwrap();
        assert!(close(op.head_kpa, 30.0, 1e-10));
        assert!(close(op.flow_m3_h, 3.0_f64.sqrt(), 1e-10));
        assert!(!op.on_max_curve);
        // Set-point above what the curve gives at that flow: bounded by the curve.
        let op = operating_point(&c, &PumpControl::ConstantDp { setpoint_kpa: 55.0 }, 2.0, 2.0).unwrap();
        assert!(op.on_max_curve);
        assert!(close(op.head_kpa, c.head_kpa(op.flow_m3_h).unwrap(), 1e-10));
    }

    #[test]
    fn proportional_dp_hits_setpoint_at_design_flow() {
        // System sized so that the design point is (2 m³/h, 40 kPa): k = 10.
        let c = curve();
        let op = operating_point(&c, &PumpControl::ProportionalDp { setpoint_kpa: 40.0 }, 10.0, 2.0).unwrap();
        assert!(close(op.flow_m3_h, 2.0, 1e-10));
        assert!(close(op.head_kpa, 40.0, 1e-10));
        // At zero flow the line gives half the set-point.
        let h0 = PumpControl::ProportionalDp { setpoint_kpa: 40.0 }.head_kpa(&c, 0.0, 2.0).unwrap();
        assert!(close(h0, 20.0, 1e-12));
    }

    #[test]
    fn static_head_too_high_has_no_operating_point() {
        let e = operating_point_with_static(&curve(), &PumpControl::FixedSpeed, 1.0, 70.0, 2.0).unwrap_err();
        assert!(matches!(e, PhysicsError::Inconsistent(_)));
    }

    #[test]
    fn rejects_non_physical_input() {
        let c = curve();
        assert!(c.head_kpa(-1.0).is_err());
        assert!(c.dhead_dflow_kpa_h_m3(f64::NAN).is_err());
        assert!(operating_point(&c, &PumpControl::FixedSpeed, 0.0, 2.0).is_err());
        assert!(operating_point(&c, &PumpControl::FixedSpeed, 1.0, -2.0).is_err());
        assert!(operating_point(&c, &PumpControl::ConstantDp { setpoint_kpa: -5.0 }, 1.0, 2.0).is_err());
        assert!(hydraulic_power_w(-1.0, 10.0).is_err());
        assert!(electrical_power_w(1.0, 10.0, 0.0).is_err());
        assert!(electrical_power_w(1.0, 10.0, 1.5).is_err());
        assert!(to_mass_flow_coefficients(&c, &PumpControl::FixedSpeed, 0.0, 1.0).is_err());
        assert!(to_mass_flow_coefficients(&c, &PumpControl::FixedSpeed, 1000.0, 0.0).is_err());
    }

    #[test]
    fn power() {
        // 1 m³/h at 36 kPa: 1/3600 m³/s · 36 000 Pa = 10 W.
        assert!(close(hydraulic_power_w(1.0, 36.0).unwrap(), 10.0, 1e-12));
        assert!(close(electrical_power_w(1.0, 36.0, 0.25).unwrap(), 40.0, 1e-12));
    }

    #[test]
    fn mass_flow_coefficients_match_volume_form() {
        let c = curve();
        let rho = 977.0;
        let (a0, a1, a2) = to_mass_flow_coefficients(&c, &PumpControl::FixedSpeed, rho, 0.5).unwrap();
        for m in [0.0, 0.2, 0.5, 0.9] {
            let q = 3600.0 * m / rho;
            assert!(close(a0 + a1 * m + a2 * m * m, c.head_kpa(q).unwrap() * 1000.0, 1e-10));
        }
        let (b0, b1, b2) =
            to_mass_flow_coefficients(&c, &PumpControl::ProportionalDp { setpoint_kpa: 40.0 }, rho, 0.5).unwrap();
        assert!(close(b0, 20_000.0, 1e-12) && close(b1, 40_000.0, 1e-12) && b2.abs() < 1e-12);
        let (d0, d1, d2) =
            to_mass_flow_coefficients(&c, &PumpControl::ConstantDp { setpoint_kpa: 30.0 }, rho, 0.5).unwrap();
        assert!(close(d0, 30_000.0, 1e-12) && d1.abs() < 1e-12 && d2.abs() < 1e-12);
    }

    #[test]
    fn bounded_law_takes_the_lower_of_control_and_curve() {
        let c = curve();
        let rho = 1000.0;
        let law = PumpLaw::new(&c, &PumpControl::ConstantDp { setpoint_kpa: 30.0 }, rho, 0.5).unwrap();
        let (dp, slope) = law.dp_pa_and_slope(0.1);
        assert!(close(dp, 30_000.0, 1e-12) && slope.abs() < 1e-12);
        // At 3.3 m³/h the curve is below 30 kPa.
        let m = 3.3 * rho / 3600.0;
        let (dp, slope) = law.dp_pa_and_slope(m);
        assert!(close(dp, c.head_kpa(3.3).unwrap() * 1000.0, 1e-10) && slope < 0.0);
    }

    #[test]
    fn serde_round_trip_validates() {
        let c = curve();
        let text = serde_json::to_string(&c).unwrap();
        let back: PumpCurve = serde_json::from_str(&text).unwrap();
        assert_eq!(back, c);
        let bad = r#"{"points_m3_h_kpa":[[0.0,60.0],[1.5,70.0],[3.0,20.0]]}"#;
        assert!(serde_json::from_str::<PumpCurve>(bad).is_err());
        let ctl: PumpControl = serde_json::from_str(r#"{"ConstantDp":{"setpoint_kpa":25.0}}"#).unwrap();
        assert_eq!(ctl, PumpControl::ConstantDp { setpoint_kpa: 25.0 });
    }
}
