"""Tests of thermo.scenario: reading, validating, changing and writing scenario files."""

from __future__ import annotations

import dataclasses
import math
import pickle

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from thermo import scenario as sc
from thermo.constants import V_NORMAL
from thermo.errors import InputError
from thermo.species import GAS_SPECIES, formula_matrix, molar_mass

# A small valid scenario; every test below changes one line of it. All numbers invented.
BASE = """
title = "Test unit"
description = "invented for tests"
notes = ""

[feed]
composition = { CH4 = 0.90, C2H6 = 0.05, CO2 = 0.03, N2 = 0.02 }
flow = "1000 kmol/h"
inlet_temperature = "500 degC"
steam_to_carbon = 3.0

[design_point]
temperature = "850 degC"
pressure = "25 barg"
approach = "10 K"

[window]
temperature = { from = "700 degC", to = "950 degC", points = 6 }
pressure = { from = "10 bar", to = "40 bar", points = 4 }
steam_to_carbon = { from = 1.5, to = 5.0, points = 8 }

[limits]
max_methane_slip_dry = "4 mol%"
carbon_free = true
min_h2_yield = 2.4
max_duty = "75 MW"
"""


def variant(old: str, new: str) -> str:
    """BASE with one exact piece of text replaced (fails loudly if the piece is absent)."""
    assert BASE.count(old) == 1, old
    return BASE.replace(old, new)


def refused(text: str) -> InputError:
    with pytest.raises(InputError) as info:
        sc.parse_scenario(text)
    return info.value


# ------------------------------------------------------------------------------ good files


def test_base_parses_to_si():
    """The base scenario parses to SI: design point, approach, feed flow and temperature, ratios,
    window axes and limits as written, path and text kept."""
    s = sc.parse_scenario(BASE, "base.toml")
    assert s.path == "base.toml" and s.text == BASE
    assert s.temperature == pytest.approx(1123.15, rel=1e-15)  # 850 degC + 273.15 (definition)
    assert s.pressure == pytest.approx(2601325.0, rel=1e-15)  # 25 barg + 1 atm (NIST-SP811)
    assert s.approach == 10.0
    assert s.feed.flow == pytest.approx(1000.0 / 3.6, rel=1e-15)  # kmol/h to mol/s
    assert s.feed.inlet_temperature == pytest.approx(773.15, rel=1e-15)
    assert s.feed.oxygen_to_carbon == 0.0 and s.feed.co2_to_carbon == 0.0
    assert s.window.temperature == sc.Axis(973.15, 1223.15, 6)
    assert s.window.pressure == sc.Axis(1e6, 4e6, 4)
    assert s.window.cofeed is None and s.window.cofeed_axis is None
    assert s.limits == sc.Limits(0.04, True, 2.4, 75e6)
    np.testing.assert_allclose(s.window.steam_to_carbon.values(), np.linspace(1.5, 5.0, 8))
    assert s.window.size() == 6 * 4 * 8


def test_carbon_flow_counts_hydrocarbon_carbon_only():
    """The carbon flow counts hydrocarbon carbon only (CH4 once, C2H6 twice, CO2 not at all)."""
    feed = sc.parse_scenario(BASE).feed
    # S/C (common practice, no source): CH4 counts 1, C2H6 2; CO2 does not count.
    assert feed.carbon_flow() == pytest.approx(feed.flow * (0.90 + 2 * 0.05), rel=1e-14)


def test_inlet_flows_by_species():
    """Inlet flows by species: CH4 from the dry gas, H2O = S/C x carbon, no O2 or H2; with co-
    feeds CO2 = gas CO2 + CO2/C x carbon and O2 = O2/C x carbon."""
    feed = sc.parse_scenario(BASE).feed
    n = feed.inlet_flows()
    assert n.shape == (len(GAS_SPECIES),)
    i = GAS_SPECIES.index
    assert n[i("CH4")] == pytest.approx(feed.flow * 0.90, rel=1e-14)
    assert n[i("H2O")] == pytest.approx(3.0 * feed.carbon_flow(), rel=1e-14)
    assert n[i("O2")] == 0.0 and n[i("H2")] == 0.0
    with_co2 = feed.inlet_flows(co2_to_carbon=0.5, oxygen_to_carbon=0.1)
    assert with_co2[i("CO2")] == pytest.approx(
        feed.flow * 0.03 + 0.5 * feed.carbon_flow(), rel=1e-14
    )
    assert with_co2[i("O2")] == pytest.approx(0.1 * feed.carbon_flow(), rel=1e-14)


