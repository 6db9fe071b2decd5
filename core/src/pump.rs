//! Circulating pump: curve, control mode, operating point and duty.
//!
//! The pump's maximum curve is the quadratic H(Q) = a0 + a1·Q + a2·Q²
//! through three points read off the pump's data (Q in m³/h, H in kPa),
//! held flat where a parabola would rise (a curve flat near shut-off) and
//! continued as its tangent beyond a flow where a parabola would turn up
//! again (a curve that flattens towards high flow; see
//! [`PumpCurve::from_three_points`] and [`pump_law_at`], the one rule every
//! evaluation of a pump law follows, so it never rises with flow).
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
use crate::project::limits::readable;

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
#[serde(deny_unknown_fields)]
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
    /// Beyond this flow the curve is the parabola's tangent there, m³/h
    /// (infinite when the parabola holds everywhere).
    linear_beyond_m3_h: f64,
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
    /// The pump's maximum curve through three (flow m³/h, head kPa) points,
    /// given in any order.
    ///
    /// The heads must fall as flow rises. The curve is the parabola through
    /// the three points, with two refinements that keep it falling
    /// everywhere (so the operating point is unique and the solver's law
    /// monotone):
    ///
    /// - when that parabola would rise above the first point's head between
    ///   the first two points (a curve flat near shut-off, typical of
    ///   circulators: `(0, 60), (1.5, 55), (3, 20)`), the curve is instead
    ///   the parabola through the other two points whose peak is the first
    ///   point's head, held at that peak down to zero flow — it passes
    ///   through all three points and never exceeds the highest head given;
    /// - below the first point, a parabola whose peak lies at a positive
    ///   flow is held at its peak (the rule of [`held_quadratic`]).
    ///
    /// A curve whose heads fall ever more slowly (convex) is the parabola
    /// through its points when that parabola falls through all three to
    /// zero head. When it would turn up again first (`(0, 60), (1, 20),
    /// (2, 10)`), the curve is the parabola through the first two points
    /// whose slope at the second is that of the straight line to the third,
    /// continued beyond the second point as that straight line: it passes
    /// through all three points, falls everywhere, has no kink (the slope
    /// is continuous) and reaches zero head on the line past the last
    /// point. So every set of three points whose heads fall with flow is
    /// accepted.
    ///
    /// # Errors
    /// [`PhysicsError`] naming the offending points when a value is negative
    /// or not finite, two flows coincide, or a head does not fall as flow
    /// rises.
    pub fn from_three_points(points: [(f64, f64); 3]) -> PhysicsResult<Self> {
        for &(q, h) in &points {
            check::non_negative("pump curve flow", q, "m³/h")?;
            check::non_negative("pump curve head", h, "kPa")?;
        }
        let mut p = points;
        p.sort_by(|a, b| a.0.total_cmp(&b.0));
        let scale_q = p[2].0.max(1e-9);
        let pt = |(q, h): (f64, f64)| format!("({}, {})", readable(q), readable(h));
        for w in p.windows(2) {
            if (w[1].0 - w[0].0) <= 1e-9 * scale_q {
                return Err(PhysicsError::Inconsistent(format!(
                    "pump curve points {} and {} (m³/h, kPa) have the same flow — give three different flows",
                    pt(w[0]),
                    pt(w[1])
                )));
            }
            if w[1].1 >= w[0].1 {
                return Err(PhysicsError::Inconsistent(format!(
                    "pump curve points {} and {} (m³/h, kPa): the head does not fall as the flow rises — a pump \
                     gives less head at more flow; check these two points",
                    pt(w[0]),
                    pt(w[1])
                )));
            }
        }
        let [(q0, h0), (q1, h1), (q2, h2)] = p;
        // Newton divided differences → monomial coefficients.
        let d01 = (h1 - h0) / (q1 - q0);
        let d12 = (h2 - h1) / (q2 - q1);
        let mut a2 = (d12 - d01) / (q2 - q0);
        let mut a1 = d01 - a2 * (q0 + q1);
        let mut a0 = h0 - a1 * q0 - a2 * q0 * q0;
        if a2 < 0.0 && a1 > 0.0 && -a1 / (2.0 * a2) > q0 {
            // The parabola peaks above h0 between the first two points:
            // take the one through the other two points that peaks at h0,
            // at v = (r·q1 − q2)/(r − 1) with r = √((h0 − h2)/(h0 − h1)) > 1
            // (from h0 − h_i = c·(q_i − v)²); its peak lies between q0
            // and q1.
            let r = ((h0 - h2) / (h0 - h1)).sqrt();
            let v = (r * q1 - q2) / (r - 1.0);
            let c = (h0 - h1) / ((q1 - v) * (q1 - v));
            (a0, a1, a2) = (h0 - c * v * v, 2.0 * c * v, -c);
        }
        let curve = |q: f64| held_quadratic([a0, a1, a2], q).0;
        let coefficients_ok = [a0, a1, a2].iter().all(|c| c.is_finite());
        let max_flow = coefficients_ok.then(|| zero_head_flow(a0, a1, a2)).flatten();
        if let Some(max_flow_m3_h) = max_flow.filter(|&z| z >= q2 * (1.0 - 1e-9) && curve(0.0) > 0.0) {
            return Ok(Self {
                points,
                a0_kpa: a0,
                a1_kpa_h_m3: a1,
                a2_kpa_h2_m6: a2,
                linear_beyond_m3_h: f64::INFINITY,
                max_flow_m3_h,
            });
        }
        // Convex points whose parabola turns up again before zero head:
        // H = h1 + d12·(q − q1) + A·(q − q1)² up to q1, with A from the first
        // point, A = (d12 − d01)/(q1 − q0) > 0 (convex), and the line
        // h1 + d12·(q − q1) beyond q1, through the third point. The slope at
        // zero flow, d12 − 2·A·q1 ≤ 2·d01 − d12 < 0, so the parabola falls
        // over [0, q1] and its trough lies beyond q1, where the line rules.
        let a = (d12 - d01) / (q1 - q0);
        let (a0, a1, a2) = (h1 - d12 * q1 + a * q1 * q1, d12 - 2.0 * a * q1, a);
        // Zero head on the line as evaluated (the same rounding as every use).
        let max_flow_m3_h = law_zero_flow([a0, a1, a2], q1).unwrap_or(f64::NAN);
        let all = format!("{}, {}, {}", pt(p[0]), pt(p[1]), pt(p[2]));
        if !([a0, a1, a2, max_flow_m3_h].iter().all(|c| c.is_finite()) && d12 < 0.0 && a0 > 0.0) {
            return Err(PhysicsError::Inconsistent(format!(
                "pump curve points {all} (m³/h, kPa): no falling curve passes through them — check the three points"
            )));
        }
        Ok(Self { points, a0_kpa: a0, a1_kpa_h_m3: a1, a2_kpa_h2_m6: a2, linear_beyond_m3_h: q1, max_flow_m3_h })
    }

    /// The three points the curve was built from, as given.
    #[must_use]
    pub fn points(&self) -> [(f64, f64); 3] {
        self.points
    }

    /// Coefficients (a0 kPa, a1 kPa·h/m³, a2 kPa·h²/m⁶) of the parabola;
    /// the curve is this parabola held at its peak below a peak at positive
    /// flow and continued as its tangent beyond
    /// [`Self::linear_beyond_m3_h`] ([`pump_law_at`]).
    #[must_use]
    pub fn coefficients(&self) -> (f64, f64, f64) {
        (self.a0_kpa, self.a1_kpa_h_m3, self.a2_kpa_h2_m6)
    }

    /// Flow beyond which the curve is the parabola's tangent, m³/h
    /// (infinite when the parabola holds everywhere).
    #[must_use]
    pub fn linear_beyond_m3_h(&self) -> f64 {
        self.linear_beyond_m3_h
    }

    /// Head at zero flow (shut-off head), kPa.
    #[must_use]
    pub fn shutoff_head_kpa(&self) -> f64 {
        self.eval(0.0)
    }

    /// Flow where the curve's head reaches zero, m³/h.
    #[must_use]
    pub fn max_flow_m3_h(&self) -> f64 {
        self.max_flow_m3_h
    }

    fn eval(&self, q: f64) -> f64 {
        self.eval_with_slope(q).0
    }

    fn eval_with_slope(&self, q: f64) -> (f64, f64) {
        pump_law_at([self.a0_kpa, self.a1_kpa_h_m3, self.a2_kpa_h2_m6], self.linear_beyond_m3_h, q)
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
        Ok(self.eval_with_slope(flow_m3_h).1)
    }
}

