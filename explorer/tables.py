"""Balance tables of one point: one row specification, rendered to HTML and CSV.

The rows are data (label, unit, key in the point's dict, conversion, decimals), so the live
app (from :meth:`thermo.PointResult.to_dict`) and the static export (from numbers embedded in
the page, rendered by a small script that reads the same specification) show the same table.
"""

from __future__ import annotations

import csv
import io
import math

from explorer.display import DEFAULT, decimals, difference, number, symbol, system_note, to_display
from explorer.safe import spreadsheet_text, text
from thermo.carbon import BINDING_WORDS
from thermo.species import GAS_SPECIES, GRAPHITE, molar_mass

#: Every row and column below names a display kind of :mod:`explorer.display` and its
#: decimals in the metric system; "{u}" in a unit or title is the kind's unit in the system
#: shown (:func:`rows_for`, :func:`columns_for`).

#: (label, unit shown, key path in the point dict, display kind, metric decimals)
SUMMARY_ROWS: list[tuple[str, str, str, str, int]] = [
    ("Outlet temperature", "{u}", "temperature_K", "temperature", 1),
    ("Equilibrium evaluated at", "{u}", "equilibrium_temperature_K", "temperature", 1),
    ("Outlet pressure", "{u}", "pressure_Pa", "pressure", 3),
    ("Steam-to-carbon", "mol/mol", "steam_to_carbon", "", 3),
    ("O2-to-carbon", "mol/mol", "oxygen_to_carbon", "", 3),
    ("CO2-to-carbon", "mol/mol", "co2_to_carbon", "", 3),
    ("Feed inlet temperature", "{u}", "inlet.temperature_K", "temperature", 1),
    ("H2 yield", "mol H2 / mol hydrocarbon C", "h2_yield", "", 4),
    ("H2 + CO potential", "mol / mol hydrocarbon C", "h2_potential", "", 4),
    ("Methane slip (dry)", "mol %", "methane_slip_dry", "percent", 3),
    ("Methane conversion (hydrocarbon C)", "%", "methane_conversion", "percent", 2),
    ("H2/CO", "mol/mol", "h2_co_ratio", "", 3),
    ("Carbon deposit (graphite)", "{u}", "carbon_deposit_mol_per_s", "molar_flow", 3),
    ("Carbon activity (graphite = 1)", "-", "carbon_activity", "", 4),
    ("Carbon activity along the tube, largest", "-", "carbon_activity_path_max", "", 4),
    ("  at gas temperature", "{u}", "carbon_path_max_temperature", "temperature", 1),
    ("Carbon activity of the real gas at T", "-", "carbon_activity_real_gas", "", 4),
]

ENERGY_ROWS: list[tuple[str, str, str, str, int]] = [
    ("Inlet enthalpy flow", "{u}", "inlet.enthalpy_W", "power", 3),
    ("Outlet enthalpy flow", "{u}", "outlet.enthalpy_W", "power", 3),
    ("Duty (feed at inlet T to outlet at T)", "{u}", "duty_W", "power", 3),
    ("Duty per H2", "{u} H2", "duty_per_h2_J_per_mol", "energy_per_mol", 2),
    ("Duty per H2", "{u} H2", "duty_per_h2_J_per_mol", "energy_per_gas_volume", 3),
]

#: (column title, key path with {s} for the species, display kind, metric decimals); a gas
#: volume flow (Nm3/h or MMSCFD) beside each molar flow.
SPECIES_COLUMNS: list[tuple[str, str, str, int]] = [
    ("in {u}", "inlet.flow_mol_per_s.{s}", "molar_flow", 3),
    ("in {u}", "inlet.flow_mol_per_s.{s}", "gas_flow", 0),
    ("in {u}", "inlet.mass_flow_kg_per_s.{s}", "mass_flow", 1),
    ("out {u}", "outlet.flow_mol_per_s.{s}", "molar_flow", 3),
    ("out {u}", "outlet.flow_mol_per_s.{s}", "gas_flow", 0),
    ("out {u}", "outlet.mass_flow_kg_per_s.{s}", "mass_flow", 1),
    ("out mol % wet", "outlet.mole_fraction.{s}", "percent", 4),
    ("out mol % dry", "outlet.mole_fraction_dry.{s}", "percent", 4),
]

