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
import html
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
from bokeh.embed import file_html
from bokeh.layouts import column, row
from bokeh.models import CustomJS, CustomJSTickFormatter, Div, RadioButtonGroup, Select, Slider
from bokeh.resources import INLINE

import thermo
from explorer import CAUTION
from explorer.maps import (
    MODES,
    VARIABLES,
    axis_label,
    change_levels,
    change_variable,
    combine,
    map_figure,
    shared_levels,
    slice_fields,
    variable_layers,
    variable_levels,
    window_layers,
)
from explorer.tables import (
    CONVERSIONS,
    ENERGY_ROWS,
    REACTION_COLUMNS,
    SPECIES_COLUMNS,
    STAGE_COLUMNS,
    SUMMARY_ROWS,
    TRAIN_NOTE,
    TRAIN_ROWS,
    balance_html,
    compare_rows,
)
from thermo.balances import enthalpy_flow
from thermo.constants import ELEMENTS, P_REF, T_REF, V_NORMAL
from thermo.errors import InputError
from thermo.extent import REFORMING, SHIFT, delta_h, equilibrium_constant
from thermo.io import atomic_target
from thermo.scenario import Scenario
from thermo.species import GAS_SPECIES, formula_matrix, molar_masses
from thermo.sweep import RATIO_AXES

#: Variables the review file can map (each adds its slices to the file).
#: Added to the review file's chooser when the scenario has a reforming train.
TRAIN_EXPORT_VARIABLES = ("h2_product", "train_duty", "train_methane_slip_dry")

EXPORT_VARIABLES = ("h2_yield", "methane_slip_dry", "h2_potential", "methane_conversion",
                    "h2_co_ratio", "duty", "duty_per_h2", "carbon_activity", "dry:CO",
                    "dry:CO2")

_AXIS_NAMES = {
    "pressure": "Pressure",
    "steam_to_carbon": "Steam-to-carbon",
    "oxygen_to_carbon": "O2-to-carbon",
    "co2_to_carbon": "CO2-to-carbon",
}

SHEET_CSS = """
body { font-family: system-ui, -apple-system, "Segoe UI", Roboto, sans-serif; color: #1d2a33; }
.rw-page { max-width: 1240px; margin: 0 auto; padding: 8px 18px 40px 18px; }
.rw-page h1 { font-size: 24px; margin: 10px 0 4px 0; }
.rw-page h2 { font-size: 19px; border-bottom: 2px solid #00a37a; padding-bottom: 2px;
  margin-top: 26px; }
.rw-caution { background: #fff4e5; border-left: 5px solid #e08a00; padding: 8px 12px;
  font-size: 13.5px; margin: 10px 0; }
.rw-table { border-collapse: collapse; font-size: 12.5px; margin: 4px 0 10px 0; }
.rw-table th { background: #e9eef1; text-align: right; padding: 3px 8px;
  border-bottom: 2px solid #b9c6cd; }
.rw-table th:first-child, .rw-table td:first-child { text-align: left; }
.rw-table td { text-align: right; padding: 2px 8px; border-bottom: 1px solid #e3e8eb;
  font-variant-numeric: tabular-nums; }
.rw-small { font-size: 11.5px; color: #4a5a64; }
.rw-warn { color: #b3261e; font-weight: 600; }
.rw-notes { white-space: pre-wrap; background: #f6f8f9; padding: 8px 12px;
  border: 1px solid #e3e8eb; }
"""

TEMPLATE = """
{% block postamble %}<style>{{ sheet_css }}</style>{% endblock %}
{% block contents %}
<div class="rw-page">
<h1>{{ title }}</h1>
<p>{{ description }}</p>
<div class="rw-caution"><b>Caution.</b> {{ caution }}</div>
<p class="rw-small">Review file written {{ created }} by the reformer window explorer
{{ version }}. It works offline: the maps, sliders and click-through balances run in this page.
</p>
<script type="application/json" id="rw-data">{{ data_json }}</script>
<h2>Operating-window maps</h2>
{{ embed(roots.maps) }}
<h2>Balance at the selected grid point</h2>
{{ embed(roots.balance) }}
{{ sheet }}
</div>
{% endblock %}
"""


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


