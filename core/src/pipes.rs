//! Pipe series catalogs: outside diameter, wall and roughness per size.
//!
//! One RON file per series lives in `assets/pipes/`; the files are embedded
//! in the binary with `include_str!` (nothing is read at run time) and parsed
//! once, on first use, into a [`PipeCatalog`]. A catalog file that does not
//! parse or holds non-physical data gives [`PhysicsError::Catalog`] — never a
//! panic.
//!
//! Series ids (`"steel-en10255-medium"`, `"steel-en10220-welded"`, `"copper-en1057"`, `"pex-iso15875"`,
//! `"pert-iso22391"`, `"multilayer-iso21003"`) are what project files store;
//! they are stable.
//!
//! Every size carries the source of its dimensions. Dimensions recalled from
//! memory rather than read from the standard say so in their source string.
//! Reference checks: `tests/tests/reference/friction.rs` (inner diameter and
//! water content of every size).

use std::f64::consts::PI;
use std::sync::OnceLock;

use serde::{Deserialize, Serialize};

use crate::error::{PhysicsError, PhysicsResult};

/// The pipe material (decides what the parts list calls the pipe and which
/// jointing applies; the hydraulics only need the roughness).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
pub enum PipeMaterial {
    /// Carbon steel tube (EN 10255, EN 10220).
    Steel,
    /// Copper tube (EN 1057).
    Copper,
    /// Cross-linked polyethylene (ISO 15875).
    PeX,
    /// Polyethylene of raised temperature resistance (ISO 22391).
    PeRt,
    /// Multilayer PE-X/Al/PE-X (ISO 21003).
    Multilayer,
}

impl PipeMaterial {
    /// Short name for tables and the parts list.
    #[must_use]
    pub fn label(self) -> &'static str {
        match self {
            Self::Steel => "steel",
            Self::Copper => "copper",
            Self::PeX => "PE-X",
            Self::PeRt => "PE-RT",
            Self::Multilayer => "PE-X/Al/PE-X",
        }
    }
}

/// One size of a pipe series.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PipeSize {
    /// Trade label: `"DN20"`, `"15x1"`, `"16x2"`.
    pub label: String,
    /// Outside diameter, mm.
    pub outer_diameter_mm: f64,
    /// Wall thickness, mm.
    pub wall_mm: f64,
    /// Where the dimensions come from.
    pub source: String,
}

impl PipeSize {
    /// Inner diameter, m: outside diameter − 2 · wall.
    #[must_use]
    pub fn inner_diameter_m(&self) -> f64 {
        (self.outer_diameter_mm - 2.0 * self.wall_mm) * 1e-3
    }

    /// Flow cross-section πd²/4, m².
    #[must_use]
    pub fn flow_area_m2(&self) -> f64 {
        let d = self.inner_diameter_m();
        0.25 * PI * d * d
    }

    /// Water content, litres per metre of pipe.
    #[must_use]
    pub fn water_content_l_per_m(&self) -> f64 {
        self.flow_area_m2() * 1000.0
    }

    /// Outside diameter, m.
    #[must_use]
    pub fn outer_diameter_m(&self) -> f64 {
        self.outer_diameter_mm * 1e-3
    }
}

/// A pipe series: one standard, one material, a list of sizes.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PipeSeries {
    /// Stable id used in project files, e.g. `"steel-en10255-medium"`.
    pub id: String,
    /// Display name.
    pub name: String,
    /// Standard the dimensions follow, e.g. `"EN 10255, series M"`.
    pub standard: String,
    /// Material.
    pub material: PipeMaterial,
    /// Absolute roughness of the bore, m.
    pub roughness_m: f64,
    /// Where the roughness comes from.
    pub roughness_source: String,
    /// Highest water temperature the series is offered for, °C.
    pub max_temperature_c: f64,
    /// Notes for the user (limits, assumptions).
    pub notes: String,
    /// Sizes, strictly increasing in inner diameter.
    pub sizes: Vec<PipeSize>,
}

impl PipeSeries {
    /// Parse and validate one series from RON text; `file` names it in errors.
    ///
    /// # Errors
    /// [`PhysicsError::Catalog`] when the text does not parse or the data is
    /// not physical (see [`PipeSeries::validate`]).
    pub fn from_ron(file: &str, text: &str) -> PhysicsResult<Self> {
        let series: Self = ron::from_str(text).map_err(|e| catalog_error(file, e.to_string()))?;
        series.validate(file)?;
        Ok(series)
    }

