"""Read a letdown list (CSV or XLSX, laid out as :mod:`jtcheck.batch.layout` says) into checked SI cases.

:func:`read_cases` checks every cell and reports every problem, each with the row number as the
spreadsheet shows it (the header is row 1, the first case row 2) and the column header as written in
the file.  A file with any bad cell imports nothing, unless ``keep_going=True``: then the good rows are
returned, and :func:`bad_rows_file` gives the bad ones as a CSV with a ``problems`` column to fix and
read again.  Problems of the whole file (too large, not a CSV or XLSX, no rows) raise
:class:`~jtcheck.errors.InputError` with the field ``file``.

Units are converted by :mod:`jtcheck.units` (pint); the cases hold SI values only.  Rows that name the
same fluid with the same equation of state share one :class:`~jtcheck.thermo.fluid.Fluid` object, so
the batch screening can group them.
"""
from __future__ import annotations

import csv
import difflib
import io
import math
import os
import re
from collections.abc import Iterable, Mapping
from dataclasses import dataclass, field, replace
from datetime import date, datetime, time
from pathlib import Path
from typing import Any, BinaryIO

from jtcheck import itemlists
from jtcheck.batch.cells import formula_safe, unquote_cell
from jtcheck.batch.layout import (
    ABSOLUTE_PRESSURE,
    CHOICE,
    COLUMN_BY_KEY,
    COLUMNS,
    EOS_CHOICES,
    ITEMS,
    KIND_COLUMNS,
    KINDS,
    MASS_FLOW,
    MASS_FLOW_UNIT,
    MAX_BYTES,
    MAX_CELLS,
    MAX_COLUMNS,
    MAX_ROWS,
    MAX_UNPACKED_BYTES,
    NO_WORDS,
    PARSE_MEMORY_MB,
    PARSE_TIMEOUT_S,
    PERCENT,
    PRESSURE,
    PRESSURE_DIFFERENCE,
    PROBLEMS_HEADER,
    REQUIRED_KEYS,
    TEMPERATURE,
    TEMPERATURE_DIFFERENCE,
    WATER_CONTENT,
    YES_NO,
    YES_WORDS,
    Column,
    find_column,
    normalise_name,
    split_header,
    unit_problem,
)
from jtcheck.cases import kind_of
from jtcheck.cases.batch import kind_hooks
from jtcheck.cases.fields import MASS_FLOW_RANGE_KG_PER_S, WATER_CONTENT_RANGE_KG_PER_SM3
from jtcheck.cases.letdown import COINCIDENT_OUTLET
from jtcheck.errors import InputError, UnknownComponentError
from jtcheck.screening.batch import BatchCase
from jtcheck.screening.cold_metal import ColdLimits, material_limit_working
from jtcheck.screening.mdmt import CurveTable, MaterialColdSpec
from jtcheck.thermo.composition import normalise_composition
from jtcheck.thermo.fluid import Fluid
from jtcheck.units import (
    MATERIAL_OPTION_OF,
    P_ATM_DEFAULT_PA,
    format_temperature,
    material_options,
    parse_pressure,
    parse_temperature,
    parse_temperature_difference,
    parse_water_content,
    temperature_unit_of,
)

#: Range of the atmospheric pressure column [Pa abs].
P_ATM_RANGE_PA = (0.3e5, 2.0e5)
#: Highest inlet temperature the heat-capacity data cover [K].
T_IN_MAX_K = 2000.0

#: Conversions remembered per file (letdown lists repeat their values: outlet pressures, MDMTs).
_MEMO_SIZE = 50_000
_NUMBER = re.compile(r"^[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?$")
_DECIMAL_COMMA = re.compile(r"^\s*([-+]?\d*),(\d+)(\s*[A-Za-z°_]*)\s*$")
_UNIT_AT_END = re.compile(r"([A-Za-z°_]+)\s*$")
_CANONICAL_UNITS = {
    **{u.lower(): u for u in ("Pa", "kPa", "MPa", "bar", "bara", "barg", "mbar", "kPag", "MPag", "psi", "psia",
                              "psig", "atm", "kPaa", "MPaa")},
    "k": "K", "degc": "degC", "c": "degC", "°c": "degC", "degf": "degF", "f": "degF", "°f": "degF",
    "degr": "degR", "r": "degR", "delta_degc": "degC", "delta_degf": "degF",
}


# ---------------------------------------------------------------------------------------------
# results of a read
# ---------------------------------------------------------------------------------------------

@dataclass(frozen=True)
class RowProblem:
    """Something about one cell (or the header, row 1): the base of :class:`RowError` and :class:`RowWarning`.

    Attributes
    ----------
    row : int
        Row number as the spreadsheet shows it: the header is row 1, the first case row 2.
    column : str
        The column header as written in the file (the layout's name when the column is missing).
    value : str
        The cell as read ("" for an empty cell).
    reason : str
        What is wrong and what is allowed.
    """

    row: int
    column: str
    value: str
    reason: str

    def __str__(self) -> str:
        where = f"row {self.row}" + (f", column '{self.column}'" if self.column else "")
        return f"{where}: {self.reason}"


@dataclass(frozen=True)
class RowError(RowProblem):
    """A bad cell (or a header problem): the row is not read."""


@dataclass(frozen=True)
class RowWarning(RowProblem):
    """Something to know about a row that does not stop it being read."""


@dataclass(frozen=True)
class CaseSource:
    """Where a case came from, for the results file.

    Attributes
    ----------
    row : int
        File row (header = row 1).
    fluid_name : str
        The library fluid's name, or the inline composition as written.
    fluid_from_library : bool
    eos : str
        The equation of state used (``PR``, ``SRK``).
    p_atm_pa : float
        Atmospheric pressure the row's gauge pressures were converted with [Pa].
    cells : dict
        Column key -> the cell as read (text).
    """

    row: int
    fluid_name: str
    fluid_from_library: bool
    eos: str
    p_atm_pa: float
    cells: dict[str, str]