def all_layers(ds: xr.Dataset, limits, variables=EXPORT_VARIABLES) -> tuple[dict, dict]:
    """Layers of every slice, split into what depends on the variable and what does not.

    Returns
    -------
    (per_variable, common)
        ``per_variable[var][mode][key]`` holds bands, lines, labels and the node values;
        ``common[mode][key]`` the carbon boundary, the infeasible region and its edge, and
        the grid nodes (:func:`explorer.maps.combine` joins them). Coordinates are rounded to
        1e-4 (degC, bar, S/C), invisible on a map.
    """
    levels = {v: variable_levels(ds, VARIABLES[v]) for v in variables}
    per_var: dict = {v: {m: {} for m in MODES} for v in variables}
    common: dict = {m: {} for m in MODES}
    for mode in MODES:
        for fixed in _slice_keys(ds, mode):
            key = _key_text(fixed)
            s = slice_fields(ds, mode, fixed)
            common[mode][key] = _round(window_layers(s, mode, limits), 4)
            for v in variables:
                per_var[v][mode][key] = _round(variable_layers(s, VARIABLES[v], mode, levels[v]),
                                               4)
    return per_var, common


def feasible_ranges_html(ds: xr.Dataset) -> str:
    """The feasible outlet-temperature range(s) at each pressure and steam-to-carbon."""
    T = ds.temperature.values - 273.15
    feas = ds["feasible"]
    extra = [d for d in feas.dims if d not in ("temperature", "pressure", "steam_to_carbon")]
    blocks = []
    sub_keys = [{}] if not extra else [{extra[0]: i} for i in range(ds.sizes[extra[0]])]
    for sk in sub_keys:
        f = feas.isel(sk).transpose("steam_to_carbon", "pressure", "temperature").values
        head = ["S/C \\ P [bar abs]"] + [f"{p / 1e5:.1f}" for p in ds.pressure.values]
        rows = []
        for i, sc in enumerate(ds.steam_to_carbon.values):
            cells = [f"{sc:.3g}"]
            for j in range(ds.sizes["pressure"]):
                cells.append(_ranges_text(T, f[i, j]))
            rows.append(cells)
        caption = ""
        if sk:
            d, i = next(iter(sk.items()))
            caption = f"<p><b>{_AXIS_NAMES[d]} {float(ds[d].values[i]):.3g}</b></p>"
        th = "".join(f"<th>{html.escape(h)}</th>" for h in head)
        body = "".join("<tr>" + "".join(f"<td>{html.escape(c)}</td>" for c in r) + "</tr>"
                       for r in rows)
        blocks.append(caption + f'<table class="rw-table"><thead><tr>{th}</tr></thead>'
                      f"<tbody>{body}</tbody></table>")
    return "\n".join(blocks)


def _ranges_text(T: np.ndarray, ok: np.ndarray) -> str:
    parts, start = [], None
    for k, flag in enumerate(ok):
        if flag and start is None:
            start = k
        if (not flag or k == len(ok) - 1) and start is not None:
            stop = k if flag else k - 1
            parts.append(f"{T[start]:.0f}" if start == stop else f"{T[start]:.0f}-{T[stop]:.0f}")
            start = None
    return ", ".join(parts) if parts else "none"


