"""The inputs of a vessel depressuring case: the vessel, the orifices, the heat input and the run, checked and
turned into the arguments of :func:`jtcheck.blowdown.depressure`.

Values travel in SI as the register keeps them (``Case.parameters``):

``vessel``
    ``{"orientation": "vertical" | "horizontal", "inner_diameter_m": float [m], "length_m": float [m] or
    "volume_m3": float [m^3] (the length then follows from the volume and diameter of a cylinder with flat ends),
    "wall_thickness_m": float [m], "liquid_level_m": float [m] (optional), "wall_material": "carbon steel" |
    "stainless steel" (thermal properties; optional, carbon steel), "wall_t0_k": float [K] (optional, the
    fluid's initial temperature)}``.
``orifices``
    list of ``{"name": str, "diameter_m": float [m], "discharge_coefficient": float [-], "back_pressure_pa":
    float [Pa abs] (optional: the case's outlet pressure)}``.
``heat_input``
    ``{"kind": "none" | "ambient" | "fire", "ambient_t_k": float [K], "environment_factor": float [-],
    "adequate_drainage": bool}`` (optional: none).
``run``
    ``{"end_time_s": float [s], "end_pressure_pa": float [Pa abs], "design_pressure_pa": float [Pa abs],
    "target_pressure_pa": float [Pa abs], "target_time_s": float [s], "model": "equilibrium" | "two-zone"}`` (all
    optional; the model defaults to equilibrium).

The case's quantity fields give the initial state (``inlet_pressure_pa``, ``inlet_temperature_k``) and the
back pressure at the blowdown valve outlet (``outlet_pressure_pa``, the flare header).
"""
from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

from jtcheck.blowdown.geometry import ORIENTATIONS, Vessel
from jtcheck.blowdown.inputs import (
    API521_TARGET_BASIS,
    API521_TARGET_FRACTION,
    API521_TARGET_GAUGE_PA,
    API521_TARGET_TIME_S,
    HEAT_INPUTS,
    MODELS,
    HeatInput,
    Orifice,
)
from jtcheck.blowdown.wall import MATERIALS
from jtcheck.cases.fields import named_entries
from jtcheck.errors import InputError

VESSEL_KEYS = ("orientation", "inner_diameter_m", "length_m", "volume_m3", "wall_thickness_m", "liquid_level_m",
               "wall_material", "wall_t0_k")
ORIFICE_KEYS = ("name", "diameter_m", "discharge_coefficient", "back_pressure_pa")
HEAT_INPUT_KEYS = ("kind", "ambient_t_k", "environment_factor", "adequate_drainage")
RUN_KEYS = ("end_time_s", "end_pressure_pa", "design_pressure_pa", "target_pressure_pa", "target_time_s", "model")
#: The longest run a case may ask for [s] (the engine's own limit).
MAX_RUN_S = 86400.0
#: The run's end time when none is given [s]: the target time of the API 521 common basis (shown in the result).
DEFAULT_END_TIME_S = API521_TARGET_TIME_S
#: Where the engine's errors name their inputs, and where the case holds them.
_VESSEL_NAMES = {"orientation": "orientation", "inner_diameter": "inner_diameter_m", "length": "length_m",
                 "wall_thickness": "wall_thickness_m", "liquid_level": "liquid_level_m",
                 "wall_material": "wall_material"}
_ORIFICE_NAMES = {"orifice_diameter": "diameter_m", "discharge_coefficient": "discharge_coefficient",
                  "back_pressure": "back_pressure_pa"}
_HEAT_NAMES = {"heat_input": "kind", "ambient_temperature": "ambient_t_k", "environment_factor": "environment_factor"}


