"""The carbon verdict (thermo.carbon): path maximum, real-gas affinities, flags, Dataset.

References named beside each check: Cantera 3 ``equilibrate`` on the same species data
(tests/thermo/cantera_ref.py), NIST-JANAF (Chase 1998) log K (tests/references/
janaf_logK.toml), and the mathematics of a maximum over an interval.
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from scipy.optimize import minimize_scalar

import thermo
from tests.reftools import load_refs
from thermo import carbon
from thermo.constants import P_REF, R
from thermo.errors import InputError
from thermo.scenario import CarbonCheck, Limits, parse_scenario
from thermo.species import GAS_SPECIES
from thermo.sweep import RATIO_AXES, feasible_mask, sweep

_I = {s: i for i, s in enumerate(GAS_SPECIES)}


@pytest.fixture(scope="module")
def sc():
    return thermo.load_scenario()


def _point(sc, **kw):
    return thermo.point(sc, **kw).to_dict()


# ------------------------------------------------------------------ the worked cases


def test_biogas_outlet_graphite_free_but_path_deposits():
    # Biogas at 6 barg, S/C 1.0, outlet 800 degC: graphite-free at the outlet, while the same
    # gas equilibrated at 500-650 degC deposits graphite; the verdict must say not carbon-free.
    bio = thermo.load_scenario("scenarios/biogas-skid.toml")
    d = _point(bio, temperature="800 degC", pressure="6 barg", steam_to_carbon=1.0,
               inlet_temperature="500 degC", approach="0 K")
    assert d["carbon_activity"] < 1.0 and d["carbon_deposit_mol_per_s"] == 0.0
    assert d["carbon_activity_path_max"] > 1.0
    assert d["carbon_free"] is False
    assert d["carbon_check"]["binding"] == "path_equilibrium"
    assert 773.15 <= d["carbon_path_max_temperature"] < 1073.15
    # The equilibrated gas at 550 and 650 degC on its own (a point whose outlet is there).
    for T in ("550 degC", "650 degC"):
        e = _point(bio, temperature=T, pressure="6 barg", steam_to_carbon=1.0,
                   inlet_temperature="500 degC", approach="0 K")
        assert e["carbon_deposit_mol_per_s"] > 0.0, T


def test_natural_gas_sc3_25bar_500_to_880_is_carbon_free(sc):
    d = _point(sc, temperature="880 degC", pressure="25 bar", steam_to_carbon=3.0,
               inlet_temperature="500 degC", approach="0 K")
    assert d["carbon_free"] is True
    assert d["carbon_activity_path_max"] < 1.0
    assert d["carbon_check"]["higher_hydrocarbons"] is False  # 500 degC < 600 degC threshold


def test_pure_methane_real_gas_is_the_binding_route(sc):
    # The example: CH4, 700 degC, 10 bara, S/C 1.1, approach 20 K: the outlet
    # carbon activity (at T - approach) 0.93, methane cracking on the real gas at 700 degC
    # about 1.16.
    d = _point(sc, feed="CH4=1", temperature="700 degC", pressure="10 bar",
               steam_to_carbon=1.1, approach="20 K")
    assert d["carbon_activity"] == pytest.approx(0.93, abs=0.005)
    assert d["carbon_activity_real_gas"] == pytest.approx(1.16, abs=0.01)
    assert d["carbon_check"]["real_gas_route"] == "methane_cracking"
    assert d["carbon_free"] is False


# ----------------------------------------------------------------------- Cantera path maximum


def _cantera_ln_activity(T, P, inlet):
    """ln carbon activity (graphite) of Cantera's gas-only equilibrium at T, P, from its own
    chemical potentials: ln a = (mu_CH4 - 2 mu_H2 - mu_gr) / RT (Cantera 3, same data)."""
    from tests.thermo import cantera_ref as ref

    ref.equilibrate(T, P, inlet, carbon=False)
    g, gr = ref.gas(), ref.graphite()
    mu = g.chemical_potentials  # J/kmol
    gr.TP = T, P
    mu_gr = gr.chemical_potentials[0]
    RT = 8314.462618 * T  # J/kmol (Cantera's gas constant, CODATA 2018)
    return (mu[g.species_index("CH4")] - 2 * mu[g.species_index("H2")] - mu_gr) / RT


def _cantera_path_max(T_in, T_out, P, inlet):
    """Max over [T_in, T_out] of Cantera's activity: a 5 K scan, then bounded Brent on the
    best interior node's bracket (xatol 1e-4 K)."""
    taus = np.linspace(T_in, T_out, max(3, int(math.ceil((T_out - T_in) / 5.0)) + 1))
    vals = np.array([_cantera_ln_activity(t, P, inlet) for t in taus])
    k = int(np.argmax(vals))
    best_t, best = taus[k], vals[k]
    if 0 < k < taus.size - 1:
        r = minimize_scalar(lambda t: -_cantera_ln_activity(t, P, inlet),
                            bounds=(taus[k - 1], taus[k + 1]), method="bounded",
                            options={"xatol": 1e-4})
        if -r.fun > best:
            best_t, best = r.x, -r.fun
    return best, best_t


