//! Panel temperature, mounts and terrain shading: checks against pvlib 0.16.1 values
//! (tests/reference/sun/, made by make_irradiance.py), definitions and analytic cases.

#[path = "sun_ref.rs"]
mod sun_ref;

use sun_ref::{near, num, rows};
use sunward::progress::Silent;
use sunward::sun::irradiance::Components;
use sunward::sun::panel::{Attitude, CellTemperature, Mount, Panel};
use sunward::sun::shading::SiteShade;
use sunward::sun::transposition::{plane_of_array, Plane, SkyModel, SunGeometry};
use sunward::terrain::horizon::horizon_map;
use sunward::terrain::{GeoRef, Grid};
use sunward::units::{deg_to_rad, rad_to_deg};

/// Faiman (2008) eq. 3 with his U0 = 25, U1 = 6.84 against pvlib
/// `temperature.faiman` (same defaults), 20 random cases, 1e-9 K.
#[test]
fn faiman_cell_temperature_matches_pvlib() {
    let m = CellTemperature::default();
    for r in rows("faiman.csv") {
        let t = m.cell_temp_c(
            num(&r, "poa_w_m2"),
            num(&r, "air_temp_c"),
            num(&r, "wind_m_s"),
        );
        assert!(near(t, num(&r, "module_temp_c"), 1e-9, 0.0), "{r:?}: {t}");
    }
}

/// Definition of the STC rating (IEC 60904-3: 1000 W/m², 25 °C cell): a loss-free panel
/// delivers A·η_stc·1000 W; at 45 °C with γ = −0.4 %/K it delivers 8 % less.
#[test]
fn stc_rating_definition() {
    let p = Panel {
        area_m2: 1.6,
        efficiency_stc: 0.21,
        temp_coeff_per_k: -0.004,
        soiling_loss: 0.0,
        mppt_efficiency: 1.0,
        wiring_efficiency: 1.0,
        ..Panel::default()
    }
    .validate()
    .unwrap();
    assert!((p.power_w(1000.0, 25.0) - 1.6 * 0.21 * 1000.0).abs() < 1e-9);
    assert!((p.power_w(1000.0, 45.0) / p.power_w(1000.0, 25.0) - 0.92).abs() < 1e-12);
    assert_eq!(p.power_w(0.0, 25.0), 0.0);
    assert!(Panel {
        efficiency_stc: 0.9,
        ..p
    }
    .validate()
    .is_err());
}

/// A level-body horizontal-axis tracker against pvlib `tracking.singleaxis` (axis tilt 0,
/// no backtracking, limits 45/60/90°), 30 random suns and axis azimuths: the resulting
/// plane's tilt and angle of incidence within 1e-6°.
#[test]
fn single_axis_mast_matches_pvlib_on_level_ground() {
    for r in rows("singleaxis.csv") {
        let mount = Mount::SingleAxis {
            axis_yaw_rad: deg_to_rad(num(&r, "axis_azimuth_deg")),
            max_angle_rad: deg_to_rad(num(&r, "max_angle_deg")),
        };
        let (z, a) = (
            deg_to_rad(num(&r, "zenith_deg")),
            deg_to_rad(num(&r, "azimuth_deg")),
        );
        let plane = mount.plane(&Attitude::default(), z, a).unwrap();
        let aoi = rad_to_deg(plane.cos_incidence(z, a).clamp(-1.0, 1.0).acos());
        assert!(
            (rad_to_deg(plane.tilt_rad()) - num(&r, "surface_tilt_deg")).abs() < 1e-6,
            "{r:?}"
        );
        assert!((aoi - num(&r, "aoi_deg")).abs() < 1e-6, "{r:?}: aoi {aoi}");
    }
}

