"""Charts of a result, drawn with matplotlib as SVG from plain data: one drawing for the web pages and the records.

The pressure-temperature diagram shows the fluid's phase envelope (dew and bubble branches, critical
point), the letdown path of each computed condition from its inlet to its outlet state, and as vertical
lines the governing cold limit, the limit plus the required margin, and the MDMT when it does not govern; when
the MDMT comes from the material's exemption curve, the allowable metal temperature against pressure as a curve
(the region to its left is what the material does not allow at that pressure);
temperature on the x axis and pressure on the y axis, both in the units the case was entered in.

The sweep chart shows the operating sweep's table: outlet temperature against the table's column
dimension (usually the outlet pressure), one line per row value (usually the inlet pressure), with the
cold limit and limit plus margin as horizontal lines.

Two steps, so that the callers share the drawing and not their data models:

* :func:`pt_diagram_data` turns stored numbers (SI, plain) into what is drawn: the envelope comes from
  :meth:`jtcheck.Fluid.phase_envelope` and the path between the stored end states is traced with
  isenthalpic letdowns to intermediate pressures (a drawing aid; the end points drawn are the stored ones).
* :func:`draw_pt_diagram` and :func:`draw_sweep_chart` draw plain data as an inline ``<svg>`` element.

Two styles: :data:`SCREEN` (colours for the pages) and :data:`PRINT` (black and greys for the records:
line styles and markers carry every distinction, so that a black-and-white print reads the same).  The SVG
is made fit for a page whose Content-Security-Policy forbids inline styles: matplotlib's ``style``
attributes become SVG presentation attributes.  No text typed by a user goes into a drawing.
"""
from __future__ import annotations

import io
import math
import re
import threading
from collections import OrderedDict
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import Any

import matplotlib

matplotlib.use("Agg")

import numpy as np  # noqa: E402
from matplotlib.figure import Figure  # noqa: E402

from jtcheck import Fluid, hydrate_temperature, letdown  # noqa: E402
from jtcheck.errors import JtcheckError  # noqa: E402
from jtcheck.units import P_ATM_DEFAULT_PA, pressure_from_pa, temperature_from_k  # noqa: E402

TITLE = ("Pressure-temperature diagram: phase envelope, hydrate curve, letdown paths, cold limit, limit plus margin "
         "and MDMT")
SWEEP_TITLE = "Operating sweep: outlet temperature across the operating ranges, with the cold limit"


@dataclass(frozen=True)
class ChartStyle:
    """Inks of a drawing; ``paths`` and ``sweep_lines`` are cycled, ``*_markers`` too."""

    ink: str
    envelope: str
    paths: tuple[str, ...]
    path_markers: tuple[str, ...]
    cold_limit: str
    target: str
    mdmt: str
    sweep_lines: tuple[str, ...]
    sweep_markers: tuple[str, ...]
    sweep_styles: tuple[str, ...]
    grid: str
    spine: str
    hydrate: str = "#2a7f62"


#: Colours for the pages.  Lines of the sweep chart differ in colour and marker, so that colour is not the only cue.
SCREEN = ChartStyle(
    ink="#24313f", envelope="#5b6b7c", paths=("#1b6f8f", "#b0562a", "#6a4c93", "#2f7d4a"),
    path_markers=("s", "^", "D", "v", "P", "X"),
    cold_limit="#b3261e", target="#b86e00", mdmt="#7a1c14",
    sweep_lines=("#1b6f8f", "#b0562a", "#6a4c93", "#2f7d4a", "#8a6d00", "#444f5a", "#a23b72", "#3b7ea1", "#5d8a2f"),
    sweep_markers=("o", "s", "^", "D", "v", "P", "X", "<", ">"), sweep_styles=("-",),
    grid="#d5dbe1", spine="#9aa5b1")
