"""Tests of thermo.units: parsing quantities typed by engineers, and the display helpers."""

from __future__ import annotations

import numpy as np
import pint
import pytest

from thermo import units
from thermo.constants import V_NORMAL
from thermo.errors import InputError

# One standard atmosphere is 101325 Pa exactly (10th CGPM 1954, resolution 4; from memory).
# "25 barg" is 26.01325 bar absolute: gauge + 1 atm (1 atm = 1.01325 bar, NIST-SP811).
ATM_PA = 101325.0


# ------------------------------------------------------------------------------- pressures


@pytest.mark.parametrize(
    "text",
    ["25 barg", "25 bar(g)", "25 bar (g)", "25 bar g", "25barg", "25 bar(G)", "2.5e1 barg"],
)
def test_gauge_bar_is_absolute_plus_one_atmosphere(text):
    """Each spelling of 25 bar gauge parses to 2,601,325 Pa absolute (gauge plus 1 atm)."""
    # 25 barg = 26.01325 bar absolute = 2601325 Pa (1 atm = 101325 Pa, NIST-SP811).
    assert units.pressure_Pa(text, "pressure") == pytest.approx(2601325.0, rel=1e-15)


@pytest.mark.parametrize("text", ["25 bar", "25 bara", "25 bar(a)", "25 bar a", "2.5 MPa"])
def test_absolute_bar(text):
    """Each spelling of 25 bar absolute parses to 2.5e6 Pa."""
    # 1 bar = 1e5 Pa exactly (definition of the bar; NIST SP 811, from memory).
    assert units.pressure_Pa(text, "pressure") == pytest.approx(2.5e6, rel=1e-15)


def test_bar_g_is_not_bar_times_gram():
    """'25 bar(g)' is a pressure (not bar times gram) equal to 25 barg, 2,601,325 Pa."""
    # pint alone reads "bar(g)" as bar * gram; the project registry must not.
    q = units.parse_quantity("25 bar(g)", "pressure")
    assert q.check("[pressure]")
    assert q.to("Pa").magnitude == pytest.approx(2601325.0, rel=1e-15)


@pytest.mark.parametrize(
    ("text", "expected_Pa"),
    [
        # 1 psi = 6894.757 Pa (NIST SP 811, Appendix B.8; from memory), gauge adds 1 atm.
        ("100 psia", 689475.7),
        ("100 psi(a)", 689475.7),
        ("100 psi", 689475.7),
        ("100 psig", 689475.7 + ATM_PA),
        ("100 psi(g)", 689475.7 + ATM_PA),
        ("200 kPag", 200e3 + ATM_PA),
        ("200 kPa(g)", 200e3 + ATM_PA),
        ("2 MPag", 2e6 + ATM_PA),
        ("2 MPa(g)", 2e6 + ATM_PA),
        ("1 atm", ATM_PA),
        ("101325 Pa", ATM_PA),
    ],
)
def test_pressure_units(text, expected_Pa):
    """Each pressure unit parses to its value in Pa (relative 1e-6)."""
    assert units.pressure_Pa(text, "pressure") == pytest.approx(expected_Pa, rel=1e-6)


def test_pressure_must_be_positive_absolute():
    """A gauge pressure below vacuum and a zero pressure are refused with a message quoting the
    value and 'above 0'."""
    with pytest.raises(InputError, match=r"pressure = '-2 barg'.*above 0"):
        units.pressure_Pa("-2 barg", "pressure")
    with pytest.raises(InputError, match="above 0"):
        units.pressure_Pa("0 bar", "pressure")


def test_small_vacuum_gauge_is_fine():
    """-0.5 barg is accepted as 51,325 Pa absolute."""
    # -0.5 barg is 0.51325 bar absolute (gauge + 1 atm, NIST-SP811).
    assert units.pressure_Pa("-0.5 barg", "p") == pytest.approx(51325.0, rel=1e-15)


def test_pressure_refuses_other_dimensions():
    """A mass given as a pressure is refused with a message naming the field and the value."""
    with pytest.raises(InputError, match=r"window.pressure.from = '25 kg'"):
        units.pressure_Pa("25 kg", "window.pressure.from")


# ---------------------------------------------------------------------------- temperatures


