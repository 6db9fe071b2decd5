//! flowrise-core: the engine behind flowrise.
//!
//! Layers, bottom up (see DEVELOPERS.md for the map):
//! - physics: [`water`], [`pipes`], [`friction`], [`fittings`], [`valves`],
//!   [`emitters`], [`pump`], [`vessel`] — each checked against named sources;
//! - network: project model, derivation of the closed-loop hydraulic
//!   network, the Newton network solver, the design and operating passes.
//!
//! Nothing here depends on a GUI; everything the app shows can be computed
//! from a project file.

pub mod commissioning;
pub mod controllers;
pub mod csv_cell;
pub mod design;
pub mod emitters;
pub mod error;
pub mod export;
pub mod fittings;
pub mod friction;
pub mod generate;
pub mod network;
pub mod output;
pub mod parts;
pub mod pipes;
pub mod project;
pub mod pump;
pub mod report;
pub mod sweep;
pub mod underlay;
pub mod valves;
pub mod vessel;
pub mod water;

pub use error::{PhysicsError, PhysicsResult};