    /// Check the series: non-empty id, finite non-negative roughness, a
    /// plausible maximum temperature, at least one size, every size with a
    /// unique label, positive outside diameter and wall, wall < radius, and
    /// inner diameters strictly increasing in file order.
    ///
    /// # Errors
    /// [`PhysicsError::Catalog`] naming the file and the offending item.
    pub fn validate(&self, file: &str) -> PhysicsResult<()> {
        if self.id.trim().is_empty() {
            return Err(catalog_error(file, "series id is empty".to_owned()));
        }
        if !(self.roughness_m.is_finite() && self.roughness_m >= 0.0 && self.roughness_m < 0.01) {
            return Err(catalog_error(
                file,
                format!("roughness_m = {} m must be finite, ≥ 0 and below 0.01 m", self.roughness_m),
            ));
        }
        if !(self.max_temperature_c.is_finite() && (20.0..=200.0).contains(&self.max_temperature_c)) {
            return Err(catalog_error(
                file,
                format!("max_temperature_c = {} °C must lie in 20 to 200 °C", self.max_temperature_c),
            ));
        }
        if self.sizes.is_empty() {
            return Err(catalog_error(file, format!("series {} has no sizes", self.id)));
        }
        let mut last_inner_m = 0.0;
        for (i, size) in self.sizes.iter().enumerate() {
            if size.label.trim().is_empty() {
                return Err(catalog_error(file, format!("size #{} has an empty label", i + 1)));
            }
            if self.sizes[..i].iter().any(|s| s.label == size.label) {
                return Err(catalog_error(file, format!("size {} appears twice", size.label)));
            }
            let od = size.outer_diameter_mm;
            let wall = size.wall_mm;
            if !(od.is_finite() && od > 0.0 && wall.is_finite() && wall > 0.0) {
                return Err(catalog_error(
                    file,
                    format!("size {}: outer diameter {od} mm and wall {wall} mm must be finite and > 0", size.label),
                ));
            }
            if wall >= 0.5 * od {
                return Err(catalog_error(
                    file,
                    format!("size {}: wall {wall} mm must be less than the outside radius {} mm", size.label, 0.5 * od),
                ));
            }
            let inner_m = size.inner_diameter_m();
            if inner_m <= last_inner_m {
                return Err(catalog_error(
                    file,
                    format!(
                        "size {}: inner diameter {:.2} mm must be larger than the previous size's {:.2} mm (list sizes from small to large)",
                        size.label,
                        inner_m * 1e3,
                        last_inner_m * 1e3
                    ),
                ));
            }
            last_inner_m = inner_m;
        }
        Ok(())
    }

    /// The size with trade label `label`.
    ///
    /// # Errors
    /// [`PhysicsError::NotFound`] listing the labels of this series.
    pub fn size(&self, label: &str) -> PhysicsResult<&PipeSize> {
        self.sizes.iter().find(|s| s.label == label).ok_or_else(|| {
            let known: Vec<&str> = self.sizes.iter().map(|s| s.label.as_str()).collect();
            PhysicsError::NotFound(format!(
                "pipe size {label:?} is not in series {}; sizes: {}",
                self.id,
                known.join(", ")
            ))
        })
    }

    /// The smallest size whose inner diameter is at least
    /// `inner_diameter_m`, or `None` when even the largest is smaller.
    #[must_use]
    pub fn smallest_with_inner_diameter(&self, inner_diameter_m: f64) -> Option<&PipeSize> {
        self.sizes.iter().find(|s| s.inner_diameter_m() >= inner_diameter_m)
    }
}

/// All pipe series built into flowrise.
#[derive(Debug, Clone, PartialEq)]
pub struct PipeCatalog {
    series: Vec<PipeSeries>,
}

impl PipeCatalog {
    /// Parse a catalog from `(file name, RON text)` pairs, one series each.
    ///
    /// # Errors
    /// [`PhysicsError::Catalog`] when a file does not parse, is not physical,
    /// or repeats another file's series id.
    pub fn from_files(files: &[(&str, &str)]) -> PhysicsResult<Self> {
        let mut series: Vec<PipeSeries> = Vec::with_capacity(files.len());
        for (file, text) in files {
            let s = PipeSeries::from_ron(file, text)?;
            if series.iter().any(|other| other.id == s.id) {
                return Err(catalog_error(file, format!("series id {} is used twice", s.id)));
            }
            series.push(s);
        }
        Ok(Self { series })
    }

    /// Every series, in a fixed order (steel, welded steel, copper, PE-X, PE-RT,
    /// multilayer).
    #[must_use]
    pub fn series(&self) -> &[PipeSeries] {
        &self.series
    }

    /// The series with id `id`.
    ///
    /// # Errors
    /// [`PhysicsError::NotFound`] listing the known ids.
    pub fn find(&self, id: &str) -> PhysicsResult<&PipeSeries> {
        self.series.iter().find(|s| s.id == id).ok_or_else(|| {
            let known: Vec<&str> = self.series.iter().map(|s| s.id.as_str()).collect();
            PhysicsError::NotFound(format!("pipe series {id:?} is not known; known series: {}", known.join(", ")))
        })
    }
}

/// The embedded catalog files, `(file name, text)`.
pub const BUILTIN_FILES: [(&str, &str); 6] = [
    ("steel-en10255-medium.ron", include_str!("../../assets/pipes/steel-en10255-medium.ron")),
    ("steel-en10220-welded.ron", include_str!("../../assets/pipes/steel-en10220-welded.ron")),
    ("copper-en1057.ron", include_str!("../../assets/pipes/copper-en1057.ron")),
    ("pex-iso15875.ron", include_str!("../../assets/pipes/pex-iso15875.ron")),
    ("pert-iso22391.ron", include_str!("../../assets/pipes/pert-iso22391.ron")),
    ("multilayer-iso21003.ron", include_str!("../../assets/pipes/multilayer-iso21003.ron")),
];

