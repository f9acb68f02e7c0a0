"""The vessel wall: materials and 1-D transient conduction through the thickness.

The wall of each zone (gas-wetted, liquid-wetted) is a slab of ``nodes`` equal cells across its thickness
(curvature neglected: thickness much smaller than the diameter).  Each time step is backward Euler
(unconditionally stable) with the inside and outside convection implicit; the heat the wall gives the fluid over
the step is handed to the fluid's balance as it is, so wall and fluid exchange exactly the same energy.  The first
cell's temperature is reported as the inner wall temperature.
"""
from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from jtcheck.errors import InputError


@dataclass(frozen=True)
class WallMaterial:
    """Thermal properties of the wall metal.

    Attributes
    ----------
    name : str
    density_kg_per_m3, cp_j_per_kg_k, conductivity_w_per_m_k : float
        Density [kg/m^3], specific heat [J/(kg K)], thermal conductivity [W/(m K)] near ambient.
    source : str
    """

    name: str
    density_kg_per_m3: float
    cp_j_per_kg_k: float
    conductivity_w_per_m_k: float
    source: str

    def __post_init__(self) -> None:
        for f, hi in (("density_kg_per_m3", 3e4), ("cp_j_per_kg_k", 5e3), ("conductivity_w_per_m_k", 1e3)):
            v = float(getattr(self, f))
            if not math.isfinite(v) or not 0.0 < v <= hi:
                raise InputError(f"wall_material.{f}", f"must lie above 0 and at most {hi:g}, got {v!r}")

    def to_dict(self) -> dict:
        return {"name": self.name, "density_kg_per_m3": self.density_kg_per_m3, "cp_j_per_kg_k": self.cp_j_per_kg_k,
                "conductivity_w_per_m_k": self.conductivity_w_per_m_k, "source": self.source}


_TYPICAL = "typical handbook value near ambient (common practice; enter the material's own values where known)"
#: Built-in wall materials.
MATERIALS = {
    "carbon steel": WallMaterial("carbon steel", 7850.0, 470.0, 45.0, _TYPICAL),
    "stainless steel": WallMaterial("stainless steel", 7900.0, 500.0, 16.0, _TYPICAL),
}


def material(value) -> WallMaterial:
    """A :class:`WallMaterial` from itself or a built-in name."""
    if isinstance(value, WallMaterial):
        return value
    key = str(value).strip().lower()
    if key not in MATERIALS:
        raise InputError("wall_material", f"unknown material {value!r}; built in: {', '.join(MATERIALS)} (or give a "
                                          "WallMaterial)")
    return MATERIALS[key]


def _tridiagonal(n: int, dt_s: float, thickness_m: float, mat: WallMaterial, h_in: float, h_out: float,
                 rhs: np.ndarray) -> np.ndarray:
    """Solve the backward-Euler conduction matrix of ``n`` cells with inside/outside coefficients for ``rhs``."""
    dx = thickness_m / n
    c = mat.density_kg_per_m3 * mat.cp_j_per_kg_k * dx / dt_s     # [W/(m^2 K)]
    g = mat.conductivity_w_per_m_k / dx
    a = np.zeros(n)
    b = np.full(n, c)
    cc = np.zeros(n)
    rhs = rhs.astype(float).copy()
    for i in range(n - 1):
        b[i] += g
        b[i + 1] += g
        cc[i] = -g
        a[i + 1] = -g
    b[0] += h_in
    b[-1] += h_out
    # Thomas algorithm
    for i in range(1, n):
        w = a[i] / b[i - 1]
        b[i] -= w * cc[i - 1]
        rhs[i] -= w * rhs[i - 1]
    out = np.empty(n)
    out[-1] = rhs[-1] / b[-1]
    for i in range(n - 2, -1, -1):
        out[i] = (rhs[i] - cc[i] * out[i + 1]) / b[i]
    return out


def conduction_step(temps: np.ndarray, dt_s: float, thickness_m: float, mat: WallMaterial, h_in_w_per_m2_k: float,
                    t_in_k: float, h_out_w_per_m2_k: float, t_out_k: float, q_out_w_per_m2: float) -> np.ndarray:
    """New cell temperatures [K] after ``dt_s`` [s] (backward Euler, both surfaces' convection implicit).

    ``h_in``/``t_in`` are the inside coefficient [W/(m^2 K)] and fluid temperature [K] (the heat flux into the wall
    over the step is then h_in (t_in - new inner cell temperature)), ``h_out``/``t_out`` the outside coefficient
    and temperature, ``q_out_w_per_m2`` a flux imposed on the outside (fire)."""
    n = temps.size
    c = mat.density_kg_per_m3 * mat.cp_j_per_kg_k * (thickness_m / n) / dt_s
    rhs = c * temps.astype(float)
    rhs[0] += h_in_w_per_m2_k * t_in_k
    rhs[-1] += h_out_w_per_m2_k * t_out_k + q_out_w_per_m2
    return _tridiagonal(n, dt_s, thickness_m, mat, h_in_w_per_m2_k, h_out_w_per_m2_k, rhs)


def conduction_step_implicit(temps: np.ndarray, dt_s: float, thickness_m: float, mat: WallMaterial,
                             h_law: Callable[[float], float], t_in_k: float, h_out_w_per_m2_k: float,
                             t_out_k: float, q_out_w_per_m2: float, h_hint: float) -> tuple[np.ndarray, float]:
    """Backward Euler step with the inside coefficient taken at the end of the step: h = h_law(T_wall,new - T_in).

    The cell temperatures are linear in the inside coefficient's boundary term, T(h) = u + v h (T_in - u_0) /
    (1 + h v_0) with u the step without inside heat transfer and v the response to a unit inside flux
    (Sherman-Morrison), so the coefficient is found by a scalar bisection of h - h_law(d(h)) = 0 (d(h) the end
    superheat, monotone in h) without further matrix solves.  Returns (new cell temperatures [K], the
    coefficient used [W/(m^2 K)]); with a coefficient falling as the superheat falls (natural convection,
    nucleate boiling) the wall neither lags nor overshoots however long the step."""
    n = temps.size
    c = mat.density_kg_per_m3 * mat.cp_j_per_kg_k * (thickness_m / n) / dt_s
    rhs = c * temps.astype(float)
    rhs[-1] += h_out_w_per_m2_k * t_out_k + q_out_w_per_m2
    u = _tridiagonal(n, dt_s, thickness_m, mat, 0.0, h_out_w_per_m2_k, rhs)
    e0 = np.zeros(n)
    e0[0] = 1.0
    v = _tridiagonal(n, dt_s, thickness_m, mat, 0.0, h_out_w_per_m2_k, e0)
    du = float(u[0]) - t_in_k
    v0 = float(v[0])

    def resid(h: float) -> float:
        return h - h_law(du / (1.0 + h * v0))

    lo, hi = 0.0, max(h_hint, 1e-9)
    for _ in range(60):
        if resid(hi) >= 0.0:
            break
        lo, hi = hi, 2.0 * hi
    for _ in range(60):
        mid = 0.5 * (lo + hi)
        if resid(mid) >= 0.0:
            hi = mid
        else:
            lo = mid
        if hi - lo <= 1e-6 * hi:
            break
    h = 0.5 * (lo + hi)
    return u + v * (h * (-du) / (1.0 + h * v0)), h
