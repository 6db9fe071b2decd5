//! Emitters: panel radiators (EN 442 characteristic), floor-heating loops
//! (EN 1264, simplified — see [`floor`]) and generic fixed-Kv terminals (fan
//! coils, air heaters).
//!
//! Every emitter here is described by a *characteristic*: its heat output as
//! a strictly increasing function of the logarithmic mean temperature
//! difference between the water and the room, ΔT_lm = (θs − θr) /
//! ln((θs − θi)/(θr − θi)) ([`lmtd_k`]). Two coupled problems are solved the
//! same way for all of them:
//!
//! - *check at a load* ([`Characteristic::return_temp_for_load`]): the return
//!   temperature θr ∈ (θi, θs) at which the emitter delivers a given load, and
//!   the mass flow q_m = Φ / (c_p·(θs − θr)); or the shortfall when even the
//!   largest practical flow ([`MIN_WATER_DELTA_K`]) cannot deliver it;
//! - *output at a flow* ([`Characteristic::output_at_flow`]): the water side
//!   Φ = q_m·c_p·(θs − θr) and the emitter side Φ(ΔT_lm) must agree; this is
//!   what the operating solve uses when the real flows differ from design.
//!
//! c_p is the IAPWS-IF97 mean specific heat between supply and return
//! ([`crate::water::mean_cp_j_kg_k`]; in these per-emitter loops its
//! tabulated form [`crate::water::mean_cp_tabulated_j_kg_k`], within 1e-9 of
//! it), never a constant.
//!
//! [`EmitterModel`] is what a project stores for one emitter; its
//! [`EmitterModel::design`] returns the design flow and an
//! [`InstalledEmitter`] (a concrete emitter with known output characteristic,
//! body resistance and water content) for the operating solve.
//!
//! Reference checks: `tests/tests/reference/emitters.rs`.

pub mod floor;
pub mod radiator;
mod roots;
pub mod terminal;

use roots::{Unbracketed, bracket_from_one, newton_in_log, root_in_log};

use serde::{Deserialize, Serialize};

use crate::error::{PhysicsError, PhysicsResult, check};
use crate::friction::{PipeHydraulics, pipe_dp};
use crate::project::limits::readable;
use crate::water::{self, MAX_TEMPERATURE_C, MIN_TEMPERATURE_C};

pub use floor::{FloorLoopDesign, FloorLoopSpec, FloorZone};
pub use radiator::{RadiatorRating, RadiatorSizing, RadiatorSpec};
pub use terminal::TerminalSpec;

/// Accepted room (indoor air) temperature range, °C: the project's one
/// range ([`crate::project::limits::ROOM_C`]; 5 °C covers frost-protected
/// spaces, 30 °C is above any heated room's design temperature).
pub const ROOM_TEMPERATURE_RANGE_C: (f64, f64) =
    (crate::project::limits::ROOM_C.min, crate::project::limits::ROOM_C.max);

/// Smallest water temperature drop θs − θr the check at a load will use, K.
///
/// Common practice: an emitter that needs less than ~1 K of cooling to meet
/// its load runs at a flow so large that valve noise and pump power rule it
/// out; flowrise treats Δθ = 1 K as the practical flow cap and reports a
/// shortfall beyond it. (When θs − θi < 2 K the cap is (θs − θi)/2.)
pub const MIN_WATER_DELTA_K: f64 = 1.0;

/// Check that a supply/room pair is physical: both in range, supply > room.
fn check_supply_room(supply_c: f64, room_c: f64) -> PhysicsResult<()> {
    check::in_range("supply temperature", supply_c, "°C", MIN_TEMPERATURE_C, MAX_TEMPERATURE_C)?;
    check::in_range("room temperature", room_c, "°C", ROOM_TEMPERATURE_RANGE_C.0, ROOM_TEMPERATURE_RANGE_C.1)?;
    if supply_c <= room_c {
        return Err(PhysicsError::Inconsistent(format!(
            "room temperature {r} °C is at or above the supply temperature {s} °C: the water cannot heat the room \
             — raise the supply temperature above {r} °C or lower the room temperature below {s} °C",
            r = readable(room_c),
            s = readable(supply_c)
        )));
    }
    Ok(())
}

