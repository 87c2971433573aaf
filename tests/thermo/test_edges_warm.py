"""Warm-started exact edges give the answers of cold solves (thermo.edges).

Each bracket's next point starts the primary reformer's equilibrium from the element
potentials of the bracket's last solved point. The ideal-gas + graphite equilibrium is the
unique minimum of a convex problem ([SMITH-MISSEN1982], ch. 3-4), so the start may change the
number of Newton iterations but not the answer beyond the solver's tolerance: every variable
must equal the cold solve's, and every edge the one found with cold starts to half of
EDGE_TOLERANCE_K (both report the same change of verdict to half the tolerance). Checked on
the demo (primary alone) and the ammonia front end (a secondary reformer, whose first
estimates ``secondary_guess`` are used at the same time).
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

import thermo
import thermo.balances
from thermo import edges
from thermo.sweep import LIMIT_VARIABLES, PRIMARY_POTENTIALS, _chunks, solve_chunk

ROOT = Path(__file__).resolve().parents[2]
SCENARIOS = {"demo": None, "ammonia front end": ROOT / "scenarios" / "ammonia-front-end.toml"}


def scenario(name):
    path = SCENARIOS[name]
    return thermo.load_scenario() if path is None else thermo.load_scenario(path)


@pytest.mark.parametrize("name", list(SCENARIOS))
def test_evaluate_warm_equals_cold(name):
    """Points started from neighbours 0.7 K away (and NaN rows: no start) equal cold solves:
    same convergence and carbon call, every variable to 1e-8 relative (1e-9 of the largest
    value absolute), the returned potentials to 1e-7; the started points take fewer Newton
    iterations."""
    sc = scenario(name)
    T = np.array([990.0, 1040.0, 1090.0, 1130.0, 1000.0, 1120.0])
    P = np.array([25e5, 30e5, 35e5, 40e5, 30e5, 25e5])
    S = np.array([2.0, 2.5, 3.0, 4.0, 1.2, 3.5])
    cold, lam_cold = edges.evaluate_warm(sc, T, P, S)
    _, lam_near = edges.evaluate_warm(sc, T - 0.7, P, S)
    lam_near[-1] = np.nan  # this point has no start: basis guesses
    guess = cold["secondary_temperature"].values + 0.3 if "secondary_temperature" in cold \
        else None
    warm, lam_warm = edges.evaluate_warm(sc, T, P, S, warm_start=lam_near,
                                         secondary_guess=guess)
    assert cold["converged"].values.all()
    assert (warm["converged"].values == cold["converged"].values).all()
    assert set(warm.data_vars) == set(cold.data_vars)
    # The Newton iterations are the one thing the start changes: fewer from a neighbour,
    # the same where there is no start.
    it_w, it_c = warm["iterations"].values, cold["iterations"].values
    assert (it_w[:-1] < it_c[:-1]).all() and it_w[-1] == it_c[-1]
    for v in cold.data_vars:
        if v == "iterations":
            continue
        a = np.asarray(cold[v].values, dtype=float)
        b = np.asarray(warm[v].values, dtype=float)
        scale = np.nanmax(np.abs(a)) if np.isfinite(a).any() else 1.0
        np.testing.assert_allclose(b, a, rtol=1e-8, atol=1e-9 * scale, err_msg=v)
    dep = LIMIT_VARIABLES["carbon_free"]
    assert ((warm[dep].values > 0) == (cold[dep].values > 0)).all()
    both = np.isfinite(lam_cold)
    assert (np.isfinite(lam_warm) == both).all()
    assert np.abs(lam_warm[both] - lam_cold[both]).max() <= 1e-7


@pytest.mark.parametrize("name", list(SCENARIOS))
def test_edges_warm_equal_cold(name, monkeypatch):
    """Every edge of every limit and row with warm starts (from each bracket's last point;
    and also the first points from the grid's potentials) lies within half of
    EDGE_TOLERANCE_K of the one with cold starts (same counts), and each kind of start takes
    fewer Newton iterations per solved point."""
    sc = scenario(name)
    ds = thermo.sweep(sc)
    n_pts = ds["converged"].size
    row = ds.sizes[ds["converged"].dims[-1]]
    chunks = [solve_chunk(sc, a, b, True) for a, b in _chunks(n_pts, max(row, 4096 // row * row))]
    nodes = np.concatenate([c[PRIMARY_POTENTIALS] for c in chunks])
    iters = []
    solve = thermo.balances.equilibrate

    def counting(*a, **k):
        r = solve(*a, **k)
        iters.append(r.iterations)
        return r

    monkeypatch.setattr(thermo.balances, "equilibrate", counting)
    warm = edges.feasible_intervals(sc, ds)
    it_warm = np.concatenate(iters)
    iters.clear()
    grid = edges.feasible_intervals(sc, ds, node_potentials=nodes)  # first points too
    it_grid = np.concatenate(iters)
    iters.clear()
    evaluate_warm = edges.evaluate_warm

    def cold_only(*a, warm_start=None, **k):
        return evaluate_warm(*a, **k)

    monkeypatch.setattr(edges, "evaluate_warm", cold_only)
    cold = edges.feasible_intervals(sc, ds)
    it_cold = np.concatenate(iters)
    n = 0
    for found in (warm, grid):
        for lim in cold.edges:
            for ew, ec in zip(found.edges[lim], cold.edges[lim], strict=True):
                assert len(ew) == len(ec), lim
                if ec:
                    n += len(ec)
                    assert np.abs(np.subtract(ew, ec)).max() <= 0.5 * edges.EDGE_TOLERANCE_K
        assert [len(v) for v in found.intervals] == [len(v) for v in cold.intervals]
    assert n > 0
    assert it_warm.size == it_cold.size == it_grid.size
    assert it_warm.mean() < 0.8 * it_cold.mean()
    assert it_grid.mean() < 0.8 * it_warm.mean()
    # thermo.sweep starts its edges from its grid's potentials: the same intervals.
    for v in ("feasible_t_low", "feasible_t_high"):
        np.testing.assert_allclose(ds[v].values, edges.with_edges(sc, ds)[v].values,
                                   rtol=0, atol=0.5 * edges.EDGE_TOLERANCE_K, err_msg=v)
