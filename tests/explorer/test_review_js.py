"""The review file's number formatting equals Python's, digit for digit.

The page assembles a clicked point's balance itself; its numbers must read exactly as the
app's (Python) tables do. The formatting functions of explorer/static/review.js run under Node.js
(installed on the project's machines) on values that include exact binary ties and values
whose shortest decimal form ends in 5.
"""

from __future__ import annotations

import json
import re
import shutil
import subprocess
from importlib import resources

import numpy as np
import pytest

NODE = shutil.which("node")


def _functions() -> str:
    js = resources.files("explorer").joinpath("static", "review.js").read_text("utf-8")
    out = []
    for name in ("pyFixed", "pyG"):
        m = re.search(rf"^function {name}\(.*?^}}\n", js, flags=re.S | re.M)
        assert m, name
        out.append(m.group(0))
    return "\n".join(out)


def _values() -> list[float]:
    rng = np.random.default_rng(5)
    vals = list(rng.lognormal(0, 6, 1500) * rng.choice([-1, 1], 1500))
    vals += [2.675, 0.125, 0.375, 2.5, 3.5, -1234.5, 1024.0625, 0.5, -0.125, 0.0, 1e-7,
             123456.789, 99.995, 0.0449999999999999, 1.0005, 5e-5, 206.2, -41.15]
    return [float(v) for v in vals]


@pytest.mark.usefixtures("node")  # skips without Node.js, fails in CI (tests/conftest.py)
@pytest.mark.parametrize("digits", [0, 1, 2, 3, 4])
def test_fixed_formatting_matches_python(digits):
    """review.js's pyFixed formats about 1,500 values (exact ties included) digit for digit as
    Python's f'{v:,.{d}f}', for 0-4 decimals."""
    vals = _values()
    script = (_functions() + f"\nconst vals = {json.dumps(vals)};\n"
              f"console.log(JSON.stringify(vals.map((v) => pyFixed(v, {digits}))));")
    out = json.loads(subprocess.run([NODE, "-e", script], capture_output=True, text=True,
                                    timeout=60, check=True).stdout)
    assert out == [f"{v:,.{digits}f}" for v in vals]


@pytest.mark.usefixtures("node")  # skips without Node.js, fails in CI (tests/conftest.py)
@pytest.mark.parametrize("precision", [3, 5])
def test_general_formatting_matches_python(precision):
    """review.js's pyG formats the same values digit for digit as Python's f'{v:.{p}g}', for 3
    and 5 significant digits."""
    vals = [v for v in _values() if v != 0.0]
    script = (_functions() + f"\nconst vals = {json.dumps(vals)};\n"
              f"console.log(JSON.stringify(vals.map((v) => pyG(v, {precision}))));")
    out = json.loads(subprocess.run([NODE, "-e", script], capture_output=True, text=True,
                                    timeout=60, check=True).stdout)
    want = [f"{v:.{precision}g}" for v in vals]
    bad = [(v, o, w) for v, o, w in zip(vals, out, want, strict=True) if o != w]
    assert not bad, bad[:5]


