"""Browser app, static review export and command line of the reformer window explorer."""

from __future__ import annotations

CAUTION = (
    "Equilibrium is a thermodynamic bound, not a reactor design. The carbon verdict checks "
    "the equilibrated gas along the tube and the real gas at the catalyst temperature; it does "
    "not cover cracking kinetics, tube walls hotter than the gas or a poisoned catalyst. "
    "Reformers run at high "
    "temperature and pressure with flammable hydrogen and toxic carbon monoxide. These results "
    "are for screening and review; final designs follow local codes and licensed engineering "
    "practice."
)

#: The caution's one line at the top of the page (the whole text is at its foot).
CAUTION_SHORT = (
    "Equilibrium screening, not a reactor design; hot, pressurized, flammable H2 and toxic "
    "CO. Final designs follow local codes and licensed engineering practice (full text at "
    "the foot)."
)
