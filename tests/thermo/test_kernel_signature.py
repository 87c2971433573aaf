"""The compiled kernel has one specialisation: the one :func:`build_kernel` compiles.

numba compiles the kernel once per combination of argument types, and a read-only array (a
``np.broadcast_to`` view, the cached formula matrix) is a different type from a writable one.
Before this was guarded, ``equilibrate`` passed read-only views where the background build
passed writable arrays, so on a fresh machine the build put a kernel in the cache that no
solve used, and the server then compiled two more in its own process (about 20 s of the
first page's 27 s, measured 2026-12-03). Source: numba's documentation, "Compiling Python
code with @jit" (one compiled version per input types; array types carry layout and
mutability) - from memory.
"""

from __future__ import annotations

import numpy as np

from thermo import equilibrium as eq
from thermo.species import ELEMENTS


def test_every_call_uses_the_built_specialisation():
    eq.build_kernel()
    built = list(eq._solve_batch.signatures)
    assert len(built) == 1
    n = eq.INTERPRETED_POINTS + 6  # above the interpreted kernel's size: the compiled path
    T = np.broadcast_to(np.array(1100.0), (n,))  # read-only views, as callers pass them
    P = np.broadcast_to(np.array(2.5e6), (n,))
    b = np.broadcast_to(np.array([1.0, 7.0, 3.0, 0.02, 0.0]), (n, len(ELEMENTS)))
    cold = eq.equilibrate(T, P, b, row=7)
    warm = eq.equilibrate(T, P, b, warm_start=cold.element_potentials, row=7)
    potentials = np.broadcast_to(cold.element_potentials[:1], (n, len(ELEMENTS)))
    gas = eq.equilibrate(list(T), list(P), b.tolist(), allow_carbon=False,
                         warm_start=potentials, row=1)
    assert cold.converged.all() and warm.converged.all() and gas.converged.all()
    assert list(eq._solve_batch.signatures) == built
