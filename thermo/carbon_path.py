"""Carbon activity of the gas (split from :mod:`thermo.carbon`): the equilibrated gas's
activity from its element potentials, the real gas's activities by the three carbon-forming
routes, and the largest activity along the tube (path maximum, refined by parabolic steps).
Graphite reference unless stated; temperatures in K, pressures in Pa.
"""

from __future__ import annotations

from dataclasses import dataclass

import numba
import numpy as np

from thermo.constants import P_REF, R
from thermo.equilibrium import equilibrate
from thermo.reactions import CARBON_ROUTES
from thermo.species import GAS_SPECIES, g_RT, graphite_mu_RT

#: Largest spacing of the path's scan nodes [K]; local maxima between nodes are refined.


PATH_STEP = 50.0
#: Verdict value where a discrete flag breaks the carbon limit [-] (ln of activity e).
FLAG_LN_ACTIVITY = 1.0
#: C2+ carbon above this fraction of the hydrocarbon carbon entering the primary sets the
#: higher-hydrocarbon flag [-]: 0.1 %, common practice, no source (natural gas carries a few
#: per cent; a pre-reformer's equilibrium near 400-450 degC leaves about 1e-5).
HIGHER_HYDROCARBON_FRACTION = 1e-3
#: Stop refining a maximum when the parabola's step is below this [K]: near the top the
#: activity is flat, so 2 mK moves ln a by about 1e-10 (curvature near 1e-4 K-2).
REFINE_XTOL = 2e-3
#: ... or when the gain in ln a the parabola predicts at its vertex is below this [-].
REFINE_GAIN = 1e-10
#: Iteration cap of the refinement.
REFINE_ITERATIONS = 40
#: Gas-only solves of fewer points than this run on one thread [-]. 4096 until BLAS ran on
#: one thread (thermo/threads.py); since then two threads win from a few hundred points
#: (sweep medians, 2026-12-04, idle 2-core machine: 40 x 20 x 20 window 112 ms at 4096, 110 at
#: 512, 105 at 128 and 106 at 32; demo 52.6, 52.9, 47.1, 47.2 ms).
SMALL_BATCH = 128
#: Binding criterion codes (``carbon_binding``: value = index), CF-style flag meanings.
BINDING = ("outlet_equilibrium", "path_equilibrium", "real_gas", "higher_hydrocarbons",
           "other_stage")
#: Plain words of each binding criterion, for tables and the review sheet.
BINDING_WORDS = {
    "outlet_equilibrium": "equilibrated gas at the outlet",
    "path_equilibrium": "equilibrated gas upstream in the tube",
    "real_gas": "real (non-equilibrated) gas at the catalyst temperature",
    "higher_hydrocarbons": "C2+ hydrocarbons entering above their cracking temperature",
    "other_stage": "graphite in another reforming stage of the train",
}
#: Plain names of the carbon-forming routes (thermo.reactions.CARBON_ROUTES keys).
ROUTE_WORDS = {"methane_cracking": "methane cracking", "co_reduction": "CO reduction",
               "boudouard": "Boudouard"}
#: Species lower and upper data limits [K].
_T_DATA = (300.0, 3500.0)

_I = {s: i for i, s in enumerate(GAS_SPECIES)}
_C2PLUS = np.array([2.0 if s == "C2H6" else 3.0 if s == "C3H8" else 0.0 for s in GAS_SPECIES])
_HC = np.array([1.0 if s == "CH4" else 0.0 for s in GAS_SPECIES]) + _C2PLUS


def gas_ln_activity(T_eq, P, elements, warm=None, row: int = 1):
    """ln carbon activity (graphite) of the gas at equilibrium without carbon, and its
    element potentials; NaN where the solve did not converge.

    Parameters
    ----------
    T_eq, P : array_like (N,)
        Equilibrium temperature [K] and absolute pressure [Pa].
    elements : array_like (N, E)
        Element abundances [mol s-1].
    warm : array_like (N, E), optional
        Element potentials to start from.
    row : int
        Warm-start rows (thermo.equilibrium.equilibrate).
    """
    n = np.size(T_eq)
    threads = numba.get_num_threads()
    # Small batches (a few hundred points, most of them warm) run on one thread: starting
    # the thread pool costs more than it saves there, much more on a loaded machine.
    numba.set_num_threads(1 if n < SMALL_BATCH else threads)
    try:
        eq = equilibrate(T_eq, P, elements, allow_carbon=False, warm_start=warm, row=row)
    finally:
        numba.set_num_threads(threads)
    return np.where(eq.converged, eq.ln_carbon_activity, np.nan), eq.element_potentials


