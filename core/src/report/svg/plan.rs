//! The plan of one level.

use std::collections::BTreeSet;

use super::{
    LabelLine, Labels, PlanMap, Rect, fmt_num, legend, nice_step, polyline_points, run_style, seg_len, velocity_margin,
};
use crate::design::{Side, Solution};
use crate::project::{Level, NodeId, NodeKind, PlanPoint, Project, Run};
use crate::report::esc;

/// Short label of an emitter's model and design for the plan.
fn emitter_caption(sol: &Solution, id: NodeId) -> String {
    sol.emitter(id).map_or_else(String::new, |e| format!("{:.0} W · preset {}", e.load_w, e.presetting))
}

/// The plan of one level as an inline SVG (`class="level-plan"`,
/// `data-level="L1"`).
#[allow(clippy::too_many_lines)] // reason: one drawing, layer by layer
pub(in crate::report) fn level_plan(
    p: &Project,
    sol: &Solution,
    level: &Level,
    underlay: Option<&crate::underlay::LoadedUnderlay>,
) -> String {
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
    if let (Some(u), Some(loaded)) = (level.underlay.as_ref().filter(|u| !u.hidden), underlay) {
        out.push_str(&super::underlay::underlay_svg(u, loaded, &map, (WIDTH, height), level.id));
    }

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
            NodeKind::Circuit(c) => {
                // A pump (circle with a triangle) in a rounded box.
                w!(
                    out,
                    "<g class=\"circuit\" data-node=\"{}\"><rect x=\"{:.1}\" y=\"{:.1}\" width=\"24\" height=\"18\" rx=\"4\" fill=\"#ffffff\" stroke=\"#000000\" stroke-width=\"1.5\"/>\
                     <circle cx=\"{x:.1}\" cy=\"{y:.1}\" r=\"6\" fill=\"none\" stroke=\"#000000\"/>\
                     <path d=\"M{:.1},{:.1} l8,4 l-8,4 z\" fill=\"#000000\"/></g>",
                    n.id,
                    x - 12.0,
                    y - 9.0,
                    x - 4.0,
                    y - 4.0
                );
                node_labels.push((
                    (x, y),
                    vec![
                        (format!("{} ({})", c.name, n.id), "lb"),
                        (format!("{}, {:.0}/{:.0} °C", c.connection.name(), c.supply_c, c.return_c), "sm"),
                    ],
                ));
            }
            NodeKind::Separator(x_) => {
                w!(
                    out,
                    "<g class=\"separator\" data-node=\"{}\"><rect x=\"{:.1}\" y=\"{:.1}\" width=\"10\" height=\"26\" fill=\"#ffffff\" stroke=\"#000000\" stroke-width=\"1.5\"/>\
                     <line x1=\"{x:.1}\" y1=\"{:.1}\" x2=\"{x:.1}\" y2=\"{:.1}\" stroke=\"#000000\" stroke-dasharray=\"2 2\"/></g>",
                    n.id,
                    x - 5.0,
                    y - 13.0,
                    y - 10.0,
                    y + 10.0
                );
                node_labels.push((
                    (x, y),
                    vec![(format!("{} ({})", x_.name, n.id), "lb"), ("hydraulic separator".to_owned(), "sm")],
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
