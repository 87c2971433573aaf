"""Properties every equilibrium answer must have, on points drawn by hypothesis.

No published numbers here: each property follows from the problem's definition (minimum
Gibbs energy of ideal gas + pure graphite at fixed T, P and element amounts). Tolerances:

* element balance: 1e-10 relative per element, the solver's own convergence criterion
  (thermo.equilibrium.TOLERANCE);
* Gibbs energy: a perturbed feasible composition may not be lower than the answer by more than
  the round-off of the sum G/RT = sum_j n_j (c_j + ln x_j) + n_C mu_gr, taken as 1e-12 of the
  sum of the magnitudes of its terms (double precision is 1.1e-16 per operation; 1e-12 leaves
  room for ~10 species and the logarithms);
* carbon activity: 1e-9 in ln, the size a converged answer's ln a_C can have from the 1e-10
  element balance.

Examples are drawn with ``derandomize=True`` so a run is reproducible; ``deadline=None``
because the first call may compile the numba kernel.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import HealthCheck, Phase, example, given, settings
from hypothesis import strategies as st
from scipy.linalg import null_space

from thermo.constants import ELEMENTS, P_REF
from thermo.equilibrium import TOLERANCE, equilibrate
from thermo.species import GAS_SPECIES, formula_matrix, gas_table, graphite_mu_RT

IDX = {s: i for i, s in enumerate(GAS_SPECIES)}
A = formula_matrix()
GRAPHITE_ROW = np.array([1.0 if e == "C" else 0.0 for e in ELEMENTS])

SETTINGS = settings(max_examples=80, deadline=None, derandomize=True, database=None,
                    phases=(Phase.explicit, Phase.generate, Phase.shrink),
                    suppress_health_check=[HealthCheck.too_slow])

#: Relative round-off allowed on G/RT (reason in the module docstring).
G_RTOL = 1e-12
#: Largest ln a_C a converged answer may report (reason in the module docstring).
LNAC_TOL = 1e-9
#: Species below this fraction of the gas are held fixed in perturbations (a feasible step
#: along a direction that moves them is too short to say anything above round-off).
TRACE = 1e-12

#: Smallest nonzero amount of any fed species drawn [mol per mol of the other feed, about].
#: The general properties are drawn at 1e-4 and above; elements fed in traces (1e-30 to 1e-9
#: of the carbon, and below TRACE_LIMIT) are tested on their own by the trace tests at the end.
SMALLEST = 1e-4


def _amount(hi):
    """0, or a value between SMALLEST and hi."""
    return st.one_of(st.just(0.0), st.floats(SMALLEST, hi))


@st.composite
def operating_points(draw, carbon_rich=False):
    """T [K], P [Pa] and inlet moles (S,) over the validated window (or its low-steam,
    oxygen-free corner, where graphite forms, with `carbon_rich`)."""
    T = draw(st.floats(673.15, 1673.15))
    P = 10.0 ** draw(st.floats(5.0, 7.0))
    n = np.zeros(len(GAS_SPECIES))
    n[IDX["CH4"]] = draw(st.floats(0.5, 1.0))
    n[IDX["C2H6"]] = draw(_amount(0.1))
    n[IDX["C3H8"]] = draw(_amount(0.05))
    n[IDX["CO2"]] = draw(_amount(0.05))
    n[IDX["N2"]] = draw(_amount(0.1))
    n[IDX["Ar"]] = draw(_amount(0.01))
    hc = n[IDX["CH4"]] + 2 * n[IDX["C2H6"]] + 3 * n[IDX["C3H8"]]
    if carbon_rich:
        n[IDX["H2O"]] = draw(_amount(0.8)) * hc
        return T, P, n
    n[IDX["H2O"]] = draw(st.one_of(_amount(1.5), _amount(10.0))) * hc
    n[IDX["O2"]] = draw(_amount(0.7)) * hc
    return T, P, n


def _solve(T, P, n, **kw):
    eq = equilibrate(np.array([T]), np.array([P]), (n @ A)[None, :], **kw)
    return eq


def _gibbs_RT(n_gas, n_c, T, P):
    """G/RT of gas + graphite with the project's data, and the sum of |terms| (for round-off)."""
    c = gas_table(np.array([T]), "g_RT")[:, 0] + np.log(P / P_REF)
    total = n_gas.sum()
    pos = n_gas > 0
    terms = n_gas[pos] * (c[pos] + np.log(n_gas[pos] / total))
    mu_gr = float(graphite_mu_RT(T, P))
    g = terms.sum() + n_c * mu_gr
    return g, np.abs(terms).sum() + abs(n_c * mu_gr)


