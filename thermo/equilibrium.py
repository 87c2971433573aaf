r"""Chemical equilibrium of an ideal-gas mixture plus pure graphite at fixed T and P.

The Gibbs energy of the gas, :math:`G/RT = \sum_j n_j (c_j + \ln x_j)` with
:math:`c_j = g^\circ_j/RT + \ln(P/P^\circ)`, is minimized subject to the element balances
:math:`A^T n = b`. This module solves the problem through its dual in the element potentials
:math:`\lambda` (Smith & Missen 1982 [SMITH-MISSEN1982], ch. 2 and 6): at the minimum every
species obeys :math:`\ln x_j = a_j\cdot\lambda - c_j`, so the mole fractions are a function of
:math:`\lambda` alone and the problem becomes

.. math:: \max_u\; b\cdot u \quad\text{subject to}\quad \sum_j \exp(a_j\cdot u - c_j) = 1 .

The constraint is removed by a shift along :math:`d` (one for every free element):
:math:`u = \lambda + t(\lambda)\,d`, where the scalar :math:`t` is found by a one-dimensional
Newton solve of the log-sum-exp equation (every species holds at least one atom of a free
element, so the sum grows strictly with :math:`t`). The resulting function
:math:`D(\lambda) = b\cdot\lambda + t(\lambda)\,b\cdot d` is concave; its gradient is the
element-balance residual :math:`b - N A^T x` with the total moles
:math:`N = b\cdot d / \sum_j m_j x_j` and its Hessian is
:math:`-N\sum_j x_j \tilde a_j \tilde a_j^T`, a sum of outer products that stays positive
semi-definite in floating point. Newton steps with an Armijo line search maximize it.

Graphite: the gas-only problem is solved first; the carbon activity relative to graphite is
:math:`\ln a_C = \lambda_C - \mu_{gr}/RT` with the solid's pressure term included. Where it is
positive, the carbon potential is fixed at graphite's and the remaining potentials are solved
again from the gas-only answer; the deposit is the carbon the gas does not hold (the
"equilibrated gas" principle, [ROSTRUP-NIELSEN1984]). Where the feed lacks an element, the
species containing it are removed and its potential is not solved for.

All arithmetic is in log space: trace species down to the smallest double underflow to zero,
never to NaN, and huge or tiny equilibrium constants do not overflow. The kernel is compiled by
numba (cached on disk after the first build) and runs points in parallel.
"""

from __future__ import annotations

import itertools
import math
import subprocess
import sys
import types
from dataclasses import dataclass

import numba
import numpy as np

from thermo.constants import ELEMENTS, P_REF
from thermo.species import GAS_SPECIES, formula_matrix, gas_table, graphite_mu_RT

#: Convergence tolerance: largest relative element-balance residual [-].
TOLERANCE = 1e-10
#: Newton iteration limit per phase assemblage.
MAX_ITERATIONS = 200
#: Elements below this fraction of all atoms fed are treated as absent [-] (their species are
#: left out; at 1e-200 no physical quantity is affected, and the arithmetic stays normal).
TRACE_LIMIT = 1e-200
#: Largest change of any element potential in one Newton step [-] (a factor e^20 in x).
MAX_STEP = 20.0
#: Largest last Newton step of the shift equation [-]: the mole fractions are then taken to
#: first order in it (see `_shift`); its square times a few atoms is below 1e-16.
SHIFT_STEP = 1e-9
#: Mole fraction given to each basis species of an initial guess [-].
BASIS_FLOOR = 0.2
#: Species tried as members of an initial basis (the ones that can be major at equilibrium).
_MAJOR = ("CH4", "H2O", "H2", "CO", "CO2", "N2", "Ar")


def _candidate_bases() -> tuple[np.ndarray, np.ndarray]:
    """All subsets of the major species, as padded index rows and sizes."""
    idx = [GAS_SPECIES.index(s) for s in _MAJOR]
    rows, sizes = [], []
    for k in range(1, len(ELEMENTS) + 1):
        for combo in itertools.combinations(idx, k):
            rows.append(list(combo) + [-1] * (len(ELEMENTS) - k))
            sizes.append(k)
    return np.array(rows, dtype=np.int64), np.array(sizes, dtype=np.int64)


_CANDIDATES, _CANDIDATE_SIZES = _candidate_bases()
#: The formula matrix as the kernel takes it (a writable copy: see `_writable`).
_A = np.array(formula_matrix())


