"""Scenario files: TOML text into frozen dataclasses, every unit converted here.

A scenario names the dry hydrocarbon feed, the design point, the operating window to map and
the review limits. Quantities are strings with units (parsed by :mod:`thermo.units`), ratios
are plain numbers; inside the dataclasses everything is SI floats (K, Pa, mol s-1, W).

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
    [plant]                                    # optional: the hydrogen plant around it
    h2_recovery = 0.88                         # every key optional; defaults: PLANT_DEFAULTS
    excess_air = "10 %"
    air_preheat_temperature = "300 degC"
    bridgewall_temperature = "1030 degC"
    stack_temperature = "140 degC"
    supply_temperature = "30 degC"
    process_gas_cooled_temperature = "180 degC"
    steam_pressure = "42 bar"
    steam_temperature = "380 degC"
    feed_water_temperature = "105 degC"
    steam_credit_efficiency = 0.90

Every error is a :class:`thermo.errors.InputError` naming the key path (``"window.pressure.from"``,
``"feed.composition.CH4"``), the value and what is allowed.
"""

from __future__ import annotations

import dataclasses
import difflib
import math
import os
import tomllib
from collections.abc import Iterator, Mapping
from dataclasses import dataclass, field
from numbers import Real
from pathlib import Path

import numpy as np

from thermo import units
from thermo.errors import InputError
from thermo.species import GAS_SPECIES, molar_mass

__all__ = [
    "FEED_COMPONENTS",
    "HYDROCARBONS",
    "COFEEDS",
    "DEMO_PATH",
    "TEMPERATURE_RANGE_K",
    "PRESSURE_RANGE_PA",
    "STEAM_TO_CARBON_RANGE",
    "OXYGEN_TO_CARBON_RANGE",
    "CO2_TO_CARBON_RANGE",
    "INLET_TEMPERATURE_RANGE_K",
    "APPROACH_RANGE_K",
    "MAX_AXIS_POINTS",
    "MAX_WINDOW_POINTS",
    "COMPOSITION_SUM_TOLERANCE",
    "MAX_SCENARIO_BYTES",
    "MAX_TEXT_CHARS",
    "Composition",
    "Axis",
    "Feed",
    "Window",
    "Limits",
    "PreReformer",
    "SecondaryReformer",
    "ShiftStage",
    "Train",
    "Plant",
    "PLANT_KEYS",
    "PLANT_DEFAULTS",
    "parse_plant",
    "plant_toml",
    "OXIDANTS",
    "SHIFT_TEMPERATURE_RANGE_K",
    "Scenario",
    "parse_scenario",
    "load_scenario",
    "parse_composition",
    "check_temperature",
    "check_pressure",
    "check_inlet_temperature",
    "check_approach",
    "check_ratio",
    "check_shift_temperature",
    "validate_point_overrides",
]

#: Species allowed in ``feed.composition`` (the dry hydrocarbon feed and its inerts).
FEED_COMPONENTS: tuple[str, ...] = ("CH4", "C2H6", "C3H8", "CO2", "N2", "Ar", "H2")

#: Hydrocarbons and their carbon atoms; only these count in the steam-to-carbon ratio.
HYDROCARBONS: dict[str, int] = {"CH4": 1, "C2H6": 2, "C3H8": 3}

#: Co-feed ratios that may form the fourth window axis.
COFEEDS: tuple[str, ...] = ("oxygen_to_carbon", "co2_to_carbon")

#: Oxidants of the secondary reformer: mole fractions of O2, N2 and Ar. Dry air: O2 20.946,
#: N2 78.084, Ar 0.934 mol % (U.S. Standard Atmosphere 1976, NOAA/NASA/USAF, table 3; trace
#: gases folded into N2 so the fractions sum to 1; recalled from memory).
OXIDANTS: dict[str, dict[str, float]] = {
    "oxygen": {"O2": 1.0},
    "air": {"O2": 0.20946, "N2": 0.78120, "Ar": 0.00934},
}

#: Shift stage temperatures accepted [K] (150-550 degC; iron-chromium high-temperature and
#: copper-zinc low-temperature catalysts work inside it, common practice, no source).
SHIFT_TEMPERATURE_RANGE_K = (423.15, 823.15)

#: The demo scenario, loaded when no file is named.
DEMO_PATH: Path = Path(__file__).resolve().parent.parent / "scenarios" / "demo.toml"

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
#: Most points on one window axis.
MAX_AXIS_POINTS = 401
#: Most points in the whole window (product of the axes).
MAX_WINDOW_POINTS = 2_000_000
#: Largest scenario file accepted [bytes]; a real one is a few kB.
MAX_SCENARIO_BYTES = 1_000_000
#: Longest title, description or notes accepted [characters].
MAX_TEXT_CHARS = 100_000
#: How far the composition may sum from 1 before it is refused (it is then normalised).
COMPOSITION_SUM_TOLERANCE = 1e-3

_RATIO_RANGES = {
    "steam_to_carbon": STEAM_TO_CARBON_RANGE,
    "oxygen_to_carbon": OXYGEN_TO_CARBON_RANGE,
    "co2_to_carbon": CO2_TO_CARBON_RANGE,
}
_RATIO_WORDS = {
    "steam_to_carbon": "mol H2O per mol hydrocarbon carbon",
    "oxygen_to_carbon": "mol O2 per mol hydrocarbon carbon",
    "co2_to_carbon": "mol CO2 per mol hydrocarbon carbon",
}


class _Missing:
    def __repr__(self) -> str:
        return "<missing>"


_MISSING = _Missing()


# ------------------------------------------------------------------------------ range checks


def _fmt(x: float) -> str:
    return f"{x:.6g}"


def check_temperature(value_K: float, field: str, raw: object = None) -> float:
    """Refuse a temperature outside :data:`TEMPERATURE_RANGE_K`.

    Parameters
    ----------
    value_K : float
        Temperature [K].
    field : str
        Key path or option name for the message.
    raw : object, optional
        What the user typed, shown in the message instead of `value_K`.

    Returns
    -------
    float
        The same temperature [K].
    """
    return _check_range(value_K, field, TEMPERATURE_RANGE_K, _temperature_words, raw)


def check_inlet_temperature(value_K: float, field: str, raw: object = None) -> float:
    """Refuse a mixed-feed inlet temperature outside :data:`INLET_TEMPERATURE_RANGE_K` [K]."""
    return _check_range(value_K, field, INLET_TEMPERATURE_RANGE_K, _temperature_words, raw)


def check_pressure(value_Pa: float, field: str, raw: object = None) -> float:
    """Refuse an absolute pressure outside :data:`PRESSURE_RANGE_PA`.

    Parameters
    ----------
    value_Pa : float
        Absolute pressure [Pa].
    field : str
        Key path or option name for the message.
    raw : object, optional
        What the user typed, shown in the message instead of `value_Pa`.

    Returns
    -------
    float
        The same pressure [Pa].
    """
    return _check_range(value_Pa, field, PRESSURE_RANGE_PA, _pressure_words, raw)


def check_approach(value_K: float, field: str, raw: object = None) -> float:
    """Refuse an approach to equilibrium outside :data:`APPROACH_RANGE_K` [K]."""

    def words(lo: float, hi: float) -> str:
        return f"a temperature difference between {_fmt(lo)} and {_fmt(hi)} K"

    return _check_range(value_K, field, APPROACH_RANGE_K, words, raw)


