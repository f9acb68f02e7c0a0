"""compute_case: results of every credible condition, stored with what is needed to reproduce them."""
from __future__ import annotations

import math

import pytest

import jtcheck
from jtcheck import Fluid, letdown
from jtcheck.errors import InputError
from jtcheck.letdown import LetdownResult
from jtcheck.records import service
from jtcheck.records.models import AuditEntry, Case, CaseResult, Role
from jtcheck.screening import screen as screen_module
from jtcheck.screening.findings import Outcome
from jtcheck.screening.screen import SWEEP_CONDITION, start_up_name
from jtcheck.thermo.components import COMPONENT_DATA_VERSION, KIJ_DATA_VERSION

from .register_helpers import BAR, T0, count


@pytest.fixture
def case(session, engineer, case_data):
    return service.create_case(session, engineer, case_data())


def test_all_four_conditions_and_the_sweep_are_computed_and_converge(session, engineer, case):
    result = service.compute_case(session, engineer, case.id)
    # the user's four credible conditions, the generated start-up from each (outlet at the atmosphere), the sweep
    assert [e["condition"] for e in result.results] == [*service.CONDITIONS,
                                                        *(start_up_name(c) for c in service.CONDITIONS),
                                                        SWEEP_CONDITION]
    assert result.converged is True
    assert all(e["converged"] and e["t_out"] < e["t_in"] for e in result.results)
    # the screened temperature is the colder of the two models, never warmer than the case model's
    assert all(e["t_screen_k"] <= e["t_out"] + 1e-9 for e in result.results)
    assert result.t_out_min_k == min(e["t_screen_k"] for e in result.results)
    corner = result.condition("min temperature + max pressure")
    assert (corner["p_in"], corner["t_in"], corner["p_out"]) == (80 * BAR, T0 + 5.0, 10 * BAR)
    swept = result.condition(SWEEP_CONDITION)
    assert swept["t_screen_k"] <= corner["t_screen_k"] + 1e-6   # the sweep finds the coldest point of the ranges
    assert result.outcome in {o.value for o in Outcome}
    assert result.screening["outcome"] == result.outcome
    assert result.screening["t_out_min_k"] == result.t_out_min_k


def test_only_the_given_extremes_are_computed(session, engineer, case_data):
    case = service.create_case(session, engineer, case_data(inlet_pressure_max_pa=None))
    result = service.compute_case(session, engineer, case.id)
    assert [e["condition"] for e in result.results] == ["normal", "min inlet temperature", start_up_name("normal"),
                                                        start_up_name("min inlet temperature"), SWEEP_CONDITION]


def test_without_ranges_there_is_no_sweep(session, engineer, case_data):
    case = service.create_case(session, engineer, case_data(inlet_pressure_max_pa=None, inlet_temperature_min_k=None))
    result = service.compute_case(session, engineer, case.id)
    assert [e["condition"] for e in result.results] == ["normal", start_up_name("normal")]
    assert "sweep" not in result.screening["answers"]


def test_outcome_follows_the_limits(session, engineer, case_data):
    """A warm limit fails the case and brings the answers; a cold one passes it (fail closed both ways)."""
    hot = service.create_case(session, engineer, case_data(tag="HOT", mdmt_k=T0 + 20.0, material_id=None))
    cold = service.create_case(session, engineer, case_data(tag="COLD", mdmt_k=T0 - 150.0, material_id=None))
    failing = service.compute_case(session, engineer, hot.id)
    passing = service.compute_case(session, engineer, cold.id)
    assert failing.outcome == "fail" and passing.outcome == "pass"
    preheat = failing.screening["answers"]["preheat"]["governing"]
    assert preheat["needed"] and preheat["t_in_required_k"] > preheat["t_in_k"]
    # the target: the limit plus the total margin (the 5 K entered plus the PR-SRK spread)
    limits = failing.screening["limits"]
    assert limits["total_margin_k"] == pytest.approx(5.0 + limits["model_spread_k"])
    assert failing.screening["answers"]["outlet_pressure_limit"]["target_k"] == pytest.approx(
        T0 + 20.0 + limits["total_margin_k"])
    assert passing.screening["answers"].get("preheat") is None


def test_result_stores_model_basis_and_versions(session, engineer, case):
    result = service.compute_case(session, engineer, case.id)
    assert result.eos == "PR"
    assert result.kij_basis.startswith("jtcheck PR table")
    assert result.component_data_version == COMPONENT_DATA_VERSION
    assert result.kij_data_version == KIJ_DATA_VERSION
    assert result.software_version == jtcheck.__version__
    assert result.case_version == case.version
    assert result.computed_at.tzinfo is not None