@numba.njit(cache=True)
def _shift(z, m, active, t, x):
    """Solve ln(sum_j exp(z_j + t m_j)) = 0 for t by Newton's method (convex, increasing).

    Fills `x` with exp(z_j + t m_j) at the root. Newton stops once a step is below
    SHIFT_STEP; the mole fractions are then taken from that step's exponentials e_j to first
    order in the step dt: x_j = (e_j / s0) (1 + dt (m_j - mbar)), with s0 = sum e_j and mbar
    the e-weighted mean of m. The neglected term, dt^2 (m_j - mbar)^2 / 2, is below 1e-16 of
    x_j (m_j is at most a few atoms), as is the next Newton step (quadratic convergence), so
    no second pass of exponentials is needed.
    """
    S = z.shape[0]
    for _ in range(200):
        zmax = -np.inf
        for j in range(S):
            if active[j]:
                v = z[j] + t * m[j]
                if v > zmax:
                    zmax = v
        s0 = 0.0
        s1 = 0.0
        for j in range(S):
            if active[j]:
                e = math.exp(z[j] + t * m[j] - zmax)
                x[j] = e
                s0 += e
                s1 += m[j] * e
            else:
                x[j] = 0.0
        phi = zmax + math.log(s0)
        mbar = s1 / s0
        dt = -phi / mbar
        t += dt
        if abs(dt) <= SHIFT_STEP or abs(dt) <= 1e-15 * (1.0 + abs(t)):
            break
    for j in range(S):
        x[j] = x[j] / s0 * (1.0 + dt * (m[j] - mbar))
    return t


@numba.njit(cache=True)
def _free_atoms(A, free, m):
    """m_j: atoms of the free elements in each species (the shift direction's weights)."""
    S, E = A.shape
    for j in range(S):
        acc = 0.0
        for e in range(E):
            if free[e]:
                acc += A[j, e]
        m[j] = acc


@numba.njit(cache=True)
def _evaluate(A, c, b, free, active, lam, t0, x, z, m):
    """Mole fractions, total moles and dual value at element potentials `lam`.

    Fills `x` (mole fractions) and returns (t, N, D).
    """
    S, E = A.shape
    Bf = 0.0
    for e in range(E):
        if free[e]:
            Bf += b[e]
    for j in range(S):
        if active[j]:
            acc = -c[j]
            for e in range(E):
                acc += A[j, e] * lam[e]
            z[j] = acc
        else:
            z[j] = -np.inf
    t = _shift(z, m, active, t0, x)
    q = 0.0
    for j in range(S):
        q += m[j] * x[j]
    N = Bf / q
    D = t * Bf
    for e in range(E):
        if free[e]:
            D += b[e] * lam[e]
    return t, N, D


@numba.njit(cache=True)
def _residual(A, b, free, x, N, g):
    """Element-balance residual g = b - N A^T x (free elements).

    Returns (largest relative residual, sum of squared relative residuals).
    """
    S, E = A.shape
    big = -1
    rest = 0.0
    for e in range(E):
        if free[e]:
            acc = 0.0
            for j in range(S):
                acc += A[j, e] * x[j]
            g[e] = b[e] - N * acc
            if big < 0 or b[e] > b[big]:
                big = e
        else:
            g[e] = 0.0
    # The free residuals sum to zero identically (N is defined so); taking the most abundant
    # element's residual from that identity keeps its round-off (1e-16 of a major element)
    # out of the Newton steps of elements present in traces.
    for e in range(E):
        if free[e] and e != big:
            rest += g[e]
    if big >= 0:
        g[big] = -rest
    worst = 0.0
    sq = 0.0
    for e in range(E):
        if free[e]:
            r = abs(g[e]) / b[e]
            sq += r * r
            if r > worst:
                worst = r
    return worst, sq


