"""SI to what is shown: the one place for display units, their labels and number formats.

Everything computed (``thermo``) and every file written stays SI. Every table, map axis,
colour bar, hover, CSV column, review sheet and the review file's script turn SI into the
engineer's units through this module, in one of two unit systems:

``metric``
    degC, bar abs and barg, kmol/h, kg/h, Nm3/h (0 degC and 1.01325 bar), MW, t/h of steam.
``us`` (US customary)
    degF, psia and psig, lbmol/h, lb/h, MMSCFD (million standard cubic feet per day at
    60 degF and 14.696 psia), MMBtu/h, klb/h of steam.

A display *kind* names a physical quantity (``"temperature"``, ``"molar_flow"`` ...); each
system maps a kind to a :class:`Unit`: its symbol, ``shown = SI * scale + offset`` and how many
decimals it takes beyond the metric ones (a psia reads with one decimal less than bar).
The factors are plain floats computed once at import, so the page's numbers stay fast; the
review file's script receives them from :func:`conversions` and holds no copy of its own.

Factors (exact by definition unless noted), NIST Special Publication 811 (2008), Guide for
the Use of the International System of Units, Appendix B:

- degF: T/degF = 1.8 T/K - 459.67;
- pound (avoirdupois) 0.45359237 kg; foot 0.3048 m; inch 0.0254 m;
- pound-force per square inch = 0.45359237 kg x 9.80665 m/s2 / (0.0254 m)^2
  = 6894.757 Pa (SP 811: 6.894 757 E+03);
- British thermal unit (International Table) 1055.05585262 J.

Standard volume of the US gas trade: the ideal-gas molar volume at 60 degF and 14.696 psia,
V = R T / P with R = 8.314462618 J/(mol K) (CODATA 2018), about 0.023690 m3/mol (379.48 scf
per lbmol). A flow in MMSCFD is that volume per day, in millions of cubic feet.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from thermo.constants import ATM, P_NORMAL, T_NORMAL, V_NORMAL, R
from thermo.plant import GJ_PER_1000NM3_FROM_J_PER_MOL, MJ_PER_KG_FROM_J_PER_MOL

__all__ = [
    "SYSTEMS",
    "DEFAULT",
    "Unit",
    "unit",
    "symbol",
    "to_display",
    "from_display",
    "difference",
    "fmt",
    "number",
    "conversions",
    "system_note",
    "check_system",
]

#: Unit systems, in the order the chooser lists them: name -> words shown.
SYSTEMS: dict[str, str] = {"metric": "metric (degC, bar, kmol/h, Nm3/h, MW)",
                           "us": "US customary (degF, psia, lbmol/h, MMSCFD, MMBtu/h)"}
DEFAULT = "metric"

# NIST SP 811 (2008), Appendix B; exact by definition.
LB_KG = 0.45359237
FT_M = 0.3048
IN_M = 0.0254
G_N = 9.80665
PSI_PA = LB_KG * G_N / IN_M**2
BTU_J = 1055.05585262
FT3_M3 = FT_M**3

#: US standard conditions for gas volumes: 60 degF and 14.696 psia [K], [Pa].
T_STANDARD_US = (60.0 + 459.67) / 1.8
P_STANDARD_US = 14.696 * PSI_PA
#: Ideal-gas molar volume at the US standard conditions [m3/mol].
V_STANDARD_US = R * T_STANDARD_US / P_STANDARD_US
#: Standard cubic feet per mole [scf/mol].
SCF_PER_MOL = V_STANDARD_US / FT3_M3

_S_PER_H = 3600.0
_S_PER_D = 86400.0


@dataclass(frozen=True)
class Unit:
    """How one kind of quantity is shown: ``shown = SI * scale + offset``, or
    ``SI / divisor + offset`` when the factor is a power of ten (``divisor`` set), so that
    25e5 Pa reads as exactly 25 bar.

    ``extra_decimals`` is added to a row's metric decimals (may be negative).
    """

    symbol: str
    scale: float
    offset: float = 0.0
    extra_decimals: int = 0
    divisor: float | None = None


def _u(symbol: str, scale: float, offset: float = 0.0, extra: int = 0) -> Unit:
    return Unit(symbol, scale, offset, extra)


def _d(symbol: str, divisor: float, offset: float = 0.0) -> Unit:
    """A metric unit that is SI divided by a power of ten."""
    return Unit(symbol, 1.0 / divisor, offset, 0, divisor)


#: kind -> system -> Unit. Dimensionless kinds show the same in both systems.
KINDS: dict[str, dict[str, Unit]] = {
    "": {"metric": _u("", 1.0), "us": _u("", 1.0)},
    "percent": {"metric": _u("%", 100.0), "us": _u("%", 100.0)},
    "temperature": {"metric": _u("degC", 1.0, -273.15),
                    "us": _u("degF", 1.8, -459.67)},
    "temperature_difference": {"metric": _u("K", 1.0), "us": _u("degF", 1.8)},
    "pressure": {"metric": _d("bar abs", 1e5), "us": _u("psia", 1.0 / PSI_PA, 0.0, -1)},
    "gauge_pressure": {"metric": _d("barg", 1e5, -ATM / 1e5),
                       "us": _u("psig", 1.0 / PSI_PA, -ATM / PSI_PA, -1)},
    "molar_flow": {"metric": _u("kmol/h", _S_PER_H / 1000.0),
                   "us": _u("lbmol/h", _S_PER_H / (1000.0 * LB_KG))},
    "mass_flow": {"metric": _u("kg/h", _S_PER_H), "us": _u("lb/h", _S_PER_H / LB_KG)},
    "steam_flow": {"metric": _u("t/h", _S_PER_H / 1000.0),
                   "us": _u("klb/h", _S_PER_H / (1000.0 * LB_KG))},
    # A gas flow as a volume at normal (metric) or standard (US) conditions, from mol/s.
    "gas_flow": {"metric": _u("Nm3/h", _S_PER_H * V_NORMAL),
                 "us": _u("MMSCFD", _S_PER_D * SCF_PER_MOL / 1e6, 0.0, 3)},
    "power": {"metric": _d("MW", 1e6), "us": _u("MMBtu/h", _S_PER_H / (BTU_J * 1e6))},
    # Reaction heats stay in kJ/mol in both systems (the chemist's unit).
    "reaction_heat": {"metric": _d("kJ/mol", 1e3), "us": _d("kJ/mol", 1e3)},
    # Energy per mole of product (J/mol).
    "energy_per_mol": {"metric": _d("MJ/kmol", 1e3),
                       "us": _u("Btu/lbmol", 1000.0 * LB_KG / BTU_J, 0.0, -2)},
    "energy_per_gas_volume": {"metric": _u("MJ/Nm3", 1e-6 / V_NORMAL),
                              "us": _u("Btu/scf", 1.0 / (SCF_PER_MOL * BTU_J), 0.0, -2)},
    "specific_energy": {"metric": _u("GJ/1000 Nm3", GJ_PER_1000NM3_FROM_J_PER_MOL),
                        "us": _u("Btu/scf", 1.0 / (SCF_PER_MOL * BTU_J), 0.0, -2)},
    "energy_per_kg_h2": {"metric": _u("MJ/kg", MJ_PER_KG_FROM_J_PER_MOL),
                         "us": _u("Btu/lb", MJ_PER_KG_FROM_J_PER_MOL * 1e6 * LB_KG / BTU_J,
                                  0.0, -1)},
    "energy_per_mass": {"metric": _d("MJ/kg", 1e6), "us": _u("Btu/lb", LB_KG / BTU_J, 0.0, -2)},
    # kg of steam per mol of gas, per normal (metric) or 1000 standard (US) volumes.
    "mass_per_gas_volume": {"metric": _u("kg/Nm3", 1.0 / V_NORMAL),
                            "us": _u("lb/Mscf", 1000.0 / (LB_KG * SCF_PER_MOL), 0.0, -2)},
    # A ratio of gas volumes (mol/mol), named in the system's volume unit.
    "gas_volume_ratio": {"metric": _u("Nm3/Nm3", 1.0), "us": _u("scf/scf", 1.0)},
}


def check_system(system: str) -> str:
    """`system` if it names a unit system; ValueError naming the allowed ones otherwise."""
    if system not in SYSTEMS:
        raise ValueError(f"units: got {system!r}; allowed: {', '.join(SYSTEMS)}")
    return system


def unit(kind: str, system: str = DEFAULT) -> Unit:
    """The :class:`Unit` of display kind `kind` in `system`."""
    return KINDS[kind][check_system(system)]


def symbol(kind: str, system: str = DEFAULT) -> str:
    """The unit's symbol as shown ("degC", "psia", ...; "" for a plain number)."""
    return unit(kind, system).symbol


