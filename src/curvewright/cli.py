"""The ``curvewright`` command: a thin layer over the core and io packages.

Exit codes (also in ``curvewright --help``):
  0  completed; every run accepted (for ``check``: valid and the audit trail verifies)
  1  completed, but a run failed its acceptance profile (``check``: the audit trail does not verify)
  2  input error: a file or an option could not be used (the message names the row and field)
  3  internal error: a fault in Curvewright itself; please report it
"""

from __future__ import annotations

import argparse
import glob
import json
import os
import sys
import traceback
from concurrent.futures import ProcessPoolExecutor
from dataclasses import dataclass, replace
from pathlib import Path
from typing import Any, Sequence

from . import CAUTION, __version__

EXIT_ACCEPTED, EXIT_REJECTED, EXIT_INPUT, EXIT_INTERNAL = 0, 1, 2, 3

EPILOG = f"""\
examples:
  curvewright quantify sample_runs/nitrate_water_linear.json
  curvewright quantify run.json --export results.xlsx --report record.pdf
  curvewright quantify run.json --model quadratic --weighting 1/x --json
  curvewright quantify --standards standards.csv --samples samples.csv --analyte lead \\
      --concentration-unit "µg/L" --export results.csv
  curvewright quantify "incoming/*.json" --export out/ --report out/ --jobs 2
  curvewright compare run.json
  curvewright check run.json

exit codes:
  0  completed; every run accepted (check: valid, audit trail verified)
  1  completed, but a run failed its acceptance profile (check: audit trail not verified)
  2  input error (the message names the file, row and field)
  3  internal error in Curvewright

{CAUTION}
"""


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="curvewright",
        description="Calibration curves for testing laboratories: fit, diagnose, quantify and report. "
        "Without a command, opens the desktop app: curvewright [RUN.json | --demo [NAME]].",
        epilog=EPILOG,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    parser.add_argument("--version", action="version", version=f"curvewright {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")

    q = sub.add_parser("quantify", help="fit, quantify every sample, and optionally export and report",
                       epilog=EPILOG, formatter_class=argparse.RawDescriptionHelpFormatter)
    q.add_argument("runs", nargs="*", metavar="RUN", help="run documents, folders of them, or glob patterns")
    q.add_argument("--standards", metavar="FILE", help="standards table (CSV or XLSX) instead of a run document")
    q.add_argument("--samples", metavar="FILE", help="samples table (CSV or XLSX), with --standards")
    q.add_argument("--sheet", help="sheet of an XLSX table (default: the first)")
    q.add_argument("--analyte", action="append", metavar="NAME",
                   help="analyte to process (repeatable; default all); with --standards, the analyte's name")
    q.add_argument("--concentration-unit", default=None, help="with --standards: unit of concentration")
    q.add_argument("--response-unit", default=None, help="with --standards: unit of response")
    q.add_argument("--decimal-mark", choices=(".", ","), help="decimal mark of the tables (default: detected)")
    q.add_argument("--model", choices=("linear", "quadratic", "proportional"), help="override the run's model")
    q.add_argument("--weighting", choices=("none", "1/x", "1/x^2", "1/y", "1/y^2", "1/s^2"), help="override the weighting")
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

    c = sub.add_parser("compare", help="the model-evidence table for each analyte")
    c.add_argument("runs", nargs="+", metavar="RUN")
    c.add_argument("--analyte", action="append", metavar="NAME")
    c.add_argument("--json", action="store_true")

    k = sub.add_parser("check", help="validate run documents and their audit trails")
    k.add_argument("runs", nargs="+", metavar="RUN")
    return parser


class InputError(Exception):
    """An option or file the user gave cannot be used (exit 2)."""


COMMANDS = ("quantify", "compare", "check")


