//! Unit tests of the shared emitter model (LMTD, the characteristic solves, designs).

use super::*;

#[test]
fn lmtd_rejects_non_physical_temperatures_naming_them() {
    let e = lmtd_k(55.0, 60.0, 20.0).unwrap_err();
    assert!(e.to_string().contains("60"), "{e}");
    let e = lmtd_k(55.0, 20.0, 20.0).unwrap_err();
    assert!(e.to_string().contains("return temperature 20"), "{e}");
    assert!(lmtd_k(18.0, 17.0, 20.0).is_err());
    assert!(matches!(lmtd_k(f64::NAN, 45.0, 20.0), Err(PhysicsError::NotFinite { .. })));
    assert!(matches!(lmtd_k(120.0, 45.0, 20.0), Err(PhysicsError::OutOfRange { .. })));
    assert!(matches!(lmtd_k(55.0, 45.0, 60.0), Err(PhysicsError::OutOfRange { .. })));
}

#[test]
fn lmtd_limit_at_equal_temperatures() {
    assert!((lmtd_k(60.0, 60.0, 20.0).unwrap() - 40.0).abs() < 1e-12);
    let near = lmtd_k(60.0, 60.0 - 1e-9, 20.0).unwrap();
    assert!((near - (40.0 - 0.5e-9)).abs() < 1e-9, "{near}");
}

#[test]
fn kv_body_law() {
    // 1 m³/h through Kv = 1 gives 1 bar (definition of Kv).
    let rho = 1000.0;
    let b = BodyHydraulics::from_kv(1.0, rho).unwrap();
    let (dp, slope) = b.dp_pa(rho / 3600.0);
    assert!((dp - 1e5).abs() < 1e-6, "{dp}");
    assert!((slope - 2.0 * dp / (rho / 3600.0)).abs() < 1e-6);
    assert!(BodyHydraulics::from_kv(0.0, rho).is_err());
    assert!(BodyHydraulics::from_kv(1.0, f64::NAN).is_err());
}

#[test]
fn model_round_trips_through_ron() {
    let models = vec![
        EmitterModel::Radiator(RadiatorSpec {
            type_code: "22".into(),
            height_mm: 600,
            sizing: RadiatorSizing::Existing { nominal_output_w: 1750.0, length_mm: 1000 },
            exponent_n: Some(1.3),
        }),
        EmitterModel::Terminal(TerminalSpec {
            nominal_output_w: 3000.0,
            nominal_supply_c: 45.0,
            nominal_return_c: 40.0,
            nominal_room_c: 20.0,
            exponent_n: 1.0,
            kv_m3_h: 1.6,
            water_content_l: 1.2,
        }),
    ];
    let text = ron::to_string(&models).unwrap();
    let back: Vec<EmitterModel> = ron::from_str(&text).unwrap();
    assert_eq!(back, models);
}

#[test]
fn existing_radiator_design_checks_and_freezes() {
    let temps = DesignTemperatures::new(45.0, 35.0, 20.0);
    let existing = EmitterModel::Radiator(RadiatorSpec {
        type_code: "11".into(),
        height_mm: 600,
        sizing: RadiatorSizing::Existing { nominal_output_w: 1000.0, length_mm: 1000 },
        exponent_n: None,
    });
    // 1000 W nominal cannot give 900 W at 45 °C supply: a shortfall.
    let d = existing.design(900.0, &temps).unwrap();
    assert!(!d.outcome.meets_load());
    let d = existing.design(300.0, &temps).unwrap();
    assert!(d.outcome.meets_load());
    let o = d.installed.output_at_flow(d.outcome.mass_flow_kg_s(), 45.0, 20.0).unwrap();
    assert!((o.output_w - 300.0).abs() < 1e-6, "{o:?}");
    let (dp, slope) = d.installed.body.dp_pa(d.outcome.mass_flow_kg_s());
    assert!(dp > 0.0 && slope > 0.0);
}

#[test]
fn checks_reject_bad_loads_and_flows() {
    let r = RadiatorRating::new(1000.0, 1.3).unwrap();
    assert!(r.return_temp_for_load(-1.0, 55.0, 20.0).is_err());
    assert!(r.return_temp_for_load(f64::NAN, 55.0, 20.0).is_err());
    assert!(r.output_at_flow(-0.01, 55.0, 20.0).is_err());
    assert!(r.output_at_flow(0.01, 15.0, 20.0).is_err());
}
/// The output at a flow by the plain bisection the faster root finder
/// replaced (kept here as the yardstick): bracket by halving/doubling
/// from u = 1, bisect in ln u to a relative width of 1e-13, c_p by the
/// same outer fixed point.
fn output_at_flow_by_bisection(ch: &impl Characteristic, m: f64, supply_c: f64, room_c: f64) -> FlowOutput {
    let a = supply_c - room_c;
    let mut cp = water::mean_cp_j_kg_k(supply_c, room_c + 0.5 * a).unwrap();
    let mut result = FlowOutput { output_w: 0.0, return_c: room_c };
    for _ in 0..10 {
        let capacity_w_k = m * cp;
        let h = |u: f64| {
            let one_minus_x = -(-u).exp_m1();
            capacity_w_k * a * one_minus_x - ch.output_w(a * one_minus_x / u)
        };
        let (mut lo, mut hi) = (1.0_f64, 1.0_f64);
        for _ in 0..1100 {
            if h(lo) <= 0.0 {
                break;
            }
            lo *= 0.5;
        }
        for _ in 0..1100 {
            if h(hi) >= 0.0 {
                break;
            }
            hi *= 2.0;
        }
        let delta_k = if h(lo) <= 0.0 && h(hi) >= 0.0 {
            for _ in 0..200 {
                let mid = (lo * hi).sqrt();
                if mid <= lo || mid >= hi || hi / lo - 1.0 < 1e-13 {
                    break;
                }
                if h(mid) < 0.0 {
                    lo = mid;
                } else {
                    hi = mid;
                }
            }
            a * -(-(lo * hi).sqrt()).exp_m1()
        } else if h(hi) < 0.0 {
            a
        } else {
            0.0
        };
        let return_c = supply_c - delta_k;
        let next = FlowOutput { output_w: capacity_w_k * delta_k, return_c };
        let cp_next = water::mean_cp_j_kg_k(supply_c, return_c.max(MIN_TEMPERATURE_C)).unwrap();
        let settled = (cp_next - cp).abs() <= 1e-10 * cp;
        cp = cp_next;
        result = next;
        if settled {
            break;
        }
    }
    result
}