def _perturbations(n_gas, n_c, elements_present, with_graphite, rng):
    """Feasible compositions near (n_gas, n_c) that keep every element amount.

    Directions: each basis vector of the null space of the formula matrix (restricted to the
    non-trace gas species, plus graphite if asked), and a few random combinations, both signs.
    Steps: at most 1e-3 of the gas moles and half the way to the first zero.
    """
    sel = np.flatnonzero(n_gas > TRACE * n_gas.sum())
    rows = [A[sel][:, elements_present]]
    if with_graphite:
        rows.append(GRAPHITE_ROW[None, elements_present])
    M = np.vstack(rows)  # (k, E_present)
    Z = null_space(M.T)  # (k, d): M^T z = 0
    if Z.shape[1] == 0:
        return
    dirs = [Z[:, i] for i in range(Z.shape[1])]
    dirs += [Z @ rng.standard_normal(Z.shape[1]) for _ in range(6)]
    y0 = np.r_[n_gas[sel], n_c] if with_graphite else n_gas[sel]
    for v in dirs:
        v = v / np.abs(v).max()
        for sign in (1.0, -1.0):
            w = sign * v
            neg = w < 0
            h_max = np.min(y0[neg] / -w[neg]) if neg.any() else np.inf
            h = min(1e-3 * n_gas.sum(), 0.5 * h_max)
            if h <= 0:
                continue
            y = y0 + h * w
            n_new = n_gas.copy()
            n_new[sel] = y[: sel.size]
            yield n_new, (y[-1] if with_graphite else n_c)


@SETTINGS
@given(operating_points())
def test_elements_conserved_and_values_sane(case):
    """Each drawn point converges with finite, non-negative amounts and no NaN carbon activity;
    fed elements close to TOLERANCE relative and absent elements stay absent."""
    T, P, n = case
    eq = _solve(T, P, n)
    assert eq.converged[0]
    assert np.isfinite(eq.moles).all() and np.isfinite(eq.carbon).all()
    assert (eq.moles >= 0).all() and eq.carbon[0] >= 0
    assert not np.isnan(eq.ln_carbon_activity).any()
    b_in = n @ A
    b_out = eq.moles[0] @ A
    b_out[ELEMENTS.index("C")] += eq.carbon[0]
    present = b_in > 0
    assert np.all(np.abs(b_out - b_in)[present] <= TOLERANCE * b_in[present])
    assert np.all(b_out[~present] == 0)


@SETTINGS
@given(operating_points())
def test_phase_rule(case):
    """Graphite only where the gas is saturated (ln a_C = 0); never supersaturated."""
    T, P, n = case
    eq = _solve(T, P, n)
    assert eq.converged[0]
    lnac = eq.ln_carbon_activity[0]
    if eq.carbon[0] > 0:
        assert lnac == 0.0
    assert lnac <= LNAC_TOL
    # Where no graphite forms, forbidding it changes nothing.
    if eq.carbon[0] == 0:
        gas_only = _solve(T, P, n, allow_carbon=False)
        np.testing.assert_allclose(gas_only.moles, eq.moles, rtol=1e-12, atol=0)


