//! flowrise: design two-pipe hydronic heating networks.
//!
//! The binary is a thin adapter: every command loads a project with
//! `flowrise-core`, runs the engine and prints. `anyhow` lives only here.

mod cli;

fn main() -> std::process::ExitCode {
    cli::main()
}
