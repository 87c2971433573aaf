"""Every scenario key in one declarative table: kind, unit dimension, range, default, label, help.

The parser (:mod:`thermo.scenario_parse`), the one TOML writer (:mod:`thermo.scenario_toml`),
the app's form (``explorer/form.py``), the review sheet's inputs table and the CLI's override
options all read :data:`KEYS`. Adding a key is one row here plus its physics (DEVELOPERS.md).

Values inside are SI: K, Pa, mol s-1, W, J mol-1; ratios in mol per mol hydrocarbon carbon.
:func:`parse_value` turns what the user typed into that SI value, raising
:class:`thermo.errors.InputError` that names the key and quotes the text as typed.
"""

from __future__ import annotations

import difflib
import math
from dataclasses import dataclass
from numbers import Real

import numpy as np

from thermo import units
from thermo.errors import InputError

#: Temperatures the model accepts [K] (inside the species data ranges, GRI30: 300-3500 K).
TEMPERATURE_RANGE_K = (300.0, 2500.0)
#: Absolute pressures the model accepts [Pa] (ideal gas; 0.01 to 200 bar).
PRESSURE_RANGE_PA = (1e3, 2e7)
#: Steam-to-carbon ratios accepted [mol H2O per mol hydrocarbon C].
STEAM_TO_CARBON_RANGE = (0.0, 10.0)
#: Oxygen-to-carbon ratios accepted [mol O2 per mol hydrocarbon C] (0.5 is partial oxidation).
OXYGEN_TO_CARBON_RANGE = (0.0, 0.7)
#: CO2 co-feed ratios accepted [mol CO2 per mol hydrocarbon C].
CO2_TO_CARBON_RANGE = (0.0, 3.0)
#: Mixed-feed inlet temperatures accepted [K].
INLET_TEMPERATURE_RANGE_K = (300.0, 1200.0)
#: Approaches to equilibrium accepted [K].
APPROACH_RANGE_K = (0.0, 100.0)
#: Shift stage temperatures accepted [K] (150-550 degC; iron-chromium high-temperature and
#: copper-zinc low-temperature catalysts work inside it, common practice, no source).
SHIFT_TEMPERATURE_RANGE_K = (423.15, 823.15)
#: Allowed Gibbs energy offset of catalyst carbon above graphite [J mol-1].
CATALYST_OFFSET_RANGE = (0.0, 60_000.0)
#: Default temperature above which higher hydrocarbons (C2+) entering the primary reformer are
#: flagged as a cracking risk [K]: 600 degC, common practice, no source.
CRACKING_TEMPERATURE_K = 873.15
#: Most points on one window axis.
MAX_AXIS_POINTS = 401
#: Longest title, description or notes accepted [characters].
MAX_TEXT_CHARS = 100_000
#: Display unit systems a scenario may ask for (``[display] units``).
UNIT_SYSTEMS = ("metric", "us")

RATIO_WORDS = {
    "steam_to_carbon": "mol H2O per mol hydrocarbon carbon",
    "oxygen_to_carbon": "mol O2 per mol hydrocarbon carbon",
    "co2_to_carbon": "mol CO2 per mol hydrocarbon carbon",
}
RATIO_RANGES = {
    "steam_to_carbon": STEAM_TO_CARBON_RANGE,
    "oxygen_to_carbon": OXYGEN_TO_CARBON_RANGE,
    "co2_to_carbon": CO2_TO_CARBON_RANGE,
}


class _Required:
    def __repr__(self) -> str:
        return "<required>"


#: Default of a key that must be given (inside its table, when the table is present).
REQUIRED = _Required()