def _train_inputs(sc: Scenario) -> list[tuple[str, str]]:
    """The reforming train's stages as (name, settings) rows of the review sheet."""
    from thermo.scenario import STAGE_NAMES

    t, rows = sc.train, []
    if t.pre_reformer is not None:
        rows.append((STAGE_NAMES["pre_reformer"],
                     f"inlet {t.pre_reformer.inlet_temperature - 273.15:.1f} degC; gas "
                     f"reheated to {sc.feed.inlet_temperature - 273.15:.1f} degC"))
    sec = t.secondary_reformer
    if sec is not None:
        rows.append((STAGE_NAMES["secondary_reformer"],
                     f"{sec.oxidant}, O2/C {sec.oxygen_to_carbon:g} at "
                     f"{sec.oxidant_temperature - 273.15:.1f} degC; approach {sec.approach:g} K"))
    for name in ("high_temperature_shift", "low_temperature_shift"):
        st = getattr(t, name)
        if st is not None:
            rows.append((STAGE_NAMES[name], f"{st.temperature - 273.15:.1f} degC; approach "
                                            f"{st.approach:g} K"))
    return rows


def _limits_text(sc: Scenario) -> list[tuple[str, str]]:
    lim = sc.limits
    return [
        ("Maximum methane slip (dry)", "none" if lim.max_methane_slip_dry is None
         else f"{lim.max_methane_slip_dry * 100:g} mol %"),
        ("Carbon-free at equilibrium", "required" if lim.carbon_free else "not required"),
        ("Minimum H2 yield", "none" if lim.min_h2_yield is None
         else f"{lim.min_h2_yield:g} mol H2 / mol hydrocarbon C"),
        ("Maximum duty (primary reformer, radiant)",
         "none" if lim.max_duty is None else f"{lim.max_duty / 1e6:g} MW"),
    ]


def _pairs_table(pairs) -> str:
    body = "".join(f"<tr><td>{html.escape(a)}</td><td>{html.escape(b)}</td></tr>"
                   for a, b in pairs)
    return f'<table class="rw-table"><tbody>{body}</tbody></table>'


