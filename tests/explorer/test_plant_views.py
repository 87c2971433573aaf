"""The plant around the reformer where the user sees it: CLI (JSON and text), the balance
tables and CSV, the limit checks, the app's map chooser and form. Expected numbers come
from the core (thermo.point, thermo.sweep); the display conversions from explorer.tables.
"""

from __future__ import annotations

import json
import shutil
import subprocess
from html import unescape
from pathlib import Path

import pytest

import thermo
from explorer.cli import main
from explorer.form import ScenarioForm
from explorer.maps import PLANT_MAP_KEYS, VARIABLES
from explorer.state import ExplorerState
from explorer.tables import (
    PLANT_ROWS,
    balance_csv,
    balance_html,
    display,
    limit_checks,
    lookup,
    rows_for,
)
from explorer.views import BalanceView, MapsView
from tests.explorer.helpers import table_cells
from thermo.scenario import parse_scenario

ROOT = Path(__file__).resolve().parents[2]
PLANT = str(ROOT / "scenarios" / "hydrogen-plant.toml")
SMALL = dict(temperature=("800 degC", "920 degC", 4), pressure=("15 bar", "35 bar", 3),
             steam_to_carbon=(2.5, 4.5, 3))


@pytest.fixture(scope="module")
def scenario():
    return thermo.load_scenario(PLANT)


@pytest.fixture(scope="module")
def point_dict(scenario):
    return thermo.point(scenario).to_dict()


def test_cli_point_json_carries_the_plant(capsys, point_dict):
    code = main(["point", PLANT, "--json"])
    out, err = capsys.readouterr()
    assert code == 0, err
    d = json.loads(out)
    assert d["plant"] == json.loads(json.dumps(point_dict["plant"]))
    assert "plant" not in json.loads(json.dumps(thermo.point().to_dict()))


def test_cli_point_text_shows_the_plant(capsys, point_dict):
    code = main(["point", PLANT])
    out, _ = capsys.readouterr()
    assert code == 0
    assert "Plant: furnace, purification and steam" in out
    spec = display(point_dict["plant"]["specific_energy_J_per_mol_h2"], "specific_energy", 2)
    line = next(ln for ln in out.splitlines() if "Net specific energy" in ln
                and "GJ/1000 Nm3 H2" in ln)
    assert spec in line
    code = main(["point"])
    out, _ = capsys.readouterr()
    assert "Plant:" not in out


def test_cli_bad_plant_value_is_one_line(tmp_path, capsys):
    bad = tmp_path / "bad.toml"
    bad.write_text(Path(PLANT).read_text().replace('excess_air = "10 %"',
                                                   'excess_air = "300 %"'))
    code = main(["point", str(bad)])
    _, err = capsys.readouterr()
    assert code == 2
    assert "plant.excess_air = '300 %'" in err and "from 0 to 1" in err
    assert "Traceback" not in err and len(err.strip().splitlines()) == 1


def test_balance_html_has_the_plant_table_with_the_core_numbers(point_dict):
    html = balance_html(point_dict)
    assert "Plant: furnace, purification and steam" in html
    cells = {(unescape(r[0]), r[2]): r[1] for r in table_cells(html) if len(r) == 3}
    for label, unit, key, conv, dec in rows_for(PLANT_ROWS):
        assert cells[(label.strip(), unit)] == display(lookup(point_dict, key), conv, dec)
    assert "Plant:" not in balance_html(thermo.point().to_dict())


def test_balance_csv_has_the_plant_rows(point_dict):
    csv = balance_csv(point_dict)
    assert "plant,Fired duty (LHV)," in csv
    assert "plant,Net specific energy," in csv


def test_fired_duty_limit_in_the_checks(scenario, point_dict):
    checks = {name: (ok, words) for name, ok, words in limit_checks(point_dict,
                                                                    scenario.limits)}
    ok, words = checks["fired duty"]
    assert ok == (point_dict["plant"]["fired_duty_W"] <= scenario.limits.max_fired_duty)
    assert "limit 135" in words


