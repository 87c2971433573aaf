"""The browser app: one page that reads top to bottom like a worked study.

Sections: the scenario and its feed (editable), the operating-window maps, the balance of the
selected point, pinned points, and review notes. :func:`build_app` returns the page for a
session; ``explorer serve`` serves it, and in a notebook ``build_app(...)`` displays inline.
"""

from __future__ import annotations

import io as _io
import json
import math
import os
import subprocess
import sys
import tempfile
from pathlib import Path

import numpy as np
import panel as pn
from bokeh.events import Tap

import thermo
from explorer import CAUTION
from explorer.maps import (
    MODES,
    VARIABLES,
    change_levels,
    change_variable,
    combine,
    empty_layers,
    map_figure,
    restyle_figure,
    shared_levels,
    slice_fields,
    slice_layers,
    variable_layers,
    variable_levels,
    window_layers,
)
from explorer.safe import html, message_html, paragraphs, spreadsheet_text, text
from explorer.state import ExplorerState, check_window_size
from explorer.tables import balance_csv, balance_html, compare_point_html, comparison_html
from thermo import io as grid_io
from thermo.errors import InputError
from thermo.scenario import DEMO_PATH, Scenario, parse_scenario

#: Largest scenario file accepted by upload [bytes].
MAX_UPLOAD_BYTES = 256 * 1024

PAGE_CSS = """
:host { --rw-ink: #1d2a33; --rw-accent: #00a37a; --rw-warn: #b3261e; }
.rw-table { border-collapse: collapse; font-size: 12.5px; margin: 4px 0 10px 0; }
.rw-table th { background: #e9eef1; color: var(--rw-ink); text-align: right; padding: 3px 8px;
  border-bottom: 2px solid #b9c6cd; }
.rw-table th:first-child, .rw-table td:first-child { text-align: left; }
.rw-table td { text-align: right; padding: 2px 8px; border-bottom: 1px solid #e3e8eb;
  font-variant-numeric: tabular-nums; }
.rw-small { font-size: 11.5px; color: #4a5a64; }
.rw-warn { color: var(--rw-warn); font-weight: 600; }
h4 { margin: 10px 0 2px 0; color: var(--rw-ink); }
"""

CAUTION_CSS = """
:host { background: #fff4e5; border-left: 5px solid #e08a00; padding: 2px 12px;
  font-size: 13px; }
"""

SECTION_CSS = """
:host h2 { border-bottom: 2px solid #00a37a; padding-bottom: 2px; color: #1d2a33; }
"""


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


def _q(value: str) -> str:
    """A TOML value from a field's text: a number stays a number, anything else a string."""
    text = value.strip()
    try:
        float(text)
        if text.lower() in ("nan", "inf", "-inf", "+inf", "infinity"):
            raise ValueError
        return text
    except ValueError:
        return json.dumps(text)


def _composition_toml(text: str) -> str:
    pairs = []
    for part in text.replace(";", ",").split(","):
        if not part.strip():
            continue
        name, sep, val = part.partition("=")
        if not sep:
            return json.dumps(text)  # refused by the parser with the key path
        key = name.strip()
        key = key if key.replace("_", "").isalnum() else json.dumps(key)
        pairs.append(f"{key} = {_q(val)}")
    return "{ " + ", ".join(pairs) + " }"


def _display(v: float, digits: int = 6) -> str:
    return f"{v:.{digits}g}"


