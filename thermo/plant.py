r"""The hydrogen plant around the reformer: purification, furnace, heat recovery and steam.

A design review chooses a reformer window on the energy per unit of hydrogen, not on yield
alone. :func:`plant_balance` takes the train of N points (:func:`thermo.train.train_balance`)
and a scenario's ``[plant]`` assumptions (:class:`thermo.scenario.Plant`) and returns, for
every point at once (numpy arrays):

1. **Purification.** The pressure-swing unit recovers ``h2_recovery`` of the H2 leaving the
   last stage; the rest of the dry gas (CH4, CO, CO2, the unrecovered H2, N2, Ar) is the tail
   gas. The process gas's water is taken as knocked out before it.
2. **Furnace**, from its own energy balance with the project's NASA enthalpies
   (:mod:`thermo.species`). Fuel is the tail gas plus trim natural gas of the feed's dry
   composition, both arriving at ``supply_temperature``, burned completely (CO2, H2O) with
   ``excess_air`` of dry air preheated to ``air_preheat_temperature``; the flue gas leaves
   the radiant box at ``bridgewall_temperature``. With all enthalpies absolute (formation
   included), the radiant box balance is

   .. math:: H_{fuel}(T_{supply}) + H_{air}(T_{air}) = Q_{rad} + E + H_{flue}(T_{bw})

   where :math:`Q_{rad}` is the primary reformer's duty (``duty``) and :math:`E \ge 0` the
   heat the tail gas alone would release beyond the need (flagged; 0 whenever trim gas
   burns). Every term is linear in the trim flow, so it is solved in closed form. Fired duty
   is the fuel's LHV; radiant efficiency is :math:`Q_{rad}` over it.
3. **Heat recovery and steam.** The convection section cools the flue gas from the
   bridgewall to ``stack_temperature``; from that heat it first preheats the combustion air
   (from the supply temperature), the mixed feed to the first stage's inlet temperature (gas
   from the supply temperature, steam from the header), any reheat of pre-reformed gas and a
   secondary reformer's oxidant; the rest raises steam. The process gas gives its heat from
   the reformer outlet, through the train's coolers and shift stages, down to
   ``process_gas_cooled_temperature``. Steam is raised from feed water at
   ``feed_water_temperature`` to the header state (``steam_pressure``,
   ``steam_temperature``), with IAPWS-IF97 enthalpies (:mod:`thermo.steam`). Steam export
   is the steam raised minus the process steam (the mixed feed's H2O); it may be negative.
4. **Figure of merit.** Net specific energy = (feed LHV + trim fuel LHV - steam export x
   steam value) per mol of H2 product, the steam value being the steam's enthalpy rise over
   ``steam_credit_efficiency`` (the fuel a boiler would burn to raise it).

Heating values are at 298.15 K with water as vapour (LHV), from the formation enthalpies of
the project's species data (GRI30). The GRI30 fits of N2, Ar and C3H8 begin at 300 K: at
298.15 K their low-range polynomial is used 1.85 K outside its range (an enthalpy change of
about 0.05 kJ/mol; N2 and Ar cancel from every balance, being inert).

Simplifications (common practice for screening, no source): ideal-gas enthalpies for every
gas stream, including the process steam once it leaves the header; dry combustion air; no
heat losses from the furnace casing or the boilers; no pinch between the flue or process gas
and the steam (only the overall heat is matched); pressure drops neglected.

References
----------
Keys of ``thermo/data/references.toml``: GRI30 (species enthalpies), IAPWS-IF97 (steam).
"""

from __future__ import annotations

from dataclasses import dataclass, fields
from functools import cache

import numpy as np

from thermo.balances import enthalpy_flow
from thermo.constants import ELEMENTS, T_REF, V_NORMAL, R
from thermo.scenario import OXIDANTS, Plant, Scenario
from thermo.species import GAS_SPECIES, formula_matrix, gas_table, molar_masses, record
from thermo.steam import enthalpy as steam_enthalpy
from thermo.steam import saturation_temperature
from thermo.train import TrainResult

_I = {s: i for i, s in enumerate(GAS_SPECIES)}
_S = len(GAS_SPECIES)