@pytest.mark.usefixtures("node")  # skips without Node.js, fails in CI (tests/conftest.py)
def test_page_assembles_a_train_balance_as_the_core_does(tmp_path):
    """The review file's script builds a clicked point's balance, the reforming train
    included, from the embedded arrays; its tables equal the app's (thermo.point)."""
    import thermo
    from explorer import review_data
    from explorer.tables import balance_html
    from tests.explorer.helpers import table_cells
    from tests.thermo.test_train import FULL_TRAIN
    from thermo.scenario import parse_scenario

    sc = parse_scenario(thermo.load_scenario().text + FULL_TRAIN).with_window(
        temperature=("760 degC", "940 degC", 4), pressure=("15 bar", "35 bar", 3),
        steam_to_carbon=(2.0, 4.0, 3))
    ds = thermo.sweep(sc)
    R = review_data.page_data(sc, ds)
    data = {k: np.asarray(v).tolist() for k, v in review_data.point_arrays(ds, sc).items()}
    flat = [0, 7, 20, 35]
    js = resources.files("explorer").joinpath("static", "review.js").read_text("utf-8")
    script = (f"globalThis.window = {{__rwData: {json.dumps(R)}}};\n"
              f"const pts = {{data: {json.dumps(data)}}};\n{js}\n"
              f"console.log(JSON.stringify({json.dumps(flat)}.map((p) => "
              "balanceHtml(assemble(p)))));")
    file = tmp_path / "assemble.js"
    file.write_text(script, "utf-8")
    out = json.loads(subprocess.run([NODE, str(file)], capture_output=True, text=True,
                                    timeout=60, check=True).stdout)
    dims = list(ds["h2_yield"].dims)
    shape = ds["h2_yield"].shape
    for p, shown in zip(flat, out, strict=True):
        g = ds.isel(dict(zip(dims, np.unravel_index(p, shape), strict=True)))
        pt = thermo.point(sc, temperature=f"{float(g.temperature)!r} K",
                          pressure=f"{float(g.pressure)!r} Pa",
                          steam_to_carbon=float(g.steam_to_carbon))
        want = table_cells(balance_html(pt.to_dict()))
        got = table_cells(shown)
        assert "Reforming train" in shown and "Low-temperature shift" in shown
        assert got == want, p


@pytest.mark.usefixtures("node")  # skips without Node.js, fails in CI (tests/conftest.py)
@pytest.mark.parametrize("units", ["metric", "us"])
def test_page_balance_equals_python_in_both_unit_systems(tmp_path, units):
    """The review file's script, given the factors of explorer.display for `units`, builds
    the same table text as explorer.tables.balance_html in that system (total row and gas
    volume columns included), and the file carries its system."""
    import thermo
    from explorer import review_data
    from explorer.display import conversions
    from explorer.tables import balance_html
    from tests.explorer.helpers import table_cells

    sc = thermo.load_scenario().with_window(
        temperature=("760 degC", "940 degC", 4), pressure=("15 bar", "35 bar", 3),
        steam_to_carbon=(2.0, 4.0, 3))
    ds = thermo.sweep(sc)
    R = review_data.page_data(sc, ds, units)
    assert R["units"] == units and R["conversions"] == conversions(units)
    data = {k: np.asarray(v).tolist() for k, v in review_data.point_arrays(ds, sc).items()}
    flat = [0, 13, 35]
    js = resources.files("explorer").joinpath("static", "review.js").read_text("utf-8")
    script = (f"globalThis.window = {{__rwData: {json.dumps(R)}}};\n"
              f"const pts = {{data: {json.dumps(data)}}};\n{js}\n"
              f"console.log(JSON.stringify({json.dumps(flat)}.map((p) => "
              "balanceHtml(assemble(p)))));")
    file = tmp_path / "assemble.js"
    file.write_text(script, "utf-8")
    out = json.loads(subprocess.run([NODE, str(file)], capture_output=True, text=True,
                                    timeout=60, check=True).stdout)
    dims = list(ds["h2_yield"].dims)
    shape = ds["h2_yield"].shape
    for p, shown in zip(flat, out, strict=True):
        g = ds.isel(dict(zip(dims, np.unravel_index(p, shape), strict=True)))
        pt = thermo.point(sc, temperature=f"{float(g.temperature)!r} K",
                          pressure=f"{float(g.pressure)!r} Pa",
                          steam_to_carbon=float(g.steam_to_carbon))
        want = table_cells(balance_html(pt.to_dict(), units))
        got = table_cells(shown)
        assert any(r and r[0] == "total gas" for r in got)
        assert got == want, p
    unit = {"metric": "Nm3/h", "us": "MMSCFD"}[units]
    assert f"in {unit}" in out[0]