#: Reaction table: (column title, key, display kind, decimals or significant digits if < 0)
REACTION_COLUMNS: list[tuple[str, str, str, int]] = [
    ("extent {u}", "extents_mol_per_s.{r}", "molar_flow", 3),
    ("K (1 bar)", "reactions.{r}.K", "", -5),
    ("Q", "reactions.{r}.Q", "", -5),
    ("approach {u}", "reactions.{r}.approach_K", "temperature_difference", 2),
    ("dH 298 K {u}", "reactions.{r}.heat_298_J_per_mol", "reaction_heat", 2),
    ("dH at T {u}", "reactions.{r}.heat_J_per_mol", "reaction_heat", 2),
]


#: Train totals, shown when the scenario has stages besides the primary reformer.
TRAIN_ROWS: list[tuple[str, str, str, str, int]] = [
    ("H2 product after the last stage", "mol H2 / mol hydrocarbon C", "train.h2_product", "", 4),
    ("H2 product", "{u}", "train.product.flow_mol_per_s.H2", "molar_flow", 2),
    ("Heat supplied (primary + reheat of pre-reformed gas)", "{u}", "train.duty_W", "power", 3),
    ("Heat removed (coolers and shift stages)", "{u}", "train.heat_removed_W", "power", 3),
    ("Methane slip after the last reformer (dry)", "mol %", "train.methane_slip_dry",
     "percent", 3),
    ("Graphite in the reforming stages", "{u}", "train.carbon_deposit_mol_per_s",
     "molar_flow", 3),
]

#: One row per stage: (column title, key in the stage's dict, display kind, decimals).
STAGE_COLUMNS: list[tuple[str, str, str, int]] = [
    ("gas in {u}", "inlet_temperature_K", "temperature", 1),
    ("out {u}", "temperature_K", "temperature", 1),
    ("equilibrium at {u}", "equilibrium_temperature_K", "temperature", 1),
    ("heat before {u}", "heat_before_W", "power", 3),
    ("stage duty {u}", "duty_W", "power", 3),
    ("H2 out {u}", "outlet_flow_mol_per_s.H2", "molar_flow", 2),
    ("CH4 dry %", "outlet_mole_fraction_dry.CH4", "percent", 3),
    ("CO dry %", "outlet_mole_fraction_dry.CO", "percent", 3),
    ("CO2 dry %", "outlet_mole_fraction_dry.CO2", "percent", 3),
    ("graphite {u}", "carbon_deposit_mol_per_s", "molar_flow", 3),
]

#: Product gas after the last stage: (column title, key with {s}, display kind, decimals).
PRODUCT_COLUMNS: list[tuple[str, str, str, int]] = [
    ("{u}", "flow_mol_per_s.{s}", "molar_flow", 3),
    ("{u}", "flow_mol_per_s.{s}", "gas_flow", 0),
    ("mol % dry", "mole_fraction_dry.{s}", "percent", 4),
]


def rows_for(rows, units: str = DEFAULT) -> list[tuple[str, str, str, str, int]]:
    """Rows (label, unit, key, kind, metric decimals) as shown in unit system `units`: the
    unit named and the decimals of that system."""
    return [(label, unit.format(u=symbol(kind, units)), key, kind,
             decimals(kind, dec, units)) for label, unit, key, kind, dec in rows]


def columns_for(columns, units: str = DEFAULT) -> list[tuple[str, str, str, int]]:
    """Columns (title, key, kind, metric decimals) as shown in unit system `units`."""
    return [(title.format(u=symbol(kind, units)), key, kind, decimals(kind, dec, units))
            for title, key, kind, dec in columns]


