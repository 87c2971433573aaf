"""Exact edges, the best point, margins and a design point outside the window, in real
headless Chromium: the served app and the offline review file.

References: thermo.best_point and thermo.margins (checked against thermo.point in
tests/thermo/test_edges.py) and the Dataset's exact intervals from thermo.sweep; the numbers
the browser shows must equal them.
"""

from __future__ import annotations

import dataclasses
import json
import subprocess
import sys

import numpy as np
import pytest

import thermo
from explorer.limits_report import margins_html
from tests.explorer.helpers import FIND_PIXEL, offline, served_app, small_scenario, table_cells

pytestmark = pytest.mark.usefixtures("chromium_path")

#: 25 psig [Pa abs] (NIST SP 811: 1 psi = 6894.757 Pa; gauge + 101325 Pa), below the
#: window's 10 bar.
PSIG_25 = 25 * 6894.757 + 101325.0

#: The edge, best-point marker and design-point marker of the figure named `name`.
LAYERS = """(name) => {
  const fig = Bokeh.documents[0].get_model_by_name(name);
  const by = (n) => fig.renderers.find(r => r.name === n).data_source.data;
  const plain = (d) => Object.fromEntries(Object.entries(d).map(([k, v]) => [k, Array.from(v)]));
  return {edge: {xs: by('edge-line').xs.map(a => Array.from(a)),
                 ys: by('edge-line').ys.map(a => Array.from(a))},
          best: plain(by('best-marker')), design: plain(by('design-marker'))};
}"""


@pytest.fixture(scope="module")
def case():
    sc = dataclasses.replace(small_scenario(), pressure=PSIG_25)
    ds = thermo.sweep(sc)
    return sc, ds, thermo.best_point(sc, "h2", ds=ds), thermo.margins(sc)


def _check_edge_passes_through_the_intervals(edge, ds, s_index):
    """Every interval end inside the temperature range is a vertex of the drawn edge at its
    row (map in degC and bar, rounded to 1e-4 in the file)."""
    pts = [(x, y) for xs, ys in zip(edge["xs"], edge["ys"], strict=True)
           for x, y in zip(xs, ys, strict=True)]
    assert pts, "no edge drawn"
    t0, t1 = float(ds.temperature.min()), float(ds.temperature.max())
    checked = 0
    for j, p in enumerate(ds.pressure.values):
        lo = ds["feasible_t_low"].isel(pressure=j, steam_to_carbon=s_index).values
        hi = ds["feasible_t_high"].isel(pressure=j, steam_to_carbon=s_index).values
        for e in np.concatenate([lo, hi]):
            if np.isfinite(e) and t0 < e < t1:
                assert any(abs(x - (e - 273.15)) < 2e-4 and abs(y - p / 1e5) < 2e-4
                           for x, y in pts), (p, e)
                checked += 1
    assert checked > 0


def _check_markers(layers, bp):
    best = layers["best"]
    assert best["x"] == pytest.approx([bp.coordinates["temperature"] - 273.15], abs=1e-3)
    assert best["y"] == pytest.approx([bp.coordinates["pressure"] / 1e5], abs=1e-3)
    design = layers["design"]
    assert design["marker"] == ["triangle"] and design["y"] == pytest.approx([10.0])
    assert "outside the window" in design["text"][0]


def _margin_rows(page):
    """The design point's margin table, opening its folded card first (the app's tables fold
    until asked for; the review file shows them open)."""
    table = page.locator('table[data-table="margins"]').first
    if not table.count():
        page.get_by_text("Margins and sensitivities of the design point").first.click()
    html = table.evaluate("t => t.outerHTML", timeout=30000)
    return table_cells(html)


def test_app_marks_best_point_exact_edge_margins_and_outside_design(page, case, artifacts):
    sc, ds, bp, m = case
    errors = []
    page.on("pageerror", lambda e: errors.append(str(e)))
    with served_app(sc) as url:
        page.goto(url)
        page.get_by_text("points solved").wait_for(timeout=90000)
        page.wait_for_function(f"() => ({FIND_PIXEL})(['map-0', 850, 20]) !== null",
                               timeout=30000)
        page.locator('[data-role="best-point"]').first.wait_for(timeout=60000)
        warn = page.locator('[data-role="design-outside"]').first.inner_text()
        assert "design pressure 2.737 bar abs lies outside the window" in warn.lower()
        assert _margin_rows(page) == table_cells(margins_html(m))[:len(_margin_rows(page))]
        assert f"{bp.coordinates['temperature'] - 273.15:.1f} degC" in \
            page.locator('[data-role="best-point"]').first.inner_text()
        page.wait_for_function(f"() => ({LAYERS})('map-0').best.x.length > 0", timeout=30000)
        layers = page.evaluate(LAYERS, "map-0")
        s_index = int(np.argmin(np.abs(ds.steam_to_carbon.values - sc.feed.steam_to_carbon)))
        _check_edge_passes_through_the_intervals(layers["edge"], ds, s_index)
        _check_markers(layers, bp)
        page.screenshot(path=str(artifacts / "app-edges.png"), full_page=True)
    assert errors == []


def test_review_file_marks_best_point_exact_edge_margins_and_outside_design(
        page, case, tmp_path, artifacts):
    sc, ds, bp, m = case
    (tmp_path / "s.toml").write_text(sc.to_toml(), "utf-8")
    (tmp_path / "p.json").write_text(json.dumps([]), "utf-8")
    path = tmp_path / "review.html"
    proc = subprocess.run([sys.executable, "-m", "explorer.export", "--scenario",
                           str(tmp_path / "s.toml"), "--pinned", str(tmp_path / "p.json"),
                           "-o", str(path)], capture_output=True, text=True, timeout=300)
    assert proc.returncode == 0, proc.stderr
    errors = []
    page.on("pageerror", lambda e: errors.append(str(e)))
    requests = offline(page)
    page.goto(path.as_uri())
    page.wait_for_function("() => window.Bokeh && Object.keys(Bokeh.index).length > 0",
                           timeout=30000)
    page.wait_for_function(f"() => ({FIND_PIXEL})(['map-0', 850, 20]) !== null", timeout=30000)
    assert requests == []
    warn = page.locator('[data-role="design-outside"]').first.inner_text()
    assert "design pressure 2.737 bar abs lies outside the window" in warn.lower()
    rows = table_cells(page.locator('table[data-table="margins"]').first.evaluate(
        "t => t.outerHTML"))
    assert rows == table_cells(margins_html(m))[:len(rows)]
    assert f"{bp.coordinates['temperature'] - 273.15:.1f} degC" in \
        page.locator('[data-role="best-point"]').first.inner_text()
    layers = page.evaluate(LAYERS, "map-0")
    s_index = int(np.argmin(np.abs(ds.steam_to_carbon.values - sc.feed.steam_to_carbon)))
    _check_edge_passes_through_the_intervals(layers["edge"], ds, s_index)
    _check_markers(layers, bp)
    page.screenshot(path=str(artifacts / "review-edges.png"), full_page=True)
    # The other orientation redraws both maps (S/C on the y axis) without a script error.
    page.get_by_text("temperature vs steam-to-carbon").first.click()
    for name in ("map-0", "map-1"):
        page.wait_for_function(
            f"() => Math.max(...({LAYERS})('{name}').edge.ys.flat()) <= 5.0001", timeout=10000)
    assert errors == []
