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
