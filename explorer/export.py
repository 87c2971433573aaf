"""The review file writer: one offline HTML page with the maps, click-through balances and
the review sheet.

The page is a Bokeh document saved with inline resources (no network request of any kind).
The maps are drawn by :mod:`explorer.maps`, the same code as the live app; every slice's
layers and the per-point arrays come from :mod:`explorer.review_data` (read from the sweep's
Dataset), the sheet from :mod:`explorer.sheet`. The page's script (``static/review.js`` and
``static/review-maps.js``, inlined here) swaps the layers when the reader moves a slider or
picks a variable, and a click assembles the balance of the nearest grid point in the page,
with the table layout of :mod:`explorer.tables`.

This module must not import Panel: once Panel's Bokeh extensions are loaded in a process,
Bokeh adds links to them even in an "inline" file. The app therefore runs the export in a
fresh process (``python -m explorer.export``), and :func:`check_offline` verifies every file.
"""

from __future__ import annotations

import argparse
import base64
import hashlib
import json
import os
import re
import sys
from datetime import UTC, datetime
from html.parser import HTMLParser
from pathlib import Path

import numpy as np
import xarray as xr
from bokeh.core.templates import CSS_RESOURCES
from bokeh.embed import components
from bokeh.embed.bundle import bundle_for_objs_and_resources
from bokeh.layouts import column, row
from bokeh.models import (
    CustomJS,
    CustomJSTickFormatter,
    Div,
    HoverTool,
    Legend,
    RadioButtonGroup,
    Select,
    Slider,
)
from bokeh.resources import INLINE
from markupsafe import Markup

import thermo
from explorer import CAUTION, display
from explorer.maps import (
    COMPARE_ORDER,
    MODES,
    axis_label,
    change_variable,
    combine,
    map_figure,
    scenario_markers,
    variable_levels,
    variables_in,
)
from explorer.review_data import (
    COMPARE_VARIABLES,
    EXPORT_VARIABLES,
    PLANT_EXPORT_VARIABLES,
    TRAIN_EXPORT_VARIABLES,
    all_layers,
    comparison_layers,
    key_text,
    pack_repeats,
    page_data,
    point_arrays,
    slice_values,
    variable_palette,
)
from explorer.safe import paragraphs
from explorer.sheet import (
    AXIS_NAMES,
    comparison_context,
    render,
    review_context,
    summary_html,
    window_facts,
)
from explorer.static import static_text
from thermo.errors import InputError
from thermo.io import atomic_target
from thermo.scenario import Scenario

__all__ = ["COMPARE_VARIABLES", "EXPORT_VARIABLES", "PLANT_EXPORT_VARIABLES",
           "TRAIN_EXPORT_VARIABLES", "build_review", "check_offline", "content_security_policy",
           "main", "script_json", "with_content_security_policy", "write_review"]

#: The review file's style sheet (static/review.css), inlined into the page.
SHEET_CSS = static_text("review.css")
#: The page's script: the balance assembly and table functions, then the map callbacks.
REVIEW_JS = static_text("review.js") + "\n" + static_text("review-maps.js")
#: A slider's tick formatter (index to axis label).
SLIDER_LABEL_JS = static_text("slider-label.js")


def _fixed0(sc: Scenario, ds: xr.Dataset) -> dict[str, int]:
    fixed0 = {}
    for d in ds["h2_yield"].dims:
        if d == "temperature":
            continue
        target = sc.pressure if d == "pressure" else getattr(sc.feed, d)
        fixed0[d] = int(np.argmin(np.abs(ds[d].values - target)))
    return fixed0


def _sliders(ds: xr.Dataset, fixed0: dict[str, int], mode0: str,
             units: str = display.DEFAULT) -> dict[str, Slider]:
    sliders = {}
    for d in ds["h2_yield"].dims:
        if d == "temperature":
            continue
        n = ds.sizes[d]
        vals = ds[d].values
        labels = ([display.fmt(v, "pressure", 2, units, with_unit=True) for v in vals]
                  if d == "pressure" else [f"{v:.3g}" for v in vals])
        fmt = CustomJSTickFormatter(args={"labels": labels}, code=SLIDER_LABEL_JS)
        sliders[d] = Slider(start=0, end=max(n - 1, 1), step=1, value=fixed0[d],
                            title=AXIS_NAMES[d], format=fmt, width=330,
                            visible=(d != mode0), disabled=n < 2)
    return sliders


