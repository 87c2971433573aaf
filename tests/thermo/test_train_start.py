"""Where the secondary reformer's energy balance starts does not change its outlet.

The sweep solves the secondary reformer along rows in passes (a row's first point from the
primary's temperature, its middle and last from that outlet, then at halved strides the
others from the cubic through the outlets already found; thermo.train.row_passes) and the
exact edges start it from the line between a bracket's outlets; thermo.point starts every
point from the primary's temperature. Checked here: the started outlets equal the unstarted ones to
5e-7 K, and Cantera's HP equilibrium (https://cantera.org, a general-purpose reference
library, tests only; same GRI-Mech 3.0 species data, tests/thermo/cantera_ref.py) to 1e-4 K.

Why 5e-7 K and not tighter: each path stops where its energy balance closes to
ADIABATIC_TOLERANCE of the inlet enthalpy (up to 3e-8 K at these points), and the equilibrium
solver's own convergence (its element balances) moves the outlet enthalpy by up to about
1.4e-7 K worth of heat capacity between a warm and a cold solve at the same temperature
(measured on the 16,000-point window of tests/benchmarks/bench_train.py: the largest
difference of the two paths there was 1.5e-7 K).
"""

from __future__ import annotations

import numpy as np
import pytest

import thermo
from tests.thermo import cantera_ref
from tests.thermo.test_train import FULL_TRAIN
from thermo.scenario import SecondaryReformer, Train, parse_scenario
from thermo.train import _row_weights, row_passes, train_balance

#: Largest difference of two starts' outlet temperatures [K] (see the module notes).
SAME_OUTLET_K = 5e-7


@pytest.fixture(scope="module")
def full():
    return parse_scenario(thermo.load_scenario().text + FULL_TRAIN)


def _rows(sc, row: int, temperatures=(1023.15, 1123.15, 1193.15), P=25e5):
    """Rows of `row` points along S/C 1.6-4.8 at each primary temperature."""
    S = np.tile(np.linspace(1.6, 4.8, row), len(temperatures))
    T = np.repeat(np.asarray(temperatures), row)
    return sc.feed.inlet_flows(steam_to_carbon=S).T, T, np.full(T.size, P)


def test_row_weights_reproduce_cubics():
    """The row interpolation's weights sum to one and reproduce any polynomial of degree one
    less than its number of nodes exactly (Lagrange interpolation on up to four anchors: a
    cubic, or a parabola on a row with three)."""
    for row in (6, 7, 17, 20):
        anchors = np.sort(np.concatenate(row_passes(row)[:-1]))  # all but the last pass's
        cols, W = _row_weights(row, anchors)
        np.testing.assert_allclose(W.sum(axis=1), 1.0, rtol=1e-13)
        j = np.arange(row, dtype=float)
        poly = 3.0 - 2.0 * j + 0.5 * j**2 - (0.01 * j**3 if anchors.size >= 4 else 0.0)
        np.testing.assert_allclose(W @ poly[anchors], poly[cols], rtol=1e-12, atol=1e-12)


@pytest.mark.parametrize("oxidant, ratio", [("air", 0.25), ("oxygen", 0.5)])
def test_passes_along_rows_give_the_single_pass_outlets(full, oxidant, ratio):
    """Rows solved in passes (row > 1; five on rows of 11) give the secondary outlet
    temperatures, flows and the train's H2 product of the single pass from the primary's
    temperature (row = 1): to SAME_OUTLET_K, 1e-8 relative (the Dataset's grid-equals-point
    contract is 1e-9 on the temperatures) and 1e-9 relative."""
    sec = SecondaryReformer(oxidant, ratio, 823.15, 5.0)
    train = Train(secondary_reformer=sec, high_temperature_shift=full.train.high_temperature_shift)
    row = 11
    assert [list(p) for p in row_passes(row)] == [[0], [5, 10], [4, 8], [2, 6], [1, 3, 7, 9]]
    feed, T, P = _rows(full, row)
    one = train_balance(train, feed, T, P, full.feed.inlet_temperature, full.approach, row=1)
    two = train_balance(train, feed, T, P, full.feed.inlet_temperature, full.approach, row=row)
    a, b = one.stage("secondary_reformer"), two.stage("secondary_reformer")
    assert a.converged.all() and b.converged.all()
    np.testing.assert_allclose(b.temperature, a.temperature, rtol=0, atol=SAME_OUTLET_K)
    np.testing.assert_allclose(b.outlet_flow, a.outlet_flow, rtol=1e-8,
                               atol=1e-12 * a.outlet_flow.sum(axis=1).max())
    np.testing.assert_allclose(two.h2_product, one.h2_product, rtol=1e-9)
    # The energy balance closes on both paths (duty zero to 1e-9 of the inlet enthalpy).
    assert np.all(np.abs(b.duty) <= 1e-9 * np.abs(b.inlet_enthalpy))


