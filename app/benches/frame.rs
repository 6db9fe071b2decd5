//! One headless frame of the flowrise window on the largest demo project
//! and on a generated 1,000-emitter building:
//! layout, solve, paint and tessellation (`egui::Context::run_ui` +
//! `Context::tessellate`), no GPU.
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

    // The same, over a plan underlay.
    let dir = std::env::temp_dir().join(format!("flowrise-frame-bench-{}", std::process::id()));
    if std::fs::create_dir_all(&dir).is_err() {
        return;
    }
    let (lo, hi) = plan_extent(&big);
    let size = [hi[0] - lo[0] + 10.0, hi[1] - lo[1] + 10.0];
    let origin = [lo[0] - 5.0, lo[1] - 5.0];
    let png = dir.join("plan.png");
    let dxf = dir.join("plan.dxf");
    let Ok(png_bytes) = underlay::invented::plan_png(&png, 3000, 2000, 60, 0.16, 7) else { return };
    let Ok(dxf_bytes) = underlay::invented::plan_dxf(&dxf, origin, size, 2.4, 3) else { return };
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
        frame(&ctx, &mut app);
        frame(&ctx, &mut app);
        c.bench_function(&format!("frame, results cached (generated, 1,000 emitters, {name} underlay)"), |b| {
            b.iter(|| frame(&ctx, &mut app))
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

criterion_group!(benches, bench);
criterion_main!(benches);
