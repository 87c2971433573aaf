"""Quantities with units: the only place where user text such as ``"850 degC"`` is parsed.

Everything inside ``thermo`` is SI floats (K, Pa, mol s-1, kg s-1, W). The functions here turn
what an engineer types into those floats, and the ``*_from_*`` helpers turn SI arrays back into
the engineer's display units.

A quantity is written as a number followed by a unit, ``"25 bar"``. The text is split with a
regular expression and only the unit part is given to pint, so offset units (degC, degF, barg)
work without pint's rules on multiplying them. A plain number without a unit is refused
everywhere except in :func:`fraction`.

Units added to pint's defaults (module registry :data:`ureg`):

- ``barg``, ``psig``, ``kPag``, ``MPag``: gauge pressures, absolute = gauge + 101325 Pa
  (:data:`thermo.constants.ATM`). The spellings ``bar(g)``, ``bar g``, ``psi(g)``, ``kPa(g)``
  are read as the gauge units, ``bara``, ``bar(a)``, ``bar a``, ``psia``, ``psi(a)`` as absolute;
  pint on its own would read ``bar(g)`` as bar times gram.
- ``Nm3`` (also ``Nm³``, ``Nm^3``): normal cubic metre, an *amount of substance*: the ideal-gas
  amount in one cubic metre at normal conditions 0 degC and 1.01325 bar,
  1/:data:`thermo.constants.V_NORMAL` mol (about 44.6 mol).
- ``lbmol``: pound-mole, 453.59237 mol.
- ``MMBtu``: one million Btu (pint's International Table Btu).

Standard volumes (``Sm3``, ``scf``, ``MMSCFD`` ...) are refused: their reference conditions
differ between industries and countries.
"""

from __future__ import annotations

import math
import re
from numbers import Real

import numpy as np
import pint

from thermo.constants import ATM, V_NORMAL
from thermo.errors import InputError

__all__ = [
    "ureg",
    "parse_quantity",
    "temperature_K",
    "pressure_Pa",
    "temperature_difference_K",
    "molar_flow_mol_s",
    "power_W",
    "fraction",
    "degC_from_K",
    "K_from_degC",
    "bar_from_Pa",
    "Pa_from_bar",
    "barg_from_Pa",
    "kmol_per_h_from_mol_per_s",
    "kg_per_h_from_kg_per_s",
    "MW_from_W",
    "Nm3_per_h_from_mol_per_s",
]

#: The project's unit registry; pint defaults plus the units listed in the module docstring.
ureg = pint.UnitRegistry()

_PSI_PA = float(ureg.Quantity(1.0, "psi").to("Pa").magnitude)
for _definition in (
    f"barg = 100000 * pascal; offset: {ATM!r}",
    f"kPag = 1000 * pascal; offset: {ATM!r}",
    f"MPag = 1000000 * pascal; offset: {ATM!r}",
    f"psig = {_PSI_PA!r} * pascal; offset: {ATM!r}",
    f"normal_cubic_meter = {1.0 / V_NORMAL!r} * mole",
    "lbmol = 453.59237 * mole",
    "MMBtu = 1e6 * Btu",
):
    ureg.define(_definition)
del _definition

# A number (sign, decimals, exponent) then the rest of the text as the unit.
_NUMBER_UNIT = re.compile(
    r"^\s*(?P<number>[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?)\s*(?P<unit>.*?)\s*$"
)

# Pressure spellings handled before pint: base unit + optional (a)/(g) marker.
_PRESSURE_FORM = re.compile(
    r"^(?P<base>Pa|kPa|MPa|bar|psi)\s*(?:\(\s*(?P<p>[agAG])\s*\)|\s+(?P<s>[agAG])|(?P<j>[agAG]))?$"
)
_GAUGE_NAME = {"Pa": None, "kPa": "kPag", "MPa": "MPag", "bar": "barg", "psi": "psig"}

