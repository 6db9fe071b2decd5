//! Shared helpers for the cross-crate acceptance tests in `tests/tests/`.
//!
//! Reference fixtures (values produced by outside libraries) live in
//! `tests/reference/fixtures/`; the script that regenerates them is
//! `tests/reference/generate.py`.

use std::path::PathBuf;

/// Path of a file under `tests/reference/fixtures/`.
#[must_use]
pub fn fixture_path(name: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("reference").join("fixtures").join(name)
}

/// Path of the repository root.
#[must_use]
pub fn repo_root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).parent().map_or_else(|| PathBuf::from("."), std::path::Path::to_path_buf)
}

/// The demo projects in `demo-projects/`, sorted (an empty list when the
/// folder cannot be read; the callers assert how many they expect).
#[must_use]
pub fn demo_paths() -> Vec<PathBuf> {
    let mut v: Vec<PathBuf> = std::fs::read_dir(repo_root().join("demo-projects"))
        .map(|dir| dir.filter_map(Result::ok).map(|e| e.path()).collect())
        .unwrap_or_default();
    v.retain(|p| p.extension().is_some_and(|e| e == "ron"));
    v.sort();
    v
}

pub mod builder;
