"""Benchmark: the cost of exact edges, the best point and margins against the plain sweep.

Run on its own (not collected by pytest)::

    python tests/benchmarks/bench_edges.py

For the demo window (26 T x 13 P x 17 S/C) and a 40 x 20 x 20 window of the same gas, one
run each, in this process: the plain sweep (solve and assemble the Dataset, no edges), the
exact feasible intervals of every row (``thermo.edges.with_edges``), the best point of each
objective from the best grid nodes (``thermo.best_point``, margins off) and the margins and
sensitivities at the design point (``thermo.margins``). Each time is also given as a ratio to
the plain sweep of the same window measured just before it. The exact intervals are timed
with both ways of narrowing the brackets (``method="bisect"`` and ``"illinois"``,
thermo.edge_search), ``--repeat`` interleaved runs of each (default 5), medians and their
ratio, with the largest difference of their edges.

``--starts`` times instead, in this process and interleaved (``--repeat`` runs each, medians),
the starts of the edges' equilibria: cold (every point from the basis guesses, as before the
warm starts), each bracket's point from the bracket's last solved point, and that plus the
first points from the grid's potentials (what ``thermo.sweep`` does); with the primary's
Newton iterations per solved point and the largest edge difference against cold; then
``thermo.sweep`` of issue 17's reference window (bench_sweep's (d)) with cold and with warm
edges, interleaved. Figures only: nothing here asserts a time.
"""

from __future__ import annotations

import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

import argparse  # noqa: E402
import contextlib  # noqa: E402
import os  # noqa: E402
import platform  # noqa: E402
import time  # noqa: E402
from datetime import UTC, datetime  # noqa: E402

import numpy as np  # noqa: E402

import thermo  # noqa: E402
import thermo.balances  # noqa: E402
from tests.benchmarks.common import code_version  # noqa: E402
from thermo import edges  # noqa: E402
from thermo.sweep import (  # noqa: E402
    CHUNK_POINTS,
    PRIMARY_POTENTIALS,
    _chunks,
    assemble,
    solve_chunk,
)

WINDOWS = {
    "demo 26x13x17": None,
    "40x20x20": dict(temperature=("650 degC", "950 degC", 40), pressure=("5 bar", "40 bar", 20),
                     steam_to_carbon=(1.5, 5.0, 20)),
}


