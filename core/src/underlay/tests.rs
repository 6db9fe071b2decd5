//! Reading generated plans: an image, a one-page PDF and a DXF drawing, and
//! the bad files (damaged image, encrypted PDF, a DXF of 10^6 entities).
//! Every plan here is made by the test; none is a real building's.

use std::io::Write as _;
use std::path::{Path, PathBuf};

use super::*;

fn dir(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("flowrise-underlay-{name}-{}", std::process::id()));
    std::fs::create_dir_all(&d).unwrap();
    d
}

/// A 320 × 200 white picture with a black 2-px frame from (40, 30) to (280, 170).
fn write_png(path: &Path) {
    let mut img = image::RgbImage::from_pixel(320, 200, image::Rgb([255, 255, 255]));
    for x in 40..=280 {
        for t in 0..2 {
            img.put_pixel(x, 30 + t, image::Rgb([0, 0, 0]));
            img.put_pixel(x, 170 - t, image::Rgb([0, 0, 0]));
        }
    }
    for y in 30..=170 {
        for t in 0..2 {
            img.put_pixel(40 + t, y, image::Rgb([0, 0, 0]));
            img.put_pixel(280 - t, y, image::Rgb([0, 0, 0]));
        }
    }
    img.save(path).unwrap();
}

fn pdf_bytes(encrypt: bool) -> Vec<u8> {
    super::invented::one_page_pdf(encrypt)
}

/// A DXF in millimetres: a 10 m × 6 m outline (LWPOLYLINE, closed), an
/// inner wall (LINE), a door swing (ARC), a column (CIRCLE) and a room name.
#[allow(clippy::field_reassign_with_default)] // reason: a dxf entity has many fields; only a few are set
fn write_dxf(path: &Path) {
    use dxf::entities::{Arc, Circle, Entity, EntityType, Line, LwPolyline, Text};
    use dxf::{Drawing, LwPolylineVertex, Point};
    let mut d = Drawing::new();
    d.header.version = dxf::enums::AcadVersion::R2000;
    d.header.default_drawing_units = dxf::enums::Units::Millimeters;
    let mut outline = LwPolyline::default();
    for (x, y) in [(0.0, 0.0), (10_000.0, 0.0), (10_000.0, 6_000.0), (0.0, 6_000.0)] {
        outline.vertices.push(LwPolylineVertex { x, y, ..Default::default() });
    }
    outline.set_is_closed(true);
    d.add_entity(Entity::new(EntityType::LwPolyline(outline)));
    d.add_entity(Entity::new(EntityType::Line(Line::new(
        Point::new(4_000.0, 0.0, 0.0),
        Point::new(4_000.0, 6_000.0, 0.0),
    ))));
    d.add_entity(Entity::new(EntityType::Arc(Arc::new(Point::new(4_000.0, 1_000.0, 0.0), 900.0, 90.0, 180.0))));
    d.add_entity(Entity::new(EntityType::Circle(Circle::new(Point::new(7_000.0, 3_000.0, 0.0), 150.0))));
    let mut t = Text::default();
    t.location = Point::new(1_000.0, 3_000.0, 0.0);
    t.text_height = 250.0;
    t.value = "Living room".to_owned();
    d.add_entity(Entity::new(EntityType::Text(t)));
    d.save_file(path).unwrap();
}

#[test]
fn a_generated_png_reads_with_its_pixels() {
    let d = dir("png");
    let p = d.join("ground floor.png");
    write_png(&p);
    let got = load(&p).unwrap();
    let UnderlayContent::Raster(r) = &got.content else { panic!("a picture") };
    assert_eq!((r.width, r.height, r.units_per_px), (320, 200, 1.0));
    let px = |x: u32, y: u32| &r.rgba[((y * r.width + x) * 4) as usize..][..4];
    assert_eq!(px(40, 100), [0, 0, 0, 255]);
    assert_eq!(px(160, 100), [255, 255, 255, 255]);
    // A first scale fits the width asked for.
    assert!((got.first_m_per_unit(16.0) - 16.0 / 320.0).abs() < 1e-12);
    // The same picture as JPEG.
    let j = d.join("ground floor.JPG");
    image::open(&p).unwrap().to_rgb8().save_with_format(&j, image::ImageFormat::Jpeg).unwrap();
    let UnderlayContent::Raster(r) = load(&j).unwrap().content else { panic!("a picture") };
    assert_eq!((r.width, r.height), (320, 200));
    assert!(r.rgba[((100 * 320 + 160) * 4) as usize] > 200, "white inside the frame");
}