def main(argv: Sequence[str] | None = None) -> int:
    argv = list(sys.argv[1:] if argv is None else argv)
    if not argv or argv[0] == "--demo" or (argv[0] not in COMMANDS and not argv[0].startswith("-")):
        return open_app(argv)
    parser = build_parser()
    args = parser.parse_args(argv)
    if args.command is None:
        parser.print_help()
        return EXIT_ACCEPTED
    try:
        return {"quantify": cmd_quantify, "compare": cmd_compare, "check": cmd_check}[args.command](args)
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
@dataclass(frozen=True)
class Outcome:
    code: int
    text: str
    data: dict[str, Any] | None
    error: str = ""


def cmd_quantify(args: argparse.Namespace) -> int:
    if args.level is not None and not (0 < args.level < 1):
        raise InputError(f"--level: {args.level} must lie between 0 and 1 (e.g. 0.95).")
    if args.jobs < 1:
        raise InputError(f"--jobs: {args.jobs} must be 1 or more.")
    if args.standards:
        if args.runs:
            raise InputError("give either run documents or --standards/--samples, not both.")
        outcomes = [_quantify_tables(args)]
    else:
        if args.samples:
            raise InputError("--samples goes with --standards.")
        if not args.runs:
            raise InputError("give a run document (or --standards and --samples); see curvewright quantify --help.")
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
        data = [o.data if o.data is not None else {"error": o.error, "exit_code": o.code} for o in outcomes]
        print(json.dumps(data[0] if len(data) == 1 else data, indent=1, ensure_ascii=False, allow_nan=False))
    else:
        for o in outcomes:
            if o.text:
                print(o.text)
            if o.error:
                print(f"curvewright: {o.error}", file=sys.stderr)
        print(CAUTION)
    return max(o.code for o in outcomes)


def _run_many(paths: list[Path], args: argparse.Namespace) -> list[Outcome]:
    progress = _Progress(len(paths)) if len(paths) > 1 else None
    settings = _options(args)
    if args.jobs > 1 and len(paths) > 1:
        with ProcessPoolExecutor(max_workers=args.jobs) as pool:
            outcomes = []
            for path, outcome in zip(paths, pool.map(_quantify_file, paths, [settings] * len(paths))):
                outcomes.append(outcome)
                if progress:
                    progress.step(path.name)
    else:
        outcomes = []
        for path in paths:
            outcomes.append(_quantify_file(path, settings))
            if progress:
                progress.step(path.name)
    if progress:
        progress.done()
    return outcomes


def _options(args: argparse.Namespace) -> dict[str, Any]:
    return {k: getattr(args, k) for k in ("analyte", "model", "weighting", "profile", "level", "export", "export_format",
                                          "csv_delimiter", "csv_decimal", "report", "record", "json")}


def _quantify_file(path: Path, options: dict[str, Any]) -> Outcome:
    """One run document, start to finish; never raises (the outcome carries the exit code)."""
    from .core.errors import CurvewrightError
    from .io.run_document import open_run

    try:
        opened = open_run(path)
        notes = [f"warning: {p}" for p in opened.chain_problems]
        return _quantify(opened.run, options, source=path, notes=notes)
    except (CurvewrightError, OSError, InputError) as exc:
        return Outcome(EXIT_INPUT, "", None, f"{path}: {exc}")
    except Exception as exc:  # noqa: BLE001 - reported as an internal error with its trace
        return Outcome(EXIT_INTERNAL, "", None, f"{path}: internal error: {exc!r}\n{traceback.format_exc()}")


