"""The review sheet: inputs, assumptions, limits, the resulting window, pinned points, notes.

The sheet is rendered through an autoescaping Jinja2 template (``static/sheet.html.jinja``):
every value that reaches it is text, whatever it holds, unless this module marks it as markup
(only the balance tables of :mod:`explorer.tables`, which escape each cell). Scenario titles,
descriptions, notes and scenario files therefore never become markup in a review file.
"""

from __future__ import annotations

from functools import cache
from importlib import resources

import numpy as np
import xarray as xr
from jinja2 import BaseLoader, Environment, TemplateNotFound, select_autoescape
from markupsafe import Markup

import thermo
from explorer import CAUTION, display
from explorer.display import DEFAULT
from explorer.limits_report import (
    best_summary,
    design_outside,
    grid_warning_text,
    intervals_text,
    margins_html,
)
from explorer.tables import balance_html
from thermo.constants import P_REF
from thermo.scenario import Scenario
from thermo.scenario_toml import input_rows

#: Names of the window's non-temperature axes as the sheet shows them.
AXIS_NAMES = {
    "pressure": "Pressure",
    "steam_to_carbon": "Steam-to-carbon",
    "oxygen_to_carbon": "O2-to-carbon",
    "co2_to_carbon": "CO2-to-carbon",
}


def _t(v: float, units: str, spec: str = ".1f") -> str:
    """A temperature [K] as shown: "850.0 degC" (explorer.display)."""
    shown = display.to_display(v, "temperature", units)
    return f"{shown:{spec}} {display.symbol('temperature', units)}"


def _p(v: float, units: str, spec: str = ".4g") -> str:
    """A pressure [Pa] as shown: "25 bar abs" (explorer.display)."""
    shown = display.to_display(v, "pressure", units)
    return f"{shown:{spec}} {display.symbol('pressure', units)}"


class _StaticLoader(BaseLoader):
    """Templates from the package's ``static/`` folder (works from a wheel or a checkout)."""

    def get_source(self, environment, template):
        path = resources.files("explorer").joinpath("static", template)
        if not path.is_file():
            raise TemplateNotFound(template)
        return path.read_text("utf-8"), None, lambda: True


@cache
def environment() -> Environment:
    """The one Jinja2 environment of the explorer: autoescape on for every template."""
    autoescape = select_autoescape(default=True, default_for_string=True)
    return Environment(loader=_StaticLoader(), autoescape=autoescape, trim_blocks=True,
                       lstrip_blocks=True)


def _sheet():
    """The sheet template's macros (review, comparison, ranges, pairs)."""
    return environment().get_template("sheet.html.jinja").module


def render(template: str, **context) -> str:
    """Render one of the explorer's static templates (autoescaped) to text."""
    return environment().get_template(template).render(**context)


def _ranges_text(T: np.ndarray, ok: np.ndarray) -> str:
    """Feasible runs of grid temperatures [degC] as text ('none' where no point qualifies)."""
    parts, start = [], None
    for k, flag in enumerate(ok):
        if flag and start is None:
            start = k
        if (not flag or k == len(ok) - 1) and start is not None:
            stop = k if flag else k - 1
            parts.append(f"{T[start]:.0f}" if start == stop else f"{T[start]:.0f}-{T[stop]:.0f}")
            start = None
    return ", ".join(parts) if parts else "none"


