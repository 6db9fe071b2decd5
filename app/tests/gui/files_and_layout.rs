//! Files without a desktop dialog, no silent loss, readable layout (issue 16).

use super::*;
use egui_kittest::kittest::By;
use flowrise::gui::dialogs::{self, DialogChoice};

/// An app whose file dialogs come from the detection run on an
/// environment without a session bus or zenity, as on this test machine
/// and on a minimal desktop; its dialogs start in `dir`.
fn app_without_desktop_dialogs(project: Project, path: Option<PathBuf>, dir: &std::path::Path) -> FlowriseApp {
    let mut app = FlowriseApp::new(project, path);
    let found = dialogs::detect(
        Some("unix:path=/nonexistent-flowrise-test/bus".to_owned()),
        None,
        Some("/nonexistent-flowrise-test".into()),
    );
    assert!(matches!(found, dialogs::Availability::None(_)), "{found:?}");
    app.set_dialog_probe(dialogs::Probe::known(found));
    app.prefs.file_dialog = DialogChoice::Automatic;
    app.prefs.last_dir = Some(dir.to_path_buf());
    app
}

/// Type into a field of the in-window dialog and press Enter.
fn dialog_type(h: &mut Harness<'_, FlowriseApp>, label: &str, text: &str) {
    type_into(h, label, text);
}

#[test]
fn the_in_window_dialog_saves_opens_and_exports_to_chosen_paths() {
    let dir = temp_dir("in-window-dialog");
    std::fs::create_dir_all(dir.join("sub")).unwrap();
    let mut h = harness_app(app_without_desktop_dialogs(demo(FLAT), None, &dir));
    let flat = h.state().project().clone();

    // Save (no file yet): the in-window dialog opens and says why.
    h.key_press_modifiers(Modifiers::COMMAND, Key::S);
    h.run();
    assert!(h.query_by_label_contains("offers no file dialog here").is_some(), "the dialog says why it is used");
    assert!(h.query_by_label_contains("D-Bus").is_some(), "… naming the reason");
    dialog_type(&mut h, "Save as (file name or path)", "plant");
    let saved = dir.join("plant.ron");
    assert_eq!(Project::load(&saved).unwrap(), flat, "saved with the extension added");
    assert_eq!(h.state().path(), Some(std::fs::canonicalize(&saved).unwrap().as_path()));
    assert!(!h.state().is_dirty());
    assert!(!h.state().choosing_file(), "the dialog closed");

    // New, then Open: the listing shows the file; Tab completes its name.
    h.key_press_modifiers(Modifiers::COMMAND, Key::N);
    h.run();
    assert_eq!(h.state().project().name, "Untitled project");
    h.key_press_modifiers(Modifiers::COMMAND, Key::O);
    h.run();
    assert!(h.query_by_label("plant.ron").is_some(), "the listing shows the saved project");
    assert!(h.query_by_label("sub/").is_some(), "… and the folder");
    h.get_by_label("File name or path").focus();
    h.run();
    h.get_by_label("File name or path").type_text("pla");
    h.run();
    h.key_press(Key::Tab);
    h.run();
    assert_eq!(h.get_by_label("File name or path").value().as_deref(), Some("plant.ron"), "Tab completed the name");
    // Into the sub-folder and back up.
    h.get_by_label("sub/").click();
    h.run();
    assert!(h.query_by_label("plant.ron").is_none(), "inside sub/");
    h.get_by_label("Parent folder").click();
    h.run();
    h.get_by_label("plant.ron").click();
    h.run();
    h.get_by_label("Open").click();
    h.run();
    assert_eq!(*h.state().project(), flat, "the project opened");

    // Export the parts list and the report to chosen paths.
    h.get_by_label("Parts list").click();
    h.run();
    h.get_by_label("Export parts list (CSV)…").click();
    h.run();
    dialog_type(&mut h, "Save as (file name or path)", "parts");
    let csv = std::fs::read_to_string(dir.join("parts.csv")).unwrap();
    assert!(csv.lines().count() > 3, "{csv}");
    h.get_by_label("Export design report (HTML)…").click();
    h.run();
    dialog_type(&mut h, "Save as (file name or path)", "sub/report.html");
    let report = dir.join("sub/report.html");
    assert!(std::fs::read_to_string(&report).unwrap().contains("<svg"));
    assert!(h.query_by_label("Open in browser").is_some(), "after the report, opening it is offered");
    h.get_by_label("Close").click();
    h.run();

    // An existing file is replaced only after asking.
    std::fs::write(&report, "old").unwrap();
    h.get_by_label("Export design report (HTML)…").click();
    h.run();
    dialog_type(&mut h, "Save as (file name or path)", "sub/report.html");
    assert!(h.query_by_label_contains("already exists").is_some(), "the dialog asks before replacing");
    assert_eq!(std::fs::read_to_string(&report).unwrap(), "old");
    h.get_by_label("Replace").click();
    h.run();
    assert!(std::fs::read_to_string(&report).unwrap().contains("<svg"), "replaced once confirmed");
    std::fs::remove_dir_all(&dir).ok();
}

