"""Equilibrium core of the reformer operating-window explorer (no UI imports).

Public API::

    import thermo
    sc = thermo.load_scenario()                     # the demo scenario, or a path
    pt = thermo.point(sc, temperature="850 degC", pressure="25 bar", steam_to_carbon=3.0)
    pt.to_dict()
    ds = thermo.sweep(sc)                           # xarray.Dataset over the window

Importing ``thermo`` sets NumPy's BLAS to one thread for the process unless the environment
chooses it (``OPENBLAS_NUM_THREADS`` and the like): see :mod:`thermo.threads`.
"""

from __future__ import annotations

__version__ = "0.1.0"

from thermo.api import PointResult, point
from thermo.edges import best_point, margins
from thermo.errors import InputError
from thermo.scenario import Scenario, load_scenario, parse_scenario
from thermo.sweep import sweep
from thermo.threads import limit_blas_threads

# One BLAS thread for the process: BLAS's idle threads would spin on the kernel's cores
# (thermo/threads.py; a user's own setting in the environment is kept).
limit_blas_threads()

__all__ = [
    "InputError",
    "PointResult",
    "Scenario",
    "__version__",
    "best_point",
    "load_scenario",
    "margins",
    "parse_scenario",
    "point",
    "sweep",
]