# Standard (not normal) volumes: reference conditions ambiguous, refused.
_STANDARD_VOLUME = re.compile(r"(?i)(?<![a-z])(?:k|m|mm)?(?:sm3|sm\^3|sm³|scm|scf)")
_NORMAL_VOLUME = re.compile(r"(?<![A-Za-z_])Nm(?:3|³|\^3|\*\*3)(?![0-9])")
# "m3" for "m**3" (pint's parse_units does not read a bare trailing exponent).
_POWER_DIGIT = re.compile(r"(?<=[A-Za-z])([23])(?![0-9])")

# Temperature spellings (only inside the temperature functions).
_TEMPERATURE_ALIASES = {
    "C": "degC",
    "°C": "degC",
    "ºC": "degC",
    "celsius": "degC",
    "degC": "degC",
    "F": "degF",
    "°F": "degF",
    "ºF": "degF",
    "degF": "degF",
    "°R": "degR",
    "degR": "degR",
    "K": "K",
    "kelvin": "K",
}
_DIFFERENCE_ALIASES = {
    "K": "K",
    "kelvin": "K",
    "delta_degC": "delta_degC",
    "degC": "delta_degC",
    "°C": "delta_degC",
    "ºC": "delta_degC",
    "C": "delta_degC",
    "delta_degF": "delta_degF",
    "degF": "delta_degF",
    "°F": "delta_degF",
    "ºF": "delta_degF",
    "F": "delta_degF",
}

_EXAMPLE = "a number with a unit, e.g. '850 degC'"


def _split(value: str, field: str, allowed: str) -> tuple[float, str]:
    """Split ``"850 degC"`` into (850.0, "degC"); InputError if it is not that shape."""
    match = _NUMBER_UNIT.match(value)
    if match is None:
        raise InputError(field, value, allowed)
    number = float(match["number"])
    if not math.isfinite(number):
        raise InputError(field, value, allowed)
    return number, match["unit"]


def _normalise_unit(unit: str, field: str, value: object) -> str:
    """Rewrite the project's spellings into registry names; refuse standard volumes."""
    if _STANDARD_VOLUME.search(unit):
        raise InputError(
            field,
            value,
            "no standard volume (Sm3, scf, MMSCFD): standard conditions are ambiguous; use Nm3 "
            "(0 degC, 1.01325 bar), e.g. '35000 Nm3/h', or a molar flow such as '1450 kmol/h'",
        )
    form = _PRESSURE_FORM.match(unit)
    if form is not None:
        base = form["base"]
        marker = (form["p"] or form["s"] or form["j"] or "a").lower()
        if marker == "g":
            gauge = _GAUGE_NAME[base]
            if gauge is None:
                raise InputError(
                    field, value, "a gauge pressure in barg, kPag, MPag or psig (no 'Pa(g)')"
                )
            return gauge
        return base
    unit = _NORMAL_VOLUME.sub("normal_cubic_meter", unit)
    return _POWER_DIGIT.sub(r"**\1", unit.replace("³", "3").replace("²", "2"))


def _units(unit: str, field: str, value: object, allowed: str) -> pint.Unit:
    if not unit:
        raise InputError(field, value, allowed)
    name = _normalise_unit(unit, field, value)
    try:
        return ureg.parse_units(name)
    except Exception as exc:  # pint raises several types (UndefinedUnitError, ValueError, ...)
        raise InputError(field, value, f"{allowed}; the unit {unit!r} is not known") from exc


def _from_foreign(value: pint.Quantity, field: str, allowed: str) -> pint.Quantity:
    """A Quantity of any registry as a scalar Quantity of :data:`ureg`."""
    try:
        magnitude = float(value.magnitude)
    except (TypeError, ValueError) as exc:
        raise InputError(field, value, f"{allowed} (one scalar value)") from exc
    if not math.isfinite(magnitude):
        raise InputError(field, value, f"{allowed} (a finite value)")
    if getattr(value, "_REGISTRY", None) is ureg:
        return ureg.Quantity(magnitude, value.units)
    try:
        return ureg.Quantity(magnitude, ureg.parse_units(str(value.units)))
    except Exception as exc:
        raise InputError(field, value, allowed) from exc


