//! Issue 20, items 6, 7 and 10: what a user reads when something is wrong
//! — a misspelt or missing field names its item, control characters in
//! names are refused, each label appears once, numbers are rounded for
//! reading, and the findings say what is really wrong.

#![allow(clippy::unwrap_used, clippy::expect_used, clippy::panic)] // reason: test code

use flowrise_core::design::{FindingKind, ItemRef, Solution, SolveOptions, Workspace, solve_project};
use flowrise_core::project::{Edit, Level, NodeKind, PlanPoint, Project, RunProps};
use flowrise_core::pump::PumpControl;
use flowrise_tests::builder::{Builder, SMALL_PUMP};

/// Source, junction and two radiators (N1 source, N3 "Living room", N4
/// "Bedroom"), runs R1–R3.
fn small() -> Project {
    let mut b = Builder::new("Small house");
    let l = b.p.levels[0].id;
    let s = b.source(l, 0.0, 0.0, 10_000.0, SMALL_PUMP, PumpControl::ConstantDp { setpoint_kpa: 20.0 });
    let j = b.junction(l, 5.0, 0.0);
    let e1 = b.radiator(l, 5.0, 4.0, "Living room", 1500.0, 20.0);
    let e2 = b.radiator(l, 9.0, 0.0, "Bedroom", 900.0, 18.0);
    b.run(s, j);
    b.run(j, e1);
    b.run(j, e2);
    b.p
}

fn solve(p: &Project) -> Solution {
    solve_project(p, &SolveOptions::default(), &mut Workspace::default())
}

fn node_id(p: &Project, name: &str) -> flowrise_core::project::NodeId {
    p.nodes()
        .find(|n| match &n.kind {
            NodeKind::Emitter(e) => e.name == name,
            NodeKind::Source(s) => s.name == name,
            NodeKind::Header(h) => h.name == name,
            NodeKind::Circuit(c) => c.name == name,
            NodeKind::Separator(x) => x.name == name,
            NodeKind::Junction => false,
        })
        .map(|n| n.id)
        .unwrap()
}

/// The text of the first entry of `list` ("nodes", "runs") whose `id:` is
/// `id`, as a byte range of `text`.
fn entry_range(text: &str, list: &str, id: u32) -> std::ops::Range<usize> {
    let start = text.find(&format!("{list}: [")).unwrap();
    let needle = format!("id: {id},");
    let at = start + text[start..].find(&needle).unwrap();
    let open = text[..at].rfind('(').unwrap();
    let close = at + text[at..].find("\n    ),").unwrap();
    open..close
}

/// Replace `from` by `to` inside the entry of `list` with `id`.
fn edit_entry(text: &str, list: &str, id: u32, from: &str, to: &str) -> String {
    let r = entry_range(text, list, id);
    let entry = &text[r.clone()];
    assert!(entry.contains(from), "{from} not in {entry}");
    format!("{}{}{}", &text[..r.start], entry.replacen(from, to, 1), &text[r.end..])
}

// ---- item 6: unknown and missing fields

#[test]
fn a_misspelt_field_names_the_item_and_the_nearest_field() {
    let p = small();
    let text = p.to_ron().unwrap();
    let bad = edit_entry(&text, "runs", 2, "length_override_m: None", "length_overide_m: Some(250.0)");
    let e = Project::from_ron(&bad).unwrap_err().to_string();
    assert!(e.contains("run R2"), "{e}");
    assert!(e.contains("unknown field `length_overide_m`"), "{e}");
    assert!(e.contains("did you mean `length_override_m`?"), "{e}");
    assert!(!e.contains("RunProps"), "no Rust names in messages: {e}");

    let bad = text.replacen("supply_c: 70.0", "supply_C: 55.0", 1);
    let e = Project::from_ron(&bad).unwrap_err().to_string();
    assert!(e.starts_with("text: line ") && e.contains("settings: unknown field `supply_C`"), "{e}");
    assert!(e.contains("did you mean `supply_c`?"), "{e}");

    let living = node_id(&p, "Living room").0;
    let bad = edit_entry(&text, "nodes", living, "room_c:", "rom_c:");
    let e = Project::from_ron(&bad).unwrap_err().to_string();
    assert!(e.contains(&format!("node N{living}")) && e.contains("did you mean `room_c`?"), "{e}");

    // A field nothing is near: the known ones are listed.
    let bad = edit_entry(&text, "runs", 1, "vertices:", "colour: 3, vertices:");
    let e = Project::from_ron(&bad).unwrap_err().to_string();
    assert!(e.contains("run R1") && e.contains("`vertices`") && e.contains("`props`"), "{e}");

    // An unknown kind of thing suggests the nearest kind.
    let bad = text.replacen("ConstantDp(", "ConstantDP(", 1);
    let e = Project::from_ron(&bad).unwrap_err().to_string();
    assert!(e.contains("did you mean `ConstantDp`?") && e.contains("node N1"), "{e}");
}

