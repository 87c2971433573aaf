"""Load: eight browser sessions at once on one server, each with its own study, no cross-talk.

Each session changes its own review limit (a different maximum duty) and selects its own grid
point; afterwards every page must still show its own limit's feasible window and its own
point, and no page may have raised an error. Bounded in time: the whole test must finish
within LOAD_DEADLINE_S, far above the ~20 s it takes on the project's 2-core machine.
"""

from __future__ import annotations

import time

import pytest

from tests.explorer.helpers import FIND_PIXEL, open_scenario_form, served_app, small_scenario

pytestmark = pytest.mark.usefixtures("chromium_path")

SESSIONS = 8
LOAD_DEADLINE_S = 240
DUTIES_MW = [40, 50, 60, 70, 80, 90, 100, 110]
#: One interior grid node per session (nodes at 700, 750, ... degC and 10, 20, 30, 40 bar).
POINTS = [(750.0 + 50.0 * (i % 4), 20.0 + 10.0 * (i // 4)) for i in range(SESSIONS)]


@pytest.fixture(scope="module")
def server():
    pytest.importorskip("panel")
    with served_app(small_scenario()) as url:
        yield url


def test_eight_sessions_without_cross_talk(browser, server):
    start = time.time()
    contexts, pages, errors = [], [], []
    for _ in range(SESSIONS):
        ctx = browser.new_context(viewport={"width": 1300, "height": 950})
        pg = ctx.new_page()
        pg.on("pageerror", lambda e: errors.append(str(e)))
        pg.goto(server, wait_until="commit")  # all sessions open before any is ready
        contexts.append(ctx)
        pages.append(pg)
    try:
        for pg in pages:
            pg.get_by_text("points solved").wait_for(timeout=120000)
        opened = time.time() - start
        # Every session sets its own limit and applies it (interleaved).
        for pg, duty in zip(pages, DUTIES_MW, strict=True):
            open_scenario_form(pg)
            field = pg.get_by_label("Max duty")
            field.fill(f"{duty} MW")
            field.press("Enter")
            pg.get_by_role("button", name="Apply and solve").click()
        # ... and selects its own point.
        for pg, (t, p) in zip(pages, POINTS, strict=True):
            pg.wait_for_function(f"() => ({FIND_PIXEL})(['map-0', {t}, {p}]) !== null",
                                 timeout=30000)
            pos = pg.evaluate(FIND_PIXEL, ["map-0", t, p])
            pg.mouse.click(pos["x"], pos["y"])
        for pg, duty, (t, p) in zip(pages, DUTIES_MW, POINTS, strict=True):
            pg.get_by_text(f"{t:.1f} degC, {p:.3f} bar abs").wait_for(timeout=30000)
            assert pg.get_by_label("Max duty").input_value() == f"{duty} MW"
        elapsed = time.time() - start
    finally:
        for ctx in contexts:
            ctx.close()
    assert errors == []
    assert elapsed < LOAD_DEADLINE_S
    print(f"\n{SESSIONS} sessions: all maps after {opened:.1f} s, all done after {elapsed:.1f} s")
