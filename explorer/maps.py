"""Operating-window maps: the one plotting module of the live app and the review export.

Two layers of work, kept apart so the static export can reuse the first without Python:

* :func:`slice_layers` turns one 2-D slice of a sweep Dataset into plain data (filled bands,
  labelled contour lines, the carbon boundary, the infeasible region and its edge, the grid
  nodes with their values), all in display units (degC, bar) and ready for Bokeh
  ColumnDataSources.
* :func:`map_figure` draws a Bokeh figure with one ColumnDataSource per layer. The app
  replaces the sources' data when a slice or variable changes (no recomputation of
  thermodynamics); the export does the same in the browser with CustomJS from data embedded
  in the page.

Colour levels are fixed over the whole Dataset for each variable, not per slice, so that one
colour means one value on every slice.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import contourpy
import numpy as np
import xarray as xr
from bokeh.models import (
    ColorBar,
    ColumnDataSource,
    HoverTool,
    Legend,
    LegendItem,
    LinearColorMapper,
)
from bokeh.palettes import Cividis256, Inferno256, RdBu11, Viridis256, interp_palette
from bokeh.plotting import figure

from explorer import display
from explorer.display import DEFAULT
from thermo.carbon import BINDING, BINDING_WORDS
from thermo.species import GAS_SPECIES
from thermo.sweep import LIMIT_VARIABLES

#: Map orientations: x is always outlet temperature.
MODES = {
    "pressure": "temperature vs pressure (at a chosen steam-to-carbon)",
    "steam_to_carbon": "temperature vs steam-to-carbon (at a chosen pressure)",
}

#: Room a contour label takes, as fractions of the map's width and height (11 pt text on a
#: map about 600 x 440 px); labels closer than this to one another are not drawn.
LABEL_BOX = (0.09, 0.06)

#: Type sizes: legible from the back of a review room.
TITLE_PT, AXIS_PT, LABEL_PT, LEGEND_PT = "15pt", "14pt", "11pt", "12pt"

# Colours of the overlays (our own choice).
CARBON_COLOUR = "#5b1a18"
OUTLET_CARBON_COLOUR = "#8a7b76"
REFERENCE_CARBON_COLOUR = "#b0602c"
EDGE_COLOUR = "#00a37a"
SELECTED_COLOUR = "#ff3b30"
BEST_COLOUR = "#ffd21f"
DESIGN_COLOUR = "#3d7bd9"
HATCH_COLOUR = "#3b3b3b"


@dataclass(frozen=True)
class Variable:
    """A mappable quantity and how it is displayed."""

    key: str
    label: str
    unit: str
    scale: float
    palette: tuple[str, ...]
    digits: int
    #: Display kind (explorer.display) of a dimensional variable; its unit then follows the
    #: unit system (:meth:`in_units`). "" for a ratio or a fraction.
    kind: str = ""
    #: What follows the kind's unit in the title ("H2" in "GJ/1000 Nm3 H2").
    unit_suffix: str = ""

    def in_units(self, units: str = DEFAULT) -> Variable:
        """The variable as shown in unit system `units` (itself in metric or without a
        kind): the system's unit, scale and decimals."""
        if not self.kind or units == DEFAULT:
            return self
        u = display.unit(self.kind, units)
        unit = f"{u.symbol} {self.unit_suffix}".strip()
        return Variable(self.key, self.label, unit, u.scale, self.palette,
                        display.decimals(self.kind, self.digits, units), self.kind,
                        self.unit_suffix)

    def values(self, ds: xr.Dataset) -> xr.DataArray:
        """The variable over the Dataset, in display units."""
        if self.key.startswith("dry:"):
            da = ds["mole_fraction_dry"].sel(species=self.key[4:])
        else:
            da = ds[self.key]
        return da * self.scale

    @property
    def title(self) -> str:
        return f"{self.label} [{self.unit}]"


def _scale(kind: str) -> float:
    """Metric scale of a display kind (explorer.display), SI to shown."""
    return display.unit(kind).scale