@dataclass(frozen=True)
class Key:
    """One scenario key.

    Attributes
    ----------
    path : str
        Dotted key path in the file, e.g. ``"window.temperature.from"``.
    kind : str
        ``text``, ``quantity`` (a string with a unit), ``ratio``/``number`` (plain numbers),
        ``fraction`` (a number or per cent), ``integer``, ``boolean``, ``choice``,
        ``composition`` or ``quantity_list``.
    dimension : str
        ``temperature``, ``temperature_difference``, ``pressure``, ``molar_flow``, ``power``,
        ``molar_energy``, ``ratio``, ``fraction``, ``count`` or ``""``.
    label, help : str
        Short label (form, sheet) and one sentence of help.
    range : tuple of float or None
        Allowed SI values, both ends included (the lower excluded when `open_low`).
    default : object
        SI value when absent; :data:`REQUIRED` when it must be given; None for "no value".
    unit : str
        Metric display unit used when no typed text is kept (form, writer).
    name : str
        Short id of the form widget.
    attr : str
        Attribute path on :class:`thermo.scenario.Scenario` that holds the SI value.
    choices : tuple of str
        Allowed values of a ``choice``.
    what : str
        Words appended to a range message (plant keys, ratios).
    example : str
        What the form shows for a key that has no value yet.
    option : str
        CLI option that overrides the key (``explorer point``), or ``""``.
    """

    path: str
    kind: str
    dimension: str
    label: str
    help: str
    range: tuple[float, float] | None = None
    default: object = REQUIRED
    unit: str = ""
    name: str = ""
    attr: str = ""
    choices: tuple[str, ...] = ()
    what: str = ""
    example: str = ""
    option: str = ""
    open_low: bool = False

    @property
    def table(self) -> str:
        """The table holding the key ("" for the top level)."""
        return self.path.rpartition(".")[0]

    @property
    def leaf(self) -> str:
        """The key's own name inside its table."""
        return self.path.rpartition(".")[2]

    @property
    def required(self) -> bool:
        return self.default is REQUIRED


def _axis(name: str, short: str, label: str, dim: str, rng, unit: str, ex: tuple) -> list[Key]:
    kind = "quantity" if dim in ("temperature", "pressure") else "ratio"
    what = RATIO_WORDS.get(name, "")
    base = f"window.{name}"
    return [
        Key(f"{base}.from", kind, dim, f"Window {label} from", f"First {label} of the window.",
            rng, unit=unit, name=f"{short}_from", attr=f"window.{name}.start", what=what,
            example=ex[0]),
        Key(f"{base}.to", kind, dim, f"Window {label} to", f"Last {label} of the window.",
            rng, unit=unit, name=f"{short}_to", attr=f"window.{name}.stop", what=what,
            example=ex[1]),
        Key(f"{base}.points", "integer", "count", f"{label} points",
            f"Evenly spaced values of {label}, 1 to {MAX_AXIS_POINTS}.", (1, MAX_AXIS_POINTS),
            name=f"{short}_points", attr=f"window.{name}.points", example=ex[2]),
    ]


def _plant(key, kind, dim, rng, default, unit, label, what) -> Key:
    return Key(f"plant.{key}", kind, dim, label, f"{label} (default common practice, no source).",
               rng, default, unit=unit, name=f"plant_{key}", attr=f"plant.{key}", what=what)


_T, _DT, _P = "temperature", "temperature_difference", "pressure"