@numba.njit(cache=True)
def _newton_direction(A, free, x, N, m, g, H, delta, abar, scale):
    """Newton step of the dual: solve (N sum_j x_j at_j at_j^T) delta = g on the free elements.

    The matrix is singular along d (D is unchanged by a common shift of the free
    potentials); see the scaling note below for how that is handled.
    """
    S, E = A.shape
    q = 0.0
    for j in range(S):
        q += m[j] * x[j]
    for e in range(E):
        acc = 0.0
        for j in range(S):
            acc += A[j, e] * x[j]
        abar[e] = acc / q
    for e in range(E):
        for f in range(E):
            H[e, f] = 0.0
    for j in range(S):
        if x[j] == 0.0:
            continue
        for e in range(E):
            if not free[e]:
                continue
            ae = A[j, e] - m[j] * abar[e]
            w = N * x[j] * ae
            for f in range(e, E):
                if free[f]:
                    H[e, f] += w * (A[j, f] - m[j] * abar[f])
    # Jacobi scaling (unit diagonal), so that an element present in traces weighs as much as
    # a major one; then the null direction d of the dual (a common shift of the free
    # potentials) is filled by a rank-one term, which leaves the solution unchanged because
    # g is orthogonal to d.
    vn = 0.0
    for e in range(E):
        if free[e]:
            scale[e] = math.sqrt(H[e, e]) if H[e, e] > 1e-300 else 1.0
            vn += scale[e] * scale[e]
        else:
            scale[e] = 1.0
    for e in range(E):
        if not free[e]:
            for f in range(E):
                H[e, f] = 0.0
                H[f, e] = 0.0
            H[e, e] = 1.0
            continue
        for f in range(e, E):
            if free[f]:
                H[e, f] = H[e, f] / (scale[e] * scale[f]) + scale[e] * scale[f] / vn
                H[f, e] = H[e, f]
        H[e, e] += 1e-12
    # Cholesky factorization in place (lower triangle), then two triangular solves.
    for i in range(E):
        for jj in range(i + 1):
            s = H[i, jj]
            for kk in range(jj):
                s -= H[i, kk] * H[jj, kk]
            if i == jj:
                if s <= 0.0:
                    s = 1e-300
                H[i, i] = math.sqrt(s)
            else:
                H[i, jj] = s / H[jj, jj]
    for i in range(E):
        s = g[i] / scale[i]
        for kk in range(i):
            s -= H[i, kk] * delta[kk]
        delta[i] = s / H[i, i]
    for i in range(E - 1, -1, -1):
        s = delta[i]
        for kk in range(i + 1, E):
            s -= H[kk, i] * delta[kk]
        delta[i] = s / H[i, i]
    for e in range(E):
        delta[e] /= scale[e]
    for e in range(E):
        if not free[e]:
            delta[e] = 0.0


@numba.njit(cache=True)
def _maximize(A, c, b, free, active, lam, m, x, z, g, H, delta, abar, trial, scale, tol,
              max_iter):
    """Newton-Armijo maximization of the dual from `lam` (updated in place).

    Returns (converged, iterations, N, t): the element potentials are lam + t on the free
    elements.
    """
    S, E = A.shape
    _free_atoms(A, free, m)
    t, N, D = _evaluate(A, c, b, free, active, lam, 0.0, x, z, m)
    for it in range(max_iter + 1):
        err, sq = _residual(A, b, free, x, N, g)
        if err < tol:
            return True, it, N, t
        if it == max_iter:
            break
        _newton_direction(A, free, x, N, m, g, H, delta, abar, scale)
        # Cap the step: where a phase-controlling species is scarce the curvature is tiny and
        # the raw Newton step can reach 1e40 (exponential overshoot); the concave dual is then
        # climbed in steps of at most MAX_STEP in the potentials.
        big = 0.0
        for e in range(E):
            if abs(delta[e]) > big:
                big = abs(delta[e])
        if big > MAX_STEP:
            for e in range(E):
                delta[e] *= MAX_STEP / big
        slope = 0.0
        for e in range(E):
            slope += g[e] * delta[e]
        # Armijo on the dual; or, where an element is so scarce that its gain in the dual is
        # below the dual's round-off, a decrease of the relative element residuals with the
        # dual unchanged within that round-off (the Newton direction descends both; allowing
        # a real loss in the dual would let the two tests undo each other's steps).
        alpha = 1.0
        roundoff = 1e-13 * (1.0 + abs(D))
        for _ in range(60):
            for e in range(E):
                trial[e] = lam[e] + alpha * delta[e]
            t_new, N_new, D_new = _evaluate(A, c, b, free, active, trial, t, x, z, m)
            if D_new == D_new:
                if err < 1e-4 or D_new >= D + 1e-4 * alpha * slope:
                    break
                if D_new >= D - roundoff:
                    _, sq_new = _residual(A, b, free, x, N_new, g)
                    if sq_new <= (1.0 - 1e-4 * alpha) * sq:
                        break
            alpha *= 0.5
        for e in range(E):
            lam[e] = trial[e]
        t, N, D = t_new, N_new, D_new
    return False, max_iter, N, t


