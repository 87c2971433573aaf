"""Cantera as an independent reference for the equilibrium tests (tests only).

Cantera (https://cantera.org, version >= 3.0) is used here as a test reference and nowhere
else: ``thermo/`` and ``explorer/`` never import it.

Same data, same standard states
-------------------------------
The gas species are read from Cantera's own ``gri30.yaml`` and graphite from Cantera's own
``graphite.yaml`` (so the coefficients come from Cantera's files, not from
``thermo/data/species.toml``; :func:`check_same_coefficients` asserts the two agree).
Cantera reads both files with a 1 atm reference pressure, while each record of
``thermo/data/species.toml`` declares its own (1 bar for all but N2 and Ar, 1 atm for those).
The reference species are therefore rebuilt:

* gases: Cantera's ideal-gas phase refuses species with different reference pressures
  (``MultiSpeciesThermo::install_STIT``), so every gas is put on 1 bar. A record declared on
  1 bar keeps its coefficients and gets ``P0 = 1e5``; a record declared on 1 atm (N2, Ar) is
  moved to 1 bar exactly as the ideal-gas law moves it: ``s/R(1 bar) = s/R(1 atm) +
  ln(101325/1e5)``, i.e. ``a7`` of both ranges plus ``ln(1.01325)``. Both are exact
  (no approximation), so mu_j/RT = g_j/RT(1 bar) + ln(x_j P / 1 bar) is what the project uses.
* graphite: ``graphite.yaml`` is loaded, its species record is taken from Cantera
  (``input_data``, which keeps its constant-volume equation of state with the 2.16 g/cm3
  density; building it from the bare species gives a near-zero density, seen with Cantera 3.2) and
  only ``reference-pressure: 1e5`` is added before the phase is rebuilt. Setting
  ``Species.thermo`` with ``modify_species`` is not enough: the phase keeps 1 atm as its own
  reference pressure, which shifts mu by (101325 - 1e5) v / RT, about 9e-7 at 1000 K.
"""

from __future__ import annotations

import json
import math
from functools import cache

import numpy as np

from thermo.constants import P_REF
from thermo.species import GAS_SPECIES, GRAPHITE, formula_matrix, record

ct = None  # imported lazily so that the module can be collected without Cantera


def _ct():
    global ct
    if ct is None:
        import pytest

        ct = pytest.importorskip("cantera")
    return ct


#: Project species name -> Cantera (GRI-Mech 3.0) species name.
CT_NAME = {s: ("AR" if s == "Ar" else s) for s in GAS_SPECIES}


@cache
def gas():
    """Cantera ideal-gas phase of the model's gas species, all on the 1 bar standard state."""
    cantera = _ct()
    source = {s.name: s for s in cantera.Species.list_from_file("gri30.yaml")}
    species = []
    for name in GAS_SPECIES:
        sp = source[CT_NAME[name]]
        coeffs = np.array(sp.thermo.coeffs, dtype=float)  # [T_mid, high a1..a7, low a1..a7]
        p0 = record(name).standard_pressure
        shift = math.log(p0 / P_REF)  # s/R on 1 bar = s/R on p0 + ln(p0 / 1 bar)
        coeffs[7] += shift
        coeffs[14] += shift
        new = cantera.Species(sp.name, sp.composition)
        new.thermo = cantera.NasaPoly2(sp.thermo.min_temp, sp.thermo.max_temp, P_REF, coeffs)
        species.append(new)
    phase = cantera.Solution(thermo="ideal-gas", species=species)
    assert phase.reference_pressure == P_REF
    return phase


@cache
def graphite():
    """Cantera graphite from ``graphite.yaml`` with its reference pressure set to 1 bar."""
    cantera = _ct()
    original = cantera.Solution("graphite.yaml")
    phase_data = dict(original.input_data)
    phase_data["state"] = {"T": 300.0, "P": P_REF}
    sp = dict(original.species(0).input_data)
    thermo = dict(sp["thermo"])
    thermo["reference-pressure"] = record(GRAPHITE).standard_pressure
    sp["thermo"] = thermo
    # YAML is a superset of JSON, so the dumped dictionaries are a valid Cantera input.
    phase = cantera.Solution(yaml=json.dumps({"phases": [phase_data], "species": [sp]}))
    assert phase.reference_pressure == record(GRAPHITE).standard_pressure
    assert phase.density == original.density  # the constant-volume record survived
    return phase


