//! Drawing an underlay under the network.
//!
//! A picture is one textured quad (the texture uploaded once per file). A
//! drawing's polylines are turned into plan coordinates once per placement
//! ([`Geometry`]: segments in f32 relative to an anchor point, sorted into
//! a grid of cells with bounding boxes); each frame draws the cells the
//! view overlaps as one mesh of thin mitred strips (one per polyline),
//! mapped to the screen with one multiply-add per point, joining pieces
//! shorter than two pixels.

use egui::{Color32, Mesh, Painter, Pos2, Rect, Shape, TextureOptions, pos2, vec2};
use flowrise_core::project::{PlanPoint, Underlay};
use flowrise_core::underlay::{LoadedUnderlay, UnderlayContent, VectorDrawing};

use super::super::canvas::View;
use super::cache::Entry;

/// Cells per side of a drawing's grid.
const GRID: usize = 32;

/// Ink of a drawing's lines and texts (before the underlay's opacity).
const INK: Color32 = Color32::from_rgb(0x4a, 0x52, 0x5e);

/// Shortest piece of a drawing's line drawn on its own, screen points
/// (|dx| + |dy|); shorter consecutive pieces are joined.
const MIN_STEP_PX: f32 = 2.0;

/// Texts drawn at most per frame (the rest wait for a closer zoom).
const MAX_TEXTS: usize = 600;

/// A drawing's segments in plan coordinates for one placement.
#[derive(Debug)]
pub struct Geometry {
    key: [u64; 4],
    /// Plan point all coordinates are relative to, m.
    anchor: PlanPoint,
    cells: Vec<Cell>,
    texts: Vec<Text>,
    /// End points of every line and polyline on the plan (snapping targets).
    pub ends: Vec<PlanPoint>,
    /// The last frame's mesh and what it was made for (view and colour):
    /// a frame with the same view draws it again without rebuilding.
    last: Option<(MeshKey, std::sync::Arc<Mesh>)>,
}

/// What a drawing's screen mesh depends on.
type MeshKey = [u32; 8];

fn mesh_key(clip: Rect, o: Pos2, s: f32, colour: Color32) -> MeshKey {
    [
        clip.min.x.to_bits(),
        clip.min.y.to_bits(),
        clip.max.x.to_bits(),
        clip.max.y.to_bits(),
        o.x.to_bits(),
        o.y.to_bits(),
        s.to_bits(),
        u32::from_le_bytes(colour.to_array()),
    ]
}

#[derive(Debug, Default)]
struct Cell {
    /// Bounds, m relative to the anchor (y up).
    min: [f32; 2],
    max: [f32; 2],
    segs: Vec<[[f32; 2]; 2]>,
}

#[derive(Debug)]
struct Text {
    at: [f32; 2],
    height_m: f32,
    angle_rad: f32,
    text: String,
}

fn key(u: &Underlay) -> [u64; 4] {
    [u.m_per_unit.to_bits(), u.origin.x_m.to_bits(), u.origin.y_m.to_bits(), u.rotation_deg.to_bits()]
}