def _parse(value: object, field: str, allowed: str, aliases: dict[str, str] | None = None):
    """Common parser: returns a Quantity of :data:`ureg`."""
    if isinstance(value, pint.Quantity):
        return _from_foreign(value, field, allowed)
    if isinstance(value, (bool, np.bool_)) or isinstance(value, (Real, np.number)):
        raise InputError(field, value, allowed)
    if not isinstance(value, str):
        raise InputError(field, value, allowed)
    number, unit = _split(value, field, allowed)
    if aliases is not None and unit in aliases:
        return ureg.Quantity(number, aliases[unit])
    return ureg.Quantity(number, _units(unit, field, value, allowed))


def parse_quantity(value: str | pint.Quantity, field: str) -> pint.Quantity:
    """Parse a number with a unit into a Quantity of the project registry.

    Parameters
    ----------
    value : str or pint.Quantity
        Text such as ``"850 degC"``, ``"25 barg"``, ``"1200 kmol/h"``, or a pint Quantity of
        any registry (re-created in :data:`ureg` from its magnitude and unit name).
    field : str
        Key path or option name, used in error messages.

    Returns
    -------
    pint.Quantity
        Scalar quantity of :data:`ureg` [any unit].

    Raises
    ------
    InputError
        For a plain number, an empty or malformed text, an unknown unit or a standard volume.

    Examples
    --------
    >>> parse_quantity("25 barg", "pressure").to("Pa").magnitude
    2601325.0
    """
    return _parse(value, field, _EXAMPLE)


def _dimension_error(field: str, value: object, allowed: str) -> InputError:
    return InputError(field, value, allowed)


def _is_delta(q: pint.Quantity) -> bool:
    return any(name.startswith("delta_") for name, _ in q.unit_items())


def temperature_K(value: str | pint.Quantity, field: str) -> float:
    """Absolute temperature [K] from text such as ``"850 degC"``.

    Parameters
    ----------
    value : str or pint.Quantity
        Number with K, degC (also ``C``, ``°C``), degF (``F``, ``°F``) or degR (``°R``).
    field : str
        Key path or option name for messages.

    Returns
    -------
    float
        Temperature [K]; above 0 K.

    Examples
    --------
    >>> temperature_K("850 degC", "temperature")
    1123.15
    """
    allowed = "an absolute temperature with its unit, e.g. '850 degC' or '1123.15 K'"
    q = _parse(value, field, allowed, _TEMPERATURE_ALIASES)
    if not q.check("[temperature]") or _is_delta(q):
        raise _dimension_error(field, value, allowed)
    T = float(q.to("K").magnitude)
    if not T > 0.0:
        raise InputError(field, value, "a temperature above absolute zero")
    return T


def temperature_difference_K(value: str | pint.Quantity, field: str) -> float:
    """Temperature difference [K] from text such as ``"10 K"``.

    Parameters
    ----------
    value : str or pint.Quantity
        Number with K, delta_degC or delta_degF. In this function alone, ``degC`` (``C``,
        ``°C``) and ``degF`` are read as *differences*: "10 degC" means 10 K here, since an
        approach to equilibrium is a temperature difference.
    field : str
        Key path or option name for messages.

    Returns
    -------
    float
        Difference [K]; any sign.

    Examples
    --------
    >>> temperature_difference_K("10 degC", "approach")
    10.0
    """
    allowed = "a temperature difference with its unit, e.g. '10 K' or '10 delta_degC'"
    q = _parse(value, field, allowed, _DIFFERENCE_ALIASES)
    units = str(q.units)
    if units in ("degree_Celsius", "degree_Fahrenheit"):
        q = ureg.Quantity(q.magnitude, "delta_" + ("degC" if "Celsius" in units else "degF"))
    if not q.check("[temperature]") or not q._is_multiplicative:
        raise _dimension_error(field, value, allowed)
    return float(q.to("K").magnitude)