#[test]
fn a_missing_field_names_its_item() {
    let p = small();
    let text = p.to_ron().unwrap();
    let bedroom = node_id(&p, "Bedroom").0;
    let r = entry_range(&text, "nodes", bedroom);
    let entry = &text[r.clone()];
    let line_start = entry.find("load_w:").unwrap();
    let line_end = line_start + entry[line_start..].find('\n').unwrap() + 1;
    let bad = format!("{}{}{}{}", &text[..r.start], &entry[..line_start], &entry[line_end..], &text[r.end..]);
    let e = Project::from_ron(&bad).unwrap_err().to_string();
    assert!(e.contains(&format!("node N{bedroom}")) && e.contains("`load_w`") && e.contains("missing"), "{e}");
}

#[test]
fn older_files_still_load() {
    for path in flowrise_tests::demo_paths() {
        Project::load(&path).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
    }
    // Fields written only when set stay optional.
    let p = small();
    let text = p.to_ron().unwrap();
    assert!(!text.contains("design_flow_m3_h") && !text.contains("lockshield_setting"));
    assert_eq!(Project::from_ron(&text).unwrap(), p);
}

// ---- item 7: control characters in names

#[test]
fn control_characters_in_names_are_refused_on_load_and_in_edits() {
    let p = small();
    let text = p.to_ron().unwrap();
    let living = node_id(&p, "Living room").0;
    for c in ['\u{1b}', '\u{7}', '\0', '\t', '\n', '\r', '\u{9b}'] {
        let named = format!("Living{c}room");
        let bad = edit_entry(&text, "nodes", living, "\"Living room\"", &format!("\"{}\"", named.escape_default()));
        let e = Project::from_ron(&bad).unwrap_err().to_string();
        assert!(e.contains(&format!("emitter N{living}")), "{e}");
        assert!(e.contains(&format!("U+{:04X}", u32::from(c))) && e.contains("character 7"), "{e}");
        assert!(!e.contains(c), "the message carries the character itself: {e:?}");

        let bad = text.replacen("name: \"Small house\"", &format!("name: \"{}\"", named.escape_default()), 1);
        let e = Project::from_ron(&bad).unwrap_err().to_string();
        assert!(e.starts_with("project: name"), "{e}");

        let bad = text.replacen("name: \"Ground floor\"", &format!("name: \"{}\"", named.escape_default()), 1);
        let e = Project::from_ron(&bad).unwrap_err().to_string();
        assert!(e.starts_with("level L0: name"), "{e}");

        // Edits: the window renames through these.
        let mut q = p.clone();
        let e = q.apply(Edit::Rename(named.clone())).unwrap_err().to_string();
        assert!(e.starts_with("project: name") && !e.contains(c), "{e}");
        let e = q
            .apply(Edit::SetLevel(Level { id: q.levels[0].id, name: named.clone(), elevation_m: 0.0, underlay: None }))
            .unwrap_err()
            .to_string();
        assert!(e.starts_with("level L0: name"), "{e}");
        let e = q.apply(Edit::AddLevel { name: named.clone(), elevation_m: 3.0 }).unwrap_err().to_string();
        assert!(e.starts_with("new level: name"), "{e}");
        let id = flowrise_core::project::NodeId(living);
        let mut kind = q.node(id).unwrap().kind.clone();
        if let NodeKind::Emitter(em) = &mut kind {
            em.name.clone_from(&named);
        }
        let e = q.apply(Edit::SetNodeKind { id, kind }).unwrap_err().to_string();
        assert!(e.starts_with("Living room (N") && e.contains("name \"Living"), "{e}");
        let props = RunProps { fixed_size: Some(format!("DN{c}20")), ..RunProps::default() };
        let e = q.apply(Edit::SetRunProps { id: flowrise_core::project::RunId(1), props }).unwrap_err().to_string();
        assert!(e.starts_with("run R1: fixed size"), "{e}");
        assert_eq!(q, p, "a refused edit changes nothing");
    }
    // Printable text of any language stays welcome.
    let mut q = p.clone();
    q.apply(Edit::Rename("Wohnküche — 客厅 ☀".to_owned())).unwrap();
}

