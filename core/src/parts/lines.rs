//! The line builders of the parts list, one per kind of part: pipes,
//! fittings (bends, tees, reducers, adaptors, couplings), emitters, valves,
//! headers, plant (pump, vessel) and insulation. Each reads the solved
//! design and adds lines to the accumulator.

use std::collections::BTreeMap;

use super::{Acc, PartCategory, PartUnit, PartsOptions, pipe_item, side_word, stock_length_m, vessel_nominal_size_l};
use crate::design::{PipeResult, Side, Solution};
use crate::emitters::{EmitterDetail, EmitterModel, RadiatorSizing};
use crate::error::PhysicsResult;
use crate::pipes;
use crate::project::{NodeId, NodeKind, Project, Run};
use crate::pump::PumpControl;
use crate::valves;

fn series_of(pr: &PipeResult) -> PhysicsResult<&'static pipes::PipeSeries> {
    pipes::find_series(pr.series)
}

pub(super) fn pipe_lines(sol: &Solution, opts: &PartsOptions, acc: &mut Acc) -> PhysicsResult<()> {
    // Net length per (side, series, size) first, so the note can state it.
    let mut net: BTreeMap<(Side, String, String), (f64, Vec<String>)> = BTreeMap::new();
    for pr in &sol.pipes {
        let e = net.entry((pr.side, pr.series.to_owned(), pr.size.to_owned())).or_default();
        e.0 += pr.length_m;
        e.1.push(pr.run.to_string());
    }
    for ((side, series_id, size), (length_m, serves)) in net {
        let series = pipes::find_series(&series_id)?;
        let stock =
            stock_length_m(series.material).map_or_else(|| "coils".to_owned(), |l| format!("{l:.0} m stock lengths"));
        let note = format!(
            "{} ({}); net {length_m:.2} m + {:.0} % cutting allowance (common practice); {stock}",
            series.standard,
            series.material.label(),
            opts.cutting_allowance_fraction * 100.0
        );
        let qty = length_m * (1.0 + opts.cutting_allowance_fraction);
        acc.add(PartCategory::Pipe, pipe_item(side, &series.name), size, note, PartUnit::Metre, qty, &serves);
    }
    Ok(())
}

/// Direction (unit vector on the plan) in which run `run` leaves node `at`.
fn leaving_direction(p: &Project, run: &Run, at: NodeId) -> Option<(f64, f64)> {
    let here = p.node(at)?.pos;
    let next = if run.a == at {
        run.vertices.first().copied().or_else(|| p.node(run.b).map(|n| n.pos))?
    } else {
        run.vertices.last().copied().or_else(|| p.node(run.a).map(|n| n.pos))?
    };
    let (dx, dy) = (next.x_m - here.x_m, next.y_m - here.y_m);
    let l = dx.hypot(dy);
    (l > 0.0).then(|| (dx / l, dy / l))
}

