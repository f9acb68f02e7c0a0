"""Temperatures along a flare header: relief streams mixed, then let down section by section.

A relief case screened at the back pressure of the valve sees the header at its highest pressure.
The header is a path: the tailpipe, the sub-header, the main header, the knock-out drum and the tip
follow one another in the direction of flow, and the pressure falls along it.  A relief stream that
cools on expansion (a gas with a positive Joule-Thomson coefficient, or a liquid that flashes) is
coldest where the pressure is lowest, downstream of the valve.  API Standard 521 (pressure-relieving
and depressuring systems) asks that the design of the disposal system consider the lowest temperature
reached by auto-refrigeration of the relieved fluids, with brittle fracture of the piping in mind
(verify the clause in the edition in force).

Method
------
1. **Sources.**  Each relief source brings a mass flow m_i [kg/s] and a molar enthalpy h_i [J/mol],
   either given or computed from a pressure and temperature anywhere upstream on its isenthalpic path
   (the relieving state of the valve, or the state at the valve outlet).  The sources discharge
   together.
2. **Mixing** by mole and energy balance (steady flow, adiabatic, kinetic energy neglected):

       n_i = m_i / M_i,   z = sum_i n_i z_i / sum_i n_i,   h = sum_i n_i h_i / sum_i n_i

   with M_i the mean molar mass of source i.  The enthalpies must share one reference state, so all of
   them come from one model: the mixture's.  The mixture takes the sources' common equation of state
   and volume translation, the union of their components and a kij set in which every pair present in
   a source keeps that source's value (pairs that never meet in one source take jtcheck's table).  A
   source given by (p, t) is flashed with the mixture's model at its own composition (zero mole
   fraction for the components it lacks), which gives the same enthalpy as its own fluid.  jtcheck's
   enthalpies are zero for each component as an ideal gas at 298.15 K, so the ideal-gas parts agree
   for any sources; the residual parts (and the heat of mixing of real streams) come from the EOS.
3. **Each section** is an isenthalpic (PH) flash of the mixture (Michelsen, Fluid Phase Equilib. 33
   (1987) 13-27, through :mod:`jtcheck.thermo.flash`) at both ends of the section.  The pipe is
   taken as adiabatic and the change of kinetic energy is neglected, so h is the same everywhere in
   the header.  On an isenthalp the temperature has no interior minimum in pressure (its extremum, on
   the Joule-Thomson inversion curve, is a maximum), so the colder end is the coldest point of the
   section: the outlet, the lowest pressure, for a cooling fluid; the inlet for a fluid that warms on
   expansion (hydrogen or helium near room temperature).  The section is screened at that end.
4. **Screening.**  ``fail`` when the screened temperature is below the section's limit; ``pass`` when
   it is at or above it and both flashes converged; ``not screened`` when a flash did not converge or
   no limit was given.  A flash that did not converge never passes.  Liquid in a section (vapour
   fraction below 1 at either end) is flagged: liquid carried over flashes at the section pressure.
   A single phase that the flash labels "liquid" above the mixture's pseudo-critical temperature and
   below its pseudo-critical pressure (Kay's rule) is counted as gas, with a note.

Limits of the method
--------------------
* The pressure profile is an input (from the header's hydraulic calculation for this relief case);
  it is not computed here and does not follow the flow.
* All sources are mixed before the first section.  A tailpipe or sub-header that carries one source
  alone is screened with that source alone (one call with that source); a source that joins further
  downstream is not modelled separately.
* No heat exchange with the pipe or the surroundings: the steady-state, adiabatic temperature.  The
  pipe wall warms the fluid in reality, and a warm pipe takes time to cool; neither is credited.
* Equilibrium phases, no solids (dry ice, hydrates, ice, frozen heavy components): the warnings of
  :func:`jtcheck.letdown.letdown` apply.  A liquid film or pool evaporating into the gas that sweeps
  it can get colder than the equilibrium flash temperature; that is not modelled.
* A given h_j_per_mol must come from the same model basis (EOS, kij, volume translation) as the
  source's fluid, as jtcheck's own results do (``LetdownResult.h``).

SI units throughout: Pa absolute, K, J/mol, kg/s.
"""
from __future__ import annotations

import enum
import math
from collections.abc import Sequence
from dataclasses import dataclass, field, replace
from typing import Any

import numpy as np

