"""Objectives and the best point of a window (split from :mod:`thermo.edges`).

:func:`best_point` refines the best feasible grid node of an objective (a small registry,
:data:`OBJECTIVES`) with ``scipy.optimize.minimize`` (SLSQP, bounded, the review limits as
inequality constraints). Every quantity is SI: K, Pa, W, mol per mol.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np
import xarray as xr

from thermo.edges import evaluate
from thermo.limit_quantities import active_limits, exclusion
from thermo.plant import GJ_PER_1000NM3_FROM_J_PER_MOL
from thermo.scenario import Scenario
from thermo.sweep import (
    LIMIT_VARIABLES,
    RATIO_AXES,
    window_axes,
)

if TYPE_CHECKING:
    from thermo.margins import Margins

# ---------------------------------------------------------------------------------------------
# Objectives and the best point


@dataclass(frozen=True)
class Objective:
    """A quantity to make best over the window.

    Attributes
    ----------
    name : str
        Command-line and JSON name.
    variable : str
        Dataset variable (a key of thermo.sweep.train_results).
    sense : {"max", "min"}
    label, unit : str
        Words and display unit.
    scale : float
        Display value per SI value.
    """

    name: str
    variable: str
    sense: str
    label: str
    unit: str
    scale: float

    def cost(self, values):
        """What the search minimises [SI]."""
        return -values if self.sense == "max" else values


#: The objectives of :func:`best_point`; a new one is one entry.
OBJECTIVES: dict[str, Objective] = {
    "h2": Objective("h2", LIMIT_VARIABLES["min_h2_yield"], "max",
                    "most H2 (product of the train)", "mol/mol C", 1.0),
    "duty_per_h2": Objective("duty_per_h2", "duty_per_h2", "min", "least duty per H2",
                             "kJ/mol H2", 1e-3),
    "methane_slip": Objective("methane_slip", LIMIT_VARIABLES["max_methane_slip_dry"], "min",
                              "least methane slip", "mol % dry", 100.0),
    # With a [plant] table (thermo.plant): natural gas for feed and fuel minus the exported
    # steam's credit, per H2 product; J/mol shown as GJ (LHV) per 1000 Nm3 of H2.
    "specific_energy": Objective("specific_energy", "specific_energy", "min",
                                 "least net specific energy", "GJ/1000 Nm3 H2",
                                 GJ_PER_1000NM3_FROM_J_PER_MOL),
}
#: The default objective without a [plant] table; with one it is ``specific_energy``
#: (:func:`default_objective`).
DEFAULT_OBJECTIVE = "h2"
#: Objectives that need the scenario's [plant] table.
PLANT_OBJECTIVES = ("specific_energy",)


def default_objective(scenario: Scenario | None = None) -> str:
    """``specific_energy`` for a scenario with a [plant] table, else :data:`DEFAULT_OBJECTIVE`."""
    if scenario is not None and scenario.plant is not None:
        return "specific_energy"
    return DEFAULT_OBJECTIVE


def objectives_for(scenario: Scenario | None) -> dict[str, Objective]:
    """The objectives a scenario offers (the plant's only with a [plant] table)."""
    plant = scenario is not None and scenario.plant is not None
    return {k: o for k, o in OBJECTIVES.items() if plant or k not in PLANT_OBJECTIVES}


def objective(name: str | None, scenario: Scenario | None = None) -> Objective:
    """The objective of this name (the scenario's default if None); an InputError names the
    allowed ones."""
    from thermo.errors import InputError

    if name is None:
        name = default_objective(scenario)
    if name not in OBJECTIVES:
        raise InputError("objective", name, "one of " + ", ".join(OBJECTIVES))
    if scenario is not None and name not in objectives_for(scenario):
        raise InputError("objective", name,
                         "one of " + ", ".join(objectives_for(scenario))
                         + f" ({name} needs the scenario's [plant] table)")
    return OBJECTIVES[name]


@dataclass(frozen=True)
class BestPoint:
    """The best feasible point of an objective.

    Attributes
    ----------
    objective : Objective
    feasible : bool
        Whether any point of the window meets every limit.
    value : float or None
        The objective there [SI].
    coordinates : dict[str, float]
        Every window axis at the best point [SI].
    point : PointResult or None
        Its full balance (thermo.point at the exact coordinates).
    margins : Margins or None
        Its margins and sensitivities.
    start : dict[str, float]
        The grid node the search started from [SI].
    grid_value : float or None
        The objective at that node [SI].
    exclusion : dict[str, float]
        Share of the grid nodes each limit excludes [-], largest first.
    """

    objective: Objective
    feasible: bool
    value: float | None
    coordinates: dict[str, float]
    point: object | None
    margins: Margins | None
    start: dict[str, float]
    grid_value: float | None
    exclusion: dict[str, float]

    @property
    def excluded_by(self) -> str | None:
        """The limit that excludes most of the window's grid nodes."""
        return next(iter(self.exclusion), None)

    def to_dict(self) -> dict:
        """The strict-JSON object of ``explorer best --json``."""
        c = self.coordinates
        out = {
            "objective": self.objective.name,
            "objective_label": self.objective.label,
            "value": self.value,
            "temperature_K": c.get("temperature"),
            "pressure_Pa": c.get("pressure"),
            "steam_to_carbon": c.get("steam_to_carbon"),
            "feasible": self.feasible,
            "point": self.point.to_dict() if self.point is not None else None,
            "margins": self.margins.to_dict() if self.margins is not None else {},
            "sensitivities": (self.margins.sensitivities_dict()
                              if self.margins is not None else {}),
            "start": {f"{k}{_SUFFIX[k]}": v for k, v in self.start.items()},
            "grid_value": self.grid_value,
            "excluded_share": self.exclusion,
            "excluded_most_by": None if self.feasible else self.excluded_by,
        }
        for d in ("oxygen_to_carbon", "co2_to_carbon"):
            if d in c:
                out[d] = c[d]
        return _strict(out)


_SUFFIX = {"temperature": "_K", "pressure": "_Pa", "steam_to_carbon": "",
           "oxygen_to_carbon": "", "co2_to_carbon": ""}


def _strict(obj):
    if isinstance(obj, dict):
        return {k: _strict(v) for k, v in obj.items()}
    if isinstance(obj, float) and not math.isfinite(obj):
        return None
    return obj


def _point_kwargs(coords: dict[str, float]) -> dict:
    kw = {"temperature": f"{coords['temperature']!r} K", "pressure": f"{coords['pressure']!r} Pa"}
    for d in RATIO_AXES:
        if d in coords:
            kw[d] = coords[d]
    return kw


#: Best feasible grid nodes the best-point search starts from (besides a given start).
N_STARTS = 3
#: How far inside every limit the best point must lie, as a fraction of the limit (so that
#: the round-off of re-entering its coordinates as text cannot put it outside) [-].
INSIDE = 1e-9


def best_point(scenario: Scenario, objective: str | None = None, *,
               ds: xr.Dataset | None = None, start: dict[str, float] | None = None,
               with_margins: bool = True) -> BestPoint:
    """The best feasible point of the window for an objective.

    Parameters
    ----------
    scenario : Scenario
        Feed, window, train and review limits.
    objective : str, optional
        A key of :data:`OBJECTIVES`; None for :func:`default_objective` (least specific
        energy with a [plant] table, else most H2).
    ds : xarray.Dataset, optional
        The scenario's sweep (computed if None).
    start : dict, optional
        Coordinates to start the search from [SI, every window axis]; the best feasible grid
        node if None.
    with_margins : bool
        Also compute the margins and sensitivities there.

    Returns
    -------
    BestPoint

    Notes
    -----
    The search runs over every window axis with more than one point, scaled to [0, 1] on
    the window, with ``scipy.optimize.minimize(method="SLSQP")``: bounds are the window, and
    each active limit's margin divided by the limit's size is an inequality constraint.
    Gradients are forward differences (step 1e-6 of each axis's span), the point and its
    steps solved in one batch of the core. The search runs from the start and from the
    :data:`N_STARTS` best feasible grid nodes, and keeps the best answer, so that a local
    optimum on a limit's surface does not decide the result. If
    the answer breaks a limit by round-off it is pulled back along the line to the start
    until it meets every limit (bisection); if it is worse than the start, the start is kept.
    """
    from scipy.optimize import minimize

    from thermo.api import point as solve_point
    from thermo.sweep import feasible_mask, sweep

    obj = globals()["objective"](objective, scenario)
    if ds is None:
        ds = sweep(scenario)
    limits = scenario.limits
    axes = window_axes(scenario)
    feasible = feasible_mask(ds, limits)
    excl = exclusion(ds, limits)
    if not bool(feasible.any()):
        return BestPoint(obj, False, None, {}, None, None, {}, None, excl)
    cost = np.asarray(obj.cost(ds[obj.variable]).where(feasible).transpose(*axes).values)
    order = np.argsort(np.where(np.isfinite(cost), cost, np.inf).ravel(), kind="stable")
    order = [int(k) for k in order[:N_STARTS] if np.isfinite(cost.ravel()[k])]
    shape = tuple(len(v) for v in axes.values())
    nodes = [{d: float(axes[d][i]) for d, i in zip(axes, np.unravel_index(k, shape),
                                                   strict=True)} for k in order]
    node = nodes[0]
    grid_value = float(obj.cost(cost.ravel()[order[0]]))
    x_start = dict(node if start is None else start)
    free = [d for d, v in axes.items() if len(v) > 1]
    lo = {d: float(np.min(axes[d])) for d in axes}
    hi = {d: float(np.max(axes[d])) for d in axes}
    active = active_limits(limits)
    scales = {lim.name: (1.0 if lim.name == "carbon" else max(abs(v), 1e-12))
              for lim, v in active}

    def coords_of(x):
        c = dict(x_start)
        for d, u in zip(free, x, strict=True):
            c[d] = lo[d] + float(np.clip(u, 0.0, 1.0)) * (hi[d] - lo[d])
        return c

    cache: dict[tuple, tuple[float, np.ndarray, bool]] = {}

    def run_many(X):
        """Objective, scaled margins and convergence at several x, one batch of the core."""
        X = [np.asarray(x, dtype=float) for x in X]
        keys = [tuple(np.round(x, 15)) for x in X]
        todo = [k for k in dict.fromkeys(keys) if k not in cache]
        if todo:
            cs = [coords_of(np.array(k)) for k in todo]
            arr = {d: np.array([c[d] for c in cs]) for d in cs[0]}
            pts = evaluate(scenario, arr["temperature"], arr["pressure"],
                           arr.get("steam_to_carbon"), arr.get("oxygen_to_carbon"),
                           arr.get("co2_to_carbon"))
            f = np.asarray(obj.cost(pts[obj.variable]).values, dtype=float)
            g = np.array([np.asarray(lim.margin(lim.quantity(pts), v).values, dtype=float)
                          / scales[lim.name] for lim, v in active]).reshape(len(active), -1)
            conv = np.asarray(pts["converged"].values, dtype=bool)
            for n, k in enumerate(todo):
                cache[k] = (float(f[n]), g[:, n], bool(conv[n]))
        return [cache[k] for k in keys]

    def run(x):
        return run_many([x])[0]

    eps = 1e-6  # forward-difference step on the [0, 1] scaled axes

    def with_steps(x):
        x = np.asarray(x, dtype=float)
        # Step inwards at the upper bound, so every point stays in the window.
        h = np.where(x + eps <= 1.0, eps, -eps)
        X = [x] + [x + h[i] * np.eye(len(x))[i] for i in range(len(x))]
        return run_many(X), h

    def f_jac(x):
        r, h = with_steps(x)
        return np.array([(r[i + 1][0] - r[0][0]) / h[i] for i in range(len(h))]) / fscale

    def g_jac(x):
        r, h = with_steps(x)
        return np.array([(r[i + 1][1] - r[0][1]) / h[i] for i in range(len(h))]).T

    def good(x):
        f, g, conv = run(x)
        return conv and bool(np.all(g >= INSIDE))

    def refine(x0):
        """SLSQP from x0; the answer pulled back towards x0 if it breaks a limit by
        round-off; x0 itself if the search did not improve on it."""
        f0 = run(x0)[0]
        if not free:
            return x0
        res = minimize(lambda x: run(x)[0] / fscale, x0, jac=f_jac, method="SLSQP",
                       bounds=[(0.0, 1.0)] * len(free),
                       constraints=[{"type": "ineq", "fun": lambda x: run(x)[1],
                                     "jac": g_jac}] if active else [],
                       options={"ftol": 1e-12, "maxiter": 200})
        x_try = np.clip(res.x, 0.0, 1.0)
        if not good(x_try) and active:
            # Round-off outside a limit: step into the window along the broken limits'
            # gradients, the shortest step that meets every limit (one batch).
            g = run(x_try)[1]
            jac = g_jac(x_try)
            d = jac[g < 0].sum(axis=0)
            if np.linalg.norm(d) > 0:
                d = d / np.linalg.norm(d)
                xs = [np.clip(x_try + t * d, 0.0, 1.0) for t in np.logspace(-13, -4, 28)]
                ok = [r[2] and bool(np.all(r[1] >= INSIDE)) for r in run_many(xs)]
                if any(ok):
                    x_try = xs[int(np.argmax(ok))]
        if not good(x_try) and good(x0):
            # The largest fraction of the way from x0 that meets every limit, in one batch.
            fr = np.concatenate([1.0 - 2.0 ** -np.arange(1, 40), [0.0]])
            xs = [x0 + m * (x_try - x0) for m in fr]
            ok = [r[2] and bool(np.all(r[1] >= INSIDE)) for r in run_many(xs)]
            x_try = xs[int(np.argmax(ok))]
        return x_try if good(x_try) and run(x_try)[0] <= f0 else x0

    def scaled(c):
        return np.array([(c[d] - lo[d]) / (hi[d] - lo[d]) for d in free])

    fscale = max(abs(run(scaled(x_start))[0]), 1e-12)
    starts = [scaled(x_start)] + [scaled(n) for n in nodes if start is not None or n is not node]
    finals = [refine(x0) for x0 in starts]
    x_best = min(finals, key=lambda x: run(x)[0])
    coords = coords_of(x_best)
    pt = solve_point(scenario, **_point_kwargs(coords))
    f_best = run(x_best)[0]
    value = float(-f_best if obj.sense == "max" else f_best)
    from thermo.margins import margins  # it reads this module's objectives

    mg = margins(scenario, point=pt) if with_margins else None
    return BestPoint(obj, True, value, coords, pt, mg, node if start is None else dict(start),
                     grid_value, excl)