/// Logarithmic mean temperature difference between the water and the room,
/// K: ΔT_lm = (θs − θr) / ln((θs − θi)/(θr − θi)) (EN 442-2; the same mean
/// is EN 1264's heating-medium differential temperature ΔθH).
///
/// `return_c == supply_c` is the limit of infinite flow and gives θs − θi.
/// Evaluated as m·y/artanh(y) with m the arithmetic mean of the two
/// differences and y their relative half-difference, which has no
/// cancellation near that limit.
///
/// (The arithmetic mean (θs + θr)/2 − θi is an older approximation that
/// overstates the difference at large cooling; EN 442 uses the LMTD and so
/// does flowrise.)
///
/// # Errors
/// [`PhysicsError`] when a temperature is NaN or out of range (water
/// [`MIN_TEMPERATURE_C`]..=[`MAX_TEMPERATURE_C`], room
/// [`ROOM_TEMPERATURE_RANGE_C`]), supply ≤ room, return > supply or
/// return ≤ room.
pub fn lmtd_k(supply_c: f64, return_c: f64, room_c: f64) -> PhysicsResult<f64> {
    check_supply_room(supply_c, room_c)?;
    check::in_range("return temperature", return_c, "°C", MIN_TEMPERATURE_C, MAX_TEMPERATURE_C)?;
    if return_c > supply_c {
        return Err(PhysicsError::Inconsistent(format!(
            "return temperature {} °C is above the supply temperature {} °C",
            readable(return_c),
            readable(supply_c)
        )));
    }
    if return_c <= room_c {
        return Err(PhysicsError::Inconsistent(format!(
            "return temperature {t} °C is not above the room temperature {r} °C: the water cannot cool below the \
             room — raise the design return temperature above {r} °C or lower the room temperature below {t} °C",
            t = readable(return_c),
            r = readable(room_c)
        )));
    }
    Ok(lmtd_unchecked(supply_c - room_c, return_c - room_c))
}

/// LMTD of two positive differences `a` ≥ `b` > 0 (no checks).
fn lmtd_unchecked(a: f64, b: f64) -> f64 {
    let mean = 0.5 * (a + b);
    let y = (a - b) / (a + b);
    if y.abs() < 1e-8 {
        // y/artanh(y) = 1 − y²/3 − … ; the y² term is below 1e-16 here.
        mean
    } else {
        mean * y / y.atanh()
    }
}

/// Outcome of checking an emitter against a load at a given supply
/// temperature.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum CheckOutcome {
    /// The emitter delivers the load.
    Meets {
        /// Return temperature at which it does, °C.
        return_c: f64,
        /// Mass flow needed, kg/s.
        mass_flow_kg_s: f64,
        /// Output, W (equals the load).
        output_w: f64,
    },
    /// Even at the practical flow cap ([`MIN_WATER_DELTA_K`]) the emitter
    /// falls short.
    Shortfall {
        /// Return temperature at the flow cap, °C.
        return_c: f64,
        /// Mass flow at the cap, kg/s.
        mass_flow_kg_s: f64,
        /// Output delivered at the cap, W.
        output_w: f64,
        /// Load minus delivered output, W (> 0).
        shortfall_w: f64,
        /// Delivered output / load (0 to 1).
        fraction_delivered: f64,
    },
}

impl CheckOutcome {
    /// Return temperature, °C.
    #[must_use]
    pub fn return_c(&self) -> f64 {
        match *self {
            Self::Meets { return_c, .. } | Self::Shortfall { return_c, .. } => return_c,
        }
    }

    /// Mass flow, kg/s.
    #[must_use]
    pub fn mass_flow_kg_s(&self) -> f64 {
        match *self {
            Self::Meets { mass_flow_kg_s, .. } | Self::Shortfall { mass_flow_kg_s, .. } => mass_flow_kg_s,
        }
    }

    /// Output delivered, W.
    #[must_use]
    pub fn output_w(&self) -> f64 {
        match *self {
            Self::Meets { output_w, .. } | Self::Shortfall { output_w, .. } => output_w,
        }
    }

    /// Whether the load is met.
    #[must_use]
    pub fn meets_load(&self) -> bool {
        matches!(self, Self::Meets { .. })
    }
}

/// Output of an emitter at a given mass flow.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FlowOutput {
    /// Heat output, W.
    pub output_w: f64,
    /// Return temperature, °C.
    pub return_c: f64,
}