from jtcheck import marks
from jtcheck.errors import InputError
from jtcheck.letdown.checks import T_MAX_K, check_fluid, finite, positive
from jtcheck.letdown.plain import PlainResult
from jtcheck.letdown.throttle import _state_warnings
from jtcheck.thermo import flash as _flash
from jtcheck.thermo.flash import FlashResult
from jtcheck.thermo.fluid import Fluid

#: A section's inlet may lie this much above the previous section's outlet [Pa] (1 mbar: pressures
#: copied from a hydraulic calculation rounded to the millibar); the same tolerance applies to a
#: source's pressure against the header inlet.
PRESSURE_TOLERANCE_PA = 100.0

#: Starting temperature of the first PH flash when no source temperature is known [K].
T_GUESS_DEFAULT_K = 300.0

METHOD = ("mixing by mole and energy balance of the relief sources (one EOS, one enthalpy reference); "
          "isenthalpic (PH) flash of the mixture at both ends of each header section (adiabatic pipe, "
          "kinetic energy neglected); each section screened at its colder end")


class Band(enum.StrEnum):
    """Screening band of a header section (a string: ``Band.FAIL == "fail"``)."""

    PASS = "pass"
    FAIL = "fail"
    NOT_SCREENED = "not screened"


# ---------------------------------------------------------------------------------------------
# inputs
# ---------------------------------------------------------------------------------------------

def _name(field_name: str, value: Any, what: str) -> str:
    if not isinstance(value, str) or not value.strip():
        raise InputError(field_name, f"{what} name must be a non-empty text, got {value!r}")
    return value.strip()


@dataclass(frozen=True)
class HeaderSection:
    """One section of the flare header, in flow order from the valve outlet to the tip.

    Parameters
    ----------
    name : str
        What the section is ("tailpipe PSV-101", "sub-header", "main header", "knock-out drum", "tip").
    p_inlet_pa : float
        Pressure at the section's inlet, absolute [Pa], > 0.
    p_outlet_pa : float
        Pressure at the section's outlet, absolute [Pa], > 0 and not above ``p_inlet_pa`` (the pressure
        falls along the flow; equal ends describe a vessel such as the knock-out drum).
    limit_k : float or None
        Lowest allowed temperature of the section's material [K], 0 to 2000 (its minimum design metal
        temperature); None when not known: the section is then not screened.
    material : str, optional
        Material of the section, for the record ("" when not given).

    Raises
    ------
    jtcheck.errors.InputError
        For an empty name, a pressure not finite or not above 0, an outlet above the inlet, or a limit
        outside 0 to 2000 K; the field is named and the message names the section.

    See Also
    --------
    sections_from_drops : the sections of a header given by their pressure drops.
    """

    name: str
    p_inlet_pa: float
    p_outlet_pa: float
    limit_k: float | None
    material: str = ""

    def __post_init__(self) -> None:
        name = _name("name", self.name, "section")
        label = f"section {name!r}: "

        def number(field_name: str, what: str, unit: str, upper: float | None = None) -> float:
            try:
                return positive(field_name, getattr(self, field_name), what, unit, upper)
            except InputError as exc:
                raise InputError(field_name, label + exc.message) from None

        p_in = number("p_inlet_pa", "inlet pressure", "Pa")
        p_out = number("p_outlet_pa", "outlet pressure", "Pa")
        if p_out > p_in:
            raise InputError("p_outlet_pa", f"{label}outlet pressure {p_out:g} Pa is above the inlet pressure "
                                            f"{p_in:g} Pa; the pressure falls along the flow (p_outlet <= p_inlet)")
        limit = None if self.limit_k is None else number("limit_k", "temperature limit", "K", T_MAX_K)
        if not isinstance(self.material, str):
            raise InputError("material", f"{label}material must be a text, got {self.material!r}")
        for key, value in (("name", name), ("p_inlet_pa", p_in), ("p_outlet_pa", p_out), ("limit_k", limit)):
            object.__setattr__(self, key, value)


