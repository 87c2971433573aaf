"""Margins, sensitivities, the best point and the exact feasible intervals, in display units.

One place turns thermo.edges results into rows of text; the CLI prints them, the app and the
review sheet put them in tables (every cell escaped by :mod:`explorer.safe`).
"""

from __future__ import annotations

import math

import numpy as np

from explorer import safe
from thermo.edges import LIMITS, SENSITIVITY_QUANTITIES, BestPoint, Margins
from thermo.plant import GJ_PER_1000NM3_FROM_J_PER_MOL

#: How each quantity is shown: (display scale per SI, unit, digits).
_SHOWN = {
    "methane_slip": (100.0, "mol % dry", 3),
    "h2": (1.0, "mol/mol C", 4),
    "duty": (1e-6, "MW", 3),
    "carbon": (1.0, "ln a", 3),
    "fired_duty": (1e-6, "MW", 3),
    "specific_energy": (GJ_PER_1000NM3_FROM_J_PER_MOL, "GJ/1000 Nm3 H2", 3),
}
#: Steps of the sensitivities as the tables name them.
_STEP_WORDS = {"temperature": ("+5 K", 1.0), "pressure": ("+1 bar", 1e-5),
               "steam_to_carbon": ("+0.1 S/C", 1.0)}

MARGIN_HEAD = ["limit", "value", "limit value", "margin", "to its edge along T [K]",
               "to its edge along S/C"]


def _num(v, digits: int, signed: bool = False) -> str:
    if v is None or not math.isfinite(v):
        return "-"
    return f"{v:+.{digits}f}" if signed else f"{v:.{digits}f}"


def margin_rows(m: Margins) -> list[list[str]]:
    """One row per active limit: value, limit, margin (positive inside) and the distances
    to its edge, in display units."""
    rows = []
    for name, lm in m.limits.items():
        scale, unit, digits = _SHOWN[name]
        rows.append([
            LIMITS[name].label,
            f"{_num(lm.value * scale, digits)} {unit}",
            f"{'max' if LIMITS[name].kind == 'max' else 'min'} "
            f"{_num(lm.limit_value * scale, digits)} {unit}",
            f"{_num(lm.margin * scale, digits, signed=True)} {unit}",
            "no edge in the window" if lm.temperature_margin is None
            else _num(lm.temperature_margin, 1, signed=True),
            "no edge in the window" if lm.steam_to_carbon_margin is None
            else _num(lm.steam_to_carbon_margin, 3, signed=True),
        ])
    return rows


def sensitivity_head() -> list[str]:
    return ["change of"] + [w for w, _ in _STEP_WORDS.values()]


def sensitivity_rows(m: Margins) -> list[list[str]]:
    """One row per quantity: its change for each step up an axis (central differences)."""
    rows = []
    for q, by_axis in m.sensitivities.items():
        scale, unit, digits = _SHOWN[q]
        rows.append([f"{SENSITIVITY_QUANTITIES[q][0]} [{unit}]"]
                    + [_num(by_axis[a][1] * scale, digits + 1, signed=True)
                       for a in _STEP_WORDS if a in by_axis])
    return rows


def _text_table(head: list[str], rows: list[list[str]]) -> list[str]:
    widths = [max(len(str(r[i])) for r in [head, *rows]) for i in range(len(head))]
    line = "  ".join(h.ljust(w) for h, w in zip(head, widths, strict=True))
    out = [line, "-" * len(line)]
    out += ["  ".join(str(c).ljust(w) for c, w in zip(r, widths, strict=True)) for r in rows]
    return out


def margins_text(m: Margins) -> str:
    """The margins and sensitivities as aligned text (CLI)."""
    lines = ["Margins to the review limits (positive inside the window)"]
    lines += ["  " + s for s in _text_table(MARGIN_HEAD, margin_rows(m))] if m.limits else \
        ["  no review limit is set"]
    lines += ["", "Sensitivities (central differences through the core)"]
    lines += ["  " + s for s in _text_table(sensitivity_head(), sensitivity_rows(m))]
    return "\n".join(lines)