#: Every scenario key, in file order.
KEYS: tuple[Key, ...] = tuple([
    Key("title", "text", "", "Title", "Name of the study.", name="title", attr="title"),
    Key("description", "text", "", "Description", "What the study is about.", default="",
        name="description", attr="description"),
    Key("notes", "text", "", "Review notes", "Free text kept with the scenario.", default="",
        name="notes", attr="notes"),
    Key("feed.composition", "composition", "fraction", "Dry feed, mole fractions",
        "Mole fractions of the dry hydrocarbon feed, e.g. CH4=0.95, C2H6=0.03, N2=0.02.",
        name="composition", attr="feed.composition", option="--feed"),
    Key("feed.flow", "quantity", "molar_flow", "Dry feed flow",
        "Dry hydrocarbon feed before steam and co-feeds, in kmol/h, kg/h or Nm3/h.",
        (0.0, math.inf), unit="kmol/h", name="flow", attr="feed.flow", open_low=True),
    Key("feed.inlet_temperature", "quantity", _T, "Feed inlet temperature",
        "Mixed feed (gas, steam and co-feeds) entering the reformer.",
        INLET_TEMPERATURE_RANGE_K, unit="degC", name="inlet_temperature",
        attr="feed.inlet_temperature", option="--inlet-temperature"),
    Key("feed.steam_to_carbon", "ratio", "ratio", "Design steam-to-carbon",
        "mol H2O per mol hydrocarbon carbon.", STEAM_TO_CARBON_RANGE, name="steam_to_carbon",
        attr="feed.steam_to_carbon", what=RATIO_WORDS["steam_to_carbon"],
        option="--steam-to-carbon"),
    Key("feed.oxygen_to_carbon", "ratio", "ratio", "O2 co-feed per C",
        "mol O2 per mol hydrocarbon carbon.", OXYGEN_TO_CARBON_RANGE, 0.0,
        name="oxygen_to_carbon", attr="feed.oxygen_to_carbon",
        what=RATIO_WORDS["oxygen_to_carbon"], option="--oxygen-to-carbon"),
    Key("feed.co2_to_carbon", "ratio", "ratio", "CO2 co-feed per C",
        "mol CO2 per mol hydrocarbon carbon (added to any CO2 in the gas).",
        CO2_TO_CARBON_RANGE, 0.0, name="co2_to_carbon", attr="feed.co2_to_carbon",
        what=RATIO_WORDS["co2_to_carbon"], option="--co2-to-carbon"),
    Key("design_point.temperature", "quantity", _T, "Design outlet temperature",
        "Reformer outlet temperature of the design point.", TEMPERATURE_RANGE_K, unit="degC",
        name="temperature", attr="temperature", option="--temperature"),
    Key("design_point.pressure", "quantity", _P, "Design outlet pressure",
        "Outlet pressure, absolute (bar) or gauge (barg).", PRESSURE_RANGE_PA, unit="bar",
        name="pressure", attr="pressure", option="--pressure"),
    Key("design_point.approach", "quantity", _DT, "Approach to equilibrium",
        "Temperature difference: equilibrium at T minus this.", APPROACH_RANGE_K, 0.0,
        unit="K", name="approach", attr="approach", option="--approach"),
    *_axis("temperature", "t", "T", _T, TEMPERATURE_RANGE_K, "degC",
           ("700 degC", "950 degC", "26")),
    *_axis("pressure", "p", "P", _P, PRESSURE_RANGE_PA, "bar", ("10 bar", "40 bar", "7")),
    *_axis("steam_to_carbon", "s", "S/C", "ratio", STEAM_TO_CARBON_RANGE, "", ("1.5", "5", "8")),
    *_axis("oxygen_to_carbon", "ox", "O2/C", "ratio", OXYGEN_TO_CARBON_RANGE, "",
           ("0", "0.5", "3")),
    *_axis("co2_to_carbon", "co2", "CO2/C", "ratio", CO2_TO_CARBON_RANGE, "", ("0", "0.5", "3")),
    Key("limits.max_methane_slip_dry", "fraction", "fraction", "Max methane slip, dry",
        "Highest CH4 in the dry outlet gas, e.g. '4 mol%'.", default=None, name="max_slip",
        attr="limits.max_methane_slip_dry", unit="mol%"),
    Key("limits.carbon_free", "boolean", "", "Carbon-free required",
        "Points where carbon is stable are outside the window.", default=True,
        name="carbon_free", attr="limits.carbon_free"),
    Key("limits.min_h2_yield", "number", "ratio", "Min H2 yield (mol/mol C)",
        "Lowest mol H2 per mol hydrocarbon carbon.", (0.0, math.inf), None, name="min_yield",
        attr="limits.min_h2_yield", what="mol H2 per mol hydrocarbon C"),
    Key("limits.max_duty", "quantity", "power", "Max duty",
        "Highest radiant duty of the primary reformer.", default=None, unit="MW",
        name="max_duty", attr="limits.max_duty"),
    Key("limits.max_fired_duty", "quantity", "power", "Max fired duty (LHV; with [plant])",
        "Highest fired duty of the furnace; needs a [plant] table.", default=None, unit="MW",
        name="max_fired_duty", attr="limits.max_fired_duty"),
    Key("train.pre_reformer.inlet_temperature", "quantity", _T, "Pre-reformer inlet T",
        "Mixed feed entering the adiabatic pre-reformer.", INLET_TEMPERATURE_RANGE_K,
        unit="degC", name="pre_inlet", attr="train.pre_reformer.inlet_temperature",
        example="490 degC"),
    Key("train.secondary_reformer.oxidant", "choice", "", "Oxidant",
        "What is blown into the secondary reformer.", choices=("oxygen", "air"),
        name="oxidant", attr="train.secondary_reformer.oxidant", example="air"),
    Key("train.secondary_reformer.oxygen_to_carbon", "ratio", "ratio", "O2 per hydrocarbon C",
        "O2 in the oxidant per hydrocarbon carbon of the fresh feed.", OXYGEN_TO_CARBON_RANGE,
        name="sec_ratio", attr="train.secondary_reformer.oxygen_to_carbon",
        what=RATIO_WORDS["oxygen_to_carbon"], example="0.25"),
    Key("train.secondary_reformer.oxidant_temperature", "quantity", _T, "Oxidant temperature",
        "Temperature of the oxidant.", INLET_TEMPERATURE_RANGE_K, unit="degC",
        name="sec_temperature", attr="train.secondary_reformer.oxidant_temperature",
        example="550 degC"),
    Key("train.secondary_reformer.approach", "quantity", _DT, "Approach (secondary)",
        "Approach to equilibrium of the secondary reformer.", APPROACH_RANGE_K, 0.0, unit="K",
        name="sec_approach", attr="train.secondary_reformer.approach", example="0 K"),
    Key("train.high_temperature_shift.temperature", "quantity", _T, "HT shift temperature",
        "High-temperature shift stage temperature.", SHIFT_TEMPERATURE_RANGE_K, unit="degC",
        name="hts_temperature", attr="train.high_temperature_shift.temperature",
        example="360 degC"),
    Key("train.high_temperature_shift.approach", "quantity", _DT, "HT shift approach",
        "Shift equilibrium taken at T plus this.", APPROACH_RANGE_K, 0.0, unit="K",
        name="hts_approach", attr="train.high_temperature_shift.approach", example="10 K"),
    Key("train.low_temperature_shift.temperature", "quantity", _T, "LT shift temperature",
        "Low-temperature shift stage temperature.", SHIFT_TEMPERATURE_RANGE_K, unit="degC",
        name="lts_temperature", attr="train.low_temperature_shift.temperature",
        example="210 degC"),
    Key("train.low_temperature_shift.approach", "quantity", _DT, "LT shift approach",
        "Shift equilibrium taken at T plus this.", APPROACH_RANGE_K, 0.0, unit="K",
        name="lts_approach", attr="train.low_temperature_shift.approach", example="10 K"),
    Key("carbon.path_temperatures", "quantity_list", _T, "Tube path temperatures",
        "Gas temperatures along the primary tube, inlet to outlet, e.g. 560 degC, 640 degC; "
        "empty for a linear rise.", TEMPERATURE_RANGE_K, (), unit="degC", name="carbon_path",
        attr="carbon.path_temperatures"),
    Key("carbon.reference", "choice", "", "Carbon reference",
        "Carbon the verdict is referred to.", default="graphite",
        choices=("graphite", "catalyst"), name="carbon_reference", attr="carbon.reference"),
    Key("carbon.catalyst_carbon_offset", "quantity", "molar_energy", "Catalyst carbon offset",
        "Molar Gibbs energy of catalyst carbon above graphite, e.g. 8 kJ/mol.",
        CATALYST_OFFSET_RANGE, None, unit="kJ/mol", name="carbon_offset",
        attr="carbon.catalyst_carbon_offset"),
    Key("carbon.higher_hydrocarbon_cracking_temperature", "quantity", _T,
        "C2+ cracking flag above", "Primary inlet temperature above which C2+ is flagged.",
        TEMPERATURE_RANGE_K, CRACKING_TEMPERATURE_K, unit="degC", name="cracking_temperature",
        attr="carbon.cracking_temperature"),
    _plant("h2_recovery", "fraction", "fraction", (0.5, 1.0), 0.88, "",
           "H2 recovery of the pressure-swing unit", "H2 recovered by the purification unit"),
    _plant("excess_air", "fraction", "fraction", (0.0, 1.0), 0.10, "",
           "Excess combustion air", "air beyond the stoichiometric need"),
    _plant("air_preheat_temperature", "quantity", _T, (300.0, 1100.0), 573.15, "degC",
           "Combustion air preheat", "combustion air temperature"),
    _plant("bridgewall_temperature", "quantity", _T, (1000.0, 1700.0), 1303.15, "degC",
           "Bridgewall temperature", "flue gas leaving the radiant box"),
    _plant("stack_temperature", "quantity", _T, (300.0, 700.0), 413.15, "degC",
           "Stack temperature", "flue gas at the stack"),
    _plant("supply_temperature", "quantity", _T, (300.0, 400.0), 303.15, "degC",
           "Supply temperature", "gas and air as they arrive"),
    _plant("process_gas_cooled_temperature", "quantity", _T, (300.0, 800.0), 453.15, "degC",
           "Process gas cooled to", "process gas cooled to"),
    _plant("steam_pressure", "quantity", _P, (2e5, 1.6e7), 4.2e6, "bar",
           "Steam header pressure", "steam header pressure"),
    _plant("steam_temperature", "quantity", _T, (373.15, 873.15), 653.15, "degC",
           "Steam header temperature", "steam header temperature"),
    _plant("feed_water_temperature", "quantity", _T, (300.0, 573.15), 378.15, "degC",
           "Boiler feed water temperature", "boiler feed water"),
    _plant("steam_credit_efficiency", "number", "ratio", (0.5, 1.0), 0.90, "",
           "Boiler efficiency behind the steam credit",
           "boiler efficiency behind the steam credit"),
    Key("display.units", "choice", "", "Display units",
        "Units the app and the review file show: metric or US customary.", default="metric",
        choices=UNIT_SYSTEMS, name="display_units", attr="display_units"),
])

