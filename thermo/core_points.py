"""The core at arbitrary points, warm-started, for the exact edges and the best point.

Split from :mod:`thermo.edges` (which keeps every name here importable, and whose
:func:`thermo.edges.evaluate` is this without the potentials). :func:`evaluate_warm` runs
:func:`thermo.sweep.train_results` (the function every grid value comes from) at N points,
each point's primary equilibrium optionally started from a nearby solved point's element
potentials, and checks each point's carbon path on its own or, between two solved grid
outlets of its row, from their path maxima (:func:`_path_nodes`, :func:`_subset_nodes`).

Every quantity is SI: K, Pa, W, mol per mol.
"""

from __future__ import annotations

import numpy as np
import xarray as xr

from thermo import carbon
from thermo.equilibrium import ELEMENTS
from thermo.scenario import Scenario
from thermo.sweep import (
    _CARBON_LOCAL,
    PRIMARY_POTENTIALS,
    train_results,
)


def evaluate_warm(scenario: Scenario, temperature, pressure, steam_to_carbon=None,
                  oxygen_to_carbon=None, co2_to_carbon=None, *, path_nodes=None,
                  secondary_guess=None, warm_start=None) -> tuple[xr.Dataset, np.ndarray]:
    """:func:`thermo.edges.evaluate`, each point's primary equilibrium started from
    `warm_start`, and the primary's converged element potentials.

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
    secondary_guess : array_like, optional
        First estimates of the secondary reformer's outlet temperature [K], one per point
        (NaN where none): a start for its energy balance, not a different answer.
    warm_start : array_like (N, E), optional
        Element potentials of nearby solved points (a bracket's previous point) to start
        each point's primary equilibrium from (thermo.equilibrium.ELEMENTS order; a row with
        a NaN for an element of the feed starts from the basis guesses): the outlet is the
        same to the solver's tolerance, in fewer Newton iterations.

    Returns
    -------
    xarray.Dataset
        The variables of :func:`thermo.sweep.train_results` (scalars only), with the attrs
        the limit quantities read.
    ndarray (N, E)
        The primary's element potentials (NaN for elements absent from the feed).
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
    guess = None if secondary_guess is None else \
        np.broadcast_to(np.asarray(secondary_guess, dtype=float), shape).ravel()
    start = None if warm_start is None else \
        np.broadcast_to(np.asarray(warm_start, dtype=float), (T.size, len(ELEMENTS)))
    res = train_results(scenario, np.ascontiguousarray(n_in), T, P, secondary_guess=guess,
                        warm_start=start, with_potentials=True)
    lam = res.pop(PRIMARY_POTENTIALS)
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
    res["converged"] = np.asarray(res["converged"], dtype=bool)
    data = {k: ("point", v) for k, v in res.items() if np.ndim(v) == 1}
    ds = xr.Dataset(data, coords={"temperature": ("point", T), "pressure": ("point", P)})
    ds.attrs["hydrocarbon_carbon_mol_per_s"] = scenario.feed.carbon_flow()
    return ds, lam


#: The Dataset's path maxima per carbon of thermo.carbon.offsets: (ln activity variable
#: [as activity], path temperature variable).
_PATH_VARIABLES = (("carbon_activity_path_max", "carbon_path_max_temperature"),
                   ("carbon_activity_path_max_catalyst", "carbon_path_max_temperature_catalyst"))


def _path_nodes(scenario: Scenario, ds: xr.Dataset, row_dims, rows, steps, T):
    """Path maxima of the grid outlets around each bracket (see :func:`evaluate_warm`) and, per
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


def _subset_nodes(path_nodes, idx: np.ndarray):
    """The path nodes of :func:`_path_nodes` for the brackets `idx` (None stays None)."""
    if path_nodes is None:
        return None
    T_below, below, above, extend = path_nodes

    def part(ms):
        return [carbon.PathMaximum(m.ln_activity[..., idx], m.temperature[..., idx])
                for m in ms]

    return T_below[idx], part(below), part(above), extend[idx]
