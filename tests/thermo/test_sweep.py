"""The window sweep: Dataset contract, grid = point, chunking, caching, files and dask.

Numbers in this file are not published values: they are window choices (any values inside
the model's ranges would do) or tolerances, each with its reason beside it. The physical
trends checked are common practice, no source (Le Chatelier behaviour of steam
reforming), not published numbers.
"""

from __future__ import annotations

import dataclasses
import importlib
import threading
from pathlib import Path

import numpy as np
import pytest
import xarray as xr

import thermo
from thermo import io
from thermo.constants import P_REF
from thermo.equilibrium import equilibrate
from thermo.errors import InputError
from thermo.scenario import Limits
from thermo.species import GAS_SPECIES, formula_matrix, gas_table, graphite_mu_RT
from thermo.sweep import SCHEMA_VERSION, SweepCache, feasible_mask, sweep

# The Dataset contract (thermo/sweep.py): variable -> (dims beyond the window, units attribute).
# "window" dims are the axes present; inlet_flow is over the ratio axes only (handled apart).
CONTRACT = {
    "mole_fraction": (("species",), "1"),
    "mole_fraction_dry": (("species",), "1"),
    "outlet_flow": (("species",), "mol s-1"),
    "carbon_deposit": ((), "mol s-1"),
    "carbon_activity": ((), "1"),
    "h2_yield": ((), "1"),
    "methane_slip_dry": ((), "1"),
    "methane_conversion": ((), "1"),
    "h2_co_ratio": ((), "1"),
    "duty": ((), "W"),
    # The contract lists "bool" for converged: the dtype; its units attribute is the UDUNITS "1".
    "converged": ((), "1"),
}
CONTRACT_VARS = tuple(CONTRACT) + ("inlet_flow",)
RATIO_AXES = ("steam_to_carbon", "oxygen_to_carbon", "co2_to_carbon")
SPECIES = ("CH4", "C2H6", "C3H8", "H2O", "H2", "CO", "CO2", "O2", "N2", "Ar")  # the contract

# Relative tolerance of grid == point: the Dataset contract ("to 1e-9 relative").
GRID_POINT_RTOL = 1e-9

# Window of the demo scenario used by most tests: 5 x 3 x 4 = 60 points. The S/C range
# reaches down to 1.0, where the demo gas deposits carbon at the cooler corner.
WINDOW = dict(
    temperature=("700 degC", "950 degC", 5),
    pressure=("10 bar", "40 bar", 3),
    steam_to_carbon=(1.0, 5.0, 4),
)


@pytest.fixture(scope="module")
def sc():
    """The demo scenario (approach 10 K) on the 60-point window."""
    return thermo.load_scenario().with_window(**WINDOW)


@pytest.fixture(scope="module")
def ds(sc):
    return sweep(sc)


def _without_created(d: xr.Dataset) -> xr.Dataset:
    d = d.copy()
    d.attrs = {k: v for k, v in d.attrs.items() if k != "created"}
    return d


def _run_with_timeout(fn, seconds: float):
    """Run `fn()` in a daemon thread; fail the test (not hang the run) past `seconds`."""
    box: dict = {}

    def target():
        try:
            box["value"] = fn()
        except BaseException as err:  # re-raised in the test thread
            box["error"] = err

    th = threading.Thread(target=target, daemon=True)
    th.start()
    th.join(seconds)
    if th.is_alive():
        pytest.fail(f"did not finish within {seconds} s")
    if "error" in box:
        raise box["error"]
    return box["value"]


# ------------------------------------------------------------------------------------ schema


def _check_contract(d: xr.Dataset, window_dims: tuple[str, ...]) -> None:
    ratio_dims = tuple(x for x in window_dims if x in RATIO_AXES)
    for name, (extra, units) in CONTRACT.items():
        assert name in d, name
        assert d[name].dims == window_dims + extra, name
        assert d[name].attrs.get("units") == units, name
    assert d["inlet_flow"].dims == ratio_dims + ("species",)
    assert d["inlet_flow"].attrs.get("units") == "mol s-1"
    assert d["converged"].dtype == np.bool_
    for name, var in d.data_vars.items():
        assert isinstance(var.attrs.get("long_name"), str) and var.attrs["long_name"], name
        assert "units" in var.attrs, name
    coord_units = {"temperature": "K", "pressure": "Pa", "steam_to_carbon": "1",
                   "oxygen_to_carbon": "1", "co2_to_carbon": "1"}
    assert tuple(d["mole_fraction"].dims[:-1]) == window_dims
    for dim in window_dims:
        assert d[dim].attrs.get("units") == coord_units[dim], dim
    assert tuple(d["species"].values) == SPECIES


