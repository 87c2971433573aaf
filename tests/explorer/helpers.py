"""Helpers for the explorer tests: a small scenario and reading Bokeh maps in a browser."""

from __future__ import annotations

import contextlib
import re
import socket
import time

import thermo

#: A small window (6 x 4 x 5 = 120 points) around the demo's design point, quick to solve.
SMALL_WINDOW = dict(temperature=("700 degC", "950 degC", 6), pressure=("10 bar", "40 bar", 4),
                    steam_to_carbon=(1.0, 5.0, 5))


def small_scenario():
    return thermo.load_scenario().with_window(**SMALL_WINDOW)


#: JavaScript: viewport position of data point (x, y) on the Bokeh figure named `name`, after
#: scrolling the figure into view (a click outside the viewport does nothing).
FIND_PIXEL = """([name, x, y]) => {
  function* walk(v) {
    yield v;
    const kids = v.child_views ? [...v.child_views] : [];
    for (const k of kids) yield* walk(k);
  }
  for (const root of Object.values(Bokeh.index)) {
    for (const v of walk(root)) {
      if (v.model && v.model.name === name && v.frame) {
        v.canvas_view.el.scrollIntoView({block: "center", inline: "nearest"});
        const r = v.canvas_view.el.getBoundingClientRect();
        return {x: r.left + v.frame.x_scale.compute(x), y: r.top + v.frame.y_scale.compute(y)};
      }
    }
  }
  return null;
}"""


def click_data_point(page, name: str, x: float, y: float, quiet_ms: float = 400.0,
                     timeout_s: float = 30.0) -> None:
    """Click data point (x, y) of the Bokeh figure `name` once the figure has stopped moving
    on the page: its pixel position the same for `quiet_ms` (content that arrives later,
    such as a best point or a comparison table, lengthens the page above a map, and a click
    computed before that shift lands elsewhere; seen on a loaded machine)."""
    deadline = time.monotonic() + timeout_s
    last, since = None, time.monotonic()
    while True:
        pos = page.evaluate(FIND_PIXEL, [name, float(x), float(y)])
        now = time.monotonic()
        if pos != last:
            last, since = pos, now
        elif now - since >= quiet_ms / 1000.0 or now > deadline:
            break
        page.wait_for_timeout(50)
    assert last is not None, f"figure {name!r} is not on the page"
    page.mouse.click(last["x"], last["y"])


def table_cells(html: str) -> list[list[str]]:
    """Rows of cell texts of every table in an HTML fragment (tags stripped)."""
    rows = []
    for tr in re.findall(r"<tr>(.*?)</tr>", html, flags=re.S):
        rows.append([re.sub(r"<[^>]+>", "", c).strip()
                     for c in re.findall(r"<t[dh]>(.*?)</t[dh]>", tr, flags=re.S)])
    return rows


def free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


@contextlib.contextmanager
def served_app(scenario, proposal=None, **options):
    """The app served in this process by `explorer serve`'s server (explorer.server) on a
    free loopback port, with a proposal to compare if given; options (max_sessions,
    idle_minutes) go to the server. Yields its URL; the server is `served_app.last`."""
    from explorer.server import serve

    port = free_port()
    server = serve(scenario, proposal, port=port, address="127.0.0.1", threaded=True,
                   **options)
    served_app.last = server
    deadline = time.time() + 30
    while time.time() < deadline:
        try:
            socket.create_connection(("127.0.0.1", port), timeout=1).close()
            break
        except OSError:
            time.sleep(0.1)
    try:
        yield server.url
    finally:
        server.stop()


def open_scenario_form(page) -> None:
    """Unfold the page's scenario section (the form is built when first opened)."""
    page.get_by_text("3 Scenario:").first.click()
    page.get_by_role("button", name="Apply and solve").wait_for(timeout=30000)


def offline(page) -> list[str]:
    """Cut the page off the network: every request but file:// is aborted and its URL kept
    in the returned list (which the caller asserts empty)."""
    requests: list[str] = []

    def route(r):
        if r.request.url.startswith("file:"):
            r.continue_()
        else:
            requests.append(r.request.url)
            r.abort()

    page.route("**/*", route)
    return requests