#: Keys by path and by form name.
BY_PATH: dict[str, Key] = {k.path: k for k in KEYS}
BY_NAME: dict[str, Key] = {k.name: k for k in KEYS}

#: Tables that may be left out of a file (the rest are required).
OPTIONAL_TABLES = ("limits", "train", "train.pre_reformer", "train.secondary_reformer",
                   "train.high_temperature_shift", "train.low_temperature_shift", "carbon",
                   "plant", "display", "window.oxygen_to_carbon", "window.co2_to_carbon")


def keys_of(table: str) -> list[Key]:
    """The keys directly inside `table` ("" for the top level), in file order."""
    return [k for k in KEYS if k.table == table]


def known_names(table: str) -> tuple[str, ...]:
    """Names allowed directly inside `table`: its keys and sub-tables, in file order."""
    out: list[str] = []
    depth = 0 if not table else table.count(".") + 1
    for k in KEYS:
        parts = k.path.split(".")
        if ".".join(parts[:depth]) == table and len(parts) > depth and parts[depth] not in out:
            out.append(parts[depth])
    return tuple(out)


def suggest(name: str, known) -> str:
    """``"; did you mean 'X'?"`` for the nearest known name (difflib), or ``""``."""
    known = list(known)
    lower = {k.lower(): k for k in known}
    if name.lower() in lower:
        return f"; did you mean {lower[name.lower()]!r}?"
    close = difflib.get_close_matches(name, known, n=1, cutoff=0.6)
    return f"; did you mean {close[0]!r}?" if close else ""


