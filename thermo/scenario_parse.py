"""Scenario TOML into :class:`thermo.scenario.Scenario`, every key read through
:mod:`thermo.schema`; every invalid field is collected and reported at once
(:class:`thermo.errors.InputErrors`).

Cross-field rules (an axis's 'to' above its 'from', one co-feed axis, the approach inside the
model's range, the shift stages in order, steam conditions, a fired-duty limit with a plant)
live here; a rule whose inputs are already refused is not checked again.
"""

from __future__ import annotations

import math
import os
import tomllib
from collections.abc import Mapping
from pathlib import Path

from thermo import units
from thermo.errors import InputError, InputErrors, all_errors
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
    _mean_molar_mass,
)
from thermo.scenario_stages import (
    CarbonCheck,
    Plant,
    PreReformer,
    SecondaryReformer,
    ShiftStage,
    Train,
)
from thermo.schema import (
    BY_PATH,
    OPTIONAL_TABLES,
    TEMPERATURE_RANGE_K,
    Key,
    keys_of,
    known_names,
    parse_value,
    plain_number,
    suggest,
)


class _Missing:
    def __repr__(self) -> str:
        return "<missing>"


_MISSING = _Missing()
#: A value that was refused (its error is collected).
_BAD = object()


def raise_all(errors: list[InputError]) -> None:
    """Raise nothing, the one error, or :class:`InputErrors` holding them all."""
    flat = [e for err in errors for e in all_errors(err)]
    if len(flat) == 1:
        raise flat[0]
    if flat:
        raise InputErrors(flat)


class _Reader:
    """Reads tables through the schema, collecting every error and what was typed."""

    def __init__(self) -> None:
        self.errors: list[InputError] = []
        self.typed: dict[str, object] = {}

    def table(self, data: Mapping, path: str) -> Mapping | None:
        """The table at `path` inside its parent `data`, checked for unknown keys; None when
        absent or refused."""
        leaf = path.rpartition(".")[2]
        value = data.get(leaf, _MISSING)
        if value is _MISSING:
            if path not in OPTIONAL_TABLES:
                self.errors.append(InputError(path, value, f"a table [{path}]: the section is "
                                                           "required"))
            return None
        if not isinstance(value, Mapping):
            allowed = (f"a table [{path}]" if not path.startswith("window.") else
                       "a table { from = ..., to = ..., points = ... }")
            self.errors.append(InputError(path, value, allowed))
            return None
        self.check_keys(value, path)
        return value

    def check_keys(self, table: Mapping, path: str) -> None:
        known = known_names(path)
        section = f"[{path}]" if path else "the top level"
        for key, value in table.items():
            if key not in known:
                where = f"{path}.{key}" if path else key
                self.errors.append(InputError(
                    where, value, f"a known key of {section} ({', '.join(known)})"
                    + suggest(str(key), known)))

    def value(self, key: Key, table: Mapping, **kw):
        """`key`'s SI value from its table: the default when absent, :data:`_BAD` if refused."""
        raw = table.get(key.leaf, _MISSING)
        if raw is _MISSING:
            if key.required:
                self.errors.append(InputError(key.path, raw,
                                              f"a value: {key.leaf!r} is required"))
                return _BAD
            return key.default
        try:
            out = parse_value(key, raw, **kw)
        except InputError as err:
            self.errors.extend(all_errors(err))
            return _BAD
        self.typed[key.path] = raw
        return out

    def values(self, table: Mapping, path: str, **kw) -> dict[str, object]:
        """Every key of the table at `path`, by leaf name."""
        return {k.leaf: self.value(k, table, **kw) for k in keys_of(path)}

    def fail(self, field: str, value: object, allowed: str) -> None:
        self.errors.append(InputError(field, value, allowed))


def _ok(*values) -> bool:
    return all(v is not _BAD for v in values)


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
    errors: list[InputError] = []
    for name, x in value.items():
        where = f"{field}.{name}"
        try:
            if name not in FEED_COMPONENTS:
                raise InputError(where, x, f"a species among {', '.join(FEED_COMPONENTS)}"
                                 + suggest(str(name), FEED_COMPONENTS))
            if isinstance(x, str):
                fractions[name] = units.fraction(x, where)
                continue
            number = plain_number(x, where, "mole fraction")
            if number < 0.0:
                raise InputError(where, x, "a mole fraction of 0 or more")
            fractions[name] = number
        except InputError as err:
            errors.append(err)
    raise_all(errors)
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