def _random_cases(n):
    rng = np.random.default_rng(1207)  # fixed: the same cases every run
    cases = []
    for _ in range(n):
        ch4 = rng.uniform(0.55, 1.0)
        co2 = rng.uniform(0.0, 1.0 - ch4)
        c2 = rng.uniform(0.0, 1.0 - ch4 - co2) * 0.5
        n2 = 1.0 - ch4 - co2 - c2
        cases.append(dict(
            feed=f"CH4={ch4:.4f},CO2={co2:.4f},C2H6={c2:.4f},N2={n2:.4f}",
            pressure=float(rng.uniform(2e5, 4e6)),
            steam_to_carbon=float(rng.uniform(0.8, 3.5)),
            inlet=float(rng.uniform(723.15, 923.15)),
            outlet=float(rng.uniform(1023.15, 1173.15)),
        ))
    return cases


@pytest.mark.parametrize("case", _random_cases(32), ids=lambda c: c["feed"])
def test_path_max_matches_cantera(sc, case):
    pytest.importorskip("cantera")
    from tests.thermo import cantera_ref as ref

    pt = thermo.point(sc, feed=case["feed"], temperature=f"{case['outlet']!r} K",
                      pressure=f"{case['pressure']!r} Pa",
                      steam_to_carbon=case["steam_to_carbon"],
                      inlet_temperature=f"{case['inlet']!r} K", approach="0 K")
    d = pt.to_dict()
    inlet = pt.balance.inlet_flow[0]
    want, t_want = _cantera_path_max(case["inlet"], case["outlet"], case["pressure"], inlet)
    # Cantera (same data): the path maximum to 1e-6 relative.
    assert d["carbon_activity_path_max"] == pytest.approx(math.exp(want), rel=1e-6)
    # The verdict identical: Cantera's gas + graphite equilibrium at the path's worst
    # temperature deposits graphite exactly when the path maximum is above 1.
    _, n_c = ref.equilibrate(t_want, case["pressure"], inlet, carbon=True)
    deposits = n_c > 1e-12 * inlet.sum()
    assert deposits == (d["carbon_activity_path_max"] > 1.0)
    assert d["carbon_free"] == (not deposits and d["carbon_activity_real_gas"] < 1.0
                                and not d["carbon_check"]["higher_hydrocarbons"])


# ------------------------------------------------------------------------ real-gas affinities


def _janaf_log10K(subject, T):
    refs = {r.T_K: r for r in load_refs("janaf_logK.toml", subject=subject)}
    return refs[T].value, refs[T].tol_abs