def _maps(sc: Scenario, ds: xr.Dataset, R: dict, facts: dict, ranges, mode0: str,
          key0: str, units: str = display.DEFAULT) -> tuple[list, list, list, list]:
    """The single file's two maps, with every slice's layers put into the page data `R`.

    Returns figures, their sources, colour mappers and the variable choosers."""
    variables = EXPORT_VARIABLES + (() if sc.train.empty else TRAIN_EXPORT_VARIABLES)
    plant = sc.plant is not None and "specific_energy" in ds
    if plant:
        variables = variables + PLANT_EXPORT_VARIABLES
    right0 = "specific_energy" if plant else "methane_slip_dry"
    fixed0 = _fixed0(sc, ds)
    shown = variables_in(units)  # the map variables as shown in these units
    layers, common = all_layers(ds, sc.limits, variables, scenario_markers(sc, facts["best"]),
                                units)
    R["layers"], R["common"] = layers, common
    R["titles"] = {v: shown[v].title for v in variables}
    R["palettes"] = {v: variable_palette(v, ds, units) for v in variables}
    R["hover"] = _hover_specs(variables, units)
    figs, srcs, mappers = [], [], []
    for i, v in enumerate(("h2_yield", right0)):
        var = shown[v]
        start = _typed(combine(_first_slice(ds, layers[v], mode0, fixed0),
                               common[mode0][key0]))
        fig, src, mapper = map_figure(var, mode0, variable_levels(ds, var), start,
                                      f"map-{i}", *ranges, width=580, height=440, units=units)
        figs.append(fig)
        srcs.append(src)
        mappers.append(mapper)
    options = [(v, shown[v].title) for v in variables]
    selects = [Select(title="Left map", value="h2_yield", options=options, width=280),
               Select(title="Right map", value=right0, options=options, width=280)]
    return figs, srcs, mappers, selects


def _comparison_maps(sc: Scenario, ds: xr.Dataset, prop_sc: Scenario, prop_ds: xr.Dataset,
                     R: dict, ranges, mode0: str, key0: str,
                     units: str = display.DEFAULT) -> tuple[list, list, list, list]:
    """The comparison's three maps (base, proposal, change), layers put into `R`."""
    variables = COMPARE_VARIABLES
    fixed0 = _fixed0(sc, ds)
    shown = variables_in(units)  # the map variables as shown in these units
    panels = comparison_layers(sc, ds, prop_sc, prop_ds, variables, units)
    R["layers"], R["common"] = panels["base"], panels["base_common"]
    R["cmp"] = {"layers": panels["proposal"], "common": panels["proposal_common"],
                "diff": panels["change"], "palettes": panels["palettes"],
                "diff_palettes": panels["change_palettes"]}
    R["titles"] = {v: shown[v].label for v in variables}
    R["hover"] = _hover_specs(variables, units)
    R["proposal"] = page_data(prop_sc, prop_ds, units)
    prefixes = ["Base: ", "Proposal: ", "Change: "]
    R["prefixes"] = prefixes
    # The first variable that changes (round-off below the tolerance is no change).
    v0 = next((v for v in COMPARE_ORDER if v in panels["changes"]), variables[0])
    sets = [(panels["base"], panels["base_common"], panels["levels"][v0], shown[v0]),
            (panels["proposal"], panels["proposal_common"], panels["levels"][v0],
             shown[v0]),
            (panels["change"], panels["proposal_common"], panels["change_levels"][v0],
             change_variable(shown[v0]))]
    figs, srcs, mappers = [], [], []
    for i, (lay, com, levels, var) in enumerate(sets):
        start = _typed(combine(_first_slice(ds, lay[v0], mode0, fixed0), com[mode0][key0]))
        fig, src, mapper = map_figure(var, mode0, levels, start, f"map-{i}", *ranges,
                                      width=580 if i < 2 else 620, height=420, units=units)
        fig.title.text = prefixes[i] + var.label
        figs.append(fig)
        srcs.append(src)
        mappers.append(mapper)
    options = [(v, shown[v].title) for v in variables]
    selects = [Select(title="Variable", value=v0, options=options, width=340)]
    return figs, srcs, mappers, selects


def _first_slice(ds: xr.Dataset, layers: dict, mode: str, fixed: dict[str, int]) -> dict:
    """The shown slice's layers of one variable with its node values (taken out of the
    variable's values of the whole grid, :func:`explorer.review_data.grid_values`)."""
    fixed = {d: j for d, j in fixed.items() if d != mode}
    return dict(layers[mode][key_text(fixed)], values=slice_values(ds, layers["values"], mode,
                                                                   fixed))


