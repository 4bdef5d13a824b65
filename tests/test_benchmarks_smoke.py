"""The benchmarks run, in a short smoke mode, and their results agree with the engine.

No timing is asserted here: speed targets are measured by the benchmarks themselves (benchmarks/).
The batch, model-screen and many-runs benchmarks assert their own agreement with their peers.
"""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
BENCHMARKS = sorted((ROOT / "benchmarks").glob("bench_*.py"))


@pytest.mark.parametrize("script", BENCHMARKS, ids=[p.stem for p in BENCHMARKS])
def test_benchmark_runs_in_smoke_mode(script: Path) -> None:
    env = {**os.environ, "QT_QPA_PLATFORM": "offscreen"}
    result = subprocess.run([sys.executable, str(script), "--smoke"], capture_output=True, text=True,
                            timeout=600, env=env, cwd=ROOT)
    assert result.returncode == 0, result.stdout[-2000:] + result.stderr[-2000:]
    assert "×" in result.stdout  # every benchmark reports its ratios
    if script.stem == "bench_edit_redraw":  # the parts of an edit, CPU times beside elapsed, and scrolling
        for column in ("analysis answered", "views rebuilt", "window repainted", "GUI thread CPU", "analysis CPU",
                       "scrolling the results table", "load average"):
            assert column in result.stdout, column
    if script.stem == "bench_record":  # the record's parts, the PDF writer's own work among them
        for part in ("building the content", "placing the tables", "drawing the figures on the pages",
                     "the PDF writer finishing pages and the document", "writer's own work"):
            assert part in result.stdout, part
    if script.stem == "bench_cli_start":  # CPU beside wall time, and the floor under the command's one BLAS thread
        assert "CPU ratio" in result.stdout and "one BLAS thread" in result.stdout
    if script.stem == "bench_batch_quantitation":  # the machine's load beside the ratios
        assert "load average at the start" in result.stdout and "load average at the end" in result.stdout
    if script.stem == "bench_many_runs":  # each side's CPU time beside its wall time
        assert "CPU time (median)" in result.stdout
    if script.stem == "bench_large_run":  # the command's CPU time, and its memory above the command on one unknown
        assert "CPU time of the command" in result.stdout and "the same command on one unknown" in result.stdout


def test_there_is_a_benchmark_for_each_target() -> None:
    assert {p.stem for p in BENCHMARKS} == {"bench_batch_quantitation", "bench_model_screen", "bench_app_start",
                                          "bench_edit_redraw", "bench_xlsx_export", "bench_safe_files",
                                          "bench_import_scaling", "bench_many_runs", "bench_scaling",
                                          "bench_cli_start", "bench_record", "bench_large_run"}


def test_record_benchmark_times_both_sides_with_the_collector_held_off(tmp_path: Path) -> None:
    """Benchmark 10 times the workbook and the record as ``common.interleaved`` times its sides: the
    garbage collector held off while each runs, so that a collection triggered by one side's garbage
    never lands inside the other's timing. Run as it is run, with its two timed calls observed."""
    observer = tmp_path / "observe.py"
    observer.write_text(
        "import gc, json, runpy, sys\n"
        "sys.argv = [sys.argv[1], '--smoke']\n"
        "import curvewright.io.xlsx_export as xlsx_export, curvewright.app.report_pdf as report_pdf\n"
        "seen = []\n"
        "def observed(name, inner):\n"
        "    def call(*args, **kwargs):\n"
        "        seen.append((name, gc.isenabled()))\n"
        "        return inner(*args, **kwargs)\n"
        "    return call\n"
        "xlsx_export.write_xlsx = observed('workbook', xlsx_export.write_xlsx)\n"
        "report_pdf.write_report = observed('record', report_pdf.write_report)\n"
        "sys.path.insert(0, str(__import__('pathlib').Path(sys.argv[0]).parent))\n"
        "runpy.run_path(sys.argv[0], run_name='__main__')\n"
        "print('OBSERVED ' + json.dumps({'calls': seen, 'enabled_after': gc.isenabled()}))\n"
    )
    script = ROOT / "benchmarks" / "bench_record.py"
    env = {**os.environ, "QT_QPA_PLATFORM": "offscreen",
           "PYTHONPATH": os.pathsep.join([str(ROOT / "src"), str(ROOT / "benchmarks")])}
    result = subprocess.run([sys.executable, str(observer), str(script)], capture_output=True, text=True,
                            timeout=600, env=env, cwd=ROOT)
    assert result.returncode == 0, result.stdout[-2000:] + result.stderr[-2000:]
    import json

    observed = json.loads(result.stdout.rsplit("OBSERVED ", 1)[1])
    seen = observed["calls"]
    # the smoke run: one demo run, warmed once (workbook, record), then one timed round of each
    assert [name for name, _ in seen] == ["workbook", "record", "workbook", "record"]
    assert [enabled for _, enabled in seen[2:]] == [False, False]  # timed with the collector held off
    assert observed["enabled_after"]  # and given back to the interpreter afterwards
