//! Machine-readable output of a solve: the stable JSON document of
//! `flowrise solve --json` (schema in `docs/solve-json.md`), and the readable
//! text summary.

use serde_json::{Value, json};

use crate::design::{DeviceResult, EmitterResult, Finding, PipeResult, Severity, Side, Solution};
use crate::project::Project;

/// Write one formatted line to a [`std::fmt::Write`] sink, stopping the
/// function at the first failed write (a String never fails; a stream can).
macro_rules! out {
    ($s:expr, $($arg:tt)*) => {{
        writeln!($s, $($arg)*)?;
    }};
}

/// Version of the JSON schema; bumped when a field changes meaning or goes.
pub const SOLVE_JSON_SCHEMA: u32 = 1;

fn round(x: f64, digits: i32) -> f64 {
    if !x.is_finite() {
        return 0.0;
    }
    let f = 10f64.powi(digits);
    (x * f).round() / f
}

/// The JSON document of a solve, as a value (small projects and tests;
/// `flowrise solve --json` streams [`SolveJson`] instead).
#[must_use]
pub fn solve_json(p: &Project, sol: &Solution) -> Value {
    serde_json::to_value(SolveJson { project: p, solution: sol }).unwrap_or(Value::Null)
}

/// The JSON document of a solve, serialised one emitter, pipe and finding
/// at a time: written with `serde_json::to_writer_pretty` it never holds
/// the whole document in memory (at 50,000 emitters the value tree alone
/// took more than a gigabyte). Same document, keys and order as
/// [`solve_json`].
#[derive(Debug, Clone, Copy)]
pub struct SolveJson<'a> {
    /// The project solved.
    pub project: &'a Project,
    /// Its solution.
    pub solution: &'a Solution,
}

/// Top-level keys whose arrays are streamed.
const STREAMED: [&str; 3] = ["emitters", "pipes", "warnings"];

impl serde::Serialize for SolveJson<'_> {
    fn serialize<S: serde::Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        use serde::ser::SerializeMap;
        let (p, sol) = (self.project, self.solution);
        // The small part as a value; the three arrays as placeholders whose
        // place in the key order the value's map decides.
        let head = head_json(p, sol);
        let Value::Object(head) = head else { return serializer.serialize_none() };
        let mut map = serializer.serialize_map(Some(head.len()))?;
        for (key, value) in &head {
            match key.as_str() {
                "emitters" => map.serialize_entry(key, &Items(sol.emitters.iter().map(emitter_json)))?,
                "pipes" => map.serialize_entry(key, &Items(sol.pipes.iter().map(pipe_json)))?,
                "warnings" => map.serialize_entry(key, &Items(sol.findings.iter().map(finding_json)))?,
                _ => map.serialize_entry(key, value)?,
            }
        }
        map.end()
    }
}

/// A sequence serialised from an iterator, one item at a time.
struct Items<I>(I);

impl<I: Iterator<Item: serde::Serialize> + Clone> serde::Serialize for Items<I> {
    fn serialize<S: serde::Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        serializer.collect_seq(self.0.clone())
    }
}