#: Black and greys for printed records: markers and line styles tell the lines apart.
PRINT = ChartStyle(
    ink="#000000", envelope="#8c8c8c", paths=("#000000", "#404040", "#000000", "#606060"),
    path_markers=("s", "^", "D", "v", "P", "X"),
    cold_limit="#000000", target="#000000", mdmt="#4d4d4d",
    sweep_lines=("#000000", "#4d4d4d", "#7a7a7a"),
    sweep_markers=("o", "s", "^", "D", "v", "P", "X", "<", ">"), sweep_styles=("-", (0, (5, 1.5)), (0, (1, 1.2))),
    grid="#dddddd", spine="#666666", hydrate="#303030")


# -- plain data --------------------------------------------------------------------------------------------
@dataclass(frozen=True)
class ChartUnits:
    """Units of the axes: the units the case was entered in."""

    temperature: str = "degC"
    pressure: str = "barg"
    p_atm_pa: float = P_ATM_DEFAULT_PA


@dataclass(frozen=True)
class LetdownEnds:
    """The stored end states of one condition [Pa abs, K]; outlet None when it did not converge."""

    name: str
    converged: bool
    p_in_pa: float | None
    t_in_k: float | None
    p_out_pa: float | None = None
    t_out_k: float | None = None


@dataclass(frozen=True)
class ColdLines:
    """The temperature limits drawn [K]: governing cold limit, limit plus margin, MDMT."""

    governing_k: float | None = None
    target_k: float | None = None
    mdmt_k: float | None = None
    #: the material's allowable temperature against pressure ([Pa abs], [K]) when its MDMT comes from its
    #: exemption curve at the coincident pressure
    allowable: tuple[tuple[float, ...], tuple[float, ...]] | None = None


@dataclass(frozen=True)
class EnvelopeCurve:
    """A phase envelope as drawn [K, Pa]."""

    t_k: tuple[float, ...]
    p_pa: tuple[float, ...]
    branch: tuple[str, ...]
    critical: tuple[float, float] | None
    converged: bool


@dataclass(frozen=True)
class TracedPath:
    """A condition with the traced letdown path [K, Pa] (empty when only the inlet is drawn)."""

    ends: LetdownEnds
    t_k: tuple[float, ...] = ()
    p_pa: tuple[float, ...] = ()


@dataclass(frozen=True)
class HydrateCurve:
    """The hydrate equilibrium curve of the water-saturated fluid as drawn [K, Pa], with its method; only the
    points the model screens (inside its checked range)."""

    t_k: tuple[float, ...]
    p_pa: tuple[float, ...]
    method: str


@dataclass(frozen=True)
class PTDiagramData:
    """Everything the P-T diagram draws, SI."""

    units: ChartUnits
    envelope: EnvelopeCurve | None
    paths: tuple[TracedPath, ...]
    lines: ColdLines
    notes: tuple[str, ...] = ()
    hydrate: HydrateCurve | None = None


@dataclass(frozen=True)
class SweepLine:
    """One row of the sweep table: its legend label and the outlet temperatures (display unit, None: none)."""

    label: str | None
    y: tuple[float | None, ...]


@dataclass(frozen=True)
class SweepChartData:
    """The sweep chart in display units: x values (the table's columns), one line per row, limit lines."""

    x: tuple[float | None, ...]
    x_label: str
    y_label: str
    lines: tuple[SweepLine, ...]
    governing: float | None = None
    target: float | None = None
    title: str | None = None


# -- fluids and paths --------------------------------------------------------------------------------------
_FLUID_LOCK = threading.Lock()
_FLUIDS: OrderedDict[Any, Fluid] = OrderedDict()
_FLUID_CACHE_SIZE = 16
#: One matplotlib drawing at a time (re-entrant: a caller may hold it around several drawings).
DRAW_LOCK = threading.RLock()


def fluid_for(key: tuple[tuple[tuple[str, float], ...], str, int | None]) -> Fluid:
    """The fluid (composition, EOS, kij argument), kept in a small cache with its phase envelope."""
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