#[allow(clippy::too_many_lines)] // reason: one pass over the junctions, each fitting rule beside the next
pub(super) fn fitting_lines(p: &Project, sol: &Solution, acc: &mut Acc) -> PhysicsResult<()> {
    // Bends and couplings per pipe.
    for pr in &sol.pipes {
        let series = series_of(pr)?;
        let mat = series.material.label();
        let serves = [pr.run.to_string()];
        let (n90, n45) = (pr.bends_90, pr.bends_45);
        let note = "from the run geometry and riser foot/head (as the design counts them)".to_owned();
        acc.add(
            PartCategory::Fitting,
            format!("bend 90°, {mat}"),
            pr.size.to_owned(),
            note.clone(),
            PartUnit::Piece,
            f64::from(n90),
            &serves,
        );
        acc.add(
            PartCategory::Fitting,
            format!("bend 45°, {mat}"),
            pr.size.to_owned(),
            note,
            PartUnit::Piece,
            f64::from(n45),
            &serves,
        );
        if let Some(stock) = stock_length_m(series.material) {
            let couplings = ((pr.length_m / stock).ceil() - 1.0).max(0.0);
            acc.add(
                PartCategory::Fitting,
                format!("coupling, {mat}"),
                pr.size.to_owned(),
                format!("one per {stock:.0} m stock length (common practice)"),
                PartUnit::Piece,
                couplings,
                &serves,
            );
        }
    }

    // Pipes meeting at each node, per side.
    let mut at: BTreeMap<(NodeId, Side), Vec<&PipeResult>> = BTreeMap::new();
    for pr in &sol.pipes {
        let [u, d] = pr.ends;
        at.entry((u, pr.side)).or_default().push(pr);
        at.entry((d, pr.side)).or_default().push(pr);
    }
    for ((node_id, side), mut list) in at {
        let Some(node) = p.node(node_id) else { continue };
        if !matches!(node.kind, NodeKind::Junction) {
            continue;
        }
        list.sort_by(|a, b| b.design_flow_kg_s.abs().total_cmp(&a.design_flow_kg_s.abs()).then(a.run.cmp(&b.run)));
        let serves = [node_id.to_string()];
        let trunk_series = series_of(list[0])?;
        let mat = trunk_series.material.label();
        // Adaptors for legs of another series.
        for pr in list.iter().skip(1) {
            let s = series_of(pr)?;
            if s.id != trunk_series.id {
                acc.add(
                    PartCategory::Fitting,
                    format!("adaptor, {mat} to {}", s.material.label()),
                    format!("{} × {}", list[0].size, pr.size),
                    format!("series change at the junction ({} / {})", trunk_series.standard, s.standard),
                    PartUnit::Piece,
                    1.0,
                    &serves,
                );
            }
        }
        match list.as_slice() {
            [a, b] => {
                // A size change within one series (a series change is an adaptor, above).
                if a.series == b.series && a.size != b.size {
                    let (big, small) = if a.inner_mm >= b.inner_mm { (a, b) } else { (b, a) };
                    acc.add(
                        PartCategory::Fitting,
                        format!("reducer, {mat}"),
                        format!("{} × {}", big.size, small.size),
                        "size change between two runs".to_owned(),
                        PartUnit::Piece,
                        1.0,
                        &serves,
                    );
                }
                // A bend where two horizontal runs meet at an angle.
                let (Some(ra), Some(rb)) = (p.run(a.run), p.run(b.run)) else { continue };
                let touches = |r: &Run| r.a == node_id || r.b == node_id;
                if p.is_vertical(ra) || p.is_vertical(rb) || !touches(ra) || !touches(rb) {
                    continue;
                }
                let (Some(da), Some(db)) = (leaving_direction(p, ra, node_id), leaving_direction(p, rb, node_id))
                else {
                    continue;
                };
                // Turn = 180° − angle between the two leaving directions.
                let turn = 180.0 - (da.0 * db.0 + da.1 * db.1).clamp(-1.0, 1.0).acos().to_degrees();
                let kind = if turn >= 60.0 {
                    "bend 90°"
                } else if turn >= 20.0 {
                    "bend 45°"
                } else {
                    continue;
                };
                let size = if a.inner_mm >= b.inner_mm { &a.size } else { &b.size };
                acc.add(
                    PartCategory::Fitting,
                    format!("{kind}, {mat}"),
                    (*size).to_owned(),
                    "at a junction of two runs (not in the design's friction, which counts bends inside runs)"
                        .to_owned(),
                    PartUnit::Piece,
                    1.0,
                    &serves,
                );
            }
            [trunk, through, branch] => {
                let (item, size) = if trunk.size == through.size && through.size == branch.size {
                    ("equal tee", trunk.size.to_owned())
                } else if trunk.size == through.size {
                    ("reducing tee", format!("{} × {}", trunk.size, branch.size))
                } else {
                    ("reducing tee", format!("{} × {} × {}", trunk.size, through.size, branch.size))
                };
                acc.add(
                    PartCategory::Fitting,
                    format!("{item}, {mat} — {}", side_word(side)),
                    size,
                    "sizes trunk × through × branch (by design flow)".to_owned(),
                    PartUnit::Piece,
                    1.0,
                    &serves,
                );
            }
            more if more.len() >= 4 => {
                let sizes: Vec<&str> = more.iter().map(|x| x.size).collect();
                acc.add(
                    PartCategory::Fitting,
                    format!("cross or tee pair, {mat} — {}", side_word(side)),
                    sizes.join(" × "),
                    format!("{} pipes meet at {node_id}: fit a cross or two tees", more.len()),
                    PartUnit::Piece,
                    1.0,
                    &serves,
                );
            }
            _ => {}
        }
    }
    Ok(())
}

