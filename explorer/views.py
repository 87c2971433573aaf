"""The page's sections: maps, the selected point's balance, the comparison with a proposal,
pinned points and review notes. Views render state; thermodynamics comes from :mod:`thermo`
through :class:`explorer.state.ExplorerState`.
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
from bokeh.models import Legend

import thermo
from explorer import display
from explorer.display import SYSTEMS
from explorer.form import _message_pane, read_upload, scenario_files
from explorer.limits_report import (
    best_summary,
    grid_warning_text,
    margins_html,
    margins_line,
)
from explorer.maps import (
    CHANGE_TOLERANCE,
    COMPARE_ORDER,
    MODES,
    VARIABLES,
    available,
    change_levels,
    change_tolerance,
    change_variable,
    combine,
    empty_layers,
    has_change,
    legend_visibility,
    map_figure,
    quiet_change,
    restyle_figure,
    shared_levels,
    slice_fields,
    slice_layers,
    variable,
    variable_layers,
    variable_levels,
    window_layers,
    x_display,
    y_display,
)
from explorer.safe import html, message_html, spreadsheet_text, text
from explorer.sheet import design_row_ranges
from explorer.state import ExplorerState
from explorer.static import PAGE_CSS
from explorer.tables import (
    balance_csv,
    balance_html,
    compare_point_html,
    comparison_html,
    verdict_html,
)
from thermo import io as grid_io
from thermo.edges import objectives_for
from thermo.errors import InputError
from thermo.scenario import Scenario

#: Map heights [px]: both maps on the first screen at 1366 x 768; taller when presenting.
MAP_HEIGHT, PRESENT_HEIGHT = 400, 640


class MapsView:
    """Two maps side by side with the slice chooser; clicks select a grid point."""

    def __init__(self, state: ExplorerState):
        self.state = state
        self.mode = pn.widgets.RadioButtonGroup(options={v: k for k, v in MODES.items()},
                                                value=state.mode, color="light",
                                                margin=(24, 10, 5, 10))
        options = _var_options(state.dataset, state.scenario.plant is not None)
        self.left = pn.widgets.Select(label="Left map", options=options,
                                      value=state.left, width=250)
        self.right = pn.widgets.Select(label="Right map", options=options,
                                       value=state.right, width=250)
        self.present = pn.widgets.Toggle(label="Presentation layout", value=False, width=170)
        self.present.param.watch(self._presentation, "value")
        # Display units of the whole page (explorer.display); the core stays SI.
        self.units = pn.widgets.Select(label="Units", options={v: k for k, v in SYSTEMS.items()},
                                       value=state.units, width=230)
        self.units.param.watch(lambda e: setattr(state, "units", e.new), "value")
        state.param.watch(lambda e: setattr(self.units, "value", e.new), "units")
        self.sliders = pn.Row()
        # The figures exist from the start (empty until the window is solved) and are only
        # restyled afterwards: models added to a live page later can race its first render.
        # A window solved already is drawn into them as they are made (no restyle pass).
        self.panes, self.sources, self.legends = [], [], []
        self.levels: dict[str, np.ndarray] = {}
        for i, key in enumerate((state.left, state.right)):
            var = variable(key, state.units)
            fig, src, _ = map_figure(var, state.mode, *self._first_content(key), f"map-{i}",
                                     *self._ranges(), height=MAP_HEIGHT, units=state.units)
            fig.sizing_mode = "stretch_width"
            fig.on_event(Tap, self._tap)
            self.panes.append(pn.pane.Bokeh(fig, sizing_mode="stretch_width"))
            self.sources.append(src)
            self.legends.append(next(m for m in fig.below if isinstance(m, Legend)))
        self.status = pn.pane.HTML("", margin=(0, 10))
        self.bar = pn.indicators.Progress(value=0, max=1000, width=300, visible=False)
        self.mode.param.watch(lambda e: setattr(state, "mode", e.new), "value")
        self.left.param.watch(lambda e: setattr(state, "left", e.new), "value")
        self.right.param.watch(lambda e: setattr(state, "right", e.new), "value")
        # One watcher: a new window moves `dataset` and `fixed` together, drawn once.
        state.param.watch(self._changed, ["dataset", "mode", "left", "right", "fixed",
                                          "objective", "best_version", "units"])
        state.param.watch(self._mark_selected, ["selected"])
        state.param.watch(self._progress, ["busy", "progress", "status"])
        self._progress()
        if state.dataset is not None:
            self._build_sliders()
            self._mark_selected()

    def _first_content(self, key: str):
        """Levels and layers of the first figure of `key` (empty while solving)."""
        s = self.state
        if s.dataset is None:
            return np.array([0.0, 1.0]), empty_layers()
        var = variable(key, s.units)
        self.levels[key] = variable_levels(s.dataset, var)
        return self.levels[key], slice_layers(s.dataset, var, s.mode, s.fixed,
                                              s.scenario.limits, self.levels[key],
                                              markers=s.markers(), units=s.units)

    def _ranges(self):
        """x and y ranges of the maps: the window's, in display units."""
        ds = self.state.dataset
        if ds is None:
            return (0.0, 1.0), (0.0, 1.0)
        x = x_display(ds.temperature.values, self.state.units)
        y = y_display(self.state.mode, ds[self.state.mode].values, self.state.units)
        return (float(x.min()), float(x.max())), (float(y.min()), float(y.max()))

    def _changed(self, *events):
        if any(e.name not in ("fixed", "objective", "best_version") for e in events):
            self._rebuild()
        else:
            self._redraw_slices()

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
        # The chooser offers what this Dataset holds (the plant's variables need [plant]).
        options = _var_options(ds)
        for widget, name, fallback in ((self.left, "left", "h2_yield"),
                                       (self.right, "right", "methane_slip_dry")):
            if widget.options != options:
                widget.options = options
            if getattr(s, name) not in options.values():
                setattr(s, name, fallback)  # rebuilds through the watcher
                return
            widget.value = getattr(s, name)
        self.levels = {k: variable_levels(ds, variable(k, s.units)) for k in (s.left, s.right)}
        x_range, y_range = self._ranges()
        for i, key in enumerate((s.left, s.right)):
            var = variable(key, s.units)
            layers = slice_layers(ds, var, s.mode, s.fixed, s.scenario.limits, self.levels[key],
                                  markers=s.markers(), units=s.units)
            restyle_figure(self.panes[i].object, self.sources[i], var, s.mode,
                           self.levels[key], layers, x_range, y_range, s.units)
        self._build_sliders()
        self._mark_selected()

    def _build_sliders(self):
        s, ds = self.state, self.state.dataset
        widgets = []
        for d in [d for d in ds["h2_yield"].dims if d not in ("temperature", s.mode)]:
            vals = ds[d].values
            if d == "pressure":
                labels = [display.fmt(v, "pressure", 2, s.units, with_unit=True)
                          .replace(" abs", "") for v in vals]
                name = "Pressure (abs)"
            else:
                labels = [f"{v:.3g}" for v in vals]
                name = {"steam_to_carbon": "Steam-to-carbon",
                        "oxygen_to_carbon": "O2-to-carbon",
                        "co2_to_carbon": "CO2-to-carbon"}[d]
            options = dict(zip(labels, range(len(vals)), strict=True))
            w = pn.widgets.DiscreteSlider(label=name, options=options,
                                          value=s.fixed.get(d, 0), width=260)
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
        shared = window_layers(cut, s.mode, s.scenario.limits, s.markers(), units=s.units)
        for i, key in enumerate((s.left, s.right)):
            layers = combine(variable_layers(cut, variable(key, s.units), s.mode,
                                             self.levels[key], s.units), shared)
            for name, data in layers.items():
                self.sources[i][name].data = data
        self._mark_selected()

    def _legends(self) -> None:
        for legend, src in zip(self.legends, self.sources, strict=True):
            vis = legend_visibility({k: src[k].data for k in src}, src["selected"].data)
            for item in legend.items:
                item.visible = vis[item.name]

    def _mark_selected(self, *_):
        s = self.state
        if s.selected is None or s.dataset is None:
            for src in self.sources:
                src["selected"].data = {"x": [], "y": [], "alpha": []}
            self._legends()
            return
        sel = s.selected
        x = x_display(sel["temperature"], s.units)
        y = y_display(s.mode, sel[s.mode], s.units)
        ds = s.dataset
        on_slice = all(
            math.isclose(float(ds[d].values[i]), sel[d], rel_tol=1e-12)
            for d, i in s.fixed.items() if d != s.mode and d in sel
        )
        for src in self.sources:
            src["selected"].data = {"x": [x], "y": [y], "alpha": [1.0 if on_slice else 0.35]}
        self._legends()

    def _tap(self, event) -> None:
        if event.x is None or event.y is None or self.state.dataset is None:
            return
        self.state.select_display(float(event.x), float(event.y))

    def _presentation(self, event) -> None:
        """Large maps for a projector: taller figures, one above the other."""
        for pane in self.panes:
            pane.object.height = PRESENT_HEIGHT if event.new else MAP_HEIGHT
        self._maps_row.objects = [] if event.new else list(self.panes)
        self._maps_column.objects = list(self.panes) if event.new else []

    def __panel__(self):
        self._maps_row = pn.Row(*self.panes, sizing_mode="stretch_width")
        self._maps_column = pn.Column(sizing_mode="stretch_width")
        return pn.Column(
            pn.Row(self.mode, self.left, self.right, self.sliders, self.units),
            pn.Row(self.bar, self.status, margin=(0, 0, 0, 0)),
            self._maps_row,
            self._maps_column,
            pn.Row(pn.pane.Markdown(
                "Click a map to select the nearest grid point (or type an exact point "
                "under the balance). Dots are the solved grid points (hover a dot for its "
                "values, the review limits it breaks and its carbon call); colours and lines "
                "interpolate between them. The feasible edge and the hatching are exact: "
                "each row's edges are solved between the grid points to 0.1 K. The star is "
                "the best point, the diamond the design point (a triangle at the border "
                "points to a design point outside the window). Colour levels are fixed over "
                "the whole window.",
                styles={"font-size": "13px", "color": "#4a5a64"}, sizing_mode="stretch_width"),
                self.present, sizing_mode="stretch_width"),
            sizing_mode="stretch_width",
        )