def to_display(value, kind: str, system: str = DEFAULT):
    """SI `value` (float or numpy array) in the display unit of `kind`."""
    u = unit(kind, system)
    v = value / u.divisor if u.divisor else value * u.scale
    return v + u.offset if u.offset else v


def from_display(value, kind: str, system: str = DEFAULT):
    """A value in the display unit of `kind` back to SI (inverse of :func:`to_display`)."""
    u = unit(kind, system)
    return (value - u.offset) * u.divisor if u.divisor else (value - u.offset) / u.scale


def difference(value, kind: str, system: str = DEFAULT):
    """A change of an SI quantity in display units: the scale only, never the offset (a
    change of degC is in K)."""
    u = unit(kind, system)
    return value / u.divisor if u.divisor else value * u.scale


def decimals(kind: str, metric_decimals: int, system: str = DEFAULT) -> int:
    """Decimals of a row in `system`, from its metric decimals (significant digits, given as
    a negative number, are kept)."""
    if metric_decimals < 0:
        return metric_decimals
    return max(metric_decimals + unit(kind, system).extra_decimals, 0)


def number(v: float, dec: int) -> str:
    """A display-unit number as text: `dec` decimals with thousands separators, or `-dec`
    significant digits when `dec` < 0; '-' for None or non-finite. A value that rounds to
    zero reads as zero, without a sign (an adiabatic stage's duty)."""
    if v is None or not math.isfinite(v):
        return "-"
    if dec < 0:
        return f"{v:.{-dec}g}"
    text = f"{v:,.{dec}f}"
    return text[1:] if text.startswith("-") and not text.strip("-0.,") else text