pub(super) fn emitter_lines(p: &Project, sol: &Solution, acc: &mut Acc) {
    for e in &sol.emitters {
        let Some(node) = p.node(e.id) else { continue };
        let NodeKind::Emitter(em) = &node.kind else { continue };
        let serves = [e.id.to_string()];
        match (&em.model, &e.detail) {
            (EmitterModel::Radiator(spec), Some(EmitterDetail::Radiator(r))) => {
                let existing = matches!(spec.sizing, RadiatorSizing::Existing { .. });
                let item = if existing {
                    format!("panel radiator type {} (existing — check, do not order)", spec.type_code)
                } else {
                    format!("panel radiator type {}", spec.type_code)
                };
                acc.add(
                    PartCategory::Emitter,
                    item,
                    format!("{} × {} mm", spec.height_mm, r.length_mm),
                    format!(
                        "nominal output {:.0} W at 75/65/20 °C (EN 442), n = {:.2}",
                        r.nominal_output_w, r.exponent_n
                    ),
                    PartUnit::Piece,
                    1.0,
                    &serves,
                );
            }
            (EmitterModel::FloorLoop(spec), Some(EmitterDetail::FloorLoop(f))) => {
                let wall_mm = 0.5 * (spec.pipe_outer_diameter_m - spec.pipe_inner_diameter_m) * 1000.0;
                acc.add(
                    PartCategory::Emitter,
                    format!("floor-heating loop pipe, {}", node.label()),
                    format!("{:.0} × {:.1} mm", spec.pipe_outer_diameter_m * 1000.0, wall_mm),
                    format!(
                        "area {:.1} m², spacing {:.0} mm, two leads of {:.1} m; one loop from a coil",
                        spec.area_m2,
                        spec.spacing_m * 1000.0,
                        spec.lead_length_m
                    ),
                    PartUnit::Metre,
                    f.loop_length_m,
                    &serves,
                );
            }
            (EmitterModel::Terminal(spec), _) => {
                acc.add(
                    PartCategory::Emitter,
                    "terminal unit (fan coil / air heater)".to_owned(),
                    format!("{:.0} W", spec.nominal_output_w),
                    format!(
                        "nominal at {:.0}/{:.0}/{:.0} °C, coil Kv {:.2} m³/h",
                        spec.nominal_supply_c, spec.nominal_return_c, spec.nominal_room_c, spec.kv_m3_h
                    ),
                    PartUnit::Piece,
                    1.0,
                    &serves,
                );
            }
            // A radiator or loop whose design failed has no size to order
            // (its finding says why).
            (EmitterModel::Radiator(_) | EmitterModel::FloorLoop(_), _) => {}
        }
    }
}

pub(super) fn valve_lines(p: &Project, sol: &Solution, acc: &mut Acc) {
    for e in &sol.emitters {
        let Some(NodeKind::Emitter(em)) = p.node(e.id).map(|n| &n.kind) else { continue };
        let serves = [e.id.to_string()];
        let (name, size) = valves::valve_family(&em.valves.valve_family).map_or_else(
            |_| (em.valves.valve_family.clone(), String::new()),
            |f| (f.name.clone(), format!("DN{}", f.connection_dn)),
        );
        acc.add(
            PartCategory::Valve,
            name,
            size,
            format!("presetting {} (Kv {:.3} m³/h)", e.presetting, e.valve_kv_m3_h),
            PartUnit::Piece,
            1.0,
            &serves,
        );
        let (name, size) = valves::valve_family(&em.valves.lockshield_family).map_or_else(
            |_| (em.valves.lockshield_family.clone(), String::new()),
            |f| (f.name.clone(), format!("DN{}", f.connection_dn)),
        );
        acc.add(
            PartCategory::Valve,
            name,
            size,
            format!("lockshield, setting {} (Kv {:.3} m³/h)", e.lockshield, e.lockshield_kv_m3_h),
            PartUnit::Piece,
            1.0,
            &serves,
        );
    }
}

