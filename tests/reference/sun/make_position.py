"""Sun position, rise/transit/set and Delta T reference values from pvlib.

Writes position.csv, events.csv and deltat.csv beside this script. Run with a Python
that has pvlib installed (see README.md for the versions used):
    python make_position.py
"""
import csv
import os

import numpy as np
import pandas as pd
import pvlib
from pvlib import spa

HERE = os.path.dirname(os.path.abspath(__file__))
rng = np.random.default_rng(20240605)

# Latitudes from -80 to +80, every season, years 2000-2050, including polar night
# and midnight-sun dates at the high latitudes.
LATS = [-80, -72.5, -66, -55.3, -43.2, -33.9, -20.1, -5.5, 0.0, 9.7, 23.4, 35.1,
        47.8, 60.2, 66.6, 71.3, 78.2, 80.0]


def position_cases():
    rows = []
    for i, lat in enumerate(LATS):
        for k in range(2):
            year = int(rng.integers(2000, 2051))
            month = int(rng.integers(1, 13))
            day = int(rng.integers(1, 29))
            secs = int(rng.integers(0, 86400))
            lon = float(np.round(rng.uniform(-180, 180), 4))
            elev = float(np.round(rng.uniform(0, 3000), 1))
            press_hpa = float(np.round(rng.uniform(700, 1030), 1))
            temp_c = float(np.round(rng.uniform(-30, 35), 1))
            t = pd.Timestamp(year=year, month=month, day=day, tz="UTC") + pd.Timedelta(seconds=secs)
            rows.append((t, lat, lon, elev, press_hpa, temp_c))
    return rows


def write_positions():
    out = []
    for t, lat, lon, elev, p_hpa, temp_c in position_cases():
        dt = float(spa.calculate_deltat(t.year, t.month))
        idx = pd.DatetimeIndex([t])
        sp = pvlib.solarposition.spa_python(idx, lat, lon, altitude=elev, pressure=p_hpa * 100,
                                            temperature=temp_c, delta_t=dt)
        esd = pvlib.solarposition.nrel_earthsun_distance(idx, delta_t=dt).iloc[0]
        out.append([t.strftime("%Y-%m-%dT%H:%M:%SZ"), lat, lon, elev, p_hpa, temp_c, repr(dt),
                    repr(float(sp["zenith"].iloc[0])), repr(float(sp["apparent_zenith"].iloc[0])),
                    repr(float(sp["azimuth"].iloc[0])), repr(float(sp["equation_of_time"].iloc[0])),
                    repr(float(esd))])
    with open(os.path.join(HERE, "position.csv"), "w", newline="") as f:
        w = csv.writer(f)
        w.writerow(["time_utc", "lat_deg", "lon_deg", "elevation_m", "pressure_hpa", "temperature_c",
                    "delta_t_s", "zenith_deg", "apparent_zenith_deg", "azimuth_deg",
                    "equation_of_time_min", "earth_sun_distance_au"])
        w.writerows(out)


def ut_day_events(date, lat, lon, dt):
    """pvlib's SPA events for the UT days date-2 .. date+2 (each computed for its UT day)."""
    days = pd.date_range(date - pd.Timedelta(days=2), periods=5, freq="D", tz="UTC")
    ev = pvlib.solarposition.sun_rise_set_transit_spa(days, lat, lon, delta_t=dt)
    def col(name):
        return [v for v in ev[name] if not pd.isna(v)]
    return col("sunrise"), col("transit"), col("sunset")


H0_DEG = -0.8333  # SPA A.2 standard altitude of sunrise and sunset


def true_elevation(times, lat, lon, dt):
    return pvlib.solarposition.spa_python(times, lat, lon, delta_t=dt)["elevation"].to_numpy()


def crossing(lo, lat, lon, dt, step_s):
    """Crossing of H0 inside [lo, lo + step] by pvlib's SPA elevation sampled every
    second, linear between the two samples that bracket it."""
    times = pd.date_range(lo, lo + pd.Timedelta(seconds=step_s), freq="1s")
    f = true_elevation(times, lat, lon, dt) - H0_DEG
    i = int(np.nonzero(np.sign(f[:-1]) != np.sign(f[1:]))[0][0])
    frac = f[i] / (f[i] - f[i + 1])
    return times[i] + pd.Timedelta(seconds=float(frac))


