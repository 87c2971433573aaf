"""Mass and energy balances (thermo.balances) and the single-point API (thermo.api).

Sources of the numbers used here:

* standard heats of reaction at 298.15 K: NIST-JANAF (Chase 1998) formation enthalpies from
  tests/references/janaf_formation.toml, and the reaction heats rounded to 0.1 kJ/mol from
  the same tables (reforming +206.2, shift -41.2 kJ/mol);
* directions of change of methane slip: common practice, no source (marked at the test);
* everything else is a closure or consistency property of the definitions (no number).
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest

from tests.reftools import load_refs
from thermo.api import point
from thermo.balances import adiabatic_temperature, enthalpy_flow, reformer_balance
from thermo.constants import R
from thermo.species import GAS_SPECIES, GRAPHITE, h_RT

IDX = {s: i for i, s in enumerate(GAS_SPECIES)}

#: Duty closure relative to the inlet enthalpy flow's magnitude: the adiabatic solve polishes
#: the duty to 1e-9 of its bracket's scale; 1e-6 is the brief's bound.
DUTY_RTOL = 1e-6
#: Element closure: the equilibrium solver closes element balances to 1e-10 relative.
CLOSURE_TOL = 1e-10


def _feed(sc=3.0, oc=0.0, gas=None):
    """Inlet flows [mol/s] of a natural gas (invented composition, not a real analysis)."""
    gas = gas or {"CH4": 0.93, "C2H6": 0.04, "C3H8": 0.01, "CO2": 0.01, "N2": 0.01}
    n = np.zeros(len(GAS_SPECIES))
    for s, v in gas.items():
        n[IDX[s]] = v
    hc = n[IDX["CH4"]] + 2 * n[IDX["C2H6"]] + 3 * n[IDX["C3H8"]]
    n[IDX["H2O"]] += sc * hc
    n[IDX["O2"]] += oc * hc
    return n


# ------------------------------------------------------------------------- energy closure

ADIABATIC_CASES = [
    # (label, inlet flows, P [Pa], T_in [K], approach [K])
    ("pre-reformer S/C 3, 500 degC", _feed(3.0), 30e5, 773.15, 0.0),
    ("autothermal O2/C 0.6, S/C 1.5", _feed(1.5, 0.6), 25e5, 823.15, 0.0),
    ("autothermal with 10 K approach", _feed(1.5, 0.6), 25e5, 823.15, 10.0),
]


@pytest.mark.parametrize("label, n_in, P, T_in, approach", ADIABATIC_CASES,
                         ids=[c[0] for c in ADIABATIC_CASES])
def test_adiabatic_temperature_closes_the_duty(label, n_in, P, T_in, approach):
    """At the adiabatic temperature the duty is zero to DUTY_RTOL of the inlet enthalpy, and the
    duty equals outlet minus inlet enthalpy recomputed here (1e-9)."""
    T = adiabatic_temperature(n_in, P, T_in, approach)
    bal = reformer_balance(n_in[None, :], T, P, T_in, approach)
    assert bal.converged[0]
    assert abs(bal.duty[0]) <= DUTY_RTOL * abs(bal.inlet_enthalpy[0])
    # The duty is outlet minus inlet enthalpy, both recomputed here.
    h_out = enthalpy_flow(bal.outlet_flow, [T])[0] + bal.carbon_deposit[0] * float(
        h_RT(T, GRAPHITE)) * R * T
    h_in = enthalpy_flow(n_in[None, :], [T_in])[0]
    assert bal.duty[0] == pytest.approx(h_out - h_in, abs=1e-9 * abs(h_in))


def test_adiabatic_point_api():
    """point(adiabatic=True) reports adiabatic and a duty of zero to DUTY_RTOL of the inlet
    enthalpy."""
    pt = point(temperature="850 degC", pressure="25 bar", steam_to_carbon=1.5,
               oxygen_to_carbon=0.6, inlet_temperature="550 degC", adiabatic=True)
    d = pt.to_dict()
    assert d["adiabatic"] is True
    assert abs(d["duty_W"]) <= DUTY_RTOL * abs(d["inlet"]["enthalpy_W"])


# ------------------------------------------------------------------------------- approach


def test_approach_composition_at_T_minus_approach_and_enthalpy_at_T():
    """With a 10 K approach the outlet flows equal the equilibrium 10 K lower, the outlet
    enthalpy and duty are taken at T itself, and the duty exceeds that of the lower-T point."""
    with_approach = point(temperature="850 degC", pressure="25 bar", steam_to_carbon=3.0,
                          approach="10 K")
    at_lower_T = point(temperature="840 degC", pressure="25 bar", steam_to_carbon=3.0,
                       approach="0 K")
    a, b = with_approach.balance, at_lower_T.balance
    assert a.equilibrium_temperature[0] == pytest.approx(b.temperature[0], abs=1e-9)
    # Same composition: same element abundances and T_eq, to the last digits.
    np.testing.assert_allclose(a.outlet_flow, b.outlet_flow, rtol=1e-10, atol=1e-12)
    # The outlet enthalpy is taken at T (850 degC), not at T - approach.
    T = a.temperature[0]
    assert T == pytest.approx(1123.15, abs=1e-9)
    h_out_T = enthalpy_flow(a.outlet_flow, [T])[0]
    assert a.outlet_enthalpy[0] == pytest.approx(h_out_T, rel=1e-12)
    assert a.duty[0] == pytest.approx(h_out_T - a.inlet_enthalpy[0], rel=1e-12)
    # Heating the same gas by 10 K takes more heat: the duties differ by that sensible heat.
    assert a.duty[0] > b.duty[0]


@pytest.mark.parametrize("approach", [0.0, 10.0, 25.0])
def test_reported_reforming_approach_equals_the_given_one(approach):
    """The back-computed reforming approach (T minus where K = Q) returns the approach given,
    to 1e-6 K: the composition is the full equilibrium at T - approach, where Q = K exactly up
    to the solver's 1e-10 element balance (~1e-8 K)."""
    pt = point(temperature="870 degC", pressure="20 bar", steam_to_carbon=3.2,
               approach=f"{approach} K")
    r = pt.to_dict()["reactions"]
    assert r["reforming"]["approach_K"] == pytest.approx(approach, abs=1e-6)
    # The shift is at equilibrium at T - approach as well; by its definition in
    # thermo/balances.py (equilibrium temperature minus T) that reads -approach.
    assert r["shift"]["approach_K"] == pytest.approx(-approach, abs=1e-6)


