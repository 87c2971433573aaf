"""Margins, sensitivities, the best point and the exact feasible intervals, in display units.

One place turns thermo.edges results into rows of text; the CLI prints them, the app and the
review sheet put them in tables (every cell escaped by :mod:`explorer.safe`).
"""

from __future__ import annotations

import math

import numpy as np

from explorer import display, safe
from explorer.display import DEFAULT
from thermo.edges import LIMITS, SENSITIVITY_QUANTITIES, BestPoint, Margins

#: How each quantity is shown: (display kind, unit template, metric digits); "{u}" is the
#: kind's unit in the system shown (explorer.display).
_SHOWN = {
    "methane_slip": ("percent", "mol % dry", 3),
    "h2": ("", "mol/mol C", 4),
    "duty": ("power", "{u}", 3),
    "carbon": ("", "ln a", 3),
    "fired_duty": ("power", "{u}", 3),
    "specific_energy": ("specific_energy", "{u} H2", 3),
}


def _shown(name: str, units: str):
    """(kind, unit, digits) of quantity `name` in unit system `units`."""
    kind, unit, digits = _SHOWN[name]
    return (kind, unit.format(u=display.symbol(kind, units)),
            display.decimals(kind, digits, units))
#: Steps of the sensitivities as the tables name them.
_STEP_WORDS = {"temperature": ("+5 K", 1.0), "pressure": ("+1 bar", 1e-5),
               "steam_to_carbon": ("+0.1 S/C", 1.0)}

MARGIN_HEAD = ["limit", "value", "limit value", "margin", "to its edge along T [K]",
               "to its edge along S/C"]


def margin_head(units: str = DEFAULT) -> list[str]:
    """Column titles of the margins table in unit system `units`."""
    dT = display.symbol("temperature_difference", units)
    return MARGIN_HEAD[:4] + [f"to its edge along T [{dT}]"] + MARGIN_HEAD[5:]


def _num(v, digits: int, signed: bool = False) -> str:
    if v is None or not math.isfinite(v):
        return "-"
    return f"{v:+.{digits}f}" if signed else f"{v:.{digits}f}"


def margin_rows(m: Margins, units: str = DEFAULT) -> list[list[str]]:
    """One row per active limit: value, limit, margin (positive inside) and the distances
    to its edge, in display units."""
    rows = []
    for name, lm in m.limits.items():
        kind, unit, digits = _shown(name, units)
        rows.append([
            LIMITS[name].label,
            f"{_num(display.to_display(lm.value, kind, units), digits)} {unit}",
            f"{'max' if LIMITS[name].kind == 'max' else 'min'} "
            f"{_num(display.to_display(lm.limit_value, kind, units), digits)} {unit}",
            f"{_num(display.difference(lm.margin, kind, units), digits, signed=True)} {unit}",
            "no edge in the window" if lm.temperature_margin is None
            else _num(display.difference(lm.temperature_margin, "temperature_difference",
                                         units), 1, signed=True),
            "no edge in the window" if lm.steam_to_carbon_margin is None
            else _num(lm.steam_to_carbon_margin, 3, signed=True),
        ])
    return rows


def sensitivity_head() -> list[str]:
    return ["change of"] + [w for w, _ in _STEP_WORDS.values()]


def sensitivity_rows(m: Margins, units: str = DEFAULT) -> list[list[str]]:
    """One row per quantity: its change for each step up an axis (central differences; the
    steps are the core's, named in SI)."""
    rows = []
    for q, by_axis in m.sensitivities.items():
        kind, unit, digits = _shown(q, units)
        rows.append([f"{SENSITIVITY_QUANTITIES[q][0]} [{unit}]"]
                    + [_num(display.difference(by_axis[a][1], kind, units), digits + 1,
                            signed=True)
                       for a in _STEP_WORDS if a in by_axis])
    return rows


def _text_table(head: list[str], rows: list[list[str]]) -> list[str]:
    widths = [max(len(str(r[i])) for r in [head, *rows]) for i in range(len(head))]
    line = "  ".join(h.ljust(w) for h, w in zip(head, widths, strict=True))
    out = [line, "-" * len(line)]
    out += ["  ".join(str(c).ljust(w) for c, w in zip(r, widths, strict=True)) for r in rows]
    return out


def margins_text(m: Margins, units: str = DEFAULT) -> str:
    """The margins and sensitivities as aligned text (CLI)."""
    lines = ["Margins to the review limits (positive inside the window)"]
    lines += (["  " + s for s in _text_table(margin_head(units), margin_rows(m, units))]
              if m.limits else ["  no review limit is set"])
    lines += ["", "Sensitivities (central differences through the core)"]
    lines += ["  " + s for s in _text_table(sensitivity_head(), sensitivity_rows(m, units))]
    return "\n".join(lines)


def where_text(c: dict, units: str = DEFAULT, digits: int = 3) -> str:
    """A point's coordinates [SI] in words: temperature, pressure, S/C (and co-feeds)."""
    where = (f"{display.fmt(c['temperature'], 'temperature', 1, units, with_unit=True)}, "
             f"{display.fmt(c['pressure'], 'pressure', 3, units, with_unit=True)}, "
             f"S/C {c['steam_to_carbon']:.{digits}f}")
    for d, label in (("oxygen_to_carbon", "O2/C"), ("co2_to_carbon", "CO2/C")):
        if d in c:
            where += f", {label} {c[d]:.{digits}f}"
    return where


