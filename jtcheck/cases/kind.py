"""What a kind of case is: the one interface the register, the API, batch, the web and the records dispatch on.

A *case kind* (a letdown, a relief valve, later a vessel depressurisation) brings everything that is
particular to it, so that nothing above the engineering layer knows one kind's fields:

* its inputs: :attr:`CaseKind.fields` (quantities with units and SI ranges, :class:`~jtcheck.cases.fields.Field`)
  and :meth:`CaseKind.check` (relations between fields, e.g. outlet below inlet pressure);
* its computation and its result: :meth:`CaseKind.compute` returns a
  :class:`~jtcheck.screening.screen.Screening` (conditions, outcome, findings, answers);
* its findings for screening (:meth:`CaseKind.findings`) and a summary for lists (:meth:`CaseKind.summary`);
* the sections it contributes to the case form, the result page and the PDF record: template names
  under ``templates/web/`` for the form and the page (:attr:`CaseKind.input_sections`,
  :attr:`CaseKind.screening_sections`, :attr:`CaseKind.page_sections`) and under ``templates/reports/``
  for the record (:attr:`CaseKind.record_sections`).

Values travel as a plain mapping of register keys in SI (``{"inlet_pressure_pa": 72e5, ...}``); the
edges convert units.  A kind covers one or more *devices*, the values of ``Case.kind`` that users pick
(control valve, choke, relief valve, ...).
"""
from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import Any

from jtcheck.cases.fields import Field
from jtcheck.screening.findings import Finding
from jtcheck.screening.screen import Screening
from jtcheck.thermo.fluid import Fluid


class CaseKind:
    """Base of the case kinds; a kind is a module-level instance registered in :mod:`jtcheck.cases.registry`.

    Attributes
    ----------
    name : str
        Identifier of the kind (``"letdown"``).
    label : str
        Words for a person.
    cases_phrase : str
        How messages name cases of this kind ("relief-valve cases").
    devices : tuple of str
        The device values (``Case.kind``) this kind computes.
    fields : tuple of Field
        The kind's quantity inputs, in the order they are checked and shown (the common cold-limit fields
        and the atmospheric pressure are the register's, not listed here).
    flags : tuple of str
        Non-quantity inputs the kind reads (``water_saturated``, ``hydrate_inhibitor``).
    parameters : tuple of str
        Structured inputs the kind reads (lists and mappings in SI, e.g. flare header sections), checked
        by :meth:`check`; the register keeps them, and any field without a column, with the case.
    method : str
        One sentence on the method, stored with every result.
    input_sections, screening_sections : tuple of str
        Templates the kind adds to the case form: its operating inputs (before the common cold limits)
        and its screening inputs (after them).  The form shows the sections of every kind, since the kind
        is chosen on the same form.
    page_sections, record_sections : tuple of str
        Templates the kind adds to the result page (after the answers) and to the record's answers section.
    vectorised : bool
        Whether batch lists may screen this kind on the vectorised path.
    """

    name: str = ""
    label: str = ""
    cases_phrase: str = ""
    devices: tuple[str, ...] = ()
    fields: tuple[Field, ...] = ()
    flags: tuple[str, ...] = ()
    parameters: tuple[str, ...] = ()
    method: str = ""
    input_sections: tuple[str, ...] = ()
    screening_sections: tuple[str, ...] = ()
    page_sections: tuple[str, ...] = ()
    record_sections: tuple[str, ...] = ()
    vectorised: bool = False
    #: What the kind offers when a case is too cold, in one sentence (the record's purpose says it).
    remedies_sentence: str = ""
    #: Whether pages and records show the table of letdown conditions (a depressuring run shows its curves).
    shows_conditions: bool = True

    def field_named(self, name: str) -> Field | None:
        """The field of this kind with form/API name or SI key ``name``; None if the kind has none."""
        return next((f for f in self.fields if name in (f.name, f.key)), None)

    def check(self, values: Mapping[str, Any]) -> None:
        """Check relations between the fields of ``values`` (each already in range); raise InputError."""

    def check_group(self, values: Mapping[str, Any]) -> None:
        """Check that the kind's optional inputs that go together are given together (run on a case of
        another kind too, before it is told these inputs are not for it)."""

    def compute(self, fluid: Fluid, values: Mapping[str, Any], *, compare_models: bool = True,
                answers: bool = True, sweep: bool = True) -> Screening:
        """Compute and screen the case described by ``values`` (register keys, SI) for ``fluid``.

        ``compare_models`` screens with the other of PR and SRK beside the case's EOS; ``answers`` finds
        what keeps a failing case safe; ``sweep`` searches the operating ranges (batch lists switch the
        last two off).
        """
        raise NotImplementedError

    def result_entries(self, screening: Screening, values: Mapping[str, Any]) -> list[dict[str, Any]] | None:
        """The stored entries of ``CaseResult.results`` when the kind's screening has no letdown conditions to
        store (None: one entry per screened condition, as a letdown)."""
        return None

    def conditions(self, values: Mapping[str, Any]) -> Sequence[Any]:
        """The credible conditions the kind computes, in order."""
        raise NotImplementedError

    def findings(self, screening: Screening) -> list[Finding]:
        """The findings of a computed case, hazards first."""
        return list(screening.findings)

    def summary(self, screening: Screening) -> dict[str, Any]:
        """Outcome, coldest screened temperature [K] and the governing condition, for lists and exports."""
        return {"kind": self.name, "outcome": screening.outcome.value, "t_out_min_k": screening.t_out_min_k,
                "coldest_condition": screening.coldest_condition}
