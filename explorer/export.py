"""The review file: one offline HTML page with the maps, click-through balances and a sheet.

The page is a Bokeh document saved with inline resources (no network request of any kind).
The maps are drawn by :mod:`explorer.maps`, the same code as the live app; every slice's
layers are computed here and embedded, and a small script (``review.js``) swaps them when the
reader moves a slider or picks a variable. Clicking a map assembles the balance of the nearest
grid point in the page from the solved flows embedded in full double precision, with the
table layout of :mod:`explorer.tables`.

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
from importlib import resources
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
    change_levels,
    change_tolerance,
    change_variable,
    combine,
    has_change,
    map_figure,
    quiet_change,
    scenario_markers,
    shared_levels,
    slice_fields,
    variable_layers,
    variable_levels,
    variables_in,
    window_layers,
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
from explorer.tables import PLANT_NOTE, PLANT_ROWS, rows_for
from explorer.tables import spec as table_spec
from thermo.balances import enthalpy_flow
from thermo.constants import ELEMENTS, P_REF, T_REF
from thermo.errors import InputError
from thermo.extent import REFORMING, SHIFT, delta_h, equilibrium_constant
from thermo.io import atomic_target
from thermo.scenario import Scenario
from thermo.species import GAS_SPECIES, GRAPHITE, formula_matrix, molar_mass, molar_masses
from thermo.sweep import RATIO_AXES

#: Variables the review file can map (each adds its slices to the file).
#: Added to the review file's chooser when the scenario has a reforming train.
TRAIN_EXPORT_VARIABLES = ("h2_product", "train_duty", "train_methane_slip_dry")
#: Added when the scenario has a [plant] table (the plant around the reformer).
PLANT_EXPORT_VARIABLES = ("specific_energy", "plant_fired_duty", "radiant_efficiency",
                          "plant_trim_fuel", "plant_steam_export", "natural_gas_per_h2")

EXPORT_VARIABLES = ("h2_yield", "methane_slip_dry", "h2_potential", "methane_conversion",
                    "h2_co_ratio", "duty", "duty_per_h2", "carbon_activity", "dry:CO",
                    "dry:CO2")


#: The review file's style sheet (static/review.css), inlined into the page.
SHEET_CSS = resources.files("explorer").joinpath("static", "review.css").read_text("utf-8")



def _round(obj, nd: int):
    """Round every float of a nested structure to `nd` decimals (smaller file, same drawing;
    node values keep 6 significant digits instead)."""
    if isinstance(obj, float):
        return round(obj, nd)
    if isinstance(obj, list):
        return [_round(v, nd) for v in obj]
    if isinstance(obj, dict):
        return {k: ([None if v is None else float(f"{v:.6g}") for v in val] if k == "values"
                    else _round(val, nd)) for k, val in obj.items()}
    return obj


def _slice_keys(ds: xr.Dataset, mode: str) -> list[dict[str, int]]:
    dims = [d for d in ds["h2_yield"].dims if d not in ("temperature", mode)]
    keys: list[dict[str, int]] = [{}]
    for d in dims:
        keys = [dict(k, **{d: i}) for k in keys for i in range(ds.sizes[d])]
    return keys


def _key_text(fixed: dict[str, int]) -> str:
    return "|".join(f"{d}={i}" for d, i in fixed.items())


def all_layers(ds: xr.Dataset, limits, variables=EXPORT_VARIABLES,
               markers: dict | None = None, units: str = display.DEFAULT) -> tuple[dict, dict]:
    """Layers of every slice, split into what depends on the variable and what does not.

    Returns
    -------
    (per_variable, common)
        ``per_variable[var][mode][key]`` holds bands, lines, labels and the node values;
        ``common[mode][key]`` the carbon boundary, the infeasible region and its edge, and
        the grid nodes (:func:`explorer.maps.combine` joins them). Coordinates are rounded to
        1e-4 (display units of `units`: degC, bar, S/C), invisible on a map.
    """
    shown = variables_in(units)  # the map variables as shown in these units
    levels = {v: variable_levels(ds, shown[v]) for v in variables}
    per_var: dict = {v: {m: {} for m in MODES} for v in variables}
    common: dict = {m: {} for m in MODES}
    for mode in MODES:
        for fixed in _slice_keys(ds, mode):
            key = _key_text(fixed)
            s = slice_fields(ds, mode, fixed)
            common[mode][key] = _round(window_layers(s, mode, limits, markers, units=units), 4)
            for v in variables:
                per_var[v][mode][key] = _round(variable_layers(s, shown[v], mode, levels[v],
                                                               units), 4)
    return per_var, common


def _page_data(sc: Scenario, ds: xr.Dataset, units: str = display.DEFAULT) -> dict:
    dims = list(ds["h2_yield"].dims)
    ratio_dims = [d for d in dims if d in RATIO_AXES]
    inlet = ds["inlet_flow"].transpose(*ratio_dims, "species").values
    inlet_flat = inlet.reshape(-1, len(GAS_SPECIES))
    T_in = np.full(inlet_flat.shape[0], sc.feed.inlet_temperature)
    A = formula_matrix()
    Tk = ds.temperature.values
    fixed_ratios = {k: getattr(sc.feed, k) for k in RATIO_AXES if k not in ratio_dims}
    return {
        "species": list(GAS_SPECIES),
        "molar_mass": [float(m) for m in molar_masses()],
        "graphite_molar_mass": molar_mass(GRAPHITE),
        "elements": {e: A[:, ELEMENTS.index(e)].tolist() for e in ("C", "H", "O", "N")},
        "dims": dims,
        "shape": [ds.sizes[d] for d in dims],
        "ratio_dims": ratio_dims,
        "axes": {d: ds[d].values.tolist() for d in dims},
        "fixed_ratios": fixed_ratios,
        "inlet_flow": inlet_flat.ravel().tolist(),
        "inlet_enthalpy": enthalpy_flow(inlet_flat, T_in).tolist(),
        "inlet_temperature_K": sc.feed.inlet_temperature,
        "approach_K": sc.approach,
        "standard_pressure": P_REF,
        "K_reforming": equilibrium_constant(REFORMING, Tk).tolist(),
        "K_shift": equilibrium_constant(SHIFT, Tk).tolist(),
        "heat_298": {"reforming": float(delta_h(REFORMING, T_REF)),
                     "shift": float(delta_h(SHIFT, T_REF))},
        "heat_T": {"reforming": delta_h(REFORMING, Tk).tolist(),
                   "shift": delta_h(SHIFT, Tk).tolist()},
        "equations": {"reforming": REFORMING.equation(), "shift": SHIFT.equation()},
        # The display layer's factors and table layout in the file's unit system.
        "units": units,
        "conversions": display.conversions(units),
        "spec": table_spec(units),
        "train": _train_descriptor(sc),
        "plant": _plant_descriptor(sc, ds, units),
    }


def _plant_descriptor(sc: Scenario, ds: xr.Dataset,
                      units: str = display.DEFAULT) -> dict | None:
    """What the page's script needs to assemble a point's plant table (None without one):
    the point JSON keys with the embedded per-point arrays (``pl_<variable>``) or the
    scenario's constants behind them, the table rows and the flags' threshold."""
    if sc.plant is None or "specific_energy" not in ds:
        return None
    from thermo.api import PLANT_JSON
    from thermo.sweep import PLANT_CONSTANTS, PLANT_VARIABLES

    by_attr = {attr: name for name, (attr, _, _) in PLANT_VARIABLES.items()}
    arrays, constants = [], {}
    for key, attr in PLANT_JSON.items():
        if attr == "radiant_duty":  # the primary's duty, embedded already
            arrays.append([key, "duty"])
            continue
        name = by_attr[attr]
        if name in PLANT_CONSTANTS:
            constants[key] = float(ds[name])
        else:
            arrays.append([key, f"pl_{name}"])
    return {"arrays": arrays, "constants": constants, "rows": rows_for(PLANT_ROWS, units),
            "note": PLANT_NOTE,
            "cooled_K": sc.plant.process_gas_cooled_temperature}


def _train_descriptor(sc: Scenario) -> dict:
    """What the page's script needs to know of the train (the primary alone without one)."""
    from thermo.scenario import STAGE_NAMES

    stages = [{"name": n, "label": STAGE_NAMES[n], "key": f"st{k}"}
              for k, n in enumerate(sc.train.stages())]
    pre = "st0" if sc.train.pre_reformer is not None else None
    return {"stages": stages, "pre": pre}


