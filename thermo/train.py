r"""The reforming train: pre-reformer, primary and secondary reformers, shift stages.

Engineers buy hydrogen after shift, not a reformer outlet. :func:`train_balance` carries the
gas of N points (vectorized, like :func:`thermo.balances.reformer_balance`) through the
stages a scenario names (:class:`thermo.scenario.Train`), all at the window's pressure
(pressure drop neglected):

1. **Pre-reformer** (optional): adiabatic Gibbs equilibrium of the mixed feed from its own
   inlet temperature (graphite allowed). Its gas is then reheated to the primary inlet
   temperature (``feed.inlet_temperature``). Carbon it deposits stays in it.
2. **Primary reformer**: equilibrium at the window's T - approach, enthalpy at T; its duty
   is the radiant duty from its inlet (the pre-reformed gas if there is one) at the feed
   inlet temperature to the outlet at T (:func:`~thermo.balances.reformer_balance`).
3. **Secondary reformer** (optional): the primary's gas at T and the oxidant (oxygen or air)
   at its own temperature mix and burn; the outlet temperature is the one at which the
   enthalpy of the equilibrated outlet (at that temperature minus the stage's approach)
   equals the inlet enthalpy: an adiabatic stage, duty zero.
4. **Shift stages** (optional, high then low temperature): the gas is cooled to the stage
   temperature, then only CO + H2O = CO2 + H2 moves, to its equilibrium at the stage
   temperature plus the approach (less conversion, the reaction being exothermic). Methane,
   higher hydrocarbons and carbon are frozen: the catalysts are selective, and a full
   Gibbs equilibrium at 200-450 degC would wrongly methanate the gas. The stage is held at
   its temperature; its duty (negative) is the heat of shift removed.

Train totals: H2 product (H2 after the last stage per mol hydrocarbon carbon of the fresh
feed); heat supplied and heat removed, the positive and the negative heats of the whole train
(each stage's duty and the heat before it): as a rule the primary's radiant duty plus the
pre-reformed gas's reheat (which plants take from the convection section), and the coolers
and shift stages; graphite in any reforming stage; methane slip after the last reforming
stage (dry). Where a stage finds no outlet, it, every stage after it and the totals are NaN
and the point is flagged not converged.

The shift equilibrium is closed-form: with a, b, c, d the moles of CO, H2O, CO2, H2 and the
extent x, ``(c + x)(d + x) = K (a - x)(b - x)`` (total moles unchanged, so pressure drops
out), whose physical root lies in [-min(c, d), min(a, b)] where the left minus the right
side increases through zero.
"""

from __future__ import annotations

import dataclasses

import numpy as np

from thermo.balances import (
    HC_CARBON,
    enthalpy_flow,
    outlet_enthalpy,
    per_point,
    reformer_balance,
)
from thermo.constants import P_REF
from thermo.scenario import SecondaryReformer, Train
from thermo.species import GAS_SPECIES, formula_matrix, gas_table
from thermo.train_stages import (  # noqa: F401 - names of this module, kept importable here
    _I,
    ADIABATIC_TOLERANCE,
    T_MAX,
    StageResult,
    TrainResult,
    _dry_fraction,
    _illinois,
    _mask,
    _newton,
    _subset,
    _unique_rows,
    adiabatic_equilibrium,
    equilibrium_heat_capacity,
    shift_equilibrium,
)

#: Outlets of the pre-reformer already solved in this process, per stage solver and per
#: unique (feed, P, inlet T) row (its bytes): (T, gas, graphite, ok, H_in). The stage does not
#: depend on the primary's temperature, so a window's exact edges (thermo.edges), which
#: re-evaluate its rows at other temperatures, and later chunks find their rows here. Each
#: point's solve is independent of the others in its call, so a row taken from here equals
#: the one its own call would give (bit for bit in calls of two or more rows; single-row calls,
#: as thermo.point makes, neither read nor fill it, matrix products of one row rounding
#: differently). Cleared when it holds PRE_CACHE_ROWS rows (about 200 bytes each).
_PRE_CACHE: dict = {}
PRE_CACHE_ROWS = 100_000


