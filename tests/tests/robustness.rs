//! Reliability of the engine and the file layer (issue 7, non-GUI parts):
//! hostile and mutated project files never panic, validation catches every
//! non-finite number, generated projects round-trip exactly, extreme but
//! valid networks converge or say why, and a save killed mid-write leaves
//! the old or the new complete file.
//!
//! The fuzz case count scales with `FLOWRISE_FUZZ_CASES` (default
//! [`DEFAULT_FUZZ_CASES`]); the longer run and its figures are recorded in
//! `DEVELOPERS.md` ("Robustness"). Every failure message names the seed, so a
//! case can be replayed with `FLOWRISE_FUZZ_SEED=<seed>`.

#![allow(clippy::unwrap_used, clippy::expect_used, clippy::panic)] // reason: test code

use std::collections::BTreeSet;
use std::io::{BufRead, BufReader};
use std::panic::{AssertUnwindSafe, catch_unwind};
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

use flowrise_core::design::{Solution, SolveOptions, Workspace, solve_project};
use flowrise_core::emitters::floor::FloorZone;
use flowrise_core::emitters::{EmitterModel, RadiatorSpec};
use flowrise_core::generate::{BranchDevices, BuildingSpec, SplitMix64, generate_building};
use flowrise_core::project::file::{FORMAT_VERSION, FileError, MAX_FILE_BYTES, migrate};
use flowrise_core::project::{
    BranchDevice, CircuitConnection, Edit, LevelId, NodeKind, Project, PumpSpec, ReturnLayout, RunProps,
};
use flowrise_core::pump::PumpControl;
use flowrise_tests::builder::{Builder, SMALL_PUMP};

/// Mutated files tried per CI run (debug build, about 20 s on 2 cores).
const DEFAULT_FUZZ_CASES: u64 = 3000;

fn env_u64(name: &str) -> Option<u64> {
    std::env::var(name).ok().and_then(|v| v.trim().replace('_', "").parse().ok())
}

// ---------------------------------------------------------------- helpers

/// A small deterministic random source for the mutations (splitmix64, the
/// generator `flowrise_core::generate` uses).
struct Rng(SplitMix64);

impl Rng {
    fn new(seed: u64) -> Self {
        Self(SplitMix64::new(seed))
    }
    fn below(&mut self, n: usize) -> usize {
        usize::try_from(self.0.below(n as u64)).unwrap_or(0)
    }
    fn unit(&mut self) -> f64 {
        (self.0.next_u64() >> 11) as f64 / (1u64 << 53) as f64
    }
    fn pick<'a, T>(&mut self, xs: &'a [T]) -> &'a T {
        &xs[self.below(xs.len())]
    }
}

fn demo_texts() -> Vec<(String, String)> {
    let v = flowrise_tests::demo_paths();
    assert!(v.len() >= 3, "three demo projects expected");
    v.into_iter()
        .map(|p| (p.file_name().unwrap().to_string_lossy().into_owned(), std::fs::read_to_string(&p).unwrap()))
        .collect()
}

