"""The scenario's optional parts: the train's stages, the carbon check and the plant
(frozen dataclasses, SI floats). Import them from :mod:`thermo.scenario`.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass

import numpy as np

from thermo.schema import CRACKING_TEMPERATURE_K, KEYS
from thermo.species import GAS_SPECIES

#: Oxidants of the secondary reformer: mole fractions of O2, N2 and Ar. Dry air: O2 20.946,
#: N2 78.084, Ar 0.934 mol % (U.S. Standard Atmosphere 1976, NOAA/NASA/USAF, table 3; trace
#: gases folded into N2 so the fractions sum to 1; recalled from memory).
OXIDANTS: dict[str, dict[str, float]] = {
    "oxygen": {"O2": 1.0},
    "air": {"O2": 0.20946, "N2": 0.78120, "Ar": 0.00934},
}

#: Shift stage temperatures accepted [K] (150-550 degC; iron-chromium high-temperature and
#: copper-zinc low-temperature catalysts work inside it, common practice, no source).

@dataclass(frozen=True)
class PreReformer:
    """Adiabatic pre-reformer ahead of the primary reformer, at the window's pressure.

    Attributes
    ----------
    inlet_temperature : float
        Temperature of the mixed feed entering it [K]. Its outlet is equilibrated (graphite
        allowed) at the adiabatic temperature, then reheated to ``feed.inlet_temperature``.
    """

    inlet_temperature: float


@dataclass(frozen=True)
class SecondaryReformer:
    """Adiabatic oxygen- or air-blown secondary reformer after the primary.

    Attributes
    ----------
    oxidant : {"oxygen", "air"}
        What is blown in (:data:`OXIDANTS`).
    oxygen_to_carbon : float
        O2 in the oxidant per hydrocarbon carbon of the fresh feed [mol mol-1].
    oxidant_temperature : float
        Oxidant temperature [K].
    approach : float
        Approach to equilibrium [K]: the composition is the equilibrium at the adiabatic
        outlet temperature minus this.
    """

    oxidant: str
    oxygen_to_carbon: float
    oxidant_temperature: float
    approach: float = 0.0

    def oxidant_flows(self, hydrocarbon_carbon) -> np.ndarray:
        """Oxidant flow by gas species, shape (S,) + shape of `hydrocarbon_carbon` [mol s-1].

        Parameters
        ----------
        hydrocarbon_carbon : float or array_like
            Carbon in the hydrocarbons of the fresh feed [mol s-1].
        """
        c = np.asarray(hydrocarbon_carbon, dtype=float)
        o2 = self.oxygen_to_carbon * c
        out = np.zeros((len(GAS_SPECIES),) + c.shape)
        for name, x in OXIDANTS[self.oxidant].items():
            out[GAS_SPECIES.index(name)] = o2 * x / OXIDANTS[self.oxidant]["O2"]
        return out


@dataclass(frozen=True)
class ShiftStage:
    """Water-gas shift stage held at its temperature; only CO + H2O = CO2 + H2 moves.

    Attributes
    ----------
    temperature : float
        Stage temperature [K]; the gas is cooled to it first.
    approach : float
        Approach to equilibrium [K]: the shift equilibrium is taken at T + approach (less
        conversion, as shift is exothermic).
    """

    temperature: float
    approach: float = 0.0


@dataclass(frozen=True)
class Train:
    """Optional stages around the primary reformer; every stage is None when absent.

    Order of the gas: pre-reformer, primary reformer (the window's T and P), secondary
    reformer, high-temperature shift, low-temperature shift; all at the window's pressure.
    """

    pre_reformer: PreReformer | None = None
    secondary_reformer: SecondaryReformer | None = None
    high_temperature_shift: ShiftStage | None = None
    low_temperature_shift: ShiftStage | None = None

    def stages(self) -> list[str]:
        """Names of the stages present, in flow order, the primary reformer included."""
        out = ["pre_reformer"] if self.pre_reformer else []
        out.append("primary_reformer")
        for name in ("secondary_reformer", "high_temperature_shift", "low_temperature_shift"):
            if getattr(self, name) is not None:
                out.append(name)
        return out

    @property
    def empty(self) -> bool:
        """True when the train is the primary reformer alone."""
        return self.stages() == ["primary_reformer"]


#: Display names of the train's stages.
STAGE_NAMES = {
    "pre_reformer": "Pre-reformer (adiabatic)",
    "primary_reformer": "Primary reformer",
    "secondary_reformer": "Secondary reformer (adiabatic)",
    "high_temperature_shift": "High-temperature shift",
    "low_temperature_shift": "Low-temperature shift",
}



CARBON_REFERENCES = ("graphite", "catalyst")


@dataclass(frozen=True)
class CarbonCheck:
    """How the carbon verdict is made (the optional ``[carbon]`` table; thermo.carbon).

    Attributes
    ----------
    path_temperatures : tuple of float
        Gas temperatures at stations along the primary tube between its inlet and its outlet
        [K], in flow order; empty (default) for a linear rise from the mixed feed's inlet
        temperature to the outlet temperature. The path is then inlet -> stations -> outlet.
    reference : {"graphite", "catalyst"}
        Carbon the verdict is referred to: graphite (default, the conservative one) or the
        carbon formed on the nickel catalyst, less stable than graphite by
        `catalyst_carbon_offset` ([ROSTRUP-NIELSEN1972]).
    catalyst_carbon_offset : float or None
        Molar Gibbs energy of catalyst (filamentous) carbon above graphite [J mol-1], as the
        user takes it from published data for the catalyst; None when not given.
    cracking_temperature : float
        Primary inlet temperature above which C2+ hydrocarbons reaching the primary are
        flagged [K] (default :data:`CRACKING_TEMPERATURE_K`, common practice, no source).
    """

    path_temperatures: tuple[float, ...] = ()
    reference: str = "graphite"
    catalyst_carbon_offset: float | None = None
    cracking_temperature: float = CRACKING_TEMPERATURE_K



@dataclass(frozen=True)
class Plant:
    """Assumptions of the hydrogen plant around the reformer (SI floats).

    Defaults are common practice for a natural-gas hydrogen plant (no source); every one is an
    input of the ``[plant]`` table.

    Attributes
    ----------
    h2_recovery : float
        H2 recovered by the pressure-swing adsorption unit, fraction of the H2 leaving the
        last stage [-] (default 0.88).
    excess_air : float
        Combustion air beyond the stoichiometric need of the fuel, fraction [-] (default 0.10).
    air_preheat_temperature : float
        Combustion air entering the burners [K] (default 300 degC).
    bridgewall_temperature : float
        Flue gas leaving the radiant box [K] (default 1030 degC).
    stack_temperature : float
        Flue gas leaving the convection section [K] (default 140 degC).
    supply_temperature : float
        Natural gas, tail gas and combustion air as they arrive [K] (default 30 degC; at
        least 300 K, where the N2, Ar and C3H8 data begin).
    process_gas_cooled_temperature : float
        Process gas cooled to it (from the reformer outlet or the last shift stage) for heat
        recovery [K] (default 180 degC); points whose dew point lies above it are flagged.
    steam_pressure : float
        Steam header pressure: steam raised and process steam [Pa] (default 42 bar).
    steam_temperature : float
        Steam header temperature, superheated [K] (default 380 degC).
    feed_water_temperature : float
        Boiler feed water entering the steam system [K] (default 105 degC).
    steam_credit_efficiency : float
        Efficiency of the boiler that exported steam saves [-] (default 0.90): the steam's
        value is its enthalpy rise over this, in fuel LHV per kg.
    """

    h2_recovery: float = 0.88
    excess_air: float = 0.10
    air_preheat_temperature: float = 573.15
    bridgewall_temperature: float = 1303.15
    stack_temperature: float = 413.15
    supply_temperature: float = 303.15
    process_gas_cooled_temperature: float = 453.15
    steam_pressure: float = 4.2e6
    steam_temperature: float = 653.15
    feed_water_temperature: float = 378.15
    steam_credit_efficiency: float = 0.90


#: Every [plant] key: (kind, allowed range in SI, words for messages). Kinds: "fraction"

#: The defaults of :class:`Plant` by key, for the sheet and the README.
PLANT_DEFAULTS: dict[str, float] = {f.name: f.default for f in dataclasses.fields(Plant)}

#: Every [plant] key: (kind, allowed SI range, words for messages), from the schema.
PLANT_KEYS: dict[str, tuple[str, tuple[float, float], str]] = {
    k.leaf: ("temperature" if k.dimension == "temperature" else
             "pressure" if k.dimension == "pressure" else k.kind, k.range, k.what)
    for k in KEYS if k.table == "plant"
}
