"""Case inputs from a form or an API body, converted to the SI fields of the case register.

Both the HTML form and the JSON API hand over a mapping with the quantity fields as text with units
(``{"inlet_pressure": "72 barg", ...}``); this module converts them with :mod:`jtcheck.units`, keeps
the units typed in ``display_units``, and collects every conversion error at once, named by field.
The records service then checks ranges and relations (and raises the first InputError it finds).

Fields beyond the quantities: ``water_saturated`` (true/false; a form checkbox) and ``hydrate_inhibitor``
("methanol" or "MEG", any letter case).  Relief-valve fields are quantities like the others:
``set_pressure``, ``superimposed_back_pressure`` (pressures, gauge or absolute), ``overpressure`` in
percent with its unit (``"10 %"`` or ``{"value": 10, "unit": "%"}``; a bare number is refused because a
fraction and a percentage would both look plausible), ``built_up_back_pressure`` (a pressure difference:
``"3 bar"``; barg and bara mean the same, no atmospheric offset) and ``header_limit`` (a temperature).
"""
from __future__ import annotations

import math
from collections.abc import Mapping
from typing import Any

from jtcheck import depressuring_lists, itemlists
from jtcheck.cases.letdown import HYDRATE_INHIBITORS
from jtcheck.errors import InputError
from jtcheck.records.case_inputs import KIND_PARAMETERS, field_value
from jtcheck.records.models import Case
from jtcheck.web.quantities import (
    CASE_QUANTITIES,
    QUANTITY_BY_KEY,
    parse_p_atm,
    parse_quantity,
    quantity_text,
)

TEXT_FIELDS = ("tag", "service", "basis", "references")
ID_FIELDS = ("unit_id", "fluid_id", "material_id")
#: Screening choices that are not quantities: a flag and a choice of inhibitor.
SCREENING_FIELDS = ("water_saturated", "hydrate_inhibitor")
#: Structured inputs of the case kinds, typed one item a line (jtcheck.itemlists): name -> reader.
LIST_FIELDS = {"header_sections": itemlists.header_sections, "other_sources": itemlists.other_sources,
               "settle_out_volumes": itemlists.settle_out_volumes, "credible_off": itemlists.credible_off,
               **depressuring_lists.READERS}
#: Every key a case body may hold (API and form alike).
INPUT_FIELDS = ("tag", "service", "kind", *ID_FIELDS, *(q.name for q in CASE_QUANTITIES), "p_atm",
                *SCREENING_FIELDS, *(k for k in LIST_FIELDS if k in KIND_PARAMETERS), "basis", "references")
_EXAMPLES = {"pressure": "72 barg", "temperature": "9 degC", "difference": "5 K", "mass_flow": "12 kg/s",
             "percent": "10 %", "pressure_difference": "3 bar", "water_content": "110 mg/Sm3"}
_TRUE_WORDS = ("on", "true", "yes", "1")
_FALSE_WORDS = ("", "off", "false", "no", "0")


def field_message(key: str, message: str) -> str:
    """A service message for a person: SI keys named as the form and the API name them, percent explained."""
    for q in CASE_QUANTITIES:
        message = message.replace(f"({q.key})", f"({q.name})")
    if key == "overpressure_fraction" and "out of range" in message:
        message += " (entered in percent: 0 to 100 % of the set gauge pressure)"
    return message


def api_field(exc: InputError) -> InputError:
    """The same error, naming the field as the form and the API call it (``inlet_pressure``, not ``..._pa``)."""
    field, message = form_field(exc.field), field_message(exc.field, exc.message)
    return exc if field == exc.field and message == exc.message else InputError(field, message)


class FieldInputError(Exception):
    """Several input errors at once: field -> message (the first error of each field)."""

    def __init__(self, errors: dict[str, str]):
        self.errors = errors
        super().__init__("; ".join(f"{k}: {v}" for k, v in errors.items()))

    def first(self) -> tuple[str, str]:
        return next(iter(self.errors.items()))


def form_field(key: str) -> str:
    """The form/API field of a case-register key (``inlet_pressure_pa`` -> ``inlet_pressure``)."""
    if key in QUANTITY_BY_KEY:
        return QUANTITY_BY_KEY[key].name
    if key == "p_atm_pa":
        return "p_atm"
    return key


def _id_value(value: Any) -> Any:
    """Form text ids to int (``"3"`` -> 3, ``""`` -> None); anything else is left for the service to refuse."""
    if isinstance(value, str):
        text = value.strip()
        if not text:
            return None
        if text.isdigit():
            return int(text)
    return value


def _flag(value: Any, form: bool) -> Any:
    """A form checkbox ("on" or absent) to True/False; JSON values are left for the service to check."""
    if not form:
        return value
    text = str(value or "").strip().lower()
    if text in _TRUE_WORDS:
        return True
    if text in _FALSE_WORDS:
        return False
    raise InputError("water_saturated", f"{value!r} is not a yes/no value; tick the box or leave it empty")


def _inhibitor(value: Any) -> Any:
    """The inhibitor in the service's spelling ("meg" -> "MEG"); "" -> None (the default); others unchanged."""
    if isinstance(value, str):
        text = value.strip()
        if not text:
            return None
        for name in HYDRATE_INHIBITORS:
            if text.lower() == name.lower():
                return name
        return text
    return value


