"""What every session of one server process shares about a scenario: its solved window with
the feasible window of its limits, the design point, the design point's margins and the best
point of each objective.

Each is computed once per content and limits (:meth:`thermo.sweep.SweepCache.key` plus
:class:`thermo.scenario.Limits`, plus the objective for the best point), however many pages
ask, and a page that asks while another page's computation runs waits for that one instead of
starting its own. A warm page load then costs only its own widgets (issue of the review room:
under 0.5 s of server time per page). Best points, the slow fact (about 1-2 s), can also be
found in the background: one worker thread for the whole process, so that many new pages at
once cannot take every core.

Nothing here is a widget, and every value is read-only for its users: Datasets are handed out
as shallow copies with the asking session's title and scenario text in their attributes.
"""

from __future__ import annotations

import threading
from collections import OrderedDict
from collections.abc import Callable
from concurrent.futures import Future, ThreadPoolExecutor
from typing import Any

import xarray as xr

import thermo
from thermo.scenario import Scenario
from thermo.sweep import SweepCache


class _Store:
    """A bounded, thread-safe map from key to :class:`concurrent.futures.Future`.

    The first caller of a key computes it; the others wait for the same future. A failed
    computation is forgotten (the next caller tries again) and its error re-raised to every
    waiter.
    """

    def __init__(self, maxsize: int):
        self.maxsize = maxsize
        self._items: OrderedDict[Any, Future] = OrderedDict()
        self._lock = threading.Lock()
        self.computed = 0

    def _claim(self, key) -> tuple[Future, bool]:
        """The future of `key` and whether the caller must compute it."""
        with self._lock:
            fut = self._items.get(key)
            if fut is not None:
                self._items.move_to_end(key)
                return fut, False
            fut = Future()
            self._items[key] = fut
            while len(self._items) > self.maxsize:
                self._items.popitem(last=False)
            return fut, True

    def _run(self, key, fut: Future, compute: Callable[[], Any]) -> None:
        try:
            value = compute()
        except BaseException as err:
            with self._lock:
                if self._items.get(key) is fut:
                    del self._items[key]
            fut.set_exception(err)
            return
        with self._lock:
            self.computed += 1
        fut.set_result(value)

    def get(self, key, compute: Callable[[], Any]):
        """The value of `key`, computed here by `compute` if nobody has (blocks)."""
        fut, mine = self._claim(key)
        if mine:
            self._run(key, fut, compute)
        return fut.result()

    def submit(self, key, compute: Callable[[], Any], pool: ThreadPoolExecutor) -> Future:
        """The future of `key`, computed in `pool` if nobody has started it."""
        fut, mine = self._claim(key)
        if mine:
            pool.submit(self._run, key, fut, compute)
        return fut

    def peek(self, key):
        """The value of `key` if it is known already, else None (never blocks)."""
        with self._lock:
            fut = self._items.get(key)
        if fut is None or not fut.done() or fut.exception() is not None:
            return None
        return fut.result()

    def clear(self) -> None:
        with self._lock:
            self._items.clear()


class SharedFacts:
    """The facts of scenarios shared by the sessions of one process (module docstring).

    Parameters
    ----------
    cache : SweepCache
        Where solved windows come from (solved once per content).
    windows : int
        Limit-applied windows kept (each shares its arrays with the cache's Dataset).
    """

    def __init__(self, cache: SweepCache, windows: int = 8, others: int = 64):
        self.cache = cache
        self._windows = _Store(windows)
        self._design = _Store(others)
        self._margins = _Store(others)
        self._best = _Store(others)
        self._pool: ThreadPoolExecutor | None = None
        self._pool_lock = threading.Lock()

    def _key(self, sc: Scenario, *extra) -> tuple:
        return (self.cache.key(sc), sc.limits, *extra)

    # -- the window ------------------------------------------------------------------------
    def window(self, sc: Scenario, progress: Callable[[int, int], None] | None = None
               ) -> xr.Dataset:
        """The solved window of `sc` with the feasible window of its limits (exact edges
        included), as a shallow copy carrying `sc`'s title and text."""
        kwargs = {} if progress is None else {"progress": progress}
        ds = self._windows.get(self._key(sc), lambda: self.cache.get(sc, **kwargs))
        ds = ds.copy()
        ds.attrs = dict(ds.attrs, title=sc.title, scenario=sc.to_toml())
        return ds

    @property
    def windows_computed(self) -> int:
        """How many limit-applied windows this process has made (tests, profiling)."""
        return self._windows.computed

    def has_window(self, sc: Scenario) -> bool:
        """Whether :meth:`window` of `sc` answers without solving."""
        return sc in self.cache or self._windows.peek(self._key(sc)) is not None

    # -- points -----------------------------------------------------------------------------
    def design_point(self, sc: Scenario) -> thermo.PointResult:
        """The core's result at the design point, exactly where it is (limits play no part
        in it, so the key is the content alone)."""
        def compute():
            return thermo.point(sc, temperature=f"{sc.temperature!r} K",
                                pressure=f"{sc.pressure!r} Pa",
                                steam_to_carbon=sc.feed.steam_to_carbon)

        return self._design.get(self.cache.key(sc), compute)

    def margins(self, sc: Scenario):
        """thermo.margins at the exact design point, under `sc`'s limits."""
        return self._margins.get(self._key(sc),
                                 lambda: thermo.margins(sc, point=self.design_point(sc)))

    def _best_compute(self, sc: Scenario, objective: str) -> Callable[[], Any]:
        return lambda: thermo.best_point(sc, objective, ds=self.window(sc))

    def best_point(self, sc: Scenario, objective: str):
        """thermo.best_point of `objective` over `sc`'s window (blocks until found)."""
        return self._best.get(self._key(sc, objective), self._best_compute(sc, objective))

    def best_point_later(self, sc: Scenario, objective: str) -> Future:
        """A future of :meth:`best_point`, found in the process's one background thread."""
        with self._pool_lock:
            if self._pool is None:
                self._pool = ThreadPoolExecutor(max_workers=1,
                                                thread_name_prefix="explorer-best")
        return self._best.submit(self._key(sc, objective), self._best_compute(sc, objective),
                                 self._pool)

    def known_best_point(self, sc: Scenario, objective: str):
        """The best point if some session has found it already, else None."""
        return self._best.peek(self._key(sc, objective))

    def clear(self) -> None:
        """Forget every fact (tests; the sweep cache is left alone)."""
        for store in (self._windows, self._design, self._margins, self._best):
            store.clear()
