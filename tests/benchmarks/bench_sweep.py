"""Benchmark: whole-window sweeps (throughput, peak memory, time to the first Dataset).

Run on its own (not collected by pytest)::

    python tests/benchmarks/bench_sweep.py [--sample 2000] [--big 100] [--skip-big]

(a) Throughput: ``thermo.sweep`` of the demo scenario on a 40 T x 20 P x 20 S/C window
    (650-950 degC, 5-40 bar, S/C 1.5-5: 16,000 points), points/s, against a Cantera
    point-by-point loop on a random sample of the same points (same inlet flows, at T minus
    the scenario's approach, as the sweep solves them). The
    sweep does more than the loop: balances, enthalpies, the Dataset. Two Cantera loops are
    timed: the same problem (gas + graphite, ``Mixture.equilibrate('TP', solver='vcs')``) and
    the gas alone (``equilibrate('TP')``, which cannot report carbon: a lower bound on the time
    of any Cantera loop). The sample also gives max |dx| against the sweep's mole fractions.
(b) Peak memory of a 10^6-point sweep (100 x 100 x 100 on the same ranges) in a child
    process: its own peak RSS (``getrusage(RUSAGE_SELF).ru_maxrss`` at the end), its RSS after
    the imports, and the time; cross-checked with ``RUSAGE_CHILDREN`` here. Goal: under 2 GB.
(c) Time to the first map-ready Dataset of the demo scenario in a fresh process, numba cache
    warm: ``python -c "import time; t=time.time(); import thermo; ds=thermo.sweep(
    thermo.load_scenario()); print(time.time()-t)"`` (one untimed run first, then the median
    of 3), against the time a Cantera gas + graphite loop over the same points takes here.

(d) The reference loop of the README's headline: on the 40 x 20 x 20 window of issue 17
    (500-1000 degC, 1-40 bar, S/C 0.5-5, demo feed: 16,000 points), every point through
    Cantera's gas-phase ``equilibrate('TP')`` first, and the multiphase (gas + graphite, VCS)
    solver only where the gas's carbon activity says graphite is stable (ln a_C > 0, with
    mu_C of the gas from mu_CH4 - 2 mu_H2 and graphite's mu at T, P); as a careful Cantera
    user would write it. Same points (T minus the approach) and the same species data. Timed
    on all 16,000 points, interleaved with ``thermo.sweep`` of the same window (medians of
    the passes); also the equilibrium kernel alone on the same points (rows of S/C, both
    cores) as a fraction of the estimated physical limit (1e6 points/s on two cores, issue
    17), and a cProfile of one sweep: where the rest of the time goes.

Figures only: nothing here asserts a time.
"""

from __future__ import annotations

import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

import argparse  # noqa: E402
import cProfile  # noqa: E402
import json  # noqa: E402
import os  # noqa: E402
import platform  # noqa: E402
import pstats  # noqa: E402
import resource  # noqa: E402
import statistics  # noqa: E402
import subprocess  # noqa: E402
import time  # noqa: E402

import numba  # noqa: E402
import numpy as np  # noqa: E402

import thermo  # noqa: E402
from tests.benchmarks.bench_solver import (  # noqa: E402
    CanteraLoop,
    Window,
    code_version,
    quiet_stdout,
)
from thermo.constants import R  # noqa: E402
from thermo.equilibrium import equilibrate, kernel_is_cached  # noqa: E402
from thermo.species import GAS_SPECIES, formula_matrix  # noqa: E402

SEED = 2468
WINDOW = dict(temperature=("650 degC", "950 degC", 40), pressure=("5 bar", "40 bar", 20),
              steam_to_carbon=(1.5, 5.0, 20))
#: The window of issue 17 and of the headline ratio (demo feed; 1,711 carbon points there).
REFERENCE_WINDOW = dict(temperature=("500 degC", "1000 degC", 40), pressure=("1 bar", "40 bar", 20),
                        steam_to_carbon=(0.5, 5.0, 20))
#: Estimated physical limit of the equilibrium on two cores [points/s] (issue 17: 10 species,
#: 5 elements, about 5 warm Newton iterations of a 5 x 5 solve and 10 exp() each).
PHYSICAL_LIMIT = 1e6
CARBON_CALL = 1e-9  # graphite above this fraction of the carbon fed counts as "carbon forms"