@numba.njit(cache=True)
def _dual_estimate(A, c, b, free, active, lam, m, z):
    """Cheap dual value at `lam`: the shift t from one Newton step of its equation.

    For the convex, increasing shift equation one Newton step from t = 0 lands at or beyond
    the root, so this over-estimates D a little; it ranks starting points at a fifth of the
    cost of the exact value.
    """
    S, E = A.shape
    zmax = -np.inf
    for j in range(S):
        if active[j]:
            acc = -c[j]
            for e in range(E):
                acc += A[j, e] * lam[e]
            z[j] = acc
            if acc > zmax:
                zmax = acc
    s0 = 0.0
    s1 = 0.0
    for j in range(S):
        if active[j]:
            w = math.exp(z[j] - zmax)
            s0 += w
            s1 += m[j] * w
    t1 = -(zmax + math.log(s0)) / (s1 / s0)
    D = 0.0
    Bf = 0.0
    for e in range(E):
        if free[e]:
            D += b[e] * lam[e]
            Bf += b[e]
    return D + t1 * Bf


@numba.njit(cache=True)
def _initial_guess(A, c, b, free, active, cand, cand_size, lam, m, z, trial, M, r):
    """Best starting potentials among basis guesses, ranked by the dual value.

    Each candidate basis (a set of as many major species as there are free elements) gives
    potentials at which its species have mole fraction BASIS_FLOOR.
    """
    S, E = A.shape
    k = 0
    for e in range(E):
        if free[e]:
            k += 1
    _free_atoms(A, free, m)
    best = -np.inf
    found = False
    lnfloor = math.log(BASIS_FLOOR)
    for ci in range(cand.shape[0]):
        if cand_size[ci] != k:
            continue
        ok = True
        for i in range(k):
            if not active[cand[ci, i]]:
                ok = False
        if not ok:
            continue
        # Build the k x k system over the free elements: a_j . lam = c_j + ln(floor).
        col = 0
        for e in range(E):
            if free[e]:
                for i in range(k):
                    M[i, col] = A[cand[ci, i], e]
                col += 1
        for i in range(k):
            r[i] = c[cand[ci, i]] + lnfloor
        # Gaussian elimination with partial pivoting.
        singular = False
        for p in range(k):
            piv = p
            for i in range(p + 1, k):
                if abs(M[i, p]) > abs(M[piv, p]):
                    piv = i
            if abs(M[piv, p]) < 1e-12:
                singular = True
                break
            if piv != p:
                for jj in range(k):
                    tmp = M[p, jj]
                    M[p, jj] = M[piv, jj]
                    M[piv, jj] = tmp
                tmp = r[p]
                r[p] = r[piv]
                r[piv] = tmp
            for i in range(p + 1, k):
                f = M[i, p] / M[p, p]
                for jj in range(p, k):
                    M[i, jj] -= f * M[p, jj]
                r[i] -= f * r[p]
        if singular:
            continue
        for p in range(k - 1, -1, -1):
            acc = r[p]
            for jj in range(p + 1, k):
                acc -= M[p, jj] * r[jj]
            r[p] = acc / M[p, p]
        col = 0
        for e in range(E):
            if free[e]:
                trial[e] = r[col]
                col += 1
            else:
                trial[e] = lam[e]
        D = _dual_estimate(A, c, b, free, active, trial, m, z)
        if D == D and D > best:
            best = D
            found = True
            for e in range(E):
                if free[e]:
                    lam[e] = trial[e]
    if not found:
        for e in range(E):
            if free[e]:
                lam[e] = 0.0


