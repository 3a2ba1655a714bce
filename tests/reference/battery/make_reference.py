"""Outside reference values for sunward's battery tests, made with PyBaMM.

Run from the repository root with a Python that has PyBaMM installed:

    python3 -m venv /tmp/venv-bat && /tmp/venv-bat/bin/pip install pybamm==26.10.1.1 rainflow==3.2.0
    /tmp/venv-bat/bin/python tests/reference/battery/make_reference.py

Writes, next to this script:
  ocv_lfp_prada2013.csv   soc, ocv_v   (PyBaMM set "Prada2013", 25 degC equilibrium)
  ocv_nmc_chen2020.csv    soc, ocv_v   (PyBaMM set "Chen2020", 25 degC equilibrium)
  capacity_vs_temp_nmc_oregan2022.csv  temp_c, capacity_ah, fraction_of_25c
  pulse_resistance.csv    set, temp_c, soc, current_a, resistance_ohm (10 s, 1C pulse)
  versions.txt
The cell OCV is U_p(y) - U_n(x) with the stoichiometries moved linearly between the
0 % and 100 % SOC limits found by PyBaMM's electrode state-of-health solver at the
set's voltage cut-offs (get_min_max_stoichiometries).
"""

import os
import platform
import sys

import numpy as np
import pybamm

HERE = os.path.dirname(os.path.abspath(__file__))


def value(v):
    """Evaluate a PyBaMM expression or a plain number to a float."""
    if isinstance(v, pybamm.Symbol):
        return float(v.evaluate())
    return float(v)


def ocv_table(set_name, out_name):
    p = pybamm.ParameterValues(set_name)
    x0, x100, y100, y0 = pybamm.lithium_ion.get_min_max_stoichiometries(p)
    up = p["Positive electrode OCP [V]"]
    un = p["Negative electrode OCP [V]"]
    rows = []
    for soc in np.linspace(0.0, 1.0, 201):
        x = x0 + soc * (x100 - x0)
        y = y0 + soc * (y100 - y0)
        rows.append((soc, value(up(y)) - value(un(x))))
    with open(os.path.join(HERE, out_name), "w") as f:
        f.write(f"# PyBaMM {pybamm.__version__} parameter set {set_name}; x0={x0:.6f} x100={x100:.6f} y100={y100:.6f} y0={y0:.6f}\n")
        f.write("soc,ocv_v\n")
        for soc, v in rows:
            f.write(f"{soc:.3f},{v:.6f}\n")


def capacity_vs_temperature(set_name, out_name, temps_c, c_rate):
    rows = []
    for t_c in temps_c:
        p = pybamm.ParameterValues(set_name)
        t_k = t_c + 273.15
        p.update({"Ambient temperature [K]": t_k, "Initial temperature [K]": t_k})
        model = pybamm.lithium_ion.DFN()  # isothermal: the cell stays at t_c
        v_min = p["Lower voltage cut-off [V]"]
        exp = pybamm.Experiment([f"Discharge at {c_rate} until {v_min} V"], period="60 seconds")
        sim = pybamm.Simulation(model, parameter_values=p, experiment=exp)
        sol = sim.solve(initial_soc=1.0)
        cap = float(sol["Discharge capacity [A.h]"].entries[-1])
        rows.append((t_c, cap))
        print(set_name, t_c, cap, file=sys.stderr)
    ref = dict(rows)[25.0]
    with open(os.path.join(HERE, out_name), "w") as f:
        f.write(f"# PyBaMM {pybamm.__version__} parameter set {set_name}; DFN isothermal; {c_rate} constant current from 100 % SOC to the lower cut-off\n")
        f.write("temp_c,capacity_ah,fraction_of_25c\n")
        for t_c, cap in rows:
            f.write(f"{t_c:.1f},{cap:.6f},{cap / ref:.6f}\n")


def pulse_resistance(set_name, temp_c, soc, c_rate=1.0, pulse_s=10.0):
    """DC resistance (OCV - V(pulse_s)) / I of a discharge pulse from rest, isothermal."""
    p = pybamm.ParameterValues(set_name)
    t_k = temp_c + 273.15
    p.update({"Ambient temperature [K]": t_k, "Initial temperature [K]": t_k})
    current_a = c_rate * p["Nominal cell capacity [A.h]"]
    exp = pybamm.Experiment(
        [f"Rest for 1 second", f"Discharge at {current_a} A for {pulse_s} seconds"],
        period="0.5 seconds",
    )
    sim = pybamm.Simulation(pybamm.lithium_ion.DFN(), parameter_values=p, experiment=exp)
    sol = sim.solve(initial_soc=soc)
    v = sol["Voltage [V]"].entries
    return (float(v[0]) - float(v[-1])) / current_a, current_a


def resistance_table(out_name, cases):
    with open(os.path.join(HERE, out_name), "w") as f:
        f.write(f"# PyBaMM {pybamm.__version__}; DFN isothermal; 1C discharge pulse of 10 s from rest; r = (V_rest - V_10s) / I\n")
        f.write("set,temp_c,soc,current_a,resistance_ohm\n")
        for set_name, t_c, soc in cases:
            r, i = pulse_resistance(set_name, t_c, soc)
            print(set_name, t_c, soc, r, file=sys.stderr)
            f.write(f"{set_name},{t_c:.1f},{soc:.2f},{i:.4f},{r:.6f}\n")


def main():
    ocv_table("Prada2013", "ocv_lfp_prada2013.csv")
    ocv_table("Chen2020", "ocv_nmc_chen2020.csv")
    capacity_vs_temperature(
        "ORegan2022",
        "capacity_vs_temp_nmc_oregan2022.csv",
        [-20.0, -10.0, 0.0, 10.0, 25.0, 40.0],
        "C/5",
    )
    cases = [("Prada2013", 25.0, s) for s in (0.2, 0.5, 0.8)]
    cases += [("Chen2020", 25.0, s) for s in (0.2, 0.5, 0.8)]
    cases += [("ORegan2022", t, 0.5) for t in (-20.0, -10.0, 0.0, 10.0, 25.0, 40.0)]
    cases += [("ORegan2022", 25.0, s) for s in (0.2, 0.8)]
    resistance_table("pulse_resistance.csv", cases)
    import casadi
    with open(os.path.join(HERE, "versions.txt"), "w") as f:
        f.write(f"python {platform.python_version()}\n")
        f.write(f"pybamm {pybamm.__version__}\n")
        f.write(f"numpy {np.__version__}\n")
        f.write(f"casadi {casadi.__version__}\n")


if __name__ == "__main__":
    main()
