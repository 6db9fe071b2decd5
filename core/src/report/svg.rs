//! Inline SVG drawings of the report: level plans, the riser elevation and
//! the pump chart. Pure string building; coordinates in CSS pixels.

use std::collections::{BTreeMap, BTreeSet};

use super::esc;
use crate::design::{Side, Solution, topology::Topology};
use crate::project::{Level, NodeId, NodeKind, PlanPoint, Project, Run, RunId};
use crate::pump::PumpControl;

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

/// Short label of an emitter's model and design for the plan.
fn emitter_caption(sol: &Solution, id: NodeId) -> String {
    sol.emitter(id).map_or_else(String::new, |e| format!("{:.0} W · preset {}", e.load_w, e.presetting))
}

/// The plan of one level as an inline SVG (`class="level-plan"`,
/// `data-level="L1"`).
#[allow(clippy::too_many_lines)] // reason: one drawing, layer by layer
pub(super) fn level_plan(p: &Project, sol: &Solution, level: &Level) -> String {
    const WIDTH: f64 = 720.0;
    const MAX_HEIGHT: f64 = 430.0;
    const MARGIN: f64 = 48.0;
    let nodes: Vec<_> = p.nodes().filter(|n| n.level == level.id).collect();
    let on_level: BTreeSet<NodeId> = nodes.iter().map(|n| n.id).collect();
    let runs: Vec<&Run> = p.runs().filter(|r| on_level.contains(&r.a) && on_level.contains(&r.b)).collect();
    let verticals: Vec<&Run> =
        p.runs().filter(|r| p.is_vertical(r) && (on_level.contains(&r.a) || on_level.contains(&r.b))).collect();
    let mut pts: Vec<PlanPoint> = nodes.iter().map(|n| n.pos).collect();
    for r in &runs {
        pts.extend_from_slice(&r.vertices);
    }
    let mut out = String::new();
    if pts.is_empty() {
        w!(
            out,
            "<svg class=\"level-plan\" data-level=\"{}\" xmlns=\"http://www.w3.org/2000/svg\" viewBox=\"0 0 {WIDTH} 60\" \
             width=\"{WIDTH}\" height=\"60\" role=\"img\" aria-label=\"Plan of {}\"><text x=\"10\" y=\"30\" class=\"lb\">\
             Nothing is drawn on this level.</text></svg>",
            level.id,
            esc(&level.name)
        );
        return out;
    }
    let min_x = pts.iter().map(|q| q.x_m).fold(f64::INFINITY, f64::min);
    let max_x = pts.iter().map(|q| q.x_m).fold(f64::NEG_INFINITY, f64::max);
    let min_y = pts.iter().map(|q| q.y_m).fold(f64::INFINITY, f64::min);
    let max_y = pts.iter().map(|q| q.y_m).fold(f64::NEG_INFINITY, f64::max);
    let (span_x, span_y) = ((max_x - min_x).max(1.0), (max_y - min_y).max(1.0));
    let scale = ((WIDTH - 2.0 * MARGIN - 120.0) / span_x).min((MAX_HEIGHT - 2.0 * MARGIN) / span_y).min(80.0);
    // Centre the drawing horizontally; leave room on the right for labels.
    let offset_x = ((WIDTH - span_x * scale) / 2.0 - 40.0).max(MARGIN);
    // Flat layouts get a taller frame, the drawing centred in it, so labels
    // have room above and below.
    let height = (span_y * scale + 2.0 * MARGIN + 30.0).max(260.0);
    let margin_y = ((height - 30.0 - span_y * scale) / 2.0).max(MARGIN);
    let map = PlanMap { min_x, max_y, scale, margin: margin_y, offset_x };
    w!(
        out,
        "<svg class=\"level-plan\" data-level=\"{}\" xmlns=\"http://www.w3.org/2000/svg\" viewBox=\"0 0 {WIDTH} {height:.0}\" \
         width=\"{WIDTH}\" height=\"{height:.0}\" role=\"img\" aria-label=\"Plan of {}\">",
        level.id,
        esc(&level.name)
    );
    w!(
        out,
        "<rect x=\"0.5\" y=\"0.5\" width=\"719\" height=\"{:.0}\" fill=\"#ffffff\" stroke=\"#cccccc\"/>",
        height - 1.0
    );

    // Obstacles for the labels: every run segment and every node symbol.
    let polys: Vec<(&Run, Vec<(f64, f64)>)> = runs
        .iter()
        .filter_map(|r| polyline_points(p, r).map(|poly| (*r, poly.iter().map(|&q| map.px(q)).collect())))
        .collect();
    let mut labels = Labels::new(WIDTH, height - 40.0);
    for (_, pxs) in &polys {
        for s in pxs.windows(2) {
            labels.segs.push((s[0], s[1]));
        }
    }
    for n in &nodes {
        let (x, y) = map.px(n.pos);
        labels.boxes.push(Rect { x0: x - 11.0, y0: y - 11.0, x1: x + 11.0, y1: y + 11.0 });
    }
    let mut texts = String::new();

    // Runs: dark casing, then the colour.
    for (r, pxs) in &polys {
        let points: Vec<String> = pxs.iter().map(|(x, y)| format!("{x:.1},{y:.1}")).collect();
        let margin = velocity_margin(sol, r.id);
        let (colour, w, dash) = run_style(margin);
        let supply = sol.run_pipes(r.id).find(|x| x.side == Side::Supply);
        let title = supply.map_or_else(
            || r.id.to_string(),
            |x| format!("{} {} {:.2} m/s of {:.2} m/s", r.id, x.size, x.velocity_m_s, x.velocity_limit_m_s),
        );
        let over = if margin.is_some_and(|m| m > 1.0) { " over-limit" } else { "" };
        w!(
            out,
            "<g class=\"run{over}\" data-run=\"{}\"><title>{}</title>\
             <polyline points=\"{pts}\" fill=\"none\" stroke=\"#222222\" stroke-width=\"{:.1}\" stroke-linejoin=\"round\" stroke-linecap=\"round\"/>\
             <polyline points=\"{pts}\" fill=\"none\" stroke=\"{colour}\" stroke-width=\"{w:.1}\" stroke-linejoin=\"round\"{dash}/></g>",
            r.id,
            esc(&title),
            w + 2.0,
            pts = points.join(" ")
        );
    }

    // Risers: a ring with an arrow towards the other level.
    let mut riser_labels: Vec<((f64, f64), String)> = Vec::new();
    for r in &verticals {
        let (here, there) = if on_level.contains(&r.a) { (r.a, r.b) } else { (r.b, r.a) };
        let Some(node) = p.node(here) else { continue };
        let (x, y) = map.px(node.pos);
        let up = p.elevation_m(there) > p.elevation_m(here);
        let (colour, w, dash) = run_style(velocity_margin(sol, r.id));
        let arrow = if up { "▲" } else { "▼" };
        let other = p.node(there).and_then(|n| p.level(n.level)).map_or_else(String::new, |l| l.name.clone());
        let size =
            sol.run_pipes(r.id).find(|x| x.side == Side::Supply).map_or_else(String::new, |x| format!(" {}", x.size));
        w!(
            out,
            "<g class=\"riser\" data-run=\"{}\"><title>{} riser to {}</title>\
             <circle cx=\"{x:.1}\" cy=\"{y:.1}\" r=\"9\" fill=\"none\" stroke=\"#222222\" stroke-width=\"{:.1}\"/>\
             <circle cx=\"{x:.1}\" cy=\"{y:.1}\" r=\"9\" fill=\"none\" stroke=\"{colour}\" stroke-width=\"{w:.1}\"{dash}/></g>",
            r.id,
            r.id,
            esc(&other),
            w + 2.0
        );
        riser_labels.push(((x, y), format!("{arrow} {}{size} to {other}", r.id)));
    }

    // Node symbols; their labels are placed afterwards.
    let mut node_labels: Vec<((f64, f64), Vec<LabelLine>)> = Vec::new();
    for n in &nodes {
        let (x, y) = map.px(n.pos);
        match &n.kind {
            NodeKind::Junction => {
                w!(
                    out,
                    "<circle class=\"junction\" data-node=\"{}\" cx=\"{x:.1}\" cy=\"{y:.1}\" r=\"3\" fill=\"#222222\"/>",
                    n.id
                );
            }
            NodeKind::Source(s) => {
                w!(
                    out,
                    "<g class=\"source\" data-node=\"{}\"><rect x=\"{:.1}\" y=\"{:.1}\" width=\"20\" height=\"20\" fill=\"#444444\" stroke=\"#000000\"/></g>",
                    n.id,
                    x - 10.0,
                    y - 10.0
                );
                node_labels.push(((x, y), vec![(format!("{} ({})", s.name, n.id), "lb")]));
            }
            NodeKind::Header(h) => {
                w!(
                    out,
                    "<g class=\"header\" data-node=\"{}\"><rect x=\"{:.1}\" y=\"{:.1}\" width=\"22\" height=\"12\" fill=\"#ffffff\" stroke=\"#000000\" stroke-width=\"1.5\"/>\
                     <line x1=\"{:.1}\" y1=\"{y:.1}\" x2=\"{:.1}\" y2=\"{y:.1}\" stroke=\"#000000\"/></g>",
                    n.id,
                    x - 11.0,
                    y - 6.0,
                    x - 11.0,
                    x + 11.0
                );
                node_labels.push((
                    (x, y),
                    vec![(format!("{} ({})", h.name, n.id), "lb"), (format!("header, {} outlets", h.outlets), "sm")],
                ));
            }
            NodeKind::Emitter(e) => {
                let shape = match e.model {
                    crate::emitters::EmitterModel::Radiator(_) => format!(
                        "<rect x=\"{:.1}\" y=\"{:.1}\" width=\"18\" height=\"10\" fill=\"#ffffff\" stroke=\"#000000\" stroke-width=\"1.5\"/>\
                         <line x1=\"{:.1}\" y1=\"{:.1}\" x2=\"{:.1}\" y2=\"{:.1}\" stroke=\"#000000\"/>\
                         <line x1=\"{:.1}\" y1=\"{:.1}\" x2=\"{:.1}\" y2=\"{:.1}\" stroke=\"#000000\"/>",
                        x - 9.0,
                        y - 5.0,
                        x - 3.0,
                        y - 5.0,
                        x - 3.0,
                        y + 5.0,
                        x + 3.0,
                        y - 5.0,
                        x + 3.0,
                        y + 5.0
                    ),
                    crate::emitters::EmitterModel::FloorLoop(_) => format!(
                        "<rect x=\"{:.1}\" y=\"{:.1}\" width=\"16\" height=\"16\" fill=\"#ffffff\" stroke=\"#000000\" stroke-width=\"1.5\"/>\
                         <path d=\"M{:.1},{:.1} h10 v3 h-10 v3 h10 v3 h-10\" fill=\"none\" stroke=\"#000000\"/>",
                        x - 8.0,
                        y - 8.0,
                        x - 5.0,
                        y - 4.5
                    ),
                    crate::emitters::EmitterModel::Terminal(_) => format!(
                        "<circle cx=\"{x:.1}\" cy=\"{y:.1}\" r=\"7\" fill=\"#ffffff\" stroke=\"#000000\" stroke-width=\"1.5\"/>\
                         <line x1=\"{:.1}\" y1=\"{y:.1}\" x2=\"{:.1}\" y2=\"{y:.1}\" stroke=\"#000000\"/>",
                        x - 5.0,
                        x + 5.0
                    ),
                };
                w!(out, "<g class=\"emitter\" data-emitter=\"{}\">{shape}</g>", n.id);
                let index = if sol.index_emitter == Some(n.id) { " · index circuit" } else { "" };
                node_labels.push((
                    (x, y),
                    vec![
                        (format!("{} ({})", e.name, n.id), "lb"),
                        (format!("{}{index}", emitter_caption(sol, n.id)), "sm"),
                    ],
                ));
            }
        }
    }

    // Labels, most important first: emitters, headers and source, risers,
    // then the run sizes.
    for ((x, y), lines) in &node_labels {
        labels.place_node(&mut texts, *x, *y, lines);
    }
    for ((x, y), text) in &riser_labels {
        labels.place_node(&mut texts, *x, *y, &[(text.clone(), "sz")]);
    }
    for (r, pxs) in &polys {
        let Some(size) = sol.run_pipes(r.id).find(|x| x.side == Side::Supply).map(|x| x.size.to_owned()) else {
            continue;
        };
        let mut segs: Vec<&[(f64, f64)]> = pxs.windows(2).collect();
        segs.sort_by(|a, b| seg_len(b).total_cmp(&seg_len(a)));
        labels.place_on_segments(&mut texts, &segs, &format!("{} {size}", r.id));
    }
    out.push_str(&texts);

    // Scale bar and legend along the lower edge.
    let bar_m = nice_step(span_x, 5.0);
    let bar_px = bar_m * scale;
    let by = height - 22.0;
    w!(
        out,
        "<g class=\"scale\"><line x1=\"16\" y1=\"{by:.1}\" x2=\"{:.1}\" y2=\"{by:.1}\" stroke=\"#000000\" stroke-width=\"2\"/>\
         <line x1=\"16\" y1=\"{:.1}\" x2=\"16\" y2=\"{:.1}\" stroke=\"#000000\"/><line x1=\"{:.1}\" y1=\"{:.1}\" x2=\"{:.1}\" y2=\"{:.1}\" stroke=\"#000000\"/>\
         <text x=\"16\" y=\"{:.1}\" class=\"lg\">{} m · north up</text></g>",
        16.0 + bar_px,
        by - 4.0,
        by + 4.0,
        16.0 + bar_px,
        by - 4.0,
        16.0 + bar_px,
        by + 4.0,
        by + 14.0,
        fmt_num(bar_m)
    );
    legend(&mut out, WIDTH - 250.0, height - 36.0, &format!("vscale-{}", level.id));
    out.push_str("</svg>");
    out
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

/// Emitters downstream of `node` in the supply tree (including itself).
fn downstream_emitters(p: &Project, topo: &Topology, node: NodeId) -> Vec<NodeId> {
    let mut out = Vec::new();
    let mut stack = vec![node];
    while let Some(n) = stack.pop() {
        if matches!(p.node(n).map(|x| &x.kind), Some(NodeKind::Emitter(_))) {
            out.push(n);
        }
        stack.extend(topo.children_of(n).iter().map(|tr| tr.down));
    }
    out
}

/// The riser elevation across all levels (`class="riser-elevation"`):
/// levels as horizontal lines at their elevations, vertical runs between
/// them in one column per riser position, and at each riser node the
/// horizontal runs leaving it with the emitters and load they serve.
#[allow(clippy::too_many_lines)] // reason: one drawing, layer by layer
pub(super) fn riser_elevation(p: &Project, sol: &Solution, topo: &Topology) -> String {
    const WIDTH: f64 = 720.0;
    let mut levels: Vec<&Level> = p.levels.iter().collect();
    levels.sort_by(|a, b| a.elevation_m.total_cmp(&b.elevation_m));
    let verticals: Vec<&Run> = p.runs().filter(|r| p.is_vertical(r)).collect();
    // Columns: one per plan position of the vertical runs (0.1 m grid).
    let key = |q: PlanPoint| ((q.x_m * 10.0).round() as i64, (q.y_m * 10.0).round() as i64);
    let mut columns: BTreeMap<(i64, i64), Vec<&Run>> = BTreeMap::new();
    for r in &verticals {
        let Some(a) = p.node(r.a) else { continue };
        columns.entry(key(a.pos)).or_default().push(r);
    }
    let (z_min, z_max) = levels
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), l| (lo.min(l.elevation_m), hi.max(l.elevation_m)));
    let span = (z_max - z_min).max(1.0);
    let storey_px = 78.0;
    let plot_h = if levels.len() > 1 { storey_px * (levels.len() - 1) as f64 } else { 0.0 };
    let (top, bottom_pad) = (34.0, 40.0);
    let height = top + plot_h + bottom_pad + 30.0;
    let y_of = |z: f64| top + (z_max - z) / span * plot_h;
    let mut out = String::new();
    w!(
        out,
        "<svg class=\"riser-elevation\" xmlns=\"http://www.w3.org/2000/svg\" viewBox=\"0 0 {WIDTH} {height:.0}\" width=\"{WIDTH}\" \
         height=\"{height:.0}\" role=\"img\" aria-label=\"Riser elevation\"><rect x=\"0.5\" y=\"0.5\" width=\"719\" height=\"{:.0}\" \
         fill=\"#ffffff\" stroke=\"#cccccc\"/>",
        height - 1.0
    );
    for l in &levels {
        let y = y_of(l.elevation_m);
        w!(
            out,
            "<g class=\"level-line\" data-level=\"{}\"><line x1=\"10\" y1=\"{y:.1}\" x2=\"710\" y2=\"{y:.1}\" stroke=\"#999999\" stroke-dasharray=\"2 3\"/>\
             <text x=\"12\" y=\"{:.1}\" class=\"lb\">{}</text><text x=\"12\" y=\"{:.1}\" class=\"sm\">{:+.2} m</text></g>",
            l.id,
            y - 14.0,
            esc(&l.name),
            y - 4.0,
            l.elevation_m
        );
    }
    if columns.is_empty() {
        w!(
            out,
            "<text x=\"200\" y=\"{:.1}\" class=\"lb\">No vertical runs: the network lies on one level.</text>",
            top + 10.0
        );
    }
    let col_x0 = 190.0;
    let col_dx = if columns.len() > 1 { (260.0 / (columns.len() - 1) as f64).min(110.0) } else { 0.0 };
    let mut riser_nodes: BTreeMap<NodeId, f64> = BTreeMap::new();
    for (ci, runs) in columns.values().enumerate() {
        let x = col_x0 + ci as f64 * col_dx;
        for r in runs {
            let (za, zb) = (p.elevation_m(r.a), p.elevation_m(r.b));
            let (y1, y2) = (y_of(za), y_of(zb));
            let (colour, w, dash) = run_style(velocity_margin(sol, r.id));
            let size =
                sol.run_pipes(r.id).find(|x| x.side == Side::Supply).map_or_else(String::new, |x| x.size.to_owned());
            let over = if velocity_margin(sol, r.id).is_some_and(|m| m > 1.0) { " over-limit" } else { "" };
            w!(
                out,
                "<g class=\"run vertical{over}\" data-run=\"{}\"><line x1=\"{x:.1}\" y1=\"{y1:.1}\" x2=\"{x:.1}\" y2=\"{y2:.1}\" stroke=\"#222222\" stroke-width=\"{:.1}\"/>\
                 <line x1=\"{x:.1}\" y1=\"{y1:.1}\" x2=\"{x:.1}\" y2=\"{y2:.1}\" stroke=\"{colour}\" stroke-width=\"{w:.1}\"{dash}/>\
                 <text x=\"{:.1}\" y=\"{:.1}\" class=\"sz\" text-anchor=\"end\">{} {}</text></g>",
                r.id,
                w + 2.0,
                x - 8.0,
                (y1 + y2) / 2.0 + 3.0,
                r.id,
                esc(&size)
            );
            riser_nodes.insert(r.a, x);
            riser_nodes.insert(r.b, x);
        }
    }
    // Riser nodes with the horizontal runs leaving them.
    for (&n, &x) in &riser_nodes {
        let y = y_of(p.elevation_m(n));
        w!(out, "<circle cx=\"{x:.1}\" cy=\"{y:.1}\" r=\"3.5\" fill=\"#222222\"/>");
        let mut stubs: Vec<String> = Vec::new();
        for run in p.runs_at(n) {
            let Some(r) = p.run(run) else { continue };
            if p.is_vertical(r) {
                continue;
            }
            let Some(other) = p.other_end(run, n) else { continue };
            let Some(on) = p.node(other) else { continue };
            let downstream = topo.tree_run(run).is_some_and(|tr| tr.up == n);
            if downstream {
                let ems = downstream_emitters(p, topo, other);
                let load: f64 = ems.iter().filter_map(|&e| sol.emitter(e)).map(|e| e.load_w).sum();
                stubs.push(format!(
                    "→ {}: {} emitter{}, {:.2} kW",
                    on.label(),
                    ems.len(),
                    if ems.len() == 1 { "" } else { "s" },
                    load / 1000.0
                ));
            } else {
                stubs.push(format!("← from {}", on.label()));
            }
        }
        for (i, s) in stubs.iter().enumerate() {
            let sy = y - 4.0 - 12.0 * (stubs.len() - 1 - i) as f64;
            w!(
                out,
                "<line x1=\"{x:.1}\" y1=\"{y:.1}\" x2=\"{:.1}\" y2=\"{y:.1}\" stroke=\"#222222\" stroke-width=\"1.5\"/>\
                 <text x=\"{:.1}\" y=\"{sy:.1}\" class=\"sm\">{}</text>",
                x + 22.0,
                x + 26.0,
                esc(s)
            );
        }
        w!(out, "<text x=\"{:.1}\" y=\"{:.1}\" class=\"sm\">{n}</text>", x + 5.0, y + 11.0);
    }
    legend(&mut out, WIDTH - 250.0, height - 36.0, "vscale-riser");
    out.push_str("</svg>");
    out
}