def _train_arrays(sc: Scenario, ds: xr.Dataset) -> dict[str, np.ndarray]:
    """Per-point arrays of every stage (flat grid order), from the core.

    The Dataset holds the train's totals only; the stage-by-stage table of a clicked point
    needs each stage's outlet, so the train is run once more over the grid here.
    """
    if sc.train.empty:
        return {}
    from thermo.train import train_balance

    dims = list(ds["h2_yield"].dims)
    shape = tuple(ds.sizes[d] for d in dims)
    idx = np.unravel_index(np.arange(int(np.prod(shape))), shape)
    T = ds.temperature.values[idx[dims.index("temperature")]]
    P = ds.pressure.values[idx[dims.index("pressure")]]
    ratio_dims = [d for d in dims if d in RATIO_AXES]
    inlet = ds["inlet_flow"].transpose(*ratio_dims, "species").values
    n_in = inlet[tuple(idx[dims.index(d)] for d in ratio_dims)]
    tr = train_balance(sc.train, n_in, T, P, sc.feed.inlet_temperature, sc.approach,
                       row=shape[-1])
    out: dict[str, np.ndarray] = {}
    for k, st in enumerate(tr.stages):
        if st.name == "primary_reformer" and sc.train.pre_reformer is not None:
            # The primary's inlet is the pre-reformed gas (the main balance's "inlet").
            out["primary_hin"] = st.inlet_enthalpy
            out["primary_heat_before"] = np.nan_to_num(st.heat_before)
        key = f"st{k}"
        for j, s in enumerate(GAS_SPECIES):
            out[f"{key}_n_{s}"] = st.outlet_flow[:, j]
        out[f"{key}_Tin"] = st.inlet_temperature
        out[f"{key}_T"] = st.temperature
        out[f"{key}_Teq"] = st.equilibrium_temperature
        out[f"{key}_heat_before"] = st.heat_before
        out[f"{key}_duty"] = st.duty
        out[f"{key}_hin"] = st.inlet_enthalpy
        out[f"{key}_hout"] = st.outlet_enthalpy
        out[f"{key}_carbon"] = st.carbon_deposit
        out[f"{key}_ok"] = st.converged
    return {k: np.ascontiguousarray(np.asarray(v, dtype=float)) for k, v in out.items()}


