"""A window too large for one process, solved in blocks and written to NetCDF block by block.

:func:`thermo.sweep.sweep` returns the whole window as one Dataset, about 0.6 kB per point
(5-6 GB for 10^7 points). :func:`sweep_to_netcdf` never holds it: it splits the window into
blocks along one axis that is neither temperature (the carbon path and the exact feasible
edges work along whole temperature lines) nor the last axis (each point's solve starts from
its neighbour along it), solves each block as a sweep of its own (in this process or on
dask.distributed workers), and writes each block's values into their region of one NetCDF
file that was laid out from the first block. A block's values are the whole window's values
at its points, so the file equals the one :func:`thermo.io.save` writes from the whole
sweep: same variables, encodings, coordinates and attributes (only ``created`` is the time
of the run).

Memory: the process writing the file holds one block at a time (``block_points`` points,
about 0.6 kB each, plus the sweep's working arrays); each worker holds the block it solves
and at most one finished block waiting to be fetched.
"""

from __future__ import annotations

import dataclasses
import math
import os
from collections.abc import Callable
from pathlib import Path

import numpy as np
import xarray as xr

from thermo.scenario import Scenario
from thermo.scenario_data import Axis
from thermo.sweep import dask_client, sweep, window_axes

#: Points per block (about 150 MB of results in flight per block).
BLOCK_POINTS = 250_000
#: Dimension whose length differs between blocks (the exact edges: intervals per row).
GROWING_DIM = "interval"


@dataclasses.dataclass(frozen=True)
class AxisPart(Axis):
    """Values ``lo:hi`` of a whole evenly spaced axis, bit for bit.

    ``start``, ``stop`` and ``points`` describe the part (as text of the scenario); the values
    are sliced from the whole axis's ``numpy.linspace``, since a new linspace between the
    part's ends may differ from them in the last bit.
    """

    whole_start: float = 0.0
    whole_stop: float = 0.0
    whole_points: int = 1
    lo: int = 0

    def values(self) -> np.ndarray:
        """The part's values [SI unit of the axis]."""
        whole = np.linspace(self.whole_start, self.whole_stop, self.whole_points)
        return whole[self.lo:self.lo + self.points]


def split_axis(scenario: Scenario) -> str | None:
    """The window axis the blocks split: the first of length above 1 that is neither
    temperature nor the last axis; None where there is none (one block)."""
    names = [n for n, a in scenario.window.axes().items()]
    for name in names[1:-1]:
        if scenario.window.axes()[name].points > 1:
            return name
    return None


