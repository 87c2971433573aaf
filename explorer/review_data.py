"""What the review file embeds: the page data, every slice's map layers, the per-point arrays.

Everything here is read from the sweep's Dataset or from public functions of the core
(:mod:`thermo.reactions`, :mod:`thermo.species`, :mod:`thermo.compare`); nothing is solved
again. :mod:`explorer.export` puts the result into the page; the page's script
(``static/review.js``) reads it.

Three encodings keep the file small without changing what the page shows or computes:

- map geometry is rounded to :data:`GEOMETRY_DECIMALS` decimals in display units (degC,
  bar, S/C), far below a pixel, and node values to 6 significant digits (hover text);
- a variable's node values are written once per grid point, in flat grid order
  (``layers[var]["values"]``, :func:`grid_values`), not once in each map mode's slices;
  ``sliceValues`` in the script takes the shown slice's values out of it;
- a long list that repeats few values (the hover text of every grid node, the nodes'
  coordinates) is written once as a table of its distinct values and an index per entry,
  ``{"rw_table": [...], "rw_index": [...]}``; ``unpackRepeats`` in the script expands it
  when the page loads.

The per-point arrays from which the page assembles a clicked point's balance are embedded in
full double precision, so that its tables equal the app's (tests/explorer/test_review_js.py).
"""

from __future__ import annotations

import numpy as np
import xarray as xr

from explorer import display
from explorer.maps import (
    MODES,
    change_levels,
    change_tolerance,
    change_variable,
    has_change,
    quiet_change,
    shared_levels,
    slice_fields,
    variable_layers,
    variable_levels,
    variables_in,
    window_layers,
)
from explorer.tables import PLANT_NOTE, PLANT_ROWS, rows_for
from explorer.tables import spec as table_spec
from thermo.constants import ELEMENTS, P_REF, T_REF
from thermo.errors import InputError
from thermo.reactions import REFORMING, SHIFT, delta_h, ln_K
from thermo.scenario import STAGE_NAMES, Scenario
from thermo.species import GAS_SPECIES, GRAPHITE, formula_matrix, molar_mass, molar_masses
from thermo.sweep import PLANT_CONSTANTS, PLANT_VARIABLES, RATIO_AXES, STAGE_VARIABLES

#: Variables the review file can map (each adds its slices to the file).
EXPORT_VARIABLES = ("h2_yield", "methane_slip_dry", "h2_potential", "methane_conversion",
                    "h2_co_ratio", "duty", "duty_per_h2", "carbon_activity", "dry:CO",
                    "dry:CO2")
#: Added to the review file's chooser when the scenario has a reforming train.
TRAIN_EXPORT_VARIABLES = ("h2_product", "train_duty", "train_methane_slip_dry")
#: Added when the scenario has a [plant] table (the plant around the reformer).
PLANT_EXPORT_VARIABLES = ("specific_energy", "plant_fired_duty", "radiant_efficiency",
                          "plant_trim_fuel", "plant_steam_export", "natural_gas_per_h2")
#: Variables of a comparison review file (base, proposal and change maps for each).
COMPARE_VARIABLES = ("h2_product", "h2_yield", "train_methane_slip_dry", "duty",
                     "train_duty", "carbon_activity", "dry:CO")

#: Decimals of map geometry in display units (degC, bar, S/C): 1e-4 is invisible on a map,
#: and exact edges and markers stay checkable against the Dataset (test_browser_edges).
GEOMETRY_DECIMALS = 4
#: Significant digits of node values (hover text shows at most 4 decimals of them).
VALUE_DIGITS = 6
#: A list is written as a table and indices when it has at least this many entries and at
#: most a quarter of them distinct (short lists and geometry stay as they are).
_PACK_MIN = 16

#: Per-point arrays of the points source (Dataset variable names, flat grid order).
_POINT_VARIABLES = ("carbon_deposit", "carbon_activity", "duty", "approach_reforming",
                    "approach_shift", "carbon_activity_path_max",
                    "carbon_path_max_temperature", "carbon_activity_real_gas")