def _number(key: str, value: Any, what: str, unit: str, lo: float, hi: float, lo_open: bool = True) -> float:
    """A finite number in (lo, hi] ([lo, hi] with ``lo_open`` False); an InputError naming ``key`` otherwise."""
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
        raise InputError(key, f"{what} must be a finite number [{unit}], got {value!r}")
    if (value <= lo if lo_open else value < lo) or value > hi:
        low = "above" if lo_open else "at least"
        raise InputError(key, f"{what} {value:g} {unit} is out of range; allowed: {low} {lo:g} and at most {hi:g} "
                              f"{unit}")
    return float(value)


def _mapping(key: str, value: Any, keys: tuple[str, ...], required: bool) -> Mapping[str, Any]:
    if value is None:
        if required:
            raise InputError(key, f"the {key.replace('_', ' ')} is required for a vessel depressuring case; give "
                                  f"{', '.join(keys)}")
        return {}
    if not isinstance(value, Mapping):
        raise InputError(key, f"expected a mapping with {', '.join(keys)}; got {type(value).__name__}")
    unknown = sorted(set(value) - set(keys))
    if unknown:
        raise InputError(f"{key}.{unknown[0]}", f"unknown key {unknown[0]!r}; allowed: {', '.join(keys)}")
    return value


def _renamed(exc: InputError, prefix: str, names: Mapping[str, str]) -> InputError:
    return InputError(f"{prefix}.{names.get(exc.field, exc.field)}", exc.message)


def vessel_of(values: Mapping[str, Any]) -> tuple[Vessel, dict[str, Any]]:
    """The :class:`Vessel` of ``values["vessel"]`` and its other entries (level, wall material, wall temperature)."""
    v = _mapping("vessel", values.get("vessel"), VESSEL_KEYS, required=True)
    orientation = v.get("orientation")
    if orientation not in ORIENTATIONS:
        raise InputError("vessel.orientation", f"must be one of {', '.join(ORIENTATIONS)}, got {orientation!r}")
    d = _number("vessel.inner_diameter_m", v.get("inner_diameter_m"), "inside diameter", "m", 0.0, 20.0)
    if (v.get("length_m") is None) == (v.get("volume_m3") is None):
        raise InputError("vessel.length_m", "give the length (tangent to tangent) or the volume of the vessel, "
                                            "not both and not neither")
    if v.get("volume_m3") is not None:
        vol = _number("vessel.volume_m3", v.get("volume_m3"), "volume", "m3", 0.0, 1.0e6)
        length = vol / (0.25 * math.pi * d * d)
        if length > 1.0e4:
            raise InputError("vessel.volume_m3", f"a volume of {vol:g} m3 at {d:g} m diameter is a cylinder "
                                                 f"{length:.4g} m long; allowed: up to 10 km")
    else:
        length = _number("vessel.length_m", v.get("length_m"), "length", "m", 0.0, 1.0e4)
    thickness = _number("vessel.wall_thickness_m", v.get("wall_thickness_m"), "wall thickness", "m", 0.0, 0.5)
    try:
        vessel = Vessel(orientation, d, length, thickness)
    except InputError as exc:
        raise _renamed(exc, "vessel", _VESSEL_NAMES) from None
    level = v.get("liquid_level_m")
    if level is not None:
        top = d if orientation == "horizontal" else length
        level = _number("vessel.liquid_level_m", level, "liquid level", "m", 0.0, top, lo_open=False)
    material = v.get("wall_material") or "carbon steel"
    if not isinstance(material, str) or material.strip().lower() not in MATERIALS:
        raise InputError("vessel.wall_material", f"unknown wall material {material!r}; allowed: "
                                                 f"{', '.join(MATERIALS)} (thermal properties of the wall)")
    wall_t0 = v.get("wall_t0_k")
    if wall_t0 is not None:
        wall_t0 = _number("vessel.wall_t0_k", wall_t0, "initial wall temperature", "K", 20.0, 1000.0)
    return vessel, {"liquid_level_m": level or None, "wall_material": material.strip().lower(),
                    "wall_t0_k": wall_t0}