/// The built-in catalog, parsed once on first use.
///
/// # Errors
/// [`PhysicsError::Catalog`] when an embedded file is bad (a build defect the
/// unit tests catch; returned, not panicked).
pub fn catalog() -> PhysicsResult<&'static PipeCatalog> {
    static CATALOG: OnceLock<PhysicsResult<PipeCatalog>> = OnceLock::new();
    CATALOG.get_or_init(|| PipeCatalog::from_files(&BUILTIN_FILES)).as_ref().map_err(Clone::clone)
}

/// Every built-in series.
///
/// # Errors
/// As [`catalog`].
pub fn builtin_series() -> PhysicsResult<&'static [PipeSeries]> {
    Ok(catalog()?.series())
}

/// The built-in series with id `id`.
///
/// # Errors
/// [`PhysicsError::NotFound`] for an unknown id; as [`catalog`].
pub fn find_series(id: &str) -> PhysicsResult<&'static PipeSeries> {
    catalog()?.find(id)
}

fn catalog_error(file: &str, message: String) -> PhysicsError {
    PhysicsError::Catalog { file: file.to_owned(), message }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_builtin_catalog_parses_and_is_ordered() {
        let cat = catalog().unwrap();
        assert_eq!(cat.series().len(), BUILTIN_FILES.len());
        for s in cat.series() {
            assert!(!s.sizes.is_empty(), "{}", s.id);
            let mut last = 0.0;
            for size in &s.sizes {
                let d = size.inner_diameter_m();
                assert!(d > last, "{} {} not increasing", s.id, size.label);
                assert!(size.wall_mm < 0.5 * size.outer_diameter_mm, "{} {}", s.id, size.label);
                assert!(!size.source.is_empty());
                last = d;
            }
            assert!(!s.roughness_source.is_empty());
        }
    }

    #[test]
    fn lookups_by_id_and_label() {
        let steel = find_series("steel-en10255-medium").unwrap();
        assert_eq!(steel.material, PipeMaterial::Steel);
        let dn20 = steel.size("DN20").unwrap();
        assert!((dn20.inner_diameter_m() - 0.0217).abs() < 1e-12);
        assert_eq!(steel.sizes.first().unwrap().label, "DN10");
        assert_eq!(steel.sizes.last().unwrap().label, "DN100");
        let welded = find_series("steel-en10220-welded").unwrap();
        assert_eq!(welded.material, PipeMaterial::Steel);
        assert_eq!(welded.sizes.last().unwrap().label, "DN800");
        // DN300: 323.9 − 2 × 5.6 = 312.7 mm.
        assert!((welded.size("DN300").unwrap().inner_diameter_m() - 0.3127).abs() < 1e-12);
        for id in ["copper-en1057", "pex-iso15875", "pert-iso22391", "multilayer-iso21003"] {
            assert!(find_series(id).is_ok(), "{id}");
        }
        assert!(matches!(find_series("brass-xyz"), Err(PhysicsError::NotFound(_))));
        let err = steel.size("DN17").unwrap_err();
        assert!(err.to_string().contains("DN15"), "{err}");
        assert_eq!(steel.smallest_with_inner_diameter(0.020).unwrap().label, "DN20");
        assert!(steel.smallest_with_inner_diameter(1.0).is_none());
    }

    #[test]
    fn water_content_of_a_16x2_pipe() {
        // d = 12 mm: π·0.012²/4·1000 = 0.1131 l/m.
        let s = find_series("pex-iso15875").unwrap().size("16x2").unwrap();
        assert!((s.water_content_l_per_m() - 0.113_097_3).abs() < 1e-6);
    }

    #[test]
    fn bad_catalog_files_are_errors_not_panics() {
        let good = BUILTIN_FILES.iter().find(|f| f.0 == "copper-en1057.ron").unwrap().1;
        assert!(matches!(PipeSeries::from_ron("x.ron", "(id: "), Err(PhysicsError::Catalog { .. })));
        let unordered = good.replace("outer_diameter_mm: 18.0", "outer_diameter_mm: 11.0");
        let e = PipeSeries::from_ron("x.ron", &unordered).unwrap_err();
        assert!(e.to_string().contains("18x1"), "{e}");
        let thick = good.replace("wall_mm: 2.0", "wall_mm: 27.0");
        assert!(matches!(PipeSeries::from_ron("x.ron", &thick), Err(PhysicsError::Catalog { .. })));
        let nan = good.replace("roughness_m: 0.0000015", "roughness_m: -1.0");
        assert!(matches!(PipeSeries::from_ron("x.ron", &nan), Err(PhysicsError::Catalog { .. })));
        let neg = good.replace("wall_mm: 1.0", "wall_mm: -1.0");
        assert!(matches!(PipeSeries::from_ron("x.ron", &neg), Err(PhysicsError::Catalog { .. })));
        let twice = PipeCatalog::from_files(&[("a.ron", good), ("b.ron", good)]);
        assert!(matches!(twice, Err(PhysicsError::Catalog { .. })));
    }
}
