"""The display layer (explorer.display): unit factors against NIST SP 811, the US standard
volume from the ideal-gas law, and the same balance in both unit systems.

Sources:
- NIST Special Publication 811 (2008), Guide for the Use of the International System of
  Units, Appendix B.8 and B.9: degree Fahrenheit T/degF = 1.8 T/K - 459.67; pound-force per
  square inch = 6.894 757 E+03 Pa; pound (avoirdupois) = 4.535 924 E-01 kg (exactly
  0.45359237 kg); British thermal unit (International Table) = 1.055 056 E+03 J (exactly
  1055.05585262 J); foot = 0.3048 m.
- CODATA 2018: molar gas constant R = 8.314462618 J/(mol K).
"""

from __future__ import annotations

import math
import re

import pytest

import thermo
from explorer import display
from explorer.tables import (
    ENERGY_ROWS,
    SPECIES_COLUMNS,
    SUMMARY_ROWS,
    balance_csv,
    balance_html,
    columns_for,
    rows_for,
)
from tests.explorer.helpers import table_cells

# NIST SP 811 (2008), Appendix B (the values as printed there).
PSI_PA_SP811 = 6.894757e3
LB_KG_SP811 = 0.45359237
BTU_IT_J_SP811 = 1055.05585262
FT_M_SP811 = 0.3048
R_CODATA_2018 = 8.314462618


def test_temperature_in_degF_per_nist_sp811():
    """T/degF = 1.8 T/K - 459.67 (SP 811 B.9): ice point 32 degF, steam point 212 degF,
    -40 is the same in both scales."""
    assert display.to_display(273.15, "temperature", "us") == pytest.approx(32.0, abs=1e-12)
    assert display.to_display(373.15, "temperature", "us") == pytest.approx(212.0, abs=1e-12)
    assert display.to_display(233.15, "temperature", "us") == pytest.approx(-40.0, abs=1e-12)
    assert display.to_display(233.15, "temperature", "metric") == pytest.approx(-40.0)
    # A difference of 1 K is 1.8 degF, without the offset.
    assert display.difference(1.0, "temperature_difference", "us") == pytest.approx(1.8)
    assert display.from_display(850.0, "temperature", "us") == pytest.approx(
        (850.0 + 459.67) / 1.8, rel=1e-15)


def test_pressure_in_psi_per_nist_sp811():
    """1 psi = 6894.757 Pa (SP 811 B.8, 7 digits); psig is gauge above 101325 Pa."""
    assert 1.0 / display.unit("pressure", "us").scale == pytest.approx(PSI_PA_SP811,
                                                                         rel=5e-8)
    assert display.to_display(PSI_PA_SP811 * 100, "pressure", "us") == pytest.approx(
        100.0, rel=1e-7)
    # 14.696 psia is one standard atmosphere (101325 Pa) to the digits given.
    assert display.to_display(101325.0, "pressure", "us") == pytest.approx(14.696, abs=5e-4)
    assert display.to_display(101325.0, "gauge_pressure", "us") == pytest.approx(0.0,
                                                                                abs=1e-12)
    assert display.to_display(101325.0 + 25 * PSI_PA_SP811, "gauge_pressure",
                              "us") == pytest.approx(25.0, rel=1e-7)
    assert display.to_display(26.01325e5, "gauge_pressure", "metric") == pytest.approx(25.0)


