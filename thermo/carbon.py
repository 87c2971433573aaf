r"""The carbon verdict: along the tube, on the real gas, for the chosen carbon.

Three checks, each on the primary reformer, and two flags make the verdict a review signs
(``carbon_free``); :data:`BINDING` names the one that binds at each point.

1. **Equilibrated gas along the tube** (the principle of equilibrated gas,
   [ROSTRUP-NIELSEN1984]). The gas heats from the primary's inlet temperature (the mixed
   feed's, or the reheated pre-reformed gas's) to the outlet temperature T. At every path
   temperature :math:`\tau` the gas is taken at reforming and shift equilibrium, without
   carbon, at :math:`\tau - \Delta T_{app}` (the outlet's approach convention), and its carbon
   activity is evaluated there: :math:`\ln a_C = \lambda_C - \mu_{gr}/RT`, the element
   potential of carbon against graphite's chemical potential (solid pressure term included).
   The path maximum is the largest activity over the temperatures the path visits: the
   interval from the inlet to the outlet (linear rise, the default) or, with stations of a
   user profile, the intervals between consecutive stations. Above 1 the equilibrated gas
   would deposit graphite; the value is continuous across 1.
2. **The real gas at the catalyst temperature.** With an approach, the outlet gas is the
   equilibrium at T - approach while the catalyst is at T. Its carbon activity by each
   carbon-forming reaction, :math:`a_C = K(T, P)\,\prod_i p_i^{-\nu_i}` over its gases
   (partial pressures in bar): methane cracking CH4 = C + 2 H2, CO reduction CO + H2 = C + H2O,
   Boudouard 2 CO = C + CO2 (thermo.reactions). At zero approach the gas is equilibrated at
   T and all three equal the equilibrium activity.
3. **Which carbon.** Graphite (default) or the carbon formed on the nickel catalyst, whose
   molar Gibbs energy lies above graphite's by an offset the user takes from published data
   ([ROSTRUP-NIELSEN1972]): :math:`\ln a_{cat} = \ln a_{gr} - \Delta G_{cat}/RT`. Catalyst
   carbon is less stable than graphite, so its limit is the less restrictive one.
4. **Flags.** C2+ hydrocarbons reaching the primary reformer at an inlet temperature above
   the cracking threshold (``[carbon] higher_hydrocarbon_cracking_temperature``; default
   600 degC, common practice, no source), and graphite at equilibrium in another reforming
   stage of the train (pre-reformer or secondary reformer).

The verdict field ``carbon_verdict_ln_activity`` is the ln of the largest activity of checks
1 and 2 on the chosen carbon, raised to at least :data:`FLAG_LN_ACTIVITY` where a flag is set:
continuous in T wherever the physics is, zero on the binding carbon boundary, negative where
the point is carbon-free.

What the check assumes and leaves out: the gas along the path is at (approach-shifted)
equilibrium at the gas temperature; the kinetics of carbon formation and gasification, the
tube wall and catalyst surface running hotter than the gas, and catalyst poisoning (sulphur)
are not modelled.

Speed: the equilibrated gas at a path temperature depends on the primary inlet gas, the
pressure and that temperature only, not on the outlet temperature. Along the window's
temperature axis the grid's own outlet solves are the path's nodes; the temperatures below
the window (and one step above it) are solved once per row of the other axes, and each local
maximum of the activity between nodes is refined by successive parabolic interpolation
(a few solves per row), so the path maximum is that of the continuous path, and a grid value
equals :func:`thermo.point` at the same coordinates.
"""

from __future__ import annotations

import numpy as np

#: Largest spacing of the path's scan nodes [K]; local maxima between nodes are refined.
from thermo.carbon_path import (  # noqa: F401 - names of this module, kept importable here
    _C2PLUS,
    _HC,
    _I,
    _T_DATA,
    BINDING,
    BINDING_WORDS,
    FLAG_LN_ACTIVITY,
    HIGHER_HYDROCARBON_FRACTION,
    PATH_STEP,
    REFINE_GAIN,
    REFINE_ITERATIONS,
    REFINE_XTOL,
    ROUTE_WORDS,
    SMALL_BATCH,
    PathMaximum,
    _nodes,
    _path_for_offset,
    _refine,
    gas_ln_activity,
    path_maxima,
    real_gas_ln_activities,
)
from thermo.constants import R
from thermo.reactions import CARBON_ROUTES
from thermo.scenario import CarbonCheck
from thermo.species import formula_matrix

# ------------------------------------------------------------------------- the point's terms