def _variables() -> dict[str, Variable]:
    v = [
        Variable("h2_yield", "H2 yield", "mol H2 / mol hydrocarbon C", 1.0, Viridis256, 3),
        Variable("methane_slip_dry", "Methane slip, dry", "mol %", _scale("percent"),
                 tuple(reversed(Inferno256)), 2),
        Variable("h2_potential", "H2 + CO potential", "mol / mol hydrocarbon C", 1.0,
                 Viridis256, 3),
        Variable("methane_conversion", "Methane conversion (hydrocarbon C)", "%", _scale("percent"),
                 Cividis256, 2),
        Variable("h2_co_ratio", "H2/CO", "mol/mol", 1.0, Cividis256, 2),
        Variable("h2_product", "H2 product after the train", "mol H2 / mol hydrocarbon C",
                 1.0, Viridis256, 3),
        Variable("train_duty", "Heat supplied to the train", "MW", _scale("power"),
                 tuple(reversed(Inferno256)), 2, "power"),
        Variable("train_methane_slip_dry", "Methane slip after the last reformer, dry",
                 "mol %", _scale("percent"), tuple(reversed(Inferno256)), 2),
        Variable("duty", "Duty", "MW", _scale("power"), tuple(reversed(Inferno256)), 2, "power"),
        Variable("duty_per_h2", "Duty per H2", "MJ/kmol H2", _scale("energy_per_mol"),
                 tuple(reversed(Inferno256)), 1, "energy_per_mol", "H2"),
        Variable("carbon_activity", "Carbon activity (graphite = 1)", "-", 1.0,
                 tuple(reversed(Inferno256)), 3),
        Variable("carbon_activity_path_max", "Carbon activity along the tube, largest "
                 "(graphite = 1)", "-", 1.0, tuple(reversed(Inferno256)), 3),
    ]
    for s in GAS_SPECIES:
        if s != "H2O":
            v.append(Variable(f"dry:{s}", f"{s}, dry", "mol %", _scale("percent"), Cividis256, 3))
    v += _plant_variables()
    return {x.key: x for x in v}


def _plant_variables() -> list[Variable]:
    """Map variables of the plant around the reformer (Datasets of a [plant] scenario)."""
    hot = tuple(reversed(Inferno256))
    mw, flow, steam = _scale("power"), _scale("molar_flow"), _scale("steam_flow")
    return [
        Variable("specific_energy", "Net specific energy", "GJ/1000 Nm3 H2",
                 _scale("specific_energy"), hot, 2, "specific_energy", "H2"),
        Variable("plant_fired_duty", "Fired duty (LHV)", "MW", mw, hot, 1, "power"),
        Variable("plant_trim_fuel", "Trim natural gas (LHV)", "MW", mw, hot, 1, "power"),
        Variable("plant_tail_gas_lhv", "Tail gas to the furnace (LHV)", "MW", mw, Cividis256,
                 1, "power"),
        Variable("plant_tail_gas_excess", "Tail gas beyond what the furnace needs", "MW", mw,
                 hot, 1, "power"),
        Variable("radiant_efficiency", "Radiant efficiency", "%", _scale("percent"),
                 Viridis256, 1),
        Variable("plant_h2_product", "H2 product (purified)", "kmol/h", flow, Viridis256, 0,
                 "molar_flow"),
        Variable("plant_steam_raised", "Steam raised", "t/h", steam, Cividis256, 1,
                 "steam_flow"),
        Variable("plant_process_steam", "Process steam", "t/h", steam, hot, 1, "steam_flow"),
        Variable("plant_steam_export", "Steam export (negative: import)", "t/h", steam,
                 Cividis256, 1, "steam_flow"),
        Variable("natural_gas_per_h2", "Natural gas (feed + trim) per H2", "Nm3/Nm3 H2", 1.0,
                 hot, 3, "gas_volume_ratio", "H2"),
        Variable("steam_export_per_h2", "Steam export per H2", "kg/Nm3 H2",
                 _scale("mass_per_gas_volume"), Cividis256, 3, "mass_per_gas_volume", "H2"),
    ]


def available(ds: xr.Dataset | None, key: str) -> bool:
    """Whether map variable `key` can be drawn from `ds` (plant variables need [plant];
    before a Dataset exists, every variable but the plant's)."""
    if ds is None:
        return key in VARIABLES and key not in PLANT_MAP_KEYS
    return ("mole_fraction_dry" if key.startswith("dry:") else key) in ds


VARIABLES: dict[str, Variable] = _variables()
#: Map variables that exist only for a scenario with a [plant] table.
PLANT_MAP_KEYS = frozenset(v.key for v in _plant_variables())

