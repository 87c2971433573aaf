"""The reforming train: shift stages, adiabatic stages, train totals and the scenario keys.

References: the shift stage against the extent-of-reaction solution of the shift reaction
alone (thermo.extent, checked against its definitions and the full minimization in
test_extent.py; its K comes from species data checked against NIST-JANAF log10 K in
test_species_data.py); the
adiabatic stages against energy-balance closure and against Cantera's HP equilibrium
(https://cantera.org, a general-purpose reference library, tests only) on the same
GRI-Mech 3.0 species data.
"""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest

import thermo
from tests.thermo import cantera_ref
from thermo.balances import enthalpy_flow, reformer_balance
from thermo.errors import InputError
from thermo.extent import SHIFT, equilibrium_constant, solve_extent
from thermo.scenario import (
    OXIDANTS,
    PreReformer,
    SecondaryReformer,
    ShiftStage,
    Train,
    parse_scenario,
)
from thermo.species import GAS_SPECIES, formula_matrix
from thermo.train import shift_equilibrium, train_balance

IX = {s: i for i, s in enumerate(GAS_SPECIES)}

#: A whole train on the demo feed. Its temperatures, ratios and approaches are test inputs in
#: the usual ranges (common practice, no source, as are the shift inlet ranges).
FULL_TRAIN = """
[train.pre_reformer]
inlet_temperature = "490 degC"
[train.secondary_reformer]
oxidant = "air"
oxygen_to_carbon = 0.25
oxidant_temperature = "550 degC"
approach = "5 K"
[train.high_temperature_shift]
temperature = "360 degC"
approach = "12 K"
[train.low_temperature_shift]
temperature = "210 degC"
approach = "8 K"
"""


def gas(**moles) -> np.ndarray:
    n = np.zeros(len(GAS_SPECIES))
    for k, v in moles.items():
        n[IX[k]] = v
    return n


@pytest.fixture(scope="module")
def full():
    return parse_scenario(thermo.load_scenario().text + FULL_TRAIN)


def _grid_points(sc, k=40, seed=3):
    """k points spread over the scenario's window (T, P, S/C), fresh feed flows."""
    rng = np.random.default_rng(seed)
    w = sc.window
    T = rng.uniform(w.temperature.start, w.temperature.stop, k)
    P = rng.uniform(w.pressure.start, w.pressure.stop, k)
    S = rng.uniform(2.0, 5.0, k)
    return sc.feed.inlet_flows(steam_to_carbon=S).T, T, P


# ------------------------------------------------------------------------------ shift stage

SHIFT_CASES = [
    # (gas, T [K]): a reformer outlet, a CO-rich gas, a gas without H2 or CO2, one with
    # little steam (the extent is bounded by H2O), and a CO2-rich gas that shifts backwards.
    (gas(CH4=0.16, H2O=2.09, H2=3.21, CO=0.63, CO2=0.36, N2=0.01), 643.15),
    (gas(H2O=1.0, CO=1.0, H2=0.2, CO2=0.1), 500.0),
    (gas(H2O=2.0, CO=1.0), 700.0),
    (gas(H2O=0.05, CO=1.0, H2=1.0, CO2=0.3), 483.15),
    (gas(H2O=0.2, CO=0.01, H2=0.3, CO2=3.0), 800.0),
]


@pytest.mark.parametrize("n, T", SHIFT_CASES)
def test_shift_stage_equals_extent_solution_of_shift_alone(n, T):
    """The shift stage's CO, H2O, CO2 and H2 equal the extent-of-reaction solution of the shift
    alone (1e-9 relative), and every other species is unchanged to the bit."""
    out = shift_equilibrium(n[None, :], T)[0]
    moles = {s: n[IX[s]] for s in ("CO", "H2O", "CO2", "H2") if n[IX[s]] > 0}
    sol = solve_extent(SHIFT, moles, T, 30e5)
    xi = sol.extents[0]
    # The extent solution of the one reaction (thermo.extent), to round-off.
    assert out[IX["CO2"]] - n[IX["CO2"]] == pytest.approx(xi, rel=1e-9, abs=1e-13)
    for s in ("CO", "H2O", "CO2", "H2"):
        assert out[IX[s]] == pytest.approx(sol.moles.get(s, 0.0), rel=1e-9, abs=1e-13)
    # Everything else frozen, exactly.
    for s in ("CH4", "C2H6", "C3H8", "O2", "N2", "Ar"):
        assert out[IX[s]] == n[IX[s]]