def feasible_ranges(ds: xr.Dataset, units: str = DEFAULT) -> list[dict]:
    """The feasible outlet-temperature range(s) at each pressure and steam-to-carbon, as
    table blocks (``caption``, ``head``, ``rows``), one per co-feed value."""
    T = display.to_display(ds.temperature.values, "temperature", units)
    feas = ds["feasible"]
    extra = [d for d in feas.dims if d not in ("temperature", "pressure", "steam_to_carbon")]
    blocks = []
    sub_keys = [{}] if not extra else [{extra[0]: i} for i in range(ds.sizes[extra[0]])]
    exact = "feasible_t_low" in ds
    for sk in sub_keys:
        f = feas.isel(sk).transpose("steam_to_carbon", "pressure", "temperature").values
        head = ([f"S/C \\ P [{display.symbol('pressure', units)}]"]
                + [f"{display.to_display(p, 'pressure', units):.1f}" for p in ds.pressure.values])
        rows = []
        if exact:
            lo = ds["feasible_t_low"].isel(sk).transpose("steam_to_carbon", "pressure",
                                                         "interval").values
            hi = ds["feasible_t_high"].isel(sk).transpose("steam_to_carbon", "pressure",
                                                          "interval").values
        for i, sc in enumerate(ds.steam_to_carbon.values):
            if exact:
                cells = [intervals_text(lo[i, j], hi[i, j], units)
                         for j in range(ds.sizes["pressure"])]
            else:
                cells = [_ranges_text(T, f[i, j]) for j in range(ds.sizes["pressure"])]
            rows.append([f"{sc:.3g}"] + cells)
        caption = ""
        if sk:
            d, i = next(iter(sk.items()))
            caption = f"{AXIS_NAMES[d]} {float(ds[d].values[i]):.3g}"
        blocks.append({"caption": caption, "head": head, "rows": rows})
    return blocks


def feasible_ranges_html(ds: xr.Dataset, units: str = DEFAULT) -> str:
    """:func:`feasible_ranges` as HTML tables."""
    return str(_sheet().ranges(feasible_ranges(ds, units)))


def design_row_ranges(ds: xr.Dataset, sc: Scenario,
                      units: str = DEFAULT) -> tuple[str, float, float]:
    """Feasible outlet temperatures (display units of `units`) on the grid row nearest the
    design pressure and steam-to-carbon, as text, with that row's pressure (bar abs or
    psia) and S/C."""
    j = int(np.argmin(np.abs(ds.pressure.values - sc.pressure)))
    k = int(np.argmin(np.abs(ds.steam_to_carbon.values - sc.feed.steam_to_carbon)))
    sel = {"pressure": j, "steam_to_carbon": k}
    for d in ("oxygen_to_carbon", "co2_to_carbon"):
        if d in ds.dims:
            sel[d] = int(np.argmin(np.abs(ds[d].values - getattr(sc.feed, d))))
    row = ds.isel(sel)
    T = display.to_display(ds.temperature.values, "temperature", units)
    if "feasible_t_low" in ds:
        lo = display.to_display(row["feasible_t_low"].values, "temperature", units)
        hi = display.to_display(row["feasible_t_high"].values, "temperature", units)
        parts = [f"{a:.1f}-{b:.1f}" for a, b in zip(lo, hi, strict=True) if np.isfinite(a)]
        words = ", ".join(parts) if parts else "none"
    else:
        words = _ranges_text(T, np.asarray(row["feasible"]))
    return (words, float(display.to_display(float(ds.pressure.values[j]), "pressure", units)),
            float(ds.steam_to_carbon.values[k]))


def window_facts(sc: Scenario, ds: xr.Dataset, objective: str | None = None,
                 units: str = DEFAULT) -> dict:
    """What the summary and the sheet state about the window (thermo.edges): the exact
    feasible temperatures at the design pressure and S/C, the design point's margins, the
    best point of `objective` (the default objective if None) and the grid warning."""
    from thermo.edges import best_point, default_objective, design_row, margins

    bp = best_point(sc, objective or default_objective(sc), ds=ds) if "feasible" in ds else None
    return {
        "design_row": design_row(sc) if "feasible_t_low" in ds else None,
        "margins": margins(sc),
        "best": bp,
        "grid_warning": grid_warning_text(ds, units),
    }


