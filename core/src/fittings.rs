//! Local loss coefficients ζ of fittings: Δp = ζ·ρv²/2.
//!
//! Every [`Fitting::zeta`] is referred to the velocity in the pipe the
//! fitting sits in (the pipe whose ζ-sum it joins):
//! - bends and elbows: the pipe itself;
//! - reducers (expansion, contraction): the **smaller** pipe;
//! - tees: the leg the fitting is booked to (branch or run leg), converted
//!   from the combined-flow basis of the published correlation (see
//!   [`tee_k_crane`]).
//!
//! Sources:
//! - Rennels & Hudson, *Pipe Flow: A Practical and Comprehensive Guide*,
//!   Wiley 2012 (bends, mitred elbows, contractions, sudden expansion);
//! - Crane Co., *Flow of Fluids Through Valves, Fittings and Pipe*,
//!   Technical Paper 410 (2009 and its 2012 errata) — tee and wye equations;
//! - Borda–Carnot sudden-expansion loss (textbook momentum balance).
//!
//! Reference checks: `tests/tests/reference/friction.rs` against the Python
//! library `fluids` 1.3.1 (`fluids.fittings.bend_rounded`, `bend_miter`,
//! `diffuser_sharp`, `contraction_sharp`, `contraction_conical`,
//! `K_branch_diverging_Crane`, `K_run_diverging_Crane`,
//! `K_branch_converging_Crane`, `K_run_converging_Crane`).

use std::f64::consts::PI;

use serde::{Deserialize, Serialize};

use crate::error::{PhysicsError, PhysicsResult, check};

/// Darcy friction factor used by [`Fitting::zeta`] for the friction terms of
/// bends and conical reducers when the pipe's own value is not at hand.
///
/// Common practice: 0.025 is typical for heating pipe DN10–DN50 at design
/// velocities (Re ≈ 1e4–1e5); the bend ζ moves by about ±0.03 over the
/// realistic range 0.018–0.035.
pub const TYPICAL_DARCY_FRICTION_FACTOR: f64 = 0.025;

/// Direction of the flows meeting in a tee.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
pub enum TeeFlow {
    /// One inflow splits into run and branch (supply side).
    Dividing,
    /// Run and branch join into one outflow (return side).
    Combining,
}

/// Which leg of a tee a coefficient belongs to.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
pub enum TeeLeg {
    /// The straight-through leg (same diameter as the combined leg).
    Run,
    /// The 90° side leg.
    Branch,
}

