"""Drawings of a result, made on the server with matplotlib as inline SVG.

The pressure-temperature diagram shows the fluid's phase envelope (dew and bubble branches, critical
point), the letdown path of each computed condition from its inlet to its outlet state, and as vertical
lines the governing cold limit, the limit plus the required margin, and the MDMT when it does not govern;
temperature on the x axis and pressure on the y axis, both in the units the case was entered in.

The sweep chart shows the operating sweep's table: outlet temperature against the table's column
dimension (usually the outlet pressure), one line per row value (usually the inlet pressure), with the
cold limit and limit plus margin as horizontal lines.

The letdown path between the stored end states is traced with isenthalpic letdowns to intermediate
pressures (a drawing aid); the end points drawn are the stored ones.  The SVG is made for a page whose
Content-Security-Policy forbids inline styles: matplotlib's ``style`` attributes are turned into SVG
presentation attributes.  No text typed by a user goes into the drawing.  Documents are kept in a
small in-memory cache per result.
"""
from __future__ import annotations

import hashlib
import io
import json
import logging
import math
import re
import threading
from collections import OrderedDict
from typing import Any

import matplotlib

matplotlib.use("Agg")

import numpy as np  # noqa: E402
from matplotlib.figure import Figure  # noqa: E402

from jtcheck import Fluid, letdown  # noqa: E402
from jtcheck.errors import JtcheckError  # noqa: E402
from jtcheck.records.models import CaseResult  # noqa: E402
from jtcheck.units import pressure_from_pa, temperature_from_k  # noqa: E402
from jtcheck.web.results import Units, conditions_of, fluid_key, limits_of, screening_view, units_of  # noqa: E402

#: Our colours: envelope ink, one per condition, limits.
INK = "#24313f"
ENVELOPE = "#5b6b7c"
PATHS = ("#1b6f8f", "#b0562a", "#6a4c93", "#2f7d4a")
COLD_LIMIT = "#b3261e"
TARGET = "#b86e00"
MDMT = "#7a1c14"
#: Lines of the sweep chart: colours and markers both differ, so that colour is not the only cue.
SWEEP_LINES = ("#1b6f8f", "#b0562a", "#6a4c93", "#2f7d4a", "#8a6d00", "#444f5a", "#a23b72", "#3b7ea1", "#5d8a2f")
SWEEP_MARKERS = ("o", "s", "^", "D", "v", "P", "X", "<", ">")

TITLE = "Pressure-temperature diagram: phase envelope, letdown paths, cold limit, limit plus margin and MDMT"
SWEEP_TITLE = "Operating sweep: outlet temperature across the operating ranges, with the cold limit"
_PRESENTATION = frozenset({
    "fill", "fill-opacity", "fill-rule", "stroke", "stroke-width", "stroke-opacity", "stroke-linecap",
    "stroke-linejoin", "stroke-dasharray", "stroke-dashoffset", "stroke-miterlimit", "opacity", "clip-path",
    "font-family", "font-size", "font-style", "font-weight", "text-anchor", "dominant-baseline", "visibility"})
_STYLE_ATTR = re.compile(r'\sstyle="([^"]*)"')
_log = logging.getLogger(__name__)
_LOCK = threading.Lock()          # one matplotlib drawing at a time
_FLUID_LOCK = threading.Lock()
_FLUIDS: OrderedDict[Any, Fluid] = OrderedDict()
_FLUID_CACHE_SIZE = 16


def _affine(fn, *args) -> tuple[float, float]:
    """(a, b) with fn(x, *args) = a x + b (unit conversions of pressure and temperature are affine)."""
    y0, y1 = fn(0.0, *args), fn(1000.0, *args)
    return (y1 - y0) / 1000.0, y0


def _fluid(key) -> Fluid:
    with _FLUID_LOCK:
        if key in _FLUIDS:
            _FLUIDS.move_to_end(key)
            return _FLUIDS[key]
    comp, eos, kij = key
    fluid = Fluid(list(comp), eos=eos, kij=kij)
    with _FLUID_LOCK:
        _FLUIDS[key] = fluid
        while len(_FLUIDS) > _FLUID_CACHE_SIZE:
            _FLUIDS.popitem(last=False)
    return fluid


def _presentation_attributes(match: re.Match[str]) -> str:
    attrs = []
    for item in match.group(1).split(";"):
        name, sep, value = item.partition(":")
        name, value = name.strip(), value.strip()
        if sep and name in _PRESENTATION and '"' not in value:
            attrs.append(f' {name}="{value}"')
    return "".join(attrs)


