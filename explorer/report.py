"""Plain-text balance of one point, in the engineer's display units (CLI output)."""

from __future__ import annotations

import math
import textwrap

from explorer import CAUTION
from explorer.display import DEFAULT, decimals, symbol, system_note, to_display
from explorer.tables import (
    PLANT_NOTE,
    PLANT_ROWS,
    carbon_verdict,
    display,
    lookup,
    plant_warnings,
    rows_for,
)
from thermo.api import PointResult
from thermo.carbon import ROUTE_WORDS
from thermo.species import GAS_SPECIES, GRAPHITE, molar_mass


def _num(v: float, fmt: str) -> str:
    return "-" if v is None or not math.isfinite(v) else format(v, fmt)


def _v(value, kind: str, metric_decimals: int, units: str) -> str:
    """SI `value` in `units` without thousands separators (the report's columns)."""
    return display(value, kind, decimals(kind, metric_decimals, units), units).replace(",", "")


def point_report(pt: PointResult, units: str = DEFAULT) -> str:
    """The whole balance of `pt` as an aligned text report in unit system `units`
    (explorer.display; metric: degC, bar, kmol/h, Nm3/h, kg/h, MW)."""
    d = pt.to_dict()
    sc = pt.scenario
    T, P, F = (symbol(k, units) for k in ("temperature", "pressure", "molar_flow"))
    V, M, W = (symbol(k, units) for k in ("gas_flow", "mass_flow", "power"))
    dT = symbol("temperature_difference", units)
    lines = []
    add = lines.append
    add(f"{sc.title}")
    mode = "adiabatic (duty = 0)" if pt.adiabatic else "fixed"
    add(
        f"Outlet {_v(pt.temperature, 'temperature', 1, units)} {T} ({mode}), "
        f"{_v(pt.pressure, 'pressure', 3, units)} {P} "
        f"({_v(pt.pressure, 'gauge_pressure', 3, units)} {symbol('gauge_pressure', units)}), "
        f"S/C {pt.steam_to_carbon:g}, O2/C {pt.oxygen_to_carbon:g}, "
        f"CO2/C {pt.co2_to_carbon:g}"
    )
    add(
        f"Feed at {_v(sc.feed.inlet_temperature, 'temperature', 1, units)} {T}; approach to "
        f"equilibrium {to_display(pt.approach, 'temperature_difference', units):g} {dT} "
        f"(composition at {_v(d['equilibrium_temperature_K'], 'temperature', 1, units)} {T})"
    )
    if not d["converged"]:
        add("WARNING: the equilibrium solver did not converge at this point; numbers unreliable.")
    add("")
    head = (f"{'species':<8}{'in ' + F:>14}{'in ' + V:>14}{'in ' + M:>14}{'out ' + F:>14}"
            f"{'out ' + V:>14}{'out ' + M:>14}{'wet mol%':>11}{'dry mol%':>11}")
    add(head)
    add("-" * len(head))
    fin, fout = d["inlet"]["flow_mol_per_s"], d["outlet"]["flow_mol_per_s"]
    min_, mout = d["inlet"]["mass_flow_kg_per_s"], d["outlet"]["mass_flow_kg_per_s"]
    xw, xd = d["outlet"]["mole_fraction"], d["outlet"]["mole_fraction_dry"]

    def flows(n_in, v_in, m_in, n_out, v_out, m_out) -> str:
        return (f"{_v(n_in, 'molar_flow', 3, units):>14}{_v(v_in, 'gas_flow', 0, units):>14}"
                f"{_v(m_in, 'mass_flow', 1, units):>14}{_v(n_out, 'molar_flow', 3, units):>14}"
                f"{_v(v_out, 'gas_flow', 0, units):>14}{_v(m_out, 'mass_flow', 1, units):>14}")

    for s in GAS_SPECIES:
        add(f"{s:<8}" + flows(fin[s], fin[s], min_[s], fout[s], fout[s], mout[s])
            + f"{100 * xw[s]:>11.4f}{100 * xd[s]:>11.4f}")
    tot_in = sum(fin.values())
    tot_out = sum(fout.values())
    add("-" * len(head))
    add(f"{'total':<8}" + flows(tot_in, tot_in, sum(min_.values()), tot_out, tot_out,
                                sum(mout.values())))
    c = d["carbon_deposit_mol_per_s"]
    add(
        f"{'C(gr)':<8}{'':>14}{'':>14}{'':>14}{_v(c, 'molar_flow', 3, units):>14}{'':>14}"
        f"{_v(c * molar_mass(GRAPHITE), 'mass_flow', 1, units):>14}   carbon deposit"
    )
    add("")
    add("Results")
    add(f"  H2 yield              {d['h2_yield']:.4f} mol H2 per mol hydrocarbon C")
    add(f"  H2 potential (H2+CO)  {d['h2_potential']:.4f} mol per mol hydrocarbon C")
    add(f"  methane slip          {100 * d['methane_slip_dry']:.3f} mol% dry")
    add(f"  methane conversion    {100 * d['methane_conversion']:.2f} % (hydrocarbon C basis)")
    add(f"  H2/CO                 {_num(d['h2_co_ratio'], '.3f')} mol/mol")
    carbon_word = "graphite stable: carbon expected" if c > 0 else "no graphite at equilibrium"
    add(f"  carbon activity       {d['carbon_activity']:.4f} ({carbon_word}; outlet gas)")
    t_max = d["carbon_path_max_temperature"]
    add(f"  along the tube, max   {_num(d['carbon_activity_path_max'], '.4f')} at "
        f"{_v(t_max, 'temperature', 1, units)} {T} (equilibrated gas, "
        f"from the inlet at {_v(d['inlet']['temperature_K'], 'temperature', 1, units)} {T})")
    chk = d["carbon_check"]
    routes = ", ".join(f"{ROUTE_WORDS[k]} {v:.4f}"
                       for k, v in chk["real_gas_by_route"].items())
    add(f"  real gas at T         {_num(d['carbon_activity_real_gas'], '.4f')} ({routes})")
    free, words = carbon_verdict(d)
    add(f"  carbon verdict        {'carbon-free' if free else 'NOT carbon-free'}: {words}")
    add("")
    add("Energy balance (enthalpies include formation enthalpies)")
    add(f"  inlet enthalpy flow   {_v(d['inlet']['enthalpy_W'], 'power', 3, units)} {W}")
    add(f"  outlet enthalpy flow  {_v(d['outlet']['enthalpy_W'], 'power', 3, units)} {W}")
    add(f"  duty                  {_v(d['duty_W'], 'power', 3, units)} {W}")
    per_h2 = d["duty_per_h2_J_per_mol"]
    if per_h2 is not None:
        add(f"  duty per H2           {_v(per_h2, 'energy_per_mol', 2, units)} "
            f"{symbol('energy_per_mol', units)} H2 "
            f"({_v(per_h2, 'energy_per_gas_volume', 3, units)} "
            f"{symbol('energy_per_gas_volume', units)} H2)")
    add("")
    r = d["reactions"]
    kj = symbol("reaction_heat", units)
    add("Reactions (K and Q on the 1 bar standard state)")
    add(f"  {'reaction':<24}{'extent ' + F:>15}{'K':>13}{'Q':>13}{'approach ' + dT:>12}"
        f"{'dH298 ' + kj:>14}{'dH(T) ' + kj:>14}")
    for key in ("reforming", "shift"):
        rr = r[key]
        add(
            f"  {rr['equation']:<24}"
            f"{_v(d['extents_mol_per_s'][key], 'molar_flow', 3, units):>15}"
            f"{_num(rr['K'], '.5g'):>13}{_num(rr['Q'], '.5g'):>13}"
            f"{_v(rr['approach_K'], 'temperature_difference', 2, units):>12}"
            f"{_v(rr['heat_298_J_per_mol'], 'reaction_heat', 2, units):>14}"
            f"{_v(rr['heat_J_per_mol'], 'reaction_heat', 2, units):>14}"
        )
    add("")
    cl = d["element_closure"]
    add("Element closure |out - in| / in:  " + "  ".join(f"{k} {v:.1e}" for k, v in cl.items()))
    lines += _train_lines(d, units)
    lines += _plant_lines(d, units)
    add("")
    add(system_note(units))
    add("Caution: " + CAUTION)
    return "\n".join(lines)


