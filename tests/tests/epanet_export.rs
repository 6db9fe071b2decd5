//! The EPANET-format export (`flowrise_core::export`): structure of the file.
//! Format: Rossman et al., EPANET 2.2 Users Manual (EPA/600/R-20/133, 2020),
//! appendix "Input file format" (sections, column order, LPS/D-W options).
//! The numerical agreement with the EPANET engine itself is checked by
//! `tests/epanet/crosscheck.py` (CI), not here.

use std::collections::{BTreeMap, BTreeSet};

use flowrise_core::design::{SolveOptions, Workspace, solve_project};
use flowrise_core::export::{ExportOptions, PumpExport, link_id, network_to_inp};
use flowrise_core::generate::{BuildingSpec, generate_building};
use flowrise_core::network::LinkLaw;

/// Section name → data lines (comments and blank lines dropped).
fn sections(text: &str) -> BTreeMap<String, Vec<Vec<String>>> {
    let mut out: BTreeMap<String, Vec<Vec<String>>> = BTreeMap::new();
    let mut current = String::new();
    for line in text.lines() {
        let data = line.split(';').next().unwrap_or("").trim();
        if data.is_empty() {
            continue;
        }
        if data.starts_with('[') {
            current = data.trim_matches(['[', ']']).to_owned();
            out.entry(current.clone()).or_default();
            continue;
        }
        out.entry(current.clone()).or_default().push(data.split_whitespace().map(str::to_owned).collect());
    }
    out
}

#[test]
fn every_link_and_node_is_written_once_with_epanet_options() {
    let spec = BuildingSpec { reverse_return: true, ..BuildingSpec::new(3, 14) };
    let p = generate_building(&spec).unwrap();
    let sol = solve_project(&p, &SolveOptions::default(), &mut Workspace::default());
    assert!(!sol.has_errors());
    let text = network_to_inp(&sol, &p.name, &ExportOptions::default()).unwrap();
    let s = sections(&text);
    for name in ["TITLE", "JUNCTIONS", "RESERVOIRS", "PIPES", "VALVES", "OPTIONS", "END"] {
        assert!(s.contains_key(name), "section {name} missing");
    }
    // Options: SI flow units and Darcy–Weisbach.
    let opts: BTreeMap<String, String> =
        s["OPTIONS"].iter().map(|l| (l[..l.len() - 1].join(" ").to_lowercase(), l[l.len() - 1].clone())).collect();
    assert_eq!(opts["units"], "LPS");
    assert_eq!(opts["headloss"], "D-W");
    assert!(opts["viscosity"].parse::<f64>().unwrap() > 0.0);

    // Node ids unique across junctions and reservoirs.
    let mut ids = BTreeSet::new();
    for l in s["JUNCTIONS"].iter().chain(&s["RESERVOIRS"]) {
        assert!(ids.insert(l[0].clone()), "node {} twice", l[0]);
    }
    // Every link of the network but the (constant-Δp) pump appears once: a
    // pipe with 8 columns or a TCV with 7.
    let mut link_ids = BTreeSet::new();
    for l in &s["PIPES"] {
        assert_eq!(l.len(), 8, "{l:?}");
        assert!(ids.contains(&l[1]) && ids.contains(&l[2]));
        assert!(l[5].parse::<f64>().unwrap() > 0.0, "roughness must be > 0: {l:?}");
        assert!(link_ids.insert(l[0].clone()));
    }
    for l in &s["VALVES"] {
        assert_eq!(l.len(), 7, "{l:?}");
        assert!(l[4] == "TCV" || l[4] == "PBV", "{l:?}");
        assert!(l[5].parse::<f64>().unwrap() >= 0.0);
        assert!(link_ids.insert(l[0].clone()));
    }
    for (k, link) in sol.network.links.iter().enumerate() {
        let written = link_ids.contains(&link_id(k));
        assert_eq!(written, !matches!(link.law, LinkLaw::Pump { .. }), "link {k}");
    }
    // Constant Δp: the pump outlet is the second reservoir.
    assert_eq!(s["RESERVOIRS"].len(), 2);
    // Buoyancy valves only on links joining two heights.
    assert!(s["VALVES"].iter().any(|l| l[4] == "PBV"), "risers carry buoyancy valves");
}

#[test]
fn matched_physics_export_has_no_buoyancy_valves_and_fixed_rise_option() {
    let p = generate_building(&BuildingSpec::new(2, 6)).unwrap();
    let opts = SolveOptions { matched_physics: true, ..SolveOptions::default() };
    let sol = solve_project(&p, &opts, &mut Workspace::default());
    let eo = ExportOptions { pump: PumpExport::FixedRise, accuracy: 1e-8, trials: 500 };
    let text = network_to_inp(&sol, &p.name, &eo).unwrap();
    let s = sections(&text);
    assert!(s["VALVES"].iter().all(|l| l[4] == "TCV"), "one density: no buoyancy");
    assert!(text.contains("Accuracy\t0.00000001") || text.contains("Accuracy\t1e-8"), "{}", &text[text.len() - 300..]);
    assert!(text.contains("Trials\t500"));
}
