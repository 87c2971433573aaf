"""What the review file embeds: read from the Dataset (no solve again), compact, and unpacked
by the page's script to exactly what was packed."""

from __future__ import annotations

import ast
import json
import shutil
import subprocess
from importlib import resources
from pathlib import Path

import numpy as np
import pytest

import thermo
from explorer import review_data
from tests.explorer.helpers import small_scenario
from tests.thermo.test_train import FULL_TRAIN
from thermo.scenario import parse_scenario

NODE = shutil.which("node")
ROOT = Path(__file__).resolve().parents[2]


@pytest.fixture(scope="module")
def train_case():
    sc = parse_scenario(thermo.load_scenario().text + FULL_TRAIN).with_window(
        temperature=("760 degC", "940 degC", 3), pressure=("15 bar", "35 bar", 2),
        steam_to_carbon=(2.0, 4.0, 2))
    return sc, thermo.sweep(sc)


def test_the_review_file_modules_use_no_core_internals():
    """explorer.export and explorer.review_data import nothing from the train, the balance or
    the hand-check modules (they read the Dataset and public functions instead)."""
    banned = {"thermo.train", "thermo.balances", "thermo.extent"}
    for name in ("export.py", "review_data.py"):
        tree = ast.parse((ROOT / "explorer" / name).read_text("utf-8"))
        used = {n.module for n in ast.walk(tree) if isinstance(n, ast.ImportFrom)}
        used |= {a.name for n in ast.walk(tree) if isinstance(n, ast.Import) for a in n.names}
        assert not used & banned, (name, used & banned)


def test_stage_variables_equal_the_points_train(train_case):
    """The Dataset's per-stage variables at a grid node equal thermo.point's train stages
    there (grid == point, to 1e-9 relative as the Dataset contract says)."""
    sc, ds = train_case
    assert list(ds["stage"].values) == sc.train.stages()
    g = ds.isel(temperature=1, pressure=1, steam_to_carbon=0)
    pt = thermo.point(sc, temperature=f"{float(g.temperature)!r} K",
                      pressure=f"{float(g.pressure)!r} Pa",
                      steam_to_carbon=float(g.steam_to_carbon)).to_dict()
    for k, st in enumerate(pt["train"]["stages"]):
        assert st["name"] == ds["stage"].values[k]
        got = g["stage_outlet_flow"].isel(stage=k).values
        want = [st["outlet_flow_mol_per_s"][s] for s in ds.species.values]
        np.testing.assert_allclose(got, want, rtol=1e-9, atol=1e-12)
        # A stage's duty is the difference of its outlet and inlet enthalpy flows (1.0e8 to
        # 1.6e8 W here): an adiabatic stage's is near 0 W (its energy balance's residual and
        # rounding), so it is compared to 1e-9 of those flows (the contract applied to the
        # terms of the difference). It was 8.3e-7 W on the grid and -2.1e-7 W at the point.
        scale = abs(st["inlet_enthalpy_W"])
        for var, key, tol in (("stage_temperature", "temperature_K", 1e-6),
                              ("stage_duty", "duty_W", 1e-9 * scale),
                              ("stage_inlet_enthalpy", "inlet_enthalpy_W", 1e-6),
                              ("stage_outlet_enthalpy", "outlet_enthalpy_W", 1e-6)):
            assert float(g[var].isel(stage=k)) == pytest.approx(st[key], rel=1e-9, abs=tol)


def test_feed_enthalpy_is_the_points_inlet_enthalpy():
    """Without a pre-reformer the primary's inlet is the mixed feed: the Dataset's
    feed_enthalpy equals the point's inlet enthalpy (1e-12 relative)."""
    sc = small_scenario()
    ds = thermo.sweep(sc)
    g = ds.isel(temperature=0, pressure=0, steam_to_carbon=1)
    pt = thermo.point(sc, temperature=f"{float(g.temperature)!r} K",
                      pressure=f"{float(g.pressure)!r} Pa",
                      steam_to_carbon=float(g.steam_to_carbon)).to_dict()
    assert float(g["feed_enthalpy"]) == pytest.approx(pt["inlet"]["enthalpy_W"], rel=1e-12)
    assert ds["feed_enthalpy"].dims == ("steam_to_carbon",)
    assert "stage_outlet_flow" not in ds  # the primary alone: no per-stage variables


def test_an_old_grid_without_the_new_variables_is_refused_by_name(train_case):
    """A Dataset lacking what the page needs is an input error naming what is missing."""
    sc, ds = train_case
    with pytest.raises(thermo.InputError, match="stage_duty"):
        review_data.point_arrays(ds.drop_vars("stage_duty"), sc)


def _common(sc, ds):
    _, common = review_data.all_layers(ds, sc.limits, ("h2_yield",))
    return common