/// A project with every kind of node, every emitter model, both pump
/// controls with a set-point, a length override, bend points and every
/// optional number set: every place a number enters a file.
fn every_field_project() -> Project {
    let mut b = Builder::new("Every field");
    let g = LevelId(0);
    let up = b.level("Upper", 3.0);
    let s = b.source(g, 0.0, 0.0, 30_000.0, SMALL_PUMP, PumpControl::ConstantDp { setpoint_kpa: 25.0 });
    let j = b.junction(g, 4.0, 0.0);
    let r = b.run_via(s, j, &[(2.0, 0.5)]);
    b.p.apply(Edit::SetRunProps { id: r, props: RunProps { length_override_m: Some(6.0), ..RunProps::default() } })
        .unwrap();
    let rad = b.radiator(g, 6.0, 1.0, "Living", 1500.0, 20.0);
    b.run(j, rad);
    // A radiator with its own exponent.
    if let Some(NodeKind::Emitter(mut e)) = b.p.node(rad).map(|n| n.kind.clone()) {
        if let EmitterModel::Radiator(spec) = &mut e.model {
            *spec = RadiatorSpec { exponent_n: Some(1.3), ..spec.clone() };
        }
        b.p.apply(Edit::SetNodeKind { id: rad, kind: NodeKind::Emitter(e) }).unwrap();
    }
    let old = b.existing_radiator(g, 6.0, -1.0, "Hall", 600.0, 18.0, 1200.0, 800);
    b.run(j, old);
    let top = b.junction(up, 4.0, 0.0);
    b.run(j, top);
    let h = b.header(up, 5.0, 2.0, "Manifold", 4);
    let rh = b.run(top, h);
    let props = RunProps { return_layout: Some(ReturnLayout::Reverse), ..RunProps::default() };
    b.p.apply(Edit::SetRunProps { id: rh, props }).unwrap();
    let fl = b.floor_loop(up, 6.0, 4.0, "Bath", 400.0, 24.0, 6.0, FloorZone::Occupied);
    b.run(h, fl);
    let t = b.terminal(up, 2.0, 3.0, "Office", 900.0, 20.0, 2000.0);
    b.run(top, t);
    // A branch behind a Δp controller with a fixed model and set-point, a
    // mixing circuit with its own loop, and a separator with a pump-only
    // circuit behind a balancing valve.
    let bj = b.junction(g, 4.0, -3.0);
    let rb = b.run(j, bj);
    let device =
        Some(BranchDevice::DpController { family: Some("dpc-demo-dn15".to_owned()), setpoint_kpa: Some(12.0) });
    b.p.apply(Edit::SetRunProps { id: rb, props: RunProps { device, ..RunProps::default() } }).unwrap();
    let kitchen = b.radiator(g, 6.0, -3.0, "Kitchen", 800.0, 20.0);
    b.run(bj, kitchen);
    let mix = b.circuit(g, 2.0, -3.0, "Floor circuit", CircuitConnection::MixingValve, (38.0, 30.0));
    b.run(bj, mix);
    let lp = b.floor_loop(g, 2.0, -6.0, "Study floor", 500.0, 20.0, 12.0, FloorZone::Occupied);
    b.run(mix, lp);
    let sep = b.separator(up, 1.0, -2.0, "Separator");
    let rs = b.run(top, sep);
    let device = Some(BranchDevice::BalancingValve { family: None, setting: Some("3".to_owned()) });
    b.p.apply(Edit::SetRunProps { id: rs, props: RunProps { device, ..RunProps::default() } }).unwrap();
    let direct = b.circuit(up, 1.0, -4.0, "Attic", CircuitConnection::Direct, (70.0, 55.0));
    b.run(sep, direct);
    let attic = b.radiator(up, 3.0, -4.0, "Attic room", 700.0, 20.0);
    b.run(direct, attic);
    // Pump design flow (written when a design is frozen) and a static height.
    if let Some(NodeKind::Source(mut src)) = b.p.node(s).map(|n| n.kind.clone()) {
        src.pump = PumpSpec { design_flow_m3_h: Some(1.1), ..src.pump.clone() };
        b.p.apply(Edit::SetNodeKind { id: s, kind: NodeKind::Source(src) }).unwrap();
    }
    let mut settings = b.p.settings.clone();
    settings.static_height_m = Some(8.0);
    b.p.apply(Edit::SetSettings(Box::new(settings))).unwrap();
    b.p
}

/// Byte ranges of the number tokens of RON text (outside strings and
/// comments), with a flag for floats (a `.` or exponent).
fn number_tokens(text: &str) -> Vec<(usize, usize, bool)> {
    let b = text.as_bytes();
    let mut out = Vec::new();
    let mut i = 0;
    while i < b.len() {
        match b[i] {
            b'"' => {
                i += 1;
                while i < b.len() && b[i] != b'"' {
                    i += if b[i] == b'\\' { 2 } else { 1 };
                }
                i += 1;
            }
            b'/' if b.get(i + 1) == Some(&b'/') => {
                while i < b.len() && b[i] != b'\n' {
                    i += 1;
                }
            }
            c if c.is_ascii_digit() || (c == b'-' && b.get(i + 1).is_some_and(u8::is_ascii_digit)) => {
                // Not part of an identifier (e.g. `x_m`, `en10255`).
                if i > 0 && (b[i - 1].is_ascii_alphanumeric() || b[i - 1] == b'_') {
                    i += 1;
                    continue;
                }
                let start = i;
                i += 1;
                while i < b.len() && (b[i].is_ascii_digit() || matches!(b[i], b'.' | b'e' | b'E' | b'+' | b'-')) {
                    i += 1;
                }
                let tok = &text[start..i];
                out.push((start, i, tok.contains(['.', 'e', 'E'])));
            }
            _ => i += 1,
        }
    }
    out
}

