"""The served page as a review room sees it (Debian Chromium): the answer and both maps on the
first screen at 1600 x 1000, hover naming the broken limit, and a comparison with the shipped
proposal that draws an unchanged variable as "no change" rather than a patchwork.

Expected values come from the core (thermo.sweep / thermo.point), not from the app's code.
"""

from __future__ import annotations

import re
from pathlib import Path

import numpy as np
import pytest

import thermo
from tests.explorer.helpers import FIND_PIXEL, served_app, small_scenario
from thermo.sweep import LIMIT_VARIABLES

pytestmark = pytest.mark.usefixtures("chromium_path")

ROOT_SCENARIOS = Path(__file__).resolve().parents[2] / "scenarios"

#: Viewport rectangle of the canvas of the Bokeh figure `name`, without scrolling.
CANVAS_BOX = """(name) => {
  function* walk(v) {
    yield v;
    for (const k of (v.child_views ? [...v.child_views] : [])) yield* walk(k);
  }
  for (const root of Object.values(Bokeh.index)) {
    for (const v of walk(root)) {
      if (v.model && v.model.name === name && v.frame) {
        const r = v.canvas_view.el.getBoundingClientRect();
        return {top: r.top, bottom: r.bottom, left: r.left, right: r.right};
      }
    }
  }
  return null;
}"""


def _maps_ready(page, url):
    page.goto(url)
    page.get_by_text("points solved").first.wait_for(timeout=60000)
    for name in ("map-0", "map-1"):
        page.wait_for_function(f"() => ({CANVAS_BOX})('{name}') !== null", timeout=30000)


def _feasible_runs(text: str) -> list[tuple[float, float]]:
    """Ranges "a-b" or single temperatures "a" [degC] in the summary's words."""
    runs = []
    for part in text.split(","):
        nums = [float(x) for x in re.findall(r"\d+(?:\.\d+)?", part)]
        if nums:
            runs.append((nums[0], nums[-1]))
    return runs


@pytest.mark.parametrize("width, height", [(1600, 1000), (1366, 768)])
def test_answer_and_both_maps_on_the_first_screen(browser, width, height):
    """At a desktop screen and a common projector resolution (1366 x 768): the summary and
    both maps' canvases within the first viewport, and nothing wider than the window."""
    sc = thermo.load_scenario()  # the demo, as a review room opens it
    ctx = browser.new_context(viewport={"width": width, "height": height})
    page = ctx.new_page()
    try:
        with served_app(sc) as url:
            _maps_ready(page, url)
            assert page.evaluate("() => window.scrollY") == 0
            for name in ("map-0", "map-1"):
                box = page.evaluate(f"() => ({CANVAS_BOX})('{name}')")
                assert box["top"] >= 0 and box["left"] >= 0, (name, box)
                assert box["bottom"] <= height and box["right"] <= width, (name, box)
            summary = page.locator("div.rw-summary").inner_text()
            box = page.locator("div.rw-summary").bounding_box()
            assert box["y"] + box["height"] <= height
            overflow = page.evaluate(
                "() => document.scrollingElement.scrollWidth - window.innerWidth")
            assert overflow <= 0, f"the page is {overflow} px wider than the window"
    finally:
        ctx.close()
    m = re.search(r"Feasible outlet temperature at ([\d.]+) bar abs and S/C ([\d.]+).*?: "
                  r"(.+?) degC", summary)
    assert m, summary
    p_bar, s_c, words = float(m.group(1)), float(m.group(2)), m.group(3)
    # The core's grid on that row: every node inside a stated range is within all review
    # limits, every node outside all of them is not.
    ds = thermo.sweep(sc)
    j = int(np.argmin(np.abs(ds.pressure.values / 1e5 - p_bar)))
    k = int(np.argmin(np.abs(ds.steam_to_carbon.values - s_c)))
    assert ds.pressure.values[j] / 1e5 == pytest.approx(p_bar, rel=1e-3)
    row = np.asarray(ds["feasible"].isel(pressure=j, steam_to_carbon=k))
    T = ds.temperature.values - 273.15
    runs = _feasible_runs(words) if words != "none" else []
    assert runs or not row.any()
    # The exact edges lie between nodes: judge only nodes a grid step away from every end.
    step = float(T[1] - T[0])
    judged = 0
    for t, ok in zip(T, row, strict=True):
        if all(min(abs(t - lo), abs(t - hi)) >= step - 1e-6 for lo, hi in runs):
            assert any(lo <= t <= hi for lo, hi in runs) == bool(ok), (t, ok, words)
            judged += 1
    assert judged >= len(T) // 2


def test_hover_over_an_infeasible_node_names_the_limit(page):
    sc = small_scenario()
    t, p = 750.0, 20.0  # a node above the methane-slip limit, by the core:
    node = thermo.sweep(sc).sel(temperature=t + 273.15, pressure=p * 1e5,
                                steam_to_carbon=3.0, method="nearest")
    slip = float(node[LIMIT_VARIABLES["max_methane_slip_dry"]])
    assert slip > sc.limits.max_methane_slip_dry
    with served_app(sc) as url:
        _maps_ready(page, url)
        words = page.get_by_text("methane slip above 4.5 mol %")
        assert words.count() == 0  # nowhere on the page before the hover
        pos = page.evaluate(FIND_PIXEL, ["map-0", t, p])
        page.mouse.move(pos["x"], pos["y"])
        tip = words.first
        tip.wait_for(timeout=10000)
        assert tip.is_visible()


def test_comparison_with_the_shipped_proposal_has_no_patchwork_where_nothing_changes(page):
    from explorer.maps import VARIABLES
    from thermo.compare import on_base_window

    base = small_scenario()
    proposal = thermo.load_scenario(ROOT_SCENARIOS / "demo-proposal.toml")
    # The core's view: methane slip (an outlet mole fraction) is the same for both over
    # this window, to round-off (the proposal changes flows, preheat and adds a pre-reformer;
    # the reformer outlet is at equilibrium at the same T, P and S/C either way).
    b = thermo.sweep(base)["methane_slip_dry"].values
    p = thermo.sweep(on_base_window(base, proposal))["methane_slip_dry"].values
    span = float(np.nanmax(b) - np.nanmin(b))
    assert np.nanmax(np.abs(p - b)) < 1e-6 * span
    with served_app(base, proposal=proposal) as url:
        page.goto(url)
        page.get_by_text("solved over this window").wait_for(timeout=90000)
        page.get_by_label("Variable").select_option(
            label=VARIABLES["methane_slip_dry"].title)
        page.wait_for_function(
            "() => Bokeh.documents[0].get_model_by_name('cmp-2').title.text"
            f".includes({VARIABLES['methane_slip_dry'].label!r})", timeout=15000)
        colours = page.evaluate("""() => {
          const fig = Bokeh.documents[0].get_model_by_name('cmp-2');
          const bands = fig.renderers[0].data_source.data;
          return [...new Set(Array.from(bands.color))];
        }""")
        assert len(colours) == 1, colours  # one band: no change anywhere
        assert page.get_by_text("are shown as no change").first.is_visible()
