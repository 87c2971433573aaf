"""Scenario comparison: the proposal on the base's window and the difference Dataset.

The check is arithmetic (the issue's requirement: the difference equals the two grids
subtracted), with the two grids solved independently by thermo.sweep.
"""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest

import thermo
from tests.thermo.test_train import FULL_TRAIN
from thermo.compare import difference, on_base_window
from thermo.errors import InputError
from thermo.scenario import parse_scenario


@pytest.fixture(scope="module")
def pair():
    base = thermo.load_scenario().with_window(
        temperature=("760 degC", "940 degC", 4), pressure=("15 bar", "35 bar", 3),
        steam_to_carbon=(2.0, 4.0, 3))
    # The proposal adds a train and runs at a lower approach, over a different window of
    # its own: it is re-solved on the base's.
    proposal = parse_scenario(thermo.load_scenario().text.replace('approach = "10 K"',
                                                                  'approach = "5 K"')
                              + FULL_TRAIN)
    moved = on_base_window(base, proposal)
    return base, proposal, moved, thermo.sweep(base), thermo.sweep(moved)


def test_proposal_is_solved_on_the_base_window(pair):
    """on_base_window gives the proposal the base's window and keeps its train and approach; its
    text reads back equal; both grids have the same coordinates."""
    base, proposal, moved, b, p = pair
    assert moved.window == base.window
    assert moved.train == proposal.train and moved.approach == 5.0
    assert moved == parse_scenario(moved.text)  # its text describes it
    for d in ("temperature", "pressure", "steam_to_carbon"):
        np.testing.assert_array_equal(b[d].values, p[d].values)


def test_difference_equals_the_two_grids_subtracted(pair):
    """difference() equals proposal minus base exactly for each variable with its units and
    'change' name, equals two thermo.point calls at one point (1e-9), and is exactly zero for a
    scenario against itself."""
    base, proposal, moved, b, p = pair
    diff = difference(b, p)
    for name in ("h2_yield", "h2_product", "methane_slip_dry", "duty", "train_duty",
                 "carbon_activity", "mole_fraction_dry", "product_flow"):
        want = p[name].values.astype(float) - b[name].values.astype(float)
        np.testing.assert_array_equal(diff[name].values, want, err_msg=name)
        assert diff[name].attrs["units"] == p[name].attrs["units"]
        assert diff[name].attrs["long_name"].startswith("change (proposal - base) in")
    assert bool(diff["both_converged"].all())
    # Independent check at one point through the single-point API.
    pt_b = thermo.point(base, temperature="880 degC", pressure="25 bar", steam_to_carbon=3.0)
    pt_p = thermo.point(moved, temperature="880 degC", pressure="25 bar", steam_to_carbon=3.0)
    got = float(diff["h2_product"].sel(temperature=1153.15, pressure=25e5,
                                       steam_to_carbon=3.0, method="nearest"))
    assert got == pytest.approx(pt_p.to_dict()["train"]["h2_product"]
                                - pt_b.to_dict()["train"]["h2_product"], rel=1e-9)
    # Same scenario twice: every difference is exactly zero.
    zero = difference(b, b)
    assert float(np.nanmax(np.abs(zero["h2_product"].values))) == 0.0


def test_windows_must_match(pair):
    """Grids on different windows are refused with an InputError on the field 'comparison'."""
    base, proposal, moved, b, p = pair
    with pytest.raises(InputError) as err:
        difference(b, p.isel(temperature=slice(0, 3)))
    assert err.value.field == "comparison"


def test_unconverged_or_infinite_values_give_no_difference(pair):
    """An unconverged point or an infinite value gives NaN (and both_converged False) there, and
    finite differences elsewhere."""
    base, proposal, moved, b, p = pair
    p2 = p.copy(deep=True)
    p2["converged"][0, 0, 0] = False
    p2["h2_co_ratio"][1, 0, 0] = np.inf
    diff = difference(b, p2)
    assert np.isnan(diff["h2_yield"][0, 0, 0]) and not bool(diff["both_converged"][0, 0, 0])
    assert np.isnan(diff["h2_co_ratio"][1, 0, 0])
    assert np.isfinite(diff["h2_yield"][1, 0, 0])


def test_proposal_approach_must_fit_the_base_window(pair):
    """A proposal whose approach takes the base window's lowest temperature below the allowed
    range is refused with InputError."""
    base, proposal, moved, b, p = pair
    cold = base.with_window(temperature=("40 degC", "900 degC", 3))
    with pytest.raises(InputError):
        on_base_window(cold, dataclasses.replace(proposal, approach=30.0))