def test_shift_quotient_equals_K_at_stage_temperature_plus_approach(full):
    """After each shift stage Q equals K at the stage temperature plus its approach (1e-9), that
    K is below K at the stage temperature, and CH4 passes through unchanged."""
    feed, T, P = _grid_points(full, 12)
    r = train_balance(full.train, feed, T, P, full.feed.inlet_temperature, full.approach)
    for name in ("high_temperature_shift", "low_temperature_shift"):
        st = r.stage(name)
        x = st.outlet_flow
        Q = x[:, IX["CO2"]] * x[:, IX["H2"]] / (x[:, IX["CO"]] * x[:, IX["H2O"]])
        stage = getattr(full.train, name)
        K = equilibrium_constant(SHIFT, stage.temperature + stage.approach)
        np.testing.assert_allclose(Q, K, rtol=1e-9)
        # The approach gives less conversion than equilibrium at the stage temperature.
        assert float(K) < float(equilibrium_constant(SHIFT, stage.temperature))
        # Methane and the higher hydrocarbons pass through unchanged.
        np.testing.assert_array_equal(x[:, IX["CH4"]], st.inlet_flow[:, IX["CH4"]])


# --------------------------------------------------------------------------- adiabatic stages

@pytest.mark.parametrize("oxidant, ratio", [("air", 0.25), ("oxygen", 0.45), ("air", 0.0)])
def test_adiabatic_stages_close_their_energy_balance(full, oxidant, ratio):
    """Pre-reformer and secondary reformer converge with a duty of zero to 1e-6 of their inlet
    enthalpy, recomputed from the outlet at its temperature too; with oxidant the secondary runs
    hotter than the primary outlet."""
    sec = SecondaryReformer(oxidant, ratio, 823.15, 0.0)
    train = dataclasses.replace(full.train, secondary_reformer=sec)
    feed, T, P = _grid_points(full, 30, seed=int(ratio * 100))
    r = train_balance(train, feed, T, P, full.feed.inlet_temperature, full.approach)
    for name in ("pre_reformer", "secondary_reformer"):
        st = r.stage(name)
        assert st.converged.all(), name
        # Issue requirement: duty zero to 1e-6 of the stage's inlet enthalpy flow magnitude.
        assert np.all(np.abs(st.duty) <= 1e-6 * np.abs(st.inlet_enthalpy)), name
        # And recomputed independently from the outlet at the outlet temperature.
        h_out = enthalpy_flow(st.outlet_flow, st.temperature)
        assert np.all(np.abs(h_out - st.inlet_enthalpy) <= 1e-6 * np.abs(st.inlet_enthalpy))
    sec_st = r.stage("secondary_reformer")
    if ratio > 0:
        # Burning part of the gas heats it above the primary outlet.
        assert np.all(sec_st.temperature > T)


def _cantera_hp(moles: np.ndarray, H: float, P: float):
    """Cantera's gas-phase HP equilibrium of `moles` [mol] with enthalpy H [J]."""
    g = cantera_ref.gas()
    total = moles.sum()
    g.TPX = 1200.0, P, moles / total
    g.HP = H / total * 1000.0 / g.mean_molecular_weight, P  # J/mol -> J/kg of mixture
    g.equilibrate("HP", solver="vcs", rtol=1e-12, max_steps=10000)
    return g.T, g.X


@pytest.mark.parametrize("oxidant, ratio, T_primary, sc_ratio",
                         [("air", 0.22, 1073.15, 3.0), ("oxygen", 0.55, 1173.15, 1.8),
                          ("oxygen", 0.0, 1123.15, 2.5)])
def test_secondary_reformer_matches_cantera_hp_equilibrium(full, oxidant, ratio, T_primary,
                                                           sc_ratio):
    """The secondary reformer's inlet enthalpy equals Cantera's (1e-10), and its outlet
    temperature and mole fractions equal Cantera's HP equilibrium (1e-4 K, 1e-8) with no
    graphite."""
    sec = SecondaryReformer(oxidant, ratio, 773.15, 0.0)
    train = Train(secondary_reformer=sec)
    feed = full.feed.inlet_flows(steam_to_carbon=sc_ratio)[None, :]
    P = 30e5
    r = train_balance(train, feed, T_primary, P, 813.15, 0.0)
    st = r.stage("secondary_reformer")
    gas_in, ox = st.inlet_flow[0] - st.added_flow[0], st.added_flow[0]
    # Inlet enthalpy from Cantera: the primary's gas at its outlet T plus the oxidant at
    # its own temperature.
    H = (cantera_ref.enthalpy_flow(gas_in, T_primary, P)
         + (cantera_ref.enthalpy_flow(ox, 773.15, P) if ox.sum() > 0 else 0.0))
    assert H == pytest.approx(st.inlet_enthalpy[0], rel=1e-10)
    T_ct, X_ct = _cantera_hp(st.inlet_flow[0], H, P)
    assert st.carbon_deposit[0] == 0.0
    assert st.temperature[0] == pytest.approx(T_ct, abs=1e-4)
    x = st.outlet_flow[0] / st.outlet_flow[0].sum()
    np.testing.assert_allclose(x, X_ct, atol=1e-8)