#: Dry air burned in the furnace (the same composition as the secondary reformer's air).
AIR = OXIDANTS["air"]

#: Unit conversions of the figure of merit: J per mol H2 -> GJ per 1000 Nm3 H2 and MJ per kg.
GJ_PER_1000NM3_FROM_J_PER_MOL = 1000.0 / V_NORMAL / 1e9
MJ_PER_KG_FROM_J_PER_MOL = 1.0 / (record("H2").molar_mass * 1e6)


# ------------------------------------------------------------------------------ heating values


def _h_RT_low(T: float, name: str) -> float:
    a = record(name).low
    return float(a[0] + T * (a[1] / 2 + T * (a[2] / 3 + T * (a[3] / 4 + T * a[4] / 5)))
                 + a[5] / T)


@cache
def enthalpies_298() -> np.ndarray:
    """Enthalpy of every gas species at 298.15 K, formation included [J mol-1], shape (S,).

    From the low-range NASA polynomial (GRI30); for N2, Ar and C3H8 it is used 1.85 K below
    its 300 K range end (see the module notes).
    """
    out = np.array([_h_RT_low(T_REF, s) * R * T_REF for s in GAS_SPECIES])
    out.setflags(write=False)
    return out


@cache
def oxygen_demand() -> np.ndarray:
    """O2 for complete combustion of one mol of each species [mol mol-1], shape (S,).

    C + H/4 - O/2: 2 for CH4, 0.5 for H2 and CO, -1 for O2 itself, 0 for the inerts.
    """
    A = formula_matrix()
    e = {k: ELEMENTS.index(k) for k in ("C", "H", "O")}
    out = A[:, e["C"]] + A[:, e["H"]] / 4 - A[:, e["O"]] / 2
    out.setflags(write=False)
    return out


@cache
def lower_heating_values() -> np.ndarray:
    r"""Lower heating value of every gas species at 298.15 K [J mol-1], shape (S,).

    Notes
    -----
    .. math:: LHV_j = h_j + \nu_{O_2,j} h_{O_2} - \sum_k \nu_{k,j} h_k

    at 298.15 K with CO2 and H2O (vapour) as products, from :func:`enthalpies_298` (GRI30);
    zero for H2O, CO2, O2, N2 and Ar.

    Examples
    --------
    Methane; NIST-JANAF formation enthalpies (Chase 1998) give 802.3 kJ/mol (GRI30: 802.6):

    >>> round(float(lower_heating_values()[0]) / 1e3, 0)
    803.0
    """
    h = enthalpies_298()
    oxygen = np.outer(oxygen_demand(), np.eye(_S)[_I["O2"]])
    products = flue_gas(np.eye(_S), oxygen)
    out = h + oxygen_demand() * h[_I["O2"]] - products @ h
    out.setflags(write=False)
    return out


# ----------------------------------------------------------------------------------- streams


@cache
def _h_at(T: float) -> np.ndarray:
    """Enthalpy of every gas species at one temperature [J mol-1], shape (S,)."""
    out = gas_table(float(T), "h_RT") * R * float(T)
    out.setflags(write=False)
    return out


def _air_vector() -> np.ndarray:
    v = np.zeros(_S)
    for name, x in AIR.items():
        v[_I[name]] = x / AIR["O2"]
    return v  # per mol O2


def combustion_air(fuel: np.ndarray, excess_air: float) -> np.ndarray:
    """Dry air for complete combustion of `fuel` with `excess_air` [mol s-1], shape as fuel.

    Parameters
    ----------
    fuel : ndarray (..., S)
        Fuel flows [mol s-1].
    excess_air : float
        Air beyond the stoichiometric need, fraction [-].
    """
    o2 = (1.0 + excess_air) * (np.asarray(fuel) @ oxygen_demand())
    return o2[..., None] * _air_vector()


