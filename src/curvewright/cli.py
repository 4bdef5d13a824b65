"""The ``curvewright`` command: a thin layer over the core and io packages.

Exit codes (also in ``curvewright --help``):
  0  completed; every run accepted and its record intact (for ``check``: valid, the record intact)
  1  completed, but a run failed its acceptance profile or the run's record is not intact (its data
     changed outside Curvewright, its audit trail altered, a signature lost or not holding; ``check``
     reports the same problems and exits 1)
  2  input error: a file or an option could not be used (the message names the row and field);
     with ``--standards``/``--samples`` also when a sample reading could not be read: the other
     samples are still quantified and reported, the unreadable cells are listed on stderr, and
     ``--allow-unreadable`` accepts them once checked (the exit code then follows the verdict)
  3  internal error: a fault in Curvewright itself; please report it

With tables and no ``--model``/``--weighting``, each analyte gets the model the comparison
recommends (:func:`curvewright.core.comparison.compare`, with the run's profile and level tolerance,
on the standards in the fit); the choice is recorded as recommended, with the reasons. Given both
options, the choice is recorded as given on the command line.
"""

from __future__ import annotations

import argparse
import json
import math
import os
import sys
import traceback
from dataclasses import field, replace
from functools import lru_cache
from pathlib import Path
from typing import Any, Iterator, Mapping, Sequence

from . import CAUTION, __version__
from .core.level_text import percent_label
from .core.values import frozen_value
from .core.notation import computed, computed_within, entered, entered_span, figures, fixed, machine, p_equals, p_text

EXIT_ACCEPTED, EXIT_REJECTED, EXIT_INPUT, EXIT_INTERNAL = 0, 1, 2, 3

SIGNING_EPILOG = """\
what a signature proves:
  A signature records who signed (full name, ID, login), in which role, meaning what, when, and the
  SHA-256 of the data and of the audit trail at that moment; the audit trail records it too. An
  approval locks the run until it is withdrawn with a reason. With --key (a laboratory key made by
  'curvewright keys new'), the signature is keyed: 'curvewright check --lab-key PUBLIC.pem' then shows
  that nothing it signed was changed, even by someone who rebuilt the whole audit trail. Without a key,
  the chain detects accidental or casual edits of the file, not a deliberate rebuild.

the verdict and the people:
  A run whose verdict is NOT ACCEPTED is approved only with --approve-not-accepted REASON: the reason is
  recorded in the audit trail and printed beside the approval in the record. One person may sign in
  several roles (laboratories differ); the command warns, and the trail and the record say so.

a record that is not intact:
  A run whose record 'curvewright check' finds not intact (a signature the audit trail records was
  removed from the file, the trail does not verify, a signature does not hold) is signed only with
  --despite-record-problems REASON: the problems and the reason are recorded in the audit trail, the
  reason is printed beside the signature, and 'check' and the record go on naming the problems.

examples:
  curvewright sign run.json --role analyst --analyst "Robin Example" --analyst-id QA-0042
  curvewright sign run.json --role approver --key lab-signing.key --meaning "released for the client report"
  curvewright withdraw-approval run.json --reason "re-integration of CAL4 requested by QA"
  curvewright keys new --private lab-signing.key --public lab-signing.pub
  curvewright check run.json --lab-key lab-signing.pub
"""

EPILOG = f"""\
examples:
  curvewright quantify sample_runs/nitrate_water_linear.json
  curvewright quantify run.json --export results.xlsx --report record.pdf
  curvewright quantify run.json --model quadratic --weighting 1/x --json
  curvewright quantify --standards standards.csv --samples samples.csv --analyte lead \\
      --concentration-unit "µg/L" --export results.csv
  curvewright quantify --standards std.csv --samples smp.csv --analyte lead \\
      --map "response=Peak height" --decimal-mark , --thousands space
  curvewright quantify "incoming/*.json" --export out/ --report out/ --jobs 2
  curvewright compare run.json
  curvewright compare --standards standards.csv --analyte lead
  curvewright check run.json

tables (--standards, --samples):
  columns are found by their header (see README, "Table layout"); --map FIELD=HEADER names one
  (HEADER a header text or a column number; standards.FIELD or samples.FIELD for one table only).
  The decimal mark is decided from the whole table; --decimal-mark answers when it cannot be.
  Without --model and --weighting the recommended model is used and recorded as recommended;
  when no candidate is acceptable nothing is quantified (exit 2): give --model and --weighting.
  An empty sample response, or one that is not a number, is reported for that sample only.

exit codes:
  0  completed; every run accepted and its record intact (check: valid, the record intact)
  1  completed, but a run failed its acceptance profile or the run's record is not intact
     (its data changed outside Curvewright, its audit trail altered, a signature lost or not
     holding: the problems check reports, and check exits 1); compare: for an analyte no
     candidate is acceptable, so no model is recommended (the evidence says why), or no
     comparison could be made at all (too few standards or levels for any candidate: the
     reason is printed in its place)
  2  input error (the message names the file, row and field); with tables also when sample
     readings could not be read: the rest is still quantified and reported, the cells are listed,
     and --allow-unreadable accepts them
  3  internal error in Curvewright

{CAUTION}
"""


HELP_COLUMNS = 80
"""The help is laid out for a console this wide, whatever the terminal (as argparse does when the
output is not a terminal), so that it is one text: the one :mod:`curvewright.cli_help` keeps."""


class CommandParser(argparse.ArgumentParser):
    """An argument parser whose help and usage are laid out for :data:`HELP_COLUMNS` columns; its
    subcommands' parsers are of this class too."""

    def _get_formatter(self) -> argparse.HelpFormatter:
        return self.formatter_class(prog=self.prog, width=HELP_COLUMNS - 2)  # argparse keeps 2 columns free


