"""Species data: NASA 7-coefficient polynomials and the functions built on them.

The data file ``thermo/data/species.toml`` holds, per species, the elemental formula, the
temperature ranges and the coefficients exactly as printed in the source named by its
``source`` key (GRI30 for the gases, TM4513 for graphite; see ``references.toml``). The
loader converts nothing: the coefficients are dimensionless already.

Every function is vectorized over temperature and refuses temperatures outside a species'
range with :class:`TemperatureRangeError`. At exactly the middle temperature the low range is
used.
"""

from __future__ import annotations

import math
import threading
import tomllib
from collections import OrderedDict
from dataclasses import dataclass
from functools import cache
from importlib import resources

import numba
import numpy as np

from thermo.constants import ATOMIC_WEIGHT, ELEMENTS, P_REF, R

#: Gas species of the model, in the order of every species axis (Dataset contract, thermo/sweep.py).
GAS_SPECIES: tuple[str, ...] = ("CH4", "C2H6", "C3H8", "H2O", "H2", "CO", "CO2", "O2", "N2", "Ar")

#: Name of the solid carbon (graphite) record.
GRAPHITE = "C(gr)"


class TemperatureRangeError(ValueError):
    """A temperature lies outside the valid range of a species' polynomial."""


@dataclass(frozen=True)
class SpeciesRecord:
    """One species of the data file.

    Attributes
    ----------
    name : str
        Formula as used in the project (``"CH4"``, ``"C(gr)"``).
    phase : str
        ``"gas"`` or ``"solid"``.
    elements : dict[str, int]
        Atoms per molecule.
    source : str
        Bibliography key of the coefficients.
    t_low, t_mid, t_high : float
        Range limits [K].
    low, high : numpy.ndarray, shape (7,)
        Coefficients a1..a7 of the low and high range [-].
    density : float or None
        Density of a solid [kg m-3]; None for gases.
    standard_pressure : float
        Standard-state pressure the source's coefficients refer to [Pa].
    origin : str
        Origin tag of the record in its source (GRI-Mech date field), "" if none.
    """

    name: str
    phase: str
    elements: dict[str, int]
    source: str
    t_low: float
    t_mid: float
    t_high: float
    low: np.ndarray
    high: np.ndarray
    density: float | None = None
    standard_pressure: float = P_REF
    origin: str = ""

    @property
    def s_shift(self) -> float:
        """Entropy change s/R from the record's standard pressure to P_REF [-].

        Zero for a solid (its pressure dependence is the v dP term, see graphite_mu_RT).
        """
        if self.phase != "gas":
            return 0.0
        return math.log(self.standard_pressure / P_REF)

    @property
    def molar_mass(self) -> float:
        """Molar mass [kg mol-1] from IUPAC2021 conventional atomic weights."""
        return sum(ATOMIC_WEIGHT[e] * k for e, k in self.elements.items())

    @property
    def molar_volume(self) -> float:
        """Molar volume of a solid [m3 mol-1]; raises for a gas."""
        if self.density is None:
            raise ValueError(f"{self.name} is a gas; it has no fixed molar volume")
        return self.molar_mass / self.density

    def _coeffs(self, T: np.ndarray) -> np.ndarray:
        T = np.asarray(T, dtype=float)
        bad = ~((T >= self.t_low) & (T <= self.t_high))
        if np.any(bad):
            worst = T[bad].flat[0] if T.ndim else float(T)
            raise TemperatureRangeError(
                f"temperature {worst:.6g} K is outside the data range of {self.name} "
                f"({self.t_low:g} to {self.t_high:g} K, source {self.source})"
            )
        # Row 0 (low range) where T <= t_mid, row 1 (high range) above: a gather is about
        # twice as fast as a broadcast where() on large arrays.
        return np.stack((self.low, self.high))[(T > self.t_mid).astype(np.intp)]