pub(super) fn header_lines(p: &Project, sol: &Solution, acc: &mut Acc) {
    let topo = &sol.topology;
    for node in p.nodes() {
        let NodeKind::Header(h) = &node.kind else { continue };
        let used = topo.children_of(node.id).len();
        let inlet = topo
            .parent_run_of(node.id)
            .and_then(|r| sol.run_pipes(r).find(|x| x.side == Side::Supply))
            .map_or_else(String::new, |x| format!("; inlet {}", x.size));
        acc.add(
            PartCategory::Header,
            "header: distributor + collector pair".to_owned(),
            format!("{} outlets", h.outlets),
            format!(
                "{}: {used} outlets used, {} spare{inlet}",
                h.name,
                h.outlets.saturating_sub(u32::try_from(used).unwrap_or(u32::MAX))
            ),
            PartUnit::Piece,
            1.0,
            &[node.id.to_string()],
        );
    }
}

pub(super) fn plant_lines(p: &Project, sol: &Solution, acc: &mut Acc) {
    let source = p.sources().first().map(ToString::to_string).unwrap_or_default();
    let serves = [source];
    if let Some(pump) = &sol.pump {
        let control = match pump.control {
            PumpControl::FixedSpeed => "fixed speed".to_owned(),
            PumpControl::ConstantDp { setpoint_kpa } => format!("constant Δp {setpoint_kpa:.1} kPa"),
            PumpControl::ProportionalDp { setpoint_kpa } => {
                format!("proportional Δp {setpoint_kpa:.1} kPa at design flow")
            }
        };
        acc.add(
            PartCategory::Pump,
            "circulation pump".to_owned(),
            format!("{:.2} m³/h at {:.1} kPa", pump.design_flow_m3_h, pump.duty_head_pa / 1000.0),
            format!(
                "duty point: design flow and index circuit {:.1} kPa + {:.0} % margin (common practice); control {control}",
                pump.index_dp_pa / 1000.0,
                p.settings.head_margin_fraction * 100.0
            ),
            PartUnit::Piece,
            1.0,
            &serves,
        );
    }
    if let Some(v) = &sol.vessel {
        let (size, note) = match vessel_nominal_size_l(v.nominal_volume_l) {
            Some(n) => (
                format!("{n:.0} l"),
                format!(
                    "EN 12828 minimum {:.1} l → next common size (common practice); pre-charge {:.2} bar, fill {:.2} bar",
                    v.nominal_volume_l, v.precharge_pressure_bar, v.fill_pressure_bar
                ),
            ),
            None => (
                format!("{:.0} l", v.nominal_volume_l.ceil()),
                format!("EN 12828 minimum {:.1} l is above 300 l: several vessels in parallel", v.nominal_volume_l),
            ),
        };
        acc.add(
            PartCategory::Vessel,
            "expansion vessel (diaphragm)".to_owned(),
            size,
            note,
            PartUnit::Piece,
            1.0,
            &serves,
        );
    }
}

pub(super) fn insulation_lines(sol: &Solution, opts: &PartsOptions, acc: &mut Acc) -> PhysicsResult<()> {
    for pr in &sol.pipes {
        let series = series_of(pr)?;
        acc.add(
            PartCategory::Insulation,
            format!("pipe insulation for {}", series.material.label()),
            pr.size.to_owned(),
            format!(
                "supply + return, {:.0} % cutting allowance; thickness per the local energy code",
                opts.cutting_allowance_fraction * 100.0
            ),
            PartUnit::Metre,
            pr.length_m * (1.0 + opts.cutting_allowance_fraction),
            &[pr.run.to_string()],
        );
    }
    Ok(())
}