class ScenarioForm:
    """Editable scenario: feed, design point, window and limits, with messages per field."""

    FIELDS = [
        # (name, label, key path)
        ("composition", "Dry feed, mole fractions", "feed.composition"),
        ("flow", "Dry feed flow", "feed.flow"),
        ("inlet_temperature", "Feed inlet temperature", "feed.inlet_temperature"),
        ("steam_to_carbon", "Design steam-to-carbon", "feed.steam_to_carbon"),
        ("oxygen_to_carbon", "O2 co-feed per C", "feed.oxygen_to_carbon"),
        ("co2_to_carbon", "CO2 co-feed per C", "feed.co2_to_carbon"),
        ("temperature", "Design outlet temperature", "design_point.temperature"),
        ("pressure", "Design outlet pressure", "design_point.pressure"),
        ("approach", "Approach to equilibrium", "design_point.approach"),
        ("t_from", "Window T from", "window.temperature.from"),
        ("t_to", "Window T to", "window.temperature.to"),
        ("t_points", "T points", "window.temperature.points"),
        ("p_from", "Window P from", "window.pressure.from"),
        ("p_to", "Window P to", "window.pressure.to"),
        ("p_points", "P points", "window.pressure.points"),
        ("s_from", "Window S/C from", "window.steam_to_carbon.from"),
        ("s_to", "Window S/C to", "window.steam_to_carbon.to"),
        ("s_points", "S/C points", "window.steam_to_carbon.points"),
        ("c_from", "Co-feed axis from", "window.cofeed.from"),
        ("c_to", "Co-feed axis to", "window.cofeed.to"),
        ("c_points", "Co-feed points", "window.cofeed.points"),
        ("max_slip", "Max methane slip, dry", "limits.max_methane_slip_dry"),
        ("min_yield", "Min H2 yield (mol/mol C)", "limits.min_h2_yield"),
        ("max_duty", "Max duty", "limits.max_duty"),
        ("pre_inlet", "Pre-reformer inlet T", "train.pre_reformer.inlet_temperature"),
        ("sec_ratio", "O2 per hydrocarbon C", "train.secondary_reformer.oxygen_to_carbon"),
        ("sec_temperature", "Oxidant temperature",
         "train.secondary_reformer.oxidant_temperature"),
        ("sec_approach", "Approach (secondary)", "train.secondary_reformer.approach"),
        ("hts_temperature", "HT shift temperature", "train.high_temperature_shift.temperature"),
        ("hts_approach", "HT shift approach", "train.high_temperature_shift.approach"),
        ("lts_temperature", "LT shift temperature", "train.low_temperature_shift.temperature"),
        ("lts_approach", "LT shift approach", "train.low_temperature_shift.approach"),
    ]

    #: Stages of the train the form switches on and off, with their fields.
    STAGES = {
        "pre_reformer": ("Adiabatic pre-reformer", ("pre_inlet",)),
        "secondary_reformer": ("Adiabatic secondary reformer",
                               ("sec_ratio", "sec_temperature", "sec_approach")),
        "high_temperature_shift": ("High-temperature shift", ("hts_temperature",
                                                              "hts_approach")),
        "low_temperature_shift": ("Low-temperature shift", ("lts_temperature",
                                                            "lts_approach")),
    }

    #: What a stage's fields show when it is switched on for the first time (typical
    #: values, common practice, no source; DOMAIN.md gives the shift inlet ranges).
    STAGE_DEFAULTS = {
        "pre_inlet": "490 degC",
        "sec_ratio": "0.25",
        "sec_temperature": "550 degC",
        "sec_approach": "0 K",
        "hts_temperature": "360 degC",
        "hts_approach": "10 K",
        "lts_temperature": "210 degC",
        "lts_approach": "10 K",
    }

    def __init__(self, state: ExplorerState):
        self.state = state
        self.inputs = {name: pn.widgets.TextInput(label=label, width=190)
                       for name, label, _ in self.FIELDS}
        self.messages = {name: _message_pane(width=190, margin=(0, 5, 0, 10))
                         for name, _, _ in self.FIELDS}
        self.carbon_free = pn.widgets.Checkbox(label="Carbon-free required", value=True)
        self.stage_on = {name: pn.widgets.Checkbox(label=label, value=False)
                         for name, (label, _) in self.STAGES.items()}
        self.oxidant = pn.widgets.Select(label="Oxidant", options={"air": "air",
                                                                    "oxygen": "oxygen"},
                                         value="air", width=190)
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
        self.fill(state.scenario)

    def fill(self, sc: Scenario) -> None:
        """Put a scenario's values in the fields (engineer units).

        The fields show rounded values; a field the user leaves as filled is submitted with
        the scenario's exact value (see :meth:`toml_text`), so applying a change to one field
        never moves another by its display rounding.
        """
        f, w, lim = sc.feed, sc.window, sc.limits
        v = self.inputs
        self._exact = {
            "composition": "{ " + ", ".join(f"{k} = {x!r}" for k, x in f.composition.items())
                           + " }",
            "flow": json.dumps(f"{f.flow!r} mol/s"),
            "inlet_temperature": json.dumps(f"{f.inlet_temperature!r} K"),
            "steam_to_carbon": repr(f.steam_to_carbon),
            "oxygen_to_carbon": repr(f.oxygen_to_carbon),
            "co2_to_carbon": repr(f.co2_to_carbon),
            "temperature": json.dumps(f"{sc.temperature!r} K"),
            "pressure": json.dumps(f"{sc.pressure!r} Pa"),
            "approach": json.dumps(f"{sc.approach!r} K"),
            "t_from": json.dumps(f"{w.temperature.start!r} K"),
            "t_to": json.dumps(f"{w.temperature.stop!r} K"),
            "t_points": str(w.temperature.points),
            "p_from": json.dumps(f"{w.pressure.start!r} Pa"),
            "p_to": json.dumps(f"{w.pressure.stop!r} Pa"),
            "p_points": str(w.pressure.points),
            "s_from": repr(w.steam_to_carbon.start),
            "s_to": repr(w.steam_to_carbon.stop),
            "s_points": str(w.steam_to_carbon.points),
            "max_slip": (None if lim.max_methane_slip_dry is None
                         else repr(lim.max_methane_slip_dry)),
            "min_yield": None if lim.min_h2_yield is None else repr(lim.min_h2_yield),
            "max_duty": None if lim.max_duty is None else json.dumps(f"{lim.max_duty!r} W"),
        }
        v["composition"].value = ", ".join(f"{k}={_display(x)}" for k, x in
                                           f.composition.items())
        v["flow"].value = f"{_display(f.flow * 3.6)} kmol/h"
        v["inlet_temperature"].value = f"{_display(f.inlet_temperature - 273.15)} degC"
        v["steam_to_carbon"].value = _display(f.steam_to_carbon)
        v["oxygen_to_carbon"].value = _display(f.oxygen_to_carbon)
        v["co2_to_carbon"].value = _display(f.co2_to_carbon)
        v["temperature"].value = f"{_display(sc.temperature - 273.15)} degC"
        v["pressure"].value = f"{_display(sc.pressure / 1e5)} bar"
        v["approach"].value = f"{_display(sc.approach)} K"
        v["t_from"].value = f"{_display(w.temperature.start - 273.15)} degC"
        v["t_to"].value = f"{_display(w.temperature.stop - 273.15)} degC"
        v["t_points"].value = str(w.temperature.points)
        v["p_from"].value = f"{_display(w.pressure.start / 1e5)} bar"
        v["p_to"].value = f"{_display(w.pressure.stop / 1e5)} bar"
        v["p_points"].value = str(w.pressure.points)
        v["s_from"].value = _display(w.steam_to_carbon.start)
        v["s_to"].value = _display(w.steam_to_carbon.stop)
        v["s_points"].value = str(w.steam_to_carbon.points)
        self.cofeed.value = w.cofeed or ""
        if w.cofeed is not None:
            a = w.cofeed_axis
            v["c_from"].value, v["c_to"].value = _display(a.start), _display(a.stop)
            v["c_points"].value = str(a.points)
            self._exact.update(c_from=repr(a.start), c_to=repr(a.stop), c_points=str(a.points))
        else:
            v["c_from"].value, v["c_to"].value, v["c_points"].value = "0", "0.5", "3"
        v["max_slip"].value = ("" if lim.max_methane_slip_dry is None
                               else f"{_display(lim.max_methane_slip_dry * 100)} mol%")
        v["min_yield"].value = "" if lim.min_h2_yield is None else _display(lim.min_h2_yield)
        v["max_duty"].value = "" if lim.max_duty is None else f"{_display(lim.max_duty / 1e6)} MW"
        self.carbon_free.value = lim.carbon_free
        self._fill_train(sc)
        self._filled = {k: w.value for k, w in self.inputs.items()}
        self._clear()

    def _fill_train(self, sc: Scenario) -> None:
        t = sc.train
        v = self.inputs
        for name, value in self.STAGE_DEFAULTS.items():
            v[name].value = value
        for name, box in self.stage_on.items():
            box.value = getattr(t, name) is not None
        if t.pre_reformer is not None:
            T = t.pre_reformer.inlet_temperature
            v["pre_inlet"].value = f"{_display(T - 273.15)} degC"
            self._exact["pre_inlet"] = json.dumps(f"{T!r} K")
        sec = t.secondary_reformer
        if sec is not None:
            self.oxidant.value = sec.oxidant
            v["sec_ratio"].value = _display(sec.oxygen_to_carbon)
            v["sec_temperature"].value = f"{_display(sec.oxidant_temperature - 273.15)} degC"
            v["sec_approach"].value = f"{_display(sec.approach)} K"
            self._exact.update(sec_ratio=repr(sec.oxygen_to_carbon),
                               sec_temperature=json.dumps(f"{sec.oxidant_temperature!r} K"),
                               sec_approach=json.dumps(f"{sec.approach!r} K"))
        for name, key in (("high_temperature_shift", "hts"), ("low_temperature_shift", "lts")):
            st = getattr(t, name)
            if st is not None:
                v[f"{key}_temperature"].value = f"{_display(st.temperature - 273.15)} degC"
                v[f"{key}_approach"].value = f"{_display(st.approach)} K"
                self._exact[f"{key}_temperature"] = json.dumps(f"{st.temperature!r} K")
                self._exact[f"{key}_approach"] = json.dumps(f"{st.approach!r} K")

    def _train_toml(self) -> list[str]:
        q = self._value
        lines = []
        on = {name: box.value for name, box in self.stage_on.items()}
        if on["pre_reformer"]:
            lines += ["[train.pre_reformer]", f"inlet_temperature = {q('pre_inlet')}"]
        if on["secondary_reformer"]:
            lines += ["[train.secondary_reformer]", f"oxidant = {json.dumps(self.oxidant.value)}",
                      f"oxygen_to_carbon = {q('sec_ratio')}",
                      f"oxidant_temperature = {q('sec_temperature')}",
                      f"approach = {q('sec_approach')}"]
        for name, key in (("high_temperature_shift", "hts"), ("low_temperature_shift", "lts")):
            if on[name]:
                lines += [f"[train.{name}]", f"temperature = {q(key + '_temperature')}",
                          f"approach = {q(key + '_approach')}"]
        return lines

    def _clear(self) -> None:
        for m in self.messages.values():
            m.object = ""
        self.general.object = ""

    def _value(self, name: str) -> str:
        """A field as a TOML value: exact when untouched since :meth:`fill`, else as typed."""
        text = self.inputs[name].value
        if text == self._filled.get(name) and self._exact.get(name) is not None:
            return self._exact[name]
        if name == "composition":
            return _composition_toml(text)
        return _q(text)

    def toml_text(self) -> str:
        """The scenario file the fields describe (validated by the core's parser)."""
        v = {k: w.value for k, w in self.inputs.items()}
        q = self._value
        sc = self.state.scenario
        lines = [
            f"title = {json.dumps(sc.title)}",
            f"description = {json.dumps(sc.description)}",
            f"notes = {json.dumps(self.state.notes)}",
            "[feed]",
            f"composition = {q('composition')}",
            f"flow = {q('flow')}",
            f"inlet_temperature = {q('inlet_temperature')}",
            f"steam_to_carbon = {q('steam_to_carbon')}",
            f"oxygen_to_carbon = {q('oxygen_to_carbon')}",
            f"co2_to_carbon = {q('co2_to_carbon')}",
            "[design_point]",
            f"temperature = {q('temperature')}",
            f"pressure = {q('pressure')}",
            f"approach = {q('approach')}",
            "[window]",
            f"temperature = {{ from = {q('t_from')}, to = {q('t_to')}, "
            f"points = {q('t_points')} }}",
            f"pressure = {{ from = {q('p_from')}, to = {q('p_to')}, "
            f"points = {q('p_points')} }}",
            f"steam_to_carbon = {{ from = {q('s_from')}, to = {q('s_to')}, "
            f"points = {q('s_points')} }}",
        ]
        if self.cofeed.value:
            lines.append(f"{self.cofeed.value} = {{ from = {q('c_from')}, to = {q('c_to')}, "
                         f"points = {q('c_points')} }}")
        lines.append("[limits]")
        if v["max_slip"].strip():
            lines.append(f"max_methane_slip_dry = {q('max_slip')}")
        lines.append(f"carbon_free = {'true' if self.carbon_free.value else 'false'}")
        if v["min_yield"].strip():
            lines.append(f"min_h2_yield = {q('min_yield')}")
        if v["max_duty"].strip():
            lines.append(f"max_duty = {q('max_duty')}")
        lines += self._train_toml()
        return "\n".join(lines) + "\n"

    def submit(self) -> bool:
        """Validate the fields; on success adopt the scenario, else show the message."""
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
        """Put the message beside the field it names (and above the button)."""
        field = err.field
        for axis in ("oxygen_to_carbon", "co2_to_carbon"):
            field = field.replace(f"window.{axis}", "window.cofeed")
        for name, _, key in self.FIELDS:
            if field == key or field.startswith(key + "."):
                self.messages[name].object = html("{} (got {})", err.allowed,
                                                  text(repr(err.value)))
                break
        self.general.object = message_html("Not applied: ", err, ". The maps still show the "
                                           "last valid scenario.")

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
        def cell(name):
            return pn.Column(self.inputs[name], self.messages[name], margin=0)

        # The co-feed axis fields show only when an axis is chosen.
        self._cofeed_row = pn.Row(cell("c_from"), cell("c_to"), cell("c_points"),
                                  visible=bool(self.cofeed.value))
        self.cofeed.param.watch(
            lambda e: setattr(self._cofeed_row, "visible", bool(e.new)), "value")

        feed = pn.Column("#### Feed", cell("composition"),
                         pn.Row(cell("flow"), cell("inlet_temperature")),
                         pn.Row(cell("steam_to_carbon"), cell("oxygen_to_carbon"),
                                cell("co2_to_carbon")))
        design = pn.Column("#### Design point", pn.Row(cell("temperature"), cell("pressure"),
                                                        cell("approach")))
        window = pn.Column("#### Window",
                           pn.Row(cell("t_from"), cell("t_to"), cell("t_points")),
                           pn.Row(cell("p_from"), cell("p_to"), cell("p_points")),
                           pn.Row(cell("s_from"), cell("s_to"), cell("s_points")),
                           self.cofeed,
                           self._cofeed_row)
        limits = pn.Column("#### Review limits", pn.Row(cell("max_slip"), cell("min_yield"),
                                                         cell("max_duty")), self.carbon_free,
                           pn.pane.Markdown(
                               "With a train, the limits apply to it: slip after the last "
                               "reformer, H2 after the last stage, graphite in any reforming "
                               "stage; the duty limit stays on the primary's radiant duty.",
                               styles={"font-size": "12px", "color": "#4a5a64"}, width=560))
        # The reforming train: each stage's fields show only when it is switched on.
        stage_rows = []
        for name, (_, fields) in self.STAGES.items():
            extra = [self.oxidant] if name == "secondary_reformer" else []
            row = pn.Row(*extra, *[cell(f) for f in fields], visible=self.stage_on[name].value)
            self.stage_on[name].param.watch(
                lambda e, r=row: setattr(r, "visible", bool(e.new)), "value")
            stage_rows += [self.stage_on[name], row]
        train = pn.Column("#### Reforming train (the primary reformer is the window's T and P)",
                          *stage_rows)
        self.inputs["composition"].width = 600
        source = pn.Row(self.chooser, pn.Column("Or open a scenario file (.toml)", self.upload))
        return pn.Column(source, pn.Row(feed, design), pn.Row(window, limits), train,
                         pn.Row(self.apply, self.reset), self.general)