def check_ratio(name: str, value: float, field: str) -> float:
    """Refuse a feed ratio outside its range.

    Parameters
    ----------
    name : {"steam_to_carbon", "oxygen_to_carbon", "co2_to_carbon"}
        Which ratio.
    value : float
        The ratio [mol per mol hydrocarbon carbon].
    field : str
        Key path or option name for the message.

    Returns
    -------
    float
        The same ratio [-].
    """
    if name not in _RATIO_RANGES:
        raise ValueError(f"unknown ratio {name!r}; known: {', '.join(_RATIO_RANGES)}")

    def words(lo: float, hi: float) -> str:
        return f"a number between {_fmt(lo)} and {_fmt(hi)} ({_RATIO_WORDS[name]})"

    return _check_range(value, field, _RATIO_RANGES[name], words)


def _temperature_words(lo: float, hi: float) -> str:
    return (
        f"a temperature between {_fmt(lo - 273.15)} and {_fmt(hi - 273.15)} degC "
        f"({_fmt(lo)} to {_fmt(hi)} K)"
    )


def _pressure_words(lo: float, hi: float) -> str:
    return (
        f"an absolute pressure between {_fmt(lo / 1e5)} and {_fmt(hi / 1e5)} bar "
        f"({_fmt(lo)} to {_fmt(hi)} Pa)"
    )


def _check_range(
    value: float, field: str, bounds: tuple[float, float], words, raw: object = None
) -> float:
    lo, hi = bounds
    if not (math.isfinite(value) and lo <= value <= hi):
        raise InputError(field, value if raw is None else raw, words(lo, hi))
    return value


# --------------------------------------------------------------------------------- dataclasses


class Composition(Mapping[str, float]):
    """An immutable, hashable mapping of species to mole fractions [-].

    Parameters
    ----------
    items : iterable of (str, float)
        Species and mole fraction; kept in the given order.
    """

    __slots__ = ("_items", "_dict")

    def __init__(self, items) -> None:
        pairs = tuple((str(k), float(v)) for k, v in dict(items).items())
        object.__setattr__(self, "_items", pairs)
        object.__setattr__(self, "_dict", dict(pairs))

    def __getitem__(self, key: str) -> float:
        return self._dict[key]

    def __iter__(self) -> Iterator[str]:
        return iter(self._dict)

    def __len__(self) -> int:
        return len(self._items)

    def __hash__(self) -> int:
        return hash(frozenset(self._items))

    def __eq__(self, other: object) -> bool:
        if isinstance(other, Mapping):
            return self._dict == dict(other)
        return NotImplemented

    def __setattr__(self, name: str, value: object) -> None:
        raise AttributeError("Composition is immutable")

    def __reduce__(self):
        return (Composition, (self._items,))

    def __repr__(self) -> str:
        inner = ", ".join(f"{k!r}: {v!r}" for k, v in self._items)
        return f"Composition({{{inner}}})"


@dataclass(frozen=True)
class Axis:
    """One window axis: evenly spaced values from `start` to `stop`.

    Attributes
    ----------
    start, stop : float
        First and last value [SI unit of the axis: K, Pa, or mol per mol].
    points : int
        Number of values, at least 1.
    """

    start: float
    stop: float
    points: int

    def values(self) -> np.ndarray:
        """The axis values, ``numpy.linspace(start, stop, points)`` [SI unit of the axis]."""
        return np.linspace(self.start, self.stop, self.points)


@dataclass(frozen=True)
class Feed:
    """The reformer feed: dry hydrocarbon gas, steam and co-feeds.

    Attributes
    ----------
    composition : Composition
        Mole fractions of the dry hydrocarbon feed [-], summing to 1.
    flow : float
        Dry hydrocarbon feed before steam and co-feeds [mol s-1].
    inlet_temperature : float
        Temperature of the mixed feed (gas + steam + co-feeds) [K].
    steam_to_carbon : float
        Steam per hydrocarbon carbon [mol mol-1].
    oxygen_to_carbon : float
        O2 co-feed per hydrocarbon carbon [mol mol-1].
    co2_to_carbon : float
        CO2 co-feed per hydrocarbon carbon [mol mol-1] (added to any CO2 in the gas).
    """

    composition: Mapping[str, float]
    flow: float
    inlet_temperature: float
    steam_to_carbon: float
    oxygen_to_carbon: float = 0.0
    co2_to_carbon: float = 0.0

    def carbon_flow(self) -> float:
        """Carbon in the hydrocarbons of the feed [mol s-1].

        Returns
        -------
        float
            ``flow * sum(x_i * nC_i)`` over CH4, C2H6, C3H8 [mol s-1]; carbon in CO2 excluded.
        """
        return self.flow * sum(
            self.composition.get(name, 0.0) * n for name, n in HYDROCARBONS.items()
        )

    def inlet_flows(
        self, steam_to_carbon=None, oxygen_to_carbon=None, co2_to_carbon=None
    ) -> np.ndarray:
        """Inlet flow of every gas species, in :data:`thermo.species.GAS_SPECIES` order.

        Parameters
        ----------
        steam_to_carbon, oxygen_to_carbon, co2_to_carbon : float or array_like, optional
            Ratios [mol per mol hydrocarbon carbon] replacing the feed's own; arrays broadcast
            against each other.

        Returns
        -------
        numpy.ndarray, shape (S,) + broadcast shape of the ratios
            Inlet flows [mol s-1]: dry feed by species, H2O = S/C * carbon flow,
            O2 = O2/C * carbon flow, CO2 = gas CO2 + CO2/C * carbon flow.
        """
        sc = np.asarray(
            self.steam_to_carbon if steam_to_carbon is None else steam_to_carbon, dtype=float
        )
        oc = np.asarray(
            self.oxygen_to_carbon if oxygen_to_carbon is None else oxygen_to_carbon, dtype=float
        )
        cc = np.asarray(self.co2_to_carbon if co2_to_carbon is None else co2_to_carbon, dtype=float)
        shape = np.broadcast_shapes(sc.shape, oc.shape, cc.shape)
        out = np.zeros((len(GAS_SPECIES),) + shape)
        for name, x in self.composition.items():
            out[GAS_SPECIES.index(name)] += self.flow * x
        carbon = self.carbon_flow()
        out[GAS_SPECIES.index("H2O")] += sc * carbon
        out[GAS_SPECIES.index("O2")] += oc * carbon
        out[GAS_SPECIES.index("CO2")] += cc * carbon
        return out

    def mean_molar_mass(self) -> float:
        """Mean molar mass of the dry hydrocarbon feed [kg mol-1]."""
        return _mean_molar_mass(self.composition)


@dataclass(frozen=True)
class Window:
    """The operating window to map.

    Attributes
    ----------
    temperature : Axis
        Reformer outlet temperature [K].
    pressure : Axis
        Absolute outlet pressure [Pa].
    steam_to_carbon : Axis
        Steam per hydrocarbon carbon [mol mol-1].
    cofeed : {"oxygen_to_carbon", "co2_to_carbon"} or None
        Name of the optional fourth axis.
    cofeed_axis : Axis or None
        Its values [mol per mol hydrocarbon carbon].
    """

    temperature: Axis
    pressure: Axis
    steam_to_carbon: Axis
    cofeed: str | None = None
    cofeed_axis: Axis | None = None

    def axes(self) -> dict[str, Axis]:
        """The axes present, by name, in the order of the dataset dimensions."""
        out = {
            "temperature": self.temperature,
            "pressure": self.pressure,
            "steam_to_carbon": self.steam_to_carbon,
        }
        if self.cofeed is not None and self.cofeed_axis is not None:
            out[self.cofeed] = self.cofeed_axis
        return out

    def size(self) -> int:
        """Number of points of the whole window [-]."""
        return math.prod(a.points for a in self.axes().values())


