"""The scenario form, generated from the schema (:data:`thermo.schema.KEYS`): one field per
key, grouped by table; a shipped scenario or an uploaded file.

Each field is checked when it is left (its value changes) and the message shown beside it; on
"Apply" the fields become a mapping of raw TOML values, written by the one writer
(:func:`thermo.scenario_toml.dump`) and read by :func:`thermo.scenario.parse_scenario`, so the
app validates exactly as the command line does and every refused field is shown at once.
"""

from __future__ import annotations

from pathlib import Path

import panel as pn

import thermo
from explorer import display
from explorer.safe import html, message_html, text
from explorer.state import ExplorerState, check_window_size
from thermo.errors import InputError, all_errors
from thermo.scenario import DEMO_PATH, CarbonCheck, Scenario, parse_scenario
from thermo.scenario_toml import _get, dump, exact_text, raw_from_text, text_of
from thermo.schema import BY_NAME, KEYS, Key, parse_value
from thermo.species import molar_mass

#: Largest scenario file accepted by upload [bytes].
MAX_UPLOAD_BYTES = 256 * 1024

def scenario_files() -> dict[str, Path]:
    """The shipped scenario files by display name (the only files the app opens itself)."""
    folder = DEMO_PATH.parent
    return {p.stem: p for p in sorted(folder.glob("*.toml"))}


def read_upload(data: bytes | None, filename: str | None) -> tuple[Scenario | None, str]:
    """A scenario from an uploaded file, or None and the message to show, as HTML built by
    :mod:`explorer.safe` (size, encoding and content are checked; nothing but TOML is
    parsed)."""
    if data is None:
        return None, ""
    if len(data) > MAX_UPLOAD_BYTES:
        return None, text(f"Not loaded: the file has {len(data):,} bytes; scenario files "
                          f"are limited to {MAX_UPLOAD_BYTES:,} bytes.")
    try:
        return parse_scenario(data.decode("utf-8"), path=filename), ""
    except UnicodeDecodeError:
        return None, text("Not loaded: the file is not UTF-8 text.")
    except InputError as err:
        return None, message_html("Not loaded: ", err)


#: Section headings of the form, by table.
SECTIONS = {
    "": "Study", "feed": "Feed", "design_point": "Design point", "window": "Window",
    "limits": "Review limits", "carbon": "Carbon check", "plant": "Hydrogen plant",
    "display": "Display",
}
#: Tables switched on and off by a checkbox (the label), with the keys they hold.
TOGGLED = {
    "train.pre_reformer": "Adiabatic pre-reformer",
    "train.secondary_reformer": "Adiabatic secondary reformer",
    "train.high_temperature_shift": "High-temperature shift",
    "train.low_temperature_shift": "Low-temperature shift",
    "carbon": "Carbon check settings (else graphite reference, linear tube path)",
    "plant": "Hydrogen plant around the reformer (furnace, purification, steam)",
}
_COFEED_AXES = ("window.oxygen_to_carbon", "window.co2_to_carbon")


def _form_keys() -> list[Key]:
    """The keys the form edits: all but the review notes (edited beside the maps)."""
    return [k for k in KEYS if k.path != "notes"]


def _toggle_of(key: Key) -> str | None:
    for table in (*TOGGLED, *_COFEED_AXES):
        if key.table == table:
            return table
    return None