def _current_name(sc: Scenario, files: dict[str, Path]) -> str:
    if sc.path:
        for name, p in files.items():
            if Path(sc.path).resolve() == p.resolve():
                return name
    return next(iter(files)) if files else ""


class MapsView:
    """Two maps side by side with the slice chooser; clicks select a grid point."""

    def __init__(self, state: ExplorerState):
        self.state = state
        self.mode = pn.widgets.RadioButtonGroup(options={v: k for k, v in MODES.items()},
                                                value=state.mode, color="light")
        self.left = pn.widgets.Select(label="Left map", options=_var_options(),
                                      value=state.left, width=260)
        self.right = pn.widgets.Select(label="Right map", options=_var_options(),
                                       value=state.right, width=260)
        self.sliders = pn.Row()
        # The figures exist from the start (empty until the window is solved) and are only
        # restyled afterwards: models added to a live page later can race its first render.
        self.panes, self.sources = [], []
        self.levels: dict[str, np.ndarray] = {}
        for i, key in enumerate((state.left, state.right)):
            var = VARIABLES[key]
            fig, src, _ = map_figure(var, state.mode, np.array([0.0, 1.0]), empty_layers(),
                                     f"map-{i}", (0.0, 1.0), (0.0, 1.0))
            fig.on_event(Tap, self._tap)
            self.panes.append(pn.pane.Bokeh(fig))
            self.sources.append(src)
        self.status = pn.pane.HTML("", margin=(0, 10))
        self.bar = pn.indicators.Progress(value=0, max=1000, width=300, visible=False)
        self.mode.param.watch(lambda e: setattr(state, "mode", e.new), "value")
        self.left.param.watch(lambda e: setattr(state, "left", e.new), "value")
        self.right.param.watch(lambda e: setattr(state, "right", e.new), "value")
        state.param.watch(self._rebuild, ["dataset", "mode", "left", "right"])
        state.param.watch(self._redraw_slices, ["fixed"])
        state.param.watch(self._mark_selected, ["selected"])
        state.param.watch(self._progress, ["busy", "progress", "status"])
        self._progress()
        if state.dataset is not None:
            self._rebuild()

    def _progress(self, *_):
        s = self.state
        self.bar.visible = s.busy
        self.bar.value = int(1000 * s.progress)
        self.status.object = text(s.status)

    def _rebuild(self, *_):
        """New dataset, orientation or variable: the same figures show the new content."""
        s = self.state
        ds = s.dataset
        if ds is None:
            return
        self.levels = {k: variable_levels(ds, VARIABLES[k]) for k in (s.left, s.right)}
        x = ds.temperature.values - 273.15
        y = ds[s.mode].values / (1e5 if s.mode == "pressure" else 1.0)
        x_range = (float(x.min()), float(x.max()))
        y_range = (float(y.min()), float(y.max()))
        for i, key in enumerate((s.left, s.right)):
            var = VARIABLES[key]
            layers = slice_layers(ds, var, s.mode, s.fixed, s.scenario.limits, self.levels[key])
            restyle_figure(self.panes[i].object, self.sources[i], var, s.mode,
                           self.levels[key], layers, x_range, y_range)
        self._build_sliders()
        self._mark_selected()

    def _build_sliders(self):
        s, ds = self.state, self.state.dataset
        widgets = []
        for d in [d for d in ds["h2_yield"].dims if d not in ("temperature", s.mode)]:
            vals = ds[d].values
            if d == "pressure":
                labels = [f"{v / 1e5:.2f} bar" for v in vals]
                name = "Pressure (abs)"
            else:
                labels = [f"{v:.3g}" for v in vals]
                name = {"steam_to_carbon": "Steam-to-carbon",
                        "oxygen_to_carbon": "O2-to-carbon",
                        "co2_to_carbon": "CO2-to-carbon"}[d]
            options = dict(zip(labels, range(len(vals)), strict=True))
            w = pn.widgets.DiscreteSlider(label=name, options=options,
                                          value=s.fixed.get(d, 0), width=360)
            w.param.watch(lambda e, d=d: self._set_fixed(d, e.new), "value")
            widgets.append(w)
        self.sliders[:] = widgets

    def _set_fixed(self, dim: str, index: int) -> None:
        self.state.fixed = dict(self.state.fixed, **{dim: index})

    def _redraw_slices(self, *_):
        """A new slice: recontour from the solved window (no thermodynamics)."""
        s = self.state
        if s.dataset is None or not self.levels:
            return
        cut = slice_fields(s.dataset, s.mode, s.fixed)
        shared = window_layers(cut, s.mode, s.scenario.limits)
        for i, key in enumerate((s.left, s.right)):
            layers = combine(variable_layers(cut, VARIABLES[key], s.mode, self.levels[key]),
                             shared)
            for name, data in layers.items():
                self.sources[i][name].data = data
        self._mark_selected()

    def _mark_selected(self, *_):
        s = self.state
        if s.selected is None or s.dataset is None:
            for src in self.sources:
                src["selected"].data = {"x": [], "y": [], "alpha": []}
            return
        sel = s.selected
        x = sel["temperature"] - 273.15
        y = sel[s.mode] / (1e5 if s.mode == "pressure" else 1.0)
        ds = s.dataset
        on_slice = all(
            math.isclose(float(ds[d].values[i]), sel[d], rel_tol=1e-12)
            for d, i in s.fixed.items() if d != s.mode and d in sel
        )
        for src in self.sources:
            src["selected"].data = {"x": [x], "y": [y], "alpha": [1.0 if on_slice else 0.35]}

    def _tap(self, event) -> None:
        if event.x is None or event.y is None or self.state.dataset is None:
            return
        self.state.select_display(float(event.x), float(event.y))

    def __panel__(self):
        return pn.Column(
            pn.Row(self.mode),
            pn.Row(self.left, self.right, self.sliders),
            pn.Row(self.bar, self.status),
            pn.Row(*self.panes),
            pn.pane.Markdown(
                "Click a map to select the nearest grid point. Dots are the solved grid "
                "points (hover for their values); colours and lines interpolate between "
                "them. Colour levels are fixed over the whole window.",
                styles={"font-size": "12px", "color": "#4a5a64"}),
        )


