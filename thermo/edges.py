"""Exact limit edges, the best point, and margins and sensitivities at a point.

The grid of a sweep only samples the window. This module goes between the grid nodes with
the core itself (:func:`thermo.sweep.train_results`, the function every grid value comes
from), so every number here equals :func:`thermo.point` at the same coordinates.

* :func:`feasible_intervals` finds, for every row of the window (one pressure, one
  steam-to-carbon ratio, one co-feed ratio), the temperatures where each review limit is
  met exactly, by bisection between grid nodes on the core's values (all rows in one batch
  per step), and returns the feasible set of the row as a union of exact temperature
  intervals. :func:`with_edges` stores them in the Dataset as ``feasible_t_low`` /
  ``feasible_t_high`` [K] over an ``interval`` dimension.
* :func:`best_point` refines the best feasible grid node of an objective (a small registry,
  :data:`OBJECTIVES`) with ``scipy.optimize.minimize`` (SLSQP, bounded, the review limits as
  inequality constraints).
* :func:`margins` gives, for each active limit, the margin in the limit's own unit and the
  distance to its edge along temperature and along steam-to-carbon (positive inside the
  window), and the change of the limit quantities for +/- 5 K, +/- 1 bar and +/- 0.1 S/C by
  central differences through the core.

Every quantity is SI: K, Pa, W, mol per mol.
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np
import xarray as xr

from thermo import carbon
from thermo.plant import GJ_PER_1000NM3_FROM_J_PER_MOL
from thermo.scenario import Limits, Scenario
from thermo.sweep import (
    _CARBON_LOCAL,
    LIMIT_VARIABLES,
    RATIO_AXES,
    train_results,
    window_axes,
)

#: Edges are located to this width [K] (the reported edge is the middle of the last bracket,
#: so it lies within half of it of the true crossing).
EDGE_TOLERANCE_K = 0.1
#: Edges along steam-to-carbon are located to this width [mol per mol].
EDGE_TOLERANCE_SC = 1e-3

#: Steps of the central differences of :func:`margins`, by axis [K, Pa, mol per mol].
SENSITIVITY_STEPS = {"temperature": 5.0, "pressure": 1e5, "steam_to_carbon": 0.1}


# ---------------------------------------------------------------------------------------------
# The limit quantities


def carbon_quantity(ds) -> xr.DataArray:
    """The carbon verdict as one signed quantity: <= 0 carbon-free, 0 on the boundary [-].

    Uses ``carbon_verdict_ln_activity`` when the Dataset holds it (the binding carbon
    criterion as a log activity). Otherwise it is built from today's fields: the log of the
    outlet gas's carbon activity (graphite reference, <= 0 where no graphite forms) where the
    train forms no graphite, and the graphite formed in the train per hydrocarbon carbon fed
    (> 0) where it does. This is the one place the carbon quantity is read.
    """
    if "carbon_verdict_ln_activity" in ds:
        return ds["carbon_verdict_ln_activity"]
    hc = float(ds.attrs.get("hydrocarbon_carbon_mol_per_s", 1.0)) or 1.0
    with np.errstate(divide="ignore"):
        ln_a = np.log(ds["carbon_activity"].clip(min=1e-300)).clip(max=0.0)
    deposit = ds[LIMIT_VARIABLES["carbon_free"]]
    return xr.where(deposit > 0, deposit / hc + 1e-12, ln_a)


@dataclass(frozen=True)
class Limit:
    """One kind of review limit and how it is checked.

    Attributes
    ----------
    name : str
        JSON key (``methane_slip``, ``h2``, ``duty``, ``carbon``).
    setting : str
        The attribute of thermo.scenario.Limits that sets it.
    kind : {"max", "min"}
        Whether the quantity must stay at or below (``max``) or at or above the limit.
    label, unit : str
        Words and display unit.
    scale : float
        Display value per SI value.
    quantity : callable
        Dataset -> the checked quantity [SI].
    """

    name: str
    setting: str
    kind: str
    label: str
    unit: str
    scale: float
    quantity: Callable[[xr.Dataset], xr.DataArray]

    def limit_value(self, limits: Limits) -> float | None:
        """The limit [SI], or None when it is not set."""
        if self.setting == "carbon_free":
            return 0.0 if limits.carbon_free else None
        return getattr(limits, self.setting)

    def margin(self, value, limit: float):
        """Margin in the limit's own unit, positive inside the window [SI]."""
        return limit - value if self.kind == "max" else value - limit


