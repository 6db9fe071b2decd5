//! Inline SVG drawings of the report: level plans, the riser elevation and
//! the pump chart. Pure string building; coordinates in CSS pixels.

mod plan;
mod pump_chart;
mod riser;
pub mod underlay;

pub(super) use plan::level_plan;
pub(super) use pump_chart::pump_chart;
pub(super) use riser::riser_elevation;
pub use underlay::PlanUnderlays;

use super::esc;
use crate::design::Solution;
use crate::project::{PlanPoint, Project, Run, RunId};

/// The viridis colormap (van der Walt & Smith, "A better default colormap
/// for matplotlib", SciPy 2015), sampled every 1/32 from matplotlib
/// 3.10.9's `colormaps["viridis"]` (script `tests/reference/gen_colormap.py`).
/// Continuous, perceptually uniform, readable with the common forms of
/// colour-vision deficiency and in greyscale print; its middle is a clear
/// teal, so no value reads as the grey of "no result". The window and the
/// report colour runs with it.
pub const VIRIDIS_STOPS: [[u8; 3]; 33] = [
    [68, 1, 84],
    [71, 13, 96],
    [72, 24, 106],
    [72, 35, 116],
    [71, 45, 123],
    [69, 55, 129],
    [66, 64, 134],
    [62, 73, 137],
    [59, 82, 139],
    [55, 91, 141],
    [51, 99, 141],
    [47, 107, 142],
    [44, 114, 142],
    [41, 122, 142],
    [38, 130, 142],
    [35, 137, 142],
    [33, 145, 140],
    [31, 152, 139],
    [31, 160, 136],
    [34, 167, 133],
    [40, 174, 128],
    [50, 182, 122],
    [63, 188, 115],
    [78, 195, 107],
    [94, 201, 98],
    [112, 207, 87],
    [132, 212, 75],
    [152, 216, 62],
    [173, 220, 48],
    [194, 223, 35],
    [216, 226, 25],
    [236, 229, 27],
    [253, 231, 37],
];

/// Colour of `t` in 0..=1 on the viridis scale (clamped; NaN → 0), linear
/// between the stops.
#[must_use]
pub fn viridis(t: f64) -> [u8; 3] {
    let t = if t.is_nan() { 0.0 } else { t.clamp(0.0, 1.0) };
    let segments = VIRIDIS_STOPS.len() - 1;
    let x = t * segments as f64;
    let i = (x.floor() as usize).min(segments - 1);
    let f = x - i as f64;
    let (a, b) = (VIRIDIS_STOPS[i], VIRIDIS_STOPS[i + 1]);
    let mix = |k: usize| (f64::from(a[k]) + f * (f64::from(b[k]) - f64::from(a[k]))).round().clamp(0.0, 255.0) as u8;
    [mix(0), mix(1), mix(2)]
}

fn hex(c: [u8; 3]) -> String {
    format!("#{:02x}{:02x}{:02x}", c[0], c[1], c[2])
}

/// Velocity margin v / v_limit of a run: the larger of its two sides; `None`
/// when the run has no pipe results.
#[must_use]
pub fn velocity_margin(sol: &Solution, run: RunId) -> Option<f64> {
    sol.run_pipes(run)
        .filter(|x| x.velocity_limit_m_s > 0.0)
        .map(|x| x.velocity_m_s / x.velocity_limit_m_s)
        .reduce(f64::max)
}

/// Stroke attributes of a run coloured by its margin: casing + colour,
/// thicker and dashed over the limit.
fn run_style(margin: Option<f64>) -> (String, f64, &'static str) {
    match margin {
        Some(m) if m > 1.0 => (hex(viridis(1.0)), 6.0, " stroke-dasharray=\"9 5\""),
        Some(m) => (hex(viridis(m)), 3.0, ""),
        None => ("#bbbbbb".to_owned(), 2.0, ""),
    }
}

