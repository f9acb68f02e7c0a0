"""Invented demo cases at the fictional Kestrel Ridge gas terminal.

Every number here is invented for demonstration; none describes a real facility.
"""
from __future__ import annotations

from dataclasses import dataclass

SITE = "Kestrel Ridge gas terminal (invented)"

#: Invented pipeline gas received at the terminal (mole fractions).
KESTREL_EXPORT_GAS = {
    "methane": 0.884, "ethane": 0.052, "propane": 0.019, "isobutane": 0.004, "n-butane": 0.005,
    "isopentane": 0.002, "n-pentane": 0.001, "n-hexane": 0.001, "nitrogen": 0.012, "carbon dioxide": 0.020,
}


@dataclass(frozen=True)
class DemoLetdown:
    tag: str
    service: str
    fluid: dict
    p_in: str
    t_in: str
    p_out: str


DEMO_LETDOWNS = (
    DemoLetdown("PCV-1101", "Town main pressure-reduction station, first cut", KESTREL_EXPORT_GAS,
                "72 barg", "9 degC", "19 barg"),
)