LIMITS: dict[str, Limit] = {
    "methane_slip": Limit("methane_slip", "max_methane_slip_dry", "max", "methane slip (dry)",
                          "mol %", 100.0,
                          lambda ds: ds[LIMIT_VARIABLES["max_methane_slip_dry"]]),
    "h2": Limit("h2", "min_h2_yield", "min", "H2 (product of the train)", "mol/mol C", 1.0,
                lambda ds: ds[LIMIT_VARIABLES["min_h2_yield"]]),
    "duty": Limit("duty", "max_duty", "max", "radiant duty", "MW", 1e-6,
                  lambda ds: ds[LIMIT_VARIABLES["max_duty"]]),
    "carbon": Limit("carbon", "carbon_free", "max", "carbon verdict (ln activity)", "-", 1.0,
                    carbon_quantity),
    # With a [plant] table: the furnace's fired duty (LHV), thermo.plant.
    "fired_duty": Limit("fired_duty", "max_fired_duty", "max", "fired duty (LHV)", "MW", 1e-6,
                        lambda ds: ds[LIMIT_VARIABLES["max_fired_duty"]]),
}


def active_limits(limits: Limits) -> list[tuple[Limit, float]]:
    """The limits that are set, with their values [SI], in :data:`LIMITS` order."""
    out = []
    for lim in LIMITS.values():
        value = lim.limit_value(limits)
        if value is not None:
            out.append((lim, float(value)))
    return out


def limit_margins(ds: xr.Dataset, limits: Limits) -> dict[str, xr.DataArray]:
    """Margin of every active limit, positive (or zero) inside [SI unit of the limit]."""
    return {lim.name: lim.margin(lim.quantity(ds), value) for lim, value in active_limits(limits)}


def _ok_fields(ds: xr.Dataset, limits: Limits) -> dict[str, xr.DataArray]:
    """Where each limit is met (and where the solver converged), as booleans."""
    out = {k: m >= 0 for k, m in limit_margins(ds, limits).items()}
    out["converged"] = ds["converged"].astype(bool)
    return out


# ---------------------------------------------------------------------------------------------
# Evaluating the core at arbitrary points