def convert(raw: Mapping[str, Any], *, current: Case | None = None, form: bool = False) -> dict[str, Any]:
    """The case-register fields for the keys present in ``raw``.

    Parameters
    ----------
    raw : mapping
        Keys of :data:`INPUT_FIELDS`; quantities as text with units or ``{"value", "unit"}`` objects,
        None or ``""`` to leave an optional one empty.
    current : Case, optional
        The stored case when editing: its atmospheric pressure applies unless ``p_atm`` is given, and
        its display units are kept for fields not given.
    form : bool
        True for an HTML form, whose ids arrive as text (``"3"``); JSON ids must be integers already.

    Raises
    ------
    FieldInputError
        Every field that could not be converted, with the reason.
    """
    errors: dict[str, str] = {}
    out: dict[str, Any] = {}
    for key in raw:
        if key not in INPUT_FIELDS:
            errors[str(key)] = ("the status is set by the review workflow, not by editing the case" if key == "status"
                                else f"unknown case field; allowed: {', '.join(INPUT_FIELDS)}")
    p_atm_pa = current.p_atm_pa if current is not None else None
    if "p_atm" in raw:
        try:
            text = quantity_text(raw["p_atm"], "p_atm", "1.01325 bar")
            p_atm_pa = parse_p_atm(text)
            out["p_atm_pa"] = p_atm_pa
        except InputError as exc:
            errors["p_atm"] = exc.message
    if p_atm_pa is None:
        p_atm_pa = parse_p_atm(None)
    units = dict(current.display_units or {}) if current is not None else {}
    for q in CASE_QUANTITIES:
        if q.name not in raw:
            continue
        try:
            text = quantity_text(raw[q.name], q.name, _EXAMPLES[q.kind])
            if text is None:
                out[q.key] = None
                units.pop(q.name, None)
                continue
            out[q.key], units[q.name] = parse_quantity(q, text, p_atm_pa)
        except InputError as exc:
            errors[q.name] = exc.message
    for key in TEXT_FIELDS:
        if key in raw:
            out[key] = raw[key]
    if "water_saturated" in raw:
        try:
            out["water_saturated"] = _flag(raw["water_saturated"], form)
        except InputError as exc:
            errors["water_saturated"] = exc.message
    if "hydrate_inhibitor" in raw:
        inhibitor = _inhibitor(raw["hydrate_inhibitor"])
        if not (form and inhibitor is None and current is not None):   # an empty form field keeps what is stored
            out["hydrate_inhibitor"] = inhibitor
    for key, reader in LIST_FIELDS.items():
        if key in raw and key in INPUT_FIELDS:
            try:
                value = raw[key]
                items = reader(value, key) if key == "credible_off" else reader(value, key, p_atm_pa)
                out[key] = items or None
            except InputError as exc:    # named by the list field; the message says which line and entry
                errors[key] = exc.message if exc.field == key else f"{exc.field}: {exc.message}"
    if "kind" in raw:
        out["kind"] = raw["kind"]
    for key in ID_FIELDS:
        if key in raw:
            out[key] = _id_value(raw[key]) if form else raw[key]
    if errors:
        raise FieldInputError(errors)
    if any(q.name in raw for q in CASE_QUANTITIES) or current is None:
        out["display_units"] = units
    return out


def list_text(name: str, rows: Any, shown: Mapping[str, str], p_atm_pa: float) -> str:
    """A stored list input as the lines the form shows, pressures and temperatures in the case's units."""
    p_unit = shown.get("inlet_pressure") or "barg"
    t_unit = shown.get("inlet_temperature") or "degC"
    if name == "header_sections":
        return itemlists.header_sections_text(rows, p_unit, t_unit, p_atm_pa)
    if name == "settle_out_volumes":
        return itemlists.settle_out_volumes_text(rows, p_unit, t_unit, p_atm_pa)
    if name == "other_sources":
        return itemlists.other_sources_text(rows, p_unit, t_unit, p_atm_pa)
    if name in depressuring_lists.READERS:
        return depressuring_lists.text_of(name, rows, p_unit, t_unit, p_atm_pa)
    return itemlists.credible_off_text(rows)


def _same(old: Any, new: Any) -> bool:
    if isinstance(old, float) and isinstance(new, float):
        return math.isclose(old, new, rel_tol=1e-10, abs_tol=1e-12)
    if hasattr(old, "value") and isinstance(new, str):   # enums stored, text given
        return old.value == new
    return old == new


def changed_only(case: Case, values: Mapping[str, Any]) -> dict[str, Any]:
    """The entries of ``values`` that differ from what ``case`` holds.

    Numbers equal within 1e-10 (relative) count as unchanged, so that a form sent back as shown changes
    nothing (and an MDMT copied from the material stays "copied").
    """
    out: dict[str, Any] = {}
    for key, value in values.items():
        old = field_value(case, key)
        if key == "display_units":
            if dict(old or {}) != dict(value):
                out[key] = value
        elif not _same(old, value):
            out[key] = value
    return out