/// An opener standing in for a desktop without a browser.
fn no_browser(_: &std::path::Path) -> std::io::Result<()> {
    Err(std::io::Error::other("no program is set to open .html files"))
}

#[test]
fn a_report_that_cannot_be_opened_says_so_with_the_path_and_the_reason() {
    let dir = temp_dir("open-report");
    std::fs::create_dir_all(&dir).unwrap();
    let app = app_without_desktop_dialogs(demo(FLAT), None, &dir).with_opener(no_browser);
    let mut h = harness_app(app);
    h.get_by_label("Parts list").click();
    h.run();
    h.get_by_label("Export design report (HTML)…").click();
    h.run();
    dialog_type(&mut h, "Save as (file name or path)", "report.html");
    assert!(dir.join("report.html").is_file());
    h.get_by_label("Open in browser").click();
    // The opener answers on a worker thread.
    let mut shown = false;
    for _ in 0..100 {
        h.run();
        if h.query_by_label("The report was written but not opened").is_some() {
            shown = true;
            break;
        }
        std::thread::sleep(Duration::from_millis(10));
    }
    assert!(shown, "the failure is a message, not silence");
    assert!(h.query_all_by_label_contains("no program is set to open .html files").count() >= 1, "… with the reason");
    assert!(h.query_all_by_label_contains("report.html").count() >= 1, "… and the file");
}

#[test]
fn the_preference_forces_the_in_window_dialog() {
    let dir = temp_dir("forced-dialog");
    std::fs::create_dir_all(&dir).unwrap();
    let mut app = FlowriseApp::new(demo(FLAT), None);
    // Even where the desktop offers a dialog, the preference wins.
    app.set_dialog_probe(dialogs::Probe::known(dialogs::Availability::Desktop("test".to_owned())));
    app.prefs.last_dir = Some(dir.clone());
    let mut h = harness_app(app);
    h.get_by_label("File").click();
    h.run();
    h.get_by_label("Use flowrise's own file dialog").click();
    h.run();
    assert_eq!(h.state().prefs.file_dialog, DialogChoice::InWindow);
    h.key_press(Key::Escape);
    h.run();
    h.key_press_modifiers(Modifiers::COMMAND | Modifiers::SHIFT, Key::S);
    h.run();
    assert!(h.query_by_label_contains("as set in the File menu").is_some());
    h.get_by_label("Cancel").click();
    h.run();
    assert!(!h.state().choosing_file());
    std::fs::remove_dir_all(&dir).ok();
}

/// A write that fails (here: into /proc, which no one may write) is a
/// message naming the path and the reason, and the work stays open.
#[test]
fn a_write_to_an_unwritable_path_shows_a_message() {
    let dir = temp_dir("unwritable");
    std::fs::create_dir_all(&dir).unwrap();
    let mut h = harness_app(app_without_desktop_dialogs(demo(FLAT), None, &dir));
    h.key_press_modifiers(Modifiers::COMMAND, Key::S);
    h.run();
    dialog_type(&mut h, "Save as (file name or path)", "/proc/flowrise-test.ron");
    assert!(h.query_by_label("The project was not saved").is_some(), "a message, not silence");
    assert!(
        h.query_all_by_label_contains("cannot save /proc/flowrise-test.ron").next().is_some(),
        "with the path and reason"
    );
    assert!(h.state().path().is_none());
    // Choose another place: the dialog comes back.
    h.get_by_label("Choose another place…").click();
    h.run();
    dialog_type(&mut h, "Save as (file name or path)", &dir.join("good").display().to_string());
    assert!(dir.join("good.ron").exists());

    h.get_by_label("Parts list").click();
    h.run();
    h.get_by_label("Export design report (HTML)…").click();
    h.run();
    dialog_type(&mut h, "Save as (file name or path)", "/proc/flowrise-report.html");
    assert!(h.query_by_label("The design report was not written").is_some());
    assert!(h.query_all_by_label_contains("cannot write /proc/flowrise-report.html").next().is_some());
    std::fs::remove_dir_all(&dir).ok();
}