def _feed(r: _Reader, data: Mapping) -> Feed | None:
    t = r.table(data, "feed")
    if t is None:
        return None
    comp_key = BY_PATH["feed.composition"]
    composition: object = _BAD
    if "composition" in t and not isinstance(t["composition"], Mapping):
        r.fail("feed.composition", t["composition"],
               "a table of mole fractions, e.g. { CH4 = 0.95, N2 = 0.05 }")
    else:
        composition = r.value(comp_key, t)
    mass = _mean_molar_mass(composition) if _ok(composition) else 0.016
    v = {k.leaf: r.value(k, t, molar_mass=mass) for k in keys_of("feed")
         if k.leaf != "composition"}
    if not _ok(composition, *v.values()):
        return None
    return Feed(composition=composition, **v)


def _axis(r: _Reader, data: Mapping, name: str) -> Axis | None:
    path = f"window.{name}"
    spec = r.table(data, path)
    if spec is None:
        return None
    v = r.values(spec, path)
    if not _ok(*v.values()):
        return None
    start, stop, points = v["from"], v["to"], v["points"]
    if points == 1 and start != stop:
        r.fail(f"{path}.to", spec["to"], "the same value as 'from' when points = 1")
        return None
    if points > 1 and not stop > start:
        r.fail(f"{path}.to", spec["to"], f"a value above 'from' ({spec['from']!r}) when "
                                         "points > 1")
        return None
    return Axis(start=start, stop=stop, points=points)


def _window(r: _Reader, data: Mapping) -> Window | None:
    t = r.table(data, "window")
    if t is None:
        return None
    cofeeds = [name for name in COFEEDS if name in t]
    if len(cofeeds) > 1:
        r.fail(f"window.{cofeeds[1]}", t[cofeeds[1]],
               f"no second co-feed axis: 'window.{cofeeds[0]}' is given, and at most one "
               "co-feed axis is allowed")
        cofeeds = cofeeds[:1]
    axes = {name: _axis(r, t, name) for name in ("temperature", "pressure", "steam_to_carbon",
                                                 *cofeeds)}
    if any(a is None for a in axes.values()):
        return None
    cofeed = cofeeds[0] if cofeeds else None
    window = Window(temperature=axes["temperature"], pressure=axes["pressure"],
                    steam_to_carbon=axes["steam_to_carbon"], cofeed=cofeed,
                    cofeed_axis=axes.get(cofeed) if cofeed else None)
    size = window.size()
    if size > MAX_WINDOW_POINTS:
        shape = " x ".join(str(a.points) for a in window.axes().values())
        r.fail("window", f"{shape} = {size} points", f"at most {MAX_WINDOW_POINTS} points in all")
        return None
    return window


def _approach_fits(r: _Reader, approach: float, temperature: float, window: Window) -> None:
    """The equilibrium is taken at T - approach, which must stay inside the model's range."""
    lowest = min(temperature, window.temperature.start)
    if lowest - approach < TEMPERATURE_RANGE_K[0]:
        r.fail("design_point.approach", r.typed.get("design_point.approach", f"{approach:g} K"),
               f"an approach that keeps T - approach at or above {TEMPERATURE_RANGE_K[0]:g} K "
               f"(the lowest temperature of the scenario is {lowest:g} K)")


def _train(r: _Reader, data: Mapping) -> Train | None:
    t = r.table(data, "train")
    if t is None:
        return Train() if "train" not in data else None
    stages: dict[str, object] = {}
    kinds = {"pre_reformer": PreReformer, "secondary_reformer": SecondaryReformer,
             "high_temperature_shift": ShiftStage, "low_temperature_shift": ShiftStage}
    bad = False
    for name, cls in kinds.items():
        s = r.table(t, f"train.{name}")
        if s is None:
            bad = bad or name in t
            continue
        v = r.values(s, f"train.{name}")
        if _ok(*v.values()):
            stages[name] = cls(**v)
        else:
            bad = True
    hts, lts = stages.get("high_temperature_shift"), stages.get("low_temperature_shift")
    if hts is not None and lts is not None and not lts.temperature < hts.temperature:
        r.fail("train.low_temperature_shift.temperature",
               r.typed["train.low_temperature_shift.temperature"],
               "a temperature below the high-temperature shift's "
               f"({r.typed['train.high_temperature_shift.temperature']}): the gas flows from "
               "the high- to the low-temperature stage")
        bad = True
    return None if bad else Train(**stages)


