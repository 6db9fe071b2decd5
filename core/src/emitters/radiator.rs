//! Panel radiators: the EN 442 characteristic, sizing, checking an existing
//! radiator, and the output at a given flow.
//!
//! EN 442-2 rates a radiator by its nominal output Φ_n at the nominal
//! conditions 75/65/20 °C (supply/return/room) and its exponent n; at other
//! conditions Φ = Φ_n·(ΔT_lm/ΔT_n)^n with ΔT_lm the logarithmic mean
//! temperature difference ([`lmtd_k`]) and ΔT_n = ΔT_lm(75, 65, 20) =
//! 49.83 K ([`NOMINAL_LMTD_K`]).
//!
//! The radiator types in `assets/emitters/radiator_types.ron` are an
//! illustrative demo catalog (invented values, not any manufacturer's data).

use std::sync::OnceLock;

use serde::{Deserialize, Serialize};

use super::{
    BodyHydraulics, Characteristic, CheckOutcome, DesignTemperatures, EmitterDesign, EmitterDetail,
    InstalledCharacteristic, InstalledEmitter,
};
use crate::error::{PhysicsError, PhysicsResult, check};
use crate::water;

pub use super::lmtd_k;

/// EN 442-2 nominal supply temperature, °C.
pub const NOMINAL_SUPPLY_C: f64 = 75.0;
/// EN 442-2 nominal return temperature, °C.
pub const NOMINAL_RETURN_C: f64 = 65.0;
/// EN 442-2 nominal room (reference air) temperature, °C.
pub const NOMINAL_ROOM_C: f64 = 20.0;
/// ΔT_n = ΔT_lm at 75/65/20 °C = 10 / ln(55/45) K (EN 442-2 quotes 49.83 K);
/// full precision so that Φ(75, 65, 20) = Φ_n exactly.
pub const NOMINAL_LMTD_K: f64 = 49.832_886_545_639_7;

/// Accepted radiator exponents n. EN 442 test results for panel radiators lie
/// around 1.25–1.35 (common practice); convectors reach ~1.5. 1.0–2.0 keeps
/// every plausible emitter and rejects typing errors.
pub const EXPONENT_RANGE: (f64, f64) = (1.0, 2.0);

/// The EN 442 rating of one radiator: nominal output and exponent.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct RadiatorRating {
    /// Nominal output Φ_n at 75/65/20 °C, W.
    pub nominal_output_w: f64,
    /// Radiator exponent n.
    pub exponent_n: f64,
}

impl RadiatorRating {
    /// A checked rating.
    ///
    /// # Errors
    /// [`PhysicsError`] for a non-positive nominal output or an exponent
    /// outside [`EXPONENT_RANGE`].
    pub fn new(nominal_output_w: f64, exponent_n: f64) -> PhysicsResult<Self> {
        check::positive("radiator nominal output", nominal_output_w, "W")?;
        check::in_range("radiator exponent n", exponent_n, "", EXPONENT_RANGE.0, EXPONENT_RANGE.1)?;
        Ok(Self { nominal_output_w, exponent_n })
    }
}

impl Characteristic for RadiatorRating {
    fn output_w(&self, lmtd_k: f64) -> f64 {
        self.nominal_output_w * (lmtd_k.max(0.0) / NOMINAL_LMTD_K).powf(self.exponent_n)
    }

    fn output_and_slope(&self, lmtd_k: f64) -> (f64, f64) {
        let q = self.output_w(lmtd_k);
        // Power law: dΦ/dΔT = n·Φ/ΔT.
        (q, if lmtd_k > 0.0 { self.exponent_n * q / lmtd_k } else { 0.0 })
    }

    fn lmtd_for_output_k(&self, output_w: f64) -> f64 {
        NOMINAL_LMTD_K * (output_w.max(0.0) / self.nominal_output_w).powf(1.0 / self.exponent_n)
    }
}