@pytest.mark.parametrize("T", [900.0, 1000.0, 1100.0])
def test_real_gas_affinities_against_janaf(sc, T):
    # At P = 1 bar (the standard pressure: graphite's pressure term is zero) and an approach
    # of 25 K, the outlet gas is not equilibrated at T. Each route's activity is the
    # reaction's K from NIST-JANAF (Chase 1998, janaf_logK.toml) times the real gas's partial
    # pressures; CO reduction's K is cracking's over reforming's.
    d = _point(sc, feed="CH4=0.9,CO2=0.1", temperature=f"{T!r} K", pressure="1 bar",
               steam_to_carbon=1.5, approach="25 K")
    x = d["outlet"]["mole_fraction"]
    p = {s: x[s] * 1.0 for s in x}  # bar, P = 1 bar
    lk_cr, tol_cr = _janaf_log10K("cracking", T)
    lk_rf, tol_rf = _janaf_log10K("reforming", T)
    lk_bo, tol_bo = _janaf_log10K("boudouard", T)
    want = {
        "methane_cracking": (10 ** lk_cr * p["CH4"] / p["H2"] ** 2, tol_cr),
        "co_reduction": (10 ** (lk_cr - lk_rf) * p["CO"] * p["H2"] / p["H2O"], tol_cr + tol_rf),
        "boudouard": (10 ** lk_bo * p["CO"] ** 2 / p["CO2"], tol_bo),
    }
    got = d["carbon_check"]["real_gas_by_route"]
    for route, (value, tol) in want.items():
        assert got[route] == pytest.approx(value, rel=10 ** tol - 1), route
    assert d["carbon_activity_real_gas"] == max(got.values())


def test_zero_approach_all_routes_agree(sc):
    rng = np.random.default_rng(31)
    for _ in range(12):
        T = float(rng.uniform(900.0, 1250.0))
        d = _point(sc, temperature=f"{T!r} K", pressure=f"{rng.uniform(2e5, 4e6)!r} Pa",
                   steam_to_carbon=float(rng.uniform(0.6, 4.0)), approach="0 K")
        routes = d["carbon_check"]["real_gas_by_route"]
        for v in routes.values():
            # Gas at equilibrium: every route gives the equilibrium activity (1 where
            # graphite deposits), to 1e-9 (identity of element potentials).
            assert v == pytest.approx(d["carbon_activity"], rel=1e-9)


# --------------------------------------------------------------------------- the grid's check


def test_grid_carbon_equals_point(sc):
    win = sc.with_window(temperature=("650 degC", "900 degC", 11),
                         pressure=("5 bar", "30 bar", 3), steam_to_carbon=(1.0, 3.0, 4))
    ds = sweep(win)
    names = [k for k in carbon.VARIABLES if k in ds and k != "carbon_path_max_temperature"]
    rng = np.random.default_rng(5)
    shape = ds["carbon_free"].shape
    dims = ds["carbon_free"].dims
    for flat in rng.choice(int(np.prod(shape)), size=8, replace=False):
        idx = dict(zip(dims, np.unravel_index(int(flat), shape), strict=True))
        g = ds.isel(idx)
        kw = {r: float(g[r]) for r in dims if r in RATIO_AXES}
        pt = thermo.point(win, temperature=f"{float(g['temperature'])!r} K",
                          pressure=f"{float(g['pressure'])!r} Pa", **kw)
        for name in names:
            got, want = g[name].values, pt.carbon[name][0]
            if got.dtype.kind in "bi":
                assert got == want, name
            else:
                # A grid value equals thermo.point at the same coordinates, to 1e-9 relative.
                np.testing.assert_allclose(got, want, rtol=1e-9, atol=0, err_msg=name)
        # Where a maximum lies inside the path its temperature is ill-conditioned (the
        # activity is flat there): position to 0.05 K, the value above to 1e-9.
        assert float(g["carbon_path_max_temperature"]) == pytest.approx(
            pt.carbon["carbon_path_max_temperature"][0], abs=0.05)