def _load() -> dict[str, SpeciesRecord]:
    text = resources.files("thermo").joinpath("data/species.toml").read_text(encoding="utf-8")
    raw = tomllib.loads(text)
    records = {}
    for r in raw["species"]:
        records[r["name"]] = SpeciesRecord(
            name=r["name"],
            phase=r["phase"],
            elements=dict(r["elements"]),
            source=r["source"],
            t_low=float(r["t_low"]),
            t_mid=float(r["t_mid"]),
            t_high=float(r["t_high"]),
            low=np.array(r["low"], dtype=float),
            high=np.array(r["high"], dtype=float),
            density=r.get("density_kg_per_m3"),
            standard_pressure=float(r["standard_pressure_Pa"]),
            origin=r.get("origin", ""),
        )
    return records


@cache
def species_table() -> dict[str, SpeciesRecord]:
    """All species records of ``thermo/data/species.toml`` keyed by name (GRI30, TM4513).

    Coefficients are kept as printed; :func:`s_R` and :func:`g_RT` add each record's
    :attr:`SpeciesRecord.s_shift` so that every value is on the 1 bar standard state.
    """
    records = _load()
    missing = set(GAS_SPECIES + (GRAPHITE,)) - set(records)
    if missing:
        raise ValueError(f"species data lacks {sorted(missing)}")
    return records


def record(name: str) -> SpeciesRecord:
    """The record of one species; a clear error for an unknown name."""
    table = species_table()
    if name not in table:
        raise KeyError(f"unknown species {name!r}; known: {', '.join(table)}")
    return table[name]


#: Arrays at least this long are evaluated once per distinct temperature (see nasa_values).
DEDUPE_MIN = 64
#: Distinct temperature sets kept with their NASA values (a sweep chunk uses about 5).
_CACHE_SIZE = 8
_cache: OrderedDict = OrderedDict()
#: Temperature arrays without repeats kept with their values (each 4 x 8 B x records x points:
#: 23 MB for a 65,536-point chunk).
_CACHE_ALL_SIZE = 2
_cache_all: OrderedDict = OrderedDict()
_cache_lock = threading.Lock()


@cache
def _coefficient_table() -> tuple:
    """Coefficients of every record stacked in one table, rows in _ALL order.

    Returns (names, row of each name, low (K, 7), high (K, 7), t_mid, t_low, t_high, s_shift).
    """
    table = species_table()
    names = GAS_SPECIES + (GRAPHITE,) + tuple(n for n in table if n not in GAS_SPECIES
                                               and n != GRAPHITE)
    recs = [table[n] for n in names]
    arrays = (np.array([r.low for r in recs]), np.array([r.high for r in recs]),
              np.array([r.t_mid for r in recs]), np.array([r.t_low for r in recs]),
              np.array([r.t_high for r in recs]), np.array([r.s_shift for r in recs]))
    for a in arrays:
        a.setflags(write=False)
    return (names, {n: i for i, n in enumerate(names)}) + arrays


#: Temperatures evaluated per slice by :func:`_evaluate`'s numpy path: its (records x slice)
#: temporaries then stay in the processor's cache. 11 records at 16,000 temperatures took
#: 12.2 ms in one piece and 7.8 ms in slices of 1,024 (8.2 ms at 512, 8.0 ms at 2,048;
#: 2026-12-04); the numbers are the same either way (every element's arithmetic is its own).
EVALUATE_SLICE = 1024

#: Arrays at least this long are evaluated by the compiled kernel (:func:`_nasa_kernel`):
#: 11 records at 16,000 temperatures, all four functions, in 1.0 ms instead of 8.5 ms (4.9 ms
#: for g/RT alone) by the numpy path (2-core Intel Xeon, 2026-12-05). Its first use in a
#: process loads it from numba's cache (0.1 s) or compiles it (0.4 s); shorter arrays (a
#: single point's steps) never pay that.
KERNEL_MIN = 256