def test_dataset_follows_the_contract(ds, sc):
    """The demo Dataset has the contract's variables, dims and units; SI coordinates; the
    version, scenario text (read back equal) and data sources as attributes; no NaN; h2_co_ratio
    +inf exactly where no CO; every point converged."""
    _check_contract(ds, ("temperature", "pressure", "steam_to_carbon"))
    # Coordinates in SI: 273.15 K is the degC offset and 1 bar = 1e5 Pa, both by definition
    # (SI Brochure, 9th ed., 2019, from memory).
    # rtol 1e-12: float round-off of the unit conversion only.
    np.testing.assert_allclose(ds["temperature"], np.linspace(973.15, 1223.15, 5), rtol=1e-12)
    np.testing.assert_allclose(ds["pressure"], np.linspace(10e5, 40e5, 3), rtol=1e-12)
    np.testing.assert_array_equal(ds["steam_to_carbon"], np.linspace(1.0, 5.0, 4))
    # Attributes: version, scenario text (reads back to an equal Scenario), data sources.
    assert ds.attrs["schema_version"] == SCHEMA_VERSION
    assert ds.attrs["thermo_version"] == thermo.__version__
    assert thermo.parse_scenario(ds.attrs["scenario"]) == sc
    sources = ds.attrs["data_sources"]
    # The two data sources of the species data (GRI30, TM4513).
    assert "GRI-Mech 3.0" in sources and "4513" in sources
    # No NaN in any contract variable; h2_co_ratio is non-finite only as +inf where no CO.
    for name in CONTRACT_VARS:
        values = ds[name].values
        if values.dtype.kind == "f":
            assert not np.isnan(values).any(), name
    h2co = ds["h2_co_ratio"].values
    co = ds["outlet_flow"].sel(species="CO").values
    bad = ~np.isfinite(h2co)
    np.testing.assert_array_equal(bad, co == 0.0)
    assert (h2co[bad] == np.inf).all()
    for name in set(CONTRACT_VARS) - {"h2_co_ratio"}:
        if ds[name].dtype.kind == "f":
            assert np.isfinite(ds[name].values).all(), name
    assert ds["converged"].all()  # this window is inside the solver's validated range


def test_inlet_flow_is_the_feed_at_each_steam_to_carbon(ds, sc):
    """Inlet H2O is S/C times the hydrocarbon carbon at each S/C, and the dry gas (CH4) does not
    vary with S/C."""
    carbon = sc.feed.carbon_flow()
    h2o = ds["inlet_flow"].sel(species="H2O")
    # H2O in = S/C x hydrocarbon carbon (S/C, common practice); rtol: float round-off.
    np.testing.assert_allclose(h2o, ds["steam_to_carbon"] * carbon, rtol=1e-14)
    ch4 = ds["inlet_flow"].sel(species="CH4").values
    assert (ch4 == ch4[0]).all()  # the dry gas does not depend on S/C


