"""Atomic weights and molar masses: every kg/h the tool reads or shows rests on them.

References
----------
* IUPAC2021 (thermo/data/references.toml): T. Prohaska et al., Standard atomic weights of the
  elements 2021, Pure Appl. Chem. 94 (2022) 573-600, its table of "conventional values" (for
  the elements whose standard atomic weight is an interval: H, C, N, O and, since 2021, Ar). The
  values below are quoted from memory of that table; argon's new interval [39.792, 39.963],
  whose conventional value is 39.95, is the change the report's abstract announces.
* Cantera 3.2 (https://cantera.org, a general-purpose reference library, tests only): the
  molecular weights of its own gri30.yaml and graphite.yaml species, computed by Cantera from
  its own element table, an independent computation of every molar mass.
"""

from __future__ import annotations

import pytest

import thermo
from thermo.constants import ATOMIC_WEIGHT, ELEMENTS
from thermo.scenario import parse_scenario
from thermo.species import GAS_SPECIES, GRAPHITE, molar_mass, molar_masses, record

#: IUPAC 2021 conventional atomic weights [g mol-1] (Prohaska et al. 2022, its table of
#: conventional values; from memory, see the module docstring).
IUPAC_2021 = {"H": 1.008, "C": 12.011, "N": 14.007, "O": 15.999, "Ar": 39.95}

#: Project species name -> Cantera (GRI-Mech 3.0) species name.
CT_NAME = {s: ("AR" if s == "Ar" else s) for s in GAS_SPECIES}


def test_every_element_has_an_atomic_weight():
    """The table holds exactly the model's elements (C, H, O, N, Ar), none more, none less."""
    assert set(ATOMIC_WEIGHT) == set(ELEMENTS) == set(IUPAC_2021)


@pytest.mark.parametrize("element", list(IUPAC_2021))
def test_atomic_weight_is_the_iupac_2021_conventional_value(element):
    """Each atomic weight [kg mol-1] equals IUPAC 2021's conventional value to round-off."""
    assert ATOMIC_WEIGHT[element] * 1e3 == pytest.approx(IUPAC_2021[element], rel=1e-12)


@pytest.mark.parametrize("name", [*GAS_SPECIES, GRAPHITE])
def test_molar_mass_is_the_sum_of_iupac_atomic_weights(name):
    """Each species' molar mass [kg mol-1] equals its formula (species.toml) times IUPAC 2021's
    conventional atomic weights, summed here independently of thermo.constants."""
    want = sum(IUPAC_2021[e] * k for e, k in record(name).elements.items()) * 1e-3
    assert molar_mass(name) == pytest.approx(want, rel=1e-12)


def test_molar_masses_match_cantera():
    """Every gas species' molar mass and graphite's equal Cantera's molecular weights (its own
    gri30.yaml and graphite.yaml, its own element table) to 1e-12 relative."""
    ct = pytest.importorskip("cantera")
    gas = ct.Solution("gri30.yaml")
    for name in GAS_SPECIES:
        want = gas.molecular_weights[gas.species_index(CT_NAME[name])] * 1e-3  # kg/kmol -> kg/mol
        assert molar_mass(name) == pytest.approx(want, rel=1e-12), name
    graphite = ct.Solution("graphite.yaml")
    assert molar_mass(GRAPHITE) == pytest.approx(graphite.molecular_weights[0] * 1e-3, rel=1e-12)


def test_kg_per_h_feed_and_shown_mass_flows_use_cantera_molar_masses():
    """A feed given in kg/h becomes mol/s through the mean molar mass Cantera computes for the
    same composition, and the point's shown mass flows [kg s-1] are its molar flows times
    Cantera's molecular weights (both to 1e-12 relative)."""
    ct = pytest.importorskip("cantera")
    gas = ct.Solution("gri30.yaml")
    mw = {s: gas.molecular_weights[gas.species_index(CT_NAME[s])] * 1e-3 for s in GAS_SPECIES}
    text = thermo.load_scenario().text.replace('flow = "1100 kmol/h"', 'flow = "20000 kg/h"')
    assert 'flow = "20000 kg/h"' in text
    sc = parse_scenario(text)
    mean = sum(x * mw[s] for s, x in sc.feed.composition.items())
    assert sc.feed.flow == pytest.approx(20000.0 / 3600.0 / mean, rel=1e-12)
    d = thermo.point(sc).to_dict()
    for side in ("inlet", "outlet"):
        for s in GAS_SPECIES:
            n = d[side]["flow_mol_per_s"][s]
            assert d[side]["mass_flow_kg_per_s"][s] == pytest.approx(n * mw[s], rel=1e-12,
                                                                     abs=1e-300), (side, s)


def test_shown_kg_per_h_follow_the_atomic_weight_table(monkeypatch):
    """Changing oxygen's atomic weight in thermo.constants changes the molar masses, a kg/h
    feed's molar flow and the point's mass flows by the same factor: no copy of a weight
    elsewhere decides what a user reads."""
    base_text = thermo.load_scenario().text.replace('flow = "1100 kmol/h"',
                                                    'flow = "20000 kg/h"')
    before = parse_scenario(base_text).feed.flow
    h2o_before = molar_mass("H2O")
    out_before = thermo.point(parse_scenario(base_text)).to_dict()["outlet"]
    monkeypatch.setitem(ATOMIC_WEIGHT, "O", 15.9e-3)
    molar_masses.cache_clear()
    try:
        assert molar_mass("H2O") == pytest.approx(h2o_before - (15.999e-3 - 15.9e-3), rel=1e-12)
        assert molar_masses()[GAS_SPECIES.index("H2O")] == pytest.approx(molar_mass("H2O"))
        sc = parse_scenario(base_text)
        assert sc.feed.flow != pytest.approx(before, rel=1e-9)  # CO2 in the feed holds O
        out = thermo.point(sc).to_dict()["outlet"]
        n, m = out["flow_mol_per_s"]["H2O"], out["mass_flow_kg_per_s"]["H2O"]
        assert m == pytest.approx(n * molar_mass("H2O"), rel=1e-12)
        assert m / n != pytest.approx(out_before["mass_flow_kg_per_s"]["H2O"]
                                      / out_before["flow_mol_per_s"]["H2O"], rel=1e-6)
    finally:
        monkeypatch.undo()
        molar_masses.cache_clear()