# ----------------------------------------------------------------------------- value parsing


def fmt(x: float) -> str:
    """A bound as messages show it (6 significant digits)."""
    return f"{x:.6g}"


def temperature_words(lo: float, hi: float) -> str:
    return (f"a temperature between {fmt(lo - 273.15)} and {fmt(hi - 273.15)} degC "
            f"({fmt(lo)} to {fmt(hi)} K)")


def pressure_words(lo: float, hi: float) -> str:
    return (f"an absolute pressure between {fmt(lo / 1e5)} and {fmt(hi / 1e5)} bar "
            f"({fmt(lo)} to {fmt(hi)} Pa)")


def approach_words(lo: float, hi: float) -> str:
    return f"a temperature difference between {fmt(lo)} and {fmt(hi)} K"


def ratio_words(name: str, lo: float, hi: float) -> str:
    return f"a number between {fmt(lo)} and {fmt(hi)} ({RATIO_WORDS[name]})"


def plain_number(value: object, field: str, what: str) -> float:
    """A finite plain number (not a bool, not a string) or InputError."""
    if isinstance(value, bool) or not isinstance(value, (Real, np.number)):
        raise InputError(field, value, f"a plain number ({what}), e.g. 3.0")
    x = float(value)
    if not math.isfinite(x):
        raise InputError(field, value, f"a finite number ({what})")
    return x