/// A pump parabola c0 + c1·x + c2·x² made monotone, and its slope, at `x`
/// — the one rule every evaluation of a pump curve or law follows (the
/// curve here, the solver's pump law in mass-flow form, the export):
///
/// - a parabola opening downwards whose peak lies at a positive x
///   (c2 < 0 < c1) is held at its peak below it (slope 0): a curve flat
///   near shut-off instead of one that rises first;
/// - a parabola opening upwards whose trough lies at a positive x
///   (c1 < 0 < c2) is held at its trough beyond it: it never rises again
///   at large flows (where an accepted curve's head is below zero already).
///
/// Other parabolas and straight lines (the constant and proportional Δp
/// laws) are evaluated as they are. The rule depends on the coefficients
/// only, so it holds in any unit of flow.
#[must_use]
pub fn held_quadratic(c: [f64; 3], x: f64) -> (f64, f64) {
    let [c0, c1, c2] = c;
    let at = |x: f64| c0 + x * (c1 + x * c2);
    if (c2 < 0.0 && c1 > 0.0) || (c2 > 0.0 && c1 < 0.0) {
        let vertex = -c1 / (2.0 * c2);
        let held = if c2 < 0.0 { x < vertex } else { x > vertex };
        if held {
            return (at(vertex), 0.0);
        }
    }
    (at(x), c1 + 2.0 * c2 * x)
}

