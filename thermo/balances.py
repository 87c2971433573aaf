r"""Mass and energy balance of reformer outlets at equilibrium, vectorized over points.

One function, :func:`reformer_balance`, turns inlet flows and outlet conditions into every
number the maps and tables show. The grid sweep and the single-point API both call it, so a
grid value and the point result at the same coordinates come from the same arithmetic.

Definitions (common practice, no source):

* H2 yield: mol H2 in the outlet per mol carbon in the hydrocarbons fed.
* Methane slip: CH4 mole fraction of the outlet on a dry basis (water removed).
* Methane conversion: on a hydrocarbon-carbon basis, 1 - (carbon in CH4, C2H6, C3H8 out) /
  (carbon in them in); for a methane-only feed this is the usual CH4 conversion.
* Duty: enthalpy of the outlet (gas and any graphite) at T minus that of the mixed feed at its
  inlet temperature [W]; positive means heat is supplied (the radiant duty of a tubular
  reformer).
* Approach to equilibrium (reforming, endothermic): the composition is the equilibrium at
  T - approach (less conversion), the carbon activity is evaluated there too, and the outlet
  enthalpy is taken at T.
* Extents: reforming = carbon oxides formed, (CO + CO2)out - (CO + CO2)in; shift = CO2 formed,
  CO2out - CO2in [mol s-1]. For methane and steam without carbon these are exactly the
  extents of CH4 + H2O = CO + 3 H2 and CO + H2O = CO2 + H2; with O2 co-feed or carbon they are
  carbon-oxide formation rates.
* K and Q on the 1 bar standard state (P_REF; the loader moves all species data to it): Q
  from the outlet's wet mole fractions and pressure. The reaction approach temperature is T
  minus the temperature at which K equals Q (reforming), or that temperature minus T (shift).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.optimize import brentq

from thermo.constants import ELEMENTS, P_REF, T_REF, R
from thermo.equilibrium import equilibrate
from thermo.reactions import REFORMING, SHIFT, delta_g_RT, delta_h
from thermo.species import (
    GAS_SPECIES,
    GRAPHITE,
    formula_matrix,
    gas_table,
    h_RT,
    molar_masses,
    record,
)

_I = {s: i for i, s in enumerate(GAS_SPECIES)}
#: Carbon atoms of each gas species counted as hydrocarbon carbon (CH4 1, C2H6 2, C3H8 3).
HC_CARBON = np.array([1.0 if s == "CH4" else 2.0 if s == "C2H6" else 3.0 if s == "C3H8"
                       else 0.0 for s in GAS_SPECIES])
#: Elements reported in the closure check.
CLOSURE_ELEMENTS = ("C", "H", "O", "N")


@dataclass(frozen=True)
class Balance:
    """Balance of N reformer outlets (arrays over points; SI units).

    Attributes
    ----------
    temperature, pressure, inlet_temperature, approach : ndarray (N,)
        Outlet temperature [K], absolute pressure [Pa], feed temperature [K], approach to
        equilibrium [K].
    equilibrium_temperature : ndarray (N,)
        Temperature at which the composition is equilibrated, T - approach [K].
    inlet_flow, outlet_flow : ndarray (N, S)
        Molar flows by species [mol s-1].
    inlet_mass_flow, outlet_mass_flow : ndarray (N, S)
        Mass flows by species [kg s-1].
    mole_fraction, mole_fraction_dry : ndarray (N, S)
        Wet and dry (H2O removed, H2O entry 0) outlet mole fractions [-].
    carbon_deposit : ndarray (N,)
        Graphite formed [mol s-1].
    carbon_activity : ndarray (N,)
        Carbon activity of the gas relative to graphite, 1 where carbon deposits [-].
    hydrocarbon_carbon : ndarray (N,)
        Carbon in the hydrocarbons fed [mol s-1].
    h2_yield, h2_potential : ndarray (N,)
        H2 and H2 + CO out per mol hydrocarbon carbon fed [-].
    methane_slip_dry, methane_conversion : ndarray (N,)
        Dry CH4 mole fraction [-]; hydrocarbon-carbon conversion [-].
    h2_co_ratio : ndarray (N,)
        H2/CO in the outlet [-]; inf where the outlet holds no CO.
    duty : ndarray (N,)
        Heat supplied from feed at inlet temperature to outlet at T [W].
    inlet_enthalpy, outlet_enthalpy : ndarray (N,)
        Enthalpy flows including formation enthalpies [W].
    extent_reforming, extent_shift : ndarray (N,)
        See the module notes [mol s-1].
    K_reforming, Q_reforming, K_shift, Q_shift : ndarray (N,)
        Equilibrium constants at T and reaction quotients of the outlet (1 bar basis) [-].
    approach_reforming, approach_shift : ndarray (N,)
        Temperature differences to equilibrium of each reaction at the outlet [K].
    heat_reforming_298, heat_shift_298, heat_reforming, heat_shift : ndarray (N,)
        Standard heats of reaction at 298.15 K and at T [J mol-1].
    element_closure : dict[str, ndarray (N,)]
        |out - in| / in for C, H, O, N (0 for elements absent from the feed) [-].
    converged : ndarray of bool (N,)
        The equilibrium solver closed its element balances.
    iterations : ndarray of int (N,)
        Solver iterations.
    """

    temperature: np.ndarray
    pressure: np.ndarray
    inlet_temperature: np.ndarray
    approach: np.ndarray
    equilibrium_temperature: np.ndarray
    inlet_flow: np.ndarray
    outlet_flow: np.ndarray
    inlet_mass_flow: np.ndarray
    outlet_mass_flow: np.ndarray
    mole_fraction: np.ndarray
    mole_fraction_dry: np.ndarray
    carbon_deposit: np.ndarray
    carbon_activity: np.ndarray
    hydrocarbon_carbon: np.ndarray
    h2_yield: np.ndarray
    h2_potential: np.ndarray
    methane_slip_dry: np.ndarray
    methane_conversion: np.ndarray
    h2_co_ratio: np.ndarray
    duty: np.ndarray
    inlet_enthalpy: np.ndarray
    outlet_enthalpy: np.ndarray
    extent_reforming: np.ndarray
    extent_shift: np.ndarray
    K_reforming: np.ndarray
    Q_reforming: np.ndarray
    K_shift: np.ndarray
    Q_shift: np.ndarray
    approach_reforming: np.ndarray
    approach_shift: np.ndarray
    heat_reforming_298: np.ndarray
    heat_shift_298: np.ndarray
    heat_reforming: np.ndarray
    heat_shift: np.ndarray
    element_closure: dict
    converged: np.ndarray
    iterations: np.ndarray
    element_potentials: np.ndarray


def enthalpy_flow(flows: np.ndarray, T) -> np.ndarray:
    """Enthalpy flow of gas streams, formation enthalpies included [W].

    Parameters
    ----------
    flows : ndarray (N, S)
        Molar flows by species in GAS_SPECIES order [mol s-1].
    T : array_like (N,)
        Temperature [K]. Species with zero flow are still evaluated, so T must lie in every
        gas species' data range (300 to 3500 K).
    """
    T = np.asarray(T, dtype=float)
    h = gas_table(T, "h_RT") * (R * T)  # (S, N) [J mol-1]
    return np.einsum("ns,sn->n", flows, np.atleast_2d(h.reshape(len(GAS_SPECIES), -1)))


def per_point(value, N: int) -> np.ndarray:
    """A scalar or (N,) array as a fresh float array of N values (one per point)."""
    return np.broadcast_to(np.asarray(value, dtype=float), (N,)).copy()


def outlet_enthalpy(gas_flow: np.ndarray, carbon, T, P) -> np.ndarray:
    """Enthalpy flow of gas plus graphite at T and P, formation enthalpies included [W].

    Graphite's enthalpy at P includes v (P - P°) for the incompressible solid, consistent
    with the pressure term of its chemical potential (thermo.species.graphite_mu_RT).

    Parameters
    ----------
    gas_flow : ndarray (N, S)
        Gas molar flows [mol s-1].
    carbon : array_like (N,)
        Graphite [mol s-1].
    T, P : array_like (N,)
        Temperature [K] and absolute pressure [Pa].
    """
    T = np.asarray(T, dtype=float)
    gr = record(GRAPHITE)
    h_gr = h_RT(T, GRAPHITE) * R * T + gr.molar_volume * (np.asarray(P) - gr.standard_pressure)
    return enthalpy_flow(gas_flow, T) + np.asarray(carbon) * h_gr


def _reaction_approach(reaction, ln_q: np.ndarray, T: np.ndarray, sign: float,
                       start: np.ndarray | None = None) -> np.ndarray:
    """Temperature difference between T and where ln K = ln Q, signed toward conversion [K].

    Newton's method in 1/T (ln K is nearly linear there, d ln K / d(1/T) = -dH/R, the van 't
    Hoff equation), on the points not yet settled, from `start` (the equilibrium temperature
    of the outlet, where a gas-phase equilibrium already has K = Q) or T; NaN where ln Q is
    not finite or K never equals Q inside the data range (300-3500 K).
    """
    lo, hi = 300.0, 3500.0
    ok = np.isfinite(ln_q)
    q = np.where(ok, ln_q, 0.0)
    f_lo = -float(delta_g_RT(reaction, lo)) - q
    f_hi = -float(delta_g_RT(reaction, hi)) - q
    ok &= f_lo * f_hi <= 0
    guess = T if start is None else start
    Ts = np.where(ok, np.clip(guess, lo, hi), 1000.0)
    active = np.flatnonzero(ok)
    for _ in range(60):
        if active.size == 0:
            break
        Ta = Ts[active]
        f = -delta_g_RT(reaction, Ta) - q[active]
        slope = -delta_h(reaction, Ta) / R  # d ln K / d(1/T)
        new = np.clip(1.0 / (1.0 / Ta - f / slope), lo, hi)
        Ts[active] = new
        active = active[np.abs(new - Ta) > 1e-9]
    return np.where(ok, sign * (T - Ts), np.nan)


def reformer_balance(
    inlet_flow,
    temperature,
    pressure,
    inlet_temperature,
    approach=0.0,
    *,
    row: int = 1,
    hydrocarbon_carbon=None,
    warm_start=None,
) -> Balance:
    """Equilibrium outlet and complete balance of N reformer points.

    Parameters
    ----------
    inlet_flow : array_like (N, S)
        Mixed feed (hydrocarbon gas, steam, co-feeds) by species in GAS_SPECIES order
        [mol s-1].
    temperature : array_like (N,)
        Outlet temperature [K].
    pressure : array_like (N,)
        Outlet absolute pressure [Pa].
    inlet_temperature : array_like (N,)
        Temperature of the mixed feed [K].
    approach : array_like (N,)
        Approach to equilibrium of reforming [K] (>= 0): composition at T - approach.
    row : int
        Rows of neighbouring points for warm starts (see thermo.equilibrium.equilibrate).
    hydrocarbon_carbon : array_like (N,), optional
        Carbon in the hydrocarbons of the fresh feed [mol s-1], the basis of the yields and
        the conversion; taken from `inlet_flow` when omitted (give it when the inlet is a
        pre-reformed gas).
    warm_start : array_like (N, E), optional
        Element potentials of nearby solved points to start each equilibrium from
        (thermo.equilibrium.equilibrate; NaN rows start from the basis guesses); the
        converged outlet is the same to the solver's tolerance.

    Returns
    -------
    Balance
    """
    n_in = np.atleast_2d(np.asarray(inlet_flow, dtype=float))
    N = n_in.shape[0]
    T = per_point(temperature, N)
    P = per_point(pressure, N)
    T_in = per_point(inlet_temperature, N)
    dT = per_point(approach, N)
    T_eq = T - dT
    A = formula_matrix()
    b = n_in @ A
    eq = equilibrate(T_eq, P, b, row=row, warm_start=warm_start)
    n_out = eq.moles
    x = n_out / n_out.sum(axis=1, keepdims=True)
    dry = n_out.copy()
    dry[:, _I["H2O"]] = 0.0
    x_dry = dry / dry.sum(axis=1, keepdims=True)
    mw = np.asarray(molar_masses())
    hc_c = n_in @ HC_CARBON if hydrocarbon_carbon is None else \
        per_point(hydrocarbon_carbon, N)
    hc_c_out = n_out @ HC_CARBON
    h_in = enthalpy_flow(n_in, T_in)
    h_out = outlet_enthalpy(n_out, eq.carbon, T, P)
    b_out = n_out @ A
    b_out[:, ELEMENTS.index("C")] += eq.carbon
    closure = {}
    for e in CLOSURE_ELEMENTS:
        k = ELEMENTS.index(e)
        with np.errstate(invalid="ignore", divide="ignore"):
            closure[e] = np.where(b[:, k] > 0, np.abs(b_out[:, k] - b[:, k]) / b[:, k], 0.0)
    co = n_out[:, _I["CO"]]
    h2 = n_out[:, _I["H2"]]
    with np.errstate(divide="ignore", invalid="ignore"):
        h2_co = np.where(co > 0, h2 / co, np.inf)
        lx = np.log(x)
    lnP = np.log(P / P_REF)
    with np.errstate(invalid="ignore"):
        # -inf - (-inf) where a species is absent: no quotient; reported as Q = 0.
        ln_q_ref = (lx[:, _I["CO"]] + 3 * lx[:, _I["H2"]] - lx[:, _I["CH4"]]
                    - lx[:, _I["H2O"]] + 2 * lnP)
        ln_q_shift = lx[:, _I["CO2"]] + lx[:, _I["H2"]] - lx[:, _I["CO"]] - lx[:, _I["H2O"]]
    ln_q_ref = np.where(np.isnan(ln_q_ref), -np.inf, ln_q_ref)
    ln_q_shift = np.where(np.isnan(ln_q_shift), -np.inf, ln_q_shift)
    app_ref = _reaction_approach(REFORMING, ln_q_ref, T, +1.0, start=T_eq)
    app_shift = _reaction_approach(SHIFT, ln_q_shift, T, -1.0, start=T_eq)
    return Balance(
        temperature=T,
        pressure=P,
        inlet_temperature=T_in,
        approach=dT,
        equilibrium_temperature=T_eq,
        inlet_flow=n_in,
        outlet_flow=n_out,
        inlet_mass_flow=n_in * mw,
        outlet_mass_flow=n_out * mw,
        mole_fraction=x,
        mole_fraction_dry=x_dry,
        carbon_deposit=eq.carbon,
        carbon_activity=np.exp(eq.ln_carbon_activity),
        hydrocarbon_carbon=hc_c,
        h2_yield=h2 / hc_c,
        h2_potential=(h2 + co) / hc_c,
        methane_slip_dry=x_dry[:, _I["CH4"]],
        methane_conversion=1.0 - hc_c_out / hc_c,
        h2_co_ratio=h2_co,
        duty=h_out - h_in,
        inlet_enthalpy=h_in,
        outlet_enthalpy=h_out,
        extent_reforming=(co + n_out[:, _I["CO2"]]) - (n_in[:, _I["CO"]] + n_in[:, _I["CO2"]]),
        extent_shift=n_out[:, _I["CO2"]] - n_in[:, _I["CO2"]],
        K_reforming=np.exp(-delta_g_RT(REFORMING, T)),
        Q_reforming=np.exp(ln_q_ref),
        K_shift=np.exp(-delta_g_RT(SHIFT, T)),
        Q_shift=np.exp(ln_q_shift),
        approach_reforming=app_ref,
        approach_shift=app_shift,
        heat_reforming_298=np.full(N, float(delta_h(REFORMING, T_REF))),
        heat_shift_298=np.full(N, float(delta_h(SHIFT, T_REF))),
        heat_reforming=delta_h(REFORMING, T),
        heat_shift=delta_h(SHIFT, T),
        element_closure=closure,
        converged=eq.converged,
        iterations=eq.iterations,
        element_potentials=eq.element_potentials,
    )


def adiabatic_temperature(
    inlet_flow,
    pressure: float,
    inlet_temperature: float,
    approach: float = 0.0,
    bounds: tuple[float, float] = (350.0, 2500.0),
) -> float:
    """Outlet temperature at which the duty is zero (adiabatic reactor) [K].

    Parameters
    ----------
    inlet_flow : array_like (S,)
        Mixed feed by species [mol s-1].
    pressure : float
        Absolute pressure [Pa].
    inlet_temperature : float
        Feed temperature [K].
    approach : float
        Approach to equilibrium [K]; the composition is equilibrated at T - approach.
    bounds : tuple of float
        Search range for the outlet temperature [K].

    Raises
    ------
    ValueError
        When the duty does not change sign inside `bounds` (no adiabatic outlet there).
    """
    n_in = np.asarray(inlet_flow, dtype=float)[None, :]

    def duty(T):
        return float(reformer_balance(n_in, T, pressure, inlet_temperature, approach).duty[0])

    lo = max(bounds[0], 300.0 + approach)
    hi = bounds[1]
    d_lo, d_hi = duty(lo), duty(hi)
    if d_lo * d_hi > 0:
        side = "absorbs heat" if d_lo > 0 else "releases heat"
        raise ValueError(
            f"no adiabatic outlet temperature between {lo - 273.15:.0f} and "
            f"{hi - 273.15:.0f} degC: the reactor {side} everywhere in that range"
        )
    scale = max(abs(d_lo), abs(d_hi))
    T = brentq(duty, lo, hi, xtol=1e-10, rtol=1e-14, maxiter=200)
    # Polish: the duty residual must be tiny relative to the heat scale.
    if abs(duty(T)) > 1e-9 * scale:
        T = brentq(duty, T - 1e-3, T + 1e-3, xtol=1e-12, maxiter=200)
    return float(T)
