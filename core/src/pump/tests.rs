//! Unit tests of the pump curve, control modes and operating point.

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
}

/// Head of `c` on a fine grid from zero flow to past its zero-head flow.
fn grid(c: &PumpCurve) -> Vec<(f64, f64)> {
    let top = c.max_flow_m3_h() * 1.2;
    (0..=2000).map(|i| f64::from(i) / 2000.0 * top).map(|q| (q, c.head_kpa(q).unwrap())).collect()
}

fn assert_falls_through_its_points(c: &PumpCurve) {
    let g = grid(c);
    for w in g.windows(2) {
        assert!(w[1].1 <= w[0].1 + 1e-9 * w[0].1.abs().max(1.0), "{:?} rises at {w:?}", c.points());
        let slope = c.dhead_dflow_kpa_h_m3(w[0].0).unwrap();
        assert!(slope <= 1e-9, "{:?}: slope {slope} at {}", c.points(), w[0].0);
    }
    for (q, h) in c.points() {
        assert!(close(c.head_kpa(q).unwrap(), h, 1e-9), "{:?} misses ({q}, {h})", c.points());
    }
    let highest = c.points().iter().map(|p| p.1).fold(f64::MIN, f64::max);
    assert!(c.shutoff_head_kpa() >= highest - 1e-9);
    assert!(close(c.head_kpa(c.max_flow_m3_h()).unwrap(), 0.0, 1e-9));
}

/// Issue 20 item 9: a curve flat near shut-off, whose parabola would
/// rise first, is accepted: flat at the first head, then through the
/// other two points, never above the highest head given.
#[test]
fn a_curve_flat_near_shutoff_is_accepted() {
    let c = PumpCurve::from_three_points([(0.0, 60.0), (1.5, 55.0), (3.0, 20.0)]).unwrap();
    assert_falls_through_its_points(&c);
    assert!(close(c.shutoff_head_kpa(), 60.0, 1e-12));
    assert!(grid(&c).iter().all(|&(_, h)| h <= 60.0 + 1e-9));
    // Flat up to the peak of the parabola through the other two points.
    assert!(close(c.head_kpa(0.5).unwrap(), 60.0, 1e-12));
    assert!(c.dhead_dflow_kpa_h_m3(0.5).unwrap().abs() < 1e-15);
    // A sharper knee: the plain parabola would peak at 71 kPa.
    let c = PumpCurve::from_three_points([(0.0, 60.0), (2.0, 58.0), (3.0, 20.0)]).unwrap();
    assert_falls_through_its_points(&c);
    assert!(grid(&c).iter().all(|&(_, h)| h <= 60.0 + 1e-9));
    // The first point above zero flow, the parabola peaking after it.
    let c = PumpCurve::from_three_points([(1.0, 60.0), (2.0, 59.0), (3.0, 50.0)]).unwrap();
    assert_falls_through_its_points(&c);
    assert!(close(c.shutoff_head_kpa(), 60.0, 1e-12));
    // Peak below the first point: held at the peak below it.
    let c = PumpCurve::from_three_points([(2.0, 60.0), (3.0, 57.0), (4.0, 52.0)]).unwrap();
    assert_falls_through_its_points(&c);
    assert!(close(c.shutoff_head_kpa(), 61.0, 1e-12));
}

/// Issue 20 item 9: every set of three points whose heads fall with
/// flow is accepted — concave, straight or convex — and gives a curve
/// that falls everywhere through its points, without a kink, to zero
/// head past its last point.
#[test]
fn every_falling_curve_is_accepted() {
    let mut state = 0x9e37_79b9_7f4a_7c15_u64;
    let mut next = || {
        state ^= state << 13;
        state ^= state >> 7;
        state ^= state << 17;
        (state >> 11) as f64 / (1u64 << 53) as f64
    };
    let (mut parabola, mut with_line) = (0, 0);
    for _ in 0..4_000 {
        let q0 = if next() < 0.5 { 0.0 } else { next() * 2.0 };
        let q1 = q0 + 0.01 + next() * 3.0;
        let q2 = q1 + 0.01 + next() * 3.0;
        let h2 = if next() < 0.2 { 0.0 } else { next() * 50.0 };
        let h1 = h2 + 0.01 + next() * 50.0;
        let h0 = h1 + 0.001 + next() * 50.0;
        let pts = [(q1, h1), (q2, h2), (q0, h0)];
        let c = PumpCurve::from_three_points(pts).unwrap_or_else(|e| panic!("{pts:?} refused: {e}"));
        assert_falls_through_its_points(&c);
        assert_slope_continuous(&c);
        if c.linear_beyond_m3_h().is_finite() {
            with_line += 1;
        } else {
            parabola += 1;
        }
    }
    // Both forms occur in the sample.
    assert!(parabola > 200 && with_line > 200, "{parabola} parabolas, {with_line} with a straight end");
}