/// Every number of an emitter and pipe result (and the pump's, the link
/// flows and node pressures) must be finite.
fn assert_finite_solution(sol: &Solution, what: &str) {
    for e in &sol.emitters {
        let xs = [
            ("load_w", e.load_w),
            ("room_c", e.room_c),
            ("supply_c", e.supply_c),
            ("design_return_c", e.design_return_c),
            ("design_flow_kg_s", e.design_flow_kg_s),
            ("design_flow_l_h", e.design_flow_l_h),
            ("design_output_w", e.design_output_w),
            ("circuit_dp_open_pa", e.circuit_dp_open_pa),
            ("circuit_rest_pa", e.circuit_rest_pa),
            ("valve_dp_pa", e.valve_dp_pa),
            ("kv_needed_m3_h", e.kv_needed_m3_h),
            ("valve_kv_m3_h", e.valve_kv_m3_h),
            ("authority", e.authority),
            ("presetting_flow_error", e.presetting_flow_error),
            ("flow_kg_s", e.flow_kg_s),
            ("flow_l_h", e.flow_l_h),
            ("return_c", e.return_c),
            ("output_w", e.output_w),
            ("flow_deviation", e.flow_deviation),
        ];
        for (name, v) in xs {
            assert!(v.is_finite(), "{what}: emitter {} {name} = {v}", e.id);
        }
    }
    for p in &sol.pipes {
        let xs = [
            ("length_m", p.length_m),
            ("inner_mm", p.inner_mm),
            ("zeta", p.zeta),
            ("temperature_c", p.temperature_c),
            ("design_flow_kg_s", p.design_flow_kg_s),
            ("flow_kg_s", p.flow_kg_s),
            ("flow_l_h", p.flow_l_h),
            ("velocity_m_s", p.velocity_m_s),
            ("velocity_limit_m_s", p.velocity_limit_m_s),
            ("gradient_pa_m", p.gradient_pa_m),
            ("dp_pa", p.dp_pa),
        ];
        for (name, v) in xs {
            assert!(v.is_finite(), "{what}: pipe {} {:?} {name} = {v}", p.run, p.side);
        }
    }
    if let Some(pump) = &sol.pump {
        let xs = [
            ("design_flow_kg_s", pump.design_flow_kg_s),
            ("design_flow_m3_h", pump.design_flow_m3_h),
            ("index_dp_pa", pump.index_dp_pa),
            ("duty_head_pa", pump.duty_head_pa),
            ("available_pa", pump.available_pa),
            ("operating_flow_m3_h", pump.operating_flow_m3_h),
            ("operating_head_pa", pump.operating_head_pa),
            ("hydraulic_power_w", pump.hydraulic_power_w),
        ];
        for (name, v) in xs {
            assert!(v.is_finite(), "{what}: pump {name} = {v}");
        }
    }
    assert!(sol.heat_load_w.is_finite() && sol.water_volume_l.is_finite(), "{what}: totals not finite");
    for (k, q) in sol.link_flows_kg_s.iter().enumerate() {
        assert!(q.is_finite(), "{what}: link {k} flow {q}");
    }
    for (k, p) in sol.node_pressures_pa.iter().enumerate() {
        assert!(p.is_finite(), "{what}: node {k} pressure {p}");
    }
}

/// Load `text`, and when it loads, solve it: no panic, no NaN. Returns
/// whether the text loaded.
fn load_and_solve(text: &str, what: &str) -> bool {
    let loaded = catch_unwind(|| Project::from_ron(text));
    let project = match loaded {
        Err(_) => panic!("{what}: Project::from_ron panicked"),
        Ok(Err(e)) => {
            assert!(!e.to_string().trim().is_empty(), "{what}: empty error message");
            return false;
        }
        Ok(Ok(p)) => p,
    };
    let solved =
        catch_unwind(AssertUnwindSafe(|| solve_project(&project, &SolveOptions::default(), &mut Workspace::default())));
    let Ok(sol) = solved else { panic!("{what}: solve_project panicked on a loaded file") };
    assert_finite_solution(&sol, what);
    true
}

#[path = "robustness/mutate.rs"]
mod mutate;

use mutate::{mutate, seed_texts};

// ---------------------------------------------------------------- tests

#[test]
fn mutated_files_load_or_refuse_without_panic() {
    let seeds = seed_texts();
    // Unmutated seeds load and solve cleanly.
    for (name, text) in &seeds {
        assert!(load_and_solve(text, name), "{name} does not load");
    }
    let cases = env_u64("FLOWRISE_FUZZ_CASES").unwrap_or(DEFAULT_FUZZ_CASES);
    let only = env_u64("FLOWRISE_FUZZ_SEED");
    let t0 = Instant::now();
    let (mut loaded, mut tried) = (0u64, 0u64);
    for case in 0..cases {
        let seed = only.unwrap_or(case);
        let mut rng = Rng::new(seed ^ 0x5EED_F10E);
        let (name, base) = rng.pick(&seeds);
        let mut text = base.clone();
        for _ in 0..=rng.below(3) {
            text = mutate(&text, &mut rng);
        }
        if load_and_solve(&text, &format!("fuzz case seed {seed} (from {name})")) {
            loaded += 1;
        }
        tried += 1;
        if only.is_some() {
            break;
        }
    }
    eprintln!(
        "robustness fuzz: {tried} mutated files tried, {loaded} loaded and solved, 0 panics, {:.1} s",
        t0.elapsed().as_secs_f64()
    );
    // The mutations must not all be trivially fatal: some files still load.
    assert!(only.is_some() || loaded > tried / 50, "only {loaded} of {tried} mutated files loaded");
}

