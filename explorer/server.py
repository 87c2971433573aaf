"""The explorer's web server: cheap page loads, no work for clients that have gone, a bound
on live sessions and release of idle ones.

How a page load runs (Panel 1.x on Bokeh's Tornado server):

1. The GET of the page. :class:`_GuardedPageHandler` (Panel's page handler with checks in
   front) answers at once, building nothing, when the client has already closed its
   connection, and answers with a short "busy" page (status 503) when the bound on live
   sessions is reached. Otherwise Bokeh creates the session with a *shell* document: one
   line saying the page is loading. That is all the GET builds, so a client that gives up
   (a proxy's health check, a user pressing reload) costs a few milliseconds.
2. The browser renders the shell and connects its websocket; Panel then runs the session's
   ``onload`` callbacks. Only now is the explorer page built (:func:`explorer.app.build_app`)
   and put into the shell. A client that never connects never gets a page built.
3. The solved window comes from :data:`explorer.state.SHARED_CACHE`, keyed by the scenario's
   content: the demo is solved once per server process, and a later session adopts it in the
   same callback (no solve, no worker thread).
4. Sessions are released: Bokeh discards a session whose browser has gone (or never
   connected) after :data:`UNUSED_SESSION_S`; a page left open without any change for
   ``idle_minutes`` has its content replaced by a short notice, which frees its figures and
   its slot under the bound (reloading the page starts a new session).

:class:`SessionBook` is the thread-safe account of live sessions behind the bound.
"""

from __future__ import annotations

import asyncio
import dataclasses
import threading
import time
from collections.abc import Callable

from explorer.safe import html
from thermo.scenario import Scenario

#: Default bound on live explorer pages per server process. Each page holds a few hundred
#: Bokeh models (about 5-10 MB) and shares the solved window; on the project's 2-core machine
#: 8 pages working at once stay responsive (tests/explorer/test_browser_load.py).
DEFAULT_MAX_SESSIONS = 16

#: Default minutes without any change on a page before its content is released.
DEFAULT_IDLE_MINUTES = 30

#: Seconds a session with no browser connected (tab closed, or the page was fetched and never
#: opened) is kept before Bokeh discards it, and how often Bokeh looks (common practice for
#: Bokeh servers: its own defaults are 15 s and 17 s).
UNUSED_SESSION_S = 15
CHECK_UNUSED_S = 5

#: Sessions that have fetched the page but not (yet) connected may outnumber the bound by
#: this factor before the busy page answers: shells are cheap, but not free.
PENDING_FACTOR = 4

BUSY_TITLE = "Reformer window explorer: busy"
BUSY_TEXT = ("The explorer is serving as many pages as it allows ({limit}). Close a page you "
             "no longer use, or try again in a minute.")
IDLE_TEXT = ("This page was released after {minutes:g} minutes without use, to free the "
             "server for others. Reload the page to continue (the study starts again from "
             "its scenario file; save notes and points you want to keep before leaving a "
             "page).")
LOADING_TEXT = "Loading the explorer: the maps appear in a moment ..."


def busy_page(limit: int) -> str:
    """The short page answered past the session bound (text, never markup)."""
    return html("<!DOCTYPE html><html lang='en'><head><meta charset='utf-8'><title>{}</title>"
                "</head><body style='font-family: sans-serif; margin: 3em'><h1>{}</h1>"
                "<p>{}</p></body></html>", BUSY_TITLE, BUSY_TITLE,
                BUSY_TEXT.format(limit=limit))


@dataclasses.dataclass
class _Entry:
    last: float
    release: Callable[[], None] | None = None
    released: bool = False