def summary_html(sc: Scenario, ds: xr.Dataset, facts: dict | None = None,
                 units: str = DEFAULT) -> Markup:
    """The answer first: the verdict at the exact design point, the feasible outlet
    temperatures at the design pressure and S/C and on the grid row nearest them, the best
    point and the design point's margins."""
    from explorer.tables import verdict_html

    facts = window_facts(sc, ds, units=units) if facts is None else facts

    kw = {"temperature": f"{sc.temperature!r} K", "pressure": f"{sc.pressure!r} Pa",
          "steam_to_carbon": sc.feed.steam_to_carbon}
    d = thermo.point(sc, **kw).to_dict()
    where = (f"{_t(sc.temperature, units)}, {_p(sc.pressure, units)}, "
             f"S/C {sc.feed.steam_to_carbon:g}")
    words, p_bar, s_c = design_row_ranges(ds, sc, units)
    exact = "feasible_t_low" in ds
    row = facts.get("design_row")
    bp = facts.get("best")
    verdict = verdict_html(d, sc.limits, prefix=f"Design point ({where}, computed exactly "
                                                "there): ", units=units)
    return Markup(verdict) + _sheet().summary(
        words=words, p_bar=f"{p_bar:.4g}", s_c=f"{s_c:g}", exact=exact,
        n_ok=f"{int(ds['feasible'].sum()):,}", n=f"{int(ds['feasible'].size):,}",
        design_words=None if row is None else intervals_text(
            [a for a, _ in row] or [np.nan], [b for _, b in row] or [np.nan], units),
        design_p=f"{display.to_display(sc.pressure, 'pressure', units):.4g}",
        design_sc=f"{sc.feed.steam_to_carbon:g}",
        best=None if bp is None else best_summary(bp, units),
        warning=facts.get("grid_warning", ""),
        margins=margins_html(facts["margins"], units=units),
        outside="; ".join(design_outside(sc, units)).capitalize(),
        t_unit=display.symbol("temperature", units), p_unit=display.symbol("pressure", units))


def _train_inputs(sc: Scenario, units: str = DEFAULT) -> list[tuple[str, str]]:
    """The reforming train's stages as (name, settings) rows of the review sheet."""
    from thermo.scenario import STAGE_NAMES

    t, rows = sc.train, []
    if t.pre_reformer is not None:
        rows.append((STAGE_NAMES["pre_reformer"],
                     f"inlet {_t(t.pre_reformer.inlet_temperature, units)}; gas "
                     f"reheated to {_t(sc.feed.inlet_temperature, units)}"))
    sec = t.secondary_reformer
    if sec is not None:
        rows.append((STAGE_NAMES["secondary_reformer"],
                     f"{sec.oxidant}, O2/C {sec.oxygen_to_carbon:g} at "
                     f"{_t(sec.oxidant_temperature, units)}; approach {_dt(sec.approach, units)}"))
    for name in ("high_temperature_shift", "low_temperature_shift"):
        st = getattr(t, name)
        if st is not None:
            rows.append((STAGE_NAMES[name], f"{_t(st.temperature, units)}; approach "
                                            f"{_dt(st.approach, units)}"))
    return rows


def _dt(v: float, units: str) -> str:
    """A temperature difference [K] as shown: "10 K" or "18 degF"."""
    return (f"{display.difference(v, 'temperature_difference', units):g} "
            f"{display.symbol('temperature_difference', units)}")


def _power(v: float, units: str) -> str:
    return f"{display.to_display(v, 'power', units):g} {display.symbol('power', units)}"


def limits_rows(sc: Scenario, units: str = DEFAULT) -> list[tuple[str, str]]:
    """The review limits as (name, value) rows."""
    lim = sc.limits
    return [
        ("Maximum methane slip (dry)", "none" if lim.max_methane_slip_dry is None
         else f"{lim.max_methane_slip_dry * 100:g} mol %"),
        ("Carbon-free", "required" if lim.carbon_free else "not required"),
        ("Minimum H2 yield", "none" if lim.min_h2_yield is None
         else f"{lim.min_h2_yield:g} mol H2 / mol hydrocarbon C"),
        ("Maximum duty (primary reformer, radiant)",
         "none" if lim.max_duty is None else _power(lim.max_duty, units)),
    ] + ([("Maximum fired duty (furnace, LHV)",
           "none" if lim.max_fired_duty is None else _power(lim.max_fired_duty, units))]
         if sc.plant is not None else [])


