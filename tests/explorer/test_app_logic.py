"""The explorer's session logic without a browser: state, views, form, upload, notes, downloads.

Where the numbers come from: grid coordinates, the design point and the review limits are
those of the demo scenario file (scenarios/demo.toml) narrowed to the small window of
tests/explorer/helpers.py (SMALL_WINDOW). Click positions, edited field values, timeouts and
the other numbers typed below are test inputs picked for these tests (common practice, no
source). Expected results are computed by the core (thermo.point, thermo.sweep.feasible_mask)
or by numpy here, never typed in.
"""

from __future__ import annotations

import csv
import dataclasses
import io
import json
import threading
import time

import numpy as np
import pytest
import xarray as xr

import thermo
from explorer import state as state_module
from explorer.app import (
    BalanceView,
    MapsView,
    NotesView,
    PinnedView,
    ScenarioForm,
    build_app,
)
from explorer.form import MAX_UPLOAD_BYTES
from explorer.maps import VARIABLES
from explorer.state import SHARED_CACHE
from explorer.tables import display
from tests.explorer.helpers import small_scenario, table_cells
from thermo import io as grid_io
from thermo.scenario import parse_scenario
from thermo.sweep import feasible_mask

#: Longest wait for a background solve of a small window [s] (common practice, no source).
SOLVE_TIMEOUT = 60.0


# ----------------------------------------------------------------------------- helpers
def wait_until_solved(state, timeout: float = SOLVE_TIMEOUT) -> None:
    """Call state.poll() (as the served app's periodic callback does) until it reports done."""
    start = time.monotonic()
    while not state.poll():
        if time.monotonic() - start > timeout:
            raise AssertionError(f"background solve not done after {timeout} s")
        time.sleep(0.02)


def nearest(values: np.ndarray, target: float) -> int:
    return int(np.argmin(np.abs(np.asarray(values) - target)))


def point_at(sc, T_K: float, P_Pa: float, s_c: float):
    """The core's result at exactly these grid coordinates (pint quantities, not strings)."""
    q = thermo.units.ureg.Quantity
    return thermo.point(sc, temperature=q(T_K, "K"), pressure=q(P_Pa, "Pa"),
                        steam_to_carbon=s_c)


def summary_value(html: str, label: str) -> str:
    """The value cell of a row of the balance's outlet summary."""
    rows = [r for r in table_cells(html) if r and r[0] == label]
    assert rows, f"no row {label!r} in the balance"
    return rows[0][1]


def round_trip_scenario():
    """The small scenario with the design pressure "20 bar" instead of the demo's "22 barg"
    (the writer keeps the typed text; see test_limits_change_keeps_design_pressure)."""
    sc = small_scenario()
    old = 'pressure = "22 barg"'
    text = sc.to_toml()
    assert text.count(old) == 1
    return parse_scenario(text.replace(old, 'pressure = "20 bar"'))


@pytest.fixture
def app():
    page = build_app(small_scenario(), solve="now")
    return page, page.explorer_state


# --------------------------------------------------------------- design point and balance
def test_build_selects_the_design_node_and_the_balance_shows_it(app):
    """The built app is solved and selects the grid node nearest the (off-grid) design point; the
    balance view's heading, outlet temperature and H2 yield are that node's, equal to
    thermo.point and to the grid."""
    page, s = app
    sc, ds = s.scenario, s.dataset
    assert ds is not None and not s.busy
    assert ds["h2_yield"].dims == ("temperature", "pressure", "steam_to_carbon")
    # nearest grid node to the scenario's design point, computed here with numpy
    i = nearest(ds.temperature.values, sc.temperature)
    j = nearest(ds.pressure.values, sc.pressure)
    k = nearest(ds.steam_to_carbon.values, sc.feed.steam_to_carbon)
    expected = {"temperature": float(ds.temperature.values[i]),
                "pressure": float(ds.pressure.values[j]),
                "steam_to_carbon": float(ds.steam_to_carbon.values[k])}
    assert s.selected == expected
    # the design point is off the grid, so this is a real snap, not an identity
    assert expected["temperature"] != sc.temperature and expected["pressure"] != sc.pressure

    view = BalanceView(s)
    t_text = f"{expected['temperature'] - 273.15:.1f} degC"
    assert t_text in view.heading.object
    html = view.tables.object
    assert summary_value(html, "Outlet temperature") == f"{expected['temperature'] - 273.15:.1f}"
    pt = point_at(sc, expected["temperature"], expected["pressure"],
                  expected["steam_to_carbon"])
    assert summary_value(html, "H2 yield") == display(pt.h2_yield, "", 4)
    # the grid holds the same number at that node
    assert float(ds["h2_yield"].values[i, j, k]) == pytest.approx(pt.h2_yield, rel=1e-12)


