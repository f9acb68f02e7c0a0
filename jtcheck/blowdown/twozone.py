"""The two-zone (non-equilibrium) vessel model: a gas zone and a liquid zone, each in its own equilibrium, at one
pressure but at their own temperatures.

After Haque, Richardson, Saville and Chamberlain, "Blowdown of pressure vessels. I. Computer model", Process Saf.
Environ. Prot. 70 (1992) 3-9, and Speranza and Terenzi, Ind. Eng. Chem. Res. 44 (2005) 1054-1062 (a two-zone
model with condensate rain-out and flashing liquid; the physics as recalled from the papers, from memory, not their
equations; check the pages):

- each zone carries its component moles and internal energy; the zones share the pressure P, and their volumes
  add up to the vessel's.  The liquid zone at a trial P (:meth:`TwoZoneContents.liquid_at`): below its bubble
  point one liquid, its temperature from u(T, P) = U_l/N_l by a Newton iteration on the equation of state's
  liquid root (no flash); past its bubble point it boils, its vapour (bubbles) counted in its volume: a pure
  fluid at its saturation temperature with the quality from the lever rule on u, a mixture by a bracketed secant
  on T over PT flashes.  The gas zone is a UV flash of (U_g, V - V_l(P)) giving P_g.  The pressure balance
  P_g(V - V_l(P)) = P is solved by a secant on P from the last state's pressure (warm-started, bracketed, at most
  :data:`MAX_BALANCE_ITERATIONS` iterations, else the step fails and is shortened; f(P) = P_g - P falls strictly
  with P, so the root is unique).  Typically two or three gas-zone flashes per evaluation.  (Before, each
  pressure balance solved V_l with nested UV flashes of both zones: slow, and failing where the liquid sits on
  its bubble line.)
- the valves draw the gas zone (its vapour when it carries mist); the gas-wetted wall exchanges heat with the gas
  zone, the liquid-wetted wall with the liquid zone (nucleate boiling or the natural-convection floor), and the
  two zones across the interface by natural convection (the gas correlation of :mod:`jtcheck.blowdown.heat` on
  the interface area);
- between time steps, condensate (mist) formed in the gas zone rains out into the liquid zone and the pool's
  bubbles rise into the gas zone, each phase with its own internal energy at the common pressure, so the
  transfer conserves mass and energy exactly.  Because the bubbles are counted while they form, the pressure
  falls smoothly and a boiling pool stays on its bubble point (checked against CoolProp's propane in
  tests/blowdown/test_twozone.py); an earlier version that flashed the pool only between steps raised the
  pressure by up to 16 % at each step.
- a pure fluid's gas zone sits on its dew line (rain-out leaves saturated vapour): where the general UV flash
  fails there, the gas zone is solved on the saturation line by the lever rule
  (:meth:`TwoZoneContents._pure_saturated`).

Where no liquid zone is present and the gas zone is one phase, the evaluation is the equilibrium model's
(:meth:`jtcheck.blowdown.contents.Contents.evaluate`): the same curves.  A start with no vapour space (a vessel
full of liquid) is refused: the model needs a gas zone to draw from.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from jtcheck.blowdown.contents import Contents, InsideHeatTransfer, State, StepFailedError
from jtcheck.blowdown.geometry import Vessel
from jtcheck.blowdown.inputs import Orifice
from jtcheck.errors import InputError
from jtcheck.thermo.flash import FlashResult, flash_pt, flash_uv
from jtcheck.thermo.fluid import Fluid
from jtcheck.thermo.kernels.flash_uv import phase_props as props
from jtcheck.thermo.kernels.saturation import pure_saturation_T
from jtcheck.thermo.models.conventions import GIBBS, LIQUID, VAPOUR

R = 8.314462618
#: A liquid zone with fewer moles than this fraction of the inventory is evaluated together with the gas zone.
MIN_LIQUID_FRACTION = 1e-7
#: Pressure balance of the zones: |P_gas - P| <= this times P.  The flashes' own precision sets a floor near 1e-9
#: where the pool boils (its bubbles' volume from a PT split); the energy closure this allows is of the same order.
P_BALANCE_TOL = 1e-8
#: Iteration caps: the pressure balance (secant on P) and the liquid zone's temperature (Newton on T).
MAX_BALANCE_ITERATIONS = 30
MAX_LIQUID_ITERATIONS = 50
#: A pure gas zone a hair outside its saturation line: a lever-rule quality up to 1 + this is taken as vapour.
PURE_QUALITY_OVERSHOOT = 1e-4
#: Largest Newton step on the liquid temperature [K].
MAX_LIQUID_T_STEP_K = 10.0

METHOD = ("two-zone model (Haque et al. 1992; Speranza and Terenzi 2005): gas and liquid zones at one pressure and "
          "their own temperatures; the gas zone a UV flash, the liquid zone a liquid at its internal energy or, past "
          "its bubble point, a boiling pool (saturation line or PT split), the pressure balance by a secant on the "
          "pressure; condensate rains out and the pool's vapour rises between steps; interface heat by natural "
          "convection; valves draw the gas zone through a real-fluid isentropic nozzle; walls as the equilibrium "
          "model")


@dataclass(frozen=True)
class LiquidZone:
    """The liquid zone at the common pressure (SI; molar quantities of the equation of state, untranslated)."""

    t_k: float
    p_pa: float
    #: liquid composition and, where the zone boils, its vapour's composition and molar fraction (bubbles)
    x: np.ndarray
    y: np.ndarray
    beta: float
    n_mol: float
    #: molar volume and enthalpy of the zone (both phases) from the equation of state (untranslated)
    v_eos_m3_per_mol: float
    volume_m3: float
    h_j_per_mol: float
    cv_j_per_mol_k: float


@dataclass(frozen=True)
class Zones:
    """The two zones at one instant: the gas zone's UV flash and the liquid zone (None when there is none)."""

    gas: object
    z_gas: np.ndarray
    n_gas: float
    liquid: LiquidZone | None
    flashes: int