def orifices_of(values: Mapping[str, Any]) -> tuple[Orifice, ...]:
    """The orifices of ``values["orifices"]`` (at least one), each back pressure below the initial pressure."""
    items = named_entries("orifices", values.get("orifices"), ORIFICE_KEYS, "orifices")
    if not items:
        raise InputError("orifices", "at least one orifice (blowdown valve or restriction orifice) is required: "
                                     "name, diameter_m, discharge_coefficient and back_pressure_pa (optional)")
    p0, pb_case = values["inlet_pressure_pa"], values["outlet_pressure_pa"]
    out = []
    for k, item in enumerate(items):
        key = f"orifices[{k}]"
        pb = item.get("back_pressure_pa")
        pb = pb_case if pb is None else _number(f"{key}.back_pressure_pa", pb, "back pressure (absolute)", "Pa",
                                                0.0, 1.0e8)
        if pb >= p0:
            raise InputError(f"{key}.back_pressure_pa", f"back pressure {pb:g} Pa abs is not below the initial "
                                                        f"vessel pressure {p0:g} Pa abs")
        _number(f"{key}.diameter_m", item.get("diameter_m"), "orifice diameter", "m", 0.0, 2.0)
        _number(f"{key}.discharge_coefficient", item.get("discharge_coefficient"), "discharge coefficient", "-",
                0.0, 1.0)
        try:
            out.append(Orifice(item["diameter_m"], item["discharge_coefficient"], pb, name=item["name"].strip()))
        except InputError as exc:
            raise _renamed(exc, key, _ORIFICE_NAMES) from None
    return tuple(out)


def heat_input_of(values: Mapping[str, Any]) -> HeatInput:
    """The heat input of ``values["heat_input"]`` (none when not given)."""
    h = _mapping("heat_input", values.get("heat_input"), HEAT_INPUT_KEYS, required=False)
    kind = h.get("kind", "none")
    if kind not in HEAT_INPUTS:
        raise InputError("heat_input.kind", f"must be one of {', '.join(HEAT_INPUTS)}, got {kind!r}")
    drainage = h.get("adequate_drainage", True)
    if not isinstance(drainage, bool):
        raise InputError("heat_input.adequate_drainage", f"must be true or false, got {drainage!r}")
    args: dict[str, Any] = {"kind": kind, "adequate_drainage": drainage}
    for name in ("ambient_t_k", "environment_factor"):
        if h.get(name) is not None:
            args[name] = h[name]
    try:
        return HeatInput(**args)
    except InputError as exc:
        raise _renamed(exc, "heat_input", _HEAT_NAMES) from None


@dataclass(frozen=True)
class RunPlan:
    """The run of a case: when it stops and the depressuring target (SI).

    Attributes
    ----------
    end_time_s : float
        Stop at this time [s].
    end_pressure_pa : float or None
        Stop at this pressure [Pa abs].
    target_pressure_pa, target_time_s : float or None
        The depressuring target: pressure [Pa abs] to reach within the time [s]; None without a target.
    target_basis : str
        Where the target comes from, in words.
    model : str
        The vessel model: "equilibrium" (the default) or "two-zone" (:data:`jtcheck.blowdown.inputs.MODELS`).
    """

    end_time_s: float
    end_pressure_pa: float | None
    target_pressure_pa: float | None
    target_time_s: float | None
    target_basis: str
    model: str = "equilibrium"

    def to_dict(self) -> dict[str, Any]:
        return {"end_time_s": self.end_time_s, "end_pressure_pa": self.end_pressure_pa,
                "target_pressure_pa": self.target_pressure_pa, "target_time_s": self.target_time_s,
                "target_basis": self.target_basis, "model": self.model}