/// An emitter's heat output as a function of the logarithmic mean
/// temperature difference water → room.
///
/// Implementors guarantee `output_w(0) = 0`, strict increase, and that
/// `lmtd_for_output_k` is its inverse. The provided methods solve the two
/// coupled water-side problems.
pub trait Characteristic {
    /// Output at ΔT_lm = `lmtd_k` (K, ≥ 0), W.
    fn output_w(&self, lmtd_k: f64) -> f64;

    /// ΔT_lm at which the output is `output_w` (W, ≥ 0), K.
    fn lmtd_for_output_k(&self, output_w: f64) -> f64;

    /// Output (W) and its derivative dΦ/dΔT_lm (W/K) at ΔT_lm = `lmtd_k`.
    /// The provided version takes a central difference; characteristics
    /// with a closed-form derivative override it.
    fn output_and_slope(&self, lmtd_k: f64) -> (f64, f64) {
        let l = lmtd_k.max(0.0);
        let h = 1e-6 * l.max(1e-3);
        let slope = (self.output_w(l + h) - self.output_w((l - h).max(0.0))) / (l + h - (l - h).max(0.0));
        (self.output_w(l), slope)
    }

    /// Return temperature and mass flow at which the emitter delivers
    /// `load_w` with supply `supply_c` in a room at `room_c`, or the
    /// shortfall at the practical flow cap ([`MIN_WATER_DELTA_K`]).
    /// Zero load gives zero flow and return = room.
    ///
    /// Solved on u = ln((θs − θi)/(θr − θi)) ∈ (0, ∞), where
    /// ΔT_lm/(θs − θi) = (1 − e^(−u))/u is strictly decreasing: a bracketed
    /// bisection that cannot fail or panic.
    ///
    /// # Errors
    /// [`PhysicsError`] for a non-finite or negative load, or the
    /// temperatures rejected by [`lmtd_k`].
    fn return_temp_for_load(&self, load_w: f64, supply_c: f64, room_c: f64) -> PhysicsResult<CheckOutcome> {
        self.return_temp_for_load_min_drop(load_w, supply_c, room_c, MIN_WATER_DELTA_K)
    }

    /// [`Characteristic::return_temp_for_load`] with the flow capped where
    /// the water cools by `min_drop_k` (K; e.g. 5 K for a heat pump, common
    /// practice) instead of [`MIN_WATER_DELTA_K`]: a load the emitter could
    /// only meet at a smaller drop is a shortfall at the cap.
    ///
    /// # Errors
    /// As [`Characteristic::return_temp_for_load`]; a drop that is not
    /// positive and finite too.
    fn return_temp_for_load_min_drop(
        &self,
        load_w: f64,
        supply_c: f64,
        room_c: f64,
        min_drop_k: f64,
    ) -> PhysicsResult<CheckOutcome> {
        check::non_negative("heat load", load_w, "W")?;
        check::positive("minimum water temperature drop", min_drop_k, "K")?;
        check_supply_room(supply_c, room_c)?;
        let a = supply_c - room_c;
        if load_w == 0.0 {
            return Ok(CheckOutcome::Meets { return_c: room_c, mass_flow_kg_s: 0.0, output_w: 0.0 });
        }
        let delta_cap_k = min_drop_k.min(0.5 * a);
        let lmtd_cap_k = lmtd_unchecked(a, a - delta_cap_k);
        let lmtd_target_k = self.lmtd_for_output_k(load_w);
        if !lmtd_target_k.is_finite() || lmtd_target_k > lmtd_cap_k {
            let return_c = supply_c - delta_cap_k;
            let output_w = self.output_w(lmtd_cap_k);
            let cp = water::mean_cp_tabulated_j_kg_k(supply_c, return_c)?;
            return Ok(CheckOutcome::Shortfall {
                return_c,
                mass_flow_kg_s: output_w / (cp * delta_cap_k),
                output_w,
                shortfall_w: load_w - output_w,
                fraction_delivered: output_w / load_w,
            });
        }
        // g(u) = (1 − e^−u)/u, decreasing; find g(u) = r.
        let r = lmtd_target_k / a;
        let g = |u: f64| -(-u).exp_m1() / u;
        let mut lo = -(-delta_cap_k / a).ln_1p(); // g(lo) ≥ r
        let mut hi = (1.0 / r).max(lo); // g(u) < 1/u ≤ r
        for _ in 0..200 {
            let mid = 0.5 * (lo + hi);
            if mid <= lo || mid >= hi {
                break;
            }
            if g(mid) > r {
                lo = mid;
            } else {
                hi = mid;
            }
        }
        let u = 0.5 * (lo + hi);
        let delta_k = a * -(-u).exp_m1();
        let return_c = room_c + a * (-u).exp();
        let return_for_cp = return_c.max(MIN_TEMPERATURE_C);
        let cp = water::mean_cp_tabulated_j_kg_k(supply_c, return_for_cp)?;
        Ok(CheckOutcome::Meets { return_c, mass_flow_kg_s: load_w / (cp * delta_k), output_w: load_w })
    }

