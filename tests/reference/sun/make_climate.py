"""Reference values for src/sun/climate.rs (monthly clearness profiles).

Writes, beside this script:
  climate_h0.csv    daily extraterrestrial irradiation on a horizontal plane, Wh/m2, by
                    integrating pvlib's instantaneous extraterrestrial normal irradiance
                    (get_extra_radiation, method "nrel", solar constant 1361 W/m2) times
                    the cosine of pvlib's SPA zenith (solarposition.spa_python, geometric
                    zenith, no refraction) over the UT day at 10 s steps, longitude 0.
  climate_ratio.csv the Collares-Pereira and Rabl (1979) and Liu and Jordan (1960)
                    hourly-to-daily ratios as printed in Duffie and Beckman, Solar
                    Engineering of Thermal Processes, 4th ed. (2013), eqs. 2.13.1 and
                    2.13.2, evaluated here independently of the Rust code (pvlib has no
                    function for them).

    python -m venv /tmp/sunvenv && /tmp/sunvenv/bin/pip install pvlib==0.16.1
    /tmp/sunvenv/bin/python make_climate.py
"""
import csv
import os

import numpy as np
import pandas as pd
import pvlib
from pvlib import spa

HERE = os.path.dirname(os.path.abspath(__file__))
rng = np.random.default_rng(20310621)


def write(name, header, rows):
    with open(os.path.join(HERE, name), "w", newline="") as f:
        w = csv.writer(f)
        w.writerow(header)
        w.writerows(rows)


def daily_h0():
    rows = []
    lats = [-52.0, -33.9, -12.5, 0.0, 15.2, 35.1, 47.8, 61.2, 66.0]
    dates = ["2031-01-17", "2031-03-20", "2031-05-15", "2031-06-21", "2031-08-16",
             "2031-09-23", "2031-11-14", "2031-12-21"]
    for lat in lats:
        for d in dates:
            t = pd.date_range(d, periods=8640, freq="10s", tz="UTC")
            dt = float(spa.calculate_deltat(t[0].year, t[0].month))
            sp = pvlib.solarposition.spa_python(t, lat, 0.0, altitude=0.0, delta_t=dt)
            e0 = pvlib.irradiance.get_extra_radiation(t, solar_constant=1361.0, method="nrel",
                                                      delta_t=dt)
            cosz = np.clip(np.cos(np.radians(sp["zenith"].to_numpy())), 0.0, None)
            h0 = float(np.sum(cosz * e0.to_numpy()) * 10.0 / 3600.0)
            rows.append([d, lat, repr(dt), repr(h0)])
    write("climate_h0.csv", ["date", "lat_deg", "delta_t_s", "h0_wh_m2"], rows)


def ratios():
    rows = []
    for _ in range(40):
        ws = float(rng.uniform(np.radians(40.0), np.radians(150.0)))
        w = float(rng.uniform(-ws, ws))
        rd = np.pi / 24.0 * (np.cos(w) - np.cos(ws)) / (np.sin(ws) - ws * np.cos(ws))
        a = 0.409 + 0.5016 * np.sin(ws - np.pi / 3.0)
        b = 0.6609 - 0.4767 * np.sin(ws - np.pi / 3.0)
        rows.append([repr(w), repr(ws), repr(float(rd)), repr(float(rd * (a + b * np.cos(w))))])
    write("climate_ratio.csv", ["hour_angle_rad", "sunset_rad", "rd_per_h", "rt_per_h"], rows)


if __name__ == "__main__":
    daily_h0()
    ratios()
