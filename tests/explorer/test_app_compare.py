"""The app's reforming-train form fields and its comparison with a proposal (no browser).

Numbers: the scenarios are the demo's (scenarios/demo.toml, invented data) on the small test
window, with the train of tests/thermo/test_train.py (test inputs, common practice, no
source). Expected values come from the core (thermo.sweep, thermo.point) or numpy.
"""

from __future__ import annotations

import json
import re

import numpy as np
import pytest

import thermo
from explorer.app import ComparisonView, NotesView, ScenarioForm, build_app
from explorer.tables import balance_html, compare_point_html
from tests.explorer.helpers import small_scenario, table_cells
from tests.explorer.test_app_logic import wait_until_solved
from tests.thermo.test_train import FULL_TRAIN
from thermo.scenario import parse_scenario


def train_scenario():
    return parse_scenario(small_scenario().to_toml() + FULL_TRAIN)


def proposal_scenario():
    text = thermo.load_scenario().text.replace('title = "', 'title = "Proposal: ')
    return parse_scenario(text + FULL_TRAIN)


@pytest.fixture
def compared():
    page = build_app(small_scenario(), solve="now", proposal=proposal_scenario())
    s = page.explorer_state
    return page, s, ComparisonView(s)


# --------------------------------------------------------------------------- train form
def test_applying_the_form_untouched_keeps_the_train():
    """The form shows a train scenario's stages switched on with air as oxidant, its text parses
    to the same train, and applying it untouched keeps the train."""
    page = build_app(train_scenario(), solve="now")
    s = page.explorer_state
    form = ScenarioForm(s)
    assert all(box.value for box in form.stage_on.values())
    assert form.oxidant.value == "air"
    text = form.toml_text()
    assert parse_scenario(text).train == s.scenario.train
    assert form.submit() is True
    assert s.scenario.train == train_scenario().train


def test_form_switches_a_shift_stage_on_and_edits_it():
    """Switching the HT shift on at 380 degC in the form gives that stage (653.15 K, 10 K
    approach) after the primary, and the solved H2 product exceeds the reformer's H2 yield at
    every converged point."""
    page = build_app(small_scenario(), solve="now")
    s = page.explorer_state
    form = ScenarioForm(s)
    assert not any(box.value for box in form.stage_on.values())
    form.stage_on["high_temperature_shift"].value = True
    form.inputs["hts_temperature"].value = "380 degC"
    assert form.submit() is True
    st = s.scenario.train.high_temperature_shift
    assert st.temperature == pytest.approx(653.15) and st.approach == 10.0
    assert s.scenario.train.stages() == ["primary_reformer", "high_temperature_shift"]
    wait_until_solved(s)
    assert "h2_product" in s.dataset
    # Shift adds H2: the product exceeds the reformer's own yield everywhere it converged.
    ok = s.dataset["converged"]
    assert bool((s.dataset["h2_product"] > s.dataset["h2_yield"]).where(ok, True).all())


def test_bad_train_field_is_refused_beside_it():
    """An LT shift at 900 degC is refused with a range message beside its field, and the scenario
    is unchanged."""
    page = build_app(small_scenario(), solve="now")
    s = page.explorer_state
    form = ScenarioForm(s)
    before = s.scenario
    form.stage_on["low_temperature_shift"].value = True
    form.inputs["lts_temperature"].value = "900 degC"
    assert form.submit() is False
    assert "between" in form.messages["lts_temperature"].object
    assert s.scenario == before


# ---------------------------------------------------------------------------- comparison
def test_proposal_is_solved_on_the_base_window_and_differenced(compared):
    """The proposal gets the base's window and a 'Proposal: ' title, and the difference is
    proposal minus base exactly."""
    _, s, _ = compared
    assert s.proposal.window == s.scenario.window
    assert s.proposal.title.startswith("Proposal: ")
    np.testing.assert_array_equal(
        s.difference["h2_product"].values,
        s.proposal_dataset["h2_product"].values - s.dataset["h2_product"].values)
    assert "solved over this window" in s.compare_status


def test_change_map_nodes_are_proposal_minus_base(compared):
    """The change map's node values are proposal minus base, the three titles name base, proposal
    and change, and another variable redraws from the Dataset (duty in MW)."""
    _, s, view = compared
    base, prop, diff = (np.array(src["nodes"].data["value"], dtype=float)
                        for src in view.sources)
    np.testing.assert_allclose(diff, prop - base, rtol=1e-12, atol=1e-12)
    assert np.nanmax(np.abs(diff)) > 0.1
    titles = [p.object.title.text for p in view.panes]
    assert titles == ["Base: H2 product after the train", "Proposal: H2 product after the train",
                      "Change: H2 product after the train"]
    view.variable.value = "train_duty"
    base2 = np.array(view.sources[0]["nodes"].data["value"], dtype=float)
    assert not np.allclose(base2, base)  # another variable is drawn
    np.testing.assert_allclose(base2, s.dataset["train_duty"].isel(
        steam_to_carbon=s.fixed["steam_to_carbon"]).transpose("pressure", "temperature")
        .values.ravel() * 1e-6, rtol=1e-12)


