"""Drawings of a result on the result page: the P-T diagram and the sweep chart, as inline SVG.

The drawing itself is :mod:`jtcheck.reports.charts` (the calculation records draw the same charts); this
module turns a stored :class:`~jtcheck.records.models.CaseResult` into the charts' plain data, in the units
the case was entered in, through the same helpers as the result page (:mod:`jtcheck.web.cases.results`).
Documents are kept in a small in-memory cache per result.
"""
from __future__ import annotations

import hashlib
import json
import logging
import threading
from collections import OrderedDict

from jtcheck.records.models import CaseResult
from jtcheck.reports.charts import (
    SCREEN,
    SWEEP_TITLE,
    TITLE,
    ChartUnits,
    ColdLines,
    LetdownEnds,
    SweepChartData,
    SweepLine,
    draw_pt_diagram,
    draw_sweep_chart,
    inline_svg,
    pt_diagram_data,
)
from jtcheck.web.cases.results import Units, conditions_of, fluid_key, limits_of, screening_view, units_of

__all__ = ["TITLE", "SWEEP_TITLE", "inline_svg", "render", "render_sweep", "DiagramCache", "cache_key"]

_log = logging.getLogger(__name__)
_LOCK = threading.Lock()          # one drawing at a time


def render(result: CaseResult) -> str:
    """The P-T diagram of ``result`` as an SVG element (text)."""
    units: Units = units_of(result)
    limits = limits_of(result)
    ends = [LetdownEnds(c.name, c.converged, c.p_in_pa, c.t_in_k, c.p_out_pa, c.t_out_k)
            for c in conditions_of(result)]
    data = pt_diagram_data(fluid_key(result.inputs or {}), ends,
                           ColdLines(limits.governing_k, limits.target_k, limits.mdmt_k),
                           ChartUnits(units.temperature, units.inlet_pressure, units.p_atm_pa))
    return draw_pt_diagram(data, style=SCREEN)


def render_sweep(result: CaseResult) -> str | None:
    """The operating sweep of ``result`` as an SVG element (text); None when the result has no sweep table."""
    view = screening_view(result)
    table = (view.sweep or {}).get("table")
    if not table or not table["rows"] or not table["columns"]:
        return None
    units = units_of(result)
    limits = view.limits
    lines = []
    for row in table["rows"]:
        axis = row["axis"]
        label = (f"{table['row_dimension'].lower()} {axis['value']:.4g} {axis['unit']}"
                 if axis["value"] is not None else None)
        lines.append(SweepLine(label, tuple(c["t_out"]["value"] for c in row["cells"])))
    fixed = table["fixed"]
    title = (f"{table['fixed_dimension']} {fixed['value']:.4g} {fixed['unit']} ({table['model'] or 'model'})"
             if fixed["value"] is not None else None)
    data = SweepChartData(
        x=tuple(c["value"] for c in table["columns"]),
        x_label=f"{table['column_dimension']} [{table['columns'][0]['unit']}]",
        y_label=f"Outlet temperature [{units.temperature}]", lines=tuple(lines),
        governing=units.t(limits.governing_k), target=units.t(limits.target_k), title=title)
    return draw_sweep_chart(data, style=SCREEN)


#: The drawings a cache can make, by name.
RENDERERS = {"pt": lambda result: render(result), "sweep": lambda result: render_sweep(result)}


def cache_key(result: CaseResult, which: str = "pt") -> str:
    payload = json.dumps({"id": result.id, "inputs": result.inputs, "results": result.results,
                          "screening": result.screening, "which": which}, sort_keys=True, default=str)
    return hashlib.sha256(payload.encode()).hexdigest()


class DiagramCache:
    """SVG documents of results, least recently used dropped first."""

    def __init__(self, size: int):
        self.size = max(0, int(size))
        self._items: OrderedDict[str, str] = OrderedDict()
        self._lock = threading.Lock()
        self.renders = 0

    def get(self, result: CaseResult, which: str = "pt") -> str | None:
        """The SVG ``which`` ("pt": the P-T diagram, "sweep": the sweep chart) of ``result``.

        None, logged, if it could not be drawn (the page shows the tables anyway), and None without a
        drawing to make (a sweep chart for a result without a sweep).
        """
        key = cache_key(result, which)
        with self._lock:
            if key in self._items:
                self._items.move_to_end(key)
                return self._items[key]
        try:
            with _LOCK:   # matplotlib is not thread-safe: one drawing at a time
                svg = RENDERERS[which](result)
                self.renders += 1
        except Exception:  # noqa: BLE001 - a drawing problem must not take the result page down
            _log.exception("%s drawing of result %s could not be made", which, result.id)
            return None
        if svg is None:
            return None
        with self._lock:
            self._items[key] = svg
            while len(self._items) > self.size:
                self._items.popitem(last=False)
        return svg
