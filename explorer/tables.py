"""Balance tables of one point: one row specification, rendered to HTML and CSV.

The rows are data (label, unit, key in the point's dict, conversion, decimals), so the live
app (from :meth:`thermo.PointResult.to_dict`) and the static export (from numbers embedded in
the page, rendered by a small script that reads the same specification) show the same table.
"""

from __future__ import annotations

import csv
import io
import math

from explorer.safe import spreadsheet_text, text
from thermo.carbon import BINDING_WORDS
from thermo.constants import V_NORMAL
from thermo.plant import GJ_PER_1000NM3_FROM_J_PER_MOL, MJ_PER_KG_FROM_J_PER_MOL
from thermo.species import GAS_SPECIES, GRAPHITE, molar_mass

#: Conversions from SI to display units (the export's script implements the same names).
CONVERSIONS = {
    "": (1.0, 0.0),
    "degC": (1.0, -273.15),
    "bar": (1e-5, 0.0),
    "pct": (100.0, 0.0),
    "kmolh": (3.6, 0.0),
    "kgh": (3600.0, 0.0),
    "MW": (1e-6, 0.0),
    "kJmol": (1e-3, 0.0),
    "MJkmol": (1e-3, 0.0),
    "MJNm3": (1e-6 / V_NORMAL, 0.0),
    "Nm3h": (3600.0 * V_NORMAL, 0.0),
    "th": (3.6, 0.0),
    "kgNm3": (1.0 / V_NORMAL, 0.0),
    "GJ1000Nm3": (GJ_PER_1000NM3_FROM_J_PER_MOL, 0.0),
    "MJkgH2": (MJ_PER_KG_FROM_J_PER_MOL, 0.0),
}

#: (label, unit shown, key path in the point dict, conversion, decimals)
SUMMARY_ROWS: list[tuple[str, str, str, str, int]] = [
    ("Outlet temperature", "degC", "temperature_K", "degC", 1),
    ("Equilibrium evaluated at", "degC", "equilibrium_temperature_K", "degC", 1),
    ("Outlet pressure", "bar abs", "pressure_Pa", "bar", 3),
    ("Steam-to-carbon", "mol/mol", "steam_to_carbon", "", 3),
    ("O2-to-carbon", "mol/mol", "oxygen_to_carbon", "", 3),
    ("CO2-to-carbon", "mol/mol", "co2_to_carbon", "", 3),
    ("Feed inlet temperature", "degC", "inlet.temperature_K", "degC", 1),
    ("H2 yield", "mol H2 / mol hydrocarbon C", "h2_yield", "", 4),
    ("H2 + CO potential", "mol / mol hydrocarbon C", "h2_potential", "", 4),
    ("Methane slip (dry)", "mol %", "methane_slip_dry", "pct", 3),
    ("Methane conversion (hydrocarbon C)", "%", "methane_conversion", "pct", 2),
    ("H2/CO", "mol/mol", "h2_co_ratio", "", 3),
    ("Carbon deposit (graphite)", "kmol/h", "carbon_deposit_mol_per_s", "kmolh", 3),
    ("Carbon activity (graphite = 1)", "-", "carbon_activity", "", 4),
    ("Carbon activity along the tube, largest", "-", "carbon_activity_path_max", "", 4),
    ("  at gas temperature", "degC", "carbon_path_max_temperature", "degC", 1),
    ("Carbon activity of the real gas at T", "-", "carbon_activity_real_gas", "", 4),
]

ENERGY_ROWS: list[tuple[str, str, str, str, int]] = [
    ("Inlet enthalpy flow", "MW", "inlet.enthalpy_W", "MW", 3),
    ("Outlet enthalpy flow", "MW", "outlet.enthalpy_W", "MW", 3),
    ("Duty (feed at inlet T to outlet at T)", "MW", "duty_W", "MW", 3),
    ("Duty per H2", "MJ/kmol H2", "duty_per_h2_J_per_mol", "MJkmol", 2),
    ("Duty per H2", "MJ/Nm3 H2", "duty_per_h2_J_per_mol", "MJNm3", 3),
]