#: Points-source keys of each stage's variables (the script's names; see assembleTrain).
_STAGE_KEYS = {"stage_inlet_temperature": "Tin", "stage_temperature": "T",
               "stage_equilibrium_temperature": "Teq", "stage_heat_before": "heat_before",
               "stage_duty": "duty", "stage_inlet_enthalpy": "hin",
               "stage_outlet_enthalpy": "hout", "stage_carbon_deposit": "carbon",
               "stage_converged": "ok"}


# --- compact encoding -------------------------------------------------------------------

def _significant(values: list) -> list:
    """Node values to :data:`VALUE_DIGITS` significant digits (None stays None)."""
    return [None if v is None else float(f"{v:.{VALUE_DIGITS}g}") for v in values]


def round_layers(obj, nd: int = GEOMETRY_DECIMALS):
    """Every float of a nested layer structure rounded to `nd` decimals; the ``values`` of
    the grid nodes keep :data:`VALUE_DIGITS` significant digits instead.

    A flat list of numbers is rounded in one numpy pass (numpy's rounding, which can differ
    from Python's :func:`round` in the last binary digit: nothing a map shows)."""
    if isinstance(obj, dict):
        return {k: (_significant(v) if k == "values" else round_layers(v, nd))
                for k, v in obj.items()}
    if isinstance(obj, list):
        if obj and type(obj[0]) is float:
            try:
                arr = np.asarray(obj, dtype=float)
            except (TypeError, ValueError):  # ragged or mixed: element by element
                arr = None
            if arr is not None and arr.ndim == 1 and not np.isnan(arr).any():
                return np.round(arr, nd).tolist()
        return [round_layers(v, nd) for v in obj]
    if isinstance(obj, float):
        return round(obj, nd)
    return obj


def _pack(values: list):
    """One list as ``{"rw_table", "rw_index"}`` when that is shorter (see pack_repeats)."""
    if len(values) < _PACK_MIN:
        return values
    table = list(dict.fromkeys(values))
    if len(table) * 4 > len(values):
        return values
    where = {v: i for i, v in enumerate(table)}
    return {"rw_table": table, "rw_index": [where[v] for v in values]}


def pack_repeats(common: dict) -> dict:
    """The grid nodes' lists of window layers ``common[mode][key]["nodes"]`` (hover text
    and coordinates of every node, which repeat few values) written as tables and indices
    (see the module docstring); ``unpackRepeats`` in review.js inverts it."""
    out: dict = {}
    for mode, slices in common.items():
        out[mode] = {}
        for key, layers in slices.items():
            nodes = layers.get("nodes")
            packed = dict(layers)
            if nodes is not None:
                packed["nodes"] = {k: _pack(v) if isinstance(v, list) else v
                                   for k, v in nodes.items()}
            out[mode][key] = packed
    return out


def unpack_repeats(obj):
    """The inverse of :func:`pack_repeats` (the script's ``unpackRepeats``, for tests)."""
    if isinstance(obj, dict):
        if set(obj) == {"rw_table", "rw_index"}:
            return [obj["rw_table"][i] for i in obj["rw_index"]]
        return {k: unpack_repeats(v) for k, v in obj.items()}
    if isinstance(obj, list):
        return [unpack_repeats(v) for v in obj]
    return obj


# --- slices and layers ------------------------------------------------------------------

def slice_keys(ds: xr.Dataset, mode: str) -> list[dict[str, int]]:
    """Every slice of a map mode: the index of each axis other than temperature and `mode`."""
    dims = [d for d in ds["h2_yield"].dims if d not in ("temperature", mode)]
    keys: list[dict[str, int]] = [{}]
    for d in dims:
        keys = [dict(k, **{d: i}) for k in keys for i in range(ds.sizes[d])]
    return keys


def key_text(fixed: dict[str, int]) -> str:
    """A slice's key in the page data, e.g. ``"steam_to_carbon=3"``."""
    return "|".join(f"{d}={i}" for d, i in fixed.items())


def _layers_of(s: xr.Dataset, var, mode: str, levels, units: str, with_values: bool) -> dict:
    """One variable's layers of a slice, rounded as :func:`round_layers` rounds them (the
    geometry rounded on the arrays, :func:`explorer.maps.variable_layers`); the node values
    (:data:`VALUE_DIGITS` significant digits) only if `with_values`."""
    out = variable_layers(s, var, mode, levels, units, decimals=GEOMETRY_DECIMALS)
    values = out.pop("values")
    if with_values:
        out["values"] = _significant(values)
    return out