def _typed(layers: dict) -> dict:
    """A slice's layers with every polygon ring and line as a numpy array (the columns stay
    lists): the plotting library then writes them as binary buffers instead of walking and
    encoding each number, and the figure's first slice costs a fraction of the time."""
    def leaves(v, depth: int):
        if isinstance(v, list):
            if depth >= 1 and v and all(type(e) is float for e in v):
                return np.asarray(v, dtype=float)
            return [leaves(e, depth + 1) for e in v]
        return v

    return {name: {col: leaves(v, 0) for col, v in cols.items()}
            for name, cols in layers.items()}


def _legend(fig) -> Legend:
    return next(m for m in fig.below if isinstance(m, Legend))


def _hover(fig) -> HoverTool:
    return next(t for t in fig.tools if isinstance(t, HoverTool))


def _hover_specs(variables, units: str = display.DEFAULT) -> dict:
    shown = variables_in(units)
    return {v: [shown[v].label, shown[v].unit, shown[v].digits] for v in variables}


def _points_source(data: dict[str, np.ndarray], name: str = "points"):
    from bokeh.models import ColumnDataSource

    return ColumnDataSource(data, name=name)


def _proposal_points(base: dict[str, np.ndarray], prop: dict[str, np.ndarray]) -> dict:
    """The proposal's per-point arrays without those equal to the base's (the page's script
    takes a missing array from the base: see tapCompare in review-maps.js)."""
    return {k: v for k, v in prop.items()
            if not (k in base and base[k].dtype == v.dtype and np.array_equal(base[k], v))}


def build_review(sc: Scenario, ds: xr.Dataset, pinned: list[dict] | None = None,
                 compare: tuple[Scenario, xr.Dataset] | None = None,
                 facts: dict | None = None, units: str | None = None) -> str:
    """The review page as HTML text (see the module docstring).

    Parameters
    ----------
    sc, ds : Scenario, xarray.Dataset
        The scenario (the base case when comparing) and its sweep.
    pinned : list of dict, optional
        Pinned points (PointResult.to_dict()).
    compare : (Scenario, xarray.Dataset), optional
        A proposal and its sweep over the same window (thermo.compare.on_base_window): the
        page then maps base, proposal and their change side by side, and a click shows both
        balances with the changes.
    facts : dict, optional
        :func:`explorer.sheet.window_facts` of `sc` and `ds` (best point, margins), if the
        caller has them; computed here otherwise.
    units : {"metric", "us"}, optional
        Display unit system (explorer.display) of the file; the scenario's
        ``display_units`` (metric without one) if None. The file carries it.
    """
    units = display.check_system(units or getattr(sc, "display_units", display.DEFAULT))
    pinned = list(pinned or [])
    R = page_data(sc, ds, units)
    facts = window_facts(sc, ds, units=units) if facts is None else facts
    fixed0 = _fixed0(sc, ds)
    mode0 = "pressure"
    key0 = key_text({d: j for d, j in fixed0.items() if d != mode0})
    x = display.to_display(ds.temperature.values, "temperature", units)
    y = display.to_display(ds[mode0].values, "pressure", units)
    ranges = (float(x.min()), float(x.max())), (float(y.min()), float(y.max()))
    R["ranges"] = {
        "pressure": [float(display.to_display(float(ds.pressure.min()), "pressure", units)),
                     float(display.to_display(float(ds.pressure.max()), "pressure", units))],
        "steam_to_carbon": [float(ds.steam_to_carbon.min()), float(ds.steam_to_carbon.max())],
    }
    R["axis_labels"] = {m: axis_label(m, units) for m in MODES}
    if compare is None:
        figs, srcs, mappers, selects = _maps(sc, ds, R, facts, ranges, mode0, key0, units)
        update_call, tap_call = "updateMaps();", "tapMap();"
    else:
        figs, srcs, mappers, selects = _comparison_maps(sc, ds, *compare, R, ranges, mode0,
                                                        key0, units)
        update_call, tap_call = "updateCompare();", "tapCompare();"
    mode = RadioButtonGroup(labels=[MODES[m] for m in MODES], active=0)
    sliders = _sliders(ds, fixed0, mode0, units)
    heading = Div(text="<p>Click a map to show the balance of the nearest grid point.</p>",
                  name="balance-heading", width=1150)
    balance = Div(text="", width=1150, stylesheets=[SHEET_CSS], name="balance-div")
    base_points = point_arrays(ds, sc)
    legends = [_legend(f) for f in figs]
    args = dict(pts=_points_source(base_points), figs=figs, mappers=mappers, selects=selects,
                mode=mode, legends=legends, sliders=sliders, hovers=[_hover(f) for f in figs],
                srcs=srcs)
    if compare is not None:
        args["pts2"] = _points_source(
            _proposal_points(base_points, point_arrays(compare[1], compare[0])), "points-2")
    update = CustomJS(args=args, code=REVIEW_JS + "\n" + update_call)
    for s in selects:
        s.js_on_change("value", update)
    mode.js_on_change("active", update)
    for s in sliders.values():
        s.js_on_change("value", update)
    # One click handler for every map (the click's own coordinates find the node).
    tap = CustomJS(args=dict(args, heading=heading, balance=balance),
                   code=REVIEW_JS + "\n" + tap_call)
    for f in figs:
        f.js_on_event("tap", tap)
    controls = column(mode, row(*selects, *sliders.values()))
    if compare is None:
        maps = column(controls, row(*figs), name="maps")
    else:
        maps = column(controls, row(*figs[:2]), row(figs[2]), name="maps")
    bal = column(heading, balance, name="balance")
    now = datetime.now(UTC).strftime("%Y-%m-%d %H:%M UTC")
    review = review_context(sc, ds, pinned, facts, units)
    title, comparison = sc.title, None
    if compare is not None:
        comparison = comparison_context(sc, ds, *compare, units=units)
        title = f"{sc.title} compared with {compare[0].title}"
    script, divs = components({"maps": maps, "balance": bal})
    # Only the library code this page's models need, inline (as the library's own file
    # writer would choose it).
    bundle = bundle_for_objs_and_resources([maps, bal], INLINE)
    R["common"] = pack_repeats(R["common"])
    if "cmp" in R:
        R["cmp"]["common"] = pack_repeats(R["cmp"]["common"])
    page = render(
        "review.html.jinja",
        # Text (autoescaped): the scenario's own words.
        title=title, description=paragraphs(sc.description), caution=CAUTION, created=now,
        version=thermo.__version__,
        # Markup of our own or of the plotting library (its resources and document).
        csp=_CSP_PLACEHOLDER, sheet_css=Markup(SHEET_CSS),
        bokeh_css=Markup(CSS_RESOURCES.render(css_files=[], css_raw=bundle.css_raw)),
        bokeh_js=Markup(bundle.scripts()), plot_script=Markup(script),
        maps=Markup(divs["maps"]), balance=Markup(divs["balance"]),
        data_json=Markup(script_json(R)), comparison=comparison, review=review,
        summary=summary_html(sc, ds, facts, units),
        units_note=display.system_note(units),
    )
    return with_content_security_policy(page)


