"""Benchmark: a whole-window sweep with the carbon path check against the same sweep without it.

Run on its own (not collected by pytest)::

    python tests/benchmarks/bench_carbon.py [--repeats 7]

"Without" replaces the carbon check's two steps (thermo.carbon.local_terms per chunk and
thermo.carbon.window_check over the window) by stubs that return the same variables as
zeros, so both runs build the same Dataset and differ by the check's work alone: the
gas-only re-solves where graphite deposits at the outlet, the path nodes below (and one step
above) the window, the refinement of each maximum, and the real-gas affinities. Runs of the
two kinds alternate, after one untimed warm-up of each, and the median of each is reported
with their ratio, in wall time and in CPU time of this process (the machine is shared:
only ratios within one run mean anything, and CPU time is the less disturbed by others).

Figures only: nothing here asserts a time.
"""

from __future__ import annotations

import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

import argparse  # noqa: E402
import os  # noqa: E402
import platform  # noqa: E402
import statistics  # noqa: E402
import time  # noqa: E402
from contextlib import contextmanager  # noqa: E402

import numpy as np  # noqa: E402

import thermo  # noqa: E402
from tests.benchmarks.common import code_version  # noqa: E402
from thermo import carbon  # noqa: E402

CASES = {
    "demo window (26 T x 13 P x 17 S/C, inlet 540 degC, window from 700 degC)":
        ("scenarios/demo.toml", None),
    "bench_sweep window (40 T x 20 P x 20 S/C, 650-950 degC)":
        ("scenarios/demo.toml", dict(temperature=("650 degC", "950 degC", 40),
                                     pressure=("5 bar", "40 bar", 20),
                                     steam_to_carbon=(1.5, 5.0, 20))),
    "biogas skid (26 T x 14 P x 15 S/C, inlet 450 degC, window from 650 degC)":
        ("scenarios/biogas-skid.toml", None),
}


@contextmanager
def without_check():
    """The sweep with the carbon check's work replaced by zero-filled stubs."""
    names = ("local_terms", "window_check", "finish", "path_from_nodes", "own_paths",
             "points_check")
    saved = {k: getattr(carbon, k) for k in names}

    def local(tr, T, P, approach, check):
        return {}

    def zeros(n):
        out = {k: np.zeros(n) for k in carbon.VARIABLES
               if not k.endswith(("_catalyst", "_graphite"))}
        for k in ("carbon_free", "carbon_higher_hydrocarbons", "carbon_other_stage"):
            out[k] = np.ones(n, dtype=bool)
        out["carbon_binding"] = np.zeros(n, dtype=np.int8)
        return out

    def window(scenario, flat, axes):
        return zeros(int(np.prod([len(v) for v in axes.values()])))

    # The exact edges' points (thermo.edges.evaluate) go through these.
    def paths(loc, T, *args, **kw):
        n = np.size(T)
        return [carbon.PathMaximum(np.zeros(n), np.zeros(n))]

    def finish(loc, path, T, check):
        return zeros(np.size(T))

    def points(loc, T, *args, **kw):
        return zeros(np.size(T))

    stubs = dict(local_terms=local, window_check=window, finish=finish,
                 path_from_nodes=paths, own_paths=paths, points_check=points)
    for k, f in stubs.items():
        setattr(carbon, k, f)
    try:
        yield
    finally:
        for k, f in saved.items():
            setattr(carbon, k, f)


def timed(sc) -> tuple[float, float]:
    """(wall, CPU) seconds of one sweep; CPU time (all threads of this process) is the less
    disturbed by other processes on a shared machine."""
    t, c = time.perf_counter(), time.process_time()
    thermo.sweep(sc)
    return time.perf_counter() - t, time.process_time() - c


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeats", type=int, default=7)
    args = ap.parse_args()
    print(f"bench_carbon: {code_version()}; {platform.processor() or platform.machine()}, "
          f"{os.cpu_count()} cores, load average {os.getloadavg()[0]:.2f} at start")
    for name, (path, window) in CASES.items():
        sc = thermo.load_scenario(ROOT / path)
        if window is not None:
            sc = sc.with_window(**window)
        timed(sc)
        with without_check():
            timed(sc)
        with_t, without_t = [], []
        for _ in range(args.repeats):
            with_t.append(timed(sc))
            with without_check():
                without_t.append(timed(sc))
        n = sc.window.size()
        for k, what in ((0, "wall"), (1, "CPU")):
            a = statistics.median(t[k] for t in with_t)
            b = statistics.median(t[k] for t in without_t)
            print(f"{name}: {n} points; {what} time with the check {a:.3f} s, without "
                  f"{b:.3f} s (medians of {args.repeats}, alternating); ratio {a / b:.2f}")
    print(f"load average {os.getloadavg()[0]:.2f} at the end")


if __name__ == "__main__":
    main()
