"""One BLAS thread in a process that runs the equilibrium core.

NumPy's BLAS (OpenBLAS in the wheels, MKL or BLIS elsewhere) runs a matrix product on a pool
of threads, and after each product those threads keep spinning on their cores for a while,
waiting for the next one. The core's matrix products are tiny (N points x 10 species times
10 x 5 elements), so the pool gains nothing on them; but its spinning threads take the very
cores on which the equilibrium kernel runs its rows in parallel next. On a 2-core machine
that halved the kernel's speed inside a sweep: the 40 x 20 x 20 window of
tests/benchmarks/bench_sweep.py took 0.18 s with the pool and 0.10 s with BLAS on one thread
(2026-12-04, medians of 15 sweeps).

:func:`limit_blas_threads` runs once, when ``thermo`` is imported: BLAS is set to one thread
for the whole process (BLAS has no per-thread setting, and a limit set and lifted around each
call would not hold for the threads in which a server or a dask worker runs its work). A user
who has chosen BLAS's threads in the environment (``OPENBLAS_NUM_THREADS``,
``MKL_NUM_THREADS``, ``BLIS_NUM_THREADS`` or ``OMP_NUM_THREADS``) keeps that choice, and
``threadpoolctl.threadpool_limits`` gives them back at any time.
`threadpoolctl` (https://github.com/joblib/threadpoolctl) finds and sets the loaded BLAS
libraries.
"""

from __future__ import annotations

import os

#: Environment variables by which a user chooses BLAS's threads; any of them set: left alone.
USER_SETTINGS = ("OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS", "BLIS_NUM_THREADS",
                 "OMP_NUM_THREADS")


def limit_blas_threads() -> bool:
    """Set every loaded BLAS library to one thread; returns whether it did.

    Does nothing where the user chose BLAS's threads in the environment (USER_SETTINGS).
    """
    if any(os.environ.get(name) for name in USER_SETTINGS):
        return False
    from threadpoolctl import threadpool_limits

    threadpool_limits(limits=1, user_api="blas")
    return True


def blas_threads() -> list[int]:
    """Threads of each loaded BLAS library now (for tests and benchmarks)."""
    from threadpoolctl import threadpool_info

    return [lib["num_threads"] for lib in threadpool_info() if lib["user_api"] == "blas"]