    /// Output and return temperature at mass flow `mass_flow_kg_s` with
    /// supply `supply_c` in a room at `room_c`: the θr that makes
    /// q_m·c_p·(θs − θr) equal the characteristic's output. Zero flow gives
    /// zero output and return = room; the output rises monotonically with
    /// the flow towards the characteristic's output at ΔT_lm = θs − θi.
    ///
    /// Solved in s = ln u (u as in [`Characteristic::return_temp_for_load`]),
    /// where the residual is strictly monotone: Newton's method with the
    /// derivative from [`Characteristic::output_and_slope`], kept inside the
    /// bracket its own evaluations establish, until the step is below 1e-13
    /// in s (u to 1e-13 relative, as a plain bisection would give). Should
    /// that not settle in 60 steps, or meet a non-finite value, the root is
    /// bracketed by halving/doubling from u = 1 and found by false position
    /// (Illinois) with bisection steps — the same answer, more slowly.
    /// c_p (IAPWS mean between θs and θr) by an outer fixed point (it
    /// changes by < 0.5 % over the whole range, so 2–3 passes settle it);
    /// each pass after the first starts from the previous root.
    ///
    /// # Errors
    /// [`PhysicsError`] for a non-finite or negative flow or the
    /// temperatures rejected by [`lmtd_k`].
    fn output_at_flow(&self, mass_flow_kg_s: f64, supply_c: f64, room_c: f64) -> PhysicsResult<FlowOutput> {
        check::non_negative("emitter mass flow", mass_flow_kg_s, "kg/s")?;
        check_supply_room(supply_c, room_c)?;
        if mass_flow_kg_s == 0.0 {
            return Ok(FlowOutput { output_w: 0.0, return_c: room_c });
        }
        let a = supply_c - room_c;
        let mut cp = water::mean_cp_tabulated_j_kg_k(supply_c, room_c + 0.5 * a)?;
        let mut result = FlowOutput { output_w: 0.0, return_c: room_c };
        // The root of the previous pass (None: not bracketed).
        let mut previous_u: Option<f64> = None;
        for _ in 0..10 {
            let capacity_w_k = mass_flow_kg_s * cp;
            // h(u) increasing in u: water side minus emitter side.
            let h = |u: f64| {
                let one_minus_x = -(-u).exp_m1();
                capacity_w_k * a * one_minus_x - self.output_w(a * one_minus_x / u)
            };
            // h and dh/ds (s = ln u) at u.
            let h_and_slope = |u: f64| {
                let x = (-u).exp();
                let one_minus_x = -(-u).exp_m1();
                let (phi, dphi) = self.output_and_slope(a * one_minus_x / u);
                // d/du of (1 − e^−u)/u, written to avoid cancellation where it can.
                let dg = (u * x - one_minus_x) / (u * u);
                (capacity_w_k * a * one_minus_x - phi, u * (capacity_w_k * a * x - dphi * a * dg))
            };
            let root = newton_in_log(&h_and_slope, previous_u.map_or(0.0, f64::ln))
                .map_or_else(|| bracket_from_one(&h).map(|b| root_in_log(&h, b)), Ok);
            let delta_k = match root {
                Ok(u) => {
                    previous_u = Some(u);
                    a * -(-u).exp_m1()
                }
                // Vanishing flow: all the water's heat above the room is given off.
                Err(Unbracketed::Below) => a,
                // Enormous flow: the water hardly cools.
                Err(Unbracketed::Above) => 0.0,
            };
            let return_c = supply_c - delta_k;
            let next = FlowOutput { output_w: capacity_w_k * delta_k, return_c };
            let cp_next = water::mean_cp_tabulated_j_kg_k(supply_c, return_c.max(MIN_TEMPERATURE_C))?;
            let settled = (cp_next - cp).abs() <= 1e-10 * cp;
            cp = cp_next;
            result = next;
            if settled {
                break;
            }
        }
        Ok(result)
    }
}

