"""``jtcheck screen`` and ``jtcheck screen-template``: batch screening of a letdown list (CSV or XLSX;
layout in :mod:`jtcheck.batch.layout`)."""
from __future__ import annotations

import os
import sys
from pathlib import Path

import click

from jtcheck.cli.exits import EXIT_FAIL, EXIT_INPUT, EXIT_MARGIN_ERODED, EXIT_NOT_SCREENED, fail_input
from jtcheck.cli.register import instance_dir, register_session
from jtcheck.errors import InputError
from jtcheck.notices import CAUTION, DEMO_NOTICE
from jtcheck.units import temperature_from_k

#: How many reader warnings ``jtcheck screen`` prints before summing up the rest.
SCREEN_MAX_WARNINGS = 20
#: Command-line option -> the layout column it fills where a row's cell is empty.
_SCREEN_DEFAULTS = {"--limit": "cold_limit", "--mdmt": "mdmt", "--margin": "margin"}


def _batch_fluid_library():
    """(fluid library of the case register or None, a line saying which).

    The register is DATABASE_URL, else the SQLite file in ./instance (JTCHECK_INSTANCE); a SQLite file that
    does not exist is not created just to read it.
    """
    from jtcheck.batch.reader import register_fluid_library
    from jtcheck.records.db import SQLITE_FILENAME

    if not os.environ.get("DATABASE_URL", "").strip():
        sqlite = instance_dir() / SQLITE_FILENAME
        if not sqlite.is_file():
            return None, (f"fluids    no case register found (DATABASE_URL unset, no {sqlite.as_posix()}): only "
                          "inline compositions are read")
    try:
        with register_session() as session:
            library = register_fluid_library(session)
    except Exception as exc:  # noqa: BLE001 - a register that cannot be read only loses the fluid names
        return None, f"fluids    the case register could not be read ({exc}): only inline compositions are read"
    return library, f"fluids    {len(library)} named fluids from the case register, or inline compositions"


def _screen_out_path(file: str, out: str | None) -> Path:
    src = Path(file)
    path = Path(out) if out else src.with_name(f"{src.stem}-results{src.suffix.lower()}")
    if path.suffix.lower() not in (".csv", ".xlsx"):
        raise InputError("out", f"{str(path)!r}: write the results to a .csv or .xlsx file")
    if path.resolve() == src.resolve():
        raise InputError("out", "the results file would overwrite the input file; give another --out")
    if not path.resolve().parent.is_dir():
        raise InputError("out", f"the folder of {str(path)!r} does not exist")
    return path


def _progress_wanted(no_progress: bool) -> bool:
    """A progress bar only on a terminal, and not with --no-progress."""
    return not no_progress and sys.stderr.isatty()


def _screen_exit_code(counts: dict[str, int], bad_rows: int) -> int:
    if counts.get("fail"):
        return EXIT_FAIL
    if counts.get("margin eroded"):
        return EXIT_MARGIN_ERODED
    if counts.get("not screened") or bad_rows:
        return EXIT_NOT_SCREENED
    return 0


def _read_letdown_list(file: str, limit: str | None, mdmt: str | None, margin: str | None, keep_going: bool):
    """The file's rows read into cases (bad input names the command-line option where a default was at fault);
    prints which file, which fluid library and the reader's warnings."""
    from jtcheck.batch.reader import read_cases

    library, library_note = _batch_fluid_library()
    defaults = {col: text for opt, col in _SCREEN_DEFAULTS.items()
                if (text := {"--limit": limit, "--mdmt": mdmt, "--margin": margin}[opt]) is not None}
    try:
        result = read_cases(file, fluid_library=library, keep_going=keep_going, defaults=defaults)
    except InputError as err:
        option = {col: opt for opt, col in _SCREEN_DEFAULTS.items()}.get(err.field)
        fail_input(InputError(option, err.message) if option else err)
    click.echo(f"file      {file}: {result.n_rows} case rows")
    click.echo(library_note)
    for w in result.warnings[:SCREEN_MAX_WARNINGS]:
        click.echo(f"warning: {w}")
    if len(result.warnings) > SCREEN_MAX_WARNINGS:
        click.echo(f"warning: ... and {len(result.warnings) - SCREEN_MAX_WARNINGS} more warnings")
    return result


