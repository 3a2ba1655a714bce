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

// ------------------------------------------------------- rasterisation against geo

use geo::coordinate_position::{CoordPos, CoordinatePosition};
use geo::{Coord, LineString, MultiPolygon, Polygon};
use sunward::terrain::mask::{self, KeepOutCoords, KeepOutError};
use sunward::terrain::raster::{Crs, CrsKind, LinearUnit};
use sunward::terrain::{GeoRef, Grid};

/// SplitMix64 (S. Vigna, public domain): seeded, reproducible test shapes.
struct Rng(u64);

impl Rng {
    fn unit(&mut self) -> f64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        ((z ^ (z >> 31)) >> 11) as f64 / (1u64 << 53) as f64
    }

    fn range(&mut self, lo: f64, hi: f64) -> f64 {
        lo + (hi - lo) * self.unit()
    }
}

/// A 70 × 50 grid of 2 m × 3 m cells (non-square on purpose) with its upper-left corner at
/// (1000, 5000).
fn test_grid() -> Grid<f32> {
    let georef = GeoRef {
        origin_x: 1000.0,
        origin_y: 5000.0,
        pixel_width: 2.0,
        pixel_height: 3.0,
        ..GeoRef::local(1.0)
    };
    Grid::from_vec(70, 50, vec![0.0; 70 * 50], georef)
}

/// A star-shaped ring around (cx, cy): `k` vertices at increasing angles and radii drawn
/// from [r_lo, r_hi]; with a wide radius range the ring is strongly concave.
fn star(rng: &mut Rng, cx: f64, cy: f64, k: usize, r_lo: f64, r_hi: f64) -> LineString<f64> {
    let mut pts: Vec<Coord<f64>> = (0..k)
        .map(|i| {
            let a = (i as f64 + rng.range(0.0, 0.9)) / k as f64 * std::f64::consts::TAU;
            let r = rng.range(r_lo, r_hi);
            Coord {
                x: cx + r * a.cos(),
                y: cy + r * a.sin(),
            }
        })
        .collect();
    pts.push(pts[0]);
    LineString(pts)
}

/// A concave polygon with up to two holes, centred anywhere over an extent reaching well
/// past the grid (so that many polygons are cut by the grid's edge).
fn random_polygon(rng: &mut Rng) -> Polygon<f64> {
    let (cx, cy) = (rng.range(960.0, 1180.0), rng.range(4820.0, 5040.0));
    let r = rng.range(8.0, 70.0);
    let k = 5 + (rng.unit() * 30.0) as usize;
    let exterior = star(rng, cx, cy, k, 0.6 * r, r);
    let mut holes = Vec::new();
    if rng.unit() < 0.7 {
        holes.push(star(rng, cx, cy, 4 + k / 3, 0.05 * r, 0.2 * r));
    }
    if rng.unit() < 0.5 {
        let a = rng.range(0.0, std::f64::consts::TAU);
        let (hx, hy) = (cx + 0.4 * r * a.cos(), cy + 0.4 * r * a.sin());
        holes.push(star(rng, hx, hy, 6, 0.05 * r, 0.14 * r));
    }
    Polygon::new(exterior, holes)
}

/// Compares a mask with geo's point-in-polygon at every cell centre; centres geo puts on
/// the boundary are left out (the rule for them is ours, tested apart). Returns the
/// number of boundary centres skipped.
fn check_against_geo(grid: &Grid<f32>, shapes: &MultiPolygon<f64>, label: &str) -> usize {
    let m = mask::rasterise(grid, shapes);
    let mut skipped = 0;
    let mut bad = Vec::new();
    for row in 0..grid.height() {
        for col in 0..grid.width() {
            let (x, y) = grid.georef.cell_centre(col, row);
            let want = match shapes.coordinate_position(&Coord { x, y }) {
                CoordPos::Inside => true,
                CoordPos::Outside => false,
                CoordPos::OnBoundary => {
                    skipped += 1;
                    continue;
                }
            };
            if m.get(col, row) != want {
                bad.push(format!(
                    "({col}, {row}) centre ({x}, {y}): mask {}",
                    m.get(col, row)
                ));
            }
        }
    }
    assert!(
        bad.is_empty(),
        "{label}: {} cells differ:\n{}",
        bad.len(),
        bad.join("\n")
    );
    skipped
}