/// Edit the flat: a new load on its first radiator (one undo step).
fn edit_flat(h: &mut Harness<'_, FlowriseApp>) -> Project {
    let id = first_radiator(h.state().project());
    h.state_mut().select(Selection::Node(id));
    h.run();
    type_into(h, "Heat load", "1777");
    h.state_mut().select(Selection::None);
    h.run();
    assert!(h.state().is_dirty());
    h.state().project().clone()
}

fn prompt_shown(h: &Harness<'_, FlowriseApp>) -> bool {
    h.query_by_label_contains("has changes that are not saved").is_some()
}

/// Cancel the question: the document and its unsaved mark stay.
fn cancel_keeps(h: &mut Harness<'_, FlowriseApp>, edited: &Project, path: &str) {
    assert!(prompt_shown(h), "{path}: the question is asked");
    h.get_by_label("Cancel").click();
    h.run();
    assert!(!prompt_shown(h), "{path}: the question closed");
    assert_eq!(h.state().project(), edited, "{path}: Cancel keeps the document");
    assert!(h.state().is_dirty(), "{path}: Cancel keeps the unsaved mark");
}

#[test]
fn every_path_that_replaces_the_document_asks_and_cancel_keeps_it_unsaved() {
    let dir = temp_dir("unsaved-paths");
    std::fs::create_dir_all(&dir).unwrap();
    let other = dir.join("other.ron");
    demo(APARTMENT).save(&other).unwrap();
    let cfg = RecoveryConfig { dir: dir.join("recovery"), interval: Duration::from_secs(3600), every_edits: 1 };
    // Work left by a crashed session, for the Recover path.
    let mut h = harness_app(FlowriseApp::new(source_only(), None).with_recovery(cfg.clone(), false));
    draw_emitter(&mut h, 6.0);
    let crashed = h.state().project().clone();
    drop(h);

    let mut app = app_without_desktop_dialogs(demo(FLAT), None, &dir).with_recovery(cfg, false);
    app.prefs.recent = vec![other.clone()];
    let mut h = harness_app(app);
    h.get_by_label("Decide later").click();
    h.run();
    let edited = edit_flat(&mut h);

    // New.
    h.key_press_modifiers(Modifiers::COMMAND, Key::N);
    h.run();
    cancel_keeps(&mut h, &edited, "New");

    // New from building outline → Discard → Cancel on the form: still
    // unsaved (the reported loss), and the next New asks again.
    h.get_by_label("File").click();
    h.run();
    h.get_by_label_contains("New from building outline").click();
    h.run();
    assert!(prompt_shown(&h));
    h.get_by_label("Discard").click();
    h.run();
    assert!(h.query_by_label("Create project").is_some(), "the form opened");
    h.get_by_label("Cancel").click();
    h.run();
    assert_eq!(*h.state().project(), edited);
    assert!(h.state().is_dirty(), "a discarded-then-cancelled replacement keeps the unsaved mark");
    h.key_press_modifiers(Modifiers::COMMAND, Key::N);
    h.run();
    cancel_keeps(&mut h, &edited, "New after the cancelled outline");

    // Open → Discard → the dialog cancelled: still unsaved.
    h.key_press_modifiers(Modifiers::COMMAND, Key::O);
    h.run();
    assert!(prompt_shown(&h));
    h.get_by_label("Discard").click();
    h.run();
    assert!(h.state().choosing_file());
    h.get_by_label("Cancel").click();
    h.run();
    assert_eq!(*h.state().project(), edited);
    assert!(h.state().is_dirty(), "a cancelled Open keeps the unsaved mark");
    h.key_press_modifiers(Modifiers::COMMAND, Key::O);
    h.run();
    cancel_keeps(&mut h, &edited, "Open");

    // Save from the question, then the save dialog cancelled: nothing replaced.
    h.key_press_modifiers(Modifiers::COMMAND, Key::N);
    h.run();
    h.get_by_label("Save").click();
    h.run();
    assert!(h.state().choosing_file(), "no file yet: the save dialog");
    h.get_by_label("Cancel").click();
    h.run();
    assert_eq!(*h.state().project(), edited, "a cancelled save replaces nothing");
    assert!(h.state().is_dirty());

    // Open recent.
    h.get_by_label("File").click();
    h.run();
    h.get_by_label("Open recent").click();
    h.run();
    h.get_by_label("other.ron").click();
    h.run();
    cancel_keeps(&mut h, &edited, "Open recent");

    // Recover (File → Recover unsaved work…, after "Decide later").
    h.get_by_label("File").click();
    h.run();
    h.get_by_label("Recover unsaved work…").click();
    h.run();
    assert!(h.query_by_label_contains("Recover unsaved work?").is_some(), "the offer again");
    h.get_by_label("Recover").click();
    h.run();
    cancel_keeps(&mut h, &edited, "Recover");
    assert!(h.query_by_label_contains("Recover unsaved work?").is_some(), "back to the offer");
    h.get_by_label("Decide later").click();
    h.run();

    // Quit.
    h.key_press_modifiers(Modifiers::COMMAND, Key::Q);
    h.run();
    cancel_keeps(&mut h, &edited, "Quit");
    assert!(!h.state().close_allowed());

    // Closing the window.
    h.input_mut().viewports.entry(egui::ViewportId::ROOT).or_default().events.push(egui::ViewportEvent::Close);
    h.run();
    cancel_keeps(&mut h, &edited, "closing the window");
    assert!(!h.state().close_allowed());

    // Discard goes on: Recover replaces the document with the crashed work …
    h.get_by_label("File").click();
    h.run();
    h.get_by_label("Recover unsaved work…").click();
    h.run();
    h.get_by_label("Recover").click();
    h.run();
    h.get_by_label("Discard").click();
    h.run();
    assert_eq!(*h.state().project(), crashed, "Discard then Recover");
    // … and a discarded close closes.
    h.key_press_modifiers(Modifiers::COMMAND, Key::Q);
    h.run();
    h.get_by_label("Discard").click();
    h.run();
    assert!(h.state().close_allowed());
    std::fs::remove_dir_all(&dir).ok();
}

