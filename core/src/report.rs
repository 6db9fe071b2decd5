//! The design report: one self-contained HTML file (inline CSS and SVG, no
//! scripts) that opens in any browser and prints cleanly to PDF.
//!
//! Contents, in order: project and design conditions with the key results;
//! a plan of every level and the riser elevation, runs coloured by velocity
//! margin v / v_limit on the viridis scale (over-limit runs thicker and
//! dashed); emitters and circuits; pipes; findings; the pump chart; water
//! volume and expansion vessel with the vessel's assumptions; the parts
//! list; assumptions, methods and sources; the cautions.
//!
//! Structure a test (or a script) can find: `<svg class="level-plan"
//! data-level="L1">`, `<svg class="riser-elevation">`, `<svg
//! class="pump-chart">`, `<tr data-emitter="N7">`, `<tr data-run="R3"
//! data-side="supply">`, `<tr data-part="…">`, `<section id="…">`. All user
//! text (names) is escaped with [`esc`]. The output is deterministic: the
//! same project gives the same bytes (no dates, no timings).

/// Append formatted text to a `String` (writing to a String cannot fail).
macro_rules! w {
    ($s:expr, $($arg:tt)*) => {{
        $s.push_str(&format!($($arg)*));
    }};
}

mod studies;
pub mod svg;

use crate::design::{FindingKind, ItemRef, Severity, Side, Solution};
use crate::emitters::{EmitterDetail, EmitterModel};
use crate::parts::{PartsList, vessel_nominal_size_l};
use crate::pipes;
use crate::project::{Mode, NodeKind, Project, ReturnLayout};
use crate::pump::PumpControl;

/// Escape text for HTML element content and attribute values.
#[must_use]
pub fn esc(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            c => out.push(c),
        }
    }
    out
}

/// The report's style sheet (inlined into the page: one self-contained file).
const CSS: &str = include_str!("report/report.css");

fn kw(x: f64) -> String {
    format!("{:.2} kW", x / 1000.0)
}

/// Studies beyond the first design that a report can include.
#[derive(Debug, Clone, Copy, Default)]
pub struct Studies<'a> {
    /// Supply-temperature sweep.
    pub sweep: Option<&'a crate::sweep::SweepResult>,
    /// Part-load cases and how many valves were closed.
    pub part_load: Option<(&'a [crate::sweep::PartLoadCase], usize)>,
    /// The levels' plan underlays, read from their files
    /// ([`svg::PlanUnderlays::read`]); none drawn without.
    pub underlays: Option<&'a svg::PlanUnderlays>,
}

/// The design report of a solved project as one HTML document.
#[must_use]
pub fn report_html(p: &Project, sol: &Solution, parts: &PartsList) -> String {
    report_html_with(p, sol, parts, Studies::default())
}

/// The design report with the sweep and part-load studies (section 10).
#[must_use]
pub fn report_html_with(p: &Project, sol: &Solution, parts: &PartsList, studies: Studies<'_>) -> String {
    let mut h = String::with_capacity(256 * 1024);
    let title = format!("Design report — {}", p.name);
    w!(
        h,
        "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n\
         <meta name=\"generator\" content=\"flowrise {}\">\n<title>{}</title>\n<style>{CSS}</style>\n</head>\n<body>\n",
        env!("CARGO_PKG_VERSION"),
        esc(&title)
    );
    w!(h, "<header><h1>{}</h1>", esc(&title));
    let mode = match p.settings.mode {
        Mode::DesignFollowsLayout => "design (sizes and presettings chosen by the design)",
        Mode::Installed => "installed (sizes and presettings as stored)",
    };
    w!(
        h,
        "<p class=\"sub\">Two-pipe hydronic heating network · produced by flowrise {} from the project file (revision {}) · mode: {mode}</p></header>\n",
        env!("CARGO_PKG_VERSION"),
        p.revision
    );
    h.push_str(
        "<div class=\"caution-box\"><strong>Design aid.</strong> These results support a design; they do not replace it. \
         Pressures, temperatures, safety devices and materials follow local codes and licensed practice (EN 12828 or the \
         local equivalent). See <a href=\"#cautions\">Cautions</a>.</div>\n",
    );
    conditions(&mut h, p, sol, parts);
    drawings(&mut h, p, sol, studies.underlays);
    emitters_table(&mut h, p, sol);
    pipes_table(&mut h, sol);
    devices_table(&mut h, sol);
    findings_table(&mut h, sol);
    pump_section(&mut h, sol);
    circuits_section(&mut h, sol);
    vessel_section(&mut h, sol);
    parts_section(&mut h, parts);
    commissioning_section(&mut h, p, sol);
    studies::studies_section(&mut h, p, studies);
    methods(&mut h, p, parts);
    cautions(&mut h);
    w!(
        h,
        "<footer>{} · flowrise {} · end of report</footer>\n</body>\n</html>\n",
        esc(&p.name),
        env!("CARGO_PKG_VERSION")
    );
    h
}

