//! Interaction tests of the flowrise window (egui_kittest, no GPU, no
//! display): they drive the real `FlowriseApp::ui` with pointer and key
//! events and check both what the window shows and the project document.
//!
//! Run: `cargo test -p flowrise --test gui` (about a second; no display).

// Test helpers outside `#[test]` functions unwrap too: a failure is the point.
#![allow(clippy::unwrap_used, clippy::panic)]

use std::path::PathBuf;
use std::time::Duration;

use egui::{Event, Key, Modifiers, Pos2, Vec2};
use egui_kittest::Harness;
use egui_kittest::kittest::Queryable;
use flowrise::gui::canvas::tools;
use flowrise::gui::recovery::RecoveryConfig;
use flowrise::gui::{FlowriseApp, Selection};
use flowrise_core::design::FindingKind;
use flowrise_core::project::{Edit, LevelId, NodeId, NodeKind, PlanPoint, Project};

const APARTMENT: &str = include_str!("../../demo-projects/apartment-block-heat-pump.ron");
const FLAT: &str = include_str!("../../demo-projects/flat-six-radiators.ron");

/// A harness around the app at the screenshot size, solving on the UI thread.
fn harness(project: Project) -> Harness<'static, FlowriseApp> {
    harness_app(FlowriseApp::new(project, None))
}

/// A harness around a prepared app.
fn harness_app(mut app: FlowriseApp) -> Harness<'static, FlowriseApp> {
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
    let branch = tools::branch_of(h.state().solution(), header.id);
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
fn a_drag_shows_previews_and_the_full_design_on_release() {
    let mut h = harness(demo(FLAT));
    let level = h.state().canvas().level;
    let project = h.state().project().clone();
    let node = project.nodes().find(|n| n.level == level && matches!(n.kind, NodeKind::Emitter(_))).unwrap().clone();
    let design = h.state().solution().clone();
    assert!(!design.preview);

    // Mid-drag: a preview of the moved network on the last design.
    let from = h.state().screen_from_plan(node.pos);
    h.hover_at(from);
    h.drag_at(from);
    h.hover_at(from + Vec2::new(40.0, 30.0));
    h.hover_at(from + Vec2::new(90.0, 60.0));
    h.run();
    let moving = h.state().project().clone();
    assert_ne!(moving.node(node.id).unwrap().pos, node.pos, "the emitter follows the pointer");
    let sol = h.state().solution().clone();
    assert!(sol.preview, "a drag preview while the pointer is down");
    assert_eq!(sol.revision, moving.revision, "of the moved project");
    assert!(h.query_by_label_contains("drag preview in").is_some(), "the top bar says it is a preview");
    for (a, b) in sol.emitters.iter().zip(&design.emitters) {
        assert_eq!((&a.presetting, &a.lockshield), (&b.presetting, &b.lockshield), "the last design's settings");
    }

    // Released: the full design of the moved project, as a cold solve has it.
    h.drop_at(from + Vec2::new(90.0, 60.0));
    h.run();
    let sol = h.state().solution().clone();
    assert!(!sol.preview, "the design follows on release");
    assert!(h.query_by_label_contains("drag preview in").is_none());
    let cold = flowrise_core::design::solve_project(
        h.state().project(),
        &flowrise_core::design::SolveOptions::default(),
        &mut flowrise_core::design::Workspace::default(),
    );
    assert_eq!(sol.findings.len(), cold.findings.len());
    for (a, b) in sol.emitters.iter().zip(&cold.emitters) {
        assert_eq!((a.id, &a.presetting, &a.lockshield), (b.id, &b.presetting, &b.lockshield));
        assert!((a.flow_kg_s - b.flow_kg_s).abs() <= 1e-5 * b.flow_kg_s.abs(), "{a:?}\n{b:?}");
    }
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

/// A fresh temporary folder for one test.
fn temp_dir(tag: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("flowrise-gui-{tag}-{}", std::process::id()));
    std::fs::remove_dir_all(&d).ok();
    d
}

