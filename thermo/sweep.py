"""The equilibrium over a whole operating window, as one self-describing xarray.Dataset.

``sweep(scenario)`` flattens the window (temperature x pressure x steam-to-carbon, and an
optional co-feed axis) into points, solves them in chunks with the same balance function as
:func:`thermo.point` (so grid values equal point results), and reshapes the results onto the
window. Chunks run in this process, or on dask.distributed workers: local processes
(``workers=N``) or an existing cluster (``scheduler="tcp://host:port"``).

Dataset contract (this project's; stated here): coordinates ``temperature`` [K], ``pressure`` [Pa],
``steam_to_carbon`` [-], optionally ``oxygen_to_carbon`` or ``co2_to_carbon`` [-], and
``species``; every variable has ``units`` and ``long_name``; attributes hold the scenario text,
the data sources and the software version.
"""

from __future__ import annotations

import contextlib
import dataclasses
import math
import os
import threading
import tomllib
from collections import OrderedDict
from collections.abc import Callable
from datetime import UTC, datetime
from importlib import resources

import numpy as np
import xarray as xr

from thermo import carbon
from thermo.balances import enthalpy_flow
from thermo.constants import P_REF
from thermo.scenario import Limits, Scenario
from thermo.species import GAS_SPECIES
from thermo.train import train_balance

#: Version of the Dataset layout; io.load refuses files of another version.
SCHEMA_VERSION = "4"
#: Points solved per chunk (memory stays near 200 MB per chunk in flight).
CHUNK_POINTS = 65_536

RATIO_AXES = ("steam_to_carbon", "oxygen_to_carbon", "co2_to_carbon")

# name: (units, long_name)
_VARIABLES: dict[str, tuple[str, str]] = {
    "mole_fraction": ("1", "outlet mole fraction, wet basis"),
    "mole_fraction_dry": ("1", "outlet mole fraction, dry basis (water removed)"),
    "outlet_flow": ("mol s-1", "outlet molar flow"),
    "inlet_flow": ("mol s-1", "inlet molar flow of the mixed feed"),
    "carbon_deposit": ("mol s-1", "graphite formed at equilibrium"),
    "carbon_activity": ("1", "carbon activity of the gas, graphite reference"),
    "h2_yield": ("1", "H2 out per hydrocarbon carbon fed (mol per mol)"),
    "h2_potential": ("1", "H2 + CO out per hydrocarbon carbon fed (mol per mol)"),
    "methane_slip_dry": ("1", "methane slip, dry-basis CH4 mole fraction"),
    "methane_conversion": ("1", "methane conversion, hydrocarbon-carbon basis"),
    "h2_co_ratio": ("1", "H2/CO in the outlet (mol per mol; inf where no CO)"),
    "duty": ("W", "heat supplied from feed at inlet temperature to outlet at T"),
    "duty_per_h2": ("J mol-1", "duty per mol H2 in the outlet"),
    "extent_reforming": ("mol s-1", "carbon oxides formed (reforming extent)"),
    "extent_shift": ("mol s-1", "CO2 formed (shift extent)"),
    "Q_reforming": ("1", "reaction quotient of CH4 + H2O = CO + 3 H2, 1 bar basis"),
    "K_reforming": ("1", "equilibrium constant of CH4 + H2O = CO + 3 H2 at T, 1 bar basis"),
    "approach_reforming": ("K", "T minus the temperature where K of reforming equals its Q"),
    "approach_shift": ("K", "temperature where K of shift equals its Q, minus T"),
    "h2_product": ("1", "H2 after the last stage of the train per hydrocarbon carbon fed "
                   "(mol per mol)"),
    "train_duty": ("W", "heat supplied to the train: primary reformer duty plus reheat of "
                   "pre-reformed gas (every positive heat of the train)"),
    "train_heat_removed": ("W", "heat removed by the coolers and shift stages (every negative "
                           "heat of the train)"),
    "train_methane_slip_dry": ("1", "methane slip after the last reforming stage, dry basis"),
    "train_carbon_deposit": ("mol s-1", "graphite formed in all reforming stages"),
    "product_flow": ("mol s-1", "gas after the last stage of the train"),
    "prereformer_temperature": ("K", "adiabatic pre-reformer outlet temperature"),
    "secondary_temperature": ("K", "adiabatic secondary reformer outlet temperature"),
    **carbon.VARIABLES,
    "converged": ("1", "equilibrium solver converged (every stage of the train)"),
    "feed_enthalpy": ("W", "enthalpy flow of the mixed feed at its inlet temperature, "
                      "formation enthalpies included"),
    "iterations": ("1", "equilibrium solver iterations"),
}