def _points_source(ds: xr.Dataset, sc: Scenario | None = None):
    from bokeh.models import ColumnDataSource

    dims = list(ds["h2_yield"].dims)
    flows = ds["outlet_flow"].transpose(*dims, "species").values.reshape(-1, len(GAS_SPECIES))
    data = {f"n_{s}": np.ascontiguousarray(flows[:, j]) for j, s in enumerate(GAS_SPECIES)}
    for k in ("carbon_deposit", "carbon_activity", "duty", "approach_reforming",
              "approach_shift", "carbon_activity_path_max", "carbon_path_max_temperature",
              "carbon_activity_real_gas", "carbon_verdict_ln_activity", "carbon_binding",
              "carbon_free"):
        data[k] = np.ascontiguousarray(ds[k].transpose(*dims).values.ravel().astype(float))
    data["converged"] = ds["converged"].transpose(*dims).values.ravel().astype(np.int8)
    if sc is not None:
        data.update(_train_arrays(sc, ds))
    from thermo.sweep import PLANT_CONSTANTS, PLANT_VARIABLES

    for name in PLANT_VARIABLES:
        if name in ds and name not in PLANT_CONSTANTS:
            data[f"pl_{name}"] = np.ascontiguousarray(
                ds[name].transpose(*dims).values.ravel().astype(float))
    return ColumnDataSource(data, name="points")


#: Variables of a comparison review file (base, proposal and change maps for each).
COMPARE_VARIABLES = ("h2_product", "h2_yield", "train_methane_slip_dry", "duty",
                     "train_duty", "carbon_activity", "dry:CO")


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
        fmt = CustomJSTickFormatter(args={"labels": labels},
                                    code="return labels[Math.round(tick)] ?? String(tick);")
        sliders[d] = Slider(start=0, end=max(n - 1, 1), step=1, value=fixed0[d],
                            title=AXIS_NAMES[d], format=fmt, width=330,
                            visible=(d != mode0), disabled=n < 2)
    return sliders


