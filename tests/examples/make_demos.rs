//! Writes the demo projects in `demo-projects/` (invented scenarios).
//!
//! Run from the repository root: `cargo run -p flowrise-tests --example make_demos`.
//! Each file starts with a comment saying what the scenario is and which
//! findings it exists to show.

#![allow(clippy::unwrap_used)] // reason: a generator run by hand; a failure should stop it loudly

use flowrise_core::emitters::floor::FloorZone;
use flowrise_core::project::{CircuitConnection, DesignSettings, Edit, LevelId, NodeKind, Project, ReturnLayout};
use flowrise_core::pump::PumpControl;
use flowrise_tests::builder::{Builder, SMALL_PUMP};

fn write(p: &Project, file: &str, comment: &str) {
    let mut text = String::new();
    for line in comment.lines() {
        text.push_str("// ");
        text.push_str(line);
        text.push('\n');
    }
    text.push_str(&p.to_ron().unwrap());
    text.push('\n');
    let path = flowrise_tests::repo_root().join("demo-projects").join(file);
    std::fs::create_dir_all(path.parent().unwrap()).unwrap();
    std::fs::write(&path, text).unwrap();
    println!("wrote {}", path.display());
}

/// A single flat: wall-hung boiler in the kitchen, six radiators.
pub fn flat() -> Project {
    let mut b = Builder::new("Flat 3B, Alder Yard");
    let g = LevelId(0);
    let s = b.source(g, 1.0, 1.0, 18_000.0, SMALL_PUMP, PumpControl::ProportionalDp { setpoint_kpa: 20.0 });
    let hall = b.junction(g, 4.0, 1.0);
    let mid = b.junction(g, 8.0, 1.0);
    let far = b.junction(g, 12.0, 1.0);
    let kitchen = b.radiator(g, 1.0, 4.0, "Kitchen", 900.0, 20.0);
    let living = b.radiator(g, 4.0, 7.5, "Living room", 1850.0, 20.0);
    let hallr = b.radiator(g, 6.0, 0.0, "Hall", 500.0, 18.0);
    let bed1 = b.radiator(g, 8.0, 7.0, "Bedroom 1", 1100.0, 20.0);
    let bath = b.radiator(g, 12.0, 4.0, "Bathroom", 650.0, 24.0);
    let bed2 = b.radiator(g, 15.5, 1.0, "Bedroom 2", 800.0, 20.0);
    b.run(s, hall);
    b.run_via(s, kitchen, &[]);
    b.run(hall, mid);
    b.run(mid, far);
    b.run(hall, living);
    b.run_via(mid, hallr, &[(6.0, 1.0)]);
    b.run(mid, bed1);
    b.run(far, bath);
    b.run(far, bed2);
    b.p
}

/// Four storeys over a basement plant room: heat pump, riser, one header
/// per flat feeding radiators and a bathroom floor loop.
pub fn block() -> Project {
    let mut b = Builder::new("Rowan Court — four-storey block");
    let mut settings = DesignSettings {
        supply_c: 55.0,
        return_c: 45.0,
        valve_family: "trv-demo-fine".to_owned(),
        ..DesignSettings::default()
    };
    settings.series.main = "steel-en10255-medium".to_owned();
    b.p.apply(Edit::SetSettings(Box::new(settings))).unwrap();
    let basement = b.level("Basement", -3.0);
    let floors: Vec<LevelId> = ["Ground floor", "First floor", "Second floor", "Third floor"]
        .iter()
        .enumerate()
        .map(|(i, n)| if i == 0 { LevelId(0) } else { b.level(n, 3.0 * i as f64) })
        .collect();
    let hp = b.source(
        basement,
        0.0,
        2.0,
        24_000.0,
        [(0.5, 75.0), (2.5, 62.0), (5.0, 25.0)],
        PumpControl::ConstantDp { setpoint_kpa: 40.0 },
    );
    let foot = b.junction(basement, 2.0, 2.0);
    b.run(hp, foot);
    let mut below = foot;
    for (i, &lv) in floors.iter().enumerate() {
        let riser = b.junction(lv, 2.0, 2.0);
        b.run(below, riser);
        below = riser;
        let header = b.header(lv, 5.0, 2.0, &format!("Flat {} header", i + 1), 6);
        b.run(riser, header);
        let top = i == floors.len() - 1;
        let living = b.radiator(lv, 9.0, 7.0, "Living room", if top { 1700.0 } else { 1400.0 }, 20.0);
        let bed = b.radiator(lv, 12.0, 2.0, "Bedroom", if top { 1000.0 } else { 800.0 }, 20.0);
        let kitchen = b.radiator(lv, 5.0, 6.0, "Kitchen", 600.0, 20.0);
        let bath = b.floor_loop(lv, 8.0, -1.0, "Bathroom floor", 380.0, 24.0, 5.5, FloorZone::Bathroom);
        b.run_via(header, living, &[(9.0, 2.0)]);
        b.run(header, bed);
        b.run(header, kitchen);
        b.run_via(header, bath, &[(5.0, -1.0)]);
    }
    b.p
}

