"""The ``archive`` and ``trend`` commands: filing runs, listing them, and a quantity's history.

    curvewright archive add RUN… --to LOCATION       file runs (the same content twice is one entry)
    curvewright archive list --at LOCATION [--analyte A]
    curvewright archive show --at LOCATION [--analyte A] [--quantity Q]   the History view
    curvewright trend --at LOCATION --analyte A [--quantity slope] [--json] [--export x.xlsx]

LOCATION is a folder (a SQLite archive is kept in it), a .sqlite file, ``sqlite:///PATH`` or
``postgresql://USER@HOST:PORT/DATABASE``; without ``--to``/``--at`` it is taken from
``CURVEWRIGHT_ARCHIVE_URL``. Exit codes as for the other commands: 0 done; 1 a filed run breaks a
trend rule its acceptance profile makes a failure, or a run's record is not intact (the
problems ``curvewright check`` reports: it is not filed, or filed marked with ``--despite-problems``);
2 input error (a run that could not be filed,
an archive that cannot be reached); 3 internal error.
"""

from __future__ import annotations

import argparse
import json
import sys
from datetime import date
from pathlib import Path
from typing import Any

from . import CAUTION
from .core.errors import CurvewrightError

ARCHIVE_EPILOG = f"""\
examples:
  curvewright archive add sample_runs/*.json --to ~/lab-archive
  curvewright archive add run.json --to postgresql://analyst@archive.lab:5432/calibrations
  curvewright archive list --at ~/lab-archive --analyte copper
  curvewright archive show --at ~/lab-archive --analyte copper --quantity slope
  curvewright trend --at ~/lab-archive --analyte copper --quantity qc_recovery@10 --export copper-qc.xlsx

where the archive is (--to, --at):
  a folder (the SQLite archive curvewright-archive.sqlite is kept in it), a .sqlite file,
  sqlite:///PATH, or postgresql://USER@HOST:PORT/DATABASE; default: $CURVEWRIGHT_ARCHIVE_URL.
  Never put a password in a command: PostgreSQL reads it from PGPASSWORD or ~/.pgpass.

quantities (--quantity):
  slope, intercept, curvature, residual_sd, r, rf_rsd_percent, lloq, is_response, and the
  recoveries KIND_recovery@NOMINAL (KIND qc, icv, ccv, check_standard, low_level_check),
  e.g. qc_recovery@150; curvewright trend lists those filed for the analyte.

control rules (Westgard et al., Clin. Chem. 27 (1981) 493-501): 1-3s, 2-2s, R-4s, 4-1s, 10-x,
judged against the mean ± 2 s and ± 3 s of a baseline: the first 20 accepted runs, or
--baseline-runs N, or the accepted runs from --baseline-from DATE to --baseline-to DATE.

exit codes:
  0  done
  1  a filed run breaks a trend rule that its acceptance profile makes a failure, or a run's record
     is not intact (the problems curvewright check reports): not filed, or filed marked with
     --despite-problems
  2  input error: a run could not be filed (the others are), or the archive cannot be used
  3  internal error in Curvewright

{CAUTION}
"""


