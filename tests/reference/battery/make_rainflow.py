"""Rainflow reference cycles for sunward's ageing tests, made with the PyPI package
`rainflow` 3.2.0 (ASTM E1049-85 section 5.4.4 three-point algorithm).

    /tmp/venv-bat/bin/pip install rainflow==3.2.0
    /tmp/venv-bat/bin/python tests/reference/battery/make_rainflow.py

Writes rainflow_cases.csv: case, range, mean, count (one row per cycle as
rainflow.extract_cycles yields it), for the ASTM example history and seeded random
SOC-like histories; histories in rainflow_histories.csv (case, index, value).
"""

import os

import numpy as np
import rainflow

HERE = os.path.dirname(os.path.abspath(__file__))

cases = {"astm_e1049_fig6": [-2, 1, -3, 5, -1, 3, -4, 4, -2]}
rng = np.random.default_rng(20270115)
for k in range(3):
    walk = np.clip(0.6 + np.cumsum(rng.normal(0, 0.05, 300)), 0.0, 1.0)
    cases[f"random_soc_{k}"] = [round(float(v), 6) for v in walk]

with open(os.path.join(HERE, "rainflow_histories.csv"), "w") as f:
    f.write("case,index,value\n")
    for name, h in cases.items():
        for i, v in enumerate(h):
            f.write(f"{name},{i},{v}\n")

with open(os.path.join(HERE, "rainflow_cases.csv"), "w") as f:
    f.write(f"# rainflow {rainflow.__version__ if hasattr(rainflow, '__version__') else '3.2.0'}: extract_cycles\n")
    f.write("case,range,mean,count\n")
    for name, h in cases.items():
        for rng_, mean, count, _i0, _i1 in rainflow.extract_cycles(h):
            f.write(f"{name},{rng_:.9f},{mean:.9f},{count}\n")