/// The document without its arrays (they are `null` here).
fn head_json(p: &Project, sol: &Solution) -> Value {
    let pump = sol.pump.as_ref();
    let totals = json!({
        "heat_load_w": round(sol.heat_load_w, 1),
        "flow_l_h": round(pump.map_or(0.0, |x| x.operating_flow_m3_h * 1000.0), 1),
        "design_flow_l_h": round(pump.map_or(0.0, |x| x.design_flow_m3_h * 1000.0), 1),
        "pump_head_kpa": round(pump.map_or(0.0, |x| x.duty_head_pa / 1000.0), 3),
        "pump_operating_head_kpa": round(pump.map_or(0.0, |x| x.operating_head_pa / 1000.0), 3),
        "pump_on_max_curve": pump.is_some_and(|x| x.on_max_curve),
        "index_dp_kpa": round(pump.map_or(0.0, |x| x.index_dp_pa / 1000.0), 3),
        "pump_power_w": round(pump.map_or(0.0, |x| x.hydraulic_power_w), 2),
        "index_emitter": sol.index_emitter.map(|n| n.to_string()),
        "water_volume_l": round(sol.water_volume_l, 2),
        // `null` when the vessel could not be sized (a `vessel_not_sized`
        // finding says why): 0 would read as "no vessel needed".
        "expansion_vessel_l": sol.vessel.as_ref().map(|v| round(v.nominal_volume_l, 2)),
        "iterations": sol.iterations,
        "converged": sol.converged,
        "solve_ms": round(sol.timings.derive_ms + sol.timings.design_ms + sol.timings.operate_ms, 4),
        "derive_ms": round(sol.timings.derive_ms, 4),
        "design_ms": round(sol.timings.design_ms, 4),
        "operate_ms": round(sol.timings.operate_ms, 4),
        "operate_solver_ms": round(sol.timings.solver_ms, 4),
        "operate_iterations": sol.iterations,
    });
    let mut doc = json!({
        "schema": SOLVE_JSON_SCHEMA,
        "project": p.name,
        "mode": match p.settings.mode { crate::project::Mode::DesignFollowsLayout => "design", crate::project::Mode::Installed => "installed" },
        "totals": totals,
        "devices": sol.devices.iter().map(device_json).collect::<Vec<_>>(),
    });
    if let Value::Object(m) = &mut doc {
        // Only projects with pumped circuits have this key.
        if !sol.circuits.is_empty() {
            m.insert("circuits".to_owned(), sol.circuits.iter().map(circuit_json).collect());
        }
        for key in STREAMED {
            m.insert(key.to_owned(), Value::Null);
        }
    }
    doc
}

fn circuit_json(c: &crate::design::CircuitResult) -> Value {
    let pump = c.pump.as_ref();
    json!({
        "root": c.root.to_string(),
        "name": c.name,
        "connection": c.connection.map(|k| match k {
            crate::project::CircuitConnection::MixingValve => "mixing_valve",
            crate::project::CircuitConnection::Injection => "injection",
            crate::project::CircuitConnection::Direct => "pump_only",
        }),
        "parent": c.parent.map(|n| n.to_string()),
        "separator": c.separator.map(|n| n.to_string()),
        "supply_c": round(c.supply_c, 2),
        "return_c": round(c.return_c, 2),
        "feed_supply_c": round(c.feed_supply_c, 2),
        "heat_load_w": round(c.heat_load_w, 1),
        "heat_w": round(c.heat_w, 1),
        "design_flow_l_h": round(c.design_flow_l_h, 2),
        "flow_l_h": round(c.flow_l_h, 2),
        "operating_return_c": round(c.operating_return_c, 2),
        "primary_design_flow_l_h": round(c.primary_design_flow_l_h, 2),
        "primary_flow_l_h": round(c.primary_flow_l_h, 2),
        "feed_dp_available_kpa": round(c.feed_dp_available_pa / 1000.0, 3),
        "feed_dp_needed_kpa": round(c.feed_dp_needed_pa / 1000.0, 3),
        "pump_head_kpa": round(pump.map_or(0.0, |x| x.duty_head_pa / 1000.0), 3),
        "pump_design_flow_m3_h": round(pump.map_or(0.0, |x| x.design_flow_m3_h), 4),
        "pump_operating_flow_m3_h": round(pump.map_or(0.0, |x| x.operating_flow_m3_h), 4),
        "pump_operating_head_kpa": round(pump.map_or(0.0, |x| x.operating_head_pa / 1000.0), 3),
        "pump_on_max_curve": pump.is_some_and(|x| x.on_max_curve),
        "index_emitter": c.index_emitter.map(|n| n.to_string()),
        "water_volume_l": round(c.water_volume_l, 2),
        "converged": c.converged,
    })
}