def test_inlet_flows_broadcast_over_ratio_arrays():
    """Inlet flows broadcast over S/C and O2/C arrays: shape (species, 3, 2), H2O and O2
    following their ratio, CH4 constant."""
    feed = sc.parse_scenario(BASE).feed
    s_c = np.array([1.0, 2.0, 3.0])[:, None]
    o_c = np.array([0.0, 0.2])
    n = feed.inlet_flows(steam_to_carbon=s_c, oxygen_to_carbon=o_c)
    assert n.shape == (len(GAS_SPECIES), 3, 2)
    i = GAS_SPECIES.index
    np.testing.assert_allclose(n[i("H2O")], np.broadcast_to(s_c, (3, 2)) * feed.carbon_flow())
    np.testing.assert_allclose(n[i("O2")], np.broadcast_to(o_c, (3, 2)) * feed.carbon_flow())
    np.testing.assert_allclose(n[i("CH4")], feed.flow * 0.90)


def test_mean_molar_mass():
    """The feed's mean molar mass is the mole-fraction-weighted sum of the species' molar masses."""
    feed = sc.parse_scenario(BASE).feed
    expected = sum(
        x * molar_mass(k) for k, x in {"CH4": 0.9, "C2H6": 0.05, "CO2": 0.03, "N2": 0.02}.items()
    )
    assert feed.mean_molar_mass() == pytest.approx(expected, rel=1e-14)


def test_mass_and_normal_volume_flows():
    """18000 kg/h becomes mol/s through the mean molar mass, and 36000 Nm3/h through V_NORMAL."""
    s = sc.parse_scenario(variant('flow = "1000 kmol/h"', 'flow = "18000 kg/h"'))
    assert s.feed.flow == pytest.approx(5.0 / s.feed.mean_molar_mass(), rel=1e-12)
    s = sc.parse_scenario(variant('flow = "1000 kmol/h"', 'flow = "36000 Nm3/h"'))
    # 1 Nm3 = 1/V_NORMAL mol, V_NORMAL = R * 273.15 K / 101325 Pa (CODATA2018 R).
    assert s.feed.flow == pytest.approx(10.0 / V_NORMAL, rel=1e-12)


def test_optional_parts_default():
    """Without approach, description, notes and limits the scenario has a 0 K approach, empty
    texts and only the carbon-free limit."""
    text = variant('approach = "10 K"\n', "")
    text = text[: text.index("[limits]")]
    s = sc.parse_scenario(text.replace('description = "invented for tests"\n', ""))
    assert s.approach == 0.0 and s.description == "" and s.notes == ""
    assert s.limits == sc.Limits(None, True, None, None)


def test_composition_within_tolerance_is_normalised():
    """A composition summing to 1.0005 is normalised to 1, each fraction divided by the sum, in
    FEED_COMPONENTS order."""
    s = sc.parse_scenario(variant("N2 = 0.02", "N2 = 0.0205"))  # sums to 1.0005
    comp = s.feed.composition
    assert math.fsum(comp.values()) == pytest.approx(1.0, abs=1e-15)
    assert comp["N2"] == pytest.approx(0.0205 / 1.0005, rel=1e-14)
    assert list(comp) == ["CH4", "C2H6", "CO2", "N2"]  # FEED_COMPONENTS order


def test_composition_in_per_cent_strings():
    """A composition in per cent strings parses to the same fractions as the plain numbers."""
    text = variant(
        "{ CH4 = 0.90, C2H6 = 0.05, CO2 = 0.03, N2 = 0.02 }",
        '{ CH4 = "90 %", C2H6 = "5 mol%", CO2 = "3 %", N2 = "2 %" }',
    )
    assert sc.parse_scenario(text).feed.composition == sc.parse_scenario(BASE).feed.composition


def test_cofeed_axis():
    """A co2_to_carbon window axis becomes the co-feed axis, the fourth of the window's axes."""
    text = variant("[limits]", "co2_to_carbon = { from = 0.0, to = 1.0, points = 5 }\n[limits]")
    w = sc.parse_scenario(text).window
    assert w.cofeed == "co2_to_carbon" and w.cofeed_axis == sc.Axis(0.0, 1.0, 5)
    assert list(w.axes()) == ["temperature", "pressure", "steam_to_carbon", "co2_to_carbon"]