def real_gas_ln_activities(mole_fraction, T, P) -> dict[str, np.ndarray]:
    """ln carbon activity (graphite) of a gas by each carbon-forming reaction at T, P [-].

    ``ln a = ln K(T, P) - sum_i nu_i ln(x_i P / P°)`` over the reaction's gases, with
    ``ln K(T, P) = -sum_i nu_i g_i/RT - mu_gr(T, P)/RT`` (thermo.reactions.ln_K_at_pressure,
    written out here so that each species' g/RT is evaluated once); -inf where a reactant is
    absent (route unavailable; also where the route's species are all absent).

    Parameters
    ----------
    mole_fraction : array_like (N, S)
        Gas mole fractions, wet [-].
    T, P : array_like (N,)
        Catalyst temperature [K], absolute pressure [Pa].
    """
    x = np.atleast_2d(np.asarray(mole_fraction, dtype=float))
    T = np.broadcast_to(np.asarray(T, dtype=float), (x.shape[0],))
    P = np.broadcast_to(np.asarray(P, dtype=float), (x.shape[0],))
    with np.errstate(divide="ignore"):
        ln_p = np.log(x) + np.log(P / P_REF)[:, None]
    species = {s for rx in CARBON_ROUTES.values() for s in rx.stoich if s in _I}
    mu = {s: g_RT(T, s) + ln_p[:, _I[s]] for s in species}  # mu_i / RT of the gas
    mu_gr = graphite_mu_RT(T, P)
    out = {}
    for key, rx in CARBON_ROUTES.items():
        val = -mu_gr
        with np.errstate(invalid="ignore"):
            for s, nu in rx.stoich.items():
                if s in _I:
                    val = val - nu * mu[s]
        out[key] = np.where(np.isnan(val), -np.inf, val)
    return out




# ------------------------------------------------------------------------------ path maximum


def _nodes(required: np.ndarray, step: float) -> np.ndarray:
    """Sorted required temperatures with gaps wider than `step` filled evenly [K]."""
    r = np.sort(required)
    keep = np.r_[True, np.diff(r) > 1e-9]
    r = r[keep]
    out = [r[:1]]
    for a, b in zip(r[:-1], r[1:], strict=True):
        k = int(np.ceil((b - a) / step))
        if k > 1:
            out.append(a + (b - a) * np.arange(1, k) / k)
        out.append(np.array([b]))
    return np.concatenate(out)


def _refine(f, line, a, m, c, fa, fm, fc, warm):
    """Maximize f between a and c from the bracket a < m < c, fm >= fa, fc (vectorized).

    Successive parabolic interpolation, keeping the bracket; `f(tau, line, warm)` returns
    values and element potentials. Returns (tau, value) of each maximum.
    """
    active = np.ones(m.size, dtype=bool)
    for _ in range(REFINE_ITERATIONS):
        k = np.flatnonzero(active)
        if k.size == 0:
            break
        ak, mk, ck, fak, fmk, fck = a[k], m[k], c[k], fa[k], fm[k], fc[k]
        d1, d2 = mk - ak, mk - ck
        num = d1 * d1 * (fmk - fck) - d2 * d2 * (fmk - fak)
        den = d1 * (fmk - fck) - d2 * (fmk - fak)
        with np.errstate(invalid="ignore", divide="ignore"):
            v = mk - 0.5 * num / den
        wide_right = (ck - mk) > (mk - ak)
        mid = np.where(wide_right, 0.5 * (mk + ck), 0.5 * (ak + mk))
        bad = ~np.isfinite(v) | (v <= ak) | (v >= ck)
        v = np.where(bad, mid, v)
        # Done when the parabola's step is tiny, or the gain it predicts at its vertex is
        # below REFINE_GAIN (ln a; the value, not the position, is what is reported).
        with np.errstate(invalid="ignore", divide="ignore"):
            curv = 2.0 * ((fak - fmk) / (ak - mk) - (fck - fmk) / (ck - mk)) / (ak - ck)
        gain = -0.5 * curv * (v - mk) ** 2
        done = ~bad & ((np.abs(v - mk) < REFINE_XTOL) | (np.abs(gain) < REFINE_GAIN))
        active[k[done]] = False
        k, v = k[~done], v[~done]
        if k.size == 0:
            break
        fv, lam = f(v, line[k], warm[k])
        ok = np.isfinite(fv)
        fv = np.where(ok, fv, -np.inf)
        up = fv > fm[k]
        left = v < m[k]
        # New best: the bracket shrinks to the side of v; else v replaces that side's end.
        c[k] = np.where(up & left, m[k], np.where(~up & ~left, v, c[k]))
        fc[k] = np.where(up & left, fm[k], np.where(~up & ~left, fv, fc[k]))
        a[k] = np.where(up & ~left, m[k], np.where(~up & left, v, a[k]))
        fa[k] = np.where(up & ~left, fm[k], np.where(~up & left, fv, fa[k]))
        m[k] = np.where(up, v, m[k])
        fm[k] = np.where(up, fv, fm[k])
        warm[k] = np.where(up[:, None], lam, warm[k])
        active[k[c[k] - a[k] < REFINE_XTOL]] = False
    return m, fm