/// A fitting with a local loss.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub enum Fitting {
    /// Smooth bend of `angle_deg` (0–180°) with centre-line radius
    /// `radius_over_diameter`·d (0.5–20).
    ///
    /// Rennels & Hudson (2012), rounded-bend equation:
    /// ζ = f·α·r/d + (0.10 + 2.4f)·sin(α/2) + 6.6f·(√sin(α/2) + sin(α/2))/(r/d)^(4α/π),
    /// f = Darcy friction factor of the pipe. The first term is the bend's own
    /// wall friction: pipe lengths measured along the centre line already
    /// contain it (a small double count, on the safe side).
    Bend {
        /// Bend angle, degrees.
        angle_deg: f64,
        /// Bend radius over inner diameter.
        radius_over_diameter: f64,
    },
    /// Sharp-cornered (mitred, single joint) elbow of `angle_deg` (0–150°),
    /// e.g. a pressed or threaded elbow with a sharp inner corner.
    ///
    /// Rennels & Hudson (2012), mitre-bend equation:
    /// ζ = 0.42·sin(α/2) + 2.56·sin³(α/2) (≈1.20 at 90°).
    Elbow {
        /// Elbow angle, degrees.
        angle_deg: f64,
    },
    /// Sudden expansion from diameter d₁ to d₂, `diameter_ratio` = d₁/d₂
    /// (0–1]; referred to the velocity in the smaller (upstream) pipe.
    ///
    /// Borda–Carnot (momentum balance, textbook): ζ = (1 − (d₁/d₂)²)².
    SuddenExpansion {
        /// Small over large inner diameter.
        diameter_ratio: f64,
    },
    /// Sudden (sharp-edged) contraction, `diameter_ratio` = d₂/d₁ (0–1];
    /// referred to the velocity in the smaller (downstream) pipe.
    ///
    /// Rennels & Hudson (2012): ζ = 0.0696·(1 − β⁵)·λ² + (λ − 1)²,
    /// λ = 1 + 0.622·(1 − 0.215β² − 0.785β⁵), β = d₂/d₁.
    SuddenContraction {
        /// Small over large inner diameter.
        diameter_ratio: f64,
    },
    /// Conical (gradual) contraction with total included angle
    /// `cone_angle_deg` (0–180°], `diameter_ratio` = d₂/d₁ (0–1]; referred to
    /// the velocity in the smaller (downstream) pipe.
    ///
    /// Rennels & Hudson (2012), conical contraction with a sharp junction:
    /// ζ = f·(1 − β⁴)/(8·sin(α/2)) + 0.0696·sin(α/2)·(1 − β⁵)·λ² + (λ − 1)²,
    /// λ = 1 + 0.622·(α/180°)^0.8·(1 − 0.215β² − 0.785β⁵).
    GradualContraction {
        /// Small over large inner diameter.
        diameter_ratio: f64,
        /// Total included cone angle, degrees.
        cone_angle_deg: f64,
    },
    /// A 90° tee, booked to `leg`, for dividing or combining flow.
    ///
    /// `flow_ratio` = Q_branch/Q_combined (0–1), `branch_diameter_ratio` =
    /// d_branch/d_run (0–1]. The coefficient is Crane TP-410's (see
    /// [`tee_k_crane`]) converted to the velocity of `leg`:
    /// ζ_leg = K·(A_leg/A_comb)²/(Q_leg/Q_comb)². It can be negative (a
    /// combining run or a dividing run gains pressure from the faster
    /// stream); the caller adds it to the pipe's ζ-sum and keeps that sum
    /// non-negative.
    Tee {
        /// Dividing or combining.
        flow: TeeFlow,
        /// The leg the ζ is booked to.
        leg: TeeLeg,
        /// Q_branch / Q_combined.
        flow_ratio: f64,
        /// d_branch / d_run.
        branch_diameter_ratio: f64,
    },
    /// Panel radiator body (water path through the radiator, connections
    /// included, valves excluded — those go through their Kv).
    ///
    /// ζ = 2.5: common practice (heating-design textbooks' ζ tables list
    /// ≈2.5 for a radiator; recalled from memory, not verified against the
    /// document). Use only when the emitter has no stated resistance.
    RadiatorBody,
    /// Heat source (boiler water path) when no stated resistance is known.
    ///
    /// ζ = 2.5, referred to the connecting pipe: common practice (heating
    /// textbooks' ζ tables, ≈2.0–2.5 for a boiler; recalled from memory, not
    /// verified against the document).
    HeatSource,
    /// A coefficient the user enters (≥ 0).
    Custom {
        /// ζ referred to the pipe velocity.
        zeta: f64,
    },
}

impl Fitting {
    /// 90° bend with r/d = 1.5 (common bent or pressed bend).
    pub const BEND_90: Self = Self::Bend { angle_deg: 90.0, radius_over_diameter: 1.5 };
    /// 45° bend with r/d = 1.5.
    pub const BEND_45: Self = Self::Bend { angle_deg: 45.0, radius_over_diameter: 1.5 };
    /// Sharp 90° elbow.
    pub const ELBOW_90: Self = Self::Elbow { angle_deg: 90.0 };

    /// ζ with [`TYPICAL_DARCY_FRICTION_FACTOR`] in the friction terms.
    ///
    /// # Errors
    /// As [`Fitting::zeta_at`].
    pub fn zeta(&self) -> PhysicsResult<f64> {
        self.zeta_at(TYPICAL_DARCY_FRICTION_FACTOR)
    }