def run_of(values: Mapping[str, Any], orifices: tuple[Orifice, ...]) -> RunPlan:
    """The run plan of ``values["run"]``: end time (default :data:`DEFAULT_END_TIME_S`), end pressure and the target.

    The target is the one given (``target_pressure_pa``), else the API 521 common basis from the design pressure
    (690 kPa gauge or 50 % of the design gauge pressure, whichever is lower, within 15 minutes:
    :data:`jtcheck.blowdown.inputs.API521_TARGET_BASIS`), else none.
    """
    r = _mapping("run", values.get("run"), RUN_KEYS, required=False)
    p0, p_atm = values["inlet_pressure_pa"], values["p_atm_pa"]
    pb = max(o.back_pressure_pa for o in orifices)
    end_time = DEFAULT_END_TIME_S if r.get("end_time_s") is None else \
        _number("run.end_time_s", r["end_time_s"], "end time", "s", 0.0, MAX_RUN_S)
    model = r.get("model") or "equilibrium"
    if model not in MODELS:
        raise InputError("run.model", f"must be one of {', '.join(MODELS)}, got {model!r}")
    end_p = r.get("end_pressure_pa")
    if end_p is not None:
        end_p = _number("run.end_pressure_pa", end_p, "end pressure (absolute)", "Pa", 0.0, p0)
        if end_p <= pb:
            raise InputError("run.end_pressure_pa", f"the end pressure {end_p:g} Pa abs must lie above the highest "
                                                    f"back pressure {pb:g} Pa abs (the vessel only approaches it)")
    target_time = r.get("target_time_s")
    if target_time is not None:
        target_time = _number("run.target_time_s", target_time, "target time", "s", 0.0, MAX_RUN_S)
    if r.get("target_pressure_pa") is not None:
        target = _number("run.target_pressure_pa", r["target_pressure_pa"], "target pressure (absolute)", "Pa",
                         0.0, p0)
        basis = "target pressure entered"
        if target_time is None:
            target_time = API521_TARGET_TIME_S
            basis += f"; target time {API521_TARGET_TIME_S / 60:g} min ({API521_TARGET_BASIS})"
    elif r.get("design_pressure_pa") is not None:
        design = _number("run.design_pressure_pa", r["design_pressure_pa"], "design pressure (absolute)", "Pa",
                         p_atm, 1.0e9)
        target = min(API521_TARGET_GAUGE_PA, API521_TARGET_FRACTION * (design - p_atm)) + p_atm
        basis = (f"{API521_TARGET_BASIS}; design pressure {(design - p_atm) / 1e5:.4g} bar gauge")
        target_time = API521_TARGET_TIME_S if target_time is None else target_time
    else:
        if target_time is not None:
            raise InputError("run.target_time_s", "a target time needs a target pressure or the design pressure "
                                                  "(run.target_pressure_pa or run.design_pressure_pa)")
        return RunPlan(end_time, end_p, None, None, "no target: give the design pressure or a target pressure", model)
    if target >= p0:
        raise InputError("run.target_pressure_pa" if r.get("target_pressure_pa") is not None
                         else "run.design_pressure_pa",
                         f"the depressuring target {target:g} Pa abs is not below the initial pressure {p0:g} Pa abs")
    if target <= pb:
        raise InputError("run.target_pressure_pa" if r.get("target_pressure_pa") is not None
                         else "run.design_pressure_pa",
                         f"the depressuring target {target:g} Pa abs is not above the highest back pressure {pb:g} "
                         "Pa abs: the vessel would never reach it")
    return RunPlan(end_time, end_p, target, target_time, basis, model)


def check_depressuring(values: Mapping[str, Any]) -> None:
    """Every input of a depressuring case, and its relations; an InputError naming the field otherwise."""
    p0, pb = values["inlet_pressure_pa"], values["outlet_pressure_pa"]
    if pb >= p0:
        raise InputError("outlet_pressure_pa", f"the back pressure {pb:g} Pa abs (outlet pressure) is not below the "
                                               f"initial vessel pressure {p0:g} Pa abs (inlet pressure)")
    vessel_of(values)
    run_of(values, orifices_of(values))
    heat_input_of(values)