def test_single_point_axis():
    """A one-point axis is accepted and gives that one value."""
    text = variant(
        'pressure = { from = "10 bar", to = "40 bar", points = 4 }',
        'pressure = { from = "25 bar", to = "25 bar", points = 1 }',
    )
    axis = sc.parse_scenario(text).window.pressure
    assert axis == sc.Axis(2.5e6, 2.5e6, 1)
    np.testing.assert_array_equal(axis.values(), [2.5e6])


def test_scenario_pickles_for_worker_processes():
    """A scenario survives pickling (for worker processes): equal, same text and hash,
    composition still immutable."""
    s = sc.load_scenario().with_notes("kept")
    back = pickle.loads(pickle.dumps(s))
    assert back == s and back.text == s.text and hash(back) == hash(s)
    assert isinstance(back.feed.composition, sc.Composition)


def test_scenario_is_hashable_and_frozen():
    """Scenarios hash by content and are frozen, their composition too."""
    s = sc.parse_scenario(BASE)
    assert hash(s) == hash(sc.parse_scenario(BASE))
    with pytest.raises(dataclasses.FrozenInstanceError):
        s.temperature = 1.0  # type: ignore[misc]
    with pytest.raises(TypeError):
        s.feed.composition["CH4"] = 1.0  # type: ignore[index]


# ------------------------------------------------------------------------ shipped scenarios


@pytest.mark.parametrize("path", [None, sc.DEMO_PATH, sc.DEMO_PATH.parent / "biogas-skid.toml"])
def test_shipped_scenarios_load(path):
    """Each shipped scenario loads with a title, its text and path, a composition summing to 1,
    and writes back to an equal scenario."""
    s = sc.load_scenario(path)
    assert s.title and s.text
    assert s.path == str(path or sc.DEMO_PATH)
    assert math.fsum(s.feed.composition.values()) == pytest.approx(1.0, abs=1e-15)
    assert sc.parse_scenario(s.to_toml()) == s


def test_demo_shows_what_it_is_for():
    """The demo must show the carbon boundary and a feasible window around its design point."""
    import thermo

    s = sc.load_scenario()
    w = s.window
    assert w.temperature.start <= s.temperature <= w.temperature.stop
    assert w.pressure.start <= s.pressure <= w.pressure.stop
    assert w.steam_to_carbon.start <= s.feed.steam_to_carbon <= w.steam_to_carbon.stop
    ds = thermo.sweep(s)
    assert bool(ds["converged"].all())
    carbon = ds["carbon_deposit"] > 0
    assert bool(carbon.any()) and not bool(carbon.all())  # the boundary lies inside the window
    assert 0 < int(ds["feasible"].sum()) < ds["feasible"].size
    design = thermo.point(s)
    assert design.carbon_deposit == 0.0


# --------------------------------------------------------------------------- round trips


def test_to_toml_round_trip_is_equal():
    """A scenario with a co-feed axis writes TOML that parses back equal, keeping that text."""
    s = sc.parse_scenario(
        variant("[limits]", "oxygen_to_carbon = { from = 0.0, to = 0.5, points = 3 }\n[limits]")
    )
    text = s.to_toml()
    back = sc.parse_scenario(text)
    assert back == s
    assert back.text == text


def test_with_notes_kept_in_text():
    """Notes with quotes, backslashes, tabs, non-ASCII and CR are kept exactly and survive the
    scenario text."""
    notes = 'Checked by A. N. Other.\n"Slip" high at 2\\3 of the window;\ttab, ünïcode ✓, \r.'
    s = sc.parse_scenario(BASE).with_notes(notes)
    assert s.notes == notes
    back = sc.parse_scenario(s.text)
    assert back.notes == notes and back == s


@settings(max_examples=60, deadline=None)
@given(st.text(max_size=200))
def test_any_notes_round_trip(notes):
    """Any drawn text as notes survives to_toml and parsing exactly."""
    s = sc.parse_scenario(BASE).with_notes(notes)
    assert sc.parse_scenario(s.to_toml()).notes == notes