def fluid_key_of(inputs: dict[str, Any]) -> tuple[tuple[tuple[str, float], ...], str, int | None]:
    """(composition, EOS, kij argument) of the fluid a stored result was computed with (its ``inputs``)."""
    fluid = inputs.get("fluid") or {}
    comp = tuple((str(c), float(z)) for c, z in fluid.get("composition") or ())
    return comp, str(fluid.get("eos") or "PR"), fluid.get("kij")


def trace_path(fluid: Fluid, p_in: float, t_in: float, p_out: float, t_out: float) -> tuple[np.ndarray, np.ndarray]:
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


def pt_diagram_data(fluid_key: tuple[tuple[tuple[str, float], ...], str, int | None],
                    conditions: Sequence[LetdownEnds], lines: ColdLines, units: ChartUnits) -> PTDiagramData:
    """What the P-T diagram of a stored result draws: the envelope of its fluid and the traced letdown paths.

    A fluid or envelope that cannot be made leaves a note on the drawing instead of the envelope.
    """
    notes: list[str] = []
    fluid = None
    envelope = None
    try:
        fluid = fluid_for(fluid_key)
        env = fluid.phase_envelope()
    except JtcheckError as exc:
        env = None
        notes.append(f"phase envelope not drawn: {exc}")
    if env is not None and len(env) > 1:
        critical = None
        if env.critical is not None and all(math.isfinite(v) for v in env.critical):
            critical = (float(env.critical[0]), float(env.critical[1]))
        envelope = EnvelopeCurve(tuple(map(float, env.t_k)), tuple(map(float, env.p_pa)),
                                 tuple(np.asarray(env.branch).astype(str)), critical, bool(env.converged))
        if not env.converged:
            notes.append("phase envelope incomplete")
    paths = []
    for c in conditions:
        if (c.converged and fluid is not None and None not in (c.p_in_pa, c.t_in_k, c.p_out_pa, c.t_out_k)):
            ts, ps = trace_path(fluid, c.p_in_pa, c.t_in_k, c.p_out_pa, c.t_out_k)
            paths.append(TracedPath(c, tuple(map(float, ts)), tuple(map(float, ps))))
        else:
            paths.append(TracedPath(c))
    hydrate = hydrate_curve(fluid, conditions) if fluid is not None else None
    return PTDiagramData(units, envelope, tuple(paths), lines, tuple(notes), hydrate)


#: Points of the drawn hydrate curve.
HYDRATE_CURVE_POINTS = 40


def hydrate_curve(fluid: Fluid, conditions: Sequence[LetdownEnds]) -> HydrateCurve | None:
    """The water-saturated hydrate curve of ``fluid`` (van der Waals-Platteeuw, :func:`jtcheck.hydrate_temperature`)
    over the pressures of the letdowns, log-spaced; None when the model screens none of them (a fluid
    without hydrate formers, or outside the model's range)."""
    ps = [v for c in conditions for v in (c.p_in_pa, c.p_out_pa) if v is not None and v > 0.0]
    if not ps:
        return None
    lo, hi = max(min(ps) * 0.7, 0.5e5), max(ps) * 1.2
    p = np.geomspace(lo, hi, HYDRATE_CURVE_POINTS)
    res = hydrate_temperature(fluid, p)
    ok = np.asarray(res.screened, dtype=bool)
    if ok.sum() < 2:
        return None
    return HydrateCurve(tuple(map(float, res.t_k[ok])), tuple(map(float, p[ok])), res.method)


# -- SVG ---------------------------------------------------------------------------------------------------
_PRESENTATION = frozenset({
    "fill", "fill-opacity", "fill-rule", "stroke", "stroke-width", "stroke-opacity", "stroke-linecap",
    "stroke-linejoin", "stroke-dasharray", "stroke-dashoffset", "stroke-miterlimit", "opacity", "clip-path",
    "font-family", "font-size", "font-style", "font-weight", "text-anchor", "dominant-baseline", "visibility"})
_STYLE_ATTR = re.compile(r'\sstyle="([^"]*)"')


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


def _affine(fn: Callable[..., float], *args: Any) -> tuple[float, float]:
    """(a, b) with fn(x, *args) = a x + b (unit conversions of pressure and temperature are affine)."""
    y0, y1 = fn(0.0, *args), fn(1000.0, *args)
    return (y1 - y0) / 1000.0, y0