@dataclass(frozen=True)
class Limits:
    """Review limits that define the feasible window.

    Attributes
    ----------
    max_methane_slip_dry : float or None
        Highest CH4 mole fraction in the dry outlet gas [-].
    carbon_free : bool
        Whether points where graphite is stable are infeasible.
    min_h2_yield : float or None
        Lowest H2 yield [mol H2 per mol hydrocarbon carbon].
    max_duty : float or None
        Highest duty [W].
    max_fired_duty : float or None
        Highest fired duty of the furnace, LHV [W]; only with a [plant] table.
    """

    max_methane_slip_dry: float | None = None
    carbon_free: bool = True
    min_h2_yield: float | None = None
    max_duty: float | None = None
    max_fired_duty: float | None = None


@dataclass(frozen=True)
class PreReformer:
    """Adiabatic pre-reformer ahead of the primary reformer, at the window's pressure.

    Attributes
    ----------
    inlet_temperature : float
        Temperature of the mixed feed entering it [K]. Its outlet is equilibrated (graphite
        allowed) at the adiabatic temperature, then reheated to ``feed.inlet_temperature``.
    """

    inlet_temperature: float


@dataclass(frozen=True)
class SecondaryReformer:
    """Adiabatic oxygen- or air-blown secondary reformer after the primary.

    Attributes
    ----------
    oxidant : {"oxygen", "air"}
        What is blown in (:data:`OXIDANTS`).
    oxygen_to_carbon : float
        O2 in the oxidant per hydrocarbon carbon of the fresh feed [mol mol-1].
    oxidant_temperature : float
        Oxidant temperature [K].
    approach : float
        Approach to equilibrium [K]: the composition is the equilibrium at the adiabatic
        outlet temperature minus this.
    """

    oxidant: str
    oxygen_to_carbon: float
    oxidant_temperature: float
    approach: float = 0.0

    def oxidant_flows(self, hydrocarbon_carbon) -> np.ndarray:
        """Oxidant flow by gas species, shape (S,) + shape of `hydrocarbon_carbon` [mol s-1].

        Parameters
        ----------
        hydrocarbon_carbon : float or array_like
            Carbon in the hydrocarbons of the fresh feed [mol s-1].
        """
        c = np.asarray(hydrocarbon_carbon, dtype=float)
        o2 = self.oxygen_to_carbon * c
        out = np.zeros((len(GAS_SPECIES),) + c.shape)
        for name, x in OXIDANTS[self.oxidant].items():
            out[GAS_SPECIES.index(name)] = o2 * x / OXIDANTS[self.oxidant]["O2"]
        return out


@dataclass(frozen=True)
class ShiftStage:
    """Water-gas shift stage held at its temperature; only CO + H2O = CO2 + H2 moves.

    Attributes
    ----------
    temperature : float
        Stage temperature [K]; the gas is cooled to it first.
    approach : float
        Approach to equilibrium [K]: the shift equilibrium is taken at T + approach (less
        conversion, as shift is exothermic).
    """

    temperature: float
    approach: float = 0.0


@dataclass(frozen=True)
class Train:
    """Optional stages around the primary reformer; every stage is None when absent.

    Order of the gas: pre-reformer, primary reformer (the window's T and P), secondary
    reformer, high-temperature shift, low-temperature shift; all at the window's pressure.
    """

    pre_reformer: PreReformer | None = None
    secondary_reformer: SecondaryReformer | None = None
    high_temperature_shift: ShiftStage | None = None
    low_temperature_shift: ShiftStage | None = None

    def stages(self) -> list[str]:
        """Names of the stages present, in flow order, the primary reformer included."""
        out = ["pre_reformer"] if self.pre_reformer else []
        out.append("primary_reformer")
        for name in ("secondary_reformer", "high_temperature_shift", "low_temperature_shift"):
            if getattr(self, name) is not None:
                out.append(name)
        return out

    @property
    def empty(self) -> bool:
        """True when the train is the primary reformer alone."""
        return self.stages() == ["primary_reformer"]


#: Display names of the train's stages.
STAGE_NAMES = {
    "pre_reformer": "Pre-reformer (adiabatic)",
    "primary_reformer": "Primary reformer",
    "secondary_reformer": "Secondary reformer (adiabatic)",
    "high_temperature_shift": "High-temperature shift",
    "low_temperature_shift": "Low-temperature shift",
}


@dataclass(frozen=True)
class Scenario:
    """A whole study: feed, design point, window, limits and notes.

    Attributes
    ----------
    title, description, notes : str
        Free text; notes are the review notes.
    feed : Feed
        The feed, with the design steam-to-carbon and co-feed ratios.
    temperature : float
        Design outlet temperature [K].
    pressure : float
        Design outlet pressure, absolute [Pa].
    approach : float
        Approach to equilibrium [K].
    window : Window
        The operating window.
    limits : Limits
        Review limits.
    train : Train
        Stages around the primary reformer (none by default).
    plant : Plant or None
        The hydrogen plant around the reformer (furnace, purification, steam); None when the
        file has no [plant] table.
    text : str
        TOML source it was read from, or generated by :meth:`to_toml` after a change; not
        compared.
    path : str or None
        File it was first read from; not compared.
    """

    title: str
    description: str
    feed: Feed
    temperature: float
    pressure: float
    approach: float
    window: Window
    limits: Limits
    notes: str = ""
    train: Train = Train()
    carbon: CarbonCheck = field(default_factory=lambda: CarbonCheck())
    plant: Plant | None = None
    text: str = field(default="", compare=False, repr=False)
    path: str | None = field(default=None, compare=False)

    def with_window(
        self,
        temperature=None,
        pressure=None,
        steam_to_carbon=None,
        oxygen_to_carbon=None,
        co2_to_carbon=None,
    ) -> Scenario:
        """A copy with some window axes replaced.

        Parameters
        ----------
        temperature, pressure : tuple, optional
            ``(from, to, points)``; from and to are strings with units or pint quantities.
        steam_to_carbon, oxygen_to_carbon, co2_to_carbon : tuple, optional
            ``(from, to, points)`` with plain numbers [mol per mol hydrocarbon carbon]. At most
            one co-feed axis; one given here replaces a co-feed axis of the scenario.

        Returns
        -------
        Scenario
            Validated like a file; errors name ``window.<axis>.<key>``.
        """
        given = {
            "temperature": temperature,
            "pressure": pressure,
            "steam_to_carbon": steam_to_carbon,
            "oxygen_to_carbon": oxygen_to_carbon,
            "co2_to_carbon": co2_to_carbon,
        }
        if oxygen_to_carbon is not None and co2_to_carbon is not None:
            raise InputError(
                "window", "oxygen_to_carbon and co2_to_carbon", "at most one co-feed axis"
            )
        raw: dict[str, object] = {}
        unit = {"temperature": " K", "pressure": " Pa"}
        for name, axis in self.window.axes().items():
            a, b = axis.start, axis.stop
            if name in unit:
                a, b = f"{a!r}{unit[name]}", f"{b!r}{unit[name]}"
            raw[name] = {"from": a, "to": b, "points": axis.points}
        if oxygen_to_carbon is not None or co2_to_carbon is not None:
            for name in COFEEDS:
                raw.pop(name, None)
        for name, spec in given.items():
            if spec is None:
                continue
            if not (isinstance(spec, (tuple, list)) and len(spec) == 3):
                raise InputError(f"window.{name}", spec, "a tuple (from, to, points)")
            raw[name] = {"from": spec[0], "to": spec[1], "points": spec[2]}
        window = _window(raw)
        _check_approach_fits(self.approach, self.temperature, window)
        return self._changed(window=window)

    def with_notes(self, notes: str) -> Scenario:
        """A copy with new review notes (kept in :attr:`text` as well).

        Parameters
        ----------
        notes : str
            Free text.

        Returns
        -------
        Scenario
        """
        return self._changed(notes=_string(notes, "notes"))

    def _changed(self, **changes) -> Scenario:
        new = dataclasses.replace(self, **changes)
        return dataclasses.replace(new, text=new.to_toml())

    def to_toml(self) -> str:
        """TOML text that :func:`parse_scenario` reads back to an equal Scenario.

        Quantities are written in K, Pa, mol/s and W with full float precision (the round
        trip is exact); a comment beside each gives engineer units.

        Returns
        -------
        str
            The scenario file.
        """
        f = self.feed
        lines = [
            f"title = {_toml_string(self.title)}",
            f"description = {_toml_string(self.description)}",
            f"notes = {_toml_string(self.notes)}",
            "",
            "[feed]",
            "composition = { " + ", ".join(f"{k} = {v!r}" for k, v in f.composition.items()) + " }",
            f'flow = "{f.flow!r} mol/s"  # {units.kmol_per_h_from_mol_per_s(f.flow):.6g} kmol/h',
            f'inlet_temperature = "{f.inlet_temperature!r} K"'
            f"  # {units.degC_from_K(f.inlet_temperature):.6g} degC",
            f"steam_to_carbon = {f.steam_to_carbon!r}",
            f"oxygen_to_carbon = {f.oxygen_to_carbon!r}",
            f"co2_to_carbon = {f.co2_to_carbon!r}",
            "",
            "[design_point]",
            f'temperature = "{self.temperature!r} K"'
            f"  # {units.degC_from_K(self.temperature):.6g} degC",
            f'pressure = "{self.pressure!r} Pa"  # {units.bar_from_Pa(self.pressure):.6g} bar'
            f" absolute, {units.barg_from_Pa(self.pressure):.6g} barg",
            f'approach = "{self.approach!r} K"',
            "",
            "[window]",
        ]
        for name, axis in self.window.axes().items():
            if name == "temperature":
                a, b = f'"{axis.start!r} K"', f'"{axis.stop!r} K"'
                note = (
                    f"  # {units.degC_from_K(axis.start):.6g} to "
                    f"{units.degC_from_K(axis.stop):.6g} degC"
                )
            elif name == "pressure":
                a, b = f'"{axis.start!r} Pa"', f'"{axis.stop!r} Pa"'
                note = (
                    f"  # {units.bar_from_Pa(axis.start):.6g} to "
                    f"{units.bar_from_Pa(axis.stop):.6g} bar absolute"
                )
            else:
                a, b, note = repr(axis.start), repr(axis.stop), ""
            lines.append(f"{name} = {{ from = {a}, to = {b}, points = {axis.points} }}{note}")
        lim = self.limits
        lines += ["", "[limits]"]
        if lim.max_methane_slip_dry is not None:
            lines.append(f"max_methane_slip_dry = {lim.max_methane_slip_dry!r}  # mol fraction")
        lines.append(f"carbon_free = {'true' if lim.carbon_free else 'false'}")
        if lim.min_h2_yield is not None:
            lines.append(f"min_h2_yield = {lim.min_h2_yield!r}")
        if lim.max_duty is not None:
            lines.append(
                f'max_duty = "{lim.max_duty!r} W"  # {units.MW_from_W(lim.max_duty):.6g} MW'
            )
        if lim.max_fired_duty is not None:
            lines.append(f'max_fired_duty = "{lim.max_fired_duty!r} W"'
                         f"  # {units.MW_from_W(lim.max_fired_duty):.6g} MW")
        lines += _train_toml(self.train)
        lines += carbon_toml(self.carbon)
        lines += plant_toml(self.plant)
        return "\n".join(lines) + "\n"