/// Issue 20 item 11: a stale lock of a killed session is removed on the
/// next start (recovery folder given relative to a changed working
/// folder); a very long project name is elided and pushes neither the
/// menu nor the solve status off the top strip at 1024 × 700.
#[test]
fn a_stale_lock_is_cleaned_and_a_long_name_is_elided() {
    let guard = CWD.lock().unwrap_or_else(std::sync::PoisonError::into_inner);
    let root = temp_dir("stale-lock");
    std::fs::create_dir_all(root.join("recovery")).unwrap();
    std::fs::write(root.join("recovery/session-4242-dead.lock"), "").unwrap();
    std::fs::write(root.join("recovery/session-4242-dead.meta.json"), "{}").unwrap();
    let start_dir = std::env::current_dir().unwrap();
    std::env::set_current_dir(&root).unwrap();

    let mut p = demo(FLAT);
    p.name = "A very long project name ".repeat(20);
    let mut app = FlowriseApp::new(p, None).with_recovery(RecoveryConfig::in_dir("recovery"), false);
    app.set_background_solve(false);
    let mut h = Harness::builder()
        .with_size(Vec2::new(1024.0, 700.0))
        .with_max_steps(40)
        .build_ui_state(|ui, app: &mut FlowriseApp| app.ui(ui), app);
    h.run();
    std::env::set_current_dir(&start_dir).unwrap();
    drop(guard);
    assert!(!root.join("recovery/session-4242-dead.lock").exists(), "the stale lock is gone");
    assert!(!root.join("recovery/session-4242-dead.meta.json").exists());
    assert!(h.query_by_label_contains("Recover unsaved work?").is_none(), "nothing to offer");

    let screen = egui::Rect::from_min_size(Pos2::ZERO, Vec2::new(1024.0, 700.0));
    let file = h.get_by_label("File").rect();
    let status = h.get_by_label("no findings").rect();
    let solved = h.get_by_label_contains("solved in").rect();
    for (what, r) in [("File", file), ("findings count", status), ("solve status", solved)] {
        assert!(screen.contains_rect(r), "{what} is on screen: {r:?}");
    }
    assert!(!file.intersects(solved) && !solved.intersects(status), "nothing overlaps");
    let name = h.get_by_label_contains("A very long project name").rect();
    assert!(name.width() <= 330.0, "the name is elided: {name:?}");
    assert!(!name.intersects(solved) && name.right() <= file.left(), "the name stays left of the menu");
    std::fs::remove_dir_all(&root).ok();
}

