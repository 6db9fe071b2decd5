//! Unit tests of the valve module (Kv, families, presetting, authority).

use super::*;

fn close(a: f64, b: f64, rel: f64) -> bool {
    ((a - b) / b).abs() <= rel
}

#[test]
fn kv_definition_round_trips() {
    // IEC 60534: Q = Kv at 1 bar with ρ = 1000 kg/m³.
    assert!(close(dp_pa_from_kv(2.5, 2.5, 1000.0).unwrap(), 1e5, 1e-12));
    assert!(close(flow_m3_h(2.5, 1e5, 1000.0).unwrap(), 2.5, 1e-12));
    assert!(close(kv_needed(0.3, 10_000.0, 977.0).unwrap(), 0.3 * (10.0_f64 * 0.977).sqrt(), 1e-12));
    let kv = kv_needed(0.12, 4_000.0, 975.0).unwrap();
    assert!(close(dp_pa_from_kv(0.12, kv, 975.0).unwrap(), 4_000.0, 1e-12));
    assert!(close(flow_m3_h(kv, 4_000.0, 975.0).unwrap(), 0.12, 1e-12));
}

#[test]
fn resistance_matches_kv_formula() {
    let (kv, rho) = (0.7, 980.0);
    let r = resistance_r_pa_s2_kg2(kv, rho).unwrap();
    let m = 0.05; // kg/s
    let q = 3600.0 * m / rho;
    assert!(close(r * m * m, dp_pa_from_kv(q, kv, rho).unwrap(), 1e-12));
}

#[test]
fn series_and_parallel() {
    assert!(close(series_kv(&[1.0, 1.0]).unwrap(), 1.0 / 2.0_f64.sqrt(), 1e-12));
    assert!(close(series_kv(&[0.8]).unwrap(), 0.8, 1e-12));
    assert!(close(parallel_kv(&[0.5, 0.25]).unwrap(), 0.75, 1e-12));
    assert!(series_kv(&[]).is_err());
    assert!(parallel_kv(&[]).is_err());
}

#[test]
fn rejects_non_physical_input() {
    assert!(matches!(dp_pa_from_kv(-1.0, 1.0, 1000.0), Err(PhysicsError::Negative { .. })));
    assert!(matches!(dp_pa_from_kv(1.0, 0.0, 1000.0), Err(PhysicsError::NotPositive { .. })));
    assert!(matches!(dp_pa_from_kv(1.0, 1.0, f64::NAN), Err(PhysicsError::NotFinite { .. })));
    assert!(matches!(dp_pa_from_kv(1.0, 1.0, 10.0), Err(PhysicsError::OutOfRange { .. })));
    assert!(kv_needed(0.1, 0.0, 1000.0).is_err());
    assert!(flow_m3_h(1.0, -5.0, 1000.0).is_err());
    assert!(resistance_r_pa_s2_kg2(-0.3, 1000.0).is_err());
    assert!(series_kv(&[1.0, f64::INFINITY]).is_err());
    assert!(authority(0.0, 1.0).is_err());
    assert!(authority(2.0, 1.0).is_err());
    let family = valve_family("trv-demo-8").unwrap();
    assert!(choose_setting(family, -0.2).is_err());
    assert!(kv_at_continuous_setting(family, 7.5).is_err());
    assert!(kv_at_continuous_setting(family, f64::NAN).is_err());
    assert!(continuous_setting_for_kv(family, 2.0).is_err());
    assert!(flow_ratio_in_circuit(0.2, 0.2, 0.0, 1.0).is_err());
}

#[test]
fn catalog_loads_and_is_marked_illustrative() {
    let all = valve_families().unwrap();
    assert!(all.len() >= 8);
    for f in all {
        assert!(f.note.contains("illustrative"), "{}", f.id);
    }
    assert_eq!(families_of_kind(ValveKind::ThermostaticRadiator).unwrap().len(), 3);
    assert_eq!(families_of_kind(ValveKind::Balancing).unwrap().len(), 4);
    assert!(matches!(valve_family("no-such-valve"), Err(PhysicsError::NotFound(_))));
}

