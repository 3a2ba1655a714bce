"""Daily clear-sky GHI integrals for the mission runner's outside check.

For each case: pvlib's NREL SPA (spa_python, 15 degC, the site's pressure) gives the
apparent zenith and the Earth-Sun distance every minute of the UTC day; pvlib's Ineichen
clear sky gets absolute air mass (Kasten-Young 1989 at that pressure), the Linke turbidity
given, the altitude and an extraterrestrial normal irradiance of 1361 W/m2 / R^2 (the same
definition sunward uses; pvlib's default would be Spencer's 1366.1 W/m2 series). The daily
integral is the sum of the minute values (midpoint rule at minute centres), in Wh/m2.

Run: python -m venv /tmp/sunvenv && /tmp/sunvenv/bin/pip install pvlib==0.16.1
     /tmp/sunvenv/bin/python make_daily_ghi.py > daily_ghi.csv
"""
import numpy as np
import pandas as pd
import pvlib

CASES = [
    # name, lat, lon, altitude m, UTC date, Linke turbidity
    ("high-latitude midsummer", 70.2, 24.0, 350.0, "2031-06-21", 3.0),
    ("mid-latitude equinox", 45.3, 7.5, 600.0, "2031-03-20", 3.0),
    ("southern midsummer", -33.9, 18.4, 50.0, "2031-12-21", 4.0),
    ("high-latitude late autumn", 70.2, 24.0, 350.0, "2031-11-01", 2.5),
]

print("name,lat_deg,lon_deg,altitude_m,pressure_hpa,date_utc,linke,daily_ghi_wh_m2")
for name, lat, lon, alt, date, tl in CASES:
    times = pd.date_range(f"{date} 00:00:30", periods=1440, freq="1min", tz="UTC")
    pressure_pa = pvlib.atmosphere.alt2pres(alt)
    sp = pvlib.solarposition.spa_python(times, lat, lon, altitude=alt, pressure=pressure_pa, temperature=15.0)
    r_au = pvlib.solarposition.nrel_earthsun_distance(times)
    dni_extra = 1361.0 / r_au**2
    am_rel = pvlib.atmosphere.get_relative_airmass(sp["apparent_zenith"], model="kastenyoung1989")
    am_abs = pvlib.atmosphere.get_absolute_airmass(am_rel, pressure_pa)
    cs = pvlib.clearsky.ineichen(sp["apparent_zenith"], am_abs, tl, altitude=alt, dni_extra=dni_extra)
    ghi = np.nan_to_num(cs["ghi"].to_numpy())
    daily = ghi.sum() * 60.0 / 3600.0
    print(f"{name},{lat},{lon},{alt},{pressure_pa / 100.0:.4f},{date},{tl},{daily:.4f}")
