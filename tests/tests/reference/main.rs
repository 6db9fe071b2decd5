//! Reference checks: flowrise's engineering against published standards,
//! handbook values, worked examples and outside libraries. Each check names
//! its source beside it. Fixtures from Python libraries are produced by
//! `tests/reference/generate.py` and stored in `tests/reference/fixtures/`.

#![allow(clippy::unwrap_used, clippy::expect_used, clippy::panic)] // reason: test code

mod emitters;
mod friction;
mod valves_pump_vessel;
mod water;