def spec(units: str = DEFAULT) -> dict:
    """Every table layout in unit system `units` (the review file's script reads this)."""
    return {"summary": rows_for(SUMMARY_ROWS, units), "energy": rows_for(ENERGY_ROWS, units),
            "species": columns_for(SPECIES_COLUMNS, units),
            "reactions": columns_for(REACTION_COLUMNS, units),
            "train": rows_for(TRAIN_ROWS, units), "stage": columns_for(STAGE_COLUMNS, units),
            "product": columns_for(PRODUCT_COLUMNS, units),
            "plant": rows_for(PLANT_ROWS, units), "train_note": TRAIN_NOTE,
            "compare": rows_for(compare_rows(), units),
            "molar_flow": [symbol("molar_flow", units), decimals("molar_flow", 2, units)],
            "symbols": {k: symbol(k, units) for k in ("temperature", "pressure", "power",
                                                       "temperature_difference")},
            "units": units, "units_note": system_note(units)}


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
    ("H2 product after purification", "{u}", "plant.h2_product_mol_per_s", "molar_flow", 2),
    ("H2 product after purification", "{u}", "plant.h2_product_mol_per_s", "gas_flow", 0),
    ("Natural gas feed to the process (LHV)", "{u}", "plant.feed_lhv_W", "power", 2),
    ("Tail gas to the furnace (LHV)", "{u}", "plant.tail_gas_lhv_W", "power", 2),
    ("Trim natural gas to the furnace (LHV)", "{u}", "plant.trim_fuel_W", "power", 2),
    ("Trim natural gas to the furnace", "{u}", "plant.trim_fuel_mol_per_s", "molar_flow", 2),
    ("Tail gas beyond what the furnace needs", "{u}", "plant.tail_gas_excess_W", "power", 2),
    ("Fired duty (LHV)", "{u}", "plant.fired_duty_W", "power", 2),
    ("Radiant duty (absorbed by the tubes)", "{u}", "plant.radiant_duty_W", "power", 2),
    ("Radiant efficiency (radiant / fired)", "%", "plant.radiant_efficiency", "percent", 1),
    ("Bridgewall temperature", "{u}", "plant.bridgewall_temperature_K", "temperature", 0),
    ("Convection section: flue gas, bridgewall to stack", "{u}", "plant.convection_heat_W",
     "power", 2),
    ("  to the combustion air", "{u}", "plant.air_preheat_W", "power", 2),
    ("  to the mixed feed (and oxidant)", "{u}", "plant.feed_preheat_W", "power", 2),
    ("  to reheat pre-reformed gas", "{u}", "plant.reheat_W", "power", 2),
    ("  left for steam", "{u}", "plant.flue_steam_heat_W", "power", 2),
    ("Process gas heat recovered", "{u}", "plant.process_gas_heat_W", "power", 2),
    ("Process gas dew point", "{u}", "plant.process_gas_dew_point_K", "temperature", 1),
    ("Steam raised", "{u}", "plant.steam_raised_kg_per_s", "steam_flow", 2),
    ("Process steam", "{u}", "plant.process_steam_kg_per_s", "steam_flow", 2),
    ("Steam export (negative: import)", "{u}", "plant.steam_export_kg_per_s", "steam_flow", 2),
    ("Steam value (fuel saved per kg exported)", "{u}", "plant.steam_value_J_per_kg",
     "energy_per_mass", 3),
    ("Net specific energy", "{u} H2", "plant.specific_energy_J_per_mol_h2",
     "specific_energy", 2),
    ("Net specific energy", "{u} H2", "plant.specific_energy_J_per_mol_h2",
     "energy_per_kg_h2", 1),
    ("Natural gas (feed + trim) per H2", "{u} H2", "plant.natural_gas_per_h2",
     "gas_volume_ratio", 3),
    ("Steam export per H2", "{u} H2", "plant.steam_export_kg_per_mol_h2",
     "mass_per_gas_volume", 3),
]

#: Notes printed under the plant table.
PLANT_NOTE = ("Net specific energy = (natural gas feed LHV + trim fuel LHV - steam export x "
              "steam value) per unit of H2 product; LHV at 25 degC, water as vapour. The "
              "furnace closes its own energy balance: fuel at the supply temperature and "
              "preheated air in, the radiant duty and the flue gas at the bridgewall out. "
              "Ideal-gas enthalpies for the gases, IAPWS-IF97 for water and steam; no heat "
              "losses, no pinch check between the hot gases and the steam.")


def plant_warnings(d: dict, units: str = DEFAULT) -> list[str]:
    """What the plant numbers of one point flag, in words (none without a [plant] table)."""
    pl = d.get("plant")
    if not pl:
        return []
    out = []
    if pl.get("tail_gas_exceeds_need"):
        out.append("The tail gas alone releases "
                   f"{display(pl['tail_gas_excess_W'], 'power', 2, units)} "
                   f"{symbol('power', units)} more than the radiant box needs: no trim gas "
                   "burns, and the excess must go elsewhere.")
    if pl.get("process_gas_below_dew_point"):
        out.append("The dew point of the process gas "
                   f"({display(pl['process_gas_dew_point_K'], 'temperature', 1, units)} "
                   f"{symbol('temperature', units)}) lies above the temperature it is cooled "
                   "to: water would condense there.")
    flue = pl.get("flue_steam_heat_W")
    if flue is not None and math.isfinite(flue) and flue < 0:
        out.append("The convection section is short of heat for the preheats at this stack "
                   "temperature.")
    return out