#: Diverging colours of change maps: red where the proposal is lower, blue where higher.
CHANGE_PALETTE = tuple(interp_palette(tuple(reversed(RdBu11)), 256))


def change_variable(var: Variable) -> Variable:
    """The change (proposal - base) of a map variable: same key, label and unit, a
    diverging palette, and one more decimal."""
    return Variable(var.key, var.label, var.unit,
                    var.scale, CHANGE_PALETTE, var.digits + 1, var.kind, var.unit_suffix)


def variable(key: str, units: str = DEFAULT) -> Variable:
    """Map variable `key` as shown in unit system `units`."""
    return VARIABLES[key].in_units(units)


def variables_in(units: str = DEFAULT) -> dict[str, Variable]:
    """Every map variable as shown in unit system `units` (:data:`VARIABLES` in metric)."""
    return VARIABLES if units == DEFAULT else {k: v.in_units(units) for k, v in VARIABLES.items()}


def nice_levels(lo: float, hi: float, n: int = 10) -> np.ndarray:
    """Round contour levels spanning [lo, hi], about `n` intervals.

    Examples
    --------
    >>> nice_levels(0.013, 0.487, 10).tolist()
    [0.0, 0.05, 0.1, 0.15, 0.2, 0.25, 0.3, 0.35, 0.4, 0.45, 0.5]
    """
    if not (math.isfinite(lo) and math.isfinite(hi)):
        return np.array([0.0, 1.0])
    if hi <= lo:
        pad = abs(lo) * 0.01 or 1.0
        lo, hi = lo - pad, hi + pad
    raw = (hi - lo) / n
    mag = 10 ** math.floor(math.log10(raw))
    step = next(m * mag for m in (1, 2, 2.5, 5, 10) if m * mag >= raw)
    start = math.floor(lo / step) * step
    stop = math.ceil(hi / step) * step
    count = int(round((stop - start) / step)) + 1
    return np.round(start + step * np.arange(count), 12)


def variable_levels(ds: xr.Dataset, var: Variable) -> np.ndarray:
    """Contour levels of `var` over the whole Dataset (display units)."""
    v = np.asarray(var.values(ds), dtype=float)
    v = v[np.isfinite(v)]
    if v.size == 0:
        return np.array([0.0, 1.0])
    lo, hi = float(v.min()), float(v.max())
    if var.key == "h2_co_ratio":  # long tail near zero CO: clip to the bulk
        hi = float(np.percentile(v, 98))
    return nice_levels(lo, hi)


def shared_levels(datasets, var) -> np.ndarray:
    """Contour levels of `var` spanning several Datasets (one colour, one value on all)."""
    vals = np.concatenate([np.asarray(var.values(d), dtype=float).ravel() for d in datasets])
    vals = vals[np.isfinite(vals)]
    if vals.size == 0:
        return np.array([0.0, 1.0])
    return nice_levels(float(vals.min()), float(vals.max()))


#: A change smaller than this fraction of the variable's range over the base window is "no
#: change": solver round-off (about 1e-9 relative) must not paint a patchwork.
CHANGE_TOLERANCE = 1e-6


def change_tolerance(base: xr.Dataset, var) -> float:
    """The smallest change a change map shows, in display units: CHANGE_TOLERANCE times the
    variable's range over the base window (never below 1e-12 display units)."""
    vals = np.asarray(var.values(base), dtype=float)
    vals = vals[np.isfinite(vals)]
    span = float(vals.max() - vals.min()) if vals.size else 0.0
    return max(CHANGE_TOLERANCE * span, 1e-12)


def quiet_change(diff: xr.Dataset, var, tolerance: float) -> xr.Dataset:
    """The change with every value within +-`tolerance` (display units) set to exactly 0."""
    key = "mole_fraction_dry" if var.key.startswith("dry:") else var.key
    out = diff.copy()
    da = diff[key]
    out[key] = da.where(~(np.abs(da * var.scale) <= tolerance), 0.0)
    return out


def has_change(diff: xr.Dataset, var, tolerance: float) -> bool:
    """Whether any point changes by more than `tolerance` (display units)."""
    vals = np.asarray(var.values(diff), dtype=float)
    return bool(np.any(np.abs(vals[np.isfinite(vals)]) > tolerance))


