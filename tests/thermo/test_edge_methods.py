"""Illinois false position and bisection give the same exact edges (thermo.edge_search).

On the shipped demo and hydrogen-plant scenarios (their own windows and limits), every edge
of every limit and every row found by ``method="illinois"`` (the default) lies within
EDGE_TOLERANCE_K (0.1 K) of the one found by ``method="bisect"``, and the rows' feasible
intervals agree to the same. Both are also checked against an outside definition of an edge:
a change of thermo.point's verdict, read from its JSON (tests/thermo/test_edges.py's
``verdict``), within half the tolerance of a sample of the reported edges.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

import thermo
from tests.thermo.test_edges import verdict as _verdict
from thermo import edges
from thermo.edge_search import refine

ROOT = Path(__file__).resolve().parents[2]
SCENARIOS = {"demo": None, "hydrogen plant": ROOT / "scenarios" / "hydrogen-plant.toml"}


def verdict(sc, T: float, P: float, S: float) -> bool:
    """Every review limit met, from thermo.point's JSON alone (test_edges' verdict, and the
    plant's fired duty where the scenario limits it)."""
    ok = _verdict(sc, T, P, S)
    if ok and sc.limits.max_fired_duty is not None:
        d = thermo.point(sc, temperature=f"{T!r} K", pressure=f"{P!r} Pa",
                         steam_to_carbon=S).to_dict()
        ok = d["plant"]["fired_duty_W"] <= sc.limits.max_fired_duty
    return ok


@pytest.fixture(scope="module", params=list(SCENARIOS))
def both(request):
    path = SCENARIOS[request.param]
    sc = thermo.load_scenario() if path is None else thermo.load_scenario(path)
    ds = thermo.sweep(sc)
    return sc, ds, {m: edges.feasible_intervals(sc, ds, method=m)
                    for m in ("bisect", "illinois")}


def test_illinois_is_the_default():
    assert edges.EDGE_METHOD == "illinois"


def test_every_edge_agrees_to_the_tolerance(both):
    _, _, re = both
    a, b = re["bisect"], re["illinois"]
    assert a.edges.keys() == b.edges.keys()
    count = 0
    for name in a.edges:
        for r, (ea, eb) in enumerate(zip(a.edges[name], b.edges[name], strict=True)):
            assert len(ea) == len(eb), (name, r, ea, eb)
            np.testing.assert_allclose(eb, ea, rtol=0, atol=edges.EDGE_TOLERANCE_K,
                                       err_msg=f"{name}, row {r}")
            count += len(ea)
    assert count > 50  # the scenarios do have edges to compare
    for ia, ib in zip(a.intervals, b.intervals, strict=True):
        assert len(ia) == len(ib)
        np.testing.assert_allclose(np.asarray(ib).ravel(), np.asarray(ia).ravel(), rtol=0,
                                   atol=edges.EDGE_TOLERANCE_K)


def test_illinois_edges_are_changes_of_the_point_verdict(both):
    """A sample of Illinois' interval ends: thermo.point's verdict differs half the
    tolerance on either side (where the end is an edge, not the window's bound)."""
    sc, ds, re = both
    ivs = re["illinois"]
    T = ds["temperature"].values
    rng = np.random.default_rng(17)
    rows = [r for r, v in enumerate(ivs.intervals) if v]
    checked = 0
    for r in rng.permutation(rows):
        idx = np.unravel_index(r, ivs.shape)
        coords = {d: ivs.row_coords[d][i] for d, i in zip(ivs.row_dims, idx, strict=True)}
        for t in (x for iv in ivs.intervals[r] for x in iv):
            if min(abs(t - T[0]), abs(t - T[-1])) < 1e-6:
                continue
            h = 0.5 * edges.EDGE_TOLERANCE_K
            P, S = float(coords["pressure"]), float(coords["steam_to_carbon"])
            assert verdict(sc, float(t) - h, P, S) != verdict(sc, float(t) + h, P, S), (r, t)
            checked += 1
        if checked >= 6:
            break
    assert checked >= 4


def test_refine_finds_a_known_root_with_either_method():
    """On a cubic with a known root (x^3 - 2 = 0, root 2^(1/3) = 1.259921...), both methods
    end with brackets no wider than the tolerance around it; Illinois in fewer probes."""
    root = 2.0 ** (1.0 / 3.0)
    calls = {"bisect": 0, "illinois": 0}

    def make(method):
        def probe(idx, t, guess):
            calls[method] += 1
            g = 2.0 - t**3  # margin of "x^3 <= 2"
            return g >= 0, g, None
        return probe

    lo0, hi0 = np.array([0.3, 1.0]), np.array([1.9, 1.3])
    for method in ("bisect", "illinois"):
        lo, hi = refine(make(method), lo0, hi0, np.array([True, True]), 2.0 - lo0**3,
                        2.0 - hi0**3, 1e-3, method)
        assert np.all(hi - lo <= 1e-3) and np.all((lo <= root) & (root <= hi))
    assert calls["illinois"] < calls["bisect"]


def test_unknown_method_is_named():
    with pytest.raises(ValueError, match="secant"):
        refine(lambda i, t, g: (t > 0, t, None), np.array([0.0]), np.array([1.0]),
               np.array([False]), np.array([-1.0]), np.array([1.0]), 0.1, "secant")