def test_with_notes_refuses_non_text():
    """Notes that are not text are refused naming notes."""
    with pytest.raises(InputError, match="notes"):
        sc.parse_scenario(BASE).with_notes(3)  # type: ignore[arg-type]


def test_with_window():
    """with_window replaces the axes given (in SI), keeps the others, and the new text parses
    back equal."""
    s = sc.parse_scenario(BASE).with_window(
        temperature=("650 degC", "950 degC", 31), steam_to_carbon=(2, 4, 3)
    )
    assert s.window.temperature == sc.Axis(923.15, 1223.15, 31)
    assert s.window.steam_to_carbon == sc.Axis(2.0, 4.0, 3)
    assert s.window.pressure == sc.Axis(1e6, 4e6, 4)  # unchanged
    assert sc.parse_scenario(s.text) == s


def test_with_window_cofeed_and_pint_quantities():
    """with_window accepts pint quantities (barg as gauge) and a co-feed axis, and a second co-
    feed replaces the first."""
    from thermo.units import ureg

    s = sc.parse_scenario(BASE).with_window(
        pressure=(ureg.Quantity(5, "bar"), ureg.Quantity(30, "barg"), 3),
        oxygen_to_carbon=(0.0, 0.6, 4),
    )
    assert s.window.pressure == sc.Axis(5e5, 3e6 + 101325.0, 3)
    assert s.window.cofeed == "oxygen_to_carbon"
    s2 = s.with_window(co2_to_carbon=(0.0, 1.0, 2))  # replaces the co-feed axis
    assert s2.window.cofeed == "co2_to_carbon" and s2.window.cofeed_axis == sc.Axis(0, 1, 2)


@pytest.mark.parametrize(
    ("kwargs", "field"),
    [
        ({"pressure": ("40 bar", "10 bar", 7)}, "window.pressure.to"),
        ({"temperature": (700, 950, 26)}, "window.temperature.from"),
        ({"temperature": ("700 degC", "950 degC")}, "window.temperature"),
        ({"steam_to_carbon": (1.0, 12.0, 5)}, "window.steam_to_carbon.to"),
        ({"steam_to_carbon": (1.0, 4.0, 2.5)}, "window.steam_to_carbon.points"),
        ({"oxygen_to_carbon": (0, 0.5, 3), "co2_to_carbon": (0, 1, 3)}, "window"),
    ],
)
def test_with_window_validates_like_the_file(kwargs, field):
    """Each bad with_window argument is refused naming the same field a file would."""
    with pytest.raises(InputError) as info:
        sc.parse_scenario(BASE).with_window(**kwargs)
    assert info.value.field == field


# ----------------------------------------------------------------------- validation rules


@pytest.mark.parametrize(
    ("old", "new", "field", "suggestion"),
    [
        ('title = "Test unit"', 'titel = "Test unit"', "titel", "title"),
        ('flow = "1000 kmol/h"', 'flwo = "1000 kmol/h"', "feed.flwo", "flow"),
        ('approach = "10 K"', 'aproach = "10 K"', "design_point.aproach", "approach"),
        (
            'pressure = { from = "10 bar", to = "40 bar", points = 4 }',
            'presure = { from = "10 bar", to = "40 bar", points = 4 }',
            "window.presure",
            "pressure",
        ),
        (
            'pressure = { from = "10 bar", to = "40 bar", points = 4 }',
            'pressure = { form = "10 bar", to = "40 bar", points = 4 }',
            "window.pressure.form",
            "from",
        ),
        ("carbon_free = true", "carbon_fre = true", "limits.carbon_fre", "carbon_free"),
    ],
)
def test_unknown_keys_are_named_with_the_nearest_known_key(old, new, field, suggestion):
    """Each unknown key is refused naming it, with the nearest known key suggested."""
    error = refused(variant(old, new))
    assert error.field == field
    assert str(error).startswith(f"{field} = ")
    assert f"did you mean {suggestion!r}" in str(error)


@pytest.mark.parametrize(
    ("old", "field"),
    [
        ('title = "Test unit"\n', "title"),
        ('flow = "1000 kmol/h"\n', "feed.flow"),
        ("steam_to_carbon = 3.0\n", "feed.steam_to_carbon"),
        ('temperature = "850 degC"\n', "design_point.temperature"),
        ('pressure = { from = "10 bar", to = "40 bar", points = 4 }\n', "window.pressure"),
    ],
)
def test_missing_required_keys_are_named(old, field):
    """Each missing required key is refused naming it as <missing> and required."""
    error = refused(variant(old, ""))
    assert error.field == field
    assert "<missing>" in str(error) and "required" in str(error)


