//! The riser elevation across all levels.

use std::collections::BTreeMap;

use super::{legend, run_style, velocity_margin};
use crate::design::{Side, Solution, topology::Topology};
use crate::project::{Level, NodeId, NodeKind, PlanPoint, Project, Run};
use crate::report::esc;

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
pub(in crate::report) fn riser_elevation(p: &Project, sol: &Solution, topo: &Topology) -> String {
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
