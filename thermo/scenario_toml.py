"""The one scenario writer: a Scenario (or a form's fields) into TOML, driven by the schema.

Each value is written as the user typed it while that text still reads back to the exact SI
value (``"22 barg"`` stays ``"22 barg"``); otherwise as the shortest number in the key's
engineer unit that reads back exactly (``"1100 kmol/h"``, never ``"305.55555555555554
mol/s"``), and in SI only when no shorter text is exact. :func:`dump` turns the nested mapping
of raw values into text; the app's form uses it with what its fields hold.
"""

from __future__ import annotations

import math
import re
from collections.abc import Mapping

import numpy as np

from thermo.errors import InputError
from thermo.schema import KEYS, Key, parse_value

#: Metric display unit -> (factor from SI, offset) with shown = SI * factor - offset.
_UNITS = {"degC": (1.0, 273.15), "K": (1.0, 0.0), "bar": (1e-5, 0.0), "kmol/h": (3.6, 0.0),
          "MW": (1e-6, 0.0), "kJ/mol": (1e-3, 0.0)}
#: SI unit of each dimension, the last resort of the writer.
_SI = {"temperature": "K", "temperature_difference": "K", "pressure": "Pa",
       "molar_flow": "mol/s", "power": "W", "molar_energy": "J/mol"}
_BARE_KEY = re.compile(r"^[A-Za-z0-9_-]+$")


def _get(sc, key: Key):
    """The SI value of `key` in `sc`, or None when its table is absent."""
    parts = key.attr.split(".")
    if parts[0] == "window":
        axis = sc.window.axes().get(parts[1])
        return None if axis is None else getattr(axis, parts[2])
    obj = sc
    for p in parts:
        obj = getattr(obj, p, None)
        if obj is None:
            return None
    return obj


def _molar_mass(sc) -> float:
    return sc.feed.mean_molar_mass()


def _same(a, b) -> bool:
    if isinstance(a, Mapping) and isinstance(b, Mapping):
        return dict(a) == dict(b)
    return type(a) is type(b) and a == b if isinstance(a, bool) or isinstance(b, bool) else a == b


def _reads_back(key: Key, raw: object, value: object, molar_mass: float) -> bool:
    try:
        return _same(parse_value(key, raw, molar_mass=molar_mass), value)
    except InputError:
        return False


def _positional(x: float, digits: int) -> str:
    return np.format_float_positional(x, precision=digits, unique=False, fractional=False,
                                      trim="-")


def short_quantity(key: Key, value: float, molar_mass: float = math.nan) -> str:
    """The shortest text of `value` [SI] in `key`'s unit that reads back exactly."""
    factor, offset = _UNITS.get(key.unit, (None, None))
    if factor is not None:
        shown = value * factor - offset
        for digits in range(1, 18):
            text = f"{_positional(shown, digits)} {key.unit}"
            if _reads_back(key, text, value, molar_mass):
                return text
    return f"{value!r} {_SI[key.dimension]}"


def raw_value(key: Key, value: object, molar_mass: float = math.nan) -> object:
    """A TOML value (str, number, bool, list or mapping) that reads back as `value` [SI]."""
    kind = key.kind
    if kind == "quantity":
        return short_quantity(key, value, molar_mass)
    if kind == "quantity_list":
        return [short_quantity(key, v) for v in value]
    if kind == "composition":
        return dict(value)
    if kind in ("ratio", "number", "fraction"):
        return float(value)
    return value


def exact_text(sc, key: Key, value: object) -> object:
    """What the user typed for `key` if it still reads back as `value`, else
    :func:`raw_value`."""
    typed = sc.inputs.get(key.path)
    mass = _molar_mass(sc) if key.dimension == "molar_flow" else math.nan
    if typed is not None and _reads_back(key, typed, value, mass):
        return typed
    return raw_value(key, value, mass)


def _present(sc, key: Key, value: object) -> bool:
    table = key.table
    if value is None:
        return False
    if table == "carbon":
        from thermo.scenario_stages import CarbonCheck

        return sc.carbon != CarbonCheck()
    if table == "display":
        return value != key.default or key.path in sc.inputs
    return True