# ------------------------------------------------------------------------------ clicks
def test_click_between_nodes_snaps_to_the_nearest_node_pressure_mode(app):
    """A click between nodes in pressure mode selects the nearest node, and its point equals
    thermo.point there exactly."""
    _, s = app
    ds = s.dataset
    T_C = ds.temperature.values - 273.15
    P_bar = ds.pressure.values / 1e5
    # a click 40 % of the way from node 2 to node 3 in T and 70 % from node 1 to 2 in P
    x = T_C[2] + 0.4 * (T_C[3] - T_C[2])
    y = P_bar[1] + 0.7 * (P_bar[2] - P_bar[1])
    s.select_display(x, y)
    k = s.fixed["steam_to_carbon"]
    assert s.selected == {"temperature": float(ds.temperature.values[2]),
                          "pressure": float(ds.pressure.values[2]),
                          "steam_to_carbon": float(ds.steam_to_carbon.values[k])}
    got = s.selected_point().to_dict()
    want = point_at(s.scenario, ds.temperature.values[2], ds.pressure.values[2],
                    ds.steam_to_carbon.values[k]).to_dict()
    assert got == want


def test_click_in_steam_to_carbon_mode_reads_y_as_steam_to_carbon(app):
    """In steam-to-carbon mode a click's y is read as S/C: the nearest S/C node is selected at
    the slider's pressure, and its point equals thermo.point there."""
    _, s = app
    ds = s.dataset
    s.mode = "steam_to_carbon"
    S = ds.steam_to_carbon.values
    T_C = ds.temperature.values - 273.15
    # y = 2.4 lies between S/C nodes 1 (2.0) and 2 (3.0); a bar reading of 2.4 would be far
    # outside the pressure axis, so this also shows y is not taken as pressure
    y = S[1] + 0.4 * (S[2] - S[1])
    x = T_C[4] - 0.3 * (T_C[4] - T_C[3])
    s.select_display(x, y)
    j = s.fixed["pressure"]
    assert s.selected == {"temperature": float(ds.temperature.values[4]),
                          "pressure": float(ds.pressure.values[j]),
                          "steam_to_carbon": float(S[1])}
    got = s.selected_point().to_dict()
    want = point_at(s.scenario, ds.temperature.values[4], ds.pressure.values[j], S[1]).to_dict()
    assert got == want
    assert got["steam_to_carbon"] == float(S[1])


