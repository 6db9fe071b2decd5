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
  builds its sparse structure and ordering); "re-init": ENinitH(10) +
  ENrunH (Newton from re-initialised flows, structure already built);
  "warm": ENinitH(0) + ENrunH (restart from the last flows);
- flowrise "warm drag": move one emitter, derive + design + operate with the
  same workspace; "operate (warm)": the operate stage of it (hydraulic
  solve, then emitter outputs, pipe results and findings at the real flows);
  "solver only": the hydraulic solve inside it, the like-for-like figure
  for EPANET's warm restart.

Rounds: this machine's speed drifts by tens of per cent over minutes, and
the two engines are timed one after the other, so one pass can favour
either. With `--rounds R` every size is measured once per round, flowrise
then EPANET, the sizes one after the other within the round; the table
shows the median over the rounds of every figure and of every ratio, with
the range of the cold ratio over the rounds. The 50,000 / 10,000 growth is
taken within each round (the two sizes minutes apart) and its median and
per-round values printed.

Run (no other heavy job on the machine):
  /tmp/epa/bin/python tests/epanet/bench_side_by_side.py [--sizes 100 1000 10000 50000] [--repeat 5] [--rounds 3]
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
    """Medians (ms) of EPANET's cold solve (ENopenH + ENinitH + ENrunH), its
    Newton from initial flows on an open solver (ENinitH(10): re-initialise
    flows; + ENrunH) and its warm restart (ENinitH(0) keeps the last flows;
    + ENrunH), with the iteration counts of the cold and warm runs."""
    from epyt import epanet  # noqa: PLC0415

    def iterations(d):
        # EN_ITERATIONS (statistic code 0) of the last run.
        return int(d.api.ENgetstatistic(0)) or None

    with contextlib.redirect_stdout(io.StringIO()), contextlib.redirect_stderr(io.StringIO()):
        d = epanet(str(inp))
        cold, reinit, warm = [], [], []
        it_cold = it_warm = None
        for _ in range(repeat):
            t0 = time.perf_counter()
            d.openHydraulicAnalysis()
            d.initializeHydraulicAnalysis(0)
            d.runHydraulicAnalysis()
            cold.append((time.perf_counter() - t0) * 1e3)
            it_cold = iterations(d)
            t1 = time.perf_counter()
            d.initializeHydraulicAnalysis(10)
            d.runHydraulicAnalysis()
            reinit.append((time.perf_counter() - t1) * 1e3)
            t2 = time.perf_counter()
            d.initializeHydraulicAnalysis(0)
            d.runHydraulicAnalysis()
            warm.append((time.perf_counter() - t2) * 1e3)
            it_warm = iterations(d)
            d.closeHydraulicAnalysis()
        d.unload()
    return {
        "epanet_cold_ms": statistics.median(cold),
        "epanet_reinit_run_ms": statistics.median(reinit),
        "epanet_warm_ms": statistics.median(warm),
        "epanet_iterations_cold": it_cold,
        "epanet_iterations_warm": it_warm,
    }


def flowrise_times(work, repeat, size):
    """One run of the optimised driver for one size (its JSON line)."""
    cmd = ["cargo", "bench", "-q", "-p", "flowrise-core", "--bench", "side_by_side", "--",
           str(work), str(repeat), str(size)]
    out = subprocess.run(cmd, cwd=ROOT, capture_output=True, text=True)
    if out.returncode != 0:
        raise RuntimeError(out.stderr)
    return next(json.loads(line) for line in out.stdout.splitlines() if line.startswith("{"))


def one_round(work, repeat, size):
    """flowrise, then EPANET on the network flowrise exported, for one size."""
    r = flowrise_times(work, repeat, size)
    e = epanet_times(r["inp"], repeat)
    r.update(e)
    r["ratio_cold"] = r["cold_operate_ms"] / e["epanet_cold_ms"]
    r["ratio_cold_vs_reinit"] = r["cold_operate_ms"] / e["epanet_reinit_run_ms"]
    r["ratio_warm"] = r["warm_operate_ms"] / e["epanet_warm_ms"]
    r["ratio_warm_solver"] = r["warm_solver_ms"] / e["epanet_warm_ms"]
    return r


