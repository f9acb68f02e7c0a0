"""Tables of the case register: users, sites and units, fluids, materials, cases, results, audit log.

SQLAlchemy 2.0 declarative models with typed ``Mapped[...]`` attributes and one :class:`Base`.
Quantities are stored in SI units and the unit is part of the column name (``inlet_pressure_pa``,
``mdmt_k``); the units the user typed are kept beside them in :attr:`Case.display_units` so pages and
records can show the numbers the way they were entered.  Times are timezone-aware UTC.

The schema itself is created by the Alembic migrations in the top-level ``migrations/`` folder
(``jtcheck.records.db.upgrade_database``), never by ``Base.metadata.create_all``: the migrations
also install the database triggers that keep the audit log append-only.
"""
from __future__ import annotations

import enum
from datetime import UTC, datetime
from typing import Any

from sqlalchemy import (
    JSON,
    Boolean,
    CheckConstraint,
    DateTime,
    Dialect,
    Enum,
    Float,
    ForeignKey,
    Index,
    Integer,
    MetaData,
    String,
    Text,
    TypeDecorator,
    UniqueConstraint,
    event,
    inspect,
)
from sqlalchemy.orm import DeclarativeBase, Mapped, ORMExecuteState, Session, mapped_column, relationship

from jtcheck.records.errors import AppendOnlyError

#: Constraint names, so that migrations (and SQLite batch migrations) can refer to them.
NAMING_CONVENTION = {
    "ix": "ix_%(table_name)s_%(column_0_name)s",
    "uq": "uq_%(table_name)s_%(column_0_name)s",
    "ck": "ck_%(table_name)s_%(constraint_name)s",
    "fk": "fk_%(table_name)s_%(column_0_name)s_%(referred_table_name)s",
    "pk": "pk_%(table_name)s",
}

#: Standard atmosphere [Pa] (ISO 2533): the default reference for gauge units, stored on every case.
P_ATM_STANDARD_PA = 101325.0


def utcnow() -> datetime:
    """The current time, timezone-aware UTC."""
    return datetime.now(UTC)


class UTCDateTime(TypeDecorator[datetime]):
    """A timezone-aware UTC timestamp on every database.

    PostgreSQL stores ``timestamp with time zone``; SQLite has no time zones, so the value is stored
    as naive UTC and made aware again on reading.  Naive datetimes are refused on the way in.
    """

    impl = DateTime(timezone=True)
    cache_ok = True

    def process_bind_param(self, value: datetime | None, dialect: Dialect) -> datetime | None:
        if value is None:
            return None
        if value.tzinfo is None:
            raise ValueError("naive datetime given to the case register; use an aware UTC datetime")
        value = value.astimezone(UTC)
        return value.replace(tzinfo=None) if dialect.name == "sqlite" else value

    def process_result_value(self, value: datetime | None, dialect: Dialect) -> datetime | None:
        if value is None:
            return None
        return value.replace(tzinfo=UTC) if value.tzinfo is None else value.astimezone(UTC)


class Role(enum.StrEnum):
    """What a user may do (the rules are enforced in :mod:`jtcheck.records.service`)."""

    ENGINEER = "engineer"   # creates and edits fluids and cases
    CHECKER = "checker"     # views and computes; checks the engineer's work
    APPROVER = "approver"   # views and computes; approves checked cases
    ADMIN = "admin"         # everything, plus users and materials


class CaseKind(enum.StrEnum):
    """The kind of letdown a case describes."""

    CONTROL_VALVE = "control_valve"
    RELIEF_VALVE = "relief_valve"
    BLOWDOWN_VALVE = "blowdown_valve"
    CHOKE = "choke"
    OTHER = "other"

    @property
    def label(self) -> str:
        """Plain words for pages and records."""
        return _KIND_LABELS[self]