/// A harness of `project` at a given window size.
fn harness_sized(project: Project, w: f32, h: f32) -> Harness<'static, FlowriseApp> {
    let mut app = FlowriseApp::new(project, None);
    app.set_background_solve(false);
    let mut hs = Harness::builder()
        .with_size(Vec2::new(w, h))
        .with_max_steps(40)
        .build_ui_state(|ui, app: &mut FlowriseApp| app.ui(ui), app);
    hs.run();
    hs
}

fn thirty_storeys() -> Project {
    let spec = flowrise_core::generate::BuildingSpec::new(30, 10);
    flowrise_core::generate::generate_building(&spec).unwrap()
}

/// The window is readable at 1024 × 700 and 1920 × 1080: the solve status
/// and findings count are whole, every drawer tab can be reached, the
/// level tabs scroll to the shown level of a 30-storey building, the
/// drawer keeps its height across tabs and has its grip.
#[test]
fn the_window_reads_at_both_sizes_with_thirty_levels() {
    for (w, hgt) in [(1024.0, 700.0), (1920.0, 1080.0)] {
        let screen = egui::Rect::from_min_size(Pos2::ZERO, Vec2::new(w, hgt));
        let mut h = harness_sized(thirty_storeys(), w, hgt);
        let status = h.get_by_label_contains("solved in").rect();
        assert!(screen.contains_rect(status), "{w}: solve status {status:?}");
        let grip = h.get_by_label("Drawer height").rect();
        for tab in [
            "Emitters",
            "Pipes",
            "Findings",
            "Pump chart",
            "Index circuit profile",
            "Parts list",
            "Supply temperature sweep",
            "Part load",
        ] {
            let by = || By::new().label(tab).role(egui::accesskit::Role::Button);
            let r = h.get(by()).rect();
            assert!(screen.contains_rect(r), "{w}: drawer tab {tab} reachable: {r:?}");
            h.get(by()).click();
            h.run();
            let now = h.get_by_label("Drawer height").rect();
            assert!((now.top() - grip.top()).abs() < 0.5, "{w}: the drawer kept its height on {tab}: {grip:?} {now:?}");
        }
        // The top level: its tab scrolls into view.
        let top =
            h.state().project().levels.iter().max_by(|a, b| a.elevation_m.total_cmp(&b.elevation_m)).unwrap().clone();
        h.state_mut().show_level(top.id);
        h.run();
        h.run();
        let tab = h.get_by_label_contains(&format!("{} (", top.name)).rect();
        assert!(screen.contains_rect(tab), "{w}: the shown level's tab is in view: {tab:?}");
    }
}

#[test]
fn an_empty_riser_view_takes_no_room_and_settings_do_not_widen_the_inspector() {
    let mut h = harness(source_only());
    let with = h.state().canvas().view.rect;
    h.state_mut().prefs.show_elevation = false;
    h.run();
    let without = h.state().canvas().view.rect;
    assert!((with.width() - without.width()).abs() < 0.5, "no risers: no riser view ({with:?} vs {without:?})");

    let mut h = harness(demo(APARTMENT));
    h.state_mut().select(Selection::None);
    h.run();
    let before = h.state().canvas().view.rect;
    h.get_by_label("Design settings").click();
    h.run();
    h.run();
    let after = h.state().canvas().view.rect;
    assert!((before.width() - after.width()).abs() < 0.5, "the plan keeps its width: {before:?} {after:?}");
}