def flue_gas(fuel: np.ndarray, air: np.ndarray) -> np.ndarray:
    """Flue gas of complete combustion of `fuel` in `air` [mol s-1] (CO2, H2O, O2, N2, Ar).

    Parameters
    ----------
    fuel, air : ndarray (..., S)
        Fuel and air flows [mol s-1].
    """
    A = formula_matrix()
    b = (np.asarray(fuel) + np.asarray(air)) @ A  # element flows (..., E)
    C, H, Ox, N, Ar = (b[..., ELEMENTS.index(k)] for k in ("C", "H", "O", "N", "Ar"))
    out = np.zeros(b.shape[:-1] + (_S,))
    out[..., _I["CO2"]] = C
    out[..., _I["H2O"]] = H / 2
    out[..., _I["O2"]] = Ox / 2 - C - H / 4
    out[..., _I["N2"]] = N / 2
    out[..., _I["Ar"]] = Ar
    return out


def composition_vector(composition) -> np.ndarray:
    """A composition mapping (species -> mole fraction) as a normalised (S,) vector [-]."""
    v = np.zeros(_S)
    for name, x in composition.items():
        v[_I[name]] = x
    return v / v.sum()


# ----------------------------------------------------------------------------------- steam


@dataclass(frozen=True)
class SteamConditions:
    """The scenario's steam header and feed water (constants of a scenario; IAPWS-IF97).

    Attributes
    ----------
    pressure, temperature : float
        Header pressure [Pa] and temperature [K].
    saturation_temperature : float
        At the header pressure [K].
    steam_enthalpy, feed_water_enthalpy : float
        [J kg-1], IF97 reference.
    rise : float
        Enthalpy to raise one kg of steam from feed water [J kg-1].
    value : float
        Fuel LHV a boiler of the plant's steam-credit efficiency burns per kg [J kg-1].
    """

    pressure: float
    temperature: float
    saturation_temperature: float
    steam_enthalpy: float
    feed_water_enthalpy: float
    rise: float
    value: float


@cache
def steam_conditions(plant: Plant) -> SteamConditions:
    """Steam header and feed-water enthalpies of `plant` (three IAPWS-IF97 calls)."""
    P = plant.steam_pressure
    h_s = steam_enthalpy(P, plant.steam_temperature)
    h_w = steam_enthalpy(P, plant.feed_water_temperature)
    return SteamConditions(P, plant.steam_temperature, float(saturation_temperature(P)),
                           h_s, h_w, h_s - h_w, (h_s - h_w) / plant.steam_credit_efficiency)


# ----------------------------------------------------------------------------------- results


@dataclass(frozen=True)
class PlantResult:
    """The plant around the reformer over N points (arrays (N,) unless noted; SI units).

    Attributes
    ----------
    h2_product : H2 product of the purification unit [mol s-1].
    tail_gas : (N, S) tail gas [mol s-1].
    tail_gas_lhv : its LHV [W].
    trim_fuel_flow : trim natural gas [mol s-1].
    trim_fuel : its LHV [W].
    tail_gas_excess : heat the tail gas alone would release in the radiant box beyond the
        need, at the bridgewall temperature [W]; 0 where trim gas burns.
    air, flue_gas : (N, S) combustion air and flue gas [mol s-1].
    fired_duty : fuel LHV, tail gas plus trim [W].
    radiant_duty : the primary reformer's duty [W].
    radiant_efficiency : radiant duty over fired duty [-].
    bridgewall_temperature : [K] (the assumption, per point).
    feed_lhv : LHV of the natural gas fed to the process [W].
    air_preheat, feed_preheat, reheat : convection-section heats to the combustion air, the
        mixed feed (and a secondary reformer's oxidant) and pre-reformed gas [W].
    convection_heat : flue gas from the bridgewall to the stack [W].
    flue_steam_heat : what is left of it for steam (negative: the convection section is
        short of heat) [W].
    process_gas_heat : heat of the process gas from the reformer outlet down to the cooled
        temperature [W].
    process_gas_dew_point : water dew point of the process gas after the last stage [K].
    steam_raised, process_steam, steam_export : [kg s-1]; export = raised - process.
    steam_value : fuel LHV per kg of exported steam [J kg-1] (a constant).
    specific_energy : (feed LHV + trim LHV - export x steam value) per mol H2 product
        [J mol-1].
    natural_gas_per_h2 : natural gas (feed + trim) per mol H2 product [mol mol-1].
    steam_export_per_h2 : steam export per mol H2 product [kg mol-1].
    """

    h2_product: np.ndarray
    tail_gas: np.ndarray
    tail_gas_lhv: np.ndarray
    trim_fuel_flow: np.ndarray
    trim_fuel: np.ndarray
    tail_gas_excess: np.ndarray
    air: np.ndarray
    flue_gas: np.ndarray
    fired_duty: np.ndarray
    radiant_duty: np.ndarray
    radiant_efficiency: np.ndarray
    bridgewall_temperature: np.ndarray
    feed_lhv: np.ndarray
    air_preheat: np.ndarray
    feed_preheat: np.ndarray
    reheat: np.ndarray
    convection_heat: np.ndarray
    flue_steam_heat: np.ndarray
    process_gas_heat: np.ndarray
    process_gas_dew_point: np.ndarray
    steam_raised: np.ndarray
    process_steam: np.ndarray
    steam_export: np.ndarray
    steam_value: np.ndarray
    specific_energy: np.ndarray
    natural_gas_per_h2: np.ndarray
    steam_export_per_h2: np.ndarray

    def scalars(self) -> dict[str, np.ndarray]:
        """Every (N,) attribute by name (the per-species streams left out)."""
        return {f.name: getattr(self, f.name) for f in fields(self)
                if f.name not in ("tail_gas", "air", "flue_gas")}


