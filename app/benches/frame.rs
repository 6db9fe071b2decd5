//! One headless frame of the flowrise window on the largest demo project
//! and on a generated 1,000-emitter building:
//! layout, solve, paint and tessellation (`egui::Context::run_ui` +
//! `Context::tessellate`), no GPU.
//!
//! Run: `cargo bench -p flowrise --bench frame`.

/// The allocator the flowrise binary uses (app/src/main.rs), so the figures
/// are the product's.
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

use criterion::{Criterion, criterion_group, criterion_main};
use flowrise::gui::FlowriseApp;
use flowrise_core::project::Project;

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
}

criterion_group!(benches, bench);
criterion_main!(benches);