def review_sheet_html(sc: Scenario, ds: xr.Dataset, pinned: list[dict]) -> str:
    """Inputs, assumptions, sources, limits and the resulting window, pinned points, notes."""
    f, w = sc.feed, sc.window
    comp = ", ".join(f"{k} {v * 100:.3g} %" for k, v in f.composition.items())
    axes = [(name, a) for name, a in w.axes().items()]

    def axis_text(name, a):
        if name == "temperature":
            return f"{a.start - 273.15:g} to {a.stop - 273.15:g} degC, {a.points} points"
        if name == "pressure":
            return f"{a.start / 1e5:g} to {a.stop / 1e5:g} bar abs, {a.points} points"
        return f"{a.start:g} to {a.stop:g}, {a.points} points"

    inputs = [
        ("Dry feed composition (mol)", comp),
        ("Dry feed flow", f"{f.flow * 3.6:,.2f} kmol/h "
                          f"({f.flow * 3600 * V_NORMAL:,.0f} Nm3/h, 0 degC and 1.01325 bar)"),
        ("Feed inlet temperature", f"{f.inlet_temperature - 273.15:.1f} degC"),
        ("Design point", f"{sc.temperature - 273.15:.1f} degC, {sc.pressure / 1e5:.4g} bar abs, "
                         f"S/C {f.steam_to_carbon:g}, O2/C {f.oxygen_to_carbon:g}, "
                         f"CO2/C {f.co2_to_carbon:g}"),
        ("Approach to equilibrium", f"{sc.approach:g} K"),
    ] + [(f"Window: {_AXIS_NAMES.get(n, 'Outlet temperature')}", axis_text(n, a))
         for n, a in axes] + _train_inputs(sc)
    assumptions = [
        ("Phases", "ideal-gas mixture of CH4, C2H6, C3H8, H2O, H2, CO, CO2, O2, N2, Ar; pure "
                   "graphite where it is stable"),
        ("Equilibrium", "Gibbs energy minimum at the outlet T and P (element potentials); "
                        "composition at T minus the approach, enthalpy at T"),
        ("Carbon", "graphite limit (equilibrated gas); whisker carbon on catalysts and the "
                   "cracking of higher hydrocarbons can form carbon earlier"),
        ("Duty", "enthalpy of the outlet at T minus that of the mixed feed at its inlet "
                 "temperature"),
        ("Standard state", f"{P_REF / 1e5:g} bar; normal volume at 0 degC and 1.01325 bar"),
    ]
    if not sc.train.empty:
        assumptions += [
            ("Reforming train", "every stage at the outlet pressure (no pressure drop); "
                                "adiabatic stages at zero duty; shift stages held at their "
                                "temperature, CO + H2O = CO2 + H2 only (CH4 and carbon "
                                "frozen), equilibrium at the stage temperature plus the "
                                "approach"),
            ("Review limits with a train", "slip after the last reformer, H2 after the last "
                                           "stage, graphite in any reforming stage; duty "
                                           "limit on the primary's radiant duty"),
        ]
    bad = int((~ds["converged"]).sum())
    parts = ["<h2>Review sheet</h2>", "<h3>Inputs</h3>", _pairs_table(inputs),
             "<h3>Assumptions</h3>", _pairs_table(assumptions),
             "<h3>Review limits</h3>", _pairs_table(_limits_text(sc)),
             "<h3>Resulting window</h3>",
             f"<p>{int(ds['feasible'].sum()):,} of {ds['feasible'].size:,} grid points meet "
             "every limit" + (f"; {bad} points did not converge and count as infeasible"
                              if bad else "") +
             ". Feasible outlet temperatures [degC] at each pressure and steam-to-carbon "
             "(grid points; 'none' where no point qualifies):</p>",
             feasible_ranges_html(ds),
             "<h3>Pinned design points</h3>"]
    if pinned:
        for i, d in enumerate(pinned):
            parts.append(f"<h4>#{i + 1}: {d['temperature_K'] - 273.15:.1f} degC, "
                         f"{d['pressure_Pa'] / 1e5:.3f} bar abs, S/C "
                         f"{d['steam_to_carbon']:.3g}</h4>")
            parts.append(balance_html(d))
    else:
        parts.append("<p>None pinned.</p>")
    parts += ["<h3>Review notes</h3>",
              f'<div class="rw-notes">{html.escape(sc.notes) or "(none)"}</div>',
              "<h3>Data sources</h3>",
              "<p>" + html.escape(ds.attrs.get("data_sources", "")) + "</p>",
              "<h3>Cautions</h3>", f"<p>{html.escape(CAUTION)}</p>",
              "<h3>Scenario file</h3>",
              f'<pre class="rw-notes">{html.escape(sc.to_toml())}</pre>']
    return "\n".join(parts)


def _page_data(sc: Scenario, ds: xr.Dataset) -> dict:
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
        "conversions": {k: list(v) for k, v in CONVERSIONS.items()},
        "spec": {"summary": SUMMARY_ROWS, "energy": ENERGY_ROWS, "species": SPECIES_COLUMNS,
                 "reactions": REACTION_COLUMNS, "train": TRAIN_ROWS, "stage": STAGE_COLUMNS,
                 "train_note": TRAIN_NOTE, "compare": compare_rows()},
        "train": _train_descriptor(sc),
    }


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
              "approach_shift"):
        data[k] = np.ascontiguousarray(ds[k].transpose(*dims).values.ravel().astype(float))
    data["converged"] = ds["converged"].transpose(*dims).values.ravel().astype(np.int8)
    if sc is not None:
        data.update(_train_arrays(sc, ds))
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


