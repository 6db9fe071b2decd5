//! Valves through their flow coefficient Kv: pressure drop, presetting choice,
//! valve authority, and the demo valve catalog.
//!
//! # The Kv model
//! Kv (IEC 60534-1 / IEC 60534-2-1) is the flow of water at 5–40 °C, in
//! m³/h, that passes the valve with a differential pressure of 1 bar. For
//! another liquid density the same valve gives
//!
//! Δp [bar] = (Q [m³/h] / Kv)² · ρ / ρ₀,   ρ₀ = 1000 kg/m³.
//!
//! In mass-flow form (Q = 3600·m/ρ, m in kg/s) this is Δp_Pa = r · m·|m| with
//! r = 10⁵ · 3600² / (ρ₀ · ρ · Kv²) — see [`resistance_r_pa_s2_kg2`].
//! Resistances in series add, so 1/Kv² adds ([`series_kv`]).
//!
//! # The catalog
//! Valve families live in RON files under `assets/valves/`, embedded at build
//! time. **They are illustrative demo data** — invented, not any product's
//! data, and never used as check values. A user replaces them with the data of
//! the valve they install; [`parse_valve_catalog`] loads such a file with the
//! same validation.
//!
//! # Presetting
//! [`choose_setting`] picks the setting whose Kv is nearest the needed Kv in
//! log space (see [`SettingRule`] for the rule and the alternative).
//! [`kv_at_continuous_setting`] interpolates log-linearly between steps.
//!
//! Reference checks: `tests/tests/reference/valves_pump_vessel.rs` (Kv
//! definition; Kv → Δp against the Python library `fluids` 1.3.1).

use std::sync::OnceLock;

use serde::{Deserialize, Serialize};

use crate::error::{PhysicsError, PhysicsResult, check};

/// Reference density of the Kv definition, kg/m³ (IEC 60534: water at
/// 5–40 °C, taken as 1000 kg/m³).
pub const RHO_REF_KG_M3: f64 = 1000.0;

/// Pascals per bar.
pub const PA_PER_BAR: f64 = 100_000.0;

/// Valve authority below which flowrise warns. Common practice (no source):
/// balancing guidance asks for an authority of 0.3 to 0.5 or more so that a
/// control valve still controls; 0.3 is the lower end of that range.
pub const AUTHORITY_WARN_BELOW: f64 = 0.3;

/// Largest Kv accepted by the Kv functions, m³/h (beyond any valve in a
/// building heating network; guards against unit slips).
const KV_MAX_M3_H: f64 = 10_000.0;

/// Density range accepted for the working fluid, kg/m³ (water and
/// water–glycol mixtures in heating systems).
const DENSITY_RANGE_KG_M3: (f64, f64) = (800.0, 1200.0);

fn check_kv(kv_m3_h: f64) -> PhysicsResult<f64> {
    check::positive("valve Kv", kv_m3_h, "m³/h")?;
    check::in_range("valve Kv", kv_m3_h, "m³/h", 0.0, KV_MAX_M3_H)
}

fn check_density(density_kg_m3: f64) -> PhysicsResult<f64> {
    check::in_range("water density", density_kg_m3, "kg/m³", DENSITY_RANGE_KG_M3.0, DENSITY_RANGE_KG_M3.1)
}

/// Pressure drop across a valve of flow coefficient `kv_m3_h` passing
/// `flow_m3_h` of a liquid of density `density_kg_m3`, Pa:
/// Δp = 10⁵ · (Q/Kv)² · ρ/ρ₀ (IEC 60534 definition of Kv).
///
/// # Errors
/// [`PhysicsError`] when the flow is negative or not finite, Kv is not
/// positive, or the density is outside 800–1200 kg/m³.
pub fn dp_pa_from_kv(flow_m3_h: f64, kv_m3_h: f64, density_kg_m3: f64) -> PhysicsResult<f64> {
    check::non_negative("volume flow", flow_m3_h, "m³/h")?;
    check_kv(kv_m3_h)?;
    check_density(density_kg_m3)?;
    let ratio = flow_m3_h / kv_m3_h;
    Ok(PA_PER_BAR * ratio * ratio * density_kg_m3 / RHO_REF_KG_M3)
}