def plant_html(d: dict, units: str = DEFAULT) -> str:
    """The plant around the reformer at one point (empty text without a [plant] table)."""
    if not d.get("plant"):
        return ""
    rows = [[label, display(lookup(d, key), kind, dec, units), unit]
            for label, unit, key, kind, dec in rows_for(PLANT_ROWS, units)]
    parts = ["<h4>Plant: furnace, purification and steam</h4>"
             + _table(["quantity", "value", "unit"], rows, "rw-table rw-plant")]
    parts += [f'<p class="rw-warn">{text(w)}</p>' for w in plant_warnings(d, units)]
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


def display(value, kind: str, decimals: int, units: str = DEFAULT) -> str:
    """SI `value` of display kind `kind` as text in unit system `units`, with `decimals`
    already those of that system (:func:`rows_for`); '-' for None or non-finite."""
    if value is None or not math.isfinite(value):
        return "-"
    return number(to_display(value, kind, units), decimals)


def _table(head: list[str], rows: list[list[str]], cls: str) -> str:
    th = "".join(f"<th>{text(h)}</th>" for h in head)
    body = "".join("<tr>" + "".join(f"<td>{text(c)}</td>" for c in r) + "</tr>"
                   for r in rows)
    return f'<table class="{cls}"><thead><tr>{th}</tr></thead><tbody>{body}</tbody></table>'


def _heading(d: dict, text: str) -> str:
    """A section heading, naming the primary reformer when the point has a train."""
    stages = (d.get("train") or {}).get("stages") or []
    return f"Primary reformer: {text[0].lower()}{text[1:]}" if len(stages) > 1 else text


def _total(d: dict, columns, units: str) -> list[str]:
    """The total row of a species table: each column summed over the gas species (flows and
    mole fractions alike), in the order of GAS_SPECIES (as the review file's script sums)."""
    out = []
    for _, key, kind, dec in columns:
        vals = [lookup(d, key.format(s=s)) for s in GAS_SPECIES]
        vals = [v for v in vals if v is not None]
        out.append(display(sum(vals), kind, dec, units) if vals else "-")
    return out


def _graphite_row(d: dict, columns, units: str) -> list[str]:
    """The C(gr) row of the species table: graphite in the outlet's molar and mass flows."""
    c = d.get("carbon_deposit_mol_per_s")
    row = []
    for _, key, kind, dec in columns:
        if key.startswith("outlet.flow_mol_per_s") and kind == "molar_flow":
            row.append(display(c, kind, dec, units))
        elif key.startswith("outlet.mass_flow"):
            row.append(display((c or 0.0) * molar_mass(GRAPHITE), kind, dec, units))
        else:
            row.append("")
    return row


def balance_html(d: dict, units: str = DEFAULT) -> str:
    """The whole balance of one point as HTML tables (from PointResult.to_dict()), in unit
    system `units` (explorer.display)."""
    parts = []
    if not d.get("converged", True):
        parts.append('<p class="rw-warn">The equilibrium solver did not converge at this '
                     "point: its numbers are not reliable.</p>")
    rows = [[label, display(lookup(d, key), kind, dec, units), unit]
            for label, unit, key, kind, dec in rows_for(SUMMARY_ROWS, units)]
    parts.append(f"<h4>{_heading(d, 'Outlet summary')}</h4>"
                 + _table(["quantity", "value", "unit"], rows, "rw-table"))
    cols = columns_for(SPECIES_COLUMNS, units)
    srows = [[s] + [display(lookup(d, key.format(s=s)), kind, dec, units)
                    for _, key, kind, dec in cols] for s in GAS_SPECIES]
    srows.append(["total gas"] + _total(d, cols, units))
    srows.append(["C(gr)"] + _graphite_row(d, cols, units))
    parts.append(f"<h4>{_heading(d, 'Inlet and outlet by species')}</h4>"
                 + _table(["species"] + [c[0] for c in cols], srows, "rw-table"))
    erows = [[label, display(lookup(d, key), kind, dec, units), unit]
             for label, unit, key, kind, dec in rows_for(ENERGY_ROWS, units)]
    parts.append("<h4>Energy balance</h4>" + _table(["quantity", "value", "unit"], erows,
                                                     "rw-table"))
    rcols = columns_for(REACTION_COLUMNS, units)
    rrows = []
    for r in ("reforming", "shift"):
        eq = lookup(d, f"reactions.{r}.equation") or r
        rrows.append([eq] + [display(lookup(d, key.format(r=r)), kind, dec, units)
                             for _, key, kind, dec in rcols])
    parts.append("<h4>Reactions (standard state 1 bar)</h4>"
                 + _table(["reaction"] + [c[0] for c in rcols], rrows, "rw-table"))
    cl = d.get("element_closure", {})
    parts.append("<p class='rw-small'>Element closure |out - in| / in: "
                 + ", ".join(f"{k} {v:.1e}" for k, v in cl.items()) + "</p>")
    parts.append(train_html(d, units))
    parts.append(plant_html(d, units))
    parts.append(f"<p class='rw-small'>{text(system_note(units))}</p>")
    return "\n".join(parts)


