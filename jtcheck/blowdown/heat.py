"""Heat transfer to the vessel wall: inside natural convection and boiling, outside air, and fire.

- Inside, gas-wetted (and liquid-wetted, below boiling): turbulent natural convection,
  Nu = 0.13 (Gr Pr)^(1/3) (McAdams, Heat Transmission, 3rd ed. (1954); the form used for the vessel inside by
  Haque, Richardson, Saville and Chamberlain, Process Saf. Environ. Prot. 70 (1992) 3-17).  With the 1/3
  power the length cancels: h = 0.13 k (g beta |dT| rho^2 cp / (mu k))^(1/3).
- Inside, liquid-wetted with the wall hotter than the liquid: nucleate boiling by Mostinski (1963),
  h = 0.00417 Pc^0.69 q^0.7 F(Pr) [W/(m^2 K)] with Pc [kPa], q [W/m^2], F = 1.8 Pr^0.17 + 4 Pr^1.2 + 10 Pr^10
  (Collier and Thome, Convective Boiling and Condensation, 3rd ed. (1994); from memory); q = h dT gives h
  explicitly.  Below boiling the liquid side takes a natural-convection floor of LIQUID_NC_W_PER_M2_K
  (common practice order of magnitude; shown in the result's basis).
- Outside, "ambient": natural convection of still air by the same correlation, air viscosity by
  Sutherland's law; radiation is left out (less heat in: the colder, conservative side).
- Fire: API Standard 521 (6th ed., 2014), clause 4.4.13.2.4.2, Q = C1 F A_ws^0.82 [W] with A_ws the wetted
  area [m^2], F the environment factor, C1 = 43 200 with adequate drainage and fire-fighting and 70 900
  without (SI form).  Common basis: verify the clause and constants against the edition in force.
"""
from __future__ import annotations

G = 9.80665
R = 8.314462618

#: Natural-convection floor of a liquid-wetted wall colder than the boiling liquid [W/(m^2 K)] (common practice).
LIQUID_NC_W_PER_M2_K = 100.0

#: API 521 fire constants [W m^-1.64]: adequate drainage and fire-fighting / without.
API521_C1_DRAINAGE = 43200.0
API521_C1_NO_DRAINAGE = 70900.0
API521_CLAUSE = ("API Standard 521, 6th ed. (2014), clause 4.4.13.2.4.2, Q = C1 F A^0.82 (common basis: verify "
                 "against the edition in force)")


def natural_convection_htc(dt_k: float, rho: float, cp_j_per_kg_k: float, mu: float, k: float,
                           beta_per_k: float) -> float:
    """Turbulent natural convection coefficient [W/(m^2 K)], Nu = 0.13 (Gr Pr)^(1/3) (McAdams 1954)."""
    if dt_k == 0.0 or not (rho > 0.0 and mu > 0.0 and k > 0.0 and beta_per_k > 0.0):
        return 0.0
    return 0.13 * k * (G * beta_per_k * abs(dt_k) * rho * rho * cp_j_per_kg_k / (mu * k)) ** (1.0 / 3.0)


def mostinski_htc(dt_k: float, pc_pa: float, p_pa: float) -> float:
    """Nucleate boiling coefficient [W/(m^2 K)] at wall superheat ``dt_k`` > 0 (Mostinski 1963)."""
    if dt_k <= 0.0:
        return 0.0
    pr = min(max(p_pa / pc_pa, 1e-6), 0.99)
    f = 1.8 * pr ** 0.17 + 4.0 * pr ** 1.2 + 10.0 * pr ** 10
    a = 0.00417 * (pc_pa / 1e3) ** 0.69 * f
    # h = a q^0.7, q = h dT  ->  h = a^(1/0.3) dT^(0.7/0.3)
    return a ** (1.0 / 0.3) * dt_k ** (0.7 / 0.3)


def air_htc(t_wall_k: float, t_air_k: float, p_air_pa: float = 101325.0) -> float:
    """Natural convection of still air on the outside [W/(m^2 K)], properties at the film temperature."""
    tf = 0.5 * (t_wall_k + t_air_k)
    m = 0.028964
    mu = 1.716e-5 * (tf / 273.15) ** 1.5 * (273.15 + 110.4) / (tf + 110.4)   # Sutherland's law for air
    cp = 1006.0
    k = mu * cp / 0.71                                                        # Prandtl number of air about 0.71
    rho = p_air_pa * m / (R * tf)
    return natural_convection_htc(t_wall_k - t_air_k, rho, cp, mu, k, 1.0 / tf)


def api521_fire_heat_w(wetted_area_m2: float, environment_factor: float, adequate_drainage: bool) -> float:
    """Total fire heat input to the wetted surface [W] (API 521, see :data:`API521_CLAUSE`)."""
    if wetted_area_m2 <= 0.0:
        return 0.0
    c1 = API521_C1_DRAINAGE if adequate_drainage else API521_C1_NO_DRAINAGE
    return c1 * environment_factor * wetted_area_m2 ** 0.82