def _train_lines(d: dict, units: str = DEFAULT) -> list[str]:
    """The reforming train, stage by stage (nothing when the scenario names no stage)."""
    tr = d.get("train") or {}
    stages = tr.get("stages") or []
    if len(stages) < 2:
        return []
    T, W, F = (symbol(k, units) for k in ("temperature", "power", "molar_flow"))
    out = ["", "Reforming train (every stage at the outlet pressure)"]
    head = (f"  {'stage':<32}{'gas in ' + T:>12}{'out ' + T:>10}{'heat before ' + W:>16}"
            f"{'duty ' + W:>10}{'H2 ' + F:>12}{'CH4 dry%':>10}{'CO dry%':>10}")
    out.append(head)
    for st in stages:
        xd = st["outlet_mole_fraction_dry"]
        out.append(
            f"  {st['label']:<32}{_v(st['inlet_temperature_K'], 'temperature', 1, units):>12}"
            f"{_v(st['temperature_K'], 'temperature', 1, units):>10}"
            f"{_v(st['heat_before_W'], 'power', 3, units):>16}"
            f"{_v(st['duty_W'], 'power', 3, units):>10}"
            f"{_v(st['outlet_flow_mol_per_s']['H2'], 'molar_flow', 2, units):>12}"
            f"{100 * xd['CH4']:>10.3f}{100 * xd['CO']:>10.3f}")
    out.append(f"  H2 product            {tr['h2_product']:.4f} mol H2 per mol hydrocarbon C "
               f"({_v(tr['product']['flow_mol_per_s']['H2'], 'molar_flow', 2, units)} {F})")
    out.append(f"  heat supplied         {_v(tr['duty_W'], 'power', 3, units)} {W} (primary + "
               "reheat of pre-reformed gas)")
    out.append(f"  heat removed          {_v(tr['heat_removed_W'], 'power', 3, units)} {W} "
               "(coolers and shift)")
    out.append(f"  methane slip          {100 * tr['methane_slip_dry']:.3f} mol% dry after the "
               "last reformer")
    return out


def _plant_lines(d: dict, units: str = DEFAULT) -> list[str]:
    """The plant around the reformer (nothing without a [plant] table)."""
    if not d.get("plant"):
        return []
    out = ["", "Plant: furnace, purification and steam"]
    rows = rows_for(PLANT_ROWS, units)
    width = max(len(r[0].strip()) for r in rows) + 2
    for label, unit, key, kind, dec in rows:
        indent = "    " if label.startswith(" ") else "  "
        name = label.strip()
        out.append(f"{indent}{name:<{width - len(indent) + 2}}"
                   f"{display(lookup(d, key), kind, dec, units):>12} {unit}")
    out += ["  WARNING: " + w for w in plant_warnings(d, units)]
    out.append(textwrap.fill(PLANT_NOTE, 96, initial_indent="  ", subsequent_indent="  "))
    return out
