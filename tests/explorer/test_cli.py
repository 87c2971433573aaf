"""The `explorer point` command: JSON contract, human report, and one-line user errors."""

from __future__ import annotations

import json
import shutil
import subprocess
import sys

import pytest

import thermo
from explorer.cli import main
from thermo.species import GAS_SPECIES

CONTRACT_KEYS = {
    "temperature_K", "pressure_Pa", "steam_to_carbon", "converged", "inlet", "outlet",
    "carbon_deposit_mol_per_s", "carbon_activity", "h2_yield", "methane_slip_dry",
    "h2_co_ratio", "duty_W", "element_closure",
}


def run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def test_point_json_follows_the_contract_and_equals_the_api(capsys):
    """point --json holds the contract's keys, species tables in GAS_SPECIES order, closures of
    C, H, O, N, the SI values given, dry H2O 0, and equals thermo.point's to_dict() exactly."""
    code, out, err = run(capsys, "point", "--temperature", "850 degC", "--pressure", "25 bar",
                         "--steam-to-carbon", "3", "--json")
    assert code == 0, err
    d = json.loads(out)
    assert CONTRACT_KEYS <= set(d)
    assert set(d["inlet"]) >= {"flow_mol_per_s", "temperature_K"}
    assert set(d["outlet"]) >= {"flow_mol_per_s", "mass_flow_kg_per_s", "mole_fraction",
                                "mole_fraction_dry"}
    for table in (d["inlet"]["flow_mol_per_s"], d["outlet"]["mole_fraction_dry"]):
        assert list(table) == list(GAS_SPECIES)
    assert set(d["element_closure"]) == {"C", "H", "O", "N"}
    assert d["temperature_K"] == pytest.approx(1123.15, abs=1e-12)
    assert d["pressure_Pa"] == 2.5e6
    assert d["outlet"]["mole_fraction_dry"]["H2O"] == 0.0
    api = thermo.point(temperature="850 degC", pressure="25 bar", steam_to_carbon=3.0).to_dict()
    # The point's own object, plus its margins and sensitivities (tests/explorer/test_cli_best).
    extra = {"margins", "sensitivities"}
    assert {k: v for k, v in d.items() if k not in extra} == json.loads(json.dumps(api))


def test_options_override_the_scenario_and_gauge_pressure_is_understood(capsys):
    """Options override the scenario: 24 barg is 24 bar + 1 atm absolute; the CO2 co-feed, feed,
    inlet temperature and approach given are the ones used (CO2 in = 0.5 x hydrocarbon carbon, no
    N2)."""
    code, out, _ = run(capsys, "point", "--pressure", "24 barg", "--co2-to-carbon", "0.5",
                       "--feed", "CH4=0.9,C2H6=0.1", "--inlet-temperature", "500 degC",
                       "--approach", "0 K", "--json")
    assert code == 0
    d = json.loads(out)
    # Gauge pressure is absolute minus 1 atm = 1.01325 bar (NIST-SP811 for the atmosphere).
    assert d["pressure_Pa"] == pytest.approx(24e5 + 101325.0, rel=1e-15)
    assert d["co2_to_carbon"] == 0.5
    assert d["inlet"]["temperature_K"] == pytest.approx(773.15)
    carbon = d["inlet"]["flow_mol_per_s"]["CH4"] + 2 * d["inlet"]["flow_mol_per_s"]["C2H6"]
    assert d["inlet"]["flow_mol_per_s"]["CO2"] == pytest.approx(0.5 * carbon, rel=1e-12)
    assert d["inlet"]["flow_mol_per_s"]["N2"] == 0.0
    assert d["approach_K"] == 0.0


def test_json_is_strict_where_h2_co_is_infinite(capsys):
    """Where no CO can form, the JSON holds null for H2/CO (no Infinity or NaN text) and the
    point deposits graphite."""
    # No oxygen anywhere (dry methane, no CO2): no CO can form, so H2/CO is null, not Infinity.
    code, out, _ = run(capsys, "point", "--feed", "CH4=1", "--steam-to-carbon", "0",
                       "--temperature", "700 degC", "--json")
    assert code == 0
    d = json.loads(out)  # json.loads accepts Infinity; check the text itself
    assert "Infinity" not in out and "NaN" not in out
    assert d["h2_co_ratio"] is None
    assert d["carbon_deposit_mol_per_s"] > 0


def test_human_report_shows_engineering_units_and_the_caution(capsys):
    """The text report shows kmol/h, kg/h, dry mol%, MW, degC, the 1 bar standard state and the
    caution's words."""
    code, out, _ = run(capsys, "point", "--temperature", "850 degC", "--pressure", "25 bar")
    assert code == 0
    for text in ("kmol/h", "kg/h", "dry mol%", "MW", "degC", "1 bar standard state",
                 "licensed engineering practice", "toxic carbon monoxide"):
        assert text in out


def test_adiabatic_point_has_zero_duty(capsys):
    """point --adiabatic reports adiabatic, a duty of zero to 1e-6 of the inlet enthalpy, and an
    outlet colder than the inlet."""
    code, out, _ = run(capsys, "point", "--adiabatic", "--inlet-temperature", "500 degC",
                       "--steam-to-carbon", "2.5", "--json")
    assert code == 0
    d = json.loads(out)
    assert d["adiabatic"] is True
    assert abs(d["duty_W"]) <= 1e-6 * abs(d["inlet"]["enthalpy_W"])
    assert d["temperature_K"] < d["inlet"]["temperature_K"]  # reforming is endothermic


