"""Tables of the case register: users, sites and units, fluids, materials, cases, results, audit log,
the calculation records (case revisions) with their review steps, and the batch screening jobs.

SQLAlchemy 2.0 declarative models with typed ``Mapped[...]`` attributes and one :class:`Base`.
Quantities are stored in SI units and the unit is part of the column name (``inlet_pressure_pa``,
``mdmt_k``); the units the user typed are kept beside them in :attr:`Case.display_units` so pages and
records can show the numbers the way they were entered.  Times are timezone-aware UTC.

The schema itself is created by the Alembic migrations in the top-level ``migrations/`` folder
(``jtcheck.records.db.upgrade_database``), never by ``Base.metadata.create_all``: the migrations
also install the database triggers that keep the audit log and the review steps append-only and the
issued calculation records (and the results they report) immutable.
"""
from __future__ import annotations

import enum
from datetime import UTC, datetime
from types import EllipsisType
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
    LargeBinary,
    MetaData,
    String,
    Text,
    TypeDecorator,
    UniqueConstraint,
    event,
    inspect,
    select,
)
from sqlalchemy.orm import DeclarativeBase, Mapped, ORMExecuteState, Session, mapped_column, relationship

from jtcheck.records.errors import AppendOnlyError, RecordImmutableError
from jtcheck.screening.mdmt import MaterialColdSpec

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
    """What a user may do (the rules are enforced in :mod:`jtcheck.records.guard`)."""

    ENGINEER = "engineer"   # creates and edits fluids and cases
    CHECKER = "checker"     # views and computes; checks the engineer's work
    APPROVER = "approver"   # views and computes; approves checked cases
    ADMIN = "admin"         # everything, plus users and materials


class CaseKind(enum.StrEnum):
    """The device a case describes: a kind of letdown, a relief valve, or a vessel being depressured."""

    CONTROL_VALVE = "control_valve"
    RELIEF_VALVE = "relief_valve"
    BLOWDOWN_VALVE = "blowdown_valve"
    CHOKE = "choke"
    OTHER = "other"
    VESSEL_DEPRESSURING = "vessel_depressuring"

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
    CaseKind.VESSEL_DEPRESSURING: "vessel depressuring (blowdown in time)",
}


class KijMode(enum.StrEnum):
    """Which binary interaction parameters a stored fluid uses."""

    TABLE = "table"   # jtcheck's table of published values (pairs without one are 0, and listed)
    ZERO = "zero"     # every kij = 0, chosen by the user

    def fluid_kij(self) -> int | None:
        """The ``kij`` argument of :class:`jtcheck.Fluid` for this mode (GERG-2008 takes only the table mode,
        None: a fluid with GERG-2008 and kij "zero" is refused by :class:`jtcheck.Fluid`)."""
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
    #: every session carries the generation it was signed in with; raising it ends them all (sign-out, password)
    session_generation: Mapped[int] = mapped_column(Integer, default=0, server_default="0")
    version: Mapped[int] = mapped_column(Integer, server_default="1")

    __mapper_args__ = {"version_id_col": version}

    def __repr__(self) -> str:
        return f"User(id={self.id!r}, email={self.email!r}, role={self.role!s})"


class Site(Base):
    """A plant, terminal or facility."""

    __tablename__ = "sites"

    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    name: Mapped[str] = mapped_column(String(200), unique=True)
    description: Mapped[str] = mapped_column(Text, default="")
    #: the margin a new case of the site takes when none is entered [K], and the site's reason for it
    default_margin_k: Mapped[float | None] = mapped_column(Float)
    default_margin_basis: Mapped[str] = mapped_column(Text, default="", server_default="")
    created_at: Mapped[datetime] = mapped_column(UTCDateTime, default=utcnow)
    version: Mapped[int] = mapped_column(Integer, server_default="1")

    __mapper_args__ = {"version_id_col": version}

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
    version: Mapped[int] = mapped_column(Integer, server_default="1")

    __mapper_args__ = {"version_id_col": version}

    site: Mapped[Site] = relationship(back_populates="units")


