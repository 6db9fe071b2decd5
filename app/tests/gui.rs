//! Interaction tests of the flowrise window (egui_kittest, no GPU, no
//! display): they drive the real `FlowriseApp::ui` with pointer and key
//! events and check both what the window shows and the project document.
//!
//! Run: `cargo test -p flowrise --test gui` (about a second; no display).

// Test helpers outside `#[test]` functions unwrap too: a failure is the point.
#![allow(clippy::unwrap_used, clippy::panic)]

use egui::{Event, Key, Modifiers, Pos2, Vec2};
use egui_kittest::Harness;
use egui_kittest::kittest::Queryable;
use flowrise::gui::canvas::tools;
use flowrise::gui::{FlowriseApp, Selection};
use flowrise_core::project::{Edit, LevelId, NodeId, NodeKind, PlanPoint, Project};

const APARTMENT: &str = include_str!("../../demo-projects/apartment-block-heat-pump.ron");
const FLAT: &str = include_str!("../../demo-projects/flat-six-radiators.ron");

/// A harness around the app at the screenshot size, solving on the UI thread.
fn harness(project: Project) -> Harness<'static, FlowriseApp> {
    let mut app = FlowriseApp::new(project, None);
    app.set_background_solve(false);
    let mut h = Harness::builder()
        .with_size(Vec2::new(1440.0, 900.0))
        .with_max_steps(40)
        .build_ui_state(|ui, app: &mut FlowriseApp| app.ui(ui), app);
    h.run();
    h
}

fn demo(text: &str) -> Project {
    Project::from_ron(text).unwrap()
}

/// Click on the canvas at a plan point (press and release in place).
fn click_plan(h: &mut Harness<'_, FlowriseApp>, p: PlanPoint) {
    let q = h.state().screen_from_plan(p);
    h.hover_at(q);
    h.drag_at(q);
    h.drop_at(q);
    h.run();
}

/// Drag on the canvas from `from` by `by` screen points, optionally with Shift.
fn drag_screen(h: &mut Harness<'_, FlowriseApp>, from: Pos2, by: Vec2, shift: bool) {
    if shift {
        h.event(Event::ModifiersChanged(Modifiers::SHIFT));
    }
    h.hover_at(from);
    h.drag_at(from);
    h.hover_at(from + by * 0.1);
    h.hover_at(from + by * 0.6);
    h.hover_at(from + by);
    h.drop_at(from + by);
    if shift {
        h.event(Event::ModifiersChanged(Modifiers::NONE));
    }
    h.run();
}

/// Show a level on the canvas, fitted.
fn show_level(h: &mut Harness<'_, FlowriseApp>, level: LevelId) {
    let c = h.state_mut().canvas_mut();
    c.level = level;
    c.fit_pending = true;
    h.run();
}

/// Replace a field's text and commit it with Enter.
fn type_into(h: &mut Harness<'_, FlowriseApp>, label: &str, text: &str) {
    h.get_by_label(label).focus();
    h.run();
    h.key_press_modifiers(Modifiers::COMMAND, Key::A);
    h.get_by_label(label).type_text(text);
    h.key_press(Key::Enter);
    h.run();
}

#[test]
fn drawing_a_run_to_a_placed_emitter_adds_a_row_to_the_emitters_table() {
    let mut p = Project::new("Test");
    p.apply(Edit::AddNode { level: LevelId(0), pos: PlanPoint::new(0.0, 0.0), kind: tools::new_source() }).unwrap();
    let mut h = harness(p);
    assert!(h.query_all_by_label_contains("Room 1").next().is_none());

    h.key_press(Key::E);
    h.run();
    click_plan(&mut h, PlanPoint::new(6.0, 0.0));
    let emitter = h.state().project().emitters()[0];

    h.key_press(Key::R);
    h.run();
    click_plan(&mut h, PlanPoint::new(0.0, 0.0));
    click_plan(&mut h, PlanPoint::new(6.0, 0.0));
    assert_eq!(h.state().project().run_count(), 1, "the run tool joined source and emitter");

    h.state_mut().select(Selection::None);
    h.run();
    assert_eq!(h.state().solution().emitters.len(), 1);
    assert!(h.state().solution().emitter(emitter).is_some());
    assert!(h.query_all_by_label_contains("Room 1").next().is_some(), "the emitters table shows the new emitter");
}

#[test]
fn shift_dragging_a_branch_in_installed_mode_changes_the_flows() {
    let mut h = harness(demo(APARTMENT));
    h.get_by_label("Installed").click();
    h.run();
    assert_eq!(h.state().project().settings.mode, flowrise_core::project::Mode::Installed);

    // A header on the ground floor and the emitters it feeds.
    let project = h.state().project().clone();
    let header = project.nodes().find(|n| n.level == LevelId(0) && matches!(n.kind, NodeKind::Header(_))).unwrap();
    let branch = tools::branch_of(&project, header.id);
    let emitters: Vec<NodeId> = branch.iter().copied().filter(|id| project.emitters().contains(id)).collect();
    assert!(!emitters.is_empty());
    let flows_before: Vec<f64> = emitters.iter().map(|&e| h.state().solution().emitter(e).unwrap().flow_l_h).collect();

    show_level(&mut h, LevelId(0));
    let from = h.state().screen_from_plan(header.pos);
    let towards_centre = (h.state().canvas().view.rect.center() - from).normalized();
    drag_screen(&mut h, from, towards_centre * 350.0, true);

    let moved = h.state().project().node(header.id).unwrap().pos;
    let (dx, dy) = (moved.x_m - header.pos.x_m, moved.y_m - header.pos.y_m);
    assert!(dx.hypot(dy) > 3.0, "the header moved ({dx:.2}, {dy:.2}) m");
    for &id in &branch {
        let (a, b) = (project.node(id).unwrap().pos, h.state().project().node(id).unwrap().pos);
        assert!(
            ((b.x_m - a.x_m) - dx).abs() < 1e-9 && ((b.y_m - a.y_m) - dy).abs() < 1e-9,
            "{id} moved with its branch"
        );
    }
    let flows_after: Vec<f64> = emitters.iter().map(|&e| h.state().solution().emitter(e).unwrap().flow_l_h).collect();
    assert!(
        flows_before.iter().zip(&flows_after).any(|(a, b)| (a - b).abs() > 1e-3 * a.abs().max(1.0)),
        "operating flows changed: {flows_before:?} → {flows_after:?}"
    );
}