# ---------------------------------------------------------------------------------- maps
def test_changing_the_slice_updates_both_maps_without_recomputing(app):
    """A slice change restyles both maps' data (same figures and sources, no new Dataset), and
    the left map's node values are the grid's H2 yield on the new slice."""
    _, s = app
    maps = MapsView(s)
    ds = s.dataset
    figs = [p.object for p in maps.panes]
    sources = [dict(src) for src in maps.sources]
    s.fixed = dict(s.fixed, steam_to_carbon=0)
    before = [src["bands"].data for src in maps.sources]
    values_before = list(maps.sources[0]["nodes"].data["value"])
    s.fixed = dict(s.fixed, steam_to_carbon=ds.sizes["steam_to_carbon"] - 1)
    after = [src["bands"].data for src in maps.sources]
    for b, a in zip(before, after, strict=True):
        assert b["xs"] != a["xs"] or b["band"] != a["band"]
    assert s.dataset is ds  # no new solve, no new Dataset
    assert [p.object for p in maps.panes] == figs  # same figures, only their data changed
    for old, src in zip(sources, maps.sources, strict=True):
        assert all(src[k] is old[k] for k in old)
    # node values of the left map are the grid's H2 yield on the new slice, P rows by T
    want = ds["h2_yield"].isel(steam_to_carbon=-1).transpose("pressure", "temperature")
    got = maps.sources[0]["nodes"].data["value"]
    assert got == pytest.approx(want.values.ravel().tolist(), rel=1e-12)
    assert got != values_before


def test_changing_the_left_variable_restyles_the_left_figure(app):
    """The same figure (the browser keeps its click subscription) shows the new variable:
    title, colour scale and node values; the right map is untouched."""
    _, s = app
    maps = MapsView(s)
    old_left, old_right = maps.panes[0].object, maps.panes[1].object
    right_title = old_right.title.text
    assert old_left.title.text == VARIABLES["h2_yield"].title
    s.left = "duty"
    fig = maps.panes[0].object
    assert fig is old_left
    assert fig.title.text == VARIABLES["duty"].title
    duty_MW = VARIABLES["duty"].values(s.dataset)
    assert max(v for v in maps.sources[0]["nodes"].data["value"] if v is not None) <= \
        float(duty_MW.max()) + 1e-9
    from bokeh.models import ColorBar

    assert fig.select_one({"type": ColorBar}).title == "MW"
    assert maps.panes[1].object.title.text == right_title


def test_selected_marker_is_faded_off_its_slice(app):
    """The selected marker is opaque at the clicked node on its slice, faded (alpha 0.35) on
    another slice and opaque again on return."""
    _, s = app
    maps = MapsView(s)
    ds = s.dataset
    k0 = s.fixed["steam_to_carbon"]
    T_C = ds.temperature.values - 273.15
    s.select_display(T_C[1], ds.pressure.values[3] / 1e5)
    on = [src["selected"].data for src in maps.sources]
    for d in on:
        assert d["alpha"] == [1.0]
        assert d["x"] == [pytest.approx(T_C[1])]
        assert d["y"] == [pytest.approx(ds.pressure.values[3] / 1e5)]
    other = (k0 + 1) % ds.sizes["steam_to_carbon"]
    s.fixed = dict(s.fixed, steam_to_carbon=other)
    for src in maps.sources:
        assert src["selected"].data["alpha"] == [0.35]
        assert src["selected"].data["x"] == [pytest.approx(T_C[1])]
    s.fixed = dict(s.fixed, steam_to_carbon=k0)
    for src in maps.sources:
        assert src["selected"].data["alpha"] == [1.0]


# ---------------------------------------------------------------------------------- form
@pytest.mark.parametrize("field, text, key", [
    ("p_from", "-5 bar", "window.pressure.from"),
    ("composition", "CH4=0.9", "feed.composition"),
    ("t_points", "0", "window.temperature.points"),
    ("t_from", "850 degX", "window.temperature.from"),  # pint knows degK, not degX
    ("max_duty", "90 furlong", "limits.max_duty"),
])
def test_invalid_entry_is_refused_beside_its_field(app, field, text, key):
    """Each invalid form entry is refused with a message beside its own field only and 'Not
    applied' naming the key; scenario and Dataset are unchanged and nothing solves."""
    _, s = app
    form = ScenarioForm(s)
    before_sc, before_ds = s.scenario, s.dataset
    form.inputs[field].value = text
    assert form.submit() is False
    assert form.messages[field].object
    others = [n for n, m in form.messages.items() if m.object and n != field]
    assert others == []
    assert form.general.object.startswith("Not applied")
    assert key in form.general.object
    assert s.scenario is before_sc and s.dataset is before_ds and not s.busy