_KIND_LABELS = {
    CaseKind.CONTROL_VALVE: "control valve / pressure-reduction station",
    CaseKind.RELIEF_VALVE: "relief valve",
    CaseKind.BLOWDOWN_VALVE: "blowdown valve",
    CaseKind.CHOKE: "choke",
    CaseKind.OTHER: "other letdown",
}


class KijMode(enum.StrEnum):
    """Which binary interaction parameters a stored fluid uses."""

    TABLE = "table"   # jtcheck's table of published values (pairs without one are 0, and listed)
    ZERO = "zero"     # every kij = 0, chosen by the user

    def fluid_kij(self) -> int | None:
        """The ``kij`` argument of :class:`jtcheck.Fluid` for this mode."""
        return None if self is KijMode.TABLE else 0


def _enum(cls: type[enum.Enum], name: str, length: int) -> Enum:
    """A portable enum column: VARCHAR plus a CHECK constraint, storing the enum *values*."""
    return Enum(cls, name=name, native_enum=False, create_constraint=True, length=length,
                values_callable=lambda e: [m.value for m in e], validate_strings=True)


class Base(DeclarativeBase):
    """Declarative base of every case-register table."""

    metadata = MetaData(naming_convention=NAMING_CONVENTION)


class User(Base):
    """A person who uses jtcheck.  Passwords and API tokens are stored only as hashes (made by the web layer)."""

    __tablename__ = "users"

    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    email: Mapped[str] = mapped_column(String(254), unique=True)
    name: Mapped[str] = mapped_column(String(200))
    role: Mapped[Role] = mapped_column(_enum(Role, "user_role", 16))
    password_hash: Mapped[str] = mapped_column(String(255))
    api_token_hash: Mapped[str | None] = mapped_column(String(255), unique=True)
    active: Mapped[bool] = mapped_column(Boolean, default=True)
    created_at: Mapped[datetime] = mapped_column(UTCDateTime, default=utcnow)

    def __repr__(self) -> str:
        return f"User(id={self.id!r}, email={self.email!r}, role={self.role!s})"


class Site(Base):
    """A plant, terminal or facility."""

    __tablename__ = "sites"

    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    name: Mapped[str] = mapped_column(String(200), unique=True)
    description: Mapped[str] = mapped_column(Text, default="")
    created_at: Mapped[datetime] = mapped_column(UTCDateTime, default=utcnow)

    units: Mapped[list[PlantUnit]] = relationship(back_populates="site", order_by="PlantUnit.name")


class PlantUnit(Base):
    """A process unit (area) of a site; its name is unique within the site."""

    __tablename__ = "units"
    __table_args__ = (UniqueConstraint("site_id", "name", name="uq_units_site_id_name"),)

    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    site_id: Mapped[int] = mapped_column(ForeignKey("sites.id"), index=True)
    name: Mapped[str] = mapped_column(String(200))
    description: Mapped[str] = mapped_column(Text, default="")
    created_at: Mapped[datetime] = mapped_column(UTCDateTime, default=utcnow)

    site: Mapped[Site] = relationship(back_populates="units")


class FluidRecord(Base):
    """A named fluid: composition (component id, mole fraction) pairs, equation of state and kij set."""

    __tablename__ = "fluids"
    __table_args__ = (CheckConstraint("eos IN ('PR', 'SRK', 'RK', 'VDW')", name="eos"),)

    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    name: Mapped[str] = mapped_column(String(200), unique=True)
    #: ``[[component_id, mole_fraction], ...]``, normalised to sum 1, in the order given.
    composition: Mapped[list[Any]] = mapped_column(JSON)
    eos: Mapped[str] = mapped_column(String(8))
    kij_mode: Mapped[KijMode] = mapped_column(_enum(KijMode, "kij_mode", 8))
    notes: Mapped[str] = mapped_column(Text, default="")
    created_by_id: Mapped[int] = mapped_column(ForeignKey("users.id"))
    updated_by_id: Mapped[int] = mapped_column(ForeignKey("users.id"))
    created_at: Mapped[datetime] = mapped_column(UTCDateTime, default=utcnow)
    updated_at: Mapped[datetime] = mapped_column(UTCDateTime, default=utcnow, onupdate=utcnow)

    created_by: Mapped[User] = relationship(foreign_keys=[created_by_id])
    updated_by: Mapped[User] = relationship(foreign_keys=[updated_by_id])

    def composition_pairs(self) -> list[tuple[str, float]]:
        """The composition as ``(component_id, mole_fraction)`` tuples."""
        return [(str(c), float(z)) for c, z in self.composition]

    def to_fluid(self):
        """A :class:`jtcheck.Fluid` with this record's composition, EOS and kij set."""
        from jtcheck.thermo.fluid import Fluid

        return Fluid(self.composition_pairs(), eos=self.eos, kij=KijMode(self.kij_mode).fluid_kij())