def test_missing_section_is_named():
    """A missing [window] section is refused naming window."""
    text = BASE[: BASE.index("[window]")] + BASE[BASE.index("[limits]") :]
    assert refused(text).field == "window"


def test_missing_axis_key_is_named():
    """An axis without points is refused naming window.pressure.points."""
    error = refused(
        variant(
            'pressure = { from = "10 bar", to = "40 bar", points = 4 }',
            'pressure = { from = "10 bar", to = "40 bar" }',
        )
    )
    assert error.field == "window.pressure.points"


def test_unknown_species_is_named_with_the_allowed_list():
    """An unknown species is refused naming it and listing the allowed species."""
    error = refused(variant("N2 = 0.02", "H2S = 0.02"))
    assert error.field == "feed.composition.H2S"
    assert "CH4, C2H6, C3H8, CO2, N2, Ar, H2" in str(error)


def test_species_in_wrong_case_gets_a_suggestion():
    """A species in the wrong case is refused with the right spelling suggested."""
    error = refused(variant("N2 = 0.02", "n2 = 0.02"))
    assert error.field == "feed.composition.n2" and "did you mean 'N2'" in str(error)


def test_negative_fraction_is_refused():
    """A negative fraction is refused naming its species and '0 or more'."""
    error = refused(variant("{ CH4 = 0.90, C2H6 = 0.05", "{ CH4 = 1.00, C2H6 = -0.05"))
    assert error.field == "feed.composition.C2H6" and "0 or more" in str(error)


@pytest.mark.parametrize(
    ("n2", "words"),
    [
        ("N2 = -0.01", None),
        ("N2 = 0.0", "sum to 0.9800 (2.00 % short)"),
        ("N2 = 0.05", "sum to 1.0300 (3.00 % over)"),
    ],
)
def test_composition_must_sum_to_one(n2, words):
    """Compositions off by more than the tolerance are refused naming feed.composition and how
    far off (a negative entry is named first)."""
    error = refused(variant("N2 = 0.02", n2))
    if words is None:  # the negative entry is caught first
        assert error.field == "feed.composition.N2"
    else:
        assert error.field == "feed.composition" and words in str(error)


def test_composition_sum_message_example():
    """Fractions summing to 0.97 give 'sum to 0.9700 (3.00 % short)'."""
    # The brief's example: fractions summing to 0.97.
    error = refused(variant("CH4 = 0.90", "CH4 = 0.87"))
    assert "sum to 0.9700 (3.00 % short)" in str(error)


def test_feed_needs_a_hydrocarbon():
    """A feed without hydrocarbons is refused naming feed.composition."""
    text = variant("{ CH4 = 0.90, C2H6 = 0.05, CO2 = 0.03, N2 = 0.02 }", "{ CO2 = 0.5, H2 = 0.5 }")
    error = refused(text)
    assert error.field == "feed.composition" and "hydrocarbon" in str(error)


def test_composition_value_must_be_a_number():
    """A non-number fraction is refused naming its species."""
    error = refused(variant("N2 = 0.02", "N2 = true"))
    assert error.field == "feed.composition.N2"


