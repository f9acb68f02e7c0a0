"""Compositions as users give them: names with mole fractions or mole percent.

Rules (each failure names the entry at fault):
- every amount is a finite number >= 0, and at least one is positive;
- a component may appear once (after resolving synonyms, formulas and CAS numbers);
- amounts that sum to within 0.5 % of 1 are mole fractions, within 0.5 % of 100 mole percent;
  either is normalised to sum exactly 1, with a warning when the sum was not already 1;
  any other sum is rejected;
- components given as exactly zero are dropped, with a note.
"""
from __future__ import annotations

import math
from collections.abc import Iterable, Mapping
from dataclasses import dataclass

import numpy as np

from jtcheck.errors import InputError
from jtcheck.thermo.components import Component, find_component

#: Relative tolerance on the sum of the amounts before normalising [-].
SUM_TOLERANCE = 0.005


@dataclass(frozen=True)
class Composition:
    """A checked, normalised composition.

    Attributes
    ----------
    components : tuple of Component
    zs : numpy.ndarray
        Mole fractions [-], summing to 1, all positive.
    basis : str
        ``"mole fraction"`` or ``"mole percent"``: how the user gave it.
    warnings : tuple of str
        Normalisation and dropped-entry notes.
    """

    components: tuple[Component, ...]
    zs: np.ndarray
    basis: str
    warnings: tuple[str, ...]

    @property
    def ids(self) -> tuple[str, ...]:
        return tuple(c.id for c in self.components)


def parse_composition_text(text: str, field: str = "composition") -> list[tuple[str, float]]:
    """Split ``"methane=0.85, ethane=0.07"`` (also ``:`` or whitespace-separated pairs) into pairs."""
    pairs: list[tuple[str, float]] = []
    if not text or not text.strip():
        raise InputError(field, "empty composition; give name=amount pairs, e.g. 'methane=0.9,ethane=0.1'")
    for k, raw in enumerate(text.replace(";", ",").split(","), start=1):
        item = raw.strip()
        if not item:
            continue
        sep = "=" if "=" in item else (":" if ":" in item else None)
        if sep is None:
            raise InputError(field, f"entry {k} {item!r} is not name=amount (e.g. 'methane=0.85')")
        name, _, amount = item.partition(sep)
        try:
            value = float(amount)
        except ValueError:
            raise InputError(field, f"entry {k} {name.strip()!r}: amount {amount.strip()!r} is not a number") from None
        pairs.append((name.strip(), value))
    return pairs


def normalise_composition(composition: Mapping[str, float] | Iterable[tuple[str, float]] | str,
                          field: str = "composition") -> Composition:
    """Check and normalise a composition (see module rules).

    Parameters
    ----------
    composition : mapping, iterable of (name, amount) pairs, or text
        Component names (common name, synonym, formula or CAS number) with mole fractions or
        mole percent.
    field : str
        Field name used in error messages.
    """
    if isinstance(composition, str):
        items = parse_composition_text(composition, field)
    elif isinstance(composition, Mapping):
        items = list(composition.items())
    else:
        items = list(composition)
    if not items:
        raise InputError(field, "empty composition; give at least one component with a positive amount")
    seen: dict[str, str] = {}
    comps: list[Component] = []
    amounts: list[float] = []
    notes: list[str] = []
    for name, amount in items:
        label = str(name)
        try:
            value = float(amount)
        except (TypeError, ValueError):
            raise InputError(field, f"{label!r}: amount {amount!r} is not a number") from None
        if not math.isfinite(value):
            raise InputError(field, f"{label!r}: amount {amount!r} is not a finite number")
        if value < 0.0:
            raise InputError(field, f"{label!r}: amount {value:g} is negative; amounts must be >= 0")
        if value > 100.0 * (1.0 + SUM_TOLERANCE):
            raise InputError(field, f"{label!r}: amount {value:g} is above 100; amounts are mole fractions (summing "
                                    "to 1) or mole percent (summing to 100)")
        comp = find_component(label, field=field)
        if comp.id in seen:
            raise InputError(field, f"{label!r} and {seen[comp.id]!r} are the same component ({comp.name}); "
                                    "give each component once")
        seen[comp.id] = label
        if value == 0.0:
            notes.append(f"{comp.name} given as 0 was left out")
            continue
        comps.append(comp)
        amounts.append(value)
    if not comps:
        raise InputError(field, "every amount is zero; at least one component needs a positive amount")
    total = math.fsum(amounts)
    if abs(total - 1.0) <= SUM_TOLERANCE:
        basis = "mole fraction"
        scale = total
    elif abs(total - 100.0) <= 100.0 * SUM_TOLERANCE:
        basis = "mole percent"
        scale = total
    else:
        raise InputError(field, f"amounts sum to {total:g}; they must sum to 1 (mole fractions) or 100 "
                                f"(mole percent) within {SUM_TOLERANCE * 100:g} %")
    nominal = 1.0 if basis == "mole fraction" else 100.0
    if abs(total - nominal) > 1e-9 * nominal:
        notes.append(f"amounts summed to {total:.6g} ({basis}); normalised to 1")
    zs = np.array(amounts) / scale
    return Composition(components=tuple(comps), zs=zs, basis=basis, warnings=tuple(notes))