/// Output of a radiator with nominal output `nominal_w` and exponent
/// `exponent_n` at supply/return/room temperatures, W (EN 442-2).
///
/// # Errors
/// [`PhysicsError`] for a bad rating or temperatures rejected by [`lmtd_k`].
pub fn rating_w(nominal_w: f64, exponent_n: f64, supply_c: f64, return_c: f64, room_c: f64) -> PhysicsResult<f64> {
    let r = RadiatorRating::new(nominal_w, exponent_n)?;
    Ok(r.output_w(lmtd_k(supply_c, return_c, room_c)?))
}

/// Nominal output (75/65/20 °C) a radiator needs to deliver `load_w` at
/// supply/return/room temperatures, W: Φ_n = Φ·(ΔT_n/ΔT_lm)^n (sizing).
///
/// # Errors
/// [`PhysicsError`] for a negative load, an exponent outside
/// [`EXPONENT_RANGE`] or temperatures rejected by [`lmtd_k`].
pub fn required_nominal_w(
    load_w: f64,
    exponent_n: f64,
    supply_c: f64,
    return_c: f64,
    room_c: f64,
) -> PhysicsResult<f64> {
    check::non_negative("heat load", load_w, "W")?;
    check::in_range("radiator exponent n", exponent_n, "", EXPONENT_RANGE.0, EXPONENT_RANGE.1)?;
    let lmtd = lmtd_k(supply_c, return_c, room_c)?;
    Ok(load_w * (NOMINAL_LMTD_K / lmtd).powf(exponent_n))
}

/// Check an existing radiator against a load: the return temperature and
/// flow at which it delivers `load_w`, or its shortfall at the practical flow
/// cap ([`super::MIN_WATER_DELTA_K`]). See
/// [`Characteristic::return_temp_for_load`].
///
/// # Errors
/// As [`Characteristic::return_temp_for_load`].
pub fn return_temp_for_load(
    rad: &RadiatorRating,
    load_w: f64,
    supply_c: f64,
    room_c: f64,
) -> PhysicsResult<CheckOutcome> {
    rad.return_temp_for_load(load_w, supply_c, room_c)
}

/// Output and return temperature of a radiator at a given mass flow (the
/// coupled problem q_m·c_p·(θs − θr) = Φ_n·(ΔT_lm/ΔT_n)^n). See
/// [`Characteristic::output_at_flow`].
///
/// # Errors
/// As [`Characteristic::output_at_flow`].
pub fn output_at_flow(
    rad: &RadiatorRating,
    mass_flow_kg_s: f64,
    supply_c: f64,
    room_c: f64,
) -> PhysicsResult<super::FlowOutput> {
    rad.output_at_flow(mass_flow_kg_s, supply_c, room_c)
}

/// Whether a radiator type gives off mostly radiation or mostly convection.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum HeatReleaseClass {
    /// Radiant share ≥ the catalog threshold.
    Radiant,
    /// Radiant share below the threshold.
    Convective,
}

/// Nominal output per metre at one height.
#[derive(Debug, Clone, PartialEq, Deserialize)]
pub struct HeightOutput {
    /// Radiator height, mm.
    pub height_mm: u32,
    /// Nominal output per metre length at 75/65/20 °C, W/m.
    pub nominal_w_per_m: f64,
}

/// One radiator type of the catalog (illustrative data).
#[derive(Debug, Clone, PartialEq, Deserialize)]
pub struct RadiatorType {
    /// Panel/convector code ("10", "11", "20", "21", "22", "33").
    pub code: String,
    /// Generic description.
    pub name: String,
    /// Radiator exponent n.
    pub exponent_n: f64,
    /// Radiative share of the output (0 to 1).
    pub radiant_share: f64,
    /// Water content per metre length per metre height, l/(m·m).
    pub water_content_l_per_m2: f64,
    /// Flow coefficient of the body, m³/h.
    pub body_kv_m3_h: f64,
    /// Nominal output per metre at the catalog heights.
    pub outputs: Vec<HeightOutput>,
}

/// The radiator catalog (`assets/emitters/radiator_types.ron`).
#[derive(Debug, Clone, PartialEq, Deserialize)]
pub struct RadiatorCatalog {
    /// Radiant share from which a type counts as radiant.
    pub radiant_share_threshold: f64,
    /// Shortest length offered when sizing, mm.
    pub length_min_mm: u32,
    /// Longest length offered when sizing, mm.
    pub length_max_mm: u32,
    /// Length step when sizing, mm.
    pub length_step_mm: u32,
    /// Radiator types.
    pub types: Vec<RadiatorType>,
}