@numba.njit(cache=True)
def _solve_point(A, c, b_in, mu_gr, allow_carbon, lam0, use_lam0, cand, cand_size, tol,
                 max_iter, n_out, lam_out, work, H, M, free, active, carbon_first=False):
    """Equilibrium at one point. Returns (converged, iterations, carbon, ln_carbon_activity).

    With `carbon_first` (a warm start from a neighbour that deposits graphite) the
    gas + graphite problem is tried first: a converged answer with a positive deposit is the
    equilibrium (the problem is convex, so its stationary point is the minimum) and the
    gas-only solve is skipped; otherwise the usual order follows.
    """
    S, E = A.shape
    iC = 0
    x = work[0, :S]
    z = work[1, :S]
    m = work[2, :S]
    g = work[3, :E]
    delta = work[4, :E]
    abar = work[5, :E]
    trial = work[6, :E]
    lam = work[7, :E]
    b = work[8, :E]
    scale = work[9, :E]
    r = work[10, :E]
    saved = work[11, :E]
    total = 0.0
    for e in range(E):
        total += b_in[e]
    for e in range(E):
        b[e] = b_in[e] / total
        free[e] = b[e] > TRACE_LIMIT
        lam[e] = 0.0
    for j in range(S):
        ok = True
        for e in range(E):
            if A[j, e] > 0.0 and not free[e]:
                ok = False
        active[j] = ok
    warm = use_lam0
    if warm:
        for e in range(E):
            if free[e]:
                if not (lam0[e] == lam0[e]):  # a NaN: the start lacks this element
                    warm = False
                lam[e] = lam0[e]
    iC0 = 0
    if warm and carbon_first and allow_carbon and free[iC0]:
        for e in range(E):
            saved[e] = lam[e]
        free[iC0] = False
        lam[iC0] = mu_gr
        conv0, it0, N0, t0 = _maximize(A, c, b, free, active, lam, m, x, z, g, H, delta, abar,
                                       trial, scale, tol, max_iter)
        free[iC0] = True
        held = 0.0
        for j in range(S):
            held += A[j, iC0] * x[j]
        deposit = b[iC0] - N0 * held
        if conv0 and deposit > 0.0:
            for e in range(E):
                if e != iC0 and free[e]:
                    lam[e] += t0
            for j in range(S):
                n_out[j] = N0 * x[j] * total
            for e in range(E):
                lam_out[e] = lam[e] if (free[e] or e == iC0) else np.nan
            return True, it0, deposit * total, 0.0
        for e in range(E):
            lam[e] = saved[e]
    if not warm:
        _initial_guess(A, c, b, free, active, cand, cand_size, lam, m, z, trial, M, r)
    conv, iters, N, t = _maximize(A, c, b, free, active, lam, m, x, z, g, H, delta, abar,
                                  trial, scale, tol, max_iter)
    if not conv and warm:
        # A poor warm start: begin again from the basis guesses.
        for e in range(E):
            lam[e] = 0.0
        _initial_guess(A, c, b, free, active, cand, cand_size, lam, m, z, trial, M, r)
        conv, it2, N, t = _maximize(A, c, b, free, active, lam, m, x, z, g, H, delta, abar,
                                    trial, scale, tol, max_iter)
        iters += it2
    # The element potentials are lam + t on the free elements (the dual's shift).
    for e in range(E):
        if free[e]:
            lam[e] += t
    carbon = 0.0
    ln_ac = -np.inf
    if free[iC]:
        ln_ac = lam[iC] - mu_gr
        if allow_carbon and ln_ac > 0.0 and conv:
            for e in range(E):
                saved[e] = lam[e]
            free[iC] = False
            lam[iC] = mu_gr
            conv2, it2, N2, t2 = _maximize(A, c, b, free, active, lam, m, x, z, g, H, delta,
                                           abar, trial, scale, tol, max_iter)
            iters += it2
            held = 0.0
            for j in range(S):
                held += A[j, iC] * x[j]
            deposit = b[iC] - N2 * held
            if not conv2:
                # Report the failure; never fall back to a gas that is supersaturated.
                conv = False
                N = N2
                carbon = max(deposit, 0.0)
                ln_ac = 0.0
                for e in range(E):
                    if free[e]:
                        lam[e] += t2
            elif deposit > 0.0:
                N = N2
                carbon = deposit
                ln_ac = 0.0
                for e in range(E):
                    if free[e]:
                        lam[e] += t2
            else:
                # Graphite not stable after all (activity within round-off of 1): gas only.
                free[iC] = True
                for e in range(E):
                    lam[e] = saved[e]
                conv, it3, N, t3 = _maximize(A, c, b, free, active, lam, m, x, z, g, H, delta,
                                             abar, trial, scale, tol, max_iter)
                iters += it3
                for e in range(E):
                    if free[e]:
                        lam[e] += t3
                ln_ac = min(lam[iC] - mu_gr, 0.0)
    for j in range(S):
        n_out[j] = N * x[j] * total
    for e in range(E):
        lam_out[e] = lam[e] if free[e] or e == iC and b[e] > TRACE_LIMIT else np.nan
    return conv, iters, carbon * total, ln_ac


