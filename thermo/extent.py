r"""Hand-check method: equilibrium of one or two reactions by their extents.

An engineer checks a number by hand this way: the equilibrium constant from the standard
Gibbs energy change, :math:`K = \exp(-\Delta G^\circ / RT)` (with :math:`\Delta G^\circ` in
J/mol, so R in J/(mol K)), the ideal-gas mole fractions written in the extent
:math:`\xi`, :math:`n_i = n_{i,0} + \nu_i \xi`, and the one equation

.. math:: K = \prod_i \left(\frac{x_i P}{P^\circ}\right)^{\nu_i}

solved for the one physical root between the extent's bounds (no mole number negative). In
log form the left side minus the right side rises strictly with :math:`\xi` for an ideal gas,
so the physical root is unique and a bracketing solver finds it. When :math:`K > 10^{10}` the
extent is taken at its upper bound (the reaction goes to completion); when
:math:`K < 10^{-10}`, at its lower bound (the reaction runs backwards as far as it can).
Graphite, where it appears, is a pure solid of activity 1.

Reforming plus shift together have two extents; for each reforming extent the shift extent is
solved first, and the reforming equation is then solved along that curve (the Gibbs energy
minimized over the shift extent is convex in the reforming extent, so the outer equation is
monotone too). Standard state: 1 bar (thermo.constants.P_REF), as NIST-JANAF.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy.optimize import brentq

from thermo.constants import P_REF
from thermo.reactions import (  # noqa: F401 - the hand check's reactions, re-exported
    BOUDOUARD,
    CRACKING,
    REFORMING,
    SHIFT,
    K_from_delta_g,
    Reaction,
    delta_g_RT,
    delta_h,
    equilibrium_constant,
)
from thermo.species import GRAPHITE

#: Above this K the extent is set to its upper bound, below its inverse to its lower bound.
K_LIMIT = 1e10


@dataclass(frozen=True)
class ExtentSolution:
    """Result of the extent method.

    Attributes
    ----------
    extents : tuple of float
        Extent of each reaction [mol, in the unit of the initial moles].
    moles : dict[str, float]
        Moles of every species after reaction, graphite included [mol].
    mole_fractions : dict[str, float]
        Gas-phase mole fractions (graphite excluded) [-].
    K : tuple of float
        Equilibrium constant of each reaction, 1 bar basis [-].
    limit : tuple of str
        Per reaction, ``""`` for a solved root, ``"complete"`` where K > 1e10 set the upper
        bound, ``"reverse"`` where K < 1e-10 set the lower bound.
    """

    extents: tuple[float, ...]
    moles: dict[str, float]
    mole_fractions: dict[str, float]
    K: tuple[float, ...]
    limit: tuple[str, ...]


def extent_bounds(reaction: Reaction, moles: dict[str, float]) -> tuple[float, float]:
    """Smallest and largest extent keeping every mole number >= 0 [mol]."""
    lo, hi = -np.inf, np.inf
    for s, v in reaction.stoich.items():
        n0 = moles.get(s, 0.0)
        if v < 0:
            hi = min(hi, n0 / -v)
        elif v > 0:
            lo = max(lo, -n0 / v)
    return float(lo), float(hi)


def _ln_quotient(reaction: Reaction, moles: dict[str, float], xi: float, P: float) -> float:
    gas_total = sum(n + reaction.stoich.get(s, 0.0) * xi for s, n in moles.items()
                    if s != GRAPHITE)
    gas_total += sum(v * xi for s, v in reaction.stoich.items()
                     if s != GRAPHITE and s not in moles)
    ln_q = reaction.gas_mole_change * (math.log(P / P_REF) - math.log(gas_total))
    for s, v in reaction.stoich.items():
        if s == GRAPHITE:
            continue
        n = moles.get(s, 0.0) + v * xi
        ln_q += v * (math.log(n) if n > 0 else -math.inf)
    return float(ln_q)


def _apply(reactions, extents, moles):
    out = dict(moles)
    for r, xi in zip(reactions, extents, strict=True):
        for s, v in r.stoich.items():
            out[s] = out.get(s, 0.0) + v * xi
    for s in out:
        if out[s] < 0 and out[s] > -1e-12 * max(1.0, sum(moles.values())):
            out[s] = 0.0
    return out


def _fractions(moles):
    total = sum(n for s, n in moles.items() if s != GRAPHITE)
    return {s: n / total for s, n in moles.items() if s != GRAPHITE}


def _root(reaction, moles, P, lnK):
    """Extent of one reaction at equilibrium with the K limits; returns (xi, limit)."""
    lo, hi = extent_bounds(reaction, moles)
    if not (np.isfinite(lo) and np.isfinite(hi)) or hi < lo:
        raise ValueError(f"{reaction.name}: the initial moles give no finite extent range")
    if lnK > np.log(K_LIMIT):
        return hi, "complete"
    if lnK < -np.log(K_LIMIT):
        return lo, "reverse"
    if hi == lo:
        return lo, ""
    span = hi - lo
    a, b = lo + 1e-14 * span, hi - 1e-14 * span

    def f(xi):
        return _ln_quotient(reaction, moles, xi, P) - lnK

    fa, fb = f(a), f(b)
    if fa >= 0:
        return lo, ""
    if fb <= 0:
        return hi, ""
    return brentq(f, a, b, xtol=1e-15 * max(span, 1e-300), rtol=1e-15, maxiter=500), ""


def solve_extent(reaction: Reaction, moles: dict[str, float], T: float, P: float,
                 K: float | None = None) -> ExtentSolution:
    """Equilibrium of one reaction by its extent.

    Parameters
    ----------
    reaction : Reaction
        The reaction.
    moles : dict[str, float]
        Initial moles of each species [mol]; species not given start at 0.
    T : float
        Temperature [K].
    P : float
        Absolute pressure [Pa].
    K : float, optional
        Equilibrium constant on the 1 bar basis [-]; computed from the species data if None.

    Returns
    -------
    ExtentSolution

    Examples
    --------
    One mol CH4 with three of steam at 1100 K and 1 atm goes nearly all the way:

    >>> sol = solve_extent(REFORMING, {"CH4": 1.0, "H2O": 3.0}, 1100.0, 101325.0)
    >>> round(sol.extents[0], 4)
    0.9988
    """
    lnK = float(np.log(K)) if K is not None else float(-delta_g_RT(reaction, T))
    xi, limit = _root(reaction, moles, P, lnK)
    out = _apply([reaction], [xi], moles)
    return ExtentSolution((xi,), out, _fractions(out), (float(np.exp(lnK)),), (limit,))


def solve_reforming_shift(moles: dict[str, float], T: float, P: float) -> ExtentSolution:
    """Equilibrium of reforming and shift together, by their two extents.

    Parameters
    ----------
    moles : dict[str, float]
        Initial moles [mol] of CH4, H2O, CO, CO2, H2 and any inert species.
    T : float
        Temperature [K].
    P : float
        Absolute pressure [Pa].

    Returns
    -------
    ExtentSolution
        Extents (reforming, shift). No carbon and no higher hydrocarbons are considered, so
        the answer equals the full minimization wherever those are negligible.
    """
    lnK1 = float(-delta_g_RT(REFORMING, T))
    lnK2 = float(-delta_g_RT(SHIFT, T))

    def inner(xi1):
        after = _apply([REFORMING], [xi1], moles)
        xi2, lim2 = _root(SHIFT, after, P, lnK2)
        return xi2, lim2, after

    def outer(xi1):
        xi2, _, after = inner(xi1)
        return _ln_quotient(REFORMING, _apply([SHIFT], [xi2], after), 0.0, P) - lnK1

    lo, hi = extent_bounds(REFORMING, moles)
    span = hi - lo
    a, b = lo + 1e-13 * span, hi - 1e-13 * span
    fa, fb = outer(a), outer(b)
    limit1 = ""
    if fa >= 0:
        xi1 = lo
    elif fb <= 0:
        xi1 = hi
    else:
        xi1 = brentq(outer, a, b, xtol=1e-15 * span, rtol=1e-15, maxiter=500)
    if lnK1 > np.log(K_LIMIT):
        xi1, limit1 = hi, "complete"
    elif lnK1 < -np.log(K_LIMIT):
        xi1, limit1 = lo, "reverse"
    xi2, limit2, after = inner(xi1)
    out = _apply([SHIFT], [xi2], after)
    return ExtentSolution((float(xi1), float(xi2)), out, _fractions(out),
                          (float(np.exp(lnK1)), float(np.exp(lnK2))), (limit1, limit2))