def inline_svg(svg: str, css_class: str = "pt-diagram", title: str = TITLE) -> str:
    """matplotlib's SVG made fit to sit inside an HTML page under a strict Content-Security-Policy."""
    svg = svg[svg.index("<svg"):]
    svg = re.sub(r"<metadata>.*?</metadata>", "", svg, flags=re.S)
    svg = re.sub(r"<style[^>]*>.*?</style>", "", svg, flags=re.S)
    svg = _STYLE_ATTR.sub(_presentation_attributes, svg)
    svg = re.sub(r'<svg([^>]*?)\swidth="[^"]*"\sheight="[^"]*"', r"<svg\1", svg, count=1)
    svg = svg.replace("<svg ", f'<svg class="{css_class}" role="img" aria-labelledby="{css_class}-title" '
                               'stroke-linejoin="round" stroke-linecap="butt" ', 1)
    end = svg.index(">") + 1
    return svg[:end] + f'<title id="{css_class}-title">{title}</title>' + svg[end:]


def _path(fluid: Fluid, p_in: float, t_in: float, p_out: float, t_out: float) -> tuple[np.ndarray, np.ndarray]:
    """Temperatures [K] and pressures [Pa] along the isenthalpic letdown (falls back to the end points)."""
    ps = np.linspace(p_in, p_out, 24)
    try:
        batch = letdown(fluid, p_in=p_in, t_in=t_in, p_out=ps)
        ts = np.asarray(batch.t_out, dtype=float)
        ok = np.asarray(batch.converged, dtype=bool) & np.isfinite(ts)
        if ok.sum() >= 2:
            return np.concatenate([ts[ok], [t_out]]), np.concatenate([ps[ok], [p_out]])
    except JtcheckError:
        pass
    return np.array([t_in, t_out]), np.array([p_in, p_out])


def render(result: CaseResult) -> str:
    """The P-T diagram of ``result`` as an SVG element (text)."""
    units: Units = units_of(result)
    limits = limits_of(result)
    tu, pu = units.temperature, units.inlet_pressure
    ta, tb = _affine(temperature_from_k, tu)
    pa_, pb = _affine(pressure_from_pa, pu, units.p_atm_pa)

    def tx(t_k):
        return ta * np.asarray(t_k, dtype=float) + tb

    def py(p_pa):
        return pa_ * np.asarray(p_pa, dtype=float) + pb

    fig = Figure(figsize=(9.0, 4.8), dpi=100)
    ax = fig.add_subplot(1, 1, 1)
    notes: list[str] = []
    fluid = None
    try:
        fluid = _fluid(fluid_key(result.inputs or {}))
        env = fluid.phase_envelope()
    except JtcheckError as exc:
        env = None
        notes.append(f"phase envelope not drawn: {exc}")
    if env is not None and len(env) > 1:
        branch = np.asarray(env.branch).astype(str)
        for name, style in (("dew", "-"), ("bubble", "--")):
            mask = branch == name
            if mask.sum() >= 2:
                ax.plot(tx(env.t_k[mask]), py(env.p_pa[mask]), style, color=ENVELOPE, linewidth=1.6,
                        label=f"{name} line")
        if env.critical is not None and all(math.isfinite(v) for v in env.critical):
            ax.plot(tx(env.critical[0]), py(env.critical[1]), "D", color=INK, markersize=5, label="critical point")
        if not env.converged:
            notes.append("phase envelope incomplete")
    for k, c in enumerate(conditions_of(result)):
        colour = PATHS[k % len(PATHS)]
        if c.p_in_pa is None or c.t_in_k is None:
            continue
        if c.converged and c.t_out_k is not None and c.p_out_pa is not None and fluid is not None:
            ts, ps = _path(fluid, c.p_in_pa, c.t_in_k, c.p_out_pa, c.t_out_k)
            ax.plot(tx(ts), py(ps), "-", color=colour, linewidth=2.0, label=f"{c.name}")
            ax.plot(tx(c.t_out_k), py(c.p_out_pa), "s", color=colour, markersize=6)
        ax.plot(tx(c.t_in_k), py(c.p_in_pa), "o", color=colour, markersize=6,
                label=None if c.converged else f"{c.name} (inlet only: not converged)")
    if limits.governing_k is not None:
        ax.axvline(float(tx(limits.governing_k)), color=COLD_LIMIT, linestyle="--", linewidth=1.4,
                   label="cold limit (governing)")
        if limits.target_k is not None and limits.target_k != limits.governing_k:
            ax.axvline(float(tx(limits.target_k)), color=TARGET, linestyle="-.", linewidth=1.3,
                       label="cold limit + margin")
    if limits.mdmt_k is not None and limits.mdmt_k != limits.governing_k:
        ax.axvline(float(tx(limits.mdmt_k)), color=MDMT, linestyle=":", linewidth=1.6, label="MDMT")
    ax.set_xlabel(f"Temperature [{tu}]", color=INK)
    ax.set_ylabel(f"Pressure [{pu}]", color=INK)
    ax.grid(True, color="#d5dbe1", linewidth=0.6)
    ax.tick_params(colors=INK)
    for spine in ax.spines.values():
        spine.set_color("#9aa5b1")
    if ax.get_legend_handles_labels()[0]:
        ax.legend(loc="upper left", bbox_to_anchor=(1.02, 1.0), fontsize=8, frameon=False, borderaxespad=0.0)
    if notes:
        ax.text(0.01, 0.01, "; ".join(notes)[:160], transform=ax.transAxes, fontsize=7, color=INK)
    fig.tight_layout()
    buf = io.StringIO()
    with matplotlib.rc_context({"svg.hashsalt": "jtcheck-pt", "svg.fonttype": "path"}):
        fig.savefig(buf, format="svg", metadata={"Date": None, "Creator": None})
    return inline_svg(buf.getvalue())