/// The slope of `c` has no jump: neighbouring slopes on a fine grid
/// differ by no more than the parabola's curvature allows over a step.
fn assert_slope_continuous(c: &PumpCurve) {
    let top = c.max_flow_m3_h() * 1.2;
    let step = top / 2_000.0;
    let (_, _, a2) = c.coefficients();
    let mut q = 0.0;
    while q < top {
        let s0 = c.dhead_dflow_kpa_h_m3(q).unwrap();
        let s1 = c.dhead_dflow_kpa_h_m3(q + step).unwrap();
        let allowed = 2.0 * a2.abs() * step * 1.01 + 1e-9 * s0.abs().max(1.0);
        assert!((s1 - s0).abs() <= allowed, "{:?}: slope jumps {s0} → {s1} at {q}", c.points());
        q += step;
    }
}

/// Issue 20 item 9: convex points whose parabola would turn up again
/// before zero head, worked by hand. Through (0, 60), (1, 20), (2, 10):
/// d01 = −40, d12 = −10, A = (d12 − d01)/(q1 − q0) = 30;
/// H = 20 − 10·(q − 1) + 30·(q − 1)² up to q = 1, which gives 60 at
/// q = 0 (20 + 10 + 30) and slope −10 − 60 = −70 there; beyond q = 1 the
/// line 20 − 10·(q − 1), zero at q = 3. (The plain parabola through the
/// three points, 60 − 55·q + 15·q², has its trough at 13.6 kPa.)
#[test]
fn a_curve_that_flattens_is_accepted_as_worked_by_hand() {
    let c = PumpCurve::from_three_points([(0.0, 60.0), (1.0, 20.0), (2.0, 10.0)]).unwrap();
    assert_falls_through_its_points(&c);
    assert!(close(c.linear_beyond_m3_h(), 1.0, 1e-15));
    assert!(close(c.max_flow_m3_h(), 3.0, 1e-12));
    assert!(close(c.head_kpa(0.5).unwrap(), 20.0 + 5.0 + 7.5, 1e-12));
    assert!(close(c.dhead_dflow_kpa_h_m3(0.0).unwrap(), -70.0, 1e-12));
    assert!(close(c.dhead_dflow_kpa_h_m3(2.5).unwrap(), -10.0, 1e-12));
    assert!(close(c.head_kpa(2.5).unwrap(), 5.0, 1e-12));
    // Operating point against Δp = k·Q² with k = 2: on the line,
    // 30 − 10·Q = 2·Q² → Q = (−10 + √(100 + 240))/4 = 2.1098 m³/h.
    let op = operating_point(&c, &PumpControl::FixedSpeed, 2.0, 2.0).unwrap();
    let q = (-10.0 + 340.0_f64.sqrt()) / 4.0;
    assert!(close(op.flow_m3_h, q, 1e-9), "{op:?} vs {q}");
    // The solver's mass-flow law is the same curve.
    let rho = 983.2;
    let law = PumpLaw::new(&c, &PumpControl::FixedSpeed, rho, 0.5).unwrap();
    for q in [0.0, 0.7, 1.0, 1.5, 2.9] {
        let (rise_pa, _) = law.dp_pa_and_slope(q * rho / 3600.0);
        assert!(close(rise_pa, c.head_kpa(q).unwrap() * 1000.0, 1e-9), "{q}");
    }
}

