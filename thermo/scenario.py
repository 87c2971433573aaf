"""Scenario files: TOML text into frozen dataclasses, every unit converted at the edge.

A scenario names the dry hydrocarbon feed, the design point, the operating window to map, the
review limits and, optionally, the train's stages, the carbon check, the plant and the display
units. Every key, with its kind, unit, range, default, label and help, is one row of
:data:`thermo.schema.KEYS`; ``explorer/form.py``, the review sheet and the CLI read the same
rows. Quantities are strings with units, ratios plain numbers; inside the dataclasses
everything is SI floats (K, Pa, mol s-1, W).

File layout (all keys; ``#`` marks optional ones)::

    title = "..."
    description = "..."                        # optional
    notes = "..."                              # optional, review notes
    [feed]
    composition = { CH4 = 0.93, C2H6 = 0.04 }  # mole fractions of the dry hydrocarbon feed
    flow = "1450 kmol/h"                       # dry hydrocarbon feed; kmol/h, kg/h or Nm3/h
    inlet_temperature = "540 degC"             # mixed feed (gas + steam + co-feeds)
    steam_to_carbon = 3.0                      # mol H2O per mol hydrocarbon carbon
    oxygen_to_carbon = 0.0                     # optional, mol O2 per mol hydrocarbon carbon
    co2_to_carbon = 0.0                        # optional, mol CO2 per mol hydrocarbon carbon
    [design_point]
    temperature = "865 degC"
    pressure = "24 barg"
    approach = "10 K"                          # optional, default 0 K
    [window]
    temperature = { from = "700 degC", to = "950 degC", points = 26 }
    pressure = { from = "10 bar", to = "40 bar", points = 7 }
    steam_to_carbon = { from = 1.5, to = 5.0, points = 15 }
    oxygen_to_carbon = { from = 0, to = 0.6, points = 7 }   # optional; or co2_to_carbon
    [limits]                                   # optional section, every key optional
    max_methane_slip_dry = "4 mol%"
    carbon_free = true                         # default true
    min_h2_yield = 2.4                         # mol H2 per mol hydrocarbon carbon
    max_duty = "75 MW"
    max_fired_duty = "160 MW"                  # optional; needs a [plant] table
    [train.pre_reformer]                       # optional stages around the primary reformer
    inlet_temperature = "490 degC"             # adiabatic; then reheated to the feed inlet T
    [train.secondary_reformer]                 # adiabatic, oxygen- or air-blown
    oxidant = "air"                            # "air" or "oxygen"
    oxygen_to_carbon = 0.25                    # mol O2 per mol hydrocarbon carbon fed
    oxidant_temperature = "550 degC"
    approach = "0 K"                           # optional, default 0 K
    [train.high_temperature_shift]             # shift only: CH4 and carbon frozen
    temperature = "370 degC"
    approach = "10 K"                          # optional; equilibrium at T + approach
    [train.low_temperature_shift]
    temperature = "210 degC"
    approach = "10 K"
    [carbon]                                   # optional: how the carbon verdict is made
    path_temperatures = ["560 degC", "700 degC"]
    reference = "graphite"                     # or "catalyst" (needs the offset)
    catalyst_carbon_offset = "8 kJ/mol"
    higher_hydrocarbon_cracking_temperature = "600 degC"
    [plant]                                    # optional: the hydrogen plant around it
    h2_recovery = 0.88                         # every key optional; defaults: PLANT_DEFAULTS
    excess_air = "10 %"
    ...                                        # (thermo.schema lists every [plant] key)
    [display]
    units = "metric"                           # optional: "metric" (default) or "us"

Every error is a :class:`thermo.errors.InputError` naming the key path (``"window.pressure.from"``,
``"feed.composition.CH4"``), the value as typed and what is allowed; a file with several bad
fields raises :class:`thermo.errors.InputErrors` carrying them all.

This module is the public face: the dataclasses live in :mod:`thermo.scenario_data` and
:mod:`thermo.scenario_stages`, the parser in :mod:`thermo.scenario_parse`, the writer in
:mod:`thermo.scenario_toml`.
"""

from __future__ import annotations