#[test]
fn undo_restores_exactly_after_a_drag_and_after_an_inspector_edit_and_redo_reapplies() {
    let mut h = harness(demo(FLAT));
    let original = h.state().project().clone();
    let level = h.state().canvas().level;
    let node = original.nodes().find(|n| n.level == level && matches!(n.kind, NodeKind::Emitter(_))).unwrap().clone();

    // A drag is one undo step.
    let from = h.state().screen_from_plan(node.pos);
    drag_screen(&mut h, from, Vec2::new(80.0, 60.0), false);
    let dragged = h.state().project().clone();
    assert_ne!(dragged, original, "the drag moved the emitter");
    h.get_by_label("Undo").click();
    h.run();
    assert_eq!(*h.state().project(), original, "undo restores the state before the drag");
    h.get_by_label("Redo").click();
    h.run();
    assert_eq!(*h.state().project(), dragged, "redo re-applies the drag");

    // An inspector edit is one undo step.
    h.state_mut().select(Selection::Node(node.id));
    h.run();
    type_into(&mut h, "Heat load", "1234");
    let NodeKind::Emitter(e) = &h.state().project().node(node.id).unwrap().kind else { panic!() };
    assert!((e.load_w - 1234.0).abs() < 1e-9, "the load field was applied: {}", e.load_w);
    h.get_by_label("Undo").click();
    h.run();
    assert_eq!(*h.state().project(), dragged, "undo restores the state before the edit");
    h.get_by_label("Redo").click();
    h.run();
    let NodeKind::Emitter(e) = &h.state().project().node(node.id).unwrap().kind else { panic!() };
    assert!((e.load_w - 1234.0).abs() < 1e-9);
}

#[test]
fn an_invalid_length_shows_a_message_and_leaves_the_project_unchanged() {
    let mut h = harness(demo(FLAT));
    let run = h.state().project().runs().next().unwrap().id;
    h.state_mut().select(Selection::Run(run));
    h.run();
    let before = h.state().project().clone();

    type_into(&mut h, "Length override", "-3");
    assert!(h.query_by_label_contains("out of range").is_some(), "a range message is shown beside the field");
    assert_eq!(*h.state().project(), before);

    type_into(&mut h, "Length override", "abc");
    assert!(h.query_by_label_contains("not a number").is_some(), "a parse message is shown beside the field");
    assert_eq!(*h.state().project(), before);

    type_into(&mut h, "Length override", "12.5");
    assert!(h.query_by_label_contains("not a number").is_none(), "the message goes once the value is valid");
    assert_eq!(h.state().project().run(run).unwrap().props.length_override_m, Some(12.5));
}

#[test]
fn an_opened_demo_shows_pipe_sizes_in_the_pipes_table() {
    let mut h = harness(demo(APARTMENT));
    h.get_by_label("Pipes").click();
    h.run();
    assert!(h.query_all_by_label_contains("DN").next().is_some(), "a steel size (DN…) is listed");
    assert!(h.query_all_by_label_contains("x2").next().is_some(), "a multilayer size (16x2 …) is listed");
}

#[test]
fn the_parts_list_tab_lists_the_installers_parts_with_its_exports() {
    let mut h = harness(demo(FLAT));
    h.get_by_label("Parts list").click();
    h.run();
    // The buttons that write the CSV and the report are there …
    h.get_by_label("Export parts list (CSV)…");
    h.get_by_label("Export design report (HTML)…");
    // … and the table holds the solved design's parts: pipe, pump, vessel.
    assert!(h.query_all_by_label("pipe").next().is_some(), "pipe lines listed");
    assert!(h.query_all_by_label("pump").next().is_some(), "the pump is listed");
    assert!(h.query_all_by_label("vessel").next().is_some(), "the expansion vessel is listed");
}

#[test]
fn the_sweep_and_part_load_views_run_the_engine() {
    let mut h = harness(demo(FLAT));
    h.get_by_label("Supply temperature sweep").click();
    h.run();
    h.get_by_label("Run sweep").click();
    h.run();
    assert!(
        h.query_all_by_label_contains("covered down to").next().is_some(),
        "the sweep states the lowest covering supply temperature"
    );
    assert!(h.query_all_by_label_contains("Upgrades to cover every room at 45").next().is_some());
    h.get_by_label("Part load").click();
    h.run();
    h.get_by_label("Solve part load").click();
    h.run();
    for control in ["fixed speed", "constant Δp", "proportional Δp"] {
        assert!(h.query_all_by_label(control).next().is_some(), "{control} row");
    }
}