def local_terms(train_result, temperature, pressure, approach, check: CarbonCheck) -> dict:
    """Per-point parts of the carbon check that need no other point (arrays over N).

    Keys: ``elements`` (N, E) of the primary's inlet gas; ``ln_outlet`` and ``lam_outlet``,
    the gas-only equilibrium at the outlet's T - approach (re-solved without carbon where
    graphite deposits there); ``ln_real_<route>`` at T; ``higher_hydrocarbons`` and
    ``other_stage`` flags.
    """
    tr = train_result
    bal = tr.primary
    N = bal.temperature.size
    T = np.broadcast_to(np.asarray(temperature, dtype=float), (N,))
    P = np.broadcast_to(np.asarray(pressure, dtype=float), (N,))
    prim = tr.stage("primary_reformer")
    n_in = prim.inlet_flow
    b = n_in @ formula_matrix()
    with np.errstate(divide="ignore"):
        ln_out = np.log(bal.carbon_activity)
    lam = bal.element_potentials.copy()
    dep = np.flatnonzero(bal.carbon_deposit > 0)
    if dep.size:
        ln_g, lam_g = gas_ln_activity(bal.equilibrium_temperature[dep], P[dep], b[dep],
                                      warm=lam[dep])
        ln_out[dep] = ln_g
        lam[dep] = lam_g
    ln_out = np.where(bal.converged, ln_out, np.nan)
    out = {"elements": b, "ln_outlet": ln_out, "lam_outlet": lam}
    for key, v in real_gas_ln_activities(bal.mole_fraction, T, P).items():
        out[f"ln_real_{key}"] = v
    hc = n_in @ _HC
    c2 = n_in @ _C2PLUS
    with np.errstate(invalid="ignore", divide="ignore"):
        frac = np.where(hc > 0, c2 / hc, 0.0)
    out["higher_hydrocarbons"] = (frac > HIGHER_HYDROCARBON_FRACTION) & (
        prim.inlet_temperature > check.cracking_temperature)
    other = np.zeros(N)
    for st in tr.stages:
        if st.name in ("pre_reformer", "secondary_reformer"):
            other = other + np.nan_to_num(st.carbon_deposit)
    out["other_stage"] = other > 0
    return out


def _verdict(ln_path, T_path, ln_real, T, c2, stage):
    with np.errstate(invalid="ignore"):
        ln = np.maximum(ln_path, ln_real)
        code = np.where(ln_real > ln_path, 2, np.where(T_path == T, 0, 1))
    flag = c2 | stage
    ln = np.where(flag, np.fmax(ln, FLAG_LN_ACTIVITY), ln)
    code = np.where(stage, 4, np.where(c2, 3, code))
    return ln, code


def finish(local: dict, path: list[PathMaximum], T, check: CarbonCheck) -> dict:
    """Dataset variables of the carbon check (flat arrays over N points).

    Parameters
    ----------
    local : dict
        :func:`local_terms` of the points.
    path : list of PathMaximum
        Path maxima of the points, flattened to (N,) each: graphite first, then catalyst
        carbon when the scenario gives its offset.
    T : array_like (N,)
        Outlet temperature [K].
    check : CarbonCheck
        The scenario's ``[carbon]`` table.
    """
    T = np.asarray(T, dtype=float)
    routes = {k: local[f"ln_real_{k}"] for k in CARBON_ROUTES}
    ln_real = np.maximum.reduce(list(routes.values()))
    gr = path[0]
    c2, stage = local["higher_hydrocarbons"], local["other_stage"]
    ln_v_gr, code_gr = _verdict(gr.ln_activity, gr.temperature, ln_real, T, c2, stage)
    with np.errstate(over="ignore"):
        out = {
            "carbon_activity_path_max": np.exp(gr.ln_activity),
            "carbon_path_max_temperature": gr.temperature,
            "carbon_activity_real_gas": np.exp(ln_real),
            "carbon_ln_activity_outlet": local["ln_outlet"],
            "carbon_higher_hydrocarbons": c2,
            "carbon_other_stage": stage,
        }
        for k, v in routes.items():
            out[f"carbon_activity_real_gas_{k}"] = np.exp(v)
    ln_v, code = ln_v_gr, code_gr
    off = check.catalyst_carbon_offset
    if off is not None:
        cat = path[1]
        ln_real_cat = ln_real - off / (R * T)
        ln_v_cat, code_cat = _verdict(cat.ln_activity, cat.temperature, ln_real_cat, T, c2,
                                      stage)
        with np.errstate(over="ignore"):
            out["carbon_activity_path_max_catalyst"] = np.exp(cat.ln_activity)
            out["carbon_path_max_temperature_catalyst"] = cat.temperature
            out["carbon_activity_real_gas_catalyst"] = np.exp(ln_real_cat)
        out["carbon_verdict_ln_activity_graphite"] = ln_v_gr
        out["carbon_verdict_ln_activity_catalyst"] = ln_v_cat
        if check.reference == "catalyst":
            ln_v, code = ln_v_cat, code_cat
    out["carbon_verdict_ln_activity"] = ln_v
    with np.errstate(invalid="ignore"):
        out["carbon_free"] = ln_v < 0.0
    out["carbon_binding"] = code.astype(np.int8)
    return out


