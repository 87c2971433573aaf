"""The one-way architecture: the core imports no UI, the export imports no Panel."""

from __future__ import annotations

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

    from explorer import export

    js = (Path(__file__).resolve().parents[1] / "explorer" / "review.js").read_text("utf-8")
    assert "R.conversions[" in js
    assert "display.conversions(units)" in inspect.getsource(export._page_data)