#: Words of each [plant] assumption for the sheet: (label, how the value is shown).
PLANT_WORDS: dict[str, tuple[str, str]] = {
    "h2_recovery": ("H2 recovery of the pressure-swing unit", "pct"),
    "excess_air": ("Excess combustion air", "pct"),
    "air_preheat_temperature": ("Combustion air preheat", "degC"),
    "bridgewall_temperature": ("Bridgewall temperature (flue gas leaving the radiant box)",
                               "degC"),
    "stack_temperature": ("Stack temperature", "degC"),
    "supply_temperature": ("Natural gas, tail gas and air supplied at", "degC"),
    "process_gas_cooled_temperature": ("Process gas cooled to (heat recovery)", "degC"),
    "steam_pressure": ("Steam header pressure", "bar"),
    "steam_temperature": ("Steam header temperature", "degC"),
    "feed_water_temperature": ("Boiler feed water temperature", "degC"),
    "steam_credit_efficiency": ("Boiler efficiency behind the steam credit", "pct"),
}


def plant_rows(sc: Scenario, units: str = DEFAULT) -> list[tuple[str, str]]:
    """Each [plant] assumption as (name, value) rows, saying which are the defaults (common
    practice for a natural-gas hydrogen plant, no source); none without a [plant] table."""
    if sc.plant is None:
        return []
    from thermo.scenario import PLANT_DEFAULTS

    rows = []
    for key, (label, how) in PLANT_WORDS.items():
        v = getattr(sc.plant, key)
        shown = (f"{v * 100:.4g} %" if how == "pct" else _t(v, units) if how == "degC"
                 else _p(v, units))
        default = abs(v - PLANT_DEFAULTS[key]) <= 1e-9 * max(abs(v), 1.0)
        rows.append((label, shown + (" (default, common practice)" if default
                                     else " (set by the scenario)")))
    return rows


def _inputs(sc: Scenario, units: str = DEFAULT) -> list[tuple[str, str]]:
    f, w = sc.feed, sc.window
    comp = ", ".join(f"{k} {v * 100:.3g} %" for k, v in f.composition.items())

    def axis_text(name, a):
        kind = display.axis_kind(name)
        if kind:
            lo, hi = (display.to_display(v, kind, units) for v in (a.start, a.stop))
            return f"{lo:g} to {hi:g} {display.symbol(kind, units)}, {a.points} points"
        return f"{a.start:g} to {a.stop:g}, {a.points} points"

    return [
        ("Dry feed composition (mol)", comp),
        ("Dry feed flow", f"{display.fmt(f.flow, 'molar_flow', 2, units, with_unit=True)} "
                          f"({display.fmt(f.flow, 'gas_flow', 0, units, with_unit=True)}, "
                          f"{display.volume_conditions(units)})"),
        ("Feed inlet temperature", _t(f.inlet_temperature, units)),
        ("Design point", f"{_t(sc.temperature, units)}, {_p(sc.pressure, units)}, "
                         f"S/C {f.steam_to_carbon:g}, O2/C {f.oxygen_to_carbon:g}, "
                         f"CO2/C {f.co2_to_carbon:g}"),
        ("Approach to equilibrium", _dt(sc.approach, units)),
    ] + [(f"Window: {AXIS_NAMES.get(n, 'Outlet temperature')}", axis_text(n, a))
         for n, a in w.axes().items()] + _train_inputs(sc, units) + [
        # Every key of the scenario as entered (thermo.schema drives the list).
        (f"{label} ({path})", shown) for path, label, shown in input_rows(sc)
        if path not in ("title", "description")]


def _path_words(sc: Scenario, units: str = DEFAULT) -> str:
    stations = sc.carbon.path_temperatures
    if not stations:
        return "linear rise"
    return ("through " + ", ".join(f"{display.to_display(t, 'temperature', units):g}"
                                   for t in stations)
            + f" {display.symbol('temperature', units)}")