def _carbon(r: _Reader, data: Mapping) -> CarbonCheck | None:
    t = r.table(data, "carbon")
    if t is None:
        return CarbonCheck() if "carbon" not in data else None
    v = r.values(t, "carbon")
    if not _ok(*v.values()):
        return None
    if v["reference"] == "catalyst" and v["catalyst_carbon_offset"] is None:
        r.fail("carbon.catalyst_carbon_offset", _MISSING,
               'a value: reference = "catalyst" needs the catalyst carbon\'s offset')
        return None
    return CarbonCheck(v["path_temperatures"], v["reference"], v["catalyst_carbon_offset"],
                       v["higher_hydrocarbon_cracking_temperature"])


def _plant_rules(r: _Reader, data: Mapping, plant: Plant) -> bool:
    """Superheated steam, sub-cooled feed water, a stack below the bridgewall."""
    from thermo.steam import saturation_temperature

    t_sat = float(saturation_temperature(plant.steam_pressure))
    ok = True
    if not plant.steam_temperature > t_sat + 1.0:
        r.fail("plant.steam_temperature",
               data.get("steam_temperature", f"{plant.steam_temperature:g} K"),
               f"superheated steam: above the saturation temperature {t_sat - 273.15:.2f} degC "
               "at the steam pressure (IAPWS-IF97)")
        ok = False
    if not plant.feed_water_temperature < t_sat - 1.0:
        r.fail("plant.feed_water_temperature",
               data.get("feed_water_temperature", f"{plant.feed_water_temperature:g} K"),
               f"liquid water: below the saturation temperature {t_sat - 273.15:.2f} degC at "
               "the steam pressure (IAPWS-IF97)")
        ok = False
    if not plant.stack_temperature < plant.bridgewall_temperature:
        r.fail("plant.stack_temperature",
               data.get("stack_temperature", f"{plant.stack_temperature:g} K"),
               "a temperature below the bridgewall temperature")
        ok = False
    return ok


def _plant(r: _Reader, data: Mapping) -> Plant | None:
    t = r.table(data, "plant")
    if t is None:
        return None
    v = r.values(t, "plant")
    if not _ok(*v.values()):
        return None
    plant = Plant(**v)
    return plant if _plant_rules(r, t, plant) else None


def parse_plant(data: object) -> Plant:
    """The ``[plant]`` table (a mapping of raw TOML values) as a :class:`Plant`.

    Raises
    ------
    InputError
        Unknown keys, bad units and values outside the schema's ranges, naming
        ``plant.<key>``, the value as typed and the range; steam conditions that are not
        superheated steam and sub-cooled feed water at the steam pressure; a stack not below
        the bridgewall. Every refused key at once.
    """
    r = _Reader()
    plant = _plant(r, {"plant": data})
    raise_all(r.errors)
    return plant