def local_solar_day_events(date, lat, lon, dt):
    """Events of sunward's local mean solar day from pvlib's SPA: the transit of
    sun_rise_set_transit_spa inside [date 00:00 - lon/15 h, +24 h); then the crossings
    of H0 by pvlib's spa_python true elevation within 12 h before it (sunrise) and 12 h
    after it (sunset), found on a 1-minute scan and refined on a 1-second grid.

    pvlib's own A.2 sunrise/sunset are not used directly: like SPA's A.2 they work on
    the UT day and, where an event falls on the neighbouring UT day, carry the
    neighbouring day's declination (off by minutes at high latitudes)."""
    _, transits, _ = ut_day_events(date, lat, lon, dt)
    start = pd.Timestamp(date, tz="UTC") - pd.Timedelta(hours=lon / 15.0)
    end = start + pd.Timedelta(hours=24)
    transit = [t for t in transits if start <= t < end][0]
    scan = pd.date_range(transit - pd.Timedelta(hours=12), transit + pd.Timedelta(hours=12), freq="60s")
    f = true_elevation(scan, lat, lon, dt) - H0_DEG
    mid = len(scan) // 2
    rise = sset = None
    for i in np.nonzero(np.sign(f[:-1]) != np.sign(f[1:]))[0]:
        if i < mid and f[i] < 0 < f[i + 1]:
            rise = crossing(scan[i], lat, lon, dt, 60)
        if i >= mid and f[i] > 0 > f[i + 1]:
            sset = crossing(scan[i], lat, lon, dt, 60) if sset is None else sset
    return rise, transit, sset


EVENT_CASES = [
    # (date, lat, lon): mid-latitudes both hemispheres, date-line longitudes, polar
    # night, midnight sun, and the edges of the polar seasons.
    ("2003-10-17", 39.742476, -105.1786), ("2012-03-20", 0.0, 0.0),
    ("2019-06-21", 51.48, -0.0), ("2019-12-21", 51.48, -0.0),
    ("2024-01-15", -33.9, 151.2), ("2030-07-04", -33.9, 151.2),
    ("2041-09-30", 35.7, 139.7), ("2008-02-29", 64.1, -21.9),
    ("2025-06-21", 78.2, 15.6), ("2025-12-21", 78.2, 15.6),
    ("2025-04-18", 78.2, 15.6), ("2025-08-25", 78.2, 15.6),
    ("2002-12-21", -77.8, 166.7), ("2002-06-21", -77.8, 166.7),
    ("2050-06-10", 69.6, 18.9), ("2050-11-28", 69.6, 18.9),
    ("2016-05-01", -5.5, -179.5), ("2016-05-01", 12.0, 179.5),
    ("2000-01-01", 47.8, 8.2), ("2037-10-05", -55.3, -68.3),
    ("2021-03-01", 66.6, 25.7), ("2021-09-22", -66.6, 110.5),
    ("2045-12-01", 23.4, -82.4), ("2033-08-08", -43.2, 172.6),
    ("2027-02-14", 60.2, 24.9), ("2018-06-21", 80.0, -60.0),
    ("2018-12-21", -80.0, 0.0), ("2014-11-11", 9.7, -84.1),
    ("2022-05-20", 71.3, -156.8), ("2022-01-10", 71.3, -156.8),
]


def day_kind(rise, transit, sset, lat, lon, dt):
    """normal when pvlib finds a rise or a set; otherwise polar_night or midnight_sun by
    pvlib's true elevation at transit against SPA's h0' = -0.8333 deg."""
    if rise is not None or sset is not None:
        return "normal"
    el = pvlib.solarposition.spa_python(pd.DatetimeIndex([transit]), lat, lon, delta_t=dt)["elevation"].iloc[0]
    return "midnight_sun" if el > -0.8333 else "polar_night"


def fmt(t):
    return "" if t is None else t.strftime("%Y-%m-%dT%H:%M:%S.%fZ")


def write_events():
    with open(os.path.join(HERE, "events.csv"), "w", newline="") as f:
        w = csv.writer(f)
        w.writerow(["date", "lat_deg", "lon_deg", "delta_t_s", "day_kind", "sunrise_utc", "transit_utc", "sunset_utc"])
        for d, lat, lon in EVENT_CASES:
            date = pd.Timestamp(d)
            dt = float(spa.calculate_deltat(date.year, date.month))
            r, t, s = local_solar_day_events(date, lat, lon, dt)
            w.writerow([d, lat, lon, repr(dt), day_kind(r, t, s, lat, lon, dt), fmt(r), fmt(t), fmt(s)])


def write_deltat():
    with open(os.path.join(HERE, "deltat.csv"), "w", newline="") as f:
        w = csv.writer(f)
        w.writerow(["year", "month", "delta_t_s"])
        for year in [1950, 1970, 1990, 2000, 2004, 2005, 2010, 2020, 2030, 2049, 2050, 2100, 2200]:
            for month in [1, 7]:
                w.writerow([year, month, repr(float(spa.calculate_deltat(year, month)))])


if __name__ == "__main__":
    write_positions()
    write_events()
    write_deltat()
    print("pvlib", pvlib.__version__, "numpy", np.__version__, "pandas", pd.__version__)
