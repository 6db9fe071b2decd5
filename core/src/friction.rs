//! Pressure drop of a pipe: Darcy–Weisbach friction with the Colebrook–White
//! friction factor, plus local losses Σζ·ρv²/2.
//!
//! Friction factor regimes (Darcy f, not Fanning):
//! - laminar, Re ≤ [`LAMINAR_RE_MAX`]: f = 64/Re (Hagen–Poiseuille, exact for
//!   fully developed laminar flow in a round tube);
//! - turbulent, Re ≥ [`TURBULENT_RE_MIN`]: Colebrook–White,
//!   1/√f = −2·log10(ε/(3.7·D) + 2.51/(Re·√f)), solved by Newton's method on
//!   x = 1/√f from the explicit Haaland (1983) start to rounding level;
//! - transition, in between: a cubic Hermite interpolation in Re that matches
//!   the value *and* the slope df/dRe of both neighbouring laws at its ends, so
//!   f(Re) — and with it Δp(ṁ) — is continuous with a continuous derivative
//!   (good for the Newton network solver). The transition has no physical law
//!   (flow there is intermittent); this interpolation is our own engineering
//!   choice, in the spirit of the interpolations used in network hydraulics.
//!
//! Reference checks: `tests/tests/reference/friction.rs` against the Python
//! library `fluids` 1.3.1 (`fluids.friction.Colebrook`,
//! `fluids.friction.friction_factor`) and `iapws` 1.5.5 water properties.

use std::f64::consts::{LN_10, PI};

use crate::error::{PhysicsResult, check};

/// Upper Reynolds number of the laminar law f = 64/Re.
///
/// Common practice: the usual lower critical Reynolds number for pipe flow
/// (≈2000–2300 in textbooks; 2000 is the conservative round value).
pub const LAMINAR_RE_MAX: f64 = 2000.0;

/// Lower Reynolds number of the Colebrook–White law.
///
/// Common practice: fully turbulent pipe flow is assumed from Re ≈ 4000 (the
/// lower edge of the turbulent zone of the Moody diagram).
pub const TURBULENT_RE_MIN: f64 = 4000.0;

/// Highest Reynolds number the checked functions accept (far beyond any
/// heating pipe; the Moody diagram ends at 1e8).
pub const RE_MAX: f64 = 1e9;

/// Highest relative roughness ε/D accepted (the top curve of the Moody
/// diagram is 0.05; Colebrook–White is not validated beyond it).
pub const RELATIVE_ROUGHNESS_MAX: f64 = 0.05;

/// Everything the hydraulic law of one pipe needs (validated by `new`).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PipeHydraulics {
    /// Length, m (> 0).
    pub length_m: f64,
    /// Inner diameter, m (> 0).
    pub inner_diameter_m: f64,
    /// Absolute roughness, m (≥ 0).
    pub roughness_m: f64,
    /// Sum of local loss coefficients ζ referred to this pipe's velocity.
    pub zeta_sum: f64,
    /// Density of the water in the pipe, kg/m³.
    pub density_kg_m3: f64,
    /// Dynamic viscosity of the water in the pipe, Pa·s.
    pub viscosity_pa_s: f64,
    /// Friction-factor formula ([`FrictionLaw::ColebrookWhite`] unless a
    /// matched-physics cross-check asks for another).
    pub friction_law: FrictionLaw,
}

/// Which friction-factor formula a pipe uses for Re above the laminar range.
///
/// Both share the laminar law f = 64/Re up to [`LAMINAR_RE_MAX`].
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum FrictionLaw {
    /// flowrise's own: Colebrook–White from [`TURBULENT_RE_MIN`], a cubic
    /// Hermite transition (see the module docs).
    #[default]
    ColebrookWhite,
    /// The Darcy–Weisbach friction factor of the EPANET engine, for the
    /// matched-physics cross-check (`SolveOptions::matched_physics`):
    /// Swamee–Jain f = 0.25 / log10²(ε/(3.7D) + 5.74/Re^0.9) from Re 4000 and
    /// the Dunlop cubic interpolation between Re 2000 and 4000.
    /// Source: Rossman, L. A. et al., EPANET 2.2 Users Manual (EPA/600/R-20/133,
    /// 2020), "Hydraulic Analysis" / headloss formulas, and the engine's
    /// `frictionFactor` in hydcoeffs.c — the transition coefficients are
    /// recalled from memory, not verified against the document; the
    /// cross-check `tests/epanet/crosscheck.py` confirms them numerically
    /// against the engine.
    SwameeJainEpanet,
    /// The design's law: as [`FrictionLaw::ColebrookWhite`], but in the
    /// transition range (Re between [`LAMINAR_RE_MAX`] and
    /// [`TURBULENT_RE_MIN`]) the larger of the interpolation and
    /// Colebrook–White carried down to that Re. Flow there may be turbulent
    /// or not; sizing and the pressure drops the pump and the presettings are
    /// chosen from take the larger friction, so a pipe in this range is not
    /// under-designed. The operating solve uses the continuous law.
    ColebrookWhiteConservative,
}

