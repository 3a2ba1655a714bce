//! `sunward terrain ...`: raster inspection and derived maps.

use std::path::{Path, PathBuf};

use clap::{Args, Subcommand};
use serde::Serialize;

use sunward::report::atomic::write_atomic;
use sunward::terrain::io::{geotiff, png};
use sunward::terrain::synth::{synthesize, SynthParams};
use sunward::terrain::{hillshade, horizon, roughness, slope, Dem, Grid};
use sunward::Error;

use super::{check_output, progress::Bar, DemArgs};

#[derive(Debug, Subcommand)]
pub enum TerrainCommand {
    /// Size, georeference, elevation and slope statistics of a DEM.
    Info(InfoArgs),
    /// Slope map in degrees (Horn 1981), same grid and georeference, no-data kept.
    Slope(MapArgs),
    /// Aspect map: downhill azimuth in degrees clockwise from north (flat cells no-data).
    Aspect(MapArgs),
    /// Roughness map: elevation range of the 3 x 3 window, metres.
    Roughness(MapArgs),
    /// Shaded-relief picture (PNG, grey 1-255, 0 = no-data).
    Hillshade(HillshadeArgs),
    /// Horizon elevation angles in degrees: a GeoTIFF with one band per azimuth sector.
    Horizon(HorizonArgs),
    /// Generate a seeded synthetic terrain (fractal relief, ridge, valley, scarp).
    Synth(SynthArgs),
}

#[derive(Debug, Args)]
pub struct InfoArgs {
    #[command(flatten)]
    dem: DemArgs,
    /// Print JSON (stable keys, see README) instead of text.
    #[arg(long)]
    json: bool,
}

#[derive(Debug, Args)]
pub struct MapArgs {
    #[command(flatten)]
    dem: DemArgs,
    /// Output GeoTIFF (Float32, no-data -9999).
    #[arg(short = 'o', long = "out", value_name = "OUT.tif")]
    out: PathBuf,
}

#[derive(Debug, Args)]
pub struct HillshadeArgs {
    #[command(flatten)]
    dem: DemArgs,
    /// Output PNG picture.
    #[arg(short = 'o', long = "out", value_name = "OUT.png")]
    out: PathBuf,
    /// Light azimuth, degrees clockwise from north.
    #[arg(long, value_name = "DEG", default_value_t = 315.0)]
    azimuth_deg: f64,
    /// Light altitude above the horizon, degrees (0-90).
    #[arg(long, value_name = "DEG", default_value_t = 45.0)]
    altitude_deg: f64,
}

/// `--sectors`: 4 to 360 (fewer cannot interpolate a horizon between directions; more
/// than one a degree adds memory, 4 bytes per cell and sector, without detail).
fn parse_sectors(s: &str) -> Result<usize, String> {
    match s.parse::<usize>() {
        Ok(n) if (4..=360).contains(&n) => Ok(n),
        _ => Err(format!(
            "{s} is not a whole number of sectors from 4 to 360 (default 32)"
        )),
    }
}

#[derive(Debug, Args)]
pub struct HorizonArgs {
    #[command(flatten)]
    dem: DemArgs,
    /// Number of azimuth sectors, 4 to 360; band k holds azimuth k x 360/N degrees.
    #[arg(long, value_name = "N", default_value_t = horizon::DEFAULT_SECTORS,
          value_parser = parse_sectors)]
    sectors: usize,
    /// Output GeoTIFF, one Float32 band per sector, degrees.
    #[arg(short = 'o', long = "out", value_name = "OUT.tif")]
    out: PathBuf,
    /// Also write the sky-view factor (0-1) as a one-band GeoTIFF.
    #[arg(long, value_name = "SVF.tif")]
    sky_view: Option<PathBuf>,
}

#[derive(Debug, Args)]
pub struct SynthArgs {
    /// Cells per side (16-16384).
    #[arg(long, value_name = "N", default_value_t = 512)]
    size: usize,
    /// Cell size, metres.
    #[arg(long, value_name = "M", default_value_t = 2.0)]
    cell_m: f64,
    /// Seed of the generator: the same seed gives the same terrain everywhere.
    #[arg(long, value_name = "S", default_value_t = 1)]
    seed: u64,
    /// Mean elevation, metres.
    #[arg(long, value_name = "M", default_value_t = 500.0)]
    base_m: f64,
    /// Fractal relief amplitude as a share of the grid's extent (0-1).
    #[arg(long, value_name = "SHARE", default_value_t = 0.01)]
    relief: f64,
    /// Output GeoTIFF (Float32).
    #[arg(short = 'o', long = "out", value_name = "FILE.tif")]
    out: PathBuf,
}

