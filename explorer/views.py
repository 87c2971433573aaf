"""The page's sections: maps, the selected point's balance, the comparison with a proposal,
pinned points and review notes. Views render state; thermodynamics comes from :mod:`thermo`
through :class:`explorer.state.ExplorerState`.
"""

from __future__ import annotations

import io as _io
import json
import math
import os
import tempfile
from pathlib import Path

import numpy as np
import panel as pn
from bokeh.events import Tap
from bokeh.models import CustomJSTickFormatter, Legend

from explorer import display
from explorer.comparison_view import (  # noqa: F401 - re-exported
    ComparisonView,
)
from explorer.display import SYSTEMS
from explorer.form import _message_pane
from explorer.map_figures import MAP_HEIGHT, PRESENT_HEIGHT, shared_with
from explorer.map_variables import var_options as _var_options
from explorer.maps import (
    MODES,
    combine,
    empty_layers,
    legend_visibility,
    map_figure,
    restyle_figure,
    slice_fields,
    slice_layers,
    variable,
    variable_layers,
    variable_levels,
    window_layers,
    x_display,
    y_display,
)
from explorer.notes_view import (  # noqa: F401 - re-exported
    NotesView,
    PinnedView,
)
from explorer.safe import message_html, spreadsheet_text, text
from explorer.state import ExplorerState
from explorer.static import PAGE_CSS
from explorer.summary_view import (  # noqa: F401 - re-exported
    SummaryView,
)
from explorer.tables import (
    balance_csv,
    balance_html,
    verdict_html,
)
from thermo import io as grid_io
from thermo.errors import InputError


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
        share = None
        for i, key in enumerate((state.left, state.right)):
            var = variable(key, state.units)
            fig, src, _ = map_figure(var, state.mode, *self._first_content(key), f"map-{i}",
                                     *self._ranges(), height=MAP_HEIGHT, units=state.units,
                                     share=share)
            share = shared_with(fig, src)
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
            if len(vals) == 1:
                widgets.append(pn.widgets.StaticText(label=name, value=labels[0], width=260))
                continue
            # One slider over the axis's indices that shows each index's value (the
            # browser formats it): a single model, where a composite slider costs a page
            # three and a script link that Panel then searches for on every page load.
            label_of = CustomJSTickFormatter(args={"labels": labels},
                                             code="return labels[tick]")
            w = pn.widgets.IntSlider(label=name, start=0, end=len(vals) - 1,
                                     value=s.fixed.get(d, 0), format=label_of, width=260)
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
            pn.FlexBox(self.mode, self.left, self.right, self.sliders, flex_wrap="wrap",
                       sizing_mode="stretch_width"),
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
                self.units, self.present, sizing_mode="stretch_width"),
            sizing_mode="stretch_width",
        )



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
