"""Sites and their plant units, under which cases are filed."""
from __future__ import annotations

from typing import Any

from sqlalchemy import select
from sqlalchemy.orm import Session, selectinload

from jtcheck.errors import InputError
from jtcheck.records import audit
from jtcheck.records.fields import MAX_NAME, MAX_SHORT_TEXT, lookup, parse_text
from jtcheck.records.guard import ALL_ROLES, EDIT_ROLES, require
from jtcheck.records.models import PlantUnit, Site, User
from jtcheck.records.transactions import transaction


def create_site(session: Session, user: User, name: str, description: str = "") -> Site:
    """Add a site; its name must be new."""
    require(user, EDIT_ROLES, "create sites")
    with transaction(session):
        site = add_site(session, user, name, description)
    return site


def add_site(session: Session, user: User | None, name: Any, description: Any = "") -> Site:
    """Add a site within the caller's transaction (no permission check; ``user`` None for the system)."""
    name_s = parse_text("name", name, "site name", MAX_NAME, required=True, single_line=True)
    if session.scalar(select(Site.id).where(Site.name == name_s)) is not None:
        raise InputError("name", f"a site named {name_s!r} already exists; choose another name")
    site = Site(name=name_s, description=parse_text("description", description, "description", MAX_SHORT_TEXT))
    session.add(site)
    session.flush()
    audit.add_entry(session, user, "site", site.id, "create", new=site.name)
    return site


def create_unit(session: Session, user: User, site_id: int, name: str, description: str = "") -> PlantUnit:
    """Add a unit to a site; its name must be new within the site."""
    require(user, EDIT_ROLES, "create units")
    with transaction(session):
        unit = add_unit(session, user, site_id, name, description)
    return unit


def add_unit(session: Session, user: User | None, site_id: Any, name: Any, description: Any = "") -> PlantUnit:
    """Add a unit to a site within the caller's transaction (no permission check)."""
    site = lookup(session, Site, "site_id", site_id, "site")
    name_s = parse_text("name", name, "unit name", MAX_NAME, required=True, single_line=True)
    exists = session.scalar(select(PlantUnit.id).where(PlantUnit.site_id == site.id, PlantUnit.name == name_s))
    if exists is not None:
        raise InputError("name", f"site {site.name!r} already has a unit named {name_s!r}; choose another name")
    unit = PlantUnit(site=site, name=name_s,
                     description=parse_text("description", description, "description", MAX_SHORT_TEXT))
    session.add(unit)
    session.flush()
    audit.add_entry(session, user, "unit", unit.id, "create", new=f"{site.name} / {unit.name}")
    return unit


def list_sites(session: Session, user: User) -> list[Site]:
    """Every site with its units, by name."""
    require(user, ALL_ROLES, "view sites")
    return list(session.scalars(select(Site).options(selectinload(Site.units)).order_by(Site.name)))
