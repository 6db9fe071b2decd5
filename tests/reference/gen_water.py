#!/usr/bin/env python3
"""Water properties fixture: IAPWS-IF97 density and c_p, IAPWS 2008 viscosity.

Library: iapws 1.5.5 (pinned in requirements.txt), class iapws.IAPWS97
(IAPWS-IF97, region 1 for compressed liquid) whose `mu` is the IAPWS 2008
viscosity formulation. Writes fixtures/water.json. Run via generate.py.
"""
import json
import pathlib

import iapws

OUT = pathlib.Path(__file__).resolve().parent / "fixtures" / "water.json"
P_MPA = 0.3  # flowrise's default system pressure (3 bar absolute)

rows = []
for t_c in [1, 5, 10, 15, 20, 25, 30, 35, 40, 45, 50, 55, 60, 65, 70, 75, 80, 85, 90, 95, 99]:
    w = iapws.IAPWS97(P=P_MPA, T=t_c + 273.15)
    rows.append(
        {
            "temperature_c": t_c,
            "density_kg_m3": w.rho,
            "cp_j_kg_k": w.cp * 1000.0,
            "viscosity_pa_s": w.mu,
            "enthalpy_j_kg": w.h * 1000.0,
        }
    )

OUT.parent.mkdir(parents=True, exist_ok=True)
OUT.write_text(
    json.dumps(
        {
            "source": f"iapws {iapws.__version__}, IAPWS97(P={P_MPA} MPa, T) (IAPWS-IF97 + IAPWS 2008 viscosity)",
            "pressure_mpa": P_MPA,
            "rows": rows,
        },
        indent=1,
    )
    + "\n"
)
print(f"wrote {OUT}")