#: Plant variables (with a [plant] table only; thermo.plant): Dataset name -> (PlantResult
#: attribute, units, long_name). Absent, not zero, without [plant].
PLANT_VARIABLES: dict[str, tuple[str, str, str]] = {
    "plant_h2_product": ("h2_product", "mol s-1", "H2 product of the purification unit"),
    "plant_tail_gas_lhv": ("tail_gas_lhv", "W", "tail gas to the furnace, LHV"),
    "plant_fired_duty": ("fired_duty", "W", "furnace fired duty, LHV (tail gas + trim)"),
    "plant_trim_fuel": ("trim_fuel", "W", "trim natural gas to the furnace, LHV"),
    "plant_trim_fuel_flow": ("trim_fuel_flow", "mol s-1", "trim natural gas to the furnace"),
    "plant_tail_gas_excess": ("tail_gas_excess", "W", "heat of tail gas beyond the furnace's "
                              "need (0 where trim gas burns)"),
    "radiant_efficiency": ("radiant_efficiency", "1", "radiant duty over fired duty (LHV)"),
    "plant_feed_lhv": ("feed_lhv", "W", "natural gas fed to the process, LHV"),
    "plant_air_preheat": ("air_preheat", "W", "combustion air preheat (convection section)"),
    "plant_feed_preheat": ("feed_preheat", "W", "mixed feed (and oxidant) preheat "
                           "(convection section)"),
    "plant_reheat": ("reheat", "W", "reheat of pre-reformed gas (convection section)"),
    "plant_convection_heat": ("convection_heat", "W", "flue gas heat, bridgewall to stack"),
    "plant_flue_steam_heat": ("flue_steam_heat", "W", "flue gas heat left for steam "
                              "(negative: convection section short)"),
    "plant_process_gas_heat": ("process_gas_heat", "W", "process gas heat recovered, "
                               "reformer outlet to the cooled temperature"),
    "process_gas_dew_point": ("process_gas_dew_point", "K", "water dew point of the process "
                              "gas after the last stage (IAPWS-IF97)"),
    "plant_steam_raised": ("steam_raised", "kg s-1", "steam raised (flue and process gas)"),
    "plant_process_steam": ("process_steam", "kg s-1", "process steam to the mixed feed"),
    "plant_steam_export": ("steam_export", "kg s-1", "steam export (raised - process; "
                           "negative: import)"),
    "specific_energy": ("specific_energy", "J mol-1", "net specific energy: (feed + trim "
                        "fuel LHV - steam export x steam value) per mol H2 product"),
    "natural_gas_per_h2": ("natural_gas_per_h2", "1", "natural gas (feed + trim fuel) per "
                           "H2 product (mol per mol)"),
    "steam_export_per_h2": ("steam_export_per_h2", "kg mol-1", "steam export per mol H2 "
                            "product"),
    "plant_bridgewall_temperature": ("bridgewall_temperature", "K", "flue gas leaving the "
                                     "radiant box (an assumption)"),
    "plant_steam_value": ("steam_value", "J kg-1", "fuel LHV one kg of exported steam saves "
                          "(an assumption)"),
}
#: Plant variables that are constants of a scenario: 0-d in the Dataset.
PLANT_CONSTANTS = ("plant_bridgewall_temperature", "plant_steam_value")

