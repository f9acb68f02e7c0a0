"""The column layout of a letdown list: one row per case, units in the headers in square brackets.

This table is the one source of truth: :mod:`jtcheck.batch.reader` reads by it, :mod:`jtcheck.batch.template`
writes its header from it, and :func:`layout_markdown` documents it (the README includes that table).

Rules of a file:

* row 1 holds the column headers; each following row is one letdown case (rows are numbered as a
  spreadsheet numbers them: the header is row 1, the first case row 2); empty rows are skipped;
* headers match without regard to letter case, extra spaces, underscores or hyphens
  (``Inlet_Pressure  [barg]`` is ``inlet pressure [barg]``); the columns may come in any order;
  columns that are not in the layout are ignored with a warning;
* a quantity column names its unit in square brackets (``inlet pressure [barg]``), any unit that
  :mod:`jtcheck.units` accepts for that quantity; a cell may carry its own unit (``"1044 psig"``),
  which overrides the header's; a cell without a unit takes the header's;
* CSV: UTF-8 with or without a byte-order mark, comma- or semicolon-delimited (in a
  semicolon-delimited file a decimal comma is accepted in number cells); XLSX: the first sheet,
  numbers as numbers or as text;
* at most :data:`MAX_ROWS` case rows and :data:`MAX_BYTES` bytes per file.
"""
from __future__ import annotations

import re
from dataclasses import dataclass

from jtcheck.units import (
    PRESSURE_UNITS,
    TEMPERATURE_DIFFERENCE_UNITS,
    TEMPERATURE_UNITS,
    WATER_CONTENT_CHOICES,
    WATER_CONTENT_UNITS,
    pressure_unit_names,
)

#: Largest number of case rows a file may hold.
MAX_ROWS = 200_000
#: Largest file accepted [bytes] (50 MB).
MAX_BYTES = 50 * 1024 * 1024
#: Largest unpacked size of an XLSX workbook (the sum of its parts) [bytes]: the limit counts what the file
#: becomes when unzipped, not its compressed size (a zip bomb of 1 MB may unpack to gigabytes).
MAX_UNPACKED_BYTES = 256 * 1024 * 1024
#: Most columns a row may have (cells after the last one with a value count too).
MAX_COLUMNS = 256
#: Most cells a sheet may have (rows times the cells each row stores).
MAX_CELLS = 8_000_000
#: Memory a workbook may take while it is read, in its own process [MiB] (environment JTCHECK_PARSE_MEMORY_MB).
PARSE_MEMORY_MB = 1024
#: Longest time reading a workbook may take [s].
PARSE_TIMEOUT_S = 300

# kinds of quantity a column holds
TEXT = "text"
CHOICE = "choice"
FLUID = "fluid"
PRESSURE = "pressure"
TEMPERATURE = "temperature"
TEMPERATURE_DIFFERENCE = "temperature difference"
ABSOLUTE_PRESSURE = "absolute pressure"
PRESSURE_DIFFERENCE = "pressure difference"
PERCENT = "percent"
MASS_FLOW = "mass flow"
#: Water carried by a gas: mg/Sm3 or lb/MMscf (jtcheck.units.WATER_CONTENT_UNITS).
WATER_CONTENT = "water content"
YES_NO = "yes/no"
#: Items typed one a line in a cell, separated by '|' (jtcheck.itemlists).
ITEMS = "items"

#: Quantities whose header carries a unit in square brackets.
UNIT_QUANTITIES = (PRESSURE, TEMPERATURE, TEMPERATURE_DIFFERENCE, ABSOLUTE_PRESSURE, PRESSURE_DIFFERENCE, PERCENT,
                   MASS_FLOW, WATER_CONTENT)
#: What an empty water content and water dew point mean (shown as the columns' default).
WATER_DEFAULT = "saturated at inlet (conservative)"
#: The one unit of a mass-flow column.
MASS_FLOW_UNIT = "kg/s"

#: Kinds of letdown (the case register's CaseKind values).
KINDS = ("control_valve", "relief_valve", "blowdown_valve", "choke", "other")
#: Equations of state a row may choose.
EOS_CHOICES = ("PR", "SRK", "GERG2008")
#: Words read as yes / no in the ``water saturated`` column (any letter case).
YES_WORDS = ("yes", "y", "true", "1", "x")
NO_WORDS = ("", "no", "n", "false", "0")
#: Header of the column jtcheck adds to a bad-rows file; ignored (without a warning) when read back.
PROBLEMS_HEADER = "problems"


