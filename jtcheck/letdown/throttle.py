"""Isenthalpic letdown across a valve, choke or pressure-reduction station.

Across a throttling device with negligible heat exchange and kinetic-energy change, the steady-flow
energy balance reduces to h_out(P_out, T_out) = h_in(P_in, T_in) (the Joule-Thomson expansion).
The inlet state comes from a stability-tested PT flash, the outlet from a PH flash
(:mod:`jtcheck.thermo.flash`), both with the fluid's cubic equation of state: ideal-gas enthalpy
plus residual enthalpy.

``letdown`` takes scalars (one case, :class:`LetdownResult`) or arrays (many cases of one fluid,
:class:`LetdownBatch`, solved by a compiled parallel loop over the same scalar algorithm).
"""
from __future__ import annotations

import math
from dataclasses import asdict, dataclass, field, replace

import numpy as np

from jtcheck import marks
from jtcheck.errors import InputError
from jtcheck.letdown.checks import check_fluid
from jtcheck.thermo.flash import pure_supercritical
from jtcheck.thermo.fluid import Fluid
from jtcheck.thermo.kernels.constants import ST_PURE_SAT, ST_SINGLE, ST_TWO
from jtcheck.thermo.kernels.letdown_batch import letdown_batch

#: CO2 triple point: 216.592 K, 0.51795 MPa (Span and Wagner, J. Phys. Chem. Ref. Data 25 (1996) 1509).
CO2_TRIPLE_T_K = 216.592
CO2_TRIPLE_P_PA = 0.51795e6

#: Lowest inlet temperature a letdown accepts [K]: the lowest temperature covered by the heat-capacity fits of the
#: component library (``cp_tmin_k`` in ``thermo/data/components.csv``); below it the models are not valid (and
#: near 0 K the flash divides by zero).
T_IN_MIN_K = 50.0

#: Batches at least this large compute the fluid's phase envelope first to skip needless stability tests.
BATCH_ENVELOPE_MIN = 200


def _check_positive(name: str, value, what: str, unit: str) -> np.ndarray:
    arr = np.asarray(value, dtype=float)
    if arr.size == 0:
        raise InputError(name, f"no value given; {what} is required [{unit}]")
    bad = ~np.isfinite(arr)
    if bad.any():
        raise InputError(name, f"{what} must be a finite number [{unit}], got {arr[bad].flat[0]!r}")
    if np.any(arr <= 0.0):
        raise InputError(name, f"{what} must be greater than 0 {unit} (absolute), got {arr[arr <= 0].flat[0]:g}")
    return arr


def check_letdown_inputs(p_in, t_in, p_out):
    """Validate and broadcast letdown inputs; raise InputError naming the field."""
    p_in_a = _check_positive("p_in", p_in, "inlet pressure", "Pa")
    t_in_a = _check_positive("t_in", t_in, "inlet temperature", "K")
    p_out_a = _check_positive("p_out", p_out, "outlet pressure", "Pa")
    try:
        p_in_b, t_in_b, p_out_b = np.broadcast_arrays(p_in_a, t_in_a, p_out_a)
    except ValueError:
        raise InputError("p_in", f"p_in, t_in and p_out have shapes {p_in_a.shape}, {t_in_a.shape}, "
                                 f"{p_out_a.shape} that do not broadcast together") from None
    over = p_out_b > p_in_b
    if over.any():
        k = int(np.flatnonzero(over.ravel())[0])
        p_o, p_i = float(p_out_b.ravel()[k]), float(p_in_b.ravel()[k])
        raise InputError("p_out", f"outlet pressure {marks.P(p_o, 'outlet_pressure', 6)} is above the inlet pressure "
                                  f"{marks.P(p_i, 'inlet_pressure', 6)}; a letdown needs p_out <= p_in")
    if np.any(t_in_b > 2000.0):
        raise InputError("t_in", f"inlet temperature {marks.T(float(t_in_b.max()), 'inlet_temperature', 6)} is above "
                                 f"{marks.T(2000.0, 'inlet_temperature', 6)}, the range of the heat-capacity data")
    if np.any(t_in_b < T_IN_MIN_K):
        raise InputError("t_in", f"inlet temperature {marks.T(float(t_in_b.min()), 'inlet_temperature', 6)} is below "
                                 f"{marks.T(T_IN_MIN_K, 'inlet_temperature', 6)}, the lowest temperature of the "
                                 "heat-capacity data")
    return p_in_b, t_in_b, p_out_b