@settings(max_examples=6, deadline=None,
          suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(t_in=st.floats(700.0, 800.0), rise=st.floats(120.0, 320.0), n=st.integers(6, 14),
       p_bar=st.floats(2.0, 35.0), s_lo=st.floats(0.6, 2.5), approach=st.sampled_from([0, 15]))
def test_path_max_is_running_max_when_window_reaches_the_inlet(sc, t_in, rise, n, p_bar, s_lo,
                                                               approach):
    # Property: with the window's temperature axis starting at the inlet temperature, each
    # point's path is the window's own temperatures up to it, so the path maximum is the
    # running maximum of the grid's own carbon_activity, up to the continuous maximum
    # between nodes. For a smooth f the maximum over an interval exceeds the largest node
    # value by at most h^2 max|f''| / 8 (Taylor about the maximum); h^2 f'' is estimated by
    # the grid's second differences, with a factor 2 margin.
    base = dataclasses.replace(sc, approach=float(approach),
                               feed=dataclasses.replace(sc.feed, inlet_temperature=t_in))
    win = base.with_window(temperature=(f"{t_in!r} K", f"{t_in + rise!r} K", n),
                           pressure=(f"{p_bar} bar", f"{p_bar} bar", 1),
                           steam_to_carbon=(s_lo, s_lo + 1.0, 2))
    ds = sweep(win)
    a = ds["carbon_activity"].transpose(..., "temperature").values.reshape(-1, n)
    pm = ds["carbon_activity_path_max"].transpose(..., "temperature").values.reshape(-1, n)
    for row_a, row_p in zip(a, pm, strict=True):
        run = np.maximum.accumulate(row_a)
        sub = run < 1.0  # below 1 the grid's activity is the equilibrated gas's own
        la = np.log(row_a)
        curv = np.max(np.abs(np.diff(la, 2))) if n > 2 else 0.0
        lo = np.log(run[sub]) - 1e-9
        hi = np.log(run[sub]) + curv / 4.0 + 1e-9
        lp = np.log(row_p[sub])
        assert np.all(lp >= lo) and np.all(lp <= hi)
        assert np.all(row_p[~sub] >= 1.0)  # graphite somewhere on the path: activity >= 1


def test_feasible_mask_follows_the_binding_verdict(sc):
    ds = sweep(sc.with_window(temperature=("600 degC", "900 degC", 13),
                              pressure=("5 bar", "30 bar", 3), steam_to_carbon=(0.8, 3.0, 6)))
    mask = feasible_mask(ds, Limits(carbon_free=True))
    np.testing.assert_array_equal(mask.values, ds["converged"].values
                                  & (ds["carbon_verdict_ln_activity"].values < 0))
    # The path check bites: some points are graphite-free at the outlet but not carbon-free.
    assert bool(((ds["carbon_deposit"] == 0) & ~ds["carbon_free"]).any())
    assert ds["carbon_binding"].attrs["flag_meanings"].split() == list(carbon.BINDING)


def test_verdict_field_is_continuous_in_temperature(sc):
    # The edges work finds the carbon edge as a root of this field along T.
    kw = dict(pressure="25 bar", steam_to_carbon=1.4, approach="10 K")
    ts = np.linspace(900.0, 1150.0, 26)
    v = [_point(sc, temperature=f"{float(t)!r} K", **kw)["carbon_check"]["verdict_ln_activity"]
         for t in ts]
    assert np.max(np.abs(np.diff(v))) < 0.05
    a = _point(sc, temperature="1000.0 K", **kw)["carbon_check"]["verdict_ln_activity"]
    b = _point(sc, temperature="1000.001 K", **kw)["carbon_check"]["verdict_ln_activity"]
    assert abs(a - b) < 1e-5


# ----------------------------------------------------------------------- flags and reference


def test_higher_hydrocarbons_above_threshold_are_flagged(sc):
    d = _point(sc, temperature="880 degC", pressure="25 bar", steam_to_carbon=3.0,
               inlet_temperature="650 degC")
    assert d["carbon_check"]["higher_hydrocarbons"] is True
    assert d["carbon_check"]["binding"] == "higher_hydrocarbons"
    assert d["carbon_free"] is False
    assert d["carbon_check"]["verdict_ln_activity"] >= carbon.FLAG_LN_ACTIVITY
    # A pre-reformer removes them (its equilibrium leaves C2+ in traces).
    text = sc.text + '\n[train.pre_reformer]\ninlet_temperature = "480 degC"\n'
    pre = parse_scenario(text)
    e = _point(pre, temperature="880 degC", pressure="25 bar", steam_to_carbon=3.0,
               inlet_temperature="650 degC")
    assert e["carbon_check"]["higher_hydrocarbons"] is False
    # A user threshold above the inlet clears the flag too.
    hi = parse_scenario(sc.text + '\n[carbon]\nhigher_hydrocarbon_cracking_temperature = '
                        '"700 degC"\n')
    f = _point(hi, temperature="880 degC", pressure="25 bar", steam_to_carbon=3.0,
               inlet_temperature="650 degC")
    assert f["carbon_check"]["higher_hydrocarbons"] is False


def test_catalyst_carbon_is_less_restrictive(sc):
    off = 10_000.0  # J/mol, a user value (the scale of deviations reported by
    # [ROSTRUP-NIELSEN1972], quoted from memory)
    text = sc.text + ('\n[carbon]\nreference = "catalyst"\n'
                      f'catalyst_carbon_offset = "{off / 1000} kJ/mol"\n')
    cat = parse_scenario(text)
    kw = dict(temperature="750 degC", pressure="20 bar", steam_to_carbon=1.2, approach="10 K")
    g, c = _point(sc, **kw), _point(cat, **kw)
    T = 1023.15
    assert c["carbon_check"]["catalyst"]["real_gas"] == pytest.approx(
        g["carbon_activity_real_gas"] * math.exp(-off / (R * T)), rel=1e-12)
    assert c["carbon_check"]["catalyst"]["path_max"] < g["carbon_activity_path_max"]
    assert c["carbon_check"]["verdict_ln_activity"] < g["carbon_check"]["verdict_ln_activity"]
    ds_g = sweep(sc.with_window(pressure=("20 bar", "20 bar", 1)))
    ds_c = sweep(cat.with_window(pressure=("20 bar", "20 bar", 1)))
    assert bool((ds_c["carbon_free"] | ~ds_g["carbon_free"]).all())  # superset
    assert bool((ds_c["carbon_free"] & ~ds_g["carbon_free"]).any())


def test_user_profile_dipping_below_the_inlet_raises_the_maximum(sc):
    kw = dict(temperature="850 degC", pressure="10 bar", steam_to_carbon=1.6,
              inlet_temperature="620 degC", approach="0 K")
    lin = _point(sc, **kw)
    dip = parse_scenario(sc.text + '\n[carbon]\npath_temperatures = ["560 degC", "700 degC"]\n')
    d = _point(dip, **kw)
    assert d["carbon_activity_path_max"] >= lin["carbon_activity_path_max"]
    assert d["carbon_check"]["path_temperatures_K"] == pytest.approx([833.15, 973.15])


def test_carbon_table_round_trip_and_errors(sc):
    text = sc.text + ('\n[carbon]\npath_temperatures = ["560 degC"]\nreference = "graphite"\n'
                      'catalyst_carbon_offset = "8 kJ/mol"\n')
    a = parse_scenario(text)
    assert a.carbon == CarbonCheck((833.15,), "graphite", 8000.0)
    assert parse_scenario(a.to_toml()) == a
    assert parse_scenario(sc.to_toml()).carbon == CarbonCheck()
    bad = {
        'reference = "whisker"': "carbon.reference",
        'catalyst_carbon_offset = "8 bar"': "carbon.catalyst_carbon_offset",
        'catalyst_carbon_offset = "-3 kJ/mol"': "carbon.catalyst_carbon_offset",
        'reference = "catalyst"': "carbon.catalyst_carbon_offset",
        'path_temperatures = "600 degC"': "carbon.path_temperatures",
        'path_step = "5 K"': "carbon.path_step",
    }
    for line, field in bad.items():
        with pytest.raises(InputError) as err:
            parse_scenario(sc.text + f"\n[carbon]\n{line}\n")
        assert err.value.field == field, line


def test_point_json_carries_the_contract_keys(sc):
    d = _point(sc)
    for k in ("carbon_free", "carbon_activity_path_max", "carbon_path_max_temperature",
              "carbon_activity_real_gas"):
        assert k in d
    assert isinstance(d["carbon_free"], bool)
    assert d["carbon_check"]["binding"] in carbon.BINDING
    assert P_REF == 1e5
