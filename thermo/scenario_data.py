"""The scenario's frozen dataclasses (SI floats inside); read, checked and written by
:mod:`thermo.scenario_parse` and :mod:`thermo.scenario_toml` from :mod:`thermo.schema`.

Import these names from :mod:`thermo.scenario`, the public face of the scenario modules.
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Iterator, Mapping
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from thermo.scenario_stages import CarbonCheck, Plant, Train
from thermo.species import GAS_SPECIES, molar_mass

#: Species allowed in ``feed.composition`` (the dry hydrocarbon feed and its inerts).
FEED_COMPONENTS: tuple[str, ...] = ("CH4", "C2H6", "C3H8", "CO2", "N2", "Ar", "H2")

#: Hydrocarbons and their carbon atoms; only these count in the steam-to-carbon ratio.
HYDROCARBONS: dict[str, int] = {"CH4": 1, "C2H6": 2, "C3H8": 3}

#: Co-feed ratios that may form the fourth window axis.
COFEEDS: tuple[str, ...] = ("oxygen_to_carbon", "co2_to_carbon")

#: The demo scenario, loaded when no file is named.
DEMO_PATH: Path = Path(__file__).resolve().parent.parent / "scenarios" / "demo.toml"

#: Most points in the whole window (product of the axes): 2 x 10^7, an 11 GB grid file that
#: `explorer grid` writes block by block (thermo.chunked). A whole in-memory sweep holds about
#: 1 GB per 10^6 points; the app has its own, lower bound (explorer.state.APP_MAX_POINTS).
MAX_WINDOW_POINTS = 20_000_000
#: Largest scenario file accepted [bytes]; a real one is a few kB.
MAX_SCENARIO_BYTES = 1_000_000
#: How far the composition may sum from 1 before it is refused (it is then normalised).
COMPOSITION_SUM_TOLERANCE = 1e-3

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
    display_units : {"metric", "us"}
        Unit system the app and the review file show by default (``[display] units``).
    inputs : Mapping[str, object]
        What the user typed for each key path (``"design_point.pressure": "22 barg"``), kept
        for the form and the writer; not compared.
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
    display_units: str = "metric"
    inputs: Mapping[str, object] = field(default_factory=dict, compare=False, repr=False)
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
        from thermo.scenario_parse import window_with

        given = {"temperature": temperature, "pressure": pressure,
                 "steam_to_carbon": steam_to_carbon, "oxygen_to_carbon": oxygen_to_carbon,
                 "co2_to_carbon": co2_to_carbon}
        window, typed = window_with(self, {k: v for k, v in given.items() if v is not None})
        return self._changed(window=window, inputs=typed)

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
        from thermo.schema import text

        return self._changed(notes=text(notes, "notes"))

    def _changed(self, **changes) -> Scenario:
        new = dataclasses.replace(self, **changes)
        return dataclasses.replace(new, text=new.to_toml())

    def to_toml(self) -> str:
        """TOML text that :func:`parse_scenario` reads back to an equal Scenario.

        Each quantity is written as the user typed it while that text still gives the exact
        value, else as the shortest number in engineer units that reads back exactly
        (:mod:`thermo.scenario_toml`, the one writer).

        Returns
        -------
        str
            The scenario file.
        """
        from thermo.scenario_toml import scenario_toml

        return scenario_toml(self)


def _mean_molar_mass(composition: Mapping[str, float]) -> float:
    return sum(x * molar_mass(name) for name, x in composition.items())
