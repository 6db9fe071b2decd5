//! Where a frame of the window goes while an emitter of a generated
//! building is dragged: the solve of the previous frame's move (a drag
//! preview), the rest of laying out and painting (`Context::run_ui`), and
//! tessellation (`Context::tessellate`), each timed apart; medians over the
//! frames. Headless, no GPU, the same frames as the criterion bench
//! `drag/frame while dragging` (app/benches/frame.rs).
//!
//! Run: `cargo run --release -p flowrise --example frame_timing -- [FLOORS] [PER_FLOOR] [FRAMES]`
//! (default 20 500 30: 10,000 emitters).

#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

use std::time::Instant;

use flowrise::gui::FlowriseApp;
use flowrise_core::generate::{BuildingSpec, generate_building};
use flowrise_core::project::NodeKind;

fn raw_input(events: Vec<egui::Event>) -> egui::RawInput {
    egui::RawInput {
        screen_rect: Some(egui::Rect::from_min_size(egui::Pos2::ZERO, egui::vec2(1440.0, 900.0))),
        events,
        ..egui::RawInput::default()
    }
}

fn median(mut v: Vec<f64>) -> f64 {
    v.sort_by(f64::total_cmp);
    v.get(v.len() / 2).copied().unwrap_or(f64::NAN)
}

fn main() {
    let args: Vec<u32> = std::env::args().skip(1).filter_map(|a| a.parse().ok()).collect();
    let floors = args.first().copied().unwrap_or(20);
    let per_floor = args.get(1).copied().unwrap_or(500);
    let frames = args.get(2).copied().unwrap_or(30).max(1);
    let project = match generate_building(&BuildingSpec::new(floors, per_floor)) {
        Ok(p) => p,
        Err(e) => {
            eprintln!("frame_timing: {e}");
            std::process::exit(1);
        }
    };
    let ctx = egui::Context::default();
    flowrise::gui::theme::apply_style(&ctx);
    let mut app = FlowriseApp::new(project, None);
    app.set_background_solve(false);
    for _ in 0..2 {
        let out = ctx.run_ui(raw_input(Vec::new()), |ui| app.ui(ui));
        ctx.tessellate(out.shapes, out.pixels_per_point);
    }
    let level = app.canvas().level;
    let centre = egui::pos2(720.0, 450.0);
    let Some(grab) = app
        .project()
        .nodes()
        .filter(|n| n.level == level && matches!(n.kind, NodeKind::Emitter(_)))
        .map(|n| app.screen_from_plan(n.pos))
        .filter(|q| q.x > 300.0 && q.x < 1100.0 && q.y > 150.0 && q.y < 650.0)
        .min_by(|a, b| a.distance(centre).total_cmp(&b.distance(centre)))
    else {
        eprintln!("frame_timing: no emitter near the middle of the canvas");
        std::process::exit(1);
    };
    let press = egui::Event::PointerButton {
        pos: grab,
        button: egui::PointerButton::Primary,
        pressed: true,
        modifiers: egui::Modifiers::default(),
    };
    for events in [vec![egui::Event::PointerMoved(grab)], vec![press]] {
        let out = ctx.run_ui(raw_input(events), |ui| app.ui(ui));
        ctx.tessellate(out.shapes, out.pixels_per_point);
    }
    let (mut ui_ms, mut tess_ms, mut solve_ms, mut shapes, mut prims) = (vec![], vec![], vec![], vec![], vec![]);
    let mut at = grab;
    for step in 0..frames {
        at.x += if step % 2 == 0 { 24.0 } else { -24.0 };
        let t0 = Instant::now();
        let out = ctx.run_ui(raw_input(vec![egui::Event::PointerMoved(at)]), |ui| app.ui(ui));
        let t1 = Instant::now();
        shapes.push(out.shapes.len() as f64);
        let n = ctx.tessellate(out.shapes, out.pixels_per_point).len();
        let t2 = Instant::now();
        prims.push(n as f64);
        ui_ms.push((t1 - t0).as_secs_f64() * 1e3);
        tess_ms.push((t2 - t1).as_secs_f64() * 1e3);
        // The solve the frame ran (synchronously, inside run_ui).
        solve_ms.push(app.last_solve_ms());
        if std::env::var_os("FRAME_TIMING_VERBOSE").is_some() {
            let t = &app.solution().timings;
            eprintln!(
                "frame {step}: solve {:.1} ms = derive {:.1} + operate {:.1} (Newton {:.1} ms in {} solves, last {} iterations)",
                app.last_solve_ms(),
                t.derive_ms,
                t.operate_ms,
                t.solver_ms,
                t.solver_runs,
                app.solution().iterations
            );
        }
    }
    let (ui, tess, solve) = (median(ui_ms), median(tess_ms), median(solve_ms));
    println!(
        "{} emitters, {frames} drag frames (medians): run_ui {ui:.1} ms (of which the solve {solve:.1} ms, \
         layout and paint {:.1} ms), tessellate {tess:.1} ms, frame {:.1} ms; {} shapes, {} clipped primitives; \
         preview = {}",
        u64::from(floors) * u64::from(per_floor),
        ui - solve,
        ui + tess,
        median(shapes),
        median(prims),
        app.solution().preview
    );
}
