"""Extraterrestrial irradiance, air mass, Ineichen-Perez clear sky, Erbs decomposition,
plane-of-array irradiance and Faiman cell temperature reference values from pvlib.

Writes clearsky.csv, erbs.csv, poa.csv and faiman.csv beside this script:
    python make_irradiance.py
"""
import csv
import os

import numpy as np
import pandas as pd
import pvlib
from pvlib import spa

HERE = os.path.dirname(os.path.abspath(__file__))
rng = np.random.default_rng(7321)


def write(name, header, rows):
    with open(os.path.join(HERE, name), "w", newline="") as f:
        w = csv.writer(f)
        w.writerow(header)
        w.writerows(rows)


def r(x):
    return repr(float(np.asarray(x).ravel()[0]))


def clearsky():
    rows = []
    sites = [(-78.5, 106.9, 3200.0), (-33.9, 18.4, 50.0), (0.3, 36.8, 1800.0), (35.1, -106.6, 1600.0),
             (47.8, 8.2, 400.0), (61.2, -149.9, 40.0), (69.6, 18.9, 10.0), (78.2, 15.6, 5.0)]
    for lat, lon, elev in sites:
        for k in range(4):
            t = pd.Timestamp(year=int(rng.integers(2000, 2051)), month=int(rng.integers(1, 13)),
                             day=int(rng.integers(1, 29)), tz="UTC") + pd.Timedelta(
                                 seconds=int(rng.integers(0, 86400)))
            idx = pd.DatetimeIndex([t])
            dt = float(spa.calculate_deltat(t.year, t.month))
            p_pa = float(pvlib.atmosphere.alt2pres(elev))
            sp = pvlib.solarposition.spa_python(idx, lat, lon, altitude=elev, pressure=p_pa,
                                                temperature=12.0, delta_t=dt)
            zen = float(sp["apparent_zenith"].iloc[0])
            if zen >= 89.5:
                # Keep the clear-sky rows to the lit sky; a night case stays below.
                t = t.replace(hour=(t.hour + 12) % 24)
                idx = pd.DatetimeIndex([t])
                sp = pvlib.solarposition.spa_python(idx, lat, lon, altitude=elev, pressure=p_pa,
                                                    temperature=12.0, delta_t=dt)
                zen = float(sp["apparent_zenith"].iloc[0])
            tl = float(np.round(rng.uniform(1.8, 6.0), 2))
            e0 = float(pvlib.irradiance.get_extra_radiation(idx, solar_constant=1361.0, method="nrel",
                                                            delta_t=dt).iloc[0])
            am_rel = float(pvlib.atmosphere.get_relative_airmass(zen, model="kastenyoung1989"))
            am_abs = float(pvlib.atmosphere.get_absolute_airmass(am_rel, p_pa))
            cs = pvlib.clearsky.ineichen(zen, am_abs, tl, altitude=elev, dni_extra=e0)
            rows.append([t.strftime("%Y-%m-%dT%H:%M:%SZ"), lat, lon, elev, r(p_pa / 100), 12.0, r(dt), tl,
                         r(zen), r(e0), r(am_rel), r(am_abs), r(cs["ghi"]), r(cs["dni"]), r(cs["dhi"])])
    write("clearsky.csv", ["time_utc", "lat_deg", "lon_deg", "elevation_m", "pressure_hpa", "temperature_c",
                           "delta_t_s", "linke_turbidity", "apparent_zenith_deg", "dni_extra_w_m2",
                           "airmass_relative", "airmass_absolute", "ghi_w_m2", "dni_w_m2", "dhi_w_m2"], rows)