def _quantify_tables(args: argparse.Namespace) -> Outcome:
    from .io import run_edits
    from .io.importing import analytes_from_import, import_samples, import_standards

    if not args.samples:
        raise InputError("--standards needs --samples (the table of samples to quantify).")
    if args.analyte and len(args.analyte) > 1:
        raise InputError("with --standards, give at most one --analyte (the analyte's name).")
    name = args.analyte[0] if args.analyte else "analyte"
    std = import_standards(_table(args.standards, args.sheet), decimal_mark=args.decimal_mark, analyte=name)
    smp = import_samples(_table(args.samples, args.sheet), decimal_mark=args.decimal_mark, analyte=std.standards[0][0] if std.standards else name)
    problems = [f"{r.source}: {c}" for r in (std, smp) for c in r.rejected]
    if problems:
        raise InputError("cells could not be read, so nothing was quantified:\n  " + "\n  ".join(problems))
    analytes = analytes_from_import(std, concentration_unit=args.concentration_unit, response_unit=args.response_unit)
    analytes = tuple(replace(a, model=args.model or "linear", weighting=args.weighting or "none",
                             choice_reason="given on the command line") for a in analytes)
    run = run_edits.new_run(Path(args.standards).stem, analytes, description=f"built from {args.standards} and {args.samples}")
    run = replace(run, samples=smp.samples)
    for result, what in ((std, "standards"), (smp, "samples")):
        run = run_edits.record(run, "imported", {"what": what, "source": result.source, "sha256": result.sha256})
    options = _options(args)
    options["analyte"] = None
    options["record"] = False
    options["inputs"] = {"standards table": args.standards, "samples table": args.samples}
    return _quantify(run, options, source=None, notes=[])


def _table(path: str, sheet: str | None):  # type: ignore[no-untyped-def]
    from .io.tables import table_from_csv, table_from_xlsx

    return table_from_xlsx(path, sheet) if path.lower().endswith((".xlsx", ".xlsm")) else table_from_csv(path)


def _quantify(run, options: dict[str, Any], *, source: Path | None, notes: list[str]) -> Outcome:  # type: ignore[no-untyped-def]
    from .core.run_analysis import analyse_run
    from .io.atomic import ensure_not_input
    from .io.run_document import append_to_run_document

    settings = run.settings
    if options["level"] is not None:
        settings = replace(settings, confidence_level=options["level"])
    if options["profile"]:
        from .core.acceptance import load_profile

        profile = load_profile(options["profile"])
        settings = replace(settings, acceptance_profile=profile.id, custom_profile=profile.to_mapping())
    run = replace(run, settings=settings)
    names = tuple(options["analyte"]) if options["analyte"] else None
    result = analyse_run(run, analytes=names, model=options["model"], weighting=options["weighting"])
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
        append_to_run_document(source, [(action, {"path": path, "sha256": sha}) for action, path, sha in written])
    code = EXIT_ACCEPTED if result.accepted else EXIT_REJECTED
    data = result_json(result, source, written) if options["json"] else None
    return Outcome(code, "" if options["json"] else summary_text(result, source, notes, written), data)


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
def summary_text(result, source: Path | None, notes: list[str], written: list[tuple[str, str, str]]) -> str:  # type: ignore[no-untyped-def]
    from .io.result_tables import display_number

    run = result.run
    lines = [f"Run: {run.name}" + (f"  ({source})" if source else ""),
             f"Profile: {result.profile.name}; verdict: {'ACCEPTED' if result.accepted else 'NOT ACCEPTED'}"]
    lines += notes
    for a in result.analytes:
        unit = a.analyte.concentration_unit
        lines.append("")
        lines.append(f"{a.analyte.name} ({unit})")
        if a.calibration is None:
            lines.append(f"  not fitted: {a.error}")
            continue
        cal = a.calibration
        given = " (given on the command line)" if a.model_overridden else ""
        lines.append(f"  model: {cal.model.description}, {cal.weighting.description}{given}")
        lines.append(f"  {cal.equation(10)}")
        lof = cal.lack_of_fit
        lof_text = (f"lack-of-fit F = {lof.f_statistic:.4g}, p = {lof.p_value:.3g}" if lof.available
                    else f"lack of fit not tested ({lof.reason})")
        lines.append(f"  residual SD {cal.residual_sd:.6g}; adjusted R² {cal.adjusted_r_squared:.6f}; {lof_text}")
        if a.limits:
            loq = f"{a.limits.loq:.4g}" if a.limits.loq is not None else "not defined"
            lines.append(f"  LOD {a.limits.lod:.4g} {unit}, LOQ {loq} {unit} ({a.limits.description})")
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
        rule = run.settings.rounding
        lines.append(f"  {'sample':<24} {'reported':>12} {'interval (' + f'{run.settings.confidence_level:.0%}' + ')':>26}  flags")
        for s in a.samples:
            if s.reported is None:
                lines.append(f"  {s.sample_id[:24]:<24} {'—':>12} {'':>26}  {s.flag_words}")
                continue
            interval = f"{display_number(s.reported_lower, 5)} – {display_number(s.reported_upper, 5)}"
            lines.append(f"  {s.sample_id[:24]:<24} {rule.text(s.reported):>12} {interval:>26}  {s.flag_words}")
    for action, path, sha in written:
        lines.append(f"{'workbook' if action == 'export_written' else 'report'} written: {path} (SHA-256 {sha[:16]}…)")
    return "\n".join(lines)