#[test]
fn a_generated_one_page_pdf_renders_its_rectangle() {
    let d = dir("pdf");
    let p = d.join("plan.pdf");
    std::fs::write(&p, pdf_bytes(false)).unwrap();
    let got = load(&p).unwrap();
    assert_eq!(got.kind, SourceKind::Pdf);
    let UnderlayContent::Raster(r) = &got.content else { panic!("a picture") };
    assert_eq!((r.width, r.height), (PDF_RENDER_SIDE_PX, PDF_RENDER_SIDE_PX * 3 / 4));
    // Source units are PDF points: the page is 400 × 300 pt.
    let [w, h] = r.size_units();
    assert!((w - 400.0).abs() < 1e-9 && (h - 300.0).abs() < 1e-9, "{w} × {h}");
    let at_pt = |x: f64, y: f64| {
        let (px, py) = ((x / r.units_per_px) as u32, ((300.0 - y) / r.units_per_px) as u32);
        let i = ((py * r.width + px) * 4) as usize;
        [r.rgba[i], r.rgba[i + 1], r.rgba[i + 2]]
    };
    assert_eq!(at_pt(200.0, 175.0), [0, 0, 255], "inside the filled rectangle");
    assert_eq!(at_pt(50.0, 50.0), [255, 255, 255], "outside it");
    assert_eq!(at_pt(350.0, 280.0), [255, 255, 255], "outside it");
    // A PDF page starts at 1:100.
    assert!((got.first_m_per_unit(20.0) - 0.0254 / 72.0 * 100.0).abs() < 1e-12);
}

#[test]
fn a_generated_dxf_reads_lines_arcs_circles_and_text_in_its_units() {
    let d = dir("dxf");
    let p = d.join("plan.dxf");
    write_dxf(&p);
    let got = load(&p).unwrap();
    let UnderlayContent::Vector(v) = &got.content else { panic!("a drawing") };
    assert_eq!(v.entities, 5);
    assert_eq!(v.m_per_unit, Some(0.001));
    assert_eq!(v.starts.len(), 4, "outline, wall, arc, circle");
    let outline = v.polylines().next().unwrap();
    assert_eq!(outline.len(), 5, "closed: back to the first corner");
    assert!(outline[0][0].to_bits() == outline[4][0].to_bits() && outline[0][1].to_bits() == outline[4][1].to_bits());
    assert_eq!(v.bounds, ([0.0, 0.0], [10_000.0, 6_000.0]));
    assert_eq!(v.texts.len(), 1);
    assert_eq!(v.texts[0].text, "Living room");
    // Every point of the arc and the circle lies on its radius.
    for (poly, c, r) in v.polylines().skip(2).zip([[4_000.0, 1_000.0], [7_000.0, 3_000.0]]).map(|(p, c)| {
        let r = if c[0] < 5_000.0 { 900.0 } else { 150.0 };
        (p, c, r)
    }) {
        for q in poly {
            assert!(((q[0] - c[0]).hypot(q[1] - c[1]) - r).abs() < 1e-6);
        }
    }
    // The arc runs from 90° to 180°: from (4000, 1900) to (3100, 1000).
    let arc = v.polylines().nth(2).unwrap();
    assert!((arc[0][0] - 4_000.0).abs() < 1e-6 && (arc[0][1] - 1_900.0).abs() < 1e-6);
    let last = arc[arc.len() - 1];
    assert!((last[0] - 3_100.0).abs() < 1e-6 && (last[1] - 1_000.0).abs() < 1e-6);
    assert!(v.line_ends().contains(&[4_000.0, 6_000.0]));
}

