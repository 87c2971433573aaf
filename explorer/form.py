"""The scenario form: fields for the feed, design point, window, limits and train; a
shipped scenario or an uploaded file.

The form writes TOML text from its fields and hands it to :func:`thermo.scenario.parse_scenario`,
so the app validates exactly as the command line does.
"""

from __future__ import annotations

import json
from pathlib import Path

import panel as pn

import thermo
from explorer import display
from explorer.safe import html, message_html, text
from explorer.state import ExplorerState, check_window_size
from thermo.errors import InputError
from thermo.scenario import DEMO_PATH, Scenario, carbon_toml, parse_scenario, plant_toml

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


def _in_units(value: float, kind: str, unit: str) -> str:
    """An SI value as a field's text in the form's own units (metric: degC, bar, kmol/h,
    MW), converted by explorer.display."""
    return f"{_display(display.to_display(value, kind))} {unit}"


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
        ("max_fired_duty", "Max fired duty (LHV; with [plant])", "limits.max_fired_duty"),
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
    #: values, common practice, no source, as are the shift inlet ranges).
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
        state.param.watch(lambda e: self.design_warnings(), ["scenario"])
        self.design_warnings()

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
            kind = display.axis_kind(name)

            def shown(v, kind=kind):
                text = f"{display.to_display(v, kind):.4g}"
                return f"{text} {display.symbol(kind)}" if kind else text

            self.messages[name].object = html(
                '<span class="rw-warn" data-role="design-outside">Outside the window '
                "({} to {}): computed exactly at {}; the maps mark it at their border."
                "</span>", shown(lo), shown(hi), shown(value))

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
            "max_fired_duty": (None if lim.max_fired_duty is None
                               else json.dumps(f"{lim.max_fired_duty!r} W")),
        }
        v["composition"].value = ", ".join(f"{k}={_display(x)}" for k, x in
                                           f.composition.items())
        v["flow"].value = _in_units(f.flow, "molar_flow", "kmol/h")
        v["inlet_temperature"].value = _in_units(f.inlet_temperature, "temperature", "degC")
        v["steam_to_carbon"].value = _display(f.steam_to_carbon)
        v["oxygen_to_carbon"].value = _display(f.oxygen_to_carbon)
        v["co2_to_carbon"].value = _display(f.co2_to_carbon)
        v["temperature"].value = _in_units(sc.temperature, "temperature", "degC")
        v["pressure"].value = _in_units(sc.pressure, "pressure", "bar")
        v["approach"].value = f"{_display(sc.approach)} K"
        v["t_from"].value = _in_units(w.temperature.start, "temperature", "degC")
        v["t_to"].value = _in_units(w.temperature.stop, "temperature", "degC")
        v["t_points"].value = str(w.temperature.points)
        v["p_from"].value = _in_units(w.pressure.start, "pressure", "bar")
        v["p_to"].value = _in_units(w.pressure.stop, "pressure", "bar")
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
        v["max_duty"].value = "" if lim.max_duty is None else _in_units(lim.max_duty, "power", "MW")
        v["max_fired_duty"].value = ("" if lim.max_fired_duty is None
                                     else _in_units(lim.max_fired_duty, "power", "MW"))
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
            v["pre_inlet"].value = _in_units(T, "temperature", "degC")
            self._exact["pre_inlet"] = json.dumps(f"{T!r} K")
        sec = t.secondary_reformer
        if sec is not None:
            self.oxidant.value = sec.oxidant
            v["sec_ratio"].value = _display(sec.oxygen_to_carbon)
            v["sec_temperature"].value = _in_units(sec.oxidant_temperature, "temperature", "degC")
            v["sec_approach"].value = f"{_display(sec.approach)} K"
            self._exact.update(sec_ratio=repr(sec.oxygen_to_carbon),
                               sec_temperature=json.dumps(f"{sec.oxidant_temperature!r} K"),
                               sec_approach=json.dumps(f"{sec.approach!r} K"))
        for name, key in (("high_temperature_shift", "hts"), ("low_temperature_shift", "lts")):
            st = getattr(t, name)
            if st is not None:
                v[f"{key}_temperature"].value = _in_units(st.temperature, "temperature", "degC")
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
        if v["max_fired_duty"].strip():
            lines.append(f"max_fired_duty = {q('max_fired_duty')}")
        lines += self._train_toml()
        # The [carbon] table has no fields here yet: the scenario's own is kept as it is.
        lines += carbon_toml(sc.carbon)
        # The plant's assumptions have no fields here: its table is kept as the scenario has
        # it (the review sheet states each assumption).
        lines += plant_toml(sc.plant)
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
                                                  text(err.shown_value))
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
                                                         cell("max_duty")),
                           pn.Row(cell("max_fired_duty")), self.carbon_free,
                           pn.pane.Markdown(
                               "With a train, the limits apply to it: slip after the last "
                               "reformer, H2 after the last stage, the carbon verdict (graphite "
                               "in any reforming stage included); the duty limit stays on the "
                               "primary's radiant duty.",
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


def _message_pane(**kwargs) -> pn.pane.HTML:
    """A pane for messages about input (filled through :mod:`explorer.safe` only)."""
    return pn.pane.HTML("", styles={"color": "#b3261e"}, **kwargs)