def furnace(tail_gas, natural_gas, radiant_duty, plant: Plant):
    """Trim fuel, air and flue gas that close the radiant box's energy balance.

    Parameters
    ----------
    tail_gas : ndarray (N, S)
        Tail gas of the purification unit [mol s-1].
    natural_gas : ndarray (S,)
        Mole fractions of the trim natural gas [-].
    radiant_duty : ndarray (N,)
        Heat the tubes absorb [W].
    plant : Plant
        Excess air, temperatures.

    Returns
    -------
    trim : ndarray (N,)
        Trim natural gas [mol s-1], >= 0.
    excess : ndarray (N,)
        Heat the tail gas alone releases beyond the need [W], >= 0.
    fuel, air, flue : ndarray (N, S)
        Streams [mol s-1].

    Notes
    -----
    Per mol of each fuel species j, with its air, the radiant box nets
    ``w_j = h_j(T_supply) + air_j . h(T_air) - flue_j . h(T_bw)``; the trim flow m solves
    ``tail . w + m (ng . w) = Q_rad`` (m = 0 and the excess reported where it would be < 0).
    """
    e = plant.excess_air
    eye = np.eye(_S)
    air_1 = combustion_air(eye, e)
    flue_1 = flue_gas(eye, air_1)
    w = (_h_at(plant.supply_temperature) + air_1 @ _h_at(plant.air_preheat_temperature)
         - flue_1 @ _h_at(plant.bridgewall_temperature))
    tail_gas = np.asarray(tail_gas, dtype=float)
    Q = np.asarray(radiant_duty, dtype=float)
    a = tail_gas @ w
    b = float(natural_gas @ w)
    if not b > 0.0:
        raise ValueError("trim natural gas releases no heat at this bridgewall temperature")
    with np.errstate(invalid="ignore"):
        trim = np.maximum((Q - a) / b, 0.0)
        excess = np.maximum(a - Q, 0.0)
    fuel = tail_gas + trim[:, None] * natural_gas
    air = fuel @ air_1
    flue = fuel @ flue_1
    return trim, excess, fuel, air, flue