/// Every cell of 300 seeded random concave polygons with holes, many of them partly off
/// the grid, against geo's `coordinate_position` (geo 0.33, a general-purpose geometry
/// library): identical, cell for cell.
#[test]
fn mask_matches_geo_point_in_polygon_for_random_polygons() {
    let grid = test_grid();
    let mut rng = Rng(41);
    let mut inside = 0;
    for case in 0..300 {
        let shapes = MultiPolygon(vec![random_polygon(&mut rng)]);
        check_against_geo(&grid, &shapes, &format!("polygon {case}"));
        inside += mask::count(&mask::rasterise(&grid, &shapes));
    }
    assert!(
        inside > 10_000,
        "too few cells inside: the test would prove little"
    );
}

/// Multipolygons of 2–5 random parts that may overlap: the union, as geo's predicate
/// for a MultiPolygon has it.
#[test]
fn mask_matches_geo_for_overlapping_multipolygons() {
    let grid = test_grid();
    let mut rng = Rng(43);
    for case in 0..100 {
        let parts = 2 + (rng.unit() * 4.0) as usize;
        let shapes = MultiPolygon((0..parts).map(|_| random_polygon(&mut rng)).collect());
        check_against_geo(&grid, &shapes, &format!("multipolygon {case}"));
    }
}

/// Polygons whose vertices sit on the lattice of cell centres and corners, so that
/// scanlines pass through vertices and along horizontal edges: away from the boundary the
/// mask still equals geo's predicate, and many centres fall on the boundary.
#[test]
fn mask_matches_geo_when_vertices_sit_on_scanlines() {
    let grid = test_grid();
    let mut rng = Rng(47);
    let mut on_boundary = 0;
    for case in 0..200 {
        let snap = |v: f64, o: f64, step: f64| o + (((v - o) / step).round()) * step;
        let p = random_polygon(&mut rng);
        let snap_ring = |ring: &LineString<f64>| {
            LineString(
                ring.coords()
                    .map(|c| Coord {
                        x: snap(c.x, 1000.0, 1.0),
                        y: snap(c.y, 5000.0, 1.5),
                    })
                    .collect(),
            )
        };
        let snapped = Polygon::new(
            snap_ring(p.exterior()),
            p.interiors().iter().map(snap_ring).collect(),
        );
        on_boundary += check_against_geo(&grid, &MultiPolygon(vec![snapped]), &format!("{case}"));
    }
    assert!(on_boundary > 100, "few boundary centres: {on_boundary}");
}

/// The boundary rule of the module doc, on a rectangle whose sides run through cell
/// centres: centres on its west and south sides are inside, on its east and north sides
/// outside. Columns 3..=8 and rows 10..=20 carry the centres on the sides.
#[test]
fn centres_on_the_boundary_follow_the_documented_rule() {
    let grid = test_grid();
    let g = &grid.georef;
    let (x0, _) = g.cell_centre(3, 0);
    let (x1, _) = g.cell_centre(8, 0);
    let (_, y_top) = g.cell_centre(0, 10);
    let (_, y_bottom) = g.cell_centre(0, 20);
    let rect = Polygon::new(
        LineString(vec![
            Coord { x: x0, y: y_bottom },
            Coord { x: x1, y: y_bottom },
            Coord { x: x1, y: y_top },
            Coord { x: x0, y: y_top },
            Coord { x: x0, y: y_bottom },
        ]),
        vec![],
    );
    let m = mask::rasterise(&grid, &MultiPolygon(vec![rect]));
    for row in 0..grid.height() {
        for col in 0..grid.width() {
            let want = (3..8).contains(&col) && (11..=20).contains(&row);
            assert_eq!(m.get(col, row), want, "cell ({col}, {row})");
        }
    }
}

