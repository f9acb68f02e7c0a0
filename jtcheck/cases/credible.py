"""Credible cases generated from a letdown's operating data, so that none depends on the user remembering it.

Beside the conditions the user states (normal, minimum inlet temperature, maximum inlet pressure, both;
:func:`jtcheck.screening.screen.credible_conditions`), a practitioner checks the cases a plant produces by
itself.  :func:`generated_conditions` adds them, each as one or more conditions with the reasoning that
produced them:

* **settle-out after shutdown** (``settle_out``): the connected upstream volumes equalise adiabatically
  (mass and energy balance, :func:`jtcheck.letdown.settle_out.settle_out`); at restart the valve lets down
  from the settle-out pressure and temperature to the lowest outlet pressure given (the minimum outlet
  pressure when given, else the normal one: the colder).  Needs ``settle_out_volumes``.  A settle-out that
  does not converge is still a condition, marked not converged, so the case is not screened.
* **start-up into depressured outlet** (``start_up``): the downstream is at atmospheric pressure
  (``p_atm_pa``) when the valve opens, from every inlet state of the user's credible conditions (normal;
  minimum inlet temperature; maximum inlet pressure; both).  Generated for every letdown.
* **loss of upstream heater** (``heater_loss``): the inlet arrives at the temperature upstream of the heater
  (``heater_upstream_temperature_k``) at the normal and the maximum inlet pressure.
* **minimum ambient, uninsulated inlet** (``ambient``): an uninsulated inlet line at rest reaches the minimum
  ambient temperature (``ambient_temperature_min_k``) when that is below the normal inlet temperature; at the
  normal and the maximum inlet pressure.

Heater loss and minimum ambient let down to the same outlet as settle-out (the minimum outlet pressure when
given, else the normal one).

Kind parameters that are not quantity fields (structured values, SI):

``settle_out_volumes``
    list of ``{"name": str, "volume_m3": float, "p_pa": float, "t_k": float}``: the volumes connected to the
    valve's inlet after a shutdown, with their states before they equalise (pressure absolute).
``credible_off``
    ``{case key: reason}``: switch a generated case off (``settle_out``, ``start_up``, ``heater_loss``,
    ``ambient``).  A switched-off case is listed with its reason and not computed; a reason is required.

Every value is SI (Pa absolute, K, m^3); the edges convert units.
"""
from __future__ import annotations

import math
import re
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

from jtcheck import marks
from jtcheck.cases.fields import INLET_TEMPERATURE_RANGE_K, PRESSURE_RANGE_PA, check_number, named_entries
from jtcheck.errors import InputError
from jtcheck.letdown.settle_out import SettleOutResult, settle_out
from jtcheck.screening.screen import (
    CONDITION_MAX_P,
    CONDITION_MIN_T,
    CONDITION_MIN_T_MAX_P,
    CONDITION_NORMAL,
    CONDITION_START_UP,
    Condition,
    credible_conditions,
    start_up_conditions,
)
from jtcheck.thermo.fluid import Fluid

#: The generated cases: key (as ``credible_off`` names it) -> the name of its condition.
SETTLE_OUT = "settle_out"
START_UP = "start_up"
HEATER_LOSS = "heater_loss"
AMBIENT = "ambient"
CASE_NAMES: dict[str, str] = {
    SETTLE_OUT: "settle-out after shutdown",
    START_UP: CONDITION_START_UP,
    HEATER_LOSS: "loss of upstream heater",
    AMBIENT: "minimum ambient, uninsulated inlet",
}
#: Status of a generated case in the result.
COMPUTED = "computed"
OFF = "off"
NOT_GENERATED = "not generated"

#: Keys of one settle-out volume.
VOLUME_KEYS = ("name", "volume_m3", "p_pa", "t_k")
#: Allowed volume of one settle-out volume [m^3] (low end excluded).
VOLUME_RANGE_M3 = (0.0, 1.0e6, False)