#: (column title, key path with {s} for the species, conversion, decimals)
SPECIES_COLUMNS: list[tuple[str, str, str, int]] = [
    ("in kmol/h", "inlet.flow_mol_per_s.{s}", "kmolh", 3),
    ("in kg/h", "inlet.mass_flow_kg_per_s.{s}", "kgh", 1),
    ("out kmol/h", "outlet.flow_mol_per_s.{s}", "kmolh", 3),
    ("out kg/h", "outlet.mass_flow_kg_per_s.{s}", "kgh", 1),
    ("out mol % wet", "outlet.mole_fraction.{s}", "pct", 4),
    ("out mol % dry", "outlet.mole_fraction_dry.{s}", "pct", 4),
]

#: Reaction table: (column title, key, conversion, decimals or significant digits if < 0)
REACTION_COLUMNS: list[tuple[str, str, str, int]] = [
    ("extent kmol/h", "extents_mol_per_s.{r}", "kmolh", 3),
    ("K (1 bar)", "reactions.{r}.K", "", -5),
    ("Q", "reactions.{r}.Q", "", -5),
    ("approach K", "reactions.{r}.approach_K", "", 2),
    ("dH 298 K kJ/mol", "reactions.{r}.heat_298_J_per_mol", "kJmol", 2),
    ("dH at T kJ/mol", "reactions.{r}.heat_J_per_mol", "kJmol", 2),
]


#: Train totals, shown when the scenario has stages besides the primary reformer.
TRAIN_ROWS: list[tuple[str, str, str, str, int]] = [
    ("H2 product after the last stage", "mol H2 / mol hydrocarbon C", "train.h2_product", "", 4),
    ("H2 product", "kmol/h", "train.product.flow_mol_per_s.H2", "kmolh", 2),
    ("Heat supplied (primary + reheat of pre-reformed gas)", "MW", "train.duty_W", "MW", 3),
    ("Heat removed (coolers and shift stages)", "MW", "train.heat_removed_W", "MW", 3),
    ("Methane slip after the last reformer (dry)", "mol %", "train.methane_slip_dry", "pct", 3),
    ("Graphite in the reforming stages", "kmol/h", "train.carbon_deposit_mol_per_s", "kmolh", 3),
]

#: One row per stage: (column title, key in the stage's dict, conversion, decimals).
STAGE_COLUMNS: list[tuple[str, str, str, int]] = [
    ("gas in degC", "inlet_temperature_K", "degC", 1),
    ("out degC", "temperature_K", "degC", 1),
    ("equilibrium at degC", "equilibrium_temperature_K", "degC", 1),
    ("heat before MW", "heat_before_W", "MW", 3),
    ("stage duty MW", "duty_W", "MW", 3),
    ("H2 out kmol/h", "outlet_flow_mol_per_s.H2", "kmolh", 2),
    ("CH4 dry %", "outlet_mole_fraction_dry.CH4", "pct", 3),
    ("CO dry %", "outlet_mole_fraction_dry.CO", "pct", 3),
    ("CO2 dry %", "outlet_mole_fraction_dry.CO2", "pct", 3),
    ("graphite kmol/h", "carbon_deposit_mol_per_s", "kmolh", 3),
]

#: Notes printed under the stage table.
TRAIN_NOTE = ("Every stage at the outlet pressure. Heat before: reheat of pre-reformed gas to "
              "the primary inlet temperature (> 0), cooling to a shift stage's temperature "
              "(< 0). Adiabatic stages have zero duty; a shift stage's duty is the heat of "
              "shift removed to hold its temperature. Shift stages move CO + H2O = CO2 + H2 "
              "only (CH4 and carbon frozen), at equilibrium at their temperature plus the "
              "approach.")


