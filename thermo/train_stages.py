"""The reforming train's results and its stage solvers (split from :mod:`thermo.train`):
the stage and train result records, the shift stage (closed form, all else frozen), the
adiabatic equilibrium of the pre-reformer and the secondary reformer (vectorized Newton on
the enthalpy with Illinois safeguards; their slope, the equilibrium heat capacity, is in
:mod:`thermo.heat_capacity`). SI units.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass

import numpy as np

from thermo.balances import (
    Balance,
    outlet_enthalpy,
    per_point,
)
from thermo.constants import ELEMENTS, R
from thermo.equilibrium import EquilibriumResult, equilibrate
from thermo.heat_capacity import equilibrium_heat_capacity
from thermo.reactions import SHIFT, delta_g_RT
from thermo.scenario import STAGE_NAMES
from thermo.species import GAS_SPECIES, formula_matrix

_I = {s: i for i, s in enumerate(GAS_SPECIES)}

#: Highest outlet temperature of an adiabatic stage [K]: the gas species' data end at 3500 K.
T_MAX = 3500.0

#: Relative closure of an adiabatic stage's energy balance: |H_out - H_in| at most this
#: times the magnitude of the stage's inlet enthalpy flow.
ADIABATIC_TOLERANCE = 1e-11
#: A Newton or secant step on an adiabatic stage's energy balance no longer than this [K] is
#: taken as the answer without a further equilibrium solve at its end (the steps converge
#: superlinearly, so the step left out is far shorter). The stage's final solve at the outlet
#: checks the balance (100 ADIABATIC_TOLERANCE; a point that fails it is solved again in a
#: bracket). On the four-stage train over tests/benchmarks/bench_train.py's window the
#: secondary outlets moved by at most 2.5e-7 K from a solve after every step, the same with
#: 1e-6 K here (the solver's noise), 1.1e-6 K with 1e-3 K; 24% fewer solves in its steps.
ACCEPT_STEP_K = 1e-4


@dataclass(frozen=True)
class StageResult:
    """One stage of the train over N points (arrays; SI units).

    Attributes
    ----------
    name : str
        Stage key (``"pre_reformer"``, ``"primary_reformer"``, ``"secondary_reformer"``,
        ``"high_temperature_shift"``, ``"low_temperature_shift"``).
    inlet_flow : ndarray (N, S)
        Gas entering [mol s-1] (for the secondary reformer, the primary's gas plus the
        oxidant).
    added_flow : ndarray (N, S)
        Stream added at this stage's inlet (the secondary's oxidant; zeros otherwise)
        [mol s-1].
    inlet_temperature : ndarray (N,)
        Temperature of the gas entering, after any reheat or cooling before the stage [K]
        (the oxidant enters at its own temperature).
    temperature : ndarray (N,)
        Outlet temperature [K].
    equilibrium_temperature : ndarray (N,)
        Where the outlet composition is equilibrated (T - approach for reforming, T +
        approach for shift) [K].
    outlet_flow : ndarray (N, S)
        Gas leaving [mol s-1].
    carbon_deposit : ndarray (N,)
        Graphite formed in the stage [mol s-1] (0 in shift stages).
    heat_before : ndarray (N,)
        Heat given to the gas between the previous stage and this one: reheat (> 0) before
        the primary after a pre-reformer, cooling (< 0) before a shift stage [W].
    duty : ndarray (N,)
        Heat supplied to the stage itself, outlet minus inlet enthalpy flow [W]; 0 for the
        adiabatic stages, < 0 (heat removed) for shift stages.
    inlet_enthalpy, outlet_enthalpy : ndarray (N,)
        Enthalpy flows, formation enthalpies included [W].
    converged : ndarray of bool (N,)
        The stage's equilibrium (and, for adiabatic stages, its temperature) was found.
    """

    name: str
    inlet_flow: np.ndarray
    added_flow: np.ndarray
    inlet_temperature: np.ndarray
    temperature: np.ndarray
    equilibrium_temperature: np.ndarray
    outlet_flow: np.ndarray
    carbon_deposit: np.ndarray
    heat_before: np.ndarray
    duty: np.ndarray
    inlet_enthalpy: np.ndarray
    outlet_enthalpy: np.ndarray
    converged: np.ndarray

    @property
    def label(self) -> str:
        """Display name of the stage."""
        return STAGE_NAMES[self.name]


@dataclass(frozen=True)
class TrainResult:
    """The whole train over N points.

    Attributes
    ----------
    stages : list[StageResult]
        In flow order, the primary reformer included.
    primary : Balance
        Full balance of the primary reformer (yields on the fresh feed's hydrocarbon carbon).
    feed_flow : ndarray (N, S)
        Fresh mixed feed [mol s-1].
    product_flow : ndarray (N, S)
        Gas after the last stage [mol s-1].
    product_temperature : ndarray (N,)
        Its temperature [K].
    h2_product : ndarray (N,)
        H2 after the last stage per mol hydrocarbon carbon of the fresh feed [-].
    heat_supplied : ndarray (N,)
        Heat given to the gas over the train (>= 0): the primary's duty and the reheat of
        pre-reformed gas as a rule; every positive duty or heat before a stage [W].
    heat_removed : ndarray (N,)
        Heat taken from the gas over the train (<= 0): coolers and shift stages as a rule;
        every negative duty or heat before a stage [W].
    carbon_deposit : ndarray (N,)
        Graphite formed in all reforming stages [mol s-1].
    methane_slip_dry : ndarray (N,)
        CH4 mole fraction of the dry gas after the last reforming stage [-].
    converged : ndarray of bool (N,)
        Every stage converged. Where not, the totals and the product are NaN, and so are the
        results of the failed stage and of every stage after it.
    """

    stages: list[StageResult]
    primary: Balance
    feed_flow: np.ndarray
    product_flow: np.ndarray
    product_temperature: np.ndarray
    h2_product: np.ndarray
    heat_supplied: np.ndarray
    heat_removed: np.ndarray
    carbon_deposit: np.ndarray
    methane_slip_dry: np.ndarray
    converged: np.ndarray

    def stage(self, name: str) -> StageResult | None:
        """The stage of that name, or None when the train has none."""
        return next((s for s in self.stages if s.name == name), None)


def _mask(st: StageResult, ok: np.ndarray) -> StageResult:
    """The stage with its results NaN where `ok` is False (inputs kept), flagged `ok`."""
    if ok.all():
        return dataclasses.replace(st, converged=ok.copy())

    def nan(a):
        return np.where(ok if a.ndim == 1 else ok[:, None], a, np.nan)

    fixed_t = st.name != "pre_reformer" and st.name != "secondary_reformer"
    return dataclasses.replace(
        st, outlet_flow=nan(st.outlet_flow), carbon_deposit=nan(st.carbon_deposit),
        heat_before=nan(st.heat_before), duty=nan(st.duty),
        outlet_enthalpy=nan(st.outlet_enthalpy),
        temperature=st.temperature if fixed_t else nan(st.temperature),
        equilibrium_temperature=(st.equilibrium_temperature if fixed_t
                                 else nan(st.equilibrium_temperature)),
        converged=ok.copy())


def _dry_fraction(n: np.ndarray, species: str) -> np.ndarray:
    dry = n.sum(axis=1) - n[:, _I["H2O"]]
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(dry > 0, n[:, _I[species]] / dry, 0.0)




def shift_equilibrium(gas_flow, temperature) -> np.ndarray:
    """Gas after CO + H2O = CO2 + H2 reaches equilibrium, all else frozen [mol s-1].

    Parameters
    ----------
    gas_flow : array_like (N, S)
        Gas by species in GAS_SPECIES order [mol s-1].
    temperature : array_like (N,)
        Temperature of the equilibrium (stage temperature plus approach) [K].

    Returns
    -------
    ndarray (N, S)
        The shifted gas; only CO, H2O, CO2 and H2 change, by the extent x of the module
        notes (K on any standard pressure: total moles do not change).
    """
    n = np.atleast_2d(np.asarray(gas_flow, dtype=float)).copy()
    T = per_point(temperature, n.shape[0])
    K = np.exp(-delta_g_RT(SHIFT, T))
    a, b = n[:, _I["CO"]], n[:, _I["H2O"]]
    c, d = n[:, _I["CO2"]], n[:, _I["H2"]]
    A = 1.0 - K
    B = c + d + K * (a + b)
    C = c * d - K * a * b
    # Physical root: where g(x) = A x^2 + B x + C crosses zero upward, x = -2C / (B + sqrt D)
    # (the cancellation-free form of (-B + sqrt D) / 2A).
    D = np.maximum(B * B - 4.0 * A * C, 0.0)
    den = B + np.sqrt(D)
    with np.errstate(invalid="ignore", divide="ignore"):
        x = np.where(den > 0, -2.0 * C / den, 0.0)
    x = np.clip(x, -np.minimum(c, d), np.minimum(a, b))
    n[:, _I["CO"]] = a - x
    n[:, _I["H2O"]] = b - x
    n[:, _I["CO2"]] = c + x
    n[:, _I["H2"]] = d + x
    return n


def adiabatic_equilibrium(gas_flow, inlet_enthalpy, pressure, approach=0.0,
                          bounds=(350.0, 2800.0), guess=None, max_iterations: int = 200,
                          warm_start=None, accept_step: float | None = None):
    """Outlet temperature and composition of adiabatic equilibrium stages, N at once.

    Finds T with H_out(T) = H_in, where the outlet is the Gibbs equilibrium (graphite
    allowed) at T - approach and its enthalpy is taken at T. From a `guess`, a Newton step
    with the equilibrium heat capacity as the derivative (:func:`equilibrium_heat_capacity`,
    analytic) and secant steps after it converge most points in a few equilibrium solves,
    each warm-started
    from the last (the first from `warm_start` if given); any point they do not settle, and
    every point
    without a guess, is solved by the Illinois variant of regula falsi inside `bounds`
    (bisection where it stalls). H_out rises with T (the equilibrium heat capacity is
    positive), so the root in the bracket is unique.

    Parameters
    ----------
    gas_flow : array_like (N, S)
        Gas entering (all streams mixed) [mol s-1].
    inlet_enthalpy : array_like (N,)
        Enthalpy flow of the streams entering [W].
    pressure : array_like (N,)
        Absolute pressure [Pa].
    approach : array_like (N,)
        Approach to equilibrium [K].
    bounds : (array_like, array_like)
        Bracket of the outlet temperature [K].
    guess : array_like (N,), optional
        A first estimate of the outlet temperature [K].
    warm_start : array_like (N, E), optional
        Element potentials to start the first equilibrium solve from (see
        :func:`~thermo.equilibrium.equilibrate`; NaN entries: elements the start lacks).
    accept_step : float, optional
        Steps from the guess no longer than this [K] end the point's iteration (default
        :data:`ACCEPT_STEP_K`; 0: every step is followed by a solve).

    Returns
    -------
    (T, result, ok)
        Outlet temperature [K] (NaN where no root is bracketed), the
        :class:`~thermo.equilibrium.EquilibriumResult` there, and the per-point success flag.
    """
    n = np.atleast_2d(np.asarray(gas_flow, dtype=float))
    N = n.shape[0]
    H_in = per_point(inlet_enthalpy, N)
    P = per_point(pressure, N)
    dT = per_point(approach, N)
    b_el = n @ formula_matrix()
    lo = np.maximum(per_point(bounds[0], N), 300.0 + dT)
    hi = per_point(bounds[1], N)
    # Tolerance on the enthalpy balance: relative to the inlet enthalpy flow's magnitude,
    # with a floor of the sensible heat scale (n R T) for streams whose H_in is near 0.
    tol = ADIABATIC_TOLERANCE * (np.abs(H_in) + n.sum(axis=1) * R * 1000.0)

    def residual(T, idx, warm=None):
        eq = equilibrate(T - dT[idx], P[idx], b_el[idx], warm_start=warm)
        return outlet_enthalpy(eq.moles, eq.carbon, T, P[idx]) - H_in[idx], eq

    def slope(T, idx, eq):
        return equilibrium_heat_capacity(eq.moles, eq.carbon, T, T - dT[idx], P[idx],
                                         potentials=True)

    T = np.full(N, np.nan)
    warm = np.zeros_like(b_el)
    if warm_start is not None:
        warm[:] = warm_start
    done = np.zeros(N, dtype=bool)
    stepped = np.zeros(N, dtype=bool)
    # The solve at each point's answer, kept where the iterations ended on one (`solved`):
    # the final state is then not solved again.
    final = _empty_result(N, gas_flow=n)
    solved = np.zeros(N, dtype=bool)
    if guess is not None:
        done, stepped = _newton(residual, slope, np.clip(per_point(guess, N), lo, hi), lo, hi,
                                tol, T, warm, warm_start is not None,
                                accept_step=ACCEPT_STEP_K if accept_step is None
                                else accept_step, final=final, solved=solved)
    rest = np.flatnonzero(~done)
    ok = done.copy()
    if rest.size:
        ok[rest] = _illinois(residual, rest, lo[rest], hi[rest], tol[rest], T, warm,
                             max_iterations, final=final, solved=solved)
    # Final state at the found temperatures: kept from the solve there, or solved now
    # (warm-started: a few iterations) after a short accepted step or a failure.
    Tf = np.where(ok, T, 0.5 * (lo + hi))
    eq = final
    need = np.flatnonzero(~(ok & solved))
    if need.size:
        _put(eq, need, equilibrate(Tf[need] - dT[need], P[need], b_el[need],
                                   warm_start=warm[need]))
    resid = outlet_enthalpy(eq.moles, eq.carbon, Tf, P) - H_in
    good = eq.converged & (np.abs(resid) <= 100.0 * tol)
    again = np.flatnonzero(stepped & ok & ~good)
    if again.size:  # a short last step that did not close the balance: bracket it
        ok[again] = _illinois(residual, again, lo[again], hi[again], tol[again], T, warm,
                              max_iterations)
        Tf[again] = np.where(ok[again], T[again], 0.5 * (lo[again] + hi[again]))
        sub = equilibrate(Tf[again] - dT[again], P[again], b_el[again],
                          warm_start=warm[again])
        _put(eq, again, sub)
        resid[again] = outlet_enthalpy(sub.moles, sub.carbon, Tf[again], P[again]) \
            - H_in[again]
        good = eq.converged & (np.abs(resid) <= 100.0 * tol)
    ok = ok & good
    return np.where(ok, Tf, np.nan), eq, ok


def _newton(residual, slope, T0, lo, hi, tol, T, warm, warm_first, steps: int = 12,
            accept_step: float = 0.0, final=None, solved=None):
    """Steps on the enthalpy balance from T0: Newton with the equilibrium heat capacity
    (:func:`equilibrium_heat_capacity`) first, then secant steps (each point's last two
    residuals; Newton again where the secant slope is not positive). A step no longer than
    `accept_step` [K] is the point's answer without a solve at its end. Each solve after a
    step starts from the element potentials carried along the step at the rate its slope
    gives (the heat capacity's d lambda/dT for a Newton step, the last two solves' for a
    secant step), and so does the final solve after a short step (through `warm`). Fills T
    and warm and returns the settled points (the others are left to the bracketed solve) and
    those of them settled by such a step. `slope(T, idx, eq)` returns (dH/dT, d lambda/dT)
    at the points `idx`. Given `final` (an EquilibriumResult of all points) and `solved`,
    the solve at each point settled on a residual is written into `final` and the point
    marked in `solved`."""
    N = T0.size
    idx = np.arange(N)
    f, eq = residual(T0, idx, warm if warm_first else None)
    warm[:] = eq.element_potentials
    b = T0.copy()
    prev_T = np.full(N, np.nan)
    prev_f = np.full(N, np.nan)
    prev_lam = np.full_like(warm, np.nan)
    done = np.zeros(N, dtype=bool)
    stepped = np.zeros(N, dtype=bool)
    active = np.isfinite(f) & eq.converged
    for k in range(steps + 1):
        settled = active & (np.abs(f) <= tol[idx])
        T[idx[settled]] = b[idx[settled]]
        done[idx[settled]] = True
        if final is not None and settled.any():
            _put(final, idx[settled], _subset(eq, np.flatnonzero(settled)))
            solved[idx[settled]] = True
        active &= ~settled
        if k == steps or not active.any():
            break
        sub = np.flatnonzero(active)
        at = idx[sub]
        with np.errstate(invalid="ignore", divide="ignore"):
            run = b[at] - prev_T[at]
            d = (f[sub] - prev_f[at]) / run
            dlam = (warm[at] - prev_lam[at]) / run[:, None]
            newton = ~(np.isfinite(d) & (d > 0))
            if newton.any():
                d[newton], dlam[newton] = slope(b[at[newton]], at[newton],
                                                _subset(eq, sub[newton]))
            new = np.clip(b[at] - f[sub] / d, lo[at], hi[at])
        ok = np.isfinite(new) & (d > 0) & (new != b[at])
        short = ok & (np.abs(new - b[at]) <= accept_step)
        prev_T[at], prev_f[at], prev_lam[at] = b[at], f[sub], warm[at]
        # The next solve starts from the potentials carried along the step; where that is
        # not finite, from the last solve's (an element absent from a point stays NaN,
        # which the solver reads as absent).
        carried = warm[at] + dlam * (new - b[at])[:, None]
        warm[at] = np.where(np.isfinite(carried) & ok[:, None], carried, warm[at])
        acc = at[short]
        T[acc] = b[acc] = new[short]
        done[acc] = stepped[acc] = True
        idx = at[ok & ~short]
        b[idx] = new[ok & ~short]
        if idx.size == 0:
            break
        f, eq = residual(b[idx], idx, warm[idx])
        warm[idx] = eq.element_potentials
        active = np.isfinite(f) & eq.converged
    return done, stepped


def _empty_result(N: int, gas_flow) -> EquilibriumResult:
    """An EquilibriumResult of N points to be filled by :func:`_put` (not converged)."""
    S = np.asarray(gas_flow).shape[1]
    return EquilibriumResult(moles=np.full((N, S), np.nan), carbon=np.full(N, np.nan),
                             ln_carbon_activity=np.full(N, np.nan),
                             element_potentials=np.full((N, len(ELEMENTS)), np.nan),
                             converged=np.zeros(N, dtype=bool),
                             iterations=np.zeros(N, dtype=np.int64))


def _put(eq, k, sub) -> None:
    """Write the EquilibriumResult `sub` into `eq` at the points `k` (in place)."""
    for name in ("moles", "carbon", "ln_carbon_activity", "element_potentials", "converged",
                 "iterations"):
        getattr(eq, name)[k] = getattr(sub, name)


def _subset(eq, k):
    """The EquilibriumResult `eq` at the points `k`."""
    return dataclasses.replace(eq, moles=eq.moles[k], carbon=eq.carbon[k],
                               ln_carbon_activity=eq.ln_carbon_activity[k],
                               element_potentials=eq.element_potentials[k],
                               converged=eq.converged[k], iterations=eq.iterations[k])


def _illinois(residual, idx, lo, hi, tol, T, warm, max_iterations, final=None,
              solved=None) -> np.ndarray:
    """Bracketed Illinois regula falsi on the points `idx`; fills T and warm there and
    returns their success flags. Given `final` and `solved` (see :func:`_newton`), the
    solve at each point's last iterate (its answer) is written into `final`."""
    f_lo, _ = residual(lo, idx)
    f_hi, eq_hi = residual(hi, idx)
    if final is not None:
        _put(final, idx, eq_hi)
        solved[idx] = True
    ok = (f_lo <= 0) & (f_hi >= 0)  # H_out rises with T
    m = idx.size
    a, fa, b, fb = lo.copy(), f_lo, hi.copy(), f_hi
    side = np.zeros(m, dtype=int)
    w = eq_hi.element_potentials.copy()
    Ts = np.where(ok, b, np.nan)
    active = ok & (np.abs(fb) > tol)
    for _ in range(max_iterations):
        if not active.any():
            break
        k = np.flatnonzero(active)
        ak, bk, fak, fbk = a[k], b[k], fa[k], fb[k]
        den = fbk - fak
        with np.errstate(invalid="ignore", divide="ignore"):
            c = np.where(den != 0, (ak * fbk - bk * fak) / den, 0.5 * (ak + bk))
        # Bisect where the secant leaves the bracket or one end has been kept three times.
        bad = ~((c > ak) & (c < bk)) | (np.abs(side[k]) >= 3)
        c = np.where(bad, 0.5 * (ak + bk), c)
        fc, eq = residual(c, idx[k], w[k])
        w[k] = eq.element_potentials
        if final is not None:
            _put(final, idx[k], eq)
        # Keep the bracket [a, b] with fa <= 0 <= fb (a is the cold end).
        neg = fc < 0
        a[k] = np.where(neg, c, ak)
        fa[k] = np.where(neg, fc, fak)
        b[k] = np.where(neg, bk, c)
        fb[k] = np.where(neg, fbk, fc)
        # Illinois: halve the residual of the end kept twice in a row.
        s = side[k]
        s = np.where(neg, np.where(s > 0, s + 1, 1), np.where(s < 0, s - 1, -1))
        side[k] = s
        fb[k] = np.where(neg & (s >= 2), fb[k] / 2.0, fb[k])
        fa[k] = np.where(~neg & (s <= -2), fa[k] / 2.0, fa[k])
        Ts[k] = c
        active[k] = ~((np.abs(fc) <= tol[k]) | (np.abs(bk - ak) <= 1e-12 * c))
    T[idx] = Ts
    warm[idx] = w
    return ok


def _unique_rows(*arrays):
    """Unique rows of the arrays side by side (in order of first appearance), and the
    inverse map to all rows: ``uniq[inverse]`` is every row.

    Rows are compared by their bytes through a dict (-0.0 taken as 0.0), about ten times
    faster than ``np.unique(..., axis=0)``, which sorts them."""
    key = np.column_stack([np.atleast_2d(np.asarray(a, dtype=float).T).T for a in arrays])
    key = np.ascontiguousarray(key) + 0.0  # a copy, with -0.0 as 0.0
    rows = key.view(np.dtype((np.void, key.dtype.itemsize * key.shape[1]))).ravel()
    first: dict[bytes, int] = {}
    inverse = np.fromiter((first.setdefault(r, len(first)) for r in rows.tolist()),
                          dtype=np.intp, count=rows.size)
    where = np.empty(len(first), dtype=np.intp)
    where[inverse] = np.arange(rows.size)  # an index of each unique row (equal bytes)
    return key[where], inverse