def grid_values(ds: xr.Dataset, slices: dict[str, list], mode: str = "pressure") -> list:
    """One variable's node values in flat grid order (C order over the window's axes, as
    the points source), from the ``values`` of every slice of map mode `mode` (keyed as
    :func:`key_text`): each grid point is written once, not once per map mode. The page's
    script (``sliceValues`` in review.js) takes a slice's values back out of it."""
    dims = list(ds["h2_yield"].dims)
    order = [mode, "temperature"] + [d for d in dims if d not in ("temperature", mode)]
    grid = np.empty([ds.sizes[d] for d in order], dtype=object)
    for fixed in slice_keys(ds, mode):
        vals = np.empty(len(slices[key_text(fixed)]), dtype=object)
        vals[:] = slices[key_text(fixed)]
        grid[(slice(None), slice(None), *(fixed[d] for d in order[2:]))] = vals.reshape(
            ds.sizes[mode], ds.sizes["temperature"])
    return grid.transpose([order.index(d) for d in dims]).ravel().tolist()


def slice_values(ds: xr.Dataset, flat: list, mode: str, fixed: dict[str, int]) -> list:
    """A slice's node values (rows of `mode`, columns of temperature, as a slice's layers
    hold them) out of :func:`grid_values`' flat list."""
    dims = list(ds["h2_yield"].dims)
    grid = np.empty(len(flat), dtype=object)
    grid[:] = flat
    grid = grid.reshape([ds.sizes[d] for d in dims])
    cut = grid[tuple(fixed[d] if d in fixed and d not in (mode, "temperature") else slice(None)
                     for d in dims)]
    kept = [d for d in dims if not (d in fixed and d not in (mode, "temperature"))]
    return cut.transpose(kept.index(mode), kept.index("temperature")).ravel().tolist()


def all_layers(ds: xr.Dataset, limits, variables=EXPORT_VARIABLES,
               markers: dict | None = None, units: str = display.DEFAULT) -> tuple[dict, dict]:
    """Layers of every slice, split into what depends on the variable and what does not.

    Returns
    -------
    (per_variable, common)
        ``per_variable[var][mode][key]`` holds bands, lines and labels, and
        ``per_variable[var]["values"]`` the node values of the whole grid
        (:func:`grid_values`); ``common[mode][key]`` the carbon boundary, the infeasible
        region and its edge, and the grid nodes (:func:`explorer.maps.combine` joins them
        with a slice's values). Rounded as by :func:`round_layers`, not yet packed.
        Coordinates in the display units of `units`.
    """
    shown = variables_in(units)  # the map variables as shown in these units
    levels = {v: variable_levels(ds, shown[v]) for v in variables}
    per_var: dict = {v: {m: {} for m in MODES} for v in variables}
    common: dict = {m: {} for m in MODES}
    values: dict = {v: {} for v in variables}
    for mode in MODES:
        for fixed in slice_keys(ds, mode):
            key = key_text(fixed)
            s = slice_fields(ds, mode, fixed)
            common[mode][key] = round_layers(window_layers(s, mode, limits, markers,
                                                           units=units))
            for v in variables:
                lay = _layers_of(s, shown[v], mode, levels[v], units, mode == "pressure")
                if "values" in lay:
                    values[v][key] = lay.pop("values")
                per_var[v][mode][key] = lay
    for v in variables:
        per_var[v]["values"] = grid_values(ds, values[v])
    return per_var, common


def palette(var, levels) -> dict:
    """A colour bar's palette and range for the page's script."""
    from explorer.maps import _band_colours

    return {"palette": _band_colours(var, len(levels) - 1), "low": float(levels[0]),
            "high": float(levels[-1])}


def variable_palette(v: str, ds: xr.Dataset, units: str = display.DEFAULT) -> dict:
    """The palette of variable `v` on its own window's levels."""
    var = variables_in(units)[v]
    return palette(var, variable_levels(ds, var))


def _diff_slice(diff: xr.Dataset, mode: str, fixed: dict[str, int]) -> xr.Dataset:
    sel = {d: i for d, i in fixed.items() if d in diff.dims and d not in (mode, "temperature")}
    return diff.isel(sel).transpose(mode, "temperature", ...)