# ------------------------------------------------------------------------------------ parsing


_TOP_KEYS = ("title", "description", "notes", "feed", "design_point", "window", "limits",
             "train", "carbon", "plant")
_TRAIN_KEYS = ("pre_reformer", "secondary_reformer", "high_temperature_shift",
               "low_temperature_shift")
_FEED_KEYS = (
    "composition",
    "flow",
    "inlet_temperature",
    "steam_to_carbon",
    "oxygen_to_carbon",
    "co2_to_carbon",
)
_POINT_KEYS = ("temperature", "pressure", "approach")
_WINDOW_KEYS = ("temperature", "pressure", "steam_to_carbon") + COFEEDS
_AXIS_KEYS = ("from", "to", "points")
_LIMIT_KEYS = ("max_methane_slip_dry", "carbon_free", "min_h2_yield", "max_duty",
               "max_fired_duty")


def _join(path: str, key: str) -> str:
    return f"{path}.{key}" if path else key


def _suggest(key: str, known, fuzzy: bool = True) -> str:
    lower = {k.lower(): k for k in known}
    if key.lower() in lower:
        return f"; did you mean {lower[key.lower()]!r}?"
    if not fuzzy:  # species: "H2S" is not a misspelt "H2"
        return ""
    close = difflib.get_close_matches(key, list(known), n=1, cutoff=0.6)
    return f"; did you mean {close[0]!r}?" if close else ""


def _check_keys(table: Mapping, path: str, known, required=()) -> None:
    """Refuse unknown keys (with the nearest known key) and name missing required ones."""
    section = f"[{path}]" if path else "the top level"
    for key, value in table.items():
        if key not in known:
            raise InputError(
                _join(path, key),
                value,
                f"a known key of {section} ({', '.join(known)}){_suggest(key, known)}",
            )
    for key in required:
        if key not in table:
            raise InputError(_join(path, key), _MISSING, f"a value: {key!r} is required")


def _table(data: Mapping, key: str, path: str, required: bool = True) -> Mapping:
    value = data.get(key, _MISSING)
    where = _join(path, key)
    if value is _MISSING:
        if required:
            raise InputError(where, value, f"a table [{where}]: the section is required")
        return {}
    if not isinstance(value, Mapping):
        raise InputError(where, value, f"a table [{where}]")
    return value


def _string(value: object, field_: str) -> str:
    if not isinstance(value, str):
        raise InputError(field_, value, "a text string in quotes")
    if len(value) > MAX_TEXT_CHARS:
        raise InputError(field_, f"{len(value):,} characters",
                         f"text of at most {MAX_TEXT_CHARS:,} characters")
    if any(0xD800 <= ord(c) <= 0xDFFF for c in value):
        raise InputError(field_, value, "text without unpaired surrogate characters")
    return value


def _number(value: object, field_: str, what: str) -> float:
    if isinstance(value, bool) or not isinstance(value, (Real, np.number)):
        raise InputError(field_, value, f"a plain number ({what}), e.g. 3.0")
    x = float(value)
    if not math.isfinite(x):
        raise InputError(field_, value, f"a finite number ({what})")
    return x


def _ratio(value: object, name: str, field_: str) -> float:
    return check_ratio(name, _number(value, field_, _RATIO_WORDS[name]), field_)


def _mean_molar_mass(composition: Mapping[str, float]) -> float:
    return sum(x * molar_mass(name) for name, x in composition.items())


def _normalise(values: dict[str, float]) -> Composition:
    """Divide by the sum; then nudge the largest entry so that the sum is 1.0.

    A sum already within 1e-15 of 1 is left alone, so that normalising twice changes nothing
    (the nudge cannot always reach a sum of exactly 1.0 in binary floating point).
    """
    total = math.fsum(values.values())
    if abs(total - 1.0) > 1e-15:
        values = {k: v / total for k, v in values.items()}
        big = max(values, key=values.__getitem__)
        for _ in range(4):
            if math.fsum(values.values()) == 1.0:
                break
            rest = math.fsum(v for k, v in values.items() if k != big)
            values[big] = 1.0 - rest
    return Composition(values)