def add_parsers(sub: Any) -> None:
    """Add ``archive`` and ``trend`` to the command parser's subcommands."""
    fmt = argparse.RawDescriptionHelpFormatter
    a = sub.add_parser("archive", help="file runs into the laboratory's archive, list them, show their history",
                       epilog=ARCHIVE_EPILOG, formatter_class=fmt)
    actions = a.add_subparsers(dest="archive_command", metavar="ACTION")
    add = actions.add_parser("add", help="file run documents into an archive", epilog=ARCHIVE_EPILOG, formatter_class=fmt)
    add.add_argument("runs", nargs="+", metavar="RUN", help="run documents, folders of them, or glob patterns")
    add.add_argument("--to", metavar="LOCATION", help="the archive (default: $CURVEWRIGHT_ARCHIVE_URL)")
    add.add_argument("--despite-problems", action="store_true",
                     help="file runs whose record is not intact (the problems curvewright check reports) all the "
                          "same, marked with their problems and kept out of the control limits")
    _baseline_options(add)
    add.add_argument("--json", action="store_true", help="print what was filed as JSON for scripts")
    listing = actions.add_parser("list", help="the runs filed in an archive", epilog=ARCHIVE_EPILOG, formatter_class=fmt)
    listing.add_argument("--at", metavar="LOCATION", help="the archive (default: $CURVEWRIGHT_ARCHIVE_URL)")
    listing.add_argument("--analyte", metavar="NAME", help="only the runs with this analyte")
    listing.add_argument("--json", action="store_true")
    show = actions.add_parser("show", help="open the History view (control charts) of an archive",
                              epilog=ARCHIVE_EPILOG, formatter_class=fmt)
    show.add_argument("--at", metavar="LOCATION", help="the archive (default: $CURVEWRIGHT_ARCHIVE_URL)")
    show.add_argument("--analyte", metavar="NAME", help="the analyte to show first")
    show.add_argument("--quantity", metavar="QUANTITY", default="slope", help="the quantity to show first (default slope)")
    show.add_argument("--run", metavar="RUN", help="a run document to mark as today's run")

    t = sub.add_parser("trend", help="a tracked quantity through the archive: control limits and rules",
                       epilog=ARCHIVE_EPILOG, formatter_class=fmt)
    t.add_argument("--at", metavar="LOCATION", help="the archive (default: $CURVEWRIGHT_ARCHIVE_URL)")
    t.add_argument("--analyte", required=True, metavar="NAME")
    t.add_argument("--quantity", default="slope", metavar="QUANTITY", help="default: slope (see below)")
    t.add_argument("--method", metavar="KEY", help="'PROFILE | MODEL | WEIGHTING' (default: the latest run's)")
    t.add_argument("--run", metavar="RUN", help="a run document to judge as today's run (filed or not)")
    _baseline_options(t)
    t.add_argument("--json", action="store_true", help="print the history as JSON for scripts")
    t.add_argument("--export", metavar="PATH", help="write the history as a workbook (.xlsx)")