#: Each stage of a reforming train (with a train only; dims window + ``stage``, with
#: ``species`` for the flow): Dataset name -> (StageResult attribute, units, long_name).
#: The ``stage`` coordinate holds the stage names in train order (thermo.scenario.STAGE_NAMES).
STAGE_VARIABLES: dict[str, tuple[str, str, str]] = {
    "stage_outlet_flow": ("outlet_flow", "mol s-1", "gas leaving each stage of the train"),
    "stage_inlet_temperature": ("inlet_temperature", "K", "gas entering each stage, after "
                                "any reheat or cooling before it"),
    "stage_temperature": ("temperature", "K", "outlet temperature of each stage"),
    "stage_equilibrium_temperature": ("equilibrium_temperature", "K", "temperature of each "
                                      "stage's equilibrium composition (approach applied)"),
    "stage_heat_before": ("heat_before", "W", "heat given to the gas before each stage "
                          "(reheat > 0, cooling < 0)"),
    "stage_duty": ("duty", "W", "heat supplied to each stage (outlet minus inlet enthalpy)"),
    "stage_inlet_enthalpy": ("inlet_enthalpy", "W", "enthalpy flow entering each stage, "
                             "formation enthalpies included"),
    "stage_outlet_enthalpy": ("outlet_enthalpy", "W", "enthalpy flow leaving each stage, "
                              "formation enthalpies included"),
    "stage_carbon_deposit": ("carbon_deposit", "mol s-1", "graphite formed in each stage"),
    "stage_converged": ("converged", "1", "each stage's equilibrium was found"),
}

#: Scalar (per point) variables taken from a Balance.
_SCALARS = ("carbon_deposit", "carbon_activity", "h2_yield", "h2_potential",
            "methane_slip_dry", "methane_conversion", "h2_co_ratio", "duty",
            "extent_reforming", "extent_shift", "Q_reforming", "K_reforming",
            "approach_reforming", "approach_shift", "converged", "iterations")
_PER_SPECIES = ("mole_fraction", "mole_fraction_dry", "outlet_flow", "product_flow")


def window_axes(scenario: Scenario) -> dict[str, np.ndarray]:
    """The window's coordinate values by dimension name, in dataset order (SI)."""
    return {name: axis.values() for name, axis in scenario.window.axes().items()}


def _inlet_by_ratio(scenario: Scenario, axes: dict[str, np.ndarray]) -> np.ndarray:
    """Inlet flows over the ratio axes, shape (ratio dims..., S) [mol s-1]."""
    ratio_dims = [d for d in axes if d in RATIO_AXES]
    grids = np.meshgrid(*[axes[d] for d in ratio_dims], indexing="ij")
    kwargs = dict(zip(ratio_dims, grids, strict=True))
    flows = scenario.feed.inlet_flows(**kwargs)  # (S, ratio dims...)
    return np.moveaxis(flows, 0, -1)


def solve_chunk(scenario: Scenario, start: int, stop: int,
                with_potentials: bool = False) -> dict[str, np.ndarray]:
    """Solve flat window points ``start:stop`` (C order over the window dims).

    Returns a dict of arrays over those points: the per-point and per-species variables
    (and, with `with_potentials`, the primary's element potentials under
    :data:`PRIMARY_POTENTIALS`, which the caller pops before :func:`assemble`). Public so
    dask workers can run it; it depends only on its arguments. Along the last window axis
    each point starts from its neighbour's answer (rows of that axis; `start` should be a
    multiple of its length, which :func:`sweep` ensures).
    """
    axes = window_axes(scenario)
    shape = tuple(len(v) for v in axes.values())
    idx = np.unravel_index(np.arange(start, stop), shape)
    names = list(axes)
    T = axes["temperature"][idx[names.index("temperature")]]
    P = axes["pressure"][idx[names.index("pressure")]]
    inlet = _inlet_by_ratio(scenario, axes)
    ratio_idx = tuple(idx[names.index(d)] for d in names if d in RATIO_AXES)
    n_in = inlet[ratio_idx]
    row = shape[-1] if start % shape[-1] == 0 else 1
    return train_results(scenario, n_in, T, P, row=row, with_potentials=with_potentials)