def erbs():
    rows = []
    for k in range(40):
        doy = int(rng.integers(1, 366))
        zen = float(np.round(rng.uniform(0, 89.9), 3))
        e0 = float(pvlib.irradiance.get_extra_radiation(doy))
        ghi = float(np.round(rng.uniform(0, 1.05) * e0 * max(np.cos(np.radians(zen)), 0.02), 2))
        out = pvlib.irradiance.erbs(ghi, zen, doy)
        rows.append([doy, r(zen), r(ghi), r(e0), r(out["dni"]), r(out["dhi"]), r(out["kt"])])
    write("erbs.csv", ["day_of_year", "zenith_deg", "ghi_w_m2", "dni_extra_w_m2", "dni_w_m2", "dhi_w_m2", "kt"], rows)


def poa():
    rows = []
    states = []
    for k in range(8):
        zen = float(np.round(rng.uniform(5, 88), 3))
        az = float(np.round(rng.uniform(0, 360), 3))
        e0 = float(np.round(rng.uniform(1316, 1409), 2))
        cosz = np.cos(np.radians(zen))
        dni = float(np.round(rng.uniform(0, 0.85) * e0 * (1 - 0.5 * zen / 90), 2))
        dhi = float(np.round(rng.uniform(20, 300), 2))
        ghi = dhi + dni * cosz
        states.append((zen, az, e0, dni, dhi, ghi))
    planes = [(0, 180), (20, 180), (35, 135), (50, 270), (90, 0), (70, 200), (15, 90), (120, 180)]
    for (zen, az, e0, dni, dhi, ghi) in states:
        am = float(pvlib.atmosphere.get_relative_airmass(zen))
        for tilt, paz in planes:
            for albedo in (0.2, 0.8):
                for model in ("isotropic", "haydavies", "perez"):
                    out = pvlib.irradiance.get_total_irradiance(
                        tilt, paz, zen, az, dni, ghi, dhi, dni_extra=e0, airmass=am, albedo=albedo,
                        model=model)
                    rows.append([model, tilt, paz, albedo, r(zen), r(az), r(e0), r(am), r(dni), r(ghi), r(dhi),
                                 r(out["poa_global"]), r(out["poa_direct"]), r(out["poa_sky_diffuse"]),
                                 r(out["poa_ground_diffuse"])])
    write("poa.csv", ["model", "tilt_deg", "panel_azimuth_deg", "albedo", "zenith_deg", "azimuth_deg",
                      "dni_extra_w_m2", "airmass_relative", "dni_w_m2", "ghi_w_m2", "dhi_w_m2",
                      "poa_global_w_m2", "poa_direct_w_m2", "poa_sky_diffuse_w_m2",
                      "poa_ground_diffuse_w_m2"], rows)


def faiman():
    rows = []
    for k in range(20):
        g = float(np.round(rng.uniform(0, 1200), 1))
        ta = float(np.round(rng.uniform(-40, 45), 1))
        ws = float(np.round(rng.uniform(0, 15), 2))
        rows.append([g, ta, ws, r(pvlib.temperature.faiman(g, ta, ws))])
    write("faiman.csv", ["poa_w_m2", "air_temp_c", "wind_m_s", "module_temp_c"], rows)


def singleaxis():
    rows = []
    for k in range(30):
        zen = float(np.round(rng.uniform(2, 89), 3))
        az = float(np.round(rng.uniform(0, 360), 3))
        axis_az = float(np.round(rng.uniform(0, 180), 2))
        max_angle = float(rng.choice([45.0, 60.0, 90.0]))
        out = pvlib.tracking.singleaxis(zen, az, axis_tilt=0, axis_azimuth=axis_az, max_angle=max_angle,
                                        backtrack=False)
        rows.append([r(zen), r(az), axis_az, max_angle, r(out["tracker_theta"]), r(out["surface_tilt"]),
                     r(out["surface_azimuth"]), r(out["aoi"])])
    write("singleaxis.csv", ["zenith_deg", "azimuth_deg", "axis_azimuth_deg", "max_angle_deg", "rotation_deg",
                             "surface_tilt_deg", "surface_azimuth_deg", "aoi_deg"], rows)


if __name__ == "__main__":
    clearsky()
    erbs()
    poa()
    faiman()
    singleaxis()
    print("pvlib", pvlib.__version__)
