//! A level's plan underlay as the project stores it: which file, and where
//! it lies on the level's plan.
//!
//! The file itself (an image, a PDF page or a DXF drawing) is read by
//! [`crate::underlay`]; the project keeps only its path, relative to the
//! project file, and the placement. A missing file is never a load
//! failure: the window and the report say the underlay cannot be shown.
//!
//! Placement: a point `s` of the source (in its own units, y up — image
//! pixels counted from the lower-left corner, DXF drawing units) lies on the
//! plan at `origin + R(rotation) · (m_per_unit · s)`.

use std::path::{Component, Path, PathBuf};

use serde::{Deserialize, Serialize};

use super::PlanPoint;
use super::limits;

fn default_opacity() -> f64 {
    0.5
}

fn first_page() -> u32 {
    1
}

#[allow(clippy::trivially_copy_pass_by_ref)] // serde's skip_serializing_if passes a reference
fn is_first_page(p: &u32) -> bool {
    *p == 1
}

/// A plan drawing shown under a level's network.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Underlay {
    /// The file, relative to the project file's folder with `/` between
    /// folders (absolute while the project has no file of its own).
    pub path: String,
    /// Page of a PDF shown, counted from 1 (1 for other files; written to
    /// the file only when it is not 1).
    #[serde(default = "first_page", skip_serializing_if = "is_first_page")]
    pub page: u32,
    /// Metres per source unit: an image pixel (of a PDF page as rendered),
    /// a DXF drawing unit.
    pub m_per_unit: f64,
    /// Where the source's origin lies on the plan (an image's lower-left
    /// corner, a drawing's (0, 0)), m.
    pub origin: PlanPoint,
    /// Rotation about `origin`, degrees anticlockwise.
    #[serde(default)]
    pub rotation_deg: f64,
    /// 0 invisible … 1 opaque.
    #[serde(default = "default_opacity")]
    pub opacity: f64,
    /// Not drawn (kept in the project).
    #[serde(default)]
    pub hidden: bool,
    /// Placement cannot be changed until unlocked.
    #[serde(default)]
    pub locked: bool,
}

impl Underlay {
    /// A new underlay at the plan origin.
    #[must_use]
    pub fn new(path: impl Into<String>, m_per_unit: f64) -> Self {
        Self {
            path: path.into(),
            page: 1,
            m_per_unit,
            origin: PlanPoint::new(0.0, 0.0),
            rotation_deg: 0.0,
            opacity: default_opacity(),
            hidden: false,
            locked: false,
        }
    }

    /// Plan position of a source point (source units, y up).
    #[must_use]
    pub fn plan_from_source(&self, s: [f64; 2]) -> PlanPoint {
        let (sin, cos) = self.rotation_deg.to_radians().sin_cos();
        let (x, y) = (s[0] * self.m_per_unit, s[1] * self.m_per_unit);
        PlanPoint::new(self.origin.x_m + cos * x - sin * y, self.origin.y_m + sin * x + cos * y)
    }

    /// Source point (source units, y up) under a plan position.
    #[must_use]
    pub fn source_from_plan(&self, p: PlanPoint) -> [f64; 2] {
        let (sin, cos) = self.rotation_deg.to_radians().sin_cos();
        let (dx, dy) = (p.x_m - self.origin.x_m, p.y_m - self.origin.y_m);
        [(cos * dx + sin * dy) / self.m_per_unit, (-sin * dx + cos * dy) / self.m_per_unit]
    }

    /// The affine map source → plan as `[a, b, c, d, e, f]`:
    /// `x = a·sx + c·sy + e`, `y = b·sx + d·sy + f` (the SVG `matrix` order).
    #[must_use]
    pub fn affine(&self) -> [f64; 6] {
        let (sin, cos) = self.rotation_deg.to_radians().sin_cos();
        let k = self.m_per_unit;
        [cos * k, sin * k, -sin * k, cos * k, self.origin.x_m, self.origin.y_m]
    }