/// Issue 20 item 9: a project whose pump is flat near shut-off, or
/// flattens towards high flow, loads, designs and operates on every
/// control, never above the curve's highest head.
#[test]
fn a_project_with_a_flat_curve_solves() {
    use crate::design::{SolveOptions, Workspace, solve_project};
    use crate::project::{Edit, NodeKind};
    let mut p = crate::generate::generate_building(&crate::generate::BuildingSpec::new(1, 4)).unwrap();
    let src = p.sources()[0];
    // Flat near shut-off, and flattening towards high flow.
    let shapes = [[(0.0, 60.0), (1.5, 55.0), (3.0, 20.0)], [(0.0, 60.0), (1.0, 20.0), (2.0, 10.0)]];
    let controls = [PumpControl::FixedSpeed, PumpControl::ConstantDp { setpoint_kpa: 20.0 }];
    for (points, control) in shapes.into_iter().flat_map(|s| controls.map(|c| (s, c))) {
        let mut kind = p.node(src).unwrap().kind.clone();
        if let NodeKind::Source(s) = &mut kind {
            s.pump.curve_points = points;
            s.pump.control = control;
        }
        p.apply(Edit::SetNodeKind { id: src, kind }).unwrap();
        let back = crate::project::Project::from_ron(&p.to_ron().unwrap()).unwrap();
        let sol = solve_project(&back, &SolveOptions::default(), &mut Workspace::default());
        assert!(sol.converged, "{control:?}: {:#?}", sol.findings);
        let pump = sol.pump.as_ref().unwrap();
        assert!(pump.operating_head_pa <= 60_000.0 + 1e-6 && pump.operating_head_pa > 0.0, "{pump:?}");
        assert!(!sol.findings.iter().any(|f| f.kind == crate::design::FindingKind::PumpCurveInvalid));
    }
}

/// Issue 20 item 9: a refusal names the points concerned.
#[test]
fn a_refusal_names_the_points() {
    let e = PumpCurve::from_three_points([(0.0, 60.0), (1.5, 65.0), (3.0, 20.0)]).unwrap_err().to_string();
    assert!(e.contains("(0, 60)") && e.contains("(1.5, 65)") && e.contains("does not fall"), "{e}");
    let e = PumpCurve::from_three_points([(1.5, 55.0), (1.5, 50.0), (3.0, 20.0)]).unwrap_err().to_string();
    assert!(e.contains("(1.5, 55)") && e.contains("same flow"), "{e}");
}

/// Issue 20 item 9: the solver's law of a curve flat near shut-off
/// never rises with flow, controlled or not, and the operating point
/// is found on the flat part too.
#[test]
fn the_law_of_a_flat_curve_is_monotone() {
    let rho = 990.0;
    // Flat near shut-off, and flattening towards high flow (straight end).
    for points in [[(0.0, 60.0), (1.5, 55.0), (3.0, 20.0)], [(0.0, 60.0), (1.0, 20.0), (2.0, 10.0)]] {
        let c = PumpCurve::from_three_points(points).unwrap();
        let linear_beyond = curve_linear_beyond_kg_s(&c, rho);
        for control in [
            PumpControl::FixedSpeed,
            PumpControl::ConstantDp { setpoint_kpa: 58.0 },
            PumpControl::ConstantDp { setpoint_kpa: 70.0 },
        ] {
            let law = PumpLaw::new(&c, &control, rho, 0.5).unwrap();
            let (coef, bound) = match control {
                PumpControl::FixedSpeed => (to_mass_flow_coefficients(&c, &control, rho, 0.5).unwrap(), None),
                _ => {
                    let (k0, k1, k2) = curve_in_mass_flow(&c, rho);
                    (to_mass_flow_coefficients(&c, &control, rho, 0.5).unwrap(), Some([k0, k1, k2]))
                }
            };
            let mut last = f64::INFINITY;
            for i in 0..=400 {
                let m = f64::from(i) / 400.0;
                let (dp, slope) = law.dp_pa_and_slope(m);
                let solver =
                    crate::network::solver::pump_rise_and_slope([coef.0, coef.1, coef.2], bound, linear_beyond, m);
                assert!(close(dp, solver.0, 1e-12) && slope <= 1e-9, "{points:?} {control:?} at {m}");
                assert!(dp <= last + 1e-9 && dp <= 60_000.0 + 1e-6, "{points:?} {control:?} rises at {m}");
                last = dp;
            }
        }
    }
    let c = PumpCurve::from_three_points([(0.0, 60.0), (1.5, 55.0), (3.0, 20.0)]).unwrap();
    // A stiff system meets the pump on its flat part: 60 kPa at a small flow.
    let op = operating_point(&c, &PumpControl::FixedSpeed, 1e4, 1.0).unwrap();
    assert!(close(op.head_kpa, 60.0, 1e-9) && op.flow_m3_h < 0.1, "{op:?}");
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