@pytest.mark.parametrize("cofeed, axis", [
    ("oxygen_to_carbon", (0.0, 0.5, 3)),
    ("co2_to_carbon", (0.0, 1.0, 3)),
])
def test_optional_cofeed_axis(sc, cofeed, axis):
    """A co-feed axis appears with the contract's dims and its values; inlet H2O follows S/C only
    and the co-fed species follows the co-feed only; the co-feed changes the outlet H2."""
    small = sc.with_window(temperature=("750 degC", "900 degC", 3),
                           pressure=("10 bar", "30 bar", 2),
                           steam_to_carbon=(2.0, 4.0, 2), **{cofeed: axis})
    d = sweep(small)
    dims = ("temperature", "pressure", "steam_to_carbon", cofeed)
    _check_contract(d, dims)
    assert d.sizes[cofeed] == 3
    np.testing.assert_array_equal(d[cofeed], np.linspace(*axis))
    carbon = small.feed.carbon_flow()
    inlet = d["inlet_flow"]
    # Varies over both ratio axes: H2O with S/C only, the co-fed species with the co-feed only.
    np.testing.assert_allclose(inlet.sel(species="H2O"),
                               (d["steam_to_carbon"] * carbon).broadcast_like(inlet.sel(
                                   species="H2O")), rtol=1e-14)
    species = "O2" if cofeed == "oxygen_to_carbon" else "CO2"
    gas_part = small.feed.flow * small.feed.composition.get(species, 0.0)
    expected = (gas_part + d[cofeed] * carbon).broadcast_like(inlet.sel(species=species))
    np.testing.assert_allclose(inlet.sel(species=species), expected, rtol=1e-14)
    # The co-feed changes the outlet (the axis is not ignored by the solver).
    h2 = d["outlet_flow"].sel(species="H2")
    assert float(abs(h2.isel({cofeed: -1}) - h2.isel({cofeed: 0})).min()) > 0.0


# ---------------------------------------------------------------------------- grid == point


@pytest.mark.parametrize("cofeed", [None, "co2_to_carbon"])
def test_grid_equals_point(sc, cofeed):
    """At 10 random grid points (with and without a co-feed axis) every contract variable and the
    inlet flow equal thermo.point's at the same coordinates to GRID_POINT_RTOL."""
    extra = {} if cofeed is None else {cofeed: (0.0, 0.8, 3)}
    win = sc.with_window(**extra)
    assert win.approach == 10.0  # the demo's approach, so T - approach is exercised
    d = sweep(win)
    dims = list(d["carbon_deposit"].dims)
    shape = d["carbon_deposit"].shape
    rng = np.random.default_rng(20240611)  # fixed seed: the same 10 points every run
    for flat in rng.choice(int(np.prod(shape)), size=10, replace=False):
        idx = dict(zip(dims, np.unravel_index(int(flat), shape), strict=True))
        g = d.isel(idx)
        T, P = float(g["temperature"]), float(g["pressure"])
        kwargs = {r: float(g[r]) for r in dims if r in RATIO_AXES}
        pt = thermo.point(win, temperature=f"{T!r} K", pressure=f"{P!r} Pa", **kwargs)
        b = pt.balance
        where = f"point {idx}"
        for name in CONTRACT:
            got = g[name].values
            want = np.asarray(getattr(b, name)[0])
            if name == "converged":
                assert bool(got) == bool(want), where
            else:
                np.testing.assert_allclose(got, want, rtol=GRID_POINT_RTOL, atol=0,
                                           err_msg=f"{name} at {where}")
        np.testing.assert_allclose(g["inlet_flow"].values, b.inlet_flow[0],
                                   rtol=GRID_POINT_RTOL, atol=0, err_msg=where)


# ----------------------------------------------------------------------- chunks and progress


def test_chunking_changes_nothing_and_progress_counts_up(sc, ds):
    """A sweep in 7-point chunks is identical to the unchunked one; progress is called 15 times,
    increasing, ending at the total."""
    calls = []
    small = sweep(sc, chunk_points=7, progress=lambda done, total: calls.append((done, total)))
    xr.testing.assert_identical(_without_created(small), _without_created(ds))
    n = 60
    # Chunks hold whole rows of the last axis (4 S/C values): 7 rounds down to 4 points,
    # so 60 points take 15 calls.
    assert len(calls) == 15
    dones = [c[0] for c in calls]
    assert all(b > a for a, b in zip(dones, dones[1:], strict=False))
    assert dones[-1] == n and all(c[1] == n for c in calls)


# ------------------------------------------------------------------------ against Cantera