def change_levels(diff: xr.Dataset, var, tolerance: float = 0.0) -> np.ndarray:
    """Levels of a change map, symmetric about zero (display units); one band of
    +-`tolerance` when nothing changes by more than that ("no change")."""
    vals = np.asarray(var.values(diff), dtype=float)
    vals = vals[np.isfinite(vals)]
    m = float(np.abs(vals).max()) if vals.size else 0.0
    if m <= tolerance:
        t = max(tolerance, 1e-12)
        return np.array([-t, t])
    return nice_levels(-m, m, 10)


#: Variables a comparison shows first when they change, most telling first.
COMPARE_ORDER = ("h2_product", "train_duty", "duty", "h2_yield", "train_methane_slip_dry",
                 "methane_slip_dry", "carbon_activity", "dry:CO", "dry:CO2")

#: Colour of a change map where nothing changes.
NO_CHANGE_COLOUR = "#d9dee2"


#: Dataset variables the overlays read (limits, carbon boundary, nodes).
OVERLAY_VARIABLES = ("h2_yield", "methane_slip_dry", "duty", "carbon_deposit",
                     "carbon_activity", "converged", "feasible", *LIMIT_VARIABLES.values(),
                     "carbon_verdict_ln_activity", "carbon_ln_activity_outlet",
                     "carbon_binding", "carbon_activity_path_max",
                     "carbon_path_max_temperature", "carbon_activity_real_gas",
                     "carbon_verdict_ln_activity_catalyst",
                     "carbon_verdict_ln_activity_graphite", "feasible_t_low", "feasible_t_high")


#: Carbon lines drawn beside the binding boundary: the outlet-only graphite boundary, and the
#: boundary on the carbon reference that does not bind (when a catalyst offset is given).
CARBON_LINES = ("carbon_outlet", "carbon_catalyst", "carbon_graphite")


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


def x_display(values, units: str = DEFAULT):
    """Temperatures [K] on the maps' x axis, in display units."""
    return display.to_display(values, "temperature", units)


def y_display(mode: str, values, units: str = DEFAULT):
    """Values of the y axis [SI] in display units (pressure converted, ratios as they are)."""
    return display.to_display(values, "pressure", units) if mode == "pressure" else values


def _polys(points, offsets):
    """contourpy OuterOffset polygons to Bokeh multi_polygons nesting (x and y)."""
    xs, ys = [], []
    for pts, off in zip(points, offsets, strict=True):
        rings_x = [pts[off[k]:off[k + 1], 0].tolist() for k in range(len(off) - 1)]
        rings_y = [pts[off[k]:off[k + 1], 1].tolist() for k in range(len(off) - 1)]
        xs.append(rings_x)
        ys.append(rings_y)
    return xs, ys


def _fmt(value: float, digits: int) -> str:
    return f"{value:.{digits}f}".rstrip("0").rstrip(".") if digits > 0 else f"{value:.0f}"


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


def _paths(paths) -> dict:
    return {"xs": [p[:, 0].tolist() for p in paths], "ys": [p[:, 1].tolist() for p in paths]}


def variable_layers(s: xr.Dataset, var: Variable, mode: str, levels: np.ndarray,
                    units: str = DEFAULT) -> dict:
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
    gen = contourpy.contour_generator(x, y, np.ma.masked_invalid(z), fill_type="OuterOffset",
                                      line_type="Separate")
    bands = out["bands"]
    for i in range(len(levels) - 1):
        lo = levels[i] if i > 0 else -1e300
        hi = levels[i + 1] if i < len(levels) - 2 else 1e300
        pts, offs = gen.filled(lo, hi)
        if not pts:
            continue
        xs, ys = _polys(pts, offs)
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
            lines["xs"].append(path[:, 0].tolist())
            lines["ys"].append(path[:, 1].tolist())
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
    (:func:`exact_window_field`) when the Dataset holds them, otherwise from the grid
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


