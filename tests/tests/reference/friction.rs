//! Friction factor, whole-pipe pressure gradient, fitting ζ and pipe catalog
//! geometry against outside references.
//!
//! Fixture: `tests/reference/fixtures/friction.json`, written by
//! `tests/reference/gen_friction.py` with fluids 1.3.1 and iapws 1.5.5.

use std::f64::consts::PI;

use flowrise_core::fittings::{Fitting, TeeFlow, TeeLeg, tee_k_crane};
use flowrise_core::friction::{
    PipeHydraulics, colebrook_white, darcy_friction_factor, friction_gradient_pa_m, pipe_dp,
};
use flowrise_core::{pipes, water};
use serde_json::Value;

fn fixture() -> Value {
    let path = flowrise_tests::fixture_path("friction.json");
    let text = std::fs::read_to_string(&path).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
    serde_json::from_str(&text).unwrap()
}

fn num(v: &Value, key: &str) -> f64 {
    v[key].as_f64().unwrap_or_else(|| panic!("{key} missing in {v}"))
}

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs()
}

#[test]
fn colebrook_white_matches_fluids() {
    // fluids 1.3.1, fluids.friction.Colebrook (exact Lambert-W solution);
    // grid Re 4e3…1e7 (25 log-spaced) × ε/D 0, 1e-6 … 5e-2. Required 0.5 %,
    // expected ~1e-10 (both solve the same equation to round-off).
    let data = fixture();
    let grid = data["colebrook"].as_array().unwrap();
    assert!(grid.len() >= 200);
    let mut worst: f64 = 0.0;
    for case in grid {
        let (re, rr, f_ref) = (num(case, "re"), num(case, "rr"), num(case, "f"));
        let f = colebrook_white(re, rr).unwrap();
        let e = rel(f, f_ref);
        worst = worst.max(e);
        assert!(e < 5e-3, "Re {re} ε/D {rr}: {f} vs {f_ref}");
        // The regime-aware public function agrees in the turbulent range.
        assert!(rel(darcy_friction_factor(re, rr).unwrap(), f) < 1e-15);
    }
    assert!(worst < 1e-9, "worst relative deviation {worst:e}");
}

/// Issue 15: in the transition range 2000 < Re < 4000 the design takes the
/// larger of its interpolation and Colebrook–White, so it is never below
/// Colebrook–White there (fluids 1.3.1, fluids.friction.Colebrook at Re
/// 2100–3900, ε/D 0–1e-2), and never below the operating solve's law.
#[test]
fn the_design_friction_factor_is_not_below_colebrook_white_in_the_transition() {
    let data = fixture();
    let grid = data["transition_colebrook"].as_array().unwrap();
    assert!(grid.iter().any(|c| (num(c, "re") - 3000.0).abs() < 1e-9), "Re 3000 is in the fixture");
    for case in grid {
        let (re, rr, f_cw) = (num(case, "re"), num(case, "rr"), num(case, "f"));
        let design = flowrise_core::friction::design_friction_factor(re, rr).unwrap();
        let operating = darcy_friction_factor(re, rr).unwrap();
        assert!(design >= f_cw * (1.0 - 1e-9), "Re {re} ε/D {rr}: design {design} below Colebrook–White {f_cw}");
        assert!(design >= operating, "Re {re} ε/D {rr}");
        assert!(rel(design, f_cw.max(operating)) < 1e-9, "Re {re} ε/D {rr}: the larger of the two");
    }
}

#[test]
fn laminar_is_64_over_re() {
    // Hagen–Poiseuille (textbook, exact for fully developed laminar flow).
    for re in [1.0, 50.0, 640.0, 1500.0, 2000.0] {
        let f = darcy_friction_factor(re, 1e-3).unwrap();
        assert!(rel(f, 64.0 / re) < 1e-15, "{re}");
    }
}