@dataclass(frozen=True)
class GeneratedCondition:
    """One condition a generated case adds.

    Attributes
    ----------
    case : str
        The generated case's key (``"start_up"``).
    condition : Condition
        Name, inlet pressure [Pa] abs, inlet temperature [K], outlet pressure [Pa] abs.  NaN inlet values
        when ``converged`` is False.
    reasoning : str
        Which inputs and which assumption made it.
    converged : bool
        False when the state it starts from was not found (settle-out); the screening then is not screened.
    message : str
        Why it did not converge (empty when it did).
    """

    case: str
    condition: Condition
    reasoning: str
    converged: bool = True
    message: str = ""

    def to_dict(self) -> dict[str, Any]:
        c = self.condition
        return {"case": self.case, "name": c.name, "status": COMPUTED, "reasoning": self.reasoning,
                "reason": self.message, "converged": self.converged, "p_in_pa": _num(c.p_in_pa),
                "t_in_k": _num(c.t_in_k), "p_out_pa": _num(c.p_out_pa)}


@dataclass(frozen=True)
class SkippedCase:
    """A generated case that adds no condition: switched off (with the user's reason) or not generated.

    Attributes
    ----------
    case : str
        The generated case's key.
    status : str
        ``"off"`` or ``"not generated"``.
    reason : str
        The user's reason (off) or why it could not be generated (its inputs missing, not colder).
    """

    case: str
    status: str
    reason: str

    @property
    def name(self) -> str:
        return CASE_NAMES[self.case]

    def to_dict(self) -> dict[str, Any]:
        return {"case": self.case, "name": self.name, "status": self.status, "reasoning": "",
                "reason": self.reason, "converged": None, "p_in_pa": None, "t_in_k": None, "p_out_pa": None}


@dataclass(frozen=True)
class GeneratedCases:
    """The credible cases generated for one letdown.

    Attributes
    ----------
    generated : tuple of GeneratedCondition
        The conditions added, in the order of :data:`CASE_NAMES`.
    skipped : tuple of SkippedCase
        The cases switched off or not generated, with the reason.
    settle_out : SettleOutResult or None
        The settle-out computed (None when not asked for or switched off).
    """

    generated: tuple[GeneratedCondition, ...]
    skipped: tuple[SkippedCase, ...]
    settle_out: SettleOutResult | None = None

    @property
    def conditions(self) -> list[Condition]:
        """The conditions to screen after the user's own."""
        return [g.condition for g in self.generated]

    @property
    def unconverged(self) -> tuple[GeneratedCondition, ...]:
        """The conditions whose starting state was not found (the case is then not screened)."""
        return tuple(g for g in self.generated if not g.converged)

    def entries(self) -> list[dict[str, Any]]:
        """One dict per generated condition and per skipped case (``answers["generated_cases"]``): case, name,
        status (computed, off, not generated), reasoning, reason, converged and the condition's SI values."""
        order = list(CASE_NAMES)
        rows = [*(g.to_dict() for g in self.generated), *(s.to_dict() for s in self.skipped)]
        rows = [{**r, **{k: readable(r[k]) for k in ("reasoning", "reason") if isinstance(r.get(k), str)}}
                for r in rows]
        return sorted(rows, key=lambda r: order.index(r["case"]))   # stable: conditions keep their order

    def to_dict(self) -> dict[str, Any]:
        return {"cases": self.entries(),
                "settle_out": None if self.settle_out is None else _plain(self.settle_out.to_dict())}


#: A register key in a reasoning text (``inlet_pressure_pa``, ``p_atm_pa``, ``settle_out_volumes``).
_KEY = re.compile(r"\b(?:[a-z0-9]+_)+(?:pa|k|m3|kg_per_s|volumes|fraction)\b")


def readable(text: str) -> str:
    """A reasoning text as a user reads it: the register keys that trace each number to its input are left out
    (the words beside them name the input), with the brackets and separators they leave."""
    out = _KEY.sub("", text)
    out = re.sub(r"\(\s*(?:[,;]\s*)*\)", "", out)          # "()" and "(, )"
    out = re.sub(r"\(\s*[,;]\s*", "(", out)                  # "(; the colder outlet)"
    out = re.sub(r"\s*[,;]\s*\)", ")", out)
    out = re.sub(r" {2,}", " ", out).replace(" ,", ",").replace(" ;", ";").replace(" .", ".")
    return out.strip()


