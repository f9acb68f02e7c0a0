"""Quantities marked in text, so that every sentence reads in the user's units.

The engineering layer works in SI and does not know the units a case was typed in; its sentences (findings,
remedies, the reasoning of generated cases, input errors) carry each quantity as a *mark*: the kind of quantity,
optionally the input field it belongs to, and the SI value.  The edges (CLI, pages, records, API, batch, error
messages) render the marks in the case's units with :func:`jtcheck.units.render_marks`, the one formatter of
quantities; :func:`plain` renders them in the default units (degC, bar abs, K) where no units are known (the
Python API's ``str(err)`` and ``Finding.text``).

A mark reads ``⟦KIND:field:digits|value⟧``:

``T``
    a temperature [K] (a reading; shown in the field's temperature unit, to ``digits`` decimals, default 1);
``DT``
    a temperature difference [K] (shown as K, or delta degF beside degF readings; ``digits`` decimals, default 1);
``P``
    an absolute pressure [Pa] (shown in the field's pressure unit, gauge units from the atmospheric pressure,
    to ``digits`` significant digits, default 4);
``DP``
    a pressure difference [Pa] (``digits`` significant digits, default 4).

``field`` names the input whose unit applies (``inlet_pressure``, ``outlet_pressure``, ``inlet_temperature``,
...); without it, temperatures take the case's temperature unit and pressures the outlet pressure's unit.
Core layer: no imports from jtcheck, no third-party library.
"""
from __future__ import annotations

import math
import re
from collections.abc import Callable

OPEN, CLOSE = "\u27e6", "\u27e7"
KINDS = ("T", "DT", "P", "DP")
#: Default digits of each kind: decimals for temperatures and differences, significant digits for pressures.
DEFAULT_DIGITS = {"T": 1, "DT": 1, "P": 4, "DP": 4}
MARK = re.compile(OPEN + r"(T|DT|P|DP):([A-Za-z0-9_]*):(\d*)\|([^" + CLOSE + r"]*)" + CLOSE)


def _mark(kind: str, value: float, field: str, digits: int | None) -> str:
    return f"{OPEN}{kind}:{field}:{'' if digits is None else int(digits)}|{float(value)!r}{CLOSE}"


def T(t_k: float, field: str = "", digits: int | None = None) -> str:
    """A temperature [K], marked (``field``: the input whose unit applies; ``digits``: decimals, default 1)."""
    return _mark("T", t_k, field, digits)


def DT(dt_k: float, digits: int | None = None) -> str:
    """A temperature difference [K], marked (``digits``: decimals, default 1)."""
    return _mark("DT", dt_k, "", digits)


def P(p_pa: float, field: str = "", digits: int | None = None) -> str:
    """An absolute pressure [Pa], marked (``field``: the input whose unit applies; ``digits``: significant digits,
    default 4)."""
    return _mark("P", p_pa, field, digits)


def DP(dp_pa: float, field: str = "", digits: int | None = None) -> str:
    """A pressure difference [Pa], marked (``digits``: significant digits, default 4)."""
    return _mark("DP", dp_pa, field, digits)


#: What a renderer is called with for each mark: kind, field, digits, SI value; it returns the text.
Renderer = Callable[[str, str, int, float], str]


def render(text: str, renderer: Renderer) -> str:
    """``text`` with every mark replaced by ``renderer(kind, field, digits, value)``; text without marks unchanged."""
    if OPEN not in text:
        return text

    def one(m: re.Match) -> str:
        kind, field, digits, value = m.group(1), m.group(2), m.group(3), m.group(4)
        try:
            v = float(value)
        except ValueError:
            return value
        return renderer(kind, field, int(digits) if digits else DEFAULT_DIGITS[kind], v)

    return MARK.sub(one, text)


def significant(value: float, digits: int) -> str:
    """``value`` to ``digits`` significant digits, never with an exponent, trailing zeros dropped: 1.01325 -> "1.013"
    (4), 20000 -> "20000", 73.01325 -> "73.01", 0.0 -> "0"; non-finite values as "nan"/"inf"."""
    if not math.isfinite(value):
        return str(value)
    if value == 0.0:
        return "0"
    decimals = max(digits - 1 - math.floor(math.log10(abs(value))), 0)
    text = f"{round(value, decimals):.{decimals}f}"
    if "." in text:
        text = text.rstrip("0").rstrip(".")
    return "0" if text in ("-0", "") else text


def fixed(value: float, decimals: int) -> str:
    """``value`` to ``decimals`` decimals, with no "-0.0"."""
    text = f"{value:.{decimals}f}"
    return text[1:] if text.startswith("-") and float(text) == 0.0 else text


def _decimals_or_significant(value: float, digits: int) -> str:
    """``digits`` decimals; 6 or more means a value shown back as typed (that many significant digits)."""
    return significant(value, digits) if digits >= 6 else fixed(value, digits)


def _plain(kind: str, field: str, digits: int, v: float) -> str:
    if kind == "T":
        return f"{_decimals_or_significant(v - 273.15, digits)} degC"
    if kind == "DT":
        return f"{_decimals_or_significant(v, digits)} K"
    if kind == "P":
        return f"{significant(v / 1e5, digits)} bar abs"
    return f"{significant(v / 1e5, digits)} bar"


def plain(text: str) -> str:
    """``text`` with its marks in the default units: degC, K for differences, bar abs (and bar for differences)."""
    return render(text, _plain)
