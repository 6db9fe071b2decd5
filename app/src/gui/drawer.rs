//! The drawer (bottom, collapsible): pipes and emitters tables, findings,
//! the pump chart and the index-circuit pressure profile.

use std::collections::BTreeMap;

use egui::{Grid, RichText, ScrollArea, Ui};
use egui_plot::{Legend, Line, Plot, Points};
use flowrise_core::design::{FindingKind, ItemRef, LinkRole, Side, Solution};
use flowrise_core::project::Project;

mod emitter_table;

use super::findings_view::findings_list;
use super::intents::Intents;
use super::theme;

/// Drawer tabs.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Tab {
    /// Pipes table.
    Pipes,
    /// Emitters table.
    #[default]
    Emitters,
    /// Findings list.
    Findings,
    /// Pump chart.
    Pump,
    /// Index-circuit pressure profile.
    Profile,
    /// Parts list with its exports.
    Parts,
    /// Supply-temperature sweep.
    Sweep,
    /// Part-load scenario.
    PartLoad,
}

impl Tab {
    const ALL: [Self; 8] = [
        Self::Emitters,
        Self::Pipes,
        Self::Findings,
        Self::Pump,
        Self::Profile,
        Self::Parts,
        Self::Sweep,
        Self::PartLoad,
    ];
    fn name(self) -> &'static str {
        match self {
            Self::Pipes => "Pipes",
            Self::Emitters => "Emitters",
            Self::Findings => "Findings",
            Self::Pump => "Pump chart",
            Self::Profile => "Index circuit profile",
            Self::Parts => "Parts list",
            Self::Sweep => "Supply temperature sweep",
            Self::PartLoad => "Part load",
        }
    }
}

/// Drawer state (transient).
#[derive(Debug)]
pub struct DrawerState {
    /// Tab shown.
    pub tab: Tab,
    /// Sweep and part-load inputs and results.
    pub scenarios: super::scenarios::ScenarioState,
    /// The parts list shown, for (project revision, solution revision): it
    /// is made once per solve, not every frame.
    parts: Option<((u64, u64), Result<flowrise_core::parts::PartsList, String>)>,
    /// Pumped circuit whose pump the pump tab shows (0: the primary).
    pub pump_circuit: usize,
    /// Height of the closed drawer (its tab rows), measured each frame.
    closed_height: f32,
    /// Cells of the emitters table being typed in.
    table: emitter_table::TableEdits,
}

impl Default for DrawerState {
    fn default() -> Self {
        Self {
            tab: Tab::default(),
            scenarios: super::scenarios::ScenarioState::default(),
            parts: None,
            pump_circuit: 0,
            closed_height: 34.0,
            table: emitter_table::TableEdits::default(),
        }
    }
}

impl DrawerState {
    /// Drop results that belong to the previous document (New/Open): they
    /// are keyed by revision, and revisions restart with each document.
    pub fn forget_results(&mut self) {
        self.parts = None;
        self.scenarios.sweep = None;
        self.scenarios.part_load = None;
    }
}

/// The drawer's preferences: open or closed, and its height.
#[derive(Debug)]
pub struct DrawerView<'a> {
    /// Open.
    pub open: &'a mut bool,
    /// Height when open, points (kept across tabs and sessions).
    pub height: &'a mut f32,
}

/// Smallest height of the open drawer, points.
const MIN_OPEN_HEIGHT: f32 = 120.0;

/// The resize grip along the drawer's top edge: always visible, drag to
/// change the height.
fn grip(ui: &mut Ui, height: &mut f32, max_h: f32) {
    let (rect, resp) = ui.allocate_exact_size(egui::vec2(ui.available_width(), 9.0), egui::Sense::drag());
    resp.widget_info(|| egui::WidgetInfo::labeled(egui::Role::Splitter, true, "Drawer height"));
    let resp = resp.on_hover_text("Drag to change the drawer's height");
    if resp.hovered() || resp.dragged() {
        ui.ctx().set_cursor_icon(egui::CursorIcon::ResizeVertical);
    }
    if resp.dragged() {
        *height = (*height - resp.drag_delta().y).clamp(MIN_OPEN_HEIGHT, max_h);
    }
    let c = if resp.hovered() || resp.dragged() { theme::ACCENT } else { theme::NO_RESULT };
    let mid = rect.center();
    for dy in [-2.0, 1.0] {
        ui.painter().line_segment(
            [egui::pos2(mid.x - 22.0, mid.y + dy), egui::pos2(mid.x + 22.0, mid.y + dy)],
            egui::Stroke::new(1.5, c),
        );
    }
}