#: Stands in for the policy while the page is rendered; the policy needs the page's scripts.
_CSP_PLACEHOLDER = "rw-content-security-policy"

_SCRIPT = re.compile(r"<script(?P<attrs>[^>]*)>(?P<body>.*?)</script\s*>",
                     flags=re.DOTALL | re.IGNORECASE)
_TYPE = re.compile(r"""\btype\s*=\s*["']?([^"'\s>]+)""", flags=re.IGNORECASE)
_JS_TYPES = ("", "text/javascript", "application/javascript", "module")


def script_json(data) -> str:
    """JSON for a ``<script type="application/json">`` block: strict, and with ``<``, ``>``
    and ``&`` written as escapes, so no text inside can end the block or open a comment."""
    text = json.dumps(data, separators=(",", ":"), allow_nan=False)
    return text.replace("<", "\\u003c").replace(">", "\\u003e").replace("&", "\\u0026")


def content_security_policy(page: str) -> str:
    """The policy of a review page: only its own inline scripts run (by SHA-256 hash).

    Everything else is refused: no network of any kind, no plug-ins, no forms, no other
    script, and no event-handler attributes (``onerror=``, ``onload=``) since
    ``'unsafe-inline'`` is not granted for scripts. Styles may be inline (the plotting
    library sets them on its elements), images only from ``data:`` and ``blob:``.
    ``'unsafe-eval'`` is granted because the plotting library compiles the page's own
    callbacks (slider and click handlers, tick formatters) with ``new Function``; it lets
    only scripts that already run evaluate code, so injected markup still cannot run.
    """
    hashes = []
    for m in _SCRIPT.finditer(page):
        kind = _TYPE.search(m.group("attrs"))
        if (kind.group(1).lower() if kind else "") in _JS_TYPES:
            digest = hashlib.sha256(m.group("body").encode("utf-8")).digest()
            hashes.append("'sha256-" + base64.b64encode(digest).decode("ascii") + "'")
    return ("default-src 'none'; script-src " + " ".join(dict.fromkeys(hashes))
            + " 'unsafe-eval'; style-src 'unsafe-inline'; img-src data: blob:; "
            "font-src data:; connect-src 'none'; object-src 'none'; base-uri 'none'; "
            "form-action 'none'; frame-src 'none'; worker-src 'none'")


