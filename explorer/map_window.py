"""What every map of a slice shares, in display units: the carbon boundaries (the binding
one with ticks on its carbon side, the outlet-only one, the reference that does not bind), the
region outside the review limits and its edge, the best and design points, and each grid
node's broken limits and carbon call in words (split from explorer.map_layers).
"""

from __future__ import annotations

import math

import contourpy
import numpy as np
import xarray as xr

from explorer import display
from explorer.display import DEFAULT
from explorer.map_geometry import _paths, _polys, x_display, y_display
from explorer.map_variables import CARBON_LINES
from thermo.carbon import BINDING, BINDING_WORDS
from thermo.sweep import LIMIT_VARIABLES


def infeasibility(s: xr.Dataset, limits) -> np.ndarray:
    """Smooth field that is <= 0 exactly where every review limit is met [-].

    The maximum over the active limits of the normalized excess (slip over its maximum,
    yield under its minimum, duty over its maximum, the carbon margin where carbon must be
    absent), each on the variable thermo.sweep.LIMIT_VARIABLES names (the train's figures);
    unconverged points count as infeasible.
    """
    v = LIMIT_VARIABLES
    terms = []
    if limits.max_methane_slip_dry is not None:
        terms.append((s[v["max_methane_slip_dry"]] - limits.max_methane_slip_dry)
                     / max(limits.max_methane_slip_dry, 1e-12))
    if limits.min_h2_yield is not None:
        terms.append((limits.min_h2_yield - s[v["min_h2_yield"]])
                     / max(limits.min_h2_yield, 1e-12))
    if limits.max_duty is not None:
        terms.append((s[v["max_duty"]] - limits.max_duty) / max(abs(limits.max_duty), 1.0))
    if limits.max_fired_duty is not None and v["max_fired_duty"] in s:
        terms.append((s[v["max_fired_duty"]] - limits.max_fired_duty)
                     / max(abs(limits.max_fired_duty), 1.0))
    if limits.carbon_free:
        # The binding carbon verdict's field (thermo.carbon): negative exactly where
        # carbon_free holds; NaN (no verdict) counts as carbon.
        terms.append(carbon_margin(s).fillna(1.0))
    if not terms:
        field = xr.full_like(s["h2_yield"], -1.0)
    else:
        field = terms[0]
        for t in terms[1:]:
            field = np.maximum(field, t)
    field = xr.where(s["converged"], field, 1.0)
    return np.asarray(field, dtype=float)


def carbon_margin(s: xr.Dataset) -> xr.DataArray:
    """Signed carbon field of the binding verdict, ``carbon_verdict_ln_activity``: ln of the
    binding carbon activity (path maximum, real gas, flags; thermo.carbon), negative where the
    point is carbon-free; its zero line is the binding carbon boundary [-]."""
    return s["carbon_verdict_ln_activity"].clip(min=-700.0)


def outlet_carbon_margin(s: xr.Dataset) -> xr.DataArray:
    """ln carbon activity (graphite) of the equilibrated gas at the outlet alone: its zero
    line is the outlet-only graphite boundary, drawn beside the binding one [-]."""
    return s["carbon_ln_activity_outlet"].clip(min=-700.0)


def reference_carbon_layers(s: xr.Dataset) -> dict[str, str]:
    """The verdict fields on the carbon reference that does not bind, by layer name: the
    catalyst carbon's when the verdict is on graphite and its offset is given, graphite's
    when the verdict is on catalyst carbon."""
    ref = s["carbon_verdict_ln_activity"].attrs.get("reference", "graphite")
    out = {}
    if "carbon_verdict_ln_activity_catalyst" in s:
        if ref == "graphite":
            out["carbon_catalyst"] = "carbon_verdict_ln_activity_catalyst"
        else:
            out["carbon_graphite"] = "carbon_verdict_ln_activity_graphite"
    return out


def _match(a: list[tuple[float, float]], b: list[tuple[float, float]]) -> list[tuple[int, int]]:
    """Pairs (i, j) of the intervals of two neighbouring rows that are one band: in order,
    each to the nearest centre not yet taken (one interval each: always a pair)."""
    if len(a) == 1 and len(b) == 1:
        return [(0, 0)]
    pairs, used = [], set()
    for i, (a0, a1) in enumerate(a):
        best = None
        for j, (b0, b1) in enumerate(b):
            if j in used or (pairs and j < pairs[-1][1]):
                continue
            overlap = min(a1, b1) - max(a0, b0)
            d = -overlap if overlap > 0 else abs((a0 + a1) - (b0 + b1)) / 2
            if best is None or d < best[0]:
                best = (d, j)
        if best is not None and (best[0] <= 0 or len(a) == len(b)):
            pairs.append((i, best[1]))
            used.add(best[1])
    return pairs