def test_grid_matches_cantera_including_carbon():
    """At 20 random points of a carbon-forming window, mole fractions equal Cantera's (1e-8
    absolute) and the carbon / no-carbon call is the same; the draw covers both sides of the
    boundary."""
    pytest.importorskip("cantera")
    from tests.thermo import cantera_ref
    # Down to S/C 0.2 and 500 degC, 1 bar, so that a good part of the window deposits carbon.
    sc = thermo.load_scenario().with_window(temperature=("500 degC", "950 degC", 6),
                                            pressure=("1 bar", "40 bar", 3),
                                            steam_to_carbon=(0.2, 3.0, 5))
    d = sweep(sc)
    dims = ["temperature", "pressure", "steam_to_carbon"]
    shape = tuple(d.sizes[x] for x in dims)
    approach = sc.approach
    carbon_calls = []
    rng = np.random.default_rng(7)  # fixed seed
    for flat in rng.choice(int(np.prod(shape)), size=20, replace=False):
        idx = dict(zip(dims, np.unravel_index(int(flat), shape), strict=True))
        g = d.isel(idx)
        # The composition is the equilibrium at T - approach (README, Method).
        T = float(g["temperature"]) - approach
        inlet = d["inlet_flow"].isel(steam_to_carbon=idx["steam_to_carbon"]).values
        moles, n_carbon = cantera_ref.equilibrate(T, float(g["pressure"]), inlet)
        # 1e-8 absolute on mole fractions: both solve the same Gibbs problem with the same
        # data to rtol 1e-12 (Cantera) and the project's element tolerance; 1e-8 leaves room
        # for the two solvers' stopping rules without hiding a wrong species or data error.
        np.testing.assert_allclose(g["mole_fraction"].values, moles / moles.sum(),
                                   rtol=0, atol=1e-8, err_msg=f"{idx}")
        assert (float(g["carbon_deposit"]) > 0) == (n_carbon > 0), idx
        carbon_calls.append(n_carbon > 0)
    # The draw covers both sides of the carbon boundary (else the carbon check is empty).
    assert any(carbon_calls) and not all(carbon_calls)


# ---------------------------------------------------------------------------------- physics


def test_methane_slip_trends_in_the_carbon_free_region():
    """Common practice, no source: equilibrium methane slip falls with temperature and with
    steam-to-carbon and rises with pressure (steam reforming is endothermic and increases the
    number of gas moles)."""
    sc = thermo.load_scenario().with_window(temperature=("700 degC", "950 degC", 6),
                                            pressure=("5 bar", "40 bar", 4),
                                            steam_to_carbon=(1.0, 5.0, 5))
    d = sweep(sc)
    slip = d["methane_slip_dry"].values
    free = d["carbon_deposit"].values == 0.0
    signs = {"temperature": -1, "pressure": +1, "steam_to_carbon": -1}
    for axis, (name, sign) in enumerate(signs.items()):
        step = np.diff(slip, axis=axis)
        both = np.diff(free.astype(int), axis=axis) == 0
        both &= np.take(free, range(1, free.shape[axis]), axis=axis)
        assert both.sum() > step.size // 2, name  # most pairs are carbon-free
        assert (sign * step[both] > 0).all(), f"methane slip vs {name}"


def test_carbon_region_equals_single_point_calls():
    """The grid's carbon region equals that of single-point equilibrate calls, straddles the
    boundary, and carbon activity is 1 inside it."""
    sc = thermo.load_scenario().with_window(temperature=("500 degC", "900 degC", 5),
                                            pressure=("1 bar", "30 bar", 2),
                                            steam_to_carbon=(0.3, 2.0, 4))
    d = sweep(sc)
    A = formula_matrix()
    region = d["carbon_deposit"].values > 0
    single = np.zeros_like(region)
    for i, T in enumerate(d["temperature"].values):
        for j, P in enumerate(d["pressure"].values):
            for k in range(d.sizes["steam_to_carbon"]):
                b = d["inlet_flow"].isel(steam_to_carbon=k).values @ A
                eq = equilibrate([T - sc.approach], [P], b[None, :])
                single[i, j, k] = eq.carbon[0] > 0
    np.testing.assert_array_equal(region, single)
    assert region.any() and not region.all()  # the window straddles the boundary
    # Carbon activity is 1 where carbon deposits (Dataset contract); rtol: round-off of exp(0).
    np.testing.assert_allclose(d["carbon_activity"].values[region], 1.0, rtol=1e-12)