@dataclass(frozen=True)
class Column:
    """One column of the layout.

    Attributes
    ----------
    key : str
        Identifier used in code (``inlet_pressure``).
    name : str
        Header text without the unit (``inlet pressure``).
    quantity : str
        What the cells hold: one of the module's quantity constants.
    required : bool
        Every row needs a value.
    default : str
        The value an empty cell takes ("" when there is none).
    unit : str
        The unit the template writes in the header ("" for a column without one).
    meaning : str
        What the column means, for the documentation.
    choices : tuple of str
        Allowed words of a choice column.
    """

    key: str
    name: str
    quantity: str
    required: bool
    default: str
    unit: str
    meaning: str
    choices: tuple[str, ...] = ()

    @property
    def has_unit(self) -> bool:
        return self.quantity in UNIT_QUANTITIES

    def header(self, unit: str | None = None) -> str:
        """Header text with a unit: ``inlet pressure [barg]`` (the template's unit by default)."""
        if not self.has_unit:
            return self.name
        return f"{self.name} [{unit or self.unit}]"

    @property
    def generic_header(self) -> str:
        """Header as the documentation writes it: ``inlet pressure [unit]``."""
        if not self.has_unit:
            return self.name
        if self.key == "margin":
            return f"{self.name} [K]"
        if self.quantity == PERCENT:
            return f"{self.name} [%]"
        if self.quantity == MASS_FLOW:
            return f"{self.name} [{MASS_FLOW_UNIT}]"
        if self.key == "atmospheric_pressure":
            return f"{self.name} [bar]"
        return f"{self.name} [unit]"