def _handle_bad_rows(result, out_path: Path, keep_going: bool) -> Path | None:
    """Report every problem of the file on standard error.  Returns the file the bad rows were written to (with
    --keep-going and good rows to screen), or None when every row is good; ends the command with EXIT_INPUT
    when nothing can be screened."""
    from jtcheck.batch.reader import bad_rows_file

    if not result.errors:
        return None
    for e in result.errors:
        click.echo(f"error: {e}", err=True)
    n_bad = len(result.bad_rows)
    click.echo(f"{len(result.errors)} problems in {n_bad} {'row' if n_bad == 1 else 'rows'} "
               "(rows numbered as in the spreadsheet: the header is row 1)", err=True)
    bad_path = out_path.with_name(f"{out_path.stem}-bad-rows.csv")
    if not keep_going or not result.cases:
        why = "no good rows to screen" if keep_going else "fix them, or use --keep-going to screen the good rows"
        click.echo(f"nothing was screened: {why}", err=True)
        if keep_going and result.bad_rows:
            bad_path.write_bytes(bad_rows_file(result))
            click.echo(f"bad rows written to {bad_path} (with a 'problems' column); fix and screen them again",
                       err=True)
        sys.exit(EXIT_INPUT)
    bad_path.write_bytes(bad_rows_file(result))
    return bad_path


def _screen_with_progress(cases, single_model: bool, no_progress: bool):
    """The batch screening of ``cases``, with a progress bar on standard error (on a terminal only)."""
    from tqdm import tqdm

    from jtcheck.screening import batch as batch_screening

    bar = tqdm(total=len(cases), disable=not _progress_wanted(no_progress), file=sys.stderr, unit="case",
               desc="screening", leave=False)

    def progress(done: int, total: int) -> None:
        bar.total = total
        bar.update(done - bar.n)

    try:
        return batch_screening.screen_batch(cases, compare_models=not single_model, progress=progress)
    finally:
        bar.close()


def _print_summary(screening, result, counts: dict[str, int], single_model: bool, out_path: Path,
                   bad_path: Path | None) -> None:
    """Counts by outcome, the ten coldest cases, where the results went, and the caution."""
    t_unit = result.units.get("inlet_temperature", "degC")
    click.echo(f"screened  {len(screening.rows)} cases in {screening.seconds:.1f} s "
               f"({screening.n_scalar} screened one by one)"
               + ("" if single_model else "; PR and SRK side by side, the colder governs"))
    for note in screening.notes:
        click.echo(f"note: {note}")
    click.echo(f"\n{'outcome':20s}{'cases':>8s}")
    for outcome, n in counts.items():
        click.echo(f"{outcome:20s}{n:>8d}")
    if bad_path is not None:
        click.echo(f"{'bad rows (not read)':20s}{len(result.bad_rows):>8d}")
    coldest = screening.coldest(10)
    if coldest:
        width = max([len("tag")] + [len(r.tag) for r in coldest]) + 2
        click.echo(f"\ncoldest cases\n{'row':>5s}  {'tag':{width}s}{'screened outlet':>18s}  outcome")
        for r in coldest:
            t = f"{temperature_from_k(r.t_screen_k, t_unit):.2f} {t_unit}" if r.t_screen_k is not None else "-"
            click.echo(f"{r.row:>5d}  {r.tag:{width}s}{t:>18s}  {r.outcome}")
    click.echo(f"\nresults written to {out_path}")
    if bad_path is not None:
        click.echo(f"bad rows written to {bad_path} ({len(result.bad_rows)} rows, with a 'problems' column): fix "
                   "them and screen that file; they count as not screened here")
    click.echo(f"\n{CAUTION}")