class TwoZoneContents(Contents):
    """Evaluates the vessel as a gas zone and a liquid zone; inventory y = (N_g..., U_g, N_l..., U_l)."""

    def __init__(self, fluid: Fluid, vessel: Vessel, orifices: tuple[Orifice, ...], inside: InsideHeatTransfer,
                 z0: np.ndarray):
        super().__init__(fluid, vessel, orifices, inside, z0)
        self.n = self.mws.size
        #: the liquid zone's last temperature [K] (warm start of its Newton iteration)
        self.t_liquid_guess = math.nan
        self._last: tuple[bytes, Zones] | None = None
        #: PT flashes made for the liquid zone (a pool past its bubble point), counted into each state's flashes
        self.pt_flashes = 0

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

    # -- the zones ------------------------------------------------------------------------------------------
    def _gas(self, N: np.ndarray, U: float, volume: float, t_guess: float, p_guess: float):
        """UV flash of the gas zone in ``volume`` [m^3]; raises StepFailedError."""
        n = float(N.sum())
        if not (n > 0.0 and volume > 0.0 and math.isfinite(U)):
            raise StepFailedError("the gas zone is empty or has no volume")
        z = N / n
        v = volume / n + float(z @ self.shifts)
        res = flash_uv(self.mix, U / n, v, z, t_guess, p_guess, self._t_skip(z))
        for tg, pg in ((self.t_guess, self.p_guess), (math.nan, math.nan)):
            # a warm start that fails (a gas zone a hair off its dew line) is retried from the last state, then cold
            if res.converged:
                break
            res = flash_uv(self.mix, U / n, v, z, tg, pg, self._t_skip(z))
        if not res.converged and self.n == 1:
            res = self._pure_saturated(U / n, v, z, p_guess)
        if not res.converged:
            raise StepFailedError(f"gas-zone UV flash failed at u = {U / n:.6g} J/mol, v = {v:.6g} m^3/mol: "
                                  f"{res.message}")
        return res, z, n

    def _pure_saturated(self, u_t: float, v_t: float, z: np.ndarray, p_guess: float) -> FlashResult:
        """A pure fluid's gas zone on (or a hair outside) its saturation line at molar u_t [J/mol], v_t [m^3/mol]
        (equation-of-state volume).

        The gas zone of a boiling pure pool sits on its dew line: rain-out leaves saturated vapour and the pool's
        flash adds it, and there the general UV flash's one-phase iteration can fail to settle on either side.
        Along the saturation line at fixed v the lever-rule energy u(P) = u_l + q (u_v - u_l), q = (v - v_l) /
        (v_v - v_l), rises with P: a bracketed secant (Illinois) on ln P finds it.  A quality up to
        :data:`PURE_QUALITY_OVERSHOOT` above 1 (a vapour superheated by a hair) is accepted as vapour with the
        lever rule's energy (its error is second order in the overshoot); beyond that the result is not converged."""
        tc, pc = float(self.tcs[0]), float(self.pcs[0])
        p0 = p_guess if math.isfinite(p_guess) and 0.0 < p_guess < pc else 0.5 * pc

        def sat(lp: float):
            p = math.exp(lp)
            ts = float(pure_saturation_T(self.prm, p, z, 0))
            if not (math.isfinite(ts) and ts < tc):
                return None
            pl = props(self.prm, ts, p, z, LIQUID)
            pv = props(self.prm, ts, p, z, VAPOUR)
            q = (v_t - pl[1]) / (pv[1] - pl[1])
            h = pl[2] + q * (pv[2] - pl[2])
            return ts, p, q, h, (h - p * v_t - u_t) / (R * ts)

        fail = FlashResult(T=math.nan, P=math.nan, beta=math.nan, phase="unknown", z=z, x=z, y=z, h=math.nan,
                           s=math.nan, converged=False, message="pure gas zone: no saturated state at this u, v")
        lp_max = math.log(pc * (1.0 - 1e-6))
        width = 0.05
        for _ in range(8):
            # a bracket around the guess, widened until the energy residual changes sign
            lo, hi = math.log(p0) - width, min(math.log(p0) + width, lp_max)
            a, b = sat(lo), sat(hi)
            if a is not None and b is not None and a[4] * b[4] <= 0.0:
                break
            width *= 2.0
        else:
            return fail
        fa, fb = a[4], b[4]
        side = 0
        for it in range(60):
            lp = (lo * fb - hi * fa) / (fb - fa)
            c = sat(lp)
            if c is None:
                return fail
            ts, p, q, h, f = c
            if abs(f) <= 1e-12 or abs(hi - lo) < 1e-14:
                if not (0.0 <= q <= 1.0 + PURE_QUALITY_OVERSHOOT):
                    return fail
                two = q < 1.0
                return FlashResult(T=ts, P=p, beta=q if two else 1.0, phase="two-phase" if two else "vapour", z=z,
                                   x=z, y=z, h=h, s=math.nan, converged=True, iterations=it + 1, residual=abs(f),
                                   message="pure gas zone on its saturation line (lever rule)")
            if f * fb > 0.0:
                hi, fb = lp, f
                if side == 1:
                    fa *= 0.5
                side = 1
            else:
                lo, fa = lp, f
                if side == -1:
                    fb *= 0.5
                side = -1
        return fail

    def _one_phase_at(self, x: np.ndarray, u_t: float, p: float, t_guess: float, root: int) -> tuple[float, tuple]:
        """(T [K], props) of one phase of composition x at pressure p [Pa] with molar internal energy u_t [J/mol]:
        Newton on T with the equation of state's ``root``, du/dT at constant P = cp - P (dv/dT)_P; raises
        StepFailedError when it does not converge."""
        t = t_guess if math.isfinite(t_guess) else 300.0
        tol = 1e-11 * (abs(u_t) + R * t)
        for _ in range(MAX_LIQUID_ITERATIONS):
            pr = props(self.prm, t, p, x, root)
            f = pr[2] - p * pr[1] - u_t
            if abs(f) <= tol:
                return t, pr
            dudt = pr[4] + p * pr[6] / pr[7]
            if not (math.isfinite(f) and math.isfinite(dudt) and dudt > 0.0):
                break
            t += max(-MAX_LIQUID_T_STEP_K, min(MAX_LIQUID_T_STEP_K, -f / dudt))
            if not t > 1.0:
                break
        raise StepFailedError(f"the liquid zone's temperature did not converge at {p:.6g} Pa, u = {u_t:.6g} J/mol "
                              f"(Newton on T, {MAX_LIQUID_ITERATIONS} iterations at most)")

    def _zone_of(self, n: float, x: np.ndarray, t: float, p: float, pr_l, pr_v=None, beta: float = 0.0,
                 y: np.ndarray | None = None) -> LiquidZone:
        """The liquid zone from its phases' properties (the vapour's, and its fraction ``beta``, when it boils)."""
        y = x if y is None else y
        if pr_v is None:
            v, h = pr_l[1], pr_l[2]
            shift = float(x @ self.shifts)
        else:
            v = (1.0 - beta) * pr_l[1] + beta * pr_v[1]
            h = (1.0 - beta) * pr_l[2] + beta * pr_v[2]
            shift = (1.0 - beta) * float(x @ self.shifts) + beta * float(y @ self.shifts)
        return LiquidZone(t_k=t, p_pa=p, x=x, y=y, beta=beta, n_mol=n, v_eos_m3_per_mol=v,
                          volume_m3=n * (v - shift), h_j_per_mol=h, cv_j_per_mol_k=pr_l[5])

    def liquid_at(self, N: np.ndarray, U: float, p: float, t_guess: float) -> LiquidZone:
        """The liquid zone (moles ``N`` [mol], internal energy ``U`` [J]) at pressure ``p`` [Pa].

        Below its bubble point it is one liquid (Newton on T, no flash).  Past it, the zone boils: a pure fluid sits
        at its saturation temperature with the quality from the lever rule on u; a mixture is solved by a bracketed
        secant on T over PT flashes (u of the split rises with T at fixed P).  The vapour formed stays in the zone
        (bubbles, counted in its volume) until the step ends and it rises (:meth:`settle`).  Raises
        StepFailedError when a solve does not converge."""
        n = float(N.sum())
        x = N / n
        u_t = U / n
        if self.n == 1:
            ts = float(pure_saturation_T(self.prm, p, x, 0))
            if not math.isfinite(ts):
                # above the critical pressure: one dense phase
                t, pr = self._one_phase_at(x, u_t, p, t_guess, GIBBS)
                return self._zone_of(n, x, t, p, pr)
            pl = props(self.prm, ts, p, x, LIQUID)
            pv = props(self.prm, ts, p, x, VAPOUR)
            ul = pl[2] - p * pl[1]
            uv = pv[2] - p * pv[1]
            if u_t <= ul:
                t, pr = self._one_phase_at(x, u_t, p, min(t_guess, ts) if math.isfinite(t_guess) else ts, LIQUID)
                return self._zone_of(n, x, t, p, pr)
            if u_t >= uv:
                t, pr = self._one_phase_at(x, u_t, p, ts, VAPOUR)
                return self._zone_of(n, x, t, p, pr, pr, 1.0)
            return self._zone_of(n, x, ts, p, pl, pv, (u_t - ul) / (uv - ul))
        try:
            t, pr = self._one_phase_at(x, u_t, p, t_guess, LIQUID)
            first = flash_pt(self.mix, t, p, x)
            self.pt_flashes += 1
            if first.converged and first.phase != "two-phase":
                return self._zone_of(n, x, t, p, pr)
        except StepFailedError:
            t = t_guess if math.isfinite(t_guess) else 300.0
        return self._boiling_mixture(n, x, u_t, p, t)

    def _boiling_mixture(self, n: float, x: np.ndarray, u_t: float, p: float, t0: float) -> LiquidZone:
        """A mixture liquid zone past its bubble point at p [Pa]: T from u(T) = u_t, u of the PT split."""

        def at(t: float):
            r = flash_pt(self.mix, t, p, x)
            self.pt_flashes += 1
            if not r.converged:
                raise StepFailedError(f"the liquid zone's PT flash failed at {t:.6g} K, {p:.6g} Pa: {r.message}")
            if r.phase == "two-phase":
                pl = props(self.prm, t, p, np.asarray(r.x, float), LIQUID)
                pv = props(self.prm, t, p, np.asarray(r.y, float), VAPOUR)
                zone = self._zone_of(n, np.asarray(r.x, float), t, p, pl, pv, r.beta, np.asarray(r.y, float))
            else:
                pr = props(self.prm, t, p, x, LIQUID if r.beta < 0.5 else VAPOUR)
                zone = self._zone_of(n, x, t, p, pr, None if r.beta < 0.5 else pr, 0.0 if r.beta < 0.5 else 1.0)
            return zone, (zone.h_j_per_mol - p * zone.v_eos_m3_per_mol - u_t) / (R * t)

        lo, hi = math.nan, math.nan
        f_lo = f_hi = math.nan
        t = t0
        step = 0.5
        for _ in range(MAX_LIQUID_ITERATIONS):
            zone, f = at(t)
            if abs(f) <= 1e-11:
                return zone
            if f > 0.0:
                hi, f_hi = t, f
            else:
                lo, f_lo = t, f
            if math.isfinite(lo) and math.isfinite(hi):
                if hi - lo < 1e-10 * t:
                    return zone
                t = lo - f_lo * (hi - lo) / (f_hi - f_lo)
                if not (lo < t < hi):
                    t = 0.5 * (lo + hi)
            else:
                step *= 2.0
                t = t - step if f > 0.0 else t + step
        raise StepFailedError(f"the boiling liquid zone did not converge at {p:.6g} Pa, u = {u_t:.6g} J/mol")

    def zones(self, y: np.ndarray) -> Zones:
        """Both zones at their common pressure (the pressure balance; see the module text)."""
        key = y.tobytes()
        if self._last is not None and self._last[0] == key:
            return self._last[1]
        ng, ug, nl, ul = self._split(y)
        vol = self.vessel.volume_m3
        n_tot = float(ng.sum() + nl.sum())
        tg0 = self.t_guess
        pg0 = self.p_guess
        if float(nl.sum()) <= MIN_LIQUID_FRACTION * n_tot:
            res, z, n = self._gas(ng + nl, ug + ul, vol, tg0, pg0)
            out = Zones(res, z, n, None, 1)
            self._last = (key, out)
            return out
        if float(ng.sum()) <= 0.0:
            raise StepFailedError("the gas zone is empty (the vessel is full of liquid)")
        tl0 = self.t_liquid_guess if math.isfinite(self.t_liquid_guess) else tg0
        p = pg0 if math.isfinite(pg0) and pg0 > 0.0 else 1e5
        lo, hi = 0.0, math.inf
        prev: tuple[float, float] | None = None
        flashes = 0
        pt0 = self.pt_flashes
        resid = math.nan
        for _ in range(MAX_BALANCE_ITERATIONS):
            lz = self.liquid_at(nl, ul, p, tl0)
            tl0 = lz.t_k
            vg = vol - lz.volume_m3
            if vg <= 0.0:
                # the liquid would fill the vessel: the pressure must be higher
                lo = p
                p = 2.0 * p if not math.isfinite(hi) else 0.5 * (p + hi)
                prev = None
                continue
            rg, zg, n_g = self._gas(ng, ug, vg, tg0, pg0)
            flashes += 1
            tg0, pg0 = rg.T, rg.P
            f = rg.P - p
            resid = f / p
            if abs(f) <= P_BALANCE_TOL * p:
                self.t_liquid_guess = lz.t_k
                out = Zones(rg, zg, n_g, lz, flashes + self.pt_flashes - pt0)
                self._last = (key, out)
                return out
            if f > 0.0:
                lo = p
            else:
                hi = p
            new = rg.P       # the fixed point: converges fast while the liquid is stiff
            if prev is not None and f != prev[1]:
                new = p - f * (p - prev[0]) / (f - prev[1])
            if not (lo < new < hi):
                new = 0.5 * (lo + hi) if math.isfinite(hi) else 2.0 * p
            prev = (p, f)
            p = new
        raise StepFailedError(f"the pressure balance of the gas and liquid zones did not converge in "
                              f"{MAX_BALANCE_ITERATIONS} iterations (relative residual {resid:.3g})")

    # -- one instant ----------------------------------------------------------------------------------------
    def evaluate_y(self, y: np.ndarray, tw_gas: float, tw_liq: float) -> State:
        ng_v, ug, nl_v, ul = self._split(y)
        if float(nl_v.sum()) <= MIN_LIQUID_FRACTION * float(ng_v.sum() + nl_v.sum()):
            st = Contents.evaluate(self, ng_v + nl_v, ug + ul, tw_gas, tw_liq)
            if st.phase != "two-phase":
                # one phase, no liquid zone: the equilibrium model's state
                return st
        zs = self.zones(y)
        lz = zs.liquid
        rg, zg, ng = zs.gas, zs.z_gas, zs.n_gas
        flashes = zs.flashes
        P = rg.P
        tg = rg.T
        two_g = rg.phase == "two-phase"
        pV = props(self.prm, tg, P, np.asarray(rg.y) if two_g else zg, VAPOUR if two_g else GIBBS)
        out_y = np.asarray(rg.y, float) if two_g else zg
        mdot, ndot, h0, t_throat, choked, nfl = self.valves(out_y, tg, P, two_g, pV)
        flashes += nfl
        vl = lz.volume_m3 if lz is not None else 0.0
        a_liq = self.vessel.wetted_area_m2(vl)
        a_gas = max(self.vessel.inner_area_m2 - a_liq, 0.0)
        tl = lz.t_k if lz is not None else tg
        hg = hl = hi = 0.0
        if self.inside.mode == "fixed":
            hg = hl = self.inside.fixed_w_per_m2_k
        elif self.inside.mode == "correlation":
            hg = self._gas_htc(tg, P, pV, out_y, tw_gas - tg)
            if lz is not None:
                hl = self.liquid_htc(lz.x, P, tw_liq - tl)
        if lz is not None and self.inside.mode != "none":
            # the interface: natural convection of the gas over the pool (the same correlation)
            hi = self._gas_htc(tg, P, pV, out_y, tl - tg)
        q_i = hi * self.interface_area_m2(vl) * (tg - tl) if lz is not None else 0.0
        q_gas = hg * a_gas * (tw_gas - tg)
        q_liq = hl * a_liq * (tw_liq - tl) if lz is not None else 0.0
        self.t_guess, self.p_guess = tg, P
        cv_g = ng * (pV[5] if not two_g else (rg.beta * pV[5] + (1.0 - rg.beta)
                                              * props(self.prm, tg, P, np.asarray(rg.x), LIQUID)[5]))
        cv_l = lz.n_mol * lz.cv_j_per_mol_k if lz is not None else math.nan
        n_tot = float(ng_v.sum() + nl_v.sum())
        beta = ng * (rg.beta if two_g else 1.0) / n_tot
        return State(t_k=tg, p_pa=P, beta=beta, phase="two-zone" if lz is not None else rg.phase,
                     x=np.asarray(lz.x if lz is not None else rg.x), y=out_y, liquid_volume_m3=vl, area_gas_m2=a_gas,
                     area_liquid_m2=a_liq, mass_kg=self.mass(y), mdot_kg_per_s=mdot, ndot_mol_per_s=ndot,
                     outflow_h_j_per_mol=h0, outflow_y=out_y, q_gas_w=q_gas, q_liquid_w=q_liq, h_gas_w_per_m2_k=hg,
                     h_liquid_w_per_m2_k=hl, throat_t_k=t_throat, choked=choked, flashes=flashes,
                     heat_capacity_j_per_k=cv_g, heat_capacity_liquid_j_per_k=cv_l, t_gas_k=tg, t_liquid_k=tl,
                     q_interface_w=q_i)

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
        q_i = st.q_interface_w
        d[:n] = -st.ndot_mol_per_s * st.outflow_y
        if st.liquid_volume_m3 > 0.0 and st.phase == "two-zone":
            d[n] = -st.ndot_mol_per_s * st.outflow_h_j_per_mol + q_gas - q_i
            d[2 * n + 1] = q_liq + q_i
        else:
            # no liquid zone: the wall heat of both zones goes to the (one) fluid, as in the equilibrium model
            d[n] = -st.ndot_mol_per_s * st.outflow_h_j_per_mol + q_gas + q_liq
        return d

    def error(self, e: np.ndarray, y: np.ndarray, st: State) -> float:
        n = self.n
        ntot = max(self.moles(y), 1e-300)
        en = max(float(np.max(np.abs(e[:n]))), float(np.max(np.abs(e[n + 1:2 * n + 1]))))
        eu = max(abs(e[n]), abs(e[2 * n + 1]))
        return max(en / ntot, eu / (ntot * R * st.t_k)) / self.rtol

    def fixed_point(self, st: State, new: State, conductance: tuple[float, float], dt: float) -> tuple[float, float]:
        """Each wall's fluid temperature over the step: the gas zone's and the liquid zone's linearised fixed points."""
        if st.phase != "two-zone":
            return Contents.fixed_point(self, st, new, conductance, dt)
        a_g = conductance[0] * dt / max(st.heat_capacity_j_per_k, 1e-300)
        tg = (new.t_gas_k + a_g * st.t_gas_k) / (1.0 + a_g)
        c_l = st.heat_capacity_liquid_j_per_k
        if not math.isfinite(c_l) or not math.isfinite(new.t_liquid_k):
            return tg, st.t_liquid_k
        a_l = conductance[1] * dt / max(c_l, 1e-300)
        return tg, (new.t_liquid_k + a_l * st.t_liquid_k) / (1.0 + a_l)

    def settle(self, y: np.ndarray, st: State, tw_gas: float, tw_liq: float) -> tuple[np.ndarray, State]:
        """Rain-out of the gas zone's condensate into the liquid zone and rise of the pool's bubbles into the gas
        zone, each phase with its own internal energy at the common pressure; then the state again.  Raises
        StepFailedError when the new state cannot be solved (the integrator shortens the step)."""
        n = self.n
        zs = self.zones(y)
        rg, ng, lz = zs.gas, zs.n_gas, zs.liquid
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
        if lz is not None and lz.beta >= 1.0 - 1e-12:
            # the liquid zone has boiled away into a vapour: it joins the gas zone
            y[:n] += y[n + 1:2 * n + 1]
            y[n] += y[2 * n + 1]
            y[n + 1:2 * n + 1] = 0.0
            y[2 * n + 1] = 0.0
            moved = True
        elif lz is not None and lz.beta > 0.0:
            # the pool's bubbles rise into the gas zone with their own internal energy
            nvap = lz.n_mol * lz.beta
            pv = props(self.prm, lz.t_k, lz.p_pa, lz.y, VAPOUR)
            du = nvap * (pv[2] - lz.p_pa * pv[1])
            y[n + 1:2 * n + 1] -= nvap * lz.y
            y[2 * n + 1] -= du
            y[:n] += nvap * lz.y
            y[n] += du
            moved = True
        if not moved:
            return y, st
        y[n + 1:2 * n + 1] = np.maximum(y[n + 1:2 * n + 1], 0.0)
        y[:n] = np.maximum(y[:n], 0.0)
        return y, self.evaluate_y(y, tw_gas, tw_liq)

    def energy_from_flash(self, y: np.ndarray) -> float:
        """Internal energy [J] of both zones recomputed from their states (u = h - P v of the answers)."""
        zs = self.zones(y)
        rg, zg, ng, lz = zs.gas, zs.z_gas, zs.n_gas, zs.liquid
        vg = self.vessel.volume_m3 - (lz.volume_m3 if lz is not None else 0.0)
        u = ng * (rg.h - rg.P * (vg / ng + float(zg @ self.shifts)))
        if lz is not None:
            u += lz.n_mol * (lz.h_j_per_mol - lz.p_pa * lz.v_eos_m3_per_mol)
        return float(u)


def initial_zones(fluid: Fluid, vessel: Vessel, N0: np.ndarray, U0: float, p0: float, t0: float,
                  liquid_level_m: float | None) -> np.ndarray:
    """The two-zone inventory from the equilibrium one: a two-phase start is split into its vapour (gas zone) and
    liquid (liquid zone) at the initial state; a one-phase start is all gas zone; a liquid-like one is refused (no
    vapour space: raises InputError naming "model")."""
    n = N0.size
    y = np.zeros(2 * n + 2)
    res = fluid.flash_pt(t0, p0)
    prm = fluid.mixture.kernel_params
    if n == 1 and liquid_level_m not in (None, 0, 0.0):
        # pure fluid with a level: saturated phases, the liquid by volume
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
        raise InputError("model", f"the fluid is {res.phase} at the initial state ({p0:g} Pa, {t0:g} K) and fills "
                                  "the vessel: the two-zone model needs a vapour space to draw from (a gas or a "
                                  "two-phase initial state); use the equilibrium model")
    y[:n] = N0
    y[n] = U0
    return y
