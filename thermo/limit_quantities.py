"""The limit quantities: what each review limit checks, its margin, and where it is met.

Split from :mod:`thermo.edges` (which keeps every name here importable). A review limit
(:class:`Limit`, the registry :data:`LIMITS`) reads one quantity from a Dataset of the core's
values (a sweep's grid or the points of :func:`thermo.edges.evaluate`); its margin is
positive (or zero) inside the window, in the limit's own unit. :func:`active_limits` lists
the limits a scenario sets, :func:`limit_margins` and :func:`_ok_fields` give their margins
and verdicts, and :func:`exclusion` the share of the grid each one excludes.

Every quantity is SI: K, Pa, W, mol per mol.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
import xarray as xr

from thermo.scenario import Limits
from thermo.sweep import LIMIT_VARIABLES


def carbon_quantity(ds) -> xr.DataArray:
    """The carbon verdict as one signed quantity: <= 0 carbon-free, 0 on the boundary [-].

    Uses ``carbon_verdict_ln_activity`` when the Dataset holds it (the binding carbon
    criterion as a log activity). Otherwise it is built from today's fields: the log of the
    outlet gas's carbon activity (graphite reference, <= 0 where no graphite forms) where the
    train forms no graphite, and the graphite formed in the train per hydrocarbon carbon fed
    (> 0) where it does. This is the one place the carbon quantity is read.
    """
    if "carbon_verdict_ln_activity" in ds:
        return ds["carbon_verdict_ln_activity"]
    hc = float(ds.attrs.get("hydrocarbon_carbon_mol_per_s", 1.0)) or 1.0
    with np.errstate(divide="ignore"):
        ln_a = np.log(ds["carbon_activity"].clip(min=1e-300)).clip(max=0.0)
    deposit = ds[LIMIT_VARIABLES["carbon_free"]]
    return xr.where(deposit > 0, deposit / hc + 1e-12, ln_a)


@dataclass(frozen=True)
class Limit:
    """One kind of review limit and how it is checked.

    Attributes
    ----------
    name : str
        JSON key (``methane_slip``, ``h2``, ``duty``, ``carbon``).
    setting : str
        The attribute of thermo.scenario.Limits that sets it.
    kind : {"max", "min"}
        Whether the quantity must stay at or below (``max``) or at or above the limit.
    label, unit : str
        Words and display unit.
    scale : float
        Display value per SI value.
    quantity : callable
        Dataset -> the checked quantity [SI].
    """

    name: str
    setting: str
    kind: str
    label: str
    unit: str
    scale: float
    quantity: Callable[[xr.Dataset], xr.DataArray]

    def limit_value(self, limits: Limits) -> float | None:
        """The limit [SI], or None when it is not set."""
        if self.setting == "carbon_free":
            return 0.0 if limits.carbon_free else None
        return getattr(limits, self.setting)

    def margin(self, value, limit: float):
        """Margin in the limit's own unit, positive inside the window [SI]."""
        return limit - value if self.kind == "max" else value - limit


LIMITS: dict[str, Limit] = {
    "methane_slip": Limit("methane_slip", "max_methane_slip_dry", "max", "methane slip (dry)",
                          "mol %", 100.0,
                          lambda ds: ds[LIMIT_VARIABLES["max_methane_slip_dry"]]),
    "h2": Limit("h2", "min_h2_yield", "min", "H2 (product of the train)", "mol/mol C", 1.0,
                lambda ds: ds[LIMIT_VARIABLES["min_h2_yield"]]),
    "duty": Limit("duty", "max_duty", "max", "radiant duty", "MW", 1e-6,
                  lambda ds: ds[LIMIT_VARIABLES["max_duty"]]),
    "carbon": Limit("carbon", "carbon_free", "max", "carbon verdict (ln activity)", "-", 1.0,
                    carbon_quantity),
    # With a [plant] table: the furnace's fired duty (LHV), thermo.plant.
    "fired_duty": Limit("fired_duty", "max_fired_duty", "max", "fired duty (LHV)", "MW", 1e-6,
                        lambda ds: ds[LIMIT_VARIABLES["max_fired_duty"]]),
}


def active_limits(limits: Limits) -> list[tuple[Limit, float]]:
    """The limits that are set, with their values [SI], in :data:`LIMITS` order."""
    out = []
    for lim in LIMITS.values():
        value = lim.limit_value(limits)
        if value is not None:
            out.append((lim, float(value)))
    return out


def limit_margins(ds: xr.Dataset, limits: Limits) -> dict[str, xr.DataArray]:
    """Margin of every active limit, positive (or zero) inside [SI unit of the limit]."""
    return {lim.name: lim.margin(lim.quantity(ds), value) for lim, value in active_limits(limits)}


def _ok_fields(ds: xr.Dataset, limits: Limits) -> dict[str, xr.DataArray]:
    """Where each limit is met (and where the solver converged), as booleans."""
    out = {k: m >= 0 for k, m in limit_margins(ds, limits).items()}
    out["converged"] = ds["converged"].astype(bool)
    return out


def exclusion(ds: xr.Dataset, limits: Limits) -> dict[str, float]:
    """Share of the window's grid nodes each active limit excludes (and ``converged``: the
    share not converged) [-], largest first."""
    fields = _ok_fields(ds, limits)
    out = {k: float(1.0 - v.mean()) for k, v in fields.items()}
    return dict(sorted(out.items(), key=lambda kv: -kv[1]))
