"""The hydrogen plant around the reformer (thermo.plant): heating values, furnace, steam,
plausibility, the [plant] table, the Dataset and the point JSON.

Sources are named beside each check: NIST-JANAF (JANAF1998) and Pittam & Pilcher
(PITTAM-PILCHER1972) in tests/references/heating_values.toml and janaf_formation.toml, the
IAPWS-IF97 verification tables in tests/references/iapws_if97.toml, Cantera (tests only) for
the flue gas enthalpy. Ranges from memory or common practice say so.
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pytest

import thermo
from tests.reftools import assert_matches_reference, load_extra, load_refs, ref_id
from thermo.balances import enthalpy_flow
from thermo.constants import T_REF
from thermo.errors import InputError
from thermo.plant import (
    GJ_PER_1000NM3_FROM_J_PER_MOL,
    composition_vector,
    enthalpies_298,
    lower_heating_values,
    plant_balance,
    steam_conditions,
)
from thermo.scenario import parse_scenario
from thermo.species import GAS_SPECIES
from thermo.steam import enthalpy, region, saturation_temperature
from thermo.sweep import PLANT_VARIABLES

ROOT = Path(__file__).resolve().parents[2]
PLANT_SCENARIO = ROOT / "scenarios" / "hydrogen-plant.toml"
IDX = {s: i for i, s in enumerate(GAS_SPECIES)}


@pytest.fixture(scope="module")
def scenario():
    return thermo.load_scenario(PLANT_SCENARIO)


@pytest.fixture(scope="module")
def small(scenario):
    return scenario.with_window(temperature=("780 degC", "920 degC", 4),
                                pressure=("15 bar", "35 bar", 3), steam_to_carbon=(2.5, 4.5, 3))


@pytest.fixture(scope="module")
def small_ds(small):
    return thermo.sweep(small)


# ------------------------------------------------------------------------------ heating values


def _janaf_dfH(subject: str) -> float:
    return load_refs("janaf_formation.toml", subject=subject, quantity="delta_f_H")[0].value


@pytest.mark.parametrize("ref", load_refs("heating_values.toml", quantity="LHV"), ids=ref_id)
def test_lhv_matches_janaf(ref):
    # CH4 802.3, H2 241.8, CO 283.0 kJ/mol from NIST-JANAF formation enthalpies (Chase 1998).
    assert_matches_reference(lower_heating_values()[IDX[ref.subject]] / 1e3, ref)


@pytest.mark.parametrize("fuel, products", [("CH4", {"CO2": 1, "H2O": 2}),
                                            ("CO", {"CO2": 1})])
def test_lhv_from_janaf_formation_enthalpies(fuel, products):
    # NIST-JANAF (Chase 1998) formation enthalpies at 298.15 K, janaf_formation.toml.
    expected = _janaf_dfH(fuel) - sum(k * _janaf_dfH(s) for s, k in products.items())
    tol = 0.5 if fuel == "CH4" else 0.05  # CH4: GRI30 dfH -74.60 vs JANAF -74.873 kJ/mol
    assert lower_heating_values()[IDX[fuel]] / 1e3 == pytest.approx(expected, abs=tol)


def test_lhv_of_h2_is_minus_the_formation_enthalpy_of_steam():
    # NIST-JANAF (Chase 1998), H2O(g) table: dfH(298.15 K) = -241.826 kJ/mol.
    assert lower_heating_values()[IDX["H2"]] / 1e3 == pytest.approx(-_janaf_dfH("H2O"), abs=0.02)


@pytest.mark.parametrize("ref", load_refs("heating_values.toml", quantity="delta_c_H"),
                         ids=ref_id)
def test_lhv_of_ethane_and_propane_from_heats_of_combustion(ref):
    # Pittam & Pilcher (1972) heats of combustion to liquid water (from memory), turned to LHV
    # with the vaporisation of the water formed from NIST-JANAF dfH of H2O(l) and H2O(g).
    h2o_l = load_refs("heating_values.toml", subject="H2O(l)")[0].value
    vaporisation = _janaf_dfH("H2O") - h2o_l  # +44.004 kJ/mol
    water = {"C2H6": 3, "C3H8": 4}[ref.subject]
    lhv_model = lower_heating_values()[IDX[ref.subject]] / 1e3
    # Compare as a heat of combustion to liquid water (the published quantity).
    assert_matches_reference(-(lhv_model + water * vaporisation), ref)


def test_inerts_have_no_heating_value():
    lhv = lower_heating_values()
    for s in ("H2O", "CO2", "O2", "N2", "Ar"):
        assert abs(lhv[IDX[s]]) < 1e-6, s


# ------------------------------------------------------------------------------------ furnace


def _closure(res, sc, k=0):
    """Radiant box energy balance terms at point k, absolute enthalpies [W]."""
    pl = sc.plant
    ng = composition_vector(sc.feed.composition)
    fuel = res.tail_gas[k] + res.trim_fuel_flow[k] * ng
    h = lambda n, T: float(enthalpy_flow(n[None, :], np.array([T]))[0])  # noqa: E731
    left = h(fuel, pl.supply_temperature) + h(res.air[k], pl.air_preheat_temperature)
    right = (res.radiant_duty[k] + res.tail_gas_excess[k]
             + h(res.flue_gas[k], pl.bridgewall_temperature))
    return fuel, left, right


def test_furnace_energy_balance_closes(scenario):
    pt = thermo.point(scenario)
    res = pt.plant
    fuel, left, right = _closure(res, scenario)
    assert res.trim_fuel_flow[0] > 0 and res.tail_gas_excess[0] == 0
    assert abs(left - right) <= 1e-9 * res.fired_duty[0]
    # The same balance in LHV form: fuel LHV + sensible heat of fuel and air above 298.15 K =
    # radiant duty + sensible heat of the flue gas (water as vapour) above 298.15 K.
    h298 = enthalpies_298()
    pl = scenario.plant

    def sens(n, T):
        return float(enthalpy_flow(n[None, :], np.array([T]))[0] - n @ h298)

    lhv_side = (fuel @ lower_heating_values() + sens(fuel, pl.supply_temperature)
                + sens(res.air[0], pl.air_preheat_temperature))
    assert fuel @ lower_heating_values() == pytest.approx(res.fired_duty[0], rel=1e-12)
    flue_side = res.radiant_duty[0] + sens(res.flue_gas[0], pl.bridgewall_temperature)
    assert abs(lhv_side - flue_side) <= 1e-9 * res.fired_duty[0]
    assert res.radiant_efficiency[0] == pytest.approx(res.radiant_duty[0] / res.fired_duty[0])


def test_furnace_atoms_and_excess_air(scenario):
    res = thermo.point(scenario).plant
    from thermo.species import formula_matrix

    ng = composition_vector(scenario.feed.composition)
    fuel = res.tail_gas[0] + res.trim_fuel_flow[0] * ng
    A = formula_matrix()
    np.testing.assert_allclose(res.flue_gas[0] @ A, (fuel + res.air[0]) @ A, rtol=1e-12,
                               atol=1e-9)
    from thermo.plant import oxygen_demand

    stoich = fuel @ oxygen_demand()
    assert res.flue_gas[0, IDX["O2"]] == pytest.approx(scenario.plant.excess_air * stoich)
    for s in ("CH4", "C2H6", "C3H8", "H2", "CO"):
        assert res.flue_gas[0, IDX[s]] == 0.0


def test_tail_gas_beyond_the_need_is_flagged(scenario):
    # Half the H2 to the furnace: the tail gas alone releases more than the tubes absorb.
    text = scenario.text.replace("h2_recovery = 0.88", "h2_recovery = 0.5")
    sc = parse_scenario(text)
    pt = thermo.point(sc)
    res = pt.plant
    assert res.trim_fuel_flow[0] == 0.0 and res.trim_fuel[0] == 0.0
    assert res.tail_gas_excess[0] > 1e6
    _, left, right = _closure(res, sc)
    assert abs(left - right) <= 1e-9 * res.fired_duty[0]
    d = pt.to_dict()["plant"]
    assert d["tail_gas_exceeds_need"] is True and d["tail_gas_excess_W"] > 0


def test_flue_gas_enthalpy_matches_cantera(scenario):
    from tests.thermo.cantera_ref import CT_NAME, gas

    g = gas()
    res = thermo.point(scenario).plant
    flue = res.flue_gas[0]
    T = scenario.plant.bridgewall_temperature
    g.TPX = T, 101325.0, {CT_NAME[s]: flue[IDX[s]] for s in GAS_SPECIES if flue[IDX[s]] > 0}
    # Cantera's ideal-gas molar enthalpy [J/kmol] of the same mixture (GRI-Mech 3.0 data).
    cantera_W = g.enthalpy_mole / 1000.0 * flue.sum()
    ours = float(enthalpy_flow(flue[None, :], np.array([T]))[0])
    assert ours == pytest.approx(cantera_W, rel=1e-9)


# -------------------------------------------------------------------------------------- steam


STATES = load_extra("iapws_if97.toml", "state")


@pytest.mark.parametrize("ref", STATES, ids=lambda r: r["where"].split(",")[0] + " "
                         + r["where"].split(",")[2])
def test_steam_matches_iapws_if97_verification_values(ref):
    # IAPWS-IF97 release, computer-program verification tables (named in each record).
    if ref["quantity"] == "h":
        assert region(ref["P_Pa"], ref["T_K"]) == ref["region"]
        got = enthalpy(ref["P_Pa"], ref["T_K"]) / 1e3
    else:
        got = float(saturation_temperature(ref["P_Pa"]))
    assert got == pytest.approx(ref["value"], abs=ref["tol_abs"]), ref["where"]


def test_scenario_steam_states_lie_in_the_verified_regions(scenario):
    # The header steam is IF97 region 2 and the feed water region 1: the regions whose
    # verification values the test above checks.
    pl = scenario.plant
    assert region(pl.steam_pressure, pl.steam_temperature) == 2
    assert region(pl.steam_pressure, pl.feed_water_temperature) == 1
    st = steam_conditions(pl)
    assert st.rise == pytest.approx(st.steam_enthalpy - st.feed_water_enthalpy)
    assert st.value == pytest.approx(st.rise / pl.steam_credit_efficiency)


def test_saturation_temperature_of_arrays_follows_the_library():
    # Interpolated in ln P between library values: within 3e-3 K of the library itself.
    P = np.geomspace(2e3, 2e7, 5000)
    got = saturation_temperature(P)
    exact = np.array([float(saturation_temperature(float(p))) for p in P[::250]])
    assert np.max(np.abs(got[::250] - exact)) < 3e-3
    assert np.isnan(saturation_temperature(np.array([np.nan, 1e6]))[0])


def test_steam_balance(scenario):
    res = thermo.point(scenario).plant
    st = steam_conditions(scenario.plant)
    raised = (res.flue_steam_heat[0] + res.process_gas_heat[0]) / st.rise
    assert res.steam_raised[0] == pytest.approx(raised)
    n_in = thermo.point(scenario).train.feed_flow[0]
    assert res.process_steam[0] == pytest.approx(n_in[IDX["H2O"]] * 18.015e-3, rel=1e-4)
    assert res.steam_export[0] == pytest.approx(res.steam_raised[0] - res.process_steam[0])
    # Convection section: flue heat bridgewall -> stack split between preheats and steam.
    assert res.convection_heat[0] == pytest.approx(
        res.air_preheat[0] + res.feed_preheat[0] + res.reheat[0] + res.flue_steam_heat[0])


# ------------------------------------------------------------------------------- plausibility


def test_plausibility_natural_gas_hydrogen_plant(scenario):
    # A natural-gas hydrogen plant at about 880 degC, 25 bar and S/C 3 with high-temperature
    # shift and pressure-swing purification: net 12.5-14.5 GJ (LHV) per 1000 Nm3 H2 and
    # 0.42-0.48 Nm3 natural gas per Nm3 H2 (both from memory); radiant efficiency 45-55 %
    # (common practice, no source).
    assert scenario.temperature == pytest.approx(1153.15)
    assert scenario.pressure == pytest.approx(25e5)
    assert scenario.feed.steam_to_carbon == 3.0
    assert scenario.train.high_temperature_shift is not None
    res = thermo.point(scenario).plant
    gj = res.specific_energy[0] * GJ_PER_1000NM3_FROM_J_PER_MOL
    assert 12.5 <= gj <= 14.5, gj
    assert 0.42 <= res.natural_gas_per_h2[0] <= 0.48
    assert 0.45 <= res.radiant_efficiency[0] <= 0.55
    assert res.steam_export[0] > 0
    assert res.process_gas_dew_point[0] < scenario.plant.process_gas_cooled_temperature


def test_more_steam_costs_steam_export(scenario):
    # Direction check: at a higher S/C the process takes more steam, so less is exported.
    lo = thermo.point(scenario, steam_to_carbon=2.5).plant
    hi = thermo.point(scenario, steam_to_carbon=4.5).plant
    assert hi.process_steam[0] > lo.process_steam[0]
    assert hi.steam_export[0] < lo.steam_export[0]


# ---------------------------------------------------------------------------- the [plant] table


def test_plant_table_defaults_and_round_trip(scenario):
    base = thermo.load_scenario()
    assert base.plant is None
    sc = parse_scenario(base.to_toml() + "\n[plant]\n")
    assert sc.plant == thermo.scenario.Plant()
    again = parse_scenario(scenario.to_toml())
    assert again == scenario and again.plant == scenario.plant
    assert again.limits.max_fired_duty == pytest.approx(135e6)


@pytest.mark.parametrize("line, field, shown, allowed", [
    ("h2_recovery = 1.5", "plant.h2_recovery", "1.5", "from 0.5 to 1"),
    ('excess_air = "150 %"', "plant.excess_air", "'150 %'", "from 0 to 1"),
    ('bridgewall_temperature = "2000 degC"', "plant.bridgewall_temperature", "'2000 degC'",
     "between 726.85 and 1426.85 degC"),
    ('steam_pressure = "500 bar"', "plant.steam_pressure", "'500 bar'",
     "between 2 and 160 bar"),
    ('stack_temperature = "40 furlong"', "plant.stack_temperature", "'40 furlong'",
     "temperature"),
    ('steam_temperature = "200 degC"', "plant.steam_temperature", "'200 degC'",
     "above the saturation temperature 253.27 degC"),
    ('feed_water_temperature = "300 degC"', "plant.feed_water_temperature", "'300 degC'",
     "below the saturation temperature"),
    ("steam_credit_efficiency = 1.2", "plant.steam_credit_efficiency", "1.2",
     "from 0.5 to 1"),
    ("bridge_wall_temperature = 1300", "plant.bridge_wall_temperature", "1300",
     "did you mean 'bridgewall_temperature'"),
])
def test_bad_plant_input_is_named(line, field, shown, allowed):
    text = thermo.load_scenario().to_toml() + f"\n[plant]\n{line}\n"
    with pytest.raises(InputError) as err:
        parse_scenario(text)
    msg = str(err.value)
    assert err.value.field == field
    assert msg.startswith(f"{field} = {shown} is not allowed"), msg
    assert allowed in msg, msg


def test_fired_duty_limit_needs_a_plant():
    text = thermo.load_scenario().to_toml().replace("[limits]",
                                                    '[limits]\nmax_fired_duty = "100 MW"')
    with pytest.raises(InputError, match=r"limits.max_fired_duty = '100 MW' .*\[plant\]"):
        parse_scenario(text)


# --------------------------------------------------------------------------- Dataset and JSON


def test_dataset_gains_the_plant_variables(small, small_ds):
    ds = small_ds
    for name, (_, units, _) in PLANT_VARIABLES.items():
        assert name in ds, name
        assert ds[name].attrs["units"] == units and ds[name].attrs["long_name"]
    assert ds["plant_bridgewall_temperature"].ndim == 0
    assert ds["specific_energy"].dims == ("temperature", "pressure", "steam_to_carbon")
    plain = thermo.sweep(thermo.load_scenario().with_window(
        temperature=("800 degC", "900 degC", 2), pressure=("20 bar", "30 bar", 2),
        steam_to_carbon=(3.0, 4.0, 2)))
    for name in PLANT_VARIABLES:
        assert name not in plain, name


def test_grid_equals_point(small, small_ds):
    ds = small_ds
    for T, P, s in [(1053.15, 15e5, 2.5), (1193.15, 35e5, 4.5), (1146.4833333333333, 25e5, 3.5)]:
        node = ds.sel(temperature=T, pressure=P, steam_to_carbon=s, method="nearest")
        pt = thermo.point(small, temperature=f"{float(node.temperature)!r} K",
                          pressure=f"{float(node.pressure)!r} Pa",
                          steam_to_carbon=float(node.steam_to_carbon))
        for name, (attr, _, _) in PLANT_VARIABLES.items():
            want = float(getattr(pt.plant, attr)[0])
            assert float(node[name]) == pytest.approx(want, rel=1e-9, abs=1e-12), name


def test_fired_duty_limit_joins_the_feasible_window(small, small_ds):
    ds = small_ds
    limit = small.limits.max_fired_duty
    over = ds["plant_fired_duty"] > limit
    assert bool(over.any()) and not bool(over.all())
    assert not bool((ds["feasible"] & over).any())
    import dataclasses

    loose = dataclasses.replace(small.limits, max_fired_duty=None)
    assert int(thermo.sweep.__globals__["feasible_mask"](ds, loose).sum()) > int(
        ds["feasible"].sum())


CONTRACT_KEYS = ("h2_product_mol_per_s", "tail_gas_lhv_W", "fired_duty_W", "trim_fuel_W",
                 "radiant_efficiency", "bridgewall_temperature_K", "steam_raised_kg_per_s",
                 "process_steam_kg_per_s", "steam_export_kg_per_s",
                 "specific_energy_J_per_mol_h2", "natural_gas_per_h2")


def test_point_json_plant_contract(scenario):
    d = thermo.point(scenario).to_dict()
    text = json.dumps(d, allow_nan=False)
    plant = json.loads(text)["plant"]
    for k in CONTRACT_KEYS:
        assert isinstance(plant[k], float), k
    res = thermo.point(scenario).plant
    assert plant["fired_duty_W"] == res.fired_duty[0]
    assert plant["natural_gas_per_h2"] == pytest.approx(
        (scenario.feed.flow + res.trim_fuel_flow[0]) / res.h2_product[0])
    assert plant["h2_product_mol_per_s"] == pytest.approx(
        0.88 * d["train"]["product"]["flow_mol_per_s"]["H2"])
    assert "plant" not in thermo.point().to_dict()


def test_supply_temperature_is_the_reference_for_preheats(scenario):
    # The feed preheat counts gas from the supply temperature and steam from the header.
    pt = thermo.point(scenario)
    pl = scenario.plant
    n = pt.train.feed_flow[0]
    steam = np.zeros_like(n)
    steam[IDX["H2O"]] = n[IDX["H2O"]]
    h = lambda x, T: float(enthalpy_flow(x[None, :], np.array([T]))[0])  # noqa: E731
    want = (h(n, scenario.feed.inlet_temperature) - h(n - steam, pl.supply_temperature)
            - h(steam, pl.steam_temperature))
    assert pt.plant.feed_preheat[0] == pytest.approx(want, rel=1e-12)
    assert T_REF < pl.supply_temperature


def test_plant_balance_is_vectorised(small):
    # One call over many points equals point-by-point calls.
    from thermo.train import train_balance

    n_in = small.feed.inlet_flows()
    T = np.array([1073.15, 1153.15, 1193.15])
    tr = train_balance(small.train, np.tile(n_in, (3, 1)), T, 25e5, small.feed.inlet_temperature,
                       small.approach)
    many = plant_balance(small.plant, small, tr, 25e5)
    for k in range(3):
        one = thermo.point(small, temperature=f"{float(T[k])!r} K", pressure="25 bar").plant
        assert many.specific_energy[k] == pytest.approx(one.specific_energy[0], rel=1e-9)


def test_failed_points_give_nan_not_an_error(small):
    # A point whose train found no outlet carries NaN flows: its plant numbers are NaN too,
    # and its neighbours keep theirs.
    import dataclasses

    from thermo.train import train_balance

    n_in = np.tile(small.feed.inlet_flows(), (2, 1))
    tr = train_balance(small.train, n_in, 1153.15, 25e5, small.feed.inlet_temperature,
                       small.approach)
    bad = tr.converged.copy()
    bad[1] = False
    product = tr.product_flow.copy()
    product[1] = np.nan
    T_prod = tr.product_temperature.copy().astype(float)
    T_prod[1] = np.nan
    tr = dataclasses.replace(tr, product_flow=product, product_temperature=T_prod,
                             converged=bad)
    res = plant_balance(small.plant, small, tr, 25e5)
    assert np.isfinite(res.specific_energy[0]) and np.isnan(res.specific_energy[1])
