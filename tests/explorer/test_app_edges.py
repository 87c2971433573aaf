"""The app and the maps with exact edges, the best point and margins (no browser).

References: thermo.point at the exact coordinates (the core's public single-point API),
thermo.margins and thermo.best_point (tested against thermo.point in
tests/thermo/test_edges.py), and the Dataset's exact intervals.
"""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest

import thermo
from explorer import safe
from explorer.app import build_app
from explorer.limits_report import margins_html, margins_line
from explorer.maps import VARIABLES, exact_window_polygons, slice_fields, slice_layers
from explorer.views import BalanceView
from tests.explorer.helpers import small_scenario, table_cells


@pytest.fixture(scope="module")
def app():
    page = build_app(small_scenario(), solve="now")
    return page, page.explorer_state


def test_design_point_balance_is_the_core_at_the_exact_values(app):
    _, s = app
    sc = s.scenario
    exact = thermo.point(sc, temperature=f"{sc.temperature!r} K",
                         pressure=f"{sc.pressure!r} Pa",
                         steam_to_carbon=sc.feed.steam_to_carbon).to_dict()
    assert s.design_point().to_dict() == exact
    # The design point (880 degC, 22 barg) is off the 6 x 4 x 5 grid: not a snapped node.
    assert sc.temperature not in s.dataset.temperature.values


def test_typed_point_gets_its_exact_balance(app):
    _, s = app
    view = BalanceView(s)
    view.typed_t.value, view.typed_p.value, view.typed_s.value = "867.5 degC", "23.4 bar", "3.1"
    assert view.select_typed()
    ref = thermo.point(s.scenario, temperature="867.5 degC", pressure="23.4 bar",
                       steam_to_carbon=3.1).to_dict()
    assert view._current == ref
    assert "Typed point" in view.heading.object and "867.50 degC" in view.heading.object
    # A bad value gets its message and changes nothing.
    view.typed_p.value = "lots"
    assert not view.select_typed()
    assert "pressure" in view.typed_message.object and "lots" in view.typed_message.object
    s.select_index({"temperature": 0, "pressure": 0, "steam_to_carbon": 0})
    assert not s.typed


def test_summary_states_margins_and_best_point_equal_to_the_core(app):
    page, s = app
    summary = page.explorer_parts["summary"]
    ref = thermo.margins(s.scenario)
    # In words in the summary, as tables in the folded card.
    assert str(safe.text(margins_line(ref))) in summary.pane.object
    assert str(margins_html(ref)) in summary.design_margins.object
    bp = thermo.best_point(s.scenario, "h2", ds=s.dataset)
    c = bp.coordinates
    assert f"{c['temperature'] - 273.15:.1f} degC" in summary.best.object
    assert "exact edges" in summary.pane.object
    # The best point's full balance is the core's at its coordinates.
    d = thermo.point(s.scenario, temperature=f"{c['temperature']!r} K",
                     pressure=f"{c['pressure']!r} Pa",
                     steam_to_carbon=c["steam_to_carbon"]).to_dict()
    from explorer.tables import balance_html

    assert balance_html(d) in summary.best_balance.object


def test_objective_choice_moves_the_best_point(app):
    page, s = app
    summary = page.explorer_parts["summary"]
    s.objective = "duty_per_h2"
    assert "least duty per H2" in summary.best.object
    s.objective = "h2"


def test_design_point_outside_the_window_is_warned_and_marked_at_the_border():
    sc = small_scenario()
    sc = dataclasses.replace(sc, pressure=25 * 6894.757 + 101325.0)  # 25 psig, below 10 bar
    page = build_app(sc, solve="now")
    summary = page.explorer_parts["summary"]
    assert 'data-role="design-outside"' in summary.pane.object
    s = page.explorer_state
    lay = slice_layers(s.dataset, VARIABLES["h2_yield"], "pressure", s.fixed, sc.limits,
                       markers=s.markers())
    d = lay["design"]
    assert d["marker"] == ["triangle"] and d["y"] == [10.0]  # at the 10 bar border
    assert np.cos(d["angle"][0]) == pytest.approx(-1.0)  # pointing down, to lower pressure
    assert "outside the window" in d["text"][0]
    from explorer.form import ScenarioForm

    form = ScenarioForm(s)
    assert "design-outside" in form.messages["pressure"].object
    assert form.messages["temperature"].object == ""


def test_drawn_edge_runs_through_every_exact_interval_end_as_one_band(app):
    _, s = app
    cut = slice_fields(s.dataset, "pressure", s.fixed)
    _, edge = exact_window_polygons(cut, "pressure")
    pts = {(round(x, 9), round(y, 9)) for xs, ys in zip(edge["xs"], edge["ys"], strict=True)
           for x, y in zip(xs, ys, strict=True)}
    lo, hi = cut["feasible_t_low"].values, cut["feasible_t_high"].values
    t0, t1 = cut.temperature.values.min(), cut.temperature.values.max()
    for r, p in enumerate(cut.pressure.values):
        for e in np.concatenate([lo[r], hi[r]]):
            if np.isfinite(e) and t0 < e < t1:
                assert (round(e - 273.15, 9), round(p / 1e5, 9)) in pts
    # The small window's rows are 10 bar apart, farther than the band shifts in width: the
    # band is still one band (two edge lines per strip, no islands).
    rows_with_band = int(np.isfinite(lo).any(axis=1).sum())
    assert rows_with_band >= 2 and int(np.isfinite(lo).sum()) == rows_with_band
    assert len(edge["xs"]) == 2 * (rows_with_band - 1)


def test_review_sheet_lists_the_exact_intervals(app):
    from explorer.sheet import feasible_ranges_html

    _, s = app
    ds = s.dataset
    rows = table_cells(feasible_ranges_html(ds))
    j, k = 1, 2  # 20 bar, S/C 3 of the small window
    lo = ds["feasible_t_low"].isel(pressure=j, steam_to_carbon=k).values
    hi = ds["feasible_t_high"].isel(pressure=j, steam_to_carbon=k).values
    want = ", ".join(f"{a - 273.15:.1f}-{b - 273.15:.1f}"
                     for a, b in zip(lo, hi, strict=True) if np.isfinite(a)) or "none"
    assert rows[1 + k][1 + j] == want