fn device_json(d: &DeviceResult) -> Value {
    json!({
        "run": d.run.to_string(),
        "branch": d.branch.to_string(),
        "kind": d.kind,
        "model": d.family,
        "setting": d.setting,
        "kv_m3_h": round(d.kv_m3_h, 4),
        "design_flow_l_h": round(d.design_flow_l_h, 2),
        "design_dp_kpa": round(d.design_dp_pa / 1000.0, 3),
        "branch_dp_kpa": round(d.branch_dp_pa / 1000.0, 3),
        "flow_l_h": round(d.flow_l_h, 2),
        "dp_kpa": round(d.dp_pa / 1000.0, 3),
        "held_dp_kpa": round(d.held_dp_pa / 1000.0, 3),
        "state": d.state,
    })
}

/// An id written through its `Display`, without a `String` per item.
struct Shown<T>(T);

impl<T: std::fmt::Display> serde::Serialize for Shown<T> {
    fn serialize<S: serde::Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        serializer.collect_str(&self.0)
    }
}

/// One emitter of the document, serialised straight from its result (no
/// value tree per item). Fields in key order: the document's maps are
/// sorted by key.
#[derive(serde::Serialize)]
struct EmitterJson<'a> {
    authority: f64,
    circuit_dp_kpa: f64,
    closed: bool,
    design_flow_l_h: f64,
    design_return_c: f64,
    flow_deviation: f64,
    flow_l_h: f64,
    flow_within_tolerance: bool,
    id: Shown<crate::project::NodeId>,
    kv_needed_m3_h: f64,
    level: &'a str,
    load_w: f64,
    lockshield: &'a str,
    lockshield_dp_kpa: f64,
    lockshield_kv_m3_h: f64,
    name: &'a str,
    output_w: f64,
    presetting: &'a str,
    return_c: f64,
    room_c: f64,
    supply_c: f64,
    valve_dp_kpa: f64,
    valve_kv_m3_h: f64,
}

fn emitter_json(e: &EmitterResult) -> EmitterJson<'_> {
    EmitterJson {
        authority: round(e.authority, 3),
        circuit_dp_kpa: round(e.circuit_dp_open_pa / 1000.0, 3),
        closed: e.closed,
        design_flow_l_h: round(e.design_flow_l_h, 2),
        design_return_c: round(e.design_return_c, 2),
        flow_deviation: round(e.flow_deviation, 5),
        flow_l_h: round(e.flow_l_h, 2),
        flow_within_tolerance: e.flow_within_tolerance,
        id: Shown(e.id),
        kv_needed_m3_h: round(e.kv_needed_m3_h, 4),
        level: &e.level,
        load_w: round(e.load_w, 1),
        lockshield: &e.lockshield,
        lockshield_dp_kpa: round(e.lockshield_dp_pa / 1000.0, 3),
        lockshield_kv_m3_h: round(e.lockshield_kv_m3_h, 4),
        name: &e.name,
        output_w: round(e.output_w, 1),
        presetting: &e.presetting,
        return_c: round(e.return_c, 2),
        room_c: round(e.room_c, 2),
        supply_c: round(e.supply_c, 2),
        valve_dp_kpa: round(e.valve_dp_pa / 1000.0, 3),
        valve_kv_m3_h: round(e.valve_kv_m3_h, 4),
    }
}

/// One pipe of the document (as [`EmitterJson`]).
#[derive(serde::Serialize)]
struct PipeJson {
    class: &'static str,
    dp_kpa: f64,
    flow_l_h: f64,
    gradient_limit_pa_m: f64,
    gradient_pa_m: f64,
    inner_mm: f64,
    length_m: f64,
    run: Shown<crate::project::RunId>,
    series: &'static str,
    side: &'static str,
    size: &'static str,
    velocity_limit_m_s: f64,
    velocity_m_s: f64,
    zeta: f64,
}