/// Legend of the velocity-margin scale (gradient bar + over-limit sample).
fn legend(out: &mut String, x: f64, y: f64, id: &str) {
    w!(out, "<g class=\"legend\" transform=\"translate({x:.1},{y:.1})\">");
    w!(out, "<defs><linearGradient id=\"{id}\" x1=\"0\" x2=\"1\" y1=\"0\" y2=\"0\">");
    for (i, c) in VIRIDIS_STOPS.iter().enumerate() {
        w!(out, "<stop offset=\"{:.4}\" stop-color=\"{}\"/>", i as f64 / (VIRIDIS_STOPS.len() - 1) as f64, hex(*c));
    }
    out.push_str("</linearGradient></defs>");
    out.push_str("<rect x=\"-6\" y=\"-16\" width=\"244\" height=\"50\" fill=\"#ffffff\" fill-opacity=\"0.9\" stroke=\"#cccccc\"/>");
    out.push_str(
        "<text x=\"0\" y=\"-4\" class=\"lg\">velocity margin v / v<tspan dy=\"2\" font-size=\"7\">limit</tspan></text>",
    );
    w!(
        out,
        "<rect x=\"0\" y=\"2\" width=\"120\" height=\"10\" fill=\"url(#{id})\" stroke=\"#333333\" stroke-width=\"0.5\"/>"
    );
    for (t, label) in [(0.0, "0"), (0.5, "0.5"), (1.0, "1")] {
        w!(out, "<text x=\"{:.1}\" y=\"24\" class=\"lg\" text-anchor=\"middle\">{label}</text>", t * 120.0);
    }
    let (colour, w, dash) = run_style(Some(1.2));
    w!(
        out,
        "<line x1=\"140\" y1=\"7\" x2=\"180\" y2=\"7\" stroke=\"#222222\" stroke-width=\"{:.1}\"/>\
         <line x1=\"140\" y1=\"7\" x2=\"180\" y2=\"7\" stroke=\"{colour}\" stroke-width=\"{w:.1}\"{dash}/>\
         <text x=\"186\" y=\"10\" class=\"lg\">&gt; 1</text><text x=\"140\" y=\"24\" class=\"lg\">over limit</text>",
        w + 2.0
    );
    out.push_str("</g>");
}

/// Map from plan metres to pixels (north up).
#[derive(Debug, Clone, Copy)]
struct PlanMap {
    min_x: f64,
    max_y: f64,
    scale: f64,
    margin: f64,
    offset_x: f64,
}

impl PlanMap {
    fn px(&self, p: PlanPoint) -> (f64, f64) {
        (self.offset_x + (p.x_m - self.min_x) * self.scale, self.margin + (self.max_y - p.y_m) * self.scale)
    }
}

fn nice_step(range: f64, target_ticks: f64) -> f64 {
    let raw = (range / target_ticks).max(1e-9);
    let mag = 10f64.powf(raw.log10().floor());
    let f = raw / mag;
    let nice = if f <= 1.0 {
        1.0
    } else if f <= 2.0 {
        2.0
    } else if f <= 5.0 {
        5.0
    } else {
        10.0
    };
    nice * mag
}

fn polyline_points(p: &Project, run: &Run) -> Option<Vec<PlanPoint>> {
    let (a, b) = (p.node(run.a)?, p.node(run.b)?);
    let mut pts = vec![a.pos];
    pts.extend_from_slice(&run.vertices);
    pts.push(b.pos);
    Some(pts)
}

