"""Single-point API: a scenario and a few overrides in, one complete balance out.

``point()`` mirrors the CLI's ``explorer point`` options; quantities are strings with units
(``"850 degC"``, ``"25 barg"``) or pint quantities, ratios plain numbers. Everything it
returns is SI.
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass, replace

import numpy as np

from thermo import carbon as carbon_check
from thermo.balances import Balance, adiabatic_temperature
from thermo.constants import P_REF
from thermo.errors import InputError
from thermo.plant import (
    GJ_PER_1000NM3_FROM_J_PER_MOL,
    MJ_PER_KG_FROM_J_PER_MOL,
    PlantResult,
    plant_balance,
)
from thermo.reactions import REFORMING, SHIFT
from thermo.scenario import Scenario, load_scenario, validate_point_overrides
from thermo.species import GAS_SPECIES
from thermo.train import TrainResult, train_balance


@dataclass(frozen=True)
class PointResult:
    """Equilibrium outlet and balance of one reformer point (SI units).

    Attributes
    ----------
    scenario : Scenario
        The scenario with every override applied (its feed carries the ratios used).
    temperature : float
        Outlet temperature [K] (solved for in adiabatic mode).
    pressure : float
        Absolute outlet pressure [Pa].
    approach : float
        Approach to equilibrium of reforming [K].
    adiabatic : bool
        Whether `temperature` was solved for zero duty.
    balance : Balance
        The primary reformer's balance arrays, one point long.
    train : TrainResult
        Every stage of the scenario's train (the primary alone if it names none), one point
        long.
    carbon : dict
        The carbon check (thermo.carbon.point_check): the Dataset's carbon variables, one
        point long.
    plant : PlantResult or None
        The hydrogen plant around it (thermo.plant), one point long; None without [plant].
    """

    scenario: Scenario
    temperature: float
    pressure: float
    approach: float
    adiabatic: bool
    balance: Balance
    train: TrainResult
    carbon: dict
    plant: PlantResult | None = None

    @property
    def carbon_free(self) -> bool:
        """The binding carbon verdict (thermo.carbon)."""
        return bool(self.carbon["carbon_free"][0])

    def __getattr__(self, name: str):
        # Scalar view of the one-point balance: pt.h2_yield, pt.duty, ...
        if name.startswith("_"):
            raise AttributeError(name)
        value = getattr(self.balance, name)
        if isinstance(value, np.ndarray):
            return value[0].item() if value.ndim == 1 else value[0]
        if isinstance(value, dict):
            return {k: float(v[0]) for k, v in value.items()}
        return value

    @property
    def converged(self) -> bool:
        """Every stage of the train converged (the primary reformer alone without one)."""
        return bool(self.train.converged[0])

    @property
    def steam_to_carbon(self) -> float:
        """Steam per hydrocarbon carbon [mol mol-1]."""
        return self.scenario.feed.steam_to_carbon

    @property
    def oxygen_to_carbon(self) -> float:
        """O2 per hydrocarbon carbon [mol mol-1]."""
        return self.scenario.feed.oxygen_to_carbon

    @property
    def co2_to_carbon(self) -> float:
        """CO2 co-feed per hydrocarbon carbon [mol mol-1]."""
        return self.scenario.feed.co2_to_carbon

    def species(self, array) -> dict[str, float]:
        """A (1, S) balance array as a dict keyed by species."""
        return {s: float(v) for s, v in zip(GAS_SPECIES, np.asarray(array)[0], strict=True)}

    def to_dict(self) -> dict:
        """The strict-JSON object of ``explorer point --json`` (the project's contract).

        Non-finite numbers (H2/CO with no CO in the outlet) become None.
        """
        b = self.balance
        h2_out = float(b.outlet_flow[0, GAS_SPECIES.index("H2")])
        out = {
            "temperature_K": self.temperature,
            "pressure_Pa": self.pressure,
            "steam_to_carbon": self.steam_to_carbon,
            "oxygen_to_carbon": self.oxygen_to_carbon,
            "co2_to_carbon": self.co2_to_carbon,
            "approach_K": self.approach,
            "equilibrium_temperature_K": float(b.equilibrium_temperature[0]),
            "adiabatic": self.adiabatic,
            "converged": bool(b.converged[0]),
            "iterations": int(b.iterations[0]),
            "inlet": {
                "temperature_K": float(b.inlet_temperature[0]),
                "flow_mol_per_s": self.species(b.inlet_flow),
                "mass_flow_kg_per_s": self.species(b.inlet_mass_flow),
                "enthalpy_W": float(b.inlet_enthalpy[0]),
            },
            "outlet": {
                "temperature_K": self.temperature,
                "flow_mol_per_s": self.species(b.outlet_flow),
                "mass_flow_kg_per_s": self.species(b.outlet_mass_flow),
                "mole_fraction": self.species(b.mole_fraction),
                "mole_fraction_dry": self.species(b.mole_fraction_dry),
                "enthalpy_W": float(b.outlet_enthalpy[0]),
            },
            "carbon_deposit_mol_per_s": float(b.carbon_deposit[0]),
            "carbon_activity": float(b.carbon_activity[0]),
            "hydrocarbon_carbon_mol_per_s": float(b.hydrocarbon_carbon[0]),
            "h2_yield": float(b.h2_yield[0]),
            "h2_potential": float(b.h2_potential[0]),
            "methane_slip_dry": float(b.methane_slip_dry[0]),
            "methane_conversion": float(b.methane_conversion[0]),
            "h2_co_ratio": float(b.h2_co_ratio[0]),
            "duty_W": float(b.duty[0]),
            "duty_per_h2_J_per_mol": float(b.duty[0]) / h2_out if h2_out > 0 else math.inf,
            "extents_mol_per_s": {
                "reforming": float(b.extent_reforming[0]),
                "shift": float(b.extent_shift[0]),
            },
            "reactions": {
                "standard_pressure_Pa": P_REF,
                "reforming": {
                    "equation": REFORMING.equation(),
                    "K": float(b.K_reforming[0]),
                    "Q": float(b.Q_reforming[0]),
                    "approach_K": float(b.approach_reforming[0]),
                    "heat_298_J_per_mol": float(b.heat_reforming_298[0]),
                    "heat_J_per_mol": float(b.heat_reforming[0]),
                },
                "shift": {
                    "equation": SHIFT.equation(),
                    "K": float(b.K_shift[0]),
                    "Q": float(b.Q_shift[0]),
                    "approach_K": float(b.approach_shift[0]),
                    "heat_298_J_per_mol": float(b.heat_shift_298[0]),
                    "heat_J_per_mol": float(b.heat_shift[0]),
                },
            },
            "element_closure": {k: float(v[0]) for k, v in b.element_closure.items()},
            "train": self._train_dict(),
            **self._carbon_dict(),
        }
        out["converged"] = bool(self.train.converged[0])
        if self.plant is not None:
            out["plant"] = self._plant_dict()
        return _strict(out)

    def _carbon_dict(self) -> dict:
        """Top-level carbon keys of the point JSON (`explorer point --json`), with detail."""
        c = {k: v[0] for k, v in self.carbon.items()}
        routes = {k: float(c[f"carbon_activity_real_gas_{k}"])
                  for k in carbon_check.CARBON_ROUTES}
        code = carbon_check.BINDING[int(c["carbon_binding"])]
        chk = self.scenario.carbon
        out = {
            "carbon_free": bool(c["carbon_free"]),
            "carbon_activity_path_max": float(c["carbon_activity_path_max"]),
            "carbon_path_max_temperature": float(c["carbon_path_max_temperature"]),
            "carbon_activity_real_gas": float(c["carbon_activity_real_gas"]),
            "carbon_check": {
                "binding": code,
                "binding_words": carbon_check.BINDING_WORDS[code],
                "verdict_ln_activity": float(c["carbon_verdict_ln_activity"]),
                "reference": chk.reference,
                "catalyst_carbon_offset_J_per_mol": chk.catalyst_carbon_offset,
                "real_gas_by_route": routes,
                "real_gas_route": max(routes, key=routes.get),
                "outlet_ln_activity": float(c["carbon_ln_activity_outlet"]),
                "path_start_temperature_K": self.scenario.feed.inlet_temperature,
                "path_temperatures_K": list(chk.path_temperatures),
                "higher_hydrocarbons": bool(c["carbon_higher_hydrocarbons"]),
                "higher_hydrocarbon_cracking_temperature_K": chk.cracking_temperature,
                "other_stage": bool(c["carbon_other_stage"]),
            },
        }
        if chk.catalyst_carbon_offset is not None:
            out["carbon_check"]["catalyst"] = {
                "path_max": float(c["carbon_activity_path_max_catalyst"]),
                "real_gas": float(c["carbon_activity_real_gas_catalyst"]),
                "verdict_ln_activity": float(c["carbon_verdict_ln_activity_catalyst"]),
            }
        return out

    def _plant_dict(self) -> dict:
        """The point JSON's ``plant`` object (SI; the plant issue's contract plus more)."""
        p = {k: float(v[0]) for k, v in self.plant.scalars().items()}
        pl = self.scenario.plant
        out = {k: p[attr] for k, attr in PLANT_JSON.items()}
        spec = out["specific_energy_J_per_mol_h2"]
        out.update({
            "tail_gas_exceeds_need": p["tail_gas_excess"] > 0.0,
            "process_gas_below_dew_point":
                p["process_gas_dew_point"] > pl.process_gas_cooled_temperature,
            "specific_energy_GJ_per_1000Nm3_h2": spec * GJ_PER_1000NM3_FROM_J_PER_MOL,
            "specific_energy_MJ_per_kg_h2": spec * MJ_PER_KG_FROM_J_PER_MOL,
            "flue_gas_mol_per_s": self.species(self.plant.flue_gas),
            "air_mol_per_s": self.species(self.plant.air),
            "tail_gas_mol_per_s": self.species(self.plant.tail_gas),
            "assumptions": dataclasses.asdict(pl),
        })
        return out

    def _train_dict(self) -> dict:
        tr = self.train
        stages = []
        for st in tr.stages:
            dry = st.outlet_flow[0].copy()
            dry[GAS_SPECIES.index("H2O")] = 0.0
            stages.append({
                "name": st.name,
                "label": st.label,
                "inlet_temperature_K": float(st.inlet_temperature[0]),
                "temperature_K": float(st.temperature[0]),
                "equilibrium_temperature_K": float(st.equilibrium_temperature[0]),
                "heat_before_W": float(st.heat_before[0]),
                "duty_W": float(st.duty[0]),
                "inlet_enthalpy_W": float(st.inlet_enthalpy[0]),
                "outlet_enthalpy_W": float(st.outlet_enthalpy[0]),
                "carbon_deposit_mol_per_s": float(st.carbon_deposit[0]),
                "converged": bool(st.converged[0]),
                "inlet_flow_mol_per_s": self.species(st.inlet_flow),
                "added_flow_mol_per_s": self.species(st.added_flow),
                "outlet_flow_mol_per_s": self.species(st.outlet_flow),
                "outlet_mole_fraction_dry": self.species(dry[None, :] / dry.sum()),
            })
        dry = tr.product_flow[0].copy()
        dry[GAS_SPECIES.index("H2O")] = 0.0
        return {
            "stages": stages,
            "h2_product": float(tr.h2_product[0]),
            "duty_W": float(tr.heat_supplied[0]),
            "heat_removed_W": float(tr.heat_removed[0]),
            "methane_slip_dry": float(tr.methane_slip_dry[0]),
            "carbon_deposit_mol_per_s": float(tr.carbon_deposit[0]),
            "converged": bool(tr.converged[0]),
            "product": {
                "temperature_K": float(tr.product_temperature[0]),
                "flow_mol_per_s": self.species(tr.product_flow),
                "mole_fraction_dry": self.species(dry[None, :] / dry.sum()),
            },
        }


#: The point JSON's plant numbers: JSON key -> thermo.plant.PlantResult attribute (the plant
#: issue's contract first, then more).
PLANT_JSON: dict[str, str] = {
    "h2_product_mol_per_s": "h2_product",
    "tail_gas_lhv_W": "tail_gas_lhv",
    "fired_duty_W": "fired_duty",
    "trim_fuel_W": "trim_fuel",
    "radiant_efficiency": "radiant_efficiency",
    "bridgewall_temperature_K": "bridgewall_temperature",
    "steam_raised_kg_per_s": "steam_raised",
    "process_steam_kg_per_s": "process_steam",
    "steam_export_kg_per_s": "steam_export",
    "specific_energy_J_per_mol_h2": "specific_energy",
    "natural_gas_per_h2": "natural_gas_per_h2",
    "trim_fuel_mol_per_s": "trim_fuel_flow",
    "tail_gas_excess_W": "tail_gas_excess",
    "radiant_duty_W": "radiant_duty",
    "feed_lhv_W": "feed_lhv",
    "air_preheat_W": "air_preheat",
    "feed_preheat_W": "feed_preheat",
    "reheat_W": "reheat",
    "convection_heat_W": "convection_heat",
    "flue_steam_heat_W": "flue_steam_heat",
    "process_gas_heat_W": "process_gas_heat",
    "process_gas_dew_point_K": "process_gas_dew_point",
    "steam_value_J_per_kg": "steam_value",
    "steam_export_kg_per_mol_h2": "steam_export_per_h2",
}


def _strict(obj):
    """Replace non-finite floats by None, recursively (strict JSON)."""
    if isinstance(obj, dict):
        return {k: _strict(v) for k, v in obj.items()}
    if isinstance(obj, float) and not math.isfinite(obj):
        return None
    return obj


def point(
    scenario: Scenario | str | None = None,
    *,
    temperature=None,
    pressure=None,
    steam_to_carbon=None,
    feed=None,
    oxygen_to_carbon=None,
    co2_to_carbon=None,
    inlet_temperature=None,
    approach=None,
    adiabatic: bool = False,
) -> PointResult:
    """Equilibrium outlet and complete balance at one operating point.

    Parameters
    ----------
    scenario : Scenario or path, optional
        The study; the demo scenario if None. Its design point and feed supply every value
        not overridden.
    temperature : str or pint.Quantity, optional
        Outlet temperature, e.g. ``"850 degC"``. Ignored (solved for) when `adiabatic`.
    pressure : str or pint.Quantity, optional
        Outlet pressure, absolute or gauge (``"25 bar"``, ``"24 barg"``).
    steam_to_carbon, oxygen_to_carbon, co2_to_carbon : float, optional
        Ratios [mol per mol hydrocarbon carbon].
    feed : str or mapping, optional
        Dry feed composition, ``"CH4=0.95,C2H6=0.03,N2=0.02"``; the flow basis is kept.
    inlet_temperature : str or pint.Quantity, optional
        Mixed-feed temperature.
    approach : str or pint.Quantity, optional
        Approach to equilibrium, e.g. ``"10 K"``.
    adiabatic : bool
        Solve the outlet temperature at which the duty is zero.

    Returns
    -------
    PointResult

    Raises
    ------
    InputError
        Any bad value, naming the argument, the value and what is allowed.

    Examples
    --------
    >>> pt = point(temperature="850 degC", pressure="25 bar", steam_to_carbon=3.0)
    >>> pt.converged, round(pt.temperature - 273.15, 6)
    (True, 850.0)
    """
    if scenario is None or isinstance(scenario, str):
        scenario = load_scenario(scenario)
    sc = scenario
    f = sc.feed
    given = validate_point_overrides(
        temperature=temperature, pressure=pressure, approach=approach, feed=feed,
        steam_to_carbon=steam_to_carbon, oxygen_to_carbon=oxygen_to_carbon,
        co2_to_carbon=co2_to_carbon, inlet_temperature=inlet_temperature)
    changes = {k: given[k] for k in ("steam_to_carbon", "oxygen_to_carbon", "co2_to_carbon",
                                     "inlet_temperature") if k in given}
    if "feed" in given:
        changes["composition"] = given["feed"]
    if changes:
        f = replace(f, **changes)
    T = given.get("temperature", sc.temperature)
    P = given.get("pressure", sc.pressure)
    dT = given.get("approach", sc.approach)
    sc = replace(sc, feed=f, temperature=T, pressure=P, approach=dT)
    n_in = f.inlet_flows()
    if adiabatic:
        # The primary's own inlet: the pre-reformed gas when there is a pre-reformer (its
        # outlet does not depend on the primary's temperature).
        primary_in = train_balance(sc.train, n_in[None, :], max(T, 300.0 + dT), P,
                                   f.inlet_temperature, dT).stages
        primary_in = next(s for s in primary_in if s.name == "primary_reformer").inlet_flow[0]
        try:
            T = adiabatic_temperature(primary_in, P, f.inlet_temperature, dT)
        except ValueError as err:
            raise InputError(
                "adiabatic", True, f"a feed that can run adiabatically ({err})"
            ) from None
        sc = replace(sc, temperature=T)
    if T - dT < 300.0:
        raise InputError("approach", f"{dT:g} K",
                         f"an approach that keeps T - approach at or above 300 K (T = {T:.2f} K)")
    tr = train_balance(sc.train, n_in[None, :], T, P, f.inlet_temperature, dT)
    chk = carbon_check.point_check(tr, T, P, dT, f.inlet_temperature, sc.carbon)
    plant = None if sc.plant is None else plant_balance(sc.plant, sc, tr, P)
    return PointResult(sc, float(T), float(P), float(dT), adiabatic, tr.primary, tr, chk,
                       plant)
