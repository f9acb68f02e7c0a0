"""The two-zone (non-equilibrium) vessel model: a gas zone and a liquid zone, each in its own equilibrium, at one
pressure but at their own temperatures.

After Haque, Richardson, Saville and Chamberlain, "Blowdown of pressure vessels. I. Computer model", Process Saf.
Environ. Prot. 70 (1992) 3-9, and Speranza and Terenzi, Ind. Eng. Chem. Res. 44 (2005) 1054-1062 (a two-zone
model with condensate rain-out and flashing liquid; references as recalled, check the pages):

- each zone carries its component moles and internal energy; the zones share the pressure, and their volumes add
  up to the vessel's: the liquid zone's volume V_l solves P_liquid(V_l) = P_gas(V - V_l) (Newton-chord on V_l,
  each side a UV flash of :func:`jtcheck.thermo.flash.flash_uv`);
- the valves draw the gas zone (its vapour when it carries mist); the gas-wetted wall exchanges heat with the gas
  zone, the liquid-wetted wall with the liquid zone (boiling or the natural-convection floor), and the interface
  between the zones by natural convection (the gas correlation of :mod:`jtcheck.blowdown.heat` on the interface
  area);
- between time steps, condensate formed in the gas zone rains out into the liquid zone, and vapour formed in the
  liquid zone (flashing, boiling) rises into the gas zone, each phase taking its own internal energy (the
  transfer at one pressure conserves mass and energy exactly).

Where no liquid is present the model is the equilibrium model's gas with the zone bookkeeping; liquid appears
when the gas zone condenses.
"""
from __future__ import annotations

import math

import numpy as np

from jtcheck.blowdown.contents import Contents, InsideHeatTransfer, State, StepFailedError
from jtcheck.blowdown.geometry import Vessel
from jtcheck.blowdown.inputs import Orifice
from jtcheck.thermo.flash import flash_uv
from jtcheck.thermo.fluid import Fluid
from jtcheck.thermo.kernels.flash_uv import phase_props as props
from jtcheck.thermo.models.conventions import GIBBS, LIQUID, VAPOUR

R = 8.314462618
#: A liquid zone with fewer moles than this fraction of the inventory is merged into the gas zone.
MIN_LIQUID_FRACTION = 1e-7
#: Pressure balance of the zones: |P_l - P_g| <= this times P.
P_BALANCE_TOL = 1e-10

METHOD = ("two-zone model (Haque et al. 1992; Speranza and Terenzi 2005): gas and liquid zones at one pressure and "
          "their own temperatures, each a UV flash, the liquid volume from the pressure balance; condensate rains "
          "out and flashed vapour rises between steps; interface heat by natural convection; valves draw the gas "
          "zone through a real-fluid isentropic nozzle; walls as the equilibrium model")