/// A project with a source only.
fn source_only() -> Project {
    let mut p = Project::new("Sketch");
    p.apply(Edit::AddNode { level: LevelId(0), pos: PlanPoint::new(0.0, 0.0), kind: tools::new_source() }).unwrap();
    p
}

/// Draw an emitter at `x` m and a run to it from the source at the origin,
/// with the window's tools.
fn draw_emitter(h: &mut Harness<'_, FlowriseApp>, x: f64) {
    h.key_press(Key::E);
    h.run();
    click_plan(h, PlanPoint::new(x, 0.0));
    h.key_press(Key::R);
    h.run();
    click_plan(h, PlanPoint::new(0.0, 0.0));
    click_plan(h, PlanPoint::new(x, 0.0));
    h.key_press(Key::Escape);
    h.run();
}

#[test]
fn after_a_crash_the_window_offers_the_autosave_and_recovering_restores_the_drawing() {
    let dir = temp_dir("recover");
    // Autosave after every edit, as a long sketching session would after 20.
    let cfg = RecoveryConfig { dir: dir.clone(), interval: Duration::from_secs(3600), every_edits: 1 };

    // Session 1: draw, never save, then the process dies (the app is
    // dropped without the clean close that removes its files).
    let mut h = harness_app(FlowriseApp::new(source_only(), None).with_recovery(cfg.clone(), false));
    draw_emitter(&mut h, 6.0);
    let drawn = h.state().project().clone();
    assert_eq!((drawn.emitters().len(), drawn.run_count()), (1, 1), "the sketch has an emitter and its run");
    let autosave = h.state().autosave_path().unwrap();
    assert_eq!(Project::load(&autosave).unwrap(), drawn, "the autosave holds the drawing");
    drop(h);

    // Session 2 opens on another project and finds the crashed session's work.
    let mut h = harness_app(FlowriseApp::new(demo(FLAT), None).with_recovery(cfg.clone(), false));
    assert!(h.query_by_label_contains("Recover unsaved work?").is_some(), "the offer is shown");
    assert!(h.query_by_label_contains("never saved to a file").is_some());
    h.get_by_label("Recover").click();
    h.run();
    assert!(h.query_by_label_contains("Recover unsaved work?").is_none(), "the offer closes");
    assert_eq!(*h.state().project(), drawn, "recovering restores the drawing exactly");
    assert!(h.state().is_dirty(), "recovered work is shown as unsaved");
    assert!(!autosave.exists(), "the crashed session's file is gone …");
    let own = h.state().autosave_path().unwrap();
    assert_eq!(Project::load(&own).unwrap(), drawn, "… once this session has autosaved the work itself");
    assert_eq!(h.state().solution().emitters.len(), 1, "the recovered drawing is solved");

    // A clean close leaves nothing behind, so the next start offers nothing.
    h.state_mut().close_cleanly();
    drop(h);
    let h = harness_app(FlowriseApp::new(demo(FLAT), None).with_recovery(cfg, false));
    assert!(h.query_by_label_contains("Recover unsaved work?").is_none());
    assert!(h.state().orphans().is_empty());
}

#[test]
fn discarding_the_offer_deletes_the_autosave() {
    let dir = temp_dir("discard");
    let cfg = RecoveryConfig { dir: dir.clone(), interval: Duration::from_secs(3600), every_edits: 1 };
    let mut h = harness_app(FlowriseApp::new(source_only(), None).with_recovery(cfg.clone(), false));
    draw_emitter(&mut h, 5.0);
    drop(h);
    let mut h = harness_app(FlowriseApp::new(demo(FLAT), None).with_recovery(cfg, false));
    h.get_by_label("Discard").click();
    h.run();
    assert!(h.query_by_label_contains("Recover unsaved work?").is_none());
    assert_eq!(*h.state().project(), demo(FLAT), "the open project is untouched");
    let left: Vec<_> = std::fs::read_dir(&dir).unwrap().flatten().map(|e| e.file_name()).collect();
    assert!(left.iter().all(|n| n.to_string_lossy().contains(&format!("session-{}-", std::process::id()))));
    assert!(h.state().orphans().is_empty());
}