def parse_composition(value, field: str = "feed.composition") -> Composition:
    """Validate and normalise a dry-feed composition.

    Parameters
    ----------
    value : Mapping[str, float or str] or str
        Species to mole fraction (plain numbers, or per cent such as ``"93.1 %"``), or text
        ``"CH4=0.95,C2H6=0.03,N2=0.02"`` as typed on a command line.
    field : str
        Key path or option name for messages; species errors add ``.<species>``.

    Returns
    -------
    Composition
        Mole fractions [-] in :data:`FEED_COMPONENTS` order, summing to 1.

    Raises
    ------
    InputError
        Unknown species, negative fraction, no hydrocarbon, or a sum off 1 by more than
        :data:`COMPOSITION_SUM_TOLERANCE`.
    """
    if isinstance(value, str):
        pairs: dict[str, object] = {}
        for part in value.split(","):
            if not part.strip():
                continue
            name, sep, number = part.partition("=")
            if not sep:
                raise InputError(field, value, "species=fraction pairs, e.g. 'CH4=0.95,N2=0.05'")
            try:
                pairs[name.strip()] = float(number)
            except ValueError:
                pairs[name.strip()] = number.strip()
        value = pairs
    if not isinstance(value, Mapping) or not value:
        raise InputError(field, value, "a table of mole fractions, e.g. { CH4 = 0.95, N2 = 0.05 }")
    fractions: dict[str, float] = {}
    for name, x in value.items():
        where = f"{field}.{name}"
        if name not in FEED_COMPONENTS:
            raise InputError(
                where,
                x,
                f"a species among {', '.join(FEED_COMPONENTS)}"
                + _suggest(str(name), FEED_COMPONENTS, fuzzy=False),
            )
        if isinstance(x, str):
            fractions[name] = units.fraction(x, where)
            continue
        number = _number(x, where, "mole fraction")
        if number < 0.0:
            raise InputError(where, x, "a mole fraction of 0 or more")
        fractions[name] = number
    total = math.fsum(fractions.values())
    if abs(total - 1.0) > COMPOSITION_SUM_TOLERANCE:
        off = (1.0 - total) * 100.0
        how = f"{abs(off):.2f} % {'short' if off > 0 else 'over'}"
        raise InputError(
            field,
            dict(value),
            f"mole fractions that sum to 1 within {COMPOSITION_SUM_TOLERANCE:g}; these sum to "
            f"{total:.4f} ({how}); per cent is written as strings such as '93.1 %'",
        )
    if not any(fractions.get(h, 0.0) > 0.0 for h in HYDROCARBONS):
        raise InputError(
            field, dict(value), f"at least one hydrocarbon ({', '.join(HYDROCARBONS)}) above 0"
        )
    ordered = {k: fractions[k] for k in FEED_COMPONENTS if k in fractions}
    return _normalise(ordered)


def _feed(data: Mapping) -> Feed:
    _check_keys(
        data, "feed", _FEED_KEYS, ("composition", "flow", "inlet_temperature", "steam_to_carbon")
    )
    if not isinstance(data["composition"], Mapping):
        raise InputError(
            "feed.composition",
            data["composition"],
            "a table of mole fractions, e.g. { CH4 = 0.95, N2 = 0.05 }",
        )
    composition = parse_composition(data["composition"], "feed.composition")
    flow = units.molar_flow_mol_s(data["flow"], "feed.flow", _mean_molar_mass(composition))
    if not flow > 0.0:
        raise InputError("feed.flow", data["flow"], "a flow above 0")
    inlet = check_inlet_temperature(
        units.temperature_K(data["inlet_temperature"], "feed.inlet_temperature"),
        "feed.inlet_temperature",
        data["inlet_temperature"],
    )
    ratios = {
        name: _ratio(data[name], name, f"feed.{name}")
        for name in ("steam_to_carbon",) + COFEEDS
        if name in data
    }
    return Feed(composition=composition, flow=flow, inlet_temperature=inlet, **ratios)


def _axis(spec: object, name: str) -> Axis:
    path = f"window.{name}"
    if not isinstance(spec, Mapping):
        raise InputError(path, spec, "a table { from = ..., to = ..., points = ... }")
    _check_keys(spec, path, _AXIS_KEYS, _AXIS_KEYS)
    values = []
    for key in ("from", "to"):
        raw, where = spec[key], f"{path}.{key}"
        if name == "temperature":
            values.append(check_temperature(units.temperature_K(raw, where), where, raw))
        elif name == "pressure":
            values.append(check_pressure(units.pressure_Pa(raw, where), where, raw))
        else:
            values.append(_ratio(raw, name, where))
    points = spec["points"]
    where = f"{path}.points"
    if isinstance(points, bool) or not isinstance(points, (int, np.integer)):
        raise InputError(where, points, f"a whole number from 1 to {MAX_AXIS_POINTS}")
    points = int(points)
    if not 1 <= points <= MAX_AXIS_POINTS:
        raise InputError(where, points, f"a whole number from 1 to {MAX_AXIS_POINTS}")
    start, stop = values
    if points == 1:
        if start != stop:
            raise InputError(f"{path}.to", spec["to"], "the same value as 'from' when points = 1")
    elif not stop > start:
        raise InputError(
            f"{path}.to", spec["to"], f"a value above 'from' ({spec['from']!r}) when points > 1"
        )
    return Axis(start=start, stop=stop, points=points)


def _window(data: Mapping) -> Window:
    _check_keys(data, "window", _WINDOW_KEYS, ("temperature", "pressure", "steam_to_carbon"))
    cofeeds = [name for name in COFEEDS if name in data]
    if len(cofeeds) > 1:
        raise InputError(
            f"window.{cofeeds[1]}",
            data[cofeeds[1]],
            f"no second co-feed axis: 'window.{cofeeds[0]}' is given, and at most one co-feed "
            "axis is allowed",
        )
    axes = {name: _axis(data[name], name) for name in _WINDOW_KEYS if name in data}
    cofeed = cofeeds[0] if cofeeds else None
    window = Window(
        temperature=axes["temperature"],
        pressure=axes["pressure"],
        steam_to_carbon=axes["steam_to_carbon"],
        cofeed=cofeed,
        cofeed_axis=axes.get(cofeed) if cofeed else None,
    )
    size = window.size()
    if size > MAX_WINDOW_POINTS:
        shape = " x ".join(str(a.points) for a in window.axes().values())
        raise InputError(
            "window", f"{shape} = {size} points", f"at most {MAX_WINDOW_POINTS} points in all"
        )
    return window


def _check_approach_fits(approach: float, temperature: float, window: Window) -> None:
    """The equilibrium is taken at T - approach, which must stay inside the model's range."""
    lowest = min(temperature, window.temperature.start)
    if lowest - approach < TEMPERATURE_RANGE_K[0]:
        raise InputError(
            "design_point.approach",
            f"{approach:g} K",
            f"an approach that keeps T - approach at or above {TEMPERATURE_RANGE_K[0]:g} K "
            f"(the lowest temperature of the scenario is {lowest:g} K)",
        )


def _limits(data: Mapping) -> Limits:
    _check_keys(data, "limits", _LIMIT_KEYS)
    slip = None
    if "max_methane_slip_dry" in data:
        slip = units.fraction(data["max_methane_slip_dry"], "limits.max_methane_slip_dry")
    carbon_free = data.get("carbon_free", True)
    if not isinstance(carbon_free, bool):
        raise InputError("limits.carbon_free", carbon_free, "true or false (without quotes)")
    h2 = None
    if "min_h2_yield" in data:
        h2 = _number(data["min_h2_yield"], "limits.min_h2_yield", "mol H2 per mol hydrocarbon C")
        if h2 < 0.0:
            raise InputError("limits.min_h2_yield", data["min_h2_yield"], "a number of 0 or more")
    duty = None
    if "max_duty" in data:
        duty = units.power_W(data["max_duty"], "limits.max_duty")
    fired = None
    if "max_fired_duty" in data:
        fired = units.power_W(data["max_fired_duty"], "limits.max_fired_duty")
    return Limits(
        max_methane_slip_dry=slip, carbon_free=carbon_free, min_h2_yield=h2, max_duty=duty,
        max_fired_duty=fired,
    )