class TwoZoneContents(Contents):
    """Evaluates the vessel as a gas zone and a liquid zone; inventory y = (N_g..., U_g, N_l..., U_l)."""

    def __init__(self, fluid: Fluid, vessel: Vessel, orifices: tuple[Orifice, ...], inside: InsideHeatTransfer,
                 z0: np.ndarray):
        super().__init__(fluid, vessel, orifices, inside, z0)
        self.n = self.mws.size
        self.v_liq_guess = math.nan
        self.guess_l = (math.nan, math.nan)
        self._q_interface = 0.0

    # -- protocol -------------------------------------------------------------------------------------------
    @property
    def size(self) -> int:
        return 2 * self.n + 2

    def _split(self, y: np.ndarray):
        n = self.n
        return y[:n], y[n], y[n + 1:2 * n + 1], y[2 * n + 1]

    def moles(self, y: np.ndarray) -> float:
        ng, _, nl, _ = self._split(y)
        return float(ng.sum() + nl.sum())

    def mass(self, y: np.ndarray) -> float:
        ng, _, nl, _ = self._split(y)
        return float((ng + nl) @ self.mws)

    def energy(self, y: np.ndarray) -> float:
        _, ug, _, ul = self._split(y)
        return float(ug + ul)

    def check(self, y: np.ndarray) -> None:
        ng, _, nl, _ = self._split(y)
        if np.any(ng < 0.0) or np.any(nl < 0.0):
            raise StepFailedError("a component's moles fell below zero")

    def _zone(self, N: np.ndarray, U: float, volume: float, guess: tuple[float, float]):
        n = float(N.sum())
        z = N / n
        v = volume / n + float(z @ self.shifts)
        res = flash_uv(self.mix, U / n, v, z, guess[0], guess[1], math.inf)
        if not res.converged:
            raise StepFailedError(f"zone UV flash failed at u = {U / n:.6g} J/mol, v = {v:.6g} m^3/mol: {res.message}")
        return res, z, n

    def _liquid_volume_estimate(self, nl: np.ndarray, t: float, p: float) -> float:
        x = nl / nl.sum()
        pl = props(self.prm, t, p, x, LIQUID)
        return float(nl.sum()) * (pl[1] - float(x @ self.shifts))

    def zones(self, y: np.ndarray):
        """(gas result, z_g, n_g, liquid result or None, x_l, n_l, V_l, flashes) at the common pressure."""
        ng, ug, nl, ul = self._split(y)
        vol = self.vessel.volume_m3
        n_tot = float(ng.sum() + nl.sum())
        if float(nl.sum()) <= MIN_LIQUID_FRACTION * n_tot:
            res, z, n = self._zone(ng + nl, ug + ul, vol, (self.t_guess, self.p_guess))
            return res, z, n, None, None, 0.0, 0.0, 1
        vl = self.v_liq_guess
        if not (math.isfinite(vl) and 0.0 < vl < vol):
            t0 = self.guess_l[0] if math.isfinite(self.guess_l[0]) else self.t_guess
            p0 = self.p_guess if math.isfinite(self.p_guess) else 1e5
            vl = min(self._liquid_volume_estimate(nl, t0, p0), 0.99 * vol)
        flashes = 0
        slope = math.nan
        lo, hi = 0.0, vol
        for _ in range(40):
            rl, xl, nn_l = self._zone(nl, ul, vl, self.guess_l)
            rg, zg, nn_g = self._zone(ng, ug, vol - vl, (self.t_guess, self.p_guess))
            flashes += 2
            g = rl.P - rg.P
            if abs(g) <= P_BALANCE_TOL * rg.P:
                self.v_liq_guess = vl
                self.guess_l = (rl.T, rl.P)
                return rg, zg, nn_g, rl, xl, nn_l, vl, flashes
            if g > 0.0:
                lo = vl          # liquid too compressed: give it more volume
            else:
                hi = vl
            if not math.isfinite(slope):
                dv = 1e-7 * vl
                rl2, _, _ = self._zone(nl, ul, vl + dv, (rl.T, rl.P))
                flashes += 1
                slope = (rl2.P - rl.P) / dv - rg.P / (vol - vl)
            step = -g / slope if slope < 0.0 else math.nan
            new = vl + step if math.isfinite(step) else math.nan
            if not (lo < new < hi):
                new = 0.5 * (lo + hi)
                slope = math.nan     # a fresh derivative after a bisection
            vl = new
        raise StepFailedError("the pressure balance of the gas and liquid zones did not converge")

    def evaluate_y(self, y: np.ndarray, tw_gas: float, tw_liq: float) -> State:
        rg, zg, ng, rl, xl, nl, vl, flashes = self.zones(y)
        P = rg.P
        tg = rg.T
        two_g = rg.phase == "two-phase"
        pV = props(self.prm, tg, P, np.asarray(rg.y) if two_g else zg, VAPOUR if two_g else GIBBS)
        out_y = np.asarray(rg.y, float) if two_g else zg
        mdot, ndot, h0, t_throat, choked, nfl = self.valves(out_y, tg, P, two_g, pV)
        flashes += nfl
        a_liq = self.vessel.wetted_area_m2(vl)
        a_gas = max(self.vessel.inner_area_m2 - a_liq, 0.0)
        tl = rl.T if rl is not None else tg
        hg = hl = hi = 0.0
        if self.inside.mode == "fixed":
            hg = hl = self.inside.fixed_w_per_m2_k
        elif self.inside.mode == "correlation":
            hg = self._gas_htc(tg, P, pV, out_y, tw_gas - tg)
            if rl is not None:
                hl = self.liquid_htc(xl, P, tw_liq - tl)
        if rl is not None and self.inside.mode != "none":
            # the interface: natural convection of the gas over the pool (the same correlation)
            hi = self._gas_htc(tg, P, pV, out_y, tl - tg)
        q_i = hi * self.interface_area_m2(vl) * (tg - tl) if rl is not None else 0.0
        self._q_interface = q_i
        q_gas = hg * a_gas * (tw_gas - tg)
        q_liq = hl * a_liq * (tw_liq - tl) if rl is not None else 0.0
        self.t_guess, self.p_guess = tg, P
        cv_g = ng * (pV[5] if not two_g else (rg.beta * pV[5] + (1.0 - rg.beta)
                                              * props(self.prm, tg, P, np.asarray(rg.x), LIQUID)[5]))
        cv_l = nl * props(self.prm, tl, P, xl, LIQUID)[5] if rl is not None else math.nan
        n_tot = ng + nl
        beta = (ng * (rg.beta if two_g else 1.0) + (nl * (rl.beta if rl.phase == "two-phase" else 0.0)
                                                    if rl is not None else 0.0)) / n_tot
        return State(t_k=tg, p_pa=P, beta=beta, phase="two-zone" if rl is not None else rg.phase,
                     x=np.asarray(xl if rl is not None else rg.x), y=out_y, liquid_volume_m3=vl, area_gas_m2=a_gas,
                     area_liquid_m2=a_liq, mass_kg=self.mass(y), mdot_kg_per_s=mdot, ndot_mol_per_s=ndot,
                     outflow_h_j_per_mol=h0, outflow_y=out_y, q_gas_w=q_gas, q_liquid_w=q_liq, h_gas_w_per_m2_k=hg,
                     h_liquid_w_per_m2_k=hl, throat_t_k=t_throat, choked=choked, flashes=flashes,
                     heat_capacity_j_per_k=cv_g, heat_capacity_liquid_j_per_k=cv_l, t_gas_k=tg, t_liquid_k=tl)

    def interface_area_m2(self, v_liq: float) -> float:
        """Area of the liquid surface [m^2]."""
        ves = self.vessel
        if v_liq <= 0.0:
            return 0.0
        if ves.orientation == "vertical":
            return ves.end_area_m2
        h = ves.liquid_level_m(v_liq)
        r = 0.5 * ves.inner_diameter_m
        return 2.0 * math.sqrt(max(2.0 * r * h - h * h, 0.0)) * ves.length_m

    def rates(self, st: State, q_gas: float, q_liq: float) -> np.ndarray:
        n = self.n
        d = np.zeros(self.size)
        q_i = self._q_interface
        d[:n] = -st.ndot_mol_per_s * st.outflow_y
        d[n] = -st.ndot_mol_per_s * st.outflow_h_j_per_mol + q_gas - q_i
        d[2 * n + 1] = q_liq + q_i
        return d

    def error(self, e: np.ndarray, y: np.ndarray, st: State) -> float:
        n = self.n
        ntot = max(self.moles(y), 1e-300)
        en = max(float(np.max(np.abs(e[:n]))), float(np.max(np.abs(e[n + 1:2 * n + 1]))))
        eu = max(abs(e[n]), abs(e[2 * n + 1]))
        return max(en / ntot, eu / (ntot * R * st.t_k)) / self.rtol

    def fixed_point(self, st: State, new: State, conductance: tuple[float, float], dt: float) -> tuple[float, float]:
        """Each wall's fluid temperature over the step: the gas zone's and the liquid zone's linearised fixed points."""
        a_g = conductance[0] * dt / max(st.heat_capacity_j_per_k, 1e-300)
        tg = (new.t_gas_k + a_g * st.t_gas_k) / (1.0 + a_g)
        c_l = st.heat_capacity_liquid_j_per_k
        if not math.isfinite(c_l) or not math.isfinite(new.t_liquid_k):
            return tg, st.t_liquid_k
        a_l = conductance[1] * dt / max(c_l, 1e-300)
        return tg, (new.t_liquid_k + a_l * st.t_liquid_k) / (1.0 + a_l)

    def settle(self, y: np.ndarray, st: State, tw_gas: float, tw_liq: float) -> tuple[np.ndarray, State]:
        """Rain-out of the gas zone's condensate into the liquid zone and rise of the liquid zone's vapour into the
        gas zone, each phase with its own internal energy at the common pressure; then the state again."""
        n = self.n
        rg, zg, ng, rl, xl, nl, vl, _ = self.zones(y)
        y = y.copy()
        moved = False
        if rg.phase == "two-phase":
            nliq = ng * (1.0 - rg.beta)
            x = np.asarray(rg.x, float)
            pl = props(self.prm, rg.T, rg.P, x, LIQUID)
            du = nliq * (pl[2] - rg.P * pl[1])
            y[:n] -= nliq * x
            y[n] -= du
            y[n + 1:2 * n + 1] += nliq * x
            y[2 * n + 1] += du
            moved = True
        if rl is not None and rl.phase == "two-phase":
            nvap = nl * rl.beta
            yv = np.asarray(rl.y, float)
            pv = props(self.prm, rl.T, rl.P, yv, VAPOUR)
            du = nvap * (pv[2] - rl.P * pv[1])
            y[n + 1:2 * n + 1] -= nvap * yv
            y[2 * n + 1] -= du
            y[:n] += nvap * yv
            y[n] += du
            moved = True
        elif rl is not None and rl.beta >= 0.5:
            # the liquid zone has boiled away into a vapour: it joins the gas zone
            y[:n] += y[n + 1:2 * n + 1]
            y[n] += y[2 * n + 1]
            y[n + 1:2 * n + 1] = 0.0
            y[2 * n + 1] = 0.0
            moved = True
        y[n + 1:2 * n + 1] = np.maximum(y[n + 1:2 * n + 1], 0.0)
        y[:n] = np.maximum(y[:n], 0.0)
        if not moved:
            return y, st
        return y, self.evaluate_y(y, tw_gas, tw_liq)

    def energy_from_flash(self, y: np.ndarray) -> float:
        rg, zg, ng, rl, xl, nl, vl, _ = self.zones(y)
        u = ng * (rg.h - rg.P * ((self.vessel.volume_m3 - vl) / ng + float(zg @ self.shifts)))
        if rl is not None:
            u += nl * (rl.h - rl.P * (vl / nl + float(xl @ self.shifts)))
        return float(u)


