"""The registered case kinds, and which kind computes a device.

The register stores the *device* a case describes (``Case.kind``: control valve, choke, relief valve,
...); :func:`kind_of` finds the :class:`~jtcheck.cases.kind.CaseKind` that computes it.  A new kind is
added to :data:`KINDS` here, and nowhere else.
"""
from __future__ import annotations

from jtcheck.cases.depressuring import VESSEL_DEPRESSURING
from jtcheck.cases.fields import COMMON_FIELDS, P_ATM, Field
from jtcheck.cases.kind import CaseKind
from jtcheck.cases.letdown import LETDOWN
from jtcheck.cases.relief import RELIEF_VALVE
from jtcheck.errors import InputError

#: Every case kind, by name, in the order forms and lists show them.
KINDS: dict[str, CaseKind] = {k.name: k for k in (LETDOWN, RELIEF_VALVE, VESSEL_DEPRESSURING)}
_BY_DEVICE: dict[str, CaseKind] = {d: k for k in KINDS.values() for d in k.devices}


def kind_named(name: str) -> CaseKind:
    """The kind called ``name``; an :class:`InputError` listing the kinds otherwise."""
    try:
        return KINDS[name]
    except KeyError:
        raise InputError("kind", f"unknown case kind {name!r}; allowed: {', '.join(KINDS)}") from None


def kind_of(device: str) -> CaseKind:
    """The kind that computes a case of device ``device`` (``"relief_valve"`` -> the relief-valve kind)."""
    value = getattr(device, "value", device)
    try:
        return _BY_DEVICE[value]
    except KeyError:
        raise InputError("kind", f"unknown kind {value!r}; allowed: {', '.join(_BY_DEVICE)}") from None


def all_fields() -> tuple[Field, ...]:
    """Every quantity field of every kind, once each, in check order: the first kind's operating fields,
    the common fields (cold limits, atmospheric pressure), then the fields the other kinds add."""
    out: dict[str, Field] = {}
    first, *rest = KINDS.values()
    for f in (*first.fields, *COMMON_FIELDS):
        out.setdefault(f.key, f)
    for kind in rest:
        for f in kind.fields:
            out.setdefault(f.key, f)
    return tuple(out.values())


def all_parameters() -> tuple[str, ...]:
    """The structured inputs of every kind, once each, in kind order."""
    out: list[str] = []
    for kind in KINDS.values():
        out += [name for name in kind.parameters if name not in out]
    return tuple(out)


def foreign_fields(kind: CaseKind, values: dict) -> list[Field]:
    """The fields given a value in ``values`` that ``kind`` does not have (another kind's inputs)."""
    own = {f.key for f in (*kind.fields, *COMMON_FIELDS)}
    return [f for f in all_fields() if f.key not in own and values.get(f.key) is not None]


def form_sections() -> tuple[list[str], list[str]]:
    """The case form's kind sections, each once, in kind order: (operating inputs, screening inputs)."""
    inputs: list[str] = []
    screening: list[str] = []
    for kind in KINDS.values():
        inputs += [t for t in kind.input_sections if t not in inputs]
        screening += [t for t in kind.screening_sections if t not in screening]
    return inputs, screening


def kinds_with(key: str) -> list[CaseKind]:
    """The kinds that have the field ``key``."""
    return [k for k in KINDS.values() if k.field_named(key) is not None]


__all__ = ["KINDS", "P_ATM", "all_fields", "all_parameters", "foreign_fields", "form_sections", "kind_named", "kind_of",
           "kinds_with"]
