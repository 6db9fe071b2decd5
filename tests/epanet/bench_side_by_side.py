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

Reference accuracy: EPANET's accuracy is set with the toolkit call
(`ENsetoption(EN_ACCURACY)`, epanet_ref.py) to flowrise's flow tolerance;
the file's Accuracy line alone would be clamped to 1e-5 by EPANET's parser.
The value EPANET held is printed, and every EPANET run's warning code is
read: a run that did not converge stops the script (no ratio against a
reference that is not a solution).

Fresh processes: besides the in-process figures, every round runs
`--fresh-repeat` times, interleaved, (a) `flowrise solve --json` on the
generated project (load the RON, derive, design, operate, stream the JSON
to a file) and (b) a fresh Python process (epanet_fresh.py) that loads the
EPANET library with ctypes, opens the exported .inp, sets the accuracy,
solves and reads every link flow. Wall time per process and peak RSS
(GNU time's %M around each child) are medians / maxima; the bare interpreter
start (`python -c "import ctypes"`) is printed as the EPANET process's
floor. The flowrise process's own operate stage (`timings.operate_ms` of its
JSON) is compared with EPANET's cold run.

Run (no other heavy job on the machine):
  /tmp/epa/bin/python tests/epanet/bench_side_by_side.py [--sizes 100 1000 10000 50000] [--repeat 5] [--rounds 3]
      [--fresh-repeat 5] [--flowrise target/release/flowrise]