/// A rectangle cut into jittered quadrilaterals that share their edges (inner vertices
/// snapped to cell centres half of the time): every cell centre inside the rectangle is
/// covered by exactly one tile, and the tiles' union is the rectangle's own mask.
#[test]
fn tiles_sharing_edges_cover_each_cell_once() {
    let grid = test_grid();
    let mut rng = Rng(53);
    let (nx, ny) = (6usize, 5usize);
    let (x0, y0, w, h) = (1010.0, 4870.0, 120.0, 110.0);
    let mut v = vec![vec![Coord { x: 0.0, y: 0.0 }; ny + 1]; nx + 1];
    for (i, col) in v.iter_mut().enumerate() {
        for (j, c) in col.iter_mut().enumerate() {
            let mut x = x0 + w * i as f64 / nx as f64;
            let mut y = y0 + h * j as f64 / ny as f64;
            if i > 0 && i < nx && j > 0 && j < ny {
                x += rng.range(-7.0, 7.0);
                y += rng.range(-7.0, 7.0);
                if rng.unit() < 0.5 {
                    x = 1001.0 + 2.0 * ((x - 1001.0) / 2.0).round();
                    y = 4998.5 - 3.0 * ((4998.5 - y) / 3.0).round();
                }
            }
            *c = Coord { x, y };
        }
    }
    let mut coverage = vec![0u32; grid.len()];
    for i in 0..nx {
        for j in 0..ny {
            let q = vec![v[i][j], v[i + 1][j], v[i + 1][j + 1], v[i][j + 1], v[i][j]];
            let tile = mask::rasterise(
                &grid,
                &MultiPolygon(vec![Polygon::new(LineString(q), vec![])]),
            );
            for (k, &b) in tile.data().iter().enumerate() {
                coverage[k] += u32::from(b);
            }
        }
    }
    let outline = LineString(vec![
        Coord { x: x0, y: y0 },
        Coord { x: x0 + w, y: y0 },
        Coord {
            x: x0 + w,
            y: y0 + h,
        },
        Coord { x: x0, y: y0 + h },
        Coord { x: x0, y: y0 },
    ]);
    let whole = mask::rasterise(&grid, &MultiPolygon(vec![Polygon::new(outline, vec![])]));
    for (k, &c) in coverage.iter().enumerate() {
        assert!(c <= 1, "cell {k} covered {c} times");
        assert_eq!(c == 1, whole.data()[k], "cell {k}");
    }
    assert!(mask::count(&whole) > 1000);
}

#[test]
fn shapes_off_the_grid_or_degenerate_mark_nothing() {
    let grid = test_grid();
    let square = |x: f64, y: f64, s: f64| {
        Polygon::new(
            LineString(vec![
                Coord { x, y },
                Coord { x: x + s, y },
                Coord { x: x + s, y: y + s },
                Coord { x, y: y + s },
                Coord { x, y },
            ]),
            vec![],
        )
    };
    let off = MultiPolygon(vec![square(0.0, 0.0, 50.0), square(2000.0, 6000.0, 10.0)]);
    assert_eq!(mask::count(&mask::rasterise(&grid, &off)), 0);
    assert_eq!(
        mask::count(&mask::rasterise(&grid, &MultiPolygon(vec![]))),
        0
    );
    // Covering the whole grid marks every cell.
    let all = MultiPolygon(vec![square(900.0, 4700.0, 400.0)]);
    assert_eq!(mask::count(&mask::rasterise(&grid, &all)), grid.len());
}

// ------------------------------------------------------------ GeoJSON keep-out text