def _pre_reformer(feed, P, T_in, N):
    """Adiabatic pre-reformer on the unique (feed, P, T_in) rows of a grid."""
    uniq, inv = _unique_rows(feed, P, T_in)
    S = len(GAS_SPECIES)
    solver = adiabatic_equilibrium
    cache = _PRE_CACHE.setdefault(solver, {}) if uniq.shape[0] > 1 else None
    keys = [r.tobytes() for r in uniq] if cache is not None else []
    todo = np.array([k not in cache for k in keys], dtype=bool) if cache is not None \
        else np.ones(uniq.shape[0], dtype=bool)
    T_o = np.empty(uniq.shape[0])
    n_o = np.empty((uniq.shape[0], S))
    c_o = np.empty(uniq.shape[0])
    ok_o = np.empty(uniq.shape[0], dtype=bool)
    H_o = np.empty(uniq.shape[0])
    if todo.any():
        new = uniq[todo]
        n_u, P_u, T_u = new[:, :S], new[:, S], new[:, S + 1]
        H_u = enthalpy_flow(n_u, T_u)
        Tout, eq, ok = solver(n_u, H_u, P_u, 0.0,
                              bounds=(np.maximum(T_u - 400.0, 350.0), T_MAX), guess=T_u)
        T_o[todo], n_o[todo], c_o[todo], ok_o[todo], H_o[todo] = (Tout, eq.moles, eq.carbon,
                                                                  ok, H_u)
        if cache is not None:
            if len(cache) + new.shape[0] > PRE_CACHE_ROWS:
                cache.clear()
            for i in np.flatnonzero(todo):
                cache[keys[i]] = (T_o[i], n_o[i].copy(), c_o[i], ok_o[i], H_o[i])
    for i in np.flatnonzero(~todo):
        T_o[i], n_o[i], c_o[i], ok_o[i], H_o[i] = cache[keys[i]]
    return (T_o[inv], n_o[inv], c_o[inv], ok_o[inv], H_o[inv])


def _secondary(sec: SecondaryReformer, gas, T_gas, P, hc_carbon, warm_start=None, guess=None,
               outlet_potentials=None):
    """Adiabatic secondary reformer: the primary's gas at T plus the oxidant.

    `guess` (K, NaN where none) replaces the primary's temperature as the first estimate of
    the outlet; `outlet_potentials` (NaN rows where none) replace the primary's element
    potentials as the first solve's start (a neighbouring point's secondary outlet)."""
    N = gas.shape[0]
    ox = sec.oxidant_flows(hc_carbon).T  # (N, S)
    T_ox = np.full(N, sec.oxidant_temperature)
    H_in = enthalpy_flow(gas, T_gas) + enthalpy_flow(ox, T_ox)
    mixed = gas + ox
    dT = np.full(N, sec.approach)
    lo = np.maximum(np.minimum(T_gas, T_ox) - 400.0, 350.0)
    T0 = np.maximum(T_gas, lo)
    if guess is not None:
        g = np.asarray(guess, dtype=float)
        T0 = np.where(np.isfinite(g), np.clip(g, lo, T_MAX), T0)
    warm = _complete_potentials(warm_start, mixed, T0 - dT, P) if warm_start is not None \
        else None
    if outlet_potentials is not None:
        near = np.isfinite(outlet_potentials).all(axis=1)
        if near.any():
            warm = np.full((N, outlet_potentials.shape[1]), np.nan) if warm is None else warm
            warm[near] = outlet_potentials[near]
    T, eq, ok = adiabatic_equilibrium(mixed, H_in, P, dT, bounds=(lo, T_MAX), guess=T0,
                                      warm_start=warm)
    return T, eq, ok, ox, H_in


#: Strides of the secondary reformer's passes along a row (:func:`_secondary_rows`, after
#: its first point and then its middle and last, :func:`row_passes`): at each stride, from
#: the largest here at most half the row, the points not yet solved, from the cubic through
#: those solved. Halving strides: on the 40 x 20 x 20 window of
#: tests/benchmarks/bench_train.py (rows of 20: 8, 4, 2, 1) 15% fewer equilibrium solves in
#: the secondary reformer than (3, 1), outlets equal to 1.5e-7 K.
ROW_STRIDES = (16, 8, 4, 2, 1)


