//! Trim: a circuit's presetting valve and lockshield chosen together, from
//! both families' steps. In series their Kv combine as
//! 1/Kv² = 1/Kv₁² + 1/Kv₂² (the pressure drops add at one flow; Kv as in
//! IEC 60534-1).

use serde::{Deserialize, Serialize};

use super::{ValveFamily, dp_pa_from_kv, flow_ratio_in_circuit, kv_needed, validate_family};
use crate::error::{PhysicsError, PhysicsResult, check};

/// What a circuit asks of its valve pair (presetting valve on the supply,
/// lockshield on the return, in series: 1/Kv² = 1/Kv₁² + 1/Kv₂²).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TrimNeed {
    /// Design flow, m³/h.
    pub flow_m3_h: f64,
    /// Δp the pair must take at design flow (head available less the rest
    /// of the circuit), Pa.
    pub dp_pair_pa: f64,
    /// The circuit's own resistances in series with the pair (its
    /// connection pipes and emitter body) at design flow, Pa: they pull a
    /// stepped setting's flow error towards zero ([`flow_ratio_in_circuit`]).
    pub dp_own_rest_pa: f64,
    /// Water density in the valves, kg/m³.
    pub density_kg_m3: f64,
    /// Accepted flow deviation, fraction (±).
    pub tolerance_fraction: f64,
    /// Δp the valve should take at design flow for its authority (the
    /// authority limit times the head available), Pa; 0 = no preference.
    pub authority_dp_pa: f64,
}

/// How well the chosen pair meets the need.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub enum TrimFit {
    /// Within the tolerance.
    Within,
    /// The pair fully open is not enough: the circuit gets less flow.
    AboveLargest,
    /// The pair at its most closed still passes too much.
    BelowSmallest,
    /// Between the ends of the range, but no pair of steps comes within
    /// the tolerance (the steps are too coarse).
    Coarse,
}

/// The chosen valve presetting and lockshield setting.
#[derive(Debug, Clone, PartialEq)]
pub struct TrimChoice {
    /// Index and Kv of the valve's setting.
    pub valve_index: usize,
    /// Kv of the valve's setting, m³/h.
    pub valve_kv_m3_h: f64,
    /// Index of the lockshield's setting.
    pub lockshield_index: usize,
    /// Kv of the lockshield's setting, m³/h.
    pub lockshield_kv_m3_h: f64,
    /// Kv the pair needed, m³/h.
    pub pair_kv_needed_m3_h: f64,
    /// Predicted flow error, fraction (positive = more than design).
    pub flow_error_fraction: f64,
    /// How well it fits.
    pub fit: TrimFit,
}

impl TrimChoice {
    /// Combined Kv of the pair, m³/h.
    #[must_use]
    pub fn pair_kv_m3_h(&self) -> f64 {
        pair_kv(self.valve_kv_m3_h, self.lockshield_kv_m3_h)
    }
}

/// Combined Kv of two valves in series, m³/h (no checks: positive inputs).
fn pair_kv(a: f64, b: f64) -> f64 {
    1.0 / (1.0 / (a * a) + 1.0 / (b * b)).sqrt()
}

/// Choose the valve presetting and the lockshield setting together, from
/// both families' steps. Among the pairs whose predicted flow is within the
/// tolerance, the one with the least cost J = (e/tol)² + (1 − s)², where e
/// is the predicted flow error and s the valve's share of the pair's Δp:
/// a pair close to the design flow, throttled by the valve rather than by
/// the lockshield (which would cost the valve its authority). The two
/// terms weigh equally — our choice, both being what a commissioning
/// engineer trades off. Pairs whose valve takes at least
/// [`TrimNeed::authority_dp_pa`] at design flow are preferred. When no pair
/// is within the tolerance, the pair
/// closest to the design flow, with [`TrimFit`] saying why.
///
/// # Errors
/// [`PhysicsError`] for a non-positive flow or pair Δp, a negative rest
/// Δp, a density out of range or an invalid family.
pub fn choose_trim(valve: &ValveFamily, lockshield: &ValveFamily, need: &TrimNeed) -> PhysicsResult<TrimChoice> {
    choose_trim_with(valve, lockshield, need, None)
}

