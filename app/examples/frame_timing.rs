//! Where a frame of the window goes while an emitter of a generated
//! building is dragged: the solve of the previous frame's move (a drag
//! preview), the rest of laying out and painting (`Context::run_ui`), and
//! tessellation (`Context::tessellate`), each timed apart; medians over the
//! frames. Headless, no GPU, the same frames as the criterion bench
//! `drag/frame while dragging` (app/benches/frame.rs).
//!
//! Run: `cargo run --release -p flowrise --example frame_timing -- [FLOORS] [PER_FLOOR] [FRAMES]`
//! (default 20 500 30: 10,000 emitters). With `FRAME_TIMING_PAN=1` the
//! frames pan the canvas instead (a middle-button drag over the plan, no
//! edit, no solve), and the process's peak resident memory is printed: the
//! window's pan rate and memory on a large building, without a display.

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
    if std::env::var_os("FRAME_TIMING_PAN").is_some() {
        pan(&ctx, &mut app, u64::from(floors) * u64::from(per_floor), frames);
        return;
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

/// Pan frames: press the middle button over the canvas and move it, one
/// step per frame; medians of the frame (layout, paint, tessellation).
fn pan(ctx: &egui::Context, app: &mut FlowriseApp, emitters: u64, frames: u32) {
    // Start where no node is near: a middle-button drag on a node moves it.
    let level = app.canvas().level;
    let on_screen: Vec<egui::Pos2> =
        app.project().nodes().filter(|n| n.level == level).map(|n| app.screen_from_plan(n.pos)).collect();
    let clearance = |q: egui::Pos2| on_screen.iter().map(|p| p.distance(q)).fold(f32::INFINITY, f32::min);
    let candidates =
        (0..20).flat_map(|i| (0..12).map(move |j| egui::pos2(400.0 + 30.0 * i as f32, 200.0 + 40.0 * j as f32)));
    let Some(start) = candidates.max_by(|a, b| clearance(*a).total_cmp(&clearance(*b))) else { return };
    let revision = app.project().revision;
    let anchor = app.screen_from_plan(flowrise_core::project::PlanPoint { x_m: 0.0, y_m: 0.0 });
    let press = |pressed| egui::Event::PointerButton {
        pos: start,
        button: egui::PointerButton::Middle,
        pressed,
        modifiers: egui::Modifiers::default(),
    };
    for events in [vec![egui::Event::PointerMoved(start)], vec![press(true)]] {
        let out = ctx.run_ui(raw_input(events), |ui| app.ui(ui));
        ctx.tessellate(out.shapes, out.pixels_per_point);
    }
    let mut frame_ms = Vec::new();
    let mut at = start;
    for step in 0..frames {
        // Down and right, then back: the plan moves under the pointer.
        let d = if step < frames / 2 { 10.0 } else { -7.0 };
        at += egui::vec2(d, 0.5 * d);
        let t0 = Instant::now();
        let out = ctx.run_ui(raw_input(vec![egui::Event::PointerMoved(at)]), |ui| app.ui(ui));
        ctx.tessellate(out.shapes, out.pixels_per_point);
        frame_ms.push(t0.elapsed().as_secs_f64() * 1e3);
    }
    let out = ctx.run_ui(raw_input(vec![press(false)]), |ui| app.ui(ui));
    ctx.tessellate(out.shapes, out.pixels_per_point);
    let peak = std::fs::read_to_string("/proc/self/status")
        .ok()
        .and_then(|s| {
            s.lines().find(|l| l.starts_with("VmHWM:")).map(|l| l.trim_start_matches("VmHWM:").trim().to_owned())
        })
        .unwrap_or_else(|| "unknown".to_owned());
    let moved = app.screen_from_plan(flowrise_core::project::PlanPoint { x_m: 0.0, y_m: 0.0 }).distance(anchor);
    if app.project().revision != revision || moved < 1.0 {
        eprintln!("frame_timing: the frames did not pan the plan (moved {moved} px)");
        std::process::exit(1);
    }
    let frame = median(frame_ms);
    println!(
        "{emitters} emitters, {frames} pan frames (median): frame {frame:.1} ms ({:.0} frames per second); \
         peak resident memory {peak}",
        1000.0 / frame
    );
}