def train_html(d: dict, units: str = DEFAULT) -> str:
    """The reforming train of one point: totals, stage by stage, and the product gas
    (empty text when the scenario has no stage besides the primary reformer)."""
    train = d.get("train") or {}
    stages = train.get("stages") or []
    if len(stages) < 2:
        return ""
    parts = ["<h4>Reforming train</h4>" + _table(
        ["quantity", "value", "unit"],
        [[label, display(lookup(d, key), kind, dec, units), unit]
         for label, unit, key, kind, dec in rows_for(TRAIN_ROWS, units)], "rw-table")]
    scols = columns_for(STAGE_COLUMNS, units)
    rows = [[st["label"]] + [display(lookup(st, key), kind, dec, units)
                             for _, key, kind, dec in scols] for st in stages]
    parts.append(_table(["stage"] + [c[0] for c in scols], rows, "rw-table"))
    prod = train.get("product", {})
    pcols = columns_for(PRODUCT_COLUMNS, units)
    prows = [[s] + [display(lookup(prod, key.format(s=s)), kind, dec, units)
                    for _, key, kind, dec in pcols] for s in GAS_SPECIES]
    prows.append(["total gas"] + _total(prod, pcols, units))
    parts.append("<h4>Product gas after the last stage</h4>"
                 + _table(["species"] + [c[0] for c in pcols], prows, "rw-table"))
    parts.append(f"<p class='rw-small'>{text(TRAIN_NOTE)}</p>")
    return "\n".join(parts)


def _csv_value(value, kind: str, dec: int, units: str) -> str:
    return display(value, kind, dec if dec < 0 else max(dec, 6), units).replace(",", "")