fn pipe_json(x: &PipeResult) -> PipeJson {
    PipeJson {
        class: x.class.name(),
        dp_kpa: round(x.dp_pa / 1000.0, 4),
        flow_l_h: round(x.flow_l_h, 2),
        gradient_limit_pa_m: round(x.gradient_limit_pa_m, 1),
        gradient_pa_m: round(x.gradient_pa_m, 2),
        inner_mm: round(x.inner_mm, 2),
        length_m: round(x.length_m, 3),
        run: Shown(x.run),
        series: x.series,
        side: match x.side {
            Side::Supply => "supply",
            Side::Return => "return",
        },
        size: x.size,
        velocity_limit_m_s: round(x.velocity_limit_m_s, 3),
        velocity_m_s: round(x.velocity_m_s, 4),
        zeta: round(x.zeta, 3),
    }
}

/// A finding as one line of text: its message, led by its item ("N6: …")
/// only when the message does not name the item itself — most do
/// ("Living room (N6): …", "run R1: …"), and a label is never written
/// twice.
#[must_use]
pub fn finding_line(f: &Finding) -> String {
    let item = f.item.to_string();
    if names_word(&f.message, &item) { f.message.to_string() } else { format!("{item}: {}", f.message) }
}

/// True when `word` stands in `text` as a word of its own ("N1" in "Hall
/// (N1)", not in "N12").
fn names_word(text: &str, word: &str) -> bool {
    text.match_indices(word).any(|(i, _)| {
        let before = text[..i].chars().next_back().is_none_or(|c| !c.is_alphanumeric());
        let after = text[i + word.len()..].chars().next().is_none_or(|c| !c.is_alphanumeric());
        before && after
    })
}

fn finding_json(f: &Finding) -> Value {
    json!({
        "severity": match f.severity { Severity::Error => "error", Severity::Warning => "warning", Severity::Note => "note" },
        "kind": f.kind,
        "item": f.item.to_string(),
        "message": f.message,
    })
}

/// A readable summary of a solve.
#[must_use]
pub fn solve_text(p: &Project, sol: &Solution) -> String {
    let mut s = String::new();
    // Writing to a String cannot fail.
    let _ = write_solve_text(&mut s, p, sol);
    s
}