/// An office floor: substation heat exchanger at one end, a corridor branch
/// with reverse return to eight offices.
pub fn office() -> Project {
    let mut b = Builder::new("Office floor, Quarry Lane 7");
    let settings = DesignSettings {
        supply_c: 70.0,
        return_c: 50.0,
        return_layout: ReturnLayout::Reverse,
        valve_family: "trv-demo-fine".to_owned(),
        ..DesignSettings::default()
    };
    b.p.apply(Edit::SetSettings(Box::new(settings))).unwrap();
    let g = LevelId(0);
    let s = b.source(
        g,
        0.0,
        0.0,
        30_000.0,
        [(0.3, 80.0), (1.5, 68.0), (3.0, 35.0)],
        PumpControl::ConstantDp { setpoint_kpa: 40.0 },
    );
    let mut prev = s;
    for i in 0..8 {
        let x = 4.0 + 5.0 * f64::from(i);
        let j = b.junction(g, x, 0.0);
        b.run(prev, j);
        let office = b.radiator(g, x, 4.0, &format!("Office {}", i + 1), 1200.0 + 100.0 * f64::from(i % 3), 21.0);
        b.run(j, office);
        prev = j;
    }
    b.p
}

/// A two-storey house: heat pump at 55/45 °C, radiators upstairs, floor
/// heating downstairs behind a mixing circuit at 35/30 °C.
pub fn house() -> Project {
    let mut b = Builder::new("House, Larch Lane 12");
    let settings = DesignSettings {
        supply_c: 55.0,
        return_c: 45.0,
        valve_family: "trv-demo-fine".to_owned(),
        ..DesignSettings::default()
    };
    b.p.apply(Edit::SetSettings(Box::new(settings))).unwrap();
    let g = LevelId(0);
    let up = b.level("First floor", 2.8);
    let hp = b.source(g, 0.0, 0.0, 12_000.0, SMALL_PUMP, PumpControl::ProportionalDp { setpoint_kpa: 25.0 });
    let tee = b.junction(g, 2.0, 0.0);
    b.run(hp, tee);
    // Ground floor: the mixing circuit and its header of floor loops.
    let mix = b.circuit(g, 2.0, 3.0, "Floor heating, ground floor", CircuitConnection::MixingValve, (35.0, 30.0));
    b.run(tee, mix);
    // A mixing valve sized for the circuit's flow (about 5 kPa through it).
    if let Some(NodeKind::Circuit(mut c)) = b.p.node(mix).map(|n| n.kind.clone()) {
        c.valve_kvs_m3_h = 1.6;
        b.p.apply(Edit::SetNodeKind { id: mix, kind: NodeKind::Circuit(c) }).unwrap();
    }
    let header = b.header(g, 4.5, 3.0, "Ground-floor header", 6);
    b.run(mix, header);
    for (name, load, room, area, zone, x, y) in [
        ("Living room, window side", 700.0, 20.0, 15.0, FloorZone::Occupied, 10.0, 7.0),
        ("Living room, inner side", 560.0, 20.0, 13.0, FloorZone::Occupied, 8.0, 7.5),
        ("Kitchen", 700.0, 20.0, 16.0, FloorZone::Occupied, 9.0, 1.0),
        ("Study", 520.0, 20.0, 12.0, FloorZone::Occupied, 4.5, 7.5),
        ("Hall", 400.0, 18.0, 10.0, FloorZone::Occupied, 6.5, -0.5),
        ("Shower room", 180.0, 24.0, 5.0, FloorZone::Bathroom, 2.0, 7.0),
    ] {
        let l = b.floor_loop(g, x, y, name, load, room, area, zone);
        b.run(header, l);
    }
    // First floor: radiators off a riser next to the heat pump.
    let riser = b.junction(up, 2.0, 0.0);
    b.run(tee, riser);
    let landing = b.junction(up, 5.0, 0.0);
    b.run(riser, landing);
    let mut prev = landing;
    for (name, load, room, x, y) in [
        ("Bedroom 1", 900.0, 20.0, 5.0, 4.0),
        ("Bathroom", 650.0, 24.0, 8.0, -2.0),
        ("Bedroom 2", 800.0, 20.0, 11.0, 4.0),
        ("Bedroom 3", 700.0, 20.0, 14.0, -2.0),
    ] {
        let j = if x > 5.0 {
            let j = b.junction(up, x, 0.0);
            b.run(prev, j);
            j
        } else {
            landing
        };
        let r = b.radiator(up, x, y, name, load, room);
        b.run(j, r);
        prev = j;
    }
    b.p
}

