//! `sunward check`: validate a mission file without running it, listing every problem
//! as `FILE:LINE:COLUMN: key: problem. Fix: ...`, or a one-paragraph summary when all
//! is well. Exit code 2 when anything is wrong.

use std::path::{Path, PathBuf};

use clap::Args;

use sunward::mission::resolve::{
    keep_out_off_grid, points_in_keep_out, points_off_dem, DrivingHours, Mission, Sky,
};
use sunward::mission::{check, prepare, Problem};
use sunward::units::rad_to_deg;
use sunward::Error;

use crate::say;

#[derive(Debug, Args)]
pub struct CheckArgs {
    /// The mission file (TOML).
    mission: PathBuf,
}

pub fn run(a: CheckArgs) -> Result<(), Error> {
    let text = std::fs::read_to_string(&a.mission).map_err(|source| Error::Input {
        path: a.mission.clone(),
        source,
    })?;
    let base = a.mission.parent().unwrap_or(Path::new("")).to_path_buf();
    let exists = |p: &Path| p.is_file();
    let file = a.mission.display().to_string();
    let fail = |problems: Vec<Problem>| Error::Mission {
        file: a.mission.clone(),
        problems: problems.iter().map(|p| p.render(&file)).collect(),
    };
    let mission = check(&text, &base, &exists).map_err(fail)?;
    super::check_series_memory(&a.mission, &mission)?;
    let dem = mission
        .terrain
        .read_dem()
        .map_err(|e| e.in_mission(&a.mission))?;
    let mut off = points_off_dem(&mission.route, &dem);
    if let Some(mask_path) = &mission.terrain.keep_out_path {
        let mask = mission
            .terrain
            .read_keep_out(mask_path)
            .map_err(|e| e.in_mission(&a.mission))?;
        let off_grid = keep_out_off_grid(&mission.terrain, &dem, &mask);
        if off_grid.is_none() {
            off.extend(points_in_keep_out(&mission.route, &dem, &mask));
        }
        off.extend(off_grid);
    }
    if !off.is_empty() {
        return Err(fail(off));
    }
    // A weather file is parsed, and must cover every season's run.
    let models = super::run::load_models(&mission)?;
    prepare::check_weather_span(&mission, &models, &mission.seasons)?;
    say!(
        "{}",
        summary(&a.mission, &mission, dem.width(), dem.height())
    );
    Ok(())
}

fn summary(path: &Path, m: &Mission, w: usize, h: usize) -> String {
    let seasons: Vec<String> = m
        .seasons
        .iter()
        .map(|s| format!("{} ({})", s.name, s.date))
        .collect();
    let driving = match m.policy.driving {
        DrivingHours::Daylight => "in daylight".to_string(),
        DrivingHours::Window { start_h, end_h } => format!("from {start_h} h to {end_h} h local"),
        DrivingHours::AnyTime => "at any time".to_string(),
    };
    let sky = match &m.weather.sky {
        Sky::ClearSky(_) => "clear sky",
        Sky::Clearness { .. } => "clear sky scaled by monthly clearness",
        Sky::Csv { .. } => "a weather file",
    };
    let b = &m.battery;
    let capacity = match b.size_words() {
        Some(w) if b.capacity_wh.is_none() && b.cells_series.is_none() => {
            format!("the default {w}")
        }
        Some(w) => w,
        None => "of an incomplete size".to_string(),
    };
    format!(
        "{}: OK. Site \"{}\" at {:.3}°, {:.3}° (UTC{}), terrain {} ({w} x {h} cells); route \
         from ({}, {}) to ({}, {}) through {} waypoint(s) and {} site(s); rover {} kg with \
         {} kg payload; {} m² of panels; battery {capacity} {}; {} load(s); {sky}; \
         driving {driving}, deadline {} days; {} season(s): {}; step {} s.",
        path.display(),
        m.site.name,
        rad_to_deg(m.site.latitude_rad),
        rad_to_deg(m.site.longitude_rad),
        m.site.utc_offset,
        m.terrain.dem_path.display(),
        m.route.start.point.x,
        m.route.start.point.y,
        m.route.goal.point.x,
        m.route.goal.point.y,
        m.route.waypoints.len(),
        m.route.sites.len(),
        m.rover.mass_kg,
        m.rover.payload_kg,
        m.panels.panel.area_m2,
        m.battery.chemistry.preset().name,
        m.loads.specs().len(),
        m.policy.deadline_s / 86_400.0,
        m.seasons.len(),
        seasons.join(", "),
        m.step_s,
    )
}
