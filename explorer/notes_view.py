"""The pinned points and the review notes sections of the page (split from explorer.views).
"""

from __future__ import annotations

import io as _io
import json
import subprocess
import sys
import tempfile
from pathlib import Path

import panel as pn

from explorer.form import _message_pane
from explorer.safe import html
from explorer.state import ExplorerState
from explorer.static import PAGE_CSS
from explorer.tables import (
    comparison_html,
)

#: Map heights [px]: both maps on the first screen at 1366 x 768; taller when presenting.
from thermo import io as grid_io


class PinnedView:
    """Pinned points side by side."""

    def __init__(self, state: ExplorerState):
        self.state = state
        self.table = pn.pane.HTML("", stylesheets=[PAGE_CSS], sizing_mode="stretch_width")
        self.clear = pn.widgets.Button(label="Clear pinned points")
        self.clear.on_click(lambda e: state.clear_pins())
        state.param.watch(self._update, ["pinned", "units"])
        self._update()

    def _update(self, *_):
        self.table.object = comparison_html(self.state.pinned, self.state.units)

    def __panel__(self):
        return pn.Column(self.table, self.clear)


class NotesView:
    """Review notes, kept with the scenario and saved in its file."""

    def __init__(self, state: ExplorerState):
        self.state = state
        self.text = pn.widgets.TextAreaInput(
            value=state.notes, placeholder="Findings, decisions, open questions ...",
            height=140, sizing_mode="stretch_width")
        self.text.link(state, value="notes")
        state.param.watch(lambda e: setattr(self.text, "value", e.new), ["notes"])
        self.save = pn.widgets.FileDownload(callback=self._scenario, filename="scenario.toml",
                                            label="Scenario with notes (TOML)",
                                            color="light")
        self.export = pn.widgets.FileDownload(callback=self._review, filename="review.html",
                                              label="Review file (offline HTML)",
                                              color="primary")
        self.message = _message_pane()

    def _scenario(self):
        return _io.StringIO(self.state.scenario_with_notes().to_toml())

    def _review(self):
        """The review file, written by a fresh process (see explorer.export)."""
        s = self.state
        if s.dataset is None:
            self.message.object = "The window is still being solved; export when it is done."
            return _io.BytesIO(b"")
        with tempfile.TemporaryDirectory() as tmp:
            folder = Path(tmp)
            (folder / "scenario.toml").write_text(s.scenario_with_notes().to_toml(), "utf-8")
            grid_io.save(s.dataset, folder / "grid.nc")
            (folder / "pinned.json").write_text(json.dumps(s.pinned, allow_nan=False), "utf-8")
            out = folder / "review.html"
            extra = []
            if s.proposal is not None and s.proposal_dataset is not None:
                # The comparison goes into the file as well.
                (folder / "proposal.toml").write_text(s.proposal.to_toml(), "utf-8")
                grid_io.save(s.proposal_dataset, folder / "proposal.nc")
                extra = ["--compare", str(folder / "proposal.toml"), "--compare-grid",
                         str(folder / "proposal.nc")]
            proc = subprocess.run(
                [sys.executable, "-m", "explorer.export", "--scenario",
                 str(folder / "scenario.toml"), "--grid", str(folder / "grid.nc"),
                 "--pinned", str(folder / "pinned.json"), *extra, "--units", s.units,
                 "-o", str(out)],
                capture_output=True, text=True, timeout=600)
            if proc.returncode != 0 or not out.exists():
                last = (proc.stderr.strip().splitlines() or ["unknown error"])[-1]
                self.message.object = html("The review file could not be written: {}",
                                           last)
                return _io.BytesIO(b"")
            self.message.object = ""
            return _io.BytesIO(out.read_bytes())

    def __panel__(self):
        return pn.Column(self.text, pn.Row(self.save, self.export), self.message)