def _run_screen(file: str, limit: str | None, mdmt: str | None, margin: str | None, out: str | None,
                keep_going: bool, single_model: bool, no_progress: bool) -> int:
    from jtcheck.batch.writer import summary_counts, write_results

    try:
        out_path = _screen_out_path(file, out)
    except InputError as err:
        fail_input(err)
    result = _read_letdown_list(file, limit, mdmt, margin, keep_going)
    bad_path = _handle_bad_rows(result, out_path, keep_going)
    screening = _screen_with_progress(result.cases, single_model, no_progress)
    try:
        write_results(screening, result, out_path)
    except OSError as exc:
        fail_input(InputError("out", f"cannot write {str(out_path)!r}: {exc.strerror or exc}"))
    counts = summary_counts(screening)
    _print_summary(screening, result, counts, single_model, out_path, bad_path)
    return _screen_exit_code(counts, len(result.bad_rows) if bad_path is not None else 0)


@click.command("screen")
@click.argument("file", type=click.Path(exists=True, dir_okay=False))
@click.option("--limit", default=None, help='Cold limit for rows whose "cold limit" cell is empty, e.g. "-29 degC".')
@click.option("--mdmt", default=None, help='MDMT for rows whose "MDMT" cell is empty, e.g. "-46 degC".')
@click.option("--margin", default=None, help='Margin for rows whose "margin" cell is empty, e.g. "5 K" (else 0 K).')
@click.option("--out", default=None, type=click.Path(dir_okay=False),
              help="Results file, .xlsx or .csv (default: FILE's name with -results, beside it).")
@click.option("--keep-going", is_flag=True,
              help="Screen the good rows even when some rows are bad; the bad ones go to <out>-bad-rows.csv.")
@click.option("--single-model", is_flag=True, help="Use only each row's EOS (no PR/SRK comparison).")
@click.option("--no-progress", is_flag=True, help="No progress bar (it is shown only on a terminal anyway).")
def screen_cmd(file, limit, mdmt, margin, out, keep_going, single_model, no_progress):
    """Screen a letdown list (FILE.csv or FILE.xlsx, one row per case; see `jtcheck screen-template`).

    A row's own cells win over --limit, --mdmt and --margin.  Fluid names are looked up in the case register
    (DATABASE_URL or ./instance) when there is one; inline compositions ("methane=0.9,ethane=0.1") always work.

    Exit codes: 0 every case passes, 2 bad file (every problem listed by row and column), 3 a case not screened
    (or, with --keep-going, bad rows), 4 a margin eroded, 5 a fail.
    """
    sys.exit(_run_screen(file, limit, mdmt, margin, out, keep_going, single_model, no_progress))


@click.command("screen-template")
@click.argument("file", type=click.Path(dir_okay=False))
@click.option("--force", is_flag=True, help="Overwrite FILE if it exists.")
def screen_template_cmd(file, force):
    """Write a letdown list to start from (FILE.csv or FILE.xlsx): the layout's columns and the invented
    Kestrel Ridge demo cases."""
    from jtcheck.batch.layout import COLUMNS
    from jtcheck.batch.template import template_rows, write_template

    path = Path(file)
    if path.suffix.lower() not in (".csv", ".xlsx"):
        fail_input(InputError("file", f"{file!r}: give a .csv or .xlsx file name"))
    if path.exists() and not force:
        fail_input(InputError("file", f"{file!r} exists; give another name or --force to overwrite it"))
    path.write_bytes(write_template(path.suffix.lower().lstrip(".")))
    click.echo(f"wrote {file}: {len(COLUMNS)} columns and {len(template_rows())} demo rows")
    click.echo(DEMO_NOTICE)
    click.echo(f"screen it with: jtcheck screen {file}")