@numba.njit(cache=True)
def _nasa_kernel(T, lnT, low, high, t_mid, s_shift, out):
    """cp/R, h/RT, s/R and g/RT of k records at n temperatures into out (4, k, n).

    `lnT` is ln T computed by numpy (so s/R is bit for bit the numpy path's, whose log this
    is); the rest is :func:`_evaluate_slice`'s arithmetic, operation for operation, so the
    numbers are equal to the last bit (tests/thermo/test_species_kernel.py).
    """
    k = low.shape[0]
    for i in range(T.shape[0]):
        t = T[i]
        lt = lnT[i]
        for r in range(k):
            c = high[r] if t > t_mid[r] else low[r]
            a0, a1, a2, a3, a4, a5, a6 = c[0], c[1], c[2], c[3], c[4], c[5], c[6]
            h = a0 + t * (a1 / 2 + t * (a2 / 3 + t * (a3 / 4 + t * a4 / 5))) + a5 / t
            s = (a0 * lt + t * (a1 + t * (a2 / 2 + t * (a3 / 3 + t * a4 / 4)))) + a6 + s_shift[r]
            out[0, r, i] = a0 + t * (a1 + t * (a2 + t * (a3 + t * a4)))
            out[1, r, i] = h
            out[2, r, i] = s
            out[3, r, i] = h - s


_FUNCTIONS = ("cp_R", "h_RT", "s_R", "g_RT")


def _evaluate(T: np.ndarray, rows, only: str | None = None,
              compiled: bool | None = None) -> dict[str, np.ndarray]:
    """cp/R, h/RT, s/R and g/RT (or `only` that one) of the records `rows` at 1-D
    temperatures T, each (k, T.size).

    The same arithmetic, operation for operation, as the formulas in the docstrings of
    :func:`cp_R`, :func:`h_RT` and :func:`s_R` (low range at T <= t_mid). Arrays of at least
    KERNEL_MIN temperatures (or any, with `compiled` True) go through the compiled kernel,
    which returns all four functions (they cost it little more than one); the numpy path
    evaluates long arrays in slices of EVALUATE_SLICE temperatures. Both give the same bits.
    """
    rows = np.asarray(rows, dtype=np.intp)
    if compiled if compiled is not None else T.size >= KERNEL_MIN:
        _, _, low, high, t_mid, _, _, s_shift = _coefficient_table()
        T = np.require(T, dtype=np.float64, requirements=("C", "W"))
        out = np.empty((4, rows.size, T.size))
        # Gathered rows are fresh writable arrays: one specialisation of the kernel.
        _nasa_kernel(T, np.log(T), low[rows], high[rows], t_mid[rows], s_shift[rows], out)
        return dict(zip(_FUNCTIONS, out, strict=True))
    if T.size > EVALUATE_SLICE:
        parts = [_evaluate_slice(T[i:i + EVALUATE_SLICE], rows, only)
                 for i in range(0, T.size, EVALUATE_SLICE)]
        return {k: np.concatenate([p[k] for p in parts], axis=1) for k in parts[0]}
    return _evaluate_slice(T, rows, only)


def _evaluate_slice(T: np.ndarray, rows: np.ndarray, only: str | None) -> dict[str, np.ndarray]:
    """:func:`_evaluate`'s numpy path on one slice of temperatures."""
    _, _, low, high, t_mid, _, _, s_shift = _coefficient_table()
    upper = T[None, :] > t_mid[rows, None]  # (k, n): high range
    # One contiguous (k, n) array per coefficient: the arithmetic below then runs on
    # contiguous memory (several times faster than on strided views of a (k, n, 7) gather).
    lo, hi = low[rows].T[:, :, None], high[rows].T[:, :, None]  # (7, k, 1)
    a0, a1, a2, a3, a4, a5, a6 = (np.where(upper, hi[i], lo[i]) for i in range(7))
    out = {}
    if only in (None, "cp_R"):
        out["cp_R"] = a0 + T * (a1 + T * (a2 + T * (a3 + T * a4)))
    if only in (None, "h_RT", "g_RT"):
        out["h_RT"] = h = a0 + T * (a1 / 2 + T * (a2 / 3 + T * (a3 / 4 + T * a4 / 5))) + a5 / T
    if only in (None, "s_R", "g_RT"):
        out["s_R"] = s = (a0 * np.log(T) + T * (a1 + T * (a2 / 2 + T * (a3 / 3 + T * a4 / 4)))
                          + a6 + s_shift[rows, None])
    if only in (None, "g_RT"):
        out["g_RT"] = h - s
    return out


