"""The words of a screening: the outcome of a case and the findings behind it.

An outcome answers one question for the downstream steel: is the coldest credible outlet temperature
above the cold limit with the required margin?  Findings cover every hazard the screening looked at
(cold metal, liquid dropout, hydrates, CO2 solids, icing, inverse Joule-Thomson, model spread), each
with a severity, a plain message, the numbers behind it (SI) and its basis.
"""
from __future__ import annotations

import enum
from dataclasses import dataclass, field
from typing import Any

from jtcheck.letdown.plain import plain as json_plain
from jtcheck.marks import plain


class Outcome(enum.StrEnum):
    """Standing of a case against its cold limit (fail closed: nothing is "pass" by default)."""

    PASS = "pass"                      # coldest outlet >= limit + margin
    MARGIN_ERODED = "margin eroded"    # limit <= coldest outlet < limit + margin
    FAIL = "fail"                      # coldest outlet < limit
    NOT_SCREENED = "not screened"      # a calculation did not converge, or a limit is missing

    @property
    def sentence(self) -> str:
        """One plain sentence for pages, records and the CLI."""
        return _OUTCOME_SENTENCES[self]

    @property
    def rank(self) -> int:
        """Order from best (0) to worst (3); not screened counts as the worst (it proves nothing)."""
        return _OUTCOME_RANK[self]


_OUTCOME_SENTENCES = {
    Outcome.PASS: "The coldest credible outlet stays above the cold limit with the required margin.",
    Outcome.MARGIN_ERODED: "The coldest credible outlet is above the cold limit but inside the required margin.",
    Outcome.FAIL: "The coldest credible outlet is colder than the cold limit of the downstream steel.",
    Outcome.NOT_SCREENED: "Not screened: a calculation did not converge or a limit is missing; "
                          "this case is not shown to be safe.",
}
_OUTCOME_RANK = {Outcome.PASS: 0, Outcome.MARGIN_ERODED: 1, Outcome.FAIL: 2, Outcome.NOT_SCREENED: 3}


class Severity(enum.StrEnum):
    """How much a finding asks of the engineer."""

    HAZARD = "hazard"             # a cold hazard is predicted: act on it
    CAUTION = "caution"           # review: a hazard is possible or the model is near its limits
    INFORMATION = "information"   # worth knowing; no action implied


_SEVERITY_RANK = {Severity.HAZARD: 0, Severity.CAUTION: 1, Severity.INFORMATION: 2}


class Topic(enum.StrEnum):
    """What a finding is about."""

    COLD_METAL = "cold metal"
    LIQUID_DROPOUT = "liquid dropout"
    INLET_PHASE = "two-phase inlet"
    HYDRATES = "hydrates"
    CO2_SOLIDS = "CO2 solids"
    ICING = "external icing"
    INVERSE_JT = "inverse Joule-Thomson"
    MODEL_SPREAD = "model spread"
    MODEL_VALIDITY = "model validity"
    CONVERGENCE = "convergence"
    RELIEF = "relief valve"
    DEPRESSURING = "depressuring target"


@dataclass(frozen=True)
class Finding:
    """One thing the screening found.

    Attributes
    ----------
    topic : Topic
    severity : Severity
    message : str
        Plain words, with the numbers a reader needs; its quantities are marked (:mod:`jtcheck.marks`) so that
        every edge shows them in the user's units (:attr:`text`: in the default units).
    numbers : dict
        The values behind the message, SI: keys end in their unit (``t_out_k``, ``p_out_pa``).
    basis : str
        The method or rule the finding rests on.
    condition : str
        The credible condition it concerns ("" for the whole case).
    """

    topic: Topic
    severity: Severity
    message: str
    numbers: dict[str, Any] = field(default_factory=dict)
    basis: str = ""
    condition: str = ""

    @property
    def text(self) -> str:
        """The message in the default units (degC, K for differences, bar abs); the edges show :attr:`message` in
        the user's units instead (:meth:`jtcheck.units.TextUnits.text`)."""
        return plain(self.message)

    def to_dict(self) -> dict[str, Any]:
        return {"topic": self.topic.value, "severity": self.severity.value, "message": self.message,
                "numbers": json_plain(self.numbers), "basis": self.basis, "condition": self.condition}


def sort_findings(findings: list[Finding]) -> list[Finding]:
    """Hazards first, then cautions, then information; stable within a severity."""
    return sorted(findings, key=lambda f: _SEVERITY_RANK[f.severity])
