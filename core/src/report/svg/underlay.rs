//! A level's plan underlay under the report's level plan: an image as an
//! embedded PNG (`data:` URI, at most [`REPORT_RASTER_SIDE_PX`] on its
//! longer side), a DXF drawing as SVG paths, clipped to the plan's frame.

use std::collections::BTreeMap;
use std::path::Path;

use super::PlanMap;
use crate::project::{LevelId, Project, Underlay};
use crate::report::esc;
use crate::underlay::{LoadedUnderlay, UnderlayContent, encode_png};

/// Longest side of an underlay picture in the report, pixels (the plan is
/// 720 px wide; twice that stays sharp when printed).
pub const REPORT_RASTER_SIDE_PX: u32 = 1600;

/// The underlays a report draws, read once per report: per level, the
/// file as read or why it could not be.
#[derive(Debug, Default)]
pub struct PlanUnderlays {
    /// Per level with a shown underlay.
    pub levels: BTreeMap<LevelId, Result<LoadedUnderlay, String>>,
}

impl PlanUnderlays {
    /// Read the shown underlay of every level of `p`; relative paths are
    /// read against `project_dir` (the project file's folder).
    #[must_use]
    pub fn read(p: &Project, project_dir: Option<&Path>) -> Self {
        let mut levels = BTreeMap::new();
        for l in &p.levels {
            if let Some(u) = l.underlay.as_ref().filter(|u| !u.hidden) {
                let got = crate::underlay::load_page(&u.resolve(project_dir), u.page).map_err(|e| e.message);
                levels.insert(l.id, got);
            }
        }
        Self { levels }
    }
}

/// Standard base64 (RFC 4648 §4) with padding.
#[must_use]
pub fn base64(bytes: &[u8]) -> String {
    const T: &[u8; 64] = b"ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/";
    let mut out = String::with_capacity(bytes.len().div_ceil(3) * 4);
    for chunk in bytes.chunks(3) {
        let b = [chunk[0], *chunk.get(1).unwrap_or(&0), *chunk.get(2).unwrap_or(&0)];
        let n = (u32::from(b[0]) << 16) | (u32::from(b[1]) << 8) | u32::from(b[2]);
        for k in 0..4 {
            if k <= chunk.len() {
                out.push(char::from(T[((n >> (18 - 6 * k)) & 63) as usize]));
            } else {
                out.push('=');
            }
        }
    }
    out
}

/// The underlay group (`<g class="underlay">`) of a plan whose frame is
/// `width × height` px, or an empty string.
pub(super) fn underlay_svg(
    u: &Underlay,
    loaded: &LoadedUnderlay,
    map: &PlanMap,
    frame: (f64, f64),
    id: LevelId,
) -> String {
    let [a, b, c, d, e, f] = u.affine();
    let s = map.scale;
    let mut out = String::new();
    w!(
        out,
        "<clipPath id=\"underlay-clip-{id}\"><rect x=\"1\" y=\"1\" width=\"{:.1}\" height=\"{:.1}\"/></clipPath>\
         <g class=\"underlay\" data-level=\"{id}\" clip-path=\"url(#underlay-clip-{id})\"><title>plan underlay {}</title>",
        frame.0 - 2.0,
        frame.1 - 2.0,
        esc(&u.path)
    );
    match &loaded.content {
        UnderlayContent::Raster(r) => {
            let Some(png) = encode_png(r, REPORT_RASTER_SIDE_PX, u.opacity) else { return String::new() };
            let [w, h] = r.size_units();
            let m = [
                s * a,
                -s * b,
                -s * c,
                s * d,
                map.offset_x + s * (c * h + e - map.min_x),
                map.margin + s * (map.max_y - d * h - f),
            ];
            w!(
                out,
                "<image x=\"0\" y=\"0\" width=\"{w:.3}\" height=\"{h:.3}\" preserveAspectRatio=\"none\" \
                 transform=\"matrix({:.6} {:.6} {:.6} {:.6} {:.2} {:.2})\" href=\"data:image/png;base64,{}\"/>",
                m[0],
                m[1],
                m[2],
                m[3],
                m[4],
                m[5],
                base64(&png)
            );
        }
        UnderlayContent::Vector(v) => {
            let to_px =
                |p: [f64; 2]| map.px(crate::project::PlanPoint::new(a * p[0] + c * p[1] + e, b * p[0] + d * p[1] + f));
            let inside = |q: (f64, f64)| q.0 >= -10.0 && q.1 >= -10.0 && q.0 <= frame.0 + 10.0 && q.1 <= frame.1 + 10.0;
            let mut path = String::new();
            for poly in v.polylines() {
                let pts: Vec<(f64, f64)> = poly.iter().map(|&p| to_px(p)).collect();
                if !pts.iter().any(|&q| inside(q)) && !crosses_frame(&pts, frame) {
                    continue;
                }
                let mut last: Option<(f64, f64)> = None;
                for (i, q) in pts.iter().enumerate() {
                    // Points a quarter pixel from the last one add nothing.
                    if i + 1 < pts.len() && last.is_some_and(|l| (l.0 - q.0).hypot(l.1 - q.1) < 0.25) {
                        continue;
                    }
                    w!(path, "{}{:.1} {:.1}", if last.is_none() { "M" } else { "L" }, q.0, q.1);
                    last = Some(*q);
                }
            }
            w!(
                out,
                "<path d=\"{path}\" fill=\"none\" stroke=\"#59606b\" stroke-width=\"0.7\" stroke-opacity=\"{:.2}\"/>",
                u.opacity
            );
            let k = u.m_per_unit * s;
            for t in &v.texts {
                let size = t.height * k;
                let q = to_px(t.at);
                if size < 3.0 || !inside(q) {
                    continue;
                }
                let angle = -(t.rotation_deg + u.rotation_deg);
                w!(
                    out,
                    "<text x=\"{:.1}\" y=\"{:.1}\" font-size=\"{size:.1}\" fill=\"#59606b\" fill-opacity=\"{:.2}\" \
                     transform=\"rotate({angle:.1} {:.1} {:.1})\">{}</text>",
                    q.0,
                    q.1,
                    u.opacity,
                    q.0,
                    q.1,
                    esc(&t.text)
                );
            }
        }
    }
    out.push_str("</g>");
    out
}

/// True when a polyline's bounding box overlaps the frame (a long wall
/// across the plan whose ends are both outside).
fn crosses_frame(pts: &[(f64, f64)], frame: (f64, f64)) -> bool {
    let (mut x0, mut y0, mut x1, mut y1) = (f64::INFINITY, f64::INFINITY, f64::NEG_INFINITY, f64::NEG_INFINITY);
    for &(x, y) in pts {
        x0 = x0.min(x);
        y0 = y0.min(y);
        x1 = x1.max(x);
        y1 = y1.max(y);
    }
    x1 >= 0.0 && y1 >= 0.0 && x0 <= frame.0 && y0 <= frame.1
}

#[cfg(test)]
mod tests {
    use super::base64;

    #[test]
    fn base64_matches_rfc_4648_test_vectors() {
        // RFC 4648 §10.
        for (plain, coded) in [
            ("", ""),
            ("f", "Zg=="),
            ("fo", "Zm8="),
            ("foo", "Zm9v"),
            ("foob", "Zm9vYg=="),
            ("fooba", "Zm9vYmE="),
            ("foobar", "Zm9vYmFy"),
        ] {
            assert_eq!(base64(plain.as_bytes()), coded);
        }
    }
}