/// Show the drawer. Its height is the user's (the grip), the same for every
/// tab: a tab's contents scroll or fit, they never grow the drawer.
pub fn show(
    ui: &mut Ui,
    project: &Project,
    sol: &Solution,
    view: &mut DrawerView<'_>,
    st: &mut DrawerState,
    out: &mut Intents,
) {
    let max_h = (ui.available_height() - 150.0).max(MIN_OPEN_HEIGHT);
    let open = *view.open;
    let h =
        if open { view.height.clamp(MIN_OPEN_HEIGHT, max_h).max(st.closed_height + 60.0) } else { st.closed_height };
    egui::Panel::bottom("drawer").resizable(false).exact_size(h).show(ui, |ui| {
        let top = ui.max_rect().top();
        if open {
            grip(ui, view.height, max_h);
        }
        let tabs = ui
            .horizontal_wrapped(|ui| {
                let arrow = if open { "Hide drawer" } else { "Show drawer" };
                if ui.small_button(arrow).on_hover_text("Open or close the drawer").clicked() {
                    *view.open = !open;
                }
                for t in Tab::ALL {
                    if ui.selectable_label(open && st.tab == t, t.name()).clicked() {
                        st.tab = t;
                        *view.open = true;
                    }
                }
            })
            .response
            .rect;
        let margin = egui::Frame::side_top_panel(ui.style()).total_margin().sum().y;
        st.closed_height = (tabs.bottom() - top + margin + 2.0).max(24.0);
        if !open {
            return;
        }
        ui.separator();
        let rect = ui.available_rect_before_wrap();
        let mut body = ui.new_child(
            egui::UiBuilder::new()
                .max_rect(rect)
                .layout(egui::Layout::top_down(egui::Align::Min))
                .id_salt("drawer_body"),
        );
        body.set_clip_rect(rect.intersect(ui.clip_rect()));
        let ui = &mut body;
        match st.tab {
            Tab::Pipes => pipes_table(ui, sol, out),
            Tab::Emitters => emitter_table::show(ui, project, sol, &mut st.table, out),
            Tab::Findings => {
                ScrollArea::vertical().auto_shrink([false, false]).show(ui, |ui| findings_list(ui, sol, out));
            }
            Tab::Pump => pump_tab(ui, sol, st, project.revision),
            Tab::Profile => profile_chart(ui, sol),
            Tab::Parts => parts_table(ui, project, sol, &mut st.parts, out),
            Tab::Sweep => super::scenarios::sweep_view(ui, project, &mut st.scenarios),
            Tab::PartLoad => super::scenarios::part_load_view(ui, project, &mut st.scenarios),
        }
    });
}

