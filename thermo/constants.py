"""Physical constants and reference states, each with its citation key.

Keys refer to ``thermo/data/references.toml``.
"""

from __future__ import annotations

#: Molar gas constant [J mol-1 K-1] (CODATA2018, exact).
R = 8.314462618

#: The project's standard-state pressure [Pa]: 1 bar, as NIST-JANAF (JANAF1998) and IUPAC.
#: Every species record is moved to it by the loader (see thermo/data/species.toml); every
#: K and g/RT the core reports is on this basis.
P_REF = 1e5

#: Reference temperature for standard heats [K].
T_REF = 298.15

#: Normal conditions for Nm3: 0 degC and 1.01325 bar (common practice in reforming).
T_NORMAL = 273.15
P_NORMAL = 101325.0

#: Molar volume of an ideal gas at normal conditions [m3 mol-1].
V_NORMAL = R * T_NORMAL / P_NORMAL

#: One standard atmosphere [Pa]; the offset of gauge pressures (barg, psig, kPag).
ATM = 101325.0

#: Standard atomic weights, conventional values [kg mol-1] (IUPAC2021).
ATOMIC_WEIGHT = {
    "C": 12.011e-3,
    "H": 1.008e-3,
    "O": 15.999e-3,
    "N": 14.007e-3,
    "Ar": 39.95e-3,
}

#: Element order used by every array in the core.
ELEMENTS = ("C", "H", "O", "N", "Ar")
