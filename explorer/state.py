"""Session state of the explorer: the scenario, its solved window, and what the user picked.

No widgets here: views watch these parameters. Thermodynamics is only ever called through
:mod:`thermo` (a cached sweep, or :func:`thermo.point` for a selected point).
"""

from __future__ import annotations

import dataclasses
import threading

import numpy as np
import param
import xarray as xr

import thermo
from explorer.facts import SharedFacts
from explorer.maps import VARIABLES, scenario_markers
from thermo.edges import DEFAULT_OBJECTIVE, OBJECTIVES, default_objective
from thermo.errors import InputError
from thermo.scenario import Scenario
from thermo.sweep import SweepCache

#: Most grid points one app session solves: about 4 s and 0.3 GB on the project's 2-core
#: machine; larger windows belong to `explorer grid` (a shared server must not be stalled
#: by one user's 2-million-point file).
APP_MAX_POINTS = 300_000


def check_window_size(sc: Scenario, where: str = "the app") -> Scenario:
    """Refuse a window too large for an interactive session or a review file (`where`),
    with what to do instead: the whole window lives in one process there, while
    `explorer grid` writes it block by block."""
    n = sc.window.size()
    if n > APP_MAX_POINTS:
        raise InputError("window", f"{n:,} points",
                         f"at most {APP_MAX_POINTS:,} points in {where}; solve larger windows "
                         "with 'explorer grid' and study the NetCDF file")
    return sc


#: One cache per server process: sessions share solved windows by scenario content, so the
#: demo is solved once however many people open it (a content key cannot mix scenarios).
#: Eight windows of at most APP_MAX_POINTS (about 0.1 GB each) bound it near 1 GB.
SHARED_CACHE = SweepCache(maxsize=8)

#: What sessions share beyond the solved window: the feasible window of each set of limits,
#: the design point, its margins and the best points (explorer.facts).
FACTS = SharedFacts(SHARED_CACHE)