/// [`solve_text`] written line by line to `s` (the CLI streams it: a large
/// project's summary is never held whole).
///
/// # Errors
/// The first error of the sink.
pub fn write_solve_text(s: &mut impl std::fmt::Write, p: &Project, sol: &Solution) -> std::fmt::Result {
    let s_ = &p.settings;
    out!(s, "{} — {:.0}/{:.0} °C, {} emitters", p.name, s_.supply_c, s_.return_c, sol.emitters.len());
    if let Some(pump) = &sol.pump {
        out!(
            s,
            "load {:.2} kW · flow {:.0} l/h · pump duty {:.1} kPa (index {} at {:.1} kPa) · operating {:.0} l/h at {:.1} kPa",
            sol.heat_load_w / 1000.0,
            pump.design_flow_m3_h * 1000.0,
            pump.duty_head_pa / 1000.0,
            sol.index_emitter.map_or_else(|| "—".to_owned(), |n| n.to_string()),
            pump.index_dp_pa / 1000.0,
            pump.operating_flow_m3_h * 1000.0,
            pump.operating_head_pa / 1000.0
        );
    }
    out!(
        s,
        "water {:.1} l · expansion vessel {} · solve {} iterations, {:.2} ms",
        sol.water_volume_l,
        sol.vessel
            .as_ref()
            .map_or_else(|| "not sized (see the findings)".to_owned(), |v| format!("≥ {:.1} l", v.nominal_volume_l)),
        sol.iterations,
        sol.timings.derive_ms + sol.timings.design_ms + sol.timings.operate_ms
    );
    out!(s, "\nemitters");
    out!(
        s,
        "  {:<6} {:<22} {:>8} {:>8} {:>8} {:>8} {:>6} {:>6} {:>8}",
        "id",
        "name",
        "load W",
        "l/h",
        "out W",
        "ΔpC kPa",
        "preset",
        "auth",
        "ret °C"
    );
    for e in &sol.emitters {
        out!(
            s,
            "  {:<6} {:<22} {:>8.0} {:>8.1} {:>8.0} {:>8.2} {:>6} {:>6.2} {:>8.1}",
            e.id.to_string(),
            truncate(&e.name, 22),
            e.load_w,
            e.flow_l_h,
            e.output_w,
            e.circuit_dp_open_pa / 1000.0,
            e.presetting,
            e.authority,
            e.return_c
        );
    }
    out!(s, "\npipes");
    out!(
        s,
        "  {:<6} {:<7} {:>7} {:>8} {:>8} {:>7} {:>7} {:>8}",
        "run",
        "side",
        "m",
        "size",
        "l/h",
        "m/s",
        "Pa/m",
        "Δp kPa"
    );
    for x in &sol.pipes {
        out!(
            s,
            "  {:<6} {:<7} {:>7.2} {:>8} {:>8.1} {:>7.3} {:>7.1} {:>8.3}",
            x.run.to_string(),
            if x.side == Side::Supply { "supply" } else { "return" },
            x.length_m,
            x.size,
            x.flow_l_h,
            x.velocity_m_s,
            x.gradient_pa_m,
            x.dp_pa / 1000.0
        );
    }
    if sol.circuits.len() > 1 {
        out!(s, "\npumped circuits");
        out!(
            s,
            "  {:<6} {:<28} {:<24} {:>9} {:>8} {:>8} {:>9} {:>16}",
            "root",
            "name",
            "connection",
            "°C",
            "kW",
            "l/h",
            "primary",
            "pump duty"
        );
        for c in &sol.circuits {
            let duty = c.pump.as_ref().map_or_else(String::new, |p| {
                format!("{:.2} m³/h {:.1} kPa", p.design_flow_m3_h, p.duty_head_pa / 1000.0)
            });
            out!(
                s,
                "  {:<6} {:<28} {:<24} {:>9} {:>8.2} {:>8.0} {:>9.0} {:>16}",
                c.root.to_string(),
                c.name,
                c.connection.map_or("primary", crate::project::CircuitConnection::name),
                format!("{:.0}/{:.0}", c.supply_c, c.return_c),
                c.heat_w / 1000.0,
                c.flow_l_h,
                c.primary_flow_l_h,
                duty
            );
        }
    }
    if !sol.devices.is_empty() {
        out!(s, "\nbranch devices");
        out!(
            s,
            "  {:<6} {:<17} {:<40} {:>9} {:>8} {:>8} {:>9} {:<10}",
            "run",
            "device",
            "model",
            "setting",
            "l/h",
            "Δp kPa",
            "held kPa",
            "state"
        );
        for d in &sol.devices {
            out!(
                s,
                "  {:<6} {:<17} {:<40} {:>9} {:>8.1} {:>8.2} {:>9.2} {:<10}",
                d.run.to_string(),
                d.kind,
                d.family,
                d.setting,
                d.flow_l_h,
                d.dp_pa / 1000.0,
                d.held_dp_pa / 1000.0,
                d.state.label()
            );
        }
    }
    if !sol.findings.is_empty() {
        out!(s, "\nfindings");
        for f in &sol.findings {
            let tag = match f.severity {
                Severity::Error => "error",
                Severity::Warning => "warning",
                Severity::Note => "note",
            };
            out!(s, "  {tag:<7} {:<6} {}", f.item.to_string(), f.message);
        }
    }
    out!(
        s,
        "\nDesign aid only: pressures, temperatures, safety devices and materials must follow local codes and licensed practice \
         (EN 12828 or the local equivalent)."
    );
    Ok(())
}

fn truncate(s: &str, n: usize) -> String {
    if s.chars().count() <= n { s.to_owned() } else { s.chars().take(n - 1).collect::<String>() + "…" }
}