def _sliders(ds: xr.Dataset, fixed0: dict[str, int], mode0: str) -> dict[str, Slider]:
    sliders = {}
    for d in ds["h2_yield"].dims:
        if d == "temperature":
            continue
        n = ds.sizes[d]
        vals = ds[d].values
        labels = ([f"{v / 1e5:.2f} bar abs" for v in vals] if d == "pressure"
                  else [f"{v:.3g}" for v in vals])
        fmt = CustomJSTickFormatter(args={"labels": labels},
                                    code="return labels[Math.round(tick)] ?? String(tick);")
        sliders[d] = Slider(start=0, end=max(n - 1, 1), step=1, value=fixed0[d],
                            title=_AXIS_NAMES[d], format=fmt, width=330,
                            visible=(d != mode0), disabled=n < 2)
    return sliders


def build_review(sc: Scenario, ds: xr.Dataset, pinned: list[dict] | None = None,
                 compare: tuple[Scenario, xr.Dataset] | None = None) -> str:
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
    """
    pinned = list(pinned or [])
    R = _page_data(sc, ds)
    fixed0 = _fixed0(sc, ds)
    mode0 = "pressure"
    key0 = _key_text({d: j for d, j in fixed0.items() if d != mode0})
    x = ds.temperature.values - 273.15
    y = ds[mode0].values / 1e5
    x_range, y_range = (float(x.min()), float(x.max())), (float(y.min()), float(y.max()))
    R["ranges"] = {
        "pressure": [float(ds.pressure.min()) / 1e5, float(ds.pressure.max()) / 1e5],
        "steam_to_carbon": [float(ds.steam_to_carbon.min()), float(ds.steam_to_carbon.max())],
    }
    R["axis_labels"] = {m: axis_label(m) for m in MODES}
    figs, srcs, mappers = [], [], []
    if compare is None:
        variables = EXPORT_VARIABLES + (() if sc.train.empty else TRAIN_EXPORT_VARIABLES)
        layers, common = all_layers(ds, sc.limits, variables)
        R["layers"], R["common"] = layers, common
        R["titles"] = {v: VARIABLES[v].title for v in variables}
        R["palettes"] = {v: mappers_palette(v, ds) for v in variables}
        for i, v in enumerate(("h2_yield", "methane_slip_dry")):
            var = VARIABLES[v]
            start = combine(layers[v][mode0][key0], common[mode0][key0])
            fig, src, mapper = map_figure(var, mode0, variable_levels(ds, var), start,
                                          f"map-{i}", x_range, y_range, width=580, height=440)
            figs.append(fig)
            srcs.append(src)
            mappers.append(mapper)
        options = [(v, VARIABLES[v].title) for v in variables]
        selects = [Select(title="Left map", value="h2_yield", options=options, width=280),
                   Select(title="Right map", value="methane_slip_dry", options=options,
                          width=280)]
        update_js, tap_js = _UPDATE_JS, _TAP_JS
    else:
        prop_sc, prop_ds = compare
        variables = COMPARE_VARIABLES
        panels = _comparison_layers(sc, ds, prop_sc, prop_ds, variables)
        R["layers"], R["common"] = panels["base"], panels["base_common"]
        R["cmp"] = {"layers": panels["proposal"], "common": panels["proposal_common"],
                    "diff": panels["change"], "palettes": panels["palettes"],
                    "diff_palettes": panels["change_palettes"]}
        R["titles"] = {v: VARIABLES[v].title for v in variables}
        R["proposal"] = _page_data(prop_sc, prop_ds)
        prefixes = ["Base: ", "Proposal: ", "Change (proposal - base): "]
        R["prefixes"] = prefixes
        v0 = variables[0]
        sets = [(panels["base"], panels["base_common"], panels["levels"][v0], VARIABLES[v0]),
                (panels["proposal"], panels["proposal_common"], panels["levels"][v0],
                 VARIABLES[v0]),
                (panels["change"], panels["proposal_common"], panels["change_levels"][v0],
                 change_variable(VARIABLES[v0]))]
        for i, (lay, com, levels, var) in enumerate(sets):
            start = combine(lay[v0][mode0][key0], com[mode0][key0])
            fig, src, mapper = map_figure(var, mode0, levels, start, f"map-{i}", x_range,
                                          y_range, width=580 if i < 2 else 620, height=420)
            fig.title.text = prefixes[i] + var.title
            figs.append(fig)
            srcs.append(src)
            mappers.append(mapper)
        options = [(v, VARIABLES[v].title) for v in variables]
        selects = [Select(title="Variable", value=v0, options=options, width=340)]
        update_js, tap_js = _UPDATE_CMP_JS, _TAP_CMP_JS
    R["hover"] = {v: [VARIABLES[v].label, VARIABLES[v].unit, VARIABLES[v].digits]
                  for v in variables}
    mode = RadioButtonGroup(labels=[MODES[m] for m in MODES], active=0)
    sliders = _sliders(ds, fixed0, mode0)
    heading = Div(text="<p>Click a map to show the balance of the nearest grid point.</p>",
                  name="balance-heading", width=1150)
    balance = Div(text="", width=1150, stylesheets=[SHEET_CSS], name="balance-div")
    pts = _points_source(ds, sc)
    hovers = [_hover(f) for f in figs]
    js_common = resources.files("explorer").joinpath("review.js").read_text("utf-8")
    args = dict(pts=pts, figs=figs, mappers=mappers, selects=selects, mode=mode,
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
    sheet = review_sheet_html(sc, ds, pinned)
    title = sc.title
    if compare is not None:
        sheet = comparison_sheet_html(sc, ds, *compare) + sheet
        title = f"{sc.title} compared with {compare[0].title}"
    return file_html(
        [maps, bal], resources=INLINE, title=f"Review: {title}", template=TEMPLATE,
        template_variables={
            "title": html.escape(title), "description": html.escape(sc.description),
            "caution": html.escape(CAUTION), "created": now, "version": thermo.__version__,
            "sheet": sheet, "sheet_css": SHEET_CSS,
            "data_json": json.dumps(R, separators=(",", ":"), allow_nan=False)
            .replace("</", "<\\/"),
        },
    )


def _comparison_layers(sc, ds, prop_sc, prop_ds, variables) -> dict:
    """Every slice's layers of the base, the proposal and the change (proposal - base)."""
    from thermo.compare import difference

    diff = difference(ds, prop_ds)
    levels = {v: shared_levels((ds, prop_ds), VARIABLES[v]) for v in variables}
    ch_levels = {v: change_levels(diff, VARIABLES[v]) for v in variables}
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
            sd = _diff_slice(diff, mode, fixed)
            out["base_common"][mode][key] = _round(window_layers(sb, mode, sc.limits), 4)
            out["proposal_common"][mode][key] = _round(window_layers(sp, mode, prop_sc.limits),
                                                       4)
            for v in variables:
                var = VARIABLES[v]
                out["base"][v][mode][key] = _round(variable_layers(sb, var, mode, levels[v]), 4)
                out["proposal"][v][mode][key] = _round(
                    variable_layers(sp, var, mode, levels[v]), 4)
                out["change"][v][mode][key] = _round(
                    variable_layers(sd, change_variable(var), mode, ch_levels[v]), 4)
    out["palettes"] = {v: _palette_of(VARIABLES[v], levels[v]) for v in variables}
    out["change_palettes"] = {v: _palette_of(change_variable(VARIABLES[v]), ch_levels[v])
                              for v in variables}
    return out