def exact_window_polygons(s: xr.Dataset, mode: str, units: str = DEFAULT):
    """The region outside the review limits and its edge, drawn from the exact feasible
    intervals of each row (``feasible_t_low`` / ``feasible_t_high``, thermo.edges); None when
    the slice does not hold them.

    Between two neighbouring rows a band (an interval in each, matched by :func:`_match`) is
    the quadrilateral through its four exact ends, so its edges run through every row's
    exact edge temperatures and are straight between rows; a band however narrow stays one
    band. Everything else of the strip between the rows is outside. A band that does not go
    on to the next row ends flat at its last row.

    Returns
    -------
    (infeasible, edge)
        ColumnDataSource data of the hatched polygons and of the edge lines (degC; bar or
        S/C).
    """
    if "feasible_t_low" not in s:
        return None
    T = x_display(np.asarray(s["temperature"].values, dtype=float), units)
    yv = y_display(mode, np.asarray(s[mode].values, dtype=float), units)
    lo = x_display(np.atleast_2d(np.asarray(s["feasible_t_low"].values, dtype=float)), units)
    hi = x_display(np.atleast_2d(np.asarray(s["feasible_t_high"].values, dtype=float)), units)
    rows = [[(float(a), float(b)) for a, b in zip(lo[r], hi[r], strict=True)
             if np.isfinite(a)] for r in range(lo.shape[0])]
    t0, t1 = float(T.min()), float(T.max())
    eps = 1e-6 * max(t1 - t0, 1.0)
    polys_x, polys_y, lines_x, lines_y = [], [], [], []

    def poly(xs, ys):
        polys_x.append([list(map(float, xs))])
        polys_y.append([list(map(float, ys))])

    def line(xs, ys):
        lines_x.append(list(map(float, xs)))
        lines_y.append(list(map(float, ys)))

    for r in range(len(rows) - 1):
        ya, yb = float(yv[r]), float(yv[r + 1])
        A, B = rows[r], rows[r + 1]
        pairs = _match(A, B)
        # Outside: the strip minus the matched bands, left to right.
        left_a, left_b = t0, t0
        for i, j in pairs:
            (a0, a1), (b0, b1) = A[i], B[j]
            if a0 > left_a + eps or b0 > left_b + eps:
                poly([left_a, a0, b0, left_b], [ya, ya, yb, yb])
            if not (a0 <= t0 + eps and b0 <= t0 + eps):
                line([a0, b0], [ya, yb])
            if not (a1 >= t1 - eps and b1 >= t1 - eps):
                line([a1, b1], [ya, yb])
            left_a, left_b = a1, b1
        if left_a < t1 - eps or left_b < t1 - eps:
            poly([left_a, t1, t1, left_b], [ya, ya, yb, yb])
        # Ends of bands that do not go on: flat at their row.
        for i, iv in enumerate(A):
            if i not in {p[0] for p in pairs}:
                line(list(iv), [ya, ya])
        for j, iv in enumerate(B):
            if j not in {p[1] for p in pairs}:
                line(list(iv), [yb, yb])
    if len(rows) == 1:
        for iv in rows[0]:
            line(list(iv), [float(yv[0])] * 2)
    return ({"xs": [polys_x], "ys": [polys_y]}, {"xs": lines_x, "ys": lines_y})


def marker_layers(s: xr.Dataset, mode: str, markers: dict | None,
                  x_range: tuple[float, float], y_range: tuple[float, float],
                  units: str = DEFAULT) -> dict:
    """The best point and the design point on a slice (display units).

    Parameters
    ----------
    s : xarray.Dataset
        A 2-D slice (its fixed axes are scalar coordinates).
    mode : {"pressure", "steam_to_carbon"}
    markers : dict, optional
        ``{"best": coords, "design": coords}``, each coords a dict of every window axis [SI].
    x_range, y_range : tuple
        The map's extent (degC; bar or S/C).

    Notes
    -----
    A marker lies at its true place. Off this slice (another value of a fixed axis) it is
    drawn faint and its label says where it is. A design point outside the window is drawn
    at the map's border with a triangle pointing towards its true place.
    """
    out = {k: {"x": [], "y": [], "angle": [], "marker": [], "text": [], "alpha": []}
           for k in MARKER_LAYERS}
    if not markers:
        return out
    for name, c in markers.items():
        if c is None or name not in out:
            continue
        x = x_display(c["temperature"], units)
        y = float(y_display(mode, np.asarray(c[mode]), units))
        off = []
        for d in s.coords:
            if d in ("temperature", mode, "species", "interval") or d not in c:
                continue
            if np.ndim(s[d].values) == 0:
                v = float(s[d].values)
                if not math.isclose(v, c[d], rel_tol=1e-6, abs_tol=1e-9):
                    off.append(f"{AXIS_WORDS[d]} {_axis_value(d, c[d], units)}")
        cx = min(max(x, x_range[0]), x_range[1])
        cy = min(max(y, y_range[0]), y_range[1])
        outside = (cx, cy) != (x, y)
        label = {"best": "best point", "design": "design point"}[name]
        if outside:
            sx = (x_range[1] - x_range[0]) or 1.0
            sy = (y_range[1] - y_range[0]) or 1.0
            angle = math.atan2((y - cy) / sy, (x - cx) / sx) - math.pi / 2
            where = (f"{x:.1f} {display.symbol('temperature', units)}, "
                     + (f"{y:.3g} {display.symbol('pressure', units)}" if mode == "pressure"
                        else f"S/C {y:.3g}"))
            label += f" outside the window ({where})"
        else:
            angle = 0.0
        if off:
            label += " at " + ", ".join(off)
        o = out[name]
        o["x"].append(cx)
        o["y"].append(cy)
        o["angle"].append(angle)
        o["marker"].append("triangle" if outside else ("star" if name == "best" else "diamond"))
        o["text"].append(label)
        o["alpha"].append(0.45 if off else 1.0)
    return out


