"""Engineering calculations on letdowns: valves, chokes, pressure-reduction stations, relief valves,
the flare header downstream of them; the inverse solves (preheat, outlet-pressure limit), the operating
sweep and the settle-out after a shutdown."""
from jtcheck.letdown.flare_header import (
    HeaderResult,
    HeaderSection,
    HeaderSectionResult,
    ReliefSource,
    screen_header,
    sections_from_drops,
)
from jtcheck.letdown.outlet_limit import OutletPressureLimit, outlet_pressure_limit
from jtcheck.letdown.preheat import PreheatResult, required_preheat
from jtcheck.letdown.relief import NozzleFlow, ReliefValveResult, nozzle_flow, relief_valve_case
from jtcheck.letdown.settle_out import SettleOutResult, settle_out
from jtcheck.letdown.sweep import SweepResult, operating_sweep
from jtcheck.letdown.throttle import LetdownBatch, LetdownResult, letdown

__all__ = ["HeaderResult", "HeaderSection", "HeaderSectionResult", "LetdownBatch", "LetdownResult", "NozzleFlow",
           "OutletPressureLimit", "PreheatResult", "ReliefSource", "ReliefValveResult", "SettleOutResult",
           "SweepResult", "letdown", "nozzle_flow", "operating_sweep", "outlet_pressure_limit", "relief_valve_case",
           "required_preheat", "screen_header", "sections_from_drops", "settle_out"]
