"""Benchmark 11: one run of very many unknowns through the command line, against the engine alone.

A standards table (six levels in duplicate, an invented manganese calibration of the Larkmoor water
laboratory) and a samples table of N unknowns, one reading each, are written as CSV the way a
spreadsheet writes them. ``curvewright quantify --standards … --samples … --json`` runs as a fresh
process, its JSON going to a file, with its peak resident memory taken from the operating system
(the kernel's high-water mark, read by the process itself). The engine's side is ``Calibration.quantify`` on the same responses with the same
model and weighting, the calibration fitted beforehand: the numerical work alone.

Figures: wall time over the engine's time (target ≤ 5×) and peak resident memory per unknown, as
measured and above the floor of a process that has imported numpy and scipy (target ≤ 1 KB). The
command asks for one BLAS thread (unless the user chose); the floor process is started the same
way. Beside it, the same command on a table of one unknown: what the command holds whatever the
number of unknowns (the modules of the model comparison among them), and the peak per unknown
above that. The command's CPU time (user + system) is printed beside its wall time, and its bytecode
is written in the warm-up, as an installed program has it.
Both sides are run in interleaved rounds after a warm-up; every estimate and interval end of the
command's JSON is compared with the engine's.

The floor of any command that writes a JSON row per unknown is measured beside it and printed in
the same units: starting a process that imports numpy and scipy.special, reading the samples CSV
with the ``csv`` module into floats, and writing the command's own rows (parsed back) as JSON text
with ``json.dumps``, one row at a time; each against 5× the engine's time.

Run: python benchmarks/bench_large_run.py [--smoke] [--unknowns N] [--rounds R]
"""

from __future__ import annotations

import csv
import json
import os
import resource
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np
from common import ROOT, interleaved, print_table, smoke_requested

import curvewright as cw

LEVELS = (0.5, 1.0, 2.0, 5.0, 10.0, 20.0)
SENSITIVITY = 100.2  # counts per µg/L, invented


def write_tables(folder: Path, unknowns: int) -> tuple[Path, Path, np.ndarray, np.ndarray, np.ndarray]:
    rng = np.random.default_rng(11)
    x = np.repeat(LEVELS, 2)
    y = np.round(x * SENSITIVITY * (1 + rng.normal(0, 0.004, x.size)) + rng.normal(0, 0.3, x.size), 3)
    standards = folder / "mn_standards.csv"
    rows = [f"Mn-{i + 1:02d},L{i // 2 + 1},{c:g},{r:.3f}" for i, (c, r) in enumerate(zip(x, y))]
    standards.write_text("Standard id,Level,Concentration (µg/L),Response (counts)\n" + "\n".join(rows) + "\n",
                         encoding="utf-8")
    responses = np.round(rng.uniform(60.0, 1900.0, unknowns), 3)
    samples = folder / "mn_samples.csv"
    with samples.open("w", encoding="utf-8", newline="") as f:
        f.write("Sample,Response (counts)\n")
        f.writelines(f"LWL-{i + 1:07d},{r:.3f}\n" for i, r in enumerate(responses))
    return standards, samples, x, y, responses


_PEAK_REPORTER = (
    "import atexit, os, runpy, sys\n"
    "target, me, end = sys.argv[1], os.getpid(), os._exit\n"
    "def report():\n"
    "    with open('/proc/self/status', encoding='ascii') as status:\n"
    "        kib = next(line.split()[1] for line in status if line.startswith('VmHWM:'))\n"
    "    with open(target, 'w', encoding='ascii') as out:\n"
    "        out.write(kib)\n"
    "def report_and_end(code):\n"
    "    if os.getpid() == me:\n"
    "        report()\n"
    "    end(code)\n"
    "atexit.register(report)\n"
    "os._exit = report_and_end  # quantify ends its process without the interpreter's exit handlers\n"
    "if len(sys.argv) > 2:\n"
    "    sys.argv = ['curvewright', *sys.argv[2:]]\n"
    "    runpy.run_module('curvewright', run_name='__main__')\n"
    "else:\n"
    "    import numpy, scipy.special\n"
)
"""A process that writes its own peak resident memory (the kernel's high-water mark of this program,
not of the process it was started from) to the file named first, then runs the command line with
the rest of its arguments, or only imports numpy and scipy when there are none. The peak is written
at the end of the process, whether it ends through the interpreter or (as ``quantify`` does) at once."""


def _peak_of(arguments: list[str], stdout: Path | None, folder: Path) -> tuple[float, int]:
    """Wall seconds and peak resident bytes of one fresh process."""
    report = folder / "peak.txt"
    env = {**os.environ, "PYTHONPATH": str(ROOT / "src"), "OPENBLAS_NUM_THREADS": "1"}  # as the command sets it
    env.pop("PYTHONDONTWRITEBYTECODE", None)  # an installed program has its bytecode
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    start = time.perf_counter()
    with (stdout.open("wb") if stdout else open(os.devnull, "wb")) as sink:
        result = subprocess.run([sys.executable, "-c", _PEAK_REPORTER, str(report), *arguments], stdout=sink,
                                stderr=subprocess.DEVNULL, env=env)
    seconds = time.perf_counter() - start
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    CPU.append(after.ru_utime - before.ru_utime + after.ru_stime - before.ru_stime)
    assert result.returncode in (0, 1), f"the process ended with exit code {result.returncode}"
    return seconds, int(report.read_text(encoding="ascii")) * 1024


CPU: list[float] = []
"""CPU seconds (user + system) of each process started by :func:`_peak_of`, in order."""