const CATALOG_FILE: &str = "assets/emitters/radiator_types.ron";
const CATALOG_TEXT: &str = include_str!("../../../assets/emitters/radiator_types.ron");

impl RadiatorCatalog {
    /// Parse and validate a catalog from RON text.
    ///
    /// # Errors
    /// [`PhysicsError::Catalog`] naming the problem.
    pub fn from_ron(text: &str) -> PhysicsResult<Self> {
        let bad = |message: String| PhysicsError::Catalog { file: CATALOG_FILE.to_owned(), message };
        let cat: Self = ron::from_str(text).map_err(|e| bad(e.to_string()))?;
        if !(0.0..=1.0).contains(&cat.radiant_share_threshold) {
            return Err(bad(format!("radiant_share_threshold {} is not in 0..1", cat.radiant_share_threshold)));
        }
        if cat.length_step_mm == 0 || cat.length_min_mm == 0 || cat.length_min_mm > cat.length_max_mm {
            return Err(bad("length_min_mm/length_max_mm/length_step_mm are inconsistent".to_owned()));
        }
        for t in &cat.types {
            let ok = (EXPONENT_RANGE.0..=EXPONENT_RANGE.1).contains(&t.exponent_n)
                && (0.0..=1.0).contains(&t.radiant_share)
                && t.water_content_l_per_m2 > 0.0
                && t.body_kv_m3_h > 0.0
                && !t.outputs.is_empty()
                && t.outputs.iter().all(|h| h.height_mm > 0 && h.nominal_w_per_m > 0.0);
            if !ok {
                return Err(bad(format!("radiator type {:?} has a non-physical value", t.code)));
            }
        }
        Ok(cat)
    }

    /// The type with `code`.
    ///
    /// # Errors
    /// [`PhysicsError::NotFound`] listing the known codes.
    pub fn find(&self, code: &str) -> PhysicsResult<&RadiatorType> {
        self.types.iter().find(|t| t.code == code).ok_or_else(|| {
            let known: Vec<&str> = self.types.iter().map(|t| t.code.as_str()).collect();
            PhysicsError::NotFound(format!(
                "radiator type {code:?} is not in the catalog (known: {})",
                known.join(", ")
            ))
        })
    }

    /// Classification of a type by its radiant share.
    #[must_use]
    pub fn classify(&self, t: &RadiatorType) -> HeatReleaseClass {
        if t.radiant_share >= self.radiant_share_threshold {
            HeatReleaseClass::Radiant
        } else {
            HeatReleaseClass::Convective
        }
    }
}

impl RadiatorType {
    /// Nominal output per metre at `height_mm`, W/m.
    ///
    /// # Errors
    /// [`PhysicsError::NotFound`] listing the catalog heights.
    pub fn nominal_w_per_m(&self, height_mm: u32) -> PhysicsResult<f64> {
        self.outputs.iter().find(|h| h.height_mm == height_mm).map(|h| h.nominal_w_per_m).ok_or_else(|| {
            let known: Vec<String> = self.outputs.iter().map(|h| h.height_mm.to_string()).collect();
            PhysicsError::NotFound(format!(
                "radiator type {} has no height {height_mm} mm in the catalog (heights: {} mm)",
                self.code,
                known.join(", ")
            ))
        })
    }

    /// Water content of a radiator of this type, l.
    ///
    /// # Errors
    /// [`PhysicsError`] for a zero height or length.
    pub fn water_content_l(&self, height_mm: u32, length_mm: u32) -> PhysicsResult<f64> {
        check::positive("radiator height", f64::from(height_mm), "mm")?;
        check::positive("radiator length", f64::from(length_mm), "mm")?;
        Ok(self.water_content_l_per_m2 * f64::from(height_mm) * 1e-3 * f64::from(length_mm) * 1e-3)
    }
}

