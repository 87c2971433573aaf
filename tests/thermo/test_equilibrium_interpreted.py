"""The interpreted kernel (the compiled kernel's own Python source run by the interpreter,
used on a fresh machine before numba has compiled) gives the compiled kernel's answers.

Reference: the compiled kernel on the same points, itself checked against Cantera in
tests/thermo/test_equilibrium_reference.py. Agreement to 1e-12 (relative on the moles, with a
floor of 1e-12 of the total for trace species) allows only for a libm difference between the
interpreter's math.exp/log and the compiled code's; the arithmetic is otherwise the same.
"""

from __future__ import annotations

import numpy as np
import pytest

from thermo import equilibrium as eq
from thermo.scenario import load_scenario
from thermo.species import formula_matrix


def _points():
    """Rows of S/C neighbours on a carbon-forming and a gas-only part of the demo feed's
    window, and an O2 co-feed row (partial oxidation side)."""
    sc = load_scenario()
    ratios = np.linspace(0.5, 5.0, 12)
    feed = sc.feed.inlet_flows(steam_to_carbon=ratios).T  # (12, S)
    T, P, B = [], [], []
    for t in (800.0, 1050.0, 1250.0):
        for p in (1e5, 2.5e6, 4e6):
            T += [t] * ratios.size
            P += [p] * ratios.size
            B.append(feed @ formula_matrix())
    b = np.vstack(B)
    ox = b[:12].copy()
    ox[:, 2] += 2 * 0.4 * ox[:, 0]  # O atoms of O2 at O2/C = 0.4
    return np.array(T + [1100.0] * 12), np.array(P + [3e6] * 12), np.vstack([b, ox])


def _solve(monkeypatch, compiled: bool, **kw):
    T, P, b = _points()
    monkeypatch.setattr(eq, "_use_compiled", lambda n: compiled)
    return eq.equilibrate(T, P, b, row=12, **kw)


@pytest.mark.parametrize("allow_carbon", [True, False])
def test_interpreted_equals_compiled(monkeypatch, allow_carbon):
    fast = _solve(monkeypatch, True, allow_carbon=allow_carbon)
    slow = _solve(monkeypatch, False, allow_carbon=allow_carbon)
    assert fast.converged.all() and slow.converged.all()
    np.testing.assert_array_equal(fast.iterations, slow.iterations)
    total = fast.moles.sum(axis=1, keepdims=True)
    np.testing.assert_allclose(slow.moles, fast.moles, rtol=1e-12, atol=0)
    np.testing.assert_allclose(slow.moles / total, fast.moles / total, atol=1e-12 * 1e-12,
                               rtol=1e-12)
    np.testing.assert_allclose(slow.carbon, fast.carbon, rtol=1e-12, atol=1e-12 * total.max())
    np.testing.assert_allclose(slow.element_potentials, fast.element_potentials, rtol=1e-12,
                               atol=1e-12)
    if allow_carbon:
        assert (fast.carbon > 0).any() and (fast.carbon == 0).any()  # both branches ran


def test_interpreted_warm_start(monkeypatch):
    cold = _solve(monkeypatch, True)
    warm = dict(warm_start=cold.element_potentials + 0.05)
    fast = _solve(monkeypatch, True, **warm)
    slow = _solve(monkeypatch, False, **warm)
    np.testing.assert_allclose(slow.moles, fast.moles, rtol=1e-12, atol=0)
    np.testing.assert_array_equal(fast.iterations, slow.iterations)


def test_small_calls_interpreted_on_a_fresh_machine(monkeypatch):
    # Without a loaded or cached kernel, a single point is interpreted, a window compiled.
    monkeypatch.setattr(eq, "kernel_is_cached", lambda: False)
    monkeypatch.setattr(eq, "kernel_is_loaded", lambda: False)
    assert not eq._use_compiled(1)
    assert not eq._use_compiled(eq.INTERPRETED_POINTS)
    assert eq._use_compiled(eq.INTERPRETED_POINTS + 1)