def pressure_Pa(value: str | pint.Quantity, field: str) -> float:
    """Absolute pressure [Pa] from text such as ``"25 bar"`` or ``"25 barg"``.

    Parameters
    ----------
    value : str or pint.Quantity
        Number with Pa, kPa, MPa, bar, atm or psi (absolute; ``bara``, ``bar(a)``, ``bar a``,
        ``psia``, ``psi(a)`` also), or a gauge unit barg, ``bar(g)``, ``bar g``, psig,
        ``psi(g)``, kPag, ``kPa(g)``, MPag, ``MPa(g)``: absolute = gauge + 101325 Pa.
    field : str
        Key path or option name for messages.

    Returns
    -------
    float
        Absolute pressure [Pa]; above 0.

    Examples
    --------
    >>> pressure_Pa("25 bar(g)", "pressure")
    2601325.0
    """
    allowed = "a pressure with its unit, e.g. '25 bar' (absolute) or '24 barg' (gauge)"
    q = _parse(value, field, allowed)
    if not q.check("[pressure]") or _is_delta(q):
        raise _dimension_error(field, value, allowed)
    P = float(q.to("Pa").magnitude)
    if not P > 0.0:
        raise InputError(
            field, value, f"an absolute pressure above 0 (this is {P:.6g} Pa absolute)"
        )
    return P


def molar_flow_mol_s(value: str | pint.Quantity, field: str, molar_mass_kg_mol: float) -> float:
    """Molar flow [mol s-1] from a molar, mass or normal-volume flow.

    Parameters
    ----------
    value : str or pint.Quantity
        Molar flow (kmol/h, mol/s, kmol/s, lbmol/h), mass flow (kg/h, t/h, kg/s, lb/h) or normal
        volume flow (Nm3/h, Nm3/d; 0 degC and 1.01325 bar, ideal gas).
    field : str
        Key path or option name for messages.
    molar_mass_kg_mol : float
        Mean molar mass of the stream [kg mol-1], used for mass flows.

    Returns
    -------
    float
        Molar flow [mol s-1].

    Examples
    --------
    >>> round(molar_flow_mol_s("3600 kmol/h", "flow", 0.016), 9)
    1000.0
    """
    allowed = "a flow with its unit, e.g. '1450 kmol/h', '25000 kg/h' or '32000 Nm3/h'"
    q = _parse(value, field, allowed)
    if q.check("[substance] / [time]"):
        return float(q.to("mol/s").magnitude)
    if q.check("[mass] / [time]"):
        if not (molar_mass_kg_mol > 0.0 and math.isfinite(molar_mass_kg_mol)):
            raise InputError("molar mass", molar_mass_kg_mol, "a positive molar mass [kg mol-1]")
        return float(q.to("kg/s").magnitude) / molar_mass_kg_mol
    if q.check("[length] ** 3 / [time]"):
        raise InputError(
            field,
            value,
            "a molar, mass or normal volume flow; an actual volume flow needs its temperature "
            "and pressure: write normal cubic metres as 'Nm3/h' with a capital N "
            "(0 degC, 1.01325 bar)",
        )
    raise _dimension_error(field, value, allowed)


def power_W(value: str | pint.Quantity, field: str) -> float:
    """Heat flow or power [W] from text such as ``"75 MW"``.

    Parameters
    ----------
    value : str or pint.Quantity
        Number with W, kW, MW, Gcal/h or MMBtu/h. Calories are International Table calories
        (4.1868 J), the convention for duties in Gcal/h (from memory); Btu is pint's
        International Table Btu (1055.056 J).
    field : str
        Key path or option name for messages.

    Returns
    -------
    float
        Power [W].

    Examples
    --------
    >>> power_W("1 Gcal/h", "duty")
    1163000.0
    """
    allowed = "a power with its unit, e.g. '75 MW', '20 Gcal/h' or '250 MMBtu/h'"
    if isinstance(value, str):
        value_for_pint = re.sub(r"(?<![A-Za-z_])([kMG]?)cal(?![A-Za-z_])", r"\1cal_it", value)
        try:
            q = _parse(value_for_pint, field, allowed)
        except InputError as exc:
            raise InputError(field, value, exc.allowed) from None
    else:
        q = _parse(value, field, allowed)
    if not q.check("[power]"):
        raise _dimension_error(field, value, allowed)
    return float(q.to("W").magnitude)