def _plain(value: Any) -> Any:
    """JSON-safe: non-finite floats become null (the flags say why)."""
    if isinstance(value, float):
        return value if value == value and value not in (float("inf"), float("-inf")) else None
    if isinstance(value, (list, tuple)):
        return [_plain(v) for v in value]
    if isinstance(value, dict):
        return {k: _plain(v) for k, v in value.items()}
    if hasattr(value, "tolist"):
        return _plain(value.tolist())
    return value


def result_json(result, source: Path | None, written: list[tuple[str, str, str]]) -> dict[str, Any]:  # type: ignore[no-untyped-def]
    from .io.audit import verify_chain

    run = result.run
    out: dict[str, Any] = {
        "run": run.name, "source": str(source) if source else None, "software_version": __version__,
        "accepted": result.accepted, "reasons": list(result.reasons), "profile": result.profile.name,
        "confidence_level": run.settings.confidence_level, "interval": run.settings.interval,
        "audit_chain_verified": not verify_chain(run.audit), "caution": CAUTION,
        "files_written": [{"kind": a, "path": p, "sha256": s} for a, p, s in written], "analytes": [],
    }
    for a in result.analytes:
        entry: dict[str, Any] = {"name": a.analyte.name, "concentration_unit": a.analyte.concentration_unit,
                                 "response_unit": a.analyte.response_unit, "error": a.error, "accepted": a.accepted}
        cal = a.calibration
        if cal is not None:
            lof = cal.lack_of_fit
            entry.update({
                "model": cal.model.value, "weighting": cal.weighting.value, "model_overridden": a.model_overridden,
                "choice_reason": a.analyte.choice_reason, "equation": cal.equation(17),
                "coefficients": cal.coefficients, "standard_errors": cal.standard_errors, "covariance": cal.covariance,
                "residual_sd": cal.residual_sd, "df_residual": cal.df_residual, "r_squared": cal.r_squared,
                "adjusted_r_squared": cal.adjusted_r_squared, "calibrated_range": list(cal.calibrated_range),
                "lack_of_fit": {"available": lof.available, "reason": lof.reason, "f_statistic": lof.f_statistic,
                                "df_lack_of_fit": lof.df_lack_of_fit, "df_pure_error": lof.df_pure_error,
                                "p_value": lof.p_value},
                "limits": None if a.limits is None else {"method": a.limits.method, "description": a.limits.description,
                                                         "lod": a.limits.lod, "loq": a.limits.loq},
                "verdict": {"passed": a.verdict.passed, "reasons": list(a.verdict.reasons)} if a.verdict else None,
                "qc_verdict": {"passed": a.qc_verdict.passed, "reasons": list(a.qc_verdict.reasons)} if a.qc_verdict else None,
                "standards": [
                    {"id": s.id, "concentration": s.concentration, "response": cal.response[i],
                     "back_calculated": cal.back_calculated[i], "relative_error": cal.relative_error[i],
                     "leverage": cal.leverage[i], "cooks_distance": cal.cooks_distance[i],
                     "studentized_residual": cal.studentized_residuals[i],
                     "influence_flags": [f.name.lower() for f in cal.influence_flags[i]],
                     "within_limits": bool(a.verdict.passing[i]) if a.verdict else None}
                    for i, s in enumerate(a.fitted_standards)
                ],
                "excluded_standards": [{"id": s.id, "reason": s.exclusion_reason} for s in a.excluded_standards],
            })
        entry["samples"] = [
            {"id": s.sample_id, "kind": s.kind.value, "run_order": s.run_order, "replicates": len(s.replicate_responses),
             "mean_response": s.mean_response, "estimate": s.estimate, "standard_error": s.standard_error,
             "lower": s.lower, "upper": s.upper, "dilution_factor": s.dilution_factor, "reported": s.reported,
             "reported_lower": s.reported_lower, "reported_upper": s.reported_upper,
             "reported_rounded": None if s.reported is None else run.settings.rounding.text(s.reported),
             "flags": [f.name.lower() for f in s.flags] if s.flags is not None else [],
             "flag_words": s.flag_words, "nominal": s.nominal, "recovery_percent": s.recovery_percent}
            for s in a.samples
        ]
        out["analytes"].append(entry)
    return _plain(out)


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
    from .core.run_analysis import analyse_run
    from .io.report import evidence_table
    from .io.run_document import open_run

    code = EXIT_ACCEPTED
    payload = []
    for path in expand_runs(args.runs):
        try:
            run = open_run(path).run
            result = analyse_run(run, analytes=tuple(args.analyte) if args.analyte else None)
        except Exception as exc:  # noqa: BLE001
            from .core.errors import CurvewrightError

            if not isinstance(exc, (CurvewrightError, OSError)):
                raise
            print(f"curvewright: {path}: {exc}", file=sys.stderr)
            code = EXIT_INPUT
            continue
        for a in result.analytes:
            table, reasons = evidence_table(a)
            if args.json:
                payload.append({"run": run.name, "analyte": a.analyte.name,
                                "columns": [c.heading for c in table.columns], "rows": _plain(list(table.rows)),
                                "reasons": list(reasons)})
                continue
            print(f"{run.name} — {a.analyte.name}")
            print(_text_table(table))
            print(f"chosen: {a.analyte.model}, {a.analyte.weighting} — {a.analyte.choice_reason or '(no reason recorded)'}")
            for r in reasons:
                print(f"  • {r}")
            print()
    if args.json:
        print(json.dumps(payload, indent=1, ensure_ascii=False, allow_nan=False))
    else:
        print(CAUTION)
    return code