def evaluate(scenario: Scenario, temperature, pressure, steam_to_carbon=None,
             oxygen_to_carbon=None, co2_to_carbon=None, *, path_nodes=None) -> xr.Dataset:
    """The Dataset's per-point variables at N arbitrary points, over a ``point`` dimension.

    Parameters
    ----------
    scenario : Scenario
        Feed (its own ratios fill any not given), approach and train.
    temperature, pressure : array_like
        Outlet temperature [K] and absolute pressure [Pa], broadcast together.
    steam_to_carbon, oxygen_to_carbon, co2_to_carbon : array_like, optional
        Ratios [mol per mol hydrocarbon carbon].
    path_nodes : (ndarray, list of PathMaximum, list of PathMaximum, ndarray), optional
        For points that lie between two solved outlets of their row: the lower outlet
        temperature [K], the path maxima there and at the upper one
        (:func:`thermo.carbon.path_from_nodes`), and where that applies (bool; elsewhere the
        point's path is solved on its own). Without it every point's carbon path is solved on
        its own (:func:`thermo.carbon.points_check`).

    Returns
    -------
    xarray.Dataset
        The variables of :func:`thermo.sweep.train_results` (scalars only), with the attrs
        the limit quantities read.
    """
    arrays = [np.asarray(a, dtype=float) for a in
              (temperature, pressure, steam_to_carbon, oxygen_to_carbon, co2_to_carbon)
              if a is not None]
    shape = np.broadcast_shapes(*(a.shape for a in arrays))
    T = np.broadcast_to(np.asarray(temperature, dtype=float), shape).ravel()
    P = np.broadcast_to(np.asarray(pressure, dtype=float), shape).ravel()

    def ratio(a):
        return None if a is None else np.broadcast_to(np.asarray(a, dtype=float), shape).ravel()

    n_in = scenario.feed.inlet_flows(ratio(steam_to_carbon), ratio(oxygen_to_carbon),
                                     ratio(co2_to_carbon))
    n_in = np.broadcast_to(n_in.reshape(n_in.shape[0], -1).T, (T.size, n_in.shape[0]))
    res = train_results(scenario, np.ascontiguousarray(n_in), T, P)
    local = {k[len(_CARBON_LOCAL):]: res.pop(k) for k in list(res)
             if k.startswith(_CARBON_LOCAL)}
    if path_nodes is None:
        res.update(carbon.points_check(local, T, P, scenario.approach,
                                       scenario.feed.inlet_temperature, scenario.carbon))
    else:
        T_below, below, above, extend = path_nodes
        path = carbon.path_from_nodes(local, T, scenario.approach, scenario.carbon, T_below,
                                      below, above)
        own = np.flatnonzero(~extend)
        if own.size:  # brackets below the path's fixed part: each point on its own path
            sub = {k: v[own] for k, v in local.items()}
            for full, part in zip(path, carbon.own_paths(
                    sub, T[own], P[own], scenario.approach, scenario.feed.inlet_temperature,
                    scenario.carbon), strict=True):
                full.ln_activity[own] = part.ln_activity
                full.temperature[own] = part.temperature
        res.update(carbon.finish(local, path, T, scenario.carbon))
    data = {k: ("point", v) for k, v in res.items() if np.ndim(v) == 1}
    ds = xr.Dataset(data, coords={"temperature": ("point", T), "pressure": ("point", P)})
    ds["converged"] = ds["converged"].astype(bool)
    ds.attrs["hydrocarbon_carbon_mol_per_s"] = scenario.feed.carbon_flow()
    return ds


# ---------------------------------------------------------------------------------------------
# Exact edges along temperature


@dataclass(frozen=True)
class RowEdges:
    """Exact feasible temperatures of every row of a window.

    Attributes
    ----------
    row_dims : tuple of str
        The window dims other than temperature, in Dataset order.
    row_coords : dict[str, ndarray]
        Their coordinate values [SI].
    intervals : list of list of (float, float)
        Per row (C order over `row_dims`), the feasible intervals [K], sorted.
    edges : dict[str, list of list of float]
        Per limit (and ``converged``), per row, the exact temperatures where it changes [K].
    grid_warning : ndarray of bool, shape (rows,)
        Rows where the quadratic through three neighbouring grid nodes says a limit may be
        crossed twice inside one temperature step, where the grid cannot see it.
    warning_limits : list of list of str
        Per row, which limits gave that warning.
    """

    row_dims: tuple[str, ...]
    row_coords: dict[str, np.ndarray]
    intervals: list[list[tuple[float, float]]]
    edges: dict[str, list[list[float]]]
    grid_warning: np.ndarray
    warning_limits: list[list[str]] = field(default_factory=list)

    @property
    def shape(self) -> tuple[int, ...]:
        return tuple(len(self.row_coords[d]) for d in self.row_dims)

    def row(self, **coords) -> list[tuple[float, float]]:
        """Intervals of the row at these index positions (``pressure=3, ...``)."""
        flat = int(np.ravel_multi_index(tuple(coords[d] for d in self.row_dims), self.shape))
        return self.intervals[flat]


def _row_points(scenario: Scenario, row_coords: dict[str, np.ndarray], rows: np.ndarray,
                T: np.ndarray, path_nodes=None) -> xr.Dataset:
    """The core at temperatures `T` on rows `rows` (flat row indexes)."""
    shape = tuple(len(v) for v in row_coords.values())
    idx = np.unravel_index(rows, shape) if shape else ()
    coords = {d: row_coords[d][i] for d, i in zip(row_coords, idx, strict=True)}
    return evaluate(scenario, T, coords["pressure"], coords.get("steam_to_carbon"),
                    coords.get("oxygen_to_carbon"), coords.get("co2_to_carbon"),
                    path_nodes=path_nodes)