impl PipeHydraulics {
    /// A checked pipe description.
    ///
    /// Accepts density 500–2000 kg/m³ and dynamic viscosity 1e-5–1 Pa·s
    /// (covers water and water–glycol mixtures with a wide margin), relative
    /// roughness ε/D up to [`RELATIVE_ROUGHNESS_MAX`] and ζ-sum ≥ 0.
    ///
    /// # Errors
    /// [`crate::PhysicsError`] naming the first non-physical input.
    pub fn new(
        length_m: f64,
        inner_diameter_m: f64,
        roughness_m: f64,
        zeta_sum: f64,
        density_kg_m3: f64,
        viscosity_pa_s: f64,
    ) -> PhysicsResult<Self> {
        check::positive("pipe length", length_m, "m")?;
        check::positive("pipe inner diameter", inner_diameter_m, "m")?;
        check::non_negative("pipe roughness", roughness_m, "m")?;
        check::in_range("relative roughness ε/D", roughness_m / inner_diameter_m, "", 0.0, RELATIVE_ROUGHNESS_MAX)?;
        check::non_negative("sum of local loss coefficients ζ", zeta_sum, "")?;
        check::in_range("water density", density_kg_m3, "kg/m³", 500.0, 2000.0)?;
        check::in_range("dynamic viscosity", viscosity_pa_s, "Pa·s", 1e-5, 1.0)?;
        Ok(Self {
            length_m,
            inner_diameter_m,
            roughness_m,
            zeta_sum,
            density_kg_m3,
            viscosity_pa_s,
            friction_law: FrictionLaw::ColebrookWhite,
        })
    }

    /// The same pipe with friction-factor formula `law`.
    #[must_use]
    pub fn with_friction_law(self, law: FrictionLaw) -> Self {
        Self { friction_law: law, ..self }
    }

    /// Flow cross-section πD²/4, m².
    #[must_use]
    pub fn flow_area_m2(&self) -> f64 {
        0.25 * PI * self.inner_diameter_m * self.inner_diameter_m
    }

    /// Relative roughness ε/D (dimensionless).
    #[must_use]
    pub fn relative_roughness(&self) -> f64 {
        self.roughness_m / self.inner_diameter_m
    }

    /// Mean velocity at `mass_flow_kg_s`, m/s (sign follows the flow).
    #[must_use]
    pub fn velocity_m_s(&self, mass_flow_kg_s: f64) -> f64 {
        mass_flow_kg_s / (self.density_kg_m3 * self.flow_area_m2())
    }

    /// Reynolds number at `mass_flow_kg_s` (≥ 0, either flow direction):
    /// Re = 4|ṁ|/(π·D·μ).
    #[must_use]
    pub fn reynolds(&self, mass_flow_kg_s: f64) -> f64 {
        4.0 * mass_flow_kg_s.abs() / (PI * self.inner_diameter_m * self.viscosity_pa_s)
    }
}

/// Pressure drop (Pa; sign follows the flow) and its derivative d(Δp)/dṁ
/// (Pa·s/kg, > 0 and finite) at mass flow `mass_flow_kg_s` (kg/s, either sign,
/// including 0).
///
/// Δp = sign(ṁ)·(f·L/D + Σζ)·ρv²/2 with f from [`darcy_friction_factor`]'s
/// regimes. In the laminar range the friction part is the exact Hagen–Poiseuille
/// line Δp = 32·μ·L·ṁ/(ρ·D²·A), so at ṁ = 0 this returns Δp = 0 and that
/// line's slope (the local losses contribute nothing at zero flow).
///
/// Never panics and allocates nothing. `p` is assumed valid (built by
/// [`PipeHydraulics::new`]); invalid fields give non-finite results, not a
/// panic.
#[must_use]
pub fn pipe_dp(p: &PipeHydraulics, mass_flow_kg_s: f64) -> (f64, f64) {
    PipeKernel::new(p).dp(mass_flow_kg_s)
}