def _finish(fig: Figure, ax: Any, style: ChartStyle, salt: str, text_as_paths: bool, css_class: str,
            title: str, margins: tuple[float, float, float, float] | None) -> str:
    ax.grid(True, color=style.grid, linewidth=0.6)
    ax.tick_params(colors=style.ink)
    for spine in ax.spines.values():
        spine.set_color(style.spine)
    if margins is None:
        fig.tight_layout()      # measures every label: a drawing pass of its own
    else:
        left, bottom, right, top = margins
        fig.subplots_adjust(left=left, bottom=bottom, right=right, top=top)
    buf = io.StringIO()
    with matplotlib.rc_context({"svg.hashsalt": salt, "svg.fonttype": "path" if text_as_paths else "none"}):
        fig.savefig(buf, format="svg", metadata={"Date": None, "Creator": None})
    return inline_svg(buf.getvalue(), css_class, title)


def draw_pt_diagram(data: PTDiagramData, *, style: ChartStyle = SCREEN, text_as_paths: bool = True,
                    css_class: str = "pt-diagram", title: str = TITLE,
                    figsize: tuple[float, float] = (9.0, 4.8),
                    margins: tuple[float, float, float, float] | None = None) -> str:
    """The P-T diagram as an ``<svg>`` element (text).

    ``text_as_paths`` draws letters as outlines (the pages: the same look without fonts); False keeps them
    as SVG text (the records: searchable, smaller).  ``margins`` (left, bottom, right, top as fractions of
    the figure) fixes the axes instead of fitting them to the labels (faster; the legend sits right of
    ``right``); None fits them.
    """
    units = data.units
    tu, pu = units.temperature, units.pressure
    ta, tb = _affine(temperature_from_k, tu)
    pa_, pb = _affine(pressure_from_pa, pu, units.p_atm_pa)

    def tx(t_k):
        return ta * np.asarray(t_k, dtype=float) + tb

    def py(p_pa):
        return pa_ * np.asarray(p_pa, dtype=float) + pb

    with DRAW_LOCK:
        fig = Figure(figsize=figsize, dpi=100)
        ax = fig.add_subplot(1, 1, 1)
        env = data.envelope
        if env is not None:
            branch = np.asarray(env.branch)
            t_env, p_env = np.asarray(env.t_k, dtype=float), np.asarray(env.p_pa, dtype=float)
            for name, line in (("dew", "-"), ("bubble", "--")):
                mask = branch == name
                if mask.sum() >= 2:
                    ax.plot(tx(t_env[mask]), py(p_env[mask]), line, color=style.envelope, linewidth=1.6,
                            label=f"{name} line")
            if env.critical is not None:
                ax.plot(tx(env.critical[0]), py(env.critical[1]), "D", color=style.ink, markersize=5,
                        markerfacecolor="white" if style is PRINT else style.ink, label="critical point")
        for k, path in enumerate(data.paths):
            c = path.ends
            colour = style.paths[k % len(style.paths)]
            marker = style.path_markers[k % len(style.path_markers)]
            if c.p_in_pa is None or c.t_in_k is None:
                continue
            if len(path.t_k) >= 2 and c.t_out_k is not None and c.p_out_pa is not None:
                # the outlet marker on the path's last point: one legend entry shows line and marker
                ax.plot(tx(path.t_k), py(path.p_pa), "-", color=colour, linewidth=2.0 if style is SCREEN else 1.5,
                        marker=marker, markevery=[len(path.t_k) - 1], markersize=6, label=c.name)
            ax.plot(tx(c.t_in_k), py(c.p_in_pa), "o", color=colour, markersize=6,
                    markerfacecolor="white" if style is PRINT else colour,
                    label=None if c.converged else f"{c.name} (inlet only: not converged)")
        if data.hydrate is not None:
            ax.plot(tx(data.hydrate.t_k), py(data.hydrate.p_pa), linestyle=(0, (6, 2, 1.5, 2)),
                    color=style.hydrate, linewidth=1.5, label="hydrate curve (water-saturated)")
        lines = data.lines
        if lines.governing_k is not None:
            ax.axvline(float(tx(lines.governing_k)), color=style.cold_limit, linestyle="--", linewidth=1.4,
                       label="cold limit (governing)")
            if lines.target_k is not None and lines.target_k != lines.governing_k:
                ax.axvline(float(tx(lines.target_k)), color=style.target, linestyle="-.", linewidth=1.3,
                           label="cold limit + margin")
        if lines.allowable is not None:
            p_al, t_al = np.asarray(lines.allowable[0], dtype=float), np.asarray(lines.allowable[1], dtype=float)
            ok = np.isfinite(t_al)
            if ok.sum() >= 2:
                ax.plot(tx(t_al[ok]), py(p_al[ok]), linestyle=(0, (6, 2, 1, 2)), color=style.mdmt, linewidth=1.8,
                        label="allowable metal temperature at pressure (material curve)")
        if lines.mdmt_k is not None and lines.mdmt_k != lines.governing_k:
            ax.axvline(float(tx(lines.mdmt_k)), color=style.mdmt, linestyle=":", linewidth=1.6, label="MDMT")
        ax.set_xlabel(f"Temperature [{tu}]", color=style.ink)
        ax.set_ylabel(f"Pressure [{pu}]", color=style.ink)
        if ax.get_legend_handles_labels()[0]:
            ax.legend(loc="upper left", bbox_to_anchor=(1.02, 1.0), fontsize=8, frameon=False, borderaxespad=0.0)
        if data.notes:
            ax.text(0.01, 0.01, "; ".join(data.notes)[:160], transform=ax.transAxes, fontsize=7, color=style.ink)
        return _finish(fig, ax, style, "jtcheck-pt", text_as_paths, css_class, title, margins)