/// The invented floor plan of the flat demo (a DXF in millimetres), drawn
/// around its rooms so the network can be shown traced over a plan.
fn flat_plan() {
    let rooms: [(&str, [f64; 4], [f64; 2]); 8] = [
        ("Kitchen", [-0.3, -0.8, 3.0, 5.5], [2.94, 3.0]),
        ("Living room", [-0.3, 5.5, 7.0, 8.3], [5.5, 5.56]),
        ("Hall", [3.0, -0.8, 9.5, 2.5], [4.0, 2.44]),
        ("Corridor", [3.0, 2.5, 10.5, 5.5], [3.06, 4.5]),
        ("Bedroom 1", [7.0, 5.5, 10.5, 8.3], [8.5, 5.56]),
        ("Bathroom", [10.5, 2.5, 14.0, 8.3], [10.56, 3.0]),
        ("Store", [9.5, -0.8, 14.0, 2.5], [11.0, 2.44]),
        ("Bedroom 2", [14.0, -0.8, 17.2, 8.3], [14.06, 4.5]),
    ];
    let path = flowrise_tests::repo_root().join("demo-projects/plans/flat-3b-plan.dxf");
    std::fs::create_dir_all(path.parent().unwrap()).unwrap();
    flowrise_core::underlay::invented::rooms_dxf(&path, &rooms, 0.3).unwrap();
    println!("wrote {}", path.display());
}

fn main() {
    flat_plan();
    write(
        &flat(),
        "flat-six-radiators.ron",
        "Demo (invented scenario): a single-storey flat with a wall-hung boiler in the\n\
         kitchen and six radiators to be sized, 70/55 °C, multilayer pipe to the rooms.\n\
         Its valves have coarse presetting steps: the lockshields trim the flows.\n\
         Expected findings: none.",
    );
    write(
        &block(),
        "apartment-block-heat-pump.ron",
        "Demo (invented scenario): a four-storey block of flats over a basement plant\n\
         room. A heat pump at 55/45 °C feeds a steel riser; each flat has a header with\n\
         three radiators (to be sized) and a bathroom floor loop; the radiator valves\n\
         have a fine (half-step) presetting.\n\
         Expected findings: none.",
    );
    write(
        &house(),
        "house-floor-heating-circuit.ron",
        "Demo (invented scenario): a two-storey house with an air-to-water heat pump at\n\
         55/45 °C. Upstairs four radiators (to be sized); downstairs floor heating behind\n\
         a three-way mixing circuit with its own pump at 35/30 °C, five loops on a header.\n\
         Expected findings: none.",
    );
    write(
        &office(),
        "office-reverse-return.ron",
        "Demo (invented scenario): an office floor fed from a district-heating\n\
         substation at 70/50 °C; one corridor branch to eight offices laid with\n\
         reverse return, so every circuit has about the same length.\n\
         Expected findings: none.",
    );
}