def render_sweep(result: CaseResult) -> str | None:
    """The operating sweep of ``result`` as an SVG element (text); None when the result has no sweep table."""
    view = screening_view(result)
    table = (view.sweep or {}).get("table")
    if not table or not table["rows"] or not table["columns"]:
        return None
    units = units_of(result)
    limits = view.limits
    xs = np.array([np.nan if c["value"] is None else c["value"] for c in table["columns"]], dtype=float)
    fig = Figure(figsize=(7.5, 4.2), dpi=100)
    ax = fig.add_subplot(1, 1, 1)
    for k, row in enumerate(table["rows"]):
        ys = np.array([np.nan if c["t_out"]["value"] is None else c["t_out"]["value"] for c in row["cells"]],
                      dtype=float)
        axis = row["axis"]
        label = (f"{table['row_dimension'].lower()} {axis['value']:.4g} {axis['unit']}"
                 if axis["value"] is not None else None)
        ax.plot(xs, ys, "-", color=SWEEP_LINES[k % len(SWEEP_LINES)], linewidth=1.4,
                marker=SWEEP_MARKERS[k % len(SWEEP_MARKERS)], markersize=4, label=label)
    if limits.governing_k is not None:
        ax.axhline(float(units.t(limits.governing_k)), color=COLD_LIMIT, linestyle="--", linewidth=1.4,
                   label="cold limit (governing)")
        if limits.target_k is not None and limits.target_k != limits.governing_k:
            ax.axhline(float(units.t(limits.target_k)), color=TARGET, linestyle="-.", linewidth=1.3,
                       label="cold limit + margin")
    xunit = table["columns"][0]["unit"]
    ax.set_xlabel(f"{table['column_dimension']} [{xunit}]", color=INK)
    ax.set_ylabel(f"Outlet temperature [{units.temperature}]", color=INK)
    ax.grid(True, color="#d5dbe1", linewidth=0.6)
    ax.tick_params(colors=INK)
    for spine in ax.spines.values():
        spine.set_color("#9aa5b1")
    ax.legend(loc="upper left", bbox_to_anchor=(1.02, 1.0), fontsize=7, frameon=False, borderaxespad=0.0)
    fixed = table["fixed"]
    if fixed["value"] is not None:
        ax.set_title(f"{table['fixed_dimension']} {fixed['value']:.4g} {fixed['unit']} ({table['model'] or 'model'})",
                     fontsize=9, color=INK)
    fig.tight_layout()
    buf = io.StringIO()
    with matplotlib.rc_context({"svg.hashsalt": "jtcheck-sweep", "svg.fonttype": "path"}):
        fig.savefig(buf, format="svg", metadata={"Date": None, "Creator": None})
    return inline_svg(buf.getvalue(), "sweep-chart", SWEEP_TITLE)


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
