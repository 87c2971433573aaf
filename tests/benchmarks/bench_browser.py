"""Benchmark: the served app in Debian's headless Chromium (first maps, slice redraw, click).

Run on its own (not collected by pytest)::

    python tests/benchmarks/bench_browser.py [--slices 12] [--clicks 8]

The demo scenario's app is served in this process (``pn.serve(..., threaded=True)``) and
driven with Python Playwright in Debian's Chromium (the binary and flags of tests/conftest.py;
no network but loopback). Measured, wall clock on the Python side:

1. first maps: from ``page.goto`` of a fresh server (explorer.server, as ``explorer serve``
   runs it, but without solving before serving) to the text "points solved" and the Bokeh
   figure "map-0" rendered (its view has a frame: tests/explorer/helpers.py FIND_PIXEL). The
   first session includes loading the numba kernel from its on-disk cache (refreshed first in
   a child process, so no compile is timed) and solving the demo window (5,746 points) in the
   server; later sessions get the solved window from the server's cache
   (median of 3 new pages).
2. slice change: focus the visible slider handle, press ArrowRight (then ArrowLeft, so every
   step shows a new slice), and time until map-0's first renderer's data source data change
   (JSON compared with the data before, polled every 2 ms in the page), and until two animation
   frames later (the new slice painted). The in-page times from the keydown event are printed
   too, and the server's share: the app's slice-redraw callback, timed by a wrapper installed
   in this process only (time_server_redraw). Target (issue): under 200 ms.
3. click -> balance: click a grid node on map-0 and time until the balance heading names that
   node and the balance table shows its pressure.
4. server time of a warm page load: the CPU time of the server's thread (its event loop runs
   every GET, page build and callback) from ``goto`` to first maps, for each later session;
   the page build's wall time as the server records it (SessionBook.build_seconds); the wall
   time of a bare GET (the shell a client that never connects gets).
5. a burst of 50 page requests, each abandoned after 0.5 s, then the first maps of a real page
   right after it, and how many pages the server built for the abandoned requests.

Figures only: nothing here asserts a time.
"""

from __future__ import annotations

import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

import argparse  # noqa: E402
import os  # noqa: E402
import platform  # noqa: E402
import socket  # noqa: E402
import statistics  # noqa: E402
import subprocess  # noqa: E402
import time  # noqa: E402

import thermo  # noqa: E402
from tests.benchmarks.common import code_version  # noqa: E402
from tests.conftest import CHROMIUM_ARGS, chromium_binary  # noqa: E402
from tests.explorer.helpers import FIND_PIXEL  # noqa: E402
from thermo.equilibrium import kernel_is_cached  # noqa: E402

FALLBACK_CHROMIUM = "/usr/lib/chromium/chromium"

WARM_CACHE = ("import thermo; thermo.sweep(thermo.load_scenario().with_window("
              "temperature=('700 degC', '900 degC', 3), pressure=('10 bar', '40 bar', 2), "
              "steam_to_carbon=(1.0, 3.0, 2)))")

#: Start watching map-0's first renderer; window.__watch resolves with in-page times.
WATCH_MAP = """() => {
  const data = () => {
    const fig = Bokeh.documents[0].get_model_by_name('map-0');
    const d = fig.renderers[0].data_source.data;
    return JSON.stringify(d.xs !== undefined ? d.xs : d);
  };
  const before = data();
  window.__key = null;
  window.__watch = new Promise(resolve => {
    const start = performance.now();
    function check() {
      if (data() !== before) {
        const changed = performance.now();
        requestAnimationFrame(() => requestAnimationFrame(() =>
          resolve({key: window.__key, changed, painted: performance.now()})));
      } else if (performance.now() - start > 20000) {
        resolve(null);
      } else {
        setTimeout(check, 2);
      }
    }
    check();
  });
  return true;
}"""

KEY_LISTENER = """() => document.addEventListener('keydown',
  () => { window.__key = performance.now(); }, true)"""


def free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


#: Durations [s] of the server's slice-redraw callback, filled by the timing wrapper below.
SERVER_REDRAW: list[float] = []


def time_server_redraw() -> None:
    """Wrap MapsView._redraw_slices (in this process only) to time the server's share.

    The wrapper only measures: it calls the original and records how long it took (the new
    slice's layers for both maps and the data-source updates, before they are sent).
    """
    from explorer.app import MapsView

    original = MapsView._redraw_slices

    def timed(self, *args):
        t0 = time.perf_counter()
        try:
            return original(self, *args)
        finally:
            SERVER_REDRAW.append(time.perf_counter() - t0)

    MapsView._redraw_slices = timed