/// The false-position root finder gives the bisection's answer to 1e-9
/// relative (output and the water's cooling θs − θr) over flows from a
/// trickle to a flood, for power laws n = 1.0 to 1.4 and a floor loop.
#[test]
fn output_at_flow_agrees_with_plain_bisection() {
    let floor = FloorLoopSpec::typical(12.0, FloorZone::Occupied).characteristic().unwrap();
    let chars: Vec<InstalledCharacteristic> = vec![
        InstalledCharacteristic::Radiator(RadiatorRating::new(1500.0, 1.3).unwrap()),
        InstalledCharacteristic::Radiator(RadiatorRating::new(400.0, 1.4).unwrap()),
        InstalledCharacteristic::Terminal(terminal::TerminalRating {
            nominal_output_w: 3000.0,
            nominal_lmtd_k: 22.4,
            exponent_n: 1.0,
        }),
        InstalledCharacteristic::FloorLoop(floor),
    ];
    let mut worst = 0.0_f64;
    for ch in &chars {
        for &(supply_c, room_c) in &[(75.0, 20.0), (55.0, 20.0), (45.0, 24.0), (35.0, 20.0), (21.0, 20.0), (95.0, 5.0)]
        {
            for k in -60..=40 {
                let m = 0.01 * 10f64.powf(f64::from(k) / 10.0);
                let new = ch.output_at_flow(m, supply_c, room_c).unwrap();
                let old = output_at_flow_by_bisection(ch, m, supply_c, room_c);
                let rel_q = (new.output_w - old.output_w).abs() / old.output_w.abs().max(1e-300);
                let rel_d = ((supply_c - new.return_c) - (supply_c - old.return_c)).abs()
                    / (supply_c - old.return_c).abs().max(1e-300);
                worst = worst.max(rel_q).max(rel_d);
                assert!(rel_q < 1e-9 && rel_d < 1e-9, "{ch:?} m {m} at {supply_c}/{room_c}: {new:?} vs {old:?}");
            }
        }
    }
    assert!(worst < 1e-9, "{worst}");
    // Cost: characteristic evaluations per solve, old and new.
    let counting = Counting { inner: &chars[0], calls: std::cell::Cell::new(0) };
    let (mut n_new, mut n_old) = (0, 0);
    for k in -20..=20 {
        let m = 0.02 * 10f64.powf(f64::from(k) / 20.0);
        counting.calls.set(0);
        counting.output_at_flow(m, 70.0, 20.0).unwrap();
        n_new += counting.calls.get();
        counting.calls.set(0);
        output_at_flow_by_bisection(&counting, m, 70.0, 20.0);
        n_old += counting.calls.get();
    }
    eprintln!("worst {worst:e}; evaluations per solve: new {}, bisection {}", n_new / 41, n_old / 41);
    assert!(n_new * 4 < n_old, "{n_new} vs {n_old}");
}

/// The closed-form slopes of the power law and the floor loop agree with
/// a central difference of the output (the provided method).
#[test]
fn output_slopes_agree_with_central_differences() {
    struct Plain<'a>(&'a InstalledCharacteristic);
    impl Characteristic for Plain<'_> {
        fn output_w(&self, lmtd_k: f64) -> f64 {
            self.0.output_w(lmtd_k)
        }
        fn lmtd_for_output_k(&self, output_w: f64) -> f64 {
            self.0.lmtd_for_output_k(output_w)
        }
    }
    let floor = FloorLoopSpec::typical(12.0, FloorZone::Occupied).characteristic().unwrap();
    for ch in [
        InstalledCharacteristic::Radiator(RadiatorRating::new(1500.0, 1.3).unwrap()),
        InstalledCharacteristic::FloorLoop(floor),
    ] {
        for l in [0.5, 3.0, 10.0, 25.0, 49.0] {
            let (q, d) = ch.output_and_slope(l);
            let (q_ref, d_ref) = Plain(&ch).output_and_slope(l);
            assert!((q - q_ref).abs() <= 1e-12 * q_ref, "{ch:?} at {l}: {q} vs {q_ref}");
            assert!((d - d_ref).abs() <= 1e-6 * d_ref, "{ch:?} at {l}: {d} vs {d_ref}");
        }
    }
}

/// A characteristic that counts its evaluations.
struct Counting<'a> {
    inner: &'a InstalledCharacteristic,
    calls: std::cell::Cell<usize>,
}

impl Characteristic for Counting<'_> {
    fn output_w(&self, lmtd_k: f64) -> f64 {
        self.calls.set(self.calls.get() + 1);
        self.inner.output_w(lmtd_k)
    }

    fn lmtd_for_output_k(&self, output_w: f64) -> f64 {
        self.inner.lmtd_for_output_k(output_w)
    }

    fn output_and_slope(&self, lmtd_k: f64) -> (f64, f64) {
        self.calls.set(self.calls.get() + 1);
        self.inner.output_and_slope(lmtd_k)
    }
}