/// The hydraulic resistance of an emitter body itself (valves excluded).
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum BodyHydraulics {
    /// Δp = r·q_m·|q_m| (radiator body, terminal coil given by a Kv).
    Quadratic {
        /// Resistance coefficient, Pa·s²/kg².
        r_pa_s2_kg2: f64,
    },
    /// A pipe (the floor loop), Darcy–Weisbach + Colebrook–White.
    Pipe(PipeHydraulics),
}

impl BodyHydraulics {
    /// Quadratic law from a flow coefficient Kv (m³/h at 1 bar), with the
    /// density factor of the Kv definition exactly as for the valves
    /// (IEC 60534-1): Δp = 10⁵·(Q/Kv)²·ρ/ρ₀ with Q = 3600·q_m/ρ, ρ₀ =
    /// 1000 kg/m³ ([`crate::valves::resistance_r_pa_s2_kg2`]).
    ///
    /// # Errors
    /// [`PhysicsError`] for a Kv or density out of range.
    pub fn from_kv(kv_m3_h: f64, density_kg_m3: f64) -> PhysicsResult<Self> {
        Ok(Self::Quadratic { r_pa_s2_kg2: crate::valves::resistance_r_pa_s2_kg2(kv_m3_h, density_kg_m3)? })
    }

    /// Pressure drop (Pa, sign follows the flow) and its derivative
    /// (Pa·s/kg) at mass flow `mass_flow_kg_s` (either sign).
    #[must_use]
    pub fn dp_pa(&self, mass_flow_kg_s: f64) -> (f64, f64) {
        match self {
            Self::Quadratic { r_pa_s2_kg2 } => {
                (r_pa_s2_kg2 * mass_flow_kg_s * mass_flow_kg_s.abs(), 2.0 * r_pa_s2_kg2 * mass_flow_kg_s.abs())
            }
            Self::Pipe(p) => pipe_dp(p, mass_flow_kg_s),
        }
    }
}

/// The kinds of emitter, for choosing one (each [`EmitterModel`] variant
/// has exactly one).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum EmitterKind {
    /// A panel radiator.
    Radiator,
    /// A floor-heating loop.
    FloorLoop,
    /// A fixed-Kv terminal.
    Terminal,
}

impl EmitterKind {
    /// Every kind, in the order the window lists them.
    pub const ALL: [Self; 3] = [Self::Radiator, Self::FloorLoop, Self::Terminal];

    /// Name for people.
    #[must_use]
    pub fn name(self) -> &'static str {
        match self {
            Self::Radiator => "Radiator",
            Self::FloorLoop => "Floor loop",
            Self::Terminal => "Terminal",
        }
    }

    /// A new emitter of this kind with typical data (demo values: a 600 mm
    /// type-22 radiator to size, a 12 m² occupied-zone loop, a 2 kW
    /// terminal rated at 70/60/20 °C) for the user to adjust.
    #[must_use]
    pub fn default_model(self) -> EmitterModel {
        match self {
            Self::Radiator => EmitterModel::Radiator(RadiatorSpec {
                type_code: "22".to_owned(),
                height_mm: 600,
                sizing: RadiatorSizing::ToSize,
                exponent_n: None,
            }),
            Self::FloorLoop => EmitterModel::FloorLoop(FloorLoopSpec::typical(12.0, floor::FloorZone::Occupied)),
            Self::Terminal => EmitterModel::Terminal(TerminalSpec {
                nominal_output_w: 2000.0,
                nominal_supply_c: 70.0,
                nominal_return_c: 60.0,
                nominal_room_c: 20.0,
                exponent_n: 1.0,
                kv_m3_h: 2.5,
                water_content_l: 1.5,
            }),
        }
    }
}

