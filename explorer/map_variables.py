"""The maps variables: what each map shows, its scale in the display units, its colour levels
over a whole Dataset, and the quiet change between two windows (split from explorer.maps).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
import xarray as xr
from bokeh.palettes import Cividis256, Inferno256, RdBu11, Viridis256, interp_palette

from explorer import display
from explorer.display import DEFAULT
from thermo.species import GAS_SPECIES
from thermo.sweep import LIMIT_VARIABLES

#: Map orientations: x is always outlet temperature.



#: Map orientations: x is always outlet temperature.
MODES = {
    "pressure": "temperature vs pressure",
    "steam_to_carbon": "temperature vs steam-to-carbon",
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

def _band_colours(var: Variable, n: int) -> list[str]:
    pal = var.palette
    if n <= 1:
        return [NO_CHANGE_COLOUR if pal is CHANGE_PALETTE else pal[len(pal) // 2]]
    return [pal[int(round(i * (len(pal) - 1) / (n - 1)))] for i in range(n)]

def var_options(ds=None, plant: bool = False) -> dict[str, str]:
    """Chooser options (title -> key) of the map variables `ds` can draw (before a Dataset
    exists: every variable, the plant's only if the scenario has a [plant] table)."""
    return {v.title: k for k, v in VARIABLES.items()
            if available(ds, k) or (ds is None and plant)}
