"""Benchmark 3b: command-line start-up, each command against the floor it cannot go below.

- ``curvewright --version``, ``--help`` and ``quantify --help`` against ``python -c pass`` (target ≤ 1.5×);
- ``curvewright quantify RUN --json`` on a demo run against ``python -c "import numpy, scipy.special"``,
  the libraries its statistics need (target ≤ 1.3×). A command asks the linear algebra library for
  one thread (``OPENBLAS_NUM_THREADS=1`` unless the user set it), which makes loading numpy and scipy
  cheaper; the same floor under that setting is timed beside it, and the ratio against it is shown
  too, so that the command's own cost is not hidden by the setting.

Every start is a fresh process running the program's entry point (``curvewright.__main__:main``).
Bytecode is written once in a warm-up round, as an installed program has it. The sides are timed
in interleaved rounds and the medians compared, wall time and the CPU time of the process (user +
system, from the operating system); the modules each command loaded are listed.

Run: python benchmarks/bench_cli_start.py [--smoke]
"""

from __future__ import annotations

import os
import resource
import statistics
import subprocess
import sys
import time

from common import ROOT, print_table, smoke_requested

ENTRY = "import sys; from curvewright.__main__ import main; sys.exit(main())"
RUN = str(ROOT / "sample_runs" / "veltaprine_plasma_weighted.json")

ONE_THREAD = "python -c 'import numpy, scipy.special', one BLAS thread"
SIDES = {
    "python -c pass": ["-c", "pass"],
    "python -c 'import numpy, scipy.special'": ["-c", "import numpy, scipy.special"],
    ONE_THREAD: ["-c", "import numpy, scipy.special"],
    "curvewright --version": ["-c", ENTRY, "--version"],
    "curvewright --help": ["-c", ENTRY, "--help"],
    "curvewright quantify --help": ["-c", ENTRY, "quantify", "--help"],
    "curvewright quantify RUN --json": ["-c", ENTRY, "quantify", RUN, "--json"],
}
TARGETS = [  # (command, floor, target ratio)
    ("curvewright --version", "python -c pass", 1.5),
    ("curvewright --help", "python -c pass", 1.5),
    ("curvewright quantify --help", "python -c pass", 1.5),
    ("curvewright quantify RUN --json", "python -c 'import numpy, scipy.special'", 1.3),
    ("curvewright quantify RUN --json", ONE_THREAD, 1.3),
]
EXTRA_ENV = {ONE_THREAD: {"OPENBLAS_NUM_THREADS": "1"}}
"""Set for a side only (the floor under the setting a command makes for itself)."""
WATCHED = ("numpy", "scipy", "PySide6", "pyqtgraph", "openpyxl", "argparse")


def environment(label: str = "") -> dict[str, str]:
    env = {**os.environ, "PYTHONPATH": str(ROOT / "src")}
    env.pop("PYTHONDONTWRITEBYTECODE", None)  # an installed program has its bytecode
    env.pop("OPENBLAS_NUM_THREADS", None)  # each side as it starts by default ...
    env.update(EXTRA_ENV.get(label, {}))  # ... or as it says
    return env


def start(label: str) -> tuple[float, float]:
    """Wall seconds and CPU seconds (user + system) of one fresh process."""
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    begin = time.perf_counter()
    done = subprocess.run([sys.executable, *SIDES[label]], stdout=subprocess.DEVNULL, stderr=subprocess.PIPE,
                          env=environment(label), cwd=ROOT, timeout=300)
    elapsed = time.perf_counter() - begin
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    assert done.returncode == 0, done.stderr.decode()[-2000:]
    return elapsed, (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)


def loaded(label: str) -> str:
    done = subprocess.run([sys.executable, "-X", "importtime", *SIDES[label]], capture_output=True, text=True,
                          env=environment(label), cwd=ROOT, timeout=300)
    names = {line.rsplit("|", 1)[1].strip().split(".")[0] for line in done.stderr.splitlines()
             if line.startswith("import time:")}
    return ", ".join(m for m in WATCHED if m in names) or "none of them"


def main() -> None:
    rounds = 3 if smoke_requested() else 21
    for label in SIDES:  # warm-up: bytecode and file-system cache
        start(label)
    times: dict[str, list[float]] = {label: [] for label in SIDES}
    cpu: dict[str, list[float]] = {label: [] for label in SIDES}
    for _ in range(rounds):
        for label in SIDES:
            wall, used = start(label)
            times[label].append(wall)
            cpu[label].append(used)
    median = {label: statistics.median(t) for label, t in times.items()}
    median_cpu = {label: statistics.median(t) for label, t in cpu.items()}
    print_table("Command-line start-up (fresh process each; medians of interleaved rounds)", [
        (label, f"{median[label] * 1e3:.1f} ms", f"{min(t) * 1e3:.1f}–{max(t) * 1e3:.1f} ms",
         f"{median_cpu[label] * 1e3:.1f} ms", loaded(label))
        for label, t in times.items()
    ], ("", f"median of {rounds}", "min–max", "CPU (median)", f"loads (of {', '.join(WATCHED)})"))
    rows = []
    for command, floor, target in TARGETS:
        ratio = median[command] / median[floor]
        rows.append((command, floor, f"{ratio:.2f}×", f"{median_cpu[command] / median_cpu[floor]:.2f}×", f"≤ {target}×",
                     "met" if ratio <= target else "NOT met"))
    print_table("Ratios", rows, ("command", "against", "ratio", "CPU ratio", "target", "status"))


if __name__ == "__main__":
    main()