def comparison_layers(sc, ds, prop_sc, prop_ds, variables=COMPARE_VARIABLES,
                      units: str = display.DEFAULT) -> dict:
    """Every slice's layers of the base, the proposal and the change (proposal - base).

    The two windows' shared levels colour base and proposal alike; the change is quiet
    (zero) below each variable's round-off tolerance (explorer.maps.quiet_change).
    """
    from thermo.compare import difference

    shown = variables_in(units)  # the map variables as shown in these units
    diff = difference(ds, prop_ds)
    levels = {v: shared_levels((ds, prop_ds), shown[v]) for v in variables}
    tolerance = {v: change_tolerance(ds, shown[v]) for v in variables}
    quiet = {v: quiet_change(diff, shown[v], tolerance[v]) for v in variables}
    ch_levels = {v: change_levels(quiet[v], shown[v], tolerance[v]) for v in variables}
    # Each change map reads one variable of the change (Variable.values): slice only that.
    alone = {v: quiet[v][["mole_fraction_dry" if v.startswith("dry:") else shown[v].key]]
           for v in variables}
    out = {"base_common": {m: {} for m in MODES}, "proposal_common": {m: {} for m in MODES},
           "levels": levels, "change_levels": ch_levels}
    values: dict = {}
    for name in ("base", "proposal", "change"):
        out[name] = {v: {m: {} for m in MODES} for v in variables}
        values[name] = {v: {} for v in variables}
    for mode in MODES:
        for fixed in slice_keys(ds, mode):
            key = key_text(fixed)
            sb = slice_fields(ds, mode, fixed)
            sp = slice_fields(prop_ds, mode, fixed)
            out["base_common"][mode][key] = round_layers(
                window_layers(sb, mode, sc.limits, units=units))
            out["proposal_common"][mode][key] = round_layers(
                window_layers(sp, mode, prop_sc.limits, units=units))
            for v in variables:
                var = shown[v]
                sets = (("base", sb, var, levels[v]), ("proposal", sp, var, levels[v]),
                        ("change", _diff_slice(alone[v], mode, fixed), change_variable(var),
                         ch_levels[v]))
                for name, cut, shown_as, lv in sets:
                    lay = _layers_of(cut, shown_as, mode, lv, units, mode == "pressure")
                    if "values" in lay:
                        values[name][v][key] = lay.pop("values")
                    out[name][v][mode][key] = lay
    for name in ("base", "proposal", "change"):
        for v in variables:
            out[name][v]["values"] = grid_values(ds, values[name][v])
    out["changes"] = [v for v in variables
                      if has_change(quiet[v], shown[v], tolerance[v])]
    out["palettes"] = {v: palette(shown[v], levels[v]) for v in variables}
    out["change_palettes"] = {v: palette(change_variable(shown[v]), ch_levels[v])
                              for v in variables}
    return out


# --- the page data and the per-point arrays ---------------------------------------------

def _require(ds: xr.Dataset, names) -> None:
    missing = [n for n in names if n not in ds]
    if missing:
        raise InputError("grid", ", ".join(missing) + " missing",
                         "a sweep made by this version (re-run the sweep)")


def page_data(sc: Scenario, ds: xr.Dataset, units: str = display.DEFAULT) -> dict:
    """The page data of one scenario: axes, inlet flows and enthalpies, K and heats of the
    reactions at each temperature, table layout, train and plant descriptors (SI units).

    The reactions' K (1 bar standard state, as the balance's) and heats come from
    :mod:`thermo.reactions`; the inlet flows and the mixed feed's enthalpy flow from the
    Dataset (``inlet_flow``, ``feed_enthalpy``).
    """
    _require(ds, ("inlet_flow", "feed_enthalpy"))
    dims = list(ds["h2_yield"].dims)
    ratio_dims = [d for d in dims if d in RATIO_AXES]
    inlet = ds["inlet_flow"].transpose(*ratio_dims, "species").values
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
        "inlet_flow": inlet.ravel().tolist(),
        "inlet_enthalpy": ds["feed_enthalpy"].transpose(*ratio_dims).values.ravel().tolist(),
        "inlet_temperature_K": sc.feed.inlet_temperature,
        "approach_K": sc.approach,
        "standard_pressure": P_REF,
        "K_reforming": np.exp(ln_K(REFORMING, Tk)).tolist(),
        "K_shift": np.exp(ln_K(SHIFT, Tk)).tolist(),
        "heat_298": {"reforming": float(delta_h(REFORMING, T_REF)),
                     "shift": float(delta_h(SHIFT, T_REF))},
        "heat_T": {"reforming": delta_h(REFORMING, Tk).tolist(),
                   "shift": delta_h(SHIFT, Tk).tolist()},
        "equations": {"reforming": REFORMING.equation(), "shift": SHIFT.equation()},
        # The display layer's factors and table layout in the file's unit system.
        "units": units,
        "conversions": display.conversions(units),
        "spec": table_spec(units),
        "train": train_descriptor(sc),
        "plant": plant_descriptor(sc, ds, units),
    }


