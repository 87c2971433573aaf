"""Sources are citable from the repository: no file cites notes kept outside it.

A number's source must be a published work in thermo/data/references.toml, a file of this
repository, or "common practice, no source". Design notes that live outside the repository
(the names in OUTSIDE_NOTES) cannot be checked by a reader of the code, so no file of the
package, its tests or its two guides may name them.
"""

from __future__ import annotations

import re
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]

#: Notes outside the repository (spelt in pieces so that this file does not match itself).
OUTSIDE_NOTES = ("DOMAIN", "DESIGN", "SOLVER" + "-NOTES", "STYLE", "BROWSER", "HELPER" + "-RULES")
PATTERN = re.compile(r"\b(" + "|".join(re.escape(n) for n in OUTSIDE_NOTES)
                     + r")(\." + "md\\b| contract)")

#: Text files that can carry a citation.
SUFFIXES = {".py", ".js", ".toml", ".md", ".jinja", ".css", ".html", ".txt", ""}


def _files() -> list[Path]:
    files = [ROOT / "README.md", ROOT / "DEVELOPERS.md", ROOT / ".ci" / "run"]
    for top in ("thermo", "explorer", "tests", "scenarios"):
        files += [p for p in (ROOT / top).rglob("*") if p.is_file() and p.suffix in SUFFIXES
                  and "__pycache__" not in p.parts]
    return [p for p in files if p.is_file()]


def test_pattern_finds_a_citation_of_an_outside_note():
    """The pattern matches the forms such citations took ("X.md", "X contract") and not a
    plain word or an identifier that merely contains one of the names."""
    name = OUTSIDE_NOTES[0]
    assert PATTERN.search(f"# {name}.md: gauge pressure")
    assert PATTERN.search(f"xarray.Dataset ({OUTSIDE_NOTES[1]} contract)")
    assert not PATTERN.search(f"K_EQUALS_ONE_{name} = {{}}")
    assert not PATTERN.search("a design note")


def test_no_file_cites_notes_outside_the_repository():
    """No file of thermo/, explorer/, tests/, scenarios/, .ci/run, README.md or DEVELOPERS.md
    names a note kept outside the repository (each hit is listed as file:line)."""
    files = _files()
    assert len(files) > 50  # the walk found the tree
    hits = []
    for path in files:
        for i, line in enumerate(path.read_text("utf-8", errors="replace").splitlines(), 1):
            if PATTERN.search(line):
                hits.append(f"{path.relative_to(ROOT)}:{i}: {line.strip()}")
    assert hits == []
