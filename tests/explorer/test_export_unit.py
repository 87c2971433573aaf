"""The review export's pure parts, its command line in a fresh process, and its atomic write.

Panel is imported by other tests of this session, and once it is imported Bokeh adds CDN links
even to an "inline" file (see the explorer.export docstring); so the whole page is built only
in a subprocess (`python -m explorer.export`), and in this process only the functions that do
not render a Bokeh document are called.

Where the numbers come from: the demo and small windows are scenarios/demo.toml and
tests/explorer/helpers.py (SMALL_WINDOW); the crafted temperature, pressure, ratio and mask
values are test inputs picked for these tests (common practice, no source); the 10 MB ceiling
of the demo review file is the issue's limit.
"""

from __future__ import annotations

import json
import os
import re
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest
import xarray as xr
from markupsafe import escape

import thermo
from explorer import CAUTION
from explorer import export as export_module
from explorer.export import check_offline, write_review
from explorer.sheet import _ranges_text, feasible_ranges_html, review_sheet_html
from explorer.tables import balance_html
from tests.explorer.helpers import small_scenario, table_cells
from thermo.scenario import DEMO_PATH
from thermo.sweep import window_axes

#: Size ceiling of the review file of the demo window [bytes] (the issue's limit, 10 MB).
MAX_REVIEW_BYTES = 10_000_000
#: Longest run of one export process [s] (common practice, no source).
EXPORT_TIMEOUT = 300

ROOT = Path(__file__).resolve().parents[2]


def run_export(*args: str) -> subprocess.CompletedProcess:
    return subprocess.run([sys.executable, "-m", "explorer.export", *args], cwd=ROOT,
                          capture_output=True, text=True, timeout=EXPORT_TIMEOUT)


def page_data(text: str) -> dict:
    m = re.search(r'<script type="application/json" id="rw-data">(.*?)</script>', text, re.S)
    assert m, "no rw-data block in the page"
    return json.loads(m.group(1))


# ------------------------------------------------------------------------ check_offline
@pytest.mark.parametrize("page", [
    '<html><head><link rel="stylesheet" href="https://cdn.example.org/bokeh.css"></head></html>',
    '<html><body><script src="//cdn.example.org/bokeh.min.js"></script></body></html>',
    '<html><body><img SRC="HTTP://example.org/logo.png"></body></html>',
    '<html><head><link rel="icon" href="  https://example.org/favicon.ico"></head></html>',
])
def test_check_offline_refuses_network_links(page):
    """check_offline raises on each page that links a networked script, stylesheet or image."""
    with pytest.raises(RuntimeError, match="network resources"):
        check_offline(page)


def test_check_offline_accepts_data_uris_urls_in_script_text_and_local_anchors():
    """check_offline accepts data: URIs, URLs inside script text and local anchors (no
    exception)."""
    page = """<html><head>
<link rel="icon" href="data:image/png;base64,iVBORw0KGgo=">
<script type="text/javascript">
  const mathjax = "https://cdn.jsdelivr.net/npm/mathjax@3/es5/tex-chtml.js";
  const other = '<script src="https://example.org/x.js"></' + 'script>';
</script>
<style>.a { color: red; }</style>
</head><body><a href="#maps">maps</a><img src="data:image/svg+xml;utf8,<svg/>"></body></html>"""
    check_offline(page)  # no exception


def test_check_offline_counts_every_link():
    """check_offline's message counts every networked link (3 here)."""
    page = ('<script src="https://a.example/1.js"></script>'
            '<script src="https://a.example/2.js"></script>'
            '<link href="//b.example/3.css">')
    with pytest.raises(RuntimeError, match=r"request 3 network resources"):
        check_offline(page)


# ------------------------------------------------------------------ feasible ranges text
@pytest.mark.parametrize("mask, expected", [
    ([False, True, True, False, True], "750-800, 900"),
    ([False] * 5, "none"),
    ([True] * 5, "700-900"),
    ([True, False, True, False, True], "700, 800, 900"),
    ([False, False, False, True, True], "850-900"),
    ([True, True, False, False, False], "700-750"),
])
def test_ranges_text(mask, expected):
    """_ranges_text writes each feasible mask over 700-900 degC as the expected ranges text."""
    T = np.array([700.0, 750.0, 800.0, 850.0, 900.0])
    assert _ranges_text(T, np.array(mask)) == expected


