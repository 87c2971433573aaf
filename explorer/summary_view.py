"""The answer at the top of the page: the feasible window in words and numbers, the verdict
at the design point, the best point and its margins (split from explorer.views).
"""

from __future__ import annotations

import panel as pn

from explorer import display
from explorer.limits_report import (
    best_summary,
    grid_warning_text,
    margins_html,
    margins_line,
)
from explorer.safe import html, text
from explorer.sheet import design_row_ranges
from explorer.state import ExplorerState
from explorer.static import PAGE_CSS
from explorer.tables import (
    balance_html,
    verdict_html,
)

#: Map heights [px]: both maps on the first screen at 1366 x 768; taller when presenting.
from thermo.edges import objectives_for


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
        # The tables fold away so that the answer and both maps fit the first screen, and
        # are sent to the browser only once the card is opened (a page load builds what it
        # shows; the panes are kept current meanwhile).
        self.best_card = pn.Card(title="Margins and sensitivities of the design point; the "
                                 "best point's objective, margins and full balance (open)",
                                 collapsed=True, sizing_mode="stretch_width")

        def unfold(event):
            if not event.new and not self.best_card.objects:
                self.best_card.objects = [self.design_margins, self.objective,
                                          self.best_balance]

        self.best_card.param.watch(unfold, "collapsed")
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
        return pn.Column(self.pane, self.best, sizing_mode="stretch_width")

    @property
    def details(self) -> pn.Card:
        """The folded tables of margins, sensitivities and the best point's balance (the app
        places them after the maps, so that the answer and both maps fit the first screen)."""
        return self.best_card