@pytest.mark.parametrize(
    ("argv", "named"),
    [
        (["--pressure", "-3 bar"], "--pressure"),
        (["--pressure", "0 bar"], "--pressure"),
        (["--temperature", "850"], "--temperature"),
        (["--temperature", "5000 degC"], "--temperature"),
        (["--steam-to-carbon", "-1"], "--steam-to-carbon"),
        (["--steam-to-carbon", "abc"], "--steam-to-carbon"),
        (["--oxygen-to-carbon", "-0.1"], "--oxygen-to-carbon"),
        (["--feed", "CH4=0.9"], "--feed"),
        (["--feed", "CH4=0.9,XE=0.1"], "XE"),
        (["--feed", "CH4=1.1,N2=-0.1"], "N2"),
        (["--approach", "fast"], "--approach"),
        (["--inlet-temperature", "20 bar"], "--inlet-temperature"),
        (["no-such-file.toml"], "no-such-file.toml"),
        (["--bogus"], "--bogus"),
    ],
)
def test_bad_input_is_one_line_naming_the_field_exit_2(capsys, argv, named):
    """Each bad input exits 2 with nothing on stdout and one stderr line starting 'explorer:
    error: ' that names the field, without a traceback."""
    code, out, err = run(capsys, "point", *argv)
    assert code == 2
    assert out == ""
    lines = err.strip().splitlines()
    assert len(lines) == 1, err
    assert lines[0].startswith("explorer: error: ")
    assert named in lines[0]
    assert "Traceback" not in err


@pytest.mark.skipif(shutil.which("explorer") is None, reason="console script not installed")
def test_console_script_exit_code_and_no_traceback():
    """The installed console script exits 2 on a negative pressure, names --pressure and shows no
    traceback."""
    proc = subprocess.run(["explorer", "point", "--pressure", "-1 bar"], capture_output=True,
                          text=True, timeout=120)
    assert proc.returncode == 2
    assert "Traceback" not in proc.stderr
    assert "--pressure" in proc.stderr


def test_module_entry_point_runs():
    """python -m explorer.cli point --json runs and prints a converged point."""
    proc = subprocess.run([sys.executable, "-m", "explorer.cli", "point", "--json"],
                          capture_output=True, text=True, timeout=120)
    assert proc.returncode == 0, proc.stderr
    assert json.loads(proc.stdout)["converged"] is True


def test_point_json_of_a_train_carries_every_stage(capsys):
    """The shipped ammonia scenario (invented data): four stages, the train's totals."""
    from thermo.scenario import DEMO_PATH

    path = DEMO_PATH.parent / "ammonia-front-end.toml"
    code, out, _ = run(capsys, "point", str(path), "--json")
    assert code == 0
    d = json.loads(out)
    tr = d["train"]
    assert [s["name"] for s in tr["stages"]] == ["primary_reformer", "secondary_reformer",
                                                 "high_temperature_shift",
                                                 "low_temperature_shift"]
    sec = tr["stages"][1]
    assert abs(sec["duty_W"]) <= 1e-6 * abs(sec["inlet_enthalpy_W"])  # adiabatic
    hc = d["hydrocarbon_carbon_mol_per_s"]
    assert tr["h2_product"] == pytest.approx(tr["product"]["flow_mol_per_s"]["H2"] / hc)
    assert tr["duty_W"] == pytest.approx(d["duty_W"])  # no pre-reformer: no reheat
    assert tr["stages"][0]["outlet_flow_mol_per_s"] == d["outlet"]["flow_mol_per_s"]


def test_export_compare_with_a_bad_proposal_names_it(capsys, tmp_path):
    """export --compare with an invalid proposal exits 2 with one line naming the proposal file
    and its key, no traceback and no file written."""
    bad = tmp_path / "proposal.toml"
    bad.write_text(thermo.load_scenario().text + '\n[train.low_temperature_shift]\n'
                   'temperature = "40 degC"\n', "utf-8")
    code, out, err = run(capsys, "export", "--compare", str(bad), "-o",
                         str(tmp_path / "r.html"))
    assert code == 2 and out == ""
    line = err.strip()
    assert "\n" not in line and "Traceback" not in err
    assert f"--compare {bad}: train.low_temperature_shift.temperature" in line
    assert not (tmp_path / "r.html").exists()


def test_export_compare_writes_one_offline_comparison_file(tmp_path):
    """`explorer export BASE --compare PROPOSAL` in a fresh process (see test_export_unit)."""
    from explorer.export import check_offline
    from tests.explorer.helpers import small_scenario

    base = tmp_path / "base.toml"
    base.write_text(small_scenario().to_toml(), "utf-8")
    out = tmp_path / "review.html"
    from thermo.scenario import DEMO_PATH

    proposal = DEMO_PATH.parent / "demo-proposal.toml"
    proc = subprocess.run([sys.executable, "-m", "explorer.cli", "export", str(base),
                           "--compare", str(proposal), "-o", str(out)],
                          capture_output=True, text=True, timeout=300)
    assert proc.returncode == 0, proc.stderr
    assert f"comparison with {proposal}" in proc.stdout
    text = out.read_text("utf-8")
    check_offline(text)
    assert "Comparison: base and proposal" in text
    assert "pre-reformer" in text.lower()
    assert sorted(p.name for p in tmp_path.iterdir()) == ["base.toml", "review.html"]