/// Kv a valve must have to pass `flow_m3_h` with a pressure drop `dp_pa`,
/// m³/h: Kv = Q · √(10⁵/Δp · ρ/ρ₀).
///
/// # Errors
/// [`PhysicsError`] when the flow or the pressure drop is not positive, or
/// the density is out of range.
pub fn kv_needed(flow_m3_h: f64, dp_pa: f64, density_kg_m3: f64) -> PhysicsResult<f64> {
    check::positive("volume flow", flow_m3_h, "m³/h")?;
    check::positive("valve pressure drop", dp_pa, "Pa")?;
    check_density(density_kg_m3)?;
    Ok(flow_m3_h * (PA_PER_BAR / dp_pa * density_kg_m3 / RHO_REF_KG_M3).sqrt())
}

/// Flow through a valve of flow coefficient `kv_m3_h` under a pressure drop
/// `dp_pa`, m³/h: Q = Kv · √(Δp/10⁵ · ρ₀/ρ).
///
/// # Errors
/// [`PhysicsError`] when Kv is not positive, the pressure drop is negative,
/// or the density is out of range.
pub fn flow_m3_h(kv_m3_h: f64, dp_pa: f64, density_kg_m3: f64) -> PhysicsResult<f64> {
    check_kv(kv_m3_h)?;
    check::non_negative("valve pressure drop", dp_pa, "Pa")?;
    check_density(density_kg_m3)?;
    Ok(kv_m3_h * (dp_pa / PA_PER_BAR * RHO_REF_KG_M3 / density_kg_m3).sqrt())
}

/// Link resistance of a valve for the network solver, Pa·s²/kg², such that
/// Δp_Pa = r · m·|m| with the mass flow m in kg/s.
///
/// Derivation: Q[m³/h] = 3600·m/ρ, so Δp = 10⁵·(3600·m/(ρ·Kv))²·ρ/ρ₀
/// = 10⁵·3600²/(ρ₀·ρ·Kv²) · m².
///
/// # Errors
/// [`PhysicsError`] when Kv is not positive or the density is out of range.
pub fn resistance_r_pa_s2_kg2(kv_m3_h: f64, density_kg_m3: f64) -> PhysicsResult<f64> {
    check_kv(kv_m3_h)?;
    check_density(density_kg_m3)?;
    Ok(PA_PER_BAR * 3600.0 * 3600.0 / (RHO_REF_KG_M3 * density_kg_m3 * kv_m3_h * kv_m3_h))
}

/// Combined Kv of valves in series (e.g. valve body + presetting insert +
/// lockshield), m³/h: 1/Kv² = Σ 1/Kvᵢ², because the pressure drops add at
/// the same flow.
///
/// # Errors
/// [`PhysicsError`] when the list is empty or any Kv is not positive.
pub fn series_kv(kvs_m3_h: &[f64]) -> PhysicsResult<f64> {
    if kvs_m3_h.is_empty() {
        return Err(PhysicsError::Inconsistent("series Kv needs at least one valve Kv; the list is empty".to_owned()));
    }
    let mut sum = 0.0;
    for &kv in kvs_m3_h {
        check_kv(kv)?;
        sum += 1.0 / (kv * kv);
    }
    Ok(1.0 / sum.sqrt())
}

/// Combined Kv of valves in parallel, m³/h: Kv = Σ Kvᵢ (the flows add at the
/// same pressure drop).
///
/// # Errors
/// [`PhysicsError`] when the list is empty or any Kv is not positive.
pub fn parallel_kv(kvs_m3_h: &[f64]) -> PhysicsResult<f64> {
    if kvs_m3_h.is_empty() {
        return Err(PhysicsError::Inconsistent(
            "parallel Kv needs at least one valve Kv; the list is empty".to_owned(),
        ));
    }
    let mut sum = 0.0;
    for &kv in kvs_m3_h {
        sum += check_kv(kv)?;
    }
    Ok(sum)
}

// ---------------------------------------------------------------------------
// Valve authority
// ---------------------------------------------------------------------------