def build_parser(only: str | None = None) -> argparse.ArgumentParser:
    """The command parser; with ``only`` (a command's name), with that command's parser alone, which is
    all that parsing its arguments needs (the help of every command is answered without a parser:
    :mod:`curvewright.cli_help`)."""
    from .core.model_kinds import Model
    from .core.weighting_kinds import Weighting

    parser = CommandParser(
        prog="curvewright",
        description="Calibration curves for testing laboratories: fit, diagnose, quantify and report. "
        "Without a command, opens the desktop app: curvewright [RUN.json | --demo [NAME]].",
        epilog=EPILOG,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    parser.add_argument("--version", action="version", version=f"curvewright {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")

    if only in (None, "quantify"):
        q = sub.add_parser("quantify", help="fit, quantify every sample, and optionally export and report",
                           epilog=EPILOG, formatter_class=argparse.RawDescriptionHelpFormatter)
        q.add_argument("runs", nargs="*", metavar="RUN", help="run documents, folders of them, or glob patterns")
        q.add_argument("--standards", metavar="FILE", help="standards table (CSV or XLSX) instead of a run document")
        q.add_argument("--samples", metavar="FILE", help="samples table (CSV or XLSX), with --standards")
        q.add_argument("--analyte", action="append", metavar="NAME",
                       help="analyte to process (repeatable; default all); with --standards, the analyte's name")
        _table_options(q)
        q.add_argument("--samples-sheet", metavar="SHEET", help="sheet of an XLSX samples table (instead of --sheet)")
        q.add_argument("--allow-unreadable", action="store_true",
                       help="with --samples: accept sample readings that could not be read (still listed); "
                            "otherwise the exit code is 2")
        q.add_argument("--model", choices=tuple(m.value for m in Model),
                       help="override the run's model (with tables: give --weighting too)")
        q.add_argument("--weighting", choices=tuple(w.value for w in Weighting),
                       help="override the weighting (with tables: give --model too)")
        q.add_argument("--profile", help="acceptance profile id or file (default: the run's)")
        q.add_argument("--level", type=float, help="confidence level of the intervals, e.g. 0.95 (default: the run's)")
        q.add_argument("--export", metavar="PATH", help="results workbook (.xlsx) or samples table (.csv); a folder for many runs")
        q.add_argument("--export-format", choices=("xlsx", "csv"), default="xlsx", help="format when --export is a folder")
        q.add_argument("--csv-delimiter", choices=(",", ";", "tab"), default=",", help="CSV delimiter")
        q.add_argument("--csv-decimal", choices=(".", ","), default=".", help="CSV decimal mark")
        q.add_argument("--report", metavar="PATH", help="printable calibration record (.pdf); a folder for many runs")
        q.add_argument("--record", action="store_true", help="append the exports to the run document's audit trail and save it")
        q.add_argument("--json", action="store_true", help="print the results as JSON for scripts")
        q.add_argument("--jobs", type=int, default=1, help="processes for many runs (default 1)")
        q.add_argument("--method", metavar="METHOD.json", help="a validated method: it fixes the model, weighting, profile, "
                       "units, levels and rounding (the recommendation is then shown for information only)")
        q.add_argument("--reason", help="why the run departs from its method's model (with --model/--weighting)")
        _identity_options(q)

    if only in (None, "compare"):
        c = sub.add_parser("compare", help="the model-evidence table for each analyte",
                           epilog=EPILOG, formatter_class=argparse.RawDescriptionHelpFormatter)
        c.add_argument("runs", nargs="*", metavar="RUN", help="run documents, folders of them, or glob patterns")
        c.add_argument("--standards", metavar="FILE", help="a standards table (CSV or XLSX) instead of run documents")
        c.add_argument("--analyte", action="append", metavar="NAME",
                       help="analyte to show (repeatable); with --standards, the analyte's name")
        _table_options(c)
        c.add_argument("--json", action="store_true")

    if only in (None, "check"):
        k = sub.add_parser("check", help="validate run documents, their audit trails, data and signatures")
        k.add_argument("runs", nargs="+", metavar="RUN")
        k.add_argument("--lab-key", metavar="PUBLIC.pem", help="the laboratory's public signing key, to check keyed signatures against")

    if only in (None, "sign"):
        g = sub.add_parser("sign", help="sign a run document as analyst, reviewer or approver (approval locks it)",
                           epilog=SIGNING_EPILOG, formatter_class=argparse.RawDescriptionHelpFormatter)
        g.add_argument("run", metavar="RUN")
        g.add_argument("--role", required=True, choices=("analyst", "reviewer", "approver"))
        g.add_argument("--meaning", default="", help="what the signature means (default: the role's usual meaning)")
        g.add_argument("--key", metavar="PRIVATE.pem", help="the laboratory's signing key: the signature is keyed")
        g.add_argument("--approve-not-accepted", metavar="REASON", default="",
                       help="approve although the run's verdict is NOT ACCEPTED, for this reason (recorded and printed)")
        g.add_argument("--despite-record-problems", metavar="REASON", default="",
                       help="sign although the run's record is not intact (what 'check' reports), for this reason "
                            "(recorded with the problems, and printed)")
        _identity_options(g)

    if only in (None, "withdraw-approval"):
        w = sub.add_parser("withdraw-approval", help="withdraw the approval of a run document, with a reason (unlocks it)")
        w.add_argument("run", metavar="RUN")
        w.add_argument("--reason", required=True)
        _identity_options(w)

    if only in (None, "keys"):
        keys = sub.add_parser("keys", help="make a laboratory signing key pair")
        keys.add_argument("action", choices=("new",))
        keys.add_argument("--private", required=True, metavar="PRIVATE.pem", help="where the private key goes (only signers read it)")
        keys.add_argument("--public", required=True, metavar="PUBLIC.pem", help="where the public key goes (for checking)")

    if only in (None, "archive", "trend"):
        from . import cli_archive

        cli_archive.add_parsers(sub)
    return parser


def _identity_options(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("--analyst", metavar="NAME", default=None,
                        help="your full name for the audit trail (default: $CURVEWRIGHT_ANALYST)")
    parser.add_argument("--analyst-id", metavar="ID", default=None,
                        help="your laboratory ID (default: $CURVEWRIGHT_ANALYST_ID)")


def _table_options(parser: argparse.ArgumentParser) -> None:
    """How tables are read: shared by ``quantify`` and ``compare``."""
    parser.add_argument("--sheet", help="sheet of the XLSX tables, standards and samples alike (default: the active sheet, never a hidden one unless named)")
    parser.add_argument("--standards-sheet", metavar="SHEET", help="sheet of an XLSX standards table (instead of --sheet)")
    parser.add_argument("--map", action="append", metavar="FIELD=HEADER", default=[],
                        help="take FIELD from the column with this header text or 1-based number "
                             "(repeatable; standards.FIELD or samples.FIELD for one table only), "
                             "e.g. --map \"response=Peak height\"; samples.response given again reads each "
                             "further column as a replicate; skip=HEADER leaves a column out on purpose")
    parser.add_argument("--hidden-rows", choices=("include", "skip"), default=None,
                        help="hidden rows of an XLSX table that hold values: include them or skip them "
                             "(default: the import stops and names them)")
    parser.add_argument("--decimal-mark", choices=(".", ","), metavar="MARK",
                        help="decimal mark of the tables, . or , (default: decided from the values)")
    parser.add_argument("--thousands", choices=(",", ".", "space", "'"), metavar="SEP",
                        help="thousands separator of the tables: , or . or space or ' "
                             "(default: values with one are refused)")
    parser.add_argument("--instrument", default=None, metavar="NAME",
                        help="with --standards: the instrument the batch was measured on (for the record)")
    parser.add_argument("--concentration-unit", default=None, metavar="UNIT",
                        help="with --standards: unit of concentration (default: from the header, e.g. 'Concentration (µg/L)')")
    parser.add_argument("--response-unit", default=None, metavar="UNIT",
                        help="with --standards: unit of response (default: from the header)")


class InputError(Exception):
    """An option or file the user gave cannot be used (exit 2)."""


TABLE_SUFFIXES = (".csv", ".txt", ".tsv", ".xlsx", ".xlsm")
UNNAMED_ANALYTE = "unnamed analyte"
"""The analyte's name when tables have no analyte column and --analyte is not given."""
GIVEN = "given on the command line"


@frozen_value
class ModelChoice:
    """How an analyte's model and weighting were chosen for this calculation, and why.

    ``by`` is "recommended", "command line", "run document" or "not chosen"; ``reasons`` the
    recommendation's reasons, or the reason recorded with the choice.
    """

    by: str
    reasons: tuple[str, ...] = ()


COMMANDS = ("quantify", "compare", "check", "sign", "withdraw-approval", "keys", "archive", "trend")


def main(argv: Sequence[str] | None = None) -> int:
    argv = list(sys.argv[1:] if argv is None else argv)
    if not argv or argv[0] == "--demo" or (argv[0] not in COMMANDS and not argv[0].startswith("-")):
        return open_app(argv)
    _one_blas_thread()
    parser = build_parser(argv[0] if argv[0] in COMMANDS else None)
    args = parser.parse_args(argv)
    if args.command is None:
        parser.print_help()
        return EXIT_ACCEPTED
    try:
        if args.command in ("archive", "trend"):
            from . import cli_archive

            return {"archive": cli_archive.cmd_archive, "trend": cli_archive.cmd_trend}[args.command](args)
        return {"quantify": cmd_quantify, "compare": cmd_compare, "check": cmd_check, "sign": cmd_sign,
                "withdraw-approval": cmd_withdraw, "keys": cmd_keys}[args.command](args)
    except BrokenPipeError:
        return _output_closed()
    except InputError as exc:
        print(f"curvewright: {exc}", file=sys.stderr)
        return EXIT_INPUT
    except Exception as exc:  # noqa: BLE001 - the top of the program: classify every failure
        from .core.errors import CurvewrightError

        if isinstance(exc, (CurvewrightError, OSError)):
            print(f"curvewright: {exc}", file=sys.stderr)
            return EXIT_INPUT
        print(f"curvewright: internal error: {exc!r}; please report this with the input file.", file=sys.stderr)
        traceback.print_exc(file=sys.stderr)
        return EXIT_INTERNAL


EXIT_OUTPUT_CLOSED = 141
"""The reader of the output stopped reading (``curvewright quantify RUN | head``): 128 + SIGPIPE, the
code a shell reports for a program ended by a closed pipe."""


def _output_closed() -> int:
    """The program's output was closed by its reader: say nothing more (files the command writes are
    written before its text), and send what is left to the null device, so that the interpreter's last
    flush does not fail again."""
    try:
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
    except (OSError, ValueError):
        pass
    return EXIT_OUTPUT_CLOSED


def end_command(args: Sequence[str], code: int) -> int:
    """End the process of a ``quantify`` started as the program once its output is written, with
    ``code``, without the interpreter's teardown (freeing every object of numpy, scipy and the engine
    one by one, about 40 ms of CPU after one run and 0.1 s after 200). Its files are written and
    closed, its forked processes joined; where output cannot be flushed, another thread is still
    running or Qt was loaded (a record was drawn), ``code`` is returned and the interpreter ends the
    process as usual."""
    if not args or args[0] != "quantify" or "PySide6" in sys.modules:
        return code
    threading = sys.modules.get("threading")
    try:
        if threading is not None and threading.active_count() > 1:
            return code
        sys.stdout.flush()
        sys.stderr.flush()
    except Exception:  # noqa: BLE001 - the interpreter reports it at its end, as it always has
        return code
    os._exit(code)


def _one_blas_thread() -> None:
    """Ask the linear algebra library numpy and scipy load for one thread, unless the user chose.

    A command fits small matrices (a few columns, the standards as rows) and quantifies elementwise,
    where a pool of threads does no work; starting the pools of numpy's and scipy's libraries costs
    about 0.1 s of CPU at every start, and forked pool processes would not keep them anyway. Only
    where numpy is not loaded yet (a command started afresh); the app decides for itself."""
    if "numpy" not in sys.modules:
        os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")


def open_app(argv: list[str]) -> int:
    """``curvewright``, ``curvewright RUN.json`` or ``curvewright --demo [NAME]``: the desktop app."""
    if len(argv) > 2 or (argv and argv[0] != "--demo" and len(argv) > 1):
        print("curvewright: the app opens one run at a time: curvewright [RUN.json | --demo [NAME]]", file=sys.stderr)
        return EXIT_INPUT
    from .app.main import run_app

    if argv and argv[0] == "--demo":
        return run_app(demo=argv[1] if len(argv) > 1 else None)
    if argv and not Path(argv[0]).exists():
        print(f"curvewright: {argv[0]}: no such file (commands: {', '.join(COMMANDS)}; see curvewright --help)",
              file=sys.stderr)
        return EXIT_INPUT
    return run_app(argv[0] if argv else None)


# --- finding the runs -------------------------------------------------------------------------------
def expand_runs(patterns: Sequence[str]) -> list[Path]:
    found: list[Path] = []
    for pattern in patterns:
        path = Path(pattern)
        if path.is_dir():
            found += sorted(p for p in path.glob("*.json") if p.is_file())
        elif any(ch in pattern for ch in "*?["):
            import glob

            matches = sorted(Path(p) for p in glob.glob(pattern))
            if not matches:
                raise InputError(f"{pattern}: no file matches this pattern.")
            found += matches
        elif path.exists():
            found.append(path)
        else:
            raise InputError(f"{pattern}: no such file or folder.")
    if not found:
        raise InputError("no run documents found in " + ", ".join(patterns))
    return found


# --- quantify ---------------------------------------------------------------------------------------
@frozen_value
class Outcome:
    code: int
    text: str
    data: dict[str, Any] | None
    error: str = ""
    warnings: tuple[str, ...] = ()
    """Printed on stderr whatever the output format."""


def cmd_quantify(args: argparse.Namespace) -> int:
    if args.level is not None and not (0 < args.level < 1):
        raise InputError(f"--level: {args.level} must lie between 0 and 1 (e.g. 0.95).")
    if args.jobs < 1:
        raise InputError(f"--jobs: {args.jobs} must be 1 or more.")
    if args.record and not (args.export or args.report):
        raise InputError("--record records the exports and reports written in the run document's audit trail, and "
                         "nothing is written here: give --export PATH or --report PATH with it, or leave --record out.")
    if args.export and args.csv_decimal == "," and args.csv_delimiter == "," and (
            args.export.lower().endswith(".csv") or (args.export_format == "csv" and not args.export.lower().endswith(".xlsx"))):
        raise InputError("--csv-decimal ',': a decimal comma needs a semicolon or tab delimiter; add --csv-delimiter ';' "
                         "or --csv-delimiter tab.")
    if args.standards:
        if args.runs:
            raise InputError("give either run documents or --standards/--samples, not both.")
        outcomes = [_quantify_tables(args)]
    else:
        if args.samples:
            raise InputError("--samples goes with --standards.")
        if not args.runs:
            raise InputError("give a run document (or --standards and --samples); see curvewright quantify --help.")
        _refuse_tables("quantify", args.runs)
        paths = expand_runs(args.runs)
        many = len(paths) > 1
        for option in ("export", "report"):
            target = getattr(args, option)
            if many and target and not (target.endswith(("/", os.sep)) or Path(target).is_dir()):
                raise InputError(f"--{option}: with {len(paths)} runs, give a folder (ending in /) for the files.")
        outcomes = _run_many(paths, args)
    return _finish(outcomes, args.json)


def _finish(outcomes: list[Outcome], as_json: bool) -> int:
    if as_json:
        from .io.results_json import write_json

        data = [o.data if o.data is not None else {"error": o.error, "exit_code": o.code} for o in outcomes]
        write_json(data[0] if len(data) == 1 else data, sys.stdout)
    else:
        for o in outcomes:
            if o.text:
                print(o.text)
            if o.error:
                print(f"curvewright: {o.error}", file=sys.stderr)
        print(CAUTION)
    sys.stdout.flush()
    for o in outcomes:
        for w in o.warnings:
            print(f"curvewright: {w}", file=sys.stderr)
    return max(o.code for o in outcomes)


def _run_many(paths: list[Path], args: argparse.Namespace) -> list[Outcome]:
    """The outcomes of the run documents ``paths``, in their order. The objects made in loading what
    an analysis needs are left alone by the collector until the runs are done (:func:`_load_for_runs`),
    unless the caller had frozen objects of its own."""
    import gc

    settings = _options(args)
    left_alone = gc.get_freeze_count() == 0  # objects frozen by the caller are theirs to unfreeze
    try:
        return _analyse_runs(paths, args, settings, left_alone)
    finally:
        if left_alone:
            gc.unfreeze()


def _analyse_runs(paths: list[Path], args: argparse.Namespace, settings: dict[str, Any],
                  left_alone: bool) -> list[Outcome]:
    progress = _Progress(len(paths)) if len(paths) > 1 else None
    if args.jobs > 1 and len(paths) > 1:
        import multiprocessing

        # Each other process sends back its runs' JSON text, written as it will stand in the list,
        # rather than the results to be written here one after the other. Where processes can be
        # forked, the modules an analysis needs are loaded here first, once, and the other processes
        # start with them loaded instead of each importing them again; this process is then one of
        # the --jobs: it analyses the first run (which loads what its analysis asks for on the way),
        # forks the other --jobs - 1 and takes runs one at a time from the same shared counter as
        # they do, so that no process waits for another at the end (not when a record is drawn: Qt
        # is not loaded in a process that is then forked, so all the runs go to a pool).
        # Forking is left to Linux: on macOS a forked process may crash in the system's own libraries,
        # which is why Python starts processes afresh there (as on Windows, and here everywhere else).
        forked = sys.platform.startswith("linux") and "fork" in multiprocessing.get_all_start_methods()
        works_here = forked and not settings["report"]
        outcomes = []
        if forked:
            _load_for_runs(settings, left_alone)
        if works_here:
            outcomes.append(_quantify_file_in_list(paths[0], settings))
            if progress:
                progress.step(paths[0].name)
            outcomes += _share_forked(paths[1:], settings, args.jobs - 1, progress)
        else:
            outcomes += _share_runs(paths, settings, args.jobs, forked, progress)
    else:
        _load_for_runs(settings, left_alone)
        outcomes = [_quantify_in_list_shown(path, settings, progress, in_list=False) for path in paths]
    if progress:
        progress.done()
    return outcomes


def _quantify_in_list_shown(path: Path, settings: dict[str, Any], progress: _Progress | None, *,
                            in_list: bool = True) -> Outcome:
    outcome = (_quantify_file_in_list if in_list else _quantify_file)(path, settings)
    if progress:
        progress.step(path.name)
    return outcome


def _share_forked(paths: list[Path], settings: dict[str, Any], others: int,
                  progress: _Progress | None) -> list[Outcome]:
    """The outcomes of ``paths`` in their order, analysed by this process and ``others`` processes
    forked from it.

    Every process takes the next run from one counter they share, one run at a time, so all of them
    stop within about one run of each other. A forked process sends each run's number and outcome as
    it finishes it, and this one takes them in between its own runs (so that little is left to send
    at the end), then a last word when it has no more. A run whose outcome never arrives (a process
    that died) is analysed here afterwards."""
    import gc
    import multiprocessing

    if not paths:
        return []
    context = multiprocessing.get_context("fork")
    counter = context.RawValue("l", 0)
    lock = context.Lock()

    def take() -> int:
        with lock:
            k = counter.value
            counter.value = k + 1
        return k

    links, processes = [], []
    # the objects made so far are left alone by the collector in the forked processes, so that their
    # pages stay shared; here those made before the runs stay left alone until the runs are done
    # (:func:`_run_many`), the others are collected again
    frozen_before = gc.get_freeze_count()
    gc.freeze()
    try:
        for _ in range(min(others, len(paths) - 1)):
            receiving, sending = context.Pipe(duplex=False)
            process = context.Process(target=_share_forked_part, args=(paths, settings, take, sending), daemon=True)
            process.start()
            sending.close()
            links.append(receiving)
            processes.append(process)
    finally:
        if not frozen_before:
            gc.unfreeze()
    done: dict[int, Outcome] = {}
    names = [path.name for path in paths]

    def show(k: int) -> None:
        if progress:
            progress.step(names[k])

    def hear(link, wait: bool) -> bool:  # type: ignore[no-untyped-def]
        """Take the outcomes a forked process has sent (waiting for its last word when ``wait``);
        True once it has no more or is gone."""
        try:
            while wait or link.poll():
                message = link.recv()
                if message is None:
                    return True
                k, outcome = message
                done[k] = outcome
                show(k)
        except (EOFError, OSError):
            return True
        return False

    listening = list(links)
    while (k := take()) < len(paths):
        done[k] = _quantify_file_in_list(paths[k], settings)
        show(k)
        listening = [link for link in listening if not hear(link, wait=False)]
    for link in listening:
        hear(link, wait=True)
    for link in links:
        link.close()
    for process in processes:
        process.join()
    for k in range(len(paths)):
        if k not in done:  # its process died before sending it
            done[k] = _quantify_file_in_list(paths[k], settings)
            show(k)
    return [done[k] for k in range(len(paths))]


def _share_forked_part(paths: list[Path], settings: dict[str, Any], take, link) -> None:  # type: ignore[no-untyped-def]
    """A forked process's part of :func:`_share_forked`: runs taken from the shared counter until
    none is left, each run's number and outcome sent as it is finished, then None."""
    while (k := take()) < len(paths):
        link.send((k, _quantify_file_in_list(paths[k], settings)))
    link.send(None)
    link.close()


def _share_runs(paths: list[Path], settings: dict[str, Any], workers: int, forked: bool,
                progress: _Progress | None) -> list[Outcome]:
    """The outcomes of ``paths`` in their order, analysed by a pool of ``workers`` processes, in
    chunks of runs (where this process draws a record, or cannot fork)."""
    import multiprocessing
    from concurrent.futures import ProcessPoolExecutor

    size = max(1, min(16, len(paths) // (4 * workers)))
    chunks = [paths[i:i + size] for i in range(0, len(paths), size)]
    outcomes: list[Outcome] = []
    with ProcessPoolExecutor(max_workers=workers,
                             mp_context=multiprocessing.get_context("fork" if forked else "spawn")) as pool:
        for chunk, future in [(chunk, pool.submit(_quantify_chunk, chunk, settings)) for chunk in chunks]:
            outcomes += future.result()
            if progress:
                for path in chunk:
                    progress.step(path.name)
    return outcomes


def _quantify_chunk(paths: list[Path], options: dict[str, Any]) -> list[Outcome]:
    """Runs analysed one after the other in a pool process (:func:`_quantify_file_in_list`)."""
    return [_quantify_file_in_list(path, options) for path in paths]


def _load_for_runs(options: dict[str, Any], left_alone: bool = False) -> None:
    """Import what analysing a run document and writing its results need (numpy, scipy.special for
    the t and F distributions, and the engine among them), so that processes forked afterwards have
    them already. The cyclic garbage collector is paused meanwhile: importing makes many objects and
    no garbage, and its passes over them took 10-30 ms of a start.

    With ``left_alone`` the objects made so far (the modules and what they hold, some 300,000) are
    then frozen (:func:`gc.freeze`), and the caller unfreezes them when its runs are done: the
    collector's first pass after the pause otherwise walked them all before the first run was done,
    and the passes over the older generations walked them again."""
    import gc

    collecting = gc.isenabled()
    gc.disable()
    try:
        from scipy import special  # noqa: F401
        from .core import run_analysis  # noqa: F401
        from .io import audit, integrity, model_outputs, results_json, run_document  # noqa: F401

        if options.get("export"):
            from .io import csv_export, xlsx_export  # noqa: F401
        if left_alone:
            gc.freeze()
    finally:
        if collecting:
            gc.enable()


def _options(args: argparse.Namespace) -> dict[str, Any]:
    from .io.audit import identity_from

    options = {k: getattr(args, k) for k in ("analyte", "model", "weighting", "profile", "level", "export", "export_format",
                                             "csv_delimiter", "csv_decimal", "report", "record", "json")}
    options["person"] = identity_from(getattr(args, "analyst", None), getattr(args, "analyst_id", None))
    options["method"] = getattr(args, "method", None)
    options["reason"] = getattr(args, "reason", None)
    return options


def _naming(path: Path, exc: BaseException) -> str:
    """The message of a problem with one file, naming the file once: most of the project's messages
    begin with the file already; any other is preceded by it."""
    text = str(exc)
    return text if text.startswith((str(path), f"{path.name}:")) else f"{path}: {text}"


def _quantify_file(path: Path, options: dict[str, Any]) -> Outcome:
    """One run document, start to finish; never raises (the outcome carries the exit code)."""
    from .core.errors import CurvewrightError
    from .io.record_check import record_problems
    from .io.run_document import open_run

    try:
        opened = open_run(path)
        problems = record_problems(opened.run, opened.chain_problems)
        notes = [f"warning: {p}" for p in problems]
        return _quantify(opened.run, options, source=path, notes=notes, chain=(opened.run, opened.chain_problems),
                         record=problems)
    except (CurvewrightError, OSError, InputError) as exc:
        return Outcome(EXIT_INPUT, "", None, _naming(path, exc))
    except Exception as exc:  # noqa: BLE001 - reported as an internal error with its trace
        return Outcome(EXIT_INTERNAL, "", None, f"{path}: internal error: {exc!r}\n{traceback.format_exc()}")


def _quantify_file_in_list(path: Path, options: dict[str, Any]) -> Outcome:
    """:func:`_quantify_file` in a process of a pool: the JSON results come back as their text, made
    for their place in the list of runs (:class:`.io.results_json.Written`)."""
    outcome = _quantify_file(path, options)
    if options["json"] and outcome.data is not None:
        from .io.results_json import Written

        return replace(outcome, data=Written(outcome.data, 1))  # type: ignore[arg-type]
    return outcome


def _depart_from_method(run, model: str | None, weighting: str | None, options: dict[str, Any]):  # type: ignore[no-untyped-def]
    """--model/--weighting on a run that follows a validated method: a departure, which needs --reason and
    is recorded in the run (for this calculation) with that reason."""
    from .io import run_edits

    if not (options.get("reason") or "").strip():
        raise InputError("the run follows a validated method, which fixes its model and weighting; give --reason "
                         "to depart from it (the reason is recorded).")
    for a in run.analytes:
        run = run_edits.choose_model(run, a.name, model or a.model, weighting or a.weighting,
                                     options["reason"].strip(), user=options.get("person"))
    return run, None, None


def _quantify_tables(args: argparse.Namespace) -> Outcome:
    """``quantify --standards … --samples …``: build a run from the tables, choose the model, quantify."""
    if not args.samples:
        raise InputError("--standards needs --samples (the table of samples to quantify).")
    if bool(args.model) != bool(args.weighting):
        raise InputError(
            "with --standards, give --model and --weighting together (e.g. --model quadratic --weighting 1/x^2), "
            "or neither to use the recommended model (curvewright compare --standards FILE shows the evidence)."
        )
    tables = _run_from_tables(args, with_samples=True)
    run = tables.run
    if args.method:
        from .core.method import load_method
        from .io import run_edits

        method = load_method(args.method)
        run = run_edits.apply_method(run, method, user=_options(args)["person"])
        fixed = f"fixed by the validated method {method.label} (the recommendation is for information only)"
        choices = {a.name: ModelChoice("method", (fixed,)) for a in run.analytes}
        if args.model:
            run, _, _ = _depart_from_method(run, args.model, args.weighting, _options(args))
            choices = {a.name: ModelChoice("command line", (f"departs from method {method.label}: {args.reason}",))
                       for a in run.analytes}
    elif args.model:
        choices = {}
        for a in run.analytes:
            run = _record_choice(run, a.name, args.model, args.weighting, GIVEN, user=_options(args)["person"])
            choices[a.name] = ModelChoice("command line", (GIVEN,))
    else:
        run, choices = _choose_recommended(run, _options(args)["person"])
        refused = [(name, c.reasons[0]) for name, c in choices.items()
                   if c.by == "not chosen" and c.reasons[0].startswith("no model recommended: ")]
        if refused:  # never quantify quietly with a model the comparison rejects
            raise InputError(" ".join(
                f"{name}: {reason}." for name, reason in refused)
                + " Nothing was quantified: give --model and --weighting to choose a model yourself "
                "(curvewright compare --standards FILE shows the evidence).")
    options = _options(args)
    options.update(analyte=None, record=False, model=None, weighting=None)  # the choice is in the run now
    options["inputs"] = {"standards table": args.standards, "samples table": args.samples}
    warnings = list(tables.warnings)
    unreadable = [c for c in tables.unusable if c[-1].text.strip()]
    outcome = _quantify(run, options, source=None, notes=tables.notes, choices=choices,
                        analyte_warnings=_table_analyte_warnings(run), unusable=tables.unusable)
    code = outcome.code
    if unreadable:
        if args.allow_unreadable:
            warnings.append(f"{len(unreadable)} sample reading(s) could not be read and were accepted (--allow-unreadable); "
                            "those samples are reported without them.")
        else:
            code = max(code, EXIT_INPUT)
            warnings.append(
                f"{len(unreadable)} sample reading(s) could not be read (listed above). The other samples were "
                "quantified, and these are reported without them. Correct the table, or give --allow-unreadable "
                "once the cells have been checked; exit code 2 until then."
            )
    return replace(outcome, code=code, warnings=tuple(warnings))


def _record_choice(run, analyte: str, model: str, weighting: str, reason: str,  # type: ignore[no-untyped-def]
                   recommended: tuple[str, str] | None = None, user=None):
    """Record the model choice for an analyte in the run and its audit trail."""
    from .io import run_edits

    return run_edits.choose_model(run, analyte, model, weighting, reason, recommended=recommended, user=user)


@frozen_value
class TableRun:
    """A run built from tables, with what the import found."""

    run: Any
    notes: list[str]
    warnings: list[str]
    unusable: list[tuple[str, str | None, Any]] = field(default_factory=list)
    """(file, sheet or None, RejectedCell) of each sample reading kept as typed."""


def _run_from_tables(args: argparse.Namespace, *, with_samples: bool) -> TableRun:
    """Read the standards (and samples) tables; stop with one grouped message if any cell cannot be used."""
    from .io.audit import identity_from
    from .io import run_edits
    from .io.importing import analytes_from_import, grouped_cells, import_samples, import_standards

    if args.analyte and len(args.analyte) > 1:
        raise InputError("with --standards, give at most one --analyte (the analyte's name).")
    name = args.analyte[0] if args.analyte else UNNAMED_ANALYTE
    std_map, smp_map = parse_maps(args.map)
    thousands = {"space": " "}.get(args.thousands, args.thousands)
    reading = {"decimal_mark": args.decimal_mark, "thousands": thousands}
    std_sheet = args.standards_sheet or args.sheet
    smp_sheet = (getattr(args, "samples_sheet", None) or args.sheet) if with_samples else None
    if with_samples:
        _refuse_one_table_as_both(args.standards, std_sheet, args.samples, smp_sheet)
    hidden = getattr(args, "hidden_rows", None)
    std = _import_table(import_standards, args.standards, std_sheet, std_map, analyte=name, hidden_rows=hidden,
                        **reading)
    results = [std]
    smp = None
    if with_samples:
        smp_name = std.standards[0][0] if std.standards else name
        smp = _import_table(import_samples, args.samples, smp_sheet, smp_map, analyte=smp_name, hidden_rows=hidden,
                            **reading)
        results.append(smp)
    problems: list[str] = []
    for result, what in zip(results, ("standards", "samples")):
        if result.rejected:
            sheet = f", sheet {result.sheet!r}" if result.sheet is not None else ""
            problems.append(f"{what} table {result.source}{sheet}: {len(result.rejected)} cell(s) cannot be used; "
                            f"{len(result.rejected_rows)} row(s) not imported:")
            problems += grouped_cells(result.rejected, cli_answer)
    if problems:
        raise InputError("the tables cannot be used as they stand, so nothing was quantified:\n" + "\n".join(problems))
    analytes = analytes_from_import(std, concentration_unit=args.concentration_unit, response_unit=args.response_unit)
    description = f"built from {args.standards}" + (f" and {args.samples}" if with_samples else "")
    person = identity_from(getattr(args, "analyst", None), getattr(args, "analyst_id", None))
    run = run_edits.new_run(Path(args.standards).stem, analytes, description=description, user=person)
    run = replace(run, samples=smp.samples if smp is not None else (), instrument=getattr(args, "instrument", None) or "")
    for result, what in zip(results, ("standards", "samples")):
        run = run_edits.record(run, "imported", {"what": what, "source": result.source, "sha256": result.sha256},
                               user=person)
    run = _with_settings(run, getattr(args, "level", None), getattr(args, "profile", None))
    notes = [f"{what}: {r.headline}" for r, what in zip(results, ("standards", "samples"))]
    notes += [f"{what}: {r.source}{'' if r.sheet is None else f', sheet {r.sheet!r}'}: columns not used: {', '.join(repr(c) for c in r.unused_columns)}"
              for r, what in zip(results, ("standards", "samples")) if r.unused_columns]
    if smp is not None and smp.dilution_taken_as_one:
        rows = smp.dilution_taken_as_one
        listed = ", ".join(map(str, rows[:10])) + (f" … and {len(rows) - 10} more" if len(rows) > 10 else "")
        notes.append(f"samples: {smp.source}: dilution cell empty in row(s) {listed}: taken as 1 (no dilution)")
    # each unusable reading with its file and sheet, as the other import messages name them
    unusable = [(smp.source, smp.sheet, c) for c in smp.unusable_readings] if smp is not None else []
    warnings = [f"warning: {source}{'' if sheet is None else f', sheet {sheet!r}'}: {cell}"
                for source, sheet, cell in unusable]
    warnings += import_warnings(results, ("standards", "samples"))
    return TableRun(run, notes, warnings, unusable)


def import_warnings(results, what: Sequence[str]) -> list[str]:  # type: ignore[no-untyped-def]
    """What each import warned of (:attr:`.io.importing.ImportResult.warnings`), one line each, naming the
    table, its file (and sheet) and the warning's own words (the columns or rows it concerns and why)."""
    return [f"warning: {kind} table {r.source}{'' if r.sheet is None else f', sheet {r.sheet!r}'}: {w}"
            for r, kind in zip(results, what) for w in r.warnings]


def _refuse_one_table_as_both(standards: str, std_sheet: str | None, samples: str, smp_sheet: str | None) -> None:
    """Stop when the standards and the samples would be read from the same sheet of the same file
    (or the same text file): the one table cannot be both."""
    try:
        same = Path(standards).resolve() == Path(samples).resolve() or Path(standards).samefile(samples)
    except OSError:
        same = False
    if not same:
        return
    if not _is_workbook(standards):
        raise InputError(f"the standards and the samples would both be read from {standards}: one table cannot be "
                         "both. Name the samples table's own file with --samples.")
    if std_sheet and smp_sheet and std_sheet != smp_sheet:
        return
    from .io.tables import default_sheet, xlsx_sheets

    infos = xlsx_sheets(standards)
    sheets = tuple(s.name for s in infos)
    chosen = default_sheet(infos)
    first = chosen.name if chosen else None
    if (std_sheet or first) != (smp_sheet or first):
        return
    listed = ", ".join(repr(n) for n in sheets)
    raise InputError(
        f"the standards and the samples would both be read from sheet {std_sheet or first!r} of {standards}: one "
        f"sheet cannot be both tables. Give each table its own sheet: --standards-sheet SHEET --samples-sheet SHEET "
        f"(sheets: {listed})."
    )


def _import_table(importer, path: str, sheet: str | None, mapping: dict[str, str | int],  # type: ignore[no-untyped-def]
                  hidden_rows: str | None = None, **options):
    """One table through its importer, with the command line's words added to a missing-column message;
    a workbook's hidden rows included or skipped as ``hidden_rows`` says (none said: refused, named)."""
    from .io.importing import ColumnMappingProblem, MissingColumns
    from .io.tables import hidden_rows_chosen

    try:
        return importer(hidden_rows_chosen(_table(path, sheet), hidden_rows), mapping=mapping, **options)
    except MissingColumns as exc:
        maps = " or ".join(f"--map {f}=HEADER" for f in exc.missing)
        raise InputError(f"{exc} On the command line: {maps} (HEADER a header text or a column number).") from None
    except ColumnMappingProblem as exc:
        raise InputError(
            f"{exc} (--map FIELD=HEADER applies to both tables; for one table only write "
            "--map standards.FIELD=HEADER or --map samples.FIELD=HEADER.)"
        ) from None


def parse_maps(items: Sequence[str]) -> tuple[dict[str, str | int], dict[str, str | int]]:
    """``--map`` options as (standards mapping, samples mapping); a header of digits is a column number."""
    from .io.importing import REPLICATE_FIELDS, SAMPLE_FIELDS, SKIP, STANDARD_FIELDS

    fields = {"standards": STANDARD_FIELDS, "samples": SAMPLE_FIELDS}
    maps: dict[str, dict[str, str | int]] = {"standards": {}, "samples": {}}
    listing = f"standards: {', '.join(STANDARD_FIELDS)}; samples: {', '.join(SAMPLE_FIELDS)}"
    for item in items:
        key, sep, header = item.partition("=")
        header = header.strip()
        if not sep or not header or not key.strip():
            raise InputError(f"--map {item!r}: write FIELD=HEADER, e.g. --map \"response=Peak height\" "
                             "(HEADER a header text or a 1-based column number).")
        table, _, name = key.strip().rpartition(".")
        name = name.strip().lower().replace(" ", "_").replace("-", "_")
        if table not in ("", "standards", "samples"):
            raise InputError(f"--map {item!r}: {table!r} is not 'standards' or 'samples'.")
        targets = [t for t in ("standards", "samples") if table in ("", t) and (name in fields[t] or name == SKIP)]
        if not targets:
            where = f"a field of the {table} table" if table else "a field of either table"
            raise InputError(f"--map {item!r}: {name!r} is not {where} ({listing}; or skip, a column left out).")
        for t in targets:
            where = int(header) if header.isdigit() else header
            if name not in maps[t]:
                maps[t][name] = where
            elif (name in REPLICATE_FIELDS and t == "samples") or name == SKIP:  # several columns: a list
                before = maps[t][name]
                maps[t][name] = [*(before if isinstance(before, list) else [before]), where]  # type: ignore[assignment]
            else:
                raise InputError(f"--map {item!r}: {t} field {name!r} is mapped twice; only the samples' response "
                                 "may take several columns (each a further replicate).")
    return maps["standards"], maps["samples"]


def cli_answer(remedy) -> str:  # type: ignore[no-untyped-def]
    """The command-line option that answers an import remedy."""
    if remedy.option == "decimal_mark":
        return f"give --decimal-mark {remedy.value}" if remedy.value else "give --decimal-mark . or --decimal-mark ,"
    shown = {" ": "space", "'": '"\'"'}.get(remedy.value, remedy.value)
    if shown is None:
        return "remove the thousands separators, or give --thousands with the one the table uses"
    return f"remove the separators, or give --thousands {shown}"


def _choose_recommended(run, person=None):  # type: ignore[no-untyped-def]
    """Each analyte gets the model and weighting the comparison recommends on its standards in the fit."""
    from .core.run_analysis import analyse_run
    from .io.model_choice import recommendation_reason

    provisional = analyse_run(replace(run, samples=()))
    profile = provisional.profile
    choices: dict[str, ModelChoice] = {}
    for a in provisional.analytes:
        analyte = a.analyte
        comparison = provisional.evidence[analyte.name]  # the run's one model evidence
        if isinstance(comparison, str):
            choices[analyte.name] = ModelChoice("not chosen", (f"no model comparison: {comparison}",))
            continue
        if comparison.recommendation is None:  # no candidate is acceptable: nothing is chosen for the analyte
            choices[analyte.name] = ModelChoice("not chosen", (f"no model recommended: {comparison.no_recommendation}",))
            continue
        rec = comparison.recommended
        pick = (rec.model.value, rec.weighting.value)
        reason = recommendation_reason(comparison, len(a.fitted_standards), profile.name)
        run = _record_choice(run, analyte.name, *pick, reason, recommended=pick, user=person)
        choices[analyte.name] = ModelChoice("recommended", tuple(comparison.reasons))
    return run, choices


def _table_analyte_warnings(run) -> dict[str, list[str]]:  # type: ignore[no-untyped-def]
    """What a table run lacks, per analyte: its name, its concentration unit."""
    out: dict[str, list[str]] = {}
    for a in run.analytes:
        notes = []
        if a.name == UNNAMED_ANALYTE:
            notes.append("analyte name not given: give --analyte NAME (or an 'Analyte' column in the tables)")
        if not a.concentration_unit.strip():
            notes.append("concentration unit not given: give --concentration-unit UNIT, or write it in the "
                         "header, e.g. 'Concentration (µg/L)'")
        out[a.name] = notes
    return out


def _refuse_tables(command: str, paths: Sequence[str]) -> None:
    """A table given where a run document is expected: say what the command takes and how to use tables."""
    for given in paths:
        if Path(given).suffix.lower() not in TABLE_SUFFIXES:
            continue
        import shlex

        quantify = f"curvewright quantify --standards {shlex.quote(given)} --samples SAMPLES.csv --analyte NAME"
        takes = {"compare": "compare reads run documents (.json)",
                 "check": "check validates run documents (.json) and their audit trails",
                 "quantify": "quantify reads run documents (.json) unless the tables are named"}[command]
        evidence = (f" For the model evidence of a standards table: curvewright compare --standards {shlex.quote(given)}."
                    if command != "quantify" else "")
        raise InputError(f"{given} is a table, not a run document: {takes}.{evidence} To quantify tables: {quantify}")


def _with_settings(run, level: float | None, profile: str | None):  # type: ignore[no-untyped-def]
    """The run with the confidence level and acceptance profile given on the command line (the same
    run when neither is given)."""
    if level is None and not profile:
        return run
    settings = run.settings
    if level is not None:
        settings = replace(settings, confidence_level=level)
    if profile:
        from .core.acceptance import load_profile

        loaded = load_profile(profile)
        settings = replace(settings, acceptance_profile=loaded.id, custom_profile=loaded.to_mapping())
    return replace(run, settings=settings)


def _table(path: str, sheet: str | None):  # type: ignore[no-untyped-def]
    from .io.tables import table_from_csv, table_from_xlsx

    return table_from_xlsx(path, sheet) if _is_workbook(path) else table_from_csv(path)


def _is_workbook(path: str) -> bool:
    return path.lower().endswith((".xlsx", ".xlsm"))


def _quantify(  # type: ignore[no-untyped-def]
    run, options: dict[str, Any], *, source: Path | None, notes: list[str],
    choices: Mapping[str, ModelChoice] | None = None, analyte_warnings: Mapping[str, list[str]] | None = None,
    unusable: Sequence[tuple[str, str | None, Any]] = (), chain: tuple[Any, tuple[str, ...]] | None = None,
    record: tuple[str, ...] = (),
) -> Outcome:
    """Analyse, export and report one run. ``choices`` says how each analyte's model was chosen
    (default: from the run document, or the command line when --model/--weighting override it);
    ``chain`` is a run and what checking its audit trail found (:func:`result_json`); ``record`` the
    problems with the record of the run as read (:func:`.io.record_check.record_problems`): the exit
    code is then 1, whatever the acceptance rules say."""
    from .core.run_analysis import analyse_run
    from .io.atomic import ensure_not_input
    from .io.run_document import append_to_run_document

    run = _with_settings(run, options["level"], options["profile"])
    model, weighting = options["model"], options["weighting"]
    if options.get("method") and run.settings.method is None:
        from .core.method import load_method
        from .io import run_edits

        run = run_edits.apply_method(run, load_method(options["method"]), user=options.get("person"))
    if run.settings.method is not None and (model or weighting):
        run, model, weighting = _depart_from_method(run, model, weighting, options)
    names = tuple(options["analyte"]) if options["analyte"] else None
    if len(run.samples) > _MANY_SAMPLES and not options["record"]:  # no further edit of the run here
        from .io.integrity import let_go_of_sample_texts

        let_go_of_sample_texts(run)
    result = analyse_run(run, analytes=names, model=model, weighting=weighting)
    chosen = {a.analyte.name: _document_choice(a, result.run) for a in result.analytes}
    chosen.update(choices or {})
    per_analyte = {a.analyte.name: _document_warnings(a) if analyte_warnings is None
                   else list(analyte_warnings.get(a.analyte.name, [])) for a in result.analytes}
    written: list[tuple[str, str, str]] = []
    stem = source.stem if source else run.name.replace("/", "_")
    inputs = {"run document": source, **options.get("inputs", {})}
    if options["export"]:
        target = _target(options["export"], stem, "." + options["export_format"])
        ensure_not_input(target, inputs, "--export")
        written.append(("export_written", str(target), _export(result, target, options)))
    if options["report"]:
        from .app.report_pdf import write_report
        from .io.report import build_report

        target = _target(options["report"], stem, ".pdf")
        if target.suffix.lower() != ".pdf":
            raise InputError(f"--report: {target} should end in .pdf.")
        ensure_not_input(target, inputs, "--report")
        written.append(("report_written", str(target), write_report(build_report(result), target)))
    if options["record"] and source is not None and written:
        append_to_run_document(source, [(action, {"path": path, "sha256": sha}) for action, path, sha in written],
                               user=options.get("person"))
    code = EXIT_ACCEPTED if result.accepted and not record else EXIT_REJECTED
    if options["json"]:
        data = result_json(result, source, written, choices=chosen, analyte_warnings=per_analyte, notes=notes,
                           unusable=unusable, chain=chain, record=record)
        return Outcome(code, "", data)
    return Outcome(code, summary_text(result, source, notes, written, choices=chosen, analyte_warnings=per_analyte,
                                      record=record), None)


def _not_chosen_words(run, a) -> str:  # type: ignore[no-untyped-def]
    """What ``compare`` says of a run document's function that has no recorded reason: the program's
    default where nobody chose it (as the screen, workbook and record say), else that no reason is recorded."""
    from .io.model_choice import NOT_CHOSEN, chosen

    return "(no reason recorded)" if chosen(run, a.analyte.name) else NOT_CHOSEN


_MANY_SAMPLES = 4096
"""A run of more samples lets go of their kept canonical texts before it is analysed
(:func:`.io.integrity.let_go_of_sample_texts`)."""


def _document_choice(a, run=None) -> ModelChoice:  # type: ignore[no-untyped-def]
    """How a run document's analyte got its model: the run's own recorded choice, or the command line;
    "not chosen" where ``run`` shows that nobody chose it (no reason recorded, no choice in the audit
    trail: the program's default, as the screen, workbook and record say)."""
    if a.model_overridden:
        return ModelChoice("command line", (GIVEN,))
    if run is not None and not a.analyte.choice_reason.strip():
        from .io.model_choice import NOT_CHOSEN, chosen

        if not chosen(run, a.analyte.name):
            return ModelChoice("not chosen", (NOT_CHOSEN,))
    return ModelChoice("run document", (a.analyte.choice_reason,) if a.analyte.choice_reason else ())


def _document_warnings(a) -> list[str]:  # type: ignore[no-untyped-def]
    return [] if a.analyte.concentration_unit.strip() else ["concentration unit not given in the run document"]


def _target(given: str, stem: str, suffix: str) -> Path:
    path = Path(given)
    if given.endswith(("/", os.sep)) or path.is_dir():
        path.mkdir(parents=True, exist_ok=True)
        return path / f"{stem}{suffix}"
    return path


def _export(result, target: Path, options: dict[str, Any]) -> str:  # type: ignore[no-untyped-def]
    from .io.csv_export import write_csv
    from .io.xlsx_export import write_xlsx

    suffix = target.suffix.lower()
    if suffix == ".xlsx":
        return write_xlsx(result, target)
    if suffix == ".csv":
        delimiter = "\t" if options["csv_delimiter"] == "tab" else options["csv_delimiter"]
        return write_csv(result, target, delimiter=delimiter, decimal_mark=options["csv_decimal"])
    raise InputError(f"--export: {target} should end in .xlsx or .csv.")


# --- text and JSON ----------------------------------------------------------------------------------
def summary_text(  # type: ignore[no-untyped-def]
    result, source: Path | None, notes: list[str], written: list[tuple[str, str, str]], *,
    choices: Mapping[str, ModelChoice] | None = None, analyte_warnings: Mapping[str, list[str]] | None = None,
    record: Sequence[str] = (),
) -> str:
    """The results as text. A missing unit is said once per analyte and never printed empty. ``record``:
    the problems with the run's record, which the verdict line names beside the acceptance rules'."""
    from .io.model_outputs import additions_lines, response_factor_lines
    from .io.result_tables import limits_words, recovery_windows, rule_departures

    run = result.run
    lines = [f"Run: {run.name}" + (f"  ({source})" if source else ""),
             f"Profile: {result.profile.name}; verdict: {verdict_words(result.accepted, record)}"]
    if result.profile.caveat:
        lines.append(f"About the profile: {result.profile.caveat}")
    lines.append(f"Profile rules by content: SHA-256 {result.profile.sha256[:16]}…")
    if result.method is not None:
        lines.append(f"Method: {result.method.label} — {result.method.name} (content SHA-256 {result.method.sha256[:16]}…); "
                     "it fixes the calibration function: the model comparison is for information only")
    lines += notes
    windows = recovery_windows(result)
    for a in result.analytes:
        unit = a.analyte.concentration_unit.strip()
        in_unit = f" {unit}" if unit else ""
        lines.append("")
        lines.append(a.analyte.name + (f" ({unit})" if unit else ""))
        lines += [f"  note: {w}" for w in (analyte_warnings or {}).get(a.analyte.name, [])]
        if a.calibration is None:
            lines.append(f"  {a.not_fitted_words}")
            lines += additions_lines(a, run.settings.confidence_level)
            continue
        cal = a.calibration
        choice = (choices or {}).get(a.analyte.name) or _document_choice(a)
        described = f"  model: {cal.model.description}, {cal.weighting.description}"
        if choice.by == "recommended":
            lines.append(f"{described} — recommended by the model comparison:")
            lines += [f"    • {r}" for r in choice.reasons]
        elif choice.by == "command line":
            said = [r for r in choice.reasons if r != GIVEN]
            lines.append(f"{described} ({GIVEN}" + (f"; {'; '.join(said)})" if said else ")"))
        elif choice.by == "not chosen":
            lines.append(f"{described} — not chosen ({'; '.join(choice.reasons)})")
        elif choice.by == "method":
            lines.append(f"{described} — {'; '.join(choice.reasons)}")
        else:
            lines.append(described + (f" — {a.analyte.choice_reason}" if a.analyte.choice_reason else ""))
        for r in a.method_reasons:
            lines.append(f"  method {r}")
        lines.append(f"  {cal.equation(10)}")
        lines += response_factor_lines(cal, a.analyte.uses_internal_standard)
        if not cal.model.is_polynomial:
            lines.append("  parameters: " + "; ".join(
                f"{name} ({words}) = {figures(b, 6)} ± {figures(se, 2)}" for name, words, b, se in
                zip(cal.coefficient_names, cal.coefficient_descriptions, cal.coefficients, cal.standard_errors)))
            lines.append(f"  fit: {'; '.join(n for n in cal.notes if n.startswith('fitted by nonlinear'))}")
        lof = cal.lack_of_fit
        lof_text = (f"lack-of-fit F = {figures(lof.f_statistic, 4)}, {p_equals(lof.p_value, 3)}" if lof.available
                    else f"lack of fit not tested ({lof.reason})")
        lines.append(f"  residual SD {figures(cal.residual_sd, 6)}; adjusted R² {fixed(cal.adjusted_r_squared, 6)}; {lof_text}")
        if a.limits:
            lines.append(f"  {a.limits.values_words(in_unit.strip(), run.settings.rounding)} ({a.limits.description})")
            if a.limits.blank_readings:  # the blanks the limits come from, beside them
                lines.append(f"  limits {a.limits.blank_words(a.analyte.response_unit.strip())}")
            for by_k in a.limits_by_readings:  # ISO 11843-2: the limits for the samples read K > 1 times
                lines.append(f"  for samples read {by_k.readings} times: "
                             f"{by_k.values_words(in_unit.strip(), run.settings.rounding)}")
        elif a.limits_note:
            lines.append(f"  {limits_words(a, result)}")
        flagged = [f"{s.id} ({', '.join(f.value for f in cal.influence_flags[i])})"
                   for i, s in enumerate(a.fitted_standards) if cal.influence_flags[i]]
        if flagged:
            lines.append("  influential standards: " + "; ".join(flagged))
        for s in a.excluded_standards:
            lines.append(f"  excluded: {s.id} — {s.exclusion_reason}")
        for r in (a.verdict.reasons if a.verdict else ()):
            lines.append(f"  standards {r}")
        for r in (a.qc_verdict.reasons if a.qc_verdict else ()):
            lines.append(f"  QC {r}")
        if a.checks is not None:
            lines.append("  calibration checks:")
            lines += [f"    {r}" for r in a.checks.reasons]
        rule = run.settings.rounding
        if a.reporting is not None:
            rr = a.reporting
            limit = entered(rr.reporting_limit) if rr.basis == "LLOQ" else computed(rr.reporting_limit, rule)
            lines.append(f"  calibrated range {entered_span(rr.lloq, rr.uloq)}{in_unit} (LLOQ–ULOQ); reporting limit "
                         f"{limit}{in_unit} ({rr.basis}): {rr.note}")
            if rr.narrowing:
                lines.append(f"  RANGE NARROWED from the standards' {entered_span(*rr.standards_range)}"
                             f"{in_unit}: {rr.narrowing}")
        lines += _samples_lines(a.samples, rule, run.settings.confidence_level, windows)
        departed = rule_departures(a, rule)
        if departed:
            lines.append(f"  shown to the decimal place of their interval: {', '.join(departed)} (the rounding rule, "
                         f"{rule.description}, would show {'it' if len(departed) == 1 else 'them'} outside the "
                         "interval or end a whole number in zeros read as exact digits)")
        lines += additions_lines(a, run.settings.confidence_level)
    for action, path, sha in written:
        kind = ("report" if action != "export_written" else
                "samples table" if path.lower().endswith(".csv") else "workbook")
        lines.append(f"{kind} written: {path} (SHA-256 {sha[:16]}…)")
    return "\n".join(lines)


def verdict_words(accepted: bool, record: Sequence[str]) -> str:
    """The run's verdict in words: the acceptance rules' and, when the run's record is not intact
    (``record``: its problems), that too, so that neither is read without the other."""
    if not record:
        return "ACCEPTED" if accepted else "NOT ACCEPTED"
    rules = "the acceptance rules are met" if accepted else "NOT ACCEPTED by the acceptance rules"
    return (f"{rules}, but the run's record is NOT intact ({len(record)} problem{'s' if len(record) > 1 else ''} "
            "in the warnings above; curvewright check names them): exit code 1")


def _samples_lines(samples, rule, level: float, windows: Mapping[str, float]) -> list[str]:  # type: ignore[no-untyped-def]
    """The samples as aligned text: what is reported, the number behind it, its interval, and, where a
    sample is judged (a QC sample, a calibration check), its recovery and "pass" or "FAIL" as the record
    and the workbook give them (``windows``: the window around 100 % each judged kind is judged within,
    :func:`.io.result_tables.recovery_windows`); then the flags."""
    from .io.number_text import percent_beside_limits
    from .io.result_tables import interval_text, qc_word

    judged = [(s.recovery_percent, qc_word(s.kind, s.within_limits)) for s in samples]
    shown_judged = any(r is not None or word for r, word in judged)
    heading = ("sample", "reported", "value", f"interval ({percent_label(level)})")
    heading += ("recovery (%)", "QC or check", "flags") if shown_judged else ("flags",)
    rows = []
    for s, (recovery, word) in zip(samples, judged):
        row = (s.sample_id, s.reported_text or "—",
               "—" if s.reported is None else computed_within(s.reported, s.reported_lower, s.reported_upper, rule),
               "" if s.reported is None else interval_text(s.reported_lower, s.reported_upper, rule))
        if shown_judged:
            row += ("" if recovery is None else percent_beside_limits(recovery, 1, 100.0, windows.get(s.kind.words)), word)
        rows.append(row + (s.flag_words,))
    last = len(heading) - 1
    widths = [max(len(r[i]) for r in [heading, *rows]) for i in range(last)]
    left = {0, 1, 5}  # the sample, what is reported and the verdict word read from the left; numbers line up right
    out = []
    for r in [heading, *rows]:
        cells = [r[i].ljust(widths[i]) if i in left else r[i].rjust(widths[i]) for i in range(last)] + [r[last]]
        out.append("  " + "  ".join(cells).rstrip())
    return out


def result_json(  # type: ignore[no-untyped-def]
    result, source: Path | None, written: list[tuple[str, str, str]], *,
    choices: Mapping[str, ModelChoice] | None = None, analyte_warnings: Mapping[str, list[str]] | None = None,
    notes: Sequence[str] = (), unusable: Sequence[tuple[str, str | None, Any]] = (), chain: tuple[Any, tuple[str, ...]] | None = None,
    record: Sequence[str] | None = None,
) -> dict[str, Any]:
    """The results for scripts. Per analyte, ``model_chosen_by`` ("recommended", "command line",
    "run document" or "not chosen") and ``choice_reasons`` say how the model was chosen, and
    ``warnings`` what is missing (a unit, a name); ``unusable_readings`` lists the sample cells of
    a table kept as typed. ``chain`` is a run and what :func:`.io.audit.verify_chain` found for its
    trail when it was read: used when the results are of that very run (not of one changed since,
    which gained audit entries), else the trail is checked here. ``record_intact`` and
    ``record_problems`` say whether the record of the run as read is intact (what ``curvewright check``
    reports; ``record``, else checked here): ``accepted`` is the acceptance rules' verdict alone, and
    the exit code is 1 when either fails."""
    import numpy as np

    from .io.audit import chain_claim, verify_chain
    from .io.integrity import content_change
    from .io.model_outputs import additions_json, response_factor_json
    from .io.results_json import Rows, finite

    run = result.run
    chain_problems = chain[1] if chain is not None and chain[0] is run else verify_chain(run.audit)
    if record is None:
        from .io.record_check import record_problems

        problems: Sequence[str] = record_problems(run, chain_problems)
    else:
        problems = record
    out: dict[str, Any] = {
        "run": run.name, "source": str(source) if source else None, "software_version": __version__,
        "accepted": result.accepted, "reasons": [machine(r) for r in result.reasons], "profile": result.profile.name, "profile_caveat": result.profile.caveat or None,
        "profile_sha256": result.profile.sha256,
        "method": None if result.method is None else {"id": result.method.id, "version": result.method.version,
                                                      "name": result.method.name, "sha256": result.method.sha256},
        "confidence_level": run.settings.confidence_level, "interval": run.settings.interval,
        "audit_chain_verified": not chain_problems, "data_match_audit_trail": content_change(run) is None,
        "chain_check": chain_claim(run, chain_problems)[1],
        "record_intact": not problems, "record_problems": list(problems),
        "signatures": [{"role": c.signature.role, "name": c.signature.name, "id": c.signature.person_id,
                        "time_utc": c.signature.time_utc, "meaning": c.signature.meaning,
                        "keyed": bool(c.signature.signature), "holds": c.holds, "check": c.words}
                       for c in _signature_checks(run)],
        "caution": CAUTION,
        "files_written": [{"kind": a, "path": p, "sha256": s} for a, p, s in written],
        "notes": [machine(n) for n in notes],
        "unusable_readings": [{"file": f, "sheet": sheet, "row": c.row, "column": c.column, "text": c.text,
                               "reason": c.reason} for f, sheet, c in unusable],
        "analytes": [],
    }
    for a in result.analytes:
        choice = (choices or {}).get(a.analyte.name) or _document_choice(a)
        entry: dict[str, Any] = {"name": a.analyte.name, "concentration_unit": a.analyte.concentration_unit,
                                 "response_unit": a.analyte.response_unit, "error": a.error, "accepted": a.accepted,
                                 "warnings": [machine(w) for w in (analyte_warnings or {}).get(a.analyte.name, [])],
                                 "model_chosen_by": choice.by, "choice_reasons": [machine(r) for r in choice.reasons]}
        cal = a.calibration
        if cal is not None:
            lof = cal.lack_of_fit
            # each standard's numbers read from the curve's arrays once, as plain numbers
            response, back_calculated, relative_error, leverage, cooks, studentized = (
                np.asarray(column).tolist() for column in (cal.response, cal.back_calculated, cal.relative_error,
                                                           cal.leverage, cal.cooks_distance, cal.studentized_residuals))
            entry.update({
                "model": cal.model.value, "weighting": cal.weighting.value, "model_overridden": a.model_overridden,
                "choice_reason": GIVEN if a.model_overridden else a.analyte.choice_reason, "equation": machine(cal.equation(17)),
                "coefficient_names": list(cal.coefficient_names),
                "coefficients": cal.coefficients, "standard_errors": cal.standard_errors, "covariance": cal.covariance,
                "convergence": getattr(cal, "convergence", None), "notes": [machine(n) for n in cal.notes],
                "residual_sd": cal.residual_sd, "df_residual": cal.df_residual, "r_squared": cal.r_squared,
                "adjusted_r_squared": cal.adjusted_r_squared, "calibrated_range": None if a.reporting is None else [a.reporting.lloq, a.reporting.uloq],
                "lack_of_fit": {"available": lof.available, "reason": lof.reason, "f_statistic": lof.f_statistic,
                                "df_lack_of_fit": lof.df_lack_of_fit, "df_pure_error": lof.df_pure_error,
                                "p_value": lof.p_value},
                "limits": None if a.limits is None else {"method": a.limits.method, "description": a.limits.description,
                                                         "lod": a.limits.lod, "loq": a.limits.loq,
                                                         "critical_concentration": a.limits.critical_concentration,
                                                         "critical_response": a.limits.critical_response,
                                                         "readings": a.limits.readings,
                                                         "name": a.limits.name,
                                                         "blank_readings": a.limits.blank_readings,
                                                         "blank_mean": a.limits.blank_mean,
                                                         "blank_sd": a.limits.sigma if a.limits.blank_readings else None,
                                                         "by_readings": [
                                                             {"readings": b.readings, "lod": b.lod,
                                                              "critical_concentration": b.critical_concentration,
                                                              "critical_response": b.critical_response}
                                                             for b in a.limits_by_readings]},
                "limits_note": None if a.limits_note is None else machine(a.limits_note),
                "verdict": {"passed": a.verdict.passed, "reasons": [machine(r) for r in a.verdict.reasons]} if a.verdict else None,
                "qc_verdict": {"passed": a.qc_verdict.passed, "reasons": [machine(r) for r in a.qc_verdict.reasons]} if a.qc_verdict else None,
                "calibration_checks": None if a.checks is None else {
                    "passed": a.checks.passed, "reasons": [machine(r) for r in a.checks.reasons],
                    "checks": [{"id": c.sample_id, "kind": c.kind.value, "run_order": c.run_order, "nominal": c.nominal,
                                "found": c.found, "recovery_percent": c.recovery_percent,
                                "window_percent": c.window_percent, "passed": c.passed, "reason": machine(c.reason)}
                               for c in a.checks.checks]},
                "reporting_range": None if a.reporting is None else {
                    "lloq": a.reporting.lloq, "uloq": a.reporting.uloq, "lod": a.reporting.lod, "loq": a.reporting.loq,
                    "reporting_limit": a.reporting.reporting_limit, "basis": a.reporting.basis,
                    "detection_limit": a.reporting.detection_limit, "detection_basis": a.reporting.detection_label,
                    "note": machine(a.reporting.note), "narrowed": bool(a.reporting.narrowing),
                    "narrowing": machine(a.reporting.narrowing) or None,
                    "standards_range": list(a.reporting.standards_range or (a.reporting.lloq, a.reporting.uloq))},
                # the standards are rows of plain values: written as they are, each on its line, with no
                # walk over them for numbers that are not finite (a row holding one takes the long way)
                "standards": Rows([
                    {"id": s.id, "concentration": s.concentration, "response": response[i],
                     "back_calculated": back_calculated[i], "relative_error": relative_error[i],
                     "leverage": leverage[i], "cooks_distance": cooks[i], "studentized_residual": studentized[i],
                     "influence_flags": [f.name.lower() for f in cal.influence_flags[i]],
                     "within_limits": bool(a.verdict.passing[i]) if a.verdict and a.verdict.judged[i] else None}
                    for i, s in enumerate(a.fitted_standards)
                ], _as_made),
                "excluded_standards": [{"id": s.id, "reason": s.exclusion_reason} for s in a.excluded_standards],
                "response_factors": response_factor_json(cal, a.analyte.uses_internal_standard),
            })
        entry["standard_additions"] = additions_json(a)
        entry["samples"] = Rows(_SampleRows(a.sample_columns, run.settings.rounding), _as_made)
        out["analytes"].append(entry)
    return finite(out)


def _signature_checks(run):  # type: ignore[no-untyped-def]
    """What checking the run's signatures found (:func:`.io.signatures.check_signatures`); a run
    without signatures has nothing to check, and the checker is not loaded for it."""
    if not run.signatures:
        return ()
    from .io.signatures import check_signatures

    return check_signatures(run)


class _SampleRows:
    """The samples' JSON rows, made from their columns a chunk at a time as they are written, with no
    result object per sample (``len()`` is the number of samples)."""

    __slots__ = ("columns", "rounding")

    def __init__(self, columns, rounding) -> None:  # type: ignore[no-untyped-def]
        self.columns, self.rounding = columns, rounding

    def __len__(self) -> int:
        return 0 if self.columns is None else len(self.columns)

    def __iter__(self) -> Iterator[dict[str, Any]]:
        if self.columns is None:
            return
        from .core.reporting import ReportStatus
        from .core.run import SampleKind

        names: dict[int, list[str]] = {}
        words_of = {member: member.value for member in (*SampleKind, *ReportStatus)}
        text = computed_within
        from .core.run_analysis import flag_words_of, is_reportable

        in_range = ReportStatus.IN_RANGE
        for _, c in self.columns.chunks():
            for (sid, kind, order, count, entered_count, censored, quantified, mean, est, se, low, high, df, nominal,
                 recovery, within, bits, suggested, note, status, reported_text, words, short) in zip(
                    c["ids"], c["kinds"], c["run_orders"], c["replicate_counts"], c["reading_counts"],
                    c["censored_counts"], c["quantified"], c["mean_response"],
                    c["estimate"], c["standard_error"], c["lower"], c["upper"], c["dilution"], c["nominal"],
                    c["recovery_percent"], c["within_limits"], c["flags"], c["suggested_dilution"], c["notes"],
                    c["statuses"], c["texts"], c["words"], c["shorts"]):
                if quantified:
                    estimate = None if est != est else est
                    reported = None if estimate is None else estimate * df
                    se = None if se != se else se
                    low, high = (None if low != low else low), (None if high != high else high)
                    reported_se = None if se is None else se * df
                    reported_lower = None if low is None else low * df
                    reported_upper = None if high is None else high * df
                else:
                    mean = estimate = se = low = high = reported = reported_se = reported_lower = reported_upper = None
                flag_names = names.get(bits)
                if flag_names is None:
                    flag_names = names[bits] = list(_flag_names(bits))
                yield {
                    "id": sid, "kind": words_of[kind], "run_order": order,
                    "replicates": max(entered_count, count), "replicates_measured": count, "replicates_censored": censored,
                    "mean_response": mean, "estimate": estimate, "standard_error": se,
                    "lower": low, "upper": high, "dilution_factor": df, "reported": reported,
                    "reported_standard_error": reported_se,
                    "reported_lower": reported_lower, "reported_upper": reported_upper,
                    # inside the range, the reported text is the rounded number itself
                    "reported_rounded": None if reported is None else machine(
                        reported_text if status is in_range else text(reported, reported_lower, reported_upper, self.rounding)),
                    "reported_text": machine(reported_text), "status": words_of[status],
                    "reportable": is_reportable(status, short),
                    "suggested_dilution": None if suggested != suggested else suggested,
                    "flags": flag_names, "flag_words": machine(flag_words_of(words, note)), "nominal": None if nominal != nominal else nominal,
                    "recovery_percent": None if recovery != recovery else recovery,
                    "within_limits": None if within < 0 else bool(within)}


@lru_cache(maxsize=256)
def _flag_names(bits: int) -> tuple[str, ...]:
    """The names of the engine's flags set in ``bits`` (lower case, in the flags' order), none for -1
    (no flags), as a sample's row gives them; worked out once for each set of flags, since the runs
    of a batch meet the same few."""
    from .core.inverse import QuantFlag

    return () if bits < 0 else tuple(f.name.lower() for f in QuantFlag(bits))


def _as_made(row: dict[str, Any]) -> dict[str, Any]:
    return row


def _finite(value: Any) -> Any:
    from .io.results_json import finite

    return finite(value)


class _Progress:
    """A progress bar on stderr (a line per run when stderr is not a terminal)."""

    def __init__(self, total: int) -> None:
        self.total, self.count = total, 0
        self.tty = sys.stderr.isatty()

    def step(self, label: str) -> None:
        self.count += 1
        filled = int(30 * self.count / self.total)
        bar = f"[{'#' * filled}{'.' * (30 - filled)}] {self.count}/{self.total} {label}"
        print(("\r" + bar[:100]) if self.tty else bar, end="" if self.tty else "\n", file=sys.stderr, flush=True)

    def done(self) -> None:
        if self.tty:
            print(file=sys.stderr)


# --- compare and check ------------------------------------------------------------------------------
def cmd_compare(args: argparse.Namespace) -> int:
    """The model-evidence table of each analyte of run documents, or of a standards table."""
    from .core.run_analysis import analyse_run
    from .io.run_document import open_run

    code = EXIT_ACCEPTED
    payload: list[dict[str, Any]] = []
    if args.standards:
        if args.runs:
            raise InputError("give either run documents or --standards, not both.")
        tables = _run_from_tables(args, with_samples=False)
        for warning in tables.warnings:
            print(f"curvewright: {warning}", file=sys.stderr)
        run, choices = _choose_recommended(tables.run)
        if not args.json:
            for note in tables.notes:
                print(note)
        if _print_evidence(run, analyse_run(run), args.json, payload, choices):
            code = EXIT_REJECTED
    else:
        if not args.runs:
            raise InputError("give a run document, or a standards table with --standards FILE; see curvewright compare --help.")
        _refuse_tables("compare", args.runs)
        for path in expand_runs(args.runs):
            try:
                run = open_run(path).run
                result = analyse_run(run, analytes=tuple(args.analyte) if args.analyte else None)
            except Exception as exc:  # noqa: BLE001
                from .core.errors import CurvewrightError

                if not isinstance(exc, (CurvewrightError, OSError)):
                    raise
                print(f"curvewright: {_naming(path, exc)}", file=sys.stderr)
                code = EXIT_INPUT
                continue
            if _print_evidence(run, result, args.json, payload, None):
                code = max(code, EXIT_REJECTED)
    if args.json:
        print(json.dumps(payload, indent=1, ensure_ascii=False, allow_nan=False))
    else:
        print(CAUTION)
    return code


def _print_evidence(run, result, as_json: bool, payload: list[dict[str, Any]],  # type: ignore[no-untyped-def]
                    choices: Mapping[str, ModelChoice] | None) -> bool:
    """Print (or add to ``payload``) the evidence table of each analyte; ``choices`` for a table's recommendation.
    True when for an analyte no model is recommended (no candidate is acceptable, or no comparison could
    be made: too few standards or levels for any candidate, no standards at all): ``compare`` then ends
    with exit code 1, a result that needs the analyst's decision."""
    from .core.comparison import ModelComparison
    from .io.report import evidence_table

    nothing_recommended = False
    for a in result.analytes:
        comparison = result.evidence.get(a.analyte.name)
        # no candidate acceptable, or no comparison made at all (too few standards or levels): nothing recommended
        if not isinstance(comparison, ModelComparison) or comparison.recommendation is None:
            nothing_recommended = True
        table, reasons = evidence_table(result, a)
        choice = (choices or {}).get(a.analyte.name)
        if choice is not None:  # a table holds no choice of its own: show the evidence and the recommendation
            table = table.select(tuple(c.name for c in table.columns if c.name != "Chosen"))
        if as_json:
            entry = {"run": run.name, "analyte": a.analyte.name, "columns": [c.heading for c in table.columns],
                     "rows": _finite(list(table.rows)), "reasons": [machine(r) for r in reasons]}
            if choice is not None:
                entry["recommended"] = [a.analyte.model, a.analyte.weighting] if choice.by == "recommended" else None
            payload.append(entry)
            continue
        print(f"{run.name} — {a.analyte.name}")
        print(_text_table(table))
        if choice is None:
            print(f"chosen: {a.analyte.model}, {a.analyte.weighting} — {a.analyte.choice_reason or _not_chosen_words(run, a)}")
        elif choice.by == "recommended":
            print(f"recommended: {a.analyte.model}, {a.analyte.weighting} (what quantify --standards uses unless "
                  "--model and --weighting are given)")
        elif choice.reasons and choice.reasons[0].startswith("no model recommended: "):
            print("recommended: none — no candidate is acceptable (see below); quantify --standards refuses to "
                  "quantify unless --model and --weighting are given")
        else:
            print(f"no recommendation: {'; '.join(choice.reasons)}")
        for r in reasons:
            print(f"  • {r}")
        print()
    return nothing_recommended


def _text_table(table) -> str:  # type: ignore[no-untyped-def]
    def cell(v: Any, column) -> str:  # type: ignore[no-untyped-def]
        if v is None:
            return "—"
        if isinstance(v, float) and column.display.startswith("p:") and math.isfinite(v):
            return p_text(v, int(column.display[2:]))  # "> 0.999" where the figures would read 1
        return f"{figures(v, 6)}" if isinstance(v, float) else str(v)

    rows = [[c.heading for c in table.columns]] + [[cell(v, c) for v, c in zip(r, table.columns)] for r in table.rows]
    widths = [max(len(r[i]) for r in rows) for i in range(len(rows[0]))]
    return "\n".join("  ".join(v.ljust(w) for v, w in zip(r, widths)).rstrip() for r in rows)


def cmd_check(args: argparse.Namespace) -> int:
    from .core.errors import CurvewrightError
    from .io.run_document import open_run

    code = EXIT_ACCEPTED
    _refuse_tables("check", args.runs)
    lab_key = None
    if args.lab_key:
        from .io.signatures import public_key_hex

        lab_key = public_key_hex(args.lab_key)
    for path in expand_runs(args.runs):
        try:
            opened = open_run(path)
        except (CurvewrightError, OSError) as exc:
            print(f"{path}: INVALID\n{exc}")
            code = max(code, EXIT_INPUT)
            continue
        run = opened.run
        if opened.integrity_problems:
            what = ("the audit trail does NOT verify" if opened.chain_problems else
                    "the data do NOT match the audit trail" if opened.content_change else
                    "a signature the audit trail records is missing")
            print(f"{path}: valid document, but {what}:")
            for p in opened.integrity_problems:
                print(f"  - {p}")
            code = max(code, EXIT_REJECTED)
        else:
            standards = sum(len(a.standards) for a in run.analytes)
            recorded = sum(1 for e in run.audit if e.content_sha256)
            data = ("the data match the content hash of its last entry" if recorded else
                    "no entry records a content hash (written by an earlier version), so edits to the data cannot be detected")
            print(f"{path}: valid; audit trail verified ({len(run.audit)} entries); {data}; {len(run.analytes)} "
                  f"analyte(s), {standards} standards, {len(run.samples)} samples")
        for number, entry in enumerate(run.audit, start=1):
            if entry.action == "data_changed_outside":
                from .io.audit_words import entry_words

                print(f"  entry {number} records data changed outside Curvewright: {entry_words(entry)}")
        if opened.migrated_from is not None:
            print(f"  written in schema version {opened.migrated_from}; it opens as the current version")
        code = max(code, _print_signatures(run, lab_key))
    return code


def _print_signatures(run, lab_key: str | None) -> int:  # type: ignore[no-untyped-def]
    """Each signature checked, in words; EXIT_REJECTED when one does not hold."""
    from .io.signatures import check_signatures

    checks = check_signatures(run, lab_key)
    if not checks:
        print("  no signatures")
        return EXIT_ACCEPTED
    for c in checks:
        print(f"  {'signature' if c.holds else 'signature does NOT hold'}: {c.words}")
    if run.approval is not None:
        from .io.signatures import approval_problem

        problem = approval_problem(run)
        print(f"  approved by {run.approval.name} ({run.approval.time_utc})"
              + (f", but the approval does NOT hold: {problem}" if problem else ": the run is locked"))
    return EXIT_ACCEPTED if all(c.holds for c in checks) else EXIT_REJECTED


def cmd_sign(args: argparse.Namespace) -> int:
    from .io.audit import identity_from
    from .io.run_document import update_run_document
    from .io.signatures import SigningError, sign

    from .core.run_analysis import analyse_run
    from .io.signatures import roles_signed_by

    person = identity_from(args.analyst, args.analyst_id)
    also: list[tuple[str, ...]] = []

    def signed_now(run):  # type: ignore[no-untyped-def]
        """The run as read under the document's lock, signed: its verdict analysed from that very run."""
        also[:] = [roles_signed_by(run, person, besides=args.role)]
        accepted = analyse_run(run).accepted
        if args.approve_not_accepted.strip() and (args.role != "approver" or accepted):
            raise SigningError("--approve-not-accepted: " + ("only an approval of a run whose verdict is NOT ACCEPTED "
                               "takes it" if args.role != "approver" else "the run's verdict is ACCEPTED; "
                               "nothing needs a reason") + "; nothing was signed.")
        return sign(run, args.role, person, meaning=args.meaning, key_file=args.key, verdict_accepted=accepted,
                    not_accepted_reason=args.approve_not_accepted, record_problems_reason=args.despite_record_problems)

    run = update_run_document(args.run, signed_now)
    signed = run.signatures[-1]
    problems = run.audit[-1].details.get("record_problems") or ()
    if problems:
        print(f"warning: the run's record is NOT intact ({'; '.join(problems)}); signed on your explicit confirmation "
              "and reason, which the audit trail records; 'curvewright check' still reports the problems",
              file=sys.stderr)
    keyed = " (keyed)" if signed.signature else ""
    if also and also[0]:
        print(f"warning: {signed.name} has already signed this run as {' and '.join(also[0])}; one person now signs "
              f"it in several roles (allowed where the laboratory's procedures allow it; the record says so)",
              file=sys.stderr)
    print(f"{args.run}: signed by {signed.name} as {signed.role}{keyed}: “{signed.meaning}”")
    if run.approval is not None:
        print("the run is approved and locked; edits are refused until the approval is withdrawn with a reason")
    print(CAUTION)
    return EXIT_ACCEPTED


def cmd_withdraw(args: argparse.Namespace) -> int:
    from .io.audit import identity_from
    from .io.run_document import update_run_document
    from .io.signatures import withdraw_approval

    person = identity_from(args.analyst, args.analyst_id)
    update_run_document(args.run, lambda r: withdraw_approval(r, person, args.reason))
    print(f"{args.run}: approval withdrawn by {person.name} ({args.reason}); the run can be edited again")
    return EXIT_ACCEPTED


def cmd_keys(args: argparse.Namespace) -> int:
    from .io.signatures import new_key_pair

    print(f"signing key made: private {args.private} (keep it where only signers can read it), public {args.public}; "
          f"fingerprint {new_key_pair(args.private, args.public)}")
    return EXIT_ACCEPTED


if __name__ == "__main__":  # pragma: no cover
    sys.exit(end_command(sys.argv[1:], main()))