#: The Dataset's path maxima per carbon of thermo.carbon.offsets: (ln activity variable
#: [as activity], path temperature variable).
_PATH_VARIABLES = (("carbon_activity_path_max", "carbon_path_max_temperature"),
                   ("carbon_activity_path_max_catalyst", "carbon_path_max_temperature_catalyst"))


def _path_nodes(scenario: Scenario, ds: xr.Dataset, row_dims, rows, steps, T):
    """Path maxima of the grid outlets around each bracket (see :func:`evaluate`) and, per
    bracket, whether its points extend the lower outlet's path (False where the path's fixed
    part, inlet or stations, reaches above the bracket's lower node: those points solve their
    own paths); None where the window's temperatures do not ascend."""
    check = scenario.carbon
    fixed_top = max([scenario.feed.inlet_temperature, *check.path_temperatures])
    if rows.size == 0 or np.any(np.diff(T) <= 0):
        return None
    extend = T[steps] >= fixed_top - 1e-9  # the others solve their own paths
    below, above = [], []
    for (a_var, t_var), _off in zip(_PATH_VARIABLES, carbon.offsets(check), strict=False):
        if a_var not in ds or t_var not in ds:
            return None
        with np.errstate(divide="ignore"):
            ln = np.log(np.asarray(ds[a_var].transpose(*row_dims, "temperature").values,
                                   dtype=float).reshape(-1, T.size))
        tp = np.asarray(ds[t_var].transpose(*row_dims, "temperature").values,
                        dtype=float).reshape(-1, T.size)
        below.append(carbon.PathMaximum(ln[rows, steps], tp[rows, steps]))
        above.append(carbon.PathMaximum(ln[rows, steps + 1], tp[rows, steps + 1]))
    return T[steps], below, above, extend


def _curvature_warning(g: np.ndarray, T: np.ndarray) -> np.ndarray:
    """(rows,) True where the parabola through three neighbouring nodes of `g` (rows, nT)
    changes sign twice inside a step whose two end nodes have the same sign."""
    R, n = g.shape
    warn = np.zeros(R, dtype=bool)
    if n < 3:
        return warn
    for i in range(n - 1):
        j = min(max(i - 1, 0), n - 3)  # nodes j, j+1, j+2 contain the step i, i+1
        t0, t1, t2 = T[j], T[j + 1], T[j + 2]
        g0, g1, g2 = g[:, j], g[:, j + 1], g[:, j + 2]
        # Newton divided differences: g = g0 + a (t - t0) + b (t - t0)(t - t1)
        a = (g1 - g0) / (t1 - t0)
        b = ((g2 - g1) / (t2 - t1) - a) / (t2 - t0)
        with np.errstate(divide="ignore", invalid="ignore"):
            tv = 0.5 * (t0 + t1) - a / (2 * b)
        inside = (tv > T[i]) & (tv < T[i + 1]) & (b != 0)
        gv = g0 + a * (tv - t0) + b * (tv - t0) * (tv - t1)
        same = np.sign(g[:, i]) == np.sign(g[:, i + 1])
        warn |= inside & same & (np.sign(gv) != np.sign(g[:, i])) & np.isfinite(gv)
    return warn