def fraction(value: str | float | pint.Quantity, field: str) -> float:
    """A fraction [-] between 0 and 1 from ``"4 %"``, ``"4 mol%"``, ``"0.04"`` or ``0.04``.

    Parameters
    ----------
    value : str, float or pint.Quantity
        Per cent (``%``, ``mol%``, ``mol %``), ppm, or a plain number read as the fraction
        itself. Plain numbers are allowed here only.
    field : str
        Key path or option name for messages.

    Returns
    -------
    float
        Fraction [-], 0 to 1.

    Examples
    --------
    >>> fraction("4 mol%", "max_methane_slip_dry")
    0.04
    """
    allowed = "a fraction from 0 to 1, e.g. 0.04, or per cent, e.g. '4 mol%'"
    if isinstance(value, (bool, np.bool_)):
        raise InputError(field, value, allowed)
    if isinstance(value, (Real, np.number)):
        x = float(value)
    elif isinstance(value, str):
        match = _NUMBER_UNIT.match(value)
        if match is None:
            raise InputError(field, value, allowed)
        unit = re.sub(r"^mol\s*", "", match["unit"])
        if unit in ("", "mol/mol"):
            x = float(match["number"])
        elif unit in ("%", "percent"):
            x = float(match["number"]) / 100.0
        elif unit == "ppm":
            x = float(match["number"]) / 1e6
        else:
            raise InputError(field, value, allowed)
    elif isinstance(value, pint.Quantity):
        q = _from_foreign(value, field, allowed)
        if not q.dimensionless:
            raise InputError(field, value, allowed)
        x = float(q.to("dimensionless").magnitude)
    else:
        raise InputError(field, value, allowed)
    if not (math.isfinite(x) and 0.0 <= x <= 1.0):
        hint = "; per cent needs the % sign" if isinstance(value, (int, float)) else ""
        raise InputError(field, value, allowed + hint)
    return x


# --------------------------------------------------------------------------- display helpers


def degC_from_K(T):
    """Celsius temperature [degC] from kelvin [K]; arrays welcome."""
    return np.asarray(T, dtype=float) - 273.15


def K_from_degC(T_C):
    """Kelvin [K] from Celsius [degC]; arrays welcome."""
    return np.asarray(T_C, dtype=float) + 273.15


def bar_from_Pa(P):
    """Pressure [bar] from [Pa]; arrays welcome (absolute stays absolute)."""
    return np.asarray(P, dtype=float) / 1e5


def Pa_from_bar(P_bar):
    """Pressure [Pa] from [bar]; arrays welcome."""
    return np.asarray(P_bar, dtype=float) * 1e5


def barg_from_Pa(P):
    """Gauge pressure [barg] from absolute pressure [Pa] (minus 101325 Pa); arrays welcome."""
    return (np.asarray(P, dtype=float) - ATM) / 1e5


def kmol_per_h_from_mol_per_s(n):
    """Molar flow [kmol h-1] from [mol s-1]; arrays welcome."""
    return np.asarray(n, dtype=float) * 3.6


def kg_per_h_from_kg_per_s(m):
    """Mass flow [kg h-1] from [kg s-1]; arrays welcome."""
    return np.asarray(m, dtype=float) * 3600.0


def MW_from_W(q):
    """Power [MW] from [W]; arrays welcome."""
    return np.asarray(q, dtype=float) / 1e6


def Nm3_per_h_from_mol_per_s(n):
    """Normal volume flow [Nm3 h-1] (0 degC, 1.01325 bar) from molar flow [mol s-1]."""
    return np.asarray(n, dtype=float) * (3600.0 * V_NORMAL)