@pytest.mark.parametrize(
    ("old", "new", "field", "words"),
    [
        # axis order and point counts
        ('to = "40 bar", points = 4', 'to = "5 bar", points = 4', "window.pressure.to", "above"),
        ('to = "40 bar", points = 4', 'to = "10 bar", points = 4', "window.pressure.to", "above"),
        ('to = "40 bar", points = 4', 'to = "40 bar", points = 1', "window.pressure.to", "same"),
        ('to = "40 bar", points = 4', 'to = "40 bar", points = 0', "window.pressure.points", "1"),
        (
            'to = "40 bar", points = 4',
            'to = "40 bar", points = 402',
            "window.pressure.points",
            "401",
        ),
        (
            'to = "40 bar", points = 4',
            'to = "40 bar", points = 4.0',
            "window.pressure.points",
            "whole number",
        ),
        (
            'to = "40 bar", points = 4',
            'to = "40 bar", points = "4"',
            "window.pressure.points",
            "whole number",
        ),
        # units and ranges of the window
        ('from = "10 bar"', 'from = "-5 bar"', "window.pressure.from", "above 0"),
        ('from = "10 bar"', 'from = "0.001 bar"', "window.pressure.from", "0.01 and 200 bar"),
        ('from = "10 bar"', 'from = "10 barr"', "window.pressure.from", "not known"),
        ('from = "10 bar"', "from = 10", "window.pressure.from", "unit"),
        ('from = "700 degC"', "from = 700", "window.temperature.from", "unit"),
        (
            'to = "950 degC"',
            'to = "3000 degC"',
            "window.temperature.to",
            "between 26.85 and 2226.85 degC (300 to 2500 K)",
        ),
        ("from = 1.5", 'from = "1.5"', "window.steam_to_carbon.from", "plain number"),
        (
            "to = 5.0, points = 8",
            "to = 11.0, points = 8",
            "window.steam_to_carbon.to",
            "between 0 and 10",
        ),
        (
            "[limits]",
            "oxygen_to_carbon = { from = 0, to = 0.9, points = 3 }\n[limits]",
            "window.oxygen_to_carbon.to",
            "between 0 and 0.7",
        ),
        (
            "[limits]",
            "oxygen_to_carbon = { from = 0, to = 0.5, points = 3 }\n"
            "co2_to_carbon = { from = 0, to = 1, points = 3 }\n[limits]",
            "window.co2_to_carbon",
            "at most one co-feed axis",
        ),
        (
            'pressure = { from = "10 bar", to = "40 bar", points = 4 }',
            'pressure = "25 bar"',
            "window.pressure",
            "table",
        ),
        # feed
        ('flow = "1000 kmol/h"', 'flow = "1000 Sm3/h"', "feed.flow", "ambiguous"),
        ('flow = "1000 kmol/h"', 'flow = "0 kmol/h"', "feed.flow", "above 0"),
        ('flow = "1000 kmol/h"', "flow = 1000", "feed.flow", "unit"),
        ('flow = "1000 kmol/h"', 'flow = "1000 kW"', "feed.flow", "flow"),
        (
            'inlet_temperature = "500 degC"',
            'inlet_temperature = "1000 degC"',
            "feed.inlet_temperature",
            "300 to 1200 K",
        ),
        (
            "steam_to_carbon = 3.0",
            'steam_to_carbon = "3.0"',
            "feed.steam_to_carbon",
            "plain number",
        ),
        (
            "steam_to_carbon = 3.0",
            "steam_to_carbon = -1.0",
            "feed.steam_to_carbon",
            "between 0 and 10",
        ),
        ("steam_to_carbon = 3.0", "steam_to_carbon = nan", "feed.steam_to_carbon", "finite"),
        ("steam_to_carbon = 3.0", "steam_to_carbon = true", "feed.steam_to_carbon", "plain number"),
        (
            "steam_to_carbon = 3.0",
            "steam_to_carbon = 3.0\noxygen_to_carbon = 0.8",
            "feed.oxygen_to_carbon",
            "between 0 and 0.7",
        ),
        (
            "steam_to_carbon = 3.0",
            "steam_to_carbon = 3.0\nco2_to_carbon = 4",
            "feed.co2_to_carbon",
            "between 0 and 3",
        ),
        (
            "composition = { CH4 = 0.90, C2H6 = 0.05, CO2 = 0.03, N2 = 0.02 }",
            'composition = "CH4=0.9,C2H6=0.05,CO2=0.03,N2=0.02"',
            "feed.composition",
            "table",
        ),
        # design point
        ('pressure = "25 barg"', 'pressure = "25 bar(g"', "design_point.pressure", "not known"),
        (
            'pressure = "25 barg"',
            'pressure = "250 barg"',
            "design_point.pressure",
            "0.01 and 200 bar",
        ),
        ('temperature = "850 degC"', 'temperature = "850"', "design_point.temperature", "unit"),
        ('approach = "10 K"', 'approach = "150 K"', "design_point.approach", "0 and 100 K"),
        ('approach = "10 K"', 'approach = "10 bar"', "design_point.approach", "difference"),
        # limits
        ("carbon_free = true", 'carbon_free = "true"', "limits.carbon_free", "true or false"),
        ("carbon_free = true", "carbon_free = 1", "limits.carbon_free", "true or false"),
        (
            'max_methane_slip_dry = "4 mol%"',
            "max_methane_slip_dry = 4",
            "limits.max_methane_slip_dry",
            "per cent",
        ),
        ("min_h2_yield = 2.4", "min_h2_yield = -1", "limits.min_h2_yield", "0 or more"),
        ("min_h2_yield = 2.4", 'min_h2_yield = "2.4"', "limits.min_h2_yield", "plain number"),
        ('max_duty = "75 MW"', 'max_duty = "75 MJ"', "limits.max_duty", "power"),
        # top level
        ('title = "Test unit"', "title = 3", "title", "text"),
        ('notes = ""', "notes = []", "notes", "text"),
    ],
)
def test_validation_names_the_key(old, new, field, words):
    """Each impossible value is refused with a message starting 'key = ' and saying what is
    allowed."""
    error = refused(variant(old, new))
    assert error.field == field, str(error)
    assert str(error).startswith(f"{field} = ")
    assert words in str(error)