fn kv_row(h: &mut String, key: &str, value: &str) {
    w!(h, "<tr><th>{key}</th><td>{value}</td></tr>");
}

fn conditions(h: &mut String, p: &Project, sol: &Solution, parts: &PartsList) {
    let s = &p.settings;
    h.push_str("<section id=\"conditions\"><h2>1 Project and design conditions</h2><div class=\"cols\"><div><h3>Design conditions</h3><table class=\"kv\">");
    kv_row(h, "Project", &esc(&p.name));
    kv_row(h, "Supply / return temperature", &format!("{:.1} / {:.1} °C", s.supply_c, s.return_c));
    kv_row(h, "Default room temperature", &format!("{:.1} °C", s.room_c));
    let layout = match s.return_layout {
        ReturnLayout::Direct => "direct return",
        ReturnLayout::Reverse => "reverse return",
    };
    kv_row(h, "Return layout (default)", layout);
    for class in crate::project::PipeClass::ALL {
        let series = pipes::find_series(s.series.get(class))
            .map_or_else(|_| esc(s.series.get(class)), |x| esc(&format!("{} ({})", x.name, x.standard)));
        kv_row(h, &format!("Pipe series, {}", class.name()), &series);
    }
    kv_row(
        h,
        "Velocity limits (main / branch / connection)",
        &format!(
            "{:.2} / {:.2} / {:.2} m/s (common practice)",
            s.velocity_limit_m_s.main, s.velocity_limit_m_s.branch, s.velocity_limit_m_s.connection
        ),
    );
    kv_row(h, "Pressure-gradient limit", &format!("{:.0} Pa/m (common practice)", s.gradient_limit_pa_m));
    if let Some(g) = s.controlled_gradient_limit_pa_m {
        kv_row(h, "Pressure-gradient limit behind Δp controllers", &format!("{g:.0} Pa/m"));
    }
    kv_row(h, "Pump head margin", &format!("{:.0} % (common practice)", s.head_margin_fraction * 100.0));
    kv_row(h, "Minimum index-valve Δp", &format!("{:.1} kPa (common practice)", s.min_valve_dp_pa / 1000.0));
    kv_row(h, "Fill temperature", &format!("{:.1} °C", s.fill_temperature_c));
    kv_row(h, "Safety valve set pressure", &format!("{:.1} bar", s.safety_valve_bar));
    kv_row(h, "Levels", &p.levels.len().to_string());
    h.push_str("</table></div><div><h3>Key results</h3><table class=\"kv\">");
    kv_row(h, "Emitters", &sol.emitters.len().to_string());
    kv_row(h, "Total design heat load", &kw(sol.heat_load_w));
    if let Some(pump) = &sol.pump {
        kv_row(
            h,
            "Design flow",
            &format!("{:.0} l/h ({:.3} m³/h)", pump.design_flow_m3_h * 1000.0, pump.design_flow_m3_h),
        );
        kv_row(h, "Index circuit Δp", &format!("{:.1} kPa", pump.index_dp_pa / 1000.0));
        kv_row(h, "Pump duty", &format!("{:.3} m³/h at {:.1} kPa", pump.design_flow_m3_h, pump.duty_head_pa / 1000.0));
        kv_row(
            h,
            "Operating point",
            &format!("{:.3} m³/h at {:.1} kPa", pump.operating_flow_m3_h, pump.operating_head_pa / 1000.0),
        );
        kv_row(h, "Hydraulic power", &format!("{:.1} W", pump.hydraulic_power_w));
    }
    let index = sol.index_emitter.and_then(|n| p.node(n)).map_or_else(|| "—".to_owned(), |n| esc(&n.label()));
    kv_row(h, "Index circuit", &index);
    kv_row(h, "System water volume", &format!("{:.1} l", sol.water_volume_l));
    if let Some(v) = &sol.vessel {
        let chosen = vessel_nominal_size_l(v.nominal_volume_l)
            .map_or_else(|| "several vessels".to_owned(), |n| format!("{n:.0} l"));
        kv_row(h, "Expansion vessel", &format!("{chosen} (minimum {:.1} l, EN 12828)", v.nominal_volume_l));
    }
    let total_pipe: f64 = sol.pipes.iter().map(|x| x.length_m).sum();
    kv_row(
        h,
        "Pipe, supply + return",
        &format!(
            "{total_pipe:.1} m net, {:.1} m to order",
            total_pipe * (1.0 + parts.options.cutting_allowance_fraction)
        ),
    );
    let (errors, warnings) = (
        sol.findings.iter().filter(|f| f.severity == Severity::Error).count(),
        sol.findings.iter().filter(|f| f.severity == Severity::Warning).count(),
    );
    kv_row(h, "Findings", &format!("{errors} errors, {warnings} warnings"));
    let solve = if sol.converged {
        format!("converged in {} iterations", sol.iterations)
    } else {
        "did not converge".to_owned()
    };
    kv_row(h, "Operating solve", &solve);
    h.push_str("</table></div></div></section>\n");
}