#[test]
fn bad_catalog_is_a_catalog_error() {
    let e = parse_valve_catalog("x.ron", "ValveCatalog(note: \"\", families: [").unwrap_err();
    assert!(matches!(e, PhysicsError::Catalog { .. }), "{e}");
    let decreasing = r#"ValveCatalog(note: "", families: [ValveFamily(id: "a", name: "a",
        kind: Lockshield, connection_dn: 15, settings: [(label: "1", kv_m3_h: 0.5),
        (label: "2", kv_m3_h: 0.4)], kvs_fully_open: 0.6, note: "")])"#;
    let e = parse_valve_catalog("x.ron", decreasing).unwrap_err();
    assert!(e.to_string().contains("larger than the previous"), "{e}");
}

#[test]
fn setting_choice_nearest_in_log_space() {
    let f = valve_family("trv-demo-8").unwrap(); // 0.05 0.08 0.13 0.20 0.30 0.43 0.62 0.90
    // 0.16: ln(0.20/0.16) = 0.223 > ln(0.16/0.13) = 0.208 → setting "3".
    let c = choose_setting(f, 0.16).unwrap();
    assert_eq!((c.index, c.label.as_str(), c.fit), (2, "3", SettingFit::InRange));
    assert!(close(c.flow_error_fraction_at_same_dp, 0.13 / 0.16 - 1.0, 1e-12));
    // Next-larger rule gives "4".
    let c = choose_setting_with(f, 0.16, SettingRule::NextLarger).unwrap();
    assert_eq!(c.label, "4");
    // Exact hit.
    assert_eq!(choose_setting(f, 0.30).unwrap().label, "5");
    // Above the table: largest, flagged.
    let c = choose_setting(f, 1.5).unwrap();
    assert_eq!((c.label.as_str(), c.fit), ("N", SettingFit::AboveLargest));
    assert!(c.flow_error_fraction_at_same_dp < 0.0);
    // Below the table: smallest, flagged.
    let c = choose_setting(f, 0.01).unwrap();
    assert_eq!((c.index, c.fit), (0, SettingFit::BelowSmallest));
    assert!(c.flow_error_fraction_at_same_dp > 0.0);
}

#[test]
fn circuit_flow_error_is_smaller_than_valve_only_error() {
    // Valve-only: Q/Qd = Kv ratio.
    assert!(close(flow_ratio_in_circuit(0.13, 0.16, 5_000.0, 0.0).unwrap(), 0.13 / 0.16, 1e-12));
    // Worked case: Δp_valve = 6 kPa, Δp_rest = 4 kPa, Kv ratio 0.8:
    // Q/Qd = √(10 / (6/0.64 + 4)) = √(10/13.375) = 0.864 66…
    let r = flow_ratio_in_circuit(0.8, 1.0, 6_000.0, 4_000.0).unwrap();
    assert!(close(r, (10.0_f64 / 13.375).sqrt(), 1e-12));
    assert!(r > 0.8 && r < 1.0);
    let c = choose_setting(valve_family("trv-demo-8").unwrap(), 0.16).unwrap();
    let e = c.flow_error_fraction_in_circuit(6_000.0, 4_000.0).unwrap();
    assert!(e < 0.0 && e > c.flow_error_fraction_at_same_dp);
}

#[test]
fn authority_definition() {
    assert!(close(authority(3_000.0, 10_000.0).unwrap(), 0.3, 1e-12));
    assert!(close(authority(5_000.0, 5_000.0).unwrap(), 1.0, 1e-12));
    assert!(authority(2_000.0, 10_000.0).unwrap() < AUTHORITY_WARN_BELOW);
}

#[test]
fn continuous_setting_is_log_linear_and_invertible() {
    let f = valve_family("trv-demo-8").unwrap();
    for (i, s) in f.settings.iter().enumerate() {
        assert!(close(kv_at_continuous_setting(f, i as f64).unwrap(), s.kv_m3_h, 1e-12));
    }
    // Halfway between 0.05 and 0.08 is the geometric mean.
    assert!(close(kv_at_continuous_setting(f, 0.5).unwrap(), (0.05_f64 * 0.08).sqrt(), 1e-12));
    for kv in [0.05, 0.07, 0.2, 0.5, 0.9] {
        let p = continuous_setting_for_kv(f, kv).unwrap();
        assert!(close(kv_at_continuous_setting(f, p).unwrap(), kv, 1e-12), "{kv}");
    }
}

