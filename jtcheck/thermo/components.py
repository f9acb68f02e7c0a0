"""Component library: pure-component constants with their sources, and binary interaction parameters.

The data live in two files shipped with the package (``jtcheck/thermo/data``):

``components.csv``
    One row per component: identifiers (id, display name, formula, CAS number, synonyms), family,
    molar mass, critical constants and acentric factor, Rackett compressibility :math:`Z_{RA}` for the
    Peneloux volume shift, triple point, and the ideal-gas heat capacity in the Aly-Lee form (see
    :mod:`jtcheck.thermo.idealgas`).  Every group of values carries a source column.  Critical
    constants come from the reference equation of state of the fluid where CoolProp 8.0.0 has one,
    otherwise from the PSRK revision IV table (Horstmann et al. 2005).  The Aly-Lee coefficients are
    least-squares fits (maximum deviation below 0.2 %, stated per row) to the ideal-gas part of the
    same reference equation of state, or to the published ideal-gas correlation named in the row.

``kij.csv``
    Binary interaction parameters ``kij`` of the van der Waals one-fluid mixing rule, by equation of
    state.  The Peng-Robinson values are from Knapp et al. (1982), DECHEMA Chemistry Data Series Vol. VI
    (page numbers per row), taken from the ChemSep PR interaction parameter compilation (Kooijman and Taylor,
    Artistic License 2.0) as distributed with thermo 0.6.1: ``data/DATA_NOTICE.md`` keeps the attribution
    and the licence.  Three entries of that table are left out as outliers
    against their homologous series: nitrogen/n-octane (-0.40), hydrogen/n-butane (-0.397) and
    hydrogen/toluene (-0.51).  No verified Soave-Redlich-Kwong table is included yet, so SRK pairs
    default to zero and are reported as such.  A pair without a published value is set to zero and
    listed in :attr:`KijSet.defaulted`, so that the default can be shown with every result.

Look-ups accept the id, display name, a synonym, the formula or the CAS number, ignoring case,
spaces, underscores and hyphens.  A formula shared by isomers (``C4H10``) is ambiguous and is refused
with the list of choices.
"""
from __future__ import annotations

import csv
import difflib
import hashlib
import io
import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from functools import cache
from importlib import resources
from typing import Any

import numpy as np

from jtcheck.errors import InputError, JtcheckError, UnknownComponentError

__all__ = [
    "COMPONENT_DATA_VERSION",
    "FAMILIES",
    "KIJ_DATA_VERSION",
    "KIJ_EOS",
    "Component",
    "KijSet",
    "all_components",
    "find_component",
    "kij_matrix",
]

FAMILIES = ("hydrocarbon", "inert", "acid gas", "polar", "refrigerant", "aromatic", "other")
"""Allowed values of :attr:`Component.family`."""

KIJ_EOS = ("PR", "SRK", "RK", "VDW")
"""Equations of state :func:`kij_matrix` knows; only PR and SRK have tabulated values."""

_TABULATED_EOS = ("PR", "SRK")

_COMPONENT_FILE = "components.csv"
_KIJ_FILE = "kij.csv"

_COMPONENT_COLUMNS = (
    "id", "name", "formula", "cas", "synonyms", "family", "molar_mass_g_per_mol", "tc_k", "pc_pa",
    "omega", "vc_m3_per_mol", "zc", "crit_source", "zra", "zra_source", "t_triple_k", "p_triple_pa",
    "triple_source", "cp_a", "cp_b", "cp_c", "cp_d", "cp_e", "cp_tmin_k", "cp_tmax_k", "cp_source", "compiled_from",
)
_FLOAT_COLUMNS = (
    "molar_mass_g_per_mol", "tc_k", "pc_pa", "omega", "vc_m3_per_mol", "zc", "zra", "t_triple_k",
    "cp_a", "cp_b", "cp_c", "cp_d", "cp_e", "cp_tmin_k", "cp_tmax_k",
)
_KIJ_COLUMNS = ("eos", "id_1", "id_2", "kij", "source", "compiled_from")