/// The radiator catalog, parsed once.
///
/// # Errors
/// [`PhysicsError::Catalog`] when the bundled file does not parse or holds
/// non-physical values.
pub fn radiator_catalog() -> PhysicsResult<&'static RadiatorCatalog> {
    static CATALOG: OnceLock<PhysicsResult<RadiatorCatalog>> = OnceLock::new();
    CATALOG.get_or_init(|| RadiatorCatalog::from_ron(CATALOG_TEXT)).as_ref().map_err(Clone::clone)
}

/// How a radiator's size is known.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub enum RadiatorSizing {
    /// An installed (or already chosen) radiator: checked against the load.
    Existing {
        /// Nominal output at 75/65/20 °C, W (from its EN 442 data).
        nominal_output_w: f64,
        /// Length, mm (for the water content).
        length_mm: u32,
    },
    /// To be sized by the design: the catalog length that delivers the load
    /// at the design temperatures.
    ToSize,
    /// A size the design chose, kept when the design was frozen for
    /// installation (installed mode): the size no longer follows the load,
    /// but the radiator is still given the design flow at the design
    /// temperature drop (its valve trims the excess), exactly as when it
    /// was sized — so freezing changes no flow. A load it cannot cover at
    /// the design temperatures shows as a shortfall.
    Chosen {
        /// Nominal output at 75/65/20 °C, W.
        nominal_output_w: f64,
        /// Length, mm.
        length_mm: u32,
    },
}

/// A radiator as a project stores it.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RadiatorSpec {
    /// Catalog type code ("22" …).
    pub type_code: String,
    /// Height, mm (one of the catalog heights).
    pub height_mm: u32,
    /// Existing or to size.
    pub sizing: RadiatorSizing,
    /// Exponent n overriding the catalog value (e.g. from the radiator's own
    /// EN 442 data).
    pub exponent_n: Option<f64>,
}

/// Sizing results of one radiator.
#[derive(Debug, Clone, PartialEq)]
pub struct RadiatorDesign {
    /// Nominal output needed at the design temperatures, W.
    pub required_nominal_w: f64,
    /// Nominal output of the radiator used (selected or existing), W.
    pub nominal_output_w: f64,
    /// Length used, mm.
    pub length_mm: u32,
    /// Exponent used.
    pub exponent_n: f64,
    /// False when sizing needed more than the longest catalog length (the
    /// longest is used and the outcome shows the shortfall).
    pub fits_catalog: bool,
}

impl RadiatorDesign {
    /// The radiator as an existing one on the wall (the sweep's retrofit
    /// question: checked against the load, its flow follows).
    #[must_use]
    pub fn existing_sizing(&self) -> RadiatorSizing {
        RadiatorSizing::Existing { nominal_output_w: self.nominal_output_w, length_mm: self.length_mm }
    }

    /// The sizing to store when the design is frozen (installed mode): the
    /// chosen size, with the design flow kept (see [`RadiatorSizing::Chosen`]).
    #[must_use]
    pub fn frozen_sizing(&self) -> RadiatorSizing {
        RadiatorSizing::Chosen { nominal_output_w: self.nominal_output_w, length_mm: self.length_mm }
    }
}