COLUMNS: tuple[Column, ...] = (
    Column("tag", "tag", TEXT, True, "", "",
           "Tag of the valve or letdown, e.g. PCV-1101. A tag that appears twice is read, with a warning."),
    Column("service", "service", TEXT, False, "", "", "Service description (free text), carried to the results."),
    Column("kind", "kind", CHOICE, False, "control_valve", "",
           "Kind of letdown: control_valve, relief_valve, blowdown_valve, choke or other (spaces for "
           "underscores are accepted). Every kind is screened as an isenthalpic letdown from the inlet to the "
           "outlet pressure; a relief_valve row with a set pressure adds its relieving case.", KINDS),
    Column("fluid", "fluid", FLUID, True, "", "",
           "A fluid name from the case register's fluid library, or an inline composition "
           "'methane=0.9,ethane=0.1' (mole fractions or mole percent; quote it in a comma-delimited CSV)."),
    Column("eos", "eos", CHOICE, False, "PR", "",
           "Equation of state: PR, SRK or GERG2008 (GERG-2008, Kunz and Wagner 2012: its 21 components only). "
           "Empty: PR for an inline composition, the library fluid's own equation of state for a named fluid. "
           "With PR or SRK the other of the two is compared side by side and the colder governs; with GERG2008 "
           "it governs and PR and SRK are shown beside it.", EOS_CHOICES),
    Column("inlet_pressure", "inlet pressure", PRESSURE, True, "", "barg", "Normal inlet pressure."),
    Column("inlet_temperature", "inlet temperature", TEMPERATURE, True, "", "degC", "Normal inlet temperature."),
    Column("outlet_pressure", "outlet pressure", PRESSURE, True, "", "barg",
           "Outlet pressure; not above the inlet pressure."),
    Column("min_inlet_temperature", "min inlet temperature", TEMPERATURE, False, "", "degC",
           "Lowest credible inlet temperature (adds the credible conditions); not above the inlet temperature."),
    Column("max_inlet_pressure", "max inlet pressure", PRESSURE, False, "", "barg",
           "Highest credible inlet pressure (adds the credible conditions); not below the inlet pressure."),
    Column("mdmt", "MDMT", TEMPERATURE, False, "", "degC",
           "Minimum design metal temperature of the downstream material."),
    Column("cold_limit", "cold limit", TEMPERATURE, False, "", "degC",
           "A cold limit of your own; the warmer of MDMT and cold limit governs. A row with neither is read "
           "(with a warning) and comes out 'not screened'."),
    Column("margin", "margin", TEMPERATURE_DIFFERENCE, False, "0 K", "K",
           "Required margin above the governing limit, 0 to 100 K (K or degF)."),
    Column("water_saturated", "water saturated", YES_NO, False, "no", "",
           "yes: screen for hydrates as if the gas were water-saturated; no (or empty): as given."),
    Column("water_content", "water content", WATER_CONTENT, False, WATER_DEFAULT, "mg/Sm3",
           "Water the gas carries (mg/Sm3 at 15 degC, 101.325 kPa, or lb/MMscf): free water at the outlet by "
           "Bukacek's correlation; a row with it is screened for hydrates. Empty, with no water dew point: the gas "
           "is taken as saturated with water at the inlet, the conservative default (on rows screened for "
           "hydrates)."),
    Column("water_dew_point", "water dew point", TEMPERATURE, False, WATER_DEFAULT, "degC",
           "Water dew point of the gas at the outlet pressure, instead of the water content (give one of the two); "
           "a row with it is screened for hydrates."),
    Column("atmospheric_pressure", "atmospheric pressure", ABSOLUTE_PRESSURE, False, "1.01325 bar", "bar",
           "Atmospheric pressure for the row's gauge pressures, in an absolute unit, 0.3 to 2 bar."),
    Column("mass_flow", "mass flow", MASS_FLOW, False, "", MASS_FLOW_UNIT,
           "Mass flow through the valve in kg/s: a relief valve's share when other sources discharge into the "
           "same header (without it 1 kg/s is taken and the finding says so)."),
    Column("min_outlet_pressure", "min outlet pressure", PRESSURE, False, "", "barg",
           "Lowest credible outlet pressure (the operating sweep runs down to it, as in the case register); not "
           "above the outlet pressure."),
    # relief valves (kind relief_valve): the relieving case, screened by the relief-valve case kind
    Column("set_pressure", "set pressure", PRESSURE, False, "", "barg",
           "Relief valve set pressure (kind relief_valve): adds the relieving case; needs the overpressure."),
    Column("overpressure", "overpressure", PERCENT, False, "", "%",
           "Allowable overpressure in percent of the set gauge pressure, e.g. 10."),
    Column("superimposed_back_pressure", "superimposed back pressure", PRESSURE, False, "", "barg",
           "Back pressure at the valve outlet before it opens; empty: atmospheric."),
    Column("built_up_back_pressure", "built-up back pressure", PRESSURE_DIFFERENCE, False, "", "bar",
           "Back pressure added by the flow in the outlet system, a difference (bar, kPa, MPa, psi)."),
    Column("header_limit", "header limit", TEMPERATURE, False, "", "degC",
           "Cold limit of the flare header (sections without their own limit take it; without sections the "
           "header is screened at the tip, at atmospheric pressure)."),
    Column("min_relieving_temperature", "min relieving temperature", TEMPERATURE, False, "", "degC",
           "Lowest credible relieving temperature; empty: the min inlet temperature."),
    Column("header_sections", "header sections", ITEMS, False, "", "",
           "Flare header sections in flow order, separated by '|': 'name; lowest pressure; cold limit or -; "
           "material', e.g. 'main header; 1.5 barg; -46 degC | knock-out drum; 0.2 barg; -46 degC'."),
    Column("other_sources", "other sources", ITEMS, False, "", "",
           "Other relief valves discharging into the header at the same time, separated by '|': 'name; "
           "composition; mass flow kg/s; relieving pressure; relieving temperature' (give this valve's mass flow)."),
    # generated credible cases (start-up into a depressured outlet is generated for every row; these add the others)
    Column("heater_off_temperature", "heater off temperature", TEMPERATURE, False, "", "degC",
           "Inlet temperature with the upstream heater off (adds the loss-of-heater case)."),
    Column("min_ambient_temperature", "min ambient temperature", TEMPERATURE, False, "", "degC",
           "Minimum ambient temperature an uninsulated inlet reaches (adds that case)."),
    Column("settle_out_volumes", "settle-out volumes", ITEMS, False, "", "",
           "Volumes that settle out after a shutdown, separated by '|': 'name; volume m3; pressure; temperature'."),
    Column("cases_off", "cases off", ITEMS, False, "", "",
           "Generated cases that do not apply, separated by '|': 'case: reason' (settle_out, start_up, "
           "heater_loss, ambient)."),
    # the downstream material by its exemption curve (jtcheck.screening.mdmt): its MDMT is found at the outlet
    # pressure; the MDMT cell (if any) is its typed limit and the warmer governs
    Column("curve", "curve", TEXT, False, "", "",
           "Exemption curve of the downstream material, A to D (VIII-1 Fig. UCS-66; B31.3 Table A-1): the row's "
           "MDMT is found from it at the outlet pressure. Needs the thickness."),
    Column("curve_code", "curve code", TEXT, False, "VIII-1", "", "Code of the curve: VIII-1 or B31.3."),
    Column("thickness", "thickness", TEXT, False, "", "",
           "Governing thickness with its unit, e.g. '12.7 mm' or '0.5 in' (the curves end at 4 in)."),
    Column("impact_test_t", "impact test temperature", TEXT, False, "", "",
           "Impact test temperature with its unit if impact tested, e.g. '-46 degC'."),
    Column("pwht_credit", "pwht credit", TEXT, False, "no", "",
           "yes: post-weld heat treated though the code did not require it (VIII-1 UCS-68(c))."),
    Column("allowable_stress", "allowable stress", TEXT, False, "", "",
           "Allowable stress with its unit, e.g. '138 MPa'; with the outside diameter it gives the stress ratio at "
           "the outlet pressure (without: ratio 1, no reduction)."),
    Column("outside_diameter", "outside diameter", TEXT, False, "", "", "Outside diameter, e.g. '219.1 mm'."),
    Column("corrosion_allowance", "corrosion allowance", TEXT, False, "", "",
           "Corrosion and mill-tolerance allowance, e.g. '3 mm' (empty: 0)."),
    Column("joint_efficiency", "joint efficiency", TEXT, False, "", "", "Weld joint efficiency (empty: 1)."),
    Column("other_stress", "other stress", TEXT, False, "", "",
           "Stress from dead loads and displacement strain when cold, e.g. '20 MPa', added to the pressure stress "
           "(empty: 0, the pressure stress only)."),
)
#: The register key of each relief-valve and generated-case column (the case kinds' inputs).
KIND_COLUMNS = {"min_outlet_pressure": "outlet_pressure_min_pa",
                "set_pressure": "set_pressure_pa", "overpressure": "overpressure_fraction",
                "superimposed_back_pressure": "superimposed_back_pressure_pa",
                "built_up_back_pressure": "built_up_back_pressure_pa", "header_limit": "header_limit_k",
                "min_relieving_temperature": "relieving_temperature_min_k", "header_sections": "header_sections",
                "mass_flow": "mass_flow_kg_per_s", "other_sources": "other_sources",
                "heater_off_temperature": "heater_upstream_temperature_k",
                "min_ambient_temperature": "ambient_temperature_min_k", "settle_out_volumes": "settle_out_volumes",
                "cases_off": "credible_off", "water_content": "water_content_kg_per_sm3",
                "water_dew_point": "water_dew_point_k"}

