//! `flowrise sweep` and `flowrise part-load`: the retrofit and part-load
//! questions from the command line.

use std::path::Path;
use std::process::ExitCode;

use flowrise_core::project::{NodeId, Project};
use flowrise_core::sweep::{self, SweepResult, SweepSpec};

use super::common::{EXIT_INVALID, closed_emitters, load_or_exit, refuse_output_over_input, write_output};

/// Supply-temperature sweep.
pub fn run_sweep(file: &Path, spec: &SweepSpec, json: bool, csv: Option<&Path>) -> ExitCode {
    if let Some(out) = csv
        && let Err(code) = refuse_output_over_input(file, out, "--csv")
    {
        return code;
    }
    let p = match load_or_exit(file) {
        Ok(p) => p,
        Err(code) => return code,
    };
    let result = match sweep::sweep(&p, spec) {
        Ok(r) => r,
        Err(e) => {
            eprintln!("flowrise: sweep: {e}");
            return ExitCode::from(EXIT_INVALID);
        }
    };
    if let Some(path) = csv
        && let Err(code) = write_csv(path, sweep::sweep_csv(&result))
    {
        return code;
    }
    if json {
        match serde_json::to_string_pretty(&result) {
            Ok(t) => println!("{t}"),
            Err(e) => {
                eprintln!("flowrise: cannot write JSON: {e}");
                return ExitCode::FAILURE;
            }
        }
        return ExitCode::SUCCESS;
    }
    print_sweep_text(&p, spec, &result);
    ExitCode::SUCCESS
}

/// The sweep as text on stdout: the lowest supply temperature that covers
/// every room, the first room short below it, and the upgrades for the
/// target temperature.
fn print_sweep_text(p: &Project, spec: &SweepSpec, result: &SweepResult) {
    println!(
        "{} — supply-temperature sweep {:.0} → {:.0} °C ({})",
        p.name,
        spec.from_c,
        spec.to_c,
        if spec.frozen_presettings { "presettings frozen" } else { "re-balanced" }
    );
    match (result.lowest_supply_c, &result.limiting_emitter) {
        (Some(t), Some(e)) => println!("every room covered down to {t:.1} °C; the first room short below it: {e}"),
        (Some(t), None) => println!("every room covered over the whole range, down to {t:.1} °C"),
        (None, Some(e)) => println!("a room is short already at {:.1} °C: {e}", spec.from_c),
        (None, None) => println!("no point of the sweep could be designed"),
    }
    if result.upgrades.is_empty() {
        println!("no radiator upgrade needed at {:.1} °C", result.target_c);
    } else {
        println!(
            "upgrades to cover every room at {:.1} °C supply (θr = θs − {:.0} K):",
            result.target_c,
            sweep::UPGRADE_DELTA_K
        );
        for u in &result.upgrades {
            println!(
                "  {:<6} {:<24} {:>7.0} W nominal now → {:>7.0} W needed",
                u.id, u.name, u.current_nominal_w, u.needed_nominal_w
            );
        }
    }
    for id in &result.short_other {
        println!("  {id}: short at the target but not a radiator — check it separately");
    }
}

/// Part-load scenario: valves closed, each pump control mode.
pub fn run_part_load(
    file: &Path,
    close: &[String],
    fraction: Option<f64>,
    seed: u64,
    json: bool,
    csv: Option<&Path>,
) -> ExitCode {
    if let Some(out) = csv
        && let Err(code) = refuse_output_over_input(file, out, "--csv")
    {
        return code;
    }
    let p = match load_or_exit(file) {
        Ok(p) => p,
        Err(code) => return code,
    };
    let mut closed = match closed_emitters(close, &p, file) {
        Ok(c) => c,
        Err(code) => return code,
    };
    if let Some(f) = fraction {
        if !(0.0..=1.0).contains(&f) {
            eprintln!("flowrise: --fraction {f}: give a fraction from 0 to 1");
            return ExitCode::from(EXIT_INVALID);
        }
        closed.extend(sweep::random_closed_set(&p, f, seed));
    }
    let cases = match sweep::part_load(&p, &closed) {
        Ok(c) => c,
        Err(e) => {
            eprintln!("flowrise: part-load: {e}");
            return ExitCode::from(EXIT_INVALID);
        }
    };
    if let Some(path) = csv
        && let Err(code) = write_csv(path, sweep::part_load_csv(&cases))
    {
        return code;
    }
    if json {
        let closed_ids: Vec<String> = closed.iter().map(NodeId::to_string).collect();
        let doc = serde_json::json!({ "closed": closed_ids, "cases": cases });
        match serde_json::to_string_pretty(&doc) {
            Ok(t) => println!("{t}"),
            Err(e) => {
                eprintln!("flowrise: cannot write JSON: {e}");
                return ExitCode::FAILURE;
            }
        }
        return ExitCode::SUCCESS;
    }
    println!("{} — {} of {} emitter valves closed", p.name, closed.len(), p.emitters().len());
    for c in &cases {
        println!(
            "{:<16} pump {:>7.0} l/h at {:>5.1} kPa · largest valve Δp {:>5.1} kPa",
            c.control, c.pump_flow_l_h, c.pump_head_kpa, c.max_valve_dp_kpa
        );
        for w in &c.warnings {
            println!("    warning: {w}");
        }
    }
    ExitCode::SUCCESS
}

/// Write CSV text as an output file, or print the error and give the exit
/// code.
fn write_csv(path: &Path, text: Result<String, csv::Error>) -> Result<(), ExitCode> {
    let text = text.map_err(|e| {
        eprintln!("flowrise: CSV: {e}");
        ExitCode::FAILURE
    })?;
    write_output(path, text.as_bytes())
}