    /// The same underlay scaled so that the plan points `a` and `b` (points
    /// of the drawing as it lies now) come `distance_m` apart; `a` stays
    /// where it is.
    ///
    /// # Errors
    /// A message when the two points coincide or the distance or the new
    /// scale is out of range.
    pub fn scaled_to(&self, a: PlanPoint, b: PlanPoint, distance_m: f64) -> Result<Self, String> {
        if !(distance_m.is_finite() && distance_m > 0.0) {
            return Err(format!(
                "distance {distance_m} m — give the real distance between the two points in metres, more than 0"
            ));
        }
        let now = a.distance_m(b);
        if now.is_nan() || now <= 1e-9 {
            return Err("the two points are the same — click two different points of the plan".to_owned());
        }
        let fixed = self.source_from_plan(a);
        let mut out = self.clone();
        out.m_per_unit = self.m_per_unit * distance_m / now;
        limits::UNDERLAY_M_PER_UNIT.check(out.m_per_unit)?;
        // Keep `a` in place: move the origin by what the new scale moved it.
        let moved = out.plan_from_source(fixed);
        out.origin = PlanPoint::new(out.origin.x_m + a.x_m - moved.x_m, out.origin.y_m + a.y_m - moved.y_m);
        Ok(out)
    }

    /// The problems of this underlay, as "field: message" pairs.
    #[must_use]
    pub fn problems(&self) -> Vec<(&'static str, String)> {
        let mut out = Vec::new();
        if self.path.trim().is_empty() {
            out.push(("path", "the underlay names no file — choose the plan file again".to_owned()));
        }
        if let Some((_, c)) = self.path.chars().enumerate().find(|(_, c)| c.is_control()) {
            out.push(("path", format!("the file name holds a control character ({c:?}) — choose the file again")));
        }
        if self.page == 0 {
            out.push(("page", "page 0 — pages are counted from 1".to_owned()));
        }
        for (field, limit, v) in [
            ("m_per_unit", limits::UNDERLAY_M_PER_UNIT, self.m_per_unit),
            ("rotation_deg", limits::UNDERLAY_ROTATION_DEG, self.rotation_deg),
            ("opacity", limits::UNDERLAY_OPACITY, self.opacity),
            ("origin.x_m", limits::PLAN_COORDINATE_M, self.origin.x_m),
            ("origin.y_m", limits::PLAN_COORDINATE_M, self.origin.y_m),
        ] {
            if let Err(e) = limit.check(v) {
                out.push((field, e));
            }
        }
        out
    }

    /// The file on disk: `path` read against the project file's folder
    /// (`None` for a project without a file: then only an absolute path
    /// can be found).
    #[must_use]
    pub fn resolve(&self, project_dir: Option<&Path>) -> PathBuf {
        let p = Path::new(&self.path);
        match project_dir {
            Some(dir) if p.is_relative() => dir.join(p),
            _ => p.to_path_buf(),
        }
    }
}

/// `file` as the project stores it: relative to `project_dir` with `/`
/// between folders when both are absolute paths on the same root
/// (`../plans/ground.png`), else `file` as given.
#[must_use]
pub fn stored_path(file: &Path, project_dir: Option<&Path>) -> String {
    let rel = project_dir.and_then(|dir| relative_path(file, dir));
    let p = rel.unwrap_or_else(|| file.to_path_buf());
    let parts: Vec<String> = p.components().map(|c| c.as_os_str().to_string_lossy().into_owned()).collect();
    if p.is_absolute() { p.to_string_lossy().into_owned() } else { parts.join("/") }
}

/// `file` relative to `dir`; both must be absolute (and on the same drive).
fn relative_path(file: &Path, dir: &Path) -> Option<PathBuf> {
    if !(file.is_absolute() && dir.is_absolute()) {
        return None;
    }
    let (f, d) = (normalise(file), normalise(dir));
    // Different roots or drive prefixes: no relative path.
    if f.first() != d.first() {
        return None;
    }
    let common = f.iter().zip(&d).take_while(|(a, b)| a == b).count();
    if d[common..].iter().any(|c| matches!(c, Component::ParentDir)) {
        return None;
    }
    let mut out = PathBuf::new();
    for _ in common..d.len() {
        out.push("..");
    }
    for c in &f[common..] {
        out.push(c.as_os_str());
    }
    Some(out)
}