def balance_csv(d: dict, title: str = "", notes: str = "", units: str = DEFAULT) -> str:
    """The balance of one point as CSV text (section, quantity, value, unit), in unit
    system `units` (explorer.display; the JSON download stays SI).

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
    w.writerow(["scenario", "display units", units, system_note(units)])
    for label, unit, key, kind, dec in rows_for(SUMMARY_ROWS + ENERGY_ROWS, units):
        w.writerow(["summary", label, _csv_value(lookup(d, key), kind, dec, units), unit])
    for s in GAS_SPECIES:
        for title, key, kind, dec in columns_for(SPECIES_COLUMNS, units):
            w.writerow(["species", f"{s} {title}",
                        _csv_value(lookup(d, key.format(s=s)), kind, dec, units),
                        title.split(" ", 1)[1]])
    for r in ("reforming", "shift"):
        for title, key, kind, dec in columns_for(REACTION_COLUMNS, units):
            w.writerow(["reaction", f"{r} {title}",
                        _csv_value(lookup(d, key.format(r=r)), kind, dec, units), ""])
    for k, v in d.get("element_closure", {}).items():
        w.writerow(["closure", f"element {k}", f"{v:.3e}", "1"])
    stages = (d.get("train") or {}).get("stages") or []
    if len(stages) > 1:
        for label, unit, key, kind, dec in rows_for(TRAIN_ROWS, units):
            w.writerow(["train", label, _csv_value(lookup(d, key), kind, dec, units), unit])
        for st in stages:
            for title, key, kind, dec in columns_for(STAGE_COLUMNS, units):
                w.writerow(["stage", f"{st['label']}: {title}",
                            _csv_value(lookup(st, key), kind, dec, units),
                            title.rsplit(" ", 1)[-1]])
    if d.get("plant"):
        for label, unit, key, kind, dec in rows_for(PLANT_ROWS, units):
            w.writerow(["plant", label.strip(), _csv_value(lookup(d, key), kind, dec, units),
                        unit])
    return buf.getvalue()


#: Rows of the base-versus-proposal table at one point.
def compare_rows() -> list[tuple[str, str, str, str, int]]:
    """Rows of the base-versus-proposal table: summary, energy and train rows (metric
    decimals and unit templates; :func:`rows_for` names them in a unit system)."""
    return SUMMARY_ROWS + ENERGY_ROWS[2:] + TRAIN_ROWS


def change(a, b, kind: str, decimals: int, units: str = DEFAULT) -> str:
    """b - a in display units (a scale, never an offset: a change of degC is in K)."""
    if a is None or b is None or not (math.isfinite(a) and math.isfinite(b)):
        return "-"
    v = difference(b - a, kind, units)
    if decimals < 0:
        return f"{v:+.{-decimals}g}"
    text = f"{v:+,.{decimals}f}"
    return "0" + text[2:] if not text.strip("+-0.,") else text


def compare_point_html(base: dict, proposal: dict, units: str = DEFAULT) -> str:
    """Base and proposal at one point side by side, with the change (proposal - base)."""
    rows = []
    for label, unit, key, kind, dec in rows_for(compare_rows(), units):
        a, b = lookup(base, key), lookup(proposal, key)
        if a is None and b is None:
            continue
        rows.append([label, unit, display(a, kind, dec, units), display(b, kind, dec, units),
                     change(a, b, kind, dec, units)])
    flow, dec = symbol("molar_flow", units), decimals("molar_flow", 2, units)
    for s in ("CO", "CO2", "CH4"):  # H2 is a row above
        key = f"train.product.flow_mol_per_s.{s}"
        a, b = lookup(base, key), lookup(proposal, key)
        rows.append([f"{s} in the product gas", flow, display(a, "molar_flow", dec, units),
                     display(b, "molar_flow", dec, units),
                     change(a, b, "molar_flow", dec, units)])
    warn = ""
    if not (base.get("converged", True) and proposal.get("converged", True)):
        warn = ('<p class="rw-warn">One of the two did not converge at this point: the '
                "change is not reliable.</p>")
    return warn + _table(["quantity", "unit", "base", "proposal", "change"], rows,
                         "rw-table rw-compare")


def comparison_html(points: list[dict], units: str = DEFAULT) -> str:
    """Pinned points side by side: one column per point, the summary and energy rows."""
    if not points:
        return "<p class='rw-small'>No pinned points yet: select a point on a map and pin it.</p>"
    head = ["quantity", "unit"] + [f"#{i + 1}" for i in range(len(points))]
    rows = []
    trains = any(len((p.get("train") or {}).get("stages") or []) > 1 for p in points)
    for label, unit, key, kind, dec in rows_for(SUMMARY_ROWS + ENERGY_ROWS[2:]
                                                + (TRAIN_ROWS if trains else []), units):
        rows.append([label, unit] + [display(lookup(p, key), kind, dec, units) for p in points])
    flow, dec = symbol("molar_flow", units), decimals("molar_flow", 2, units)
    for s in ("H2", "CO", "CO2", "CH4"):
        rows.append([f"{s} out", flow]
                    + [display(lookup(p, f"outlet.flow_mol_per_s.{s}"), "molar_flow", dec,
                               units) for p in points])
    return _table(head, rows, "rw-table rw-compare")


def limit_checks(d: dict, limits, units: str = DEFAULT) -> list[tuple[str, bool, str]]:
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
    mw = symbol("power", units)
    if limits.max_duty is not None:
        duty = d["duty_W"]
        out.append(("duty", duty <= limits.max_duty,
                    f"radiant duty {display(duty, 'power', 2, units)} {mw} (limit "
                    f"{to_display(limits.max_duty, 'power', units):g})"))
    if limits.max_fired_duty is not None and d.get("plant"):
        fired = d["plant"]["fired_duty_W"]
        out.append(("fired duty", fired <= limits.max_fired_duty,
                    f"fired duty {display(fired, 'power', 2, units)} {mw} LHV (limit "
                    f"{to_display(limits.max_fired_duty, 'power', units):g})"))
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


def verdict_html(d: dict, limits, prefix: str = "", units: str = DEFAULT) -> str:
    """The verdict at one point in words: within the window, or which limits it breaks
    (after `prefix`, our own words naming the point)."""
    checks = limit_checks(d, limits, units)
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