def sections_from_drops(p_inlet_pa: float, names: Sequence[str], dp_pas: Sequence[float],
                        limits_k: Sequence[float | None],
                        materials: Sequence[str] | None = None) -> tuple[HeaderSection, ...]:
    """Header sections given by their pressure drops, chained in flow order.

    Section k runs from p_k to p_k - dp_k, and section k+1 starts where section k ends.

    Parameters
    ----------
    p_inlet_pa : float
        Pressure at the inlet of the first section (the back pressure at the valve), absolute [Pa].
    names : sequence of str
        Section names in flow order.
    dp_pas : sequence of float
        Pressure drop of each section [Pa], >= 0.
    limits_k : sequence of float or None
        Lowest allowed temperature of each section [K] (None: not screened).
    materials : sequence of str, optional
        Material of each section.

    Returns
    -------
    tuple of HeaderSection

    Raises
    ------
    jtcheck.errors.InputError
        For sequences of different lengths (field ``dp_pas``, ``limits_k`` or ``materials``), a negative
        drop, or drops that take the pressure to 0 Pa or below (field ``dp_pas``, naming the section).
    """
    p = positive("p_inlet_pa", p_inlet_pa, "header inlet pressure", "Pa")
    names = list(names)
    mats = [""] * len(names) if materials is None else list(materials)
    for key, seq in (("dp_pas", list(dp_pas)), ("limits_k", list(limits_k)), ("materials", mats)):
        if len(seq) != len(names):
            raise InputError(key, f"{len(seq)} values for {len(names)} section names; give one per section")
    if not names:
        raise InputError("names", "no sections; give at least one")
    out = []
    for name, dp, limit, mat in zip(names, dp_pas, limits_k, mats, strict=True):
        d = finite("dp_pas", dp, f"pressure drop of section {name!r}", "Pa")
        if d < 0.0:
            raise InputError("dp_pas", f"section {name!r}: pressure drop must be 0 Pa or more, got {d:g}")
        if d >= p:
            raise InputError("dp_pas", f"section {name!r}: pressure drop {d:g} Pa takes the pressure from {p:g} Pa "
                                       "to 0 Pa or below")
        out.append(HeaderSection(name, p, p - d, limit, mat))
        p -= d
    return tuple(out)


@dataclass(frozen=True)
class ReliefSource:
    """A relief stream discharging into the flare header.

    Give either ``h_j_per_mol`` or both ``p_pa`` and ``t_k``.

    Parameters
    ----------
    name : str
        What relieves ("PSV-101 separator, blocked outlet").
    fluid : Fluid
        The relieved fluid (composition, EOS, kij, volume translation).
    mass_flow_kg_per_s : float
        Relieving mass flow [kg/s], > 0.
    p_pa : float, optional
        Pressure of a known state of the stream, absolute [Pa], anywhere upstream on its isenthalpic
        path to the header: the relieving state of the valve or the state at the valve outlet.  Not
        below the header inlet pressure (checked by :func:`screen_header`).
    t_k : float, optional
        Temperature at ``p_pa`` [K], 0 to 2000.
    h_j_per_mol : float, optional
        Molar enthalpy of the stream [J/mol] on the fluid's own model basis (ideal gas at 298.15 K is
        zero), e.g. ``LetdownResult.h``; ``p_pa`` may accompany it for the pressure check.

    Raises
    ------
    jtcheck.errors.InputError
        For an empty name, a fluid that is not a jtcheck Fluid, a mass flow not above 0, or neither (or
        both) of the enthalpy and the temperature; the field is named and the message names the source.
    """

    name: str
    fluid: Fluid
    mass_flow_kg_per_s: float
    p_pa: float | None = None
    t_k: float | None = None
    h_j_per_mol: float | None = None

    def __post_init__(self) -> None:
        name = _name("name", self.name, "source")
        label = f"source {name!r}: "
        try:
            check_fluid(self.fluid)
            m = positive("mass_flow_kg_per_s", self.mass_flow_kg_per_s, "mass flow", "kg/s")
            p = None if self.p_pa is None else positive("p_pa", self.p_pa, "pressure", "Pa")
            t = None if self.t_k is None else positive("t_k", self.t_k, "temperature", "K", T_MAX_K)
            h = None if self.h_j_per_mol is None else finite("h_j_per_mol", self.h_j_per_mol, "molar enthalpy",
                                                               "J/mol")
        except InputError as exc:
            raise InputError(exc.field, label + exc.message) from None
        if h is not None and t is not None:
            raise InputError("h_j_per_mol", f"{label}give either the molar enthalpy or the temperature (with the "
                                            "pressure), not both")
        if h is None and (p is None or t is None):
            missing = "t_k" if t is None else "p_pa"
            raise InputError(missing, f"{label}give the pressure p_pa and temperature t_k of the stream, or its "
                                      "molar enthalpy h_j_per_mol")
        for key, value in (("name", name), ("mass_flow_kg_per_s", m), ("p_pa", p), ("t_k", t), ("h_j_per_mol", h)):
            object.__setattr__(self, key, value)


# ---------------------------------------------------------------------------------------------
# results
# ---------------------------------------------------------------------------------------------

