"""Exact limit edges, the best point, and margins and sensitivities at a point.

The grid of a sweep only samples the window. This module goes between the grid nodes with
the core itself (:func:`thermo.sweep.train_results`, the function every grid value comes
from), so every number here equals :func:`thermo.point` at the same coordinates.

* :func:`feasible_intervals` finds, for every row of the window (one pressure, one
  steam-to-carbon ratio, one co-feed ratio), the temperatures where each review limit is
  met exactly, by Illinois false position (or bisection) between grid nodes on the core's
  values (all rows in one batch per step, thermo.edge_search), and returns the feasible set
  of the row as a union of exact temperature intervals. :func:`with_edges` stores them in
  the Dataset as ``feasible_t_low`` / ``feasible_t_high`` [K] over an ``interval``
  dimension.
* :func:`best_point` refines the best feasible grid node of an objective (a small registry,
  :data:`OBJECTIVES`) with ``scipy.optimize.minimize`` (SLSQP, bounded, the review limits as
  inequality constraints).
* :func:`margins` gives, for each active limit, the margin in the limit's own unit and the
  distance to its edge along temperature and along steam-to-carbon (positive inside the
  window), and the change of the limit quantities for +/- 5 K, +/- 1 bar and +/- 0.1 S/C by
  central differences through the core.

The limit quantities (:class:`Limit`, :data:`LIMITS`, their margins and verdicts) live in
:mod:`thermo.limit_quantities`, and the core at arbitrary points with warm starts
(:func:`evaluate_warm`, the carbon path nodes of the brackets) in :mod:`thermo.core_points`;
every name is still importable from here.

Every quantity is SI: K, Pa, W, mol per mol.
"""

from __future__ import annotations

from bisect import bisect_left
from dataclasses import dataclass, field

import numpy as np
import xarray as xr

from thermo import edge_search
from thermo.core_points import (  # noqa: F401 - names of this module, kept importable here
    _PATH_VARIABLES,
    _path_nodes,
    _subset_nodes,
    evaluate_warm,
)
from thermo.equilibrium import ELEMENTS
from thermo.limit_quantities import (  # noqa: F401 - names of this module, kept importable here
    LIMITS,
    Limit,
    _ok_fields,
    active_limits,
    carbon_quantity,
    exclusion,
    limit_margins,
)
from thermo.scenario import Scenario

#: Edges are located to this width [K] (the reported edge is the middle of the last bracket,
#: so it lies within half of it of the true crossing).
EDGE_TOLERANCE_K = 0.1
#: How the edges' brackets are narrowed by default (thermo.edge_search.METHODS): Illinois
#: false position, which agrees with bisection to EDGE_TOLERANCE_K on every edge of the demo
#: and hydrogen-plant scenarios (tests/thermo/test_edge_methods.py) with fewer solves.
EDGE_METHOD = "illinois"
#: Edges along steam-to-carbon are located to this width [mol per mol].
EDGE_TOLERANCE_SC = 1e-3

#: Steps of the central differences of :func:`margins`, by axis [K, Pa, mol per mol].
SENSITIVITY_STEPS = {"temperature": 5.0, "pressure": 1e5, "steam_to_carbon": 0.1}


# ---------------------------------------------------------------------------------------------
# Evaluating the core at arbitrary points (thermo.core_points). evaluate and _row_points
# stay here and call evaluate_warm by this module's name, so replacing
# thermo.edges.evaluate_warm (cold starts in the tests and benchmarks) reaches them.


