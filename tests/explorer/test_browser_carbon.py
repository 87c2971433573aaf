"""A carbon risk found only by the path check shows as infeasible in the app and the review
file (real headless Chromium)."""

from __future__ import annotations

import re
import subprocess
import sys
from pathlib import Path

import pytest

import thermo
from tests.explorer.helpers import FIND_PIXEL, click_data_point, offline, served_app

pytestmark = pytest.mark.usefixtures("chromium_path")

ROOT = Path(__file__).resolve().parents[2]

#: The node clicked: outlet 800 degC, 6 bar abs, S/C 1.2 (the design S/C, so on the first
#: slice shown).
NODE = dict(temperature="800 degC", pressure="6 bar", steam_to_carbon=1.2)


def _scenario():
    """The biogas skid (scenarios/biogas-skid.toml) with a small window, inlet 500 degC, no
    approach and carbon-free as its only review limit."""
    text = (ROOT / "scenarios" / "biogas-skid.toml").read_text("utf-8")
    subs = {
        r'inlet_temperature = "450 degC"': 'inlet_temperature = "500 degC"',
        r"\nsteam_to_carbon = 2.5": "\nsteam_to_carbon = 1.2",
        r'approach = "15 K"': 'approach = "0 K"',
        r"temperature = \{ from = \"650 degC\".*\}":
            'temperature = { from = "750 degC", to = "900 degC", points = 4 }',
        r"pressure = \{ from = \"2 bar\".*\}":
            'pressure = { from = "2 bar", to = "10 bar", points = 3 }',
        r"steam_to_carbon = \{ from = 0.5.*\}":
            "steam_to_carbon = { from = 0.8, to = 2.0, points = 4 }",
        r'max_methane_slip_dry = "3 mol%"\n': "",
        r"min_h2_yield = 2.0\n": "",
        r'max_duty = "300 kW"\n': "",
    }
    for a, b in subs.items():
        text, n = re.subn(a, b, text)
        assert n == 1, a
    return thermo.parse_scenario(text)


@pytest.fixture(scope="module")
def case():
    sc = _scenario()
    d = thermo.point(sc, **NODE).to_dict()
    # Found only by the path check: the outlet gas alone is graphite-free (no deposit, its
    # activity below 1, the real gas at T too, no flag), yet the gas upstream in the tube is
    # not.
    assert d["carbon_deposit_mol_per_s"] == 0.0 and d["carbon_activity"] < 1.0
    assert d["carbon_activity_real_gas"] < 1.0
    assert d["carbon_activity_path_max"] > 1.0
    assert d["carbon_check"]["binding"] == "path_equilibrium"
    assert d["carbon_free"] is False
    return sc


def _wait_map(page):
    page.wait_for_function(f"() => ({FIND_PIXEL})(['map-0', 800, 6]) !== null", timeout=30000)


def _click(page):
    click_data_point(page, "map-0", 800.0, 6.0)


def test_app_shows_the_path_only_carbon_point_infeasible(page, case):
    pytest.importorskip("panel")
    with served_app(case) as url:
        page.goto(url)
        page.get_by_text("points solved").wait_for(timeout=90000)
        _wait_map(page)
        _click(page)
        page.get_by_text("800.0 degC, 6.000 bar abs, S/C 1.2").wait_for(timeout=15000)
        verdict = page.locator("p.rw-verdict").first.inner_text()
        assert "Outside the feasible window" in verdict
        assert "upstream in the tube" in verdict


def test_review_file_shows_the_path_only_carbon_point_infeasible(page, case, tmp_path):
    (tmp_path / "s.toml").write_text(case.to_toml(), "utf-8")
    out = tmp_path / "review.html"
    proc = subprocess.run([sys.executable, "-m", "explorer.export", "--scenario",
                           str(tmp_path / "s.toml"), "-o", str(out)], capture_output=True,
                          text=True, timeout=300)
    assert proc.returncode == 0, proc.stderr
    requests = offline(page)
    page.goto(out.as_uri())
    page.wait_for_function("() => window.Bokeh && Object.keys(Bokeh.index).length > 0",
                           timeout=30000)
    _wait_map(page)
    _click(page)
    page.wait_for_function("() => Bokeh.documents[0].get_model_by_name('balance-div')"
                           ".text.includes('Outlet summary')", timeout=10000)
    shown = page.evaluate("() => Bokeh.documents[0].get_model_by_name('balance-div').text")
    verdict = re.search(r'<p class="rw-verdict[^"]*">(.*?)</p>', shown, flags=re.S).group(1)
    assert "Outside the feasible window" in verdict and "carbon" in verdict
    assert "upstream in the tube" in verdict
    assert requests == []