@dataclass(frozen=True)
class BadRow:
    """A row with at least one error: its cells as read (aligned with :attr:`ReadResult.header`) and the problems."""

    row: int
    cells: tuple[str, ...]
    problems: tuple[RowError, ...]


@dataclass
class ReadResult:
    """What :func:`read_cases` found.

    Attributes
    ----------
    cases : list of BatchCase
        The cases to screen, in file order (SI).  Empty when any row has an error, unless the file was
        read with ``keep_going=True`` (then: the good rows).
    errors : list of RowError
        Every bad cell (and header problem), in file order.
    warnings : list of RowWarning
        Rows read with a remark (no cold limit, duplicate tag, composition normalised, unknown column).
    units : dict
        Column key -> the display unit of that column (the header's unit, else the unit the cells
        carried, else a consistent default); results are written in these units.
    sources : dict
        File row -> :class:`CaseSource` of every returned case.
    header : list of str
        The header cells as written (a ``problems`` column of an earlier bad-rows file left out).
    headers : dict
        Column key -> header text as written, for the columns present.
    bad_rows : list of BadRow
    n_rows : int
        Non-empty case rows in the file.
    filename : str
    """

    cases: list[BatchCase]
    errors: list[RowError]
    warnings: list[RowWarning]
    units: dict[str, str]
    sources: dict[int, CaseSource]
    header: list[str]
    headers: dict[str, str]
    bad_rows: list[BadRow]
    n_rows: int
    filename: str = ""

    @property
    def ok(self) -> bool:
        """No errors: every row was read."""
        return not self.errors

    def source(self, case: BatchCase) -> CaseSource | None:
        return self.sources.get(case.row)

    def column_header(self, key: str) -> str:
        """The header of column ``key`` as in the file, or as the layout writes it in the file's unit."""
        col = COLUMN_BY_KEY[key]
        return self.headers.get(key) or col.header(self.units.get(key))


# ---------------------------------------------------------------------------------------------
# raw rows from CSV and XLSX
# ---------------------------------------------------------------------------------------------

def _cell_text(value: Any) -> str:
    """A cell as text: numbers without a spurious ``.0``, booleans as yes/no."""
    if value is None:
        return ""
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, int):
        return str(value)
    if isinstance(value, float):
        if math.isfinite(value) and value == int(value) and abs(value) < 1e15:
            return str(int(value))
        return repr(value)
    if isinstance(value, (datetime, date, time)):
        return value.isoformat()
    return unquote_cell(str(value).strip())


def _is_number(value: Any) -> bool:
    return isinstance(value, (int, float)) and not isinstance(value, bool)


def _source_bytes(source: str | os.PathLike[str] | bytes | bytearray | BinaryIO, filename: str | None
                  ) -> tuple[bytes, str]:
    if isinstance(source, (bytes, bytearray, memoryview)):
        data = bytes(source)
        if len(data) > MAX_BYTES:
            raise InputError("file", f"the file is {len(data) / 1e6:.1f} MB; at most {MAX_BYTES // (1024 * 1024)} MB "
                                     "is accepted (split the list)")
        return data, filename or ""
    if hasattr(source, "read"):
        data = source.read(MAX_BYTES + 1)   # type: ignore[union-attr]
        if len(data) > MAX_BYTES:
            raise InputError("file", f"the file is over {MAX_BYTES // (1024 * 1024)} MB; split the list")
        return data, filename or str(getattr(source, "name", "") or "")
    path = Path(source)   # type: ignore[arg-type]
    if not path.is_file():
        raise InputError("file", f"{str(path)!r} is not a file")
    size = path.stat().st_size
    if size > MAX_BYTES:
        raise InputError("file", f"{path.name} is {size / 1e6:.1f} MB; at most {MAX_BYTES // (1024 * 1024)} MB is "
                                 "accepted (split the list)")
    return path.read_bytes(), filename or path.name


def _file_format(data: bytes, filename: str) -> str:
    suffix = Path(filename).suffix.lower() if filename else ""
    if suffix in (".csv", ".txt"):
        return "csv"
    if suffix in (".xlsx", ".xlsm"):
        return "xlsx"
    if suffix in (".xls", ".ods", ".numbers"):
        raise InputError("file", f"{suffix} files are not read; save the list as .xlsx or as CSV (UTF-8)")
    if suffix:
        raise InputError("file", f"{filename!r}: give a .csv or .xlsx file")
    return "xlsx" if data[:4] == b"PK\x03\x04" else "csv"


def _too_many_rows() -> InputError:
    return InputError("file", f"more than {MAX_ROWS:,} case rows; split the list into files of at most "
                              f"{MAX_ROWS:,} rows")


def _csv_rows(data: bytes) -> tuple[list[tuple[int, list[Any]]], str, list[str]]:
    notes: list[str] = []
    try:
        text = data.decode("utf-8-sig")
    except UnicodeDecodeError:
        text = data.decode("cp1252", errors="replace")
        notes.append("the file is not UTF-8; it was read as Windows-1252 (save it as 'CSV UTF-8' to be sure "
                     "of special characters)")
    first = text.split("\n", 1)[0]
    delimiter = ";" if first.count(";") > first.count(",") else ","
    rows: list[tuple[int, list[Any]]] = []
    n = 0
    try:
        for k, cells in enumerate(csv.reader(io.StringIO(text, newline=""), delimiter=delimiter), start=1):
            if any(c.strip() for c in cells):
                n += 1
                if n > MAX_ROWS + 1:
                    raise _too_many_rows()
            rows.append((k, cells))
    except csv.Error as exc:
        raise InputError("file", f"not a readable CSV file: {exc}") from None
    return rows, delimiter, notes