# A window of the demo gas at low S/C and 450-550 degC where the carbon boundary runs through
# the grid (5 x 4 x 7 = 140 points).
BOUNDARY_WINDOW = dict(temperature=("450 degC", "550 degC", 5),
                       pressure=("5 bar", "20 bar", 4),
                       steam_to_carbon=(0.4, 1.0, 7))


def _ln_carbon_activity_of_the_gas(d: xr.Dataset, approach: float) -> np.ndarray:
    """ln a_C of the outlet gas from its composition: mu_C = mu_CH4 - 2 mu_H2 (CH4 = C + 2 H2)
    minus graphite's mu, all on the project's own data at the equilibrium temperature."""
    T = (d["temperature"] - approach).broadcast_like(d["carbon_deposit"]).values
    P = d["pressure"].broadcast_like(d["carbon_deposit"]).values
    x = d["mole_fraction"].values
    g = np.moveaxis(gas_table(T.ravel(), "g_RT"), 0, -1).reshape(x.shape)
    i_ch4, i_h2 = GAS_SPECIES.index("CH4"), GAS_SPECIES.index("H2")
    mu_ch4 = g[..., i_ch4] + np.log(x[..., i_ch4] * P / P_REF)
    mu_h2 = g[..., i_h2] + np.log(x[..., i_h2] * P / P_REF)
    return mu_ch4 - 2 * mu_h2 - graphite_mu_RT(T.ravel(), P.ravel()).reshape(T.shape)


def test_carbon_activity_is_that_of_the_outlet_gas():
    """Where no carbon deposits, the reported carbon activity equals the methane-cracking
    activity of the outlet gas recomputed here (1e-8 in ln a_C)."""
    sc = thermo.load_scenario().with_window(**BOUNDARY_WINDOW)
    d = sweep(sc)
    free = d["carbon_deposit"].values == 0.0
    assert free.any() and not free.all()
    ln_gas = _ln_carbon_activity_of_the_gas(d, sc.approach)
    # 1e-8 absolute in ln a_C: the solver closes element balances to 1e-10 relative, so the
    # potentials of the major species CH4 and H2 are good to far better than this.
    np.testing.assert_allclose(np.log(d["carbon_activity"].values[free]), ln_gas[free],
                               rtol=0, atol=1e-8)


def test_no_carbon_free_point_is_supersaturated():
    """No carbon-free point has a gas whose carbon activity exceeds 1 (ln a_C above 1e-8)."""
    sc = thermo.load_scenario().with_window(**BOUNDARY_WINDOW)
    d = sweep(sc)
    free = d["carbon_deposit"].values == 0.0
    ln_gas = _ln_carbon_activity_of_the_gas(d, sc.approach)
    # 1e-8: as above; a gas with ln a_C above that would deposit graphite at equilibrium.
    over = free & (ln_gas > 1e-8)
    assert not over.any(), f"{over.sum()} carbon-free points with a_C > 1"


# ----------------------------------------------------------------------- limits and caching


def _by_hand(d: xr.Dataset, lim: Limits) -> np.ndarray:
    ok = d["converged"].values.copy()
    if lim.max_methane_slip_dry is not None:
        ok &= d["methane_slip_dry"].values <= lim.max_methane_slip_dry
    if lim.carbon_free:
        # The binding carbon verdict (thermo.carbon), rebuilt from its parts: the path
        # maximum and the real-gas maximum below 1, and neither flag set.
        ok &= d["carbon_activity_path_max"].values < 1.0
        ok &= d["carbon_activity_real_gas"].values < 1.0
        ok &= ~d["carbon_higher_hydrocarbons"].values & ~d["carbon_other_stage"].values
    if lim.min_h2_yield is not None:
        ok &= d["h2_yield"].values >= lim.min_h2_yield
    if lim.max_duty is not None:
        ok &= d["duty"].values <= lim.max_duty
    return ok


# Limits chosen inside this window's value ranges (slip 0.0007-0.49, H2 yield 0.6-3.4,
# duty 16-102 MW) so that each one cuts the window somewhere.
LIMIT_SETS = [
    Limits(max_methane_slip_dry=0.05, carbon_free=False),
    Limits(max_methane_slip_dry=None, carbon_free=True),
    Limits(carbon_free=False, min_h2_yield=2.5),
    Limits(carbon_free=False, max_duty=6e7),
    Limits(max_methane_slip_dry=0.1, carbon_free=True, min_h2_yield=2.0, max_duty=9e7),
]