def test_app_chooser_offers_plant_maps_only_with_a_plant(scenario):
    s = ExplorerState(scenario.with_window(**SMALL))
    assert s.right == "specific_energy"
    s._adopt(s.scenario, thermo.sweep(s.scenario))
    maps = MapsView(s)
    offered = set(maps.right.options.values())
    assert PLANT_MAP_KEYS <= offered
    assert maps.right.value == "specific_energy"
    plain = ExplorerState(thermo.load_scenario().with_window(**SMALL))
    plain._adopt(plain.scenario, thermo.sweep(plain.scenario))
    offered = set(MapsView(plain).right.options.values())
    assert not (PLANT_MAP_KEYS & offered)
    assert "specific_energy" in VARIABLES


def test_app_balance_shows_the_plant_table(scenario):
    sc = scenario.with_window(**SMALL)
    s = ExplorerState(sc)
    ds = thermo.sweep(sc)
    s._adopt(sc, ds)
    node = ds.isel(temperature=2, pressure=1, steam_to_carbon=1)
    s.selected = {"temperature": float(node.temperature), "pressure": float(node.pressure),
                  "steam_to_carbon": float(node.steam_to_carbon)}
    view = BalanceView(s)
    rows = [r for r in table_cells(view.tables.object) if r and r[0] == "Fired duty (LHV)"]
    assert rows and rows[0][1] == display(float(node["plant_fired_duty"]), "power", 2)


def test_form_keeps_the_plant_table(scenario):
    s = ExplorerState(scenario)
    form = ScenarioForm(s)
    again = parse_scenario(form.toml_text())
    assert again.plant == scenario.plant
    assert again.limits.max_fired_duty == scenario.limits.max_fired_duty


@pytest.mark.skipif(shutil.which("node") is None, reason="Node.js is not installed")
def test_review_script_assembles_the_plant_table_as_the_core_does(scenario, tmp_path):
    # The review file's script builds a clicked point's plant table from the embedded
    # per-point arrays; its tables equal the app's (thermo.point) row for row.
    from importlib import resources

    import numpy as np

    from explorer import review_data

    sc = scenario.with_window(**SMALL)
    ds = thermo.sweep(sc)
    R = review_data.page_data(sc, ds)
    data = {k: np.asarray(v).tolist() for k, v in review_data.point_arrays(ds, sc).items()}
    flat = [0, 13, 35]
    js = resources.files("explorer").joinpath("static", "review.js").read_text("utf-8")
    script = (f"globalThis.window = {{__rwData: {json.dumps(R)}}};\n"
              f"const pts = {{data: {json.dumps(data)}}};\n{js}\n"
              f"console.log(JSON.stringify({json.dumps(flat)}.map((p) => "
              "balanceHtml(assemble(p)))));")
    file = tmp_path / "assemble.js"
    file.write_text(script, "utf-8")
    out = json.loads(subprocess.run([shutil.which("node"), str(file)], capture_output=True,
                                    text=True, timeout=60, check=True).stdout)
    dims = list(ds["h2_yield"].dims)
    for p, shown in zip(flat, out, strict=True):
        g = ds.isel(dict(zip(dims, np.unravel_index(p, ds["h2_yield"].shape), strict=True)))
        pt = thermo.point(sc, temperature=f"{float(g.temperature)!r} K",
                          pressure=f"{float(g.pressure)!r} Pa",
                          steam_to_carbon=float(g.steam_to_carbon))
        assert "Plant: furnace" in shown
        assert table_cells(shown) == table_cells(balance_html(pt.to_dict()))


def test_form_edits_the_fired_duty_limit(scenario):
    s = ExplorerState(scenario)
    form = ScenarioForm(s)
    assert form.inputs["max_fired_duty"].value == "135 MW"
    form.inputs["max_fired_duty"].value = "120 MW"
    assert parse_scenario(form.toml_text()).limits.max_fired_duty == 120e6
    plain = ScenarioForm(ExplorerState(thermo.load_scenario()))
    plain.inputs["max_fired_duty"].value = "120 MW"
    assert not plain.submit()
    assert "[plant]" in plain.messages["max_fired_duty"].object