# ----------------------------------------------------------------------- trade directions


def test_methane_slip_directions():
    """Common practice, no source: at equilibrium and without carbon, the dry methane slip
    falls as temperature rises, falls as steam-to-carbon rises, and rises with pressure
    (reforming is endothermic and makes 2 mol of gas per mol). Checked over the typical
    operating ranges (common practice, no source): 700-950 degC, 10-40 bar, S/C 2-5."""
    T = np.linspace(973.15, 1223.15, 6)
    P = np.linspace(10e5, 40e5, 4)
    SC = np.linspace(2.0, 5.0, 4)
    TT, PP, SS = np.meshgrid(T, P, SC, indexing="ij")
    n_in = np.stack([_feed(s) for s in SS.ravel()])
    bal = reformer_balance(n_in, TT.ravel(), PP.ravel(), 813.15)
    assert bal.converged.all()
    assert (bal.carbon_deposit == 0).all()
    slip = bal.methane_slip_dry.reshape(TT.shape)
    assert (np.diff(slip, axis=0) < 0).all()  # temperature up -> slip down
    assert (np.diff(slip, axis=1) > 0).all()  # pressure up -> slip up
    assert (np.diff(slip, axis=2) < 0).all()  # S/C up -> slip down


# -------------------------------------------------------------------- standard heats 298 K


def _janaf_dfH(species):
    if species == "H2":
        return 0.0  # element in its reference state
    (ref,) = load_refs("janaf_formation.toml", subject=species, quantity="delta_f_H")
    return ref.value  # kJ/mol, NIST-JANAF (Chase 1998)


