#!/usr/bin/env python3
"""Regenerate hxgrid's built-in fluid tables (fluids/*.csv) and the held-out check points
(tests/fixtures/fluid_holdout.csv) from CoolProp, the open-source property library on PyPI.

    pip install -r tools/requirements.txt
    python3 tools/make_fluid_tables.py

The Rust program never runs this: the generated files are committed and compiled in.
Held-out points lie between table points (never used to build a table), so the tests
measure the interpolation error against the source.
"""
import datetime
import os

import CoolProp
import CoolProp.CoolProp as CP
import numpy as np

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(HERE)
DATE = datetime.date.today().isoformat()
P_ATM = 101325.0
R_UNIVERSAL = 8.314462618
M_AIR = 0.0289647  # kg/mol, CoolProp's "Air" pseudo-pure fluid molar mass [CP]


def props(fluid, t_k, p_pa):
    return [CP.PropsSI(k, "T", t_k, "P", p_pa, fluid) for k in ("D", "C", "V", "L", "H")]


def grid_co2(p_pa):
    """Fine near the pseudo-critical cp peak (found first on a 0.01 K scan), coarse elsewhere."""
    scan = np.arange(278.15, 423.15, 0.01)
    cp = [CP.PropsSI("C", "T", t, "P", p_pa, "CO2") for t in scan]
    t_peak = scan[int(np.argmax(cp))]
    pts = set(np.round(np.arange(278.15, 423.15 + 1e-9, 1.0), 6))
    pts |= set(np.round(np.arange(t_peak - 8, t_peak + 8, 0.1), 6))
    pts |= set(np.round(np.arange(t_peak - 2, t_peak + 2, 0.02), 6))
    pts.add(round(t_peak, 6))
    return sorted(p for p in pts if 278.15 <= p <= 423.15)


# name, CoolProp fluid, description, temperatures (K), pressure for the table (Pa), extra header lines
FLUIDS = []
for frac in (30, 50):
    for code, label in (("MEG", "ethylene-glycol"), ("MPG", "propylene-glycol")):
        fluid = f"INCOMP::{code}[{frac / 100}]"
        t_freeze = CP.PropsSI("T_freeze", "T", 300, "P", P_ATM, fluid)
        lo = np.ceil(t_freeze + 2.0)
        FLUIDS.append((
            f"{label}-{frac}",
            fluid,
            f"{label.replace('-', ' ')}–water, {frac} % {label.split('-')[0]} glycol by mass; lower end 2 K above freezing ({t_freeze - 273.15:.1f} °C)",
            list(np.arange(lo, 373.15 + 1e-9, 2.0)),
            P_ATM,
            [],
        ))
FLUIDS.append((
    "thermal-oil",
    "INCOMP::T66",
    "synthetic heat-transfer oil (CoolProp incompressible fit 'T66' for a hydrogenated terphenyl oil)",
    list(np.arange(273.15, 613.15 + 1e-9, 2.0)),
    P_ATM,
    [],
))
FLUIDS.append((
    "air",
    "Air",
    "dry air; cp, viscosity and conductivity at 1 atm; density from the ideal-gas law at the stream pressure",
    list(np.arange(223.15, 1073.15 + 1e-9, 10.0)),
    P_ATM,
    [f"# ideal_gas_molar_mass_kg_mol: {M_AIR}"],
))
for p_mpa in (8, 10, 12):
    FLUIDS.append((
        f"co2-{p_mpa}MPa",
        "CO2",
        f"carbon dioxide at {p_mpa} MPa (supercritical pressure; pseudo-critical cp peak resolved by fine spacing)",
        grid_co2(p_mpa * 1e6),
        p_mpa * 1e6,
        [f"# pressure_Pa: {p_mpa * 1e6:.0f}"],
    ))


def main():
    version = CoolProp.__version__
    holdout = ["fluid,temperature_C,density_kg_m3,specific_heat_J_kgK,viscosity_Pa_s,conductivity_W_mK,enthalpy_from_first_point_J_kg"]
    for name, fluid, desc, temps, p_pa, extra in FLUIDS:
        lines = [
            "# hxgrid fluid table",
            f"# name: {name}",
            f"# description: {desc}",
            f"# source: CoolProp {version} (PyPI), fluid '{fluid}' at {p_pa:.0f} Pa; generated {DATE} by tools/make_fluid_tables.py",
            *extra,
            "temperature_C,density_kg_m3,specific_heat_J_kgK,viscosity_Pa_s,conductivity_W_mK",
        ]
        h0 = None
        for t in temps:
            d, c, v, l, h = props(fluid, t, p_pa)
            h0 = h if h0 is None else h0
            lines.append(f"{t - 273.15:.4f},{d:.10g},{c:.10g},{v:.10g},{l:.10g}")
        # Held-out points: midpoints of every third interval (never table points).
        for a, b in list(zip(temps[:-1], temps[1:]))[::3]:
            t = 0.5 * (a + b)
            d, c, v, l, h = props(fluid, t, p_pa)
            holdout.append(f"{name},{t - 273.15:.6f},{d:.10g},{c:.10g},{v:.10g},{l:.10g},{h - h0:.10g}")
        with open(os.path.join(ROOT, "fluids", f"{name}.csv"), "w") as f:
            f.write("\n".join(lines) + "\n")
        print(f"fluids/{name}.csv: {len(temps)} points, {temps[0] - 273.15:.2f} … {temps[-1] - 273.15:.2f} °C")
    with open(os.path.join(ROOT, "tests", "fixtures", "fluid_holdout.csv"), "w") as f:
        f.write(f"# held-out check points from CoolProp {version}, generated {DATE} by tools/make_fluid_tables.py\n")
        f.write("\n".join(holdout) + "\n")


if __name__ == "__main__":
    main()