    /// ζ with the pipe's Darcy friction factor `darcy_friction_factor`
    /// (0 < f ≤ 1) in the friction terms (only bends and conical
    /// contractions use it).
    ///
    /// # Errors
    /// [`PhysicsError`] naming the first parameter outside its range.
    pub fn zeta_at(&self, darcy_friction_factor: f64) -> PhysicsResult<f64> {
        let f = check::in_range("Darcy friction factor", darcy_friction_factor, "", 1e-4, 1.0)?;
        match *self {
            Self::Bend { angle_deg, radius_over_diameter } => {
                check::in_range("bend angle", angle_deg, "°", 1e-6, 180.0)?;
                check::in_range("bend radius / diameter", radius_over_diameter, "", 0.5, 20.0)?;
                let a = angle_deg.to_radians();
                let s = (0.5 * a).sin();
                let r = radius_over_diameter;
                Ok(f * a * r + (0.10 + 2.4 * f) * s + 6.6 * f * (s.sqrt() + s) / r.powf(4.0 * a / PI))
            }
            Self::Elbow { angle_deg } => {
                check::in_range("elbow angle", angle_deg, "°", 1e-6, 150.0)?;
                let s = (0.5 * angle_deg.to_radians()).sin();
                Ok(0.42 * s + 2.56 * s * s * s)
            }
            Self::SuddenExpansion { diameter_ratio } => {
                let b = check::in_range("expansion diameter ratio d_small/d_large", diameter_ratio, "", 1e-6, 1.0)?;
                let x = 1.0 - b * b;
                Ok(x * x)
            }
            Self::SuddenContraction { diameter_ratio } => {
                let b = check::in_range("contraction diameter ratio d_small/d_large", diameter_ratio, "", 1e-6, 1.0)?;
                Ok(contraction_rennels(b, PI, 0.0))
            }
            Self::GradualContraction { diameter_ratio, cone_angle_deg } => {
                let b = check::in_range("contraction diameter ratio d_small/d_large", diameter_ratio, "", 1e-6, 1.0)?;
                let angle = check::in_range("contraction cone angle", cone_angle_deg, "°", 1e-3, 180.0)?;
                Ok(contraction_rennels(b, angle.to_radians(), f))
            }
            Self::Tee { flow, leg, flow_ratio, branch_diameter_ratio } => {
                tee_zeta_own_leg(flow, leg, flow_ratio, branch_diameter_ratio)
            }
            Self::RadiatorBody | Self::HeatSource => Ok(2.5),
            Self::Custom { zeta } => check::non_negative("local loss coefficient ζ", zeta, ""),
        }
    }

    /// Short description for tables and the parts list.
    #[must_use]
    pub fn label(&self) -> &'static str {
        match self {
            Self::Bend { .. } => "bend",
            Self::Elbow { .. } => "elbow",
            Self::SuddenExpansion { .. } => "sudden expansion",
            Self::SuddenContraction { .. } => "sudden contraction",
            Self::GradualContraction { .. } => "conical reducer",
            Self::Tee { leg: TeeLeg::Branch, .. } => "tee (branch)",
            Self::Tee { leg: TeeLeg::Run, .. } => "tee (run)",
            Self::RadiatorBody => "radiator body",
            Self::HeatSource => "heat source",
            Self::Custom { .. } => "local loss",
        }
    }
}

/// Crane TP-410 (2009, with 2012 errata) loss coefficient K of a 90° tee,
/// referred to the velocity of the **combined** flow (the run pipe, whose
/// diameter equals the combined leg's in this model).
///
/// `flow_ratio` q = Q_branch/Q_combined in [0, 1]; `branch_diameter_ratio`
/// β = d_branch/d_run in (0, 1]. At 90° (cos θ = 0):
/// - dividing, branch: K = G·(1 + H·(q/β²)²), G = 1 for β² ≤ 2/3 else
///   1 + 0.3q², H = 0.3 for β > 2/3 else 1;
/// - dividing, run: K = M·q², M = 0.4 for β² ≤ 0.4, else 2(2q − 1) for
///   q ≤ 0.5, else 0.3(2q − 1);
/// - combining, branch: K = C·(1 + (q/β²)² − 2(1 − q)²), C = 1 for
///   β² ≤ 0.35, 0.55 for β² > 0.35 and q > 0.4, else 0.9(1 − q);
/// - combining, run: K = 1.55q − q².
///
/// # Errors
/// [`PhysicsError`] when q or β is out of range.
pub fn tee_k_crane(flow: TeeFlow, leg: TeeLeg, flow_ratio: f64, branch_diameter_ratio: f64) -> PhysicsResult<f64> {
    let q = check::in_range("tee flow ratio Q_branch/Q_combined", flow_ratio, "", 0.0, 1.0)?;
    let b = check::in_range("tee diameter ratio d_branch/d_run", branch_diameter_ratio, "", 1e-3, 1.0)?;
    let b2 = b * b;
    let x = q / b2;
    Ok(match (flow, leg) {
        (TeeFlow::Dividing, TeeLeg::Branch) => {
            let g = if b2 <= 2.0 / 3.0 { 1.0 } else { 1.0 + 0.3 * q * q };
            // TP-410 names the special case for near-equal diameters; the
            // switch at β = 2/3 follows `fluids` 1.3.1 K_branch_diverging_Crane
            // (not verified against the TP-410 text; both give 0.3 at β = 1
            // and 1 for the reduced branches typical of heating).
            let h = if b > 2.0 / 3.0 { 0.3 } else { 1.0 };
            g * (1.0 + h * x * x)
        }
        (TeeFlow::Dividing, TeeLeg::Run) => {
            let m = if b2 <= 0.4 {
                0.4
            } else if q <= 0.5 {
                2.0 * (2.0 * q - 1.0)
            } else {
                0.3 * (2.0 * q - 1.0)
            };
            m * q * q
        }
        (TeeFlow::Combining, TeeLeg::Branch) => {
            let c = if b2 <= 0.35 {
                1.0
            } else if q > 0.4 {
                0.55
            } else {
                0.9 * (1.0 - q)
            };
            let r = 1.0 - q;
            c * (1.0 + x * x - 2.0 * r * r)
        }
        (TeeFlow::Combining, TeeLeg::Run) => 1.55 * q - q * q,
    })
}

