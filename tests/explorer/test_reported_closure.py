"""The element closure a user reads equals the closure of the flows shown beside it.

Every place that shows a balance (the point JSON, the text report of ``explorer point``, the
app's balance tables and the review file's script) reports ``|out - in| / in`` per element.
Here that figure is recomputed from the same place's inlet and outlet flows and graphite
deposit, with the formula of each species written out below (chemistry, not the project's
species.toml) and in exact rational arithmetic (``fractions.Fraction``) on the flows as
shown, so that the recomputation has no round-off of its own.

Tolerances: the product sums about ten float terms per element, so its closure may differ from
the exact one by a few times 10 x 2.2e-16 (double-precision epsilon) of the inlet amount;
``ROUND_OFF`` allows 5e-15. Closures printed with two significant digits may differ by half a
unit of their last digit as well. The points are chosen so that at least one closure is above
1e-12 (the solver's element balance converges to 1e-10, so real closures of 1e-13 to 1e-10
occur): a reported zero or a wrong figure is then far outside the tolerance.
"""

from __future__ import annotations

import json
import math
import re
import shutil
import subprocess
from fractions import Fraction
from importlib import resources

import numpy as np
import pytest

import thermo
from explorer.report import point_report
from explorer.tables import balance_html
from tests.explorer.helpers import small_scenario

NODE = shutil.which("node")

#: Atoms per molecule of every gas species (the formulas themselves; common chemistry).
FORMULAS = {
    "CH4": {"C": 1, "H": 4}, "C2H6": {"C": 2, "H": 6}, "C3H8": {"C": 3, "H": 8},
    "H2O": {"H": 2, "O": 1}, "H2": {"H": 2}, "CO": {"C": 1, "O": 1},
    "CO2": {"C": 1, "O": 2}, "O2": {"O": 2}, "N2": {"N": 2}, "Ar": {},
}
#: Elements whose closure is reported.
ELEMENTS = ("C", "H", "O", "N")
#: Allowed difference between a product's float closure and the exact one (module docstring).
ROUND_OFF = 5e-15
#: Points of the demo scenario (T, S/C) whose closures span round-off to about 1e-10.
POINTS = [(f"{t} degC", s) for t in (650, 750, 880, 950) for s in (1.0, 2.0, 3.0)]


def exact_closure(inlet: dict, outlet: dict, carbon: float) -> dict[str, float]:
    """|out - in| / in per element from flows by species [mol s-1] and graphite [mol s-1],
    in exact arithmetic on the given floats; 0 for an element absent from the inlet."""
    out = {}
    for e in ELEMENTS:
        b_in = sum(Fraction(inlet[s]) * FORMULAS[s].get(e, 0) for s in FORMULAS)
        b_out = sum(Fraction(outlet[s]) * FORMULAS[s].get(e, 0) for s in FORMULAS)
        if e == "C":
            b_out += Fraction(carbon)
        out[e] = float(abs(b_out - b_in) / b_in) if b_in > 0 else 0.0
    return out


def _of(d: dict) -> dict[str, float]:
    """The exact closure of a point dictionary's own flows (to_dict() key paths)."""
    return exact_closure(d["inlet"]["flow_mol_per_s"], d["outlet"]["flow_mol_per_s"],
                         d["carbon_deposit_mol_per_s"])


def _shown(text: str, sep: str) -> dict[str, float]:
    """Closures printed after 'Element closure |out - in| / in:' as 'C 1.2e-13<sep>H ...'."""
    line = text.split("Element closure |out - in| / in:", 1)[1].split("\n", 1)[0]
    line = re.sub(r"<[^>]+>", "", line)
    pairs = [p.split() for p in line.split(sep) if p.strip()]
    return {k: float(v) for k, v in pairs}


def _assert_printed(shown: dict[str, float], exact: dict[str, float]) -> None:
    """Printed closures (two significant digits) equal the exact ones to half a unit of their
    last digit plus round-off."""
    assert list(shown) == list(ELEMENTS)
    for e in ELEMENTS:
        v = shown[e]
        half_unit = 0.05 * 10.0 ** math.floor(math.log10(v)) if v > 0 else 0.0
        assert abs(v - exact[e]) <= half_unit + ROUND_OFF, (e, v, exact[e])


def _assert_has_teeth(exacts: list[dict[str, float]]) -> None:
    """At least one closure checked is well above the tolerance (module docstring)."""
    assert max(max(c.values()) for c in exacts) > 1e-12


@pytest.fixture(scope="module")
def demo_points():
    sc = thermo.load_scenario()
    return [thermo.point(sc, temperature=t, steam_to_carbon=s) for t, s in POINTS]