def _diff_slice(diff: xr.Dataset, mode: str, fixed: dict[str, int]) -> xr.Dataset:
    sel = {d: i for d, i in fixed.items() if d in diff.dims and d not in (mode, "temperature")}
    return diff.isel(sel).transpose(mode, "temperature", ...)


def _palette_of(var, levels) -> dict:
    from explorer.maps import _band_colours

    return {"palette": _band_colours(var, len(levels) - 1), "low": float(levels[0]),
            "high": float(levels[-1])}


def comparison_sheet_html(sc: Scenario, ds: xr.Dataset, prop_sc: Scenario,
                          prop_ds: xr.Dataset) -> str:
    """What changes from the base to the proposal: both scenarios, their windows, and both
    at the base's design point."""
    from explorer.tables import compare_point_html

    fb, fp = int(ds["feasible"].sum()), int(prop_ds["feasible"].sum())
    size = ds["feasible"].size
    kw = {"temperature": f"{sc.temperature!r} K", "pressure": f"{sc.pressure!r} Pa",
          "steam_to_carbon": sc.feed.steam_to_carbon}
    for d in ("oxygen_to_carbon", "co2_to_carbon"):
        if d in ds.dims:
            kw[d] = getattr(sc.feed, d)
    a = thermo.point(sc, **kw).to_dict()
    b = thermo.point(prop_sc, **kw).to_dict()
    return "\n".join([
        "<h2>Comparison: base and proposal</h2>",
        f"<p><b>Base:</b> {html.escape(sc.title)}<br><b>Proposal:</b> "
        f"{html.escape(prop_sc.title)}</p>",
        "<p>The proposal is solved over the base's window, so every grid point has both "
        "answers; change maps show proposal minus base, in the variable's unit. Each map "
        "shows its own scenario's carbon boundary and feasible window (the change map, the "
        "proposal's).</p>",
        f"<p>Grid points within every review limit: base {fb:,} of {size:,}, proposal "
        f"{fp:,} of {size:,} (each against its own limits).</p>",
        f"<h3>Both at the base design point ({sc.temperature - 273.15:.1f} degC, "
        f"{sc.pressure / 1e5:.3f} bar abs, S/C {sc.feed.steam_to_carbon:g})</h3>",
        compare_point_html(a, b),
        "<h3>Proposal: resulting window</h3>",
        "<p>Feasible outlet temperatures [degC] of the proposal at each pressure and "
        "steam-to-carbon:</p>",
        feasible_ranges_html(prop_ds),
        "<h3>Proposal: review limits</h3>", _pairs_table(_limits_text(prop_sc)),
        "<h3>Proposal: scenario file</h3>",
        f'<pre class="rw-notes">{html.escape(prop_sc.to_toml())}</pre>',
        "<h2>Base case</h2>",
    ])


