//! Invented plans for tests, benchmarks and demos: a floor plan picture, a
//! floor plan drawing (DXF, millimetres) and a one-page PDF written by
//! hand. None is a real building's; the sizes are whatever a caller asks.

use std::path::Path;

/// splitmix64 (Steele, Lea & Flood 2014): seeded, reproducible noise.
fn splitmix(state: &mut u64) -> u64 {
    *state = state.wrapping_add(0x9E37_79B9_7F4A_7C15);
    let mut z = *state;
    z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
    z ^ (z >> 31)
}

/// A plan picture `w × h` px: white paper, a grid of rooms `room_px` wide
/// with 4-px walls and door gaps, and grey speckle on a share `speckle` of
/// the pixels (a scan's texture; it also sets how large the PNG gets).
/// Returns the file's size in bytes.
///
/// # Errors
/// The file cannot be written.
pub fn plan_png(path: &Path, w: u32, h: u32, room_px: u32, speckle: f64, seed: u64) -> Result<u64, String> {
    let mut img = image::RgbImage::from_pixel(w, h, image::Rgb([255, 255, 255]));
    let mut s = seed;
    let limit = (speckle.clamp(0.0, 1.0) * u64::MAX as f64) as u64;
    for px in img.pixels_mut() {
        if splitmix(&mut s) < limit {
            let g = 200 + (splitmix(&mut s) % 50) as u8;
            *px = image::Rgb([g, g, g]);
        }
    }
    let room = room_px.max(20);
    let wall = |img: &mut image::RgbImage, x0: u32, y0: u32, x1: u32, y1: u32| {
        for y in y0..y1.min(h) {
            for x in x0..x1.min(w) {
                img.put_pixel(x, y, image::Rgb([30, 30, 30]));
            }
        }
    };
    let mut x = 0;
    while x < w {
        // Vertical walls with a door gap in every room.
        let mut y = 0;
        while y < h {
            wall(&mut img, x, y, x + 4, y + room * 2 / 5);
            wall(&mut img, x, y + room * 3 / 5, x + 4, y + room);
            y += room;
        }
        x += room;
    }
    let mut y = 0;
    while y < h {
        wall(&mut img, 0, y, w, y + 4);
        y += room;
    }
    wall(&mut img, 0, h.saturating_sub(4), w, h);
    wall(&mut img, w.saturating_sub(4), 0, w, h);
    img.save(path).map_err(|e| format!("{}: {e}", path.display()))?;
    std::fs::metadata(path).map(|m| m.len()).map_err(|e| e.to_string())
}