@pytest.mark.parametrize("text", ["850 degC", "850 °C", "850 C", "850degC", " 850  degC "])
def test_celsius(text):
    """Each spelling of 850 degC parses to 1123.15 K."""
    # 0 degC = 273.15 K (definition of the Celsius scale, SI Brochure 9th ed.; from memory).
    assert units.temperature_K(text, "temperature") == pytest.approx(1123.15, rel=1e-15)


def test_kelvin_fahrenheit_rankine():
    """Kelvin passes through unchanged; 212 degF and 671.67 degR both parse to 373.15 K."""
    # T/K = (T/degF - 32) * 5/9 + 273.15 (definition; NIST SP 811; from memory).
    assert units.temperature_K("1123.15 K", "t") == 1123.15
    assert units.temperature_K("212 degF", "t") == pytest.approx(373.15, rel=1e-12)
    assert units.temperature_K("671.67 degR", "t") == pytest.approx(373.15, rel=1e-12)


def test_temperature_refuses_a_difference_unit():
    """A temperature difference unit (delta_degC) is refused as a temperature, naming the unit."""
    with pytest.raises(InputError, match="delta_degC"):
        units.temperature_K("10 delta_degC", "temperature")


def test_temperature_refuses_below_absolute_zero():
    """-300 degC is refused with a message about absolute zero."""
    with pytest.raises(InputError, match="absolute zero"):
        units.temperature_K("-300 degC", "temperature")


def test_foreign_registry_quantity_is_accepted():
    """Quantities from another pint registry and from the project's own are converted to the same K
    and Pa values."""
    other = pint.UnitRegistry()
    assert units.temperature_K(other.Quantity(850, "degC"), "t") == pytest.approx(1123.15)
    assert units.pressure_Pa(other.Quantity(25, "bar"), "p") == pytest.approx(2.5e6)
    assert units.temperature_K(units.ureg.Quantity(300.0, "K"), "t") == 300.0


def test_array_quantity_is_refused():
    """An array quantity is refused: a field takes one scalar."""
    q = units.ureg.Quantity(np.array([1.0, 2.0]), "bar")
    with pytest.raises(InputError, match="one scalar"):
        units.pressure_Pa(q, "p")


@pytest.mark.parametrize(
    "text", ["10 K", "10 delta_degC", "10 degC", "10 °C", "18 delta_degF", "18 degF"]
)
def test_temperature_difference(text):
    """Each spelling of a 10 K difference (K, degC or delta_degC, 18 degF or delta_degF) parses to
    10 K."""
    # A difference of 1 degC is 1 K and of 1 degF is 5/9 K (definition; from memory).
    assert units.temperature_difference_K(text, "approach") == pytest.approx(10.0, rel=1e-12)


def test_temperature_difference_of_foreign_degC_quantity_is_a_difference():
    """A foreign-registry 10 degC quantity given as a difference is 10 K, not 283.15 K."""
    q = pint.UnitRegistry().Quantity(10, "degC")
    assert units.temperature_difference_K(q, "approach") == pytest.approx(10.0)


def test_temperature_difference_refuses_pressure():
    """A pressure given as a temperature difference is refused, quoting field and value."""
    with pytest.raises(InputError, match="approach = '10 bar'"):
        units.temperature_difference_K("10 bar", "approach")


# -------------------------------------------------------------------------------- flows


def test_normal_cubic_metre_is_one_over_v_normal_mol():
    """3600 Nm3/h is 1/V_NORMAL mol/s, and 1 Nm3 is the CODATA2018 ideal-gas molar volume at 273.15
    K and 101.325 kPa (1e-9 relative)."""
    n = units.molar_flow_mol_s("3600 Nm3/h", "feed.flow", 0.016)
    assert n == pytest.approx(1.0 / V_NORMAL, rel=1e-12)
    # CODATA2018: molar volume of an ideal gas at 273.15 K and 101.325 kPa is
    # 22.41396954e-3 m3 mol-1, so 1 Nm3 is 44.6150 mol.
    assert 1.0 / n == pytest.approx(22.41396954e-3, rel=1e-9)


