"""One slice of a sweep as plain map layers in display units: the variable's bands, labelled
lines and node values, joined with what every map of the slice shares (explorer.map_window:
carbon boundaries, the infeasible region and its edge, markers, grid nodes) into one map's
layers (split from explorer.maps, which keeps every name of the three importable).
"""

from __future__ import annotations

import math

import contourpy
import numpy as np
import xarray as xr

from explorer.display import DEFAULT
from explorer.map_geometry import _polys, x_display, y_display
from explorer.map_variables import (
    CARBON_LINES,
    CHANGE_PALETTE,
    LABEL_BOX,
    OVERLAY_VARIABLES,
    VARIABLES,
    Variable,
    _band_colours,
    variable_levels,
)
from explorer.map_window import MARKER_LAYERS, window_layers


def slice_fields(ds: xr.Dataset, mode: str, fixed: dict[str, int]) -> xr.Dataset:
    """The 2-D slice (y axis, temperature) of `ds` with the other axes fixed by index.

    Only the variables a map can show are kept (the per-species arrays other than the dry
    mole fractions are left out), so a slice change stays cheap.
    """
    keep = [v for v in (*OVERLAY_VARIABLES, *(k for k in VARIABLES if ":" not in k),
                        "mole_fraction_dry") if v in ds]
    sel = {d: i for d, i in fixed.items() if d in ds.dims and d != mode and d != "temperature"}
    out = ds[list(dict.fromkeys(keep))].isel(sel)
    return out.transpose(mode, "temperature", ...)


def _rounded(a: np.ndarray, decimals: int | None) -> list:
    """A 1-D array as a list of floats, rounded by numpy to `decimals` if given."""
    return (a if decimals is None else np.round(a, decimals)).tolist()


def _fmt(value: float, digits: int) -> str:
    return f"{value:.{digits}f}".rstrip("0").rstrip(".") if digits > 0 else f"{value:.0f}"