// ---- item 10: messages

/// No label twice in any message of the file layer, the edits or the
/// findings.
#[test]
fn labels_appear_once() {
    let p = small();
    let living = node_id(&p, "Living room");
    let mut kind = p.node(living).unwrap().kind.clone();
    if let NodeKind::Emitter(e) = &mut kind {
        e.room_c = 45.0;
    }
    let mut q = p.clone();
    let e = q.apply(Edit::SetNodeKind { id: living, kind: kind.clone() }).unwrap_err().to_string();
    assert_eq!(e.matches("Living room").count(), 1, "{e}");
    let text = p.to_ron().unwrap();
    let bad = edit_entry(&text, "nodes", living.0, "room_c: 20.0", "room_c: 45.0");
    let e = Project::from_ron(&bad).unwrap_err().to_string();
    assert_eq!(e.matches("Living room").count(), 1, "{e}");
    let props = RunProps { length_override_m: Some(-1.0), ..RunProps::default() };
    let e = q.apply(Edit::SetRunProps { id: flowrise_core::project::RunId(1), props }).unwrap_err().to_string();
    assert_eq!(e.matches("R1").count(), 1, "{e}");
    let bad = edit_entry(&text, "runs", 1, "length_override_m: None", "length_override_m: Some(-1.0)");
    let e = Project::from_ron(&bad).unwrap_err().to_string();
    assert_eq!(e.matches("R1").count(), 1, "{e}");
    // Findings: the message names its item once.
    let mut q = p.clone();
    let mut kind = p.node(living).unwrap().kind.clone();
    if let NodeKind::Emitter(e) = &mut kind {
        e.valves.valve_family = "no-such-valve".to_owned();
    }
    q.apply(Edit::SetNodeKind { id: living, kind }).unwrap();
    let sol = solve(&q);
    assert!(!sol.findings.is_empty());
    for f in &sol.findings {
        assert!(f.message.matches("Living room").count() <= 1, "{}", f.message);
    }
}

#[test]
fn an_empty_presetting_label_says_so() {
    let p = small();
    let living = node_id(&p, "Living room");
    for field in ["presetting", "lockshield setting"] {
        let mut kind = p.node(living).unwrap().kind.clone();
        if let NodeKind::Emitter(e) = &mut kind {
            if field == "presetting" {
                e.valves.presetting = Some(String::new());
            } else {
                e.valves.lockshield_setting = Some(" ".to_owned());
            }
        }
        let mut q = p.clone();
        let e = q.apply(Edit::SetNodeKind { id: living, kind }).unwrap_err().to_string();
        assert!(e.contains(&format!("{field} label is empty")), "{e}");
    }
    let text = p.to_ron().unwrap();
    let bad = edit_entry(&text, "nodes", living.0, "presetting: None", "presetting: Some(\"\")");
    let e = Project::from_ron(&bad).unwrap_err().to_string();
    assert!(e.contains("presetting label is empty"), "{e}");
}

#[test]
fn a_byte_order_mark_is_accepted() {
    let p = small();
    let text = format!("\u{feff}{}", p.to_ron().unwrap());
    assert_eq!(Project::from_ron(&text).unwrap(), p);
}

/// An emitter whose room is warmer than the supply says that, with the
/// room's name, both temperatures and the fix.
#[test]
fn a_room_above_the_supply_says_so() {
    let mut p = small();
    let mut s = p.settings.clone();
    s.supply_c = 28.0;
    s.return_c = 24.0;
    s.room_c = 20.0;
    p.apply(Edit::SetSettings(Box::new(s))).unwrap();
    for name in ["Living room", "Bedroom"] {
        let id = node_id(&p, name);
        let mut kind = p.node(id).unwrap().kind.clone();
        if let NodeKind::Emitter(e) = &mut kind {
            e.room_c = 29.0;
        }
        p.apply(Edit::SetNodeKind { id, kind }).unwrap();
    }
    let sol = solve(&p);
    let living = node_id(&p, "Living room");
    let f = sol
        .findings
        .iter()
        .find(|f| f.item == ItemRef::Node(living))
        .unwrap_or_else(|| panic!("no finding on the living room: {:#?}", sol.findings));
    let m = &f.message;
    assert!(m.contains("Living room") && m.contains("29 °C") && m.contains("28 °C"), "{m}");
    assert!(m.contains("above the supply"), "{m}");
    assert!(!sol.findings.iter().any(|f| f.message.contains("no emitter has a design flow")), "{:#?}", sol.findings);
}