@pytest.mark.parametrize("text", ["24 Nm3/d", "1 Nm³/h", "1 Nm^3/h"])
def test_normal_volume_spellings(text):
    """Each spelling of 1 Nm3/h parses to 1/V_NORMAL/3600 mol/s."""
    expected = 1.0 / V_NORMAL / 3600.0  # 1 Nm3/h in mol/s (definition of Nm3 above)
    assert units.molar_flow_mol_s(text, "feed.flow", 0.016) == pytest.approx(expected, rel=1e-12)


@pytest.mark.parametrize(
    ("text", "expected"),
    [
        ("3600 kmol/h", 1000.0),
        ("1 kmol/s", 1000.0),
        ("5 mol/s", 5.0),
        # 1 lb = 0.45359237 kg exactly (international yard and pound agreement, 1959; from memory)
        ("3600 lbmol/h", 453.59237),
    ],
)
def test_molar_flows(text, expected):
    """Each molar flow unit parses to its value in mol/s (relative 1e-12)."""
    assert units.molar_flow_mol_s(text, "feed.flow", 0.016) == pytest.approx(expected, rel=1e-12)


@pytest.mark.parametrize(
    ("text", "kg_per_s"),
    [("3600 kg/h", 1.0), ("3.6 t/h", 1.0), ("1 kg/s", 1.0), ("3600 lb/h", 0.45359237)],
)
def test_mass_flows_use_the_molar_mass(text, kg_per_s):
    """A mass flow becomes a molar flow by dividing by the molar mass given (relative 1e-12)."""
    M = 0.017  # kg/mol, an arbitrary mean molar mass for the test (no source needed)
    n = units.molar_flow_mol_s(text, "feed.flow", M)
    assert n == pytest.approx(kg_per_s / M, rel=1e-12)


@pytest.mark.parametrize("text", ["1000 Sm3/h", "10 MMSCFD", "500 scf/h", "2 kSm3/h", "5 SCF/d"])
def test_standard_volumes_are_refused(text):
    """Standard volumes (Sm3, scf ...) are refused as ambiguous; the message names the field, the
    value as typed and Nm3."""
    with pytest.raises(InputError) as info:
        units.molar_flow_mol_s(text, "feed.flow", 0.016)
    message = str(info.value)
    assert "feed.flow" in message and repr(text) in message
    assert "ambiguous" in message and "Nm3" in message


def test_actual_volume_flow_is_refused_with_a_hint():
    """An actual volume flow (m3/h) is refused with a hint to use Nm3/h."""
    with pytest.raises(InputError, match="Nm3/h"):
        units.molar_flow_mol_s("100 m3/h", "feed.flow", 0.016)


def test_mass_flow_needs_a_positive_molar_mass():
    """A mass flow with a zero molar mass is refused, naming the molar mass."""
    with pytest.raises(InputError, match="molar mass"):
        units.molar_flow_mol_s("1 kg/s", "feed.flow", 0.0)


# -------------------------------------------------------------------------- power, fraction


@pytest.mark.parametrize(
    ("text", "expected_W"),
    [
        ("75 MW", 75e6),
        ("750 kW", 750e3),
        ("1e6 W", 1e6),
        # International Table calorie 4.1868 J (5th Int. Conf. on Properties of Steam, 1956;
        # from memory): 1 Gcal/h = 4.1868e9 J / 3600 s.
        ("1 Gcal/h", 4.1868e9 / 3600.0),
        # International Table Btu 1055.05585 J (NIST SP 811; from memory); pint: 1055.056 J.
        ("1 MMBtu/h", 1055.05585e6 / 3600.0),
    ],
)
def test_power(text, expected_W):
    """Each power unit parses to its value in W (relative 1e-6)."""
    assert units.power_W(text, "limits.max_duty") == pytest.approx(expected_W, rel=1e-6)


def test_power_refuses_energy():
    """An energy given as a power is refused, quoting field and value."""
    with pytest.raises(InputError, match=r"limits.max_duty = '75 MJ'"):
        units.power_W("75 MJ", "limits.max_duty")


@pytest.mark.parametrize("value", ["4 %", "4 mol%", "4 mol %", "4%", "0.04", 0.04, "40000 ppm"])
def test_fraction(value):
    """Each spelling of 4 % (percent, mol %, a plain fraction, ppm) parses to 0.04."""
    assert units.fraction(value, "limits.max_methane_slip_dry") == pytest.approx(0.04, rel=1e-12)


