//! Keep-out areas: the UTM projection against PROJ (through pyproj), the scanline
//! rasteriser against geo's point-in-polygon predicate, and the GeoJSON reader.

use sunward::terrain::utm::{self, Hemisphere, UtmZone};
use sunward::units::{deg_to_rad, rad_to_deg};

// ---------------------------------------------------------------- UTM against PROJ

/// One row of tests/reference/utm/utm_points.csv.
struct UtmCase {
    lat_deg: f64,
    lon_deg: f64,
    epsg: u32,
    easting_m: f64,
    northing_m: f64,
    convergence_deg: f64,
    scale: f64,
}

fn utm_cases() -> Vec<UtmCase> {
    let path = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/tests/reference/utm/utm_points.csv"
    );
    let text = std::fs::read_to_string(path).expect("reference file present");
    text.lines()
        .filter(|l| !l.starts_with('#') && !l.starts_with("lat_deg"))
        .map(|l| {
            let f: Vec<&str> = l.split(',').collect();
            let num = |i: usize| f[i].parse::<f64>().expect("number");
            UtmCase {
                lat_deg: num(0),
                lon_deg: num(1),
                epsg: f[4].parse().expect("epsg"),
                easting_m: num(5),
                northing_m: num(6),
                convergence_deg: num(7),
                scale: num(8),
            }
        })
        .collect()
}

/// Easting and northing against PROJ 9.5.1 (pyproj 3.7.2), `EPSG:4326` → `EPSG:326zz/327zz`,
/// for every point of tests/reference/utm/utm_points.csv (several zones, both hemispheres,
/// zone edges, 80° S and 84° N). Tolerance 1 mm: both sides implement sixth-order Krüger
/// series that Karney (J. Geodesy 85, 2011, section 4) puts at 5 nm; the CSV carries 1 µm.
/// Measured: worst 0.7 µm over the 52 points (the CSV's rounding). Every failing point is
/// listed.
#[test]
fn utm_forward_matches_proj_to_a_millimetre() {
    let cases = utm_cases();
    assert!(cases.len() >= 30, "reference points missing");
    let mut bad = Vec::new();
    let mut worst_m: f64 = 0.0;
    for c in &cases {
        let zone = UtmZone::from_epsg(c.epsg).unwrap();
        let p = utm::forward(zone, deg_to_rad(c.lat_deg), deg_to_rad(c.lon_deg)).unwrap();
        let err = (p.easting_m - c.easting_m).hypot(p.northing_m - c.northing_m);
        worst_m = worst_m.max(err);
        if err > 1e-3 {
            bad.push(format!(
                "({}, {}) EPSG:{}: got ({:.6}, {:.6}), PROJ ({:.6}, {:.6})",
                c.lat_deg, c.lon_deg, c.epsg, p.easting_m, p.northing_m, c.easting_m, c.northing_m
            ));
        }
    }
    assert!(
        bad.is_empty(),
        "worst {worst_m} m; failing:\n{}",
        bad.join("\n")
    );
}

/// Meridian convergence and point scale against PROJ's `get_factors` (pyproj 3.7.2,
/// PROJ 9.5.1). PROJ gets them by numerical differentiation of the projection, so the
/// tolerances are looser than for positions: 1e-7° for the convergence and 1e-9 for the
/// scale (PROJ's factor at a zone origin is 0.999600000051 against the exact k0 = 0.9996,
/// an error of 5e-11). Measured: worst 2e-10° and 1.4e-11.
#[test]
fn utm_convergence_and_scale_match_proj() {
    let mut bad = Vec::new();
    for c in utm_cases() {
        let zone = UtmZone::from_epsg(c.epsg).unwrap();
        let p = utm::forward(zone, deg_to_rad(c.lat_deg), deg_to_rad(c.lon_deg)).unwrap();
        let dg = rad_to_deg(p.convergence_rad) - c.convergence_deg;
        let dk = p.scale - c.scale;
        if dg.abs() > 1e-7 || dk.abs() > 1e-9 {
            bad.push(format!(
                "({}, {}) EPSG:{}: convergence off by {dg:e}°, scale off by {dk:e}",
                c.lat_deg, c.lon_deg, c.epsg
            ));
        }
    }
    assert!(bad.is_empty(), "failing:\n{}", bad.join("\n"));
}

/// The inverse undoes the forward projection: round trip of every reference point within
/// 1e-9° (about 0.1 mm), a property of the pair of series (Karney 2011, eqs. 35 and 36).
#[test]
fn utm_inverse_undoes_forward() {
    for c in utm_cases() {
        let zone = UtmZone::from_epsg(c.epsg).unwrap();
        let (lat, lon) = utm::inverse(zone, c.easting_m, c.northing_m).unwrap();
        let dlat = rad_to_deg(lat) - c.lat_deg;
        let dlon = (rad_to_deg(lon) - c.lon_deg + 540.0).rem_euclid(360.0) - 180.0;
        assert!(
            dlat.abs() < 1e-9 && dlon.abs() < 1e-9,
            "({}, {}) EPSG:{}: inverse of PROJ's point off by ({dlat:e}, {dlon:e})°",
            c.lat_deg,
            c.lon_deg,
            c.epsg
        );
    }
}

#[test]
fn utm_refuses_points_outside_its_domain() {
    let zone = UtmZone::new(33, Hemisphere::North).unwrap();
    assert!(utm::forward(zone, deg_to_rad(85.0), deg_to_rad(15.0)).is_err());
    assert!(utm::forward(zone, deg_to_rad(-81.0), deg_to_rad(15.0)).is_err());
    assert!(utm::forward(zone, deg_to_rad(45.0), deg_to_rad(40.0)).is_err());
    assert!(utm::forward(zone, f64::NAN, 0.0).is_err());
    let msg = utm::forward(zone, deg_to_rad(45.0), deg_to_rad(40.0))
        .unwrap_err()
        .to_string();
    assert!(msg.contains("zone 33"), "{msg}");
}