#[test]
fn every_number_of_a_file_is_checked() {
    let text = every_field_project().to_ron().unwrap();
    let floats: Vec<_> = number_tokens(&text).into_iter().filter(|t| t.2).collect();
    assert!(floats.len() > 60, "only {} floats found", floats.len());
    let mut failures = Vec::new();
    for &(s, e, _) in &floats {
        for bad in ["NaN", "inf", "-inf", "1e999"] {
            let t = format!("{}{bad}{}", &text[..s], &text[e..]);
            let line = text[..s].lines().count();
            match Project::from_ron(&t) {
                Ok(_) => panic!("{bad} at line {line} (was {}) was accepted", &text[s..e]),
                Err(err) => {
                    let msg = err.to_string();
                    assert!(!msg.is_empty(), "empty message for {bad} at line {line}");
                }
            }
        }
        // Huge but finite values either load and solve cleanly or are refused.
        for big in ["1e308", "-1e308", "-1", "0.0", "1e-300"] {
            let t = format!("{}{big}{}", &text[..s], &text[e..]);
            let line_text = text[..s].rsplit('\n').next().unwrap_or("").trim();
            let what = format!("{big} at `{line_text}…`");
            if let Err(e) = catch_unwind(|| load_and_solve(&t, &what)) {
                failures.push(e.downcast_ref::<String>().cloned().unwrap_or(what));
            }
        }
    }
    // Every whole number (ids, references, sizes, outlet counts) at the
    // extremes of its type: refused or loaded, never a panic.
    for (s, e, _) in number_tokens(&text).into_iter().filter(|t| !t.2) {
        for big in ["0", "4294967295", "1"] {
            let t = format!("{}{big}{}", &text[..s], &text[e..]);
            let line_text = text[..s].rsplit('\n').next().unwrap_or("").trim();
            let what = format!("{big} at `{line_text}…`");
            if let Err(e) = catch_unwind(|| load_and_solve(&t, &what)) {
                failures.push(e.downcast_ref::<String>().cloned().unwrap_or(what));
            }
        }
    }
    assert!(failures.is_empty(), "{} failures:\n{}", failures.len(), failures.join("\n"));
}

#[test]
fn hostile_structures_give_clear_errors() {
    let good = every_field_project().to_ron().unwrap();
    // Deep nesting, 10^5 levels, at the top and inside a field: the parser's
    // recursion limit refuses it (no stack overflow).
    for (open, close) in [("(", ")"), ("[", "]"), ("{", "}"), ("Some(", ")")] {
        let deep = format!("{}{}", open.repeat(100_000), close.repeat(100_000));
        let err = Project::from_ron(&deep).unwrap_err();
        assert!(matches!(err, FileError::Parse { .. }), "{err}");
        let inside = good.replacen("name: \"Every field\"", &format!("name: {deep}"), 1);
        let err = Project::from_ron(&inside).unwrap_err();
        assert!(matches!(err, FileError::Parse { .. }), "{err}");
        let vertices = good.replacen("vertices: [", &format!("vertices: [{deep},"), 1);
        assert!(Project::from_ron(&vertices).is_err());
    }
    // Empty, garbage, binary.
    for t in ["", " ", "(", ")", "\0\0\0", "flowrise", "(format: \"flowrise-project\")", "[1,2,3]"] {
        assert!(Project::from_ron(t).is_err(), "{t:?}");
    }
    // Huge integers where u32 ids are expected.
    let t = good.replacen("id: 1,", "id: 18446744073709551616,", 1);
    assert!(matches!(Project::from_ron(&t), Err(FileError::Parse { .. })));
    // Negative lengths and sizes.
    let t = good.replacen("length_override_m: Some(6.0)", "length_override_m: Some(-6.0)", 1);
    let err = Project::from_ron(&t).unwrap_err().to_string();
    assert!(err.contains("length -6"), "{err}");
    // Dangling reference: a run to a node that does not exist.
    let p = every_field_project();
    let mut f = p.to_file();
    f.runs[0].b = flowrise_core::project::NodeId(999_999);
    let err = Project::from_file(f).unwrap_err().to_string();
    assert!(err.contains("does not exist"), "{err}");
    // Duplicate ids: node, run, level.
    let mut f = p.to_file();
    let dup = f.nodes[1].clone();
    f.nodes.push(dup);
    assert!(Project::from_file(f).unwrap_err().to_string().contains("used twice"));
    let mut f = p.to_file();
    let dup = f.runs[0].clone();
    f.runs.push(dup);
    assert!(Project::from_file(f).unwrap_err().to_string().contains("used twice"));
    let mut f = p.to_file();
    let dup = f.levels[0].clone();
    f.levels.push(dup);
    assert!(Project::from_file(f).unwrap_err().to_string().contains("used twice"));
    // A node on a level that does not exist.
    let mut f = p.to_file();
    f.nodes[0].level = LevelId(77);
    assert!(Project::from_file(f).unwrap_err().to_string().contains("does not exist"));
}

#[test]
fn oversized_file_is_refused_before_reading() {
    let dir = scratch_dir("oversized");
    let path = dir.join("huge.ron");
    // A sparse file: its length is over the limit without using the disk.
    let f = std::fs::File::create(&path).unwrap();
    f.set_len(MAX_FILE_BYTES + 1).unwrap();
    drop(f);
    let err = Project::load(&path).unwrap_err();
    assert!(matches!(err, FileError::TooLarge { .. }), "{err}");
    assert!(err.to_string().contains("larger than"), "{err}");
    std::fs::remove_dir_all(&dir).ok();
}

