#!/usr/bin/env python3
"""Reference values for pipe friction, whole-pipe pressure gradients and
fitting loss coefficients, written to tests/reference/fixtures/friction.json.

Pinned versions: fluids==1.3.1, iapws==1.5.5 (Python 3).
Run from the repository root:

    pip install fluids==1.3.1 iapws==1.5.5
    python3 tests/reference/gen_friction.py

The Rust reference test tests/tests/reference/friction.rs reads the JSON; it
does not need Python.
"""

import json
import math
import pathlib
import re

import fluids
import iapws
from fluids.friction import Colebrook, friction_factor
from fluids.fittings import (
    K_branch_converging_Crane,
    K_branch_diverging_Crane,
    K_run_converging_Crane,
    K_run_diverging_Crane,
    bend_miter,
    bend_rounded,
    contraction_conical,
    contraction_sharp,
    diffuser_sharp,
)

assert fluids.__version__ == "1.3.1", fluids.__version__
assert iapws.__version__ == "1.5.5", iapws.__version__

ROOT = pathlib.Path(__file__).resolve().parents[2]
OUT = ROOT / "tests" / "reference" / "fixtures" / "friction.json"
PIPES = ROOT / "assets" / "pipes"

# Absolute pressure of the water properties (flowrise's default system
# pressure, core/src/water.rs SYSTEM_PRESSURE_PA), MPa.
P_MPA = 0.3


def read_series(series_id):
    """Roughness (m) and {label: inner diameter m} from a catalog RON file."""
    text = (PIPES / f"{series_id}.ron").read_text()
    rough = float(re.search(r"roughness_m:\s*([0-9.eE+-]+)", text).group(1))
    sizes = {}
    for m in re.finditer(
        r'label:\s*"([^"]+)",\s*outer_diameter_mm:\s*([0-9.]+),\s*wall_mm:\s*([0-9.]+)', text
    ):
        sizes[m.group(1)] = (float(m.group(2)) - 2.0 * float(m.group(3))) * 1e-3
    return rough, sizes


def colebrook_grid():
    res = [4e3 * (1e7 / 4e3) ** (i / 24) for i in range(25)]
    rrs = [0.0, 1e-6, 1e-5, 1e-4, 1e-3, 5e-3, 1e-2, 2e-2, 5e-2]
    # fluids.friction.Colebrook (exact solution via the Lambert W function).
    return [{"re": re_, "rr": rr, "f": Colebrook(re_, rr)} for re_ in res for rr in rrs]


def transition_colebrook():
    """Colebrook-White in the transition range 2000 < Re < 4000, where the
    design takes the larger of its interpolation and Colebrook-White
    (fluids.friction.Colebrook evaluated below its usual range on purpose)."""
    res = [2100.0, 2500.0, 3000.0, 3500.0, 3900.0]
    rrs = [0.0, 1e-4, 1e-3, 1e-2]
    return [{"re": re_, "rr": rr, "f": Colebrook(re_, rr)} for re_ in res for rr in rrs]


def pipe_cases():
    cases = [
        # series, size, water temperature °C, mass flow kg/s
        ("steel-en10255-medium", "DN20", 70.0, 0.20),
        ("steel-en10255-medium", "DN50", 55.0, 1.50),
        ("steel-en10255-medium", "DN100", 80.0, 6.00),
        ("steel-en10220-welded", "DN300", 70.0, 60.0),
        ("steel-en10220-welded", "DN600", 75.0, 250.0),
        ("copper-en1057", "15x1", 60.0, 0.05),
        ("copper-en1057", "28x1.5", 45.0, 0.30),
        ("pex-iso15875", "16x2", 35.0, 0.040),
        ("pert-iso22391", "20x2", 40.0, 0.080),
        ("multilayer-iso21003", "26x3", 50.0, 0.25),
        ("multilayer-iso21003", "16x2", 30.0, 0.010),  # laminar (Re < 2000)
    ]
    out = []
    for series_id, label, t_c, m in cases:
        rough, sizes = read_series(series_id)
        d = sizes[label]
        w = iapws.IAPWS97(T=t_c + 273.15, P=P_MPA)  # IAPWS-IF97 rho, IAPWS 2008 mu
        rho, mu = w.rho, w.mu
        area = math.pi * d * d / 4.0
        v = m / (rho * area)
        re_ = rho * v * d / mu
        # fluids.friction.friction_factor: 64/Re below 2040, Colebrook above.
        assert re_ < 2000.0 or re_ > 4000.0, (series_id, label, re_)
        f = friction_factor(Re=re_, eD=rough / d)
        out.append(
            {
                "series": series_id,
                "size": label,
                "temperature_c": t_c,
                "mass_flow_kg_s": m,
                "re": re_,
                "velocity_m_s": v,
                "gradient_pa_m": f / d * rho * v * v / 2.0,
            }
        )
    return out


