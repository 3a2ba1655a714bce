"""Equinox and solstice instants (UTC) from PyEphem, for sunward's season dates.

Run: python3 -m venv /tmp/venv-ephem && /tmp/venv-ephem/bin/pip install ephem==4.2.1
     /tmp/venv-ephem/bin/python make_seasons.py > ephem_seasons.csv
"""
import ephem

print("# PyEphem", ephem.__version__, ": instants of the March equinox (q=0), June solstice (1),")
print("# September equinox (2) and December solstice (3), UTC")
print("year,quarter,utc")
finders = [ephem.next_vernal_equinox, ephem.next_summer_solstice,
           ephem.next_autumnal_equinox, ephem.next_winter_solstice]
for year in [1990, 2000, 2010, 2020, 2024, 2025, 2026, 2027, 2028, 2030, 2040, 2050, 2075, 2099]:
    for q, find in enumerate(finders):
        t = find(ephem.Date(f"{year}/1/1")).datetime()
        print(f"{year},{q},{t.strftime('%Y-%m-%dT%H:%M:%S')}Z")