def blocks(scenario: Scenario, block_points: int = BLOCK_POINTS) -> list[tuple[int, int]]:
    """Index ranges ``(lo, hi)`` along :func:`split_axis`, each about `block_points` points."""
    axis = split_axis(scenario)
    if axis is None:
        return [(0, 1)]
    length = scenario.window.axes()[axis].points
    per = max(1, scenario.window.size() // length)
    step = max(1, int(block_points) // per)
    return [(a, min(a + step, length)) for a in range(0, length, step)]


def block_scenario(scenario: Scenario, lo: int, hi: int) -> Scenario:
    """`scenario` with its window cut to indices ``lo:hi`` of :func:`split_axis`."""
    axis = split_axis(scenario)
    if axis is None:
        return scenario
    whole = scenario.window.axes()[axis]
    values = whole.values()
    part = AxisPart(float(values[lo]), float(values[hi - 1]), hi - lo,
                    whole.start, whole.stop, whole.points, lo)
    window = scenario.window
    if axis == window.cofeed:
        window = dataclasses.replace(window, cofeed_axis=part)
    else:
        window = dataclasses.replace(window, **{axis: part})
    return dataclasses.replace(scenario, window=window)


def solve_block(scenario: Scenario, lo: int, hi: int) -> xr.Dataset:
    """The sweep of one block (see :func:`block_scenario`); run by dask workers."""
    return sweep(block_scenario(scenario, lo, hi))


def _template(scenario: Scenario, first: xr.Dataset, axis: str | None) -> xr.Dataset:
    """The whole window's layout: `first`'s variables at the whole window's shape, as lazy
    dask arrays that are never computed (only their dtype and shape are used)."""
    import dask.array as da

    axes = window_axes(scenario)
    data_vars = {}
    for name, var in first.data_vars.items():
        shape = tuple(len(axes[d]) if d == axis else n for d, n in zip(var.dims, var.shape,
                                                                        strict=True))
        data_vars[name] = xr.Variable(var.dims, da.empty(shape, dtype=var.dtype, chunks=shape),
                                      var.attrs)
    coords = {name: c.variable for name, c in first.coords.items()}
    if axis is not None:
        coords[axis] = xr.Variable((axis,), axes[axis], first[axis].attrs)
    return xr.Dataset(data_vars, coords=coords, attrs=first.attrs)


def whole_attrs(scenario: Scenario, first: xr.Dataset, converged: int, n: int) -> dict:
    """The whole window's file attributes from the first block's: the scenario's own text
    and the converged share of all `n` points (`converged` of them)."""
    return dict(first.attrs, scenario=scenario.to_toml(), converged_fraction=converged / n)


def sweep_to_netcdf(
    scenario: Scenario,
    path: str | os.PathLike,
    *,
    workers: int | None = None,
    scheduler: str | None = None,
    block_points: int = BLOCK_POINTS,
    progress: Callable[[int, int], None] | None = None,
) -> dict:
    """Solve `scenario`'s window block by block and write it to the NetCDF file `path`.

    Parameters
    ----------
    scenario : Scenario
    path : path-like
        Target file (``.nc``), written atomically (thermo.io.atomic_target) by this process;
        workers need no access to it.
    workers, scheduler
        As for :func:`thermo.sweep.sweep` (neither: blocks are solved in this process).
    block_points : int
        Points per block [-].
    progress : callable, optional
        ``progress(points_done, points_total)`` after each block.

    Returns
    -------
    dict
        ``points``, ``sizes`` (dimension lengths of the file) and ``not_converged`` (count).
    """
    from thermo.io import atomic_target

    spans = blocks(scenario, block_points)
    n = scenario.window.size()
    axis = split_axis(scenario)
    with atomic_target(path) as tmp:
        writer = _Writer(scenario, tmp, axis, n)
        try:
            if workers is None and scheduler is None:
                for i, (lo, hi) in enumerate(spans):
                    writer.put(i, lo, hi, solve_block(scenario, lo, hi))
                    if progress is not None:
                        progress(writer.done, n)
            else:
                _distributed(scenario, spans, writer, workers, scheduler, progress, n)
        finally:
            writer.close()
    return {"points": n, "sizes": writer.sizes, "not_converged": n - writer.converged}


def _distributed(scenario, spans, writer, workers, scheduler, progress, n) -> None:
    """Blocks on dask.distributed: at most one more block submitted than there are worker
    threads, so finished blocks never pile up on the workers."""
    from dask.distributed import as_completed

    with dask_client(workers, scheduler) as client:
        slots = max(1, sum(client.nthreads().values())) + 1
        todo = list(enumerate(spans))
        which = {}

        def submit(seq):
            i, (lo, hi) = todo.pop(0)
            fut = client.submit(solve_block, scenario, lo, hi, pure=False)
            which[fut.key] = (i, lo, hi)
            seq.add(fut)

        running = as_completed([])
        for _ in range(min(slots, len(todo))):
            submit(running)
        for fut in running:
            i, lo, hi = which.pop(fut.key)
            ds = fut.result()
            fut.release()
            if todo:
                submit(running)
            writer.put(i, lo, hi, ds)
            del ds
            if progress is not None:
                progress(writer.done, n)


class _Writer:
    """Lays the file out from the first block that arrives and writes each block's region."""

    def __init__(self, scenario: Scenario, path: Path, axis: str | None, n: int):
        self.scenario, self.path, self.axis, self.n = scenario, Path(path), axis, n
        self.store = None
        self.first: xr.Dataset | None = None
        self.done = 0
        self.converged = 0
        self.sizes: dict[str, int] = {}

    def put(self, i: int, lo: int, hi: int, ds: xr.Dataset) -> None:
        """Write block `i` (indices ``lo:hi`` of the split axis)."""
        from xarray.backends import NetCDF4DataStore
        from xarray.backends.locks import NETCDFC_LOCK

        first_block = self.store is None
        if first_block:
            # This process's own lock: xarray would otherwise pick a dask.distributed lock
            # while a client is open, which is gone when the file is closed.
            self.store = NetCDF4DataStore.open(self.path, mode="w", format="NETCDF4",
                                               lock=NETCDFC_LOCK)
            template = _template(self.scenario, ds, self.axis)
            # Lays out every variable (as to_netcdf does) and writes the coordinates; the
            # data variables' dask arrays are left unwritten.
            template.dump_to_store(self.store, unlimited_dims=[GROWING_DIM]
                                   if GROWING_DIM in ds.dims else None)
            self.first = ds.drop_vars(list(ds.data_vars)).assign_attrs(ds.attrs)
            self.sizes = dict(template.sizes)
        nc = self.store.ds
        encoded, _ = self.store.encode(
            {k: v.variable for k, v in ds.data_vars.items()}, {})
        for name, var in encoded.items():
            if self.axis is None or self.axis in var.dims:
                region = tuple(slice(lo, hi) if d == self.axis else slice(0, s)
                               for d, s in zip(var.dims, var.shape, strict=True))
            elif first_block:  # the same in every block (no split axis among its dims)
                region = tuple(slice(0, s) for s in var.shape)
            else:
                continue
            nc.variables[name][region] = np.asarray(var.values)
        if GROWING_DIM in ds.dims:
            self.sizes[GROWING_DIM] = max(self.sizes.get(GROWING_DIM, 0),
                                          ds.sizes[GROWING_DIM])
        self.converged += int(ds["converged"].sum())
        self.done += math.prod(ds["converged"].shape)

    def close(self) -> None:
        """Write the whole window's attributes and close the file."""
        if self.store is None:
            return
        if self.done == self.n:
            attrs = whole_attrs(self.scenario, self.first, self.converged, self.n)
            nc = self.store.ds
            for k in list(nc.ncattrs()):
                nc.delncattr(k)
            self.store.set_attributes(self.store.encode({}, attrs)[1])
        self.store.close()
        self.store = None