/// The `terrain info --json` document; these keys are stable.
#[derive(Debug, Serialize)]
pub struct TerrainInfo {
    pub path: String,
    pub width: usize,
    pub height: usize,
    pub cell_size_m: f64,
    pub cell_dx_m: f64,
    pub cell_dy_m: f64,
    pub crs: String,
    pub crs_kind: sunward::terrain::CrsKind,
    pub epsg: Option<u32>,
    pub origin_x: f64,
    pub origin_y: f64,
    pub pixel_width: f64,
    pub pixel_height: f64,
    pub z_min_m: f64,
    pub z_max_m: f64,
    pub z_mean_m: f64,
    pub nodata_cells: usize,
    pub slope_mean_deg: f64,
    pub slope_max_deg: f64,
}

/// Statistics of a DEM for `terrain info` and the demo.
pub fn info_of(path: &Path, dem: &Dem) -> TerrainInfo {
    let (z_min_m, z_max_m, z_mean_m) = dem.stats().unwrap_or((f64::NAN, f64::NAN, f64::NAN));
    let slopes = slope::slope_map(dem);
    let (_, smax, smean) = slopes.stats().unwrap_or((0.0, 0.0, 0.0));
    let cell = dem.cell_size();
    let g = &dem.georef;
    TerrainInfo {
        path: path.display().to_string(),
        width: dem.width(),
        height: dem.height(),
        cell_size_m: cell.mean_m(),
        cell_dx_m: cell.dx_m,
        cell_dy_m: cell.dy_m,
        crs: g.crs.label(),
        crs_kind: g.crs.kind,
        epsg: g.crs.epsg,
        origin_x: g.origin_x,
        origin_y: g.origin_y,
        pixel_width: g.pixel_width,
        pixel_height: g.pixel_height,
        z_min_m,
        z_max_m,
        z_mean_m,
        nodata_cells: dem.nodata_count(),
        slope_mean_deg: smean.to_degrees(),
        slope_max_deg: smax.to_degrees(),
    }
}

fn print_info(i: &TerrainInfo) {
    crate::say!("file          {}", i.path);
    crate::say!("size          {} x {} cells", i.width, i.height);
    crate::say!("cell size     {:.4} x {:.4} m", i.cell_dx_m, i.cell_dy_m);
    crate::say!("crs           {}", i.crs);
    crate::say!(
        "origin        ({}, {}) upper-left corner",
        i.origin_x,
        i.origin_y
    );
    crate::say!(
        "elevation     {:.2} .. {:.2} m, mean {:.2} m",
        i.z_min_m,
        i.z_max_m,
        i.z_mean_m
    );
    crate::say!("no-data cells {}", i.nodata_cells);
    crate::say!(
        "slope         mean {:.2} deg, max {:.2} deg",
        i.slope_mean_deg,
        i.slope_max_deg
    );
}

/// Writes grids (bands) as a Float32 GeoTIFF atomically.
pub fn write_tif(out: &Path, like: &Dem, bands: &[&[f32]]) -> Result<(), Error> {
    write_atomic(out, |w| {
        geotiff::write(w, &like.georef, like.width(), like.height(), bands)
    })
}

fn degrees(g: &Grid<f32>) -> Vec<f32> {
    g.data().iter().map(|v| v.to_degrees()).collect()
}

/// Writes the hillshade picture of a DEM.
pub fn write_hillshade(out: &Path, dem: &Dem, az_deg: f64, alt_deg: f64) -> Result<(), Error> {
    let hs = hillshade::hillshade(dem, az_deg.to_radians(), alt_deg.to_radians());
    let grey = hillshade::to_grey(&hs);
    write_atomic(out, |w| {
        png::write_gray8(w, dem.width(), dem.height(), &grey)
    })
}

/// The two formats the terrain commands write.
#[derive(Debug, Clone, Copy)]
enum Written {
    GeoTiff,
    Png,
}

impl Written {
    fn name(self) -> &'static str {
        match self {
            Written::GeoTiff => "a GeoTIFF",
            Written::Png => "a PNG picture",
        }
    }

    /// Extensions that name the format (as `read_dem` tells formats apart).
    fn extensions(self) -> &'static [&'static str] {
        match self {
            Written::GeoTiff => &["tif", "tiff", "gtiff"],
            Written::Png => &["png"],
        }
    }
}

