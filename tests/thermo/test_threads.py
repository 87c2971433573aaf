"""Importing the core sets NumPy's BLAS to one thread, unless the user chose otherwise.

Why (measured in the benchmarks, not asserted here): BLAS's idle threads spin on the cores
the equilibrium kernel needs; see thermo/threads.py. Each case runs in a fresh interpreter,
because the setting is made once, at import.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]

PROBE = """
import json, threading
import numpy  # loads its BLAS, as any user's code would before importing thermo
from threadpoolctl import threadpool_info, threadpool_limits
def blas_threads():  # not thermo's own helper: importing it would import thermo
    return [lib["num_threads"] for lib in threadpool_info() if lib["user_api"] == "blas"]
threadpool_limits(limits=2, user_api="blas")   # a BLAS that runs two threads before import
before = blas_threads()
import thermo
from thermo.threads import blas_threads as thermo_blas_threads  # the helper DEVELOPERS names
after = blas_threads()
assert thermo_blas_threads() == after
seen = []
t = threading.Thread(target=lambda: seen.append(thermo_blas_threads()))
t.start(); t.join()
print(json.dumps({"before": before, "after": after, "thread": seen[0]}))
"""


def _probe(**env) -> dict:
    full = {k: v for k, v in os.environ.items()
            if k not in ("OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS", "BLIS_NUM_THREADS",
                         "OMP_NUM_THREADS")}
    full["PYTHONPATH"] = str(ROOT) + os.pathsep + full.get("PYTHONPATH", "")
    full.update(env)
    out = subprocess.run([sys.executable, "-c", PROBE], capture_output=True, text=True,
                         env=full, check=True, timeout=120)
    return json.loads(out.stdout.strip().splitlines()[-1])


def test_import_sets_every_blas_to_one_thread_for_all_threads():
    r = _probe()
    if not r["before"] or max(r["before"]) < 2:
        pytest.skip(f"this NumPy's BLAS cannot run two threads here: {r}")
    # every BLAS loaded, the ones thermo's own imports bring (SciPy's) included
    assert len(r["after"]) >= len(r["before"]) and set(r["after"]) == {1}
    assert r["thread"] == r["after"]  # process-wide: a server's or worker's threads too


@pytest.mark.parametrize("name", ["OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS"])
def test_a_users_choice_in_the_environment_is_kept(name):
    r = _probe(**{name: "2"})
    assert r["before"] and max(r["before"]) >= 2
    assert set(r["after"]) == {2}