def train_results(scenario: Scenario, n_in, T, P, row: int = 1,
                  secondary_guess=None, *, warm_start=None,
                  with_potentials: bool = False) -> dict[str, np.ndarray]:
    """The Dataset's per-point variables at N points of a scenario (its feed temperature,
    approach and train), flat arrays over the points; :func:`thermo.point` uses the same.
    `secondary_guess`: first estimates of the secondary reformer's outlet [K]
    (:func:`thermo.train.train_balance`). `warm_start` (N, E): element potentials to start
    the primary's equilibrium from (nearby solved points, NaN rows none; the outlet is the
    same to the solver's tolerance). With `with_potentials` the primary's converged
    potentials come back under :data:`PRIMARY_POTENTIALS` (not a Dataset variable: the
    caller pops it)."""
    tr = train_balance(scenario.train, n_in, T, P, scenario.feed.inlet_temperature,
                       scenario.approach, row=row, secondary_guess=secondary_guess,
                       warm_start=warm_start)
    bal = tr.primary
    out = {k: getattr(bal, k) for k in _SCALARS + _PER_SPECIES if k != "product_flow"}
    if with_potentials:
        out[PRIMARY_POTENTIALS] = bal.element_potentials
    h2 = bal.outlet_flow[:, GAS_SPECIES.index("H2")]
    with np.errstate(divide="ignore", invalid="ignore"):
        out["duty_per_h2"] = np.where(h2 > 0, bal.duty / h2, np.nan)
    out["converged"] = tr.converged
    out["h2_product"] = tr.h2_product
    out["train_duty"] = tr.heat_supplied
    out["train_heat_removed"] = tr.heat_removed
    out["train_methane_slip_dry"] = tr.methane_slip_dry
    out["train_carbon_deposit"] = tr.carbon_deposit
    out["product_flow"] = tr.product_flow
    for name, key in (("pre_reformer", "prereformer_temperature"),
                      ("secondary_reformer", "secondary_temperature")):
        st = tr.stage(name)
        if st is not None:
            out[key] = st.temperature
    for k, v in carbon.local_terms(tr, T, P, scenario.approach, scenario.carbon).items():
        out[_CARBON_LOCAL + k] = v
    if scenario.plant is not None:
        out.update(plant_results(scenario, tr, P))
    if not scenario.train.empty:
        for k, (attr, _, _) in STAGE_VARIABLES.items():
            out[k] = np.stack([getattr(st, attr) for st in tr.stages], axis=1)
    return out


#: Key of the primary's element potentials in :func:`train_results` (on request only).
PRIMARY_POTENTIALS = "_primary_element_potentials"
#: Prefix of the carbon check's per-point parts in chunk results (not Dataset variables).
_CARBON_LOCAL = "_carbon_"


def plant_results(scenario: Scenario, tr, P) -> dict[str, np.ndarray]:
    """The :data:`PLANT_VARIABLES` of N points of a train (flat arrays; thermo.plant)."""
    from thermo.plant import plant_balance

    pr = plant_balance(scenario.plant, scenario, tr, P)
    return {k: getattr(pr, attr) for k, (attr, _, _) in PLANT_VARIABLES.items()}


def _chunks(n: int, size: int) -> list[tuple[int, int]]:
    return [(a, min(a + size, n)) for a in range(0, n, size)]


def _sources(plant: bool = False) -> str:
    text = resources.files("thermo").joinpath("data/references.toml").read_text("utf-8")
    refs = tomllib.loads(text)
    keys = ("GRI30", "TM4513", "IUPAC2021", "CODATA2018") + (("IAPWS-IF97",) if plant else ())
    return "; ".join(f"[{k}] {v['citation']}" for k, v in refs.items() if k in keys)


#: What each review limit is checked on: the train's figures (slip after the last reforming
#: stage, H2 after the last stage, graphite in any reforming stage; with no stages around the
#: primary reformer they equal the primary's own), and the primary's radiant duty, which the
#: furnace's firing limits (a pre-reformed gas's reheat is convection-section heat, as the
#: feed preheat is).
LIMIT_VARIABLES = {
    "max_methane_slip_dry": "train_methane_slip_dry",
    "min_h2_yield": "h2_product",
    "max_duty": "duty",
    "carbon_free": "carbon_free",
    "max_fired_duty": "plant_fired_duty",
}


