#!/usr/bin/env python3
"""One fresh process that opens and solves an EPANET input file: the EPANET
side of the side-by-side's fresh-process comparison (bench_side_by_side.py).

It loads the EPANET 2.3 library shipped in epyt 2.3.5.3 with ctypes (no
epyt, numpy or pandas import, so the process is the interpreter plus the
engine), then ENopen + ENopenH + ENsetoption(EN_ACCURACY) + ENinitH +
ENrunH, reads every link flow (the answer a caller wants) and exits. The
accuracy is set through the toolkit because the file's Accuracy line is
clamped to 1e-5 by the parser (see epanet_ref.py).

Prints one JSON line: accuracy used, warning code, iterations, links.
Exit status 0; 3 when EPANET reports an error or a warning that voids the
flows (codes 1–5, see epanet_ref.py), 2 on bad arguments.

Run: /tmp/epa/bin/python tests/epanet/epanet_fresh.py NETWORK.inp [ACCURACY]
"""

import ctypes
import importlib.util
import json
import os
import sys

EN_ACCURACY = 1
EN_ITERATIONS = 0
EN_LINKCOUNT = 2
EN_FLOW = 8
FAILING_WARNINGS = {1, 2, 3, 4, 5}


def library():
    spec = importlib.util.find_spec("epyt")
    if spec is None or not spec.submodule_search_locations:
        raise SystemExit("epyt is not installed (pip install -r tests/epanet/requirements.txt)")
    base = list(spec.submodule_search_locations)[0]
    return ctypes.CDLL(os.path.join(base, "libraries", "glnx", "libepanet2.so"))


def main():
    if len(sys.argv) < 2:
        print(__doc__, file=sys.stderr)
        return 2
    inp = sys.argv[1].encode()
    accuracy = float(sys.argv[2]) if len(sys.argv) > 2 else 1e-6
    en = library()
    f = ctypes.c_float()
    i = ctypes.c_int()
    code = en.ENopen(inp, b"/dev/null", b"")
    if code > 100:
        print(json.dumps({"error": code, "step": "ENopen"}))
        return 3
    for step, c in (
        ("ENopenH", lambda: en.ENopenH()),
        ("ENsetoption", lambda: en.ENsetoption(EN_ACCURACY, ctypes.c_float(accuracy))),
        ("ENinitH", lambda: en.ENinitH(0)),
    ):
        code = c()
        if code:
            print(json.dumps({"error": code, "step": step}))
            return 3
    t = ctypes.c_long()
    warning = en.ENrunH(ctypes.byref(t))
    en.ENgetoption(EN_ACCURACY, ctypes.byref(f))
    used = f.value
    en.ENgetstatistic(EN_ITERATIONS, ctypes.byref(f))
    iterations = int(f.value)
    en.ENgetcount(EN_LINKCOUNT, ctypes.byref(i))
    links = i.value
    total = 0.0
    for k in range(1, links + 1):
        en.ENgetlinkvalue(k, EN_FLOW, ctypes.byref(f))
        total += abs(f.value)
    en.ENcloseH()
    en.ENclose()
    print(json.dumps({"accuracy": used, "warning": warning, "iterations": iterations, "links": links,
                      "sum_abs_flow_l_s": total}))
    return 3 if warning > 100 or warning in FAILING_WARNINGS else 0


if __name__ == "__main__":
    sys.exit(main())