def _var_options() -> dict[str, str]:
    return {v.title: k for k, v in VARIABLES.items()}


class BalanceView:
    """Full balance of the selected grid point, computed by the core at that point."""

    def __init__(self, state: ExplorerState):
        self.state = state
        self.heading = pn.pane.Markdown("")
        self.tables = pn.pane.HTML("", stylesheets=[PAGE_CSS], sizing_mode="stretch_width")
        self.pin = pn.widgets.Button(label="Pin this point", color="success")
        self.pin.on_click(lambda e: state.pin())
        self.csv = pn.widgets.FileDownload(callback=self._csv, filename="point-balance.csv",
                                           label="Balance (CSV)", color="light")
        self.json = pn.widgets.FileDownload(callback=self._json, filename="point-balance.json",
                                            label="Balance (JSON)", color="light")
        self.grid = pn.widgets.FileDownload(callback=self._grid, filename="window-grid.nc",
                                            label="Whole grid (NetCDF)", color="light")
        self._current: dict | None = None
        state.param.watch(self._update, ["selected", "scenario"])
        self._update()

    def _update(self, *_):
        pt = self.state.selected_point()
        if pt is None:
            self._current = None
            self.heading.object = "Select a point on a map to see its balance."
            self.tables.object = ""
            return
        d = pt.to_dict()
        self._current = d
        self.heading.object = (
            f"**{d['temperature_K'] - 273.15:.1f} degC, {d['pressure_Pa'] / 1e5:.3f} bar abs, "
            f"S/C {d['steam_to_carbon']:.3g}**"
            + (f", O2/C {d['oxygen_to_carbon']:.3g}" if d["oxygen_to_carbon"] else "")
            + (f", CO2/C {d['co2_to_carbon']:.3g}" if d["co2_to_carbon"] else "")
            + f" (approach {d['approach_K']:g} K)"
        )
        self.tables.object = balance_html(d)

    def _csv(self):
        if not self._current:
            return _io.StringIO("")
        sc = self.state.scenario
        return _io.StringIO(balance_csv(self._current, sc.title, self.state.notes))

    def _json(self):
        if not self._current:
            return _io.StringIO("{}")
        # The scenario's own words travel with the numbers, as text no spreadsheet runs.
        about = {"scenario": {"title": spreadsheet_text(self.state.scenario.title),
                              "review_notes": spreadsheet_text(self.state.notes)}}
        return _io.StringIO(json.dumps({**about, **self._current}, indent=2, allow_nan=False))

    def _grid(self):
        ds = self.state.dataset
        if ds is None:
            return _io.BytesIO(b"")
        fd, tmp = tempfile.mkstemp(suffix=".nc")
        os.close(fd)
        try:
            grid_io.save(ds, tmp)
            return _io.BytesIO(Path(tmp).read_bytes())
        finally:
            os.unlink(tmp)

    def __panel__(self):
        return pn.Column(self.heading, pn.Row(self.pin, self.csv, self.json, self.grid),
                         self.tables)