def test_mass_molar_flow_and_power_per_nist_sp811():
    """lb = 0.45359237 kg, lbmol = 453.59237 mol, Btu_IT = 1055.05585262 J (SP 811 B.8)."""
    # 1 kg/s = 3600 / 0.45359237 lb/h
    assert display.to_display(1.0, "mass_flow", "us") == pytest.approx(3600 / LB_KG_SP811,
                                                                       rel=1e-15)
    # 1 mol/s = 3600 / 453.59237 lbmol/h
    assert display.to_display(1.0, "molar_flow", "us") == pytest.approx(
        3600 / (1000 * LB_KG_SP811), rel=1e-15)
    # 1 MMBtu/h = 1055.05585262e6 J / 3600 s
    assert display.to_display(BTU_IT_J_SP811 * 1e6 / 3600, "power", "us") == pytest.approx(
        1.0, rel=1e-15)
    # 1 MW = 3.412142 MMBtu/h (1e6 * 3600 / 1055.05585262e6)
    assert display.to_display(1e6, "power", "us") == pytest.approx(3.4121416, rel=1e-7)
    # Energy per mass: 1 MJ/kg = 1e6 * 0.45359237 / 1055.05585262 Btu/lb = 429.923 Btu/lb
    assert display.to_display(1e6, "energy_per_mass", "us") == pytest.approx(
        1e6 * LB_KG_SP811 / BTU_IT_J_SP811, rel=1e-15)
    # Metric stays what the app showed before: kmol/h, kg/h, MW, t/h.
    assert display.to_display(1.0, "molar_flow") == 3.6
    assert display.to_display(1.0, "mass_flow") == 3600.0
    assert display.to_display(25e6, "power") == 25.0
    assert display.to_display(25e5, "pressure") == 25.0


def test_mmscfd_from_the_ideal_gas_molar_volume_at_60_degF_and_14_696_psia():
    """One MMSCFD: 1e6 standard cubic feet per day, each ft3 = 0.3048**3 m3 of ideal gas at
    60 degF (288.7056 K, SP 811 B.9) and 14.696 psia (SP 811 B.8), V = R T / P (R CODATA
    2018)."""
    T = (60.0 + 459.67) / 1.8
    P = 14.696 * PSI_PA_SP811
    v_molar = R_CODATA_2018 * T / P  # m3/mol
    mol_per_s_per_mmscfd = 1e6 * FT_M_SP811**3 / v_molar / 86400.0
    assert display.to_display(mol_per_s_per_mmscfd, "gas_flow", "us") == pytest.approx(
        1.0, rel=1e-7)
    # From memory (common practice, no source): 379.5 scf per lbmol at 60 degF, 14.696 psia.
    assert display.SCF_PER_MOL * 453.59237 == pytest.approx(379.5, abs=0.05)
    # The conditions are stated wherever the system is shown.
    assert "60 degF and 14.696 psia" in display.system_note("us")
    assert "0 degC and 1.01325 bar" in display.system_note("metric")
    # Metric gas flow: Nm3/h at 0 degC and 1.01325 bar, as before.
    assert display.to_display(1.0, "gas_flow") == pytest.approx(3600 * 0.0224139695, rel=1e-8)


def test_every_kind_round_trips_and_the_script_gets_the_same_factors():
    """from_display inverts to_display for every kind in both systems; conversions() hands
    the review file's script exactly the factors to_display uses."""
    for system in display.SYSTEMS:
        conv = display.conversions(system)
        for kind in display.KINDS:
            si = 1234.5678
            shown = display.to_display(si, kind, system)
            assert display.from_display(shown, kind, system) == pytest.approx(si, rel=1e-12)
            scale, offset, divisor = conv[kind]
            page = (si / divisor if divisor else si * scale) + offset
            assert page == shown, (system, kind)


def test_unknown_system_is_refused_naming_the_allowed():
    with pytest.raises(ValueError, match="metric, us"):
        display.check_system("imperial")


# ---- the same point's balance in both systems --------------------------------------------

_NUMBER = re.compile(r"^-?[\d,]*\.?\d+$")


