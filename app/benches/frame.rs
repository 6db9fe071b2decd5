//! One headless frame of the flowrise window on the largest demo project
//! and on a generated 1,000-emitter building:
//! layout, solve, paint and tessellation (`egui::Context::run_ui` +
//! `Context::tessellate`), no GPU. And a frame while dragging an emitter of
//! a generated 10,000-emitter building with the pointer: each frame moves
//! the pointer (the canvas turns it into a move edit) and solves the edit
//! of the frame before (synchronously here, so the frame includes it).
//!
//! The same building with a plan underlay under every level: a generated
//! ~2 MB PNG, and a generated ~5 MB DXF (invented plans,
//! `flowrise_core::underlay::invented`), read once before measuring.
//!
//! Run: `cargo bench -p flowrise --bench frame`.

/// The allocator the flowrise binary uses (app/src/main.rs), so the figures
/// are the product's.
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

use criterion::{Criterion, criterion_group, criterion_main};
use flowrise::gui::FlowriseApp;
use flowrise_core::project::{PlanPoint, Project, Underlay};
use flowrise_core::underlay;

const LARGEST: &str = include_str!("../../demo-projects/apartment-block-heat-pump.ron");

fn raw_input() -> egui::RawInput {
    egui::RawInput {
        screen_rect: Some(egui::Rect::from_min_size(egui::Pos2::ZERO, egui::vec2(1440.0, 900.0))),
        ..egui::RawInput::default()
    }
}

fn frame(ctx: &egui::Context, app: &mut FlowriseApp) -> usize {
    let out = ctx.run_ui(raw_input(), |ui| app.ui(ui));
    ctx.tessellate(out.shapes, out.pixels_per_point).len()
}

fn bench(c: &mut Criterion) {
    let Ok(project) = Project::from_ron(LARGEST) else { return };
    let ctx = egui::Context::default();
    flowrise::gui::theme::apply_style(&ctx);

    // A frame whose project changed: the solve runs inside it.
    let mut app = FlowriseApp::new(project.clone(), None);
    app.set_background_solve(false);
    frame(&ctx, &mut app);
    c.bench_function("frame with solve (apartment block)", |b| {
        b.iter(|| {
            app.replace_project(project.clone(), None);
            frame(&ctx, &mut app)
        });
    });

    // A frame with nothing changed: layout + paint + tessellation only.
    c.bench_function("frame, results cached (apartment block)", |b| b.iter(|| frame(&ctx, &mut app)));

    // A generated 1,000-emitter building (10 floors × 100).
    let spec = flowrise_core::generate::BuildingSpec::new(10, 100);
    let Ok(big) = flowrise_core::generate::generate_building(&spec) else { return };
    let mut app = FlowriseApp::new(big.clone(), None);
    app.set_background_solve(false);
    frame(&ctx, &mut app);
    c.bench_function("frame with solve (generated, 1,000 emitters)", |b| {
        b.iter(|| {
            app.replace_project(big.clone(), None);
            frame(&ctx, &mut app)
        });
    });
    c.bench_function("frame, results cached (generated, 1,000 emitters)", |b| b.iter(|| frame(&ctx, &mut app)));

    underlay_frames(c, &ctx, &big);
    drag_frames(c, &ctx);
}

/// The generated 1,000-emitter building over a plan underlay on every
/// level: a generated ~2 MB PNG, then a generated ~5 MB DXF.
fn underlay_frames(c: &mut Criterion, ctx: &egui::Context, big: &Project) {
    let dir = std::env::temp_dir().join(format!("flowrise-frame-bench-{}", std::process::id()));
    if std::fs::create_dir_all(&dir).is_err() {
        return;
    }
    let (lo, hi) = plan_extent(big);
    let size = [hi[0] - lo[0] + 10.0, hi[1] - lo[1] + 10.0];
    let origin = [lo[0] - 5.0, lo[1] - 5.0];
    let png = dir.join("plan.png");
    let dxf = dir.join("plan.dxf");
    let Ok(png_bytes) = underlay::invented::plan_png(&png, 3000, 2000, 60, 0.035, 7) else { return };
    // About 2,100 rooms of 11 entities (~2.4 kB of DXF each): ~5 MB.
    let room_m = (size[0] * size[1] / 2100.0).sqrt().clamp(1.0, 10.0);
    let Ok(dxf_bytes) = underlay::invented::plan_dxf(&dxf, origin, size, room_m, 3) else { return };
    eprintln!("underlays: {png_bytes} bytes of PNG, {dxf_bytes} bytes of DXF");
    let m_per_px = size[0] / 3000.0;
    for (name, file, m_per_unit, at) in [
        ("2 MB PNG", &png, m_per_px, PlanPoint::new(origin[0], origin[1])),
        ("5 MB DXF", &dxf, 0.001, PlanPoint::new(0.0, 0.0)),
    ] {
        let mut p = big.clone();
        for l in &mut p.levels {
            let mut u = Underlay::new(file.display().to_string(), m_per_unit);
            u.origin = at;
            l.underlay = Some(u);
        }
        let mut app = FlowriseApp::new(p, None);
        app.set_background_solve(false);
        app.underlays_mut().background = false;
        frame(ctx, &mut app);
        frame(ctx, &mut app);
        c.bench_function(&format!("frame, results cached (generated, 1,000 emitters, {name} underlay)"), |b| {
            b.iter(|| frame(ctx, &mut app))
        });
    }
    std::fs::remove_dir_all(&dir).ok();
}