class ScenarioForm:
    """Editable scenario, one widget per schema key, with a message pane beside each."""

    #: (name, label, key path) of every field, from the schema.
    FIELDS = [(k.name, k.label, k.path) for k in _form_keys()]
    #: Train stages the form switches on and off, with their fields.
    STAGES = {t.split(".")[1]: (label, tuple(k.name for k in KEYS if k.table == t))
              for t, label in TOGGLED.items() if t.startswith("train.")}

    def __init__(self, state: ExplorerState):
        self.state = state
        self.inputs = {k.name: _widget(k) for k in _form_keys()}
        self.messages = {k.name: _message_pane(width=190, margin=(0, 5, 0, 10))
                         for k in _form_keys()}
        self.table_on = {t: pn.widgets.Checkbox(label=label, value=False)
                         for t, label in TOGGLED.items()}
        self.stage_on = {t.split(".")[1]: box for t, box in self.table_on.items()
                         if t.startswith("train.")}
        self.carbon_free = self.inputs["carbon_free"]
        self.oxidant = self.inputs["oxidant"]
        self.cofeed = pn.widgets.Select(label="Fourth window axis", width=190,
                                        options={"none": "", "O2-to-carbon": "oxygen_to_carbon",
                                                 "CO2-to-carbon": "co2_to_carbon"})
        self.apply = pn.widgets.Button(label="Apply and solve", color="primary")
        self.reset = pn.widgets.Button(label="Reset fields")
        self.general = _message_pane()
        files = scenario_files()
        self.chooser = pn.widgets.Select(label="Shipped scenario", options=list(files),
                                         value=_current_name(state.scenario, files), width=220)
        self.upload = pn.widgets.FileInput(accept=".toml", multiple=False, width=260)
        self.apply.on_click(lambda e: self.submit())
        self.reset.on_click(lambda e: self.fill(self.state.scenario))
        self.chooser.param.watch(self._choose, "value")
        self.upload.param.watch(self._upload, "value")
        self._filling = False
        for key in _form_keys():
            self.inputs[key.name].param.watch(lambda e, k=key: self.check_field(k), "value")
        self.fill(state.scenario)
        state.param.watch(lambda e: self.design_warnings(), ["scenario"])
        self.design_warnings()

    # ------------------------------------------------------------------------ fields

    def _raw(self, key: Key) -> object:
        w = self.inputs[key.name]
        if key.kind in ("boolean", "choice"):
            return w.value
        return raw_from_text(key, w.value)

    def check_field(self, key: Key) -> bool:
        """Check one field as it is left; its message (or nothing) beside it."""
        if self._filling:
            return True
        pane = self.messages[key.name]
        w = self.inputs[key.name]
        if key.kind not in ("boolean", "choice") and not w.value.strip() and not key.required:
            pane.object = ""
            return True
        mass = 0.016
        try:
            comp = parse_value(BY_NAME["composition"], self._raw(BY_NAME["composition"]))
            mass = sum(x * molar_mass(n) for n, x in comp.items())
        except InputError:
            pass
        try:
            parse_value(key, self._raw(key), molar_mass=mass)
        except InputError as err:
            first = all_errors(err)[0]
            pane.object = html("{} (got {})", first.allowed, text(first.shown_value))
            return False
        pane.object = ""
        return True

    def design_warnings(self) -> None:
        """A warning beside each design-point field whose value lies outside the window
        (the balance is still computed at the exact value)."""
        sc = self.state.scenario
        values = {"temperature": sc.temperature, "pressure": sc.pressure,
                  "steam_to_carbon": sc.feed.steam_to_carbon}
        for name, value in values.items():
            axis = sc.window.axes()[name]
            lo, hi = sorted((axis.start, axis.stop))
            if lo - 1e-9 * abs(lo) <= value <= hi + 1e-9 * abs(hi):
                continue
            kind = {"steam_to_carbon": ""}.get(name, name)

            def shown(v: float, kind: str = kind) -> str:
                return display.fmt(v, kind, -4, self.state.units, with_unit=True)
            self.messages[name].object = html(
                '<span class="rw-warn" data-role="design-outside">Outside the window '
                "({} to {}): computed exactly at {}; the maps mark it at their border."
                "</span>", shown(lo), shown(hi), shown(value))

    def fill(self, sc: Scenario) -> None:
        """Put a scenario's values in the fields: what the user typed while it still gives
        the exact value ("22 barg" stays "22 barg"), else the shortest exact text in engineer
        units; keys of absent tables show the schema's example."""
        self._filling = True
        try:
            for key in _form_keys():
                value = _get(sc, key)
                w = self.inputs[key.name]
                if key.kind in ("boolean", "choice"):
                    w.value = value if value is not None else (key.example or key.default)
                elif value is None:
                    w.value = key.example
                else:
                    w.value = text_of(exact_text(sc, key, value))
            for table, box in self.table_on.items():
                box.value = _get(sc, next(k for k in KEYS if k.table == table)) is not None
            self.table_on["carbon"].value = "carbon" in _sections(sc.text) or (
                sc.carbon != CarbonCheck())
            self.cofeed.value = sc.window.cofeed or ""
        finally:
            self._filling = False
        self._clear()

    def _clear(self) -> None:
        for m in self.messages.values():
            m.object = ""
        self.general.object = ""

    def _on(self, table: str) -> bool:
        if table in self.table_on:
            return self.table_on[table].value
        if table in _COFEED_AXES:
            return self.cofeed.value == table.split(".")[1]
        return True

    def mapping(self) -> dict:
        """The fields as a nested mapping of raw TOML values (empty optional fields left out)."""
        out: dict = {}
        for key in KEYS:
            if key.path == "notes":
                value = self.state.notes
            else:
                toggle = _toggle_of(key)
                if toggle is not None and not self._on(toggle):
                    continue
                w = self.inputs[key.name]
                if key.kind not in ("boolean", "choice", "text") and not w.value.strip():
                    continue
                value = self._raw(key)
            node = out
            for part in key.table.split(".") if key.table else []:
                node = node.setdefault(part, {})
            node[key.leaf] = value
        return out

    def toml_text(self) -> str:
        """The scenario file the fields describe (written by the one writer)."""
        return dump(self.mapping())

    def submit(self) -> bool:
        """Validate the fields; on success adopt the scenario, else show every message."""
        self._clear()
        try:
            sc = check_window_size(parse_scenario(self.toml_text(),
                                                  path=self.state.scenario.path))
        except InputError as err:
            self.show_error(err)
            return False
        self.state.set_scenario(sc)
        return True

    def show_error(self, err: InputError) -> None:
        """Put each message beside the field it names (and the list above the button)."""
        errors = all_errors(err)
        by_length = sorted(_form_keys(), key=lambda k: -len(k.path))
        for e in errors:
            for key in by_length:
                if e.field == key.path or e.field.startswith((key.path + ".", key.path + "[")):
                    self.messages[key.name].object = html("{} (got {})", e.allowed,
                                                          text(e.shown_value))
                    break
        parts = [message_html("Not applied: " if i == 0 else "", e) for i, e in
                 enumerate(errors)]
        self.general.object = html("{}. The maps still show the last valid scenario.",
                                   html("<br>".join("{}" for _ in parts), *parts))

    def _choose(self, event) -> None:
        path = scenario_files().get(event.new)
        if path is None:
            return
        try:
            sc = check_window_size(thermo.load_scenario(path))
        except InputError as err:
            self.general.object = message_html(html("Could not open {}: ", event.new), err)
            return
        self.state.notes = sc.notes
        self.state.set_scenario(sc)
        self.fill(sc)

    def _upload(self, event) -> None:
        sc, message = read_upload(event.new, self.upload.filename)
        if sc is not None:
            try:
                check_window_size(sc)
            except InputError as err:
                sc, message = None, message_html("Not loaded: ", err)
        if sc is None:
            self.general.object = message
            return
        self.state.notes = sc.notes
        self.state.set_scenario(sc)
        self.fill(sc)

    def __panel__(self):
        def cell(key: Key):
            return pn.Column(self.inputs[key.name], self.messages[key.name], margin=0)

        def rows(keys: list[Key]):
            return [pn.Row(*[cell(k) for k in keys[i:i + 3]]) for i in range(0, len(keys), 3)]

        columns = []
        for table, title in SECTIONS.items():
            keys = [k for k in _form_keys() if k.table == table or (
                table == "window" and k.table.startswith("window.")
                and k.table not in _COFEED_AXES)]
            if table in TOGGLED:
                continue
            body = []
            if table == "window":
                body = [pn.Row(*[cell(k) for k in keys if k.table == t])
                        for t in dict.fromkeys(k.table for k in keys)]
                for axis in _COFEED_AXES:
                    row = pn.Row(*[cell(k) for k in KEYS if k.table == axis],
                                 visible=self._on(axis))
                    self.cofeed.param.watch(
                        lambda e, r=row, a=axis: setattr(r, "visible", e.new == a[7:]),
                        "value")
                    body.append(row)
                body.insert(3, self.cofeed)
            else:
                body = rows(keys)
            columns.append(pn.Column(f"#### {title}", *body))
        toggled = []
        for table, box in self.table_on.items():
            row = pn.Column(*rows([k for k in KEYS if k.table == table]), visible=box.value)
            box.param.watch(lambda e, r=row: setattr(r, "visible", bool(e.new)), "value")
            toggled += [box, row]
        self.inputs["composition"].width = 600
        source = pn.Row(self.chooser, pn.Column("Or open a scenario file (.toml)", self.upload))
        note = pn.pane.Markdown(
            "With a train, the limits apply to it: slip after the last reformer, H2 after the "
            "last stage, the carbon verdict (graphite in any reforming stage included); the "
            "duty limit stays on the primary's radiant duty.",
            styles={"font-size": "12px", "color": "#4a5a64"}, width=560)
        return pn.Column(source, *columns, note,
                         "#### Reforming train (the primary reformer is the window's T and P)",
                         *toggled, pn.Row(self.apply, self.reset), self.general)