"""

import argparse
import contextlib
import io
import json
import os
import re
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

from epanet_ref import ReferenceFailed, open_quiet, run_checked, set_accuracy

ROOT = Path(__file__).resolve().parents[2]


def epanet_times(inp, repeat, accuracy):
    """Medians (ms) of EPANET's cold solve (ENopenH + ENinitH + ENrunH), its
    Newton from initial flows on an open solver (ENinitH(10): re-initialise
    flows; + ENrunH) and its warm restart (ENinitH(0) keeps the last flows;
    + ENrunH), with the iteration counts of the cold and warm runs, the
    accuracy EPANET held (set with the toolkit call after ENopenH, timed
    with the cold run) and the largest warning code of all runs. A run that
    ends with a warning voiding its flows raises `ReferenceFailed`."""
    d = open_quiet(inp)
    cold, reinit, warm = [], [], []
    it_cold = it_warm = None
    used, codes = None, set()
    name = Path(inp).name
    with contextlib.redirect_stdout(io.StringIO()), contextlib.redirect_stderr(io.StringIO()):
        for _ in range(repeat):
            t0 = time.perf_counter()
            d.openHydraulicAnalysis()
            used = set_accuracy(d, accuracy)
            d.initializeHydraulicAnalysis(0)
            code, it_cold, _ = run_checked(d, name)
            cold.append((time.perf_counter() - t0) * 1e3)
            codes.add(code)
            t1 = time.perf_counter()
            d.initializeHydraulicAnalysis(10)
            code, _, _ = run_checked(d, name)
            reinit.append((time.perf_counter() - t1) * 1e3)
            codes.add(code)
            t2 = time.perf_counter()
            d.initializeHydraulicAnalysis(0)
            code, it_warm, _ = run_checked(d, name)
            warm.append((time.perf_counter() - t2) * 1e3)
            codes.add(code)
            d.closeHydraulicAnalysis()
        d.unload()
    return {
        "epanet_cold_ms": statistics.median(cold),
        "epanet_reinit_run_ms": statistics.median(reinit),
        "epanet_warm_ms": statistics.median(warm),
        "epanet_iterations_cold": it_cold,
        "epanet_iterations_warm": it_warm,
        "epanet_accuracy": used,
        "epanet_warning": max(codes),
    }


def run_child(cmd, stdout):
    """Run `cmd` as a fresh process; (wall ms, peak RSS MB, exit status).
    The peak comes from GNU time (`/usr/bin/time -f %M`) wrapped around the
    command: the rusage this script could read itself (os.wait4) carries
    the peak of the Python process it was forked from on Linux, so it
    reads the same for every child. Wall time is taken here (the wrapper
    adds about a millisecond)."""
    rss_file = Path(tempfile.gettempdir()) / f"side_by_side_rss_{os.getpid()}.txt"
    wrapped = ["/usr/bin/time", "-f", "%M", "-o", str(rss_file), *cmd] if os.path.exists("/usr/bin/time") else cmd
    t0 = time.perf_counter()
    child = subprocess.Popen(wrapped, stdout=stdout, stderr=subprocess.DEVNULL)
    child.wait()
    wall = (time.perf_counter() - t0) * 1e3
    try:
        rss_kb = float(rss_file.read_text().strip().splitlines()[-1])
    except (OSError, ValueError, IndexError):
        rss_kb = float("nan")
    return wall, rss_kb / 1024.0, child.returncode


def fresh_processes(flowrise, ron, inp, work, repeat, accuracy):
    """Whole-process wall time and peak memory of `flowrise solve --json`
    on the project and of a fresh Python process that opens and solves the
    exported network with the EPANET library (epanet_fresh.py), interleaved;
    medians. Also the flowrise process's own operate stage (from its JSON)
    and the bare interpreter with ctypes (the EPANET process's floor)."""
    out_path = work / "fresh.json"
    fr_wall, fr_rss, fr_op, ep_wall, ep_rss, py_wall = [], [], [], [], [], []
    fresh_script = str(Path(__file__).resolve().parent / "epanet_fresh.py")
    ep_info = None
    for _ in range(repeat):
        with open(out_path, "wb") as out:
            wall, rss, rc = run_child([flowrise, "solve", "--json", str(ron)], out)
        if rc != 0:
            raise RuntimeError(f"flowrise solve --json {ron} exited {rc}")
        text = out_path.read_text()
        m = re.search(r'"operate_ms":\s*([0-9.eE+-]+)', text)
        fr_wall.append(wall)
        fr_rss.append(rss)
        if m:
            fr_op.append(float(m.group(1)))
        with open(work / "fresh-epanet.json", "wb") as out:
            wall, rss, rc = run_child([sys.executable, fresh_script, str(inp), str(accuracy)], out)
        ep_info = json.loads((work / "fresh-epanet.json").read_text() or "{}")
        if rc != 0:
            raise ReferenceFailed(f"fresh EPANET process on {inp} exited {rc}: {ep_info}")
        ep_wall.append(wall)
        ep_rss.append(rss)
        wall, _, _ = run_child([sys.executable, "-c", "import ctypes"], subprocess.DEVNULL)
        py_wall.append(wall)
    return {
        "fresh_flowrise_wall_ms": statistics.median(fr_wall),
        "fresh_flowrise_peak_mb": max(fr_rss),
        "fresh_flowrise_operate_ms": statistics.median(fr_op) if fr_op else float("nan"),
        "fresh_epanet_wall_ms": statistics.median(ep_wall),
        "fresh_epanet_peak_mb": max(ep_rss),
        "fresh_epanet_accuracy": ep_info.get("accuracy"),
        "fresh_epanet_warning": ep_info.get("warning"),
        "fresh_python_floor_ms": statistics.median(py_wall),
    }


def flowrise_times(work, repeat, size):
    """One run of the optimised driver for one size (its JSON line)."""
    cmd = ["cargo", "bench", "-q", "-p", "flowrise-core", "--bench", "side_by_side", "--",
           str(work), str(repeat), str(size)]
    out = subprocess.run(cmd, cwd=ROOT, capture_output=True, text=True)
    if out.returncode != 0:
        raise RuntimeError(out.stderr)
    return next(json.loads(line) for line in out.stdout.splitlines() if line.startswith("{"))


def one_round(work, repeat, size, flowrise, fresh_repeat):
    """flowrise, then EPANET on the network flowrise exported, for one size;
    then the two fresh processes."""
    r = flowrise_times(work, repeat, size)
    e = epanet_times(r["inp"], repeat, r["flow_tolerance"])
    r.update(e)
    if fresh_repeat > 0:
        f = fresh_processes(flowrise, r["ron"], r["inp"], work, fresh_repeat, r["flow_tolerance"])
        r.update(f)
        r["ratio_fresh_wall"] = f["fresh_flowrise_wall_ms"] / f["fresh_epanet_wall_ms"]
        r["ratio_fresh_peak"] = f["fresh_flowrise_peak_mb"] / f["fresh_epanet_peak_mb"]
        r["ratio_fresh_operate"] = f["fresh_flowrise_operate_ms"] / e["epanet_cold_ms"]
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
    ap.add_argument("--fresh-repeat", type=int, default=5,
                    help="fresh processes per engine, size and round (0: skip the fresh-process comparison)")
    ap.add_argument("--flowrise", help="release flowrise binary (default: built here with cargo build --release)")
    args = ap.parse_args()
    flowrise = args.flowrise
    if args.fresh_repeat > 0 and not flowrise:
        build = subprocess.run(["cargo", "build", "--release", "-q", "-p", "flowrise"], cwd=ROOT)
        if build.returncode != 0:
            return 1
        target = Path(os.environ.get("CARGO_TARGET_DIR", ROOT / "target"))
        flowrise = str(target / "release" / "flowrise")
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
                    per_size[size].append(one_round(work, args.repeat, size, flowrise, args.fresh_repeat))
                except (RuntimeError, ReferenceFailed) as err:
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
        accs = sorted({r["epanet_accuracy"] for r in rows})
        warns = sorted({r["epanet_warning"] for r in rows})
        print(f"EPANET accuracy used (set with ENsetoption, read back): {', '.join(f'{a:.3g}' for a in accs)}; "
              f"flowrise flow tolerance {rows[0]['flow_tolerance']:g}; EPANET warning codes: {warns}")
        if args.fresh_repeat > 0:
            print("\nFresh processes (medians; whole process wall time and peak RSS; EPANET = Python + ctypes + "
                  "the EPANET library opening and solving the same .inp; the bare interpreter shown as its floor):")
            print(f"{'emitters':>9} | {'flowrise solve --json':>21} {'peak':>8} {'operate':>9} | "
                  f"{'EPANET process':>14} {'peak':>8} {'(python floor)':>14} | {'wall ratio':>10} "
                  f"{'peak ratio':>10} {'operate / EPANET cold':>21}")
            for r in rows:
                print(f"{r['emitters']:>9} | {r['fresh_flowrise_wall_ms']:>18.1f} ms {r['fresh_flowrise_peak_mb']:>5.0f} MB "
                      f"{r['fresh_flowrise_operate_ms']:>6.1f} ms | {r['fresh_epanet_wall_ms']:>11.1f} ms "
                      f"{r['fresh_epanet_peak_mb']:>5.0f} MB {r['fresh_python_floor_ms']:>11.1f} ms | "
                      f"{r['ratio_fresh_wall']:>10.3f} {r['ratio_fresh_peak']:>10.3f} {r['ratio_fresh_operate']:>21.3f}")
        (work / "side_by_side.json").write_text(json.dumps({"medians": rows, "rounds": all_rounds}, indent=1))
    return 0


if __name__ == "__main__":
    sys.exit(main())