def build_review(sc: Scenario, ds: xr.Dataset, pinned: list[dict] | None = None,
                 compare: tuple[Scenario, xr.Dataset] | None = None,
                 units: str | None = None) -> str:
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
    units : {"metric", "us"}, optional
        Display unit system (explorer.display) of the file; the scenario's
        ``display_units`` (metric without one) if None. The file carries it.
    """
    units = display.check_system(units or getattr(sc, "display_units", display.DEFAULT))
    shown = variables_in(units)  # the map variables as shown in these units
    pinned = list(pinned or [])
    R = _page_data(sc, ds, units)
    facts = window_facts(sc, ds, units=units)
    fixed0 = _fixed0(sc, ds)
    mode0 = "pressure"
    key0 = _key_text({d: j for d, j in fixed0.items() if d != mode0})
    x = display.to_display(ds.temperature.values, "temperature", units)
    y = display.to_display(ds[mode0].values, "pressure", units)
    x_range, y_range = (float(x.min()), float(x.max())), (float(y.min()), float(y.max()))
    R["ranges"] = {
        "pressure": [float(display.to_display(float(ds.pressure.min()), "pressure", units)),
                     float(display.to_display(float(ds.pressure.max()), "pressure", units))],
        "steam_to_carbon": [float(ds.steam_to_carbon.min()), float(ds.steam_to_carbon.max())],
    }
    R["axis_labels"] = {m: axis_label(m, units) for m in MODES}
    figs, srcs, mappers = [], [], []
    if compare is None:
        variables = EXPORT_VARIABLES + (() if sc.train.empty else TRAIN_EXPORT_VARIABLES)
        plant = sc.plant is not None and "specific_energy" in ds
        if plant:
            variables = variables + PLANT_EXPORT_VARIABLES
        right0 = "specific_energy" if plant else "methane_slip_dry"
        layers, common = all_layers(ds, sc.limits, variables,
                                    scenario_markers(sc, facts["best"]), units)
        R["layers"], R["common"] = layers, common
        R["titles"] = {v: shown[v].title for v in variables}
        R["palettes"] = {v: mappers_palette(v, ds, units) for v in variables}
        for i, v in enumerate(("h2_yield", right0)):
            var = shown[v]
            start = combine(layers[v][mode0][key0], common[mode0][key0])
            fig, src, mapper = map_figure(var, mode0, variable_levels(ds, var), start,
                                          f"map-{i}", x_range, y_range, width=580, height=440,
                                          units=units)
            figs.append(fig)
            srcs.append(src)
            mappers.append(mapper)
        options = [(v, shown[v].title) for v in variables]
        selects = [Select(title="Left map", value="h2_yield", options=options, width=280),
                   Select(title="Right map", value=right0, options=options,
                          width=280)]
        update_js, tap_js = _UPDATE_JS, _TAP_JS
    else:
        prop_sc, prop_ds = compare
        variables = COMPARE_VARIABLES
        panels = _comparison_layers(sc, ds, prop_sc, prop_ds, variables, units)
        R["layers"], R["common"] = panels["base"], panels["base_common"]
        R["cmp"] = {"layers": panels["proposal"], "common": panels["proposal_common"],
                    "diff": panels["change"], "palettes": panels["palettes"],
                    "diff_palettes": panels["change_palettes"]}
        R["titles"] = {v: shown[v].label for v in variables}
        R["proposal"] = _page_data(prop_sc, prop_ds, units)
        prefixes = ["Base: ", "Proposal: ", "Change: "]
        R["prefixes"] = prefixes
        # The first variable that changes (round-off below the tolerance is no change).
        v0 = next((v for v in COMPARE_ORDER if v in panels["changes"]), variables[0])
        sets = [(panels["base"], panels["base_common"], panels["levels"][v0], shown[v0]),
                (panels["proposal"], panels["proposal_common"], panels["levels"][v0],
                 shown[v0]),
                (panels["change"], panels["proposal_common"], panels["change_levels"][v0],
                 change_variable(shown[v0]))]
        for i, (lay, com, levels, var) in enumerate(sets):
            start = combine(lay[v0][mode0][key0], com[mode0][key0])
            fig, src, mapper = map_figure(var, mode0, levels, start, f"map-{i}", x_range,
                                          y_range, width=580 if i < 2 else 620, height=420,
                                          units=units)
            fig.title.text = prefixes[i] + var.label
            figs.append(fig)
            srcs.append(src)
            mappers.append(mapper)
        options = [(v, shown[v].title) for v in variables]
        selects = [Select(title="Variable", value=v0, options=options, width=340)]
        update_js, tap_js = _UPDATE_CMP_JS, _TAP_CMP_JS
    R["hover"] = {v: [shown[v].label, shown[v].unit, shown[v].digits]
                  for v in variables}
    mode = RadioButtonGroup(labels=[MODES[m] for m in MODES], active=0)
    sliders = _sliders(ds, fixed0, mode0, units)
    heading = Div(text="<p>Click a map to show the balance of the nearest grid point.</p>",
                  name="balance-heading", width=1150)
    balance = Div(text="", width=1150, stylesheets=[SHEET_CSS], name="balance-div")
    pts = _points_source(ds, sc)
    hovers = [_hover(f) for f in figs]
    js_common = resources.files("explorer").joinpath("review.js").read_text("utf-8")
    legends = [f.select_one({"type": Legend}) for f in figs]
    args = dict(pts=pts, figs=figs, mappers=mappers, selects=selects, mode=mode, legends=legends,
                sliders=sliders, hovers=hovers, srcs=srcs)
    if compare is not None:
        args["pts2"] = _points_source(compare[1], compare[0])
    update = CustomJS(args=args, code=js_common + update_js)
    for s in selects:
        s.js_on_change("value", update)
    mode.js_on_change("active", update)
    for s in sliders.values():
        s.js_on_change("value", update)
    for i, f in enumerate(figs):
        tap = CustomJS(args=dict(args, which=i, heading=heading, balance=balance),
                       code=js_common + tap_js)
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


def _comparison_layers(sc, ds, prop_sc, prop_ds, variables,
                       units: str = display.DEFAULT) -> dict:
    """Every slice's layers of the base, the proposal and the change (proposal - base)."""
    from thermo.compare import difference

    shown = variables_in(units)  # the map variables as shown in these units

    diff = difference(ds, prop_ds)
    levels = {v: shared_levels((ds, prop_ds), shown[v]) for v in variables}
    tolerance = {v: change_tolerance(ds, shown[v]) for v in variables}
    quiet = {v: quiet_change(diff, shown[v], tolerance[v]) for v in variables}
    ch_levels = {v: change_levels(quiet[v], shown[v], tolerance[v]) for v in variables}
    out = {"base": {}, "proposal": {}, "change": {}, "base_common": {m: {} for m in MODES},
           "proposal_common": {m: {} for m in MODES}, "levels": levels,
           "change_levels": ch_levels}
    for name in ("base", "proposal", "change"):
        out[name] = {v: {m: {} for m in MODES} for v in variables}
    for mode in MODES:
        for fixed in _slice_keys(ds, mode):
            key = _key_text(fixed)
            sb = slice_fields(ds, mode, fixed)
            sp = slice_fields(prop_ds, mode, fixed)
            sd = {v: _diff_slice(quiet[v], mode, fixed) for v in variables}
            out["base_common"][mode][key] = _round(window_layers(sb, mode, sc.limits,
                                                                 units=units), 4)
            out["proposal_common"][mode][key] = _round(window_layers(sp, mode, prop_sc.limits,
                                                                     units=units), 4)
            for v in variables:
                var = shown[v]
                out["base"][v][mode][key] = _round(variable_layers(sb, var, mode, levels[v],
                                                                   units), 4)
                out["proposal"][v][mode][key] = _round(
                    variable_layers(sp, var, mode, levels[v], units), 4)
                out["change"][v][mode][key] = _round(
                    variable_layers(sd[v], change_variable(var), mode, ch_levels[v], units), 4)
    out["changes"] = [v for v in variables
                      if has_change(quiet[v], shown[v], tolerance[v])]
    out["palettes"] = {v: _palette_of(shown[v], levels[v]) for v in variables}
    out["change_palettes"] = {v: _palette_of(change_variable(shown[v]), ch_levels[v])
                              for v in variables}
    return out