def design_coordinates(sc) -> dict[str, float]:
    """A scenario's design point on every axis of its window [SI]."""
    c = {"temperature": sc.temperature, "pressure": sc.pressure,
         "steam_to_carbon": sc.feed.steam_to_carbon}
    for d in ("oxygen_to_carbon", "co2_to_carbon"):
        if d in sc.window.axes():
            c[d] = getattr(sc.feed, d)
    return c


def scenario_markers(sc, best) -> dict:
    """The markers of :func:`marker_layers` from a scenario and its thermo.best_point
    result (None: no best point)."""
    return {"best": best.coordinates if best is not None and best.feasible else None,
            "design": design_coordinates(sc)}


#: Layers of the best point and the design point.
MARKER_LAYERS = ("best", "design")
#: How a fixed axis is named in a marker's label.
AXIS_WORDS = {"pressure": "P", "steam_to_carbon": "S/C", "oxygen_to_carbon": "O2/C",
              "co2_to_carbon": "CO2/C"}


def _axis_value(d: str, v: float, units: str = DEFAULT) -> str:
    """A fixed axis' value [SI] in a marker's label ("25 bar", "357 psia", "3")."""
    if d == "pressure":
        sym = display.symbol("pressure", units).removesuffix(" abs")
        return f"{display.to_display(v, 'pressure', units):.3g} {sym}"
    return f"{v:.3g}"


def window_layers(s: xr.Dataset, mode: str, limits, markers: dict | None = None,
                  ranges: tuple | None = None, units: str = DEFAULT) -> dict:
    """What every map of a slice shares: the carbon boundary, the region outside a review
    limit and its edge, the grid nodes with their feasibility and carbon call, and the best
    and design points (:func:`marker_layers`).

    The feasible edge and the hatching come from the exact feasible intervals of each row
    (:func:`exact_window_polygons`) when the Dataset holds them, otherwise from the grid
    values."""
    x = x_display(s["temperature"].values, units)
    y = y_display(mode, s[mode].values, units)
    out = {"carbon": {"xs": [], "ys": []}, "infeasible": {"xs": [[]], "ys": [[]]},
           "edge": {"xs": [], "ys": []}}
    for k in CARBON_LINES:
        out[k] = {"xs": [], "ys": []}
    if ranges is None:
        ranges = ((float(x.min()), float(x.max())), (float(y.min()), float(y.max())))
    out.update(marker_layers(s, mode, markers, *ranges, units=units))
    if len(x) >= 2 and len(y) >= 2:
        ogen = contourpy.contour_generator(x, y, np.asarray(outlet_carbon_margin(s), float),
                                           line_type="Separate")
        out["carbon_outlet"] = _paths(ogen.lines(0.0))
        for layer, name in reference_carbon_layers(s).items():
            rgen = contourpy.contour_generator(x, y, np.asarray(s[name].clip(min=-700.0),
                                                                float), line_type="Separate")
            out[layer] = _paths(rgen.lines(0.0))
        cgen = contourpy.contour_generator(x, y, np.asarray(carbon_margin(s), dtype=float),
                                           line_type="Separate")
        out["carbon"] = _paths(cgen.lines(0.0))
        exact = exact_window_polygons(s, mode, units)
        if exact is not None:
            out["infeasible"], out["edge"] = exact
        else:
            fgen = contourpy.contour_generator(x, y, infeasibility(s, limits),
                                               fill_type="OuterOffset", line_type="Separate")
            pts, offs = fgen.filled(0.0, 1e300)
            ixs, iys = _polys(pts, offs) if pts else ([], [])
            out["infeasible"] = {"xs": [ixs], "ys": [iys]}
            out["edge"] = _paths(fgen.lines(0.0))
        out["carbon"] = _with_side_ticks(out["carbon"], x, y, np.asarray(carbon_margin(s),
                                                                         dtype=float))
    X, Y = np.meshgrid(x, y)
    out["nodes"] = {
        "x": X.ravel().tolist(),
        "y": Y.ravel().tolist(),
        "feasible": broken_limits(s, limits, units).ravel().tolist(),
        "carbon": carbon_words(s).ravel().tolist(),
    }
    return out