def _reference_words(sc: Scenario) -> str:
    off = sc.carbon.catalyst_carbon_offset
    if sc.carbon.reference == "catalyst":
        return (f"catalyst carbon, {display.to_display(off, 'reaction_heat'):g} "
                f"{display.symbol('reaction_heat')} above graphite (user value)")
    extra = "" if off is None else ("; the catalyst-carbon boundary ("
                                    f"{display.to_display(off, 'reaction_heat'):g} kJ/mol "
                                    "above graphite, user value) is drawn too")
    return "graphite, the conservative reference" + extra


def _assumptions(sc: Scenario, units: str = DEFAULT) -> list[tuple[str, str]]:
    rows = [
        ("Phases", "ideal-gas mixture of CH4, C2H6, C3H8, H2O, H2, CO, CO2, O2, N2, Ar; pure "
                   "graphite where it is stable"),
        ("Equilibrium", "Gibbs energy minimum at the outlet T and P (element potentials); "
                        "composition at T minus the approach, enthalpy at T"),
        ("Carbon", "carbon-free binds on the worst of: the equilibrated gas at every gas "
                   "temperature along the primary tube, from its inlet to its outlet "
                   f"({_path_words(sc, units)}); the real (non-equilibrated) outlet gas at the "
                   "catalyst temperature by methane cracking, CO reduction and Boudouard; C2+ "
                   "hydrocarbons entering above "
                   f"{_t(sc.carbon.cracking_temperature, units, 'g')}; graphite in another "
                   "reforming stage. Referred to "
                   f"{_reference_words(sc)}. The filamentous carbon formed on nickel "
                   "catalysts is less stable than graphite, so its limit is less restrictive; "
                   "carbon that forms earlier in practice does so by kinetics (cracking of "
                   "higher hydrocarbons, gas near the tube inlet not yet equilibrated)"),
        ("Not covered by the carbon check", "kinetics of carbon formation and of cracking; "
                                            "tube-wall and catalyst temperatures above the "
                                            "gas temperature; catalyst poisoning"),
        ("Duty", "enthalpy of the outlet at T minus that of the mixed feed at its inlet "
                 "temperature"),
        # The thermodynamic standard state is 1 bar in every unit system.
        ("Standard state", f"{display.to_display(P_REF, 'pressure'):g} bar; "
                           + display.volume_words(units)),
    ]
    if sc.plant is not None:
        rows += [
            ("Plant around the reformer", "pressure-swing purification recovers its share of "
                                          "the H2 after the last stage; the rest of the dry "
                                          "gas is tail gas, fired with trim natural gas of the "
                                          "feed's composition; the furnace closes its own "
                                          "energy balance (fuel and air in; radiant duty and "
                                          "flue gas at the bridgewall out), complete "
                                          "combustion in dry air; the convection section "
                                          "preheats air and mixed feed, then raises steam; "
                                          "the process gas is cooled for steam; no heat "
                                          "losses and no pinch check"),
            ("Heating values and steam", "LHV at 25 degC with water as vapour, from the "
                                         "species data; water and steam from IAPWS-IF97"),
            ("Net specific energy", "(natural gas feed LHV + trim fuel LHV - steam export x "
                                    "steam value) per unit of H2 product; the steam value is "
                                    "the fuel a boiler of the stated efficiency burns to "
                                    "raise it"),
        ]
    if not sc.train.empty:
        rows += [
            ("Reforming train", "every stage at the outlet pressure (no pressure drop); "
                                "adiabatic stages at zero duty; shift stages held at their "
                                "temperature, CO + H2O = CO2 + H2 only (CH4 and carbon "
                                "frozen), equilibrium at the stage temperature plus the "
                                "approach"),
            ("Review limits with a train", "slip after the last reformer, H2 after the last "
                                           "stage, the carbon verdict (graphite in any "
                                           "reforming stage included); duty "
                                           "limit on the primary's radiant duty"),
        ]
    return rows


