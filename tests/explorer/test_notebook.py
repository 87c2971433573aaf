"""The notebook route: the page's components rendered through Panel's notebook display path,
without a browser.

1. In a clean Python process: ``pn.extension()`` and the page's ``_repr_mimebundle_``, as
   Jupyter calls it for a cell's last value.
2. The README's inline-notebook snippet, exactly as written there, in a real IPython kernel
   (ipykernel through jupyter_client, on loopback): the cell's result must be Panel's bundle
   with the same page.

Both read the Bokeh document out of the bundle and check that it holds the explorer's page:
the scenario's title, the answer first (the summary with the feasible temperatures of the
design row, in degC) and both maps over the window's temperatures.
"""

from __future__ import annotations

import json
import os
import re
import subprocess
import sys
from html import escape, unescape
from pathlib import Path

import pytest

import thermo
from explorer.sheet import design_row_ranges

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "scenarios" / "demo.toml"
NOTEBOOK_MIME = "application/vnd.holoviews_exec.v0+json"


def readme_snippet() -> str:
    """The README's notebook snippet, as a user would paste it into a cell."""
    text = (ROOT / "README.md").read_text("utf-8")
    m = re.search(r"In a Jupyter notebook.*?`(import panel as pn;.*?)`\s+shows", text, re.S)
    assert m, "README.md has no inline-notebook snippet"
    code = m.group(1)
    # The inline code is cut over two lines in the README: ";\n" reads as "; ".
    return re.sub(r";\s+", "; ", code.replace("\n", " "))


def documents(html: str) -> list[dict]:
    """The Bokeh documents embedded in a notebook bundle's HTML."""
    m = re.search(r"var docs_json = (\{.*?\});\n", html, re.S)
    assert m, "no Bokeh document in the bundle"
    return list(json.loads(m.group(1)).values())


def walk(value):
    """Every serialized Bokeh object in a document (depth first)."""
    if isinstance(value, dict):
        if value.get("type") == "object":
            yield value
        for v in value.values():
            yield from walk(v)
    elif isinstance(value, list):
        for v in value:
            yield from walk(v)


def check_page(bundle: dict, meta: dict | None) -> None:
    """The bundle shows the explorer page of the demo scenario."""
    assert NOTEBOOK_MIME in bundle and "text/html" in bundle
    (doc,) = documents(bundle["text/html"])
    # The page is the root the notebook output names (the others are Panel's own).
    root_id = (meta or {}).get(NOTEBOOK_MIME, {}).get("id") or doc["roots"][0]["id"]
    (root,) = [r for r in doc["roots"] if r["id"] == root_id]
    objects = list(walk(root))
    # Panel's HTML panes carry their markup escaped once more: undo that to read it.
    texts = unescape(" ".join(str(o["attributes"].get("text", "")) for o in objects
                              if "attributes" in o))
    sc = thermo.load_scenario(DEMO)
    assert escape(sc.title) in texts
    # The answer first: the feasible temperatures of the design row, as the grid has them.
    words, p_bar, _ = design_row_ranges(thermo.sweep(sc), sc)
    assert "Feasible outlet temperature" in texts and f"{words}</b> degC" in texts
    # Both maps, over the window's temperatures [degC].
    axis = sc.window.axes()["temperature"]
    figures = {o["attributes"]["name"]: o for o in objects
               if o.get("name") == "Figure" and "name" in o.get("attributes", {})}
    assert {"map-0", "map-1"} <= set(figures)
    x = figures["map-0"]["attributes"]["x_range"]["attributes"]
    assert x["start"] == pytest.approx(axis.start - 273.15)
    assert x["end"] == pytest.approx(axis.stop - 273.15)


RENDER = f"""
import json, sys
import panel as pn
pn.extension()
from explorer.app import build_app
page = build_app({str(DEMO)!r}, solve="now")
bundle, meta = page._repr_mimebundle_()
json.dump({{"bundle": bundle, "meta": meta}}, sys.stdout)
"""


def _env() -> dict:
    return {**os.environ, "PYTHONPATH": str(ROOT) + os.pathsep + os.environ.get("PYTHONPATH",
                                                                               "")}


def test_page_renders_through_panels_notebook_display_path():
    pytest.importorskip("panel")
    proc = subprocess.run([sys.executable, "-c", RENDER], capture_output=True, text=True,
                          cwd=ROOT, env=_env(), timeout=300)
    assert proc.returncode == 0, proc.stderr[-2000:]
    out = json.loads(proc.stdout)
    check_page(out["bundle"], out["meta"])


def test_readme_notebook_snippet_works_in_a_kernel(tmp_path):
    pytest.importorskip("ipykernel")
    manager = pytest.importorskip("jupyter_client.manager")
    # Local sockets in a temporary folder: nothing listens on the network.
    km = manager.KernelManager(transport="ipc", ip=str(tmp_path / "kernel"))
    km.start_kernel(cwd=str(ROOT), env=_env())
    kc = km.client()
    kc.start_channels()
    try:
        kc.wait_for_ready(timeout=120)
        msg_id = kc.execute(readme_snippet())
        results, errors = [], []
        while True:
            msg = kc.get_iopub_msg(timeout=300)
            if msg["parent_header"].get("msg_id") != msg_id:
                continue
            kind, content = msg["msg_type"], msg["content"]
            if kind == "execute_result":  # the cell's value (pn.extension displays its own)
                results.append(content)
            elif kind == "error":
                errors.append(f"{content['ename']}: {content['evalue']}")
            elif kind == "status" and content["execution_state"] == "idle":
                break
    finally:
        kc.stop_channels()
        km.shutdown_kernel(now=True)
    assert errors == []
    pages = [r for r in results if NOTEBOOK_MIME in r["data"]]
    assert len(pages) == 1, [sorted(r["data"]) for r in results]
    check_page(pages[0]["data"], pages[0].get("metadata"))