class FluidRecord(Base):
    """A named fluid: composition (component id, mole fraction) pairs, equation of state and kij set."""

    __tablename__ = "fluids"
    __table_args__ = (CheckConstraint("eos IN ('PR', 'SRK', 'RK', 'VDW', 'GERG2008')", name="eos"),)

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
    version: Mapped[int] = mapped_column(Integer, server_default="1")

    __mapper_args__ = {"version_id_col": version}

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
    #: the typed minimum metal temperature [K]; None for a material whose limit comes from its exemption curve
    min_metal_temperature_k: Mapped[float | None] = mapped_column(Float)
    notes: Mapped[str] = mapped_column(Text, default="")
    source: Mapped[str] = mapped_column(Text, default="")
    seeded: Mapped[bool] = mapped_column(Boolean, default=False)
    editable: Mapped[bool] = mapped_column(Boolean, default=True)
    # what the codes use (jtcheck.screening.mdmt): exemption curve ("" none; A-D), code ("VIII-1" or "B31.3"),
    # governing thickness [m], impact test temperature [K] (None: not impact tested), PWHT credit (VIII-1
    # UCS-68(c)), and for the coincident stress ratio: allowable stress [Pa], outside diameter [m], corrosion
    # and mill-tolerance allowance [m], joint efficiency [-]
    exemption_curve: Mapped[str] = mapped_column(String(4), default="")
    curve_code: Mapped[str] = mapped_column(String(16), default="VIII-1")
    thickness_m: Mapped[float | None] = mapped_column(Float)
    impact_test_temperature_k: Mapped[float | None] = mapped_column(Float)
    pwht_credit: Mapped[bool] = mapped_column(Boolean, default=False)
    allowable_stress_pa: Mapped[float | None] = mapped_column(Float)
    outside_diameter_m: Mapped[float | None] = mapped_column(Float)
    corrosion_allowance_m: Mapped[float] = mapped_column(Float, default=0.0)
    joint_efficiency: Mapped[float] = mapped_column(Float, default=1.0)
    #: coincident stress from dead loads and displacement strain [Pa], added to the pressure stress
    other_stress_pa: Mapped[float] = mapped_column(Float, default=0.0)
    created_at: Mapped[datetime] = mapped_column(UTCDateTime, default=utcnow)
    updated_at: Mapped[datetime] = mapped_column(UTCDateTime, default=utcnow, onupdate=utcnow)
    version: Mapped[int] = mapped_column(Integer, server_default="1")

    __mapper_args__ = {"version_id_col": version}

    def cold_spec(self, typed_limit_k: float | None | EllipsisType = ...) -> MaterialColdSpec:
        """What the material carries for its cold limit (``typed_limit_k`` replaces the typed limit, e.g. the
        value a case copied when it was saved)."""
        typed = self.min_metal_temperature_k if typed_limit_k is ... else typed_limit_k
        return MaterialColdSpec(
            name=self.name, typed_limit_k=typed, curve=self.exemption_curve or "", code=self.curve_code or "VIII-1",
            thickness_m=self.thickness_m, impact_test_temperature_k=self.impact_test_temperature_k,
            pwht_credit=bool(self.pwht_credit), allowable_stress_pa=self.allowable_stress_pa,
            outside_diameter_m=self.outside_diameter_m, corrosion_allowance_m=self.corrosion_allowance_m or 0.0,
            joint_efficiency=self.joint_efficiency if self.joint_efficiency is not None else 1.0,
            other_stress_pa=self.other_stress_pa or 0.0)

    @property
    def limit_way(self) -> str:
        """How the material's limit is found, in words."""
        if self.exemption_curve or self.impact_test_temperature_k is not None:
            how = (f"curve {self.exemption_curve} ({self.curve_code})" if self.exemption_curve else "impact test")
            return how + (" or the typed limit, the warmer" if self.min_metal_temperature_k is not None else "")
        return "typed limit" if self.min_metal_temperature_k is not None else "no limit (not screened)"