@pytest.mark.parametrize("T_in, sc_ratio", [(763.15, 3.0), (723.15, 2.0), (823.15, 4.5)])
def test_pre_reformer_matches_cantera_hp_equilibrium(full, T_in, sc_ratio):
    """The pre-reformer's outlet temperature and mole fractions equal Cantera's HP equilibrium
    (1e-4 K, 1e-8), no graphite, and C2H6 and C3H8 fall below 1e-3 of their inlet fractions."""
    train = Train(pre_reformer=PreReformer(T_in))
    feed = full.feed.inlet_flows(steam_to_carbon=sc_ratio)[None, :]
    P = 25e5
    r = train_balance(train, feed, 1123.15, P, 813.15, 0.0)
    st = r.stage("pre_reformer")
    assert st.carbon_deposit[0] == 0.0
    H = cantera_ref.enthalpy_flow(feed[0], T_in, P)
    T_ct, X_ct = _cantera_hp(feed[0].copy(), H, P)
    assert st.temperature[0] == pytest.approx(T_ct, abs=1e-4)
    x = st.outlet_flow[0] / st.outlet_flow[0].sum()
    np.testing.assert_allclose(x, X_ct, atol=1e-8)
    # Higher hydrocarbons are all but gone at pre-reformer equilibrium (common practice, no
    # source: pre-reformers are installed to remove them).
    x_in = feed[0] / feed[0].sum()
    assert x[IX["C2H6"]] < 1e-3 * x_in[IX["C2H6"]] and x[IX["C3H8"]] < 1e-3 * x_in[IX["C3H8"]]


# ------------------------------------------------------------------------------ train totals

def test_train_energy_and_element_balances_close(full):
    """Over the whole train elements close (1e-9), the product enthalpy minus feed and oxidant
    equals every heat added or removed (1e-7 of the feed enthalpy), heat supplied and H2 product
    follow their definitions, and shift adds H2."""
    feed, T, P = _grid_points(full, 25, seed=11)
    r = train_balance(full.train, feed, T, P, full.feed.inlet_temperature, full.approach)
    assert r.converged.all()
    A = formula_matrix()
    ox = r.stage("secondary_reformer").added_flow
    b_in = (feed + ox) @ A
    b_out = r.product_flow @ A
    b_out[:, 0] += r.carbon_deposit
    np.testing.assert_allclose(b_out, b_in, rtol=1e-9, atol=1e-12)
    # First law over the whole train: product enthalpy minus what came in (feed at the
    # pre-reformer inlet, oxidant at its temperature) equals every heat added or removed.
    pre = full.train.pre_reformer.inlet_temperature
    sec = full.train.secondary_reformer.oxidant_temperature
    h_in = enthalpy_flow(feed, np.full(len(T), pre)) + enthalpy_flow(ox, np.full(len(T), sec))
    h_out = enthalpy_flow(r.product_flow, r.product_temperature)
    heat = sum(s.heat_before + s.duty for s in r.stages)
    np.testing.assert_allclose(h_out - h_in, heat, rtol=0, atol=1e-7 * np.abs(h_in).max())
    np.testing.assert_allclose(r.heat_supplied,
                               r.primary.duty + r.stage("primary_reformer").heat_before)
    assert np.all(r.heat_removed < 0)
    hc = feed @ np.array([1.0 if s == "CH4" else 2.0 if s == "C2H6" else 3.0 if s == "C3H8"
                          else 0.0 for s in GAS_SPECIES])
    np.testing.assert_allclose(r.h2_product, r.product_flow[:, IX["H2"]] / hc)
    # Shift turns CO into H2: the product holds more H2 than the reformers made.
    assert np.all(r.h2_product > r.stage("secondary_reformer").outlet_flow[:, IX["H2"]] / hc)


