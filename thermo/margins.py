"""Margins and sensitivities at a point (split from :mod:`thermo.edges`).

:func:`margins` gives, for each active limit, the margin in the limit's own unit and the
distance to its edge along temperature and along steam-to-carbon (positive inside the
window), and the change of the limit quantities for +/- 5 K, +/- 1 bar and +/- 0.1 S/C by
central differences through the core. Every quantity is SI.
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
import xarray as xr

from thermo.best import (
    _strict,
)
from thermo.edges import (
    EDGE_TOLERANCE_K,
    EDGE_TOLERANCE_SC,
    SENSITIVITY_STEPS,
    evaluate,
)
from thermo.limit_quantities import (
    LIMITS,
    Limit,
    active_limits,
    carbon_quantity,
)
from thermo.scenario import Scenario

# ---------------------------------------------------------------------------------------------
# Margins and sensitivities


@dataclass(frozen=True)
class LimitMargin:
    """How far one point lies from one limit (positive inside the window).

    Attributes
    ----------
    limit : Limit
    value, limit_value, margin : float
        The quantity, its limit and their difference signed positive inside [SI].
    temperature_margin : float or None
        Distance along temperature to the limit's edge [K]: positive inside, negative
        outside; None if the limit is not crossed in the searched range.
    steam_to_carbon_margin : float or None
        The same along steam-to-carbon [mol per mol].
    """

    limit: Limit
    value: float
    limit_value: float
    margin: float
    temperature_margin: float | None
    steam_to_carbon_margin: float | None

    def to_dict(self) -> dict:
        return {"value": self.value, "limit": self.limit_value, "margin": self.margin,
                "temperature_margin_K": self.temperature_margin,
                "steam_to_carbon_margin": self.steam_to_carbon_margin}


#: Quantities whose sensitivities :func:`margins` reports: name -> (label, SI unit, getter).
SENSITIVITY_QUANTITIES: dict[str, tuple[str, str, Callable[[xr.Dataset], xr.DataArray]]] = {
    "h2": ("H2 (product)", "1", LIMITS["h2"].quantity),
    "methane_slip": ("methane slip (dry)", "1", LIMITS["methane_slip"].quantity),
    "duty": ("radiant duty", "W", LIMITS["duty"].quantity),
    "carbon": ("carbon verdict (ln activity)", "1", carbon_quantity),
    "specific_energy": ("net specific energy", "J mol-1", lambda ds: ds["specific_energy"]),
}
#: Sensitivities computed only with a [plant] table.
PLANT_SENSITIVITIES = ("specific_energy",)


@dataclass(frozen=True)
class Margins:
    """Margins of one point to every active limit, and its sensitivities.

    Attributes
    ----------
    coordinates : dict[str, float]
        The point [SI].
    limits : dict[str, LimitMargin]
        By limit name (``methane_slip``, ``h2``, ``duty``, ``carbon``).
    sensitivities : dict[str, dict[str, tuple[float, float]]]
        ``{quantity: {axis: (step, change)}}``: the change of each quantity for a step up
        the axis, ``(f(x + step) - f(x - step)) / 2`` [SI of the quantity; step in SI of the
        axis] (one-sided where ``x - step`` would fall below the axis's floor).
    """

    coordinates: dict[str, float]
    limits: dict[str, LimitMargin]
    sensitivities: dict[str, dict[str, tuple[float, float]]]

    @property
    def inside(self) -> bool:
        """Every active limit met."""
        return all(m.margin >= 0 for m in self.limits.values())

    def to_dict(self) -> dict:
        """``{limit name: {"value", "limit", "margin", "temperature_margin_K",
        "steam_to_carbon_margin"}}`` (strict JSON)."""
        return _strict({k: m.to_dict() for k, m in self.limits.items()})

    def sensitivities_dict(self) -> dict:
        """``{quantity: {axis: {"step", "change", "derivative"}}}`` (strict JSON, SI)."""
        return _strict({q: {a: {"step": s, "change": c, "derivative": c / s}
                            for a, (s, c) in by_axis.items()}
                        for q, by_axis in self.sensitivities.items()})


def _nearest_brackets(values: np.ndarray, ok: np.ndarray, x0: float) -> list[tuple]:
    """The nearest change of `ok` on each side of x0 along sorted `values` (x0 is among
    them), as ``(a, b, ok_a)`` brackets with ``ok[a] == ok at x0``."""
    k0 = int(np.argmin(np.abs(values - x0)))
    here = bool(ok[k0])
    out = []
    for step in (1, -1):
        k = k0
        while 0 <= k + step < len(values):
            if bool(ok[k + step]) != here:
                out.append((float(values[k]), float(values[k + step]), here))
                break
            k += step
    return out


def margins(scenario: Scenario, temperature=None, pressure=None, steam_to_carbon=None, *,
            point=None, scan_step_K: float = 10.0, scan_step_sc: float = 0.1,
            steps: dict[str, float] | None = None, **overrides) -> Margins:
    """Margins and sensitivities at one point.

    Parameters
    ----------
    scenario : Scenario
        Feed, window, train and review limits.
    temperature, pressure, steam_to_carbon, **overrides
        The point, as for :func:`thermo.point` (the design point if none given).
    point : PointResult, optional
        A solved point to use instead (its scenario carries the overrides).
    scan_step_K, scan_step_sc : float
        Spacing of the scans that bracket each edge [K, mol per mol].
    steps : dict, optional
        Central-difference steps by axis [K, Pa, mol per mol]; :data:`SENSITIVITY_STEPS` if
        None.

    Returns
    -------
    Margins

    Notes
    -----
    Distances to an edge: the limit's verdict is scanned along the axis over the window's
    range (extended to the point), the nearest change is bracketed and bisected on the
    core's values to :data:`EDGE_TOLERANCE_K` (:data:`EDGE_TOLERANCE_SC`). Sensitivities:
    central differences with :data:`SENSITIVITY_STEPS`, the core evaluated at the six
    shifted points in one batch.
    """
    from thermo.api import point as solve_point

    if point is None:
        kw = dict(overrides)
        if temperature is not None:
            kw["temperature"] = temperature
        if pressure is not None:
            kw["pressure"] = pressure
        if steam_to_carbon is not None:
            kw["steam_to_carbon"] = steam_to_carbon
        point = solve_point(scenario, **kw)
    sc = dataclasses.replace(point.scenario, limits=scenario.limits)
    f = sc.feed
    c = {"temperature": point.temperature, "pressure": point.pressure,
         "steam_to_carbon": f.steam_to_carbon, "oxygen_to_carbon": f.oxygen_to_carbon,
         "co2_to_carbon": f.co2_to_carbon}

    def at(**changes):
        cc = {k: np.asarray(changes.get(k, v), dtype=float) for k, v in c.items()}
        return evaluate(sc, cc["temperature"], cc["pressure"], cc["steam_to_carbon"],
                        cc["oxygen_to_carbon"], cc["co2_to_carbon"])

    active = active_limits(sc.limits)
    steps = dict(SENSITIVITY_STEPS if steps is None else steps)
    # Each axis stepped up and down; the step down stops at the axis's floor (ratios >= 0,
    # T - approach >= 300 K, P > 0), where the difference becomes one-sided.
    floor = {"temperature": 300.0 + sc.approach, "pressure": 0.5 * c["pressure"],
             "steam_to_carbon": 0.0}
    shifted_at = []
    for a, h in steps.items():
        shifted_at.append((a, c[a] + h))
        shifted_at.append((a, max(c[a] - h, floor[a])))
    # Scans along temperature and steam-to-carbon over the window (extended to the point).
    win = sc.window
    t_lo = max(min(win.temperature.start, win.temperature.stop, c["temperature"]),
               300.0 + sc.approach)
    t_hi = max(win.temperature.start, win.temperature.stop, c["temperature"])
    s_lo = min(win.steam_to_carbon.start, win.steam_to_carbon.stop, c["steam_to_carbon"])
    s_hi = max(win.steam_to_carbon.start, win.steam_to_carbon.stop, c["steam_to_carbon"])

    def scan(a, b, x0, step):
        n = max(2, int(math.ceil((b - a) / step)) + 1)
        return np.unique(np.concatenate([np.linspace(a, b, n), [x0]]))

    Ts = scan(t_lo, t_hi, c["temperature"], scan_step_K)
    Ss = scan(s_lo, s_hi, c["steam_to_carbon"], scan_step_sc) if s_hi > s_lo else \
        np.array([c["steam_to_carbon"]])
    # One batch of the core: the point, the six shifted points and both scans.
    moves = [(None, None)] + shifted_at + [("temperature", t) for t in Ts] \
        + [("steam_to_carbon", x) for x in Ss]
    batch = at(**{k: np.array([x if a == k else c[k] for a, x in moves])
                  for k in ("temperature", "pressure", "steam_to_carbon")})
    n_sh = len(shifted_at)
    here = batch.isel(point=[0])
    shifted = batch.isel(point=slice(1, 1 + n_sh))
    along_T = batch.isel(point=slice(1 + n_sh, 1 + n_sh + Ts.size))
    along_S = batch.isel(point=slice(1 + n_sh + Ts.size, None))
    sens: dict[str, dict[str, tuple[float, float]]] = {}
    for q, (_label, _unit, getter) in SENSITIVITY_QUANTITIES.items():
        if q in PLANT_SENSITIVITIES and sc.plant is None:
            continue
        v = np.asarray(getter(shifted).values, dtype=float)
        sens[q] = {}
        for i, (a, h) in enumerate(steps.items()):
            up, dn = shifted_at[2 * i][1], shifted_at[2 * i + 1][1]
            sens[q][a] = (h, float(v[2 * i] - v[2 * i + 1]) * h / (up - dn))

    def ok_of(pts, lim, value):
        return np.asarray(lim.margin(lim.quantity(pts), value) >= 0, dtype=bool)

    # Brackets of the nearest edge on each side, per limit and axis, bisected together.
    brackets = []  # (limit index, axis, a, b, ok_a)
    for li, (lim, value) in enumerate(active):
        for axis, vals, pts in (("temperature", Ts, along_T), ("steam_to_carbon", Ss, along_S)):
            if vals.size > 1:
                for a, b, o in _nearest_brackets(vals, ok_of(pts, lim, value), c[axis]):
                    brackets.append([li, axis, a, b, o])
    tol = {"temperature": EDGE_TOLERANCE_K, "steam_to_carbon": EDGE_TOLERANCE_SC}
    for _ in range(60):
        open_ = [br for br in brackets if abs(br[3] - br[2]) > tol[br[1]]]
        if not open_:
            break
        mids = [0.5 * (br[2] + br[3]) for br in open_]
        pts = at(**{k: np.array([m if br[1] == k else c[k] for br, m in zip(open_, mids,
                                                                            strict=True)])
                    for k in ("temperature", "steam_to_carbon")})
        ok_now = [ok_of(pts, lim, value) for lim, value in active]
        for n, (br, m) in enumerate(zip(open_, mids, strict=True)):
            if bool(ok_now[br[0]][n]) == br[4]:
                br[2] = m
            else:
                br[3] = m
    dist: dict[tuple[int, str], float] = {}
    for li, axis, a, b, o in brackets:
        d = abs(0.5 * (a + b) - c[axis])
        d = d if o else -d
        key = (li, axis)
        if key not in dist or abs(d) < abs(dist[key]):
            dist[key] = float(d)
    out: dict[str, LimitMargin] = {}
    for li, (lim, value) in enumerate(active):
        q = float(lim.quantity(here).values[0])
        out[lim.name] = LimitMargin(lim, q, value, float(lim.margin(q, value)),
                                    dist.get((li, "temperature")),
                                    dist.get((li, "steam_to_carbon")))
    coords = {k: v for k, v in c.items()
              if k in ("temperature", "pressure", "steam_to_carbon") or k in win.axes()}
    return Margins(coords, out, sens)