def _distinct(flat: np.ndarray, what: str):
    """(inverse index or None, values of every record) for a long 1-D temperature array,
    the values holding at least the NASA function `what`.

    An array that repeats its values (a window's grid) is evaluated once per distinct
    temperature (values over those, and the inverse index back to the array); any other
    (an adiabatic stage's iterates) once for all records (inverse None). Both are kept in
    small caches keyed by the array's bytes, so every variable of a sweep chunk, and every
    function a solver step needs, shares one evaluation; each function is evaluated the first
    time it is asked for at that array (g/RT brings h/RT and s/R along; the compiled kernel
    of arrays of KERNEL_MIN or more brings all four), so a solver step that needs only g/RT at
    one temperature and h/RT at another skips the other functions.
    """
    key = flat.tobytes()
    hit = None
    with _cache_lock:
        for store in (_cache, _cache_all):
            hit = store.get(key)
            if hit is not None:
                store.move_to_end(key)
                break
    if hit is None:
        # Cheap test first: a grid's temperature axis repeats in long runs, so a prefix of a
        # repeating array repeats too; an array of all-distinct values skips the sort.
        entry = None
        if np.unique(flat[:DEDUPE_MIN]).size <= DEDUPE_MIN // 2:
            Tu, inv = np.unique(flat, return_inverse=True)
            if Tu.size * 4 <= flat.size:
                entry, store, size = (inv.reshape(-1), {}, Tu), _cache, _CACHE_SIZE
        if entry is None:
            entry, store, size = (None, {}, flat.copy()), _cache_all, _CACHE_ALL_SIZE
        with _cache_lock:
            store[key] = entry
            while len(store) > size:
                store.popitem(last=False)
        hit = entry
    inv, vals, at = hit
    if what not in vals:
        rows = np.arange(len(_coefficient_table()[0]))
        vals.update(_evaluate(at, rows, what))
    return inv, vals


def nasa_values(T, names: tuple[str, ...], what: str) -> np.ndarray:
    """One NASA function of the records `names` at T, shape (len(names),) + shape(T).

    Refuses temperatures outside a species' range (TemperatureRangeError). Long arrays with
    repeated temperatures are evaluated once per distinct value (:func:`_distinct`); the
    numbers are the same either way.
    """
    T = np.asarray(T, dtype=float)
    _, row_of, _, _, _, t_low, t_high, _ = _coefficient_table()
    rows = []
    for n in names:
        if n not in row_of:
            record(n)  # the clear error for an unknown name
        rows.append(row_of[n])
    flat = T.reshape(-1)
    if flat.size:
        lo_T, hi_T = flat.min(), flat.max()
        for n, r in zip(names, rows, strict=True):
            if not (lo_T >= t_low[r] and hi_T <= t_high[r]):
                record(n)._coeffs(T)  # raises with the usual message
    shape = (len(rows),) + T.shape
    if flat.size >= DEDUPE_MIN:
        inv, vals = _distinct(flat, what)
        if inv is None:
            return vals[what][rows].reshape(shape)
        # np.take keeps C order (as the direct evaluation): sums over species downstream
        # then add in the same order either way.
        return np.take(vals[what][rows], inv, axis=1).reshape(shape)
    return _evaluate(flat, rows, what)[what].reshape(shape)


def cp_R(T, name: str) -> np.ndarray:
    r"""Dimensionless heat capacity cp/R of one species.

    Parameters
    ----------
    T : array_like
        Temperature [K], inside the species' range.
    name : str
        Species name.

    Returns
    -------
    numpy.ndarray
        cp/R [-].

    Notes
    -----
    .. math:: c_p/R = a_1 + a_2 T + a_3 T^2 + a_4 T^3 + a_5 T^4

    Examples
    --------
    CO2 at 1000 K; NIST-JANAF (Chase 1998), CO2 table, gives cp = 54.308 J/(mol K):

    >>> round(float(cp_R(1000.0, "CO2") * 8.314462618), 1)
    54.3
    """
    return nasa_values(T, (name,), "cp_R")[0]