/// Valve authority a = Δp_valve / Δp_available, dimensionless, 0 < a ≤ 1.
///
/// Definition used (as in common balancing literature — recalled from
/// memory, not verified against a particular document): `dp_valve_pa` is the
/// pressure drop across the control valve at design flow at its design
/// opening (for a thermostatic valve: at its presetting and the 2 K
/// proportional band); `dp_available_pa` is the differential pressure across
/// the valve when it is closed, which with a constant differential pressure
/// across the controlled circuit equals Δp_valve + Δp_rest of the circuit at
/// design flow. A low authority means the valve has to close far before the
/// flow changes much; flowrise warns below [`AUTHORITY_WARN_BELOW`].
///
/// # Errors
/// [`PhysicsError`] when either pressure is not positive, or the valve's
/// pressure drop exceeds the available pressure.
pub fn authority(dp_valve_pa: f64, dp_available_pa: f64) -> PhysicsResult<f64> {
    check::positive("valve pressure drop", dp_valve_pa, "Pa")?;
    check::positive("available differential pressure", dp_available_pa, "Pa")?;
    if dp_valve_pa > dp_available_pa * (1.0 + 1e-12) {
        return Err(PhysicsError::Inconsistent(format!(
            "valve pressure drop {dp_valve_pa} Pa exceeds the available differential pressure \
             {dp_available_pa} Pa; the valve's share cannot be larger than the whole"
        )));
    }
    Ok((dp_valve_pa / dp_available_pa).min(1.0))
}

// ---------------------------------------------------------------------------
// Catalog
// ---------------------------------------------------------------------------

/// What a valve family is used for.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
pub enum ValveKind {
    /// Thermostatic radiator valve with presetting (supply side).
    ThermostaticRadiator,
    /// Manual radiator valve, possibly with presetting (supply side).
    ManualRadiator,
    /// Lockshield on an emitter's return, set in turns open.
    Lockshield,
    /// Balancing valve on a branch or riser, set with a handwheel.
    Balancing,
}

/// One presetting of a valve family.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ValveSetting {
    /// Label as marked on the valve ("1", "2", "N", turns "1.5" …).
    pub label: String,
    /// Kv at this setting, m³/h (for a thermostatic valve at the 2 K
    /// proportional band).
    pub kv_m3_h: f64,
}

/// A family of valves sharing a body and a presetting table.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ValveFamily {
    /// Stable identifier used by project files.
    pub id: String,
    /// Display name.
    pub name: String,
    /// What the valve is for.
    pub kind: ValveKind,
    /// Nominal connection size DN.
    pub connection_dn: u16,
    /// Settings from most closed to most open; Kv strictly increasing.
    pub settings: Vec<ValveSetting>,
    /// Kv fully open (no thermostatic head, presetting open), m³/h.
    pub kvs_fully_open: f64,
    /// Provenance note ("illustrative — replace with the data of the valve
    /// you install; user-editable" for the shipped demo data).
    pub note: String,
}

/// Layout of a valve catalog RON file.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ValveCatalog {
    /// Provenance note of the whole file.
    pub note: String,
    /// The families in the file.
    pub families: Vec<ValveFamily>,
}

/// The embedded demo catalog files: (file name, contents).
const CATALOG_FILES: [(&str, &str); 4] = [
    ("assets/valves/thermostatic.ron", include_str!("../../assets/valves/thermostatic.ron")),
    ("assets/valves/manual.ron", include_str!("../../assets/valves/manual.ron")),
    ("assets/valves/lockshield.ron", include_str!("../../assets/valves/lockshield.ron")),
    ("assets/valves/balancing.ron", include_str!("../../assets/valves/balancing.ron")),
];

fn catalog_error(file: &str, message: String) -> PhysicsError {
    PhysicsError::Catalog { file: file.to_owned(), message }
}

fn validate_family(file: &str, family: &ValveFamily) -> PhysicsResult<()> {
    let id = &family.id;
    if id.trim().is_empty() {
        return Err(catalog_error(file, "a valve family has an empty id".to_owned()));
    }
    if family.settings.is_empty() {
        return Err(catalog_error(file, format!("valve family '{id}' has no settings")));
    }
    let mut last = 0.0_f64;
    for s in &family.settings {
        if !(s.kv_m3_h.is_finite() && s.kv_m3_h > 0.0 && s.kv_m3_h <= KV_MAX_M3_H) {
            return Err(catalog_error(
                file,
                format!("valve family '{id}', setting '{}': Kv = {} m³/h must be positive", s.label, s.kv_m3_h),
            ));
        }
        if s.kv_m3_h <= last {
            return Err(catalog_error(
                file,
                format!(
                    "valve family '{id}', setting '{}': Kv = {} m³/h must be larger than the previous \
                     setting's {last} m³/h (settings go from closed to open)",
                    s.label, s.kv_m3_h
                ),
            ));
        }
        last = s.kv_m3_h;
    }
    if !(family.kvs_fully_open.is_finite() && family.kvs_fully_open >= last) {
        return Err(catalog_error(
            file,
            format!(
                "valve family '{id}': kvs_fully_open = {} m³/h must be at least the largest setting's Kv {last} m³/h",
                family.kvs_fully_open
            ),
        ));
    }
    Ok(())
}