@dataclass(frozen=True, slots=True)
class Component:
    """Constants of one pure component, as read from ``components.csv``.

    Attributes
    ----------
    id : str
        Canonical lowercase name (``"methane"``, ``"carbon dioxide"``, ``"r-134a"``).
    name : str
        Display name.
    formula : str
        Molecular formula (``"CO2"``).
    cas : str
        CAS registry number.
    synonyms : tuple of str
        Other names users type (``"c1"``, ``"nc4"``, ``"meg"``).
    family : str
        One of :data:`FAMILIES`.
    molar_mass_g_per_mol : float
        Molar mass, [g/mol].
    tc_k : float
        Critical temperature, [K].
    pc_pa : float
        Critical pressure, [Pa].
    omega : float
        Acentric factor, [-].
    vc_m3_per_mol : float
        Critical molar volume, [m^3/mol].
    zc : float
        Critical compressibility factor ``pc*vc/(R*tc)``, [-].
    crit_source : str
        Source of tc, pc, omega and vc.
    zra : float
        Rackett compressibility factor Z_RA, [-].
    zra_source : str
        Source of zra.
    t_triple_k : float
        Triple-point temperature, [K].
    p_triple_pa : float or None
        Triple-point pressure, [Pa], None where not tabulated.
    triple_source : str
        Source of the triple point.
    cp_a, cp_b : float
        Aly-Lee ideal-gas heat capacity coefficients A and B, [J/(mol K)].
    cp_c : float
        Aly-Lee coefficient C, [K].
    cp_d : float
        Aly-Lee coefficient D, [J/(mol K)].
    cp_e : float
        Aly-Lee coefficient E, [K].
    cp_tmin_k, cp_tmax_k : float
        Temperature range of the heat capacity fit, [K].
    cp_source : str
        Source of the heat capacity fit, with its range and maximum deviation.
    compiled_from : str
        The compilation the values were taken from (traceability and attribution, ``data/DATA_NOTICE.md``); the
        ``*_source`` fields cite the primary sources.
    """

    id: str
    name: str
    formula: str
    cas: str
    synonyms: tuple[str, ...]
    family: str
    molar_mass_g_per_mol: float
    tc_k: float
    pc_pa: float
    omega: float
    vc_m3_per_mol: float
    zc: float
    crit_source: str
    zra: float
    zra_source: str
    t_triple_k: float
    p_triple_pa: float | None
    triple_source: str
    cp_a: float
    cp_b: float
    cp_c: float
    cp_d: float
    cp_e: float
    cp_tmin_k: float
    cp_tmax_k: float
    cp_source: str
    compiled_from: str = ""

    @property
    def molar_mass_kg_per_mol(self) -> float:
        """Molar mass in SI units, [kg/mol]."""
        return self.molar_mass_g_per_mol * 1e-3


@dataclass(frozen=True, slots=True, eq=False)
class KijSet:
    """Binary interaction parameters of a mixture for one equation of state.

    Attributes
    ----------
    ids : tuple of str
        Component ids, in the order of the matrix rows.
    eos : str
        Equation of state the values belong to (one of :data:`KIJ_EOS`).
    matrix : numpy.ndarray
        Symmetric ``(n, n)`` matrix of kij with a zero diagonal, read-only, [-].
    sources : tuple of (str, str, float, str)
        ``(id_1, id_2, kij, source)`` for every pair taken from the table, ``id_1 < id_2``.
    defaulted : tuple of (str, str)
        ``(id_1, id_2)`` pairs with no published value, set to zero.
    data_version : str
        :data:`KIJ_DATA_VERSION` of the table used.
    """

    ids: tuple[str, ...]
    eos: str
    matrix: np.ndarray
    sources: tuple[tuple[str, str, float, str], ...]
    defaulted: tuple[tuple[str, str], ...]
    data_version: str


# --------------------------------------------------------------------------------------------------
# Loading


@cache
def _data_bytes(filename: str) -> bytes:
    """Raw bytes of a data file shipped in ``jtcheck/thermo/data``."""
    return resources.files(__package__).joinpath("data").joinpath(filename).read_bytes()


def _version(filename: str) -> str:
    return f"{filename} sha256:{hashlib.sha256(_data_bytes(filename)).hexdigest()[:12]}"


COMPONENT_DATA_VERSION: str = _version(_COMPONENT_FILE)
"""Identifies the component data used: ``"components.csv sha256:<first 12 hex digits>"``."""