def _stage_temperature(data: Mapping, key: str, path: str, check) -> float:
    raw = data[key]
    return check(units.temperature_K(raw, f"{path}.{key}"), f"{path}.{key}", raw)


def _stage_approach(data: Mapping, path: str) -> float:
    if "approach" not in data:
        return 0.0
    raw = data["approach"]
    return check_approach(units.temperature_difference_K(raw, f"{path}.approach"),
                          f"{path}.approach", raw)


def check_shift_temperature(value_K: float, field: str, raw: object = None) -> float:
    """A shift stage temperature inside :data:`SHIFT_TEMPERATURE_RANGE_K` [K]."""
    return _check_range(value_K, field, SHIFT_TEMPERATURE_RANGE_K, _temperature_words, raw)


def _train(data: Mapping) -> Train:
    _check_keys(data, "train", _TRAIN_KEYS)
    stages: dict[str, object] = {}
    if "pre_reformer" in data:
        path = "train.pre_reformer"
        t = _table(data, "pre_reformer", "train")
        _check_keys(t, path, ("inlet_temperature",), ("inlet_temperature",))
        stages["pre_reformer"] = PreReformer(
            _stage_temperature(t, "inlet_temperature", path, check_inlet_temperature))
    if "secondary_reformer" in data:
        path = "train.secondary_reformer"
        t = _table(data, "secondary_reformer", "train")
        keys = ("oxidant", "oxygen_to_carbon", "oxidant_temperature", "approach")
        _check_keys(t, path, keys, keys[:3])
        oxidant = t["oxidant"]
        if oxidant not in OXIDANTS:
            raise InputError(f"{path}.oxidant", oxidant,
                             " or ".join(f'"{k}"' for k in OXIDANTS))
        ratio = _ratio(t["oxygen_to_carbon"], "oxygen_to_carbon", f"{path}.oxygen_to_carbon")
        stages["secondary_reformer"] = SecondaryReformer(
            oxidant=oxidant,
            oxygen_to_carbon=ratio,
            oxidant_temperature=_stage_temperature(t, "oxidant_temperature", path,
                                                   check_inlet_temperature),
            approach=_stage_approach(t, path),
        )
    for name in ("high_temperature_shift", "low_temperature_shift"):
        if name in data:
            path = f"train.{name}"
            t = _table(data, name, "train")
            _check_keys(t, path, ("temperature", "approach"), ("temperature",))
            stages[name] = ShiftStage(
                temperature=_stage_temperature(t, "temperature", path,
                                               check_shift_temperature),
                approach=_stage_approach(t, path),
            )
    hts, lts = stages.get("high_temperature_shift"), stages.get("low_temperature_shift")
    if hts is not None and lts is not None and not lts.temperature < hts.temperature:
        raise InputError("train.low_temperature_shift.temperature",
                         f"{lts.temperature - 273.15:g} degC",
                         "a temperature below the high-temperature shift's "
                         f"({hts.temperature - 273.15:g} degC): the gas flows from the high- "
                         "to the low-temperature stage")
    return Train(**stages)


def _train_toml(train: Train) -> list[str]:
    """TOML lines of the train's stages (none for an empty train)."""
    lines: list[str] = []
    pre = train.pre_reformer
    if pre is not None:
        lines += ["", "[train.pre_reformer]",
                  f'inlet_temperature = "{pre.inlet_temperature!r} K"'
                  f"  # {units.degC_from_K(pre.inlet_temperature):.6g} degC"]
    sec = train.secondary_reformer
    if sec is not None:
        lines += ["", "[train.secondary_reformer]",
                  f'oxidant = "{sec.oxidant}"',
                  f"oxygen_to_carbon = {sec.oxygen_to_carbon!r}",
                  f'oxidant_temperature = "{sec.oxidant_temperature!r} K"'
                  f"  # {units.degC_from_K(sec.oxidant_temperature):.6g} degC",
                  f'approach = "{sec.approach!r} K"']
    for name in ("high_temperature_shift", "low_temperature_shift"):
        st = getattr(train, name)
        if st is not None:
            lines += ["", f"[train.{name}]",
                      f'temperature = "{st.temperature!r} K"'
                      f"  # {units.degC_from_K(st.temperature):.6g} degC",
                      f'approach = "{st.approach!r} K"']
    return lines


def _from_dict(data: Mapping, text: str, path: str | None) -> Scenario:
    _check_keys(data, "", _TOP_KEYS, ("title", "feed", "design_point", "window"))
    title = _string(data["title"], "title")
    description = _string(data.get("description", ""), "description")
    notes = _string(data.get("notes", ""), "notes")
    feed = _feed(_table(data, "feed", ""))
    point = _table(data, "design_point", "")
    _check_keys(point, "design_point", _POINT_KEYS, ("temperature", "pressure"))
    temperature = check_temperature(
        units.temperature_K(point["temperature"], "design_point.temperature"),
        "design_point.temperature",
        point["temperature"],
    )
    pressure = check_pressure(
        units.pressure_Pa(point["pressure"], "design_point.pressure"),
        "design_point.pressure",
        point["pressure"],
    )
    approach = 0.0
    if "approach" in point:
        approach = check_approach(
            units.temperature_difference_K(point["approach"], "design_point.approach"),
            "design_point.approach",
            point["approach"],
        )
    window = _window(_table(data, "window", ""))
    _check_approach_fits(approach, temperature, window)
    limits = _limits(_table(data, "limits", "", required=False))
    train = _train(_table(data, "train", "", required=False))
    plant = parse_plant(data["plant"]) if "plant" in data else None
    if limits.max_fired_duty is not None and plant is None:
        raise InputError("limits.max_fired_duty", data["limits"]["max_fired_duty"],
                         "a fired-duty limit only together with a [plant] table (the furnace "
                         "it limits)")
    return Scenario(
        title=title,
        description=description,
        feed=feed,
        temperature=temperature,
        pressure=pressure,
        approach=approach,
        window=window,
        limits=limits,
        notes=notes,
        train=train,
        carbon=_carbon(_table(data, "carbon", "", required=False)),
        plant=plant,
        text=text,
        path=path,
    )


def parse_scenario(text: str, path: str | None = None) -> Scenario:
    """Read a scenario from TOML text.

    Parameters
    ----------
    text : str
        The TOML source.
    path : str, optional
        Where it came from, for messages and :attr:`Scenario.path`.

    Returns
    -------
    Scenario
        SI floats inside; ``text`` holds the source.

    Raises
    ------
    InputError
        Bad TOML, unknown or missing keys, wrong types, units or ranges.
    """
    size = len(text.encode("utf-8", errors="surrogatepass"))
    if size > MAX_SCENARIO_BYTES:
        raise InputError(path or "scenario", f"{size:,} bytes",
                         f"a scenario file of at most {MAX_SCENARIO_BYTES:,} bytes")
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise InputError(path or "scenario", str(exc), "valid TOML") from None
    except RecursionError:
        raise InputError(path or "scenario", "tables nested too deeply",
                         "a scenario file with the documented keys only") from None
    return _from_dict(data, text, path)


