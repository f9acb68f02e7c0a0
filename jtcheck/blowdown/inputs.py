"""Inputs of a depressurisation besides the vessel: the orifices (blowdown valve, restriction orifice), the heat
input and the run controls.  Checked on construction; errors name the field and the allowed range.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

from jtcheck.errors import InputError

HEAT_INPUTS = ("none", "ambient", "fire")
MODELS = ("equilibrium", "two-zone")

#: API 521 common depressuring target: 690 kPa gauge or 50 % of the design gauge pressure, whichever is lower,
#: within about 15 minutes (API Standard 521, 6th ed. (2014), clause 5.20.1 (from memory): common basis, verify
#: against the edition in force).
API521_TARGET_GAUGE_PA = 690.0e3
API521_TARGET_FRACTION = 0.5
API521_TARGET_TIME_S = 900.0
API521_TARGET_BASIS = ("API 521 common basis: 690 kPa gauge or 50 % of the design gauge pressure, whichever is "
                       "lower, within about 15 minutes (clause from memory; verify against the edition in force)")


def number(name: str, value, what: str, unit: str, lo: float, hi: float, lo_open: bool = True) -> float:
    """A finite number in (lo, hi] (or [lo, hi] with ``lo_open`` False), else InputError naming ``name``."""
    if isinstance(value, bool):
        raise InputError(name, f"{what} must be a number [{unit}], got {value!r}")
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise InputError(name, f"{what} must be a number [{unit}], got {value!r}") from None
    ok = math.isfinite(v) and (v > lo if lo_open else v >= lo) and v <= hi
    if not ok:
        rng = f"{'above' if lo_open else 'at least'} {lo:g} and at most {hi:g} {unit}"
        raise InputError(name, f"{what} must lie {rng}, got {value!r}")
    return v


@dataclass(frozen=True)
class Orifice:
    """A blowdown valve or restriction orifice discharging the vessel's vapour space to a back pressure.

    Attributes
    ----------
    diameter_m : float
        Throat (bore) diameter [m], up to 2 m.
    discharge_coefficient : float
        Cd [-], above 0 and at most 1.
    back_pressure_pa : float
        Absolute pressure downstream (flare header) [Pa].
    name : str
    """

    diameter_m: float
    discharge_coefficient: float
    back_pressure_pa: float
    name: str = "blowdown valve"

    def __post_init__(self) -> None:
        object.__setattr__(self, "diameter_m", number("orifice_diameter", self.diameter_m, "orifice diameter", "m",
                                                      0.0, 2.0))
        object.__setattr__(self, "discharge_coefficient",
                           number("discharge_coefficient", self.discharge_coefficient, "discharge coefficient", "-",
                                  0.0, 1.0))
        object.__setattr__(self, "back_pressure_pa", number("back_pressure", self.back_pressure_pa,
                                                            "back pressure (absolute)", "Pa", 0.0, 1e8))

    @property
    def area_m2(self) -> float:
        return 0.25 * math.pi * self.diameter_m ** 2

    def to_dict(self) -> dict:
        return {"name": self.name, "diameter_m": self.diameter_m, "discharge_coefficient": self.discharge_coefficient,
                "back_pressure_pa": self.back_pressure_pa}


@dataclass(frozen=True)
class HeatInput:
    """Heat from outside: "none" (adiabatic outside), "ambient" (still air) or "fire" (API 521).

    Attributes
    ----------
    kind : {"none", "ambient", "fire"}
    ambient_t_k : float
        Air temperature [K] (also the initial wall temperature's usual value).
    environment_factor : float
        API 521 environment factor F [-] (1 for a bare vessel), fire only.
    adequate_drainage : bool
        API 521 drainage and fire-fighting present (C1 = 43 200) or not (70 900), fire only.
    """

    kind: str = "none"
    ambient_t_k: float = 288.15
    environment_factor: float = 1.0
    adequate_drainage: bool = True

    def __post_init__(self) -> None:
        if self.kind not in HEAT_INPUTS:
            raise InputError("heat_input", f"must be one of {', '.join(HEAT_INPUTS)}, got {self.kind!r}")
        object.__setattr__(self, "ambient_t_k", number("ambient_temperature", self.ambient_t_k,
                                                       "ambient temperature", "K", 150.0, 400.0))
        object.__setattr__(self, "environment_factor", number("environment_factor", self.environment_factor,
                                                              "environment factor F", "-", 0.0, 1.0, lo_open=False))

    def to_dict(self) -> dict:
        return {"kind": self.kind, "ambient_t_k": self.ambient_t_k, "environment_factor": self.environment_factor,
                "adequate_drainage": self.adequate_drainage}


def api521_target_pressure_pa(design_pressure_gauge_pa: float, p_atm_pa: float = 101325.0) -> float:
    """The API 521 common depressuring target, absolute [Pa] (see :data:`API521_TARGET_BASIS`)."""
    dp = number("design_pressure", design_pressure_gauge_pa, "design pressure (gauge)", "Pa", 0.0, 1e9)
    return min(API521_TARGET_GAUGE_PA, API521_TARGET_FRACTION * dp) + p_atm_pa