@dataclass(frozen=True)
class SourceInHeader(PlainResult):
    """One relief source as it enters the mixture.  All values SI.

    Attributes
    ----------
    name : str
    mass_flow_kg_per_s : float
        Mass flow [kg/s].
    molar_mass_kg_per_mol : float
        Mean molar mass of the source [kg/mol].
    molar_flow_mol_per_s : float
        Molar flow m / M [mol/s].
    h_j_per_mol : float
        Molar enthalpy on the mixture's model basis [J/mol] (NaN when its flash failed).
    p_pa, t_k : float or None
        The state it was given at [Pa], [K] (None when the enthalpy was given).
    enthalpy_from : str
        "p, t flash" or "given".
    component_ids : tuple of str
    zs : tuple of float
        Its mole fractions [-].
    """

    name: str
    mass_flow_kg_per_s: float
    molar_mass_kg_per_mol: float
    molar_flow_mol_per_s: float
    h_j_per_mol: float
    p_pa: float | None
    t_k: float | None
    enthalpy_from: str
    component_ids: tuple[str, ...]
    zs: tuple[float, ...]


@dataclass(frozen=True)
class HeaderSectionResult(PlainResult):
    """Screening of one header section.  All values SI.

    Attributes
    ----------
    name, material : str
    p_inlet_pa, p_outlet_pa : float
        Section end pressures, absolute [Pa].
    t_inlet_k, t_outlet_k : float
        Temperatures at the two ends [K] (NaN where the flash did not converge).
    p_screened_pa : float
        Pressure of the colder end, where the section is screened [Pa] (its outlet, the lowest pressure,
        for a fluid that cools on expansion).
    t_k : float
        Temperature at ``p_screened_pa`` [K], the coldest of the section; NaN when neither end converged.
    phase : str
        Phase at the screened end ("vapour", "liquid", "two-phase", "supercritical", "unknown").
    vapor_fraction : float
        Vapour mole fraction at the screened end [-].
    liquid_present : bool or None
        True when either end holds liquid (vapour fraction below 1); None when not known.
    limit_k : float or None
        Lowest allowed temperature [K].
    margin_k : float
        t_k - limit_k [K] (negative: below the limit); NaN without a limit or a temperature.
    band : Band
        FAIL below the limit (at any converged end), PASS at or above it with both ends converged,
        NOT_SCREENED otherwise (a flash did not converge, or no limit).
    converged : bool
        True when the flashes at both ends converged.
    message : str
    warnings : tuple of str
    """

    name: str
    material: str
    p_inlet_pa: float
    p_outlet_pa: float
    t_inlet_k: float
    t_outlet_k: float
    p_screened_pa: float
    t_k: float
    phase: str
    vapor_fraction: float
    liquid_present: bool | None
    limit_k: float | None
    margin_k: float
    band: Band
    converged: bool
    message: str
    warnings: tuple[str, ...] = field(default=())


@dataclass(frozen=True)
class HeaderResult(PlainResult):
    """Temperatures along a flare header for one set of relief sources.  All values SI.

    Attributes
    ----------
    sources : tuple of SourceInHeader
        The sources as mixed.
    component_ids : tuple of str
        Components of the mixture.
    zs : tuple of float
        Mixture mole fractions [-].
    mass_flow_kg_per_s : float
        Total mass flow [kg/s].
    molar_flow_mol_per_s : float
        Total molar flow [mol/s].
    molar_mass_kg_per_mol : float
        Mean molar mass of the mixture [kg/mol].
    h_j_per_mol : float
        Molar enthalpy of the mixture, the same in every section [J/mol].
    sections : tuple of HeaderSectionResult
        In flow order.
    coldest_section : str or None
        Name of the section with the lowest screened temperature among those with a temperature; None
        when no flash converged.
    t_coldest_k : float
        Its temperature [K] (NaN when none).
    p_coldest_pa : float
        Its screened pressure [Pa] (NaN when none).
    band : Band
        FAIL when any section fails; else NOT_SCREENED when any section is not screened; else PASS.
    converged : bool
        True when every flash converged.
    message : str
    warnings : tuple of str
    basis : dict
        EOS, kij set, volume translation, data versions of the mixture's model, and the method.
    """

    sources: tuple[SourceInHeader, ...]
    component_ids: tuple[str, ...]
    zs: tuple[float, ...]
    mass_flow_kg_per_s: float
    molar_flow_mol_per_s: float
    molar_mass_kg_per_mol: float
    h_j_per_mol: float
    sections: tuple[HeaderSectionResult, ...]
    coldest_section: str | None
    t_coldest_k: float
    p_coldest_pa: float
    band: Band
    converged: bool
    message: str
    warnings: tuple[str, ...] = field(default=())
    basis: dict = field(default_factory=dict)


