#!/usr/bin/env python3
"""Valves and expansion-vessel fixture: Kv → pressure drop through `fluids`,
water densities for the expansion coefficient through `iapws`.

Libraries (pinned in requirements.txt): fluids 1.3.1
(fluids.fittings.Kv_to_K, fluids.fittings.K_to_Kv, fluids.core.dP_from_K) and
iapws 1.5.5 (iapws.IAPWS97, IAPWS-IF97 region 1). Writes
fixtures/valves_pump_vessel.json. Run via generate.py (or directly:
python3 tests/reference/gen_valves_pump_vessel.py).
"""
import json
import math
import pathlib

import fluids
import iapws
from fluids.core import dP_from_K
from fluids.fittings import K_to_Kv, Kv_to_K

OUT = pathlib.Path(__file__).resolve().parent / "fixtures" / "valves_pump_vessel.json"
P_MPA = 0.3  # flowrise's default system pressure (3 bar absolute)


def rho(t_c):
    return iapws.IAPWS97(P=P_MPA, T=t_c + 273.15).rho


# Kv cases: (Kv m³/h, flow m³/h, bore D m for the K conversion, water temperature °C).
# The bore only carries the conversion Kv → K → Δp; Δp does not depend on it.
kv_rows = []
for kv, q, d, t_c in [
    (0.05, 0.02, 0.0125, 70.0),
    (0.20, 0.10, 0.0125, 60.0),
    (0.90, 0.35, 0.016, 45.0),
    (2.50, 1.20, 0.016, 80.0),
    (7.50, 4.00, 0.027, 20.0),
    (1.00, 1.00, 0.02, 15.0),
]:
    density = rho(t_c)
    k = Kv_to_K(kv, d)
    velocity = q / 3600.0 / (math.pi / 4.0 * d * d)
    kv_rows.append(
        {
            "kv_m3_h": kv,
            "flow_m3_h": q,
            "diameter_m": d,
            "temperature_c": t_c,
            "density_kg_m3": density,
            "k": k,
            "kv_back_m3_h": K_to_Kv(k, d),
            "velocity_m_s": velocity,
            "dp_pa": dP_from_K(k, density, velocity),
        }
    )

# Expansion: density ratio between fill and maximum temperature.
expansion_rows = []
for t_low, t_high in [(10.0, 90.0), (10.0, 70.0), (10.0, 55.0), (4.0, 80.0)]:
    r_low, r_high = rho(t_low), rho(t_high)
    expansion_rows.append(
        {
            "fill_temperature_c": t_low,
            "max_temperature_c": t_high,
            "density_fill_kg_m3": r_low,
            "density_max_kg_m3": r_high,
            "expansion_coefficient": r_low / r_high - 1.0,
        }
    )

OUT.parent.mkdir(parents=True, exist_ok=True)
OUT.write_text(
    json.dumps(
        {
            "source": (
                f"fluids {fluids.__version__} (fittings.Kv_to_K, fittings.K_to_Kv, core.dP_from_K); "
                f"iapws {iapws.__version__} IAPWS97(P={P_MPA} MPa, T)"
            ),
            "pressure_mpa": P_MPA,
            "kv": kv_rows,
            "expansion": expansion_rows,
        },
        indent=1,
    )
    + "\n"
)
print(f"wrote {OUT}")