def scenario_mapping(sc) -> dict:
    """The nested mapping of raw TOML values that describes `sc` (schema order)."""
    out: dict = {}
    for key in KEYS:
        value = _get(sc, key)
        if not _present(sc, key, value):
            continue
        node = out
        for part in key.table.split(".") if key.table else []:
            node = node.setdefault(part, {})
        node[key.leaf] = exact_text(sc, key, value)
    return out


def scenario_toml(sc) -> str:
    """TOML text of `sc` that :func:`thermo.scenario.parse_scenario` reads back equal."""
    return dump(scenario_mapping(sc))


# ------------------------------------------------------------------------------- TOML text


def toml_string(s: str) -> str:
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


def _key(k: str) -> str:
    return k if _BARE_KEY.match(k) else toml_string(k).replace("\n", "\\n")


def _value(v: object) -> str:
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, (int, np.integer)):
        return str(int(v))
    if isinstance(v, (float, np.floating)):
        x = float(v)
        return repr(x) if math.isfinite(x) else toml_string(repr(x))
    if isinstance(v, str):
        return toml_string(v)
    if isinstance(v, Mapping):
        return "{ " + ", ".join(f"{_key(k)} = {_value(x)}" for k, x in v.items()) + " }"
    if isinstance(v, (list, tuple)):
        return "[" + ", ".join(_value(x) for x in v) + "]"
    return toml_string(str(v))


def dump(data: Mapping) -> str:
    """TOML text of a nested mapping of raw scenario values: top-level values, then one
    [table] per section ([train.<stage>] for the stages); axes and compositions inline."""
    lines = [f"{_key(k)} = {_value(v)}" for k, v in data.items() if not isinstance(v, Mapping)]
    for name, table in data.items():
        if not isinstance(table, Mapping):
            continue
        parts = table.items() if name == "train" else [(None, table)]
        for stage, t in parts:
            head = name if stage is None else f"{name}.{_key(stage)}"
            lines += ["", f"[{head}]"]
            lines += [f"{_key(k)} = {_value(v)}" for k, v in t.items()]
    return "\n".join(lines) + "\n"


# ------------------------------------------------------------------------------ form text


def raw_from_text(key: Key, text: str) -> object:
    """The raw TOML value of a form field's text (a number stays a number)."""
    s = text.strip()
    if key.kind in ("ratio", "number", "fraction", "integer"):
        try:
            return int(s) if key.kind == "integer" else float(s)
        except ValueError:
            return s
    if key.kind == "composition":
        pairs: dict[str, object] = {}
        for part in s.replace(";", ",").split(","):
            if not part.strip():
                continue
            name, sep, val = part.partition("=")
            if not sep:
                return s
            try:
                pairs[name.strip()] = float(val)
            except ValueError:
                pairs[name.strip()] = val.strip()
        return pairs
    if key.kind == "quantity_list":
        return [p.strip() for p in s.split(",") if p.strip()]
    return text if key.kind == "text" else s


def text_of(raw: object) -> str:
    """A raw TOML value as a form field shows it."""
    if isinstance(raw, Mapping):
        return ", ".join(f"{k}={text_of(v)}" for k, v in raw.items())
    if isinstance(raw, (list, tuple)):
        return ", ".join(text_of(v) for v in raw)
    if isinstance(raw, bool):
        return "true" if raw else "false"
    if isinstance(raw, float):
        return _positional(raw, 17) if raw == int(raw) and abs(raw) < 1e15 else repr(raw)
    return str(raw)


def input_rows(sc) -> list[tuple[str, str, str]]:
    """(key path, label, value as written) of every key the scenario holds, in schema order:
    the review sheet's list of inputs as entered."""
    rows = []
    for key in KEYS:
        value = _get(sc, key)
        if key.path == "notes" or not _present(sc, key, value):
            continue
        rows.append((key.path, key.label, text_of(exact_text(sc, key, value))))
    return rows