class CurvePoint(Base):
    """One row of the register's MDMT curve table (jtcheck.screening.mdmt; empty: the shipped table is used).

    Admins change rows; the first change copies the shipped table into the register.
    """

    __tablename__ = "mdmt_curve_points"

    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    position: Mapped[int] = mapped_column(Integer)
    code: Mapped[str] = mapped_column(String(16))
    table_name: Mapped[str] = mapped_column(String(16))
    curve: Mapped[str] = mapped_column(String(32))
    x: Mapped[float | None] = mapped_column(Float)
    value: Mapped[float] = mapped_column(Float)
    unit: Mapped[str] = mapped_column(String(8))
    source: Mapped[str] = mapped_column(Text, default="")
    edition: Mapped[str] = mapped_column(String(64), default="")
    provenance: Mapped[str] = mapped_column(Text, default="")
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
    # generated credible cases (optional, jtcheck.cases.credible): the inlet temperature with the upstream
    # heater off [K] and the minimum ambient temperature an uninsulated inlet reaches [K]
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
    #: the case kind's inputs that have no column of their own (SI; see jtcheck.cases): scalar fields by key
    #: and structured inputs (header sections, other relief sources, settle-out volumes, cases switched off)
    parameters: Mapped[dict[str, Any] | None] = mapped_column(JSON)
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
    #: the calculation records of the case, oldest first (deleted with the case by the database, which
    #: refuses it while one of them is issued).
    revisions: Mapped[list[CaseRevision]] = relationship(back_populates="case", order_by="CaseRevision.id",
                                                         passive_deletes="all")

    @property
    def site(self) -> Site:
        return self.unit.site

    @property
    def latest_result(self) -> CaseResult | None:
        """The most recent stored result, or None if never computed."""
        return self.results[-1] if self.results else None

    @property
    def current_revision(self) -> CaseRevision | None:
        """The latest calculation record (revision) of the case; its status is mirrored in :attr:`status`."""
        return self.revisions[-1] if self.revisions else None

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


class RevisionStatus(enum.StrEnum):
    """Where a calculation record (a :class:`CaseRevision`) is in the four-eyes review."""

    DRAFT = "draft"                  # being prepared: the case may be edited and computed
    FOR_CHECK = "for check"          # submitted and signed by the preparer; frozen
    CHECKED = "checked"              # signed by a checker (not the preparer)
    FOR_APPROVAL = "for approval"    # sent to the approvers
    APPROVED = "approved"            # signed by an approver (neither preparer nor checker): issued
    SUPERSEDED = "superseded"        # an approved record replaced by a later approved revision
    VOIDED = "voided"                # an approved record withdrawn

    @property
    def issued(self) -> bool:
        """True for approved, superseded and voided records: their content can never change."""
        return self in ISSUED_STATUSES

    @property
    def under_review(self) -> bool:
        """True for for check, checked and for approval: the case cannot be edited."""
        return self in REVIEW_STATUSES


#: Statuses of records that were approved (immutable, never deleted).
ISSUED_STATUSES = frozenset({RevisionStatus.APPROVED, RevisionStatus.SUPERSEDED, RevisionStatus.VOIDED})
#: Statuses of records in review (frozen snapshot; the case cannot be edited).
REVIEW_STATUSES = frozenset({RevisionStatus.FOR_CHECK, RevisionStatus.CHECKED, RevisionStatus.FOR_APPROVAL})


class ReviewAction(enum.StrEnum):
    """What a :class:`ReviewStep` did."""

    CREATE = "create"
    SUBMIT = "submit"
    CHECK = "check"
    SEND_FOR_APPROVAL = "send for approval"
    APPROVE = "approve"
    REJECT = "reject"
    SUPERSEDE = "supersede"
    VOID = "void"


