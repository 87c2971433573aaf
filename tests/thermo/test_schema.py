"""The one scenario schema (thermo.schema.KEYS) drives the parser, the writer, the form's
field texts and the sheet: a walk over every key.

Two full scenarios between them hold every key of the schema (a window has one co-feed axis
at most, so the oxygen and the CO2 axes need one scenario each). For each: parse, write,
parse gives the same Scenario; each key's typed text comes back as typed; the review sheet's
inputs list names it. Bad input is reported field by field, all at once.
"""

from __future__ import annotations

import pytest

import thermo
from thermo.errors import InputError, InputErrors, all_errors
from thermo.scenario import parse_scenario
from thermo.scenario_toml import _get, exact_text, input_rows, scenario_toml, text_of
from thermo.schema import KEYS

#: Every optional table, each key with a value that differs from its default, in the units a
#: user would type them (our own invented values).
_EXTRA = """
[train.pre_reformer]
inlet_temperature = "495 degC"
[train.secondary_reformer]
oxidant = "air"
oxygen_to_carbon = 0.24
oxidant_temperature = "560 degC"
approach = "6 K"
[train.high_temperature_shift]
temperature = "355 degC"
approach = "11 K"
[train.low_temperature_shift]
temperature = "215 degC"
approach = "7 K"

[carbon]
path_temperatures = ["600 degC", "720 degC"]
reference = "catalyst"
catalyst_carbon_offset = "12 kJ/mol"
higher_hydrocarbon_cracking_temperature = "620 degC"

[plant]
h2_recovery = "87 %"
excess_air = "12 %"
air_preheat_temperature = "310 degC"
bridgewall_temperature = "1020 degC"
stack_temperature = "150 degC"
supply_temperature = "32 degC"
process_gas_cooled_temperature = "175 degC"
steam_pressure = "40 barg"
steam_temperature = "385 degC"
feed_water_temperature = "110 degC"
steam_credit_efficiency = 0.88

[display]
units = "us"
"""

_LIMITS_EXTRA = 'max_fired_duty = "150 MW"\n'


def _full(cofeed: str) -> str:
    """The demo with every optional table, a co-feed axis `cofeed`, and every limit."""
    text = thermo.load_scenario().text
    axis = f"{cofeed} = {{ from = 0.0, to = 0.2, points = 3 }}\n"
    text = text.replace("[limits]\n", "[limits]\n" + _LIMITS_EXTRA, 1)
    text = text.replace("\n[limits]", f"\n{axis}\n[limits]", 1)
    return text + _EXTRA


@pytest.fixture(scope="module", params=["oxygen_to_carbon", "co2_to_carbon"])
def full(request):
    text = _full(request.param)
    return parse_scenario(text), text


def test_the_two_full_scenarios_hold_every_key_of_the_schema():
    """The walk below covers the whole schema: every key is present in one of them."""
    seen = set()
    for cofeed in ("oxygen_to_carbon", "co2_to_carbon"):
        sc = parse_scenario(_full(cofeed))
        seen |= {k.path for k in KEYS if _get(sc, k) is not None}
    missing = [k.path for k in KEYS if k.path not in seen and k.path != "notes"]
    assert missing == []


def test_every_key_round_trips_parse_write_parse(full):
    """parse -> write -> parse gives the same Scenario (every SI value equal), and writing
    again gives the same text (the writer is a fixed point)."""
    sc, _ = full
    written = scenario_toml(sc)
    again = parse_scenario(written)
    for key in KEYS:
        assert _get(again, key) == _get(sc, key), key.path
    assert scenario_toml(again) == written


def test_typed_text_comes_back_as_typed(full):
    """A quantity keeps the user's text in the written file: "22 barg" stays "22 barg",
    "1100 kmol/h" stays "1100 kmol/h" (never 2301325.0 Pa or 305.555... mol/s)."""
    sc, text = full
    written = scenario_toml(sc)
    for line in ('pressure = "22 barg"', 'flow = "1100 kmol/h"', 'steam_pressure = "40 barg"',
                 'catalyst_carbon_offset = "12 kJ/mol"', 'h2_recovery = "87 %"',
                 'inlet_temperature = "540 degC"', 'max_fired_duty = "150 MW"'):
        assert line in text and line in written, line
    assert "2301325" not in written and "305.5555" not in written


def test_every_key_shown_as_written_and_listed_in_the_sheet(full):
    """The text the form and the sheet show for a key is what the writer writes for it, and
    the sheet's inputs list names every key the scenario holds."""
    sc, _ = full
    written = scenario_toml(sc)
    rows = {path: shown for path, _, shown in input_rows(sc)}
    for key in KEYS:
        value = _get(sc, key)
        if value is None or key.path == "notes":
            continue
        shown = text_of(exact_text(sc, key, value))
        assert rows[key.path] == shown, key.path
        if key.kind in ("quantity", "choice"):
            assert f'"{shown}"' in written, key.path


def test_the_display_units_key_reaches_the_scenario(full):
    sc, _ = full
    assert sc.display_units == "us"
    assert thermo.load_scenario().display_units == "metric"


def _bad_demo() -> str:
    text = thermo.load_scenario().text
    for old, new in (('temperature = "880 degC"', 'temperature = "880 degX"'),
                     ("points = 17", "points = 0"), ("C3H8 = 0.0090", "C2H8 = 0.0090")):
        assert text.count(old) == 1, old
        text = text.replace(old, new)
    return text


def test_three_bad_fields_give_three_errors_each_naming_its_field_and_its_text():
    """Every invalid field at once, each message quoting exactly what was typed there."""
    with pytest.raises(InputErrors) as info:
        parse_scenario(_bad_demo())
    errors = all_errors(info.value)
    assert isinstance(info.value, InputError)
    assert [e.field for e in errors] == ["feed.composition.C2H8", "design_point.temperature",
                                        "window.steam_to_carbon.points"]
    lines = str(info.value).splitlines()
    assert len(lines) == 3
    assert "'880 degX'" in lines[1] and "= 0 " in lines[2]
    # A message never echoes another field's value.
    assert "880" not in lines[2] and "880" not in lines[0]


def test_unknown_species_and_keys_get_the_nearest_known_name():
    with pytest.raises(InputError, match="did you mean 'C3H8'"):
        parse_scenario(thermo.load_scenario().text.replace("C3H8 = 0.0090", "C2H8 = 0.0090"))
    with pytest.raises(InputError, match="did you mean 'inlet_temperature'"):
        parse_scenario(thermo.load_scenario().text.replace(
            'inlet_temperature = "540 degC"', 'inlet_temperatur = "540 degC"'))
