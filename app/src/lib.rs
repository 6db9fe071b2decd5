//! flowrise desktop application: the drawing window (eframe/egui) on top of
//! `flowrise-core`.
//!
//! The library half of the `flowrise` package holds the GUI so the kittest
//! interaction tests (`tests/gui.rs`) and the frame benchmark
//! (`benches/frame.rs`) can drive it; the binary (`main.rs`) is the command
//! line plus [`gui::run_window`].

pub mod gui;