/// The flow-independent constants of one pipe's law, computed once: the
/// network solver keeps one per link and evaluates [`PipeKernel::dp`] for
/// every link on every iteration, which then costs no division by the pipe's
/// data, no roughness power and no check. [`pipe_dp`] is this kernel built
/// on the spot, so both give the same numbers.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PipeKernel {
    /// Re per unit mass flow, 4/(π·D·μ), s/kg.
    re_per_kg_s: f64,
    /// Relative roughness ε/D.
    rr: f64,
    /// (ε/D/3.7)^1.11: the roughness term of the Haaland start of the
    /// Colebrook–White iteration.
    haaland_roughness: f64,
    /// (L/D)·k with k = 1/(2ρA²), so the friction Δp is f·this·ṁ².
    friction_k: f64,
    /// Σζ·k, so the local Δp is this·ṁ².
    local_k: f64,
    /// Hagen–Poiseuille resistance 32·μ·L/(ρ·D²·A), Pa·s/kg.
    laminar_r: f64,
    /// Friction-factor formula.
    law: FrictionLaw,
}

impl PipeKernel {
    /// The constants of `p` (assumed valid, see [`pipe_dp`]).
    #[must_use]
    pub fn new(p: &PipeHydraulics) -> Self {
        let area_m2 = p.flow_area_m2();
        // k = 1/(2ρA²): ρv²/2 = k·ṁ².
        let k = 1.0 / (2.0 * p.density_kg_m3 * area_m2 * area_m2);
        let rr = p.relative_roughness();
        Self {
            re_per_kg_s: 4.0 / (PI * p.inner_diameter_m * p.viscosity_pa_s),
            rr,
            haaland_roughness: (rr / 3.7).powf(1.11),
            friction_k: p.length_m / p.inner_diameter_m * k,
            local_k: p.zeta_sum * k,
            laminar_r: 32.0 * p.viscosity_pa_s * p.length_m
                / (p.density_kg_m3 * p.inner_diameter_m * p.inner_diameter_m * area_m2),
            law: p.friction_law,
        }
    }

    /// Pressure drop, Pa (sign follows the flow), and d(Δp)/dṁ, Pa·s/kg, at
    /// `mass_flow_kg_s`: [`pipe_dp`].
    #[must_use]
    pub fn dp(&self, mass_flow_kg_s: f64) -> (f64, f64) {
        let m_abs = mass_flow_kg_s.abs();
        let sign = if mass_flow_kg_s < 0.0 { -1.0 } else { 1.0 };
        let re = self.re_per_kg_s * m_abs;
        // Local losses: Σζ·k·ṁ|ṁ|, derivative 2Σζ·k·|ṁ|.
        let local_dp = self.local_k * m_abs * m_abs;
        let local_slope = 2.0 * self.local_k * m_abs;
        if re <= LAMINAR_RE_MAX {
            // Hagen–Poiseuille: linear in ṁ, well defined at ṁ = 0.
            return (sign * (self.laminar_r * m_abs + local_dp), self.laminar_r + local_slope);
        }
        let (f, df_dre) = match self.law {
            FrictionLaw::ColebrookWhite if re >= TURBULENT_RE_MIN => {
                colebrook_and_slope_from(re, self.rr, colebrook_x_from(re, self.rr, self.haaland_roughness))
            }
            FrictionLaw::ColebrookWhite => friction_factor_and_slope(re, self.rr),
            FrictionLaw::SwameeJainEpanet => epanet_friction_and_slope(re, self.rr),
            FrictionLaw::ColebrookWhiteConservative => conservative_friction_and_slope(re, self.rr),
        };
        // Δp_f = f(Re)·(L/D)·k·ṁ², Re ∝ ṁ ⇒ dΔp_f/dṁ = (L/D)·k·ṁ·(2f + Re·f').
        let friction_dp = f * self.friction_k * m_abs * m_abs;
        let friction_slope = self.friction_k * m_abs * (2.0 * f + re * df_dre);
        (sign * (friction_dp + local_dp), friction_slope + local_slope)
    }
}

/// Friction pressure gradient of the pipe, Pa/m (sign follows the flow; local
/// losses excluded) — the quantity pipe sizing limits (common practice
/// 100–200 Pa/m).
#[must_use]
pub fn friction_gradient_pa_m(p: &PipeHydraulics, mass_flow_kg_s: f64) -> f64 {
    let friction_only = PipeHydraulics { zeta_sum: 0.0, length_m: 1.0, ..*p };
    pipe_dp(&friction_only, mass_flow_kg_s).0
}