#[test]
fn the_unsaved_changes_prompt_guards_new_and_cancel_keeps_the_drawing() {
    let mut h = harness(source_only());
    draw_emitter(&mut h, 6.0);
    assert!(h.state().is_dirty());
    let drawn = h.state().project().clone();

    h.key_press_modifiers(Modifiers::COMMAND, Key::N);
    h.run();
    assert!(h.query_by_label_contains("has changes that are not saved").is_some(), "the prompt is shown");
    h.get_by_label("Cancel").click();
    h.run();
    assert!(h.query_by_label_contains("has changes that are not saved").is_none());
    assert_eq!(*h.state().project(), drawn, "Cancel keeps the drawing");

    h.key_press_modifiers(Modifiers::COMMAND, Key::N);
    h.run();
    h.get_by_label("Discard").click();
    h.run();
    assert_eq!(h.state().project().name, "Untitled project", "Discard goes on to the new project");
    assert!(!h.state().is_dirty());
}

#[test]
fn a_failed_save_keeps_the_drawing_and_its_undo_history() {
    let bad = temp_dir("failed-save").join("no-such-folder").join("plant.ron");
    let mut h = harness_app(FlowriseApp::new(source_only(), Some(bad.clone())));
    let start = h.state().project().clone();
    draw_emitter(&mut h, 6.0);
    let one = h.state().project().clone();
    draw_emitter(&mut h, -6.0);
    let two = h.state().project().clone();
    assert_eq!(two.emitters().len(), 2);

    h.key_press_modifiers(Modifiers::COMMAND, Key::S);
    h.run();
    assert!(h.query_all_by_label_contains("cannot save").next().is_some(), "the failure is reported");
    assert!(!bad.exists());
    h.get_by_label("Close").click();
    h.run();
    assert!(h.state().is_dirty(), "still unsaved");
    assert_eq!(*h.state().project(), two, "the drawing is kept");

    // Undo walks back through both drawings' steps, redo comes forward.
    for _ in 0..4 {
        h.key_press_modifiers(Modifiers::COMMAND, Key::Z);
        h.run();
    }
    assert_eq!(*h.state().project(), start, "undo reaches the state before drawing");
    for _ in 0..2 {
        h.key_press_modifiers(Modifiers::COMMAND | Modifiers::SHIFT, Key::Z);
        h.run();
    }
    assert_eq!(*h.state().project(), one, "redo re-applies the first emitter and its run");
}

#[test]
fn a_return_temperature_above_supply_is_refused_beside_the_field() {
    let mut h = harness(demo(FLAT));
    h.state_mut().select(Selection::None);
    h.run();
    let before = h.state().project().clone();
    let supply = before.settings.supply_c;
    h.get_by_label("Design settings").click();
    h.run();
    type_into(&mut h, "Return", &format!("{}", supply + 5.0));
    assert_eq!(*h.state().project(), before, "the impossible setting is not applied");
    assert!(h.query_by_label_contains("must be below supply").is_some(), "the refusal is shown beside the field");
}