def check_archive(data: bytes) -> None:
    """Refuse an XLSX whose parts unpack to more than :data:`MAX_UNPACKED_BYTES` (read from the archive's
    directory, before anything is unpacked; Python's zipfile never unpacks more than a part declares)."""
    import zipfile

    try:
        with zipfile.ZipFile(io.BytesIO(data)) as archive:
            infos = archive.infolist()
    except (zipfile.BadZipFile, OSError, ValueError) as exc:
        raise InputError("file", f"not a readable XLSX workbook ({exc.__class__.__name__}: {exc}); save the list "
                                 "as .xlsx or as CSV") from None
    if len(infos) > 10_000:
        raise InputError("file", f"the workbook has {len(infos):,} parts; at most 10,000 are read")
    unpacked = sum(i.file_size for i in infos)
    if unpacked > MAX_UNPACKED_BYTES:
        raise InputError("file", f"the workbook unpacks to {unpacked / 1e6:,.0f} MB; at most "
                                 f"{MAX_UNPACKED_BYTES // (1024 * 1024)} MB unpacked is read (delete unused sheets "
                                 "and formatting, or save the list as CSV)")


def _parse_memory_mb() -> int:
    raw = os.environ.get("JTCHECK_PARSE_MEMORY_MB", "").strip()
    return int(raw) if raw.isdigit() and int(raw) >= 128 else PARSE_MEMORY_MB


def _xlsx_rows(data: bytes) -> list[tuple[int, list[Any]]]:
    """The first sheet's rows, read in a process of its own (:mod:`jtcheck.batch.xlsx_child`) with a memory
    ceiling, after the archive's unpacked size was checked; InputError naming the limit a workbook passes."""
    import pickle
    import subprocess
    import sys

    check_archive(data)
    memory_mb = _parse_memory_mb()
    script = Path(__file__).with_name("xlsx_child.py")
    try:
        done = subprocess.run([sys.executable, "-I", str(script), str(MAX_ROWS), str(MAX_COLUMNS), str(MAX_CELLS),
                               str(memory_mb)], input=data, capture_output=True, timeout=PARSE_TIMEOUT_S, check=False)
    except subprocess.TimeoutExpired:
        raise InputError("file", f"reading the workbook took longer than {PARSE_TIMEOUT_S} s; save the list as CSV "
                                 "or split it") from None
    if done.returncode == 3 or (done.returncode != 0 and b"MemoryError" in done.stderr):
        raise InputError("file", f"reading the workbook needs more than {memory_mb} MB of memory (the limit); "
                                 "delete unused sheets and formatting, save the list as CSV or split it")
    if done.returncode != 0 or not done.stdout:
        tail = done.stderr.decode("utf-8", "replace").strip().splitlines()[-1:] or ["no answer"]
        raise InputError("file", f"the workbook could not be read ({tail[0][:200]}); save the list as .xlsx or as CSV")
    kind, payload = pickle.loads(done.stdout)   # noqa: S301 - our own child process, plain values only
    if kind == "refused":
        raise InputError("file", payload)
    if kind == "unreadable":
        raise InputError("file", f"not a readable XLSX workbook ({payload}); save the list as .xlsx or as CSV")
    if sum(1 for _, cells in payload if any(v is not None and _cell_text(v) != "" for v in cells)) > MAX_ROWS + 1:
        raise _too_many_rows()
    return payload


def _raw_rows(source, filename) -> tuple[list[tuple[int, list[Any]]], str, str | None, list[str], str]:
    data, name = _source_bytes(source, filename)
    fmt = _file_format(data, name)
    if not data.strip():
        raise InputError("file", "the file is empty; row 1 must hold the column headers")
    if fmt == "csv":
        rows, delimiter, notes = _csv_rows(data)
        return rows, fmt, delimiter, notes, name
    return _xlsx_rows(data), fmt, None, [], name


# ---------------------------------------------------------------------------------------------
# cells
# ---------------------------------------------------------------------------------------------

class _CellError(Exception):
    def __init__(self, reason: str):
        super().__init__(reason)
        self.reason = reason


def _unit_word(text: str) -> str:
    m = _UNIT_AT_END.search(text)
    return m.group(1) if m else ""


def canonical_unit(unit: str) -> str:
    """Tidy spelling of a unit word (``BARG`` -> ``barg``, ``C`` -> ``degC``); unknown words unchanged."""
    return _CANONICAL_UNITS.get(unit.lower(), unit)


def library_key(name: str) -> str:
    """How fluid names are compared: letter case and extra spaces ignored."""
    return " ".join(str(name).casefold().split())