@SETTINGS
@given(operating_points(), st.integers(0, 2**32 - 1))
def test_gas_composition_is_a_gibbs_minimum(case, seed):
    """No element-conserving change of the gas (graphite held) lowers G."""
    T, P, n = case
    eq = _solve(T, P, n)
    assert eq.converged[0]
    n_gas, n_c = eq.moles[0], float(eq.carbon[0])
    g0, mag = _gibbs_RT(n_gas, n_c, T, P)
    present = (n @ A) > 0
    rng = np.random.default_rng(seed)
    checked = 0
    for n_new, c_new in _perturbations(n_gas, n_c, present, False, rng):
        g, _ = _gibbs_RT(n_new, c_new, T, P)
        assert g >= g0 - G_RTOL * mag, (g - g0, mag)
        checked += 1
    # Methane, steam, H2, CO, CO2 give 2 independent reactions at least where O is fed.
    if present[ELEMENTS.index("O")] and eq.moles[0, IDX["CH4"]] > 1e-6 * n_gas.sum():
        assert checked > 0


@SETTINGS
@given(operating_points(), st.integers(0, 2**32 - 1))
@example((700.0, 2e6, np.array([1.0, 0, 0, 0.3, 0, 0, 0, 0, 0, 0])), 0)
def test_gas_and_graphite_is_a_gibbs_minimum(case, seed):
    """No element-conserving change of gas and graphite together lowers G."""
    T, P, n = case
    eq = _solve(T, P, n)
    assert eq.converged[0]
    n_gas, n_c = eq.moles[0], float(eq.carbon[0])
    g0, mag = _gibbs_RT(n_gas, n_c, T, P)
    present = (n @ A) > 0
    rng = np.random.default_rng(seed)
    for n_new, c_new in _perturbations(n_gas, n_c, present, True, rng):
        g, _ = _gibbs_RT(n_new, c_new, T, P)
        assert g >= g0 - G_RTOL * mag, (g - g0, mag)


# ------------------------------------------------------------------ trace element abundances


@pytest.mark.parametrize("species, amount", [("O2", 1e-10), ("O2", 1e-14), ("H2O", 1e-12),
                                             ("N2", 1e-9), ("Ar", 1e-9), ("CO2", 1e-30)])
def test_trace_element_abundance_converges_and_closes(species, amount):
    """An element fed in traces is solved like a major one: converged, and its own balance
    closes to 1e-10 relative (not merely to 1e-10 of the total atoms)."""
    n = np.zeros(len(GAS_SPECIES))
    n[IDX["CH4"]], n[IDX[species]] = 1.0, amount
    if species in ("N2", "Ar"):
        n[IDX["H2O"]] = 3.0
    eq = _solve(674.0, 1e5, n)
    assert eq.converged[0]
    b_in = n @ A
    b_out = eq.moles[0] @ A
    b_out[ELEMENTS.index("C")] += eq.carbon[0]
    fed = b_in > 0
    assert (np.abs(b_out - b_in)[fed] / b_in[fed]).max() <= 1e-10


@pytest.mark.parametrize("amount", [1e-300, 5e-324])
def test_element_below_trace_limit_is_left_out(amount):
    """Below TRACE_LIMIT of the atoms (1e-200) an element is treated as absent: the solve
    converges without its species and never crashes (5e-324 is the smallest double)."""
    n = np.zeros(len(GAS_SPECIES))
    n[IDX["CH4"]], n[IDX["H2O"]] = 1.0, amount
    eq = _solve(674.0, 1e5, n)
    assert eq.converged[0]
    assert eq.moles[0, IDX["H2O"]] == 0.0 and eq.moles[0, IDX["CO"]] == 0.0
    assert np.isnan(eq.element_potentials[0, ELEMENTS.index("O")])


def test_trace_argon_does_not_hide_graphite():
    """Pure CH4 at 1531 K and 1 bar deposits 99.6 % of its carbon (Cantera, same data); one
    ppm of argon must not change that by more than ppm."""
    n = np.zeros(len(GAS_SPECIES))
    n[IDX["CH4"]] = 1.0
    without = _solve(1531.25, 1e5, n)
    n[IDX["Ar"]] = 1e-6
    eq = _solve(1531.25, 1e5, n)
    assert without.carbon[0] > 0.99
    assert eq.converged[0]
    assert eq.carbon[0] == pytest.approx(without.carbon[0], rel=1e-5)