# ---------------------------------------------------------------------------------------------
# checks across the inputs
# ---------------------------------------------------------------------------------------------

def _check_sections(sections: Any) -> tuple[HeaderSection, ...]:
    secs = tuple(sections) if isinstance(sections, Sequence) and not isinstance(sections, str) else None
    if not secs:
        raise InputError("sections", "give at least one HeaderSection, in flow order from the valve outlet")
    seen: set[str] = set()
    for k, sec in enumerate(secs):
        if not isinstance(sec, HeaderSection):
            raise InputError(f"sections[{k}]", f"expected a HeaderSection, got {type(sec).__name__}")
        if sec.name in seen:
            raise InputError(f"sections[{k}].name", f"section name {sec.name!r} is used twice; names must differ")
        seen.add(sec.name)
        if k and sec.p_inlet_pa > secs[k - 1].p_outlet_pa + PRESSURE_TOLERANCE_PA:
            prev = secs[k - 1]
            raise InputError(f"sections[{k}].p_inlet_pa",
                             f"section {sec.name!r}: inlet pressure {sec.p_inlet_pa:g} Pa is above the outlet "
                             f"pressure {prev.p_outlet_pa:g} Pa of the section before it ({prev.name!r}) by more "
                             f"than {PRESSURE_TOLERANCE_PA:g} Pa; give the sections in flow order, pressure falling")
    return secs


def _check_sources(sources: Any, p_header_pa: float) -> tuple[ReliefSource, ...]:
    srcs = tuple(sources) if isinstance(sources, Sequence) and not isinstance(sources, str) else None
    if not srcs:
        raise InputError("sources", "give at least one ReliefSource")
    seen: set[str] = set()
    for k, src in enumerate(srcs):
        if not isinstance(src, ReliefSource):
            raise InputError(f"sources[{k}]", f"expected a ReliefSource, got {type(src).__name__}")
        if src.name in seen:
            raise InputError(f"sources[{k}].name", f"source name {src.name!r} is used twice; names must differ")
        seen.add(src.name)
        first = srcs[0].fluid
        if src.fluid.eos is not first.eos:
            raise InputError(f"sources[{k}].fluid", f"source {src.name!r} uses {src.fluid.eos.value}, source "
                                                    f"{srcs[0].name!r} uses {first.eos.value}; mixed sources need one "
                                                    "equation of state (one enthalpy basis)")
        if src.fluid.volume_translation != first.volume_translation:
            raise InputError(f"sources[{k}].fluid", f"source {src.name!r} and source {srcs[0].name!r} differ in "
                                                    "volume translation; mixed sources need one enthalpy basis")
        if src.p_pa is not None and src.p_pa < p_header_pa - PRESSURE_TOLERANCE_PA:
            raise InputError(f"sources[{k}].p_pa", f"source {src.name!r}: pressure {src.p_pa:g} Pa is below the "
                                                   f"header inlet pressure {p_header_pa:g} Pa; give a state upstream "
                                                   "of the header (at the valve outlet or the relieving state)")
    return srcs


# ---------------------------------------------------------------------------------------------
# mixing
# ---------------------------------------------------------------------------------------------

def _mixture_fluid(srcs: tuple[ReliefSource, ...], zs: np.ndarray, ids: list[str]) -> Fluid:
    """The mixture's Fluid: the sources' EOS and volume translation, every source's own kij kept."""
    first = srcs[0].fluid
    table = Fluid(list(zip(ids, zs, strict=True)), eos=first.eos, volume_translation=first.volume_translation)
    pos = {cid: k for k, cid in enumerate(table.ids)}
    own: dict[tuple[str, str], tuple[float, str]] = {}
    overrides: dict[tuple[str, str], float] = {}
    for src in srcs:
        f = src.fluid
        for a in range(len(f.ids)):
            for b in range(a + 1, len(f.ids)):
                key = tuple(sorted((f.ids[a], f.ids[b])))
                value = float(f.kij[a, b])
                if key in own and own[key][0] != value:
                    raise InputError("sources", f"sources {own[key][1]!r} and {src.name!r} use different kij for "
                                                f"{key[0]} - {key[1]} ({own[key][0]:g} and {value:g}); mixed sources "
                                                "need one kij set")
                own[key] = (value, src.name)
                if value != float(table.kij[pos[key[0]], pos[key[1]]]):
                    overrides[key] = value
    if not overrides:
        return table
    return Fluid(list(zip(ids, zs, strict=True)), eos=first.eos, kij=overrides,
                 volume_translation=first.volume_translation)