/// The installer's parts list of the solved design, with the exports.
#[allow(clippy::type_complexity)] // reason: the cache's own field type, used once
fn parts_table(
    ui: &mut Ui,
    project: &Project,
    sol: &Solution,
    cache: &mut Option<((u64, u64), Result<flowrise_core::parts::PartsList, String>)>,
    out: &mut Intents,
) {
    ui.horizontal(|ui| {
        for a in [super::actions::Action::ExportParts, super::actions::Action::ExportReport] {
            if ui.button(a.label()).on_hover_text(a.tooltip()).clicked() {
                out.actions.push(a);
            }
        }
    });
    let key = (project.revision, sol.revision);
    if cache.as_ref().is_none_or(|(k, _)| *k != key) {
        *cache = Some((key, super::export::parts_of(project, sol)));
    }
    let list = match cache.as_ref().map(|(_, l)| l) {
        Some(Ok(l)) => l,
        Some(Err(e)) => {
            ui.label(RichText::new(e).color(theme::ERROR));
            return;
        }
        None => return,
    };
    ScrollArea::vertical().auto_shrink([false, false]).show(ui, |ui| {
        Grid::new("parts_table").striped(true).num_columns(6).show(ui, |ui| {
            header(ui, &["Category", "Item", "Size", "Quantity", "Unit", "Serves"]);
            for l in &list.lines {
                ui.label(l.category.label());
                ui.label(plain(&l.item)).on_hover_text(plain(&l.note));
                ui.label(plain(&l.size));
                ui.label(if l.unit == flowrise_core::parts::PartUnit::Metre {
                    format!("{:.1}", l.quantity)
                } else {
                    format!("{:.0}", l.quantity)
                });
                ui.label(l.unit.symbol());
                let serves = if l.serves.len() > 6 {
                    format!("{} … ({} items)", l.serves[..6].join(", "), l.serves.len())
                } else {
                    l.serves.join(", ")
                };
                ui.label(serves);
                ui.end_row();
            }
        });
        for n in &list.notes {
            ui.label(RichText::new(plain(n)).weak().small());
        }
    });
}

/// Text with the few symbols the window's font lacks spelled out.
fn plain(s: &str) -> String {
    s.replace('→', "->").replace('≥', ">=").replace('≤', "<=")
}

fn header(ui: &mut Ui, cols: &[&str]) {
    for c in cols {
        ui.label(RichText::new(*c).strong());
    }
    ui.end_row();
}

/// Row height of the virtualised tables.
const ROW_H: f32 = 20.0;

/// A header or body row of fixed-width cells, so a table can be drawn one
/// visible row at a time (a 10,000-emitter building has 60,000 pipe rows)
/// and stay aligned with its header. Odd rows get the stripe.
fn table_row(ui: &mut Ui, widths: &[f32], stripe: bool, mut cell: impl FnMut(&mut Ui, usize)) {
    let total: f32 = widths.iter().sum::<f32>() + ui.spacing().item_spacing.x * widths.len() as f32;
    let rect = egui::Rect::from_min_size(ui.cursor().min, egui::vec2(total, ROW_H));
    if stripe {
        ui.painter().rect_filled(rect, 0, ui.visuals().faint_bg_color);
    }
    ui.horizontal(|ui| {
        for (i, &w) in widths.iter().enumerate() {
            ui.allocate_ui_with_layout(egui::vec2(w, ROW_H), egui::Layout::left_to_right(egui::Align::Center), |ui| {
                ui.set_min_width(w);
                ui.set_max_width(w);
                cell(ui, i);
            });
        }
    });
}

/// A truncating label (full text on hover when cut).
fn cell_label(ui: &mut Ui, text: impl Into<egui::WidgetText>) -> egui::Response {
    ui.add(egui::Label::new(text).truncate())
}

/// A fixed-width table: header row, then only the visible body rows.
fn virtual_table(
    ui: &mut Ui,
    id: &str,
    columns: &[(&str, f32)],
    rows: usize,
    mut cell: impl FnMut(&mut Ui, usize, usize),
) {
    let widths: Vec<f32> = columns.iter().map(|c| c.1).collect();
    ScrollArea::horizontal().id_salt(id).auto_shrink([false, false]).show(ui, |ui| {
        ui.vertical(|ui| {
            table_row(ui, &widths, false, |ui, i| {
                if let Some((name, _)) = columns.get(i) {
                    ui.label(RichText::new(*name).strong());
                }
            });
            let row_h = ROW_H;
            ScrollArea::vertical().id_salt((id, "rows")).auto_shrink([false, false]).show_rows(
                ui,
                row_h,
                rows,
                |ui, range| {
                    for r in range {
                        table_row(ui, &widths, r % 2 == 1, |ui, c| cell(ui, r, c));
                    }
                },
            );
        });
    });
}

