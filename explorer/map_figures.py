"""The Bokeh map figure: one ColumnDataSource per layer, axes, hover, colour bar and legend
(split from explorer.maps).
"""

from __future__ import annotations

import numpy as np
from bokeh.models import (
    AllIndices,
    CDSView,
    ColorBar,
    ColumnDataSource,
    HoverTool,
    Legend,
    LegendItem,
    LinearColorMapper,
    MultiLine,
    MultiPolygons,
    Scatter,
    Text,
    UnionRenderers,
)
from bokeh.plotting import figure

from explorer import display
from explorer.display import DEFAULT
from explorer.map_variables import (
    AXIS_PT,
    BEST_COLOUR,
    CARBON_COLOUR,
    CARBON_LINES,
    DESIGN_COLOUR,
    EDGE_COLOUR,
    HATCH_COLOUR,
    LABEL_PT,
    LEGEND_PT,
    OUTLET_CARBON_COLOUR,
    REFERENCE_CARBON_COLOUR,
    SELECTED_COLOUR,
    TITLE_PT,
    Variable,
    _band_colours,
)
from explorer.map_window import MARKER_LAYERS

#: Map heights in the page [px]: both maps on the first screen at 1366 x 768; taller when
#: presenting.
MAP_HEIGHT, PRESENT_HEIGHT = 370, 640


def axis_label(mode: str, units: str = DEFAULT) -> str:
    """y-axis label of a map orientation."""
    return f"Outlet pressure [{display.symbol('pressure', units)}]" if mode == "pressure" \
        else "Steam-to-carbon [mol H2O / mol hydrocarbon C]"


def x_axis_label(units: str = DEFAULT) -> str:
    """x-axis label of every map."""
    return f"Outlet temperature [{display.symbol('temperature', units)}]"


def empty_layers() -> dict[str, dict]:
    """Layers that draw nothing (a map before its window is solved)."""
    return {
        "bands": {"xs": [], "ys": [], "color": [], "band": []},
        "lines": {"xs": [], "ys": []},
        "labels": {"x": [], "y": [], "text": []},
        "carbon": {"xs": [], "ys": []},
        **{k: {"xs": [], "ys": []} for k in CARBON_LINES},
        "infeasible": {"xs": [[]], "ys": [[]]},
        "edge": {"xs": [], "ys": []},
        "nodes": {"x": [], "y": [], "value": [], "feasible": [], "carbon": []},
        **{k: {"x": [], "y": [], "angle": [], "marker": [], "text": [], "alpha": []}
           for k in MARKER_LAYERS},
    }


def hover_tooltips(var: Variable, mode: str, units: str = DEFAULT) -> list[tuple[str, str]]:
    """Tooltips of the grid nodes: coordinates, the value with its unit, limits, carbon."""
    y_tip = ("pressure", f"@y{{0.00}} {display.symbol('pressure', units)}") \
        if mode == "pressure" else ("steam-to-carbon", "@y{0.00}")
    return [
        ("temperature", f"@x{{0.0}} {display.symbol('temperature', units)}"),
        y_tip,
        (var.label, f"@value{{0.{'0' * max(var.digits, 1)}}} {var.unit}"),
        ("review limits", "@feasible"),
        ("carbon", "@carbon"),
    ]


def _first(models, kind):
    """The first of `models` of type `kind` (a list scan: Bokeh's select() walks every model
    of the figure, which costs a slice change tens of milliseconds)."""
    return next(m for m in models if isinstance(m, kind))


def restyle_figure(fig, src: dict, var: Variable, mode: str, levels: np.ndarray,
                   layers: dict[str, dict], x_range: tuple[float, float],
                   y_range: tuple[float, float], units: str = DEFAULT) -> None:
    """Show another variable, orientation or window on an existing map (same models, so
    the browser keeps its event subscriptions; the review file's script does the same)."""
    for k, data in layers.items():
        src[k].data = data
    show_legend_entries(fig, layers, src["selected"].data)
    bar = _first(fig.right, ColorBar)
    bar.color_mapper.update(palette=_band_colours(var, len(levels) - 1),
                            low=float(levels[0]), high=float(levels[-1]))
    bar.title = var.unit
    fig.title.text = var.title
    fig.yaxis[0].axis_label = axis_label(mode, units)
    fig.xaxis[0].axis_label = x_axis_label(units)
    fig.x_range.update(start=x_range[0], end=x_range[1])
    fig.y_range.update(start=y_range[0], end=y_range[1])
    _first(fig.toolbar.tools, HoverTool).tooltips = hover_tooltips(var, mode, units)