def best_summary(bp: BestPoint, units: str = DEFAULT) -> str:
    """One sentence: where the best point is and its value, or which limit excludes most."""
    o = bp.objective
    if not bp.feasible:
        share = bp.exclusion.get(bp.excluded_by or "", 0.0)
        what = LIMITS[bp.excluded_by].label if bp.excluded_by in LIMITS else "the solver"
        return (f"No point of the window meets every review limit; the {what} limit "
                f"excludes the most of it ({share * 100:.0f} % of the grid points).")
    where = where_text(bp.coordinates, units)
    return (f"Best point for {o.label}: {where}; {o.name.replace('_', ' ')} "
            f"{bp.value * o.scale:.4g} {o.unit} (best grid node {bp.grid_value * o.scale:.4g}).")


def best_text(bp: BestPoint, units: str = DEFAULT) -> str:
    """The best point, its balance and its margins as text (CLI ``explorer best``)."""
    from explorer.report import point_report

    parts = [best_summary(bp, units)]
    if bp.feasible:
        parts += ["", point_report(bp.point, units), "", margins_text(bp.margins, units)]
    else:
        parts += ["Share of grid points each limit excludes: "
                  + ", ".join(f"{k} {v * 100:.0f} %" for k, v in bp.exclusion.items())]
    return "\n".join(parts)


def table_html(head: list[str], rows: list[list[str]], kind: str,
               cls: str = "rw-table") -> safe.SafeHTML:
    """A table of text cells, each escaped; `kind` names it (``data-table``)."""
    cell = safe.SafeHTML("")
    h = cell.join(safe.html("<th>{}</th>", c) for c in head)
    b = cell.join(safe.html("<tr>{}</tr>", cell.join(safe.html("<td>{}</td>", c) for c in r))
                  for r in rows)
    return safe.html('<table class="{}" data-table="{}"><thead><tr>{}</tr></thead>'
                     "<tbody>{}</tbody></table>", cls, kind, h, b)


def margins_line(m: Margins, units: str = DEFAULT) -> str:
    """The margins in one sentence: each active limit's margin in its own unit and, where
    the window has one, the distance to its edge along temperature (positive inside)."""
    parts = []
    dT = display.symbol("temperature_difference", units)
    for name, lm in m.limits.items():
        kind, unit, digits = _shown(name, units)
        t_edge = display.difference(lm.temperature_margin or 0.0, "temperature_difference",
                                    units)
        edge = ("" if lm.temperature_margin is None
                else f" ({_num(t_edge, 1, signed=True)} {dT} to its edge along T)")
        margin = display.difference(lm.margin, kind, units)
        parts.append(f"{LIMITS[name].label} {_num(margin, digits, signed=True)} "
                     f"{unit}{edge}")
    return "; ".join(parts) if parts else "no review limit is set"


def margins_html(m: Margins, cls: str = "rw-table", units: str = DEFAULT) -> safe.SafeHTML:
    """The margins and sensitivities tables as HTML (cells escaped)."""
    return (table_html(margin_head(units), margin_rows(m, units), "margins", cls)
            + table_html(sensitivity_head(), sensitivity_rows(m, units), "sensitivities", cls))


def intervals_text(lows, highs, units: str = DEFAULT) -> str:
    """Exact feasible intervals [K arrays, NaN-padded] as text in the display temperature
    unit ('none' if empty)."""
    def t(v):
        return f"{display.to_display(v, 'temperature', units):.1f}"

    parts = [f"{t(a)}-{t(b)}" if b - a > 0.05 else t(a)
             for a, b in zip(np.asarray(lows), np.asarray(highs), strict=True)
             if np.isfinite(a)]
    return ", ".join(parts) if parts else "none"


def grid_warning_text(ds, units: str = DEFAULT) -> str:
    """Where the grid may hide an edge, in words ('' where it does not)."""
    if "feasible_grid_warning" not in ds:
        return ""
    w = ds["feasible_grid_warning"]
    n = int(w.sum())
    if n == 0:
        return ""
    rows = []
    for idx in np.argwhere(np.asarray(w.values)):
        parts = []
        for d, i in zip(w.dims, idx, strict=True):
            v = float(ds[d].values[i])
            parts.append(f"{display.to_display(v, 'pressure', units):.3g} "
                         f"{display.symbol('pressure', units).removesuffix(' abs')}"
                         if d == "pressure" else f"{d.replace('_', ' ')} {v:.3g}")
        rows.append(", ".join(parts))
    shown = "; ".join(rows[:6]) + (f"; and {n - 6} more" if n > 6 else "")
    return (f"Grid warning: on {n} row(s) a limit may be crossed twice inside one temperature "
            "step (the curve through three neighbouring grid points turns back across the "
            "limit), where the grid cannot see an edge; refine the temperature axis there: "
            + shown + ".")


def design_outside(sc, units: str = DEFAULT) -> list[str]:
    """What of the design point lies outside the window, in words (empty if inside)."""
    out = []
    for name, value, kind in (("temperature", sc.temperature, "temperature"),
                              ("pressure", sc.pressure, "pressure"),
                              ("steam_to_carbon", sc.feed.steam_to_carbon, "")):
        axis = sc.window.axes()[name]
        lo, hi = sorted((axis.start, axis.stop))
        if not lo - 1e-9 * abs(lo) <= value <= hi + 1e-9 * abs(hi):
            words = name.replace("_", "-")
            unit = display.symbol(kind, units)

            def v(x, kind=kind):
                return f"{display.to_display(x, kind, units):.4g}"

            out.append(f"design {words} {v(value)} {unit} lies outside "
                       f"the window's {v(lo)} to {v(hi)} {unit}".replace("  ", " "))
    return out