def broken_limits(s: xr.Dataset, limits, units: str = DEFAULT) -> np.ndarray:
    """At each node, the review limits broken there in words ("within all limits" where
    none is), on the variables of thermo.sweep.LIMIT_VARIABLES."""
    v = LIMIT_VARIABLES
    shape = s["converged"].shape
    words = np.full(shape, "", dtype=object)

    def add(mask, text):
        mask = np.asarray(mask, dtype=bool)
        words[mask] = np.where(words[mask] == "", text, words[mask] + "; " + text)

    if limits.max_methane_slip_dry is not None:
        add(s[v["max_methane_slip_dry"]] > limits.max_methane_slip_dry,
            f"methane slip above {limits.max_methane_slip_dry * 100:g} mol %")
    if limits.min_h2_yield is not None:
        add(s[v["min_h2_yield"]] < limits.min_h2_yield,
            f"H2 below {limits.min_h2_yield:g} mol/mol C")
    mw = display.symbol("power", units)
    if limits.max_duty is not None:
        add(s[v["max_duty"]] > limits.max_duty,
            f"duty above {display.to_display(limits.max_duty, 'power', units):g} {mw}")
    if limits.max_fired_duty is not None and v["max_fired_duty"] in s:
        add(s[v["max_fired_duty"]] > limits.max_fired_duty,
            f"fired duty above {display.to_display(limits.max_fired_duty, 'power', units):g} "
            f"{mw}")
    if limits.carbon_free:
        add(carbon_forms(s), "carbon")
    add(~np.asarray(s["converged"], dtype=bool), "not converged")
    words[words == ""] = "within all limits"
    return words


def carbon_forms(s: xr.Dataset) -> np.ndarray:
    """Where the carbon limit is broken: the binding verdict (thermo.carbon) is not
    carbon-free."""
    return ~np.asarray(s[LIMIT_VARIABLES["carbon_free"]], dtype=bool)


def carbon_words(s: xr.Dataset) -> np.ndarray:
    """The carbon call at each node in words: the binding criterion and its activity."""
    ln_a = np.asarray(s["carbon_verdict_ln_activity"], dtype=float)
    code = np.asarray(s["carbon_binding"], dtype=int)
    forms = carbon_forms(s)
    out = np.empty(ln_a.shape, dtype=object)
    for idx in np.ndindex(ln_a.shape):
        name = BINDING[code[idx]]
        why = BINDING_WORDS[name]
        if name in ("higher_hydrocarbons", "other_stage"):
            out[idx] = f"forms here ({why})"
        elif forms[idx]:
            a = math.exp(min(ln_a[idx], 700.0)) if math.isfinite(ln_a[idx]) else float("nan")
            out[idx] = f"forms here (activity {a:.2f}, {why})"
        else:
            out[idx] = f"free (activity {math.exp(ln_a[idx]):.2f}, {why})"
    return out


def _with_side_ticks(lines: dict, x: np.ndarray, y: np.ndarray, field: np.ndarray) -> dict:
    """The carbon boundary with short ticks on the side where carbon forms (where `field`,
    the signed carbon margin on the grid, is positive)."""
    if not lines["xs"]:
        return lines
    sx, sy = float(x.max() - x.min()) or 1.0, float(y.max() - y.min()) or 1.0
    gy, gx = np.gradient(field, y / sy, x / sx)
    xs, ys = list(lines["xs"]), list(lines["ys"])
    for px, py in zip(lines["xs"], lines["ys"], strict=True):
        u, v = (np.asarray(px) - x.min()) / sx, (np.asarray(py) - y.min()) / sy
        length = np.concatenate([[0.0], np.cumsum(np.hypot(np.diff(u), np.diff(v)))])
        for d in np.arange(0.03, length[-1], 0.06):
            k = int(np.searchsorted(length, d))
            i = int(np.clip(np.searchsorted(y, py[k]), 0, len(y) - 1))
            j = int(np.clip(np.searchsorted(x, px[k]), 0, len(x) - 1))
            n = np.array([gx[i, j], gy[i, j]])
            norm = float(np.hypot(*n))
            if not np.isfinite(norm) or norm == 0.0:
                continue
            n = n / norm * 0.018
            xs.append([float(px[k]), float(px[k] + n[0] * sx)])
            ys.append([float(py[k]), float(py[k] + n[1] * sy)])
    return {"xs": xs, "ys": ys}
