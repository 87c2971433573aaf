"""The scenario schema drives parse, write, form and sheet: every key round-trips."""

from __future__ import annotations

import pytest

import thermo
from thermo.errors import InputErrors
from thermo.scenario import parse_scenario
from thermo.scenario_toml import _get, input_rows
from thermo.schema import KEYS

#: A scenario of our own that sets every key of the schema (each to a value of its own).
FULL = '''title = "Every key"
description = "All keys set"
notes = "kept"
[feed]
composition = { CH4 = 0.9, C2H6 = 0.05, N2 = 0.05 }
flow = "1100 kmol/h"
inlet_temperature = "520 degC"
steam_to_carbon = 3.2
oxygen_to_carbon = 0.05
co2_to_carbon = 0.0
[design_point]
temperature = "870 degC"
pressure = "22 barg"
approach = "8 K"
[window]
temperature = { from = "700 degC", to = "900 degC", points = 5 }
pressure = { from = "10 bar", to = "30 bar", points = 3 }
steam_to_carbon = { from = 2.0, to = 4.0, points = 3 }
oxygen_to_carbon = { from = 0, to = 0.2, points = 2 }
[limits]
max_methane_slip_dry = "4 mol%"
carbon_free = false
min_h2_yield = 2.2
max_duty = "80 MW"
max_fired_duty = "150 MW"
[train.pre_reformer]
inlet_temperature = "480 degC"
[train.secondary_reformer]
oxidant = "air"
oxygen_to_carbon = 0.2
oxidant_temperature = "540 degC"
approach = "2 K"
[train.high_temperature_shift]
temperature = "360 degC"
approach = "9 K"
[train.low_temperature_shift]
temperature = "210 degC"
approach = "11 K"
[carbon]
path_temperatures = ["560 degC", "700 degC"]
reference = "catalyst"
catalyst_carbon_offset = "8 kJ/mol"
higher_hydrocarbon_cracking_temperature = "610 degC"
[plant]
h2_recovery = 0.87
excess_air = "12 %"
air_preheat_temperature = "310 degC"
bridgewall_temperature = "1020 degC"
stack_temperature = "150 degC"
supply_temperature = "35 degC"
process_gas_cooled_temperature = "170 degC"
steam_pressure = "41 bar"
steam_temperature = "390 degC"
feed_water_temperature = "104 degC"
steam_credit_efficiency = 0.91
[display]
units = "us"
'''


#: The two files together set every key (one co-feed axis each).
FILES = [FULL, FULL.replace("oxygen_to_carbon = { from = 0, to = 0.2",
                            "co2_to_carbon = { from = 0, to = 0.2")]


def test_the_files_cover_every_key():
    held = {k.path for text in FILES for k in KEYS if _get(parse_scenario(text), k) is not None}
    assert held == {k.path for k in KEYS}


@pytest.mark.parametrize("text", FILES)
def test_every_schema_key_round_trips_parse_write_parse_and_sheet(text):
    """Parse -> write -> parse gives the same Scenario; each key is written as typed and the
    sheet's inputs list names every key (notes are shown in their own box)."""
    sc = parse_scenario(text)
    written = sc.to_toml()
    again = parse_scenario(written)
    assert again == sc
    rows = {path: shown for path, _, shown in input_rows(sc)}
    for key in KEYS:
        assert _get(again, key) == _get(sc, key), key.path
        if key.path != "notes" and _get(sc, key) is not None:
            assert key.path in rows, key.path
    assert 'pressure = "22 barg"' in written and 'flow = "1100 kmol/h"' in written
    assert sc.display_units == "us"


@pytest.mark.parametrize("text", FILES)
def test_form_shows_every_key_as_written(text):
    """The form generated from the schema shows each key's value as written in the file."""
    from explorer.form import ScenarioForm
    from explorer.state import ExplorerState
    from thermo.scenario_toml import text_of

    sc = parse_scenario(text)
    form = ScenarioForm(ExplorerState(sc))
    rows = {path: shown for path, _, shown in input_rows(sc)}
    for key in KEYS:
        if key.path == "notes" or _get(sc, key) is None:
            continue
        w = form.inputs[key.name]
        shown = text_of(w.value) if key.kind in ("boolean", "choice") else w.value
        assert shown == rows[key.path], key.path
    assert form.inputs["pressure"].value == "22 barg"
    assert parse_scenario(form.toml_text()) == sc
    assert 'pressure = "22 barg"' in form.toml_text()


def test_computed_values_are_written_short_and_exact():
    """A window set from SI numbers is written in engineer units, short and exact."""
    q = thermo.units.ureg.Quantity
    sc = thermo.load_scenario().with_window(pressure=(q(1e6, "Pa"), q(3e6, "Pa"), 3))
    text = sc.to_toml()
    assert 'from = "10 bar"' in text and 'to = "30 bar"' in text
    assert parse_scenario(text) == sc


def test_three_bad_fields_are_all_reported_each_with_its_own_text():
    bad = (FULL.replace('"520 degC"', '"5200 degC"').replace('"22 barg"', '"22 barr"')
           .replace("points = 5", "points = 0").replace("CH4 = 0.9", "C2H8 = 0.9"))
    with pytest.raises(InputErrors) as info:
        parse_scenario(bad)
    fields = {e.field: e.value for e in info.value.errors}
    assert fields == {"feed.composition.C2H8": 0.9, "feed.inlet_temperature": "5200 degC",
                      "design_point.pressure": "22 barr", "window.temperature.points": 0}
    assert "did you mean 'C" in str(info.value)