def test_feasible_mask_is_the_conjunction_of_the_limits(ds, sc):
    """The Dataset's feasible variable and feasible_mask for each limit set equal the limits
    checked by hand, and each limit set bites (some points in, some out)."""
    np.testing.assert_array_equal(ds["feasible"].values, _by_hand(ds, sc.limits))
    for lim in LIMIT_SETS:
        mask = feasible_mask(ds, lim)
        expected = _by_hand(ds, lim)
        np.testing.assert_array_equal(mask.values, expected, err_msg=str(lim))
        assert expected.any() and not expected.all(), lim  # the limit bites
        assert mask.dims == ds["carbon_deposit"].dims


def test_cache_reuses_the_sweep_for_new_limits(sc, monkeypatch):
    """SweepCache solves once for the same window with new limits (one sweep, a hit), recomputes
    feasible for them without changing the first result, and solves again only for a new window."""
    # thermo/__init__ re-exports the function as thermo.sweep, hiding the module attribute.
    sweep_module = importlib.import_module("thermo.sweep")

    runs = []
    real = sweep_module.sweep

    def counting(*args, **kwargs):
        runs.append(1)
        return real(*args, **kwargs)

    monkeypatch.setattr(sweep_module, "sweep", counting)
    cache = SweepCache(maxsize=4)
    first = cache.get(sc)
    assert (cache.misses, cache.hits, len(runs)) == (1, 0, 1)
    loose = dataclasses.replace(sc, limits=LIMIT_SETS[0])
    second = cache.get(loose)
    assert (cache.misses, cache.hits, len(runs)) == (1, 1, 1)
    np.testing.assert_array_equal(second["feasible"].values, _by_hand(second, loose.limits))
    assert (second["feasible"].values != first["feasible"].values).any()
    # Only the limit-dependent variables (grid mask and exact intervals) differ.
    from thermo.edges import LIMIT_DEPENDENT

    xr.testing.assert_identical(
        second.drop_vars(LIMIT_DEPENDENT + ("interval",), errors="ignore").drop_attrs(),
        first.drop_vars(LIMIT_DEPENDENT + ("interval",), errors="ignore").drop_attrs())
    # The first result was not changed by the second request.
    np.testing.assert_array_equal(first["feasible"].values, _by_hand(first, sc.limits))
    # Same scenario again: a hit. A different window: a miss and a new sweep.
    cache.get(sc)
    assert (cache.misses, cache.hits) == (1, 2)
    other = sc.with_window(temperature=("700 degC", "950 degC", 4))
    third = cache.get(other)
    assert (cache.misses, cache.hits, len(runs)) == (2, 2, 2)
    assert third.sizes["temperature"] == 4


def test_scenario_attr_describes_a_replaced_scenario(sc):
    """A cached Dataset's scenario attribute reads back as the scenario with its replaced limits."""
    loose = dataclasses.replace(sc, limits=LIMIT_SETS[0])
    d = SweepCache().get(loose)
    assert thermo.parse_scenario(d.attrs["scenario"]) == loose


# ------------------------------------------------------------------------------------ files


def test_netcdf_round_trip_is_identical(ds, tmp_path):
    """Saving and loading NetCDF gives an identical Dataset (attributes included), bool dtypes
    and a +inf h2_co_ratio kept."""
    d = ds.copy(deep=True)
    # One +inf in h2_co_ratio (the one non-finite value the contract allows) must survive.
    d["h2_co_ratio"][0, 0, 0] = np.inf
    path = io.save(d, tmp_path / "grid.nc")
    back = io.load(path)
    xr.testing.assert_identical(back, d)
    assert back["converged"].dtype == np.bool_ and back["feasible"].dtype == np.bool_
    assert back["h2_co_ratio"].values[0, 0, 0] == np.inf


def test_other_schema_version_is_refused(ds, tmp_path):
    """Loading a file of another schema version is refused with a message quoting the version and
    saying to re-run."""
    old = ds.copy()
    old.attrs["schema_version"] = "0"
    path = tmp_path / "old.nc"
    old.to_netcdf(path, engine="netcdf4")
    with pytest.raises(InputError, match="re-run") as info:
        io.load(path)
    assert "'0'" in str(info.value)