fn pipes_table(ui: &mut Ui, sol: &Solution, out: &mut Intents) {
    const COLUMNS: [(&str, f32); 11] = [
        ("Run", 60.0),
        ("Side", 55.0),
        ("Class", 80.0),
        ("Size", 70.0),
        ("Length m", 65.0),
        ("Flow l/h", 65.0),
        ("v m/s", 55.0),
        ("v limit", 55.0),
        ("R Pa/m", 60.0),
        ("R limit", 55.0),
        ("Δp kPa", 60.0),
    ];
    virtual_table(ui, "pipes_table", &COLUMNS, sol.pipes.len(), |ui, r, c| {
        let Some(p) = sol.pipes.get(r) else { return };
        match c {
            0 => {
                if ui.selectable_label(false, p.run.to_string()).on_hover_text("Select and centre").clicked() {
                    out.centre_on = Some(ItemRef::Run(p.run));
                }
            }
            1 => {
                cell_label(ui, if p.side == Side::Supply { "supply" } else { "return" });
            }
            2 => {
                cell_label(ui, p.class.name());
            }
            3 => {
                cell_label(ui, p.size);
            }
            4 => {
                cell_label(ui, format!("{:.1}", p.length_m));
            }
            5 => {
                cell_label(ui, format!("{:.0}", p.flow_l_h));
            }
            6 => {
                // Coloured only with a finding behind it.
                let v = RichText::new(format!("{:.2}", p.velocity_m_s));
                let over = p.velocity_m_s > p.velocity_limit_m_s
                    && sol.has_finding(ItemRef::Run(p.run), &FindingKind::VELOCITY);
                cell_label(ui, if over { v.color(theme::ERROR) } else { v });
            }
            7 => {
                cell_label(ui, format!("{:.1}", p.velocity_limit_m_s));
            }
            8 => {
                let g = RichText::new(format!("{:.0}", p.gradient_pa_m));
                let over = p.gradient_pa_m > p.gradient_limit_pa_m
                    && sol.has_finding(ItemRef::Run(p.run), &FindingKind::GRADIENT);
                cell_label(ui, if over { g.color(theme::WARNING) } else { g });
            }
            9 => {
                // The limit it was sized to: lower behind a Δp controller
                // when the settings give one there.
                cell_label(ui, format!("{:.0}", p.gradient_limit_pa_m));
            }
            _ => {
                cell_label(ui, format!("{:.2}", p.dp_pa / 1000.0));
            }
        }
    });
}

/// The pump chart; part-load operating points (from the Part load tab, when
/// they belong to this revision) are marked too.
/// The pump tab: with pumped circuits, a choice of circuit above the chart.
fn pump_tab(ui: &mut Ui, sol: &Solution, st: &mut DrawerState, revision: u64) {
    if sol.circuits.len() > 1 {
        ui.horizontal(|ui| {
            ui.label("Pump of");
            for (i, c) in sol.circuits.iter().enumerate() {
                let text = format!("{} ({:.0}/{:.0} °C)", c.name, c.supply_c, c.return_c);
                if ui.selectable_label(st.pump_circuit == i, text).clicked() {
                    st.pump_circuit = i;
                }
            }
        });
        let i = st.pump_circuit.min(sol.circuits.len() - 1);
        if i > 0 {
            pump_chart(ui, sol.circuits[i].pump.as_ref(), None, revision, i);
            return;
        }
    }
    pump_chart(ui, sol.pump.as_ref(), Some(&st.scenarios), revision, 0);
}