#[test]
fn pipe_gradient_matches_fluids_and_iapws() {
    // Reference: fluids 1.3.1 fluids.friction.friction_factor (Colebrook above
    // Re 2040, 64/Re below) with water from iapws 1.5.5 IAPWS97 (ρ) and its
    // IAPWS 2008 viscosity at 0.3 MPa; Δp/L = f/D·ρv²/2. Within 0.5 % (our
    // water properties come from seuif97, a separate IF97 implementation).
    let data = fixture();
    for case in data["pipes"].as_array().unwrap() {
        let series = pipes::find_series(case["series"].as_str().unwrap()).unwrap();
        let size = series.size(case["size"].as_str().unwrap()).unwrap();
        let w = water::properties(num(case, "temperature_c")).unwrap();
        let p = PipeHydraulics::new(
            1.0,
            size.inner_diameter_m(),
            series.roughness_m,
            0.0,
            w.density_kg_m3,
            w.viscosity_pa_s,
        )
        .unwrap();
        let m = num(case, "mass_flow_kg_s");
        assert!(rel(p.reynolds(m), num(case, "re")) < 1e-3, "{case}");
        assert!(rel(p.velocity_m_s(m), num(case, "velocity_m_s")) < 1e-3, "{case}");
        let g = friction_gradient_pa_m(&p, m);
        let g_ref = num(case, "gradient_pa_m");
        assert!(rel(g, g_ref) < 5e-3, "{case}: {g} Pa/m vs {g_ref}");
        // pipe_dp of a 1 m pipe without local losses is the same gradient.
        assert!(rel(pipe_dp(&p, m).0, g) < 1e-12);
    }
}

#[test]
fn fittings_match_fluids() {
    // fluids 1.3.1 fluids.fittings: bend_rounded / bend_miter / diffuser_sharp /
    // contraction_sharp / contraction_conical (method 'Rennels') and
    // K_{branch,run}_{diverging,converging}_Crane at 90°. Same published
    // formulas (Rennels & Hudson 2012; Crane TP-410), so the tolerance is
    // round-off (1e-9 relative, 1e-12 absolute near zero).
    let data = fixture();
    let fittings = data["fittings"].as_array().unwrap();
    let mut counted = 0;
    for case in fittings {
        let kind = case["kind"].as_str().unwrap();
        let k_ref = num(case, "k");
        let k = match kind {
            "bend" => Fitting::Bend { angle_deg: num(case, "angle_deg"), radius_over_diameter: num(case, "r_d") }
                .zeta_at(num(case, "fd"))
                .unwrap(),
            "elbow" => Fitting::Elbow { angle_deg: num(case, "angle_deg") }.zeta().unwrap(),
            "expansion" => Fitting::SuddenExpansion { diameter_ratio: num(case, "beta") }.zeta().unwrap(),
            "contraction" => Fitting::SuddenContraction { diameter_ratio: num(case, "beta") }.zeta().unwrap(),
            "cone" => Fitting::GradualContraction {
                diameter_ratio: num(case, "beta"),
                cone_angle_deg: num(case, "angle_deg"),
            }
            .zeta_at(num(case, "fd"))
            .unwrap(),
            tee => {
                let (flow, leg) = match tee {
                    "tee_dividing_branch" => (TeeFlow::Dividing, TeeLeg::Branch),
                    "tee_dividing_run" => (TeeFlow::Dividing, TeeLeg::Run),
                    "tee_combining_branch" => (TeeFlow::Combining, TeeLeg::Branch),
                    "tee_combining_run" => (TeeFlow::Combining, TeeLeg::Run),
                    other => panic!("unknown fitting kind {other}"),
                };
                tee_k_crane(flow, leg, num(case, "q"), num(case, "beta")).unwrap()
            }
        };
        assert!((k - k_ref).abs() <= 1e-9 * k_ref.abs() + 1e-12, "{case}: {k} vs {k_ref}");
        counted += 1;
    }
    assert!(counted > 200);
}

#[test]
fn catalog_geometry_is_consistent() {
    // Geometry (definition): d = OD − 2·wall; water content = π d²/4 · 1000 l/m.
    let all = pipes::builtin_series().unwrap();
    assert_eq!(all.len(), 6);
    for series in all {
        for size in &series.sizes {
            let d = (size.outer_diameter_mm - 2.0 * size.wall_mm) / 1000.0;
            assert!((size.inner_diameter_m() - d).abs() < 1e-15, "{} {}", series.id, size.label);
            let litres = PI * d * d / 4.0 * 1000.0;
            assert!(rel(size.water_content_l_per_m(), litres) < 1e-12, "{} {}", series.id, size.label);
        }
    }
    // A hand value: copper 22x1 (d = 20 mm) holds π·0.02²/4 m³/m = 0.314 l/m.
    let cu22 = pipes::find_series("copper-en1057").unwrap().size("22x1").unwrap();
    assert!((cu22.water_content_l_per_m() - 0.314_159).abs() < 1e-5);
}