/// Darcy friction factor at Reynolds number `reynolds` (> 0) and relative
/// roughness `relative_roughness` = ε/D (0 to [`RELATIVE_ROUGHNESS_MAX`]),
/// through all three regimes (see the module docs).
///
/// # Errors
/// [`crate::PhysicsError`] when Re is not in (0, [`RE_MAX`]] or ε/D is out of
/// range.
pub fn darcy_friction_factor(reynolds: f64, relative_roughness: f64) -> PhysicsResult<f64> {
    check::positive("Reynolds number", reynolds, "")?;
    check::in_range("Reynolds number", reynolds, "", 0.0, RE_MAX)?;
    check::in_range("relative roughness ε/D", relative_roughness, "", 0.0, RELATIVE_ROUGHNESS_MAX)?;
    Ok(friction_factor_and_slope(reynolds, relative_roughness).0)
}

/// Colebrook–White Darcy friction factor (turbulent flow only), solved to
/// ~1e-14 relative.
///
/// # Errors
/// [`crate::PhysicsError`] when Re is outside [`TURBULENT_RE_MIN`]..=[`RE_MAX`]
/// or ε/D is outside 0..=[`RELATIVE_ROUGHNESS_MAX`].
pub fn colebrook_white(reynolds: f64, relative_roughness: f64) -> PhysicsResult<f64> {
    check::in_range("Reynolds number (turbulent)", reynolds, "", TURBULENT_RE_MIN, RE_MAX)?;
    check::in_range("relative roughness ε/D", relative_roughness, "", 0.0, RELATIVE_ROUGHNESS_MAX)?;
    Ok(colebrook_x(reynolds, relative_roughness).powi(-2))
}

/// Reynolds number of a round pipe from the mass flow: Re = 4|ṁ|/(π·D·μ).
///
/// # Errors
/// [`crate::PhysicsError`] when the flow is not finite or the diameter or
/// viscosity is not positive.
pub fn reynolds(mass_flow_kg_s: f64, inner_diameter_m: f64, viscosity_pa_s: f64) -> PhysicsResult<f64> {
    check::finite("mass flow", mass_flow_kg_s, "kg/s")?;
    check::positive("pipe inner diameter", inner_diameter_m, "m")?;
    check::positive("dynamic viscosity", viscosity_pa_s, "Pa·s")?;
    Ok(4.0 * mass_flow_kg_s.abs() / (PI * inner_diameter_m * viscosity_pa_s))
}

/// Mean velocity in a round pipe, m/s: v = ṁ/(ρ·πD²/4) (sign follows the flow).
///
/// # Errors
/// [`crate::PhysicsError`] when the flow is not finite or the density or
/// diameter is not positive.
pub fn velocity_m_s(mass_flow_kg_s: f64, density_kg_m3: f64, inner_diameter_m: f64) -> PhysicsResult<f64> {
    check::finite("mass flow", mass_flow_kg_s, "kg/s")?;
    check::positive("water density", density_kg_m3, "kg/m³")?;
    check::positive("pipe inner diameter", inner_diameter_m, "m")?;
    Ok(mass_flow_kg_s / (density_kg_m3 * 0.25 * PI * inner_diameter_m * inner_diameter_m))
}

/// Friction pressure gradient, Pa/m, of water flowing at `mass_flow_kg_s`
/// through a pipe (inner diameter, roughness) at the given water properties.
/// Sign follows the flow; local losses excluded.
///
/// # Errors
/// As [`PipeHydraulics::new`] and a non-finite flow.
pub fn pressure_gradient_pa_m(
    mass_flow_kg_s: f64,
    inner_diameter_m: f64,
    roughness_m: f64,
    density_kg_m3: f64,
    viscosity_pa_s: f64,
) -> PhysicsResult<f64> {
    check::finite("mass flow", mass_flow_kg_s, "kg/s")?;
    let p = PipeHydraulics::new(1.0, inner_diameter_m, roughness_m, 0.0, density_kg_m3, viscosity_pa_s)?;
    Ok(friction_gradient_pa_m(&p, mass_flow_kg_s))
}

/// [`FrictionLaw::ColebrookWhiteConservative`]: f and df/dRe for Re above
/// the laminar range.
fn conservative_friction_and_slope(re: f64, rr: f64) -> (f64, f64) {
    let smooth = friction_factor_and_slope(re, rr);
    if re >= TURBULENT_RE_MIN || re <= LAMINAR_RE_MAX {
        return smooth;
    }
    let cw = colebrook_and_slope(re, rr);
    if cw.0 > smooth.0 { cw } else { smooth }
}