def _source_enthalpy(mixed: Fluid, src: ReliefSource) -> tuple[float, tuple[float, ...], str]:
    """(h [J/mol] on the mixture's basis, source zs in the mixture's component order, message)."""
    z = np.zeros(len(mixed.ids))
    pos = {cid: k for k, cid in enumerate(mixed.ids)}
    for cid, zi in zip(src.fluid.ids, src.fluid.zs, strict=True):
        z[pos[cid]] = zi
    if src.h_j_per_mol is not None:
        return src.h_j_per_mol, tuple(z), ""
    res = _flash.flash_pt(mixed.mixture, src.t_k, src.p_pa, z)
    if not res.converged:
        return math.nan, tuple(z), f"PT flash of source {src.name!r} failed: {res.message}"
    shift = -src.p_pa * float(z @ mixed.vol_shifts) if mixed.volume_translation else 0.0
    return res.h + shift, tuple(z), ""


# ---------------------------------------------------------------------------------------------
# the header
# ---------------------------------------------------------------------------------------------

def _relabel_gas(mixed: Fluid, res: FlashResult, notes: list[str], where: str) -> FlashResult:
    """A single phase labelled "liquid" above the mixture's pseudo-critical temperature and below its
    pseudo-critical pressure (Kay's rule, sum z_i Tc_i and sum z_i Pc_i; Kay, Ind. Eng. Chem. 28 (1936)
    1014) is a gas: the phase-identification label of the flash is not trusted there (helium at room
    temperature and 1-2 bar comes out "liquid").  Relabelled vapour, vapour fraction 1, with a note."""
    if not res.converged or res.phase != "liquid":
        return res
    t_pc = float(mixed.zs @ mixed.mixture.tcs)
    p_pc = float(mixed.zs @ mixed.mixture.pcs)
    if res.T <= t_pc or res.P >= p_pc:
        return res
    notes.append(f"{where}: the flash labelled the single phase at {res.T:.2f} K, {res.P:.6g} Pa 'liquid', above the "
                 f"pseudo-critical temperature {t_pc:.2f} K (Kay's rule) and below the pseudo-critical pressure "
                 f"{p_pc:.6g} Pa: counted as gas (vapour fraction 1)")
    return replace(res, phase="vapour", beta=1.0)


def _liquid(res: FlashResult | None) -> bool | None:
    if res is None or not res.converged:
        return None
    return res.phase != "supercritical" and res.beta < 1.0


def _section(sec: HeaderSection, inlet: FlashResult | None, outlet: FlashResult | None,
             extra_warnings: tuple[str, ...]) -> HeaderSectionResult:
    nan = math.nan
    ends = [(sec.p_inlet_pa, r) for r in (inlet,) if r is not None and r.converged]
    ends += [(sec.p_outlet_pa, r) for r in (outlet,) if r is not None and r.converged]
    t_in = inlet.T if inlet is not None and inlet.converged else nan
    t_out = outlet.T if outlet is not None and outlet.converged else nan
    converged = len(ends) == 2
    notes = list(extra_warnings)
    if not ends:
        return HeaderSectionResult(sec.name, sec.material, sec.p_inlet_pa, sec.p_outlet_pa, nan, nan, nan, nan,
                                   "unknown", nan, None, sec.limit_k, nan, Band.NOT_SCREENED, False,
                                   f"{sec.name}: the PH flashes did not converge; not screened", tuple(notes))
    # the colder end; on a tie (a vessel, equal pressures) the outlet
    p_s, res = min(reversed(ends), key=lambda e: e[1].T)
    liquids = [_liquid(r) for r in (inlet, outlet)]
    liquid = True if any(v is True for v in liquids) else (None if None in liquids else False)
    if liquid:
        beta_min = min(r.beta for _, r in ends)
        notes.append(f"{sec.name}: liquid in the header (vapour fraction down to {beta_min:.4g}); the liquid carried "
                     "over flashes at the section pressure (equilibrium); a liquid film or pool evaporating into the "
                     "sweeping gas can get colder than this (not modelled)")
    if sec.limit_k is None:
        margin, band = nan, Band.NOT_SCREENED
        verdict = "no temperature limit: not screened"
    else:
        margin = res.T - sec.limit_k
        if any(r.T < sec.limit_k for _, r in ends):
            band, verdict = Band.FAIL, f"below the limit {marks.T(sec.limit_k)} by {marks.DT(-margin, 2)}"
        elif not converged:
            band, verdict = Band.NOT_SCREENED, "a flash did not converge: not screened"
        else:
            band, verdict = Band.PASS, f"{marks.DT(margin, 2)} above the limit {marks.T(sec.limit_k)}"
    failed = [f"{where} flash failed: {r.message if r is not None else 'not run'}"
              for where, r in (("inlet", inlet), ("outlet", outlet)) if r is None or not r.converged]
    msg = f"{sec.name}: {marks.T(res.T, '', 2)} at {marks.P(p_s)} ({res.phase}); {verdict}"
    if failed:
        msg += "; " + "; ".join(failed)
    return HeaderSectionResult(
        name=sec.name, material=sec.material, p_inlet_pa=sec.p_inlet_pa, p_outlet_pa=sec.p_outlet_pa,
        t_inlet_k=t_in, t_outlet_k=t_out, p_screened_pa=p_s, t_k=res.T, phase=res.phase, vapor_fraction=res.beta,
        liquid_present=liquid, limit_k=sec.limit_k, margin_k=margin, band=band, converged=converged, message=msg,
        warnings=tuple(notes))