def test_point_json_closure_is_the_closure_of_its_flows(demo_points):
    """The point JSON's element_closure equals the exact closure of its own inlet and outlet
    flows and deposit, element by element, to ROUND_OFF (12 demo points)."""
    exacts = []
    for pt in demo_points:
        d = json.loads(json.dumps(pt.to_dict()))  # what `explorer point --json` prints
        exact = _of(d)
        exacts.append(exact)
        assert list(d["element_closure"]) == list(ELEMENTS)
        for e in ELEMENTS:
            assert d["element_closure"][e] == pytest.approx(exact[e], rel=0, abs=ROUND_OFF), e
    _assert_has_teeth(exacts)


def test_text_report_closure_is_the_closure_of_the_flows(demo_points):
    """The closure line of `explorer point`'s text report equals the exact closure of the
    point's flows to its two printed digits (12 demo points)."""
    exacts = []
    for pt in demo_points:
        exact = _of(pt.to_dict())
        exacts.append(exact)
        _assert_printed(_shown(point_report(pt), "  "), exact)
    _assert_has_teeth(exacts)


def test_app_balance_closure_is_the_closure_of_its_flows():
    """The app's balance view, at every node of a small window, prints the exact closure of
    the flows of the balance it shows (BalanceView's own point dictionary)."""
    from explorer.app import BalanceView, build_app

    page = build_app(small_scenario(), solve="now")
    s = page.explorer_state
    ds = s.dataset
    view = BalanceView(s)
    exacts = []
    for T in ds.temperature.values[:3]:
        for S in ds.steam_to_carbon.values:
            s.selected = {"temperature": float(T), "pressure": float(ds.pressure.values[0]),
                          "steam_to_carbon": float(S)}
            d = view._current
            assert d is not None and d["temperature_K"] == pytest.approx(float(T))
            exact = _of(d)
            exacts.append(exact)
            _assert_printed(_shown(view.tables.object, ","), exact)
    _assert_has_teeth(exacts)


def test_review_table_closure_is_what_balance_html_prints():
    """explorer.tables.balance_html prints the closure of the dictionary it is given (each
    element, two significant digits), whatever that dictionary holds."""
    d = thermo.point(thermo.load_scenario()).to_dict()
    d["element_closure"] = {"C": 3.24e-11, "H": 0.0, "O": 7.5e-14, "N": 1.0}
    assert _shown(balance_html(d), ",") == {"C": 3.2e-11, "H": 0.0, "O": 7.5e-14, "N": 1.0}


@pytest.mark.usefixtures("node")  # skips without Node.js, fails in CI (tests/conftest.py)
def test_review_file_closure_is_the_closure_of_its_flows(tmp_path):
    """The review file's script (review.js under Node.js) assembles, at every node of a small
    window, an element_closure equal to the exact closure of the flows it assembles, and its
    balance prints that closure to two digits."""
    from explorer import review_data

    sc = small_scenario()
    ds = thermo.sweep(sc)
    R = review_data.page_data(sc, ds)
    data = {k: np.asarray(v).tolist() for k, v in review_data.point_arrays(ds, sc).items()}
    n = int(ds["h2_yield"].size)
    js = resources.files("explorer").joinpath("static", "review.js").read_text("utf-8")
    script = (f"globalThis.window = {{__rwData: {json.dumps(R)}}};\n"
              f"const pts = {{data: {json.dumps(data)}}};\n{js}\n"
              f"const out = [];\nfor (let p = 0; p < {n}; p++) {{\n"
              "  const d = assemble(p);\n"
              "  out.push({inlet: d.inlet.flow_mol_per_s, outlet: d.outlet.flow_mol_per_s,\n"
              "            carbon: d.carbon_deposit_mol_per_s, closure: d.element_closure,\n"
              "            html: balanceHtml(d)});\n}\n"
              "console.log(JSON.stringify(out));")
    file = tmp_path / "closure.js"
    file.write_text(script, "utf-8")
    out = json.loads(subprocess.run([NODE, str(file)], capture_output=True, text=True,
                                    timeout=120, check=True).stdout)
    assert len(out) == n
    exacts = []
    for r in out:
        exact = exact_closure(r["inlet"], r["outlet"], r["carbon"])
        exacts.append(exact)
        assert list(r["closure"]) == list(ELEMENTS)
        for e in ELEMENTS:
            assert r["closure"][e] == pytest.approx(exact[e], rel=0, abs=ROUND_OFF), e
        _assert_printed(_shown(r["html"], ","), exact)
    _assert_has_teeth(exacts)
