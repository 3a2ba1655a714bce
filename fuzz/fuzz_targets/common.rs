//! What every raster target does with a grid the reader accepted: the work
//! `sunward terrain info` and `sunward route` do next (statistics, slope, cell size, a
//! corner-to-corner route on small grids), none of which may panic on strange values or
//! georeferences.

use sunward::plan::{
    plan_route, CellFlags, Connectivity, Objective, Planner, RoutePoint, TiltLimits,
};
use sunward::terrain::{slope, Dem};
use sunward::vehicle::plan_model::RoverStepModel;
use sunward::vehicle::Rover;

/// Routes are planned only on grids up to this many cells, to keep each run fast.
const PLAN_CELLS: usize = 4096;

pub fn exercise(dem: &Dem, max_cells: u64) {
    assert_eq!(dem.data().len(), dem.width() * dem.height());
    assert!(dem.len() as u64 <= max_cells);
    // What read_dem refuses after any reader; the rest sees only grids it accepts.
    if sunward::terrain::io::check_grid(std::path::Path::new("fuzz"), dem).is_err() {
        return;
    }
    let _ = dem.stats();
    let _ = dem.cell_size().mean_m();
    let _ = slope::slope_map(dem).stats();
    if dem.len() > PLAN_CELLS {
        return;
    }
    let flags = CellFlags::from_dem(dem);
    let rover = Rover::default();
    let model = RoverStepModel::new(&rover);
    let planner = Planner {
        dem,
        flags: &flags,
        model: &model,
        limits: TiltLimits::default(),
        connectivity: Connectivity::Sixteen,
        objective: Objective::ENERGY,
    };
    let valid: Vec<usize> = (0..dem.len())
        .filter(|&i| !dem.data()[i].is_nan())
        .collect();
    let point = |label: &str, i: usize| {
        let (x, y) = dem.georef.cell_centre(i % dem.width(), i / dem.width());
        RoutePoint {
            label: label.into(),
            x,
            y,
        }
    };
    let (a, b) = (valid[0], valid[valid.len() - 1]);
    let _ = plan_route(&planner, &[point("start", a), point("goal", b)]);
}