@dataclass(frozen=True)
class LetdownResult:
    """Outcome of one isenthalpic letdown.  All values SI.

    Attributes
    ----------
    p_in, t_in, p_out : float
        Inlet pressure [Pa], inlet temperature [K], outlet pressure [Pa].
    t_out : float
        Outlet temperature [K].
    dt : float
        t_out - t_in [K] (negative: the fluid cools).
    vapor_fraction : float
        Outlet vapour mole fraction [-].
    phase : str
        Outlet phase: "vapour", "liquid", "two-phase", "supercritical" (a pure component above its
        critical pressure and temperature, counted as vapour), or "unknown" if not converged.
    inlet_phase : str
    inlet_vapor_fraction : float
    h : float
        Molar enthalpy, inlet = outlet [J/mol].
    x_out, y_out : tuple of float
        Outlet liquid and vapour mole fractions [-] (equal to the feed in a single phase).
    converged : bool
        False when either flash failed; then ``t_out`` must not be used and ``message`` says why.
    message : str
    warnings : tuple of str
        States outside the model's validity and model choices that need attention.
    basis : dict
        EOS, kij set, volume translation, data versions.
    """

    p_in: float
    t_in: float
    p_out: float
    t_out: float
    dt: float
    vapor_fraction: float
    phase: str
    inlet_phase: str
    inlet_vapor_fraction: float
    h: float
    x_out: tuple[float, ...]
    y_out: tuple[float, ...]
    converged: bool
    message: str
    warnings: tuple[str, ...] = field(default=())
    basis: dict = field(default_factory=dict)
    component_ids: tuple[str, ...] = field(default=())

    def to_dict(self) -> dict:
        """Plain-JSON representation (SI units)."""
        d = asdict(self)
        for k, v in d.items():
            if isinstance(v, float) and not math.isfinite(v):
                d[k] = None
        d["warnings"] = list(self.warnings)
        d["x_out"] = list(self.x_out)
        d["y_out"] = list(self.y_out)
        d["component_ids"] = list(self.component_ids)
        return d


@dataclass(frozen=True)
class LetdownBatch:
    """Outcome of many letdowns of one fluid; every attribute is an array of the broadcast shape.

    Attributes mirror :class:`LetdownResult`; ``warnings`` is a tuple of tuples (one per case, in
    flattened order) and ``status`` the solver status code of the outlet flash.
    """

    p_in: np.ndarray
    t_in: np.ndarray
    p_out: np.ndarray
    t_out: np.ndarray
    dt: np.ndarray
    vapor_fraction: np.ndarray
    phase: np.ndarray
    inlet_vapor_fraction: np.ndarray
    h: np.ndarray
    converged: np.ndarray
    status: np.ndarray
    warnings: tuple[tuple[str, ...], ...]
    basis: dict

    def __len__(self) -> int:
        return int(self.t_out.size)


