//! Fixtures shared by several test files (each test binary compiles this module, and
//! uses only part of it).
#![allow(dead_code)]

use sunward::plan::{
    plan_route, CellFlags, Connectivity, Objective, Planner, Route, RoutePoint, TiltLimits,
};
use sunward::terrain::{GeoRef, Grid};
use sunward::vehicle::Rover;

/// A rover standing still: start = goal on a flat 5 x 5 grid of 2 m cells.
pub fn parked_route(rover: &Rover) -> Route {
    let dem = Grid::from_vec(5, 5, vec![100.0; 25], GeoRef::local(2.0));
    let flags = CellFlags::from_dem(&dem);
    let model = sunward::vehicle::plan_model::RoverStepModel::new(rover);
    let p = Planner {
        dem: &dem,
        flags: &flags,
        model: &model,
        limits: TiltLimits::default(),
        connectivity: Connectivity::Eight,
        objective: Objective::ENERGY,
    };
    let pt = |label: &str| RoutePoint {
        label: label.into(),
        x: 5.0,
        y: -5.0,
    };
    plan_route(&p, &[pt("start"), pt("goal")]).unwrap()
}