fn drawings(h: &mut String, p: &Project, sol: &Solution, underlays: Option<&svg::PlanUnderlays>) {
    h.push_str(
        "<section id=\"plans\"><h2>2 Level plans</h2><p class=\"muted\">Runs are drawn as one line for the supply + return \
         pair, coloured by the velocity margin v / v<sub>limit</sub> of the worse side (viridis scale, 0 → 1); runs over \
         their limit are drawn thicker and dashed. Labels: run id and supply size; emitters with their load and presetting. \
         ▲/▼ marks a riser to the level above or below.</p>",
    );
    let mut levels: Vec<_> = p.levels.iter().collect();
    levels.sort_by(|a, b| b.elevation_m.total_cmp(&a.elevation_m));
    for level in levels {
        let count = p.nodes().filter(|n| n.level == level.id && matches!(n.kind, NodeKind::Emitter(_))).count();
        let underlay = underlays.and_then(|u| u.levels.get(&level.id));
        let missing = match (underlay, &level.underlay) {
            (Some(Err(e)), Some(u)) => {
                format!(" · <span class=\"warn\">plan underlay {} not drawn: {}</span>", esc(&u.path), esc(e))
            }
            _ => String::new(),
        };
        w!(
            h,
            "<figure class=\"plan\" data-level=\"{}\"><figcaption><strong>{}</strong> ({}) · elevation {:+.2} m · {count} emitter{}{missing}</figcaption>{}</figure>\n",
            level.id,
            esc(&level.name),
            level.id,
            level.elevation_m,
            if count == 1 { "" } else { "s" },
            svg::level_plan(p, sol, level, underlay.and_then(|u| u.as_ref().ok()))
        );
    }
    h.push_str("</section>\n<section id=\"riser\"><h2>3 Riser elevation</h2><p class=\"muted\">Levels at their elevations; vertical runs between them, one column per riser position, with the horizontal runs that leave each riser node.</p>");
    w!(h, "<figure class=\"elevation\">{}</figure></section>\n", svg::riser_elevation(p, sol, &sol.topology));
}

fn emitter_kind(p: &Project, sol_detail: Option<&EmitterDetail>, id: crate::project::NodeId) -> String {
    let Some(NodeKind::Emitter(e)) = p.node(id).map(|n| &n.kind) else { return String::new() };
    match (&e.model, sol_detail) {
        (EmitterModel::Radiator(spec), Some(EmitterDetail::Radiator(r))) => {
            format!("radiator {}, {}×{}, Φn {:.0} W", spec.type_code, spec.height_mm, r.length_mm, r.nominal_output_w)
        }
        (EmitterModel::Radiator(spec), _) => format!("radiator {} · {} mm", spec.type_code, spec.height_mm),
        (EmitterModel::FloorLoop(spec), Some(EmitterDetail::FloorLoop(f))) => {
            format!("floor loop, {:.1} m², {:.0} m, surface {:.1} °C", spec.area_m2, f.loop_length_m, f.mean_surface_c)
        }
        (EmitterModel::FloorLoop(spec), _) => format!("floor loop · {:.1} m²", spec.area_m2),
        (EmitterModel::Terminal(spec), _) => format!("terminal · {:.0} W nominal", spec.nominal_output_w),
    }
}

fn emitters_table(h: &mut String, p: &Project, sol: &Solution) {
    w!(
        h,
        "<section id=\"emitters\" class=\"page\"><h2>4 Emitters and circuits</h2><p class=\"muted\">Circuit Δp: source → emitter → source with the \
         valve fully open. Valve Δp: across the valve at its presetting at design flow; the lockshield is set with it \
         (its last step is fully open). Authority: valve Δp / pump head available. Flow and output: operating solve, its \
         deviation from design within ±{tol:.0} % unless a finding says otherwise. The index circuit is shaded.</p>\
         <table class=\"emitters\"><thead><tr><th>id</th><th>name</th><th>level</th><th>emitter</th><th class=\"n\">load<br>W</th>\
         <th class=\"n\">design<br>l/h</th><th class=\"n\">return<br>°C</th><th class=\"n\">circuit<br>Δp kPa</th><th class=\"n\">valve<br>Δp kPa</th>\
         <th class=\"n\">pre-<br>set</th><th class=\"n\">Kv<br>m³/h</th><th class=\"n\">lock-<br>shield</th><th class=\"n\">auth-<br>ority</th><th class=\"n\">flow<br>l/h</th><th class=\"n\">dev.<br>%</th><th class=\"n\">output<br>W</th></tr></thead><tbody>",
        tol = p.settings.flow_tolerance_fraction * 100.0,
    );
    for e in &sol.emitters {
        let class = if sol.index_emitter == Some(e.id) { " class=\"index\"" } else { "" };
        w!(
            h,
            "<tr data-emitter=\"{}\"{class}><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td class=\"n\">{:.0}</td><td class=\"n\">{:.1}</td>\
             <td class=\"n\">{:.1}</td><td class=\"n\">{:.2}</td><td class=\"n\">{:.2}</td><td class=\"n\">{}</td><td class=\"n\">{:.3}</td>\
             <td class=\"n\">{}</td><td class=\"n\">{:.2}</td><td class=\"n\">{:.1}</td><td class=\"n\">{:+.1}</td><td class=\"n\">{:.0}</td></tr>",
            e.id,
            e.id,
            esc(&e.name),
            esc(&e.level),
            esc(&emitter_kind(p, e.detail.as_ref(), e.id)),
            e.load_w,
            e.design_flow_l_h,
            e.design_return_c,
            e.circuit_dp_open_pa / 1000.0,
            e.valve_dp_pa / 1000.0,
            esc(&e.presetting),
            e.valve_kv_m3_h,
            esc(&e.lockshield),
            e.authority,
            e.flow_l_h,
            e.flow_deviation * 100.0,
            e.output_w
        );
    }
    h.push_str("</tbody></table></section>\n");
}