def test_started_outlets_match_cantera_hp_equilibrium(full):
    """Points of a row started from the cubic through their neighbours (the last pass's) have
    Cantera's HP outlet temperature (1e-4 K) and mole fractions (1e-8)."""
    sec = SecondaryReformer("air", 0.3, 823.15, 0.0)
    row = 7  # 0 from the primary, 3 and 6 from its outlet, 2 and 4 from the parabola, then
    # 1 and 5 from the cubic through 0, 2, 3, 4 and 2, 3, 4, 6
    assert [list(p) for p in row_passes(row)] == [[0], [3, 6], [2, 4], [1, 5]]
    feed, T, P = _rows(full, row, temperatures=(1103.15,), P=30e5)
    r = train_balance(Train(secondary_reformer=sec), feed, T, P, full.feed.inlet_temperature,
                      0.0, row=row)
    st = r.stage("secondary_reformer")
    for j in (1, 5):
        g = cantera_ref.gas()
        n = st.inlet_flow[j]
        g.TPX = 1200.0, P[j], n / n.sum()
        g.HP = st.inlet_enthalpy[j] / n.sum() * 1000.0 / g.mean_molecular_weight, P[j]
        g.equilibrate("HP", solver="vcs", rtol=1e-12, max_steps=10000)
        assert st.temperature[j] == pytest.approx(g.T, abs=1e-4)
        x = st.outlet_flow[j] / st.outlet_flow[j].sum()
        np.testing.assert_allclose(x, g.X, atol=1e-8)


@pytest.mark.parametrize("offset", [0.3, -25.0, 400.0, np.nan])
def test_any_first_estimate_gives_the_same_outlet(full, offset):
    """A first estimate near the answer, far below or above it, or none (NaN) gives the
    outlet of the primary-temperature start, to SAME_OUTLET_K: the estimate only starts the
    safeguarded Newton / secant / bracketed solve."""
    feed, T, P = _rows(full, 4)
    train = Train(secondary_reformer=full.train.secondary_reformer)
    ref = train_balance(train, feed, T, P, full.feed.inlet_temperature, full.approach)
    t_ref = ref.stage("secondary_reformer").temperature
    r = train_balance(train, feed, T, P, full.feed.inlet_temperature, full.approach,
                      secondary_guess=t_ref + offset)
    st = r.stage("secondary_reformer")
    assert st.converged.all()
    np.testing.assert_allclose(st.temperature, t_ref, rtol=0, atol=SAME_OUTLET_K)


def test_edges_with_and_without_the_started_secondary_agree(full):
    """thermo.edges.evaluate with first estimates of the secondary outlet (as the exact edges'
    bisection gives) returns the secondary temperatures and the train's figures it returns
    without them (SAME_OUTLET_K, 1e-9 relative)."""
    from thermo.edges import evaluate

    T = np.array([1040.0, 1101.5, 1177.7])
    P = np.array([12e5, 25e5, 38e5])
    S = np.array([2.2, 3.1, 4.4])
    plain = evaluate(full, T, P, S)
    started = evaluate(full, T, P, S,
                       secondary_guess=plain["secondary_temperature"].values - 0.7)
    np.testing.assert_allclose(started["secondary_temperature"].values,
                               plain["secondary_temperature"].values, rtol=0,
                               atol=SAME_OUTLET_K)
    for var in ("h2_product", "train_duty", "train_methane_slip_dry"):
        np.testing.assert_allclose(started[var].values, plain[var].values, rtol=1e-9,
                                   err_msg=var)


@pytest.mark.parametrize("accept", [0.0, 1e-4, 50.0])
def test_a_short_last_step_gives_the_same_outlet(full, accept):
    """Ending a point's iteration on a short step without solving at its end (accept_step)
    gives the outlet of a solve after every step (0) to SAME_OUTLET_K, and the balance closes
    (1e-9 of the inlet enthalpy); with an absurd 50 K the balance check at the outlet catches
    the unfinished points and the bracketed solve finishes them: the same outlets again."""
    from thermo.balances import enthalpy_flow
    from thermo.train import adiabatic_equilibrium

    feed, T, P = _rows(full, 6)
    sec = SecondaryReformer("air", 0.3, 823.15, 0.0)
    ox = sec.oxidant_flows(full.feed.carbon_flow() * np.ones(T.size)).T
    gas = feed + ox
    H = enthalpy_flow(feed, T) + enthalpy_flow(ox, np.full(T.size, 823.15))
    ref, _, ok0 = adiabatic_equilibrium(gas, H, P, 0.0, bounds=(T - 400.0, 3000.0), guess=T,
                                        accept_step=0.0)
    t, eq, ok = adiabatic_equilibrium(gas, H, P, 0.0, bounds=(T - 400.0, 3000.0), guess=T,
                                      accept_step=accept)
    assert ok0.all() and ok.all()
    np.testing.assert_allclose(t, ref, rtol=0, atol=SAME_OUTLET_K)
    from thermo.balances import outlet_enthalpy

    assert np.all(np.abs(outlet_enthalpy(eq.moles, eq.carbon, t, P) - H) <= 1e-9 * np.abs(H))