def run_command(standards: Path, samples: Path, out: Path) -> tuple[float, int]:
    """Wall seconds and peak resident bytes of one ``quantify --json`` process."""
    return _peak_of(["quantify", "--standards", str(standards), "--samples", str(samples), "--analyte", "manganese",
                     "--json"], out, out.parent)


def floor_rss(folder: Path) -> int:
    """Peak resident bytes of a process that imports numpy and scipy.special and stops."""
    return _peak_of([], None, folder)[1]


def floor_parts(samples: Path, rows: list[dict], folder: Path) -> dict[str, float]:
    """Seconds of the work no command writing a JSON row per unknown can avoid (see the module)."""
    start = time.perf_counter()
    subprocess.run([sys.executable, "-c", "import numpy, scipy.special"], check=True,
                   env={**os.environ, "OPENBLAS_NUM_THREADS": "1"})  # as the command starts
    process = time.perf_counter() - start
    start = time.perf_counter()
    with samples.open(encoding="utf-8", newline="") as f:
        reader = csv.reader(f)
        next(reader)
        values = [float(r[1]) for r in reader]
    read = time.perf_counter() - start
    assert len(values) == len(rows)
    start = time.perf_counter()
    text = ",\n".join(json.dumps(row, ensure_ascii=False, separators=(", ", ": ")) for row in rows)
    write = time.perf_counter() - start
    assert text
    return {"process start (import numpy, scipy.special)": process, "reading the CSV into floats": read,
            "JSON text of the rows": write}


def _option(name: str, default: int) -> int:
    return int(sys.argv[sys.argv.index(name) + 1]) if name in sys.argv else default


def main() -> None:
    unknowns = _option("--unknowns", 2_000 if smoke_requested() else 1_000_000)
    rounds = _option("--rounds", 1 if smoke_requested() else 3)
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        standards, samples, x, y, responses = write_tables(folder, unknowns)
        out = folder / "results.json"
        seconds, peak = run_command(standards, samples, out)  # also the command's warm-up
        data = json.loads(out.read_text(encoding="utf-8"))
        analyte = data["analytes"][0]
        calibration = cw.fit(x, y, analyte["model"], analyte["weighting"])
        rows = analyte["samples"]
        assert len(rows) == unknowns
        order = {row["id"]: row for row in rows}
        ids = [f"LWL-{i + 1:07d}" for i in range(unknowns)]
        engine = calibration.quantify(responses, level=data["confidence_level"])
        # no dilution: the reported scale is the measured one, each field beside its own
        for name, column in (("estimate", engine.estimate), ("standard_error", engine.standard_error),
                             ("lower", engine.lower), ("upper", engine.upper), ("reported", engine.estimate),
                             ("reported_standard_error", engine.standard_error)):
            theirs = np.array([np.nan if order[i][name] is None else order[i][name] for i in ids], dtype=float)
            both = np.isfinite(theirs) & np.isfinite(column)
            assert np.array_equal(np.isfinite(theirs), np.isfinite(column)), name
            worst = float(np.max(np.abs(theirs[both] - column[both]) / np.maximum(np.abs(column[both]), 1e-300)))
            assert worst < 1e-12, f"{name}: the command and the engine differ by {worst:.2e} (relative)"
        floor_seconds = floor_parts(samples, rows, folder)
        del data, rows, order

        peaks: list[int] = [peak]
        command_cpu: list[float] = []

        def command() -> None:
            _, p = run_command(standards, samples, out)
            peaks.append(p)
            command_cpu.append(CPU[-1])

        timings = interleaved({"quantify --json (fresh process)": command,
                               "engine quantify": lambda: calibration.quantify(responses,
                                                                               level=0.95)},
                              rounds=rounds, warmup=0)
        floor = floor_rss(folder)
        one = folder / "one"
        one.mkdir()
        _, one_samples, *_ = write_tables(one, 1)
        fixed = run_command(standards, one_samples, one / "results.json")[1]
    command_time = timings["quantify --json (fresh process)"].median
    engine_time = timings["engine quantify"].median
    peak = max(peaks)
    print_table(f"One run of {unknowns:,} unknowns ({analyte['model']}, weighting {analyte['weighting']})",
                [(t.label, f"{t.median:.3f} s", f"{min(t.seconds):.3f}–{max(t.seconds):.3f} s")
                 for t in timings.values()],
                ("work", "median", "range"))
    print(f"\nratio: the command is {command_time / engine_time:.1f}× the engine's quantify (target ≤ 5×, "
          f"{5 * engine_time:.3f} s)")
    for label, seconds in floor_seconds.items():
        print(f"floor: {label}: {seconds:.3f} s, {seconds / engine_time:.1f}× the engine")
    floor_total = sum(floor_seconds.values())
    print(f"floor in all: {floor_total:.3f} s, {floor_total / engine_time:.1f}× the engine; the command is "
          f"{command_time / floor_total:.1f}× its floor")
    print(f"CPU time of the command (user + system, median): {sorted(command_cpu)[len(command_cpu) // 2]:.2f} s")
    print(f"peak resident memory: {peak / 2**20:.0f} MiB, {peak / unknowns:.0f} B per unknown; above the "
          f"{floor / 2**20:.0f} MiB of a process that imported numpy and scipy: {(peak - floor) / unknowns:.0f} B "
          "per unknown (target ≤ 1 KB)")
    print(f"the same command on one unknown: {fixed / 2**20:.0f} MiB ({(fixed - floor) / 2**20:.0f} MiB above that "
          f"process, whatever the number of unknowns); above it: {(peak - fixed) / unknowns:.0f} B per unknown")


if __name__ == "__main__":
    main()
