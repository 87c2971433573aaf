"""Comparing two scenarios: a base case and a proposal, point by point over one window.

A design review compares a proposal with a base case. :func:`on_base_window` solves the
proposal over the base's window (same temperatures, pressures and ratios; a co-feed axis of
the base replaces the proposal's fixed co-feed ratio), so every grid point has both answers;
:func:`difference` subtracts the two Datasets (proposal minus base) variable by variable.
"""

from __future__ import annotations

import dataclasses

import numpy as np
import xarray as xr

from thermo.errors import InputError
from thermo.scenario import Scenario

#: Variables that are not differenced (flags, counters, and the fixed inputs).
_SKIP = ("converged", "iterations", "feasible", "inlet_flow", "carbon_binding")


def on_base_window(base: Scenario, proposal: Scenario) -> Scenario:
    """The proposal with the base's window, so that both are solved at the same points.

    Parameters
    ----------
    base, proposal : Scenario
        The two studies; everything but the window is the proposal's own.

    Returns
    -------
    Scenario
        The proposal over the base's window axes (the base's co-feed axis, or none).

    Raises
    ------
    InputError
        The proposal's approach does not fit the base's lowest temperature.
    """
    if proposal.window == base.window:
        return proposal
    if base.window.temperature.start - proposal.approach < 300.0:
        raise InputError("proposal design_point.approach", f"{proposal.approach:g} K",
                         "an approach that keeps the base window's lowest temperature minus "
                         "the approach at or above 300 K")
    moved = dataclasses.replace(proposal, window=base.window)
    return dataclasses.replace(moved, text=moved.to_toml())


def difference(base: xr.Dataset, proposal: xr.Dataset) -> xr.Dataset:
    """Proposal minus base for every numeric window variable of two sweeps.

    Parameters
    ----------
    base, proposal : xarray.Dataset
        Sweeps (thermo.sweep) over the same window (see :func:`on_base_window`).

    Returns
    -------
    xarray.Dataset
        Variables present in both with the same dims, differenced; units kept, long_name
        prefixed with "change (proposal - base) in". ``both_converged`` marks points where
        both sweeps converged; elsewhere, and where either value is not finite (H2/CO without
        CO), the differences are NaN.

    Raises
    ------
    InputError
        The windows differ.
    """
    dims = list(base["h2_yield"].dims)
    for d in dims + ["species"]:
        if d not in proposal.coords or not np.array_equal(base[d].values, proposal[d].values):
            raise InputError("comparison", d,
                             "two sweeps over the same window (solve the proposal with "
                             "thermo.compare.on_base_window)")
    both = base["converged"] & proposal["converged"]
    out = {}
    for name, da in proposal.data_vars.items():
        if name in _SKIP or name not in base or base[name].dims != da.dims:
            continue
        if not np.issubdtype(da.dtype, np.number) or da.dtype == bool:
            continue
        a, b = base[name].astype(float), da.astype(float)
        with np.errstate(invalid="ignore"):
            diff = b - a
        diff = diff.where(both & np.isfinite(a) & np.isfinite(b))
        diff.attrs = {"units": da.attrs.get("units", "1"),
                      "long_name": "change (proposal - base) in "
                                   + da.attrs.get("long_name", name)}
        out[name] = diff
    ds = xr.Dataset(out, coords={k: base.coords[k] for k in base.coords})
    ds["both_converged"] = both
    ds["both_converged"].attrs = {"units": "1", "long_name": "both sweeps converged"}
    ds.attrs = {"title": f"{proposal.attrs.get('title', 'proposal')} minus "
                         f"{base.attrs.get('title', 'base')}",
                "base_scenario": base.attrs.get("scenario", ""),
                "proposal_scenario": proposal.attrs.get("scenario", ""),
                "hydrocarbon_carbon_mol_per_s":
                    proposal.attrs.get("hydrocarbon_carbon_mol_per_s", 1.0)}
    return ds