/// Parses and validates a valve catalog RON file (`file` names it in error
/// messages). Use this to load a user's own catalog with the same rules as
/// the demo data: every family has at least one setting, Kv positive and
/// strictly increasing from closed to open, Kvs ≥ the largest setting, ids
/// unique within the file.
///
/// # Errors
/// [`PhysicsError::Catalog`] on a syntax error or a rule broken.
pub fn parse_valve_catalog(file: &str, text: &str) -> PhysicsResult<Vec<ValveFamily>> {
    let catalog: ValveCatalog = ron::from_str(text).map_err(|e| catalog_error(file, e.to_string()))?;
    let mut ids: Vec<&str> = Vec::new();
    for family in &catalog.families {
        validate_family(file, family)?;
        if ids.contains(&family.id.as_str()) {
            return Err(catalog_error(file, format!("valve family id '{}' appears twice", family.id)));
        }
        ids.push(&family.id);
    }
    Ok(catalog.families)
}

fn load_embedded() -> PhysicsResult<Vec<ValveFamily>> {
    let mut all: Vec<ValveFamily> = Vec::new();
    for (file, text) in CATALOG_FILES {
        for family in parse_valve_catalog(file, text)? {
            if all.iter().any(|f| f.id == family.id) {
                return Err(catalog_error(file, format!("valve family id '{}' appears twice", family.id)));
            }
            all.push(family);
        }
    }
    Ok(all)
}

/// All valve families of the embedded demo catalog (parsed once).
///
/// # Errors
/// [`PhysicsError::Catalog`] when an embedded file is malformed.
pub fn valve_families() -> PhysicsResult<&'static [ValveFamily]> {
    static CATALOG: OnceLock<PhysicsResult<Vec<ValveFamily>>> = OnceLock::new();
    match CATALOG.get_or_init(load_embedded) {
        Ok(families) => Ok(families.as_slice()),
        Err(e) => Err(e.clone()),
    }
}

/// The demo-catalog valve family with id `id`.
///
/// # Errors
/// [`PhysicsError::NotFound`] for an unknown id; [`PhysicsError::Catalog`]
/// when the catalog is malformed.
pub fn valve_family(id: &str) -> PhysicsResult<&'static ValveFamily> {
    valve_families()?
        .iter()
        .find(|f| f.id == id)
        .ok_or_else(|| PhysicsError::NotFound(format!("no valve family with id '{id}' in the valve catalog")))
}

/// The demo-catalog valve families of one kind, in catalog order.
///
/// # Errors
/// [`PhysicsError::Catalog`] when the catalog is malformed.
pub fn families_of_kind(kind: ValveKind) -> PhysicsResult<Vec<&'static ValveFamily>> {
    Ok(valve_families()?.iter().filter(|f| f.kind == kind).collect())
}

// ---------------------------------------------------------------------------
// Presetting choice
// ---------------------------------------------------------------------------

/// How a presetting is chosen from a family's discrete settings.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
pub enum SettingRule {
    /// The setting whose Kv is nearest the needed Kv in log space, i.e. the
    /// smallest |ln(Kv/Kv_needed)|. Because the flow error at a fixed valve
    /// Δp is the Kv ratio, this minimises the relative flow error either way
    /// — what a practitioner does when reading "the nearest mark" off a
    /// presetting table. Flowrise's default.
    #[default]
    NearestLog,
    /// The smallest setting with Kv ≥ Kv_needed: never under-supplies the
    /// room, at the cost of larger over-flow on coarse tables.
    NextLarger,
}

