"""Stored fluids: a named composition with its equation of state and kij set, checked by the thermo core."""
from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from sqlalchemy import select
from sqlalchemy.orm import Session
from sqlalchemy.orm.exc import StaleDataError

from jtcheck.errors import InputError
from jtcheck.records import audit
from jtcheck.records.errors import ConcurrentEditError, NotFound
from jtcheck.records.fields import MAX_LONG_TEXT, MAX_NAME, parse_text, refuse_unknown_keys
from jtcheck.records.guard import ALL_ROLES, EDIT_ROLES, require
from jtcheck.records.models import FluidRecord, KijMode, User
from jtcheck.records.transactions import transaction
from jtcheck.records.versions import check_version
from jtcheck.thermo.fluid import Fluid


def _kij_mode(value: Any) -> KijMode:
    try:
        return KijMode(value)
    except ValueError:
        raise InputError("kij_mode", f"unknown kij mode {value!r}; allowed: table (jtcheck's table of "
                                     "published values), zero (every kij = 0)") from None


def _checked_fluid(composition: Any, eos: Any, kij_mode: KijMode) -> Fluid:
    """Build the core's Fluid: it checks the composition and the EOS (InputError naming the field)."""
    if composition is None:
        raise InputError("composition", "a composition is required (component names with mole fractions)")
    try:
        return Fluid(composition, eos=eos, kij=kij_mode.fluid_kij())
    except InputError as exc:
        if exc.field == "kij":   # the register's name of the kij choice
            raise InputError("kij_mode", exc.message) from None
        raise


def create_fluid(session: Session, user: User, name: str, composition: Any, eos: str = "PR",
                 kij_mode: KijMode | str = KijMode.TABLE, notes: str = "") -> FluidRecord:
    """Add a named fluid.

    Parameters
    ----------
    composition : mapping, (name, amount) pairs or text
        Anything :class:`jtcheck.Fluid` accepts; it is checked by building the Fluid and stored as
        ``[[component_id, mole_fraction], ...]`` normalised to sum 1.
    eos : {"PR", "SRK", "RK", "VDW"}
    kij_mode : {"table", "zero"}
    """
    require(user, EDIT_ROLES, "create fluids")
    with transaction(session):
        record = add_fluid(session, user, name, composition, eos, kij_mode, notes)
    return record


def add_fluid(session: Session, user: User | None, name: Any, composition: Any, eos: Any = "PR",
              kij_mode: Any = KijMode.TABLE, notes: Any = "") -> FluidRecord:
    """Add a named fluid within the caller's transaction (no permission check)."""
    name_s = parse_text("name", name, "fluid name", MAX_NAME, required=True, single_line=True)
    if session.scalar(select(FluidRecord.id).where(FluidRecord.name == name_s)) is not None:
        raise InputError("name", f"a fluid named {name_s!r} already exists; choose another name")
    mode = _kij_mode(kij_mode)
    fluid = _checked_fluid(composition, eos, mode)
    record = FluidRecord(name=name_s, composition=_composition_json(fluid), eos=fluid.eos.value, kij_mode=mode,
                         notes=parse_text("notes", notes, "notes", MAX_LONG_TEXT), created_by=user, updated_by=user)
    session.add(record)
    session.flush()
    audit.add_entry(session, user, "fluid", record.id, "create", new=record.name)
    entered = entered_composition(composition, fluid)
    if entered is not None:   # the history keeps what was typed, the record the normalised fractions
        audit.add_entry(session, user, "fluid", record.id, "create", "composition as entered", None, entered)
    return record


def entered_composition(composition: Any, fluid: Fluid) -> str | None:
    """The composition as the user entered it, with the note of its normalisation, when it was normalised (its
    amounts did not sum to 1 or 100); None when it was stored as entered."""
    notes = [w for w in fluid.composition.warnings if "normalised" in w]
    if not notes:
        return None
    if isinstance(composition, str):
        text = composition.strip()
    else:
        pairs = composition.items() if isinstance(composition, Mapping) else composition
        text = ", ".join(f"{name}={amount}" for name, amount in pairs)
    return f"{text} ({'; '.join(notes)})"


def _composition_json(fluid: Fluid) -> list[list[Any]]:
    return [[cid, float(z)] for cid, z in zip(fluid.ids, fluid.zs, strict=True)]


_FLUID_FIELDS = ("name", "composition", "eos", "kij_mode", "notes")


def update_fluid(session: Session, user: User, fluid_id: int, changes: Mapping[str, Any],
                 expected_version: int | None = None) -> FluidRecord:
    """Change a fluid; one audit entry per changed field.  Results already stored keep the fluid they used.

    With ``expected_version`` (the version the edit started from) a fluid saved by someone else meanwhile is
    not overwritten: :class:`~jtcheck.records.errors.ConcurrentEditError`, nothing changed.
    """
    require(user, EDIT_ROLES, "edit fluids")
    try:
        return _update_fluid(session, user, fluid_id, changes, expected_version)
    except StaleDataError:
        raise ConcurrentEditError("fluid", fluid_id, expected_version) from None


def _update_fluid(session: Session, user: User, fluid_id: int, changes: Mapping[str, Any],
                  expected_version: int | None) -> FluidRecord:
    with transaction(session):
        refuse_unknown_keys(changes, _FLUID_FIELDS, "fluid")
        record = session.get(FluidRecord, fluid_id, populate_existing=True)
        if record is None:
            raise NotFound("fluid", fluid_id)
        check_version(session, "fluid", record, expected_version)
        new: dict[str, Any] = {}
        if "name" in changes:
            new["name"] = parse_text("name", changes["name"], "fluid name", MAX_NAME, required=True, single_line=True)
            other = session.scalar(select(FluidRecord.id).where(FluidRecord.name == new["name"],
                                                                FluidRecord.id != record.id))
            if other is not None:
                raise InputError("name", f"a fluid named {new['name']!r} already exists; choose another name")
        mode = _kij_mode(changes.get("kij_mode", record.kij_mode))
        composition = changes.get("composition", record.composition_pairs())
        fluid = _checked_fluid(composition, changes.get("eos", record.eos), mode)
        new.update(composition=_composition_json(fluid), eos=fluid.eos.value, kij_mode=mode)
        if "notes" in changes:
            new["notes"] = parse_text("notes", changes["notes"], "notes", MAX_LONG_TEXT)
        changed = False
        for key, value in new.items():
            old = getattr(record, key)
            if old != value:
                setattr(record, key, value)
                audit.add_entry(session, user, "fluid", record.id, "update", key, old, value)
                changed = True
        entered = entered_composition(composition, fluid) if "composition" in changes else None
        if entered is not None:
            audit.add_entry(session, user, "fluid", record.id, "update", "composition as entered", None, entered)
        if changed:
            record.updated_by = user
    return record


def list_fluids(session: Session, user: User) -> list[FluidRecord]:
    """Every fluid, by name."""
    require(user, ALL_ROLES, "view fluids")
    return list(session.scalars(select(FluidRecord).order_by(FluidRecord.name)))
