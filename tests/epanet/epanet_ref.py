"""The EPANET reference run shared by the cross-check and the side-by-side
bench: open a file quietly, set the convergence accuracy through the toolkit,
run the hydraulics and refuse a result EPANET itself flags.

Reference engine: EPANET 2.3 (US EPA) through the toolkit shipped in the PyPI
package epyt==2.3.5.3 (tests/epanet/requirements.txt), legacy single-project
API (`ENsetoption`, `ENrunH`, `ENgetstatistic`).

Why the toolkit call: the input parser clamps the `[OPTIONS] Accuracy` line
to at least 1e-5, so a file asking for 1e-6 is solved at 1e-5. Only
`ENsetoption(EN_ACCURACY, value)` goes lower; it refuses values below 1e-8
(error 213) and stores the value through a C float, so the accuracy actually
used is read back with `ENgetoption(EN_ACCURACY)` and reported.

Why the warning codes: `ENrunH` returns a code > 0 (not an error) when the
run finished with a warning; epyt keeps it in `api.errcode`. Codes 1–5 mean
the flows are not a solution of the network as written (1 unbalanced: not
converged within the trial limit; 2 unstable; 3 disconnected; 4 a pump and
5 a valve that cannot deliver, so EPANET changed its status) and fail the
reference. Code 6 (negative pressures) is reported and does not fail: the
exported network's heads sit on an arbitrary datum and pressure does not
enter any flow law there.
"""

import contextlib
import io
import warnings

EN_ACCURACY = 1  # EN_Option
EN_ITERATIONS = 0  # EN_AnalysisStatistic
EN_RELATIVEERROR = 1  # EN_AnalysisStatistic

WARNING_TEXT = {
    1: "system hydraulically unbalanced (not converged within the trial limit)",
    2: "system may be hydraulically unstable",
    3: "system disconnected",
    4: "pumps cannot deliver enough flow or head",
    5: "valves cannot deliver enough flow",
    6: "system has negative pressures",
}
# Codes that mean the reference flows are not a solution of the network.
FAILING_WARNINGS = {1, 2, 3, 4, 5}


class ReferenceFailed(RuntimeError):
    """EPANET finished with an error or a warning that voids its flows."""


def open_quiet(path):
    """Open `path` with epyt, swallowing its banner output."""
    from epyt import epanet  # noqa: PLC0415 (import after the venv check)

    with contextlib.redirect_stdout(io.StringIO()), contextlib.redirect_stderr(io.StringIO()):
        return epanet(str(path))


def set_accuracy(d, accuracy):
    """Set EPANET's convergence accuracy with the toolkit call and return the
    value it actually holds (read back; a C float)."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        d.api.errcode = 0
        d.api.ENsetoption(EN_ACCURACY, accuracy)
        code = d.api.errcode
        used = d.api.ENgetoption(EN_ACCURACY)
    if code:
        raise ReferenceFailed(f"EPANET refused accuracy {accuracy:g} (error {code}); the toolkit accepts 1e-8 to 0.1")
    if abs(used / accuracy - 1.0) > 1e-6:
        raise ReferenceFailed(f"EPANET holds accuracy {used:g} after being asked for {accuracy:g}")
    return used


def run_checked(d, name):
    """`ENrunH` on an open, initialised solver; returns (warning code,
    iterations, relative flow change of the last iteration). Raises
    `ReferenceFailed` on an error or a failing warning, naming the case."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        d.api.errcode = 0
        d.api.ENrunH()
        code = int(d.api.errcode or 0)
        iterations = int(d.api.ENgetstatistic(EN_ITERATIONS))
        rel = float(d.api.ENgetstatistic(EN_RELATIVEERROR))
    if code > 100:
        raise ReferenceFailed(f"{name}: EPANET error {code} in ENrunH")
    if code in FAILING_WARNINGS:
        raise ReferenceFailed(
            f"{name}: EPANET warning {code} ({WARNING_TEXT.get(code, 'unknown')}) after {iterations} iterations, "
            f"relative flow change {rel:.2e}: the reference is not a solution"
        )
    return code, iterations, rel


def warning_note(code):
    """' (EPANET warning N: text)' for a reported, non-failing code; '' for 0."""
    return f" (EPANET warning {code}: {WARNING_TEXT.get(code, 'unknown')})" if code else ""