def _hover(fig):
    from bokeh.models import HoverTool

    return next(t for t in fig.tools if isinstance(t, HoverTool))


def mappers_palette(v: str, ds: xr.Dataset) -> dict:
    from explorer.maps import _band_colours

    var = VARIABLES[v]
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
  for (const name of ["carbon", "infeasible", "edge"]) srcs[i][name].data = C[name];
  srcs[i].nodes.data = Object.assign({}, C.nodes, {value: L.values});
  const pal = R.palettes[v];
  mappers[i].palette = pal.palette;
  mappers[i].low = pal.low;
  mappers[i].high = pal.high;
  figs[i].title.text = R.titles[v];
  figs[i].y_range.start = R.ranges[m][0];
  figs[i].y_range.end = R.ranges[m][1];
  figs[i].yaxis[0].axis_label = R.axis_labels[m];
  const [label, unit, digits] = R.hover[v];
  hovers[i].tooltips = [["temperature", "@x{0.0} degC"],
    m === "pressure" ? ["pressure", "@y{0.00} bar abs"] : ["steam-to-carbon", "@y{0.00}"],
    [label, "@value{0." + "0".repeat(Math.max(digits, 1)) + "} " + unit],
    ["within all limits", "@feasible"], ["carbon at equilibrium", "@carbon"]];
  srcs[i].selected.data = {x: [], y: [], alpha: []};
}
"""

_TAP_JS = """
const m = mapMode();
const [p, T, Y, i, j] = tappedPoint(m, cb_obj.x, cb_obj.y);
const d = assemble(p);
let head = `<p><b>${pyFixed(d.temperature_K - 273.15, 1)} degC, ` +
  `${pyFixed(d.pressure_Pa / 1e5, 3)} bar abs, S/C ${pyG(d.steam_to_carbon, 3)}</b>`;