#: The plant around the reformer (with a [plant] table): (label, unit, key, conversion,
#: decimals), keys of PointResult.to_dict()["plant"].
PLANT_ROWS: list[tuple[str, str, str, str, int]] = [
    ("H2 product after purification", "kmol/h", "plant.h2_product_mol_per_s", "kmolh", 2),
    ("H2 product after purification", "Nm3/h", "plant.h2_product_mol_per_s", "Nm3h", 0),
    ("Natural gas feed to the process (LHV)", "MW", "plant.feed_lhv_W", "MW", 2),
    ("Tail gas to the furnace (LHV)", "MW", "plant.tail_gas_lhv_W", "MW", 2),
    ("Trim natural gas to the furnace (LHV)", "MW", "plant.trim_fuel_W", "MW", 2),
    ("Trim natural gas to the furnace", "kmol/h", "plant.trim_fuel_mol_per_s", "kmolh", 2),
    ("Tail gas beyond what the furnace needs", "MW", "plant.tail_gas_excess_W", "MW", 2),
    ("Fired duty (LHV)", "MW", "plant.fired_duty_W", "MW", 2),
    ("Radiant duty (absorbed by the tubes)", "MW", "plant.radiant_duty_W", "MW", 2),
    ("Radiant efficiency (radiant / fired)", "%", "plant.radiant_efficiency", "pct", 1),
    ("Bridgewall temperature", "degC", "plant.bridgewall_temperature_K", "degC", 0),
    ("Convection section: flue gas, bridgewall to stack", "MW", "plant.convection_heat_W",
     "MW", 2),
    ("  to the combustion air", "MW", "plant.air_preheat_W", "MW", 2),
    ("  to the mixed feed (and oxidant)", "MW", "plant.feed_preheat_W", "MW", 2),
    ("  to reheat pre-reformed gas", "MW", "plant.reheat_W", "MW", 2),
    ("  left for steam", "MW", "plant.flue_steam_heat_W", "MW", 2),
    ("Process gas heat recovered", "MW", "plant.process_gas_heat_W", "MW", 2),
    ("Process gas dew point", "degC", "plant.process_gas_dew_point_K", "degC", 1),
    ("Steam raised", "t/h", "plant.steam_raised_kg_per_s", "th", 2),
    ("Process steam", "t/h", "plant.process_steam_kg_per_s", "th", 2),
    ("Steam export (negative: import)", "t/h", "plant.steam_export_kg_per_s", "th", 2),
    ("Steam value (fuel saved per kg exported)", "MJ/kg", "plant.steam_value_J_per_kg", "MW",
     3),
    ("Net specific energy", "GJ/1000 Nm3 H2", "plant.specific_energy_J_per_mol_h2",
     "GJ1000Nm3", 2),
    ("Net specific energy", "MJ/kg H2", "plant.specific_energy_J_per_mol_h2", "MJkgH2", 1),
    ("Natural gas (feed + trim) per H2", "Nm3/Nm3 H2", "plant.natural_gas_per_h2", "", 3),
    ("Steam export per H2", "kg/Nm3 H2", "plant.steam_export_kg_per_mol_h2", "kgNm3", 3),
]

#: Notes printed under the plant table.
PLANT_NOTE = ("Net specific energy = (natural gas feed LHV + trim fuel LHV - steam export x "
              "steam value) per unit of H2 product; LHV at 25 degC, water as vapour. The "
              "furnace closes its own energy balance: fuel at the supply temperature and "
              "preheated air in, the radiant duty and the flue gas at the bridgewall out. "
              "Ideal-gas enthalpies for the gases, IAPWS-IF97 for water and steam; no heat "
              "losses, no pinch check between the hot gases and the steam.")