def serve():
    """The demo served in this process by `explorer serve`'s server (explorer.server); the
    window is NOT solved beforehand, so that the first session's first maps are cold."""
    from explorer.server import serve as explorer_serve

    time_server_redraw()

    port = free_port()
    t0 = time.perf_counter()
    server = explorer_serve(thermo.load_scenario(), port=port, address="127.0.0.1",
                            threaded=True)
    deadline = time.time() + 30
    while time.time() < deadline:
        try:
            socket.create_connection(("127.0.0.1", port), timeout=1).close()
            break
        except OSError:
            time.sleep(0.02)
    return server, server.url, time.perf_counter() - t0


def server_cpu(server) -> float:
    """CPU time [s] used so far by the server's thread (its event loop: every page GET,
    page build, model serialization and callback of every session runs there)."""
    return time.clock_gettime(time.pthread_getcpuclockid(server.thread.ident))


def get_page(url: str) -> float:
    """Wall time [s] of one GET of the page (what a client that never connects costs)."""
    import urllib.request

    t0 = time.perf_counter()
    urllib.request.urlopen(url, timeout=30).read()
    return time.perf_counter() - t0


def abandoned_burst(url: str, n: int = 50, after: float = 0.5) -> None:
    """n page requests at once, each given up after `after` seconds (answered or not)."""
    import threading

    host, port = "127.0.0.1", int(url.rsplit(":", 1)[1].strip("/"))

    def one():
        with socket.create_connection((host, port), timeout=after) as s:
            s.sendall(f"GET / HTTP/1.1\r\nHost: {host}:{port}\r\n\r\n".encode())
            try:
                s.recv(1)
            except TimeoutError:
                pass

    threads = [threading.Thread(target=one) for _ in range(n)]
    for t in threads:
        t.start()
    for t in threads:
        t.join()


def thread_cpu(thread) -> float:
    """CPU time [s] used so far by a thread (by its ident)."""
    return time.clock_gettime(time.pthread_getcpuclockid(thread.ident))


def reference_serving(sc, ctx, n: int = 3):
    """Reference in the same run: the same page served the way Panel serves an app function
    by default (``pn.serve({"/": lambda: build_app(sc)})``: the whole page is built on every
    GET). Returns the wall times of n bare GETs, the server thread's CPU time for each, and
    the wall and server CPU time of n browser page loads to first maps."""
    import panel as pn

    from explorer.app import build_app

    port = free_port()
    thread = pn.serve({"/": lambda: build_app(sc)}, port=port, address="127.0.0.1",
                      websocket_origin=[f"127.0.0.1:{port}"], threaded=True, show=False,
                      verbose=False)
    url = f"http://127.0.0.1:{port}/"
    deadline = time.time() + 30
    while time.time() < deadline:
        try:
            socket.create_connection(("127.0.0.1", port), timeout=1).close()
            break
        except OSError:
            time.sleep(0.02)
    try:
        get_page(url)  # warm
        gets, get_cpu, maps, maps_cpu = [], [], [], []
        for _ in range(n):
            c0 = thread_cpu(thread)
            gets.append(get_page(url))
            get_cpu.append(thread_cpu(thread) - c0)
        for _ in range(n):
            c0 = thread_cpu(thread)
            maps.append(open_maps(ctx.new_page(), url))
            maps_cpu.append(thread_cpu(thread) - c0)
    finally:
        thread.stop()
    return gets, get_cpu, maps, maps_cpu


def open_maps(page, url) -> float:
    t0 = time.perf_counter()
    page.goto(url)
    page.get_by_text("points solved").first.wait_for(timeout=120000)
    page.wait_for_function(f"() => ({FIND_PIXEL})(['map-0', 850, 20]) !== null",
                           timeout=60000)
    return time.perf_counter() - t0