def test_packing_shrinks_the_nodes_and_unpacks_exactly():
    """The grid nodes' lists come back unchanged, and the packed JSON is smaller."""
    sc = small_scenario()
    ds = thermo.sweep(sc)
    common = _common(sc, ds)
    packed = review_data.pack_repeats(common)
    assert review_data.unpack_repeats(packed) == common
    assert len(json.dumps(packed)) < 0.8 * len(json.dumps(common))
    nodes = next(iter(next(iter(packed.values())).values()))["nodes"]
    assert any(isinstance(v, dict) and "rw_table" in v for v in nodes.values())


@pytest.mark.usefixtures("node")  # skips without Node.js, fails in CI (tests/conftest.py)
def test_page_script_unpacks_what_python_packed(tmp_path):
    """unpackRepeats of review.js, run under Node.js on the packed page data, gives the
    unpacked layers exactly (strings and numbers alike)."""
    sc = small_scenario()
    ds = thermo.sweep(sc)
    common = _common(sc, ds)
    js = resources.files("explorer").joinpath("static", "review.js").read_text("utf-8")
    fn = js[js.index("function unpackRepeats"):js.index("const R = ")]
    file = tmp_path / "unpack.js"
    file.write_text(fn + f"\nconsole.log(JSON.stringify(unpackRepeats("
                    f"{json.dumps(review_data.pack_repeats(common))})));\n", "utf-8")
    out = subprocess.run([NODE, str(file)], capture_output=True, text=True, timeout=60,
                         check=True).stdout
    assert json.loads(out) == json.loads(json.dumps(common))


def _as_before(s, var, mode, levels):
    """A slice's layers of one variable as the file held them before the geometry was
    rounded on the arrays: the finished layers rounded by round_layers, values included."""
    from explorer.maps import variable_layers

    return review_data.round_layers(variable_layers(s, var, mode, levels))


@pytest.mark.parametrize("case", ["demo", "train"])
def test_layers_and_grid_values_equal_the_per_slice_encoding(case, train_case):
    """Every slice's bands, lines and labels (geometry rounded on the arrays) and its node
    values (written once per grid point, taken back out per slice) equal, exactly, the
    per-slice layers rounded by round_layers, in both map modes."""
    from explorer.maps import MODES, slice_fields, variable_levels, variables_in

    if case == "demo":
        sc = thermo.load_scenario(ROOT / "scenarios" / "demo.toml")
        ds = thermo.sweep(sc)
    else:
        sc, ds = train_case
    names = ("h2_yield", "methane_slip_dry", "duty_per_h2", "carbon_activity")
    per_var, _ = review_data.all_layers(ds, sc.limits, names)
    shown = variables_in()
    checked = 0
    for v in names:
        levels = variable_levels(ds, shown[v])
        for mode in MODES:
            for fixed in review_data.slice_keys(ds, mode):
                s = slice_fields(ds, mode, fixed)
                before = _as_before(s, shown[v], mode, levels)
                now = dict(per_var[v][mode][review_data.key_text(fixed)])
                now["values"] = review_data.slice_values(ds, per_var[v]["values"], mode,
                                                         fixed)
                assert json.dumps(now, sort_keys=True) == json.dumps(before, sort_keys=True)
                checked += 1
    assert checked >= 2 * len(names)


def test_comparison_layers_equal_the_per_slice_encoding():
    """The comparison's base, proposal and change layers of every slice (the change sliced
    from the one variable it maps, values written once per grid point) equal, exactly, the
    per-slice layers of the whole change rounded by round_layers."""
    from explorer.maps import (
        MODES,
        change_tolerance,
        change_variable,
        quiet_change,
        slice_fields,
        variables_in,
    )
    from thermo.compare import difference, on_base_window

    sc = thermo.load_scenario(ROOT / "scenarios" / "demo.toml")
    prop = on_base_window(sc, thermo.load_scenario(ROOT / "scenarios" / "demo-proposal.toml"))
    ds, pds = thermo.sweep(sc), thermo.sweep(prop)
    names = ("duty", "dry:CO")
    out = review_data.comparison_layers(sc, ds, prop, pds, names)
    shown = variables_in()
    diff = difference(ds, pds)
    for v in names:
        quiet = quiet_change(diff, shown[v], change_tolerance(ds, shown[v]))
        for mode in MODES:
            for fixed in review_data.slice_keys(ds, mode):
                key = review_data.key_text(fixed)
                cuts = {"base": (slice_fields(ds, mode, fixed), shown[v], out["levels"][v]),
                        "proposal": (slice_fields(pds, mode, fixed), shown[v],
                                     out["levels"][v]),
                        "change": (review_data._diff_slice(quiet, mode, fixed),
                                   change_variable(shown[v]), out["change_levels"][v])}
                for name, (s, var, levels) in cuts.items():
                    now = dict(out[name][v][mode][key])
                    now["values"] = review_data.slice_values(ds, out[name][v]["values"], mode,
                                                             fixed)
                    assert json.dumps(now, sort_keys=True) == json.dumps(
                        _as_before(s, var, mode, levels), sort_keys=True), (name, v, key)
