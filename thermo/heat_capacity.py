"""The equilibrium heat capacity of gas (and graphite) kept at equilibrium: the derivative
of an adiabatic stage's outlet enthalpy with temperature, the slope of its Newton steps
(:mod:`thermo.train_stages`). A numpy path for short calls and a numba kernel for long ones,
equal to 1e-12 (tests/thermo/test_train_heat_capacity.py). SI units.
"""

from __future__ import annotations

import numba
import numpy as np

from thermo.constants import R
from thermo.species import GRAPHITE, cp_R, formula_matrix, gas_table, h_RT, record


def equilibrium_heat_capacity(moles, carbon, T, T_eq, P, potentials: bool = False):
    r"""d H_out / d T of gas (and graphite) kept at equilibrium at fixed P and elements [W K-1].

    The outlet is the equilibrium at T_eq = T - approach (the approach fixed) and its
    enthalpy is taken at T. With :math:`\ln x_j = a_j\cdot\lambda - c_j`,
    :math:`c_j = g_j/RT + \ln(P/P^\circ)` and :math:`dc_j/dT = -h_j/(RT^2)` (Gibbs-Helmholtz),
    the element balances :math:`\sum_j a_{je} n_j = b_e` and :math:`\sum_j x_j = 1` give a
    linear system in :math:`d\lambda/dT` and :math:`d\ln N/dT` (with graphite, its carbon
    potential fixes :math:`d\lambda_C/dT = -\tilde h_{gr}/(RT^2)`, :math:`\tilde h_{gr}`
    including :math:`v(P - P^\circ)`, and the graphite's rate of change is the extra unknown);
    then :math:`dH/dT = \sum_j n_j c_{p,j} + \sum_j h_j\,dn_j/dT + c_{p,gr} n_{gr} +
    \tilde h_{gr}\,dn_{gr}/dT` (Smith & Missen 1982 [SMITH-MISSEN1982], ch. 2, for the
    element-potential form).

    Parameters
    ----------
    moles : ndarray (N, S)
        Equilibrium gas [mol s-1].
    carbon : ndarray (N,)
        Graphite [mol s-1].
    T, T_eq, P : ndarray (N,)
        Enthalpy temperature, equilibrium temperature [K], pressure [Pa].
    potentials : bool
        Also return d lambda_e / d T (N, E) [K-1], the element potentials' rate of change
        along the same path (0 for elements absent from a point): the start of the next
        equilibrium solve at a nearby temperature.

    Returns
    -------
    dH/dT (N,) [W K-1], or (dH/dT, d lambda/dT) with `potentials`.
    """
    n = np.asarray(moles, dtype=float)
    N, S = n.shape
    A = formula_matrix()  # (S, E)
    gr = record(GRAPHITE)
    # Per-point quantities over RT at T_eq (derivative of the composition) and at T (enthalpy).
    h_eq = gas_table(T_eq, "h_RT").T  # (N, S), h/RT at T_eq
    dc = -h_eq / T_eq[:, None]  # dc_j/dT
    h_gr_eq = h_RT(T_eq, GRAPHITE) + gr.molar_volume * (P - gr.standard_pressure) / (R * T_eq)
    h_T = gas_table(T, "h_RT").T * (R * T)[:, None]  # J mol-1 at T
    cp_T = gas_table(T, "cp_R").T * R
    h_gr_T = h_RT(T, GRAPHITE) * R * T + gr.molar_volume * (P - gr.standard_pressure)
    cp_gr = cp_R(T, GRAPHITE) * R
    carbon = np.asarray(carbon, dtype=float)
    rhs_gr = -h_gr_eq / T_eq
    if N >= HEAT_CAPACITY_KERNEL_MIN:
        dH, lam = np.empty(N), np.empty((N, A.shape[1]))
        c = [np.require(np.broadcast_to(a, shape), dtype=np.float64, requirements=("C", "W"))
             for a, shape in ((n, (N, S)), (carbon, (N,)), (dc, (N, S)), (rhs_gr, (N,)),
                              (h_T, (N, S)), (cp_T, (N, S)), (h_gr_T, (N,)), (cp_gr, (N,)))]
        _heat_capacity_kernel(np.array(A), *c, dH, lam)
    else:
        dH, lam = _heat_capacity_numpy(A, n, carbon, dc, rhs_gr, h_T, cp_T, h_gr_T, cp_gr)
    return (dH, lam) if potentials else dH


#: Calls of at least this many points go through the compiled :func:`_heat_capacity_kernel`
#: (its first use in a process loads it from numba's cache or compiles it; smaller calls,
#: a single point's steps, use the numpy path). On the train's 7,200-point pass of
#: tests/benchmarks/bench_train.py's window, 0.8 ms instead of 7.6 ms (2026-12-05).
HEAT_CAPACITY_KERNEL_MIN = 256


