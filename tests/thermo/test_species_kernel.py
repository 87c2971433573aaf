"""The compiled NASA-polynomial kernel gives the numpy path's numbers, bit for bit.

Both evaluate the same 7-coefficient polynomials (McBride, Zehe & Gordon 2002, NASA
TP-2002-211556, eqs. 1-3 for cp/R, h/RT and s/R) with the same operations in the same
order, and the kernel takes ln T from numpy, so every value must be equal to the last bit,
in both temperature ranges and at the common mid temperature itself (1000 K, low range).
"""

from __future__ import annotations

import numpy as np
import pytest

from thermo import species


def _records():
    names, _, _, _, _, t_low, t_high, _ = species._coefficient_table()
    return np.arange(len(names)), float(t_low.max()), float(t_high.min())


@pytest.mark.parametrize("size", [1, 7, species.KERNEL_MIN, 5000])
def test_compiled_equals_numpy_path(size):
    rows, lo, hi = _records()
    T = np.random.default_rng(size).uniform(lo, hi, size)
    T[0] = 1000.0  # the mid temperature of every record: low range on both paths
    fast = species._evaluate(T, rows, compiled=True)
    slow = species._evaluate(T, rows, compiled=False)
    assert set(fast) == {"cp_R", "h_RT", "s_R", "g_RT"}
    for what, ref in slow.items():
        np.testing.assert_array_equal(fast[what], ref, err_msg=what)


def test_long_arrays_use_the_kernel_and_agree_with_the_scalar_formula():
    # nasa_values on an array above KERNEL_MIN against the one-temperature evaluation of
    # the same record (the numpy path), element by element.
    T = np.linspace(300.0, 2500.0, species.KERNEL_MIN + 13)
    long = species.nasa_values(T, species.GAS_SPECIES, "g_RT")
    one = np.stack([species.nasa_values(np.array([t]), species.GAS_SPECIES, "g_RT")[:, 0]
                    for t in T[::37]], axis=1)
    np.testing.assert_array_equal(long[:, ::37], one)
    assert species._nasa_kernel.signatures, "the long array did not go through the kernel"