/// Darcy friction factor of the design's conservative law
/// ([`FrictionLaw::ColebrookWhiteConservative`]) at Re > 0.
///
/// # Errors
/// [`crate::PhysicsError`] when Re is not in (0, [`RE_MAX`]] or ε/D is out of
/// range.
pub fn design_friction_factor(reynolds: f64, relative_roughness: f64) -> PhysicsResult<f64> {
    check::positive("Reynolds number", reynolds, "")?;
    check::in_range("Reynolds number", reynolds, "", 0.0, RE_MAX)?;
    check::in_range("relative roughness ε/D", relative_roughness, "", 0.0, RELATIVE_ROUGHNESS_MAX)?;
    if reynolds <= LAMINAR_RE_MAX {
        return Ok(64.0 / reynolds);
    }
    Ok(conservative_friction_and_slope(reynolds, relative_roughness).0)
}

/// Unchecked f(Re, ε/D) and df/dRe for Re > 0, all regimes.
fn friction_factor_and_slope(re: f64, rr: f64) -> (f64, f64) {
    if re <= LAMINAR_RE_MAX {
        (64.0 / re, -64.0 / (re * re))
    } else if re >= TURBULENT_RE_MIN {
        colebrook_and_slope(re, rr)
    } else {
        // Cubic Hermite on [LAMINAR_RE_MAX, TURBULENT_RE_MIN] matching value
        // and slope of both neighbours.
        let (f0, s0) = (64.0 / LAMINAR_RE_MAX, -64.0 / (LAMINAR_RE_MAX * LAMINAR_RE_MAX));
        let (f1, s1) = colebrook_and_slope(TURBULENT_RE_MIN, rr);
        let h = TURBULENT_RE_MIN - LAMINAR_RE_MAX;
        let t = (re - LAMINAR_RE_MAX) / h;
        let (t2, t3) = (t * t, t * t * t);
        let h00 = 2.0 * t3 - 3.0 * t2 + 1.0;
        let h10 = t3 - 2.0 * t2 + t;
        let h01 = -2.0 * t3 + 3.0 * t2;
        let h11 = t3 - t2;
        let f = h00 * f0 + h10 * h * s0 + h01 * f1 + h11 * h * s1;
        // d/dt of the basis, divided by h for d/dRe.
        let d00 = 6.0 * t2 - 6.0 * t;
        let d10 = 3.0 * t2 - 4.0 * t + 1.0;
        let d01 = -6.0 * t2 + 6.0 * t;
        let d11 = 3.0 * t2 - 2.0 * t;
        let df = (d00 * f0 + d01 * f1) / h + d10 * s0 + d11 * s1;
        (f, df)
    }
}

/// EPANET's Darcy–Weisbach friction factor and df/dRe for Re > 2000
/// (unchecked): Swamee–Jain from Re 4000, Dunlop's cubic in Re/2000 below
/// (see [`FrictionLaw::SwameeJainEpanet`] for the source). The cubic meets
/// 64/Re at Re = 2000 and Swamee–Jain at Re = 4000.
fn epanet_friction_and_slope(re: f64, rr: f64) -> (f64, f64) {
    let a9 = -2.0 / LN_10;
    if re >= TURBULENT_RE_MIN {
        let y1 = 5.74 / re.powf(0.9);
        let y2 = rr / 3.7 + y1;
        let y3 = a9 * y2.ln();
        let f = 1.0 / (y3 * y3);
        // d/dRe: dy2/dRe = −0.9·y1/Re.
        (f, 1.8 * a9 * y1 / (y3 * y3 * y3 * y2 * re))
    } else {
        let ab = 5.74 / TURBULENT_RE_MIN.powf(0.9);
        let ac = -2.0 * 0.9 * 2.0 / LN_10 * ab;
        let y2 = rr / 3.7 + ab;
        let y3 = a9 * y2.ln();
        let fa = 1.0 / (y3 * y3);
        let fb = (2.0 + ac / (y2 * y3)) * fa;
        let r = re / LAMINAR_RE_MAX;
        let x1 = 7.0 * fa - fb;
        let x2 = 0.128 - 17.0 * fa + 2.5 * fb;
        let x3 = -0.128 + 13.0 * fa - 2.0 * fb;
        let x4 = 0.032 - 3.0 * fa + 0.5 * fb;
        let f = x1 + r * (x2 + r * (x3 + r * x4));
        (f, (x2 + r * (2.0 * x3 + 3.0 * r * x4)) / LAMINAR_RE_MAX)
    }
}

/// Colebrook–White f and df/dRe (unchecked, Re > 0).
fn colebrook_and_slope(re: f64, rr: f64) -> (f64, f64) {
    colebrook_and_slope_from(re, rr, colebrook_x(re, rr))
}