/// One line of a label: text and its CSS class.
type LabelLine = (String, &'static str);

/// An axis-aligned box in pixels.
#[derive(Debug, Clone, Copy)]
struct Rect {
    x0: f64,
    y0: f64,
    x1: f64,
    y1: f64,
}

impl Rect {
    fn overlaps(&self, o: &Self) -> bool {
        self.x0 < o.x1 && o.x0 < self.x1 && self.y0 < o.y1 && o.y0 < self.y1
    }
    fn contains(&self, (x, y): (f64, f64)) -> bool {
        (self.x0..=self.x1).contains(&x) && (self.y0..=self.y1).contains(&y)
    }
}

/// Greedy label placement: each label takes the first of its candidate
/// positions that crosses the fewest run segments and placed labels.
#[derive(Debug)]
struct Labels {
    width: f64,
    height: f64,
    segs: Vec<((f64, f64), (f64, f64))>,
    boxes: Vec<Rect>,
}

/// Approximate advance width of a character at `font_px`, px (sans-serif).
fn text_width(text: &str, font_px: f64) -> f64 {
    text.chars().count() as f64 * font_px * 0.6
}

fn font_px(class: &str) -> f64 {
    if class == "lb" { 11.0 } else { 9.5 }
}

impl Labels {
    fn new(width: f64, height: f64) -> Self {
        Self { width, height, segs: Vec::new(), boxes: Vec::new() }
    }

    fn cost(&self, r: &Rect) -> f64 {
        let mut c = 0.0;
        if r.x0 < 2.0 || r.y0 < 2.0 || r.x1 > self.width - 2.0 || r.y1 > self.height {
            c += 50.0;
        }
        let inflated = Rect { x0: r.x0 - 1.0, y0: r.y0 - 1.0, x1: r.x1 + 1.0, y1: r.y1 + 1.0 };
        for &(a, b) in &self.segs {
            let n = ((b.0 - a.0).hypot(b.1 - a.1) / 2.0).ceil().max(1.0) as usize;
            if (0..=n).any(|i| {
                let t = i as f64 / n as f64;
                inflated.contains((a.0 + t * (b.0 - a.0), a.1 + t * (b.1 - a.1)))
            }) {
                c += 10.0;
            }
        }
        c + 10.0 * self.boxes.iter().filter(|b| b.overlaps(r)).count() as f64
    }

    /// Place a block of lines (text, class) next to a point.
    fn place_node(&mut self, out: &mut String, x: f64, y: f64, lines: &[LabelLine]) {
        let w = lines.iter().map(|(t, c)| text_width(t, font_px(c))).fold(0.0, f64::max);
        let h = lines.iter().map(|(_, c)| font_px(c) + 2.0).sum::<f64>();
        let candidates = [
            (x + 13.0, y - h / 2.0),
            (x + 13.0, y - h - 2.0),
            (x + 13.0, y + 4.0),
            (x - 13.0 - w, y - h / 2.0),
            (x - w / 2.0, y - 13.0 - h),
            (x - w / 2.0, y + 13.0),
            (x - 13.0 - w, y - h - 2.0),
            (x - 13.0 - w, y + 4.0),
            (x - w / 2.0, y - 40.0 - h),
            (x - w / 2.0, y + 40.0),
            (x - w / 2.0, y - 67.0 - h),
            (x - w / 2.0, y + 67.0),
        ];
        let (bx, by) = self.best(&candidates, w, h);
        let mut baseline = by;
        for (text, class) in lines {
            baseline += font_px(class);
            w!(out, "<text x=\"{bx:.1}\" y=\"{baseline:.1}\" class=\"{class}\">{}</text>", esc(text));
            baseline += 2.0;
        }
        self.boxes.push(Rect { x0: bx, y0: by, x1: bx + w, y1: by + h });
    }

    /// Place a run label beside one of its segments (longest first).
    fn place_on_segments(&mut self, out: &mut String, segs: &[&[(f64, f64)]], text: &str) {
        let (w, h) = (text_width(text, 9.5), 11.5);
        let mut candidates = Vec::new();
        for s in segs.iter().take(3) {
            for f in [0.5, 0.25, 0.75] {
                let (px, py) = (s[0].0 + f * (s[1].0 - s[0].0), s[0].1 + f * (s[1].1 - s[0].1));
                let horizontal = (s[1].0 - s[0].0).abs() >= (s[1].1 - s[0].1).abs();
                if horizontal {
                    candidates.push((px - w / 2.0, py - 5.0 - h));
                    candidates.push((px - w / 2.0, py + 5.0));
                } else {
                    candidates.push((px + 6.0, py - h / 2.0));
                    candidates.push((px - 6.0 - w, py - h / 2.0));
                }
            }
        }
        if candidates.is_empty() {
            return;
        }
        let (bx, by) = self.best(&candidates, w, h);
        w!(out, "<text x=\"{bx:.1}\" y=\"{:.1}\" class=\"sz\">{}</text>", by + 9.5, esc(text));
        self.boxes.push(Rect { x0: bx, y0: by, x1: bx + w, y1: by + h });
    }

    fn best(&self, candidates: &[(f64, f64)], w: f64, h: f64) -> (f64, f64) {
        let mut best = candidates[0];
        let mut best_cost = f64::INFINITY;
        for (i, &(bx, by)) in candidates.iter().enumerate() {
            let c = self.cost(&Rect { x0: bx, y0: by, x1: bx + w, y1: by + h }) + 0.01 * i as f64;
            if c < best_cost {
                best_cost = c;
                best = (bx, by);
            }
        }
        best
    }
}

fn fmt_num(x: f64) -> String {
    if (x - x.round()).abs() < 1e-9 { format!("{x:.0}") } else { format!("{x}") }
}

fn seg_len(s: &[(f64, f64)]) -> f64 {
    (s[1].0 - s[0].0).hypot(s[1].1 - s[0].1)
}