/// A floor plan drawing in millimetres (`$INSUNITS` = mm): from `origin_m`
/// over `size_m`, rooms `room_m` wide with double walls (150 mm), a door
/// swing per room, a room name, and `furniture` rectangles per room.
/// Returns the file's size in bytes.
///
/// # Errors
/// The file cannot be written.
#[allow(clippy::field_reassign_with_default)] // reason: a dxf entity has many fields; only a few are set
pub fn plan_dxf(path: &Path, origin_m: [f64; 2], size_m: [f64; 2], room_m: f64, furniture: u32) -> Result<u64, String> {
    use dxf::entities::{Arc, Entity, EntityType, Line, LwPolyline, Text};
    use dxf::{Drawing, LwPolylineVertex, Point};
    let mut d = Drawing::new();
    d.header.version = dxf::enums::AcadVersion::R2000;
    d.header.default_drawing_units = dxf::enums::Units::Millimeters;
    let mm = |m: f64| m * 1000.0;
    let line = |d: &mut Drawing, a: [f64; 2], b: [f64; 2]| {
        d.add_entity(Entity::new(EntityType::Line(Line::new(
            Point::new(mm(a[0]), mm(a[1]), 0.0),
            Point::new(mm(b[0]), mm(b[1]), 0.0),
        ))));
    };
    let rect = |d: &mut Drawing, a: [f64; 2], b: [f64; 2]| {
        let mut p = LwPolyline::default();
        for (x, y) in [(a[0], a[1]), (b[0], a[1]), (b[0], b[1]), (a[0], b[1])] {
            p.vertices.push(LwPolylineVertex { x: mm(x), y: mm(y), ..Default::default() });
        }
        p.set_is_closed(true);
        d.add_entity(Entity::new(EntityType::LwPolyline(p)));
    };
    let room = room_m.max(1.0);
    let (nx, ny) = ((size_m[0] / room).ceil().max(1.0) as u32, (size_m[1] / room).ceil().max(1.0) as u32);
    let t = 0.15;
    let mut n = 0u32;
    for j in 0..ny {
        for i in 0..nx {
            n += 1;
            let x0 = origin_m[0] + f64::from(i) * room;
            let y0 = origin_m[1] + f64::from(j) * room;
            let (x1, y1) = (x0 + room, y0 + room);
            // Double walls on the south and west side, a door gap in the west one.
            line(&mut d, [x0, y0], [x1, y0]);
            line(&mut d, [x0 + t, y0 + t], [x1, y0 + t]);
            let door = (y0 + room * 0.4, y0 + room * 0.4 + 0.9);
            line(&mut d, [x0, y0], [x0, door.0]);
            line(&mut d, [x0 + t, y0 + t], [x0 + t, door.0]);
            line(&mut d, [x0, door.1], [x0, y1]);
            line(&mut d, [x0 + t, door.1], [x0 + t, y1]);
            d.add_entity(Entity::new(EntityType::Arc(Arc::new(
                Point::new(mm(x0 + t), mm(door.0), 0.0),
                900.0,
                0.0,
                90.0,
            ))));
            let mut txt = Text::default();
            txt.location = Point::new(mm(x0 + room * 0.3), mm(y0 + room * 0.5), 0.0);
            txt.text_height = 250.0;
            txt.value = format!("Room {n}");
            d.add_entity(Entity::new(EntityType::Text(txt)));
            for k in 0..furniture {
                let f = f64::from(k) / f64::from(furniture.max(1));
                let a = [x0 + 0.5 + f * (room - 1.5), y0 + 0.4 + 0.3 * (f * 7.0).sin().abs()];
                rect(&mut d, a, [a[0] + 0.6, a[1] + 0.5]);
            }
        }
    }
    // Outer walls on the north and east side.
    let (x1, y1) = (origin_m[0] + f64::from(nx) * room, origin_m[1] + f64::from(ny) * room);
    line(&mut d, [origin_m[0], y1], [x1, y1]);
    line(&mut d, [x1, origin_m[1]], [x1, y1]);
    d.save_file(path).map_err(|e| format!("{}: {e}", path.display()))?;
    std::fs::metadata(path).map(|m| m.len()).map_err(|e| e.to_string())
}

/// A one-page PDF (400 × 300 pt) with a blue rectangle filled from
/// (100, 100) to (300, 250) pt; `encrypt` adds a standard security handler
/// dictionary (ISO 32000-1 §7.6.3) whose password is not the empty one.
#[must_use]
pub fn one_page_pdf(encrypt: bool) -> Vec<u8> {
    pdf_with_pages(&[([400, 300], b"0 0 1 rg 100 100 200 150 re f\n")], encrypt)
}

/// A two-page PDF: page 1 as [`one_page_pdf`], page 2 600 × 400 pt with a
/// red rectangle filled from (50, 50) to (150, 100) pt.
#[must_use]
pub fn two_page_pdf() -> Vec<u8> {
    pdf_with_pages(
        &[([400, 300], b"0 0 1 rg 100 100 200 150 re f\n"), ([600, 400], b"1 0 0 rg 50 50 100 50 re f\n")],
        false,
    )
}

/// A PDF of the given pages (media box size in pt, content stream), written
/// by hand with a correct xref table (ISO 32000-1 §7.5).
fn pdf_with_pages(pages: &[([u32; 2], &[u8])], encrypt: bool) -> Vec<u8> {
    // Objects: 1 catalog, 2 page tree, then per page its page and content.
    let kids: Vec<String> = (0..pages.len()).map(|i| format!("{} 0 R", 3 + 2 * i)).collect();
    let mut objs: Vec<Vec<u8>> = vec![
        b"<< /Type /Catalog /Pages 2 0 R >>".to_vec(),
        format!("<< /Type /Pages /Kids [{}] /Count {} >>", kids.join(" "), pages.len()).into_bytes(),
    ];
    for (i, ([w, h], content)) in pages.iter().enumerate() {
        objs.push(
            format!(
                "<< /Type /Page /Parent 2 0 R /MediaBox [0 0 {w} {h}] /Contents {} 0 R /Resources << >> >>",
                4 + 2 * i
            )
            .into_bytes(),
        );
        let mut stream = format!("<< /Length {} >>\nstream\n", content.len()).into_bytes();
        stream.extend_from_slice(content);
        stream.extend_from_slice(b"endstream");
        objs.push(stream);
    }
    let encrypt_obj = objs.len() + 1;
    if encrypt {
        let o = "AB".repeat(32);
        let u = "CD".repeat(32);
        objs.push(format!("<< /Filter /Standard /V 1 /R 2 /O <{o}> /U <{u}> /P -4 >>").into_bytes());
    }
    let mut out = b"%PDF-1.4\n".to_vec();
    let mut offsets = Vec::new();
    for (i, o) in objs.iter().enumerate() {
        offsets.push(out.len());
        out.extend_from_slice(format!("{} 0 obj\n", i + 1).as_bytes());
        out.extend_from_slice(o);
        out.extend_from_slice(b"\nendobj\n");
    }
    let xref = out.len();
    out.extend_from_slice(format!("xref\n0 {}\n0000000000 65535 f \n", objs.len() + 1).as_bytes());
    for off in offsets {
        out.extend_from_slice(format!("{off:010} 00000 n \n").as_bytes());
    }
    let extra =
        if encrypt { format!(" /Encrypt {encrypt_obj} 0 R /ID [<{0}> <{0}>]", "01".repeat(16)) } else { String::new() };
    out.extend_from_slice(
        format!("trailer\n<< /Size {} /Root 1 0 R{extra} >>\nstartxref\n{xref}\n%%EOF\n", objs.len() + 1).as_bytes(),
    );
    out
}