def map_figure(var: Variable, mode: str, levels: np.ndarray, layers: dict[str, dict],
               name: str, x_range: tuple[float, float], y_range: tuple[float, float],
               width: int = 560, height: int = 430, units: str = DEFAULT,
               share: dict | None = None):
    """A Bokeh map with one ColumnDataSource per layer.

    `share` holds the sources of another map of the same window (:func:`shared_with`) to use
    here instead of new ones: the window's own layers (:data:`WINDOW_LAYERS`: limits, carbon
    lines, markers, the selected point) are the same on both maps of a page, and each model
    costs a page load time to make and send.

    Returns
    -------
    (figure, dict[str, ColumnDataSource], LinearColorMapper)
        Sources are keyed like the layers plus ``"selected"`` (the clicked point).
    """
    fig = figure(
        name=name,
        width=width,
        height=height,
        x_range=x_range,
        y_range=y_range,
        tools="pan,wheel_zoom,box_zoom,reset,save",
        toolbar_location="above",
        x_axis_label=x_axis_label(units),
        y_axis_label=axis_label(mode, units),
        title=var.title,
    )
    fig.title.text_font_size = TITLE_PT
    for axis in (fig.xaxis[0], fig.yaxis[0]):
        axis.axis_label_text_font_size = AXIS_PT
        axis.major_label_text_font_size = AXIS_PT
        axis.axis_label_text_font_style = "normal"
    layers = {**empty_layers(), **layers}
    # Stateless helpers shared by every layer of the figure instead of one each (each Bokeh
    # model costs a page load about a millisecond to make and send).
    share = share or {}
    policy = share["selected"].selection_policy if share else UnionRenderers()
    every = share.get("_filter") or AllIndices()
    src = {k: share.get(k) or ColumnDataSource(v, selection_policy=policy)
           for k, v in layers.items()}
    src["selected"] = share.get("selected") or ColumnDataSource(
        {"x": [], "y": [], "alpha": []}, selection_policy=policy)

    def add(kind, source, name=None, **glyph):
        # One glyph model per layer: the selection, non-selection and muted looks are left
        # to the browser ("auto"), which halves the models a page sends (issue 16's profile).
        return fig.add_glyph(source, kind(**glyph), view=CDSView(filter=every),
                             **({"name": name} if name else {}))
    xy, lines = {"x": "x", "y": "y"}, {"xs": "xs", "ys": "ys"}
    add(MultiPolygons, src["bands"], fill_color="color", line_color="color", line_width=0.5,
        **lines)
    add(MultiLine, src["lines"], line_color="#222222", line_alpha=0.55, line_width=1, **lines)
    infeasible = add(MultiPolygons, src["infeasible"], fill_color="#ffffff", fill_alpha=0.3,
                     hatch_pattern="/", hatch_color=HATCH_COLOUR, hatch_alpha=0.3,
                     hatch_scale=14, line_color=None, **lines)
    # Labels above the hatching, so that they read cleanly.
    add(Text, src["labels"], text="text", text_font_size=LABEL_PT, text_align="center",
        text_baseline="middle", text_color="#111111", background_fill_color="#ffffff",
        background_fill_alpha=0.8, **xy)
    edge = add(MultiLine, src["edge"], name="edge-line", line_color=EDGE_COLOUR,
               line_width=3.5, **lines)
    carbon = add(MultiLine, src["carbon"], line_color=CARBON_COLOUR, line_width=3,
                 line_dash=[8, 4], **lines)
    extra = {
        "carbon_outlet": add(MultiLine, src["carbon_outlet"], line_color=OUTLET_CARBON_COLOUR,
                             line_width=2, line_dash="dotted", **lines),
        "carbon_catalyst": add(MultiLine, src["carbon_catalyst"],
                               line_color=REFERENCE_CARBON_COLOUR, line_width=2,
                               line_dash="dashdot", **lines),
        "carbon_graphite": add(MultiLine, src["carbon_graphite"],
                               line_color=REFERENCE_CARBON_COLOUR, line_width=2,
                               line_dash="dashdot", **lines),
    }
    nodes = add(Scatter, src["nodes"], size=3.5, fill_color="#000000", fill_alpha=0.25,
                line_color=None, **xy)
    selected = add(Scatter, src["selected"], size=15, marker="circle", fill_color=None,
                   line_color=SELECTED_COLOUR, line_width=3, line_alpha="alpha", **xy)
    best = add(Scatter, src["best"], name="best-marker", size=22, marker="marker",
               angle="angle", fill_color=BEST_COLOUR, line_color="#111111", line_width=1.5,
               fill_alpha="alpha", line_alpha="alpha", **xy)
    design = add(Scatter, src["design"], name="design-marker", size=17, marker="marker",
                 angle="angle", fill_color=DESIGN_COLOUR, line_color="#111111",
                 line_width=1.5, fill_alpha="alpha", line_alpha="alpha", **xy)
    for s_ in (src["best"], src["design"]):
        add(Text, s_, text="text", text_font_size=LABEL_PT, x_offset=12, y_offset=-10,
            text_color="#111111", text_alpha="alpha", background_fill_color="#ffffff",
            background_fill_alpha=0.75, **xy)
    fig.add_tools(HoverTool(renderers=[nodes], tooltips=hover_tooltips(var, mode, units)))
    mapper = LinearColorMapper(palette=_band_colours(var, len(levels) - 1),
                               low=float(levels[0]), high=float(levels[-1]))
    fig.add_layout(ColorBar(color_mapper=mapper, width=14, title=var.unit,
                            title_text_font_size=LEGEND_PT,
                            major_label_text_font_size=LEGEND_PT), "right")
    legend = Legend(
        items=[LegendItem(label=LEGEND_LABELS[k], renderers=[r], index=0, name=k)
               for k, r in (("carbon", carbon), *extra.items(), ("edge", edge),
                            ("infeasible", infeasible), ("selected", selected), ("best", best),
                            ("design", design))],
        orientation="horizontal",
        ncols=2,
        label_text_font_size=LEGEND_PT,
        click_policy="hide",
    )
    fig.add_layout(legend, "below")
    fig.toolbar.logo = None
    show_legend_entries(fig, layers, {"x": []})
    return fig, src, mapper