def _num(x: float) -> float | None:
    return x if math.isfinite(x) else None


def _plain(d: Any) -> Any:
    """NaN and infinities as None, tuples as lists (JSON-ready)."""
    if isinstance(d, Mapping):
        return {k: _plain(v) for k, v in d.items()}
    if isinstance(d, (list, tuple)):
        return [_plain(v) for v in d]
    if isinstance(d, float) and not math.isfinite(d):
        return None
    return d


# ---------------------------------------------------------------------------------------------
# inputs
# ---------------------------------------------------------------------------------------------

def check_settle_out_volumes(volumes: Any) -> list[tuple[str, float, float, float]] | None:
    """``settle_out_volumes`` as (name, V [m^3], P [Pa] abs, T [K]) tuples; None when not given.

    Raises
    ------
    InputError
        Naming the entry and key at fault (``settle_out_volumes[1].volume_m3``) and what is allowed.
    """
    key = "settle_out_volumes"
    if volumes is None:
        return None
    entries = named_entries(key, volumes, VOLUME_KEYS, "volumes")
    if not entries:
        raise InputError(key, "no volume given; allowed: one or more volumes, each {name, volume_m3, p_pa, t_k} "
                              "(or leave it out for no settle-out case)")
    out: list[tuple[str, float, float, float]] = []
    for k, entry in enumerate(entries):
        where, name = f"{key}[{k}]", entry["name"]
        v = check_number(f"{where}.volume_m3", entry.get("volume_m3"), "volume", "m3", VOLUME_RANGE_M3, True)
        p = check_number(f"{where}.p_pa", entry.get("p_pa"), "pressure", "Pa", PRESSURE_RANGE_PA, True)
        t = check_number(f"{where}.t_k", entry.get("t_k"), "temperature", "K", INLET_TEMPERATURE_RANGE_K, True)
        assert v is not None and p is not None and t is not None   # required: check_number refused None
        out.append((name, v, p, t))
    return out


def check_credible_off(off: Any) -> dict[str, str]:
    """``credible_off`` as {case key: reason}; empty when not given.

    Raises
    ------
    InputError
        ``credible_off`` for an unknown case key or a value that is not a mapping, ``credible_off.<case>``
        for a case switched off without a reason.
    """
    if off is None:
        return {}
    if not isinstance(off, Mapping):
        raise InputError("credible_off", "expected a mapping of generated case to the reason it is switched off, "
                                         f"e.g. {{'start_up': 'outlet never depressured'}}; got {type(off).__name__}")
    out: dict[str, str] = {}
    for case, reason in off.items():
        if case not in CASE_NAMES:
            raise InputError("credible_off", f"unknown generated case {case!r}; allowed: {', '.join(CASE_NAMES)}")
        if not isinstance(reason, str) or not reason.strip():
            raise InputError(f"credible_off.{case}", f"switching off the {CASE_NAMES[case]} case needs a reason "
                                                    f"(non-empty text), got {reason!r}")
        out[case] = reason.strip()
    return out


# ---------------------------------------------------------------------------------------------
# the cases
# ---------------------------------------------------------------------------------------------

def _bar(p_pa: float, field: str = "") -> str:
    """A pressure [Pa abs], marked: shown in the unit of the input ``field`` (:mod:`jtcheck.marks`)."""
    return marks.P(p_pa, field)


def _kelvin(t_k: float, field: str = "") -> str:
    """A temperature [K], marked: shown in the unit of the input ``field``, to 0.1."""
    return marks.T(t_k, field)


def _lowest_outlet(values: Mapping[str, Any]) -> tuple[float, str]:
    p_min = values.get("outlet_pressure_min_pa")
    if p_min is not None:
        return p_min, (f"the minimum outlet pressure {_bar(p_min, 'outlet_pressure_min')} (outlet_pressure_min_pa; "
                       "the colder outlet)")
    p_out = values["outlet_pressure_pa"]
    return p_out, (f"the normal outlet pressure {_bar(p_out, 'outlet_pressure')} (outlet_pressure_pa; no minimum "
                   "outlet pressure given)")