#: The register key of each letdown column that is not a kind column (the plain letdown's inputs).
LETDOWN_COLUMNS = {"inlet_pressure": "inlet_pressure_pa", "inlet_temperature": "inlet_temperature_k",
                   "outlet_pressure": "outlet_pressure_pa", "min_inlet_temperature": "inlet_temperature_min_k",
                   "max_inlet_pressure": "inlet_pressure_max_pa", "mdmt": "mdmt_k", "cold_limit": "cold_limit_k",
                   "margin": "margin_k", "water_saturated": "water_saturated", "atmospheric_pressure": "p_atm_pa"}
#: Inputs of the case register's letdown and relief-valve cases that a letdown list has no column for, each with
#: what a row gets instead (said in the layout's notes: nothing is dropped silently).
NOT_IN_LIST = {
    "hydrate_inhibitor": "the hydrate finding gives the methanol dose",
}

COLUMN_BY_KEY: dict[str, Column] = {c.key: c for c in COLUMNS}
REQUIRED_KEYS: tuple[str, ...] = tuple(c.key for c in COLUMNS if c.required)

_HEADER = re.compile(r"^(?P<name>[^\[\]]*?)\s*(?:\[(?P<unit>[^\[\]]*)\])?\s*$")
#: Header units a column without a unit tolerates (a spreadsheet habit).
_NO_UNIT = ("", "-")


def normalise_name(text: str) -> str:
    """Header name as compared: lower case, underscores and hyphens as spaces, single spaces."""
    return " ".join(str(text).replace("_", " ").replace("-", " ").lower().split())


_BY_NAME: dict[str, Column] = {normalise_name(c.name): c for c in COLUMNS}


def split_header(text: str) -> tuple[str, str | None]:
    """(normalised name, unit or None) of a header cell: ``"Inlet Pressure [barg]"`` -> ``("inlet pressure", "barg")``.

    A header whose brackets do not parse comes back whole as the name (and matches no column).
    """
    raw = str(text).strip()
    m = _HEADER.match(raw)
    if not m:
        return normalise_name(raw), None
    unit = m.group("unit")
    return normalise_name(m.group("name")), None if unit is None else unit.strip()


def find_column(text: str) -> Column | None:
    """The layout column a header cell names (None for an unknown header)."""
    name, _ = split_header(text)
    return _BY_NAME.get(name)