def plant_warnings(d: dict) -> list[str]:
    """What the plant numbers of one point flag, in words (none without a [plant] table)."""
    pl = d.get("plant")
    if not pl:
        return []
    out = []
    if pl.get("tail_gas_exceeds_need"):
        out.append(f"The tail gas alone releases {display(pl['tail_gas_excess_W'], 'MW', 2)} "
                   "MW more than the radiant box needs: no trim gas burns, and the excess must "
                   "go elsewhere.")
    if pl.get("process_gas_below_dew_point"):
        out.append("The dew point of the process gas "
                   f"({display(pl['process_gas_dew_point_K'], 'degC', 1)} degC) lies above "
                   "the temperature it is cooled to: water would condense there.")
    flue = pl.get("flue_steam_heat_W")
    if flue is not None and math.isfinite(flue) and flue < 0:
        out.append("The convection section is short of heat for the preheats at this stack "
                   "temperature.")
    return out


def plant_html(d: dict) -> str:
    """The plant around the reformer at one point (empty text without a [plant] table)."""
    if not d.get("plant"):
        return ""
    rows = [[label, display(lookup(d, key), conv, dec), unit]
            for label, unit, key, conv, dec in PLANT_ROWS]
    parts = ["<h4>Plant: furnace, purification and steam</h4>"
             + _table(["quantity", "value", "unit"], rows, "rw-table rw-plant")]
    parts += [f'<p class="rw-warn">{text(w)}</p>' for w in plant_warnings(d)]
    parts.append(f"<p class='rw-small'>{text(PLANT_NOTE)}</p>")
    return "\n".join(parts)


def lookup(d: dict, path: str):
    """Value at a dotted key path of a nested dict (None if absent)."""
    cur = d
    for part in path.split("."):
        if not isinstance(cur, dict) or part not in cur:
            return None
        cur = cur[part]
    return cur


def display(value, conversion: str, decimals: int) -> str:
    """A number in display units as text; '-' for None or non-finite."""
    if value is None or not math.isfinite(value):
        return "-"
    scale, offset = CONVERSIONS[conversion]
    v = value * scale + offset
    if decimals < 0:
        return f"{v:.{-decimals}g}"
    text = f"{v:,.{decimals}f}"
    # A value that rounds to zero reads as zero, without a sign (an adiabatic stage's duty).
    return text[1:] if text.startswith("-") and not text.strip("-0.,") else text


def _table(head: list[str], rows: list[list[str]], cls: str) -> str:
    th = "".join(f"<th>{text(h)}</th>" for h in head)
    body = "".join("<tr>" + "".join(f"<td>{text(c)}</td>" for c in r) + "</tr>"
                   for r in rows)
    return f'<table class="{cls}"><thead><tr>{th}</tr></thead><tbody>{body}</tbody></table>'


def _heading(d: dict, text: str) -> str:
    """A section heading, naming the primary reformer when the point has a train."""
    stages = (d.get("train") or {}).get("stages") or []
    return f"Primary reformer: {text[0].lower()}{text[1:]}" if len(stages) > 1 else text