def median_row(rounds):
    """Median over the rounds of every numeric figure, and the range of the
    cold ratio."""
    row = dict(rounds[0])
    for key, value in rounds[0].items():
        if isinstance(value, bool) or not isinstance(value, (int, float)):
            continue
        values = sorted(x[key] for x in rounds)
        # Counts (sizes, iterations) keep a value that was measured.
        row[key] = values[len(values) // 2] if isinstance(value, int) else statistics.median(values)
    row["ratio_cold_min"] = min(x["ratio_cold"] for x in rounds)
    row["ratio_cold_max"] = max(x["ratio_cold"] for x in rounds)
    row["rounds"] = len(rounds)
    return row


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--sizes", nargs="+", default=["100", "1000", "10000", "50000"])
    ap.add_argument("--repeat", type=int, default=5)
    ap.add_argument("--rounds", type=int, default=1)
    ap.add_argument("--keep", help="keep the exported networks here")
    args = ap.parse_args()
    ctx = contextlib.nullcontext(args.keep) if args.keep else tempfile.TemporaryDirectory()
    with ctx as tmp:
        work = Path(tmp)
        work.mkdir(parents=True, exist_ok=True)
        print(f"{'emitters':>9} {'links':>7} | {'flowrise cold':>13} {'its':>3} | {'EPANET cold':>11} "
              f"{'re-init':>8} {'its':>3} | {'ratio cold':>10} {'(range)':>13} {'vs re-init':>10} | "
              f"{'flowrise warm':>13} {'solver only':>11} {'EPANET warm':>11} {'its':>3} | "
              f"{'drag edit->results':>18} {'cold total':>10}")
        # Rounds outside, sizes inside: within a round every size is measured
        # within minutes, so the growth between sizes is taken per round (the
        # machine's drift between rounds cancels) and its median reported.
        per_size = {size: [] for size in args.sizes}
        for _ in range(max(1, args.rounds)):
            for size in args.sizes:
                try:
                    per_size[size].append(one_round(work, args.repeat, size))
                except RuntimeError as err:
                    print(err, file=sys.stderr)
                    return 1
        rows, all_rounds = [], []
        for size in args.sizes:
            rounds = per_size[size]
            all_rounds.extend(rounds)
            r = median_row(rounds)
            rows.append(r)
            print(f"{r['emitters']:>9} {r['links']:>7} | {r['cold_operate_ms']:>10.3f} ms {r['cold_iterations']:>3.0f} | "
                  f"{r['epanet_cold_ms']:>8.3f} ms {r['epanet_reinit_run_ms']:>5.3f} ms {r['epanet_iterations_cold']:>3.0f} | "
                  f"{r['ratio_cold']:>10.3f} {r['ratio_cold_min']:>6.3f}-{r['ratio_cold_max']:<6.3f} "
                  f"{r['ratio_cold_vs_reinit']:>10.3f} | {r['warm_operate_ms']:>10.3f} ms "
                  f"{r['warm_solver_ms']:>8.3f} ms {r['epanet_warm_ms']:>8.3f} ms {r['epanet_iterations_warm']:>3.0f} | "
                  f"{r['warm_edit_to_results_ms']:>15.3f} ms {r['cold_total_ms']:>7.1f} ms", flush=True)
        if "10000" in per_size and "50000" in per_size:
            for key in ("cold_operate_ms", "cold_solver_ms", "cold_total_ms", "warm_operate_ms", "warm_solver_ms",
                        "warm_edit_to_results_ms"):
                ratios = sorted(b[key] / a[key] for a, b in zip(per_size["10000"], per_size["50000"]))
                print(f"50,000 / 10,000 {key}: median over rounds {statistics.median(ratios):.2f} "
                      f"(rounds {', '.join(f'{x:.2f}' for x in ratios)})")
        (work / "side_by_side.json").write_text(json.dumps({"medians": rows, "rounds": all_rounds}, indent=1))
    return 0


if __name__ == "__main__":
    sys.exit(main())
