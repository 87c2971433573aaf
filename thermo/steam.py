"""Water and steam properties from IAPWS-IF97, through the ``iapws`` library.

Nothing here is a hand-written steam table: every value comes from ``iapws.IAPWS97`` (the
industrial formulation IAPWS-IF97, [IAPWS-IF97]_). The library is scalar, so callers ask for
the few states a scenario's steam system names (they do not vary over an operating window)
and reuse them; :func:`saturation_temperature` accepts arrays by evaluating the library on a
log-spaced pressure grid spanning them, at most :data:`SATURATION_GRID` calls.

Units at this boundary are the project's SI (Pa, K, J kg-1); the library works in MPa and
kJ/kg, converted here.

References
----------
.. [IAPWS-IF97] Key IAPWS-IF97 in ``thermo/data/references.toml``.
"""

from __future__ import annotations

from functools import cache

import numpy as np

#: Lowest and highest pressures asked of the saturation line [Pa] (IF97 region 4 ends at the
#: triple point, 611.213 Pa, and the critical point, 22.064 MPa).
SATURATION_RANGE_PA = (611.213, 22.064e6)
#: Library calls at most per :func:`saturation_temperature` of an array.
SATURATION_GRID = 513


def _iapws():
    from iapws import IAPWS97

    return IAPWS97


@cache
def _tsat_scalar(P: float) -> float:
    return float(_iapws()(P=P / 1e6, x=0.0).T)


def saturation_temperature(P) -> np.ndarray:
    """Saturation temperature of water at pressure P [K] (IAPWS-IF97 region 4).

    Parameters
    ----------
    P : float or array_like
        Pressure [Pa], clipped to :data:`SATURATION_RANGE_PA`.

    Returns
    -------
    numpy.ndarray
        Saturation temperature [K]. For arrays the library is evaluated on a log-spaced grid
        of pressures spanning them (:data:`SATURATION_GRID` nodes, unique values exactly) and
        interpolated in ln P, which reproduces it within 3e-3 K over 1 kPa to 22 MPa.

    Examples
    --------
    IAPWS-IF97, table 35 (verification values): T_sat(1 MPa) = 453.035632 K.

    >>> round(float(saturation_temperature(1e6)), 6)
    453.035632
    """
    P = np.clip(np.asarray(P, dtype=float), *SATURATION_RANGE_PA)
    finite = np.isfinite(P)
    if P.ndim == 0:
        return np.asarray(_tsat_scalar(float(P)) if finite else np.nan)
    out = np.full(P.shape, np.nan)
    if not finite.any():
        return out
    values = np.unique(P[finite])
    if values.size <= SATURATION_GRID:
        table = np.array([_tsat_scalar(float(p)) for p in values])
        out[finite] = table[np.searchsorted(values, P[finite])]
        return out
    grid = np.geomspace(values[0], values[-1], SATURATION_GRID)
    table = np.array([_tsat_scalar(float(p)) for p in grid])
    out[finite] = np.interp(np.log(P[finite]), np.log(grid), table)
    return out


@cache
def enthalpy(P: float, T: float) -> float:
    """Specific enthalpy of water or steam at P and T [J kg-1] (IAPWS-IF97).

    Parameters
    ----------
    P : float
        Pressure [Pa].
    T : float
        Temperature [K]; compressed liquid below the saturation temperature, superheated
        steam above it.

    Returns
    -------
    float
        Enthalpy [J kg-1] on IF97's reference (liquid at the triple point).

    Examples
    --------
    IAPWS-IF97, table 5 (region 1 verification values): h(3 MPa, 300 K) = 115.331273 kJ/kg.

    >>> round(enthalpy(3e6, 300.0) / 1e3, 6)
    115.331273
    """
    return float(_iapws()(P=P / 1e6, T=T).h) * 1e3


def region(P: float, T: float) -> int:
    """IAPWS-IF97 region of the state (1 liquid, 2 steam, 3 near-critical, 5 hot steam)."""
    return int(_iapws()(P=P / 1e6, T=T).region)