/// Colebrook–White f and df/dRe from its solution `x` = 1/√f at `re`.
fn colebrook_and_slope_from(re: f64, rr: f64, x: f64) -> (f64, f64) {
    // Implicit derivative of x = −2·log10(a + b·x/Re), a = ε/(3.7D), b = 2.51:
    // with c = 2/(ln10·(a + b·x/Re)), dx/dRe = c·b·x/Re² / (1 + c·b/Re).
    let a = rr / 3.7;
    let b = 2.51;
    let c = 2.0 / (LN_10 * (a + b * x / re));
    let dx_dre = c * b * x / (re * re) / (1.0 + c * b / re);
    let f = 1.0 / (x * x);
    (f, -2.0 / (x * x * x) * dx_dre)
}

/// x = 1/√f of Colebrook–White by Newton's method (unchecked, Re > 0).
///
/// F(x) = x + 2·log10(a + b·x/Re) is increasing and concave in x, so Newton
/// converges quadratically from the Haaland (1983) explicit start (within a
/// few per cent); 3–4 steps reach ~1e-15. The loop is bounded.
fn colebrook_x(re: f64, rr: f64) -> f64 {
    colebrook_x_from(re, rr, (rr / 3.7).powf(1.11))
}

/// [`colebrook_x`] with the Haaland start's roughness term (ε/D/3.7)^1.11
/// given (a pipe's constant, see [`PipeKernel`]).
fn colebrook_x_from(re: f64, rr: f64, haaland_roughness: f64) -> f64 {
    let a = rr / 3.7;
    let b_re = 2.51 / re;
    // Haaland: 1/√f = −1.8·log10((ε/D/3.7)^1.11 + 6.9/Re).
    let mut x = -1.8 * (haaland_roughness + 6.9 / re).log10();
    if !(x.is_finite() && x > 0.0) {
        x = 8.0;
    }
    for _ in 0..30 {
        let arg = a + b_re * x;
        let g = x + 2.0 * arg.log10();
        let dg = 1.0 + 2.0 * b_re / (LN_10 * arg);
        let step = g / dg;
        let next = x - step;
        // Keep the argument of the logarithm positive.
        x = if next > 0.0 { next } else { 0.5 * x };
        // Quadratic convergence: the error left after a step of size s is
        // about |F''|/(2F')·s² ≤ s²/(ln10·x²) (F' ≥ 1 and
        // |F''| = 2b²/(ln10·(a + b·x)²) ≤ 2/(ln10·x²) with b = 2.51/Re),
        // so after a step below 1e-8·x it is below 5e-17·x: rounding level,
        // and one more logarithm would only confirm it.
        if step.abs() <= 1e-8 * x {
            break;
        }
    }
    x
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::PhysicsError;

    fn water_pipe(d_m: f64, zeta: f64) -> PipeHydraulics {
        // Water at ≈60 °C: ρ ≈ 983 kg/m³, μ ≈ 4.67e-4 Pa·s (rounded).
        PipeHydraulics::new(10.0, d_m, 0.045e-3, zeta, 983.2, 4.67e-4).unwrap()
    }

    #[test]
    fn rejects_non_physical_input() {
        assert!(matches!(
            PipeHydraulics::new(-1.0, 0.02, 0.0, 0.0, 1000.0, 1e-3),
            Err(PhysicsError::NotPositive { .. })
        ));
        assert!(matches!(
            PipeHydraulics::new(1.0, f64::NAN, 0.0, 0.0, 1000.0, 1e-3),
            Err(PhysicsError::NotFinite { .. })
        ));
        assert!(matches!(PipeHydraulics::new(1.0, 0.02, -1e-5, 0.0, 1000.0, 1e-3), Err(PhysicsError::Negative { .. })));
        assert!(matches!(PipeHydraulics::new(1.0, 0.02, 0.0, -0.5, 1000.0, 1e-3), Err(PhysicsError::Negative { .. })));
        assert!(matches!(PipeHydraulics::new(1.0, 0.02, 0.0, 0.0, 0.0, 1e-3), Err(PhysicsError::OutOfRange { .. })));
        assert!(matches!(PipeHydraulics::new(1.0, 0.02, 0.0, 0.0, 1000.0, 0.0), Err(PhysicsError::OutOfRange { .. })));
        assert!(matches!(
            PipeHydraulics::new(1.0, 0.01, 0.002, 0.0, 1000.0, 1e-3),
            Err(PhysicsError::OutOfRange { .. })
        ));
        assert!(darcy_friction_factor(0.0, 0.0).is_err());
        assert!(darcy_friction_factor(-5.0, 0.0).is_err());
        assert!(darcy_friction_factor(f64::NAN, 0.0).is_err());
        assert!(darcy_friction_factor(1e4, -1e-3).is_err());
        assert!(darcy_friction_factor(1e4, 0.2).is_err());
        assert!(colebrook_white(3000.0, 0.0).is_err());
        assert!(colebrook_white(1e4, f64::INFINITY).is_err());
        assert!(reynolds(f64::NAN, 0.02, 1e-3).is_err());
        assert!(reynolds(0.1, 0.0, 1e-3).is_err());
        assert!(velocity_m_s(0.1, -1.0, 0.02).is_err());
        assert!(pressure_gradient_pa_m(f64::INFINITY, 0.02, 0.0, 1000.0, 1e-3).is_err());
    }

    #[test]
    fn laminar_is_hagen_poiseuille() {
        // Hagen–Poiseuille (textbook): f = 64/Re exactly.
        for re in [1.0, 100.0, 1000.0, 2000.0] {
            let f = darcy_friction_factor(re, 0.01).unwrap();
            assert!((f - 64.0 / re).abs() <= 1e-15 * f, "{re}");
        }
    }

    #[test]
    fn colebrook_satisfies_its_equation() {
        for re in [4e3, 1e4, 1e5, 1e6, 1e8] {
            for rr in [0.0, 1e-6, 1e-4, 1e-3, 1e-2, 0.05] {
                let f = colebrook_white(re, rr).unwrap();
                let lhs = 1.0 / f.sqrt();
                let rhs = -2.0 * (rr / 3.7 + 2.51 / (re * f.sqrt())).log10();
                assert!((lhs - rhs).abs() <= 1e-12 * lhs, "Re {re} rr {rr}: {lhs} vs {rhs}");
            }
        }
    }

    #[test]
    fn friction_factor_is_continuous_with_continuous_slope() {
        for rr in [0.0, 1e-4, 3.6e-3, 0.05] {
            for re_b in [LAMINAR_RE_MAX, TURBULENT_RE_MIN] {
                let d = 1e-7 * re_b;
                let (f_lo, s_lo) = friction_factor_and_slope(re_b - d, rr);
                let (f_hi, s_hi) = friction_factor_and_slope(re_b + d, rr);
                assert!((f_lo - f_hi).abs() <= 1e-6 * f_lo, "value jump at {re_b}, rr {rr}: {f_lo} {f_hi}");
                assert!(
                    (s_lo - s_hi).abs() <= 1e-4 * s_lo.abs().max(s_hi.abs()),
                    "slope jump at {re_b}, rr {rr}: {s_lo} {s_hi}"
                );
            }
        }
    }

    #[test]
    fn transition_keeps_dp_rising() {
        // d(Δp)/dṁ ∝ 2f + Re·df/dRe must stay positive for the Newton solver.
        for rr in [0.0, 1e-4, 1e-3, 1e-2, 0.05] {
            for i in 0..=200 {
                let re = LAMINAR_RE_MAX + f64::from(i) * (TURBULENT_RE_MIN - LAMINAR_RE_MAX) / 200.0;
                let (f, s) = friction_factor_and_slope(re, rr);
                assert!(f > 0.0 && 2.0 * f + re * s > 0.0, "Re {re} rr {rr}: f {f} slope {s}");
            }
        }
    }

    #[test]
    fn zero_flow_gives_laminar_slope() {
        let p = water_pipe(0.02, 5.0);
        let (dp, slope) = pipe_dp(&p, 0.0);
        assert!(dp.abs() < 1e-300);
        let a = p.flow_area_m2();
        let expected = 32.0 * p.viscosity_pa_s * p.length_m / (p.density_kg_m3 * p.inner_diameter_m.powi(2) * a);
        assert!((slope - expected).abs() <= 1e-12 * expected);
    }

    #[test]
    fn slope_matches_finite_difference_in_all_regimes_and_is_odd() {
        for zeta in [0.0, 4.5] {
            let p = water_pipe(0.02, zeta);
            // Flow for a given Re: ṁ = Re·π·D·μ/4.
            let m_of_re = |re: f64| re * PI * p.inner_diameter_m * p.viscosity_pa_s / 4.0;
            for re in [10.0, 500.0, 1999.0, 2100.0, 2500.0, 3000.0, 3500.0, 3990.0, 4100.0, 1e4, 1e5, 1e6] {
                let m = m_of_re(re);
                let h = 1e-6 * m;
                let fd = (pipe_dp(&p, m + h).0 - pipe_dp(&p, m - h).0) / (2.0 * h);
                let (dp, slope) = pipe_dp(&p, m);
                assert!(slope > 0.0 && slope.is_finite());
                assert!((slope - fd).abs() <= 1e-5 * slope, "Re {re} ζ {zeta}: {slope} vs {fd}");
                let (dp_neg, slope_neg) = pipe_dp(&p, -m);
                assert!((dp + dp_neg).abs() <= 1e-12 * dp.abs());
                assert!((slope - slope_neg).abs() <= 1e-12 * slope);
            }
        }
    }

    #[test]
    fn dp_rises_monotonically_with_flow() {
        for rr_d in [0.01, 0.05, 0.1] {
            let p = PipeHydraulics::new(1.0, rr_d, 0.045e-3, 0.0, 983.2, 4.67e-4).unwrap();
            let mut last = 0.0;
            for i in 1..4000 {
                let m = f64::from(i) * 1e-4;
                let (dp, slope) = pipe_dp(&p, m);
                assert!(dp > last && slope > 0.0, "D {rr_d}, ṁ {m}");
                last = dp;
            }
        }
    }

    #[test]
    fn local_losses_add_zeta_dynamic_pressure() {
        let p0 = water_pipe(0.02, 0.0);
        let p1 = water_pipe(0.02, 3.0);
        for m in [0.001, 0.01, 0.2] {
            let v = p0.velocity_m_s(m);
            let extra = pipe_dp(&p1, m).0 - pipe_dp(&p0, m).0;
            let expected = 3.0 * p0.density_kg_m3 * v * v / 2.0;
            assert!((extra - expected).abs() <= 1e-9 * expected, "{m}");
        }
    }

    #[test]
    fn gradient_helper_matches_pipe() {
        let p = water_pipe(0.02, 2.0);
        let g = pressure_gradient_pa_m(0.1, 0.02, 0.045e-3, 983.2, 4.67e-4).unwrap();
        let p_no_zeta = PipeHydraulics { zeta_sum: 0.0, ..p };
        assert!((g - pipe_dp(&p_no_zeta, 0.1).0 / p.length_m).abs() <= 1e-9 * g);
        assert!((friction_gradient_pa_m(&p, 0.1) - g).abs() <= 1e-9 * g);
    }

    #[test]
    fn epanet_law_is_continuous_and_close_to_colebrook() {
        // The Dunlop cubic meets 64/Re at Re 2000 and Swamee–Jain at 4000
        // (EPANET 2.2 Users Manual, headloss formulas; coefficients recalled
        // from memory, checked here for continuity only).
        for rr in [0.0, 1e-4, 1e-3, 0.01] {
            let (f_lo, _) = epanet_friction_and_slope(LAMINAR_RE_MAX * (1.0 + 1e-12), rr);
            assert!((f_lo - 64.0 / LAMINAR_RE_MAX).abs() < 1e-9, "{rr}: {f_lo}");
            let (f_a, _) = epanet_friction_and_slope(TURBULENT_RE_MIN * (1.0 - 1e-12), rr);
            let (f_b, _) = epanet_friction_and_slope(TURBULENT_RE_MIN, rr);
            assert!((f_a - f_b).abs() < 1e-9, "{rr}: {f_a} {f_b}");
            // Swamee–Jain is within about 3 % of Colebrook–White over the
            // turbulent range (Swamee & Jain 1976, as quoted in textbooks;
            // recalled from memory).
            for re in [5e3, 2e4, 1e5, 1e6] {
                let sj = epanet_friction_and_slope(re, rr).0;
                let cw = colebrook_white(re, rr).unwrap();
                assert!((sj / cw - 1.0).abs() < 0.03, "Re {re}, ε/D {rr}: {sj} vs {cw}");
            }
        }
        // Slope by finite differences in every regime.
        for re in [2500.0, 3500.0, 8000.0, 1e5] {
            let (f0, d) = epanet_friction_and_slope(re, 1e-3);
            let h = re * 1e-6;
            let (f1, _) = epanet_friction_and_slope(re + h, 1e-3);
            assert!(((f1 - f0) / h - d).abs() <= 1e-4 * d.abs(), "Re {re}");
        }
        let p = water_pipe(0.02, 1.0).with_friction_law(FrictionLaw::SwameeJainEpanet);
        assert_eq!(p.friction_law, FrictionLaw::SwameeJainEpanet);
        assert!(pipe_dp(&p, 0.1).0 > 0.0);
    }
}