def fittings():
    out = []
    # fluids.fittings.bend_rounded(method='Rennels') with a given Darcy f.
    for angle in (45.0, 90.0, 180.0):
        for rd in (0.5, 1.0, 1.5, 3.0, 10.0):
            for fd in (0.018, 0.025, 0.035):
                k = bend_rounded(Di=0.02, angle=angle, fd=fd, bend_diameters=rd, method="Rennels")
                out.append({"kind": "bend", "angle_deg": angle, "r_d": rd, "fd": fd, "k": k})
    # fluids.fittings.bend_miter(method='Rennels').
    for angle in (30.0, 45.0, 60.0, 90.0, 120.0, 150.0):
        out.append({"kind": "elbow", "angle_deg": angle, "k": bend_miter(angle, method="Rennels")})
    for beta in (0.2, 0.4, 0.5, 0.6, 0.8, 0.95):
        d1, d2 = 0.05 * beta, 0.05
        # fluids.fittings.diffuser_sharp (Rennels = Borda–Carnot), small pipe basis.
        out.append({"kind": "expansion", "beta": beta, "k": diffuser_sharp(d1, d2, method="Rennels")})
        # fluids.fittings.contraction_sharp(method='Rennels'), downstream basis.
        out.append({"kind": "contraction", "beta": beta, "k": contraction_sharp(d2, d1, method="Rennels")})
        for angle in (10.0, 30.0, 60.0, 120.0):
            k = contraction_conical(d2, d1, fd=0.025, angle=angle, method="Rennels")
            out.append({"kind": "cone", "beta": beta, "angle_deg": angle, "fd": 0.025, "k": k})
    # Crane TP-410 tees, 90°, combined-flow basis (fluids.fittings.K_*_Crane).
    for beta in (0.3, 0.5, 0.6, 0.8, 0.9, 1.0):
        for q in (0.05, 0.2, 0.35, 0.5, 0.65, 0.8, 0.95):
            d_run, d_branch = 0.05, 0.05 * beta
            q_b, q_r = q, 1.0 - q
            for kind, fn in (
                ("tee_dividing_branch", K_branch_diverging_Crane),
                ("tee_dividing_run", K_run_diverging_Crane),
                ("tee_combining_branch", K_branch_converging_Crane),
                ("tee_combining_run", K_run_converging_Crane),
            ):
                k = fn(d_run, d_branch, q_r, q_b, angle=90.0)
                out.append({"kind": kind, "beta": beta, "q": q, "k": k})
    return out


def main():
    data = {
        "generator": "tests/reference/gen_friction.py",
        "fluids": fluids.__version__,
        "iapws": iapws.__version__,
        "pressure_mpa": P_MPA,
        "colebrook": colebrook_grid(),
        "transition_colebrook": transition_colebrook(),
        "pipes": pipe_cases(),
        "fittings": fittings(),
    }
    OUT.parent.mkdir(parents=True, exist_ok=True)
    OUT.write_text(json.dumps(data, indent=1) + "\n")
    print(f"wrote {OUT}")


if __name__ == "__main__":
    main()