KIJ_DATA_VERSION: str = _version(_KIJ_FILE)
"""Identifies the interaction parameter table used: ``"kij.csv sha256:<first 12 hex digits>"``."""


def _read_rows(filename: str, columns: Sequence[str]) -> list[dict[str, str]]:
    reader = csv.DictReader(io.StringIO(_data_bytes(filename).decode("utf-8")))
    if tuple(reader.fieldnames or ()) != tuple(columns):
        raise JtcheckError(f"{filename}: columns {reader.fieldnames} differ from the expected "
                           f"{list(columns)}")
    return list(reader)


def _parse_float(filename: str, row_id: str, column: str, text: str) -> float:
    try:
        value = float(text)
    except ValueError:
        raise JtcheckError(f"{filename}: {row_id}: {column} = {text!r} is not a number") from None
    if not math.isfinite(value):
        raise JtcheckError(f"{filename}: {row_id}: {column} = {text!r} is not finite")
    return value


def _component_from_row(row: Mapping[str, str]) -> Component:
    cid = row["id"].strip()
    values: dict[str, Any] = {k: row[k].strip() for k in _COMPONENT_COLUMNS}
    for column in _FLOAT_COLUMNS:
        values[column] = _parse_float(_COMPONENT_FILE, cid, column, values[column])
    p_triple = values["p_triple_pa"]
    values["p_triple_pa"] = _parse_float(_COMPONENT_FILE, cid, "p_triple_pa", p_triple) if p_triple else None
    values["synonyms"] = tuple(s.strip() for s in values["synonyms"].split(";") if s.strip())
    if values["family"] not in FAMILIES:
        raise JtcheckError(f"{_COMPONENT_FILE}: {cid}: family {values['family']!r} is not one of {FAMILIES}")
    return Component(**values)


@cache
def all_components() -> tuple[Component, ...]:
    """All components of the library, in file order.

    Returns
    -------
    tuple of Component
        The components of ``components.csv`` (read once and cached).

    Raises
    ------
    JtcheckError
        If the data file is malformed (wrong columns, non-numeric values, duplicate ids).
    """
    comps = tuple(_component_from_row(r) for r in _read_rows(_COMPONENT_FILE, _COMPONENT_COLUMNS))
    seen: set[str] = set()
    for c in comps:
        if c.id in seen:
            raise JtcheckError(f"{_COMPONENT_FILE}: duplicate id {c.id!r}")
        seen.add(c.id)
    return comps


# --------------------------------------------------------------------------------------------------
# Look-up


def _normalise(key: str) -> str:
    """Case-fold and drop spaces, underscores and hyphens: ``"Carbon-Dioxide"`` -> ``"carbondioxide"``."""
    return "".join(ch for ch in key.casefold() if ch not in " \t_-")


@cache
def _index() -> dict[str, tuple[Component, ...]]:
    """Normalised key -> components it names (more than one for a formula shared by isomers)."""
    index: dict[str, list[Component]] = {}
    for comp in all_components():
        keys = {comp.id, comp.name, comp.formula, comp.cas, *comp.synonyms}
        for key in {_normalise(k) for k in keys if k}:
            index.setdefault(key, []).append(comp)
    return {k: tuple(v) for k, v in index.items()}


def find_component(key: str, field: str = "composition") -> Component:
    """Find a component by id, display name, synonym, formula or CAS number.

    Case, spaces, underscores and hyphens are ignored, so ``"Carbon_Dioxide"``, ``"co2"`` and
    ``"124-38-9"`` all name carbon dioxide, and ``"nbutane"`` names n-butane.

    Parameters
    ----------
    key : str
        The name to look up.
    field : str
        Input field that carried the name, used in error messages.

    Returns
    -------
    Component
        The component named by ``key``.

    Raises
    ------
    UnknownComponentError
        If nothing matches; carries up to three close known names.
    InputError
        If ``key`` is not a non-empty string, or is a formula shared by several components (the
        message lists them).
    """
    if not isinstance(key, str) or not key.strip():
        raise InputError(field, f"a component name must be a non-empty string, got {key!r}")
    norm = _normalise(key.strip())
    index = _index()
    matches = index.get(norm)
    if matches is None:
        raise UnknownComponentError(key, _suggestions(norm), field)
    if len(matches) > 1:
        choices = ", ".join(repr(c.id) for c in matches)
        raise InputError(field, f"{key!r} is ambiguous: it names {choices}; give one of these names instead")
    return matches[0]


