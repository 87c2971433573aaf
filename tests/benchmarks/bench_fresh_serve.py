"""Benchmark: the first maps of `explorer serve` on a fresh machine (issue 17, goal 20 s).

Run on its own (not collected by pytest), from a checkout whose tests can import playwright,
against a fresh clone installed into its own fresh virtual environment::

    git clone <repo> /tmp/fresh && python -m venv /tmp/venv
    /tmp/venv/bin/pip install -e /tmp/fresh
    python tests/benchmarks/bench_fresh_serve.py --clone /tmp/fresh --venv /tmp/venv

The server starts with an empty numba cache (``NUMBA_CACHE_DIR`` a new temporary folder); a
headless Chromium opens the page as soon as the port listens. Printed: seconds from the start
to the port listening and to the first map drawn, and the machine's load. The first run in a
new venv also pays the libraries' first bytecode compile; run it twice to see both. Figures
only: nothing here asserts a time.
"""

from __future__ import annotations

import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

import argparse  # noqa: E402
import os  # noqa: E402
import socket  # noqa: E402
import subprocess  # noqa: E402
import tempfile  # noqa: E402
import time  # noqa: E402

from playwright.sync_api import sync_playwright  # noqa: E402

from tests.conftest import CHROMIUM_ARGS, chromium_binary  # noqa: E402
from tests.explorer.helpers import FIND_PIXEL, free_port  # noqa: E402


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--clone", required=True, help="fresh clone (the server's working folder)")
    ap.add_argument("--venv", required=True, help="fresh venv with the clone installed")
    args = ap.parse_args()
    port = free_port()
    env = dict(os.environ, NUMBA_CACHE_DIR=tempfile.mkdtemp(prefix="numba-empty-"))
    t0 = time.time()
    proc = subprocess.Popen([str(Path(args.venv) / "bin" / "explorer"), "serve", "--port",
                             str(port)], cwd=args.clone, env=env, stdout=subprocess.PIPE,
                            stderr=subprocess.STDOUT, text=True)
    try:
        while True:
            try:
                socket.create_connection(("127.0.0.1", port), timeout=1).close()
                break
            except OSError:
                if proc.poll() is not None:
                    raise SystemExit(proc.communicate()[0]) from None
                time.sleep(0.1)
        t_listen = time.time() - t0
        with sync_playwright() as p:
            browser = p.chromium.launch(executable_path=chromium_binary(), args=CHROMIUM_ARGS)
            page = browser.new_page(viewport={"width": 1600, "height": 1000})
            page.goto(f"http://127.0.0.1:{port}/")
            page.wait_for_function(
                f"() => window.Bokeh && ({FIND_PIXEL})(['map-0', 850, 20]) !== null",
                timeout=600_000)
            t_maps = time.time() - t0
            browser.close()
        print(f"port listening {t_listen:.1f} s, first maps {t_maps:.1f} s after the start; "
              f"load {os.getloadavg()[0]:.1f}")
    finally:
        proc.terminate()
        proc.communicate(timeout=30)


if __name__ == "__main__":
    main()