/// A pump law at `x`: the parabola `c` by the rule of [`held_quadratic`] up
/// to `linear_beyond`, and its tangent there beyond it (the same thing for
/// a straight-line law; `linear_beyond` infinite for a parabola that holds
/// everywhere). Returns the value and the slope.
#[must_use]
pub fn pump_law_at(c: [f64; 3], linear_beyond: f64, x: f64) -> (f64, f64) {
    if x > linear_beyond {
        let (h, s) = held_quadratic(c, linear_beyond);
        return (h + s * (x - linear_beyond), s);
    }
    held_quadratic(c, x)
}

/// Where a pump law ([`pump_law_at`]) first reaches zero rise, if it does
/// (its value at zero must be positive), in the law's unit of flow.
#[must_use]
pub fn law_zero_flow(c: [f64; 3], linear_beyond: f64) -> Option<f64> {
    if linear_beyond.is_finite() {
        let (h, s) = held_quadratic(c, linear_beyond);
        if h > 0.0 {
            return (s < 0.0).then(|| linear_beyond + h / -s);
        }
    }
    zero_head_flow(c[0], c[1], c[2])
}

/// Flow where the held parabola ([`held_quadratic`]) first reaches zero
/// head, if it does (its value at zero flow must be positive).
fn zero_head_flow(a0: f64, a1: f64, a2: f64) -> Option<f64> {
    if a2 < 0.0 && a1 > 0.0 {
        // Held at the peak below the vertex: the root beyond it.
        let v = -a1 / (2.0 * a2);
        let peak = a0 + v * (a1 + v * a2);
        return (peak > 0.0).then(|| v + (peak / -a2).sqrt());
    }
    if a0 <= 0.0 {
        return None;
    }
    smallest_positive_root(a0, a1, a2)
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
#[serde(deny_unknown_fields)]
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

/// [`PumpCurve::linear_beyond_m3_h`] as a mass flow, kg/s (infinite when
/// the parabola holds everywhere).
#[must_use]
pub fn curve_linear_beyond_kg_s(curve: &PumpCurve, density_kg_m3: f64) -> f64 {
    curve.linear_beyond_m3_h() * density_kg_m3 / 3600.0
}

/// The bounded pump law in mass-flow form, for a solver that evaluates the
/// pressure rise and its slope at each iteration: Δp(m) = min(control law,
/// maximum curve).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PumpLaw {
    control_pa: (f64, f64, f64),
    curve_pa: (f64, f64, f64),
    linear_beyond_kg_s: f64,
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
        Ok(Self {
            control_pa,
            curve_pa: curve_in_mass_flow(curve, density_kg_m3),
            linear_beyond_kg_s: curve_linear_beyond_kg_s(curve, density_kg_m3),
        })
    }

    /// Pressure rise at mass flow `mass_flow_kg_s` (kg/s, ≥ 0 in normal
    /// operation), Pa, and its derivative dΔp/dm, Pa·s/kg.
    #[must_use]
    pub fn dp_pa_and_slope(&self, mass_flow_kg_s: f64) -> (f64, f64) {
        let m = mass_flow_kg_s;
        let (c0, c1, c2) = self.control_pa;
        let ctrl = pump_law_at([c0, c1, c2], self.linear_beyond_kg_s, m);
        let (k0, k1, k2) = self.curve_pa;
        let curve = pump_law_at([k0, k1, k2], self.linear_beyond_kg_s, m);
        if ctrl.0 <= curve.0 { ctrl } else { curve }
    }
}

#[cfg(test)]
mod tests;