def variable_layers(s: xr.Dataset, var: Variable, mode: str, levels: np.ndarray,
                    units: str = DEFAULT, decimals: int | None = None) -> dict:
    """What one variable draws on a slice: filled bands, contour lines, their labels, and
    the values at the grid nodes (display units).

    Parameters
    ----------
    s : xarray.Dataset
        A 2-D slice from :func:`slice_fields`.
    var : Variable
        What to colour.
    mode : {"pressure", "steam_to_carbon"}
        The y axis.
    levels : ndarray
        Contour levels (:func:`variable_levels` over the whole Dataset).
    units : str
        Unit system of the axes (explorer.display); `var` is already in it.
    decimals : int, optional
        Round the geometry (bands, lines, label places) to this many decimals, with numpy
        (what explorer.review_data.round_layers does to the finished layers, done on the
        arrays); the node values are left as they are.
    """
    x = x_display(s["temperature"].values, units)
    y = y_display(mode, s[mode].values, units)
    z = np.asarray(var.values(s), dtype=float)
    out = {"bands": {"xs": [], "ys": [], "color": [], "band": []},
           "lines": {"xs": [], "ys": []},
           "labels": {"x": [], "y": [], "text": []},
           "values": [v if math.isfinite(v) else None for v in z.ravel().tolist()]}
    if len(x) < 2 or len(y) < 2:
        return out
    palette = _band_colours(var, len(levels) - 1)
    # A mask only where a value is missing (contourpy treats an empty mask as none).
    finite = np.isfinite(z).all()
    gen = contourpy.contour_generator(x, y, z if finite else np.ma.masked_invalid(z),
                                      fill_type="OuterOffset", line_type="Separate")
    bands = out["bands"]
    for i in range(len(levels) - 1):
        lo = levels[i] if i > 0 else -1e300
        hi = levels[i + 1] if i < len(levels) - 2 else 1e300
        pts, offs = gen.filled(lo, hi)
        if not pts:
            continue
        xs, ys = _polys(pts, offs, decimals)
        bands["xs"].append(xs)
        bands["ys"].append(ys)
        bands["color"].append(palette[i])
        bands["band"].append("no change" if len(levels) == 2 and var.palette is CHANGE_PALETTE
                             else f"{_fmt(levels[i], var.digits)} to "
                                  f"{_fmt(levels[i + 1], var.digits)}")
    span_x = float(x.max() - x.min()) or 1.0
    span_y = float(y.max() - y.min()) or 1.0
    lines, labels = out["lines"], out["labels"]
    placed: list[tuple[float, float]] = []  # label centres, in fractions of the map
    for level in levels[1:-1]:
        for path in gen.lines(level):
            lines["xs"].append(_rounded(path[:, 0], decimals))
            lines["ys"].append(_rounded(path[:, 1], decimals))
            u, v = (path[:, 0] - x.min()) / span_x, (path[:, 1] - y.min()) / span_y
            if np.sum(np.hypot(np.diff(u), np.diff(v))) <= 0.15:
                continue
            # The first of a few places along the line whose label box clears every label
            # already placed and the map's border.
            for k in (len(path) // 2, len(path) // 3, 2 * len(path) // 3, len(path) // 5,
                      4 * len(path) // 5):
                if (LABEL_BOX[0] / 2 < u[k] < 1 - LABEL_BOX[0] / 2
                        and LABEL_BOX[1] / 2 < v[k] < 1 - LABEL_BOX[1] / 2
                        and all(abs(u[k] - a) > LABEL_BOX[0] or abs(v[k] - b) > LABEL_BOX[1]
                                for a, b in placed)):
                    placed.append((float(u[k]), float(v[k])))
                    labels["x"].append(float(path[k, 0]))
                    labels["y"].append(float(path[k, 1]))
                    labels["text"].append(_fmt(level, var.digits))
                    break
    if decimals is not None:
        for k in ("x", "y"):
            labels[k] = _rounded(np.asarray(labels[k], dtype=float), decimals)
    return out


def combine(variable: dict, window: dict) -> dict[str, dict]:
    """The ColumnDataSource data of every layer of one map from its two parts."""
    out = {k: window[k] for k in ("carbon", "infeasible", "edge", *CARBON_LINES,
                                  *MARKER_LAYERS) if k in window}
    out.update({k: variable[k] for k in ("bands", "lines", "labels")})
    out["nodes"] = dict(window["nodes"], value=variable["values"])
    return out


def slice_layers(ds: xr.Dataset, var: Variable, mode: str, fixed: dict[str, int], limits,
                 levels: np.ndarray | None = None,
                 markers: dict | None = None, units: str = DEFAULT) -> dict[str, dict]:
    """All drawable data of one map slice, in display units.

    Parameters
    ----------
    ds : xarray.Dataset
        A sweep (thermo.sweep).
    var : Variable
        What to colour.
    mode : {"pressure", "steam_to_carbon"}
        The y axis.
    fixed : dict[str, int]
        Index of every other window axis (steam_to_carbon or pressure, and a co-feed axis).
    limits : thermo.scenario.Limits
        Review limits for the feasible window.
    levels : ndarray, optional
        Contour levels; :func:`variable_levels` over the whole Dataset if None.
    markers : dict, optional
        The best and design points (:func:`marker_layers`).
    units : str
        Unit system of the axes (explorer.display); `var` is already in it.

    Returns
    -------
    dict
        One dict per layer (``bands``, ``lines``, ``labels``, ``carbon``, ``infeasible``,
        ``edge``, ``nodes``), each a ColumnDataSource ``data`` mapping.
    """
    if levels is None:
        levels = variable_levels(ds, var)
    s = slice_fields(ds, mode, fixed)
    return combine(variable_layers(s, var, mode, levels, units),
                   window_layers(s, mode, limits, markers, units=units))