/// What a project stores for one emitter.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub enum EmitterModel {
    /// A panel radiator (existing or to be sized).
    Radiator(RadiatorSpec),
    /// A floor-heating loop.
    FloorLoop(FloorLoopSpec),
    /// A generic fixed-Kv terminal (fan coil, air heater).
    Terminal(TerminalSpec),
}

/// Design temperatures an emitter is designed or checked at.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct DesignTemperatures {
    /// Supply water temperature, °C.
    pub supply_c: f64,
    /// Design return water temperature, °C (used to size radiators; emitters
    /// that are checked or floor loops get their own return).
    pub return_c: f64,
    /// Room temperature, °C.
    pub room_c: f64,
    /// Smallest water temperature drop an emitter that is checked (not
    /// sized) may use, K: its flow cap ([`MIN_WATER_DELTA_K`] by default,
    /// more for a heat pump's retrofit question).
    pub min_drop_k: f64,
}

impl DesignTemperatures {
    /// Supply, return and room temperatures, °C, with the default flow cap.
    #[must_use]
    pub const fn new(supply_c: f64, return_c: f64, room_c: f64) -> Self {
        Self { supply_c, return_c, room_c, min_drop_k: MIN_WATER_DELTA_K }
    }
}

/// A concrete emitter for the operating solve: known characteristic, body
/// resistance and water content.
#[derive(Debug, Clone, PartialEq)]
pub struct InstalledEmitter {
    /// Output characteristic.
    pub characteristic: InstalledCharacteristic,
    /// Hydraulic resistance of the emitter body.
    pub body: BodyHydraulics,
    /// Water content, l.
    pub water_content_l: f64,
}

/// The characteristic of an [`InstalledEmitter`].
#[derive(Debug, Clone, PartialEq)]
pub enum InstalledCharacteristic {
    /// EN 442 power law (radiator).
    Radiator(RadiatorRating),
    /// Simplified EN 1264 loop.
    FloorLoop(floor::FloorCharacteristic),
    /// Power law through stated nominal conditions.
    Terminal(terminal::TerminalRating),
}

impl Characteristic for InstalledCharacteristic {
    fn output_w(&self, lmtd_k: f64) -> f64 {
        match self {
            Self::Radiator(c) => c.output_w(lmtd_k),
            Self::FloorLoop(c) => c.output_w(lmtd_k),
            Self::Terminal(c) => c.output_w(lmtd_k),
        }
    }

    fn lmtd_for_output_k(&self, output_w: f64) -> f64 {
        match self {
            Self::Radiator(c) => c.lmtd_for_output_k(output_w),
            Self::FloorLoop(c) => c.lmtd_for_output_k(output_w),
            Self::Terminal(c) => c.lmtd_for_output_k(output_w),
        }
    }

    fn output_and_slope(&self, lmtd_k: f64) -> (f64, f64) {
        match self {
            Self::Radiator(c) => c.output_and_slope(lmtd_k),
            Self::FloorLoop(c) => c.output_and_slope(lmtd_k),
            Self::Terminal(c) => c.output_and_slope(lmtd_k),
        }
    }
}

impl InstalledEmitter {
    /// Output and return temperature at a mass flow (see
    /// [`Characteristic::output_at_flow`]).
    ///
    /// # Errors
    /// As [`Characteristic::output_at_flow`].
    pub fn output_at_flow(&self, mass_flow_kg_s: f64, supply_c: f64, room_c: f64) -> PhysicsResult<FlowOutput> {
        self.characteristic.output_at_flow(mass_flow_kg_s, supply_c, room_c)
    }

    /// Return temperature and flow for a load (see
    /// [`Characteristic::return_temp_for_load`]).
    ///
    /// # Errors
    /// As [`Characteristic::return_temp_for_load`].
    pub fn return_temp_for_load(&self, load_w: f64, supply_c: f64, room_c: f64) -> PhysicsResult<CheckOutcome> {
        self.characteristic.return_temp_for_load(load_w, supply_c, room_c)
    }
}

/// Extra design results per emitter kind.
#[derive(Debug, Clone, PartialEq)]
pub enum EmitterDetail {
    /// Radiator: required and selected nominal output.
    Radiator(radiator::RadiatorDesign),
    /// Floor loop: heat flux, surface temperature, loop length, Δp, flags.
    FloorLoop(FloorLoopDesign),
    /// Terminal: nothing beyond the outcome.
    Terminal,
}

