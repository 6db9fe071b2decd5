//! Section 11 of the report: the supply-temperature sweep and the
//! part-load cases (when the caller ran them).

use super::{Studies, esc};
use crate::project::Project;

/// Section 11: the supply-temperature sweep and the part-load cases.
pub(super) fn studies_section(h: &mut String, p: &Project, studies: Studies<'_>) {
    h.push_str("<section id=\"studies\"><h2>11 Supply-temperature sweep and part load</h2>");
    match studies.sweep {
        None => h.push_str("<p class=\"muted\">Sweep not included (run it with <code>flowrise report --studies</code> or from the window).</p>"),
        Some(r) => {
            let why = match (r.limiting_constraint, &r.limiting_item) {
                (Some(c), Some(item)) => format!(" (limit: {} — {})", c.words(), esc(item)),
                (Some(c), None) => format!(" (limit: {})", c.words()),
                (None, _) => String::new(),
            };
            let verdict = match (r.lowest_supply_c, &r.limiting_emitter) {
                (Some(t), Some(e)) => format!("Every room is covered down to {t:.1} °C supply; {} falls short first below it{why}.", esc(e)),
                (Some(t), None) => format!("Every room is covered over the whole range, down to {t:.1} °C."),
                (None, Some(e)) => format!("{} is short already at the top of the range{why}.", esc(e)),
                (None, None) => "No point of the sweep could be designed.".to_owned(),
            };
            w!(
                h,
                "<p class=\"muted\">A room counts as covered when it gets its load with a water drop of at least {:.1} K \
                 (common practice for a heat pump), every pipe inside its velocity and gradient limits and the pump giving the \
                 head the index circuit needs.</p>",
                r.min_drop_k
            );
            w!(h, "<p class=\"sweep-verdict\">{verdict}</p>");
            w!(h, "<table class=\"sweep\"><thead><tr><th>supply °C</th>");
            let ids: Vec<&str> = r.points.first().map(|pt| pt.emitters.iter().map(|e| e.id.as_str()).collect()).unwrap_or_default();
            for id in &ids {
                let name = p.nodes().find(|n| n.id.to_string() == *id).map_or_else(|| (*id).to_owned(), crate::project::Node::label);
                w!(h, "<th>{}</th>", esc(&name));
            }
            h.push_str("</tr></thead><tbody>");
            for pt in r.points.iter().step_by(5.max(r.points.len() / 12)) {
                w!(h, "<tr data-supply=\"{:.1}\"><td>{:.1}</td>", pt.supply_c, pt.supply_c);
                for e in &pt.emitters {
                    w!(h, "<td>{:.0} %</td>", e.fraction * 100.0);
                }
                h.push_str("</tr>");
            }
            h.push_str("</tbody></table>");
            if r.upgrades.is_empty() {
                w!(h, "<p>No radiator upgrade is needed at {:.1} °C supply.</p>", r.target_c);
            } else {
                w!(
                    h,
                    "<p>Upgrades to cover every room at {:.1} °C supply (EN 442 nominal output at θs = {:.1} °C, θr = θs − {:.0} K, common practice):</p>\
                     <table class=\"upgrades\"><thead><tr><th>emitter</th><th>nominal now W</th><th>needed W</th></tr></thead><tbody>",
                    r.target_c,
                    r.target_c,
                    r.min_drop_k
                );
                for u in &r.upgrades {
                    w!(h, "<tr data-upgrade=\"{}\"><td>{} ({})</td><td>{:.0}</td><td>{:.0}</td></tr>", esc(&u.id), esc(&u.name), esc(&u.id), u.current_nominal_w, u.needed_nominal_w);
                }
                h.push_str("</tbody></table>");
            }
        }
    }
    match studies.part_load {
        None => h.push_str("<p class=\"muted\">Part load not included.</p>"),
        Some((cases, closed)) => {
            w!(
                h,
                "<p>Part load: {closed} emitter valves closed; the installed network solved for each pump control; with branch Δp controllers in the project, the same building designed without them follows for comparison. Valve Δp above about {:.0} kPa risks noise (common practice).</p>\
                 <table class=\"part-load\"><thead><tr><th>branch Δp controllers</th><th>pump control</th><th>pump flow l/h</th><th>pump head kPa</th><th>largest valve Δp kPa</th><th>largest over-supply</th></tr></thead><tbody>",
                crate::sweep::NOISE_DP_PA / 1000.0
            );
            for c in cases {
                let over = c.worst_over_supply();
                w!(
                    h,
                    "<tr><td>{}</td><td>{}</td><td>{:.0}</td><td>{:.1}</td><td>{:.1}</td><td>{:+.0} %</td></tr>",
                    if c.branch_controllers { "with" } else { "without" },
                    esc(&c.control),
                    c.pump_flow_l_h,
                    c.pump_head_kpa,
                    c.max_valve_dp_kpa,
                    over * 100.0
                );
            }
            h.push_str("</tbody></table>");
        }
    }
    h.push_str("</section>\n");
}