def text(value: object, field: str) -> str:
    """Free text of at most :data:`MAX_TEXT_CHARS` characters."""
    if not isinstance(value, str):
        raise InputError(field, value, "a text string in quotes")
    if len(value) > MAX_TEXT_CHARS:
        raise InputError(field, f"{len(value):,} characters",
                         f"text of at most {MAX_TEXT_CHARS:,} characters")
    if any(0xD800 <= ord(c) <= 0xDFFF for c in value):
        raise InputError(field, value, "text without unpaired surrogate characters")
    return value


def _range_words(key: Key, lo: float, hi: float) -> str:
    dim, what = key.dimension, key.what
    if key.path == "feed.flow":
        return "a flow above 0"
    if key.path == "limits.min_h2_yield":
        return "a number of 0 or more"
    if dim == "temperature":
        return temperature_words(lo, hi) + (f" ({what})" if key.table == "plant" else "")
    if dim == "pressure":
        return pressure_words(lo, hi) + (f" ({what})" if key.table == "plant" else "")
    if dim == "temperature_difference":
        return approach_words(lo, hi)
    if dim == "fraction":
        return f"a fraction from {fmt(lo)} to {fmt(hi)} ({what}), e.g. 0.88 or '88 %'"
    if dim == "molar_energy":
        return (f"an offset from {lo / 1000:g} to {hi / 1000:g} kJ/mol (catalyst carbon is "
                "less stable than graphite, never more)")
    if key.kind == "ratio":
        return f"a number between {fmt(lo)} and {fmt(hi)} ({what})"
    return f"a number from {fmt(lo)} to {fmt(hi)} ({what})"


def check_range(key: Key, x: float, raw: object, field: str | None = None) -> float:
    """`x` [SI] inside `key`'s range, or InputError quoting `raw`."""
    if key.range is None:
        return x
    lo, hi = key.range
    low_ok = lo < x if key.open_low else lo <= x
    if not (math.isfinite(x) and low_ok and x <= hi):
        raise InputError(field or key.path, raw, _range_words(key, lo, hi))
    return x


