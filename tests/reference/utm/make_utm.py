#!/usr/bin/env python3
"""Make the UTM reference points read by tests/terrain_mask.rs.

Projects WGS 84 longitude/latitude into WGS 84 / UTM zones with pyproj (PROJ), and asks
PROJ for the meridian convergence and point scale at each point. Run:

    python3 -m venv /tmp/utmvenv && /tmp/utmvenv/bin/pip install pyproj
    /tmp/utmvenv/bin/python tests/reference/utm/make_utm.py > tests/reference/utm/utm_points.csv

Deterministic: the points are a fixed list plus a seeded pseudo-random set.
"""
import random
import sys

import pyproj

# (lat_deg, lon_deg, zone, hemisphere) chosen by hand: zone origins, zone edges, points
# that spill over an edge, the equator, high latitudes near both UTM limits, both
# hemispheres and the antimeridian.
FIXED = [
    (0.0, 3.0, 31, "N"),
    (0.0, 0.0, 31, "N"),
    (0.0, 6.0, 31, "N"),
    (45.0, 9.0, 32, "N"),
    (45.0, 12.0, 32, "N"),
    (60.0, 5.99, 32, "N"),
    (83.9, 20.0, 34, "N"),
    (-79.9, -70.0, 19, "S"),
    (-0.0001, -45.0, 23, "S"),
    (-33.9, 151.2, 56, "S"),
    (-54.8, -68.3, 19, "S"),
    (64.1, -21.9, 27, "N"),
    (78.2, 15.6, 33, "N"),
    (-77.85, 166.67, 58, "S"),
    (19.4, -99.1, 14, "N"),
    (51.0, -179.99, 1, "N"),
    (51.0, 179.99, 60, "N"),
    (-16.5, -68.15, 19, "S"),
    (35.0, 141.0, 54, "N"),
    (-8.05, -34.9, 25, "S"),
    (10.0, -60.0, 20, "N"),
    (70.0, 33.0, 36, "N"),
]


def random_points(rng, count):
    out = []
    for _ in range(count):
        zone = rng.randint(1, 60)
        hemi = rng.choice("NS")
        lat = rng.uniform(0.0, 84.0) if hemi == "N" else rng.uniform(-80.0, 0.0)
        cm = -183.0 + 6.0 * zone
        lon = cm + rng.uniform(-4.0, 4.0)
        lon = (lon + 180.0) % 360.0 - 180.0
        out.append((round(lat, 6), round(lon, 6), zone, hemi))
    return out


def main():
    rng = random.Random(20111)
    points = FIXED + random_points(rng, 30)
    geo = pyproj.CRS.from_epsg(4326)
    w = sys.stdout
    w.write("# pyproj %s, PROJ %s\n" % (pyproj.__version__, pyproj.proj_version_str))
    w.write("lat_deg,lon_deg,zone,hemisphere,epsg,easting_m,northing_m,"
            "convergence_deg,scale\n")
    for lat, lon, zone, hemi in points:
        epsg = (32600 if hemi == "N" else 32700) + zone
        utm = pyproj.CRS.from_epsg(epsg)
        tr = pyproj.Transformer.from_crs(geo, utm, always_xy=True)
        e, n = tr.transform(lon, lat)
        f = pyproj.Proj(utm).get_factors(lon, lat)
        w.write("%.6f,%.6f,%d,%s,%d,%.6f,%.6f,%.12f,%.12f\n" % (
            lat, lon, zone, hemi, epsg, e, n, f.meridian_convergence, f.meridional_scale))


if __name__ == "__main__":
    main()