def test_approach_must_keep_the_window_inside_the_data_range():
    """An approach taking the window's lowest temperature below 300 K is refused naming
    design_point.approach."""
    text = variant('from = "700 degC"', 'from = "30 degC"')  # 303.15 K, minus 10 K is < 300 K
    error = refused(text)
    assert error.field == "design_point.approach" and "300 K" in str(error)


def test_total_window_points_limited():
    """A window above MAX_WINDOW_POINTS is refused naming window, the limit and its 401 x
    401 x 125 size."""
    text = variant("points = 6 }", "points = 401 }")
    text = text.replace('to = "40 bar", points = 4', 'to = "40 bar", points = 401')
    text = text.replace("to = 5.0, points = 8", "to = 5.0, points = 125")  # 401^2*125 > 2e7
    error = refused(text)
    assert error.field == "window"
    assert str(sc.MAX_WINDOW_POINTS) in str(error) and "401 x 401 x 125" in str(error)


def test_bad_toml_names_the_file(tmp_path):
    """Invalid TOML is refused naming the file and 'valid TOML'."""
    path = tmp_path / "broken.toml"
    path.write_text('title = "unclosed\n', encoding="utf-8")
    with pytest.raises(InputError) as info:
        sc.load_scenario(path)
    assert info.value.field == str(path) and "valid TOML" in str(info.value)


def test_missing_file_is_named(tmp_path):
    """A missing file is refused naming it."""
    path = tmp_path / "nowhere.toml"
    with pytest.raises(InputError) as info:
        sc.load_scenario(path)
    assert str(path) in str(info.value) and "existing file" in str(info.value)


def test_non_utf8_file_is_named(tmp_path):
    """A Latin-1 file is refused naming it."""
    path = tmp_path / "latin1.toml"
    path.write_bytes('title = "Gävle"\n'.encode("latin-1"))
    with pytest.raises(InputError) as info:
        sc.load_scenario(path)
    assert str(path) in str(info.value)


# ------------------------------------------------------------------- helpers for the point API


def test_range_messages_in_engineer_units():
    """Out-of-range temperature, pressure and S/C messages give the allowed range in degC and K,
    bar, and mol per mol; CO2/C 3 is accepted."""
    with pytest.raises(InputError, match=r"between 26.85 and 2226.85 degC \(300 to 2500 K\)"):
        sc.check_temperature(250.0, "--temperature")
    with pytest.raises(InputError, match=r"0.01 and 200 bar"):
        sc.check_pressure(3e7, "--pressure")
    with pytest.raises(InputError, match="mol H2O per mol hydrocarbon carbon"):
        sc.check_ratio("steam_to_carbon", 11.0, "--steam-to-carbon")
    assert sc.check_ratio("co2_to_carbon", 3.0, "x") == 3.0