class SessionBook:
    """Live explorer pages, by Bokeh session id, with the time of their last change.

    A session counts toward the bound from the moment its page is built until it is
    destroyed or released for idleness. Thread-safe (pages are built on the server's event
    loop; tests read the counts from another thread).
    """

    def __init__(self, max_sessions: int = DEFAULT_MAX_SESSIONS,
                 idle_minutes: float = DEFAULT_IDLE_MINUTES):
        self.max_sessions = max_sessions
        self.idle_seconds = 60.0 * idle_minutes
        self._live: dict[str, _Entry] = {}
        self._lock = threading.Lock()
        #: Counters, for tests and the log: pages built, GETs skipped because the client had
        #: gone, busy answers, pages released for idleness.
        self.built = self.gone = self.busy = self.released = 0
        #: Server time [s] of each page build (build_app and its Bokeh models), newest last.
        self.build_seconds: list[float] = []

    def live(self) -> int:
        """Pages that count toward the bound."""
        with self._lock:
            return sum(not e.released for e in self._live.values())

    def full(self) -> bool:
        return self.live() >= self.max_sessions

    def open(self, sid: str, release: Callable[[], None]) -> bool:
        """Take a slot for session `sid`; False (and nothing taken) if the bound is reached."""
        with self._lock:
            if sum(not e.released for e in self._live.values()) >= self.max_sessions:
                self.busy += 1
                return False
            self._live[sid] = _Entry(time.monotonic(), release)
            self.built += 1
            return True

    def touch(self, sid: str) -> None:
        entry = self._live.get(sid)
        if entry is not None:
            entry.last = time.monotonic()

    def close(self, sid: str) -> None:
        with self._lock:
            self._live.pop(sid, None)

    def idle(self, now: float | None = None) -> list[tuple[str, Callable[[], None]]]:
        """Mark pages without a change for longer than the idle time as released; returns
        their (session id, release callback) to run on their documents."""
        now = time.monotonic() if now is None else now
        out = []
        with self._lock:
            for sid, e in self._live.items():
                if not e.released and now - e.last > self.idle_seconds and e.release:
                    e.released = True
                    self.released += 1
                    out.append((sid, e.release))
        return out


def _page_handler(book: SessionBook, base: type, max_pending: int) -> type:
    """Panel's page handler with the client-gone check and the bound in front of it."""

    class _GuardedPageHandler(base):
        async def get(self, *args, **kwargs):
            # Let the event loop notice connections closed while earlier requests ran.
            await asyncio.sleep(0)
            stream = getattr(self.request.connection, "stream", None)
            if stream is not None and stream.closed():
                book.gone += 1
                return
            pending = len(list(self.application_context.sessions))
            if book.full() or pending >= max_pending:
                book.busy += 1
                self.set_status(503)
                self.set_header("Retry-After", "60")
                self.set_header("Cache-Control", "no-store")
                self.set_header("Content-Type", "text/html; charset=utf-8")
                self.finish(busy_page(book.max_sessions))
                return
            await super().get(*args, **kwargs)

    return _GuardedPageHandler


def session_page(scenario: Scenario, proposal: Scenario | None, book: SessionBook,
                 units: str | None = None):
    """The app function for one session: a shell now, the explorer page on connection."""
    import panel as pn

    from explorer.app import build_app

    doc = pn.state.curdoc
    sid = doc.session_context.id if doc is not None and doc.session_context else None
    shell = pn.Column(pn.pane.HTML(html("<p>{}</p>", LOADING_TEXT),
                                   styles={"font-size": "16px"}),
                      sizing_mode="stretch_width")

    def release():
        """Idle: drop the page's content and its callbacks; the slot is free again."""
        shell.objects = [pn.pane.HTML(html("<p>{}</p>", IDLE_TEXT.format(
            minutes=book.idle_seconds / 60.0)), styles={"font-size": "16px"})]
        from bokeh.server.callbacks import PeriodicCallback

        for cb in list(doc.session_callbacks):
            if isinstance(cb, PeriodicCallback):
                doc.remove_periodic_callback(cb)

    def fill():
        if sid is None:
            shell.objects = [build_app(scenario, proposal=proposal, units=units)]
            return
        if not book.open(sid, release):
            shell.objects = [pn.pane.HTML(html("<h1>{}</h1><p>{}</p>", BUSY_TITLE,
                                               BUSY_TEXT.format(limit=book.max_sessions)))]
            return
        t0 = time.perf_counter()
        with pn.io.hold(doc):  # one patch to the browser for the whole page
            page = build_app(scenario, proposal=proposal, units=units)
            shell.objects = [page]
        book.build_seconds = book.build_seconds[-99:] + [time.perf_counter() - t0]
        shell.explorer_state = page.explorer_state
        doc.on_change(lambda event: book.touch(sid))
        book.touch(sid)  # idle time counts from the page's arrival, not its request

    if sid is not None:
        doc.on_session_destroyed(lambda ctx: book.close(sid))
    pn.state.onload(fill)
    return shell