/// A floor plan drawing in millimetres from room rectangles (metres,
/// `[x0, y0, x1, y1]`): each room's inner wall face inset by half an inner
/// wall (so neighbours show a double line), its name in the middle, a door
/// swing at `door` (hinge point on the room's face, m, swinging into the
/// room from the wall's direction); the outer wall face `outer_m` outside
/// the rooms' extent. Returns the file's size in bytes.
///
/// # Errors
/// The file cannot be written.
#[allow(clippy::field_reassign_with_default)] // reason: a dxf entity has many fields; only a few are set
pub fn rooms_dxf(path: &Path, rooms: &[(&str, [f64; 4], [f64; 2])], outer_m: f64) -> Result<u64, String> {
    use dxf::entities::{Arc, Entity, EntityType, LwPolyline, Text};
    use dxf::{Drawing, LwPolylineVertex, Point};
    let mut d = Drawing::new();
    d.header.version = dxf::enums::AcadVersion::R2000;
    d.header.default_drawing_units = dxf::enums::Units::Millimeters;
    let mm = |m: f64| m * 1000.0;
    let rect = |d: &mut Drawing, r: [f64; 4]| {
        let mut p = LwPolyline::default();
        for (x, y) in [(r[0], r[1]), (r[2], r[1]), (r[2], r[3]), (r[0], r[3])] {
            p.vertices.push(LwPolylineVertex { x: mm(x), y: mm(y), ..Default::default() });
        }
        p.set_is_closed(true);
        d.add_entity(Entity::new(EntityType::LwPolyline(p)));
    };
    let half = 0.06;
    let mut ext = [f64::INFINITY, f64::INFINITY, f64::NEG_INFINITY, f64::NEG_INFINITY];
    for (name, r, door) in rooms {
        rect(&mut d, [r[0] + half, r[1] + half, r[2] - half, r[3] - half]);
        ext = [ext[0].min(r[0]), ext[1].min(r[1]), ext[2].max(r[2]), ext[3].max(r[3])];
        let mut t = Text::default();
        let h = 0.22;
        t.location = Point::new(mm(0.5 * (r[0] + r[2]) - 0.28 * h * name.len() as f64), mm(0.5 * (r[1] + r[3])), 0.0);
        t.text_height = mm(h);
        t.value = (*name).to_owned();
        d.add_entity(Entity::new(EntityType::Text(t)));
        // The swing opens into the room: a quarter circle of 0.8 m.
        let c = [door[0], door[1]];
        let start = if (c[1] - r[1]).abs() < 0.2 {
            0.0
        } else if (c[0] - r[2]).abs() < 0.2 {
            90.0
        } else if (c[1] - r[3]).abs() < 0.2 {
            180.0
        } else {
            270.0
        };
        d.add_entity(Entity::new(EntityType::Arc(Arc::new(
            Point::new(mm(c[0]), mm(c[1]), 0.0),
            800.0,
            start,
            start + 90.0,
        ))));
    }
    if ext[0].is_finite() {
        rect(&mut d, [ext[0] - outer_m, ext[1] - outer_m, ext[2] + outer_m, ext[3] + outer_m]);
    }
    d.save_file(path).map_err(|e| format!("{}: {e}", path.display()))?;
    std::fs::metadata(path).map(|m| m.len()).map_err(|e| e.to_string())
}