def _state_warnings(fluid: Fluid, p_out, t_out, t_in) -> list[list[str]]:
    """Validity warnings for outlet states (arrays of equal shape, flattened); one list per case."""
    p_out = np.atleast_1d(np.asarray(p_out, float)).ravel()
    t_out = np.atleast_1d(np.asarray(t_out, float)).ravel()
    t_in = np.atleast_1d(np.asarray(t_in, float)).ravel()
    notes: list[list[str]] = [[] for _ in range(t_out.size)]
    finite = np.isfinite(t_out)

    def add(mask, text_fn):
        for k in np.flatnonzero(mask & finite):
            notes[k].append(text_fn(k))

    for comp, z in zip(fluid.components, fluid.zs, strict=True):
        if comp.id == "carbon dioxide" and z >= 0.5:
            dry_ice = (p_out < CO2_TRIPLE_P_PA) & (t_out < CO2_TRIPLE_T_K + 1.0)
            add(dry_ice, lambda k: (
                f"CO2-rich fluid let down below the CO2 triple-point pressure ({marks.P(CO2_TRIPLE_P_PA, '', 3)}): "
                "dry ice (solid CO2) can form; the fluid-only EOS reports a metastable vapour-liquid state that "
                "is too cold"))
        elif comp.t_triple_k and z >= 0.01:
            add(t_out < comp.t_triple_k, lambda k, c=comp: (
                f"outlet {marks.T(t_out[k])} is below the triple point of {c.name} ({marks.T(c.t_triple_k)}): it can "
                "freeze; the EOS has no solid phase"))
        if comp.id == "water":
            add(t_out < 273.16, lambda k, z=z: (
                f"water present ({z:.3g} mol/mol) and outlet below 0 degC: ice and hydrates can form"))
        if z >= 0.01:
            add(t_out < comp.cp_tmin_k, lambda k, c=comp: (
                f"outlet {marks.T(t_out[k])} is below the range of the ideal-gas heat-capacity data of {c.name} "
                f"({marks.T(c.cp_tmin_k)}): extrapolated"))
    add(t_out > t_in + 1e-6, lambda k: "the fluid warms on letdown (inverse Joule-Thomson effect)")
    if not fluid.eos.is_cubic:
        for k in np.flatnonzero(finite):
            try:
                notes[k] += fluid.check_state(t_out[k], p_out[k if p_out.size > 1 else 0], "outlet", "t_out")
            except InputError:
                pass   # outside the extended range: the case is marked not converged by the caller
    return notes


def _outlet_refused(fluid: Fluid, p_out: float, t_out: float) -> str:
    """Why an outlet state cannot be given (outside GERG-2008's extended range), or ""."""
    try:
        fluid.check_state(t_out, p_out, "outlet", "t_out")
    except InputError as exc:
        return f"not screened: {exc.message}"
    return ""


def letdown(fluid: Fluid, p_in, t_in, p_out) -> LetdownResult | LetdownBatch:
    """Outlet state of an isenthalpic letdown.

    Parameters
    ----------
    fluid : Fluid
        The flowing fluid.
    p_in : float or array_like
        Inlet pressure, absolute [Pa].
    t_in : float or array_like
        Inlet temperature [K].
    p_out : float or array_like
        Outlet pressure, absolute [Pa]; not above ``p_in``.

    Returns
    -------
    LetdownResult or LetdownBatch
        A single result for scalar inputs, a batch of arrays otherwise.

    Raises
    ------
    jtcheck.errors.InputError
        For non-finite or non-positive inputs, or p_out > p_in; the message names the field.
    """
    check_fluid(fluid)
    scalar = all(np.ndim(v) == 0 for v in (p_in, t_in, p_out))
    p_in_b, t_in_b, p_out_b = check_letdown_inputs(p_in, t_in, p_out)
    fluid.check_state(t_in_b, p_in_b, "inlet", "t_in")   # GERG-2008: refuse outside its extended range
    if scalar:
        return _letdown_one(fluid, float(p_in_b), float(t_in_b), float(p_out_b))
    return _letdown_many(fluid, p_in_b, t_in_b, p_out_b)


def _letdown_one(fluid: Fluid, p_in: float, t_in: float, p_out: float) -> LetdownResult:
    inlet = fluid.flash_pt(t_in, p_in)
    basis = fluid.basis()
    ids = fluid.ids
    if not inlet.converged:
        return LetdownResult(p_in, t_in, p_out, math.nan, math.nan, math.nan, "unknown", "unknown", math.nan,
                             math.nan, (), (), False, f"inlet flash failed: {inlet.message}",
                             tuple(fluid.warnings), basis, ids)
    out = fluid.flash_ph(p_out, inlet.h, t_guess_k=t_in)
    notes = list(fluid.warnings) + fluid.check_state(t_in, p_in, "inlet")
    if out.converged:
        notes += _state_warnings(fluid, p_out, out.T, t_in)[0]
        msg = out.message
        refused = _outlet_refused(fluid, p_out, out.T)
        if refused:
            out = replace(out, converged=False, phase="unknown")
            msg = refused
    else:
        msg = f"outlet flash failed: {out.message} (residual {out.residual:.3g} J/mol)"
    return LetdownResult(
        p_in=p_in, t_in=t_in, p_out=p_out, t_out=out.T if out.converged else math.nan,
        dt=(out.T - t_in) if out.converged else math.nan,
        vapor_fraction=out.beta if out.converged else math.nan, phase=out.phase, inlet_phase=inlet.phase,
        inlet_vapor_fraction=inlet.beta, h=inlet.h, x_out=tuple(map(float, out.x)), y_out=tuple(map(float, out.y)),
        converged=out.converged, message=msg, warnings=tuple(notes), basis=basis, component_ids=ids)