impl Geometry {
    /// The geometry of `v` placed by `u`.
    #[must_use]
    pub fn build(v: &VectorDrawing, u: &Underlay) -> Self {
        let (lo, hi) = v.bounds;
        let anchor = u.plan_from_source([0.5 * (lo[0] + hi[0]), 0.5 * (lo[1] + hi[1])]);
        let rel = |p: [f64; 2]| {
            let q = u.plan_from_source(p);
            [(q.x_m - anchor.x_m) as f32, (q.y_m - anchor.y_m) as f32]
        };
        // Grid over the drawing's bounds in source units (a rotation keeps cells whole).
        let span = [(hi[0] - lo[0]).max(1e-9), (hi[1] - lo[1]).max(1e-9)];
        let cell_of = |p: [f64; 2]| {
            let i = (((p[0] - lo[0]) / span[0]) * GRID as f64).clamp(0.0, (GRID - 1) as f64) as usize;
            let j = (((p[1] - lo[1]) / span[1]) * GRID as f64).clamp(0.0, (GRID - 1) as f64) as usize;
            j * GRID + i
        };
        let mut cells: Vec<Cell> = (0..GRID * GRID)
            .map(|_| Cell { min: [f32::INFINITY; 2], max: [f32::NEG_INFINITY; 2], segs: Vec::new() })
            .collect();
        let mut ends = Vec::with_capacity(v.starts.len() * 2);
        for poly in v.polylines() {
            for w in poly.windows(2) {
                let mid = [0.5 * (w[0][0] + w[1][0]), 0.5 * (w[0][1] + w[1][1])];
                let (a, b) = (rel(w[0]), rel(w[1]));
                if let Some(c) = cells.get_mut(cell_of(mid)) {
                    for p in [a, b] {
                        c.min = [c.min[0].min(p[0]), c.min[1].min(p[1])];
                        c.max = [c.max[0].max(p[0]), c.max[1].max(p[1])];
                    }
                    c.segs.push([a, b]);
                }
            }
            if let (Some(&a), Some(&b)) = (poly.first(), poly.last()) {
                ends.push(u.plan_from_source(a));
                ends.push(u.plan_from_source(b));
            }
        }
        cells.retain(|c| !c.segs.is_empty());
        let k = u.m_per_unit as f32;
        let texts = v
            .texts
            .iter()
            .map(|t| Text {
                at: rel(t.at),
                height_m: (t.height as f32) * k,
                angle_rad: (t.rotation_deg + u.rotation_deg).to_radians() as f32,
                text: t.text.clone(),
            })
            .collect();
        Self { key: key(u), anchor, cells, texts, ends, last: None }
    }

    /// True when made for this placement.
    #[must_use]
    pub fn fits(&self, u: &Underlay) -> bool {
        self.key == key(u)
    }

    /// Segments drawn by the last call, for tests and benchmarks.
    #[must_use]
    pub fn segment_count(&self) -> usize {
        self.cells.iter().map(|c| c.segs.len()).sum()
    }
}

/// Draw the underlay `u` of file `entry` (already read) into the canvas.
pub fn draw(painter: &Painter, view: &View, u: &Underlay, loaded: &LoadedUnderlay, entry: &mut Entry) {
    let alpha = (u.opacity.clamp(0.0, 1.0) * 255.0).round() as u8;
    if alpha == 0 {
        return;
    }
    match &loaded.content {
        UnderlayContent::Raster(r) => {
            let tex = entry.texture.get_or_insert_with(|| {
                let max = painter.ctx().input(|i| i.max_texture_side).max(64);
                let max = u32::try_from(max).unwrap_or(u32::MAX);
                let r = r.downscaled(max);
                let img = egui::ColorImage::from_rgba_unmultiplied([r.width as usize, r.height as usize], &r.rgba);
                painter.ctx().load_texture(format!("underlay {}", loaded.path.display()), img, TextureOptions::LINEAR)
            });
            let [w, h] = r.size_units();
            let corners =
                [[0.0, h], [w, h], [w, 0.0], [0.0, 0.0]].map(|s| view.screen_from_plan(u.plan_from_source(s)));
            let mut mesh = Mesh::with_texture(tex.id());
            let tint = Color32::WHITE.gamma_multiply(f32::from(alpha) / 255.0);
            for (p, uv) in corners.iter().zip([pos2(0.0, 0.0), pos2(1.0, 0.0), pos2(1.0, 1.0), pos2(0.0, 1.0)]) {
                mesh.vertices.push(egui::epaint::Vertex { pos: *p, uv, color: tint });
            }
            mesh.add_triangle(0, 1, 2);
            mesh.add_triangle(0, 2, 3);
            painter.add(Shape::mesh(mesh));
        }
        UnderlayContent::Vector(v) => {
            if !entry.geometry.as_ref().is_some_and(|g| g.fits(u)) {
                entry.geometry = Some(Geometry::build(v, u));
            }
            if let Some(g) = &mut entry.geometry {
                draw_lines(painter, view, g, INK.gamma_multiply(f32::from(alpha) / 255.0));
            }
        }
    }
}

