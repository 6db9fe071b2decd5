//! Issue 18 (part B): the room-load schedule, editing many nodes at once,
//! repeating a level and the drawing aids, driven through the window.

use std::fmt::Write as _;

use super::*;
use flowrise::gui::dialogs::DialogChoice;
use flowrise::gui::many::ManyAction;
use flowrise_core::design::{SolveOptions, Workspace, solve_project};

/// An app whose file dialogs are flowrise's own, starting in `dir`.
fn app_with_own_dialog(project: Project, dir: &std::path::Path) -> FlowriseApp {
    let mut app = FlowriseApp::new(project, None);
    app.prefs.file_dialog = DialogChoice::InWindow;
    app.prefs.last_dir = Some(dir.to_path_buf());
    app
}

/// A room-load schedule of `n` rooms on the ground floor (invented loads).
fn schedule_csv(n: usize) -> (String, Vec<(String, f64, f64)>) {
    let mut csv = String::from("Room,Level,Heat load W,Room temperature °C\n");
    let mut rooms = Vec::new();
    for i in 0..n {
        let (name, load, room) =
            (format!("Room {:02}", i + 1), 350.0 + 37.5 * i as f64, if i % 5 == 0 { 24.0 } else { 20.0 });
        writeln!(csv, "{name},Ground floor,{load},{room}").unwrap();
        rooms.push((name, load, room));
    }
    (csv, rooms)
}

fn emitters_by_name(p: &Project) -> std::collections::BTreeMap<String, (f64, f64)> {
    p.nodes()
        .filter_map(|n| match &n.kind {
            NodeKind::Emitter(e) => Some((e.name.clone(), (e.load_w, e.room_c))),
            _ => None,
        })
        .collect()
}

