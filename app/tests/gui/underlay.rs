//! Plan underlays (issue 18): scale by two clicks and a typed distance,
//! import of generated plans, bad files, a missing file, paths kept
//! relative through Save as. Every plan is generated here (invented).

use super::*;
use flowrise::gui::Action;
use flowrise_core::project::Underlay;
use flowrise_core::underlay::invented;

fn temp_dir(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("flowrise-gui-underlay-{name}-{}", std::process::id()));
    std::fs::remove_dir_all(&d).ok();
    std::fs::create_dir_all(&d).unwrap();
    d
}

/// The flat demo saved in `dir` as job.ron with `underlay` under its level,
/// in an app that reads underlay files on the UI thread.
fn app_with(dir: &std::path::Path, underlay: Option<Underlay>) -> Harness<'static, FlowriseApp> {
    let mut p = demo(FLAT);
    p.levels[0].underlay = underlay;
    let file = dir.join("job.ron");
    p.save(&file).unwrap();
    let mut app = FlowriseApp::new(Project::load(&file).unwrap(), Some(file));
    app.underlays_mut().background = false;
    harness_app(app)
}

/// Open the Plan underlay panel from the tool column.
fn open_panel(h: &mut Harness<'_, FlowriseApp>) {
    h.get_by_label(Action::PlanUnderlay.label()).click();
    h.run();
}

#[test]
fn the_underlay_scale_set_by_two_clicks_gives_the_typed_distance() {
    let dir = temp_dir("scale");
    invented::plan_png(&dir.join("gf.png"), 400, 300, 50, 0.0, 1).unwrap();
    let mut h = app_with(&dir, Some(Underlay::new("gf.png", 0.05)));
    let level = h.state().canvas().level;
    assert_eq!(level, h.state().project().levels[0].id);
    open_panel(&mut h);
    h.get_by_label("Set scale by two points").click();
    h.run();
    let before = h.state().project().levels[0].underlay.clone().unwrap();
    // Two points on the canvas, clear of the panel (top right).
    let view = h.state().canvas().view;
    let (a, b) = (
        view.plan_from_screen(view.rect.left_bottom() + Vec2::new(120.0, -120.0)),
        view.plan_from_screen(view.rect.left_bottom() + Vec2::new(420.0, -260.0)),
    );
    click_plan(&mut h, a);
    assert!(h.state_mut().underlays_mut().calibration().and_then(|c| c.a).is_some(), "first point taken");
    click_plan(&mut h, b);
    let cal = h.state_mut().underlays_mut().calibration().cloned().unwrap();
    let (ca, cb) = (cal.a.unwrap(), cal.b.unwrap());
    assert!(ca.distance_m(a) < 0.01 && cb.distance_m(b) < 0.01, "{ca:?} {cb:?}");
    assert_eq!(h.state().project().levels[0].underlay.as_ref(), Some(&before), "nothing changed yet");
    type_into(&mut h, "Real distance (m)", "6.5");
    let after = h.state().project().levels[0].underlay.clone().unwrap();
    // The two points of the plan picture now lie 6.5 m apart.
    let (sa, sb) = (before.source_from_plan(ca), before.source_from_plan(cb));
    let d = after.plan_from_source(sa).distance_m(after.plan_from_source(sb));
    assert!((d - 6.5).abs() < 1e-9, "{d} m between the two points");
    assert!((after.m_per_unit / before.m_per_unit - 6.5 / ca.distance_m(cb)).abs() < 1e-9);
    assert!(h.state_mut().underlays_mut().calibration().is_none(), "done");
    // One undo step takes it back.
    h.state_mut().undo();
    h.run();
    assert_eq!(h.state().project().levels[0].underlay.as_ref(), Some(&before));
}

#[test]
fn a_typed_distance_that_is_not_a_number_is_refused_beside_the_field() {
    let dir = temp_dir("scale-bad");
    invented::plan_png(&dir.join("gf.png"), 200, 100, 50, 0.0, 1).unwrap();
    let mut h = app_with(&dir, Some(Underlay::new("gf.png", 0.05)));
    open_panel(&mut h);
    h.get_by_label("Set scale by two points").click();
    h.run();
    let view = h.state().canvas().view;
    click_plan(&mut h, view.plan_from_screen(view.rect.left_bottom() + Vec2::new(100.0, -100.0)));
    click_plan(&mut h, view.plan_from_screen(view.rect.left_bottom() + Vec2::new(300.0, -100.0)));
    let before = h.state().project().clone();
    type_into(&mut h, "Real distance (m)", "four");
    assert!(h.query_by_label_contains("is not a number").is_some());
    assert_eq!(h.state().project(), &before);
}

/// Import `path` under the shown level and return the app.
fn import(h: &mut Harness<'_, FlowriseApp>, path: PathBuf) {
    let level = h.state().canvas().level;
    h.state_mut().underlays_mut().start_import(level, path);
    h.run();
}