@dataclasses.dataclass
class ExplorerServer:
    """A running explorer server: the Bokeh server, its session book and its URL."""

    server: object
    book: SessionBook
    url: str
    thread: threading.Thread | None = None

    def stop(self) -> None:
        loop = self.server.io_loop
        loop.add_callback(self.server.stop)
        loop.add_callback(loop.stop)
        if self.thread is not None:
            self.thread.join(timeout=10)


def make_server(scenario: Scenario, proposal: Scenario | None = None, *, port: int,
                address: str = "127.0.0.1", websocket_origin: list[str] | None = None,
                max_sessions: int = DEFAULT_MAX_SESSIONS,
                idle_minutes: float = DEFAULT_IDLE_MINUTES, loop=None,
                units: str | None = None):
    """The explorer's Bokeh server (not started) and its session book; `units`: the pages'
    display unit system at start (explorer.display; the scenario's if None)."""
    from panel.io.server import DocHandler, get_server
    from tornado.ioloop import PeriodicCallback

    book = SessionBook(max_sessions, idle_minutes)
    server = get_server(
        {"/": lambda: session_page(scenario, proposal, book, units)}, port=port, address=address,
        websocket_origin=websocket_origin or [f"{address}:{port}"], show=False, start=False,
        title="Reformer window explorer", verbose=False, loop=loop,
        unused_session_lifetime_milliseconds=1000 * UNUSED_SESSION_S,
        check_unused_sessions_milliseconds=1000 * CHECK_UNUSED_S)
    guarded = _page_handler(book, DocHandler, PENDING_FACTOR * max_sessions)
    replaced = 0
    for rule in server._tornado.wildcard_router.rules:
        if rule.target is DocHandler:
            rule.target = guarded
            replaced += 1
    if replaced != 1:
        raise RuntimeError(f"explorer.server: expected one page route, found {replaced}")

    def reap():
        for sid, release in book.idle():
            try:
                session = server.get_session("/", sid)
            except Exception:  # destroyed meanwhile
                continue
            session.document.add_next_tick_callback(release)

    period = max(1.0, min(30.0, book.idle_seconds / 4))
    server._explorer_reaper = PeriodicCallback(reap, 1000 * period)
    return server, book


def serve(scenario: Scenario, proposal: Scenario | None = None, *, port: int,
          address: str = "127.0.0.1", websocket_origin: list[str] | None = None,
          max_sessions: int = DEFAULT_MAX_SESSIONS, idle_minutes: float = DEFAULT_IDLE_MINUTES,
          threaded: bool = False, units: str | None = None) -> ExplorerServer | None:
    """Serve the explorer; blocks unless `threaded` (then returns the running server)."""
    from tornado.ioloop import IOLoop

    kwargs = dict(port=port, address=address, websocket_origin=websocket_origin,
                  max_sessions=max_sessions, idle_minutes=idle_minutes, units=units)
    if not threaded:
        server, _ = make_server(scenario, proposal, **kwargs)
        server.start()
        server._explorer_reaper.start()
        server.io_loop.start()
        return None
    started: dict = {}
    ready = threading.Event()

    def run():
        asyncio.set_event_loop(asyncio.new_event_loop())
        loop = IOLoop.current()
        try:
            server, book = make_server(scenario, proposal, loop=loop, **kwargs)
            server.start()
            server._explorer_reaper.start()
            started.update(server=server, book=book)
        except BaseException as err:  # reported to the caller below
            started["error"] = err
            ready.set()
            return
        ready.set()
        loop.start()

    thread = threading.Thread(target=run, daemon=True, name="explorer-server")
    thread.start()
    ready.wait(60)
    if "error" in started:
        raise started["error"]
    return ExplorerServer(started["server"], started["book"], f"http://{address}:{port}/",
                          thread)
