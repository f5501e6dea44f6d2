//! # finwake
//!
//! A 2D unsteady panel method with a free vortex-particle wake for one to eight rigid foils that
//! heave and pitch in a uniform stream, side by side or in tandem.
//!
//! * [`Case`]: the validated input (the case file).
//! * [`Simulation`]: steps the flow; [`Simulation::summary`] gives cycle statistics.
//! * [`conventions`]: units, frames and signs, written once.
//!
//! ```
//! let text = include_str!("../../cases/single-efficient.json");
//! let mut case = finwake::Case::from_json(text).unwrap();
//! case.numerics.cycles = 2;
//! case.numerics.steps_per_cycle = 40;
//! let mut sim = finwake::Simulation::new(&case).unwrap();
//! let summary = sim.run_to_end();
//! assert!(summary.foils[0].thrust.is_finite());
//! ```
//!
//! Non-goals: 3D flow, viscosity, stall, flexible foils, the free surface. Results are inviscid
//! 2D screening estimates.

#![forbid(unsafe_code)]
#![deny(missing_docs)]

pub mod case;
pub mod conventions;
pub mod detmath;
pub mod error;
pub mod export;
pub mod fast;
pub mod geometry;
pub mod kernels;
pub mod kinematics;
pub mod link;
pub mod rig;
pub mod sim;
pub mod summary;
pub mod sweep;
pub mod validate;
#[cfg(feature = "wasm")]
pub mod wasm;
pub mod water;

pub use case::{Case, Flow, Foil, Numerics};
pub use error::CaseError;
pub use sim::{FoilLoads, Simulation};
pub use summary::{FoilSummary, Summary, TotalSummary};
pub use water::{Water, WaterProperties};