class _Reader:
    """Per-file state: the column map, memos of conversions and of fluids."""

    def __init__(self, library: Mapping[str, Fluid] | None, decimal_comma: bool):
        self.library = library
        self.library_names = {library_key(n): n for n in (library or {})}
        self.decimal_comma = decimal_comma
        self._memo: dict[tuple[str, str, float], float | str] = {}
        self._fluids: dict[tuple[Any, ...], Fluid | str] = {}
        self._inline: dict[tuple[str, str], tuple[Fluid, tuple[str, ...]] | str] = {}
        self.fluid_notes_done: set[int] = set()
        #: the MDMT curve table for rows with a material by its curve (None: the shipped one)
        self.mdmt_table: CurveTable | None = None

    # -- quantities --------------------------------------------------------------------------
    def quantity_text(self, col: Column, raw: Any, header_unit: str | None) -> str:
        """The cell as ``number unit`` text (the header's unit when the cell has none)."""
        if _is_number(raw):
            value = float(raw)
            if not math.isfinite(value):
                raise _CellError(f"{raw!r} is not a finite number")
            text = _cell_text(value)
        else:
            text = _cell_text(raw)
            if self.decimal_comma:
                m = _DECIMAL_COMMA.match(text)
                if m:
                    text = f"{m.group(1) or '0'}.{m.group(2)}{m.group(3)}"
            if not _NUMBER.match(text):
                return text             # carries its own unit (or is not a number: the parser says so)
        if not header_unit:
            raise _CellError(f"{_cell_text(raw)!r} has no unit; give it in the header, e.g. "
                             f"'{col.header()}', or in the cell, e.g. '{text} {col.unit}'")
        return f"{text} {header_unit}"

    def quantity(self, col: Column, text: str, p_atm_pa: float) -> float:
        key = (col.quantity, text, p_atm_pa if col.quantity == PRESSURE else 0.0)
        hit = self._memo.get(key)
        if hit is None:
            try:
                hit = self._convert(col, text, p_atm_pa)
            except InputError as exc:
                hit = exc.message
            if len(self._memo) >= _MEMO_SIZE:      # repeated values are the common case; bound the memory
                self._memo.clear()
            self._memo[key] = hit
        if isinstance(hit, str):
            raise _CellError(hit)
        return hit

    @staticmethod
    def _convert(col: Column, text: str, p_atm_pa: float) -> float:
        if col.quantity == PRESSURE:
            return parse_pressure(text, col.key, p_atm_pa).pa
        if col.quantity == TEMPERATURE:
            return parse_temperature(text, col.key)
        if col.quantity == TEMPERATURE_DIFFERENCE:
            return parse_temperature_difference(text, col.key)
        if col.quantity == PRESSURE_DIFFERENCE:    # a difference: gauge or absolute makes no difference
            return parse_pressure(text, col.key, 0.0).pa
        if col.quantity == PERCENT:
            number, _, rest = text.strip().partition("%")
            try:
                value = float(number)
            except ValueError:
                raise InputError(col.key, f"{text!r} is not a percentage (e.g. 10 with the header "
                                          f"'{col.name} [%]', or '10 %')") from None
            if rest.strip() or not math.isfinite(value):
                raise InputError(col.key, f"{text!r} is not a percentage (e.g. '10 %')")
            return value / 100.0
        if col.quantity == MASS_FLOW:
            number = text.strip()
            if number.endswith(MASS_FLOW_UNIT):
                number = number[: -len(MASS_FLOW_UNIT)].strip()
            try:
                value = float(number)
            except ValueError:
                raise InputError(col.key, f"{text!r} is not a mass flow in {MASS_FLOW_UNIT} (e.g. 12 with the header "
                                          f"'{col.name} [{MASS_FLOW_UNIT}]', or '12 {MASS_FLOW_UNIT}')") from None
            lo, hi, _ = MASS_FLOW_RANGE_KG_PER_S
            if not (math.isfinite(value) and lo < value < hi):
                raise InputError(col.key, f"{text!r}: the mass flow must lie above {lo:g} and below {hi:g} "
                                          f"{MASS_FLOW_UNIT}")
            return value
        if col.quantity == WATER_CONTENT:
            value, _ = parse_water_content(text, col.key)
            lo, hi, _ = WATER_CONTENT_RANGE_KG_PER_SM3
            if not lo < value < hi:
                raise InputError(col.key, f"{text!r}: the water content must lie above 0 and below {hi * 1e6:g} "
                                          "mg/Sm3")
            return value
        if col.quantity == ABSOLUTE_PRESSURE:
            p = parse_pressure(text, col.key)
            if p.gauge:
                raise InputError(col.key, f"{text!r}: give the atmospheric pressure in an absolute unit (bar, kPa, "
                                          "psia)")
            lo, hi = P_ATM_RANGE_PA
            if not lo <= p.pa <= hi:
                raise InputError(col.key, f"{text!r}: the atmospheric pressure must lie between {lo / 1e5:g} and "
                                          f"{hi / 1e5:g} bar")
            return p.pa
        raise AssertionError(col.quantity)   # pragma: no cover

    # -- fluids ------------------------------------------------------------------------------
    def fluid(self, text: str, eos: str | None) -> tuple[Fluid, str, bool, tuple[str, ...]]:
        """(Fluid, name, from library?, composition notes) for a fluid cell; raises _CellError."""
        lib_name = self.library_names.get(library_key(text))
        if lib_name is not None:
            assert self.library is not None
            key: tuple[Any, ...] = ("library", lib_name, eos)
            hit = self._fluids.get(key)
            if hit is None:
                try:
                    base = self.library[lib_name]
                    hit = base if eos is None or base.eos.value == eos else base.with_eos(eos)
                except InputError as exc:
                    hit = f"library fluid {lib_name!r}: {exc.message}"
                self._fluids[key] = hit
            if isinstance(hit, str):
                raise _CellError(hit)
            return hit, lib_name, True, ()
        if "=" in text or ":" in text:
            return self._inline_fluid(text, eos or "PR")
        raise _CellError(self._unknown_fluid(text))

    def _inline_fluid(self, text: str, eos: str) -> tuple[Fluid, str, bool, tuple[str, ...]]:
        memo = self._inline.get((text, eos))
        if memo is None:
            try:
                comp = normalise_composition(text, "fluid")
                # the same gas written in another order or in percent is the same fluid
                key = ("inline", tuple(sorted((i, round(float(z), 12)) for i, z in zip(comp.ids, comp.zs,
                                                                                       strict=True))), eos)
                fl = self._fluids.get(key)
                if fl is None:
                    fl = Fluid(list(zip(comp.ids, (float(z) for z in comp.zs), strict=True)), eos=eos)
                    self._fluids[key] = fl
                assert isinstance(fl, Fluid)
                memo = (fl, tuple(comp.warnings))
            except UnknownComponentError as exc:
                memo = exc.message
            except InputError as exc:
                memo = exc.message
            self._inline[(text, eos)] = memo
        if isinstance(memo, str):
            raise _CellError(memo)
        return memo[0], text, False, memo[1]

    def _unknown_fluid(self, text: str) -> str:
        msg = f"unknown fluid {text!r}"
        if self.library_names:
            close = difflib.get_close_matches(library_key(text), list(self.library_names), n=3, cutoff=0.6)
            if close:
                msg += f"; close names in the fluid library: {', '.join(repr(self.library_names[c]) for c in close)}"
            else:
                msg += f"; it is not among the {len(self.library_names)} fluids of the fluid library"
        else:
            msg += ("; no fluid library is available (no case register reached), so only inline compositions "
                    "are read")
        msg += "; or give an inline composition such as 'methane=0.9,ethane=0.1'"
        try:
            from jtcheck.thermo.components import find_component

            comp = find_component(text, "fluid")
        except InputError:
            pass
        else:
            msg += f" (for pure {comp.name}: '{text}=1')"
        return msg


