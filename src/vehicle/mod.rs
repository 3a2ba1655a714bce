//! Lumped vehicle model: what a step costs and how the body sits on the ground.
//!
//! Pure functions over a checked [`Rover`] description; no I/O. In pipeline order:
//!
//! - [`rover`]: the description (keys with units, defaults, ranges), parsed from TOML
//!   with errors naming the key, line and column.
//! - [`traction`]: grade and rolling resistance; soft soil by Bekker (sinkage,
//!   compaction resistance) and Mohr–Coulomb / Janosi–Hanamoto (thrust, slip); the
//!   table of named soils with their sources.
//! - [`powertrain`]: battery-to-wheel efficiency (constant or a speed × torque table),
//!   regenerative braking, the speed law on slopes.
//! - [`attitude`]: body pitch and roll from the terrain under the wheels (least-squares
//!   plane through the contact points); the body's up axis for body-mounted panels.
//! - [`stability`]: static tip-over angles and the margin at an attitude.
//! - [`step`]: the step cost the planner and the simulation call: work, electrical
//!   energy with regeneration, time, attitude, and passability with the reason.
//! - [`error`]: the stage's typed errors.
//!
//! - [`plan_model`]: the rover as the planner's `StepModel` (step cost plus the bounds
//!   that keep A* exact).

pub mod attitude;
pub mod error;
pub mod plan_model;
pub mod powertrain;
pub mod rover;
pub mod stability;
pub mod step;
pub mod traction;

pub use attitude::{body_pose, Attitude, BodyPose, WheelLayout};
pub use error::{Problem, TextPos, VehicleError};
pub use rover::{Rover, RoverFile};
pub use step::{Blocked, StepCost};
pub use traction::{named_soil, NamedSoil, Soil, SOILS};