/// The own gradient limit behind Δp controllers: ticked it takes the
/// generated buildings' 60 Pa/m and re-sizes the pipes behind the
/// controllers (the pipes table's limit column follows); a value typed
/// there is applied; unticked the general limit is back.
#[test]
fn the_gradient_limit_behind_controllers_is_set_from_the_settings() {
    use flowrise_core::generate::{BuildingSpec, CONTROLLED_GRADIENT_LIMIT_PA_M, generate_building};
    let mut file = generate_building(&BuildingSpec::new(2, 10)).unwrap().to_file();
    file.settings.controlled_gradient_limit_pa_m = None;
    let mut h = harness(Project::from_file(file).unwrap());
    h.state_mut().select(Selection::None);
    h.run();
    let limits = |h: &Harness<'_, FlowriseApp>| -> Vec<f64> {
        let mut v: Vec<f64> = h.state().solution().pipes.iter().map(|p| p.gradient_limit_pa_m).collect();
        v.sort_by(f64::total_cmp);
        v.dedup();
        v
    };
    assert_eq!(limits(&h), vec![150.0]);
    h.get_by_label("Design settings").click();
    h.run();
    h.get_by_label("own gradient limit").click();
    h.run();
    assert_eq!(h.state().project().settings.controlled_gradient_limit_pa_m, Some(CONTROLLED_GRADIENT_LIMIT_PA_M));
    assert_eq!(limits(&h), vec![CONTROLLED_GRADIENT_LIMIT_PA_M, 150.0], "the pipes behind the controllers");
    type_into(&mut h, "Gradient limit there", "80");
    assert_eq!(h.state().project().settings.controlled_gradient_limit_pa_m, Some(80.0));
    h.get_by_label("own gradient limit").click();
    h.run();
    assert_eq!(h.state().project().settings.controlled_gradient_limit_pa_m, None);
    assert_eq!(limits(&h), vec![150.0]);
}

#[test]
fn a_project_starts_from_a_building_outline() {
    let mut h = harness(Project::new("Empty"));
    h.get_by_label("File").click();
    h.run();
    h.get_by_label_contains("New from building outline").click();
    h.run();
    assert!(h.query_by_label_contains("24 emitters in total").is_some(), "the default outline: 4 floors × 6 rooms");
    h.get_by_label("reverse return").click();
    h.run();
    h.get_by_label("Create project").click();
    h.run();
    let p = h.state().project();
    assert_eq!(p.levels.len(), 4);
    assert_eq!(p.emitters().len(), 24);
    assert_eq!(h.state().solution().emitters.len(), 24, "the new building is solved");
    assert!(h.query_by_label_contains("Create project").is_none(), "the form closes");
}

#[test]
fn the_parts_tab_follows_the_open_document() {
    let mut h = harness(demo(FLAT));
    h.get_by_label("Parts list").click();
    h.run();
    let has_header = |h: &Harness<'_, FlowriseApp>| h.query_all_by_label_contains("header").next().is_some();
    assert!(!has_header(&h), "the flat has no header");
    // Another document with the same revision numbers: the list is made anew.
    h.state_mut().replace_project(demo(APARTMENT), None);
    h.run();
    assert!(has_header(&h), "the apartment block's headers are listed");
}

/// The first emitter of a project with a radiator model.
fn first_radiator(p: &Project) -> NodeId {
    p.emitters()
        .into_iter()
        .find(|&id| {
            matches!(&p.node(id).unwrap().kind, NodeKind::Emitter(e)
                if matches!(e.model, flowrise_core::emitters::EmitterModel::Radiator(_)))
        })
        .unwrap()
}

/// Issue 20 item 5: Installed freezes the radiator sizes as well. Raising a
/// room's load in Installed mode keeps its radiator (and shows the room
/// falling short) instead of choosing a longer one.
#[test]
fn installed_mode_keeps_the_radiator_size_when_the_load_rises() {
    let mut h = harness(demo(FLAT));
    let id = first_radiator(h.state().project());
    let before = h.state().solution().emitter(id).unwrap().detail.clone();
    h.get_by_label("Installed").click();
    h.run();
    assert_eq!(h.state().project().settings.mode, flowrise_core::project::Mode::Installed);
    h.state_mut().select(Selection::Node(id));
    h.run();
    assert!(h.query_by_label_contains("frozen by Installed").is_some(), "the inspector names the frozen size");
    let load = h.state().solution().emitter(id).unwrap().load_w;
    type_into(&mut h, "Heat load", &format!("{:.0}", load * 2.0));
    let after = h.state().solution().emitter(id).unwrap().clone();
    assert!((after.load_w - 2.0 * load).abs() < 1.0, "the load was raised");
    let (
        Some(flowrise_core::emitters::EmitterDetail::Radiator(a)),
        Some(flowrise_core::emitters::EmitterDetail::Radiator(b)),
    ) = (&before, &after.detail)
    else {
        panic!("radiator details")
    };
    assert_eq!((a.length_mm, a.nominal_output_w), (b.length_mm, b.nominal_output_w), "the radiator keeps its size");
    assert!(after.output_w < after.load_w, "the frozen radiator falls short of the doubled load");
}