def _diff_slice(diff: xr.Dataset, mode: str, fixed: dict[str, int]) -> xr.Dataset:
    sel = {d: i for d, i in fixed.items() if d in diff.dims and d not in (mode, "temperature")}
    return diff.isel(sel).transpose(mode, "temperature", ...)


def _palette_of(var, levels) -> dict:
    from explorer.maps import _band_colours

    return {"palette": _band_colours(var, len(levels) - 1), "low": float(levels[0]),
            "high": float(levels[-1])}


def _hover(fig):
    from bokeh.models import HoverTool

    return next(t for t in fig.tools if isinstance(t, HoverTool))


def mappers_palette(v: str, ds: xr.Dataset, units: str = display.DEFAULT) -> dict:
    from explorer.maps import _band_colours

    var = variables_in(units)[v]
    levels = variable_levels(ds, var)
    return {"palette": _band_colours(var, len(levels) - 1), "low": float(levels[0]),
            "high": float(levels[-1])}


_UPDATE_JS = """
const m = mapMode();
const k = sliceKey(m);
for (let i = 0; i < 2; i++) {
  const v = selects[i].value;
  const L = R.layers[v][m][k];
  const C = R.common[m][k];
  for (const name of ["bands", "lines", "labels"]) srcs[i][name].data = L[name];
  for (const name of ["carbon", "carbon_outlet", "carbon_catalyst", "carbon_graphite",
                      "infeasible", "edge", "best", "design"]) {
    if (C[name] && srcs[i][name]) srcs[i][name].data = C[name];
  }
  srcs[i].nodes.data = Object.assign({}, C.nodes, {value: L.values});
  const pal = R.palettes[v];
  mappers[i].palette = pal.palette;
  mappers[i].low = pal.low;
  mappers[i].high = pal.high;
  figs[i].title.text = R.titles[v];
  figs[i].y_range.start = R.ranges[m][0];
  figs[i].y_range.end = R.ranges[m][1];
  // BokehJS figures have no yaxis list: the y axis is the renderer on the left.
  for (const ax of figs[i].left) if ("axis_label" in ax) ax.axis_label = R.axis_labels[m];
  const [label, unit, digits] = R.hover[v];
  hovers[i].tooltips = [["temperature", "@x{0.0} " + R.spec.symbols.temperature],
    m === "pressure" ? ["pressure", "@y{0.00} " + R.spec.symbols.pressure]
                     : ["steam-to-carbon", "@y{0.00}"],
    [label, "@value{0." + "0".repeat(Math.max(digits, 1)) + "} " + unit],
    ["review limits", "@feasible"], ["carbon", "@carbon"]];
  srcs[i].selected.data = {x: [], y: [], alpha: []};
  showLegend(legends[i], C, false);
}
"""