def _inlet_pressures(values: Mapping[str, Any]) -> list[tuple[str, float]]:
    """(suffix of the condition name, inlet pressure [Pa]): normal, and the maximum when given."""
    out = [("", values["inlet_pressure_pa"])]
    if values.get("inlet_pressure_max_pa") is not None:
        out.append((f" ({CONDITION_MAX_P})", values["inlet_pressure_max_pa"]))
    return out


def _settle_out(fluid: Fluid, values: Mapping[str, Any],
                volumes: list[tuple[str, float, float, float]]) -> tuple[list[GeneratedCondition],
                                                                        SkippedCase | None, SettleOutResult]:
    name = CASE_NAMES[SETTLE_OUT]
    p_out, outlet = _lowest_outlet(values)
    res = settle_out(fluid, volumes)
    listed = ", ".join(f"{n} {v:g} m3 at {_bar(p, 'inlet_pressure')}, {_kelvin(t, 'inlet_temperature')}"
                       for n, v, p, t in volumes)
    reasoning = (f"after a shutdown the connected volumes ({listed}; settle_out_volumes) equalise: adiabatic mixing "
                 "of the connected volumes by mass and energy balance (jtcheck.letdown.settle_out; no heat from the "
                 f"walls or the surroundings, no mass leaves; {fluid.eos.value}); at restart the valve lets down from "
                 f"the settle-out state to {outlet}")
    if not res.converged:
        msg = f"settle-out did not converge: {res.message}"
        return [GeneratedCondition(SETTLE_OUT, Condition(name, math.nan, math.nan, p_out), reasoning, False, msg)], \
            None, res
    if res.p_pa <= p_out:
        return [], SkippedCase(SETTLE_OUT, NOT_GENERATED,
                               f"the settle-out pressure {_bar(res.p_pa, 'inlet_pressure')} is not above {outlet}: "
                               "no flow through the valve at restart"), res
    reasoning += f"; {res.message}"
    return [GeneratedCondition(SETTLE_OUT, Condition(name, res.p_pa, res.t_k, p_out), reasoning)], None, res


_START_UP_WORDS = {
    CONDITION_NORMAL: "the normal inlet (inlet_pressure_pa, inlet_temperature_k)",
    CONDITION_MIN_T: "the normal inlet pressure at the minimum inlet temperature (inlet_temperature_min_k)",
    CONDITION_MAX_P: "the maximum inlet pressure (inlet_pressure_max_pa) at the normal inlet temperature",
    CONDITION_MIN_T_MAX_P: "the maximum inlet pressure at the minimum inlet temperature (the coldest combination)",
}


def _start_up(values: Mapping[str, Any]) -> tuple[list[GeneratedCondition], SkippedCase | None]:
    p_atm = values.get("p_atm_pa")
    if p_atm is None:
        return [], SkippedCase(START_UP, NOT_GENERATED, "no atmospheric pressure given (p_atm_pa)")
    p_in, t_in, p_out = values["inlet_pressure_pa"], values["inlet_temperature_k"], values["outlet_pressure_pa"]
    p_max, t_min = values.get("inlet_pressure_max_pa"), values.get("inlet_temperature_min_k")
    conds = start_up_conditions(p_in, t_in, p_out, p_atm, p_max, t_min)
    if not conds:
        return [], SkippedCase(START_UP, NOT_GENERATED,
                               f"the normal outlet pressure {_bar(p_out, 'outlet_pressure')} is not above the "
                               f"atmospheric pressure {_bar(p_atm, 'outlet_pressure')}: the normal conditions are the "
                               "start-up")
    inlets = credible_conditions(p_in, t_in, p_out, p_max, t_min)
    return [GeneratedCondition(START_UP, c, (
        f"start-up into a depressured downstream: the outlet is at atmospheric pressure "
        f"({_bar(p_atm, 'outlet_pressure')}, p_atm_pa) when the valve opens; from {_START_UP_WORDS[i.name]}, "
        f"{_bar(c.p_in_pa, 'inlet_pressure')}, {_kelvin(c.t_in_k, 'inlet_temperature')}"))
            for c, i in zip(conds, inlets, strict=True)], None