/// Issue 20 item 5: switching to Installed with nothing else changed moves
/// no flow and no authority, presetting, valve Δp or radiator size.
#[test]
fn toggling_installed_changes_no_authority_or_flow() {
    let mut h = harness(demo(FLAT));
    let design = h.state().solution().clone();
    h.get_by_label("Installed").click();
    h.run();
    let installed = h.state().solution().clone();
    assert_eq!(design.emitters.len(), installed.emitters.len());
    for (a, b) in design.emitters.iter().zip(&installed.emitters) {
        assert_eq!(a.presetting, b.presetting, "{}", a.id);
        assert!((a.authority - b.authority).abs() < 1e-9, "{}: authority {} vs {}", a.id, a.authority, b.authority);
        assert!((a.valve_dp_pa - b.valve_dp_pa).abs() < 1e-6, "{}", a.id);
        assert!((a.design_flow_kg_s - b.design_flow_kg_s).abs() < 1e-12, "{}", a.id);
        assert!((a.flow_kg_s - b.flow_kg_s).abs() < 1e-6 * a.flow_kg_s.max(1e-9), "{}", a.id);
        assert_eq!(a.detail, b.detail, "{}", a.id);
    }
    // The inspector shows the same authority text in both modes.
    let id = first_radiator(h.state().project());
    let text = format!("{:.2}", design.emitter(id).unwrap().authority);
    h.state_mut().select(Selection::Node(id));
    h.run();
    assert!(h.query_all_by_label(&text).next().is_some(), "authority {text} shown");
}