fn pump_chart(
    ui: &mut Ui,
    pump: Option<&flowrise_core::design::PumpResult>,
    scenarios: Option<&super::scenarios::ScenarioState>,
    revision: u64,
    salt: usize,
) {
    let Some(p) = pump else {
        ui.label("No pump result yet — the network needs a source with a run to an emitter.");
        return;
    };
    let Some(curve) = &p.curve else {
        ui.label("No pump curve.");
        return;
    };
    let q_max = curve.max_flow_m3_h().max(p.operating_flow_m3_h * 1.3);
    let n = 60;
    let pump: Vec<[f64; 2]> = (0..=n)
        .filter_map(|i| {
            let q = q_max * f64::from(i) / f64::from(n);
            curve.head_kpa(q).ok().filter(|h| *h >= 0.0).map(|h| [q, h])
        })
        .collect();
    let (q_op, h_op) = (p.operating_flow_m3_h, p.operating_head_pa / 1000.0);
    let k = if q_op > 1e-9 { h_op / (q_op * q_op) } else { 0.0 };
    let system: Vec<[f64; 2]> = (0..=n)
        .map(|i| q_max * f64::from(i) / f64::from(n))
        .map(|q| [q, k * q * q])
        .take_while(|pt| pt[1] <= curve.shutoff_head_kpa() * 1.2)
        .collect();
    Plot::new(("pump_chart", salt))
        .legend(Legend::default())
        .x_axis_label("flow m³/h")
        .y_axis_label("head kPa")
        .include_y(0.0)
        .include_x(0.0)
        .allow_scroll(false)
        .show(ui, |pu| {
            pu.line(Line::new("pump curve (full speed)", pump).color(theme::ACCENT).width(2.0));
            pu.line(Line::new("system curve Δp = k·Q²", system).color(theme::INK).width(1.5));
            pu.points(Points::new("operating point", vec![[q_op, h_op]]).radius(6.0).color(theme::SELECT));
            pu.points(
                Points::new("duty point (design + margin)", vec![[p.design_flow_m3_h, p.duty_head_pa / 1000.0]])
                    .radius(6.0)
                    .shape(egui_plot::MarkerShape::Diamond)
                    .color(theme::WARNING),
            );
            if let Some((rev, Ok(cases))) = scenarios.and_then(|x| x.part_load.as_ref())
                && *rev == revision
            {
                for c in cases {
                    pu.points(
                        Points::new(
                            format!("part load, {}", c.control),
                            vec![[c.pump_flow_l_h / 1000.0, c.pump_head_kpa]],
                        )
                        .radius(5.0)
                        .shape(egui_plot::MarkerShape::Square),
                    );
                }
            }
        });
}

/// How a key entry is drawn.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Mark {
    Line,
    Dot,
}

/// One entry of a chart's key: a swatch and its words (also the
/// accessible label).
fn key(ui: &mut Ui, words: &str, colour: egui::Color32, mark: Mark) {
    let (rect, _) = ui.allocate_exact_size(egui::vec2(18.0, 12.0), egui::Sense::hover());
    match mark {
        Mark::Line => {
            ui.painter().line_segment([rect.left_center(), rect.right_center()], egui::Stroke::new(2.5, colour));
        }
        Mark::Dot => {
            ui.painter().circle_filled(rect.center(), 4.5, colour);
        }
    }
    ui.label(RichText::new(words).small());
}

/// One leg of the index-circuit profile, for its colour and legend entry.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Leg {
    Supply,
    Return,
    /// Source, emitter valves and body: drops with no pipe length.
    Plant,
}

/// The index circuit as (distance m, pressure kPa) segments by leg, from
/// the pump outlet to the pump inlet, with the index valve and the pump.
struct Profile {
    segments: Vec<(Leg, Vec<[f64; 2]>)>,
    /// Pressure before and after the index emitter's valves.
    valve: Option<([f64; 2], [f64; 2])>,
    /// Pump outlet and inlet.
    pump_out: [f64; 2],
    pump_in: [f64; 2],
}