def crafted_dataset(extra: dict | None = None) -> xr.Dataset:
    """A 5 x 2 x 2 Dataset (T, P, S/C) with a feasible mask chosen per (S/C, P)."""
    T = np.array([700.0, 750.0, 800.0, 850.0, 900.0]) + 273.15
    P = np.array([10e5, 20e5])
    S = np.array([2.0, 3.0])
    feas = np.zeros((5, 2, 2), dtype=bool)
    feas[:, 0, 0] = [False, True, True, False, True]   # 10 bar, S/C 2
    feas[:, 1, 0] = [False] * 5                        # 20 bar, S/C 2
    feas[:, 0, 1] = [True] * 5                         # 10 bar, S/C 3
    feas[:, 1, 1] = [False, False, False, False, True]  # 20 bar, S/C 3
    coords = {"temperature": T, "pressure": P, "steam_to_carbon": S}
    dims = ["temperature", "pressure", "steam_to_carbon"]
    if extra:
        (name, values), = extra.items()
        coords[name] = np.asarray(values)
        dims.append(name)
        feas = np.stack([feas, ~feas], axis=-1)
    return xr.Dataset({"feasible": (dims, feas)}, coords=coords)


def test_feasible_ranges_table_of_a_crafted_window():
    """feasible_ranges_html of a crafted 2 x 2 window gives exactly the expected table of ranges
    per S/C and pressure."""
    rows = table_cells(feasible_ranges_html(crafted_dataset()))
    assert rows == [
        ["S/C \\ P [bar abs]", "10.0", "20.0"],
        ["2", "750-800, 900", "none"],
        ["3", "700-900", "900"],
    ]


def test_feasible_ranges_with_a_cofeed_axis_has_one_table_per_value():
    """With a co-feed axis there is one table per co-feed value, each headed by its value, the
    second holding the crafted complement mask's ranges."""
    text = feasible_ranges_html(crafted_dataset({"co2_to_carbon": [0.0, 0.5]}))
    assert text.count("<table") == 2
    assert "<b>CO2-to-carbon 0</b>" in text and "<b>CO2-to-carbon 0.5</b>" in text
    rows = table_cells(text)
    # second table: the complement of the first mask
    assert rows[3:] == [
        ["S/C \\ P [bar abs]", "10.0", "20.0"],
        ["2", "700, 850", "700-900"],
        ["3", "none", "700-850"],
    ]


# ------------------------------------------------------------------------ review sheet
@pytest.fixture(scope="module")
def solved():
    note = 'Agreed with operations.\n<script>alert("x")</script> & check the TMT margin'
    sc = small_scenario().with_notes(note)
    ds = thermo.sweep(sc)
    pinned = [thermo.point(sc, temperature="850 degC", pressure="20 bar",
                           steam_to_carbon=3.0).to_dict(),
              thermo.point(sc, temperature="750 degC", pressure="30 bar",
                           steam_to_carbon=2.0).to_dict()]
    return sc, ds, pinned


def test_review_sheet_holds_inputs_limits_window_pins_notes_sources_cautions(solved):
    """The review sheet shows the scenario's feed, window and limits as formatted values, the
    feasible count and ranges, each pinned point with its balance, the notes and scenario text
    escaped, the data sources and the caution."""
    sc, ds, pinned = solved
    sheet = review_sheet_html(sc, ds, pinned)
    cells = table_cells(sheet)
    pairs = {r[0]: r[1] for r in cells if len(r) == 2}
    # inputs, from the scenario (demo.toml: CH4 0.9310, 1100 kmol/h, 540 degC)
    comp = pairs["Dry feed composition (mol)"]
    for species, x in sc.feed.composition.items():
        assert f"{species} {x * 100:.3g} %" in comp
    assert pairs["Dry feed flow"].startswith(f"{sc.feed.flow * 3.6:,.2f} kmol/h")
    assert pairs["Feed inlet temperature"] == f"{sc.feed.inlet_temperature - 273.15:.1f} degC"
    assert pairs["Window: Outlet temperature"] == "700 to 950 degC, 6 points"
    # limits (demo.toml: 4.5 mol % slip, carbon-free, 2.3 H2 yield, 80 MW)
    assert pairs["Maximum methane slip (dry)"] == "4.5 mol %"
    assert pairs["Carbon-free"] == "required"
    assert pairs["Minimum H2 yield"] == "2.3 mol H2 / mol hydrocarbon C"
    assert pairs["Maximum duty (primary reformer, radiant)"] == "80 MW"
    # resulting window
    n_ok, n_all = int(ds["feasible"].sum()), ds["feasible"].size
    assert f"{n_ok:,} of {n_all:,} grid points meet every limit" in sheet
    assert feasible_ranges_html(ds) in sheet
    # pinned points with their balances
    for i, d in enumerate(pinned):
        assert (f"#{i + 1}: {d['temperature_K'] - 273.15:.1f} degC, "
                f"{d['pressure_Pa'] / 1e5:.3f} bar abs") in sheet
        assert balance_html(d) in sheet
    # notes, escaped
    assert "<script>" not in sheet
    assert escape(sc.notes) in sheet
    assert "&lt;script&gt;alert(&#34;x&#34;)&lt;/script&gt; &amp; check" in sheet
    # data sources and cautions
    sources = ds.attrs["data_sources"]
    assert sources and escape(sources) in sheet
    assert "GRI" in sources
    assert escape(CAUTION) in sheet
    # the scenario file itself, escaped
    assert escape(sc.to_toml()) in sheet


