"""Scale: `explorer grid` on a large window, in this process and on 1 and 2 local dask workers.

Each run is the real command (``explorer grid SCENARIO -o grid.nc [--workers N]``) in a child
process; a thread here samples the resident memory (psutil) of that process (the client, which
also hosts the local scheduler and writes the file) and of each of its descendants (the dask
worker processes) every 0.2 s and keeps each one's peak. Runs of the modes alternate, and the
table gives the median of the repeats: wall time, throughput, the client's peak and the largest
worker's peak. The reference in the same run is the in-process command (no dask): throughput of
1 and 2 workers is reported against it and against each other.

Window: the demo feed over 700-950 degC x 10-40 bar x S/C 1-5, ``T x P x S/C`` points (100 x
400 x 250 = 10^7 by default; ``--pressures 40`` gives 10^6).

    python tests/benchmarks/bench_scale.py --pressures 40 --repeats 2
    python tests/benchmarks/bench_scale.py --modes 2 --repeats 1        # 10^7, 2 workers
"""

from __future__ import annotations

import argparse
import os
import platform
import statistics
import subprocess
import sys
import tempfile
import threading
import time
from datetime import UTC, datetime
from pathlib import Path

import psutil

sys.path.insert(0, str(Path(__file__).resolve().parent))
from common import ROOT, code_version  # noqa: E402

COMMAND = "import sys; from explorer.cli import main; sys.exit(main(sys.argv[1:]))"


def _sample(proc: psutil.Process, peaks: dict, stop: threading.Event) -> None:
    while not stop.is_set():
        try:
            family = [proc] + proc.children(recursive=True)
        except psutil.Error:
            return
        for p in family:
            try:
                rss = p.memory_info().rss
            except psutil.Error:
                continue
            peaks[p.pid] = max(peaks.get(p.pid, 0), rss)
        stop.wait(0.2)


def run(scenario: Path, out: Path, workers: int | None) -> dict:
    """One `explorer grid` run; wall time [s] and peak RSS [bytes] of client and workers."""
    argv = [sys.executable, "-c", COMMAND, "grid", str(scenario), "-o", str(out)]
    if workers is not None:
        argv += ["--workers", str(workers)]
    env = dict(os.environ, PYTHONPATH=str(ROOT))
    t0 = time.perf_counter()
    child = subprocess.Popen(argv, env=env, stdout=subprocess.PIPE, stderr=subprocess.DEVNULL,
                             text=True)
    proc = psutil.Process(child.pid)
    peaks: dict[int, int] = {}
    stop = threading.Event()
    sampler = threading.Thread(target=_sample, args=(proc, peaks, stop), daemon=True)
    sampler.start()
    stdout, _ = child.communicate()
    wall = time.perf_counter() - t0
    stop.set()
    sampler.join()
    if child.returncode != 0:
        raise SystemExit(f"explorer grid failed ({child.returncode}): {stdout}")
    client = peaks.pop(child.pid, 0)
    # Descendants under 60 MB are helpers (multiprocessing's resource tracker), not workers.
    workers_rss = sorted((v for v in peaks.values() if v > 60e6), reverse=True)
    size = out.stat().st_size
    out.unlink()
    return {"wall": wall, "client": client, "workers": workers_rss, "file": size,
            "stdout": stdout.strip()}


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--temperatures", type=int, default=100)
    ap.add_argument("--pressures", type=int, default=400)
    ap.add_argument("--ratios", type=int, default=250)
    ap.add_argument("--repeats", type=int, default=1)
    ap.add_argument("--modes", default="0,1,2",
                    help="comma list: 0 = in process (no dask), N = N local workers")
    ap.add_argument("--folder", default=None, help="where the grid file goes (default: /tmp)")
    args = ap.parse_args()

    sys.path.insert(0, str(ROOT))
    import thermo

    sc = thermo.load_scenario().with_window(
        temperature=("700 degC", "950 degC", args.temperatures),
        pressure=("10 bar", "40 bar", args.pressures),
        steam_to_carbon=(1.0, 5.0, args.ratios))
    n = sc.window.size()
    modes = [int(m) for m in args.modes.split(",")]
    print(f"bench_scale {datetime.now(UTC).isoformat(timespec='seconds')}, {platform.node()}, "
          f"{os.cpu_count()} cores, {code_version()}")
    print(f"window {args.temperatures} x {args.pressures} x {args.ratios} = {n:,} points; "
          f"load average at start {os.getloadavg()}")
    with tempfile.TemporaryDirectory(dir=args.folder) as tmp:
        path = Path(tmp) / "big.toml"
        path.write_text(sc.to_toml(), encoding="utf-8")
        out = Path(tmp) / "grid.nc"
        results: dict[int, list[dict]] = {m: [] for m in modes}
        for r in range(args.repeats):
            for m in modes:
                res = run(path, out, m or None)
                results[m].append(res)
                print(f"  repeat {r + 1}, {'in process' if m == 0 else f'{m} workers'}: "
                      f"{res['wall']:.1f} s, client {res['client'] / 1e9:.2f} GB, workers "
                      f"{[round(w / 1e9, 2) for w in res['workers']]} GB, file "
                      f"{res['file'] / 1e9:.2f} GB", flush=True)
    print(f"load average at end {os.getloadavg()}")
    print("| mode | wall [s] | points/s | vs in process | client peak RSS [GB] | "
          "largest worker peak RSS [GB] |")
    print("|---|---|---|---|---|---|")
    rate = {}
    for m in modes:
        wall = statistics.median(x["wall"] for x in results[m])
        rate[m] = n / wall
        client = statistics.median(x["client"] for x in results[m]) / 1e9
        worker = max((max(x["workers"], default=0) for x in results[m]), default=0) / 1e9
        ref = f"{rate[m] / rate[0]:.2f}x" if 0 in rate else "-"
        print(f"| {'in process' if m == 0 else f'{m} workers'} | {wall:.1f} | {rate[m]:,.0f} | "
              f"{ref} | {client:.2f} | {worker if m else float('nan'):.2f} |")
    if 1 in rate and 2 in rate:
        print(f"throughput 2 workers / 1 worker: {rate[2] / rate[1]:.2f}x")


if __name__ == "__main__":
    main()