fn pipes_table(h: &mut String, sol: &Solution) {
    h.push_str(
        "<section id=\"pipes\"><h2>5 Pipes</h2><table class=\"pipes\"><thead><tr><th>run</th><th>side</th><th>class</th><th>series</th><th>size</th>\
         <th class=\"n\">length m</th><th class=\"n\">flow l/h</th><th class=\"n\">v m/s</th><th class=\"n\">v<sub>limit</sub></th>\
         <th class=\"n\">v / v<sub>limit</sub></th><th class=\"n\">Pa/m</th><th class=\"n\">ζ</th><th class=\"n\">Δp kPa</th></tr></thead><tbody>",
    );
    for x in &sol.pipes {
        let ratio = if x.velocity_limit_m_s > 0.0 { x.velocity_m_s / x.velocity_limit_m_s } else { 0.0 };
        let c = svg::viridis(ratio);
        let side = match x.side {
            Side::Supply => "supply",
            Side::Return => "return",
        };
        let series =
            pipes::find_series(x.series).map_or_else(|_| x.series.to_owned(), |s| s.material.label().to_owned());
        let over = if ratio > 1.0 { " class=\"over\"" } else { "" };
        w!(
            h,
            "<tr data-run=\"{}\" data-side=\"{side}\"{over}><td>{}</td><td>{side}</td><td>{}</td><td>{}</td><td>{}</td><td class=\"n\">{:.2}</td>\
             <td class=\"n\">{:.1}</td><td class=\"n\">{:.3}</td><td class=\"n\">{:.2}</td>\
             <td class=\"n\"><span class=\"swatch\" style=\"background:#{:02x}{:02x}{:02x}\"></span>{:.2}</td>\
             <td class=\"n\">{:.1}</td><td class=\"n\">{:.2}</td><td class=\"n\">{:.3}</td></tr>",
            x.run,
            x.run,
            x.class.name(),
            esc(&series),
            esc(x.size),
            x.length_m,
            x.flow_l_h,
            x.velocity_m_s,
            x.velocity_limit_m_s,
            c[0],
            c[1],
            c[2],
            ratio,
            x.gradient_pa_m,
            x.zeta,
            x.dp_pa / 1000.0
        );
    }
    h.push_str("</tbody></table></section>\n");
}

fn devices_table(h: &mut String, sol: &Solution) {
    if sol.devices.is_empty() {
        return;
    }
    h.push_str(
        "<section id=\"devices\"><h3>Balancing devices on runs</h3><p class=\"muted\">A device makes its branch a zone: \
         the emitters behind it are balanced against the Δp it leaves them. A Δp controller holds the branch Δp (supply at \
         the branch entry to its own inlet) at its set-point within its proportional band.</p><table><thead><tr><th>run</th>\
         <th>device</th><th>model</th><th>setting</th><th class=\"n\">Kv m³/h</th><th class=\"n\">design l/h</th>\
         <th class=\"n\">flow l/h</th><th class=\"n\">Δp kPa</th><th class=\"n\">branch Δp kPa</th><th>state</th></tr></thead><tbody>",
    );
    for d in &sol.devices {
        let flag = if sol.has_finding(ItemRef::Run(d.run), &FindingKind::DEVICE) { " class=\"over\"" } else { "" };
        w!(
            h,
            "<tr data-run=\"{}\"{flag}><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td class=\"n\">{:.2}</td><td class=\"n\">{:.0}</td>\
             <td class=\"n\">{:.0}</td><td class=\"n\">{:.1}</td><td class=\"n\">{:.1}</td><td>{}</td></tr>",
            d.run,
            d.run,
            esc(d.kind),
            esc(&d.family),
            esc(&d.setting),
            d.kv_m3_h,
            d.design_flow_l_h,
            d.flow_l_h,
            d.dp_pa / 1000.0,
            d.held_dp_pa / 1000.0,
            d.state.label()
        );
    }
    h.push_str("</tbody></table></section>\n");
}

