"""``jtcheck record``: signed calculation records (``record verify``)."""
from __future__ import annotations

import json
import sys
from pathlib import Path

import click

from jtcheck.cli.exits import EXIT_RECORD_INVALID, fail_input
from jtcheck.cli.register import existing_register_url, instance_dir, reading_session
from jtcheck.errors import InputError


@click.group("record")
def record_group():
    """Signed calculation records."""


def trust_roots(trust_root: tuple[str, ...]) -> list[bytes]:
    """The CA certificates given with --trust-root, else this instance's CA (bad input when it has none)."""
    from jtcheck.reports.pki import pki_from_env

    roots = [Path(p).read_bytes() for p in trust_root]
    if not roots:
        pki = pki_from_env(instance_dir())
        if not pki.has_ca():
            fail_input(InputError("trust-root", "this instance has no CA yet; give --trust-root CA.pem"))
        roots = [pki.trust_root_pem()]
    return roots


def report_json(report) -> str:
    """The verification report as JSON."""
    sigs = report.signatures
    return json.dumps({
        "ok": report.ok, "file_sha256": sigs.file_sha256,
        "signatures": [{"field": c.field, "signer": c.signer_name, "email": c.signer_email, "role": c.role,
                        "signed_at": c.signed_at.isoformat() if c.signed_at else None,
                        "timestamp_at": c.timestamp_at.isoformat() if c.timestamp_at else None,
                        "intact": c.intact, "trusted": c.trusted, "covers_whole_file": c.covers_whole_file,
                        "modified_after": c.modified_after, "problems": list(c.problems)}
                       for c in sigs.signatures],
        "register": {"consulted": report.register.consulted, "found": report.register.found,
                     "record_number": report.register.record_number,
                     "revision": report.register.revision, "status": report.register.status,
                     "message": report.register.message},
        "problems": [*sigs.problems, *report.problems]}, indent=2)


def print_report(file: str, report) -> None:
    """The verification report as text: each signature with its problems, the register, the verdict."""
    sigs = report.signatures
    click.echo(f"file       {file}  (SHA-256 {sigs.file_sha256})")
    if not sigs.signatures:
        click.echo("signatures none")
    for k, c in enumerate(sigs.signatures, 1):
        when = c.signed_at.strftime("%Y-%m-%d %H:%M:%S UTC") if c.signed_at else "time unknown"
        if not c.intact:   # the signed bytes changed: the content is what failed, whoever signed it
            flags = "CONTENT CHANGED: the signed content was altered after signing (the signature no longer matches)"
        else:
            flags = ", ".join(["intact", ("trusted" if c.trusted else "NOT TRUSTED (the signer's certificate does "
                                                                       "not chain to a trusted root)"),
                               ("changed afterwards" if c.modified_after else "not changed afterwards")])
        click.echo(f"signature {k}: {c.role or c.field} - {c.signer_name} <{c.signer_email}>, {when}: {flags}")
        for p in c.problems:
            click.echo(f"    {p}")
    click.echo(f"register   {report.register.message}")
    shown = {p for c in sigs.signatures for p in c.problems} | {report.register.message}
    for p in sigs.problems:   # document-level problems (those of one signature are printed under it)
        if not any(p.endswith(q) for q in shown):
            click.echo(f"problem    {p}")
    if not report.ok:
        click.echo("NOT VALID")
    elif report.register.consulted:
        click.echo("VALID: every signature intact and trusted, unchanged, and the stored record")
    else:
        click.echo("VALID SIGNATURES: every signature intact and trusted, unchanged (no register was consulted)")


@record_group.command("verify")
@click.argument("file", type=click.Path(exists=True, dir_okay=False))
@click.option("--trust-root", "trust_root", type=click.Path(exists=True, dir_okay=False), multiple=True,
              help="CA certificate (PEM or DER) to trust; default: this instance's CA (instance/pki).")
@click.option("--json", "as_json", is_flag=True, help="Print the report as JSON.")
def record_verify(file, trust_root, as_json):
    """Check every signature of a record (who, role, when, intact, trusted, changed afterwards) and that the file
    is the record stored in the register.  Exit 0 only when all of it holds; 6 otherwise.

    The file is enough: without a register (no DATABASE_URL and no register in the instance folder) the
    signatures alone are checked and the report says so; a register is never created by this command."""
    from jtcheck.reports.issue import verify_against_register

    pdf = Path(file).read_bytes()
    roots = trust_roots(trust_root)
    url, why_none = existing_register_url()
    if url is None:
        report = verify_against_register(None, pdf, roots, no_register=why_none)
    else:
        with reading_session(url) as session:
            report = verify_against_register(session, pdf, roots)
    if as_json:
        click.echo(report_json(report))
    else:
        print_report(file, report)
    sys.exit(0 if report.ok else EXIT_RECORD_INVALID)