def feasible_intervals(scenario: Scenario, ds: xr.Dataset,
                       tolerance: float = EDGE_TOLERANCE_K) -> RowEdges:
    """Exact feasible temperature intervals of every row of a sweep.

    Parameters
    ----------
    scenario : Scenario
        The scenario of `ds` (feed, approach, train and the review limits to apply).
    ds : xarray.Dataset
        Its sweep (thermo.sweep).
    tolerance : float
        Width of the last bracket of each edge [K].

    Returns
    -------
    RowEdges

    Notes
    -----
    Each limit is treated on its own: between two neighbouring grid nodes where a limit's
    verdict differs, its edge is bracketed and bisected on the core's values (all brackets of
    the window advance together, one batch of the core per step; about
    ``log2(step / tolerance)`` steps). A row's feasible set is then the intersection of the
    limits' feasible sets, so a band narrower than the grid step (one limit's edge and
    another's inside the same step) is found as a band. A limit crossed twice inside one
    step is not seen by its nodes; :attr:`RowEdges.grid_warning` flags where the quadratic
    through three neighbouring nodes suggests it.
    """
    limits = scenario.limits
    T = np.asarray(ds["temperature"].values, dtype=float)
    row_dims = tuple(d for d in ds["converged"].dims if d != "temperature")
    row_coords = {d: np.asarray(ds[d].values, dtype=float) for d in row_dims}
    ok_fields = _ok_fields(ds, limits)
    ok = {k: np.asarray(v.transpose(*row_dims, "temperature").values, dtype=bool).reshape(
        -1, T.size) for k, v in ok_fields.items()}
    R = next(iter(ok.values())).shape[0]
    names = list(ok)
    # Brackets: (limit index, row, step) where the verdict changes between nodes.
    lim_i, row_i, step_i = [], [], []
    for k, name in enumerate(names):
        r, i = np.nonzero(ok[name][:, :-1] != ok[name][:, 1:])
        lim_i.append(np.full(r.size, k))
        row_i.append(r)
        step_i.append(i)
    lim_i = np.concatenate(lim_i) if lim_i else np.zeros(0, int)
    row_i = np.concatenate(row_i) if row_i else np.zeros(0, int)
    step_i = np.concatenate(step_i) if step_i else np.zeros(0, int)
    lo, hi = T[step_i].copy(), T[step_i + 1].copy()
    ok_all = np.stack([ok[n] for n in names]) if names else np.zeros((0, 1, 1), dtype=bool)
    ok_lo = ok_all[lim_i, row_i, step_i].astype(bool)
    path_nodes = _path_nodes(scenario, ds, row_dims, row_i, step_i, T)
    while lo.size and float(np.max(hi - lo)) > tolerance:
        mid = 0.5 * (lo + hi)
        pts = _row_points(scenario, row_coords, row_i, mid, path_nodes)
        okp = _ok_fields(pts, limits)
        okarr = np.stack([np.asarray(okp[n].values, dtype=bool) for n in names])
        okm = okarr[lim_i, np.arange(lim_i.size)]
        go_up = okm == ok_lo
        lo = np.where(go_up, mid, lo)
        hi = np.where(go_up, hi, mid)
    edge_T = 0.5 * (lo + hi)
    # Per row: the edges of each limit, then the intersection of the limits' feasible sets.
    edge_of = {}  # (name, row, step) -> temperature
    for k, r, i, e in zip(lim_i, row_i, step_i, edge_T, strict=True):
        edge_of[(names[k], int(r), int(i))] = float(e)
    edges = {name: [[] for _ in range(R)] for name in names}
    for (name, r, _i), e in edge_of.items():
        edges[name][r].append(e)
    intervals: list[list[tuple[float, float]]] = []
    for r in range(R):
        if T.size == 1:
            intervals.append([(T[0], T[0])] if all(ok[n][r, 0] for n in names) else [])
            continue
        cuts = sorted({T[0], T[-1], *(e for n in names for e in edges[n][r])})
        out: list[tuple[float, float]] = []
        for a, b in zip(cuts[:-1], cuts[1:], strict=True):
            if b <= a:
                continue
            m = 0.5 * (a + b)
            i = int(np.clip(np.searchsorted(T, m) - 1, 0, T.size - 2))
            good = True
            for n in names:
                e = edge_of.get((n, r, i))
                state = ok[n][r, i] if e is None or m < e else ok[n][r, i + 1]
                if not state:
                    good = False
                    break
            if good:
                if out and abs(out[-1][1] - a) <= 1e-9:
                    out[-1] = (out[-1][0], b)
                else:
                    out.append((a, b))
        intervals.append(out)
    # Curvature warnings on the continuous limit quantities.
    warn = np.zeros(R, dtype=bool)
    which: list[list[str]] = [[] for _ in range(R)]
    for name, m in limit_margins(ds, limits).items():
        g = np.asarray(m.transpose(*row_dims, "temperature").values, dtype=float).reshape(R, -1)
        w = _curvature_warning(g, T)
        warn |= w
        for r in np.nonzero(w)[0]:
            which[r].append(name)
    return RowEdges(row_dims, row_coords, intervals,
                    {n: [sorted(v) for v in e] for n, e in edges.items()}, warn, which)