/// Issue 20 item 1: work autosaved from `flowrise plan.ron` started in one
/// folder is saved back to that folder's `plan.ron` after a recovery in a
/// session started from another folder that has its own `plan.ron`; and
/// when the original file changed since, saving asks (Cancel keeps
/// everything as it was, Overwrite writes).
#[test]
fn recovered_work_saves_to_its_own_file_from_any_folder() {
    let root = temp_dir("cwd");
    let (a, b) = (root.join("a"), root.join("b"));
    std::fs::create_dir_all(&a).unwrap();
    std::fs::create_dir_all(&b).unwrap();
    source_only().save(&a.join("plan.ron")).unwrap();
    demo(FLAT).save(&b.join("plan.ron")).unwrap();
    let b_before = std::fs::read(b.join("plan.ron")).unwrap();
    let cfg = RecoveryConfig { dir: root.join("recovery"), interval: Duration::from_secs(3600), every_edits: 1 };
    let _cwd = CWD.lock().unwrap_or_else(std::sync::PoisonError::into_inner);
    let start_dir = std::env::current_dir().unwrap();

    // Session 1, started in folder a as `flowrise plan.ron`: draw, crash.
    std::env::set_current_dir(&a).unwrap();
    let opened = Project::load(std::path::Path::new("plan.ron")).unwrap();
    let mut h =
        harness_app(FlowriseApp::new(opened, Some(PathBuf::from("plan.ron"))).with_recovery(cfg.clone(), false));
    draw_emitter(&mut h, 6.0);
    let drawn = h.state().project().clone();
    drop(h);

    // Session 2, started in folder b on b's plan.ron: recover, Ctrl+S.
    std::env::set_current_dir(&b).unwrap();
    let other = Project::load(std::path::Path::new("plan.ron")).unwrap();
    let mut h = harness_app(FlowriseApp::new(other, Some(PathBuf::from("plan.ron"))).with_recovery(cfg.clone(), false));
    let a_plan = std::fs::canonicalize(a.join("plan.ron")).unwrap();
    assert!(
        h.query_by_label_contains(&format!("belongs to {}", a_plan.display())).is_some(),
        "the offer names the file the work belongs to"
    );
    h.get_by_label("Recover").click();
    h.run();
    assert_eq!(h.state().path(), Some(a_plan.as_path()));
    h.key_press_modifiers(Modifiers::COMMAND, Key::S);
    h.run();
    assert_eq!(Project::load(&a_plan).unwrap(), drawn, "the work went back to its own file");
    assert_eq!(std::fs::read(b.join("plan.ron")).unwrap(), b_before, "the other folder's plan.ron is untouched");
    assert!(!h.state().is_dirty());

    // Session 3: more work on a's plan, crash; someone changes the file.
    std::env::set_current_dir(&a).unwrap();
    let mut h = harness_app(
        FlowriseApp::new(Project::load(&a_plan).unwrap(), Some(PathBuf::from("plan.ron")))
            .with_recovery(cfg.clone(), false),
    );
    let room = h.state().project().emitters()[0];
    h.state_mut().select(Selection::Node(room));
    h.run();
    type_into(&mut h, "Heat load", "1234");
    let drawn_again = h.state().project().clone();
    assert!(h.state().is_dirty(), "session 3 has unsaved work");
    drop(h);
    source_only().save(&a_plan).unwrap();
    let changed = std::fs::read(&a_plan).unwrap();

    std::env::set_current_dir(&b).unwrap();
    let mut h = harness_app(FlowriseApp::new(demo(FLAT), None).with_recovery(cfg, false));
    assert!(
        h.query_by_label_contains("changed on disk").is_some(),
        "the offer says the file changed: {:?}",
        h.state().orphans()
    );
    h.get_by_label("Recover").click();
    h.run();
    h.key_press_modifiers(Modifiers::COMMAND, Key::S);
    h.run();
    assert!(h.query_by_label_contains("Save over a changed file?").is_some(), "saving asks");
    h.get_by_label("Cancel").click();
    h.run();
    assert_eq!(std::fs::read(&a_plan).unwrap(), changed, "Cancel writes nothing");
    assert!(h.state().is_dirty(), "Cancel keeps the unsaved mark");
    assert_eq!(*h.state().project(), drawn_again);
    h.key_press_modifiers(Modifiers::COMMAND, Key::S);
    h.run();
    h.get_by_label("Overwrite").click();
    h.run();
    assert_eq!(Project::load(&a_plan).unwrap(), drawn_again, "Overwrite writes the recovered work");
    assert!(!h.state().is_dirty());

    std::env::set_current_dir(start_dir).unwrap();
    std::fs::remove_dir_all(&root).ok();
}