def _choice(col: Column, text: str) -> str:
    if col.key == "kind":
        word = text.strip().lower().replace(" ", "_").replace("-", "_")
        if word in KINDS:
            return word
        if word == "vessel_depressuring":   # a run in time, not a row of a letdown list
            raise _CellError("vessel depressuring cases are not taken in letdown lists: enter each as a case in the "
                             f"register (web form or JSON API); allowed here: {', '.join(KINDS)}")
        raise _CellError(f"{text!r} is not a kind of letdown; allowed: {', '.join(KINDS)}")
    word = text.strip().upper().replace("-", "").replace(" ", "")
    word = {"PENGROBINSON": "PR", "SOAVEREDLICHKWONG": "SRK", "GERG": "GERG2008"}.get(word, word)
    if word in EOS_CHOICES:
        return word
    raise _CellError(f"{text!r} is not an equation of state for a batch; allowed: {', '.join(EOS_CHOICES)}")


def _yes_no(text: str) -> bool:
    word = text.strip().lower()
    if word in YES_WORDS:
        return True
    if word in NO_WORDS:
        return False
    raise _CellError(f"{text!r} is not yes or no")


# ---------------------------------------------------------------------------------------------
# the reading
# ---------------------------------------------------------------------------------------------

@dataclass
class _Header:
    index: dict[str, int] = field(default_factory=dict)       # key -> column index
    unit: dict[str, str | None] = field(default_factory=dict)
    text: dict[str, str] = field(default_factory=dict)
    cells: list[str] = field(default_factory=list)
    keep: list[int] = field(default_factory=list)              # indexes written back to a bad-rows file
    errors: list[RowError] = field(default_factory=list)
    warnings: list[RowWarning] = field(default_factory=list)


def _read_header(cells: list[Any]) -> _Header:
    h = _Header(cells=[_cell_text(c) for c in cells])
    names = [c.name for c in COLUMNS]
    for i, text in enumerate(h.cells):
        if not text:
            continue
        name, unit = split_header(text)
        if name == PROBLEMS_HEADER:
            continue
        h.keep.append(i)
        col = find_column(text)
        if col is None:
            close = difflib.get_close_matches(name, [normalise_name(n) for n in names], n=1, cutoff=0.6)
            hint = ""
            if close:
                match = next(c for c in COLUMNS if normalise_name(c.name) == close[0])
                hint = f"; did you mean '{match.generic_header}'?"
            h.warnings.append(RowWarning(1, text, text, f"not a column of the layout: ignored{hint}"))
            continue
        if col.key in h.index:
            h.errors.append(RowError(1, text, text, f"the column {col.name!r} appears twice (also "
                                                    f"'{h.text[col.key]}'); keep one"))
            continue
        problem = unit_problem(col, unit)
        if problem:
            h.errors.append(RowError(1, text, text, problem))
            continue
        h.index[col.key] = i
        h.unit[col.key] = unit or None
        h.text[col.key] = text
    for key in REQUIRED_KEYS:
        col = COLUMN_BY_KEY[key]
        if key not in h.index and not any(e.column and split_header(e.column)[0] == normalise_name(col.name)
                                          for e in h.errors):
            h.errors.append(RowError(1, col.generic_header, "", f"the required column {col.name!r} is missing; add "
                                                                 f"a column headed e.g. '{col.header()}'"))
    return h