def _widget(key: Key):
    """The widget of one schema key: a checkbox, a chooser or a text field."""
    if key.kind == "boolean":
        return pn.widgets.Checkbox(label=key.label, value=bool(key.default))
    if key.kind == "choice":
        return pn.widgets.Select(label=key.label, options=list(key.choices), width=190,
                                 value=key.default if key.default in key.choices
                                 else key.choices[0])
    width = 600 if key.kind == "text" else 190
    return pn.widgets.TextInput(label=key.label, width=width, description=key.help)


def _sections(toml_text: str) -> set[str]:
    """Top-level tables a TOML text names (to keep an explicit default [carbon] switched on)."""
    import tomllib

    try:
        return {k for k, v in tomllib.loads(toml_text).items() if isinstance(v, dict)}
    except (tomllib.TOMLDecodeError, RecursionError):
        return set()


def _current_name(sc: Scenario, files: dict[str, Path]) -> str:
    if sc.path:
        for name, p in files.items():
            if Path(sc.path).resolve() == p.resolve():
                return name
    return next(iter(files)) if files else ""


def _message_pane(**kwargs) -> pn.pane.HTML:
    """A pane for messages about input (filled through :mod:`explorer.safe` only)."""
    return pn.pane.HTML("", styles={"color": "#b3261e"}, **kwargs)