def with_content_security_policy(page: str) -> str:
    """The page with its policy filled into the ``<meta>`` the template placed first in
    ``<head>`` (before any user text, so the first occurrence is the placeholder)."""
    return page.replace(_CSP_PLACEHOLDER, content_security_policy(page), 1)


class _LinkFinder(HTMLParser):
    """Collects src/href attributes of tags (script and style contents are raw text)."""

    def __init__(self):
        super().__init__()
        self.links: list[str] = []

    def handle_starttag(self, tag, attrs):
        for name, value in attrs:
            if name in ("src", "href") and value:
                self.links.append(value)


def check_offline(text: str) -> None:
    """Raise if the page would load anything from a network (a tag's src or href).

    The library's own script holds a CDN address as a string for an optional math renderer
    that this page never asks for; only real tag attributes count.
    """
    finder = _LinkFinder()
    finder.feed(text)
    bad = [u for u in finder.links if re.match(r"\s*(?:https?:)?//", u, flags=re.IGNORECASE)]
    if bad:
        raise RuntimeError(f"review file would request {len(bad)} network resources, e.g. "
                           f"{bad[0][:120]!r}")


def write_review(sc: Scenario, path: str | os.PathLike, ds: xr.Dataset | None = None,
                 pinned: list[dict] | None = None, proposal: Scenario | None = None,
                 proposal_ds: xr.Dataset | None = None, facts: dict | None = None,
                 units: str | None = None) -> Path:
    """Write the review file atomically (temporary name, then rename).

    Parameters
    ----------
    sc : Scenario
        The scenario (its notes go into the sheet).
    path : path-like
        Target ``.html`` file.
    ds : xarray.Dataset, optional
        Its sweep; computed if None.
    pinned : list of dict, optional
        Pinned points (PointResult.to_dict()) to list with their balances.
    proposal : Scenario, optional
        A proposal to compare with `sc` (the base); it is solved over the base's window.
    proposal_ds : xarray.Dataset, optional
        Its sweep over the base's window; computed if None.
    facts : dict, optional
        :func:`explorer.sheet.window_facts` of `sc` and `ds`; computed if None.
    units : {"metric", "us"}, optional
        Display unit system of the file (the scenario's ``display_units`` if None).
    """
    path = Path(path)
    if not path.parent.is_dir():
        raise InputError("-o", str(path), "a file in an existing folder")
    if ds is None:
        ds = thermo.sweep(sc)
    compare = None
    if proposal is not None:
        from thermo.compare import on_base_window

        proposal = on_base_window(sc, proposal)
        if proposal_ds is None:
            proposal_ds = thermo.sweep(proposal)
        compare = (proposal, proposal_ds)
    text = build_review(sc, ds, pinned, compare, facts, units)
    check_offline(text)
    with atomic_target(path, "-o") as tmp:
        tmp.write_text(text, encoding="utf-8")
    return path


def main(argv: list[str] | None = None) -> int:
    """``python -m explorer.export --scenario S.toml [--grid G.nc] [--pinned P.json]
    [--compare PROPOSAL.toml [--compare-grid G2.nc]] -o F``.

    The app's export button runs this in a fresh process (see the module docstring).
    """
    p = argparse.ArgumentParser(prog="python -m explorer.export")
    p.add_argument("--scenario", required=True)
    p.add_argument("--grid", default=None)
    p.add_argument("--pinned", default=None)
    p.add_argument("--compare", default=None, help="proposal scenario file")
    p.add_argument("--compare-grid", default=None, help="its sweep over the base window")
    p.add_argument("--units", choices=tuple(display.SYSTEMS), default=None,
                   help="display unit system (default: the scenario's, else metric)")
    p.add_argument("-o", "--output", required=True)
    a = p.parse_args(argv)
    try:
        from thermo import io

        sc = thermo.load_scenario(a.scenario)
        ds = io.load(a.grid) if a.grid else None
        pinned = json.loads(Path(a.pinned).read_text("utf-8")) if a.pinned else []
        proposal = thermo.load_scenario(a.compare) if a.compare else None
        proposal_ds = io.load(a.compare_grid) if a.compare_grid else None
        write_review(sc, a.output, ds, pinned, proposal, proposal_ds, units=a.units)
    except InputError as err:
        print(f"explorer: error: {err}", file=sys.stderr)
        return 2
    return 0


if __name__ == "__main__":
    sys.exit(main())