class CaseRevision(Base):
    """One calculation record of a case: a revision (``A``, ``B`` ...) going through the four-eyes review.

    A draft holds no content.  Submitting freezes the case and its current result as a canonical JSON
    ``snapshot`` (with its SHA-256) and stores the PDF signed by the preparer; the checker and the
    approver sign the same PDF incrementally, and ``record_pdf`` always holds the latest signed PDF
    (with ``record_sha256``).  On approval the revision gets its ``number`` (0 for the case's first
    approved revision, then 1, 2 ...), which becomes its :attr:`label`.  Letters are never reused
    within a case.  Once approved, the content columns never change and the status may only go on to
    superseded or voided (the service refuses, and so does the database).
    """

    __tablename__ = "case_revisions"
    __table_args__ = (
        UniqueConstraint("case_id", "letter", name="uq_case_revisions_case_id_letter"),
        UniqueConstraint("case_id", "number", name="uq_case_revisions_case_id_number"),
        CheckConstraint("number IS NULL OR number >= 0", name="number_not_negative"),
        CheckConstraint("(number IS NULL) = (status NOT IN ('approved', 'superseded', 'voided'))",
                        name="number_when_issued"),
        CheckConstraint("status = 'draft' OR (result_id IS NOT NULL AND case_version IS NOT NULL"
                        " AND snapshot IS NOT NULL AND snapshot_sha256 IS NOT NULL AND record_pdf IS NOT NULL"
                        " AND record_sha256 IS NOT NULL AND preparer_id IS NOT NULL AND submitted_at IS NOT NULL)",
                        name="content_when_submitted"),
    )

    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    case_id: Mapped[int] = mapped_column(ForeignKey("cases.id", ondelete="CASCADE"), index=True)
    letter: Mapped[str] = mapped_column(String(8))
    number: Mapped[int | None] = mapped_column(Integer)
    status: Mapped[RevisionStatus] = mapped_column(_enum(RevisionStatus, "revision_status", 16))
    result_id: Mapped[int | None] = mapped_column(ForeignKey("case_results.id"), index=True)
    #: the case version frozen at submission.
    case_version: Mapped[int | None] = mapped_column(Integer)
    #: canonical JSON (:func:`jtcheck.records.snapshot.canonical_json`, UTF-8 text) of what the record shows.
    snapshot: Mapped[str | None] = mapped_column(Text)
    snapshot_sha256: Mapped[str | None] = mapped_column(String(64))
    #: the record PDF with every signature given so far.
    record_pdf: Mapped[bytes | None] = mapped_column(LargeBinary)
    record_sha256: Mapped[str | None] = mapped_column(String(64), index=True)
    preparer_id: Mapped[int | None] = mapped_column(ForeignKey("users.id"))
    checker_id: Mapped[int | None] = mapped_column(ForeignKey("users.id"))
    approver_id: Mapped[int | None] = mapped_column(ForeignKey("users.id"))
    submitted_at: Mapped[datetime | None] = mapped_column(UTCDateTime)
    checked_at: Mapped[datetime | None] = mapped_column(UTCDateTime)
    approved_at: Mapped[datetime | None] = mapped_column(UTCDateTime)
    #: when the record was superseded or voided.
    closed_at: Mapped[datetime | None] = mapped_column(UTCDateTime)
    created_at: Mapped[datetime] = mapped_column(UTCDateTime, default=utcnow)
    version: Mapped[int] = mapped_column(Integer)

    __mapper_args__ = {"version_id_col": version}

    case: Mapped[Case] = relationship(back_populates="revisions")
    result: Mapped[CaseResult | None] = relationship()
    preparer: Mapped[User | None] = relationship(foreign_keys=[preparer_id])
    checker: Mapped[User | None] = relationship(foreign_keys=[checker_id])
    approver: Mapped[User | None] = relationship(foreign_keys=[approver_id])
    steps: Mapped[list[ReviewStep]] = relationship(back_populates="revision", order_by="ReviewStep.id",
                                                   passive_deletes="all")

    @property
    def label(self) -> str:
        """The number once approved (``"0"``, ``"1"`` ...), else the letter (``"A"``)."""
        return str(self.number) if self.number is not None else self.letter

    @property
    def issued(self) -> bool:
        """True once approved (also when superseded or voided since)."""
        return RevisionStatus(self.status).issued

    def __repr__(self) -> str:
        return (f"CaseRevision(id={self.id!r}, case_id={self.case_id!r}, label={self.label!r}, "
                f"status={self.status!s})")


#: Columns of a revision that never change once it is issued (enforced here and by database triggers).
REVISION_CONTENT_COLUMNS = ("id", "case_id", "letter", "number", "result_id", "case_version", "snapshot",
                            "snapshot_sha256", "record_pdf", "record_sha256", "preparer_id", "checker_id",
                            "approver_id", "submitted_at", "checked_at", "approved_at", "created_at")


class ReviewStep(Base):
    """One step of the review of a revision (append-only, like the audit log): who, when, from which status
    to which, and the comment or reason.  Rows are removed only with their revision (when a case that
    never had an issued record is deleted)."""

    __tablename__ = "review_steps"

    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    revision_id: Mapped[int] = mapped_column(ForeignKey("case_revisions.id", ondelete="CASCADE"), index=True)
    action: Mapped[ReviewAction] = mapped_column(_enum(ReviewAction, "review_action", 24))
    from_status: Mapped[RevisionStatus | None] = mapped_column(_enum(RevisionStatus, "from_status", 16))
    to_status: Mapped[RevisionStatus] = mapped_column(_enum(RevisionStatus, "to_status", 16))
    user_id: Mapped[int] = mapped_column(ForeignKey("users.id"))
    at: Mapped[datetime] = mapped_column(UTCDateTime, default=utcnow)
    comment: Mapped[str] = mapped_column(Text, default="")

    revision: Mapped[CaseRevision] = relationship(back_populates="steps")
    user: Mapped[User] = relationship()


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