fn findings_table(h: &mut String, sol: &Solution) {
    h.push_str("<section id=\"findings\"><h2>6 Findings</h2>");
    if sol.findings.is_empty() {
        h.push_str("<p>No errors or warnings: every pipe is within its limits, every emitter gets its design flow and every valve has a presetting.</p></section>\n");
        return;
    }
    h.push_str("<table class=\"findings\"><thead><tr><th>severity</th><th>item</th><th>what and how to fix it</th></tr></thead><tbody>");
    for f in &sol.findings {
        let sev = match f.severity {
            Severity::Error => "error",
            Severity::Warning => "warning",
            Severity::Note => "note",
        };
        w!(
            h,
            "<tr class=\"sev-{sev}\" data-item=\"{}\"><td class=\"sev\">{sev}</td><td>{}</td><td>{}</td></tr>",
            f.item,
            f.item,
            esc(&f.message)
        );
    }
    h.push_str("</tbody></table></section>\n");
}

fn pump_section(h: &mut String, sol: &Solution) {
    h.push_str("<section id=\"pump\"><h2>7 Pump</h2>");
    let Some(pump) = &sol.pump else {
        h.push_str("<p>No pump duty: the design did not reach the pump (see the findings).</p></section>\n");
        return;
    };
    let control = match pump.control {
        PumpControl::FixedSpeed => "fixed speed (maximum curve)".to_owned(),
        PumpControl::ConstantDp { setpoint_kpa } => format!("constant Δp, set-point {setpoint_kpa:.1} kPa"),
        PumpControl::ProportionalDp { setpoint_kpa } => {
            format!("proportional Δp, {setpoint_kpa:.1} kPa at design flow, half of it at zero flow")
        }
    };
    h.push_str("<div class=\"cols\"><div style=\"flex: 2 1 420px\">");
    if let Some(chart) = svg::pump_chart(sol.pump.as_ref()) {
        w!(h, "<figure>{chart}</figure>");
    }
    h.push_str("</div><div><table class=\"kv\">");
    kv_row(h, "Control", &control);
    kv_row(h, "Design flow", &format!("{:.3} m³/h", pump.design_flow_m3_h));
    kv_row(h, "Index circuit Δp", &format!("{:.2} kPa", pump.index_dp_pa / 1000.0));
    kv_row(h, "Duty head (with margin)", &format!("{:.2} kPa", pump.duty_head_pa / 1000.0));
    kv_row(h, "Head available for balancing", &format!("{:.2} kPa", pump.available_pa / 1000.0));
    kv_row(
        h,
        "Operating point",
        &format!("{:.3} m³/h at {:.2} kPa", pump.operating_flow_m3_h, pump.operating_head_pa / 1000.0),
    );
    kv_row(h, "Hydraulic power", &format!("{:.1} W", pump.hydraulic_power_w));
    if let Some(c) = &pump.curve {
        let pts: Vec<String> = c.points().iter().map(|(q, hh)| format!("{q:.2} m³/h @ {hh:.1} kPa")).collect();
        kv_row(h, "Pump curve points", &pts.join("; "));
    }
    h.push_str(
        "</table><p class=\"muted\">The system curve is the quadratic through the operating point (a closed circuit has no \
         static head; buoyancy in the risers is small and left out of the drawing).</p></div></div></section>\n",
    );
}

/// Pumped circuits: per circuit its temperatures, heat, flows on both
/// sides of its valve, pump duty and chart.
fn circuits_section(h: &mut String, sol: &Solution) {
    if sol.circuits.len() < 2 {
        return;
    }
    h.push_str(
        "<section id=\"circuits\"><h3>Pumped circuits</h3><p class=\"muted\">Each pumped circuit is designed at its own \
         temperatures with its own pump and index circuit. A mixing or injection valve holds the circuit's supply \
         temperature by drawing the primary flow that carries its heat: primary flow · c<sub>p</sub> · (feed supply − \
         return) = heat (c<sub>p</sub> the IAPWS-IF97 mean over the interval). The primary's pump above serves the \
         heat source's circuit.</p><table><thead><tr><th>circuit</th><th>connection</th><th>°C</th><th class=\"n\">heat kW</th>\
         <th class=\"n\">circuit l/h</th><th class=\"n\">primary l/h</th><th class=\"n\">mixed return °C</th>\
         <th class=\"n\">pump duty</th><th class=\"n\">feed Δp kPa (given / needed)</th></tr></thead><tbody>",
    );
    for c in &sol.circuits[1..] {
        let connection = c.connection.map_or("", crate::project::CircuitConnection::name);
        let duty = c.pump.as_ref().map_or_else(String::new, |p| {
            format!("{:.2} m³/h at {:.1} kPa", p.design_flow_m3_h, p.duty_head_pa / 1000.0)
        });
        let feed = if c.feed_dp_needed_pa > 0.0 {
            format!("{:.1} / {:.2}", c.feed_dp_available_pa / 1000.0, c.feed_dp_needed_pa / 1000.0)
        } else {
            "—".to_owned()
        };
        let flag = if sol.has_finding(ItemRef::Node(c.root), &[FindingKind::CircuitFeedShort]) {
            " class=\"over\""
        } else {
            ""
        };
        w!(
            h,
            "<tr data-node=\"{}\"{flag}><td>{} ({})</td><td>{}</td><td>{:.0}/{:.0}</td><td class=\"n\">{:.2}</td>\
             <td class=\"n\">{:.0}</td><td class=\"n\">{:.0}</td><td class=\"n\">{:.1}</td><td class=\"n\">{}</td><td class=\"n\">{}</td></tr>",
            c.root,
            esc(&c.name),
            c.root,
            connection,
            c.supply_c,
            c.return_c,
            c.heat_w / 1000.0,
            c.flow_l_h,
            c.primary_flow_l_h,
            c.operating_return_c,
            duty,
            feed
        );
    }
    h.push_str("</tbody></table><div class=\"cols\">");
    for c in &sol.circuits[1..] {
        if let Some(chart) = svg::pump_chart(c.pump.as_ref()) {
            w!(h, "<figure>{chart}<figcaption>Pump of {} ({})</figcaption></figure>", esc(&c.name), c.root);
        }
    }
    h.push_str("</div></section>\n");
}

