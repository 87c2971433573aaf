"""Benchmark: how long a hostile scenario file takes to be refused.

Run on its own (not collected by pytest)::

    python tests/benchmarks/bench_hostile.py [--repeat 5]

Each hostile file of tests/thermo/test_hostile_input.py (``HOSTILE_CASES``) is parsed with
``thermo.scenario.parse_scenario`` until it raises ``InputError``; the median time of
``--repeat`` runs is printed in seconds and as a ratio to the median time of parsing the demo
scenario itself in the same run (the reference). Figures only: nothing here asserts a time.
"""

from __future__ import annotations

import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

import argparse  # noqa: E402
import datetime  # noqa: E402
import os  # noqa: E402
import platform  # noqa: E402
import statistics  # noqa: E402
import time  # noqa: E402

from tests.benchmarks.common import code_version  # noqa: E402
from tests.thermo.test_hostile_input import BASE, HOSTILE_CASES, HOSTILE_IDS  # noqa: E402
from thermo.errors import InputError  # noqa: E402
from thermo.scenario import parse_scenario  # noqa: E402


def _median_time(text: str, repeat: int, refused: bool) -> float:
    """Median wall time [s] of parse_scenario(text) over `repeat` runs."""
    times = []
    for _ in range(repeat):
        start = time.perf_counter()
        try:
            parse_scenario(text)
        except InputError:
            if not refused:
                raise
        else:
            if refused:
                raise SystemExit("a hostile case was accepted: see test_hostile_input.py")
        times.append(time.perf_counter() - start)
    return statistics.median(times)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--repeat", type=int, default=5)
    args = ap.parse_args()
    print(f"{datetime.datetime.now(datetime.UTC):%Y-%m-%d %H:%M} UTC, {platform.machine()}, "
          f"{os.cpu_count()} cores, Python {platform.python_version()}, {code_version()}, "
          f"load average {os.getloadavg()[0]:.2f} at start")
    ref = _median_time(BASE, args.repeat, refused=False)
    print(f"{'case':<14}{'median s':>12}{'x demo parse':>14}")
    print(f"{'demo (ref.)':<14}{ref:>12.4f}{1.0:>14.1f}")
    for (text, _), name in zip(HOSTILE_CASES, HOSTILE_IDS, strict=True):
        t = _median_time(text, args.repeat, refused=True)
        print(f"{name:<14}{t:>12.4f}{t / ref:>14.1f}")
    print(f"load average {os.getloadavg()[0]:.2f} at end")


if __name__ == "__main__":
    main()
