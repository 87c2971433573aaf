"""The comparison section of the page: a proposal beside the base, its maps of base, proposal
and change, and both balances of a clicked point (split from explorer.views).
"""

from __future__ import annotations

import numpy as np
import panel as pn
from bokeh.events import Tap

import thermo
from explorer import display
from explorer.form import _message_pane, read_upload, scenario_files

#: Map heights [px]: both maps on the first screen at 1366 x 768; taller when presenting.
from explorer.map_figures import MAP_HEIGHT
from explorer.map_variables import var_options as _var_options
from explorer.maps import (
    CHANGE_TOLERANCE,
    COMPARE_ORDER,
    VARIABLES,
    change_levels,
    change_tolerance,
    change_variable,
    combine,
    empty_layers,
    has_change,
    map_figure,
    quiet_change,
    restyle_figure,
    shared_levels,
    slice_fields,
    variable,
    variable_layers,
    window_layers,
    x_display,
    y_display,
)
from explorer.safe import html, message_html, text
from explorer.state import ExplorerState
from explorer.static import PAGE_CSS
from explorer.tables import (
    balance_html,
    compare_point_html,
)
from thermo.errors import InputError
from thermo.scenario import Scenario


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