def _text_table(table) -> str:  # type: ignore[no-untyped-def]
    def cell(v: Any) -> str:
        if v is None:
            return "—"
        return f"{v:.6g}" if isinstance(v, float) else str(v)

    rows = [[c.heading for c in table.columns]] + [[cell(v) for v in r] for r in table.rows]
    widths = [max(len(r[i]) for r in rows) for i in range(len(rows[0]))]
    return "\n".join("  ".join(v.ljust(w) for v, w in zip(r, widths)).rstrip() for r in rows)


def cmd_check(args: argparse.Namespace) -> int:
    from .core.errors import CurvewrightError
    from .io.run_document import open_run

    code = EXIT_ACCEPTED
    for path in expand_runs(args.runs):
        try:
            opened = open_run(path)
        except (CurvewrightError, OSError) as exc:
            print(f"{path}: INVALID\n{exc}")
            code = max(code, EXIT_INPUT)
            continue
        run = opened.run
        if opened.chain_problems:
            print(f"{path}: valid document, but the audit trail does NOT verify:")
            for p in opened.chain_problems:
                print(f"  - {p}")
            code = max(code, EXIT_REJECTED)
        else:
            standards = sum(len(a.standards) for a in run.analytes)
            print(f"{path}: valid; audit trail verified ({len(run.audit)} entries); {len(run.analytes)} analyte(s), "
                  f"{standards} standards, {len(run.samples)} samples")
        if opened.migrated_from is not None:
            print(f"  written in schema version {opened.migrated_from}; it opens as the current version")
    return code


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