@dataclass(frozen=True)
class PathMaximum:
    """Largest ln carbon activity along each point's path, and where it is.

    Attributes
    ----------
    ln_activity : ndarray (L, M)
        ln of the path maximum [-] (one row per line, one column per outlet temperature).
    temperature : ndarray (L, M)
        Path (gas) temperature where it occurs [K].
    """

    ln_activity: np.ndarray
    temperature: np.ndarray


def path_maxima(elements, pressure, approach: float, start: float, stations, outlet,
                offsets=(0.0,), known=None) -> list[PathMaximum]:
    """Path maximum of the equilibrated gas's carbon activity, for lines of outlets.

    Parameters
    ----------
    elements : array_like (L, E)
        Element flows of the gas entering the primary reformer, one line each [mol s-1].
    pressure : array_like (L,)
        Absolute pressure of each line [Pa].
    approach : float
        Approach to equilibrium [K]: the gas at path temperature tau is equilibrated and its
        activity taken at tau - approach.
    start : float
        Path start, the primary inlet temperature [K].
    stations : sequence of float
        Temperatures of a user profile between start and outlet, in flow order [K].
    outlet : array_like (M,)
        Outlet temperatures, ascending, shared by all lines [K].
    offsets : sequence of float
        Gibbs energy offsets of the carbon referred to [J mol-1] (0 for graphite); one result
        per offset.
    known : (ndarray (L, M), ndarray (L, M, E)), optional
        ln activity and element potentials of the gas-only equilibrium already solved at the
        outlet temperatures (a grid's own points).

    Returns
    -------
    list of PathMaximum, one per offset.
    """
    b = np.atleast_2d(np.asarray(elements, dtype=float))
    L = b.shape[0]
    P = np.broadcast_to(np.asarray(pressure, dtype=float), (L,))
    T_out = np.asarray(outlet, dtype=float)
    dT = float(approach)
    lo_ok, hi_ok = _T_DATA[0] + dT, _T_DATA[1] + dT
    ends = np.clip(np.array([start, *stations], dtype=float), lo_ok, hi_ok)
    lo = max(min(ends.min(), T_out.min()) - PATH_STEP, lo_ok)
    hi = min(max(ends.max(), T_out.max()) + PATH_STEP, _T_DATA[1])
    nodes = _nodes(np.r_[T_out, ends, lo, hi], PATH_STEP)
    K = nodes.size

    def index(t):  # nearest node (every required temperature is one, to 1e-9 K)
        return int(np.argmin(np.abs(nodes - t)))

    out_idx = np.array([index(t) for t in T_out])
    end_idx = [index(t) for t in ends]
    E = b.shape[1]
    F = np.full((L, K), np.nan)
    LAM = np.zeros((L, K, E))
    unknown = np.ones(K, dtype=bool)
    if known is not None:
        F[:, out_idx] = known[0]
        LAM[:, out_idx] = known[1]
        unknown[out_idx] = False
    u = np.flatnonzero(unknown)
    if u.size and known is not None:
        # Outward from the grid's own nodes, one node index at a time over all lines, each
        # new node warm-started from its solved neighbour (towards the window).
        lo_k, hi_k = out_idx.min(), out_idx.max()
        order = [k for k in range(lo_k - 1, -1, -1)] + [k for k in range(hi_k + 1, K)]
        order += [k for k in u if lo_k < k < hi_k]  # gaps inside the window, if any
        for k in order:
            ref = k + 1 if k < lo_k else k - 1
            ln, lam = gas_ln_activity(np.full(L, nodes[k] - dT), P, b, warm=LAM[:, ref])
            F[:, k], LAM[:, k] = ln, lam
    elif u.size:
        Tq = np.tile(nodes[u] - dT, L)
        # Each line's nodes in one warm-started row (each from its predecessor).
        ln, lam = gas_ln_activity(Tq, np.repeat(P, u.size), np.repeat(b, u.size, axis=0),
                                  row=u.size)
        F[:, u] = ln.reshape(L, u.size)
        LAM[:, u] = lam.reshape(L, u.size, E)
    bad_line = np.isnan(F).any(axis=1)
    results = []
    for off in offsets:
        results.append(_path_for_offset(F, LAM, nodes, b, P, dT, float(off), out_idx,
                                        end_idx, bad_line))
    return results


