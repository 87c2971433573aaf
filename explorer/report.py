"""Plain-text balance of one point, in the engineer's display units (CLI output)."""

from __future__ import annotations

import math
import textwrap

from explorer import CAUTION
from explorer.tables import (
    PLANT_NOTE,
    PLANT_ROWS,
    carbon_verdict,
    display,
    lookup,
    plant_warnings,
)
from thermo import units
from thermo.api import PointResult
from thermo.carbon import ROUTE_WORDS
from thermo.constants import V_NORMAL
from thermo.species import GAS_SPECIES, GRAPHITE, molar_mass


def _num(v: float, fmt: str) -> str:
    return "-" if v is None or not math.isfinite(v) else format(v, fmt)


def point_report(pt: PointResult) -> str:
    """The whole balance of `pt` as an aligned text report (degC, bar, kmol/h, kg/h, MW)."""
    d = pt.to_dict()
    sc = pt.scenario
    lines = []
    add = lines.append
    add(f"{sc.title}")
    mode = "adiabatic (duty = 0)" if pt.adiabatic else "fixed"
    add(
        f"Outlet {units.degC_from_K(pt.temperature):.1f} degC ({mode}), "
        f"{units.bar_from_Pa(pt.pressure):.3f} bar abs ({units.barg_from_Pa(pt.pressure):.3f} "
        f"barg), S/C {pt.steam_to_carbon:g}, O2/C {pt.oxygen_to_carbon:g}, "
        f"CO2/C {pt.co2_to_carbon:g}"
    )
    add(
        f"Feed at {units.degC_from_K(sc.feed.inlet_temperature):.1f} degC; approach to "
        f"equilibrium {pt.approach:g} K (composition at "
        f"{units.degC_from_K(d['equilibrium_temperature_K']):.1f} degC)"
    )
    if not d["converged"]:
        add("WARNING: the equilibrium solver did not converge at this point; numbers unreliable.")
    add("")
    head = (f"{'species':<8}{'in kmol/h':>14}{'in kg/h':>14}{'out kmol/h':>14}{'out kg/h':>14}"
            f"{'wet mol%':>11}{'dry mol%':>11}")
    add(head)
    add("-" * len(head))
    fin, fout = d["inlet"]["flow_mol_per_s"], d["outlet"]["flow_mol_per_s"]
    min_, mout = d["inlet"]["mass_flow_kg_per_s"], d["outlet"]["mass_flow_kg_per_s"]
    xw, xd = d["outlet"]["mole_fraction"], d["outlet"]["mole_fraction_dry"]
    for s in GAS_SPECIES:
        add(
            f"{s:<8}{units.kmol_per_h_from_mol_per_s(fin[s]):>14.3f}"
            f"{units.kg_per_h_from_kg_per_s(min_[s]):>14.1f}"
            f"{units.kmol_per_h_from_mol_per_s(fout[s]):>14.3f}"
            f"{units.kg_per_h_from_kg_per_s(mout[s]):>14.1f}"
            f"{100 * xw[s]:>11.4f}{100 * xd[s]:>11.4f}"
        )
    tot_in = sum(fin.values())
    tot_out = sum(fout.values())
    add("-" * len(head))
    add(
        f"{'total':<8}{units.kmol_per_h_from_mol_per_s(tot_in):>14.3f}"
        f"{units.kg_per_h_from_kg_per_s(sum(min_.values())):>14.1f}"
        f"{units.kmol_per_h_from_mol_per_s(tot_out):>14.3f}"
        f"{units.kg_per_h_from_kg_per_s(sum(mout.values())):>14.1f}"
    )
    c = d["carbon_deposit_mol_per_s"]
    add(
        f"{'C(gr)':<8}{'':>14}{'':>14}{units.kmol_per_h_from_mol_per_s(c):>14.3f}"
        f"{units.kg_per_h_from_kg_per_s(c * molar_mass(GRAPHITE)):>14.1f}   carbon deposit"
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
        f"{_num(math.nan if t_max is None else t_max - 273.15, '.1f')} degC (equilibrated gas, "
        f"from the inlet at {d['inlet']['temperature_K'] - 273.15:.1f} degC)")
    chk = d["carbon_check"]
    routes = ", ".join(f"{ROUTE_WORDS[k]} {v:.4f}"
                       for k, v in chk["real_gas_by_route"].items())
    add(f"  real gas at T         {_num(d['carbon_activity_real_gas'], '.4f')} ({routes})")
    free, words = carbon_verdict(d)
    add(f"  carbon verdict        {'carbon-free' if free else 'NOT carbon-free'}: {words}")
    add("")
    add("Energy balance (enthalpies include formation enthalpies)")
    add(f"  inlet enthalpy flow   {units.MW_from_W(d['inlet']['enthalpy_W']):.3f} MW")
    add(f"  outlet enthalpy flow  {units.MW_from_W(d['outlet']['enthalpy_W']):.3f} MW")
    add(f"  duty                  {units.MW_from_W(d['duty_W']):.3f} MW")
    per_h2 = d["duty_per_h2_J_per_mol"]
    if per_h2 is not None:
        add(f"  duty per H2           {per_h2 / 1000:.2f} MJ/kmol H2 "
            f"({per_h2 / V_NORMAL / 1e6:.3f} MJ/Nm3 H2)")
    add("")
    r = d["reactions"]
    add("Reactions (K and Q on the 1 bar standard state)")
    add(f"  {'reaction':<24}{'extent kmol/h':>15}{'K':>13}{'Q':>13}{'approach K':>12}"
        f"{'dH298 kJ/mol':>14}{'dH(T) kJ/mol':>14}")
    for key in ("reforming", "shift"):
        rr = r[key]
        add(
            f"  {rr['equation']:<24}"
            f"{units.kmol_per_h_from_mol_per_s(d['extents_mol_per_s'][key]):>15.3f}"
            f"{_num(rr['K'], '.5g'):>13}{_num(rr['Q'], '.5g'):>13}"
            f"{_num(rr['approach_K'], '.2f'):>12}"
            f"{rr['heat_298_J_per_mol'] / 1000:>14.2f}{rr['heat_J_per_mol'] / 1000:>14.2f}"
        )
    add("")
    cl = d["element_closure"]
    add("Element closure |out - in| / in:  " + "  ".join(f"{k} {v:.1e}" for k, v in cl.items()))
    lines += _train_lines(d)
    lines += _plant_lines(d)
    add("")
    add("Caution: " + CAUTION)
    return "\n".join(lines)


