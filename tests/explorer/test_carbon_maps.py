"""The maps' carbon overlays follow the binding carbon verdict (thermo.carbon), node by node."""

from __future__ import annotations

import numpy as np
import pytest

from explorer.maps import (
    broken_limits,
    carbon_forms,
    carbon_words,
    infeasibility,
    slice_fields,
    window_layers,
)
from tests.explorer.test_browser_carbon import _scenario
from thermo.sweep import sweep


@pytest.fixture(scope="module")
def solved():
    sc = _scenario().with_window(temperature=("700 degC", "900 degC", 9),
                                 pressure=("2 bar", "10 bar", 3),
                                 steam_to_carbon=(0.8, 2.4, 5))
    return sc, sweep(sc)


def _inside(px, py, polygons_x, polygons_y) -> bool:
    """Even-odd ray casting over every ring of every polygon (a point in a hole is out)."""
    inside = False
    for rings_x, rings_y in zip(polygons_x, polygons_y, strict=True):
        for rx, ry in zip(rings_x, rings_y, strict=True):
            n = len(rx)
            for k in range(n):
                x1, y1, x2, y2 = rx[k], ry[k], rx[(k + 1) % n], ry[(k + 1) % n]
                if (y1 > py) != (y2 > py) and px < x1 + (py - y1) * (x2 - x1) / (y2 - y1):
                    inside = not inside
    return inside


def test_hatching_and_words_follow_the_binding_verdict(solved):
    sc, ds = solved
    # The window holds points the outlet alone calls graphite-free and the verdict does not.
    assert bool(((ds["carbon_ln_activity_outlet"] < 0) & ~ds["carbon_free"]).any())
    for k in range(ds.sizes["steam_to_carbon"]):
        s = slice_fields(ds, "pressure", {"steam_to_carbon": k})
        free = s["carbon_free"].values
        np.testing.assert_array_equal(carbon_forms(s), ~free)
        np.testing.assert_array_equal(infeasibility(s, sc.limits) <= 0,
                                      s["feasible"].values)
        np.testing.assert_array_equal(s["feasible"].values, free & s["converged"].values)
        words = broken_limits(s, sc.limits)
        np.testing.assert_array_equal(np.char.find(words.astype(str), "carbon") >= 0, ~free)
        calls = carbon_words(s)
        assert all(c.startswith("free") == f for c, f in zip(calls.ravel(), free.ravel(),
                                                               strict=True))
        lay = window_layers(s, "pressure", sc.limits)
        polys = (lay["infeasible"]["xs"][0], lay["infeasible"]["ys"][0])
        x = s["temperature"].values - 273.15
        y = s["pressure"].values / 1e5
        field = infeasibility(s, sc.limits)
        for j in range(y.size):
            for i in range(x.size):
                # Nodes strictly inside the window's frame; the hatching is the filled
                # region of the infeasibility field above 0.
                if 0 < i < x.size - 1 and 0 < j < y.size - 1 and abs(field[j, i]) > 1e-6:
                    assert _inside(x[i], y[j], *polys) == (not s["feasible"].values[j, i])
        # The outlet-only graphite boundary is drawn beside the binding one wherever the
        # outlet field changes sign on the slice.
        ln_out = s["carbon_ln_activity_outlet"].values
        if (ln_out > 0).any() and (ln_out < 0).any():
            assert lay["carbon_outlet"]["xs"]


def test_cli_text_names_the_binding_carbon_criterion():
    import thermo
    from explorer.report import point_report

    sc = thermo.load_scenario()
    text = point_report(thermo.point(sc, feed="CH4=1", temperature="700 degC",
                                     pressure="10 bar", steam_to_carbon=1.1, approach="20 K"))
    assert "NOT carbon-free" in text
    assert "real (non-equilibrated) gas at the catalyst temperature" in text
    assert "methane cracking 1.16" in text  # the example: about 1.16