/// Result of designing one emitter for its load.
#[derive(Debug, Clone, PartialEq)]
pub struct EmitterDesign {
    /// Flow, return temperature and output at design (or the shortfall).
    pub outcome: CheckOutcome,
    /// The concrete emitter for the operating solve.
    pub installed: InstalledEmitter,
    /// Kind-specific results.
    pub detail: EmitterDetail,
}

impl EmitterModel {
    /// Its kind.
    #[must_use]
    pub fn kind(&self) -> EmitterKind {
        match self {
            Self::Radiator(_) => EmitterKind::Radiator,
            Self::FloorLoop(_) => EmitterKind::FloorLoop,
            Self::Terminal(_) => EmitterKind::Terminal,
        }
    }

    /// Check the stored data without designing: catalog entries exist,
    /// outputs, exponents, areas and resistances are in range.
    ///
    /// # Errors
    /// [`PhysicsError`] naming the bad value.
    pub fn validate(&self) -> PhysicsResult<()> {
        match self {
            Self::Radiator(spec) => {
                let cat = radiator::radiator_catalog()?;
                let t = cat.find(&spec.type_code)?;
                t.nominal_w_per_m(spec.height_mm)?;
                let n = spec.exponent_n.unwrap_or(t.exponent_n);
                match spec.sizing {
                    RadiatorSizing::Existing { nominal_output_w, .. }
                    | RadiatorSizing::Chosen { nominal_output_w, .. } => {
                        RadiatorRating::new(nominal_output_w, n)?;
                    }
                    RadiatorSizing::ToSize => {
                        RadiatorRating::new(1.0, n)?;
                    }
                }
                Ok(())
            }
            Self::FloorLoop(spec) => spec.characteristic().map(|_| ()),
            Self::Terminal(spec) => spec.rating().map(|_| ()),
        }
    }

    /// Design the emitter for `load_w` at `temps`: a radiator to size gets
    /// the nominal output needed at (θs, θr, θi) and a catalog length; an
    /// existing radiator and a terminal are checked (their return follows
    /// from the load); a floor loop gets its heat flux, surface temperature,
    /// return temperature, flow and loop pressure drop.
    ///
    /// # Errors
    /// [`PhysicsError`] for non-physical inputs, an unknown catalog entry or
    /// a floor loop outside the model's validity range.
    pub fn design(&self, load_w: f64, temps: &DesignTemperatures) -> PhysicsResult<EmitterDesign> {
        match self {
            Self::Radiator(spec) => radiator::design(spec, load_w, temps),
            Self::FloorLoop(spec) => {
                let d = floor::design(spec, load_w, temps.supply_c, temps.room_c)?;
                let installed = InstalledEmitter {
                    characteristic: InstalledCharacteristic::FloorLoop(d.characteristic),
                    body: BodyHydraulics::Pipe(d.loop_pipe),
                    water_content_l: d.water_content_l,
                };
                Ok(EmitterDesign { outcome: d.outcome, installed, detail: EmitterDetail::FloorLoop(d) })
            }
            Self::Terminal(spec) => {
                let rating = spec.rating()?;
                let outcome =
                    rating.return_temp_for_load_min_drop(load_w, temps.supply_c, temps.room_c, temps.min_drop_k)?;
                let mean_c = 0.5 * (temps.supply_c + outcome.return_c());
                let density = water::density_kg_m3(mean_c.max(MIN_TEMPERATURE_C))?;
                let installed = InstalledEmitter {
                    characteristic: InstalledCharacteristic::Terminal(rating),
                    body: BodyHydraulics::from_kv(spec.kv_m3_h, density)?,
                    water_content_l: spec.water_content_l,
                };
                Ok(EmitterDesign { outcome, installed, detail: EmitterDetail::Terminal })
            }
        }
    }

    /// Design mass flow for `load_w` at `temps`, kg/s (see [`Self::design`]).
    ///
    /// # Errors
    /// As [`Self::design`].
    pub fn design_flow_kg_s(&self, load_w: f64, temps: &DesignTemperatures) -> PhysicsResult<f64> {
        Ok(self.design(load_w, temps)?.outcome.mass_flow_kg_s())
    }
}

#[cfg(test)]
mod tests;