def _row_weights(row: int, anchors: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """The columns of a row that are not anchors, and their Lagrange weights (cols, anchors)
    on the (up to) four anchors around each: cubic interpolation along the row."""
    cols = np.setdiff1d(np.arange(row), anchors)
    W = np.zeros((cols.size, anchors.size))
    m = min(4, anchors.size)
    for r, j in enumerate(cols):
        k = int(np.searchsorted(anchors, j)) - 1
        s = int(np.clip(k - 1, 0, anchors.size - m))
        nodes = anchors[s:s + m].astype(float)
        for q in range(m):
            others = np.delete(nodes, q)
            W[r, s + q] = np.prod((j - others) / (nodes[q] - others))
    return cols, W


def row_passes(row: int, strides=None) -> list[np.ndarray]:
    """The columns of a row of `row` points solved at each pass of :func:`_secondary_rows`
    (each sorted; together every column once): the row's first point alone, then its middle
    and last, then the strides of `strides` (default ROW_STRIDES) from the largest at most
    half the row.

    Only the first pass starts from the primary's temperature (a median 199 K below the
    outlet on tests/benchmarks/bench_train.py's window: about 7 equilibrium solves per point,
    three times the cost of a point of the later passes), so it holds one point per row; the
    middle and last start from its outlet, the rest from the cubic through the outlets
    found. On that window (rows of 20: passes 0 | 10, 19 | 8, 16 | 4, 12 | 2, 6, 14, 18 |
    the odd ones) 155,971 equilibrium iterations in the train's sweep instead of 173,768 with
    a first pass of 0, 8, 16, 19, and the sweep 9-10 % faster.
    """
    strides = [k for k in (ROW_STRIDES if strides is None else strides) if 2 * k <= row]
    done = np.zeros(row, dtype=bool)
    passes = []
    lead = [np.array([0]), np.unique(np.array([row // 2, row - 1]))]
    for cols in lead + [np.arange(0, row, step) for step in strides]:
        cols = cols[~done[cols]]
        if cols.size:
            passes.append(cols)
            done[cols] = True
    rest = np.flatnonzero(~done)
    if rest.size:
        passes.append(rest)
    return passes


def _row_potentials(lam, ok, W, solved, cols, base, row: int) -> np.ndarray:
    """First element potentials of the columns `cols` of every row: the cubic along the row
    (weights `W`, cols x solved) through the solved outlets' potentials `lam` (N, E), and the
    nearest solved outlet's where one of the cubic's nodes did not converge (NaN where that
    one did not either)."""
    rows = base.shape[0]
    E = lam.shape[1]
    lam_s = lam.reshape(rows, row, E)[:, solved]
    bad_s = ~ok.reshape(rows, row)[:, solved]
    lam_s = np.where(bad_s[..., None], 0.0, lam_s)
    out = np.einsum("cs,rse->rce", W, lam_s)
    bad = (bad_s.astype(float) @ (W != 0).T) > 0  # (rows, cols)
    if bad.any():
        nearest = solved[np.abs(cols[:, None] - solved[None, :]).argmin(axis=1)]
        src = base + nearest  # (rows, cols)
        near = np.where(ok[src][..., None], lam[src], np.nan)
        out[bad] = near[bad]
    return out.reshape(-1, E)


def _secondary_rows(sec: SecondaryReformer, gas, T_gas, P, hc_carbon, warm_start, row: int):
    """:func:`_secondary` on rows of `row` neighbouring points (a window's last axis), in
    passes (:func:`row_passes`): the first (each row's first point) from the primary's
    temperature, each later one from the cubic along the row through the outlets already
    found (the constant or the line where fewer are) (its first solve from the
    cubic through their element potentials, :func:`_row_potentials`). The outlets are those
    of a single pass to the energy balance's tolerance (ADIABATIC_TOLERANCE), with fewer
    equilibrium solves."""
    N = gas.shape[0]
    rows = N // row
    base = (np.arange(rows) * row)[:, None]
    lam = None if warm_start is None else np.asarray(warm_start, dtype=float)
    T = np.full(N, np.nan)
    ok = np.zeros(N, dtype=bool)
    ox = np.empty_like(gas)
    H_in = np.empty(N)
    fields: dict[str, np.ndarray] = {}
    solved = np.zeros(0, dtype=int)
    for cols in row_passes(row):
        idx = (base + cols).ravel()
        kw = {}
        if solved.size:
            _, W = _row_weights(row, solved)
            W = W[np.searchsorted(np.setdiff1d(np.arange(row), solved), cols)]
            kw["guess"] = (T.reshape(rows, row)[:, solved] @ W.T).ravel()
            kw["outlet_potentials"] = _row_potentials(fields["element_potentials"], ok, W,
                                                      solved, cols, base, row)
        t, eq, o, x, h = _secondary(sec, gas[idx], T_gas[idx], P[idx], hc_carbon[idx],
                                    None if lam is None else lam[idx], **kw)
        T[idx], ok[idx], ox[idx], H_in[idx] = t, o, x, h
        for f in dataclasses.fields(eq):
            a = getattr(eq, f.name)
            if f.name not in fields:
                fields[f.name] = np.empty((N, *a.shape[1:]), dtype=a.dtype)
            fields[f.name][idx] = a
        solved = np.union1d(solved, cols)
    return T, type(eq)(**fields), ok, ox, H_in


def _complete_potentials(lam, gas, T, P):
    """Element potentials of a neighbouring state, with those of elements it lacked (NaN)
    estimated from the gas's most abundant species holding them, as if that species were at
    equilibrium with the rest: lambda_e = (ln x_j + c_j - sum_f a_jf lambda_f) / a_je.

    A start for :func:`~thermo.equilibrium.equilibrate`; elements with no such species stay
    NaN (the solver then starts those points from its basis guesses)."""
    lam = np.array(lam, dtype=float)
    A = formula_matrix()
    x = gas / gas.sum(axis=1, keepdims=True)
    with np.errstate(divide="ignore"):
        c = gas_table(T, "g_RT").T + np.log(P / P_REF)[:, None] + np.log(x)  # (N, S)
    for e in range(A.shape[1]):
        miss = np.flatnonzero(np.isnan(lam[:, e]))
        if miss.size == 0:
            continue
        holders = np.flatnonzero(A[:, e] > 0)
        j = holders[np.argmax(gas[np.ix_(miss, holders)], axis=1)]
        others = A[j].copy()
        others[:, e] = 0.0
        with np.errstate(invalid="ignore"):
            rest = np.nansum(others * lam[miss], axis=1)
            est = (c[miss, j] - rest) / A[j, e]
        good = np.isfinite(est) & (gas[miss, j] > 0)
        lam[miss[good], e] = est[good]
    return lam


def train_balance(
    train: Train,
    inlet_flow,
    temperature,
    pressure,
    inlet_temperature,
    approach=0.0,
    *,
    row: int = 1,
    secondary_guess=None,
    warm_start=None,
) -> TrainResult:
    """Carry N points' feed through the train's stages.

    Parameters
    ----------
    train : Train
        The stages (an empty Train gives the primary reformer alone).
    inlet_flow : array_like (N, S)
        Fresh mixed feed (gas, steam, co-feeds) [mol s-1].
    temperature : array_like (N,)
        Primary reformer outlet temperature [K].
    pressure : array_like (N,)
        Absolute pressure of every stage [Pa].
    inlet_temperature : array_like (N,)
        Temperature of the gas entering the primary reformer [K].
    approach : array_like (N,)
        Primary reformer approach to equilibrium [K].
    row : int
        Warm-start rows of the primary's solve (thermo.equilibrium.equilibrate); rows of
        long enough for two passes (:func:`row_passes`) also solve the secondary reformer in
        passes along them (:func:`_secondary_rows`).
    secondary_guess : array_like (N,), optional
        First estimates of the secondary reformer's outlet temperature [K] (NaN where none;
        the primary's temperature then). Used instead of the passes along rows.
    warm_start : array_like (N, E), optional
        Element potentials to start the primary's equilibrium from (equilibrate's
        `warm_start`; NaN rows start from the basis guesses).

    Returns
    -------
    TrainResult
    """
    feed = np.atleast_2d(np.asarray(inlet_flow, dtype=float))
    N = feed.shape[0]
    T = per_point(temperature, N)
    P = per_point(pressure, N)
    T_feed = per_point(inlet_temperature, N)
    hc = feed @ HC_CARBON
    zeros = np.zeros(N)
    no_flow = np.zeros_like(feed)
    stages: list[StageResult] = []
    primary_in = feed
    reheat = zeros
    pre = train.pre_reformer
    if pre is not None:
        T_pre_in = np.full(N, pre.inlet_temperature)
        T_pre, n_pre, c_pre, ok_pre, H_pre = _pre_reformer(feed, P, T_pre_in, N)
        T_safe = np.where(ok_pre, T_pre, T_pre_in)
        h_out = outlet_enthalpy(n_pre, c_pre, T_safe, P)
        stages.append(StageResult("pre_reformer", feed, no_flow, T_pre_in, T_pre, T_pre, n_pre,
                                  c_pre, zeros, h_out - H_pre, H_pre, h_out, ok_pre))
        # Where the pre-reformer found no outlet, the primary still gets real gas (the fresh
        # feed) so that its own numbers stay finite; the point is flagged below.
        primary_in = np.where(ok_pre[:, None], n_pre, feed)
        reheat = enthalpy_flow(primary_in, T_feed) - enthalpy_flow(primary_in, T_safe)
    bal = reformer_balance(primary_in, T, P, T_feed, approach, row=row, hydrocarbon_carbon=hc,
                           warm_start=warm_start)
    stages.append(StageResult("primary_reformer", primary_in, no_flow, T_feed, T,
                              bal.equilibrium_temperature, bal.outlet_flow, bal.carbon_deposit,
                              reheat, bal.duty, bal.inlet_enthalpy, bal.outlet_enthalpy,
                              bal.converged.copy()))
    gas, T_gas = bal.outlet_flow, T
    slip = bal.methane_slip_dry
    sec = train.secondary_reformer
    if sec is not None:
        if secondary_guess is None and N % row == 0 and len(row_passes(row)) > 1:
            T_sec, eq, ok, ox, H_in = _secondary_rows(sec, gas, T_gas, P, hc,
                                                      bal.element_potentials, row)
        else:
            T_sec, eq, ok, ox, H_in = _secondary(sec, gas, T_gas, P, hc,
                                                 bal.element_potentials, guess=secondary_guess)
        T_eval = np.where(ok, T_sec, T_gas)
        h_out = outlet_enthalpy(eq.moles, eq.carbon, T_eval, P)
        stages.append(StageResult("secondary_reformer", gas + ox, ox, T_gas, T_sec,
                                  T_sec - sec.approach, eq.moles, eq.carbon, zeros,
                                  h_out - H_in, H_in, h_out, ok))
        gas, T_gas = eq.moles, T_eval
        slip = _dry_fraction(gas, "CH4")
    for name in ("high_temperature_shift", "low_temperature_shift"):
        st = getattr(train, name)
        if st is None:
            continue
        Ts = np.full(N, st.temperature)
        cool = enthalpy_flow(gas, Ts) - enthalpy_flow(gas, T_gas)
        out = shift_equilibrium(gas, Ts + st.approach)
        H_in = enthalpy_flow(gas, Ts)
        H_out = enthalpy_flow(out, Ts)
        stages.append(StageResult(name, gas, no_flow, Ts, Ts, Ts + st.approach, out, zeros,
                                  cool, H_out - H_in, H_in, H_out, np.ones(N, dtype=bool)))
        gas, T_gas = out, Ts
    # Heat in and out of the gas over the whole train, by sign: reheat and cooling before a
    # stage, and each stage's own duty.
    supplied = sum(np.maximum(st.heat_before, 0.0) + np.maximum(st.duty, 0.0) for st in stages)
    removed = sum(np.minimum(st.heat_before, 0.0) + np.minimum(st.duty, 0.0) for st in stages)
    carbon = sum(st.carbon_deposit for st in stages)
    # A stage is good only if every stage before it is: past a failed stage, flows, heats and
    # totals are NaN rather than numbers made from a gas that was never found.
    converged = np.ones(N, dtype=bool)
    for k, st in enumerate(stages):
        converged = converged & st.converged
        stages[k] = _mask(st, converged)
    with np.errstate(invalid="ignore", divide="ignore"):
        h2_product = gas[:, _I["H2"]] / hc
    bad = ~converged
    h2_product, supplied, removed, carbon, slip = (np.where(bad, np.nan, a) for a in
                                                   (h2_product, supplied, removed, carbon,
                                                    slip))
    gas = np.where(bad[:, None], np.nan, gas)
    return TrainResult(
        stages=stages,
        primary=bal,
        feed_flow=feed,
        product_flow=gas,
        product_temperature=T_gas,
        h2_product=h2_product,
        heat_supplied=supplied,
        heat_removed=removed,
        carbon_deposit=carbon,
        methane_slip_dry=slip,
        converged=converged,
    )
