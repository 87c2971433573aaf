"""Browser app, static review export and command line of the reformer window explorer."""

from __future__ import annotations

CAUTION = (
    "Equilibrium is a thermodynamic bound, not a reactor design. Reformers run at high "
    "temperature and pressure with flammable hydrogen and toxic carbon monoxide. These results "
    "are for screening and review; final designs follow local codes and licensed engineering "
    "practice."
)