def _molar_energy_J(value: object, field: str) -> float:
    allowed = "a molar energy with its unit, e.g. \"8 kJ/mol\""
    if not isinstance(value, str):
        raise InputError(field, value, allowed)
    q = units.parse_quantity(value, field)
    try:
        return float(q.to("J/mol").magnitude)
    except Exception:  # pint's DimensionalityError and friends
        raise InputError(field, value, allowed) from None


def quantity_SI(key: Key, raw: object, field: str, molar_mass: float = math.nan) -> float:
    """A quantity's SI value (unchecked range) through :mod:`thermo.units`."""
    dim = key.dimension
    if dim == "temperature":
        return units.temperature_K(raw, field)
    if dim == "temperature_difference":
        return units.temperature_difference_K(raw, field)
    if dim == "pressure":
        return units.pressure_Pa(raw, field)
    if dim == "molar_flow":
        return units.molar_flow_mol_s(raw, field, molar_mass)
    if dim == "power":
        return units.power_W(raw, field)
    if dim == "molar_energy":
        return _molar_energy_J(raw, field)
    raise ValueError(f"no quantity dimension {dim!r}")


def parse_value(key: Key, raw: object, field: str | None = None, molar_mass: float = math.nan):
    """What the user typed for `key` as its SI value (range checked).

    Parameters
    ----------
    key : Key
        The schema row.
    raw : object
        The TOML value (or the form's converted text).
    field : str, optional
        Name for messages (an option name such as ``"--pressure"``); the key path by default.
    molar_mass : float
        Mean molar mass of the dry feed [kg mol-1], for a mass flow.

    Returns
    -------
    object
        SI float, int, bool, str, tuple of floats, or a composition.

    Raises
    ------
    InputError
        Naming `field` and quoting `raw` exactly.
    """
    where = field or key.path
    kind = key.kind
    if kind == "text":
        return text(raw, where)
    if kind == "boolean":
        if not isinstance(raw, bool):
            raise InputError(where, raw, "true or false (without quotes)")
        return raw
    if kind == "choice":
        if raw not in key.choices:
            allowed = " or ".join(f'"{c}"' for c in key.choices)
            raise InputError(where, raw, allowed + (suggest(raw, key.choices)
                                                    if isinstance(raw, str) else ""))
        return raw
    if kind == "integer":
        lo, hi = key.range
        allowed = f"a whole number from {lo} to {hi}"
        if isinstance(raw, bool) or not isinstance(raw, (int, np.integer)):
            raise InputError(where, raw, allowed)
        if not lo <= int(raw) <= hi:
            raise InputError(where, raw, allowed)
        return int(raw)
    if kind == "ratio":
        name = key.leaf if key.leaf in RATIO_WORDS else key.path.split(".")[1]
        return check_range(key, plain_number(raw, where, RATIO_WORDS[name]), raw, where)
    if kind == "number":
        return check_range(key, plain_number(raw, where, key.what), raw, where)
    if kind == "fraction":
        if key.range is None:
            return units.fraction(raw, where)
        try:
            x = units.fraction(raw, where)
        except InputError:
            lo, hi = key.range
            raise InputError(where, raw, _range_words(key, lo, hi)) from None
        return check_range(key, x, raw, where)
    if kind == "quantity":
        return check_range(key, quantity_SI(key, raw, where, molar_mass), raw, where)
    if kind == "quantity_list":
        if not isinstance(raw, list):
            raise InputError(where, raw, 'a list of temperatures, e.g. ["560 degC", "640 degC"]')
        return tuple(check_range(key, quantity_SI(key, item, f"{where}[{i}]"), item,
                                 f"{where}[{i}]") for i, item in enumerate(raw))
    if kind == "composition":
        from thermo.scenario_parse import parse_composition

        return parse_composition(raw, where)
    raise ValueError(f"unknown kind {kind!r}")
