r"""Equilibrium constants and heats of the named reactions, outside the hand-check module.

The carbon check (:mod:`thermo.carbon`) needs the three carbon-forming reactions with the
solid's chemical potential at the actual pressure, so that their affinities agree exactly
with the equilibrium solver's carbon activity. The reactions themselves are the
:class:`thermo.extent.Reaction` records (one definition of each reaction); this module adds
CO reduction and the pressure-aware K.

Standard state: 1 bar (thermo.constants.P_REF) for the gases, as NIST-JANAF; graphite's
chemical potential at P includes v (P - P°) (thermo.species.graphite_mu_RT).
"""

from __future__ import annotations

import numpy as np

from thermo.extent import BOUDOUARD, CRACKING, REFORMING, SHIFT, Reaction, delta_g_RT, delta_h
from thermo.species import GRAPHITE, g_RT, graphite_mu_RT

#: CO + H2 = C + H2O (carbon from CO by hydrogen).
CO_REDUCTION = Reaction("CO reduction", {"CO": -1, "H2": -1, GRAPHITE: 1, "H2O": 1})

#: The carbon-forming reactions of the carbon check, by route key (JSON and Dataset names).
CARBON_ROUTES: dict[str, Reaction] = {
    "methane_cracking": CRACKING,
    "co_reduction": CO_REDUCTION,
    "boudouard": BOUDOUARD,
}

__all__ = ["BOUDOUARD", "CARBON_ROUTES", "CO_REDUCTION", "CRACKING", "REFORMING", "SHIFT",
           "delta_h", "ln_K", "ln_K_at_pressure"]


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