class Material(Base):
    """A material with its minimum metal temperature (one table the user can extend).

    Shipped entries (``seeded``) are typical values to verify against the applicable code edition;
    ``editable`` entries may be changed by an admin.
    """

    __tablename__ = "materials"

    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    name: Mapped[str] = mapped_column(String(200), unique=True)
    specification: Mapped[str] = mapped_column(Text, default="")
    min_metal_temperature_k: Mapped[float] = mapped_column(Float)
    notes: Mapped[str] = mapped_column(Text, default="")
    source: Mapped[str] = mapped_column(Text, default="")
    seeded: Mapped[bool] = mapped_column(Boolean, default=False)
    editable: Mapped[bool] = mapped_column(Boolean, default=True)
    created_at: Mapped[datetime] = mapped_column(UTCDateTime, default=utcnow)
    updated_at: Mapped[datetime] = mapped_column(UTCDateTime, default=utcnow, onupdate=utcnow)


class Case(Base):
    """One letdown to screen: a valve, relief valve, choke ... with its normal and credible extreme inlet states.

    ``version`` is the optimistic-concurrency counter (SQLAlchemy ``version_id_col``): every UPDATE
    checks and increments it, so a save based on a stale copy fails instead of overwriting.
    """

    __tablename__ = "cases"
    __table_args__ = (
        CheckConstraint("inlet_pressure_pa > 0", name="inlet_pressure_positive"),
        CheckConstraint("inlet_temperature_k > 0", name="inlet_temperature_positive"),
        CheckConstraint("outlet_pressure_pa > 0", name="outlet_pressure_positive"),
        CheckConstraint("outlet_pressure_pa <= inlet_pressure_pa", name="outlet_not_above_inlet"),
        CheckConstraint("margin_k >= 0", name="margin_not_negative"),
        CheckConstraint("p_atm_pa > 0", name="p_atm_positive"),
    )

    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    unit_id: Mapped[int] = mapped_column(ForeignKey("units.id"), index=True)
    tag: Mapped[str] = mapped_column(String(64), index=True)
    service: Mapped[str] = mapped_column(Text, default="")
    kind: Mapped[CaseKind] = mapped_column(_enum(CaseKind, "case_kind", 32))
    fluid_id: Mapped[int] = mapped_column(ForeignKey("fluids.id"), index=True)
    # normal inlet state and outlet
    inlet_pressure_pa: Mapped[float] = mapped_column(Float)
    inlet_temperature_k: Mapped[float] = mapped_column(Float)
    outlet_pressure_pa: Mapped[float] = mapped_column(Float)
    # credible extremes (optional)
    inlet_temperature_min_k: Mapped[float | None] = mapped_column(Float)
    inlet_pressure_max_pa: Mapped[float | None] = mapped_column(Float)
    #: lowest credible outlet pressure [Pa] (the operating sweep runs down to it).
    outlet_pressure_min_pa: Mapped[float | None] = mapped_column(Float)
    mass_flow_kg_per_s: Mapped[float | None] = mapped_column(Float)
    # hydrates: the user can declare the gas water-saturated (water in the composition always counts)
    water_saturated: Mapped[bool] = mapped_column(Boolean, default=False)
    hydrate_inhibitor: Mapped[str] = mapped_column(String(32), default="methanol")
    # relief valves (optional): set pressure [Pa abs], allowable overpressure [fraction of the set gauge
    # pressure], superimposed back pressure [Pa abs], built-up back pressure [Pa, a difference],
    # and the flare header's cold limit [K]
    set_pressure_pa: Mapped[float | None] = mapped_column(Float)
    overpressure_fraction: Mapped[float | None] = mapped_column(Float)
    superimposed_back_pressure_pa: Mapped[float | None] = mapped_column(Float)
    built_up_back_pressure_pa: Mapped[float | None] = mapped_column(Float)
    header_limit_k: Mapped[float | None] = mapped_column(Float)
    # limits
    material_id: Mapped[int | None] = mapped_column(ForeignKey("materials.id"))
    mdmt_k: Mapped[float | None] = mapped_column(Float)
    #: ``"entered"`` or ``"material: <name>"`` (copied from the material when the case was saved).
    mdmt_source: Mapped[str] = mapped_column(String(250), default="")
    cold_limit_k: Mapped[float | None] = mapped_column(Float)
    margin_k: Mapped[float] = mapped_column(Float, default=0.0)
    # documentation
    basis: Mapped[str] = mapped_column(Text, default="")
    references: Mapped[str] = mapped_column(Text, default="")
    #: field (without unit suffix) -> unit text the user typed, e.g. ``{"inlet_pressure": "barg"}``.
    display_units: Mapped[dict[str, str]] = mapped_column(JSON, default=dict)
    #: atmospheric pressure used for gauge units [Pa].
    p_atm_pa: Mapped[float] = mapped_column(Float, default=P_ATM_STANDARD_PA)
    status: Mapped[str] = mapped_column(String(32), default="draft", index=True)
    created_by_id: Mapped[int] = mapped_column(ForeignKey("users.id"))
    updated_by_id: Mapped[int] = mapped_column(ForeignKey("users.id"))
    created_at: Mapped[datetime] = mapped_column(UTCDateTime, default=utcnow)
    updated_at: Mapped[datetime] = mapped_column(UTCDateTime, default=utcnow, onupdate=utcnow)
    version: Mapped[int] = mapped_column(Integer)

    __mapper_args__ = {"version_id_col": version}

    unit: Mapped[PlantUnit] = relationship()
    fluid: Mapped[FluidRecord] = relationship()
    material: Mapped[Material | None] = relationship()
    created_by: Mapped[User] = relationship(foreign_keys=[created_by_id])
    updated_by: Mapped[User] = relationship(foreign_keys=[updated_by_id])
    results: Mapped[list[CaseResult]] = relationship(back_populates="case", order_by="CaseResult.id",
                                                     passive_deletes="all")

    @property
    def site(self) -> Site:
        return self.unit.site

    @property
    def latest_result(self) -> CaseResult | None:
        """The most recent stored result, or None if never computed."""
        return self.results[-1] if self.results else None

    def __repr__(self) -> str:
        return f"Case(id={self.id!r}, tag={self.tag!r}, kind={self.kind!s}, version={self.version!r})"