def _var_options(ds=None, plant: bool = False) -> dict[str, str]:
    """Chooser options (title -> key) of the map variables `ds` can draw (before a Dataset
    exists: every variable, the plant's only if the scenario has a [plant] table)."""
    return {v.title: k for k, v in VARIABLES.items()
            if available(ds, k) or (ds is None and plant)}


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
        self.typed_t = pn.widgets.TextInput(label="Exact temperature", placeholder="867.5 degC",
                                            width=170)
        self.typed_p = pn.widgets.TextInput(label="Exact pressure", placeholder="23.4 bar",
                                            width=170)
        self.typed_s = pn.widgets.TextInput(label="Exact steam-to-carbon", placeholder="3.1",
                                            width=170)
        self.typed_go = pn.widgets.Button(label="Balance at this exact point", color="primary",
                                          margin=(28, 10, 5, 10))
        self.typed_go.on_click(lambda e: self.select_typed())
        self.typed_message = _message_pane()
        state.param.watch(self._update, ["selected", "scenario", "units"])
        self._update()

    def select_typed(self) -> bool:
        """Select the typed point exactly (no grid snapping); a bad value gets its message."""
        self.typed_message.object = ""
        s_c = self.typed_s.value.strip()
        try:
            try:
                ratio = float(s_c)
            except ValueError:
                raise InputError("steam_to_carbon", s_c, "a plain number (mol per mol "
                                 "hydrocarbon carbon)") from None
            self.state.select_exact(self.typed_t.value.strip(), self.typed_p.value.strip(),
                                    ratio)
        except InputError as err:
            self.typed_message.object = message_html("Not computed: ", err)
            return False
        return True

    def _update(self, *_):
        pt = self.state.selected_point()
        if pt is None:
            self._current = None
            self.heading.object = "Select a point on a map to see its balance."
            self.tables.object = ""
            return
        d = pt.to_dict()
        self._current = d
        what = "Typed point (computed exactly there)" if self.state.typed else "Grid node"
        took = (" (typed; not snapped to the grid)" if self.state.typed
                else "; a click takes the nearest solved node, labelled here")
        u = self.state.units
        self.heading.object = (
            f"**{what}: "
            f"{display.fmt(d['temperature_K'], 'temperature', 2 if self.state.typed else 1, u)}"
            f" {display.symbol('temperature', u)}, "
            f"{display.fmt(d['pressure_Pa'], 'pressure', 3, u, with_unit=True)}, "
            f"S/C {d['steam_to_carbon']:.3g}**"
            + (f", O2/C {d['oxygen_to_carbon']:.3g}" if d["oxygen_to_carbon"] else "")
            + (f", CO2/C {d['co2_to_carbon']:.3g}" if d["co2_to_carbon"] else "")
            + f" (approach {display.to_display(d['approach_K'], 'temperature_difference', u):g}"
            f" {display.symbol('temperature_difference', u)}{took})"
        )
        self.tables.object = (verdict_html(d, self.state.scenario.limits, units=u)
                              + balance_html(d, u))

    def _csv(self):
        if not self._current:
            return _io.StringIO("")
        sc = self.state.scenario
        return _io.StringIO(balance_csv(self._current, sc.title, self.state.notes,
                                        self.state.units))

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
                         pn.Row(self.typed_t, self.typed_p, self.typed_s, self.typed_go),
                         self.typed_message, self.tables)


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
        # The three maps are built when the first proposal arrives (no empty plots before).
        self.panes, self.sources = [], []
        self.maps = pn.Column(sizing_mode="stretch_width")
        self.note = pn.pane.HTML("", styles={"font-size": "13px", "color": "#4a5a64"},
                                 sizing_mode="stretch_width")
        self.titles = ("Base", "Proposal", "Change")
        self.chooser.param.watch(self._choose, "value")
        self.upload.param.watch(self._upload, "value")
        self.variable.param.watch(self._redraw, "value")
        # The base's dataset also changes alone (a limits edit: same numbers, new feasible
        # window), and its hatching must follow.
        state.param.watch(self._redraw, ["difference", "dataset", "mode", "fixed", "units"])
        state.param.watch(self._status, ["compare_status"])
        state.param.watch(self._table, ["selected", "difference", "units"])
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

    def _build_maps(self) -> None:
        """The base, proposal and change maps (once; restyled afterwards)."""
        var = VARIABLES[self.variable.value]
        for i in range(3):
            fig, src, _ = map_figure(var, self.state.mode, np.array([0.0, 1.0]),
                                     empty_layers(), f"cmp-{i}", (0.0, 1.0), (0.0, 1.0),
                                     height=MAP_HEIGHT)
            fig.sizing_mode = "stretch_width"
            fig.on_event(Tap, self._tap)
            self.panes.append(pn.pane.Bokeh(fig, sizing_mode="stretch_width"))
            self.sources.append(src)
        self.maps[:] = [pn.Row(self.panes[0], self.panes[1], sizing_mode="stretch_width"),
                        pn.Row(self.panes[2], self.note, sizing_mode="stretch_width")]

    def _default_variable(self) -> None:
        """Show a variable that changes: the chosen one if it does, else the first that
        does in the chooser's order of importance."""
        s = self.state
        key = self.variable.value

        def changes(k):
            var = VARIABLES[k]
            if ("mole_fraction_dry" if k.startswith("dry:") else k) not in s.difference:
                return False
            return has_change(s.difference, var, change_tolerance(s.dataset, var))

        if not changes(key):
            for k in COMPARE_ORDER:
                if k in VARIABLES and changes(k):
                    self.variable.value = k  # redraws through its watcher
                    return

    def _redraw(self, *_):
        """Base, proposal and change of the chosen variable on the current slice."""
        s = self.state
        if s.difference is None or s.dataset is None or s.proposal_dataset is None:
            for src in self.sources:
                for name, data in empty_layers().items():
                    src[name].data = data
            return
        if not self.panes:
            self._build_maps()
            self._default_variable()
        base, prop, diff = s.dataset, s.proposal_dataset, s.difference
        key = self.variable.value
        u = s.units
        var = variable(key, u)
        levels = shared_levels((base, prop), var)
        ch = change_variable(var)
        tol = change_tolerance(base, var)
        diff = quiet_change(diff, var, tol)
        ch_levels = change_levels(diff, var, tol)
        self.note.object = text(
            f"Change = proposal minus base, in {var.unit} (blue where the proposal is higher). "
            f"Changes within +-{tol:.2g} {var.unit} ({CHANGE_TOLERANCE:g} of the variable's "
            "range over the base window) are shown as no change: solver round-off. Each map "
            "carries its own carbon boundary and feasible window (the change map, the "
            "proposal's); the slice and the selected point follow the maps above.")
        x = x_display(base.temperature.values, u)
        y = y_display(s.mode, base[s.mode].values, u)
        ranges = ((float(x.min()), float(x.max())), (float(y.min()), float(y.max())))
        cut_b = slice_fields(base, s.mode, s.fixed)
        cut_p = slice_fields(prop, s.mode, s.fixed)
        sel = {d: i for d, i in s.fixed.items() if d in diff.dims
               and d not in (s.mode, "temperature")}
        cut_d = diff.isel(sel).transpose(s.mode, "temperature", ...)
        common_p = window_layers(cut_p, s.mode, s.proposal.limits, units=u)
        panels = [
            (var, levels, combine(variable_layers(cut_b, var, s.mode, levels, u),
                                  window_layers(cut_b, s.mode, s.scenario.limits, units=u))),
            (var, levels, combine(variable_layers(cut_p, var, s.mode, levels, u), common_p)),
            (ch, ch_levels, combine(variable_layers(cut_d, ch, s.mode, ch_levels, u),
                                    common_p)),
        ]
        for i, (v, lv, layers) in enumerate(panels):
            fig = self.panes[i].object
            restyle_figure(fig, self.sources[i], v, s.mode, lv, layers, *ranges, u)
            fig.title.text = f"{self.titles[i]}: {v.label}"
        self._mark()

    def _mark(self, *_):
        s = self.state
        data = {"x": [], "y": [], "alpha": []}
        if s.selected is not None and s.difference is not None:
            data = {"x": [x_display(s.selected["temperature"], s.units)],
                    "y": [y_display(s.mode, s.selected[s.mode], s.units)],
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
        u = s.units
        self.table.object = (
            "<h4>Base and proposal at "
            f"{display.fmt(da['temperature_K'], 'temperature', 1, u, with_unit=True)}, "
            f"{display.fmt(da['pressure_Pa'], 'pressure', 3, u, with_unit=True)}, S/C "
            f"{da['steam_to_carbon']:.3g}</h4>" + compare_point_html(da, db, u)
            + "<h4>Proposal: full balance</h4>" + balance_html(db, u))

    def __panel__(self):
        return pn.Column(
            pn.Row(self.chooser, pn.Column("Or open a proposal file (.toml)", self.upload),
                   self.variable),
            self.message, self.status,
            self.maps,
            self.table,
            sizing_mode="stretch_width",
        )


class PinnedView:
    """Pinned points side by side."""

    def __init__(self, state: ExplorerState):
        self.state = state
        self.table = pn.pane.HTML("", stylesheets=[PAGE_CSS], sizing_mode="stretch_width")
        self.clear = pn.widgets.Button(label="Clear pinned points")
        self.clear.on_click(lambda e: state.clear_pins())
        state.param.watch(self._update, ["pinned", "units"])
        self._update()

    def _update(self, *_):
        self.table.object = comparison_html(self.state.pinned, self.state.units)

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
                 "--pinned", str(folder / "pinned.json"), *extra, "--units", s.units,
                 "-o", str(out)],
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