def _letdown_many(fluid: Fluid, p_in: np.ndarray, t_in: np.ndarray, p_out: np.ndarray) -> LetdownBatch:
    shape = p_in.shape
    pi = np.ascontiguousarray(p_in.ravel(), dtype=float)
    ti = np.ascontiguousarray(t_in.ravel(), dtype=float)
    po = np.ascontiguousarray(p_out.ravel(), dtype=float)
    offset = np.zeros_like(pi)
    if fluid.volume_translation:
        cz = float(fluid.zs @ fluid.vol_shifts)
        offset = -cz * (pi - po)   # H_out(untranslated) = H_in - c (P_in - P_out)
    # for large batches, find the fluid's cricondentherm once: above it no stability test is needed
    t_skip = fluid.single_phase_above_k() if pi.size >= BATCH_ENVELOPE_MIN else math.inf
    (st_in, b_in, h_in, s_in, st_out, T_out, b_out, h_out, s_out, iters, resid) = letdown_batch(
        fluid.mixture.kernel_params, np.ascontiguousarray(fluid.zs), pi, ti, po, 0, offset, t_skip)
    ok_in = np.isin(st_in, (ST_SINGLE, ST_TWO, ST_PURE_SAT))
    ok_out = np.isin(st_out, (ST_SINGLE, ST_TWO, ST_PURE_SAT))
    conv = ok_in & ok_out
    if not fluid.eos.is_cubic:   # an outlet outside GERG-2008's extended range is not screened
        conv = conv & np.array([not (c and _outlet_refused(fluid, p, t)) for c, p, t in zip(conv, po, T_out,
                                                                                            strict=True)])
    T = np.where(conv, T_out, np.nan)
    beta = np.where(conv, b_out, np.nan)
    two = conv & (beta > 0.0) & (beta < 1.0)
    phase = np.where(~conv, "unknown", np.where(two, "two-phase", np.where(beta >= 0.5, "vapour", "liquid")))
    sc = conv & ~two & pure_supercritical(fluid.mixture, fluid.zs, po, T)
    single_in = (b_in <= 0.0) | (b_in >= 1.0)
    b_in = np.where(ok_in & single_in & pure_supercritical(fluid.mixture, fluid.zs, pi, ti), 1.0, b_in)
    phase = np.where(sc, "supercritical", phase)
    beta = np.where(sc, 1.0, beta)
    base = tuple(fluid.warnings) + tuple(fluid.check_state(ti, pi, "inlet"))
    per_case = _state_warnings(fluid, po, T, ti)
    warns = []
    for k in range(pi.size):
        extra = per_case[k]
        if not conv[k]:
            extra = extra + ["inlet flash failed" if not ok_in[k] else "outlet flash failed"]
        warns.append(base + tuple(extra) if extra else base)
    return LetdownBatch(
        p_in=p_in, t_in=t_in, p_out=p_out, t_out=T.reshape(shape), dt=(T - ti).reshape(shape),
        vapor_fraction=beta.reshape(shape), phase=phase.reshape(shape), inlet_vapor_fraction=b_in.reshape(shape),
        h=(h_in + fluid.enthalpy_shift(1.0) * pi).reshape(shape), converged=conv.reshape(shape),
        status=st_out.reshape(shape), warnings=tuple(warns), basis=fluid.basis())