def test_validate_point_overrides():
    """validate_point_overrides turns the CLI's overrides into SI values and a composition, and
    names the CLI option (and the species) of a bad one."""
    out = sc.validate_point_overrides(
        {"pressure": "--pressure"},
        temperature="850 degC",
        pressure="25 bar",
        steam_to_carbon=3,
        approach="10 K",
        inlet_temperature=None,
        feed="CH4=0.95,C2H6=0.03,N2=0.02",
    )
    assert out["temperature"] == pytest.approx(1123.15) and out["pressure"] == 2.5e6
    assert out["steam_to_carbon"] == 3.0 and out["approach"] == 10.0
    assert "inlet_temperature" not in out
    assert out["feed"] == {"CH4": 0.95, "C2H6": 0.03, "N2": 0.02}
    with pytest.raises(InputError) as info:
        sc.validate_point_overrides({"pressure": "--pressure"}, pressure="25 barr")
    assert info.value.field == "--pressure"
    with pytest.raises(InputError) as info:
        sc.validate_point_overrides({"feed": "--feed"}, feed="CH4=0.95,H2S=0.05")
    assert info.value.field == "--feed.H2S"


# ------------------------------------------------------------------------------ properties

_WEIGHTS = st.floats(min_value=0.0, max_value=1.0, allow_nan=False)


@st.composite
def compositions(draw):
    """Random valid dry-feed compositions: some hydrocarbon, sum within the tolerance of 1."""
    names = draw(st.lists(st.sampled_from(sc.FEED_COMPONENTS), min_size=1, unique=True))
    hydrocarbon = draw(st.sampled_from(list(sc.HYDROCARBONS)))
    if hydrocarbon not in names:
        names.append(hydrocarbon)
    weights = {k: draw(_WEIGHTS) for k in names}
    weights[hydrocarbon] += draw(st.floats(min_value=1e-3, max_value=1.0))
    total = sum(weights.values())
    scale = 1.0 + draw(st.floats(min_value=-0.9, max_value=0.9)) * sc.COMPOSITION_SUM_TOLERANCE
    return {k: v / total * scale for k, v in weights.items()}


@settings(max_examples=200, deadline=None)
@given(
    compositions(),
    st.floats(min_value=1e-3, max_value=1e4),
    st.floats(min_value=0.0, max_value=10.0),
    st.floats(min_value=0.0, max_value=0.7),
    st.floats(min_value=0.0, max_value=3.0),
)
def test_compositions_normalise_and_inlet_flows_balance(raw, flow, s_c, o_c, co2_c):
    """For drawn compositions and ratios the fractions sum to 1 and are non-negative, and the
    inlet flows hold exactly the hydrocarbon carbon, CO2, H2O, O2 and dry gas they should."""
    comp = sc.parse_composition(raw)
    assert math.fsum(comp.values()) == pytest.approx(1.0, abs=1e-15)
    assert sum(comp.values()) == pytest.approx(1.0, abs=1e-12)
    assert all(x >= 0.0 for x in comp.values())
    feed = sc.Feed(comp, flow, 800.0, s_c, o_c, co2_c)
    n = feed.inlet_flows()
    carbon = feed.carbon_flow()
    i = GAS_SPECIES.index
    C = formula_matrix()[:, 0]  # carbon atoms per molecule, GAS_SPECIES order
    # carbon in the inlet hydrocarbons equals the hydrocarbon carbon flow
    in_hydrocarbons = sum(C[i(k)] * n[i(k)] for k in sc.HYDROCARBONS)
    assert in_hydrocarbons == pytest.approx(carbon, rel=1e-12)
    # all carbon = hydrocarbon carbon + CO2 of the gas + CO2 co-feed
    total_c = float(C @ n)
    assert total_c == pytest.approx(
        carbon + flow * comp.get("CO2", 0.0) + co2_c * carbon, rel=1e-12, abs=1e-12 * flow
    )
    assert n[i("H2O")] == pytest.approx(s_c * carbon, rel=1e-12, abs=1e-300)
    assert n[i("O2")] == pytest.approx(o_c * carbon, rel=1e-12, abs=1e-300)
    # the dry feed itself comes back
    assert sum(n[i(k)] for k in comp if k != "CO2") + n[i("CO2")] - co2_c * carbon == (
        pytest.approx(flow, rel=1e-12)
    )


@settings(max_examples=50, deadline=None)
@given(compositions())
def test_normalised_composition_round_trips_through_the_file(raw):
    """A drawn composition, normalised, survives to_toml and parsing."""
    body = ", ".join(f"{k} = {v!r}" for k, v in raw.items())
    text = variant("{ CH4 = 0.90, C2H6 = 0.05, CO2 = 0.03, N2 = 0.02 }", "{ " + body + " }")
    s = sc.parse_scenario(text)
    assert sc.parse_scenario(s.to_toml()) == s