fn crs(epsg: Option<u32>, kind: CrsKind) -> Crs {
    Crs {
        epsg,
        kind,
        unit: LinearUnit::Metre,
        name: None,
        geokeys: None,
    }
}

const MIXED: &str = r#"{
  "type": "FeatureCollection",
  "features": [
    { "type": "Feature", "properties": { "name": "Quarry of Vell" },
      "geometry": { "type": "Polygon", "coordinates": [
        [[0, 0], [10, 0], [10, 10], [0, 10], [0, 0]],
        [[2, 2], [4, 2], [4, 4], [2, 2]] ] } },
    { "type": "Feature", "properties": {},
      "geometry": { "type": "MultiPolygon", "coordinates": [
        [[[20, 0], [30, 0], [30, 5, 112.5], [20, 0]]],
        [[[40, 0], [50, 0], [50, 5], [40, 0]]] ] } },
    { "type": "Feature", "properties": {},
      "geometry": { "type": "GeometryCollection", "geometries": [
        { "type": "Polygon", "coordinates": [[[60, 0], [70, 0], [70, 5], [60, 0]]] } ] } }
  ]
}"#;

#[test]
fn keep_out_text_accepts_every_area_container() {
    let shapes =
        mask::parse_keep_out(MIXED, KeepOutCoords::GridCrs, &crs(None, CrsKind::Unknown)).unwrap();
    assert_eq!(shapes.0.len(), 4);
    assert_eq!(shapes.0[0].interiors().len(), 1);
    assert_eq!(shapes.0[1].exterior().0[2], Coord { x: 30.0, y: 5.0 });
    for text in [
        r#"{"type": "Polygon", "coordinates": [[[0,0],[1,0],[1,1],[0,0]]]}"#,
        r#"{"type": "Feature", "properties": null,
            "geometry": {"type": "Polygon", "coordinates": [[[0,0],[1,0],[1,1],[0,0]]]}}"#,
    ] {
        let s = mask::parse_keep_out(
            text,
            KeepOutCoords::default(),
            &crs(Some(32633), CrsKind::Projected),
        )
        .unwrap();
        assert_eq!(s.0.len(), 1);
    }
}

#[test]
fn keep_out_text_refuses_other_geometries_naming_the_feature() {
    let text = r#"{"type": "FeatureCollection", "features": [
        {"type": "Feature", "properties": {},
         "geometry": {"type": "Polygon", "coordinates": [[[0,0],[1,0],[1,1],[0,0]]]}},
        {"type": "Feature", "properties": {},
         "geometry": {"type": "GeometryCollection", "geometries": [
            {"type": "Point", "coordinates": [3, 4]}]}},
        {"type": "Feature", "properties": {},
         "geometry": {"type": "LineString", "coordinates": [[0,0],[1,1]]}}]}"#;
    let err = mask::parse_keep_out(text, KeepOutCoords::GridCrs, &crs(None, CrsKind::Unknown))
        .unwrap_err();
    assert!(
        matches!(&err, KeepOutError::NotAnArea { kind: "Point", place } if place.starts_with("feature 1")),
        "{err:?}"
    );
    let msg = err.to_string();
    assert!(msg.contains("feature 1") && msg.contains("Point"), "{msg}");
    let line = r#"{"type": "FeatureCollection", "features": [
        {"type": "Feature", "properties": {}, "geometry": null},
        {"type": "Feature", "properties": {},
         "geometry": {"type": "LineString", "coordinates": [[0,0],[1,1]]}}]}"#;
    let err = mask::parse_keep_out(line, KeepOutCoords::GridCrs, &crs(None, CrsKind::Unknown))
        .unwrap_err();
    assert!(
        err.to_string().contains("feature 0 has no geometry"),
        "{err}"
    );
}

