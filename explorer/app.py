"""The browser app: one page that reads top to bottom like a worked study.

The answer first (the feasible window and the verdict at the design point), the maps, the
selected point's balance; then the scenario form (folded until opened), the comparison with a
proposal, pinned points and review notes. :func:`build_app` returns the page for a session;
``explorer serve`` serves it, and in a notebook ``build_app(...)`` displays inline.
"""

from __future__ import annotations

import os

import panel as pn

import thermo
from explorer import CAUTION, CAUTION_SHORT
from explorer.form import ScenarioForm, read_upload, scenario_files
from explorer.safe import html, paragraphs
from explorer.state import FACTS, ExplorerState, check_window_size
from explorer.static import CAUTION_CSS, PAGE_CSS, SECTION_CSS
from explorer.views import (
    BalanceView,
    ComparisonView,
    MapsView,
    NotesView,
    PinnedView,
    SummaryView,
)
from thermo.scenario import Scenario

__all__ = ["BalanceView", "ComparisonView", "MapsView", "NotesView", "PinnedView",
           "ScenarioForm", "build_app", "read_upload", "scenario_files"]


def _section(title: str, *objects):
    return pn.Column(pn.pane.Markdown(f"## {title}", stylesheets=[SECTION_CSS]), *objects,
                     sizing_mode="stretch_width")


def _folding(title: str, build, *, opened: bool = False) -> pn.Card:
    """A section that folds away and builds its content the first time it is opened.

    `build` returns the section's objects; until the card opens, nothing of it is built or
    sent to the browser, which keeps a page load cheap (the issue of the review room: under
    0.5 s of server time per page). The card's ``unfold()`` opens it from code.
    """
    card = pn.Card(title=title, collapsed=not opened, sizing_mode="stretch_width")

    def fill(*_):
        if not card.objects:
            card.objects = list(build())

    def on_collapsed(event):
        if not event.new:
            fill()

    def unfold():
        fill()
        card.collapsed = False

    card.param.watch(on_collapsed, "collapsed")
    card.unfold = unfold
    if opened:
        fill()
    return card


def poll_while_working(state: ExplorerState, period_ms: int = 200) -> None:
    """Publish the session's background work every `period_ms` while there is any, and stop
    polling when there is none (an idle page costs the server nothing)."""
    callback = None

    def tick():
        state.poll()
        if not state.working():
            callback.stop()

    def wake():
        nonlocal callback
        if callback is None:
            callback = pn.state.add_periodic_callback(tick, period=period_ms)
        elif not callback.running:
            callback.start()

    state.wake = wake
    if state.working():
        wake()


def build_app(scenario: Scenario | str | os.PathLike | None = None, *,
              solve: str = "background", proposal: Scenario | None = None,
              units: str | None = None) -> pn.Column:
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
    units : {"metric", "us"}, optional
        Display unit system at start (explorer.display); the scenario's if None.
    """
    if not isinstance(scenario, Scenario):
        scenario = thermo.load_scenario(scenario)
    state = ExplorerState(check_window_size(scenario), **({"units": units} if units else {}))
    served = (solve != "now" and pn.state.curdoc is not None
              and pn.state.curdoc.session_context is not None)
    # A served page finds its best point in a worker thread from the start (published by
    # the page's poll), so that building the page does not wait for it.
    state.background_best = served
    if solve == "now" or FACTS.has_window(scenario):
        # Solved already (by another session, or by `explorer serve` at start): adopt it
        # before the views exist, so that each draws the window once.
        state.solve_now()
    summary = SummaryView(state)
    maps = MapsView(state)
    # Title and description come from the scenario file: text, never markup.
    title = pn.pane.HTML(html("<h1>{}</h1>", scenario.title), sizing_mode="stretch_width",
                         margin=(0, 10), stylesheets=[PAGE_CSS])
    desc = pn.pane.HTML(paragraphs(scenario.description), sizing_mode="stretch_width",
                        styles={"font-size": "14px"})

    def retitle(*_):
        title.object = html("<h1>{}</h1>", state.scenario.title)
        desc.object = paragraphs(state.scenario.description)

    state.param.watch(retitle, ["scenario"])
    caution = pn.pane.Markdown("**Caution.** " + CAUTION_SHORT, stylesheets=[CAUTION_CSS],
                               sizing_mode="stretch_width", margin=(0, 10))
    full_caution = pn.pane.Markdown("**Caution.** " + CAUTION, stylesheets=[CAUTION_CSS],
                                    sizing_mode="stretch_width", margin=(10, 10))
    footer = pn.pane.Markdown(
        "Method: Gibbs energy minimization for an ideal gas plus pure graphite (element "
        "potentials); composition at T minus the approach, enthalpy at T. Carbon verdict: "
        "the equilibrated gas along the tube from its inlet, the real gas at T by three "
        "carbon-forming reactions, C2+ and other-stage flags. Standard state "
        "1 bar. Data: GRI-Mech 3.0 gas polynomials, NASA TM-4513 graphite, IUPAC 2021 atomic "
        f"weights. Reformer window explorer {thermo.__version__}.",
        styles={"font-size": "12px", "color": "#4a5a64"})
    # The form and the sections a study needs only sometimes fold away; each is built the
    # first time it opens, and opens by itself when it has something to show.
    scenario_card = _folding("3 Scenario: description, feed, design point, window, limits "
                             "and train (open to edit)", lambda: [desc, ScenarioForm(state)])
    compare = _folding("4 Comparison with a proposal (open to load one)",
                       lambda: [ComparisonView(state)], opened=proposal is not None)
    pinned = _folding("5 Pinned points", lambda: [PinnedView(state)],
                      opened=bool(state.pinned))
    notes = _folding("6 Review notes (open to write)", lambda: [NotesView(state)],
                     opened=bool(state.notes))

    def unfold_what_has_content(*_):
        for card, has in ((compare, state.proposal is not None), (pinned, state.pinned),
                          (notes, state.notes)):
            if has and card.collapsed:
                card.unfold()

    state.param.watch(unfold_what_has_content, ["proposal", "pinned", "notes"])
    # The balance opens with the first point chosen (a click on a map, a typed point), also
    # when that is the node already selected (the design point's, at the start).
    balance = _folding("2 Balance at the selected grid point (a click on a map opens it)",
                       lambda: [BalanceView(state)])
    state.param.watch(lambda *_: balance.collapsed and balance.unfold(), ["chosen"])
    page = pn.Column(
        title, caution,
        summary,
        _section("1 Operating-window maps", maps),
        summary.details,
        balance,
        scenario_card, compare, pinned, notes,
        full_caution, footer,
        sizing_mode="stretch_width",
        styles={"max-width": "1500px", "margin": "0 auto"},
    )
    page.explorer_parts = {"title": title, "description": desc, "summary": summary,
                           "scenario": scenario_card, "maps": maps, "compare": compare,
                           "pinned": pinned, "notes": notes, "balance": balance}
    page.explorer_state = state  # for tests and notebooks
    if solve == "now":
        if proposal is not None:
            state.set_proposal(proposal, background=False)
    else:
        def start():
            state.background_best = True
            poll_while_working(state)
            if state.dataset is None:
                state.solve_in_background()
            if proposal is not None:
                state.set_proposal(proposal)

        if served:
            pn.state.onload(start)
        else:
            if state.dataset is None:
                state.solve_now()
            if proposal is not None:
                state.set_proposal(proposal, background=False)
    return page
