"""The app's form, generated from the scenario schema: typed text kept, each field checked
as it is left, every refused field's message beside that field."""

from __future__ import annotations

import pytest

from explorer.app import build_app
from explorer.form import ScenarioForm
from tests.explorer.helpers import small_scenario
from thermo.schema import KEYS


@pytest.fixture(scope="module")
def form():
    page = build_app(small_scenario(), solve="now")
    return ScenarioForm(page.explorer_state)


def test_the_form_has_one_field_per_schema_key_and_shows_the_typed_text(form):
    """Every key of the schema has its field; "22 barg" reads back as "22 barg" in the form
    and in the file the form writes."""
    names = {k.name for k in KEYS if k.path not in ("notes",)}
    assert names <= set(form.inputs) | {"notes"}
    assert form.inputs["pressure"].value == "22 barg"
    assert form.inputs["flow"].value == "1100 kmol/h"
    text = form.toml_text()
    assert 'pressure = "22 barg"' in text and 'flow = "1100 kmol/h"' in text


def test_three_bad_fields_show_three_messages_each_beside_its_field(form):
    typed = {"temperature": "880 degX", "s_points": "0", "flow": "lots kmol/h"}
    try:
        for name, value in typed.items():
            form.inputs[name].value = value  # checked as it is left (on change)
            assert form.messages[name].object, name
        assert not form.submit()
        for name, value in typed.items():
            shown = str(form.messages[name].object)
            # The message quotes what was typed in its own field, never another's.
            assert (f"(got &#39;{value}&#39;)" in shown or f"(got {value})" in shown), \
                (name, shown)
            others = [v for n, v in typed.items() if n != name]
            assert not any(f"&#39;{v}&#39;" in shown for v in others), (name, shown)
        # Untouched fields carry no message.
        assert not form.messages["inlet_temperature"].object
    finally:
        form.fill(form.state.scenario)
    assert all(not form.messages[n].object for n in typed)