def draw_sweep_chart(data: SweepChartData, *, style: ChartStyle = SCREEN, text_as_paths: bool = True,
                     css_class: str = "sweep-chart", title: str = SWEEP_TITLE,
                     figsize: tuple[float, float] = (7.5, 4.2),
                     margins: tuple[float, float, float, float] | None = None) -> str:
    """The operating sweep chart as an ``<svg>`` element (text); ``margins`` as for :func:`draw_pt_diagram`."""
    xs = np.array([np.nan if v is None else v for v in data.x], dtype=float)
    with DRAW_LOCK:
        fig = Figure(figsize=figsize, dpi=100)
        ax = fig.add_subplot(1, 1, 1)
        for k, row in enumerate(data.lines):
            ys = np.array([np.nan if v is None else v for v in row.y], dtype=float)
            ax.plot(xs, ys, color=style.sweep_lines[k % len(style.sweep_lines)],
                    linestyle=style.sweep_styles[k % len(style.sweep_styles)], linewidth=1.4,
                    marker=style.sweep_markers[k % len(style.sweep_markers)], markersize=4,
                    markerfacecolor="white" if style is PRINT and k % 2 else None, label=row.label)
        if data.governing is not None:
            ax.axhline(float(data.governing), color=style.cold_limit, linestyle="--",
                       linewidth=1.4 if style is SCREEN else 1.8, label="cold limit (governing)")
            if data.target is not None and data.target != data.governing:
                ax.axhline(float(data.target), color=style.target, linestyle="-.", linewidth=1.3,
                           label="cold limit + margin")
        ax.set_xlabel(data.x_label, color=style.ink)
        ax.set_ylabel(data.y_label, color=style.ink)
        if ax.get_legend_handles_labels()[0]:
            ax.legend(loc="upper left", bbox_to_anchor=(1.02, 1.0), fontsize=7, frameon=False, borderaxespad=0.0)
        if data.title:
            ax.set_title(data.title, fontsize=9, color=style.ink)
        return _finish(fig, ax, style, "jtcheck-sweep", text_as_paths, css_class, title, margins)