/// Issue 15: a value the window shows in warning colour always has a
/// finding behind it, and the inspector shows the lockshield setting. On
/// the flat demo (no findings) no emitter shows a shortfall even where its
/// output lies a few watts under its load; raising a load in Installed mode
/// makes that room's flow fall outside the tolerance: the inspector marks
/// it, and the findings panel names it.
#[test]
fn a_warning_colour_always_has_a_finding_and_the_lockshield_is_shown() {
    // The apartment block has rooms a few watts under their load, inside
    // the flow tolerance: no finding, so no warning colour.
    let mut h = harness(demo(APARTMENT));
    let sol = h.state().solution().clone();
    assert!(sol.emitters.iter().any(|e| e.output_w + 1.0 < e.load_w), "a room a little under its load");
    for e in &sol.emitters {
        h.state_mut().select(Selection::Node(e.id));
        h.run();
        let flagged = sol.has_finding(flowrise_core::design::ItemRef::Node(e.id), &FindingKind::OUTPUT_SHORT);
        assert_eq!(h.query_by_label("Shortfall").is_some(), flagged, "{}", e.id);
    }
    let mut h = harness(demo(FLAT));
    let sol = h.state().solution().clone();
    for e in &sol.emitters {
        h.state_mut().select(Selection::Node(e.id));
        h.run();
        let flagged = sol.has_finding(flowrise_core::design::ItemRef::Node(e.id), &FindingKind::OUTPUT_SHORT);
        assert_eq!(h.query_by_label("Shortfall").is_some(), flagged, "{}", e.id);
        assert!(
            h.query_all_by_label_contains(&format!("{}  (Kv", e.lockshield)).next().is_some(),
            "{}: lockshield setting {} shown",
            e.id,
            e.lockshield
        );
        assert!(h.query_by_label_contains("outside the tolerance").is_none(), "{}", e.id);
    }
    // Installed, then a room's load raised by half: its flow is now short.
    h.get_by_label("Installed").click();
    h.run();
    let id = first_radiator(h.state().project());
    h.state_mut().select(Selection::Node(id));
    h.run();
    let load = h.state().solution().emitter(id).unwrap().load_w;
    type_into(&mut h, "Heat load", &format!("{:.0}", load * 1.5));
    let sol = h.state().solution().clone();
    let item = flowrise_core::design::ItemRef::Node(id);
    assert!(sol.has_finding(item, &[FindingKind::FlowOutOfTolerance]), "{:?}", sol.findings);
    assert!(h.query_by_label_contains("outside the tolerance").is_some(), "the inspector marks the flow");
    let finding = sol.findings.iter().find(|f| f.item == item && f.kind == FindingKind::FlowOutOfTolerance).unwrap();
    h.state_mut().select(Selection::None);
    h.run();
    assert!(
        h.query_all_by_label_contains(&finding.message[..40]).next().is_some(),
        "the findings panel lists it: {}",
        finding.message
    );
}

/// Tests that change the working folder take this lock (tests of one
/// binary run on threads of one process, which share the folder).
static CWD: std::sync::Mutex<()> = std::sync::Mutex::new(());

#[path = "gui/files_and_layout.rs"]
mod files_and_layout;
#[path = "gui/many_at_once.rs"]
mod many_at_once;

#[path = "gui/underlay.rs"]
mod underlay;

/// The unsaved mark follows the document, not the edit count: it is
/// remembered per revision (the comparison walks the whole document), and
/// undoing back to the saved state clears it again.
#[test]
fn the_unsaved_mark_follows_undo_and_redo() {
    let mut h = harness(source_only());
    assert!(!h.state().is_dirty());
    draw_emitter(&mut h, 6.0);
    assert!(h.state().is_dirty());
    while h.state().project().emitters().len() == 1 {
        h.state_mut().undo();
        h.run();
    }
    assert_eq!(*h.state().project(), source_only());
    assert!(!h.state().is_dirty(), "undone back to the saved document");
    h.state_mut().redo();
    h.run();
    assert!(h.state().is_dirty(), "redone: unsaved again");
}

/// The top bar counts notes when there is nothing worse, and never reads
/// "no findings" while the findings list has a note (a plant whose
/// expansion vessel is several membrane vessels).
#[test]
fn the_top_bar_counts_notes() {
    let mut p = demo(FLAT);
    let src = p.sources()[0];
    let mut kind = p.node(src).unwrap().kind.clone();
    if let NodeKind::Source(s) = &mut kind {
        s.water_content_l = 300_000.0;
    }
    p.apply(Edit::SetNodeKind { id: src, kind }).unwrap();
    let h = harness(p);
    let sol = h.state().solution();
    assert!(sol.findings.iter().any(|f| f.kind == FindingKind::VesselsInParallel));
    assert!(sol.findings.iter().all(|f| f.severity == flowrise_core::design::Severity::Note), "{:#?}", sol.findings);
    assert!(h.query_by_label("no findings").is_none());
    let n = sol.findings.len();
    h.get_by_label(&if n == 1 { "1 note".to_owned() } else { format!("{n} notes") });
}