class CaseResult(Base):
    """One computation of a case, with everything needed to reproduce it.

    ``results`` holds one entry per condition computed (``"normal"``, ``"min inlet temperature"``,
    ``"max inlet pressure"``, ``"min temperature + max pressure"``), each the letdown result in SI
    units with ``converged``; a condition that did not converge has ``t_out = None``, never a number.
    ``t_out_min_k`` is the coldest *converged* outlet; ``converged`` is True only if every condition
    converged.  ``outcome`` is filled by the screening.
    """

    __tablename__ = "case_results"

    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    case_id: Mapped[int] = mapped_column(ForeignKey("cases.id"), index=True)
    case_version: Mapped[int] = mapped_column(Integer)
    computed_at: Mapped[datetime] = mapped_column(UTCDateTime, default=utcnow)
    computed_by_id: Mapped[int] = mapped_column(ForeignKey("users.id"))
    inputs: Mapped[dict[str, Any]] = mapped_column(JSON)
    eos: Mapped[str] = mapped_column(String(8))
    kij_basis: Mapped[str] = mapped_column(Text)
    component_data_version: Mapped[str] = mapped_column(String(100))
    kij_data_version: Mapped[str] = mapped_column(String(100))
    software_version: Mapped[str] = mapped_column(String(50))
    converged: Mapped[bool] = mapped_column(Boolean)
    message: Mapped[str] = mapped_column(Text, default="")
    warnings: Mapped[list[Any]] = mapped_column(JSON, default=list)
    results: Mapped[list[Any]] = mapped_column(JSON)
    t_out_min_k: Mapped[float | None] = mapped_column(Float)
    outcome: Mapped[str | None] = mapped_column(String(32), index=True)
    #: the screening (``jtcheck.screening.Screening.to_dict()``): outcome, findings, answers; SI.
    screening: Mapped[dict[str, Any] | None] = mapped_column(JSON)

    case: Mapped[Case] = relationship(back_populates="results")
    computed_by: Mapped[User] = relationship()

    def condition(self, name: str) -> dict[str, Any] | None:
        """The stored result of one condition (``"normal"`` ...), or None if it was not computed."""
        for entry in self.results:
            if entry.get("condition") == name:
                return entry
        return None


