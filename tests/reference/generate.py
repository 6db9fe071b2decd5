#!/usr/bin/env python3
"""Regenerate every reference fixture in tests/reference/fixtures/.

The Rust tests read the JSON fixtures and never need Python. Run this only
when a fixture must change:

    python3 -m venv /tmp/ref && /tmp/ref/bin/pip install -r tests/reference/requirements.txt
    /tmp/ref/bin/python tests/reference/generate.py

Each gen_<topic>.py writes fixtures/<topic>.json and records the library
versions it used inside the file.
"""
import pathlib
import runpy

HERE = pathlib.Path(__file__).resolve().parent

for script in sorted(HERE.glob("gen_*.py")):
    print(f"running {script.name}")
    runpy.run_path(str(script), run_name="__main__")