class BatchStatus(enum.StrEnum):
    """Where a batch screening job is."""

    QUEUED = "queued"      # stored, waiting for a worker (a thread of the web process, or an ``rq`` worker)
    RUNNING = "running"    # a worker is screening its rows
    DONE = "done"          # results stored
    FAILED = "failed"      # stopped on an error (``message`` says which); nothing more will happen

    @property
    def finished(self) -> bool:
        """True for done and failed: the job will not change any more."""
        return self in (BatchStatus.DONE, BatchStatus.FAILED)


class BatchJob(Base):
    """One uploaded letdown list screened as a background job (:mod:`jtcheck.batch.jobs`).

    The uploaded file is kept as it came (``input_file``) and read again by the worker, so that a job can
    be re-run and is reproducible.  ``total`` and ``done`` count the rows to screen and those screened so
    far (the progress bar); ``results`` holds one dict per screened row (the row's
    :class:`jtcheck.screening.batch.BatchRowResult` in SI, plus its inputs as the file gave them),
    ``counts`` the rows by outcome.  ``bad_rows`` is the CSV of the rows that could not be read when the
    job was created with "keep going" (None when every row was read).  ``options`` keeps the settings of
    the upload form (limit, MDMT and margin texts, ``compare_models``, ``keep_going``); ``reading`` what
    reading the file reported (row errors of skipped rows, warnings, the units of its columns).
    ``heartbeat_at`` is the worker's last sign of life: a running job whose worker fell silent (the
    process was restarted) is recognised and marked failed instead of running for ever.
    """

    __tablename__ = "batch_jobs"
    __table_args__ = (
        CheckConstraint("runner IN ('thread', 'rq')", name="runner"),
        CheckConstraint("total >= 0 AND done >= 0", name="counters_not_negative"),
    )

    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    created_by_id: Mapped[int] = mapped_column(ForeignKey("users.id"), index=True)
    created_at: Mapped[datetime] = mapped_column(UTCDateTime, default=utcnow)
    started_at: Mapped[datetime | None] = mapped_column(UTCDateTime)
    finished_at: Mapped[datetime | None] = mapped_column(UTCDateTime)
    #: last sign of life of the worker (set when it takes the job and with every progress write).
    heartbeat_at: Mapped[datetime | None] = mapped_column(UTCDateTime)
    filename: Mapped[str] = mapped_column(String(255))
    status: Mapped[BatchStatus] = mapped_column(_enum(BatchStatus, "batch_status", 16), default=BatchStatus.QUEUED,
                                                index=True)
    total: Mapped[int] = mapped_column(Integer, default=0)
    done: Mapped[int] = mapped_column(Integer, default=0)
    options: Mapped[dict[str, Any]] = mapped_column(JSON, default=dict)
    input_file: Mapped[bytes] = mapped_column(LargeBinary)
    bad_rows: Mapped[bytes | None] = mapped_column(LargeBinary)
    results: Mapped[list[Any] | None] = mapped_column(JSON)
    counts: Mapped[dict[str, Any] | None] = mapped_column(JSON)
    reading: Mapped[dict[str, Any] | None] = mapped_column(JSON)
    message: Mapped[str] = mapped_column(Text, default="")
    runner: Mapped[str] = mapped_column(String(8), default="thread")
    #: how often a worker took the job (a job whose worker died is requeued once, then marked failed).
    attempts: Mapped[int] = mapped_column(Integer, default=0, server_default="0")

    created_by: Mapped[User] = relationship()

    @property
    def finished(self) -> bool:
        return BatchStatus(self.status).finished

    @property
    def fraction(self) -> float:
        """Share of the rows screened so far (0 to 1)."""
        if BatchStatus(self.status) is BatchStatus.DONE:
            return 1.0
        return min(1.0, self.done / self.total) if self.total else 0.0

    def __repr__(self) -> str:
        return f"BatchJob(id={self.id!r}, filename={self.filename!r}, status={self.status!s})"