def plain_sweep(sc):
    """The sweep without the exact intervals: solve every chunk and assemble."""
    n = sc.window.size()
    row = sc.window.steam_to_carbon.points
    return assemble(sc, [solve_chunk(sc, a, b)
                         for a, b in _chunks(n, max(row, CHUNK_POINTS // row * row))])


def timed(f):
    t = time.perf_counter()
    out = f()
    return out, time.perf_counter() - t


def edge_difference(a, b) -> float:
    """Largest difference of two RowEdges' edges [K] (inf where their counts differ)."""
    worst = 0.0
    for name in a.edges:
        for ea, eb in zip(a.edges[name], b.edges[name], strict=True):
            if len(ea) != len(eb):
                return float("inf")
            if ea:
                worst = max(worst, float(np.max(np.abs(np.subtract(ea, eb)))))
    return worst


@contextlib.contextmanager
def cold_starts():
    """The edges' equilibria all from the basis guesses (no warm starts, no grid starts)."""
    warm, intervals = edges.evaluate_warm, edges.feasible_intervals

    def cold(*args, warm_start=None, **kw):
        return warm(*args, **kw)

    def no_nodes(*args, node_potentials=None, **kw):
        return intervals(*args, **kw)

    edges.evaluate_warm, edges.feasible_intervals = cold, no_nodes
    try:
        yield
    finally:
        edges.evaluate_warm, edges.feasible_intervals = warm, intervals


@contextlib.contextmanager
def counted(out: list):
    """Collect the primary's Newton iterations per point of every equilibrate call."""
    solve = thermo.balances.equilibrate

    def counting(*args, **kw):
        r = solve(*args, **kw)
        out.append(r.iterations)
        return r

    thermo.balances.equilibrate = counting
    try:
        yield
    finally:
        thermo.balances.equilibrate = solve


def starts(base, repeat: int) -> None:
    """The ``--starts`` figures (module docstring)."""
    for name, window in WINDOWS.items():
        sc = base if window is None else base.with_window(**window)
        n = sc.window.size()
        row = sc.window.steam_to_carbon.points
        chunks = [solve_chunk(sc, a, b, True)
                  for a, b in _chunks(n, max(row, CHUNK_POINTS // row * row))]
        nodes = np.concatenate([c.pop(PRIMARY_POTENTIALS) for c in chunks])
        ds = assemble(sc, chunks)
        modes = {
            "cold": lambda sc=sc, ds=ds: _cold(edges.feasible_intervals, sc, ds),
            "bracket": lambda sc=sc, ds=ds: edges.feasible_intervals(sc, ds),
            "bracket+grid": lambda sc=sc, ds=ds, nodes=nodes: edges.feasible_intervals(
                sc, ds, node_potentials=nodes),
        }
        times = {m: [] for m in modes}
        found, iters = {}, {}
        for _ in range(max(repeat, 1)):
            for m, f in modes.items():
                its: list = []
                with counted(its):
                    found[m], t = timed(f)
                times[m].append(t)
                iters[m] = np.concatenate(its)
        med = {m: float(np.median(v)) for m, v in times.items()}
        print(f"{name}: exact intervals by start of the edges' equilibria "
              f"(medians of {len(times['cold'])} interleaved)")
        for m in modes:
            print(f"  {m:<13} {med[m]:.3f} s ({', '.join(f'{x:.3f}' for x in times[m])}); "
                  f"cold / this {med['cold'] / med[m]:.2f}x; {iters[m].size} points, "
                  f"{iters[m].mean():.2f} Newton iterations per point; largest edge "
                  f"difference to cold {edge_difference(found[m], found['cold']):.2g} K")
    from tests.benchmarks.bench_sweep import REFERENCE_WINDOW

    sc = base.with_window(**REFERENCE_WINDOW)
    times = {"cold": [], "warm": []}
    out = {}
    for _ in range(max(repeat, 1)):
        for m in times:
            f = (lambda sc=sc: _cold(thermo.sweep, sc)) if m == "cold" else \
                (lambda sc=sc: thermo.sweep(sc))
            out[m], t = timed(f)
            times[m].append(t)
    med = {m: float(np.median(v)) for m, v in times.items()}
    diff = max(float(np.nanmax(np.abs(out["warm"][v].values - out["cold"][v].values),
                               initial=0.0)) for v in ("feasible_t_low", "feasible_t_high"))
    print(f"thermo.sweep, bench_sweep (d) window ({sc.window.size():,} points), medians of "
          f"{len(times['cold'])} interleaved: cold edges {med['cold']:.3f} s "
          f"({', '.join(f'{x:.3f}' for x in times['cold'])}), warm {med['warm']:.3f} s "
          f"({', '.join(f'{x:.3f}' for x in times['warm'])}); cold / warm "
          f"{med['cold'] / med['warm']:.2f}x; largest interval end difference {diff:.2g} K")


def _cold(f, *args):
    with cold_starts():
        return f(*args)


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--repeat", type=int, default=5,
                    help="interleaved timings of each edge method; medians reported")
    ap.add_argument("--starts", action="store_true",
                    help="time the starts of the edges' equilibria instead (docstring)")
    a = ap.parse_args()
    print(f"bench_edges {datetime.now(UTC):%Y-%m-%d %H:%M} UTC, {platform.node()}, "
          f"{os.cpu_count()} CPUs, load {os.getloadavg()[0]:.2f}")
    print(code_version())
    base = thermo.load_scenario()
    plain_sweep(base.with_window(temperature=("700 degC", "950 degC", 3)))  # warm the kernel
    if a.starts:
        starts(base, a.repeat)
        print(f"load at end {os.getloadavg()[0]:.2f}")
        return
    for name, window in WINDOWS.items():
        sc = base if window is None else base.with_window(**window)
        ds, t_sweep = timed(lambda sc=sc: plain_sweep(sc))
        ds["feasible"] = thermo.sweep.__globals__["feasible_mask"](ds, sc.limits)
        times = {m: [] for m in ("bisect", "illinois")}
        found = {}
        for _ in range(max(a.repeat, 1)):  # interleaved, so both share the machine's load
            for m in times:
                found[m], t = timed(lambda sc=sc, ds=ds, m=m: edges.feasible_intervals(
                    sc, ds, method=m))
                times[m].append(t)
        med = {m: float(np.median(v)) for m, v in times.items()}
        ds, t_edges = timed(lambda sc=sc, ds=ds: edges.with_edges(sc, ds))
        n_iv = int(ds["feasible_intervals"].sum())
        print(f"{name}: {sc.window.size():,} points; plain sweep {t_sweep:.2f} s")
        print(f"  exact intervals of {ds['feasible_intervals'].size} rows ({n_iv} intervals, "
              f"default {edges.EDGE_METHOD}): {t_edges:.2f} s = {t_edges / t_sweep:.2f} x "
              "the sweep")
        for m, v in times.items():
            print(f"    {m}: median {med[m]:.3f} s of {len(v)} "
                  f"({', '.join(f'{x:.3f}' for x in v)})")
        print(f"    bisect / illinois time ratio (medians): {med['bisect'] / med['illinois']:.2f};"
              f" largest edge difference {edge_difference(found['bisect'], found['illinois']):.3f}"
              " K")
        for obj in edges.objectives_for(sc):
            bp, t = timed(lambda sc=sc, ds=ds, obj=obj: thermo.best_point(
                sc, obj, ds=ds, with_margins=False))
            print(f"  best point, {obj}: {t:.2f} s = {t / t_sweep:.2f} x the sweep "
                  f"(value {bp.value:.6g}, grid node {bp.grid_value:.6g})")
        _, t = timed(lambda sc=sc: thermo.margins(sc))
        print(f"  margins and sensitivities at the design point: {t:.2f} s = "
              f"{t / t_sweep:.2f} x the sweep")
    print(f"load at end {os.getloadavg()[0]:.2f}")


if __name__ == "__main__":
    main()