def plant_descriptor(sc: Scenario, ds: xr.Dataset,
                     units: str = display.DEFAULT) -> dict | None:
    """What the page's script needs to assemble a point's plant table (None without one):
    the point JSON keys with the embedded per-point arrays (``pl_<variable>``) or the
    scenario's constants behind them, the table rows and the flags' threshold."""
    if sc.plant is None or "specific_energy" not in ds:
        return None
    from thermo.api import PLANT_JSON

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


def train_descriptor(sc: Scenario) -> dict:
    """What the page's script needs to know of the train (the primary alone without one)."""
    stages = [{"name": n, "label": STAGE_NAMES[n], "key": f"st{k}"}
              for k, n in enumerate(sc.train.stages())]
    pre = "st0" if sc.train.pre_reformer is not None else None
    return {"stages": stages, "pre": pre}


def _flat(da: xr.DataArray, dims: list[str], *extra: str) -> np.ndarray:
    """A variable in flat grid order (C order over `dims`), trailing `extra` dims kept."""
    v = da.transpose(*dims, *extra).values
    return v.reshape((-1,) + v.shape[len(dims):])


def _stage_arrays(sc: Scenario, ds: xr.Dataset, dims: list[str]) -> dict[str, np.ndarray]:
    """Each stage's per-point arrays, from the Dataset's ``stage_*`` variables."""
    if sc.train.empty:
        return {}
    _require(ds, STAGE_VARIABLES)
    names = list(ds["stage"].values)
    out: dict[str, np.ndarray] = {}
    flows = _flat(ds["stage_outlet_flow"], dims, "stage", "species")
    scalars = {k: _flat(ds[k], dims, "stage") for k in _STAGE_KEYS}
    for k, name in enumerate(names):
        key = f"st{k}"
        if name == "primary_reformer" and sc.train.pre_reformer is not None:
            # The primary's inlet is the pre-reformed gas (the main balance's "inlet").
            out["primary_hin"] = scalars["stage_inlet_enthalpy"][:, k]
            out["primary_heat_before"] = np.nan_to_num(scalars["stage_heat_before"][:, k])
        for j, s in enumerate(GAS_SPECIES):
            out[f"{key}_n_{s}"] = flows[:, k, j]
        for var, short in _STAGE_KEYS.items():
            out[f"{key}_{short}"] = scalars[var][:, k]
    return out


def point_arrays(ds: xr.Dataset, sc: Scenario | None = None) -> dict[str, np.ndarray]:
    """The per-point arrays of the page's points source, flat grid order, full precision:
    outlet flows (``n_<species>``), carbon and energy results, the train's stages and the
    plant's variables (``pl_<variable>``). Flags are int8 (1 true, 0 false)."""
    dims = list(ds["h2_yield"].dims)
    flows = _flat(ds["outlet_flow"], dims, "species")
    data = {f"n_{s}": flows[:, j] for j, s in enumerate(GAS_SPECIES)}
    for k in _POINT_VARIABLES:
        data[k] = _flat(ds[k], dims).astype(float)
    for k in ("carbon_free", "converged"):
        data[k] = _flat(ds[k], dims).astype(np.int8)
    if sc is not None:
        data.update(_stage_arrays(sc, ds, dims))
    for name in PLANT_VARIABLES:
        if name in ds and name not in PLANT_CONSTANTS:
            data[f"pl_{name}"] = _flat(ds[name], dims).astype(float)
    return {k: np.ascontiguousarray(v if v.dtype == np.int8 else v.astype(float))
            for k, v in data.items()}
