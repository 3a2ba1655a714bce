//! `sunward demo`: the bundled scenario end to end.
//!
//! The demo runs the bundled Vardholm plateau survey mission (missions/vardholm_survey.toml
//! on the synthetic terrain of terrains/vardholm_plateau.tif) end to end: it writes the
//! mission and its terrain into `OUT/inputs/` (so they can be edited and re-run with
//! `sunward run`), runs every season, and adds the terrain maps (slope, roughness,
//! hillshade, horizons, sky-view factor) and a map of the default rover's route from the
//! base camp past the cairn to the survey site.

use std::io::Cursor;
use std::path::{Path, PathBuf};

use clap::Args;

use sunward::report::atomic::{write_atomic, Staging};
use sunward::terrain::io::{geotiff, png};
use sunward::terrain::{hillshade, horizon, roughness, slope};
use sunward::Error;

use super::progress::Bar;
use super::terrain::info_of;

/// The demo's own outputs beside the mission's.
const DEMO_OUTPUTS: [&str; 6] = [
    "info.json",
    "slope.tif",
    "roughness.tif",
    "hillshade.png",
    "horizon.tif",
    "sky_view.tif",
];

/// The bundled demo terrain, compiled into the binary so the demo runs from anywhere.
const DEMO_TERRAIN: &[u8] = include_bytes!("../../terrains/vardholm_plateau.tif");
const DEMO_NAME: &str = "terrains/vardholm_plateau.tif";
/// The bundled mission; its terrain line is pointed at the copy in `OUT/inputs/`.
const DEMO_MISSION: &str = include_str!("../../missions/vardholm_survey.toml");
const MISSION_TERRAIN_LINE: &str = "file = \"../terrains/vardholm_plateau.tif\"";

#[derive(Debug, Args)]
pub struct DemoArgs {
    /// Folder for the outputs (created if missing).
    #[arg(long, value_name = "DIR", default_value = "sunward-out/demo")]
    out: PathBuf,
}

pub fn run(a: DemoArgs) -> Result<(), Error> {
    super::run::prepare_out(&a.out, &[])?;
    let inputs = a.out.join("inputs");
    std::fs::create_dir_all(&inputs).map_err(|source| Error::Output {
        path: inputs.clone(),
        source,
    })?;
    assert!(
        DEMO_MISSION.contains(MISSION_TERRAIN_LINE),
        "the bundled mission names its terrain as the demo expects"
    );
    let mission_text =
        DEMO_MISSION.replace(MISSION_TERRAIN_LINE, "file = \"vardholm_plateau.tif\"");
    let mission_path = inputs.join("vardholm_survey.toml");
    write_atomic(&mission_path, |w| w.write_all(mission_text.as_bytes()))?;
    write_atomic(&inputs.join("vardholm_plateau.tif"), |w| {
        w.write_all(DEMO_TERRAIN)
    })?;
    // The mission's outputs and the terrain maps are one set: staged, then moved into
    // place together (see `Staging`).
    let mut staged = Staging::new(&a.out)?;
    let done = super::run::run_mission(&mission_path, &mut staged, &[], false)?;
    let dem = geotiff::read_from(Cursor::new(DEMO_TERRAIN), Path::new(DEMO_NAME), u64::MAX)?;
    eprintln!("demo terrain: {DEMO_NAME} (Vardholm plateau, synthetic)");
    let info = info_of(Path::new(DEMO_NAME), &dem);
    let json = serde_json::to_string_pretty(&info).expect("plain data serialises");
    staged.write("info.json", |w| w.write_all(json.as_bytes()))?;
    let slope_deg: Vec<f32> = slope::slope_map(&dem)
        .data()
        .iter()
        .map(|v| v.to_degrees())
        .collect();
    let (w, h) = (dem.width(), dem.height());
    let mut tif = |name: &str, bands: &[&[f32]]| {
        staged.write(name, |out| geotiff::write(out, &dem.georef, w, h, bands))
    };
    tif("slope.tif", &[&slope_deg])?;
    tif("roughness.tif", &[roughness::roughness_map(&dem).data()])?;
    let map = horizon::horizon_map(&dem, horizon::DEFAULT_SECTORS, &Bar::new())?;
    let bands: Vec<Vec<f32>> = (0..map.sectors()).map(|k| map.sector_degrees(k)).collect();
    let refs: Vec<&[f32]> = bands.iter().map(|b| b.as_slice()).collect();
    tif("horizon.tif", &refs)?;
    let svf = horizon::sky_view_map(&dem, &map);
    tif("sky_view.tif", &[svf.data()])?;
    let shade = hillshade::to_grey(&hillshade::hillshade(
        &dem,
        315f64.to_radians(),
        45f64.to_radians(),
    ));
    staged.write("hillshade.png", |out| png::write_gray8(out, w, h, &shade))?;
    done.commit(staged, |n| {
        super::run::is_run_output(n) || DEMO_OUTPUTS.contains(&n)
    })?;
    done.print();
    let (_, _, svf_mean) = svf.stats().unwrap_or((0.0, 0.0, 1.0));
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
    crate::say!(
        "outputs in {}: info.json slope.tif roughness.tif hillshade.png horizon.tif sky_view.tif \
         and the mission's outputs",
        a.out.display()
    );
    crate::say!(
        "mission inputs in {}: edit them and run `sunward run {}`",
        inputs.display(),
        mission_path.display()
    );
    Ok(())
}