def best_summary(bp: BestPoint) -> str:
    """One sentence: where the best point is and its value, or which limit excludes most."""
    o = bp.objective
    if not bp.feasible:
        share = bp.exclusion.get(bp.excluded_by or "", 0.0)
        what = LIMITS[bp.excluded_by].label if bp.excluded_by in LIMITS else "the solver"
        return (f"No point of the window meets every review limit; the {what} limit "
                f"excludes the most of it ({share * 100:.0f} % of the grid points).")
    c = bp.coordinates
    where = (f"{c['temperature'] - 273.15:.1f} degC, {c['pressure'] / 1e5:.3f} bar abs, "
             f"S/C {c['steam_to_carbon']:.3f}")
    for d, label in (("oxygen_to_carbon", "O2/C"), ("co2_to_carbon", "CO2/C")):
        if d in c:
            where += f", {label} {c[d]:.3f}"
    return (f"Best point for {o.label}: {where}; {o.name.replace('_', ' ')} "
            f"{bp.value * o.scale:.4g} {o.unit} (best grid node {bp.grid_value * o.scale:.4g}).")


def best_text(bp: BestPoint) -> str:
    """The best point, its balance and its margins as text (CLI ``explorer best``)."""
    from explorer.report import point_report

    parts = [best_summary(bp)]
    if bp.feasible:
        parts += ["", point_report(bp.point), "", margins_text(bp.margins)]
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


def margins_line(m: Margins) -> str:
    """The margins in one sentence: each active limit's margin in its own unit and, where
    the window has one, the distance to its edge along temperature (positive inside)."""
    parts = []
    for name, lm in m.limits.items():
        scale, unit, digits = _SHOWN[name]
        edge = ("" if lm.temperature_margin is None
                else f" ({_num(lm.temperature_margin, 1, signed=True)} K to its edge along T)")
        parts.append(f"{LIMITS[name].label} {_num(lm.margin * scale, digits, signed=True)} "
                     f"{unit}{edge}")
    return "; ".join(parts) if parts else "no review limit is set"


def margins_html(m: Margins, cls: str = "rw-table") -> safe.SafeHTML:
    """The margins and sensitivities tables as HTML (cells escaped)."""
    return (table_html(MARGIN_HEAD, margin_rows(m), "margins", cls)
            + table_html(sensitivity_head(), sensitivity_rows(m), "sensitivities", cls))


def intervals_text(lows, highs) -> str:
    """Exact feasible intervals [K arrays, NaN-padded] as degC text ('none' if empty)."""
    parts = [f"{a - 273.15:.1f}-{b - 273.15:.1f}" if b - a > 0.05 else f"{a - 273.15:.1f}"
             for a, b in zip(np.asarray(lows), np.asarray(highs), strict=True)
             if np.isfinite(a)]
    return ", ".join(parts) if parts else "none"


def grid_warning_text(ds) -> str:
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
            parts.append(f"{v / 1e5:.3g} bar" if d == "pressure" else f"{d.replace('_', ' ')} "
                         f"{v:.3g}")
        rows.append(", ".join(parts))
    shown = "; ".join(rows[:6]) + (f"; and {n - 6} more" if n > 6 else "")
    return (f"Grid warning: on {n} row(s) a limit may be crossed twice inside one temperature "
            "step (the curve through three neighbouring grid points turns back across the "
            "limit), where the grid cannot see an edge; refine the temperature axis there: "
            + shown + ".")


def design_outside(sc) -> list[str]:
    """What of the design point lies outside the window, in words (empty if inside)."""
    out = []
    for name, value, unit, scale, offset in (
            ("temperature", sc.temperature, "degC", 1.0, -273.15),
            ("pressure", sc.pressure, "bar abs", 1e-5, 0.0),
            ("steam_to_carbon", sc.feed.steam_to_carbon, "", 1.0, 0.0)):
        axis = sc.window.axes()[name]
        lo, hi = sorted((axis.start, axis.stop))
        if not lo - 1e-9 * abs(lo) <= value <= hi + 1e-9 * abs(hi):
            words = name.replace("_", "-")
            out.append(f"design {words} {value * scale + offset:.4g} {unit} lies outside "
                       f"the window's {lo * scale + offset:.4g} to "
                       f"{hi * scale + offset:.4g} {unit}".replace("  ", " "))
    return out