#: Layers that depend on the window and its limits only, not on the variable mapped: one
#: source each can serve both maps of a page (map_figure's `share`).
WINDOW_LAYERS = ("infeasible", "edge", "carbon", "carbon_outlet", "carbon_catalyst",
                 "carbon_graphite", "best", "design", "selected")


def shared_with(fig, src: dict) -> dict:
    """What a second map of the same window can take from the map `fig` with sources `src`
    (map_figure's `share`): its window layers' sources and its view filter."""
    return {**{k: src[k] for k in WINDOW_LAYERS if k in src},
            "_filter": fig.renderers[0].view.filter}


#: Legend entries, by the layer they name (shown only when the slice draws that layer).
LEGEND_LABELS = {
    "carbon": "carbon boundary, binding criterion (ticks on the side where carbon forms)",
    "carbon_outlet": "graphite boundary of the outlet gas alone",
    "carbon_catalyst": "carbon boundary on catalyst carbon",
    "carbon_graphite": "carbon boundary on graphite",
    "edge": "feasible window edge",
    "infeasible": "outside a review limit (hover a dot: which)",
    "selected": "selected point",
    "best": "best point",
    "design": "design point",
}


def legend_visibility(layers: dict[str, dict], selected: dict) -> dict[str, bool]:
    """Which legend entries the slice needs: those whose layer draws something."""
    return {
        "carbon": bool(layers["carbon"]["xs"]),
        **{k: bool(layers[k]["xs"]) for k in CARBON_LINES},
        "edge": bool(layers["edge"]["xs"]),
        "infeasible": any(bool(p) for p in layers["infeasible"]["xs"][0])
        if layers["infeasible"]["xs"] else False,
        "selected": bool(selected.get("x")),
        "best": bool(layers.get("best", {}).get("x")),
        "design": bool(layers.get("design", {}).get("x")),
    }


def show_legend_entries(fig, layers: dict[str, dict], selected: dict) -> None:
    """Hide the legend entries of layers the slice does not draw (no sample without data)."""
    vis = legend_visibility(layers, selected)
    for item in _first(fig.below, Legend).items:
        item.visible = vis[item.name]