@pytest.mark.parametrize("value", [4, "4", "150 %", -0.1, True, "4 bar", "abc", float("nan")])
def test_fraction_refused(value):
    """Each value that is no fraction (4 without %, 150 %, negative, a bool, a pressure, text, NaN)
    is refused, naming the field."""
    with pytest.raises(InputError) as info:
        units.fraction(value, "limits.max_methane_slip_dry")
    assert "limits.max_methane_slip_dry" in str(info.value)


# ------------------------------------------------------------------------- refused inputs


@pytest.mark.parametrize(
    ("function", "value"),
    [
        (units.pressure_Pa, "25 barr"),
        (units.pressure_Pa, "abc"),
        (units.pressure_Pa, ""),
        (units.pressure_Pa, "25"),
        (units.pressure_Pa, 25.0),
        (units.pressure_Pa, "bar 25"),
        (units.pressure_Pa, "25 bar**"),
        (units.pressure_Pa, "25 Pa(g)"),
        (units.temperature_K, "850"),
        (units.temperature_K, 850),
        (units.temperature_K, "850 R"),
        (units.temperature_K, "nan degC"),
        (units.temperature_K, None),
        (units.temperature_difference_K, "10"),
        (units.power_W, "75"),
        (units.power_W, "75 MWW"),
        (units.parse_quantity, "850"),
        (units.parse_quantity, True),
    ],
)
def test_refused_values_name_field_and_value(function, value):
    """Each parser's error starts 'field = value is not allowed' and carries the field and the
    value as typed."""
    with pytest.raises(InputError) as info:
        function(value, "some.field")
    message = str(info.value)
    assert message.startswith(f"some.field = {value!r} is not allowed")
    assert info.value.field == "some.field"
    assert info.value.value == value


def test_plain_number_message_gives_an_example():
    """A plain number without a unit is refused with an example of a number with a unit."""
    with pytest.raises(InputError, match=r"a number with a unit, e.g. '850 degC'"):
        units.parse_quantity(850, "temperature")


def test_refused_flow_names_field_and_value():
    """Malformed flows (no number, empty, no unit, unknown unit) are refused with a message
    starting 'feed.flow = value'."""
    for bad in ("abc", "", "1450", "1450 kmol/hx"):
        with pytest.raises(InputError) as info:
            units.molar_flow_mol_s(bad, "feed.flow", 0.016)
        assert str(info.value).startswith(f"feed.flow = {bad!r}")


# ------------------------------------------------------------------------- display helpers


def test_display_helpers_vectorized_and_round_trip():
    """The SI-to-display helpers take arrays, give the defined values (0 and 850 degC, 26.01325
    bar, 25 barg, 3.6 kmol/h, 3600 kg/h, 75 MW) and invert to round-off."""
    T = np.array([273.15, 1123.15])
    np.testing.assert_allclose(units.degC_from_K(T), [0.0, 850.0], rtol=0, atol=1e-12)
    np.testing.assert_allclose(units.K_from_degC(units.degC_from_K(T)), T, rtol=1e-15)
    P = np.array([1e5, 2601325.0])
    np.testing.assert_allclose(units.bar_from_Pa(P), [1.0, 26.01325], rtol=1e-15)
    np.testing.assert_allclose(units.barg_from_Pa(P)[1], 25.0, rtol=1e-14)
    np.testing.assert_allclose(units.Pa_from_bar(units.bar_from_Pa(P)), P, rtol=1e-15)
    np.testing.assert_allclose(units.kmol_per_h_from_mol_per_s(np.array([1.0])), [3.6])
    np.testing.assert_allclose(units.kg_per_h_from_kg_per_s(np.array([1.0, 2.0])), [3600, 7200])
    np.testing.assert_allclose(units.MW_from_W(np.array([75e6])), [75.0])


def test_normal_volume_display_round_trip():
    """32000 Nm3/h parsed and shown again is 32000 Nm3/h, for a scalar and an array (1e-13
    relative)."""
    n = units.molar_flow_mol_s("32000 Nm3/h", "feed.flow", 0.016)
    assert units.Nm3_per_h_from_mol_per_s(n) == pytest.approx(32000.0, rel=1e-13)
    out = units.Nm3_per_h_from_mol_per_s(np.array([n, 2 * n]))
    np.testing.assert_allclose(out, [32000.0, 64000.0], rtol=1e-13)
