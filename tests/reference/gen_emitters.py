"""Reference fixtures for the emitter checks (tests/tests/reference/emitters.rs).

Pinned versions: iapws==1.5.5 (Python 3). `fluids` 1.3.1 has no LMTD
function, so the logarithmic mean temperature difference and the EN 442
ratios are computed here with Python's `math` (an independent plain
implementation of the textbook formula, not flowrise's code); the water-side
mass flows use IAPWS-IF97 enthalpies from `iapws`.

Run from the repository root:

    python3 tests/reference/gen_emitters.py

It writes tests/reference/fixtures/emitters.json (commit the JSON; the Rust
tests do not need Python).
"""

import json
import math
import os

import iapws

assert iapws.__version__ == "1.5.5", iapws.__version__

# Same system pressure as flowrise's water module (3 bar absolute).
P_MPA = 0.3


def lmtd(ts, tr, ti):
    """Logarithmic mean temperature difference water -> room, K."""
    return (ts - tr) / math.log((ts - ti) / (tr - ti))


DT_N = lmtd(75.0, 65.0, 20.0)  # EN 442-2 nominal conditions

lmtd_grid = []
for ts in (35.0, 45.0, 55.0, 70.0, 75.0, 90.0):
    for drop in (0.5, 3.0, 5.0, 10.0, 15.0, 20.0):
        for ti in (15.0, 20.0, 24.0):
            tr = ts - drop
            if tr <= ti + 0.5:
                continue
            lmtd_grid.append({"supply_c": ts, "return_c": tr, "room_c": ti, "lmtd_k": lmtd(ts, tr, ti)})

en442 = []
for n in (1.25, 1.3, 1.33):
    for ts, tr, ti in ((55.0, 45.0, 20.0), (45.0, 35.0, 20.0), (70.0, 55.0, 20.0), (50.0, 40.0, 22.0), (75.0, 65.0, 20.0)):
        en442.append(
            {"exponent_n": n, "supply_c": ts, "return_c": tr, "room_c": ti, "ratio": (lmtd(ts, tr, ti) / DT_N) ** n}
        )


def h_kj_kg(t_c):
    return iapws.IAPWS97(P=P_MPA, T=t_c + 273.15).h


flows = []
for load_w, ts, tr in ((1000.0, 75.0, 65.0), (1500.0, 55.0, 45.0), (800.0, 45.0, 35.0), (2400.0, 70.0, 50.0), (900.0, 35.0, 30.0)):
    flows.append(
        {"load_w": load_w, "supply_c": ts, "return_c": tr, "mass_flow_kg_s": load_w / ((h_kj_kg(ts) - h_kj_kg(tr)) * 1000.0)}
    )

out = {
    "_source": "tests/reference/gen_emitters.py (math; iapws 1.5.5 IAPWS97 enthalpy at 0.3 MPa)",
    "nominal_lmtd_k": DT_N,
    "lmtd_grid": lmtd_grid,
    "en442_ratio": en442,
    "design_flows": flows,
}
path = os.path.join(os.path.dirname(os.path.abspath(__file__)), "fixtures", "emitters.json")
with open(path, "w", encoding="utf-8") as f:
    json.dump(out, f, indent=1)
    f.write("\n")
print(f"wrote {path}: {len(lmtd_grid)} LMTD points, {len(en442)} EN 442 ratios, {len(flows)} flows")
