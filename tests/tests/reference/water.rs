//! Water properties against IAPWS.
//!
//! Source: Python library `iapws` 1.5.5, `iapws.IAPWS97(P=0.3 MPa, T)` —
//! IAPWS-IF97 region 1 for density and c_p, the IAPWS 2008 formulation for
//! viscosity — fixture `water.json` from `tests/reference/gen_water.py`.
//! Tolerances are those the foundation issue sets: density and c_p within
//! 0.1 %, viscosity within 1 %.

use flowrise_core::water;
use serde::Deserialize;

#[derive(Deserialize)]
struct Row {
    temperature_c: f64,
    density_kg_m3: f64,
    cp_j_kg_k: f64,
    viscosity_pa_s: f64,
    enthalpy_j_kg: f64,
}

#[derive(Deserialize)]
struct Fixture {
    source: String,
    pressure_mpa: f64,
    rows: Vec<Row>,
}

fn fixture() -> Fixture {
    let text = std::fs::read_to_string(flowrise_tests::fixture_path("water.json")).unwrap();
    serde_json::from_str(&text).unwrap()
}

fn rel(a: f64, b: f64) -> f64 {
    ((a - b) / b).abs()
}

#[test]
fn density_cp_viscosity_match_iapws() {
    let fx = fixture();
    assert!(fx.source.contains("iapws"));
    assert!(fx.rows.len() >= 20);
    for row in &fx.rows {
        let w = water::properties_at(row.temperature_c, fx.pressure_mpa * 1e6).unwrap();
        // IAPWS-IF97 via iapws 1.5.5: density and c_p within 0.1 %.
        assert!(rel(w.density_kg_m3, row.density_kg_m3) < 1e-3, "density at {} °C", row.temperature_c);
        assert!(rel(w.cp_j_kg_k, row.cp_j_kg_k) < 1e-3, "c_p at {} °C", row.temperature_c);
        // IAPWS 2008 viscosity via iapws 1.5.5: within 1 %.
        assert!(rel(w.viscosity_pa_s, row.viscosity_pa_s) < 1e-2, "viscosity at {} °C", row.temperature_c);
    }
}

#[test]
fn mean_cp_converts_heat_to_flow_like_the_enthalpy_difference() {
    // The mass flow that carries Φ between two temperatures is Φ/(h1 − h2);
    // flowrise's mean c_p must reproduce the IAPWS-IF97 enthalpy difference
    // (iapws 1.5.5) within 0.1 %.
    let fx = fixture();
    let find = |t: f64| fx.rows.iter().find(|r| (r.temperature_c - t).abs() < 1e-9).unwrap();
    for (ts, tr) in [(75.0, 65.0), (55.0, 45.0), (35.0, 30.0), (90.0, 70.0)] {
        let dh = find(ts).enthalpy_j_kg - find(tr).enthalpy_j_kg;
        let cp = water::mean_cp_j_kg_k(ts, tr).unwrap();
        assert!(rel(cp * (ts - tr), dh) < 1e-3, "{ts}/{tr}: {} vs {dh}", cp * (ts - tr));
    }
}