def _band_colours(var: Variable, n: int) -> list[str]:
    pal = var.palette
    if n <= 1:
        return [NO_CHANGE_COLOUR if pal is CHANGE_PALETTE else pal[len(pal) // 2]]
    return [pal[int(round(i * (len(pal) - 1) / (n - 1)))] for i in range(n)]


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


def restyle_figure(fig, src: dict, var: Variable, mode: str, levels: np.ndarray,
                   layers: dict[str, dict], x_range: tuple[float, float],
                   y_range: tuple[float, float], units: str = DEFAULT) -> None:
    """Show another variable, orientation or window on an existing map (same models, so
    the browser keeps its event subscriptions; the review file's script does the same)."""
    for k, data in layers.items():
        src[k].data = data
    show_legend_entries(fig, layers, src["selected"].data)
    bar = fig.select_one({"type": ColorBar})
    bar.color_mapper.update(palette=_band_colours(var, len(levels) - 1),
                            low=float(levels[0]), high=float(levels[-1]))
    bar.title = var.unit
    fig.title.text = var.title
    fig.yaxis[0].axis_label = axis_label(mode, units)
    fig.xaxis[0].axis_label = x_axis_label(units)
    fig.x_range.update(start=x_range[0], end=x_range[1])
    fig.y_range.update(start=y_range[0], end=y_range[1])
    fig.select_one({"type": HoverTool}).tooltips = hover_tooltips(var, mode, units)


def map_figure(var: Variable, mode: str, levels: np.ndarray, layers: dict[str, dict],
               name: str, x_range: tuple[float, float], y_range: tuple[float, float],
               width: int = 560, height: int = 430, units: str = DEFAULT):
    """A Bokeh map with one ColumnDataSource per layer.

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
    src = {k: ColumnDataSource(v) for k, v in layers.items()}
    src["selected"] = ColumnDataSource({"x": [], "y": [], "alpha": []})
    fig.multi_polygons("xs", "ys", fill_color="color", line_color="color",
                               line_width=0.5, source=src["bands"])
    fig.multi_line("xs", "ys", line_color="#222222", line_alpha=0.55, line_width=1,
                   source=src["lines"])
    infeasible = fig.multi_polygons("xs", "ys", source=src["infeasible"], fill_color="#ffffff",
                                    fill_alpha=0.3, hatch_pattern="/", hatch_color=HATCH_COLOUR,
                                    hatch_alpha=0.3, hatch_scale=14, line_color=None)
    # Labels above the hatching, so that they read cleanly.
    fig.text("x", "y", "text", source=src["labels"], text_font_size=LABEL_PT,
             text_align="center", text_baseline="middle", text_color="#111111",
             background_fill_color="#ffffff", background_fill_alpha=0.8)
    edge = fig.multi_line("xs", "ys", source=src["edge"], line_color=EDGE_COLOUR, line_width=3.5,
                          name="edge-line")
    carbon = fig.multi_line("xs", "ys", source=src["carbon"], line_color=CARBON_COLOUR,
                            line_width=3, line_dash=[8, 4])
    extra = {
        "carbon_outlet": fig.multi_line("xs", "ys", source=src["carbon_outlet"],
                                        line_color=OUTLET_CARBON_COLOUR, line_width=2,
                                        line_dash="dotted"),
        "carbon_catalyst": fig.multi_line("xs", "ys", source=src["carbon_catalyst"],
                                          line_color=REFERENCE_CARBON_COLOUR, line_width=2,
                                          line_dash="dashdot"),
        "carbon_graphite": fig.multi_line("xs", "ys", source=src["carbon_graphite"],
                                          line_color=REFERENCE_CARBON_COLOUR, line_width=2,
                                          line_dash="dashdot"),
    }
    nodes = fig.scatter("x", "y", source=src["nodes"], size=3.5, fill_color="#000000",
                        fill_alpha=0.25, line_color=None)
    selected = fig.scatter("x", "y", source=src["selected"], size=15, marker="circle",
                           fill_color=None, line_color=SELECTED_COLOUR, line_width=3,
                           line_alpha="alpha")
    best = fig.scatter("x", "y", source=src["best"], size=22, marker="marker", angle="angle",
                       fill_color=BEST_COLOUR, line_color="#111111", line_width=1.5,
                       fill_alpha="alpha", line_alpha="alpha", name="best-marker")
    design = fig.scatter("x", "y", source=src["design"], size=17, marker="marker",
                         angle="angle", fill_color=DESIGN_COLOUR, line_color="#111111",
                         line_width=1.5, fill_alpha="alpha", line_alpha="alpha",
                         name="design-marker")
    for s_ in (src["best"], src["design"]):
        fig.text("x", "y", "text", source=s_, text_font_size=LABEL_PT, x_offset=12,
                 y_offset=-10, text_color="#111111", text_alpha="alpha",
                 background_fill_color="#ffffff", background_fill_alpha=0.75)
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
    for item in fig.select_one({"type": Legend}).items:
        item.visible = vis[item.name]