def offsets(check: CarbonCheck) -> tuple[float, ...]:
    """Gibbs offsets of the carbons the check refers to: graphite, then catalyst carbon."""
    off = check.catalyst_carbon_offset
    return (0.0,) if off is None else (0.0, off)


def window_check(scenario, flat: dict, axes: dict[str, np.ndarray]) -> dict:
    """The carbon check over a whole window from its points' :func:`local_terms`.

    Lines along the temperature axis share their path: the grid's own gas-only outlet
    solves are reused as the path's nodes (see the module notes).

    Parameters
    ----------
    scenario : Scenario
    flat : dict
        :func:`local_terms` over the window's points, flat in C order of `axes`.
    axes : dict
        The window's coordinates by dimension, temperature first.
    """
    names = list(axes)
    shape = tuple(len(v) for v in axes.values())
    it = names.index("temperature")
    T_axis = np.asarray(axes["temperature"], dtype=float)
    order = np.argsort(T_axis, kind="stable")
    M = T_axis.size

    def lines(a):  # (N, ...) -> (L, M, ...) with temperature last among the window dims
        a = np.asarray(a).reshape(shape + a.shape[1:])
        a = np.moveaxis(a, it, len(shape) - 1)
        return a.reshape((-1, M) + a.shape[len(shape):])[:, order]

    b = lines(flat["elements"])[:, 0]
    P_grid = np.broadcast_to(
        np.asarray(axes["pressure"]).reshape([-1 if n == "pressure" else 1 for n in names]),
        shape).reshape(-1)
    P = lines(P_grid)[:, 0]
    check = scenario.carbon
    res = path_maxima(b, P, scenario.approach, scenario.feed.inlet_temperature,
                      check.path_temperatures, T_axis[order], offsets(check),
                      known=(lines(flat["ln_outlet"]), lines(flat["lam_outlet"])))
    inv = np.argsort(order)

    def back(a):  # (L, M) -> flat window order
        a = a[:, inv].reshape(tuple(s for i, s in enumerate(shape) if i != it) + (M,))
        return np.moveaxis(a, len(shape) - 1, it).reshape(-1)

    path = [PathMaximum(back(r.ln_activity), back(r.temperature)) for r in res]
    T_grid = np.broadcast_to(T_axis.reshape([-1 if n == "temperature" else 1 for n in names]),
                             shape).reshape(-1)
    return finish(flat, path, T_grid, check)


def point_check(train_result, temperature, pressure, approach, start, check: CarbonCheck):
    """The carbon check of N points, each with its own path (no grid reuse).

    Parameters
    ----------
    train_result : thermo.train.TrainResult
        The points' train.
    temperature, pressure : array_like (N,)
        Outlet temperature [K], absolute pressure [Pa].
    approach : float
        Approach to equilibrium [K].
    start : float
        Primary inlet temperature [K].
    check : CarbonCheck

    Returns
    -------
    dict of flat arrays (the Dataset's carbon variables)
    """
    loc = local_terms(train_result, temperature, pressure, approach, check)
    return points_check(loc, temperature, pressure, approach, start, check)


def points_check(loc: dict, temperature, pressure, approach, start, check: CarbonCheck):
    """The carbon check of N points from their :func:`local_terms`, each on its own path.

    The same as :func:`point_check` for points whose train is already solved (the exact
    edges of thermo.edges evaluate arbitrary points through thermo.sweep.train_results,
    which returns these local terms).
    """
    N = loc["elements"].shape[0]
    T = np.broadcast_to(np.asarray(temperature, dtype=float), (N,))
    return finish(loc, own_paths(loc, T, pressure, approach, start, check), T, check)


def own_paths(loc: dict, temperature, pressure, approach, start,
              check: CarbonCheck) -> list[PathMaximum]:
    """Path maxima of N points (from their :func:`local_terms`), each solved on its own
    path (flat (N,) arrays, one PathMaximum per carbon of :func:`offsets`)."""
    N = loc["elements"].shape[0]
    T = np.broadcast_to(np.asarray(temperature, dtype=float), (N,))
    P = np.broadcast_to(np.asarray(pressure, dtype=float), (N,))
    per = [[] for _ in offsets(check)]
    for i in range(N):
        res = path_maxima(loc["elements"][i:i + 1], P[i:i + 1], approach, start,
                          check.path_temperatures, T[i:i + 1], offsets(check))
        for j, r in enumerate(res):
            per[j].append(r)
    if N == 0:
        return [PathMaximum(np.empty(0), np.empty(0)) for _ in per]
    return [PathMaximum(np.concatenate([r.ln_activity[:, 0] for r in rs]),
                        np.concatenate([r.temperature[:, 0] for r in rs])) for rs in per]


