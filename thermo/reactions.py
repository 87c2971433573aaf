r"""The named reactions, their equilibrium constants and heats (one definition of each).

:class:`Reaction` records for steam reforming, shift, methane cracking, Boudouard and CO
reduction; K(T) from the standard Gibbs energy change and the standard heat of reaction from
the NASA polynomials. The hand-check method (:mod:`thermo.extent`), the balance, the review
file's data and the carbon check (:mod:`thermo.carbon`, which needs the carbon-forming
reactions with the solid's chemical potential at the actual pressure, so that their
affinities agree exactly with the equilibrium solver's carbon activity) all read them here.

Standard state: 1 bar (thermo.constants.P_REF) for the gases, as NIST-JANAF; graphite's
chemical potential at P includes v (P - P°) (thermo.species.graphite_mu_RT).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from thermo.constants import T_REF, R
from thermo.species import GRAPHITE, g_RT, graphite_mu_RT, nasa_values


@dataclass(frozen=True)
class Reaction:
    """A reaction as stoichiometric coefficients (negative for reactants).

    Attributes
    ----------
    name : str
        Plain name used in tables.
    stoich : dict[str, float]
        Coefficients by species name (``"C(gr)"`` for graphite).
    """

    name: str
    stoich: dict[str, float] = field(default_factory=dict)

    @property
    def gas_mole_change(self) -> float:
        """Change in gas moles per unit extent [-]."""
        return sum(v for s, v in self.stoich.items() if s != GRAPHITE)

    def equation(self) -> str:
        """The reaction written out, e.g. ``"CH4 + H2O = CO + 3 H2"``."""

        def side(items):
            return " + ".join(f"{'' if abs(v) == 1 else f'{abs(v):g} '}{s}" for s, v in items)

        left = [(s, v) for s, v in self.stoich.items() if v < 0]
        right = [(s, v) for s, v in self.stoich.items() if v > 0]
        return f"{side(left)} = {side(right)}"


REFORMING = Reaction("steam reforming", {"CH4": -1, "H2O": -1, "CO": 1, "H2": 3})
SHIFT = Reaction("water-gas shift", {"CO": -1, "H2O": -1, "CO2": 1, "H2": 1})
CRACKING = Reaction("methane cracking", {"CH4": -1, GRAPHITE: 1, "H2": 2})
BOUDOUARD = Reaction("Boudouard", {"CO": -2, GRAPHITE: 1, "CO2": 1})


def _stoich_sum(reaction: Reaction, T, what: str):
    """sum of nu_i f_i(T) over the reaction's species, f one NASA function (one evaluation
    of all its species at once; the terms added in the reaction's order)."""
    names = tuple(reaction.stoich)
    values = nasa_values(T, names, what)
    total = 0
    for k, v in enumerate(reaction.stoich.values()):
        total = total + v * values[k]
    return total


def delta_g_RT(reaction: Reaction, T) -> np.ndarray:
    """Standard Gibbs energy change over RT at 1 bar, sum of nu_i g_i/RT [-]."""
    return _stoich_sum(reaction, T, "g_RT")


def delta_h(reaction: Reaction, T=T_REF) -> np.ndarray:
    """Standard enthalpy change of reaction [J mol-1] (per unit extent).

    Examples
    --------
    Reforming at 298.15 K; NIST-JANAF (Chase 1998) gives +206.2 kJ/mol, the GRI30 data
    205.9 kJ/mol (their CH4 formation enthalpy is 0.27 kJ/mol less negative):

    >>> round(float(delta_h(REFORMING)) / 1000, 1)
    205.9
    """
    T = np.asarray(T, dtype=float)
    return R * T * _stoich_sum(reaction, T, "h_RT")


def equilibrium_constant(reaction: Reaction, T) -> np.ndarray:
    """K(T) = exp(-dG°/RT) on the 1 bar standard state [-] (pressures in bar).

    Examples
    --------
    Shift at 1100 K is close to 1 (NIST-JANAF puts K = 1 near 1097 K):

    >>> round(float(equilibrium_constant(SHIFT, 1100.0)), 2)
    0.99
    """
    return np.exp(-delta_g_RT(reaction, T))


def K_from_delta_g(delta_g_J_per_mol, T) -> np.ndarray:
    """K = exp(-dG°/(R T)) from a standard Gibbs energy change in J/mol (not kJ) [-].

    Examples
    --------
    >>> round(float(K_from_delta_g(-10000.0, 1000.0)), 4)
    3.3292
    """
    return np.exp(-np.asarray(delta_g_J_per_mol, dtype=float) / (R * np.asarray(T, float)))



#: CO + H2 = C + H2O (carbon from CO by hydrogen).
CO_REDUCTION = Reaction("CO reduction", {"CO": -1, "H2": -1, GRAPHITE: 1, "H2O": 1})

#: The carbon-forming reactions of the carbon check, by route key (JSON and Dataset names).
CARBON_ROUTES: dict[str, Reaction] = {
    "methane_cracking": CRACKING,
    "co_reduction": CO_REDUCTION,
    "boudouard": BOUDOUARD,
}

__all__ = ["BOUDOUARD", "CARBON_ROUTES", "CO_REDUCTION", "CRACKING", "REFORMING", "SHIFT",
           "K_from_delta_g", "Reaction", "delta_g_RT", "delta_h", "equilibrium_constant", "ln_K",
           "ln_K_at_pressure"]


def ln_K(reaction: Reaction, T) -> np.ndarray:
    """ln K(T) on the 1 bar standard state of every species [-] (pressures in bar)."""
    return -np.asarray(delta_g_RT(reaction, T), dtype=float)


def ln_K_at_pressure(reaction: Reaction, T, P) -> np.ndarray:
    """ln K(T) with graphite's chemical potential taken at P (gases on 1 bar) [-].

    For a reaction forming graphite, K(T, P) = K(T) exp(-(P - P°) v / RT): the solid's
    activity at P relative to its 1 bar standard state. Equal to :func:`ln_K` at P = P°.
    """
    T = np.asarray(T, dtype=float)
    lnk = ln_K(reaction, T)
    nu = reaction.stoich.get(GRAPHITE, 0.0)
    if nu:
        lnk = lnk - nu * (graphite_mu_RT(T, P) - g_RT(T, GRAPHITE))
    return lnk