class AuditEntry(Base):
    """One line of the append-only audit log: who changed what, when, from which value to which.

    Rows can be added but never changed or deleted: the ORM refuses (events below) and so does the
    database (triggers installed by the migration).
    """

    __tablename__ = "audit_log"
    __table_args__ = (Index("ix_audit_log_entity_entity_id", "entity", "entity_id"),)

    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    at: Mapped[datetime] = mapped_column(UTCDateTime, default=utcnow, index=True)
    user_id: Mapped[int | None] = mapped_column(ForeignKey("users.id"))
    entity: Mapped[str] = mapped_column(String(64))
    entity_id: Mapped[int | None] = mapped_column(Integer)
    action: Mapped[str] = mapped_column(String(32))
    field: Mapped[str | None] = mapped_column(String(64))
    old_value: Mapped[str | None] = mapped_column(Text)
    new_value: Mapped[str | None] = mapped_column(Text)

    user: Mapped[User | None] = relationship()


# -- append-only audit log, ORM side ---------------------------------------------------------------
def _has_changes(target: AuditEntry) -> bool:
    state = inspect(target)
    return any(attr.history.has_changes() for attr in state.attrs)


@event.listens_for(Session, "before_flush")
def _refuse_audit_changes(session: Session, flush_context: Any, instances: Any) -> None:
    for obj in session.deleted:
        if isinstance(obj, AuditEntry):
            raise AppendOnlyError("DELETE")
    for obj in session.dirty:
        if isinstance(obj, AuditEntry) and _has_changes(obj):
            raise AppendOnlyError("UPDATE")


@event.listens_for(AuditEntry, "before_update")
def _refuse_audit_update(mapper: Any, connection: Any, target: AuditEntry) -> None:
    if _has_changes(target):
        raise AppendOnlyError("UPDATE")


@event.listens_for(AuditEntry, "before_delete")
def _refuse_audit_delete(mapper: Any, connection: Any, target: AuditEntry) -> None:
    raise AppendOnlyError("DELETE")


@event.listens_for(Session, "do_orm_execute")
def _refuse_audit_bulk(state: ORMExecuteState) -> None:
    if (state.is_update or state.is_delete) and any(m.class_ is AuditEntry for m in state.all_mappers):
        raise AppendOnlyError("UPDATE" if state.is_update else "DELETE")