from thermo.scenario_data import (
    COFEEDS,
    COMPOSITION_SUM_TOLERANCE,
    DEMO_PATH,
    FEED_COMPONENTS,
    HYDROCARBONS,
    MAX_SCENARIO_BYTES,
    MAX_WINDOW_POINTS,
    Axis,
    Composition,
    Feed,
    Limits,
    Scenario,
    Window,
)
from thermo.scenario_parse import (
    POINT_OVERRIDES,
    load_scenario,
    parse_composition,
    parse_plant,
    parse_scenario,
    validate_point_overrides,
)
from thermo.scenario_stages import (
    CARBON_REFERENCES,
    OXIDANTS,
    PLANT_DEFAULTS,
    PLANT_KEYS,
    STAGE_NAMES,
    CarbonCheck,
    Plant,
    PreReformer,
    SecondaryReformer,
    ShiftStage,
    Train,
)
from thermo.schema import (
    APPROACH_RANGE_K,
    BY_PATH,
    CATALYST_OFFSET_RANGE,
    CO2_TO_CARBON_RANGE,
    CRACKING_TEMPERATURE_K,
    INLET_TEMPERATURE_RANGE_K,
    MAX_AXIS_POINTS,
    MAX_TEXT_CHARS,
    OXYGEN_TO_CARBON_RANGE,
    PRESSURE_RANGE_PA,
    RATIO_RANGES,
    SHIFT_TEMPERATURE_RANGE_K,
    STEAM_TO_CARBON_RANGE,
    TEMPERATURE_RANGE_K,
    check_range,
)

__all__ = [
    "FEED_COMPONENTS", "HYDROCARBONS", "COFEEDS", "DEMO_PATH", "TEMPERATURE_RANGE_K",
    "PRESSURE_RANGE_PA", "STEAM_TO_CARBON_RANGE", "OXYGEN_TO_CARBON_RANGE",
    "CO2_TO_CARBON_RANGE", "INLET_TEMPERATURE_RANGE_K", "APPROACH_RANGE_K", "MAX_AXIS_POINTS",
    "MAX_WINDOW_POINTS", "COMPOSITION_SUM_TOLERANCE", "MAX_SCENARIO_BYTES", "MAX_TEXT_CHARS",
    "CATALYST_OFFSET_RANGE", "CRACKING_TEMPERATURE_K", "CARBON_REFERENCES", "STAGE_NAMES",
    "Composition", "Axis", "Feed", "Window", "Limits", "PreReformer", "SecondaryReformer",
    "ShiftStage", "Train", "CarbonCheck", "Plant", "PLANT_KEYS", "PLANT_DEFAULTS", "parse_plant",
    "OXIDANTS", "SHIFT_TEMPERATURE_RANGE_K", "Scenario", "parse_scenario", "load_scenario",
    "parse_composition", "check_temperature", "check_pressure", "check_inlet_temperature",
    "check_approach", "check_ratio", "check_shift_temperature", "validate_point_overrides",
    "POINT_OVERRIDES",
]


def check_temperature(value_K: float, field: str, raw: object = None) -> float:
    """Refuse a temperature [K] outside :data:`TEMPERATURE_RANGE_K`; the message names
    `field` and quotes `raw` (what was typed) or else `value_K`."""
    return check_range(BY_PATH["design_point.temperature"], value_K,
                       value_K if raw is None else raw, field)


def check_inlet_temperature(value_K: float, field: str, raw: object = None) -> float:
    """Refuse a mixed-feed inlet temperature outside :data:`INLET_TEMPERATURE_RANGE_K` [K]."""
    return check_range(BY_PATH["feed.inlet_temperature"], value_K,
                       value_K if raw is None else raw, field)


def check_shift_temperature(value_K: float, field: str, raw: object = None) -> float:
    """A shift stage temperature inside :data:`SHIFT_TEMPERATURE_RANGE_K` [K]."""
    return check_range(BY_PATH["train.high_temperature_shift.temperature"], value_K,
                       value_K if raw is None else raw, field)


def check_pressure(value_Pa: float, field: str, raw: object = None) -> float:
    """Refuse an absolute pressure [Pa] outside :data:`PRESSURE_RANGE_PA`."""
    return check_range(BY_PATH["design_point.pressure"], value_Pa,
                       value_Pa if raw is None else raw, field)


def check_approach(value_K: float, field: str, raw: object = None) -> float:
    """Refuse an approach to equilibrium outside :data:`APPROACH_RANGE_K` [K]."""
    return check_range(BY_PATH["design_point.approach"], value_K,
                       value_K if raw is None else raw, field)


def check_ratio(name: str, value: float, field: str) -> float:
    """Refuse a feed ratio [mol per mol hydrocarbon carbon] outside its range.

    Parameters
    ----------
    name : {"steam_to_carbon", "oxygen_to_carbon", "co2_to_carbon"}
        Which ratio.
    value : float
        The ratio.
    field : str
        Key path or option name for the message.
    """
    if name not in RATIO_RANGES:
        raise ValueError(f"unknown ratio {name!r}; known: {', '.join(RATIO_RANGES)}")
    return check_range(BY_PATH[f"feed.{name}"], value, value, field)