def initial_zones(fluid: Fluid, vessel: Vessel, N0: np.ndarray, U0: float, p0: float, t0: float,
                  liquid_level_m: float | None) -> np.ndarray:
    """The two-zone inventory from the equilibrium one: a two-phase start is split into its vapour (gas zone) and
    liquid (liquid zone) at the initial state; a one-phase start is all gas zone (liquid-like: all liquid zone)."""
    n = N0.size
    y = np.zeros(2 * n + 2)
    res = fluid.flash_pt(t0, p0)
    prm = fluid.mixture.kernel_params
    if n == 1 and liquid_level_m not in (None, 0, 0.0):
        # pure fluid with a level: saturated phases, the liquid by volume
        from jtcheck.thermo.kernels.saturation import pure_saturation_T

        z = np.ones(1)
        ts = float(pure_saturation_T(prm, p0, z, 0))
        c = float(fluid.vol_shifts[0]) if fluid.volume_translation else 0.0
        pl = props(prm, ts, p0, z, LIQUID)
        v_liq = vessel.liquid_volume_m3(float(liquid_level_m))
        nl = v_liq / (pl[1] - c)
        ul = nl * (pl[2] - p0 * pl[1])
        y[0] = N0[0] - nl
        y[1] = U0 - ul
        y[2] = nl
        y[3] = ul
        return y
    if res.phase == "two-phase":
        x = np.asarray(res.x, float)
        yv = np.asarray(res.y, float)
        n_tot = float(N0.sum())
        # moles of liquid: from N0 = nl x + nv y, by least squares on the components
        a = np.vstack([x, yv]).T
        (nl, nv), *_ = np.linalg.lstsq(a, N0, rcond=None)
        nl = min(max(float(nl), 0.0), n_tot)
        pl = props(prm, t0, p0, x, LIQUID)
        ul = nl * (pl[2] - p0 * pl[1])
        y[:n] = N0 - nl * x
        y[n] = U0 - ul
        y[n + 1:2 * n + 1] = nl * x
        y[2 * n + 1] = ul
        return y
    if res.beta < 0.5:
        y[n + 1:2 * n + 1] = N0
        y[2 * n + 1] = U0
        return y
    y[:n] = N0
    y[n] = U0
    return y