def test_pre_reformer_leaves_the_primary_equilibrium_unchanged(full):
    """Same elements in, same equilibrium out: only the duty splits (reheat + primary)."""
    feed, T, P = _grid_points(full, 20, seed=5)
    alone = reformer_balance(feed, T, P, full.feed.inlet_temperature, full.approach)
    train = Train(pre_reformer=full.train.pre_reformer)
    r = train_balance(train, feed, T, P, full.feed.inlet_temperature, full.approach)
    assert np.all(r.stage("pre_reformer").carbon_deposit == 0)
    np.testing.assert_allclose(r.primary.outlet_flow, alone.outlet_flow, rtol=1e-8, atol=1e-9)
    np.testing.assert_allclose(r.primary.h2_yield, alone.h2_yield, rtol=1e-8)
    np.testing.assert_allclose(r.primary.methane_conversion, alone.methane_conversion,
                               rtol=1e-8)
    # The feed's enthalpy at the primary inlet is the same state path-independently: the
    # pre-reformer (adiabatic) plus reheat plus primary equals the primary alone, plus the
    # feed's heat-up from the pre-reformer inlet to the primary inlet.
    heat_up = (enthalpy_flow(feed, np.full(len(T), full.feed.inlet_temperature))
               - enthalpy_flow(feed, np.full(len(T), train.pre_reformer.inlet_temperature)))
    np.testing.assert_allclose(r.heat_supplied, alone.duty + heat_up, rtol=1e-7)


def test_empty_train_is_the_primary_reformer(full):
    """With no stages the train is the primary alone: H2 product, heat supplied and slip equal
    the primary's exactly, and no heat is removed."""
    feed, T, P = _grid_points(full, 10)
    alone = reformer_balance(feed, T, P, full.feed.inlet_temperature, full.approach)
    r = train_balance(Train(), feed, T, P, full.feed.inlet_temperature, full.approach)
    assert [s.name for s in r.stages] == ["primary_reformer"]
    np.testing.assert_array_equal(r.h2_product, alone.h2_yield)
    np.testing.assert_array_equal(r.heat_supplied, alone.duty)
    np.testing.assert_array_equal(r.methane_slip_dry, alone.methane_slip_dry)
    np.testing.assert_array_equal(r.heat_removed, 0.0)


def test_air_composition():
    """Air sums to 1, and its O2 and N2 flows follow O2/C and the N2/O2 ratio of dry air."""
    # Dry air, U.S. Standard Atmosphere 1976 (recalled from memory): O2 20.946 %,
    # Ar 0.934 %; the rest counted as N2.
    air = OXIDANTS["air"]
    assert sum(air.values()) == pytest.approx(1.0, abs=1e-12)
    ox = SecondaryReformer("air", 0.3, 800.0).oxidant_flows(10.0)
    assert ox[IX["O2"]] == pytest.approx(3.0)
    assert ox[IX["N2"]] / ox[IX["O2"]] == pytest.approx(0.78120 / 0.20946)


# ------------------------------------------------------------------------------ scenario keys

def test_train_round_trips_through_toml(full):
    """A scenario with the full train writes and reads back equal, with the five stages in order;
    the demo has no train."""
    again = parse_scenario(full.to_toml())
    assert again == full
    assert again.train.stages() == ["pre_reformer", "primary_reformer", "secondary_reformer",
                                    "high_temperature_shift", "low_temperature_shift"]
    assert thermo.load_scenario().train.empty


@pytest.mark.parametrize("edit, field", [
    (('oxidant = "air"', 'oxidant = "enriched"'), "train.secondary_reformer.oxidant"),
    (("oxygen_to_carbon = 0.25", "oxygen_to_carbon = 0.9"),
     "train.secondary_reformer.oxygen_to_carbon"),
    (('temperature = "360 degC"', 'temperature = "700 degC"'),
     "train.high_temperature_shift.temperature"),
    (('approach = "8 K"', 'approach = "-3 K"'), "train.low_temperature_shift.approach"),
    (('inlet_temperature = "490 degC"', 'inlet_temperature = "2000 degC"'),
     "train.pre_reformer.inlet_temperature"),
    (("[train.low_temperature_shift]", "[train.medium_shift]"), "train.medium_shift"),
    (('oxidant_temperature = "550 degC"', 'oxidant_temp = "550 degC"'),
     "train.secondary_reformer.oxidant_temp"),
])
def test_bad_train_keys_name_the_field(edit, field):
    """Each bad train key or value is refused with an InputError naming that field."""
    text = thermo.load_scenario().text + FULL_TRAIN.replace(*edit)
    with pytest.raises(InputError) as err:
        parse_scenario(text)
    assert err.value.field == field


