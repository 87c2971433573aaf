"""The shared NASA evaluation (one per distinct temperature) gives the numbers of the direct
one, bit for bit, and keeps the range errors.

Reference: the per-point evaluation of the same formulas (NASA TM-4513, McBride, Gordon &
Reno 1993, eq. 1-3 of the 7-coefficient form) on the same coefficients; both paths must agree
exactly (a tolerance of 1e-12 would allow round-off; the
paths do the same operations, so equality is required).
"""

from __future__ import annotations

import numpy as np
import pytest

from thermo import species as sp
from thermo.extent import REFORMING, SHIFT, delta_g_RT, delta_h

FUNCTIONS = ("cp_R", "h_RT", "s_R", "g_RT")
NAMES = sp.GAS_SPECIES + (sp.GRAPHITE,)


def _grid():
    # A window's temperature axis as a sweep lays it out (repeated in runs), with the NASA
    # mid temperature (1000 K: low range there) among the values.
    return np.repeat(np.r_[np.linspace(700.0, 1300.0, 39), 1000.0], 50)


@pytest.mark.parametrize("what", FUNCTIONS)
def test_shared_equals_direct(what, monkeypatch):
    T = _grid()
    shared = sp.nasa_values(T, NAMES, what)
    monkeypatch.setattr(sp, "DEDUPE_MIN", 10**9)  # every value evaluated on its own
    direct = sp.nasa_values(T, NAMES, what)
    pointwise = np.array([[float(getattr(sp, what)(t, n)) for t in T[::50]] for n in NAMES])
    np.testing.assert_array_equal(shared, direct)
    np.testing.assert_array_equal(shared[:, ::50], pointwise)
    assert shared.flags.c_contiguous


def test_shared_reactions_equal_direct(monkeypatch):
    T = _grid()
    fast = [delta_g_RT(REFORMING, T), delta_h(SHIFT, T)]
    monkeypatch.setattr(sp, "DEDUPE_MIN", 10**9)
    slow = [delta_g_RT(REFORMING, T), delta_h(SHIFT, T)]
    for a, b in zip(fast, slow, strict=True):
        np.testing.assert_array_equal(a, b)


def test_shared_refuses_out_of_range():
    T = _grid().copy()
    T[-1] = 3600.0  # above the GRI30 gas range (3500 K)
    with pytest.raises(sp.TemperatureRangeError, match="3600 K is outside the data range of CH4"):
        sp.gas_table(T, "h_RT")