fn vessel_section(h: &mut String, sol: &Solution) {
    h.push_str("<section id=\"vessel\"><h2>8 Water volume and expansion vessel</h2>");
    w!(h, "<p>System water volume (pipes, emitters and source): <strong>{:.1} l</strong>.</p>", sol.water_volume_l);
    let Some(v) = &sol.vessel else {
        h.push_str("<p>The expansion vessel was not sized (see the findings).</p></section>\n");
        return;
    };
    h.push_str("<div class=\"cols\"><div><table class=\"kv\">");
    kv_row(
        h,
        "Fill / maximum temperature",
        &format!("{:.1} / {:.1} °C", v.input.fill_temperature_c, v.input.max_temperature_c),
    );
    kv_row(h, "Expansion coefficient e", &format!("{:.4}", v.expansion_coefficient));
    kv_row(h, "Expansion volume V<sub>e</sub>", &format!("{:.2} l", v.expansion_volume_l));
    kv_row(h, "Water reserve V<sub>wr</sub>", &format!("{:.2} l", v.water_reserve_l));
    kv_row(h, "Static height", &format!("{:.1} m", v.input.static_height_m));
    kv_row(h, "Static pressure p<sub>st</sub>", &format!("{:.2} bar", v.static_pressure_bar));
    kv_row(h, "Pre-charge p<sub>0</sub>", &format!("{:.2} bar", v.precharge_pressure_bar));
    kv_row(h, "Final pressure p<sub>e</sub>", &format!("{:.2} bar", v.final_pressure_bar));
    kv_row(h, "Fill pressure", &format!("{:.2} bar", v.fill_pressure_bar));
    kv_row(h, "Minimum nominal volume V<sub>n</sub>", &format!("{:.1} l", v.nominal_volume_l));
    let chosen = vessel_nominal_size_l(v.nominal_volume_l).map_or_else(
        || "above 300 l: several vessels".to_owned(),
        |n| format!("<strong>{n:.0} l</strong> (next common size, common practice)"),
    );
    kv_row(h, "Vessel chosen", &chosen);
    h.push_str("</table></div><div><h3>Assumptions of the vessel sizing</h3><ul class=\"notes\">");
    for a in &v.assumptions {
        w!(h, "<li>{}</li>", esc(a));
    }
    h.push_str("</ul></div></div></section>\n");
}

fn commissioning_section(h: &mut String, p: &Project, sol: &Solution) {
    let lines = crate::commissioning::schedule(p, sol);
    h.push_str(
        "<section id=\"commissioning\" class=\"page\"><h2>10 Commissioning schedule</h2><p class=\"muted\">Per valve: the \
         setting to set, the design flow through it and the Δp expected across it at that flow (IEC 60534 Kv law) — what \
         the commissioning engineer measures. Written as CSV by <code>flowrise commissioning FILE -o schedule.csv</code>.</p>\
         <table class=\"commissioning\"><thead><tr><th>level</th><th>item</th><th>name</th><th>device</th><th>family</th>\
         <th class=\"n\">setting</th><th class=\"n\">Kv<br>m³/h</th><th class=\"n\">design<br>l/h</th><th class=\"n\">Δp<br>kPa</th></tr></thead><tbody>",
    );
    for l in &lines {
        w!(
            h,
            "<tr data-valve=\"{}-{}\"><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td class=\"n\">{}</td>\
             <td class=\"n\">{:.3}</td><td class=\"n\">{:.1}</td><td class=\"n\">{:.2}</td></tr>",
            esc(&l.item),
            l.device.label(),
            esc(&l.level),
            esc(&l.item),
            esc(&l.name),
            l.device.label(),
            esc(&l.family),
            esc(&l.setting),
            l.kv_m3_h,
            l.design_flow_l_h,
            l.dp_kpa
        );
    }
    h.push_str("</tbody></table></section>\n");
}

