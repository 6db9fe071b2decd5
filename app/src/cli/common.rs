//! What the subcommands share: loading the project, the `--close` id list,
//! guarding and writing output files, streaming to stdout.
//!
//! Every helper that can fail prints its message on stderr once and hands
//! back the [`ExitCode`]; the subcommand returns it unchanged. The
//! subcommand files import from here (and from `flowrise-core`) only.

use std::collections::BTreeSet;
use std::path::Path;
use std::process::ExitCode;

use flowrise_core::design::{Severity, Solution};
use flowrise_core::project::limits::Limit;
use flowrise_core::project::{NodeId, Project};

/// Exit code for invalid input (the message is on stderr).
pub const EXIT_INVALID: u8 = 2;

/// A value parser for a numeric argument: a finite number inside `limit`
/// (one of the ranges in `flowrise_core::project::limits`). clap prints the
/// message naming the argument and exits 2.
pub fn within(limit: &'static Limit) -> impl Fn(&str) -> Result<f64, String> + Clone + Send + Sync + 'static {
    move |text: &str| {
        let v: f64 = text
            .trim()
            .parse()
            .map_err(|_| format!("\"{text}\" is not a number — give {} {}", limit.name, limit.range_text()))?;
        limit.check(v)
    }
}

/// A value parser for a whole-number argument inside `limit`.
pub fn count_within(limit: &'static Limit) -> impl Fn(&str) -> Result<u32, String> + Clone + Send + Sync + 'static {
    move |text: &str| {
        let n: u32 = text
            .trim()
            .parse()
            .map_err(|_| format!("\"{text}\" is not a whole number — give {} {}", limit.name, limit.range_text()))?;
        limit.check(f64::from(n)).map(|_| n)
    }
}

/// A value parser for a whole-number argument from `min` to `max`
/// ("number of floors 0 — give 1 to 200").
pub fn count_from_to(
    name: &'static str,
    min: u32,
    max: u32,
) -> impl Fn(&str) -> Result<u32, String> + Clone + Send + Sync + 'static {
    move |text: &str| match text.trim().parse::<u64>() {
        Ok(n) if (u64::from(min)..=u64::from(max)).contains(&n) => u32::try_from(n).map_err(|e| e.to_string()),
        Ok(n) => Err(format!("{name} {n} — give {min} to {max}")),
        Err(_) => Err(format!("\"{text}\" is not a whole number — give {name} {min} to {max}")),
    }
}

/// Parse an emitter id: `N12` or `12`.
pub fn parse_node_id(text: &str) -> Result<NodeId, String> {
    let t = text.trim();
    let digits = t.strip_prefix('N').or_else(|| t.strip_prefix('n')).unwrap_or(t);
    digits.parse::<u32>().map(NodeId).map_err(|_| format!("\"{t}\" is not a node id — give ids like N12 or 12"))
}

/// Load a project or print the error and return the exit code.
pub fn load_or_exit(file: &Path) -> Result<Project, ExitCode> {
    Project::load(file).map_err(|e| {
        eprintln!("flowrise: {e}");
        ExitCode::from(EXIT_INVALID)
    })
}

/// The emitters named by `--close` (ids like `N12` or `12`), each checked
/// against `project` (loaded from `file`); or print why one is refused and
/// return the exit code.
pub fn closed_emitters(ids: &[String], project: &Project, file: &Path) -> Result<BTreeSet<NodeId>, ExitCode> {
    let mut closed = BTreeSet::new();
    for c in ids {
        match parse_node_id(c) {
            Ok(id) if project.emitters().contains(&id) => {
                closed.insert(id);
            }
            Ok(id) => {
                eprintln!("flowrise: --close {id}: no emitter with this id in {}", file.display());
                return Err(ExitCode::from(EXIT_INVALID));
            }
            Err(e) => {
                eprintln!("flowrise: --close: {e}");
                return Err(ExitCode::from(EXIT_INVALID));
            }
        }
    }
    Ok(closed)
}

/// Print the error findings of a solution, one line each.
pub fn print_error_findings(sol: &Solution) {
    for f in sol.findings.iter().filter(|f| f.severity == Severity::Error) {
        eprintln!("flowrise: {}", flowrise_core::output::finding_line(f));
    }
}

/// Refuse an output option that names the input file (after links): it
/// would destroy the project. Prints the message and gives the exit code.
pub fn refuse_output_over_input(input: &Path, output: &Path, option: &str) -> Result<(), ExitCode> {
    if flowrise_core::project::file::same_file(input, output) {
        eprintln!(
            "flowrise: {option} {} is the project file itself — writing there would destroy the project; \
             give another output file",
            output.display()
        );
        return Err(ExitCode::from(EXIT_INVALID));
    }
    Ok(())
}

/// Write an output file atomically (a crash leaves the old file or the new
/// one), or print the error and return the exit code.
pub fn write_output(path: &Path, bytes: &[u8]) -> Result<(), ExitCode> {
    flowrise_core::project::file::write_atomic(path, bytes).map_err(|e| {
        eprintln!("flowrise: cannot write {e}");
        ExitCode::from(EXIT_INVALID)
    })
}

/// Stream text made by `write` to standard output; a failed write (a
/// closed pipe, a full disk) is printed and gives exit code 1.
pub fn print_text(
    what: &str,
    write: impl FnOnce(&mut IoLines<std::io::BufWriter<std::io::StdoutLock<'_>>>) -> std::fmt::Result,
) -> Result<(), ExitCode> {
    let mut out = IoLines { out: std::io::BufWriter::new(std::io::stdout().lock()), error: None };
    let written = write(&mut out);
    let flushed = std::io::Write::flush(&mut out.out);
    if let Some(e) = out.error.or(flushed.err()).or_else(|| written.err().map(|_| std::io::Error::other("format"))) {
        eprintln!("flowrise: cannot write the {what}: {e}");
        return Err(ExitCode::FAILURE);
    }
    Ok(())
}

/// A [`std::fmt::Write`] sink writing to a byte stream, keeping the first
/// I/O error (which `fmt::Error` cannot carry).
pub struct IoLines<W: std::io::Write> {
    /// The stream.
    pub out: W,
    /// The first I/O error, if any.
    pub error: Option<std::io::Error>,
}

impl<W: std::io::Write> std::fmt::Write for IoLines<W> {
    fn write_str(&mut self, s: &str) -> std::fmt::Result {
        self.out.write_all(s.as_bytes()).map_err(|e| {
            self.error.get_or_insert(e);
            std::fmt::Error
        })
    }
}

#[cfg(test)]
mod tests {
    use flowrise_core::design::{SolveOptions, Workspace, solve_project};
    use flowrise_core::output::write_solve_text;

    use super::*;

    #[test]
    fn node_ids_parse_with_or_without_prefix() {
        assert_eq!(parse_node_id("N12"), Ok(NodeId(12)));
        assert_eq!(parse_node_id(" 7 "), Ok(NodeId(7)));
        assert!(parse_node_id("x").is_err());
    }

    /// A stream that takes `room` bytes, then fails like a full disk.
    struct Full {
        room: usize,
    }

    impl std::io::Write for Full {
        fn write(&mut self, buf: &[u8]) -> std::io::Result<usize> {
            if self.room == 0 {
                return Err(std::io::Error::new(std::io::ErrorKind::StorageFull, "disk full"));
            }
            let n = buf.len().min(self.room);
            self.room -= n;
            Ok(n)
        }
        fn flush(&mut self) -> std::io::Result<()> {
            Ok(())
        }
    }

    #[test]
    fn the_streamed_summary_stops_at_a_write_error_and_keeps_it() {
        let project = flowrise_core::generate::generate_building(&flowrise_core::generate::BuildingSpec::new(1, 3))
            .expect("generated");
        let sol = solve_project(&project, &SolveOptions::default(), &mut Workspace::default());
        let mut whole = String::new();
        write_solve_text(&mut whole, &project, &sol).expect("a String takes everything");
        assert_eq!(whole, flowrise_core::output::solve_text(&project, &sol));

        let mut sink = IoLines { out: Full { room: 100 }, error: None };
        assert!(write_solve_text(&mut sink, &project, &sol).is_err());
        let kept = sink.error.expect("the I/O error is kept");
        assert_eq!(kept.kind(), std::io::ErrorKind::StorageFull);
    }
}
