"""Benchmark: writing the review file, after the window is solved, against the solve itself.

Run on its own (not collected by pytest)::

    python tests/benchmarks/bench_export.py [--repeats 3]

For the demo scenario (its own window), its comparison with ``scenarios/demo-proposal.toml``
(the proposal on the base's window) and the hydrogen-plant scenario (a train and a plant:
the per-stage and plant arrays), in one process:

- the solve: ``thermo.sweep`` of the window (the proposal's too when comparing), warm (the
  kernel compiled by a first, untimed sweep);
- the window's facts the file states (:func:`explorer.sheet.window_facts`: the best point
  and the design point's margins, from ``thermo.edges``), timed apart because they are
  solves of the core as well, not file writing;
- writing: :func:`explorer.export.write_review` given the Dataset(s) and the facts (layers,
  page data, the plotting library's document, the sheet, the checks, the file);
- the file's size, and its parts (the library's own code, the embedded data, the document).

Each time is the median of ``--repeats`` interleaved runs (solve, facts, writing in each;
the fastest in brackets: the machine is shared). The ratios put the writing against the
median solve of the same run; the goals (issue 17) are absolute: the demo's
file within 3 s of the solve, the comparison file under 10 MB. Figures only: nothing here
asserts a time.
"""

from __future__ import annotations

import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

import argparse  # noqa: E402
import re  # noqa: E402
import statistics  # noqa: E402
import tempfile  # noqa: E402
import time  # noqa: E402

import thermo  # noqa: E402
from explorer.export import write_review  # noqa: E402
from explorer.sheet import window_facts  # noqa: E402
from tests.benchmarks.common import code_version  # noqa: E402
from thermo.compare import on_base_window  # noqa: E402

_SCRIPT = re.compile(r"<script(?P<attrs>[^>]*)>(?P<body>.*?)</script\s*>", re.S)


def _timed(fn):
    """(time [s], result) of one call."""
    t = time.perf_counter()
    out = fn()
    return time.perf_counter() - t, out


def _parts(text: str) -> str:
    """The page's size by part [MB]: data block, plotting document, library code, rest."""
    data = doc = lib = 0
    for m in _SCRIPT.finditer(text):
        n = len(m.group("body").encode("utf-8"))
        if 'id="rw-data"' in m.group("attrs"):
            data += n
        elif "Bokeh.embed" in m.group("body")[-4000:] or "docs_json" in m.group("body")[:400]:
            doc += n
        else:
            lib += n
    total = len(text.encode("utf-8"))
    return (f"data {data / 1e6:.2f}, document {doc / 1e6:.2f}, library code {lib / 1e6:.2f}, "
            f"rest {(total - data - doc - lib) / 1e6:.2f}")


def _case(name: str, sc, proposal, repeats: int, out: Path) -> None:
    scenarios = [sc] + ([proposal] if proposal is not None else [])
    path = out / f"{name}.html"
    grids = [thermo.sweep(s) for s in scenarios]  # compile and warm every path once, untimed
    kw = {} if proposal is None else {"proposal": proposal, "proposal_ds": grids[1]}
    write_review(sc, path, grids[0], facts=window_facts(sc, grids[0]), **kw)
    times: dict[str, list[float]] = {"solve": [], "facts": [], "write": []}
    for _ in range(repeats):  # interleaved: solve, facts, write in each repeat
        t, grids = _timed(lambda: [thermo.sweep(s) for s in scenarios])
        times["solve"].append(t)
        t, facts = _timed(lambda g=grids: window_facts(sc, g[0]))
        times["facts"].append(t)
        kw = {} if proposal is None else {"proposal": proposal, "proposal_ds": grids[1]}
        t, _ = _timed(lambda g=grids, f=facts, k=kw: write_review(sc, path, g[0], facts=f, **k))
        times["write"].append(t)
    text = path.read_text("utf-8")
    size = path.stat().st_size / 1e6
    n = sc.window.size()
    times["after"] = [f + w for f, w in zip(times["facts"], times["write"], strict=True)]
    med = {k: statistics.median(v) for k, v in times.items()}
    fast = {k: min(v) for k, v in times.items()}
    print(f"{name}: {n:,} points per window, {len(scenarios)} window(s); median (fastest) of "
          f"{repeats} interleaved repeats")
    print(f"  solve (thermo.sweep)            {med['solve']:6.2f} s ({fast['solve']:.2f})")
    for label, k in (("facts (best point, margins)    ", "facts"),
                     ("writing, given the facts       ", "write"),
                     ("after the solve (facts + write)", "after")):
        print(f"  {label} {med[k]:6.2f} s ({fast[k]:.2f})   "
              f"{med[k] / med['solve']:5.1f}x the solve")
    print("  goal: the demo's file within 3 s after the solve")
    print(f"  file {size:.2f} MB ({_parts(text)})   goal < 10 MB")


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--repeats", type=int, default=3)
    a = ap.parse_args()
    print(code_version())
    sc = thermo.load_scenario(ROOT / "scenarios" / "demo.toml")
    proposal = on_base_window(sc, thermo.load_scenario(ROOT / "scenarios" /
                                                       "demo-proposal.toml"))
    with tempfile.TemporaryDirectory() as tmp:
        _case("demo", sc, None, a.repeats, Path(tmp))
        _case("comparison", sc, proposal, a.repeats, Path(tmp))
        plant = thermo.load_scenario(ROOT / "scenarios" / "hydrogen-plant.toml")
        _case("hydrogen-plant", plant, None, a.repeats, Path(tmp))


if __name__ == "__main__":
    main()