BIG_CHILD = """
import json, resource, sys, time
t0 = time.perf_counter()
import thermo
n = int(sys.argv[1])
sc = thermo.load_scenario().with_window(temperature=("650 degC", "950 degC", n),
                                        pressure=("5 bar", "40 bar", n),
                                        steam_to_carbon=(1.5, 5.0, n))
rss_import = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
t1 = time.perf_counter()
ds = thermo.sweep(sc)
t2 = time.perf_counter()
print(json.dumps(dict(points=int(ds["converged"].size), converged=int(ds["converged"].sum()),
                      import_s=t1 - t0, sweep_s=t2 - t1, rss_import_kB=rss_import,
                      rss_peak_kB=resource.getrusage(resource.RUSAGE_SELF).ru_maxrss,
                      dataset_bytes=int(ds.nbytes))))
"""

#: The issue's command, with the import time also printed (the total is the same).
FIRST_DATASET = ("import time; t=time.time(); import thermo; t1=time.time(); "
                 "ds=thermo.sweep(thermo.load_scenario()); print(time.time()-t, t1-t)")


def window_points(ds) -> Window:
    """The sweep's points as a flat Window: T minus the approach, P, inlet flows."""
    T = ds.temperature.values
    P = ds.pressure.values
    sc = ds.steam_to_carbon.values
    TT, PP, SS = np.meshgrid(T, P, np.arange(sc.size), indexing="ij")
    inlet = ds.inlet_flow.transpose("steam_to_carbon", "species").values[SS.ravel()]
    return Window("sweep", TT.ravel() - float(ds.attrs["approach_K"]), PP.ravel(), inlet, True)


def compare(ds, w: Window, idx, x_ct, c_ct):
    x_ours = ds.mole_fraction.transpose("temperature", "pressure", "steam_to_carbon",
                                        "species").values.reshape(-1, w.inlet.shape[1])[idx]
    dep = ds.carbon_deposit.values.ravel()[idx]
    hc_c = ds.attrs["hydrocarbon_carbon_mol_per_s"]
    ok = np.isfinite(x_ct).all(axis=1) & ds.converged.values.ravel()[idx]
    dx = float(np.max(np.abs(x_ours[ok] - x_ct[ok])))
    call_ct = c_ct * w.inlet[idx].sum(axis=1) > CARBON_CALL * hc_c
    call_ours = dep > CARBON_CALL * hc_c
    return dx, int(ok.sum()), int((call_ct == call_ours)[ok].sum()), int(call_ct[ok].sum())


def part_a(sample: int, rng, passes: int = 3) -> dict:
    sc = thermo.load_scenario().with_window(**WINDOW)
    t0 = time.perf_counter()
    thermo.sweep(thermo.load_scenario().with_window(temperature=("650 degC", "950 degC", 4),
                                                    pressure=("5 bar", "40 bar", 2),
                                                    steam_to_carbon=(1.5, 5.0, 2)))
    warm = time.perf_counter() - t0
    ds = thermo.sweep(sc)
    n = int(ds.converged.size)
    w = window_points(ds)
    idx = np.sort(rng.choice(n, min(sample, n), replace=False))
    mix = CanteraLoop(carbon=True)
    gas = CanteraLoop(carbon=False)
    # Interleaved passes (sweep, Cantera with graphite, Cantera gas only); medians reported.
    t_ours, t_mix, t_mix1, t_gas1 = [], [], [], []
    for _ in range(passes):
        t0 = time.perf_counter()
        ds = thermo.sweep(sc)
        t_ours.append(time.perf_counter() - t0)
        mix.failures = 0
        x_ct, c_ct, t, t1, first = mix.run(w, idx)
        t_mix.append(t)
        t_mix1.append(t1)
        _, _, _, t1, first_gas = gas.run(w, idx)
        t_gas1.append(t1)
    t_ours, t_mix = statistics.median(t_ours), statistics.median(t_mix)
    t_mix1, t_gas1 = statistics.median(t_mix1), statistics.median(t_gas1)
    dx, compared, agree, carbon_pts = compare(ds, w, idx, x_ct, c_ct)
    # Reference rates: points each loop solved at the first attempt with Cantera's defaults.
    return dict(n=n, warm=warm, t_ours=t_ours, rate_ours=n / t_ours, m=idx.size,
                m_mix=int(first.sum()), t_mix=t_mix1, rate_mix=first.sum() / t_mix1,
                rate_mix_all=idx.size / t_mix, m_gas=int(first_gas.sum()), t_gas=t_gas1,
                rate_gas=first_gas.sum() / t_gas1, dx=dx, compared=compared, agree=agree,
                carbon_pts=carbon_pts, failures=mix.failures,
                converged=int(ds.converged.sum()), passes=passes)