def review_context(sc: Scenario, ds: xr.Dataset, pinned: list[dict],
                   facts: dict | None = None, units: str = DEFAULT) -> dict:
    """Everything the review sheet shows, as plain values (the template escapes them), in
    the display unit system `units` (explorer.display)."""
    bad = int((~ds["converged"]).sum())
    exact = "feasible_t_low" in ds
    window_text = (f"{int(ds['feasible'].sum()):,} of {ds['feasible'].size:,} grid points meet "
                   "every limit" + (f"; {bad} points did not converge and count as infeasible"
                                    if bad else "")
                   + f". Feasible outlet temperatures [{display.symbol('temperature', units)}] "
                   "at each pressure and "
                   "steam-to-carbon ("
                   + ("exact intervals: each limit's edge solved between the grid points to "
                      "0.1 K" if exact else "grid points")
                   + "; 'none' where no temperature qualifies):")
    if facts is None and exact:
        facts = window_facts(sc, ds, units=units)
    bp = facts.get("best") if facts else None
    best = None
    if bp is not None:
        best = {"summary": best_summary(bp, units),
                "balance": (Markup(balance_html(bp.point.to_dict(), units)) if bp.feasible
                            else None),
                "margins": margins_html(bp.margins, units=units) if bp.feasible else None}
    plant_table = ""
    if sc.plant is not None:
        from explorer.tables import plant_html

        design = thermo.point(sc).to_dict()
        plant_table = Markup(plant_html(design, units))  # explorer.tables escapes every cell
    return {
        "plant": plant_rows(sc, units),
        "plant_heading": (f"At the design point ({_t(sc.temperature, units)}, "
                          f"{_p(sc.pressure, units)}, S/C {sc.feed.steam_to_carbon:g})"),
        "plant_table": plant_table,
        "inputs": _inputs(sc, units),
        "assumptions": _assumptions(sc, units),
        "limits": limits_rows(sc, units),
        "window_text": window_text,
        "ranges": feasible_ranges(ds, units),
        "grid_warning": facts.get("grid_warning", "") if facts else "",
        "design_margins": margins_html(facts["margins"], units=units) if facts else None,
        "best": best,
        "pinned": [{"heading": f"#{i + 1}: {_t(d['temperature_K'], units)}, "
                               f"{_p(d['pressure_Pa'], units, '.3f')}, S/C "
                               f"{d['steam_to_carbon']:.3g}",
                    # Tables built by explorer.tables escape every cell themselves.
                    "balance": Markup(balance_html(d, units))} for i, d in enumerate(pinned)],
        "units": units,
        "notes": sc.notes,
        "sources": ds.attrs.get("data_sources", ""),
        "caution": CAUTION,
        "toml": sc.to_toml(),
    }


def review_sheet_html(sc: Scenario, ds: xr.Dataset, pinned: list[dict],
                      units: str = DEFAULT) -> str:
    """The review sheet as HTML (autoescaped template)."""
    return str(_sheet().review(review_context(sc, ds, pinned, units=units)))


def comparison_context(sc: Scenario, ds: xr.Dataset, prop_sc: Scenario,
                       prop_ds: xr.Dataset, units: str = DEFAULT) -> dict:
    """What changes from the base to the proposal: both scenarios, their windows, and both
    at the base's design point (plain values; the template escapes them)."""
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
    return {
        "base_title": sc.title,
        "proposal_title": prop_sc.title,
        "counts": f"Grid points within every review limit: base {fb:,} of {size:,}, proposal "
                  f"{fp:,} of {size:,} (each against its own limits).",
        "point_heading": f"Both at the base design point ({_t(sc.temperature, units)}, "
                         f"{_p(sc.pressure, units, '.3f')}, S/C {sc.feed.steam_to_carbon:g})",
        "point_table": Markup(compare_point_html(a, b, units)),
        "ranges": feasible_ranges(prop_ds, units),
        "limits": limits_rows(prop_sc, units),
        "t_unit": display.symbol("temperature", units),
        "toml": prop_sc.to_toml(),
    }
