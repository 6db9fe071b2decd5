//! DXF drawings (the `dxf` crate) as polylines and texts.
//!
//! Drawn: LINE, LWPOLYLINE and POLYLINE (bulges as arcs), ARC, CIRCLE,
//! TEXT and MTEXT of the model space. Not drawn: block references
//! (INSERT), hatches, dimensions, splines, images — they are counted but
//! left out. Arcs become chords of at most [`ARC_STEP_DEG`].
//!
//! Before parsing, [`count_dxf_entities`] reads the text once and counts
//! the records of the ENTITIES and BLOCKS sections: a drawing with more
//! than [`MAX_DXF_ENTITIES`] is refused with a message (parsing 10^6
//! entities would take the `dxf` crate minutes and gigabytes).

use std::io::{BufRead, BufReader, Read};
use std::path::Path;

use super::{DrawingText, UnderlayError, VectorDrawing, fail, io_fail};

/// Most entities (ENTITIES + BLOCKS records) a DXF underlay may have. A
/// floor plan exported alone has a few thousand to some tens of thousands;
/// a 5 MB plan about 50,000.
pub const MAX_DXF_ENTITIES: usize = 250_000;

/// Largest binary DXF read (its entities are counted only after parsing).
const MAX_BINARY_DXF_BYTES: u64 = 64 * 1024 * 1024;

/// Largest angle one chord of an arc stands for, degrees.
pub const ARC_STEP_DEG: f64 = 6.0;

/// The records of the ENTITIES and BLOCKS sections of an ASCII DXF, read
/// as group-code/value line pairs; `None` for a binary DXF. Stops counting
/// past `stop_after`.
///
/// # Errors
/// Reading the file failed.
pub fn count_dxf_entities(reader: impl Read, stop_after: usize) -> std::io::Result<Option<usize>> {
    let mut r = BufReader::with_capacity(1 << 16, reader);
    let mut code = String::new();
    let mut value = String::new();
    let mut first = true;
    let mut in_section = false;
    let mut expect_name = false;
    let mut count = 0usize;
    loop {
        code.clear();
        value.clear();
        if r.read_line(&mut code)? == 0 || r.read_line(&mut value)? == 0 {
            return Ok(Some(count));
        }
        if first {
            if code.starts_with("AutoCAD Binary DXF") {
                return Ok(None);
            }
            first = false;
        }
        let (c, v) = (code.trim(), value.trim());
        if expect_name && c == "2" {
            in_section = v == "ENTITIES" || v == "BLOCKS";
            expect_name = false;
            continue;
        }
        if c != "0" {
            continue;
        }
        match v {
            "SECTION" => expect_name = true,
            "ENDSEC" => in_section = false,
            "EOF" => return Ok(Some(count)),
            _ if in_section => {
                count += 1;
                if count > stop_after {
                    return Ok(Some(count));
                }
            }
            _ => {}
        }
    }
}

fn too_many(path: &Path, n: usize) -> UnderlayError {
    fail(
        path,
        format!(
            "holds more than {MAX_DXF_ENTITIES} drawing entities ({n}{} counted); flowrise draws at most {MAX_DXF_ENTITIES} — \
             export only the floor plan (its walls, doors and room names) or a simplified copy",
            if n > MAX_DXF_ENTITIES { "+" } else { "" }
        ),
    )
}

/// Metres per drawing unit for a `$INSUNITS` value (AutoCAD's unit codes).
fn m_per_unit(u: dxf::enums::Units) -> Option<f64> {
    use dxf::enums::Units;
    Some(match u {
        Units::Millimeters => 0.001,
        Units::Centimeters => 0.01,
        Units::Decimeters => 0.1,
        Units::Meters => 1.0,
        Units::Inches | Units::USSurveyInch => 0.0254,
        Units::Feet | Units::USSurveyFeet => 0.3048,
        Units::Yards | Units::USSurveyYard => 0.9144,
        _ => return None,
    })
}

/// Points of an arc from `a0` to `a1` (degrees, anticlockwise) about `c`.
fn arc_points(c: [f64; 2], r: f64, a0_deg: f64, a1_deg: f64) -> Vec<[f64; 2]> {
    let mut sweep = a1_deg - a0_deg;
    while sweep <= 0.0 {
        sweep += 360.0;
    }
    let sweep = sweep.min(360.0);
    let n = (sweep / ARC_STEP_DEG).ceil().clamp(2.0, 64.0) as usize;
    (0..=n)
        .map(|i| {
            let a = (a0_deg + sweep * i as f64 / n as f64).to_radians();
            [c[0] + r * a.cos(), c[1] + r * a.sin()]
        })
        .collect()
}