/// A 1 W source and a huge vessel are written with readable numbers.
#[test]
fn small_and_large_numbers_read_well() {
    let mut p = small();
    let src = node_id(&p, "Heat source");
    let mut kind = p.node(src).unwrap().kind.clone();
    if let NodeKind::Source(s) = &mut kind {
        s.capacity_w = 1.0;
    }
    p.apply(Edit::SetNodeKind { id: src, kind }).unwrap();
    let sol = solve(&p);
    let f = sol.findings.iter().find(|f| f.kind == FindingKind::SourceCapacity).unwrap();
    assert!(f.message.contains("1 W") && !f.message.contains("0.0 kW"), "{}", f.message);
    assert!(f.message.contains("2.4 kW"), "{}", f.message);

    // Every finding and file message: no run of more than 7 significant
    // digits (the raw 4228438.717616956).
    let long_number = |m: &str| {
        m.split(|c: char| !(c.is_ascii_digit() || c == '.')).any(|w| w.chars().filter(char::is_ascii_digit).count() > 9)
    };
    let mut q = small();
    let src = node_id(&q, "Heat source");
    let mut kind = q.node(src).unwrap().kind.clone();
    if let NodeKind::Source(s) = &mut kind {
        s.water_content_l = 1e6;
    }
    q.apply(Edit::SetNodeKind { id: src, kind }).unwrap();
    let mut s = q.settings.clone();
    s.static_height_m = Some(1.0 / 3.0);
    q.apply(Edit::SetSettings(Box::new(s))).unwrap();
    let sol = solve(&q);
    for f in &sol.findings {
        assert!(!long_number(&f.message), "{}", f.message);
    }
    let e = flowrise_core::project::limits::SOURCE_WATER_L.check(4_228_438.717_616_956).unwrap_err();
    assert!(!long_number(&e), "{e}");
}

/// A fixed-speed pump never reports a control head above its curve.
#[test]
fn a_fixed_speed_pump_has_no_control_head_finding() {
    let mut p = small();
    let src = node_id(&p, "Heat source");
    let mut kind = p.node(src).unwrap().kind.clone();
    if let NodeKind::Source(s) = &mut kind {
        s.pump.control = PumpControl::FixedSpeed;
        // A weak pump: on its curve, below what the index circuit needs.
        s.pump.curve_points = [(0.0, 8.0), (0.5, 6.0), (1.0, 2.0)];
    }
    p.apply(Edit::SetNodeKind { id: src, kind }).unwrap();
    for installed in [false, true] {
        let mut q = p.clone();
        if installed {
            q.settings.mode = flowrise_core::project::Mode::Installed;
        }
        let sol = solve(&q);
        assert!(!sol.findings.iter().any(|f| f.kind == FindingKind::PumpOnMaxCurve), "{:#?}", sol.findings);
        assert!(!sol.findings.iter().any(|f| f.message.contains("control head")), "{:#?}", sol.findings);
        assert!(!sol.pump.as_ref().unwrap().on_max_curve);
    }
}

