"""Warm starts along a window's rows give the answers of cold solves.

A sweep solves each row of its last axis in order, every point from its neighbour's answer,
and where the neighbour deposits graphite it tries the gas + graphite problem first. The
equilibrium is unique (convex problem), so the answers must equal those solved from scratch,
to the solver's tolerance; the carbon call must not change at any point.
"""

from __future__ import annotations

import numpy as np
import pytest

from thermo.equilibrium import equilibrate
from thermo.species import GAS_SPECIES, formula_matrix

A = formula_matrix()


@pytest.mark.parametrize("sc_range", [(0.0, 1.5), (1.5, 5.0)], ids=["carbon", "gas"])
def test_rows_equal_cold_solves(sc_range):
    """Rows solved from their neighbours equal cold solves: same convergence and carbon call,
    mole fractions and graphite to 1e-9, ln a_C to 1e-8; both phases occur in the carbon range;
    the warm rows take fewer iterations on average."""
    T = np.linspace(700.0, 1300.0, 16)
    P = np.linspace(1e5, 40e5, 8)
    S = np.linspace(*sc_range, 20)
    TT, PP, SS = np.meshgrid(T, P, S, indexing="ij")
    n = np.zeros((TT.size, len(GAS_SPECIES)))
    n[:, GAS_SPECIES.index("CH4")] = 0.95
    n[:, GAS_SPECIES.index("C2H6")] = 0.05
    n[:, GAS_SPECIES.index("H2O")] = SS.ravel() * 1.05
    b = n @ A
    cold = equilibrate(TT.ravel(), PP.ravel(), b, row=1)
    warm = equilibrate(TT.ravel(), PP.ravel(), b, row=S.size)
    assert cold.converged.all() and warm.converged.all()
    assert ((cold.carbon > 0) == (warm.carbon > 0)).all()
    # 1e-9: both close the element balances to 1e-10 relative from different starts.
    assert np.abs(warm.mole_fractions - cold.mole_fractions).max() <= 1e-9
    assert np.abs(warm.carbon - cold.carbon).max() <= 1e-9 * b[:, 0].max()
    assert np.abs(warm.ln_carbon_activity - cold.ln_carbon_activity).max() <= 1e-8
    if sc_range[0] == 0.0:
        assert 0 < int((cold.carbon > 0).sum()) < cold.carbon.size  # both phases present
    assert warm.iterations.mean() < cold.iterations.mean()