/// Design one radiator (see [`super::EmitterModel::design`]). A radiator to
/// size gets the shortest catalog length whose nominal output covers the
/// requirement and is given the design flow q_m = Φ/(c_p·(θs − θr)) at the
/// design Δθ (its thermostatic valve trims any excess); an existing radiator
/// is checked with [`return_temp_for_load`].
pub(super) fn design(spec: &RadiatorSpec, load_w: f64, temps: &DesignTemperatures) -> PhysicsResult<EmitterDesign> {
    let catalog = radiator_catalog()?;
    let rtype = catalog.find(&spec.type_code)?;
    let exponent_n = spec.exponent_n.unwrap_or(rtype.exponent_n);
    let required = required_nominal_w(load_w, exponent_n, temps.supply_c, temps.return_c, temps.room_c)?;
    let (nominal_output_w, length_mm, fits_catalog, outcome) = match spec.sizing {
        RadiatorSizing::Existing { nominal_output_w, length_mm } => {
            let rating = RadiatorRating::new(nominal_output_w, exponent_n)?;
            let outcome =
                rating.return_temp_for_load_min_drop(load_w, temps.supply_c, temps.room_c, temps.min_drop_k)?;
            (nominal_output_w, length_mm, true, outcome)
        }
        RadiatorSizing::Chosen { nominal_output_w, length_mm } => {
            let rating = RadiatorRating::new(nominal_output_w, exponent_n)?;
            // Covers the load (to rounding of the stored output): the design
            // flow at the design drop, as when it was sized.
            let covers = nominal_output_w >= required * (1.0 - 1e-9);
            let outcome = match design_drop_outcome(load_w, temps)? {
                Some(meets) if covers => meets,
                _ => rating.return_temp_for_load_min_drop(load_w, temps.supply_c, temps.room_c, temps.min_drop_k)?,
            };
            (nominal_output_w, length_mm, true, outcome)
        }
        RadiatorSizing::ToSize => {
            let w_per_m = rtype.nominal_w_per_m(spec.height_mm)?;
            let step = f64::from(catalog.length_step_mm);
            let steps = (required / w_per_m * 1000.0 / step).ceil();
            let wanted_mm = steps * step;
            let fits = wanted_mm <= f64::from(catalog.length_max_mm);
            let length_mm = if fits {
                // `wanted_mm` ≤ length_max_mm, a u32: the cast is exact.
                (wanted_mm as u32).max(catalog.length_min_mm)
            } else {
                catalog.length_max_mm
            };
            let nominal = w_per_m * f64::from(length_mm) * 1e-3;
            let rating = RadiatorRating::new(nominal, exponent_n)?;
            let outcome = match design_drop_outcome(load_w, temps)? {
                Some(meets) if fits => meets,
                _ => rating.return_temp_for_load_min_drop(load_w, temps.supply_c, temps.room_c, temps.min_drop_k)?,
            };
            (nominal, length_mm, fits, outcome)
        }
    };
    let rating = RadiatorRating::new(nominal_output_w, exponent_n)?;
    let mean_c = 0.5 * (temps.supply_c + outcome.return_c());
    let density = water::density_kg_m3(mean_c.max(water::MIN_TEMPERATURE_C))?;
    let installed = InstalledEmitter {
        characteristic: InstalledCharacteristic::Radiator(rating),
        body: BodyHydraulics::from_kv(rtype.body_kv_m3_h, density)?,
        water_content_l: rtype.water_content_l(spec.height_mm, length_mm)?,
    };
    let detail = RadiatorDesign { required_nominal_w: required, nominal_output_w, length_mm, exponent_n, fits_catalog };
    Ok(EmitterDesign { outcome, installed, detail: EmitterDetail::Radiator(detail) })
}

