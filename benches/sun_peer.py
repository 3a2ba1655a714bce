"""The peer job for benches/sun_peer.sh: one year at 1-minute steps with pvlib (numpy SPA,
Ineichen clear sky with pvlib's Linke lookup, Hay-Davies transposition), written to CSV
with pandas. Also checks that sunward's CSV agrees with it on the sun's position.
Usage: python sun_peer.py OUT.csv SUNWARD.csv LAT LON YEAR TILT AZIMUTH
"""
import sys

import numpy as np
import pandas as pd
import pvlib

out, ours, lat, lon, year, tilt, paz = sys.argv[1], sys.argv[2], *map(float, sys.argv[3:])
times = pd.date_range(f"{int(year)}-01-01", f"{int(year) + 1}-01-01", freq="1min", tz="UTC", inclusive="left")
loc = pvlib.location.Location(lat, lon, altitude=0)
sp = pvlib.solarposition.spa_python(times, lat, lon, altitude=0, temperature=15.0, delta_t=None)
cs = loc.get_clearsky(times, model="ineichen", solar_position=sp)
e0 = pvlib.irradiance.get_extra_radiation(times, solar_constant=1361.0)
poa = pvlib.irradiance.get_total_irradiance(tilt, paz, sp["apparent_zenith"], sp["azimuth"], cs["dni"], cs["ghi"],
                                            cs["dhi"], dni_extra=e0, model="haydavies", albedo=0.2)
df = pd.DataFrame({"apparent_zenith_deg": sp["apparent_zenith"], "azimuth_deg": sp["azimuth"],
                   "ghi_w_m2": cs["ghi"], "dni_w_m2": cs["dni"], "dhi_w_m2": cs["dhi"],
                   "poa_w_m2": poa["poa_global"]}, index=times)
df.index.name = "time_utc"
df.to_csv(out, float_format="%.5f")
if ours != "-":
    s = pd.read_csv(ours)
    dz = np.abs(s["apparent_zenith_deg"].to_numpy() - df["apparent_zenith_deg"].to_numpy())
    print(f"agreement: rows {len(s)} vs {len(df)}, max |d apparent zenith| = {dz.max():.5f} deg "
          f"(CSV rounding 1e-5; sunward uses one Delta T for the span)")
