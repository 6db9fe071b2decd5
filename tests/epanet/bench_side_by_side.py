#!/usr/bin/env python3
"""flowrise and EPANET side by side on the same networks, in one run.

For generated buildings of 100, 1,000, 10,000 and 50,000 emitters, the
optimised driver `core/benches/side_by_side.rs` generates the building,
designs it, exports the network (matched physics, design state, the same
convergence tolerance as flowrise's solver: relative flow change 1e-6) and
prints flowrise's median timings. Then the EPANET 2.3 toolkit (epyt 2.3.5.3)
solves each exported file `--repeat` times; the script prints both and the
ratio flowrise / EPANET.

What is timed:
- flowrise "operate (cold)": the operating solve with a new workspace
  (ordering + symbolic factorisation + Newton iterations from the design
  flows);
- EPANET "cold": ENopenH + ENinitH + ENrunH on an opened project (ENopenH
  builds its sparse structure and ordering); "run only": ENinitH + ENrunH;
- flowrise "warm drag": move one emitter, derive + design + operate with the
  same workspace; "operate (warm)": the operate stage of it.

Run (no other heavy job on the machine):
  /tmp/epa/bin/python tests/epanet/bench_side_by_side.py [--sizes 100 1000 10000 50000] [--repeat 5]
"""

import argparse
import contextlib
import io
import json
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]


def epanet_times(inp, repeat):
    from epyt import epanet  # noqa: PLC0415

    with contextlib.redirect_stdout(io.StringIO()), contextlib.redirect_stderr(io.StringIO()):
        d = epanet(str(inp))
        cold, run_only, iters = [], [], None
        for _ in range(repeat):
            t0 = time.perf_counter()
            d.openHydraulicAnalysis()
            d.initializeHydraulicAnalysis(0)
            d.runHydraulicAnalysis()
            cold.append((time.perf_counter() - t0) * 1e3)
            t1 = time.perf_counter()
            d.initializeHydraulicAnalysis(0)
            d.runHydraulicAnalysis()
            run_only.append((time.perf_counter() - t1) * 1e3)
            iters = int(getattr(d.getStatistic(), "Iterations", 0)) or None
            d.closeHydraulicAnalysis()
        d.unload()
    return statistics.median(cold), statistics.median(run_only), iters


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--sizes", nargs="+", default=["100", "1000", "10000", "50000"])
    ap.add_argument("--repeat", type=int, default=5)
    ap.add_argument("--keep", help="keep the exported networks here")
    args = ap.parse_args()
    ctx = contextlib.nullcontext(args.keep) if args.keep else tempfile.TemporaryDirectory()
    with ctx as tmp:
        work = Path(tmp)
        work.mkdir(parents=True, exist_ok=True)
        cmd = ["cargo", "bench", "-q", "-p", "flowrise-core", "--bench", "side_by_side", "--",
               str(work), str(args.repeat), *args.sizes]
        out = subprocess.run(cmd, cwd=ROOT, capture_output=True, text=True)
        if out.returncode != 0:
            print(out.stderr, file=sys.stderr)
            return 1
        rows = [json.loads(line) for line in out.stdout.splitlines() if line.startswith("{")]
        print(f"{'emitters':>9} {'links':>7} | {'flowrise operate cold':>21} {'iters':>5} | "
              f"{'EPANET cold':>11} {'run only':>9} {'iters':>5} | {'ratio cold':>10} | "
              f"{'warm operate':>12} {'drag edit->results':>18} {'cold total':>10}")
        for r in rows:
            e_cold, e_run, e_it = epanet_times(r["inp"], args.repeat)
            ratio = r["cold_operate_ms"] / e_cold
            print(f"{r['emitters']:>9} {r['links']:>7} | {r['cold_operate_ms']:>18.3f} ms {r['cold_iterations']:>5.0f} | "
                  f"{e_cold:>8.3f} ms {e_run:>6.3f} ms {str(e_it):>5} | {ratio:>10.3f} | "
                  f"{r['warm_operate_ms']:>9.3f} ms {r['warm_edit_to_results_ms']:>15.3f} ms {r['cold_total_ms']:>7.1f} ms")
            r.update({"epanet_cold_ms": e_cold, "epanet_run_only_ms": e_run, "epanet_iterations": e_it, "ratio_cold": ratio})
        (work / "side_by_side.json").write_text(json.dumps(rows, indent=1))
    return 0


if __name__ == "__main__":
    sys.exit(main())