if (d.oxygen_to_carbon) head += `, O2/C ${pyG(d.oxygen_to_carbon, 3)}`;
if (d.co2_to_carbon) head += `, CO2/C ${pyG(d.co2_to_carbon, 3)}`;
head += ` (approach ${pyG(d.approach_K, 6)} K; grid point ${p})</p>`;
heading.text = head;
balance.text = balanceHtml(d);
for (let f = 0; f < 2; f++) srcs[f].selected.data = {x: [T[i]], y: [Y[j]], alpha: [1.0]};
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
  for (const name of ["carbon", "infeasible", "edge"]) srcs[i][name].data = C[name];
  srcs[i].nodes.data = Object.assign({}, C.nodes, {value: L.values});
  const pal = palettes[v];
  mappers[i].palette = pal.palette;
  mappers[i].low = pal.low;
  mappers[i].high = pal.high;
  figs[i].title.text = R.prefixes[i] + R.titles[v];
  figs[i].y_range.start = R.ranges[m][0];
  figs[i].y_range.end = R.ranges[m][1];
  figs[i].yaxis[0].axis_label = R.axis_labels[m];
  const [label, unit, digits] = R.hover[v];
  const dg = digits + (i === 2 ? 1 : 0);
  hovers[i].tooltips = [["temperature", "@x{0.0} degC"],
    m === "pressure" ? ["pressure", "@y{0.00} bar abs"] : ["steam-to-carbon", "@y{0.00}"],
    [(i === 2 ? "change in " : "") + label,
     "@value{0." + "0".repeat(Math.max(dg, 1)) + "} " + unit],
    ["within all limits", "@feasible"], ["carbon at equilibrium", "@carbon"]];
  srcs[i].selected.data = {x: [], y: [], alpha: []};
}
"""

_TAP_CMP_JS = """
const m = mapMode();
const [p, T, Y, i, j] = tappedPoint(m, cb_obj.x, cb_obj.y);
const a = assemble(p);
const b = assemble(p, R.proposal, pts2);
let head = `<p><b>${pyFixed(a.temperature_K - 273.15, 1)} degC, ` +
  `${pyFixed(a.pressure_Pa / 1e5, 3)} bar abs, S/C ${pyG(a.steam_to_carbon, 3)}</b>`;
if (a.oxygen_to_carbon) head += `, O2/C ${pyG(a.oxygen_to_carbon, 3)}`;
if (a.co2_to_carbon) head += `, CO2/C ${pyG(a.co2_to_carbon, 3)}`;
head += ` (grid point ${p}): base, proposal and the change</p>`;
heading.text = head;
balance.text = compareHtml(a, b) + "<h3>Base case</h3>" + balanceHtml(a) +
  "<h3>Proposal</h3>" + balanceHtml(b);
for (let f = 0; f < 3; f++) srcs[f].selected.data = {x: [T[i]], y: [Y[j]], alpha: [1.0]};
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
                 proposal_ds: xr.Dataset | None = None) -> Path:
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
    text = build_review(sc, ds, pinned, compare)
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
    p.add_argument("-o", "--output", required=True)
    a = p.parse_args(argv)
    try:
        from thermo import io

        sc = thermo.load_scenario(a.scenario)
        ds = io.load(a.grid) if a.grid else None
        pinned = json.loads(Path(a.pinned).read_text("utf-8")) if a.pinned else []
        proposal = thermo.load_scenario(a.compare) if a.compare else None
        proposal_ds = io.load(a.compare_grid) if a.compare_grid else None
        write_review(sc, a.output, ds, pinned, proposal, proposal_ds)
    except InputError as err:
        print(f"explorer: error: {err}", file=sys.stderr)
        return 2
    return 0


if __name__ == "__main__":
    sys.exit(main())