#[test]
fn a_schedule_of_forty_rooms_creates_forty_emitters_and_one_undo_removes_them() {
    let dir = temp_dir("schedule-40");
    std::fs::create_dir_all(&dir).unwrap();
    let (csv, rooms) = schedule_csv(40);
    let file = dir.join("room-loads.csv");
    std::fs::write(&file, csv).unwrap();
    let before = source_only();
    let mut h = harness_app(app_with_own_dialog(before.clone(), &dir));

    h.get_by_label("File").click();
    h.run();
    h.get_by_label("Import room loads…").click();
    h.run();
    h.get_by_label("Choose a CSV file…").click();
    h.run();
    type_into(&mut h, "File name or path", file.to_str().unwrap());
    assert!(h.query_by_label_contains("40 new emitters, 0 updated").is_some(), "the preview counts the rows");
    // The pointer comes from the file dialog, as a user's would.
    h.get_by_label("Apply: 40 new, 0 updated").hover();
    h.run();
    h.get_by_label("Apply: 40 new, 0 updated").click();
    h.run();

    let got = emitters_by_name(h.state().project());
    assert_eq!(got.len(), 40);
    for (name, load, room) in &rooms {
        assert_eq!(got.get(name), Some(&(*load, *room)), "{name}");
    }
    assert_eq!(h.state().prefs.schedule_columns.load_w.as_deref(), Some("Heat load W"), "the mapping is remembered");
    assert!(h.state().status().unwrap().text.contains("unconnected"), "{:?}", h.state().status());

    h.key_press_modifiers(Modifiers::COMMAND, Key::Z);
    h.run();
    assert_eq!(*h.state().project(), before, "one undo removes all forty");
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn a_table_with_kilowatts_or_without_a_load_column_says_why_and_changes_nothing() {
    let before = demo(FLAT);
    let mut h = harness(before.clone());
    // Cells pasted from a spreadsheet onto the plan open the import.
    let pasted = "Room\tLevel\tLoad\nKitchen\tGround floor\t1.2 kW\nHall\tAttic\t300\n";
    h.event(Event::Paste(pasted.to_owned()));
    h.run();
    assert!(h.query_by_label("Import room loads").is_some(), "the import window opened");
    let kw = "row 2, column “Load”: “1.2 kW” is in kW — this column takes watts: write 1200";
    assert!(h.query_by_label_contains(kw).is_some(), "the unit is named with its row and column");
    assert!(h.query_by_label_contains("row 3, column “Level”: level “Attic” is not in the project").is_some());
    h.get_by_label("Apply").click();
    h.run();
    assert_eq!(*h.state().project(), before, "nothing to apply: nothing changed");

    h.get_by_label("Pasted table").focus();
    h.run();
    h.key_press_modifiers(Modifiers::COMMAND, Key::A);
    h.event(Event::Paste("Space\tArea m2\nKitchen\t12\n".to_owned()));
    h.run();
    h.get_by_label("Read pasted table").click();
    h.run();
    assert!(
        h.query_by_label_contains("no column is chosen for Heat load (W) — pick the column that holds it").is_some(),
        "a missing column is named"
    );
    assert_eq!(*h.state().project(), before);
}

#[test]
fn box_select_then_copy_and_paste_on_the_same_and_another_level() {
    let mut p = demo(FLAT);
    p.apply(Edit::AddLevel { name: "Upstairs".to_owned(), elevation_m: 3.0 }).unwrap();
    let level = LevelId(0);
    let mut h = harness(p);
    show_level(&mut h, level);
    let before = h.state().project().clone();
    let on_level: Vec<_> = before.nodes().filter(|n| n.level == level).map(|n| n.id).collect();
    // A box around the whole drawing, started on empty paper.
    let pts: Vec<Pos2> =
        before.nodes().filter(|n| n.level == level).map(|n| h.state().screen_from_plan(n.pos)).collect();
    let lo = pts.iter().fold(Pos2::new(f32::MAX, f32::MAX), |m, p| m.min(*p)) - Vec2::splat(30.0);
    let hi = pts.iter().fold(Pos2::new(f32::MIN, f32::MIN), |m, p| m.max(*p)) + Vec2::splat(30.0);
    drag_screen(&mut h, lo, hi - lo, false);
    let group: Vec<_> = h.state().canvas().group.iter().copied().collect();
    assert_eq!(group, on_level, "the box selected every node of the level");
    assert_eq!(*h.state().project(), before, "selecting changes nothing");

    // Shift+click takes one out and puts it back.
    let one = on_level[1];
    let at = h.state().screen_from_plan(before.node(one).unwrap().pos);
    h.event(Event::ModifiersChanged(Modifiers::SHIFT));
    h.hover_at(at);
    h.drag_at(at);
    h.drop_at(at);
    h.event(Event::ModifiersChanged(Modifiers::NONE));
    h.run();
    assert!(!h.state().canvas().group.contains(&one), "Shift+click removed it");
    h.event(Event::ModifiersChanged(Modifiers::SHIFT));
    h.drag_at(at);
    h.drop_at(at);
    h.event(Event::ModifiersChanged(Modifiers::NONE));
    h.run();
    assert!(h.state().canvas().group.contains(&one), "… and added it again");

    // Dragging one of them moves the whole group by the same offset (one undo step).
    let grabbed = before.nodes().find(|n| n.level == level && !matches!(n.kind, NodeKind::Source(_))).unwrap();
    let from = h.state().screen_from_plan(grabbed.pos);
    drag_screen(&mut h, from, Vec2::new(0.0, -90.0), false);
    let moved = h.state().project().clone();
    let dy = moved.node(grabbed.id).unwrap().pos.y_m - grabbed.pos.y_m;
    assert!(dy > 1.0, "moved north: {dy}");
    for &id in &on_level {
        let (a, b) = (before.node(id).unwrap().pos, moved.node(id).unwrap().pos);
        assert!((b.y_m - a.y_m - dy).abs() < 1e-9 && (b.x_m - a.x_m).abs() < 1e-9, "{id} moved with the group");
    }
    h.key_press_modifiers(Modifiers::COMMAND, Key::Z);
    h.run();
    assert_eq!(*h.state().project(), before, "the group's move is one undo step");

    h.event(Event::Copy);
    h.run();
    let sources = before.sources().len();
    let copied_runs = before
        .runs()
        .filter(|r| {
            before.node(r.a).is_some_and(|n| !matches!(n.kind, NodeKind::Source(_)))
                && before.node(r.b).is_some_and(|n| !matches!(n.kind, NodeKind::Source(_)))
        })
        .count();
    let mark = h.state().status().unwrap().text.clone();
    assert!(mark.starts_with("copied"), "{mark}");
    h.event(Event::Paste(format!("{} {} nodes", flowrise::gui::many::CLIPBOARD_MARK, on_level.len())));
    h.run();
    let after = h.state().project().clone();
    assert_eq!(
        after.node_count(),
        before.node_count() + on_level.len() - sources,
        "a copy of each node but the source"
    );
    assert_eq!(after.run_count(), before.run_count() + copied_runs, "with the runs between copied nodes");
    let max_old = before.nodes().map(|n| n.id).max().unwrap();
    let pasted: Vec<_> = h.state().canvas().group.iter().copied().collect();
    assert_eq!(pasted.len(), on_level.len() - sources);
    assert!(pasted.iter().all(|&id| id > max_old), "new ids");
    let old_x = before.nodes().filter(|n| n.level == level).map(|n| n.pos.x_m).fold(f64::MIN, f64::max);
    assert!(pasted.iter().all(|&id| after.node(id).unwrap().pos.x_m > old_x), "beside the original");

    // Onto the other level: same positions; one undo takes it away again.
    show_level(&mut h, LevelId(1));
    h.state_mut().run_many(ManyAction::Paste, &egui::Context::default());
    h.run();
    let up: Vec<_> = h.state().project().nodes().filter(|n| n.level == LevelId(1)).map(|n| n.pos).collect();
    assert_eq!(up.len(), on_level.len() - sources);
    for n in before.nodes().filter(|n| n.level == level && !matches!(n.kind, NodeKind::Source(_))) {
        assert!(up.contains(&n.pos), "pasted at the same position as {}", n.label());
    }
    h.key_press_modifiers(Modifiers::COMMAND, Key::Z);
    h.run();
    assert_eq!(*h.state().project(), after, "one undo step per paste");

    // The Delete key removes the selected copies and their runs at once.
    show_level(&mut h, level);
    h.state_mut().run_many(ManyAction::SelectAll, &egui::Context::default());
    h.run();
    assert_eq!(h.state().canvas().group.len(), after.nodes().filter(|n| n.level == level).count());
    h.key_press(Key::Delete);
    h.run();
    assert_eq!(h.state().project().nodes().filter(|n| n.level == level).count(), 0, "every node of the level");
    h.key_press_modifiers(Modifiers::COMMAND, Key::Z);
    h.run();
    assert_eq!(*h.state().project(), after, "one undo brings them all back");
}

#[test]
fn repeating_the_first_floor_over_the_second_reproduces_its_solved_results() {
    let original = demo(APARTMENT);
    let first = LevelId(2);
    let second = LevelId(3);
    let mut h = harness(original.clone());
    show_level(&mut h, first);
    h.get_by_label("Edit").click();
    h.run();
    h.get_by_label("Repeat level on other levels…").click();
    h.run();
    h.get_by_label("Second floor (+6.00 m)").click();
    h.run();
    assert!(h.query_by_label_contains("besides its risers").is_some(), "a level in use is refused until replacing");
    h.get_by_label("Replace what is there (keeps each level's risers)").click();
    h.run();
    h.get_by_label("Repeat").click();
    h.run();
    let repeated = h.state().project().clone();
    assert_ne!(repeated, original);
    assert!(h.state().status().unwrap().text.contains("1 joined to risers"), "{:?}", h.state().status());
    let old_ids: std::collections::BTreeSet<_> = original.nodes().filter(|n| n.level == second).map(|n| n.id).collect();
    let riser = repeated.nodes().filter(|n| n.level == second && old_ids.contains(&n.id)).count();
    assert_eq!(riser, 1, "only the riser junction of the second floor is kept; the rest are new ids");

    // The two projects differ on the second floor only in ids and the header's
    // name: every emitter there must solve the same. Tolerance: the GGA
    // solver stops at a relative flow change of 1e-6 per step
    // (`SolveSettings::flow_tolerance`) and the new ids order the network
    // differently, so flows and outputs agree to 1e-5 relative; the
    // presetting and lockshield steps, being discrete, agree exactly.
    let a = solve_project(&original, &SolveOptions::default(), &mut Workspace::default());
    let b = solve_project(&repeated, &SolveOptions::default(), &mut Workspace::default());
    assert_eq!(a.emitters.len(), b.emitters.len());
    let key = |p: &Project, id: NodeId| {
        let n = p.node(id).unwrap();
        (n.level, (n.pos.x_m * 1000.0).round() as i64, (n.pos.y_m * 1000.0).round() as i64)
    };
    let by_place: std::collections::BTreeMap<_, _> = b.emitters.iter().map(|e| (key(&repeated, e.id), e)).collect();
    let mut on_second = 0;
    for ea in &a.emitters {
        let k = key(&original, ea.id);
        let eb = by_place.get(&k).unwrap_or_else(|| panic!("no emitter at {k:?} after the repeat"));
        on_second += usize::from(k.0 == second);
        let close = |x: f64, y: f64| (x - y).abs() <= 1e-5 * x.abs().max(1.0);
        assert_eq!(ea.name, eb.name);
        assert!(close(ea.flow_l_h, eb.flow_l_h), "{}: flow {} vs {}", ea.name, ea.flow_l_h, eb.flow_l_h);
        assert!(close(ea.output_w, eb.output_w), "{}: output {} vs {}", ea.name, ea.output_w, eb.output_w);
        assert_eq!((&ea.presetting, &ea.lockshield), (&eb.presetting, &eb.lockshield), "{}", ea.name);
    }
    assert_eq!(on_second, 4, "the second floor's four emitters were compared");

    h.key_press_modifiers(Modifiers::COMMAND, Key::Z);
    h.run();
    assert_eq!(*h.state().project(), original, "one undo step");
}

#[test]
fn a_nearly_horizontal_drag_ends_exactly_horizontal_unless_alt_is_held() {
    let mut p = source_only();
    let j = p
        .apply(Edit::AddNode { level: LevelId(0), pos: PlanPoint::new(2.3, 1.7), kind: NodeKind::Junction })
        .unwrap()
        .nodes[0];
    let mut h = harness(p);
    let start = h.state().project().node(j).unwrap().pos;
    let from = h.state().screen_from_plan(start);
    // 8 degrees off horizontal, far more than half a grid step high.
    let by = Vec2::new(240.0, -34.0);
    h.hover_at(from);
    h.drag_at(from);
    h.hover_at(from + by * 0.5);
    h.hover_at(from + by);
    h.run();
    let shown = h.state().canvas().snapped.map(|(s, _)| s.kind);
    assert_eq!(shown, Some(flowrise::gui::canvas::snap::SnapKind::Horizontal), "the indicator says horizontal");
    h.drop_at(from + by);
    h.run();
    let end = h.state().project().node(j).unwrap().pos;
    assert_eq!(end.y_m.to_bits(), start.y_m.to_bits(), "exactly horizontal: {end:?} from {start:?}");
    assert!(end.x_m - start.x_m > 3.0, "moved east: {end:?}");

    // With Alt the same drag keeps its angle (on the grid).
    let from = h.state().screen_from_plan(end);
    h.event(Event::ModifiersChanged(Modifiers::ALT));
    h.hover_at(from);
    h.drag_at(from);
    h.hover_at(from + by * 0.5);
    h.hover_at(from + by);
    h.drop_at(from + by);
    h.event(Event::ModifiersChanged(Modifiers::NONE));
    h.run();
    let free = h.state().project().node(j).unwrap().pos;
    assert!(free.y_m > end.y_m + 0.5, "Alt: free angle {free:?}");

    // Drawing a run: the bend point lands square to the node it starts from.
    let src = h.state().project().sources()[0];
    let src_pos = h.state().project().node(src).unwrap().pos;
    h.key_press(Key::R);
    h.run();
    click_plan(&mut h, src_pos);
    let q = h.state().screen_from_plan(src_pos) + Vec2::new(-14.0, -220.0);
    h.hover_at(q);
    h.run();
    h.drag_at(q);
    h.drop_at(q);
    h.run();
    let draft = h.state().canvas().draft.clone().unwrap();
    assert_eq!(draft.vertices.len(), 1);
    assert_eq!(draft.vertices[0].x_m.to_bits(), src_pos.x_m.to_bits(), "the bend is exactly above the source");
}

#[test]
fn the_emitters_table_takes_typed_values_and_says_why_it_refuses_one() {
    let before = demo(FLAT);
    let mut h = harness(before.clone());
    let kitchen =
        before.nodes().find(|n| matches!(&n.kind, NodeKind::Emitter(e) if e.name == "Kitchen")).map(|n| n.id).unwrap();
    let load = |h: &Harness<'_, FlowriseApp>| match &h.state().project().node(kitchen).unwrap().kind {
        NodeKind::Emitter(e) => (e.load_w, e.room_c),
        _ => unreachable!(),
    };
    type_into(&mut h, "heat load of Kitchen", "2,5 kW");
    assert!(h.query_by_label_contains("Kitchen (N").is_some(), "the refusal names the emitter");
    assert!(h.query_by_label_contains("is not a number — type a value in W").is_some(), "… and why");
    assert_eq!(*h.state().project(), before, "refused: nothing changed");
    type_into(&mut h, "heat load of Kitchen", "1350");
    type_into(&mut h, "room temperature of Kitchen", "22");
    assert_eq!(load(&h), (1350.0, 22.0));
    type_into(&mut h, "room temperature of Kitchen", "45");
    assert!(h.query_by_label_contains("out of range — give 5 to 30 °C").is_some(), "the inspector's limit");
    assert_eq!(load(&h), (1350.0, 22.0), "the refused value is not applied");
}
