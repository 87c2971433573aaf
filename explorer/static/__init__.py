"""Style sheets, templates and the review file's scripts, as files; read once and inlined
where used (no module holds script or style text: tests/test_layering.py)."""

from __future__ import annotations

from importlib import resources


def static_text(name: str) -> str:
    """The text of a file in this folder."""
    return resources.files(__name__).joinpath(name).read_text("utf-8")


#: The app's table and message styles (tables match the review file's).
PAGE_CSS = static_text("app.css")
#: The caution box.
CAUTION_CSS = static_text("caution.css")
#: Section headings.
SECTION_CSS = static_text("section.css")