def check_same_coefficients() -> None:
    """Assert that thermo/data/species.toml holds Cantera's coefficients, range by range."""
    cantera = _ct()
    source = {s.name: s for s in cantera.Species.list_from_file("gri30.yaml")}
    source[GRAPHITE] = cantera.Solution("graphite.yaml").species(0)
    for name in GAS_SPECIES + (GRAPHITE,):
        rec = record(name)
        c = np.asarray(source[CT_NAME.get(name, name)].thermo.coeffs)
        assert c[0] == rec.t_mid, name
        np.testing.assert_array_equal(c[1:8], rec.high, err_msg=name)
        np.testing.assert_array_equal(c[8:15], rec.low, err_msg=name)


def equilibrate(T: float, P: float, inlet: np.ndarray, *, carbon: bool = True):
    """Cantera equilibrium of one point.

    Parameters
    ----------
    T, P : float
        Temperature [K] and absolute pressure [Pa].
    inlet : ndarray (S,)
        Moles of each gas species in GAS_SPECIES order (any consistent unit).
    carbon : bool
        Include graphite as a second phase (``Mixture``; the VCS solver, or Cantera's
        ``gibbs`` multiphase solver where VCS fails); otherwise the gas alone.

    Returns
    -------
    moles : ndarray (S,)
        Gas moles at equilibrium, same unit as `inlet`.
    n_carbon : float
        Graphite moles.
    """
    g = gas()
    inlet = np.asarray(inlet, dtype=float)
    total = inlet.sum()
    if not carbon:
        g.TPX = T, P, inlet / total
        g.equilibrate("TP", solver="vcs", rtol=1e-12, max_steps=10000)
        # Element abundance is conserved, so the gas moles follow from any element in it.
        A = formula_matrix()
        b = inlet @ A
        k = int(np.argmax(b))
        per_mole = g.X @ A[:, k]
        return g.X * b[k] / per_mole, 0.0
    gr = graphite()
    for solver in ("vcs", "gibbs"):
        g.TPX = T, P, inlet / total
        gr.TP = T, P
        mix = _ct().Mixture([(g, 1.0), (gr, 0.0)])
        mix.T = T
        mix.P = P
        mix.species_moles = np.r_[inlet / total, 0.0]
        try:
            mix.equilibrate("TP", solver=solver, rtol=1e-12, max_steps=10000, max_iter=400,
                            log_level=0)
        except _ct().CanteraError:
            # VCS gives up on a few deposit-rich points ("Return code: -1"); Cantera's other
            # multiphase solver (MultiPhaseEquil) solves them.
            continue
        n = np.asarray(mix.species_moles) * total
        return n[: len(GAS_SPECIES)], float(n[-1])
    raise RuntimeError(f"Cantera found no equilibrium at T={T} K, P={P} Pa, inlet={inlet}")


def enthalpy_flow(moles: np.ndarray, T: float, P: float, n_carbon: float = 0.0) -> float:
    """Enthalpy of a gas (and graphite) stream by Cantera [J per mol-unit of `moles`].

    Graphite's enthalpy is Cantera's own at T and P, h°(T) + v (P - P°) for its
    constant-volume solid, as in the project's balance.
    """
    g = gas()
    moles = np.asarray(moles, dtype=float)
    total = moles.sum()
    g.TPX = T, P, moles / total
    h = g.enthalpy_mole / 1000.0 * total  # J/kmol -> J/mol
    if n_carbon:
        gr = graphite()
        gr.TP = T, P
        h += n_carbon * gr.enthalpy_mole / 1000.0
    return float(h)


def graphite_pv(P: float) -> float:
    """v (P - P°) of graphite [J mol-1], the pressure part of its enthalpy."""
    gr = graphite()
    v = gr.mean_molecular_weight / gr.density / 1000.0  # m3/kmol -> m3/mol
    return v * (P - gr.reference_pressure)