#: Dataset variables that depend on the review limits (and not only on the solved numbers).
LIMIT_DEPENDENT = ("feasible", "feasible_t_low", "feasible_t_high", "feasible_intervals",
                   "feasible_grid_warning")


def with_edges(scenario: Scenario, ds: xr.Dataset,
               tolerance: float = EDGE_TOLERANCE_K) -> xr.Dataset:
    """`ds` with the exact feasible intervals of every row added.

    Adds ``feasible_t_low`` and ``feasible_t_high`` [K] over the row dims and ``interval``
    (NaN where a row has fewer intervals, all NaN where it has none), ``feasible_intervals``
    (count per row) and ``feasible_grid_warning`` (bool per row, see
    :func:`feasible_intervals`).
    """
    re = feasible_intervals(scenario, ds, tolerance)
    R = len(re.intervals)
    M = max(1, max((len(v) for v in re.intervals), default=0))
    low = np.full((R, M), np.nan)
    high = np.full((R, M), np.nan)
    for r, ivs in enumerate(re.intervals):
        for j, (a, b) in enumerate(ivs):
            low[r, j], high[r, j] = a, b
    dims = re.row_dims + ("interval",)
    shape = re.shape + (M,)
    out = ds.drop_vars([v for v in ("feasible_t_low", "feasible_t_high", "feasible_intervals",
                                    "feasible_grid_warning", "interval") if v in ds])
    out["feasible_t_low"] = (dims, low.reshape(shape), {
        "units": "K", "long_name": "lowest temperature of a feasible interval of the row "
                                   f"(exact to {tolerance:g} K; NaN: no such interval)"})
    out["feasible_t_high"] = (dims, high.reshape(shape), {
        "units": "K", "long_name": "highest temperature of a feasible interval of the row "
                                   f"(exact to {tolerance:g} K; NaN: no such interval)"})
    out["feasible_intervals"] = (re.row_dims, np.array([len(v) for v in re.intervals])
                                 .reshape(re.shape), {
        "units": "1", "long_name": "number of feasible temperature intervals of the row"})
    out["feasible_grid_warning"] = (re.row_dims, re.grid_warning.reshape(re.shape), {
        "units": "1", "long_name": "a limit may be crossed twice inside one temperature step "
                                   "of this row (quadratic through three nodes)"})
    out.attrs = dict(ds.attrs, edge_tolerance_K=tolerance)
    return out


def row_intervals(ds: xr.Dataset, **sel) -> list[tuple[float, float]]:
    """The feasible intervals [K] stored in `ds` for one row, chosen by index
    (``pressure=2, steam_to_carbon=4``)."""
    lo = ds["feasible_t_low"].isel(**sel).values
    hi = ds["feasible_t_high"].isel(**sel).values
    return [(float(a), float(b)) for a, b in zip(lo, hi, strict=True) if np.isfinite(a)]


def design_row(scenario: Scenario) -> list[tuple[float, float]]:
    """Exact feasible temperature intervals [K] at the design pressure and ratios exactly
    (one row over the window's temperatures, solved and edged like a sweep's rows)."""
    from thermo.sweep import sweep

    f = scenario.feed
    kw = {"pressure": (f"{scenario.pressure!r} Pa", f"{scenario.pressure!r} Pa", 1),
          "steam_to_carbon": (f.steam_to_carbon, f.steam_to_carbon, 1)}
    cofeed = scenario.window.cofeed
    if cofeed is not None:
        kw[cofeed] = (getattr(f, cofeed), getattr(f, cofeed), 1)
    row = sweep(scenario.with_window(**kw))
    sel = {d: 0 for d in row["feasible_t_low"].dims if d != "interval"}
    return row_intervals(row, **sel)


def exclusion(ds: xr.Dataset, limits: Limits) -> dict[str, float]:
    """Share of the window's grid nodes each active limit excludes (and ``converged``: the
    share not converged) [-], largest first."""
    fields = _ok_fields(ds, limits)
    out = {k: float(1.0 - v.mean()) for k, v in fields.items()}
    return dict(sorted(out.items(), key=lambda kv: -kv[1]))


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
    mg = margins(scenario, point=pt) if with_margins else None
    return BestPoint(obj, True, value, coords, pt, mg, node if start is None else dict(start),
                     grid_value, excl)


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