def _path_for_offset(F, LAM, nodes, b, P, dT, off, out_idx, end_idx, bad_line):
    L, K = F.shape
    T_eq = nodes - dT
    G = F - off / (R * T_eq)[None, :]
    Gs = np.where(np.isfinite(G), G, -np.inf)
    mid = (Gs[:, 1:-1] >= Gs[:, :-2]) & (Gs[:, 1:-1] > Gs[:, 2:]) & np.isfinite(G[:, 1:-1])
    line, kk = np.nonzero(mid)
    kk = kk + 1

    def f(tau, ln_idx, warm):
        ln, lam = gas_ln_activity(tau - dT, P[ln_idx], b[ln_idx], warm=warm)
        return ln - off / (R * (tau - dT)), lam

    if line.size:
        tau, val = _refine(f, line, nodes[kk - 1].copy(), nodes[kk].copy(),
                           nodes[kk + 1].copy(), Gs[line, kk - 1].copy(), Gs[line, kk].copy(),
                           Gs[line, kk + 1].copy(), LAM[line, kk].copy())
        Q = int(np.bincount(line, minlength=L).max())
    else:
        tau = val = np.empty(0)
        Q = 1
    TAU = np.full((L, Q), np.nan)
    GQ = np.full((L, Q), -np.inf)
    slot = np.zeros(L, dtype=int)
    for j in range(line.size):
        TAU[line[j], slot[line[j]]] = tau[j]
        GQ[line[j], slot[line[j]]] = val[j]
        slot[line[j]] += 1
    rows = np.arange(L)

    def interval(ia, ib, prefer_b):
        """Max over the path interval between nodes ia and ib (both ends and maxima)."""
        ta, tb = nodes[ia], nodes[ib]
        ga, gb = Gs[:, ia], Gs[:, ib]
        take_b = gb >= ga if prefer_b else gb > ga
        best = np.where(take_b, gb, ga)
        tbest = np.where(take_b, tb, ta)
        lo, hi = min(ta, tb), max(ta, tb)
        with np.errstate(invalid="ignore"):
            inside = (TAU >= lo) & (TAU <= hi)
        cand = np.where(inside, GQ, -np.inf)
        j = np.argmax(cand, axis=1)
        cv = cand[rows, j]
        better = cv > best
        return np.where(better, cv, best), np.where(better, TAU[rows, j], tbest)

    # Fixed part of the path: inlet -> stations (the same for every outlet temperature).
    fixed_v = Gs[:, end_idx[0]].copy()
    fixed_t = np.full(L, nodes[end_idx[0]])
    for ia, ib in zip(end_idx[:-1], end_idx[1:], strict=True):
        v, t = interval(ia, ib, False)
        up = v > fixed_v
        fixed_v, fixed_t = np.where(up, v, fixed_v), np.where(up, t, fixed_t)
    M = out_idx.size
    lnmax = np.empty((L, M))
    tmax = np.empty((L, M))
    for m in range(M):
        v, t = interval(end_idx[-1], out_idx[m], True)
        up = v >= fixed_v
        lnmax[:, m] = np.where(up, v, fixed_v)
        tmax[:, m] = np.where(up, t, fixed_t)
    lnmax[bad_line] = np.nan
    tmax[bad_line] = np.nan
    return PathMaximum(lnmax, tmax)