/// The riser view is clickable: a click on a level shows it, and the
/// inspector follows the level.
#[test]
fn a_click_on_a_level_in_the_riser_view_shows_it() {
    let mut h = harness(demo(APARTMENT));
    let shown = h.state().canvas().level;
    let (rect, bands) = h.state().canvas().riser.clone().expect("the apartment block has risers");
    let &(target, y) = bands.iter().find(|b| b.0 != shown).unwrap();
    let at = Pos2::new(rect.center().x, y - 3.0);
    h.hover_at(at);
    h.drag_at(at);
    h.drop_at(at);
    h.run();
    assert_eq!(h.state().canvas().level, target);
    let name = h.state().project().levels.iter().find(|l| l.id == target).unwrap().name.clone();
    assert!(h.query_by_label(&format!("Level: {name}")).is_some(), "the inspector shows the level");
}

/// Ctrl+Y redoes; a tool's hint goes when the tool changes; the findings
/// count reads as words ("1 error", not "1 errors").
#[test]
fn small_truths_redo_hints_and_counts() {
    let mut h = harness(source_only());
    draw_emitter(&mut h, 6.0);
    let drawn = h.state().project().clone();
    h.key_press_modifiers(Modifiers::COMMAND, Key::Z);
    h.run();
    assert_ne!(*h.state().project(), drawn);
    h.key_press_modifiers(Modifiers::COMMAND, Key::Y);
    h.run();
    h.key_press_modifiers(Modifiers::COMMAND, Key::Y);
    h.run();
    assert_eq!(*h.state().project(), drawn, "Ctrl+Y redoes");

    // The run tool's hint, then another tool: the hint goes.
    h.key_press(Key::R);
    h.run();
    click_plan(&mut h, PlanPoint::new(0.0, 0.0));
    assert!(h.state().status().is_some_and(|s| s.hint && s.text.contains("click bend points")), "the run tool's hint");
    h.key_press(Key::E);
    h.run();
    assert!(h.state().status().is_none(), "the hint went with its tool");

    // One unconnected emitter: exactly one error, said so.
    let mut p = source_only();
    let kind = tools::new_radiator(&p, "Room 1");
    p.apply(Edit::AddNode { level: LevelId(0), pos: PlanPoint::new(5.0, 0.0), kind }).unwrap();
    let h = harness(p);
    let errors =
        h.state().solution().findings.iter().filter(|f| f.severity == flowrise_core::design::Severity::Error).count();
    if errors == 1 {
        assert!(h.query_all_by_label_contains("1 error").next().is_some());
    }
    assert!(h.query_all_by_label_contains("1 errors").next().is_none(), "no '1 errors'");
    assert!(h.query_all_by_label_contains(" at N").next().is_none(), "no 'Warning at N…: N…' doubling");
}

/// The charts explain themselves: the profile names its legs, the pump and
/// the index valve; the sweep names rooms with their level, beside the
/// chart; the source says how its set-point, duty and operating point
/// relate.
#[test]
fn charts_and_the_pump_explain_themselves() {
    let mut h = harness(demo(FLAT));
    h.get_by_label("Index circuit profile").click();
    h.run();
    for entry in ["supply leg", "return leg", "index emitter and its valve", "pump outlet and inlet"] {
        assert!(h.query_all_by_label_contains(entry).next().is_some(), "profile legend: {entry}");
    }
    h.get_by_label("Supply temperature sweep").click();
    h.run();
    h.get_by_label("Run sweep").click();
    h.run();
    let p = h.state().project().clone();
    let e = p.node(p.emitters()[0]).unwrap();
    let level = p.levels.iter().find(|l| l.id == e.level).unwrap();
    let name = format!("{}, {}", e.label(), level.name);
    assert!(h.query_all_by_label(&name).next().is_some(), "the sweep names {name}");

    let source = p.sources()[0];
    h.state_mut().select(Selection::Node(source));
    h.run();
    assert!(h.query_by_label_contains("The duty head is what the index circuit needs").is_some());
}