/// Refuses an output name whose extension is not the format `command` writes: a GeoTIFF
/// written to x.png (or a PNG to x.tif) could not be read back by sunward or anyone.
fn check_extension(out: &Path, command: &str, format: Written) -> Result<(), Error> {
    let ext = out
        .extension()
        .and_then(|e| e.to_str())
        .map(str::to_ascii_lowercase);
    let wants = format.extensions();
    if ext.as_deref().is_some_and(|e| wants.contains(&e)) {
        return Ok(());
    }
    let given = match &ext {
        Some(e) => format!("the name ends in .{e}"),
        None => "the name has no extension".to_string(),
    };
    Err(Error::Usage(format!(
        "{}: {command} writes {}, but {given}. Fix: name the file .{}",
        out.display(),
        format.name(),
        wants[0]
    )))
}

fn check_angle(name: &str, v: f64, lo: f64, hi: f64) -> Result<(), Error> {
    if v.is_finite() && (lo..=hi).contains(&v) {
        Ok(())
    } else {
        Err(Error::Usage(format!(
            "{name} = {v} is out of range: expected {lo} to {hi} degrees"
        )))
    }
}

pub fn run(cmd: TerrainCommand) -> Result<(), Error> {
    match cmd {
        TerrainCommand::Info(a) => {
            let dem = a.dem.load()?;
            let info = info_of(&a.dem.dem, &dem);
            if a.json {
                crate::say!(
                    "{}",
                    serde_json::to_string_pretty(&info).expect("plain data serialises")
                );
            } else {
                print_info(&info);
            }
        }
        TerrainCommand::Slope(a) => map_command(&a, "slope", |d| degrees(&slope::slope_map(d)))?,
        TerrainCommand::Aspect(a) => map_command(&a, "aspect", |d| degrees(&slope::aspect_map(d)))?,
        TerrainCommand::Roughness(a) => {
            map_command(&a, "roughness", |d| roughness::roughness_map(d).into_vec())?
        }
        TerrainCommand::Hillshade(a) => {
            check_angle("--azimuth-deg", a.azimuth_deg, -360.0, 360.0)?;
            check_angle("--altitude-deg", a.altitude_deg, 0.0, 90.0)?;
            check_extension(&a.out, "hillshade", Written::Png)?;
            check_output(&a.out, &[&a.dem.dem])?;
            let dem = a.dem.load()?;
            write_hillshade(&a.out, &dem, a.azimuth_deg, a.altitude_deg)?;
            eprintln!("wrote {}", a.out.display());
        }
        TerrainCommand::Horizon(a) => {
            check_extension(&a.out, "horizon", Written::GeoTiff)?;
            check_output(&a.out, &[&a.dem.dem])?;
            if let Some(s) = &a.sky_view {
                check_extension(s, "horizon --sky-view", Written::GeoTiff)?;
                check_output(s, &[&a.dem.dem])?;
            }
            let dem = a.dem.load()?;
            let need = sunward::limits::horizon_bytes(dem.len() as u64, a.sectors as u64);
            super::check_memory(
                &a.dem.opts.read_options(),
                &a.dem.dem,
                &dem,
                "the horizon maps",
                need,
            )?;
            let map = horizon::horizon_map(&dem, a.sectors, &Bar::new())?;
            let bands: Vec<Vec<f32>> = (0..map.sectors()).map(|k| map.sector_degrees(k)).collect();
            let refs: Vec<&[f32]> = bands.iter().map(|b| b.as_slice()).collect();
            write_tif(&a.out, &dem, &refs)?;
            eprintln!(
                "wrote {} ({} bands, band k = azimuth k x {} deg)",
                a.out.display(),
                map.sectors(),
                360.0 / map.sectors() as f64
            );
            if let Some(s) = &a.sky_view {
                let svf = horizon::sky_view_map(&dem, &map);
                write_tif(s, &dem, &[svf.data()])?;
                eprintln!("wrote {}", s.display());
            }
        }
        TerrainCommand::Synth(a) => {
            check_extension(&a.out, "synth", Written::GeoTiff)?;
            check_output(&a.out, &[])?;
            let dem = synthesize(&SynthParams {
                size: a.size,
                cell_m: a.cell_m,
                seed: a.seed,
                base_m: a.base_m,
                relief: a.relief,
            })?;
            write_tif(&a.out, &dem, &[dem.data()])?;
            eprintln!(
                "wrote {} ({} x {} cells of {} m, seed {})",
                a.out.display(),
                a.size,
                a.size,
                a.cell_m,
                a.seed
            );
        }
    }
    Ok(())
}

fn map_command(a: &MapArgs, command: &str, f: impl Fn(&Dem) -> Vec<f32>) -> Result<(), Error> {
    check_extension(&a.out, command, Written::GeoTiff)?;
    check_output(&a.out, &[&a.dem.dem])?;
    let dem = a.dem.load()?;
    let values = f(&dem);
    write_tif(&a.out, &dem, &[&values])?;
    eprintln!("wrote {}", a.out.display());
    Ok(())
}