def balance_html(d: dict) -> str:
    """The whole balance of one point as HTML tables (from PointResult.to_dict())."""
    parts = []
    if not d.get("converged", True):
        parts.append('<p class="rw-warn">The equilibrium solver did not converge at this '
                     "point: its numbers are not reliable.</p>")
    rows = [[label, display(lookup(d, key), conv, dec), unit]
            for label, unit, key, conv, dec in SUMMARY_ROWS]
    parts.append(f"<h4>{_heading(d, 'Outlet summary')}</h4>"
                 + _table(["quantity", "value", "unit"], rows, "rw-table"))
    srows = []
    for s in GAS_SPECIES:
        srows.append([s] + [display(lookup(d, key.format(s=s)), conv, dec)
                            for _, key, conv, dec in SPECIES_COLUMNS])
    srows.append(["C(gr)", "", "", display(d.get("carbon_deposit_mol_per_s"), "kmolh", 3),
                  display((d.get("carbon_deposit_mol_per_s") or 0.0) * molar_mass(GRAPHITE),
                          "kgh", 1),
                  "", ""])
    parts.append(f"<h4>{_heading(d, 'Inlet and outlet by species')}</h4>"
                 + _table(["species"] + [c[0] for c in SPECIES_COLUMNS], srows, "rw-table"))
    erows = [[label, display(lookup(d, key), conv, dec), unit]
             for label, unit, key, conv, dec in ENERGY_ROWS]
    parts.append("<h4>Energy balance</h4>" + _table(["quantity", "value", "unit"], erows,
                                                     "rw-table"))
    rrows = []
    for r in ("reforming", "shift"):
        eq = lookup(d, f"reactions.{r}.equation") or r
        rrows.append([eq] + [display(lookup(d, key.format(r=r)), conv, dec)
                             for _, key, conv, dec in REACTION_COLUMNS])
    parts.append("<h4>Reactions (standard state 1 bar)</h4>"
                 + _table(["reaction"] + [c[0] for c in REACTION_COLUMNS], rrows, "rw-table"))
    cl = d.get("element_closure", {})
    parts.append("<p class='rw-small'>Element closure |out - in| / in: "
                 + ", ".join(f"{k} {v:.1e}" for k, v in cl.items()) + "</p>")
    parts.append(train_html(d))
    parts.append(plant_html(d))
    return "\n".join(parts)


def train_html(d: dict) -> str:
    """The reforming train of one point: totals, stage by stage, and the product gas
    (empty text when the scenario has no stage besides the primary reformer)."""
    train = d.get("train") or {}
    stages = train.get("stages") or []
    if len(stages) < 2:
        return ""
    parts = ["<h4>Reforming train</h4>" + _table(
        ["quantity", "value", "unit"],
        [[label, display(lookup(d, key), conv, dec), unit]
         for label, unit, key, conv, dec in TRAIN_ROWS], "rw-table")]
    rows = [[st["label"]] + [display(lookup(st, key), conv, dec)
                             for _, key, conv, dec in STAGE_COLUMNS] for st in stages]
    parts.append(_table(["stage"] + [c[0] for c in STAGE_COLUMNS], rows, "rw-table"))
    prod = train.get("product", {})
    prows = [[s, display(lookup(prod, f"flow_mol_per_s.{s}"), "kmolh", 3),
              display(lookup(prod, f"mole_fraction_dry.{s}"), "pct", 4)] for s in GAS_SPECIES]
    parts.append("<h4>Product gas after the last stage</h4>"
                 + _table(["species", "kmol/h", "mol % dry"], prows, "rw-table"))
    parts.append(f"<p class='rw-small'>{text(TRAIN_NOTE)}</p>")
    return "\n".join(parts)


def balance_csv(d: dict, title: str = "", notes: str = "") -> str:
    """The balance of one point as CSV text (quantity, value, unit; SI and display units).

    The scenario's `title` and review `notes` head the file as text a spreadsheet never runs
    as a formula (:func:`explorer.safe.spreadsheet_text`).
    """
    buf = io.StringIO()
    w = csv.writer(buf)
    w.writerow(["section", "quantity", "value", "unit"])
    if title:
        w.writerow(["scenario", "title", spreadsheet_text(title), ""])
    if notes:
        w.writerow(["scenario", "review notes", spreadsheet_text(notes), ""])
    for label, unit, key, conv, dec in SUMMARY_ROWS + ENERGY_ROWS:
        w.writerow(["summary", label, display(lookup(d, key), conv, max(dec, 6)).replace(",", ""),
                    unit])
    for s in GAS_SPECIES:
        for title, key, conv, dec in SPECIES_COLUMNS:
            w.writerow(["species", f"{s} {title}",
                        display(lookup(d, key.format(s=s)), conv, max(dec, 6)).replace(",", ""),
                        title.split(" ", 1)[1]])
    for r in ("reforming", "shift"):
        for title, key, conv, dec in REACTION_COLUMNS:
            val = display(lookup(d, key.format(r=r)), conv, dec if dec < 0 else max(dec, 6))
            w.writerow(["reaction", f"{r} {title}", val.replace(",", ""), ""])
    for k, v in d.get("element_closure", {}).items():
        w.writerow(["closure", f"element {k}", f"{v:.3e}", "1"])
    stages = (d.get("train") or {}).get("stages") or []
    if len(stages) > 1:
        for label, unit, key, conv, dec in TRAIN_ROWS:
            w.writerow(["train", label,
                        display(lookup(d, key), conv, max(dec, 6)).replace(",", ""), unit])
        for st in stages:
            for title, key, conv, dec in STAGE_COLUMNS:
                w.writerow(["stage", f"{st['label']}: {title}",
                            display(lookup(st, key), conv, max(dec, 6)).replace(",", ""),
                            title.rsplit(" ", 1)[-1]])
    if d.get("plant"):
        for label, unit, key, conv, dec in PLANT_ROWS:
            w.writerow(["plant", label.strip(),
                        display(lookup(d, key), conv, max(dec, 6)).replace(",", ""), unit])
    return buf.getvalue()