@numba.njit(cache=True, parallel=True)
def _solve_batch(A, C, B, MU, allow_carbon, LAM0, use_lam0, row, cand, cand_size, tol,
                 max_iter, n_out, lam_out, carbon_out, lnac_out, conv_out, iter_out):
    """Solve all points; rows of `row` consecutive points run in order on one thread, each
    point starting from its predecessor's potentials (rows run in parallel)."""
    P = C.shape[0]
    S, E = A.shape
    nrows = (P + row - 1) // row
    nblock = min(nrows, 256)  # blocks of rows share work buffers (results do not depend on it)
    for blk in numba.prange(nblock):
        work = np.empty((12, max(S, E)))
        H = np.empty((E, E))
        M = np.empty((E, E))
        free = np.empty(E, dtype=np.bool_)
        active = np.empty(S, dtype=np.bool_)
        start_lam = np.empty(E)
        for rr in range(blk * nrows // nblock, (blk + 1) * nrows // nblock):
            start = rr * row
            stop = min(start + row, P)
            for p in range(start, stop):
                # `chained` (a run-time bool, not a literal) is passed for the flags, so that
                # both calls share one compiled specialisation of _solve_point.
                chained = False
                if not use_lam0 and p > start and conv_out[p - 1]:
                    chained = True
                    for e in range(E):
                        if (B[p, e] > 0.0) != (B[p - 1, e] > 0.0):
                            chained = False
                if chained:
                    # Two converged predecessors of the same phase assemblage: start from
                    # the straight line through their potentials (the row's step is
                    # taken as even), else from the predecessor's potentials.
                    for e in range(E):
                        start_lam[e] = lam_out[p - 1, e]
                    if (p > start + 1 and conv_out[p - 2]
                            and (carbon_out[p - 1] > 0.0) == (carbon_out[p - 2] > 0.0)):
                        for e in range(E):
                            if (B[p, e] > 0.0) != (B[p - 2, e] > 0.0):
                                break
                        else:
                            for e in range(E):
                                start_lam[e] = 2.0 * lam_out[p - 1, e] - lam_out[p - 2, e]
                    conv, it, carbon, lnac = _solve_point(
                        A, C[p], B[p], MU[p], allow_carbon, start_lam, chained, cand,
                        cand_size, tol, max_iter, n_out[p], lam_out[p], work, H, M, free,
                        active, carbon_out[p - 1] > 0.0)
                else:
                    conv, it, carbon, lnac = _solve_point(
                        A, C[p], B[p], MU[p], allow_carbon, LAM0[p], use_lam0, cand,
                        cand_size, tol, max_iter, n_out[p], lam_out[p], work, H, M, free,
                        active, chained)
                conv_out[p] = conv
                iter_out[p] = it
                carbon_out[p] = carbon
                lnac_out[p] = lnac


@dataclass(frozen=True)
class EquilibriumResult:
    """Equilibrium state of N points.

    Attributes
    ----------
    moles : numpy.ndarray, shape (N, S)
        Gas moles (or molar flows) of each species in GAS_SPECIES order [mol or mol s-1,
        as the element abundances were given].
    carbon : numpy.ndarray, shape (N,)
        Graphite deposited [same unit as `moles`].
    ln_carbon_activity : numpy.ndarray, shape (N,)
        ln of the gas's carbon activity relative to graphite at T, P [-]; 0 where carbon
        deposits, -inf where the feed holds no carbon.
    element_potentials : numpy.ndarray, shape (N, E)
        lambda_e = mu_e/(RT) of each element (ELEMENTS order) on the 1 bar standard state
        [-]; NaN for elements absent from the feed.
    converged : numpy.ndarray of bool, shape (N,)
        Element balances closed to TOLERANCE.
    iterations : numpy.ndarray of int, shape (N,)
        Newton iterations taken (gas-only and with-graphite solves added).
    """

    moles: np.ndarray
    carbon: np.ndarray
    ln_carbon_activity: np.ndarray
    element_potentials: np.ndarray
    converged: np.ndarray
    iterations: np.ndarray

    @property
    def mole_fractions(self) -> np.ndarray:
        """Gas mole fractions, shape (N, S) [-]."""
        return self.moles / self.moles.sum(axis=1, keepdims=True)


def equilibrate(
    T,
    P,
    elements,
    *,
    allow_carbon: bool = True,
    warm_start: np.ndarray | None = None,
    row: int = 1,
) -> EquilibriumResult:
    """Equilibrium of ideal gas plus graphite at N points in one call.

    Parameters
    ----------
    T : array_like, shape (N,)
        Temperature [K], inside every species' data range.
    P : array_like, shape (N,)
        Absolute pressure [Pa], > 0.
    elements : array_like, shape (N, E)
        Element abundances in ELEMENTS order (C, H, O, N, Ar) [mol, or mol s-1]; at least one
        positive entry per row, none negative.
    allow_carbon : bool
        Let graphite form where it is stable. False gives the (metastable) gas-only state.
    warm_start : array_like, shape (N, E), optional
        Element potentials of nearby solved points to start from instead of the basis
        guesses (which are still tried if a warm start does not converge).
    row : int
        Points come in rows of this many neighbours (a window's last axis): within a row
        each point starts from its predecessor's answer, which halves the work of a sweep.
        Results then depend on the row length only (not on threads or chunks); 1 solves
        every point from the basis guesses.

    Returns
    -------
    EquilibriumResult

    Notes
    -----
    Element-potential dual method described in this module's docstring
    ([SMITH-MISSEN1982]). Validated from 673 to 1673 K, 1 to 100 bar, steam-to-carbon 0 to
    10 and O2-to-carbon 0 to 0.7 (tests/thermo/test_equilibrium*.py).
    """
    T = np.atleast_1d(np.asarray(T, dtype=float))
    P = np.atleast_1d(np.asarray(P, dtype=float))
    b = np.atleast_2d(np.asarray(elements, dtype=float))
    n = max(T.shape[0], P.shape[0], b.shape[0])
    T = np.broadcast_to(T, (n,))
    P = np.broadcast_to(P, (n,))
    b = np.broadcast_to(b, (n, len(ELEMENTS)))
    if np.any(~np.isfinite(P)) or np.any(P <= 0):
        raise ValueError("pressure must be finite and above 0 Pa")
    if np.any(~np.isfinite(b)) or np.any(b < 0) or np.any(b.sum(axis=1) <= 0):
        raise ValueError("element abundances must be finite, not negative, and not all zero")
    if warm_start is None:
        lam0, use = np.zeros((n, len(ELEMENTS))), False
    else:
        lam0, use = np.broadcast_to(warm_start, (n, len(ELEMENTS))), True
    solver = _solve_batch if _use_compiled(n) else _interpreted()["_solve_batch"]
    return _run_kernel(solver, T, P, b, allow_carbon, lam0, use, row)


def _writable(a) -> np.ndarray:
    """`a` as a writable C-contiguous float64 array (copied only if it is not one already).

    Every array the kernel receives goes through here: numba compiles one specialisation per
    array type, and a read-only view (``np.broadcast_to``, the cached formula matrix) is a
    different type from a writable array. One type per argument means one compiled kernel,
    the one :func:`build_kernel` puts in the cache (tests/thermo/test_kernel_signature.py).
    """
    return np.require(a, dtype=np.float64, requirements=("C", "W"))


def _run_kernel(solver, T, P, b, allow_carbon, lam0, use, row) -> EquilibriumResult:
    """Run `solver` (the compiled `_solve_batch` or its interpreted twin) on N points."""
    n = b.shape[0]
    C = _writable((gas_table(T, "g_RT") + np.log(P / P_REF)).T)
    MU = _writable(graphite_mu_RT(T, P))
    n_out = np.empty((n, len(GAS_SPECIES)))
    lam_out = np.empty((n, len(ELEMENTS)))
    carbon = np.empty(n)
    lnac = np.empty(n)
    conv = np.empty(n, dtype=np.bool_)
    iters = np.empty(n, dtype=np.int64)
    solver(_A, C, _writable(b), MU, bool(allow_carbon), _writable(lam0), bool(use),
           max(1, int(row)), _CANDIDATES, _CANDIDATE_SIZES, float(TOLERANCE),
           int(MAX_ITERATIONS), n_out, lam_out, carbon, lnac, conv, iters)
    return EquilibriumResult(n_out, carbon, lnac, lam_out, conv, iters)


#: Largest call solved by the interpreted kernel when the compiled one is neither loaded nor
#: cached: a few milliseconds per point instead of waiting for the compiler (about 16 s on
#: one core). `explorer point` sends calls of up to 76 points (the carbon path along the
#: tube, the stages' steps): at 64 its first run compiled and took 12.5 s, at 1000 it took
#: 3.4 s with the same output (fresh venv, empty numba cache, 2026-12-03, load 1.4).
INTERPRETED_POINTS = 1000

#: Largest call solved by the interpreted kernel while a background build runs (about
#: 1-3 ms per point on one core: a demo window of 5,746 points in 10-20 s); a larger one
#: waits for the build instead.
INTERPRETED_WHILE_BUILDING = 20_000

_build: dict = {"process": None}


def _interpreted() -> dict:
    """The kernel's own functions run by the Python interpreter (no compilation).

    Each numba function's original Python code is rebound to a namespace in which the other
    kernel functions are their Python versions too, and ``numba.prange`` is ``range``: the
    same operations in the same order, so results equal the compiled kernel's (checked to
    1e-12 in tests/thermo/test_equilibrium_interpreted.py), about 100-1000x slower per point.
    """
    global _INTERPRETED
    if _INTERPRETED is None:
        ns = dict(globals())
        ns["numba"] = types.SimpleNamespace(prange=range)
        for name, fn in list(globals().items()):
            if isinstance(fn, numba.core.registry.CPUDispatcher):
                py = fn.py_func
                ns[name] = types.FunctionType(py.__code__, ns, name, py.__defaults__)
        _INTERPRETED = ns
    return _INTERPRETED


_INTERPRETED: dict | None = None


def _use_compiled(n: int) -> bool:
    """Whether a call of `n` points runs the compiled kernel (loading or compiling it).

    The interpreted kernel serves small calls on a machine whose numba cache lacks the
    kernel, and calls of up to INTERPRETED_WHILE_BUILDING points while a background build
    (:func:`start_background_build`) runs.
    """
    if kernel_is_loaded():
        return True
    if build_in_progress():
        if n <= INTERPRETED_WHILE_BUILDING:
            return False
        _build["process"].wait()  # a big window: the build is the shorter wait
    if kernel_is_cached():
        return True
    return n > INTERPRETED_POINTS


def start_background_build() -> bool:
    """Compile the kernel into numba's on-disk cache in a child process, if it is not there.

    Meanwhile :func:`equilibrate` runs the interpreted kernel in this process (same results),
    and loads the compiled one from the cache once the child is done. Returns True if a build
    was started.
    """
    if _solve_batch.signatures or kernel_is_cached():
        return False
    proc = _build["process"]
    if proc is not None and proc.poll() is None:
        return True
    _build["process"] = subprocess.Popen(
        [sys.executable, "-c", "import thermo.equilibrium as e; e.build_kernel()"],
        stdin=subprocess.DEVNULL, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    return True


def kernel_is_loaded() -> bool:
    """Whether this process has the compiled kernel in memory (compiled or loaded)."""
    return bool(_solve_batch.signatures)


def build_in_progress() -> bool:
    """Whether a background build started by this process is still running."""
    proc = _build["process"]
    return proc is not None and proc.poll() is None


def build_kernel() -> None:
    """Compile (or load) the kernel now: one small solve through the compiled path, with
    the argument types every :func:`equilibrate` call uses (one specialisation)."""
    _run_kernel(_solve_batch, np.array([1000.0]), np.array([P_REF]),
                np.array([[1.0, 4.0, 1.0, 0.0, 0.0]]), True, np.zeros((1, len(ELEMENTS))),
                False, 1)


def kernel_is_cached() -> bool:
    """Whether the compiled solver kernel is in numba's on-disk cache and up to date.

    When False, the first call of :func:`equilibrate` in this process compiles it (about
    20-40 s on a 2-core machine); interfaces use this to tell the user before it starts.
    """
    if _solve_batch.signatures:
        return True
    try:
        # numba's index is keyed on the source file's stamp: a stale one loads as empty.
        return bool(_solve_batch._cache._cache_file._load_index())
    except (AttributeError, OSError, EOFError, ValueError):  # internals moved: assume not
        return False