/// Points of a polyline whose vertices carry bulges (tan of a quarter of
/// the arc's angle, positive anticlockwise).
fn bulged(vertices: &[([f64; 2], f64)], closed: bool) -> Vec<[f64; 2]> {
    let mut out = Vec::with_capacity(vertices.len() + 1);
    let n = vertices.len();
    let segments = if closed { n } else { n.saturating_sub(1) };
    for i in 0..segments {
        let (a, bulge) = vertices[i];
        let (b, _) = vertices[(i + 1) % n];
        if out.is_empty() {
            out.push(a);
        }
        if bulge.abs() < 1e-9 || !bulge.is_finite() {
            out.push(b);
            continue;
        }
        let theta = 4.0 * bulge.atan();
        let chord = ((b[0] - a[0]).powi(2) + (b[1] - a[1]).powi(2)).sqrt();
        if chord < 1e-12 {
            out.push(b);
            continue;
        }
        let r = chord / (2.0 * (theta / 2.0).sin());
        // Centre: from the chord's middle, perpendicular, by r·cos(θ/2).
        let mid = [(a[0] + b[0]) / 2.0, (a[1] + b[1]) / 2.0];
        let d = r * (theta / 2.0).cos();
        let nrm = [-(b[1] - a[1]) / chord, (b[0] - a[0]) / chord];
        let c = [mid[0] + nrm[0] * d, mid[1] + nrm[1] * d];
        let a0 = (a[1] - c[1]).atan2(a[0] - c[0]);
        let steps = (theta.abs().to_degrees() / ARC_STEP_DEG).ceil().clamp(2.0, 64.0) as usize;
        let rr = r.abs();
        for k in 1..=steps {
            let t = a0 + theta * k as f64 / steps as f64;
            out.push([c[0] + rr * t.cos(), c[1] + rr * t.sin()]);
        }
    }
    if n == 1 {
        out.push(vertices[0].0);
    }
    out
}

/// Mirror x for entities whose extrusion points down (the arbitrary-axis
/// rule of DXF gives X = (−1, 0, 0) for a normal of (0, 0, −1)).
fn ocs(p: [f64; 2], flip: bool) -> [f64; 2] {
    if flip { [-p[0], p[1]] } else { p }
}

/// MTEXT without its paragraph and formatting codes (good enough to read).
fn plain_mtext(s: &str) -> String {
    let s = s.replace("\\P", " ").replace("\\~", " ");
    let mut out = String::with_capacity(s.len());
    let mut chars = s.chars().peekable();
    while let Some(c) = chars.next() {
        match c {
            '{' | '}' => {}
            '\\' => {
                // \X...; codes: skip to the semicolon; \\ is a backslash.
                if chars.peek() == Some(&'\\') {
                    out.push('\\');
                    chars.next();
                } else {
                    for d in chars.by_ref() {
                        if d == ';' {
                            break;
                        }
                    }
                }
            }
            _ => out.push(c),
        }
    }
    out.trim().to_owned()
}

pub(super) fn read_dxf(path: &Path) -> Result<VectorDrawing, UnderlayError> {
    let file = std::fs::File::open(path).map_err(|e| io_fail(path, &e))?;
    let counted = count_dxf_entities(file, MAX_DXF_ENTITIES).map_err(|e| io_fail(path, &e))?;
    match counted {
        Some(n) if n > MAX_DXF_ENTITIES => return Err(too_many(path, n)),
        None => {
            let bytes = std::fs::metadata(path).map_err(|e| io_fail(path, &e))?.len();
            if bytes > MAX_BINARY_DXF_BYTES {
                return Err(fail(
                    path,
                    format!(
                        "is a binary DXF of {} MB; flowrise reads binary DXF up to {} MB — export it as ASCII DXF or only the floor plan",
                        bytes / (1024 * 1024),
                        MAX_BINARY_DXF_BYTES / (1024 * 1024)
                    ),
                ));
            }
        }
        Some(_) => {}
    }
    let drawing = dxf::Drawing::load_file(path)
        .map_err(|e| fail(path, format!("is not a DXF drawing flowrise can read ({e}) — save it again as DXF")))?;
    let mut out = VectorDrawing { m_per_unit: m_per_unit(drawing.header.default_drawing_units), ..Default::default() };
    for e in drawing.entities() {
        out.entities += 1;
        if out.entities > MAX_DXF_ENTITIES {
            return Err(too_many(path, out.entities));
        }
        add_entity(&mut out, &e.specific);
    }
    let mut lo = [f64::INFINITY; 2];
    let mut hi = [f64::NEG_INFINITY; 2];
    for p in out.points.iter().chain(out.texts.iter().map(|t| &t.at)) {
        for k in 0..2 {
            lo[k] = lo[k].min(p[k]);
            hi[k] = hi[k].max(p[k]);
        }
    }
    if !(lo[0].is_finite() && hi[0].is_finite()) {
        return Err(fail(
            path,
            format!(
                "has nothing flowrise draws ({} entities; lines, polylines, arcs, circles and texts are drawn, block references are not) — \
                 explode the blocks or export the plan's lines",
                out.entities
            ),
        ));
    }
    out.bounds = (lo, hi);
    Ok(out)
}

