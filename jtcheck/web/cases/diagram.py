"""Drawings of a result on the result page: the P-T diagram and the sweep chart, as inline SVG.

The drawing itself is :mod:`jtcheck.reports.charts` (the calculation records draw the same charts); this
module turns a stored :class:`~jtcheck.records.models.CaseResult` into the charts' plain data, in the units
the case was entered in, from the same display as the result page and the record
(:mod:`jtcheck.reports.screening_display`).
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
    draw_pt_diagram,
    draw_sweep_chart,
    fluid_key_of,
    inline_svg,
    pt_diagram_data,
)
from jtcheck.reports.screening_display import sweep_chart_data
from jtcheck.web.cases.results import screening_view, units_of

__all__ = ["TITLE", "SWEEP_TITLE", "inline_svg", "render", "render_sweep", "DiagramCache", "cache_key"]

_log = logging.getLogger(__name__)
_LOCK = threading.Lock()          # one drawing at a time


def render(result: CaseResult) -> str:
    """The P-T diagram of ``result`` as an SVG element (text)."""
    units = units_of(result)
    view = screening_view(result)
    limits = view.limits
    ends = [LetdownEnds(c.name, c.converged, c.p_in_pa, c.t_in_k, c.p_out_pa, c.t_out_k) for c in view.conditions]
    data = pt_diagram_data(fluid_key_of(result.inputs or {}), ends,
                           ColdLines(limits.governing_k, limits.target_k, limits.mdmt_k, limits.allowable_curve),
                           ChartUnits(units.temperature, units.inlet_pressure, units.p_atm_pa))
    return draw_pt_diagram(data, style=SCREEN)


def render_sweep(result: CaseResult) -> str | None:
    """The operating sweep of ``result`` as an SVG element (text); None when the result has no sweep table."""
    data = sweep_chart_data(screening_view(result), units_of(result))
    return None if data is None else draw_sweep_chart(data, style=SCREEN)


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