_TAP_JS = """
const m = mapMode();
const [p, T, Y, i, j] = tappedPoint(m, cb_obj.x, cb_obj.y);
const d = assemble(p);
const U = R.spec.symbols;
let head = `<p><b>${display(d.temperature_K, "temperature", 1)} ${U.temperature}, ` +
  `${display(d.pressure_Pa, "pressure", R.spec.summary[2][4])} ${U.pressure}, ` +
  `S/C ${pyG(d.steam_to_carbon, 3)}</b>`;
if (d.oxygen_to_carbon) head += `, O2/C ${pyG(d.oxygen_to_carbon, 3)}`;
if (d.co2_to_carbon) head += `, CO2/C ${pyG(d.co2_to_carbon, 3)}`;
head += ` (approach ${pyG(toDisplay(d.approach_K, "temperature_difference"), 6)} ` +
  `${R.spec.symbols.temperature_difference}; grid point ${p})</p>`;
heading.text = head;
balance.text = nodeVerdict(R.common[m][sliceKey(m)], i, j, T.length) + balanceHtml(d);
for (let f = 0; f < 2; f++) {
  srcs[f].selected.data = {x: [T[i]], y: [Y[j]], alpha: [1.0]};
  showLegend(legends[f], R.common[m][sliceKey(m)], true);
}
"""