/// Balancing devices on runs: a static balancing valve with its setting, a
/// Δp controller with its set-point (and the impulse line it needs).
pub(super) fn device_lines(sol: &Solution, acc: &mut Acc) {
    for d in &sol.devices {
        if d.family.is_empty() {
            continue; // unknown model: its finding says why
        }
        let controller = d.kind == "Δp controller";
        let dn = if controller {
            crate::controllers::dp_controllers()
                .ok()
                .and_then(|fs| fs.iter().find(|f| f.name == d.family))
                .map(|f| f.connection_dn)
        } else {
            valves::valve_families().ok().and_then(|fs| fs.iter().find(|f| f.name == d.family)).map(|f| f.connection_dn)
        };
        let size = dn.map_or_else(String::new, |dn| format!("DN{dn}"));
        let note = if controller {
            format!(
                "{}: set-point {} (Kvs {:.2} m³/h), impulse line to the branch supply",
                d.kind, d.setting, d.kv_m3_h
            )
        } else {
            format!("{}: setting {} (Kv {:.2} m³/h)", d.kind, d.setting, d.kv_m3_h)
        };
        acc.add(PartCategory::Valve, d.family.clone(), size, note, PartUnit::Piece, 1.0, &[d.run.to_string()]);
    }
}

/// Pumped circuits and separators: each circuit's pump with its duty, its
/// mixing or injection valve (Kvs), and each hydraulic separator.
pub(super) fn circuit_lines(p: &Project, sol: &Solution, acc: &mut Acc) {
    for c in sol.circuits.iter().filter(|c| c.connection.is_some()) {
        let serves = [c.root.to_string()];
        let Some(NodeKind::Circuit(node)) = p.node(c.root).map(|n| &n.kind) else { continue };
        if let Some(pump) = &c.pump {
            acc.add(
                PartCategory::Pump,
                "circulation pump (pumped circuit)".to_owned(),
                format!("{:.2} m³/h at {:.1} kPa", pump.design_flow_m3_h, pump.duty_head_pa / 1000.0),
                format!(
                    "{}: {:.0}/{:.0} °C, index circuit {:.1} kPa",
                    c.name,
                    c.supply_c,
                    c.return_c,
                    pump.index_dp_pa / 1000.0
                ),
                PartUnit::Piece,
                1.0,
                &serves,
            );
        }
        let valve = match node.connection {
            crate::project::CircuitConnection::MixingValve => Some("three-way mixing valve with actuator"),
            crate::project::CircuitConnection::Injection => Some("two-way injection valve with actuator"),
            crate::project::CircuitConnection::Direct => None,
        };
        if let Some(item) = valve {
            acc.add(
                PartCategory::Valve,
                item.to_owned(),
                format!("Kvs {:.1} m³/h", node.valve_kvs_m3_h),
                format!(
                    "{}: primary {:.0} l/h at {:.0} °C, circuit {:.0} l/h at {:.0} °C",
                    c.name, c.primary_design_flow_l_h, c.feed_supply_c, c.design_flow_l_h, c.supply_c
                ),
                PartUnit::Piece,
                1.0,
                &serves,
            );
        }
    }
    for node in p.nodes() {
        let NodeKind::Separator(x) = &node.kind else { continue };
        let drawn: f64 =
            sol.circuits.iter().filter(|c| c.separator == Some(node.id)).map(|c| c.primary_design_flow_l_h).sum();
        acc.add(
            PartCategory::Header,
            "hydraulic separator (low-loss header)".to_owned(),
            format!("for {drawn:.0} l/h"),
            format!("{}: circuits draw {drawn:.0} l/h at design", x.name),
            PartUnit::Piece,
            1.0,
            &[node.id.to_string()],
        );
    }
}