/// Attitude geometry, analytic: a deck panel on a body pitched nose-up by 10° while
/// heading north tilts 10° and faces south; rolled right-side-down by 15° heading east
/// it tilts 15° and faces south (the right side of an east-heading body is south).
#[test]
fn body_fixed_panel_follows_attitude() {
    let deck = Mount::BodyFixed {
        normal_body: [0.0, 0.0, 1.0],
    };
    let pitched = Attitude {
        heading_rad: 0.0,
        pitch_rad: deg_to_rad(10.0),
        roll_rad: 0.0,
    };
    let p = deck.plane(&pitched, 0.5, 0.5).unwrap();
    assert!((rad_to_deg(p.tilt_rad()) - 10.0).abs() < 1e-9);
    assert!((rad_to_deg(p.azimuth_rad()) - 180.0).abs() < 1e-9);
    let rolled = Attitude {
        heading_rad: deg_to_rad(90.0),
        pitch_rad: 0.0,
        roll_rad: deg_to_rad(15.0),
    };
    let p = deck.plane(&rolled, 0.5, 0.5).unwrap();
    assert!((rad_to_deg(p.tilt_rad()) - 15.0).abs() < 1e-9);
    assert!(
        (rad_to_deg(p.azimuth_rad()) - 180.0).abs() < 1e-9,
        "{}",
        rad_to_deg(p.azimuth_rad())
    );
    // A panel tilted 30° toward the right of the nose, heading north, faces east.
    let side = Mount::FixedTilt {
        tilt_rad: deg_to_rad(30.0),
        relative_azimuth_rad: deg_to_rad(90.0),
    };
    let p = side.plane(&Attitude::default(), 0.5, 0.5).unwrap();
    assert!((rad_to_deg(p.azimuth_rad()) - 90.0).abs() < 1e-9);
    assert!((rad_to_deg(p.tilt_rad()) - 30.0).abs() < 1e-9);
}

/// Issue 5 analytic wall: a 30 m wall along the north edge of a flat plain, observer
/// 50 m south of it. The wall's top stands at atan(30/50) ≈ 31.0° (less a curvature
/// hair). A sun due north at 20° is behind the wall: zero beam on any plane, while the
/// same sun at 40°, or at 20° due south, shines. Diffuse is cut by the sky-view factor.
#[test]
fn sun_behind_an_analytic_wall_gives_zero_beam() {
    let (w, h, cell) = (9usize, 40usize, 5.0);
    let data = (0..h)
        .flat_map(|r| (0..w).map(move |_| if r == 0 { 30.0f32 } else { 0.0 }))
        .collect();
    let dem = Grid::from_vec(w, h, data, GeoRef::local(cell));
    let map = horizon_map(&dem, 32, &Silent).unwrap();
    let shade = SiteShade::new(&map, 4, 10).unwrap();
    let irr = Components {
        ghi_w_m2: 500.0,
        dni_w_m2: 800.0,
        dhi_w_m2: 100.0,
    };
    let facing_north = Plane::new(deg_to_rad(60.0), 0.0).unwrap();
    let poa_at = |elev_deg: f64, az_deg: f64| {
        let sun = SunGeometry {
            zenith_rad: deg_to_rad(90.0 - elev_deg),
            azimuth_rad: deg_to_rad(az_deg),
            dni_extra_w_m2: 1361.0,
            airmass_relative: None,
        };
        let poa = plane_of_array(&facing_north, &sun, &irr, 0.2, SkyModel::HayDavies);
        (
            poa,
            shade.apply(poa, deg_to_rad(elev_deg), deg_to_rad(az_deg)),
        )
    };
    let (open, shaded) = poa_at(20.0, 0.0);
    assert!(open.beam_w_m2 > 100.0);
    assert_eq!(shaded.beam_w_m2, 0.0);
    assert!(shaded.sky_diffuse_w_m2 < open.sky_diffuse_w_m2);
    let (open, lit) = poa_at(40.0, 0.0);
    assert_eq!(lit.beam_w_m2, open.beam_w_m2);
    assert!(!shade.sun_hidden(deg_to_rad(20.0), deg_to_rad(180.0)));
    let top = (30.0f64 / 50.0).atan();
    assert!(shade.sun_hidden(top - 1e-3, 0.0) && !shade.sun_hidden(top + 1e-3, 0.0));
    assert!(shade.sky_view_factor() < 1.0 && shade.sky_view_factor() > 0.9);
}
