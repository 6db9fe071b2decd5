#!/usr/bin/env python3
"""Reference samples of the viridis colormap (van der Walt & Smith, "A better
default colormap for matplotlib", SciPy 2015), as published in matplotlib,
written to
tests/reference/fixtures/colormap.json.

Pinned version: matplotlib==3.10.9 (Python 3).
Run from the repository root:

    pip install matplotlib==3.10.9
    python3 tests/reference/gen_colormap.py

The velocity-margin scale of the window and the report (core/src/report/svg.rs) embeds 33 stops
(every 1/32) and interpolates linearly between them; the Rust test
tests/tests/parts_report.rs checks it at these 65 points (the stops and the
midpoints between them). It does not need Python.
"""

import json
import pathlib

import matplotlib
from matplotlib import colormaps

cm = colormaps["viridis"]
samples = []
for i in range(65):
    t = i / 64
    r, g, b, _ = cm(t)
    samples.append({"t": t, "rgb": [round(r * 255), round(g * 255), round(b * 255)]})

out = {
    "source": f"matplotlib {matplotlib.__version__} colormaps['viridis']",
    "samples": samples,
}
path = pathlib.Path(__file__).parent / "fixtures" / "colormap.json"
path.write_text(json.dumps(out, indent=1) + "\n")
print(f"wrote {path}")