def test_limits_change_applies_without_a_new_solve():
    """A limit edit applies without a solve (cache misses unchanged, same numbers): feasible
    becomes feasible_mask for the new limits, the count changes and the selection stays."""
    s = build_app(round_trip_scenario(), solve="now").explorer_state
    form = ScenarioForm(s)
    ds0, selected0 = s.dataset, dict(s.selected)
    misses = SHARED_CACHE.misses
    old_count = int(ds0["feasible"].sum())
    form.inputs["max_duty"].value = "90 MW"
    assert form.submit() is True
    assert not s.busy and SHARED_CACHE.misses == misses
    assert s.scenario.limits.max_duty == 90e6
    ds = s.dataset
    assert ds.sizes == ds0.sizes
    for name in ("h2_yield", "duty", "outlet_flow"):
        np.testing.assert_array_equal(ds[name].values, ds0[name].values)
    expected = feasible_mask(ds0, s.scenario.limits)
    np.testing.assert_array_equal(ds["feasible"].values, expected.values)
    assert int(ds["feasible"].sum()) != old_count  # the change moved the window
    assert s.selected == selected0


def test_limits_change_keeps_design_pressure(app):
    """A limit edit keeps the design pressure and starts no solve."""
    _, s = app
    form = ScenarioForm(s)
    P0 = s.scenario.pressure
    form.inputs["max_duty"].value = "90 MW"
    try:
        assert form.submit() is True
        assert s.scenario.pressure == P0
        assert not s.busy
    finally:
        if s.busy:
            wait_until_solved(s)


def test_window_change_solves_in_background_then_adopts(app):
    """A window edit solves in the background (busy, pins and selection cleared), then adopts the
    3-temperature Dataset and selects a point."""
    _, s = app
    form = ScenarioForm(s)
    s.pin()
    form.inputs["t_points"].value = "3"
    assert form.submit() is True
    assert s.busy is True
    assert s.pinned == [] and s.selected is None
    wait_until_solved(s)
    assert not s.busy
    assert s.dataset["h2_yield"].shape == (3, 4, 5)
    assert s.dataset.temperature.size == s.scenario.window.temperature.points == 3
    assert s.selected is not None and s.selected_point() is not None


def test_notes_typed_during_a_solve_do_not_discard_it(app):
    """Notes typed while a window solves do not discard the solve: the new 3-temperature Dataset
    is adopted."""
    _, s = app
    s.set_scenario(s.scenario.with_window(temperature=("700 degC", "950 degC", 3)))
    s.notes = "typed while the window was solving"
    wait_until_solved(s)
    assert s.dataset.temperature.size == 3


class _BlockingCache:
    """SHARED_CACHE stand-in whose solves wait for a signal (to order two edits)."""

    def __init__(self, real):
        self.real, self.go = real, threading.Event()

    def key(self, sc):
        return self.real.key(sc)

    def __contains__(self, sc):
        return False  # every solve goes through get() and waits

    def get(self, sc, **kwargs):
        self.go.wait(SOLVE_TIMEOUT)
        return self.real.get(sc, **kwargs)


def test_second_window_edit_during_a_solve_is_solved(app, monkeypatch):
    """A second window edit during a blocked solve wins: the adopted Dataset has the second
    window's 5 temperatures."""
    _, s = app
    blocking = _BlockingCache(SHARED_CACHE)
    monkeypatch.setattr(state_module, "SHARED_CACHE", blocking)
    base = s.scenario
    try:
        s.set_scenario(base.with_window(temperature=("700 degC", "950 degC", 4)))
        s.set_scenario(base.with_window(temperature=("700 degC", "950 degC", 5)))
    finally:
        blocking.go.set()
    wait_until_solved(s)
    time.sleep(0.2)
    s.poll()
    assert s.dataset.temperature.size == s.scenario.window.temperature.points == 5