def h_RT(T, name: str) -> np.ndarray:
    r"""Dimensionless enthalpy h/(RT), formation enthalpy included.

    Notes
    -----
    .. math:: h/(RT) = a_1 + a_2 T/2 + a_3 T^2/3 + a_4 T^3/4 + a_5 T^4/5 + a_6/T

    Examples
    --------
    Formation enthalpy of CO2 at 298.15 K; NIST-JANAF (Chase 1998) gives -393.522 kJ/mol
    (the GRI30 fit: -393.51):

    >>> round(float(h_RT(298.15, "CO2") * 8.314462618 * 298.15 / 1000), 1)
    -393.5
    """
    return nasa_values(T, (name,), "h_RT")[0]


def s_R(T, name: str) -> np.ndarray:
    r"""Dimensionless standard entropy s°/R at the project's standard pressure P_REF (1 bar).

    Notes
    -----
    .. math:: s/R = a_1 \ln T + a_2 T + a_3 T^2/2 + a_4 T^3/3 + a_5 T^4/4 + a_7
              - \ln(P_{REF}/P^\circ_{record})

    Examples
    --------
    CO2 at 298.15 K; NIST-JANAF (Chase 1998), 1 bar, gives 213.795 J/(mol K):

    >>> round(float(s_R(298.15, "CO2") * 8.314462618), 2)
    213.79
    """
    return nasa_values(T, (name,), "s_R")[0]


def g_RT(T, name: str) -> np.ndarray:
    """Dimensionless standard Gibbs energy g°/(RT) = h/(RT) - s°/R at P_REF (1 bar) [-]."""
    return nasa_values(T, (name,), "g_RT")[0]


def molar_mass(name: str) -> float:
    """Molar mass of a species [kg mol-1] (IUPAC2021 atomic weights)."""
    return record(name).molar_mass


@cache
def formula_matrix() -> np.ndarray:
    """Atoms of each element (ELEMENTS order) per molecule of each gas species, shape (S, E)."""
    A = np.zeros((len(GAS_SPECIES), len(ELEMENTS)))
    for j, name in enumerate(GAS_SPECIES):
        for e, k in record(name).elements.items():
            A[j, ELEMENTS.index(e)] = k
    A.setflags(write=False)
    return A


@cache
def molar_masses() -> np.ndarray:
    """Molar masses of the gas species in GAS_SPECIES order [kg mol-1]."""
    out = np.array([molar_mass(n) for n in GAS_SPECIES])
    out.setflags(write=False)
    return out


def gas_table(T, what: str = "g_RT") -> np.ndarray:
    """One NASA function of every gas species at once, shape (S,) + shape(T).

    Parameters
    ----------
    T : array_like
        Temperature [K].
    what : {"g_RT", "h_RT", "s_R", "cp_R"}
        Which function.
    """
    if what not in ("g_RT", "h_RT", "s_R", "cp_R"):
        raise KeyError(f"unknown NASA function {what!r}; known: g_RT, h_RT, s_R, cp_R")
    return nasa_values(T, GAS_SPECIES, what)


def graphite_mu_RT(T, P) -> np.ndarray:
    """Chemical potential of pure graphite over RT at T, P [-].

    Includes the solid's pressure term (P - P°) v / (R T) with v from the TM4513 density and
    P° = 1 bar; about 0.0026 at 40 bar and 1000 K.
    """
    T = np.asarray(T, dtype=float)
    v = record(GRAPHITE).molar_volume
    rec = record(GRAPHITE)
    return g_RT(T, GRAPHITE) + (np.asarray(P, dtype=float) - rec.standard_pressure) * v / (R * T)