/// A file of `n` fixed-Kv emitters in one long chain of junctions, written
/// compactly.
fn many_emitters_text(n: u32) -> String {
    use std::fmt::Write as _;
    let mut t = String::with_capacity(n as usize * 330);
    t.push_str("(format:\"flowrise-project\",format_version:1,name:\"many\",levels:[(id:0,name:\"G\",elevation_m:0.0)],nodes:[");
    t.push_str("(id:1,level:0,pos:(x_m:0.0,y_m:0.0),kind:Source((name:\"S\",capacity_w:1e8,kv_m3_h:9000.0,water_content_l:3.0,pump:(curve_points:((1.0,90.0),(50.0,75.0),(100.0,30.0)),control:FixedSpeed)))),");
    for i in 0..n {
        let (j, e) = (2 + 2 * i, 3 + 2 * i);
        let x = 1.0 + f64::from(i % 1000) * 0.5;
        let y = f64::from(i / 1000) * 0.5;
        write!(t, "(id:{j},level:0,pos:(x_m:{x},y_m:{y}),kind:Junction),").unwrap();
        write!(
            t,
            "(id:{e},level:0,pos:(x_m:{x},y_m:{}),kind:Emitter((name:\"E\",room_c:20.0,load_w:100.0,\
             model:Terminal((nominal_output_w:500.0,nominal_supply_c:70.0,nominal_return_c:60.0,nominal_room_c:20.0,\
             exponent_n:1.0,kv_m3_h:2.5,water_content_l:1.0)),valves:(valve_family:\"trv-demo-8\",presetting:None,\
             lockshield_family:\"lockshield-demo\")))),",
            y + 0.25
        )
        .unwrap();
    }
    t.push_str("],runs:[");
    for i in 0..n {
        let (prev, j, e) = (if i == 0 { 1 } else { 2 * i }, 2 + 2 * i, 3 + 2 * i);
        write!(t, "(id:{},a:{prev},b:{j},vertices:[],props:()),", 1 + 2 * i).unwrap();
        write!(t, "(id:{},a:{j},b:{e},vertices:[],props:()),", 2 + 2 * i).unwrap();
    }
    t.push_str("])");
    t
}

#[test]
fn many_emitters_load_in_bounded_time() {
    // 3·10^4 in CI (debug: a few seconds); the longer run
    // (FLOWRISE_FUZZ_CASES set) loads 10^6.
    let n = env_u64("FLOWRISE_MANY_EMITTERS")
        .map_or(if env_u64("FLOWRISE_FUZZ_CASES").is_some() { 1_000_000 } else { 30_000 }, |n| n as u32);
    let text = many_emitters_text(n);
    let t0 = Instant::now();
    let p = Project::from_ron(&text).unwrap();
    assert_eq!(p.emitters().len(), n as usize);
    eprintln!("{n} emitters ({} MB) loaded in {:.1} s", text.len() / 1_000_000, t0.elapsed().as_secs_f64());
    // A duplicated emitter id among them is named.
    let dup = many_emitters_text(1000).replacen("(id:5,", "(id:3,", 1);
    let err = Project::from_ron(&dup).unwrap_err().to_string();
    assert!(err.contains("N3") && err.contains("used twice"), "{err}");
}

#[test]
fn format_versions_migrate_or_are_refused_with_a_message() {
    let good = every_field_project().to_ron().unwrap();
    let v = |n: u32| good.replacen("format_version: 1,", &format!("format_version: {n},"), 1);
    assert!(good.contains("format_version: 1,"));
    // The current version passes the migration step unchanged.
    let file = every_field_project().to_file();
    assert_eq!(migrate(file.clone(), FORMAT_VERSION).unwrap(), file);
    // Version 0 predates the first format: refused, saying so.
    let err = Project::from_ron(&v(0)).unwrap_err();
    assert!(matches!(err, FileError::Version(_)), "{err}");
    assert!(err.to_string().contains("format version 0"), "{err}");
    // A newer version is refused with a message to update — also when it
    // has fields this build does not know.
    let err = Project::from_ron(&v(2)).unwrap_err();
    assert!(err.to_string().contains("newer flowrise"), "{err}");
    let with_new_field = v(7).replacen("name: \"Every field\",", "name: \"Every field\", colour_scheme: Dark(3),", 1);
    let err = Project::from_ron(&with_new_field).unwrap_err();
    assert!(err.to_string().contains("newer flowrise") && err.to_string().contains("version 7"), "{err}");
    // … and when a newer kind of item does not parse at all.
    let broken_newer = v(3).replacen("kind: Junction", "kind: Pipework(3)", 1);
    assert_ne!(broken_newer, v(3));
    let err = Project::from_ron(&broken_newer).unwrap_err();
    assert!(matches!(err, FileError::Version(_)), "{err}");
    // Not a project at all.
    let err = Project::from_ron(&good.replacen("flowrise-project", "spreadsheet", 1)).unwrap_err();
    assert!(err.to_string().contains("not a flowrise project"), "{err}");
}