# -------------------------------------------------------------------------------- upload
def test_upload_too_large_is_refused(app):
    """An upload above MAX_UPLOAD_BYTES is refused with 'Not loaded' quoting the limit, and the
    scenario is unchanged."""
    _, s = app
    form = ScenarioForm(s)
    before = s.scenario
    form.upload.filename = "big.toml"
    form.upload.value = b"#" * (MAX_UPLOAD_BYTES + 1)
    assert "Not loaded" in form.general.object
    assert f"{MAX_UPLOAD_BYTES:,}" in form.general.object
    assert s.scenario is before


def test_upload_not_utf8_is_refused(app):
    """A Latin-1 upload is refused as not UTF-8 text, and the scenario is unchanged."""
    _, s = app
    form = ScenarioForm(s)
    before = s.scenario
    form.upload.filename = "latin1.toml"
    form.upload.value = 'title = "Gullmarsvik k\u00e4rl"\n'.encode("latin-1")
    assert form.general.object == "Not loaded: the file is not UTF-8 text."
    assert s.scenario is before


def test_upload_with_unknown_key_is_refused_naming_it(app):
    """An upload with an unknown key is refused naming it, and the scenario is unchanged."""
    _, s = app
    form = ScenarioForm(s)
    before = s.scenario
    form.upload.filename = "extra.toml"
    form.upload.value = ('colour = "red"\n' + before.to_toml()).encode("utf-8")
    assert form.general.object.startswith("Not loaded")
    assert "colour" in form.general.object
    assert s.scenario is before


def test_valid_upload_is_adopted(app):
    """A valid upload is adopted: its title (also as the page heading) and its notes."""
    page, s = app
    form = ScenarioForm(s)
    sc = s.scenario
    new_title = "Uploaded copy for the review meeting"
    text = sc.to_toml().replace(f"title = {json.dumps(sc.title)}",
                                f"title = {json.dumps(new_title)}", 1)
    text = text.replace('notes = ""', 'notes = "came with the file"', 1)
    assert new_title in text and "came with the file" in text
    form.upload.filename = "copy.toml"
    form.upload.value = text.encode("utf-8")
    assert form.general.object == ""
    assert s.scenario.title == new_title
    assert s.notes == s.scenario.notes == "came with the file"
    assert page[0].object == f"<h1>{new_title}</h1>"
    if s.busy:
        wait_until_solved(s)


# --------------------------------------------------------------------------------- notes
def test_notes_go_into_the_scenario_and_its_download(app):
    """Notes typed in the state or the text box go into the scenario and into its download, which
    parses back to the same scenario."""
    _, s = app
    view = NotesView(s)
    text = "Slip limit agreed with operations.\nOpen: check tube metal temperature <TMT>."
    s.notes = text
    assert s.scenario.notes == text
    assert view.text.value == text
    saved = view._scenario().getvalue()
    back = parse_scenario(saved)
    assert back.notes == text
    assert back == s.scenario
    view.text.value = text + " Closed."
    assert s.scenario.notes == text + " Closed."


# ---------------------------------------------------------------------------------- pins
def test_pinning_twice_gives_two_columns_and_clear_empties(app):
    """Two pins give two columns with different outlet temperatures; clearing empties the table."""
    _, s = app
    view = PinnedView(s)
    assert "No pinned points" in view.table.object
    s.pin()
    ds = s.dataset
    s.select_display(ds.temperature.values[0] - 273.15, ds.pressure.values[0] / 1e5)
    s.pin()
    rows = table_cells(view.table.object)
    assert rows[0] == ["quantity", "unit", "#1", "#2"]
    temps = [r for r in rows if r[0] == "Outlet temperature"][0]
    assert temps[2] != temps[3]
    s.clear_pins()
    assert s.pinned == []
    assert "No pinned points" in view.table.object