def evaluate(scenario: Scenario, temperature, pressure, steam_to_carbon=None,
             oxygen_to_carbon=None, co2_to_carbon=None, *, path_nodes=None,
             secondary_guess=None) -> xr.Dataset:
    """The Dataset's per-point variables at N arbitrary points, over a ``point`` dimension.

    See :func:`evaluate_warm` (the same, with warm starts of the primary) for the parameters
    and the Dataset."""
    return evaluate_warm(scenario, temperature, pressure, steam_to_carbon, oxygen_to_carbon,
                         co2_to_carbon, path_nodes=path_nodes,
                         secondary_guess=secondary_guess)[0]


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
                T: np.ndarray, path_nodes=None, secondary_guess=None,
                warm_start=None) -> tuple[xr.Dataset, np.ndarray]:
    """The core at temperatures `T` on rows `rows` (flat row indexes), and the primary's
    element potentials (:func:`evaluate_warm`)."""
    shape = tuple(len(v) for v in row_coords.values())
    idx = np.unravel_index(rows, shape) if shape else ()
    coords = {d: row_coords[d][i] for d, i in zip(row_coords, idx, strict=True)}
    return evaluate_warm(scenario, T, coords["pressure"], coords.get("steam_to_carbon"),
                         coords.get("oxygen_to_carbon"), coords.get("co2_to_carbon"),
                         path_nodes=path_nodes, secondary_guess=secondary_guess,
                         warm_start=warm_start)


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
                       tolerance: float = EDGE_TOLERANCE_K,
                       method: str = EDGE_METHOD, node_potentials=None) -> RowEdges:
    """Exact feasible temperature intervals of every row of a sweep.

    Parameters
    ----------
    scenario : Scenario
        The scenario of `ds` (feed, approach, train and the review limits to apply).
    ds : xarray.Dataset
        Its sweep (thermo.sweep).
    tolerance : float
        Width of the last bracket of each edge [K].
    method : {"bisect", "illinois"}
        How the brackets are narrowed (:mod:`thermo.edge_search`); both give the edge to
        half of `tolerance`.
    node_potentials : array_like (points, E), optional
        The primary's element potentials at the grid nodes, flat in C order over
        ``ds["converged"].dims`` (thermo.sweep.solve_chunk's): each bracket's first point
        starts its equilibrium from its lower node's (without them, from the basis guesses).
        Later points start from the bracket's last solved point. Starts change the Newton
        iterations, not the answers beyond the solver's tolerance.

    Returns
    -------
    RowEdges

    Notes
    -----
    Each limit is treated on its own: between two neighbouring grid nodes where a limit's
    verdict differs, its edge is bracketed and narrowed on the core's values (all brackets of
    the window advance together, one batch of the core per step; bisection takes about
    ``log2(step / tolerance)`` steps, Illinois false position fewer, on the limits'
    margins). A row's feasible set is then the intersection of the
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
    # The secondary reformer's outlet at each bracket's ends (the grid's, then the refined
    # points'): the straight line between them starts its energy balance at the next point.
    sec_var = "secondary_temperature"
    if sec_var in ds and lo.size:
        t_sec = np.asarray(ds[sec_var].transpose(*row_dims, "temperature").values,
                           dtype=float).reshape(-1, T.size)
        sec_lo, sec_hi = t_sec[row_i, step_i], t_sec[row_i, step_i + 1]
    else:
        sec_lo = sec_hi = None
    # Each limit's margin at the bracket ends (NaN for ``converged``, which has none).
    margin_nodes = {k: np.asarray(v.transpose(*row_dims, "temperature").values,
                                  dtype=float).reshape(-1, T.size)
                    for k, v in limit_margins(ds, limits).items()}
    g_all = np.stack([margin_nodes.get(n, np.full((R, T.size), np.nan)) for n in names]) \
        if names else np.zeros((0, 1, 1))
    g_lo, g_hi = g_all[lim_i, row_i, step_i], g_all[lim_i, row_i, step_i + 1]

    # The primary's element potentials at each bracket's last solved point (NaN: none yet,
    # the first step starts from the basis guesses): the next point of the bracket, at most
    # one grid step away, starts its equilibrium there.
    potentials = np.full((lo.size, len(ELEMENTS)), np.nan)
    if node_potentials is not None and lo.size:
        dims = ds["converged"].dims
        nodes = np.asarray(node_potentials, dtype=float).reshape(
            ds["converged"].shape + (len(ELEMENTS),))
        nodes = np.moveaxis(nodes, dims.index("temperature"), -2).reshape(R, T.size, -1)
        potentials = np.where(ok["converged"][row_i, step_i][:, None],
                              nodes[row_i, step_i], np.nan)

    def probe(idx, t, guess):
        pts, lam = _row_points(scenario, row_coords, row_i[idx], t,
                               _subset_nodes(path_nodes, idx), guess, potentials[idx])
        okp = _ok_fields(pts, limits)
        conv = np.asarray(okp["converged"].values, dtype=bool)
        potentials[idx] = np.where(conv[:, None], lam, potentials[idx])
        mp = {k: np.asarray(v.values, dtype=float) for k, v in limit_margins(pts, limits).items()}
        k = lim_i[idx]
        j = np.arange(idx.size)
        okarr = np.stack([np.asarray(okp[n].values, dtype=bool) for n in names])
        garr = np.stack([mp.get(n, np.full(idx.size, np.nan)) for n in names])
        sec = np.asarray(pts[sec_var].values, dtype=float) if sec_var in pts else None
        return okarr[k, j], garr[k, j], sec

    lo, hi = edge_search.refine(probe, lo, hi, ok_lo, g_lo, g_hi, tolerance, method,
                                sec_lo, sec_hi)
    edge_T = 0.5 * (lo + hi)
    # Per row: the edges of each limit, then the intersection of the limits' feasible sets.
    edge_of = {}  # (name, row, step) -> temperature
    for k, r, i, e in zip(lim_i, row_i, step_i, edge_T, strict=True):
        edge_of[(names[k], int(r), int(i))] = float(e)
    edges = {name: [[] for _ in range(R)] for name in names}
    for (name, r, _i), e in edge_of.items():
        edges[name][r].append(e)
    intervals: list[list[tuple[float, float]]] = []
    T_list = T.tolist()  # the loop below is per cut: plain floats, bisect (no numpy scalars)
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
            i = min(max(bisect_left(T_list, m) - 1, 0), T.size - 2)  # the step holding m
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
               tolerance: float = EDGE_TOLERANCE_K, method: str = EDGE_METHOD,
               node_potentials=None) -> xr.Dataset:
    """`ds` with the exact feasible intervals of every row added.

    Adds ``feasible_t_low`` and ``feasible_t_high`` [K] over the row dims and ``interval``
    (NaN where a row has fewer intervals, all NaN where it has none), ``feasible_intervals``
    (count per row) and ``feasible_grid_warning`` (bool per row, see
    :func:`feasible_intervals`); `method` narrows the brackets (:mod:`thermo.edge_search`);
    `node_potentials` start the brackets' first points (:func:`feasible_intervals`).
    """
    re = feasible_intervals(scenario, ds, tolerance, method, node_potentials)
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
    # One assign (one merge with the Dataset's many variables, not one per variable).
    out = out.assign({
        "feasible_t_low": (dims, low.reshape(shape), {
            "units": "K", "long_name": "lowest temperature of a feasible interval of the row "
                                       f"(exact to {tolerance:g} K; NaN: no such interval)"}),
        "feasible_t_high": (dims, high.reshape(shape), {
            "units": "K", "long_name": "highest temperature of a feasible interval of the row "
                                       f"(exact to {tolerance:g} K; NaN: no such interval)"}),
        "feasible_intervals": (re.row_dims, np.array([len(v) for v in re.intervals])
                               .reshape(re.shape), {
            "units": "1", "long_name": "number of feasible temperature intervals of the row"}),
        "feasible_grid_warning": (re.row_dims, re.grid_warning.reshape(re.shape), {
            "units": "1", "long_name": "a limit may be crossed twice inside one temperature "
                                       "step of this row (quadratic through three nodes)"}),
    })
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


# ---------------------------------------------------------------------------------------------
# Names that moved to thermo.best and thermo.margins, still importable from here

_MOVED = {
    "OBJECTIVES": "thermo.best",
    "SENSITIVITY_QUANTITIES": "thermo.margins",
    "Objective": "thermo.best",
    "DEFAULT_OBJECTIVE": "thermo.best",
    "PLANT_OBJECTIVES": "thermo.best",
    "default_objective": "thermo.best",
    "objectives_for": "thermo.best",
    "objective": "thermo.best",
    "BestPoint": "thermo.best",
    "_SUFFIX": "thermo.best",
    "_strict": "thermo.best",
    "_point_kwargs": "thermo.best",
    "N_STARTS": "thermo.best",
    "INSIDE": "thermo.best",
    "best_point": "thermo.best",
    "LimitMargin": "thermo.margins",
    "PLANT_SENSITIVITIES": "thermo.margins",
    "Margins": "thermo.margins",
    "_nearest_brackets": "thermo.margins",
    "margins": "thermo.margins",
}


def __getattr__(name: str):
    """The objectives, best point and margins, from the modules that hold them now."""
    if name in _MOVED:
        import importlib

        return getattr(importlib.import_module(_MOVED[name]), name)
    raise AttributeError(f"module 'thermo.edges' has no attribute {name!r}")