class ComparisonView:
    """A proposal beside the scenario: maps of both and of the change, and both balances at
    the selected point with the changes."""

    NONE = "(no proposal)"

    def __init__(self, state: ExplorerState):
        self.state = state
        files = scenario_files()
        self.chooser = pn.widgets.Select(label="Proposal: shipped scenario",
                                         options=[self.NONE] + list(files), value=self.NONE,
                                         width=260)
        self.upload = pn.widgets.FileInput(accept=".toml", multiple=False, width=260)
        self.variable = pn.widgets.Select(label="Variable", options=_var_options(),
                                          value="h2_product", width=320)
        self.message = _message_pane()
        self.status = pn.pane.HTML("", margin=(0, 10))
        self.table = pn.pane.HTML("", stylesheets=[PAGE_CSS], sizing_mode="stretch_width")
        self.panes, self.sources = [], []
        titles = ("Base", "Proposal", "Change (proposal - base)")
        for i in range(3):
            var = VARIABLES["h2_product"]
            fig, src, _ = map_figure(var, state.mode, np.array([0.0, 1.0]), empty_layers(),
                                     f"cmp-{i}", (0.0, 1.0), (0.0, 1.0), width=520,
                                     height=400)
            fig.title.text = f"{titles[i]}: {var.title}"
            fig.on_event(Tap, self._tap)
            self.panes.append(pn.pane.Bokeh(fig))
            self.sources.append(src)
        self.titles = titles
        self.chooser.param.watch(self._choose, "value")
        self.upload.param.watch(self._upload, "value")
        self.variable.param.watch(self._redraw, "value")
        # The base's dataset also changes alone (a limits edit: same numbers, new feasible
        # window), and its hatching must follow.
        state.param.watch(self._redraw, ["difference", "dataset", "mode", "fixed"])
        state.param.watch(self._status, ["compare_status"])
        state.param.watch(self._table, ["selected", "difference"])
        state.param.watch(self._mark, ["selected"])
        self._status()
        self._redraw()
        self._table()

    def _status(self, *_):
        self.status.object = text(self.state.compare_status)

    def _adopt(self, sc: Scenario | None) -> None:
        self.message.object = ""
        try:
            self.state.set_proposal(sc, background=pn.state.curdoc is not None
                                    and pn.state.curdoc.session_context is not None)
        except InputError as err:
            self.message.object = message_html("Not compared: ", err)

    def _choose(self, event) -> None:
        if event.new == self.NONE:
            self._adopt(None)
            return
        path = scenario_files().get(event.new)
        if path is None:
            return
        try:
            sc = thermo.load_scenario(path)
        except InputError as err:
            self.message.object = message_html(html("Could not open {}: ", event.new), err)
            return
        self._adopt(sc)

    def _upload(self, event) -> None:
        sc, message = read_upload(event.new, self.upload.filename)
        if sc is None:
            self.message.object = message
            return
        self._adopt(sc)

    def _redraw(self, *_):
        """Base, proposal and change of the chosen variable on the current slice."""
        s = self.state
        if s.difference is None or s.dataset is None or s.proposal_dataset is None:
            for src in self.sources:
                for name, data in empty_layers().items():
                    src[name].data = data
            return
        base, prop, diff = s.dataset, s.proposal_dataset, s.difference
        key = self.variable.value
        var = VARIABLES[key]
        levels = shared_levels((base, prop), var)
        ch = change_variable(var)
        ch_levels = change_levels(diff, var)
        x = base.temperature.values - 273.15
        y = base[s.mode].values / (1e5 if s.mode == "pressure" else 1.0)
        ranges = ((float(x.min()), float(x.max())), (float(y.min()), float(y.max())))
        cut_b = slice_fields(base, s.mode, s.fixed)
        cut_p = slice_fields(prop, s.mode, s.fixed)
        sel = {d: i for d, i in s.fixed.items() if d in diff.dims
               and d not in (s.mode, "temperature")}
        cut_d = diff.isel(sel).transpose(s.mode, "temperature", ...)
        common_p = window_layers(cut_p, s.mode, s.proposal.limits)
        panels = [
            (var, levels, combine(variable_layers(cut_b, var, s.mode, levels),
                                  window_layers(cut_b, s.mode, s.scenario.limits))),
            (var, levels, combine(variable_layers(cut_p, var, s.mode, levels), common_p)),
            (ch, ch_levels, combine(variable_layers(cut_d, ch, s.mode, ch_levels), common_p)),
        ]
        for i, (v, lv, layers) in enumerate(panels):
            fig = self.panes[i].object
            restyle_figure(fig, self.sources[i], v, s.mode, lv, layers, *ranges)
            fig.title.text = f"{self.titles[i]}: {v.title}"
        self._mark()

    def _mark(self, *_):
        s = self.state
        data = {"x": [], "y": [], "alpha": []}
        if s.selected is not None and s.difference is not None:
            data = {"x": [s.selected["temperature"] - 273.15],
                    "y": [s.selected[s.mode] / (1e5 if s.mode == "pressure" else 1.0)],
                    "alpha": [1.0]}
        for src in self.sources:
            src["selected"].data = data

    def _tap(self, event) -> None:
        if event.x is None or event.y is None or self.state.dataset is None:
            return
        self.state.select_display(float(event.x), float(event.y))

    def _table(self, *_):
        s = self.state
        if s.difference is None:
            self.table.object = ("<p class='rw-small'>Load a proposal (a shipped scenario or "
                                 "a file) to compare it with this scenario over the same "
                                 "window.</p>")
            return
        a, b = s.selected_point(), s.selected_proposal_point()
        if a is None or b is None:
            self.table.object = "<p class='rw-small'>Select a point on a map.</p>"
            return
        da, db = a.to_dict(), b.to_dict()
        self.table.object = (f"<h4>Base and proposal at {da['temperature_K'] - 273.15:.1f} "
                             f"degC, {da['pressure_Pa'] / 1e5:.3f} bar abs, S/C "
                             f"{da['steam_to_carbon']:.3g}</h4>" + compare_point_html(da, db)
                             + "<h4>Proposal: full balance</h4>" + balance_html(db))

    def __panel__(self):
        return pn.Column(
            pn.Row(self.chooser, pn.Column("Or open a proposal file (.toml)", self.upload),
                   self.variable),
            self.message, self.status,
            pn.Row(self.panes[0], self.panes[1]),
            pn.Row(self.panes[2], pn.pane.Markdown(
                "The proposal is solved over this scenario's window, so every grid point has "
                "both answers. The change map shows proposal minus base in the variable's "
                "unit (blue where the proposal is higher); each map carries its own carbon "
                "boundary and feasible window (the change map, the proposal's). The slice and "
                "the selected point follow the maps above.",
                styles={"font-size": "12px", "color": "#4a5a64"}, width=380)),
            self.table,
        )