#[test]
fn generated_projects_round_trip_exactly() {
    let mut rng = Rng::new(42);
    let mut projects = vec![every_field_project()];
    for seed in 0..12u64 {
        let spec = BuildingSpec {
            floors: 1 + (seed % 3) as u32,
            per_floor: 1 + rng.below(25) as u32,
            reverse_return: seed % 2 == 1,
            headers: seed % 3 == 2,
            branch_devices: [BranchDevices::DpControllers, BranchDevices::BalancingValves, BranchDevices::None]
                [(seed / 2 % 3) as usize],
            seed,
        };
        projects.push(generate_building(&spec).unwrap());
    }
    for (name, text) in demo_texts() {
        let p = Project::from_ron(&text).unwrap();
        assert_eq!(Project::from_ron(&p.to_ron().unwrap()).unwrap(), p, "{name}");
    }
    let dir = scratch_dir("round-trip");
    for (i, p) in projects.iter().enumerate() {
        let text = p.to_ron().unwrap();
        let back = Project::from_ron(&text).unwrap();
        assert_eq!(&back, p, "project {i}");
        assert_eq!(back.to_ron().unwrap(), text, "project {i}: second save differs");
        // Through the disk, too.
        let path = dir.join("p.ron");
        p.save(&path).unwrap();
        assert_eq!(&Project::load(&path).unwrap(), p, "project {i} via disk");
    }
    std::fs::remove_dir_all(&dir).ok();
}

// ---------------------------------------------------------------- solver

fn set_all_runs(p: &mut Project, f: impl Fn(&mut RunProps)) {
    let edits: Vec<Edit> = p
        .runs()
        .map(|r| {
            let mut props = r.props.clone();
            f(&mut props);
            Edit::SetRunProps { id: r.id, props }
        })
        .collect();
    p.apply(Edit::Batch(edits)).unwrap();
}

fn set_all_loads(p: &mut Project, load_w: f64) {
    let edits: Vec<Edit> = p
        .nodes()
        .filter_map(|n| match &n.kind {
            NodeKind::Emitter(e) => {
                let mut e = e.clone();
                e.load_w = load_w;
                Some(Edit::SetNodeKind { id: n.id, kind: NodeKind::Emitter(e) })
            }
            _ => None,
        })
        .collect();
    p.apply(Edit::Batch(edits)).unwrap();
}

fn set_pump(p: &mut Project, curve: [(f64, f64); 3], control: PumpControl) {
    let s = p.sources()[0];
    let Some(NodeKind::Source(mut src)) = p.node(s).map(|n| n.kind.clone()) else { unreachable!() };
    src.pump = PumpSpec { curve_points: curve, control, design_flow_m3_h: None };
    p.apply(Edit::SetNodeKind { id: s, kind: NodeKind::Source(src) }).unwrap();
}

fn reverse_everywhere(p: &mut Project) {
    let mut s = p.settings.clone();
    s.return_layout = ReturnLayout::Reverse;
    p.apply(Edit::SetSettings(Box::new(s))).unwrap();
    set_all_runs(p, |r| r.return_layout = Some(ReturnLayout::Reverse));
}

/// Solve: no panic, no NaN, and either converged or an error finding says
/// why not.
fn solve_checked(p: &Project, opts: &SolveOptions, what: &str) -> Solution {
    let sol = catch_unwind(AssertUnwindSafe(|| solve_project(p, opts, &mut Workspace::default())))
        .unwrap_or_else(|_| panic!("{what}: solve_project panicked"));
    assert_finite_solution(&sol, what);
    assert!(sol.converged || sol.has_errors(), "{what}: neither converged nor an error finding: {:#?}", sol.findings);
    sol
}

const WEAK_PUMP: [(f64, f64); 3] = [(0.01, 0.5), (0.05, 0.4), (0.1, 0.1)];

