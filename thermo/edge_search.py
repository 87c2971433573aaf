"""Refining brackets of a change of verdict: bisection and Illinois false position.

:func:`thermo.edges.feasible_intervals` brackets every limit's edge between two neighbouring
grid nodes of a row and narrows all brackets of a window together, one batch of the core per
step. This module holds the narrowing:

* ``"bisect"``: every bracket is halved at every step (about ``log2(step / tolerance)``
  steps, the same for all brackets of a uniform grid).
* ``"illinois"``: each bracket's next point is where the straight line through the limit's
  margins at its two ends crosses zero (regula falsi), with the Illinois change (the margin
  kept at an end that stays twice in a row is halved, so both ends close in;
  [DOWELL-JARRATT1971]), never nearer than 0.45 of the tolerance to an end (so a
  point that lands next to the crossing closes the bracket at the next step), and a plain
  halving where the margins are not finite (the ``converged`` verdict has none) or where two
  steps did not halve the bracket. Brackets narrower than the tolerance drop out of the batch.

Both stop where a bracket is at most `tolerance` wide and report its middle, so both report
the edge to half the tolerance of the same change of verdict.

Every temperature is in K.
"""

from __future__ import annotations

from collections.abc import Callable

import numpy as np

#: Methods of :func:`refine`.
METHODS = ("bisect", "illinois")

#: The Illinois point keeps at least this share of the tolerance from either end [-].
END_MARGIN = 0.45

#: Most steps of the Illinois method (it needs far fewer; each step narrows every bracket by
#: at least END_MARGIN * tolerance).
MAX_STEPS = 200

#: probe(indexes of the brackets, temperatures [K], secondary first estimates [K] or None)
#: -> (verdict at the points, margin at the points (NaN where none), secondary outlet [K]
#: at the points or None).
Probe = Callable[[np.ndarray, np.ndarray, np.ndarray | None],
                 tuple[np.ndarray, np.ndarray, np.ndarray | None]]


def refine(probe: Probe, lo, hi, ok_lo, g_lo, g_hi, tolerance: float, method: str = "bisect",
           carry_lo=None, carry_hi=None) -> tuple[np.ndarray, np.ndarray]:
    """Narrow brackets [lo, hi] [K] of a change of verdict to at most `tolerance` [K].

    Parameters
    ----------
    probe : Probe
        The core at points of some brackets.
    lo, hi : ndarray (B,)
        Bracket ends [K], lo < hi.
    ok_lo : ndarray of bool (B,)
        The verdict at `lo` (the one at `hi` is the other).
    g_lo, g_hi : ndarray (B,)
        The limit's margin at the ends (>= 0 where met; NaN where there is none) [its unit].
    tolerance : float
        Largest final bracket width [K].
    method : {"bisect", "illinois"}
    carry_lo, carry_hi : ndarray (B,), optional
        The secondary reformer's outlet [K] at the ends: the line between them gives each
        point's first estimate (probe's third argument), and probe's third result moves
        with the ends.

    Returns
    -------
    lo, hi : ndarray (B,)
        The final brackets [K].
    """
    if method not in METHODS:
        raise ValueError(f"unknown edge method {method!r}; one of {', '.join(METHODS)}")
    lo = np.array(lo, dtype=float)
    hi = np.array(hi, dtype=float)
    ok_lo = np.asarray(ok_lo, dtype=bool)
    c_lo = None if carry_lo is None else np.array(carry_lo, dtype=float)
    c_hi = None if carry_hi is None else np.array(carry_hi, dtype=float)
    if method == "bisect":
        every = np.arange(lo.size)
        while lo.size and float(np.max(hi - lo)) > tolerance:
            mid = 0.5 * (lo + hi)
            guess = None if c_lo is None else 0.5 * (c_lo + c_hi)
            okm, _, c_mid = probe(every, mid, guess)
            go_up = okm == ok_lo
            lo = np.where(go_up, mid, lo)
            hi = np.where(go_up, hi, mid)
            if c_lo is not None and c_mid is not None:
                c_lo = np.where(go_up, c_mid, c_lo)
                c_hi = np.where(go_up, c_hi, c_mid)
        return lo, hi
    g_lo = np.array(g_lo, dtype=float)
    g_hi = np.array(g_hi, dtype=float)
    kept = np.zeros(lo.size, dtype=int)  # end kept at the last step: -1 lo, +1 hi, 0 none
    w1 = np.full(lo.size, np.inf)  # width before the last step
    w2 = np.full(lo.size, np.inf)  # and before the one before
    for _ in range(MAX_STEPS):
        width = hi - lo
        act = np.flatnonzero(width > tolerance)
        if act.size == 0:
            break
        a, b, ga, gb, w = lo[act], hi[act], g_lo[act], g_hi[act], width[act]
        with np.errstate(divide="ignore", invalid="ignore"):
            c = a - ga * (b - a) / (gb - ga)
        halve = ~np.isfinite(c) | (w > 0.5 * w2[act])
        c = np.where(halve, 0.5 * (a + b),
                     np.clip(c, a + END_MARGIN * tolerance, b - END_MARGIN * tolerance))
        guess = None
        if c_lo is not None:
            guess = c_lo[act] + (c - a) / w * (c_hi[act] - c_lo[act])
        okc, gc, c_new = probe(act, c, guess)
        up = okc == ok_lo[act]  # the change lies above c: c is the new lower end
        w2[act], w1[act] = w1[act], w
        i_up, i_dn = act[up], act[~up]
        # Illinois: an end kept twice in a row has its margin halved.
        g_hi[i_up] = np.where(kept[i_up] == 1, 0.5 * g_hi[i_up], g_hi[i_up])
        g_lo[i_dn] = np.where(kept[i_dn] == -1, 0.5 * g_lo[i_dn], g_lo[i_dn])
        lo[i_up], g_lo[i_up], kept[i_up] = c[up], gc[up], 1
        hi[i_dn], g_hi[i_dn], kept[i_dn] = c[~up], gc[~up], -1
        if c_lo is not None and c_new is not None:
            c_lo[i_up] = c_new[up]
            c_hi[i_dn] = c_new[~up]
    return lo, hi