class PinnedView:
    """Pinned points side by side."""

    def __init__(self, state: ExplorerState):
        self.state = state
        self.table = pn.pane.HTML("", stylesheets=[PAGE_CSS], sizing_mode="stretch_width")
        self.clear = pn.widgets.Button(label="Clear pinned points")
        self.clear.on_click(lambda e: state.clear_pins())
        state.param.watch(self._update, ["pinned"])
        self._update()

    def _update(self, *_):
        self.table.object = comparison_html(self.state.pinned)

    def __panel__(self):
        return pn.Column(self.table, self.clear)


class NotesView:
    """Review notes, kept with the scenario and saved in its file."""

    def __init__(self, state: ExplorerState):
        self.state = state
        self.text = pn.widgets.TextAreaInput(
            value=state.notes, placeholder="Findings, decisions, open questions ...",
            height=140, sizing_mode="stretch_width")
        self.text.link(state, value="notes")
        state.param.watch(lambda e: setattr(self.text, "value", e.new), ["notes"])
        self.save = pn.widgets.FileDownload(callback=self._scenario, filename="scenario.toml",
                                            label="Scenario with notes (TOML)",
                                            color="light")
        self.export = pn.widgets.FileDownload(callback=self._review, filename="review.html",
                                              label="Review file (offline HTML)",
                                              color="primary")
        self.message = _message_pane()

    def _scenario(self):
        return _io.StringIO(self.state.scenario_with_notes().to_toml())

    def _review(self):
        """The review file, written by a fresh process (see explorer.export)."""
        s = self.state
        if s.dataset is None:
            self.message.object = "The window is still being solved; export when it is done."
            return _io.BytesIO(b"")
        with tempfile.TemporaryDirectory() as tmp:
            folder = Path(tmp)
            (folder / "scenario.toml").write_text(s.scenario_with_notes().to_toml(), "utf-8")
            grid_io.save(s.dataset, folder / "grid.nc")
            (folder / "pinned.json").write_text(json.dumps(s.pinned, allow_nan=False), "utf-8")
            out = folder / "review.html"
            extra = []
            if s.proposal is not None and s.proposal_dataset is not None:
                # The comparison goes into the file as well.
                (folder / "proposal.toml").write_text(s.proposal.to_toml(), "utf-8")
                grid_io.save(s.proposal_dataset, folder / "proposal.nc")
                extra = ["--compare", str(folder / "proposal.toml"), "--compare-grid",
                         str(folder / "proposal.nc")]
            proc = subprocess.run(
                [sys.executable, "-m", "explorer.export", "--scenario",
                 str(folder / "scenario.toml"), "--grid", str(folder / "grid.nc"),
                 "--pinned", str(folder / "pinned.json"), *extra, "-o", str(out)],
                capture_output=True, text=True, timeout=600)
            if proc.returncode != 0 or not out.exists():
                last = (proc.stderr.strip().splitlines() or ["unknown error"])[-1]
                self.message.object = html("The review file could not be written: {}",
                                           last)
                return _io.BytesIO(b"")
            self.message.object = ""
            return _io.BytesIO(out.read_bytes())

    def __panel__(self):
        return pn.Column(self.text, pn.Row(self.save, self.export), self.message)