def test_stored_inputs_reproduce_the_result(session_factory, engineer, case):
    with session_factory() as s:
        result_id = service.compute_case(s, s.merge(engineer, load=False), case.id).id
    with session_factory() as s:     # read back from the database, as a later reviewer would
        stored = s.get(CaseResult, result_id)
        inputs = stored.inputs
        fluid = Fluid([tuple(p) for p in inputs["fluid"]["composition"]], eos=inputs["fluid"]["eos"],
                      kij=inputs["fluid"]["kij"])
        assert fluid.basis() == inputs["basis"]
        for cond in inputs["conditions"]:
            entry = stored.condition(cond["condition"])
            again = letdown(fluid, p_in=cond["p_in_pa"], t_in=cond["t_in_k"], p_out=cond["p_out_pa"])
            assert again.t_out == entry["t_out"]
        assert inputs["case_values"]["margin_k"] == 5.0
        assert inputs["material"]["min_metal_temperature_k"] == 244.15


def test_compute_is_audited_and_keeps_earlier_results(session, users, case):
    first = service.compute_case(session, users[Role.CHECKER], case.id)
    second = service.compute_case(session, users[Role.APPROVER], case.id)
    assert [r.id for r in case.results] == [first.id, second.id]
    assert case.latest_result.id == second.id
    trail = service.audit_trail(session, users[Role.CHECKER], "case", case.id)
    assert [e.action for e in trail] == ["create", "compute", "compute"]
    assert trail[-1].user_id == users[Role.APPROVER].id


def test_result_is_current_until_the_case_changes(session, engineer, case):
    result = service.compute_case(session, engineer, case.id)
    assert service.result_is_current(case, result)
    service.update_case(session, engineer, case.id, {"outlet_pressure_pa": 12 * BAR})
    assert not service.result_is_current(case, result)


def _not_converged(p_in, t_in, p_out):
    return LetdownResult(p_in=p_in, t_in=t_in, p_out=p_out, t_out=math.nan, dt=math.nan, vapor_fraction=math.nan,
                         phase="unknown", inlet_phase="vapour", inlet_vapor_fraction=1.0, h=-1000.0, x_out=(),
                         y_out=(), converged=False, message="outlet flash failed: test (residual 1 J/mol)",
                         warnings=(), basis={}, component_ids=())


def test_a_condition_that_does_not_converge_is_stored_as_such(session, engineer, case, monkeypatch):
    def fake_letdown(fluid, p_in, t_in, p_out):
        if t_in == case.inlet_temperature_min_k:
            return _not_converged(p_in, t_in, p_out)
        return letdown(fluid, p_in=p_in, t_in=t_in, p_out=p_out)

    monkeypatch.setattr(screen_module, "letdown", fake_letdown)
    result = service.compute_case(session, engineer, case.id)
    session.expire_all()
    result = session.get(CaseResult, result.id)
    assert result.converged is False
    assert result.outcome == "not screened"     # never pass with a condition missing
    failed = [e for e in result.results if not e["converged"]]
    assert [e["condition"] for e in failed] == ["min inlet temperature", "min temperature + max pressure",
                                                start_up_name("min inlet temperature"),
                                                start_up_name("min temperature + max pressure"), SWEEP_CONDITION]
    assert all(e["t_out"] is None and e["dt"] is None for e in failed)
    assert "not converged" in result.message and "min inlet temperature" in result.message
    converged = [e["t_screen_k"] for e in result.results if e["converged"]]
    assert result.t_out_min_k == min(converged)


def test_no_condition_converging_leaves_no_temperature(session, engineer, case, monkeypatch):
    monkeypatch.setattr(screen_module, "letdown",
                        lambda fluid, p_in, t_in, p_out: _not_converged(p_in, t_in, p_out))
    result = service.compute_case(session, engineer, case.id)
    assert result.converged is False
    assert result.t_out_min_k is None
    assert result.outcome == "not screened"


def test_a_refused_condition_is_stored_as_not_converged_with_the_reason(session, engineer, case, monkeypatch):
    def refusing(fluid, p_in, t_in, p_out):
        raise InputError("t_in", "inlet temperature must be below 2000 K")

    monkeypatch.setattr(screen_module, "letdown", refusing)
    result = service.compute_case(session, engineer, case.id)
    assert not result.converged
    assert all(e["t_out"] is None and "2000 K" in e["message"] for e in result.results)


def test_an_unexpected_error_stores_nothing(session, engineer, case, monkeypatch):
    results, audit = count(session, CaseResult), count(session, AuditEntry)

    def broken(fluid, p_in, t_in, p_out):
        raise RuntimeError("boom")

    monkeypatch.setattr(screen_module, "letdown", broken)
    with pytest.raises(RuntimeError):
        service.compute_case(session, engineer, case.id)
    assert (count(session, CaseResult), count(session, AuditEntry)) == (results, audit)
    assert session.get(Case, case.id).version == 1
