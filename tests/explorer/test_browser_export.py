"""The review file in real headless Chromium, opened from file:// with the network cut off."""

from __future__ import annotations

import json
import subprocess
import sys
import time

import numpy as np
import pytest

import thermo
from explorer.tables import balance_html
from tests.explorer.helpers import (
    FIND_PIXEL,
    click_data_point,
    offline,
    small_scenario,
    table_cells,
)

pytestmark = pytest.mark.usefixtures("chromium_path")


@pytest.fixture(scope="module")
def review(tmp_path_factory):
    """The file as the app writes it: `python -m explorer.export` in a fresh process (Panel,
    once imported by another test in this process, would add CDN links to an in-process
    export; check_offline would refuse it)."""
    sc = small_scenario().with_notes("Reviewed with the process safety lead; see action 7.")
    pinned = [thermo.point(sc, temperature="850 degC", pressure="20 bar",
                           steam_to_carbon=3.0).to_dict()]
    folder = tmp_path_factory.mktemp("review")
    (folder / "s.toml").write_text(sc.to_toml(), "utf-8")
    (folder / "p.json").write_text(json.dumps(pinned), "utf-8")
    path = folder / "review.html"
    proc = subprocess.run([sys.executable, "-m", "explorer.export", "--scenario",
                           str(folder / "s.toml"), "--pinned", str(folder / "p.json"),
                           "-o", str(path)], capture_output=True, text=True, timeout=300)
    assert proc.returncode == 0, proc.stderr
    return sc, path


def _open(page, path):
    """Open the file with every non-file request aborted; returns (requests, page errors)."""
    errors = []
    page.on("pageerror", lambda e: errors.append(str(e)))
    requests = offline(page)
    page.goto(path.as_uri())
    page.wait_for_function("() => window.Bokeh && Object.keys(Bokeh.index).length > 0",
                           timeout=30000)
    page.wait_for_function(f"() => ({FIND_PIXEL})(['map-0', 850, 20]) !== null", timeout=30000)
    return requests, errors


def _model_text(page, name):
    return page.evaluate(f"() => Bokeh.documents[0].get_model_by_name('{name}').text")


def _click(page, name, x, y):
    click_data_point(page, name, x, y)


def _comparable(html):
    """Table rows, without the element-closure line (round-off of a different summation
    order)."""
    return table_cells(html)


def test_opens_offline_and_click_shows_the_cores_balance(page, review, artifacts):
    """The review file opened from file:// makes no request; a click at 850 degC, 20 bar shows
    that node's heading and a balance equal to balance_html of thermo.point there; no page error."""
    sc, path = review
    requests, errors = _open(page, path)
    assert requests == []  # not one request leaves the file
    _click(page, "map-0", 850.0, 20.0)
    page.wait_for_function("() => Bokeh.documents[0].get_model_by_name('balance-div')"
                           ".text.includes('Outlet summary')", timeout=10000)
    shown = _model_text(page, "balance-div")
    heading = _model_text(page, "balance-heading")
    assert "850.0 degC, 20.000 bar abs, S/C 3" in heading
    expected = balance_html(thermo.point(sc, temperature="850 degC", pressure="20 bar",
                                         steam_to_carbon=3.0).to_dict())
    assert _comparable(shown) == _comparable(expected)
    page.screenshot(path=str(artifacts / "review-file.png"), full_page=True)
    assert errors == []


def test_slider_changes_the_slice_and_the_click_follows_it(page, review):
    """A slider step changes map-0's data, and a click then shows the S/C 4 node's balance, equal
    to thermo.point's."""
    sc, path = review
    _open(page, path)
    before = page.evaluate("() => JSON.stringify(Bokeh.documents[0].get_model_by_name('map-0')"
                           ".renderers[0].data_source.data.xs)")
    handle = page.locator(".noUi-handle >> visible=true").first
    handle.focus()
    handle.press("ArrowRight")  # steam-to-carbon 3 -> 4
    time.sleep(0.3)
    after = page.evaluate("() => JSON.stringify(Bokeh.documents[0].get_model_by_name('map-0')"
                          ".renderers[0].data_source.data.xs)")
    assert after != before
    _click(page, "map-0", 900.0, 30.0)
    page.wait_for_function("() => Bokeh.documents[0].get_model_by_name('balance-heading')"
                           ".text.includes('900.0 degC')", timeout=10000)
    heading = _model_text(page, "balance-heading")
    assert "S/C 4" in heading
    shown = _model_text(page, "balance-div")
    expected = balance_html(thermo.point(sc, temperature="900 degC", pressure="30 bar",
                                         steam_to_carbon=4.0).to_dict())
    assert _comparable(shown) == _comparable(expected)


