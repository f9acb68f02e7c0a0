"""Stored numbers as text for pages and records: finite floats or nothing, and the one way each kind is rounded.

Shared by the calculation record, the batch summary and (through Jinja filters) the web pages, so that a
number reads the same on the screen and on paper.
"""
from __future__ import annotations

import math
from collections.abc import Mapping
from typing import Any

import jinja2

from jtcheck.units import TextUnits, difference_label, temperature_from_k

#: Spellings of the temperature units on one-line summaries (batch pages and the batch summary): the same as on
#: every other page and in the record (degC, not °C).
UNIT_LABELS = {"degc": "degC", "degf": "degF", "k": "K", "degr": "degR"}


def finite_or_none(value: Any) -> float | None:
    """A stored number as a finite float; None for None, booleans, text that is no number, NaN and infinities."""
    if value is None or isinstance(value, bool):
        return None
    try:
        v = float(value)
    except (TypeError, ValueError):
        return None
    return v if math.isfinite(v) else None


def fmt_number(value: Any, kind: str = "pressure") -> str:
    """A number for a page or the record: temperatures and differences to 0.01, fractions to 0.0001, computed
    pressures (answers) to 4 significant digits, others (inputs, shown back as entered) to 6 significant digits
    ("–" without a number)."""
    v = finite_or_none(value)
    if v is None:
        return "–"
    if kind in ("temperature", "difference"):
        text = f"{v:.2f}"
        return "0.00" if text == "-0.00" else text
    if kind == "fraction":
        return f"{v:.4f}"
    if kind == "computed":     # a computed pressure (an answer): 4 significant digits, no exponent
        return f"{v:.0f}" if abs(v) >= 1e4 else f"{v:.4g}"
    if abs(v) >= 1e6:
        return f"{v:.0f}"
    return f"{v:.6g}"


def fmt_quantity(q: Mapping[str, Any] | None, kind: str = "pressure") -> str:
    """``{"value", "unit"}`` as "12.5 barg" ("–" without a value)."""
    if not q or finite_or_none(q.get("value")) is None:
        return "–"
    unit = difference_label(q["unit"]) if kind == "difference" else q["unit"]
    return f"{fmt_number(q['value'], kind)} {unit}"


def fmt_signed(q: Mapping[str, Any] | None) -> str:
    """A difference with its sign: "+3.20 K"."""
    v = finite_or_none((q or {}).get("value"))
    if v is None:
        return "–"
    text = f"{v:+.2f}"
    return f"{'0.00' if text in ('-0.00', '+0.00') else text} {difference_label(q['unit'])}"


def temperature_text(value_k: Any, unit: str) -> str:
    """A temperature [K] in ``unit`` to 0.1 with the unit's spelling ("-27.4 degC"; "–" without a number)."""
    v = finite_or_none(value_k)
    if v is None:
        return "–"
    text = f"{temperature_from_k(v, unit):.1f}"
    return f"{'0.0' if text == '-0.0' else text} {UNIT_LABELS.get(unit.lower(), unit)}"


@jinja2.pass_context
def finalize_marks(context: Any, value: Any) -> Any:
    """Jinja ``finalize`` of the pages and the record: every text printed has its marked quantities
    (:mod:`jtcheck.marks`: findings, remedies, reasoning, errors) in the case's units: the template's ``words``
    (a :class:`jtcheck.units.TextUnits`), else the ``words`` of its ``units``, else the default units."""
    if not isinstance(value, str) or "\u27e6" not in value:
        return value
    words = context.get("words")
    if not isinstance(words, TextUnits):
        words = getattr(context.get("units"), "words", None)
    if not isinstance(words, TextUnits):
        words = TextUnits()
    return words.text(value)


def mark_filters() -> dict[str, Any]:
    """Jinja filters that mark an SI value (:mod:`jtcheck.marks`) for :func:`finalize_marks` to show in the case's
    units: ``k|tq`` a temperature [K] (``k|tq(2)`` to 0.01), ``dk|dtq`` a difference [K], ``pa|pq`` an absolute
    pressure [Pa] (``pa|pq("inlet_pressure")`` in that field's unit); "–" for no value."""
    from jtcheck import marks

    def tq(value: Any, digits: int = 2, field: str = "") -> str:
        v = finite_or_none(value)
        return "–" if v is None else marks.T(v, field, digits)

    def dtq(value: Any, digits: int = 2) -> str:
        v = finite_or_none(value)
        return "–" if v is None else marks.DT(v, digits)

    def pq(value: Any, field: str = "outlet_pressure", digits: int = 4) -> str:
        v = finite_or_none(value)
        return "–" if v is None else marks.P(v, field, digits)

    return {"tq": tq, "dtq": dtq, "pq": pq}
