//! `sunward demo`: the bundled scenario end to end.
//!
//! Until the mission runner exists, the demo runs what is built on the bundled Vardholm
//! plateau terrain (a synthetic grid, see terrains/README.md): statistics, slope,
//! roughness, hillshade, horizon maps and sky-view factor, then the energy-optimal route
//! of the default rover from the base camp past the cairn to the survey site, with its
//! profile and a map.

use std::io::Cursor;
use std::path::{Path, PathBuf};

use clap::Args;

use sunward::plan::{
    plan_route, CellFlags, Connectivity, Objective, Planner, RoutePoint, TiltLimits,
};
use sunward::report::atomic::write_atomic;
use sunward::report::map::route_map_rgb;
use sunward::terrain::io::{geotiff, png};
use sunward::terrain::{hillshade, horizon, roughness, slope, Dem};
use sunward::vehicle::plan_model::RoverStepModel;
use sunward::vehicle::Rover;
use sunward::Error;

use super::progress::Bar;
use super::route::{profile_csv, route_geojson, summary_json};
use super::terrain::{info_of, write_hillshade, write_tif};

/// The demo route on the Vardholm plateau (map metres): base camp, cairn, survey site.
const DEMO_POINTS: [(&str, f64, f64); 3] = [
    ("base camp", 220.0, 260.0),
    ("cairn", 980.0, 1240.0),
    ("survey site", 1820.0, 1760.0),
];

/// The bundled demo terrain, compiled into the binary so the demo runs from anywhere.
const DEMO_TERRAIN: &[u8] = include_bytes!("../../terrains/vardholm_plateau.tif");
const DEMO_NAME: &str = "terrains/vardholm_plateau.tif";

#[derive(Debug, Args)]
pub struct DemoArgs {
    /// Folder for the outputs (created if missing).
    #[arg(long, value_name = "DIR", default_value = "sunward-out/demo")]
    out: PathBuf,
}

pub fn run(a: DemoArgs) -> Result<(), Error> {
    std::fs::create_dir_all(&a.out).map_err(|source| Error::Output {
        path: a.out.clone(),
        source,
    })?;
    let out = |name: &str| a.out.join(name);
    super::check_output(&out("info.json"), &[])?;
    let dem = geotiff::read_from(Cursor::new(DEMO_TERRAIN), Path::new(DEMO_NAME), u64::MAX)?;
    eprintln!("demo terrain: {DEMO_NAME} (Vardholm plateau, synthetic)");
    let info = info_of(Path::new(DEMO_NAME), &dem);
    let json = serde_json::to_string_pretty(&info).expect("plain data serialises");
    write_atomic(&out("info.json"), |w| w.write_all(json.as_bytes()))?;
    let slope_deg: Vec<f32> = slope::slope_map(&dem)
        .data()
        .iter()
        .map(|v| v.to_degrees())
        .collect();
    write_tif(&out("slope.tif"), &dem, &[&slope_deg])?;
    write_tif(
        &out("roughness.tif"),
        &dem,
        &[roughness::roughness_map(&dem).data()],
    )?;
    write_hillshade(&out("hillshade.png"), &dem, 315.0, 45.0)?;
    let map = horizon::horizon_map(&dem, horizon::DEFAULT_SECTORS, &Bar::new())?;
    let bands: Vec<Vec<f32>> = (0..map.sectors()).map(|k| map.sector_degrees(k)).collect();
    let refs: Vec<&[f32]> = bands.iter().map(|b| b.as_slice()).collect();
    write_tif(&out("horizon.tif"), &dem, &refs)?;
    let svf = horizon::sky_view_map(&dem, &map);
    write_tif(&out("sky_view.tif"), &dem, &[svf.data()])?;
    let (_, _, svf_mean) = svf.stats().unwrap_or((0.0, 0.0, 1.0));
    let route_line = demo_route(&dem, &a.out)?;
    crate::say!("Vardholm plateau demo terrain");
    crate::say!(
        "  {} x {} cells of {:.1} m, elevation {:.1} .. {:.1} m",
        info.width,
        info.height,
        info.cell_size_m,
        info.z_min_m,
        info.z_max_m
    );
    crate::say!(
        "  slope mean {:.1} deg, max {:.1} deg",
        info.slope_mean_deg,
        info.slope_max_deg
    );
    crate::say!(
        "  mean sky-view factor {svf_mean:.3} over {} horizon sectors",
        map.sectors()
    );
    crate::say!("{route_line}");
    crate::say!(
        "outputs in {}: info.json slope.tif roughness.tif hillshade.png horizon.tif sky_view.tif \
         route.geojson route.json profile.csv route_map.png",
        a.out.display()
    );
    crate::say!("(solar, battery and mission verdicts are not wired into the demo yet)");
    Ok(())
}

/// Plans the demo route and writes route.geojson, route.json, profile.csv and
/// route_map.png; returns a line for the summary.
fn demo_route(dem: &Dem, out: &Path) -> Result<String, Error> {
    let rover = Rover::default();
    let model = RoverStepModel::new(&rover);
    let flags = CellFlags::from_dem(dem);
    let limits = TiltLimits {
        max_pitch_up_rad: rover.max_climb_rad,
        max_pitch_down_rad: rover.max_descent_rad,
        max_roll_rad: rover.roll_limit_rad(),
    };
    let planner = Planner {
        dem,
        flags: &flags,
        model: &model,
        limits,
        connectivity: Connectivity::Sixteen,
        objective: Objective::ENERGY,
    };
    let points: Vec<RoutePoint> = DEMO_POINTS
        .iter()
        .map(|&(label, x, y)| RoutePoint {
            label: label.to_string(),
            x,
            y,
        })
        .collect();
    let route = plan_route(&planner, &points)?;
    let summary = summary_json(&route, Objective::ENERGY, &rover, &limits);
    let text =
        serde_json::to_string(&route_geojson(&route, &summary)).expect("JSON values serialise");
    write_atomic(&out.join("route.geojson"), |w| w.write_all(text.as_bytes()))?;
    let text = serde_json::to_string_pretty(&summary).expect("JSON values serialise");
    write_atomic(&out.join("route.json"), |w| w.write_all(text.as_bytes()))?;
    let text = profile_csv(&route);
    write_atomic(&out.join("profile.csv"), |w| w.write_all(text.as_bytes()))?;
    let grey = hillshade::to_grey(&hillshade::hillshade(
        dem,
        315f64.to_radians(),
        45f64.to_radians(),
    ));
    let scale = 2;
    let px = route_map_rgb(&grey, dem.width(), dem.height(), &route, scale);
    write_atomic(&out.join("route_map.png"), |w| {
        png::write_rgb8(w, dem.width() * scale, dem.height() * scale, &px)
    })?;
    let s = &route.summary;
    Ok(format!(
        "  route base camp -> cairn -> survey site: {:.0} m, {:.0} Wh, {:.1} h driving, max pitch {:.1} deg, max roll {:.1} deg",
        s.length_m,
        sunward::units::j_to_wh(s.energy_j),
        s.duration_s / 3600.0,
        s.max_pitch_rad.to_degrees(),
        s.max_roll_rad.to_degrees()
    ))
}