def slice_changes(page, n: int):
    handle = page.locator(".noUi-handle >> visible=true").first
    handle.focus()
    page.evaluate(KEY_LISTENER)
    half = n // 2
    keys = ["ArrowRight"] * half + ["ArrowLeft"] * (n - half)
    wall, changed, painted, timeouts = [], [], [], 0
    for key in keys:
        page.evaluate(WATCH_MAP)
        t0 = time.perf_counter()
        handle.press(key)
        r = page.evaluate("() => window.__watch")
        t1 = time.perf_counter()
        if r is None or r["key"] is None:
            timeouts += 1
            continue
        wall.append(t1 - t0)
        changed.append((r["changed"] - r["key"]) / 1000.0)
        painted.append((r["painted"] - r["key"]) / 1000.0)
    return wall, changed, painted, timeouts


def balance_clicks(page, sc, n: int):
    """Click grid nodes of map-0 (temperature degC, pressure bar) and wait for the balance."""
    T = sc.window.axes()["temperature"].values() - 273.15
    P = sc.window.axes()["pressure"].values() / 1e5
    nodes = [(T[i], P[j]) for i, j in
                 [(3, 2), (10, 6), (18, 9), (6, 11), (22, 4), (14, 1), (1, 8), (20, 12),
                  (8, 3), (16, 7), (24, 10), (12, 5)]][:n]
    # Bring map-0 into the viewport (FIND_PIXEL gives viewport coordinates).
    mid = page.evaluate(FIND_PIXEL, ["map-0", float(T.mean()), float(P.mean())])
    page.evaluate(f"() => window.scrollBy(0, {mid['y']} - window.innerHeight / 2)")
    page.wait_for_timeout(300)
    times = []
    for x, y in nodes:
        # A pause (not timed) so that Bokeh does not take two quick taps for a double tap.
        page.wait_for_timeout(800)
        pos = page.evaluate(FIND_PIXEL, ["map-0", float(x), float(y)])
        label = f"{x:.1f} degC, {y:.3f} bar abs"
        t0 = time.perf_counter()
        page.mouse.click(pos["x"], pos["y"])
        page.get_by_text(label).first.wait_for(timeout=20000)
        balance = 'table.rw-table:not([data-table]):not([data-role="best-balance"] table)'
        page.locator(balance).first.filter(has_text=f"{y:.3f}").wait_for(timeout=20000)
        times.append(time.perf_counter() - t0)
    return times


def fmt(xs) -> str:
    ms = [1000 * x for x in xs]
    return (f"median {statistics.median(ms):7.1f} ms   min {min(ms):7.1f}   max "
            f"{max(ms):7.1f}   (n={len(ms)})")