def _suggestions(norm: str, n: int = 3) -> tuple[str, ...]:
    """Ids of up to ``n`` components whose names are closest to the normalised key."""
    index = _index()
    out: list[str] = []
    for key in difflib.get_close_matches(norm, list(index), n=10 * n, cutoff=0.6):
        for comp in index[key]:
            if comp.id not in out:
                out.append(comp.id)
    return tuple(out[:n])


# --------------------------------------------------------------------------------------------------
# Binary interaction parameters


@cache
def _kij_table() -> dict[tuple[str, str, str], tuple[float, str]]:
    """(eos, id_1, id_2) -> (kij, source), with id_1 < id_2."""
    known = {c.id for c in all_components()}
    table: dict[tuple[str, str, str], tuple[float, str]] = {}
    for row in _read_rows(_KIJ_FILE, _KIJ_COLUMNS):
        eos, id_1, id_2 = row["eos"].strip().upper(), row["id_1"].strip(), row["id_2"].strip()
        where = f"{eos} {id_1}/{id_2}"
        if eos not in _TABULATED_EOS:
            raise JtcheckError(f"{_KIJ_FILE}: {where}: eos must be one of {_TABULATED_EOS}")
        if id_1 not in known or id_2 not in known:
            raise JtcheckError(f"{_KIJ_FILE}: {where}: id not in {_COMPONENT_FILE}")
        if not id_1 < id_2:
            raise JtcheckError(f"{_KIJ_FILE}: {where}: id_1 must sort before id_2")
        if (eos, id_1, id_2) in table:
            raise JtcheckError(f"{_KIJ_FILE}: {where}: duplicate pair")
        source = row["source"].strip()
        if not source:
            raise JtcheckError(f"{_KIJ_FILE}: {where}: empty source")
        table[(eos, id_1, id_2)] = (_parse_float(_KIJ_FILE, where, "kij", row["kij"]), source)
    return table


def kij_matrix(ids: Sequence[str], eos: str) -> KijSet:
    """Binary interaction parameter matrix of a mixture for one cubic equation of state.

    Parameters
    ----------
    ids : sequence of str
        Components of the mixture, in order; any name :func:`find_component` accepts.
    eos : str or enum
        ``"PR"``, ``"SRK"``, ``"RK"`` or ``"VDW"`` (case-insensitive; an Enum member whose value
        is one of these is accepted too).  RK and VDW have no tabulated values: every pair is zero
        and listed as defaulted.

    Returns
    -------
    KijSet
        The symmetric matrix with a zero diagonal, the tabulated pairs with their sources, and the
        pairs set to zero for want of a published value.

    Raises
    ------
    InputError
        If ``eos`` is not a known equation of state, or a name is not in the library.
    """
    eos_key = str(getattr(eos, "value", eos)).strip().upper()
    if eos_key not in KIJ_EOS:
        raise InputError("eos", f"unknown equation of state {eos!r}; allowed: {', '.join(KIJ_EOS)}")
    comp_ids = tuple(find_component(k, field="components").id for k in ids)
    n = len(comp_ids)
    matrix = np.zeros((n, n))
    sources: list[tuple[str, str, float, str]] = []
    defaulted: list[tuple[str, str]] = []
    table = _kij_table() if eos_key in _TABULATED_EOS else {}
    for i in range(n):
        for j in range(i + 1, n):
            if comp_ids[i] == comp_ids[j]:
                continue
            id_1, id_2 = sorted((comp_ids[i], comp_ids[j]))
            entry = table.get((eos_key, id_1, id_2))
            if entry is None:
                defaulted.append((id_1, id_2))
                continue
            kij, source = entry
            matrix[i, j] = matrix[j, i] = kij
            sources.append((id_1, id_2, kij, source))
    matrix.flags.writeable = False
    return KijSet(ids=comp_ids, eos=eos_key, matrix=matrix, sources=tuple(sources),
                  defaulted=tuple(defaulted), data_version=KIJ_DATA_VERSION)