def test_review_sheet_without_pins_or_notes(solved):
    """Without pins or notes the sheet says 'None pinned.' and '(none)'."""
    sc, ds, _ = solved
    sheet = review_sheet_html(sc.with_notes(""), ds, [])
    assert "<p>None pinned.</p>" in sheet
    assert '<div class="rw-notes">(none)</div>' in sheet


# ---------------------------------------------------------------- command line, subprocess
def test_export_of_the_demo_window_is_offline_small_and_embeds_the_axes(tmp_path):
    """Exporting the demo writes one offline file below MAX_REVIEW_BYTES whose embedded axes and
    shape (26 x 13 x 17) are the demo window's, with no temporary file left."""
    out = tmp_path / "out.html"
    proc = run_export("--scenario", str(DEMO_PATH), "-o", str(out))
    assert proc.returncode == 0, proc.stderr
    assert out.is_file()
    text = out.read_text("utf-8")
    check_offline(text)
    size = out.stat().st_size
    assert size < MAX_REVIEW_BYTES, f"{size:,} bytes"
    sc = thermo.load_scenario(DEMO_PATH)
    R = page_data(text)
    axes = window_axes(sc)
    assert R["dims"] == list(axes)
    assert R["shape"] == [len(v) for v in axes.values()] == [26, 13, 17]  # demo.toml window
    for d, v in axes.items():
        assert R["axes"][d] == v.tolist()
    assert list(tmp_path.iterdir()) == [out]  # no temporary file left behind


def test_export_with_grid_and_pins_embeds_that_grid(tmp_path, solved):
    """Exporting with --grid and --pinned embeds that grid's axes and shape, the pinned point's
    balance and the notes, offline."""
    sc, ds, pinned = solved
    (tmp_path / "s.toml").write_text(sc.to_toml(), "utf-8")
    thermo.io.save(ds, tmp_path / "g.nc")
    (tmp_path / "p.json").write_text(json.dumps(pinned), "utf-8")
    out = tmp_path / "review.html"
    proc = run_export("--scenario", str(tmp_path / "s.toml"), "--grid", str(tmp_path / "g.nc"),
                      "--pinned", str(tmp_path / "p.json"), "-o", str(out))
    assert proc.returncode == 0, proc.stderr
    text = out.read_text("utf-8")
    check_offline(text)
    R = page_data(text)
    for d in ("temperature", "pressure", "steam_to_carbon"):
        assert R["axes"][d] == ds[d].values.tolist()
    assert R["shape"] == list(ds["h2_yield"].shape)
    assert balance_html(pinned[0]) in text
    assert escape(sc.notes) in text


def test_export_with_a_missing_scenario_file_exits_2_with_one_line(tmp_path):
    """A missing scenario file exits 2 with one error line naming it, no traceback and no output
    file."""
    missing = tmp_path / "no-such-scenario.toml"
    out = tmp_path / "out.html"
    proc = run_export("--scenario", str(missing), "-o", str(out))
    assert proc.returncode == 2
    lines = proc.stderr.strip().splitlines()
    assert len(lines) == 1, proc.stderr
    assert lines[0].startswith("explorer: error:") and str(missing) in lines[0]
    assert "Traceback" not in proc.stderr
    assert not out.exists()


def test_export_into_a_missing_folder_exits_2(tmp_path):
    """An output in a missing folder exits 2 with one error line, and the folder is not created."""
    out = tmp_path / "no-such-folder" / "out.html"
    proc = run_export("--scenario", str(DEMO_PATH), "-o", str(out))
    assert proc.returncode == 2
    assert len(proc.stderr.strip().splitlines()) == 1, proc.stderr
    assert not out.parent.exists()


# ------------------------------------------------------------------ atomic write, in-process
OLD = "<html><body>the previous review</body></html>"


@pytest.fixture
def previous(tmp_path):
    path = tmp_path / "review.html"
    path.write_text(OLD, "utf-8")
    return path


def leftovers(folder: Path, keep: Path) -> list[Path]:
    return [p for p in folder.iterdir() if p != keep]