#[test]
fn a_later_pdf_page_is_read_when_asked_for_and_a_missing_one_is_a_clear_message() {
    let d = dir("pdf-pages");
    let p = d.join("two pages.pdf");
    std::fs::write(&p, super::invented::two_page_pdf()).unwrap();
    let first = load(&p).unwrap();
    assert_eq!((first.page, first.pages), (1, 2));
    let second = load_page(&p, 2).unwrap();
    assert_eq!((second.page, second.pages), (2, 2));
    let UnderlayContent::Raster(r) = &second.content else { panic!("a picture") };
    // Page 2 is 600 × 400 pt with a red rectangle from (50, 50) to (150, 100).
    let [w, h] = r.size_units();
    assert!((w - 600.0).abs() < 1e-9 && (h - 400.0).abs() < 1e-9, "{w} × {h}");
    let at_pt = |x: f64, y: f64| {
        let (px, py) = ((x / r.units_per_px) as u32, ((400.0 - y) / r.units_per_px) as u32);
        let i = ((py * r.width + px) * 4) as usize;
        [r.rgba[i], r.rgba[i + 1], r.rgba[i + 2]]
    };
    assert_eq!(at_pt(100.0, 75.0), [255, 0, 0], "inside page 2's rectangle");
    assert_eq!(at_pt(200.0, 175.0), [255, 255, 255], "page 1's rectangle is not on page 2");
    for missing in [0, 3] {
        let e = load_page(&p, missing).unwrap_err();
        assert!(e.message.contains("has 2 pages") && e.message.contains("from 1 to 2"), "{}", e.message);
    }
    // An image has one page whatever is asked.
    let png = d.join("plan.png");
    write_png(&png);
    let img = load_page(&png, 3).unwrap();
    assert_eq!((img.page, img.pages), (1, 1));
}

#[test]
fn a_damaged_image_is_a_clear_message() {
    let d = dir("bad-image");
    let p = d.join("plan.png");
    let mut bytes = b"\x89PNG\r\n\x1a\n".to_vec();
    bytes.extend_from_slice(&[7u8; 200]);
    std::fs::write(&p, &bytes).unwrap();
    let e = load(&p).unwrap_err();
    assert!(e.message.contains("is damaged or not a PNG or JPEG image"), "{e}");
    assert!(e.to_string().contains("plan.png"), "names the file: {e}");
    std::fs::write(&p, "this is text, not a picture").unwrap();
    let e = load(&p).unwrap_err();
    assert!(e.message.contains("is damaged or not a PNG or JPEG image"), "{e}");
    assert!(e.message.contains("export the plan again"), "says what to do: {e}");
}

#[test]
fn an_encrypted_pdf_is_a_clear_message() {
    let d = dir("encrypted");
    let p = d.join("protected.pdf");
    std::fs::write(&p, pdf_bytes(true)).unwrap();
    let e = load(&p).unwrap_err();
    assert!(e.message.contains("encrypted (password-protected)"), "{e}");
    assert!(e.message.contains("unprotected copy"), "says what to do: {e}");
    let q = d.join("broken.pdf");
    std::fs::write(&q, b"%PDF-1.4\n1 0 obj garbage").unwrap();
    let e = load(&q).unwrap_err();
    assert!(e.message.contains("damaged"), "{e}");
}

#[test]
fn a_dxf_with_a_million_entities_is_refused_quickly() {
    let d = dir("huge-dxf");
    let p = d.join("huge.dxf");
    {
        let mut f = std::io::BufWriter::new(std::fs::File::create(&p).unwrap());
        f.write_all(b"0\nSECTION\n2\nENTITIES\n").unwrap();
        for i in 0..1_000_000u32 {
            write!(f, "0\nLINE\n8\n0\n10\n{i}\n20\n0\n11\n{i}\n21\n1\n").unwrap();
        }
        f.write_all(b"0\nENDSEC\n0\nEOF\n").unwrap();
    }
    let started = std::time::Instant::now();
    let e = load(&p).unwrap_err();
    assert!(e.message.contains(&format!("more than {MAX_DXF_ENTITIES} drawing entities")), "{e}");
    assert!(e.message.contains("export only the floor plan"), "says what to do: {e}");
    // The count stops at the limit: well under the time a parse would take.
    assert!(started.elapsed().as_secs() < 20, "{:?}", started.elapsed());
    std::fs::remove_file(&p).ok();
}