# ----------------------------------------------------------------------------- downloads
def test_balance_csv_download(app):
    """The balance CSV has a 4-column header and rows, with one H2 yield row equal to the
    selected point's (1e-6)."""
    _, s = app
    view = BalanceView(s)
    text = view._csv().getvalue()
    rows = list(csv.reader(io.StringIO(text)))
    assert rows[0] == ["section", "quantity", "value", "unit"]
    assert all(len(r) == 4 for r in rows)
    h2 = [r for r in rows if r[1] == "H2 yield"]
    assert len(h2) == 1
    assert float(h2[0][2]) == pytest.approx(s.selected_point().h2_yield, abs=1e-6)


def test_balance_json_download_is_strict_and_equals_the_point(app):
    """The balance JSON is strict, carries the scenario title and notes, and otherwise equals the
    selected point's to_dict()."""
    _, s = app
    view = BalanceView(s)

    def refuse(name):
        raise AssertionError(f"non-strict JSON constant {name}")

    d = json.loads(view._json().getvalue(), parse_constant=refuse)
    about = d.pop("scenario")
    assert about == {"title": s.scenario.title, "review_notes": s.notes}
    assert d == s.selected_point().to_dict()


def test_grid_download_loads_and_equals_the_session_dataset(app, tmp_path):
    """The grid download is an HDF5 (NetCDF-4) file that loads to the session Dataset's
    variables, dims and values."""
    _, s = app
    view = BalanceView(s)
    data = view._grid().getvalue()
    # NetCDF-4 files are HDF5 files; signature from the HDF5 File Format Specification
    assert data[:8] == b"\x89HDF\r\n\x1a\n"
    path = tmp_path / "window-grid.nc"
    path.write_bytes(data)
    loaded = grid_io.load(path)
    ds = s.dataset
    assert set(loaded.data_vars) == set(ds.data_vars)
    for name in ds.data_vars:
        np.testing.assert_array_equal(loaded[name].values, ds[name].values, err_msg=name)
        assert loaded[name].dims == ds[name].dims
    for d in ("temperature", "pressure", "steam_to_carbon"):
        np.testing.assert_array_equal(loaded[d].values, ds[d].values)
    xr.testing.assert_equal(loaded.drop_vars("species"), ds.drop_vars("species"))


# ------------------------------------------------------------------------------ sessions
def test_two_sessions_do_not_share_state():
    """Two sessions keep their own scenario, window, selection, notes and pins."""
    a = build_app(small_scenario(), solve="now").explorer_state
    other = small_scenario().with_window(steam_to_carbon=(2.0, 4.0, 3))
    b = build_app(other, solve="now").explorer_state
    assert a.scenario != b.scenario
    assert a.dataset.sizes["steam_to_carbon"] == 5 and b.dataset.sizes["steam_to_carbon"] == 3
    sel_b = dict(b.selected)
    a.select_display(a.dataset.temperature.values[0] - 273.15, a.dataset.pressure.values[0] / 1e5)
    assert b.selected == sel_b and a.selected != sel_b
    a.notes = "only in session A"
    assert b.notes == "" and b.scenario.notes == ""
    a.pin()
    assert b.pinned == []


def test_second_build_of_the_same_scenario_solves_nothing():
    """A second build of the same scenario reuses the process's shared window: no sweep is
    run (no cache miss) and no limit is re-applied, and the page still has its Dataset with
    its own title."""
    from explorer.state import FACTS

    build_app(small_scenario(), solve="now")
    misses, windows = SHARED_CACHE.misses, FACTS.windows_computed
    sc = dataclasses.replace(small_scenario(), title="second page")
    page = build_app(sc, solve="now")
    assert SHARED_CACHE.misses == misses
    assert FACTS.windows_computed == windows
    assert page.explorer_state.dataset is not None
    assert page.explorer_state.dataset.attrs["title"] == "second page"


