"""The typical materials and the invented Kestrel Ridge demo."""
from __future__ import annotations

from sqlalchemy import select

from jtcheck.records import service
from jtcheck.records.demo import CASES, SITE_NAME, load_demo
from jtcheck.records.models import Case, CaseKind, FluidRecord, Material, PlantUnit, Role, Site

from .register_helpers import count


def test_seed_materials_adds_typical_values_with_the_caution_once(session):
    service.seed_materials(session)
    seeded = session.scalars(select(Material).where(Material.seeded.is_(True))).all()
    assert len(seeded) == len(service.SEED_MATERIALS) == 5
    for m in seeded:
        assert m.seeded and m.editable
        assert "verify against the applicable code edition" in m.notes
        assert "common practice" in m.source.lower()
    names = {m.name: m.min_metal_temperature_k for m in seeded}
    assert names["Carbon steel, not impact tested (typical -29 degC)"] == 244.15
    assert names["Austenitic stainless steel 304/316 (typical -196 degC)"] == 77.15
    assert service.seed_materials(session) == []


def test_demo_loads_the_invented_terminal_with_computed_cases(session, users):
    site = load_demo(session)
    assert site.name == SITE_NAME
    assert {u.name for u in site.units} == {"Inlet separation", "Town main PRS", "Fuel gas", "LPG storage",
                                            "CO2 export"}
    cases = service.list_cases(session, users[Role.CHECKER], site_id=site.id)
    assert len(cases) == len(CASES) == 7
    assert {c.kind for c in cases} == {CaseKind.CONTROL_VALVE, CaseKind.RELIEF_VALVE, CaseKind.BLOWDOWN_VALVE,
                                       CaseKind.VESSEL_DEPRESSURING}
    assert "PCV-1101" in {c.tag for c in cases}
    latest = service.latest_results(session, [c.id for c in cases])
    for case in cases:
        result = latest[case.id]
        assert result.converged, (case.tag, result.message)
        assert result.t_out_min_k is not None and result.t_out_min_k < case.inlet_temperature_k
        assert result.outcome in ("pass", "margin eroded", "fail"), (case.tag, result.outcome)
        assert case.mdmt_source.startswith("material: ")
        assert "invented" in case.basis.lower()
        assert case.display_units["inlet_pressure"] == "barg"
    by_tag = {c.tag: latest[c.id] for c in cases}
    # the demo shows the screening's range: a relief valve with its nozzle and header, and dry ice at a CO2 vent
    assert by_tag["PSV-2101"].screening["answers"]["relief_valve"]["t_downstream_k"] is not None
    assert any(f["topic"] == "CO2 solids" for f in by_tag["BDV-5102"].screening["findings"])
    assert by_tag["BDV-5102"].outcome == "fail"
    # a vessel depressured in time: the target met, the blowdown valve outlet below the LTCS limit at the back
    # pressure (the outcome), the walls above it
    run = by_tag["BDV-2102"].screening["answers"]["depressuring"]
    assert run["converged"] and run["target_met"] is True
    assert run["paths"]["valve_outlet"]["outcome"] == "fail" and run["paths"]["wall_gas"]["outcome"] == "pass"
    assert by_tag["BDV-2102"].outcome == "fail"
    demo_fluids = session.scalars(select(FluidRecord).where(FluidRecord.name.like("Kestrel%"))).all()
    assert len(demo_fluids) == 5


def test_the_demo_fuel_gas_letdown_is_screened_on_gerg_2008_with_the_cubics_beside_it(session, users):
    site = load_demo(session)
    cases = service.list_cases(session, users[Role.CHECKER], site_id=site.id)
    case = next(c for c in cases if c.tag == "PCV-3101")
    assert case.fluid.eos == "GERG2008"
    result = service.latest_results(session, [case.id])[case.id]
    screening = result.screening
    assert screening["models"] == ["GERG2008", "PR", "SRK"]
    assert all(c["governing_model"] == "GERG2008" for c in screening["conditions"])
    assert result.outcome == "fail"   # the invented case is colder than carbon steel's -29 degC on every model
    assert result.inputs["basis"]["eos_version"] == "GERG-2008, Kunz and Wagner 2012"
    assert "90-450 K" in result.inputs["basis"]["eos_range"]


def test_demo_is_loaded_only_once(session):
    load_demo(session)
    before = [count(session, m) for m in (Site, PlantUnit, FluidRecord, Case, Material)]
    load_demo(session)
    assert [count(session, m) for m in (Site, PlantUnit, FluidRecord, Case, Material)] == before


def test_demo_owner_cannot_sign_in(session):
    site = load_demo(session)
    case = session.scalars(select(Case).join(PlantUnit).where(PlantUnit.site_id == site.id)).first()
    assert case.created_by.active is False
    assert case.created_by.email.endswith(".invalid")