def feasible_mask(ds: xr.Dataset, limits) -> xr.DataArray:
    """Points meeting every review limit of `limits` (a thermo.scenario.Limits), checked on
    the variables of :data:`LIMIT_VARIABLES`."""
    v = LIMIT_VARIABLES
    conv = ds["converged"]
    checks = []
    if limits.max_methane_slip_dry is not None:
        checks.append((v["max_methane_slip_dry"], np.less_equal, limits.max_methane_slip_dry))
    if limits.carbon_free:
        checks.append((v["carbon_free"], lambda a, _limit: np.asarray(a, dtype=bool), None))
    if limits.min_h2_yield is not None:
        checks.append((v["min_h2_yield"], np.greater_equal, limits.min_h2_yield))
    if limits.max_duty is not None:
        checks.append((v["max_duty"], np.less_equal, limits.max_duty))
    if getattr(limits, "max_fired_duty", None) is not None and v["max_fired_duty"] in ds:
        checks.append((v["max_fired_duty"], np.less_equal, limits.max_fired_duty))
    if all(set(ds[name].dims) == set(conv.dims) for name, _, _ in checks):
        # On the numpy arrays where every variable has the same dims (as in a sweep):
        # xarray's aligned operators cost more than the comparisons themselves.
        ok = conv.values.astype(bool)
        with np.errstate(invalid="ignore"):
            for name, op, limit in checks:
                ok = ok & op(ds[name].transpose(*conv.dims).values, limit)
        ok = xr.DataArray(ok, dims=conv.dims, coords=conv.coords)
    else:
        ok = conv.astype(bool)
        for name, op, limit in checks:
            ok = ok & op(ds[name], limit)
    ok.attrs = {"units": "1", "long_name": "all review limits met"}
    return ok


def apply_limits(scenario: Scenario, ds: xr.Dataset) -> xr.Dataset:
    """`ds` (a sweep of `scenario`'s numbers) with the feasible window of `scenario`'s
    limits: the grid mask ``feasible`` and the exact intervals of thermo.edges.with_edges
    (``feasible_t_low`` / ``feasible_t_high``)."""
    from thermo.edges import with_edges

    ds = ds.copy()
    ds["feasible"] = feasible_mask(ds, scenario.limits)
    return with_edges(scenario, ds)