def part_b(n_axis: int) -> dict:
    before = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss
    t0 = time.perf_counter()
    out = subprocess.run([sys.executable, "-c", BIG_CHILD, str(n_axis)], capture_output=True,
                         text=True, cwd=ROOT, check=True)
    wall = time.perf_counter() - t0
    r = json.loads(out.stdout.strip().splitlines()[-1])
    r["wall_s"] = wall
    r["rss_children_kB"] = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss
    r["children_before_kB"] = before
    return r


def part_c(runs: int = 3) -> dict:
    cmd = [sys.executable, "-c", FIRST_DATASET]
    subprocess.run(cmd, capture_output=True, text=True, cwd=ROOT, check=True)  # untimed
    inner, imports, wall = [], [], []
    for _ in range(runs):
        t0 = time.perf_counter()
        out = subprocess.run(cmd, capture_output=True, text=True, cwd=ROOT, check=True)
        wall.append(time.perf_counter() - t0)
        total, imp = map(float, out.stdout.strip().splitlines()[-1].split())
        inner.append(total)
        imports.append(imp)
    ds = thermo.sweep(thermo.load_scenario())
    w = window_points(ds)
    idx = np.arange(w.T.size)
    loop = CanteraLoop(carbon=True)
    x_ct, c_ct, t_all, t_first, first = loop.run(w, idx)
    dx, compared, agree, carbon_pts = compare(ds, w, idx, x_ct, c_ct)
    # Reference: Cantera's per-point time on points its defaults solve at once, times N (the
    # smaller figure; the loop's actual time, retries included, is printed too).
    t_ct = t_first / first.sum() * idx.size
    return dict(n=w.T.size, inner=statistics.median(inner), inner_all=inner,
                imports=statistics.median(imports),
                wall=statistics.median(wall), t_ct=t_ct, t_ct_all=t_all,
                retried=int((~first).sum()), dx=dx, compared=compared, agree=agree,
                carbon_pts=carbon_pts, failures=loop.failures)


class CarefulLoop:
    """Cantera as a careful user would loop it: gas-phase equilibrium first, then the
    multiphase solver only where the equilibrated gas is supersaturated in carbon."""

    def __init__(self):
        self.mix = CanteraLoop(carbon=True)
        self.gas = self.mix.gas
        self.graphite = self.mix.graphite
        self.iCH4 = GAS_SPECIES.index("CH4")
        self.iH2 = GAS_SPECIES.index("H2")

    def run(self, w: Window, idx: np.ndarray):
        """x (M, S), graphite per mol fed (M,), time [s], graphite-stable mask (M,)."""
        gas, gr, ct = self.gas, self.graphite, self.mix.ct
        x = np.empty((idx.size, len(GAS_SPECIES)))
        c = np.zeros(idx.size)
        stable = np.zeros(idx.size, dtype=bool)
        t0 = time.perf_counter()
        for k, i in enumerate(idx):
            T, P, inlet = w.T[i], w.P[i], w.inlet[i]
            gas.TPX = T, P, inlet / inlet.sum()
            try:
                gas.equilibrate("TP")
            except ct.CanteraError:
                self.mix.failures += 1
                x[k] = np.nan
                continue
            mu = gas.chemical_potentials  # J kmol-1, at T, P and the composition
            gr.TP = T, P
            ln_ac = (mu[self.iCH4] - 2.0 * mu[self.iH2] - gr.chemical_potentials[0]) / (
                R * 1000.0 * T)
            if ln_ac > 0.0:
                stable[k] = True
                x[k], c[k], _ = self.mix.solve(T, P, inlet)
            else:
                x[k] = gas.X
        return x, c, time.perf_counter() - t0, stable


