"""Speed of issuing one calculation record: render the PDF, add the signature fields, sign three times, verify.

Run:  .venv/bin/python benchmarks/bench_record.py [--repeat 5]

Builds a throwaway SQLite register with the invented demo site, takes the snapshot of demo case PSV-2101
(the largest demo record: relief valve, sweep, findings) and times each step several times in one
process.  Prints a table.  Target (issue 5): rendering and signing one record under 2 s on this machine
(warm process; the first record of a process also loads fonts and data, shown separately).
There is no reference library for this step; the flash benchmark (bench_flash.py) times thermo.
"""
from __future__ import annotations

import argparse
import platform
import statistics
import tempfile
import time
from importlib.metadata import version
from pathlib import Path


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=5)
    args = parser.parse_args()

    from sqlalchemy import select

    from jtcheck.records.db import make_engine, make_session_factory, upgrade_database
    from jtcheck.records.demo import load_demo
    from jtcheck.records.models import Case
    from jtcheck.records.snapshot import case_snapshot
    from jtcheck.reports.pki import InstancePKI
    from jtcheck.reports.record import render_record
    from jtcheck.reports.signing import add_signature_fields, sign_record
    from jtcheck.reports.verify import verify_record

    folder = Path(tempfile.mkdtemp(prefix="jtcheck-bench-"))
    url = f"sqlite:///{folder / 'bench.sqlite3'}"
    upgrade_database(url)
    session = make_session_factory(make_engine(url))()
    load_demo(session)
    case = session.scalar(select(Case).where(Case.tag == "PSV-2101"))
    snapshot = case_snapshot(case, case.latest_result, "A", prepared_by={"name": "Bench", "email": "b@x.invalid"})
    pki = InstancePKI(folder, b"bench passphrase")
    users = {"preparer": (1, "P. Bench", "p@x.invalid"), "checker": (2, "C. Bench", "c@x.invalid"),
             "approver": (3, "A. Bench", "a@x.invalid")}
    handles = {role: pki.signer_for(uid, name, email, role) for role, (uid, name, email) in users.items()}

    def issue():
        t = {}
        s = time.perf_counter()
        rendered = render_record(snapshot, "A4")
        t["render"] = time.perf_counter() - s
        s = time.perf_counter()
        pdf = add_signature_fields(rendered.pdf, {r: (b.page_index, b.x1, b.y1, b.x2, b.y2)
                                                  for r, b in rendered.signature_boxes.items()})
        t["fields"] = time.perf_counter() - s
        s = time.perf_counter()
        for role, (_, name, _) in users.items():
            pdf = sign_record(pdf, role, handles[role], role_text=role, signer_name=name, stamp_lines=[name])
        t["3 signatures"] = time.perf_counter() - s
        t["issue total"] = t["render"] + t["fields"] + t["3 signatures"]
        s = time.perf_counter()
        report = verify_record(pdf, [pki.trust_root_pem()])
        t["verify"] = time.perf_counter() - s
        assert report.ok, report.problems
        return t, rendered.page_count, len(pdf)

    first, pages, size = issue()
    runs = [issue()[0] for _ in range(args.repeat)]
    print(f"jtcheck record issuing | weasyprint {version('weasyprint')} | pyhanko {version('pyhanko')} | "
          f"Python {platform.python_version()} | {platform.machine()}")
    print(f"record: demo PSV-2101, A4, {pages} pages, {size / 1024:.0f} KiB signed; {args.repeat} warm runs\n")
    print(f"{'step':16s}{'first [s]':>11s}{'warm median [s]':>17s}{'warm max [s]':>14s}")
    for key in ("render", "fields", "3 signatures", "issue total", "verify"):
        vals = [r[key] for r in runs]
        print(f"{key:16s}{first[key]:11.3f}{statistics.median(vals):17.3f}{max(vals):14.3f}")
    worst = max(r["issue total"] for r in runs)
    print(f"\ntarget: render + sign under 2 s (warm): {'MET' if worst < 2.0 else 'NOT MET'} (worst {worst:.2f} s)")


if __name__ == "__main__":
    main()