def sweep(
    scenario: Scenario,
    *,
    workers: int | None = None,
    scheduler: str | None = None,
    chunk_points: int = CHUNK_POINTS,
    progress: Callable[[int, int], None] | None = None,
) -> xr.Dataset:
    """Equilibrium and balance over the scenario's whole window.

    Parameters
    ----------
    scenario : Scenario
        Feed, approach and window (thermo.load_scenario, Scenario.with_window).
    workers : int, optional
        Solve on a local dask.distributed cluster of this many worker processes.
    scheduler : str, optional
        Address of an existing dask.distributed scheduler (``"tcp://127.0.0.1:8786"``).
    chunk_points : int
        Points per chunk.
    progress : callable, optional
        Called as ``progress(points_done, points_total)`` after each chunk.

    Returns
    -------
    xarray.Dataset
        The Dataset contract (module docstring) plus ``feasible`` (all review limits met
        at the node) and the exact feasible temperature intervals of every row
        (:func:`apply_limits`).
    """
    axes = window_axes(scenario)
    shape = tuple(len(v) for v in axes.values())
    n = math.prod(shape)
    # Chunks hold whole rows of the last axis, so that results do not depend on chunking.
    row = shape[-1]
    chunks = _chunks(n, max(row, int(chunk_points) // row * row))
    if workers is not None or scheduler is not None:
        results = _solve_distributed(scenario, chunks, workers, scheduler, progress, n)
    else:
        results = []
        done = 0
        for a, b in chunks:
            results.append(solve_chunk(scenario, a, b, True))
            done += b - a
            if progress is not None:
                progress(done, n)
    from thermo.edges import with_edges

    # The grid's element potentials start the exact edges' first points (thermo.edges).
    potentials = np.concatenate([r.pop(PRIMARY_POTENTIALS) for r in results])
    # assemble() already holds this scenario's grid mask: only the exact intervals remain
    # (apply_limits would copy the Dataset and compute the same mask again).
    return with_edges(scenario, assemble(scenario, results), node_potentials=potentials)


def worker_threads(workers: int, cores: int | None = None) -> int:
    """Solver threads for each of `workers` local worker processes: an equal share of the
    `cores` (this machine's, by default), at least one."""
    cores = cores if cores is not None else (os.cpu_count() or 1)
    return max(1, cores // max(1, workers))


@contextlib.contextmanager
def dask_client(workers: int | None, scheduler: str | None):
    """A dask.distributed client: of the cluster at `scheduler` (20 s to connect), or of
    `workers` local worker processes on loopback, closed on exit.

    Each local worker runs one dask task at a time, and its solver (numba's thread pool)
    gets an equal share of this machine's cores, :func:`worker_threads`: with the default
    of all cores in every worker, two workers on two cores ran 0.84-0.88x as fast as one
    (2026-12-03, tests/benchmarks/bench_scale.py).
    """
    from dask.distributed import Client, LocalCluster

    cluster = None
    if scheduler is not None:
        client = Client(scheduler, timeout="20s")
    else:
        cluster = LocalCluster(n_workers=int(workers), threads_per_worker=1, processes=True,
                               host="127.0.0.1", dashboard_address=None,
                               env={"NUMBA_NUM_THREADS": str(worker_threads(int(workers)))})
        client = Client(cluster)
    try:
        yield client
    finally:
        client.close()
        if cluster is not None:
            cluster.close()


def _solve_distributed(scenario, chunks, workers, scheduler, progress, n):
    from dask.distributed import as_completed

    with dask_client(workers, scheduler) as client:
        futures = [client.submit(solve_chunk, scenario, a, b, True, pure=False) for a, b in chunks]
        index = {f.key: i for i, f in enumerate(futures)}
        results: list = [None] * len(futures)
        done = 0
        for fut in as_completed(futures):
            i = index[fut.key]
            results[i] = fut.result()
            done += chunks[i][1] - chunks[i][0]
            if progress is not None:
                progress(done, n)
        return results


def assemble(scenario: Scenario, results: list[dict[str, np.ndarray]]) -> xr.Dataset:
    """Dataset from chunk results in window order (see :func:`solve_chunk`)."""
    axes = window_axes(scenario)
    dims = list(axes)
    shape = tuple(len(v) for v in axes.values())
    flat = {k: (np.concatenate([r[k] for r in results]) if len(results) > 1 else results[0][k])
            for k in results[0]}
    flat["converged"] = flat["converged"].astype(bool)
    local = {k[len(_CARBON_LOCAL):]: flat.pop(k) for k in list(flat)
             if k.startswith(_CARBON_LOCAL)}
    flat.update(carbon.window_check(scenario, local, axes))
    # Each variable's attrs go in with its data (dims, values, attrs): no DataArray is built
    # per variable to set them afterwards.
    attrs = {k: {"units": u, "long_name": ln} for k, (u, ln) in _VARIABLES.items()}
    attrs.update({k: {"units": u, "long_name": ln}
                  for k, (_, u, ln) in {**PLANT_VARIABLES, **STAGE_VARIABLES}.items()})
    attrs["carbon_verdict_ln_activity"] = dict(attrs.get("carbon_verdict_ln_activity", {}),
                                               reference=scenario.carbon.reference)
    attrs["carbon_binding"] = dict(attrs.get("carbon_binding", {}),
                                   flag_values=np.arange(len(carbon.BINDING), dtype=np.int8),
                                   flag_meanings=" ".join(carbon.BINDING))
    data_vars = {}
    for k, v in flat.items():
        a = attrs.get(k, {})
        if k in PLANT_CONSTANTS:
            data_vars[k] = ((), v[0], a)
        elif k in _PER_SPECIES:
            data_vars[k] = (dims + ["species"], v.reshape(shape + (len(GAS_SPECIES),)), a)
        elif k in STAGE_VARIABLES:
            extra = ["stage"] + (["species"] if v.ndim == 3 else [])
            data_vars[k] = (dims + extra, v.reshape(shape + v.shape[1:]), a)
        else:
            data_vars[k] = (dims, v.reshape(shape), a)
    ratio_dims = [d for d in dims if d in RATIO_AXES]
    inlet = _inlet_by_ratio(scenario, axes)
    data_vars["inlet_flow"] = (ratio_dims + ["species"], inlet, attrs["inlet_flow"])
    flat_in = inlet.reshape(-1, len(GAS_SPECIES))
    h_feed = enthalpy_flow(flat_in, np.full(len(flat_in), scenario.feed.inlet_temperature))
    data_vars["feed_enthalpy"] = (ratio_dims, h_feed.reshape(inlet.shape[:-1]),
                                  attrs["feed_enthalpy"])
    coords = {d: axes[d] for d in dims}
    coords["species"] = np.array(GAS_SPECIES, dtype=object)
    if "stage_duty" in flat:
        coords["stage"] = np.array(scenario.train.stages(), dtype=object)
    ds = xr.Dataset(data_vars, coords=coords)
    coord_attrs = {
        "temperature": ("K", "reformer outlet temperature"),
        "pressure": ("Pa", "reformer outlet pressure, absolute"),
        "steam_to_carbon": ("1", "steam-to-carbon ratio, mol H2O per mol hydrocarbon carbon"),
        "oxygen_to_carbon": ("1", "O2 co-feed, mol O2 per mol hydrocarbon carbon"),
        "co2_to_carbon": ("1", "CO2 co-feed, mol CO2 per mol hydrocarbon carbon"),
        "species": ("1", "gas species"),
        "stage": ("1", "stage of the reforming train, in flow order"),
    }
    for d in list(dims) + ["species"] + (["stage"] if "stage" in ds.dims else []):
        u, ln = coord_attrs[d]
        ds[d].attrs = {"units": u, "long_name": ln}
    ds["feasible"] = feasible_mask(ds, scenario.limits)
    from thermo import __version__

    ds.attrs = {
        "title": scenario.title,
        "schema_version": SCHEMA_VERSION,
        "thermo_version": __version__,
        "scenario": scenario.to_toml(),
        "data_sources": _sources(scenario.plant is not None),
        "standard_pressure_Pa": P_REF,
        "approach_K": scenario.approach,
        "inlet_temperature_K": scenario.feed.inlet_temperature,
        "hydrocarbon_carbon_mol_per_s": scenario.feed.carbon_flow(),
        "model": "ideal gas + pure graphite, Gibbs energy minimization (element potentials); "
                 "composition at T - approach, enthalpy at T",
        "train": ", ".join(scenario.train.stages()),
        "created": datetime.now(UTC).isoformat(timespec="seconds"),
        "converged_fraction": float(ds["converged"].mean()),
    }
    return ds


class SweepCache:
    """Sweeps kept by scenario content, so one app session never computes one twice.

    The key is the scenario with its free text (title, description, notes) and its review
    limits blanked: those change no solved number. A hit returns the stored Dataset with the
    current scenario text and the feasible window of the current limits.
    """

    def __init__(self, maxsize: int = 8):
        self.maxsize = maxsize
        self._store: OrderedDict = OrderedDict()
        self._lock = threading.Lock()
        self.hits = 0
        self.misses = 0

    @staticmethod
    def key(scenario: Scenario):
        """Content key of a scenario (hashable)."""
        return dataclasses.replace(scenario, title="", description="", notes="",
                                   limits=Limits())

    def __contains__(self, scenario: Scenario) -> bool:
        with self._lock:
            return self.key(scenario) in self._store

    def get(self, scenario: Scenario, **kwargs) -> xr.Dataset:
        """The sweep of `scenario`, computed only on the first request (kwargs to sweep).

        Thread-safe; the solve itself runs outside the lock, so other sessions' hits are
        never held up by a long solve.
        """
        k = self.key(scenario)
        with self._lock:
            ds = self._store.get(k)
            if ds is not None:
                self._store.move_to_end(k)
                self.hits += 1
        fresh = ds is None
        if fresh:
            ds = sweep(scenario, **kwargs)
            with self._lock:
                self.misses += 1
                self._store[k] = ds
                while len(self._store) > self.maxsize:
                    self._store.popitem(last=False)
        ds = ds.copy()
        ds.attrs = dict(ds.attrs, title=scenario.title, scenario=scenario.to_toml())
        # A fresh sweep already carries this scenario's limits (grid mask and intervals).
        return ds if fresh else apply_limits(scenario, ds)
