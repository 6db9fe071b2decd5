//! `flowrise sweep` and `flowrise part-load`: the retrofit and part-load
//! questions from the command line.

use std::fmt::Write as _;
use std::path::Path;
use std::process::ExitCode;

use flowrise_core::project::NodeId;
use flowrise_core::sweep::{self, SweepSpec};

use super::common::{EXIT_INVALID, closed_emitters, load_or_exit, print_text, refuse_output_over_input, write_output};

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
            Ok(t) => {
                if let Err(code) = print_text("sweep JSON", |out| writeln!(out, "{t}")) {
                    return code;
                }
            }
            Err(e) => {
                eprintln!("flowrise: cannot write JSON: {e}");
                return ExitCode::FAILURE;
            }
        }
        return ExitCode::SUCCESS;
    }
    match print_text("sweep", |out| flowrise_core::output::write_sweep_text(out, &p, spec, &result)) {
        Ok(()) => ExitCode::SUCCESS,
        Err(code) => code,
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
            Ok(t) => {
                if let Err(code) = print_text("part-load JSON", |out| writeln!(out, "{t}")) {
                    return code;
                }
            }
            Err(e) => {
                eprintln!("flowrise: cannot write JSON: {e}");
                return ExitCode::FAILURE;
            }
        }
        return ExitCode::SUCCESS;
    }
    match print_text("part-load summary", |out| {
        flowrise_core::output::write_part_load_text(out, &p, closed.len(), &cases)
    }) {
        Ok(()) => ExitCode::SUCCESS,
        Err(code) => code,
    }
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