/// [`choose_trim`] with the valve's setting fixed at `fixed_valve` (an
/// index into its steps) when given: only the lockshield is chosen.
///
/// # Errors
/// As [`choose_trim`]; an index past the valve's steps too.
pub fn choose_trim_with(
    valve: &ValveFamily,
    lockshield: &ValveFamily,
    need: &TrimNeed,
    fixed_valve: Option<usize>,
) -> PhysicsResult<TrimChoice> {
    validate_family("(valve family given)", valve)?;
    validate_family("(lockshield family given)", lockshield)?;
    check::positive("design flow", need.flow_m3_h, "m³/h")?;
    check::positive("pressure drop across the valve pair", need.dp_pair_pa, "Pa")?;
    check::non_negative("rest-of-circuit pressure drop", need.dp_own_rest_pa, "Pa")?;
    check::in_range("flow tolerance", need.tolerance_fraction, "", 0.0, 1.0)?;
    let kv_needed = kv_needed(need.flow_m3_h, need.dp_pair_pa, need.density_kg_m3)?;
    let error_of = |kv_pair: f64| {
        flow_ratio_in_circuit(kv_pair, kv_needed, need.dp_pair_pa, need.dp_own_rest_pa)
            .map_or(f64::INFINITY, |r| r - 1.0)
    };
    let make = |vi: usize, li: usize, fit: TrimFit| {
        let (kv_v, kv_l) = (valve.settings[vi].kv_m3_h, lockshield.settings[li].kv_m3_h);
        TrimChoice {
            valve_index: vi,
            valve_kv_m3_h: kv_v,
            lockshield_index: li,
            lockshield_kv_m3_h: kv_l,
            pair_kv_needed_m3_h: kv_needed,
            flow_error_fraction: error_of(pair_kv(kv_v, kv_l)),
            fit,
        }
    };
    let l_last = lockshield.settings.len() - 1;
    let valves = match fixed_valve {
        Some(i) if i < valve.settings.len() => i..=i,
        Some(i) => {
            return Err(PhysicsError::Inconsistent(format!(
                "presetting index {i} is past the {} steps of {}",
                valve.settings.len(),
                valve.name
            )));
        }
        None => 0..=valve.settings.len() - 1,
    };
    let (v_first, v_last) = (*valves.start(), *valves.end());
    if pair_kv(valve.settings[v_last].kv_m3_h, lockshield.settings[l_last].kv_m3_h) < kv_needed {
        let c = make(v_last, l_last, TrimFit::AboveLargest);
        return Ok(if c.flow_error_fraction.abs() <= need.tolerance_fraction {
            TrimChoice { fit: TrimFit::Within, ..c }
        } else {
            c
        });
    }
    if pair_kv(valve.settings[v_first].kv_m3_h, lockshield.settings[0].kv_m3_h) > kv_needed {
        let c = make(v_first, 0, TrimFit::BelowSmallest);
        return Ok(if c.flow_error_fraction.abs() <= need.tolerance_fraction {
            TrimChoice { fit: TrimFit::Within, ..c }
        } else {
            c
        });
    }
    let tol = need.tolerance_fraction.max(1e-9);
    // Pairs within the tolerance whose valve keeps its authority come
    // first; among them (or, if none does, among all within the
    // tolerance) the least cost.
    let mut best_with_authority: Option<(f64, usize, usize)> = None;
    let mut best_within: Option<(f64, usize, usize)> = None;
    let mut closest: Option<(f64, usize, usize)> = None;
    for li in 0..=l_last {
        let kv_l = lockshield.settings[li].kv_m3_h;
        for vi in valves.clone() {
            let kv_v = valve.settings[vi].kv_m3_h;
            let kv_pair = pair_kv(kv_v, kv_l);
            let e = error_of(kv_pair);
            if closest.is_none_or(|(c, _, _)| e.abs() < c) {
                closest = Some((e.abs(), vi, li));
            }
            if e.abs() <= tol {
                let share = (kv_pair / kv_v).powi(2);
                let cost = (e / tol).powi(2) + (1.0 - share).powi(2);
                if best_within.is_none_or(|(c, _, _)| cost < c) {
                    best_within = Some((cost, vi, li));
                }
                let valve_dp = dp_pa_from_kv(need.flow_m3_h, kv_v, need.density_kg_m3).unwrap_or(0.0);
                if valve_dp >= need.authority_dp_pa && best_with_authority.is_none_or(|(c, _, _)| cost < c) {
                    best_with_authority = Some((cost, vi, li));
                }
            }
        }
    }
    Ok(match (best_with_authority.or(best_within), closest) {
        (Some((_, vi, li)), _) => make(vi, li, TrimFit::Within),
        (None, Some((_, vi, li))) => make(vi, li, TrimFit::Coarse),
        (None, None) => make(v_last, l_last, TrimFit::Coarse),
    })
}