fn parts_section(h: &mut String, parts: &PartsList) {
    w!(
        h,
        "<section id=\"parts\" class=\"page\"><h2>9 Parts list</h2><p class=\"muted\">Pipe lengths include a cutting allowance of {:.0} % (common practice). \
         The same list is written as CSV by <code>flowrise parts FILE -o parts.csv</code>.</p>\
         <table class=\"parts\"><thead><tr><th>category</th><th>item</th><th>size</th><th class=\"n\">quantity</th><th>unit</th><th>serves</th><th>note</th></tr></thead><tbody>",
        parts.options.cutting_allowance_fraction * 100.0
    );
    for (i, l) in parts.lines.iter().enumerate() {
        let qty = match l.unit {
            crate::parts::PartUnit::Metre => format!("{:.2}", l.quantity),
            crate::parts::PartUnit::Piece => format!("{:.0}", l.quantity),
        };
        w!(
            h,
            "<tr data-part=\"{i}\"><td>{}</td><td>{}</td><td>{}</td><td class=\"n\">{qty}</td><td>{}</td><td>{}</td><td>{}</td></tr>",
            l.category.label(),
            esc(&l.item),
            esc(&l.size),
            l.unit.symbol(),
            esc(&l.serves.join(" ")),
            esc(&l.note)
        );
    }
    h.push_str("</tbody></table><ul class=\"notes\">");
    for n in &parts.notes {
        w!(h, "<li>{}</li>", esc(n));
    }
    h.push_str("</ul></section>\n");
}

fn methods(h: &mut String, p: &Project, parts: &PartsList) {
    h.push_str("<section id=\"methods\"><h2>12 Assumptions, methods and sources</h2><dl class=\"methods\">");
    let items: [(&str, String); 14] = [
        (
            "Water properties",
            "Density and specific heat from IAPWS-IF97 (region 1), viscosity from the IAPWS 2008 formulation, through the \
             seuif97 library; supply pipes at the design supply temperature, return pipes at the design return temperature."
                .to_owned(),
        ),
        (
            "Design flow",
            "q_m = Φ / (c_p · (θs − θr)) per emitter, c_p at the mean water temperature; pipe flows accumulated over the supply \
             and return trees."
                .to_owned(),
        ),
        (
            "Pipe friction",
            "Darcy–Weisbach with the Colebrook–White friction factor (solved iteratively); laminar 64/Re; a smooth cubic \
             interpolation across the laminar–turbulent transition (flowrise's own engineering choice). Inner diameters and \
             roughness per pipe series (EN 10255, EN 1057, ISO 15875, ISO 22391, ISO 21003)."
                .to_owned(),
        ),
        (
            "Local losses",
            "Σζ·ρv²/2 for bends (Rennels & Hudson, Pipe Flow, 2012) and tees split or merging, run or branch leg with the design \
             flow split (Crane Technical Paper 410). Bends from the drawn geometry (turn ≥ 60° → one 90° bend, 20–60° → a 45° \
             bend); two bends (foot and head) per vertical run."
                .to_owned(),
        ),
        ("Valves", "Δp = 10⁵ · (Q/Kv)² · ρ/ρ₀ Pa with Q in m³/h (IEC 60534 definition of Kv).".to_owned()),
        (
            "Radiators",
            "EN 442: Φ = Φn · (ΔT_lm / 49.83 K)^n with ΔT_lm the logarithmic mean temperature difference and nominal conditions \
             75/65/20 °C; sizing picks the shortest catalog length whose nominal output covers the requirement."
                .to_owned(),
        ),
        (
            "Floor loops (EN 1264, simplified)",
            "Surface to room by the EN 1264-2 basic characteristic q = 8.92 · (θ_F,m − θi)^1.1 W/m² with the surface limits \
             29 °C (occupied), 33 °C (bathrooms), 35 °C (edge zones). Water to surface by a series-resistance model (covering, \
             screed above the pipe, the constriction between pipes, the pipe wall) instead of the standard's full characteristic \
             with its tabulated factors; downward losses and lead-pipe heat are neglected. Loop length = area / spacing + two \
             leads; loop Δp limit 25 kPa (common practice)."
                .to_owned(),
        ),
        ("Terminals", "Φ = Φ_nom · (ΔT_lm / ΔT_lm,nom)^n through the stated nominal conditions; fixed coil Kv.".to_owned()),
        (
            "Pipe sizing",
            format!(
                "The smallest size of the series meeting the velocity limit of the pipe's class and the pressure-gradient limit \
                 {:.0} Pa/m (both common practice; lower velocities next to rooms for noise){}.",
                p.settings.gradient_limit_pa_m,
                p.settings.controlled_gradient_limit_pa_m.map_or_else(String::new, |g| format!(
                    "; inside a branch held by a Δp controller (its run and everything it feeds) {:.0} Pa/m, so that the \
                     branch's own pipes stay a small share of the Δp the controller holds and the valves keep their authority \
                     when other rooms close",
                    g.min(p.settings.gradient_limit_pa_m)
                ))
            ),
        ),
        (
            "Index circuit, pump and balancing",
            format!(
                "Index circuit: the largest source → emitter → source Δp with the valves fully open, plus a minimum valve Δp of \
                 {:.1} kPa; pump duty = index Δp × (1 + {:.0} % margin, common practice). Each valve absorbs the head available \
                 minus its circuit's Δp: Kv_needed = Q / √Δp; the presetting is the valve's nearest step; authority = valve Δp / \
                 head available, warned below 0.3 (common practice 0.3–0.5). Buoyancy in risers: Δp = g · Δz · (ρ_return − ρ_supply).",
                p.settings.min_valve_dp_pa / 1000.0,
                p.settings.head_margin_fraction * 100.0
            ),
        ),
        (
            "Operating solve",
            "The Global Gradient Algorithm (Todini & Pilati, 1988) on the doubled network (supply and return pipes, emitter \
             valves and bodies, source and pump), with sizes, presettings and the pump curve fixed; each Newton step solves a \
             sparse symmetric positive definite system by Cholesky factorisation (faer) with a fill-reducing ordering. Emitter \
             outputs follow from the real flows."
                .to_owned(),
        ),
        (
            "Expansion vessel",
            "EN 12828 annex D method (expansion volume, water reserve, pre-charge and final pressure, Boyle–Mariotte); the \
             assumptions are listed in section 8."
                .to_owned(),
        ),
        (
            "Parts list",
            format!(
                "Cutting allowance {:.0} % (common practice); couplings per stock length (common practice: steel 6 m, copper 5 m, \
                 multilayer 5 m bars, PE-X/PE-RT coils); vessel rounded up to a common nominal size (common practice).",
                parts.options.cutting_allowance_fraction * 100.0
            ),
        ),
        (
            "Design assumptions",
            "No heat loss from the pipes; every emitter receives the source's supply temperature; the drawing colours use the \
             viridis colormap (van der Walt & Smith, SciPy 2015; stops from matplotlib 3.10.9), readable with colour-vision deficiency."
                .to_owned(),
        ),
    ];
    for (t, d) in items {
        w!(h, "<dt>{}</dt><dd>{}</dd>", esc(t), esc(&d));
    }
    h.push_str(
        "</dl><p class=\"muted\">Values marked “common practice” are rules of thumb of the trade, not code requirements; \
         check them against the codes that apply to the project.</p></section>\n",
    );
}

