//! flowrise: design two-pipe hydronic heating networks.
//!
//! The binary is a thin adapter: subcommands ([`cli`]) load a project with
//! `flowrise-core`, run the engine and print; with no subcommand it opens
//! the drawing window ([`flowrise::gui`]). `anyhow` lives only here.

mod cli;

/// The allocator of the whole program (why: the workspace Cargo.toml, beside
/// the `mimalloc` dependency).
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

fn main() -> std::process::ExitCode {
    cli::main()
}
