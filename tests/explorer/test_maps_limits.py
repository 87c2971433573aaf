"""The maps' hatched region is exactly where the Dataset's feasible mask is False.

The hatching is contoured from explorer.maps.infeasibility, a smooth field whose sign must
agree with thermo.sweep.feasible_mask at every grid node, with or without a reforming train
(the limits then apply to the train). Scenarios: the shipped demo and ammonia files
(invented data) on small windows; the limits are theirs.
"""

from __future__ import annotations

import numpy as np
import pytest

import thermo
from explorer.maps import MODES, infeasibility, slice_fields
from tests.explorer.helpers import small_scenario
from thermo.scenario import DEMO_PATH


@pytest.mark.parametrize("name", ["demo", "ammonia-front-end"])
def test_infeasibility_sign_equals_the_feasible_mask(name):
    """On every slice of both map modes, the hatching field is <= 0 exactly where the Dataset's
    feasible mask is true, for the demo and the ammonia scenario (both kinds of node present)."""
    sc = thermo.load_scenario(DEMO_PATH.parent / f"{name}.toml")
    if name == "demo":
        sc = small_scenario()
    else:
        sc = sc.with_window(temperature=("720 degC", "860 degC", 8),
                            pressure=("25 bar", "40 bar", 4), steam_to_carbon=(2.0, 4.5, 6))
    ds = thermo.sweep(sc)
    feasible = ds["feasible"]
    assert 0 < int(feasible.sum()) < feasible.size  # both kinds of node are present
    for mode in MODES:
        other = "steam_to_carbon" if mode == "pressure" else "pressure"
        for i in range(ds.sizes[other]):
            s = slice_fields(ds, mode, {other: i})
            field = infeasibility(s, sc.limits)
            np.testing.assert_array_equal(field <= 0, s["feasible"].values,
                                          err_msg=f"{name} {mode} {other}={i}")