def _baseline_options(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("--baseline-runs", type=int, metavar="N",
                        help="control limits from the first N accepted runs (default 20)")
    parser.add_argument("--baseline-from", metavar="DATE", help="control limits from the accepted runs from this "
                        "date (YYYY-MM-DD)")
    parser.add_argument("--baseline-to", metavar="DATE", help="... up to this date (YYYY-MM-DD), included")


def _baseline(args: argparse.Namespace):  # type: ignore[no-untyped-def]
    from .core.trends import DEFAULT_BASELINE_RUNS, Baseline

    def day(option: str, text: str | None) -> date | None:
        if text is None:
            return None
        try:
            return date.fromisoformat(text)
        except ValueError:
            raise _input(f"--{option}: {text!r} is not a date; write YYYY-MM-DD, e.g. 2026-01-31.") from None

    start, end = day("baseline-from", args.baseline_from), day("baseline-to", args.baseline_to)
    if (start or end) and args.baseline_runs is not None:
        raise _input("give the baseline either as --baseline-runs N or as a date range (--baseline-from, "
                     "--baseline-to), not both.")
    return Baseline(args.baseline_runs or DEFAULT_BASELINE_RUNS, start, end)


class CommandError(CurvewrightError, ValueError):
    """An option or file given to ``archive`` or ``trend`` cannot be used (exit code 2)."""


def _input(message: str) -> Exception:
    return CommandError(message)


def _expand(patterns: list[str]) -> list[Path]:
    """The run documents named, as ``quantify`` finds them."""
    from . import cli

    try:
        return cli.expand_runs(patterns)
    except cli.InputError as exc:
        raise CommandError(str(exc)) from None


def cmd_archive(args: argparse.Namespace) -> int:
    if args.archive_command is None:
        raise _input("give an action: curvewright archive add|list|show (see curvewright archive --help).")
    return {"add": _add, "list": _list, "show": _show}[args.archive_command](args)


def _add(args: argparse.Namespace) -> int:
    from .cli import EXIT_ACCEPTED, EXIT_INPUT, EXIT_REJECTED
    from .core.run_analysis import analyse_run
    from .io.archive import RecordNotIntact, TrendVerdict, judge_run, open_archive
    from .io.run_document import open_run

    baseline = _baseline(args)
    paths = _expand(args.runs)
    code = EXIT_ACCEPTED
    report: list[dict[str, Any]] = []
    with open_archive(args.to, create=True) as archive:
        if not args.json:
            print(f"Archive: {archive.location.shown}")
        for path in paths:
            try:
                opened = open_run(path)
                result = analyse_run(opened.run)
                receipt = archive.file(opened.run, source=str(path), result=result,
                                       despite_problems=args.despite_problems, chain_problems=opened.chain_problems)
            except RecordNotIntact as refused:
                print(f"curvewright: {path}: not filed: {refused.what}:\n"
                      + "".join(f"  - {p}\n" for p in refused.problems)
                      + "  the archive keeps only runs whose record is intact (curvewright check shows the "
                      "same problems); to file it all the same, marked and kept out of the control limits, "
                      "give --despite-problems.", file=sys.stderr)
                code = max(code, EXIT_REJECTED)
                report.append({"file": str(path), "error": f"not filed: {refused.what}",
                               "problems": list(refused.problems)})
                continue
            except (CurvewrightError, OSError) as exc:
                code = max(code, EXIT_INPUT)
                text = str(exc) if str(exc).startswith("not filed") else f"not filed: {exc}"
                print(f"curvewright: {path}: {text}", file=sys.stderr)
                report.append({"file": str(path), "error": text})
                continue
            try:
                verdict = judge_run(archive, result, baseline)
            except CurvewrightError as exc:  # filed, but its history could not be judged (a malformed profile)
                code = max(code, EXIT_INPUT)
                verdict = TrendVerdict((), (f"the trend rules could not be judged: {exc}",), baseline)
                print(f"curvewright: {path}: filed, but the trend rules could not be judged: {exc}", file=sys.stderr)
            if not verdict.passed or receipt.run.record_problems:
                code = max(code, EXIT_REJECTED)
            entry = receipt.run
            report.append({"file": str(path), "run": entry.name, "entry": entry.entry, "sha256": entry.key,
                           "filed": receipt.new, "filed_utc": entry.filed_utc, "filed_by": entry.filed_by,
                           "accepted": entry.accepted, "record_problems": entry.record_problems,
                           "trend_rules_passed": verdict.passed,
                           "trend_findings": [{"analyte": f.analyte, "quantity": f.quantity, "value": f.value, "z": f.z,
                                               "rule": f.rule_break.rule, "words": f.rule_break.words,
                                               "failing": f.failing, "provisional_limits": f.provisional}
                                              for f in verdict.findings],
                           "trend_notes": list(verdict.notes)})
            if args.json:
                continue
            if receipt.new:
                print(f"filed: {entry.name} ({path}) as entry {entry.entry}, SHA-256 {entry.key[:16]}…")
                if entry.record_problems:
                    print(f"  marked: its record is NOT intact ({entry.record_problems}); filed on request "
                          "(--despite-problems), it never sets control limits")
            else:
                print(f"already filed: {entry.name} ({path}) is entry {entry.entry}, filed {entry.filed_utc} by "
                      f"{entry.filed_by}; nothing added")
            print("\n".join(f"  {line}" for line in verdict.lines()))
    if args.json:
        print(json.dumps({"archive": archive.location.shown, "runs": report, "caution": CAUTION}, indent=1,
                         ensure_ascii=False, allow_nan=False))
    else:
        print(CAUTION)
    return code


def _list(args: argparse.Namespace) -> int:
    from .io.archive import open_archive

    with open_archive(args.at) as archive:
        entries = archive.entries(args.analyte)
        version = archive.version
        if args.analyte and not entries:
            known = archive.analytes()
            raise _input(f"{archive.location.shown}: no run of analyte {args.analyte!r} is filed (analytes filed: "
                         f"{', '.join(known) or 'none'}).")
    shown = archive.location.shown
    if args.json:
        print(json.dumps({"archive": shown, "schema_version": version, "runs": [
            {"entry": e.entry, "run": e.name, "run_date": e.run_date, "sha256": e.key, "accepted": e.accepted,
             "filed_utc": e.filed_utc, "filed_by": e.filed_by, "source": e.source,
             "software_version": e.software_version, "record_problems": e.record_problems,
             "analytes": [{"name": a.name, "method": a.method_key, "accepted": a.accepted, "error": a.error}
                          for a in e.analytes]} for e in entries], "caution": CAUTION}, indent=1, ensure_ascii=False))
        return 0
    kind = "SQLite" if archive.location.kind == "sqlite" else "PostgreSQL"
    print(f"Archive: {shown} ({kind}, schema version {version}); {len(entries)} run{'s' if len(entries) != 1 else ''}"
          + (f" with analyte {args.analyte}" if args.analyte else ""))
    heading = ("entry", "run date", "run", "analytes (method; verdict)", "SHA-256", "filed")
    rows = [heading] + [(str(e.entry), e.run_date[:10], e.name + (" (record NOT intact)" if e.record_problems else ""),
                         "; ".join(f"{a.name} ({a.method_key}; {'accepted' if a.accepted else 'NOT accepted'})"
                                   for a in e.analytes if args.analyte in (None, a.name)),
                         e.key[:12] + "…", f"{e.filed_utc} by {e.filed_by}") for e in entries]
    widths = [max(len(r[i]) for r in rows) for i in range(len(heading))]
    for r in rows:
        print("  ".join(c.rjust(w) if i == 0 else c.ljust(w) for i, (c, w) in enumerate(zip(r, widths))).rstrip())
    print(CAUTION)
    return 0


def _show(args: argparse.Namespace) -> int:
    from .io.archive import locate

    from .app.qt_runtime import window_problem

    location = locate(args.at)
    problem = window_problem()
    if problem is not None:
        at = f" --at {args.at}" if args.at else ""
        raise _input(f"archive show opens a window, and {problem}. Run it in a desktop session, or see the same "
                     f"history as text, JSON or a workbook: curvewright trend{at} --analyte "
                     f"{args.analyte or 'ANALYTE'} --quantity {args.quantity} [--json] [--export history.xlsx].")
    from .app.history_view import run_history_app

    return run_history_app(location.remembered if not location.has_password else args.at, analyte=args.analyte,
                           quantity=args.quantity, run_path=Path(args.run) if args.run else None)


def cmd_trend(args: argparse.Namespace) -> int:
    from .core.run_analysis import analyse_run
    from .io.archive import Today, history, open_archive
    from .io.archive.trend_tables import history_json, history_text, write_history_workbook
    from .io.run_document import open_run

    baseline = _baseline(args)
    if args.export and not args.export.lower().endswith(".xlsx"):
        raise _input(f"--export: {args.export} should end in .xlsx.")
    today = Today.of(analyse_run(open_run(args.run).run)) if args.run else None
    with open_archive(args.at) as archive:
        h = history(archive, args.analyte, args.quantity, method=args.method, baseline=baseline, today=today)
        shown = archive.location.shown
    written = ""
    if args.export:
        sha = write_history_workbook(h, shown, args.export)
        written = f"workbook written: {args.export} (SHA-256 {sha[:16]}…)"
    if args.json:
        data = history_json(h, shown)
        data["files_written"] = [{"path": args.export, "sha256": sha}] if args.export else []
        print(json.dumps(data, indent=1, ensure_ascii=False, allow_nan=False))
    else:
        print(history_text(h, shown))
        if written:
            print(written)
        print(CAUTION)
    return 0