def read_cases(path_or_bytes: str | os.PathLike[str] | bytes | BinaryIO, *, filename: str | None = None,
               fluid_library: Mapping[str, Fluid] | None = None, keep_going: bool = False,
               defaults: Mapping[str, str] | None = None, mdmt_table: CurveTable | None = None) -> ReadResult:
    """Read and check a letdown list.

    Parameters
    ----------
    path_or_bytes : path, bytes or binary file
        A ``.csv`` or ``.xlsx`` file (see :mod:`jtcheck.batch.layout`).
    filename : str, optional
        The file's name, to tell CSV from XLSX when bytes are given (without it, the content decides)
        and for messages.
    fluid_library : mapping, optional
        Fluid name -> Fluid, for the ``fluid`` cells that name a fluid (names compared without regard
        to letter case and extra spaces).  Without it, only inline compositions are read.
    keep_going : bool
        Return the good rows even when other rows have errors.
    mdmt_table : CurveTable, optional
        The MDMT curve table for rows whose material is given by its exemption curve (default: the shipped one;
        the register passes its own).
    defaults : mapping, optional
        Column key -> text with unit (``{"cold_limit": "-29 degC", "margin": "5 K"}``) for cells left empty
        (and for columns the file does not have); a row's own cells win.  Each value must parse.

    Returns
    -------
    ReadResult

    Raises
    ------
    InputError
        ``file``: not a CSV or XLSX file, larger than 50 MB or 200,000 rows, empty, or no case rows;
        ``defaults``: a default that does not parse.
    """
    rows, _fmt, delimiter, notes, name = _raw_rows(path_or_bytes, filename)
    defaults = dict(defaults or {})
    for key in defaults:
        if key not in COLUMN_BY_KEY:
            raise InputError("defaults", f"{key!r} is not a column key; allowed: {', '.join(COLUMN_BY_KEY)}")
    first = next(((k, cells) for k, cells in rows if any(_cell_text(c) for c in cells)), None)
    if first is None:
        raise InputError("file", "the file is empty; row 1 must hold the column headers")
    if first[0] != 1:
        raise InputError("file", f"row 1 is empty; the column headers must be in row 1 (the first filled row is "
                                 f"row {first[0]})")
    header = _read_header(first[1])
    reader = _Reader(fluid_library, decimal_comma=delimiter == ";")
    reader.mdmt_table = mdmt_table
    _check_defaults(reader, defaults)
    warnings: list[RowWarning] = [RowWarning(1, "", "", n) for n in notes] + header.warnings
    data = [(k, cells) for k, cells in rows[1:] if any(_cell_text(c) for c in cells)]
    if not data:
        raise InputError("file", "no case rows below the header (row 1)")
    if len(data) > MAX_ROWS:
        raise _too_many_rows()
    units = _display_units(header, data, defaults)
    kept_header = [header.cells[i] for i in header.keep]
    if header.errors:
        problem = RowError(1, "", "", "not checked: the header (row 1) has errors")
        bad = [BadRow(k, tuple(_cell_text(cells[i]) if i < len(cells) else "" for i in header.keep), (problem,))
               for k, cells in data]
        return ReadResult([], list(header.errors), warnings, units, {}, kept_header, dict(header.text), bad,
                          len(data), name)
    cases: list[BatchCase] = []
    sources: dict[int, CaseSource] = {}
    errors: list[RowError] = []
    bad_rows: list[BadRow] = []
    first_tag: dict[str, int] = {}
    tag_index = header.index["tag"]
    for k, cells in data:
        case, source, row_errors, row_warnings = _read_row(reader, header, k, cells, defaults)
        tag = _cell_text(cells[tag_index]) if tag_index < len(cells) else ""
        if tag and tag.casefold() in first_tag:
            row_warnings.insert(0, RowWarning(k, header.text["tag"], tag,
                                              f"tag {tag!r} is also on row {first_tag[tag.casefold()]}"))
        elif tag:
            first_tag[tag.casefold()] = k
        warnings += row_warnings
        if row_errors:
            errors += row_errors
            bad_rows.append(BadRow(k, tuple(_cell_text(cells[i]) if i < len(cells) else "" for i in header.keep),
                                   tuple(row_errors)))
            continue
        assert case is not None and source is not None
        cases.append(case)
        sources[k] = source
    if errors and not keep_going:
        cases, sources = [], {}
    return ReadResult(cases, errors, warnings, units, sources, kept_header, dict(header.text), bad_rows, len(data),
                      name)


def _check_defaults(reader: _Reader, defaults: Mapping[str, str]) -> None:
    """Each default must parse on its own (a quantity with its unit, a choice, yes/no)."""
    for key, text in defaults.items():
        col = COLUMN_BY_KEY[key]
        try:
            if col.has_unit:
                reader.quantity(col, reader.quantity_text(col, text, None), P_ATM_DEFAULT_PA)
            elif col.quantity == CHOICE:
                _choice(col, str(text))
            elif col.quantity == YES_NO:
                _yes_no(str(text))
        except _CellError as exc:
            raise InputError(key, exc.reason) from None


def _display_units(header: _Header, data: list[tuple[int, list[Any]]], defaults: Mapping[str, str]) -> dict[str, str]:
    units: dict[str, str] = {}
    for col in COLUMNS:
        if not col.has_unit:
            continue
        unit = header.unit.get(col.key)
        if not unit and col.key in header.index:
            i = header.index[col.key]
            for _, cells in data:
                if i < len(cells) and not _is_number(cells[i]):
                    word = _unit_word(_cell_text(cells[i]))
                    if word:
                        unit = word
                        break
        if not unit and defaults.get(col.key):
            unit = _unit_word(str(defaults[col.key])) or None
        if unit:
            units[col.key] = canonical_unit(unit)
    p_unit = units.get("inlet_pressure") or units.get("outlet_pressure") or "bara"
    t_unit = units.get("inlet_temperature") or "degC"
    units.setdefault("inlet_pressure", p_unit)
    units.setdefault("outlet_pressure", p_unit)
    units.setdefault("max_inlet_pressure", units["inlet_pressure"])
    units.setdefault("inlet_temperature", t_unit)
    units.setdefault("min_inlet_temperature", t_unit)
    units.setdefault("mdmt", t_unit)
    units.setdefault("cold_limit", units["mdmt"])
    units.setdefault("margin", "degF" if t_unit == "degF" else "K")
    units.setdefault("atmospheric_pressure", "psia" if p_unit.lower().startswith("psi") else "bar")
    return units


_ITEM_READERS = {"header_sections": itemlists.header_sections, "settle_out_volumes": itemlists.settle_out_volumes,
                 "cases_off": itemlists.credible_off, "other_sources": itemlists.other_sources}
#: Register keys of the letdown columns, for the case kind's checks (its errors are shown on these columns).
_COLUMN_OF_KEY = {"inlet_pressure_pa": "inlet_pressure", "inlet_temperature_k": "inlet_temperature",
                  "outlet_pressure_pa": "outlet_pressure", "inlet_temperature_min_k": "min_inlet_temperature",
                  "inlet_pressure_max_pa": "max_inlet_pressure", **{v: k for k, v in KIND_COLUMNS.items()}}


def _material_spec(texts: Mapping[str, str], mdmt_k: float | None, err: Any) -> MaterialColdSpec | None:
    """The row's downstream material by its exemption curve (None without one); the MDMT cell is its typed limit."""
    try:
        return MaterialColdSpec.from_options(material_options(texts), "material of the row", mdmt_k)
    except InputError as exc:
        err(MATERIAL_OPTION_OF.get(exc.field, exc.field), exc.message)
        return None