def part_d(passes: int = 3) -> dict:
    sc = thermo.load_scenario().with_window(**REFERENCE_WINDOW)
    ds = thermo.sweep(sc)
    n = int(ds.converged.size)
    w = window_points(ds)
    idx = np.arange(n)
    loop = CarefulLoop()
    b = w.inlet @ formula_matrix()
    t_ours, t_ref, t_kern = [], [], []
    for _ in range(passes):
        t0 = time.perf_counter()
        ds = thermo.sweep(sc)
        t_ours.append(time.perf_counter() - t0)
        t0 = time.perf_counter()
        res = equilibrate(w.T, w.P, b, row=ds.sizes["steam_to_carbon"])
        t_kern.append(time.perf_counter() - t0)
        loop.mix.failures = 0
        with quiet_stdout():
            x_ct, c_ct, t, stable = loop.run(w, idx)
        t_ref.append(t)
    dx, compared, agree, carbon_pts = compare(ds, w, idx, x_ct, c_ct)
    prof = cProfile.Profile()
    prof.enable()
    thermo.sweep(sc)
    prof.disable()
    st = pstats.Stats(prof)
    total = st.total_tt
    rows = []
    for (file, line, fn), (_, _, tt, ct_, _) in st.stats.items():
        rows.append((ct_, tt, f"{Path(file).name}:{line}({fn})"))
    rows.sort(reverse=True)
    t_ours, t_ref, t_kern = (statistics.median(v) for v in (t_ours, t_ref, t_kern))
    return dict(n=n, t_ours=t_ours, t_ref=t_ref, t_kern=t_kern, passes=passes,
                kern_conv=int(res.converged.sum()), stable=int(stable.sum()), dx=dx,
                compared=compared, agree=agree, carbon_pts=carbon_pts,
                failures=loop.mix.failures, profile_total=total, profile=rows[:40])