def test_review_sheet_carries_inputs_notes_limits_and_cautions(review):
    """The review file's sheet holds the inputs, limits, window, pinned point, notes, cautions
    and data sources (each phrase listed)."""
    # Values are the demo scenario's own (scenarios/demo.toml, invented data): flow 1100 kmol/h,
    # feed at 540 degC, maximum slip 4.5 mol %; the caution wording is explorer.CAUTION.
    sc, path = review
    text = path.read_text("utf-8")
    for needle in ("Review sheet", "Dry feed composition", "1,100.00 kmol/h", "540.0 degC",
                   "Approach to equilibrium", "Maximum methane slip (dry)", "4.5 mol %",
                   "Resulting window", "Pinned design points", "850.0 degC, 20.000 bar abs",
                   "Reviewed with the process safety lead", "toxic carbon monoxide",
                   "licensed engineering practice", "GRI-Mech 3.0", "ideal-gas mixture"):
        assert needle in text, needle


@pytest.fixture(scope="module")
def comparison(tmp_path_factory):
    """A comparison review file written as the CLI writes it (fresh process): the small
    demo window as the base, and a proposal that adds the whole reforming train."""
    from tests.thermo.test_train import FULL_TRAIN
    from thermo.scenario import parse_scenario

    base = small_scenario()
    proposal = parse_scenario(thermo.load_scenario().text.replace(
        'title = "', 'title = "Proposal with train: ') + FULL_TRAIN)
    folder = tmp_path_factory.mktemp("compare")
    (folder / "base.toml").write_text(base.to_toml(), "utf-8")
    (folder / "proposal.toml").write_text(proposal.to_toml(), "utf-8")
    path = folder / "compare.html"
    proc = subprocess.run([sys.executable, "-m", "explorer.export", "--scenario",
                           str(folder / "base.toml"), "--compare", str(folder / "proposal.toml"),
                           "-o", str(path)], capture_output=True, text=True, timeout=300)
    assert proc.returncode == 0, proc.stderr
    from thermo.compare import on_base_window

    return base, on_base_window(base, proposal), path


def test_comparison_file_maps_base_proposal_and_change_and_click_shows_both(page,
                                                                            comparison,
                                                                            artifacts):
    """The comparison file opens offline with base, proposal and change maps; a click on the
    change map shows the comparison and both balances equal to the core's, the train's shift
    stage included; no page error."""
    from explorer.tables import compare_point_html

    base, proposal, path = comparison
    requests, errors = _open(page, path)
    assert requests == []
    titles = [page.evaluate(f"() => Bokeh.documents[0].get_model_by_name('map-{i}')"
                            ".title.text") for i in range(3)]
    assert titles[0].startswith("Base: H2 product")
    assert titles[1].startswith("Proposal: H2 product")
    assert titles[2].startswith("Change: H2 product")
    _click(page, "map-2", 850.0, 20.0)
    page.wait_for_function("() => Bokeh.documents[0].get_model_by_name('balance-div')"
                           ".text.includes('Proposal')", timeout=10000)
    shown = _model_text(page, "balance-div")
    kw = dict(temperature="850 degC", pressure="20 bar", steam_to_carbon=3.0)
    a = thermo.point(base, **kw).to_dict()
    b = thermo.point(proposal, **kw).to_dict()
    want = table_cells(compare_point_html(a, b) + balance_html(a) + balance_html(b))
    assert table_cells(shown) == want
    assert "Low-temperature shift" in shown
    page.screenshot(path=str(artifacts / "review-comparison.png"), full_page=True)
    assert errors == []


def test_comparison_change_map_is_the_difference_of_the_two_grids(page, comparison):
    """The hover values of the change map's nodes equal proposal minus base (node values
    carry 6 significant digits in the file)."""
    base, proposal, path = comparison
    _open(page, path)
    values = page.evaluate("""() => [0, 1, 2].map((i) => Bokeh.documents[0]
        .get_model_by_name(`map-${i}`).renderers.find((r) => r.data_source.data.value)
        .data_source.data.value)""")
    b, p, d = (np.array(v, dtype=float) for v in values)
    np.testing.assert_allclose(d, p - b, rtol=1e-5, atol=1e-5 * np.abs(b).max())
    assert np.abs(d).max() > 0.1  # the train adds real H2 (shift): not a zero map