_UPDATE_CMP_JS = """
const m = mapMode();
const k = sliceKey(m);
const v = selects[0].value;
const sets = [[R.layers, R.common, R.cmp.palettes], [R.cmp.layers, R.cmp.common, R.cmp.palettes],
              [R.cmp.diff, R.cmp.common, R.cmp.diff_palettes]];
for (let i = 0; i < 3; i++) {
  const [layers, common, palettes] = sets[i];
  const L = layers[v][m][k];
  const C = common[m][k];
  for (const name of ["bands", "lines", "labels"]) srcs[i][name].data = L[name];
  for (const name of ["carbon", "carbon_outlet", "carbon_catalyst", "carbon_graphite",
                      "infeasible", "edge", "best", "design"]) {
    if (C[name] && srcs[i][name]) srcs[i][name].data = C[name];
  }
  srcs[i].nodes.data = Object.assign({}, C.nodes, {value: L.values});
  const pal = palettes[v];
  mappers[i].palette = pal.palette;
  mappers[i].low = pal.low;
  mappers[i].high = pal.high;
  figs[i].title.text = R.prefixes[i] + R.titles[v];
  figs[i].y_range.start = R.ranges[m][0];
  figs[i].y_range.end = R.ranges[m][1];
  // BokehJS figures have no yaxis list: the y axis is the renderer on the left.
  for (const ax of figs[i].left) if ("axis_label" in ax) ax.axis_label = R.axis_labels[m];
  const [label, unit, digits] = R.hover[v];
  const dg = digits + (i === 2 ? 1 : 0);
  hovers[i].tooltips = [["temperature", "@x{0.0} " + R.spec.symbols.temperature],
    m === "pressure" ? ["pressure", "@y{0.00} " + R.spec.symbols.pressure]
                     : ["steam-to-carbon", "@y{0.00}"],
    [(i === 2 ? "change in " : "") + label,
     "@value{0." + "0".repeat(Math.max(dg, 1)) + "} " + unit],
    ["review limits", "@feasible"], ["carbon", "@carbon"]];
  srcs[i].selected.data = {x: [], y: [], alpha: []};
  showLegend(legends[i], C, false);
}
"""

_TAP_CMP_JS = """
const m = mapMode();
const [p, T, Y, i, j] = tappedPoint(m, cb_obj.x, cb_obj.y);
const a = assemble(p);
const b = assemble(p, R.proposal, pts2);
const U = R.spec.symbols;
let head = `<p><b>${display(a.temperature_K, "temperature", 1)} ${U.temperature}, ` +
  `${display(a.pressure_Pa, "pressure", R.spec.summary[2][4])} ${U.pressure}, ` +
  `S/C ${pyG(a.steam_to_carbon, 3)}</b>`;
if (a.oxygen_to_carbon) head += `, O2/C ${pyG(a.oxygen_to_carbon, 3)}`;
if (a.co2_to_carbon) head += `, CO2/C ${pyG(a.co2_to_carbon, 3)}`;
head += ` (grid point ${p}): base, proposal and the change</p>`;
heading.text = head;
const k = sliceKey(m);
balance.text = compareHtml(a, b) + "<h3>Base case</h3>" +
  nodeVerdict(R.common[m][k], i, j, T.length) + balanceHtml(a) + "<h3>Proposal</h3>" +
  nodeVerdict(R.cmp.common[m][k], i, j, T.length) + balanceHtml(b);
for (let f = 0; f < 3; f++) {
  srcs[f].selected.data = {x: [T[i]], y: [Y[j]], alpha: [1.0]};
  showLegend(legends[f], f === 0 ? R.common[m][k] : R.cmp.common[m][k], true);
}
"""


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
                 proposal_ds: xr.Dataset | None = None, units: str | None = None) -> Path:
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
    text = build_review(sc, ds, pinned, compare, units)
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
        write_review(sc, a.output, ds, pinned, proposal, proposal_ds, a.units)
    except InputError as err:
        print(f"explorer: error: {err}", file=sys.stderr)
        return 2
    return 0


if __name__ == "__main__":
    sys.exit(main())