#[test]
fn generated_png_pdf_and_dxf_plans_are_put_under_the_level() {
    let dir = temp_dir("import");
    std::fs::create_dir_all(dir.join("plans")).unwrap();
    let mut h = app_with(&dir, None);
    invented::plan_png(&dir.join("plans/gf.png"), 300, 200, 50, 0.0, 1).unwrap();
    import(&mut h, dir.join("plans/gf.png"));
    let u = h.state().project().levels[0].underlay.clone().unwrap();
    assert_eq!(u.path, "plans/gf.png", "relative to the project file");
    assert!(h.query_by_label_contains("image, 300 × 200 px").is_some(), "the panel describes it");

    std::fs::write(dir.join("plans/gf.pdf"), invented::one_page_pdf(false)).unwrap();
    import(&mut h, dir.join("plans/gf.pdf"));
    let u = h.state().project().levels[0].underlay.clone().unwrap();
    assert_eq!(u.path, "plans/gf.pdf");
    assert!((u.m_per_unit - 0.0254 / 72.0 * 100.0).abs() < 1e-12, "a PDF page starts at 1:100");

    invented::plan_dxf(&dir.join("plans/gf.dxf"), [0.0, 0.0], [12.0, 8.0], 4.0, 2).unwrap();
    import(&mut h, dir.join("plans/gf.dxf"));
    let u = h.state().project().levels[0].underlay.clone().unwrap();
    assert_eq!((u.path.as_str(), u.m_per_unit), ("plans/gf.dxf", 0.001), "the drawing's own millimetres");
    let level = h.state().canvas().level;
    let ends = h.state_mut().underlays_mut().line_ends(&demo(FLAT), level);
    assert!(ends.is_empty(), "another project's level has no underlay");
    let project = h.state().project().clone();
    let ends = h.state_mut().underlays_mut().line_ends(&project, level);
    // The south wall of the first room starts at the drawing's origin.
    let origin = u.plan_from_source([0.0, 0.0]);
    assert!(ends.iter().any(|e| e.distance_m(origin) < 1e-9), "line ends on the plan for snapping");

    // Save as into a sub-folder: the underlay still names the same file.
    std::fs::create_dir_all(dir.join("copies")).unwrap();
    assert!(h.state_mut().save_to(&dir.join("copies/job.ron")));
    let saved = Project::load(&dir.join("copies/job.ron")).unwrap();
    assert_eq!(saved.levels[0].underlay.as_ref().unwrap().path, "../plans/gf.dxf");
    let back =
        flowrise_core::underlay::load(&saved.levels[0].underlay.as_ref().unwrap().resolve(Some(&dir.join("copies"))));
    assert!(back.is_ok(), "{back:?}");
}

#[test]
fn bad_plan_files_give_a_clear_message_and_change_nothing() {
    let dir = temp_dir("bad");
    let mut h = app_with(&dir, None);
    let before = h.state().project().clone();
    let mut png = b"\x89PNG\r\n\x1a\n".to_vec();
    png.extend_from_slice(&[3u8; 300]);
    std::fs::write(dir.join("damaged.png"), png).unwrap();
    std::fs::write(dir.join("protected.pdf"), invented::one_page_pdf(true)).unwrap();
    {
        use std::io::Write as _;
        let mut f = std::io::BufWriter::new(std::fs::File::create(dir.join("huge.dxf")).unwrap());
        f.write_all(b"0\nSECTION\n2\nENTITIES\n").unwrap();
        for i in 0..1_000_000u32 {
            write!(f, "0\nLINE\n10\n{i}\n20\n0\n11\n{i}\n21\n1\n").unwrap();
        }
        f.write_all(b"0\nENDSEC\n0\nEOF\n").unwrap();
    }
    for (file, says) in [
        ("damaged.png", "is damaged or not a PNG or JPEG image"),
        ("protected.pdf", "is encrypted (password-protected)"),
        ("huge.dxf", "more than 250000 drawing entities"),
    ] {
        import(&mut h, dir.join(file));
        assert_eq!(h.state().project(), &before, "{file}: the project is unchanged");
        let notice = h.state().notice().cloned().unwrap();
        assert!(notice.text.contains(says) && notice.text.contains(file), "{file}: {}", notice.text);
        assert!(notice.text.contains("The project is unchanged"), "{}", notice.text);
        assert!(h.query_all_by_label_contains(says).next().is_some(), "{file}: the message is shown");
        assert!(h.state().status().unwrap().error);
        h.get_by_label("Close").click();
        h.run();
    }
    std::fs::remove_file(dir.join("huge.dxf")).ok();
}

#[test]
fn a_project_whose_underlay_file_is_missing_opens_with_a_warning() {
    let dir = temp_dir("missing");
    let h = app_with(&dir, Some(Underlay::new("plans/moved away.png", 0.02)));
    let status = h.state().status().cloned().unwrap();
    assert!(status.error, "{status:?}");
    assert!(status.text.contains("plans/moved away.png") && status.text.contains("not there"), "{}", status.text);
    assert_eq!(h.state().project().levels[0].underlay.as_ref().unwrap().path, "plans/moved away.png", "kept");
    assert!(!h.state().solution().emitters.is_empty(), "the network solves all the same");
}

