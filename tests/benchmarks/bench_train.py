"""Benchmark: the reforming train over a window, against Cantera's HP equilibrium loop.

Run on its own (not collected by pytest)::

    python tests/benchmarks/bench_train.py [--sample 300]

(a) The adiabatic secondary reformer alone: ``thermo.train.adiabatic_equilibrium`` on the
    primary outlets of the demo scenario over a 40 T x 20 P x 20 S/C window (16,000 points,
    air at O2/C 0.25 and 550 degC), points/s, against a Cantera loop of
    ``equilibrate('HP')`` (gas only, the same species and data: tests/thermo/cantera_ref.py)
    on a random sample of the same inlets; the sample also gives the largest outlet
    temperature difference.
(b) Whole sweeps of the same window: the demo scenario alone, and with the four-stage train
    of tests/thermo/test_train.py, so the train's cost shows as a ratio (``--repeat``
    interleaved runs of each, default 3; the ratio of the medians, of wall time and of the
    process's CPU time). The pre-reformer's
    outlets kept by earlier sweeps of the process (thermo.train._PRE_CACHE) are dropped
    before each run, so every run pays for its own.

(c) The equilibrium solves of one sweep of each (points sent to
    ``thermo.equilibrium.equilibrate`` by the balances, the train's stages and the carbon
    path, and the solver's Newton iterations summed over them): a count that the machine's
    load does not move.

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
import time  # noqa: E402

import numpy as np  # noqa: E402

import thermo  # noqa: E402
import thermo.train  # noqa: E402
from tests.benchmarks.common import code_version  # noqa: E402
from tests.thermo import cantera_ref  # noqa: E402
from tests.thermo.test_train import FULL_TRAIN  # noqa: E402
from thermo.balances import enthalpy_flow, reformer_balance  # noqa: E402
from thermo.scenario import SecondaryReformer, parse_scenario  # noqa: E402
from thermo.train import adiabatic_equilibrium  # noqa: E402

WINDOW = dict(temperature=("650 degC", "950 degC", 40), pressure=("5 bar", "40 bar", 20),
              steam_to_carbon=(1.5, 5.0, 20))
SEED = 1357


def _cantera_hp(moles, H, P):
    g = cantera_ref.gas()
    total = moles.sum()
    g.TPX = 1200.0, P, moles / total
    g.HP = H / total * 1000.0 / g.mean_molecular_weight, P
    g.equilibrate("HP")
    return g.T


def count_solves(scenario) -> tuple[int, int]:
    """(points, solver iterations) sent to the equilibrium solver by one sweep."""
    import importlib

    mods = [importlib.import_module(m) for m in
            ("thermo.balances", "thermo.carbon_path", "thermo.train_stages")]
    orig = mods[0].equilibrate
    seen = [0, 0]

    def counted(T, *args, **kw):
        out = orig(T, *args, **kw)
        seen[0] += int(np.size(out.iterations))
        seen[1] += int(np.sum(out.iterations))
        return out

    for m in mods:
        m.equilibrate = counted
    try:
        thermo.train._PRE_CACHE.clear()
        thermo.sweep(scenario)
    finally:
        for m in mods:
            m.equilibrate = orig
    return seen[0], seen[1]


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--sample", type=int, default=300)
    ap.add_argument("--repeat", type=int, default=3,
                    help="interleaved timings of each sweep in (b); medians reported")
    a = ap.parse_args()
    print(code_version())
    sc = thermo.load_scenario().with_window(**WINDOW)
    axes = {k: v.values() for k, v in sc.window.axes().items()}
    T, P, S = (g.ravel() for g in np.meshgrid(axes["temperature"], axes["pressure"],
                                              axes["steam_to_carbon"], indexing="ij"))
    feed = sc.feed.inlet_flows(steam_to_carbon=S).T
    prim = reformer_balance(feed, T, P, sc.feed.inlet_temperature, sc.approach)
    gas = prim.outlet_flow
    sec = SecondaryReformer("air", 0.25, 823.15)
    ox = sec.oxidant_flows(prim.hydrocarbon_carbon).T
    H_in = enthalpy_flow(gas, T) + enthalpy_flow(ox, np.full(len(T), 823.15))
    mixed = gas + ox
    adiabatic_equilibrium(mixed[:50], H_in[:50], P[:50], 0.0)  # compile/warm
    t0 = time.perf_counter()
    # As the train calls it: bracket from 400 K below the primary outlet, the primary
    # outlet temperature as the first guess.
    T_out, _, ok = adiabatic_equilibrium(mixed, H_in, P, 0.0,
                                         bounds=(np.maximum(T - 400.0, 350.0), 3000.0),
                                         guess=T)
    ours = time.perf_counter() - t0
    rng = np.random.default_rng(SEED)
    pick = rng.choice(len(T), size=a.sample, replace=False)
    _cantera_hp(mixed[0], H_in[0], P[0])
    t0 = time.perf_counter()
    T_ct = np.array([_cantera_hp(mixed[i], H_in[i], P[i]) for i in pick])
    ct = time.perf_counter() - t0
    rate_ours = len(T) / ours
    rate_ct = a.sample / ct
    print(f"(a) adiabatic secondary reformer, {len(T):,} points: {rate_ours:,.0f} points/s, "
          f"all converged: {bool(ok.all())}")
    print(f"    Cantera equilibrate('HP') loop on {a.sample} of them: {rate_ct:,.0f} points/s"
          f"  -> ratio {rate_ours / rate_ct:.1f}x; max |dT| "
          f"{np.abs(T_out[pick] - T_ct).max():.2e} K")
    train_sc = parse_scenario(sc.to_toml() + FULL_TRAIN)
    thermo.sweep(train_sc.with_window(temperature=("800 degC", "900 degC", 3)))  # warm
    times = {"primary only": [], "four-stage train": []}
    cpu = {name: [] for name in times}
    for _ in range(max(a.repeat, 1)):  # interleaved, so that both share the machine's load
        for name, s in (("primary only", sc), ("four-stage train", train_sc)):
            thermo.train._PRE_CACHE.clear()
            t0, c0 = time.perf_counter(), time.process_time()
            ds = thermo.sweep(s)
            times[name].append(time.perf_counter() - t0)
            cpu[name].append(time.process_time() - c0)
            conv = float(ds["converged"].mean())
    for name, ts in times.items():
        t = float(np.median(ts))
        print(f"(b) sweep, {name}: 16,000 points in {t:.2f} s median of {len(ts)} "
              f"({16000 / t:,.0f} points/s; each run {', '.join(f'{x:.2f}' for x in ts)})")
    print(f"    converged (train): {conv:.4f}; load average {os.getloadavg()[0]:.1f}")
    ratio = np.median(times["four-stage train"]) / np.median(times["primary only"])
    print(f"    train / primary time ratio (medians): {ratio:.2f}")
    counts = {name: count_solves(s) for name, s in (("primary only", sc),
                                                    ("four-stage train", train_sc))}
    for name, (pts, its) in counts.items():
        print(f"(c) equilibrium solves, {name}: {pts:,} points, {its:,} solver iterations")
    ratio = np.median(cpu["four-stage train"]) / np.median(cpu["primary only"])
    print(f"    train / primary CPU-time ratio (medians, this process's CPU time, less "
          f"sensitive to other load): {ratio:.2f}")

if __name__ == "__main__":
    main()