def main(argv=None) -> None:
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--slices", type=int, default=12, help="slice changes timed")
    ap.add_argument("--clicks", type=int, default=8, help="click -> balance round trips timed")
    args = ap.parse_args(argv)
    from importlib.metadata import version

    from playwright.sync_api import sync_playwright

    chromium = chromium_binary() or (FALLBACK_CHROMIUM if os.path.exists(FALLBACK_CHROMIUM)
                                     else None)
    if chromium is None:
        sys.exit("bench_browser: Debian's chromium is not installed (apt-get install chromium)")
    print("bench_browser: the served demo app in headless Chromium")
    print(f"  {time.strftime('%Y-%m-%d %H:%M')}, {platform.machine()}, {os.cpu_count()} CPUs, "
          f"Python {platform.python_version()}, panel {version('panel')}, bokeh "
          f"{version('bokeh')}, playwright {version('playwright')}, {chromium}; numba kernel "
          f"cached: {kernel_is_cached()}; load average {os.getloadavg()[0]:.2f}")
    print(f"  code: {code_version()}")
    # Make sure numba's on-disk cache holds the current kernel (a source edit makes it stale),
    # in a child process, so that the first session below loads it rather than compiling it.
    t0 = time.perf_counter()
    subprocess.run([sys.executable, "-c", WARM_CACHE], cwd=ROOT, check=True)
    print(f"  numba cache refreshed/checked in a child process: {time.perf_counter() - t0:.1f} s")
    server, url, t_serve = serve()
    sc = thermo.load_scenario()
    try:
        with sync_playwright() as p:
            browser = p.chromium.launch(executable_path=chromium, args=CHROMIUM_ARGS)
            print(f"  Chromium {browser.version}; server up in {t_serve:.2f} s")
            ctx = browser.new_context(viewport={"width": 1300, "height": 950})
            page = ctx.new_page()
            errors = []
            page.on("pageerror", lambda e: errors.append(str(e)))
            first = open_maps(page, url)
            SERVER_REDRAW.clear()
            wall, changed, painted, timeouts = slice_changes(page, args.slices)
            server_redraw = list(SERVER_REDRAW)
            clicks = balance_clicks(page, sc, args.clicks)
            # New sessions last, kept open until the browser closes (a closed page's session
            # lingers in the server for a while and would add work to the timings above).
            # Each: wall time to its first maps and the server thread's CPU time meanwhile
            # (the GET, the page build, its serialization and the first updates).
            later, cpu, gets = [], [], []
            for _ in range(3):
                c0 = server_cpu(server)
                later.append(open_maps(ctx.new_page(), url))
                cpu.append(server_cpu(server) - c0)
            build = list(server.book.build_seconds[1:])
            get_cpu = []
            for _ in range(5):
                c0 = server_cpu(server)
                gets.append(get_page(url))
                get_cpu.append(server_cpu(server) - c0)
            # A burst of 50 page requests abandoned after 0.5 s, then a real page.
            built = server.book.built
            t0 = time.perf_counter()
            abandoned_burst(url)
            t_burst = time.perf_counter() - t0
            after_burst = open_maps(ctx.new_page(), url)
            burst_built = server.book.built - built - 1
            ref = reference_serving(sc, browser.new_context(viewport={"width": 1300,
                                                                       "height": 950}))
            browser.close()
    finally:
        server.stop()

    n = sc.window.axes()
    pts = 1
    for a in n.values():
        pts *= len(a.values())
    print(f"\n  {'measurement':<60} result")
    print(f"  {'first maps, first session (kernel load + ' + f'{pts:,}-point solve)':<60} "
          f"{first:.2f} s")
    print(f"  {'first maps, later sessions (window cached in the server)':<60} "
          f"median {statistics.median(later):.2f} s (runs: "
          f"{', '.join(f'{t:.2f}' for t in later)})")
    print(f"  {'server CPU per new page, GET to first maps (server thread)':<60} {fmt(cpu)}")
    print(f"  {'  of which: page build on connection (wall, in the server)':<60} {fmt(build)}")
    print(f"  {'page GET without connecting (the shell only, wall)':<60} {fmt(gets)}")
    print(f"  {'  its server CPU':<60} {fmt(get_cpu)}")
    ref_gets, ref_get_cpu, ref_maps, ref_maps_cpu = ref
    print("  reference, same run: Panel's default serving of the same page (built on GET)")
    print(f"  {'  page GET without connecting (wall)':<60} {fmt(ref_gets)}")
    print(f"  {'  its server CPU':<60} {fmt(ref_get_cpu)}")
    print(f"  {'  first maps, later sessions (wall)':<60} {fmt(ref_maps)}")
    print(f"  {'  server CPU per new page, GET to first maps':<60} {fmt(ref_maps_cpu)}")
    med = statistics.median
    print(f"  ratios (reference / explorer.server): bare GET CPU "
          f"{med(ref_get_cpu) / med(get_cpu):.0f}x, page load CPU "
          f"{med(ref_maps_cpu) / med(cpu):.2f}x, first maps wall "
          f"{med(ref_maps) / med(later):.2f}x")
    print(f"  {'50 page requests abandoned after 0.5 s: burst took':<60} {t_burst:.2f} s; "
          f"pages built for them: {burst_built}; GETs skipped (client gone): "
          f"{server.book.gone}")
    print(f"  {'first maps of a real page right after the burst':<60} {after_burst:.2f} s")
    if wall:
        print(f"  {'slice change -> map-0 data changed (Python wall clock)':<60} {fmt(wall)}")
        print(f"  {'slice change -> map-0 data changed (in page, from keydown)':<60} "
              f"{fmt(changed)}")
        print(f"  {'slice change -> painted (2 animation frames later, in page)':<60} "
              f"{fmt(painted)}")
    if server_redraw:
        print(f"  {'  of which: server slice-redraw callback (both maps)':<60} "
              f"{fmt(server_redraw)}")
    if timeouts:
        print(f"  slice changes that showed no new data within 20 s: {timeouts}")
    print(f"  {'click -> balance heading and table (Python wall clock)':<60} {fmt(clicks)}")
    print("  Target (issue): slice change under 200 ms. Page errors: "
          f"{len(errors)}{' (' + errors[0][:100] + ')' if errors else ''}")
    print(f"  load average at the end: {os.getloadavg()[0]:.2f}")


if __name__ == "__main__":
    main()