#[test]
fn drawing_a_run_snaps_to_a_line_end_of_the_plan() {
    use flowrise::gui::canvas::snap::SnapKind;
    let dir = temp_dir("snap");
    // A drawing whose first wall starts off the grid, away from the network.
    invented::plan_dxf(&dir.join("gf.dxf"), [0.37, 0.83], [8.0, 8.0], 4.0, 0).unwrap();
    let mut h = app_with(&dir, Some(Underlay::new("gf.dxf", 0.001)));
    h.key_press(Key::R);
    h.run();
    click_plan(&mut h, PlanPoint::new(1.0, 1.0));
    assert!(h.state().canvas().draft.is_some(), "a run started at the heat source");
    let near = h.state().screen_from_plan(PlanPoint::new(0.40, 0.86));
    h.hover_at(near);
    h.run();
    let (s, _) = h.state().canvas().snapped.unwrap();
    assert_eq!(s.kind, SnapKind::PlanEnd, "{s:?}");
    assert!(s.at.distance_m(PlanPoint::new(0.37, 0.83)) < 1e-9, "{s:?}");
}

#[test]
fn a_later_page_of_a_pdf_is_chosen_in_the_panel_and_saved() {
    let dir = temp_dir("pages");
    std::fs::write(dir.join("set.pdf"), invented::two_page_pdf()).unwrap();
    let mut h = app_with(&dir, None);
    import(&mut h, dir.join("set.pdf"));
    assert_eq!(h.state().project().levels[0].underlay.as_ref().unwrap().page, 1);
    assert!(h.query_by_label_contains("PDF page 1 of 2, 400 × 300 pt").is_some(), "the panel names the page");
    assert!(h.query_by_label("Page 1 of 2").is_some());
    h.get_by_label("Next page").click();
    h.run();
    h.run();
    assert_eq!(h.state().project().levels[0].underlay.as_ref().unwrap().page, 2);
    assert!(h.query_by_label_contains("PDF page 2 of 2, 600 × 400 pt").is_some(), "page 2 is read and shown");
    // Saved with the page; the report reads the same page.
    assert!(h.state_mut().save_to(&dir.join("job.ron")));
    let saved = Project::load(&dir.join("job.ron")).unwrap();
    assert_eq!(saved.levels[0].underlay.as_ref().unwrap().page, 2);
    let report = flowrise_core::report::svg::PlanUnderlays::read(&saved, Some(&dir));
    let got = report.levels.values().next().unwrap().as_ref().unwrap();
    assert_eq!((got.page, got.pages), (2, 2));
    // One undo goes back to page 1.
    h.state_mut().undo();
    h.run();
    assert_eq!(h.state().project().levels[0].underlay.as_ref().unwrap().page, 1);
}

#[test]
fn the_plan_moves_by_dragging_on_the_canvas_in_one_undo_step_and_not_when_locked() {
    let dir = temp_dir("move");
    invented::plan_png(&dir.join("gf.png"), 400, 300, 50, 0.0, 1).unwrap();
    let mut h = app_with(&dir, Some(Underlay::new("gf.png", 0.05)));
    open_panel(&mut h);
    h.get_by_label("Move by dragging on the plan").click();
    h.run();
    let before = h.state().project().clone();
    let view = h.state().canvas().view;
    // Start the drag on a node: the plan moves, the network stays.
    let node = before.nodes().find(|n| n.level == before.levels[0].id).unwrap();
    let from = h.state().screen_from_plan(node.pos);
    drag_screen(&mut h, from, Vec2::new(150.0, -60.0), false);
    let after = h.state().project().clone();
    let (u0, u1) = (before.levels[0].underlay.as_ref().unwrap(), after.levels[0].underlay.as_ref().unwrap());
    let want = view.plan_from_screen(from + Vec2::new(150.0, -60.0));
    let got = view.plan_from_screen(from);
    let (dx, dy) = (u1.origin.x_m - u0.origin.x_m, u1.origin.y_m - u0.origin.y_m);
    assert!((dx - (want.x_m - got.x_m)).abs() < 1e-6 && (dy - (want.y_m - got.y_m)).abs() < 1e-6, "{dx} {dy}");
    assert!(dx > 0.0 && dy > 0.0, "right and up on the plan");
    assert_eq!(after.node(node.id).unwrap().pos, node.pos, "the network did not move");
    assert_eq!(after.nodes().count(), before.nodes().count());
    h.state_mut().undo();
    h.run();
    assert_eq!(h.state().project(), &before, "one undo step");
    // Locked: the toggle is off and a drag does not move the plan.
    h.get_by_label("Lock placement").click();
    h.run();
    let locked = h.state().project().clone();
    assert!(!h.state_mut().underlays_mut().moving(locked.levels[0].id));
    drag_screen(&mut h, view.rect.left_bottom() + Vec2::new(200.0, -200.0), Vec2::new(80.0, 0.0), false);
    assert_eq!(
        h.state().project().levels[0].underlay.as_ref().unwrap().origin,
        locked.levels[0].underlay.as_ref().unwrap().origin
    );
}