def test_standard_heats_of_reaction_at_298K():
    """Reforming +206.2 and shift -41.2 kJ/mol (NIST-JANAF, Chase 1998, rounded to 0.1, as
    test_species_data.HEATS_298), and the same from JANAF's formation enthalpies in
    tests/references/janaf_formation.toml. Tolerance 0.5 kJ/mol: the model's GRI-Mech CH4
    formation enthalpy is 0.27 kJ/mol less negative than JANAF's (data-set difference, see
    that file), plus rounding of the quoted heats to 0.1 kJ/mol."""
    pt = point(temperature="850 degC", pressure="25 bar", steam_to_carbon=3.0)
    r = pt.to_dict()["reactions"]
    ref_kJ = r["reforming"]["heat_298_J_per_mol"] / 1000
    shift_kJ = r["shift"]["heat_298_J_per_mol"] / 1000
    assert ref_kJ == pytest.approx(206.2, abs=0.5)  # NIST-JANAF (Chase 1998), rounded
    assert shift_kJ == pytest.approx(-41.2, abs=0.5)  # NIST-JANAF (Chase 1998), rounded
    janaf_ref = _janaf_dfH("CO") + 3 * _janaf_dfH("H2") - _janaf_dfH("CH4") - _janaf_dfH("H2O")
    janaf_shift = _janaf_dfH("CO2") + _janaf_dfH("H2") - _janaf_dfH("CO") - _janaf_dfH("H2O")
    assert ref_kJ == pytest.approx(janaf_ref, abs=0.5)
    assert shift_kJ == pytest.approx(janaf_shift, abs=0.5)


# ------------------------------------------------------------------------ JSON and closure


def _strict_json_roundtrip(d):
    text = json.dumps(d, allow_nan=False)
    assert json.loads(text) == d
    return text


def test_to_dict_is_strict_json():
    """to_dict() survives a strict JSON round trip, with converged True and a finite H2/CO at the
    demo's design point."""
    pt = point(temperature="880 degC", pressure="22 barg", steam_to_carbon=3.0,
               approach="10 K")
    d = pt.to_dict()
    _strict_json_roundtrip(d)
    assert d["converged"] is True
    assert math.isfinite(d["h2_co_ratio"])


def test_to_dict_without_any_oxygen():
    """S/C 0, pure CH4, no CO2 or O2 co-feed: no oxygen at all, so the outlet holds no CO.
    H2/CO and the reaction quotients' approaches are undefined and must be JSON null."""
    pt = point(feed="CH4=1", temperature="850 degC", pressure="5 bar", steam_to_carbon=0.0,
               oxygen_to_carbon=0.0, co2_to_carbon=0.0)
    d = pt.to_dict()
    _strict_json_roundtrip(d)
    assert d["outlet"]["flow_mol_per_s"]["CO"] == 0.0
    assert d["h2_co_ratio"] is None
    assert d["reactions"]["reforming"]["approach_K"] is None
    assert d["reactions"]["shift"]["approach_K"] is None
    assert d["carbon_deposit_mol_per_s"] > 0  # methane cracks to graphite
    assert d["element_closure"]["O"] == 0.0  # no oxygen fed: reported as 0 by definition


@pytest.mark.parametrize("kw", [
    dict(steam_to_carbon=3.0),
    dict(steam_to_carbon=0.5, temperature="650 degC"),
    dict(steam_to_carbon=1.2, oxygen_to_carbon=0.5, temperature="1000 degC"),
    dict(steam_to_carbon=2.0, co2_to_carbon=1.0, pressure="40 bar"),
])
def test_element_closure(kw):
    """The reported element closure of each point is at most CLOSURE_TOL (the closure's agreement
    with the flows: tests/explorer/test_reported_closure.py)."""
    d = point(**kw).to_dict()
    for element, closure in d["element_closure"].items():
        assert closure <= CLOSURE_TOL, element


def test_element_closure_on_a_grid():
    """Over 12 points (650-950 degC, S/C 0-6, O2/C 0.3 below S/C 1) every point converges and every
    element's reported closure is at most CLOSURE_TOL."""
    T = np.repeat([923.15, 1073.15, 1223.15], 4)
    SC = np.tile([0.0, 0.8, 2.5, 6.0], 3)
    n_in = np.stack([_feed(s, 0.3 if s < 1 else 0.0) for s in SC])
    bal = reformer_balance(n_in, T, 20e5, 773.15)
    assert bal.converged.all()
    for element, closure in bal.element_closure.items():
        assert (closure <= CLOSURE_TOL).all(), element