/// The load met at the design temperature drop: q_m = Φ/(c_p·(θs − θr)),
/// return at the design return (`None` when there is no drop).
fn design_drop_outcome(load_w: f64, temps: &DesignTemperatures) -> PhysicsResult<Option<CheckOutcome>> {
    let delta = temps.supply_c - temps.return_c;
    if delta <= 0.0 {
        return Ok(None);
    }
    let cp = water::mean_cp_j_kg_k(temps.supply_c, temps.return_c)?;
    Ok(Some(CheckOutcome::Meets { return_c: temps.return_c, mass_flow_kg_s: load_w / (cp * delta), output_w: load_w }))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::emitters::{EmitterModel, MIN_WATER_DELTA_K};

    #[test]
    fn nominal_lmtd_constant_matches_formula() {
        let l = lmtd_k(NOMINAL_SUPPLY_C, NOMINAL_RETURN_C, NOMINAL_ROOM_C).unwrap();
        assert!((l - NOMINAL_LMTD_K).abs() < 1e-12, "{l}");
        assert!((rating_w(1000.0, 1.3, 75.0, 65.0, 20.0).unwrap() - 1000.0).abs() < 1e-9);
    }

    #[test]
    fn rejects_non_physical_inputs() {
        assert!(matches!(rating_w(-5.0, 1.3, 75.0, 65.0, 20.0), Err(PhysicsError::NotPositive { .. })));
        assert!(matches!(rating_w(1000.0, 0.5, 75.0, 65.0, 20.0), Err(PhysicsError::OutOfRange { .. })));
        assert!(matches!(rating_w(1000.0, f64::NAN, 75.0, 65.0, 20.0), Err(PhysicsError::NotFinite { .. })));
        assert!(matches!(required_nominal_w(1000.0, 1.3, 55.0, 65.0, 20.0), Err(PhysicsError::Inconsistent(_))));
        assert!(matches!(required_nominal_w(-1.0, 1.3, 55.0, 45.0, 20.0), Err(PhysicsError::Negative { .. })));
        assert!(RadiatorRating::new(f64::INFINITY, 1.3).is_err());
    }

    #[test]
    fn check_meets_and_reproduces_load() {
        let rad = RadiatorRating::new(2000.0, 1.3).unwrap();
        let out = return_temp_for_load(&rad, 800.0, 55.0, 20.0).unwrap();
        assert!(out.meets_load());
        let back = rating_w(2000.0, 1.3, 55.0, out.return_c(), 20.0).unwrap();
        assert!((back - 800.0).abs() < 1e-6, "{back}");
    }

    #[test]
    fn check_reports_shortfall() {
        let rad = RadiatorRating::new(1000.0, 1.3).unwrap();
        let out = return_temp_for_load(&rad, 2000.0, 45.0, 20.0).unwrap();
        match out {
            CheckOutcome::Shortfall { return_c, output_w, shortfall_w, fraction_delivered, .. } => {
                assert!((return_c - (45.0 - MIN_WATER_DELTA_K)).abs() < 1e-12);
                assert!((output_w + shortfall_w - 2000.0).abs() < 1e-9);
                assert!(fraction_delivered > 0.0 && fraction_delivered < 1.0);
            }
            CheckOutcome::Meets { .. } => panic!("must fall short: {out:?}"),
        }
    }

    #[test]
    fn output_at_flow_is_monotone_and_bounded() {
        let rad = RadiatorRating::new(1500.0, 1.3).unwrap();
        let zero = output_at_flow(&rad, 0.0, 55.0, 20.0).unwrap();
        assert!(zero.output_w.abs() < f64::EPSILON && (zero.return_c - 20.0).abs() < f64::EPSILON);
        let cap = rad.output_w(35.0);
        let mut last = 0.0;
        for k in -12..=8 {
            let m = 10f64.powi(k);
            let o = output_at_flow(&rad, m, 55.0, 20.0).unwrap();
            assert!(o.output_w > last, "{m}: {o:?}");
            assert!(o.output_w < cap * (1.0 + 1e-9), "{m}: {o:?}");
            assert!(o.return_c >= 20.0 && o.return_c <= 55.0, "{o:?}");
            last = o.output_w;
        }
    }

    #[test]
    fn catalog_parses_and_sizes() {
        let cat = radiator_catalog().unwrap();
        assert_eq!(cat.types.len(), 6);
        let t22 = cat.find("22").unwrap();
        assert_eq!(cat.classify(t22), HeatReleaseClass::Convective);
        assert_eq!(cat.classify(cat.find("10").unwrap()), HeatReleaseClass::Radiant);
        assert!(matches!(cat.find("99"), Err(PhysicsError::NotFound(_))));
        assert!(t22.nominal_w_per_m(450).is_err());
        assert!(matches!(RadiatorCatalog::from_ron("(nonsense"), Err(PhysicsError::Catalog { .. })));

        let spec =
            RadiatorSpec { type_code: "22".into(), height_mm: 600, sizing: RadiatorSizing::ToSize, exponent_n: None };
        let temps = DesignTemperatures::new(55.0, 45.0, 20.0);
        let d = EmitterModel::Radiator(spec).design(1200.0, &temps).unwrap();
        let EmitterDetail::Radiator(r) = &d.detail else { panic!("radiator detail") };
        assert!(r.fits_catalog && r.nominal_output_w >= r.required_nominal_w);
        assert_eq!(r.length_mm % 100, 0);
        assert!(d.outcome.meets_load() && (d.outcome.return_c() - 45.0).abs() < 1e-12);
        assert!(d.installed.water_content_l > 0.0);
    }
}
