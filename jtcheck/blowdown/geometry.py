"""Vessel geometry: a cylinder with flat ends, vertical or horizontal; volumes, areas and the liquid-wetted area.

Flat ends keep the geometry exact and simple; dished heads add a few percent of volume and area (enter the
equivalent length).  SI units: m, m^2, m^3.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

from jtcheck.errors import InputError

ORIENTATIONS = ("vertical", "horizontal")
#: A pool thinner than this wets its share of a vertical vessel's bottom, or of a horizontal vessel's wetted shell
#: [m] (the wetted area starts from zero with a finite slope as the first liquid appears: a film has ~zero area).
FILM_M = 0.005


def _positive(name: str, value, what: str, upper: float) -> float:
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise InputError(name, f"{what} must be a number [m], got {value!r}") from None
    if not math.isfinite(v) or not 0.0 < v <= upper:
        raise InputError(name, f"{what} must lie above 0 and at most {upper:g} m, got {value!r}")
    return v


@dataclass(frozen=True)
class Vessel:
    """A vessel or isolated segment: a cylinder with flat ends.

    Attributes
    ----------
    orientation : {"vertical", "horizontal"}
    inner_diameter_m : float
        Inside diameter [m], up to 20 m.
    length_m : float
        Inside length between the ends (tangent to tangent, or a pipe segment's length) [m], up to 10 km.
    wall_thickness_m : float
        Wall thickness [m], below half the diameter.
    """

    orientation: str
    inner_diameter_m: float
    length_m: float
    wall_thickness_m: float

    def __post_init__(self) -> None:
        if self.orientation not in ORIENTATIONS:
            raise InputError("orientation", f"must be one of {', '.join(ORIENTATIONS)}, got {self.orientation!r}")
        d = _positive("inner_diameter", self.inner_diameter_m, "inside diameter", 20.0)
        ln = _positive("length", self.length_m, "length", 1.0e4)
        t = _positive("wall_thickness", self.wall_thickness_m, "wall thickness", 0.5)
        if t >= 0.5 * d:
            raise InputError("wall_thickness", f"wall thickness {t:g} m must be below half the diameter {d:g} m")
        object.__setattr__(self, "inner_diameter_m", d)
        object.__setattr__(self, "length_m", ln)
        object.__setattr__(self, "wall_thickness_m", t)

    @property
    def volume_m3(self) -> float:
        """Inside volume [m^3]."""
        return 0.25 * math.pi * self.inner_diameter_m ** 2 * self.length_m

    @property
    def end_area_m2(self) -> float:
        return 0.25 * math.pi * self.inner_diameter_m ** 2

    @property
    def inner_area_m2(self) -> float:
        """Inside surface: shell and both ends [m^2]."""
        return math.pi * self.inner_diameter_m * self.length_m + 2.0 * self.end_area_m2

    def _segment_area(self, h: float) -> float:
        r = 0.5 * self.inner_diameter_m
        h = min(max(h, 0.0), 2.0 * r)
        return r * r * math.acos((r - h) / r) - (r - h) * math.sqrt(max(2.0 * r * h - h * h, 0.0))

    def liquid_level_m(self, liquid_volume_m3: float) -> float:
        """Liquid height above the bottom [m] for a liquid volume [m^3]."""
        vl = min(max(liquid_volume_m3, 0.0), self.volume_m3)
        if self.orientation == "vertical":
            return vl / self.end_area_m2
        target = vl / self.length_m
        lo, hi = 0.0, self.inner_diameter_m
        for _ in range(60):
            mid = 0.5 * (lo + hi)
            if self._segment_area(mid) < target:
                lo = mid
            else:
                hi = mid
        return 0.5 * (lo + hi)

    def liquid_volume_m3(self, level_m: float) -> float:
        """Liquid volume [m^3] below a level [m]."""
        if self.orientation == "vertical":
            return self.end_area_m2 * min(max(level_m, 0.0), self.length_m)
        return self._segment_area(level_m) * self.length_m

    def wetted_area_m2(self, liquid_volume_m3: float) -> float:
        """Inside area wetted by a liquid volume [m^3] [m^2] (bottom end, or the ends' segments, and the shell)."""
        if liquid_volume_m3 <= 0.0:
            return 0.0
        h = self.liquid_level_m(liquid_volume_m3)
        if self.orientation == "vertical":
            return self.end_area_m2 * min(1.0, h / FILM_M) + math.pi * self.inner_diameter_m * h
        r = 0.5 * self.inner_diameter_m
        arc = 2.0 * r * math.acos(min(max((r - h) / r, -1.0), 1.0))
        # the shell's wetted arc grows as sqrt(h) from zero (an infinite slope at the first liquid); a pool thinner
        # than FILM_M wets its share of it, so a first film has a wetted area that starts at zero with a finite slope
        return (arc * self.length_m + 2.0 * self._segment_area(h)) * min(1.0, h / FILM_M)

    def to_dict(self) -> dict:
        return {"orientation": self.orientation, "inner_diameter_m": self.inner_diameter_m, "length_m": self.length_m,
                "wall_thickness_m": self.wall_thickness_m, "volume_m3": self.volume_m3,
                "inner_area_m2": self.inner_area_m2}