/// A drawn run over the length limit is refused like a given length: on
/// load and on edits that lengthen it.
#[test]
fn a_drawn_run_over_the_length_limit_is_refused() {
    let p = small();
    let living = node_id(&p, "Living room");
    let mut q = p.clone();
    let e = q.apply(Edit::MoveNodes { ids: vec![living], dx_m: 20_000.0, dy_m: 0.0 }).unwrap_err().to_string();
    assert!(e.starts_with("run R2: drawn length 20000 m") && e.contains("10000 m"), "{e}");
    assert_eq!(q, p);
    // Moving a whole branch keeps its runs' lengths.
    let junction = p.runs().next().unwrap().b;
    let branch: Vec<_> = p.nodes().filter(|n| n.id != node_id(&p, "Heat source")).map(|n| n.id).collect();
    assert!(branch.contains(&junction));
    let e = q.apply(Edit::MoveNodes { ids: branch, dx_m: 20_000.0, dy_m: 0.0 }).unwrap_err().to_string();
    assert!(e.starts_with("run R1: drawn length"), "{e}");
    // A new run drawn too long.
    let e = q
        .apply(Edit::AddNode { level: q.levels[0].id, pos: PlanPoint::new(50_000.0, 0.0), kind: NodeKind::Junction })
        .and_then(|o| q.apply(Edit::AddRun { a: junction, b: o.nodes[0], vertices: vec![] }))
        .unwrap_err()
        .to_string();
    assert!(e.contains("drawn length") && e.contains("longer than the 10000 m"), "{e}");
    // Clearing the override of a long run.
    let mut long = p.clone();
    long.apply(Edit::MoveNodes { ids: vec![living], dx_m: 5_000.0, dy_m: 0.0 }).unwrap();
    let props = RunProps { length_override_m: Some(12.0), ..RunProps::default() };
    long.apply(Edit::SetRunProps { id: flowrise_core::project::RunId(2), props }).unwrap();
    long.apply(Edit::MoveNodes { ids: vec![living], dx_m: 10_000.0, dy_m: 0.0 }).unwrap();
    let e = long
        .apply(Edit::SetRunProps { id: flowrise_core::project::RunId(2), props: RunProps::default() })
        .unwrap_err()
        .to_string();
    assert!(e.starts_with("run R2: drawn length"), "{e}");
    // On load.
    let text = p.to_ron().unwrap();
    let bad = edit_entry(&text, "nodes", living.0, "x_m: 5.0", "x_m: 15000.0");
    let e = Project::from_ron(&bad).unwrap_err().to_string();
    assert!(e.starts_with("run R2: drawn length"), "{e}");
}

/// An expansion vessel that cannot be sized is `null` in the JSON, with
/// the finding that says why — not 0 l.
#[test]
fn an_unsized_vessel_is_null_with_a_finding() {
    let mut p = small();
    let mut s = p.settings.clone();
    s.static_height_m = Some(60.0); // 6 bar of static head against a 3 bar safety valve
    p.apply(Edit::SetSettings(Box::new(s))).unwrap();
    let sol = solve(&p);
    assert!(sol.vessel.is_none());
    assert!(sol.findings.iter().any(|f| f.kind == FindingKind::VesselNotSized), "{:#?}", sol.findings);
    let json = serde_json::to_value(flowrise_core::output::SolveJson { project: &p, solution: &sol }).unwrap();
    assert!(json["totals"]["expansion_vessel_l"].is_null(), "{}", json["totals"]);
    assert!(flowrise_core::output::solve_text(&p, &sol).contains("expansion vessel not sized"));
    // Sized: a number.
    let q = small();
    let sol = solve(&q);
    let json = serde_json::to_value(flowrise_core::output::SolveJson { project: &q, solution: &sol }).unwrap();
    assert!(json["totals"]["expansion_vessel_l"].as_f64().unwrap() > 0.0);
}

/// A system whose vessel is more than one membrane vessel holds is sized
/// all the same (the method is linear in the volume) and says how to build
/// it — a note, not a warning (EN 12828 annex D method; the 5,000 l largest
/// single vessel is common practice).
#[test]
fn a_vessel_beyond_one_membrane_vessel_is_a_note_with_the_count() {
    let mut p = small();
    let src = node_id(&p, "Heat source");
    let mut kind = p.node(src).unwrap().kind.clone();
    if let NodeKind::Source(s) = &mut kind {
        s.water_content_l = 300_000.0;
    }
    p.apply(Edit::SetNodeKind { id: src, kind }).unwrap();
    let sol = solve(&p);
    let v = sol.vessel.as_ref().expect("sized");
    let n = flowrise_core::vessel::vessels_in_parallel(v.nominal_volume_l);
    assert!(n >= 2, "{}", v.nominal_volume_l);
    let f = sol.findings.iter().find(|f| f.kind == FindingKind::VesselsInParallel).expect("note");
    assert_eq!(f.severity, flowrise_core::design::Severity::Note);
    assert!(f.message.contains(&format!("{n} vessels in parallel")), "{}", f.message);
    assert!(!sol.findings.iter().any(|f| f.kind == FindingKind::VesselNotSized));
    // The small house's own vessel is one vessel: no note.
    let sol = solve(&small());
    assert!(!sol.findings.iter().any(|f| f.kind == FindingKind::VesselsInParallel));
}