def _kind_extras(texts: Mapping[str, str], si: Mapping[str, Any], p_atm_pa: float, err: Any) -> dict[str, Any]:
    """The row's relief-valve and generated-case inputs (register keys, SI); only those given."""
    out: dict[str, Any] = {}
    for col_key, key in KIND_COLUMNS.items():
        col = COLUMN_BY_KEY[col_key]
        if col.quantity == ITEMS:
            if texts[col_key] == "":
                continue
            reader = _ITEM_READERS[col_key]
            try:
                out[key] = (reader(texts[col_key], col_key) if col_key == "cases_off"
                            else reader(texts[col_key], col_key, p_atm_pa))
            except InputError as exc:
                err(col_key, exc.message if exc.field == col_key else f"{exc.field}: {exc.message}")
        elif si.get(col_key) is not None:
            out[key] = si[col_key]
    return out


def _check_by_kind(device: str, si: Mapping[str, Any], extras: Mapping[str, Any], p_atm_pa: float,
                   err: Any) -> None:
    """The row's case kind checks its inputs (relief data all or nothing, header pressures falling, ...)."""
    kind = kind_of(device)
    values = {"inlet_pressure_pa": si["inlet_pressure"], "inlet_temperature_k": si["inlet_temperature"],
              "outlet_pressure_pa": si["outlet_pressure"], "inlet_temperature_min_k": si["min_inlet_temperature"],
              "inlet_pressure_max_pa": si["max_inlet_pressure"], "p_atm_pa": p_atm_pa, **extras}
    if any(v is None for v in (values["inlet_pressure_pa"], values["inlet_temperature_k"],
                               values["outlet_pressure_pa"])):
        return
    relief_keys = [k for k in extras if k in _RELIEF_KEYS]
    try:
        if relief_keys and kind.name != "relief_valve":
            raise InputError(relief_keys[0], "relief-valve columns are only for rows of kind relief_valve")
        kind.check(values)
    except InputError as exc:
        name = exc.field.split("[")[0].split(".")[0]
        column = _COLUMN_OF_KEY.get(name, "kind")
        err(column, exc.message if exc.field == name else f"{exc.field}: {exc.message}")


_RELIEF_KEYS = frozenset(KIND_COLUMNS[c] for c in ("set_pressure", "overpressure", "superimposed_back_pressure",
                                                   "built_up_back_pressure", "header_limit",
                                                   "min_relieving_temperature", "header_sections",
                                                   "other_sources"))