#[test]
fn keep_out_text_refuses_bad_rings_and_bad_json() {
    let unknown = crs(None, CrsKind::Unknown);
    let open = r#"{"type": "Polygon", "coordinates": [[[0,0],[1,0],[1,1],[0,1]]]}"#;
    let err = mask::parse_keep_out(open, KeepOutCoords::GridCrs, &unknown).unwrap_err();
    assert!(err.to_string().contains("not closed"), "{err}");
    let short = r#"{"type": "Polygon", "coordinates": [[[0,0],[1,0],[0,0]]]}"#;
    let err = mask::parse_keep_out(short, KeepOutCoords::GridCrs, &unknown).unwrap_err();
    assert!(err.to_string().contains("ring 0: 3 positions"), "{err}");
    let err = mask::parse_keep_out("{\"type\": \"Polygon\"", KeepOutCoords::GridCrs, &unknown)
        .unwrap_err();
    assert!(matches!(err, KeepOutError::Json { .. }), "{err:?}");
}

/// WGS 84 keep-out coordinates into a UTM 32N DEM: the polygon's corners are three
/// points of tests/reference/utm/utm_points.csv, and where they land must be PROJ's
/// easting/northing for them (to 1 mm); the edges in between are densified.
#[test]
fn wgs84_keep_out_lands_where_proj_puts_it_on_a_utm_dem() {
    let corners = [(9.0, 45.0), (12.0, 45.0), (5.99, 60.0)];
    let text = format!(
        r#"{{"type": "Polygon", "coordinates": [[[{}, {}], [{}, {}], [{}, {}], [{}, {}]]]}}"#,
        corners[0].0,
        corners[0].1,
        corners[1].0,
        corners[1].1,
        corners[2].0,
        corners[2].1,
        corners[0].0,
        corners[0].1
    );
    let shapes = mask::parse_keep_out(
        &text,
        KeepOutCoords::Wgs84LonLat,
        &crs(Some(32632), CrsKind::Projected),
    )
    .unwrap();
    let ring = &shapes.0[0].exterior().0;
    let cases = utm_cases();
    for (lon, lat) in corners {
        let c = cases
            .iter()
            .find(|c| c.epsg == 32632 && c.lat_deg == lat && c.lon_deg == lon)
            .expect("corner in the reference file");
        let nearest = ring
            .iter()
            .map(|p| (p.x - c.easting_m).hypot(p.y - c.northing_m))
            .fold(f64::INFINITY, f64::min);
        assert!(nearest < 1e-3, "corner ({lon}, {lat}) off by {nearest} m");
    }
    // 3° and 15° edges in 0.01° pieces: 300 + 1500 + 1500 pieces, plus the closing point.
    assert_eq!(ring.len(), 300 + 1500 + 1500 + 1);
}

#[test]
fn wgs84_keep_out_needs_a_supported_crs() {
    let text = r#"{"type": "Polygon", "coordinates": [[[9,45],[9.1,45],[9.1,45.1],[9,45]]]}"#;
    let geo_dem = crs(Some(4326), CrsKind::Geographic);
    let s = mask::parse_keep_out(text, KeepOutCoords::Wgs84LonLat, &geo_dem).unwrap();
    assert_eq!(s.0[0].exterior().0[1], Coord { x: 9.1, y: 45.0 });
    for bad in [
        crs(None, CrsKind::Projected),
        crs(None, CrsKind::Unknown),
        crs(Some(3035), CrsKind::Projected),
    ] {
        let err = mask::parse_keep_out(text, KeepOutCoords::Wgs84LonLat, &bad).unwrap_err();
        assert!(matches!(err, KeepOutError::Crs { .. }), "{err:?}");
        assert!(err.to_string().contains("Fix:"), "{err}");
    }
    // A point far from the DEM's zone is refused by the projection, naming the ring.
    let err = mask::parse_keep_out(
        text,
        KeepOutCoords::Wgs84LonLat,
        &crs(Some(32650), CrsKind::Projected),
    )
    .unwrap_err();
    assert!(
        matches!(err, KeepOutError::Projection { ring: 0, .. }),
        "{err:?}"
    );
}