/// Crane's K (combined-flow basis) converted to the velocity of `leg`.
fn tee_zeta_own_leg(flow: TeeFlow, leg: TeeLeg, flow_ratio: f64, branch_diameter_ratio: f64) -> PhysicsResult<f64> {
    let k = tee_k_crane(flow, leg, flow_ratio, branch_diameter_ratio)?;
    // (Q_leg/Q_comb, A_leg/A_comb)
    let (leg_flow_ratio, leg_area_ratio) = match leg {
        TeeLeg::Branch => (flow_ratio, branch_diameter_ratio * branch_diameter_ratio),
        TeeLeg::Run => (1.0 - flow_ratio, 1.0),
    };
    if leg_flow_ratio <= 0.0 {
        return Err(PhysicsError::Inconsistent(format!(
            "a tee's ζ cannot be referred to the {} leg when that leg carries no flow (Q_branch/Q_combined = {flow_ratio})",
            match leg {
                TeeLeg::Branch => "branch",
                TeeLeg::Run => "run",
            }
        )));
    }
    Ok(k * (leg_area_ratio / leg_flow_ratio).powi(2))
}

/// Rennels & Hudson (2012) conical contraction (α = π: sharp), referred to
/// the downstream velocity; `f` = 0 drops the wall-friction term.
fn contraction_rennels(beta: f64, angle_rad: f64, f: f64) -> f64 {
    let b2 = beta * beta;
    let b4 = b2 * b2;
    let b5 = b4 * beta;
    let lambda = 1.0 + 0.622 * (angle_rad / PI).powf(0.8) * (1.0 - 0.215 * b2 - 0.785 * b5);
    let s = (0.5 * angle_rad).sin();
    let friction = if f > 0.0 { f * (1.0 - b4) / (8.0 * s) } else { 0.0 };
    friction + 0.0696 * s * (1.0 - b5) * lambda * lambda + (lambda - 1.0).powi(2)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rejects_out_of_range_parameters() {
        let bad = [
            Fitting::Bend { angle_deg: -10.0, radius_over_diameter: 1.5 },
            Fitting::Bend { angle_deg: 90.0, radius_over_diameter: 0.2 },
            Fitting::Bend { angle_deg: f64::NAN, radius_over_diameter: 1.5 },
            Fitting::Elbow { angle_deg: 170.0 },
            Fitting::SuddenExpansion { diameter_ratio: 1.5 },
            Fitting::SuddenContraction { diameter_ratio: 0.0 },
            Fitting::GradualContraction { diameter_ratio: 0.5, cone_angle_deg: 0.0 },
            Fitting::Tee { flow: TeeFlow::Dividing, leg: TeeLeg::Branch, flow_ratio: 1.2, branch_diameter_ratio: 1.0 },
            Fitting::Tee { flow: TeeFlow::Dividing, leg: TeeLeg::Branch, flow_ratio: 0.5, branch_diameter_ratio: 2.0 },
            Fitting::Tee { flow: TeeFlow::Combining, leg: TeeLeg::Run, flow_ratio: 1.0, branch_diameter_ratio: 1.0 },
            Fitting::Tee { flow: TeeFlow::Dividing, leg: TeeLeg::Branch, flow_ratio: 0.0, branch_diameter_ratio: 1.0 },
            Fitting::Custom { zeta: -1.0 },
            Fitting::Custom { zeta: f64::INFINITY },
        ];
        for f in bad {
            assert!(f.zeta().is_err(), "{f:?}");
        }
        assert!(Fitting::BEND_90.zeta_at(0.0).is_err());
        assert!(Fitting::BEND_90.zeta_at(f64::NAN).is_err());
    }

    #[test]
    fn typical_values_are_in_the_usual_ranges() {
        // Common practice: smooth 90° bend r/d 1.5 ≈ 0.2–0.35, sharp elbow ≈ 1.0–1.3,
        // 45° bend below the 90° bend.
        let b90 = Fitting::BEND_90.zeta().unwrap();
        let b45 = Fitting::BEND_45.zeta().unwrap();
        let e90 = Fitting::ELBOW_90.zeta().unwrap();
        assert!((0.2..0.35).contains(&b90), "{b90}");
        assert!(b45 < b90 && b45 > 0.1, "{b45}");
        assert!((1.0..1.3).contains(&e90), "{e90}");
        // Borda–Carnot limits: no change → 0; into a vessel → 1.
        assert!(Fitting::SuddenExpansion { diameter_ratio: 1.0 }.zeta().unwrap().abs() < 1e-15);
        assert!((Fitting::SuddenExpansion { diameter_ratio: 1e-6 }.zeta().unwrap() - 1.0).abs() < 1e-9);
        // A sharp contraction from a large vessel tends to the sharp-edged
        // entrance, textbook value ≈ 0.5; this correlation's limit is 0.57
        // (λ = 1.622: 0.0696·λ² + (λ − 1)²), the same as fluids 1.3.1
        // contraction_sharp(1, 1e-3).
        let entrance = Fitting::SuddenContraction { diameter_ratio: 1e-3 }.zeta().unwrap();
        assert!((0.45..0.6).contains(&entrance), "{entrance}");
        assert!(Fitting::SuddenContraction { diameter_ratio: 1.0 }.zeta().unwrap().abs() < 1e-12);
        // A gentle cone loses much less than a sharp step.
        let cone = Fitting::GradualContraction { diameter_ratio: 0.5, cone_angle_deg: 30.0 }.zeta().unwrap();
        let sharp = Fitting::SuddenContraction { diameter_ratio: 0.5 }.zeta().unwrap();
        assert!(cone < sharp, "{cone} {sharp}");
    }

    #[test]
    fn tee_conversion_to_leg_velocity() {
        // Equal-diameter dividing tee at q = 0.5: branch velocity is half the
        // combined velocity, so ζ_branch = 4·K.
        let k = tee_k_crane(TeeFlow::Dividing, TeeLeg::Branch, 0.5, 1.0).unwrap();
        let z =
            Fitting::Tee { flow: TeeFlow::Dividing, leg: TeeLeg::Branch, flow_ratio: 0.5, branch_diameter_ratio: 1.0 }
                .zeta()
                .unwrap();
        assert!((z - 4.0 * k).abs() < 1e-12);
        // Reduced branch β = 0.5, q = 0.25: v_branch = v_comb, ζ = K.
        let k = tee_k_crane(TeeFlow::Combining, TeeLeg::Branch, 0.25, 0.5).unwrap();
        let z = Fitting::Tee {
            flow: TeeFlow::Combining,
            leg: TeeLeg::Branch,
            flow_ratio: 0.25,
            branch_diameter_ratio: 0.5,
        }
        .zeta()
        .unwrap();
        assert!((z - k).abs() < 1e-12);
    }

    #[test]
    fn fixed_values() {
        assert!((Fitting::RadiatorBody.zeta().unwrap() - 2.5).abs() < 1e-15);
        assert!((Fitting::HeatSource.zeta().unwrap() - 2.5).abs() < 1e-15);
        assert!((Fitting::Custom { zeta: 0.7 }.zeta().unwrap() - 0.7).abs() < 1e-15);
        assert_eq!(Fitting::BEND_90.label(), "bend");
    }
}
