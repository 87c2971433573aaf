"""The one-way architecture: the core imports no UI, the export imports no Panel, and no
product module holds script or style text."""

from __future__ import annotations

import ast
import re
import subprocess
import sys
from pathlib import Path


def _loaded(code: str, modules: tuple[str, ...]) -> list[str]:
    probe = f"{code}\nimport sys\nprint(','.join(m for m in {modules!r} if m in sys.modules))"
    proc = subprocess.run([sys.executable, "-c", probe], capture_output=True, text=True,
                          timeout=120)
    assert proc.returncode == 0, proc.stderr
    return [m for m in proc.stdout.strip().split(",") if m]


def test_core_imports_no_user_interface():
    """Importing and using thermo (point, sweep) loads none of panel, holoviews, bokeh or
    explorer."""
    code = "import thermo, thermo.io, thermo.extent; thermo.point(); thermo.sweep"
    assert _loaded(code, ("panel", "holoviews", "bokeh", "explorer")) == []


def test_review_export_imports_no_panel():
    """Importing explorer.export and explorer.cli does not load panel."""
    # Panel's loaded extensions would add CDN links to the "inline" review file.
    assert _loaded("import explorer.export, explorer.cli", ("panel",)) == []


# SI-to-display arithmetic that belongs in explorer/display.py only: degC offsets, bar, MW,
# kmol/h and kg/h factors, normal volumes, kJ, degF and psi. (Fractions shown as % are
# multiplied by 100 where they are shown; that is not a unit system's business.)
_INLINE_CONVERSION = re.compile(
    r"273\.15|459\.67|6894\.7|0\.45359237|1055\.05|/ ?1e[356]\b|\* ?1e-[356]\b|\* ?3\.6\b"
    r"|\* ?3600\b|V_NORMAL|\s/ ?1000\b|\* ?1\.8\b")
#: Lines that match but convert nothing shown of a quantity: a file size in MB.
_NOT_A_QUANTITY = ("st_size",)


def test_no_inline_si_to_display_arithmetic_outside_the_display_layer():
    """Every conversion from SI to what is shown goes through explorer/display.py: no other
    product module of explorer/ (Python, the review file's script, the templates) holds a
    conversion factor or offset of its own."""
    root = Path(__file__).resolve().parents[1] / "explorer"
    files = [p for p in root.rglob("*") if p.suffix in (".py", ".js", ".jinja")
             and p.name != "display.py"]
    assert any(p.name == "review.js" for p in files)
    found = []
    for path in files:
        for n, line in enumerate(path.read_text("utf-8").splitlines(), 1):
            if _INLINE_CONVERSION.search(line) and not any(w in line for w in _NOT_A_QUANTITY):
                found.append(f"{path.relative_to(root.parent)}:{n}: {line.strip()}")
    assert not found, "\n".join(found)


def test_review_script_takes_its_factors_from_the_display_layer():
    """review.js converts only with R.conversions, which explorer.export fills from
    explorer.display.conversions (one set of factors for the page and the app)."""
    import inspect

    from explorer import review_data

    static = Path(__file__).resolve().parents[1] / "explorer" / "static"
    js = (static / "review.js").read_text("utf-8")
    assert "R.conversions[" in js
    assert "display.conversions(units)" in inspect.getsource(review_data.page_data)
# Script and style text in a Python string literal (the patterns of this repository's own
# JavaScript and CSS; prose about them, e.g. "the review.js script", does not match).
_JS = re.compile(r"\b(?:const|let|var)\s+[\w\[\]{}, ]+\s*=[^=]|\bfunction\s*\w*\s*\([^)]*\)\s*\{"
                 r"|\)\s*=>|\breturn\b[^\n]*;|\bfor\s*\((?:const|let)\b"
                 r"|\bdocument\.(?:getElementById|querySelector|createElement)"
                 r"|\bconsole\.log\(|\bMath\.\w+\(")
_CSS = re.compile(r"[\w\-.#:\[\] >*,]+\{\s*[\w-]+\s*:\s*[^{};]+;[^{}]*\}|@media\b|@import\b"
                  r"|@font-face\b")
_ROOT = Path(__file__).resolve().parents[1]
_STATIC = _ROOT / "explorer" / "static"


def _script_or_style(text: str) -> str | None:
    """The first stretch of `text` that reads as JavaScript or CSS, or None."""
    for rx in (_JS, _CSS):
        m = rx.search(text)
        if m:
            return m.group(0)
    return None


def test_the_detector_finds_the_static_scripts_and_styles():
    """The check below can fail: every script and style sheet under explorer/static/ trips
    it, and a docstring that only names them does not."""
    files = sorted(_STATIC.glob("*.js")) + sorted(_STATIC.glob("*.css"))
    assert len(files) >= 4
    for f in files:
        assert _script_or_style(f.read_text("utf-8")), f.name
    assert _script_or_style("The page's script (static/review.js) swaps the layers; styles "
                            "come from review.css.") is None


def test_no_product_module_holds_javascript_or_css():
    """JavaScript and CSS live as files in explorer/static/ (inlined when a page is
    written), never as string literals of a thermo/ or explorer/ module."""
    found = []
    for pkg in ("thermo", "explorer"):
        for path in sorted((_ROOT / pkg).rglob("*.py")):
            tree = ast.parse(path.read_text("utf-8"))
            for node in ast.walk(tree):
                if isinstance(node, ast.Constant) and isinstance(node.value, str):
                    hit = _script_or_style(node.value)
                    if hit:
                        found.append(f"{path.relative_to(_ROOT)}:{node.lineno}: {hit[:60]!r}")
    assert not found, "\n".join(found)