# Display value -> SI, written out here from the sources above (not from explorer.display),
# so that a wrong factor in the display layer shows as a disagreement.
_V_NORMAL = R_CODATA_2018 * 273.15 / 101325.0
_V_US = R_CODATA_2018 * ((60.0 + 459.67) / 1.8) / (14.696 * PSI_PA_SP811)
_SCF_PER_MOL = _V_US / FT_M_SP811**3
_TO_SI = {
    "metric": {
        "": lambda v: v, "percent": lambda v: v / 100, "temperature": lambda v: v + 273.15,
        "temperature_difference": lambda v: v, "pressure": lambda v: v * 1e5,
        "molar_flow": lambda v: v / 3.6, "mass_flow": lambda v: v / 3600,
        "gas_flow": lambda v: v / (3600 * _V_NORMAL), "power": lambda v: v * 1e6,
        "energy_per_mol": lambda v: v * 1e3, "energy_per_gas_volume": lambda v: v * 1e6 * _V_NORMAL,
        "reaction_heat": lambda v: v * 1e3,
    },
    "us": {
        "": lambda v: v, "percent": lambda v: v / 100,
        "temperature": lambda v: (v + 459.67) / 1.8,
        "temperature_difference": lambda v: v / 1.8, "pressure": lambda v: v * PSI_PA_SP811,
        "molar_flow": lambda v: v * 1000 * LB_KG_SP811 / 3600,
        "mass_flow": lambda v: v * LB_KG_SP811 / 3600,
        "gas_flow": lambda v: v * 1e6 / _SCF_PER_MOL / 86400,
        "power": lambda v: v * BTU_IT_J_SP811 * 1e6 / 3600,
        "energy_per_mol": lambda v: v * BTU_IT_J_SP811 / (1000 * LB_KG_SP811),
        "energy_per_gas_volume": lambda v: v * BTU_IT_J_SP811 * _SCF_PER_MOL,
        "reaction_heat": lambda v: v * 1e3,
    },
}


def _interval(text: str, kind: str, dec: int, system: str) -> tuple[float, float] | None:
    """The SI interval a shown number stands for (half a unit of its last digit either
    side); None for a text that is not a plain number."""
    if not _NUMBER.match(text):
        return None
    v = float(text.replace(",", ""))
    half = 0.5 * 10.0 ** (-dec) if dec >= 0 else abs(v) * 0.5 * 10.0 ** (1 + dec)
    to_si = _TO_SI[system][kind]
    a, b = to_si(v - half), to_si(v + half)
    return min(a, b), max(a, b)


def _agree(m_text, u_text, kind, m_dec, u_dec) -> bool:
    a = _interval(m_text, kind, m_dec, "metric")
    b = _interval(u_text, kind, u_dec, "us")
    if a is None or b is None:
        return m_text == u_text
    # SP 811 prints psi to 7 digits: allow 1e-7 relative.
    slack = 1e-7 * max(abs(a[0]), abs(b[0]), 1e-30)
    return a[0] <= b[1] + slack and b[0] <= a[1] + slack


@pytest.fixture(scope="module")
def point_dict():
    return thermo.point().to_dict()


def test_same_balance_in_both_systems_agrees_to_the_digits_shown(point_dict):
    """Every number of the summary, energy and species tables, read back to SI from the
    metric and from the US customary table, agrees within the rounding of the digits shown
    (explorer.display converts; explorer.tables rounds)."""
    m_rows = table_cells(balance_html(point_dict, "metric"))
    u_rows = table_cells(balance_html(point_dict, "us"))
    assert len(m_rows) == len(u_rows)
    # Summary and energy tables: (quantity, value, unit) after their header rows.
    flat_m = [r for r in m_rows if len(r) == 3 and r[0] != "quantity"]
    flat_u = [r for r in u_rows if len(r) == 3 and r[0] != "quantity"]
    spec_m = rows_for(SUMMARY_ROWS + ENERGY_ROWS, "metric")
    spec_u = rows_for(SUMMARY_ROWS + ENERGY_ROWS, "us")
    checked = 0
    for rm, ru, sm, su in zip(flat_m, flat_u, spec_m, spec_u, strict=False):
        assert rm[0] == ru[0] == sm[0].strip()
        assert rm[2] == sm[1] and ru[2] == su[1]
        assert _agree(rm[1], ru[1], sm[3], sm[4], su[4]), (rm, ru)
        checked += 1
    assert checked == len(spec_m)
    # Species table, total row included: one column per SPECIES_COLUMNS entry.
    cols_m, cols_u = columns_for(SPECIES_COLUMNS, "metric"), columns_for(SPECIES_COLUMNS, "us")
    head_m = next(i for i, r in enumerate(m_rows) if r and r[0] == "species")
    head_u = next(i for i, r in enumerate(u_rows) if r and r[0] == "species")
    assert m_rows[head_m][1:] == [c[0] for c in cols_m]
    assert u_rows[head_u][1:] == [c[0] for c in cols_u]
    assert u_rows[head_u][1:3] == ["in lbmol/h", "in MMSCFD"]
    assert m_rows[head_m][1:3] == ["in kmol/h", "in Nm3/h"]
    n = len(thermo.species.GAS_SPECIES) + 2  # species, the total row, C(gr)
    for rm, ru in zip(m_rows[head_m + 1:head_m + 1 + n], u_rows[head_u + 1:head_u + 1 + n],
                      strict=True):
        assert rm[0] == ru[0]
        for cm, cu, vm, vu in zip(cols_m, cols_u, rm[1:], ru[1:], strict=True):
            if vm == "" and vu == "":
                continue
            assert _agree(vm, vu, cm[2], cm[3], cu[3]), (rm[0], cm[0], vm, vu)
            checked += 1
    assert checked > 80