def main(argv=None) -> None:
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--sample", type=int, default=2000, help="Cantera points in (a)")
    ap.add_argument("--big", type=int, default=100, help="points per axis in (b)")
    ap.add_argument("--skip-big", action="store_true", help="leave out (b)")
    ap.add_argument("--only-reference", action="store_true",
                    help="run only (d): the careful Cantera loop, kernel and profile")
    args = ap.parse_args(argv)
    import cantera

    print("bench_sweep: thermo.sweep throughput, memory and first-Dataset time")
    print(f"  {time.strftime('%Y-%m-%d %H:%M')}, {platform.machine()}, {os.cpu_count()} CPUs, "
          f"Python {platform.python_version()}, numpy {np.__version__}, numba "
          f"{numba.__version__} ({numba.get_num_threads()} threads), Cantera "
          f"{cantera.__version__}; numba kernel cached at start: {kernel_is_cached()}")
    print(f"  code: {code_version()}; load average at start {os.getloadavg()[0]:.2f}")
    rng = np.random.default_rng(SEED)
    thermo.sweep(thermo.load_scenario())  # kernel load, untimed

    print("\n(d) reference: careful Cantera loop (gas TP first, multiphase only where graphite "
          "is stable),\n    500-1000 degC x 1-40 bar x S/C 0.5-5 (40 x 20 x 20), demo feed ...",
          flush=True)
    d = part_d()
    print(f"  medians of {d['passes']} interleaved passes over all {d['n']:,} points")
    for name, t in (("thermo.sweep (every Dataset variable), all cores", d["t_ours"]),
                    ("equilibrium kernel alone (equilibrate, rows of S/C), all cores",
                     d["t_kern"]),
                    ("Cantera careful loop (gas TP, then Mixture/VCS where a_C > 1)",
                     d["t_ref"])):
        print(f"  {name:<66} {t:>7.3f} s {d['n'] / t:>10,.0f} points/s "
              f"{d['t_ref'] / t:>6.1f}x")
    print(f"  headline: sweep / careful loop = {d['t_ref'] / d['t_ours']:.1f}x; kernel alone "
          f"{d['n'] / d['t_kern']:,.0f} points/s = {d['n'] / d['t_kern'] / PHYSICAL_LIMIT:.2f} "
          f"of the estimated limit ({PHYSICAL_LIMIT:,.0f} points/s); kernel share of the sweep "
          f"{d['t_kern'] / d['t_ours']:.0%}")
    print(f"  Cantera: graphite stable at {d['stable']:,} points (multiphase solved there); "
          f"unsolved {d['failures']}; max |dx| vs sweep {d['dx']:.1e} over "
          f"{d['compared']:,} points; carbon call agrees at {d['agree']:,} "
          f"({d['carbon_pts']} carbon points)")
    print(f"  profile of one sweep ({d['profile_total']:.3f} s under cProfile), cumulative "
          "time of the largest entries:")
    for cum, tt, name in d["profile"][:25]:
        print(f"    {cum:>7.3f} s cum {tt:>7.3f} s own  {name}")
    if args.only_reference:
        return

    print("\n(a) sweep throughput, demo feed, 650-950 degC x 5-40 bar x S/C 1.5-5 "
          "(40 x 20 x 20) ...", flush=True)
    a = part_a(args.sample, rng)
    print(f"  warm-up sweep (16 points, kernel load): {a['warm']:.2f} s; converged "
          f"{a['converged']:,} / {a['n']:,}; medians of {a['passes']} interleaved passes")
    print(f"  {'what':<62} {'points':>7} {'time [s]':>9} {'points/s':>10} {'ratio':>7}")
    rows = [
        ("thermo.sweep (equilibrium + balance + Dataset), all cores", a["n"], a["t_ours"],
         a["rate_ours"]),
        ("Cantera loop, gas + graphite (Mixture, vcs), random sample", a["m_mix"],
         a["t_mix"], a["rate_mix"]),
        ("Cantera loop, gas only (equilibrate('TP')), same sample", a["m_gas"], a["t_gas"],
         a["rate_gas"]),
    ]
    for name, npts, t, rate in rows:
        print(f"  {name:<62} {npts:>7,} {t:>9.3f} {rate:>10,.0f} "
              f"{a['rate_ours'] / rate:>6.1f}x")
    print("  ratio = sweep points/s over that row's points/s (Cantera: one process, "
          "equilibrium only, points its defaults solved at the first attempt; with retries "
          f"the gas + graphite loop gives {a['rate_ours'] / a['rate_mix_all']:.1f}x)")
    print(f"  sample vs sweep: max |dx| {a['dx']:.1e} over {a['compared']:,} points; carbon "
          f"call agrees at {a['agree']:,} / {a['compared']:,} ({a['carbon_pts']} carbon "
          f"points); Cantera unsolved: {a['failures']}")

    if not args.skip_big:
        n3 = args.big ** 3
        print(f"\n(b) peak memory: {n3:,}-point sweep ({args.big} x {args.big} x {args.big}) "
              "in a child process ...", flush=True)
        b = part_b(args.big)
        gb = 1024 ** 2  # ru_maxrss is in kB on Linux
        print(f"  points {b['points']:,}, converged {b['converged']:,}")
        print(f"  sweep time {b['sweep_s']:.1f} s ({b['points'] / b['sweep_s']:,.0f} points/s); "
              f"child wall time incl. start-up {b['wall_s']:.1f} s")
        print(f"  peak RSS {b['rss_peak_kB'] / gb:.2f} GB (after imports "
              f"{b['rss_import_kB'] / gb:.2f} GB); RUSAGE_CHILDREN max "
              f"{b['rss_children_kB'] / gb:.2f} GB; Dataset itself "
              f"{b['dataset_bytes'] / 1e9:.2f} GB")
        print(f"  goal (issue): under 2 GB -> {'met' if b['rss_peak_kB'] / gb < 2 else 'NOT met'}")

    print("\n(c) time to the first map-ready Dataset, demo scenario, fresh process, numba "
          "cache warm ...", flush=True)
    c = part_c()
    print(f"  points {c['n']:,}; import thermo + load + sweep: median {c['inner']:.2f} s "
          f"(runs: {', '.join(f'{t:.2f}' for t in c['inner_all'])}); process wall time incl. "
          f"interpreter start {c['wall']:.2f} s; import thermo alone: median "
          f"{c['imports']:.2f} s")
    print(f"  Cantera gas + graphite loop over the same {c['n']:,} points (this process, "
          f"phases built beforehand): {c['t_ct']:.2f} s at its first-attempt per-point time "
          f"({c['t_ct_all']:.2f} s measured, {c['retried']} points retried)")
    print(f"  first Dataset / Cantera loop = {c['inner'] / c['t_ct']:.2f} "
          f"(Cantera loop takes {c['t_ct'] / c['inner']:.1f}x the fresh-process time; "
          f"{c['t_ct'] / c['wall']:.1f}x with interpreter start)")
    print(f"  demo sweep vs Cantera: max |dx| {c['dx']:.1e} over {c['compared']:,} points; "
          f"carbon call agrees at {c['agree']:,} ({c['carbon_pts']} carbon points); Cantera "
          f"unsolved: {c['failures']}")
    print(f"\n  load average at the end: {os.getloadavg()[0]:.2f}")


if __name__ == "__main__":
    main()
