//! Command-line interface.

use std::collections::BTreeSet;
use std::path::PathBuf;
use std::process::ExitCode;

use clap::{Parser, Subcommand};
use flowrise_core::design::{SolveOptions, Workspace, solve_project};
use flowrise_core::output::{solve_json, solve_text};
use flowrise_core::project::{Mode, NodeId, Project};

/// Exit code for invalid input (the message is on stderr).
const EXIT_INVALID: u8 = 2;

#[derive(Debug, Parser)]
#[command(name = "flowrise", version, about = "Design two-pipe hydronic heating networks", args_conflicts_with_subcommands = true)]
struct Cli {
    #[command(subcommand)]
    command: Option<Command>,
    /// Project file to open.
    file: Option<PathBuf>,
}

#[derive(Debug, Subcommand)]
enum Command {
    /// Design and solve a project; print a summary or JSON.
    Solve {
        /// Project file (.ron).
        file: PathBuf,
        /// Print the stable JSON document (docs/solve-json.md) instead of text.
        #[arg(long)]
        json: bool,
        /// Freeze sizes and presettings as stored in the project (installed mode).
        #[arg(long)]
        installed: bool,
        /// Close these emitters' valves (ids, comma-separated: N12,N15 or 12,15).
        #[arg(long, value_delimiter = ',')]
        close: Vec<String>,
    },
}

/// Parse an emitter id: `N12` or `12`.
fn parse_node_id(text: &str) -> Result<NodeId, String> {
    let t = text.trim();
    let digits = t.strip_prefix('N').or_else(|| t.strip_prefix('n')).unwrap_or(t);
    digits.parse::<u32>().map(NodeId).map_err(|_| format!("\"{t}\" is not an emitter id — give ids like N12 or 12"))
}

pub fn main() -> ExitCode {
    let cli = Cli::parse();
    match cli.command {
        Some(Command::Solve { file, json, installed, close }) => solve(&file, json, installed, &close),
        None => {
            if let Some(file) = cli.file {
                eprintln!("flowrise: the drawing window is not built yet; for headless work use `flowrise solve {}`", file.display());
            } else {
                println!("flowrise {} — design two-pipe hydronic heating networks", env!("CARGO_PKG_VERSION"));
                println!("usage: flowrise solve FILE [--json] [--installed] [--close ID,ID…]   (see --help)");
            }
            ExitCode::SUCCESS
        }
    }
}

fn solve(file: &std::path::Path, json: bool, installed: bool, close: &[String]) -> ExitCode {
    let mut project = match Project::load(file) {
        Ok(p) => p,
        Err(e) => {
            eprintln!("flowrise: {e}");
            return ExitCode::from(EXIT_INVALID);
        }
    };
    if installed {
        project.settings.mode = Mode::Installed;
    }
    let mut closed = BTreeSet::new();
    for c in close {
        match parse_node_id(c) {
            Ok(id) if project.emitters().contains(&id) => {
                closed.insert(id);
            }
            Ok(id) => {
                eprintln!("flowrise: --close {id}: no emitter with this id in {}", file.display());
                return ExitCode::from(EXIT_INVALID);
            }
            Err(e) => {
                eprintln!("flowrise: --close: {e}");
                return ExitCode::from(EXIT_INVALID);
            }
        }
    }
    let opts = SolveOptions { closed_emitters: closed, ..SolveOptions::default() };
    let sol = solve_project(&project, &opts, &mut Workspace::default());
    if json {
        match serde_json::to_string_pretty(&solve_json(&project, &sol)) {
            Ok(text) => println!("{text}"),
            Err(e) => {
                eprintln!("flowrise: cannot write JSON: {e}");
                return ExitCode::FAILURE;
            }
        }
    } else {
        print!("{}", solve_text(&project, &sol));
    }
    if sol.has_errors() {
        for f in sol.findings.iter().filter(|f| f.severity == flowrise_core::design::Severity::Error) {
            eprintln!("flowrise: {}: {}", f.item, f.message);
        }
        return ExitCode::from(EXIT_INVALID);
    }
    ExitCode::SUCCESS
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn node_ids_parse_with_or_without_prefix() {
        assert_eq!(parse_node_id("N12"), Ok(NodeId(12)));
        assert_eq!(parse_node_id(" 7 "), Ok(NodeId(7)));
        assert!(parse_node_id("x").is_err());
    }
}