def load_scenario(path: str | os.PathLike | None = None) -> Scenario:
    """Read a scenario file.

    Parameters
    ----------
    path : str or os.PathLike, optional
        The TOML file; the demo (:data:`DEMO_PATH`) when omitted.

    Returns
    -------
    Scenario

    Raises
    ------
    InputError
        A missing or unreadable file, bad TOML or an invalid scenario.
    """
    file = DEMO_PATH if path is None else Path(path)
    try:
        if file.is_file() and file.stat().st_size > MAX_SCENARIO_BYTES:
            raise InputError("scenario file", str(file),
                             f"a scenario file of at most {MAX_SCENARIO_BYTES:,} bytes")
        text = file.read_text(encoding="utf-8")
    except FileNotFoundError:
        raise InputError("scenario file", str(file), "an existing file") from None
    except (OSError, UnicodeDecodeError) as exc:
        raise InputError(
            "scenario file", str(file), f"a readable UTF-8 text file ({exc})"
        ) from None
    return parse_scenario(text, str(file))


# ----------------------------------------------------------------------------- point overrides


def validate_point_overrides(field_names: Mapping[str, str] | None = None, **values) -> dict:
    """Parse and range-check the overrides of one point (CLI options, ``point()`` keywords).

    Parameters
    ----------
    field_names : Mapping[str, str], optional
        Name to show in messages for each keyword, e.g. ``{"temperature": "--temperature"}``.
    **values
        Any of ``temperature``, ``pressure``, ``inlet_temperature`` (strings with units or pint
        quantities), ``approach`` (a temperature difference), ``steam_to_carbon``,
        ``oxygen_to_carbon``, ``co2_to_carbon`` (plain numbers) and ``feed`` (a composition,
        see :func:`parse_composition`). None values are skipped.

    Returns
    -------
    dict
        The same keys with SI floats [K, Pa, K, mol per mol] or a :class:`Composition`.
    """
    names = dict(field_names or {})
    out: dict[str, object] = {}
    for key, value in values.items():
        if value is None:
            continue
        where = names.get(key, key)
        if key == "temperature":
            out[key] = check_temperature(units.temperature_K(value, where), where, value)
        elif key == "inlet_temperature":
            out[key] = check_inlet_temperature(units.temperature_K(value, where), where, value)
        elif key == "pressure":
            out[key] = check_pressure(units.pressure_Pa(value, where), where, value)
        elif key == "approach":
            out[key] = check_approach(units.temperature_difference_K(value, where), where, value)
        elif key in _RATIO_RANGES:
            out[key] = _ratio(value, key, where)
        elif key == "feed":
            out[key] = parse_composition(value, where)
        else:
            raise TypeError(f"validate_point_overrides() got an unknown keyword {key!r}")
    return out


# ------------------------------------------------------------------------------------ writing


def _toml_string(s: str) -> str:
    """A TOML basic string (multi-line when `s` holds line breaks) that reads back as `s`."""
    escapes = {'"': '\\"', "\\": "\\\\", "\b": "\\b", "\t": "\\t", "\f": "\\f", "\r": "\\r"}
    multiline = "\n" in s
    out = []
    for c in s:
        if c in escapes:
            out.append(escapes[c])
        elif c == "\n":
            out.append("\n" if multiline else "\\n")
        elif ord(c) < 0x20 or ord(c) == 0x7F:
            out.append(f"\\u{ord(c):04x}")
        else:
            out.append(c)
    body = "".join(out)
    return f'"""\n{body}"""' if multiline else f'"{body}"'


# ------------------------------------------------------------------- [carbon]: the carbon check
# One local block (the parser, the writer and the dataclass of the optional [carbon] table);
# the rest of the module touches it in three lines: the Scenario field, _TOP_KEYS and
# _from_dict / to_toml.

#: Default temperature above which higher hydrocarbons (C2+) entering the primary reformer are
#: flagged as a cracking risk [K]: 600 degC, common practice, no source.
CRACKING_TEMPERATURE_K = 873.15
#: Allowed Gibbs energy offset of catalyst carbon above graphite [J mol-1].
CATALYST_OFFSET_RANGE = (0.0, 60_000.0)
_CARBON_KEYS = ("path_temperatures", "reference", "catalyst_carbon_offset",
                "higher_hydrocarbon_cracking_temperature")
CARBON_REFERENCES = ("graphite", "catalyst")


@dataclass(frozen=True)
class CarbonCheck:
    """How the carbon verdict is made (the optional ``[carbon]`` table; thermo.carbon).

    Attributes
    ----------
    path_temperatures : tuple of float
        Gas temperatures at stations along the primary tube between its inlet and its outlet
        [K], in flow order; empty (default) for a linear rise from the mixed feed's inlet
        temperature to the outlet temperature. The path is then inlet -> stations -> outlet.
    reference : {"graphite", "catalyst"}
        Carbon the verdict is referred to: graphite (default, the conservative one) or the
        carbon formed on the nickel catalyst, less stable than graphite by
        `catalyst_carbon_offset` ([ROSTRUP-NIELSEN1972]).
    catalyst_carbon_offset : float or None
        Molar Gibbs energy of catalyst (filamentous) carbon above graphite [J mol-1], as the
        user takes it from published data for the catalyst; None when not given.
    cracking_temperature : float
        Primary inlet temperature above which C2+ hydrocarbons reaching the primary are
        flagged [K] (default :data:`CRACKING_TEMPERATURE_K`, common practice, no source).
    """

    path_temperatures: tuple[float, ...] = ()
    reference: str = "graphite"
    catalyst_carbon_offset: float | None = None
    cracking_temperature: float = CRACKING_TEMPERATURE_K


def _molar_energy_J(value: object, field_: str) -> float:
    allowed = "a molar energy with its unit, e.g. \"8 kJ/mol\""
    if not isinstance(value, str):
        raise InputError(field_, value, allowed)
    q = units.parse_quantity(value, field_)
    try:
        x = float(q.to("J/mol").magnitude)
    except Exception:  # pint's DimensionalityError and friends
        raise InputError(field_, value, allowed) from None
    lo, hi = CATALYST_OFFSET_RANGE
    if not (math.isfinite(x) and lo <= x <= hi):
        raise InputError(field_, value, f"an offset from {lo / 1000:g} to {hi / 1000:g} kJ/mol "
                         "(catalyst carbon is less stable than graphite, never more)")
    return x


def _carbon(data: Mapping) -> CarbonCheck:
    _check_keys(data, "carbon", _CARBON_KEYS)
    stations: list[float] = []
    raw = data.get("path_temperatures", [])
    if not isinstance(raw, list):
        raise InputError("carbon.path_temperatures", raw,
                         'a list of temperatures, e.g. ["560 degC", "640 degC"]')
    for k, item in enumerate(raw):
        f = f"carbon.path_temperatures[{k}]"
        stations.append(check_temperature(units.temperature_K(item, f), f, item))
    reference = data.get("reference", "graphite")
    if reference not in CARBON_REFERENCES:
        raise InputError("carbon.reference", reference, '"graphite" or "catalyst"')
    offset = None
    if "catalyst_carbon_offset" in data:
        offset = _molar_energy_J(data["catalyst_carbon_offset"], "carbon.catalyst_carbon_offset")
    if reference == "catalyst" and offset is None:
        raise InputError("carbon.catalyst_carbon_offset", _MISSING,
                         'a value: reference = "catalyst" needs the catalyst carbon\'s offset')
    crack = CRACKING_TEMPERATURE_K
    key = "higher_hydrocarbon_cracking_temperature"
    if key in data:
        crack = check_temperature(units.temperature_K(data[key], f"carbon.{key}"),
                                  f"carbon.{key}", data[key])
    return CarbonCheck(tuple(stations), reference, offset, crack)