#: The inputs of the generated cases in words (the reasoning names them so).
_WORDS = {"heater_upstream_temperature_k": "temperature upstream of the heater",
          "ambient_temperature_min_k": "minimum ambient temperature"}


def _cold_inlet(case: str, values: Mapping[str, Any], key: str,
                why: str) -> tuple[list[GeneratedCondition], SkippedCase | None]:
    """Heater loss and minimum ambient: the inlet at ``values[key]`` at the normal and maximum inlet pressure."""
    t_k = values.get(key)
    if t_k is None:
        return [], SkippedCase(case, NOT_GENERATED, f"no {_WORDS.get(key, key)} given ({key})")
    t_in = values["inlet_temperature_k"]
    if t_k >= t_in:
        return [], SkippedCase(case, NOT_GENERATED, f"{_WORDS.get(key, key)} {_kelvin(t_k, key[:-2])} ({key}) "
                                                    f"is not below the normal inlet temperature "
                                                    f"{_kelvin(t_in, 'inlet_temperature')}: the inlet is not colder")
    p_out, outlet = _lowest_outlet(values)
    out = []
    for suffix, p in _inlet_pressures(values):
        which = "maximum" if suffix else "normal"
        out.append(GeneratedCondition(case, Condition(CASE_NAMES[case] + suffix, p, t_k, p_out), (
            f"{why}: inlet temperature {_kelvin(t_k, key[:-2])} ({key}) at the {which} inlet pressure "
            f"{_bar(p, 'inlet_pressure')}; "
            f"let down to {outlet}")))
    return out, None


def generated_conditions(fluid: Fluid, values: Mapping[str, Any]) -> GeneratedCases:
    """The credible cases a letdown's operating data imply beyond the user's conditions (module docstring).

    Parameters
    ----------
    fluid : Fluid
        The case's fluid with its EOS (the settle-out is computed with it).
    values : mapping
        The letdown's values, register keys in SI: ``inlet_pressure_pa`` [Pa] abs, ``inlet_temperature_k`` [K],
        ``outlet_pressure_pa`` [Pa] abs; optional ``inlet_pressure_max_pa``, ``inlet_temperature_min_k``,
        ``outlet_pressure_min_pa``, ``p_atm_pa`` [Pa] abs, ``heater_upstream_temperature_k`` [K],
        ``ambient_temperature_min_k`` [K], ``settle_out_volumes`` and ``credible_off`` (module docstring).

    Returns
    -------
    GeneratedCases
        The conditions added (with their reasoning), the cases switched off or not generated (with the reason)
        and the settle-out result.

    Raises
    ------
    InputError
        For malformed ``settle_out_volumes`` or ``credible_off`` (named as in :func:`check_settle_out_volumes`
        and :func:`check_credible_off`).
    """
    off = check_credible_off(values.get("credible_off"))
    volumes = check_settle_out_volumes(values.get("settle_out_volumes"))
    generated: list[GeneratedCondition] = []
    skipped: list[SkippedCase] = []
    settled: SettleOutResult | None = None

    def take(result: tuple[list[GeneratedCondition], SkippedCase | None]) -> None:
        generated.extend(result[0])
        if result[1] is not None:
            skipped.append(result[1])

    for case in CASE_NAMES:
        if case in off:
            skipped.append(SkippedCase(case, OFF, off[case]))
        elif case == SETTLE_OUT:
            if volumes is None:
                skipped.append(SkippedCase(case, NOT_GENERATED, "no connected volumes given (settle_out_volumes)"))
            else:
                conds, skip, settled = _settle_out(fluid, values, volumes)
                take((conds, skip))
        elif case == START_UP:
            take(_start_up(values))
        elif case == HEATER_LOSS:
            take(_cold_inlet(case, values, "heater_upstream_temperature_k",
                             "loss of the upstream heater: the inlet arrives at the temperature upstream of "
                             "the heater"))
        else:
            take(_cold_inlet(case, values, "ambient_temperature_min_k",
                             "minimum ambient, uninsulated inlet: an uninsulated inlet line at rest reaches the "
                             "minimum ambient temperature"))
    return GeneratedCases(tuple(generated), tuple(skipped), settled)