def screen_header(sources: Sequence[ReliefSource], sections: Sequence[HeaderSection]) -> HeaderResult:
    """Temperatures of the flare header sections for relief sources discharging together.

    The sources are mixed by mole and energy balance on one model basis, and the mixture is let down
    isenthalpically (adiabatic pipe, kinetic energy neglected) to both ends of every section; each
    section is screened at its colder end against its limit.  See the module text for the method and
    its limits.  API Standard 521 (pressure-relieving and depressuring systems) asks that the disposal
    system's design consider the lowest temperature from auto-refrigeration of the relieved fluids
    (verify the clause in the edition in force).

    Parameters
    ----------
    sources : sequence of ReliefSource
        One or more relief streams discharging together; one EOS and one volume-translation choice, and
        one kij value for any pair of components that two sources share.
    sections : sequence of HeaderSection
        The header in flow order, from the valve outlet to the tip; each section's inlet not above the
        previous section's outlet (within :data:`PRESSURE_TOLERANCE_PA`).

    Returns
    -------
    HeaderResult
        ``converged`` False (and the affected sections "not screened" unless already below their
        limit) when a flash did not converge.

    Raises
    ------
    jtcheck.errors.InputError
        For an empty or mistyped list (field ``sources`` or ``sections``), repeated names, sections out
        of pressure order (field ``sections[k].p_inlet_pa``), a source pressure below the header inlet
        (``sources[k].p_pa``), or sources on different model bases (``sources[k].fluid``, ``sources``).

    Examples
    --------
    >>> from jtcheck.thermo.fluid import Fluid
    >>> gas = Fluid({"methane": 0.9, "ethane": 0.1})
    >>> src = ReliefSource("PSV-1", gas, 10.0, p_pa=40e5, t_k=303.15)
    >>> header = [HeaderSection("tailpipe", 4e5, 3e5, 244.0), HeaderSection("tip", 3e5, 1.2e5, 244.0)]
    >>> r = screen_header([src], header)
    >>> r.coldest_section
    'tip'
    """
    secs = _check_sections(sections)
    srcs = _check_sources(sources, secs[0].p_inlet_pa)

    # -- mixing: moles and enthalpy ------------------------------------------------------------
    ids: list[str] = []
    for src in srcs:
        ids += [cid for cid in src.fluid.ids if cid not in ids]
    molar_flows = np.array([src.mass_flow_kg_per_s / src.fluid.molar_mass for src in srcs])
    n_total = float(molar_flows.sum())
    z_mix = np.zeros(len(ids))
    for n_i, src in zip(molar_flows, srcs, strict=True):
        for cid, zi in zip(src.fluid.ids, src.fluid.zs, strict=True):
            z_mix[ids.index(cid)] += n_i * zi
    z_mix /= n_total
    mixed = _mixture_fluid(srcs, z_mix, ids)
    zs = np.array([z_mix[ids.index(cid)] for cid in mixed.ids])

    src_results = []
    failures = []
    for n_i, src in zip(molar_flows, srcs, strict=True):
        h_i, z_i, err = _source_enthalpy(mixed, src)
        if err:
            failures.append(err)
        src_results.append(SourceInHeader(
            name=src.name, mass_flow_kg_per_s=src.mass_flow_kg_per_s, molar_mass_kg_per_mol=src.fluid.molar_mass,
            molar_flow_mol_per_s=float(n_i), h_j_per_mol=h_i, p_pa=src.p_pa, t_k=src.t_k,
            enthalpy_from="given" if src.h_j_per_mol is not None else "p, t flash", component_ids=mixed.ids,
            zs=z_i))
    h_mix = float(np.dot(molar_flows, [s.h_j_per_mol for s in src_results]) / n_total)
    basis = {**mixed.basis(), "method": METHOD, "pressure_tolerance_pa": PRESSURE_TOLERANCE_PA}
    warnings = [f"source {src.name!r}: {w}" for src in srcs for w in src.fluid.composition.warnings]
    warnings += [w for w in mixed.warnings if w not in mixed.composition.warnings]
    common = dict(sources=tuple(src_results), component_ids=mixed.ids, zs=tuple(map(float, zs)),
                  mass_flow_kg_per_s=float(sum(s.mass_flow_kg_per_s for s in srcs)), molar_flow_mol_per_s=n_total,
                  molar_mass_kg_per_mol=mixed.molar_mass, h_j_per_mol=h_mix, basis=basis)

    # -- PH flashes at every distinct end pressure, from the highest down ---------------------
    temps = [s.t_k for s in srcs if s.t_k is not None]
    t_start = float(np.average(temps)) if temps else T_GUESS_DEFAULT_K
    flashes: dict[float, FlashResult] = {}
    relabelled: list[str] = []
    if not failures:
        t_guess = t_start
        for p in sorted({p for s in secs for p in (s.p_inlet_pa, s.p_outlet_pa)}, reverse=True):
            res = mixed.flash_ph(p, h_mix, t_guess_k=t_guess)
            if not res.converged and abs(t_guess - t_start) > 1e-9:
                res = mixed.flash_ph(p, h_mix, t_guess_k=t_start)
            if res.converged:
                t_guess = res.T
            flashes[p] = _relabel_gas(mixed, res, relabelled, f"{p:.6g} Pa")

    first = flashes.get(secs[0].p_inlet_pa)
    t_header_in = first.T if first is not None and first.converged else t_start
    results = []
    for sec in secs:
        extra: list[str] = []
        for p in (sec.p_inlet_pa, sec.p_outlet_pa):
            r = flashes.get(p)
            if r is not None and r.converged:
                extra += [f"{sec.name}: {w}" for w in _state_warnings(mixed, p, r.T, t_header_in)[0]
                          if f"{sec.name}: {w}" not in extra]
        results.append(_section(sec, flashes.get(sec.p_inlet_pa), flashes.get(sec.p_outlet_pa), tuple(extra)))
    warnings += relabelled
    for r in results:
        warnings += [w for w in r.warnings if w not in warnings]

    # -- the header as a whole ----------------------------------------------------------------
    with_t = [r for r in results if math.isfinite(r.t_k)]
    coldest = min(with_t, key=lambda r: r.t_k) if with_t else None
    bands = {r.band for r in results}
    band = Band.FAIL if Band.FAIL in bands else (Band.NOT_SCREENED if Band.NOT_SCREENED in bands else Band.PASS)
    converged = not failures and all(r.converged for r in results)
    if failures:
        msg = "; ".join(failures) + "; the header is not screened"
    elif coldest is None:
        msg = "no PH flash converged; the header is not screened"
    else:
        fails = [r.name for r in results if r.band is Band.FAIL]
        msg = f"coldest: {coldest.name}, {marks.T(coldest.t_k, '', 2)} at {marks.P(coldest.p_screened_pa)}"
        if fails:
            msg += f"; below the limit: {', '.join(fails)}"
        unscreened = [r.name for r in results if r.band is Band.NOT_SCREENED]
        if unscreened:
            msg += f"; not screened: {', '.join(unscreened)}"
        if not converged:
            msg += "; some flashes did not converge (the coldest section is among the converged ones only)"
    return HeaderResult(**common, sections=tuple(results), coldest_section=coldest.name if coldest else None,
                        t_coldest_k=coldest.t_k if coldest else math.nan,
                        p_coldest_pa=coldest.p_screened_pa if coldest else math.nan, band=band, converged=converged,
                        message=msg, warnings=tuple(warnings))