#[test]
fn missing_and_unknown_files_are_clear_messages() {
    let d = dir("missing");
    let e = load(&d.join("gone.png")).unwrap_err();
    assert!(e.message.contains("not there"), "{e}");
    let e = load(&d.join("plan.tiff")).unwrap_err();
    assert!(e.message.contains("PNG, JPEG, PDF or DXF"), "{e}");
}

#[test]
fn the_report_embeds_a_picture_and_draws_a_drawing() {
    use crate::project::{Project, Underlay};
    let d = dir("report");
    write_png(&d.join("gf.png"));
    write_dxf(&d.join("gf.dxf"));
    let mut p = Project::from_ron(include_str!("../../../demo-projects/flat-six-radiators.ron")).unwrap();
    p.levels[0].underlay = Some(Underlay::new("gf.png", 0.05));
    let sol = crate::design::solve_project(
        &p,
        &crate::design::SolveOptions::default(),
        &mut crate::design::Workspace::default(),
    );
    let parts = crate::parts::parts_list(&p, &sol, &crate::parts::PartsOptions::default()).unwrap();
    // The report of `p` with its underlays read from `d`.
    let report = |p: &Project| {
        let u = crate::report::svg::PlanUnderlays::read(p, Some(&d));
        crate::report::report_html_with(
            p,
            &sol,
            &parts,
            crate::report::Studies { underlays: Some(&u), ..Default::default() },
        )
    };
    let html = report(&p);
    assert!(html.contains("<g class=\"underlay\" data-level=\"L0\""), "underlay group");
    assert!(html.contains("href=\"data:image/png;base64,iVBORw0KGgo"), "a PNG data URI");
    p.levels[0].underlay = Some(Underlay::new("gf.dxf", 0.001));
    let html = report(&p);
    assert!(html.contains("<path d=\"M"), "drawing as a path");
    // A missing file: the plan is drawn without it and says why.
    p.levels[0].underlay = Some(Underlay::new("moved-away.dxf", 0.001));
    let html = report(&p);
    assert!(html.contains("plan underlay moved-away.dxf not drawn"), "says the underlay is missing");
    assert!(html.contains("class=\"level-plan\""));
}

#[test]
fn a_project_with_a_missing_underlay_loads_and_round_trips_its_relative_path() {
    use crate::project::{Project, Underlay};
    let d = dir("round-trip");
    let mut p = Project::from_ron(include_str!("../../../demo-projects/flat-six-radiators.ron")).unwrap();
    let mut u = Underlay::new("plans/not here.pdf", 0.035);
    u.rotation_deg = 12.5;
    u.locked = true;
    p.levels[0].underlay = Some(u.clone());
    let f = d.join("job.ron");
    p.save(&f).unwrap();
    let back = Project::load(&f).unwrap();
    assert_eq!(back.levels[0].underlay.as_ref(), Some(&u));
    assert_eq!(back, p);
    // The file is missing: loading it is a message, the project is fine.
    assert!(load(&u.resolve(Some(&d))).unwrap_err().message.contains("not there"));
    // A bad number in the file names the level and the field.
    let text = std::fs::read_to_string(&f).unwrap().replace("m_per_unit: 0.035", "m_per_unit: -1.0");
    let e = Project::from_ron(&text).unwrap_err().to_string();
    assert!(e.contains("plan underlay, m_per_unit") && e.contains("underlay scale"), "{e}");
    // Files from before underlays load unchanged.
    assert!(
        Project::from_ron(include_str!("../../../demo-projects/flat-six-radiators.ron"))
            .unwrap()
            .levels
            .iter()
            .all(|l| l.underlay.is_none())
    );
}