def _train_lines(d: dict) -> list[str]:
    """The reforming train, stage by stage (nothing when the scenario names no stage)."""
    tr = d.get("train") or {}
    stages = tr.get("stages") or []
    if len(stages) < 2:
        return []
    mw = units.MW_from_W
    kmolh = units.kmol_per_h_from_mol_per_s
    out = ["", "Reforming train (every stage at the outlet pressure)"]
    head = (f"  {'stage':<32}{'gas in degC':>12}{'out degC':>10}{'heat before MW':>16}"
            f"{'duty MW':>10}{'H2 kmol/h':>12}{'CH4 dry%':>10}{'CO dry%':>10}")
    out.append(head)
    for st in stages:
        xd = st["outlet_mole_fraction_dry"]
        duty = mw(st["duty_W"])
        out.append(
            f"  {st['label']:<32}{units.degC_from_K(st['inlet_temperature_K']):>12.1f}"
            f"{_num(units.degC_from_K(st['temperature_K']), '.1f'):>10}"
            f"{mw(st['heat_before_W']):>16.3f}{0.0 if abs(duty) < 5e-4 else duty:>10.3f}"
            f"{kmolh(st['outlet_flow_mol_per_s']['H2']):>12.2f}"
            f"{100 * xd['CH4']:>10.3f}{100 * xd['CO']:>10.3f}")
    out.append(f"  H2 product            {tr['h2_product']:.4f} mol H2 per mol hydrocarbon C "
               f"({kmolh(tr['product']['flow_mol_per_s']['H2']):.2f} kmol/h)")
    out.append(f"  heat supplied         {mw(tr['duty_W']):.3f} MW (primary + reheat of "
               "pre-reformed gas)")
    out.append(f"  heat removed          {mw(tr['heat_removed_W']):.3f} MW (coolers and shift)")
    out.append(f"  methane slip          {100 * tr['methane_slip_dry']:.3f} mol% dry after the "
               "last reformer")
    return out


def _plant_lines(d: dict) -> list[str]:
    """The plant around the reformer (nothing without a [plant] table)."""
    if not d.get("plant"):
        return []
    out = ["", "Plant: furnace, purification and steam"]
    width = max(len(r[0].strip()) for r in PLANT_ROWS) + 2
    for label, unit, key, conv, dec in PLANT_ROWS:
        indent = "    " if label.startswith(" ") else "  "
        name = label.strip()
        out.append(f"{indent}{name:<{width - len(indent) + 2}}"
                   f"{display(lookup(d, key), conv, dec):>12} {unit}")
    out += ["  WARNING: " + w for w in plant_warnings(d)]
    out.append(textwrap.fill(PLANT_NOTE, 96, initial_indent="  ", subsequent_indent="  "))
    return out