# ------------------------------------------------------------------- fourth window axis
def test_form_adds_edits_and_removes_a_cofeed_axis(app):
    """The window's optional fourth axis (CO2 co-feed here) is edited like the others: added
    (solved, with a slice chooser for it), refused out of range beside its own field, and
    removed again."""
    page, s = app
    form = ScenarioForm(s)
    maps = MapsView(s)
    form.cofeed.value = "co2_to_carbon"
    form.inputs["co2_from"].value, form.inputs["co2_to"].value = "0", "1"
    form.inputs["co2_points"].value = "3"
    assert form.submit()
    wait_until_solved(s)
    assert dict(s.dataset.sizes)["co2_to_carbon"] == 3
    assert s.scenario.window.cofeed == "co2_to_carbon"
    names = [w.label for w in maps.sliders]
    assert "CO2-to-carbon" in names
    form.inputs["co2_to"].value = "5"  # above the 0-3 range of the scenario schema
    assert not form.submit()
    assert "between 0 and 3" in form.messages["co2_to"].object
    assert s.scenario.window.cofeed_axis.stop == 1.0
    form.cofeed.value = ""
    assert form.submit()
    wait_until_solved(s)
    assert "co2_to_carbon" not in s.dataset.dims


# ------------------------------------------------------------------- folding sections
def test_sections_without_content_are_folded_and_unbuilt_until_needed():
    """Comparison, pinned points and notes stay folded and unbuilt on a page that has none
    of them (a page load builds only what it shows), and each opens with its view as soon
    as it has something: a proposal, a pin, a note; or when the user opens it."""
    page = build_app(small_scenario(), solve="now")
    parts, state = page.explorer_parts, page.explorer_state
    for name in ("balance", "scenario", "compare", "pinned", "notes"):
        assert parts[name].collapsed and parts[name].objects == [], name
    ds = state.dataset
    state.select_display(ds.temperature.values[1] - 273.15, ds.pressure.values[1] / 1e5)
    assert not parts["balance"].collapsed and parts["balance"].objects
    state.pin()
    assert not parts["pinned"].collapsed
    assert parts["pinned"].objects
    state.notes = "checked with the furnace vendor"
    assert not parts["notes"].collapsed and parts["notes"].objects
    assert parts["compare"].collapsed and parts["compare"].objects == []
    parts["compare"].collapsed = False  # the user opens it
    assert parts["compare"].objects


def test_a_click_on_the_node_already_selected_opens_the_balance():
    """The page starts with the design point's node selected; a click on that very node (no
    change of selection) still opens the folded balance, as does a typed point."""
    page = build_app(small_scenario(), solve="now")
    parts, state = page.explorer_parts, page.explorer_state
    before = dict(state.selected)
    assert parts["balance"].collapsed
    state.select_display(before["temperature"] - 273.15, before["pressure"] / 1e5)
    assert state.selected == before
    assert not parts["balance"].collapsed and parts["balance"].objects
    page = build_app(small_scenario(), solve="now")
    page.explorer_state.select_exact("867.5 degC", "23.4 bar", 3.0)
    assert not page.explorer_parts["balance"].collapsed


def test_a_page_with_notes_and_a_proposal_opens_those_sections():
    """A scenario that carries notes, served with a proposal, opens both sections at once."""
    sc = small_scenario().with_notes("reviewed")
    page = build_app(sc, solve="now", proposal=small_scenario())
    parts = page.explorer_parts
    assert not parts["notes"].collapsed and not parts["compare"].collapsed
    assert parts["pinned"].collapsed


def test_margin_tables_are_sent_when_their_card_opens():
    """The summary's folded tables (margins, sensitivities, the best point's balance) are
    kept current but join the page only when their card is opened."""
    page = build_app(small_scenario(), solve="now")
    summary = page.explorer_parts["summary"]
    card = summary.details
    assert card.collapsed and card.objects == []
    assert "Margins of the design point" in summary.design_margins.object
    card.collapsed = False
    assert summary.design_margins in card.objects and summary.best_balance in card.objects