/// Lower-left and upper-right corner of every node of a project, m.
fn plan_extent(p: &Project) -> ([f64; 2], [f64; 2]) {
    p.nodes().fold(([f64::INFINITY; 2], [f64::NEG_INFINITY; 2]), |(lo, hi), n| {
        ([lo[0].min(n.pos.x_m), lo[1].min(n.pos.y_m)], [hi[0].max(n.pos.x_m), hi[1].max(n.pos.y_m)])
    })
}

/// Frames of a pointer drag of one emitter on a generated 10,000-emitter
/// building (20 floors × 500).
fn drag_frames(c: &mut Criterion, ctx: &egui::Context) {
    let spec = flowrise_core::generate::BuildingSpec::new(20, 500);
    let Ok(big) = flowrise_core::generate::generate_building(&spec) else { return };
    let mut app = FlowriseApp::new(big, None);
    app.set_background_solve(false);
    frame(ctx, &mut app);
    frame(ctx, &mut app);
    // An emitter on the level shown, near the middle of the canvas.
    let level = app.canvas().level;
    let centre = egui::pos2(720.0, 450.0);
    let Some(grab) = app
        .project()
        .nodes()
        .filter(|n| n.level == level && matches!(n.kind, flowrise_core::project::NodeKind::Emitter(_)))
        .map(|n| app.screen_from_plan(n.pos))
        .filter(|q| q.x > 300.0 && q.x < 1100.0 && q.y > 150.0 && q.y < 650.0)
        .min_by(|a, b| a.distance(centre).total_cmp(&b.distance(centre)))
    else {
        return;
    };
    let with = |events: Vec<egui::Event>| egui::RawInput { events, ..raw_input() };
    let run = |ctx: &egui::Context, app: &mut FlowriseApp, input: egui::RawInput| {
        let out = ctx.run_ui(input, |ui| app.ui(ui));
        ctx.tessellate(out.shapes, out.pixels_per_point).len()
    };
    let press = egui::Event::PointerButton {
        pos: grab,
        button: egui::PointerButton::Primary,
        pressed: true,
        modifiers: egui::Modifiers::default(),
    };
    run(ctx, &mut app, with(vec![egui::Event::PointerMoved(grab)]));
    run(ctx, &mut app, with(vec![press]));
    let mut step = 0u32;
    let mut at = grab;
    let revision = app.project().revision;
    // Ten samples: a frame here takes tens of milliseconds.
    let mut g = c.benchmark_group("drag");
    g.sample_size(10).measurement_time(std::time::Duration::from_secs(10));
    g.bench_function("frame while dragging (generated, 10,000 emitters)", |b| {
        b.iter(|| {
            step += 1;
            // Back and forth by 24 px so the snapped position changes
            // every frame.
            at.x += if step % 2 == 1 { 24.0 } else { -24.0 };
            run(ctx, &mut app, with(vec![egui::Event::PointerMoved(at)]))
        });
    });
    g.finish();
    // Only when the case ran (a filter or a profiling run may skip it).
    if step > 0 {
        assert!(app.project().revision > revision, "the drag frames did not move the emitter");
    }
    // Which path the window's last drag solve took: a drag preview
    // (design::solve_preview) while the pointer is down.
    eprintln!(
        "last drag frame's solve: preview = {}, incremental path = {}",
        app.solution().preview,
        app.solution().timings.incremental
    );
}

criterion_group!(benches, bench);
criterion_main!(benches);