fn draw_lines(painter: &Painter, view: &View, g: &mut Geometry, colour: Color32) {
    let clip = painter.clip_rect();
    let s = view.px_per_m;
    // Screen = o + (x, −y)·s for a point (x, y) relative to the anchor.
    let o = view.screen_from_plan(g.anchor);
    let k = mesh_key(clip, o, s, colour);
    match &g.last {
        Some((key, mesh)) if *key == k => painter.add(Shape::Mesh(std::sync::Arc::clone(mesh))),
        _ => {
            let mesh = std::sync::Arc::new(line_mesh(g, clip, o, s, view, colour));
            g.last = Some((k, std::sync::Arc::clone(&mesh)));
            painter.add(Shape::Mesh(mesh))
        }
    };
    draw_texts(painter, g, clip, o, s, colour);
}

/// Every polyline in view as a strip one pixel wide: two vertices per
/// point, mitred at the joints (a polyline of n pieces costs 2(n + 1)
/// vertices, not 4n as separate quads would; the tessellator copies every
/// vertex each frame).
fn line_mesh(g: &Geometry, clip: Rect, o: Pos2, s: f32, view: &View, colour: Color32) -> Mesh {
    let lo = view.plan_from_screen(clip.left_bottom());
    let hi = view.plan_from_screen(clip.right_top());
    let vmin = [(lo.x_m - g.anchor.x_m) as f32, (lo.y_m - g.anchor.y_m) as f32];
    let vmax = [(hi.x_m - g.anchor.x_m) as f32, (hi.y_m - g.anchor.y_m) as f32];
    let mut mesh = Mesh::default();
    let mut pts: Vec<Pos2> = Vec::with_capacity(64);
    for c in &g.cells {
        if c.max[0] < vmin[0] || c.min[0] > vmax[0] || c.max[1] < vmin[1] || c.min[1] > vmax[1] {
            continue;
        }
        // Consecutive segments of one polyline shorter than MIN_STEP_PX
        // are drawn as one chord (an arc seen from afar needs a few).
        let mut end: Option<[f32; 2]> = None;
        for [a, b] in &c.segs {
            // The same point of the polyline: the same bits.
            let continues = end.is_some_and(|e| e[0].to_bits() == a[0].to_bits() && e[1].to_bits() == a[1].to_bits());
            if !continues {
                strip(&mut mesh, &pts, colour);
                pts.clear();
                pts.push(pos2(o.x + a[0] * s, o.y - a[1] * s));
            }
            let pb = pos2(o.x + b[0] * s, o.y - b[1] * s);
            if let Some(&last) = pts.last() {
                let d = pb - last;
                if d.x.abs() + d.y.abs() >= MIN_STEP_PX {
                    pts.push(pb);
                }
            }
            end = Some(*b);
        }
        strip(&mut mesh, &pts, colour);
        pts.clear();
    }
    mesh
}

/// One polyline (screen points) as a strip of half-width 0.5 px; nothing
/// for fewer than two points.
fn strip(mesh: &mut Mesh, pts: &[Pos2], colour: Color32) {
    const HALF_WIDTH: f32 = 0.5;
    if pts.len() < 2 {
        return;
    }
    let normal = |p: Pos2, q: Pos2| {
        let d = q - p;
        vec2(-d.y, d.x) / d.length().max(1e-6)
    };
    let first = mesh.vertices.len() as u32;
    for (i, &p) in pts.iter().enumerate() {
        let before = (i > 0).then(|| normal(pts[i - 1], p));
        let after = pts.get(i + 1).map(|&q| normal(p, q));
        let off = match (before, after) {
            (Some(n1), Some(n2)) => {
                // The mitre: along the mean normal, long enough that both
                // pieces keep their width; at most twice as long (a sharp
                // turn is thinned rather than spiked).
                let m = n1 + n2;
                let len = m.length();
                if len < 1e-3 {
                    n2 * HALF_WIDTH
                } else {
                    let m = m / len;
                    m * (HALF_WIDTH / m.dot(n2).max(0.5))
                }
            }
            (Some(n), None) | (None, Some(n)) => n * HALF_WIDTH,
            (None, None) => vec2(0.0, 0.0),
        };
        mesh.colored_vertex(p + off, colour);
        mesh.colored_vertex(p - off, colour);
    }
    for k in 0..(pts.len() as u32 - 1) {
        let i = first + 2 * k;
        mesh.add_triangle(i, i + 1, i + 2);
        mesh.add_triangle(i + 1, i + 2, i + 3);
    }
}