def allowed_units(quantity: str) -> list[str]:
    """Unit words a column of ``quantity`` accepts."""
    if quantity == PRESSURE:
        return pressure_unit_names()
    if quantity == ABSOLUTE_PRESSURE:
        return [u for u in pressure_unit_names() if not PRESSURE_UNITS[u.lower()][1]]
    if quantity == TEMPERATURE:
        return ["K", "degC", "degF", "degR"]
    if quantity == TEMPERATURE_DIFFERENCE:
        return ["K", "degC", "degF"]
    if quantity == PRESSURE_DIFFERENCE:
        return [u for u in pressure_unit_names() if not PRESSURE_UNITS[u.lower()][1]]
    if quantity == PERCENT:
        return ["%"]
    if quantity == MASS_FLOW:
        return [MASS_FLOW_UNIT]
    if quantity == WATER_CONTENT:
        return list(WATER_CONTENT_CHOICES)
    return []


def unit_problem(column: Column, unit: str | None) -> str | None:
    """Why ``unit`` cannot be the header unit of ``column`` (None when it can)."""
    if not column.has_unit:
        if unit is None or unit in _NO_UNIT:
            return None
        return f"this column takes no unit; write the header as {column.name!r}"
    if unit is None or unit == "":
        return None     # allowed: every cell then carries its own unit
    key = unit.lower()
    ok = {
        PRESSURE: key in PRESSURE_UNITS,
        ABSOLUTE_PRESSURE: key in PRESSURE_UNITS and not PRESSURE_UNITS[key][1],
        TEMPERATURE: key in TEMPERATURE_UNITS,
        TEMPERATURE_DIFFERENCE: key in TEMPERATURE_DIFFERENCE_UNITS,
        PRESSURE_DIFFERENCE: key in PRESSURE_UNITS and not PRESSURE_UNITS[key][1],
        PERCENT: key == "%",
        MASS_FLOW: key == MASS_FLOW_UNIT,
        WATER_CONTENT: key in WATER_CONTENT_UNITS,
    }[column.quantity]
    if ok:
        return None
    allowed = ", ".join(allowed_units(column.quantity))
    return f"unknown {column.quantity} unit {unit!r} in the header; allowed: {allowed}"


def _units_text(column: Column) -> str:
    if column.quantity == CHOICE:
        return ", ".join(column.choices)
    if column.quantity == YES_NO:
        return "yes / no"
    if column.quantity == FLUID:
        return "library name or name=amount pairs"
    if column.has_unit:
        return ", ".join(allowed_units(column.quantity))
    return "text"


#: Headings of :func:`layout_rows`.
LAYOUT_HEADINGS = ("Column header", "Required", "Units or values", "Default", "Meaning")


def layout_rows() -> list[tuple[str, str, str, str, str]]:
    """The layout as rows of text: (column header, required yes/no, units or values, default, meaning)."""
    return [(c.generic_header, "yes" if c.required else "no", _units_text(c), c.default or "-", c.meaning)
            for c in COLUMNS]


def layout_markdown(notes: bool = True) -> str:
    """The layout as a Markdown table (header, required, units or values, default, meaning), then the rules."""
    lines = ["| " + " | ".join(LAYOUT_HEADINGS) + " |", "|---|---|---|---|---|"]
    for header, required, units, default, meaning in layout_rows():
        lines.append(f"| `{header}` | {required} | {units} | {default} | {meaning.replace('|', '/')} |")
    if notes:
        lines += [
            "",
            "- Row 1 holds the headers; every further row is one case. Rows are numbered as the spreadsheet "
            "numbers them (the header is row 1, the first case row 2); empty rows are skipped.",
            "- Headers match regardless of letter case, extra spaces, underscores and hyphens; the columns may "
            "come in any order; unknown columns are ignored with a warning.",
            "- `[unit]` is any unit jtcheck accepts for the quantity; a cell may carry its own unit "
            "(`1044 psig`), which overrides the header's.",
            f"- CSV (UTF-8, comma or semicolon) or XLSX (first sheet); at most {MAX_ROWS:,} rows and "
            f"{MAX_BYTES // (1024 * 1024)} MB.",
            "- Inputs of the case register with no column here: "
            + "; ".join(f"`{k}` ({why})" for k, why in NOT_IN_LIST.items()) + ".",
            "- A file with any bad cell imports nothing; every problem is listed by row and column. With "
            "keep-going, the good rows are screened and the bad ones written to a bad-rows CSV with a "
            f"`{PROBLEMS_HEADER}` column (ignored when the fixed file is read again).",
        ]
    return "\n".join(lines) + "\n"