def fmt(value, kind: str, metric_decimals: int, system: str = DEFAULT,
        with_unit: bool = False) -> str:
    """SI `value` shown in `system`: converted, rounded as :func:`number`; with its unit if
    asked. `metric_decimals` are the decimals in the metric system (see :func:`decimals`)."""
    if value is None or not math.isfinite(value):
        return "-"
    text = number(to_display(value, kind, system), decimals(kind, metric_decimals, system))
    s = symbol(kind, system)
    return f"{text} {s}" if with_unit and s else text


def conversions(system: str = DEFAULT) -> dict[str, list[float]]:
    """Every kind's [scale, offset, divisor] in `system` (divisor 0: multiply by the scale):
    the review file's script converts with these, as :func:`to_display` does, and holds no
    factor of its own."""
    check_system(system)
    return {k: [u[system].scale, u[system].offset, u[system].divisor or 0.0]
            for k, u in KINDS.items()}


def system_note(system: str = DEFAULT) -> str:
    """The reference conditions of gas volumes in `system`, in words (stated on screen)."""
    if check_system(system) == "us":
        return ("US customary units. Gas volumes (scf, MMSCFD) are ideal gas at 60 degF and "
                f"14.696 psia ({SCF_PER_MOL * 453.59237:.2f} scf per lbmol).")
    return (f"Metric units. Normal volumes (Nm3) are ideal gas at {T_NORMAL - 273.15:g} degC "
            f"and {P_NORMAL / 1e5:g} bar ({V_NORMAL * 1e3:.3f} Nm3 per kmol).")


def volume_conditions(system: str = DEFAULT) -> str:
    """The conditions of gas volumes in `system`, in a few words."""
    if check_system(system) == "us":
        return "60 degF and 14.696 psia"
    return f"{T_NORMAL - 273.15:g} degC and {P_NORMAL / 1e5:g} bar"


def volume_words(system: str = DEFAULT) -> str:
    """What a gas volume means in `system` ("normal volume at 0 degC and 1.01325 bar")."""
    what = "standard volume" if check_system(system) == "us" else "normal volume"
    return f"{what} at {volume_conditions(system)}"


def axis_title(dim: str, system: str = DEFAULT) -> str:
    """Axis or slider title of a window dimension in `system`."""
    if dim == "temperature":
        return f"Outlet temperature [{symbol('temperature', system)}]"
    if dim == "pressure":
        return f"Pressure [{symbol('pressure', system)}]"
    return {"steam_to_carbon": "Steam-to-carbon [mol/mol]",
            "oxygen_to_carbon": "O2-to-carbon [mol/mol]",
            "co2_to_carbon": "CO2-to-carbon [mol/mol]"}.get(dim, dim)


def axis_kind(dim: str) -> str:
    """Display kind of a window dimension (temperature, pressure or a plain ratio)."""
    return {"temperature": "temperature", "pressure": "pressure"}.get(dim, "")
