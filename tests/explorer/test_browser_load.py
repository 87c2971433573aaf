"""Load: eight browser sessions at once on one server, each with its own study, no cross-talk.

Each session changes its own review limit (a different maximum duty) and selects its own grid
point; afterwards every page must still show its own limit's feasible window (the summary's
feasible temperatures and count of feasible grid points, as the core computes them for that
limit) and its own point, and no page may have raised an error. The times it prints are
information, never asserted (speed is measured in tests/benchmarks/).
"""

from __future__ import annotations

import dataclasses
import time

import pytest

import thermo
from explorer.sheet import design_row_ranges
from tests.explorer.helpers import (
    FIND_PIXEL,
    click_data_point,
    open_scenario_form,
    served_app,
    small_scenario,
)

pytestmark = pytest.mark.usefixtures("chromium_path")

SESSIONS = 8
#: Duty limits [MW] whose feasible windows all differ on the small window (3, 4, 8, 14, 18,
#: 24, 28 and 33 feasible grid points), so any cross-talk shows.
DUTIES_MW = [74, 77, 80, 83, 86, 89, 92, 95]
#: One interior grid node per session (nodes at 700, 750, ... degC and 10, 20, 30, 40 bar).
POINTS = [(750.0 + 50.0 * (i % 4), 20.0 + 10.0 * (i // 4)) for i in range(SESSIONS)]


@pytest.fixture(scope="module")
def server():
    pytest.importorskip("panel")
    with served_app(small_scenario()) as url:
        yield url


def _expected_window(duty_MW: float) -> tuple[str, str]:
    """The core's feasible temperatures on the design row and 'N of M grid points' for the
    small scenario with its duty limit set to `duty_MW`."""
    sc = small_scenario()
    sc = dataclasses.replace(sc, limits=dataclasses.replace(sc.limits, max_duty=duty_MW * 1e6))
    ds = thermo.sweep(sc)
    words = design_row_ranges(ds, sc)[0]
    return words, f"{int(ds['feasible'].sum()):,} of {int(ds['feasible'].size):,} grid points"


def test_eight_sessions_without_cross_talk(browser, server):
    """Eight pages at once: each keeps its own duty limit in the form, shows its own point's
    balance heading and its own limit's feasible window in the summary, and none raises a
    page error."""
    expected = [_expected_window(d) for d in DUTIES_MW]
    assert len({e[1] for e in expected}) == SESSIONS  # the windows differ: cross-talk shows
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
            click_data_point(pg, "map-0", t, p)
        for pg, duty, (t, p), (words, count) in zip(pages, DUTIES_MW, POINTS, expected,
                                                    strict=True):
            pg.get_by_text(f"{t:.1f} degC, {p:.3f} bar abs").wait_for(timeout=30000)
            assert pg.get_by_label("Max duty").input_value() == f"{duty} MW"
            summary = pg.locator(".rw-summary").first
            summary.get_by_text(count).wait_for(timeout=30000)
            text = summary.inner_text()
            assert count in text and "Feasible outlet temperature" in text, (duty, text)
            assert f": {words} degC" in text, (duty, words, text)
        elapsed = time.time() - start
    finally:
        for ctx in contexts:
            ctx.close()
    assert errors == []
    print(f"\n{SESSIONS} sessions: all maps after {opened:.1f} s, all done after {elapsed:.1f} s")