def test_comparison_table_shows_both_points_and_the_change(compared):
    """The comparison table equals compare_point_html plus the proposal's balance, its H2 change
    equals the two points' difference, and a click on a comparison map selects that node
    everywhere."""
    _, s, view = compared
    a, b = s.selected_point().to_dict(), s.selected_proposal_point().to_dict()
    assert table_cells(view.table.object) == table_cells(compare_point_html(a, b)
                                                         + balance_html(b))
    rows = {r[0]: r for r in table_cells(view.table.object) if len(r) == 5}
    h2 = rows["H2 product after the last stage"]
    assert float(h2[4]) == pytest.approx(b["train"]["h2_product"] - a["train"]["h2_product"],
                                         abs=1e-4)
    # A click on a comparison map selects a point for every section.
    view._tap(type("E", (), {"x": 800.0, "y": 30.0})())
    assert s.selected["temperature"] == pytest.approx(800 + 273.15)
    assert "800.0 degC" in view.table.object


def test_window_change_re_solves_the_proposal(compared):
    """A window change in the form re-solves the proposal on the new window (3 temperatures)."""
    _, s, _ = compared
    form = ScenarioForm(s)
    form.inputs["t_points"].value = "3"
    assert form.submit() is True
    wait_until_solved(s)
    for _ in range(200):
        if s.difference is not None:
            break
        s.poll()
        import time

        time.sleep(0.05)
    assert s.proposal.window == s.scenario.window
    assert s.difference["h2_product"].shape == (3, 4, 5)


def test_bad_proposal_upload_is_refused_with_its_key(compared):
    """A proposal upload with a bad oxidant is refused with a message naming the key, and the
    proposal is unchanged."""
    _, s, view = compared
    before = s.proposal
    text = proposal_scenario().to_toml().replace('oxidant = "air"', 'oxidant = "steam"')
    view.upload.filename = "bad.toml"
    view.upload.value = text.encode("utf-8")
    assert "train.secondary_reformer.oxidant" in view.message.object
    assert s.proposal == before


def test_removing_the_proposal_clears_the_maps(compared):
    """Choosing another proposal replaces it; choosing none clears the proposal, the difference
    and the change map."""
    _, s, view = compared
    view.chooser.value = "biogas-skid"
    assert s.proposal is not None and s.proposal.title != before_title(s)
    view.chooser.value = view.NONE
    assert s.proposal is None and s.difference is None
    assert view.sources[2]["nodes"].data["value"] == []


def before_title(s):
    return s.scenario.title


def test_review_file_from_the_app_carries_the_comparison(compared):
    """The app's review file holds the comparison, with the proposal's train (ending in the LT
    shift) in its page data."""
    _, s, _ = compared
    view = NotesView(s)
    html = view._review().getvalue().decode("utf-8")
    assert "Comparison: base and proposal" in html, view.message.object
    data = json.loads(re.search(r'id="rw-data">(.*?)</script>', html, re.S).group(1)
                      .replace("<\\/", "</"))
    assert data["proposal"]["train"]["stages"][-1]["name"] == "low_temperature_shift"


def test_a_late_result_of_a_superseded_proposal_is_dropped(monkeypatch):
    """Proposal A is slow, B replaces it and finishes first while the base is still busy;
    A's late result must neither replace B's nor leave the comparison waiting for ever."""
    import threading

    from explorer import state as state_module

    page = build_app(small_scenario(), solve="now")
    s = page.explorer_state
    a = proposal_scenario()
    b = parse_scenario(a.to_toml().replace('title = "Proposal: ', 'title = "Proposal B: '))
    real_get = state_module.SHARED_CACHE.get
    gate = threading.Event()

    def slow_for_a(sc, **kwargs):
        ds = real_get(sc, **kwargs)
        if sc.title.startswith("Proposal: "):
            gate.wait(30)
        return ds

    monkeypatch.setattr(state_module.SHARED_CACHE, "get", slow_for_a)
    s.busy = True  # the base is being re-solved meanwhile
    s.set_proposal(a)
    thread_a = s._cmp_thread
    s.set_proposal(b)
    s._cmp_thread.join(60)
    s.poll()  # B's result waits for the base
    gate.set()
    thread_a.join(60)  # A's late result arrives now
    s.busy = False
    s._poll_proposal()
    assert s.proposal.title.startswith("Proposal B: ")
    assert s.difference is not None
    assert "Proposal B" in s.compare_status


def test_limits_edit_redraws_the_comparison_base_map(compared):
    """Editing the slip limit redraws the base map's feasible labels to the new feasible mask,
    naming the broken slip limit."""
    _, s, view = compared
    before = view.sources[0]["nodes"].data["feasible"]
    form = ScenarioForm(s)
    form.inputs["max_slip"].value = "1 mol%"
    assert form.submit() is True
    after = view.sources[0]["nodes"].data["feasible"]
    assert after != before
    cut = s.dataset["feasible"].isel(steam_to_carbon=s.fixed["steam_to_carbon"])
    ok = cut.transpose("pressure", "temperature").values.ravel()
    assert [w == "within all limits" for w in after] == ok.tolist()
    assert any("methane slip above 1 mol %" in w for w in after)