def test_shift_stage_dataclass_defaults():
    """A shift stage's approach defaults to 0 K."""
    assert ShiftStage(500.0).approach == 0.0


# ------------------------------------------------------------------------------ train sweep

@pytest.fixture(scope="module")
def train_ds(full):
    win = full.with_window(temperature=("750 degC", "950 degC", 5),
                           pressure=("15 bar", "35 bar", 3), steam_to_carbon=(2.0, 4.5, 4))
    return win, thermo.sweep(win)


def test_train_grid_equals_point(train_ds):
    """Grid values equal point() at the same coordinates to 1e-9 relative (Dataset contract)."""
    win, ds = train_ds
    assert ds.attrs["train"] == ", ".join(win.train.stages())
    rng = np.random.default_rng(7)
    shape = ds["h2_product"].shape
    for flat in rng.choice(int(np.prod(shape)), size=6, replace=False):
        idx = dict(zip(ds["h2_product"].dims, np.unravel_index(int(flat), shape), strict=True))
        g = ds.isel(idx)
        pt = thermo.point(win, temperature=f"{float(g.temperature)!r} K",
                          pressure=f"{float(g.pressure)!r} Pa",
                          steam_to_carbon=float(g.steam_to_carbon))
        d = pt.to_dict()["train"]
        for var, got in (("h2_product", d["h2_product"]), ("train_duty", d["duty_W"]),
                         ("train_heat_removed", d["heat_removed_W"]),
                         ("train_methane_slip_dry", d["methane_slip_dry"]),
                         ("secondary_temperature", d["stages"][2]["temperature_K"]),
                         ("prereformer_temperature", d["stages"][0]["temperature_K"])):
            np.testing.assert_allclose(float(g[var]), got, rtol=1e-9, err_msg=var)
        np.testing.assert_allclose(g["product_flow"].values,
                                   list(d["product"]["flow_mol_per_s"].values()), rtol=1e-9)


def test_limits_apply_to_the_train(train_ds):
    """With a train, feasible equals the limits checked on the train's figures (slip after the
    last reformer, graphite in any stage, H2 product) and the primary's duty; the secondary
    lowers the slip; the train variables carry units and names."""
    win, ds = train_ds
    lim = win.limits
    want = (ds["converged"] & (ds["train_methane_slip_dry"] <= lim.max_methane_slip_dry)
            & (ds["train_carbon_deposit"] <= 0) & (ds["h2_product"] >= lim.min_h2_yield)
            & (ds["duty"] <= lim.max_duty))
    assert (ds["feasible"] == want).all()
    # The secondary reformer burns down the primary's methane: slip after it is lower.
    assert (ds["train_methane_slip_dry"] < ds["methane_slip_dry"]).all()
    for var in ("h2_product", "train_duty", "product_flow", "secondary_temperature"):
        assert ds[var].attrs["units"] and ds[var].attrs["long_name"]


def test_no_train_gives_the_primary_figures():
    """Without a train the train variables equal the primary's exactly and no secondary
    temperature is present."""
    sc = thermo.load_scenario().with_window(temperature=("800 degC", "900 degC", 3),
                                            pressure=("20 bar", "30 bar", 2),
                                            steam_to_carbon=(2.5, 3.5, 2))
    ds = thermo.sweep(sc)
    for a, b in (("h2_product", "h2_yield"), ("train_duty", "duty"),
                 ("train_methane_slip_dry", "methane_slip_dry"),
                 ("train_carbon_deposit", "carbon_deposit")):
        np.testing.assert_array_equal(ds[a].values, ds[b].values)
    np.testing.assert_array_equal(ds["product_flow"].values, ds["outlet_flow"].values)
    assert "secondary_temperature" not in ds


# ----------------------------------------------------------------- edges of the input domain

def test_oxygen_rich_stages_find_their_outlet_up_to_the_data_limit(full):
    """O2 co-fed to the pre-reformer (O2/C up to 0.7, the allowed maximum) and an
    oxygen-blown secondary at S/C 0: hot stages, still closed energy balances."""
    feed = np.stack([full.feed.inlet_flows(steam_to_carbon=3.3, oxygen_to_carbon=o)
                     for o in (0.6, 0.7)])
    r = train_balance(Train(pre_reformer=PreReformer(763.15)), feed, 1100.0, 25e5, 813.15)
    st = r.stage("pre_reformer")
    assert st.converged.all() and np.all(st.temperature > 1100.0)
    assert np.all(np.abs(st.duty) <= 1e-6 * np.abs(st.inlet_enthalpy))
    dry = full.feed.inlet_flows(steam_to_carbon=0.0)[None, :]
    train = Train(secondary_reformer=SecondaryReformer("oxygen", 0.7, 823.15))
    r = train_balance(train, dry, 1073.15, 20e5, 813.15)
    st = r.stage("secondary_reformer")
    assert st.converged.all(), st.temperature
    assert np.abs(st.duty[0]) <= 1e-6 * abs(st.inlet_enthalpy[0])