def _heat_capacity_numpy(A, n, carbon, dc, rhs_gr, h_T, cp_T, h_gr_T, cp_gr):
    """:func:`equilibrium_heat_capacity` from its NASA values, by numpy over all points:
    the batched linear solve. Returns (dH/dT, d lambda/dT)."""
    N, S = n.shape
    E = A.shape[1]
    iC = 0
    total = n.sum(axis=1)
    x = n / total[:, None]
    has_c = carbon > 0.0
    present = (n @ A) > 0.0  # (N, E): elements of the gas
    present[:, iC] |= has_c
    # Unknowns: dlambda_e/dT (E), dlnN/dT, dn_gr/dT.
    M = np.zeros((N, E + 2, E + 2))
    rhs = np.zeros((N, E + 2))
    AA = (A[:, :, None] * A[:, None, :]).reshape(S, E * E)  # a_je a_jf per species
    M[:, :E, :E] = (n @ AA).reshape(N, E, E)
    M[:, :E, E] = n @ A
    M[:, iC, E + 1] = 1.0
    rhs[:, :E] = (n * dc) @ A
    M[:, E, :E] = x @ A
    rhs[:, E] = (x * dc).sum(axis=1)
    # Last row: graphite present -> its potential fixes dlambda_C; absent -> dn_gr = 0.
    M[has_c, E + 1, iC] = 1.0
    rhs[has_c, E + 1] = rhs_gr[has_c]
    M[~has_c, E + 1, E + 1] = 1.0
    # Elements absent from a point: their row and column are zero; pin the unknown to 0.
    keep = np.ones((N, E + 2))
    keep[:, :E] = present
    M *= keep[:, :, None] * keep[:, None, :]
    diag = np.arange(E)
    M[:, diag, diag] += 1.0 - keep[:, :E]
    rhs *= keep
    # Row scaling by the element rows' magnitude keeps the system well conditioned.
    scale = np.abs(M).max(axis=2)
    scale[scale == 0] = 1.0
    y = np.linalg.solve(M / scale[:, :, None], (rhs / scale)[..., None])[..., 0]
    dlnn = A @ y[:, :E].T  # (S, N)
    dn = n * (dlnn.T - dc + y[:, E:E + 1])  # (N, S)
    dH = (np.einsum("ns,ns->n", n, cp_T) + np.einsum("ns,ns->n", h_T, dn)
          + carbon * cp_gr + h_gr_T * y[:, E + 1])
    return dH, y[:, :E]


@numba.njit(cache=True)
def _heat_capacity_kernel(A, n, carbon, dc, rhs_gr, h_T, cp_T, h_gr_T, cp_gr, dH, lam):
    """:func:`_heat_capacity_numpy`, point by point: the same (E + 2)-square system, built
    and row-scaled the same way, solved by Gaussian elimination with partial pivoting (the
    method of LAPACK's dgesv, which numpy's solve calls, in another order of operations:
    equal to 1e-12, tests/thermo/test_train_heat_capacity.py). Fills dH (N,) and lam (N, E)."""
    N, S = n.shape
    E = A.shape[1]
    m = E + 2
    M = np.empty((m, m))
    y = np.empty(m)
    nA = np.empty(E)
    xA = np.empty(E)
    for p in range(N):
        total = 0.0
        for j in range(S):
            total += n[p, j]
        M[:, :] = 0.0
        y[:] = 0.0
        nA[:] = 0.0
        xA[:] = 0.0
        xdc = 0.0
        for j in range(S):
            nj = n[p, j]
            xj = nj / total
            xdc += xj * dc[p, j]
            for e in range(E):
                a = A[j, e]
                if a != 0.0:
                    nA[e] += nj * a
                    xA[e] += xj * a
                    y[e] += nj * dc[p, j] * a
                    for f in range(E):
                        M[e, f] += nj * a * A[j, f]
        has_c = carbon[p] > 0.0
        for e in range(E):
            M[e, E] = nA[e]
            M[E, e] = xA[e]
        M[0, E + 1] = 1.0
        y[E] = xdc
        if has_c:
            M[E + 1, 0] = 1.0
            y[E + 1] = rhs_gr[p]
        else:
            M[E + 1, E + 1] = 1.0
        for e in range(E):
            present = nA[e] > 0.0 or (e == 0 and has_c)
            if not present:
                for f in range(m):
                    M[e, f] = 0.0
                    M[f, e] = 0.0
                M[e, e] = 1.0
                y[e] = 0.0
        for i in range(m):
            big = 0.0
            for f in range(m):
                big = max(big, abs(M[i, f]))
            if big == 0.0:
                big = 1.0
            for f in range(m):
                M[i, f] /= big
            y[i] /= big
        # Gaussian elimination, partial pivoting.
        for k in range(m):
            piv = k
            for i in range(k + 1, m):
                if abs(M[i, k]) > abs(M[piv, k]):
                    piv = i
            if piv != k:
                for f in range(m):
                    M[k, f], M[piv, f] = M[piv, f], M[k, f]
                y[k], y[piv] = y[piv], y[k]
            for i in range(k + 1, m):
                r = M[i, k] / M[k, k]
                if r != 0.0:
                    for f in range(k + 1, m):
                        M[i, f] -= r * M[k, f]
                    y[i] -= r * y[k]
        for k in range(m - 1, -1, -1):
            acc = y[k]
            for f in range(k + 1, m):
                acc -= M[k, f] * y[f]
            y[k] = acc / M[k, k]
        out = carbon[p] * cp_gr[p] + h_gr_T[p] * y[E + 1]
        for j in range(S):
            dlnn = 0.0
            for e in range(E):
                dlnn += A[j, e] * y[e]
            out += n[p, j] * cp_T[p, j] + h_T[p, j] * (n[p, j] * (dlnn - dc[p, j] + y[E]))
        dH[p] = out
        for e in range(E):
            lam[p, e] = y[e]
