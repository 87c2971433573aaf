"""`explorer best` and the margins of `explorer point --json`: the JSON contract of the
edges issue, equal to the Python API (thermo.best_point, thermo.margins, thermo.point)."""

from __future__ import annotations

import json

import pytest

import thermo
from explorer.cli import main

BEST_KEYS = {"objective", "value", "temperature_K", "pressure_Pa", "steam_to_carbon",
             "feasible", "point", "margins"}
MARGIN_KEYS = {"value", "limit", "margin", "temperature_margin_K", "steam_to_carbon_margin"}


def run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


@pytest.mark.parametrize("objective", ["h2", "duty_per_h2", "methane_slip"])
def test_best_json_contract_and_equal_to_the_api(capsys, objective):
    code, out, err = run(capsys, "best", "--objective", objective, "--json")
    assert code == 0, err
    d = json.loads(out)
    assert BEST_KEYS <= set(d)
    assert d["objective"] == objective and d["feasible"] is True
    # The demo sets all four limits.
    assert set(d["margins"]) == {"methane_slip", "h2", "duty", "carbon"}
    for m in d["margins"].values():
        assert set(m) == MARGIN_KEYS
        assert m["margin"] >= 0  # the best point lies inside the window
    api = thermo.best_point(thermo.load_scenario(), objective)
    assert d == json.loads(json.dumps(api.to_dict()))
    # Its point is thermo.point at the exact coordinates.
    pt = thermo.point(temperature=f"{d['temperature_K']!r} K", pressure=f"{d['pressure_Pa']!r} Pa",
                      steam_to_carbon=d["steam_to_carbon"]).to_dict()
    assert d["point"] == json.loads(json.dumps(pt))


def test_best_text_names_the_point_and_shows_margins(capsys):
    code, out, _ = run(capsys, "best")
    assert code == 0
    assert "Best point for most H2" in out
    assert "Margins to the review limits" in out and "Sensitivities" in out


def test_unknown_objective_is_one_line_naming_the_option(capsys):
    code, out, err = run(capsys, "best", "--objective", "cheapest")
    assert code == 2 and out == ""
    assert err.startswith("explorer: error: --objective = 'cheapest'")
    assert "h2, duty_per_h2, methane_slip" in err and "Traceback" not in err


def test_point_json_gains_the_margins_of_its_point(capsys):
    code, out, err = run(capsys, "point", "--pressure", "25 psig", "--json")
    assert code == 0, err
    d = json.loads(out)
    assert set(d["margins"]) == {"methane_slip", "h2", "duty", "carbon"}
    ref = thermo.margins(thermo.load_scenario(), pressure="25 psig").to_dict()
    assert d["margins"] == json.loads(json.dumps(ref))
    # Sign convention: the duty is over its limit at 25 psig and 880 degC, so negative.
    assert d["margins"]["duty"]["margin"] == pytest.approx(80e6 - d["duty_W"], rel=1e-12)
    assert d["margins"]["duty"]["margin"] < 0 and d["margins"]["duty"]["temperature_margin_K"] < 0