def test_heat_supplied_and_removed_keep_their_signs(full):
    """Pre-reformed gas hotter than the primary inlet (O2 in the feed) is cooled, not
    'reheated' by a negative amount; a shift stage hotter than the gas reaching it is
    heated. Heat supplied stays >= 0, heat removed <= 0, and their sum is the net heat."""
    feed = full.feed.inlet_flows(steam_to_carbon=3.0, oxygen_to_carbon=0.5)[None, :]
    train = Train(pre_reformer=PreReformer(763.15),
                  low_temperature_shift=ShiftStage(623.15, 0.0))
    r = train_balance(train, feed, 600.0, 25e5, 813.15)
    assert r.converged.all()
    assert r.stage("primary_reformer").heat_before[0] < 0  # cooled to the primary inlet
    assert r.stage("low_temperature_shift").heat_before[0] > 0  # heated to 350 degC
    assert r.heat_supplied[0] >= 0 and r.heat_removed[0] <= 0
    net = sum(s.heat_before + s.duty for s in r.stages)
    np.testing.assert_allclose(r.heat_supplied + r.heat_removed, net, rtol=1e-12)


def test_a_failed_stage_leaves_no_made_up_numbers_downstream(full, monkeypatch):
    """Where an adiabatic stage finds no outlet, that stage, every stage after it and the
    totals are NaN and the point is flagged, never computed from an invented gas."""
    import thermo.train as train_module

    real = train_module.adiabatic_equilibrium
    failing = slice(0, 1)  # the points (or, in the pre-reformer, the unique rows) that fail

    def fails_at_first_point(*args, **kwargs):
        T, eq, ok = real(*args, **kwargs)
        ok = ok.copy()
        ok[failing] = False
        return np.where(ok, T, np.nan), eq, ok

    monkeypatch.setattr(train_module, "adiabatic_equilibrium", fails_at_first_point)
    feed, T, P = _grid_points(full, 4)
    train = Train(secondary_reformer=full.train.secondary_reformer,
                  high_temperature_shift=full.train.high_temperature_shift)
    r = train_balance(train, feed, T, P, full.feed.inlet_temperature, full.approach)
    assert not r.converged[0] and r.converged[1:].all()
    for name in ("secondary_reformer", "high_temperature_shift"):
        st = r.stage(name)
        assert not st.converged[0]
        assert np.isnan(st.outlet_flow[0]).all() and np.isnan(st.duty[0])
        assert np.isfinite(st.outlet_flow[1:]).all()
    assert r.stage("primary_reformer").converged[0]  # upstream of the failure: kept
    for total in (r.h2_product, r.heat_supplied, r.heat_removed, r.methane_slip_dry,
                  r.carbon_deposit):
        assert np.isnan(total[0]) and np.isfinite(total[1:]).all()
    # A failed pre-reformer: the primary is still solved (on the fresh feed) but flagged.
    failing = slice(None)
    r = train_balance(Train(pre_reformer=full.train.pre_reformer), feed, T, P,
                      full.feed.inlet_temperature, full.approach)
    assert not r.stage("primary_reformer").converged[0]
    assert np.isnan(r.stage("primary_reformer").outlet_flow[0]).all()
    assert np.isfinite(r.primary.outlet_flow).all()
    pt = thermo.point(full)  # the API's flag is the train's
    assert pt.converged is bool(pt.train.converged[0]) is pt.to_dict()["converged"]


def test_low_temperature_shift_must_be_below_the_high_temperature_one():
    """An LT shift hotter than the HT shift is refused naming its temperature field and the HT
    shift's temperature."""
    text = thermo.load_scenario().text + FULL_TRAIN.replace('temperature = "210 degC"',
                                                            'temperature = "400 degC"')
    with pytest.raises(InputError) as err:
        parse_scenario(text)
    assert err.value.field == "train.low_temperature_shift.temperature"
    assert "below the high-temperature shift's (360 degC)" in str(err.value)