# -- append-only audit log, ORM side ---------------------------------------------------------------
def _has_changes(target: AuditEntry) -> bool:
    state = inspect(target)
    return any(attr.history.has_changes() for attr in state.attrs)


@event.listens_for(Session, "before_flush")
def _refuse_audit_changes(session: Session, flush_context: Any, instances: Any) -> None:
    for obj in session.deleted:
        if isinstance(obj, AuditEntry):
            raise AppendOnlyError("DELETE")
        if isinstance(obj, ReviewStep):
            raise AppendOnlyError("DELETE", "review steps")
    for obj in session.dirty:
        if isinstance(obj, AuditEntry) and _has_changes(obj):
            raise AppendOnlyError("UPDATE")
        if isinstance(obj, ReviewStep) and _has_changes(obj):
            raise AppendOnlyError("UPDATE", "review steps")


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
    if (state.is_update or state.is_delete) and any(m.class_ is ReviewStep for m in state.all_mappers):
        raise AppendOnlyError("UPDATE" if state.is_update else "DELETE", "review steps")


@event.listens_for(ReviewStep, "before_update")
def _refuse_step_update(mapper: Any, connection: Any, target: ReviewStep) -> None:
    if _has_changes(target):
        raise AppendOnlyError("UPDATE", "review steps")


@event.listens_for(ReviewStep, "before_delete")
def _refuse_step_delete(mapper: Any, connection: Any, target: ReviewStep) -> None:
    raise AppendOnlyError("DELETE", "review steps")


# -- issued calculation records, ORM side (the migration installs the database triggers) ------------
def _committed(target: Any, key: str) -> Any:
    """The value of an attribute as loaded from the database (before unflushed changes)."""
    history = inspect(target).attrs[key].history
    if history.deleted:
        return history.deleted[0]
    return history.unchanged[0] if history.unchanged else getattr(target, key)


def _check_revision_change(revision: CaseRevision) -> None:
    state = inspect(revision)
    if state.pending or state.transient:
        return
    old_status = RevisionStatus(_committed(revision, "status"))
    if not old_status.issued:
        return
    label = _committed(revision, "number")
    changed = [key for key in REVISION_CONTENT_COLUMNS if state.attrs[key].history.has_changes()]
    if changed:
        raise RecordImmutableError(f"revision {label} is {old_status.value}: its {', '.join(changed)} cannot change")
    new_status = RevisionStatus(revision.status)
    allowed = {old_status} | ({RevisionStatus.SUPERSEDED, RevisionStatus.VOIDED}
                              if old_status is RevisionStatus.APPROVED else set())
    if new_status not in allowed:
        raise RecordImmutableError(f"revision {label} is {old_status.value}: its status cannot become "
                                   f"{new_status.value!r} (an approved record may only be superseded or voided)")
    if new_status is old_status and state.attrs["closed_at"].history.has_changes():
        raise RecordImmutableError(f"revision {label} is {old_status.value}: its closing time cannot change")


def _result_is_frozen(session: Session, result: CaseResult) -> CaseRevision | None:
    """The revision that reports ``result`` (submitted or issued), if any."""
    if result.id is None:
        return None
    with session.no_autoflush:
        return session.scalars(select(CaseRevision).where(CaseRevision.result_id == result.id)
                               .order_by(CaseRevision.id).limit(1)).first()


@event.listens_for(Session, "before_flush")
def _refuse_issued_record_changes(session: Session, flush_context: Any, instances: Any) -> None:
    for obj in session.deleted:
        if isinstance(obj, CaseRevision) and RevisionStatus(_committed(obj, "status")).issued:
            raise RecordImmutableError(f"revision {_committed(obj, 'number')} is {_committed(obj, 'status')}: "
                                       "an issued calculation record cannot be deleted")
        if isinstance(obj, CaseResult):
            revision = _result_is_frozen(session, obj)
            if revision is not None:
                raise RecordImmutableError(f"result {obj.id} is reported by revision {revision.label} "
                                           f"({revision.status}): it cannot be deleted")
    for obj in session.dirty:
        if isinstance(obj, CaseRevision):
            _check_revision_change(obj)
        elif isinstance(obj, CaseResult) and _has_changes(obj):
            revision = _result_is_frozen(session, obj)
            if revision is not None:
                raise RecordImmutableError(f"result {obj.id} is reported by revision {revision.label} "
                                           f"({revision.status}): it cannot be changed")