def test_total_row_sums_the_species(point_dict):
    """The species table's total row: the inlet and outlet molar and mass flows summed over
    the gas species, the mole fractions to 100 %."""
    rows = table_cells(balance_html(point_dict))
    total = next(r for r in rows if r and r[0] == "total gas")
    n_in = sum(point_dict["inlet"]["flow_mol_per_s"].values()) * 3.6
    m_out = sum(point_dict["outlet"]["mass_flow_kg_per_s"].values()) * 3600
    assert float(total[1].replace(",", "")) == pytest.approx(n_in, abs=6e-4)
    assert float(total[6].replace(",", "")) == pytest.approx(m_out, abs=0.06)
    assert total[7] == "100.0000" and total[8] == "100.0000"
    # Mass closes: outlet gas plus graphite equals the inlet.
    m_in = sum(point_dict["inlet"]["mass_flow_kg_per_s"].values())
    c = point_dict["carbon_deposit_mol_per_s"] * 0.0120107
    assert m_in == pytest.approx(m_out / 3600 + c, rel=1e-9)


def test_metric_balance_is_what_the_app_showed_before(point_dict):
    """Metric numbers of the summary table are the former ones: degC = K - 273.15,
    bar abs = Pa / 1e5, kmol/h = mol/s x 3.6, MW = W / 1e6."""
    cells = {r[0]: r[1] for r in table_cells(balance_html(point_dict)) if len(r) == 3}
    d = point_dict
    assert cells["Outlet temperature"] == f"{d['temperature_K'] - 273.15:,.1f}"
    assert cells["Outlet pressure"] == f"{d['pressure_Pa'] / 1e5:,.3f}"
    assert cells["Inlet enthalpy flow"] == f"{d['inlet']['enthalpy_W'] / 1e6:,.3f}"
    assert cells["Carbon deposit (graphite)"] == f"{d['carbon_deposit_mol_per_s'] * 3.6:,.3f}"


def test_csv_states_its_units(point_dict):
    """The CSV names its unit system and each row's unit in it; the values are in it."""
    us = balance_csv(point_dict, units="us")
    assert "display units,us" in us
    line = next(ln for ln in us.splitlines() if ln.startswith("summary,Outlet temperature"))
    assert line.endswith(",degF")
    value = float(line.split(",")[2])
    assert value == pytest.approx(point_dict["temperature_K"] * 1.8 - 459.67, abs=1e-6)
    assert "display units,metric" in balance_csv(point_dict)


def test_text_report_in_us_units():
    """`point_report` in US customary units: degF, psia, psig, lbmol/h, MMSCFD, MMBtu/h,
    and the standard conditions stated; numbers converted from the same SI."""
    from explorer.report import point_report

    pt = thermo.point()
    text = point_report(pt, "us")
    for unit in ("degF", "psia", "psig", "lbmol/h", "MMSCFD", "lb/h", "MMBtu/h",
                 "60 degF and 14.696 psia"):
        assert unit in text, unit
    assert "degC" not in text.replace("0 degC", "") and "kmol/h" not in text
    t_f = pt.temperature * 1.8 - 459.67
    assert f"Outlet {t_f:.1f} degF" in text
    metric = point_report(pt)
    assert "Nm3/h" in metric and f"Outlet {pt.temperature - 273.15:.1f} degC" in metric