/// Where the needed Kv lies relative to the family's table.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub enum SettingFit {
    /// Between the smallest and the largest setting.
    InRange,
    /// Larger than the largest setting: the largest is returned and the
    /// circuit will get less than its design flow (choose a larger valve or
    /// raise the pump head).
    AboveLargest,
    /// Smaller than the smallest setting: the smallest is returned and the
    /// circuit will get more than its design flow (the valve cannot throttle
    /// enough; add resistance elsewhere, e.g. the lockshield).
    BelowSmallest,
}

/// The chosen presetting and its residual error.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SettingChoice {
    /// Index into the family's settings.
    pub index: usize,
    /// Label of the chosen setting.
    pub label: String,
    /// Kv of the chosen setting, m³/h.
    pub kv_m3_h: f64,
    /// Kv that was needed, m³/h.
    pub kv_needed_m3_h: f64,
    /// Kv_chosen / Kv_needed.
    pub kv_ratio: f64,
    /// Flow error with the same Δp across the valve, fraction (positive =
    /// more flow than designed): Q/Q_design − 1 = Kv_chosen/Kv_needed − 1.
    /// This is the worst case; with the rest of the circuit in series the
    /// error is smaller — see [`SettingChoice::flow_error_fraction_in_circuit`].
    pub flow_error_fraction_at_same_dp: f64,
    /// Where the needed Kv lies relative to the table.
    pub fit: SettingFit,
}

impl SettingChoice {
    /// Flow error with the rest of the circuit in series, fraction (positive
    /// = more flow than designed), given the design pressure drops of the
    /// valve and of the rest of the circuit. See [`flow_ratio_in_circuit`].
    ///
    /// # Errors
    /// As [`flow_ratio_in_circuit`].
    pub fn flow_error_fraction_in_circuit(
        &self,
        dp_valve_design_pa: f64,
        dp_rest_design_pa: f64,
    ) -> PhysicsResult<f64> {
        Ok(flow_ratio_in_circuit(self.kv_m3_h, self.kv_needed_m3_h, dp_valve_design_pa, dp_rest_design_pa)? - 1.0)
    }
}

/// Chooses the presetting for `kv_needed_m3_h` with the default rule
/// [`SettingRule::NearestLog`].
///
/// # Errors
/// As [`choose_setting_with`].
pub fn choose_setting(family: &ValveFamily, kv_needed_m3_h: f64) -> PhysicsResult<SettingChoice> {
    choose_setting_with(family, kv_needed_m3_h, SettingRule::NearestLog)
}

/// Chooses the presetting for `kv_needed_m3_h` by `rule`. A needed Kv
/// outside the table is not an error: the nearest end of the table is
/// returned and [`SettingChoice::fit`] says which end.
///
/// # Errors
/// [`PhysicsError`] when the needed Kv is not positive, or the family has no
/// settings or a non-positive Kv.
pub fn choose_setting_with(
    family: &ValveFamily,
    kv_needed_m3_h: f64,
    rule: SettingRule,
) -> PhysicsResult<SettingChoice> {
    check_kv(kv_needed_m3_h)?;
    validate_family("(valve family given)", family)?;
    let settings = &family.settings;
    let last = settings.len() - 1;
    let (index, fit) = if kv_needed_m3_h > settings[last].kv_m3_h {
        (last, SettingFit::AboveLargest)
    } else if kv_needed_m3_h < settings[0].kv_m3_h {
        (0, SettingFit::BelowSmallest)
    } else {
        // Smallest setting with Kv ≥ needed; exists because needed ≤ largest.
        let upper = settings.iter().position(|s| s.kv_m3_h >= kv_needed_m3_h).unwrap_or(last);
        let index = match rule {
            SettingRule::NextLarger => upper,
            SettingRule::NearestLog if upper > 0 => {
                let up = (settings[upper].kv_m3_h / kv_needed_m3_h).ln();
                let down = (kv_needed_m3_h / settings[upper - 1].kv_m3_h).ln();
                if down < up { upper - 1 } else { upper }
            }
            SettingRule::NearestLog => upper,
        };
        (index, SettingFit::InRange)
    };
    let chosen = &settings[index];
    let kv_ratio = chosen.kv_m3_h / kv_needed_m3_h;
    Ok(SettingChoice {
        index,
        label: chosen.label.clone(),
        kv_m3_h: chosen.kv_m3_h,
        kv_needed_m3_h,
        kv_ratio,
        flow_error_fraction_at_same_dp: kv_ratio - 1.0,
        fit,
    })
}

