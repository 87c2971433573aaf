"""The maps' shared geometry: a slice's axes in display units and contourpy's output in
Bokeh's nesting, used by the per-variable layers (explorer.map_layers) and by what every map of
a slice shares (explorer.map_window).
"""

from __future__ import annotations

import numpy as np

from explorer import display
from explorer.display import DEFAULT


def x_display(values, units: str = DEFAULT):
    """Temperatures [K] on the maps' x axis, in display units."""
    return display.to_display(values, "temperature", units)


def y_display(mode: str, values, units: str = DEFAULT):
    """Values of the y axis [SI] in display units (pressure converted, ratios as they are)."""
    return display.to_display(values, "pressure", units) if mode == "pressure" else values


def _polys(points, offsets, decimals: int | None = None):
    """contourpy OuterOffset polygons to Bokeh multi_polygons nesting (x and y), rounded
    to `decimals` if given."""
    xs, ys = [], []
    for pts, off in zip(points, offsets, strict=True):
        if decimals is not None:
            pts = np.round(pts, decimals)
        rings_x = [pts[off[k]:off[k + 1], 0].tolist() for k in range(len(off) - 1)]
        rings_y = [pts[off[k]:off[k + 1], 1].tolist() for k in range(len(off) - 1)]
        xs.append(rings_x)
        ys.append(rings_y)
    return xs, ys


def _paths(paths) -> dict:
    return {"xs": [p[:, 0].tolist() for p in paths], "ys": [p[:, 1].tolist() for p in paths]}