#: Rows of the base-versus-proposal table at one point.
def compare_rows() -> list[tuple[str, str, str, str, int]]:
    """Rows of the base-versus-proposal table: summary, energy and train rows."""
    return SUMMARY_ROWS + ENERGY_ROWS[2:] + TRAIN_ROWS


def change(a, b, conversion: str, decimals: int) -> str:
    """b - a in display units (a scale, never an offset: a change of degC is in K)."""
    if a is None or b is None or not (math.isfinite(a) and math.isfinite(b)):
        return "-"
    scale, _ = CONVERSIONS[conversion]
    v = (b - a) * scale
    if decimals < 0:
        return f"{v:+.{-decimals}g}"
    text = f"{v:+,.{decimals}f}"
    return "0" + text[2:] if not text.strip("+-0.,") else text


def compare_point_html(base: dict, proposal: dict) -> str:
    """Base and proposal at one point side by side, with the change (proposal - base)."""
    rows = []
    for label, unit, key, conv, dec in compare_rows():
        a, b = lookup(base, key), lookup(proposal, key)
        if a is None and b is None:
            continue
        rows.append([label, unit, display(a, conv, dec), display(b, conv, dec),
                     change(a, b, conv, dec)])
    for s in ("CO", "CO2", "CH4"):  # H2 is a row above
        key = f"train.product.flow_mol_per_s.{s}"
        a, b = lookup(base, key), lookup(proposal, key)
        rows.append([f"{s} in the product gas", "kmol/h", display(a, "kmolh", 2),
                     display(b, "kmolh", 2), change(a, b, "kmolh", 2)])
    warn = ""
    if not (base.get("converged", True) and proposal.get("converged", True)):
        warn = ('<p class="rw-warn">One of the two did not converge at this point: the '
                "change is not reliable.</p>")
    return warn + _table(["quantity", "unit", "base", "proposal", "change"], rows,
                         "rw-table rw-compare")


def comparison_html(points: list[dict]) -> str:
    """Pinned points side by side: one column per point, the summary and energy rows."""
    if not points:
        return "<p class='rw-small'>No pinned points yet: select a point on a map and pin it.</p>"
    head = ["quantity", "unit"] + [f"#{i + 1}" for i in range(len(points))]
    rows = []
    trains = any(len((p.get("train") or {}).get("stages") or []) > 1 for p in points)
    for label, unit, key, conv, dec in (SUMMARY_ROWS + ENERGY_ROWS[2:]
                                        + (TRAIN_ROWS if trains else [])):
        rows.append([label, unit] + [display(lookup(p, key), conv, dec) for p in points])
    for s in ("H2", "CO", "CO2", "CH4"):
        rows.append([f"{s} out", "kmol/h"]
                    + [display(lookup(p, f"outlet.flow_mol_per_s.{s}"), "kmolh", 2)
                       for p in points])
    return _table(head, rows, "rw-table rw-compare")


