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
