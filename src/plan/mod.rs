//! Route planning on the terrain grid: exact, energy- and tilt-aware A*.
//!
//! The planner knows no rover: it asks a [`cost::StepModel`] what a step costs.

pub mod astar;
pub mod bidir;
pub mod cost;
pub mod error;
pub mod queue;
pub mod route;
pub mod sites;
pub mod smooth;
pub mod tilt;

pub use astar::{CellFlags, Connectivity, GridPath, Planner, TiltLimits, Unreachable, Workspace};
pub use cost::{Blocked, Objective, ReducedBound, Step, StepEnergy, StepModel, WheelBounds};
pub use error::PlanError;
pub use route::{plan_route, ProfileRow, Route, RoutePoint, RouteSummary};