/// The readable summary of a supply-temperature sweep (`flowrise sweep`):
/// the lowest supply temperature every room is covered at, the first room
/// short below it, and the radiator upgrades for the target temperature.
///
/// # Errors
/// The sink's error (a String never fails).
pub fn write_sweep_text(
    s: &mut impl std::fmt::Write,
    p: &Project,
    spec: &crate::sweep::SweepSpec,
    result: &crate::sweep::SweepResult,
) -> std::fmt::Result {
    out!(
        s,
        "{} — supply-temperature sweep {:.0} → {:.0} °C ({})",
        p.name,
        spec.from_c,
        spec.to_c,
        if spec.frozen_presettings { "presettings frozen" } else { "re-balanced" }
    );
    out!(
        s,
        "a room counts as covered when it gets its load with a water drop of at least {:.1} K, inside the pipes' velocity \
         and gradient limits and the pump's head",
        result.min_drop_k
    );
    let why = match (result.limiting_constraint, &result.limiting_item) {
        (Some(c), Some(item)) => format!(" (limit: {} — {item})", c.words()),
        (Some(c), None) => format!(" (limit: {})", c.words()),
        (None, _) => String::new(),
    };
    match (result.lowest_supply_c, &result.limiting_emitter) {
        (Some(t), Some(e)) => out!(s, "every room covered down to {t:.1} °C; the first room short below it: {e}{why}"),
        (Some(t), None) => out!(s, "every room covered over the whole range, down to {t:.1} °C"),
        (None, Some(e)) => out!(s, "a room is short already at {:.1} °C: {e}{why}", spec.from_c),
        (None, None) => out!(s, "no point of the sweep could be designed"),
    }
    if result.upgrades.is_empty() {
        out!(s, "no radiator upgrade needed at {:.1} °C", result.target_c);
    } else {
        out!(
            s,
            "upgrades to cover every room at {:.1} °C supply (θr = θs − {:.1} K):",
            result.target_c,
            result.min_drop_k
        );
        for u in &result.upgrades {
            out!(
                s,
                "  {:<6} {:<24} {:>7.0} W nominal now → {:>7.0} W needed",
                u.id,
                u.name,
                u.current_nominal_w,
                u.needed_nominal_w
            );
        }
    }
    for id in &result.short_other {
        out!(s, "  {id}: short at the target but not a radiator — check it separately");
    }
    Ok(())
}

/// The readable summary of part-load cases (`flowrise part-load`).
///
/// # Errors
/// The sink's error (a String never fails).
pub fn write_part_load_text(
    s: &mut impl std::fmt::Write,
    p: &Project,
    closed: usize,
    cases: &[crate::sweep::PartLoadCase],
) -> std::fmt::Result {
    out!(s, "{} — {} of {} emitter valves closed", p.name, closed, p.emitters().len());
    let compare = cases.iter().any(|c| c.branch_controllers);
    for c in cases {
        let with = match (compare, c.branch_controllers) {
            (false, _) => "",
            (true, true) => "with branch Δp controllers    ",
            (true, false) => "without branch Δp controllers ",
        };
        out!(
            s,
            "{with}{:<16} pump {:>7.0} l/h at {:>5.1} kPa · largest valve Δp {:>5.1} kPa · worst over-supply {:>+4.0} %",
            c.control,
            c.pump_flow_l_h,
            c.pump_head_kpa,
            c.max_valve_dp_kpa,
            c.worst_over_supply() * 100.0
        );
        for ci in c.circuits.iter().filter(|_| c.circuits.len() > 1) {
            out!(
                s,
                "    circuit {} ({}): pump {:.0} l/h at {:.1} kPa · worst over-supply {:+.0} %",
                ci.name,
                ci.root,
                ci.pump_flow_l_h,
                ci.pump_head_kpa,
                ci.worst_over_supply * 100.0
            );
        }
        const SHOWN: usize = 5;
        for w in c.warnings.iter().take(SHOWN) {
            out!(s, "    warning: {w}");
        }
        if c.warnings.len() > SHOWN {
            out!(s, "    … and {} more warnings (--json or --csv list every emitter)", c.warnings.len() - SHOWN);
        }
    }
    Ok(())
}