def _from_dict(data: Mapping, text: str, path: str | None) -> Scenario:
    r = _Reader()
    r.check_keys(data, "")
    top = r.values(data, "")
    feed = _feed(r, data)
    point_t = r.table(data, "design_point")
    point = r.values(point_t, "design_point") if point_t is not None else None
    window = _window(r, data)
    if point is not None and window is not None and _ok(*point.values()):
        _approach_fits(r, point["approach"], point["temperature"], window)
    lim_t = r.table(data, "limits")
    limits = Limits(**r.values(lim_t, "limits")) if lim_t is not None else Limits()
    train = _train(r, data)
    carbon = _carbon(r, data)
    plant = _plant(r, data)
    display_t = r.table(data, "display")
    display = r.values(display_t, "display")["units"] if display_t is not None else "metric"
    if _ok(limits.max_fired_duty) and limits.max_fired_duty is not None and "plant" not in data:
        r.fail("limits.max_fired_duty", r.typed["limits.max_fired_duty"],
               "a fired-duty limit only together with a [plant] table (the furnace it limits)")
    raise_all(r.errors)
    return Scenario(feed=feed, window=window, limits=limits, train=train, carbon=carbon,
                    plant=plant, display_units=display, inputs=r.typed, text=text, path=path,
                    **top, **point)


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
        SI floats inside; ``text`` holds the source, ``inputs`` what was typed per key.

    Raises
    ------
    InputError
        Bad TOML; else :class:`thermo.errors.InputErrors` (one InputError when there is one)
        with every unknown or missing key, wrong type, unit or range of the file.
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
    """Read a scenario file (the demo, :data:`DEMO_PATH`, when `path` is omitted).

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


def window_with(sc: Scenario, given: Mapping[str, object]) -> tuple[Window, dict]:
    """`sc`'s window with the axes in `given` (name -> (from, to, points)) replaced, checked
    like a file; returns it and the typed inputs to keep (see :meth:`Scenario.with_window`)."""
    from thermo.scenario_toml import exact_text

    if "oxygen_to_carbon" in given and "co2_to_carbon" in given:
        raise InputError("window", "oxygen_to_carbon and co2_to_carbon",
                         "at most one co-feed axis")
    raw: dict[str, dict] = {}
    for name, axis in sc.window.axes().items():
        if name in COFEEDS and any(c in given for c in COFEEDS):
            continue
        raw[name] = {leaf: exact_text(sc, BY_PATH[f"window.{name}.{leaf}"], value)
                     for leaf, value in (("from", axis.start), ("to", axis.stop),
                                         ("points", axis.points))}
    for name, spec in given.items():
        if not (isinstance(spec, (tuple, list)) and len(spec) == 3):
            raise InputError(f"window.{name}", spec, "a tuple (from, to, points)")
        raw[name] = {"from": spec[0], "to": spec[1], "points": spec[2]}
    r = _Reader()
    window = _window(r, {"window": raw})
    if window is not None:
        _approach_fits(r, sc.approach, sc.temperature, window)
    raise_all(r.errors)
    typed = {k: v for k, v in sc.inputs.items() if not k.startswith("window.")}
    typed.update({k: v for k, v in r.typed.items() if isinstance(v, (str, int, float))})
    return window, typed


#: Keywords of :func:`validate_point_overrides` and the key each overrides.
POINT_OVERRIDES = {
    "temperature": "design_point.temperature",
    "pressure": "design_point.pressure",
    "approach": "design_point.approach",
    "inlet_temperature": "feed.inlet_temperature",
    "steam_to_carbon": "feed.steam_to_carbon",
    "oxygen_to_carbon": "feed.oxygen_to_carbon",
    "co2_to_carbon": "feed.co2_to_carbon",
    "feed": "feed.composition",
}


def validate_point_overrides(field_names: Mapping[str, str] | None = None, **values) -> dict:
    """Parse and range-check the overrides of one point (CLI options, ``point()`` keywords).

    Parameters
    ----------
    field_names : Mapping[str, str], optional
        Name to show in messages for each keyword, e.g. ``{"temperature": "--temperature"}``.
    **values
        Any of :data:`POINT_OVERRIDES`: quantities as strings with units or pint quantities,
        ratios as numbers (or their text), ``feed`` a composition (see
        :func:`parse_composition`). None values are skipped.

    Returns
    -------
    dict
        The same keys with SI floats [K, Pa, K, mol per mol] or a :class:`Composition`.

    Raises
    ------
    InputError
        Every refused value at once (:class:`thermo.errors.InputErrors` for several).
    """
    names = dict(field_names or {})
    out: dict[str, object] = {}
    errors: list[InputError] = []
    for name, value in values.items():
        if name not in POINT_OVERRIDES:
            raise TypeError(f"validate_point_overrides() got an unknown keyword {name!r}")
        if value is None:
            continue
        key = BY_PATH[POINT_OVERRIDES[name]]
        if key.kind == "ratio" and isinstance(value, str):
            try:
                value = float(value)
            except ValueError:
                errors.append(InputError(names.get(name, name), value,
                                         "a plain number (mol per mol hydrocarbon carbon)"))
                continue
        try:
            out[name] = parse_value(key, value, names.get(name, name))
        except InputError as err:
            errors.append(err)
    raise_all(errors)
    return out
