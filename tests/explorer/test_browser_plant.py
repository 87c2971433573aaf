"""The plant around the reformer in real headless Chromium: the served app and the offline
review file show the specific-energy map, the best point by least net specific energy (the
default objective with a [plant] table; thermo.best_point) and, for a clicked point, the plant
table with the core's numbers (thermo.point; tables rendered by explorer.tables)."""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

import pytest

import thermo
from explorer.limits_report import best_summary
from explorer.tables import balance_html, plant_html
from tests.explorer.helpers import FIND_PIXEL, click_data_point, offline, served_app, table_cells

pytestmark = pytest.mark.usefixtures("chromium_path")

ROOT = Path(__file__).resolve().parents[2]
#: 880 degC, 25 bar and S/C 3 (the design point) are grid nodes of this window.
WINDOW = dict(temperature=("760 degC", "940 degC", 4), pressure=("15 bar", "35 bar", 3),
              steam_to_carbon=(2.0, 4.0, 3))


def plant_scenario():
    return thermo.load_scenario(ROOT / "scenarios" / "hydrogen-plant.toml").with_window(**WINDOW)


def _core(sc):
    return thermo.point(sc, temperature="880 degC", pressure="25 bar", steam_to_carbon=3.0)


def _best_words(sc):
    """The sentence the page states for the best point: least specific energy, core's value."""
    bp = thermo.best_point(sc, with_margins=False)
    assert bp.objective.name == "specific_energy" and bp.feasible
    return best_summary(bp)


def _title(page, name):
    return page.evaluate(f"() => Bokeh.documents[0].get_model_by_name('{name}').title.text")


def _click(page, name, x, y):
    click_data_point(page, name, x, y)


def test_app_shows_the_specific_energy_map_and_the_plant_table(page, artifacts):
    pytest.importorskip("panel")
    sc = plant_scenario()
    errors = []
    page.on("pageerror", lambda e: errors.append(str(e)))
    with served_app(sc) as url:
        page.goto(url)
        page.get_by_text("points solved").wait_for(timeout=90000)
        page.wait_for_function(f"() => ({FIND_PIXEL})(['map-0', 880, 25]) !== null",
                               timeout=30000)
        assert "Net specific energy" in _title(page, "map-1")
        best = page.locator('[data-role="best-point"]', has_text="Best point for").first
        best.wait_for(timeout=60000)
        assert best.text_content().strip() == _best_words(sc)
        _click(page, "map-0", 880.0, 25.0)
        page.get_by_text("880.0 degC, 25.000 bar abs, S/C 3").wait_for(timeout=20000)
        # The clicked point's balance: not the best point's (inside data-role="best-balance",
        # folded) nor the summary's margin tables (named by data-table).
        page.get_by_text("Plant: furnace, purification and steam").filter(
            visible=True).first.wait_for(timeout=20000)
        html = page.locator('table.rw-table:not([data-table]):not([data-role="best-balance"] '
                            'table)').first.evaluate("t => t.closest('div').innerHTML")
        shown = table_cells(html)
        want = table_cells(plant_html(_core(sc).to_dict()))
        assert all(row in shown for row in want), [r for r in want if r not in shown][:3]
        page.screenshot(path=str(artifacts / "app-plant.png"), full_page=True)
    assert errors == []


@pytest.fixture(scope="module")
def review(tmp_path_factory):
    """Written as the app writes it: `python -m explorer.export` in a fresh process."""
    sc = plant_scenario()
    folder = tmp_path_factory.mktemp("plant-review")
    (folder / "s.toml").write_text(sc.to_toml(), "utf-8")
    path = folder / "review.html"
    proc = subprocess.run([sys.executable, "-m", "explorer.export", "--scenario",
                           str(folder / "s.toml"), "-o", str(path)], capture_output=True,
                          text=True, timeout=300)
    assert proc.returncode == 0, proc.stderr
    return sc, path


def test_review_file_shows_the_specific_energy_map_and_the_plant_table(page, review,
                                                                        artifacts):
    sc, path = review
    errors = []
    page.on("pageerror", lambda e: errors.append(str(e)))
    requests = offline(page)
    page.goto(path.as_uri())
    page.wait_for_function("() => window.Bokeh && Object.keys(Bokeh.index).length > 0",
                           timeout=30000)
    page.wait_for_function(f"() => ({FIND_PIXEL})(['map-0', 880, 25]) !== null",
                           timeout=30000)
    assert requests == []
    assert "Net specific energy" in _title(page, "map-1")
    # The sheet states the assumptions and the plant table at the design point.
    body = page.content()
    assert "Plant around the reformer: assumptions" in body
    assert page.locator('[data-role="best-point"]').first.text_content().strip() == \
        _best_words(sc)
    assert "(default, common practice)" in body
    _click(page, "map-0", 880.0, 25.0)
    page.wait_for_function("() => Bokeh.documents[0].get_model_by_name('balance-div')"
                           ".text.includes('Plant: furnace')", timeout=10000)
    shown = page.evaluate(
        "() => Bokeh.documents[0].get_model_by_name('balance-div').text")
    assert table_cells(shown) == table_cells(balance_html(_core(sc).to_dict()))
    page.screenshot(path=str(artifacts / "review-plant.png"), full_page=True)
    assert errors == []