@pytest.mark.parametrize("error", [OSError("no space left on device (simulated)"),
                                   KeyboardInterrupt()])
def test_interrupted_save_leaves_the_previous_file(ds, tmp_path, monkeypatch, error):
    """A save that fails midway (exception or Ctrl+C) writes to a temporary file only, leaves the
    previous file byte for byte, and leaves no temporary file."""
    target = tmp_path / "grid.nc"
    io.save(ds, target)
    before = target.read_bytes()
    written = []

    def broken_to_netcdf(self, path, *args, **kwargs):
        # A partial NetCDF header, then the failure, as a crash midway through a write.
        Path(path).write_bytes(before[:100])
        written.append(Path(path))
        raise error

    monkeypatch.setattr(xr.Dataset, "to_netcdf", broken_to_netcdf)
    changed = ds.copy()
    changed.attrs["title"] = "changed"
    with pytest.raises(type(error)):
        io.save(changed, target)
    assert written and written[0] != target and written[0].parent == tmp_path
    assert target.read_bytes() == before
    assert sorted(p.name for p in tmp_path.iterdir()) == ["grid.nc"]  # no *.part left


# ------------------------------------------------------------------------------------- dask

# Each dask test starts worker processes (some seconds); 180 s is far above a healthy run
# on this machine (about 5 s) and stops a hung cluster from stalling the whole test run.
DASK_TIMEOUT_S = 180


def _assert_same_numbers(a: xr.Dataset, b: xr.Dataset) -> None:
    # 1e-9 relative: the contract's grid tolerance; workers run the same code on the same
    # inputs, so in practice the numbers are equal.
    xr.testing.assert_allclose(a.drop_vars(["converged", "feasible"]),
                               b.drop_vars(["converged", "feasible"]), rtol=1e-9, atol=0)
    xr.testing.assert_identical(a["converged"], b["converged"])
    xr.testing.assert_identical(a["feasible"], b["feasible"])


def test_sweep_on_local_dask_workers(sc, ds):
    """A sweep on 2 local dask workers equals the in-process sweep, with 4 increasing progress
    calls ending at 60 points."""
    pytest.importorskip("dask.distributed")
    calls = []
    d = _run_with_timeout(
        lambda: sweep(sc, workers=2, chunk_points=16,
                      progress=lambda done, total: calls.append((done, total))),
        DASK_TIMEOUT_S)
    _assert_same_numbers(d, ds)
    dones = [c[0] for c in calls]
    assert len(calls) == 4 and dones == sorted(dones) and dones[-1] == 60  # ceil(60 / 16)


def test_sweep_on_an_existing_cluster(sc, ds):
    """A sweep on an existing dask.distributed cluster (by address) equals the in-process sweep."""
    distributed = pytest.importorskip("dask.distributed")

    def run():
        cluster = distributed.LocalCluster(n_workers=2, threads_per_worker=1,
                                           host="127.0.0.1", dashboard_address=None)
        try:
            return sweep(sc, scheduler=cluster.scheduler_address, chunk_points=16)
        finally:
            cluster.close()

    d = _run_with_timeout(run, DASK_TIMEOUT_S)
    _assert_same_numbers(d, ds)


def _numba_threads() -> int:
    import numba

    return numba.get_num_threads()


def test_local_workers_share_the_cores_between_their_solvers():
    """Each of 2 local workers runs numba with half of this machine's cores (at least one),
    not all of them: two workers on two cores each with two threads ran slower than one."""
    pytest.importorskip("dask.distributed")
    from thermo.sweep import dask_client, worker_threads

    assert worker_threads(2, cores=2) == 1 and worker_threads(1, cores=2) == 2
    assert worker_threads(3, cores=2) == 1 and worker_threads(2, cores=16) == 8

    def run():
        with dask_client(2, None) as client:
            return client.run(_numba_threads)

    threads = _run_with_timeout(run, DASK_TIMEOUT_S)
    assert len(threads) == 2
    assert set(threads.values()) == {worker_threads(2)}
