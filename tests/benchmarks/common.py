"""What every benchmark prints about the code it measured."""

from __future__ import annotations

import subprocess
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]


def code_version() -> str:
    """The commit measured, and whether thermo/ or explorer/ differ from it (read-only git)."""
    try:
        head = subprocess.run(["git", "rev-parse", "--short", "HEAD"], cwd=ROOT,
                              capture_output=True, text=True, timeout=10).stdout.strip()
        dirty = subprocess.run(["git", "status", "--porcelain", "--", "thermo", "explorer"],
                               cwd=ROOT, capture_output=True, text=True,
                               timeout=10).stdout.strip()
    except (OSError, subprocess.SubprocessError):
        return "unknown (no git)"
    return f"commit {head}" + (" + uncommitted changes in thermo/ or explorer/" if dirty else "")