/// Ratio of actual to design flow, Q/Q_design, when a valve set to
/// `kv_chosen_m3_h` instead of `kv_needed_m3_h` sits in series with the rest
/// of a circuit, the differential pressure across the whole circuit being
/// held at its design value Δp_avail = Δp_valve,design + Δp_rest,design.
///
/// With all resistances quadratic in the flow:
/// Δp_avail = (Q/Q_d)² · (Δp_valve,design · (Kv_needed/Kv_chosen)² + Δp_rest,design), so
///
/// Q/Q_d = √( Δp_avail / (Δp_valve,design·(Kv_needed/Kv_chosen)² + Δp_rest,design) ).
///
/// With Δp_rest = 0 this is Kv_chosen/Kv_needed; the rest of the circuit
/// always pulls the ratio toward 1.
///
/// # Errors
/// [`PhysicsError`] when a Kv or the valve's design pressure drop is not
/// positive, or the rest's pressure drop is negative.
pub fn flow_ratio_in_circuit(
    kv_chosen_m3_h: f64,
    kv_needed_m3_h: f64,
    dp_valve_design_pa: f64,
    dp_rest_design_pa: f64,
) -> PhysicsResult<f64> {
    check_kv(kv_chosen_m3_h)?;
    check_kv(kv_needed_m3_h)?;
    check::positive("valve design pressure drop", dp_valve_design_pa, "Pa")?;
    check::non_negative("rest-of-circuit design pressure drop", dp_rest_design_pa, "Pa")?;
    let dp_avail = dp_valve_design_pa + dp_rest_design_pa;
    let k = kv_needed_m3_h / kv_chosen_m3_h;
    Ok((dp_avail / (dp_valve_design_pa * k * k + dp_rest_design_pa)).sqrt())
}

mod trim;
pub use trim::{TrimChoice, TrimFit, TrimNeed, choose_trim, choose_trim_with};

// ---------------------------------------------------------------------------
// Continuous presetting
// ---------------------------------------------------------------------------

/// Kv at a continuous presetting position, m³/h. `position` runs over the
/// setting indices: 0.0 is the first (most closed) setting, `n − 1` the last;
/// between two steps ln Kv is interpolated linearly (steps of presetting
/// tables are close to geometric, so log-linear follows them best).
///
/// # Errors
/// [`PhysicsError`] when `position` is not finite or outside 0..=n−1, or the
/// family is invalid.
pub fn kv_at_continuous_setting(family: &ValveFamily, position: f64) -> PhysicsResult<f64> {
    validate_family("(valve family given)", family)?;
    let settings = &family.settings;
    let last = (settings.len() - 1) as f64;
    check::in_range("presetting position", position, "(setting index)", 0.0, last)?;
    let i = (position.floor() as usize).min(settings.len().saturating_sub(2));
    if settings.len() == 1 {
        return Ok(settings[0].kv_m3_h);
    }
    let f = position - i as f64;
    let (a, b) = (settings[i].kv_m3_h.ln(), settings[i + 1].kv_m3_h.ln());
    Ok((a + f * (b - a)).exp())
}

/// Inverse of [`kv_at_continuous_setting`]: the continuous position that
/// gives `kv_m3_h`.
///
/// # Errors
/// [`PhysicsError::OutOfRange`] when the Kv lies outside the family's table;
/// [`PhysicsError`] when the Kv is not positive or the family is invalid.
pub fn continuous_setting_for_kv(family: &ValveFamily, kv_m3_h: f64) -> PhysicsResult<f64> {
    check_kv(kv_m3_h)?;
    validate_family("(valve family given)", family)?;
    let settings = &family.settings;
    let (lo, hi) = (settings[0].kv_m3_h, settings[settings.len() - 1].kv_m3_h);
    check::in_range("valve Kv for presetting", kv_m3_h, "m³/h", lo, hi)?;
    if settings.len() == 1 {
        return Ok(0.0);
    }
    let upper = settings.iter().position(|s| s.kv_m3_h >= kv_m3_h).unwrap_or(settings.len() - 1).max(1);
    let (a, b) = (settings[upper - 1].kv_m3_h.ln(), settings[upper].kv_m3_h.ln());
    Ok((upper - 1) as f64 + (kv_m3_h.ln() - a) / (b - a))
}

#[cfg(test)]
mod tests;