def test_failed_build_keeps_the_previous_file(previous, monkeypatch):
    """A failure while building the page leaves the previous review file unchanged and no
    temporary file."""
    def boom(*args, **kwargs):
        raise RuntimeError("simulated failure while building the page")

    monkeypatch.setattr(export_module, "build_review", boom)
    with pytest.raises(RuntimeError, match="simulated failure"):
        write_review(small_scenario(), previous, ds=object(), pinned=[])
    assert previous.read_text("utf-8") == OLD
    assert leftovers(previous.parent, previous) == []


def test_failure_after_the_temporary_file_is_written_keeps_the_previous_file(previous,
                                                                            monkeypatch):
    """A failure at the rename, after the new page was written to a .part file beside it, leaves
    the previous file unchanged and no temporary file."""
    seen = []

    def publish_fails(tmp, path):
        seen.append(Path(tmp))
        assert Path(tmp).read_text("utf-8") == "<html><body>new</body></html>"
        raise OSError("simulated failure while renaming")

    monkeypatch.setattr(export_module, "build_review",
                        lambda sc, ds, pinned, *_, **__: "<html><body>new</body></html>")
    import thermo.io

    monkeypatch.setattr(thermo.io, "publish", publish_fails)
    with pytest.raises(OSError, match="simulated failure"):
        write_review(small_scenario(), previous, ds=object(), pinned=[])
    assert seen and seen[0].name.endswith(".part") and seen[0].parent == previous.parent
    assert previous.read_text("utf-8") == OLD
    assert leftovers(previous.parent, previous) == []


def test_page_with_network_links_is_not_written(previous, monkeypatch):
    """A built page with a network link is refused and the previous file stays, with no temporary
    file."""
    monkeypatch.setattr(export_module, "build_review",
                        lambda sc, ds, pinned, *_, **__: '<script src="https://cdn.example.org/x.js">')
    with pytest.raises(RuntimeError, match="network"):
        write_review(small_scenario(), previous, ds=object(), pinned=[])
    assert previous.read_text("utf-8") == OLD
    assert leftovers(previous.parent, previous) == []


def test_successful_write_replaces_the_file_with_normal_permissions(previous, monkeypatch):
    """A successful write replaces the file's content, leaves no temporary file, and gives the
    mode a new file gets under the umask."""
    new = "<html><body>the new review</body></html>"
    monkeypatch.setattr(export_module, "build_review", lambda sc, ds, pinned, *_, **__: new)
    assert write_review(small_scenario(), previous, ds=object(), pinned=[]) == previous
    assert previous.read_text("utf-8") == new
    assert leftovers(previous.parent, previous) == []
    umask = os.umask(0)
    os.umask(umask)
    # thermo.io.publish: what the umask gives a new file (0o666 is the POSIX default mode)
    assert previous.stat().st_mode & 0o777 == 0o666 & ~umask


# ------------------------------------------------------------------------- reforming train
def test_train_scenario_file_maps_the_train_and_lists_its_stages(tmp_path):
    """A scenario with a train: its variables join the chooser, the sheet lists every stage
    and a pinned point's train rows; the shipped ammonia scenario (invented data)."""
    from explorer.tables import comparison_html

    sc = thermo.load_scenario(ROOT / "scenarios" / "ammonia-front-end.toml")
    pinned = [thermo.point(sc).to_dict()]
    (tmp_path / "p.json").write_text(json.dumps(pinned), "utf-8")
    out = tmp_path / "ammonia.html"
    proc = run_export("--scenario", str(ROOT / "scenarios" / "ammonia-front-end.toml"),
                      "--pinned", str(tmp_path / "p.json"), "-o", str(out))
    assert proc.returncode == 0, proc.stderr
    text = out.read_text("utf-8")
    R = page_data(text)
    for v in export_module.TRAIN_EXPORT_VARIABLES:
        assert v in R["layers"] and v in R["titles"]
    assert [s["name"] for s in R["train"]["stages"]] == sc.train.stages()
    sheet = table_cells(text[text.index("Review sheet"):])
    rows = {r[0]: r[1] for r in sheet if len(r) == 2}
    assert rows["Secondary reformer (adiabatic)"] == "air, O2/C 0.27 at 550.0 degC; approach 5 K"
    assert rows["High-temperature shift"] == "370.0 degC; approach 10 K"
    assert rows["Low-temperature shift"] == "210.0 degC; approach 10 K"
    assert "Reforming train" in rows
    # Pinned points side by side carry the train's totals.
    cmp_rows = {r[0]: r for r in table_cells(comparison_html(pinned))}
    assert cmp_rows["H2 product after the last stage"][2] == \
        f"{pinned[0]['train']['h2_product']:,.4f}"
    # The demo (no train) keeps its chooser.
    assert thermo.load_scenario().train.empty