#[test]
fn extreme_but_valid_networks_converge_or_explain() {
    // Tiny: one emitter of 1 W.
    let mut b = Builder::new("tiny");
    let g = LevelId(0);
    let s = b.source(g, 0.0, 0.0, 1000.0, SMALL_PUMP, PumpControl::FixedSpeed);
    let e = b.radiator(g, 1.0, 0.0, "only", 1.0, 20.0);
    b.run(s, e);
    let sol = solve_checked(&b.p, &SolveOptions::default(), "tiny 1 W");
    assert!(sol.converged, "tiny network: {:#?}", sol.findings);
    // No emitter at all, and a source alone.
    let mut lone = Project::new("lone");
    lone.apply(Edit::AddNode {
        level: g,
        pos: flowrise_core::project::PlanPoint::new(0.0, 0.0),
        kind: b.p.node(s).unwrap().kind.clone(),
    })
    .unwrap();
    solve_checked(&lone, &SolveOptions::default(), "source alone");
    solve_checked(&Project::new("empty"), &SolveOptions::default(), "empty");

    let controls = [
        PumpControl::FixedSpeed,
        PumpControl::ConstantDp { setpoint_kpa: 30.0 },
        PumpControl::ProportionalDp { setpoint_kpa: 30.0 },
    ];
    for (i, spec) in [
        BuildingSpec::new(1, 1),
        BuildingSpec::new(2, 7),
        BuildingSpec { reverse_return: true, ..BuildingSpec::new(3, 12) },
        BuildingSpec { headers: true, seed: 4, ..BuildingSpec::new(2, 15) },
    ]
    .iter()
    .enumerate()
    {
        let base = generate_building(spec).unwrap();
        let emitters = base.emitters();
        let what = |s: &str| format!("{spec:?} {s}");
        // Very long runs: every run 500 m.
        let mut p = base.clone();
        set_all_runs(&mut p, |r| r.length_override_m = Some(500.0));
        solve_checked(&p, &SolveOptions::default(), &what("500 m runs"));
        // Tiny loads.
        let mut p = base.clone();
        set_all_loads(&mut p, 1.0);
        solve_checked(&p, &SolveOptions::default(), &what("1 W loads"));
        // Zero loads.
        let mut p = base.clone();
        set_all_loads(&mut p, 0.0);
        solve_checked(&p, &SolveOptions::default(), &what("0 W loads"));
        // All valves closed but one, and all closed.
        let mut opts =
            SolveOptions { closed_emitters: emitters.iter().skip(1).copied().collect(), ..SolveOptions::default() };
        solve_checked(&base, &opts, &what("all closed but one"));
        opts.closed_emitters = emitters.iter().copied().collect::<BTreeSet<_>>();
        solve_checked(&base, &opts, &what("all closed"));
        // A pump far too weak, under each control.
        let mut p = base.clone();
        set_pump(&mut p, WEAK_PUMP, controls[i % 3]);
        solve_checked(&p, &SolveOptions::default(), &what("weak pump"));
        // Reverse return everywhere, with long runs and a weak pump together.
        let mut p = base.clone();
        reverse_everywhere(&mut p);
        solve_checked(&p, &SolveOptions::default(), &what("reverse everywhere"));
        set_all_runs(&mut p, |r| r.length_override_m = Some(500.0));
        set_all_loads(&mut p, 1.0);
        set_pump(&mut p, WEAK_PUMP, PumpControl::FixedSpeed);
        solve_checked(&p, &SolveOptions::default(), &what("everything at once"));
        opts.closed_emitters = emitters.iter().skip(1).copied().collect();
        solve_checked(&p, &opts, &what("everything at once, one valve open"));
    }
}

#[test]
fn ten_thousand_emitters_converge_or_explain() {
    // Slow in debug (each solve of 10 000 emitters takes seconds): CI runs
    // the hardest combination; the longer run adds the plain solve and each
    // extreme alone.
    let base = generate_building(&BuildingSpec { reverse_return: true, ..BuildingSpec::new(10, 1000) }).unwrap();
    assert_eq!(base.emitters().len(), 10_000);
    let long = env_u64("FLOWRISE_FUZZ_CASES").is_some();
    if long {
        let sol = solve_checked(&base, &SolveOptions::default(), "10 000 emitters");
        assert!(sol.converged, "{:#?}", sol.findings.iter().take(5).collect::<Vec<_>>());
        let mut weak = base.clone();
        set_pump(&mut weak, WEAK_PUMP, PumpControl::FixedSpeed);
        solve_checked(&weak, &SolveOptions::default(), "10 000 emitters, weak pump");
    }
    let opts =
        SolveOptions { closed_emitters: base.emitters().into_iter().skip(1).collect(), ..SolveOptions::default() };
    if long {
        solve_checked(&base, &opts, "10 000 emitters, one valve open");
    }
    let mut p = base;
    set_all_runs(&mut p, |r| r.length_override_m = Some(500.0));
    set_pump(&mut p, WEAK_PUMP, PumpControl::ProportionalDp { setpoint_kpa: 0.4 });
    solve_checked(&p, &opts, "10 000 emitters, 500 m runs, weak pump, one valve open");
}

// ---------------------------------------------------------------- saving