def carbon_toml(check: CarbonCheck) -> list[str]:
    """TOML lines of a non-default carbon check (none for the default)."""
    if check == CarbonCheck():
        return []
    temps = ", ".join(f'"{t!r} K"' for t in check.path_temperatures)
    lines = ["", "[carbon]", f"path_temperatures = [{temps}]",
             f'reference = "{check.reference}"']
    if check.catalyst_carbon_offset is not None:
        lines.append(f'catalyst_carbon_offset = "{check.catalyst_carbon_offset!r} J/mol"')
    lines.append(f'higher_hydrocarbon_cracking_temperature = "{check.cracking_temperature!r} K"'
                 f"  # {units.degC_from_K(check.cracking_temperature):.6g} degC")
    return lines


# ------------------------------------------------------------------------------- [plant] table
# The hydrogen plant around the reformer (thermo.plant computes it). Every key is optional;
# each default is common practice for a natural-gas hydrogen plant, no source.


@dataclass(frozen=True)
class Plant:
    """Assumptions of the hydrogen plant around the reformer (SI floats).

    Defaults are common practice for a natural-gas hydrogen plant (no source); every one is an
    input of the ``[plant]`` table.

    Attributes
    ----------
    h2_recovery : float
        H2 recovered by the pressure-swing adsorption unit, fraction of the H2 leaving the
        last stage [-] (default 0.88).
    excess_air : float
        Combustion air beyond the stoichiometric need of the fuel, fraction [-] (default 0.10).
    air_preheat_temperature : float
        Combustion air entering the burners [K] (default 300 degC).
    bridgewall_temperature : float
        Flue gas leaving the radiant box [K] (default 1030 degC).
    stack_temperature : float
        Flue gas leaving the convection section [K] (default 140 degC).
    supply_temperature : float
        Natural gas, tail gas and combustion air as they arrive [K] (default 30 degC; at
        least 300 K, where the N2, Ar and C3H8 data begin).
    process_gas_cooled_temperature : float
        Process gas cooled to it (from the reformer outlet or the last shift stage) for heat
        recovery [K] (default 180 degC); points whose dew point lies above it are flagged.
    steam_pressure : float
        Steam header pressure: steam raised and process steam [Pa] (default 42 bar).
    steam_temperature : float
        Steam header temperature, superheated [K] (default 380 degC).
    feed_water_temperature : float
        Boiler feed water entering the steam system [K] (default 105 degC).
    steam_credit_efficiency : float
        Efficiency of the boiler that exported steam saves [-] (default 0.90): the steam's
        value is its enthalpy rise over this, in fuel LHV per kg.
    """

    h2_recovery: float = 0.88
    excess_air: float = 0.10
    air_preheat_temperature: float = 573.15
    bridgewall_temperature: float = 1303.15
    stack_temperature: float = 413.15
    supply_temperature: float = 303.15
    process_gas_cooled_temperature: float = 453.15
    steam_pressure: float = 4.2e6
    steam_temperature: float = 653.15
    feed_water_temperature: float = 378.15
    steam_credit_efficiency: float = 0.90


#: Every [plant] key: (kind, allowed range in SI, words for messages). Kinds: "fraction"
#: (plain number or per cent), "temperature", "pressure", "number".
PLANT_KEYS: dict[str, tuple[str, tuple[float, float], str]] = {
    "h2_recovery": ("fraction", (0.5, 1.0), "H2 recovered by the purification unit"),
    "excess_air": ("fraction", (0.0, 1.0), "air beyond the stoichiometric need"),
    "air_preheat_temperature": ("temperature", (300.0, 1100.0), "combustion air temperature"),
    "bridgewall_temperature": ("temperature", (1000.0, 1700.0), "flue gas leaving the "
                               "radiant box"),
    "stack_temperature": ("temperature", (300.0, 700.0), "flue gas at the stack"),
    "supply_temperature": ("temperature", (300.0, 400.0), "gas and air as they arrive"),
    "process_gas_cooled_temperature": ("temperature", (300.0, 800.0), "process gas cooled to"),
    "steam_pressure": ("pressure", (2e5, 1.6e7), "steam header pressure"),
    "steam_temperature": ("temperature", (373.15, 873.15), "steam header temperature"),
    "feed_water_temperature": ("temperature", (300.0, 573.15), "boiler feed water"),
    "steam_credit_efficiency": ("number", (0.5, 1.0), "boiler efficiency behind the steam "
                                "credit"),
}

#: The defaults of :class:`Plant` by key, for the sheet and the README.
PLANT_DEFAULTS: dict[str, float] = {f.name: f.default for f in dataclasses.fields(Plant)}


def _plant_value(raw: object, key: str) -> float:
    kind, (lo, hi), what = PLANT_KEYS[key]
    where = f"plant.{key}"
    if kind == "fraction":
        words = f"a fraction from {_fmt(lo)} to {_fmt(hi)} ({what}), e.g. 0.88 or '88 %'"
        try:
            x = units.fraction(raw, where)
        except InputError:
            raise InputError(where, raw, words) from None
    elif kind == "number":
        x = _number(raw, where, what)
        words = f"a number from {_fmt(lo)} to {_fmt(hi)} ({what})"
    elif kind == "temperature":
        x = units.temperature_K(raw, where)
        words = f"{_temperature_words(lo, hi)} ({what})"
    else:
        x = units.pressure_Pa(raw, where)
        words = f"{_pressure_words(lo, hi)} ({what})"
    return _check_range(x, where, (lo, hi), lambda a, b: words, raw)


def parse_plant(data: object) -> Plant:
    """The ``[plant]`` table (a mapping of raw TOML values) as a :class:`Plant`.

    Raises
    ------
    InputError
        Unknown keys, bad units and values outside :data:`PLANT_KEYS`' ranges, naming
        ``plant.<key>``, the value as typed and the range; steam conditions that are not
        superheated steam and sub-cooled feed water at the steam pressure; a stack not below
        the bridgewall.
    """
    if not isinstance(data, Mapping):
        raise InputError("plant", data, "a table [plant]")
    _check_keys(data, "plant", tuple(PLANT_KEYS))
    values = {k: _plant_value(v, k) for k, v in data.items()}
    plant = Plant(**values)
    from thermo.steam import saturation_temperature

    t_sat = float(saturation_temperature(plant.steam_pressure))
    if not plant.steam_temperature > t_sat + 1.0:
        raise InputError("plant.steam_temperature",
                         data.get("steam_temperature", f"{plant.steam_temperature:g} K"),
                         f"superheated steam: above the saturation temperature "
                         f"{t_sat - 273.15:.2f} degC at the steam pressure (IAPWS-IF97)")
    if not plant.feed_water_temperature < t_sat - 1.0:
        raise InputError("plant.feed_water_temperature",
                         data.get("feed_water_temperature",
                                  f"{plant.feed_water_temperature:g} K"),
                         f"liquid water: below the saturation temperature {t_sat - 273.15:.2f}"
                         " degC at the steam pressure (IAPWS-IF97)")
    if not plant.stack_temperature < plant.bridgewall_temperature:
        raise InputError("plant.stack_temperature",
                         data.get("stack_temperature", f"{plant.stack_temperature:g} K"),
                         "a temperature below the bridgewall temperature")
    return plant


def plant_toml(plant: Plant | None) -> list[str]:
    """TOML lines of a [plant] table (none without one); read back exactly."""
    if plant is None:
        return []
    lines = ["", "[plant]"]
    for key, (kind, _, _) in PLANT_KEYS.items():
        v = getattr(plant, key)
        if kind == "temperature":
            lines.append(f'{key} = "{v!r} K"  # {units.degC_from_K(v):.6g} degC')
        elif kind == "pressure":
            lines.append(f'{key} = "{v!r} Pa"  # {units.bar_from_Pa(v):.6g} bar absolute')
        else:
            lines.append(f"{key} = {v!r}")
    return lines