def _message_pane(**kwargs) -> pn.pane.HTML:
    """A pane for messages about input (filled through :mod:`explorer.safe` only)."""
    return pn.pane.HTML("", styles={"color": "#b3261e"}, **kwargs)


def _section(title: str, *objects):
    return pn.Column(pn.pane.Markdown(f"## {title}", stylesheets=[SECTION_CSS]), *objects,
                     sizing_mode="stretch_width")


def build_app(scenario: Scenario | str | os.PathLike | None = None, *,
              solve: str = "background", proposal: Scenario | None = None) -> pn.Column:
    """The explorer page for one session.

    Parameters
    ----------
    scenario : Scenario or path, optional
        The study to open; the demo if None.
    solve : {"background", "now"}
        Solve the window in a worker thread with progress (served app), or before returning
        (notebooks, tests).
    proposal : Scenario, optional
        A proposal to compare with the scenario from the start.
    """
    if not isinstance(scenario, Scenario):
        scenario = thermo.load_scenario(scenario)
    state = ExplorerState(check_window_size(scenario))
    form = ScenarioForm(state)
    maps = MapsView(state)
    balance = BalanceView(state)
    compare = ComparisonView(state)
    pinned = PinnedView(state)
    notes = NotesView(state)
    # Title and description come from the scenario file: text, never markup.
    title = pn.pane.HTML(html("<h1>{}</h1>", scenario.title), sizing_mode="stretch_width")
    desc = pn.pane.HTML(paragraphs(scenario.description), sizing_mode="stretch_width",
                        styles={"font-size": "14px"})

    def retitle(*_):
        title.object = html("<h1>{}</h1>", state.scenario.title)
        desc.object = paragraphs(state.scenario.description)

    state.param.watch(retitle, ["scenario"])
    caution = pn.pane.Markdown("**Caution.** " + CAUTION, stylesheets=[CAUTION_CSS],
                               sizing_mode="stretch_width")
    footer = pn.pane.Markdown(
        "Method: Gibbs energy minimization for an ideal gas plus pure graphite (element "
        "potentials); composition at T minus the approach, enthalpy at T. Standard state "
        "1 bar. Data: GRI-Mech 3.0 gas polynomials, NASA TM-4513 graphite, IUPAC 2021 atomic "
        f"weights. Reformer window explorer {thermo.__version__}.",
        styles={"font-size": "11.5px", "color": "#4a5a64"})
    page = pn.Column(
        title, desc, caution,
        _section("1 Scenario and feed", form),
        _section("2 Operating-window maps", maps),
        _section("3 Balance at the selected point", balance),
        _section("4 Comparison with a proposal", compare),
        _section("5 Pinned points", pinned),
        _section("6 Review notes", notes),
        footer,
        sizing_mode="stretch_width",
        styles={"max-width": "1240px", "margin": "0 auto"},
    )
    page.explorer_state = state  # for tests and notebooks
    if solve == "now":
        state.solve_now()
        if proposal is not None:
            state.set_proposal(proposal, background=False)
    else:
        def start():
            state.solve_in_background()
            if proposal is not None:
                state.set_proposal(proposal)
            pn.state.add_periodic_callback(state.poll, period=200)

        if pn.state.curdoc is not None and pn.state.curdoc.session_context is not None:
            pn.state.onload(start)
        else:
            state.solve_now()
            if proposal is not None:
                state.set_proposal(proposal, background=False)
    return page
