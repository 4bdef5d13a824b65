"""Benchmark 10: the printed calibration record against the results workbook of the same run.

For each demo run (analysed once, its model evidence computed beforehand, as in ``quantify``), the
time to build and write the PDF record is compared with the time to write the XLSX workbook, per
analyte. Both are warmed once and then timed in interleaved rounds. The record's time is split into
its parts: building the content, laying out and recording the figures, placing tables and text,
painting the pages.
Target: the record of each analyte within 1.5× the workbook export of the same run.

Run: python benchmarks/bench_record.py [--smoke]
"""

from __future__ import annotations

import os
import statistics
import tempfile
import time
from collections import Counter
from pathlib import Path

from common import ROOT, print_table, smoke_requested

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")

from curvewright.app import figures, record_layout, report_pdf  # noqa: E402
from curvewright.core.run_analysis import analyse_run  # noqa: E402
from curvewright.io import report  # noqa: E402
from curvewright.io.run_document import open_run  # noqa: E402
from curvewright.io.xlsx_export import write_xlsx  # noqa: E402

PARTS: Counter[str] = Counter()


def timed(owner, name: str, label: str) -> None:  # type: ignore[no-untyped-def]
    """Add the time spent in ``owner.name`` to PARTS[label]."""
    inner = getattr(owner, name)

    def wrapper(*args, **kwargs):  # type: ignore[no-untyped-def]
        start = time.perf_counter()
        try:
            return inner(*args, **kwargs)
        finally:
            PARTS[label] += time.perf_counter() - start

    setattr(owner, name, wrapper)


timed(figures, "figure", "laying out and recording the figures")
timed(record_layout.RecordLayout, "table", "placing the tables")
timed(record_layout.RecordLayout, "paragraph", "placing the text")
timed(record_layout.RecordLayout, "paint", "painting the pages (figures as vectors)")


def main() -> None:
    rounds = 1 if smoke_requested() else 5
    demos = sorted((ROOT / "sample_runs").glob("*.json"))[: 1 if smoke_requested() else None]
    folder = Path(tempfile.mkdtemp())
    rows, parts_rows = [], []
    for demo in demos:
        result = analyse_run(open_run(demo).run)
        _ = result.evidence  # computed once per run, as the command line does before any output
        workbook, record = folder / f"{demo.stem}.xlsx", folder / f"{demo.stem}.pdf"
        write_xlsx(result, workbook), report_pdf.write_report(report.build_report(result), record)  # warm-up
        PARTS.clear()
        xlsx, pdf, content = [], [], []
        for _ in range(rounds):
            start = time.perf_counter()
            write_xlsx(result, workbook)
            xlsx.append(time.perf_counter() - start)
            start = time.perf_counter()
            built = report.build_report(result)
            content.append(time.perf_counter() - start)
            report_pdf.write_report(built, record)
            pdf.append(time.perf_counter() - start)
        analytes = len(result.analytes)
        ratio = statistics.median(pdf) / analytes / statistics.median(xlsx)
        rows.append((demo.stem, str(analytes), f"{statistics.median(xlsx) * 1e3:.0f} ms",
                     f"{statistics.median(pdf) * 1e3:.0f} ms", f"{ratio:.1f}×", "met" if ratio <= 1.5 else "NOT met"))
        total = statistics.median(pdf)
        parts = {"building the content": statistics.median(content), **{k: v / rounds for k, v in PARTS.items()}}
        for label, seconds in parts.items():
            parts_rows.append((demo.stem, label, f"{seconds * 1e3:.0f} ms", f"{100 * seconds / total:.0f} %"))
    print_table(f"Calibration record against the results workbook (medians of {rounds} interleaved rounds)", rows,
                ("run", "analytes", "workbook", "record", "record per analyte / workbook", "target ≤ 1.5×"))
    print_table("Where the record's time goes", parts_rows, ("run", "part", "time", "share of the record"))


if __name__ == "__main__":
    main()