/// The pump chart (`class="pump-chart"`): the pump's maximum curve, its
/// control curve, the system curve through the operating point, the
/// operating point and the duty point. `None` without a pump result.
#[allow(clippy::too_many_lines)] // reason: one drawing, layer by layer
pub(super) fn pump_chart(sol: &Solution) -> Option<String> {
    const W: f64 = 560.0;
    const H: f64 = 320.0;
    let (l, r, t, b) = (58.0, 20.0, 16.0, 44.0);
    let pump = sol.pump.as_ref()?;
    let curve = pump.curve.as_ref()?;
    let q_op = pump.operating_flow_m3_h.max(0.0);
    let h_op = pump.operating_head_pa / 1000.0;
    let (q_d, h_d) = (pump.design_flow_m3_h, pump.duty_head_pa / 1000.0);
    let q_max = curve.max_flow_m3_h().max(q_op * 1.3).max(q_d * 1.3).max(0.1);
    // Head range with room above the curves for the legend.
    let h_max = curve.shutoff_head_kpa().max(h_d).max(h_op) * 1.35;
    if !(q_max.is_finite() && h_max.is_finite() && h_max > 0.0) {
        return None;
    }
    let sx = |q: f64| l + q / q_max * (W - l - r);
    let sy = |h: f64| H - b - h.clamp(0.0, h_max) / h_max * (H - t - b);
    let mut out = String::new();
    w!(
        out,
        "<svg class=\"pump-chart\" xmlns=\"http://www.w3.org/2000/svg\" viewBox=\"0 0 {W} {H}\" width=\"{W}\" height=\"{H}\" role=\"img\" \
         aria-label=\"Pump and system curves\"><rect x=\"0.5\" y=\"0.5\" width=\"{}\" height=\"{}\" fill=\"#ffffff\" stroke=\"#cccccc\"/>",
        W - 1.0,
        H - 1.0
    );
    // Grid and axes.
    let qs = nice_step(q_max, 6.0);
    let hs = nice_step(h_max, 6.0);
    let mut q = 0.0;
    while q <= q_max + 1e-9 {
        let x = sx(q);
        w!(
            out,
            "<line x1=\"{x:.1}\" y1=\"{t}\" x2=\"{x:.1}\" y2=\"{:.1}\" stroke=\"#eeeeee\"/><text x=\"{x:.1}\" y=\"{:.1}\" class=\"lg\" text-anchor=\"middle\">{}</text>",
            H - b,
            H - b + 14.0,
            fmt_tick(q)
        );
        q += qs;
    }
    let mut h = 0.0;
    while h <= h_max + 1e-9 {
        let y = sy(h);
        w!(
            out,
            "<line x1=\"{l}\" y1=\"{y:.1}\" x2=\"{:.1}\" y2=\"{y:.1}\" stroke=\"#eeeeee\"/><text x=\"{:.1}\" y=\"{:.1}\" class=\"lg\" text-anchor=\"end\">{}</text>",
            W - r,
            l - 6.0,
            y + 3.0,
            fmt_tick(h)
        );
        h += hs;
    }
    w!(
        out,
        "<line x1=\"{l}\" y1=\"{t}\" x2=\"{l}\" y2=\"{:.1}\" stroke=\"#000000\"/><line x1=\"{l}\" y1=\"{:.1}\" x2=\"{:.1}\" y2=\"{:.1}\" stroke=\"#000000\"/>\
         <text x=\"{:.1}\" y=\"{:.1}\" class=\"lb\" text-anchor=\"middle\">flow, m³/h</text>\
         <text x=\"14\" y=\"{:.1}\" class=\"lb\" text-anchor=\"middle\" transform=\"rotate(-90 14 {:.1})\">head, kPa</text>",
        H - b,
        H - b,
        W - r,
        H - b,
        (l + W - r) / 2.0,
        H - 8.0,
        (t + H - b) / 2.0,
        (t + H - b) / 2.0
    );
    let n = 80;
    let sample = |f: &dyn Fn(f64) -> Option<f64>| -> String {
        (0..=n)
            .filter_map(|i| {
                let q = q_max * f64::from(i) / f64::from(n);
                f(q).filter(|h| h.is_finite() && *h >= 0.0 && *h <= h_max).map(|h| format!("{:.1},{:.1}", sx(q), sy(h)))
            })
            .collect::<Vec<_>>()
            .join(" ")
    };
    let pump_pts = sample(&|q| curve.head_kpa(q).ok());
    w!(
        out,
        "<polyline class=\"pump-curve\" points=\"{pump_pts}\" fill=\"none\" stroke=\"#00224e\" stroke-width=\"2.5\"/>"
    );
    if !matches!(pump.control, PumpControl::FixedSpeed) && q_d > 0.0 {
        let ctrl_pts = sample(&|q| pump.control.head_kpa(curve, q, q_d).ok());
        w!(
            out,
            "<polyline class=\"control-curve\" points=\"{ctrl_pts}\" fill=\"none\" stroke=\"#00224e\" stroke-width=\"1.5\" stroke-dasharray=\"6 4\"/>"
        );
    }
    if q_op > 0.0 {
        let sys_pts = sample(&|q| Some(h_op * (q / q_op).powi(2)));
        w!(
            out,
            "<polyline class=\"system-curve\" points=\"{sys_pts}\" fill=\"none\" stroke=\"#7c7b78\" stroke-width=\"2\"/>"
        );
    }
    let (ox, oy) = (sx(q_op), sy(h_op));
    w!(
        out,
        "<circle class=\"operating-point\" cx=\"{ox:.1}\" cy=\"{oy:.1}\" r=\"5\" fill=\"#c8a000\" stroke=\"#000000\" stroke-width=\"1.5\"/>"
    );
    let (dx, dy) = (sx(q_d), sy(h_d));
    w!(
        out,
        "<path class=\"duty-point\" d=\"M{:.1},{dy:.1} L{dx:.1},{:.1} L{:.1},{dy:.1} L{dx:.1},{:.1} Z\" fill=\"none\" stroke=\"#000000\" stroke-width=\"1.5\"/>",
        dx - 8.0,
        dy - 8.0,
        dx + 8.0,
        dy + 8.0
    );
    // Legend.
    let lx = W - r - 220.0;
    w!(
        out,
        "<g class=\"chart-legend\" transform=\"translate({lx:.1},{:.1})\"><rect x=\"-6\" y=\"-12\" width=\"222\" height=\"80\" fill=\"#ffffff\" stroke=\"#cccccc\"/>\
         <line x1=\"0\" y1=\"0\" x2=\"24\" y2=\"0\" stroke=\"#00224e\" stroke-width=\"2.5\"/><text x=\"30\" y=\"3\" class=\"lg\">pump, maximum curve</text>\
         <line x1=\"0\" y1=\"14\" x2=\"24\" y2=\"14\" stroke=\"#00224e\" stroke-width=\"1.5\" stroke-dasharray=\"6 4\"/><text x=\"30\" y=\"17\" class=\"lg\">pump under its control</text>\
         <line x1=\"0\" y1=\"28\" x2=\"24\" y2=\"28\" stroke=\"#7c7b78\" stroke-width=\"2\"/><text x=\"30\" y=\"31\" class=\"lg\">system (through the operating point)</text>\
         <circle cx=\"12\" cy=\"42\" r=\"4.5\" fill=\"#c8a000\" stroke=\"#000000\"/><text x=\"30\" y=\"45\" class=\"lg\">operating {:.2} m³/h, {:.1} kPa</text>\
         <path d=\"M6,56 L12,50 L18,56 L12,62 Z\" fill=\"#ffffff\" stroke=\"#000000\"/><text x=\"30\" y=\"59\" class=\"lg\">duty {:.2} m³/h, {:.1} kPa</text></g>",
        t + 16.0,
        q_op,
        h_op,
        q_d,
        h_d
    );
    out.push_str("</svg>");
    Some(out)
}

fn fmt_tick(x: f64) -> String {
    let s = format!("{x:.3}");
    s.trim_end_matches('0').trim_end_matches('.').to_owned()
}