fn add_entity(out: &mut VectorDrawing, e: &dxf::entities::EntityType) {
    use dxf::entities::EntityType as E;
    match e {
        E::Line(l) => out.push_polyline(&[[l.p1.x, l.p1.y], [l.p2.x, l.p2.y]]),
        E::Circle(c) => {
            let flip = c.normal.z < 0.0;
            let pts = arc_points(ocs([c.center.x, c.center.y], flip), c.radius.abs(), 0.0, 360.0);
            out.push_polyline(&pts);
        }
        E::Arc(a) => {
            let flip = a.normal.z < 0.0;
            let (s, t) = if flip { (180.0 - a.end_angle, 180.0 - a.start_angle) } else { (a.start_angle, a.end_angle) };
            let pts = arc_points(ocs([a.center.x, a.center.y], flip), a.radius.abs(), s, t);
            out.push_polyline(&pts);
        }
        E::LwPolyline(p) => {
            let flip = p.extrusion_direction.z < 0.0;
            let v: Vec<([f64; 2], f64)> =
                p.vertices.iter().map(|v| (ocs([v.x, v.y], flip), if flip { -v.bulge } else { v.bulge })).collect();
            out.push_polyline(&bulged(&v, p.is_closed()));
        }
        E::Polyline(p) => {
            let v: Vec<([f64; 2], f64)> = p.vertices().map(|v| ([v.location.x, v.location.y], v.bulge)).collect();
            out.push_polyline(&bulged(&v, p.is_closed()));
        }
        E::Text(t) if !t.value.trim().is_empty() => out.texts.push(DrawingText {
            at: [t.location.x, t.location.y],
            height: t.text_height.abs(),
            rotation_deg: t.rotation,
            text: t.value.clone(),
        }),
        E::MText(t) => {
            let mut s: String = t.extended_text.concat();
            s.push_str(&t.text);
            let text = plain_mtext(&s);
            if !text.is_empty() {
                // MTEXT hangs from its insertion point (top left by default).
                let h = t.initial_text_height.abs();
                out.texts.push(DrawingText {
                    at: [t.insertion_point.x, t.insertion_point.y - h],
                    height: h,
                    rotation_deg: t.rotation_angle,
                    text,
                });
            }
        }
        _ => {}
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_bulge_of_one_is_a_half_circle() {
        // Bulge 1 = tan(180°/4): a half circle from (0,0) to (2,0), anticlockwise (below the chord).
        let pts = bulged(&[([0.0, 0.0], 1.0), ([2.0, 0.0], 0.0)], false);
        assert!(pts.len() > 10);
        for p in &pts {
            assert!((((p[0] - 1.0).powi(2) + p[1].powi(2)).sqrt() - 1.0).abs() < 1e-9, "{p:?}");
            assert!(p[1] <= 1e-9, "anticlockwise from (0,0) to (2,0) passes below: {p:?}");
        }
        assert!((pts.last().unwrap()[0] - 2.0).abs() < 1e-9);
    }

    #[test]
    fn the_count_reads_only_entities_and_blocks() {
        let text = "0\nSECTION\n2\nHEADER\n9\n$ACADVER\n1\nAC1015\n0\nENDSEC\n0\nSECTION\n2\nTABLES\n0\nTABLE\n0\nENDSEC\n\
                    0\nSECTION\n2\nENTITIES\n0\nLINE\n10\n0\n0\nLINE\n10\n1\n0\nENDSEC\n0\nEOF\n";
        assert_eq!(count_dxf_entities(text.as_bytes(), 100).unwrap(), Some(2));
        assert_eq!(count_dxf_entities(text.replace('\n', "\r\n").as_bytes(), 100).unwrap(), Some(2));
    }

    #[test]
    fn mtext_codes_are_removed() {
        assert_eq!(plain_mtext("{\\fArial|b0;Living}\\Proom"), "Living room");
    }
}