def limit_checks(d: dict, limits) -> list[tuple[str, bool, str]]:
    """Each active review limit at one point (PointResult.to_dict()), as (name, met, words).

    The limits apply as the sweep's feasible mask applies them (thermo.sweep.LIMIT_VARIABLES):
    slip after the last reformer, H2 after the last stage, the primary's radiant duty, and
    carbon in any reforming stage.
    """
    train = d.get("train") or {}
    out = []
    if limits.max_methane_slip_dry is not None:
        slip = train.get("methane_slip_dry", d.get("methane_slip_dry"))
        out.append(("methane slip", slip <= limits.max_methane_slip_dry,
                    f"methane slip {slip * 100:.2f} mol % dry (limit "
                    f"{limits.max_methane_slip_dry * 100:g})"))
    if limits.min_h2_yield is not None:
        h2 = train.get("h2_product", d.get("h2_yield"))
        out.append(("H2", h2 >= limits.min_h2_yield,
                    f"H2 {h2:.3f} mol per mol hydrocarbon C (limit at least "
                    f"{limits.min_h2_yield:g})"))
    if limits.max_duty is not None:
        duty = d["duty_W"]
        out.append(("duty", duty <= limits.max_duty,
                    f"radiant duty {duty / 1e6:.2f} MW (limit {limits.max_duty / 1e6:g})"))
    if limits.max_fired_duty is not None and d.get("plant"):
        fired = d["plant"]["fired_duty_W"]
        out.append(("fired duty", fired <= limits.max_fired_duty,
                    f"fired duty {fired / 1e6:.2f} MW LHV (limit "
                    f"{limits.max_fired_duty / 1e6:g})"))
    if limits.carbon_free:
        free, words = carbon_verdict(d)
        out.append(("carbon", free, words))
    return out


def carbon_verdict(d: dict) -> tuple[bool, str]:
    """Whether a point is free of carbon by the binding criterion (thermo.carbon), and the
    verdict in words naming that criterion."""
    chk = d.get("carbon_check") or {}
    free = bool(d["carbon_free"])
    binding = chk.get("binding", "outlet_equilibrium")
    why = BINDING_WORDS[binding]
    ln_a = chk.get("verdict_ln_activity")
    ref = "catalyst carbon" if chk.get("reference") == "catalyst" else "graphite"
    if binding in ("higher_hydrocarbons", "other_stage"):
        return False, f"carbon risk: {why}"
    a = math.exp(min(ln_a, 700.0)) if ln_a is not None else float("nan")
    if not free:
        return False, f"carbon forms: {why}, carbon activity {a:.2f} ({ref} = 1)"
    return True, f"carbon-free: binding is the {why}, carbon activity {a:.2f} ({ref} = 1)"


def verdict_html(d: dict, limits, prefix: str = "") -> str:
    """The verdict at one point in words: within the window, or which limits it breaks
    (after `prefix`, our own words naming the point)."""
    checks = limit_checks(d, limits)
    if not d.get("converged", True):
        return ('<p class="rw-verdict rw-bad"><b>Not converged</b>: the solver found no '
                "reliable answer at this point.</p>")
    broken = [w for _, ok, w in checks if not ok]
    met = [w for _, ok, w in checks if ok]
    if not checks:
        head = "<b>No review limits set.</b>"
    elif broken:
        head = "<b>Outside the feasible window</b>: " + "; ".join(text(w) for w in broken) + "."
    else:
        head = "<b>Within every review limit.</b>"
    tail = (" Met: " + "; ".join(text(w) for w in met) + ".") if met else ""
    cls = "rw-bad" if broken else "rw-ok"
    return f'<p class="rw-verdict {cls}">{text(prefix)}{head}{tail}</p>'