fn cautions(h: &mut String) {
    h.push_str(
        "<section id=\"cautions\"><h2>13 Cautions</h2><ul>\
         <li>The results are design aids. They support an engineer's design; they do not certify it.</li>\
         <li>Pressures, temperatures, safety devices (safety valve, expansion vessel, temperature limiters) and materials \
         must follow the local codes and licensed practice — EN 12828 in Europe or the local equivalent.</li>\
         <li>Hot surfaces can burn. Where vulnerable people live (children, older people, people who cannot move away from a \
         heat source), use low-surface-temperature emitters or guards.</li>\
         <li>Values marked “common practice” are rules of thumb, not code requirements.</li>\
         <li>Valve and emitter data in the bundled catalogs are illustrative; use the data of the products installed.</li>\
         </ul></section>\n",
    );
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn escaping_covers_markup_and_quotes() {
        assert_eq!(esc("<b>\"Tom's\" & co</b>"), "&lt;b&gt;&quot;Tom&#39;s&quot; &amp; co&lt;/b&gt;");
        assert_eq!(esc("Küche 3 °C"), "Küche 3 °C");
    }

    #[test]
    fn viridis_is_clamped_and_ends_at_the_published_endpoints() {
        // Endpoints: matplotlib 3.10.9 colormaps["viridis"] (see the table's doc).
        assert_eq!(svg::viridis(0.0), [68, 1, 84]);
        assert_eq!(svg::viridis(1.0), [253, 231, 37]);
        assert_eq!(svg::viridis(-3.0), svg::viridis(0.0));
        assert_eq!(svg::viridis(7.0), svg::viridis(1.0));
        assert_eq!(svg::viridis(f64::NAN), svg::viridis(0.0));
    }

    #[test]
    fn an_unsolved_project_still_gives_a_complete_document() {
        let p = Project::new("A <script> & \"quotes\"");
        let sol = Solution::default();
        let parts = crate::parts::parts_list(&p, &sol, &crate::parts::PartsOptions::default()).unwrap();
        let html = report_html(&p, &sol, &parts);
        assert!(!html.contains("<script>"), "names are escaped");
        assert!(html.contains("A &lt;script&gt; &amp; &quot;quotes&quot;"));
        assert!(html.contains("<svg class=\"level-plan\" data-level=\"L0\""));
        assert!(html.contains("<svg class=\"riser-elevation\""));
        assert!(html.trim_end().ends_with("</html>"));
    }
}
