"""Load published reference values from ``tests/references/*.toml`` and compare with them.

One record per value, as a ``[[point]]`` table::

    [[point]]
    source = "JANAF1998"                 # bibliography key (thermo/data/references.toml)
    where = "JANAF table C-095 ..., row T = 1000 K, column S"
    subject = "CO2"                      # optional: species or reaction the value belongs to
    quantity = "S"
    T_K = 1000.0
    value = 269.299
    units = "J mol-1 K-1"
    tol_abs = 0.03                       # or tol_rel; exactly one of the two
    tol_why = "printed to 0.001; ..."

Other top-level tables of a file (for example ``[[skipped]]`` notes) are read by
:func:`load_extra`, never as reference points.
"""

from __future__ import annotations

import math
import tomllib
from dataclasses import dataclass
from pathlib import Path

REFERENCE_DIR = Path(__file__).resolve().parent / "references"

_REQUIRED = ("source", "where", "quantity", "T_K", "value", "units", "tol_why")
_OPTIONAL = ("subject", "tol_abs", "tol_rel", "note")


@dataclass(frozen=True)
class Reference:
    """One published value with its source and the tolerance a check may allow."""

    source: str
    where: str
    quantity: str
    T_K: float
    value: float
    units: str
    tol_why: str
    subject: str = ""
    tol_abs: float | None = None
    tol_rel: float | None = None
    note: str = ""
    file: str = ""

    @property
    def tolerance(self) -> float:
        """Allowed absolute difference [units of the value]."""
        if self.tol_abs is not None:
            return self.tol_abs
        return self.tol_rel * abs(self.value)

    def describe(self) -> str:
        """Source, table/row, value and tolerance in one line, for failure messages."""
        tol = f"+-{self.tol_abs:g}" if self.tol_abs is not None else f"+-{self.tol_rel:g} rel"
        subject = f"{self.subject} " if self.subject else ""
        return (
            f"{subject}{self.quantity} at {self.T_K:g} K = {self.value:g} [{self.units}] "
            f"{tol} [{self.source}: {self.where}] (tolerance: {self.tol_why})"
        )


def _read(name: str) -> dict:
    path = REFERENCE_DIR / name
    with path.open("rb") as f:
        return tomllib.load(f)


def load_refs(name: str, **match: str) -> list[Reference]:
    """All ``[[point]]`` records of ``tests/references/<name>``, optionally filtered.

    Parameters
    ----------
    name : str
        File name inside ``tests/references``.
    **match : str
        Keep only records whose fields equal these values, e.g. ``quantity="S"``.

    Raises
    ------
    ValueError
        A record lacks a required field, has an unknown one, or does not give exactly one
        of ``tol_abs`` and ``tol_rel``.
    """
    refs = []
    for i, raw in enumerate(_read(name).get("point", [])):
        where = f"{name}, point {i + 1}"
        missing = [k for k in _REQUIRED if k not in raw]
        unknown = [k for k in raw if k not in _REQUIRED + _OPTIONAL]
        if missing or unknown:
            raise ValueError(f"{where}: missing fields {missing}, unknown fields {unknown}")
        if ("tol_abs" in raw) == ("tol_rel" in raw):
            raise ValueError(f"{where}: give exactly one of tol_abs and tol_rel")
        if not str(raw["tol_why"]).strip():
            raise ValueError(f"{where}: tol_why is empty; every tolerance needs its reason")
        ref = Reference(
            **{k: raw[k] for k in raw if k not in ("T_K", "value")},
            T_K=float(raw["T_K"]),
            value=float(raw["value"]),
            file=name,
        )
        if all(getattr(ref, k) == v for k, v in match.items()):
            refs.append(ref)
    return refs


def load_extra(name: str, table: str) -> list[dict]:
    """The records of another top-level array of tables (e.g. ``"skipped"``) of a file."""
    return list(_read(name).get(table, []))


def ref_id(ref: Reference) -> str:
    """Readable pytest id: ``CH4-S-298.15K``."""
    parts = [p for p in (ref.subject, ref.quantity) if p]
    return "-".join(parts + [f"{ref.T_K:g}K"])


#: Alias for ``pytest.mark.parametrize(..., ids=ids)``.
ids = ref_id


def assert_matches_reference(actual: float, ref: Reference) -> None:
    """Assert ``|actual - ref.value| <= tolerance``; the message names source and table row.

    Parameters
    ----------
    actual : float
        The model's value, already in ``ref.units`` and on the reference's basis.
    ref : Reference
        The published value.
    """
    actual = float(actual)
    diff = actual - ref.value
    if not (math.isfinite(actual) and abs(diff) <= ref.tolerance):
        raise AssertionError(
            f"model {actual:.6g} differs by {diff:+.3g} [{ref.units}] from {ref.describe()}"
        )
