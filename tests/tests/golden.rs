//! Golden outputs: `flowrise solve --json` (timings removed), the parts
//! list CSV and the design report of the three demo projects and of
//! generated buildings (direct return, reverse return, headers), compared
//! with the files in `tests/golden/`.
//!
//! They pin what a user gets, so a change that should not change results
//! (a refactor, a speed-up) proves it here. A change that is meant to
//! change results regenerates them on purpose and says so in its commit:
//!
//! ```sh
//! FLOWRISE_UPDATE_GOLDEN=1 cargo test -p flowrise-tests --test golden
//! ```
//!
//! Numbers are compared as printed; a last printed digit one step apart
//! is accepted (a different CPU may round a value lying on the boundary
//! differently), every other character must be equal.

#![allow(clippy::unwrap_used, clippy::expect_used, clippy::panic)] // reason: test code

use std::path::PathBuf;

use flowrise_core::design::{SolveOptions, Workspace, solve_project};
use flowrise_core::generate::{BuildingSpec, generate_building};
use flowrise_core::output::SolveJson;
use flowrise_core::parts::{PartsOptions, parts_csv, parts_list};
use flowrise_core::project::Project;

fn golden_dir() -> PathBuf {
    flowrise_tests::repo_root().join("tests").join("golden")
}

/// The projects under test, by name.
fn cases() -> Vec<(String, Project)> {
    let mut v: Vec<(String, Project)> = flowrise_tests::demo_paths()
        .into_iter()
        .map(|p| (p.file_stem().unwrap().to_string_lossy().into_owned(), Project::load(&p).unwrap()))
        .collect();
    assert_eq!(v.len(), 4, "four demo projects");
    for (name, spec) in [
        ("generated-direct", BuildingSpec::new(2, 8)),
        ("generated-reverse", BuildingSpec { reverse_return: true, ..BuildingSpec::new(2, 8) }),
        ("generated-headers", BuildingSpec { headers: true, ..BuildingSpec::new(2, 8) }),
    ] {
        v.push((name.to_owned(), generate_building(&spec).unwrap()));
    }
    v
}

/// Drop every timing (`*_ms`) from a JSON document.
fn strip_timings(v: &mut serde_json::Value) {
    match v {
        serde_json::Value::Object(map) => {
            map.retain(|k, _| !k.ends_with("_ms"));
            map.values_mut().for_each(strip_timings);
        }
        serde_json::Value::Array(items) => items.iter_mut().for_each(strip_timings),
        _ => {}
    }
}

/// The three outputs of a project: (file suffix, text).
fn outputs(p: &Project) -> Vec<(&'static str, String)> {
    let sol = solve_project(p, &SolveOptions::default(), &mut Workspace::default());
    let mut json = serde_json::to_value(SolveJson { project: p, solution: &sol }).unwrap();
    strip_timings(&mut json);
    let parts = parts_list(p, &sol, &PartsOptions::default()).unwrap();
    vec![
        ("solve.json", serde_json::to_string_pretty(&json).unwrap() + "\n"),
        ("parts.csv", parts_csv(&parts).unwrap()),
        ("report.html", flowrise_core::report::report_html(p, &sol, &parts)),
    ]
}

/// Split text into runs of number characters and runs of the rest.
fn tokens(s: &str) -> Vec<(bool, &str)> {
    let mut out = Vec::new();
    let mut start = 0;
    let mut numeric = None;
    for (i, c) in s.char_indices() {
        let n = c.is_ascii_digit() || c == '.';
        if numeric != Some(n) {
            if let Some(was) = numeric {
                out.push((was, &s[start..i]));
            }
            start = i;
            numeric = Some(n);
        }
    }
    if let Some(was) = numeric {
        out.push((was, &s[start..]));
    }
    out
}

/// Equal, or equal but for numbers one step apart in their last printed digit.
fn same_as_printed(a: &str, b: &str) -> Result<(), String> {
    if a == b {
        return Ok(());
    }
    let (ta, tb) = (tokens(a), tokens(b));
    if ta.len() != tb.len() {
        return Err(format!("{} vs {} tokens", ta.len(), tb.len()));
    }
    for ((na, x), (_, y)) in ta.iter().zip(&tb) {
        if x == y {
            continue;
        }
        let decimals = x.split_once('.').map_or(0, |(_, d)| d.len());
        let step = 10f64.powi(-i32::try_from(decimals).unwrap_or(0));
        let close = *na
            && decimals == y.split_once('.').map_or(0, |(_, d)| d.len())
            && matches!((x.parse::<f64>(), y.parse::<f64>()), (Ok(u), Ok(v)) if (u - v).abs() <= 1.01 * step);
        if !close {
            return Err(format!("{x:?} vs {y:?}"));
        }
    }
    Ok(())
}

#[test]
fn outputs_match_the_golden_files() {
    let update = std::env::var_os("FLOWRISE_UPDATE_GOLDEN").is_some();
    let dir = golden_dir();
    if update {
        std::fs::create_dir_all(&dir).unwrap();
    }
    let mut failures = Vec::new();
    for (name, p) in cases() {
        for (suffix, text) in outputs(&p) {
            let path = dir.join(format!("{name}.{suffix}"));
            if update {
                std::fs::write(&path, &text).unwrap();
                continue;
            }
            let Ok(want) = std::fs::read_to_string(&path) else {
                failures.push(format!("{}: missing (run with FLOWRISE_UPDATE_GOLDEN=1)", path.display()));
                continue;
            };
            if let Err(why) = same_as_printed(&text, &want) {
                failures.push(format!("{}: {why}", path.display()));
            }
        }
    }
    assert!(failures.is_empty(), "outputs differ from the golden files:\n{}", failures.join("\n"));
}

#[test]
fn the_comparison_accepts_only_a_last_digit_step() {
    assert!(same_as_printed("a 1.25 b", "a 1.25 b").is_ok());
    assert!(same_as_printed("a 1.25 b", "a 1.26 b").is_ok());
    assert!(same_as_printed("a 1.25 b", "a 1.27 b").is_err());
    assert!(same_as_printed("a 1.25 b", "a 1.250 b").is_err());
    assert!(same_as_printed("a 1.25 b", "x 1.25 b").is_err());
}
