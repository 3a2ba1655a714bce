#!/usr/bin/env python3
"""Outside check values for sunward's soft-soil traction model.

Reads soil_table.csv and writes bekker_cases.csv. Every value comes from numerical
integration with SciPy of the model's *defining* relations, not from the closed forms
that sunward implements:

- z_arc_m: static sinkage of a rigid wheel that balances its load W against Bekker's
  pressure p = (kc/b + kphi) z^n integrated over the front half of the true circular
  contact arc, W = b * integral_0^xf p(z(x)) dx, z(x) = z0 - (R - sqrt(R^2 - x^2)),
  xf = sqrt(2 R z0 - z0^2) (Bekker's assumptions; no small-sinkage approximation).
- z_par_m: the same balance with Bekker's small-sinkage arc x^2 = D (z0 - z); sunward's
  closed form must reproduce this one to rounding.
- z_bekker_m: Bekker's closed form z0 = [3W / ((3-n)(kc + b kphi) sqrt(D))]^(2/(2n+1))
  evaluated here in Python, a second implementation of the formula sunward uses (it
  catches coding and unit slips, not model error). The closed form also truncates a
  series: it replaces B(n+1, 1/2)/2 by (3-n)/3, exact only at n = 1; the column
  series_ratio = ((3-n)/3) / (B(n+1, 1/2)/2) (scipy.special.beta) measures that.
- rc_n: compaction resistance at z_par_m, R_c = b * integral_0^z0 p(z) dz (the work of
  vertical compaction per unit travel).
- thrust_n_i{10,30,60}: wheel thrust at slip 0.1, 0.3, 0.6 from the shear stress
  tau(x) = (c + p tan phi) (1 - exp(-i x / K)) integrated over a contact of length
  l = sqrt(D z_par) and width b under uniform pressure p = W / (b l).

Run: python3 make_bekker.py  (numpy and scipy; versions are written to versions.txt)
"""
import csv
import math
import pathlib

import numpy
import scipy
from scipy.integrate import quad
from scipy.optimize import brentq
from scipy.special import beta

HERE = pathlib.Path(__file__).parent
WHEELS = [(0.30, 0.12), (0.50, 0.20), (1.00, 0.30)]  # (diameter m, width m)
LOADS_N = [50.0, 150.0, 400.0]
SLIPS = [0.1, 0.3, 0.6]


def soils():
    rows = []
    with open(HERE / "soil_table.csv") as f:
        for line in f:
            if line.startswith("#") or not line.strip():
                continue
            name, n, kc, kphi, c, phi, k_mm, _ = line.split(",", 7)
            rows.append(dict(name=name, n=float(n), kc=float(kc) * 1e3, kphi=float(kphi) * 1e3,
                             c=float(c) * 1e3, phi=math.radians(float(phi)), K=float(k_mm) / 1e3))
    return rows


def pressure(s, b, z):
    return (s["kc"] / b + s["kphi"]) * max(z, 0.0) ** s["n"]


def load_arc(s, d, b, z0):
    r = d / 2.0
    xf = math.sqrt(max(2.0 * r * z0 - z0 * z0, 0.0))
    f = lambda x: pressure(s, b, z0 - (r - math.sqrt(r * r - x * x)))
    return b * quad(f, 0.0, xf, epsabs=0, epsrel=1e-10, limit=400)[0]


def load_par(s, d, b, z0):
    xf = math.sqrt(d * z0)
    f = lambda x: pressure(s, b, z0 - x * x / d)
    return b * quad(f, 0.0, xf, epsabs=0, epsrel=1e-10, limit=400)[0]


def solve(fun, w, hi):
    """Sinkage in (0, hi) that carries w; None when even hi does not (wheel buried)."""
    if fun(hi) < w:
        return None
    return brentq(lambda z: fun(z) - w, 1e-12, hi, xtol=1e-16, rtol=1e-13, maxiter=500)


def bekker_closed_form(s, d, b, w):
    n = s["n"]
    return (3.0 * w / ((3.0 - n) * (s["kc"] + b * s["kphi"]) * math.sqrt(d))) ** (2.0 / (2.0 * n + 1.0))


def thrust(s, d, b, w, z, slip):
    l = math.sqrt(d * z)
    p = w / (b * l)
    tau_max = s["c"] + p * math.tan(s["phi"])
    f = lambda x: tau_max * (1.0 - math.exp(-slip * x / s["K"]))
    return b * quad(f, 0.0, l, epsabs=0, epsrel=1e-12)[0]


def main():
    out = HERE / "bekker_cases.csv"
    with open(out, "w", newline="") as f:
        w = csv.writer(f)
        w.writerow(["soil", "diameter_m", "width_m", "load_n", "z_arc_m", "z_par_m", "z_bekker_m",
                    "series_ratio", "rc_n",
                    "thrust_n_i10", "thrust_n_i30", "thrust_n_i60"])
        for s in soils():
            for d, b in WHEELS:
                for load in LOADS_N:
                    hi = 0.999 * d / 2.0
                    z_arc = solve(lambda z: load_arc(s, d, b, z), load, hi)
                    z_par = solve(lambda z: load_par(s, d, b, z), load, hi)
                    if z_arc is None or z_par is None:
                        continue  # sinks past the axle: outside the model, no case
                    rc = b * quad(lambda z: pressure(s, b, z), 0.0, z_par, epsabs=0, epsrel=1e-12)[0]
                    th = [thrust(s, d, b, load, z_par, i) for i in SLIPS]
                    z_bek = bekker_closed_form(s, d, b, load)
                    ratio = ((3.0 - s["n"]) / 3.0) / (beta(s["n"] + 1.0, 0.5) / 2.0)
                    vals = [z_arc, z_par, z_bek, ratio, rc] + th
                    w.writerow([s["name"], d, b, load] + ["%.12e" % v for v in vals])
    (HERE / "versions.txt").write_text(
        f"python {'.'.join(map(str, __import__('sys').version_info[:3]))}\n"
        f"numpy {numpy.__version__}\nscipy {scipy.__version__}\n")
    print("wrote", out)


if __name__ == "__main__":
    main()