class ExplorerState(param.Parameterized):
    """Everything one explorer session shows, without any widget."""

    scenario = param.ClassSelector(class_=Scenario, doc="the scenario being studied")
    dataset = param.ClassSelector(class_=xr.Dataset, allow_None=True,
                                  doc="solved window of the scenario (None while solving)")
    mode = param.Selector(default="pressure", objects=["pressure", "steam_to_carbon"],
                          doc="y axis of the maps")
    fixed = param.Dict(default={}, doc="index of each axis held fixed on the maps")
    units = param.Selector(default="metric", objects=["metric", "us"],
                           doc="display unit system (explorer.display); the core stays SI")
    left = param.Selector(default="h2_yield", objects=list(VARIABLES))
    right = param.Selector(default="methane_slip_dry", objects=list(VARIABLES))
    selected = param.Dict(default=None, allow_None=True,
                          doc="coordinates of the selected grid point (SI)")
    pinned = param.List(default=[], doc="to_dict() of pinned points")
    busy = param.Boolean(default=False)
    progress = param.Number(default=0.0, bounds=(0.0, 1.0))
    status = param.String(default="")
    notes = param.String(default="")
    proposal = param.ClassSelector(class_=Scenario, allow_None=True, default=None,
                                   doc="a proposal compared with the scenario (its window)")
    proposal_dataset = param.ClassSelector(class_=xr.Dataset, allow_None=True,
                                           doc="the proposal solved on the scenario's window")
    difference = param.ClassSelector(class_=xr.Dataset, allow_None=True,
                                     doc="proposal minus scenario, point by point")
    compare_status = param.String(default="")
    objective = param.Selector(default=DEFAULT_OBJECTIVE, objects=list(OBJECTIVES),
                               doc="what the best point makes best (thermo.edges.OBJECTIVES)")
    best_version = param.Integer(default=0, doc="changes when a best point is published")
    chosen = param.Event(doc="a user chose a point (a click on a map, a typed point), even "
                             "the one already selected: the page opens the balance")
    typed = param.Boolean(default=False,
                          doc="the selected point was typed (exact), not clicked (grid node)")

    def __init__(self, scenario: Scenario, **params):
        if scenario.plant is not None:
            # The figure the decision rests on comes first for a plant scenario, and it is
            # what the best point makes best.
            params.setdefault("right", "specific_energy")
            params.setdefault("objective", "specific_energy")
        params.setdefault("units", getattr(scenario, "display_units", "metric"))
        super().__init__(scenario=scenario, notes=scenario.notes, **params)
        self._done = 0
        self._total = 1
        self._thread: threading.Thread | None = None
        self._pending: tuple | None = None
        self._cmp_thread: threading.Thread | None = None
        self._cmp_pending: tuple | None = None
        # Each set_proposal call is one generation; only the newest one's result is kept.
        self._cmp_generation = 0
        self._cmp_lock = threading.Lock()
        #: Called whenever work for poll() starts (the served page starts polling then).
        self.wake = lambda: None
        self._dataset_key = None
        #: Find the best point in a worker thread (served app) instead of in the caller.
        self.background_best = False
        #: The best point being found in the background (explorer.facts), until published.
        self._best_future = None
        self._best_attempt = self._best_failed = None

    # -- solving -----------------------------------------------------------------------
    def solve_now(self) -> None:
        """Solve the current scenario in this thread (notebook use, tests)."""
        self._adopt(self.scenario, FACTS.window(self.scenario))

    def solve_in_background(self) -> None:
        """Start solving the scenario in a worker thread; :meth:`poll` publishes progress."""
        if self._thread is not None and self._thread.is_alive():
            return
        sc = self.scenario
        self.busy = True
        self.progress = 0.0
        self._done, self._total = 0, sc.window.size()
        from thermo import equilibrium as eq

        if eq.build_in_progress():
            self.status = (f"Solving {self._total:,} points with the interpreted kernel while "
                           "the compiled one is built for this machine (first run only) ...")
        elif not (eq.kernel_is_loaded() or eq.kernel_is_cached()):
            self.status = ("Building the equilibrium kernel for this machine (first run only, "
                           "about 20-40 s; cached afterwards), then solving "
                           f"{self._total:,} points ...")
        else:
            self.status = f"Solving {self._total:,} points ..."

        def work():
            try:
                ds = FACTS.window(sc, progress=self._on_progress)
                self._pending = ("ok", sc, ds)
            except Exception as err:  # reported to the user by poll()
                self._pending = ("error", sc, err)

        if FACTS.has_window(sc):
            work()  # solved already (another session, or earlier): no worker thread
        else:
            self._thread = threading.Thread(target=work, daemon=True)
            self._thread.start()
        self.wake()

    def working(self) -> bool:
        """Whether poll() still has something to publish (a solve or a comparison)."""
        return (self.busy or self._pending is not None or self._cmp_pending is not None
                or (self._cmp_thread is not None and self._cmp_thread.is_alive())
                or self._best_future is not None)

    def _on_progress(self, done: int, total: int) -> None:
        self._done, self._total = done, total

    def poll(self) -> bool:
        """Publish progress and, when the worker is done, its result. True once finished."""
        self._poll_proposal()
        self._poll_best()
        if self._pending is None:
            if self.busy:
                self.progress = min(1.0, self._done / max(self._total, 1))
            return False
        kind, sc, payload = self._pending
        self._pending = None
        if SHARED_CACHE.key(sc) != SHARED_CACHE.key(self.scenario):
            # The scenario changed numbers while this solve ran: solve the current one.
            self._thread = None
            self.solve_in_background()
            return False
        self.busy = False
        self.progress = 1.0
        if kind == "error":
            self.status = f"Solving failed: {payload}. The previous maps are kept."
            return True
        # Same numbers; notes, title or limits may have changed meanwhile: adopt with the
        # current scenario's text and feasible window (shared by every session).
        if self.scenario.limits == sc.limits:
            payload.attrs = dict(payload.attrs, title=self.scenario.title,
                                 scenario=self.scenario.to_toml())
            self._adopt(self.scenario, payload)
        else:
            self._adopt(self.scenario, FACTS.window(self.scenario))
        return True

    def _adopt(self, sc: Scenario, ds: xr.Dataset) -> None:
        dims = [d for d in ds["h2_yield"].dims if d != "temperature"]
        fixed = {}
        for d in dims:
            vals = ds[d].values
            if d == "steam_to_carbon":
                target = sc.feed.steam_to_carbon
            elif d == "pressure":
                target = sc.pressure
            else:
                target = getattr(sc.feed, d)
            fixed[d] = int(np.argmin(np.abs(vals - target)))
        bad = int((~ds["converged"]).sum())
        self._dataset_key = SHARED_CACHE.key(sc)
        self.param.update(dataset=ds, fixed=fixed)
        self.status = (f"{ds['converged'].size:,} points solved"
                       + (f"; {bad} did not converge and are marked infeasible" if bad else ""))
        if self.selected is None:
            self.select_index(self.design_index())

    # -- comparison -----------------------------------------------------------------------
    def set_proposal(self, proposal: Scenario | None, background: bool = True) -> None:
        """Compare a proposal with the scenario: solve it over the scenario's window.

        Raises
        ------
        InputError
            The proposal cannot run on the scenario's window (its approach).
        """
        if proposal is None:
            with self._cmp_lock:
                self._cmp_generation += 1
                self._cmp_pending = None
            self.param.update(proposal=None, proposal_dataset=None, difference=None,
                              compare_status="")
            return
        from thermo.compare import on_base_window

        moved = check_window_size(on_base_window(self.scenario, proposal))
        with self._cmp_lock:
            self._cmp_generation += 1
            generation = self._cmp_generation
            self._cmp_pending = None
        self.param.update(proposal=moved, proposal_dataset=None, difference=None,
                          compare_status=f"Solving the proposal {moved.title!r} over this "
                                         f"window ({moved.window.size():,} points) ...")

        def deliver(result: tuple) -> None:
            # A superseded request's late result must not replace the current one.
            with self._cmp_lock:
                if generation == self._cmp_generation:
                    self._cmp_pending = result

        if not background:
            deliver(("ok", moved, SHARED_CACHE.get(moved)))
            self._poll_proposal()
            return

        def work():
            try:
                deliver(("ok", moved, SHARED_CACHE.get(moved)))
            except Exception as err:  # reported to the user by _poll_proposal()
                deliver(("error", moved, err))

        self._cmp_thread = threading.Thread(target=work, daemon=True)
        self._cmp_thread.start()
        self.wake()

    def _poll_proposal(self) -> None:
        with self._cmp_lock:
            pending = self._cmp_pending
        if pending is None:
            return
        kind, moved, payload = pending
        if kind == "error":
            with self._cmp_lock:
                self._cmp_pending = None
            self.compare_status = f"Solving the proposal failed: {payload}"
            return
        if self.dataset is None or self.busy:
            return  # adopt once the base window is solved too
        with self._cmp_lock:
            if self._cmp_pending is not pending:
                return  # superseded meanwhile
            self._cmp_pending = None
        from thermo.compare import difference

        try:
            diff = difference(self.dataset, payload)
        except InputError as err:
            self.compare_status = f"Not compared: {err}"
            return
        self.param.update(proposal_dataset=payload, difference=diff,
                          compare_status=f"Proposal {moved.title!r} solved over this window.")

    def selected_proposal_point(self) -> thermo.PointResult | None:
        """The proposal's result at the selected grid node (None without a proposal)."""
        if self.proposal is None or self.selected is None:
            return None
        return thermo.point(self.proposal, **self._point_kwargs())

    # -- scenario edits ------------------------------------------------------------------
    def set_scenario(self, sc: Scenario) -> None:
        """Adopt a new (validated) scenario; re-solve only when the numbers change."""
        same_numbers = SHARED_CACHE.key(sc) == SHARED_CACHE.key(self.scenario)
        if (sc.plant is None) != (self.scenario.plant is None):
            # A [plant] table comes or goes: the best point follows its default objective.
            self.objective = default_objective(sc)
        self.scenario = sc.with_notes(self.notes) if self.notes != sc.notes else sc
        if same_numbers and self.dataset is not None:
            self.dataset = FACTS.window(self.scenario)
            return
        self.selected = None
        self.pinned = []
        self.solve_in_background()
        if self.proposal is not None:
            # The proposal follows the scenario's window.
            try:
                self.set_proposal(self.proposal)
            except InputError as err:
                self.set_proposal(None)
                self.compare_status = f"Comparison dropped: {err}"

    @param.depends("notes", watch=True)
    def _notes_into_scenario(self) -> None:
        if self.scenario.notes != self.notes:
            self.scenario = self.scenario.with_notes(self.notes)

    # -- selection ------------------------------------------------------------------------
    def design_index(self) -> dict[str, int]:
        """Grid indexes nearest the scenario's design point."""
        ds, sc = self.dataset, self.scenario
        idx = {"temperature": int(np.argmin(np.abs(ds.temperature.values - sc.temperature)))}
        idx.update(self.fixed)
        return idx

    def select_index(self, idx: dict[str, int]) -> None:
        """Select the grid node with these indexes (all window dims)."""
        ds = self.dataset
        self.typed = False
        self.selected = {d: float(ds[d].values[i]) for d, i in idx.items()}

    def select_display(self, x_degC: float, y: float) -> None:
        """Select the grid node nearest a click at (x, y in the display units of
        :attr:`units`: degC or degF; bar abs, psia or S/C)."""
        from explorer import display

        ds = self.dataset
        T = display.to_display(ds.temperature.values, "temperature", self.units)
        Y = ds[self.mode].values
        if self.mode == "pressure":
            Y = display.to_display(Y, "pressure", self.units)
        span_t = (T.max() - T.min()) or 1.0
        span_y = (Y.max() - Y.min()) or 1.0
        i = int(np.argmin(np.abs((T - x_degC) / span_t)))
        j = int(np.argmin(np.abs((Y - y) / span_y)))
        idx = dict(self.fixed)
        idx["temperature"] = i
        idx[self.mode] = j
        self.select_index(idx)
        self.param.trigger("chosen")

    def design_point(self) -> thermo.PointResult:
        """The core's result at the scenario's design point, exactly where it is (never
        snapped to the grid); shared by every session (explorer.facts)."""
        return FACTS.design_point(self.scenario)

    def best_point(self):
        """thermo.best_point of the current objective over the solved window (None while
        solving, or while it is being found in the background); found once per scenario
        content, limits and objective for the whole server (explorer.facts)."""
        if self.dataset is None or self._dataset_key != SHARED_CACHE.key(self.scenario):
            return None  # the dataset is of other numbers (a new scenario is solving)
        sc, objective = self.scenario, self.objective
        known = FACTS.known_best_point(sc, objective)
        if known is not None or not self.background_best:
            return known if known is not None else FACTS.best_point(sc, objective)
        attempt = (SHARED_CACHE.key(sc), sc.limits, objective)
        if self._best_failed == attempt:
            return None  # failed for these numbers: said once in the status, not retried
        fut = FACTS.best_point_later(sc, objective)
        if fut.done():
            if fut.exception() is None:
                return fut.result()
            self._best_failed = attempt
            self.status = f"Finding the best point failed: {fut.exception()}"
            return None
        self._best_future, self._best_attempt = fut, attempt
        self.wake()  # the served page polls while the best point is being found
        return None

    def _poll_best(self) -> None:
        """Publish a best point found in the background (``best_version`` changes)."""
        fut = self._best_future
        if fut is None or not fut.done():
            return
        self._best_future = None
        err = fut.exception()
        if err is not None:
            self._best_failed = self._best_attempt
            self.status = f"Finding the best point failed: {err}"
        self.best_version += 1

    def design_margins(self):
        """thermo.margins at the exact design point (shared, explorer.facts)."""
        return FACTS.margins(self.scenario)

    def markers(self) -> dict:
        """The best and design points for the maps (explorer.maps.marker_layers)."""
        return scenario_markers(self.scenario, self.best_point())

    def select_exact(self, temperature, pressure, steam_to_carbon, **cofeeds) -> None:
        """Select a typed point, exactly where it is (quantities as for thermo.point).

        Raises
        ------
        InputError
            A value the core refuses, naming the field.
        """
        pt = thermo.point(self.scenario, temperature=temperature, pressure=pressure,
                          steam_to_carbon=steam_to_carbon, **cofeeds)
        sel = {"temperature": pt.temperature, "pressure": pt.pressure,
               "steam_to_carbon": pt.steam_to_carbon}
        for d in ("oxygen_to_carbon", "co2_to_carbon"):
            if self.dataset is not None and d in self.dataset.dims:
                sel[d] = getattr(pt, d)
        self.typed = True
        self.selected = sel
        self.param.trigger("chosen")

    def design_in_window(self) -> list[str]:
        """What of the design point lies outside the window, in words (empty if inside)."""
        from explorer.limits_report import design_outside

        return design_outside(self.scenario)

    def selected_point(self) -> thermo.PointResult | None:
        """The core's result at the selected grid node (same numbers as the grid)."""
        if self.selected is None or self.dataset is None:
            return None
        return thermo.point(self.scenario, **self._point_kwargs())

    def _point_kwargs(self) -> dict:
        s = self.selected
        kwargs = {
            "temperature": f"{s['temperature']!r} K",
            "pressure": f"{s['pressure']!r} Pa",
            "steam_to_carbon": s["steam_to_carbon"],
        }
        for d in ("oxygen_to_carbon", "co2_to_carbon"):
            if d in s:
                kwargs[d] = s[d]
        return kwargs

    def pin(self) -> None:
        """Add the selected point to the comparison list."""
        pt = self.selected_point()
        if pt is not None:
            self.pinned = self.pinned + [pt.to_dict()]

    def clear_pins(self) -> None:
        self.pinned = []

    def scenario_with_notes(self) -> Scenario:
        """The scenario as it should be saved (notes included)."""
        return dataclasses.replace(self.scenario) if self.scenario.notes == self.notes else \
            self.scenario.with_notes(self.notes)