fn index_profile(sol: &Solution) -> Option<Profile> {
    if sol.index_path.is_empty() || sol.node_pressures_pa.is_empty() {
        return None;
    }
    let lengths: BTreeMap<usize, f64> = sol.pipes.iter().map(|p| (p.link, p.length_m)).collect();
    let p_at = |n: usize| sol.node_pressures_pa.get(n).copied().unwrap_or(0.0);
    let z_at = |n: usize| sol.network.nodes.get(n).map_or(0.0, |x| x.elevation_m);
    // Each link's loss with the static head taken out (what friction,
    // fittings, valves and the emitter cost): p_from - p_to + rho g (z_from - z_to).
    let losses: Vec<(usize, f64)> = sol
        .index_path
        .iter()
        .filter_map(|&l| {
            // The pump is the lift, drawn on its own.
            if matches!(sol.roles.get(l), Some(LinkRole::Pump(_))) {
                return None;
            }
            let link = sol.network.links.get(l)?;
            let stat =
                flowrise_core::network::solver::static_term_pa(link.density_kg_m3, z_at(link.from), z_at(link.to))
                    .unwrap_or(0.0);
            Some((l, (p_at(link.from) - p_at(link.to) + stat) / 1000.0))
        })
        .collect();
    // From the pump outlet (all the losses still ahead) down to its inlet (0).
    let mut y: f64 = losses.iter().map(|(_, d)| d).sum();
    let mut x = 0.0;
    let pump_out = [0.0, y];
    let mut segments: Vec<(Leg, Vec<[f64; 2]>)> = Vec::new();
    let mut valve = None;
    for (l, loss) in losses {
        let leg = match sol.roles.get(l) {
            Some(LinkRole::Pipe { side: Side::Supply, .. }) => Leg::Supply,
            Some(LinkRole::Pipe { side: Side::Return, .. }) => Leg::Return,
            _ => Leg::Plant,
        };
        let a = [x, y];
        x += lengths.get(&l).copied().unwrap_or(0.0);
        y -= loss;
        let b = [x, y];
        if matches!(sol.roles.get(l), Some(LinkRole::EmitterValves(_))) {
            valve = Some((a, b));
        }
        match segments.last_mut() {
            Some((g, pts)) if *g == leg => pts.push(b),
            _ => segments.push((leg, vec![a, b])),
        }
    }
    Some(Profile { segments, valve, pump_out, pump_in: [x, y] })
}

/// The index-circuit pressure profile: supply leg, return leg and the drops
/// at the source and the emitter, with the pump and the index valve marked.
fn profile_chart(ui: &mut Ui, sol: &Solution) {
    let Some(p) = index_profile(sol) else {
        ui.label("No index circuit yet — the network needs a source with a run to an emitter.");
        return;
    };
    ui.label(
        RichText::new(
            "What the pump's head still has to give along the index circuit: friction, fittings, valves (static head \
             of risers taken out), from the pump outlet to its inlet.",
        )
        .small(),
    );
    // The key above the chart: a legend inside it would cover the curve.
    ui.horizontal_wrapped(|ui| {
        key(ui, "supply leg", theme::SUPPLY, Mark::Line);
        key(ui, "index emitter and its valve (diamonds)", theme::SELECT, Mark::Dot);
        key(ui, "source and emitter body", theme::NO_RESULT, Mark::Line);
        key(ui, "return leg", theme::RETURN, Mark::Line);
        key(ui, "pump outlet and inlet (squares), its lift dashed", theme::ACCENT, Mark::Dot);
    });
    Plot::new("index_profile")
        .x_axis_label("distance along the index circuit, m")
        .y_axis_label("pressure, kPa")
        .y_axis_formatter(|mark, _| format!("{:.0}", mark.value))
        .y_axis_min_width(36.0)
        .grid_spacing(egui::Rangef::new(6.0, 60.0))
        .include_y(0.0)
        .allow_scroll(false)
        .show(ui, |pu| {
            for (i, (leg, pts)) in p.segments.into_iter().enumerate() {
                // allow_band off: a drop at one distance is a vertical line,
                // not a shaded band.
                let (name, colour) = match leg {
                    Leg::Supply => ("supply leg", theme::SUPPLY),
                    Leg::Return => ("return leg", theme::RETURN),
                    Leg::Plant => ("source and emitter", theme::NO_RESULT),
                };
                pu.line(Line::new(name, pts).color(colour).width(2.0).allow_band(false).id(("index_profile_leg", i)));
            }
            pu.points(
                Points::new("pump (outlet and inlet)", vec![p.pump_out, p.pump_in])
                    .radius(6.0)
                    .shape(egui_plot::MarkerShape::Square)
                    .color(theme::ACCENT),
            );
            pu.line(
                Line::new("pump lift", vec![p.pump_in, [p.pump_in[0], p.pump_out[1]]])
                    .color(theme::ACCENT)
                    .style(egui_plot::LineStyle::dashed_dense())
                    .allow_band(false),
            );
            if let Some((a, b)) = p.valve {
                pu.points(
                    Points::new("index valve", vec![a, b])
                        .radius(5.0)
                        .shape(egui_plot::MarkerShape::Diamond)
                        .color(theme::SELECT),
                );
            }
        });
}