fn scratch_dir(tag: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("flowrise-robustness-{tag}-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

fn temp_files(dir: &Path) -> Vec<String> {
    std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .filter(|n| n.ends_with(".tmp"))
        .collect()
}

#[test]
fn save_leaves_no_temp_file_and_survives_stale_ones() {
    let dir = scratch_dir("stale");
    let path = dir.join("plant room.ron");
    let p = every_field_project();
    p.save(&path).unwrap();
    assert!(temp_files(&dir).is_empty(), "{:?}", temp_files(&dir));
    // Stale temporary files of killed saves (with our pid and another
    // process's) do not stop a save; the one of a process that no longer
    // runs is cleared (pid 4194304 is above Linux's pid_max; pid 1 runs).
    let ours = dir.join(format!(".plant room.ron.{}.tmp", std::process::id()));
    std::fs::write(&ours, "half a fil").unwrap();
    std::fs::write(dir.join(".plant room.ron.1.tmp"), "(((").unwrap();
    let dead = dir.join(".plant room.ron.4194304.tmp");
    std::fs::write(&dead, "(((").unwrap();
    let mut q = p.clone();
    q.name = "Renamed".to_owned();
    q.save(&path).unwrap();
    assert_eq!(Project::load(&path).unwrap(), q);
    assert!(!ours.exists(), "our stale temp file was not reused");
    if Path::new("/proc/self").exists() {
        assert!(!dead.exists(), "a dead process's temp file is cleared");
        assert!(dir.join(".plant room.ron.1.tmp").exists(), "a running process's temp file is left alone");
    }
    // A save that fails (directory gone) leaves the old file and no temp.
    let missing = dir.join("no such dir").join("x.ron");
    assert!(matches!(p.save(&missing), Err(FileError::Io { .. })));
    assert_eq!(Project::load(&path).unwrap(), q);
    std::fs::remove_dir_all(&dir).ok();
}

/// Child side of [`killed_save_leaves_old_or_new_file`]: with the variable
/// set, load the two projects and save them over the target in turn until
/// killed. Without it (a normal test run) this does nothing.
#[test]
fn save_loop_child() {
    let Ok(target) = std::env::var("FLOWRISE_SAVE_LOOP_TARGET") else { return };
    let a = Project::load(Path::new(&std::env::var("FLOWRISE_SAVE_LOOP_A").unwrap())).unwrap();
    let b = Project::load(Path::new(&std::env::var("FLOWRISE_SAVE_LOOP_B").unwrap())).unwrap();
    let target = PathBuf::from(target);
    println!("ready");
    for i in 0u64.. {
        let p = if i % 2 == 0 { &b } else { &a };
        p.save(&target).unwrap();
    }
}

#[test]
fn killed_save_leaves_old_or_new_file() {
    let dir = scratch_dir("kill");
    // Two different projects of a few hundred kB: a save takes long enough
    // to be interrupted in the middle.
    let a = generate_building(&BuildingSpec::new(2, 60)).unwrap();
    let mut b = a.clone();
    b.name = "The other one".to_owned();
    set_all_runs(&mut b, |r| r.length_override_m = Some(7.5));
    let (ta, tb) = (a.to_ron().unwrap(), b.to_ron().unwrap());
    assert!(ta.len() > 100_000 && ta != tb);
    let (pa, pb) = (dir.join("a.ron"), dir.join("b.ron"));
    std::fs::write(&pa, &ta).unwrap();
    std::fs::write(&pb, &tb).unwrap();
    let target = dir.join("project.ron");
    a.save(&target).unwrap();

    let exe = std::env::current_exe().unwrap();
    let kills = env_u64("FLOWRISE_KILL_ROUNDS").unwrap_or(25);
    let max_delay_us = env_u64("FLOWRISE_KILL_MAX_US").map_or(150_000, |v| v as usize);
    let mut rng = Rng::new(99);
    let (mut saw_a, mut saw_b) = (0, 0);
    for round in 0..kills {
        let mut child = Command::new(&exe)
            .args(["--exact", "save_loop_child", "--nocapture", "--test-threads", "1"])
            .env("FLOWRISE_SAVE_LOOP_TARGET", &target)
            .env("FLOWRISE_SAVE_LOOP_A", &pa)
            .env("FLOWRISE_SAVE_LOOP_B", &pb)
            .stdout(Stdio::piped())
            .stderr(Stdio::null())
            .spawn()
            .unwrap();
        // Wait for "ready", then let it save for a random while and kill it
        // (SIGKILL on Unix: no cleanup runs).
        let mut out = BufReader::new(child.stdout.take().unwrap());
        let mut line = String::new();
        while !line.contains("ready") {
            line.clear();
            assert!(out.read_line(&mut line).unwrap() > 0, "round {round}: child ended before saving");
        }
        std::thread::sleep(Duration::from_micros(rng.below(max_delay_us) as u64));
        child.kill().unwrap();
        child.wait().unwrap();
        let now = std::fs::read_to_string(&target).unwrap();
        if now == ta {
            saw_a += 1;
        } else if now == tb {
            saw_b += 1;
        } else {
            panic!("round {round}: the project file is neither the old nor the new one ({} bytes)", now.len());
        }
        // And it loads.
        Project::from_ron(&now).unwrap();
    }
    let stale = temp_files(&dir).len();
    eprintln!("killed saves: {kills} rounds, old file {saw_a}, new file {saw_b}, {stale} stale temp files");
    // A save after all those kills works and clears the killed children's
    // temporary files (their processes are gone).
    b.save(&target).unwrap();
    assert_eq!(Project::load(&target).unwrap(), b);
    if Path::new("/proc/self").exists() {
        assert!(temp_files(&dir).is_empty(), "stale temp files remain: {:?}", temp_files(&dir));
    }
    std::fs::remove_dir_all(&dir).ok();
}