fn draw_texts(painter: &Painter, g: &Geometry, clip: Rect, o: Pos2, s: f32, colour: Color32) {
    let mut shown = 0;
    for t in &g.texts {
        let size = t.height_m * s;
        if !(6.0..=200.0).contains(&size) {
            continue;
        }
        let p = pos2(o.x + t.at[0] * s, o.y - t.at[1] * s);
        if !clip.expand(200.0).contains(p) {
            continue;
        }
        shown += 1;
        if shown > MAX_TEXTS {
            break;
        }
        let galley = painter.layout_no_wrap(t.text.clone(), egui::FontId::proportional(size), colour);
        // Anchored at the baseline's start: the galley's top left sits one
        // line height above, turned with the text.
        let up = vec2(t.angle_rad.sin(), t.angle_rad.cos()) * -galley.size().y;
        let top_left = p + up;
        painter.add(egui::epaint::TextShape::new(top_left, galley, colour).with_angle(-t.angle_rad));
    }
}

/// A busy mark and the file's name while it is being read.
pub fn loading_mark(painter: &Painter, at: Pos2, name: &str) {
    let t = painter.ctx().input(|i| i.time) as f32;
    let c = at + vec2(12.0, 12.0);
    let pts: Vec<Pos2> = (0..=20)
        .map(|i| {
            let a = t * 5.0 + i as f32 * 0.22;
            c + vec2(a.cos(), a.sin()) * 7.0
        })
        .collect();
    painter.add(Shape::line(pts, egui::Stroke::new(2.0, super::super::theme::ACCENT)));
    painter.text(
        c + vec2(14.0, 0.0),
        egui::Align2::LEFT_CENTER,
        format!("Reading plan underlay {name}…"),
        egui::FontId::proportional(13.0),
        super::super::theme::INK,
    );
    painter.ctx().request_repaint();
}

/// The mark of an underlay that cannot be shown, with the reason.
pub fn missing_mark(painter: &Painter, at: Pos2, name: &str, why: &str) {
    let text = format!("Plan underlay not shown: {name} — {why}");
    let galley = painter.layout(text, egui::FontId::proportional(12.5), super::super::theme::ERROR, 520.0);
    let rect = Rect::from_min_size(at, galley.size() + vec2(16.0, 10.0));
    painter.rect_filled(rect, 4, Color32::from_rgb(0xfb, 0xee, 0xe6));
    painter.rect_stroke(rect, 4, egui::Stroke::new(1.5, super::super::theme::ERROR), egui::StrokeKind::Inside);
    painter.galley(at + vec2(8.0, 5.0), galley, super::super::theme::ERROR);
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_polyline_is_one_strip_of_two_vertices_per_point_one_pixel_wide() {
        let mut mesh = Mesh::default();
        let square = [pos2(0.0, 0.0), pos2(10.0, 0.0), pos2(10.0, 10.0), pos2(0.0, 10.0), pos2(0.0, 0.0)];
        strip(&mut mesh, &square, Color32::BLACK);
        assert_eq!(mesh.vertices.len(), 10, "2 per point, not 4 per piece");
        assert_eq!(mesh.indices.len(), 4 * 6, "two triangles per piece");
        // Ends offset by half a pixel across the piece; the corners by the
        // mitre (half a pixel from both pieces' edges: √2/2 from the point).
        let d = |i: usize, p: Pos2| mesh.vertices[i].pos.distance(p);
        assert!((d(0, square[0]) - 0.5).abs() < 1e-6 && (d(1, square[0]) - 0.5).abs() < 1e-6);
        for (k, &corner) in square.iter().enumerate().take(4).skip(1) {
            assert!((d(2 * k, corner) - 0.5_f32.hypot(0.5)).abs() < 1e-5, "corner {k}");
        }
        // A single piece is one quad; one point draws nothing.
        let mut one = Mesh::default();
        strip(&mut one, &square[..2], Color32::BLACK);
        strip(&mut one, &square[..1], Color32::BLACK);
        assert_eq!((one.vertices.len(), one.indices.len()), (4, 6));
    }
}