def _read_row(reader: _Reader, header: _Header, row: int, cells: list[Any], defaults: Mapping[str, str]
              ) -> tuple[BatchCase | None, CaseSource | None, list[RowError], list[RowWarning]]:
    errors: list[RowError] = []
    warnings: list[RowWarning] = []
    texts: dict[str, str] = {}
    raws: dict[str, Any] = {}
    for col in COLUMNS:
        i = header.index.get(col.key)
        raw = cells[i] if i is not None and i < len(cells) else None
        if _cell_text(raw) == "" and defaults.get(col.key):
            raw = defaults[col.key]
        raws[col.key] = raw
        texts[col.key] = _cell_text(raw)

    def where(key: str) -> str:
        return header.text.get(key) or COLUMN_BY_KEY[key].generic_header

    def err(key: str, reason: str) -> None:
        errors.append(RowError(row, where(key), texts[key], reason))

    for key in REQUIRED_KEYS:
        if texts[key] == "":
            err(key, f"empty; the {COLUMN_BY_KEY[key].name} is required on every row")
    kind = eos = None
    for key in ("kind", "eos"):
        if texts[key]:
            try:
                value = _choice(COLUMN_BY_KEY[key], texts[key])
            except _CellError as exc:
                err(key, exc.reason)
            else:
                kind, eos = (value, eos) if key == "kind" else (kind, value)
    water = False
    try:
        water = _yes_no(texts["water_saturated"])
    except _CellError as exc:
        err("water_saturated", exc.reason)

    # atmosphere first: the gauge pressures of the row depend on it
    p_atm_pa = P_ATM_DEFAULT_PA
    si: dict[str, float | None] = {}
    shown: dict[str, str] = {}       # quantity cells as number and unit
    qcols = [c for c in COLUMNS if c.has_unit]
    for col in sorted(qcols, key=lambda c: c.quantity != ABSOLUTE_PRESSURE):
        if texts[col.key] == "":
            si[col.key] = None
            continue
        try:
            text = reader.quantity_text(col, raws[col.key], header.unit.get(col.key))
            shown[col.key] = text
            si[col.key] = reader.quantity(col, text, p_atm_pa)
        except _CellError as exc:
            si[col.key] = None
            err(col.key, exc.reason)
            continue
        if col.key == "atmospheric_pressure":
            p_atm_pa = si[col.key] or P_ATM_DEFAULT_PA

    # relations between cells (each reported on the cell that breaks it)
    p_in, p_out, t_in = si["inlet_pressure"], si["outlet_pressure"], si["inlet_temperature"]
    p_max, t_min = si["max_inlet_pressure"], si["min_inlet_temperature"]
    if p_in is not None and p_out is not None and p_out > p_in:
        err("outlet_pressure", f"the outlet pressure {shown['outlet_pressure']} is above the inlet pressure "
                               f"{shown['inlet_pressure']}; a letdown needs outlet <= inlet")
    if t_in is not None and t_in > T_IN_MAX_K:
        unit = temperature_unit_of(shown["inlet_temperature"], "K")
        err("inlet_temperature", f"the inlet temperature {shown['inlet_temperature']} is above "
                                 f"{format_temperature(T_IN_MAX_K, unit, 6)} (the range of the heat-capacity data)")
    if t_in is not None and t_min is not None and t_min > t_in:
        err("min_inlet_temperature", f"the minimum inlet temperature {shown['min_inlet_temperature']} is above the "
                                     f"inlet temperature {shown['inlet_temperature']}")
    if p_in is not None and p_max is not None and p_max < p_in:
        err("max_inlet_pressure", f"the maximum inlet pressure {shown['max_inlet_pressure']} is below the inlet "
                                  f"pressure {shown['inlet_pressure']}")
    for key, arg in (("mdmt", "mdmt_k"), ("cold_limit", "user_limit_k"), ("margin", "margin_k")):
        if si[key] is not None:
            try:
                ColdLimits(**{arg: si[key]})
            except InputError as exc:
                err(key, exc.message)

    spec = _material_spec(texts, si["mdmt"], err)
    extras = _kind_extras(texts, si, p_atm_pa, err)
    if extras:       # the kind's inputs beyond a plain letdown read gauge values with the row's atmosphere
        extras["p_atm_pa"] = p_atm_pa
    if not errors:
        _check_by_kind(kind or "control_valve", si, extras, p_atm_pa, err)

    fluid = None
    fluid_name, from_library, fluid_notes = texts["fluid"], False, ()
    if texts["fluid"]:
        try:
            fluid, fluid_name, from_library, fluid_notes = reader.fluid(texts["fluid"], eos)
        except _CellError as exc:
            err("fluid", exc.reason)
    if errors:
        order = {where(key): header.index.get(key, len(cells) + n) for n, key in enumerate(COLUMN_BY_KEY)}
        errors.sort(key=lambda e: order.get(e.column, 0))
        return None, None, errors, warnings
    assert fluid is not None and p_in is not None and p_out is not None and t_in is not None
    if fluid_notes and id(fluid) not in reader.fluid_notes_done:
        reader.fluid_notes_done.add(id(fluid))
        warnings.append(RowWarning(row, where("fluid"), texts["fluid"], "; ".join(fluid_notes)))
    limits = ColdLimits(mdmt_k=si["mdmt"], user_limit_k=si["cold_limit"], margin_k=si["margin"] or 0.0,
                        mdmt_source="entered" if si["mdmt"] is not None else "")
    if spec is not None:
        try:
            mdmt, basis, working = material_limit_working(
                spec, p_out, p_atm_pa, max(p_in, p_max or p_in), reader.mdmt_table, COINCIDENT_OUTLET)
            limits = replace(limits, mdmt_k=mdmt, mdmt_working=working,
                             mdmt_source=f"material of the row; {basis} at the coincident outlet pressure")
        except InputError as exc:
            err(MATERIAL_OPTION_OF.get(exc.field, "thickness"), exc.message)
            return None, None, errors, warnings
    if limits.governing_k is None:
        warnings.append(RowWarning(row, where("mdmt"), "", "neither an MDMT nor a cold limit: the row is read but "
                                                           "will come out 'not screened'"))
    device = kind or "control_valve"
    case = BatchCase(row=row, tag=texts["tag"], fluid=fluid, p_in_pa=p_in, t_in_k=t_in, p_out_pa=p_out,
                     limits=limits, t_in_min_k=t_min, p_in_max_pa=p_max, water_saturated=water,
                     service=texts["service"], kind=device, p_atm_pa=p_atm_pa, extras=extras,
                     **kind_hooks(device, extras))
    source = CaseSource(row=row, fluid_name=fluid_name, fluid_from_library=from_library, eos=fluid.eos.value,
                        p_atm_pa=p_atm_pa, cells={k: v for k, v in texts.items() if v != ""})
    return case, source, [], warnings


# ---------------------------------------------------------------------------------------------
# the bad rows, to fix and read again
# ---------------------------------------------------------------------------------------------

def problems_text(problems: Iterable[RowProblem], row: int | None = None) -> str:
    """The problems of a row in one cell: ``was row 7: column 'x': reason; column 'y': reason``."""
    parts = [(f"column '{p.column}': " if p.column else "") + p.reason for p in problems]
    return (f"was row {row}: " if row is not None else "") + "; ".join(parts)


def bad_rows_file(result: ReadResult) -> bytes:
    """The bad rows as a CSV (UTF-8 with a byte-order mark, comma-delimited): the file's header plus a
    ``problems`` column, one row per bad row with its cells as read.  Fixed, it reads like any list
    (the ``problems`` column is ignored)."""
    out = io.StringIO(newline="")
    w = csv.writer(out, lineterminator="\r\n")
    w.writerow([formula_safe(h) for h in (*result.header, PROBLEMS_HEADER)])
    for bad in result.bad_rows:
        w.writerow([formula_safe(c) for c in (*bad.cells, problems_text(bad.problems, bad.row))])
    return out.getvalue().encode("utf-8-sig")


# ---------------------------------------------------------------------------------------------
# the case register's fluids
# ---------------------------------------------------------------------------------------------

class RegisterFluids(Mapping[str, Fluid]):
    """The fluid library of the case register, read once; each Fluid is made when first asked for."""

    def __init__(self, records: Iterable[Any]):
        self._records = {r.name: (r.composition_pairs(), r.eos, r.kij_mode) for r in records}
        self._made: dict[str, Fluid] = {}

    def __getitem__(self, name: str) -> Fluid:
        fl = self._made.get(name)
        if fl is None:
            from jtcheck.records.models import KijMode

            pairs, eos, kij_mode = self._records[name]
            fl = Fluid(pairs, eos=eos, kij=KijMode(kij_mode).fluid_kij())
            self._made[name] = fl
        return fl

    def __iter__(self):
        return iter(self._records)

    def __len__(self) -> int:
        return len(self._records)


def register_fluid_library(session: Any) -> RegisterFluids:
    """Every fluid of the case register (``FluidRecord``), by name, for :func:`read_cases`."""
    from sqlalchemy import select

    from jtcheck.records.models import FluidRecord

    return RegisterFluids(session.scalars(select(FluidRecord).order_by(FluidRecord.name)).all())
