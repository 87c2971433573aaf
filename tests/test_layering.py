"""The one-way architecture: the core imports no UI, the export imports no Panel."""

from __future__ import annotations

import subprocess
import sys


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