class SummaryView:
    """The answer first: the verdict at the design point and the feasible window around it,
    in words and numbers; the margins of the design point; the best point of the chosen
    objective, with its full balance (folded)."""

    def __init__(self, state: ExplorerState):
        self.state = state
        self.pane = pn.pane.HTML("", stylesheets=[PAGE_CSS], sizing_mode="stretch_width",
                                 margin=(0, 10))
        self.objective = pn.widgets.Select(
            label="Best point of",
            options={o.label: k for k, o in objectives_for(state.scenario).items()},
            value=state.objective, width=260)
        self.objective.param.watch(lambda e: setattr(state, "objective", e.new), "value")
        self.best = pn.pane.HTML("", stylesheets=[PAGE_CSS], sizing_mode="stretch_width",
                                 margin=(0, 10))
        self.best_balance = pn.pane.HTML("", stylesheets=[PAGE_CSS],
                                         sizing_mode="stretch_width")
        self.design_margins = pn.pane.HTML("", stylesheets=[PAGE_CSS],
                                           sizing_mode="stretch_width")
        # The tables fold away so that the answer and both maps fit the first screen.
        self.best_card = pn.Card(self.design_margins, self.objective, self.best_balance,
                                 title="Margins and sensitivities of the design point; the best "
                                 "point's objective, margins and full balance (open)",
                                 collapsed=True, sizing_mode="stretch_width")
        state.param.watch(self._update, ["dataset", "scenario", "units"])
        state.param.watch(self._update_best, ["dataset", "scenario", "objective",
                                              "best_version", "units"])
        self._update()
        self._update_best()

    def _update(self, *_):
        s = self.state
        sc, ds = s.scenario, s.dataset
        d = s.design_point().to_dict()
        u = s.units
        where = (f"{display.fmt(sc.temperature, 'temperature', 1, u, with_unit=True)}, "
                 f"{display.to_display(sc.pressure, 'pressure', u):.4g} "
                 f"{display.symbol('pressure', u)}, S/C {sc.feed.steam_to_carbon:g}")
        parts = [verdict_html(d, sc.limits, prefix=f"Design point ({where}, computed "
                                                   "exactly there): ", units=u)]
        outside = s.design_in_window()
        if outside:
            parts.append(str(html(
                '<p class="rw-warn" data-role="design-outside">{}: the maps mark it at their '
                "border with a triangle pointing towards it; this verdict and its balance are "
                "computed at its exact values.</p>", "; ".join(outside).capitalize())))
        if ds is None:
            parts.append("<p>Solving the window ...</p>")
        else:
            words, p_bar, s_c = design_row_ranges(ds, sc, u)
            n_ok, n = int(ds["feasible"].sum()), int(ds["feasible"].size)
            exact = "feasible_t_low" in ds
            parts.append(
                f"<p><b>Feasible outlet temperature</b> at {p_bar:.4g} "
                f"{display.symbol('pressure', u)} and S/C {s_c:g} (the grid row nearest the "
                f"design point): <b>{text(words)}</b> {display.symbol('temperature', u)}"
                + (" (exact edges, to 0.1 K)" if exact else " (grid points)")
                + f". Within every review limit: {n_ok:,} of {n:,} grid points.</p>")
            warn = grid_warning_text(ds, u)
            if warn:
                parts.append(str(html('<p class="rw-warn" data-role="grid-warning">{}</p>',
                                      warn)))
        m = s.design_margins()
        parts.append(str(html("<p><b>Margins of the design point</b> (positive inside the "
                              "window): {}.</p>", margins_line(m, u))))
        self.pane.object = '<div class="rw-summary">' + "\n".join(parts) + "</div>"
        self.design_margins.object = (
            "<p><b>Margins of the design point</b> (positive inside the window) and what moves "
            "if T, P or S/C drift (central differences through the core):</p>"
            + str(margins_html(m, units=u)))

    def _update_best(self, *_):
        s = self.state
        options = {o.label: k for k, o in objectives_for(s.scenario).items()}
        if self.objective.options != options:
            self.objective.options = options
        if self.objective.value != s.objective:
            self.objective.value = s.objective
        bp = s.best_point()
        if bp is None:
            self.best.object = "<p>Finding the best point ...</p>"
            self.best_balance.object = ""
            return
        u = s.units
        self.best.object = str(html('<p class="rw-summary" data-role="best-point">{}</p>',
                                    best_summary(bp, u)))
        if bp.feasible:
            d = bp.point.to_dict()
            self.best_balance.object = ('<div data-role="best-balance">'
                                        + str(margins_html(bp.margins, units=u))
                                        + verdict_html(d, s.scenario.limits, units=u)
                                        + balance_html(d, u) + "</div>")
        else:
            self.best_balance.object = ""

    def __panel__(self):
        return pn.Column(self.pane, self.best, self.best_card, sizing_mode="stretch_width")