def test_map_variable_in_us_units():
    """A dimensional map variable takes the system's unit and scale; a ratio stays."""
    from explorer.maps import VARIABLES, variable

    duty = variable("duty", "us")
    assert duty.unit == "MMBtu/h" and duty.scale == pytest.approx(3600 / 1055.05585262e6)
    assert variable("specific_energy", "us").unit == "Btu/scf H2"
    assert variable("h2_yield", "us") is VARIABLES["h2_yield"]
    assert variable("duty", "metric") is VARIABLES["duty"]
    assert math.isclose(VARIABLES["duty"].scale, 1e-6)


def test_review_file_carries_its_unit_system(tmp_path):
    """`explorer export --units us` writes a file whose data block, maps, sliders and sheet
    are in US customary units and which says so; the scenario default is metric."""
    from explorer import export
    from explorer.cli import main

    sc = thermo.load_scenario().with_window(
        temperature=("760 degC", "900 degC", 3), pressure=("15 bar", "35 bar", 2),
        steam_to_carbon=(2.5, 3.5, 2))
    ds = thermo.sweep(sc)
    page = export.build_review(sc, ds, units="us")
    assert "Display units of this file: US customary units" in page
    assert "60 degF and 14.696 psia" in page
    assert '"units":"us"' in page
    assert "Outlet temperature [degF]" in page and "Outlet pressure [psia]" in page
    assert "S/C \\ P [psia]" in page
    metric = export.build_review(sc, ds)
    assert '"units":"metric"' in metric and "Outlet temperature [degC]" in metric
    # The command line refuses an unknown system in one line, exit status 2.
    assert main(["export", "-o", str(tmp_path / "x.html"), "--units", "kelvin"]) == 2


def test_cli_point_units_text_follows_the_system_and_json_stays_si(capsys):
    """`explorer point --units us` prints US customary text; with --json the object is the
    same SI object as without --units (the contract)."""
    import json

    from explorer.cli import main

    assert main(["point", "--units", "us"]) == 0
    out = capsys.readouterr().out
    assert "degF" in out and "psia" in out and "MMSCFD" in out and "MMBtu/h" in out
    assert main(["point", "--units", "us", "--json"]) == 0
    us = json.loads(capsys.readouterr().out)
    assert main(["point", "--json"]) == 0
    si = json.loads(capsys.readouterr().out)
    assert us == si and "temperature_K" in si


def test_app_units_chooser_redraws_maps_and_balance():
    """Switching ExplorerState.units (the app's chooser) relabels the maps, converts their
    axes and redraws the balance in the chosen system."""
    from explorer.state import ExplorerState
    from explorer.views import BalanceView, MapsView

    sc = thermo.load_scenario().with_window(
        temperature=("760 degC", "900 degC", 3), pressure=("15 bar", "35 bar", 2),
        steam_to_carbon=(2.5, 3.5, 2))
    s = ExplorerState(sc)
    s.solve_now()
    maps, bal = MapsView(s), BalanceView(s)
    s.select_index({"temperature": 1, "pressure": 0, "steam_to_carbon": 0})
    fig = maps.panes[0].object
    assert fig.xaxis[0].axis_label == "Outlet temperature [degC]"
    s.units = "us"
    assert maps.units.value == "us"
    assert fig.xaxis[0].axis_label == "Outlet temperature [degF]"
    assert fig.yaxis[0].axis_label == "Outlet pressure [psia]"
    assert fig.x_range.start == pytest.approx(760 * 1.8 + 32)
    assert "MMSCFD" in bal.tables.object and "degF" in bal.heading.object
    # A click in degF, psia selects the same node as in degC, bar.
    s.select_display(830 * 1.8 + 32, 35e5 / PSI_PA_SP811)
    assert s.selected["temperature"] == pytest.approx(1103.15)
    assert s.selected["pressure"] == pytest.approx(35e5)