def plant_balance(plant: Plant, scenario: Scenario, train: TrainResult,
                  pressure) -> PlantResult:
    """The plant around N points of a reformer train (see the module notes).

    Parameters
    ----------
    plant : Plant
        The ``[plant]`` assumptions.
    scenario : Scenario
        Its feed gives the natural gas composition and flow, its train the oxidant
        temperature of a secondary reformer.
    train : TrainResult
        The train of the N points (:func:`thermo.train.train_balance`).
    pressure : array_like (N,)
        Absolute pressure of the process gas [Pa] (for its dew point).

    Returns
    -------
    PlantResult
    """
    N = train.feed_flow.shape[0]
    P = np.broadcast_to(np.asarray(pressure, dtype=float), (N,))
    lhv = lower_heating_values()
    ng = composition_vector(scenario.feed.composition)
    steam = steam_conditions(plant)

    # Purification: water knocked out, H2 recovered, the rest is tail gas.
    product = train.product_flow
    h2 = plant.h2_recovery * product[:, _I["H2"]]
    tail = product.copy()
    tail[:, _I["H2O"]] = 0.0
    tail[:, _I["H2"]] -= h2
    Q_rad = train.primary.duty
    trim, excess, _, air, flue = furnace(tail, ng, Q_rad, plant)
    tail_lhv = tail @ lhv
    trim_lhv = trim * float(ng @ lhv)
    fired = tail_lhv + trim_lhv

    # Convection section: flue from the bridgewall to the stack, process preheats first.
    T_sup = plant.supply_temperature
    conv = flue @ (_h_at(plant.bridgewall_temperature) - _h_at(plant.stack_temperature))
    air_pre = air @ (_h_at(plant.air_preheat_temperature) - _h_at(T_sup))
    feed = train.feed_flow
    steam_part = np.zeros_like(feed)
    steam_part[:, _I["H2O"]] = feed[:, _I["H2O"]]
    first = train.stages[0]
    feed_pre = (enthalpy_flow(feed, first.inlet_temperature)
                - (feed - steam_part) @ _h_at(T_sup) - steam_part @ _h_at(plant.steam_temperature))
    sec = scenario.train.secondary_reformer
    stage = train.stage("secondary_reformer")
    if sec is not None and stage is not None:
        feed_pre = feed_pre + stage.added_flow @ (_h_at(sec.oxidant_temperature) - _h_at(T_sup))
    reheat = sum(np.maximum(st.heat_before, 0.0) for st in train.stages)
    flue_steam = conv - air_pre - feed_pre - reheat

    # Process gas: the train's coolers and shift stages, then down to the cooled temperature.
    T_cool = plant.process_gas_cooled_temperature
    T_prod = train.product_temperature
    # Points whose train failed carry NaN: evaluate them anywhere in range, then mask.
    T_safe = np.where(np.isfinite(T_prod), np.clip(T_prod, 300.0, 3500.0), 1000.0)
    last = np.maximum(enthalpy_flow(np.nan_to_num(product), T_safe)
                      - np.nan_to_num(product) @ _h_at(T_cool), 0.0)
    last = np.where(np.isfinite(product).all(axis=1), last, np.nan)
    pg_heat = -train.heat_removed + last
    with np.errstate(invalid="ignore", divide="ignore"):
        x_w = product[:, _I["H2O"]] / product.sum(axis=1)
    dew = saturation_temperature(x_w * P)

    raised = (flue_steam + pg_heat) / steam.rise
    M_w = molar_masses()[_I["H2O"]]
    process_steam = feed[:, _I["H2O"]] * M_w
    export = raised - process_steam
    feed_lhv = feed @ lhv
    with np.errstate(invalid="ignore", divide="ignore"):
        specific = (feed_lhv + trim_lhv - export * steam.value) / h2
        ng_per_h2 = (scenario.feed.flow + trim) / h2
        export_per_h2 = export / h2
        efficiency = Q_rad / fired
    return PlantResult(
        h2_product=h2, tail_gas=tail, tail_gas_lhv=tail_lhv, trim_fuel_flow=trim,
        trim_fuel=trim_lhv, tail_gas_excess=excess, air=air, flue_gas=flue, fired_duty=fired,
        radiant_duty=Q_rad, radiant_efficiency=efficiency,
        bridgewall_temperature=np.full(N, plant.bridgewall_temperature), feed_lhv=feed_lhv,
        air_preheat=air_pre, feed_preheat=feed_pre, reheat=reheat + np.zeros(N),
        convection_heat=conv, flue_steam_heat=flue_steam, process_gas_heat=pg_heat,
        process_gas_dew_point=dew, steam_raised=raised, process_steam=process_steam,
        steam_export=export, steam_value=np.full(N, steam.value), specific_energy=specific,
        natural_gas_per_h2=ng_per_h2, steam_export_per_h2=export_per_h2,
    )
