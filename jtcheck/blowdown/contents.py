"""The vessel contents at one instant of the equilibrium model: UV flash, valve flow and heat flows.

Equilibrium model: the inventory (component moles N_i, internal energy U) is one fluid in phase equilibrium
filling the vessel volume; each evaluation is a UV flash of (U/n, V/n, N/n) (:func:`jtcheck.thermo.flash.flash_uv`).
The valves draw the vapour (the liquid phase's composition stays behind); a single-phase inventory leaves as
it is.  The valve flow is the real-fluid isentropic nozzle (:mod:`jtcheck.thermo.nozzle`), the heat flows those
of :mod:`jtcheck.blowdown.heat` with the gas properties of :mod:`jtcheck.blowdown.transport`.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from jtcheck.blowdown import heat, transport
from jtcheck.blowdown.geometry import Vessel
from jtcheck.blowdown.inputs import Orifice
from jtcheck.thermo.flash import flash_uv
from jtcheck.thermo.fluid import Fluid
from jtcheck.thermo.kernels.flash_uv import phase_props as props
from jtcheck.thermo.models.conventions import GIBBS, LIQUID, VAPOUR
from jtcheck.thermo.nozzle import isentropic_throat

R = 8.314462618


class StepFailedError(Exception):
    """A flash or a nozzle solve failed at a trial state (internal: the integrator shortens the step)."""


@dataclass(frozen=True)
class InsideHeatTransfer:
    """How the inside coefficient is found: "correlation" (natural convection / boiling), "none" (adiabatic
    inside, for checks and bounding cases), or "fixed" at ``fixed_w_per_m2_k`` on both zones."""

    mode: str = "correlation"
    fixed_w_per_m2_k: float = 0.0


@dataclass
class State:
    """Everything the integrator and the record need at one instant (SI)."""

    t_k: float
    p_pa: float
    beta: float
    phase: str
    x: np.ndarray
    y: np.ndarray
    liquid_volume_m3: float
    area_gas_m2: float
    area_liquid_m2: float
    mass_kg: float
    mdot_kg_per_s: float
    ndot_mol_per_s: float
    outflow_h_j_per_mol: float
    outflow_y: np.ndarray
    q_gas_w: float
    q_liquid_w: float
    h_gas_w_per_m2_k: float
    h_liquid_w_per_m2_k: float
    throat_t_k: float
    choked: bool
    flashes: int
    #: n cv of the contents (phases' cv weighted by their moles; the latent part of a two-phase cv is left out, so
    #: this is a lower bound) [J/K]; of the gas and the liquid zone for the two-zone model
    heat_capacity_j_per_k: float = math.nan
    heat_capacity_liquid_j_per_k: float = math.nan
    #: zone temperatures [K] (the equilibrium model: both the fluid's)
    t_gas_k: float = math.nan
    t_liquid_k: float = math.nan
    #: heat from the gas zone to the liquid zone across the interface [W] (two-zone model)
    q_interface_w: float = 0.0


class Contents:
    """Evaluates the vessel contents (equilibrium model)."""

    def __init__(self, fluid: Fluid, vessel: Vessel, orifices: tuple[Orifice, ...], inside: InsideHeatTransfer,
                 z0: np.ndarray):
        self.fluid = fluid
        self.vessel = vessel
        self.orifices = orifices
        self.inside = inside
        self.mix = fluid.mixture
        self.prm = self.mix.kernel_params
        self.mws = np.asarray(self.mix.mws, float)
        self.shifts = np.asarray(fluid.vol_shifts, float) if fluid.volume_translation else np.zeros(len(self.mws))
        comps = fluid.components
        self.tcs = np.array([c.tc_k for c in comps])
        self.pcs = np.array([c.pc_pa for c in comps])
        self.vcs = np.array([c.vc_m3_per_mol for c in comps])
        self.omegas = np.array([c.omega for c in comps])
        self.z0 = np.asarray(z0, float)
        self._t_skip0 = fluid.with_composition(list(zip(fluid.ids, self.z0, strict=True))).single_phase_above_k() \
            if len(self.z0) > 1 else math.inf
        self.t_guess = math.nan
        self.p_guess = math.nan
        #: critical pressure ratio of each orifice at the last evaluation (narrows the next nozzle search)
        self.ratio_hints = [0.0] * len(orifices)
        #: local error tolerance of the time stepping [-] (set by the integrator)
        self.rtol = 1e-5

    # -- the model protocol of :func:`jtcheck.blowdown.integrate.run`: inventory y = (N_1..N_n, U) ----------------
    @property
    def size(self) -> int:
        return self.mws.size + 1

    def moles(self, y: np.ndarray) -> float:
        return float(y[:-1].sum())

    def mass(self, y: np.ndarray) -> float:
        return float(y[:-1] @ self.mws)

    def energy(self, y: np.ndarray) -> float:
        return float(y[-1])

    def energy_from_flash(self, y: np.ndarray) -> float:
        """Internal energy [J] of the inventory recomputed from its UV flash (u = h - P v of the answer)."""
        res, z, n = self.flash(y[:-1], y[-1])
        return n * (res.h - res.P * (self.vessel.volume_m3 / n + float(z @ self.shifts)))

    def evaluate_y(self, y: np.ndarray, tw_gas: float, tw_liq: float) -> State:
        return self.evaluate(y[:-1], y[-1], tw_gas, tw_liq)

    def rates(self, st: State, q_gas: float, q_liq: float) -> np.ndarray:
        d = np.empty(self.size)
        d[:-1] = -st.ndot_mol_per_s * st.outflow_y
        d[-1] = -st.ndot_mol_per_s * st.outflow_h_j_per_mol + q_gas + q_liq
        return d

    def error(self, e: np.ndarray, y: np.ndarray, st: State) -> float:
        """Scaled local error: moles relative to the inventory, energy relative to n R T, over rtol."""
        n = max(self.moles(y), 1e-300)
        return max(float(np.max(np.abs(e[:-1]))) / n, abs(e[-1]) / (n * R * st.t_k)) / self.rtol

    def check(self, y: np.ndarray) -> None:
        if np.any(y[:-1] < 0.0):
            raise StepFailedError("a component's moles fell below zero")

    def settle(self, y: np.ndarray, st: State, tw_gas: float, tw_liq: float) -> tuple[np.ndarray, State]:
        """Between steps: nothing moves in the equilibrium model."""
        return y, st

    def fixed_point(self, st: State, new: State, conductance: tuple[float, float], dt: float) -> tuple[float, float]:
        """The fluid temperature both walls should see over the step: with a = G dt / C (G the walls' conductance,
        C the fluid's heat capacity) the linearised fixed point T = (T_end + a T_start) / (1 + a)."""
        a = (conductance[0] + conductance[1]) * dt / max(st.heat_capacity_j_per_k, 1e-300)
        t = (new.t_k + a * st.t_k) / (1.0 + a)
        return t, t

    def _t_skip(self, z: np.ndarray) -> float:
        return self._t_skip0 if float(np.max(np.abs(z - self.z0))) <= 1e-12 else math.inf

    def flash(self, N: np.ndarray, U: float):
        """UV flash of the inventory; raises StepFailedError."""
        n = float(N.sum())
        if not (n > 0.0 and math.isfinite(U)):
            raise StepFailedError("the inventory is empty or its energy is not finite")
        z = N / n
        v = self.vessel.volume_m3 / n + float(z @ self.shifts)
        res = flash_uv(self.mix, U / n, v, z, self.t_guess, self.p_guess, self._t_skip(z))
        if not res.converged:
            raise StepFailedError(f"UV flash failed at u = {U / n:.6g} J/mol, v = {v:.6g} m^3/mol: {res.message}")
        return res, z, n

    def evaluate(self, N: np.ndarray, U: float, tw_gas: float, tw_liq: float) -> State:
        res, z, n = self.flash(N, U)
        T, P = res.T, res.P
        flashes = 1
        two = res.phase == "two-phase"
        if two:
            # each phase by its own root: for a pure fluid on its saturation line the stable-root choice cannot
            # tell the two apart
            pV = props(self.prm, T, P, res.y, VAPOUR)
            pL = props(self.prm, T, P, res.x, LIQUID)
            vl = pL[1] - float(res.x @ self.shifts)
            v_liq = n * (1.0 - res.beta) * vl
            out_y = np.asarray(res.y, float)
        elif res.beta < 0.5:
            # a liquid-like single phase fills the vessel
            pV = props(self.prm, T, P, z, GIBBS)
            pL = pV
            v_liq = self.vessel.volume_m3
            out_y = z
        else:
            pV = props(self.prm, T, P, z, GIBBS)
            pL = pV
            v_liq = 0.0
            out_y = z
        a_liq = self.vessel.wetted_area_m2(v_liq)
        a_gas = max(self.vessel.inner_area_m2 - a_liq, 0.0)
        mdot, ndot, h0, t_throat, choked, nfl = self.valves(out_y, T, P, two, pV)
        flashes += nfl
        # -- heat ---------------------------------------------------------------------------------
        hg = hl = 0.0
        if self.inside.mode == "fixed":
            hg = hl = self.inside.fixed_w_per_m2_k
        elif self.inside.mode == "correlation":
            hg = self._gas_htc(T, P, pV, out_y if two else z, tw_gas - T)
            if a_liq > 0.0:
                hl = self.liquid_htc(res.x if two else z, P, tw_liq - T)
        q_gas = hg * a_gas * (tw_gas - T)
        q_liq = hl * a_liq * (tw_liq - T) if a_liq > 0.0 else 0.0
        self.t_guess, self.p_guess = T, P
        return State(t_k=T, p_pa=P, beta=res.beta, phase=res.phase, x=np.asarray(res.x), y=np.asarray(res.y),
                     liquid_volume_m3=v_liq, area_gas_m2=a_gas, area_liquid_m2=a_liq, mass_kg=float(N @ self.mws),
                     mdot_kg_per_s=mdot, ndot_mol_per_s=ndot, outflow_h_j_per_mol=h0, outflow_y=out_y,
                     q_gas_w=q_gas, q_liquid_w=q_liq, h_gas_w_per_m2_k=hg, h_liquid_w_per_m2_k=hl,
                     throat_t_k=t_throat, choked=choked, flashes=flashes,
                     heat_capacity_j_per_k=n * (res.beta * pV[5] + (1.0 - res.beta) * pL[5]) if two else n * pV[5],
                     t_gas_k=T, t_liquid_k=T)

    def valves(self, out_y: np.ndarray, T: float, P: float, vapour: bool, pV) -> tuple:
        """Flow through every orifice of the fluid ``out_y`` drawn at T [K], P [Pa] (``vapour``: the vapour of a
        two-phase inventory).  Returns (mdot [kg/s], ndot [mol/s], h0 [J/mol], coldest throat T [K], choked,
        flashes); raises StepFailedError."""
        mdot = 0.0
        ndot = 0.0
        h0 = math.nan
        t_throat = math.nan
        choked = False
        flashes = 0
        m_out = float(out_y @ self.mws)
        t_skip = self._t_skip(out_y)
        for k, orf in enumerate(self.orifices):
            if P <= orf.back_pressure_pa:
                continue
            th = isentropic_throat(self.fluid, out_y, P, T, orf.back_pressure_pa, t_skip, self.ratio_hints[k], vapour)
            flashes += th.flashes
            if not th.converged:
                raise StepFailedError(f"isentropic nozzle solve failed for the {orf.name} at {P:.6g} Pa, {T:.6g} K")
            self.ratio_hints[k] = th.p_throat_pa / P if th.choked else 0.0
            md = orf.discharge_coefficient * orf.area_m2 * th.mass_flux_kg_per_m2_s
            mdot += md
            ndot += md / m_out
            h0 = th.h0_j_per_mol
            t_throat = th.t_throat_k if math.isnan(t_throat) else min(t_throat, th.t_throat_k)
            choked = choked or th.choked
        if ndot == 0.0:
            h0 = pV[2] - P * float(out_y @ self.shifts)
        return mdot, ndot, h0, t_throat, choked, flashes

    def liquid_htc(self, x: np.ndarray, P: float, dt: float) -> float:
        """Liquid-wetted wall [W/(m^2 K)]: nucleate boiling (Mostinski) above the liquid, else the floor."""
        pc = float(np.asarray(x) @ self.pcs)
        return max(heat.mostinski_htc(dt, pc, P), heat.LIQUID_NC_W_PER_M2_K)

    def _gas_htc(self, T: float, P: float, pV, y: np.ndarray, dt: float) -> float:
        """Natural convection of the gas on the gas-wetted wall [W/(m^2 K)]."""
        m = float(y @ self.mws)
        v = pV[1] - float(y @ self.shifts)
        rho = m / v
        cp = pV[4] / m
        beta_exp = -pV[6] / (pV[1] * pV[7])
        tc = float(y @ self.tcs)
        mu = transport.chung_dilute_viscosity(T, tc, float(y @ self.vcs), float(y @ self.omegas), m)
        k = transport.eucken_conductivity(mu, pV[5], m)
        return heat.natural_convection_htc(dt, rho, cp, mu, k, beta_exp)