fn family(id: &str) -> &'static ValveFamily {
    valve_family(id).unwrap()
}

/// Two valves in series: 1/Kv² = 1/Kv₁² + 1/Kv₂² (the pressure drops add at
/// one flow; Kv definition of IEC 60534-1). The trim's pair Kv and the
/// flow ratio it predicts follow from it: a pair of exactly the needed Kv
/// gives the design flow.
#[test]
fn the_trim_meets_the_tolerance_with_the_lockshield_open_when_it_can() {
    let valve = family("trv-demo-fine");
    let lock = family("lockshield-demo");
    // Needed pair Kv 0.25 m³/h at 10 kPa: Q = 0.25·√0.1 = 0.0791 m³/h.
    let need = TrimNeed {
        flow_m3_h: 0.25 * 0.1_f64.sqrt(),
        dp_pair_pa: 10_000.0,
        dp_own_rest_pa: 2_000.0,
        density_kg_m3: 1000.0,
        tolerance_fraction: 0.10,
        authority_dp_pa: 0.0,
    };
    let t = choose_trim(valve, lock, &need).unwrap();
    assert_eq!(t.fit, TrimFit::Within);
    assert!(t.flow_error_fraction.abs() <= 0.10, "{t:?}");
    assert!((t.pair_kv_needed_m3_h - 0.25).abs() < 1e-12);
    let pair = 1.0 / (1.0 / t.valve_kv_m3_h.powi(2) + 1.0 / t.lockshield_kv_m3_h.powi(2)).sqrt();
    assert!((t.pair_kv_m3_h() - pair).abs() < 1e-15);
    // The predicted error is the in-circuit flow ratio of that pair.
    let ratio = flow_ratio_in_circuit(pair, 0.25, 10_000.0, 2_000.0).unwrap();
    assert!((t.flow_error_fraction - (ratio - 1.0)).abs() < 1e-12);
}

/// A coarse valve whose two nearest steps miss the needed Kv by about ±20 %
/// alone is brought within the tolerance by throttling the lockshield.
#[test]
fn a_coarse_valve_is_trimmed_by_the_lockshield() {
    let valve = family("trv-demo-8");
    let lock = family("lockshield-demo");
    // Needed 0.245: between steps "4" (0.20) and "5" (0.30).
    let need = TrimNeed {
        flow_m3_h: 0.245 * 0.1_f64.sqrt(),
        dp_pair_pa: 10_000.0,
        dp_own_rest_pa: 0.0,
        density_kg_m3: 1000.0,
        tolerance_fraction: 0.05,
        authority_dp_pa: 0.0,
    };
    let alone = choose_setting(valve, 0.245 / (1.0 - (0.245_f64 / 1.70).powi(2)).sqrt()).unwrap();
    assert!(alone.flow_error_fraction_at_same_dp.abs() > 0.05, "{alone:?}");
    let t = choose_trim(valve, lock, &need).unwrap();
    assert_eq!(t.fit, TrimFit::Within, "{t:?}");
    assert!(t.flow_error_fraction.abs() <= 0.05, "{t:?}");
    assert!(t.lockshield_index < lock.settings.len() - 1, "the lockshield is throttled: {t:?}");
}

/// When no pair can, the closest is returned and the fit says why.
#[test]
fn a_need_outside_every_pair_is_named() {
    let valve = family("trv-demo-8");
    let lock = family("lockshield-demo");
    let base = TrimNeed {
        flow_m3_h: 0.0,
        dp_pair_pa: 10_000.0,
        dp_own_rest_pa: 0.0,
        density_kg_m3: 1000.0,
        tolerance_fraction: 0.10,
        authority_dp_pa: 0.0,
    };
    let big = choose_trim(valve, lock, &TrimNeed { flow_m3_h: 5.0 * 0.1_f64.sqrt(), ..base }).unwrap();
    assert_eq!(big.fit, TrimFit::AboveLargest);
    assert!(big.flow_error_fraction < -0.5);
    let small = choose_trim(valve, lock, &TrimNeed { flow_m3_h: 0.005 * 0.1_f64.sqrt(), ..base }).unwrap();
    assert_eq!(small.fit, TrimFit::BelowSmallest);
    assert!(small.flow_error_fraction > 0.5);
}