def path_from_nodes(loc: dict, T, approach: float, check: CarbonCheck, T_below,
                    below: list[PathMaximum], above: list[PathMaximum]) -> list[PathMaximum]:
    """Path maxima of points that lie between two outlet temperatures already solved.

    A point at outlet temperature T with T_below <= T <= T_above, on the same line (feed,
    pressure) as two solved outlets, has the path of the lower one extended from T_below to T.
    Its maximum is the lower outlet's, the gas at T itself (``loc["ln_outlet"]``, the path's
    function at its end), or the upper outlet's maximum where that one lies in (T_below, T]:
    exact where the path's activity has at most one local maximum between the two outlets,
    the same condition the refinement of :func:`path_maxima` works under.

    Parameters
    ----------
    loc : dict
        :func:`local_terms` of the N points.
    T, T_below : array_like (N,)
        Outlet temperature of each point and of the solved outlet below it [K]. The path's last
        fixed temperature (inlet or last station) must not exceed T_below.
    approach : float
        Approach to equilibrium [K].
    check : CarbonCheck
    below, above : list of PathMaximum
        Path maxima (flat (N,) arrays) of the solved outlets below and above, per carbon of
        :func:`offsets`.
    """
    T = np.asarray(T, dtype=float)
    T_below = np.asarray(T_below, dtype=float)
    out = []
    for off, lo, hi in zip(offsets(check), below, above, strict=True):
        with np.errstate(invalid="ignore"):
            end = loc["ln_outlet"] - off / (R * (T - approach))
            take_hi = (hi.temperature > T_below) & (hi.temperature <= T) & (
                hi.ln_activity >= lo.ln_activity)
            v = np.where(take_hi, hi.ln_activity, lo.ln_activity)
            t = np.where(take_hi, hi.temperature, lo.temperature)
            up = end >= v
        out.append(PathMaximum(np.where(up, end, v), np.where(up, T, t)))
    return out


#: Dataset variables of the check: (units, long_name).
VARIABLES: dict[str, tuple[str, str]] = {
    "carbon_activity_path_max": ("1", "largest carbon activity (graphite) of the equilibrated "
                                 "gas along the tube, inlet to outlet"),
    "carbon_path_max_temperature": ("K", "gas temperature on the tube's path where that "
                                    "largest activity occurs"),
    "carbon_activity_real_gas": ("1", "largest carbon activity (graphite) of the outlet gas at "
                                 "the catalyst temperature T, over methane cracking, CO "
                                 "reduction and Boudouard"),
    "carbon_activity_real_gas_methane_cracking": ("1", "carbon activity of the outlet gas at "
                                                  "T by CH4 = C + 2 H2 (graphite)"),
    "carbon_activity_real_gas_co_reduction": ("1", "carbon activity of the outlet gas at T by "
                                              "CO + H2 = C + H2O (graphite)"),
    "carbon_activity_real_gas_boudouard": ("1", "carbon activity of the outlet gas at T by "
                                           "2 CO = C + CO2 (graphite)"),
    "carbon_ln_activity_outlet": ("1", "ln carbon activity (graphite) of the equilibrated gas "
                                  "at the outlet alone (zero on the outlet-only boundary)"),
    "carbon_higher_hydrocarbons": ("1", "C2+ hydrocarbons enter the primary reformer above "
                                   "their cracking temperature"),
    "carbon_other_stage": ("1", "graphite at equilibrium in another reforming stage"),
    "carbon_activity_path_max_catalyst": ("1", "path maximum referred to catalyst carbon"),
    "carbon_path_max_temperature_catalyst": ("K", "gas temperature of the path maximum "
                                             "referred to catalyst carbon"),
    "carbon_activity_real_gas_catalyst": ("1", "real-gas maximum referred to catalyst carbon"),
    "carbon_verdict_ln_activity_graphite": ("1", "carbon verdict field on graphite"),
    "carbon_verdict_ln_activity_catalyst": ("1", "carbon verdict field on catalyst carbon"),
    "carbon_verdict_ln_activity": ("1", "ln of the binding carbon activity (positive where a "
                                   "flag breaks the limit); zero on the binding boundary"),
    "carbon_free": ("1", "carbon-free by the binding criterion"),
    "carbon_binding": ("1", "which carbon criterion binds"),
}
