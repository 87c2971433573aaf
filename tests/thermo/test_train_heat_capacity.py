"""The analytic equilibrium heat capacity used by the adiabatic stages' Newton steps is the
derivative of the equilibrium outlet enthalpy.

Reference: a central finite difference of the same enthalpy (step 1e-3 K; its truncation and
round-off error is about 1e-9 relative here), with and without graphite, with an approach and
with O2 and air co-feed as in a secondary reformer. Identity check: 1e-6 relative.
"""

from __future__ import annotations

import numpy as np
import pytest

from thermo.balances import outlet_enthalpy
from thermo.equilibrium import equilibrate
from thermo.scenario import load_scenario
from thermo.species import GAS_SPECIES, formula_matrix
from thermo.train import equilibrium_heat_capacity


def _feeds():
    sc = load_scenario()
    ratios = np.array([0.6, 1.0, 2.0, 3.0, 5.0])
    feed = sc.feed.inlet_flows(steam_to_carbon=ratios).T
    air = feed.copy()
    air[:, GAS_SPECIES.index("O2")] += 0.3 * feed[:, GAS_SPECIES.index("CH4")]
    air[:, GAS_SPECIES.index("N2")] += 0.3 * 3.73 * feed[:, GAS_SPECIES.index("CH4")]
    air[:, GAS_SPECIES.index("Ar")] += 0.3 * 0.045 * feed[:, GAS_SPECIES.index("CH4")]
    return np.vstack([feed, air])


@pytest.mark.parametrize("T0, approach", [(900.0, 10.0), (1150.0, 0.0), (1300.0, 5.0)])
def test_heat_capacity_is_the_enthalpy_derivative(T0, approach):
    feed = _feeds()
    n = feed.shape[0]
    b = feed @ formula_matrix()
    T = np.full(n, T0)
    P = np.full(n, 2.5e6)

    def H(Tx):
        eq = equilibrate(Tx - approach, P, b)
        return outlet_enthalpy(eq.moles, eq.carbon, Tx, P), eq

    _, eq = H(T)
    dH = equilibrium_heat_capacity(eq.moles, eq.carbon, T, T - approach, P)
    fd = (H(T + 1e-3)[0] - H(T - 1e-3)[0]) / 2e-3
    np.testing.assert_allclose(dH, fd, rtol=1e-6)
    if T0 == 900.0:
        assert (eq.carbon > 0).any() and (eq.carbon == 0).any()  # both branches checked


def test_compiled_heat_capacity_equals_the_numpy_path():
    # Calls of HEAT_CAPACITY_KERNEL_MIN points or more go through the compiled kernel; it
    # must give the numpy path's dH/dT and d lambda/dT to 1e-12 (relative to each point's
    # largest term), with and without graphite, with elements absent (no N, Ar in the plain
    # feed) and present (air), over a range of temperatures. It is also checked against
    # the finite difference above through the long call.
    import thermo.heat_capacity as ts

    feed = _feeds()
    reps = -(-ts.HEAT_CAPACITY_KERNEL_MIN // feed.shape[0])
    gas = np.tile(feed, (reps, 1))
    n = gas.shape[0]
    T = np.linspace(850.0, 1350.0, n)
    P = np.full(n, 2.5e6)
    approach = np.where(np.arange(n) % 2, 8.0, 0.0)
    b = gas @ formula_matrix()
    eq = equilibrate(T - approach, P, b)
    assert eq.converged.all() and (eq.carbon > 0).any() and (eq.carbon == 0).any()
    dH, lam = equilibrium_heat_capacity(eq.moles, eq.carbon, T, T - approach, P,
                                        potentials=True)
    assert ts._heat_capacity_kernel.signatures, "the long call did not use the kernel"
    parts = [equilibrium_heat_capacity(eq.moles[i:i + 7], eq.carbon[i:i + 7], T[i:i + 7],
                                       T[i:i + 7] - approach[i:i + 7], P[i:i + 7],
                                       potentials=True) for i in range(0, n, 7)]
    dH_np = np.concatenate([p[0] for p in parts])
    lam_np = np.concatenate([p[1] for p in parts])
    np.testing.assert_allclose(dH, dH_np, rtol=1e-12)
    scale = np.abs(lam_np).max(axis=1, keepdims=True)
    assert (np.abs(lam - lam_np) <= 1e-12 * scale).all(), np.abs(lam - lam_np).max()
    absent = ~((eq.moles @ formula_matrix()) > 0)
    assert absent.any() and (lam[absent] == 0).all()

    def H(Tx):
        e = equilibrate(Tx - approach, P, b, warm_start=eq.element_potentials)
        return outlet_enthalpy(e.moles, e.carbon, Tx, P)

    fd = (H(T + 1e-3) - H(T - 1e-3)) / 2e-3
    np.testing.assert_allclose(dH, fd, rtol=1e-6)