/// The components of `p` with `.` dropped and `a/..` folded (by name,
/// without asking the file system).
fn normalise(p: &Path) -> Vec<Component<'_>> {
    let mut out: Vec<Component<'_>> = Vec::new();
    for c in p.components() {
        match c {
            Component::CurDir => {}
            Component::ParentDir if matches!(out.last(), Some(Component::Normal(_))) => {
                out.pop();
            }
            _ => out.push(c),
        }
    }
    out
}

/// Rewrite every underlay path of `levels` for a project file moving from
/// `from_dir` to `to_dir` (Save as): each file stays the same file.
pub fn rebase_paths(levels: &mut [super::Level], from_dir: Option<&Path>, to_dir: &Path) {
    for l in levels {
        if let Some(u) = &mut l.underlay {
            let file = u.resolve(from_dir);
            u.path = stored_path(&file, Some(to_dir));
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn source_and_plan_round_trip_with_rotation() {
        let mut u = Underlay::new("a.png", 0.02);
        u.origin = PlanPoint::new(3.0, -4.0);
        u.rotation_deg = 30.0;
        let s = [120.0, 45.0];
        let back = u.source_from_plan(u.plan_from_source(s));
        assert!((back[0] - s[0]).abs() < 1e-9 && (back[1] - s[1]).abs() < 1e-9, "{back:?}");
        // A unit step along the source x axis is m_per_unit along 30°.
        let a = u.plan_from_source([0.0, 0.0]);
        let b = u.plan_from_source([1.0, 0.0]);
        assert!((a.distance_m(b) - 0.02).abs() < 1e-12);
        assert!(((b.y_m - a.y_m).atan2(b.x_m - a.x_m).to_degrees() - 30.0).abs() < 1e-9);
    }

    #[test]
    fn scaling_by_two_points_gives_the_distance_and_keeps_the_first() {
        let mut u = Underlay::new("a.dxf", 0.001);
        u.rotation_deg = -12.0;
        u.origin = PlanPoint::new(1.0, 2.0);
        let (a, b) = (PlanPoint::new(2.0, 2.5), PlanPoint::new(2.4, 2.8));
        let (sa, sb) = (u.source_from_plan(a), u.source_from_plan(b));
        let v = u.scaled_to(a, b, 7.5).unwrap();
        let (pa, pb) = (v.plan_from_source(sa), v.plan_from_source(sb));
        assert!((pa.distance_m(pb) - 7.5).abs() < 1e-9);
        assert!(pa.distance_m(a) < 1e-9);
        assert!(u.scaled_to(a, a, 3.0).is_err());
        assert!(u.scaled_to(a, b, 0.0).is_err());
        assert!(u.scaled_to(a, b, f64::NAN).is_err());
    }

    #[test]
    fn stored_paths_are_relative_to_the_project_folder() {
        let dir = Path::new("/home/a/jobs/rowan");
        assert_eq!(stored_path(Path::new("/home/a/jobs/rowan/plans/gf.png"), Some(dir)), "plans/gf.png");
        assert_eq!(stored_path(Path::new("/home/a/drawings/gf.dxf"), Some(dir)), "../../drawings/gf.dxf");
        assert_eq!(stored_path(Path::new("/home/a/x.pdf"), None), "/home/a/x.pdf");
        let u = Underlay::new("../../drawings/gf.dxf", 1.0);
        assert_eq!(u.resolve(Some(dir)), Path::new("/home/a/jobs/rowan/../../drawings/gf.dxf"));
        let mut levels = vec![super::super::Level {
            id: super::super::LevelId(0),
            name: "G".into(),
            elevation_m: 0.0,
            underlay: Some(Underlay::new("plans/gf.png", 0.01)),
        }];
        rebase_paths(&mut levels, Some(dir), Path::new("/home/a/jobs"));
        assert_eq!(levels[0].underlay.as_ref().unwrap().path, "rowan/plans/gf.png");
    }

    #[test]
    fn problems_name_the_field() {
        let mut u = Underlay::new("", f64::NAN);
        u.opacity = 2.0;
        let fields: Vec<_> = u.problems().into_iter().map(|(f, _)| f).collect();
        assert_eq!(fields, ["path", "m_per_unit", "opacity"]);
        assert!(Underlay::new("a.png", 0.01).problems().is_empty());
    }
}
