"""Benchmark 10: the printed calibration record against the results workbook of the same run.

For each demo run (analysed once, its model evidence computed beforehand, as in ``quantify``), the
time to build and write the PDF record is compared with the time to write the XLSX workbook, per
analyte. Both are warmed once and then timed in interleaved rounds, as elapsed time and as processor
time of this process (``time.process_time``, which the machine's other work moves much less), with the
garbage collected before each side and held off while it runs (as ``common.interleaved`` times). The
record's processor time is split into its parts: building the content, describing the figures from
the results, placing tables and text, drawing the figures on the pages, the PDF writer's own work when
a page is finished and when the document is closed (compressing each page's content, embedding the
glyphs of the two fonts used) and painting the rest of the pages (lines of text and table rules). The
writer's own work is also set against the workbook's processor time: it is a floor the record cannot
go below while it is written by Qt's PDF writer. The machine's load average is printed beside them.
Target: the record of each analyte within 1.5× the workbook export of the same run.

Run: python benchmarks/bench_record.py [--smoke]
"""

from __future__ import annotations

import gc
import os
import statistics
import tempfile
import time
from collections import Counter
from pathlib import Path

from common import ROOT, print_table, smoke_requested

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")

from PySide6.QtGui import QPainter, QPdfWriter  # noqa: E402

from curvewright.app import record_figures, record_layout, report_pdf  # noqa: E402
from curvewright.core.run_analysis import analyse_run  # noqa: E402
from curvewright.io import report  # noqa: E402
from curvewright.io.run_document import open_run  # noqa: E402
from curvewright.io.xlsx_export import write_xlsx  # noqa: E402

PARTS: Counter[str] = Counter()
PAINT = "painting the pages (all)"
WRITER = "the PDF writer finishing pages and the document"


def timed(owner, name: str, label: str) -> None:  # type: ignore[no-untyped-def]
    """Add the processor time spent in ``owner.name`` to PARTS[label]."""
    inner = getattr(owner, name)

    def wrapper(*args, **kwargs):  # type: ignore[no-untyped-def]
        start = time.process_time()
        try:
            return inner(*args, **kwargs)
        finally:
            PARTS[label] += time.process_time() - start

    setattr(owner, name, wrapper)


timed(report_pdf, "record_figure", "describing the figures")
timed(record_layout.RecordLayout, "table", "placing the tables")
timed(record_layout.RecordLayout, "paragraph", "placing the text")
timed(record_figures.PlottedFigure, "paint", "drawing the figures on the pages")
timed(record_layout.RecordLayout, "paint", PAINT)
timed(QPdfWriter, "newPage", WRITER)  # each finished page's content compressed and written
timed(QPainter, "end", WRITER)  # the last page, then the fonts' glyphs embedded and the document closed


def load_average() -> str:
    """The machine's 1, 5 and 15-minute load averages, as ``uptime`` shows them."""
    return ", ".join(f"{v:.2f}" for v in os.getloadavg())


def main() -> None:
    load_at_start = load_average()
    rounds = 1 if smoke_requested() else 5
    demos = sorted((ROOT / "sample_runs").glob("*.json"))[: 1 if smoke_requested() else None]
    folder = Path(tempfile.mkdtemp())
    rows, parts_rows, floors = [], [], []
    for demo in demos:
        result = analyse_run(open_run(demo).run)
        _ = result.evidence  # computed once per run, as the command line does before any output
        workbook, record = folder / f"{demo.stem}.xlsx", folder / f"{demo.stem}.pdf"
        write_xlsx(result, workbook), report_pdf.write_report(report.build_report(result), record)  # warm-up
        PARTS.clear()
        xlsx, pdf, content, xlsx_cpu, pdf_cpu = [], [], [], [], []
        for _ in range(rounds):
            # as in common.interleaved: one side's garbage is collected before the other is timed, and
            # none while either runs
            gc.collect()
            gc.disable()
            try:
                start, cpu = time.perf_counter(), time.process_time()
                write_xlsx(result, workbook)
                xlsx.append(time.perf_counter() - start)
                xlsx_cpu.append(time.process_time() - cpu)
            finally:
                gc.enable()
            gc.collect()
            gc.disable()
            try:
                start, cpu = time.perf_counter(), time.process_time()
                built = report.build_report(result)
                content.append(time.process_time() - cpu)
                report_pdf.write_report(built, record)
                pdf.append(time.perf_counter() - start)
                pdf_cpu.append(time.process_time() - cpu)
            finally:
                gc.enable()
        analytes = len(result.analytes)
        ratio = statistics.median(pdf) / analytes / statistics.median(xlsx)
        cpu_ratio = statistics.median(pdf_cpu) / analytes / statistics.median(xlsx_cpu)
        rows.append((demo.stem, str(analytes), f"{statistics.median(xlsx) * 1e3:.0f} ms",
                     f"{statistics.median(pdf) * 1e3:.0f} ms", f"{ratio:.1f}×",
                     f"{statistics.median(xlsx_cpu) * 1e3:.0f} / {statistics.median(pdf_cpu) * 1e3:.0f} ms",
                     f"{cpu_ratio:.1f}×", "met" if ratio <= 1.5 else "NOT met"))
        total = statistics.median(pdf_cpu)
        parts = {"building the content": statistics.median(content), **{k: v / rounds for k, v in PARTS.items()}}
        figures_drawn = parts.get("drawing the figures on the pages", 0.0)
        writer = parts.pop(WRITER, 0.0)
        parts["painting the rest of the pages"] = parts.pop(PAINT, 0.0) - figures_drawn - writer
        parts[WRITER + " (compression, font embedding)"] = writer
        floors.append((demo.stem, f"{writer / analytes * 1e3:.0f} ms",
                       f"{writer / analytes / statistics.median(xlsx_cpu):.2f}×"))
        for label, seconds in parts.items():
            parts_rows.append((demo.stem, label, f"{seconds * 1e3:.0f} ms", f"{100 * seconds / total:.0f} %"))
    print_table(f"Calibration record against the results workbook (medians of {rounds} interleaved rounds)", rows,
                ("run", "analytes", "workbook", "record", "record per analyte / workbook",
                 "CPU workbook / record", "in CPU time", "target ≤ 1.5×"))
    print_table("Where the record's time goes (processor time, mean of the rounds)", parts_rows,
                ("run", "part", "time", "share of the record"))
    print_table("The PDF writer's own work alone, per analyte, against the workbook (processor time)", floors,
                ("run", "writer's own work", "per analyte / workbook"))
    print(f"\nload average at the start {load_at_start}, at the end {load_average()}")


if __name__ == "__main__":
    main()
